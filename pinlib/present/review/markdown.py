"""The design review as Markdown, every user-written text escaped so that it stays one
line of plain text; the charts linked as SVG files or embedded as ``data:`` URIs."""

from __future__ import annotations

import base64
import re

from pinlib import __version__
from pinlib.core import messages as M
from pinlib.core.labels import check_label, note_label
from pinlib.core.quantity import format_si
from pinlib.core.wrapping import wrap
from pinlib.model.result import CAUTION, BusResult, Group
from pinlib.present.report import fit
from pinlib.present.review.draw import ReviewChart
from pinlib.present.review.montecarlo import _MC_HEAD, MC_TABLE_INTRO, _mc_cells, _mc_summary
from pinlib.present.review.parts import (
    _basis,
    _origin,
    _part_facts,
    _part_value,
    _typ,
)
from pinlib.present.review.text import (
    _MARK,
    _STATUS_WORD,
    _bus_counts,
    _check_cells,
    _flights_caption,
    _groups,
    _heading,
    _margin,
    _message,
    _route_of,
)
from pinlib.present.values import FLIGHT_HEAD, counts, figure_cells, flight_rows, soft_words

# Every user-written text (titles, ids, descriptions, sources, part values, paths) goes
# through _mt: one line (newlines and runs of spaces become one space), the characters
# that start inline Markdown escaped (emphasis, code, links and images, tables,
# strikethrough), a "<" that could open HTML or an autolink (a URI's, an e-mail
# address's) and an "&" that could start a character reference as entities (any other
# "<", ">" or "&" reads as itself: "Johnson & Graham", "<= 0.01", "-> 0 V"), and a block
# marker at its start (a heading, a list, a quote) made plain.  It cannot end a table,
# open a code block or add an image.
_MD_INLINE = str.maketrans({c: "\\" + c for c in "\\`*_[]|~"})
_MD_HTML = re.compile(r"<(?=[A-Za-z/!?]|[^\s<>]*@[^\s<>]*>)|&(?=#?[A-Za-z0-9]+;)")
_MD_ENTITY = {"<": "&lt;", "&": "&amp;"}
# a heading (# x), a bullet (- x, + x), a quote (>), a rule or heading underline (---,
# ===), a numbered item (1. x): each only with the space or line end that makes it one
_MD_LINE_START = re.compile(r"^(?:(#{1,6}|[+-])(?=\s|$)|>|([=-])(?=[=\-\s]*$)"
                            r"|(\d{1,9})([.)])(?=\s|$))")


#: The width of the Markdown's preformatted text (the change list), in characters.
TEXT_WIDTH = 80


def _mt(text) -> str:
    """User text for Markdown: one line in which nothing is markup (see above)."""
    return _MD_LINE_START.sub(_plain_start, _m(text), count=1)


def _plain_start(m: re.Match) -> str:
    if m.group(3):
        return m.group(3) + "\\" + m.group(4)
    return "\\" + m.group(0)


def _m(text) -> str:
    """Text for a Markdown table cell, or for a line after its start: inline markup
    escaped as :func:`_mt` does (``|`` too), its first character as written (a block
    marker means nothing in a cell or in the middle of a line: ``> +999 %`` reads so)."""
    s = " ".join(str(text).split()).translate(_MD_INLINE)
    return _MD_HTML.sub(lambda m: _MD_ENTITY[m.group(0)], s)


def _title(text) -> str:
    """User text that ends a heading line: as _mt makes it, and a run of ``#`` at its end
    escaped, which CommonMark would take for the heading's closing marks and drop."""
    return re.sub(r"(?<= )(#+)$", r"\\\1", _mt(text))


