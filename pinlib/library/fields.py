"""What each field of the part format holds, read from its records.

The recorder needs to know which dotted paths take a value (``pins.sda.c_in``) and the
JSON Schema export needs the unit of each of them.  Both are read here from the models
in :mod:`pinlib.library.schema` rather than kept in a second list that could drift: a
value field is one whose converter turns text into a
:class:`~pinlib.library.values.Sourced`, and its unit is found by offering the
converter one example of each unit of :data:`pinlib.core.quantity.UNITS`.
"""

from __future__ import annotations

import functools
import re
import typing

from pinlib.core import messages as M
from pinlib.core import nearby
from pinlib.core.errors import LibraryError, PinlibError
from pinlib.core.quantity import UNITS, Threshold
from pinlib.core.records import Convert, Record
from pinlib.core.valueclass import value_class
from pinlib.library import schema
from pinlib.library.values import Sourced, StatedList

__all__ = [
    "ValueKind",
    "value_kind",
    "submodel",
    "mapping_of",
    "sequence_of",
    "models",
    "glossary",
    "resolve_path",
    "model_at",
    "unknown_field_help",
]


@value_class(frozen=True)
class ValueKind:
    """A field that holds a value: ``level`` (may follow VDD) or ``quantity``."""

    kind: str
    unit: str


def _flat_args(annotation) -> list:
    """The annotation and everything nested in it (Optional, Annotated, dict, tuple)."""
    out = [annotation]
    for arg in typing.get_args(annotation):
        out += _flat_args(arg)
    extra = getattr(annotation, "__metadata__", ())
    return out + list(extra)


def _converter(info) -> Convert | None:
    for item in list(info.metadata) + _flat_args(info.annotation):
        if isinstance(item, Convert):
            return item
    return None


@functools.cache
def _probe(func) -> ValueKind | None:
    try:
        got = func("0.7 VDD")
    except PinlibError:
        got = None
    if isinstance(got, Sourced) and isinstance(got.value, Threshold):
        return ValueKind("level", "V")
    for unit, (_, example) in UNITS.items():
        try:
            got = func(example)
        except PinlibError:
            continue
        if isinstance(got, Sourced) and got.unit == unit:
            return ValueKind("quantity", unit)
    return None


def value_kind(info) -> ValueKind | None:
    """The kind of value a record's field holds, or None when it holds no Sourced value."""
    if Sourced not in _flat_args(info.annotation):
        return None
    bv = _converter(info)
    return _probe(bv.func) if bv is not None else None


def _model_in(annotation) -> type[Record] | None:
    for arg in _flat_args(annotation):
        if isinstance(arg, type) and issubclass(arg, Record):
            return arg
    return None


def _bare(annotation):
    """The type inside an ``Annotated[...]`` (a field with a converter or a rule)."""
    while typing.get_origin(annotation) is typing.Annotated:
        annotation = typing.get_args(annotation)[0]
    return annotation


def submodel(info) -> type[Record] | None:
    """The model of a nested table (``supply``, ``timing``), None for maps and lists."""
    origin = typing.get_origin(_bare(info.annotation))
    if origin in (dict, tuple, list):
        return None
    return _model_in(info.annotation)


def mapping_of(info) -> type[Record] | None:
    """``dict[str, Pin]`` -> Pin (tables of named items: ``pins``, ``sides``)."""
    tp = _bare(info.annotation)
    if typing.get_origin(tp) is dict:
        return _model_in(typing.get_args(tp)[1])
    return None


def sequence_of(info) -> type[Record] | None:
    """``tuple[Edge, ...]`` -> Edge (arrays of tables: ``edges``)."""
    tp = _bare(info.annotation)
    if typing.get_origin(tp) in (tuple, list):
        return _model_in(typing.get_args(tp)[0])
    return None


def models(root: type[Record] = schema.Part) -> list[type[Record]]:
    """Every model reachable from ``root``, root first."""
    seen: list[type[Record]] = [root]
    for model in seen:
        for info in model.fields().values():
            sub = submodel(info) or mapping_of(info) or sequence_of(info)
            if sub is not None and sub not in seen:
                seen.append(sub)
    return seen


_GLOSSARY_ROW = re.compile(r"^([a-z_]+)\s{2,}(.+?)\s{2,}(\S+)\s*$")


@functools.cache
def glossary() -> dict[str, str]:
    """Field name -> meaning, from the glossary table of the schema module's docstring."""
    out = {}
    for line in (schema.__doc__ or "").splitlines():
        m = _GLOSSARY_ROW.match(line.strip())
        if m and m.group(1) != "name":
            out[m.group(1)] = m.group(2)
    return out


def model_at(root: type[Record], loc) -> type[Record] | None:
    """The model whose field the last key of ``loc`` (an error location of
    :mod:`pinlib.core.records`) names:
    ``("bus", 0, "devices", 1, "prat")`` -> the device model.  None when ``loc`` leaves
    the models (a plain value, a key of a free table)."""
    model, keys, i = root, list(loc)[:-1], 0
    while i < len(keys):
        by_key = {f.key: f for f in model.fields().values()}  # as the file spells them
        info = by_key.get(keys[i]) if isinstance(keys[i], str) else None
        if info is None:
            return None
        inner = mapping_of(info) or sequence_of(info)
        if inner is not None:
            model, i = inner, i + 2
            continue
        sub = submodel(info)
        if sub is None:
            return None
        model, i = sub, i + 1
    return model


