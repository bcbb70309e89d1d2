"""The state-space block march (pinlib.physics.waveform.blockmarch) against the run
march it stands in for, and when it is chosen."""

from __future__ import annotations

import numpy as np
import pytest

from pinlib.physics.waveform import march as M
from pinlib.physics.waveform.blockmarch import chosen_block, march_blocked


def _random_tree(rng, forced):
    # invented test input: a random tree of lossless lines, delays of one step to a
    # hundred, whole or not, capacitance at most nodes, a source behind a resistance
    # (or an ideal one)
    n_nodes = int(rng.integers(2, 7))
    lines = []
    for b in range(1, n_nodes):
        d = float(rng.choice([1, 2, 3, 5, 7.5, 16, 20.3, 40, 100.7]))
        d += float(rng.random()) if rng.random() < 0.5 else 0.0
        lines.append((int(rng.integers(0, b)), b, np.array([float(rng.uniform(30, 120))]),
                      d))
    caps = rng.uniform(0, 5e-12, (n_nodes, 1)) * (rng.random((n_nodes, 1)) < 0.8)
    r = np.array([0.0 if forced else float(rng.uniform(5, 200))])
    return M.network(n_nodes, lines, caps, r, 0, 5e-12)


@pytest.mark.parametrize("block", [5, 16, 32])
def test_blocks_march_as_the_runs_do(block):
    # derived: the same discrete equations carried through a block as one linear map;
    # only the order of the sums differs, so the records agree to rounding
    rng = np.random.default_rng(block)
    for trial in range(25):
        net = _random_tree(rng, forced=trial % 6 == 0)
        n_t = int(rng.integers(50, 2000))
        ramp = np.clip(np.arange(n_t) * 5e-12 / 1e-10, 0.0, 1.0)[:, None]
        ref = M._march_single(net, ramp, n_t)
        got = march_blocked(net, ramp, n_t, block)
        assert got.shape == ref.shape
        assert np.max(np.abs(got - ref)) < 1e-12, trial


def _route(delays, n_t):
    # invented test input: a trunk with stubs, delays in steps as the route solver's
    # grid gives them (a 1 cm stub, 2 cm and 13 cm of trace, 30 m of cable)
    lines = [(0, 1, np.array([50.0]), delays[0]), (1, 2, np.array([50.0]), delays[1]),
             (1, 3, np.array([50.0]), delays[2]), (3, 4, np.array([60.0]), delays[3])]
    caps = np.full((5, 1), 5e-12)
    return M.network(5, lines, caps, np.array([40.0]), 0, 28e-12)


def test_a_coarse_grid_on_a_long_record_is_marched_in_blocks():
    # a fuzz audit's route (30 m of cable beside a 1 cm stub): its record of 407,706
    # steps had runs of two steps, 200,000 runs and 2-3 s a solve (20 s a check); in
    # blocks of 32 the same record took 0.16 s
    net = _route([4, 2, 26, 6331], 407_706)
    run = M._run_length(net, 407_706)
    assert run == 2
    assert chosen_block(net, 407_706, run) == 32
    # a route's usual grid (20 steps in its shortest delay) keeps the run march, bit
    # for bit; so does a short record
    usual = _route([40, 20, 260, 63310], 12_000)
    assert chosen_block(usual, 12_000, M._run_length(usual, 12_000)) is None
    assert chosen_block(net, 3_000, run) is None


def test_march_dispatches_to_the_blocks():
    net = _route([4, 2, 26, 6331], 20_000)
    ramp = np.clip(np.arange(20_000) * 28e-12 / 2.7e-9, 0.0, 1.0)[:, None]
    got = M.march(net, ramp, 20_000)
    ref = M._march_single(net, ramp, 20_000)
    assert np.max(np.abs(got - ref)) < 1e-12
    assert not np.array_equal(got, ref)  # taken by the blocks (sums in another order)
