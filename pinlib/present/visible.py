"""Text written to a terminal shows the characters of the user's files; none acts on it.

A design's title, a part's title, a note, a value or a command's argument comes from
someone else, and some characters act on a terminal instead of showing: an escape
sequence clears the screen, moves the cursor, retitles the window, colours or hides text;
a carriage return overwrites the line; a right-to-left override reverses what follows (a
FAIL may read LIAF, or a number its digits backwards).  The command line writes its
standard output and standard error through :class:`VisibleStream`, which shows each such
character as its escape (``\\x1b``, ``\\x0d``, ``\\u202e``) and lets through only the line
breaks and tabs (standard error also keeps carriage returns: a progress bar redraws its
line with them).  An escape code is shown whatever it is, one that looks like pinlib's
own colours included.

pinlib's own colours (:data:`STATUS_SGR`, the status words on a terminal) are added to
text that went through :func:`visible` first (:func:`pinlib.present.report.paint`), and
that text is written with :func:`write_coloured`: past the stream's filter, which would
show the colour codes too, with :func:`coloured_visible` in its place (the status codes
kept, anything else shown).  What pinlib stores is untouched: a title is written back to
its file as it was read.
"""

from __future__ import annotations

import re

from pinlib.core.controls import BIDI, show_controls, shown

__all__ = ["STATUS_SGR", "RESET", "visible", "coloured_visible", "write_coloured",
           "VisibleStream"]

#: The SGR colour codes of the status words: green, yellow, bold red.
STATUS_SGR = {"pass": "32", "warn": "33", "fail": "1;31"}
#: The code that ends a coloured word.
RESET = "0"

_OWN = "|".join(re.escape(f"\x1b[{code}m") for code in (*STATUS_SGR.values(), RESET))
# the controls of pinlib.core.controls, or pinlib's own status codes (kept)
_COLOURED = re.compile(f"({_OWN})|[\x00-\x08\x0b-\x1f\x7f-\x9f{BIDI}]")


def _own_or_shown(match: re.Match) -> str:
    return match.group(1) or shown(match)


def visible(text: str, *, keep_cr: bool = False) -> str:
    """``text`` with every character that would act on a terminal shown as its escape
    (see the module notes); line breaks and tabs kept, and carriage returns where
    ``keep_cr``.  Shown text holds no such character: showing it again changes nothing."""
    return show_controls(text, keep_cr=keep_cr)


def coloured_visible(text: str) -> str:
    """``text`` as :func:`visible` shows it, but for pinlib's status colour codes, kept.
    Only for text whose every character from a file or an argument went through
    :func:`visible` before pinlib added those codes (:func:`pinlib.present.report.paint`):
    applied to anything else, a file's code that looks like pinlib's would act."""
    return _COLOURED.sub(_own_or_shown, text)


def write_coloured(stream, text: str) -> None:
    """Write ``text`` that :func:`pinlib.present.report.paint` coloured (or that went
    through :func:`visible` line by line) to ``stream``: the status colours act on a
    terminal, nothing else does (:func:`coloured_visible`)."""
    if isinstance(stream, VisibleStream):
        stream.write_coloured(text)
    else:
        stream.write(coloured_visible(text))


class VisibleStream:
    """A text stream that writes :func:`visible` text to ``stream``; everything else
    (``isatty``, ``fileno``, ``flush``, ``encoding``...) is the stream's own."""

    def __init__(self, stream, *, keep_cr: bool = False):
        self._stream = stream
        self._keep_cr = keep_cr

    def write(self, text: str) -> int:
        self._stream.write(visible(text, keep_cr=self._keep_cr))
        return len(text)

    def write_coloured(self, text: str) -> int:
        """Write text with pinlib's status colours (see :func:`write_coloured`)."""
        self._stream.write(coloured_visible(text))
        return len(text)

    def writelines(self, lines) -> None:
        for line in lines:
            self.write(line)

    def __getattr__(self, name):
        return getattr(self._stream, name)
