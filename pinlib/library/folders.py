"""Team library folders that do not exist, blamed on what named them.

A folder can come from three places: the ``PINLIB_LIBRARY`` environment variable, a
design's ``library`` line, or the caller (the command line's ``--library``).  The loader
notes a missing folder as a library problem; a command that was told to read a folder
refuses to go on without it, and its error names the setting that asked for it.
"""

from __future__ import annotations

import os
from collections.abc import Iterable
from pathlib import Path

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.core.pathkind import FOLDER, MISSING, UNREADABLE, path_kind
from pinlib.library.loader import library_folders

__all__ = ["ENV", "OPTION", "require_folders", "team_folders_hint"]

ENV = "PINLIB_LIBRARY"
OPTION = "--library"


def require_folders(given: Iterable[str | os.PathLike] = (), *, env: bool = True,
                    option: str = OPTION) -> None:
    """Raise an :class:`InputError` for the first team folder that is not a folder.

    Parameters
    ----------
    given : iterable of paths
        Folders the caller was given (the command line's ``--library``).
    env : bool
        Also check the folders of ``PINLIB_LIBRARY``.
    option : str
        How the caller's folders were given, for the error's field.
    """
    given = list(given)
    for p in given:
        if not os.fspath(p).strip():  # Path("") is "."": the current folder read as parts
            raise InputError(M.EMPTY_FOLDER_NAME, field=option, value=os.fspath(p),
                             expected="a team library folder, e.g. ./parts")
    sources = [(p, ENV) for p in (library_folders(env=True) if env else [])]
    sources += [(Path(p), option) for p in given]
    for path, source in sources:
        kind, reason = path_kind(path)
        if kind == UNREADABLE:
            raise InputError(M.CANNOT_READ_FOLDER.format(reason=reason), field=source,
                             value=str(path), hint=M.FOLDER_NAMED_BY.format(source=source))
        if kind not in (FOLDER, MISSING):
            raise InputError(M.LIBRARY_IS_A_FILE, field=source, value=str(path),
                             hint=M.LIBRARY_FILE_HINT.format(folder=path.parent))
        if kind != FOLDER:
            raise InputError(M.LIBRARY_FOLDER_NOT_FOUND, field=source, value=str(path),
                             hint=M.FOLDER_NAMED_BY.format(source=source))


def team_folders_hint(given: Iterable[str | os.PathLike] = (), *,
                      designs: int | None = None) -> str:
    """Where team parts were looked for, for a part id that is not found: the folders of
    ``PINLIB_LIBRARY`` and of ``--library`` (``given``), and either the library lines of
    the ``designs`` searched or, when no design was read, that a design's library line
    counts only where the design is read."""
    env = ", ".join(str(p) for p in library_folders(env=True)) or "not set"
    named = ", ".join(str(p) for p in given) or "none given"
    text = M.TEAM_FOLDERS_READ.format(env=env, given=named)
    if designs is None:
        return f"{text}; {M.DESIGN_LIBRARY_NOT_READ}"
    return f"{text}, {M.DESIGN_LIBRARIES_READ.format(n=designs)}"


def not_a_library_yet_note(folder: str, shown: str | None = None) -> str:
    """The note of a command that wrote a part into ``folder`` (as the user named it;
    ``shown``: as the note names it, default the same), which no library folder given
    holds: how the next commands read it (``--library``, ``PINLIB_LIBRARY``) and how a
    design finds it (its ``library`` line, the only way)."""
    import json

    line = json.dumps(str(folder).replace(os.sep, "/"), ensure_ascii=False)
    return (f"note: {shown or folder} is not a library folder yet: pass --library {folder} "
            "or add it to PINLIB_LIBRARY, and write it in the library line of each design "
            f"that places the part: library = [{line}] (relative to the design file)")
