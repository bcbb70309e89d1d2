"""Tests of pinlib.physics.waveform.tree: lattice-diagram limits, the chain, the batch.

The ngspice comparison over the route case set is in tests/test_tree_spice.py.
"""

from __future__ import annotations

import numpy as np
import pytest

from pinlib.core.errors import InputError
from pinlib.physics import waveform as wf

DT = 5e-12  # solver step [s]
VDD = 3.3
T_RAMP = 1e-9  # 0-100 % source ramp [s]


def grid(t_stop: float, dt: float = DT) -> np.ndarray:
    return np.arange(int(round(t_stop / dt)) + 1) * dt


def at(t_s: float) -> int:
    return int(round(t_s / DT))


def test_matched_source_into_a_two_branch_star():
    # derived from the lattice diagram: a matched source launches 1/2; the junction of one
    # 50 Ω line into two (25 Ω) transmits 2 * 25 / (25 + 50) = 2/3 of it (1/3 V), which each
    # open end doubles (2/3 V) one delay later
    td = 1e-9
    t = grid(2.9e-9)
    w = wf.tree_response(t, 1.0, 0.0, 50.0,
                         [(0, 1, 50.0, td), (1, 2, 50.0, td), (1, 3, 50.0, td)], [0.0] * 4)
    assert w.v.shape == (4, t.size)
    assert w.v[0, at(0.5e-9)] == pytest.approx(0.5, rel=1e-12)
    assert w.v[1, at(1.5e-9)] == pytest.approx(1 / 3, rel=1e-12)
    assert w.v[2, at(2.5e-9)] == pytest.approx(2 / 3, rel=1e-12)
    assert np.array_equal(w.v[2], w.v[3])
    # the junction reflects (25 - 50) / 75 = -1/3 of 1/2 back to the source: 1/2 - 1/6
    assert w.v[0, at(2.5e-9)] == pytest.approx(1 / 3, rel=1e-12)


def test_source_in_the_middle_of_a_star():
    # derived: a source of 25 Ω at the junction of two open 50 Ω lines (25 Ω) launches 1/2
    # into both, and each open end doubles it to 1
    t = grid(2.5e-9)
    w = wf.tree_response(t, 1.0, 0.0, 25.0, [(0, 1, 50.0, 1e-9), (0, 2, 50.0, 1e-9)],
                         [0.0, 0.0, 0.0])
    assert w.v[:, at(1.25e-9)] == pytest.approx([0.5, 1.0, 1.0], rel=1e-12)


def test_chain_driven_from_its_far_end_is_the_reversed_chain():
    # CIPO: the last node of a chain drives it; the same as the reversed chain from node 0
    t = grid(25e-9)
    sections = [(50.0, 0.2e-9), (65.0, 0.7e-9), (50.0, 0.4e-9)]
    caps = [4e-12, 2e-12, 3e-12, 5e-12]
    tree = wf.tree_response(t, VDD, T_RAMP, 25.0,
                            [(k, k + 1, z, td) for k, (z, td) in enumerate(sections)],
                            caps, source=3)
    rev = wf.tree_response(t, VDD, T_RAMP, 25.0,
                           [(k, k + 1, z, td) for k, (z, td) in enumerate(sections[::-1])],
                           caps[::-1])
    assert np.allclose(tree.v, rev.v[::-1], rtol=0, atol=1e-12)
    chain = wf.distributed_response(t, VDD, T_RAMP, 25.0, sections[::-1], caps[0])
    # the chain places only its far-end load: the tree with the other caps at 0
    bare = wf.tree_response(t, VDD, T_RAMP, 25.0,
                            [(k, k + 1, z, td) for k, (z, td) in enumerate(sections)],
                            [caps[0], 0.0, 0.0, 0.0], source=3)
    assert np.allclose(bare.v[0], chain.v, rtol=0, atol=1e-12)


