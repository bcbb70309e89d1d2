"""Plain-text tables that fit a width (the command line's tables).

:func:`fit_table` lays out a header and rows in columns two spaces apart.  When the
table is wider than the width, it drops trailing columns (never the first ``keep``),
then wraps the text of the last remaining column inside its cell (and, if that is not
enough, of the widest); the caller is told
which columns were dropped, to say so (the JSON output always holds them all).

One column holds the names a row is found by (a part id), which a reader copies: its
cells are never broken.  When the table does not fit and its longest name takes more
than half the width, the column is as wide as the longest name within half the width,
and a longer name is written whole on a line of its own, the rest of its row on the
lines under it::

    id             category   supply
    -------------  ---------  ---------
    adc-i2c        converter  2-5.5 V
    a-part-whose-id-is-longer-than-half-the-width
                   memory     1.7-5.5 V
"""

from __future__ import annotations

import re
import textwrap

from pinlib.core.wrapping import NBSP, columns, glue, has_wide, ljust, wrap_wide

__all__ = ["fit_table"]

_GAP = "  "
_NARROWEST = 8  # a wrapped column keeps at least this many characters
_SPACES = re.compile(r"[^\S\u00a0]+")  # the spaces a cell may break at (not NBSP)


def fit_table(header: list[str], rows: list[list[str]], width: int | None = None, *,
              keep: int = 1, rule: bool = False,
              names: int | None = 0, least: dict[int, int] | None = None,
              drop: list[int] | None = None) -> tuple[list[str], list[str]]:
    """The table's lines, and the names of the columns left out to fit ``width``.

    Parameters
    ----------
    header : list of str
        Column titles. [1]
    rows : list of list of str
        Cells, one list per row, as long as ``header``. [1]
    width : int or None, optional
        Characters per line; None: no limit. [1]
    keep : int, optional
        The first columns that are never dropped. [1]
    rule : bool, optional
        A line of dashes under the header. [1]
    names : int or None, optional
        The column of the names a row is found by, never broken (one of the first
        ``keep``). [1]
    least : dict of int to int, optional
        Columns of text that wraps, and the width each may wrap down to before a column
        is left out.  The room left over makes whole the columns a fair share of it
        would, then widens the others, the one most cut short first (listed first among
        equals).  Without it a column is dropped when the table at
        its natural widths does not fit. [1]
    drop : list of int, optional
        The columns that may be left out, in the order they go (default: from the
        last, down to the first ``keep``). [1]
    """
    cols = list(range(len(header)))
    cells = [list(map(str, header))] + [list(map(str, r)) for r in rows]
    natural = [max(columns(c[i]) for c in cells) for i in cols]

    def total(which, widths):
        return sum(widths[i] for i in which) + len(_GAP) * (len(which) - 1)

    if names not in cols:
        names = None  # no such column: every column wraps
    if (names is not None and width is not None and total(cols, natural) > width
            and natural[names] > width // 2):
        # a name longer than half the width goes on a line of its own
        natural[names] = max([columns(c[names]) for c in cells
                              if columns(c[names]) <= width // 2] or [1])
    dropped = []
    least = least or {}
    # the widths columns are dropped by: text that wraps counted as narrow as it may go
    floor = [min(natural[i], least.get(i, natural[i])) for i in cols]
    order = list(drop) if drop is not None else cols[max(keep, 1):][::-1]
    if width is not None:
        while order and total(cols, floor) > width:
            gone = order.pop(0)
            if gone in cols:
                cols.remove(gone)
                dropped.append(gone)
    widths = list(natural)
    if width is not None and least and total(cols, floor) <= width:
        widths = list(floor)
        spare = width - total(cols, widths)
        wrapping = [i for i in least if i in cols]
        while True:  # first the columns the room makes whole at a fair share each
            short = [i for i in wrapping if widths[i] < natural[i]]
            whole = [i for i in short if natural[i] - widths[i] <= spare / len(short)]
            if not whole:
                break
            for i in whole:
                spare -= natural[i] - widths[i]
                widths[i] = natural[i]
        while spare > 0:
            short = [i for i in wrapping if widths[i] < natural[i]]
            if not short:
                break
            most = max(short, key=lambda i: natural[i] - widths[i])
            widths[most] += 1
            spare -= 1
    if width is not None and total(cols, widths) > width:
        # the last column (most often free text) gives way first, then the widest
        last = cols[-1]
        while total(cols, widths) > width and widths[last] > max(_NARROWEST, 24):
            widths[last] -= 1
        while total(cols, widths) > width:
            # the first column and the names give way last; the names by more of them
            # on lines of their own, never broken
            rest = [i for i in cols if i not in (0, names) and widths[i] > _NARROWEST]
            if rest:
                widest = max(rest, key=lambda i: widths[i])
                widths[widest] -= 1
            elif names in cols and widths[names] > len(header[names]):
                widths[names] -= 1
            elif widths[0] > _NARROWEST and (names != 0 or names not in cols):
                widths[0] -= 1
            else:
                break
    out = []
    for k, row in enumerate(cells):
        wrapped = [[row[i]] if i == names else _wrap_cell(row[i], widths[i]) for i in cols]
        if names in cols and columns(row[names]) > widths[names]:
            at = cols.index(names)
            # the name whole after the first line of the cells before it; the rest of
            # the row under it
            out.append(_GAP.join([ljust(w[0], widths[i]) for w, i in
                                  zip(wrapped[:at], cols[:at], strict=True)] + [row[names]]))
            wrapped = [w[1:] for w in wrapped[:at]] + [[""]] + wrapped[at + 1:]
            if not any(any(w) for w in wrapped):
                wrapped = [[] for _ in cols]  # nothing under it: no blank line
        for j in range(max(len(w) for w in wrapped)):
            out.append(_GAP.join(ljust(w[j] if j < len(w) else "", widths[i])
                                 for w, i in zip(wrapped, cols, strict=True)).rstrip())
        if k == 0 and rule:
            out.append(_GAP.join("-" * widths[i] for i in cols))
    return out, [header[i] for i in sorted(dropped)]


def _wrap_cell(text: str, width: int) -> list[str]:
    """A cell's lines: broken between words, never at the hyphen of a word that fits (an
    id, 'i2c-sda'); a word longer than the cell is broken after its hyphens first
    ("general-" / "purpose", where it read "gen" / "eral-purpose"), then where the width
    falls.  A number stays on the line of its unit where the two fit the cell
    (:func:`pinlib.core.wrapping.glue`).  Text with wide characters is measured in the
    columns a terminal gives it (:func:`pinlib.core.wrapping.wrap_wide`)."""
    if has_wide(text):
        return [ln.replace(NBSP, " ") for ln in wrap_wide(glue(text.strip()), width)] or [""]
    words = [w if len(w) <= width else w.replace(NBSP, " ")
             for w in _SPACES.split(glue(text.strip())) if w]
    text = " ".join(words)
    words = _SPACES.split(text)
    if all(len(w) <= width for w in words):
        return [ln.replace(NBSP, " ") for ln in textwrap.wrap(
            text, width, break_long_words=True, break_on_hyphens=False)] or [""]
    chunks: list[tuple[str, bool]] = []  # (text, a space before it)
    for word in words:
        if len(word) <= width:
            chunks.append((word, True))
            continue
        pieces = [p for p in re.split(r"(?<=-)", word) if p]
        for k, piece in enumerate(pieces):
            for j in range(0, len(piece), width):
                chunks.append((piece[j:j + width], k == 0 and j == 0))
    lines: list[str] = []
    line = ""
    for chunk, spaced in chunks:
        joined = line + (" " if spaced and line else "") + chunk
        if len(joined) <= width:
            line = joined
        else:
            lines.append(line)
            line = chunk
    return [ln.replace(NBSP, " ") for ln in lines if ln] + [line.replace(NBSP, " ")]
