"""Tests of the push-pull line engine (pinlib.engines.pushline) and the GPIO bus engine.

Whole lines built by the engine from test parts are checked against ngspice (lossless
``T`` elements, a PWL ramp behind a resistor, the pins as one capacitor at the far end):
the netlist is written from the same sections, driver and loads the engine used, so
every run regenerates its reference.  The other checks use closed forms (RC edges),
the eseries package and common-practice figures, each marked where it comes from.
"""

from __future__ import annotations

import dataclasses
import doctest
import importlib
import inspect
import math
import pkgutil
import re
from pathlib import Path

import eseries as eseries_pkg
import numpy as np
import pytest
from spice import have_ngspice, run_deck

from pinlib.core.errors import DesignError, InputError
from pinlib.engines import pushline, pushpull
from pinlib.engines.pushline import (
    EDGE_FRACTION,
    LONG_LINE_FRACTION,
    Endpoint,
    Stretch,
    analyse_line,
    auto_series_resistor,
    needs_distributed,
    stretches_of,
)
from pinlib.engines.pushpull import evaluate_bus
from pinlib.library import load_library
from pinlib.model.design import Device, Geometry, Line, Section, load_design
from pinlib.physics import rc
from pinlib.physics.driver import driver_from_pin

DATA = Path(__file__).parent / "data" / "pushpull"
DEMO = Path(__file__).parents[1] / "workbooks" / "designs" / "demo-board.toml"
needs_ngspice = pytest.mark.skipif(not have_ngspice(), reason="ngspice not on PATH")

VDD = 3.3
EDGE_REL_TOL = 0.03          # 10-90 % edge against ngspice, relative (issue 4)
SWING_TOL = 0.05 * VDD       # overshoot / undershoot against ngspice, of the swing [V]

LINE_FIGURES = {"load_capacitance", "trace_delay", "z0", "edge_rise_time", "edge_fall_time",
                "series_resistor", "overshoot", "undershoot", "transmission_line", "model"}


@pytest.fixture(scope="module")
def lib():
    return load_library([DATA], builtin=False, env=False)


def device(lib, ref, part, role="peripheral", supply=None):
    return Device(ref, part, lib.parts[part], role, supply)


def pin(dev, name, vdd=VDD):
    return Endpoint(dev, name, dev.part.pins[name], vdd)


def trace50(length):
    """A 50 Ω trace given by its per-length values: 1 pF/cm and 50 ps/cm."""
    return Section(length, None, 1e-10, 5e-9)


def controller_line(lib, sections, rs="none", extra=0.0, *, signal="sclk", part="pp-ctrl",
                    receivers=1, clock=None, rx_supply=None):
    ctrl = device(lib, "U1", part, "controller")
    drv = pin(ctrl, signal)
    rxs = [pin(device(lib, f"U{i + 2}", "pp-periph", supply=rx_supply), signal,
               rx_supply or VDD) for i in range(receivers)]
    line = Line(signal, tuple(sections), rs, extra)
    return analyse_line(signal, line, [drv], [drv] + rxs, rxs, clock=clock,
                        clock_line=(signal == "sclk"))


# --------------------------------------------------------------------------- ngspice


def spice_deck(analysis, edge):
    """The engine's circuit for one edge as an ngspice netlist: ramp, R, T..., C."""
    case = analysis.cases["U1"]
    model = case.model
    if edge == "rise":
        r, ramp, v0, v1 = model.r_rise + case.rs, model.t_ramp_rise, 0.0, VDD
    else:
        r, ramp, v0, v1 = model.r_fall + case.rs, model.t_ramp_fall, VDD, 0.0
    lines = ["* engine-built line", f"V1 src 0 PWL(0 {v0} {ramp:.6g} {v1})",
             f"R1 src n0 {r:.9g}"]
    node, k, c_far = "n0", 0, case.c_far
    for s in analysis.stretches:
        if s.td > 0:
            k += 1
            lines.append(f"T{k} {node} 0 n{k} 0 Z0={s.z0:.9g} TD={s.td:.9g}")
            node = f"n{k}"
        else:
            c_far += s.c
    lines.append(f"C1 {node} 0 {c_far:.9g}")
    wave = case.wave(edge)
    t_stop = float(wave.t[-1])
    step = min(5e-12, t_stop / 20000)  # RECIPES.md: always give TMAX
    if edge == "rise":
        meas = [f".meas tran ta WHEN v({node})={0.1 * VDD} RISE=1",
                f".meas tran tb WHEN v({node})={0.9 * VDD} RISE=1",
                f".meas tran vext MAX v({node})"]
    else:
        meas = [f".meas tran ta WHEN v({node})={0.9 * VDD} FALL=1",
                f".meas tran tb WHEN v({node})={0.1 * VDD} FALL=1",
                f".meas tran vext MIN v({node})"]
    lines += [f".tran {step:.6g} {t_stop:.6g} 0 {step:.6g}"] + meas + [".end"]
    return "\n".join(lines)


# Engine-built cases: (id, sections, series resistor, extra capacitance, expected model).
# Short and long lines; Rs none, matched ("auto"), larger than matched; small and large
# loads; a chain with a cable (custom cases, invented).
SPICE_CASES = [
    ("short-2cm-none", [trace50(0.02)], "none", 0.0, "distributed"),
    ("short-1cm-rc", [trace50(0.01)], 150.0, 50e-12, "lumped"),
    ("long-20cm-none", [trace50(0.20)], "none", 0.0, "distributed"),
    ("long-20cm-auto", [trace50(0.20)], "auto", 0.0, "distributed"),
    ("long-20cm-60ohm", [trace50(0.20)], 60.0, 0.0, "distributed"),
    ("long-20cm-100pF", [trace50(0.20)], "none", 100e-12, "distributed"),
    ("chain-ribbon", [trace50(0.05), Section(0.30, None, 0.5e-10, 5.5e-9, 110.0, "t-ribbon"),
                      trace50(0.02)], "none", 20e-12, "distributed"),
]


@pytest.mark.spice
@needs_ngspice
@pytest.mark.parametrize(("case_id", "sections", "rs", "extra", "model"), SPICE_CASES,
                         ids=[c[0] for c in SPICE_CASES])
def test_whole_line_matches_ngspice(lib, case_id, sections, rs, extra, model):
    a = controller_line(lib, sections, rs, extra)
    assert a.result.figures["model"].value == model
    case = a.cases["U1"]
    for edge in ("rise", "fall"):
        got = run_deck(spice_deck(a, edge), ["ta", "tb", "vext"])
        t_spice = got["tb"] - got["ta"]
        wave = case.wave(edge)
        assert wave.t_edge == pytest.approx(t_spice, rel=EDGE_REL_TOL)
        if edge == "rise":
            assert wave.overshoot == pytest.approx(max(got["vext"] - VDD, 0.0), abs=SWING_TOL)
        else:
            assert wave.undershoot == pytest.approx(max(-got["vext"], 0.0), abs=SWING_TOL)


# --------------------------------------------------------------------------- model choice


def test_electrical_length_rule_and_ratio(lib):
    # derived from the rule: long when one-way delay > edge / 6 (Johnson & Graham)
    a = controller_line(lib, [trace50(0.05)])
    edge = a.edge_alone
    assert a.ratio == pytest.approx(a.delay / edge, rel=1e-12)
    for ratio in (0.5 * LONG_LINE_FRACTION, 0.99 * LONG_LINE_FRACTION,
                  1.01 * LONG_LINE_FRACTION, 2.0):
        length = ratio * edge / 5e-9  # 50 ps/cm = 5 ns/m
        b = controller_line(lib, [trace50(length)])
        assert b.edge_alone == pytest.approx(edge, rel=1e-12)
        assert b.long is (ratio > LONG_LINE_FRACTION)
        assert b.result.figures["transmission_line"].value is (ratio > LONG_LINE_FRACTION)
        assert b.result.figures["delay_to_edge_ratio"].value == pytest.approx(ratio, rel=1e-9)


def test_lumped_only_when_inductance_negligible():
    # derived from the series-RLC dominant pole: RC within ~1 % when L/(R^2 C) <= 0.01
    st = [Stretch(0.01, 50.0, 50e-12, 1e-12, "x")]   # L = 2.5 nH
    c_far = 49e-12                                   # C = 50 pF
    r_edge = math.sqrt(2.5e-9 / (0.01 * 50e-12))     # L/(R^2 C) = 0.01 at R = 70.7 Ω
    assert needs_distributed(st, 1.01 * r_edge, c_far, False) is False
    assert needs_distributed(st, 0.99 * r_edge, c_far, False) is True
    assert needs_distributed(st, 1e3, c_far, True) is True
    assert needs_distributed([Stretch(0.01, math.nan, 0.0, 1e-12, "c only")], 1.0, c_far,
                             True) is False


def test_zero_length_line_is_a_ramp_through_rc(lib):
    # derived from a linear ramp through a single RC pole (rc.ramp_rc_edge_time):
    # 20 Ω and the 1 ns default ramp into the receiver's 5 pF plus 45 pF extra
    a = controller_line(lib, [], "none", 45e-12)
    assert a.result.figures["model"].value == "lumped"
    assert a.result.figures["transmission_line"].value is False
    expected = rc.ramp_rc_edge_time(1e-9, 20.0 * 50e-12)
    assert a.result.figures["edge_rise_time"].value == pytest.approx(expected, rel=1e-3)
    assert a.result.figures["load_capacitance"].value == pytest.approx(50e-12, rel=1e-12)
    assert a.result.figures["z0"].value != a.result.figures["z0"].value  # NaN: no line


