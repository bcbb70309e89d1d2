"""Design-review reports: one self-contained HTML page, or Markdown with its charts.

A review holds, in this order: the caution (:data:`pinlib.model.result.CAUTION`); a summary
of every bus; per bus its notes, figures and checks (each check with its status as
text and colour, its value, limit, margin, message and the source of its limit) and
its charts; the Monte Carlo histograms when a run is given; every part used with the
provenance of each value (basis, source, the part file that set it: this part or one
it inherits from); and the change list against the design's saved snapshot.

Charts (:mod:`pinlib.present.charts`, rendered to SVG by vl-convert) draw the arrays of
:mod:`pinlib.present.plotdata`, which the engines compute:

* each open-drain line: the pull-up window (Rp against Cb, log axes, the allowed band
  shaded, the chosen point marked);
* each push-pull line, per driver: edge time against load with the datasheet points
  and the operating point, and the far-end waveforms with the VIL/VIH band, with and
  without the line's series resistor;
* each SPI bus: the timing budget as stacked bars;
* a Monte Carlo run: one histogram per check, with the limit and the pass fraction.

HTML: semantic elements, a small inline style sheet, the SVGs inline (their ids made
unique per chart), no script and no external resource.  Markdown: the same text;
each chart is an SVG file in a folder beside the ``.md`` linked as an image
(``chart_dir``) — the form that repository viewers (which drop ``data:`` images) and
editors show — or, with no ``chart_dir``, embedded as a ``data:image/svg+xml`` URI so
that the text stands alone.

A Monte Carlo run (:func:`pinlib.studies.whatif.monte_carlo`) adds a section: the run's size,
draws, seed and yields; a table of every sampled check whose margin varies over the
boards (or that fails on some) with its pass fraction, confidence interval, lowest
margin, the parameters it is most sensitive to and its source; and histograms of the
per-board margins (a board passes when its margin is not negative) of the
:data:`MC_CHARTS` checks with the lowest pass fractions and margins.  Other sources of
samples may use a plain protocol instead: ``mc.checks`` (or ``mc`` itself) an iterable
of entries (objects or dicts) with ``id``, ``samples`` (the checked value on each board,
SI), ``limit``, ``unit``, and optionally ``path``, ``subject``, ``kind`` (``"max"``, the
default, or ``"min"``), ``pass_fraction``, ``ci`` (``(low, high)``), ``label`` and
``source``; ``mc.n`` and ``mc.seed`` are shown when present.
"""

from __future__ import annotations

import base64
import html
import re
from dataclasses import dataclass, field

from pinlib import __version__
from pinlib.core import messages as M
from pinlib.core.errors import PinlibError
from pinlib.core.protocols import OPEN_DRAIN_PROTOCOLS, PUSH_PULL_PROTOCOLS
from pinlib.core.quantity import format_si
from pinlib.model.result import CAUTION, BusResult, Check, DesignResult, Group, margin_text
from pinlib.present.report import format_value

__all__ = [
    "MC_CHARTS",
    "ReviewChart",
    "Review",
    "build_review",
    "render_html",
    "render_markdown",
]

_MARK = {"pass": "PASS", "warn": "WARN", "fail": "FAIL"}
_STATUS_WORD = {"pass": "passes", "warn": "passes with a margin under the warning threshold",
                "fail": "fails"}

_CSS = """\
:root{--ink:#111;--muted:#4a4a4a;--rule:#c8c8c8;--head:#eef0f2}
*{box-sizing:border-box}
body{font-family:"DejaVu Sans","Segoe UI",Roboto,Helvetica,Arial,sans-serif;color:var(--ink);
background:#fff;margin:0 auto;max-width:1500px;padding:1rem 2rem 3rem;line-height:1.4}
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
font-variant-numeric:tabular-nums}
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
footer{margin-top:3rem;border-top:1px solid var(--rule);color:var(--muted);font-size:.85rem}
@media print{body{max-width:none;padding:0}figure{break-inside:avoid}}
"""


# =========================================================================== model


@dataclass
class ReviewChart:
    """One chart of a review.

    Attributes
    ----------
    key : str
        A name unique in the review, safe as a file name (``03-flash-sclk-u1-edges``).
    kind : str
        ``pullup-window``, ``edge-vs-load``, ``waveforms``, ``timing-budget`` or
        ``histogram``.
    title, caption : str
        What it shows, and how to read it.
    svg : str or None
        The SVG text; None when the chart could not be drawn (``error`` says why).
    """

    key: str
    kind: str
    title: str
    caption: str
    svg: str | None = None
    error: str | None = None


@dataclass
class Review:
    """Everything a report shows, with its charts rendered once.

    Use :meth:`html` or :meth:`markdown`; :func:`build_review` makes one.
    """

    design: object
    result: DesignResult
    changes: object = None
    mc: object = None
    charts: dict = field(default_factory=dict)      # place -> [ReviewChart]
    mc_charts: list = field(default_factory=list)
    mc_entries: list = field(default_factory=list)
    parts: dict = field(default_factory=dict)

    # ------------------------------------------------------------------ queries

    def all_charts(self) -> list[ReviewChart]:
        """Every chart in the order the report shows them."""
        out = [c for place in self.charts.values() for c in place]
        return out + list(self.mc_charts)

    def html(self) -> str:
        """The review as one self-contained HTML page."""
        return _Html(self).page()

    def markdown(self, chart_dir: str | None = None) -> tuple[str, dict[str, str]]:
        """The review as Markdown.

        Parameters
        ----------
        chart_dir : str, optional
            Folder, relative to the ``.md`` file, for the chart files; None embeds each
            chart as a ``data:`` URI.

        Returns
        -------
        text : str
            The Markdown.
        files : dict of str to str
            The SVG files to write, by path relative to the ``.md`` (empty when the
            charts are embedded).
        """
        return _Markdown(self, chart_dir).page()


