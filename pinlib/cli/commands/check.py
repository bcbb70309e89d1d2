"""``pinlib check DESIGN``: evaluate a design's buses and print the result."""

from __future__ import annotations

import argparse
import sys

from pinlib.cli import SUMMARIES
from pinlib.cli.helptext import HelpLayout
from pinlib.core import messages as M
from pinlib.core.labels import counted, plural_s

__all__ = ["add_parser", "run"]

EXAMPLES = """\
examples:
  pinlib check pinlib-demo/workbooks/designs/demo-board.toml
  pinlib check board.toml --detail       # every figure and check, with sources
  pinlib check board.toml --quiet        # only the problems
  pinlib check board.toml --json > result.json
  pinlib check board.toml --library ~/team-parts --library ./parts
  pinlib check board.toml --save         # keep board.result.json as reference
  pinlib check board.toml --threshold 2% # later: what changed against it
  pinlib check board.toml --corners      # which tolerances set each worst case
  pinlib check board.toml --monte-carlo 100000 --seed 7  # yield over tolerances

Every check is already taken at its worst corner of the tolerances; --corners adds a
list of the worst checks, each with the parameters (and their ends) that set its corner.
--corners and --monte-carlo cover I2C, SMBus, SPI and GPIO buses: every tolerance (rails,
pull-ups, series resistors, capacitance_tolerance, length_tolerance) at its ends, or
drawn at random (uniform, or normal with the tolerance at 3 sigma when the design says
distribution = "normal"). Monte Carlo reports each check's pass fraction with a 95 %
Wilson score interval and the parameters its margin follows most closely; a seed
makes the run repeatable. The exit status stays that of the worst-case check.

The text lists the failing and warning checks first, each with its fix, then one line
per bus and a closing line; --detail prints every figure and check, --quiet only the
problems. Lines fit COLUMNS (80 when not a terminal); status words are coloured on a
terminal unless NO_COLOR is set.

exit status: 0 pass or warn, 1 a check fails, 2 the design or library is not valid.
"""


def threshold_type(text):
    from pinlib.cli.commands.swap import threshold_type as parse

    return parse(text)


def add_parser(sub) -> None:
    p = sub.add_parser(
        "check",
        help=SUMMARIES["check"],
        description="Evaluate every bus of a design file (format pinlib.design/1) and report "
                    "figures and checks, each check with its limit and the limit's source.",
        epilog=EXAMPLES,
        formatter_class=HelpLayout,
    )
    p.add_argument("designs", metavar="DESIGN", nargs="+",
                   help="the design file (.toml); several files or glob patterns (quoted: "
                        "'boards/*.toml', '**' for sub-folders) give one line per design")
    p.add_argument("--json", action="store_true",
                   help="print the result as JSON (format pinlib.result/1)")
    p.add_argument("--library", metavar="DIR", action="append", default=[],
                   help="a team library folder (repeatable; takes precedence over the design's)")
    p.add_argument("--save", action="store_true",
                   help="write the result beside each design as <design>.result.json; later "
                        "runs list what changed against it")
    p.add_argument("--threshold", metavar="PCT", type=threshold_type, default=None,
                   help="list figures that moved more than this against the saved result, "
                        "and margins that moved more than this many points (default 5%%)")
    p.add_argument("--corners", action="store_true",
                   help="also list the checks at their worst corner of the tolerances "
                        "(every check is taken there without it), the worst first, each "
                        "with the parameters and ends that set its corner (I2C, SMBus, "
                        "SPI, GPIO); statuses and exit status unchanged"),
    p.add_argument("--monte-carlo", metavar="N", type=samples_type, default=None,
                   dest="monte_carlo",
                   help="also draw N boards within the tolerances and report each check's "
                        "pass fraction (I2C, SMBus, SPI, GPIO)")
    p.add_argument("--seed", metavar="S", type=seed_type, default=None,
                   help="seed of the Monte Carlo draws (repeatable runs; only with "
                        "--monte-carlo)")
    p.add_argument("--progress", action="store_true",
                   help="show a progress bar even when standard error is not a terminal")
    add_output_options(p)
    p.add_argument("--jobs", metavar="N", type=samples_type, default=None,
                   help="with several designs: check them in N processes (default: the "
                        "machine's cores, at most one per design)")
    p.add_argument("--against-snapshots", action="store_true", dest="against_snapshots",
                   help="list, per design (one or several), what moved since its saved "
                        "snapshot (pinlib check DESIGN --save), one line each")
    p.set_defaults(run=run)


def add_output_options(p) -> None:
    """--detail and --quiet: how much of the text to print (JSON is always whole)."""
    how = p.add_mutually_exclusive_group()
    how.add_argument("--detail", action="store_true",
                     help="print every figure and check, with sources and notes (the "
                          "default prints the problems and one line per bus)")
    how.add_argument("--quiet", "-q", action="store_true",
                     help="print only the failing and warning checks (the closing line "
                          "alone when all pass)")


