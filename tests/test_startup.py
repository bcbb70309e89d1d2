"""pinlib.cli.startup: pydantic's plugin discovery is off while a command runs, a
user's own setting wins, and neither the process nor its children keep the change."""

from __future__ import annotations

import gc
import os

import pytest

from pinlib import cli
from pinlib.cli import startup

VAR = startup.PLUGINS_VARIABLE


@pytest.fixture(autouse=True)
def _collector_back_on():
    """``cli.entry`` turns the garbage collector off for a process that ends with it;
    this test process goes on."""
    yield
    gc.enable()


def _seen_during_a_command(monkeypatch) -> list:
    seen = []

    def fake_main(argv):
        seen.append((os.environ.get(VAR), startup.child_environment().get(VAR, "absent")))
        return 0

    monkeypatch.setattr(cli, "_main", fake_main)
    assert cli.main(["check", "x.toml"]) == 0
    return seen


def test_discovery_off_during_a_command_and_restored_after(monkeypatch):
    monkeypatch.delenv(VAR, raising=False)
    assert _seen_during_a_command(monkeypatch) == [("__all__", "absent")]
    assert VAR not in os.environ


def test_a_users_setting_wins_and_reaches_children(monkeypatch):
    monkeypatch.setenv(VAR, "")  # empty: every plugin stays on
    assert _seen_during_a_command(monkeypatch) == [("", "")]
    assert os.environ[VAR] == ""


def test_restored_when_the_command_fails(monkeypatch):
    monkeypatch.delenv(VAR, raising=False)

    def failing(argv):
        raise SystemExit(2)

    monkeypatch.setattr(cli, "_main", failing)
    try:
        cli.main(["--no-such-option"])
    except SystemExit:
        pass
    assert VAR not in os.environ


def test_the_program_returns_mains_code_and_freezes_what_is_left(monkeypatch):
    import gc

    froze = []
    monkeypatch.setattr(cli, "main", lambda: 3)
    monkeypatch.setattr(gc, "freeze", lambda: froze.append(True))
    assert cli.entry() == 3
    assert froze == [True]


def test_the_program_runs_its_command_with_the_collector_off(monkeypatch):
    seen = []
    monkeypatch.setattr(cli, "main", lambda: seen.append(gc.isenabled()) or 0)
    monkeypatch.setattr(gc, "freeze", lambda: None)
    assert cli.entry() == 0
    assert seen == [False]


def test_main_leaves_the_collector_as_it_found_it(monkeypatch):
    seen = []

    def fake_main(argv):
        seen.append(gc.isenabled())
        return 0

    monkeypatch.setattr(cli, "_main", fake_main)
    assert gc.isenabled()
    assert cli.main(["check", "x.toml"]) == 0
    assert seen == [True] and gc.isenabled()


def test_the_program_runs_blas_on_one_thread_unless_the_user_chose(monkeypatch):
    import sys

    for var in startup.BLAS_VARIABLES:
        monkeypatch.delenv(var, raising=False)
    monkeypatch.setattr(startup, "_blas_set_here", False)
    monkeypatch.delitem(sys.modules, "numpy")  # as in a fresh process (restored after)
    startup.one_blas_thread()
    assert os.environ["OPENBLAS_NUM_THREADS"] == "1"
    assert "OPENBLAS_NUM_THREADS" not in startup.child_environment()
    monkeypatch.delenv("OPENBLAS_NUM_THREADS")
    monkeypatch.setattr(startup, "_blas_set_here", False)
    monkeypatch.setenv("OMP_NUM_THREADS", "4")  # the user's choice wins
    startup.one_blas_thread()
    assert "OPENBLAS_NUM_THREADS" not in os.environ
    assert startup.child_environment()["OMP_NUM_THREADS"] == "4"


def test_with_numpy_loaded_the_thread_count_is_left_alone(monkeypatch):
    import numpy  # noqa: F401

    for var in startup.BLAS_VARIABLES:
        monkeypatch.delenv(var, raising=False)
    monkeypatch.setattr(startup, "_blas_set_here", False)
    startup.one_blas_thread()
    assert "OPENBLAS_NUM_THREADS" not in os.environ
