"""Tests of corners and Monte Carlo (pinlib.studies.whatif) and of ``pinlib check --corners
--monte-carlo``: against the engine's own results, a closed-form probability, and
published confidence intervals."""

from __future__ import annotations

import json
import math
import re
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest

from pinlib.cli import main
from pinlib.core.errors import InputError
from pinlib.engines.dispatch import check_design
from pinlib.model.design import load_design
from pinlib.physics.rc import RISE_30_70
from pinlib.studies import whatif

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "workbooks" / "designs" / "demo-board.toml"
PARTS = Path(__file__).parent / "data" / "parts"

HEAD = """format = "pinlib.design/1"
title = "what-if test"
"""

# Invented buses that exercise every branch of the open-drain engine: parts' own and
# internal pull-ups, series resistors, a device on its own rail, a switched device, a
# slope-controlled output, a connector, a cable; a repeater with a static offset; a
# pass-transistor translator with auto pull-ups on both sides; an SMBus link.
BUSES = """
[[bus]]
id = "mixed"
protocol = "i2c"
mode = "fast"
supply = "3.3 V"
supply_tolerance = "{vtol}"
pullup = "auto"
pullup_tolerance = "{ptol}"
capacitance_tolerance = "{ctol}"
length_tolerance = "{ltol}"
trace = {{ length = "12 cm", capacitance = "0.9 pF/cm" }}
cables = [{{ part = "t-ribbon", length = "0.3 m" }}]
extra_capacitance = "8 pF"
devices = [
  {{ ref = "U1", part = "t-ctrl-3v3", role = "controller", internal_pullups = true }},
  {{ ref = "U2", part = "t-target", series_resistor = "100 Ω", capacitance_tolerance = "{ctol}" }},
  {{ ref = "U3", part = "t-module-4k7" }},
  {{ ref = "U4", part = "t-sensor-1v8-tolerant", supply = "1.8 V" }},
  {{ ref = "U5", part = "t-target", switched = true }},
  {{ ref = "U6", part = "t-target-slope" }},
  {{ ref = "J1", part = "t-connector" }},
  {{ ref = "U7", part = "t-target-bare" }},
]

[[bus]]
id = "rep"
protocol = "i2c"
mode = "fast"

[[bus.segment]]
id = "near"
supply = "3.3 V"
supply_tolerance = "{vtol}"
pullup_tolerance = "{ptol}"
devices = [
  {{ ref = "U11", part = "t-ctrl-3v3", role = "controller" }},
  {{ ref = "U15", part = "t-repeater", side = "a" }},
]

[[bus.segment]]
id = "far"
supply = "3.3 V"
supply_tolerance = "{vtol}"
pullup_tolerance = "{ptol}"
devices = [
  {{ ref = "U15", part = "t-repeater", side = "b" }},
  {{ ref = "U16", part = "t-target" }},
]

[[bus]]
id = "fet"
protocol = "i2c"
mode = "fast-plus"

[[bus.segment]]
id = "high"
supply = "3.3 V"
supply_tolerance = "{vtol}"
pullup = "auto"
pullup_tolerance = "{ptol}"
devices = [
  {{ ref = "U21", part = "t-ctrl-3v3", role = "controller" }},
  {{ ref = "Q1", part = "t-fet-translator", side = "b" }},
]

[[bus.segment]]
id = "low"
supply = "1.8 V"
supply_tolerance = "{vtol}"
pullup = "auto"
pullup_tolerance = "{ptol}"
devices = [
  {{ ref = "Q1", part = "t-fet-translator", side = "a" }},
  {{ ref = "U23", part = "t-sensor-1v8" }},
]

[[bus]]
id = "sm"
protocol = "smbus"
mode = "100k"
supply = "3.3 V"
supply_tolerance = "{vtol}"
pullup = "10 kΩ"
pullup_tolerance = "{ptol}"
extra_capacitance = "50 pF"
capacitance_tolerance = "{ctol}"
devices = [
  {{ ref = "U31", part = "t-ctrl-3v3", role = "controller" }},
  {{ ref = "U32", part = "t-gauge-smbus" }},
]
"""


def design(tmp_path, body: str, name: str = "d.toml"):
    path = tmp_path / name
    path.write_text(HEAD + body, encoding="utf-8")
    return load_design(path, library_folders=[PARTS])


def tolerant(tmp_path, vtol="5 %", ptol="1 %", ctol="10 %", ltol="5 %", extra=""):
    return design(tmp_path, extra + BUSES.format(vtol=vtol, ptol=ptol, ctol=ctol, ltol=ltol))


def engine_checks(result, bus_id):
    b = result.bus(bus_id)
    groups = b.segments or [b]
    return [c for g in groups for c in g.checks]


# --------------------------------------------------------------------------- Wilson interval


# from memory: R. G. Newcombe, Statistics in Medicine 17 (1998) 857-872, table I, method 3
# (score interval without continuity correction), printed to 4 decimals; not confirmed
# against a stored copy, so scipy's implementation below is the second reference
NEWCOMBE_TABLE_I = [((81, 263), (0.2553, 0.3662)), ((15, 148), (0.0624, 0.1605)),
                    ((0, 20), (0.0000, 0.1611)), ((1, 29), (0.0061, 0.1718))]


@pytest.mark.parametrize("counts,interval", NEWCOMBE_TABLE_I)
def test_wilson_interval_published_examples(counts, interval):
    lo, hi = whatif.wilson_interval(*counts)
    assert lo == pytest.approx(interval[0], abs=5e-5)
    assert hi == pytest.approx(interval[1], abs=5e-5)


@pytest.mark.parametrize("k,n", [(0, 1), (3, 10), (9990, 10000), (100000, 100000)])
def test_wilson_interval_matches_scipy(k, n):
    from scipy.stats import binomtest

    ci = binomtest(k, n).proportion_ci(confidence_level=0.95, method="wilson")
    lo, hi = whatif.wilson_interval(k, n)
    # scipy's score interval, an independent implementation of Wilson (1927)
    assert lo == pytest.approx(ci.low, abs=1e-12)
    assert hi == pytest.approx(ci.high, abs=1e-12)


def test_wilson_interval_refuses_non_proportions():
    with pytest.raises(InputError, match="not a proportion"):
        whatif.wilson_interval(5, 4)
    with pytest.raises(InputError, match="confidence"):
        whatif.wilson_interval(1, 4, confidence=1.5)


# --------------------------------------------------------------------------- zero tolerance


def _same(a, b) -> bool:
    return (a == b) or (a is not None and b is not None and math.isnan(a) and math.isnan(b))


def test_zero_tolerances_every_sample_is_the_nominal_result(tmp_path):
    d = tolerant(tmp_path, vtol="0 %", ptol="0 %", ctol="0 %", ltol="0 %")
    mc = whatif.monte_carlo(d, 64, seed=5)
    assert mc.parameters == []
    nominal = check_design(d)
    for bus in d.buses:
        engine = engine_checks(nominal, bus.id)
        mine = [c for c in mc.checks if c.bus == bus.id]
        # the vectorized model reproduces every check of the engine, in its order
        assert [c.id for c in mine] == [c.id for c in engine]
        for e, m in zip(engine, mine, strict=True):
            if e.margin is None:      # a yes/no check
                assert m.margins is None
                assert m.passes.passes == (64 if e.status != "fail" else 0)
                continue
            # every board equals the engine's result for this check, value and margin
            assert all(_same(float(x), e.margin) for x in m.margins), (m.name, e.margin)
            assert all(_same(float(x), e.value) for x in m.values), (m.name, e.value)
            assert m.passes.passes == (64 if e.status != "fail" else 0)
            assert not m.varies


