"""Tests of pinlib.physics.rc against published factors, derived values and ngspice."""

from __future__ import annotations

import numpy as np
import pytest
from spice import have_ngspice, run_deck, run_waveform

from pinlib.core.errors import InputError
from pinlib.physics import rc

needs_ngspice = pytest.mark.skipif(not have_ngspice(), reason="ngspice not on PATH")


# --------------------------------------------------------------------------- published


def test_um10204_rise_factor():
    # published: UM10204 rev. 6 §7.1: 0.3 VDD at 0.3567 RC, 0.7 VDD at 1.2040 RC,
    # tr(30-70 %) = 0.8473 RC; printed to 4 decimals -> tolerance 5e-5.
    assert rc.threshold_time(0.3, 1.0) == pytest.approx(0.3567, abs=5e-5)
    assert rc.threshold_time(0.7, 1.0) == pytest.approx(1.2040, abs=5e-5)
    assert rc.RISE_30_70 == pytest.approx(0.8473, abs=5e-5)
    assert rc.rc_rise_time(1.0, 1.0) == pytest.approx(0.8473, abs=5e-5)


def test_other_level_pairs():
    # derived from tr = RC ln((1 - lo)/(1 - hi)): 10-90 % = ln 9 = 2.197, 20-80 % = ln 4 = 1.386
    assert rc.RISE_10_90 == pytest.approx(2.197, abs=5e-4)
    assert rc.RISE_20_80 == pytest.approx(1.386, abs=5e-4)
    assert rc.rc_rise_time(1.0, 1.0, lo=0.1, hi=0.9) == pytest.approx(2.197, abs=5e-4)
    assert rc.rc_rise_time(1.0, 1.0, lo=0.2, hi=0.8) == pytest.approx(1.386, abs=5e-4)


def test_rp_min_um10204_example():
    # published: UM10204 rev. 6 §7.2.4: VDD 5 V + 10 %, VOL 0.4 V at 3 mA -> Rp(min) 1.7 kΩ
    assert rc.rp_min(5.5, 0.4, 3e-3) == pytest.approx(1.7e3, abs=50.0)


def test_slva689_example():
    # published: TI SLVA689 (February 2015), Fast-mode example, VCC 3.3 V, Cb 200 pF,
    # VOL 0.4 V at 3 mA, tr 300 ns -> 966.667 Ω <= Rp <= 1.77 kΩ (seen quoted in a
    # secondary source)
    assert rc.rp_min(3.3, 0.4, 3e-3) == pytest.approx(966.667, abs=5e-4)
    assert rc.rp_max(300e-9, 200e-12) == pytest.approx(1.77e3, abs=5.0)


# derived from UM10204 rev. 6 eq. 1, Rp(max) = tr / (0.8473 Cb), with the Table 10 tr limits
RP_MAX_DERIVED = [
    # tr [s], Cb [F], Rp(max) [Ω], printed digits -> tolerance [Ω]
    (300e-9, 400e-12, 885.2, 0.05),   # Fast-mode, 400 pF
    (300e-9, 200e-12, 1770.0, 0.5),   # Fast-mode, 200 pF
    (300e-9, 100e-12, 3541.0, 0.5),   # Fast-mode, 100 pF
    (1000e-9, 400e-12, 2951.0, 0.5),  # Standard-mode, 400 pF
    (120e-9, 550e-12, 257.5, 0.05),   # Fast-mode Plus, 550 pF
    (300e-9, 14.9e-12, 23.76e3, 5.0),   # small bus, 300 ns
    (1000e-9, 14.9e-12, 79.21e3, 5.0),  # small bus, 1 µs
]


@pytest.mark.parametrize(("tr", "cb", "expected", "tol"), RP_MAX_DERIVED)
def test_rp_max_derived(tr, cb, expected, tol):
    assert rc.rp_max(tr, cb) == pytest.approx(expected, abs=tol)


