"""``pinlib parts used-by``: the designs and positions that use a part (its own module,
as ``parts import``, to keep :mod:`pinlib.cli.commands.parts` small)."""

from __future__ import annotations

import json
import sys

from pinlib.core import messages as M
from pinlib.core.errors import InputError


def _toml_files_here() -> list:
    """The ``*.toml`` files under the current folder, by the library's bounded walk (a
    system folder, the home folder or a tree past the walk's bounds is refused)."""
    from pathlib import Path

    from pinlib.core.errors import LibraryError
    from pinlib.library.walk import part_paths

    here = Path.cwd()
    try:
        paths, _problems = part_paths(here)
    except LibraryError as exc:
        raise InputError(M.USED_BY_FOLDER_REFUSED.format(reason=exc.problem),
                         field="DESIGN", value=str(here),
                         expected="design files or a pattern (e.g. 'boards/**/*.toml')"
                         ) from None
    # named from the current folder, as the designs a user gives are (not /tmp/.../a.toml)
    out = []
    for p in paths:
        try:
            out.append(Path(p).relative_to(here))
        except ValueError:  # reached by a link (followed only inside the folder)
            out.append(Path(p))
    return out


def _not_found(lib, args, designs: int | None) -> InputError:
    from pinlib.library.folders import team_folders_hint

    if lib.problems_of(args.id):  # a file holds it and cannot be read: that file's error
        try:
            lib.get(args.id)
        except InputError as err:
            return err

    near = lib.closest(args.id)
    hints = (["closest: " + ", ".join(near)] if near else []) + [
        team_folders_hint(args.library, designs=designs)]
    return InputError(M.NOT_A_LIBRARY_PART, field="ID", value=args.id, hint="; ".join(hints))


def run_used_by(args, load) -> int:
    """`pinlib parts used-by ID [DESIGN...]`: every design position that uses the part,
    directly or through a class it extends (``load(args)`` gives the library; each design
    adds its own ``library`` line, so a part only a design's folder holds is found)."""
    from pinlib.present.designs import format_uses
    from pinlib.present.terminal import fitted
    from pinlib.studies.many import expand_designs, is_design_file, used_by

    lib = load(args)
    if args.designs:
        paths = expand_designs(args.designs)
    else:
        paths = [p for p in _toml_files_here() if is_design_file(p)]
    if args.id not in lib.files and not paths:
        raise _not_found(lib, args, len(paths))
    holders: list = []
    uses, errors = used_by(args.id, paths, args.library, found_in=holders)
    for e in errors:
        print(fitted("pinlib: error: " + M.DESIGN_NOT_LOADED.format(
            path=e["path"], message=e["error"]), sys.stderr), file=sys.stderr)
    if args.id not in lib.files and not holders:
        raise _not_found(lib, args, len(paths))
    if args.json:
        out = {"part": args.id, "uses": uses, "errors": errors}
        sys.stdout.write(json.dumps(out, indent=2, ensure_ascii=False) + "\n")
    else:
        # a row too long for the terminal wraps, its rest indented; piped, one line a use
        sys.stdout.write("".join(fitted(line) + "\n" for line in
                                 format_uses(args.id, uses, len(paths)).splitlines()))
    return 2 if errors else 0
