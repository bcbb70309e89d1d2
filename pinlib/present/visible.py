"""Text written to a terminal shows the characters of the user's files; none acts on it.

A design's title, a part's title, a note or a value comes from a file that anyone may
have written, and some characters act on a terminal instead of showing: an escape
sequence clears the screen, moves the cursor, retitles the window or hides text; a
carriage return overwrites the line; a right-to-left override reverses what follows
(a FAIL may read LIAF, or a number its digits backwards).  The command line writes its
standard output and standard error through :class:`VisibleStream`, which shows each
such character as its escape (``\\x1b``, ``\\x0d``, ``\\u202e``) and lets through only the
line breaks and tabs, and the colour codes pinlib itself writes around a status word
(:data:`STATUS_SGR`).  Standard error also keeps carriage returns: a progress bar
redraws its line with them.  What pinlib stores is untouched: a title is written back to
its file as it was read.
"""

from __future__ import annotations

import re

__all__ = ["STATUS_SGR", "RESET", "visible", "VisibleStream"]

#: The SGR colour codes of the status words: green, yellow, bold red.
STATUS_SGR = {"pass": "32", "warn": "33", "fail": "1;31"}
#: The code that ends a coloured word.
RESET = "0"

_OWN = "|".join(re.escape(f"\x1b[{code}m") for code in (*STATUS_SGR.values(), RESET))
# C0 controls but tab and line feed (and carriage return where kept), DEL, the C1
# controls, and the bidirectional embeddings, overrides and isolates
_BIDI = "\u202a-\u202e\u2066-\u2069"
_PATTERNS = {
    False: re.compile(f"({_OWN})|[\x00-\x08\x0b-\x1f\x7f-\x9f{_BIDI}]"),
    True: re.compile(f"({_OWN})|[\x00-\x08\x0b\x0c\x0e-\x1f\x7f-\x9f{_BIDI}]"),
}


def _shown(match: re.Match) -> str:
    if match.group(1):
        return match.group(1)  # pinlib's own colour code
    ch = match.group(0)
    return f"\\x{ord(ch):02x}" if ord(ch) < 0x100 else f"\\u{ord(ch):04x}"


def visible(text: str, *, keep_cr: bool = False) -> str:
    """``text`` with every character that would act on a terminal shown as its escape
    (see the module notes); line breaks, tabs and pinlib's own status colours kept, and
    carriage returns where ``keep_cr``."""
    return _PATTERNS[keep_cr].sub(_shown, text)


class VisibleStream:
    """A text stream that writes :func:`visible` text to ``stream``; everything else
    (``isatty``, ``fileno``, ``flush``, ``encoding``...) is the stream's own."""

    def __init__(self, stream, *, keep_cr: bool = False):
        self._stream = stream
        self._keep_cr = keep_cr

    def write(self, text: str) -> int:
        self._stream.write(visible(text, keep_cr=self._keep_cr))
        return len(text)

    def writelines(self, lines) -> None:
        for line in lines:
            self.write(line)

    def __getattr__(self, name):
        return getattr(self._stream, name)
