"""Single-pole RC edges: pull-up rise times, pull-up limits and ramps through RC.

Everything here is a closed form (or, for the crossing of a ramp through RC, a
vectorised Newton solve) in SI units, working elementwise over numpy arrays.

The step response of a resistor ``r`` into a capacitor ``c`` that starts discharged is
``v(t) = V (1 - exp(-t / tau))`` with ``tau = r c``; it reaches the fraction ``f`` of
its final value at ``-tau ln(1 - f)``.  The time between two fractions is therefore
``tau ln((1 - lo) / (1 - hi))``; the constants below are that factor for the usual
pairs of levels.
"""

from __future__ import annotations

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.physics import guards

__all__ = [
    "RISE_30_70",
    "RISE_10_90",
    "RISE_20_80",
    "threshold_time",
    "rc_rise_time",
    "smbus_rise_factor",
    "rp_max",
    "rp_min",
    "ramp_rc_response",
    "ramp_rc_crossing",
    "ramp_rc_edge_time",
]

#: 30 % to 70 % rise of an RC step, in units of RC: ln(7/3) = 0.8473 (UM10204 rev. 6 §7.1).
RISE_30_70 = float(np.log(7.0 / 3.0))
#: 10 % to 90 % rise of an RC step, in units of RC: ln 9 = 2.197.
RISE_10_90 = float(np.log(9.0))
#: 20 % to 80 % rise of an RC step, in units of RC: ln 4 = 1.386.
RISE_20_80 = float(np.log(4.0))

# Below this ratio x the series 1 - x/2 + x^2/6 replaces (1 - exp(-x)) / x, whose
# direct form loses digits to cancellation (and is 0/0 at x = 0).
_SERIES_LIMIT = 1e-5

# Newton iterations in ramp_rc_crossing stop when every correction is below this
# fraction of the time constant (or after _MAX_NEWTON iterations).
_NEWTON_RTOL = 1e-13
_MAX_NEWTON = 100


def _fraction(value, name: str, *, allow_zero: bool = True) -> np.ndarray:
    """Check that ``value`` holds fractions of a swing in [0, 1)."""
    f = np.asarray(value, dtype=float)
    low_ok = f >= 0.0 if allow_zero else f > 0.0
    if not np.all(low_ok & (f < 1.0)):
        raise InputError(
            M.FRACTION_OUT_OF_RANGE,
            field=name,
            value=value,
            expected="0 <= fraction < 1" if allow_zero else "0 < fraction < 1",
        )
    return f


def _as_array(value, name: str) -> np.ndarray:
    return np.asarray(value, dtype=float)


def _non_negative(value, name: str, unit: str) -> np.ndarray:
    return guards.non_negative(value, name, unit, convert=_as_array)


def _positive(value, name: str, unit: str) -> np.ndarray:
    return guards.positive(value, name, unit, convert=_as_array)


def _one_minus_exp_over(x: np.ndarray) -> np.ndarray:
    """``(1 - exp(-x)) / x`` for ``x >= 0``, including ``x = 0`` (1) and ``x = inf`` (0)."""
    x = np.asarray(x, dtype=float)
    small = x < _SERIES_LIMIT
    # Divide only where x is not small, so that x = 0 never reaches the division.
    x_safe = np.where(small, 1.0, x)
    direct = -np.expm1(-x_safe) / x_safe
    x_small = np.where(small, x, 0.0)
    series = 1.0 - x_small / 2.0 + x_small * x_small / 6.0
    return np.where(small, series, direct)