def test_node_numbering_does_not_matter():
    # the same tree with its nodes renumbered and its sections listed in another order
    t = grid(20e-9)
    sections = [(0, 1, 50.0, 0.5e-9), (1, 2, 60.0, 0.3e-9), (1, 3, 45.0, 0.8e-9)]
    caps = [0.0, 3e-12, 5e-12, 2e-12]
    w = wf.tree_response(t, VDD, T_RAMP, 30.0, sections, caps)
    perm = [2, 0, 3, 1]  # old node i is new node perm[i]
    renamed = [(perm[b], perm[a], z, td) for a, b, z, td in sections[::-1]]
    caps2 = [0.0] * 4
    for i, c in enumerate(caps):
        caps2[perm[i]] = c
    w2 = wf.tree_response(t, VDD, T_RAMP, 30.0, renamed, caps2, source=perm[0])
    assert np.allclose(w2.v[perm], w.v, rtol=0, atol=1e-12)


def test_zero_delay_section_joins_its_nodes():
    t = grid(20e-9)
    joined = wf.tree_response(t, VDD, T_RAMP, 30.0,
                              [(0, 1, 50.0, 0.5e-9), (1, 2, 50.0, 0.0), (1, 3, 70.0, 1e-9)],
                              [0.0, 2e-12, 3e-12, 4e-12])
    merged = wf.tree_response(t, VDD, T_RAMP, 30.0, [(0, 1, 50.0, 0.5e-9), (1, 2, 70.0, 1e-9)],
                              [0.0, 5e-12, 4e-12])
    assert np.array_equal(joined.v[1], joined.v[2])
    assert np.allclose(joined.v[[0, 1, 3]], merged.v, rtol=0, atol=1e-12)


def test_settles_at_vdd_and_fall_is_vdd_minus_rise():
    # a lossless tree loses energy only in the source resistance, through a driver at the
    # end of a stub: its slowest mode needs hundreds of ns (a 20 ps step, 30,000 steps)
    t = grid(600e-9, 20e-12)
    args = (t, VDD, T_RAMP, 40.0, [(0, 1, 50.0, 0.5e-9), (1, 2, 50.0, 0.2e-9),
                                   (1, 3, 50.0, 0.6e-9), (3, 4, 60.0, 0.3e-9)],
            [0.0, 3e-12, 4e-12, 2e-12, 5e-12])
    rise = wf.tree_response(*args, source=2)
    fall = wf.tree_response(*args, source=2, edge="fall")
    assert np.allclose(fall.v, VDD - rise.v, rtol=0, atol=1e-12)
    # derived: a lossless network with capacitive loads settles at the source's level
    assert rise.v[:, -1] == pytest.approx([VDD] * 5, abs=1e-3)


def test_batch_matches_single_cases():
    t = grid(15e-9)
    rs = np.array([[20.0, 33.0, 0.0], [70.0, 100.0, 45.0]])
    z_stub = np.array([40.0, 60.0, 80.0])
    c_tap = np.array([[1e-12], [6e-12]])
    sections = [(0, 1, 50.0, 0.4e-9), (1, 2, z_stub, 0.15e-9), (1, 3, 50.0, 0.9e-9)]
    batch = wf.tree_response(t, VDD, T_RAMP, rs, sections, [0.0, 0.0, c_tap, 4e-12])
    assert batch.v.shape == (2, 3, 4, t.size)
    for i in range(2):
        for j in range(3):
            one = wf.tree_response(t, VDD, T_RAMP, rs[i, j],
                                   [(0, 1, 50.0, 0.4e-9), (1, 2, z_stub[j], 0.15e-9),
                                    (1, 3, 50.0, 0.9e-9)],
                                   [0.0, 0.0, float(c_tap[i, 0]), 4e-12])
            assert np.allclose(batch.v[i, j], one.v, rtol=0, atol=1e-13)


