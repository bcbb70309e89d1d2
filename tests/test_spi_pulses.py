"""SCLK high and low pulses at a peripheral's input (checks ``sclk-high``, ``sclk-low``).

A peripheral that records ``t_high``/``t_low`` (the shortest SCLK pulse its input
takes) is checked against the pulse it sees: the controller drives half a period high
and half low (50 % duty, as the whole budget assumes), and at the input the high pulse
runs from the rise's last crossing (VIH) to the fall's first (VIH on a fall), the low
pulse from the fall's last (VIL) to the rise's first (VIL on a rise): derived from the
flights' definitions (pinlib.engines.spi: early and late flights).  An SCLK whose rise
and fall arrive apart (an output that pulls up and down through different resistances)
narrows one of them.  Parts are invented test classes over tests/data/pushpull.
"""

from __future__ import annotations

import pytest

from pinlib.engines import spi
from pinlib.engines.pushline import endpoint
from pinlib.engines.pushpull import evaluate_bus
from tests.test_spi import write_design


def _periph(tmp_path, pid: str, timing: str) -> None:
    (tmp_path / f"{pid}.toml").write_text(
        f'format = "pinlib.part/1"\nid = "{pid}"\ntitle = "test part (invented)"\n'
        'category = "memory"\nextends = "pp-periph"\n'
        'provenance = { basis = "datasheet", source = "test data, invented" }\n'
        f"[timing]\n{timing}", encoding="utf-8")


def _sclk(sa, bus):
    case = sa.lines["sclk"].cases["U1"]
    rx = endpoint(bus.devices[1], "spi-sclk", bus)
    return {e: case.flight(rx, e) for e in ("rise", "fall")}


def test_each_pulse_is_half_a_period_less_the_edges_skew(tmp_path):
    # pp-ctrl-asym pulls SCLK up through 60 Ω and down through 10 Ω (invented test data):
    # the rise and the fall arrive apart, so the two pulses differ
    _periph(tmp_path, "per-pulse", 't_high = "8 ns"\nt_low = "8 ns"\n')
    d, bus = write_design(tmp_path, controller="pp-ctrl-asym", peripherals=("per-pulse",),
                          extra_library=tmp_path, clock="20 MHz", length="20 cm")
    sa = spi.spi_analysis(bus, d)
    f = _sclk(sa, bus)
    terms = {t.id: t for t in sa.terms}
    hi, lo = terms["sclk-high"], terms["sclk-low"]
    assert (hi.a, hi.required, lo.required) == (0.5, pytest.approx(8e-9), pytest.approx(8e-9))
    assert hi.b == f["fall"].early - f["rise"].late
    assert lo.b == f["rise"].early - f["fall"].late
    # derived: the two pulses together lose each edge's spread between its thresholds
    assert hi.b + lo.b == pytest.approx((f["fall"].early - f["fall"].late)
                                        + (f["rise"].early - f["rise"].late), rel=1e-12)
    assert hi.b + lo.b < 0 and hi.b != lo.b
    res = evaluate_bus(bus, d)
    got = {c.id: c for c in res.checks if c.id in ("sclk-high", "sclk-low")}
    period = 1 / 20e6
    assert got["sclk-high"].value == pytest.approx(period / 2 + hi.b, rel=1e-12)
    assert got["sclk-high"].source == "per-pulse t_high: test data, invented"
    assert got["sclk-high"].status == "pass"


def test_a_pulse_too_short_fails_and_sets_the_highest_clock(tmp_path):
    # derived: sclk-high holds while T/2 + b >= t_high, so its own highest clock is
    # 1 / (2 (t_high - b)); with t_high 20 ns it is the lowest limit of the bus
    _periph(tmp_path, "per-slow", 't_high = "20 ns"\n')
    d, bus = write_design(tmp_path, controller="pp-ctrl-asym", peripherals=("per-slow",),
                          extra_library=tmp_path, clock="30 MHz")
    sa = spi.spi_analysis(bus, d)
    hi = next(t for t in sa.terms if t.id == "sclk-high")
    f_own = 1.0 / (2.0 * (20e-9 - hi.b))
    assert sa.max_clock() == pytest.approx(f_own, rel=1e-9)
    res = evaluate_bus(bus, d)
    chk = next(c for c in res.checks if c.id == "sclk-high")
    assert chk.status == "fail"           # a datasheet minimum, not a rule of thumb
    assert res.figures["max_clock_limited_by"].value == "sclk-high U2"
    assert not [c for c in res.checks if c.id == "sclk-low"]   # t_low not recorded


def test_a_peripheral_without_pulse_times_is_noted(tmp_path):
    d, bus = write_design(tmp_path)   # pp-periph records neither
    res = evaluate_bus(bus, d)
    assert not [c for c in res.checks if c.id in ("sclk-high", "sclk-low")]
    assert ("SCLK high and low pulses not checked at U2: no t_high or t_low recorded "
            "(the shortest pulse the input takes)") in res.notes


def test_the_budget_chart_draws_the_pulses(tmp_path):
    from pinlib.present import plotdata

    _periph(tmp_path, "per-pulse", 't_high = "8 ns"\nt_low = "8 ns"\n')
    d, bus = write_design(tmp_path, controller="pp-ctrl-asym", peripherals=("per-pulse",),
                          extra_library=tmp_path, clock="20 MHz")
    tb = plotdata.timing_budget_data(bus, d)
    for path in ("sclk-high U2", "sclk-low U2"):
        used = sum(v for p, _, v in tb.rows if p == path)
        # derived: the bar adds up to the engine's own margin against half a period
        assert tb.margins[path] == pytest.approx(tb.available[path] - used, rel=1e-9)
        assert tb.available[path] == pytest.approx(0.5 / 20e6)