# =========================================================================== building


def _slug(text: str) -> str:
    return re.sub(r"[^a-z0-9]+", "-", str(text).lower()).strip("-") or "x"


class _Keys:
    def __init__(self):
        self.n = 0
        self.used: set[str] = set()

    def __call__(self, *parts) -> str:
        self.n += 1
        key = f"{self.n:02d}-" + "-".join(_slug(p) for p in parts if p)
        while key in self.used:  # pragma: no cover - the counter keeps keys unique
            key += "-x"
        self.used.add(key)
        return key


def _draw(key, kind, title, caption, make) -> ReviewChart:
    """Build a chart; an input the chart refuses becomes a chart with an error, so one
    undrawable figure does not lose the whole report."""
    from pinlib.present.charts import spec as chart_spec
    from pinlib.present.charts import to_svg

    try:
        # The charts module builds valid specs (its own tests validate them): spec()
        # builds the chart without altair's schema checks (its debug mode, most of a
        # report's chart time) and without handing it the data rows to copy.
        spec = chart_spec(make)
        svg = to_svg(spec)
    except PinlibError as err:
        return ReviewChart(key, kind, title, caption, None, err.message)
    return ReviewChart(key, kind, title, caption, _clean_svg(svg, key, title))


_ID = re.compile(r'\bid="([^"]+)"')


def _clean_svg(svg: str, key: str, title: str) -> str:
    """An SVG ready to sit inline beside others: no XML prologue, ids prefixed with the
    chart's key (so two charts' clip paths cannot collide), a role and a label."""
    svg = re.sub(r"^\s*<\?xml[^>]*\?>\s*", "", svg)
    svg = re.sub(r"^\s*<!DOCTYPE[^>]*>\s*", "", svg)
    ids = set(_ID.findall(svg))
    for old in sorted(ids, key=len, reverse=True):
        new = f"{key}-{old}"
        svg = svg.replace(f'id="{old}"', f'id="{new}"')
        svg = svg.replace(f"url(#{old})", f"url(#{new})")
        svg = svg.replace(f'href="#{old}"', f'href="#{new}"')
    label = html.escape(title, quote=True)
    return svg.replace("<svg ", f'<svg role="img" aria-label="{label}" ', 1)


def _f(x, unit):
    return format_si(x, unit)


def _pullup_charts(bus, design, result: BusResult, keys, charts):
    from pinlib.present import charts as ch
    from pinlib.present import plotdata

    for seg in bus.segments:
        place = ("segment", bus.id, seg.id) if result.segments else ("bus", bus.id)
        for sig in ("sda", "scl"):
            where = f"{sig.upper()}" + (f", segment {seg.id}" if result.segments else "")
            title = f"Pull-up window: {bus.id} {where}"
            key = keys(bus.id, seg.id if result.segments else "", sig, "pullup-window")
            try:
                d = plotdata.pullup_window_data(bus, design, seg.id, sig, analysis=result)
            except PinlibError as err:
                charts.setdefault(place, []).append(
                    ReviewChart(key, "pullup-window", title, "", None, err.message))
                continue
            sub = (f"tr ≤ {_f(d.tr_max, 's')}, rise = {d.rise_factor:.4g}·Rp·Cb; Rp(min) "
                   f"{_f(d.rp_min, 'Ω')}" + (f" set by {d.weakest}" if d.weakest else ""))
            caption = (f"Allowed pull-ups (shaded) between Rp(min) = (VDD(max) − VOL)/IOL of "
                       f"the weakest sink and Rp(max) = tr/({d.rise_factor:.4g}·Cb). The "
                       f"diamond is the design: {_f(d.chosen_rp, 'Ω')} on "
                       f"{_f(d.chosen_cb, 'F')} (Rp(max) there {_f(d.rp_max_chosen, 'Ω')}). "
                       f"Source: {d.source}.")
            charts.setdefault(place, []).append(_draw(
                key, "pullup-window", title, caption,
                lambda d=d, title=title, sub=sub: ch.pullup_window(
                    d.cb, d.rp_min, d.rp_max, chosen_cb=d.chosen_cb, chosen_rp=d.chosen_rp,
                    title=title, subtitle=sub,
                    chosen_label=f"design: {_f(d.chosen_rp, 'Ω')} at {_f(d.chosen_cb, 'F')}")))


