"""What the command line sets for its own process only.

A process the command starts (the workbench's server) gets the user's environment,
without what the command set for itself: :func:`child_environment`.

The program (:func:`pinlib.cli.entry`, a process that ends with the command) also runs
numpy's BLAS on one thread (:func:`one_blas_thread`): pinlib's matrix work is small (the
Monte Carlo sensitivity fit is a Gram matrix of a dozen columns), where a pool of BLAS
threads costs more to start and, on a busy machine, to spin than it saves (measured:
the fit of the demo's 20,000 boards took 1.1 s with the pool and 0.08 s on one thread,
on a shared two-core machine).  A user's own ``OPENBLAS_NUM_THREADS``,
``OMP_NUM_THREADS`` or ``MKL_NUM_THREADS`` wins.  And argparse's texts are translated
through one lookup of their catalogue (:func:`one_catalogue_lookup`).
"""

from __future__ import annotations

import os

__all__ = ["BLAS_VARIABLES", "one_blas_thread", "one_catalogue_lookup", "child_environment"]

#: The thread-count variables of the BLAS libraries numpy is built with; the first is set.
BLAS_VARIABLES = ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS")

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


def one_catalogue_lookup() -> None:
    """argparse's texts translated through the catalogue found once for the process,
    not looked for on disk at every text.

    argparse translates each of its texts with :func:`gettext.gettext`, which looks for
    the catalogue of the current text domain at every call: building one command's
    parser makes about 66 calls, each a few ``stat`` calls per language the environment
    names (about 2 ms in all with ``LANG=C.UTF-8``, 5 ms with ``LANG=en_US.UTF-8``,
    measured 2026-12-03).  The catalogue found once (or none, the texts then as
    written) is the one every call would find while the environment and the text
    domains stay as they are, as they do in a process that ends with the command: call
    it there only.
    """
    import argparse
    import gettext

    domain = gettext.textdomain()
    found = gettext.translation(domain, gettext.bindtextdomain(domain), fallback=True)
    argparse._ = found.gettext
    argparse.ngettext = found.ngettext


def child_environment() -> dict[str, str]:
    """A copy of the environment for a process the command starts, without what
    :func:`one_blas_thread` set."""
    env = dict(os.environ)
    if _blas_set_here:
        env.pop(BLAS_VARIABLES[0], None)
    return env