@pytest.mark.parametrize("r_source", [0.0, 30.0])
def test_one_case_equals_the_batched_march(r_source):
    # derived: a single case runs through one matrix product per node and run, a batch
    # through the doubling sum; the same equations, so equal to rounding.  Delays off
    # the grid (interpolated) and a stub of 3.4 steps (short runs) included.
    t = grid(12e-9)
    sections = [(0, 1, 50.0, 0.613e-9), (1, 2, 65.0, 0.017e-9), (1, 3, 45.0, 1.27e-9),
                (3, 4, 50.0, 0.33e-9)]
    caps = [6e-12, 0.0, 4e-12, 2e-12, 4e-12]
    one = wf.tree_response(t, VDD, T_RAMP, r_source, sections, caps, source=3)
    two = wf.tree_response(t, VDD, T_RAMP, np.full(2, r_source), sections, caps, source=3)
    assert np.allclose(two.v[0], one.v, rtol=0, atol=1e-13)
    assert np.allclose(two.v[1], one.v, rtol=0, atol=1e-13)



def test_one_case_in_a_ring_buffer_equals_the_whole_record(monkeypatch):
    # derived: a long record of many ports keeps only one longest delay plus one run of
    # launched waves; the same values are read back, so the voltages are equal bit for
    # bit (a 32-branch star once left this path for the batched march, 2.4x slower)
    from pinlib.physics.waveform import march

    t = grid(12e-9)
    sections = [(0, 1, 50.0, 0.613e-9), (1, 2, 65.0, 0.21e-9), (1, 3, 45.0, 1.27e-9),
                (3, 4, 50.0, 0.33e-9)]
    caps = [6e-12, 0.0, 4e-12, 2e-12, 4e-12]
    whole = wf.tree_response(t, VDD, T_RAMP, 30.0, sections, caps, source=3)
    calls = []
    single = march._march_single
    monkeypatch.setattr(march, "_march_single", lambda *a: calls.append(1) or single(*a))
    monkeypatch.setattr(march, "_MAX_BUFFER_ELEMENTS", 64)
    ring = wf.tree_response(t, VDD, T_RAMP, 30.0, sections, caps, source=3)
    assert calls  # still the one-case path, now on a ring
    np.testing.assert_array_equal(ring.v, whole.v)

@pytest.mark.parametrize("edge", ["rise", "fall"])
def test_a_batch_in_a_sliding_window_equals_the_whole_record(monkeypatch, edge):
    # derived: a long batch keeps only a window of launched waves (one longest delay
    # back, moved to the front when full); the same values are read back, so the
    # voltages are equal bit for bit.  Delays off the grid and a batch of three.
    from pinlib.physics.waveform import march

    t = grid(12e-9)
    sections = [(0, 1, 50.0, 0.613e-9), (1, 2, 65.0, 0.21e-9), (1, 3, 45.0, 1.27e-9),
                (3, 4, 50.0, 0.33e-9)]
    caps = [6e-12, 0.0, np.array([2e-12, 4e-12, 6e-12]), 2e-12, 4e-12]
    whole = wf.tree_response(t, VDD, T_RAMP, 30.0, sections, caps, source=3, edge=edge)
    monkeypatch.setattr(march, "_MAX_BUFFER_ELEMENTS", 64)
    window = wf.tree_response(t, VDD, T_RAMP, 30.0, sections, caps, source=3, edge=edge)
    np.testing.assert_array_equal(window.v, whole.v)


def test_a_batch_sharing_one_source_equals_one_source_per_case():
    # derived: a batch whose cases share vdd and the ramp reads the source from one
    # row; the same samples as one row per case, so the same voltages bit for bit
    t = grid(6e-9)
    sections = [(0, 1, 50.0, 0.4e-9), (1, 2, 60.0, 0.25e-9), (1, 3, 45.0, 0.9e-9)]
    rs = np.array([0.0, 20.0, 45.0])
    shared = wf.tree_response(t, VDD, T_RAMP, rs, sections, [5e-12, 0.0, 3e-12, 4e-12])
    each = wf.tree_response(t, np.full(3, VDD), np.full(3, T_RAMP), rs, sections,
                            [5e-12, 0.0, 3e-12, 4e-12])
    np.testing.assert_array_equal(shared.v, each.v)


