"""Tests of pinlib.physics.coupled: coupled microstrip and stripline, and their crosstalk."""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest

from pinlib.core.errors import InputError, ValidityWarning
from pinlib.physics.coupled import (
    RAMP_FROM_10_90,
    coupled_microstrip,
    coupled_stripline,
    crosstalk,
    from_modes,
)
from pinlib.physics.coupledwave import EndLoads
from pinlib.physics.lines import C0, ETA0, microstrip, stripline
from pinlib.physics.lines.stripline_models import _k_ratio

E0 = 1.0 / (4e-7 * math.pi * C0 * C0)  # vacuum permittivity [F/m]


def _quiet(fn, *args, **kw):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        return fn(*args, **kw)


# ============================================================================ stripline (Cohn)


@pytest.mark.parametrize("w_over_b", [0.1, 0.375, 1.25, 4.0])
def test_stripline_wide_gap_is_the_single_line(w_over_b):
    b = 0.4e-3
    pair = coupled_stripline(w_over_b * b, b, 4.3, 20 * b)
    # derived from Cohn 1954/1955: both moduli tend to tanh(pi w/2b) as s -> infinity
    single = stripline(w_over_b * b, b, 4.3, method="cohn").z0
    assert pair.z_even == pytest.approx(single, rel=1e-9)
    assert pair.z_odd == pytest.approx(single, rel=1e-9)
    assert pair.kb < 1e-12


@pytest.mark.parametrize("w_over_b", [0.125, 0.375, 1.25])
def test_stripline_closed_gap_even_mode_is_twice_the_merged_strip(w_over_b):
    # derived from the geometry: with no gap the two strips are one strip of width 2w
    # carrying both currents, so each line's even-mode impedance is 2 Z0(2w) (Cohn 1954)
    b = 0.4e-3
    pair = coupled_stripline(w_over_b * b, b, 1.0, 1e-9 * b)
    merged = stripline(2 * w_over_b * b, b, 1.0, method="cohn").z0
    assert pair.z_even == pytest.approx(2 * merged, rel=1e-6)
    # derived from the narrow gap between coplanar strips, C = eps0 (2/pi) ln(1/s) + const
    # (K(k')/K(k) ~ (2/pi) ln(4/k)); the odd mode sees twice it: 1/Zo grows by
    # 4 ln(1000)/(pi eta0) each time the gap shrinks 1000-fold
    gaps = coupled_stripline(w_over_b * b, b, 1.0, np.array([1e-3, 1e-6, 1e-9]) * b)
    step = 4 * math.log(1000) / (math.pi * ETA0)
    np.testing.assert_allclose(np.diff(1 / gaps.z_odd), step, rtol=0.01)


def test_stripline_homogeneous_medium_has_no_forward_coupling():
    b = 0.4e-3
    s = np.array([0.02, 0.1, 0.3, 1.0]) * b
    pair = coupled_stripline(0.15e-3, b, 4.3, s)
    # derived from the TEM modes of a homogeneous medium: ve = vo, so Cm/C = Lm/L
    np.testing.assert_allclose(pair.kf, 0.0, atol=1e-14)
    assert np.all(pair.kb > 0)
    assert np.all(np.diff(pair.kb) < 0)


# ============================================================================ microstrip (K&J)


@pytest.mark.parametrize("er,u", [(2.2, 0.3), (4.3, 1.0), (4.3, 2.0), (10.0, 1.0)])
def test_microstrip_wide_gap_tends_to_the_single_line(er, u):
    h = 0.18e-3
    single = microstrip(u * h, h, er)
    pair = _quiet(coupled_microstrip, u * h, h, er, 40 * h)
    # derived from Kirschning & Jansen 1984: every coupling term vanishes as s/h grows,
    # leaving Hammerstad & Jensen's single line
    assert pair.z_even == pytest.approx(single.z0, rel=2e-3)
    assert pair.z_odd == pytest.approx(single.z0, rel=2e-3)
    assert pair.er_eff_even == pytest.approx(single.er_eff, rel=1e-3)
    assert pair.er_eff_odd == pytest.approx(single.er_eff, rel=1e-3)
    assert abs(pair.kb) < 1e-3 and abs(pair.kf) < 1e-3