def test_zero_tolerances_on_the_demo_design(tmp_path):
    text = DEMO.read_text(encoding="utf-8")
    text = re.sub(r'\n(supply_tolerance|pullup_tolerance|length_tolerance|spacing_tolerance) = '
                  r'"[^"]*"', "", text)
    text = text.replace("[[bus.segment]]\n",
                        '[[bus.segment]]\npullup_tolerance = "0 %"\nsupply_tolerance = "0 %"\n')
    text = text.replace('protocol = "smbus"\n', 'protocol = "smbus"\npullup_tolerance = "0 %"\n')
    path = tmp_path / "zero.toml"
    path.write_text(text, encoding="utf-8")
    d = load_design(path)
    mc = whatif.monte_carlo(d, 16, seed=1)
    nominal = check_design(d)
    for bus in ("sensors", "power"):
        mine = [c for c in mc.checks if c.bus == bus]
        for e, m in zip(engine_checks(nominal, bus), mine, strict=True):
            assert e.id == m.id
            if e.margin is not None:
                assert np.all(m.margins == e.margin), m.name
    # the push-pull buses (SPI flash, GPIO display) are sampled too: every board, every
    # line and timing check equals the engine's result (derived from check_design)
    assert set(mc.buses) == {"sensors", "power", "flash", "display"}
    for bus in ("flash", "display"):
        engine = pp_checks(nominal, bus)
        mine = [c for c in mc.checks if c.bus == bus]
        assert [c.id for c in mine] == [c.id for _, c in engine]
        for (sig, e), m in zip(engine, mine, strict=True):
            assert m.signal == sig
            if e.margin is not None:
                assert all(_same(float(x), e.margin) for x in m.margins), m.name
            if m.values is not None:
                assert all(_same(float(x), float(e.value)) for x in m.values), m.name
            assert m.passes.passes == (16 if e.status != "fail" else 0)


def pp_checks(result, bus_id):
    b = result.bus(bus_id)
    return [(ln.signal, c) for ln in b.lines for c in ln.checks] + [(None, c) for c in b.checks]


def test_a_drawn_spi_board_equals_the_engine_on_that_board(tmp_path):
    text = DEMO.read_text(encoding="utf-8").replace(
        'length_tolerance = "10 %"\n', 'length_tolerance = "20 %"\n', 1)
    assert 'length_tolerance = "20 %"' in text  # the demo's flash bus, first in the file
    path = tmp_path / "tol.toml"
    path.write_text(text, encoding="utf-8")
    d = load_design(path)
    mc = whatif.monte_carlo(d, 3, seed=11)
    cols = {p.key: i for i, p in enumerate(mc.parameters)}
    flash = d.bus("flash")
    for j in range(3):
        u = mc.draws[j]
        k = cols[("rail", 3.3, 0.05)]
        vdd = 3.3 * (1 + 0.05 * u[k])
        lines = {}
        for sig, line in flash.lines.items():
            f = 1 + 0.2 * u[cols[("line-length", "flash", sig)]]
            lines[sig] = replace(line, sections=tuple(replace(s, length=s.length * f)
                                                      for s in line.sections))
        # the board as drawn, without tolerances (the engine would take its corners)
        board = replace(flash, supply=vdd, lines=lines, supply_tolerance=None,
                        length_tolerance=None)
        other = replace(d, buses=tuple(board if b.id == "flash" else b for b in d.buses))
        engine = pp_checks(check_design(other), "flash")
        mine = [c for c in mc.checks if c.bus == "flash"]
        assert len(mine) == len(engine)
        # derived from check_design of the board rebuilt at the drawn values
        for (_, e), m in zip(engine, mine, strict=True):
            if e.margin is not None and math.isfinite(e.margin):
                assert m.margins[j] == pytest.approx(e.margin, rel=1e-6, abs=1e-12), m.name
    assert any(c.varies for c in mc.checks if c.bus == "flash")
    cr = whatif.corners(d)
    assert cr.methods["flash"] == "all 32 corners of 5 parameters"


# --------------------------------------------------------------------------- the RC rise


RC_BUS = """
[[bus]]
id = "rc"
protocol = "i2c"
mode = "fast"
supply = "3.3 V"
supply_tolerance = "0 %"
pullup = "9.1 kΩ"
pullup_tolerance = "10 %"
extra_capacitance = "20 pF"
capacitance_tolerance = "40 %"
devices = [
  { ref = "U1", part = "t-ctrl-3v3", role = "controller" },
  { ref = "U2", part = "t-target" },
]
"""


def p_product_below(t, a, b, c, d):
    """P[X·Y <= t] for independent X ~ U[a, b], Y ~ U[c, d] (all positive).

    derived from integrating the region under the hyperbola x·y = t over the rectangle:
    for x <= t/d every y counts (height d − c); for t/d < x < t/c the part below t/x
    (height t/x − c); beyond t/c none.  With x1 = clip(t/d, a, b), x2 = clip(t/c, a, b):
    P = [(d − c)(x1 − a) + t·ln(x2/x1) − c·(x2 − x1)] / ((b − a)(d − c)).
    """
    x1 = min(max(t / d, a), b)
    x2 = min(max(t / c, a), b)
    area = (d - c) * (x1 - a) + t * math.log(x2 / x1) - c * (x2 - x1)
    return area / ((b - a) * (d - c))


def test_rc_rise_pass_fraction_matches_the_analytic_probability(tmp_path):
    d = design(tmp_path, RC_BUS)
    n = 40_000
    mc = whatif.monte_carlo(d, n, seed=20261201)
    rise = mc.find("rc", "rise-time", "SDA")
    # Rp ~ U[9.1 kΩ·0.9, 9.1 kΩ·1.1]; Cb = 20 pF of pins (10 pF each, t-ctrl-3v3 and
    # t-target) + 20 pF·(1 ± 40 %) extra, so Cb ~ U[32 pF, 48 pF]; the check passes when
    # ln(7/3)·Rp·Cb <= 300 ns (UM10204 rev. 6 §7.1 and table 10, Fast-mode tr max)
    k = math.log(7.0 / 3.0)
    assert RISE_30_70 == pytest.approx(k, rel=1e-12)   # published: UM10204 rev. 6 §7.1, 0.8473
    p = p_product_below(300e-9 / k, 9.1e3 * 0.9, 9.1e3 * 1.1, 32e-12, 48e-12)
    assert 0.2 < p < 0.8          # the case is not a trivial one
    lo, hi = rise.passes.interval
    assert lo <= p <= hi, (rise.passes, p)
    # each board passes exactly when its own rise time is within the limit
    assert rise.passes.passes == int(np.count_nonzero(rise.values <= 300e-9))
    # and the margin follows the pull-up and the capacitance, not the SCL resistor
    names = [name for name, _ in rise.sensitivity]
    assert set(names[:2]) == {"rc SDA pull-up", "rc board capacitance"}
    assert all(c < 0 for _, c in rise.sensitivity[:2])   # larger Rp or Cb: less margin


def test_seeded_runs_are_reproducible(tmp_path):
    d = tolerant(tmp_path)
    a = whatif.monte_carlo(d, 3000, seed=42, chunk=1000)
    b = whatif.monte_carlo(d, 3000, seed=42, chunk=1000)
    c = whatif.monte_carlo(d, 3000, seed=43, chunk=1000)
    assert a.seed == 42
    assert np.array_equal(a.draws, b.draws)
    assert not np.array_equal(a.draws, c.draws)
    for x, y in zip(a.checks, b.checks, strict=True):
        assert x.name == y.name and x.passes == y.passes
        if x.margins is not None:
            assert np.array_equal(x.margins, y.margins)
    # without a seed one is drawn and reported: running with it repeats the run
    free = whatif.monte_carlo(d, 500)
    again = whatif.monte_carlo(d, 500, seed=free.seed)
    assert np.array_equal(free.draws, again.draws)


