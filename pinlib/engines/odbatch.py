"""The open-drain engine's checks, vectorized over a batch of variants of one bus.

:mod:`pinlib.buses.opendrain` evaluates one bus at its worst-case corners and explains
every figure.  Studies over many variants of a bus — Monte Carlo samples and corners of
its toleranced parameters (:mod:`pinlib.whatif`), or every library part that could
stand in one position (:mod:`pinlib.candidates`) — need the same numbers for thousands
of variants at once.  :func:`build` computes them in one numpy pass per bus: the
*structure* of the bus (which pins drive and which receive, which part pull-ups exist)
is fixed for a batch; every *value* may be an array over the batch.

It follows the engine step by step — the same physics functions, the same order of
operations, the same checks in the same order, without the messages — so that each
variant's margins are the engine's; the tests hold it to that (a batch of candidates
against :func:`pinlib.check.check_design` of each substituted design, and samples of a
design without tolerances against its engine result).

A :class:`Scenario` says what varies.  :class:`WorstCase` takes the engine's corners
(each rail at ± its tolerance, the pull-ups at the end that hurts each check,
capacitances at the top of their tolerance) and chooses ``auto`` pull-ups for every
variant.  A sampled scenario (:class:`pinlib.whatif.Sampled`) gives each variant its
own rails, resistors and capacitances and evaluates it at that one point.

Arrays are *batch columns*: shape ``(N, 1)``, or anything that broadcasts to it; the
second axis holds the rail corners (two for :class:`WorstCase`, one for a sample).
"""

from __future__ import annotations

import math
from collections import deque
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any, NamedTuple

import numpy as np

from pinlib.core import eseries
from pinlib.core.quantity import Threshold
from pinlib.engines import opendrain as od
from pinlib.engines.limits import OpenDrainLimits
from pinlib.library.schema import Part
from pinlib.model.design import Bus, Design, Device, Segment
from pinlib.model.result import STATUSES, max_margin, min_margin, status_codes
from pinlib.physics import pullup as pu
from pinlib.standards import i2c as i2c_std

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

#: Status codes of :attr:`BatchCheck.status`, in order of severity (the index of each).
STATUS = STATUSES

#: Parts that load a line but read nothing on it (the engine's rule).
_NOT_RECEIVERS = ("connector", "cable")


# ============================================================================ values


class Level(NamedTuple):
    """A threshold over the batch: ``scale·VDD + offset``.

    Attributes
    ----------
    scale : float or numpy.ndarray
        Fraction of the part's own supply. [1]
    offset : float or numpy.ndarray
        Fixed part. [V]
    """

    scale: Any
    offset: Any

    def at(self, vdd):
        """The level at a supply (any shape that broadcasts with the batch). [V]"""
        return self.scale * vdd + self.offset

    @classmethod
    def of(cls, value) -> Level:
        """From a :class:`~pinlib.library.values.Sourced` level or voltage."""
        v = value.value
        if type(v) is Threshold or isinstance(v, Threshold):
            return cls(v.scale, v.offset)
        return cls(0.0, float(v))


@dataclass
class PinData:
    """One pin as the engine reads it, defaults filled in, values over the batch.

    ``driver``, ``receiver``, ``open_drain`` and whether the optional values are present
    are structure (the same for the whole batch); the rest may be batch columns.
    """

    name: str
    open_drain: bool
    driver: bool
    receiver: bool
    c_in: Any              # [F]; the specification's maximum when the part states none
    leakage: Any           # [A]; 0 for a part that reads nothing and states none
    v_ol: Level            # [V] with i_ol; the specification's sink when not stated
    i_ol: Any              # [A]
    v_il: Level            # [V]
    v_ih: Level            # [V]
    abs_max: Level | None  # [V]
    abs_follows: Any       # abs_max written as VDD + a non-negative offset
    pullup: Any | None     # [Ω] a resistor the part carries
    pullup_internal: Any | None  # [Ω] counted only when the design enables it
    off_tolerant: Any
    t_of_min: Any | None   # [s]


@dataclass
class TimingData:
    """A part's timing and supply range as the engine reads them, over the batch."""

    f_max: Any | None      # [Hz]
    t_vd_dat: Any          # [s]; the specification's when not stated
    t_low: Any | None      # [s]
    t_high: Any | None     # [s]
    supply: tuple | None   # (min, max) [V] of the device's side


