"""Tests of the design-review report (pinlib.present.review), its chart data
(pinlib.present.plotdata) and ``pinlib report``.

The demo design (an invented scenario, workbooks/designs/demo-board.toml) is reported
once per module.  The checks are on what the report must hold (the caution, every
chart's SVG, every check's source, the parts' provenance, the change list), on the
chart data agreeing with the figures the engines report, and — in headless Chromium —
on the page actually rendering without console errors.

What the browser test checks, and how:

* the page renders: a 1280 × 2000 screenshot of its top, decoded with the small PNG
  reader below (zlib and numpy only), has more than 2 % non-white pixels, at least 50
  distinct colours (quantised to 4 bits per channel), and the status badges' colours
  (Okabe–Ito bluish green for PASS, orange for WARN: the demo has both);
* every chart's SVG is in the browser's DOM: ``--dump-dom`` serialises the parsed
  document, and it holds one ``<svg`` per chart inside the chart figures;
* the page logs nothing to the console: Chromium run with ``--enable-logging=stderr
  --v=0`` writes every console message (errors and uncaught exceptions included) as
  an ``INFO:CONSOLE`` line; none may appear, nor an ``Uncaught`` exception.  The page
  has no script, so any console line means something went wrong;
* a control page with a deliberate script error and a blank page make the same
  detectors fire, so the checks can fail.
"""

from __future__ import annotations

import base64
import html
import math
import re
import shutil
import subprocess
from html.parser import HTMLParser
from pathlib import Path

import numpy as np
import pytest
from pngcheck import png_pixels

from pinlib.cli import main
from pinlib.core.labels import sampled_check_label
from pinlib.engines.dispatch import check_design
from pinlib.model.design import load_design
from pinlib.model.result import CAUTION
from pinlib.physics import pullup as pu
from pinlib.present import plotdata, review
from pinlib.studies.compare import (
    compare_with_snapshot,
    format_figure,
    save_snapshot,
    snapshot,
    value_label,
)

pytest.importorskip("altair")
pytest.importorskip("vl_convert")

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "workbooks" / "designs" / "demo-board.toml"

# published: UM10204 rev. 6, §7.1: the 30-70 % rise of an RC is ln(7/3)·RC = 0.8473·RC,
# so eq. 1 reads Rp(max) = tr / (0.8473 Cb); table 10: Fast-mode tr(max) 300 ns.
UM10204_RISE_FACTOR = 0.8473
FAST_MODE_TR_MAX = 300e-9

# from the part files of the demo (pinlib/devices/controller/mcu-3v3.toml and
# pinlib/devices/memory/nor-flash-spi.toml, invented generic values)
MCU_SCLK_EDGES = [(15e-12, 2.5e-9, 2.5e-9), (50e-12, 5e-9, 4.5e-9)]   # load, rise, fall
MCU_T_VALID, MCU_T_SETUP = 8e-9, 6e-9
FLASH_T_VALID, FLASH_T_SETUP = 7e-9, 2e-9

# Okabe–Ito colours of the status badges (B. Wong, Nature Methods 8, 441 (2011), fig. 2)
BLUISH_GREEN = (0, 158, 115)
ORANGE = (230, 159, 0)


# =========================================================================== fixtures


@pytest.fixture(scope="module")
def demo():
    design = load_design(DEMO)
    return design, check_design(design)


@pytest.fixture(scope="module")
def built(demo):
    design, result = demo
    return review.build_review(design, result)


@pytest.fixture(scope="module")
def page(built):
    return built.html()


def _expected_charts(design) -> dict[str, int]:
    """How many charts of each kind the demo's structure calls for."""
    n = {"pullup-window": 0, "edge-vs-load": 0, "waveforms": 0, "timing-budget": 0,
         "noise-vs-spacing": 0}
    for bus in design.buses:
        if bus.protocol in ("i2c", "smbus"):
            n["pullup-window"] += 2 * len(bus.segments)      # SDA and SCL of each segment
        elif bus.protocol == "spi":
            n["timing-budget"] += 1
            for sig in bus.lines:
                if sig == "cipo":  # each peripheral with a push-pull CIPO drives it
                    drivers = sum(
                        1 for d in bus.peripherals
                        if (p := d.part.pin_for("spi-cipo")) and p[1].drive == "push-pull")
                else:              # the controller drives SCLK, COPI and CS
                    drivers = 1
                n["edge-vs-load"] += drivers
                n["waveforms"] += drivers
    n["noise-vs-spacing"] += len(design.couplings)  # and its victim's waveforms, held
    n["waveforms"] += 2 * len(design.couplings)     # low and held high on axes of their own
    return n


_FIGURE = re.compile(r'<figure id="chart-([^"]+)" data-chart="([^"]+)">(.*?)</figure>', re.S)


def _figures_by_kind(text: str) -> dict[str, list[str]]:
    out: dict[str, list[str]] = {}
    for _key, kind, body in _FIGURE.findall(text):
        out.setdefault(kind, []).append(body)
    return out


# =========================================================================== the report


def test_caution_is_at_the_top(page, built):
    first_section = page.index("<section")
    assert html.escape(CAUTION) in page[:first_section]
    assert page.index(html.escape(CAUTION)) < page.index("<main>")
    md, _ = built.markdown()
    lines = md.splitlines()
    assert lines[2].startswith("> **Caution.** ")
    quote = [ln for ln in lines[2:lines.index("", 2)]]
    assert all(ln.startswith("> ") and len(ln) <= 80 for ln in quote)
    assert " ".join(ln[2:] for ln in quote) == f"**Caution.** {CAUTION}"


def _flat(text: str) -> str:
    """Text with every run of white space one space: Markdown wrapped at 80 columns
    compared with a one-line text."""
    return " ".join(text.split())


def _md_items(md: str) -> list[str]:
    """The numbered items of the Markdown (the checks' findings), each on one line."""
    items: list[str] = []
    for ln in md.splitlines():
        m = re.match(r"^\d+\.\s+(.*)$", ln)
        if m:
            items.append(m.group(1))
        elif items and ln.startswith("    ") and ln.strip():
            items[-1] += " " + ln.strip()
        elif not ln.strip() and items and not items[-1].endswith("\n"):
            items[-1] += "\n"
    return [i.strip() for i in items]


def test_every_chart_svg_is_present(page, demo):
    design, _ = demo
    expected = _expected_charts(design)
    # the demo: 3 open-drain segments, two SPI buses with 4 and 3 routed lines, one
    # coupling
    assert expected == {"pullup-window": 6, "edge-vs-load": 7, "waveforms": 9,
                        "timing-budget": 2, "noise-vs-spacing": 1}
    found = _figures_by_kind(page)
    for kind, n in expected.items():
        bodies = found.get(kind, [])
        assert len(bodies) == n, kind
        assert all(b.count("<svg") == 1 for b in bodies), kind
        assert all("Chart not drawn" not in b for b in bodies), kind
    assert page.count("<svg") == sum(expected.values())  # no other SVG on the page


def test_every_check_names_its_source(page, built, demo):
    _, result = demo
    md, _ = built.markdown()
    n = 0
    for bus in result.buses:
        for _seg, _sig, c in bus.all_checks():
            assert c.source, (bus.id, c.id)
            assert f'<td class="src">{html.escape(c.source)}</td>' in page, (bus.id, c.id)
            assert _flat(review._m(c.source)) in _flat(md), (bus.id, c.id)
            n += 1
    # every check row carries its status as text as well as colour
    rows = re.findall(r'<tr class="r-(pass|warn|fail)"><td><span class="status s-(\w+)">(\w+)<',
                      page)
    assert len(rows) >= n
    assert all(a == b and c == b.upper() for a, b, c in rows)


def test_a_fix_only_on_checks_that_fail_or_warn(page, built, demo):
    """Advice goes with a problem: a passing check's row carries no fix (the line-delay
    check states what would help whatever its status), a failing or warning one's does,
    on both pages."""
    _, result = demo
    checks = [c for b in result.results() for _, _, c in b.all_checks()]
    passing = [c for c in checks if c.status == "pass" and c.fix]
    advised = [c for c in checks if c.status != "pass" and c.fix]
    assert passing and advised  # the demo has both
    md, _ = built.markdown()
    items = [i for i in _md_items(md) if i.startswith("**PASS**")]   # the findings
    assert items and not any("fix:" in i for i in items)
    rows = re.findall(r'<tr class="r-pass">.*?</tr>', page, re.S)
    assert rows and not any("fix:" in r for r in rows)
    for c in passing:
        assert _flat(review._m(c.fix)) not in _flat(md) and html.escape(c.fix) not in page
    for c in advised:
        assert _flat(review._m(c.fix)) in _flat(md) and html.escape(c.fix) in page