def _same_counts(a, b):
    assert a.n == b.n and a.board == b.board and a.buses == b.buses
    for x, y in zip(a.checks, b.checks, strict=True):
        assert x.name == y.name and x.passes == y.passes
        assert (x.warns, x.fails) == (y.warns, y.fails), x.name
        assert (x.low, x.high, x.worst_board) == (y.low, y.high, y.worst_board), x.name


@pytest.mark.parametrize("distribution", ["uniform", "normal"])
def test_chunks_do_not_change_the_run(distribution):
    # the demo: open-drain buses, a bridge, and the SPI flash bus (push-pull tables)
    d = replace(load_design(DEMO), distribution=distribution)
    one = whatif.monte_carlo(d, 3000, seed=7, chunk=3000)
    for chunk in (1000, 700):
        many = whatif.monte_carlo(d, 3000, seed=7, chunk=chunk)
        assert np.array_equal(one.draws, many.draws)     # board i's draws, whatever the chunk
        _same_counts(one, many)
        for x, y in zip(one.checks, many.checks, strict=True):
            for a, b in ((x.margins, y.margins), (x.values, y.values)):
                assert (a is None) == (b is None)
                if a is not None:
                    assert np.array_equal(a, b, equal_nan=True), x.name
            assert x.sensitivity == y.sensitivity and x.r2 == y.r2, x.name


def test_a_long_run_keeps_counts_of_every_board_and_samples_of_the_first(tmp_path, monkeypatch):
    d = tolerant(tmp_path)
    full = whatif.monte_carlo(d, 3000, seed=11, chunk=400)
    monkeypatch.setattr(whatif.montecarlo, "SENSITIVITY_BOARDS", 1000)
    part = whatif.monte_carlo(d, 3000, seed=11, chunk=400)
    _same_counts(full, part)
    assert np.array_equal(part.draws, full.draws[:1000])
    assert any(c.varies for c in full.checks)
    for x, y in zip(full.checks, part.checks, strict=True):
        assert x.sampled == 3000 and y.sampled == 1000
        assert x.varies == y.varies, x.name
        if x.margins is None:
            continue
        assert np.array_equal(y.margins, x.margins[:1000], equal_nan=True), x.name
        # the lowest margin is of every board; it is the full run's one
        assert y.margin_quantiles((0.0,)) == x.margin_quantiles((0.0,)), x.name
        fin = np.isfinite(x.margins)
        if fin.any():
            assert x.low == float(x.margins[fin].min())
            assert x.margins[x.worst_board] == x.low
            assert x.high == float(x.margins[fin].max())
        # pass, warn and fail counts add up to the boards
        assert x.passes.passes + x.fails == x.passes.n, x.name
    assert any("first 1,000 boards" in n for n in part.notes)


def test_margin_histograms_count_every_board_on_the_right_side_of_the_limit(monkeypatch):
    d = load_design(DEMO)
    full = whatif.monte_carlo(d, 2000, seed=5, chunk=2000)
    monkeypatch.setattr(whatif.MarginHistogram, "MAX_BINS", 50)   # force merging of bins
    many = whatif.monte_carlo(d, 2000, seed=5, chunk=300)
    counted = 0
    for x, y in zip(full.checks, many.checks, strict=True):
        if x.margins is None:
            assert y.histogram is None
            continue
        finite = x.margins[np.isfinite(x.margins)]
        for h in (x.histogram, y.histogram):
            assert h.total == finite.size, x.name
            got = h.bins()
            if got is None:
                continue
            w, k, count = got
            assert count.sum() == finite.size
            # bins [k·w, (k + 1)·w): those with k >= 0 hold exactly the non-negative margins
            assert count[k >= 0].sum() == np.count_nonzero(finite >= 0), x.name
            if h is y.histogram:
                assert k.max() - k.min() < 50      # merged as the bins grew past MAX_BINS
            counted += 1
    assert counted > 10


def test_monte_carlo_refuses_absurd_work(tmp_path):
    d = design(tmp_path, RC_BUS)
    with pytest.raises(InputError, match="too many boards") as err:
        whatif.monte_carlo(d, whatif.MAX_BOARDS + 1)
    assert "100,000,000" in err.value.message


def test_an_interrupt_stops_the_run_between_chunks(tmp_path):
    d = design(tmp_path, RC_BUS)
    seen = []

    def stop(done, total):
        seen.append(done)
        if done >= 2000:
            raise KeyboardInterrupt

    with pytest.raises(KeyboardInterrupt):
        whatif.monte_carlo(d, 10_000, seed=1, chunk=1000, progress=stop)
    assert seen == [1000, 2000]


def test_normal_draws_put_the_tolerance_at_three_sigma(tmp_path):
    d = tolerant(tmp_path, extra='distribution = "normal"\n')
    mc = whatif.monte_carlo(d, 20_000, seed=3)
    assert mc.distribution == "normal"
    # derived from tolerance = 3σ: the unit deviations have σ = 1/3
    assert np.std(mc.draws, axis=0) == pytest.approx(np.full(mc.draws.shape[1], 1 / 3), rel=0.03)
    assert np.abs(mc.draws).max() > 1.0    # beyond the tolerance now and then


def test_monte_carlo_refuses_no_samples(tmp_path):
    d = design(tmp_path, RC_BUS)
    with pytest.raises(InputError, match="too few samples"):
        whatif.monte_carlo(d, 0)


def test_progress_callback_sees_every_sample(tmp_path):
    d = design(tmp_path, RC_BUS)
    seen = []
    whatif.monte_carlo(d, 2500, seed=1, chunk=1000, progress=lambda done, total: seen.append(
        (done, total)))
    assert seen == [(1000, 2500), (2000, 2500), (2500, 2500)]


def test_progress_bar_on_request_and_silent_otherwise(tmp_path, capsys):
    d = design(tmp_path, RC_BUS)
    whatif.monte_carlo(d, 2000, seed=1, chunk=500)
    assert capsys.readouterr().err == ""        # not a terminal: no bar
    whatif.monte_carlo(d, 2000, seed=1, chunk=500, progress=True)
    err = capsys.readouterr().err
    assert "Monte Carlo" in err and "/2000" in err   # a tqdm bar, as asked


def test_parameters_of_a_design(tmp_path):
    d = tolerant(tmp_path)
    names = {p.name: p for p in whatif.parameters(d)}
    # one 3.3 V rail for every bus, the 1.8 V rails of U4 (own rail) and the low segment
    assert names["rail 3.3 V"].tolerance == pytest.approx(0.05)
    assert "rail 1.8 V" in names
    for want in ("mixed SDA pull-up", "mixed SCL pull-up", "U3 SDA on-part pull-up",
                 "U1 SDA internal pull-up", "U2 SDA series resistor", "U2 pin capacitance",
                 "mixed board capacitance", "mixed trace and cable length",
                 "fet/high SDA pull-up", "sm board capacitance"):
        assert want in names, want
    assert names["mixed trace and cable length"].nominal == pytest.approx(0.42)


MODULE_BUS = """
[[bus]]
id = "fan"
protocol = "smbus"
mode = "100k"

[[bus.segment]]
id = "low"
supply = "1.8 V"
supply_tolerance = "5 %"
pullup = "2.2 kΩ"
devices = [
  { ref = "U1", part = "mcu-1v8", role = "controller" },
  { ref = "M1", part = "level-translator-module", side = "a" },
]

[[bus.segment]]
id = "high"
supply = "3.3 V"
supply_tolerance = "5 %"
pullup = "2.2 kΩ"
devices = [
  { ref = "M1", part = "level-translator-module", side = "b" },
  { ref = "U3", part = "fan-controller-smbus" },
]
"""