# derived from UM10204 rev. 6 eq. 2, Rp(min) = (VDD - VOL) / IOL
RP_MIN_DERIVED = [
    # VDD [V], VOL [V], IOL [A], Rp(min) [Ω], tolerance [Ω]
    (3.3, 0.4, 3e-3, 966.7, 0.05),
    (5.0, 0.4, 3e-3, 1533.0, 0.5),
    (5.5, 0.4, 3e-3, 1700.0, 0.5),
    (3.3, 0.6, 6e-3, 450.0, 0.5),
    (3.3, 0.4, 20e-3, 145.0, 0.5),
    (1.8, 0.2 * 1.8, 2e-3, 720.0, 0.5),
]


@pytest.mark.parametrize(("vdd", "v_ol", "i_ol", "expected", "tol"), RP_MIN_DERIVED)
def test_rp_min_derived(vdd, v_ol, i_ol, expected, tol):
    assert rc.rp_min(vdd, v_ol, i_ol) == pytest.approx(expected, abs=tol)


def test_fast_mode_400pf_has_no_passive_pullup():
    # derived from UM10204 rev. 6 eqs. 1-2: at 3.3 V, 400 pF, 3 mA: 885 Ω < 967 Ω
    assert rc.rp_max(300e-9, 400e-12) < rc.rp_min(3.3, 0.4, 3e-3)


def test_smbus_rise_factor():
    # derived from SMBus 3.1 (tR from VIL,max - 0.15 V to VIH,min + 0.15 V = 0.65-1.50 V):
    # ln((VDD - 0.65)/(VDD - 1.5)) = 0.387 at 3.3 V, 1.344 at 1.8 V
    assert rc.smbus_rise_factor(3.3) == pytest.approx(0.387, abs=5e-4)
    assert rc.smbus_rise_factor(1.8) == pytest.approx(1.344, abs=5e-4)
    # same as the general rise between the two fractions of VDD
    assert rc.smbus_rise_factor(3.3) == pytest.approx(
        rc.rc_rise_time(1.0, 1.0, lo=0.65 / 3.3, hi=1.5 / 3.3), rel=1e-12)


# --------------------------------------------------------------------------- ramp through RC


def test_ramp_response_closed_form_inside_and_after_ramp():
    # derived from the single-pole ramp response: at t = Tr = tau, v = 1 - (1 - 1/e) = 1/e;
    # at t = 2 Tr, v = 1 - (1 - 1/e) / e
    assert rc.ramp_rc_response(1e-9, 1e-9, 1e-9) == pytest.approx(np.exp(-1.0), rel=1e-12)
    assert rc.ramp_rc_response(2e-9, 1e-9, 1e-9) == pytest.approx(
        1.0 - (1.0 - np.exp(-1.0)) * np.exp(-1.0), rel=1e-12)


def test_ramp_response_limits():
    t = np.linspace(-1e-9, 20e-9, 2001)
    # derived: t_ramp = 0 is the RC step response 1 - exp(-t/tau)
    step = rc.ramp_rc_response(t, 0.0, 2e-9)
    assert np.allclose(step, np.where(t > 0, -np.expm1(-np.maximum(t, 0) / 2e-9), 0.0),
                       rtol=0, atol=1e-15)
    # derived: tau = 0 follows the source ramp
    ramp = rc.ramp_rc_response(t, 5e-9, 0.0)
    assert np.allclose(ramp, np.clip(t / 5e-9, 0.0, 1.0), rtol=0, atol=1e-15)
    # both zero: an ideal step
    assert np.array_equal(rc.ramp_rc_response(t, 0.0, 0.0), (t > 0).astype(float))
    # continuity towards the limits (no cancellation blow-up at tiny ratios)
    assert np.allclose(rc.ramp_rc_response(t, 1e-21, 2e-9), step, rtol=0, atol=1e-9)
    assert np.allclose(rc.ramp_rc_response(t, 5e-9, 1e-21), ramp, rtol=0, atol=1e-9)


