"""``pinlib report DESIGN (--html FILE | --md FILE)``: write a design-review report.

The design is evaluated (as ``pinlib check`` does), compared with its saved snapshot
when there is one, and written as a self-contained HTML page or as Markdown with its
charts as SVG files in a folder beside it (:mod:`pinlib.present.review`).  Every file is
written atomically: a reader sees the old report or the new one, never half of one.
"""

from __future__ import annotations

import argparse
import os
import sys
from pathlib import Path

from pinlib.cli import SUMMARIES
from pinlib.cli.helptext import HelpLayout
from pinlib.core import messages as M

__all__ = ["add_parser", "run", "chart_dir_for", "MONTE_CARLO_MODULES"]

EXAMPLES = """\
examples:
  pinlib report pinlib-demo/workbooks/designs/demo-board.toml --html review.html
  pinlib report board.toml --md review/board.md  # charts: review/board-charts/
  pinlib report board.toml --html review.html --library ./parts
  pinlib report board.toml --html review.html --monte-carlo 10000 --seed 1

The report holds the caution, every bus's figures and checks with the source of each
limit, charts (edge time against load, pull-up windows, receiver waveforms, SPI timing
budgets; Monte Carlo histograms when run), every part with the provenance of each value,
and the change list against the snapshot saved by `pinlib check DESIGN --save`.
The HTML page needs no network and no script; the Markdown links its charts as SVG
files in <name>-charts/ beside the .md (so repository viewers show them).

exit status: 0 pass or warn, 1 a check fails (the report is written either way),
2 the design or library is not valid, or the report cannot be written.
"""

#: Where the Monte Carlo engine is looked for (see :func:`_monte_carlo`).
MONTE_CARLO_MODULES = ("pinlib.studies.whatif",)


def _positive_int(text: str) -> int:
    try:
        n = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(M.NOT_A_WHOLE_NUMBER.format(text=text)) from None
    if n < 1:
        raise argparse.ArgumentTypeError(M.AT_LEAST_ONE.format(n=n))
    return n


def threshold_type(text):
    from pinlib.cli.commands.swap import threshold_type as parse

    return parse(text)


def add_parser(sub) -> None:
    p = sub.add_parser(
        "report",
        help=SUMMARIES["report"],
        description="Evaluate a design and write a self-contained design-review report: the "
                    "caution, figures and checks with their sources, charts, the parts with "
                    "the provenance of their values, and the changes against the saved "
                    "snapshot.",
        epilog=EXAMPLES,
        formatter_class=HelpLayout,
    )
    p.add_argument("design", metavar="DESIGN", help="the design file (.toml)")
    out = p.add_mutually_exclusive_group(required=True)
    out.add_argument("--html", metavar="FILE", help="write one self-contained HTML page")
    out.add_argument("--md", metavar="FILE",
                     help="write Markdown; its charts go to FILE's name + '-charts/' beside it")
    p.add_argument("--library", metavar="DIR", action="append", default=[],
                   help="a team library folder (repeatable; takes precedence over the design's)")
    p.add_argument("--threshold", metavar="PCT", type=threshold_type, default=None,
                   help="list figures that moved more than this against the saved snapshot, "
                        "and margins that moved more than this many points (default 5%%)")
    p.add_argument("--monte-carlo", metavar="N", type=_positive_int, default=None,
                   dest="monte_carlo",
                   help="also run N Monte Carlo boards and show a histogram per check")
    p.add_argument("--seed", metavar="S", type=int, default=None,
                   help="seed of the Monte Carlo run (reproducible runs)")
    p.set_defaults(run=run)


def chart_dir_for(md_path: str | Path) -> str:
    """The folder name, relative to the ``.md``, that holds its charts:
    ``review/board.md`` -> ``board-charts``."""
    return f"{Path(md_path).stem}-charts"


def _monte_carlo(design, n: int, seed: int | None, result):
    """Run the Monte Carlo engine when it is installed, from ``result`` (the design's
    checked just before: its buses and couplings are not evaluated again).

    :func:`pinlib.studies.whatif.monte_carlo` (the first of :data:`MONTE_CARLO_MODULES` that
    imports and has ``monte_carlo(design, n, *, seed=None, results=None,
    couplings=None)``); it shows progress on a terminal.  Without it the option is
    refused with a message (exit 2).
    """
    import importlib

    from pinlib.core.errors import InputError

    for name in MONTE_CARLO_MODULES:
        try:
            module = importlib.import_module(name)
        except ModuleNotFoundError as exc:
            if exc.name != name:
                raise
            continue
        run = getattr(module, "monte_carlo", None)
        if run is None:
            continue
        return run(design, n, seed=seed, results={b.id: b for b in result.buses},
                   couplings=result.couplings)
    raise InputError(M.MONTE_CARLO_UNAVAILABLE,
                     field="--monte-carlo", value=n,
                     hint="write the report without --monte-carlo")