def _pin_data(pin, name: str, part: Part, dev: Device, lim: OpenDrainLimits,
              vdd: float, defaults=None) -> PinData:
    mosfet = part.bridge is not None and part.bridge.kind == "mosfet"
    if pin.leakage is not None:
        leak = float(pin.leakage.value)
    elif part.category not in _NOT_RECEIVERS:
        leak = lim.i_leak
    else:
        leak = 0.0
    (d_vol, d_iol, _), (d_il, d_ih) = defaults or (lim.default_sink(vdd), lim.default_levels())
    has = pin.v_il is not None or pin.v_ih is not None
    abs_max = follows = None
    if pin.abs_max is not None:
        abs_max = Level.of(pin.abs_max)
        th = pin.abs_max.value
        follows = getattr(th, "scale", 0.0) == 1.0 and th.offset >= 0.0
    internal = None
    if dev.internal_pullups and pin.pullup_internal is not None:
        internal = float(pin.pullup_internal.value)
    return PinData(
        name=name,
        open_drain=pin.drive == "open-drain",
        driver=pin.drive == "open-drain" and not mosfet,
        receiver=has or not (part.category in _NOT_RECEIVERS or mosfet),
        c_in=float(pin.c_in.value) if pin.c_in is not None else lim.c_pin,
        leakage=leak,
        v_ol=Level.of(pin.v_ol if pin.v_ol is not None else d_vol),
        i_ol=float((pin.i_ol if pin.i_ol is not None else d_iol).value),
        v_il=Level.of(pin.v_il if pin.v_il is not None else d_il),
        v_ih=Level.of(pin.v_ih if pin.v_ih is not None else d_ih),
        abs_max=abs_max,
        abs_follows=follows,
        pullup=float(pin.pullup.value) if pin.pullup is not None else None,
        pullup_internal=internal,
        off_tolerant=bool(pin.off_tolerant),
        t_of_min=float(pin.t_of_min.value) if pin.t_of_min is not None else None,
    )


def _timing_data(part: Part, dev: Device, lim: OpenDrainLimits) -> TimingData:
    t = part.timing
    sup = part.supply_for(dev.side)
    return TimingData(
        f_max=float(t.f_max.value) if t.f_max is not None else None,
        t_vd_dat=float(t.t_vd_dat.value) if t.t_vd_dat is not None else lim.t_vd_dat,
        t_low=float(t.t_low.value) if t.t_low is not None else None,
        t_high=float(t.t_high.value) if t.t_high is not None else None,
        supply=(float(sup.min.value), float(sup.max.value)) if sup is not None else None,
    )


def _stack(items: list):
    """Many per-part records (same structure) -> one record of batch columns."""
    first = items[0]
    if len(items) == 1 or first is None or isinstance(first, str):
        return first  # a pin name is kept for labels only
    if isinstance(first, Level):
        return Level(_stack([x.scale for x in items]), _stack([x.offset for x in items]))
    if isinstance(first, (PinData, TimingData)):
        return type(first)(**{k: getattr(first, k) if k in _STRUCTURAL else
                              _stack([getattr(x, k) for x in items])
                              for k in first.__dataclass_fields__})
    if isinstance(first, tuple):
        return tuple(_stack([x[i] for x in items]) for i in range(len(first)))
    kind = bool if isinstance(first, (bool, np.bool_)) else float
    return np.array(items, dtype=kind)[:, None]


_STRUCTURAL = ("open_drain", "driver", "receiver")


def structure(part: Part, dev: Device, bus: Bus, lim: OpenDrainLimits | None = None) -> tuple:
    """What of a part at a device's position shapes the batch (parts with equal
    structure are evaluated together).

    Parameters
    ----------
    part : Part
        A plain (non-bridging) part. [1]
    dev : Device
        The position: its side, its switches (internal pull-ups). [1]
    bus : Bus
        An open-drain bus the position is on. [1]
    lim : OpenDrainLimits, optional
        Not needed; kept for symmetry with :func:`build`. [1]
    """
    mosfet = part.bridge is not None and part.bridge.kind == "mosfet"
    quiet = part.category in _NOT_RECEIVERS or mosfet
    key = []
    for fn in od.SIGNALS.values():
        got = part.pin_for(fn, None)
        if got is None:
            key.append(None)
            continue
        pin = got[1]
        od_ = pin.drive == "open-drain"
        key.append((od_, od_ and not mosfet,
                    pin.v_il is not None or pin.v_ih is not None or not quiet,
                    pin.abs_max is None, pin.pullup is None,
                    not (dev.internal_pullups and pin.pullup_internal is not None),
                    pin.t_of_min is None))
    t = part.timing
    key.append((t.f_max is None, t.t_low is None, t.t_high is None,
                part.supply_for(dev.side) is None))
    return tuple(key)


# ============================================================================ scenarios


class Scenario:
    """What varies across a batch of variants (the engine's corners, or samples).

    Subclasses give every quantity the engine takes from the design as a batch column;
    ``n`` is the batch size and ``chooses`` says whether ``auto`` pull-ups are chosen
    for each variant (the engine's rule) or taken from :meth:`resistor`.
    """

    n: int = 1
    chooses: bool = True

    def rails(self, seg: Segment):
        """The pull-up rail, shape ``(N, corners)``. [V]"""
        raise NotImplementedError

    def tap_rail(self, vdd: float, seg: Segment):
        """The points of a device's rail of nominal ``vdd`` (``(N, K)``; the worst is
        taken over K). [V]"""
        raise NotImplementedError

    def pin_factor(self, dev: Device, bus: Bus):
        """Factor on a device's pin capacitances. [1]"""
        raise NotImplementedError

    def board(self, bus: Bus, seg: Segment, parts: dict):
        """Traces, cables and extra capacitance of a segment, from the engine's. [F]"""
        raise NotImplementedError

    def series(self, bus: Bus, seg: Segment, dev: Device, signal: str):
        """A device's series resistor on a line (0 for none). [Ω]"""
        raise NotImplementedError

    def contributor(self, bus: Bus, seg: Segment, signal: str, index: int, value: float):
        """A pull-up a part carries (the ``index``-th on the line). [Ω]"""
        raise NotImplementedError

    def resistor(self, bus: Bus, seg: Segment, signal: str, nominal: float):
        """The design's pull-up on a line, when not chosen per variant. [Ω]"""
        raise NotImplementedError

    def spread(self, seg: Segment) -> float:
        """The tolerance applied to the effective pull-up in each check. [1]"""
        raise NotImplementedError