def test_issue_common_practice_edge_into_100pF(lib):
    # common practice, no source (issue 4): a 1 ns edge, 20 Ω output and a 33 Ω series
    # resistor into 100 pF lands between 10 and 20 ns (10-90 %)
    ctrl = device(lib, "U1", "pp-ctrl", "controller")
    drv = pin(ctrl, "sclk")
    a = analyse_line("sclk", Line("sclk", (), 33.0, 100e-12), [drv], [drv], [])
    edge = a.result.figures["edge_rise_time"].value
    assert 10e-9 <= edge <= 20e-9


def test_sections_from_geometry_per_length_and_cable(tmp_path):
    body = """
[board.geometry.ms]
kind = "microstrip"
width = "0.30 mm"
height = "0.20 mm"
thickness = "35 µm"
er = 4.3

[[bus]]
id = "s"
protocol = "spi"
clock = "10 MHz"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "pp-ctrl", role = "controller" },
  { ref = "U2", part = "pp-periph" },
]

[bus.lines.sclk]
sections = [
  { length = "4 cm", capacitance = "1.1 pF/cm", delay = "58 ps/cm" },
  { length = "2 cm", geometry = "ms" },
  { part = "pp-cable", length = "25 cm" },
]
"""
    design = _design(tmp_path, body)
    st = stretches_of(design.bus("s").lines["sclk"].sections)
    # derived from Z0 = tpd / C: 1.1 pF/cm and 58 ps/cm -> 52.73 Ω (docs/references.md, per length)
    assert st[0].z0 == pytest.approx(5.8e-9 / 1.1e-10, rel=1e-12)
    assert st[0].td == pytest.approx(5.8e-9 * 0.04, rel=1e-12)
    assert st[0].c == pytest.approx(1.1e-10 * 0.04, rel=1e-12)
    # published: scikit-rf 2.2 MLine(w=0.3 mm, h=0.2 mm, t=35 µm, er 4.3): Z0 55.08 Ω
    # (docs/references.md, Board traces)
    assert st[1].z0 == pytest.approx(55.08, abs=0.01)
    # the cable class's own impedance and delay (pp-cable: 100 Ω, 5 ns/m, 0.5 pF/cm)
    assert st[2].z0 == pytest.approx(100.0, rel=1e-12)
    assert st[2].td == pytest.approx(5e-9 * 0.25, rel=1e-12)
    assert st[2].c == pytest.approx(0.5e-10 * 0.25, rel=1e-12)


def _loss_notes(a):
    return [n for n in a.result.notes if "lossless" in n]


@pytest.mark.parametrize(("metres", "noted"), [(2.5, True), (1.5, False)])
def test_a_long_line_of_per_length_values_is_noted_as_solved_lossless(lib, metres, noted):
    # derived: 50 ps/cm over 2.5 m is 12.5 ns, past LOSS_DELAY (10 ns); 1.5 m is 7.5 ns
    a = controller_line(lib, [trace50(metres)])
    notes = _loss_notes(a)
    assert bool(notes) is noted
    if noted:
        assert notes[0].startswith("2.5 m of stretches given per length (a delay of "
                                   "12.5 ns) carry no resistance")
        assert "measurement" in notes[0]


def test_a_long_cable_is_named_by_its_class_in_the_lossless_note(lib):
    # a cable stretch read "2 m of cable ribbon-cable"; it is named by its class's id.
    # derived: the invented test cable pp-cable (100 Ω, 5 ns/m, 0.5 pF/cm) over 2.5 m is
    # 12.5 ns, past LOSS_DELAY (10 ns)
    cable = Section(2.5, capacitance=0.5e-10, delay=5e-9, impedance=100.0,
                    part_id="pp-cable")
    notes = _loss_notes(controller_line(lib, [cable]))
    assert notes and notes[0].startswith("2.5 m of pp-cable (a delay of 12.5 ns) carry "
                                         "no resistance")


def test_a_trace_of_zero_thickness_states_no_copper_resistance(lib):
    # the trace models' thin-strip limit (a thickness of 0 is valid input): no note,
    # and no division by its zero cross-section
    ms = Geometry("ms", "microstrip", 0.3e-3, 0.2e-3, None, 0.0, 4.3)
    a = controller_line(lib, [Section(4.0, ms)])
    assert not _loss_notes(a)


@pytest.mark.parametrize(("metres", "noted"), [(4.0, True), (3.0, False)])
def test_a_trace_whose_copper_resistance_nears_z0_is_noted(lib, metres, noted):
    ms = Geometry("ms", "microstrip", 0.3e-3, 0.2e-3, None, 35e-6, 4.3)
    a = controller_line(lib, [Section(metres, ms)])
    notes = _loss_notes(a)
    assert bool(notes) is noted
    if noted:
        # derived: rho L / (w t), rho = 1.7241e-8 ohm m (from memory: IEC 60028, annealed
        # copper at 20 °C; docs/references.md [M]): 1.642 ohm/m, 6.57 ohm over 4 m, 12 %
        # of Z0 55.08 ohm
        # (published: scikit-rf 2.2 MLine of this geometry, docs/references.md)
        assert "copper resistance, 6.57 Ω (DC at 20 °C" in notes[0]
        assert "is 12 % of Z0 55.1 Ω" in notes[0]


# --------------------------------------------------------------------------- termination


def test_auto_series_resistor_is_e24_nearest_of_z0_minus_r_out():
    # derived from Rs = Z0 - Rout (docs/references.md, series termination), E24 of IEC 60063:
    # 50 - 20 = 30 -> 30 Ω; 50 - 17 = 33 -> 33 Ω; 64.1 - 30 = 34.1 -> 33 Ω
    assert auto_series_resistor(50.0, 20.0) == 30.0
    assert auto_series_resistor(50.0, 17.0) == 33.0
    assert auto_series_resistor(64.1, 30.0) == 33.0
    # a driver at or above Z0 needs none
    assert auto_series_resistor(50.0, 50.0) == 0.0
    assert auto_series_resistor(50.0, 70.0) == 0.0
    assert auto_series_resistor(float("nan"), 20.0) == 0.0
    # against the eseries package (linear nearest; away from the geometric midpoints the
    # two rules agree)
    z0 = np.array([45.0, 50.0, 55.0, 60.0, 75.0, 90.0])
    r = np.array([12.0, 25.0, 18.0, 30.0, 20.0, 15.0])
    ours = auto_series_resistor(z0, r)
    ref = [eseries_pkg.find_nearest(eseries_pkg.E24, x) for x in z0 - r]
    assert ours == pytest.approx(ref, rel=1e-12)
    # the array gives what the scalars give one by one
    assert list(ours) == [auto_series_resistor(a, b) for a, b in zip(z0, r, strict=True)]


def test_common_practice_series_resistor_for_cmos_sources():
    # common practice, no source: CMOS outputs are about 10-30 Ω, and 22-33 Ω series
    # resistors bring them near a 50 Ω line: auto picks 22-33 Ω for 17-28 Ω sources
    for r_out in np.linspace(17.0, 28.0, 12):
        assert 22.0 <= auto_series_resistor(50.0, r_out) <= 33.0


@pytest.mark.parametrize("rs", [22.0, 33.0])
def test_22_to_33_ohm_tames_a_50_ohm_line(lib, rs):
    # common practice, no source: with 22-33 Ω after a 20 Ω source on a 50 Ω line the
    # far end barely overshoots (under 10 % of the swing); without it, it rings hard
    bare = controller_line(lib, [trace50(0.25)], "none")
    tamed = controller_line(lib, [trace50(0.25)], rs)
    assert bare.result.figures["overshoot"].value > 0.3 * VDD
    assert tamed.result.figures["overshoot"].value < 0.1 * VDD
    assert tamed.result.figures["series_resistor"].value == rs


def test_auto_termination_on_a_long_line(lib):
    # derived: Z0 = 50 ps/cm / 1 pF/cm = 50 Ω, r_out 20 Ω -> 30 Ω (E24)
    a = controller_line(lib, [trace50(0.25)], "auto")
    f = a.result.figures
    assert f["transmission_line"].value is True
    assert f["series_resistor"].value == 30.0
    chk = a.result.check("series-termination")
    assert chk.details["rs_ideal"] == pytest.approx(30.0, rel=1e-12)
    without, with_ = chk.details["without"], chk.details["with"]
    assert with_["overshoot"] < 0.1 * without["overshoot"]
    assert with_["edge_rise_time"] > without["edge_rise_time"]
    assert with_["overshoot"] == f["overshoot"].value
    # the unterminated figures are those of the same line with "none"
    bare = controller_line(lib, [trace50(0.25)], "none").result.figures
    assert without["overshoot"] == pytest.approx(bare["overshoot"].value, rel=1e-12)
    assert without["edge_rise_time"] == pytest.approx(bare["edge_rise_time"].value, rel=1e-12)


def test_auto_termination_none_on_a_short_clean_line(lib):
    a = controller_line(lib, [trace50(0.01)], "auto")
    assert a.long is False
    assert a.result.figures["series_resistor"].value == 0.0
    assert any("auto series resistor: none" in n for n in a.result.notes)


def test_fixed_series_resistor_is_reported(lib):
    a = controller_line(lib, [trace50(0.1)], 47.0)
    assert a.result.figures["series_resistor"].value == 47.0
    assert a.result.check("series-termination") is None


# --------------------------------------------------------------------------- checks


