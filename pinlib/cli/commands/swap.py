"""``pinlib swap DESIGN REF=PART ...``: rerun a design with parts substituted.

The design is evaluated as it is and with the substitutions; the figures are printed
side by side with the checks whose status changed and the part values behind the
change (:func:`pinlib.studies.compare.compare`).  A part that cannot serve the position —
a pin function missing, a drive the position does not allow
(:func:`pinlib.studies.compare.can_serve`) — is refused with the reason before anything is
evaluated: exit 2, the design file untouched.  With ``--write`` the design file is
edited in place after the evaluation succeeds: only the ``part = "..."`` of the
substituted devices changes; comments and formatting stay.
"""

from __future__ import annotations

import argparse
import re
import sys
from pathlib import Path

from pinlib.cli import SUMMARIES
from pinlib.cli.helptext import HelpLayout
from pinlib.core import messages as M

__all__ = ["add_parser", "run", "threshold_type", "parse_assignments"]

EXAMPLES = """\
examples:
  pinlib swap pinlib-demo/workbooks/designs/demo-board.toml U4=io-expander-i2c
  pinlib swap board.toml U4=adc-i2c U9=temp-humidity-sensor --threshold 2%
  pinlib swap board.toml U4=team-eeprom --library ./parts --write
  pinlib swap board.toml U4=adc-i2c --json > swap.json
  pinlib swap --part eeprom-i2c=rtc-i2c 'boards/*.toml'
  pinlib swap --part eeprom-i2c=team-eeprom --library ./parts 'boards/*.toml'
  pinlib swap --part eeprom-i2c=rtc-i2c 'boards/*.toml' --write

(team-eeprom: a part of the team's library folder ./parts; the other ids are built in)

The text lists what changed: checks whose status changed, margins and figures that
moved by more than the threshold (5 % unless --threshold) and the part values behind
them; --detail prints every figure before and after (those that moved marked *).
A part that cannot serve the position (a pin function the old part served on that bus
is missing, its drive is wrong for the role, e.g. a push-pull SDA, a peripheral's CIPO
that is not push-pull, or a pin the old part lacks would sit on a routed line whose
route does not reach the position) is refused with the reason and the file is not
touched.

exit status: 0 the swapped design passes or warns, 1 a check fails, 2 a refused
substitution or a design/library that is not valid.
"""

#: ``REF=PART`` and ``OLD=NEW``: an id in either case here, so that one in capitals
#: meets the library's "unknown part" with its closest ids rather than a form error.
_ASSIGN = re.compile(r"^\s*([^=\s]+)\s*=\s*([a-z0-9][a-z0-9-]*)\s*$", re.IGNORECASE)


def threshold_type(text: str) -> float:
    """An argparse type for ``--threshold``: ``5%`` or ``"5 %"`` -> 0.05."""
    from pinlib.core.errors import PinlibError
    from pinlib.studies.compare import parse_change_threshold

    try:
        return parse_change_threshold(text)
    except PinlibError as err:
        raise argparse.ArgumentTypeError(err.problem + (f"; {err.hint}" if err.hint else "")
                                         ) from None


class _SwapHelp(HelpLayout):
    """The usage in the command's two forms, as it takes them: ``DESIGN REF=PART
    [REF=PART ...]`` (one substitution at least), and ``--part OLD=NEW DESIGN
    [DESIGN ...]`` (the positionals then all designs; ``--detail`` is for one design)."""

    def _format_usage(self, usage, actions, groups, prefix):
        import copy

        if usage is not None:
            return super()._format_usage(usage, actions, groups, prefix)
        one, many, part = [], [], None
        for a in actions:
            if a.dest == "parts":
                part = copy.copy(a)
                part.required = True  # shown bare: the second form needs it
            elif a.dest == "swaps":
                needed = copy.copy(a)
                needed.nargs = "+"  # REF=PART [REF=PART ...]
                one.append(needed)
                designs = copy.copy(a)
                designs.metavar = "DESIGN"  # [DESIGN ...]
                many.append(designs)
            elif a.dest == "detail":
                one.append(a)
            else:
                one.append(a)
                many.append(a)
        if part is not None:
            many.append(part)  # after the other options (the positionals follow them)
        first = super()._format_usage(None, one, groups, prefix)
        second = super()._format_usage(None, many, groups, " " * len(prefix or "usage: "))
        return first.rstrip("\n") + "\n" + second