def samples_type(text):
    try:
        n = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(M.NOT_A_WHOLE_NUMBER.format(text=text)) from None
    if n < 1:
        raise argparse.ArgumentTypeError(M.AT_LEAST_ONE.format(n=n))
    return n


def seed_type(text):
    try:
        n = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(M.NOT_A_WHOLE_NUMBER.format(text=text)) from None
    if n < 0:
        raise argparse.ArgumentTypeError(M.SEED_NEGATIVE)
    return n


def run(args) -> int:
    """One design: the full report, as always; several (or a pattern matching several):
    one line per design."""
    from pinlib.studies.designpaths import expand_designs

    paths = expand_designs(args.designs)
    if len(paths) == 1 and not args.against_snapshots:
        args.design = str(paths[0])
        return _run_one(args)
    return _run_many(args, paths)


def _run_many(args, paths) -> int:
    """Several designs: each checked on its own (in ``--jobs`` processes), one line each,
    the worst status as the exit code (2 when a design could not be checked)."""
    from pinlib.core.errors import InputError
    from pinlib.studies.many import check_many

    for flag, given in (("--corners", args.corners), ("--monte-carlo", args.monte_carlo),
                        ("--seed", args.seed is not None),
                        ("--detail", getattr(args, "detail", False))):
        if given:
            raise InputError(M.ONE_DESIGN_ONLY, field=flag,
                             hint="run 'pinlib check DESIGN " + flag + "' on each design")
    progress = True if args.progress else None
    summaries = check_many(paths, args.library, jobs=args.jobs,
                           against_snapshots=args.against_snapshots,
                           threshold=args.threshold, progress=progress, save=args.save)
    from pinlib.present.terminal import fitted

    for s in summaries:
        if s.error is not None:
            print(fitted("pinlib: error: " + M.DESIGN_NOT_LOADED.format(
                path=s.path, message=s.error_here or s.error), sys.stderr), file=sys.stderr)
        for note in s.notes:
            print(fitted(f"pinlib: warning: {s.path}: {note}", sys.stderr), file=sys.stderr)
        if s.save_error is not None:
            print(fitted(f"pinlib: error: {s.save_error}", sys.stderr), file=sys.stderr)
    if args.json:
        from pinlib.present.terminal import write_json

        write_json([_many_json(s) for s in summaries])
    else:
        from pinlib.present.designs import format_many
        from pinlib.present.terminal import table_width

        sys.stdout.write(format_many(summaries, table_width()))
    if args.save:
        print(fitted(_saved_line(summaries), sys.stderr), file=sys.stderr)
    return max(s.exit_code for s in summaries)


def _saved_line(summaries, shown: int = 3) -> str:
    """What ``--save`` wrote over several designs, in one line: ``saved 2 snapshots, each
    beside its design: a.result.json, b.result.json`` (the first ``shown`` named)."""
    saved = [s.saved for s in summaries if s.saved is not None]
    missed = len(summaries) - len(saved)
    if len(saved) > shown + 1:
        names = ", ".join(saved[:shown]) + f" and {len(saved) - shown} more"
    else:
        names = ", ".join(saved)
    line = (f"saved {len(saved)} snapshot{plural_s(len(saved))}, each beside its "
            f"design: {names}" if saved else "saved no snapshot")
    if missed:
        line += f"; {missed} design{plural_s(missed)} not saved (above)"
    return line


def _many_json(s) -> dict:
    """One design of ``--json`` over many: its result (pinlib.result/1) with the path, or
    the error that kept it from being checked; the snapshot changes when asked."""
    if s.result is None:
        return {"path": s.path, "status": "error", "error": s.error}
    out = dict(s.result, path=s.path)
    if s.snapshot is not None:
        out["snapshot"] = s.snapshot
    if s.changes is not None:
        out["changes"] = s.changes
    if s.saved is not None:
        out["saved"] = s.saved
    return out