def test_ringing_fails_on_the_clock_and_warns_on_data(lib):
    # a 10 Ω pull-down into an open 50 Ω line: the falling edge comes back above VIL
    sclk = controller_line(lib, [trace50(0.2)], signal="sclk", part="pp-ctrl-asym")
    copi = controller_line(lib, [trace50(0.2)], signal="copi", part="pp-ctrl-asym")
    rs, rc_ = sclk.result.check("ringing"), copi.result.check("ringing")
    assert rs.status == "fail" and rs.value >= 1
    assert rc_.status == "warn" and rc_.value == rs.value
    assert rs.details["fall_recrossings"] >= 1
    # the count reads as a count: "1 re-crossing", "2 re-crossings", never "(s)"
    n = int(rs.value)
    assert f"{n} re-crossing{'' if n == 1 else 's'} of " in rs.message
    # the clock fails against the receiver's own thresholds, and its source names them
    # (it cited only "common practice, no source", a rule of thumb's, beside a FAIL);
    # on data the re-crossing is a rule of thumb, and its source says so
    assert "v_il" in rs.source and "v_ih" in rs.source
    assert "common practice, no source" not in rs.source
    assert "common practice, no source" in rc_.source
    # a matched series resistor removes it
    ok = controller_line(lib, [trace50(0.2)], 39.0, signal="sclk", part="pp-ctrl-asym")
    assert ok.result.check("ringing").status == "pass"


def test_undershoot_beyond_its_inferred_limit_warns(lib):
    # the part format records only the upper abs_max: the low limit is inferred from it
    # (at most 0.5 V below ground), a rule of thumb, so a dip beyond it warns
    a = controller_line(lib, [trace50(0.2)], signal="sclk", part="pp-ctrl-asym")
    under = a.result.check("undershoot")
    assert under.value > under.limit and under.margin < 0
    assert under.status == "warn" and under.details["rule_of_thumb"] is True
    assert "a warning, not a failure" in under.message


def test_overshoot_and_levels_at_the_receivers_own_supply(lib):
    # derived: abs_max VDD + 0.5 V at the receiver's 2.5 V allows 0.5 V above 2.5 V;
    # VIH 0.7 VDD = 1.75 V, VIL 0.3 VDD = 0.75 V at 2.5 V
    a = controller_line(lib, [trace50(0.02)], rx_supply=2.5)
    over = a.result.check("overshoot")
    assert over.limit == pytest.approx(0.5, rel=1e-12)
    assert over.value == pytest.approx(VDD + a.result.figures["overshoot"].value - 2.5,
                                       rel=1e-12)
    assert over.status == "fail"
    assert "pp-periph" in over.source
    assert a.result.check("level-high").limit == pytest.approx(1.75, rel=1e-12)
    assert a.result.check("level-low").limit == pytest.approx(0.75, rel=1e-12)
    # undershoot: at most min(abs_max - VDD, 0.5 V) below ground
    assert a.result.check("undershoot").limit == pytest.approx(0.5, rel=1e-12)


def test_edge_time_against_a_fraction_of_the_period(lib):
    a = controller_line(lib, [trace50(0.05)], clock=20e6)
    chk = a.result.check("edge-time")
    assert chk.limit == pytest.approx(EDGE_FRACTION / 20e6, rel=1e-12)
    f = a.result.figures
    assert chk.value == max(f["edge_rise_time"].value, f["edge_fall_time"].value)
    assert controller_line(lib, [trace50(0.05)]).result.check("edge-time") is None


def test_line_figures_are_all_there(lib):
    a = controller_line(lib, [trace50(0.05)], "auto", clock=10e6)
    out = a.result.to_json()
    assert LINE_FIGURES <= set(out["figures"])
    assert out["figures"]["transmission_line"]["value"] in (True, False)
    assert out["figures"]["model"]["value"] in ("lumped", "distributed")
    for name in ("load_capacitance",):
        assert out["figures"][name]["unit"] == "F"
    for name in ("trace_delay", "edge_rise_time", "edge_fall_time"):
        assert out["figures"][name]["unit"] == "s"
    assert out["figures"]["overshoot"]["unit"] == "V"


def test_a_line_nobody_drives_is_an_error(lib):
    with pytest.raises(DesignError, match="no device drives"):
        analyse_line("sclk", Line("sclk", (trace50(0.01),), "none"), [], [], [])


def test_load_excludes_the_drivers_own_pin(lib):
    # derived: a driver's pin capacitance is inside its datasheet edges; its load is the
    # trace (1 pF/cm x 4 cm) and the two receivers' 5 pF each
    a = controller_line(lib, [trace50(0.04)], receivers=2)
    assert a.result.figures["load_capacitance"].value == pytest.approx(4e-12 + 10e-12,
                                                                       rel=1e-12)


# --------------------------------------------------------------------------- buses


def _design(tmp_path, body, name="d.toml"):
    text = f"""format = "pinlib.design/1"
title = "test (invented)"
library = ["{DATA.as_posix()}"]

{body}
"""
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return load_design(path)


def test_cipo_is_loaded_by_every_peripheral(tmp_path):
    body = """
[[bus]]
id = "s"
protocol = "spi"
clock = "10 MHz"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "pp-ctrl", role = "controller" },
  { ref = "U2", part = "pp-periph" },
  { ref = "U3", part = "pp-periph" },
  { ref = "U4", part = "pp-periph" },
]
lines.sclk = { length = "4 cm", capacitance = "1 pF/cm", delay = "50 ps/cm" }
lines.cipo = { length = "4 cm", capacitance = "1 pF/cm", delay = "50 ps/cm" }
"""
    d = _design(tmp_path, body)
    res = evaluate_bus(d.bus("s"), d)
    lines = {ln.signal: ln for ln in res.lines}
    # derived: each peripheral drives CIPO into the trace (4 pF), the controller's 5 pF
    # and the two other peripherals' 6 pF CIPO pins
    assert lines["cipo"].figures["load_capacitance"].value == pytest.approx(
        4e-12 + 5e-12 + 2 * 6e-12, rel=1e-12)
    # SCLK: the trace and three 5 pF inputs (the controller's own pin excluded)
    assert lines["sclk"].figures["load_capacitance"].value == pytest.approx(
        4e-12 + 3 * 5e-12, rel=1e-12)
    # every peripheral gets its CIPO budget
    subjects = {c.subject for c in res.checks if c.id == "cipo-setup"}
    assert subjects == {"U2", "U3", "U4"}


def test_a_line_without_a_delay_says_why_it_has_no_z0(tmp_path):
    # a capacitance without a delay is a lumped line: Z0 showed "—" with nothing to say
    # why; the figure now carries its reason (JSON null, never NaN)
    body = """
[[bus]]
id = "s"
protocol = "spi"
clock = "10 MHz"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "pp-ctrl", role = "controller" },
  { ref = "U2", part = "pp-periph" },
]
lines.sclk = { length = "4 cm", capacitance = "1 pF/cm" }
lines.cipo = { length = "4 cm", capacitance = "1 pF/cm", delay = "50 ps/cm" }
"""
    d = _design(tmp_path, body)
    lines = {ln.signal: ln for ln in evaluate_bus(d.bus("s"), d).lines}
    z0 = lines["sclk"].figures["z0"]
    assert math.isnan(z0.value) and "no section with a delay" in z0.reason
    assert z0.to_json() == {"value": None, "unit": "Ω", "reason": z0.reason}
    from pinlib.model.result import figure_text
    assert figure_text(z0) == z0.reason  # it read "—"
    # from memory: a lossless line's Z0 = tpd / C per length (telegrapher's equations):
    # 50 ps / 1 pF = 50 Ω
    assert lines["cipo"].figures["z0"].value == pytest.approx(50.0, rel=1e-12)
    assert lines["cipo"].figures["z0"].reason is None


def test_gpio_push_pull_and_open_drain_nets(tmp_path):
    body = """
[[bus]]
id = "reset"
protocol = "gpio"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "pp-ctrl", role = "controller", pin = "reset" },
  { ref = "U2", part = "pp-periph", pin = "reset" },
]

[bus.lines.reset]
length = "6 cm"
capacitance = "1 pF/cm"
delay = "50 ps/cm"
series_resistor = "auto"

[[bus]]
id = "irq"
protocol = "gpio"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "pp-ctrl", role = "controller", pin = "irq" },
  { ref = "U2", part = "pp-periph", pin = "irq" },
  { ref = "M1", part = "pp-pullup-module", pin = "irq" },
]
lines.irq = { length = "6 cm", capacitance = "1 pF/cm", delay = "50 ps/cm" }
"""
    d = _design(tmp_path, body)
    reset = evaluate_bus(d.bus("reset"), d)
    (ln,) = reset.lines
    assert ln.signal == "reset" and ln.status == "pass"
    # derived: 6 cm at 50 ps/cm is long for a 1 ns ramp; Rs = 50 - 20 = 30 Ω (E24)
    assert ln.figures["series_resistor"].value == 30.0
    assert ln.check("level-high").value == pytest.approx(VDD, rel=1e-12)  # rail-to-rail

    irq = evaluate_bus(d.bus("irq"), d)
    (ln,) = irq.lines
    # trace, controller input, module input, and the released sink's own pin (U2.irq: it
    # is on the net whether it sinks or not, and the pull-up charges it with the rest)
    c_total = 6e-12 + 5e-12 + 5e-12 + 5e-12
    assert ln.figures["load_capacitance"].value == pytest.approx(c_total, rel=1e-12)
    # derived from the RC step (docs/references.md, RC edges): 10-90 % = ln 9 Rp C through the
    # module's 4.7 kΩ pull-up (a pull-up >> Z0 charges the line as one capacitance)
    assert ln.figures["edge_rise_time"].value == pytest.approx(
        math.log(9.0) * 4.7e3 * c_total, rel=1e-3)
    # derived: the low level is the sink (0.4 V / 4 mA = 100 Ω) against the pull-up,
    # minus nothing; the high level drops by the leakage (3 x 1 µA) through 4.7 kΩ
    v_high = VDD - 3e-6 * 4.7e3
    assert ln.check("level-low").value == pytest.approx(v_high * 100 / 4800, rel=1e-9)
    assert ln.check("level-high").value == pytest.approx(v_high, rel=1e-9)
    assert ln.status == "pass"
    (only,) = [c.subject for c in reset.lines[0].checks if c.id == "level-high"]
    assert only == "U2"  # one driver: the level checks name the receiver alone