def test_a_bridges_two_sides_are_two_parameters_by_name(tmp_path):
    # the module's pull-ups on side a (1.8 V) and side b (3.3 V) are two resistors: two
    # parameters, each named by its side (one name for both read as a repeated corner)
    path = tmp_path / "m.toml"
    path.write_text(HEAD + MODULE_BUS, encoding="utf-8")
    d = load_design(path)
    names = [p.name for p in whatif.parameters(d)]
    assert len(names) == len(set(names))
    for want in ("M1 side a SDA on-part pull-up", "M1 side b SDA on-part pull-up",
                 "M1 side a SCL on-part pull-up", "M1 side b SCL on-part pull-up"):
        assert want in names, want
    res = whatif.corners(d)
    listed = [p["name"] for p in res.to_json()["parameters"]["fan"]]
    assert len(listed) == len(set(listed))
    for found in res.checks:
        got = [n for n, _, _ in found.corner]
        assert len(got) == len(set(got))


# --------------------------------------------------------------------------- corners


def test_corners_find_the_known_worst_corner(tmp_path):
    d = tolerant(tmp_path)
    res = whatif.corners(d)
    nominal = check_design(d)
    rise = res.find("mixed", "rise-time", "SDA")
    ends = {n: e for n, e, _ in rise.corner}
    # derived from tr = k·Rp·Cb: the largest pull-up and every capacitance at its top;
    # the 30-70 % factor does not depend on the rail, so the rail is not in the corner
    assert ends["mixed SDA pull-up"] == "+"
    assert ends["U3 SDA on-part pull-up"] == "+"
    assert ends["mixed board capacitance"] == "+"
    assert ends["mixed trace and cable length"] == "+"
    assert ends["U2 pin capacitance"] == "+"
    assert "rail 3.3 V" not in ends and "mixed SCL pull-up" not in ends
    # the engine takes the same corner: the margins agree
    engine = next(c for c in engine_checks(nominal, "mixed") if c.id == "rise-time")
    assert rise.margin == pytest.approx(engine.margin, rel=1e-9)
    # sink current: derived from I = VDD/(Rp + Rs + Ron): the rail high, the pull-ups low
    sink = res.find("sm", "sink-current", "SDA")
    assert [(n, e) for n, e, _ in sink.corner][:2] in (
        [("rail 3.3 V", "+"), ("sm SDA pull-up", "−")],
        [("sm SDA pull-up", "−"), ("rail 3.3 V", "+")])
    engine = next(c for c in engine_checks(nominal, "sm") if c.id == "sink-current")
    assert sink.margin == pytest.approx(engine.margin, rel=1e-9)
    # SMBus rise: derived from k = ln((VDD − 0.65)/(VDD − 1.5)), larger at a lower rail
    smb = res.find("sm", "rise-time", "SDA")
    assert dict((n, e) for n, e, _ in smb.corner)["rail 3.3 V"] == "−"
    # every parameter's gain is what flipping it gives back: positive at the worst corner
    assert all(g > 0 for _, _, g in rise.corner)


def test_corners_screening_agrees_with_every_vertex(tmp_path):
    d = tolerant(tmp_path)
    full = whatif.corners(d)
    screened = whatif.corners(d, exhaustive_limit=0)
    assert "screened" in screened.methods["mixed"]
    for a, b in zip(full.checks, screened.checks, strict=True):
        assert a.name == b.name
        if a.margin is not None:
            assert b.margin == pytest.approx(a.margin, rel=1e-9, abs=1e-12), a.name


def test_corners_without_tolerances(tmp_path):
    d = design(tmp_path, RC_BUS.replace('"10 %"', '"0 %"').replace('"40 %"', '"0 %"'))
    res = whatif.corners(d)
    assert res.methods["rc"] == "no toleranced parameter"
    assert all(not c.corner for c in res.checks)
    engine = engine_checks(check_design(d), "rc")
    for e, c in zip(engine, res.checks, strict=True):
        assert c.status == e.status


# --------------------------------------------------------------------------- command line


