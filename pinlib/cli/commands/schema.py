"""``pinlib schema KIND``: print the JSON Schema of design files or part files.

The design schema is the file the package ships (``pinlib/model/design.schema.json``,
generated from the design models); the part schema is built from the part models, as
``pinlib parts schema`` does.
"""

from __future__ import annotations

import json
import sys

from pinlib.cli import SUMMARIES
from pinlib.cli.helptext import HelpLayout
from pinlib.core import messages as M

__all__ = ["add_parser", "run", "KINDS"]

#: The kinds of file a schema is printed for.
KINDS = ("design", "part")

EXAMPLES = """\
examples:
  pinlib schema design --output design.schema.json
  pinlib schema part --output part.schema.json

Point an editor with TOML schema support at the file to validate and complete design
or part files (for example a '#:schema ./design.schema.json' first line, where
supported).
"""


def add_parser(sub) -> None:
    p = sub.add_parser(
        "schema",
        help=SUMMARIES["schema"],
        description="Print the JSON Schema (draft 2020-12) of design files "
                    "(pinlib.design/1) or part files (pinlib.part/1), for editors.",
        epilog=EXAMPLES,
        formatter_class=HelpLayout,
    )
    p.add_argument("kind", metavar="KIND", help="design or part")
    p.add_argument("--output", metavar="FILE", default=None,
                   help="write the schema to FILE instead of printing it")
    p.set_defaults(run=run)


def schema_text(kind: str) -> str:
    """The schema of ``kind`` as JSON text."""
    from pinlib.core.errors import InputError

    if kind == "design":
        from pinlib.model.designschema import SHIPPED

        return SHIPPED.read_text(encoding="utf-8")
    if kind == "part":
        from pinlib.library.jsonschema import part_json_schema

        return json.dumps(part_json_schema(), indent=2, ensure_ascii=False) + "\n"
    raise InputError(M.SCHEMA_KIND, field="KIND", value=kind, expected=" or ".join(KINDS))


def run(args) -> int:
    from pinlib.core.tomlfile import atomic_write

    text = schema_text(args.kind)
    if args.output:
        atomic_write(args.output, text)
        print(f"wrote {args.output}", file=sys.stderr)
    else:
        sys.stdout.write(text)
    return 0