def threshold_time(fraction, tau):
    """Time for an RC step response to reach a fraction of its final value.

    Parameters
    ----------
    fraction : float or array_like
        Fraction of the final value, 0 <= fraction < 1. [1]
    tau : float or array_like
        Time constant R·C. [s]

    Returns
    -------
    numpy.ndarray or float
        Time from the step to the crossing. [s]

    Notes
    -----
    From ``v(t) = 1 - exp(-t / tau)``: ``t = -tau ln(1 - fraction)``, written with
    ``log1p`` so that small fractions keep their digits.

    Examples
    --------
    >>> round(float(threshold_time(0.7, 1.0)), 4)
    1.204

    References
    ----------
    NXP UM10204, I2C-bus specification and user manual, rev. 6 (2014), §7.1.
    """
    f = _fraction(fraction, "fraction")
    tau = _non_negative(tau, "tau", "[s]")
    return -tau * np.log1p(-f)


def rc_rise_time(r, c, lo=0.3, hi=0.7):
    """Rise time of an RC step response between two fractions of the swing.

    Parameters
    ----------
    r : float or array_like
        Resistance, e.g. the pull-up Rp. [Ω]
    c : float or array_like
        Capacitance, e.g. the bus capacitance Cb. [F]
    lo : float or array_like, optional
        Lower level as a fraction of the swing; 0.3 by default (UM10204). [1]
    hi : float or array_like, optional
        Upper level as a fraction of the swing; 0.7 by default (UM10204). [1]

    Returns
    -------
    numpy.ndarray or float
        Time from ``lo`` to ``hi``. [s]

    Notes
    -----
    ``tr = R C ln((1 - lo) / (1 - hi))``; with 30 % and 70 % this is ``0.8473 R C``.

    Examples
    --------
    >>> round(float(rc_rise_time(1000.0, 1e-9)) * 1e9, 1)
    847.3

    References
    ----------
    NXP UM10204, I2C-bus specification and user manual, rev. 6 (2014), §7.1.
    """
    lo = _fraction(lo, "lo")
    hi = _fraction(hi, "hi")
    if not np.all(hi > lo):
        raise InputError(M.UPPER_NOT_ABOVE_LOWER, field="hi", value=hi,
                         expected=f"hi > lo = {lo}")
    r = _non_negative(r, "r", "[Ω]")
    c = _non_negative(c, "c", "[F]")
    return r * c * (np.log1p(-lo) - np.log1p(-hi))


def smbus_rise_factor(vdd, v_lo=0.65, v_hi=1.50):
    """RC factor of the SMBus rise time, measured between two absolute voltages.

    Parameters
    ----------
    vdd : float or array_like
        Pull-up supply voltage; must exceed ``v_hi``. [V]
    v_lo : float or array_like, optional
        Lower measuring level, VIL(max) - 0.15 V = 0.65 V by default. [V]
    v_hi : float or array_like, optional
        Upper measuring level, VIH(min) + 0.15 V = 1.50 V by default. [V]

    Returns
    -------
    numpy.ndarray or float
        Factor k such that the rise time is ``k R C``. [1]

    Notes
    -----
    SMBus measures tR from (VIL,max - 0.15 V) to (VIH,min + 0.15 V), i.e. 0.65 V to
    1.50 V with the 0.8 V / 1.35 V levels of Tables 3 and 4, not from 30 % to 70 %
    of VDD.  For a step from 0 V towards ``vdd`` through R into C:
    ``k = ln((vdd - v_lo) / (vdd - v_hi))`` (0.387 at 3.3 V, 1.344 at 1.8 V).

    Examples
    --------
    >>> round(float(smbus_rise_factor(3.3)), 3)
    0.387

    References
    ----------
    System Management Bus (SMBus) Specification, version 3.1 (19 March 2018),
    Tables 2-4 and the notes on tR and tF.
    """
    vdd = _positive(vdd, "vdd", "[V]")
    v_lo = _non_negative(v_lo, "v_lo", "[V]")
    v_hi = _positive(v_hi, "v_hi", "[V]")
    if not np.all(v_hi > v_lo):
        raise InputError(M.UPPER_NOT_ABOVE_LOWER, field="v_hi",
                         value=v_hi, expected=f"v_hi > v_lo = {v_lo} [V]")
    if not np.all(vdd > v_hi):
        raise InputError(M.SUPPLY_BELOW_UPPER_LEVEL, field="vdd",
                         value=vdd, expected=f"vdd > v_hi = {v_hi} [V]")
    return np.log((vdd - v_lo) / (vdd - v_hi))