def _remove_stale_charts(folder: Path, keep: set) -> int:
    """Remove from ``folder`` the chart files pinlib wrote on an earlier run that are not
    named in ``keep`` (the files just written), and return how many went.  Only pinlib's own
    charts go (:func:`pinlib.present.review.draw.is_chart_file`: named and begun as
    pinlib writes them); every other file stays.  One that cannot be removed is named in
    a warning: the report itself is written."""
    from pinlib.present.review.draw import is_chart_file

    if not folder.is_dir():
        return 0
    removed = 0
    for path in sorted(folder.iterdir()):
        if path.name in keep or not is_chart_file(path):
            continue
        try:
            path.unlink()
        except OSError as exc:
            print(f"pinlib: warning: {path}: " + M.CANNOT_REMOVE_OLD_CHART.format(
                reason=exc.strerror), file=sys.stderr)
            continue
        removed += 1
    return removed


def _refuse_own_inputs(target: Path, design: Path) -> None:
    """Refuse a report written over its own design or the design's snapshot (a slip of
    the two names: ``pinlib report board.toml --md board.toml`` replaced the design)."""
    from pinlib.core.errors import InputError
    from pinlib.studies.snapshotfile import snapshot_path

    for own in (design, snapshot_path(design)):
        try:
            same = os.path.samefile(target, own)
        except OSError:  # either does not exist (yet): not the same file
            continue
        if same:
            raise InputError(M.REPORT_TARGET_IS_INPUT, file=str(target),
                             expected="a file name of the report's own, e.g. review.html")


def run(args) -> int:
    from pinlib.core.errors import InputError
    from pinlib.core.tomlfile import atomic_write, refuse_irregular_target
    from pinlib.engines.dispatch import check_design
    from pinlib.model.design import load_design
    from pinlib.present.review import build_review
    from pinlib.present.terminal import fitted
    from pinlib.studies.compare import DEFAULT_THRESHOLD, compare_with_snapshot
    from pinlib.studies.snapshotfile import snapshot_advice, snapshot_path

    if args.seed is not None and args.monte_carlo is None:
        raise InputError(M.SEED_WITHOUT_MONTE_CARLO, field="--seed", value=args.seed,
                         hint="add --monte-carlo N")
    target = Path(args.html or args.md)
    from pinlib.core.pathkind import FOLDER, UNREADABLE, path_kind

    kind, reason = path_kind(target)
    if kind == UNREADABLE:
        raise InputError(M.CANNOT_USE_NAME.format(reason=reason), file=str(target),
                         field="--html" if args.html else "--md")
    if kind == FOLDER:
        raise InputError(M.REPORT_TARGET_IS_FOLDER, file=str(target),
                         expected="a file name, e.g. review.html")
    if str(target.parent) and path_kind(target.parent)[0] != FOLDER:
        raise InputError(M.REPORT_FOLDER_MISSING, file=str(target),
                         hint=f"create {target.parent} first")
    refuse_irregular_target(target)  # /dev/full: refused now, not after the work
    _refuse_own_inputs(target, Path(args.design))
    design = load_design(args.design, library_folders=args.library)
    result = check_design(design)
    threshold = DEFAULT_THRESHOLD if args.threshold is None else args.threshold
    damaged: list = []
    changes = compare_with_snapshot(design, result, threshold, damaged=damaged)
    for err in damaged:  # named, then ignored: the report is written without changes
        print(fitted("pinlib: warning: " + err.with_hint(M.SNAPSHOT_IGNORED.format(
            advice=snapshot_advice(snapshot_path(design), args.design))).message, sys.stderr),
            file=sys.stderr)
    mc = None
    if args.monte_carlo is not None:
        mc = _monte_carlo(design, args.monte_carlo, args.seed, result)
    review = build_review(design, result, changes=changes, mc=mc)
    stale = 0
    if args.html:
        atomic_write(target, review.html())
        written = [target]
    else:
        folder = chart_dir_for(target)
        text, files = review.markdown(folder)
        written = []
        if files:
            try:
                (target.parent / folder).mkdir(exist_ok=True)
            except OSError as exc:
                from pinlib.core.errors import WriteError

                raise WriteError(M.CANNOT_CREATE_FOLDER.format(reason=exc.strerror),
                                 file=str(target.parent / folder)) from None
        for rel, svg in files.items():
            path = target.parent / rel
            atomic_write(path, svg)
            written.append(path)
        atomic_write(target, text)  # last: the text never links a chart not yet written
        written.insert(0, target)
        # then the charts of an earlier run that the new text no longer links
        stale = _remove_stale_charts(target.parent / folder, {p.name for p in written})
    drawn = sum(1 for c in review.all_charts() if c.svg is not None)
    missing = [c for c in review.all_charts() if c.svg is None]
    extra = f" and {len(written) - 1} chart files" if len(written) > 1 else ""
    from pinlib.present.terminal import fitted

    gone = f"; removed {stale} chart files of an earlier run" if stale else ""
    print(fitted(f"wrote {written[0]}{extra} ({drawn} charts; design {result.status}){gone}",
                 sys.stderr), file=sys.stderr)
    for c in missing:
        print(fitted("pinlib: note: " + M.CHART_NOT_DRAWN_WITH_TITLE.format(
            title=c.title, error=c.error), sys.stderr), file=sys.stderr)
    return result.exit_code()