def _code(text, *, cell: bool = False) -> str:
    """Text shown as inline code, whatever backticks it holds: the fence is longer than
    any run of backticks inside (CommonMark code spans), and the text is one line.  In a
    table ``cell``, ``|`` is escaped (GFM reads the table's pipes before the code span);
    elsewhere a code span shows a backslash as written, so it stays as it is."""
    s = " ".join(str(text).split())
    run = max((len(r) for r in re.findall(r"`+", s)), default=0)
    fence = "`" * (run + 1)
    pad = " " if s.startswith("`") or s.endswith("`") or not s else ""
    code = f"{fence}{pad}{s}{pad}{fence}"
    return code.replace("|", "\\|") if cell else code


def _with_code(template: str, **fields) -> str:
    """A sentence of pinlib's whose `...` parts are code, filled with ``fields`` (a user's
    path): the code parts through _code, the rest through _mt, the spaces between kept."""
    out = []
    for i, piece in enumerate(template.split("`")):
        piece = piece.format(**fields)
        if i % 2:
            out.append(_code(piece))
        elif piece.strip():
            lead = " " if piece[0].isspace() and i else ""
            tail = " " if piece[-1].isspace() else ""
            out.append(lead + _mt(piece) + tail)
        else:
            out.append(" " if piece and i else "")
    return "".join(out)


def _fenced(text: str) -> list[str]:
    """A fenced block of ``text`` whose fence no line of the text can close."""
    run = max((len(r) for r in re.findall(r"`+", text)), default=0)
    fence = "`" * max(3, run + 1)
    return [fence, text, fence]


def _wrapped(text: str, marker: str = "", hang: str | None = None) -> list[str]:
    """Markdown text (escaped already) as lines of at most :data:`TEXT_WIDTH` characters:
    the first after ``marker`` (``"- "``, ``"> "``, ``"3. "``), the others after ``hang``
    (spaces as wide as the marker by default), a number kept with its unit, a word longer
    than a line kept whole on a line of its own.  A line that
    would start a block where it now begins (``- x``, ``1. x``, ``# x``, ``---``) is made
    plain as :func:`_mt` makes a text's start, so wrapping never changes the structure."""
    hang = " " * len(marker) if hang is None else hang
    room = TEXT_WIDTH - max(len(marker), len(hang)) - 1   # - 1: room for that escape
    out = []
    for i, line in enumerate(wrap(text, room, "", "", whole_long=True)):
        if i:
            line = _MD_LINE_START.sub(_plain_start, line, count=1)
        out.append((hang if i else marker) + line)
    return out


def _heading_lines(marks: str, name: str, tail: str = "", detail: str | None = None
                   ) -> list[str]:
    """A heading and the lines under it: ``marks`` (``"###"``), the user's ``name``
    escaped, ``tail`` (pinlib's own, ``": PASS"``) after it.  ``detail`` follows the
    name after " — " where the whole fits :data:`TEXT_WIDTH`, else it goes on a line of
    its own under the heading.  The name itself is never cut: a heading is one line a
    viewer wraps itself, not a terminal's, and a heading cut with "…" read as a
    different title (it may run past the width, as a long word in a paragraph does)."""

    def head(text: str) -> str:
        return f"{marks} {_mt(text) if tail else _title(text)}{tail}"

    under: list[str] = []
    if detail:
        line = head(f"{name} — {detail}")
        if len(line) <= TEXT_WIDTH:
            return [line, ""]
        under = [*_wrapped(f"*{_mt(detail)}*"), ""]
    return [head(name), "", *under]


def _row(cells) -> str:
    return "| " + " | ".join(cells) + " |"


def _table(head, rows) -> list[str]:
    return [_row(head), _row(["---"] * len(head))] + [_row(r) for r in rows] + [""]