def unknown_field_help(root: type[Record], loc, format_name: str,
                       closest: bool = True) -> tuple[str, str | None]:
    """(expected, hint) for an unknown key at ``loc``: the fields of that table in the
    named format, and (unless not ``closest``) the closest of them to the key."""
    model = model_at(root, loc)
    if model is None or not loc:
        return M.EXPECTED_FIELD_OF.format(format=format_name, fields="see its documentation"), None
    names = [f.key for f in model.fields().values()]  # "from", not the attribute from_
    key = str(loc[-1])
    shown = ", ".join(names[:_FIELDS_SHOWN])
    if len(names) > _FIELDS_SHOWN:  # a message stays readable: the rest in the docs
        shown += M.MORE_FIELDS.format(n=len(names) - _FIELDS_SHOWN, format=format_name)
    return (M.EXPECTED_FIELD_OF.format(format=format_name, fields=shown),
            nearby.closest_hint(key, names) if closest else None)


#: How many field names an unknown-key message lists (the closest is named apart).
_FIELDS_SHOWN = 10


def resolve_path(text: str) -> tuple[tuple[str, ...], ValueKind]:
    """Turn ``"sda.c_in"``, ``"timing.f_max"``, ``"supply.min"`` into a key path.

    A first part that is not a top-level field names a pin (``sda.c_in`` is
    ``pins.sda.c_in``); inside ``sides.a`` the same shorthand applies.

    Raises
    ------
    LibraryError
        When the path does not end at a field that takes a value.
    """
    if not isinstance(text, str) or not text.strip():
        raise LibraryError(M.FIELD_PATH_NEEDED, field="field", value=text,
                           expected="PIN.FIELD, timing.FIELD or supply.min/max")
    parts = [p.strip() for p in text.strip().split(".")]
    model: type[Record] = schema.Part
    path: list[str] = []
    i = 0
    while i < len(parts):
        key = parts[i]
        fields = model.fields()
        pins_here = "pins" in fields
        if key not in fields and pins_here:
            parts.insert(i, "pins")  # shorthand: a pin name
            continue
        if key not in fields:
            raise LibraryError(M.UNKNOWN_FIELD, field=".".join(path + [key]), value=text,
                               expected="one of " + ", ".join(
                                   n for n, f in fields.items() if value_kind(f)),
                               hint=nearby.closest_hint(key, fields))
        info = fields[key]
        path.append(key)
        kind = value_kind(info)
        if kind is not None:
            if i != len(parts) - 1:
                raise LibraryError(M.VALUE_FIELD_NO_SUBFIELDS, field=".".join(path),
                                   value=text)
            return tuple(path), kind
        inner = mapping_of(info)
        if inner is not None:
            if i + 1 >= len(parts) or not parts[i + 1]:
                raise LibraryError(M.PATH_STOPS_AT_NAMED_TABLE,
                                   field=".".join(path), value=text,
                                   expected=f"{key}.NAME.FIELD")
            path.append(parts[i + 1])
            model, i = inner, i + 2
            continue
        sub = submodel(info)
        if sub is not None and i + 1 < len(parts):
            model, i = sub, i + 1
            continue
        flat = _flat_args(info.annotation)
        if sub is None and not sequence_of(info) and StatedList not in flat:
            # a setting (a yes/no, a word): no unit and no source of its own, so not a
            # record's; the hint says where it goes in the file.  The field is named,
            # not echoed as the value ("got 'sclk.off_tolerant'")
            table = ".".join(path[:-1])
            place = f"under [{table}]" if table else "before the file's first table"
            what = M.FIELD_IS_YES_NO if bool in flat else M.FIELD_IS_SETTING
            raise LibraryError(M.FIELD_TAKES_NO_VALUE.format(what=what),
                               field=".".join(path),
                               hint=M.SETTING_BY_HAND.format(
                                   line=f"{key} = true" if bool in flat else f"{key} = ...",
                                   place=place))
        what = "a list (edit the file by hand)" if sequence_of(info) else (
            "a table" if sub is not None else
            f"a list (edit the file by hand: {key} = {{ value = [...], source = \"...\" }})")
        raise LibraryError(M.FIELD_TAKES_NO_VALUE.format(what=what), field=".".join(path),
                           expected="a field such as c_in, v_il, timing.f_max")
    if len(path) >= 2 and path[-2] == "pins" and path[-1] in model.fields() \
            and value_kind(model.fields()[path[-1]]) is not None:
        # "c_in" read as a pin named c_in: the field is there, its pin is missing
        name, before = path[-1], "".join(f"{k}." for k in path[:-2])
        raise LibraryError(M.FIELD_WITHOUT_PIN, field=before + name, value=text,
                           expected=f"{before}PIN.{name} (e.g. {before}sda.{name})")
    raise LibraryError(M.PATH_STOPS_BEFORE_FIELD, field=".".join(path), value=text,
                       expected="PIN.FIELD, timing.FIELD or supply.min/max")
