"""The HTML the workbenches show: status badges, notes, errors, tables of figures and checks.

Every table is capped to the width it is given (``max-width:100%``, long words wrap) so
that it never pushes a column of controls sideways, and sets its own line height (a
widget's HTML area otherwise spaces lines by the height of a control).  Figures and
checks are shown by their labels (:mod:`pinlib.core.labels`) with their values and units; the
ids stay in each row's tooltip.
"""

from __future__ import annotations

import html
import re

from pinlib.core import labels
from pinlib.core.errors import PinlibError
from pinlib.model.result import (
    CAUTION,
    BusResult,
    Group,
    figure_text,
    margin_text,
    status_counts,
)
from pinlib.present import charts
from pinlib.present.values import check_cells, limit_side, search_bound_words, soft_words

STATUS_TEXT = {"pass": "PASS", "warn": "WARN", "fail": "FAIL"}
_BORDER = "border:1px solid #c8c8c8;padding:1px 6px;vertical-align:top"
CELL = f"{_BORDER};text-align:left;overflow-wrap:break-word"
NUM = f"{_BORDER};text-align:right;white-space:nowrap"
HEAD = f"{_BORDER};text-align:left;background:#eef0f2"
#: The frame of every table: as wide as its content, never wider than its column.
TABLE = "border-collapse:collapse;font-size:12px;margin:4px 0;max-width:100%;line-height:1.35"
#: A block of text with its own line height, wrapped to its column.
BLOCK = "line-height:1.35;max-width:100%;overflow-wrap:anywhere"


def e(text) -> str:
    """Text escaped for HTML (quotes too)."""
    return html.escape(str(text), quote=True)


def block(body: str, size: int = 12) -> str:
    """HTML in a block of the given font size with its own line height."""
    return f'<div style="{BLOCK};font-size:{size}px">{body}</div>'


def badge(status: str) -> str:
    colour = charts.STATUS_COLOURS.get(status, "#999999")
    return (f'<span style="background:{colour};color:#000;font-weight:700;padding:0 4px;'
            f'border-radius:3px">{STATUS_TEXT.get(status, e(status))}</span>')


def note(text: str) -> str:
    return (f'<div style="{BLOCK};color:#4a4a4a;font-style:italic;padding:4px 0">'
            f"{e(text)}</div>")


def notice(text_html: str) -> str:
    """A note that asks for attention (an input held back, a selection kept): already HTML."""
    return (f'<div style="{BLOCK};font-size:12px;border-left:6px solid {charts.WARN};'
            f'background:#fff7e0;padding:2px 8px;margin:2px 0">{text_html}</div>')


def error_html(err: PinlibError) -> str:
    """An error as a block: where (its file and line, as the command names them), what,
    and what would do."""
    bits = [f"<b>{e(err.problem)}</b>"]
    if err.file:
        place = err.file if err.line is None else f"{err.file}:{err.line}"
        bits[0] = f"<code>{e(place)}</code>: {bits[0]}"
    if err.field:
        bits.append(f"field <code>{e(err.field)}</code>")
    if err.value is not None:
        bits.append(f"got <code>{e(err.value)}</code>")
    if err.expected:
        bits.append(f"expected {e(err.expected)}")
    if err.hint:
        bits.append(e(err.hint))
    return (f'<div style="{BLOCK};border-left:6px solid {charts.FAIL};padding:2px 8px;'
            f'background:#fff4ec">{"; ".join(bits)}</div>')


def inline_error(err: PinlibError | None) -> str:
    """The short form shown beside a field: what is wrong and what would do."""
    if err is None:
        return ""
    text = err.problem
    if err.expected:
        text += f"; expected {err.expected}"
    if err.hint:
        text += f" ({err.hint})"
    return (f'<span style="{BLOCK};display:block;font-size:12px;color:{charts.FAIL};'
            f'font-weight:600">{e(text)}</span>')


def _caption(text: str) -> str:
    return f'<caption style="text-align:left;font-weight:700">{e(text)}</caption>'


