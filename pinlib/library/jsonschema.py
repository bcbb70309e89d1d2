"""A JSON Schema of the part-class file, for editors that validate and complete TOML.

The records' own export (:mod:`pinlib.core.recordschema`) gives the structure, the enums
and the id pattern, but not what a file writes for a value field (it becomes a
:class:`~pinlib.library.values.Sourced`).  We start from it and rewrite every value field as
what the file may say: a string with its unit, matched by a pattern built from the
spellings :mod:`pinlib.core.quantity` accepts, or a provenance table
``{ value, basis, source, typ }``.

A child file (one with ``extends``) may give any subset of its parent's fields, so the
tables carry no ``required`` lists; a file without ``extends`` must give ``title``,
``category`` and each pin's ``function``, which a conditional at the root says.
"""

from __future__ import annotations

import copy
import re

from pinlib.core.quantity import _LENGTH, _PREFIX, _UNIT_ALIAS, UNITS
from pinlib.core.recordschema import record_json_schema
from pinlib.library import schema
from pinlib.library.fields import glossary, mapping_of, models, sequence_of, submodel, value_kind
from pinlib.library.values import BASES

__all__ = ["SCHEMA_DIALECT", "part_json_schema", "quantity_pattern", "level_pattern"]

SCHEMA_DIALECT = "https://json-schema.org/draft/2020-12/schema"

_UNSIGNED = r"(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?"
_NUMBER = rf"[+-]?{_UNSIGNED}"
_PREFIXES = "".join(_PREFIX)
_SP = r"[ ·]*"  # the parser drops spaces and '·' inside a unit ('k ohm', 'k·Ω')
_GAP = rf"\s*{_SP}"  # between the number and its unit


def _alt(words) -> str:
    return "(?:" + "|".join(re.escape(w) for w in sorted(words, key=len, reverse=True)) + ")"


def _unit_regex(unit: str) -> str:
    """The unit part of a value in ``unit``: an optional prefix and a spelling."""
    spellings = [k for k, v in _UNIT_ALIAS.items() if v == unit]
    prefixable = [s for s in spellings if s not in ("R", "%")]
    forms = [f"[{_PREFIXES}]?{_SP}{_alt(prefixable)}"] if prefixable else []
    if unit == "Hz":  # 'mhz' is refused (milli or mega?): only 'mHz' takes the m
        others = _PREFIXES.replace("m", "")
        forms = [f"[{_PREFIXES}]?{_SP}Hz", f"[{others}]?{_SP}{_alt(['hz', 'HZ'])}"]
    if "R" in spellings:
        forms.append("R")
    if "%" in spellings:
        forms = ["%"]
    if unit == "m":
        forms.append(_alt(list(_LENGTH) + ["cm"]))
    return "(?:" + "|".join(forms) + ")"


def quantity_pattern(unit: str) -> str:
    """A regular expression (ECMA-262 compatible) for a value in ``unit``.

    It follows :func:`pinlib.core.quantity.parse`: a number with a prefixed unit
    (``"4.7 kΩ"``, ``"10pF"``, ``"0.8 pF/cm"``) or an RKM code (``"4k7"``, ``"2R2"``).
    """
    if "/" in unit:
        top = unit.split("/")[0]
        body = rf"{_NUMBER}{_GAP}{_unit_regex(top)}{_SP}/{_SP}{_unit_regex('m')}"
        return rf"^\s*{body}\s*$"
    plain = rf"{_NUMBER}{_GAP}{_unit_regex(unit)}"
    exact = _alt([k for k, v in _UNIT_ALIAS.items() if v == unit])
    letters = "RKkMGmunpµμ" if unit == "Ω" else "KkMGmunpµμ"
    rkm = (rf"\d*[{letters}]\d+\s*{exact}?"
           rf"|\d+(?:\.\d+)?[{'RKkMG' if unit == 'Ω' else 'KkMG'}]")
    if unit == "%":
        return rf"^\s*{plain}\s*$"
    return rf"^\s*(?:{plain}|{rkm})\s*$"


def level_pattern() -> str:
    """A regular expression for a level: ``"2.0 V"``, ``"0.7 VDD"``, ``"VDD - 0.4 V"``."""
    volts = rf"{_UNSIGNED}{_GAP}{_unit_regex('V')}"
    vdd = rf"(?:{_UNSIGNED}\s*%?\s*[*×·]?\s*)?[Vv][Dd][Dd]"
    term = rf"(?:{vdd}|{volts})"
    return rf"^\s*[+-]?\s*{term}(?:\s*[+-]\s*{term})*\s*$"


