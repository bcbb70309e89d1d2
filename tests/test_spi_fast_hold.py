"""Hold checks of an SPI bus whose controller states a fast corner (``pins.<pin>.fast``).

Minimum delays (the early flights of hold checks) are taken at the fast corner as well as
at the slow one, maximum delays (setup) at the slow corner.  Each corner's flights run
from that corner's own output timing reference (the pin's 50 % crossing into its
``test_load`` with that corner's drive), so two flights of one driver are paired within a
corner (``copi-hold``, ``cs-hold``: the shorter of the two corners' hold); flights of two
drivers (``cipo-hold``: the controller's SCLK, the peripheral's CIPO) each take the
earlier of their own driver's corners.  The parts are invented test data
(tests/data/corners/pp-ctrl-corners, 20 Ω slow and 8 Ω fast, both with the documented
default 1 ns ramp and a 15 pF test load; tests/data/pushpull/pp-periph: inputs at
0.3/0.7 VDD, 5 pF).
"""

from __future__ import annotations

import math
from dataclasses import replace
from pathlib import Path

import pytest
from spice import have_ngspice, run_deck

from pinlib.engines.pushpull import evaluate_bus
from pinlib.model.design import load_design

DATA = Path(__file__).parent / "data"


def _ramp_rc(t: float, t_ramp: float, tau: float) -> float:
    """A 0-100 % linear ramp of ``t_ramp`` through a first-order RC, as a fraction of its
    swing (textbook response; common practice, no source)."""
    if t <= t_ramp:
        return (t - tau * (1.0 - math.exp(-t / tau))) / t_ramp
    return 1.0 - (tau / t_ramp) * (math.exp(t_ramp / tau) - 1.0) * math.exp(-t / tau)


def _crossing(fraction: float, t_ramp: float, tau: float) -> float:
    lo, hi = 0.0, t_ramp + 50.0 * tau
    for _ in range(200):  # bisection, independent of the engine's Newton solve
        mid = 0.5 * (lo + hi)
        lo, hi = (mid, hi) if _ramp_rc(mid, t_ramp, tau) < fraction else (lo, mid)
    return 0.5 * (lo + hi)


def _flights(r_out: float) -> tuple[float, float, float]:
    """By hand, at one corner of pp-ctrl-corners (``r_out``; 1 ns ramp, lumped RC): COPI's
    earliest flight into 70 pF (5 cm at 1 pF/cm + 60 pF extra + 5 pF input), SCLK's
    latest and earliest into 10 pF (5 pF of line + 5 pF input), each from the corner's
    50 % crossing into the 15 pF test load. [s]"""
    t_ramp = 1e-9  # the driver model's default ramp (docs/formats/part.md)
    ref = _crossing(0.5, t_ramp, r_out * 15e-12)
    return (_crossing(0.3, t_ramp, r_out * 70e-12) - ref,
            _crossing(0.7, t_ramp, r_out * 10e-12) - ref,
            _crossing(0.3, t_ramp, r_out * 10e-12) - ref)


def _checks(part: str = "pp-ctrl-corners") -> dict:
    design = load_design(DATA / "spi-fast-corner.toml")
    bus = design.buses[0]
    devices = tuple(replace(d, part_id=part, part=design.library.parts[part])
                    if d.is_controller else d for d in bus.devices)
    bus = replace(bus, supply_tolerance=None, length_tolerance=None, devices=devices)
    res = evaluate_bus(bus, replace(design, buses=(bus,)))
    return {c.id: c for c in res.checks}


def test_copi_hold_takes_the_fast_corner_where_it_is_shorter():
    c = _checks()
    copi_fast, sclk_late_fast, _ = _flights(8.0)     # the fast corner's 8 Ω
    copi_slow, sclk_late_slow, sclk_early_slow = _flights(20.0)
    # by hand: hold 131 ps at the slow corner, -81 ps at the fast one: the fast is shorter
    assert copi_fast - sclk_late_fast < copi_slow - sclk_late_slow
    hold = c["copi-hold"].details
    # the engine's own solve of the 5 cm lines against a lumped RC by hand: within 0.5 ps
    assert hold["copi_early"] == pytest.approx(copi_fast, abs=5e-13)
    assert hold["sclk_late"] == pytest.approx(sclk_late_fast, abs=5e-13)
    assert c["copi-hold"].value == pytest.approx(50e-9 + copi_fast - sclk_late_fast, abs=5e-13)
    # setup stays at the slow corner: the early SCLK of copi-setup is the slow one's
    assert c["copi-setup"].details["sclk_early"] == pytest.approx(sclk_early_slow, abs=5e-13)


def test_cs_and_cipo_hold_keep_the_slow_corner_where_it_is_shorter():
    c = _checks()
    _, sclk_late_slow, sclk_early_slow = _flights(20.0)
    # cs-hold: CS's early flight (10 pF, as SCLK's) less SCLK's late one is shorter at
    # the slow corner (by hand: -416 ps against -185 ps at the fast one)
    assert c["cs-hold"].details["sclk_late"] == pytest.approx(sclk_late_slow, abs=5e-13)
    assert c["cs-hold"].details["cs_early"] == pytest.approx(sclk_early_slow, abs=5e-13)
    # cipo-hold: the controller's SCLK is earliest at its slow corner here
    assert c["cipo-hold"].details["sclk_early"] == pytest.approx(sclk_early_slow, abs=5e-13)


def test_a_controller_without_a_fast_corner_keeps_the_slow_corner():
    c = _checks("pp-ctrl")
    copi_slow, sclk_late_slow, _ = _flights(20.0)
    assert c["copi-hold"].details["copi_early"] == pytest.approx(copi_slow, abs=5e-13)
    assert c["copi-hold"].details["sclk_late"] == pytest.approx(sclk_late_slow, abs=5e-13)


@pytest.mark.skipif(not have_ngspice(), reason="ngspice not on PATH")
def test_the_fast_corner_flights_agree_with_ngspice():
    # the fast corner as a netlist: the 1 ns ramp behind 8 Ω into COPI's 70 pF, SCLK's
    # 10 pF and the 15 pF test load (the reference), lumped as in the hand calculation
    deck = """fast corner of pp-ctrl-corners (invented test data)
V1 s 0 PWL(0 0 1n 3.3)
R1 s a 8
C1 a 0 70p
R2 s b 8
C2 b 0 10p
R3 s c 8
C3 c 0 15p
.tran 0.2p 6n
.meas tran t_copi TRIG AT=0 TARG v(a) VAL=0.99 RISE=1
.meas tran t_sclk TRIG AT=0 TARG v(b) VAL=2.31 RISE=1
.meas tran t_ref TRIG AT=0 TARG v(c) VAL=1.65 RISE=1
.end
"""
    got = run_deck(deck, ["t_copi", "t_sclk", "t_ref"])
    hold = _checks()["copi-hold"].details
    # 0.3 VDD on COPI's rise, 0.7 VDD on SCLK's, from the 50 % crossing into 15 pF;
    # within 0.5 ps (the engine solves the 5 cm lines, ngspice the lumped RC)
    assert hold["copi_early"] == pytest.approx(got["t_copi"] - got["t_ref"], abs=5e-13)
    assert hold["sclk_late"] == pytest.approx(got["t_sclk"] - got["t_ref"], abs=5e-13)