def test_figures_under_readable_labels_each_quantity_once(page, built, demo):
    """The Figures tables read as `check --detail` does: a label, not an id, and a
    quantity that repeats another (a line's copy of the bus figure, the pull-up twice)
    shown once (pinlib.core.labels.shown_figures)."""
    from pinlib.core.labels import figure_label, shown_figures
    from pinlib.model.result import figure_text
    from pinlib.present.values import search_bound_words

    _, result = demo
    md, _ = built.markdown()
    groups = [g for b in result.results() for _, _, g, _ in review.text._groups(b)
              if g.figures]
    shown = [(n, g.figures[n], g) for g in groups for n in shown_figures(g.figures)]
    every = sum(len(g.figures) for g in groups)
    assert 0 < len(shown) < every  # the demo repeats some quantities
    md_rows = re.findall(r"^\| (?!Figure \|)(?!---)([^|]+) \| ([^|]+) \|$", md, re.M)
    html_rows = re.findall(r'<div><dt>(.*?)</dt><dd(?: class="words")?>(.*?)</dd></div>', page)
    assert len(md_rows) == len(html_rows) == len(shown)
    for (name, f, g), (md_label, md_value), (h_label, h_value) in zip(
            shown, md_rows, html_rows, strict=True):
        # a figure without a number shows its reason (figure_text), as in --detail; a
        # search's result at the search's own bound says so ("18 µm or less")
        value = review.text._value(f.value, f.unit) if not f.reason else figure_text(f)
        value += search_bound_words(g.figures, name)
        label = figure_label(name)
        assert (md_label, md_value) == (review._m(label), review._m(value))
        assert (h_label, h_value) == (html.escape(label), html.escape(value))
    cells = {label for label, _ in md_rows} | {label for label, _ in html_rows}
    for raw in ("rise_time_10_90", "max_clock_limited_by", "bus_capacitance_sda"):
        assert not any(raw in c or review._m(raw) in c for c in cells)
    assert "Highest clock set by" in md and "Rise time, 10–90 %" in md
    # the demo's crosstalk searches end at their own bounds: no spacing searched fails
    # (the coupling's own figures spacing_searched_from and length_searched_to)
    (coupling,) = result.couplings
    low = review._m(review.text._value(coupling.figures["spacing_searched_from"].value, "m"))
    assert f"| Minimum spacing | {low} or less |" in md, md
    assert f"<dt>Minimum spacing</dt><dd>{html.escape(low)} or less</dd>" in page


def test_check_rows_name_checks_by_label(page, built, demo):
    """The Checks tables name a check as `check --detail` does ("Line delay ≤ clock
    period"), not by its id (`line-delay`); the page keeps the id in the cell's title."""
    from pinlib.core.labels import check_label

    _, result = demo
    md, _ = built.markdown()
    ids = {c.id for b in result.results() for _, _, c in b.all_checks()}
    assert "line-delay" in ids
    for cid in ids:
        assert f"`{cid}`" not in md and f"<code>{cid}</code>" not in page
        assert f"| {review._m(check_label(cid))} |" in md
        assert f'<td title="{cid}">{html.escape(check_label(cid))}</td>' in page


def test_parts_with_the_provenance_of_each_value(page, built, demo):
    design, result = demo
    parts = snapshot(design, result)["parts"]
    refs = {d.ref for b in design.buses for d in b.devices}
    assert set(parts) == refs
    inherited = 0
    for ref, p in parts.items():
        assert f'id="part-{review._slug(ref)}"' in page
        for key, entry in p["values"].items():
            assert html.escape(value_label(key)) in page
            if entry.get("source"):
                assert html.escape(entry["source"]) in page
            if entry.get("origin") and entry["origin"] != p["part"]:
                assert f"inherited from {html.escape(entry['origin'])}" in page
                inherited += 1
    # the demo's parts extend generic classes, so some values are inherited
    assert inherited > 0
    assert "generic" in page and "this part" in page


def test_page_is_self_contained_and_well_formed(page):
    assert page.startswith("<!DOCTYPE html>")
    assert '<html lang="en">' in page
    assert "<script" not in page.lower()
    assert "<link" not in page.lower()
    # every src/href points inside the page (SVG namespaces are attributes, not links)
    refs = re.findall(r'\b(?:src|href)\s*=\s*"([^"]*)"', page)
    assert refs and all(r.startswith("#") for r in refs)
    assert "url(http" not in page

    class Ids(HTMLParser):
        def __init__(self):
            super().__init__()
            self.ids = []
            self.h1 = 0

        def handle_starttag(self, tag, attrs):
            self.h1 += tag == "h1"
            self.ids += [v for k, v in attrs if k == "id"]

    p = Ids()
    p.feed(page)
    assert p.h1 == 1
    assert len(p.ids) == len(set(p.ids))
    targets = set(p.ids)
    assert all(r[1:] in targets for r in refs)


def test_units_carry_si_prefixes(page):
    # published: SI Brochure, 9th edition (BIPM 2019), table 7: p n µ m k M prefixes
    for text in ("pF", "kΩ", "ns", "mV", "MHz", "µ"):
        assert text in page
    assert not re.search(r"\d[eE][-+]?\d+ ?(F|s|Ω|V|Hz)\b", page)  # no "1.05e-10 F"


def test_markdown_with_chart_files_and_embedded(built, demo):
    design, _ = demo
    n = sum(_expected_charts(design).values())
    md, files = built.markdown("demo-charts")
    links = re.findall(r"!\[[^\]]*\]\(([^)]+)\)", md)
    assert len(links) == n == len(files)
    assert set(links) == set(files)
    assert all(t.startswith("demo-charts/") and t.endswith(".svg") for t in links)
    assert all(s.startswith("<?xml") and s.count("<svg") == 1 for s in files.values())
    assert "## Parts and the provenance of their values" in md
    assert _flat(review._no_snapshot_text(design)) in _flat(md)
    embedded, none = built.markdown()
    assert none == {}
    uris = re.findall(r"\(data:image/svg\+xml;base64,([A-Za-z0-9+/=]+)\)", embedded)
    assert len(uris) == n
    assert base64.b64decode(uris[0]).decode("utf-8").startswith("<svg")


def test_render_functions(demo):
    design, result = demo
    mc = _monte_carlo_result()
    text = review.render_html(design, result, mc=mc)
    kinds = _figures_by_kind(text)
    assert len(kinds["histogram"]) == 1 and kinds["histogram"][0].count("<svg") == 1
    assert f"{mc['checks'][0]['pass_fraction']:.2%}" in text
    assert 'id="monte-carlo"' in text
    md = review.render_markdown(design, result, mc=mc)
    assert "## Monte Carlo" in md and md.count("data:image/svg+xml") == 26


def test_raw_samples_that_differ_by_rounding_alone_do_not_vary():
    # a level check whose value follows one rail reads 0.42857142857142855 on one board
    # and ...87 on the next (derived: float rounding); such rows are not "varying" in the
    # report, as McCheck's rows are not (sensitivity.beyond_rounding)
    from pinlib.present.review.montecarlo import _mc_rows

    base = 3.0 / 7.0
    flat = np.array([base, np.nextafter(base, 1.0), base])
    moving = np.array([base, base * 1.01, base])
    mc = {"n": 3, "seed": 1, "checks": [
        {"path": "b", "id": "level-high", "subject": "U1", "samples": s, "limit": 0.5,
         "unit": "V", "kind": "max", "pass_fraction": 1.0, "ci": (0.3, 1.0)}
        for s in (flat, moving)]}
    assert [r["varies"] for r in _mc_rows(mc)] == [False, True]


def _monte_carlo_result() -> dict:
    """A small Monte Carlo run of one rise-time check, computed here: Rp uniform within
    ±5 % of 2.7 kΩ and Cb within ±20 % of 105 pF (the demo's main segment), rise
    0.8473·Rp·Cb (UM10204 rev. 6 §7.1) against the Fast-mode 300 ns."""
    rng = np.random.default_rng(7)
    rp = 2700.0 * rng.uniform(0.95, 1.05, 4000)
    cb = 105e-12 * rng.uniform(0.8, 1.2, 4000)
    tr = pu.rise_time(rp, cb, UM10204_RISE_FACTOR)
    frac = float(np.mean(tr <= FAST_MODE_TR_MAX))
    half = 1.96 * math.sqrt(frac * (1 - frac) / tr.size)  # normal approximation
    return {"n": tr.size, "seed": 7, "checks": [
        {"path": "sensors/main-3v3", "id": "rise-time", "subject": "SDA", "samples": tr,
         "limit": FAST_MODE_TR_MAX, "unit": "s", "kind": "max", "pass_fraction": frac,
         "ci": (frac - half, frac + half), "label": "Rise time",
         "source": "I2C-bus specification UM10204 rev. 6, table 10 (tr, tf)"}]}


# =========================================================================== chart data


def _group(result, bus_id, segment_id):
    b = result.bus(bus_id)
    return next(s for s in b.segments if s.id == segment_id) if b.segments else b


@pytest.mark.parametrize("bus_id", ["sensors", "power"])
def test_pullup_window_agrees_with_the_result(demo, bus_id):
    design, result = demo
    bus = design.bus(bus_id)
    for seg in bus.segments:
        grp = _group(result, bus_id, seg.id)
        for sig in ("sda", "scl"):
            d = plotdata.pullup_window_data(bus, design, seg.id, sig)
            assert d.chosen_cb == grp.figures[f"bus_capacitance_{sig}"].value
            assert d.chosen_rp == grp.figures[f"pullup_{sig}"].value
            window = next(c for c in grp.checks
                          if c.id == "pullup-window" and c.subject == sig.upper())
            assert d.rp_min == window.details["rp_min"]
            assert d.rp_max_chosen == pytest.approx(window.details["rp_max"], rel=1e-12)
            assert d.chosen_cb in d.cb
            assert np.all(np.diff(d.cb) > 0)
            # the demo's sensor segments are joined by the translator Q1: their Rp(min)
            # is the shared sink's, which the caption must say (invented demo design)
            assert d.shared == (bus_id == "sensors")
            if bus.protocol == "i2c":
                # published: UM10204 rev. 6 §7.1 eq. 1 with Fast-mode tr(max) 300 ns
                # (table 10); the factor is printed to 4 digits
                assert d.tr_max == FAST_MODE_TR_MAX
                expected = FAST_MODE_TR_MAX / (UM10204_RISE_FACTOR * d.cb)
                np.testing.assert_allclose(d.rp_max, expected, rtol=1e-4)
        assert grp.figures["rp_max"].value == pytest.approx(
            min(plotdata.pullup_window_data(bus, design, seg.id, s).rp_max_chosen
                for s in ("sda", "scl")), rel=1e-12)
    caption = next(c.caption for c in review.build_review(design, result).all_charts()
                   if c.kind == "pullup-window" and f": {bus_id} " in c.title)
    assert ("I(far)" in caption) == (bus_id == "sensors")


