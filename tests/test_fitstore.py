"""Driver fits kept between runs of the command (pinlib.engines.fitstore)."""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from pinlib.engines import fitstore
from pinlib.physics import driver
from pinlib.physics.driver import fitting

DEMO = Path(__file__).resolve().parents[1] / "workbooks" / "designs" / "demo-board.toml"
LOADS = [10e-12, 30e-12, 50e-12]
TIMES = [1.9e-9, 3.9e-9, 6.1e-9]  # invented edge table of a generic output


@pytest.fixture
def store(tmp_path, monkeypatch):
    monkeypatch.setenv("PINLIB_CACHE_DIR", str(tmp_path))
    monkeypatch.setattr(driver, "_FIT_CACHE", type(driver._FIT_CACHE)())
    got = fitstore.install()
    assert got is not None and driver.FIT_STORE is got
    return got


def test_a_stored_fit_is_the_computed_one_bit_for_bit(store, monkeypatch):
    fresh = driver.fit_driver(LOADS, TIMES)
    assert store.flush() and store.path.is_file()
    # a new process: nothing in memory, the file read back
    monkeypatch.setattr(driver, "_FIT_CACHE", type(driver._FIT_CACHE)())
    monkeypatch.setattr(driver, "FIT_STORE", fitstore.FitStore(store.path, store.version))
    monkeypatch.setattr(fitting, "_solve", lambda *a, **k: pytest.fail("fitted again"))
    again = driver.fit_driver(LOADS, TIMES)
    assert again.r_out == fresh.r_out and again.t_ramp == fresh.t_ramp
    assert np.array_equal(again.residuals, fresh.residuals)
    assert again.method == fresh.method and again.notes == fresh.notes


def test_a_store_written_by_other_code_is_ignored(store, monkeypatch):
    driver.fit_driver(LOADS, TIMES)
    store.flush()
    other = fitstore.FitStore(store.path, "another version")
    assert len(other) == 0


def test_a_damaged_store_costs_only_a_new_fit(store, monkeypatch):
    store.path.write_text("{ not json", encoding="utf-8")
    fit = driver.fit_driver(LOADS, TIMES)
    assert fit.method == "least-squares"
    assert store.flush()
    data = json.loads(store.path.read_text(encoding="utf-8"))
    assert data["format"] == fitstore.FORMAT and len(data["fits"]) == 1
    # a record that is not a fit is passed over
    key = next(iter(data["fits"]))
    data["fits"][key] = {"r_out": "many"}
    store.path.write_text(json.dumps(data), encoding="utf-8")
    monkeypatch.setattr(driver, "_FIT_CACHE", type(driver._FIT_CACHE)())
    monkeypatch.setattr(driver, "FIT_STORE", fitstore.FitStore(store.path, store.version))
    assert driver.fit_driver(LOADS, TIMES).r_out == fit.r_out


def test_a_folder_that_cannot_be_written_is_no_error(tmp_path, monkeypatch):
    blocker = tmp_path / "file"
    blocker.write_text("x", encoding="utf-8")
    monkeypatch.setenv("PINLIB_CACHE_DIR", str(blocker / "sub"))  # under a file: no folder
    store = fitstore.install()
    driver.fit_driver(LOADS, [t * 1.01 for t in TIMES])
    assert store.flush() is False


def test_off_keeps_fits_in_the_process(monkeypatch):
    monkeypatch.setenv("PINLIB_CACHE_DIR", "off")
    assert fitstore.install() is None and driver.FIT_STORE is None


def test_the_command_gives_the_same_result_with_a_warm_store(tmp_path):
    cmd = [sys.executable, "-m", "pinlib", "check", str(DEMO), "--json"]
    env = {**os.environ, "PINLIB_CACHE_DIR": str(tmp_path)}
    cold = subprocess.run(cmd, capture_output=True, text=True, env=env)
    assert (tmp_path / "fits.json").is_file()
    warm = subprocess.run(cmd, capture_output=True, text=True, env=env)
    assert cold.returncode == warm.returncode
    a, b = json.loads(cold.stdout), json.loads(warm.stdout)
    assert a == b  # every figure, check and note the same with fits read back


# --- what the store reads back must not lie (issue 14, item 9) -----------------------