def add_parser(sub) -> None:
    p = sub.add_parser(
        "swap",
        help=SUMMARIES["swap"],
        description="Evaluate a design with one or more parts substituted (REF=PART) and "
                    "show the figures before and after, the checks whose status changed and "
                    "the part values behind the change. --write edits the design file in "
                    "place, keeping its comments and formatting.",
        epilog=EXAMPLES,
        formatter_class=_SwapHelp,
    )
    p.add_argument("design", metavar="DESIGN", help="the design file (.toml)")
    p.add_argument("swaps", metavar="REF=PART", nargs="*",
                   help="a reference designator and the part id to put there; with --part, "
                        "more design files or glob patterns instead")
    p.add_argument("--part", metavar="OLD=NEW", action="append", default=[], dest="parts",
                   help="put part NEW at every position where part OLD stands, in every "
                        "design given (repeatable); one line of changes per design")
    p.add_argument("--write", action="store_true",
                   help="edit the design file in place after a successful evaluation")
    p.add_argument("--json", action="store_true",
                   help="print before, after and the change list as JSON")
    p.add_argument("--library", metavar="DIR", action="append", default=[],
                   help="a team library folder (repeatable; takes precedence over the design's)")
    p.add_argument("--threshold", metavar="PCT", type=threshold_type, default=None,
                   help="list figures that move by more than this, and margins that move "
                        "by more than this many points (default 5%%)")
    p.add_argument("--detail", action="store_true",
                   help="print every figure before and after (the default prints what "
                        "changed: checks whose status changed, margins and figures that moved, "
                        "the part values behind them)")
    p.set_defaults(run=run)


def parse_assignments(items) -> dict[str, str]:
    """``["U4=eeprom-hicap", ...]`` -> ``{"U4": "eeprom-hicap"}``."""
    return _pairs(items, _ASSIGN, "REF=PART", M.SUBSTITUTION_FORM,
                  "e.g. U4=eeprom-i2c (a part id: lowercase, digits, -)")


def _pairs(items, pattern, field: str, problem: str, expected: str) -> dict[str, str]:
    """``KEY=VALUE`` items as a dict: each must match ``pattern``, and a key given twice
    must name the same value."""
    from pinlib.core.errors import InputError

    out: dict[str, str] = {}
    for item in items:
        m = pattern.match(item)
        if not m:
            raise InputError(problem, field=field, value=item, expected=expected)
        key, value = m.groups()
        if key in out and out[key] != value:
            raise InputError(M.SUBSTITUTED_TWICE, field=field, value=key,
                             hint=f"{out[key]} and {value}")
        out[key] = value
    return out


def _refusals(design, swaps: dict[str, str]) -> list[dict]:
    """Each substitution's reasons for refusal (empty list: all can serve)."""
    from pinlib.studies.compare import swap_refusals

    refused = []
    for ref, part_id in swaps.items():
        old, reasons = swap_refusals(design, ref, part_id)
        if reasons:
            refused.append({"ref": ref, "old": old, "new": part_id, "reasons": reasons})
    return refused


def _table(rows) -> list[str]:
    """Every figure before and after, by place: under readable labels, each quantity once
    (:func:`pinlib.studies.compare.changes.shown_changes`, as the figures that moved and
    ``check --detail`` show them), a figure that moved beyond the threshold marked "*",
    the label column wrapped to fit the width."""
    from pinlib.core.labels import figure_label
    from pinlib.present.detail import table
    from pinlib.present.terminal import width
    from pinlib.studies.compare import format_change
    from pinlib.studies.compare.changes import shown_changes
    from pinlib.studies.compare.figures import figure_value_text

    cells, heads, path = [["", "figure", "before", "after", "change"]], {}, None
    for row in shown_changes(rows):
        if row.path != path:
            path = heads[len(cells)] = row.path
        change = {"added": "new", "removed": "gone", "changed": "differs"}.get(row.kind, "")
        if row.kind in ("moved", "same"):
            change = format_change(row.change, row.old, row.new, row.unit).strip("()")
        if row.kind == "same" and row.change == 0:
            change = ""
        cells.append(["*" if row.moved else "", figure_label(row.name),
                      figure_value_text(row.name, row.old, row.unit),
                      figure_value_text(row.name, row.new, row.unit),
                      change])
    return table(cells, "", width(), flex=1, heads=heads)


