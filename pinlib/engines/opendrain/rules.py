"""The rules of the open-drain engine that one bus and a batch of variants share.

Every function here takes floats (one bus, its rail corners as arrays of two) or batch
columns (``(N, corners)``): a pin's roles and leakage, Rp(min) and Rp(max) through
:mod:`pinlib.physics.rc`, the ``auto`` rule's scores, Rp(min) across pass transistors,
the joins between segments and their delays, the controller's segment and the SCL times
it counts, who sets SDA for the setup budget, a rail against a supply range, and the
worst of an array of margins.
"""

from __future__ import annotations

import math
from collections import deque

import numpy as np

from pinlib.core import eseries
from pinlib.core.protocols import protocol
from pinlib.core.valueclass import value_class
from pinlib.engines.limits import OpenDrainLimits
from pinlib.engines.readout import UNSTATED, explained
from pinlib.library.schema import Pin
from pinlib.model.design import Bus, Device, Segment
from pinlib.model.result import (
    Check,
    check_max,
    check_min,
    max_margin,
    min_margin,
    soft_limit,
)
from pinlib.physics import pullup as pu
from pinlib.physics import rc

#: Signal -> pin function of an open-drain bus (I2C and SMBus name the same two).
SIGNALS = dict(protocol("i2c").signals)

#: Forward drop of an input's clamp diode to its own rail, for the power-off check. [V]
CLAMP_DROP = 0.6  # common practice, no source: a silicon junction at a few mA

#: Gate overdrive (low rail minus the MOSFET's threshold) below which a pass-transistor
#: translator's on-resistance is not assured. [V]
GATE_OVERDRIVE = 1.0  # common practice, no source

_CORNERS = ("rail at its minimum", "rail at its maximum")
_NOT_RECEIVERS = ("connector", "cable")
_COMMON = "common practice, no source"


def part_is_mosfet(part) -> bool:
    """A pass-transistor translator (it neither drives nor reads the line)."""
    return part is not None and part.bridge is not None and part.bridge.kind == "mosfet"


def pin_rules(pin: Pin, part, lim: OpenDrainLimits) -> tuple[bool, bool, float | None]:
    """How the engine reads a pin: whether it drives the line low (an open-drain output,
    not a pass transistor), whether it reads the line (it states a threshold, or its part
    is not a connector, cable or pass transistor), and its leakage (its part's, else the
    specification's; None for a connector or cable that states none). [1], [1], [A]"""
    bridge = part.bridge
    mosfet = bridge is not None and bridge.kind == "mosfet"
    quiet = part.category in _NOT_RECEIVERS
    driver = pin.drive == "open-drain" and not mosfet
    receiver = pin.v_il is not None or pin.v_ih is not None or not (quiet or mosfet)
    if pin.leakage is not None:
        return driver, receiver, float(pin.leakage.value)
    return driver, receiver, None if quiet else lim.leakage


def abs_max_follows(pin: Pin) -> bool:
    """An abs_max written as the device's own rail plus a non-negative offset."""
    th = pin.abs_max.value
    return getattr(th, "scale", 0.0) == 1.0 and th.offset >= 0.0


def rp_min_of(v_max, v_ol, i_ol):
    """Rp(min) that one driver allows, UM10204 eq. 2 at the rail's maximum; 0 where its
    sink point is at or above the rail (it bounds nothing); scalars or arrays. [Ω]"""
    if np.ndim(v_max) == 0 and np.ndim(v_ol) == 0 and np.ndim(i_ol) == 0:
        return float(rc.rp_min(v_max, v_ol, i_ol)) if v_ol < v_max else 0.0
    ok = np.asarray(v_ol < v_max)
    return np.where(ok, rc.rp_min(v_max, np.where(ok, v_ol, 0.0), i_ol), 0.0)


