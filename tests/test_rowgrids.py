"""The line solver on one grid per case (pinlib.physics.waveform.rowgrids): cases of
different steps solved in one call are each the case solved on its own grid."""

from __future__ import annotations

import warnings

import numpy as np
import pytest

from pinlib.physics import waveform as wf
from pinlib.physics.waveform.march import ValidityWarning

CHAINS = ([(50.0, 1.6e-9)],                                   # one line
          [(55.0, 1.0e-9), (40.0, 0.37e-9), (70.0, 2.2e-9)])  # delays between samples


def _cases(sections, ks, seed=1):
    """Steps dividing the shortest delay into ``ks`` steps, each record about 75 of
    them (invented values)."""
    rng = np.random.default_rng(seed)
    d = min(td for _, td in sections)
    dt = d / np.asarray(ks, dtype=float)
    n_own = (75 * np.asarray(ks) + rng.integers(0, 30, len(ks))).astype(int)
    t = np.arange(n_own.max())[None, :] * dt[:, None]
    return (t, dt, n_own, rng.uniform(10, 80, len(ks)), rng.uniform(0.5e-9, 3e-9, len(ks)),
            rng.uniform(2e-12, 30e-12, len(ks)))


@pytest.mark.parametrize("sections", CHAINS)
@pytest.mark.parametrize("edge", ["rise", "fall"])
def test_each_row_is_its_own_grids_solve(sections, edge):
    t, dt, n_own, rs, tr, c = _cases(sections, [40, 41, 43, 47, 52, 60, 79])
    v = wf.distributed_response(t, 1.0, tr, rs, sections, c, edge=edge).v
    assert v.shape == t.shape
    for r in range(t.shape[0]):
        own = np.arange(n_own[r]) * dt[r]
        alone = wf.distributed_response(own, 1.0, tr[r], rs[r], sections, c[r], edge=edge).v
        # derived from causality on the row's own grid: the first n_own samples are its
        # record, up to rounding (a single case sums its runs as matrix products)
        assert np.allclose(v[r, :n_own[r]], alone, rtol=1e-12, atol=1e-13)
        # a batch of that step alone takes the same operations in the same order
        two = wf.distributed_response(own, 1.0, np.full(2, tr[r]), np.full(2, rs[r]),
                                      sections, np.full(2, c[r]), edge=edge).v[0]
        assert np.array_equal(v[r, :n_own[r]], two)


def test_rows_whose_runs_differ_more_than_twofold_are_split():
    # steps of 20 and 90 per delay cannot march in one lockstep (see the module notes)
    sections = CHAINS[0]
    t, dt, n_own, rs, tr, c = _cases(sections, [20, 21, 90, 91])
    v = wf.distributed_response(t, 1.0, tr, rs, sections, c).v
    for r in range(4):
        own = np.arange(t.shape[1]) * dt[r]
        alone = wf.distributed_response(own, 1.0, tr[r], rs[r], sections, c[r]).v
        assert np.allclose(v[r], alone, rtol=1e-12, atol=1e-13)


def test_row_grids_are_checked_and_warn_per_step():
    sections = [(50.0, 1.0e-9)]
    t = np.arange(100)[None, :] * np.array([1e-11, 2e-11])[:, None]
    with pytest.raises(wf.InputError):  # a row that does not start at 0
        wf.distributed_response(t + 1e-12, 1.0, 1e-9, 50.0, sections, 1e-12)
    with pytest.raises(wf.InputError):  # a batch of three cases on two grids
        wf.distributed_response(t, 1.0, np.full(3, 1e-9), 50.0, sections, 1e-12)
    coarse = np.arange(100)[None, :] * np.array([1e-11, 1.4e-9])[:, None]
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        wf.distributed_response(coarse, 1.0, 1e-9, 50.0, sections, 1e-12)
    # derived from the one-grid rule: a delay of 0.71 steps is rounded to one (+40 %)
    assert any(issubclass(w.category, ValidityWarning) for w in caught)


def test_grids_made_otherwise_take_the_same_step_and_a_bad_row_is_refused():
    from pinlib.physics.waveform.rowgrids import row_grids

    steps = np.array([1.0e-11, 1.3e-11])  # invented
    exact = np.arange(200)[None, :] * steps[:, None]
    near = np.stack([np.linspace(0.0, 199 * s, 200) for s in steps])  # uniform to rounding
    assert not np.array_equal(exact, near)  # the grid check's other branch is taken
    for t in (exact, near):
        got, dt = row_grids(t)
        assert got is t or np.array_equal(got, t)
        # derived from the one-grid rule: a row's step is (t[-1] - t[0]) / (n - 1)
        assert np.array_equal(dt, (t[:, -1] - t[:, 0]) / 199)
    bad = exact.copy()
    bad[1, 50] += 0.5 * steps[1]  # one sample half a step late
    with pytest.raises(wf.InputError):
        row_grids(bad)
    near_bad = near.copy()
    near_bad[0, 120] += 0.5 * steps[0]
    with pytest.raises(wf.InputError):
        row_grids(near_bad)
