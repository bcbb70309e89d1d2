"""Edges of two pulled-up lines joined by a pass transistor (the two-MOSFET level
translator): the transistor's gate sits on the lower rail, side ``a``; it conducts
while the lower of its two terminals is below the gate less its threshold, the *join
level* ``v_join``.  Below it the two segments are one node: both capacitances, both
pull-ups (each to its own rail), one sink.  Above it each segment is on its own.

The circuit and its phases, for a sink on the *near* segment (``rp``, ``cb``, ``vdd``)
and the *far* one joined to it (``rp_far``, ``cb_far``, ``v_far``):

1. the near line falls alone (its pull-up, its capacitance, the sink) down to
   ``v_join``;
2. the transistor turns on and the far line's charge flows into the sink: the near
   line is held at ``v_join`` (any lower and the transistor conducts more, any higher
   and it turns off) while the far line falls from its rail to ``v_join``, a constant
   current (the sink's at ``v_join`` less the near pull-up's) against its own pull-up;
3. both fall together: ``cb + cb_far`` against the two pull-ups (their Thevenin
   equivalent) under the same sink.

The sink is the engine's current law (:func:`.edges.fall_time_bound`): at least
``min(V/R, IOL)`` with ``R = VOL/IOL + R_s``.  Phase 2 removes the far line's charge at
the lowest level it can leave at (through the channel), where the pull-ups take the most
of the sink's current: the near line's fall is bounded from above.  The body diode (from
side ``a`` to side ``b``) lets a far line on side ``a`` follow the near one earlier than
the channel; since such a line never sits below the near one, its fall takes no longer
than the near line's own between the far line's measuring levels
(:func:`joined_fall_time` with the far levels).  A far line on side ``b`` has no diode
path (it is above the near line, the diode reversed): :func:`far_fall_time`, phases 2
and 3 as above.  The transistor's on-resistance (ohms, against pull-ups of kiloohms) is
left out of the joined node.

A rise after the sink lets go is joined while the lines are below ``v_join`` (the
transistor conducts, they rise as one node, ``(rp ∥ rp_far)·(cb + cb_far)`` toward the
Thevenin rail) and each line's own RC above it (:func:`joined_rise_time`).

Every function works elementwise on arrays and checks no inputs (the engine checks a
line's values once); a time that never ends is ``inf``.
"""

from __future__ import annotations

import numpy as np

from pinlib.physics.pullup.edges import _current_source_fall, _fall_time_bound

__all__ = ["joined_fall_time", "far_fall_time", "joined_rise_time"]


def _thevenin(rp, vdd, rp_far, v_far):
    """The two pull-ups as one: ``(r, v)``. [Ω], [V]"""
    g = 1.0 / rp + 1.0 / rp_far
    return 1.0 / g, (vdd / rp + v_far / rp_far) / g


def _hold(rp, vdd, rp_far, cb_far, v_far, v_join, v_ol, i_ol, r_s, v_from, v_to):
    """Phase 2: the far line from ``v_from`` to ``v_to`` (at or above ``v_join``) while
    the near line is held at ``v_join``: the sink's current there less the near
    pull-up's, constant, against the far pull-up. [s]"""
    i_sink = np.minimum(v_join / (v_ol / i_ol + r_s), i_ol)
    u = i_sink - (vdd - v_join) / rp
    return _current_source_fall(rp_far, cb_far, v_far, u, v_from, v_to)


