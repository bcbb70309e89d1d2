"""The bounded walk of a library folder: which ``*.toml`` files a library reads.

A library folder is a folder of part files, not a disk: the walk refuses a system
folder, stops past stated bounds of depth, entries and part files, reads every real
file once, and does not follow a link out of the folder unless asked.
"""

from __future__ import annotations

import os
from pathlib import Path

from pinlib.core import messages as M
from pinlib.core.errors import LibraryError

__all__ = ["MAX_FOLDER_DEPTH", "MAX_FOLDER_ENTRIES", "MAX_PART_FILES", "part_paths"]

#: Bounds of the walk (each refusal names the limit).
MAX_FOLDER_DEPTH = 16
MAX_FOLDER_ENTRIES = 50_000
MAX_PART_FILES = 10_000
#: Folders a library may not be (nor lie in, for the first group: kernel and device
#: file systems); a file system root and the home folder itself are refused as well.
_PSEUDO_FOLDERS = ("/proc", "/sys", "/dev")
_SYSTEM_FOLDERS = ("/usr", "/etc", "/bin", "/sbin", "/lib", "/lib64", "/boot", "/var",
                   "/run", "/home", "/Users", "/root")


def _system_folder(real: Path) -> bool:
    """Whether a resolved folder is one a library may not be (see _SYSTEM_FOLDERS)."""
    if real.parent == real:  # a file system root: /, C:\\
        return True
    text = real.as_posix()
    if any(text == f or text.startswith(f + "/") for f in _PSEUDO_FOLDERS):
        return True
    try:
        home = Path.home().resolve()
    except (RuntimeError, OSError):  # no home folder known
        home = None
    return text in _SYSTEM_FOLDERS or real == home


def part_paths(folder: Path, *, follow_links: bool = False,
               notes: list | None = None) -> tuple[list[Path], list]:
    """The ``*.toml`` files of a library folder and its subfolders, and the problems met.

    A folder that resolves to a system folder, that nests deeper than
    :data:`MAX_FOLDER_DEPTH`, or that holds more than :data:`MAX_FOLDER_ENTRIES` entries or
    :data:`MAX_PART_FILES` part files is refused (a LibraryError, field ``library``).
    A link that leads out of the folder is not followed unless ``follow_links`` (a
    problem each); every real folder and file is read once however many links lead to it.
    ``notes``, when given, receives a note (a LibraryError) for each name that looks
    like a part file and is not read as one: ``UPPER.TOML`` (the walk reads names ending
    in ``.toml``, in lower case), a folder named ``*.toml`` (walked as a subfolder).
    """
    root = folder.resolve()
    if _system_folder(root):
        raise LibraryError(M.LIBRARY_IS_SYSTEM_FOLDER.format(real=root), file=str(folder),
                           field="library")
    found: dict[Path, Path] = {}  # real file -> the path it was found by
    problems: list[LibraryError] = []
    seen = {root}
    # each folder with its real path: an entry that is not a link lies at the real path
    # of its folder (no path resolved component by component for every file)
    stack = [(folder, root, 0)]
    entries = 0
    while stack:
        here, real_here, depth = stack.pop()
        try:
            listing = list(os.scandir(here))
        except OSError as exc:
            problems.append(LibraryError(M.CANNOT_READ.format(reason=exc.strerror),
                                         file=str(here)))
            continue
        entries += len(listing)
        if entries > MAX_FOLDER_ENTRIES:
            raise LibraryError(M.LIBRARY_TOO_BIG.format(limit=MAX_FOLDER_ENTRIES),
                               file=str(folder), field="library")
        for entry in listing:
            path = Path(entry.path)
            try:
                is_dir = entry.is_dir()  # through a link
                real = path.resolve() if entry.is_symlink() else None
            except OSError:
                continue
            if real is not None and not follow_links and not real.is_relative_to(root):
                if is_dir or entry.name.endswith(".toml"):
                    problems.append(LibraryError(M.LINK_OUT_OF_LIBRARY, file=str(path),
                                                 hint=f"it leads to {real}"))
                continue
            real = real or real_here / entry.name
            if notes is not None and entry.name.lower().endswith(".toml"):
                if is_dir:
                    notes.append(LibraryError(M.TOML_NAMED_FOLDER, file=str(path)))
                elif not entry.name.endswith(".toml"):
                    notes.append(LibraryError(M.TOML_NAME_NOT_LOWER, file=str(path)))
            if is_dir:
                if real in seen:
                    continue
                if depth >= MAX_FOLDER_DEPTH or _system_folder(real):
                    raise LibraryError(M.LIBRARY_TOO_DEEP.format(limit=MAX_FOLDER_DEPTH)
                                       if depth >= MAX_FOLDER_DEPTH else
                                       M.LIBRARY_IS_SYSTEM_FOLDER.format(real=real),
                                       file=str(path), field="library")
                seen.add(real)
                stack.append((path, real, depth + 1))
            elif entry.name.endswith(".toml") and real not in found:
                found[real] = path
                if len(found) > MAX_PART_FILES:
                    raise LibraryError(M.LIBRARY_TOO_MANY_FILES.format(limit=MAX_PART_FILES),
                                       file=str(folder), field="library")
    return sorted(found.values()), problems