def test_microstrip_in_air_has_no_forward_coupling():
    h = 0.2e-3
    pair = coupled_microstrip(h, h, 1.0, np.array([0.2, 1.0, 3.0]) * h)
    # derived from a homogeneous medium (er = 1): both modes travel at c
    np.testing.assert_allclose(pair.er_eff_even, 1.0, rtol=1e-12)
    np.testing.assert_allclose(pair.er_eff_odd, 1.0, rtol=1e-12)
    np.testing.assert_allclose(pair.kf, 0.0, atol=1e-12)


def test_microstrip_in_a_dielectric_has_inductive_forward_coupling():
    h = 0.18e-3
    pair = coupled_microstrip(2 * h, h, 4.3, np.array([0.5, 1.0, 2.0]) * h)
    # derived from the odd mode's larger share of field in air (er_eff_odd < er_eff_even),
    # which makes Lm/L exceed Cm/C: far-end noise of opposite sign to the aggressor
    assert np.all(pair.er_eff_odd < pair.er_eff_even)
    assert np.all(pair.kf < 0)
    assert np.all(np.diff(pair.kb) < 0)


def _garg_bahl_caps(u, g, er):
    """Garg & Bahl, 'Characteristics of coupled microstriplines', IEEE Trans. MTT-27,
    1979: even and odd capacitance per length of h = 1 (from memory)."""
    m = microstrip(u, 1.0, er)
    cp = E0 * er * u
    cf = 0.5 * (math.sqrt(m.er_eff) / (C0 * m.z0) - cp)
    a = math.exp(-0.1 * math.exp(2.33 - 2.53 * u))
    cf2 = cf / (1 + a / g * math.tanh(8 * g)) * math.sqrt(er / m.er_eff)
    k = g / (g + 2 * u)
    cga = E0 * float(_k_ratio(np.sqrt(1 - k * k), np.array(k)))
    cgd = (E0 * er / math.pi * math.log(1 / math.tanh(math.pi * g / 4))
           + 0.65 * cf * (0.02 * math.sqrt(er) / g + 1 - er**-2))
    return cp + cf + cf2, cp + cf + cga + cgd


@pytest.mark.parametrize("er", [2.2, 4.3, 10.0])
@pytest.mark.parametrize("u", [0.3, 1.0, 2.0])
@pytest.mark.parametrize("g", [0.2, 0.5, 1.0, 2.0])
def test_microstrip_agrees_with_an_independent_published_model(er, u, g):
    # derived from Garg & Bahl 1979 (a second closed form, from memory, stated within
    # about 3 % in 0.2 <= w/h <= 2, 0.05 <= s/h <= 2; K&J claim better): so within 6 %
    ce, co = _garg_bahl_caps(u, g, er)
    ce_air, co_air = _garg_bahl_caps(u, g, 1.0)
    ze, zo = 1 / (C0 * math.sqrt(ce * ce_air)), 1 / (C0 * math.sqrt(co * co_air))
    pair = coupled_microstrip(u, 1.0, er, g)
    assert pair.z_even == pytest.approx(ze, rel=0.06)
    assert pair.z_odd == pytest.approx(zo, rel=0.06)
    assert pair.er_eff_even == pytest.approx(ce / ce_air, rel=0.06)
    # G&B's odd-mode dielectric gap term keeps a part that does not vanish with s/h,
    # so their odd er_eff runs high at wide gaps: 8 % there
    assert pair.er_eff_odd == pytest.approx(co / co_air, rel=0.08)


def test_near_end_coefficient_follows_the_rule_of_thumb():
    # common practice, no source beyond the rule: near-end crosstalk on microstrip falls
    # roughly as 1/(1 + (s/h)^2) (Johnson & Graham, High-Speed Digital Design, 1993).
    # A sanity bound: normalised at s = h, the model stays within a factor 2 of the rule.
    h = 0.18e-3
    g = np.array([0.5, 1.0, 1.5, 2.0, 3.0, 4.0])
    pair = coupled_microstrip(1.8 * h, h, 4.3, g * h)
    model = pair.kb / pair.kb[1]
    rule = (1 / (1 + g**2)) / 0.5
    ratio = model / rule
    assert np.all((ratio > 0.5) & (ratio < 2.0)), ratio