def _fresh_process(monkeypatch, store):
    """Nothing in memory; the store's file read afresh, as by the next run."""
    monkeypatch.setattr(driver, "_FIT_CACHE", type(driver._FIT_CACHE)())
    again = fitstore.FitStore(store.path, store.version)
    monkeypatch.setattr(driver, "FIT_STORE", again)
    return again


def _edit(store, change, *, redigest):
    """Apply ``change(fit)`` to every stored fit; with ``redigest`` sign it anew."""
    data = json.loads(store.path.read_text(encoding="utf-8"))
    for key, entry in data["fits"].items():
        change(entry["fit"])
        if redigest:
            entry["digest"] = fitstore.entry_digest(key, entry["fit"], store.version)
    store.path.write_text(json.dumps(data), encoding="utf-8")


@pytest.mark.parametrize("redigest", [False, True])
@pytest.mark.parametrize("r_out", [0.001, 5e3, float("nan"), -1.0, 1e300])
def test_an_edited_r_out_never_changes_the_fit(store, monkeypatch, r_out, redigest):
    fresh = driver.fit_driver(LOADS, TIMES)
    assert store.flush()

    def change(fit):
        fit["r_out"] = r_out

    _edit(store, change, redigest=redigest)
    again = _fresh_process(monkeypatch, store)
    got = driver.fit_driver(LOADS, TIMES)
    assert got.r_out == fresh.r_out and got.t_ramp == fresh.t_ramp
    assert np.array_equal(got.residuals, fresh.residuals)
    assert again._new  # dropped and computed again: the next flush repairs the file
    assert again.flush()
    data = json.loads(store.path.read_text(encoding="utf-8"))
    assert all(entry["fit"]["r_out"] == fresh.r_out for entry in data["fits"].values())


def test_an_entry_consistent_with_itself_but_out_of_bounds_is_refused(store, monkeypatch):
    fresh = driver.fit_driver(LOADS, TIMES)
    assert store.flush()
    # r_out far below the fit's search box (1e-6 of the smallest edge's RC), with
    # residuals and RMS recomputed to match it and the digest signed anew: only the
    # bounds can refuse it
    loads, times = np.array(LOADS), np.array(TIMES)
    lo, hi = driver.level_fractions(np.full(3, "10-90", dtype=object))
    problem = driver._Problem(loads, times, lo, hi)
    r_bad = 1e-3 * float(problem.r_out(problem.lower[0]))

    def change(fit):
        res = problem.model(r_bad, fit["t_ramp"]) - times
        fit.update(r_out=r_bad, residuals=res.tolist(),
                   rms_residual=float(np.sqrt(np.mean(res * res))))

    _edit(store, change, redigest=True)
    _fresh_process(monkeypatch, store)
    assert driver.fit_driver(LOADS, TIMES).r_out == fresh.r_out


def test_a_fixed_r_out_is_checked_against_the_one_asked_for(store, monkeypatch):
    fresh = driver.fit_driver(LOADS[1:2], TIMES[1:2], r_out=34.0)
    assert fresh.method == "fixed-r_out"
    assert store.flush()

    def change(fit):
        fit["method"] = "least-squares"

    _edit(store, change, redigest=True)
    _fresh_process(monkeypatch, store)
    got = driver.fit_driver(LOADS[1:2], TIMES[1:2], r_out=34.0)
    assert got.method == "fixed-r_out" and got.t_ramp == fresh.t_ramp


def test_nan_in_the_file_is_dropped_not_reported(store, monkeypatch):
    fresh = driver.fit_driver(LOADS, TIMES)
    assert store.flush()
    text = store.path.read_text(encoding="utf-8")
    store.path.write_text(text.replace(repr(fresh.r_out), "NaN"), encoding="utf-8")
    again = _fresh_process(monkeypatch, store)
    assert len(again) == 0
    assert driver.fit_driver(LOADS, TIMES).r_out == fresh.r_out


def test_a_file_over_the_cap_is_not_read_and_is_rewritten(store, monkeypatch):
    driver.fit_driver(LOADS, TIMES)
    assert store.flush()
    good = store.path.stat().st_size
    data = json.loads(store.path.read_text(encoding="utf-8"))
    data["padding"] = "x" * (2 * good)
    store.path.write_text(json.dumps(data), encoding="utf-8")
    monkeypatch.setattr(fitstore, "MAX_BYTES", 2 * good)
    again = _fresh_process(monkeypatch, store)
    assert len(again) == 0  # not read at all
    driver.fit_driver(LOADS, TIMES)
    assert again.flush() and store.path.stat().st_size <= 2 * good