def _def_name(kind) -> str:
    if kind.kind == "level":
        return "Level"
    words = UNITS[kind.unit][0].split()[1:]  # "a capacitance per length" -> capacitance per length
    return "".join(w.capitalize() for w in words)


def _value_def(kind) -> dict:
    """The schema of one kind of value: a string with its unit, or a provenance table."""
    if kind.kind == "level":
        what = "a voltage, absolute or relative to the part's supply"
        example = "'0.7 VDD', 'VDD - 0.4 V' or '2.0 V'"
        pattern = level_pattern()
    else:
        what, ex = UNITS[kind.unit]
        example = f"'{ex}'"
        pattern = quantity_pattern(kind.unit)
    text = f"{what}, e.g. {example}"
    string = {"type": "string", "pattern": pattern, "description": text}
    table = {
        "type": "object",
        "description": f"{text}, with where it came from",
        "properties": {
            "value": dict(string),
            "basis": {"enum": list(BASES[:-1]), "description": "how the value was obtained"},
            "source": {"type": "string",
                       "description": "document, revision and table or page"},
            "typ": dict(string, description=f"the typical value, for information; {text}"),
        },
        "required": ["value"],
        "additionalProperties": False,
    }
    return {"anyOf": [string, table], "description": text}


def _value_ref(kind, name: str, defs: dict) -> dict:
    """A property holding a value: a reference to its kind, with the field's meaning."""
    key = _def_name(kind)
    if key not in defs:
        defs[key] = _value_def(kind)
    meaning = glossary().get(name)
    text = defs[key]["description"]
    return {"$ref": f"#/$defs/{key}",
            "description": f"{meaning}: {text}" if meaning else text}


def _without_null(prop: dict) -> dict:
    """TOML has no null: drop the ``anyOf [..., null]`` of ``X | None`` and ``default: null``."""
    prop = dict(prop)
    if prop.get("default", 0) is None or isinstance(prop.get("default"), dict):
        del prop["default"]  # TOML has no null; a table's defaults are its fields' own
    options = prop.get("anyOf")
    if options:
        kept = [o for o in options if o != {"type": "null"}]
        if len(kept) == 1:
            del prop["anyOf"]
            prop = {**kept[0], **prop}
        else:
            prop["anyOf"] = kept
    return prop


def part_json_schema() -> dict:
    """The JSON Schema of a part-class file (``format = "pinlib.part/1"``).

    Returns
    -------
    dict
        A draft 2020-12 schema; ``json.dumps`` it to a file and point the editor at it.
    """
    base = copy.deepcopy(record_json_schema(schema.Part))
    defs = base.pop("$defs", {})
    for model in models(schema.Part):
        node = base if model is schema.Part else defs.get(model.__name__)
        if node is None:
            continue
        props = node.get("properties", {})
        for name, info in model.fields().items():
            if name not in props:
                continue
            kind = value_kind(info)
            if kind is not None:
                props[name] = _value_ref(kind, name, defs)
            else:
                props[name] = _without_null(props[name])
                meaning = glossary().get(name)
                if meaning and "description" not in props[name]:
                    props[name]["description"] = meaning
            if not (submodel(info) or mapping_of(info) or sequence_of(info) or kind):
                props[name].pop("title", None)
        # Tables merge key by key through `extends`: a child gives any subset.  Arrays of
        # tables (edges) replace whole, so their items keep their required keys.
        if model is schema.Part:
            node["required"] = ["format", "id"]
        elif not any(sequence_of(i) is model for m in models() for i in m.fields().values()):
            node.pop("required", None)
    for name in [n for n in defs if n in ("Sourced", "Threshold")]:
        del defs[name]
    pins_need_function = {"additionalProperties": {"required": ["function"]}}
    out = {
        "$schema": SCHEMA_DIALECT,
        **base,
        "title": "pinlib part-class file (pinlib.part/1)",
        "description": "One part class of a pinlib library: its supply, pins and timing, "
                       "each value a string with its unit or a table with its provenance.",
        "$defs": defs,
        "if": {"not": {"required": ["extends"]}},
        "then": {
            "required": ["title", "category"],
            "properties": {
                "pins": pins_need_function,
                "sides": {"additionalProperties": {"properties": {"pins": pins_need_function}}},
            },
        },
    }
    return out