def test_crossing_limits():
    f = np.array([0.0, 1e-6, 0.1, 0.3, 0.5, 0.7, 0.9, 0.999])
    # derived: step -> -tau ln(1 - f); ramp -> f t_ramp
    assert np.allclose(rc.ramp_rc_crossing(f, 0.0, 3e-9), rc.threshold_time(f, 3e-9),
                       rtol=1e-12, atol=0)
    assert np.allclose(rc.ramp_rc_crossing(f, 4e-9, 0.0), f * 4e-9, rtol=1e-12, atol=0)
    assert rc.ramp_rc_edge_time(0.0, 1.0) == pytest.approx(np.log(9.0), rel=1e-12)
    assert rc.ramp_rc_edge_time(1.0, 0.0) == pytest.approx(0.8, rel=1e-12)
    # derived: a slow ramp through a short RC lags it by tau, so the edge is 0.8 Tr
    assert rc.ramp_rc_edge_time(1e-6, 1e-9) == pytest.approx(0.8e-6, rel=1e-9)


def test_crossing_inverts_response():
    # derived: crossing is the inverse of the (monotone) response
    f = np.array([1e-6, 0.01, 0.1, 0.2, 0.5, 0.8, 0.9, 0.99])[:, None, None]
    t_ramp = np.array([0.0, 1e-12, 1e-10, 1e-9, 1e-8, 1e-6])[None, :, None]
    tau = np.array([1e-13, 1e-11, 1e-9, 3e-9, 1e-6])[None, None, :]
    tc = rc.ramp_rc_crossing(f, t_ramp, tau)
    assert tc.shape == (8, 6, 5)
    assert np.allclose(rc.ramp_rc_response(tc, t_ramp, tau), np.broadcast_to(f, tc.shape),
                       rtol=1e-9, atol=1e-12)


def test_array_matches_scalars():
    rng = np.random.default_rng(7)
    t_ramp = rng.uniform(0.0, 5e-9, 40)
    tau = rng.uniform(0.0, 5e-9, 40)
    t_ramp[:3] = 0.0
    tau[3:6] = 0.0
    t = rng.uniform(-1e-9, 15e-9, 40)
    vec = {
        "response": rc.ramp_rc_response(t, t_ramp, tau),
        "crossing": rc.ramp_rc_crossing(0.37, t_ramp, tau),
        "edge": rc.ramp_rc_edge_time(t_ramp, tau, lo=0.2, hi=0.8),
        "threshold": rc.threshold_time(0.6, tau),
        "rise": rc.rc_rise_time(tau * 1e12, 1e-12),
        "rp_max": rc.rp_max(t_ramp, 1e-12 + tau * 1e-3),
        "rp_min": rc.rp_min(3.3 + t_ramp * 1e9, 0.4, 3e-3),
        "smbus": rc.smbus_rise_factor(1.6 + t_ramp * 1e9),
    }
    for i in range(t.size):
        one = {
            "response": rc.ramp_rc_response(t[i], t_ramp[i], tau[i]),
            "crossing": rc.ramp_rc_crossing(0.37, t_ramp[i], tau[i]),
            "edge": rc.ramp_rc_edge_time(t_ramp[i], tau[i], lo=0.2, hi=0.8),
            "threshold": rc.threshold_time(0.6, tau[i]),
            "rise": rc.rc_rise_time(tau[i] * 1e12, 1e-12),
            "rp_max": rc.rp_max(t_ramp[i], 1e-12 + tau[i] * 1e-3),
            "rp_min": rc.rp_min(3.3 + t_ramp[i] * 1e9, 0.4, 3e-3),
            "smbus": rc.smbus_rise_factor(1.6 + t_ramp[i] * 1e9),
        }
        for key, value in one.items():
            assert np.ndim(value) == 0, key
            assert float(value) == pytest.approx(vec[key][i], rel=1e-13, abs=1e-300), key


@pytest.mark.parametrize(
    ("func", "args", "field"),
    [
        (rc.threshold_time, (1.0, 1e-9), "fraction"),
        (rc.threshold_time, (0.5, -1e-9), "tau"),
        (rc.rc_rise_time, (1e3, 1e-12, 0.7, 0.3), "hi"),
        (rc.smbus_rise_factor, (1.2,), "vdd"),
        (rc.rp_min, (3.3, 3.5, 3e-3), "v_ol"),
        (rc.rp_max, (300e-9, 0.0), "cb"),
        (rc.ramp_rc_crossing, (-0.1, 1e-9, 1e-9), "fraction"),
        (rc.ramp_rc_response, (1e-9, -1e-9, 1e-9), "t_ramp"),
    ],
)
def test_bad_input_names_the_field(func, args, field):
    with pytest.raises(InputError, match=field):
        func(*args)


