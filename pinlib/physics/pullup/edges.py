"""Edges of a pulled-up open-drain line: the RC rise, a bound on the fall, the SCL
frequency they allow, and the bus capacitance from a measured rise."""

from __future__ import annotations

import math

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.core.quantity import format_si
from pinlib.physics.pullup.inputs import _arr, _non_negative, _out, _positive
from pinlib.physics.rc import RISE_30_70

__all__ = ["rise_time", "rise_time_with_leakage", "fall_time_bound", "scl_frequency",
           "capacitance_from_rise"]


def _log1p_over(x: np.ndarray) -> np.ndarray:
    """``log1p(x) / x`` for ``x > -1``, equal to 1 at ``x = 0`` (no 0/0)."""
    small = np.abs(x) < 1e-8
    xs = np.where(small, 1.0, x)
    return np.where(small, 1.0 - x / 2.0, np.log1p(xs) / xs)


def rise_time(rp, cb, rise_factor=RISE_30_70):
    """Rise time of a line charged through its pull-up.

    Parameters
    ----------
    rp : float or array_like
        Pull-up resistance. [Ω]
    cb : float or array_like
        Bus capacitance. [F]
    rise_factor : float or array_like, optional
        Rise time in units of RC: ``RISE_30_70`` (0.8473, UM10204) by default,
        ``RISE_10_90`` (2.197) or an SMBus rise factor from
        :func:`pinlib.physics.rc.smbus_rise_factor`. [1]

    Returns
    -------
    float or numpy.ndarray
        ``rise_factor · rp · cb``. [s]

    Examples
    --------
    >>> round(float(rise_time(2200.0, 200e-12)) * 1e9, 1)
    372.8
    """
    rp = _non_negative(rp, "rp", "[Ω]")
    cb = _non_negative(cb, "cb", "[F]")
    rise_factor = _positive(rise_factor, "rise_factor", "[1]")
    return _out(_rise_time(rp, cb, rise_factor))


def _rise_time(rp, cb, rise_factor):
    """:func:`rise_time` without its input checks."""
    return rise_factor * rp * cb


def rise_time_with_leakage(rp, cb, vdd, leakage, lo=0.3, hi=0.7):
    """Rise time of a line charged through its pull-up while its pins leak to ground.

    Parameters
    ----------
    rp : float or array_like
        Pull-up resistance. [Ω]
    cb : float or array_like
        Bus capacitance. [F]
    vdd : float or array_like
        Pull-up rail. [V]
    leakage : float or array_like
        The pins' leakage together, out of the line. [A]
    lo, hi : float, optional
        The edge's ends as fractions of ``vdd`` (30 % and 70 %, UM10204, by default). [1]

    Returns
    -------
    float or numpy.ndarray
        ``rp · cb · ln((V∞ − lo·vdd) / (V∞ − hi·vdd))`` with ``V∞ = vdd − leakage · rp``,
        the level the line settles at; ``inf`` where ``V∞`` does not pass ``hi · vdd``
        (the line never gets there). [s]

    Notes
    -----
    The line's node is ``cb dV/dt = (vdd − V)/rp − I``: a single pole of time constant
    ``rp · cb`` toward ``V∞``, so the time between two levels is ``rp cb ln`` of the ratio
    of their distances from ``V∞``. With no leakage it is the specification's
    ``0.8473 rp cb`` (UM10204 rev. 6 §7.1); the specification's formula leaves leakage
    out.

    Examples
    --------
    >>> round(float(rise_time_with_leakage(2200.0, 200e-12, 3.3, 0.0)) * 1e9, 1)
    372.8
    """
    rp = _non_negative(rp, "rp", "[Ω]")
    cb = _non_negative(cb, "cb", "[F]")
    vdd = _positive(vdd, "vdd", "[V]")
    leakage = _non_negative(leakage, "leakage", "[A]")
    v_end = vdd - leakage * rp
    a, b = v_end - lo * vdd, v_end - hi * vdd
    if b.ndim == 0:  # one line (every call of the engine's note): the same in floats
        return float(rp * cb) * math.log(float(a / b)) if b > 0 else math.inf
    with np.errstate(divide="ignore", invalid="ignore"):
        t = np.where(b > 0, rp * cb * np.log(np.where(b > 0, a / b, 1.0)), np.inf)
    return _out(t)


def _current_source_fall(rp, cb, vdd, i, v_from, v_to):
    """Fall from v_from to v_to under a constant sink current i against the pull-up."""
    g = 1.0 / rp
    u_lo = i - (vdd - v_to) * g
    ok = u_lo > 0
    u_safe = np.where(ok, u_lo, 1.0)
    dv = np.maximum(v_from - v_to, 0.0)
    x = dv * g / u_safe
    return np.where(ok, cb * dv / u_safe * _log1p_over(x), np.inf)


