"""Pass 1 of the open-drain checks over arrays: a batch of variants of one bus.

What varies is a :class:`Scenario` (the engine's corners, samples, candidate parts at
one position); the *structure* of the bus (which pins drive and which receive, which
part pull-ups exist) is fixed for a batch and every *value* may be a batch column of
shape ``(N, 1)`` (or anything that broadcasts to it; the second axis holds the rail
corners).  The joins between segments, the bridge delays, the controller's segment,
Rp(max) and the ``auto`` rule's margins are those of :mod:`.inputs`.
"""

from __future__ import annotations

import math
from typing import Any, NamedTuple

import numpy as np

from pinlib.core.quantity import Threshold
from pinlib.core.valueclass import value_class
from pinlib.engines.limits import OpenDrainLimits
from pinlib.engines.opendrain.inputs import _offset_side, firm_sink, low_end
from pinlib.engines.opendrain.rules import (
    _NOT_RECEIVERS,
    SIGNALS,
    _Link,
    abs_max_follows,
    auto_margins,
    coupled_sinks,
    part_is_mosfet,
    pin_rules,
    rp_fast_of,
    rp_leak_of,
    rp_max_of,
    rp_min_of,
    window_open,
)
from pinlib.library.loader import off_tolerant_stated
from pinlib.library.schema import Part
from pinlib.library.values import SOFT_BASES
from pinlib.model.design import Bus, Device, Segment
from pinlib.physics import pullup as pu

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


@value_class
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
    t_of_max: Any | None   # [s]
    #: whether v_il / v_ih are the specification's (the part states none): those of a
    #: device on its own rail are taken at the pull-up rail (UM10204 rev. 6, table 11,
    #: note [1])
    spec_levels: tuple = (False, False)
    #: whether the limits a check reads of the pin rest on a soft value (a class's
    #: typical value, an estimate: :attr:`pinlib.library.values.Sourced.soft`): its
    #: ``i_ol`` (sink-current), ``v_il`` and ``v_ih`` (v-ol, v-oh, bridge-offset),
    #: ``abs_max`` (input-voltage) and ``v_ol`` with ``i_ol`` (Rp(min) of
    #: pullup-window); False for the specification's own (published)
    soft_i_ol: Any = False
    soft_v_ol: Any = False
    soft_v_il: Any = False
    soft_v_ih: Any = False
    soft_abs_max: Any = False
    #: whether ``off_tolerant`` (power-off) rests on no firm statement: no file states
    #: it (the default, false, is taken) or a class's or an estimate's file does
    soft_off_tolerant: Any = False


@value_class
class TimingData:
    """A part's timing and supply range as the engine reads them, over the batch."""

    f_max: Any | None      # [Hz]
    t_vd_dat: Any          # [s]; the specification's when not stated, or its t_vd_ack
                           # where that is later (the acknowledge is a bit on SDA too)
    t_low: Any | None      # [s]
    t_high: Any | None     # [s]
    supply: tuple | None   # (min, max) [V] of the device's side
    #: whether f_max (device-speed) and the supply range's (min, max) (supply-range)
    #: rest on a soft value (:attr:`pinlib.library.values.Sourced.soft`)
    soft_f_max: Any = False
    soft_supply: tuple = (False, False)


def _pin_data(pin, name: str, part: Part, dev: Device, lim: OpenDrainLimits,
              vdd: float, defaults=None) -> PinData:
    driver, receiver, leak = pin_rules(pin, part, lim)
    (d_vol, d_iol, _), (d_il, d_ih) = defaults or (lim.default_sink(vdd), lim.default_levels())
    abs_max = follows = None
    if pin.abs_max is not None:
        abs_max = Level.of(pin.abs_max)
        follows = abs_max_follows(pin)
    internal = None
    if dev.internal_pullups and pin.pullup_internal is not None:
        internal = float(pin.pullup_internal.value)
    return PinData(
        name=name,
        open_drain=pin.drive == "open-drain",
        driver=driver,
        receiver=receiver,
        c_in=float(pin.c_in.value) if pin.c_in is not None else lim.c_pin,
        leakage=leak if leak is not None else 0.0,
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
        t_of_max=float(pin.t_of_max.value) if pin.t_of_max is not None else None,
        spec_levels=(pin.v_il is None, pin.v_ih is None),
        **soft_flags(pin, {"v_ol": d_vol, "i_ol": d_iol, "v_il": d_il, "v_ih": d_ih}),
    )