def test_symmetric_per_length_matrices():
    pair = coupled_microstrip(0.3e-3, 0.18e-3, 4.3, 0.2e-3)
    # derived from the mode definitions: Le = L11 + Lm, Ce = C11 - Cm, and so on
    ve = C0 / math.sqrt(pair.er_eff_even)
    vo = C0 / math.sqrt(pair.er_eff_odd)
    assert pair.l_self + pair.l_mutual == pytest.approx(pair.z_even / ve, rel=1e-12)
    assert pair.l_self - pair.l_mutual == pytest.approx(pair.z_odd / vo, rel=1e-12)
    assert pair.c_self - pair.c_mutual == pytest.approx(1 / (pair.z_even * ve), rel=1e-12)
    assert pair.c_self + pair.c_mutual == pytest.approx(1 / (pair.z_odd * vo), rel=1e-12)
    assert 0 < pair.l_mutual < pair.l_self and 0 < pair.c_mutual < pair.c_self


def test_vectorised_matches_scalar():
    s = np.array([0.1e-3, 0.2e-3, 0.5e-3])
    arr = coupled_microstrip(0.3e-3, 0.18e-3, 4.3, s)
    for i, si in enumerate(s):
        one = coupled_microstrip(0.3e-3, 0.18e-3, 4.3, si)
        assert arr.kb[i] == pytest.approx(one.kb, rel=1e-14)


# ============================================================================ validity, input


def test_outside_range_warns_with_its_source():
    with pytest.warns(ValidityWarning, match=r"s/h <= 10.*Kirschning"):
        coupled_microstrip(0.3e-3, 0.18e-3, 4.3, 5e-3)
    with pytest.warns(ValidityWarning, match=r"t/b.*Cohn"):
        coupled_stripline(0.15e-3, 0.4e-3, 4.3, 0.2e-3, t=35e-6)


@pytest.mark.parametrize("field,kw", [
    ("s", {"s": 0.0}), ("w", {"w": -1e-3}), ("er", {"er": 0.5}), ("t", {"t": -1e-6}),
])
def test_bad_input_names_its_field(field, kw):
    args = {"w": 0.3e-3, "h": 0.18e-3, "er": 4.3, "s": 0.2e-3, "t": 0.0} | kw
    with pytest.raises(InputError) as info:
        coupled_microstrip(**args)
    assert info.value.field == field


# ============================================================================ crosstalk


def test_near_end_saturates_when_twice_the_delay_exceeds_the_ramp():
    pair = from_modes(60.0, 40.0, 3.3, 2.9)
    edge = 1e-9
    tr = edge * RAMP_FROM_10_90
    lengths = np.array([0.01, 0.05, 0.1, 0.3])
    x = crosstalk(pair, lengths, 3.3, edge)
    td = lengths * pair.tpd
    # derived from the matched-line backward-crosstalk result (Hall, Hall & McCall 2000, ch. 3)
    expected = pair.kb * 3.3 * np.minimum(1.0, 2 * td / tr)
    np.testing.assert_allclose(x.near_peak, expected, rtol=1e-12)
    assert x.near_peak[-1] == pytest.approx(pair.kb * 3.3, rel=1e-12)
    assert x.near_peak[0] < x.near_peak[-1]
    np.testing.assert_allclose(x.near_width, np.maximum(tr, 2 * td))


def test_far_end_grows_with_length_over_edge():
    pair = from_modes(60.0, 40.0, 3.3, 2.9)
    x1 = crosstalk(pair, 0.05, 3.3, 1e-9)
    x2 = crosstalk(pair, 0.10, 3.3, 1e-9)
    x3 = crosstalk(pair, 0.10, 3.3, 2e-9)
    # derived from Vfe = Kf dV td/tr: doubling the length doubles it, doubling tr halves it
    assert x2.far_peak == pytest.approx(2 * x1.far_peak, rel=1e-12)
    assert x3.far_peak == pytest.approx(x1.far_peak, rel=1e-12)
    assert x1.far_peak < 0  # er_eff_odd < er_eff_even: inductive coupling dominates