def _push_pull_charts(bus, design, result: BusResult, keys, charts):
    import numpy as np

    from pinlib.present import charts as ch
    from pinlib.present import plotdata

    lines = plotdata.line_analyses(bus, design, result)
    for sig, la in lines.items():
        place = ("line", bus.id, sig)
        for ref in la.cases:
            title = f"Edge time against load: {ref} driving {bus.id} {sig.upper()}"
            key = keys(bus.id, sig, ref, "edges")
            try:
                e = plotdata.edge_vs_load_data(bus, design, sig, driver=ref, analysis=lines)
                w = plotdata.waveform_data(bus, design, sig, driver=ref, analysis=lines)
            except PinlibError as err:
                charts.setdefault(place, []).append(
                    ReviewChart(key, "edge-vs-load", title, "", None, err.message))
                continue
            op_label = e.operating_label
            caption = (f"Curves: the driver model of {ref} (a ramp behind r_out, fitted to "
                       "its datasheet edges) into a lumped load at the pin"
                       + (f", without and with the {_f(e.rs, 'Ω')} series resistor" if e.rs
                          else "")
                       + ". Diamonds: the part's datasheet points. Cross: the engine's "
                       f"operating point, the 10–90 % rise {_f(e.operating[1], 's')} at the far "
                       f"end into {_f(e.operating[0], 'F')} (line and pins); the fall is "
                       f"{_f(e.operating_fall, 's')}.")
            charts.setdefault(place, []).append(_draw(
                key, "edge-vs-load", title, caption,
                lambda e=e, title=title, op_label=op_label: ch.edge_vs_load(
                    e.loads, np.vstack(list(e.curves.values())), series=list(e.curves),
                    points=e.points if len(e.points[0]) else None,
                    operating=(e.operating[0], e.operating[1], op_label),
                    curves_title=e.curves_title, edge_label="Edge time", title=title,
                    subtitle=e.subtitle)))
            title = f"Receiver waveforms: {bus.id} {sig.upper()} from {ref}"
            rx = ", ".join(w.receivers) or "no receiver"
            over = "; ".join(f"{n}: overshoot {_f(v, 'V')}" for n, v in w.overshoot.items())
            caption = (f"Voltage at the far end ({rx}) for a rising and a falling edge of "
                       f"{ref}" + (", with and without the series resistor" if e.rs else "")
                       + f". Shaded: the band between VIL {_f(w.v_il, 'V')} and VIH "
                       f"{_f(w.v_ih, 'V')}; dotted: VDD {_f(w.vdd, 'V')}. {over}."
                       + ("".join(f" {n}." for n in w.notes)))
            charts[place].append(_draw(
                keys(bus.id, sig, ref, "waveforms"), "waveforms", title, caption,
                lambda w=w, title=title, rx=rx: ch.waveforms(
                    w.t, w.traces, v_il=w.v_il, v_ih=w.v_ih, vdd=w.vdd, title=title,
                    subtitle=f"at {rx}")))
    sa = plotdata.workings(bus, design, result) if bus.protocol == "spi" else None
    if sa is not None and sa.terms:
        title = f"SPI timing budget: {bus.id} at {_f(bus.clock, 'Hz')}"
        key = keys(bus.id, "timing-budget")
        try:
            tb = plotdata.timing_budget_data(bus, design, analysis=sa)
        except PinlibError as err:
            charts.setdefault(("bus", bus.id), []).append(
                ReviewChart(key, "timing-budget", title, "", None, err.message))
            return
        caption = ("Each bar is one requirement the engine checks: the time it uses against "
                   "the time available (the tick: half the clock period, or the controller's "
                   "CS lead). Flights run from the driver's datasheet reference (50 % into its "
                   "test load) to the receiver's threshold on the real line; a term in the "
                   "requirement's favour (a clock that arrives late on a setup path, data "
                   "that arrives late on a hold path) is a credit that stacks left of zero. "
                   "The margin is written beside each bar.")
        charts.setdefault(("bus", bus.id), []).append(_draw(
            key, "timing-budget", title, caption,
            lambda tb=tb, title=title: ch.timing_budget(
                tb.rows, available=tb.available, margins=tb.margins, status=tb.status,
                title=title, subtitle=f"SPI mode {bus.spi_mode}, period "
                                      f"{_f(tb.period, 's')}")))


def _get(obj, name, default=None):
    if isinstance(obj, dict):
        return obj.get(name, default)
    return getattr(obj, name, default)


def _mc_entries(mc) -> list:
    items = _get(mc, "checks", None)
    if items is None:
        items = mc
    if isinstance(items, dict):
        items = list(items.values())
    return list(items or [])


def _mc_rows(mc) -> list[dict]:
    """One row per sampled check, from a :class:`pinlib.studies.whatif.McResult` (each check's
    per-board relative margins: a board passes when its margin is not negative) or from
    entries of the plain protocol in the module notes (samples of the checked value and
    its limit)."""
    import numpy as np

    rows = []
    for entry in _mc_entries(mc):
        passes = _get(entry, "passes")
        if passes is not None and hasattr(passes, "fraction"):  # pinlib.studies.whatif.McCheck
            margins = _get(entry, "margins")
            samples = None if margins is None else np.asarray(margins, dtype=float)
            lowest = entry.margin_quantiles((0.0,))[0] if hasattr(entry, "margin_quantiles") \
                else None
            rows.append({
                "where": _get(entry, "name") or _get(entry, "id", "check"),
                "samples": samples, "limit": 0.0, "unit": "%", "kind": "min",
                "label": f"Margin of {_get(entry, 'id', 'the check')}, relative to its limit",
                "fraction": float(passes.fraction), "ci": tuple(passes.interval),
                "count": f"{passes.passes}/{passes.n}",
                "varies": bool(_get(entry, "varies", True)),
                "failures": passes.passes < passes.n, "lowest": lowest,
                "sensitivity": list(_get(entry, "sensitivity", []) or [])[:3],
                "source": _get(entry, "source", "") or "",
                # a long run keeps the margins of its first boards only, and counts
                # every board's in bins
                "of": None if samples is None or samples.size >= passes.n else passes.n,
                "binned": None if samples is None or samples.size >= passes.n
                or _get(entry, "histogram") is None else entry.histogram.bins()})
            continue
        samples = _get(entry, "samples")
        if samples is None:
            continue
        samples = np.asarray(samples, dtype=float)
        finite = samples[np.isfinite(samples)]
        frac = _get(entry, "pass_fraction")
        where = " ".join(str(x) for x in (_get(entry, "path", ""), _get(entry, "id", "check"),
                                          _get(entry, "subject", "")) if x)
        rows.append({
            "where": where, "samples": samples, "limit": _get(entry, "limit"),
            "unit": _get(entry, "unit", "") or "", "kind": _get(entry, "kind", "max") or "max",
            "label": _get(entry, "label") or _get(entry, "id", "check"),
            "fraction": None if frac is None else float(frac), "ci": _get(entry, "ci"),
            "count": "", "varies": bool(finite.size and finite.max() > finite.min()),
            "failures": frac is not None and float(frac) < 1.0, "lowest": None,
            "sensitivity": [], "source": _get(entry, "source", "") or ""})
    return rows