def soft_flags(pin, taken: dict) -> dict:
    """The ``soft_*`` fields of :class:`PinData` for a part's pin: whether each limit
    the engine takes of it rests on a soft value: its own, else the specification's in
    ``taken`` (by field; published, but UM10204's VOL1 where its table gives the mode
    no point is an estimate), or ``taken``'s where it names the value taken. [1]"""
    flags = {f"soft_{name}": _soft(getattr(pin, name) if getattr(pin, name) is not None
                                   else taken.get(name))
             for name in ("i_ol", "v_ol", "v_il", "v_ih", "abs_max")}
    flags["soft_off_tolerant"] = off_tolerant_soft(pin)
    return flags


def off_tolerant_soft(pin) -> bool:
    """Whether a pin's ``off_tolerant`` rests on no firm statement: no part file states
    it, or the file that does is a class's or an estimate (:data:`SOFT_BASES`); a plain
    value in a datasheet's file is firm, as elsewhere. [1]"""
    stated = off_tolerant_stated(pin)
    return stated is None or stated[0] in SOFT_BASES


def rp_min_rests_on(li, v_max: float) -> list:
    """The soft values a gathered line's Rp(min) rests on (:class:`.inputs.LineInputs`,
    its rail's maximum ``v_max``): the sink points (``v_ol``, ``i_ol``) of the drivers
    whose bound it is (:func:`.rules.rp_min_of`, as the gathering's weakest sink), where
    each of them is soft; empty where a firm one (a datasheet's, the specification's)
    sets it too.  Across pass transistors, the gathering's weakest sink alone. [Sourced]"""
    if li.coupled:
        tying = [li.rp_min_driver] if li.rp_min_driver is not None else []
    else:
        bounds = [float(rp_min_of(v_max, float(d.v_ol_low[1]), d.i_ol)) for d in li.drivers]
        best = max(bounds, default=0.0)
        tying = [d for d, r in zip(li.drivers, bounds, strict=True) if best > 0 and r == best]
    values = []
    for d in tying:
        if firm_sink(d):
            return []
        values += [x for x in (d.v_ol_value, d.i_ol_value) if _soft(x)]
    return values


def _soft(value) -> bool:
    """:attr:`pinlib.library.values.Sourced.soft` of a value; False for none. [1]"""
    return bool(value is not None and value.soft)


def sda_valid_time(part: Part, lim: OpenDrainLimits) -> tuple[float, str]:
    """When a part's SDA bit is valid after SCL falls, and which time that is: its data
    valid time ``tVD;DAT`` (the specification's where it states none) or its acknowledge
    valid time ``tVD;ACK`` where it states a later one: an acknowledge must be set up
    before the ninth clock as a data bit before its clock. [s], [1]"""
    t = part.timing
    dat = float(t.t_vd_dat.value) if t.t_vd_dat is not None else lim.t_vd_dat
    if t.t_vd_ack is not None and float(t.t_vd_ack.value) > dat:
        return float(t.t_vd_ack.value), "tVD;ACK"
    return dat, "tVD;DAT"


def _timing_data(part: Part, dev: Device, lim: OpenDrainLimits) -> TimingData:
    t = part.timing
    sup = part.supply_for(dev.side)
    return TimingData(
        f_max=float(t.f_max.value) if t.f_max is not None else None,
        t_vd_dat=sda_valid_time(part, lim)[0],
        t_low=float(t.t_low.value) if t.t_low is not None else None,
        t_high=float(t.t_high.value) if t.t_high is not None else None,
        supply=(float(sup.min.value), float(sup.max.value)) if sup is not None else None,
        soft_f_max=_soft(t.f_max),
        soft_supply=(_soft(sup.min), _soft(sup.max)) if sup is not None else (False, False),
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
    for fn in SIGNALS.values():
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
                    pin.t_of_min is None, pin.t_of_max is None))
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

    def low_end(self, tol: float) -> float:
        """The factor from a capacitance as this scenario gives it to the lowest the
        variant may have (its tolerance ``tol``): 1 where each variant is one board
        (a sample, a corner), whose value is its own. [1]"""
        return 1.0


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

    def low_end(self, tol):
        return low_end(tol)  # each capacitance is at the top of its tolerance

    def series(self, bus, seg, dev, signal):
        return dev.series_resistor or 0.0

    def contributor(self, bus, seg, signal, index, value):
        return value

    def resistor(self, bus, seg, signal, nominal):
        return nominal

    def spread(self, seg):
        return seg.pullup_tolerance


