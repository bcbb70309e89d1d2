"""One logical line of text fitted to a width, a number never parted from its unit.

The one wrapping rule of every text pinlib prints (the checks, the candidates, the bench
comparison, the tables' notes): :func:`textwrap.wrap` on words, where the space between a
number and its unit ("4.7 kΩ"), a relation and its number ("≥ 0 V") and a word and the
number it names ("Rp 4.7 kΩ") is held as one word.
"""

from __future__ import annotations

import re
import textwrap
import unicodedata

from pinlib.core.controls import show_controls

__all__ = ["wrap", "glue", "NBSP", "columns", "ljust", "has_wide", "wrap_wide"]

#: A number stays on one line with its unit, its relation (≤, ≥, <, >) and the word
#: before it ("tr 242 ns", "margin < -999 %").
_GLUE = re.compile(r"(?<=\d) (?=[^\W\d_]|%|Ω|µ|°)|(?<=[≤≥<>]) (?=[+−-]?\d)"
                   r"|(?<=[−+]) (?=\d)|(?<=[^\W\d_]) (?=[+−-]?\d|[≤≥<>] [+−-]?\d)")
#: The no-break space that holds two words together while wrapping (a space again after).
NBSP = "\u00a0"


def _wide(ch: str) -> bool:
    """Whether a terminal gives ``ch`` two columns (East Asian wide or full-width)."""
    return unicodedata.east_asian_width(ch) in "WF"


def has_wide(text: str) -> bool:
    """Whether ``text`` holds a character a terminal gives two columns."""
    return not text.isascii() and any(_wide(ch) for ch in text)


def columns(text: str) -> int:
    """The columns ``text`` takes on a terminal: two for a wide character (CJK, most
    emoji), none for a combining mark, one for the others.

    Examples
    --------
    >>> columns("EEPROM"), columns("串行EEPROM")
    (6, 10)
    """
    if text.isascii():
        return len(text)
    return sum(0 if unicodedata.combining(ch) else 2 if _wide(ch) else 1 for ch in text)


def ljust(text: str, width: int) -> str:
    """``text`` padded with spaces to ``width`` columns (:func:`columns`)."""
    return text + " " * max(0, width - columns(text))


def wrap_wide(text: str, width: int, first: str = "", rest: str = "") -> list[str]:
    """Text that holds wide characters (:func:`has_wide`) in lines of at most ``width``
    columns, the first begun with ``first`` and the others with ``rest``: broken at a
    space, or between two characters where either is wide (Chinese and Japanese text
    has no spaces); a run of narrow characters longer than a line is cut where the
    line ends.  :mod:`textwrap` counts characters, one column each."""
    pieces = []  # (text, a space before it)
    for word in text.split(" "):
        for k, run in enumerate(_runs(word)):
            pieces.append((run, k == 0))
    lines, line, start = [], first, True
    used = columns(first)
    for piece, spaced in pieces:
        gap = 1 if spaced and not start else 0
        if not start and used + gap + columns(piece) > width:
            lines.append(line.rstrip())
            line, used, start, gap = rest, columns(rest), True, 0
        while start and columns(piece) > width - used > 0 and len(piece) > 1:
            cut = width - used  # a narrow run (one column a character) longer than a line
            lines.append(line + piece[:cut])
            piece, line, used = piece[cut:], rest, columns(rest)
        line += " " * gap + piece
        used += gap + columns(piece)
        start = False
    lines.append(line.rstrip())
    return lines


def _runs(word: str) -> list[str]:
    """A word in the pieces a line may break between: each wide character alone, the
    narrow ones between them together."""
    out: list[str] = []
    for ch in word:
        if _wide(ch) or not out or _wide(out[-1][-1]):
            out.append(ch)
        else:
            out[-1] += ch
    return out


def glue(text: str) -> str:
    """``text`` with the spaces that must not break (a number's before its unit, its
    relation's, its name's) made :data:`NBSP`; a space again after wrapping."""
    return _GLUE.sub(NBSP, text)


def wrap(text: str, cols: int, indent: str = "", subsequent: str = "    ", *,
         break_long: bool = False, whole_long: bool = False) -> list[str]:
    """One logical line wrapped to ``cols`` characters, continuation lines indented by
    ``subsequent`` (after ``indent``).  A word too long for its line (a file's path,
    which a reader copies) goes on a line of its own, whole and unindented where it fits
    the width so, else broken after a ``/`` (:func:`_path_pieces`), never inside a
    name; with ``break_long=True`` it is broken where the width falls instead, and with
    ``whole_long=True`` it is left whole past the width (Markdown, whose viewers join
    the lines of a paragraph with a space: a word cut in two would read as two)."""
    # a character that acts on a terminal (from a file: a title, a value) is measured as
    # the escape it is shown as (pinlib.core.controls), and a carriage return, vertical
    # tab or form feed is that escape, not a space as textwrap would make it
    glued = glue(show_controls(text))
    width = max(10, cols)
    if has_wide(glued):  # by the columns a terminal gives each character
        lines = wrap_wide(glued, width, indent, indent + subsequent)
        return [ln.replace(NBSP, " ") for ln in lines] or [indent.rstrip()]
    lines = textwrap.wrap(glued, width, initial_indent=indent,
                          subsequent_indent=indent + subsequent, break_on_hyphens=False,
                          break_long_words=break_long)
    if not break_long and not whole_long:
        # textwrap puts a word too long for its line alone on one: there, unindented
        lines = [piece for ln in lines
                 for piece in ([ln] if len(ln) <= width else _path_pieces(ln.strip(), width))]
    return [ln.replace(NBSP, " ") for ln in lines] or [indent.rstrip()]


def _path_pieces(word: str, width: int) -> list[str]:
    """``word`` in lines of at most ``width`` characters, each ending after a ``/`` where
    one lies within it (a path's folders stay whole), else cut at the width."""
    out = []
    while len(word) > width:
        cut = word.rfind("/", 0, width) + 1 or width
        out.append(word[:cut])
        word = word[cut:]
    return out + [word] if word else out
