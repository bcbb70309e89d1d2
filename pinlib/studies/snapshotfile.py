"""Where a design's result snapshot lives, without the snapshot and change-list code.

``pinlib check`` looks for a snapshot on every run; this small module lets it find
out that there is none without importing :mod:`pinlib.studies.compare` (its models and
dataclasses), which it then imports only to compare or to save.
"""

from __future__ import annotations

from pathlib import Path

from pinlib.core import messages as M
from pinlib.core.errors import InputError

__all__ = ["snapshot_path", "may_have_snapshot", "snapshot_advice"]


def snapshot_path(design_path) -> Path:
    """Where a design's snapshot lives: ``<design>.result.json`` beside it.

    ``boards/demo-board.toml`` -> ``boards/demo-board.result.json``.  A
    :class:`~pinlib.model.design.Design` may be given instead of its path.
    """
    path = getattr(design_path, "path", design_path)
    if path is None:
        raise InputError(M.NO_SNAPSHOT_PLACE,
                         field="design", expected="a design loaded with load_design(path)")
    path = Path(path)
    return path.with_name(path.stem + ".result.json") if path.suffix else \
        path.with_name(path.name + ".result.json")


def may_have_snapshot(design) -> bool:
    """False only when ``design`` has no snapshot for certain: it was not loaded from a
    file, or its snapshot file does not exist.  Any other answer of the file system
    (the file is there, or cannot be looked at) is True, so that reading it in
    :func:`pinlib.studies.compare.load_snapshot` reports the same error as before."""
    if getattr(design, "path", None) is None:
        return False
    try:
        snapshot_path(design).stat()
    except FileNotFoundError:
        return False
    except OSError:
        return True
    return True


def snapshot_advice(snapshot, design=None) -> str:
    """What to do with a snapshot that cannot be used: a folder (or a device, a pipe) in
    its place is moved away first, since ``--save`` never writes over one; a damaged file
    is deleted or saved anew.  ``design``: the design file as the user named it (the
    command to run names it; ``DESIGN`` where it is not known)."""
    from pinlib.core.pathkind import FOLDER, OTHER, path_kind

    name = "DESIGN" if design is None else str(design)
    if path_kind(snapshot)[0] in (FOLDER, OTHER):
        return M.SNAPSHOT_MOVE_AWAY.format(design=name)
    return M.SNAPSHOT_SAVE_ANEW.format(design=name)