# ============================================================================ batch inputs


@value_class
class _Tap:
    """A device's pin on a line, with its values over the batch."""

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

    @property
    def label(self) -> str:
        """The device and its side, as the one-bus engine names it."""
        return f"{self.dev.ref} side {self.dev.side}" if self.dev.side else self.dev.ref


@value_class
class _Driver:
    """A pin that pulls a line low, its values over the batch."""

    tap: _Tap
    v_ol: Any
    i_ol: Any
    r_sink: Any            # v_ol / i_ol [Ω]
    r_series: Any
    offset: Any = None
    #: v_ol at the low end of the device's own rail (``v_ol`` on the pull-up rail): the
    #: sink's smallest resistance, for sink-current and Rp(min) (.inputs._Driver)
    v_ol_low: Any = None

    @property
    def r_sink_low(self):
        """``v_ol_low / i_ol``: the sink's smallest effective resistance. [Ω]"""
        return self.v_ol_low / self.i_ol


@value_class
class _Receiver:
    """A pin that reads a line, its thresholds over the batch."""

    tap: _Tap
    v_il: Any
    v_ih: Any


@value_class
class _Line:
    """One line of a segment over the batch: its pins, capacitance, leakage and the
    pull-up range they allow."""

    signal: str
    taps: list
    cb: Any
    leakage: Any
    drivers: list
    receivers: list
    r_parts: Any
    rp_min: Any
    rp_max: Any
    rise_factor: Any
    rp_leak: Any = math.inf  # the leakage's bound at the high level (rules.rp_leak_of)
    rp_fast: Any = 0.0     # the tr minimum's bound (rules.rp_fast_of)
    cb_low: Any = None     # Cb with every tolerance at its low end (the fastest rise's)
    pullup: Any = None     # the design resistor on this line
    r_eff: tuple | None = None  # (pullup, every pull-up in parallel) once worked out
    #: whether Rp(min) rests on a soft sink point (the weakest sink's v_ol or i_ol, a
    #: class's typical value or an estimate: PinData.soft_v_ol, soft_i_ol); a bool or a
    #: batch column
    soft_min: Any = False
    #: the largest Rp(min) of the drivers whose sink point is firm (a datasheet's, the
    #: specification's; 0 Ω for none, which every pull-up meets): where the pull-up is
    #: below it the window fails against it, though Rp(min) itself rests on a soft
    #: sink. [Ω]
    rp_min_firm: Any = 0.0


def _sink_soft(d) -> Any:
    """Whether a driver's sink point (its v_ol or i_ol) rests on a soft value. [1]"""
    return np.logical_or(d.tap.pin.soft_v_ol, d.tap.pin.soft_i_ol)


@value_class
class _Seg:
    """One segment over the batch: its rail and its lines."""

    seg: Segment
    index: int
    v: Any
    tol: float
    lines: dict

    def r_eff(self, signal):
        ln = self.lines[signal]
        if ln.r_eff is None or ln.r_eff[0] is not ln.pullup:  # worked out once per pull-up
            ln.r_eff = (ln.pullup, pu.parallel(ln.pullup, ln.r_parts))
        return ln.r_eff[1]

    def r_lo(self, signal):
        return self.r_eff(signal) * (1 - self.tol)