def _lines(design, result):
    for bus in design.buses:
        if bus.protocol != "spi":
            continue
        lines = plotdata.line_analyses(bus, design)
        for sig in lines:
            yield bus, lines, sig, next(ln for ln in result.bus(bus.id).lines
                                        if ln.signal == sig)


def test_edge_vs_load_agrees_with_the_result(demo):
    design, result = demo
    seen = 0
    for bus, lines, sig, ln in _lines(design, result):
        e = plotdata.edge_vs_load_data(bus, design, sig, analysis=lines)
        # one driver per line in the demo: its operating point is the line's figures
        assert e.operating == (ln.figures["load_capacitance"].value,
                               ln.figures["edge_rise_time"].value)
        assert e.operating_fall == ln.figures["edge_fall_time"].value
        assert e.rs == ln.figures["series_resistor"].value
        assert e.model == ln.figures["model"].value
        model = lines[sig].models[e.driver]
        # derived from a linear ramp into no load: its 10-90 % part is 0.8 of the ramp
        assert e.curves["rise 10–90 %"][0] == pytest.approx(0.8 * model.t_ramp_rise, rel=1e-9)
        assert e.curves["fall 10–90 %"][0] == pytest.approx(0.8 * model.t_ramp_fall, rel=1e-9)
        if e.rs > 0:
            # a series resistor only slows the edge into a load
            assert np.all(e.curves[f"rise 10–90 %, Rs {review._f(e.rs, 'Ω')}"][1:]
                          > e.curves["rise 10–90 %"][1:])
        if e.driver == "U1" and sig == "sclk":
            got = sorted(zip(e.points[0], e.points[1], e.points[2], strict=True))
            want = sorted([(c, r, "rise 10–90 %") for c, r, _ in MCU_SCLK_EDGES]
                          + [(c, f, "fall 10–90 %") for c, _, f in MCU_SCLK_EDGES])
            assert [(pytest.approx(a, rel=1e-12), pytest.approx(b, rel=1e-12), n)
                    for a, b, n in want] == got
            seen += 1
    assert seen == 2  # SCLK of both SPI buses


def _nominal_board(design):
    """The SPI buses as designed, no tolerance corners: what the charts draw (the result
    holds each check at its worst corner since issue 13.1)."""
    from pinlib.engines.dispatch import design_result
    from pinlib.engines.pushpull import evaluate_board

    return design_result(design, [evaluate_board(b, design) for b in design.buses
                                  if b.protocol == "spi"])


def test_waveforms_agree_with_the_result(demo):
    design, _ = demo
    result = _nominal_board(design)
    terminated = 0
    for bus, lines, sig, ln in _lines(design, result):
        w = plotdata.waveform_data(bus, design, sig, analysis=lines)
        rs = ln.figures["series_resistor"].value
        final = f"Rs {review._f(rs, 'Ω')}" if rs > 0 else "no series R"
        rise, fall = w.traces[f"rise, {final}"], w.traces[f"fall, {final}"]
        # the overshoot figure is "V above the supply", zero when the edge stays below it
        assert max(np.max(rise) - w.vdd, 0.0) == pytest.approx(ln.figures["overshoot"].value,
                                                     rel=1e-12, abs=1e-15)
        assert max(-np.min(fall), 0.0) == pytest.approx(ln.figures["undershoot"].value, rel=1e-12,
                                              abs=1e-15)
        assert w.overshoot[f"rise, {final}"] == ln.figures["overshoot"].value
        high = ln.check("level-high")
        low = ln.check("level-low")
        assert (w.v_il, w.v_ih) == (low.limit, high.limit)
        assert all(a.shape == w.t.shape for a in w.traces.values())
        assert np.all(np.diff(w.t) > 0)
        if rs > 0:
            term = ln.check("series-termination")
            without = term.details["without"]
            assert max(np.max(w.traces["rise, no series R"]) - w.vdd, 0.0) == pytest.approx(
                without["overshoot"], rel=1e-12)
            # the terminated line rings less than the bare one
            assert w.overshoot[f"rise, {final}"] < w.overshoot["rise, no series R"]
            terminated += 1
    assert terminated == 3  # the display bus's three lines


def test_timing_budget_agrees_with_the_result(demo):
    design, _ = demo
    result = _nominal_board(design)
    for bus in design.buses:
        if bus.protocol != "spi":
            continue
        br = result.bus(bus.id)
        tb = plotdata.timing_budget_data(bus, design)
        # derived from the SPI budget structure (docs/references.md, SPI): T/2 at the clock
        assert tb.period == pytest.approx(1.0 / bus.clock, rel=1e-15)
        budget_checks = [c for c in br.checks if c.id not in ("f-max", "spi-mode", "supply-range")]
        assert len(tb.margins) == len(budget_checks)
        for c in budget_checks:
            path = f"{c.id} {c.subject}"
            assert tb.margins[path] == pytest.approx(c.value - c.limit, rel=1e-9, abs=1e-18)
            assert tb.status[path] == c.status
            assert tb.sources[path] == c.source
            used = sum(d for p, _, d in tb.rows if p == path)
            assert tb.available[path] - used == pytest.approx(tb.margins[path], rel=1e-9)
            assert tb.available[path] == pytest.approx(0.5 / bus.clock, rel=1e-12)
        for fig, tid in (("copi_setup_margin", "copi-setup"), ("copi_hold_margin", "copi-hold"),
                         ("cipo_setup_margin", "cipo-setup")):
            margins = [m for p, m in tb.margins.items() if p.startswith(tid + " ")]
            if margins:
                assert br.figures[fig].value == pytest.approx(min(margins), rel=1e-12)
            else:
                assert br.figures[fig].value is None
    flash = plotdata.timing_budget_data(design.bus("flash"), design)
    rows = {(p, c): d for p, c, d in flash.rows}
    assert rows[("copi-setup U7", "output valid (t_valid)")] == MCU_T_VALID
    assert rows[("copi-setup U7", "required setup, hold or width")] == FLASH_T_SETUP
    assert rows[("cipo-setup U7", "output valid (t_valid)")] == FLASH_T_VALID
    assert rows[("cipo-setup U7", "required setup, hold or width")] == MCU_T_SETUP


def test_plotdata_refuses_the_wrong_bus(demo):
    from pinlib.core.errors import InputError

    design, _ = demo
    with pytest.raises(InputError, match="pull-up window"):
        plotdata.pullup_window_data(design.bus("flash"), design)
    with pytest.raises(InputError, match="timing budget"):
        plotdata.timing_budget_data(design.bus("sensors"), design)
    with pytest.raises(InputError, match="no segment"):
        plotdata.pullup_window_data(design.bus("sensors"), design, "nowhere")
    with pytest.raises(InputError, match="does not drive"):
        plotdata.waveform_data(design.bus("flash"), design, "sclk", driver="U7")


def _gpio_design(tmp_path, reset_rs: str):
    data = ROOT / "tests" / "data" / "pushpull"   # the push-pull engine's invented test parts
    text = f"""format = "pinlib.design/1"
title = "GPIO nets (invented)"
library = ["{data.as_posix()}"]

[[bus]]
id = "reset"
protocol = "gpio"
supply = "3.3 V"
devices = [
  {{ ref = "U1", part = "pp-ctrl", role = "controller", pin = "reset" }},
  {{ ref = "U2", part = "pp-periph", pin = "reset" }},
]
lines.reset.length = "6 cm"
lines.reset.capacitance = "1 pF/cm"
lines.reset.delay = "50 ps/cm"
lines.reset.series_resistor = "{reset_rs}"

[[bus]]
id = "irq"
protocol = "gpio"
supply = "3.3 V"
devices = [
  {{ ref = "U1", part = "pp-ctrl", role = "controller", pin = "irq" }},
  {{ ref = "U2", part = "pp-periph", pin = "irq" }},
  {{ ref = "M1", part = "pp-pullup-module", pin = "irq" }},
]
lines.irq = {{ length = "6 cm", capacitance = "1 pF/cm", delay = "50 ps/cm" }}
"""
    path = tmp_path / f"gpio-{reset_rs.replace(' ', '')}.toml"
    path.write_text(text, encoding="utf-8")
    return load_design(path)


