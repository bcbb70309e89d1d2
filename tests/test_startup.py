"""pinlib.cli.startup and the program: BLAS on one thread unless the user chose (children
get the user's environment), the garbage collector off for the program's command."""

from __future__ import annotations

import gc
import os

import pytest

from pinlib import cli
from pinlib.cli import startup


@pytest.fixture(autouse=True)
def _collector_back_on():
    """``cli.entry`` turns the garbage collector off and sets argparse's translations for
    a process that ends with it; this test process goes on."""
    import argparse

    texts = argparse._, argparse.ngettext
    yield
    gc.enable()
    argparse._, argparse.ngettext = texts


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


def test_argparse_texts_are_translated_as_gettext_would_with_one_lookup(monkeypatch):
    """The command's process looks for argparse's catalogue once
    (startup.one_catalogue_lookup); each text then reads as gettext gives it."""
    import argparse
    import gettext

    monkeypatch.setattr(argparse, "_", argparse._)  # restored after the test
    monkeypatch.setattr(argparse, "ngettext", argparse.ngettext)
    looked = []
    real_find = gettext.find
    monkeypatch.setattr(gettext, "find", lambda *a, **k: looked.append(a) or real_find(*a, **k))
    startup.one_catalogue_lookup()
    assert len(looked) == 1
    texts = ["usage: ", "positional arguments", "show this help message and exit",
             "the following arguments are required: %s", "unrecognized arguments: %s"]
    monkeypatch.setattr(gettext, "find", real_find)
    assert [argparse._(t) for t in texts] == [gettext.gettext(t) for t in texts]
    for n in (1, 2):
        assert argparse.ngettext("expected %s argument", "expected %s arguments", n) == \
            gettext.ngettext("expected %s argument", "expected %s arguments", n)
    parser = argparse.ArgumentParser(prog="p", add_help=True)
    parser.add_argument("x")
    assert len(looked) == 1 and "positional arguments" in parser.format_help()


def test_the_program_looks_up_the_catalogue_main_does_not(monkeypatch):
    calls = []
    monkeypatch.setattr(cli, "one_catalogue_lookup", lambda: calls.append("entry"))
    monkeypatch.setattr(cli, "_main", lambda argv: 0)
    monkeypatch.setattr(gc, "freeze", lambda: None)
    assert cli.main(["check", "x.toml"]) == 0 and calls == []
    assert cli.entry() == 0 and calls == ["entry"]
