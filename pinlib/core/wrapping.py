"""One logical line of text fitted to a width, a number never parted from its unit.

The one wrapping rule of every text pinlib prints (the checks, the candidates, the bench
comparison, the tables' notes): :func:`textwrap.wrap` on words, where the space between a
number and its unit ("4.7 kΩ"), a relation and its number ("≥ 0 V") and a word and the
number it names ("Rp 4.7 kΩ") is held as one word.
"""

from __future__ import annotations

import re
import textwrap

__all__ = ["wrap", "glue", "NBSP"]

#: A number stays on one line with its unit, its relation (≤, ≥, <, >) and the word
#: before it ("tr 242 ns", "margin < -999 %").
_GLUE = re.compile(r"(?<=\d) (?=[^\W\d_]|%|Ω|µ|°)|(?<=[≤≥<>]) (?=[+−-]?\d)"
                   r"|(?<=[−+]) (?=\d)|(?<=[^\W\d_]) (?=[+−-]?\d|[≤≥<>] [+−-]?\d)")
#: The no-break space that holds two words together while wrapping (a space again after).
NBSP = "\u00a0"


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
    glued = glue(text)
    width = max(10, cols)
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
