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

__all__ = ["DELAY", "Progress", "interactive", "progress_bar"]

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


class Progress:
    """Progress over ``total`` units of work: the one type :func:`progress_bar` returns.

    It forwards each update to a ``tqdm`` bar, to a callback ``f(done, total)``, to
    both or to neither, and counts the units done (``done``) in every case.  Use it as a
    context manager, or call :meth:`close` when the work ends.
    """

    def __init__(self, total: int | None, *, bar=None,
                 callback: Callable[[int, int | None], object] | None = None):
        self.total, self.done = (None if total is None else int(total)), 0
        self._bar, self._callback = bar, callback

    @property
    def shown(self) -> bool:
        """True when a bar is drawn (a terminal or a notebook)."""
        return self._bar is not None

    def update(self, n: int = 1) -> None:
        self.done += n
        if self._bar is not None:
            self._bar.update(n)
        if self._callback is not None:
            self._callback(self.done, self.total)

    def grow(self, n: int) -> None:
        """``n`` more units of work than first thought (a table refining its grid)."""
        if self.total is not None:
            self.total += int(n)
            if self._bar is not None:
                self._bar.total = self.total
                self._bar.refresh()

    def close(self) -> None:
        if self._bar is not None:
            self._bar.close()
            self._bar = None

    def __enter__(self) -> Progress:
        return self

    def __exit__(self, *exc) -> None:
        self.close()


def progress_bar(total: int | None, *, desc: str, unit: str = "it", enabled=None) -> Progress:
    """A progress bar over ``total`` units of work.

    Parameters
    ----------
    total : int or None
        Units of work (samples, candidate parts); None where the count is not known in
        advance (the bar then shows the units done and their rate). [1]
    desc : str
        What is being done, shown before the bar. [1]
    unit : str, optional
        The unit's name (``"sample"``, ``"part"``). [1]
    enabled : bool, callable or None, optional
        None: a bar where it can be seen, after :data:`DELAY`; True: always, at once;
        False: none; a callable ``f(done, total)``: called after each update. [1]

    Returns
    -------
    Progress
        With ``update(n)`` and ``close()``, usable as a context manager.
    """
    if callable(enabled) and not isinstance(enabled, bool):
        return Progress(total, callback=enabled)
    if enabled is None:
        if not interactive():
            return Progress(total)
        delay = DELAY
    elif enabled:
        delay = 0.0
    else:
        return Progress(total)
    from tqdm.auto import tqdm

    return Progress(total, bar=tqdm(total=total, desc=desc, unit=unit, delay=delay,
                                    leave=False, file=sys.stderr, dynamic_ncols=True))