def _run_one(args) -> int:
    from pinlib.engines.dispatch import check_design
    from pinlib.model.design import load_design
    from pinlib.studies.snapshotfile import may_have_snapshot, snapshot_advice, snapshot_path

    design = load_design(args.design, library_folders=args.library)
    problems = design.library.problems  # files that could not be read, parts asked for
    if problems:
        _warn("pinlib: warning: " + counted(M.LIBRARY_HAS_PROBLEMS, len(problems))
              + "; " + M.FIRST_PROBLEM.format(message=problems[0].message))
    _warn_implausible(design)
    if getattr(args, "seed", None) is not None and getattr(args, "monte_carlo", None) is None:
        from pinlib.core.errors import InputError

        raise InputError(M.SEED_WITHOUT_MONTE_CARLO, field="--seed", value=args.seed,
                         hint="add --monte-carlo N")
    result = check_design(design)
    changes = None
    # The snapshot code is imported only when there is a snapshot to compare or save.
    if may_have_snapshot(design) or args.save:
        from pinlib.studies.compare import DEFAULT_THRESHOLD, compare_with_snapshot

        threshold = DEFAULT_THRESHOLD if args.threshold is None else args.threshold
        # Compare before saving, or the run would compare with itself.
        damaged: list = []
        changes = compare_with_snapshot(design, result, threshold, damaged=damaged)
        for err in damaged:  # named, then ignored: the check itself still runs
            # its own advice (delete it, or save anew) in place of the error's: once
            _warn("pinlib: warning: " + err.with_hint(M.SNAPSHOT_IGNORED.format(
                advice=snapshot_advice(snapshot_path(design), args.design))).message)
    extra = _what_if(design, args, result)
    if args.json:
        out = result.to_json()
        if changes is not None:
            out["changes"] = changes.to_json()
        for key, value in extra.items():
            out[key] = value.to_json()
        from pinlib.present.terminal import write_json

        write_json(out)
    else:
        from pinlib.present.visible import write_coloured

        write_coloured(sys.stdout, render_text(result, args, design_arg=args.design))
        if changes is not None and not getattr(args, "quiet", False):
            sys.stdout.write("\n" + _fitted(changes.format_text()))
        for value in extra.values():
            sys.stdout.write("\n" + _fitted(value.format_text()))
    if args.save:
        from pinlib.studies.compare import save_snapshot

        print(f"saved {save_snapshot(design, result)}", file=sys.stderr)
    return result.exit_code()


def render_text(result, args, *, design_arg: str | None = None, stream=None) -> str:
    """One design's result as the text ``pinlib check`` prints: the view the options ask
    for (--detail, --quiet, else the summary), fitted to the terminal's width (COLUMNS,
    else 80 off a terminal), status words coloured on a terminal unless NO_COLOR is set."""
    from pinlib.present.report import format_text
    from pinlib.present.terminal import shell_word, use_colour, width

    stream = sys.stdout if stream is None else stream
    mode = ("detail" if getattr(args, "detail", False) else
            "quiet" if getattr(args, "quiet", False) else "summary")
    more = None
    if design_arg is not None:
        more = f"pinlib check {shell_word(design_arg)} --detail"
    return format_text(result, mode=mode, width=width(), colour=use_colour(stream), more=more)


def _fitted(text: str) -> str:
    """Text of the studies (change list, corners, Monte Carlo) wrapped to the width."""
    from pinlib.present.report import fit
    from pinlib.present.terminal import width

    return "\n".join(fit(text.rstrip("\n").split("\n"), width())) + "\n"


def _warn_implausible(design) -> None:
    """Warn about implausible values of the parts the design places (devices, cables and
    cable sections): the check goes on with them, a reviewer should know."""
    from pinlib.library.plausible import part_warnings
    from pinlib.library.sources import unsourced

    ids: dict[str, None] = {}
    for bus in design.buses:
        for d in bus.devices:
            ids[d.part_id] = None
        for seg in bus.segments:
            for c in seg.cables:
                ids[c.part_id] = None
            for s in seg.sections:
                if s.part_id:
                    ids[s.part_id] = None
        for line in bus.lines.values():
            for s in line.sections:
                if s.part_id:
                    ids[s.part_id] = None
    lib = design.library
    files: set = set()
    for pid in ids:
        for w in part_warnings(lib.get(pid), lib):
            _warn(f"pinlib: warning: {pid}: " + w.message)
        # a datasheet, measured or published basis that names no source, in the part's files
        for cls in lib.chain(pid):
            pf = lib.files.get(cls)
            if pf is not None and pf.path not in files:
                files.add(pf.path)
                for e in unsourced(pf):
                    _warn(f"pinlib: warning: {pid}: " + e.message)


def _warn(line: str) -> None:
    """A warning on standard error: wrapped to a terminal, one line in a file or a pipe."""
    from pinlib.present.terminal import fitted

    print(fitted(line, sys.stderr), file=sys.stderr)


def _what_if(design, args, result) -> dict:
    """Corners and Monte Carlo when asked: {"corners": ..., "monte_carlo": ...}; both
    start from ``result``, the design's checked just before."""
    out = {}
    progress = True if getattr(args, "progress", False) else None
    buses = {b.id: b for b in result.buses}
    if getattr(args, "corners", False):
        from pinlib.studies.whatif import corners

        out["corners"] = corners(design, progress=progress, results=buses)
    if getattr(args, "monte_carlo", None) is not None:
        from pinlib.studies.whatif import monte_carlo

        out["monte_carlo"] = monte_carlo(design, args.monte_carlo, seed=args.seed,
                                         progress=progress, results=buses,
                                         couplings=result.couplings)
    return out
