"""IEC 60063 preferred number series (E3 to E192) and look-ups in them.

The series are built once at import:

* E24 is the table printed in IEC 60063; E12, E6 and E3 take every 2nd, 4th and
  8th of its values.  E24 cannot be computed: eight of its values differ from
  ``round(10**(i/24), 1)`` (2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7 and 8.2).
* E48, E96 and E192 are ``round(100 * 10**(i/N))`` (three significant digits),
  with the one exception the standard makes in E192: 920 where the formula
  gives 919.

Every look-up (:func:`nearest`, :func:`above`, :func:`below`) takes a float or an
array and returns the same shape.  A value that lies on a series value within a
relative tolerance of 1e-9 counts as that value, so ``above("E24", 4.7e3)``
returns 4700 even when 4.7e3 was computed with a rounding error.

Values are built from the integer mantissa and an exact power of ten
(``47 * 1e3`` or ``47 / 1e12``), so a returned value is the float nearest to
the decimal number (``4.7e-11``, not ``4.7000000000000005e-11``).
"""

from __future__ import annotations

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError

__all__ = [
    "SERIES_NAMES",
    "RTOL",
    "series",
    "values_in_range",
    "nearest",
    "above",
    "below",
]

#: The series names accepted by every function here (case-insensitive).
SERIES_NAMES: tuple[str, ...] = ("E3", "E6", "E12", "E24", "E48", "E96", "E192")

#: Relative tolerance within which an input counts as lying on a series value.
RTOL = 1e-9

# Smallest and largest inputs accepted: keeps every power of ten used below
# finite and non-zero in double precision.
_X_MIN = 1e-200
_X_MAX = 1e200

# IEC 60063, E24 column, as integer mantissas (two significant digits).
_E24_TABLE = (
    10, 11, 12, 13, 15, 16, 18, 20, 22, 24, 27, 30,
    33, 36, 39, 43, 47, 51, 56, 62, 68, 75, 82, 91,
)  # fmt: skip

# The one value of E192 that the standard sets apart from round(100*10**(i/192)):
# index 185 gives 919.48..., which rounds to 919; IEC 60063 prints 920.
_E192_EXCEPTIONS = {185: 920}


def _build_mantissas(n: int) -> tuple[np.ndarray, int]:
    """Integer mantissas of series E<n> and their number of significant digits."""
    if n <= 24:
        step = 24 // n
        return np.array(_E24_TABLE[::step], dtype=np.int64), 2
    index = np.arange(n)
    mant = np.round(100.0 * 10.0 ** (index / n)).astype(np.int64)
    if n == 192:
        for i, value in _E192_EXCEPTIONS.items():
            mant[i] = value
    return mant, 3


_MANTISSAS: dict[str, tuple[np.ndarray, int]] = {
    name: _build_mantissas(int(name[1:])) for name in SERIES_NAMES
}
# log10 of each mantissa in [0, 1): the search grid of the look-ups.
_LOG_MANTISSAS: dict[str, np.ndarray] = {
    name: np.log10(mant.astype(float)) - (digits - 1)
    for name, (mant, digits) in _MANTISSAS.items()
}


def _series_key(name) -> str:
    """Normalise a series name; raise InputError for an unknown one."""
    key = name.strip().upper() if isinstance(name, str) else None
    if key not in _MANTISSAS:
        raise InputError(
            M.UNKNOWN_NUMBER_SERIES,
            field="name",
            value=name,
            expected="one of " + ", ".join(SERIES_NAMES),
        )
    return key


def _check_positive(x, field: str) -> np.ndarray:
    """Return x as a float array; raise InputError for non-positive or non-finite values."""
    try:
        arr = np.asarray(x, dtype=float)
    except (TypeError, ValueError):
        raise InputError(
            M.NOT_A_NUMBER, field=field, value=x, expected="a positive finite value"
        ) from None
    bad = ~(np.isfinite(arr) & (arr >= _X_MIN) & (arr <= _X_MAX))
    if np.any(bad):
        from pinlib.core.quantity import range_text

        first = arr[bad].flat[0] if arr.ndim else float(arr)
        raise InputError(
            M.VALUE_OUT_OF_RANGE,
            field=field,
            value=float(first),
            expected=f"a positive finite value, {range_text(_X_MIN, _X_MAX)}",
        )
    return arr


