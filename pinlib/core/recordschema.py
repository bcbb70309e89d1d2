"""The JSON Schema (draft 2020-12) of a :class:`~pinlib.core.records.Record`, from its
declaration.

Each record becomes an object schema in ``$defs`` (the root inline) with its fields as
``properties``, ``required`` for fields without a default, ``additionalProperties:
false`` (unknown keys are refused) and its docstring as ``description``.  A field's
schema follows its type: text, boolean, integer, number, a date, ``enum``/``const`` for a
Literal, ``anyOf`` for a union (``null`` for ``| None``: the format modules take it out,
TOML has no null), ``items`` for an array, ``additionalProperties`` for a table of named
items; :class:`~pinlib.core.records.Rule` adds its pattern, lengths, bounds, item counts
and description, and
:class:`~pinlib.core.records.WrittenAs` replaces the whole by what a file writes.  A value
of another class (one a converter makes) has no schema of its own (``{}``): the format's
module says what a file writes for it.  Keys are sorted, except the properties, which keep
the declaration's order.
"""

from __future__ import annotations

import datetime as _dt
import inspect
import types
import typing

from pinlib.core.records import Record, Rule, WrittenAs

__all__ = ["record_json_schema"]

_SIMPLE = {str: "string", bool: "boolean", int: "integer", float: "number"}


def record_json_schema(root: type[Record]) -> dict:
    """The schema of ``root``: its own object schema with every record it holds in
    ``$defs``."""
    defs: dict[str, dict] = {}
    out = _object(root, defs)
    if defs:
        out["$defs"] = {k: defs[k] for k in sorted(defs)}
    return _sorted(out)


def _object(cls: type[Record], defs: dict) -> dict:
    props, required = {}, []
    for f in cls.fields().values():
        prop = _type(f.annotation, defs)
        if not _holds_record(f.annotation):  # a table's title is its record's own
            prop.setdefault("title", f.key.replace("_", " ").title())
        if f.description:
            prop["description"] = f.description
        if f.required:
            required.append(f.key)
        elif f.default_factory is None:
            prop["default"] = _json_value(f.default)
        props[f.key] = prop
    out: dict = {"additionalProperties": False, "properties": props}
    if required:
        out["required"] = required
    out["title"] = cls.__name__
    out["type"] = "object"
    doc = cls.__dict__.get("__doc__")
    if doc:
        out["description"] = inspect.cleandoc(doc)
    return out


def _ref(cls: type[Record], defs: dict) -> dict:
    name = cls.__name__
    if name not in defs:
        defs[name] = {}  # a placeholder while its own fields are described
        defs[name] = _object(cls, defs)
    return {"$ref": f"#/$defs/{name}"}


def _type(tp, defs: dict) -> dict:
    origin = typing.get_origin(tp)
    if origin is typing.Annotated:
        meta = tp.__metadata__
        for m in meta:
            if isinstance(m, WrittenAs):
                return dict(m.func())
        out = _type(typing.get_args(tp)[0], defs)
        for m in meta:
            if isinstance(m, Rule):
                out.update(_rule(m))
        return out
    if origin in (typing.Union, types.UnionType):
        return {"anyOf": [_type(a, defs) for a in typing.get_args(tp)]}
    if origin is typing.Literal:
        values = list(typing.get_args(tp))
        out = {"const": values[0]} if len(values) == 1 else {"enum": values}
        kinds = {type(v) for v in values}
        if len(kinds) == 1 and next(iter(kinds)) in _SIMPLE:
            out["type"] = _SIMPLE[next(iter(kinds))]
        return out
    if origin in (tuple, list):
        return {"items": _type(typing.get_args(tp)[0], defs), "type": "array"}
    if origin is dict:
        key, value = typing.get_args(tp)
        out = {"additionalProperties": _type(value, defs), "type": "object"}
        if key is not str:
            names = _type(key, defs)
            names.pop("type", None)  # a key is text whatever it is
            out["propertyNames"] = names
        return out
    if tp is type(None):
        return {"type": "null"}
    if tp in _SIMPLE:
        return {"type": _SIMPLE[tp]}
    if tp is _dt.date:
        return {"format": "date", "type": "string"}
    if isinstance(tp, type) and issubclass(tp, Record):
        return _ref(tp, defs)
    return {}


def _holds_record(tp) -> bool:
    """A record, or a record or None."""
    args = [a for a in typing.get_args(tp) if a is not type(None)] if typing.get_origin(tp) in (
        typing.Union, types.UnionType) else [tp]
    return len(args) == 1 and isinstance(args[0], type) and issubclass(args[0], Record)


def _rule(rule: Rule) -> dict:
    out = {}
    for attr, key in (("pattern", "pattern"), ("min_length", "minLength"),
                      ("max_length", "maxLength"), ("ge", "minimum"), ("le", "maximum"),
                      ("description", "description"), ("min_items", "minItems"),
                      ("max_items", "maxItems")):
        value = getattr(rule, attr)
        if value is not None:
            out[key] = value
    return out


def _json_value(value):
    """A default as JSON: a record as the table of its fields, tuples as arrays."""
    if isinstance(value, Record):
        return {k: _json_value(v) for k, v in value.__dict__.items()}
    if isinstance(value, (tuple, list)):
        return [_json_value(v) for v in value]
    if isinstance(value, dict):
        return {k: _json_value(v) for k, v in value.items()}
    if isinstance(value, _dt.date):
        return value.isoformat()
    if value is None or isinstance(value, (str, bool, int, float)):
        return value
    to_json = getattr(value, "to_json", None)
    return to_json() if to_json else str(value)


def _sorted(node, *, keep=False):
    """Keys sorted through the tree, except the order of ``properties`` and defaults."""
    if isinstance(node, list):
        return [_sorted(n) for n in node]
    if not isinstance(node, dict):
        return node
    keys = list(node) if keep else sorted(node)
    out = {}
    for k in keys:
        v = node[k]
        if keep:
            out[k] = _sorted(v)
        elif k == "properties":
            out[k] = _sorted(v, keep=True)
        elif k == "default":
            out[k] = v
        else:
            out[k] = _sorted(v)
    return out
