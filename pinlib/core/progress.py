"""Progress bars for long work (Monte Carlo runs, sweeps over a library).

:func:`progress_bar` gives a ``tqdm.auto`` bar — a text bar on a terminal, a widget in a
Jupyter notebook — or a silent stand-in.  By default (``enabled=None``) a bar is shown
only where someone can see it: standard error is a terminal, or the code runs in a
Jupyter kernel; and only once the work has taken more than a moment (half a second).
``enabled=True`` asks for one anyway; a callable ``f(done, total)`` receives the
progress instead (for a GUI, a log).  tqdm is imported only when a bar is shown.
"""

from __future__ import annotations

import sys
from collections.abc import Callable

__all__ = ["DELAY", "interactive", "progress_bar"]

#: Seconds of work before an automatic bar appears.
DELAY = 0.5


def interactive() -> bool:
    """True when a progress bar would be seen: a terminal on standard error, or a
    Jupyter kernel."""
    try:
        if sys.stderr is not None and sys.stderr.isatty():
            return True
    except (AttributeError, ValueError):
        pass
    shell = sys.modules.get("IPython")
    if shell is None or "ipykernel" not in sys.modules:
        return False
    try:
        ip = shell.get_ipython()
    except Exception:  # pragma: no cover - an IPython without a shell
        return False
    return ip is not None and getattr(ip, "kernel", None) is not None


class _Silent:
    def update(self, n: int = 1) -> None:
        pass

    def close(self) -> None:
        pass

    def __enter__(self):
        return self

    def __exit__(self, *exc) -> None:
        self.close()


class _Callback(_Silent):
    def __init__(self, fn: Callable[[int, int], object], total: int):
        self.fn, self.total, self.done = fn, total, 0

    def update(self, n: int = 1) -> None:
        self.done += n
        self.fn(self.done, self.total)


def progress_bar(total: int, *, desc: str, unit: str = "it", enabled=None):
    """A progress bar over ``total`` units of work.

    Parameters
    ----------
    total : int
        Units of work (samples, candidate parts). [1]
    desc : str
        What is being done, shown before the bar. [1]
    unit : str, optional
        The unit's name (``"sample"``, ``"part"``). [1]
    enabled : bool, callable or None, optional
        None: a bar where it can be seen, after :data:`DELAY`; True: always, at once;
        False: none; a callable ``f(done, total)``: called after each update. [1]

    Returns
    -------
    object
        With ``update(n)`` and ``close()``, usable as a context manager.
    """
    if callable(enabled) and not isinstance(enabled, bool):
        return _Callback(enabled, total)
    if enabled is None:
        if not interactive():
            return _Silent()
        delay = DELAY
    elif enabled:
        delay = 0.0
    else:
        return _Silent()
    from tqdm.auto import tqdm

    return tqdm(total=total, desc=desc, unit=unit, delay=delay, leave=False, file=sys.stderr,
                dynamic_ncols=True)