def joined_fall_time(rp, cb, vdd, rp_far, cb_far, v_far, v_join, v_ol, i_ol, v_hi, v_lo,
                     r_series=0.0):
    """Upper bound of the fall of the near line (the sink's) from ``v_hi`` to ``v_lo``.

    Parameters
    ----------
    rp, cb, vdd : float or array_like
        The near line's pull-up (at its minimum), capacitance and rail. [Ω], [F], [V]
    rp_far, cb_far, v_far : float or array_like
        The far line's. [Ω], [F], [V]
    v_join : float or array_like
        The level below which the transistor joins the lines: the gate's rail less its
        threshold. [V]
    v_ol, i_ol : float or array_like
        The sink's datasheet point. [V], [A]
    v_hi, v_lo : float or array_like
        The fall's measuring levels. [V]
    r_series : float or array_like, optional
        Series resistance between the sink and the line. [Ω]

    Returns
    -------
    numpy.ndarray
        Phase 1 over ``[max(v_join, v_lo), v_hi]``, phase 2 where ``v_join`` lies inside
        the window, phase 3 over ``[v_lo, min(v_join, v_hi)]``. [s]
    """
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        end1 = np.maximum(v_join, v_lo)
        t1 = np.where(v_hi > end1,
                      _fall_time_bound(rp, cb, vdd, v_ol, i_ol, v_hi, end1, r_series), 0.0)
        inside = (v_join > v_lo) & (v_join <= v_hi)
        t2 = np.where(inside, _hold(rp, vdd, rp_far, cb_far, v_far, v_join, v_ol, i_ol,
                                    r_series, v_far, v_join), 0.0)
        t3 = _below_join(rp, cb, vdd, rp_far, cb_far, v_far, v_join, v_ol, i_ol, v_hi, v_lo,
                         r_series)
    return np.asarray(t1 + t2 + t3, dtype=float)


def far_fall_time(rp, cb, vdd, rp_far, cb_far, v_far, v_join, v_ol, i_ol, v_hi_far,
                  v_lo_far, r_series=0.0):
    """Upper bound of the fall of the far line on side ``b`` (the sink on side ``a``)
    from ``v_hi_far`` to ``v_lo_far``: held at its rail until the near line reaches
    ``v_join``, then phase 2 down to ``v_join`` and phase 3 below it; arguments as
    :func:`joined_fall_time`. [s]"""
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        start = np.minimum(v_hi_far, v_far)
        end2 = np.maximum(v_lo_far, v_join)
        t2 = np.where(start > end2, _hold(rp, vdd, rp_far, cb_far, v_far, v_join, v_ol, i_ol,
                                          r_series, start, end2), 0.0)
        t3 = _below_join(rp, cb, vdd, rp_far, cb_far, v_far, v_join, v_ol, i_ol, v_hi_far,
                         v_lo_far, r_series)
    return np.asarray(t2 + t3, dtype=float)


def _below_join(rp, cb, vdd, rp_far, cb_far, v_far, v_join, v_ol, i_ol, v_hi, v_lo,
                r_series):
    """Phase 3 of a joined fall: both lines as one, both capacitances against both
    pull-ups (their Thévenin equivalent), from ``min(v_join, v_hi)`` down to ``v_lo``;
    0 where that window is empty. [s]"""
    r, v = _thevenin(rp, vdd, rp_far, v_far)
    top = np.minimum(v_join, v_hi)
    return np.where(top > v_lo,
                    _fall_time_bound(r, cb + cb_far, v, v_ol, i_ol, top, v_lo, r_series), 0.0)


def joined_rise_time(rp, cb, vdd, rp_far, cb_far, v_far, v_join, v_lo, v_hi):
    """The rise of a line from ``v_lo`` to ``v_hi`` after the sink lets go: joined below
    ``v_join``, ``(rp ∥ rp_far)·(cb + cb_far)·ln((V_T − v_lo)/(V_T − v))`` toward the
    Thevenin rail ``V_T``, then alone above it, ``rp·cb·ln((vdd − v)/(vdd − v_hi))``
    (pull-ups at their maximum); ``inf`` where a rail is not above the level it must
    reach. [s]"""
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        r, v = _thevenin(rp, vdd, rp_far, v_far)
        top = np.minimum(v_hi, v_join)
        joint = top > v_lo
        ok = v > top
        t_j = np.where(joint, np.where(ok, r * (cb + cb_far) * np.log(
            np.where(ok, (v - v_lo) / (v - top), 1.0)), np.inf), 0.0)
        bot = np.maximum(v_lo, v_join)
        alone = v_hi > bot
        ok = vdd > v_hi
        t_a = np.where(alone, np.where(ok, rp * cb * np.log(
            np.where(ok, (vdd - bot) / (vdd - v_hi), 1.0)), np.inf), 0.0)
    return np.asarray(t_j + t_a, dtype=float)
