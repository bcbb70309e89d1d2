"""What a path a user gave stands for: a folder, a file, nothing, or a name the system
will not look up.

``Path.exists()`` and ``Path.is_dir()`` raise for some names (a name longer than the file
system allows, a loop of links, a folder that may not be entered) where they answer
False for a missing one: a command that asks them of a name the user typed let that
OSError out as a traceback.  :func:`path_kind` asks once and answers every case, the
reason with it where the name cannot be looked up.
"""

from __future__ import annotations

import os
import stat

__all__ = ["FILE", "FOLDER", "MISSING", "OTHER", "UNREADABLE", "path_kind"]

FOLDER, FILE, OTHER, MISSING, UNREADABLE = "folder", "file", "other", "missing", "unreadable"


def path_kind(path) -> tuple[str, str | None]:
    """``(kind, reason)``: the kind of what ``path`` names (through links) and, for
    :data:`UNREADABLE`, why the system would not look it up ("File name too long")."""
    try:
        st = os.stat(path)
    except (FileNotFoundError, NotADirectoryError):
        return MISSING, None
    except OSError as exc:
        return UNREADABLE, exc.strerror or str(exc)
    except ValueError:  # a NUL character in the name
        return UNREADABLE, "a NUL character in the name"
    if stat.S_ISDIR(st.st_mode):
        return FOLDER, None
    return (FILE if stat.S_ISREG(st.st_mode) else OTHER), None