class WorstCase(Scenario):
    """The engine's corners: rails at ± their tolerance, pull-ups at the end that hurts
    each check, capacitances at the top of their tolerance; ``auto`` pull-ups chosen
    for every variant.

    Parameters
    ----------
    n : int
        Batch size (the number of candidate parts, say). [1]
    """

    chooses = True

    def __init__(self, n: int = 1):
        self.n = int(n)

    def rails(self, seg):
        t = seg.supply_tolerance
        return np.array([[seg.supply * (1 - t), seg.supply * (1 + t)]])

    def tap_rail(self, vdd, seg):
        t = seg.supply_tolerance
        return np.array([[vdd * (1 - t), vdd * (1 + t)]])

    def pin_factor(self, dev, bus):
        return 1.0 + (dev.capacitance_tolerance or 0.0)

    def board(self, bus, seg, parts):
        return parts["traces"], parts["cables"], parts["extra"]

    def series(self, bus, seg, dev, signal):
        return dev.series_resistor or 0.0

    def contributor(self, bus, seg, signal, index, value):
        return value

    def resistor(self, bus, seg, signal, nominal):
        return nominal

    def spread(self, seg):
        return seg.pullup_tolerance


# ============================================================================ batch inputs


@dataclass
class _Tap:
    dev: Device
    part: Part | None      # None for the substituted position (values in `pin`)
    pin: PinData
    timing: TimingData
    vdd: float
    own: bool
    mosfet: bool
    rail: Any              # the points of its rail, (N, K)

    @property
    def ref(self) -> str:
        return self.dev.ref


@dataclass
class _Driver:
    tap: _Tap
    v_ol: Any
    i_ol: Any
    r_on: Any
    r_series: Any
    offset: Any = None


@dataclass
class _Receiver:
    tap: _Tap
    v_il: Any
    v_ih: Any


@dataclass
class _Line:
    signal: str
    taps: list
    cb: Any
    leakage: Any
    drivers: list
    receivers: list
    r_parts: Any
    rp_min: Any
    rp_max: Any
    factor: Any
    pullup: Any = None     # the design resistor on this line


@dataclass
class _Seg:
    seg: Segment
    index: int
    v: Any
    tol: float
    lines: dict

    def r_eff(self, signal):
        return pu.parallel(self.lines[signal].pullup, self.lines[signal].r_parts)

    def r_lo(self, signal):
        return self.r_eff(signal) * (1 - self.tol)


@dataclass
class _Link:
    dev: Device
    other: int
    kind: str
    r_on: float
    t_pd: float


def _corner(level: Level, tap: _Tap, v, worst: str):
    """A level at the rail corners: following the pull-up rail, or the worst end of the
    device's own rail (the engine's ``_corner_values``). [V]"""
    if not tap.own:
        return level.at(v)
    vals = level.at(tap.rail)
    red = vals.min(axis=1, keepdims=True) if worst == "min" else vals.max(axis=1, keepdims=True)
    return np.broadcast_to(red, np.broadcast_shapes(red.shape, np.shape(v)))


def _is_mosfet(part: Part | None) -> bool:
    return part is not None and part.bridge is not None and part.bridge.kind == "mosfet"


def _offset_side(dev: Device) -> str | None:
    part = dev.part
    if not part.sides or _is_mosfet(part):
        return None
    for name, side in part.sides.items():
        if side.low_offset is not None:
            return name
    return part.bridge.low_offset_side if part.bridge else None


class _Parts:
    """Pin and timing data of each device, the substituted position stacked."""

    def __init__(self, lim, swap):
        self.lim = lim
        self.ref, self.parts = swap if swap else (None, None)
        self._timing: dict = {}
        self._pins: dict = {}
        self._defaults: dict = {}

    def part_of(self, dev: Device) -> Part | None:
        return None if dev.ref == self.ref else dev.part

    def pins(self, dev: Device, function: str, vdd: float):
        key = (dev.ref, dev.side, function, vdd)
        if key in self._pins:
            return self._pins[key]
        parts = self.parts if dev.ref == self.ref else [dev.part]
        side = None if dev.ref == self.ref else dev.side
        found = [p.pin_for(function, side) for p in parts]
        if found[0] is None:
            self._pins[key] = None
            return None
        if vdd not in self._defaults:
            self._defaults[vdd] = (self.lim.default_sink(vdd), self.lim.default_levels())
        d = self._defaults[vdd]
        out = self._pins[key] = _stack([_pin_data(pin, name, p, dev, self.lim, vdd, d)
                                        for (name, pin), p in zip(found, parts, strict=True)])
        return out

    def timing(self, dev: Device) -> TimingData:
        key = (dev.ref, dev.side)
        if key not in self._timing:
            parts = self.parts if dev.ref == self.ref else [dev.part]
            self._timing[key] = _stack([_timing_data(p, dev, self.lim) for p in parts])
        return self._timing[key]


