"""The design review as one self-contained HTML page: semantic elements, a small inline
style sheet, the charts' SVGs inline, no script and no external resource."""

from __future__ import annotations

import html
import re

from pinlib import __version__
from pinlib.core import messages as M
from pinlib.core.labels import check_label, note_label
from pinlib.core.quantity import format_si
from pinlib.model.result import CAUTION, BusResult, Group
from pinlib.present.review.draw import ReviewChart, _slug
from pinlib.present.review.montecarlo import _MC_HEAD, MC_TABLE_INTRO, _mc_cells, _mc_summary
from pinlib.present.review.parts import (
    _basis,
    _origin,
    _part_facts,
    _part_heading,
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
    _no_snapshot_text,
    _route_of,
)
from pinlib.present.values import FLIGHT_HEAD, counts, figure_cells, flight_rows, soft_words

_CSS = """\
:root{--ink:#111;--muted:#4a4a4a;--rule:#c8c8c8;--head:#eef0f2}
*{box-sizing:border-box}
body{font-family:"DejaVu Sans","Segoe UI",Roboto,Helvetica,Arial,sans-serif;color:var(--ink);
background:#fff;margin:0 auto;max-width:1500px;padding:1rem 2rem 3rem;line-height:1.4;
overflow-wrap:break-word}
h1{font-size:1.6rem;margin:.4rem 0}h2{font-size:1.3rem;margin-top:2.2rem;
border-bottom:2px solid var(--ink);padding-bottom:.2rem}h3{font-size:1.1rem;margin-top:1.6rem}
h4{font-size:1rem;margin:1rem 0 .3rem}
.caution{border:2px solid var(--ink);border-left:10px solid #E69F00;background:#fff7e0;
padding:.6rem 1rem;margin:1rem 0;font-size:1rem}
.meta{color:var(--muted);margin:.2rem 0}
nav ol{columns:2;font-size:.9rem}
table{border-collapse:collapse;margin:.4rem 0 1rem;font-size:.82rem}
caption{text-align:left;font-weight:700;padding:.2rem 0}
th,td{border:1px solid var(--rule);padding:.18rem .45rem;text-align:left;vertical-align:top}
th{background:var(--head)}
td.num{text-align:right;white-space:nowrap;font-variant-numeric:tabular-nums}
td.src{max-width:30rem}td.msg{max-width:34rem}
.scroll{overflow-x:auto;max-width:100%}
.scroll>table{margin-top:0}
.status{display:inline-block;min-width:3.3em;text-align:center;font-weight:700;
border:1px solid var(--ink);border-radius:3px;padding:0 .3em;color:#000}
.s-pass{background:#009E73}.s-warn{background:#E69F00}.s-fail{background:#D55E00}
tr.r-warn td{background:#fff4db}tr.r-fail td{background:#fde6d8}
.visually-hidden{position:absolute;width:1px;height:1px;overflow:hidden;clip:rect(0 0 0 0);
white-space:nowrap}
dl.figs{display:grid;grid-template-columns:repeat(auto-fill,minmax(17rem,1fr));gap:0 1.5rem;
margin:.3rem 0 1rem;font-size:.82rem}
dl.figs div{display:flex;justify-content:space-between;border-bottom:1px dotted var(--rule);
padding:.1rem 0}dl.figs dt{margin-right:1rem}dl.figs dd{margin:0;white-space:nowrap;
font-variant-numeric:tabular-nums}dl.figs dd.words{white-space:normal;text-align:right}
dl.meta{display:grid;grid-template-columns:max-content 1fr;gap:0 1rem;font-size:.85rem}
dl.meta dt{font-weight:700}dl.meta dd{margin:0}
.charts{display:flex;flex-wrap:wrap;gap:1rem;margin:.6rem 0 1rem}
figure{margin:0;border:1px solid var(--rule);padding:.4rem;background:#fff;
flex:0 1 calc(50% - .5rem);min-width:min(100%,30rem)}
figure svg{display:block;max-width:100%;height:auto}
figcaption{font-size:.8rem;color:var(--muted);margin-top:.3rem}
.notes{font-size:.85rem;color:var(--muted)}
.none{color:var(--muted);font-style:italic}
code{font-size:.9em}
pre{overflow-x:auto;max-width:100%}
footer{margin-top:3rem;border-top:1px solid var(--rule);color:var(--muted);font-size:.85rem}
@media screen and (max-width:48rem){body{padding:.6rem .8rem 2rem}
td.msg,td.src{min-width:15rem}}
@media print{body{max-width:none;padding:0}figure{break-inside:avoid}
.scroll,pre{overflow:visible}}
"""