def run(args) -> int:
    from pinlib.engines.dispatch import check_design
    from pinlib.model.design import load_design
    from pinlib.model.result import CAUTION
    from pinlib.studies.compare import DEFAULT_THRESHOLD, compare, figure_rows, snapshot

    if args.parts:
        return _run_many(args)
    if not args.swaps:
        from pinlib.core.errors import InputError

        raise InputError(M.SWAP_NEEDS_SUBSTITUTION, field="REF=PART",
                         hint="e.g. pinlib swap board.toml U4=eeprom-i2c, or "
                              "pinlib swap --part OLD=NEW DESIGN...")
    threshold = DEFAULT_THRESHOLD if args.threshold is None else args.threshold
    swaps = parse_assignments(args.swaps)
    design = load_design(args.design, library_folders=args.library)

    refused = _refusals(design, swaps)
    if refused:
        return _report_refusals(args, design, refused)

    before = check_design(design)
    after_design = design.with_parts(swaps)
    after = check_design(after_design)
    old_snap, new_snap = snapshot(design, before), snapshot(after_design, after)
    changes = compare(old_snap, new_snap, threshold=threshold)
    rows = figure_rows(old_snap, new_snap, threshold=threshold)
    written, write_error = False, None
    if args.write:
        from pinlib.core.errors import PinlibError

        try:
            written = _write(design, swaps)
        except PinlibError as err:  # the evaluation is printed first, then this error
            write_error = err
    if written:
        _note_option_folders(design, swaps.values(), args.library)
    swap_rows = _swap_rows(design, swaps)

    if args.json:
        from pinlib.present.terminal import write_json

        write_json({"format": "pinlib.swap/1", "design": design.title, "path": str(design.path),
                   "swaps": swap_rows, "threshold": threshold, "written": written,
                   "before": before.to_json(), "after": after.to_json(),
                   "figures": [r.to_json() for r in rows], "changes": changes.to_json()})
        if write_error is not None:
            raise write_error  # on standard error, exit 2: the file was not written
        return after.exit_code()
    out = _text(design, swap_rows, rows, before, after, changes,
                detail=getattr(args, "detail", False))
    if write_error is not None:
        out.append(M.SWAP_NOT_WRITTEN.format(path=design.path))
    elif written:
        out.append(f"Wrote {design.path} (only the part of {', '.join(swaps)} changed).")
    elif args.write:
        out.append(f"{design.path} already holds these parts; nothing written.")
    else:
        out.append("Design file not changed (add --write to apply the substitution).")
    out.append("")
    if getattr(args, "detail", False):
        out.append(CAUTION)
    else:
        from pinlib.present.report import CAUTION_LINE

        out.append(CAUTION_LINE)
    from pinlib.present.visible import write_coloured

    write_coloured(sys.stdout, _fitted(out))
    if write_error is not None:
        sys.stdout.flush()  # the change list before the error that follows it
        raise write_error  # on standard error, exit 2: the file was not written
    return after.exit_code()


def _fitted(lines: list[str]) -> str:
    """Lines wrapped to the terminal's width (COLUMNS, else 80), continuation lines
    indented; status words coloured on a terminal unless NO_COLOR is set."""
    from pinlib.present.report import paint
    from pinlib.present.terminal import use_colour, width, wrap
    from pinlib.present.visible import visible

    cols = width()
    out: list[str] = []
    for ln in lines:
        if len(ln) <= cols:
            out.append(ln)
        else:
            indent = ln[: len(ln) - len(ln.lstrip())]
            out += wrap(ln.strip(), cols, indent)
    # the lines made visible before any colour is added (present.visible)
    out = paint(out) if use_colour(sys.stdout) else [visible(ln) for ln in out]
    return "\n".join(out) + "\n"


def _report_refusals(args, design, refused: list[dict]) -> int:
    """Say why each substitution is refused (the design is left as it is): exit 2."""
    from pinlib.present.terminal import fitted

    for r in refused:
        print(fitted("pinlib: error: " + M.SWAP_REFUSED.format(ref=r["ref"], new=r["new"],
                                                               old=r["old"]) + ":",
                     sys.stderr), file=sys.stderr)
        for reason in r["reasons"]:
            print(fitted(f"  - {reason}", sys.stderr), file=sys.stderr)
    print("pinlib: " + M.DESIGN_NOT_CHANGED.format(path=args.design), file=sys.stderr)
    if args.json:
        from pinlib.present.terminal import write_json

        write_json({"format": "pinlib.swap/1", "design": design.title,
                   "path": str(design.path), "refused": refused, "written": False})
    return 2


def _write(design, swaps: dict) -> bool:
    """Write the substituted parts into the design file (locked; refused when the file
    changed since it was read); True when the file changed."""
    from pinlib.core.errors import WriteError
    from pinlib.core.tomlfile import BOM, atomic_write, file_lock
    from pinlib.studies.compare import swapped_text

    text = swapped_text(design, swaps)
    with file_lock(design.path):
        now = design.path.read_text(encoding="utf-8").removeprefix(BOM)  # as load reads it
        if now != design.text:
            raise WriteError(M.DESIGN_CHANGED_DURING_SWAP, file=str(design.path),
                             hint="run the swap again")
        if text == design.text:
            return False
        atomic_write(design.path, text)
        return True


