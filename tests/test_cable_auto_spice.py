""""auto" on a line whose sections differ in impedance, against ngspice: a GPIO reset
line over 4 cm of 50 Ω trace into 1 m of 100 Ω cable (tests/data/gpio-cable-auto.toml,
invented).  The netlist is written from the design file's own numbers (Z0 = delay /
capacitance per length, the cable class's 100 Ω and 5 ns/m, the receiver's 5 pF), only
the driver's resistance and ramp taken from the engine (pp-ctrl: 20 Ω, the documented
1 ns default ramp).  The resistor "auto" picks must damp the line in ngspice too, and
the engine's edge and overshoot at the receiver must match ngspice's."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from spice import have_ngspice, run_waveform

from pinlib.engines.dispatch import check_design
from pinlib.model.design import load_design
from pinlib.physics import waveform as wf

DESIGN = Path(__file__).parent / "data" / "gpio-cable-auto.toml"
TMAX = 2e-12  # ngspice step limit [s]: edges here are 1 ns and more
STOP = 60e-9  # ngspice run [s]: the cable's round trips (10 ns each) have died out
Z_TRACE, TD_TRACE = 50.0, 4 * 60e-12  # derived: 60 ps/cm / 1.2 pF/cm; 4 cm x 60 ps/cm
Z_CABLE, TD_CABLE = 100.0, 5e-9  # pp-cable (invented test data): 100 Ω, 5 ns/m x 1 m
C_RX = 5e-12  # pp-periph reset c_in (invented test data)
ABS_MAX_ABOVE = 0.5  # pp-periph abs_max VDD + 0.5 V (invented test data)


def _spice(r: float, t_ramp: float, vdd: float):
    deck = ["* trace into cable",
            f"V1 src 0 PWL(0 0 {t_ramp:.9g} {vdd} {4 * STOP:.9g} {vdd})",
            f"R1 src a {r:.9g}",
            f"T1 a 0 m 0 Z0={Z_TRACE} TD={TD_TRACE:.9g}",
            f"T2 m 0 b 0 Z0={Z_CABLE} TD={TD_CABLE:.9g}",
            f"C1 b 0 {C_RX:.9g}",
            f".tran {TMAX:.6g} {STOP:.9g} 0 {TMAX:.6g}", ".end", ""]
    t, (v,) = run_waveform("\n".join(deck), ["v(b)"])
    return t, v


@pytest.mark.spice
@pytest.mark.skipif(not have_ngspice(), reason="ngspice not on PATH")
def test_auto_resistor_damps_a_trace_into_a_cable_in_ngspice():
    bus = check_design(load_design(DESIGN)).buses[0]
    la = bus.workings["reset"]
    case, model = la.cases["U1"], la.models["U1"]
    vdd = case.v_high
    line = bus.lines[0]
    assert line.status == "pass", [c.message for c in line.checks if c.status != "pass"]
    t, v = _spice(model.r_rise + case.rs, model.t_ramp_rise, vdd)
    over = float(wf.overshoot(v, vdd))
    # the chosen resistor keeps the receiver inside its rating in ngspice as well
    assert over < ABS_MAX_ABOVE, (case.rs, over)
    got = case.wave_at("U2", "rise")
    # issue 16's bounds: 1 % on the 10-90 % edge, 0.02 VDD on overshoot
    assert got.t_edge == pytest.approx(float(wf.edge_time(t, v, vdd)), rel=0.01)
    assert got.overshoot == pytest.approx(over, abs=0.02 * vdd)
    assert line.figures["series_resistor"].value == case.rs
    note = next(n for n in line.notes if "auto series resistor" in n)
    assert "sections differ in Z0" in note and "100 Ω" in note


@pytest.mark.spice
@pytest.mark.skipif(not have_ngspice(), reason="ngspice not on PATH")
def test_first_section_match_alone_leaves_the_cable_ringing_in_ngspice():
    """Why the choice matters: Z0 of the 4 cm trace alone (50 Ω - 20 Ω = 30 Ω) leaves the
    receiver above its rating in ngspice.  (Run at 29.5 Ω: ngspice 39 stalls on a source
    matched exactly to a T line, measured here; the assertion has ample room for
    the 0.5 Ω.)"""
    la = check_design(load_design(DESIGN)).buses[0].workings["reset"]
    model, vdd = la.models["U1"], la.cases["U1"].v_high
    _, v = _spice(model.r_rise + 29.5, model.t_ramp_rise, vdd)
    assert float(wf.overshoot(v, vdd)) > ABS_MAX_ABOVE
    assert np.isfinite(v).all()
