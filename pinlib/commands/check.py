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
  pinlib check board.toml --save            # keep board.result.json as the reference
  pinlib check board.toml --threshold 2%    # later: list what changed against it

exit status: 0 pass or warn, 1 a check fails, 2 the design or library is not valid.
"""


def threshold_type(text):
    from pinlib.commands.swap import threshold_type as parse

    return parse(text)


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
    p.add_argument("--save", action="store_true",
                   help="write the result beside the design as <design>.result.json; later "
                        "runs list what changed against it")
    p.add_argument("--threshold", metavar="PCT", type=threshold_type, default=None,
                   help="list figures that moved more than this against the saved result "
                        "(default 5%%)")
    p.set_defaults(run=run)


def run(args) -> int:
    from pinlib.check import check_design
    from pinlib.compare import DEFAULT_THRESHOLD, compare_with_snapshot, save_snapshot
    from pinlib.design import load_design

    design = load_design(args.design, library_folders=args.library)
    result = check_design(design)
    threshold = DEFAULT_THRESHOLD if args.threshold is None else args.threshold
    # Compare before saving, or the run would compare with itself.
    changes = compare_with_snapshot(design, result, threshold)
    if args.json:
        out = result.to_json()
        if changes is not None:
            out["changes"] = changes.to_json()
        json.dump(out, sys.stdout, indent=2, ensure_ascii=False)
        sys.stdout.write("\n")
    else:
        from pinlib.report import format_text

        sys.stdout.write(format_text(result))
        if changes is not None:
            sys.stdout.write("\n" + changes.format_text())
    if args.save:
        print(f"saved {save_snapshot(design, result)}", file=sys.stderr)
    return result.exit_code()
