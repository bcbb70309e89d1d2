"""A chain's first record (pushline.waves): the first samples of the longer record, kept
only when the line is at rest by its end, and every figure the longer record's."""

from __future__ import annotations

import math

import numpy as np
import pytest

from pinlib.engines.pushline import waves
from pinlib.engines.pushline.rules import _AT_REST
from pinlib.engines.pushline.sections import Stretch
from pinlib.physics import waveform as wf

# Invented lines and drivers (common practice, no source): a 28 cm and an 8 cm trace of
# about 64 and 50 ohms, driven through less than, about, and more than their impedance,
# with ramps shorter and longer than the delay and loads of 2 to 30 pF.
LONG = [Stretch(length=0.28, z0=64.1, td=1.59e-9, c=2.48e-11, label="long")]
SHORT = [Stretch(length=0.08, z0=50.0, td=5.6e-10, c=1.12e-11, label="short")]
CASES = [(line, r, ramp, c)
         for line in (LONG, SHORT)
         for r in (8.0, 25.0, 48.0, 64.0, 120.0)
         for ramp in (2e-10, 1.2e-9, 3e-9)
         for c in (2e-12, 1e-11, 3e-11)]


def _whole(line, r, ramp, c):
    """The grid and unit response of the longer record (the engine's before the first
    record), solved here directly."""
    g = waves.edge_grid(line, r, ramp, c, True)
    return g, wf.distributed_response(g.t, 1.0, ramp, r, g.sections, g.c_lumped_far).v


def _reads(t, unit, v_from, v_to):
    """Every figure the engine reads off one edge: edge time, overshoot, undershoot,
    crossings of levels across the swing and re-crossings of a receiver's thresholds."""
    v = v_from + (v_to - v_from) * unit
    edge = "rise" if v_to > v_from else "fall"
    lo, hi = min(v_from, v_to), max(v_from, v_to)
    levels = [lo + f * (hi - lo) for f in (0.1, 0.3, 0.5, 0.7, 0.9)]
    return (waves._figures(t, v, v_from, v_to),
            [float(wf.threshold_delay(t, v, x, edge=edge)) for x in levels],
            wf.recrossings(t, v, levels[1], levels[3], edge=edge))


@pytest.mark.parametrize("case", CASES,
                         ids=lambda c: f"{c[0][0].label}-{c[1]:g}-{c[2]:g}-{c[3]:g}")
def test_every_figure_is_the_longer_records(case):
    g, whole = _whole(*case)
    t, unit, settled = waves._unit_edge(*case, True)
    assert settled
    assert np.array_equal(unit, whole[:unit.size])  # its first samples, to the last bit
    assert np.array_equal(t, g.t[:t.size])
    if unit.size < whole.size:  # the first record, at rest
        assert unit.size == g.n_first
        assert np.max(np.abs(whole[g.n_first - g.rest:] - 1.0)) <= 100 * _AT_REST
    else:  # not at rest: the longer record, as before
        assert unit.size == g.t.size
    for v_from, v_to in ((0.0, 3.3), (3.3, 0.0), (0.0, 1.8), (1.8, 0.0)):
        assert _reads(t, unit, v_from, v_to) == _reads(g.t, whole, v_from, v_to)


def test_lines_driven_through_about_their_impedance_end_at_their_first_record():
    # a first record only where the source reflects 0.2 or less (48 and 64 ohms into
    # 64 or into 50); every one of those is at rest by its end
    firsts = 0
    for case in CASES:
        line, r = case[0], case[1]
        g = waves.edge_grid(*case, True)
        z0 = line[0].z0
        if g.n_first < g.t.size:
            firsts += 1
            assert abs(r - z0) / (r + z0) <= 0.2
            assert waves._unit_edge(*case, True)[1].size == g.n_first
        elif abs(r - z0) / (r + z0) <= 0.2:
            # its first record would be no shorter, or no length near it gives the
            # solver the whole grid's step to the last bit
            t_first = waves._first_length(g.sections, r, case[2], g.c_lumped_far)
            n = math.ceil(t_first / g.t[1]) + 1
            assert t_first >= g.t[-1] - 64 * g.t[1] or waves._same_step(g.t, n) is None
    assert firsts == 26  # of the 36 cases that reflect 0.2 or less