def _resistive_fall(rp, cb, vdd, r, v_from, v_to):
    """RC fall from v_from to v_to through a sink resistor r against the pull-up."""
    g = 1.0 / rp
    v_inf = vdd * r * g / (1.0 + r * g)
    tau = cb * r / (1.0 + r * g)
    ok = v_to > v_inf
    num = np.where(ok, v_from - v_inf, 2.0)
    den = np.where(ok, v_to - v_inf, 1.0)
    return np.where(ok, tau * np.log(np.maximum(num / den, 1.0)), np.inf)


def fall_time_bound(rp, cb, vdd, v_ol, i_ol, v_hi, v_lo, r_series=0.0):
    """Upper bound of the fall time of a line pulled low by an open-drain driver.

    Parameters
    ----------
    rp : float or array_like
        Pull-up resistance; ``inf`` for none. Take its minimum: it fights the sink. [Ω]
    cb : float or array_like
        Bus capacitance. [F]
    vdd : float or array_like
        Pull-up rail. [V]
    v_ol : float or array_like
        The driver's guaranteed low level at ``i_ol`` (max). [V]
    i_ol : float or array_like
        The sink current at which ``v_ol`` is guaranteed. [A]
    v_hi : float or array_like
        Upper measuring level, where the fall starts (0.7·VDD for I2C). [V]
    v_lo : float or array_like
        Lower measuring level, where it ends (0.3·VDD for I2C). [V]
    r_series : float or array_like, optional
        Series resistor between the driver's pin and the line; default 0. [Ω]

    Returns
    -------
    float or numpy.ndarray
        The bound; ``inf`` where the guaranteed sink current cannot pull the line
        through ``v_lo`` against the pull-up. [s]

    Notes
    -----
    The datasheet point guarantees at least ``i_ol`` at ``v_ol``.  For an output whose
    current rises with its voltage (monotone) and whose I–V curve bends down (concave,
    as a MOS transistor in its triode region), the current is then at least

    .. math::

        I(V_{pin}) \\ge \\min(V_{pin}/R_{on},\\ I_{OL}),\\qquad R_{on} = V_{OL}/I_{OL},

    the chord to the datasheet point below it and the plateau above it.  A resistor of
    :math:`R_{on}` alone would promise more than :math:`I_{OL}` above :math:`V_{OL}`,
    which no datasheet guarantees, so it is no bound.  Along the line voltage the knee
    lies at :math:`V_k = I_{OL}(R_{on} + R_s)`.  Above it the sink is a constant current
    against the pull-up's :math:`(V_{DD} - V)/R_p`:

    .. math::

        t_A = C R_p \\ln\\frac{I_{OL} - (V_{DD} - V_{hi})/R_p}{I_{OL} - (V_{DD} - V_{lo}')/R_p}

    (written as :math:`C\\Delta V/u\\cdot\\ln(1+x)/x`, finite for :math:`R_p = \\infty`);
    below it, an RC decay toward the divider level :math:`V_{DD}R/(R + R_p)` with
    :math:`R = R_{on} + R_s` and :math:`\\tau = C (R \\parallel R_p)`.  Derived from the
    circuit of UM10204 rev. 6 §7.1 and the sink point of its table 9.

    Examples
    --------
    >>> t = fall_time_bound(np.inf, 100e-12, 3.3, 0.4, 3e-3, 2.31, 0.99)
    >>> round(float(t) * 1e9, 1)
    44.0
    """
    rp = _positive(rp, "rp", "[Ω]", allow_inf=True)
    cb = _non_negative(cb, "cb", "[F]")
    vdd = _non_negative(vdd, "vdd", "[V]")
    v_ol = _positive(v_ol, "v_ol", "[V]")
    i_ol = _positive(i_ol, "i_ol", "[A]")
    r_s = _non_negative(r_series, "r_series", "[Ω]")
    v_hi = _arr(v_hi, "v_hi")
    v_lo = _arr(v_lo, "v_lo")
    if not np.all(v_hi > v_lo):
        raise InputError(M.UPPER_NOT_ABOVE_LOWER, field="v_hi", value=v_hi,
                         expected="v_hi > v_lo [V]")
    return _out(_fall_time_bound(rp, cb, vdd, v_ol, i_ol, v_hi, v_lo, r_s))