def _corner(level: Level, tap: _Tap, v, worst: str, follow_bus=False):
    """A level at the rail corners: following the pull-up rail, or the worst end of the
    device's own rail (the engine's ``_corner_values``); ``follow_bus`` (a bool, or a
    batch column of them where the parts at a position differ) takes it at the pull-up
    rail even for a device on its own rail. [V]"""
    if not tap.own or (np.ndim(follow_bus) == 0 and follow_bus):
        return level.at(v)
    vals = level.at(tap.rail)
    red = vals.min(axis=1, keepdims=True) if worst == "min" else vals.max(axis=1, keepdims=True)
    own = np.broadcast_to(red, np.broadcast_shapes(red.shape, np.shape(v)))
    if np.ndim(follow_bus) == 0:
        return own
    return np.where(follow_bus, level.at(v), own)



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

    def pins(self, dev: Device, function: str, vdd: float, vtol: float = 0.0):
        key = (dev.ref, dev.side, function, vdd, vtol)
        if key in self._pins:
            return self._pins[key]
        parts = self.parts if dev.ref == self.ref else [dev.part]
        side = None if dev.ref == self.ref else dev.side
        found = [p.pin_for(function, side) for p in parts]
        if found[0] is None:
            self._pins[key] = None
            return None
        if (vdd, vtol) not in self._defaults:
            self._defaults[vdd, vtol] = (self.lim.default_sink(vdd, vtol),
                                         self.lim.default_levels())
        d = self._defaults[vdd, vtol]
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
        pin = parts.pins(d, function, vdd, seg.supply_tolerance)
        if pin is None:
            continue
        part = parts.part_of(d)
        out.append(_Tap(d, part, pin, parts.timing(d), vdd, own, part_is_mosfet(part),
                        scen.tap_rail(vdd, seg)))
    return out


def _line(bus, seg, signal, function, v, parts, scen, lim, board) -> _Line:
    taps = _taps(seg, function, parts, scen)
    c_pins = c_low = 0.0
    for t in taps:
        c_pins = c_pins + t.pin.c_in * scen.pin_factor(t.dev, bus)
        c_low = c_low + (t.pin.c_in * scen.pin_factor(t.dev, bus)
                         * scen.low_end(t.dev.capacitance_tolerance or 0.0))
    traces, cables, extra = board
    cb = c_pins + traces + cables + extra
    c_low = c_low + ((traces + cables) * scen.low_end(seg.length_tolerance)
                     + extra) * scen.low_end(seg.capacitance_tolerance)
    leak = 0.0
    for t in taps:
        leak = leak + t.pin.leakage
    drivers = []
    for t in taps:
        if not t.pin.driver:
            continue
        v_ol = _corner(t.pin.v_ol, t, v, "max")  # the worst for the low level and the fall
        v_ol_low = _corner(t.pin.v_ol, t, v, "min")  # for the current and Rp(min)
        i_ol = t.pin.i_ol
        offset = None
        if t.part is not None and t.dev.side is not None and _offset_side(t.dev) == t.dev.side:
            side = t.part.sides[t.dev.side]
            if side.low_offset is not None:
                offset = np.max(_corner(Level.of(side.low_offset), t, v, "max"), axis=1,
                                keepdims=True)
        drivers.append(_Driver(t, v_ol, i_ol, v_ol / i_ol,
                               scen.series(bus, seg, t.dev, signal), offset, v_ol_low))
    receivers = [_Receiver(t, _corner(t.pin.v_il, t, v, "min", t.pin.spec_levels[0]),
                           _corner(t.pin.v_ih, t, v, "max", t.pin.spec_levels[1]))
                 for t in taps if t.pin.receiver]
    contributors = []
    for t in taps:
        for value in (t.pin.pullup, t.pin.pullup_internal):
            if value is not None:
                contributors.append(scen.contributor(bus, seg, signal, len(contributors), value))
    r_parts = pu.parallel(*contributors) if contributors else math.inf
    v_max = v[:, -1:]
    best, soft, firm = 0.0, False, 0.0
    for d in drivers:  # soft where every sink that sets it is (rp_min_rests_on)
        r = rp_min_of(v_max, d.v_ol_low[:, -1:], d.i_ol)
        d_soft = _sink_soft(d)
        soft = np.where(r > best, d_soft,
                        np.where(r == best, np.logical_and(soft, d_soft), soft))
        best = np.maximum(best, r)
        firm = np.maximum(firm, np.where(d_soft, 0.0, r))
    soft = np.logical_and(soft, np.asarray(best) > 0)
    rp_min = np.where(np.asarray(best) > 0, best, 1e-3)
    rise_factor = lim.rise_factor(v[:, :1])
    rp_max = rp_max_of(lim, rise_factor, cb)
    rp_leak = rp_leak_of(v, lim.v_nh_rel or 0.0, leak, [r.v_ih for r in receivers])
    return _Line(signal, taps, cb, leak, drivers, receivers, r_parts, rp_min, rp_max,
                 rise_factor, rp_leak, rp_fast_of(lim, v, rise_factor, c_low), c_low,
                 soft_min=soft, rp_min_firm=firm)