#: A table's start: each table in its own sideways scroller, so that a wide one never
#: widens the page (print shows it whole).
_TABLE = '<div class="scroll"><table>'


def _e(text) -> str:
    return html.escape(str(text), quote=True)


def _badge(status: str) -> str:
    return f'<span class="status s-{status}">{_MARK[status]}</span>'


class _Html:
    """Writes the HTML page of a :class:`~pinlib.present.review.build.Review`."""

    def __init__(self, review):
        self.r = review
        self.out: list[str] = []

    def w(self, *lines: str) -> None:
        self.out.extend(lines)

    # -------------------------------------------------------------- page
    def page(self) -> str:
        r = self.r
        res = r.result
        tally = counts(res)
        title = f"Design review: {res.design}"
        self.w("<!DOCTYPE html>", '<html lang="en">', "<head>", '<meta charset="utf-8">',
               '<meta name="viewport" content="width=device-width, initial-scale=1">',
               f'<meta name="generator" content="pinlib {_e(__version__)}">',
               f"<title>{_e(title)}</title>", f"<style>\n{_CSS}</style>", "</head>", "<body>",
               "<header>", f"<h1>{_e(title)}</h1>")
        self.w(f'<aside class="caution" role="note" aria-label="Caution"><strong>Caution.'
               f"</strong> {_e(CAUTION)}</aside>")
        if res.path:
            self.w(f'<p class="meta">Design file: <code>{_e(res.path)}</code></p>')
        desc = getattr(r.design, "description", None)
        if desc:
            self.w(f'<p class="meta">{_e(desc)}</p>')
        self.w(f'<p class="meta">Overall: {_badge(res.status)} the design '
               f"{_e(_STATUS_WORD[res.status])} — {tally['pass']} checks pass, "
               f"{tally['warn']} warn{_e(soft_words(tally))}, {tally['fail']} fail "
               "(warning below "
               f"{format_si(res.warn_margin, '%')} margin; {_e(M.RATING_NO_WARN_BAND)}).</p>",
               "</header>")
        self.nav()
        self.w("<main>")
        self.summary()
        for b in res.results():
            self.bus(b)
        if r.mc is not None:
            self.monte_carlo()
        self.parts()
        self.changes()
        self.w("</main>", f"<footer><p>Made by pinlib {_e(__version__)}. Every figure above "
                          "comes from pinlib's engines; the charts draw the engines' own arrays. "
                          f"{_e(CAUTION)}</p></footer>", "</body>", "</html>")
        return "\n".join(self.out) + "\n"

    def nav(self):
        items = ['<li><a href="#summary">Summary</a></li>']
        for b in self.r.result.results():
            items.append(f'<li><a href="#bus-{_slug(b.id)}">{_e(_heading(b))}</a> '
                         f"{_badge(b.status)}</li>")
        if self.r.mc is not None:
            items.append('<li><a href="#monte-carlo">Monte Carlo</a></li>')
        items += ['<li><a href="#parts">Parts and the provenance of their values</a></li>',
                  '<li><a href="#changes">Changes against the snapshot</a></li>']
        self.w('<nav aria-label="Contents"><h2>Contents</h2><ol>', *items, "</ol></nav>")

    def summary(self):
        self.w('<section id="summary" aria-labelledby="h-summary">',
               '<h2 id="h-summary">Summary</h2>', _TABLE,
               "<thead><tr><th scope=\"col\">Bus</th><th scope=\"col\">Protocol</th>"
               "<th scope=\"col\">Status</th><th scope=\"col\">Pass</th>"
               "<th scope=\"col\">Warn</th><th scope=\"col\">Fail</th>"
               "<th scope=\"col\">Charts</th></tr></thead>", "<tbody>")
        for b in self.r.result.results():
            c = _bus_counts(b)
            n = sum(len(self.r.charts.get(place, [])) for *_, place in _groups(b))
            self.w(f'<tr class="r-{b.status}"><td><a href="#bus-{_slug(b.id)}">{_e(b.id)}</a>'
                   f"</td><td>{_e(b.protocol)}</td><td>{_badge(b.status)}</td>"
                   f'<td class="num">{c["pass"]}</td><td class="num">{c["warn"]}</td>'
                   f'<td class="num">{c["fail"]}</td><td class="num">{n}</td></tr>')
        self.w("</tbody></table></div>")
        if self.r.result.notes:
            self.w('<ul class="notes">', *[f"<li>{_e(n)}</li>" for n in self.r.result.notes],
                   "</ul>")
        self.w("</section>")

    # -------------------------------------------------------------- buses
    def bus(self, b: BusResult):
        anchor = f"bus-{_slug(b.id)}"
        design_bus = next((x for x in self.r.design.buses if x.id == b.id), None)
        heading = _heading(b)
        self.w(f'<section id="{anchor}" aria-labelledby="h-{anchor}">',
               f'<h2 id="h-{anchor}">{_e(heading)} {_badge(b.status)}</h2>')
        if design_bus is not None and design_bus.title:
            self.w(f'<p class="meta">{_e(design_bus.title)}</p>')
        for head, suffix, grp, place in _groups(b):
            if head is None:
                self.group(grp, place, f"{b.id}", level=3)
                self.flights(b)
                continue
            sid = anchor + suffix
            self.w(f'<section id="{sid}" aria-labelledby="h-{sid}">',
                   f'<h3 id="h-{sid}">{_e(head)} {_badge(grp.status)}</h3>')
            route = _route_of(design_bus, place)
            if route:
                self.w(f'<pre class="route" aria-label="Route of {_e(head)}">'
                       + _e("\n".join(route)) + "</pre>")
            self.group(grp, place, f"{b.id} {head.lower()}", level=4)
            self.w("</section>")
        self.w("</section>")

    def flights(self, b: BusResult):
        """An SPI bus's flights per peripheral (:func:`pinlib.present.values.flight_rows`)."""
        rows = flight_rows(b)
        if not rows:
            return
        self.w("<h3>Flights</h3>", f'<p class="meta">{_e(_flights_caption())}</p>', _TABLE,
               f'<caption class="visually-hidden">Flights of {_e(b.id)}</caption>',
               "<thead><tr>" + "".join(f'<th scope="col">{x}</th>' for x in FLIGHT_HEAD)
               + "</tr></thead><tbody>",
               *[f"<tr><td>{_e(r[0])}</td><td>{_e(r[1])}</td><td class=\"num\">{_e(r[2])}"
                 f"</td><td class=\"num\">{_e(r[3])}</td></tr>" for r in rows],
               "</tbody></table></div>")

    def group(self, g: Group, place, label: str, level: int):
        h = f"h{level}"
        if g.figures:
            self.w(f"<{h}>Figures</{h}>", f'<dl class="figs" aria-label="Figures of {_e(label)}">')
            for name, value in figure_cells(g.figures, g.checks):
                # a number with its unit stays on one line; words (a figure's reason for
                # having no number, "not computed (...)") wrap within the column
                words = "" if value[:1].isdigit() or value[:1] in "+-−" else ' class="words"'
                self.w(f"<div><dt>{_e(name)}</dt><dd{words}>{_e(value)}</dd></div>")
            self.w("</dl>")
        if g.checks:
            self.w(f"<{h}>Checks</{h}>", _TABLE,
                   f"<caption class=\"visually-hidden\">Checks of {_e(label)}</caption>",
                   "<thead><tr>" + "".join(f'<th scope="col">{x}</th>' for x in (
                       "Status", "Check", "Subject", "Value", "Limit", "Margin", "Finding",
                       "Source of the limit")) + "</tr></thead><tbody>")
            for c in g.checks:
                value, limit = _check_cells(c)
                self.w(f'<tr class="r-{c.status}"><td>{_badge(c.status)}</td>'
                       f'<td title="{_e(c.id)}">{_e(check_label(c.id))}</td>'
                       f"<td>{_e(c.subject or '')}</td>"
                       f'<td class="num">{_e(value)}</td><td class="num">{_e(limit)}</td>'
                       f'<td class="num">{_e(_margin(c))}</td>'
                       f'<td class="msg">{_e(_message(c))}</td>'
                       f'<td class="src">{_e(c.source)}</td></tr>')
            self.w("</tbody></table></div>")
        charts = self.r.charts.get(place, [])
        if charts:
            self.w(f"<{h}>Charts</{h}>", '<div class="charts">')
            for chart in charts:
                self.chart(chart)
            self.w("</div>")
        if g.notes:
            self.w(f"<{h}>Notes</{h}>", '<ul class="notes">',
                   *[f"<li>{_e(note_label(n))}</li>" for n in g.notes], "</ul>")

    def chart(self, chart: ReviewChart):
        self.w(f'<figure id="chart-{_e(chart.key)}" data-chart="{_e(chart.kind)}">')
        if chart.svg is not None:
            self.w(chart.svg)
        else:
            self.w(f'<p class="none">{_e(M.CHART_NOT_DRAWN.format(error=chart.error))}</p>')
        self.w(f"<figcaption><strong>{_e(chart.title)}.</strong> {_e(chart.caption)}"
               "</figcaption>", "</figure>")

    # -------------------------------------------------------------- Monte Carlo
    def monte_carlo(self):
        self.w('<section id="monte-carlo" aria-labelledby="h-mc">',
               '<h2 id="h-mc">Monte Carlo</h2>')
        for line in _mc_summary(self.r.mc):
            self.w(f'<p class="meta">{_e(line)}</p>')
        rows = self.r.mc_entries
        if rows:
            self.w(f'<p class="meta">{_e(MC_TABLE_INTRO)}</p>')
            self.w(_TABLE + "<caption>Checks whose margin varies over the boards, or that "
                   "warn or fail on some</caption><thead><tr>"
                   + "".join(f'<th scope="col">{_e(x)}</th>' for x in _MC_HEAD)
                   + "</tr></thead><tbody>")
            for row in rows:
                cells = _mc_cells(row)
                cls = ' class="r-fail"' if row["failures"] else \
                    ' class="r-warn"' if row.get("warns") else ""
                self.w(f"<tr{cls}><td>{_e(cells[0])}</td>"
                       + "".join(f'<td class="num">{_e(c)}</td>' for c in cells[1:5])
                       + f"<td>{_e(cells[5])}</td><td class=\"src\">{_e(cells[6])}</td></tr>")
            self.w("</tbody></table></div>")
        if self.r.mc_charts:
            self.w(f'<p class="meta">Histograms of the {len(self.r.mc_charts)} checks with the '
                   "lowest pass fractions and margins.</p>", '<div class="charts">')
            for chart in self.r.mc_charts:
                self.chart(chart)
            self.w("</div>")
        else:
            self.w(f'<p class="none">{_e(M.NO_SAMPLED_CHECK_VARIES)}</p>')
        self.w("</section>")

    # -------------------------------------------------------------- parts
    def parts(self):
        self.w('<section id="parts" aria-labelledby="h-parts">',
               '<h2 id="h-parts">Parts and the provenance of their values</h2>',
               '<p class="meta">Every value as the library resolved it: its basis (generic, '
               "datasheet, measured, estimate, derived), its source, and the part file that "
               "set it — this part, or a class it inherits from (<code>extends</code>). "
               "A basis or source marked <em>file provenance</em> is not stated on the value "
               "itself: it is the provenance of the part file that set it. Stored values are "
               "the guaranteed limit in the direction that hurts; a typical value is kept for "
               "information only.</p>")
        for ref, p in self.r.parts.items():
            sid = f"part-{_slug(ref)}"
            self.w(f'<section id="{sid}" aria-labelledby="h-{sid}">',
                   f'<h3 id="h-{sid}">{_e(_part_heading(ref, p))}</h3>', "<dl class=\"meta\">")
            for k, v in _part_facts(p):
                self.w(f"<dt>{_e(k)}</dt><dd>{_e(v)}</dd>")
            self.w("</dl>", _TABLE,
                   f"<caption class=\"visually-hidden\">Values of {_e(ref)}</caption>",
                   "<thead><tr>" + "".join(f'<th scope="col">{x}</th>' for x in (
                       "Value", "Resolved", "Typical", "Basis", "Source", "Set in"))
                   + "</tr></thead><tbody>")
            from pinlib.studies.compare import value_label

            for key, entry in (p.get("values") or {}).items():
                self.w(f"<tr><td><code>{_e(value_label(key))}</code></td>"
                       f"<td>{_e(_part_value(entry))}</td><td>{_e(_typ(entry))}</td>"
                       f"<td>{_e(_basis(entry))}</td><td class=\"src\">"
                       f"{_e(entry.get('source', '—'))}</td>"
                       f"<td>{_e(_origin(entry, p.get('part', '')))}</td></tr>")
            self.w("</tbody></table></div>", "</section>")
        self.w("</section>")

    # -------------------------------------------------------------- changes
    def changes(self):
        cl = self.r.changes
        self.w('<section id="changes" aria-labelledby="h-changes">',
               '<h2 id="h-changes">Changes against the snapshot</h2>')
        if cl is None:
            # the sentence marks its command as `code` (Markdown); HTML shows it as <code>
            text = re.sub(r"`([^`]*)`", r"<code>\1</code>", _e(_no_snapshot_text(self.r.design)))
            self.w(f'<p class="none">{text}</p>',
                   "</section>")
            return
        from pinlib.core.labels import figure_label
        from pinlib.studies.compare import format_change
        from pinlib.studies.compare.changes import shown_changes
        from pinlib.studies.compare.figures import figure_value_text

        pct = f"{cl.threshold * 100:g} %"
        when = f" saved {cl.old_created}" if cl.old_created else ""
        old = _badge(cl.old_status) if cl.old_status in _MARK else _e(cl.old_status or "—")
        new = _badge(cl.new_status) if cl.new_status in _MARK else _e(cl.new_status or "—")
        self.w(f"<p>Against the snapshot{_e(when)}: status {old} → {new}.</p>")
        renamed = "; ".join(cl.rename_lines())
        if cl.empty and renamed:
            self.w(f'<p class="none">{_e(renamed)}; no other change.</p>')
        elif cl.empty:
            self.w(f'<p class="none">No check changed status, no figure moved more than '
                   f"{_e(pct)}, no part value differs.</p>")
        elif renamed:
            self.w(f"<p>{_e(renamed)}; below in the new names.</p>")
        if cl.groups:
            self.w(f"<p>{_e('; '.join(cl.group_lines()))}.</p>")
        if cl.status_changes:
            self.w("<h3>Checks whose status changed</h3>", _TABLE + "<thead><tr>"
                   + "".join(f'<th scope="col">{x}</th>' for x in (
                       "Where", "Check", "Subject", "Before", "After", "Value", "Limit",
                       "Source of the limit")) + "</tr></thead><tbody>")
            for c in cl.status_changes:
                before = _badge(c.old) if c.old in _MARK else "(absent)"
                after = _badge(c.new) if c.new in _MARK else "(absent)"
                subj = (c.subject or "") + (f" (was {c.old_subject})" if c.old_subject else "")
                value = c.value_text()  # as the text says it; a yes/no check's comparison
                limit_s = c.limit_text()  # before → after where it moved, as the text says
                self.w(f'<tr class="r-{c.new or "fail"}"><td>{_e(c.path)}</td>'
                       f'<td title="{_e(c.check)}">{_e(check_label(c.check))}</td>'
                       f"<td>{_e(subj)}</td>"
                       f"<td>{before}</td><td>{after}</td><td class=\"num\">{_e(value)}</td>"
                       f'<td class="num">{_e(limit_s)}</td><td class="src">{_e(c.source)}'
                       "</td></tr>")
            self.w("</tbody></table></div>")
        if cl.margin_changes:
            self.w(f"<h3>{_e(cl.margin_heading())}</h3>", "<ul>",
                   *[f"<li>{_e(c.format())}</li>" for c in cl.margin_changes], "</ul>")
        if cl.figure_changes:
            self.w(f"<h3>Figures that moved more than {_e(pct)}</h3>", _TABLE + "<thead><tr>"
                   + "".join(f'<th scope="col">{x}</th>' for x in (
                       "Where", "Figure", "Before", "After", "Change")) + "</tr></thead><tbody>")
            for f in shown_changes(cl.figure_changes):
                self.w(f"<tr><td>{_e(f.path)}</td><td>{_e(figure_label(f.name))}</td>"
                       f'<td class="num">{_e(figure_value_text(f.name, f.old, f.unit))}</td>'
                       f'<td class="num">{_e(figure_value_text(f.name, f.new, f.unit))}</td>'
                       f'<td class="num">'
                       f'{_e(format_change(f.change, f.old, f.new, f.unit) or f.kind)}</td></tr>')
            self.w("</tbody></table></div>")
        if cl.part_changes:
            self.w("<h3>Part values behind the change</h3>")
            for pc in cl.part_changes:
                head, *rest = pc.lines()
                self.w(f"<p><strong>{_e(head)}</strong></p>")
                if rest:
                    self.w("<ul>", *[f"<li>{_e(x.strip())}</li>" for x in rest], "</ul>")
        if cl.notes:
            self.w('<ul class="notes">', *[f"<li>{_e(n)}</li>" for n in cl.notes], "</ul>")
        self.w("</section>")