def rp_max_of(lim: OpenDrainLimits, rise_factor, cb):
    """Rp(max) of a line, UM10204 eq. 1 (or the SMBus rise points): ``inf`` where Cb is
    0 (nothing bounds the pull-up from above); scalars or arrays. [Ω]"""
    return _rp_for_rise(lim.tr_max, rise_factor, cb, math.inf)


def _rp_for_rise(tr, rise_factor, cb, without_cb: float):
    """The pull-up whose rise through ``cb`` takes ``tr``, UM10204 eq. 1 (``tr /
    (factor·Cb)``), and ``without_cb`` where Cb is 0 or the factor is infinite (an SMBus
    rail at or below the rise's upper point: no pull-up completes the rise, the rise-time
    check fails on its own and bounds nothing here); a float for scalars, else an
    array. [Ω]"""
    if np.ndim(tr) == 0 and np.ndim(cb) == 0 and np.ndim(rise_factor) == 0:
        if cb > 0 and math.isfinite(rise_factor):
            return float(rc.rp_max(tr, cb, rise_factor))
        return without_cb
    cb_arr = np.asarray(cb, dtype=float)
    k = np.asarray(rise_factor, dtype=float)
    ok = (cb_arr > 0) & np.isfinite(k)
    return np.where(ok, rc.rp_max(tr, np.where(ok, cb_arr, 1.0), np.where(ok, k, 1.0)),
                    without_cb)


def rp_fast_of(lim: OpenDrainLimits, v, rise_factor, cb):
    """The smallest effective pull-up (at its − tolerance) whose rise through ``cb``
    meets the mode's tr minimum, ``tr(min) / (factor·Cb)`` (I2C Fast-mode's 20 ns,
    UM10204 rev. 6 table 10, at the rail's maximum where it scales); 0 where the mode
    has none.  Like :func:`rp_leak_of` it steers the ``auto`` choice only, and is not
    part of the window. ``v`` at the rail corners; scalars or batch columns. [Ω]"""
    tr_min = lim.tr_min(np.max(np.asarray(v, dtype=float), axis=-1, keepdims=np.ndim(v) > 1))
    return 0.0 if tr_min is None else _rp_for_rise(tr_min, rise_factor, cb, 0.0)


def rp_leak_of(v, v_nh_rel, leakage, v_ihs):
    """The largest effective pull-up (at its + tolerance) whose leakage drop keeps the
    high level at or above every receiver's VIH plus the high-level noise margin:
    ``(VDD·(1 − VnH) − VIH,max) / ΣI`` at the rail corner where that is least (UM10204
    rev. 6 §7.4 with table 10's VnH; ``v_nh_rel`` 0 where the document sets no margin,
    SMBus).  ``inf`` where nothing leaks, nothing reads the line, or the bound is not
    positive (the rail itself is too low: no pull-up helps, the level checks say so).
    ``v`` and each of ``v_ihs`` at the rail corners (``(2,)``, or batch columns). [Ω]"""
    if not v_ihs:
        return math.inf
    vih = v_ihs[0]
    for x in v_ihs[1:]:
        vih = np.maximum(vih, x)
    room = np.min(np.asarray(v, dtype=float) * (1.0 - v_nh_rel) - vih, axis=-1,
                  keepdims=np.ndim(v) > 1)
    leak = np.asarray(leakage, dtype=float)
    ok = (leak > 0) & (room > 0)
    bound = np.where(ok, room / np.where(ok, leak, 1.0), math.inf)
    return float(bound) if np.ndim(bound) == 0 else bound