def _value(mant: np.ndarray, exp10: np.ndarray) -> np.ndarray:
    """mant * 10**exp10 with mant, exp10 integers, correctly rounded.

    Both operands are exact in double precision for |exp10| <= 22, so IEEE
    multiplication or division gives the float nearest to the decimal value;
    multiplying by 10.0**-k (inexact for k > 0) would not.
    """
    mant = mant.astype(float)
    pos = np.maximum(exp10, 0).astype(float)
    neg = np.maximum(-exp10, 0).astype(float)
    return mant * 10.0**pos / 10.0**neg


def _grid_value(key: str, g: np.ndarray) -> np.ndarray:
    """Value of global grid index g = decade * N + j (j the index in the decade)."""
    mant, digits = _MANTISSAS[key]
    n = mant.size
    decade, j = np.divmod(g, n)
    return _value(mant[j], decade - (digits - 1))


def series(name: str) -> np.ndarray:
    """Mantissas of one decade of a preferred-number series.

    Parameters
    ----------
    name : str
        Series name, ``"E3"`` to ``"E192"``, case-insensitive. [-]

    Returns
    -------
    numpy.ndarray
        The decade's values from 1.0 up to below 10, ascending (a new array on
        each call). [-]

    Raises
    ------
    pinlib.core.errors.InputError
        For an unknown series name.

    Notes
    -----
    E24 is the printed table; E12, E6, E3 are every 2nd, 4th, 8th E24 value.
    E48, E96, E192 are round(100·10^(i/N))/100, i = 0..N-1, with E192's
    exception 9.20 (the formula gives 9.19).

    References
    ----------
    IEC 60063, Preferred number series for resistors and capacitors (edition not
    recorded in REFERENCES.md).

    Examples
    --------
    >>> series("E6").tolist()
    [1.0, 1.5, 2.2, 3.3, 4.7, 6.8]
    """
    key = _series_key(name)
    mant, digits = _MANTISSAS[key]
    return _value(mant, np.full(mant.shape, -(digits - 1)))


def values_in_range(name: str, lo: float, hi: float) -> np.ndarray:
    """All values of a series between two bounds, over as many decades as needed.

    Parameters
    ----------
    name : str
        Series name, ``"E3"`` to ``"E192"``, case-insensitive. [-]
    lo : float
        Lower bound, included. [any unit]
    hi : float
        Upper bound, included; at least ``lo``. [any unit]

    Returns
    -------
    numpy.ndarray
        Ascending series values v with lo <= v <= hi; a bound that lies on a
        series value within a relative 1e-9 includes it. [same unit as lo]

    Raises
    ------
    pinlib.core.errors.InputError
        For an unknown series, a bound that is not positive and finite, or
        ``lo > hi``.

    Examples
    --------
    >>> values_in_range("E12", 1e3, 3.3e3).tolist()
    [1000.0, 1200.0, 1500.0, 1800.0, 2200.0, 2700.0, 3300.0]
    """
    key = _series_key(name)
    lo_a = _check_positive(lo, "lo")
    hi_a = _check_positive(hi, "hi")
    if lo_a.ndim or hi_a.ndim:
        raise InputError(M.BOUND_NOT_SINGLE, field="lo/hi", value=(lo, hi))
    lo_f, hi_f = float(lo_a), float(hi_a)
    if lo_f > hi_f:
        raise InputError(
            M.LOWER_ABOVE_UPPER, field="lo", value=lo_f, expected=f"<= hi ({hi_f:g})"
        )
    n = _MANTISSAS[key][0].size
    # One decade of margin either side covers any rounding in floor(log10()).
    d_lo = int(np.floor(np.log10(lo_f))) - 1
    d_hi = int(np.floor(np.log10(hi_f))) + 1
    g = np.arange(d_lo * n, (d_hi + 1) * n)
    values = _grid_value(key, g)
    keep = (values >= lo_f * (1.0 - RTOL)) & (values <= hi_f * (1.0 + RTOL))
    return values[keep]