def figures_table(figures: dict, caption: str = "Figures") -> str:
    """An HTML table of figures: each by its label (:func:`pinlib.core.labels.figure_label`)
    with its value and unit, a figure that repeats another left out
    (:func:`pinlib.core.labels.shown_figures`); a search's result at the search's own
    bound says so ("18 µm or less": :func:`pinlib.present.values.search_bound_words`)."""
    values = {name: f.value for name, f in figures.items()}
    rows = "".join(
        f'<tr title="{e(name)}"><td style="{CELL}">{e(labels.figure_label(name))}</td>'
        f'<td style="{NUM}">{e(figure_text(figures[name]))}'
        f"{e(search_bound_words(figures, name))}</td></tr>"
        for name in labels.shown_figures(values))
    return (f'<table style="{TABLE}">{_caption(caption)}'
            f'<tr><th style="{HEAD}">figure</th><th style="{HEAD}">value</th></tr>{rows}'
            "</table>")


def checks_table(bus_result: BusResult, caption: str = "Checks", name: str | None = None) -> str:
    """An HTML table of every check of a bus: status (as a word and a colour), check,
    where, value, limit (with the side the value keeps, "≤ 400 pF":
    :func:`pinlib.present.values.limit_side`), margin and the source of the limit; the
    check's message is the row's tooltip.  ``name``: what the where column calls a check
    of the whole group (by default the group's id)."""
    head = "".join(f'<th style="{HEAD}">{h}</th>' for h in (
        "status", "check", "where", "value", "limit", "margin", "source"))
    rows = []
    for seg, sig, c in bus_result.all_checks():
        where = " ".join(str(x) for x in (seg or sig or name or bus_result.id, c.subject)
                         if x)
        value, limit = check_cells(c, why=True)
        if limit_side(c):
            # the side of the limit the value keeps: a window check's nearer end is a
            # minimum on one row and a maximum on the next
            limit = f"{limit_side(c)}\u00a0{limit}"
        rows.append(
            f'<tr title="{e(c.id)}: {e(c.message)}"><td style="{CELL}">{badge(c.status)}</td>'
            f'<td style="{CELL}">{e(labels.check_label(c.id))}</td>'
            f'<td style="{CELL}">{e(where)}</td>'
            f'<td style="{NUM}">{e(value)}</td><td style="{NUM}">{e(limit)}</td>'
            f'<td style="{NUM}">{e(margin_text(c))}</td>'
            f'<td style="{CELL};font-size:11px">{e(c.source)}</td></tr>')
    return (f'<table style="{TABLE}">{_caption(caption)}'
            f"<tr>{head}</tr>{''.join(rows)}</table>")


def notes_html(groups: list[Group], notes: list[str] | None = None) -> str:
    """The groups' notes under a "Notes (n)" summary, each once; ``notes`` in place of
    theirs where the widget words one of them its own way."""
    notes = [n for g in groups for n in g.notes] if notes is None else list(notes)
    if not notes:
        return ""
    items = "".join(f"<li>{e(n)}</li>" for n in dict.fromkeys(notes))
    return (f'<details style="{BLOCK};font-size:12px"><summary>Notes ({len(notes)})</summary>'
            f"<ul>{items}</ul></details>")


def status_line(result: BusResult, what: str) -> str:
    """A bus's status and its checks' counts, with the warnings for want of a datasheet
    value (:func:`pinlib.present.values.soft_words`)."""
    counts = status_counts(c for _, _, c in result.all_checks())
    return (f'<div style="{BLOCK};font-size:14px;margin:2px 0">{e(what)}: '
            f"{badge(result.status)} {counts['pass']} pass, {counts['warn']} warn"
            f"{e(soft_words(counts))}, {counts['fail']} fail</div>")


def caution_html() -> str:
    return (f'<div style="{BLOCK};border-left:6px solid {charts.WARN};background:#fff7e0;'
            f'padding:2px 8px;font-size:11px">{e(CAUTION)}</div>')


_SVG_ID = re.compile(r'\bid="([^"]+)"')
_SVG_OPEN = re.compile(r"<svg\b")


def inline_svg(svg: str, key: str) -> str:
    """SVG text ready to sit inline among others: no XML prologue, every id prefixed with
    ``key`` so that two charts' clip paths cannot collide, and scaled down (never up) to
    the width of its column (the SVG keeps its aspect ratio through its viewBox)."""
    svg = re.sub(r"^\s*<\?xml[^>]*\?>\s*", "", svg)
    for old in sorted(set(_SVG_ID.findall(svg)), key=len, reverse=True):
        new = f"{key}-{old}"
        svg = (svg.replace(f'id="{old}"', f'id="{new}"').replace(f"url(#{old})", f"url(#{new})")
               .replace(f'href="#{old}"', f'href="#{new}"'))
    return _SVG_OPEN.sub('<svg style="max-width:100%;height:auto;display:block"', svg, count=1)