# --------------------------------------------------------------------------- ngspice


def rc_pullup_deck(r: float, c: float, vdd: float) -> str:
    """Pull-up R from vdd into C starting at 0 V; measures 30-70 % and SMBus 0.65-1.50 V."""
    tau = r * c
    step = tau / 2000.0
    return f"""* RC pull-up from 0 V (UIC, capacitor IC=0)
V1 vdd 0 DC {vdd}
R1 vdd out {r}
C1 out 0 {c} IC=0
.tran {step:.6g} {8 * tau:.6g} 0 {step:.6g} UIC
.meas tran tr3070 TRIG v(out) VAL={0.3 * vdd:.9g} RISE=1 TARG v(out) VAL={0.7 * vdd:.9g} RISE=1
.meas tran trsmb TRIG v(out) VAL=0.65 RISE=1 TARG v(out) VAL=1.5 RISE=1
.end
"""


@pytest.mark.spice
@needs_ngspice
@pytest.mark.parametrize("vdd", [3.3, 5.0, 1.8])
def test_pullup_rise_matches_ngspice(vdd):
    r, c = 2.2e3, 200e-12
    got = run_deck(rc_pullup_deck(r, c, vdd), ["tr3070", "trsmb"])
    assert rc.rc_rise_time(r, c) == pytest.approx(got["tr3070"], rel=0.01)
    assert r * c * rc.RISE_30_70 == pytest.approx(got["tr3070"], rel=0.01)
    assert r * c * rc.smbus_rise_factor(vdd) == pytest.approx(got["trsmb"], rel=0.01)


def ramp_rc_deck(t_ramp: float, tau: float) -> str:
    """PWL ramp 0 -> 1 V over t_ramp behind 1 kΩ into C = tau / 1 kΩ."""
    r = 1e3
    step = min(t_ramp, tau) / 500.0
    stop = t_ramp + 10.0 * tau
    return f"""* linear ramp through RC
V1 src 0 PWL(0 0 {t_ramp:.9g} 1 {2 * stop:.9g} 1)
R1 src out {r}
C1 out 0 {tau / r:.9g}
.tran {step:.6g} {stop:.6g} 0 {step:.6g}
.meas tran t10 WHEN v(out)=0.1 RISE=1
.meas tran t20 WHEN v(out)=0.2 RISE=1
.meas tran t50 WHEN v(out)=0.5 RISE=1
.meas tran t80 WHEN v(out)=0.8 RISE=1
.meas tran t90 WHEN v(out)=0.9 RISE=1
.end
"""


RAMP_CASES = [  # (t_ramp, tau): ramp-dominated, equal, RC-dominated
    (1e-9, 0.1e-9),
    (1e-9, 1e-9),
    (1e-9, 10e-9),
    (10e-9, 1e-9),
    (0.2e-9, 2e-9),
]


@pytest.mark.spice
@needs_ngspice
@pytest.mark.parametrize(("t_ramp", "tau"), RAMP_CASES)
def test_ramp_rc_matches_ngspice(t_ramp, tau):
    got = run_deck(ramp_rc_deck(t_ramp, tau), ["t10", "t20", "t50", "t80", "t90"])
    assert rc.ramp_rc_edge_time(t_ramp, tau) == pytest.approx(got["t90"] - got["t10"], rel=0.01)
    assert rc.ramp_rc_edge_time(t_ramp, tau, lo=0.2, hi=0.8) == pytest.approx(
        got["t80"] - got["t20"], rel=0.01)
    assert rc.ramp_rc_crossing(0.5, t_ramp, tau) == pytest.approx(got["t50"], rel=0.01)


@pytest.mark.spice
@needs_ngspice
def test_ramp_rc_waveform_matches_ngspice():
    t_ramp, tau = 2e-9, 1e-9
    t, (v,) = run_waveform(ramp_rc_deck(t_ramp, tau), ["v(out)"])
    assert np.max(np.abs(rc.ramp_rc_response(t, t_ramp, tau) - v)) < 1e-3  # of the 1 V swing
