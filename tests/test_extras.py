"""pinlib.core.extras: a feature whose optional modules are missing names the extra to install."""

from __future__ import annotations

import sys
import types

import pytest

from pinlib.core import extras
from pinlib.core.errors import MissingExtraError, PinlibError


def test_a_missing_module_names_the_extra_and_the_pip_command(monkeypatch):
    monkeypatch.setitem(sys.modules, "ipywidgets", None)  # as if it were not installed
    with pytest.raises(MissingExtraError) as info:
        extras.need("ipywidgets", extra="notebook", feature="the workbook widgets")
    err = info.value
    assert isinstance(err, PinlibError) and isinstance(err, ModuleNotFoundError)
    assert err.name == "ipywidgets"
    assert err.message == ("the workbook widgets: the 'notebook' extra of pinlib is not "
                           "installed (ipywidgets is missing); install it with: "
                           "pip install 'pinlib[notebook]'")
    assert err.__cause__ is None and err.__suppress_context__


def test_a_missing_parent_package_is_named():
    with pytest.raises(MissingExtraError, match=r"\(pinlib_no_such_package is missing\)"):
        extras.need("pinlib_no_such_package.app", extra="notebook", feature="pinlib workbench")


def test_an_installed_module_that_fails_inside_raises_as_it_did(monkeypatch, tmp_path):
    # the module is there; a module it imports is not: not a missing extra
    (tmp_path / "pinlib_fake_widgets.py").write_text("import pinlib_fake_dependency\n",
                                                     encoding="utf-8")
    monkeypatch.syspath_prepend(str(tmp_path))
    with pytest.raises(ModuleNotFoundError) as info:
        extras.need("pinlib_fake_widgets", extra="notebook", feature="x")
    assert not isinstance(info.value, MissingExtraError)
    assert info.value.name == "pinlib_fake_dependency"


def test_an_installed_module_is_returned(monkeypatch):
    fake = types.ModuleType("pinlib_fake_present")
    monkeypatch.setitem(sys.modules, "pinlib_fake_present", fake)
    assert extras.need("pinlib_fake_present", extra="notebook", feature="x") is fake


def test_an_unknown_extra_is_a_programming_error():
    with pytest.raises(ValueError, match="unknown extra"):
        extras.need("json", extra="no-such-extra", feature="x")


def test_installed_follows_the_modules(monkeypatch):
    import importlib.util

    real = importlib.util.find_spec
    monkeypatch.setattr(importlib.util, "find_spec",
                        lambda name, *a: None if name == "voila" else real(name, *a))
    assert extras.installed("notebook") is False
    monkeypatch.setattr(importlib.util, "find_spec", lambda name, *a: object())
    assert extras.installed("notebook") is True


def test_the_extras_match_pyproject():
    # every module listed here comes with the extra of that name in pyproject.toml
    from pathlib import Path

    from pinlib.core.tomlfile import tomllib

    pyproject = Path(__file__).resolve().parents[1] / "pyproject.toml"
    declared = tomllib.loads(pyproject.read_text(encoding="utf-8"))["project"][
        "optional-dependencies"]
    for extra, modules in extras.EXTRAS.items():
        names = {d.split(">")[0].split("<")[0].split("=")[0].split(";")[0].strip().lower()
                 for d in declared[extra]}
        assert set(modules) <= names, (extra, set(modules) - names)
