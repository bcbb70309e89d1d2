"""Boards that pass, of all drawn, with the Wilson score interval of the fraction."""

from __future__ import annotations

import math
from statistics import NormalDist

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.core.quantity import range_text
from pinlib.core.valueclass import value_class

#: Confidence level of the pass-fraction intervals.
CONFIDENCE = 0.95


def wilson_interval(passes: int, n: int, confidence: float = CONFIDENCE) -> tuple[float, float]:
    """Wilson score interval of a binomial proportion.

    Parameters
    ----------
    passes : int
        Successes. [1]
    n : int
        Trials, at least 1. [1]
    confidence : float, optional
        Two-sided confidence level; default 0.95. [1]

    Returns
    -------
    (float, float)
        Lower and upper bound of the proportion. [1]

    Notes
    -----
    With :math:`\\hat p = k/n` and :math:`z` the normal quantile of
    :math:`(1 + \\gamma)/2`:

    .. math::

        \\frac{\\hat p + z^2/2n \\pm z\\sqrt{\\hat p(1-\\hat p)/n + z^2/4n^2}}{1 + z^2/n}

    (Wilson 1927).  Unlike the normal approximation it stays inside [0, 1] and keeps
    its coverage near 0 and 1, where yields live (Newcombe 1998).

    Examples
    --------
    >>> lo, hi = wilson_interval(81, 263)
    >>> round(lo, 4), round(hi, 4)
    (0.2553, 0.3662)
    """
    if n < 1 or passes < 0 or passes > n:
        raise InputError(M.NOT_A_PROPORTION, field="passes", value=(passes, n),
                         expected="0 <= passes <= n, n >= 1")
    if not 0 < confidence < 1:
        raise InputError(M.NOT_A_CONFIDENCE, field="confidence", value=confidence,
                         expected=range_text(0, 1, above=True, below=True))
    z = NormalDist().inv_cdf(0.5 + confidence / 2.0)
    p = passes / n
    denom = 1.0 + z * z / n
    centre = (p + z * z / (2.0 * n)) / denom
    half = z * math.sqrt(p * (1.0 - p) / n + z * z / (4.0 * n * n)) / denom
    # with no failure (no pass) the upper (lower) bound is 1 (0) exactly; the sum in
    # floating point gave 0.9999999999999998 (1.08e-19), which read as short of 100 %
    # (above 0 %) wherever a percentage shows enough digits to tell
    lo = 0.0 if passes == 0 else max(0.0, centre - half)
    hi = 1.0 if passes == n else min(1.0, centre + half)
    return lo, hi


@value_class
class Yield:
    """Boards that pass, of all drawn, with the Wilson interval; ``warned``: of those
    that pass, the boards on which some check warns (a warning passes)."""

    passes: int
    n: int
    interval: tuple[float, float]
    warned: int = 0

    @classmethod
    def of(cls, passes: int, n: int, warned: int = 0) -> Yield:
        """``passes`` of ``n`` boards with their Wilson interval
        (:func:`wilson_interval`), ``warned`` of them warning."""
        return cls(passes, n, wilson_interval(passes, n), warned)

    @property
    def fraction(self) -> float:
        return self.passes / self.n

    def to_json(self) -> dict:
        return {"passes": self.passes, "n": self.n, "fraction": self.fraction,
                "interval": list(self.interval), "warned": self.warned}

    def warned_text(self, of: str = " of them") -> str:
        """What follows the yield where boards that pass warn: ", 40 of them with a
        warning"; empty where none does."""
        if not self.warned:
            return ""
        return f", {self.warned:,}{of} with a warning"


def percent_text(x: float) -> str:
    """A fraction as a percentage with two decimals, or as many more (up to eight) as
    keep a fraction that is not 1 from reading 100.00 % and one that is not 0 from
    reading 0.00 %: 299,998 boards of 300,000 pass on 99.999%, not on 100.00%."""
    x = float(x)
    text = f"{x:.2%}"
    for digits in range(3, 9):
        shown = float(text[:-1])
        if (x >= 1.0 or shown < 100.0) and (x <= 0.0 or shown > 0.0):
            break
        text = f"{x:.{digits}%}"
    return text


def _pct(y: Yield) -> str:
    lo, hi = y.interval
    return (f"{percent_text(y.fraction)} [{percent_text(lo)}, {percent_text(hi)}] "
            f"({y.passes}/{y.n})")