def _taps(seg: Segment, function: str, parts: _Parts, scen: Scenario) -> list[_Tap]:
    out = []
    for d in seg.devices:
        own = d.supply is not None and not math.isclose(d.supply, seg.supply, rel_tol=1e-9)
        vdd = d.supply if own else seg.supply
        pin = parts.pins(d, function, vdd)
        if pin is None:
            continue
        part = parts.part_of(d)
        out.append(_Tap(d, part, pin, parts.timing(d), vdd, own, _is_mosfet(part),
                        scen.tap_rail(vdd, seg)))
    return out


def _line(bus, seg, signal, function, v, parts, scen, lim, board) -> _Line:
    taps = _taps(seg, function, parts, scen)
    c_pins = 0.0
    for t in taps:
        c_pins = c_pins + t.pin.c_in * scen.pin_factor(t.dev, bus)
    traces, cables, extra = board
    cb = c_pins + traces + cables + extra
    leak = 0.0
    for t in taps:
        leak = leak + t.pin.leakage
    drivers = []
    for t in taps:
        if not t.pin.driver:
            continue
        v_ol = _corner(t.pin.v_ol, t, v, "max")
        i_ol = t.pin.i_ol
        offset = None
        if t.part is not None and t.dev.side is not None and _offset_side(t.dev) == t.dev.side:
            side = t.part.sides[t.dev.side]
            if side.low_offset is not None:
                offset = np.max(_corner(Level.of(side.low_offset), t, v, "max"), axis=1,
                                keepdims=True)
        drivers.append(_Driver(t, v_ol, i_ol, v_ol / i_ol,
                               scen.series(bus, seg, t.dev, signal), offset))
    receivers = [_Receiver(t, _corner(t.pin.v_il, t, v, "min"), _corner(t.pin.v_ih, t, v, "max"))
                 for t in taps if t.pin.receiver]
    contributors = []
    for t in taps:
        for value in (t.pin.pullup, t.pin.pullup_internal):
            if value is not None:
                contributors.append(scen.contributor(bus, seg, signal, len(contributors), value))
    r_parts = pu.parallel(*contributors) if contributors else math.inf
    v_max = v[:, -1:]
    best = 0.0
    for d in drivers:
        best = np.maximum(best, (v_max - d.v_ol[:, -1:]) / d.i_ol)
    rp_min = np.where(np.asarray(best) > 0, best, 1e-3)
    factor = lim.rise_factor(v[:, :1])
    cb_arr = np.asarray(cb, dtype=float)
    with np.errstate(divide="ignore"):
        rp_max = np.where(cb_arr > 0, lim.tr_max / (factor * np.where(cb_arr > 0, cb_arr, 1.0)),
                          math.inf)
    return _Line(signal, taps, cb, leak, drivers, receivers, r_parts, rp_min, rp_max, factor)


def _choose(s: _Seg) -> None:
    """The engine's ``auto`` rule for every variant: the series value with the largest
    smaller tolerance-adjusted margin to Rp(min) and Rp(max) on both lines."""
    seg = s.seg
    if seg.pullup != "auto":
        for ln in s.lines.values():
            ln.pullup = float(seg.pullup)
        return
    cand = eseries.values_in_range(seg.pullup_series, 10.0, 10e6)[None, :]
    worst = np.full(cand.shape, np.inf)
    for ln in s.lines.values():
        lo, hi = pu.pullup_margins(cand, ln.rp_min, ln.rp_max, s.tol, ln.r_parts)
        worst = np.minimum(worst, np.minimum(lo, hi))
    chosen = cand[0, np.argmax(worst, axis=1)][:, None]
    for ln in s.lines.values():
        ln.pullup = chosen


def _links(segs: list[_Seg]) -> dict[int, list[_Link]]:
    where: dict[str, list] = {}
    for s in segs:
        for d in s.seg.devices:
            if d.is_bridge:
                where.setdefault(d.ref, []).append((s.index, d))
    out: dict[int, list[_Link]] = {s.index: [] for s in segs}
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


def _rp_min_coupled(s: _Seg, signal: str, segs: list[_Seg], links: list[_Link]):
    """Rp(min) of a segment joined to others through pass transistors (the engine's)."""
    v_max = s.v[:, -1:]
    far = [(link, segs[link.other], segs[link.other].v[:, -1:], segs[link.other].r_lo(signal))
           for link in links if link.kind == "mosfet"]
    best = np.asarray(1e-3)
    for d in s.lines[signal].drivers:
        v_ol = d.v_ol[:, -1:]
        i_far = 0
        for link, _, vo, rp in far:
            i_far = i_far + np.maximum(vo - v_ol, 0.0) / (rp + link.r_on)
        budget_i = d.i_ol - i_far
        ok = budget_i > 0
        r = np.where(ok, (v_max - v_ol) / np.where(ok, budget_i, 1.0), math.inf)
        best = np.where(r > best, r, best)
    for link, other, vo, rp_o in far:
        for d in other.lines[signal].drivers:
            if d.tap.dev.is_bridge:
                continue
            v_ol = d.v_ol[:, -1:]
            budget_i = d.i_ol - np.maximum(vo - v_ol, 0.0) / rp_o
            ok = budget_i > 0
            r = np.where(ok, (v_max - v_ol) / np.where(ok, budget_i, 1.0) - link.r_on, math.inf)
            best = np.where(r > best, r, best)
    return best


