"""``pinlib new DESIGN --part REF=PART ...``: write a starter design file.

The parts are looked up in the library; one bus is written per protocol that at least
two of them serve (:func:`pinlib.model.starter.starter_text`), with comments on every
placeholder.  An existing file is never overwritten; the file is written atomically.
"""

from __future__ import annotations

import os
import re
import sys

from pinlib.cli import SUMMARIES
from pinlib.cli.helptext import HelpLayout
from pinlib.core import messages as M

__all__ = ["add_parser", "run", "parse_placements"]

EXAMPLES = """\
examples:
  pinlib new board.toml --part U1=mcu-3v3 --part U2=eeprom-i2c \\
      --part U3=nor-flash-spi
  pinlib new board.toml --part U1=mcu-3v3 --part U2=adc-i2c \\
      --title "Sensor board"
  pinlib check board.toml

Every length, rail and clock in the written file is a placeholder, marked so in a
comment: replace them with the board's own.  The --library folders go into the
design's library line, so its team parts are found when it is read again.  An existing
file is not overwritten.

exit status: 0 written, 2 an unknown part, a bad REF=PART, or the file exists.
"""

_PLACE = re.compile(r"^\s*([^=\s]+)\s*=\s*([a-z0-9][a-z0-9-]*)\s*$")


def add_parser(sub) -> None:
    p = sub.add_parser(
        "new",
        help=SUMMARIES["new"],
        description="Write a starter design file (format pinlib.design/1) holding one bus "
                    "per protocol the given parts share, with comments on each placeholder, "
                    "ready for 'pinlib check'.",
        epilog=EXAMPLES,
        formatter_class=HelpLayout,
    )
    p.add_argument("design", metavar="DESIGN", help="the design file to write (.toml)")
    p.add_argument("--part", metavar="REF=PART", action="append", default=[], required=True,
                   dest="parts", help="a reference designator and the part placed there "
                                      "(repeatable)")
    p.add_argument("--title", metavar="TEXT", default=None,
                   help="the design's title (default: the file's name)")
    p.add_argument("--library", metavar="DIR", action="append", default=[],
                   help="a team library folder (repeatable)")
    p.set_defaults(run=run)


def parse_placements(items) -> list[tuple[str, str]]:
    """``["U1=mcu-3v3", ...]`` -> ``[("U1", "mcu-3v3"), ...]`` (each reference once)."""
    from pinlib.core.errors import InputError

    out: dict[str, str] = {}
    for item in items:
        m = _PLACE.match(item)
        if not m:
            raise InputError(M.PLACEMENT_FORM, field="--part", value=item,
                             expected="e.g. U1=mcu-3v3 (a part id: lowercase, digits, -)")
        ref, part = m.groups()
        if ref in out:
            raise InputError(M.REF_PLACED_TWICE, field="--part", value=ref,
                             hint=f"{out[ref]} and {part}")
        out[ref] = part
    return list(out.items())


def _design_folders(folders, design) -> list[str]:
    """The ``--library`` folders as the design's ``library`` line names them: relative to
    the design file's folder (forward slashes), or absolute where no relative path leads
    there (another drive)."""
    here = os.path.dirname(os.path.abspath(design))
    out = []
    for folder in folders:
        full = os.path.abspath(folder)
        try:
            shown = os.path.relpath(full, here)
        except ValueError:  # Windows: another drive
            shown = full
        shown = shown.replace(os.sep, "/")
        if shown not in out:
            out.append(shown)
    return out


def run(args) -> int:
    from pinlib.core.errors import InputError, WriteError
    from pinlib.core.tomlfile import atomic_write, refuse_irregular_target
    from pinlib.library.loader import load_library
    from pinlib.model.starter import Placement, starter_text

    placements = parse_placements(args.parts)
    refuse_irregular_target(args.design, hint="name the design file to write, e.g. "
                            f"{os.path.join(args.design, 'board.toml')}"
                            if os.path.isdir(args.design) else None)
    if os.path.lexists(args.design):
        raise WriteError(M.NEW_FILE_EXISTS, file=str(args.design),
                         hint="choose another name, or remove the file first")
    from pinlib.library.folders import require_folders

    require_folders(args.library)  # a folder it was told to read: exit 2, naming who said so
    lib = load_library(args.library, lazy=True)
    placed = []
    for ref, pid in placements:
        try:
            part = lib.get(pid, field="--part")
        except InputError as err:
            if pid in lib.files or lib.problems_of(pid):
                raise  # a part that does not load: its own file's error
            from pinlib.library.folders import team_folders_hint

            # unknown: where team parts were looked for (PINLIB_LIBRARY not set?)
            raise InputError(err.problem, field="--part", value=pid, hint="; ".join(
                h for h in (err.hint, team_folders_hint(args.library)) if h)) from None
        if part.abstract or part.category == "cable":
            text = M.ABSTRACT_NOT_PLACED if part.abstract else M.CABLE_NOT_PLACED
            raise InputError(text.format(part=pid), field="--part", value=f"{ref}={pid}")
        placed.append((Placement(ref, pid), part))
    title = args.title or os.path.splitext(os.path.basename(args.design))[0]
    notes: list[str] = []
    text, buses = starter_text(title, placed, _design_folders(args.library, args.design),
                               notes)
    if not buses:
        raise InputError(M.NO_BUS_FOR_PARTS, field="--part",
                         value=", ".join(f"{r}={p}" for r, p in placements),
                         hint="'pinlib parts show ID' lists a part's pin functions")
    atomic_write(args.design, text)
    print(f"wrote {args.design} ({buses} bus{'es' if buses > 1 else ''}); "
          f"check it with: pinlib check {args.design}", file=sys.stderr)
    if notes:
        from pinlib.present.terminal import fitted

        for note in notes:
            print(fitted(f"note: {note}", sys.stderr), file=sys.stderr)
    return 0