def _choose(s: _Seg) -> None:
    """The engine's ``auto`` rule for every variant: the series value with the largest
    smaller tolerance-adjusted margin to Rp(min) and Rp(max) on both lines."""
    seg = s.seg
    if seg.pullup != "auto":
        for ln in s.lines.values():
            ln.pullup = float(seg.pullup)
        return
    cand, worst = auto_margins(seg.pullup_series, s.lines.values(), s.tol)
    chosen = cand[0, np.argmax(worst, axis=1)][:, None]
    for ln in s.lines.values():
        ln.pullup = chosen


def _rp_min_coupled(s: _Seg, signal: str, segs: list[_Seg], links: list[_Link]):
    """Rp(min) of a segment joined to others through pass transistors (the engine's);
    sets the line's :attr:`_Line.soft_min` from the sink that bounds it."""
    far = [(link, segs[link.other].v[:, -1:], segs[link.other].r_lo(signal))
           for link in links if link.kind == "mosfet"]
    # no firm sink: a bound of 0 Ω, which every pull-up meets (batchresult: +inf)
    best, soft, firm = np.asarray(1e-3), False, np.asarray(0.0)
    for r, d, _ in coupled_sinks(s.v[:, -1:], s.lines[signal].drivers, far, segs, signal,
                                 lambda x: x[:, -1:]):
        d_soft = _sink_soft(d)
        soft = np.where(r > best, d_soft, soft)
        best = np.where(r > best, r, best)
        firm = np.where(~np.asarray(d_soft) & (r > firm), r, firm)
    s.lines[signal].soft_min = soft
    s.lines[signal].rp_min_firm = firm
    return best


def _own_window(s: _Seg):
    """Per variant: every line of the segment has a window (the engine's rule). [1]"""
    ok = np.asarray(True)
    for ln in s.lines.values():
        ok = ok & window_open(ln.rp_min, ln.rp_max, s.tol)
    return ok


def _couple(segs: list[_Seg], links: dict[int, list[_Link]], chooses: bool) -> None:
    """Rp(min) of segments joined through pass transistors; with ``chooses``, their
    ``auto`` pull-ups chosen together (the engine's rule, per variant)."""
    coupled = [s for s in segs if any(ln.kind == "mosfet" for ln in links[s.index])]
    if not chooses:
        for s in coupled:
            for sig, ln in s.lines.items():
                ln.rp_min = _rp_min_coupled(s, sig, segs, links[s.index])
        return
    # the engine re-chooses each segment against the others' present values, at most 8
    # rounds; a variant that settled stays settled, so the rounds run until none moves.
    # A segment without a window of its own keeps its compromise, and one whose sinks the
    # pull-ups across the translator already fill keeps the value it has (the engine's
    # rule, inputs._couple), per variant
    held = {s.index: ~np.asarray(_own_window(s)) for s in coupled}
    for _ in range(8):
        changed = False
        for s in coupled:
            for sig, ln in s.lines.items():
                ln.rp_min = _rp_min_coupled(s, sig, segs, links[s.index])
            keep = held[s.index]
            for ln in s.lines.values():
                keep = keep | np.isinf(ln.rp_min)
            before = {sig: ln.pullup for sig, ln in s.lines.items()}
            _choose(s)
            for sig, ln in s.lines.items():
                ln.pullup = np.where(keep, before[sig], ln.pullup)
            changed |= bool(np.any(s.lines["sda"].pullup != before["sda"]))
        if not changed:
            break
    for s in coupled:  # Rp(min) against the values finally chosen
        for sig, ln in s.lines.items():
            ln.rp_min = _rp_min_coupled(s, sig, segs, links[s.index])