def _couple(segs: list[_Seg], links: dict[int, list[_Link]], scen: Scenario) -> None:
    coupled = [s for s in segs if any(ln.kind == "mosfet" for ln in links[s.index])]
    if not scen.chooses:
        for s in coupled:
            for sig, ln in s.lines.items():
                ln.rp_min = _rp_min_coupled(s, sig, segs, links[s.index])
        return
    # the engine re-chooses each segment against the others' present values, at most 8
    # rounds; a variant that settled stays settled, so the rounds run until none moves
    for _ in range(8):
        changed = False
        for s in coupled:
            for sig, ln in s.lines.items():
                ln.rp_min = _rp_min_coupled(s, sig, segs, links[s.index])
            before = s.lines["sda"].pullup
            _choose(s)
            changed |= bool(np.any(s.lines["sda"].pullup != before))
        if not changed:
            break


# ============================================================================ checks


@dataclass
class BatchCheck:
    """One check of the engine, for every variant of the batch.

    Attributes
    ----------
    id : str
        The engine's check id (``rise-time``...). [1]
    segment : str
        The segment id. [1]
    signal : str or None
        ``"SDA"``/``"SCL"`` for a check of one line. [1]
    value, limit : numpy.ndarray or None
        At the worst corner and element, shape ``(N,)``; None for a yes/no check. [unit]
    margin : numpy.ndarray or None
        Relative margin, shape ``(N,)``; None for a yes/no check. [1]
    status : numpy.ndarray
        Index into :data:`STATUS`, shape ``(N,)``. [1]
    unit : str
        Unit of value and limit. [1]
    """

    id: str
    segment: str
    signal: str | None
    value: Any
    limit: Any
    margin: Any
    status: Any
    unit: str = ""

    @property
    def label(self) -> str:
        return f"{self.id} {self.signal}" if self.signal else self.id


@dataclass
class SegmentBatch:
    id: str
    checks: list[BatchCheck] = field(default_factory=list)
    figures: dict = field(default_factory=dict)


@dataclass
class BusBatch:
    """The checks of one open-drain bus over a batch, segment by segment (in the
    engine's order within each)."""

    bus: str
    n: int
    segments: list[SegmentBatch] = field(default_factory=list)

    def checks(self):
        """Every check: (segment id, BatchCheck)."""
        for s in self.segments:
            for c in s.checks:
                yield s.id, c