class _Markdown:
    """Writes the Markdown page of a :class:`~pinlib.present.review.build.Review`."""

    def __init__(self, review, chart_dir: str | None):
        self.r = review
        self.dir = chart_dir.rstrip("/") if chart_dir else None
        self.out: list[str] = []
        self.files: dict[str, str] = {}

    def w(self, *lines: str) -> None:
        self.out.extend(lines)

    def page(self) -> tuple[str, dict[str, str]]:
        r, res = self.r, self.r.result
        tally = counts(res)
        self.w(*_heading_lines("#", f"Design review: {res.design}"),
               *_wrapped(f"**Caution.** {_mt(CAUTION)}", "> ", "> "), "")
        if res.path:
            self.w(f"Design file: {_code(res.path)}", "")
        desc = getattr(r.design, "description", None)
        if desc:
            self.w(*_wrapped(_mt(desc)), "")
        self.w(*_wrapped(
            f"**Overall: {_MARK[res.status]}** — the design {_STATUS_WORD[res.status]}: "
            f"{tally['pass']} checks pass, {tally['warn']} warn{soft_words(tally)}, "
            f"{tally['fail']} fail "
            f"(warning below {format_si(res.warn_margin, '%')} margin; "
            f"{M.RATING_NO_WARN_BAND})."), "")
        self.w("## Summary", "")
        rows = []
        for b in res.results():
            c = _bus_counts(b)
            rows.append([_m(b.id), _m(b.protocol), f"**{_MARK[b.status]}**", str(c["pass"]),
                         str(c["warn"]), str(c["fail"])])
        self.w(*_table(["Bus", "Protocol", "Status", "Pass", "Warn", "Fail"], rows))
        for n in res.notes:
            self.w(*_wrapped(_mt(n), "- "))
        for b in res.results():
            self.bus(b)
        if r.mc is not None:
            self.monte_carlo()
        self.parts()
        self.changes()
        self.w("---", "", *_wrapped(f"Made by pinlib {__version__}. {_mt(CAUTION)}"), "")
        return "\n".join(self.out), self.files

    def bus(self, b: BusResult):
        design_bus = next((x for x in self.r.design.buses if x.id == b.id), None)
        self.w(*_heading_lines("##", _heading(b), f": {_MARK[b.status]}"))
        if design_bus is not None and design_bus.title:
            self.w(*_wrapped(f"*{_mt(design_bus.title)}*"), "")
        for head, _, grp, place in _groups(b):
            if head is None:
                self.group(grp, place, "###")
                rows = flight_rows(b)
                if rows:
                    self.w("### Flights", "", *_wrapped(_mt(_flights_caption())), "")
                    self.w(*_table(list(FLIGHT_HEAD), [[_m(x) for x in r] for r in rows]))
                continue
            self.w(*_heading_lines("###", head, f": {_MARK[grp.status]}"))
            route = _route_of(design_bus, place)
            if route:
                self.w(*_fenced("\n".join(route)), "")
            self.group(grp, place, "####")

    def group(self, g: Group, place, h: str):
        if g.figures:
            self.w(f"{h} Figures", "")
            self.w(*_table(["Figure", "Value"],
                           [[_m(label), _m(value)]
                            for label, value in figure_cells(g.figures, g.checks)]))
        if g.checks:
            # a table narrow enough to read as plain text, each row numbered; the findings
            # and the sources of the limits below it, under the same numbers
            self.w(f"{h} Checks", "")
            rows, items = [], []
            for i, c in enumerate(g.checks, 1):
                value, limit = _check_cells(c)
                label = _m(check_label(c.id)) + (f", {_m(c.subject)}" if c.subject else "")
                rows.append([str(i), f"**{_MARK[c.status]}**", _m(check_label(c.id)),
                             _m(c.subject or ""), _m(value), _m(limit), _m(_margin(c))])
                items += _wrapped(f"**{_MARK[c.status]}** {label}: {_m(_message(c))}. "
                                  f"*Source of the limit:* {_m(c.source)}",
                                  f"{i}.".ljust(len(str(len(g.checks))) + 2))
            self.w(*_table(["#", "Status", "Check", "Subject", "Value", "Limit", "Margin"],
                           rows))
            self.w("Findings and the sources of their limits:", "", *items, "")
        charts = self.r.charts.get(place, [])
        if charts:
            self.w(f"{h} Charts", "")
            for chart in charts:
                self.chart(chart)
        if g.notes:
            self.w(f"{h} Notes", "")
            for n in g.notes:
                self.w(*_wrapped(_mt(note_label(n)), "- "))
            self.w("")

    def chart(self, chart: ReviewChart):
        if chart.svg is None:
            text = M.CHART_NOT_DRAWN_WITH_TITLE.format(title=chart.title, error=chart.error)
            self.w(f"*{_mt(text)}*", "")
            return
        alt = chart.title.replace("[", "(").replace("]", ")")
        if self.dir is None:
            data = base64.b64encode(chart.svg.encode("utf-8")).decode("ascii")
            target = f"data:image/svg+xml;base64,{data}"
        else:
            target = f"{self.dir}/{chart.key}.svg"
            self.files[target] = '<?xml version="1.0" encoding="UTF-8"?>\n' + chart.svg + "\n"
        self.w(f"![{_mt(alt)}]({target})", "",
               *_wrapped(f"*{_mt(chart.title)}.* {_mt(chart.caption)}"), "")

    def monte_carlo(self):
        self.w("## Monte Carlo", "")
        for line in _mc_summary(self.r.mc):
            self.w(*_wrapped(_mt(line)), "")
        if self.r.mc_entries:
            self.w(*_wrapped(_mt(MC_TABLE_INTRO)), "")
            # the numbers in the table, each limit's source once under it, cited by
            # number (a row that carried its own in full was up to 300 characters)
            cite: dict[str, int] = {}
            rows = []
            for r in self.r.mc_entries:
                *cells, src = _mc_cells(r)
                ref = f"[{cite.setdefault(src, len(cite) + 1)}]" if src else "—"
                rows.append([_m(c) for c in cells] + [ref])
            self.w(*_table([*_MC_HEAD[:-1], "Source"], rows))
            if cite:
                self.w("Sources of the limits:", "")
                for src, n in cite.items():
                    self.w(*_wrapped(_mt(src), f"- [{n}] ", "  "))
                self.w("")
        for chart in self.r.mc_charts:
            self.chart(chart)

    def parts(self):
        from pinlib.studies.compare import value_label

        self.w("## Parts and the provenance of their values", "", *_wrapped(
               "Every value as the library resolved it: its basis, its source, and the part "
               "file that set it (this part, or a class it inherits from). A basis marked *file "
               "provenance* is not stated on the value itself: it is the provenance of the part "
               "file that set it."), "")
        for ref, p in self.r.parts.items():
            self.w(*_heading_lines("###", f"{ref}: {p.get('part')}",
                                   detail=p.get("title") or None))
            for k, v in _part_facts(p):
                self.w(*_wrapped(f"{k}: {_mt(v)}", "- "))
            self.w("")
            # each source once, cited by number: a part's values share a few sources, and
            # a row that carried its own in full was 250 characters wide
            cite: dict[str, int] = {}
            rows = []
            for key, e in (p.get("values") or {}).items():
                src = e.get("source")
                ref_text = f"[{cite.setdefault(src, len(cite) + 1)}]" if src else "—"
                rows.append([_code(value_label(key), cell=True), _m(_part_value(e)), _m(_typ(e)),
                             _m(_basis(e)), ref_text, _m(_origin(e, p.get("part", "")))])
            self.w(*_table(["Value", "Resolved", "Typical", "Basis", "Source", "Set in"],
                           rows))
            if cite:
                self.w("Sources:", "")
                for src, n in cite.items():
                    self.w(*_wrapped(_mt(src), f"- [{n}] ", "  "))
                self.w("")

    def changes(self):
        cl = self.r.changes
        self.w("## Changes against the snapshot", "")
        if cl is None:
            path = getattr(self.r.design, "path", None)
            self.w(*_wrapped(_with_code(M.NO_SNAPSHOT_TO_COMPARE,
                                        design=str(path) if path else "DESIGN")), "")
            return
        # as `pinlib check` prints it at 80 columns: plain text that reads without a viewer
        lines = fit(cl.format_text().rstrip("\n").split("\n"), TEXT_WIDTH)
        self.w(*_fenced("\n".join(lines)), "")
