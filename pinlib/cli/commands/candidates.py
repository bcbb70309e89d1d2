"""``pinlib candidates DESIGN REF``: rank every library part that could stand in a position."""

from __future__ import annotations

import argparse
import sys

from pinlib.cli import SUMMARIES
from pinlib.cli.helptext import HelpLayout
from pinlib.core import messages as M
from pinlib.core.labels import counted

__all__ = ["add_parser", "run"]

EXAMPLES = """\
examples:
  pinlib candidates pinlib-demo/workbooks/designs/demo-board.toml U4
  pinlib candidates board.toml U4 --category memory --category sensor --top 5
  pinlib candidates board.toml U1 --library ./parts --json > u1.json

Every placeable part of the merged library (built-in, the design's library folders,
--library) that can serve the position on every bus it sits on — the same pin
functions, with drives the position allows — is evaluated in the design and ranked:
pass before warn before fail, then by the worst margin of the checks the part can move
(a tie broken by the next worst margin), with the check that sets it and the bus
figures. On I2C and SMBus buses all candidates are evaluated in one numpy pass per
group of like parts; on SPI and GPIO buses each candidate goes through the engine,
the waveform edges of many candidates solved together.

* marks the part the design holds now.

exit status: 0 at least one candidate passes or warns, 1 none does, 2 the design, the
library or the reference is not valid.
"""


def add_parser(sub) -> None:
    from pinlib.library.schema import POSITION_CATEGORIES

    p = sub.add_parser(
        "candidates",
        help=SUMMARIES["candidates"],
        description="Evaluate every library part that could serve a device's position "
                    "(same pin functions, allowed drives) in the design, and rank them by "
                    "status and worst margin.",
        epilog=EXAMPLES,
        formatter_class=HelpLayout,
    )
    p.add_argument("design", metavar="DESIGN", help="the design file (.toml)")
    p.add_argument("ref", metavar="REF", help="the reference designator of the position (U4)")
    p.add_argument("--category", metavar="CAT", action="append", type=_position_category,
                   choices=POSITION_CATEGORIES, default=[],
                   help="only parts of this category (repeatable): "
                        + ", ".join(POSITION_CATEGORIES))
    p.add_argument("--top", metavar="N", type=_positive, default=None,
                   help="show the best N (text: 20 unless given; JSON: all unless given)")
    p.add_argument("--json", action="store_true",
                   help="print the ranking as JSON (format pinlib.candidates/1)")
    p.add_argument("--library", metavar="DIR", action="append", default=[],
                   help="a team library folder (repeatable; takes precedence over the design's)")
    p.add_argument("--progress", action="store_true",
                   help="show a progress bar even when standard error is not a terminal")
    p.set_defaults(run=run)


def _position_category(text: str) -> str:
    """A category ``--category`` takes; ``cable`` refused with why (a cable stands at no
    position), another unknown one with the closest, in the words of the other commands'
    refusals (argparse's "invalid choice" listed the choices quoted, and no closest)."""
    from pinlib.library.schema import POSITION_CATEGORIES

    if text == "cable":
        raise argparse.ArgumentTypeError(
            M.CABLE_NOT_RANKED + f" (got {text!r}); expected one of "
            + ", ".join(POSITION_CATEGORIES))
    if text not in POSITION_CATEGORIES:  # as 'parts list --category' words it
        from pinlib.core import nearby

        hint = nearby.closest_hint(text, POSITION_CATEGORIES, cutoff=0.4)
        raise argparse.ArgumentTypeError(
            M.NOT_ALLOWED_VALUE + f" (got {text!r}); expected one of "
            + ", ".join(POSITION_CATEGORIES) + (f"; {hint}" if hint else ""))
    return text


def _positive(text: str) -> int:
    try:
        n = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(M.NOT_A_WHOLE_NUMBER.format(text=text)) from None
    if n < 1:
        raise argparse.ArgumentTypeError(M.AT_LEAST_ONE.format(n=n))
    return n


def run(args) -> int:
    from pinlib.model.design import load_design
    from pinlib.studies.candidates import rank_candidates

    design = load_design(args.design, library_folders=args.library)
    ranking = rank_candidates(design, args.ref, categories=args.category or None,
                              progress=True if args.progress else None)
    problems = design.library.problems  # the ranking read every part: a part left out
    if problems:
        from pinlib.present.terminal import fitted

        warning = counted(M.LIBRARY_HAS_PROBLEMS, len(problems))
        print(fitted("pinlib: warning: " + warning + "; "
                     + M.FIRST_PROBLEM.format(message=problems[0].message),
                     sys.stderr), file=sys.stderr)
    if args.json:
        from pinlib.present.terminal import write_json

        write_json(ranking.to_json(args.top))
    else:
        from pinlib.present.terminal import table_width

        sys.stdout.write(ranking.format_text(args.top or 20, width=table_width()))
    good = any(c.status in ("pass", "warn") for c in ranking.candidates)
    return 0 if good else 1