def test_gpio_open_drain_sink_ramp_is_noted(tmp_path):
    # the part format gives an open-drain sink no edge times: its fall ramp is the
    # documented 1 ns default (docs/formats/part.md), which the notes must say, as
    # they do for a push-pull pin without edge points
    d = _design(tmp_path, """
[[bus]]
id = "irq"
protocol = "gpio"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "pp-ctrl", role = "controller", pin = "irq" },
  { ref = "U2", part = "pp-periph", pin = "irq" },
  { ref = "M1", part = "pp-pullup-module", pin = "irq" },
]
lines.irq = { length = "6 cm", capacitance = "1 pF/cm", delay = "50 ps/cm" }
""")
    (ln,) = evaluate_bus(d.bus("irq"), d).lines
    (note,) = [n for n in ln.notes if n.startswith("U2.irq:") and "open-drain sink" in n]
    assert note.startswith("U2.irq: fall:") and "1 ns" in note and "no source" in note


def test_level_checks_name_the_driver_on_a_line_of_two(tmp_path):
    # two controllers may drive one GPIO line (built-in classes, invented board): each
    # level check names its receiver and the driver it is from, so none repeats
    d = _design(tmp_path, """
[[bus]]
id = "g"
protocol = "gpio"
supply = "3.3 V"
devices = [{ ref = "U1", part = "mcu-3v3", role = "controller", pin = "cs" },
           { ref = "U2", part = "mcu-3v3", pin = "cs" },
           { ref = "U3", part = "adc-spi", pin = "cs" }]
lines.cs = { length = "5 cm", capacitance = "1 pF/cm", delay = "60 ps/cm" }
""")
    (ln,) = evaluate_bus(d.bus("g"), d).lines
    highs = [c.subject for c in ln.checks if c.id == "level-high"]
    assert {"U3 from U1", "U3 from U2"} <= set(highs) and len(highs) == len(set(highs))


def test_gpio_open_drain_without_pullup_fails(tmp_path):
    body = """
[[bus]]
id = "irq"
protocol = "gpio"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "pp-ctrl", role = "controller", pin = "irq" },
  { ref = "U2", part = "pp-periph", pin = "irq" },
]
lines.irq = { length = "6 cm", capacitance = "1 pF/cm", delay = "50 ps/cm" }
"""
    d = _design(tmp_path, body)
    res = evaluate_bus(d.bus("irq"), d)
    assert res.lines[0].check("pull-up").status == "fail"
    assert res.status == "fail"


def test_engine_refuses_other_protocols(tmp_path):
    body = """
[[bus]]
id = "s"
protocol = "spi"
clock = "10 MHz"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "pp-ctrl", role = "controller" },
  { ref = "U2", part = "pp-periph" },
]
lines.sclk = { length = "4 cm", capacitance = "1 pF/cm", delay = "50 ps/cm" }
"""
    d = _design(tmp_path, body)
    with pytest.raises(InputError, match="spi and gpio"):
        evaluate_bus(dataclasses.replace(d.bus("s"), protocol="i2c"), d)


# --------------------------------------------------------------------------- demo


@pytest.mark.skipif(not DEMO.is_file(), reason="demo design not present")
def test_demo_flash_short_and_display_terminated():
    d = load_design(DEMO)
    flash = evaluate_bus(d.bus("flash"), d)
    display = evaluate_bus(d.bus("display"), d)
    fl = {ln.signal: ln for ln in flash.lines}
    di = {ln.signal: ln for ln in display.lines}
    assert fl["sclk"].figures["transmission_line"].value is False
    assert fl["sclk"].figures["series_resistor"].value == 0.0
    assert di["sclk"].figures["transmission_line"].value is True
    rs = di["sclk"].figures["series_resistor"].value
    z0 = di["sclk"].figures["z0"].value
    # derived: Rs = E24 nearest of Z0 - r_out, r_out the mean of the rise and fall output
    # resistances fitted to the controller class's edge table (common practice, no source)
    ctrl = d.device("U1")[1].part.pins["sclk"]
    drv = driver_from_pin(ctrl, 3.3)
    assert rs == auto_series_resistor(z0, 0.5 * (drv.r_rise + drv.r_fall)) and rs > 0
    chk = di["sclk"].check("series-termination")
    assert chk.details["with"]["overshoot"] < chk.details["without"]["overshoot"]
    assert flash.status != "fail" and display.status != "fail"
    assert {"max_clock", "cipo_setup_margin", "copi_setup_margin", "copi_hold_margin"} <= set(
        flash.figures)


def test_pushline_all_is_importable():
    for name in pushline.__all__:
        assert hasattr(pushline, name)


# --------------------------------------------------------------------------- API guards

PUBLIC_FUNCTIONS = [getattr(pushline, n) for n in pushline.__all__
                    if inspect.isfunction(getattr(pushline, n))] + [
    pushpull.evaluate_bus, pushpull.evaluate_gpio, pushpull.gpio_pin]


@pytest.mark.parametrize("func", PUBLIC_FUNCTIONS, ids=lambda f: f.__name__)
def test_docstring_parameters_match_signature_and_carry_units(func):
    doc = inspect.getdoc(func)
    section = doc.split("Parameters\n----------\n", 1)[1].split("\n\n", 1)[0]
    documented = re.findall(r"^(\w+) : ", section, flags=re.M)
    assert documented == list(inspect.signature(func).parameters)
    descriptions = re.split(r"^\w+ : .*$", section, flags=re.M)[1:]
    assert all(re.search(r"\[[^\]]+\]\s*$", d.strip()) for d in descriptions)


def test_docstring_examples():
    # the examples sit in the package's modules (auto_series_resistor's in .termination)
    modules = [pushline] + [importlib.import_module(f"{pushline.__name__}.{m.name}")
                            for m in pkgutil.iter_modules(pushline.__path__)]
    results = [doctest.testmod(m, optionflags=doctest.NORMALIZE_WHITESPACE) for m in modules]
    assert sum(r.attempted for r in results) > 0
    assert sum(r.failed for r in results) == 0


def test_a_record_that_never_settles_keeps_its_own_time_axis(tmp_path, monkeypatch):
    # invented, deliberately absurd per-length values: 10 MΩ (1 µs/m over 0.001 pF/cm)
    # driven through 20 Ω rings for far longer than the record's last lengthening; the
    # last record is kept, unsettled, on its own grid (the engine used to return the
    # next, longer grid with it and stop on an internal shape error).  The loader now
    # refuses an impedance over 1 kΩ (no line has it), and within that bound a 20 Ω
    # driver's line settles inside the lengthenings: the bound is lifted here so the
    # engine's own handling stays tested (a Section built through the Python API)
    from pinlib.model.design import resolve
    monkeypatch.setattr(resolve, "line_z0_problem", lambda delay, c: None)
    d = _design(tmp_path, """
[[bus]]
id = "reset"
protocol = "gpio"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "pp-ctrl", role = "controller", pin = "reset" },
  { ref = "U2", part = "pp-periph", pin = "reset" },
]
lines.reset = { length = "10 cm", capacitance = "0.001 pF/cm", delay = "1 µs/m" }
""")
    (ln,) = evaluate_bus(d.bus("reset"), d).lines
    assert any("had not settled" in n for n in ln.notes)
    assert all(math.isfinite(f.value) for f in ln.figures.values()
               if isinstance(f.value, float))


def test_the_termination_check_gives_its_target_as_no_limit(lib):
    # the check reports the resistor "auto" chose; Z0 - r_out is the target it rounds to
    # E24, not a limit: in the Limit column "0 Ω against 26.7 Ω" read as a shortfall on
    # a short line, and "27 Ω against 26.7 Ω" as an excess.  No limit (JSON null); the
    # target is in the message and details.rs_ideal
    # derived: Z0 = 50 ps/cm / 1 pF/cm = 50 Ω, r_out 20 Ω -> 30 Ω (E24)
    long_ = controller_line(lib, [trace50(0.25)], "auto").result.check("series-termination")
    short = controller_line(lib, [trace50(0.01)], "auto").result.check("series-termination")
    assert long_.value == 30.0 and short.value == 0.0
    for chk in (long_, short):
        assert chk.limit is None and chk.to_json()["limit"] is None
        assert chk.status == "pass" and chk.margin is None
        assert chk.details["rs_ideal"] == pytest.approx(30.0, rel=1e-12)
    assert "Z0 - r_out = 30 Ω, nearest E24" in long_.message


# --------------------------------------------------------------------------- GPIO review
# (invented boards of built-in classes, written as a new user would)


def _builtin_design(tmp_path, body, name="b.toml"):
    path = tmp_path / name
    path.write_text('format = "pinlib.design/1"\ntitle = "GPIO review (invented)"\n\n'
                    + body, encoding="utf-8")
    return load_design(path)


