"""`pinlib check --detail`: every figure and check of a design, fitted to a width.

Per bus: a table of figures per segment or line (readable labels with units; a quantity
that repeats another — ``pullup`` and ``pullup_resistor``, a line's copy of the bus
figure — shown once, :func:`pinlib.core.labels.shown_figures`), a table of checks
(status, check, subject, value, limit, margin and the number of its source), each
problem's message spelt out, then the bus's sources and notes, each printed once
however many lines share it.
"""

from __future__ import annotations

import textwrap

from pinlib.core import messages as M
from pinlib.core.labels import check_label, humanize, note_label
from pinlib.core.quantity import format_si
from pinlib.core.wrapping import NBSP, columns, glue, has_wide, ljust, wrap_wide
from pinlib.model.result import CAUTION, BusResult, Group, margin_text
from pinlib.present.terminal import status_word, wrap
from pinlib.present.values import (
    FLIGHT_HEAD,
    check_cells,
    counts,
    figure_cells,
    flight_rows,
    soft_words,
    with_fix,
)

__all__ = ["detail_lines", "table"]

#: The narrowest a wrapped column gets before the table gives up fitting.
_MIN_FLEX = 12


def table(rows: list[list[str]], indent: str, cols: int, flex: int,
          heads: dict[int, str] | None = None) -> list[str]:
    """Rows as aligned columns; column ``flex`` wraps so the table fits ``cols``.
    ``heads``: a line to print, as it is, before row ``i`` (a place's name), the columns
    aligned over every row."""
    n = len(rows[0])
    widths = [max(columns(r[i]) for r in rows) for i in range(n)]
    others = sum(w for i, w in enumerate(widths) if i != flex) + 2 * (n - 1) + len(indent)
    widths[flex] = max(_MIN_FLEX, min(widths[flex], cols - others))
    out = []
    for i, r in enumerate(rows):
        if heads and i in heads:
            out.append(heads[i])
        # a number stays on the line of its unit, as in every text pinlib wraps
        text = glue(r[flex])
        pieces = [p.replace(NBSP, " ") for p in (
            wrap_wide(text, widths[flex]) if has_wide(text)
            else textwrap.wrap(text, widths[flex], break_on_hyphens=False))] or [""]
        for k, piece in enumerate(pieces):
            cells = [(piece if i == flex else (r[i] if k == 0 else ""))
                     for i in range(n)]
            out.append((indent + "  ".join(ljust(c, w) for c, w in
                                           zip(cells, widths, strict=True))).rstrip())
    return out


def _figures(g: Group, indent: str, cols: int) -> list[str]:
    """A group's figures under their labels: the value column wraps (a reason in words,
    "no section with a delay (...)") and the labels keep their width, unless the width
    leaves the values too little room; then the labels wrap."""
    rows = [list(cells) for cells in figure_cells(g.figures, g.checks)]
    if not rows:
        return []
    room = cols - len(indent) - 2 - max(len(r[0]) for r in rows)
    return table(rows, indent, cols, flex=1 if room >= 2 * _MIN_FLEX else 0)


def _checks(g: Group, indent: str, cols: int, sources: dict[str, int]) -> list[str]:
    if not g.checks:
        return []
    rows = [["status", "check", "subject", "value", "limit", "margin", "src"]]
    for c in g.checks:
        value, limit = check_cells(c)
        ref = sources.setdefault(c.source, len(sources) + 1)
        rows.append([status_word(c.status), check_label(c.id), c.subject or "", value, limit,
                     margin_text(c), f"[{ref}]"])
    out = table(rows, indent, cols, flex=1)
    for c in g.checks:
        if c.status == "pass":
            continue
        about = f" ({c.subject})" if c.subject else ""
        text = f"{status_word(c.status)} {check_label(c.id)}{about}: {c.message}"
        if c.reason and c.reason not in c.message:
            text += f" ({c.reason})"
        out += wrap(with_fix(text, c), cols, indent)
    return out


def _flights(b: BusResult, cols: int) -> list[str]:
    rows = flight_rows(b)
    if not rows:
        return []
    out = wrap(M.FLIGHTS_HEAD, cols, "  ", "    ")
    return out + table([[h.lower() for h in FLIGHT_HEAD], *rows], "    ", cols, flex=1)


def _group(g: Group, head: str, indent: str, cols: int, sources: dict) -> list[str]:
    out = [f"{indent[:-2]}{head}"] if head else []
    out += _figures(g, indent, cols)
    out += _checks(g, indent, cols, sources)
    return out


def _notes(bus: BusResult) -> list[str]:
    """The bus's notes, each once: a note that only some of its segments or lines give
    names them."""
    places: dict[str, list[str]] = {}
    groups = [("", bus)] + [(s.id, s) for s in bus.segments] + \
             [(ln.signal, ln) for ln in bus.lines]
    for name, g in groups:
        for n in map(note_label, g.notes):  # a figure's id at its start: its label
            places.setdefault(n, [])
            if name and name not in places[n]:
                places[n].append(name)
    subs = len(bus.segments) + len(bus.lines)
    out = []
    for note, where in places.items():
        if not where or len(where) == subs and subs > 1:
            out.append(note)
        else:
            out.append(f"{', '.join(where)}: {note}")
    return out


def _bus(b: BusResult, cols: int) -> list[str]:
    if b.protocol == "coupling":
        head = f"coupling {b.victim} beside {b.aggressor}: {status_word(b.status)}"
    else:
        head = f"bus {b.id} ({humanize(b.protocol)}): {status_word(b.status)}"
    out = [head]
    sources: dict[str, int] = {}
    out += _group(b, "", "  ", cols, sources)
    out += _flights(b, cols)
    for s in b.segments:
        out += _group(s, f"segment {s.id}: {status_word(s.status)}", "    ", cols, sources)
    for ln in b.lines:
        out += _group(ln, f"line {ln.signal}: {status_word(ln.status)}", "    ", cols, sources)
    if sources:
        out.append("  sources")
        for text, k in sources.items():
            out += wrap(f"[{k}] {text}", cols, "    ", "    ")
    notes = _notes(b)
    if notes:
        out.append("  notes")
        for n in notes:
            out += wrap(f"- {n}", cols, "    ", "  ")
    return out


def detail_lines(result, cols: int) -> list[str]:
    """Every figure and check of ``result`` as lines of at most ``cols`` characters."""
    out = wrap(f"Caution: {CAUTION}", cols, "", "")
    out.append("")
    out += wrap(f"design: {result.design}" + (f" ({result.path})" if result.path else ""),
                cols)
    n = counts(result)
    out += wrap(f"status: {status_word(result.status)} — {n['pass']} pass, {n['warn']} warn"
                f"{soft_words(n)}, {n['fail']} fail (warn below "
                f"{format_si(result.warn_margin, '%')} margin; "
                f"{M.RATING_NO_WARN_BAND})", cols)
    for note in result.notes:
        out += wrap(f"note: {note}", cols)
    for b in result.results():
        out.append("")
        out += _bus(b, cols)
    return out