def _note_option_folders(design, part_ids, folders) -> None:
    """After a write: a note for each part written into the design that only a
    ``--library`` folder holds (not the design's own ``library`` line, PINLIB_LIBRARY or
    the built-in library), since the design no longer loads without that option."""
    from pathlib import Path

    from pinlib.core.tomlfile import tomllib
    from pinlib.library.loader import BUILTIN_DIR, library_folders
    from pinlib.present.terminal import fitted

    def inside(path: Path, folder: Path) -> bool:
        try:
            path.relative_to(folder)
        except ValueError:
            return False
        return True

    base = Path(design.path).resolve().parent
    try:
        own = tomllib.loads(design.text).get("library") or []
    except tomllib.TOMLDecodeError:
        own = []
    known = [Path(BUILTIN_DIR).resolve(), *(f.resolve() for f in library_folders(())),
             *((base / str(f)).resolve() for f in own if isinstance(f, str))]
    given = [Path(f) for f in folders]
    lib = design.library
    for pid in dict.fromkeys(part_ids):
        if pid not in lib.files:
            continue
        path = Path(lib.path_of(pid)).resolve()
        if any(inside(path, k) for k in known):
            continue
        folder = next((f for f in given if inside(path, f.resolve())), None)
        if folder is None:
            continue
        print(fitted(f"note: {pid} comes from {folder} (--library), which the library line "
                     f"of {design.path} does not name: add it there, or give --library "
                     f"{folder} to every command that reads the design", sys.stderr),
              file=sys.stderr)


def _swap_rows(design, swaps: dict) -> list[dict]:
    """Each substitution: the position, the old and new part, the new part's file."""
    lib = design.library
    out = []
    for ref, part_id in swaps.items():
        _, dev = design.device(ref)
        new_file = str(lib.path_of(part_id)) if part_id in lib.files else None
        out.append({"ref": ref, "old": dev.part_id, "new": part_id, "file": new_file})
    return out


def _moved(rows) -> list[str]:
    """The figures that moved beyond the threshold, by place, under readable labels, each
    quantity once (:func:`pinlib.studies.compare.changes.shown_changes`)."""
    from pinlib.studies.compare.changes import FigureChange, shown_changes

    moved = [FigureChange(r.path, r.name, r.unit, r.old, r.new, r.change, r.kind)
             for r in rows if r.moved]
    return ["  " + c.format() for c in shown_changes(moved)]


def _file_shown(path: str) -> str:
    """A part's file as the text names it: ``builtin:memory/eeprom-i2c.toml`` for a
    built-in part (as the part values under it do; installed, the full path runs through
    site-packages), relative to the working folder when inside it, else as given."""
    from pinlib.library.loader import BUILTIN_DIR
    from pinlib.present.terminal import shown_path

    try:
        return "builtin:" + Path(path).resolve().relative_to(
            Path(BUILTIN_DIR).resolve()).as_posix()
    except ValueError:
        return shown_path(path)


def _text(design, swap_rows, rows, before, after, changes, detail=False) -> list[str]:
    """The substitutions, the status, the checks whose status changed, the figures that
    moved and the part values behind them, as lines of text; with ``detail`` every figure
    before and after."""
    out = [f"{design.title} ({design.path})", "Substitutions:"]
    for s in swap_rows:
        same = " (unchanged)" if s["old"] == s["new"] else ""
        out.append(f"  {s['ref']}: {s['old']} → {s['new']}{same}"
                   + (f"  [{_file_shown(s['file'])}]" if s["file"] else ""))
    out.append("")
    out.append(f"Status: {before.status.upper()} → {after.status.upper()}")
    if changes.status_changes:
        out.append("Checks whose status changed:")
        out += ["  " + c.format() for c in changes.status_changes]
    else:
        out.append("No check changed status.")
    if changes.margin_changes:
        out.append(changes.margin_heading() + ":")
        out += ["  " + c.format() for c in changes.margin_changes]
    moved = _moved(rows)
    if detail:
        out.append("")
        out += _table(rows)
        out.append("")
    elif moved:
        out.append("Figures that moved:")
        out += moved
    else:
        out.append("No figure moved beyond the threshold.")
    if changes.part_changes:
        out.append("Part values behind the change:")
        for pc in changes.part_changes:
            out += ["  " + line for line in pc.lines()]
    out += [f"Note: {n}" for n in changes.notes]
    if not detail:
        from pinlib.core.labels import plural_s

        unmoved = sum(1 for r in rows if not r.moved)
        out.append(f"({unmoved} figure{plural_s(unmoved)} within the threshold; every figure "
                   "before and after: --detail)")
    out.append("")
    return out