def test_wave_step_longer_than_the_modal_delay_is_refused():
    from pinlib.physics.coupledwave import EndLoads, coupled_waves
    pair = from_modes(60.0, 40.0, 3.3, 2.9)
    t = np.arange(0.0, 1e-9, 50e-12)  # 50 ps step on a 1 mm run (about 6 ps delay)
    with pytest.raises(InputError) as info:
        coupled_waves(pair, 1e-3, t, EndLoads((50, 50), (0, 0)), EndLoads((50, 50), (0, 0)))
    assert info.value.field == "t"
    with pytest.raises(InputError) as info:
        coupled_waves(pair, 0.1, np.arange(0.0, 1e-9, 1e-12), EndLoads((0, 50), (0, 0)),
                      EndLoads((50, 50), (0, 0)))
    assert info.value.field == "near"


@pytest.mark.parametrize("max_run", [256, 3])
def test_waves_in_runs_equal_the_step_by_step_march(monkeypatch, max_run):
    from pinlib.physics import coupledwave
    from pinlib.physics.coupledwave import EndLoads, coupled_waves_batch

    pair = from_modes(60.0, 40.0, 3.3, 2.9)
    lengths = np.array([0.05, 0.08, 0.13])
    dt = 0.05 * np.sqrt(2.9) / C0 / 4  # the shortest modal delay is 4 steps: a whole number
    t = np.arange(0.0, 8e-9, dt)
    ramp = np.clip(t / 1e-9, 0.0, 1.0) * 3.3
    near = EndLoads((25.0, 2.2e3), (0.0, 5e-12), np.vstack([ramp, np.full_like(t, 3.3)]))
    far = EndLoads((np.inf, 40.0), (4e-12, 8e-12), (0.0, 0.0))
    monkeypatch.setattr(coupledwave, "_MAX_RUN", max_run)
    runs = coupled_waves_batch(pair, lengths, t, near, far)
    assert coupledwave._run_length(np.array([4.0, 7.5])) == min(3, max_run)
    monkeypatch.setattr(coupledwave, "_run_length", lambda lag: 1)
    steps = coupled_waves_batch(pair, lengths, t, near, far)
    # derived from the method: a run is the same arithmetic as its steps, bit for bit
    assert np.array_equal(runs.near, steps.near) and np.array_equal(runs.far, steps.far)
    assert np.ptp(runs.far[:, 1]) > 1e-3  # the victim moves: the comparison has substance


def _random_pairs(rng, lags_wanted, nt, slow_source):
    """Pairs whose shorter modal delay is ``lags_wanted`` steps (the first exactly one),
    with random impedances, permittivities and terminations (a resistor of 10 ohm to
    5 kohm or none, 0-10 pF, a source ramp or wave per pair)."""
    nb = len(lags_wanted)
    ee, eo = rng.uniform(2.5, 4.5, nb), rng.uniform(2.0, 4.0, nb)
    pair = from_modes(rng.uniform(45, 90, nb), rng.uniform(25, 45, nb), ee, eo)
    speed = C0 / np.sqrt(np.minimum(ee, eo))
    dt = 1e-12
    lengths = np.asarray(lags_wanted, float) * dt * speed
    lengths[0] = dt * speed[0]                     # a delay of exactly one step
    t = np.arange(nt) * dt
    ramp_steps = rng.integers(1, 200 if slow_source else 40, nb)
    ramp = np.clip(t / (ramp_steps[:, None] * dt), 0.0, 1.0) * rng.uniform(1, 5, (nb, 1))
    wave = 0.3 * np.sin(t / (37 * dt)) * rng.uniform(0, 1, (nb, 1)) if slow_source else 0.0

    def resistors():
        r = rng.uniform(10.0, 5e3, (nb, 2))
        return np.where(rng.uniform(size=(nb, 2)) < 0.2, np.inf, r)

    near_r = resistors()
    near_r[:, 0] = rng.uniform(10.0, 80.0, nb)    # every pair driven through a resistor
    near = EndLoads(near_r, rng.uniform(0, 10e-12, (nb, 2)),
                    np.stack([ramp, np.broadcast_to(rng.uniform(0, 3.3, (nb, 1)) + wave,
                                                    (nb, nt))], axis=1))
    far = EndLoads(resistors(), rng.uniform(0, 10e-12, (nb, 2)), rng.uniform(0, 3.3, (nb, 2)))
    return pair, lengths, t, near, far