#: At most this many Monte Carlo histograms: the checks with the lowest pass fractions
#: and margins (every sampled check that varies is in the table).
MC_CHARTS = 12


def _mc_charts(mc, keys) -> tuple[list, list]:
    from pinlib.present import charts as ch

    rows = _mc_rows(mc)
    shown = [r for r in rows if r["varies"] or r["failures"]]

    def order(r):
        frac = r["fraction"] if r["fraction"] is not None else 1.0
        low = r["lowest"] if r["lowest"] is not None else float("inf")
        return (frac, low)

    drawn = sorted((r for r in shown if r["samples"] is not None and r["varies"]),
                   key=order)[:MC_CHARTS]
    out = []
    for r in drawn:
        sub = None
        if r["fraction"] is not None:
            sub = f"pass fraction {r['fraction']:.2%}"
            if r["ci"] is not None:
                sub += f" ({float(r['ci'][0]):.2%} to {float(r['ci'][1]):.2%})"
        title = f"Monte Carlo: {r['where']}"
        limit = "margin 0 (the limit itself)" if r["unit"] == "%" and r["limit"] == 0.0 \
            else "the check's limit"
        boards = ("every sampled board" if not r.get("of") or r.get("binned") is not None
                  else f"the first {r['samples'].size:,} of the {r['of']:,} sampled boards")
        caption = (f"{r['label']} on {boards}. Bars in the pass colour hold boards "
                   f"that pass, in the fail colour boards that fail; the dashed line is "
                   f"{limit}.")
        out.append(_draw(keys("mc", r["where"]), "histogram", title, caption,
                         lambda r=r, t=title, sub=sub: ch.histogram(
                             r["samples"], limit=r["limit"], unit=r["unit"], label=r["label"],
                             limit_kind=r["kind"], title=t, subtitle=sub,
                             binned=r.get("binned"))))
    return out, shown


def _mc_summary(mc) -> list[str]:
    """Sentences about a Monte Carlo run: size, draws, seed, yields, notes."""
    out = []
    n, seed = _get(mc, "n"), _get(mc, "seed")
    bits = []
    if n is not None:
        bits.append(f"{int(n)} sampled boards")
    dist = _get(mc, "distribution")
    if dist:
        bits.append(f"{dist} within each tolerance" + (" (tolerance = 3σ)" if dist == "normal"
                                                        else ""))
    if seed is not None:
        bits.append(f"seed {seed}")
    if bits:
        out.append(", ".join(bits) + ".")
    conf, method = _get(mc, "confidence"), _get(mc, "method")
    if conf is not None and method:
        out.append(f"Pass fractions with {float(conf):.0%} {method}s.")
    board = _get(mc, "board")
    if board is not None and hasattr(board, "fraction"):
        out.append(f"Every sampled bus passes on {_yield(board)} of the boards.")
    for bus, y in (_get(mc, "buses") or {}).items():
        if hasattr(y, "fraction"):
            out.append(f"Bus {bus}: every check passes on {_yield(y)}.")
    out += [str(x) for x in (_get(mc, "notes") or [])]
    return out


def _yield(y) -> str:
    lo, hi = y.interval
    return f"{y.fraction:.2%} ({lo:.2%} to {hi:.2%}, {y.passes}/{y.n})"


def _mc_cells(row: dict) -> list[str]:
    frac = "" if row["fraction"] is None else f"{row['fraction']:.2%}"
    ci = "" if row["ci"] is None else f"{float(row['ci'][0]):.2%} to {float(row['ci'][1]):.2%}"
    low = "" if row["lowest"] is None else f"{row['lowest'] * 100:+.1f} %"
    sens = ", ".join(f"{n} {c:+.2f}" for n, c in row["sensitivity"]) or "—"
    return [row["where"], frac, ci, low, sens, row["source"]]


_MC_HEAD = ("Check", "Pass fraction", "Confidence interval", "Lowest margin",
            "Most sensitive to (standardized coefficient)", "Source of the limit")


def build_review(design, result: DesignResult, *, changes=None, mc=None) -> Review:
    """Compute every chart and table of a design review once.

    Parameters
    ----------
    design : Design
        The loaded design (:func:`pinlib.model.design.load_design`).
    result : DesignResult
        Its result (:func:`pinlib.engines.dispatch.check_design`).
    changes : ChangeList, optional
        The change list against the saved snapshot
        (:func:`pinlib.studies.compare.compare_with_snapshot`); None: no snapshot.
    mc : McResult, optional
        A Monte Carlo run (:func:`pinlib.studies.whatif.monte_carlo`), or samples in the plain
        protocol of the module notes.

    Returns
    -------
    Review
    """
    from pinlib.studies.compare import snapshot

    keys = _Keys()
    charts: dict = {}
    by_id = {b.id: b for b in design.buses}
    for br in result.buses:
        bus = by_id.get(br.id)
        if bus is None or not (br.checks or br.segments or br.lines or br.figures):
            continue  # not evaluated (no engine): nothing to draw
        if bus.protocol in OPEN_DRAIN_PROTOCOLS:
            _pullup_charts(bus, design, br, keys, charts)
        elif bus.protocol in PUSH_PULL_PROTOCOLS:
            _push_pull_charts(bus, design, br, keys, charts)
    mc_charts, mc_entries = _mc_charts(mc, keys) if mc is not None else ([], [])
    parts = snapshot(design, result).get("parts", {})
    return Review(design, result, changes, mc, charts, mc_charts, mc_entries, parts)


