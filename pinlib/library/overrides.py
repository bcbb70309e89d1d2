"""Team parts that override a built-in part and likely did not mean to.

A team file whose id is a built-in part's replaces it everywhere (the override a team
makes on purpose: its own figures for a class).  A file copied from another part whose
id was left unchanged, or changed to the wrong one, does the same by accident: a
translator put in the place of the ribbon cable.  :func:`override_warnings` names the
overrides that look like that (another category than the built-in part's, or a file
named otherwise than its id), for ``pinlib parts check``.
"""

from __future__ import annotations

from pinlib.core import messages as M
from pinlib.core.errors import LibraryError
from pinlib.library.loader import read_part_file

__all__ = ["override_warnings"]


def override_warnings(lib, in_scope=lambda path: True) -> list[LibraryError]:
    """A warning for each team part of ``lib`` in scope (``in_scope(path)``) that
    overrides a built-in part of another category, or from a file not named as its id."""
    out = []
    for pid, builtin_path in lib.overrides.items():
        pf = lib.files.get(pid)
        if pf is None or pf.builtin or pf.others or not in_scope(pf.path):
            continue  # a file that does not read is listed as a problem already
        try:
            was = read_part_file(builtin_path, builtin=True).raw.get("category")
        except LibraryError:
            continue
        part = lib.parts.get(pid)
        now = part.category if part is not None else pf.raw.get("category")
        where = {"file": str(pf.path), "line": pf.line(("id",)), "field": "id"}
        if isinstance(was, str) and isinstance(now, str) and was != now:
            out.append(LibraryError(M.OVERRIDE_OTHER_CATEGORY.format(
                part=pid, builtin=builtin_path, was=was, now=now), **where))
        elif pf.path.stem != pid:
            out.append(LibraryError(M.OVERRIDE_OTHER_NAME.format(
                part=pid, builtin=builtin_path, name=pf.path.name), **where))
    return out
