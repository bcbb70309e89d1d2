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
"""

from __future__ import annotations

import os
from collections.abc import Iterator
from contextlib import contextmanager

__all__ = ["PLUGINS_VARIABLE", "pydantic_plugins_off", "child_environment"]

PLUGINS_VARIABLE = "PYDANTIC_DISABLE_PLUGINS"

_set_here = False


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
    :func:`pydantic_plugins_off` set."""
    env = dict(os.environ)
    if _set_here:
        env.pop(PLUGINS_VARIABLE, None)
    return env
