"""Tests of pinlib.physics.pullup: circuit formulas, ngspice transients, vectorization."""

from __future__ import annotations

import math

import numpy as np
import pytest
from spice import have_ngspice, run_deck

from pinlib.core.errors import InputError
from pinlib.physics import pullup as pu
from pinlib.physics.rc import RISE_10_90, RISE_30_70

spice = pytest.mark.spice
needs_ngspice = pytest.mark.skipif(not have_ngspice(), reason="ngspice not on PATH")


# --------------------------------------------------------------------------- closed forms


def test_parallel():
    # derived from 1/R = sum(1/Ri): 2.2 kΩ ∥ 10 kΩ = 1803.28 Ω; an absent one (inf) adds nothing
    assert pu.parallel(2200.0, 10e3) == pytest.approx(1803.28, abs=0.01)
    assert pu.parallel(2200.0, np.inf) == pytest.approx(2200.0)
    assert math.isinf(pu.parallel(np.inf, np.inf))
    with pytest.raises(InputError, match="positive"):
        pu.parallel(-1.0)


def test_low_level_divider():
    # derived from the divider: 3.3 V, Rp 2.2 kΩ, Ron 0.4 V / 3 mA = 133.3 Ω, Rs 100 Ω
    r_sink = pu.sink_resistance(0.4, 3e-3)
    assert r_sink == pytest.approx(133.333, abs=1e-3)
    v = pu.low_level(3.3, 2200.0, r_sink, 100.0)
    assert v == pytest.approx(3.3 * (400 / 3 + 100) / (400 / 3 + 100 + 2200), rel=1e-12)
    # at Rp(min) (UM10204 eq. 2) the driver sits exactly at its datasheet point
    rp_min = (3.3 - 0.4) / 3e-3
    assert pu.low_level(3.3, rp_min, r_sink) == pytest.approx(0.4, rel=1e-12)
    assert pu.sink_current(3.3, rp_min, r_sink) == pytest.approx(3e-3, rel=1e-12)
    assert pu.low_level(3.3, np.inf, r_sink) == 0.0


def test_high_level_and_power():
    # derived from Ohm's law: 10 µA through 10 kΩ drops 0.1 V
    assert pu.high_level(3.3, 10e3, 10e-6) == pytest.approx(3.2)
    # derived: 1 µA through 10 MΩ would drop 10 V, more than the rail; the leakage
    # flows to ground and cannot pull the line below it: 0 V, not -6.7 V
    assert pu.high_level(3.3, 10e6, 1e-6) == 0.0
    from pinlib.physics.pullup import unchecked

    assert unchecked.high_level(3.3, 10e6, 1e-6) == 0.0
    # derived from P = V I: 3.3 V into 2.2 kΩ + 133.3 Ω
    assert pu.static_power(3.3, 2200.0, 133.333) == pytest.approx(3.3**2 / 2333.333, rel=1e-6)


def test_scl_frequency_eq3_gives_the_mode_maxima():
    # derived from UM10204 rev. 6 eq. 3 with table 10 minima and maximum edges:
    # 100 kHz, 400 kHz, 1 MHz (docs/references.md [D])
    assert pu.scl_frequency(4.7e-6, 4.0e-6, 1000e-9, 300e-9) == pytest.approx(100e3, rel=1e-9)
    assert pu.scl_frequency(1.3e-6, 0.6e-6, 300e-9, 300e-9) == pytest.approx(400e3, rel=1e-9)
    assert pu.scl_frequency(0.5e-6, 0.26e-6, 120e-9, 120e-9) == pytest.approx(1e6, rel=1e-9)


def test_cb_limit_um10204_example():
    # published: UM10204 rev. 6 §7.2.4: Rp(min) 1.7 kΩ "limits Cb to about 200 pF" at
    # tr = 300 ns ("about": 5 %)
    assert pu.cb_limit(300e-9, 1.7e3) == pytest.approx(200e-12, rel=0.05)


def test_pullup_margins():
    # derived from the definitions: 1.5 kΩ in [1 kΩ, 3 kΩ] at 0 %: +50 % and +50 %
    lo, hi = pu.pullup_margins(1500.0, 1000.0, 3000.0)
    assert (lo, hi) == pytest.approx((0.5, 0.5))
    # an unbounded Rp(min) gives -1 (no value fits), not NaN
    lo, _ = pu.pullup_margins(1500.0, np.inf, 3000.0)
    assert lo == -1.0


def test_needed_values():
    # derived from a constant current charging C: 400 pF over 0.4·3.3 V in 300 ns -> 1.76 mA
    assert pu.current_source_needed(400e-12, 0.99, 2.31, 300e-9) == pytest.approx(1.76e-3)
    # derived from UM10204 eq. 2 solved for IOL at Rp(max) 885.2 Ω: (3.3 - 0.4)/885.2
    assert pu.sink_current_needed(3.3, 0.4, 885.2) == pytest.approx(3.276e-3, abs=1e-6)


def test_translator_levels_nodal():
    # derived from Kirchhoff's current law, solved as a linear system
    vn, vf, i = pu.translator_low_levels(1.8, 2200.0, 3.3, 2200.0, 10.0, 180.0)
    g = np.array([[1 / 2200 + 1 / 10 + 1 / 180, -1 / 10], [-1 / 10, 1 / 10 + 1 / 2200]])
    ref = np.linalg.solve(g, [1.8 / 2200, 3.3 / 2200])
    assert (vn, vf) == pytest.approx(tuple(ref), rel=1e-12)
    assert i == pytest.approx(ref[0] / 180.0, rel=1e-12)


