"""The characters that act on a terminal instead of showing, and how pinlib shows them.

A C0 control but tab and line feed (and carriage return where kept), DEL, a C1 control,
or a bidirectional embedding, override or isolate is written as its escape (``\\x1b``,
``\\x0d``, ``\\u202e``).  :mod:`pinlib.present.visible` filters every stream pinlib
writes with it; :func:`pinlib.core.wrapping.wrap` shows them before it measures a line,
so a line holds the columns it will take once shown.
"""

from __future__ import annotations

import re

__all__ = ["BIDI", "show_controls", "shown"]

#: The bidirectional embeddings, overrides and isolates (a character class's inside).
BIDI = "\u202a-\u202e\u2066-\u2069"
_PATTERNS = {
    False: re.compile(f"[\x00-\x08\x0b-\x1f\x7f-\x9f{BIDI}]"),
    True: re.compile(f"[\x00-\x08\x0b\x0c\x0e-\x1f\x7f-\x9f{BIDI}]"),
}


def shown(match: re.Match) -> str:
    """The escape a matched character is shown as: ``\\xNN`` below U+0100, else
    ``\\uNNNN``."""
    ch = match.group(0)
    return f"\\x{ord(ch):02x}" if ord(ch) < 0x100 else f"\\u{ord(ch):04x}"


def show_controls(text: str, *, keep_cr: bool = False) -> str:
    """``text`` with every character that would act on a terminal shown as its escape;
    line breaks and tabs kept, and carriage returns where ``keep_cr``.  Shown text holds
    no such character: showing it again changes nothing."""
    return _PATTERNS[keep_cr].sub(shown, text)
