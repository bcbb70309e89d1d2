"""Tests of pinlib.engines.crosstalk: the victim's noise, its checks, the minimum spacing."""

from __future__ import annotations

import warnings

import pytest

from pinlib.core.errors import InputError, ValidityWarning
from pinlib.engines.crosstalk import (
    Victim,
    coupling_checks,
    minimum_spacing,
    victim_noise,
)
from pinlib.model.design import Aggressor
from pinlib.physics.coupled import coupled_microstrip

H = 0.18e-3
VDD = 3.3
T_SP = 50e-9  # published: UM10204 rev. 6, table 9, tSP of Fast-mode (and Fast-mode Plus)
# published: UM10204 rev. 6, table 9: VIL 0.3 VDD, VIH 0.7 VDD (a receiver with no part data)
VIL, VIH = 0.3 * VDD, 0.7 * VDD
# common practice, no source: a fast CMOS output into a 30 cm run beside an I2C line
AGG = Aggressor(swing=VDD, edge_time=0.5e-9, r_source=20.0, c_far=5e-12)
LENGTH = 0.3


def _victim(signal="scl", t_sp=T_SP):
    ends = ("near", "far")
    return Victim(vdd=VDD, r_pullup=2.2e3, r_sink=25.0, c={e: 5e-12 for e in ends},
                  vil={e: VIL for e in ends}, vih={e: VIH for e in ends}, signal=signal,
                  t_sp=t_sp, source_levels="UM10204 rev. 6, table 9",
                  source_t_sp="UM10204 rev. 6, table 9" if t_sp else "")


def _pair(s_over_h):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        return coupled_microstrip(1.8 * H, H, 4.3, s_over_h * H)


def _by(checks, id_, end, held):
    return [c for c in checks if c.id == id_ and c.details == {"end": end, "held": held}]


def test_noise_grows_as_the_lines_close_in():
    near = victim_noise(_pair(0.3), LENGTH, AGG, _victim())
    apart = victim_noise(_pair(3.0), LENGTH, AGG, _victim())
    # derived from Kb and Kf falling with spacing (pinlib.physics.coupled)
    for key in near:
        if key[0] == "low":
            assert near[key].level > apart[key].level
        else:
            assert near[key].level < apart[key].level


def test_standard_mode_crossing_fails_on_scl_and_warns_on_sda():
    vic = _victim(t_sp=None)  # Standard-mode inputs need not filter (UM10204 table 9)
    noise = victim_noise(_pair(0.2), LENGTH, AGG, vic)
    crossing = [k for k, n in noise.items() if n.beyond > 0]
    assert crossing  # strong coupling over 30 cm crosses a threshold somewhere
    scl = coupling_checks(noise, vic, subject="b.scl")
    held, end = crossing[0]
    level_id = "crosstalk-low" if held == "low" else "crosstalk-high"
    assert _by(scl, level_id, end, held)[0].status == "fail"
    glitch = _by(scl, "crosstalk-glitch", end, held)[0]
    assert glitch.status == "fail" and glitch.margin is None and glitch.limit is None
    sda = coupling_checks(noise, _victim("sda", None), subject="b.sda")
    assert _by(sda, "crosstalk-glitch", end, held)[0].status == "warn"
    assert _by(sda, level_id, end, held)[0].status == "warn"


def test_fast_mode_filter_removes_short_glitches():
    vic = _victim()
    noise = victim_noise(_pair(0.2), LENGTH, AGG, vic)
    checks = coupling_checks(noise, vic, subject="b.scl")
    for (held, end), n in noise.items():
        if 0 < n.beyond < T_SP:
            level_id = "crosstalk-low" if held == "low" else "crosstalk-high"
            assert _by(checks, level_id, end, held)[0].status == "warn"
            assert _by(checks, "crosstalk-glitch", end, held)[0].status == "pass"
    assert all(c.status != "fail" for c in checks)


def test_wide_spacing_passes_with_no_glitch_check():
    vic = _victim(t_sp=None)
    checks = coupling_checks(victim_noise(_pair(6.0), LENGTH, AGG, vic), vic, subject="b.scl")
    assert {c.id for c in checks} == {"crosstalk-low", "crosstalk-high"}
    assert all(c.status == "pass" for c in checks)
    assert all(c.source == "UM10204 rev. 6, table 9" for c in checks)


def test_minimum_spacing_is_the_edge_of_passing():
    vic = _victim(t_sp=None)

    def make(s):
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", ValidityWarning)
            return coupled_microstrip(1.8 * H, H, 4.3, s)

    s_min = minimum_spacing(make, LENGTH, AGG, vic, 0.02e-3, 2e-3, rel=0.02)
    assert s_min is not None and 0.02e-3 < s_min < 2e-3

    def fails(s):
        checks = coupling_checks(victim_noise(make(s), LENGTH, AGG, vic), vic, subject="v")
        return any(c.status == "fail" for c in checks)

    # derived from the bisection: s_min passes, 3 % closer fails
    assert not fails(s_min)
    assert fails(s_min / 1.03)
    # no spacing in range helps a run that fails even at the far bound
    assert minimum_spacing(make, LENGTH, AGG, vic, 0.02e-3, 0.03e-3) is None


def test_bad_victim_names_its_field():
    vic = Victim(VDD, 0.0, 25.0, {}, {"far": VIL}, {"far": VIH})
    with pytest.raises(InputError) as info:
        victim_noise(_pair(1.0), LENGTH, AGG, vic)
    assert info.value.field == "r_pullup"


def test_a_held_level_already_beyond_the_threshold_is_named():
    # common practice, no source: a sink toward 1.2 V (a repeater's offset behind a
    # translator) holds the line above VIL 0.99 V before any noise
    vic = Victim(vdd=VDD, r_pullup=2.2e3, r_sink=25.0, c={"near": 5e-12, "far": 5e-12},
                 vil={"near": VIL, "far": VIL}, vih={"near": VIH, "far": VIH},
                 t_sp=T_SP, v_sink=1.2)
    assert vic.held_level("low") > VIL
    noise = victim_noise(_pair(3.0), LENGTH, AGG, vic)
    low = _by(coupling_checks(noise, vic, subject="b.scl"), "crosstalk-low", "near", "low")[0]
    assert low.status == "fail" and "held level alone" in low.message
    ok = _by(coupling_checks(noise, _victim(), subject="b.scl"), "crosstalk-low", "near",
             "low")[0]
    assert "held level alone" not in ok.message