def rp_max(tr, cb, rise_factor=RISE_30_70):
    """Largest pull-up resistance that meets a rise-time limit.

    Parameters
    ----------
    tr : float or array_like
        Maximum allowed rise time. [s]
    cb : float or array_like
        Bus capacitance. [F]
    rise_factor : float or array_like, optional
        Rise time in units of RC between the measuring levels; ``RISE_30_70``
        (0.8473, UM10204) by default, ``smbus_rise_factor(vdd)`` for SMBus. [1]

    Returns
    -------
    numpy.ndarray or float
        Rp(max). [Ω]

    Notes
    -----
    UM10204 rev. 6 eq. 1: ``Rp(max) = tr / (0.8473 Cb)``.

    Examples
    --------
    >>> round(float(rp_max(300e-9, 200e-12)))
    1770

    References
    ----------
    NXP UM10204, I2C-bus specification and user manual, rev. 6 (2014), §7.1, eq. 1.
    """
    tr = _non_negative(tr, "tr", "[s]")
    cb = _positive(cb, "cb", "[F]")
    rise_factor = _positive(rise_factor, "rise_factor", "[1]")
    return tr / (rise_factor * cb)


def rp_min(vdd, v_ol, i_ol):
    """Smallest pull-up resistance with which a driver still pulls the line low enough.

    Parameters
    ----------
    vdd : float or array_like
        Pull-up supply voltage (take its maximum). [V]
    v_ol : float or array_like
        Maximum low-level output voltage at ``i_ol``. [V]
    i_ol : float or array_like
        Low-level output (sink) current at which ``v_ol`` is specified. [A]

    Returns
    -------
    numpy.ndarray or float
        Rp(min). [Ω]

    Notes
    -----
    UM10204 rev. 6 eq. 2: ``Rp(min) = (VDD - VOL(max)) / IOL``.

    Examples
    --------
    >>> round(float(rp_min(5.5, 0.4, 3e-3)))
    1700

    References
    ----------
    NXP UM10204, I2C-bus specification and user manual, rev. 6 (2014), §7.1, eq. 2.
    """
    vdd = _positive(vdd, "vdd", "[V]")
    v_ol = _non_negative(v_ol, "v_ol", "[V]")
    i_ol = _positive(i_ol, "i_ol", "[A]")
    if not np.all(vdd > v_ol):
        raise InputError(M.LOW_LEVEL_NOT_BELOW_SUPPLY, field="v_ol", value=v_ol,
                         expected=f"v_ol < vdd = {vdd} [V]")
    return (vdd - v_ol) / i_ol