def auto_margins(series: str, lines, tol: float):
    """The ``auto`` rule's score of every value of a series (10 Ω to 10 MΩ): the smaller
    of the two tolerance-adjusted relative margins to Rp(min) and Rp(max), the worst over
    the lines; the value with the largest score is chosen.  ``lines`` carry ``rp_min``,
    ``rp_max``, ``rp_leak`` and ``r_parts`` as floats (one bus) or ``(N, 1)`` columns (a
    batch).  The upper bound is the smaller of Rp(max) and ``rp_leak`` (the leakage's, see
    :func:`rp_leak_of`) where a value meets that bound and Rp(min) together: a value the
    high-level checks would fail is not chosen where one that meets both exists, and the
    sink's window is never given up for it.  Likewise the lower bound is the larger of
    Rp(min) and ``rp_fast`` (the tr minimum's, :func:`rp_fast_of`) where a value meets
    it and the upper bound together.

    Returns
    -------
    cand : numpy.ndarray
        The series values, shape ``(1, M)``. [Ω]
    worst : numpy.ndarray
        Their scores, shape ``(1 or N, M)``. [1]
    """
    cand = eseries.values_in_range(series, 10.0, 10e6)[None, :]
    worst = np.full(cand.shape, np.inf)
    for ln in lines:
        # the leakage's bound only where a value meets it and Rp(min) together: else the
        # choice stays in the sink's window (the noise margin then says none fits)
        top = np.where(window_open(ln.rp_min, ln.rp_leak, tol),
                       np.minimum(ln.rp_max, ln.rp_leak), ln.rp_max)
        fast = np.maximum(ln.rp_min, ln.rp_fast)
        bottom = np.where(window_open(fast, top, tol), fast, ln.rp_min)
        lo, hi = pu.pullup_margins(cand, bottom, top, tol, ln.r_parts)
        worst = np.minimum(worst, np.minimum(lo, hi))
    return cand, worst


def window_open(rp_min, rp_max, tol):
    """Whether a pull-up window holds any value at its tolerance:
    ``Rp(min)/(1 − tol) <= Rp(max)/(1 + tol)`` (False where Rp(min) is infinite); floats
    or arrays. [1]"""
    return np.asarray(rp_min) / (1 - tol) <= np.asarray(rp_max) / (1 + tol)


def _clip0(x):
    """``max(x, 0)`` for a float or an array."""
    return np.maximum(x, 0.0) if isinstance(x, np.ndarray) else max(x, 0.0)


def _over_budget(dv, budget_i, r_on):
    """``dv / budget_i − r_on`` where the budget is positive, ``inf`` where it is not
    (floats or arrays). [Ω]"""
    if not isinstance(budget_i, np.ndarray) and not isinstance(dv, np.ndarray):
        return dv / budget_i - r_on if budget_i > 0 else math.inf
    ok = budget_i > 0
    return np.where(ok, dv / np.where(ok, budget_i, 1.0) - r_on, math.inf)


def coupled_sinks(v_max, drivers, far, segs, signal: str, top):
    """Rp(min) each driver allows on a segment joined to others through pass transistors,
    for one bus (floats) or a batch (columns).

    A driver on either side of such a translator sinks both sides' pull-up currents, so
    its rating is shared: UM10204 eq. 2 with the current the other sides' pull-ups (at
    their present values, −tolerance, rails at their maximum) already take,
    ``Rp(min) = (VDD − VOL)/(IOL − I_far) − R_on`` for a driver across the translator
    (``inf`` where the far pull-ups alone take the whole rating).

    Parameters
    ----------
    v_max : float or numpy.ndarray
        This segment's rail at its maximum. [V]
    drivers : list
        This segment's drivers of the line. [1]
    far : list
        ``(link, far rail at its maximum, far pull-up at −tolerance)`` per pass
        transistor. [1], [V], [Ω]
    segs : list
        Every segment by index (``lines[signal].drivers``). [1]
    top : callable
        A driver's low level at the rail's maximum, of its ``v_ol_low`` (the low end
        of its own rail: the most current, the largest Rp(min)). [V]

    Yields
    ------
    (r, driver, link or None)
        Rp(min) of one driver, the driver, and the link it acts through. [Ω]
    """
    for d in drivers:
        v_ol = top(d.v_ol_low)
        i_far = 0
        for link, vo, rp in far:
            i_far = i_far + _clip0(vo - v_ol) / (rp + link.r_on)
        yield _over_budget(v_max - v_ol, d.i_ol - i_far, 0.0), d, None
    for link, vo, rp_o in far:
        for d in segs[link.other].lines[signal].drivers:
            if d.tap.dev.is_bridge:
                continue
            v_ol = top(d.v_ol_low)
            yield (_over_budget(v_max - v_ol, d.i_ol - _clip0(vo - v_ol) / rp_o,
                                link.r_on), d, link)