@pytest.mark.parametrize("extra, who", [
    ("", None),                                                   # the controller alone
    ('  { ref = "J1", part = "board-to-board-connector", pin = "gpio" },\n', "J1.gpio"),
])
def test_a_gpio_line_nothing_checks_at_says_so(tmp_path, extra, who):
    # a line with no input pin, or only inputs without levels or abs_max (a connector
    # contact), passes with no check at a receiver: its notes must say that nothing
    # there was checked, and where to put the part that receives it
    d = _builtin_design(tmp_path, f"""[[bus]]
id = "rst"
protocol = "gpio"
supply = "3.3 V"
devices = [
  {{ ref = "U1", part = "mcu-3v3", role = "controller", pin = "cs" }},
{extra}]
lines.reset = {{ length = "5 cm", capacitance = "1 pF/cm" }}
""")
    (ln,) = evaluate_bus(d.bus("rst"), d).lines
    assert not [c for c in ln.checks if c.id in ("level-high", "overshoot")]
    (note,) = [n for n in ln.notes if "no level" in n]
    if who is None:
        assert "no device on the line receives it" in note
    else:
        assert who in note and "abs_max" in note


def test_a_gpio_pin_the_part_lacks_names_the_device_line_and_field(tmp_path):
    from pinlib.cli import main

    path = tmp_path / "b.toml"
    path.write_text('''format = "pinlib.design/1"
title = "GPIO review (invented)"

[[bus]]
id = "rst"
protocol = "gpio"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller", pin = "cs" },
  { ref = "U2", part = "display-controller-spi", pin = "rst" },
]
lines.reset = { length = "5 cm", capacitance = "1 pF/cm" }
''', encoding="utf-8")
    with pytest.raises(DesignError) as got:
        load_design(path)
    err = got.value
    assert err.line == 10 and err.field == "bus[0].devices[1].pin"
    text = str(err)
    assert "'rst'" in text and "dc" in text and "display-controller-spi" in text
    assert main(["check", str(path)]) == 2


_OD_RESET = """[[bus]]
id = "rst"
protocol = "gpio"
supply = "3.3 V"
devices = [
  {{ ref = "U10", part = "io-expander-i2c", role = "controller", pin = "int" }},
  {{ ref = "U2", part = "display-controller-spi", pin = "dc" }},
]
lines.reset = {{ length = "5 cm", capacitance = "1 pF/cm"{extra} }}
"""


def test_an_open_drain_gpio_line_takes_a_pull_up_resistor_of_its_own(tmp_path):
    # an active-low reset from an open-drain output (invented, built-in classes): with
    # no part carrying a pull-up the line could not be described at all; its own
    # resistor goes to the bus supply and the line rises through it
    d = _builtin_design(tmp_path, _OD_RESET.format(extra=', pullup = "10 kΩ"'))
    (ln,) = evaluate_bus(d.bus("rst"), d).lines
    assert ln.check("pull-up") is None
    # the pull-up charges every pin on the net, the open-drain output's own included
    # (its c_in is there whether it sinks or not, as an I2C bus's Cb counts every pin):
    # invented values of the built-in classes, 5 pF of trace and 10 pF at each pin
    c_total = 5e-12 + 10e-12 + 10e-12
    # derived from the RC step (docs/references.md, RC edges): 10-90 % = ln 9 Rp C
    assert ln.figures["edge_rise_time"].value == pytest.approx(
        math.log(9.0) * 10e3 * c_total, rel=1e-3)
    # and the load it states is the one the rise charges
    assert ln.figures["load_capacitance"].value == pytest.approx(c_total, rel=1e-12)
    # the same on a route, each pin at its own point
    d = _builtin_design(tmp_path, _OD_RESET.format(extra=', pullup = "10 kΩ"').replace(
        'lines.reset = { length = "5 cm", capacitance = "1 pF/cm", pullup = "10 kΩ" }',
        'lines.reset = { pullup = "10 kΩ", route = [{ from = "U10", to = "U2", '
        'length = "5 cm", capacitance = "1 pF/cm" }] }'), name="route.toml")
    (ln,) = evaluate_bus(d.bus("rst"), d).lines
    assert ln.figures["edge_rise_time"].value == pytest.approx(
        math.log(9.0) * 10e3 * c_total, rel=1e-3)
    # derived: the high level drops by the two pins' leakage (1 µA each) through the
    # resistor at its worst corner, 10 kΩ + 1 % (the default tolerance, as a bus's); the
    # low level is the sink (0.4 V / 3 mA) against 10 kΩ - 1 % from that corner's level
    v_high = VDD - 2e-6 * 10.1e3
    assert ln.check("level-high").value == pytest.approx(v_high, rel=1e-9)
    r_sink, r_low = 0.4 / 3e-3, 9.9e3
    assert ln.check("level-low").value == pytest.approx(
        (VDD - 2e-6 * r_low) * r_sink / (r_sink + r_low), rel=1e-6)
    # without it, the failing pull-up check says how to give one
    d = _builtin_design(tmp_path, _OD_RESET.format(extra=""), name="none.toml")
    (ln,) = evaluate_bus(d.bus("rst"), d).lines
    assert "lines.reset.pullup" in ln.check("pull-up").fix


def test_a_line_pull_up_pulls_to_the_varied_rail(tmp_path):
    # the resistor goes to the bus supply as each board varies it (corners): at the
    # rail's +5 % corner the high level is 3.465 V less the leakage drop
    d = _builtin_design(tmp_path, _OD_RESET.format(extra=', pullup = "10 kΩ"').replace(
        'supply = "3.3 V"\n', 'supply = "3.3 V"\nsupply_tolerance = "5 %"\n', 1))
    (ln,) = evaluate_bus(d.bus("rst"), d).lines
    # derived: the level-high check's worst corner is the low rail, 3.135 V less the
    # leakage's 20.2 mV through 10 kΩ + 1 % (the resistor's default tolerance)
    assert ln.check("level-high").value == pytest.approx(3.3 * 0.95 - 2e-6 * 10.1e3,
                                                         rel=1e-9)


def _slow_input_part(folder, limit: str) -> None:
    """A team part: the built-in display controller whose dc input states the slowest
    edge it is specified for (invented test data)."""
    folder.mkdir(exist_ok=True)
    (folder / "slow-in.toml").write_text(f"""format = "pinlib.part/1"
id = "slow-in"
title = "Display controller whose dc input states a transition time (invented)"
category = "display"
extends = "display-controller-spi"
provenance = {{ basis = "datasheet", source = "test data, invented" }}

[pins.dc]
t_transition_max = "{limit}"
""", encoding="utf-8")


@pytest.mark.parametrize("limit, status", [("100 ns", "fail"), ("1 µs", "pass")])
def test_an_input_transition_time_is_checked_at_its_receiver(tmp_path, limit, status):
    # an open-drain reset through 10 kΩ (invented, built-in classes) into an input that
    # states the slowest edge it takes: the 10-90 % rise, ln 9 Rp C (docs/references.md,
    # RC edges) over 5 pF of trace and 10 pF at each pin at the pull-up's +1 % corner
    # (about 232 ns), fails against 100 ns with a fix that names the pull-up, and passes
    # against 1 µs
    _slow_input_part(tmp_path / "parts", limit)
    d = _builtin_design(tmp_path, 'library = ["parts"]\n\n' + _OD_RESET.format(
        extra=', pullup = "10 kΩ"').replace('"display-controller-spi"', '"slow-in"'))
    (ln,) = evaluate_bus(d.bus("rst"), d).lines
    c = ln.check("input-transition")
    rise = math.log(9.0) * 10.1e3 * 25e-12
    assert c.value == pytest.approx(rise, rel=2e-3)
    assert c.value == pytest.approx(ln.figures["edge_rise_time"].value, rel=2e-2)
    assert c.limit == (100e-9 if limit == "100 ns" else 1e-6)
    assert c.status == status and c.subject == "U2"
    assert "slow-in t_transition_max: test data, invented" == c.source
    assert ("lines.reset.pullup" in c.fix) if status == "fail" else c.fix is None
    # on a route, the edge at the receiver's own point (the same RC rise: 10 kΩ is far
    # above the trace's Z0, so the line charges as one capacitance)
    d = _builtin_design(tmp_path, 'library = ["parts"]\n\n' + _OD_RESET.format(
        extra=', pullup = "10 kΩ"').replace('"display-controller-spi"', '"slow-in"').replace(
        'lines.reset = { length = "5 cm", capacitance = "1 pF/cm", pullup = "10 kΩ" }',
        'lines.reset = { pullup = "10 kΩ", route = [{ from = "U10", to = "U2", '
        'length = "5 cm", capacitance = "1 pF/cm" }] }'), name="route.toml")
    (ln,) = evaluate_bus(d.bus("rst"), d).lines
    routed = ln.check("input-transition")
    assert routed.value == pytest.approx(rise, rel=2e-3) and routed.status == status
    # the fix offers a Schmitt-trigger receiver only where this one has no hysteresis
    if status == "fail":
        assert "Schmitt-trigger" in c.fix
        with (tmp_path / "parts" / "slow-in.toml").open("a", encoding="utf-8") as f:
            f.write('hysteresis = "0.1 VDD"\n')
        d = _builtin_design(tmp_path, 'library = ["parts"]\n\n' + _OD_RESET.format(
            extra=', pullup = "10 kΩ"').replace('"display-controller-spi"', '"slow-in"'),
            name="h.toml")
        (ln,) = evaluate_bus(d.bus("rst"), d).lines
        hyst = ln.check("input-transition")
        assert hyst.status == "fail" and "lines.reset.pullup" in hyst.fix
        assert "Schmitt" not in hyst.fix
    # a receiver that states none gets no such check
    d = _builtin_design(tmp_path, _OD_RESET.format(extra=', pullup = "10 kΩ"'), name="n.toml")
    (ln,) = evaluate_bus(d.bus("rst"), d).lines
    assert ln.check("input-transition") is None


