"""Test-session settings shared by every test module."""

import pytest


@pytest.fixture(autouse=True)
def _no_fit_store_between_runs(monkeypatch):
    # The command line keeps driver fits in a file between runs (pinlib.engines.fitstore); tests
    # run the command in-process many times and must not depend on one another or write
    # into the user's cache: off unless a test turns it on.
    from pinlib.physics import driver

    monkeypatch.setenv("PINLIB_CACHE_DIR", "off")
    monkeypatch.setattr(driver, "FIT_STORE", None)


@pytest.fixture(autouse=True)
def _no_inherited_terminal_width(monkeypatch):
    # The command fits its text and tables to COLUMNS when it is set; a shell that exports
    # it must not change what the tests read (tests that want a width set it themselves).
    monkeypatch.delenv("COLUMNS", raising=False)