def test_a_written_file_stays_under_the_cap(store, monkeypatch):
    for k in range(6):
        driver.fit_driver(LOADS, [t * (1 + 0.01 * k) for t in TIMES])
    assert store.flush()
    cap = store.path.stat().st_size // 2
    monkeypatch.setattr(fitstore, "MAX_BYTES", cap)
    again = _fresh_process(monkeypatch, store)
    driver.fit_driver(LOADS, [t * 1.5 for t in TIMES])
    assert again.flush()
    data = json.loads(store.path.read_text(encoding="utf-8"))
    assert store.path.stat().st_size <= cap and 0 < len(data["fits"]) < 7


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="no FIFOs on this platform")
def test_a_fifo_or_an_endless_device_in_its_place_is_not_read(store, monkeypatch):
    os.mkfifo(store.path)  # reading would block forever
    assert len(_fresh_process(monkeypatch, store)) == 0
    store.path.unlink()
    if Path("/dev/zero").exists():
        store.path.symlink_to("/dev/zero")  # reading would fill memory
        assert len(_fresh_process(monkeypatch, store)) == 0


def test_a_lock_that_is_a_link_is_not_followed(store, tmp_path):
    elsewhere = tmp_path / "elsewhere" / "victim"
    elsewhere.parent.mkdir()
    (tmp_path / ".fits.json.lock").symlink_to(elsewhere)
    driver.fit_driver(LOADS, TIMES)
    assert store.flush() is False  # the write is skipped, the fit still made
    assert not elsewhere.exists() and not store.path.exists()


def test_the_command_gives_the_same_result_whatever_the_store_holds(tmp_path):
    cmd = [sys.executable, "-m", "pinlib", "check", str(DEMO), "--json"]
    env = {**os.environ, "PINLIB_CACHE_DIR": str(tmp_path)}
    cold = subprocess.run(cmd, capture_output=True, text=True, env=env)
    data = json.loads((tmp_path / "fits.json").read_text(encoding="utf-8"))
    for entry in data["fits"].values():
        entry["fit"]["r_out"] = float("nan")
    (tmp_path / "fits.json").write_text(json.dumps(data), encoding="utf-8")
    damaged = subprocess.run(cmd, capture_output=True, text=True, env=env)
    assert (cold.returncode, cold.stdout) == (damaged.returncode, damaged.stdout)
    assert "Traceback" not in damaged.stderr


def test_the_newest_fits_are_kept_up_to_max_fits(store, monkeypatch):
    monkeypatch.setattr(fitstore, "MAX_FITS", 3)
    for k in range(5):
        driver.fit_driver(LOADS, [t * (1 + 0.01 * k) for t in TIMES])
    newest = list(store._new)[-3:]
    assert store.flush()
    data = json.loads(store.path.read_text(encoding="utf-8"))
    assert sorted(data["fits"]) == sorted(newest) and sorted(store._fits) == sorted(newest)


def test_the_digests_are_hashlibs():
    # derived from the standard: SHA-256 is one function (FIPS 180-4), whichever module
    # computes it; pinlib.core.digest spares the check OpenSSL's load
    import hashlib

    from pinlib.core.digest import sha256

    for data in (b"", b"abc", bytes(range(256)) * 40):
        h = sha256()
        h.update(data)
        assert h.hexdigest() == hashlib.sha256(data).hexdigest()
        assert sha256(data).hexdigest() == hashlib.sha256(data).hexdigest()
    key = (b"\x00\x01", 3.3, "rise", None)
    expected = hashlib.sha256()
    for part in key:
        expected.update(part if isinstance(part, bytes) else repr(part).encode())
        expected.update(b"|")
    assert fitting.fit_key(key) == expected.hexdigest()
    fit = {"r_out": 25.0, "t_ramp": 1e-9}
    body = json.dumps(["v", "k", fit], sort_keys=True, allow_nan=True)
    assert fitstore.entry_digest("k", fit, "v") == hashlib.sha256(body.encode()).hexdigest()
