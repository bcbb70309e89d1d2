"""``pinlib parts check``: every problem of the part files (its own module, as ``parts
import``, to keep :mod:`pinlib.cli.commands.parts` small)."""

from __future__ import annotations

import json
from pathlib import Path

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.core.labels import counted, plural_s
from pinlib.core.pathkind import FILE, FOLDER, MISSING, UNREADABLE, path_kind
from pinlib.present.terminal import shown_path as _rel


def _places(path) -> tuple[Path, Path]:
    """Where ``path`` lies (its folder resolved, its own name kept: a link where it is)
    and what it leads to (resolved)."""
    path = Path(path)
    return path.parent.resolve() / path.name, path.resolve()


def _under(path, root: tuple[Path, Path]) -> bool:
    """Whether ``path`` lies in, or leads into, ``root`` (:func:`_places` of the folder or
    file checked, or is that file).  A link in the folder that leads out of it lies in it:
    the walk's problem with it is the folder's."""
    return any(p == r or p.is_relative_to(r) for p in _places(path) for r in root)


def _beyond_first(lib, problems: list, root) -> tuple[list, list]:
    """``problems`` with those the first ones hid (:mod:`pinlib.library.further`) of each
    part that does not load, in ``root`` (None: the whole library); and a note for
    each part some of whose checks could not run."""
    from pinlib.core.errors import LibraryError
    from pinlib.library.further import further_problems

    notes, out = [], list(problems)
    for pid, pf in lib.files.items():
        if pid in lib.parts or (root is not None and not _under(pf.path, root)):
            continue
        found, blocked = further_problems(pid, lib.files)
        out += [p for p in found if root is None or (p.file and _under(p.file, root))]
        if blocked:
            notes.append(LibraryError(M.PART_CHECKS_WAIT, file=str(pf.path)))
    return out, notes


def _through_overrides(lib, root) -> list:
    """The problems of every part (built-in, or of another folder) that does not load
    and extends a class that a team file in ``root`` overrides: the override broke it,
    so they are that folder's problems, each with a hint naming the override."""
    from pinlib.core.errors import LibraryError

    over = {pid for pid in lib.overrides if _under(lib.files[pid].path, root)}
    out = []
    for pid, pf in lib.files.items():
        if not over or pid in lib.parts or _under(pf.path, root):
            continue
        if not any(c in over for c in lib.chain(pid)[1:]):
            continue
        for p in lib.problems_of(pid):
            hint = lib.override_hint(pid, p)
            if hint is not None:
                out.append(LibraryError(p.problem, file=p.file, line=p.line, field=p.field,
                                        value=p.value, expected=p.expected, hint=hint))
    return out


def run_check(args, load) -> int:
    """`pinlib parts check [FOLDER]`: every problem of the part files (``load(args,
    extra)`` gives the library); exit 1 when one is found."""
    from pinlib.core.errors import LibraryError
    from pinlib.library.overrides import override_warnings
    from pinlib.library.pinsets import pin_set_warnings
    from pinlib.library.plausible import part_warnings
    from pinlib.library.sources import unsourced

    one = None  # one part file checked alone
    if args.folder is None:
        lib = load(args)
        lib.resolve_all()
        problems = list(lib.problems)
        for pid in lib.parts:  # implausible values, each listed with the file that set it
            problems += part_warnings(lib.parts[pid], lib, own_only=True)
        warned = [w for pid in lib.parts for w in pin_set_warnings(lib.parts[pid],
                                                                   lib.files[pid])]
        warned += override_warnings(lib)
        for pf in lib.files.values():  # a datasheet, measured or published basis without its source
            problems += unsourced(pf)
        scope = "the library"
        root = None
        n_files = len(lib.files)
    else:
        folder = Path(args.folder)
        kind, reason = path_kind(folder)
        one = folder if kind == FILE else None  # one part file: its folder's library
        if one is not None:
            folder = one.parent
        elif kind == UNREADABLE:
            raise InputError(M.CANNOT_READ_FOLDER.format(reason=reason), file=str(folder),
                             field="FOLDER")
        elif kind == MISSING:
            raise InputError(M.LIBRARY_FOLDER_NOT_FOUND, file=str(folder), field="FOLDER")
        elif kind != FOLDER:
            raise InputError(M.NOT_A_FOLDER, file=str(folder), field="FOLDER")
        lib = load(args, extra=[folder])
        root = _places(one or folder)  # _under(file, file) holds: that file alone
        problems = [p for p in lib.problems if p.file and _under(p.file, root)]
        problems += [w for pid in lib.parts if _under(lib.files[pid].path, root)
                     for w in part_warnings(lib.parts[pid], lib, own_only=True)]
        warned = [w for pid in lib.parts if _under(lib.files[pid].path, root)
                  for w in pin_set_warnings(lib.parts[pid], lib.files[pid])]
        warned += override_warnings(lib, lambda path: _under(path, root))
        # A part of the folder that does not load because of a file it extends.
        for pid, pf in lib.files.items():
            if pid in lib.parts or not _under(pf.path, root):
                continue
            if any(p.file and Path(p.file).resolve() == pf.path.resolve() for p in problems):
                continue
            chain = {str(lib.files[c].path) for c in lib.chain(pid)}
            related = [p for p in lib.problems if p.file in chain and p not in problems]
            problems.append(LibraryError(M.PART_DOES_NOT_LOAD, file=str(pf.path),
                                         field="extends", hint="a problem in a file it extends"))
            problems += related
        problems += [p for pf in lib.files.values() if _under(pf.path, root)
                     for p in unsourced(pf)]
        problems += _through_overrides(lib, root)
        from pinlib.library.walk import part_paths

        skipped: list = []  # names that look like part files and are not read as one
        n_files = 1 if one is not None else len(part_paths(folder, notes=skipped)[0])
        scope = _rel(one or folder)
    problems, notes = _beyond_first(lib, problems, root)
    if args.folder is not None:
        notes += skipped
    # A problem of a class is a problem of every part that extends it, each failing
    # with the same error at the class's line: listed once.
    once: dict = {}
    for p in problems:
        once.setdefault((type(p), p.message), p)
    # by file, then line, then field: a file's problems in the order of its lines (a
    # problem of the whole file, with no line, first; one of no file last)
    problems, warned = (sorted(found, key=lambda p: (
        p.file is None, p.file or "", p.line or 0, p.field or ""))
        for found in (once.values(), warned))
    if args.json:
        print(json.dumps({"checked": scope, "files": n_files,
                          "problems": [p.to_dict() for p in problems],
                          "warnings": [w.to_dict() for w in warned],
                          "notes": [n.to_dict() for n in notes]},
                         indent=2, ensure_ascii=False))
    else:
        from pinlib.present.terminal import fitted

        for p in problems:
            print(fitted(p.message))
        for w in warned:
            print(fitted(f"warning: {w.message}"))
        for note in notes:
            print(fitted(f"note: {note.message}"))
        n = len(problems)
        verdict = "no problems" if not n else f"{n} problem{plural_s(n)}"
        if warned:
            verdict += counted(", {n} warning{s}", len(warned))
        where = f", {scope}" if one is not None else f" in {scope}"
        print(fitted(f"checked {n_files} file{plural_s(n_files)}{where}: {verdict}"))
    return 1 if problems else 0