@value_class
class _Link:
    """A bridging part seen from one segment."""

    dev: Device
    other: int        # the other segment's index
    kind: str
    r_on: float
    t_pd: float


def links(segments: list[tuple[int, Segment]]) -> dict[int, list[_Link]]:
    """The bridging parts joining segments, seen from each: ``segments`` are
    ``(index, Segment)`` pairs; a part placed on exactly two segments joins them."""
    where: dict[str, list[tuple[int, Device]]] = {}
    for index, seg in segments:
        for d in seg.devices:
            if d.is_bridge:
                where.setdefault(d.ref, []).append((index, d))
    out: dict[int, list[_Link]] = {index: [] for index, _ in segments}
    for places in where.values():
        if len(places) != 2:
            continue
        (ia, da), (ib, db) = places
        br = da.part.bridge
        kind = br.kind if br else "buffer"
        r_on = float(br.r_on.value) if br and br.r_on is not None else 0.0
        t_pd = float(da.part.timing.t_pd.value) if da.part.timing.t_pd is not None else 0.0
        out[ia].append(_Link(da, ib, kind, r_on, t_pd))
        out[ib].append(_Link(db, ia, kind, r_on, t_pd))
    return out


def delays(start: int, links: dict[int, list[_Link]]) -> dict[int, float]:
    """One-way bridge delay from the controller's segment to every other."""
    delay = {start: 0.0}
    queue = deque([start])
    while queue:
        i = queue.popleft()
        for ln in links.get(i, []):
            if ln.other not in delay:
                delay[ln.other] = delay[i] + ln.t_pd
                queue.append(ln.other)
    return delay


def controller_of(bus: Bus, segments: list[tuple[int, Segment]]) -> tuple[Device | None, int]:
    """The controller whose timing the checks take (the first listed) and the index of
    its segment (0 when the bus has none)."""
    ctrls = bus.controllers
    ctrl = ctrls[0] if ctrls else None
    if ctrl is not None:
        for index, seg in segments:
            if any(d.ref == ctrl.ref for d in seg.devices):
                return ctrl, index
    return ctrl, 0


def counted_clock(lim: OpenDrainLimits, clock: float, t_low, t_high):
    """SCL low and high times as the controller counts them: its own where its part
    states them, else the specification's tLOW:tHIGH proportion of the clock's period
    (never below the specification's minima). [s]"""
    if t_low is None or t_high is None:
        share = (1.0 / clock) / (lim.t_low + lim.t_high)
        t_low = t_low if t_low is not None else max(lim.t_low, lim.t_low * share)
        t_high = t_high if t_high is not None else max(lim.t_high, lim.t_high * share)
    return t_low, t_high


def data_sources(index: int, ctrl_seg: int, segments: list[tuple[int, Segment]],
                 ctrl: Device | None, delay: dict, drives_sda):
    """Who sets SDA for the setup budget seen on segment ``index``, and the bridge delay
    each adds: on the controller's segment every target whose SDA pin drives
    (``drives_sda(device, segment)``), with its round trip through the bridges; elsewhere
    the controller. Yields ``(device, delay)``. [s]"""
    if index == ctrl_seg:
        for i, seg in segments:
            for d in seg.devices:
                if d.is_controller or d.is_bridge or not drives_sda(d, seg):
                    continue
                yield d, 2.0 * delay.get(i, 0.0)
    elif ctrl is not None:
        yield ctrl, 0.0


