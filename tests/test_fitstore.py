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