def test_gpio_nets(tmp_path):
    design = _gpio_design(tmp_path, "22 Ω")
    result = check_design(design)
    text = review.render_html(design, result)
    kinds = _figures_by_kind(text)
    # one push-pull driver on the reset net, one open-drain driver on the irq net
    assert {k: len(v) for k, v in kinds.items()} == {"edge-vs-load": 2, "waveforms": 2}
    bus = design.bus("reset")
    w = plotdata.waveform_data(bus, design, "reset")
    assert set(w.traces) == {"rise, Rs 22 Ω", "fall, Rs 22 Ω", "rise, no series R",
                             "fall, no series R"}
    # the case without the fixed resistor, solved here, is what the engine reports for
    # the same line with series_resistor = "none"
    bare = _gpio_design(tmp_path, "none")
    (line,) = check_design(bare).bus("reset").lines
    assert w.overshoot["rise, no series R"] == pytest.approx(line.figures["overshoot"].value,
                                                             rel=1e-12)
    (line22,) = result.bus("reset").lines
    assert w.overshoot["rise, Rs 22 Ω"] == line22.figures["overshoot"].value
    irq = plotdata.waveform_data(design.bus("irq"), design, "irq")
    assert irq.driver == "U2" and set(irq.traces) == {"rise, no series R", "fall, no series R"}
    # the open-drain driver's edge chart is not captioned as a push-pull driver's fit to
    # datasheet edges (it has none): its rise is the pull-ups', its fall the sink's
    assert text.count("fitted to its datasheet edges") == 1  # the reset driver's alone
    assert "U2.irq is open-drain: the rise through the line's pull-ups" in html.unescape(text)


def test_svg_ids_are_made_unique():
    svg = ('<?xml version="1.0"?><svg xmlns="http://www.w3.org/2000/svg"><defs>'
           '<clipPath id="clip1"><rect/></clipPath></defs><g clip-path="url(#clip1)"/>'
           '<use href="#clip1"/></svg>')
    a = review._clean_svg(svg, "01-a", "A <chart>")
    b = review._clean_svg(svg, "02-b", "B")
    assert a.startswith('<svg role="img" aria-label="A &lt;chart&gt;" ')
    assert 'id="01-a-clip1"' in a and "url(#01-a-clip1)" in a and 'href="#01-a-clip1"' in a
    assert 'id="02-b-clip1"' in b and "clip1\"" not in a.replace("01-a-clip1", "")


# =========================================================================== changes


def test_change_list_against_the_snapshot(tmp_path):
    board = tmp_path / "board.toml"
    board.write_text(DEMO.read_text(encoding="utf-8"), encoding="utf-8")
    before = load_design(board)
    save_snapshot(before, check_design(before))
    text = board.read_text(encoding="utf-8")
    board.write_text(text.replace('part = "eeprom-i2c"', 'part = "io-expander-i2c"', 1),
                     encoding="utf-8")
    after = load_design(board)
    result = check_design(after)
    changes = compare_with_snapshot(after, result)
    assert changes is not None and changes.part_changes
    page = review.render_html(after, result, changes=changes)
    section = page[page.index('<section id="changes"'):]
    head = changes.part_changes[0].lines()[0]
    assert head.startswith("U4 part eeprom-i2c → io-expander-i2c")
    assert html.escape(head) in section
    # each moved quantity once, under its readable label
    from pinlib.core.labels import figure_label
    from pinlib.studies.compare.changes import shown_changes

    shown = shown_changes(changes.figure_changes)
    assert 0 < len(shown) <= len(changes.figure_changes)
    for fc in shown:
        assert f"<td>{html.escape(figure_label(fc.name))}</td>" in section
    # a margin that moved without a change of status is listed too (it was left out)
    assert changes.margin_changes
    for mc in changes.margin_changes:
        assert f"<li>{html.escape(mc.format())}</li>" in section
    assert review._no_snapshot_text(after) not in page


# =========================================================================== command


def test_command_writes_html(tmp_path, capsys):
    out = tmp_path / "review.html"
    code = main(["report", str(DEMO), "--html", str(out)])
    assert code == 0  # the demo warns, which passes
    text = out.read_text(encoding="utf-8")
    assert text.count("<svg") == 25
    assert "wrote" in capsys.readouterr().err
    assert not list(tmp_path.glob(".review.html.*"))  # no temporary file left


def test_command_writes_markdown_with_its_charts(tmp_path):
    out = tmp_path / "board.md"
    assert main(["report", str(DEMO), "--md", str(out)]) == 0
    text = out.read_text(encoding="utf-8")
    charts = sorted((tmp_path / "board-charts").glob("*.svg"))
    assert len(charts) == 25
    for c in charts:
        assert f"(board-charts/{c.name})" in text


def test_command_rerun_leaves_only_the_charts_the_new_report_links(tmp_path, capsys):
    """A rerun into the same folder removes the charts of the earlier run that the new
    report no longer links (here its Monte Carlo histograms), and nothing of the user's:
    other files, and an SVG named like a chart that pinlib did not write."""
    pytest.importorskip("pinlib.studies.whatif")
    out = tmp_path / "board.md"
    folder = tmp_path / "board-charts"
    assert main(["report", str(DEMO), "--md", str(out), "--monte-carlo", "50",
                 "--seed", "1"]) == 0
    first = {p.name for p in folder.iterdir()}
    assert any("-mc-" in name for name in first)
    mine = {"notes.txt": "my notes", "board-outline.svg": "<svg></svg>",
            "99-my-sketch.svg": '<?xml version="1.0"?>\n<svg><title>mine</title></svg>'}
    for name, text in mine.items():
        (folder / name).write_text(text, encoding="utf-8")
    capsys.readouterr()
    assert main(["report", str(DEMO), "--md", str(out)]) == 0
    text = out.read_text(encoding="utf-8")
    linked = set(re.findall(r"\(board-charts/([^)]+)\)", text))
    assert len(linked) == 25
    assert {p.name for p in folder.iterdir()} == linked | set(mine)
    for name, text in mine.items():
        assert (folder / name).read_text(encoding="utf-8") == text
    removed = len(first - linked)
    assert removed > 0
    assert f"removed {removed} chart files of an earlier run" in capsys.readouterr().err
    assert not list(folder.glob(".*.tmp"))  # no temporary file left


def test_command_names_an_old_chart_it_cannot_remove(tmp_path, capsys, monkeypatch):
    out = tmp_path / "board.md"
    assert main(["report", str(DEMO), "--md", str(out)]) == 0
    folder = tmp_path / "board-charts"
    old = folder / "99-gone-bus-edges.svg"  # a chart of an earlier run, as pinlib wrote it
    old.write_bytes(next(folder.glob("01-*.svg")).read_bytes())
    real = Path.unlink

    def refuse(self, *a, **k):
        if self.name == old.name:
            raise PermissionError(13, "Permission denied")
        return real(self, *a, **k)

    monkeypatch.setattr(Path, "unlink", refuse)
    capsys.readouterr()
    assert main(["report", str(DEMO), "--md", str(out)]) == 0
    err = capsys.readouterr().err
    assert f"pinlib: warning: {old}: cannot remove this chart" in err
    assert "removed" not in err.split("\n")[0]
    assert old.exists() and out.exists()


def test_command_leaves_an_old_report_whole_on_error(tmp_path, capsys):
    out = tmp_path / "review.html"
    out.write_text("old report", encoding="utf-8")
    bad = tmp_path / "bad.toml"
    bad.write_text('format = "pinlib.design/1"\ntitle = "x"\n[[bus]]\nid = "a"\n'
                   'protocol = "i2c"\nsupply = "3.3"\n', encoding="utf-8")
    assert main(["report", str(bad), "--html", str(out)]) == 2
    assert out.read_text(encoding="utf-8") == "old report"
    assert "error" in capsys.readouterr().err


def test_command_arguments(tmp_path, capsys):
    with pytest.raises(SystemExit) as exc:
        main(["report", str(DEMO)])
    assert exc.value.code == 2
    with pytest.raises(SystemExit) as exc:
        main(["report", str(DEMO), "--html", "a.html", "--md", "a.md"])
    assert exc.value.code == 2
    assert main(["report", str(DEMO), "--html", str(tmp_path / "x.html"), "--seed", "3"]) == 2
    assert "--monte-carlo" in capsys.readouterr().err
    assert main(["report", str(DEMO), "--html", str(tmp_path / "no" / "x.html")]) == 2
    with pytest.raises(SystemExit) as exc:
        main(["report", "--help"])
    assert exc.value.code == 0
    assert "pinlib report pinlib-demo/workbooks/designs/demo-board.toml --html" in \
        capsys.readouterr().out


def test_command_with_monte_carlo(tmp_path, capsys):
    pytest.importorskip("pinlib.studies.whatif")
    from pinlib.studies import whatif

    out = tmp_path / "mc.html"
    assert main(["report", str(DEMO), "--html", str(out), "--monte-carlo", "300",
                 "--seed", "5"]) == 0
    text = out.read_text(encoding="utf-8")
    section = text[text.index('<section id="monte-carlo"'):text.index('<section id="parts"')]
    design = load_design(DEMO)
    mc = whatif.monte_carlo(design, 300, seed=5, progress=False)
    varying = [c for c in mc.checks if c.varies or c.passes.passes < c.passes.n]
    assert varying
    hist = _figures_by_kind(section).get("histogram", [])
    assert len(hist) == min(review.MC_CHARTS, len(varying))
    assert all(b.count("<svg") == 1 for b in hist)
    for c in varying:  # the same seed gives the same boards: the table matches the run
        shown = sampled_check_label(c.name, c.id)    # the check by its label, as elsewhere
        assert f"<td>{html.escape(shown)}</td><td class=\"num\">{c.passes.fraction:.2%}</td>" \
            in section
    # no raw check id where the report names a check
    assert "<td>sensors/main-3v3 SDA Pull-up window Rp(min)…Rp(max)</td>" in section
    assert "pullup-window</td>" not in section and "Margin of pullup-window" not in section
    assert "seed 5" in section