# --- one substitution over many designs -------------------------------------------------

def parse_part_pairs(items) -> dict[str, str]:
    """``["eeprom-i2c=rtc-i2c", ...]`` -> ``{"eeprom-i2c": "rtc-i2c"}``."""
    return _pairs(items, _PAIR, "--part", M.SWAP_PART_FORM, "e.g. eeprom-i2c=rtc-i2c")


_PAIR = re.compile(r"^\s*([a-z0-9][a-z0-9-]*)\s*=\s*([a-z0-9][a-z0-9-]*)\s*$", re.IGNORECASE)


def _known_olds(parts: dict, summaries, library_folders) -> None:
    """Refuse an OLD part id that no loaded design's library holds (a typo would read as
    "no position to change" in every design), naming the closest ids, as ``pinlib parts
    used-by`` does."""
    from pinlib.core.errors import InputError
    from pinlib.library.folders import team_folders_hint

    loaded = [s.design for s in summaries if s.design is not None]
    if not loaded:
        return  # each design's own error says why
    for old in parts:
        if any(old in d.library.files for d in loaded):
            continue
        near = loaded[0].library.closest(old)
        hints = (["closest: " + ", ".join(near)] if near else []) + [
            team_folders_hint(library_folders, designs=len(loaded))]
        raise InputError(M.NOT_A_LIBRARY_PART, field="--part", value=old,
                         hint="; ".join(hints))


def _known_news(parts: dict, summaries, library_folders) -> None:
    """Refuse a NEW part id that no loaded design's library holds, once and before any
    design's line (each design had said "unknown part" on its own), naming the closest
    ids."""
    from pinlib.core.errors import InputError
    from pinlib.library.folders import team_folders_hint

    loaded = [s.design for s in summaries if s.design is not None]
    if not loaded:
        return  # each design's own error says why
    for new in dict.fromkeys(parts.values()):
        if any(new in d.library.files for d in loaded):
            continue
        near = loaded[0].library.closest(new)
        hints = (["closest: " + ", ".join(near)] if near else []) + [
            team_folders_hint(library_folders, designs=len(loaded))]
        raise InputError(M.NOT_A_LIBRARY_PART, field="--part", value=new,
                         hint="; ".join(hints))


def _run_many(args) -> int:
    """``--part OLD=NEW DESIGN...``: each design on its own; refused designs are named with
    the reasons at each position and (with --write) left as they are."""
    import os

    from pinlib.core.errors import InputError, PinlibError
    from pinlib.present.designs import format_swaps
    from pinlib.studies.many import expand_designs, swap_in_design

    parts = parse_part_pairs(args.parts)
    items = [args.design, *args.swaps]
    for item in items:
        if _ASSIGN.match(item) and not os.path.exists(item):
            raise InputError(M.SWAP_FORMS_MIXED, field="REF=PART", value=item,
                             hint="give designs after --part OLD=NEW, or REF=PART without it")
    summaries = [swap_in_design(p, parts, args.library, args.threshold)
                 for p in expand_designs(items)]
    _known_olds(parts, summaries, args.library)
    _known_news(parts, summaries, args.library)
    for s in summaries:
        if s.status == "swapped" and args.write:
            try:
                s.written = _write(s.design, s.swaps)
            except PinlibError as err:  # evaluated all the same: its changes are kept
                s.write_error = err.message
                from pinlib.present.terminal import fitted

                print(fitted("pinlib: error: " + err.message, sys.stderr), file=sys.stderr)
            if s.written:
                _note_option_folders(s.design, s.swaps.values(), args.library)
        if s.error is not None:
            from pinlib.present.terminal import fitted

            print(fitted("pinlib: error: " + M.DESIGN_NOT_LOADED.format(
                path=s.path, message=s.error), sys.stderr), file=sys.stderr)
    if args.json:
        from pinlib.present.terminal import write_json

        write_json({"format": "pinlib.swaps/1", "parts": parts, "write": args.write,
                   "designs": [s.to_json() for s in summaries]})
    else:
        from pinlib.present.terminal import table_width

        sys.stdout.write(format_swaps(summaries, parts, write=args.write, cols=table_width()))
    return max(s.exit_code for s in summaries)