def test_bench_helper_round_trip():
    # derived from tr = k·Rp·(Cb + Cprobe): a 150 pF bus, 10 pF probe, 2.2 kΩ
    t = RISE_30_70 * 2200.0 * 160e-12
    cb, rise = pu.capacitance_from_rise(t, 2200.0, 10e-12)
    assert cb == pytest.approx(150e-12, rel=1e-12)
    assert rise == pytest.approx(RISE_30_70 * 2200.0 * 150e-12, rel=1e-12)
    cb, _ = pu.capacitance_from_rise(RISE_10_90 * 1e3 * 60e-12, 1e3, 10e-12, lo=0.1, hi=0.9)
    assert cb == pytest.approx(50e-12, rel=1e-12)
    with pytest.raises(InputError, match="faster than the probe"):
        pu.capacitance_from_rise(1e-9, 2200.0, 10e-12)


def test_budget_arrays_match_scalars():
    rp = np.array([1e3, 2.2e3, 4.7e3])
    cb = np.array([50e-12, 150e-12, 400e-12])
    vdd = np.array([1.8, 3.3, 5.0])
    b = pu.budget(rp[:, None], cb[None, :], vdd[:, None], leakage=20e-6, r_series=50.0)
    for i in range(3):
        for j in range(3):
            s = pu.budget(rp[i], cb[j], vdd[i], leakage=20e-6, r_series=50.0)
            for name in pu.Budget._fields:
                assert getattr(b, name)[i, j] == pytest.approx(getattr(s, name), rel=1e-12)


def test_fall_bound_limits():
    # derived: with no pull-up the bound is the plain current-source discharge C·ΔV/I
    t = pu.fall_time_bound(np.inf, 100e-12, 3.3, 0.4, 3e-3, 2.31, 0.99)
    assert t == pytest.approx(100e-12 * 1.32 / 3e-3, rel=1e-12)
    # a pull-up that takes more than the sink's current at the lower level: no bound
    assert math.isinf(pu.fall_time_bound(300.0, 100e-12, 3.3, 0.4, 3e-3, 2.31, 0.99))


# --------------------------------------------------------------------------- ngspice


@spice
@needs_ngspice
def test_fall_bound_against_ngspice():
    # the guaranteed sink, min(V/Ron, IOL) with Ron = 0.4 V / 3 mA, through Rs = 200 Ω,
    # against a 1.5 kΩ pull-up on 200 pF at 3.3 V: ngspice integrates the same circuit
    rp, cb, vdd, rs = 1500.0, 200e-12, 3.3, 200.0
    deck = f"""guaranteed sink discharging a pull-up line
V1 vdd 0 {vdd}
Rp vdd bus {rp}
C1 bus 0 {cb} IC={vdd}
Rs bus pin {rs}
B1 pin 0 I = min(v(pin) / 133.3333333, 3m)
.tran 0.05n 400n 0 0.05n UIC
.meas tran tf TRIG v(bus) VAL={0.7 * vdd} FALL=1 TARG v(bus) VAL={0.3 * vdd} FALL=1
.end
"""
    got = run_deck(deck, ["tf"])["tf"]
    ours = pu.fall_time_bound(rp, cb, vdd, 0.4, 3e-3, 0.7 * vdd, 0.3 * vdd, rs)
    assert ours == pytest.approx(got, rel=0.01)


@spice
@needs_ngspice
def test_bench_helper_against_ngspice():
    # a 180 pF bus measured with a 12 pF probe through 2.2 kΩ: the helper recovers 180 pF
    deck = """RC pull-up with a probe
V1 vdd 0 PULSE(0 3.3 1n 0.01n 0.01n 10u 20u)
R1 vdd bus 2200
C1 bus 0 192p IC=0
.tran 0.1n 3u 0 0.1n UIC
.meas tran tr TRIG v(bus) VAL=0.99 RISE=1 TARG v(bus) VAL=2.31 RISE=1
.end
"""
    t = run_deck(deck, ["tr"])["tr"]
    cb, _ = pu.capacitance_from_rise(t, 2200.0, 12e-12)
    assert cb == pytest.approx(180e-12, rel=0.01)


def test_unchecked_functions_give_the_checked_numbers():
    """pullup.unchecked skips only the input checks: inside the checked domain every
    number is the checked function's, bit for bit."""
    from pinlib.physics.pullup import unchecked

    vdd = np.array([[2.97, 3.63]])  # invented rail corners, common practice, no source
    rp, cb, r_sink, r_s = 2.2e3, 150e-12, 133.3, 47.0  # invented values, no source
    assert np.array_equal(unchecked.low_level(vdd, rp, r_sink, r_s),
                          pu.low_level(vdd, rp, r_sink, r_s))
    assert np.array_equal(unchecked.sink_current(vdd, rp, r_sink, r_s),
                          pu.sink_current(vdd, rp, r_sink, r_s))
    assert np.array_equal(unchecked.high_level(vdd, rp, 20e-6), pu.high_level(vdd, rp, 20e-6))
    assert unchecked.rise_time(rp, cb, RISE_30_70) == pu.rise_time(rp, cb, RISE_30_70)
    # published: UM10204 rev. 6 table 9, sink point 0.4 V at 3 mA, levels 0.3/0.7 VDD
    args = (rp, cb, vdd, 0.4, 3e-3, 0.7 * vdd, 0.3 * vdd, r_s)
    assert np.array_equal(unchecked.fall_time_bound(*args), pu.fall_time_bound(*args))
    with pytest.raises(InputError, match="leakage"):  # the checked one still checks
        pu.high_level(vdd, rp, -1e-6)