def supply_range_check(who: str, lo: float, hi: float, s_min: float, s_max: float,
                       source_of, *, ends: bool = True, sourced=(None, None)) -> Check:
    """The ``supply-range`` check of one device, for every engine: the rail's ends ``lo``
    and ``hi`` against its part's supply range, at the end nearer its limit.  A datasheet
    range is a hard limit: inside it passes, with no warning band; a range no datasheet
    stands behind (``sourced``, the part's ``(min, max)`` values: a class's typical
    range, an estimate) warns where it would fail (:func:`pinlib.model.result.
    soft_limit`).  ``source_of(low_side)`` names the limit's source; ``ends``: the
    message names the rail's end (False for one board's rail, ``lo == hi``, whose
    corners the engine takes elsewhere). [V]"""
    lo, hi = float(at_limit(lo, s_min)), float(at_limit(hi, s_max))
    m, low_side = supply_margin(lo, hi, s_min, s_max)
    if bool(low_side):
        chk = check_min("supply-range", lo, s_min, "V", source_of(True),
                        supply_range_text(who, True, lo, s_min, s_max, ends),
                        subject=who, warn_margin=0.0)
    else:
        chk = check_max("supply-range", hi, s_max, "V", source_of(False),
                        supply_range_text(who, False, hi, s_min, s_max, ends),
                        subject=who, warn_margin=0.0)
    if chk.status == "fail":
        chk.fix = ("give the device its own rail (supply = \"...\" on the device) or choose a "
                   "part for this rail")
        chk.message += f"; {chk.fix}"
    return soft_limit(chk, sourced[0 if bool(low_side) else 1], what="supply range")


def supply_range_text(who: str, low: bool, rail: float, s_min: float, s_max: float,
                      ends: bool = True) -> str:
    """The message of a ``supply-range`` check: the rail's end ``rail`` (its low end
    where ``low``) against the part's range."""
    from pinlib.core.quantity import format_si

    def volts(x) -> str:  # summaries only read no text (readout.UNSTATED)
        return format_si(x, "V") if explained() else UNSTATED

    rng = f"{volts(s_min)} to {volts(s_max)}"
    if low:
        at = " at the rail's minimum" if ends else ""
        return f"{who} runs from {volts(rail)}{at}; its part needs {rng}"
    at = " at the rail's maximum" if ends else ""
    return f"{who} runs from {volts(rail)}{at}; its part allows {rng}"


#: How close to a part's supply limit (relative to it) a rail's end counts as at the
#: limit: a rail's corner is a product (1.8 V x 1.1) that floating point may put a unit
#: in the last place beyond a limit written as the same number (1.98 V).
AT_LIMIT = 1e-12


def at_limit(x, limit):
    """``x``, or ``limit`` where ``x`` lies within :data:`AT_LIMIT` of it (floats or
    arrays). [V]"""
    if isinstance(x, float) and isinstance(limit, float):  # one value: no arrays to make
        return limit if abs(x - limit) <= AT_LIMIT * abs(limit) else x
    x, limit = np.asarray(x, dtype=float), np.asarray(limit, dtype=float)
    with np.errstate(over="ignore", invalid="ignore"):  # as float: inf, NaN
        near = np.abs(x - limit) <= AT_LIMIT * np.abs(limit)
    return np.where(near, limit, x)[()]


def supply_margin(lo, hi, s_min, s_max):
    """A rail's ends against a part's supply range: the margin of the end nearer its
    limit, and whether that is the low end (floats or arrays); an end within rounding of
    its limit (:func:`at_limit`) is at it. [1]"""
    m_lo = min_margin(at_limit(lo, s_min), s_min)
    m_hi = max_margin(at_limit(hi, s_max), s_max)
    low_side = m_lo < m_hi
    return np.where(low_side, m_lo, m_hi), low_side