def test_a_line_pull_up_takes_a_tolerance_of_its_own(tmp_path):
    # lines.<signal>.pullup_tolerance (invented, built-in classes): the corners take the
    # resistor at its ends, and Monte Carlo draws it as a parameter of its own
    from pinlib.studies.whatif.tolerances import parameters

    def level_high(extra):
        d = _builtin_design(tmp_path, _OD_RESET.format(extra=extra), name="t.toml")
        (ln,) = evaluate_bus(d.bus("rst"), d).lines
        return d, ln.check("level-high").value

    # derived: 3.3 V less the two pins' 2 µA through 10 kΩ + 5 %, and through 10 kΩ
    _, v5 = level_high(', pullup = "10 kΩ", pullup_tolerance = "5 %"')
    assert v5 == pytest.approx(VDD - 2e-6 * 10.5e3, rel=1e-9)
    d, v0 = level_high(', pullup = "10 kΩ", pullup_tolerance = "0 %"')
    assert v0 == pytest.approx(VDD - 2e-6 * 10e3, rel=1e-9)
    assert not [p for p in parameters(d) if p.kind == "pullup"]
    d, _ = level_high(', pullup = "10 kΩ", pullup_tolerance = "5 %"')
    (p,) = [p for p in parameters(d) if p.kind == "pullup"]
    assert p.name == "rst reset pull-up" and p.nominal == 10e3 and p.tolerance == 0.05
    # Monte Carlo draws it (through the table of the engine over the tolerance box,
    # which had no axis of that kind): the high level's lowest margin lies between the
    # corners' (derived: the margin falls as the resistor's leakage drop grows)
    from pinlib.studies.whatif.montecarlo import monte_carlo

    mc = monte_carlo(d, 400, seed=3)
    assert [q.name for q in mc.parameters] == ["rst reset pull-up"]
    hi = mc.find("rst", "level-high", "reset")
    worst = (v5 - 2.31) / 2.31  # derived: over VIH, 0.7 VDD of the display class
    assert hi.passes.passes == 400 and hi.low == pytest.approx(worst, abs=2e-4)
    assert hi.sensitivity and hi.sensitivity[0][0] == "rst reset pull-up"
    # a tolerance for no resistor is refused where it is written
    with pytest.raises(DesignError) as got:
        _builtin_design(tmp_path, _OD_RESET.format(extra=', pullup_tolerance = "5 %"'),
                        name="alone.toml")
    assert got.value.field == "bus[0].lines.reset.pullup_tolerance"
    assert "needs the line's pullup" in str(got.value)


def test_a_line_pull_up_is_refused_on_an_open_drain_bus(tmp_path):
    # an I2C bus takes its pull-up beside its trace, not inside it as a line does
    with pytest.raises(DesignError) as got:
        _builtin_design(tmp_path, """[[bus]]
id = "i"
protocol = "i2c"
supply = "3.3 V"
trace = { length = "5 cm", capacitance = "1 pF/cm", pullup = "10 kΩ" }
devices = [{ ref = "U1", part = "mcu-3v3", role = "controller" },
           { ref = "U2", part = "eeprom-i2c" }]
""")
    assert got.value.field == "bus[0].trace.pullup"
    assert got.value.line == 8
    assert "only a GPIO or SPI line takes a pullup" in str(got.value)


_SPI_CS = """[[bus]]
id = "s"
protocol = "spi"
clock = "1 MHz"
supply = "3.3 V"
devices = [{ ref = "U1", part = "mcu-3v3", role = "controller" },
           { ref = "U2", part = "nor-flash-spi" }]
lines.sclk = { length = "5 cm", capacitance = "1 pF/cm", delay = "60 ps/cm" }
"""


def test_an_spi_pull_up_tolerance_without_its_pull_up_is_refused(tmp_path):
    with pytest.raises(DesignError) as got:
        _builtin_design(tmp_path, _SPI_CS + 'lines.cs = { length = "5 cm", capacitance = '
                        '"1 pF/cm", delay = "60 ps/cm", pullup_tolerance = "5 %" }\n')
    assert got.value.field == "bus[0].lines.cs.pullup_tolerance"


@pytest.mark.parametrize(("pullup", "status"), [("10 kΩ", "pass"), ("330 Ω", "warn")])
def test_a_chip_select_pull_up_is_held_to_the_controllers_sink(tmp_path, pullup, status):
    # a CS line pulled up to keep the memory deselected while the controller's pin is
    # not yet driving (common practice): while the controller holds CS low it sinks the
    # pull-up's current, against the i_ol its part rates v_ol at (the sink-current check
    # of GPIO lines); the built-in class's i_ol is typical of the class, so past it the
    # check warns (model.result.soft_limit)
    d = _builtin_design(tmp_path, _SPI_CS + 'lines.cs = { length = "5 cm", capacitance = '
                        f'"1 pF/cm", delay = "60 ps/cm", pullup = "{pullup}" }}\n')
    res = evaluate_bus(d.buses[0], d)
    (sink,) = [c for seg, line, c in res.all_checks() if line == "cs" and c.id == "sink-current"]
    ctrl = d.buses[0].devices[0].part.pins["cs"]
    i_ol = float(ctrl.i_ol.at())
    rp = 1e4 if pullup == "10 kΩ" else 330.0
    # derived: V / (Rp + v_ol/i_ol) at the pull-up's -1 % corner (the bus's supply has
    # no tolerance here)
    v_ol = float(ctrl.v_ol.at(3.3))
    assert sink.value == pytest.approx(3.3 / (rp * 0.99 + v_ol / i_ol), rel=1e-9)
    assert sink.status == status
    assert (sink.margin < 0) == (status == "warn")
    assert not [c for seg, line, c in res.all_checks() if line == "sclk"
                and c.id == "sink-current"]  # a line without a pull-up has none


def test_a_pin_that_names_no_line_of_a_bus_of_several_is_refused_at_the_device(tmp_path):
    # on a bus of several lines a device's pin must name its line (docs/formats/
    # design.md); pin = "cs" selected nothing and the error blamed the line instead:
    # "no device drives this line; give each device's pin", which the user had done
    with pytest.raises(DesignError) as got:
        _builtin_design(tmp_path, """[[bus]]
id = "ctl"
protocol = "gpio"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller", pin = "cs" },
  { ref = "U2", part = "display-controller-spi", pin = "dc" },
]
lines.reset = { length = "5 cm", capacitance = "1 pF/cm" }
lines.irq = { length = "5 cm", capacitance = "1 pF/cm" }
""")
    err = got.value
    assert err.field == "bus[0].devices[0].pin" and err.line == 9
    assert "'cs'" in str(err) and "reset, irq" in str(err) and "bus of its own" in str(err)


def test_contention_is_a_rule_of_thumb_that_names_the_drivers_and_a_fix(tmp_path):
    # two push-pull outputs on one reset line (invented, built-in classes): a warning
    # whose source says it has none, and whose one line says whose outputs and what to do
    d = _builtin_design(tmp_path, """[[bus]]
id = "rst"
protocol = "gpio"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller", pin = "cs" },
  { ref = "U4", part = "mcu-3v3", pin = "cs" },
  { ref = "U2", part = "display-controller-spi", pin = "dc" },
]
lines.reset = { length = "5 cm", capacitance = "1 pF/cm" }
""")
    (ln,) = evaluate_bus(d.bus("rst"), d).lines
    c = ln.check("contention")
    assert c.status == "warn" and "common practice, no source" in c.source
    assert c.fix and "U1.cs" in c.fix and "U4.cs" in c.fix


def test_a_level_above_the_receivers_abs_max_says_a_translator_not_a_resistor(tmp_path):
    # a 3.3 V output into a 1.8 V part's input (invented, built-in classes): the
    # overshoot check fails on the settled level itself, which no series resistor or
    # slower edge mends; its fix must say so (the one line gave no fix at all)
    d = _builtin_design(tmp_path, """[[bus]]
id = "stb"
protocol = "gpio"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller", pin = "sclk" },
  { ref = "U3", part = "mcu-1v8", pin = "cipo", supply = "1.8 V" },
  { ref = "U2", part = "display-controller-spi", pin = "dc" },
]

[bus.lines.stb]
length = "15 cm"
capacitance = "1 pF/cm"
delay = "60 ps/cm"
series_resistor = "auto"
""")
    (ln,) = evaluate_bus(d.bus("stb"), d).lines
    c = next(c for c in ln.checks if c.id == "overshoot" and c.subject == "U3")
    # beyond mcu-1v8's abs_max, typical of its class: a warning (no datasheet behind it)
    assert c.status == "warn" and c.margin < 0 and c.details["limit_basis"] == "generic"
    assert c.fix and "level translator" in c.fix and "series resistor" in c.fix
    # a receiver on the driver's own rail keeps no such fix
    ok = next(c for c in ln.checks if c.id == "overshoot" and c.subject == "U2")
    assert not ok.fix


#: A 1.8 V output into a 3.3 V part's input on a GPIO line (invented, built-in classes).
_CROSS_RAIL_IRQ = """[[bus]]
id = "irq"
protocol = "gpio"
supply = "3.3 V"
devices = [
  { ref = "U3", part = "mcu-1v8", role = "controller", pin = "cs", supply = "1.8 V" },
  { ref = "U1", part = "mcu-3v3", pin = "cipo" },
]
lines.irq = { length = "5 cm", capacitance = "1 pF/cm" }
"""