def render_html(design, result: DesignResult, *, changes=None, mc=None) -> str:
    """A self-contained design-review page (see the module notes).

    Parameters
    ----------
    design : Design
        The loaded design.
    result : DesignResult
        Its result.
    changes : ChangeList, optional
        The change list against the saved snapshot; None when there is none.
    mc : object, optional
        A Monte Carlo result.

    Returns
    -------
    str
        The HTML document: no script, no external resource, the charts inline.
    """
    return build_review(design, result, changes=changes, mc=mc).html()


def render_markdown(design, result: DesignResult, *, changes=None, mc=None,
                    chart_dir: str | None = None) -> str:
    """The design review as Markdown.

    Parameters
    ----------
    design, result, changes, mc
        As for :func:`render_html`.
    chart_dir : str, optional
        With a folder name, charts are linked as ``chart_dir/<key>.svg`` (write the
        files with :meth:`Review.markdown`, as ``pinlib report --md`` does); without one
        (the default) each chart is embedded as a ``data:image/svg+xml`` URI.

    Returns
    -------
    str
        The Markdown text.
    """
    text, _ = build_review(design, result, changes=changes, mc=mc).markdown(chart_dir)
    return text


# =========================================================================== shared text


def _margin(c: Check) -> str:
    return margin_text(c)


def _value(value, unit: str) -> str:
    if isinstance(value, bool):
        return "yes" if value else "no"
    return format_value(value, unit)


def _check_cells(c: Check) -> tuple[str, str]:
    """A check's value and limit as text; a yes/no check shows its answer and no limit."""
    value = ("yes" if c.value else "no") if isinstance(c.value, bool) else _value(c.value,
                                                                                   c.unit)
    limit = "" if isinstance(c.limit, bool) else _value(c.limit, c.unit)
    return value, limit


def _message(c: Check) -> str:
    text = c.message
    if c.fix and c.fix not in text:
        text += f"; fix: {c.fix}"
    return text


def _counts(result: DesignResult) -> dict:
    counts = {s: 0 for s in ("pass", "warn", "fail")}
    for b in result.buses:
        for _, _, c in b.all_checks():
            counts[c.status] += 1
    return counts


def _bus_counts(b: BusResult) -> dict:
    counts = {s: 0 for s in ("pass", "warn", "fail")}
    for _, _, c in b.all_checks():
        counts[c.status] += 1
    return counts


def _groups(b: BusResult):
    """(heading, anchor suffix, group, chart place) of a bus, in report order."""
    yield None, "", b, ("bus", b.id)
    for s in b.segments:
        yield f"Segment {s.id}", f"-seg-{_slug(s.id)}", s, ("segment", b.id, s.id)
    for ln in b.lines:
        yield f"Line {ln.signal.upper()}", f"-line-{_slug(ln.signal)}", ln, \
            ("line", b.id, ln.signal)


def _part_value(entry: dict) -> str:
    if "scale" in entry:
        shown = entry.get("text") or ""
        if entry.get("vdd") is not None and entry.get("value") is not None \
                and entry.get("scale"):
            shown += f" = {_f(entry['value'], 'V')} at {_f(entry['vdd'], 'V')}"
        return shown
    v = entry.get("value")
    unit = entry.get("unit", "")
    if isinstance(v, bool):
        return "yes" if v else "no"
    if isinstance(v, (int, float)) and unit:
        return format_si(v, unit)
    if v is None:
        return entry.get("text", "—")
    return str(v)


def _origin(entry: dict, part_id: str) -> str:
    origin = entry.get("origin")
    if not origin:
        return "—"
    return "this part" if origin == part_id else f"inherited from {origin}"


def _basis(entry: dict) -> str:
    b = entry.get("basis") or "—"
    if entry.get("provenance") == "part":
        b += " (file provenance)"
    return b


def _typ(entry: dict) -> str:
    t = entry.get("typ")
    if t is None:
        return ""
    if isinstance(t, (int, float)) and entry.get("unit"):
        return format_si(t, entry["unit"])
    return str(t)


def _part_heading(ref: str, p: dict) -> str:
    return f"{ref}: {p.get('part')} — {p.get('title', '')}"


def _part_facts(p: dict) -> list[tuple[str, str]]:
    facts = [("category", p.get("category", "")), ("role", p.get("role", "")),
             ("buses", ", ".join(p.get("buses", [])))]
    if p.get("file"):
        facts.append(("library file", p["file"]))
    chain = p.get("chain") or []
    if len(chain) > 1:
        facts.append(("inherits", " → ".join(chain)))
    if p.get("overrides"):
        facts.append(("overrides the built-in", p["overrides"]))
    prov = p.get("basis", "")
    if p.get("source"):
        prov += f": {p['source']}"
    if p.get("recorded"):
        prov += f" (recorded {p['recorded']})"
    facts.append(("provenance", prov))
    rails = p.get("rails") or {}
    if rails:
        facts.append(("rail", ", ".join((f"side {k} " if k else "") + _f(v, "V")
                                        for k, v in rails.items() if v is not None)))
    return facts


def _no_snapshot_text(design) -> str:
    path = getattr(design, "path", None)
    shown = str(path) if path else "DESIGN"
    return M.NO_SNAPSHOT_TO_COMPARE.format(design=shown)


