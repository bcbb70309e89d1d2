"""The arithmetic of one open-drain line, shape-agnostic: the same code serves one bus
(arrays over the two rail corners) and a batch of variants (``(N, corners)``).

``drivers`` are the line's drivers on this segment; ``far`` the segments joined through
pass transistors as ``(link, their rail, their pull-up at −tolerance)``; ``segs`` every
segment by index (each with ``lines[signal].drivers``), for the drivers across a
translator.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from pinlib.core.valueclass import value_class
from pinlib.physics import pullup as pu
from pinlib.physics.pullup.joined import far_fall_time, joined_fall_time, joined_rise_time


@value_class
class Join:
    """The line across a pass-transistor translator (or, merged, across several) while
    the transistor conducts (:mod:`pinlib.physics.pullup.joined`): its pull-up at both
    ends of its tolerance, its capacitance (at its maximum and its low end), its rail at
    the corners, and the join level (the gate's rail, side ``a``'s, less the threshold).
    ``far_is_b``: the far line is the part's side ``b`` (no body-diode path toward the
    near one). [Ω], [F], [V]"""

    link: Any
    rp_lo: Any
    rp_hi: Any
    cb: Any
    cb_low: Any
    v: Any
    v_join: Any
    far_is_b: bool
    links: list | None = None  # every link merged (None: ``link`` alone)
    #: the join level at the part's typical threshold, where its threshold is a soft
    #: value (a class's typical maximum, an estimate) and it states a typical one; None
    #: otherwise (a fall that fails at the stated threshold then fails firm)
    v_join_typ: Any = None

    @staticmethod
    def merged(joins: list) -> Join | None:
        """Several joins as one (a line joined through more than one translator): the
        capacitances summed, the pull-ups as their Thevenin equivalent, the lowest join
        level (the far charge removed lowest: slower, a bound still). None for none."""
        if len(joins) <= 1:
            return joins[0] if joins else None
        g_lo = sum(1.0 / j.rp_lo for j in joins)
        g_hi = sum(1.0 / j.rp_hi for j in joins)
        v = sum(j.v / j.rp_lo for j in joins) / g_lo
        v_join = joins[0].v_join
        for j in joins[1:]:
            v_join = np.minimum(v_join, j.v_join)
        return Join(joins[0].link, 1.0 / g_lo, 1.0 / g_hi, sum(j.cb for j in joins),
                    sum(j.cb_low for j in joins), v, v_join, False, [j.link for j in joins])


def joined_rise(join: Join, rp, cb, v, v_lo, v_hi, fast: bool = False):
    """The rise of a line joined through pass transistors between two levels
    (:func:`~pinlib.physics.pullup.joined.joined_rise_time`): ``rp`` and ``cb`` this
    line's, and the far line's at the same ends (its pull-up's maximum and its
    capacitance's, or with ``fast`` their low ends). [s]"""
    if fast:
        return joined_rise_time(rp, cb, v, join.rp_lo, join.cb_low, join.v, join.v_join,
                                v_lo, v_hi)
    return joined_rise_time(rp, cb, v, join.rp_hi, join.cb, join.v, join.v_join, v_lo, v_hi)


def far_drivers(far, segs, signal: str):
    """The drivers across each pass transistor that pull this line low through it:
    ``(driver, link, their rail, their pull-up)``."""
    for link, v_other, rp_other in far:
        for d in segs[link.other].lines[signal].drivers:
            if d.offset is not None or d.tap.dev.is_bridge:
                continue
            yield d, link, v_other, rp_other


def low_levels(v, rp_lo, drivers, far, segs, signal: str, phys=pu) -> tuple[list, list, list]:
    """The low level each driver makes on the line at the actual current (``phys``: the
    pull-up functions, or :mod:`pinlib.physics.pullup.unchecked` for inputs checked
    already).

    Returns
    -------
    levels : list
        ``(v_bus, i_sink or None, driver, link or None)``: a driver on this segment (its
        current through its sink) or, with its link, one across a translator. [V], [A]
    offset_levels : list
        ``(v_bus, i, driver)`` of a repeater side's static-offset low. [V], [A]
    plain : list
        Per entry of ``levels``, its level with the sink read as a resistance through
        its datasheet point whatever the current (at or below the level it guarantees),
        at the low end of a driver's own rail: the most the pull-up can draw, for its
        power. [V]

    A driver on its own rail has its low level (``v_ol``, ``r_sink``) at the top of that
    rail and its current (``v_ol_low``, ``r_sink_low``) at the bottom: each the worst
    for the checks that read it.
    """
    levels, offset_levels, plain = [], [], []
    for d in drivers:
        if d.offset is not None:
            vb = np.broadcast_to(d.offset, np.broadcast_shapes(np.shape(d.offset), np.shape(v)))
            offset_levels.append((vb, (v - vb) / rp_lo, d))
            continue
        # a driver on its own rail: its level at the top of that rail (the highest low
        # level), its current at the bottom (the sink's smallest resistance draws the
        # most); on the pull-up rail the two are one
        low_end = d.tap.own
        if not far:
            vb = np.asarray(phys.low_level(v, rp_lo, d.r_sink, d.r_series), dtype=float)
            i = np.asarray(phys.sink_current(v, rp_lo, d.r_sink_low if low_end else d.r_sink,
                                             d.r_series), dtype=float)
            # the level the sink guarantees: held to IOL past it (SINK_MODEL)
            levels.append((np.asarray(pu.held_low_level(vb, v, rp_lo, d.i_ol)), i, d, None))
            plain.append(np.asarray(phys.low_level(v, rp_lo, d.r_sink_low, d.r_series),
                                    dtype=float) if low_end else vb)
        else:
            # across a pass transistor the sink's datasheet point stays a resistance:
            # held to IOL, the level would rise to where the transistor stops conducting
            # (its gate less its threshold), which the lossless R_on model does not
            # know; sink-current fails beside a current past IOL
            g = 0
            for link, _, rp in far:
                g = g + 1.0 / (rp + link.r_on)
            v_th = 0
            for link, vv, rp in far:
                v_th = v_th + vv / (rp + link.r_on)
            vb, _, i = (np.asarray(x, dtype=float) for x in pu.translator_low_levels(
                v, rp_lo, v_th / g, 1.0 / g, 0.0, d.r_sink + d.r_series))
            plain_vb = vb
            if low_end:
                plain_vb, _, i = (np.asarray(x, dtype=float) for x in pu.translator_low_levels(
                    v, rp_lo, v_th / g, 1.0 / g, 0.0, d.r_sink_low + d.r_series))
            levels.append((vb, i, d, None))
            plain.append(plain_vb)
    for d, link, v_other, rp_other in far_drivers(far, segs, signal):
        _, vf, _ = pu.translator_low_levels(v_other, rp_other, v, rp_lo, link.r_on,
                                            d.r_sink + d.r_series)
        levels.append((np.asarray(vf, dtype=float), None, d, link))
        plain.append(levels[-1][0])
    return levels, offset_levels, plain


#: What bounds a driver's fall time (the ``kind`` of :func:`fall_bounds`).
BY_PART = "part"       # its part's t_of_max
BY_SPEC = "spec"       # tof of a compliant output stage (UM10204 table 9)
BY_SINK = "sink"       # the guaranteed sink current alone


def _stated_tof(d):
    """A driver's own t_of_max (a Sourced on one bus, a float or column in a batch)."""
    t = getattr(d.tap.pin, "t_of_max", None)
    return None if t is None else getattr(t, "value", t)


def output_fall(lim, d, cb, v, link, rp_lo, mode=None):
    """The output fall time that bounds driver ``d`` by itself, where one does.

    A driver's part may state ``t_of_max``; else on an I2C bus a driver whose sink meets
    the mode's (VOL, IOL) point claims a compliant output stage of that mode, whose fall
    from 0.7·VDD to 0.3·VDD (the bus's measuring levels) UM10204 table 9 bounds by tof
    for a bus capacitance inside the table's range.  Either holds at the pin (not through
    a series resistor or a translator's on-resistance) and under a legal load: the
    pull-up (at −tolerance, ``rp_lo``) draws at most the driver's IOL at its VOL.

    ``mode``: what :func:`mode_fall` gives for ``lim`` and ``v``, when the caller has it
    (one line's drivers share it).

    Returns
    -------
    t_of : numpy.ndarray or None
        The bound, ``inf`` where it does not hold. [s]
    kind : str
        :data:`BY_PART`, :data:`BY_SPEC` or :data:`BY_SINK` (no such bound).
    why : str
        Why it does not hold, where it does not (one bus: the first reason). [1]
    """
    if link is not None:
        return None, BY_SINK, f"it pulls the line through {link.dev.ref}'s on-resistance"
    stated = _stated_tof(d)
    spec, point = mode_fall(lim, v) if mode is None else mode
    if stated is None and spec is None:
        return None, BY_SINK, "SMBus states no output fall time"
    bare = np.asarray(d.r_series) == 0
    legal = (v - d.v_ol) / rp_lo <= d.i_ol
    checks = [(bare, "its series resistor: the output fall time holds at the pin"),
              (legal, "the pull-up draws more than its IOL at VOL")]
    if stated is not None:
        t, kind = np.asarray(stated, dtype=float), BY_PART
    else:
        vol, iol = point()
        checks.append(((np.asarray(d.i_ol) >= iol) & (np.asarray(d.v_ol) <= vol),
                       "its sink point is weaker than the mode's (VOL, IOL)"))
        checks.append(((np.asarray(cb) >= spec.cb_min) & (np.asarray(cb) <= spec.cb_max),
                       f"Cb outside the {spec.cb_min * 1e12:g}–{spec.cb_max * 1e12:g} pF of "
                       "the guarantee"))
        t, kind = np.asarray(spec.t_max, dtype=float), BY_SPEC
    ok = np.asarray(True)
    why = ""
    for cond, reason in checks:
        ok = ok & cond
        if not why and not cond.all():
            why = reason
    return np.where(ok, t, np.inf), kind, why


def _across(join: Join, rp_lo, cb, v, d, v_hi, v_lo, r_s, v_join):
    """The fall of this line pulled low by driver ``d`` across the translator of
    ``join`` (the driver's segment), joined below ``v_join``: on side a the sink's
    line's own between this line's levels (the body diode lets it follow early, never
    below), on side b held at its rail until the transistor opens. [s]"""
    if join.far_is_b:  # this line is side a
        return joined_fall_time(join.rp_lo, join.cb, join.v, rp_lo, cb, v, v_join, d.v_ol,
                                d.i_ol, np.minimum(v_hi, join.v), v_lo, r_s)
    return far_fall_time(join.rp_lo, join.cb, join.v, rp_lo, cb, v, v_join, d.v_ol, d.i_ol,
                         v_hi, v_lo, r_s)


def mode_fall(lim, v) -> tuple:
    """The mode's output fall guarantee (``lim.output_fall()``) and a function giving its
    sink point at the rail ``v`` (``lim.sink_point(v)``, worked out once when first
    asked): what :func:`output_fall` reads of the mode, the same for every driver of a
    line."""
    got: list = []

    def point():
        if not got:
            got.append(lim.sink_point(v))
        return got[0]

    return lim.output_fall(), point


def fall_bounds(lim, rp_lo, cb, v, drivers, far, segs, signal: str, phys=pu,
                joins=None) -> list:
    """Upper bound of the fall time of each driver (and of each across a translator,
    through its on-resistance): the smaller of the bound from its guaranteed sink
    current and the output fall time it guarantees (:func:`output_fall`); ``phys`` as
    for :func:`low_levels`.  ``joins``: the line's :class:`Join` per pass transistor
    (none: the line alone); the sink then discharges both lines while the transistor
    conducts (:mod:`pinlib.physics.pullup.joined`): a driver here pulls both, merged
    (:meth:`Join.merged`); one across a translator pulls this line through its own.

    Returns
    -------
    list
        ``(t, driver, link or None, info)`` with ``info`` a dict: ``t_sink`` the
        sink-current bound, ``t_of`` the output fall bound (``inf`` where it does not
        hold) or None, ``kind`` and ``why`` of :func:`output_fall`, ``join`` the
        :class:`Join` the bound took (None for none). [s]
    """
    v_lo, v_hi = lim.fall_levels(v)
    pairs = [(d, None, d.r_series) for d in drivers]
    pairs += [(d, link, d.r_series + link.r_on)
              for d, link, _, _ in far_drivers(far, segs, signal)]
    out = []
    mode = mode_fall(lim, v)
    joins = joins or []
    near = Join.merged(joins)
    by_link = {id(j.link): j for j in joins}
    for d, link, r_s in pairs:
        join = near if link is None else by_link.get(id(link))
        if join is None:
            t_sink = np.asarray(phys.fall_time_bound(rp_lo, cb, v, d.v_ol, d.i_ol, v_hi, v_lo,
                                                     r_s), dtype=float)
        elif link is None:  # this line's sink pulls both lines
            t_sink = joined_fall_time(rp_lo, cb, v, join.rp_lo, join.cb, join.v,
                                      join.v_join, d.v_ol, d.i_ol, v_hi, v_lo, r_s)
        else:
            t_sink = _across(join, rp_lo, cb, v, d, v_hi, v_lo, r_s, join.v_join)
        if d.offset is not None and link is None:
            # a static-offset side holds its low at its offset (higher where the pull-up
            # draws more than its IOL): an end level at or below that is never reached
            held = np.asarray(pu.held_low_level(
                np.broadcast_to(d.offset, np.broadcast_shapes(np.shape(d.offset),
                                                              np.shape(v))),
                v, rp_lo, d.i_ol), dtype=float)
            t_sink = np.where(held >= v_lo, np.inf, t_sink)
        # a compliant stage's tof holds for the load it drives: both lines' capacitance
        load = cb if join is None or link is not None else cb + join.cb
        t_of, kind, why = output_fall(lim, d, load, v, link, rp_lo, mode)
        t = t_sink if t_of is None else np.minimum(t_sink, t_of)
        # at the part's typical threshold, where its stated one is soft: a fall that fails
        # only at the soft maximum rests on it (it warns, batch._fall_checks)
        t_typ = None
        if join is not None and join.v_join_typ is not None:
            t_typ = (joined_fall_time(rp_lo, cb, v, join.rp_lo, join.cb, join.v,
                                      join.v_join_typ, d.v_ol, d.i_ol, v_hi, v_lo, r_s)
                     if link is None else
                     _across(join, rp_lo, cb, v, d, v_hi, v_lo, r_s, join.v_join_typ))
            t_typ = t_typ if t_of is None else np.minimum(t_typ, t_of)
        out.append((t, d, link, {"t_sink": t_sink, "t_of": t_of, "kind": kind, "why": why,
                                 "join": join, "t_typ": t_typ,
                                 "offset": held if d.offset is not None and link is None
                                 else None}))
    return out