def ramp_rc_response(t, t_ramp, tau):
    """Response of RC to a linear ramp from 0 to 1, normalised to the final value.

    A Thevenin source rises linearly from 0 to 1 between ``t = 0`` and ``t = t_ramp``
    (0-100 %), then stays at 1; it drives a resistor into a discharged capacitor with
    time constant ``tau``.

    Parameters
    ----------
    t : float or array_like
        Time from the start of the ramp. [s]
    t_ramp : float or array_like
        Duration of the source ramp, 0 % to 100 %; 0 gives the step response. [s]
    tau : float or array_like
        Time constant R·C; 0 gives the ramp itself. [s]

    Returns
    -------
    numpy.ndarray or float
        Capacitor voltage as a fraction of the final value. [1]

    Notes
    -----
    With ``phi(x) = (1 - exp(-x)) / x``:

    * ``t <= t_ramp``: ``v = (t - tau (1 - exp(-t/tau))) / t_ramp
      = (t / t_ramp) (1 - phi(t / tau))``;
    * ``t > t_ramp``: ``v = 1 - (tau / t_ramp)(1 - exp(-t_ramp/tau)) exp(-(t - t_ramp)/tau)
      = 1 - phi(t_ramp / tau) exp(-(t - t_ramp) / tau)``.

    The ``phi`` forms are used because they stay finite at both limits: ``phi(0) = 1``
    (a step: ``t_ramp -> 0``) and ``phi(inf) = 0`` (no RC: ``tau -> 0``).  The ratios
    ``t/tau`` and ``t_ramp/tau`` are formed only where ``tau > 0`` and set to ``inf``
    where ``tau = 0``; ``t / t_ramp`` is formed only inside the ramp, where
    ``t_ramp > t > 0``.  This is the superposition of two delayed ramps through a
    single pole (linear circuit theory).

    Examples
    --------
    >>> round(float(ramp_rc_response(1e-9, 1e-9, 1e-9)), 4)
    0.3679
    """
    t = np.asarray(t, dtype=float)
    t_ramp = _non_negative(t_ramp, "t_ramp", "[s]")
    tau = _non_negative(tau, "tau", "[s]")
    t, t_ramp, tau = np.broadcast_arrays(t, t_ramp, tau)

    has_tau = tau > 0.0
    tau_safe = np.where(has_tau, tau, 1.0)
    t_pos = np.maximum(t, 0.0)
    # t / tau and t_ramp / tau: inf where tau = 0 (no division by zero is performed).
    x = np.where(has_tau, t_pos / tau_safe, np.inf)
    x_ramp = np.where(has_tau, t_ramp / tau_safe, np.inf)

    in_ramp = (t > 0.0) & (t <= t_ramp)
    # t_ramp > 0 wherever in_ramp holds; elsewhere divide by 1 and discard.
    ramp_part = np.where(in_ramp, t_pos / np.where(in_ramp, t_ramp, 1.0), 0.0)
    during = ramp_part * (1.0 - _one_minus_exp_over(x))

    # exp(-(t - t_ramp)/tau); -inf exponent (tau = 0) gives 0 without a warning.
    after_x = np.where(has_tau, np.maximum(t - t_ramp, 0.0) / tau_safe, np.inf)
    after = 1.0 - _one_minus_exp_over(x_ramp) * np.exp(-after_x)

    out = np.where(t <= 0.0, 0.0, np.where(in_ramp, during, after))
    return out[()] if out.ndim == 0 else out


def ramp_rc_crossing(fraction, t_ramp, tau):
    """Time at which a ramp through RC crosses a fraction of its final value.

    Parameters
    ----------
    fraction : float or array_like
        Level as a fraction of the final value, 0 <= fraction < 1. [1]
    t_ramp : float or array_like
        Duration of the source ramp, 0 % to 100 %. [s]
    tau : float or array_like
        Time constant R·C. [s]

    Returns
    -------
    numpy.ndarray or float
        Crossing time from the start of the ramp. [s]

    Notes
    -----
    Let ``s = t / tau`` and ``m = t_ramp / tau``.  The response at the end of the ramp
    is ``1 - phi(m)`` (see :func:`ramp_rc_response`).

    * If ``fraction >= 1 - phi(m)`` the crossing lies after the ramp and is closed
      form: ``t = t_ramp + tau ln(phi(m) / (1 - fraction))``.
    * Otherwise it solves ``s - (1 - exp(-s)) = fraction m`` on ``0 < s <= m``.  The
      left side is convex and increasing, so Newton's method started above the root
      (at ``min(m, fraction m + 1)``, where the left side is not below the right)
      descends monotonically onto it without overshooting; it runs over whole arrays
      at once and stops when every step is below 1e-13 ``tau``.

    ``tau = 0`` gives ``fraction * t_ramp`` (the ramp); ``t_ramp = 0`` gives
    ``-tau ln(1 - fraction)`` (the step), both without a division by zero.

    Examples
    --------
    >>> round(float(ramp_rc_crossing(0.5, 0.0, 1.0)), 4)
    0.6931
    """
    f = _fraction(fraction, "fraction")
    t_ramp = _non_negative(t_ramp, "t_ramp", "[s]")
    tau = _non_negative(tau, "tau", "[s]")
    return _ramp_rc_crossing(f, t_ramp, tau)


