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
            node = {**kept[0], **{k: v for k, v in node.items() if k != "description"
                                  or "description" not in kept[0]}}
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


def design_json_schema() -> dict:
    """The JSON Schema of a design file (``format = "pinlib.design/1"``), draft 2020-12."""
    base = _tidy(record_json_schema(RawDesign))
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
