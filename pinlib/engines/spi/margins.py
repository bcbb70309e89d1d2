"""The SPI margin formulas, vectorised over flights and timing values, and the highest clock at
which they all hold (:func:`max_clock`, in closed form)."""

from __future__ import annotations

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError


def _a(x):
    return np.asarray(x, dtype=float)


def _out(x):
    return x[()] if np.ndim(x) == 0 else x


def copi_setup_available(period, sclk_early, t_valid, copi_late):
    """Setup time COPI leaves at the peripheral before its sampling edge.

    Parameters
    ----------
    period : float or array_like
        Clock period. [s]
    sclk_early : float or array_like
        Earliest flight of the sampling SCLK edge to the peripheral. [s]
    t_valid : float or array_like
        Controller's launch edge to COPI valid at its pin (max). [s]
    copi_late : float or array_like
        Latest flight of a COPI edge to the peripheral. [s]

    Returns
    -------
    numpy.ndarray or float
        ``period/2 + sclk_early - t_valid - copi_late``; compare with the
        peripheral's ``t_setup``. [s]

    Examples
    --------
    >>> round(float(copi_setup_available(40e-9, 0.5e-9, 8e-9, 1.5e-9)) * 1e9, 3)
    11.0
    """
    out = _a(period) / 2.0 + _a(sclk_early) - _a(t_valid) - _a(copi_late)
    return _out(out)


def copi_hold_available(period, sclk_late, copi_early):
    """Hold time COPI leaves at the peripheral after its sampling edge.

    Parameters
    ----------
    period : float or array_like
        Clock period. [s]
    sclk_late : float or array_like
        Latest flight of the sampling SCLK edge to the peripheral. [s]
    copi_early : float or array_like
        Earliest flight of a COPI edge to the peripheral (the controller's minimum
        output delay is taken as 0). [s]

    Returns
    -------
    numpy.ndarray or float
        ``period/2 + copi_early - sclk_late``; compare with the peripheral's
        ``t_hold``. [s]

    Examples
    --------
    >>> round(float(copi_hold_available(40e-9, 1e-9, 0.5e-9)) * 1e9, 3)
    19.5
    """
    return _out(_a(period) / 2.0 + _a(copi_early) - _a(sclk_late))


def cipo_setup_available(period, sclk_late, t_valid, cipo_late, t_path=0.0):
    """Setup time CIPO leaves at the controller before its sampling edge.

    Parameters
    ----------
    period : float or array_like
        Clock period. [s]
    sclk_late : float or array_like
        Latest flight of the launching SCLK edge to the peripheral. [s]
    t_valid : float or array_like
        Peripheral's clock edge to CIPO valid at its pin, into its test load (max). [s]
    cipo_late : float or array_like
        Latest flight of a CIPO edge from the peripheral to the controller. [s]
    t_path : float or array_like, optional
        Delay of bridging parts on the round trip (each counted once per crossing:
        ``2 t_pd`` for one isolator). [s]

    Returns
    -------
    numpy.ndarray or float
        ``period/2 - (sclk_late + t_valid + cipo_late + t_path)``; compare with the
        controller's ``t_setup``. [s]

    Notes
    -----
    The round trip of the published budget ``T/2 >= t(SCLK out) + t_valid +
    t(CIPO back) + t_setup`` (REFERENCES.md, SPI).

    Examples
    --------
    >>> round(float(cipo_setup_available(40e-9, 1e-9, 7e-9, 1.5e-9)) * 1e9, 3)
    10.5
    """
    out = _a(period) / 2.0 - (_a(sclk_late) + _a(t_valid) + _a(cipo_late) + _a(t_path))
    return _out(out)


def cipo_hold_available(period, sclk_early, cipo_early):
    """Hold time CIPO leaves at the controller after its sampling edge.

    Parameters
    ----------
    period : float or array_like
        Clock period. [s]
    sclk_early : float or array_like
        Earliest flight of the next launching SCLK edge to the peripheral. [s]
    cipo_early : float or array_like
        Earliest flight of a CIPO edge back to the controller (the peripheral's
        minimum output delay is taken as 0). [s]

    Returns
    -------
    numpy.ndarray or float
        ``period/2 + sclk_early + cipo_early``; compare with the controller's
        ``t_hold``. [s]

    Examples
    --------
    >>> round(float(cipo_hold_available(40e-9, 0.5e-9, 0.5e-9)) * 1e9, 3)
    21.0
    """
    return _out(_a(period) / 2.0 + _a(sclk_early) + _a(cipo_early))


def cs_setup_available(lead, sclk_early, cs_late):
    """Time from CS asserted at the peripheral to the first SCLK edge there.

    Parameters
    ----------
    lead : float or array_like
        Controller's time from asserting CS to its first SCLK edge, at its pins. [s]
    sclk_early : float or array_like
        Earliest flight of the first SCLK edge to the peripheral. [s]
    cs_late : float or array_like
        Latest flight of the asserting (falling) CS edge to the peripheral. [s]

    Returns
    -------
    numpy.ndarray or float
        ``lead + sclk_early - cs_late``; compare with the peripheral's
        ``t_cs_setup``. [s]

    Examples
    --------
    >>> round(float(cs_setup_available(20e-9, 0.5e-9, 1.5e-9)) * 1e9, 3)
    19.0
    """
    return _out(_a(lead) + _a(sclk_early) - _a(cs_late))


def max_clock(a, k, f_limit=np.inf):
    """Highest clock at which every margin ``a_i T - k_i`` is at least zero.

    Parameters
    ----------
    a : array_like
        Coefficient of the period in each margin, ``>= 0``; the margins run along the
        last axis. [1]
    k : array_like
        Period-independent part of each margin (required time minus fixed terms),
        broadcast with ``a``. [s]
    f_limit : float or array_like, optional
        Further clock limits already in Hz (the parts' ``f_max``), broadcast over the
        leading axes. [Hz]

    Returns
    -------
    numpy.ndarray or float
        The clock ``1 / T_min`` with ``T_min = max_i(k_i / a_i)`` over the margins
        with ``a_i > 0`` (none below 0), capped at ``f_limit``; 0 when a margin with
        ``a_i = 0`` is negative (no clock satisfies it); ``inf`` when nothing limits
        the clock. [Hz]

    Notes
    -----
    Each margin is linear in the period and non-decreasing (``a_i >= 0``), so the set
    of periods satisfying all of them is ``T >= T_min``: the closed form is exact.

    Examples
    --------
    >>> float(max_clock([0.5, 0.5], [10e-9, 12.5e-9])) / 1e6
    40.0
    """
    a = _a(a)
    k = _a(k)
    a, k = np.broadcast_arrays(a, k)
    if not np.all(a >= 0.0):
        raise InputError(M.NEGATIVE_PERIOD_COEFFICIENT, field="a",
                         value=a, expected="a >= 0 [1]")
    slope = a > 0.0
    need = np.where(slope, k / np.where(slope, a, 1.0), np.where(k <= 0.0, 0.0, np.inf))
    t_min = np.max(np.maximum(need, 0.0), axis=-1) if need.ndim else np.maximum(need, 0.0)
    f = np.where(t_min > 0.0, 1.0 / np.where(t_min > 0.0, t_min, 1.0), np.inf)
    f = np.where(np.isinf(t_min), 0.0, f)
    return _out(np.minimum(f, _a(f_limit)))
