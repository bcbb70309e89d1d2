"""Static levels of a pulled-up open-drain line: the resistances in parallel, the sink's
on-resistance, the low and high levels, the sink current and power, and the low levels
through a pass-transistor translator."""

from __future__ import annotations

import math

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.physics.pullup.inputs import _arr, _non_negative, _out, _positive

_INF = float("inf")

__all__ = ["parallel", "sink_resistance", "low_level", "held_low_level", "loaded_level",
           "sink_current",
           "high_level", "static_power", "translator_low_levels"]


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
    if all(isinstance(r, float) and r > 0.0 for r in resistances):
        # numbers (most calls): the same sum and division in floats, which round as
        # numpy's do; a sum that overflows takes the arrays' path (and its warning)
        g = 0
        for r in resistances:
            g = g + 1.0 / r
        if not g > 0:  # every contributor absent
            return np.float64(_INF)
        if g < _INF and 1.0 / g < _INF:
            return np.float64(1.0 / g)
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
    return _out(_low_level(vdd, rp, _non_negative(r_sink, "r_sink", "[Ω]"),
                           _non_negative(r_series, "r_series", "[Ω]")))


def _low_level(vdd, rp, r_sink, r_series):
    """:func:`low_level` without its input checks."""
    r_low = r_sink + r_series
    # written with 1/rp so that rp = inf (no pull-up) gives 0 V
    g = 1.0 / rp
    return vdd * r_low * g / (1.0 + r_low * g)


def held_low_level(v_low, vdd, rp, i_ol):
    """The low level a sink guarantees, from the one :func:`low_level` gives it as a
    resistance through its datasheet point (VOL at IOL): that level while the pull-up
    draws at most ``i_ol``; beyond, the sink is held to ``i_ol`` (its guarantee above
    VOL), and the line settles where the pull-up ``rp`` to ``vdd`` carries it.

    Parameters
    ----------
    v_low : float or array_like
        The level with the sink read as a resistance. [V]
    vdd : float or array_like
        Pull-up rail (the high level the line falls from). [V]
    rp : float or array_like
        Pull-up resistance. [Ω]
    i_ol : float or array_like
        The sink current its part states its low level at. [A]

    Returns
    -------
    float or numpy.ndarray
        ``max(v_low, vdd - i_ol·rp)`` where ``(vdd - v_low) / rp > i_ol``, else
        ``v_low``. [V]

    Examples
    --------
    >>> round(float(held_low_level(0.527, 3.465, 742.0, 3e-3)), 3)
    1.239
    """
    v_low, vdd, rp, i_ol = (np.asarray(x, dtype=float) for x in (v_low, vdd, rp, i_ol))
    over = (vdd - v_low) / rp > i_ol
    return _out(np.where(over, np.maximum(v_low, vdd - i_ol * rp), v_low))


def loaded_level(v_src: float, r_src: float, i_out: float, rp: float | None = None,
                 rail: float = 0.0) -> float:
    r"""The DC level of a pin that drives ``v_src`` through ``r_src`` while the line
    draws ``i_out`` out of it (its receivers' leakage; negative: into it), and a pull-up
    ``rp`` to ``rail`` where there is one (Kirchhoff's current law at the pin).

    A push-pull output's datasheet level is a point, VOH at IOH or VOL at IOL: read as
    the resistance ``r_src`` = (VDD − VOH)/IOH or VOL/IOL, as the open-drain engine
    reads a sink.  A MOS output's drop grows no faster than that line below the rated
    current, so the level it gives at a lighter load is one the part still guarantees.

    Parameters
    ----------
    v_src : float
        The level the output drives unloaded: its rail (high), 0 (low). [V]
    r_src : float
        Its resistance through the rated point (0: an ideal source). [Ω]
    i_out : float
        Current drawn out of the pin by the line. [A]
    rp : float or None
        Pull-up on the line; None for none. [Ω]
    rail : float
        The pull-up's rail. [V]

    Returns
    -------
    float
        :math:`(v/r + V_{rail}/R_p - i)/(1/r + 1/R_p)`, or :math:`v - r\,i` without a
        pull-up. [V]

    Examples
    --------
    >>> round(loaded_level(3.3, 112.5, 20e-6), 6)  # 2.4 V at 8 mA, 20 µA drawn
    3.29775
    """
    if r_src <= 0.0:
        return float(v_src)
    if rp is None or not 0.0 < rp < math.inf:
        return float(v_src - r_src * i_out)
    g = 1.0 / r_src + 1.0 / rp
    return float((v_src / r_src + rail / rp - i_out) / g)


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
    return _out(_sink_current(vdd, rp, _non_negative(r_sink, "r_sink", "[Ω]"),
                              _non_negative(r_series, "r_series", "[Ω]")))


def _sink_current(vdd, rp, r_sink, r_series):
    """:func:`sink_current` without its input checks."""
    r_low = r_sink + r_series
    g = 1.0 / rp
    return vdd * g / (1.0 + r_low * g)


def high_level(vdd, rp, leakage):
    """Bus-line voltage at rest, after the input leakage drop across the pull-up.

    Parameters
    ----------
    vdd : float or array_like
        Pull-up rail. [V]
    rp : float or array_like
        Pull-up resistance. [Ω]
    leakage : float or array_like
        Sum of the leakage currents of every pin on the line. [A]

    Returns
    -------
    float or numpy.ndarray
        :math:`\\max(V_{DD} - R_p \\sum I_{leak},\\ 0)`. [V]

    Notes
    -----
    UM10204 rev. 6 §7.4 bounds Rp(max) by this drop against the 0.2·VDD high-level
    noise margin (given there as a graph).  The pins' leakage flows to ground through
    them and cannot pull the line below it: where the drop would exceed the rail the
    line sits at 0 V.
    """
    vdd = _non_negative(vdd, "vdd", "[V]")
    rp = _positive(rp, "rp", "[Ω]")
    leakage = _non_negative(leakage, "leakage", "[A]")
    return _out(_high_level(vdd, rp, leakage))


def _high_level(vdd, rp, leakage):
    """:func:`high_level` without its input checks."""
    return np.maximum(vdd - rp * leakage, 0.0)


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
