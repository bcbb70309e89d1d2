"""The design files a command names (files or glob patterns), without the many-designs code.

``pinlib check`` expands its arguments on every run; this small module lets a check of
one design do so without importing :mod:`pinlib.studies.many` (its workers and
summaries), which it imports only for several designs.
"""

from __future__ import annotations

import os
from pathlib import Path

from pinlib.core import messages as M
from pinlib.core.errors import InputError

__all__ = ["expand_designs"]

#: The characters that make an item a glob pattern (``glob.has_magic``).
_MAGIC = "*?["


def expand_designs(items) -> list[Path]:
    """The design files named: each item a file, or a glob pattern (``*``, ``?``, ``[``;
    ``**`` reaches into sub-folders), its matches sorted; each file once, in order.
    :mod:`glob` is imported only for a pattern (an item with ``*``, ``?`` or ``[``,
    what ``glob.has_magic`` looks for)."""
    out: dict[Path, None] = {}
    for item in items:
        if any(c in item for c in _MAGIC):
            import glob

            found = sorted(glob.glob(item, recursive=True))
            found = [f for f in found if os.path.isfile(f)]
            if not found:
                raise InputError(M.NO_DESIGN_MATCHES, field="DESIGN", value=item)
            out.update((Path(f), None) for f in found)
        else:
            out[Path(item)] = None
    return list(out)
