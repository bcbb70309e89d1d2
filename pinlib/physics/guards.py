"""Input guards of the physics functions: one implementation for every module.

Each guard turns its input into a float array and refuses, with an
:class:`~pinlib.core.errors.InputError` naming the parameter, a value outside its domain.
The problem text (``problem``) is the calling module's: :mod:`pinlib.core.messages` keeps one
per module family, and the tests pin which call raises which.
"""

from __future__ import annotations

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError

__all__ = ["floats", "positive", "non_negative"]

_INF = float("inf")


def floats(value, name: str, *, problem: str = M.NOT_A_NUMBER,
           expected: str = "a float [SI]") -> np.ndarray:
    """``value`` as a float array, or an InputError naming ``name``."""
    try:
        return np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise InputError(problem, field=name, value=value, expected=expected) from None


def positive(value, name: str, unit: str, *, allow_inf: bool = False,
             problem: str | None = None, convert=floats) -> np.ndarray:
    """A float array of numbers above 0 (finite, unless ``allow_inf``: then +inf too). [unit]

    The problem text follows the domain: "finite and positive", or "positive" where +inf
    is allowed."""
    if problem is None:
        problem = M.MUST_BE_POSITIVE if allow_inf else M.MUST_BE_FINITE_POSITIVE
    x = convert(value, name)
    if x.ndim == 0:  # one number (most calls at one variant): plain comparisons
        v = float(x)
        ok = v > 0.0 if allow_inf else 0.0 < v < _INF  # NaN compares False
    else:
        ok = (x > 0.0 if allow_inf else np.isfinite(x) & (x > 0.0)).all()
    if not ok:
        raise InputError(problem, field=name, value=value,
                         expected=f"a number > 0 {unit}" + ("" if allow_inf else ", finite"))
    return x


def non_negative(value, name: str, unit: str, *, problem: str = M.MUST_BE_FINITE_NON_NEGATIVE,
                 convert=floats) -> np.ndarray:
    """A float array of finite numbers at or above 0. [unit]"""
    x = convert(value, name)
    ok = (0.0 <= float(x) < _INF) if x.ndim == 0 else (np.isfinite(x) & (x >= 0.0)).all()
    if not ok:
        raise InputError(problem, field=name, value=value, expected=f"a number >= 0 {unit}, finite")
    return x