# =========================================================================== HTML


def _e(text) -> str:
    return html.escape(str(text), quote=True)


def _badge(status: str) -> str:
    return f'<span class="status s-{status}">{_MARK[status]}</span>'


class _Html:
    def __init__(self, review: Review):
        self.r = review
        self.out: list[str] = []

    def w(self, *lines: str) -> None:
        self.out.extend(lines)

    # -------------------------------------------------------------- page
    def page(self) -> str:
        r = self.r
        res = r.result
        counts = _counts(res)
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
               f"{_e(_STATUS_WORD[res.status])} — {counts['pass']} checks pass, "
               f"{counts['warn']} warn, {counts['fail']} fail (warning below "
               f"{res.warn_margin:.0%} margin).</p>", "</header>")
        self.nav()
        self.w("<main>")
        self.summary()
        for b in res.buses:
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
        for b in self.r.result.buses:
            items.append(f'<li><a href="#bus-{_slug(b.id)}">Bus {_e(b.id)} '
                         f"({_e(b.protocol)})</a> {_badge(b.status)}</li>")
        if self.r.mc is not None:
            items.append('<li><a href="#monte-carlo">Monte Carlo</a></li>')
        items += ['<li><a href="#parts">Parts and the provenance of their values</a></li>',
                  '<li><a href="#changes">Changes against the snapshot</a></li>']
        self.w('<nav aria-label="Contents"><h2>Contents</h2><ol>', *items, "</ol></nav>")

    def summary(self):
        self.w('<section id="summary" aria-labelledby="h-summary">',
               '<h2 id="h-summary">Summary</h2>', "<table>",
               "<thead><tr><th scope=\"col\">Bus</th><th scope=\"col\">Protocol</th>"
               "<th scope=\"col\">Status</th><th scope=\"col\">Pass</th>"
               "<th scope=\"col\">Warn</th><th scope=\"col\">Fail</th>"
               "<th scope=\"col\">Charts</th></tr></thead>", "<tbody>")
        for b in self.r.result.buses:
            c = _bus_counts(b)
            n = sum(len(self.r.charts.get(place, [])) for *_, place in _groups(b))
            self.w(f'<tr class="r-{b.status}"><td><a href="#bus-{_slug(b.id)}">{_e(b.id)}</a>'
                   f"</td><td>{_e(b.protocol)}</td><td>{_badge(b.status)}</td>"
                   f'<td class="num">{c["pass"]}</td><td class="num">{c["warn"]}</td>'
                   f'<td class="num">{c["fail"]}</td><td class="num">{n}</td></tr>')
        self.w("</tbody></table>")
        if self.r.result.notes:
            self.w('<ul class="notes">', *[f"<li>{_e(n)}</li>" for n in self.r.result.notes],
                   "</ul>")
        self.w("</section>")

    # -------------------------------------------------------------- buses
    def bus(self, b: BusResult):
        anchor = f"bus-{_slug(b.id)}"
        design_bus = next((x for x in self.r.design.buses if x.id == b.id), None)
        heading = f"Bus {b.id} ({b.protocol})"
        self.w(f'<section id="{anchor}" aria-labelledby="h-{anchor}">',
               f'<h2 id="h-{anchor}">{_e(heading)} {_badge(b.status)}</h2>')
        if design_bus is not None and design_bus.title:
            self.w(f'<p class="meta">{_e(design_bus.title)}</p>')
        for head, suffix, grp, place in _groups(b):
            if head is None:
                self.group(grp, place, f"{b.id}", level=3)
                continue
            sid = anchor + suffix
            self.w(f'<section id="{sid}" aria-labelledby="h-{sid}">',
                   f'<h3 id="h-{sid}">{_e(head)} {_badge(grp.status)}</h3>')
            self.group(grp, place, f"{b.id} {head.lower()}", level=4)
            self.w("</section>")
        self.w("</section>")

    def group(self, g: Group, place, label: str, level: int):
        h = f"h{level}"
        if g.figures:
            self.w(f"<{h}>Figures</{h}>", f'<dl class="figs" aria-label="Figures of {_e(label)}">')
            for name, f in g.figures.items():
                self.w(f"<div><dt><code>{_e(name)}</code></dt>"
                       f"<dd>{_e(_value(f.value, f.unit))}</dd></div>")
            self.w("</dl>")
        if g.checks:
            self.w(f"<{h}>Checks</{h}>", "<table>",
                   f"<caption class=\"visually-hidden\">Checks of {_e(label)}</caption>",
                   "<thead><tr>" + "".join(f'<th scope="col">{x}</th>' for x in (
                       "Status", "Check", "Subject", "Value", "Limit", "Margin", "Finding",
                       "Source of the limit")) + "</tr></thead><tbody>")
            for c in g.checks:
                value, limit = _check_cells(c)
                self.w(f'<tr class="r-{c.status}"><td>{_badge(c.status)}</td>'
                       f"<td><code>{_e(c.id)}</code></td><td>{_e(c.subject or '')}</td>"
                       f'<td class="num">{_e(value)}</td><td class="num">{_e(limit)}</td>'
                       f'<td class="num">{_e(_margin(c))}</td>'
                       f'<td class="msg">{_e(_message(c))}</td>'
                       f'<td class="src">{_e(c.source)}</td></tr>')
            self.w("</tbody></table>")
        charts = self.r.charts.get(place, [])
        if charts:
            self.w(f"<{h}>Charts</{h}>", '<div class="charts">')
            for chart in charts:
                self.chart(chart)
            self.w("</div>")
        if g.notes:
            self.w(f"<{h}>Notes</{h}>", '<ul class="notes">',
                   *[f"<li>{_e(n)}</li>" for n in g.notes], "</ul>")

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
            self.w("<table><caption>Checks whose margin varies over the boards, or that fail "
                   "on some</caption><thead><tr>"
                   + "".join(f'<th scope="col">{_e(x)}</th>' for x in _MC_HEAD)
                   + "</tr></thead><tbody>")
            for row in rows:
                cells = _mc_cells(row)
                cls = ' class="r-fail"' if row["failures"] else ""
                self.w(f"<tr{cls}><td>{_e(cells[0])}</td>"
                       + "".join(f'<td class="num">{_e(c)}</td>' for c in cells[1:4])
                       + f"<td>{_e(cells[4])}</td><td class=\"src\">{_e(cells[5])}</td></tr>")
            self.w("</tbody></table>")
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
            self.w("</dl>", "<table>",
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
            self.w("</tbody></table>", "</section>")
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
        from pinlib.studies.compare import format_change, format_figure

        pct = f"{cl.threshold * 100:g} %"
        when = f" saved {cl.old_created}" if cl.old_created else ""
        old = _badge(cl.old_status) if cl.old_status in _MARK else _e(cl.old_status or "—")
        new = _badge(cl.new_status) if cl.new_status in _MARK else _e(cl.new_status or "—")
        self.w(f"<p>Against the snapshot{_e(when)}: status {old} → {new}.</p>")
        if cl.empty:
            self.w(f'<p class="none">No check changed status, no figure moved more than '
                   f"{_e(pct)}, no part value differs.</p>")
        if cl.status_changes:
            self.w("<h3>Checks whose status changed</h3>", "<table><thead><tr>"
                   + "".join(f'<th scope="col">{x}</th>' for x in (
                       "Where", "Check", "Subject", "Before", "After", "Value", "Limit",
                       "Source of the limit")) + "</tr></thead><tbody>")
            for c in cl.status_changes:
                before = _badge(c.old) if c.old in _MARK else "(absent)"
                after = _badge(c.new) if c.new in _MARK else "(absent)"
                subj = (c.subject or "") + (f" (was {c.old_subject})" if c.old_subject else "")
                value = (f"{format_figure(c.old_value, c.unit)} → "
                         f"{format_figure(c.new_value, c.unit)}")
                limit = c.new_limit if c.new is not None else c.old_limit
                limit_s = "" if isinstance(limit, bool) or limit is None else \
                    format_figure(limit, c.unit)
                self.w(f'<tr class="r-{c.new or "fail"}"><td>{_e(c.path)}</td>'
                       f"<td><code>{_e(c.check)}</code></td><td>{_e(subj)}</td>"
                       f"<td>{before}</td><td>{after}</td><td class=\"num\">{_e(value)}</td>"
                       f'<td class="num">{_e(limit_s)}</td><td class="src">{_e(c.source)}'
                       "</td></tr>")
            self.w("</tbody></table>")
        if cl.figure_changes:
            self.w(f"<h3>Figures that moved more than {_e(pct)}</h3>", "<table><thead><tr>"
                   + "".join(f'<th scope="col">{x}</th>' for x in (
                       "Where", "Figure", "Before", "After", "Change")) + "</tr></thead><tbody>")
            for f in cl.figure_changes:
                self.w(f"<tr><td>{_e(f.path)}</td><td><code>{_e(f.name)}</code></td>"
                       f'<td class="num">{_e(format_figure(f.old, f.unit))}</td>'
                       f'<td class="num">{_e(format_figure(f.new, f.unit))}</td>'
                       f'<td class="num">{_e(format_change(f.change) or f.kind)}</td></tr>')
            self.w("</tbody></table>")
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


# =========================================================================== Markdown


# Every user-written text (titles, ids, descriptions, sources, part values, paths) goes
# through _mt: one line (newlines and runs of spaces become one space), the characters
# that start inline Markdown escaped (emphasis, code, links and images, tables,
# strikethrough), the HTML ones as entities, and a block marker at its start (a heading,
# a list, a quote) made plain.  It cannot end a table, open a code block or add an image.
_MD_INLINE = str.maketrans({**{c: "\\" + c for c in "\\`*_[]|~"},
                            "<": "&lt;", ">": "&gt;", "&": "&amp;"})
# a heading (# x), a bullet (- x, + x), a rule or heading underline (---, ===), a
# numbered item (1. x): each only with the space or line end that makes it one
_MD_LINE_START = re.compile(r"^(?:(#{1,6}|[+-])(?=\s|$)|([=-])(?=[=\-\s]*$)"
                            r"|(\d{1,9})([.)])(?=\s|$))")


def _mt(text) -> str:
    """User text for Markdown: one line in which nothing is markup (see above)."""
    s = " ".join(str(text).split()).translate(_MD_INLINE)
    return _MD_LINE_START.sub(_plain_start, s, count=1)


def _plain_start(m: re.Match) -> str:
    if m.group(3):
        return m.group(3) + "\\" + m.group(4)
    return "\\" + m.group(0)


def _m(text) -> str:
    """Text for a Markdown table cell (``|`` is escaped by _mt as well)."""
    return _mt(text)


def _code(text) -> str:
    """Text shown as inline code, whatever backticks it holds: the fence is longer than
    any run of backticks inside (CommonMark code spans), and the text is one line."""
    s = " ".join(str(text).split())
    run = max((len(r) for r in re.findall(r"`+", s)), default=0)
    fence = "`" * (run + 1)
    pad = " " if s.startswith("`") or s.endswith("`") or not s else ""
    return f"{fence}{pad}{s}{pad}{fence}".replace("|", "\\|")


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


def _row(cells) -> str:
    return "| " + " | ".join(cells) + " |"


def _table(head, rows) -> list[str]:
    return [_row(head), _row(["---"] * len(head))] + [_row(r) for r in rows] + [""]


class _Markdown:
    def __init__(self, review: Review, chart_dir: str | None):
        self.r = review
        self.dir = chart_dir.rstrip("/") if chart_dir else None
        self.out: list[str] = []
        self.files: dict[str, str] = {}

    def w(self, *lines: str) -> None:
        self.out.extend(lines)

    def page(self) -> tuple[str, dict[str, str]]:
        r, res = self.r, self.r.result
        counts = _counts(res)
        self.w(f"# Design review: {_mt(res.design)}", "",
               f"> **Caution.** {_mt(CAUTION)}", "")
        if res.path:
            self.w(f"Design file: {_code(res.path)}", "")
        desc = getattr(r.design, "description", None)
        if desc:
            self.w(_mt(desc), "")
        self.w(f"**Overall: {_MARK[res.status]}** — the design {_STATUS_WORD[res.status]}: "
               f"{counts['pass']} checks pass, {counts['warn']} warn, {counts['fail']} fail "
               f"(warning below {res.warn_margin:.0%} margin).", "")
        self.w("## Summary", "")
        rows = []
        for b in res.buses:
            c = _bus_counts(b)
            rows.append([_m(b.id), _m(b.protocol), f"**{_MARK[b.status]}**", str(c["pass"]),
                         str(c["warn"]), str(c["fail"])])
        self.w(*_table(["Bus", "Protocol", "Status", "Pass", "Warn", "Fail"], rows))
        for n in res.notes:
            self.w(f"- {_mt(n)}")
        for b in res.buses:
            self.bus(b)
        if r.mc is not None:
            self.monte_carlo()
        self.parts()
        self.changes()
        self.w("---", "", f"Made by pinlib {__version__}. {_mt(CAUTION)}", "")
        return "\n".join(self.out), self.files

    def bus(self, b: BusResult):
        design_bus = next((x for x in self.r.design.buses if x.id == b.id), None)
        self.w(f"## Bus {_mt(b.id)} ({b.protocol}): {_MARK[b.status]}", "")
        if design_bus is not None and design_bus.title:
            self.w(f"*{_mt(design_bus.title)}*", "")
        for head, _, grp, place in _groups(b):
            if head is None:
                self.group(grp, place, "###")
                continue
            self.w(f"### {_mt(head)}: {_MARK[grp.status]}", "")
            self.group(grp, place, "####")

    def group(self, g: Group, place, h: str):
        if g.figures:
            self.w(f"{h} Figures", "")
            self.w(*_table(["Figure", "Value"],
                           [[f"`{name}`", _m(_value(f.value, f.unit))]
                            for name, f in g.figures.items()]))
        if g.checks:
            self.w(f"{h} Checks", "")
            rows = []
            for c in g.checks:
                value, limit = _check_cells(c)
                rows.append([f"**{_MARK[c.status]}**", f"`{c.id}`", _m(c.subject or ""),
                             _m(value), _m(limit), _m(_margin(c)), _m(_message(c)),
                             _m(c.source)])
            self.w(*_table(["Status", "Check", "Subject", "Value", "Limit", "Margin",
                            "Finding", "Source of the limit"], rows))
        charts = self.r.charts.get(place, [])
        if charts:
            self.w(f"{h} Charts", "")
            for chart in charts:
                self.chart(chart)
        if g.notes:
            self.w(f"{h} Notes", "", *[f"- {_mt(n)}" for n in g.notes], "")

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
        self.w(f"![{_mt(alt)}]({target})", "", f"*{_mt(chart.title)}.* {_mt(chart.caption)}",
               "")

    def monte_carlo(self):
        self.w("## Monte Carlo", "")
        for line in _mc_summary(self.r.mc):
            self.w(_mt(line), "")
        if self.r.mc_entries:
            self.w(*_table(list(_MC_HEAD), [[_m(c) for c in _mc_cells(r)]
                                            for r in self.r.mc_entries]))
        for chart in self.r.mc_charts:
            self.chart(chart)

    def parts(self):
        from pinlib.studies.compare import value_label

        self.w("## Parts and the provenance of their values", "",
               "Every value as the library resolved it: its basis, its source, and the part "
               "file that set it (this part, or a class it inherits from). A basis marked *file "
               "provenance* is not stated on the value itself: it is the provenance of the part "
               "file that set it.", "")
        for ref, p in self.r.parts.items():
            self.w(f"### {_mt(_part_heading(ref, p))}", "")
            for k, v in _part_facts(p):
                self.w(f"- {k}: {_mt(v)}")
            self.w("")
            rows = [[_code(value_label(key)), _m(_part_value(e)), _m(_typ(e)), _m(_basis(e)),
                     _m(e.get("source", "—")), _m(_origin(e, p.get("part", "")))]
                    for key, e in (p.get("values") or {}).items()]
            self.w(*_table(["Value", "Resolved", "Typical", "Basis", "Source", "Set in"],
                           rows))

    def changes(self):
        cl = self.r.changes
        self.w("## Changes against the snapshot", "")
        if cl is None:
            path = getattr(self.r.design, "path", None)
            self.w(_with_code(M.NO_SNAPSHOT_TO_COMPARE, design=str(path) if path else "DESIGN"),
                   "")
            return
        self.w(*_fenced(cl.format_text().rstrip("\n")), "")