def test_a_high_level_below_vih_across_rails_says_to_shift_the_level(tmp_path):
    # a 1.8 V output into a 3.3 V part's input (invented, built-in classes): VOH 1.35 V
    # against VIH 2.31 V fails with a fix that names the cause, the two rails
    d = _builtin_design(tmp_path, _CROSS_RAIL_IRQ)
    (ln,) = evaluate_bus(d.bus("irq"), d).lines
    c = ln.check("level-high")
    # against mcu-3v3's VIH, typical of its class: a warning (no datasheet behind it)
    assert c.status == "warn" and c.margin < 0 and c.details["limit_basis"] == "generic"
    assert c.fix and "1.8 V" in c.fix and "3.3 V" in c.fix and "level translator" in c.fix
    assert not ln.check("level-low").fix


def test_a_line_inside_the_receivers_rails_shows_no_negative_overshoot(tmp_path):
    # a 1.8 V output into a 3.3 V part's input (invented, built-in classes) peaks some
    # 1.5 V below the receiver's supply, and its low level sits above ground: the checks'
    # values are excursions beyond the rails, so 0 V each and a margin of exactly 100 %,
    # with the extremes in the message (it read "-1.5 V" and margins above 100 %)
    d = _builtin_design(tmp_path, _CROSS_RAIL_IRQ)
    (ln,) = evaluate_bus(d.bus("irq"), d).lines
    over = next(c for c in ln.checks if c.id == "overshoot" and c.subject == "U1")
    under = next(c for c in ln.checks if c.id == "undershoot" and c.subject == "U1")
    for c in (over, under):
        assert c.value == 0.0 and c.margin == 1.0 and c.status == "pass"
    assert "below its supply" in over.message and "peak 1." in over.message
    # a line that does ring above the rail keeps its excursion as the value
    d2 = _builtin_design(tmp_path, """[[bus]]
id = "stb"
protocol = "gpio"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller", pin = "sclk" },
  { ref = "U2", part = "display-controller-spi", pin = "dc" },
]

[bus.lines.stb]
length = "30 cm"
capacitance = "1 pF/cm"
delay = "60 ps/cm"
""")
    (ln2,) = evaluate_bus(d2.bus("stb"), d2).lines
    ring = next(c for c in ln2.checks if c.id == "overshoot" and c.subject == "U2")
    assert ring.value > 0.05 and ring.value == pytest.approx(ln2.figures["overshoot"].value)


def test_a_line_pull_up_is_named_in_the_notes_with_its_rail(tmp_path):
    # where the rise comes from: the line's own resistor, its rail, and what parts add
    d = _builtin_design(tmp_path, _OD_RESET.format(extra=', pullup = "10 kΩ"'))
    (ln,) = evaluate_bus(d.bus("rst"), d).lines
    (note,) = [n for n in ln.notes if n.startswith("pull-up")]
    assert "10 kΩ" in note and "3.3 V" in note and "lines.reset.pullup" in note


@pytest.mark.parametrize("protocol, extra", [
    ("i2c", 'trace = { length = "5 cm", capacitance = "1 pF/cm" }'),
    ("spi", 'clock = "1 MHz"\nlines.sclk = { length = "5 cm", capacitance = "1 pF/cm" }'),
])
def test_a_device_pin_off_a_gpio_bus_is_refused(tmp_path, protocol, extra):
    # pin chooses a device's pin on a GPIO line only; on another bus it was read by
    # nothing and passed in silence (the bus's own pin functions decide there)
    second = "eeprom-i2c" if protocol == "i2c" else "nor-flash-spi"
    with pytest.raises(DesignError) as got:
        _builtin_design(tmp_path, f"""[[bus]]
id = "b"
protocol = "{protocol}"
supply = "3.3 V"
devices = [
  {{ ref = "U1", part = "mcu-3v3", role = "controller", pin = "sda" }},
  {{ ref = "U2", part = "{second}" }},
]
{extra}
""")
    assert got.value.field == "bus[0].devices[0].pin" and got.value.line == 9
    assert "GPIO" in str(got.value)


def test_a_line_no_device_drives_is_named_at_its_own_line(tmp_path):
    # devices on the line through input pins alone: the error named
    # 'bus.rst.lines.reset' (a form no other error uses) at the [[bus]] line
    from pinlib.core.errors import PinlibError
    from pinlib.engines.dispatch import check_file

    path = tmp_path / "b.toml"
    path.write_text('''format = "pinlib.design/1"
title = "GPIO review (invented)"

[[bus]]
id = "rst"
protocol = "gpio"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller", pin = "cipo" },
  { ref = "U2", part = "display-controller-spi" },
]
lines.reset = { length = "5 cm", capacitance = "1 pF/cm" }
''', encoding="utf-8")
    with pytest.raises(PinlibError) as got:
        check_file(path)
    assert got.value.field == "bus[0].lines.reset" and got.value.line == 12
    assert "no device drives" in str(got.value)


def test_a_gpio_device_on_no_line_is_refused_at_the_device(tmp_path):
    # a receiver listed without pin whose part has no pin named like the line and no
    # single gpio pin sat on no line: it got a supply check and passed, the reset it was
    # meant to receive never checked at it
    with pytest.raises(DesignError) as got:
        _builtin_design(tmp_path, """[[bus]]
id = "rst"
protocol = "gpio"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller", pin = "cs" },
  { ref = "U2", part = "display-controller-spi", pin = "dc" },
  { ref = "U5", part = "nor-flash-spi" },
]
lines.reset = { length = "5 cm", capacitance = "1 pF/cm" }
""")
    err = got.value
    assert err.field == "bus[0].devices[2]" and err.line == 11
    assert "U5" in str(err) and "pin = " in str(err) and "cs" in str(err)


def test_a_gpio_controller_on_no_line_is_noted(tmp_path):
    # every bus names a controller; on a GPIO bus it may stand apart from the line (an
    # interrupt between two other parts), which the notes say
    d = _builtin_design(tmp_path, """[[bus]]
id = "irq"
protocol = "gpio"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller" },
  { ref = "U4", part = "io-expander-i2c", pin = "int" },
  { ref = "U2", part = "display-controller-spi", pin = "dc" },
]
lines.int = { length = "5 cm", capacitance = "1 pF/cm", pullup = "10 kΩ" }
""")
    res = evaluate_bus(d.bus("irq"), d)
    assert any(n.startswith("U1 (mcu-3v3), the bus's controller, is on none") for n in res.notes)


def test_a_push_pull_output_beside_an_open_drain_one_is_contention(tmp_path):
    # a reset line driven push-pull by U1 and pulled low by an open-drain output (invented,
    # built-in classes): U1 driving high while U4 sinks shorts the two, as two push-pull
    # outputs would; only the second case warned
    d = _builtin_design(tmp_path, """[[bus]]
id = "rst"
protocol = "gpio"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller", pin = "cs" },
  { ref = "U4", part = "io-expander-i2c", pin = "int" },
  { ref = "U2", part = "display-controller-spi", pin = "dc" },
]
lines.reset = { length = "5 cm", capacitance = "1 pF/cm", pullup = "10 kΩ" }
""")
    (ln,) = evaluate_bus(d.bus("rst"), d).lines
    c = ln.check("contention")
    assert c is not None and c.status == "warn"
    assert "U1.cs" in c.message and "U4.int" in c.message
    assert "common practice, no source" in c.source


GPIO_EXAMPLE = Path(__file__).parents[1] / "workbooks" / "designs" / "gpio-reset-board.toml"


def _at(line, check_id: str, subject: str):
    """The line's check ``check_id`` at the receiver ``subject``."""
    (c,) = [c for c in line.checks if c.id == check_id and c.subject == subject]
    return c


