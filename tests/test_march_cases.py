"""Single cases marched together (march_cases, distributed_responses, the push-pull
engine's solve_edges) give each record of the single solve to the last bit."""

from __future__ import annotations

import numpy as np
import pytest

from pinlib.engines import memo
from pinlib.engines.pushline import waves
from pinlib.engines.pushline.sections import Stretch
from pinlib.physics.waveform import distributed_response, distributed_responses, march
from pinlib.physics.waveform.tree import _tree, trees


def _grid(n, dt=1e-11):
    return np.arange(n) * dt


# Each case: (t, vdd, t_ramp, r_source, sections, c_load).  The values are invented to
# cover the solver's paths (common practice, no source): one and two sections, an ideal
# source (r_source 0), a delay that is not a whole number of steps, records of
# different lengths, and a case of another shape that is marched alone.
CASES = [
    (_grid(2001), 1.0, 2.7e-9, 40.36, [(64.1, 2e-10)], 6e-12),
    (_grid(1957), 1.0, 2.8e-9, 34.58, [(64.1, 2e-10)], 6e-12),
    (_grid(2140), 1.0, 2.7e-9, 40.36, [(64.1, 2e-10)], 9e-12),
    (_grid(1500), 1.0, 1e-9, 0.0, [(50.0, 2e-10)], 3e-12),
    (_grid(1700), 1.0, 1e-9, 0.0, [(55.0, 2e-10)], 1e-12),
    (_grid(1800), 1.0, 1e-9, 25.0, [(50.0, 2.05e-10), (70.0, 3.1e-10)], 2e-12),
    (_grid(1900), 1.0, 1e-9, 30.0, [(45.0, 2.05e-10), (60.0, 3.1e-10)], 4e-12),
    (_grid(900), 1.0, 5e-10, 20.0, [(50.0, 5e-11)], 1e-12),
]


def test_distributed_responses_are_the_single_solves_bit_for_bit(monkeypatch):
    stacks = []
    real = march._march_stack
    monkeypatch.setattr(march, "_march_stack",
                        lambda cases, block: stacks.append(len(cases)) or real(cases, block))
    got = distributed_responses(CASES)
    assert sorted(stacks) == [2, 2, 3]  # the three shapes marched together; one alone
    for case, w in zip(CASES, got, strict=True):
        one = distributed_response(*case)
        assert np.array_equal(w.t, one.t)
        assert w.v.shape == one.v.shape
        assert np.array_equal(w.v, one.v)  # derived from the same arithmetic: exact


def test_trees_of_a_fall_and_a_star_are_the_single_solves():
    star = [(0, 1, 50.0, 2e-10), (0, 2, 60.0, 2e-10)]
    cases = [(_grid(1200), 3.3, 1e-9, r, star, [0.0, 2e-12, c], 0, edge, 3, None)
             for r, c, edge in ((20.0, 1e-12, "fall"), (35.0, 4e-12, "fall"),
                                (35.0, 4e-12, "rise"))]
    for args, w in zip(cases, trees(cases), strict=True):
        one = _tree(*args[:-2], stacklevel=3)
        assert np.array_equal(w.v, one.v)


def test_solve_edges_keeps_what_simulate_edge_would_solve():
    line = [Stretch(length=0.03, z0=64.1, td=2e-10, c=3e-12, label="trace")]
    reqs = [(40.36, 2.7e-9, 6e-12, True), (34.58, 2.8e-9, 6e-12, True)]
    with memo.run_scope():
        waves.solve_edges(line, reqs)
        kept = [memo.held(waves.unit_edge_key(line, *r)) for r in reqs]
    assert all(k is not None for k in kept)
    for r, (t, unit, settled) in zip(reqs, kept, strict=True):
        t1, unit1, settled1 = waves._unit_edge(line, *r)
        assert np.array_equal(t, t1) and np.array_equal(unit, unit1)
        assert settled is settled1 is True


@pytest.mark.parametrize("reqs", [
    [(40.36, 2.7e-9, 6e-12, True)],                                 # one edge: alone
    [(40.36, 2.7e-9, 6e-12, False), (34.58, 2.8e-9, 6e-12, False)],  # lumped
])
def test_solve_edges_leaves_to_the_engine_what_it_does_not_march_together(reqs):
    line = [Stretch(length=0.03, z0=64.1, td=2e-10, c=3e-12, label="trace")]
    with memo.run_scope():
        waves.solve_edges(line, reqs)
        assert not any(memo.known(waves.unit_edge_key(line, *r)) for r in reqs)
    waves.solve_edges(line, reqs * 2)  # outside a run: nothing to keep, no error
