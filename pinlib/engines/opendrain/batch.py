"""The open-drain engine's checks, vectorized over a batch of variants of one bus.

Every check of the engine is made here.  :func:`pinlib.engines.opendrain.evaluate_bus`
evaluates one bus at its worst-case corners: :func:`run` at one variant (:class:`WorstCase`
``(1)``, on the inputs :func:`.inputs.collect` gathered), whose checks :mod:`.wording`
and :mod:`.wording_segment` word.  Studies over many variants of a bus — Monte Carlo
samples and corners of its toleranced parameters (:mod:`pinlib.studies.whatif`), or every
library part that could stand in one position (:mod:`pinlib.studies.candidates`) — need
the same numbers for thousands of variants at once.  :func:`build` computes them in one
numpy pass per bus: the *structure* of the bus (which pins drive and which receive,
which part pull-ups exist) is fixed for a batch; every *value* may be an array over the
batch.  At one variant the margins, worst rows and figures are worked out in plain
Python over the few numbers (:mod:`.batchresult`, :mod:`.batchfigures`); the tests hold
that to the arrays of several variants.

Each check names its rows and keeps, per variant, the row and rail corner of its worst
(:meth:`BatchCheck.worst`) and what its wording needs beyond its numbers
(:attr:`BatchCheck.basis`); the tests hold a batch of candidates against
:func:`pinlib.engines.dispatch.check_design` of each substituted design, and samples of a
design without tolerances against its engine result.

A :class:`Scenario` says what varies.  :class:`WorstCase` takes the engine's corners
(each rail at ± its tolerance, the pull-ups at the end that hurts each check,
capacitances at the top of their tolerance) and chooses ``auto`` pull-ups for every
variant.  A sampled scenario (:class:`pinlib.studies.whatif.Sampled`) gives each variant its
own rails, resistors and capacitances and evaluates it at that one point.

Arrays are *batch columns*: shape ``(N, 1)``, or anything that broadcasts to it; the
second axis holds the rail corners (two for :class:`WorstCase`, one for a sample).
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

from pinlib.core.errors import DesignError, InputError
from pinlib.engines.opendrain.arith import (
    Join,
    fall_bounds,
    far_drivers,
    joined_rise,
    low_levels,
)
from pinlib.engines.opendrain.batchfigures import _figures, _reduce, one
from pinlib.engines.opendrain.batchgathered import line_from
from pinlib.engines.opendrain.batchinputs import (
    Level,
    PinData,
    Scenario,
    TimingData,
    WorstCase,
    _choose,
    _corner,
    _couple,
    _Line,
    _line,
    _Parts,
    _Seg,
    structure,
)
from pinlib.engines.opendrain.batchresult import (
    AT_LIMIT,
    STATUS,
    BatchCheck,
    BusBatch,
    SegmentBatch,
    _Out,
    ge,
    given,
    le,
)
from pinlib.engines.opendrain.bridges import gate_drive
from pinlib.engines.opendrain.inputs import (
    _offset_side,
    collect,
)
from pinlib.engines.opendrain.rules import (
    SIGNALS,
    _Link,
    controller_of,
    counted_clock,
    data_sources,
    delays,
    links,
    supply_margin,
)
from pinlib.library.schema import Part
from pinlib.model.design import Bus, Design
from pinlib.physics import pullup as pu
from pinlib.physics.pullup import unchecked
from pinlib.physics.rc import RISE_10_90

__all__ = [
    "STATUS",
    "Level",
    "PinData",
    "TimingData",
    "Scenario",
    "WorstCase",
    "BatchCheck",
    "SegmentBatch",
    "BusBatch",
    "structure",
    "build",
]

#: Parts that load a line but read nothing on it (the engine's rule).
_NOT_RECEIVERS = ("connector", "cable")


def _worst_max(x):
    """Largest over the corner axis. [unit]"""
    return x.max(axis=1, keepdims=True) if type(x) is np.ndarray else \
        np.max(x, axis=1, keepdims=True)


def _far(s: _Seg, segs: list[_Seg], links: list[_Link], signal: str):
    return [(link, segs[link.other].v, segs[link.other].r_lo(signal)) for link in links
            if link.kind == "mosfet"]


def _joins(ctx, s: _Seg, signal: str) -> list[Join]:
    """The line's partner across each pass-transistor translator (:class:`.arith.Join`):
    the far line's pull-up, capacitance and rail, and the level below which the
    transistor conducts: the rail of the part's side ``a`` (its gate's) less its
    threshold (``v_gs_th``; 0 V where the part states none)."""
    out = []
    for link in ctx.links[s.index]:
        if link.kind != "mosfet":
            continue
        o = ctx.segs[link.other]
        fl = o.lines[signal]
        r = o.r_eff(signal)
        here_a = link.dev.part_side == "a"
        br = link.dev.part.bridge
        th = br.v_gs_th if br is not None else None
        v_th = float(th.value) if th is not None else 0.0
        gate = (s if here_a else o).v
        typ = th.typ if th is not None and th.soft else None
        out.append(Join(link, r * (1 - o.tol), r * (1 + o.tol), fl.cb,
                        fl.cb if fl.cb_low is None else fl.cb_low, o.v, gate - v_th, here_a,
                        v_join_typ=None if typ is None else gate - float(typ)))
    return out


def _line_checks(ctx, s: _Seg, ln: _Line, out: _Out, figs: dict) -> None:
    lim, v, tol, up = ctx.lim, s.v, s.tol, ln.signal.upper()
    warn = ctx.warn
    r_eff = s.r_eff(ln.signal)
    rp_lo, rp_hi = r_eff * (1 - tol), r_eff * (1 + tol)
    figs[ln.signal] = f = {"bus_capacitance": ln.cb, "pullup": r_eff, "rp_min": ln.rp_min,
                           "rp_max": ln.rp_max, "v_oh": None, "noise_margin_low": None,
                           "noise_margin_high": None, "pullup_power": None}
    if lim.cb_max is not None:
        out.pick("bus-capacitance", up, [le(ln.cb, lim.cb_max)], warn, "F")
    if lim.leakage_bus is not None:
        out.pick("bus-leakage", up, [le(ln.leakage, lim.leakage_bus)], warn, "A")
    far = _far(s, ctx.segs, ctx.links[s.index], ln.signal)
    phys = unchecked if _in_domain(ctx, ln, v, rp_lo, rp_hi, far) else pu
    # the end nearer its bound, by pullup.pullup_margins' two ratios (its inputs are
    # the gathering's): Rp(min) below (>=), Rp(max) above (<=)
    m_lo, m_hi = rp_lo / ln.rp_min - 1.0, 1.0 - rp_hi / ln.rp_max
    # an unbounded Rp(max) (Cb 0) is never the nearer bound: against it the margin
    # would be inf/inf
    low = (m_lo <= m_hi) | np.isinf(ln.rp_max)
    # Rp(min) rests on the weakest sink's point (soft where it is a class's typical one);
    # then the largest Rp(min) of a firm sink is a second row, firm: below it the window
    # fails against it (a firm failure comes first, batchresult._worst_cell), above it
    # the soft row (the larger Rp(min), the smaller margin) is the worst and warns
    rows = [(np.where(low, rp_lo, rp_hi), np.where(low, ln.rp_min, ln.rp_max),
             np.where(low, -1.0, 1.0), None)]
    soft = None
    if np.any(ln.soft_min):
        soft = [np.logical_and(low, ln.soft_min), False]
        rows.append(ge(rp_lo, ln.rp_min_firm))
    out.pick("pullup-window", up, rows, warn, "Ω", soft=soft).basis = (m_lo, m_hi)
    # the rise factor is infinite on an SMBus rail at or below the rise's upper point
    # (limits.rise_factor): the line never gets there, as below
    k = ln.rise_factor
    k_ok = np.isfinite(k)
    joins = _joins(ctx, s, ln.signal) if far else []
    join = Join.merged(joins)
    if join is None:
        tr = np.where(k_ok, phys.rise_time(rp_hi, ln.cb, np.where(k_ok, k, 1.0)), np.inf)
        f["rise_time_10_90"] = phys.rise_time(rp_hi, ln.cb, RISE_10_90)
    else:  # joined while the pass transistor conducts: the check at each rail corner
        with np.errstate(all="ignore"):  # a rail below the upper point: inf, as above
            tr = joined_rise(join, rp_hi, ln.cb, v, *ctx.lim.measuring_levels(v))
        tr = np.where(k_ok, tr, np.inf)
        f["rise_time_10_90"] = _worst_max(joined_rise(join, rp_hi, ln.cb, v, 0.1 * v,
                                                      0.9 * v))
    f["rise_time"] = tr if join is None else _worst_max(tr)
    # a line its pins' leakage holds below the rise's upper level never completes the
    # rise (at either rail corner): it has no rise time (infinite), and the check fails
    # with the reason
    voh = phys.high_level(v, rp_hi, ln.leakage)  # the high level: the v-oh checks' too
    reached = np.all(voh >= lim.measuring_levels(v)[1], axis=-1, keepdims=True)
    rc = out.pick("rise-time", up, [le(np.where(reached, tr, np.inf), lim.tr_max)], warn, "s")
    rc.basis = join  # the wording names the joined line (None: the line alone)
    tr_min = lim.tr_min(np.asarray(v, dtype=float))
    if tr_min is not None:  # the fastest rise: the pull-up and Cb at their low ends
        fast = (phys.rise_time(rp_lo, ln.cb_low, ln.rise_factor) if join is None else
                joined_rise(join, rp_lo, ln.cb_low, v, *lim.measuring_levels(v), fast=True))
        out.pick("rise-time-min", up, [ge(fast, tr_min)], warn, "s")
    # -- low levels
    raw, offset_levels, plain = low_levels(v, rp_lo, ln.drivers, far, ctx.segs, ln.signal,
                                           phys)
    levels = [(vb, i, d if link is None else None) for vb, i, d, link in raw]
    # a low driven by a static-offset side sits at its offset (held higher where the
    # pull-up draws more than its IOL): the bus's low level there, which the pins other
    # than the offset side's own read (bridge-offset checks each against it)
    vol_off = nml_off = None
    if offset_levels:
        vol_off = _reduce(np.max, [np.asarray(pu.held_low_level(
            np.broadcast_to(vb, np.broadcast_shapes(np.shape(vb), np.shape(v))), v, rp_lo,
            d.i_ol), dtype=float) for vb, _, d in offset_levels])
        own = {d.tap.dev.ref for _, _, d in offset_levels}
        others = [r.v_il for r in ln.receivers if r.tap.dev.ref not in own]
        if others:
            nml_off = _reduce(np.min, others) - vol_off
    f["v_ol"] = None if vol_off is None else _worst_max(vol_off)
    f["noise_margin_low"] = None if nml_off is None else np.min(nml_off, axis=-1,
                                                                 keepdims=True)
    if levels:
        shapes = {lv[0].shape for lv in levels}
        if len(shapes) == 1:  # the usual case: no broadcasting needed
            stacked = np.stack([lv[0] for lv in levels])
        else:
            shape = np.broadcast_shapes(*shapes)
            stacked = np.stack([np.broadcast_to(lv[0], shape) for lv in levels])
        vol_bus = np.max(stacked, axis=0)
        f["v_ol"] = _worst_max(vol_bus if vol_off is None else np.maximum(vol_bus, vol_off))
        if ln.receivers:
            chk = out.pick("v-ol", up, [le(vol_bus, r.v_il) for r in ln.receivers], warn, "V",
                           [r.tap.label for r in ln.receivers], per_row=True,
                           soft=[r.tap.pin.soft_v_il for r in ln.receivers])
            behind = [d.tap.label + ("" if link is None else f" via {link.dev.ref}")
                      for _, _, d, link in raw]
            out.after(lambda: _driver_behind(chk, stacked, ctx.n, behind))
            vil_min = _reduce(np.min, [r.v_il for r in ln.receivers])
            nml = vil_min - vol_bus
            if nml_off is not None:  # the offset side's low, read by the other pins
                nml = np.minimum(nml, nml_off)
            f["noise_margin_low"] = np.min(nml, axis=-1, keepdims=True)
            if lim.v_nl_rel is not None:
                limit = lim.v_nl_rel * v
                nm = out.pick("noise-margin-low", up, [ge(nml, limit)], warn, "V")
                # the figure is the check's value (at the corner of its worst margin)
                f["noise_margin_low"] = lambda: nm.value[:, None]
    if levels or offset_levels:
        rows = [(i, d) for _, i, d in levels + offset_levels if d is not None]
        if rows:
            _sink_check(ctx, out, up, rows).basis = [_index(ln.drivers, d) for _, d in rows]
        # the sink at its resistance even past its rating: the most the pull-up draws
        f["pullup_power"] = _reduce(np.max, [_worst_max(v * (v - lv) / rp_lo) for lv in
                                             plain + [o[0] for o in offset_levels]])
    # -- high level (voh, worked out above for the rise)
    f["v_oh"] = np.min(voh, axis=-1, keepdims=True)
    if ln.receivers:
        out.pick("v-oh", up, [ge(voh, r.v_ih) for r in ln.receivers], warn,
                 "V", [r.tap.label for r in ln.receivers], per_row=True,
                 soft=[r.tap.pin.soft_v_ih for r in ln.receivers])
        vih_max = _reduce(np.max, [r.v_ih for r in ln.receivers])
        nmh = voh - vih_max
        f["noise_margin_high"] = np.min(nmh, axis=-1, keepdims=True)
        if lim.v_nh_rel is not None:
            limit = lim.v_nh_rel * v
            nh = out.pick("noise-margin-high", up, [ge(nmh, limit)], warn, "V")
            f["noise_margin_high"] = lambda: nh.value[:, None]  # as noise_margin_low
    _fall_checks(ctx, s.index, ln, out, f, rp_lo, v, far, phys, joins)


def _in_domain(ctx, ln: _Line, v, rp_lo, rp_hi, far) -> bool:
    """Whether every value a line's physics takes is inside the domain its functions
    check (all finite; rail, Cb, leakage, sink and series resistances at or above 0;
    pull-ups, rise factor, sink points above 0; the measuring levels in order), checked
    here in one array: then :mod:`pinlib.physics.pullup.unchecked` gives the same
    numbers, and where not, the checked functions raise their own errors (the low
    levels across a pass transistor are always worked out by the checked function)."""
    v_lo, v_hi = ctx.lim.measuring_levels(v)
    f_lo, f_start = ctx.lim.fall_levels(v)
    at_least_0 = [v, ln.cb, ln.leakage]
    above_0 = [rp_lo, rp_hi, v_hi - v_lo, f_start - f_lo]  # rise factor: +inf allowed
    for d in ln.drivers:
        at_least_0 += [d.r_sink, d.r_sink_low, d.r_series]
        above_0 += [d.v_ol, d.v_ol_low, d.i_ol]
    for d, link, _, _ in far_drivers(far, ctx.segs, ln.signal):  # their fall bounds
        at_least_0.append(d.r_series + link.r_on)
        above_0 += [d.v_ol, d.i_ol]
    return _all_finite(at_least_0, False) and _all_finite(above_0, True)


def _all_finite(xs: list, positive: bool) -> bool:
    """Whether every value of ``xs`` (numbers or arrays) is finite and at or above 0
    (above 0 with ``positive``); a plain number is looked at without numpy."""
    arrays = []
    for x in xs:
        if isinstance(x, float):  # a Python or numpy number
            if not (0.0 < x < math.inf if positive else 0.0 <= x < math.inf):  # NaN fails
                return False
        else:
            arrays.append(np.ravel(x))
    if not arrays:
        return True
    a = np.concatenate(arrays)
    return bool(np.isfinite(a).all() and ((a > 0) if positive else (a >= 0)).all())


def _sink_check(ctx, out: _Out, up: str, rows: list) -> BatchCheck:
    """sink-current: each driver's largest current against its IOL (``rows`` of
    (current, driver)); the worst is the driver nearest (or furthest over) its IOL."""
    if ctx.n == 1:
        sc = _sink_check_one(ctx, out, up, rows)
        if sc is not None:
            return sc
    currents, iols = np.empty((2, ctx.n, len(rows)))  # variant × driver
    soft = np.zeros((ctx.n, len(rows)), dtype=bool)
    for j, (i, d) in enumerate(rows):
        currents[:, j] = _worst_max(i)[:, 0]
        iols[:, j] = np.reshape(d.i_ol, -1) if np.ndim(d.i_ol) else d.i_ol
        soft[:, j] = np.reshape(d.tap.pin.soft_i_ol, -1)
    ratio = currents / iols
    k = np.argmax(ratio, axis=1)[:, None]
    # a driver over a firm rating before one over a soft rating (batchresult._worst_cell)
    firm_over = ~soft & ~(ratio <= 1.0 + AT_LIMIT)  # over it: a margin below 0
    k = np.where(firm_over.any(axis=1, keepdims=True),
                 np.argmax(np.where(firm_over, ratio, -np.inf), axis=1)[:, None], k)
    im = np.take_along_axis(currents, k, axis=1)
    i_ol = np.take_along_axis(iols, k, axis=1)
    sc = out.pick("sink-current", up, [le(im, i_ol)], ctx.warn, "A",
                  [d.tap.label for _, d in rows],
                  soft=[np.take_along_axis(soft, k, axis=1)] if soft.any() else None)

    def rows_of():
        sc.row, sc.row_values = k[:, 0], currents
    out.after(rows_of)
    return sc


def _sink_check_one(ctx, out: _Out, up: str, rows: list) -> BatchCheck | None:
    """:func:`_sink_check` at one variant in plain Python (None where a rating is not a
    positive finite number: the arrays then give the same answer as for many)."""
    currents = [float(i.max()) for i, _ in rows]
    iols = [one(d.i_ol) for _, d in rows]
    if not all(0.0 < x < math.inf for x in iols):
        return None
    soft = [bool(np.ravel(d.tap.pin.soft_i_ol)[0]) for _, d in rows]
    # a driver over a firm rating before one over a soft rating, as for many
    over = [not soft[j] and not currents[j] / iols[j] <= 1.0 + AT_LIMIT
            for j in range(len(rows))]
    k = None  # the first largest ratio, NaN counted as the largest (as numpy's argmax)
    for j in range(len(rows)):
        if any(over) and not over[j]:
            continue
        if k is None:
            k = j
            continue
        r, best = currents[j] / iols[j], currents[k] / iols[k]
        if best == best and (r != r or r > best):
            k = j
    sc = out.pick("sink-current", up, [le(currents[k], iols[k])], ctx.warn, "A",
                  [d.tap.label for _, d in rows], soft=[soft[k]] if any(soft) else None)

    def rows_of():
        sc.row, sc.row_values = np.array([k]), np.array([currents])
    out.after(rows_of)
    return sc


def _driver_behind(chk, stacked, n: int, names: list) -> None:
    """The driver whose low level is the bus's at the v-ol check's worst corner, per
    variant (the first of equal levels, as the one-bus check names it)."""
    by = np.argmax(stacked, axis=0)
    by = np.broadcast_to(by, (n, by.shape[-1]))
    corner = chk.corner if chk.corner is not None else np.zeros(n, dtype=int)
    chk.by, chk.by_names = by[np.arange(n), corner], names


def _index(items: list, x) -> int:
    """The position of ``x`` itself in ``items`` (by identity). [1]"""
    return next(j for j, y in enumerate(items) if y is x)


def _fall_checks(ctx, s_index: int, ln: _Line, out: _Out, f: dict, rp_lo, v, far,
                 phys, joins=None) -> None:
    """Fall time (each driver's upper bound, the worst named; joined across pass
    transistors, ``joins``) and tf(min)."""
    lim, warn, up = ctx.lim, ctx.warn, ln.signal.upper()
    bounds = fall_bounds(lim, rp_lo, ln.cb, v, ln.drivers, far, ctx.segs, ln.signal, phys,
                         joins)
    f["fall_time"] = None
    if not bounds:
        return
    f["fall_time"] = _reduce(np.max, [_worst_max(t) for t, _, _, _ in bounds])
    # a joined row that fails only with the translator's soft threshold maximum (it
    # passes at its typical one) rests on that value: it warns (arith.fall_bounds' t_typ)
    soft = [False if info["t_typ"] is None else
            np.all(info["t_typ"] <= lim.tf_max, axis=-1, keepdims=True)
            for _, _, _, info in bounds]
    ft = out.pick("fall-time", up, [le(t, lim.tf_max) for t, _, _, _ in bounds], warn, "s",
                  [d.tap.label + ("" if link is None else f" via {link.dev.ref}")
                   for _, d, link, _ in bounds], soft=soft)
    # per row: what bounds it (arith.fall_bounds' info) and whose driver it is (the
    # segment and the index among that segment's drivers on this line)
    ft.basis = [(info, s_index if link is None else link.other,
                 _index((ln if link is None else ctx.segs[link.other].lines[ln.signal]).drivers,
                        d)) for _, d, link, info in bounds]
    tf_min = lim.tf_min(np.asarray(v[:, -1:], dtype=float))
    if tf_min is not None:
        for d in ln.drivers:
            t_of = d.tap.pin.t_of_min
            if t_of is not None:
                out.pick("fall-time-min", up, [ge(t_of, tf_min)], warn, "s", [d.tap.label])


def _segment_checks(ctx, s: _Seg, out: _Out, figs: dict) -> None:
    """Timing, voltage domains, power states and bridging parts of one segment."""
    _timing_checks(ctx, s, out, figs)
    taps = [t for sig in SIGNALS for t in s.lines[sig].taps]
    _domain_checks(ctx, s, out, taps)
    _bridge_checks(ctx, s, out)


def _timing_checks(ctx, s: _Seg, out: _Out, figs: dict) -> None:
    """The clock against the mode, the slowest device, the SDA data setup."""
    lim, warn, seg = ctx.lim, ctx.warn, s.seg
    clock = ctx.clock
    ctrl = ctx.controller
    t_low = t_high = None
    if ctrl is not None:
        td = ctx.parts.timing(ctrl)
        t_low, t_high = td.t_low, td.t_high
    counted = t_low is None or t_high is None
    t_low, t_high = counted_clock(lim, clock, t_low, t_high)
    tf_scl = figs["scl"]["fall_time"]
    figs["segment"] = {"scl_frequency_effective": pu.scl_frequency(
        t_low, t_high, figs["scl"]["rise_time"], tf_scl if tf_scl is not None else 0.0),
        "sda_setup_margin": None}
    # what the wording names: the SCL times and whether they are counted (none stated)
    # the clock against the mode's maximum and, where the document sets one (SMBus's
    # fSMB), its minimum: one check, the nearer limit named
    rows = [le(clock, lim.f_max)] + ([] if lim.f_min is None else [ge(clock, lim.f_min)])
    out.pick("scl-frequency", None, rows, 0.0, "Hz").basis = {
        "t_low": t_low, "t_high": t_high, "counted": counted}
    slow = [(ctx.parts.timing(d), d.ref) for d in seg.devices
            if not d.is_controller and not d.is_bridge and ctx.parts.timing(d).f_max is not None]
    if slow:
        out.pick("device-speed", None, [le(clock, t.f_max) for t, _ in slow], 0.0,
                 "Hz", [ref for _, ref in slow], soft=[t.soft_f_max for t, _ in slow])
    # -- SDA data setup
    tr_sda = figs["sda"]["rise_time"]
    def drives_sda(d, seg):  # its pin as the segment's SDA line holds it
        taps = ctx.by_id[seg.id].lines["sda"].taps
        return any(t.dev is d and t.pin.open_drain for t in taps)

    sources = list(data_sources(s.index, ctx.ctrl_seg, [(o.index, o.seg) for o in ctx.segs],
                                ctrl, ctx.delay, drives_sda))
    if sources:
        tvd = [ctx.parts.timing(d).t_vd_dat + extra for d, extra in sources]
        st = out.pick("setup-time", None, [ge(t_low - t - tr_sda, lim.t_su_dat) for t in tvd],
                      warn, "s", [d.ref for d, _ in sources])
        st.basis = {"t_low": t_low, "t_vd": tvd, "t_r": tr_sda}
        figs["segment"]["sda_setup_margin"] = lambda: st.value - lim.t_su_dat


def _domain_checks(ctx, s: _Seg, out: _Out, taps: list) -> None:
    """abs_max against the pull-up rail, supply ranges, power states."""
    v, warn, seg = s.v, ctx.warn, s.seg
    taps = [t for sig in SIGNALS for t in s.lines[sig].taps]
    rows, warns, names, soft = [], [], [], []
    for t in taps:
        if t.pin.abs_max is None:
            continue
        names.append(t.label)
        soft.append(t.pin.soft_abs_max)
        am = _corner(t.pin.abs_max, t, v, "min")
        rows.append(le(v, am))
        follows = np.logical_and(not t.own, t.pin.abs_follows)
        warns.append(np.where(follows, 0.0, warn))
    if rows:
        out.pick("input-voltage", None, rows, warns, "V", names, per_row=True, soft=soft)
    rows, seen, names, lows, soft = [], set(), [], [], []
    for t in taps:
        if t.ref in seen:
            continue
        seen.add(t.ref)
        if t.timing.supply is None:
            continue
        s_min, s_max = t.timing.supply
        lo = t.rail.min(axis=1, keepdims=True)
        hi = t.rail.max(axis=1, keepdims=True)
        m, low_side = supply_margin(lo, hi, s_min, s_max)
        names.append(t.label)
        lows.append(low_side)
        rows.append(given(m, np.where(low_side, lo, hi), np.where(low_side, s_min, s_max)))
        soft.append(np.where(low_side, *t.timing.soft_supply))
    if rows:  # basis: per row, whether the rail's low end is the one nearer its limit
        out.pick("supply-range", None, rows, 0.0, "V", names, soft=soft).basis = lows
    # -- power states
    for d in seg.devices:
        if not d.switched:
            continue
        ok, firm = np.asarray(True), np.asarray(False)
        for t in taps:
            if t.dev is d:
                ok = np.logical_and(ok, t.pin.off_tolerant)
                # a pin a firm statement (a datasheet's) says is not tolerant fails
                firm = np.logical_or(firm, np.logical_and(
                    np.logical_not(t.pin.off_tolerant), np.logical_not(t.pin.soft_off_tolerant)))
        out.truth("power-off", None, ok, (d.ref,), soft=np.logical_not(firm))


def _bridge_checks(ctx, s: _Seg, out: _Out) -> None:
    """Gate drive of pass transistors; static-offset sides."""
    v, warn, seg = s.v, ctx.warn, s.seg
    offsets = []
    for link in ctx.links[s.index]:
        d = link.dev
        if link.kind == "mosfet":
            other = ctx.segs[link.other]
            if d.part_side == "a":  # its gate and source side on the lower rail (or equal)
                out.truth("bridge-gate-side", None, seg.supply <= other.seg.supply, (d.ref,))
            if seg.supply > other.seg.supply:
                continue
            br = d.part.bridge
            if br.v_gs_th is not None:
                over = v[:, :1] - float(br.v_gs_th.value)
                margin, status = gate_drive(over)
                out.add("bridge-gate-drive", None, over, 0.0, margin, status, "V")
            continue
        if _offset_side(d) == d.side:
            offsets.append(d)
    for d in offsets:
        side = d.part.sides[d.side]
        if side.low_offset is None:
            continue
        tap = next(t for t in s.lines["sda"].taps if t.dev is d)
        off = _corner(Level.of(side.low_offset), tap, v, "max")
        facing = [(r, sig) for sig in SIGNALS for r in s.lines[sig].receivers
                  if r.tap.dev.ref != d.ref]
        if facing:
            out.pick("bridge-offset", None, [le(off, r.v_il) for r, _ in facing], warn, "V",
                     [f"{r.tap.label} ({sig.upper()})" for r, sig in facing],
                     soft=[r.tap.pin.soft_v_il for r, _ in facing])
    if offsets:  # soft where an offset or a facing side's VIL compared is soft
        soft = np.asarray(False)
        for d in offsets[:2]:
            low = d.part.sides[d.side].low_offset
            tap = next(t for t in s.lines["sda"].taps if t.dev is d)
            soft = np.logical_or(soft, np.logical_or(low is not None and low.soft,
                                                     tap.pin.soft_v_il))
        out.truth("bridge-offset-facing", None, len(offsets) < 2,
                  soft=soft if len(offsets) > 1 else False)


class _Ctx:
    pass


def build(bus: Bus, design: Design, scenario: Scenario, *,
          swap: tuple[str, Sequence[Part]] | None = None, collected=None) -> BusBatch:
    """Evaluate an open-drain bus for every variant of a batch.

    Parameters
    ----------
    bus : Bus
        An ``i2c`` or ``smbus`` bus of ``design``. [1]
    design : Design
        The design (its warning threshold). [1]
    scenario : Scenario
        What varies: :class:`WorstCase` (the engine's corners), or samples. [1]
    swap : (str, sequence of Part), optional
        A reference designator and the parts to put there, one per variant; they must
        share one :func:`structure`, and the position must not be a bridging part. [1]
    collected : tuple, optional
        :func:`pinlib.engines.opendrain.collect` of the bus, when already at hand; at
        the design's own corners (:class:`WorstCase`, no ``swap``) its chosen pull-ups
        are taken rather than chosen again. [1]

    Returns
    -------
    BusBatch
        Every check of every segment, each an array over the variants.

    Raises
    ------
    InputError, DesignError
        When the physics refuses a value (the engine raises the same for that
        variant).
    """
    return run(bus, design, scenario, swap=swap, collected=collected)[1]


def run(bus: Bus, design: Design, scenario: Scenario, *,
        swap: tuple[str, Sequence[Part]] | None = None, collected=None,
        name_segments: bool = False):
    """:func:`build`, returning also what the checks were made in (the limits, the
    segments' joins, the controller and its segment, the clock and the warning
    threshold: the wording of :func:`pinlib.engines.opendrain.evaluate_bus` reads them).
    With ``name_segments``, a value the physics refuses while a segment's checks are
    made raises a DesignError naming the bus and segment (as the engine reports it).

    Returns
    -------
    (context, BusBatch)
    """
    lim, seg_ins = collected if collected is not None else collect(bus, design)
    n = int(scenario.n) if swap is None else len(swap[1])
    parts = _Parts(lim, swap)
    # the engine's corners of the design as it stands: every variant is the design, whose
    # pull-ups the gathering has chosen already (WorstCase.resistor takes them)
    own = swap is None and type(scenario) is WorstCase
    chooses = scenario.chooses and not own
    segs: list[_Seg] = []
    for i, (seg, sin) in enumerate(zip(bus.segments, seg_ins, strict=True)):
        v = np.asarray(scenario.rails(seg), dtype=float)
        if own:  # the gathering's lines: the pins are not read again
            lines = {sig: line_from(sin.lines[sig], seg, parts, scenario) for sig in SIGNALS}
        else:
            board = scenario.board(bus, seg, sin.lines["sda"].cb_parts)
            lines = {sig: _line(bus, seg, sig, fn, v, parts, scenario, lim, board)
                     for sig, fn in SIGNALS.items()}
        s = _Seg(seg, i, v, scenario.spread(seg), lines)
        if chooses:
            _choose(s)
        else:
            for sig, ln in lines.items():
                ln.pullup = scenario.resistor(bus, seg, sig, sin.pullup)
        segs.append(s)
    pairs = [(s.index, s.seg) for s in segs]
    joins = links(pairs)
    if not own and any(ln.kind == "mosfet" for lst in joins.values() for ln in lst):
        _couple(segs, joins, chooses)  # (at the design's own corners: the gathering's)
    ctx = _Ctx()
    ctx.lim, ctx.segs, ctx.links, ctx.parts, ctx.n = lim, segs, joins, parts, n
    ctx.by_id = {s.seg.id: s for s in segs}
    ctx.warn = design.warn_margin
    ctx.clock = bus.clock if bus.clock is not None else lim.f_max
    ctx.controller, ctx.ctrl_seg = controller_of(bus, pairs)
    ctx.delay = delays(ctx.ctrl_seg, joins)
    result = BusBatch(bus.id, n)
    for s in segs:
        try:
            result.segments.append(_segment(ctx, s, n))
        except InputError as exc:  # a value the physics refuses: name the segment
            if not name_segments:
                raise
            raise DesignError(exc.problem, field=f"bus {bus.id} segment {s.seg.id}"
                              + (f": {exc.field}" if exc.field else ""), value=exc.value,
                              expected=exc.expected) from None
    return ctx, result


def _segment(ctx, s: _Seg, n: int) -> SegmentBatch:
    """Every check and figure of one segment."""
    out = _Out(s.seg.id, n)
    figs: dict = {}
    for ln in s.lines.values():
        _line_checks(ctx, s, ln, out, figs)
    _segment_checks(ctx, s, out, figs)
    checks = out.finish()
    return SegmentBatch(s.seg.id, checks, _figures(s, figs, out))