class _Out:
    def __init__(self, seg_id: str, n: int):
        self.seg_id, self.n = seg_id, n
        self.checks: list[BatchCheck] = []

    def _n(self, x):
        return np.broadcast_to(np.asarray(x, dtype=float).reshape(-1), (self.n,)) \
            if np.size(x) in (1, self.n) else np.asarray(x, dtype=float).reshape(self.n)

    def pick(self, id, signal, rows, warn, unit):
        """The worst (row, corner) of margin arrays: ``rows`` of (margin, value, limit)
        and optionally a per-row warning threshold."""
        shape = np.broadcast_shapes(*[np.shape(a) for r in rows for a in r[:3]],
                                    (self.n, 1))
        if len(rows) == 1 and shape[1] == 1 and not isinstance(warn, (list, tuple)):
            m, v, lim = (np.broadcast_to(a, shape)[:, 0] for a in rows[0][:3])
            self.add(id, signal, v, lim, m, status_codes(m, warn), unit)
            return
        ms = np.stack([np.broadcast_to(r[0], shape) for r in rows], axis=1)
        vs = np.stack([np.broadcast_to(r[1], shape) for r in rows], axis=1)
        ls = np.stack([np.broadcast_to(r[2], shape) for r in rows], axis=1)
        flat = ms.reshape(shape[0], -1)
        idx = np.argmin(np.where(np.isnan(flat), -np.inf, flat), axis=1)[:, None]
        margin = np.take_along_axis(flat, idx, axis=1)[:, 0]
        value = np.take_along_axis(vs.reshape(shape[0], -1), idx, axis=1)[:, 0]
        limit = np.take_along_axis(ls.reshape(shape[0], -1), idx, axis=1)[:, 0]
        if isinstance(warn, (list, tuple)):
            w = np.stack([np.broadcast_to(np.asarray(x, dtype=float).reshape(-1, 1)
                                          if np.ndim(x) else x, (shape[0], 1))[:, 0]
                          for x in warn], axis=1)
            warn = np.take_along_axis(w, idx // shape[1], axis=1)[:, 0]
        self.add(id, signal, value, limit, margin, status_codes(margin, warn), unit)

    def add(self, id, signal, value, limit, margin, status, unit=""):
        self.checks.append(BatchCheck(
            id, self.seg_id, signal,
            None if value is None else self._n(value),
            None if limit is None else self._n(limit),
            None if margin is None else self._n(margin),
            np.broadcast_to(np.asarray(status, dtype=np.int8).reshape(-1), (self.n,))
            if np.size(status) == 1 else np.asarray(status, dtype=np.int8).reshape(self.n),
            unit))

    def truth(self, id, signal, ok):
        self.add(id, signal, None, None, None, np.where(np.asarray(ok), 0, 2))


def _worst_max(x):
    """Largest over the corner axis. [unit]"""
    return np.max(x, axis=1, keepdims=True)


def _far(s: _Seg, segs: list[_Seg], links: list[_Link], signal: str):
    return [(link, segs[link.other].v, segs[link.other].r_lo(signal)) for link in links
            if link.kind == "mosfet"]


def _line_checks(ctx, s: _Seg, ln: _Line, out: _Out, figs: dict) -> None:
    lim, v, tol, up = ctx.lim, s.v, s.tol, ln.signal.upper()
    warn = ctx.warn
    r_eff = s.r_eff(ln.signal)
    rp_lo, rp_hi = r_eff * (1 - tol), r_eff * (1 + tol)
    figs[ln.signal] = f = {"bus_capacitance": ln.cb, "pullup": r_eff}
    if lim.cb_max is not None:
        out.pick("bus-capacitance", up, [(max_margin(ln.cb, lim.cb_max), ln.cb, lim.cb_max)], warn,
                 "F")
    m_lo, m_hi = pu.pullup_margins(ln.pullup, ln.rp_min, ln.rp_max, tol, ln.r_parts)
    low = np.asarray(m_lo) <= np.asarray(m_hi)
    out.pick("pullup-window", up, [(
        np.where(low, min_margin(rp_lo, ln.rp_min), max_margin(rp_hi, ln.rp_max)),
        np.where(low, rp_lo, rp_hi), np.where(low, ln.rp_min, ln.rp_max))], warn, "Ω")
    tr = pu.rise_time(rp_hi, ln.cb, ln.factor)
    f["rise_time"] = tr
    out.pick("rise-time", up, [(max_margin(tr, lim.tr_max), tr, lim.tr_max)], warn, "s")
    # -- low levels
    far = _far(s, ctx.segs, ctx.links[s.index], ln.signal)
    levels, offset_levels = [], []
    for d in ln.drivers:
        if d.offset is not None:
            vb = np.broadcast_to(d.offset, np.broadcast_shapes(np.shape(d.offset), v.shape))
            offset_levels.append((vb, (v - vb) / rp_lo, d))
            continue
        r_low = d.r_on + d.r_series
        if not far:
            vb = pu.low_level(v, rp_lo, d.r_on, d.r_series)
            i = pu.sink_current(v, rp_lo, d.r_on, d.r_series)
        else:
            g = 0
            for link, _, rp in far:
                g = g + 1.0 / (rp + link.r_on)
            v_th = 0
            for link, vv, rp in far:
                v_th = v_th + vv / (rp + link.r_on)
            vb, _, i = pu.translator_low_levels(v, rp_lo, v_th / g, 1.0 / g, 0.0, r_low)
        levels.append((np.asarray(vb, dtype=float), np.asarray(i, dtype=float), d))
    for link, v_other, rp_other in far:
        for d in ctx.segs[link.other].lines[ln.signal].drivers:
            if d.offset is not None or d.tap.dev.is_bridge:
                continue
            _, vf, _ = pu.translator_low_levels(v_other, rp_other, v, rp_lo, link.r_on,
                                                d.r_on + d.r_series)
            levels.append((np.asarray(vf, dtype=float), None, None))
    f["v_ol"] = None
    if levels:
        shape = np.broadcast_shapes(*[lv[0].shape for lv in levels])
        vol_bus = np.max(np.stack([np.broadcast_to(lv[0], shape) for lv in levels]), axis=0)
        f["v_ol"] = _worst_max(vol_bus)
        if ln.receivers:
            out.pick("v-ol", up, [(max_margin(vol_bus, r.v_il), vol_bus, r.v_il)
                                  for r in ln.receivers], warn, "V")
            vil_min = _reduce(np.min, [r.v_il for r in ln.receivers])
            nml = vil_min - vol_bus
            if lim.v_nl_rel is not None:
                limit = lim.v_nl_rel * v
                out.pick("noise-margin-low", up, [(min_margin(nml, limit), nml, limit)], warn, "V")
    if levels or offset_levels:
        rows = [(i, d) for _, i, d in levels + offset_levels if d is not None]
        if rows:
            i_max = [_worst_max(i) for i, _ in rows]
            ratio = [im / d.i_ol for im, (_, d) in zip(i_max, rows, strict=True)]
            shape = np.broadcast_shapes(*[np.shape(r) for r in ratio], (ctx.n, 1))
            k = np.argmax(np.stack([np.broadcast_to(r, shape)[:, 0] for r in ratio], axis=1),
                          axis=1)[:, None]
            im = np.take_along_axis(np.stack([np.broadcast_to(x, shape)[:, 0] for x in i_max],
                                             axis=1), k, axis=1)
            i_ol = np.take_along_axis(np.stack([np.broadcast_to(d.i_ol, shape)[:, 0]
                                                for _, d in rows], axis=1), k, axis=1)
            out.pick("sink-current", up, [(max_margin(im, i_ol), im, i_ol)], warn, "A")
    # -- high level
    voh = pu.high_level(v, rp_hi, ln.leakage)
    if ln.receivers:
        out.pick("v-oh", up, [(min_margin(voh, r.v_ih), voh, r.v_ih) for r in ln.receivers], warn,
                 "V")
        vih_max = _reduce(np.max, [r.v_ih for r in ln.receivers])
        nmh = voh - vih_max
        if lim.v_nh_rel is not None:
            limit = lim.v_nh_rel * v
            out.pick("noise-margin-high", up, [(min_margin(nmh, limit), nmh, limit)], warn, "V")
    # -- fall time
    v_lo, v_hi = lim.measuring_levels(v)
    falls = []
    for d in ln.drivers:
        falls.append(_worst_max(np.asarray(pu.fall_time_bound(
            rp_lo, ln.cb, v, d.v_ol, d.i_ol, v_hi, v_lo, d.r_series), dtype=float)))
    for link, _, _ in far:
        for d in ctx.segs[link.other].lines[ln.signal].drivers:
            if d.offset is not None or d.tap.dev.is_bridge:
                continue
            falls.append(_worst_max(np.asarray(pu.fall_time_bound(
                rp_lo, ln.cb, v, d.v_ol, d.i_ol, v_hi, v_lo, d.r_series + link.r_on),
                dtype=float)))
    f["fall_time"] = None
    if falls:
        tf = _reduce(np.max, falls)
        f["fall_time"] = tf
        out.pick("fall-time", up, [(max_margin(tf, lim.tf_max), tf, lim.tf_max)], warn, "s")
        mode = i2c_std.i2c_mode(lim.mode) if lim.protocol == "i2c" else None
        if mode is not None and mode.tf_min is not None:
            tf_min = np.asarray(mode.tf_min_at(np.asarray(v[:, -1:], dtype=float)))
            for d in ln.drivers:
                t_of = d.tap.pin.t_of_min
                if t_of is not None:
                    out.pick("fall-time-min", up, [(min_margin(t_of, tf_min), t_of, tf_min)], warn,
                             "s")


def _reduce(fn, arrays):
    shape = np.broadcast_shapes(*[np.shape(a) for a in arrays])
    return fn(np.stack([np.broadcast_to(a, shape) for a in arrays]), axis=0)


def _delays(start: int, links: dict[int, list[_Link]]) -> dict[int, float]:
    delay = {start: 0.0}
    queue = deque([start])
    while queue:
        i = queue.popleft()
        for ln in links.get(i, []):
            if ln.other not in delay:
                delay[ln.other] = delay[i] + ln.t_pd
                queue.append(ln.other)
    return delay


def _segment_checks(ctx, s: _Seg, out: _Out, figs: dict) -> None:
    lim, v, warn = ctx.lim, s.v, ctx.warn
    seg = s.seg
    clock = ctx.clock
    ctrl = ctx.controller
    t_low = t_high = None
    if ctrl is not None:
        td = ctx.parts.timing(ctrl)
        t_low, t_high = td.t_low, td.t_high
    if t_low is None or t_high is None:
        period = 1.0 / clock
        share = period / (lim.t_low + lim.t_high)
        t_low = t_low if t_low is not None else max(lim.t_low, lim.t_low * share)
        t_high = t_high if t_high is not None else max(lim.t_high, lim.t_high * share)
    out.pick("scl-frequency", None, [(max_margin(clock, lim.f_max), clock, lim.f_max)], 0.0, "Hz")
    slow = [ctx.parts.timing(d).f_max for d in seg.devices
            if not d.is_controller and not d.is_bridge and ctx.parts.timing(d).f_max is not None]
    if slow:
        f_dev = _reduce(np.min, slow)
        out.pick("device-speed", None, [(min_margin(f_dev, clock), f_dev, clock)], 0.0, "Hz")
    # -- SDA data setup
    tr_sda = figs["sda"]["rise_time"]
    rows = []
    if s.index == ctx.ctrl_seg:
        for o in ctx.segs:
            for d in o.seg.devices:
                if d.is_controller or d.is_bridge:
                    continue
                pin = ctx.parts.pins(d, "i2c-sda", o.seg.supply)
                if pin is None or not pin.open_drain:
                    continue
                rows.append(ctx.parts.timing(d).t_vd_dat + 2.0 * ctx.delay.get(o.index, 0.0))
    elif ctrl is not None:
        rows.append(ctx.parts.timing(ctrl).t_vd_dat)
    if rows:
        tvd = _reduce(np.max, rows)
        budget = t_low - tvd - tr_sda
        out.pick("setup-time", None,
                 [(min_margin(budget, lim.t_su_dat), budget, lim.t_su_dat)], warn, "s")
    # -- voltage domains
    taps = [t for sig in od.SIGNALS for t in s.lines[sig].taps]
    rows, warns = [], []
    for t in taps:
        if t.pin.abs_max is None:
            continue
        am = _corner(t.pin.abs_max, t, v, "min")
        rows.append((max_margin(v, am), v, am))
        follows = np.logical_and(not t.own, t.pin.abs_follows)
        warns.append(np.where(follows, 0.0, warn))
    if rows:
        out.pick("input-voltage", None, rows, warns, "V")
    rows, seen = [], set()
    for t in taps:
        if t.ref in seen:
            continue
        seen.add(t.ref)
        if t.timing.supply is None:
            continue
        s_min, s_max = t.timing.supply
        lo = t.rail.min(axis=1, keepdims=True)
        hi = t.rail.max(axis=1, keepdims=True)
        m_lo = (lo - s_min) / s_min
        m_hi = (s_max - hi) / s_max
        low_side = m_lo < m_hi
        rows.append((np.where(low_side, min_margin(lo, s_min), max_margin(hi, s_max)),
                     np.where(low_side, lo, hi), np.where(low_side, s_min, s_max)))
    if rows:
        out.pick("supply-range", None, rows, 0.0, "V")
    # -- power states
    for d in seg.devices:
        if not d.switched:
            continue
        ok = np.asarray(True)
        for t in taps:
            if t.dev is d:
                ok = np.logical_and(ok, t.pin.off_tolerant)
        out.truth("power-off", None, ok)
    # -- bridging parts
    offsets = []
    for link in ctx.links[s.index]:
        d = link.dev
        if link.kind == "mosfet":
            other = ctx.segs[link.other]
            if seg.supply > other.seg.supply:
                continue
            br = d.part.bridge
            if br.v_gs_th is not None:
                over = v[:, :1] - float(br.v_gs_th.value)
                status = np.where(over <= 0, 2, np.where(over < od.GATE_OVERDRIVE, 1, 0))
                out.add("bridge-gate-drive", None, over, 0.0, over / od.GATE_OVERDRIVE, status, "V")
            continue
        if _offset_side(d) == d.side:
            offsets.append(d)
    for d in offsets:
        side = d.part.sides[d.side]
        if side.low_offset is None:
            continue
        tap = next(t for t in s.lines["sda"].taps if t.dev is d)
        off = _corner(Level.of(side.low_offset), tap, v, "max")
        rows = [(max_margin(off, r.v_il), off, r.v_il) for sig in od.SIGNALS
                for r in s.lines[sig].receivers if r.tap.dev.ref != d.ref]
        if rows:
            out.pick("bridge-offset", None, rows, warn, "V")
    if offsets:
        out.truth("bridge-offset-facing", None, len(offsets) < 2)


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
        :func:`pinlib.buses.opendrain.collect` of the bus, when already at hand. [1]

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
    lim, seg_ins = collected if collected is not None else od.collect(bus, design)
    n = int(scenario.n) if swap is None else len(swap[1])
    parts = _Parts(lim, swap)
    segs: list[_Seg] = []
    for i, (seg, sin) in enumerate(zip(bus.segments, seg_ins, strict=True)):
        v = np.asarray(scenario.rails(seg), dtype=float)
        board = scenario.board(bus, seg, sin.lines["sda"].cb_parts)
        lines = {sig: _line(bus, seg, sig, fn, v, parts, scenario, lim, board)
                 for sig, fn in od.SIGNALS.items()}
        s = _Seg(seg, i, v, scenario.spread(seg), lines)
        if scenario.chooses:
            _choose(s)
        else:
            for sig, ln in lines.items():
                ln.pullup = scenario.resistor(bus, seg, sig, sin.pullup)
        segs.append(s)
    links = _links(segs)
    if any(ln.kind == "mosfet" for lst in links.values() for ln in lst):
        _couple(segs, links, scenario)
    ctx = _Ctx()
    ctx.lim, ctx.segs, ctx.links, ctx.parts, ctx.n = lim, segs, links, parts, n
    ctx.warn = design.warn_margin
    ctx.clock = bus.clock if bus.clock is not None else lim.f_max
    ctrls = bus.controllers
    ctx.controller = ctrls[0] if ctrls else None
    ctx.ctrl_seg = 0
    for s in segs:
        if ctx.controller is not None and any(d.ref == ctx.controller.ref for d in s.seg.devices):
            ctx.ctrl_seg = s.index
            break
    ctx.delay = _delays(ctx.ctrl_seg, links)
    result = BusBatch(bus.id, n)
    for s in segs:
        out = _Out(s.seg.id, n)
        figs: dict = {}
        for ln in s.lines.values():
            _line_checks(ctx, s, ln, out, figs)
        _segment_checks(ctx, s, out, figs)
        sb = SegmentBatch(s.seg.id, out.checks)
        for name in ("bus_capacitance", "rise_time", "v_ol", "fall_time"):
            vals = [figs[sig][name] for sig in od.SIGNALS if figs[sig].get(name) is not None]
            sb.figures[name] = (out._n(_reduce(np.max, [np.asarray(x).reshape(-1, 1)
                                                         for x in vals])[:, 0])
                                if vals else None)
        sb.figures["pullup_resistor"] = out._n(np.asarray(s.lines["sda"].pullup, dtype=float))
        result.segments.append(sb)
    return result
