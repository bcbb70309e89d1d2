"""Optional parts of pinlib, and one clear error when a feature's part is missing.

``pip install pinlib`` gives the command line and the design-review report (HTML with
charts, or Markdown).  The workbooks and their widgets need the Jupyter stack, the
``notebook`` extra: ``pip install 'pinlib[notebook]'``.  A feature that needs an extra
imports its modules through :func:`need`, so a missing one is a
:class:`~pinlib.core.errors.MissingExtraError` naming the extra to install (the command
line prints it and exits 2) rather than a bare ``ModuleNotFoundError``.
"""

from __future__ import annotations

import importlib
import importlib.util
from types import ModuleType

from pinlib.core import messages as M
from pinlib.core.errors import MissingExtraError

__all__ = ["EXTRAS", "need", "installed"]

#: The modules each extra brings, by the name pyproject.toml gives the extra.
EXTRAS = {
    "notebook": ("ipywidgets", "ipykernel", "jupyterlab", "anywidget", "voila"),
}


def need(module: str, *, extra: str, feature: str) -> ModuleType:
    """Import ``module``, or say which extra of pinlib brings it.

    Parameters
    ----------
    module : str
        The module to import (``"ipywidgets"``).
    extra : str
        The extra of pinlib that installs it (a key of :data:`EXTRAS`).
    feature : str
        What the user asked for, in their words (``"the workbook widgets"``).

    Raises
    ------
    MissingExtraError
        When ``module`` (or the package it belongs to) is not installed.  A module that
        is installed but fails to import for another reason raises as it did.
    """
    if extra not in EXTRAS:
        raise ValueError(f"unknown extra {extra!r}")  # a program calling pinlib wrongly
    try:
        return importlib.import_module(module)
    except ModuleNotFoundError as exc:
        missing = exc.name or module
        if missing != module and not module.startswith(missing + "."):
            raise  # the module is there; something it imports is not
        err = MissingExtraError(
            M.NEEDS_EXTRA.format(feature=feature, extra=extra, module=missing),
            hint=M.INSTALL_EXTRA.format(extra=extra))
        err.name = missing
        raise err from None


def installed(extra: str) -> bool:
    """Whether every module of ``extra`` can be found (nothing is imported)."""
    return all(importlib.util.find_spec(m) is not None for m in EXTRAS[extra])