def _ramp_rc_crossing(f, t_ramp, tau):
    """:func:`ramp_rc_crossing` without the input checks, for solver loops.

    The caller guarantees float arrays with ``0 <= f < 1``, ``t_ramp >= 0`` and
    ``tau >= 0`` (all finite); the arithmetic is the same, so are the results.
    """
    f, t_ramp, tau = np.broadcast_arrays(f, t_ramp, tau)

    has_tau = tau > 0.0
    tau_safe = np.where(has_tau, tau, 1.0)
    m = np.where(has_tau, t_ramp / tau_safe, 0.0)  # any finite value where tau = 0
    phi_m = _one_minus_exp_over(m)

    after = f >= 1.0 - phi_m
    # ln(phi(m) / (1 - f)) written as log(phi) - log1p(-f); phi(m) > 0 for finite m.
    s_after = m + np.log(phi_m) - np.log1p(-f)

    target = f * m
    # Newton from above the root converges without overshoot (g is convex and rising):
    # g(s) >= s - 1 everywhere and g(s) >= s^2 / 3 for s <= 1 bound the root from above.
    s = np.minimum(m, np.where(target <= 1.0 / 3.0, np.sqrt(3.0 * target), target + 1.0))
    active = ~after & (target > 0.0)
    for _ in range(_MAX_NEWTON):
        if not np.any(active):
            break
        # g(s) = s + expm1(-s) = s - (1 - exp(-s)); g'(s) = -expm1(-s) > 0 for s > 0.
        g = s + np.expm1(-s) - target
        slope = -np.expm1(-s)
        step = np.where(active, g / np.where(active, slope, 1.0), 0.0)
        s = s - step
        active = active & (np.abs(step) > _NEWTON_RTOL * np.maximum(s, 1.0))
    s_during = np.where(target > 0.0, s, 0.0)

    t = tau * np.where(after, s_after, s_during)
    t = np.where(has_tau, t, f * t_ramp)
    return t[()] if t.ndim == 0 else t


def ramp_rc_edge_time(t_ramp, tau, lo=0.1, hi=0.9):
    """Edge time between two levels of a ramp through RC.

    Parameters
    ----------
    t_ramp : float or array_like
        Duration of the source ramp, 0 % to 100 %. [s]
    tau : float or array_like
        Time constant R·C. [s]
    lo : float or array_like, optional
        Lower level as a fraction of the final value; 0.1 by default. [1]
    hi : float or array_like, optional
        Upper level as a fraction of the final value; 0.9 by default. [1]

    Returns
    -------
    numpy.ndarray or float
        ``ramp_rc_crossing(hi) - ramp_rc_crossing(lo)``. [s]

    Notes
    -----
    Limits: ``tau = 0`` gives ``(hi - lo) t_ramp``; ``t_ramp = 0`` gives
    ``tau ln((1 - lo) / (1 - hi))`` (2.197 tau for 10-90 %).

    Examples
    --------
    >>> round(float(ramp_rc_edge_time(0.0, 1.0)), 3)
    2.197
    """
    lo_a = _fraction(lo, "lo")
    hi_a = _fraction(hi, "hi")
    if not np.all(hi_a > lo_a):
        raise InputError(M.UPPER_NOT_ABOVE_LOWER, field="hi",
                         value=hi, expected=f"hi > lo = {lo}")
    return ramp_rc_crossing(hi_a, t_ramp, tau) - ramp_rc_crossing(lo_a, t_ramp, tau)