def test_the_first_record_is_a_prefix_of_the_grid():
    g = waves.edge_grid(LONG, 64.1, 5e-10, 1e-11, True)
    assert 0 < g.rest < g.n_first < g.t.size
    # matched: the ramp, one round trip, 33 time constants of the far end against the
    # line, and the two round trips that must be at rest
    t_first = 5e-10 + 2 * 1.59e-9 + 33 * 64.1 * 1e-11 + 4 * 1.59e-9
    # (or a few samples more: the first length whose grid gives the solver the same step)
    assert g.t[g.n_first - 1] >= t_first > g.t[g.n_first - 65]
    assert g.rest * g.t[1] == pytest.approx(4 * 1.59e-9, rel=0.02)
    # 25 ohms into 64 reflects 0.44: it rings for longer and has no first record
    ringing = waves.edge_grid(LONG, 25.0, 5e-10, 1e-11, True)
    assert ringing.n_first == ringing.t.size and ringing.rest == 0
    lengthened = waves.edge_grid(LONG, 64.1, 5e-10, 1e-11, True, 3 * g.t_end)
    assert lengthened.n_first == lengthened.t.size and lengthened.rest == 0
    lumped = waves.edge_grid(LONG, 64.1, 5e-10, 1e-11, False)
    assert lumped.n_first == lumped.t.size


def test_at_rest_reads_only_the_last_samples():
    unit = np.ones(100)
    assert waves.at_rest(unit, 10)
    unit[89] = 1.0 + 1e-9  # before the window
    assert waves.at_rest(unit, 10)
    unit[95] = 1.0 - 2 * _AT_REST
    assert not waves.at_rest(unit, 10)
    assert not waves.at_rest(np.ones(5), 10)  # a record shorter than its window


def test_solve_edges_keeps_the_first_records():
    from pinlib.engines import memo
    reqs = [(64.0, 5e-10, 1e-11, True), (8.0, 5e-10, 1e-11, True), (55.0, 3e-9, 2e-11, True)]
    with memo.run_scope():
        waves.solve_edges(LONG, reqs)
        kept = [memo.held(waves.unit_edge_key(LONG, *r)) for r in reqs]
    for r, got in zip(reqs, kept, strict=True):
        _, unit, _ = waves._unit_edge(LONG, *r)
        assert got is not None and np.array_equal(got[1], unit)  # first record or whole


def test_sections_of_one_impedance_are_solved_as_one_line():
    # from memory (transmission-line theory): where two lossless sections of one Z0 meet
    # with no pin between them the reflection coefficient (Z2 - Z1) / (Z2 + Z1) is 0,
    # so they are one line of the summed delay.  The solver's own answer for the two
    # agrees with the joined line's,
    # and edge_grid hands the solver the joined one (32 sections of 1 cm cost as one).
    t = np.arange(20001) * 1e-12
    two = wf.distributed_response(t, 1.0, 1e-9, 20.0, [(50.0, 0.3e-9), (50.0, 0.5e-9)],
                                  5e-12).v
    one = wf.distributed_response(t, 1.0, 1e-9, 20.0, [(50.0, 0.8e-9)], 5e-12).v
    assert np.max(np.abs(two - one)) < 1e-9
    g = Stretch(0.01, 50.0, 60e-12, 1.2e-12, "g")
    h = Stretch(0.01, 65.0, 60e-12, 0.92e-12, "h")
    grid = waves.edge_grid([g, g, h, g, g], 20.0, 1e-9, 5e-12, True)
    assert grid.sections == [(50.0, 120e-12), (65.0, 60e-12), (50.0, 120e-12)]