def test_the_gpio_example_design_passes_with_figures_worked_by_hand():
    # the example (invented, built-in classes): a supervisor's open-drain reset with a
    # 10 kΩ line pull-up to U1's reset pin and an FPGA input, and U1's push-pull GPIO
    # to the FPGA; every figure below is worked from the parts' own values
    from pinlib.engines.dispatch import check_design

    d = load_design(GPIO_EXAMPLE)
    res = check_design(d)
    assert res.status == "pass"
    assert all(c.status == "pass" for b in res.buses for ln in b.lines for c in ln.checks)
    lib = d.library
    sink = lib.get("supervisor-od").pins["reset"]
    reset_in = lib.get("mcu-3v3").pins["reset"]
    fpga_in = lib.get("fpga-io-3v3").pins["gpio_in"]
    gpio_out = lib.get("mcu-3v3").pins["gpio_out"]
    rp = 10e3  # the design's lines.reset.pullup
    lo, hi = VDD * 0.97, VDD * 1.03  # the design's 3 % supply tolerance
    lines = {ln.signal: ln for b in res.buses for ln in b.lines}

    ln = lines["reset"]
    f = {k: v.value for k, v in ln.figures.items()}
    # derived from the lossless line, C' = tpd / Z0: the trace's capacitance is its delay
    # over its impedance (the engine's own Z0 and td of the outer-0p2 geometry); the
    # pull-up charges it and every pin on the net, the released sink's own included
    pins = [sink, reset_in, fpga_in]
    c_total = f["trace_delay"] / f["z0"] + sum(p.c_in.value for p in pins)
    assert c_total == pytest.approx(5e-12 + 10e-12 + 8e-12 + f["trace_delay"] / f["z0"])
    assert f["load_capacitance"] == pytest.approx(c_total, rel=1e-12)
    # derived from the RC step (docs/references.md, RC edges): 10-90 % = ln 9 Rp C, a
    # 10 kΩ pull-up being far above Z0 (the line charges as one capacitance)
    assert f["edge_rise_time"] == pytest.approx(math.log(9.0) * rp * c_total, rel=1e-3)
    assert 600e-9 < f["edge_rise_time"] < 700e-9  # derived: ln 9 x 10 kΩ x 29 pF = 642 ns
    # derived: high = the low rail less the three pins' leakage through Rp + 1 % (the
    # pull-up's default tolerance); low = the sink (0.3 V at 1 mA: 300 Ω) against
    # Rp - 1 % from that resistor's high level at the high rail
    leak = sum(p.leakage.value for p in pins)
    assert _at(ln, "level-high", "U1").value == pytest.approx(lo - leak * rp * 1.01,
                                                              rel=1e-9)
    r_sink = sink.v_ol.at(hi) / sink.i_ol.value
    assert r_sink == pytest.approx(300.0)
    assert _at(ln, "level-low", "U1").value == pytest.approx(
        (hi - leak * rp * 0.99) * r_sink / (r_sink + rp * 0.99), rel=1e-6)

    ln = lines["enable"]
    # derived: a push-pull output's rated levels (VOH at IOH, VOL at IOL) read as
    # resistances from its rails (Ohm's law), at the FPGA input's leakage, the only
    # current the line draws, at the rail's worst corner
    i_leak = fpga_in.leakage.value
    r_high = (lo - gpio_out.v_oh.at(lo)) / gpio_out.i_oh.value
    r_low = gpio_out.v_ol.at(hi) / gpio_out.i_ol.value
    assert _at(ln, "level-high", "U3").value == pytest.approx(lo - r_high * i_leak, rel=1e-9)
    assert _at(ln, "level-low", "U3").value == pytest.approx(r_low * i_leak, rel=1e-9)
    assert "as it sources" in _at(ln, "level-high", "U3").message
    # derived: the load (under 15 pF) is below the class's first edge point (2.5 ns at
    # 15 pF), so the edge is faster than that point, and no faster than half of it
    assert ln.figures["load_capacitance"].value < gpio_out.edges[0].load.value
    first = gpio_out.edges[0].rise.value
    assert 0.5 * first < ln.figures["edge_rise_time"].value < first


def test_the_electrical_length_note_says_the_rule_once():
    # it read "electrically long (electrically long when the one-way delay exceeds ...)"
    d = load_design(Path(__file__).resolve().parents[1] / "workbooks/designs/demo-board.toml")
    notes = [n for ln in evaluate_bus(d.bus("flash"), d).lines for n in ln.notes
             if "pins alone" in n]
    assert notes
    for n in notes:
        assert n.count("electrically") == 1
        assert re.search(r"electrically (long, beyond|short, within) 1/6 of the edge "
                         r"\(Johnson & Graham, High-Speed Digital Design, 1993; common "
                         r"practice\)$", n), n


def test_unfitted_driver_says_its_own_pin_is_left_out(lib):
    # pp-ctrl's outputs state r_out and no edge points (invented test part): no fit holds
    # the pin's own 5 pF, which the line leaves out of every driver's load, so the
    # engine says so; a built-in class with edge points gets no such note
    a = controller_line(lib, [trace50(0.05)])
    (note,) = [n for n in a.result.notes if "own pin capacitance" in n]
    assert note.startswith("U1.sclk: its own pin capacitance (5 pF)")
    assert "rise and fall" in note
    d = load_design(DEMO)
    res = evaluate_bus(d.bus("flash"), d)
    assert not any("own pin capacitance" in n for ln in res.lines for n in ln.notes)


def test_notes_of_a_line_with_several_drivers_name_the_one_they_rest_on(tmp_path):
    # an invented CIPO chain of three peripherals: the electrical length and the "auto"
    # series resistor rest on one driver's edge and r_out; the notes had said only "the
    # driver's", and not that every driver goes through the one resistor
    path = tmp_path / "d.toml"
    path.write_text("""\
format = "pinlib.design/1"
title = "CIPO chain (invented test design)"

[board.geometry.ms]
kind = "microstrip"
width = "0.2 mm"
height = "0.18 mm"
er = 4.2

[[bus]]
id = "spi1"
protocol = "spi"
clock = "10 MHz"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller" },
  { ref = "U2", part = "nor-flash-spi" },
  { ref = "U3", part = "adc-spi" },
]
lines.sclk = { length = "10 cm", geometry = "ms" }
lines.cipo = { series_resistor = "auto", route = [
  { from = "U1", to = "U2", length = "10 cm", geometry = "ms" },
  { from = "U2", to = "U3", length = "10 cm", geometry = "ms" } ] }
""", encoding="utf-8")
    d = load_design(path)
    res = evaluate_bus(d.bus("spi1"), d)
    notes = " ".join(next(ln for ln in res.lines if ln.signal == "cipo").notes)
    assert "of U2.cipo's" in notes or "of U3.cipo's" in notes
    assert "the strongest of the line's 2 drivers" in notes


# ---------------------------------------------------------------- levels at the load's current
_RATED_PART = """\
format = "pinlib.part/1"
id = "rated-io"
title = "Output rated at a light load (invented test data)"
category = "controller"
extends = "fpga-io-3v3"

[pins.gpio_out]
v_oh = "VDD - {drop_h}"
i_oh = "{i_oh}"
v_ol = "{v_ol}"
i_ol = "{i_ol}"
"""

_RATED_DESIGN = """\
format = "pinlib.design/1"
title = "levels at the load's current (invented test data)"
library = ["."]

[[bus]]
id = "en"
protocol = "gpio"
supply = "3.3 V"
devices = [
  {{ ref = "U1", part = "rated-io", role = "controller", pin = "gpio_out" }},
  {{ ref = "U2", part = "fpga-io-3v3", pin = "gpio_in" }},
  {{ ref = "U3", part = "fpga-io-3v3", pin = "gpio_in" }},
]
lines.en = {{ length = "2 cm", capacitance = "1 pF/cm", delay = "60 ps/cm"{pullup} }}
"""


def _rated_levels(tmp_path, pullup="", **part):
    from pinlib.engines.dispatch import check_design

    values = {"drop_h": "0.1 V", "i_oh": "100 µA", "v_ol": "0.1 V", "i_ol": "100 µA", **part}
    (tmp_path / "rated-io.toml").write_text(_RATED_PART.format(**values), encoding="utf-8")
    (tmp_path / "d.toml").write_text(_RATED_DESIGN.format(pullup=pullup), encoding="utf-8")
    res = check_design(load_design(tmp_path / "d.toml"))
    checks = [c for b in res.buses for ln in b.lines for c in ln.checks]
    return {c.id: c for c in checks if c.id.startswith("level-") and c.subject == "U2"}


def test_a_level_within_its_rated_current_is_read_at_the_load(tmp_path):
    lib = load_library(env=False)
    leak = 2 * lib.get("fpga-io-3v3").pins["gpio_in"].leakage.value  # U2 and U3
    got = _rated_levels(tmp_path)
    # derived (Ohm's law): VOH VDD - 0.1 V at 100 µA is 1 kΩ from the rail, VOL 0.1 V at
    # 100 µA 1 kΩ to ground; the two inputs' leakage (the fpga class's, common practice)
    # flows through them
    assert got["level-high"].value == pytest.approx(3.3 - 1e3 * leak, rel=1e-12)
    assert got["level-low"].value == pytest.approx(1e3 * leak, rel=1e-12)
    assert "as it sources" in got["level-high"].message


def test_a_level_beyond_its_rated_current_is_held_to_its_rating(tmp_path):
    # a 4.7 kΩ pull-up (1 % low at the worst corner) would draw about 0.58 mA through the
    # 1 kΩ low side, beyond its 100 µA: the part guarantees only 100 µA above its VOL, so
    # the line settles where the pull-up carries that (derived: 3.3 V - 100 µA x
    # 4.653 kΩ = 2.835 V), as an open-drain sink's held level; sink-current fails too
    low = _rated_levels(tmp_path, pullup=', pullup = "4.7 kΩ"')["level-low"]
    assert low.value == pytest.approx(3.3 - 100e-6 * 4700 * 0.99, rel=1e-9)
    assert "held to its rating" in low.message
    # against fpga-io-3v3's VIL, from memory in its class: a warning, not a failure
    assert low.status == "warn" and low.details["limit_basis"] == "generic"
    # the pull-up is what holds it there: the fix says so, not a receiver's VIL
    assert low.fix.startswith("a larger pull-up (lines.en.pullup")
    # a high side rated 1.2 V down at 10 µA under 20 µA of leakage: no level above ground
    # is guaranteed (the straight line through the point had read -1.1 V)
    high = _rated_levels(tmp_path, drop_h="1.2 V", i_oh="10 µA")["level-high"]
    assert high.value == 0.0 and "held to its rating" in high.message



def test_a_fix_level_rounds_a_float_just_under_a_round_value_as_the_round_value():
    from pinlib.engines.pushline.analysis import fmt_above, fmt_below

    # 2 V computed as 1.9999999999999998 had read "1.99 V" rounded down
    assert fmt_below(1.9999999999999998, "V") == "2 V"
    assert fmt_above(2.0000000000000004, "V") == "2 V"
    assert fmt_below(1.996, "V") == "1.99 V" and fmt_above(1.991, "V") == "2 V"