def _bracket(key: str, x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Largest series value <= x and smallest >= x (each within RTOL)."""
    log_m = _LOG_MANTISSAS[key]
    n = log_m.size
    lx = np.log10(x)
    decade = np.floor(lx)
    frac = lx - decade
    # j0: index of the largest mantissa whose log is <= frac.  frac may be off by
    # a few ulp, so the exact answer is found among the four neighbours g0-1..g0+2.
    j0 = np.searchsorted(log_m, frac, side="right") - 1
    g0 = decade.astype(np.int64) * n + j0
    offsets = np.arange(-1, 3)
    g = g0[..., np.newaxis] + offsets
    cand = _grid_value(key, g)
    xs = x[..., np.newaxis]
    low_ok = cand <= xs * (1.0 + RTOL)
    high_ok = cand >= xs * (1.0 - RTOL)
    lower = np.max(np.where(low_ok, cand, -np.inf), axis=-1)
    upper = np.min(np.where(high_ok, cand, np.inf), axis=-1)
    return lower, upper


def _result(arr: np.ndarray):
    """A 0-d array back to a numpy float, anything else unchanged."""
    return arr[()] if arr.ndim == 0 else arr


def above(name: str, x):
    """Smallest series value at or above x.

    Parameters
    ----------
    name : str
        Series name, ``"E3"`` to ``"E192"``, case-insensitive. [-]
    x : float or array_like
        Values to round up; positive and finite. [any unit]

    Returns
    -------
    float or numpy.ndarray
        Same shape as x.  An x within a relative 1e-9 of a series value
        returns that value. [same unit as x]

    Raises
    ------
    pinlib.core.errors.InputError
        For an unknown series or an x that is not positive and finite.

    Examples
    --------
    >>> float(above("E24", 2345.0))
    2400.0
    """
    key = _series_key(name)
    xa = _check_positive(x, "x")
    return _result(_bracket(key, xa)[1])


def below(name: str, x):
    """Largest series value at or below x.

    Parameters
    ----------
    name : str
        Series name, ``"E3"`` to ``"E192"``, case-insensitive. [-]
    x : float or array_like
        Values to round down; positive and finite. [any unit]

    Returns
    -------
    float or numpy.ndarray
        Same shape as x.  An x within a relative 1e-9 of a series value
        returns that value. [same unit as x]

    Raises
    ------
    pinlib.core.errors.InputError
        For an unknown series or an x that is not positive and finite.

    Examples
    --------
    >>> float(below("E6", 23.76e3))
    22000.0
    """
    key = _series_key(name)
    xa = _check_positive(x, "x")
    return _result(_bracket(key, xa)[0])


_HOW = ("log", "linear")


def nearest(name: str, x, *, how: str = "log"):
    """Series value nearest to x, by ratio (default) or by difference.

    Parameters
    ----------
    name : str
        Series name, ``"E3"`` to ``"E192"``, case-insensitive. [-]
    x : float or array_like
        Values to round; positive and finite. [any unit]
    how : {"log", "linear"}
        ``"log"`` (default) picks the neighbour with the smaller ratio
        max(v/x, x/v), the natural distance for a geometric series;
        ``"linear"`` picks the smaller |v - x|, as the ``eseries`` package's
        ``find_nearest`` does. [-]

    Returns
    -------
    float or numpy.ndarray
        Same shape as x; always :func:`below` or :func:`above` of x.  A tie
        goes to the lower value. [same unit as x]

    Raises
    ------
    pinlib.core.errors.InputError
        For an unknown series or ``how``, or an x that is not positive and
        finite.

    Notes
    -----
    The two rules differ just below the geometric mean of two neighbours: for
    E24, x = 1049 lies nearer 1000 by difference (49 vs 51) but nearer 1100 by
    ratio (1049/1000 = 1.049 > 1100/1049 = 1.0486).  The log rule compares
    x/lower with upper/x, which avoids forming x² or lower·upper.

    Examples
    --------
    >>> float(nearest("E24", 1049.0)), float(nearest("E24", 1049.0, how="linear"))
    (1100.0, 1000.0)
    """
    key = _series_key(name)
    if how not in _HOW:
        raise InputError(
            M.UNKNOWN_ROUNDING, field="how", value=how, expected='"log" or "linear"'
        )
    xa = _check_positive(x, "x")
    lower, upper = _bracket(key, xa)
    if how == "log":
        take_lower = xa / lower <= upper / xa
    else:
        take_lower = (xa - lower) <= (upper - xa)
    return _result(np.where(take_lower, lower, upper))
