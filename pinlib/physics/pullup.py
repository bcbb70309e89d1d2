"""Resistor pull-ups on open-drain lines: levels, currents, edges and what a bench gives.

Every function works elementwise on numpy arrays (pull-up Rp, bus capacitance Cb,
supply VDD, sink data) in SI units and knows nothing of parts or files; the open-drain
engine (:mod:`pinlib.engines.opendrain`) feeds them the worst-case corners of a design,
and sweeps feed them whole grids.

The circuit is the one of UM10204 §7: a pull-up resistor ``rp`` from the rail ``vdd``
to the bus line, the line's capacitance ``cb`` to ground, and an open-drain driver that
either lets go (the line rises through ``rp``) or sinks.  A driver's datasheet sink
point — at most ``v_ol`` while sinking ``i_ol`` — is used two ways:

* for static levels, as an on-resistance ``r_sink = v_ol / i_ol`` (the low level at the
  actual current then follows from the divider);
* for the fall time, as a guaranteed *current*: an output stage whose current rises
  with its voltage sinks at least ``i_ol`` whenever its pin is above ``v_ol``, so a
  constant ``i_ol`` bounds the fall time from above (a resistor of ``v_ol / i_ol`` would
  promise more current than that at higher voltages, which no datasheet guarantees).
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.physics import guards
from pinlib.physics.rc import RISE_10_90, RISE_30_70

__all__ = [
    "parallel",
    "sink_resistance",
    "low_level",
    "sink_current",
    "high_level",
    "static_power",
    "rise_time",
    "fall_time_bound",
    "pullup_margins",
    "cb_limit",
    "sink_current_needed",
    "current_source_needed",
    "scl_frequency",
    "translator_low_levels",
    "capacitance_from_rise",
    "Budget",
    "budget",
]


def _arr(x, name: str) -> np.ndarray:
    return guards.floats(x, name)


def _positive(x, name: str, unit: str, *, allow_inf: bool = False) -> np.ndarray:
    return guards.positive(x, name, unit, allow_inf=allow_inf, problem=M.MUST_BE_POSITIVE)


def _non_negative(x, name: str, unit: str) -> np.ndarray:
    return guards.non_negative(x, name, unit)


def _out(a):
    a = np.asarray(a)
    return a[()] if a.ndim == 0 else a


def _log1p_over(x: np.ndarray) -> np.ndarray:
    """``log1p(x) / x`` for ``x > -1``, equal to 1 at ``x = 0`` (no 0/0)."""
    small = np.abs(x) < 1e-8
    xs = np.where(small, 1.0, x)
    return np.where(small, 1.0 - x / 2.0, np.log1p(xs) / xs)


def parallel(*resistances):
    """Resistors in parallel.

    Parameters
    ----------
    *resistances : float or array_like
        Each contributor; ``inf`` stands for an absent one. [Ω]

    Returns
    -------
    float or numpy.ndarray
        ``1 / sum(1 / r)``; ``inf`` when every contributor is absent. [Ω]

    Examples
    --------
    >>> round(float(parallel(2200.0, 10e3, np.inf)), 1)
    1803.3
    """
    if not resistances:
        raise InputError(M.NO_RESISTANCES, field="resistances")
    arrays = [_positive(r, "resistances", "[Ω]", allow_inf=True) for r in resistances]
    g = sum(1.0 / a for a in np.broadcast_arrays(*arrays))
    with np.errstate(divide="ignore"):
        return _out(np.where(g > 0, 1.0 / np.where(g > 0, g, 1.0), np.inf))


def sink_resistance(v_ol, i_ol):
    """On-resistance of an open-drain sink from its datasheet point.

    Parameters
    ----------
    v_ol : float or array_like
        Maximum low-level output voltage at ``i_ol``. [V]
    i_ol : float or array_like
        Sink current at which ``v_ol`` is guaranteed. [A]

    Returns
    -------
    float or numpy.ndarray
        ``v_ol / i_ol``, the largest resistance the sink can have at that point. [Ω]

    Examples
    --------
    >>> round(float(sink_resistance(0.4, 3e-3)), 1)
    133.3
    """
    v_ol = _non_negative(v_ol, "v_ol", "[V]")
    i_ol = _positive(i_ol, "i_ol", "[A]")
    return _out(v_ol / i_ol)


def low_level(vdd, rp, r_sink, r_series=0.0):
    """Bus-line voltage while one driver holds the line low.

    Parameters
    ----------
    vdd : float or array_like
        Pull-up rail. [V]
    rp : float or array_like
        Pull-up resistance; ``inf`` for none. [Ω]
    r_sink : float or array_like
        The driver's on-resistance (see :func:`sink_resistance`). [Ω]
    r_series : float or array_like, optional
        Series resistor between the driver's pin and the bus; default 0. [Ω]

    Returns
    -------
    float or numpy.ndarray
        The low level on the bus side of the series resistor, where the other
        devices read it. [V]

    Notes
    -----
    A divider: :math:`V_{L} = V_{DD} (R_s + R_{on}) / (R_s + R_{on} + R_p)`.  The series
    resistor raises the level the receivers see by :math:`I R_s` (UM10204 rev. 6 §7.3).
    """
    vdd = _non_negative(vdd, "vdd", "[V]")
    rp = _positive(rp, "rp", "[Ω]", allow_inf=True)
    r_low = _non_negative(r_sink, "r_sink", "[Ω]") + _non_negative(r_series, "r_series", "[Ω]")
    # written with 1/rp so that rp = inf (no pull-up) gives 0 V
    g = 1.0 / rp
    return _out(vdd * r_low * g / (1.0 + r_low * g))


def sink_current(vdd, rp, r_sink, r_series=0.0):
    """Current a driver sinks while holding the line low.

    Parameters
    ----------
    vdd : float or array_like
        Pull-up rail. [V]
    rp : float or array_like
        Pull-up resistance; ``inf`` for none. [Ω]
    r_sink : float or array_like
        The driver's on-resistance. [Ω]
    r_series : float or array_like, optional
        Series resistor between the driver's pin and the bus; default 0. [Ω]

    Returns
    -------
    float or numpy.ndarray
        :math:`V_{DD} / (R_p + R_s + R_{on})`. [A]
    """
    vdd = _non_negative(vdd, "vdd", "[V]")
    rp = _positive(rp, "rp", "[Ω]", allow_inf=True)
    r_low = _non_negative(r_sink, "r_sink", "[Ω]") + _non_negative(r_series, "r_series", "[Ω]")
    g = 1.0 / rp
    return _out(vdd * g / (1.0 + r_low * g))


def high_level(vdd, rp, i_leak):
    """Bus-line voltage at rest, after the input leakage drop across the pull-up.

    Parameters
    ----------
    vdd : float or array_like
        Pull-up rail. [V]
    rp : float or array_like
        Pull-up resistance. [Ω]
    i_leak : float or array_like
        Sum of the leakage currents of every pin on the line. [A]

    Returns
    -------
    float or numpy.ndarray
        :math:`V_{DD} - R_p \\sum I_{leak}`. [V]

    Notes
    -----
    UM10204 rev. 6 §7.4 bounds Rp(max) by this drop against the 0.2·VDD high-level
    noise margin (given there as a graph).
    """
    vdd = _non_negative(vdd, "vdd", "[V]")
    rp = _positive(rp, "rp", "[Ω]")
    i_leak = _non_negative(i_leak, "i_leak", "[A]")
    return _out(vdd - rp * i_leak)


def static_power(vdd, rp, r_sink, r_series=0.0):
    """Power drawn from the pull-up rail while the line is held low.

    Parameters
    ----------
    vdd : float or array_like
        Pull-up rail. [V]
    rp : float or array_like
        Pull-up resistance. [Ω]
    r_sink : float or array_like
        The driver's on-resistance. [Ω]
    r_series : float or array_like, optional
        Series resistor of the driver; default 0. [Ω]

    Returns
    -------
    float or numpy.ndarray
        :math:`V_{DD}^2 / (R_p + R_s + R_{on})`. [W]
    """
    vdd = _non_negative(vdd, "vdd", "[V]")
    return _out(vdd * sink_current(vdd, rp, r_sink, r_series))


def rise_time(rp, cb, factor=RISE_30_70):
    """Rise time of a line charged through its pull-up.

    Parameters
    ----------
    rp : float or array_like
        Pull-up resistance. [Ω]
    cb : float or array_like
        Bus capacitance. [F]
    factor : float or array_like, optional
        Rise time in units of RC: ``RISE_30_70`` (0.8473, UM10204) by default,
        ``RISE_10_90`` (2.197) or an SMBus factor from
        :func:`pinlib.physics.rc.smbus_rise_factor`. [1]

    Returns
    -------
    float or numpy.ndarray
        ``factor · rp · cb``. [s]

    Examples
    --------
    >>> round(float(rise_time(2200.0, 200e-12)) * 1e9, 1)
    372.8
    """
    rp = _non_negative(rp, "rp", "[Ω]")
    cb = _non_negative(cb, "cb", "[F]")
    factor = _positive(factor, "factor", "[1]")
    return _out(factor * rp * cb)


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
    r = v_ol / i_ol + r_s
    v_knee = i_ol * r
    a_to = np.maximum(v_lo, v_knee)
    t_a = np.where(v_hi > a_to, _current_source_fall(rp, cb, vdd, i_ol, v_hi, a_to), 0.0)
    b_from = np.minimum(v_hi, v_knee)
    t_b = np.where(b_from > v_lo, _resistive_fall(rp, cb, vdd, r, b_from, v_lo), 0.0)
    return _out(t_a + t_b)


def pullup_margins(r, rp_min, rp_max, tolerance=0.0, r_parallel=np.inf):
    """Tolerance-adjusted relative margins of a pull-up to its window.

    Parameters
    ----------
    r : float or array_like
        Candidate pull-up resistor (nominal). [Ω]
    rp_min : float or array_like
        Smallest allowed effective pull-up, Rp(min). [Ω]
    rp_max : float or array_like
        Largest allowed effective pull-up, Rp(max). [Ω]
    tolerance : float or array_like, optional
        Relative tolerance of every pull-up contributor, e.g. 0.01. [1]
    r_parallel : float or array_like, optional
        Other pull-ups on the line in parallel (parts' own), nominal; ``inf`` for
        none. [Ω]

    Returns
    -------
    margin_low : float or numpy.ndarray
        ``(R_eff (1 - tol) - Rp(min)) / Rp(min)``. [1]
    margin_high : float or numpy.ndarray
        ``(Rp(max) - R_eff (1 + tol)) / Rp(max)``. [1]

    Notes
    -----
    ``R_eff = r ∥ r_parallel``; every contributor is taken at the same relative
    tolerance, so the parallel value moves by that tolerance too.
    """
    tol = _non_negative(tolerance, "tolerance", "[1]")
    r_eff = _arr(parallel(r, r_parallel), "r")
    rp_min = _positive(rp_min, "rp_min", "[Ω]", allow_inf=True)
    rp_max = _positive(rp_max, "rp_max", "[Ω]", allow_inf=True)
    # written as ratios so that an unbounded Rp(min) or Rp(max) (inf) gives -1 or +1
    return _out(r_eff * (1 - tol) / rp_min - 1.0), _out(1.0 - r_eff * (1 + tol) / rp_max)


def cb_limit(tr, rp_min, tolerance=0.0, factor=RISE_30_70):
    """The largest bus capacitance for which a resistor pull-up meets both limits.

    Parameters
    ----------
    tr : float or array_like
        Maximum rise time. [s]
    rp_min : float or array_like
        Rp(min) from the weakest sink. [Ω]
    tolerance : float or array_like, optional
        Relative tolerance of the pull-up. [1]
    factor : float or array_like, optional
        Rise time in units of RC (0.8473 for 30–70 %). [1]

    Returns
    -------
    float or numpy.ndarray
        :math:`C_{b,max} = t_r (1 - tol) / (k R_{p,min} (1 + tol))`: with a resistor at
        its lowest still above Rp(min), its highest still meets tr. [F]

    Notes
    -----
    From UM10204 rev. 6 eq. 1 and 2: the window is empty once
    :math:`t_r/(k C_b) < R_{p,min}`.  The §7.2.4 example: Rp(min) 1.7 kΩ at tr 300 ns
    limits Cb to about 200 pF.
    """
    tr = _non_negative(tr, "tr", "[s]")
    rp_min = _positive(rp_min, "rp_min", "[Ω]")
    tol = _non_negative(tolerance, "tolerance", "[1]")
    factor = _positive(factor, "factor", "[1]")
    return _out(tr * (1 - tol) / (factor * rp_min * (1 + tol)))


def sink_current_needed(vdd, v_ol, rp_max, tolerance=0.0):
    """The sink current a driver would need for a resistor pull-up to fit the window.

    Parameters
    ----------
    vdd : float or array_like
        Pull-up rail, at its maximum. [V]
    v_ol : float or array_like
        The driver's low level at that current. [V]
    rp_max : float or array_like
        Rp(max) from the rise-time limit. [Ω]
    tolerance : float or array_like, optional
        Relative tolerance of the pull-up. [1]

    Returns
    -------
    float or numpy.ndarray
        :math:`I_{OL} = (V_{DD} - V_{OL})(1 + tol)/(R_{p,max}(1 - tol))`. [A]
    """
    vdd = _non_negative(vdd, "vdd", "[V]")
    v_ol = _non_negative(v_ol, "v_ol", "[V]")
    rp_max = _positive(rp_max, "rp_max", "[Ω]")
    tol = _non_negative(tolerance, "tolerance", "[1]")
    return _out((vdd - v_ol) * (1 + tol) / (rp_max * (1 - tol)))


def current_source_needed(cb, v_lo, v_hi, tr):
    """Current of a current-source pull-up that moves the line between two levels in ``tr``.

    Parameters
    ----------
    cb : float or array_like
        Bus capacitance. [F]
    v_lo : float or array_like
        Lower measuring level (0.3·VDD for I2C). [V]
    v_hi : float or array_like
        Upper measuring level (0.7·VDD for I2C). [V]
    tr : float or array_like
        Rise time to meet. [s]

    Returns
    -------
    float or numpy.ndarray
        :math:`I = C_b (V_{hi} - V_{lo}) / t_r`: a constant current charges the line
        linearly. [A]

    Notes
    -----
    UM10204 rev. 6 §5.1 allows Fast-mode buses of 200 to 400 pF with a current source
    of at most 3 mA (or a switched-resistor pull-up).
    """
    cb = _non_negative(cb, "cb", "[F]")
    tr = _positive(tr, "tr", "[s]")
    return _out(cb * (_arr(v_hi, "v_hi") - _arr(v_lo, "v_lo")) / tr)


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


def translator_low_levels(v_near, rp_near, v_far, rp_far, r_on, r_sink):
    """Low levels on both sides of a pass-transistor translator while one side's driver sinks.

    Parameters
    ----------
    v_near : float or array_like
        Pull-up rail of the driver's side. [V]
    rp_near : float or array_like
        Pull-up of the driver's side; ``inf`` for none. [Ω]
    v_far : float or array_like
        Pull-up rail of the other side. [V]
    rp_far : float or array_like
        Pull-up of the other side. [Ω]
    r_on : float or array_like
        On-resistance of the pass transistor. [Ω]
    r_sink : float or array_like
        The driver's on-resistance plus its series resistor. [Ω]

    Returns
    -------
    v_near_low : float or numpy.ndarray
        Low level on the driver's side. [V]
    v_far_low : float or numpy.ndarray
        Low level on the other side: higher by :math:`I_{far} R_{on}`. [V]
    i_sink : float or numpy.ndarray
        Current the driver sinks: both sides' pull-up currents. [A]

    Notes
    -----
    Nodal analysis with the transistor conducting as a resistor: seen from the near
    node, the far pull-up in series with :math:`R_{on}` is one more pull-up to
    :math:`V_{far}`, so

    .. math::

        V_N = \\frac{V_{near}/R_{p,n} + V_{far}/(R_{on} + R_{p,f})}
              {1/R_{p,n} + 1/(R_{on} + R_{p,f}) + 1/R_{sink}},\\qquad
        V_F = V_N + (V_{far} - V_N)\\frac{R_{on}}{R_{on} + R_{p,f}} .
    """
    g_n = 1.0 / _positive(rp_near, "rp_near", "[Ω]", allow_inf=True)
    r_far = _positive(rp_far, "rp_far", "[Ω]") + _non_negative(r_on, "r_on", "[Ω]")
    g_f = 1.0 / r_far
    g_s = 1.0 / _positive(r_sink, "r_sink", "[Ω]")
    v_near = _non_negative(v_near, "v_near", "[V]")
    v_far = _non_negative(v_far, "v_far", "[V]")
    vn = (v_near * g_n + v_far * g_f) / (g_n + g_f + g_s)
    vf = vn + (v_far - vn) * _arr(r_on, "r_on") * g_f
    return _out(vn), _out(vf), _out(vn * g_s)


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
                                  f"= {float(np.min(k * rp * c_probe)):.3g} s")
    return _out(cb), _out(k * rp * cb)


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


def budget(rp, cb, vdd, *, v_ol=0.4, i_ol=3e-3, tr_max=300e-9, i_leak=0.0, r_series=0.0,
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
    i_leak : float or array_like, optional
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
    r_on = sink_resistance(v_ol, i_ol)
    with np.errstate(divide="ignore"):
        rpmax = np.where(cb > 0, _arr(tr_max, "tr_max") / (k * np.where(cb > 0, cb, 1.0)), np.inf)
    return Budget(
        rp_min=_out((vdd - _arr(v_ol, "v_ol")) / _arr(i_ol, "i_ol")),
        rp_max=_out(rpmax),
        rise_time=_out(k * rp * cb),
        rise_time_10_90=_out(RISE_10_90 * rp * cb),
        fall_time=fall_time_bound(rp, cb, vdd, v_ol, i_ol, hi_a * vdd, lo_a * vdd, r_series),
        v_ol=low_level(vdd, rp, r_on, r_series),
        v_oh=high_level(vdd, rp, i_leak),
        sink_current=sink_current(vdd, rp, r_on, r_series),
        power=static_power(vdd, rp, r_on, r_series),
    )