def test_review_of_a_monte_carlo_run(demo):
    pytest.importorskip("pinlib.studies.whatif")
    from pinlib.studies import whatif

    design, result = demo
    mc = whatif.monte_carlo(design, 500, seed=11, progress=False)
    md = review.render_markdown(design, result, mc=mc)
    shown = md[md.index("## Monte Carlo"):md.index("## Parts")]
    for c in mc.checks:
        if c.varies:
            lo, hi = c.passes.interval
            name = review._m(sampled_check_label(c.name, c.id))
            assert f"| {name} | {c.passes.fraction:.2%} | {lo:.2%} to {hi:.2%} |" in shown
    assert "| flash COPI setup U7 |" in shown and "copi-setup U7 |" not in shown
    assert shown.count("data:image/svg+xml") == min(
        review.MC_CHARTS, sum(1 for c in mc.checks if c.varies))


def test_histograms_of_a_long_run_say_which_boards_they_hold(demo, monkeypatch):
    pytest.importorskip("pinlib.studies.whatif")
    from pinlib.studies import whatif

    design, _ = demo
    monkeypatch.setattr(whatif.montecarlo, "SENSITIVITY_BOARDS", 200)   # a long run, in small
    mc = whatif.monte_carlo(design, 500, seed=11, progress=False, chunk=150)
    charts, _ = review._mc_charts(mc, review._Keys())
    assert charts and all(chart.svg and chart.error is None for chart in charts)
    # the histograms count every board's margin (in bins fixed as the run goes)
    assert all("on every sampled board" in chart.caption for chart in charts)
    for c in mc.checks:
        c.histogram = None                       # a run that kept no counted bins
    charts, _ = review._mc_charts(mc, review._Keys())
    for chart in charts:
        assert "on the first 200 of the 500 sampled boards" in chart.caption
    whole = whatif.monte_carlo(design, 150, seed=11, progress=False)
    charts, _ = review._mc_charts(whole, review._Keys())
    assert all("on every sampled board" in chart.caption for chart in charts)


def test_command_without_a_monte_carlo_engine(tmp_path, capsys, monkeypatch):
    from pinlib.cli.commands import report as cmd

    monkeypatch.setattr(cmd, "MONTE_CARLO_MODULES", ("pinlib.no_such_engine",))
    out = tmp_path / "x.html"
    assert main(["report", str(DEMO), "--html", str(out), "--monte-carlo", "100"]) == 2
    assert "Monte Carlo engine is not available" in capsys.readouterr().err
    assert not out.exists()


# =========================================================================== browser


def _chromium(url: str, tmp: Path, *extra: str) -> subprocess.CompletedProcess:
    profile = tmp / "profile"
    profile.mkdir(exist_ok=True)
    cmd = ["chromium", "--headless", "--no-sandbox", "--disable-gpu",
           "--disable-background-networking", "--disable-component-update", "--disable-sync",
           "--no-first-run", "--disable-quic", f"--user-data-dir={profile}",
           "--enable-logging=stderr", "--v=0", *extra, url]
    return subprocess.run(cmd, capture_output=True, text=True, timeout=60, cwd=tmp)


def _console_lines(stderr: str) -> list[str]:
    return [ln for ln in stderr.splitlines() if ":CONSOLE" in ln or "Uncaught" in ln]


def _screenshot(path: Path, tmp: Path) -> tuple[np.ndarray, subprocess.CompletedProcess]:
    shot = tmp / f"{path.stem}.png"
    run = _chromium(path.as_uri(), tmp, f"--screenshot={shot}", "--window-size=1280,2000")
    assert shot.exists(), run.stderr[-2000:]
    return png_pixels(shot.read_bytes()), run


def _colour_count(img: np.ndarray, rgb, tol: int = 6) -> int:
    return int((np.abs(img.astype(int) - np.array(rgb)).max(axis=2) <= tol).sum())


needs_chromium = pytest.mark.skipif(shutil.which("chromium") is None,
                                    reason="chromium is not on PATH")


