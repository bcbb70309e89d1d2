"""Many driver fits made together (fit_drivers) and the ranking's use of them."""

from __future__ import annotations

import warnings
from pathlib import Path

import numpy as np
import pytest

from pinlib.core.errors import InputError
from pinlib.library.loader import load_library
from pinlib.model.design import load_design
from pinlib.physics import driver
from pinlib.physics.driver import fit_driver, fit_drivers, fitting, solver
from pinlib.studies import candidates as cand
from tests.spiparts import add_generated
from tests.test_candidates import assert_same_ranking

DEMO = Path(__file__).resolve().parents[1] / "workbooks" / "designs" / "demo-board.toml"


def _requests(n: int, seed: int) -> list[tuple]:
    """Edge tables of invented outputs (invented test data): one to three loads, both
    pairs of levels, r_out given or fitted, with and without an r_out from the levels."""
    rng = np.random.default_rng(seed)
    out = []
    for _ in range(n):
        k = int(rng.integers(1, 4))
        loads = np.sort(rng.uniform(5e-12, 60e-12, k))
        r = rng.uniform(5.0, 120.0)
        times = rng.uniform(0.3e-9, 3e-9) + 2.197 * r * loads * rng.uniform(0.7, 1.3, k)
        levels = [str(x) for x in rng.choice(["10-90", "20-80"], k)]
        r_out = float(rng.uniform(5.0, 150.0)) if rng.random() < 0.5 else None
        r_dc = float(rng.uniform(10.0, 60.0)) if rng.random() < 0.3 else None
        out.append((loads.tolist(), times.tolist(), levels, r_out, r_dc))
    return out


def _alone(req):
    """fit_driver of one request with nothing kept from before, and its warnings."""
    driver._FIT_CACHE.clear()
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        fit = fit_driver(req[0], req[1], req[2], r_out=req[3], r_out_dc=req[4])
    return fit, [str(w.message) for w in caught]


def _same(a, b) -> bool:
    return (a.r_out == b.r_out and a.t_ramp == b.t_ramp
            and np.array_equal(a.residuals, b.residuals) and a.rms_residual == b.rms_residual
            and a.method == b.method and a.warnings == b.warnings and a.notes == b.notes)


@pytest.fixture(autouse=True)
def _own_memory(monkeypatch):
    monkeypatch.setattr(driver, "_FIT_CACHE", type(driver._FIT_CACHE)())
    monkeypatch.setattr(driver, "FIT_STORE", None)


def test_fits_made_together_are_each_fit_alone_to_the_bit():
    reqs = _requests(120, seed=3)
    alone = [_alone(q) for q in reqs]
    assert sum(1 for _, w in alone if w) >= 20  # the warnings are compared too
    driver._FIT_CACHE.clear()
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        together = fit_drivers(reqs)
    texts = [str(w.message) for w in caught]
    assert texts == [t for _, w in alone for t in w]  # each request's, in order
    for (fit, _), got in zip(alone, together, strict=True):
        assert _same(fit, got)


@pytest.mark.filterwarnings("ignore::pinlib.core.errors.FitWarning")
def test_a_fit_made_together_is_served_to_a_later_fit_alone(monkeypatch):
    reqs = _requests(10, seed=5)
    first = fit_drivers(reqs)
    monkeypatch.setattr(fitting, "_solve", lambda *a, **k: pytest.fail("fitted again"))
    for q, fit in zip(reqs, first, strict=True):
        assert _same(fit_driver(q[0], q[1], q[2], r_out=q[3], r_out_dc=q[4]), fit)


@pytest.mark.filterwarnings("ignore::pinlib.core.errors.FitWarning")
def test_refused_points_come_back_as_their_error_and_repeats_are_solved_once(monkeypatch):
    good = _requests(3, seed=9)
    bad = ([10e-12, 20e-12], [1e-9], "10-90", None, None)  # one time for two loads
    calls = []
    real = solver._solve_many

    def counted(problems, fixed):
        calls.append(len(problems))
        return real(problems, fixed)

    monkeypatch.setattr(fitting, "_solve_many", counted)
    got = fit_drivers([good[0], bad, good[1], good[0], good[2]])
    assert isinstance(got[1], InputError) and "times" in str(got[1].field)
    assert calls == [3]
    assert _same(got[0], got[3])


def test_the_ranking_at_a_driving_position_fits_no_pin_alone(monkeypatch):
    # the flash position of the demo (its candidates drive CIPO, the bus has tolerances):
    # every candidate's output pin is fitted in the chunk's batch, none by the engine
    lib = load_library(env=False)
    add_generated(lib, 12)
    design = load_design(DEMO, library=lib)
    alone = []
    real = fitting._solve
    monkeypatch.setattr(fitting, "_solve", lambda *a: alone.append(1) or real(*a))
    batched = cand.rank_candidates(design, "U7")
    assert not alone
    driver._FIT_CACHE.clear()
    slow = cand.rank_candidates_slow(design, "U7")
    assert alone  # the one-at-a-time path fits each pin itself
    assert_same_ranking(batched, slow)


@pytest.mark.filterwarnings("ignore::pinlib.core.errors.FitWarning")
def test_fits_made_together_go_to_the_store_and_come_back_from_it(tmp_path, monkeypatch):
    from pinlib.engines import fitstore

    monkeypatch.setenv("PINLIB_CACHE_DIR", str(tmp_path))
    store = fitstore.install()
    assert store is not None
    reqs = _requests(6, seed=11)
    first = fit_drivers(reqs)
    assert store.flush()
    # a new process: nothing in memory, the file read back, nothing solved again
    driver._FIT_CACHE.clear()
    monkeypatch.setattr(driver, "FIT_STORE", fitstore.FitStore(store.path, store.version))
    monkeypatch.setattr(fitting, "_solve_many",
                        lambda problems, fixed: [] if not problems else pytest.fail("solved"))
    for a, b in zip(first, fit_drivers(reqs), strict=True):
        assert _same(a, b)
