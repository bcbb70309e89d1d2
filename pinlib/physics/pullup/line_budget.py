"""The whole pull-up budget of one line (:func:`budget`), elementwise over Rp, Cb and VDD."""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from pinlib.physics.pullup.edges import fall_time_bound
from pinlib.physics.pullup.inputs import _arr, _non_negative, _out, _positive
from pinlib.physics.pullup.levels import (
    high_level,
    low_level,
    sink_current,
    sink_resistance,
    static_power,
)
from pinlib.physics.rc import RISE_10_90

__all__ = ["Budget", "budget"]


class Budget(NamedTuple):
    """Figures of one open-drain line for arrays of Rp, Cb and VDD (see :func:`budget`)."""

    rp_min: np.ndarray | float
    rp_max: np.ndarray | float
    rise_time: np.ndarray | float
    rise_time_10_90: np.ndarray | float
    fall_time: np.ndarray | float
    v_ol: np.ndarray | float
    v_oh: np.ndarray | float
    sink_current: np.ndarray | float
    power: np.ndarray | float


def budget(rp, cb, vdd, *, v_ol=0.4, i_ol=3e-3, tr_max=300e-9, leakage=0.0, r_series=0.0,
           lo=0.3, hi=0.7):
    """The whole pull-up budget of one line, elementwise over Rp, Cb and VDD.

    Parameters
    ----------
    rp : float or array_like
        Effective pull-up. [Ω]
    cb : float or array_like
        Bus capacitance. [F]
    vdd : float or array_like
        Pull-up rail. [V]
    v_ol : float or array_like, optional
        The driver's low level at ``i_ol``; default 0.4 V (UM10204 table 9). [V]
    i_ol : float or array_like, optional
        The driver's sink current; default 3 mA (UM10204 table 9). [A]
    tr_max : float or array_like, optional
        Rise-time limit for Rp(max); default 300 ns (Fast-mode, UM10204 table 10). [s]
    leakage : float or array_like, optional
        Total leakage of the line. [A]
    r_series : float or array_like, optional
        Series resistor of the driver. [Ω]
    lo : float, optional
        Lower measuring level as a fraction of VDD; default 0.3. [1]
    hi : float, optional
        Upper measuring level as a fraction of VDD; default 0.7. [1]

    Returns
    -------
    Budget
        ``rp_min`` (UM10204 eq. 2), ``rp_max`` (eq. 1 with the factor for ``lo``/``hi``),
        ``rise_time`` between ``lo`` and ``hi``, ``rise_time_10_90``, ``fall_time``
        (upper bound, :func:`fall_time_bound`), ``v_ol`` (at the actual current),
        ``v_oh`` (after leakage), ``sink_current``, ``power`` (while low). [SI]

    Examples
    --------
    >>> b = budget(np.array([1e3, 2.2e3]), 200e-12, 3.3)
    >>> np.round(b.rise_time * 1e9, 1).tolist()
    [169.5, 372.8]
    """
    rp, cb, vdd = np.broadcast_arrays(_positive(rp, "rp", "[Ω]"), _non_negative(cb, "cb", "[F]"),
                                      _positive(vdd, "vdd", "[V]"))
    lo_a, hi_a = _arr(lo, "lo"), _arr(hi, "hi")
    k = np.log1p(-lo_a) - np.log1p(-hi_a)
    r_sink = sink_resistance(v_ol, i_ol)
    with np.errstate(divide="ignore"):
        rpmax = np.where(cb > 0, _arr(tr_max, "tr_max") / (k * np.where(cb > 0, cb, 1.0)), np.inf)
    return Budget(
        rp_min=_out((vdd - _arr(v_ol, "v_ol")) / _arr(i_ol, "i_ol")),
        rp_max=_out(rpmax),
        rise_time=_out(k * rp * cb),
        rise_time_10_90=_out(RISE_10_90 * rp * cb),
        fall_time=fall_time_bound(rp, cb, vdd, v_ol, i_ol, hi_a * vdd, lo_a * vdd, r_series),
        v_ol=low_level(vdd, rp, r_sink, r_series),
        v_oh=high_level(vdd, rp, leakage),
        sink_current=sink_current(vdd, rp, r_sink, r_series),
        power=static_power(vdd, rp, r_sink, r_series),
    )
