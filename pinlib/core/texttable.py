"""Plain-text tables that fit a width (the command line's tables).

:func:`fit_table` lays out a header and rows in columns two spaces apart.  When the
table is wider than the width, it drops trailing columns (never the first ``keep``),
then wraps the text of the last remaining column inside its cell (and, if that is not
enough, of the widest); the caller is told
which columns were dropped, to say so (the JSON output always holds them all).
"""

from __future__ import annotations

import textwrap

__all__ = ["fit_table"]

_GAP = "  "
_NARROWEST = 8  # a wrapped column keeps at least this many characters


def fit_table(header: list[str], rows: list[list[str]], width: int | None = None, *,
              keep: int = 1, rule: bool = False) -> tuple[list[str], list[str]]:
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
    """
    cols = list(range(len(header)))
    cells = [list(map(str, header))] + [list(map(str, r)) for r in rows]
    natural = [max(len(c[i]) for c in cells) for i in cols]

    def total(which, widths):
        return sum(widths[i] for i in which) + len(_GAP) * (len(which) - 1)

    dropped = []
    if width is not None:
        while len(cols) > max(keep, 1) and total(cols, natural) > width:
            dropped.append(header[cols.pop()])
    widths = list(natural)
    if width is not None:
        # the last column (most often free text) gives way first, then the widest
        last = cols[-1]
        while total(cols, widths) > width and widths[last] > max(_NARROWEST, 24):
            widths[last] -= 1
        while total(cols, widths) > width:
            # the first column (the name a row is found by) gives way last
            rest = cols[1:] if any(widths[i] > _NARROWEST for i in cols[1:]) else cols
            widest = max(rest, key=lambda i: widths[i])
            if widths[widest] <= _NARROWEST:
                break
            widths[widest] -= 1
    out = []
    for k, row in enumerate(cells):
        wrapped = [textwrap.wrap(row[i], widths[i], break_long_words=True,
                                 break_on_hyphens=False) or [""] for i in cols]
        for j in range(max(len(w) for w in wrapped)):
            out.append(_GAP.join((w[j] if j < len(w) else "").ljust(widths[i])
                                 for w, i in zip(wrapped, cols, strict=True)).rstrip())
        if k == 0 and rule:
            out.append(_GAP.join("-" * widths[i] for i in cols))
    return out, dropped[::-1]