def test_cli_monte_carlo_json_is_reproducible(capsys):
    code = main(["check", str(DEMO), "--monte-carlo", "300", "--seed", "9", "--json"])
    first = json.loads(capsys.readouterr().out)
    assert code == 0
    mc = first["monte_carlo"]
    assert mc["format"] == "pinlib.montecarlo/1"
    assert mc["samples"] == 300 and mc["seed"] == 9
    assert mc["interval"] == "Wilson score interval" and mc["confidence"] == 0.95
    assert first["buses"] and first["format"] == "pinlib.result/1"   # the result is intact
    assert main(["check", str(DEMO), "--monte-carlo", "300", "--seed", "9", "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["monte_carlo"] == mc


def test_cli_corners_and_text(capsys):
    assert main(["check", str(DEMO), "--corners", "--monte-carlo", "200", "--seed", "1"]) == 0
    out = capsys.readouterr().out
    assert "Corners:" in out and "Monte Carlo: 200 boards" in out
    assert "Wilson score interval" in out
    assert main(["check", str(DEMO), "--corners", "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["corners"]["format"] == "pinlib.corners/1"
    assert "monte_carlo" not in data


def test_cli_bad_options(capsys):
    assert main(["check", str(DEMO), "--seed", "4"]) == 2
    assert "--monte-carlo" in capsys.readouterr().err
    with pytest.raises(SystemExit) as exc:
        main(["check", str(DEMO), "--monte-carlo", "0"])
    assert exc.value.code == 2
    with pytest.raises(SystemExit) as exc:
        main(["check", str(DEMO), "--monte-carlo", "10", "--seed", "-1"])
    assert exc.value.code == 2


def test_cli_check_help_lists_the_new_options(capsys):
    with pytest.raises(SystemExit) as exc:
        main(["check", "--help"])
    assert exc.value.code == 0
    out = capsys.readouterr().out
    for opt in ("--monte-carlo", "--seed", "--corners", "--save", "--threshold", "--json"):
        assert opt in out
    assert "pinlib check board.toml --monte-carlo 100000 --seed 7" in out


def test_the_corners_bar_counts_corner_boards(monkeypatch):
    # the bar waits on corner boards, not buses: every board the search evaluates is
    # counted once, and the count is not known in advance (total None)
    from pinlib.engines.opendrain import batch as ob

    d = load_design(DEMO)
    boards = []
    build = ob.build

    def counted(bus, design, scen, **kw):
        boards.append(scen.n)
        return build(bus, design, scen, **kw)

    monkeypatch.setattr(whatif.cornersearch.ob, "build", counted)
    seen = []
    whatif.corners(d, progress=lambda done, total: seen.append((done, total)))
    assert seen and all(total is None for _, total in seen)
    assert seen[-1][0] > len(d.buses)              # more than one unit per bus
    assert sum(boards) <= seen[-1][0]              # every open-drain board is counted


def test_monte_carlo_from_the_checks_results_equals_its_own(monkeypatch):
    """`pinlib check --monte-carlo` and `pinlib report` hand the run the buses and
    couplings they have just checked: the same boards and counts, and no bus or
    coupling evaluated a second time."""
    import pinlib.engines.dispatch as dispatch

    d = load_design(DEMO)
    own = whatif.monte_carlo(d, 400, seed=7, progress=False)
    checked = check_design(d)
    calls = []
    for name in ("evaluate_bus", "evaluate_couplings"):
        real = getattr(dispatch, name)
        monkeypatch.setattr(dispatch, name,
                            lambda *a, _real=real, _n=name, **k: calls.append(_n) or _real(*a, **k))
    given = whatif.monte_carlo(d, 400, seed=7, progress=False,
                               results={b.id: b for b in checked.buses},
                               couplings=checked.couplings)
    assert calls == []
    assert d.couplings   # the demo's coupling is sampled too
    # derived from the engine itself: the same nominal results, the same draws
    assert json.dumps(given.to_json(), sort_keys=True) == json.dumps(own.to_json(),
                                                                     sort_keys=True)


def test_monte_carlo_says_on_how_many_boards_a_passing_check_warned(capsys, monkeypatch):
    # A warning passes (only a published limit fails), so a check warning on every board
    # read "100.00% ... (200/200)" beside its lowest margin with nothing to say it had
    # warned; the row and the JSON now count the boards that warn
    monkeypatch.setenv("COLUMNS", "400")
    assert main(["check", str(DEMO), "--monte-carlo", "200", "--seed", "1", "--json"]) == 0
    checks = json.loads(capsys.readouterr().out)["monte_carlo"]["checks"]
    gate = next(c for c in checks if c["id"] == "bridge-gate-drive")
    assert (gate["warns"], gate["fails"], gate["pass"]["passes"]) == (200, 0, 200)
    # its margin is the gate overdrive in volts, never a percentage of a limit
    assert gate["margin_unit"] == "V"
    assert all(c["warns"] == 0 for c in checks if c["nominal_status"] == "pass"
               and c["pass"]["passes"] == 200 and not c["varies"])
    from pinlib.studies.whatif import mcresult
    shown = mcresult.McResult.format_text
    monkeypatch.setattr(mcresult.McResult, "format_text",
                        lambda self, limit=12: shown(self, None))  # every row
    assert main(["check", str(DEMO), "--monte-carlo", "200", "--seed", "1"]) == 0
    out = capsys.readouterr().out
    row = next(ln for ln in out.splitlines() if "Translator gate drive Q1 " in ln)
    assert "(200/200)" in row and "warns on 200;" in row
    low = gate["margin"]["min"]
    assert f"min +{low * 1e3:.0f} mV  warns" in row  # it read "min  +21.3 %"
    assert "a warning passing" in out
    assert not any("warns on" in ln for ln in out.splitlines() if "Supply range" in ln)


def test_the_yields_count_the_passing_boards_that_warn(capsys, monkeypatch):
    # "all sampled buses pass on 100.00% (200/200)" read as a clean bill beside a gate
    # drive that warns on every board; the yields now say how many of the passing
    # boards warn, per bus and for the board, in the text, the JSON and the review
    monkeypatch.setenv("COLUMNS", "400")
    assert main(["check", str(DEMO), "--monte-carlo", "200", "--seed", "1", "--json"]) == 0
    mc = json.loads(capsys.readouterr().out)["monte_carlo"]
    by_bus: dict = {}
    for c in mc["checks"]:
        by_bus.setdefault(c["bus"], []).append(c)
        assert c["pass"]["warned"] == c["warns"]  # a check's own passing boards that warn
    for bus, y in mc["buses"].items():
        most = max(c["warns"] for c in by_bus[bus])
        # every board passes on these buses, so the boards that warn are at least those of
        # the check that warns most and at most all of its checks' together
        assert y["passes"] == 200
        assert most <= y["warned"] <= min(200, sum(c["warns"] for c in by_bus[bus]))
    gate = next(c for c in mc["checks"] if c["id"] == "bridge-gate-drive")
    assert gate["warns"] == 200 and mc["buses"][gate["bus"]]["warned"] == 200
    assert mc["board"] == {**mc["board"], "passes": 200, "warned": 200}
    assert main(["check", str(DEMO), "--monte-carlo", "200", "--seed", "1"]) == 0
    out = capsys.readouterr().out
    # 98.12 %: the Wilson score interval's lower bound for 200 of 200 at 95 %,
    # 200 / (200 + 1.96²) (published: E. B. Wilson, JASA 22 (1927), the score interval)
    assert "all sampled buses pass on 100.00% [98.12%, 100.00%] (200/200), 200 of them " \
           "with a warning" in out
    assert f"bus {gate['bus']}: 100.00% [98.12%, 100.00%] (200/200), 200 with a warning" \
        in out
    quiet = [b for b, y in mc["buses"].items() if y["warned"] == 0]
    for b in quiet:  # a bus with no warning says nothing of warnings
        kind = "coupling" if "<-" in b else "bus"
        assert f"{kind} {b}: 100.00% [98.12%, 100.00%] (200/200)\n" in out
    from pinlib.present.review.montecarlo import _mc_summary

    said = _mc_summary(whatif.monte_carlo(load_design(DEMO), 200, seed=1))
    assert "Every sampled bus passes on 100.00% (98.12% to 100.00%, 200/200) of the " \
           "boards, 200 of them with a warning." in said
    assert f"Bus {gate['bus']}: no check fails on 100.00% (98.12% to 100.00%, 200/200), " \
           "200 of them with a warning." in said


def test_margin_order_keeps_volts_after_fractions_and_places_missing_margins():
    # one order for the Monte Carlo rows, the corners and the report's charts: a margin
    # in volts (+0.05 V) is never ranked below a fraction of a limit (+0.30), however
    # small, and a missing margin goes first or last as the caller asks
    from pinlib.model.result import margin_order

    margins = [(0.05, "V"), (0.30, None), (None, None), (-0.2, None), (float("nan"), "V")]
    last = sorted(margins, key=lambda m: margin_order(*m))
    assert last[:3] == [(-0.2, None), (0.30, None), (None, None)]
    assert last[3] == (0.05, "V")
    first = sorted(margins, key=lambda m: margin_order(*m, -math.inf))
    assert first[:3] == [(None, None), (-0.2, None), (0.30, None)]


def test_a_row_without_sensitivities_says_why(capsys, monkeypatch):
    # A check that fails on every board with the same margin (the one-km link's CIPO
    # setup: it has no toleranced parameter) printed a bare "—" where the parameters it
    # follows go; the text and the report now say why none is named
    monkeypatch.setenv("COLUMNS", "400")
    one_km = ROOT / "tests" / "data" / "spi-one-km.toml"
    assert main(["check", str(one_km), "--monte-carlo", "20", "--seed", "1"]) == 1
    out = capsys.readouterr().out
    row = next(ln for ln in out.splitlines() if "CIPO setup" in ln and "(0/20)" in ln)
    assert row.rstrip().endswith("the same margin on every board")
    assert not any(ln.rstrip().endswith("—") for ln in out.splitlines())

    from pinlib.present.review.montecarlo import _mc_cells, _mc_rows
    from pinlib.studies.whatif.mcresult import McCheck
    from pinlib.studies.whatif.yields import Yield

    def check(margins, sensitivity=(), r2=None):
        return McCheck("b x", "b", "b", None, "x", "", "", "pass", 0.1,
                       Yield(4, 4, (0.5, 1.0)), margins=margins,
                       sensitivity=list(sensitivity), r2=r2, sampled=4)

    steady = check(np.full(4, 0.1))
    yes_no = check(None)
    loose = check(np.array([0.1, 0.3, 0.2, 0.4]), r2=0.01)
    unfitted = check(np.array([0.1, 0.3, 0.2, 0.4]))
    named = check(np.array([0.1, 0.3, 0.2, 0.4]), [("rail 3.3 V", -0.9)], 0.81)
    assert steady.sensitivity_text() == "the same margin on every board"
    assert yes_no.sensitivity_text() == "a yes/no check: no margin to follow"
    assert loose.sensitivity_text() == ("no parameter's coefficient reaches 0.05 clear of "
                                        "the fit's noise (R² 0.01)")
    assert unfitted.sensitivity_text() == "too few boards to fit"
    assert named.sensitivity_text() == "rail 3.3 V -0.90"
    # a check absent from some boards: its margin is the same where it is
    part = McCheck("b x", "b", "b", None, "x", "", "", "pass", 0.1, Yield(4, 4, (0.5, 1.0)),
                   margins=np.array([0.1, np.nan, 0.1, np.nan]), sampled=4, absent=2)
    assert part.sensitivity_text() == "the same margin on every board that has it"
    # the report's table says the same in its column
    rows = _mc_rows([steady, named])
    assert [_mc_cells(r)[5] for r in rows] == ["the same margin on every board",
                                               "rail 3.3 V -0.90"]


def test_wilson_bounds_are_exact_where_no_board_fails_or_none_passes():
    # The formula's sum gave 0.9999999999999998 for the upper bound when every board
    # passes and 1.08e-19 for the lower one when none does; both are exact by the
    # algebra (derived from the Wilson formula: p = 1 gives (1 + z²/n)/(1 + z²/n))
    assert whatif.wilson_interval(200, 200)[1] == 1.0
    assert whatif.wilson_interval(0, 200)[0] == 0.0
    # derived from the Wilson formula: z²/(n + z²) with z = 1.96, n = 300,000 -> 1.28e-5
    lo, hi = whatif.wilson_interval(300_000, 300_000)
    assert hi == 1.0 and lo == pytest.approx(1 - 1.2805e-5, abs=1e-9)


def test_a_pass_fraction_short_of_one_never_reads_100_percent():
    # 300,000 boards that all pass: the Wilson interval's lower bound is 1 - 1.28e-5,
    # which two decimals printed as "[100.00%, 100.00%]", an interval of no width; and
    # 299,998 passing boards read "100.00%" as though none had failed
    from pinlib.present.review.montecarlo import _yield
    from pinlib.studies.whatif.yields import Yield, _pct, percent_text

    clean = Yield(300_000, 300_000, whatif.wilson_interval(300_000, 300_000))
    assert _pct(clean) == "100.00% [99.999%, 100.00%] (300000/300000)"
    assert _yield(clean) == "100.00% (99.999% to 100.00%, 300000/300000)"
    assert percent_text(299_998 / 300_000) == "99.999%"
    assert percent_text(1 / 300_000) == "0.0003%"
    assert percent_text(0.91004) == "91.00%"       # two decimals where they tell
    assert (percent_text(1.0), percent_text(0.0)) == ("100.00%", "0.00%")


def test_corner_and_monte_carlo_rows_name_checks_by_their_labels(capsys, monkeypatch):
    # Once "flash cipo-setup U7" and "pass ... +3.6 %  at" with the corner on the next
    # line: the rows now read as the checks table does, and "at" stays with its corner.
    from pinlib.studies.whatif import cornersearch, mcresult

    for cls in (mcresult.McResult, cornersearch.CornersResult):
        shown = cls.format_text
        monkeypatch.setattr(cls, "format_text", lambda self, limit=12, f=shown: f(self, None))
    assert main(["check", str(DEMO), "--corners", "--monte-carlo", "50", "--seed", "1"]) == 0
    out = capsys.readouterr().out
    study = out[out.index("Corners:"):]
    assert "flash CIPO setup U7" in study and "cipo-setup" not in study
    assert "sensors/main-3v3 SCL Rise time" in study and "rise-time" not in study
    assert not any(ln.rstrip().endswith(" at") for ln in study.splitlines())
    assert "    PASS  " in study and "    pass  " not in study


def test_a_corner_row_names_the_device_its_worst_is_of():
    # the demo's I2C supply-range rows read "sensors/main-3v3 Supply range" while the
    # SPI rows named their device: a check over several devices now names the one its
    # worst corner is of, the engine's own subject at the same corner
    res = whatif.corners(load_design(DEMO))
    nominal = check_design(load_design(DEMO))
    for c in res.checks:
        if c.bus != "sensors" or c.id not in ("supply-range", "input-voltage"):
            continue
        seg = next(g for g in nominal.bus("sensors").segments if g.id == c.segment)
        engine = next(e for e in seg.checks if e.id == c.id)
        # one rail per segment here: the worst device is the engine's at its own corner
        assert c.subject == engine.subject, c.name
        assert c.label.endswith(f" {engine.subject}") and c.to_json()["subject"] == c.subject
    # a name that already ends with its subject (an SPI device's own row) adds none
    spi = res.find("flash", "supply-range")
    assert spi.subject is None and spi.label.count("U") == 1


def test_sensitivities_are_standardized_coefficients_read_in_blocks(monkeypatch):
    from types import SimpleNamespace

    from pinlib.studies.whatif import sensitivity

    rng = np.random.default_rng(20261204)
    n = 20_011  # not a multiple of a block: the last block is short
    u = rng.random((n, 3))
    params = [SimpleNamespace(name=x) for x in ("a", "b", "c")]
    linear = 2.0 * u[:, 0] - u[:, 1]
    steady = np.full(n, 0.1)  # equal on every board; its mean is 0.1 only to rounding
    partly = linear.copy()
    partly[::5] = np.nan       # fitted on its finite boards
    got = sensitivity._sensitivities(u, [linear, steady, None, partly], params)
    # derived: least squares recovers y = 2a − b exactly, so each standardized coefficient
    # is the coefficient times the draw's standard deviation over the margin's (on these
    # boards), c's is 0 and R² is 1; for independent draws of equal variance they tend to
    # 2/√5 and −1/√5
    (names, r2) = got[0]
    sd_y = linear.std()
    assert dict(names) == pytest.approx({"a": 2 * u[:, 0].std() / sd_y,
                                         "b": -u[:, 1].std() / sd_y}, abs=1e-9)
    assert dict(names) == pytest.approx({"a": 2 / math.sqrt(5), "b": -1 / math.sqrt(5)},
                                        abs=0.01)
    assert r2 == pytest.approx(1.0, abs=1e-9)
    assert got[1] == ([], None)  # a margin that does not vary has no fit, not R² 0
    assert got[2] == ([], None)  # a yes/no check
    assert dict(got[3][0]) == pytest.approx(dict(names), abs=0.01)
    # the blocks only order the sums: one board a block gives the same fit
    monkeypatch.setattr(sensitivity, "_BLOCK", 1)
    again = sensitivity._sensitivities(u[:2000], [linear[:2000], steady[:2000]], params)
    monkeypatch.setattr(sensitivity, "_BLOCK", 16384)
    whole = sensitivity._sensitivities(u[:2000], [linear[:2000], steady[:2000]], params)
    assert dict(again[0][0]) == pytest.approx(dict(whole[0][0]), rel=1e-12)
    assert again[1] == whole[1] == ([], None)


def test_a_sensitivity_within_the_fits_noise_is_not_named():
    from types import SimpleNamespace

    from pinlib.studies.whatif import sensitivity

    # a margin V-shaped in one parameter (as a supply range is in its rail) and linear in
    # another, on 2,000 boards of 14 independent parameters: the fit leaves most of the
    # V unexplained, and chance correlations of the other 12 reach the 0.05 floor
    rng = np.random.default_rng(19)  # invented test data: a seed where two of them do
    n = 2000
    u = rng.random((n, 14))
    y = np.abs(u[:, 0] - 0.5) + 0.3 * u[:, 1]
    params = [SimpleNamespace(name=f"p{j}") for j in range(14)]
    (named, r2), = sensitivity._sensitivities(u, [y], params)
    # the reference: numpy's least squares on the standardized draws and margin
    z = (u - u.mean(axis=0)) / u.std(axis=0)
    beta = np.linalg.lstsq(z, (y - y.mean()) / y.std(), rcond=None)[0]
    chance = [f"p{j}" for j in range(2, 14) if abs(beta[j]) >= 0.05]
    assert chance == ["p7", "p8"]          # over the floor by chance...
    named = dict(named)
    assert not set(chance) & set(named)   # ...and within 3 standard errors: not named
    assert named["p1"] == pytest.approx(beta[1], abs=1e-9)
    # derived: each standard error is sqrt((1 − R²)/(n − k − 1)) on nearly orthogonal
    # draws, about 0.019 here: 3 of them, 0.057, is above both chance coefficients
    assert 3 * math.sqrt((1 - r2) / (n - 15)) > max(abs(beta[7]), abs(beta[8]))


def test_a_slack_in_seconds_that_warns_or_fails_is_not_hidden_among_the_more():
    # Margins in a unit sort after every fraction (they are never ranked against them):
    # with a dozen passing fractions ahead, a warning (Monte Carlo) or failing (corners)
    # CIPO setup slack in seconds fell into "… 1 more" (invented rows)
    from pinlib.studies.whatif.cornersearch import CornerCheck, CornersResult
    from pinlib.studies.whatif.mcresult import McCheck, McResult
    from pinlib.studies.whatif.yields import Yield

    def mc(i, margins, warns=0, unit=None):
        return McCheck(f"b c{i}", "b", "b", None, f"c{i}", "", "", "pass", 0.5,
                       Yield(4, 4, (0.5, 1.0)), margins=np.asarray(margins, dtype=float),
                       warns=warns, fails=0, margin_unit=unit)

    rows = [mc(i, [0.2 + i / 100, 0.3, 0.4, 0.5]) for i in range(12)]
    rows.append(mc(99, [-2e-9, -1e-9, -1e-9, -1e-9], warns=4, unit="s"))
    text = McResult("d", 4, 1, "uniform", [], rows, {}, None, np.zeros((4, 0))).format_text()
    listed = [ln.split()[1] for ln in text.splitlines() if ln.startswith("    b ")]
    assert listed[0] == "C99" and len(listed) == 12   # first, not in the one more
    assert "… 1 more that varies" in text

    def corner(i, status, margin, unit=None):
        return CornerCheck(f"b c{i}", "b", "b", None, f"c{i}", "", "", margin, 0.0, 1.0,
                           status, [("rail", "+", 0.1)], margin_unit=unit)

    crows = [corner(i, "pass", 0.2 + i / 100) for i in range(12)]
    crows.append(corner(99, "fail", -1e-9, "s"))
    ctext = CornersResult("d", crows, {}, {}).format_text()
    listed = [ln.split()[:3] for ln in ctext.splitlines()
              if ln.startswith(("    FAIL", "    PASS"))]
    assert listed[0] == ["FAIL", "b", "C99"] and len(listed) == 12


def test_a_margin_that_moves_by_rounding_only_does_not_vary():
    # a level check whose value and limit both follow one rail: (0.9 − 0.63)/0.63 of
    # the rail on every board, its last bits following the rail by rounding (invented)
    from types import SimpleNamespace

    from pinlib.studies.whatif import sensitivity
    from pinlib.studies.whatif.mcresult import McCheck
    from pinlib.studies.whatif.yields import Yield

    rng = np.random.default_rng(3)
    u = rng.random((5000, 2))
    rail = 3.3 * (0.95 + 0.1 * u[:, 0])
    margin = (0.9 * rail - 0.63 * rail) / (0.63 * rail)
    assert margin.max() > margin.min()           # it does move, by a unit in the last place
    params = [SimpleNamespace(name="rail 3.3 V"), SimpleNamespace(name="other")]
    assert sensitivity._sensitivities(u, [margin], params) == [([], None)]
    row = McCheck("b x", "b", "b", None, "x", "", "", "pass", 0.43, Yield(5000, 5000,
                  (0.99, 1.0)), margins=margin)
    assert not row.varies and row.sensitivity_text() == "the same margin on every board"
    assert sensitivity.beyond_rounding(0.4, 0.4 + 1e-9)   # a real spread still varies


def test_monte_carlo_rows_keep_min_with_its_margin_at_80_columns(capsys, monkeypatch):
    # the GPIO example's rows wrapped as "... (2000/2000) min" then "+1.9 %  rail ...":
    # the word and the margin it names were parted (padding of several spaces between
    # them is no place the wrapping keeps together)
    monkeypatch.setenv("COLUMNS", "80")
    gpio = ROOT / "workbooks" / "designs" / "gpio-reset-board.toml"
    assert main(["check", str(gpio), "--monte-carlo", "300", "--seed", "1"]) == 0
    lines = capsys.readouterr().out.splitlines()
    rows = [ln for ln in lines if re.search(r"\bmin\b", ln)]
    assert rows and all(re.search(r"\bmin [+−-]?\d", ln) for ln in rows), rows
    assert all(len(ln) <= 80 for ln in lines)


def test_the_interpolation_note_spells_the_pull_up_as_a_word(capsys):
    # the GPIO example's Monte Carlo note read "(supply factor 0.97–1.03, pullup factor
    # 0.99–1.01)": the parameter kind's id where the text elsewhere writes "pull-up"
    gpio = ROOT / "workbooks" / "designs" / "gpio-reset-board.toml"
    assert main(["check", str(gpio), "--monte-carlo", "200", "--seed", "1"]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "pull-up factor 0.99–1.01" in out and "pullup factor" not in out


def test_a_gpio_line_named_as_its_bus_is_named_once(capsys, monkeypatch):
    # the GPIO example's bus "reset" has one line "reset": its pull-up parameter read
    # "reset reset pull-up" and its checks "reset reset Level high U1"
    from pinlib.engines.ppvariant import check_names, parameter_specs
    from pinlib.engines.pushpull import evaluate_board

    monkeypatch.setenv("COLUMNS", "80")
    gpio = ROOT / "workbooks" / "designs" / "gpio-reset-board.toml"
    d = load_design(gpio)
    reset = next(b for b in d.buses if b.id == "reset")
    assert "reset pull-up" in [s[0] for s in parameter_specs(reset)]
    names = [nm["name"] for nm in check_names(reset, evaluate_board(reset, d))]
    assert "reset level-high U1" in names and not any("reset reset" in n for n in names)
    # a line named otherwise keeps the bus's name and its own
    enable = next(b for b in d.buses if b.id == "fpga-enable")
    names = [nm["name"] for nm in check_names(enable, evaluate_board(enable, d))]
    assert "fpga-enable enable level-high U3" in names
    assert main(["check", str(gpio), "--corners", "--monte-carlo", "100", "--seed", "1"]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "reset reset" not in out
    assert "reset pull-up ±1 %" in out and "reset Level high U1" in out


def _sink_current_only_nominal(monkeypatch):
    """The GPIO reset board and its nominal results, with the engine patched to drop
    sink-current on every board but the nominal one (a stand-in: no check of today is
    absent on some boards)."""
    from dataclasses import replace as dc_replace

    from pinlib.engines import ppbatch
    from pinlib.studies.whatif.tolerances import _nominal

    design = load_design(ROOT / "workbooks" / "designs" / "gpio-reset-board.toml")
    nominal = _nominal(design)
    real = ppbatch.pp.evaluate_board

    def without_sink(bus, d):
        res = real(bus, d)
        lines = [dc_replace(ln, checks=[c for c in ln.checks if c.id != "sink-current"])
                 for ln in res.lines]
        return dc_replace(res, lines=lines)

    monkeypatch.setattr(ppbatch.pp, "evaluate_board", without_sink)
    return design, nominal


def test_corners_never_take_a_board_without_the_check_for_its_worst(monkeypatch):
    # a check a corner board does not have reads, in a push-pull batch, as a NaN margin
    # that passes; the corner search read NaN as the worst, so such a check was listed at
    # that board as PASS with no margin. With sink-current absent from every board but
    # the nominal one, the study must give the check as designed, at no corner
    design, nominal = _sink_current_only_nominal(monkeypatch)
    got = whatif.corners(design, results=nominal)
    (row,) = [c for c in got.checks if c.id == "sink-current"]
    (nom,) = [c for ln in nominal["reset"].lines for c in ln.checks
              if c.id == "sink-current"]
    assert row.status == nom.status == "pass" and row.corner == []
    assert row.margin == nom.margin and row.value == nom.value
    assert all(math.isfinite(g) for c in got.checks for _, _, g in c.corner)


def test_monte_carlo_counts_the_boards_a_check_is_absent_from(monkeypatch):
    # a check a board does not have reads, in a push-pull batch, as a NaN margin that
    # passes; Monte Carlo counted such a board as passing the check without a word. With
    # sink-current absent from every board but the nominal one, the run must say on how
    # many boards the check is absent, in its JSON and its text
    from pinlib.present.review.montecarlo import _mc_cells, _mc_rows

    design, nominal = _sink_current_only_nominal(monkeypatch)
    mc = whatif.monte_carlo(design, 40, seed=3, results=nominal)
    (row,) = [c for c in mc.checks if c.id == "sink-current"]
    assert row.absent == 40 and row.fails == 0
    assert row.to_json()["absent"] == 40
    text = " ".join(mc.format_text(limit=None).split())
    assert "absent from 40 boards; no margin to follow" in text
    # and the report's Monte Carlo table, whose pass fraction would read 100 % alone
    (cells,) = [_mc_cells(r) for r in _mc_rows(mc) if "Sink current" in r["where"]]
    assert cells[1] == "100.00% (absent from 40 boards)"
    # every other check is on every board
    assert all(c.absent == 0 for c in mc.checks if c.id != "sink-current")


def test_corners_evaluate_each_distinct_corner_once_however_many_checks(monkeypatch,
                                                                       tmp_path):
    # invented: the demo's flash bus with 40 more flashes on it: some 1,300 checks, a
    # handful of parameters. Each check's worst corner was evaluated as a board of its
    # own (and flipped k times): 255 devices took 5.2 GB and 19 s, boards x checks.
    # Now each distinct corner is one board, read by every check whose worst it is
    from pinlib.studies.whatif import cornersearch

    text = DEMO.read_text(encoding="utf-8")
    extra = "".join(f'  {{ ref = "X{i}", part = "nor-flash-spi" }},\n' for i in range(40))
    text = text.replace('  { ref = "U7", part = "nor-flash-spi" },\n',
                        '  { ref = "U7", part = "nor-flash-spi" },\n' + extra, 1)
    path = tmp_path / "many.toml"
    path.write_text(text, encoding="utf-8")
    design = load_design(path)
    flash = next(b for b in design.buses if b.id == "flash")
    assert len(flash.devices) == 42
    sizes = []
    made = cornersearch._runner

    def counting(bus, *args):
        run = made(bus, *args)

        def counted(u):
            if bus.id == "flash":
                sizes.append(len(u))
            return run(u)
        return counted

    monkeypatch.setattr(cornersearch, "_runner", counting)
    res = whatif.corners(design)
    k = len(res.parameters["flash"])
    checks = sum(1 for c in res.checks if c.bus == "flash")
    assert checks > 40 * k  # many more checks than corners
    assert max(sizes) <= 2 ** k * (k + 1), (max(sizes), k, checks)


RINGING = ROOT / "tests" / "data" / "spi-ringing-some-boards.toml"


def test_a_check_that_warns_on_some_boards_is_never_counted_as_passing_on_every_board(
        capsys, monkeypatch):
    # reproducer: a yes/no ringing check (no margin to vary) that warned on 110 of 200
    # boards was counted in "21 other checks pass on every board with the same margin",
    # and a check that warned was named nowhere once a dozen rows were shown (tests/data,
    # invented: the ringing of its CIPO warns on some boards and passes on the others)
    monkeypatch.setenv("COLUMNS", "80")
    argv = ["check", str(RINGING), "--monte-carlo", "40", "--seed", "1"]
    main([*argv, "--json"])
    mc = json.loads(capsys.readouterr().out)["monte_carlo"]
    ringing = [c for c in mc["checks"] if c["id"] == "ringing" and c["warns"]]
    assert ringing, "the test design must ring on some boards"
    for c in ringing:  # on some boards only, and no margin to vary
        assert 0 < c["warns"] < c["pass"]["n"] and not c["varies"]
    main(argv)
    out = capsys.readouterr().out
    text = out[out.index("Monte Carlo: 40 boards"):]
    assert max(len(ln) for ln in text.splitlines()) <= 80
    flat = " ".join(text.split())
    steady = [c for c in mc["checks"]
              if not (c["warns"] or c["fails"] or c["varies"] or c["absent"])]
    assert f" {len(steady)} other checks pass on every board, never warn and never vary" \
        in flat
    design = load_design(RINGING)
    labels = {c.name: c.label for c in whatif.monte_carlo(design, 2, seed=1,
                                                          progress=False).checks}
    warned = [c for c in mc["checks"] if c["warns"]]
    for c in warned:  # every check that warns on some board, with how many
        label = re.escape(labels[c["name"]])
        # (with why it only warns where it is beyond its limit: a class's typical one)
        assert re.search(rf"{label} [^;]*? warns on {c['warns']}(?: \([^)]*\))?;", flat) \
            or f"{labels[c['name']]} ({c['warns']})" in flat, (c["name"], flat)
    # the yes/no check that warns is a row of its own, not among the "more"
    assert re.search(r"store CIPO Ringing re-crossings U10 +100\.00% .*\n +min — +warns "
                     rf"on {ringing[0]['warns']};", text), text


def test_a_run_of_one_board_says_board():
    # "Monte Carlo: 1 boards" (invented test bus: the demo's design, one board)
    mc = whatif.monte_carlo(load_design(DEMO), 1, seed=1, progress=False)
    assert mc.format_text().startswith("Monte Carlo: 1 board, uniform")


def test_a_check_that_warns_among_the_more_is_named_with_its_count():
    # a dozen rows that fail on some boards fill the rows shown: the checks that warn
    # behind them were counted in "… 2 more that vary" and named nowhere (invented rows)
    from pinlib.studies.whatif.mcresult import McCheck, McResult
    from pinlib.studies.whatif.yields import Yield

    def mc(i, passes, margins=None, warns=0):
        return McCheck(f"b c{i}", "b", "b", None, f"c{i}", "", "", "pass", 0.5,
                       Yield(passes, 4, (0.1, 1.0)),
                       margins=None if margins is None else np.asarray(margins, dtype=float),
                       warns=warns, fails=4 - passes)

    rows = [mc(i, 3, [-0.1, 0.2, 0.3, 0.4]) for i in range(12)]   # fail on one board
    rows.append(mc(98, 4, None, warns=3))                   # a yes/no check: no margin
    rows.append(mc(99, 4, [0.05, 0.05, 0.05, 0.05], warns=4))      # the same margin, warns
    rows.append(mc(97, 4, [0.5, 0.5, 0.5, 0.5]))                   # passes alike everywhere
    text = McResult("d", 4, 1, "uniform", [], rows, {}, None, np.zeros((4, 0))).format_text()
    flat = " ".join(text.split())
    assert "… 2 more that vary, warn or fail" in flat
    assert "of those, 2 warn on some boards (boards that warn): b C99 (4), b C98 (3)" in flat
    assert "1 other check passes on every board, never warns and never varies" in flat


def test_a_row_held_at_a_warning_by_a_soft_value_says_so():
    # a joined fall beyond tf only at a class's VGS(th) maximum warns (its limit is
    # UM10204's): the row said "(a class's typical limit)" as for a class's limit
    # (invented rows)
    from pinlib.studies.whatif.mcresult import McCheck, McResult
    from pinlib.studies.whatif.yields import Yield

    def mc(name, on_value):
        return McCheck(f"b {name}", "b", "b", None, name, "s", "", "warn", -0.2,
                       Yield(4, 4, (0.5, 1.0), 4), margins=np.full(4, -0.2), warns=4,
                       warns_only="generic", on_value=on_value)

    text = McResult("d", 4, 1, "uniform", [], [mc("fall", True), mc("vih", False)], {}, None,
                    np.zeros((4, 0))).format_text()
    rows = {ln.split()[1]: " ".join(ln.split()) for ln in text.splitlines()
            if ln.startswith("    b ")}
    assert "warns on 4 (resting on a class's typical value)" in rows["Fall"]
    assert "warns on 4 (a class's typical limit)" in rows["VIH"]