def _fall_time_bound(rp, cb, vdd, v_ol, i_ol, v_hi, v_lo, r_s):
    """:func:`fall_time_bound` without its input checks."""
    r = v_ol / i_ol + r_s
    v_knee = i_ol * r
    a_to = np.maximum(v_lo, v_knee)
    t_a = np.where(v_hi > a_to, _current_source_fall(rp, cb, vdd, i_ol, v_hi, a_to), 0.0)
    b_from = np.minimum(v_hi, v_knee)
    t_b = np.where(b_from > v_lo, _resistive_fall(rp, cb, vdd, r, b_from, v_lo), 0.0)
    return t_a + t_b


def scl_frequency(t_low, t_high, tr, tf):
    """SCL frequency of a controller that times its low and high periods from the levels it sees.

    Parameters
    ----------
    t_low : float or array_like
        SCL low period the controller counts. [s]
    t_high : float or array_like
        SCL high period the controller counts, from when it sees SCL high. [s]
    tr : float or array_like
        Rise time of SCL. [s]
    tf : float or array_like
        Fall time of SCL. [s]

    Returns
    -------
    float or numpy.ndarray
        :math:`1/(t_{LOW} + t_{HIGH} + t_r + t_f)`; 0 where an edge is unbounded (inf). [Hz]

    Notes
    -----
    UM10204 rev. 6 §7.2.1, eq. 3; fed the Table 10 minima and maximum edges it gives
    100 kHz, 400 kHz and 1 MHz.

    Examples
    --------
    >>> round(float(scl_frequency(1.3e-6, 0.6e-6, 300e-9, 300e-9)))
    400000
    """
    parts = []
    for x, n in ((t_low, "t_low"), (t_high, "t_high"), (tr, "tr"), (tf, "tf")):
        a = _arr(x, n)
        if not np.all((a >= 0) & ~np.isnan(a)):
            raise InputError(M.MUST_NOT_BE_NEGATIVE, field=n, value=x,
                             expected="a time >= 0 [s]")
        parts.append(a)
    total = sum(parts)  # an unbounded edge (inf) gives 0 Hz
    if not np.all(total > 0):
        raise InputError(M.CLOCK_PERIOD_ZERO, field="t_low", expected="a period > 0 s")
    return _out(1.0 / total)


def capacitance_from_rise(t_measured, rp, c_probe, *, lo=0.3, hi=0.7):
    """Bus capacitance from a rise time measured on the board, and the rise without the probe.

    Parameters
    ----------
    t_measured : float or array_like
        Rise time read on the oscilloscope between ``lo`` and ``hi``. [s]
    rp : float or array_like
        The effective pull-up on the line (every contributor in parallel). [Ω]
    c_probe : float or array_like
        Capacitance of the probe (its tip and ground lead as the datasheet gives). [F]
    lo : float, optional
        Lower level as a fraction of VDD; 0.3 by default. [1]
    hi : float, optional
        Upper level as a fraction of VDD; 0.7 by default. [1]

    Returns
    -------
    cb : float or numpy.ndarray
        Bus capacitance without the probe. [F]
    rise : float or numpy.ndarray
        The rise time between the same levels without the probe. [s]

    Raises
    ------
    InputError
        When the measured edge is faster than the probe alone would allow (the probe's
        capacitance exceeds the total).

    Notes
    -----
    An RC rise: :math:`t = R_p (C_b + C_{probe}) \\ln((1-lo)/(1-hi))`, so
    :math:`C_b = t / (R_p k) - C_{probe}` and the unloaded rise is :math:`k R_p C_b`
    (UM10204 rev. 6 §7.1).

    Examples
    --------
    >>> cb, t = capacitance_from_rise(300e-9, 2200.0, 10e-12)
    >>> round(float(cb) * 1e12, 1), round(float(t) * 1e9, 1)
    (150.9, 281.4)
    """
    t = _positive(t_measured, "t_measured", "[s]")
    rp = _positive(rp, "rp", "[Ω]")
    c_probe = _non_negative(c_probe, "c_probe", "[F]")
    lo_a, hi_a = _arr(lo, "lo"), _arr(hi, "hi")
    if not (np.all((lo_a >= 0) & (hi_a < 1) & (hi_a > lo_a))):
        raise InputError(M.LEVELS_OUT_OF_RANGE, field="lo/hi", value=(lo, hi),
                         expected="0 <= lo < hi < 1")
    k = np.log1p(-lo_a) - np.log1p(-hi_a)
    c_total = t / (rp * k)
    cb = c_total - c_probe
    if not np.all(cb > 0):
        raise InputError(M.RISE_FASTER_THAN_PROBE,
                         field="t_measured", value=t_measured,
                         expected=f"a rise longer than k·Rp·C_probe "
                                  f"= {format_si(float(np.min(k * rp * c_probe)), 's')}")
    return _out(cb), _out(k * rp * cb)