@pytest.mark.parametrize("seed, lags, nt, slow_source", [
    (1, [1.0, 1.0001, 1.37, 1.999, 2.0, 2.0003, 3.0, 4.5], 700, False),
    (2, [1.0, 2.6, 5.0, 7.99, 8.0, 12.3, 15.5, 16.0, 16.2, 23.0, 40.0, 118.7], 1500, True),
    (3, [1.0, 1.5], 40, True),                     # fewer steps than one block
    (4, [1.0], 129, False),
])
def test_waves_in_blocks_equal_the_step_by_step_march(monkeypatch, seed, lags, nt,
                                                      slow_source):
    from pinlib.physics import coupledwave
    from pinlib.physics.coupledwave import coupled_waves_batch

    rng = np.random.default_rng(seed)
    pair, lengths, t, near, far = _random_pairs(rng, lags, nt, slow_source)
    fast = coupled_waves_batch(pair, lengths, t, near, far, bitwise=False)
    monkeypatch.setattr(coupledwave, "_run_length", lambda lag: 1)
    steps = coupled_waves_batch(pair, lengths, t, near, far)
    # derived from the method: the blocks are the steps' linear map, so the same
    # voltages to rounding (1e-12 of each waveform's scale)
    for got, want in ((fast.near, steps.near), (fast.far, steps.far)):
        scale = np.abs(want).max(axis=-1, keepdims=True)
        assert np.all(np.abs(got - want) <= 1e-12 * scale)
    assert np.ptp(steps.far[:, 1], axis=-1).min() > 1e-6  # the victims move


def test_blocks_keep_the_dc_state_of_sources_that_never_move():
    from pinlib.physics.coupledwave import coupled_waves_batch

    pair = from_modes(np.array([60.0, 70.0]), np.array([40.0, 35.0]), np.array([3.3, 3.0]),
                      np.array([2.9, 2.7]))
    lengths = np.array([1.0, 5.5]) * 1e-12 * C0 / np.sqrt(2.9)
    t = np.arange(300) * 1e-12
    near = EndLoads((25.0, 2.2e3), (0.0, 5e-12), (3.3, 1.0))
    far = EndLoads((np.inf, 40.0), (4e-12, 8e-12), (0.0, 2.0))
    fast = coupled_waves_batch(pair, lengths, t, near, far, bitwise=False)
    steps = coupled_waves_batch(pair, lengths, t, near, far)
    # derived from the method: a DC start with constant sources stays where it is
    for got, want in ((fast.near, steps.near), (fast.far, steps.far)):
        assert np.ptp(want, axis=-1).max() < 1e-12
        assert np.abs(got - want).max() < 1e-12


def test_blocks_take_only_the_short_delays_of_pairs_not_bitwise():
    from pinlib.physics import coupledwave

    lag = np.array([[1.0, 1.2], [3.5, 3.7], [15.9, 16.0], [16.1, 17.0], [40.0, 41.0]])
    groups = coupledwave._groups(lag, bitwise=False)
    in_blocks = sorted(int(i) for rows, how in groups if how == "blocks" for i in rows)
    closed = [list(rows) for rows, how in groups if how == "closed"]
    assert in_blocks == [0, 1, 2] and closed == [[3, 4]]
    assert coupledwave._groups(lag, bitwise=True) == [(slice(None), "steps")]
    groups = coupledwave._groups(lag, bitwise=[True, False, False, True, False])
    assert [(list(rows), how) for rows, how in groups] == [
        ([0, 3], "steps"), ([1], "blocks"), ([2], "blocks"), ([4], "closed")]


def test_a_bitwise_pair_is_its_step_by_step_march_beside_faster_ones():
    from pinlib.physics.coupledwave import coupled_waves_batch

    rng = np.random.default_rng(5)
    pair, lengths, t, near, far = _random_pairs(rng, [1.0, 3.2, 9.5, 30.0], 300, True)
    alone = coupled_waves_batch(pair, lengths, t, near, far)
    mixed = coupled_waves_batch(pair, lengths, t, near, far,
                                bitwise=[False, True, False, True])
    # derived from the method: each pair's arithmetic is its own, whatever the batch
    for got, want in ((mixed.near, alone.near), (mixed.far, alone.far)):
        assert np.array_equal(got[[1, 3]], want[[1, 3]])
        assert np.all(np.abs(got - want) <= 1e-12 * np.abs(want).max(axis=-1, keepdims=True))