def test_a_single_node():
    # derived: no line, the source behind r_source into the node's capacitance (lumped)
    t = grid(10e-9)
    w = wf.tree_response(t, VDD, T_RAMP, 30.0, [], [5e-12])
    lumped = wf.lumped_response(t, VDD, T_RAMP, 30.0, 5e-12)
    assert np.allclose(w.v[0], lumped.v, rtol=0, atol=1e-12)


@pytest.mark.parametrize(("sections", "caps", "kwargs", "field"), [
    ([(0, 1, 50.0, 1e-9), (1, 2, 50.0, 1e-9), (2, 0, 50.0, 1e-9)], [0.0] * 3, {},
     r"sections\[2\]"),
    ([(0, 1, 50.0, 1e-9), (1, 1, 50.0, 1e-9)], [0.0] * 3, {}, r"sections\[1\]"),
    ([(0, 1, 50.0, 1e-9)], [0.0] * 3, {}, "sections"),
    ([(0, 1, 50.0)], [0.0] * 2, {}, r"sections\[0\]"),
    ([(0, 5, 50.0, 1e-9)], [0.0] * 2, {}, r"sections\[0\]\.b"),
    ([(0, 1.5, 50.0, 1e-9)], [0.0] * 2, {}, r"sections\[0\]\.b"),
    ([(0, 1, -50.0, 1e-9)], [0.0] * 2, {}, r"sections\[0\]\.z0"),
    ([(0, 1, 50.0, 1e-9)], [0.0] * 2, {"source": 2}, "source"),
    ([(0, 1, 50.0, 1e-9)], [], {}, "node_caps"),
    ([(0, 1, 50.0, 1e-9)], [0.0, -1e-12], {}, r"node_caps\[1\]"),
    ([(0, 1, 50.0, 1e-9)], [0.0] * 2, {"edge": "up"}, "edge"),
])
def test_input_errors_name_the_field(sections, caps, kwargs, field):
    with pytest.raises(InputError, match=field):
        wf.tree_response(grid(5e-9), 1.0, 0.0, 50.0, sections, caps, **kwargs)


def test_choose_step_divides_the_shortest_delay():
    # derived: 20 steps over the shortest of ramp (1 ns), delays (0.35 ns) and tau
    dt = wf.choose_step([0.35e-9, 1.3e-9, 0.0], 1e-9)
    assert dt == pytest.approx(0.35e-9 / 20, rel=1e-12)
    dt = wf.choose_step([0.35e-9], 1e-9, tau=0.1e-9)
    assert 0.35e-9 / dt == pytest.approx(round(0.35e-9 / dt), abs=1e-9)
    assert dt <= 0.1e-9 / 20
    assert wf.choose_step([], 2e-9) == pytest.approx(1e-10, rel=1e-12)
    assert wf.choose_step([], 0.0, tau=4e-9) == pytest.approx(2e-10, rel=1e-12)


@pytest.mark.parametrize(("kwargs", "names", "shapes"), [
    ({"vdd": np.ones(3), "node_caps": [0.0, np.zeros(4)]}, ("vdd", "node_caps[1]"),
     ("(3,)", "(4,)")),
    ({"r_source": np.full((2, 3), 50.0), "sections": [(0, 1, np.full(2, 50.0), 1e-9)]},
     ("r_source", "sections[0].z0"), ("(2, 3)", "(2,)")),
])
def test_a_batch_that_does_not_broadcast_names_its_arguments(kwargs, names, shapes):
    args = {"vdd": 1.0, "t_ramp": 0.0, "r_source": 50.0,
            "sections": [(0, 1, 50.0, 1e-9)], "node_caps": [0.0, 0.0], **kwargs}
    with pytest.raises(InputError) as info:
        wf.tree_response(grid(5e-9), args["vdd"], args["t_ramp"], args["r_source"],
                         args["sections"], args["node_caps"])
    for text in (*names, *shapes):
        assert text in info.value.message
