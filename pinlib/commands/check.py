"""``pinlib check DESIGN``: evaluate a design's buses and print the result."""

from __future__ import annotations

import argparse
import json
import sys

__all__ = ["add_parser", "run"]

EXAMPLES = """\
examples:
  pinlib check workbooks/designs/demo-board.toml
  pinlib check board.toml --json > result.json
  pinlib check board.toml --library ~/team-parts --library ./parts

exit status: 0 pass or warn, 1 a check fails, 2 the design or library is not valid.
"""


def add_parser(sub) -> None:
    p = sub.add_parser(
        "check",
        help="evaluate a design's buses (pull-ups, levels, timing)",
        description="Evaluate every bus of a design file (format pinlib.design/1) and report "
                    "figures and checks, each check with its limit and the limit's source.",
        epilog=EXAMPLES,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument("design", metavar="DESIGN", help="the design file (.toml)")
    p.add_argument("--json", action="store_true",
                   help="print the result as JSON (format pinlib.result/1)")
    p.add_argument("--library", metavar="DIR", action="append", default=[],
                   help="a team library folder (repeatable; takes precedence over the design's)")
    p.set_defaults(run=run)


def run(args) -> int:
    from pinlib.check import check_file

    result = check_file(args.design, library_folders=args.library)
    if args.json:
        json.dump(result.to_json(), sys.stdout, indent=2, ensure_ascii=False)
        sys.stdout.write("\n")
    else:
        from pinlib.report import format_text

        sys.stdout.write(format_text(result))
    return result.exit_code()
