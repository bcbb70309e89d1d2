"""A JSON Schema of the design file, for editors that validate and complete TOML.

It is generated from the design file's records (:class:`pinlib.model.design.RawDesign`, by
:mod:`pinlib.core.recordschema`): each value with a unit is described as the string a
file writes (its pattern is the one the part-file schema uses,
:func:`pinlib.library.jsonschema.quantity_pattern`), and TOML's missing null is taken out
of the ``anyOf [..., null]`` of ``X | None``.  The schema ships inside the package as
``pinlib/model/design.schema.json`` (package data), so ``pinlib schema design`` prints it
without building it; ``tests/test_cli_many.py`` holds the shipped file equal to
:func:`design_json_schema`.  Rebuild it with
``python -m pinlib.model.designschema``.
"""

from __future__ import annotations

import json
from pathlib import Path

from pinlib.core.recordschema import record_json_schema
from pinlib.library.jsonschema import SCHEMA_DIALECT
from pinlib.model.design import FORMAT, RawDesign

__all__ = ["SHIPPED", "design_json_schema", "schema_text"]

#: The schema as the package ships it.
SHIPPED = Path(__file__).with_name("design.schema.json")


def _tidy(node):
    """Drop what TOML cannot write (null, a number where a unit string is due) and the
    titles made from field names, all through the tree."""
    if isinstance(node, list):
        return [_tidy(n) for n in node]
    if not isinstance(node, dict):
        return node
    node = {k: _tidy(v) for k, v in node.items()}
    options = node.get("anyOf")
    if options:
        kept = [o for o in options if o != {"type": "null"}]
        if len(kept) == 1:
            del node["anyOf"]
            inner, outer = kept[0].get("description"), node.get("description")
            node = {**kept[0], **node}
            if inner and outer and inner != outer:
                # what the file writes, then the field's own words (where it belongs)
                node["description"] = f"{inner}; {outer}"
            elif inner:
                node["description"] = inner
        else:
            node["anyOf"] = kept
    if "default" in node:
        d = node["default"]
        string_only = node.get("type") == "string" or "anyOf" in node
        if d is None or d == {} or d == [] or (string_only and not isinstance(d, str)):
            del node["default"]
    if "properties" in node or "$ref" in node or "pattern" in node or "type" in node:
        if isinstance(node.get("title"), str) and "properties" not in node:
            node.pop("title", None)
    return node


def _when(key: str, values, then: dict) -> dict:
    """``if`` the table's ``key`` is one of ``values`` ``then`` ``then``."""
    return {"if": {"properties": {key: {"enum": list(values)}}, "required": [key]},
            "then": then}


def _refused(*keys: str) -> dict:
    # {"not": {}} rather than false: a validator then names the key itself (jsonschema
    # 4.26 names the table holding a key refused by false)
    return {"properties": {k: {"not": {}} for k in keys}}


def _by_kind(defs: dict) -> None:
    """The keys the loader refuses by a bus's protocol and the methods it takes by a
    geometry's kind (:mod:`pinlib.model.design.buses`, ``build``, ``resolve``): the
    records are shared by every protocol, so these are conditions on the shared
    tables."""
    from pinlib.core import protocols
    from pinlib.physics import lines as tl

    # an open-drain trace: none of a push-pull line's own keys
    od_trace = _refused("route", "series_resistor", "extra_capacitance", "pullup",
                        "pullup_tolerance")
    open_drain = _refused("lines")
    open_drain["properties"].update(
        trace=od_trace, segment={"items": {"properties": {"trace": od_trace}}})
    push_pull = _refused("trace", "extra_capacitance", "pullup", "pullup_tolerance",
                         "pullup_series", "cables", "segment", "mode")
    push_pull["properties"]["devices"] = {"items": _refused("series_resistor", "switched")}
    defs["RawBus"]["allOf"] = [
        _when("protocol", protocols.OPEN_DRAIN_PROTOCOLS, open_drain),
        _when("protocol", protocols.PUSH_PULL_PROTOCOLS, push_pull),
        _when("protocol", [p for p in protocols.NAMES if p != "spi"], _refused("spi_mode")),
    ]
    defs["RawGeometry"]["allOf"] = [
        _when("kind", [kind], {"properties": {"method": {"enum": list(methods)}}})
        for kind, methods in (("microstrip", tl.MICROSTRIP_METHODS),
                              ("stripline", tl.STRIPLINE_METHODS))]


def design_json_schema() -> dict:
    """The JSON Schema of a design file (``format = "pinlib.design/1"``), draft 2020-12."""
    base = _tidy(record_json_schema(RawDesign))
    _by_kind(base["$defs"])
    return {
        "$schema": SCHEMA_DIALECT,
        **base,
        "title": f"pinlib design file ({FORMAT})",
        "description": "A board's buses: their protocol, rails, pull-ups, traces and the "
                       "parts placed on them, each value a string with its unit.",
    }


def schema_text() -> str:
    """The schema as the file holds it (JSON, two-space indent, one newline at the end)."""
    return json.dumps(design_json_schema(), indent=2, ensure_ascii=False) + "\n"


if __name__ == "__main__":  # pragma: no cover - a maintainer's rebuild of the shipped file
    SHIPPED.write_text(schema_text(), encoding="utf-8")
    print(f"wrote {SHIPPED}")