@pytest.mark.browser
@needs_chromium
def test_report_renders_in_chromium(page, tmp_path):
    report = tmp_path / "review.html"
    report.write_text(page, encoding="utf-8")
    img, run = _screenshot(report, tmp_path)
    assert img.shape == (2000, 1280, 3)
    non_white = float((img.min(axis=2) < 245).mean())
    assert non_white > 0.02
    colours = np.unique((img // 16).reshape(-1, 3), axis=0)
    assert len(colours) >= 50
    assert _colour_count(img, BLUISH_GREEN) > 500   # PASS badges
    assert _colour_count(img, ORANGE) > 500         # WARN badges and the caution's rule
    assert _console_lines(run.stderr) == []
    dom = _chromium(report.as_uri(), tmp_path, "--dump-dom")
    assert dom.returncode == 0
    assert _console_lines(dom.stderr) == []
    figures = _figures_by_kind(dom.stdout)
    assert sum(len(v) for v in figures.values()) == 25
    assert all(b.count("<svg") == 1 for v in figures.values() for b in v)


@pytest.mark.browser
@needs_chromium
def test_browser_detectors_can_fail(tmp_path):
    broken = tmp_path / "broken.html"
    broken.write_text('<!DOCTYPE html><html lang="en"><head><meta charset="utf-8">'
                      "<title>control</title></head><body><p>control</p>"
                      "<script>console.error('deliberate'); missingFunction();</script>"
                      "</body></html>", encoding="utf-8")
    _, run = _screenshot(broken, tmp_path)
    lines = _console_lines(run.stderr)
    assert any("deliberate" in ln for ln in lines)
    assert any("Uncaught" in ln for ln in lines)
    blank = tmp_path / "blank.html"
    blank.write_text('<!DOCTYPE html><html lang="en"><head><meta charset="utf-8">'
                     "<title>blank</title></head><body></body></html>", encoding="utf-8")
    img, _ = _screenshot(blank, tmp_path)
    assert float((img.min(axis=2) < 245).mean()) < 0.02


# =========================================================================== Markdown injection

_EVIL = ("evil ```` x\n```\n# Approved: every check passes\n\n![t](https://tracker.example/p.png)"
         "\n<img src=x onerror=alert(1)>\n| a | b |\n|---|---|\n- [link](javascript:x) *em* `c`\n"
         "1. item\n---\n    indented\n~~~\n")

_INJECT_PART = """\
format = "pinlib.part/1"
id = "t-evil"
title = {title}
category = "memory"
extends = "eeprom-i2c"
provenance = {{ basis = "estimate", source = {text} }}

[pins.sda]
c_in = {{ value = "{c_in}", basis = "estimate", source = {text} }}
"""

_INJECT_DESIGN = """\
format = "pinlib.design/1"
title = {text}
description = {text}
library = ["team"]

[[bus]]
id = "b"
title = {text}
protocol = "i2c"
mode = "fast"
supply = "3.3 V"
pullup = "2.2 kΩ"
trace = {{ length = "5 cm", capacitance = "0.8 pF/cm" }}
devices = [
  {{ ref = "U1", part = "mcu-3v3", role = "controller" }},
  {{ ref = "U2", part = "t-evil" }},
]
"""


def _injected_report(folder: Path, text: str) -> str:
    import json

    team = folder / "team"
    team.mkdir(parents=True)
    quoted = json.dumps(text)  # a JSON string is a TOML basic string here
    # a part's title is one line (the loader refuses more): the same text, joined
    title = json.dumps(" ".join(text.splitlines()))
    (team / "t-evil.toml").write_text(_INJECT_PART.format(text=quoted, title=title,
                                                          c_in="8 pF"), encoding="utf-8")
    board = folder / "board.toml"
    board.write_text(_INJECT_DESIGN.format(text=quoted), encoding="utf-8")
    design = load_design(board)
    save_snapshot(design, check_design(design))
    # the source and value change, so the change list quotes the user's text
    (team / "t-evil.toml").write_text(_INJECT_PART.format(text=quoted, title=title,
                                                          c_in="9 pF"), encoding="utf-8")
    design = load_design(board)
    result = check_design(design)
    changes = compare_with_snapshot(design, result)
    assert changes is not None and changes.part_changes
    return review.render_markdown(design, result, changes=changes)


def _structure(md: str) -> dict:
    # CommonMark: a fence of n backticks is closed by a line of at least n backticks
    # and nothing else; what lies between is code, left out of the other counts.
    lines, fences, fence = [], [], None
    for ln in md.splitlines():
        mark = re.match(r"\s{0,3}(`{3,}|~{3,})", ln)
        if fence is None and mark:
            fence = mark.group(1)
            fences.append(ln)
        elif fence is not None:
            if re.fullmatch(rf"\s{{0,3}}{fence[0]}{{{len(fence)},}}\s*", ln):
                fence = None
                fences.append(ln)
        else:
            lines.append(ln)
    return {
        "headings": [ln.split(" ", 1)[0] for ln in lines if ln.startswith("#")],
        "table rules": sum(1 for ln in lines if ln.startswith("| ---")),
        "table rows": sum(1 for ln in lines if ln.startswith("|")),
        "fences": len(fences),
        "unclosed fence": fence is not None,
        "images": sum(len(re.findall(r"!\[", ln)) for ln in lines),
        "list items": sum(1 for ln in lines if re.match(r"\s*(?:[-+*]|\d+[.)])\s", ln)),
        "quotes": sum(1 for ln in lines if ln.startswith(">")),
        "rules": sum(1 for ln in lines if re.fullmatch(r"\s*(?:-{3,}|={3,}|\*{3,})\s*", ln)),
        "indented": sum(1 for ln in lines if ln.startswith("    ")),
        "outside code": "\n".join(lines),
    }


def test_user_text_cannot_change_the_structure_of_the_markdown_report(tmp_path):
    # Titles, descriptions, sources once kept their newlines, fences and images: a
    # description ending in a fence turned the rest of the report into one code block
    # (every table gone) and could add a heading and an external image.  No Markdown
    # renderer is installed here, so the report's structure is read line by line: the
    # same headings, tables, fences, images, lists, quotes and rules as with plain text.
    evil = _structure(_injected_report(tmp_path / "evil", _EVIL))
    plain = _structure(_injected_report(tmp_path / "plain", "plain words"))
    text = evil.pop("outside code")
    plain.pop("outside code")
    assert evil == plain
    assert evil["fences"] == 2  # the change list's own, opened and closed
    assert "<img" not in text
    # a link or image target only after an unescaped "]"
    assert not re.search(r"(?<!\\)\]\((?:https://tracker|javascript)", text)
    assert "Approved: every check passes" in text  # shown as text, not dropped



def test_markdown_shows_a_title_ending_in_hashes_and_a_path_with_a_pipe_as_written(tmp_path):
    # CommonMark drops a run of "#" that ends a heading line after a space (its closing
    # marks): a design or part titled "... #" lost it in its heading.  And a code span
    # shows a backslash as written: outside a table the design's path "a|b" read "a\|b".
    title = "Sensor board rev #"  # invented test data
    md = _injected_report(tmp_path / "a|b", title)
    lines = md.splitlines()
    path = (tmp_path / "a|b" / "board.toml").as_posix()
    assert f"Design file: `{path}`" in lines
    assert "# Design review: Sensor board rev \\#" in lines
    assert "### U2: t-evil — Sensor board rev \\#" in lines
    for line in lines:
        if re.match(r"#{1,6} ", line):  # an ATX heading: no closing sequence to drop
            assert not re.search(r"[ \t]#+[ \t]*$", line), line
    # in a table a pipe inside a code span is escaped, as GFM needs
    from pinlib.present.review.markdown import _code
    assert _code("a|b", cell=True) == "`a\\|b`" and _code("a|b") == "`a|b`"

def test_a_budget_with_a_requirement_without_time_is_drawn_without_it():
    # reproducer: a 3.3 V flash answering a 5 V controller (tests/data, invented): CIPO
    # never reaches the controller's VIH, so the CIPO setup time does not exist; the
    # report printed "Chart not drawn (...): the timing budget terms do not add up to
    # the engine's margin (got 'nan against nan')" and drew no budget at all
    design = load_design(ROOT / "tests" / "data" / "spi-cipo-never-high.toml")
    result = check_design(design)
    bus = design.bus("flash")
    tb = plotdata.timing_budget_data(bus, design, analysis=result.bus("flash"))
    assert "cipo-setup U2" not in tb.margins
    assert "never crosses" in tb.not_drawn["cipo-setup U2"]
    assert tb.margins and all(math.isfinite(m) for m in tb.margins.values())
    assert all(math.isfinite(d) for _, _, d in tb.rows)
    # the others are the engine's checks (the budget's own consistency test holds)
    for c in result.bus("flash").checks:
        if f"{c.id} {c.subject}" in tb.margins:
            assert tb.margins[f"{c.id} {c.subject}"] == pytest.approx(c.value - c.limit,
                                                                       rel=1e-9, abs=1e-18)
    built = review.build_review(design, result)
    chart = next(c for c in built.all_charts() if c.kind == "timing-budget")
    assert chart.svg is not None and not chart.error
    # named as the checks table names it, not by the path's raw id
    assert "Not drawn: CIPO setup U2 (" in chart.caption and "never crosses" in chart.caption
    assert "cipo-setup" not in chart.caption
    md, _ = built.markdown()
    assert not re.search(r"\bnan\b", md)


def test_the_report_budget_chart_writes_the_checks_worst_corner_margin():
    # reproducer (tests/data/spi-length-tolerance.toml, invented): CIPO setup passes at
    # the nominal 80 cm and fails at +15 % length.  The report's budget chart wrote only
    # the nominal board's margin, in the pass colour, beside a checks table that fails;
    # the workbench's chart writes the worst corner's too (TimingBudgetData.worst).
    from pinlib.core.quantity import format_si

    design = load_design(ROOT / "tests" / "data" / "spi-length-tolerance.toml")
    result = check_design(design)
    cipo = next(c for c in result.bus("link").checks if c.id == "cipo-setup")
    assert cipo.status == "fail" and cipo.details.get("corner")
    built = review.build_review(design, result)
    chart = next(c for c in built.all_charts() if c.kind == "timing-budget")
    assert chart.svg is not None, chart.error
    worst = format_si(cipo.value - cipo.limit, "s")   # the checks table's figure
    assert worst.startswith("-")
    assert f"worst corner {worst}" in html.unescape(chart.svg)
    assert "worse corner of the tolerances" in chart.caption


def test_the_changed_checks_table_names_each_check_by_its_label(tmp_path):
    # reproducer: with U4 swapped for the legacy 5 V expander (a built-in generic class)
    # the report's "Checks whose status changed" table showed raw ids (v-oh,
    # noise-margin-high, device-speed) where every other table, and the text change list,
    # shows the check's label (VOH, Noise margin high, Device speed)
    from pinlib.core.labels import check_label

    board = tmp_path / "board.toml"
    board.write_text(DEMO.read_text(encoding="utf-8"), encoding="utf-8")
    before = load_design(board)
    save_snapshot(before, check_design(before))
    board.write_text(board.read_text(encoding="utf-8").replace(
        'part = "eeprom-i2c"', 'part = "io-expander-legacy-5v"', 1), encoding="utf-8")
    after = load_design(board)
    result = check_design(after)
    changes = compare_with_snapshot(after, result)
    assert changes is not None and changes.status_changes
    page = review.render_html(after, result, changes=changes)
    table = page[page.index("<h3>Checks whose status changed</h3>"):]
    table = table[:table.index("</table>")]
    for c in changes.status_changes:
        assert check_label(c.check) != c.check
        assert f'<td title="{html.escape(c.check)}">{html.escape(check_label(c.check))}</td>' \
            in table
        assert f"<code>{html.escape(c.check)}</code>" not in table
    # a limit that moved (the device's speed rating) shows before and after, as the text
    # change list does: the value alone did not say why the status changed
    moved = [c for c in changes.status_changes if c.old_limit != c.new_limit
             and c.old is not None and c.new is not None]
    assert moved
    for c in moved:
        assert (f"{format_figure(c.old_limit, c.unit)} → {format_figure(c.new_limit, c.unit)}"
                in html.unescape(table))


def test_notes_name_a_figure_by_its_label(built):
    # the SPI engine's notes start with the figure they explain, by its JSON id
    # ("max_clock 24 MHz: ...", "cipo_setup_margin: not computed ..."); the report's
    # figures tables call it "Highest clock", and so do its notes
    page = built.html()
    md, _ = built.markdown()
    for text in (page, md):
        # (the two highest-clock notes are worded so by the engine itself)
        assert "highest clock 24 MHz: what the timing budget" in text.replace("\n", " ")
        # the demo's display bus has tolerances: the edge rule is its worst corner's
        assert "highest clock by the edge rule of thumb 44.9 MHz at the worst corner" \
            in text.replace("\n", " ")
        assert "CIPO setup margin: not computed" in text
        assert not re.search(r"\b(max_clock|max_clock_edge_rule|cipo_setup_margin)\b", text)


#: The page's own width overflowed by: every element whose box passes the viewport's right
#: edge, unless a box around it scrolls sideways (a wide table in its own scroller).
_OVERFLOW_JS = """() => {
  const W = document.documentElement.clientWidth, out = [];
  const scrolls = e => { for (let p = e.parentElement; p; p = p.parentElement) {
      const o = getComputedStyle(p).overflowX;
      if (o === 'auto' || o === 'scroll' || o === 'hidden') return true; } return false; };
  for (const e of document.querySelectorAll('body *')) {
    if (e.closest('.visually-hidden')) continue;
    const r = e.getBoundingClientRect();
    if (r.width && r.right > W + 1 && !scrolls(e))
      out.push(e.tagName + ' ' + Math.round(r.right) + ' ' + e.textContent.slice(0, 60));
  }
  return {page: document.documentElement.scrollWidth, width: W, out: out.slice(0, 10)};
}"""


def _long_words_page(tmp_path) -> str:
    """The demo's report under a title of one 160-letter word, from a folder whose name is
    as long (invented): words no line can hold."""
    folder = tmp_path / ("d" * 160)
    folder.mkdir()
    board = folder / "board.toml"
    text = DEMO.read_text(encoding="utf-8")
    board.write_text(re.sub(r'(?m)^title = ".*"$', f'title = "{"T" * 160}"', text, count=1),
                     encoding="utf-8")
    design = load_design(board)
    return review.render_html(design, check_design(design))


def _long_route_page(tmp_path) -> str:
    """The report of the routed SPI bus of tests/data (invented) with its tap point renamed
    at length: a route diagram of some 65 characters, wider than a phone."""
    board = tmp_path / "route.toml"
    text = (ROOT / "tests" / "data" / "spi-route.toml").read_text(encoding="utf-8")
    board.write_text(text.replace('"T1"', '"TAP-NEAR-THE-CONTROLLER-AND-FLASH"'),
                     encoding="utf-8")
    design = load_design(board)
    page = review.render_html(design, check_design(design))
    assert "└ TAP-NEAR-THE-CONTROLLER-AND-FLASH ─13 cm─ U3" in page
    return page


@pytest.mark.browser
@needs_chromium
@pytest.mark.parametrize("width, media, long_words", [
    (420, "screen", False), (1400, "screen", False), (718, "print", False),
    (420, "screen", True), (718, "print", True), (420, "screen", "route")])
def test_nothing_passes_the_page_edge(page, tmp_path, width, media, long_words):
    # reproducer: at 420 px the checks tables made the whole page scroll sideways (716 px
    # wide), and printed on A4 (718 px, print media) the SPI bus's figure "CIPO setup
    # margin: not computed (signal not routed or data missing)", kept on one line, passed
    # the page's edge (757 px), where a PDF cuts it off
    pytest.importorskip("playwright.sync_api")
    from browser import launch_chromium
    from playwright.sync_api import sync_playwright

    report = tmp_path / "review.html"
    text = (_long_route_page(tmp_path) if long_words == "route" else
            _long_words_page(tmp_path) if long_words else page)
    report.write_text(text, encoding="utf-8")
    with sync_playwright() as pw:
        browser = launch_chromium(pw)
        try:
            tab = browser.new_page(viewport={"width": width, "height": 900})
            tab.goto(report.as_uri())
            tab.emulate_media(media=media)
            got = tab.evaluate(_OVERFLOW_JS)
        finally:
            browser.close()
    assert got["out"] == [], got
    assert got["page"] <= got["width"], got


def test_the_markdown_change_list_reads_at_80_columns(tmp_path):
    # reproducer: the change list's fenced block held each change on one line (300 and
    # more characters: check, values, limit and source), which a code block neither wraps
    # in a viewer nor in a terminal; it now reads as `pinlib check` prints it at 80
    board = tmp_path / "board.toml"
    board.write_text(DEMO.read_text(encoding="utf-8"), encoding="utf-8")
    before = load_design(board)
    save_snapshot(before, check_design(before))
    board.write_text(board.read_text(encoding="utf-8").replace(
        'part = "eeprom-i2c"', 'part = "io-expander-legacy-5v"', 1), encoding="utf-8")
    after = load_design(board)
    result = check_design(after)
    changes = compare_with_snapshot(after, result)
    md = review.render_markdown(after, result, changes=changes)
    block = md[md.index("## Changes against the snapshot"):].split("```")[1]
    lines = block.strip("\n").split("\n")
    assert lines[0].startswith("Changes against the snapshot")
    assert max(len(ln) for ln in lines) <= 80, max(lines, key=len)
    # every word of the list is still there, in order
    assert block.split() == changes.format_text().split()


def test_the_markdown_reads_as_plain_text_at_80_columns(built):
    # reproducer: every check was one table row of up to 600 characters (its finding and
    # the source of its limit in cells), the caution, captions and notes one line each;
    # the checks table now holds the numbers, the findings follow it as a numbered list
    md, _ = built.markdown("demo-charts")
    prose = [ln for ln in md.splitlines()
             if not ln.startswith(("|", "#", "![")) and "`" not in ln]
    assert prose and max(len(ln) for ln in prose) <= 80, max(prose, key=len)
    rows = [ln for ln in md.splitlines() if re.match(r"^\| \d+ \| \*\*(PASS|WARN|FAIL)\*\*", ln)]
    assert rows and all(ln.count(" | ") == 6 for ln in rows)
    assert max(len(ln) for ln in rows) <= 90
    # each row's finding under its number
    items = _md_items(md)
    assert sum(1 for i in items if re.match(r"\*\*(PASS|WARN|FAIL)\*\* ", i)) == len(rows)
    assert "1.  **PASS** Bus capacitance, SDA: SDA bus capacitance 105 pF" in md


@pytest.mark.parametrize("start", ["- 5 %", "+ 3", "# x", "---", "===", "1. item", "12. x"])
def test_wrapping_markdown_never_starts_a_block(start):
    from pinlib.present.review.markdown import _wrapped

    # 77 characters fill the first line to the last column: the marker starts the next
    text = "abcdefghij " * 6 + "a" * 11 + " " + start + " tail"
    lines = _wrapped(text, "- ")
    plain = review._mt(start + " tail")         # the marker, made plain as _mt does
    assert any(ln.strip() == plain for ln in lines[1:]) or start[0].isdigit(), lines
    assert len(lines) > 1 and all(len(ln) <= 80 for ln in lines)
    for ln in lines[1:]:
        body = ln.strip()
        # a list item, a heading, an ordered item; a rule or setext underline (only = or -)
        assert not re.match(r"^(?:[-+#]|\d+[.)])(?:\s|$)|^[=-]+\s*$", body), ln


def test_markdown_parts_tables_cite_each_source_once_by_number(built, demo):
    # reproducer: each part value's row carried its source in full (up to 130
    # characters, the same source on many rows of a part), rows of 250 characters; the
    # table now cites [n] and the part's sources follow it, each once, wrapped at 80
    design, result = demo
    md, _ = built.markdown("demo-charts")
    part = md[md.index("### U1: mcu-3v3"):]
    part = part[:part.index("\n### ", 1)]
    rows = [ln for ln in part.splitlines() if ln.startswith("| `")]
    assert rows and all(re.search(r"\| (\[\d+\]|—) \|", ln) for ln in rows)
    cited = {int(n) for ln in rows for n in re.findall(r"\| \[(\d+)\] \|", ln)}
    listed = re.findall(r"^- \[(\d+)\] ", part, re.M)
    assert sorted(int(n) for n in listed) == sorted(cited) == list(range(1, len(cited) + 1))
    sources = {e["source"] for e in snapshot(design, result)["parts"]["U1"]["values"].values()
               if e.get("source")}
    assert len(listed) == len(sources)
    for src in sources:
        assert _flat(review._m(src)) in _flat(part)
    notes = [ln for ln in part.splitlines() if not ln.startswith(("|", "#"))]
    assert max(len(ln) for ln in notes) <= 80
    assert max(len(ln) for ln in rows) < 120


def test_a_warning_slack_in_seconds_is_among_the_histograms_drawn():
    # the histograms follow the text's rows: fewest passing, most boards that warn, then
    # the lowest margin; a slack in seconds sorts after every fraction by margin alone,
    # so one that warns on every board fell behind a dozen passing fractions (invented)
    import numpy as np

    from pinlib.studies.whatif.mcresult import McCheck, McResult
    from pinlib.studies.whatif.yields import Yield

    def mc(i, margins, warns=0, unit=None):
        return McCheck(f"b c{i}", "b", "b", None, f"c{i}", "", "", "pass", 0.5,
                       Yield(4, 4, (0.5, 1.0)), margins=np.asarray(margins, dtype=float),
                       warns=warns, fails=0, margin_unit=unit)

    rows = [mc(i, [0.2 + i / 100, 0.3, 0.4, 0.5]) for i in range(review.MC_CHARTS)]
    rows.append(mc(99, [-2e-9, -1e-9, -1.5e-9, -1e-9], warns=4, unit="s"))
    run = McResult("d", 4, 1, "uniform", [], rows, {}, None, np.zeros((4, 0)))
    charts, _ = review._mc_charts(run, review._Keys())
    assert len(charts) == review.MC_CHARTS and "C99" in charts[0].title


def test_markdown_writes_ampersands_and_arrows_as_themselves_where_they_are_no_markup():
    # the notes of every push-pull line read "(Johnson &amp; Graham, ...)" and
    # "L / (R^2 C) &lt;= 0.01", a series resistor's finding "overshoot 703 mV -&gt; 0 V":
    # as plain text at 80 columns a reviewer read the entities.  Only a "<" that could
    # open HTML or an autolink and an "&" that could start a character reference need one.
    mt = review._mt
    assert mt("Johnson & Graham") == "Johnson & Graham"
    assert mt("L / (R^2 C) <= 0.01, 703 mV -> 0 V, 1 < 2 > 0") == \
        "L / (R^2 C) <= 0.01, 703 mV -> 0 V, 1 < 2 > 0"
    assert mt("<img src=x onerror=alert(1)>") == "&lt;img src=x onerror=alert(1)>"
    assert mt("</p> <!-- x --> <?php <https://x.example>") == \
        "&lt;/p> &lt;!-- x --> &lt;?php &lt;https://x.example>"
    assert mt("&amp; &#60; &#x3C; &lt;") == "&amp;amp; &amp;#60; &amp;#x3C; &amp;lt;"
    assert mt("sensors.scl<-display.sclk, <-x@y.example>") == \
        "sensors.scl<-display.sclk, &lt;-x@y.example>"
    # a ">" that starts the text, or a wrapped line, would open a block quote
    assert mt("> 5 ns") == "\\> 5 ns"
    from pinlib.present.review.markdown import _wrapped

    text = "abcdefghij " * 6 + "a" * 11 + " > 5 ns tail"
    lines = _wrapped(text, "- ")
    assert len(lines) > 1 and not any(ln.strip().startswith(">") for ln in lines[1:]), lines


def test_a_markdown_table_cell_shows_a_margin_beyond_the_scale_as_written():
    # the checks tables read "\> +999 %" (before that "&gt; +999 %"): a block marker
    # means nothing inside a table cell or after the start of a line, so text for a
    # cell or the middle of a line keeps its first character as written
    from pinlib.present.review.markdown import _m

    assert _m("> +999 %") == "> +999 %"
    assert _m("- 5 %") == "- 5 %" and _m("# 3") == "# 3"
    assert _m("a|b *c*") == "a\\|b \\*c\\*"
    assert _m("<b>") == "&lt;b>"


def test_the_markdown_monte_carlo_table_cites_each_source_by_number(tmp_path):
    # each row of the Monte Carlo table carried its limit's source in full, up to 300
    # characters of plain text a line (the GPIO example's undershoot rows): the sources
    # go under the table, each once, cited by number as the parts tables do
    gpio = ROOT / "workbooks" / "designs" / "gpio-reset-board.toml"
    out = tmp_path / "r.md"
    assert main(["report", str(gpio), "--md", str(out), "--monte-carlo", "200",
                 "--seed", "2"]) == 0
    md = out.read_text(encoding="utf-8")
    section = md[md.index("## Monte Carlo"):md.index("## Parts")]
    rows = [ln for ln in section.splitlines() if ln.startswith("| ") and "---" not in ln]
    head, body = rows[0], rows[1:]
    assert head.endswith("| Source |") and body
    assert all(re.search(r"\| \[\d+\] \|$", ln) for ln in body), body
    # the numbers (the boards that warn among them) and the sensitivity text
    assert max(len(ln) for ln in body) <= 170
    assert "- [1] " in section and "common practice" in section
    # every source written once
    sources = [ln for ln in section.splitlines() if re.match(r"- \[\d+\] ", ln)]
    assert len(sources) == len(set(ln.split("] ", 1)[1] for ln in sources))


def test_markdown_headings_keep_to_80_columns(built, tmp_path):
    # reproducer: a part's heading carried its title ("### U12: display-controller-spi —
    # Display controller, SPI (4-wire with D/C), 1.65 to 3.6 V interface", 102
    # characters): the detail goes to a line under it.  A long design title or bus id
    # stays whole in its heading (an audit read "# Design review: … (invented audit
    # scenar…" followed by the title again): a heading is not a terminal line, its
    # viewer wraps it
    md, _ = built.markdown("demo-charts")
    heads = [ln for ln in md.splitlines() if ln.startswith("#")]
    assert heads and max(len(ln) for ln in heads) <= 80, max(heads, key=len)
    at = md.index("### U12: display-controller-spi\n")
    assert md[at:].split("\n")[2] == ("*Display controller, SPI (4-wire with D/C), 1.65 to "
                                      "3.6 V interface*")
    assert "### U1: mcu-3v3 — " in md  # a heading that fits keeps its title
    # invented test data: a design title of 120 characters, a bus id of 90
    title = "Greenhouse climate logger " + "with a very long name " * 4 + "(invented)"
    long_id = "sensors-" + "x" * 82
    text = DEMO.read_text(encoding="utf-8").replace(
        'title = "Greenhouse climate logger, main board (invented demo scenario)"',
        f'title = "{title}"').replace('id = "sensors"', f'id = "{long_id}"').replace(
        'victim = "sensors.scl"', f'victim = "{long_id}.scl"')
    path = tmp_path / "long.toml"
    path.write_text(text, encoding="utf-8")
    design = load_design(path)
    md = review.render_markdown(design, check_design(design))
    lines = md.splitlines()
    heads = [ln for ln in lines if ln.startswith("#")]
    assert not any("…" in ln for ln in heads), heads
    assert heads[0] == "# " + review._mt(f"Design review: {title}")
    assert lines[1] == "" and title not in lines[2]  # written once, whole
    bus = next(ln for ln in heads if ln.startswith(f"## Bus {long_id} (i2c)"))
    assert bus.endswith((": PASS", ": WARN", ": FAIL")), bus
    assert md.count(f"Bus {long_id} (i2c)") == 1


def test_markdown_wrapping_keeps_a_long_word_whole():
    # a viewer joins a paragraph's lines with a space: a part id or path cut at the
    # width read as two words; it stays whole on a line of its own, past the width
    from pinlib.present.review.markdown import _wrapped

    long_id = "team-parts/" + "x" * 90 + "/sensor-part.toml"
    lines = _wrapped(f"the part {long_id} states no i_ol here", "- ")
    assert any(long_id in ln for ln in lines), lines
    assert all(len(ln) <= 80 for ln in lines if long_id not in ln)


def test_the_crosstalk_caption_gives_a_minimum_at_the_search_end_as_a_bound(built):
    # the demo's minimum spacing (18 µm) is the search's own smallest gap: the checks and
    # figures read "18 µm or less", the chart's caption had dropped "or less"
    md, _ = built.markdown()
    text = " ".join(md.split())
    assert "Dashed: the minimum spacing 18 µm or less, where no check fails" in text


def test_a_closed_pull_up_window_is_captioned_as_closed():
    # tests/data/translator-cable.toml (invented): on the high segment the pull-ups across
    # the translator alone draw more than SDA's weakest sink carries, so no Rp(min)
    # exists; the caption read "Allowed pull-ups (shaded)" over a chart with no shading
    design = load_design(ROOT / "tests" / "data" / "translator-cable.toml")
    md = review.render_markdown(design, check_design(design))
    assert "*Pull-up window: x SDA, segment high.* No pull-up fits at any Cb shown" in md
    assert "*Pull-up window: x SCL, segment high.* Allowed pull-ups (shaded)" in md
    # and its subtitle gives no number where there is none ("Rp(min) inf Ω set by U3")
    built = review.build_review(design, check_design(design))
    (closed,) = [c for c in built.all_charts() if c.title == "Pull-up window: x SDA, "
                 "segment high"]
    assert closed.svg is not None and "inf" not in closed.svg
    assert "sink cannot carry the far side" in closed.svg


def test_the_monte_carlo_tables_count_the_boards_that_warn(tmp_path, capsys):
    # reproducer: the Monte Carlo table had no column for boards that warn (a CIPO
    # first-bit check read 100.00 % beside a margin of -228.3 %, warning on every
    # board), left out the yes/no ringing check that warned on 110 of 200 boards, and
    # the section never said "warn".  tests/data (invented): its CIPO rings on some
    # boards and passes on the others
    pytest.importorskip("pinlib.studies.whatif")
    from pinlib.studies import whatif

    path = ROOT / "tests" / "data" / "spi-ringing-some-boards.toml"
    design = load_design(path)
    mc = whatif.monte_carlo(design, 40, seed=1, progress=False)
    warned = [c for c in mc.checks if c.warns]
    ringing = [c for c in warned if c.id == "ringing"]
    assert ringing and all(0 < c.warns < 40 and c.margins is None for c in ringing)
    out = tmp_path / "r.md"
    main(["report", str(path), "--md", str(out), "--monte-carlo", "40", "--seed", "1"])
    capsys.readouterr()
    md = out.read_text(encoding="utf-8")
    section = md[md.index("## Monte Carlo"):md.index("## Parts")]
    assert "counts as passing it: the column of boards that warn" in " ".join(section.split())
    assert "| Check | Pass fraction | Confidence interval | Boards that warn | Lowest margin |" \
        in section
    for c in warned:  # every check that warns, with how many of the boards
        name = review._m(sampled_check_label(c.name, c.id))
        lo, hi = c.passes.interval
        assert f"| {name} | {c.passes.fraction:.2%} | {lo:.2%} to {hi:.2%} | {c.warns}/40 |" \
            in section, name
    # a check that neither varies, warns nor fails is not a row; one that varies and
    # never warns reads 0 of the boards
    quiet = [c for c in mc.checks if c.varies and not c.warns and not c.fails]
    assert quiet
    lo, hi = quiet[0].passes.interval
    assert f"| {review._m(quiet[0].label)} | 100.00% | {lo:.2%} to {hi:.2%} | 0/40 |" \
        in section
    steady = [c for c in mc.checks if not (c.varies or c.warns or c.fails or c.absent)]
    assert steady and all(f"| {review._m(c.label)} |" not in section for c in steady)
    page = review.render_html(design, check_design(design), mc=mc)
    part = page[page.index('<section id="monte-carlo"'):page.index('<section id="parts"')]
    assert '<th scope="col">Boards that warn</th>' in part
    for c in warned:
        shown = html.escape(sampled_check_label(c.name, c.id))
        row = re.search(rf'<tr( class="r-(?:warn|fail)")?><td>{re.escape(shown)}</td>.*?</tr>',
                        part)
        assert row and f'<td class="num">{c.warns}/40</td>' in row.group(0), shown
        assert row.group(1), shown   # coloured as a warning, or a failure when it fails
