"""Input checks and output shaping shared by the pull-up functions."""

from __future__ import annotations

import numpy as np

from pinlib.physics import guards


def _arr(x, name: str) -> np.ndarray:
    return guards.floats(x, name)


def _positive(x, name: str, unit: str, *, allow_inf: bool = False) -> np.ndarray:
    return guards.positive(x, name, unit, allow_inf=allow_inf)


def _non_negative(x, name: str, unit: str) -> np.ndarray:
    return guards.non_negative(x, name, unit)


def _out(a):
    a = np.asarray(a)
    return a[()] if a.ndim == 0 else a
