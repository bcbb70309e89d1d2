"""What the command line sets for its own process only.

pydantic looks for plugins of its own (``importlib.metadata`` entry points of the
group ``pydantic``) when the first model is built: a scan of every installed package's
metadata, several milliseconds of every ``pinlib`` run, for plugins that only observe
validation and cannot change a figure pinlib prints.  While a command runs,
:func:`pydantic_plugins_off` sets ``PYDANTIC_DISABLE_PLUGINS=__all__`` (pydantic's own
switch), unless the user has set that variable (``PYDANTIC_DISABLE_PLUGINS=`` empty
keeps every plugin on), and puts the environment back when the command returns, so
that pinlib used as a library, and the tests that call the command in-process, see no
change.  A process the command starts (the workbench's server) gets the user's
environment: :func:`child_environment`.

The program (:func:`pinlib.cli.entry`, a process that ends with the command) also runs
numpy's BLAS on one thread (:func:`one_blas_thread`): pinlib's matrix work is small (the
Monte Carlo sensitivity fit is a Gram matrix of a dozen columns), where a pool of BLAS
threads costs more to start and, on a busy machine, to spin than it saves (measured:
the fit of the demo's 20,000 boards took 1.1 s with the pool and 0.08 s on one thread,
on a shared two-core machine).  A user's own ``OPENBLAS_NUM_THREADS``,
``OMP_NUM_THREADS`` or ``MKL_NUM_THREADS`` wins.
"""

from __future__ import annotations

import os
from collections.abc import Iterator
from contextlib import contextmanager

__all__ = ["PLUGINS_VARIABLE", "BLAS_VARIABLES", "pydantic_plugins_off", "one_blas_thread",
           "child_environment"]

PLUGINS_VARIABLE = "PYDANTIC_DISABLE_PLUGINS"
#: The thread-count variables of the BLAS libraries numpy is built with; the first is set.
BLAS_VARIABLES = ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS")

_set_here = False
_blas_set_here = False


def one_blas_thread() -> None:
    """BLAS on one thread for the rest of this process, unless the user chose a count
    or numpy is already loaded (its thread pool is then fixed): call it before numpy is
    imported, in a process that ends with the command."""
    global _blas_set_here
    import sys

    if "numpy" in sys.modules or any(v in os.environ for v in BLAS_VARIABLES):
        return
    os.environ[BLAS_VARIABLES[0]] = "1"
    _blas_set_here = True


@contextmanager
def pydantic_plugins_off() -> Iterator[None]:
    """pydantic's plugin discovery off while the block runs (a user's setting wins)."""
    global _set_here
    if PLUGINS_VARIABLE in os.environ or _set_here:
        yield
        return
    os.environ[PLUGINS_VARIABLE] = "__all__"
    _set_here = True
    try:
        yield
    finally:
        _set_here = False
        os.environ.pop(PLUGINS_VARIABLE, None)


def child_environment() -> dict[str, str]:
    """A copy of the environment for a process the command starts, without what
    :func:`pydantic_plugins_off` and :func:`one_blas_thread` set."""
    env = dict(os.environ)
    if _set_here:
        env.pop(PLUGINS_VARIABLE, None)
    if _blas_set_here:
        env.pop(BLAS_VARIABLES[0], None)
    return env
