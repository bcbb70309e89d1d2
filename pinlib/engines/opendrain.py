"""The open-drain engine (I2C, SMBus): pull-up budgets per segment and per line.

:func:`evaluate_bus` takes a loaded :class:`~pinlib.design.Bus` of protocol ``i2c`` or
``smbus`` and returns a :class:`~pinlib.result.BusResult`.  It works in two passes:

1. For every segment and each line (SDA, SCL) it gathers what the line is made of —
   the pins on it (with their parts' limits, or the specification's when a part states
   none), the bus capacitance (pins, traces, cables, extra), the leakage, the pull-ups
   the parts carry — and the window Rp(min)..Rp(max).  It picks the pull-up
   (``pullup = "auto"``) or takes the design's.
2. With every segment's pull-up known (a pass-transistor translator joins two), it
   evaluates each line at the worst corners: pull-up at ± its tolerance, the rail at ±
   its tolerance, capacitances at their stored maxima; then the segment's timing,
   voltage-domain, power-state and bridging-part checks.

Worst cases are taken over the two corners of the pull-up rail (``VDD·(1 − tol)`` and
``VDD·(1 + tol)``).  A device on the pull-up rail follows it (its relative thresholds
move with the rail); a device on its own rail (``supply = ...`` in the design, at the
same relative tolerance) is taken at whichever end of its own rail hurts.

The numbers come from the vectorized functions of :mod:`pinlib.physics.pullup` and
:mod:`pinlib.physics.rc`; :func:`budget` (re-exported) evaluates a whole line for arrays
of Rp, Cb and VDD, and :func:`capacitance_from_rise` is the bench helper.
"""

from __future__ import annotations

import math
import warnings
from collections import deque
from dataclasses import dataclass, field

import numpy as np

from pinlib.core import eseries
from pinlib.core import messages as M
from pinlib.core.errors import DesignError, InputError, ValidityWarning
from pinlib.core.quantity import format_si
from pinlib.engines.limits import OpenDrainLimits, limits_for
from pinlib.library.schema import Pin
from pinlib.library.values import Sourced
from pinlib.model.design import Bus, Design, Device, Section, Segment
from pinlib.model.result import (
    BusResult,
    Check,
    Group,
    SegmentResult,
    check_max,
    check_min,
    check_true,
)
from pinlib.physics import lines as line_models
from pinlib.physics import pullup as pu
from pinlib.physics.pullup import Budget, budget, capacitance_from_rise
from pinlib.physics.rc import RISE_10_90

__all__ = [
    "SIGNALS",
    "CLAMP_DROP",
    "GATE_OVERDRIVE",
    "LineInputs",
    "SegmentInputs",
    "collect",
    "evaluate_bus",
    "budget",
    "Budget",
    "capacitance_from_rise",
]

#: The lines of an open-drain bus and the pin function of each.
SIGNALS = {"sda": "i2c-sda", "scl": "i2c-scl"}

#: Forward drop of an input's clamp diode to its own rail, for the power-off check. [V]
CLAMP_DROP = 0.6  # common practice, no source: a silicon junction at a few mA

#: Gate overdrive (low rail minus the MOSFET's threshold) below which a pass-transistor
#: translator's on-resistance is not assured. [V]
GATE_OVERDRIVE = 1.0  # common practice, no source

_CORNERS = ("rail at its minimum", "rail at its maximum")
_NOT_RECEIVERS = ("connector", "cable")
_COMMON = "common practice, no source"


def _f(x, unit):
    return format_si(x, unit)


# ============================================================================ inputs


@dataclass
class _Tap:
    """One device pin on one line."""

    dev: Device
    pin_name: str
    pin: Pin
    vdd: float          # the device's rail, nominal [V]
    own: bool           # on its own rail (not the pull-up rail)

    @property
    def ref(self) -> str:
        return self.dev.ref

    @property
    def label(self) -> str:
        side = f" side {self.dev.side}" if self.dev.side else ""
        return f"{self.dev.ref}{side}"

    def source(self, field_name: str) -> str:
        value = getattr(self.pin, field_name)
        where = f"{self.dev.part_id} pins.{self.pin_name}.{field_name}"
        bits = [b for b in (getattr(value, "basis", None), getattr(value, "source", None)) if b]
        if not bits:
            prov = self.dev.part.provenance
            bits = [b for b in (prov.basis, prov.source) if b]
        return f"{where} ({': '.join(bits)})" if bits else where


@dataclass
class _Driver:
    tap: _Tap
    v_ol: np.ndarray        # guaranteed low level at i_ol, per corner [V]
    i_ol: float             # [A]
    r_on: np.ndarray        # v_ol / i_ol, per corner [Ω]
    r_series: float         # [Ω]
    source_i: str
    offset: float | None = None   # static low-offset level of a repeater side [V]


@dataclass
class _Receiver:
    tap: _Tap
    v_il: np.ndarray        # per corner [V]
    v_ih: np.ndarray        # per corner [V]
    source: str


@dataclass
class LineInputs:
    """What one line of one segment is made of (pass 1 of the engine).

    Attributes
    ----------
    signal : str
        ``"sda"`` or ``"scl"``.
    cb : float
        Bus capacitance, every contribution at its maximum. [F]
    cb_parts : dict
        The contributions: ``pins``, ``traces``, ``cables``, ``extra``. [F]
    leakage : float
        Sum of the pins' leakage. [A]
    rp_min, rp_max : float
        The pull-up window (UM10204 eq. 2 and eq. 1, or the SMBus factor). [Ω]
    r_parts : float
        The parts' own pull-ups in parallel, nominal; ``inf`` for none. [Ω]
    rise_factor : float
        Rise time in units of Rp·Cb at the rail's minimum. [1]
    """

    signal: str
    taps: list[_Tap]
    cb: float
    cb_parts: dict
    leakage: float
    drivers: list[_Driver]
    receivers: list[_Receiver]
    part_pullups: list[dict]
    r_parts: float
    rp_min: float
    rp_min_driver: _Driver | None
    rp_max: float
    rise_factor: float
    rp_min_label: str = ""
    coupled: bool = False


@dataclass
class SegmentInputs:
    """One segment after pass 1: its lines, rail corners and pull-up.

    Attributes
    ----------
    vdd : numpy.ndarray
        The pull-up rail at its two corners, ``[min, max]``. [V]
    pullup : float
        The design's resistor on each line (chosen when ``auto``). [Ω]
    """

    segment: Segment
    index: int
    vdd: np.ndarray
    tol: float
    vtol: float
    lines: dict[str, LineInputs]
    pullup: float
    auto: bool
    notes: list[str] = field(default_factory=list)
    defaults: dict = field(default_factory=dict)   # note text -> [where]
    cb_notes: list[str] = field(default_factory=list)

    def r_eff(self, signal: str) -> float:
        """Every pull-up on the line in parallel, nominal. [Ω]"""
        return float(pu.parallel(self.pullup, self.lines[signal].r_parts))


def _default(seg_in: SegmentInputs, text: str, where: str) -> None:
    seg_in.defaults.setdefault(text, [])
    if where not in seg_in.defaults[text]:
        seg_in.defaults[text].append(where)


def _corner_values(value: Sourced, tap: _Tap, v: np.ndarray, tol: float, worst: str):
    """A part value at each rail corner: following the pull-up rail, or the worst end of
    the device's own rail (``worst`` = ``"min"`` or ``"max"``). [unit]"""
    if not tap.own:
        return np.broadcast_to(np.asarray(value.at(v), dtype=float), v.shape).astype(float)
    own = np.array([tap.vdd * (1 - tol), tap.vdd * (1 + tol)])
    vals = np.asarray(value.at(own), dtype=float)
    return np.full(v.shape, float(vals.min() if worst == "min" else vals.max()))


def _is_mosfet(dev: Device) -> bool:
    return dev.part.bridge is not None and dev.part.bridge.kind == "mosfet"


def _offset_side(dev: Device) -> str | None:
    """The side of a repeater/buffer that drives a static offset low, if any."""
    part = dev.part
    if not part.sides or _is_mosfet(dev):
        return None
    for name, side in part.sides.items():
        if side.low_offset is not None:
            return name
    return part.bridge.low_offset_side if part.bridge else None


def _trace_capacitance(sec: Section, seg_in: SegmentInputs) -> float:
    """Capacitance of one stretch: geometry through the line models, or per length. [F]"""
    if sec.geometry is not None:
        g = sec.geometry
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always", ValidityWarning)
            if g.kind == "microstrip":
                kw = {"method": g.method} if g.method else {}
                model = line_models.microstrip(g.width, g.height, g.er, g.thickness, **kw)
            else:
                b = g.spacing if g.spacing is not None else 2.0 * g.height + g.thickness
                kw = {"method": g.method} if g.method else {}
                model = line_models.stripline(g.width, b, g.er, g.thickness, **kw)
        for w in caught:
            if issubclass(w.category, ValidityWarning):
                text = f"geometry '{g.name}': {w.message}"
                if text not in seg_in.notes:
                    seg_in.notes.append(text)
        c = float(model.c)
        seg_in.cb_notes.append(f"{_f(sec.length, 'm')} of '{g.name}' ({g.kind}, "
                               f"{_f(c, 'F/m')}, Z0 {_f(float(model.z0), 'Ω')})")
        return c * sec.length
    label = f"cable '{sec.part_id}'" if sec.part_id else "trace"
    seg_in.cb_notes.append(f"{_f(sec.length, 'm')} of {label} at {_f(sec.capacitance, 'F/m')}")
    return float(sec.capacitance) * sec.length


def _taps(seg: Segment, function: str) -> list[_Tap]:
    out = []
    for d in seg.devices:
        found = d.part.pin_for(function, d.side)
        if found is None:  # the design loader refuses such a device; keep the engine safe
            continue
        name, pin = found
        own = d.supply is not None and not math.isclose(d.supply, seg.supply, rel_tol=1e-9)
        out.append(_Tap(d, name, pin, d.supply if own else seg.supply, own))
    return out


def _line_inputs(signal: str, seg_in: SegmentInputs, lim: OpenDrainLimits,
                 c_traces: float) -> LineInputs:
    seg = seg_in.segment
    v, vtol = seg_in.vdd, seg_in.vtol
    taps = _taps(seg, SIGNALS[signal])
    up = signal.upper()
    # -- capacitance
    c_pins = 0.0
    for t in taps:
        if t.pin.c_in is None:
            c = lim.c_pin
            _default(seg_in, f"no c_in stated: taken at the specification's "
                             f"{_f(lim.c_pin, 'F')} maximum ({lim.source_pin})", f"{t.label} {up}")
        else:
            c = float(t.pin.c_in.value)
        c_pins += c * (1.0 + (t.dev.capacitance_tolerance or 0.0))
    board_tol = 1.0 + seg.capacitance_tolerance
    c_cables = sum(float(c.part.line.capacitance.value) * c.length for c in seg.cables) * (
        1.0 + seg.length_tolerance) * board_tol
    c_extra = seg.extra_capacitance * board_tol
    cb = c_pins + c_traces + c_cables + c_extra
    cb_parts = {"pins": c_pins, "traces": c_traces, "cables": c_cables, "extra": c_extra}
    # -- leakage
    leak = 0.0
    for t in taps:
        if t.pin.leakage is not None:
            leak += float(t.pin.leakage.value)
        elif t.dev.part.category not in _NOT_RECEIVERS:
            leak += lim.i_leak
            _default(seg_in, f"no leakage stated: taken at the specification's "
                             f"{_f(lim.i_leak, 'A')} ({lim.source_pin})", f"{t.label} {up}")
    # -- drivers
    drivers: list[_Driver] = []
    for t in taps:
        if t.pin.drive != "open-drain" or _is_mosfet(t.dev):
            continue
        d_vol, d_iol, rule = lim.default_sink(t.vdd)
        vol_s = t.pin.v_ol if t.pin.v_ol is not None else d_vol
        iol_s = t.pin.i_ol if t.pin.i_ol is not None else d_iol
        if t.pin.v_ol is None or t.pin.i_ol is None:
            _default(seg_in, f"no sink point (v_ol, i_ol) stated: taken at the specification's "
                             f"{rule} ({lim.source_sink})", f"{t.label} {up}")
        v_ol = _corner_values(vol_s, t, v, vtol, "max")
        i_ol = float(iol_s.value)
        src = t.source("i_ol") if t.pin.i_ol is not None else lim.source_sink
        offset = None
        if _offset_side(t.dev) == t.dev.side and t.dev.side is not None:
            side = t.dev.part.sides[t.dev.side]
            if side.low_offset is not None:
                offset = float(np.max(_corner_values(side.low_offset, t, v, vtol, "max")))
        drivers.append(_Driver(t, v_ol, i_ol, v_ol / i_ol, t.dev.series_resistor or 0.0, src,
                               offset))
    # -- receivers
    d_il, d_ih = lim.default_levels()
    receivers: list[_Receiver] = []
    for t in taps:
        has = t.pin.v_il is not None or t.pin.v_ih is not None
        if not has and (t.dev.part.category in _NOT_RECEIVERS or _is_mosfet(t.dev)):
            continue
        if t.pin.v_il is None or t.pin.v_ih is None:
            _default(seg_in, f"no input thresholds stated: taken at the specification's "
                             f"levels ({lim.source_levels})", f"{t.label} {up}")
        il = t.pin.v_il if t.pin.v_il is not None else d_il
        ih = t.pin.v_ih if t.pin.v_ih is not None else d_ih
        src = t.source("v_il") if t.pin.v_il is not None else lim.source_levels
        receivers.append(_Receiver(t, _corner_values(il, t, v, vtol, "min"),
                                   _corner_values(ih, t, v, vtol, "max"), src))
    # -- the parts' own pull-ups
    part_pullups = []
    for t in taps:
        if t.pin.pullup is not None:
            part_pullups.append({"ref": t.ref, "pin": t.pin_name, "kind": "on the part",
                                 "value": float(t.pin.pullup.value),
                                 "source": t.source("pullup")})
        if t.dev.internal_pullups:
            if t.pin.pullup_internal is not None:
                part_pullups.append({"ref": t.ref, "pin": t.pin_name, "kind": "internal, enabled",
                                     "value": float(t.pin.pullup_internal.value),
                                     "source": t.source("pullup_internal")})
            else:
                _default(seg_in, "internal pull-ups enabled but the part states none: not counted",
                         f"{t.label} {up}")
    r_parts = float(pu.parallel(*[p["value"] for p in part_pullups])) if part_pullups else math.inf
    # -- the window
    v_max = float(v[1])
    rp_min, weakest = 0.0, None
    for d in drivers:
        r = (v_max - float(d.v_ol[1])) / d.i_ol
        if r > rp_min:
            rp_min, weakest = r, d
    if weakest is None:
        rp_min = 1e-3  # no driver on this side: nothing bounds Rp from below
    factor = float(lim.rise_factor(float(v[0])))
    rp_max = lim.tr_max / (factor * cb) if cb > 0 else math.inf
    return LineInputs(signal, taps, cb, cb_parts, leak, drivers, receivers, part_pullups,
                      r_parts, rp_min, weakest, rp_max, factor,
                      weakest.tap.label if weakest else "")


def _choose(seg_in: SegmentInputs) -> None:
    """Pick the design's resistor from its series (``auto``): the value that maximises the
    smaller of the two tolerance-adjusted relative margins over both lines."""
    seg = seg_in.segment
    if seg.pullup != "auto":
        seg_in.pullup, seg_in.auto = float(seg.pullup), False
        return
    seg_in.auto = True
    cand = eseries.values_in_range(seg.pullup_series, 10.0, 10e6)
    worst = np.full(cand.shape, np.inf)
    parts_only = math.inf
    for ln in seg_in.lines.values():
        lo, hi = pu.pullup_margins(cand, ln.rp_min, ln.rp_max, seg_in.tol, ln.r_parts)
        worst = np.minimum(worst, np.minimum(lo, hi))
        if math.isfinite(ln.r_parts):
            lo0, hi0 = pu.pullup_margins(math.inf, ln.rp_min, ln.rp_max, seg_in.tol, ln.r_parts)
            parts_only = min(parts_only, float(min(lo0, hi0)))
        else:
            parts_only = -math.inf
    best = int(np.argmax(worst))
    seg_in.pullup = float(cand[best])
    if math.isfinite(parts_only) and parts_only >= float(worst[best]) and parts_only > 0:
        seg_in.notes.append("the parts' own pull-ups alone fit the window at least as well as any "
                            f"{seg.pullup_series} resistor; the design's resistor may be left off")


def collect(bus: Bus, design: Design) -> tuple[OpenDrainLimits, list[SegmentInputs]]:
    """Pass 1 of the engine: every segment's lines, window and pull-up.

    Parameters
    ----------
    bus : Bus
        An ``i2c`` or ``smbus`` bus of a loaded design.
    design : Design
        The design it belongs to.

    Returns
    -------
    limits : OpenDrainLimits
        The mode's or class's published limits.
    segments : list of SegmentInputs
        One per segment, in design order.
    """
    if bus.protocol not in ("i2c", "smbus"):
        raise DesignError(M.NOT_OPEN_DRAIN_BUS, field="protocol", value=bus.protocol,
                          expected="i2c or smbus")
    lim = limits_for(bus.protocol, bus.mode)
    out = []
    for i, seg in enumerate(bus.segments):
        v = np.array([seg.supply * (1 - seg.supply_tolerance),
                      seg.supply * (1 + seg.supply_tolerance)])
        seg_in = SegmentInputs(seg, i, v, seg.pullup_tolerance, seg.supply_tolerance, {},
                               math.nan, False)
        if lim.rise_definition == "smbus":
            lo, hi = lim.measuring_levels(v[0])
            if v[0] <= float(hi):
                raise DesignError(M.SUPPLY_BELOW_SMBUS_POINTS,
                                  field=f"bus.{bus.id}.supply", value=format_si(v[0], "V"),
                                  expected=f"a rail above {float(hi):.2f} V at its minimum")
        # SDA and SCL run side by side: one trace model serves both
        c_traces = sum(_trace_capacitance(sec, seg_in) for sec in seg.sections) * (
            1.0 + seg.length_tolerance) * (1.0 + seg.capacitance_tolerance)
        for sig in SIGNALS:
            seg_in.lines[sig] = _line_inputs(sig, seg_in, lim, c_traces)
        _choose(seg_in)
        out.append(seg_in)
    links = _links(bus, out)
    if any(ln.kind == "mosfet" for lst in links.values() for ln in lst):
        _couple(out, links)
    return lim, out


def _rp_min_coupled(seg_in: SegmentInputs, signal: str, seg_ins: list[SegmentInputs],
                    links: list[_Link]) -> tuple[float, _Driver | None, str]:
    """Rp(min) of a segment joined to others through pass transistors.

    A driver on either side of such a translator sinks both sides' pull-up currents, so
    each driver's rating is shared: UM10204 eq. 2 with the current the other sides'
    pull-ups (at their present values, −tolerance, rails at their maximum) already take,
    ``Rp(min) = (VDD − VOL)/(IOL − I_far) − R_on`` for a driver across the translator.
    """
    v_max = float(seg_in.vdd[1])
    ln = seg_in.lines[signal]
    far = []
    for link in links:
        if link.kind == "mosfet":
            other = seg_ins[link.other]
            far.append((link, other, float(other.vdd[1]),
                        other.r_eff(signal) * (1 - other.tol)))
    best, who, label = 1e-3, None, ""
    for d in ln.drivers:
        v_ol = float(d.v_ol[1])
        i_far = sum(max(vo - v_ol, 0.0) / (rp + link.r_on) for link, _, vo, rp in far)
        budget_i = d.i_ol - i_far
        r = (v_max - v_ol) / budget_i if budget_i > 0 else math.inf
        if r > best:
            best, who, label = r, d, d.tap.label
    for link, other, vo, rp_o in far:
        for d in other.lines[signal].drivers:
            if d.tap.dev.is_bridge:
                continue
            v_ol = float(d.v_ol[1])
            budget_i = d.i_ol - max(vo - v_ol, 0.0) / rp_o
            r = ((v_max - v_ol) / budget_i - link.r_on) if budget_i > 0 else math.inf
            if r > best:
                best, who, label = r, d, f"{d.tap.label} via {link.dev.ref}"
    return best, who, label


def _couple(seg_ins: list[SegmentInputs], links: dict[int, list[_Link]]) -> None:
    """Choose the pull-ups of segments joined by pass transistors together.

    Each segment's Rp(min) depends on the pull-ups of the segments it is joined to (see
    :func:`_rp_min_coupled`); starting from the independent choice, each segment is
    re-chosen in turn against the others' present values until nothing changes (a few
    rounds; at most 8).
    """
    for _ in range(8):
        changed = False
        for s in seg_ins:
            if not any(ln.kind == "mosfet" for ln in links[s.index]):
                continue
            for sig, ln in s.lines.items():
                ln.rp_min, ln.rp_min_driver, ln.rp_min_label = _rp_min_coupled(
                    s, sig, seg_ins, links[s.index])
                ln.coupled = True
            before = s.pullup
            _choose(s)
            changed |= s.pullup != before
        if not changed:
            break


# ============================================================================ evaluation


@dataclass
class _Link:
    """A bridging part seen from one segment."""

    dev: Device
    other: int        # the other segment's index
    kind: str
    r_on: float
    t_pd: float


def _links(bus: Bus, seg_ins: list[SegmentInputs]) -> dict[int, list[_Link]]:
    where: dict[str, list[tuple[int, Device]]] = {}
    for s in seg_ins:
        for d in s.segment.devices:
            if d.is_bridge:
                where.setdefault(d.ref, []).append((s.index, d))
    out: dict[int, list[_Link]] = {s.index: [] for s in seg_ins}
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


def _delays(start: int, links: dict[int, list[_Link]]) -> dict[int, float]:
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


class _Ctx:
    def __init__(self, bus, design, lim, seg_ins):
        self.bus = bus
        self.design = design
        self.lim = lim
        self.seg_ins = seg_ins
        self.warn = design.warn_margin
        self.clock = bus.clock if bus.clock is not None else lim.f_max
        self.links = _links(bus, seg_ins)
        ctrls = bus.controllers
        self.controller = ctrls[0] if ctrls else None
        self.ctrl_seg = 0
        for s in seg_ins:
            if self.controller is not None and any(d.ref == self.controller.ref
                                                   for d in s.segment.devices):
                self.ctrl_seg = s.index
                break
        self.delay = _delays(self.ctrl_seg, self.links)

    def kw(self, **extra):
        return {"warn_margin": self.warn, **extra}


def _worst_index(margins: np.ndarray) -> int:
    m = np.where(np.isnan(margins), -np.inf, margins)
    return int(np.argmin(m))


def _window_check(ctx: _Ctx, seg_in: SegmentInputs, ln: LineInputs) -> Check:
    lim = ctx.lim
    tol = seg_in.tol
    up = ln.signal.upper()
    r_eff = seg_in.r_eff(ln.signal)
    m_lo, m_hi = (float(x) for x in pu.pullup_margins(seg_in.pullup, ln.rp_min, ln.rp_max, tol,
                                                       ln.r_parts))
    contributors = [{"ref": "design", "pin": ln.signal, "kind": "design resistor",
                     "value": seg_in.pullup,
                     "source": "chosen by auto from " + seg_in.segment.pullup_series
                     if seg_in.auto else "the design file"}] + ln.part_pullups
    src = (f"UM10204 rev. 6 §7.1 eq. 1 and 2; tr from {lim.source_edges}"
           if lim.protocol == "i2c" else
           f"UM10204 rev. 6 §7.1 eq. 2; Rp(max) with the SMBus rise points, {lim.source_edges}")
    if ln.coupled:
        src += "; Rp(min) shares each sink's rating with the pull-ups across the translator"
    details = {"rp_min": ln.rp_min, "rp_max": ln.rp_max, "margin_low": m_lo, "margin_high": m_hi,
               "tolerance": tol, "effective": r_eff, "contributors": contributors,
               "definition": lim.rise_definition, "auto": seg_in.auto}
    shown = (f"{_f(r_eff, 'Ω')} ({' ∥ '.join(_f(c['value'], 'Ω') for c in contributors)})"
             if ln.part_pullups else _f(r_eff, 'Ω'))
    window = f"[{_f(ln.rp_min, 'Ω')}, {_f(ln.rp_max, 'Ω')}]"
    if m_lo <= m_hi:
        chk = check_min("pullup-window", r_eff * (1 - tol), ln.rp_min, "Ω", src,
                        f"{up} pull-up {shown} at −{tol:.0%}: {_f(r_eff * (1 - tol), 'Ω')} "
                        f"against the window {window}", subject=up, details=details, **ctx.kw())
    else:
        chk = check_max("pullup-window", r_eff * (1 + tol), ln.rp_max, "Ω", src,
                        f"{up} pull-up {shown} at +{tol:.0%}: {_f(r_eff * (1 + tol), 'Ω')} "
                        f"against the window {window}", subject=up, details=details, **ctx.kw())
    if chk.status == "fail":
        chk.fix = _window_advice(ctx, seg_in, ln, m_lo, m_hi)
        chk.message += f"; {chk.fix}"
    return chk


def _series_range(series: str, lo: float, hi: float) -> str:
    if not (0 < lo <= hi and math.isfinite(lo)):
        return ""
    hi_c = min(hi, 1e9)
    vals = eseries.values_in_range(series, lo, hi_c) if hi_c >= lo else np.array([])
    if vals.size == 0:
        return f"no {series} value lies in it"
    shown = ", ".join(_f(x, "Ω") for x in vals[:6]) + (" …" if vals.size > 6 else "")
    return f"{series}: {shown}"


def _window_advice(ctx: _Ctx, seg_in: SegmentInputs, ln: LineInputs, m_lo: float,
                   m_hi: float) -> str:
    """What would make the pull-up window work, quantified."""
    lim, tol = ctx.lim, seg_in.tol
    v_max = float(seg_in.vdd[1])
    eff_lo, eff_hi = ln.rp_min / (1 - tol), ln.rp_max / (1 + tol)
    tips: list[str] = []
    # 1. every contributor in parallel below Rp(min): which of the parts' own to remove
    if ln.part_pullups and m_lo < 0:
        keep = sorted(ln.part_pullups, key=lambda p: p["value"])
        removed = []

        def fits(rest) -> bool:
            r_rest = float(pu.parallel(*[p["value"] for p in rest])) if rest else math.inf
            if seg_in.auto:  # the resistor will be re-chosen: the parts must leave room
                return r_rest > eff_lo
            return float(pu.parallel(seg_in.pullup, r_rest)) >= eff_lo

        while keep and not fits(keep):
            removed.append(keep.pop(0))
        if removed and fits(keep):
            names = ", ".join(f"{p['ref']} {p['pin'].upper()} ({_f(p['value'], 'Ω')}, "
                              f"{p['kind']})" for p in removed)
            now = ln.r_parts if seg_in.auto else float(pu.parallel(seg_in.pullup, ln.r_parts))
            what = "the parts' own pull-ups in parallel give" if seg_in.auto else \
                "every pull-up in parallel gives"
            tips.append(f"{what} {_f(now, 'Ω')}, below Rp(min) "
                        f"{_f(ln.rp_min, 'Ω')}: remove or disable {names}")
    if eff_lo <= eff_hi:
        # the window exists: the value is outside it
        if math.isfinite(ln.r_parts):
            r_q = ln.r_parts

            def need(eff):
                return math.inf if eff >= r_q else eff * r_q / (r_q - eff)

            lo_r, hi_r = need(eff_lo), need(eff_hi)
        else:
            lo_r, hi_r = eff_lo, eff_hi
        if lo_r <= hi_r and math.isfinite(lo_r):
            tips.append(f"a design resistor between {_f(lo_r, 'Ω')} and "
                        f"{_f(hi_r, 'Ω') if math.isfinite(hi_r) else 'no upper limit'} fits "
                        f"({_series_range(seg_in.segment.pullup_series, lo_r, hi_r)})")
        return "; ".join(tips)
    # 2. no passive pull-up fits: quantified ways out
    if not math.isfinite(ln.rp_min):
        tips.append(f"the weakest sink ({ln.rp_min_label}) cannot even carry the current the "
                    "pull-ups across the translator already draw: raise those pull-ups, or use "
                    "drivers with a larger rating or an active translator")
        return "; ".join(tips)
    factor = ln.rise_factor
    cb_lim = float(pu.cb_limit(lim.tr_max, ln.rp_min, tol, factor))
    tips.append(f"no resistor fits: Rp(min) {_f(ln.rp_min, 'Ω')} (weakest sink "
                f"{ln.rp_min_label or '—'}) is above Rp(max) "
                f"{_f(ln.rp_max, 'Ω')} at Cb {_f(ln.cb, 'F')}")
    tips.append(f"bring Cb below {_f(cb_lim, 'F')} (now {_f(ln.cb, 'F')}: "
                f"{_f(ln.cb - cb_lim, 'F')} less: shorter traces or cable, fewer loads)")
    lower = lim.lower()
    if lower is not None:
        f_low = float(lower.rise_factor(float(seg_in.vdd[0])))
        rpmax_low = lower.tr_max / (f_low * ln.cb)
        if ln.rp_min * (1 + tol) / (1 - tol) <= rpmax_low:
            fitting = _series_range(seg_in.segment.pullup_series, eff_lo, rpmax_low / (1 + tol))
            tips.append(f"{lower.label} (tr ≤ {_f(lower.tr_max, 's')}, "
                        f"{_f(lower.f_max, 'Hz')}) allows Rp up to {_f(rpmax_low, 'Ω')}: "
                        f"{fitting}")
        else:
            tips.append(f"even {lower.label} allows only {_f(rpmax_low, 'Ω')}")
    n = max(2, math.ceil(ln.cb / cb_lim)) if cb_lim > 0 else 2
    tips.append(f"a bus buffer splitting the bus into {n} segments of under {_f(cb_lim, 'F')} each")
    v_lo, v_hi = lim.measuring_levels(float(seg_in.vdd[1]))
    i_cs = float(pu.current_source_needed(ln.cb, float(v_lo), float(v_hi), lim.tr_max))
    weakest = ln.rp_min_driver.i_ol if ln.rp_min_driver else math.nan
    ok_cs = "" if i_cs < weakest else f" — more than the weakest sink's {_f(weakest, 'A')}"
    tips.append(f"an active (current-source) pull-up of at least {_f(i_cs, 'A')} "
                f"(UM10204 rev. 6 §5.1){ok_cs}")
    if ln.rp_min_driver is not None:
        d = ln.rp_min_driver
        i_need = float(pu.sink_current_needed(v_max, float(d.v_ol[1]), ln.rp_max, tol))
        tips.append(f"drivers sinking at least {_f(i_need, 'A')} at {_f(float(d.v_ol[1]), 'V')} "
                    f"(the weakest, {d.tap.label}, is rated {_f(d.i_ol, 'A')})")
    return "; ".join(tips)


def _far_branches(ctx: _Ctx, seg_in: SegmentInputs, signal: str):
    """Pull-ups of segments joined through pass transistors: (link, rail corners, Rp min)."""
    out = []
    for link in ctx.links[seg_in.index]:
        if link.kind != "mosfet":
            continue
        other = ctx.seg_ins[link.other]
        rp = other.r_eff(signal) * (1 - other.tol)
        out.append((link, other.vdd, rp))
    return out


def _line_levels(ctx: _Ctx, seg_in: SegmentInputs, ln: LineInputs, grp: Group) -> dict:
    """Rise, fall, levels, sink current, power and their checks for one line."""
    lim, v, tol, up = ctx.lim, seg_in.vdd, seg_in.tol, ln.signal.upper()
    r_eff = seg_in.r_eff(ln.signal)
    rp_lo, rp_hi = r_eff * (1 - tol), r_eff * (1 + tol)
    figs: dict = {"cb": ln.cb, "pullup": r_eff, "rp_min": ln.rp_min, "rp_max": ln.rp_max}
    kw = ctx.kw(subject=up)
    # -- capacitance
    cb_details = dict(ln.cb_parts)
    if lim.cb_max is not None:
        grp.add(check_max("bus-capacitance", ln.cb, lim.cb_max, "F", lim.source_cb,
                          f"{up} bus capacitance {_f(ln.cb, 'F')} (pins "
                          f"{_f(ln.cb_parts['pins'], 'F')}, traces {_f(ln.cb_parts['traces'], 'F')}"
                          f", cables {_f(ln.cb_parts['cables'], 'F')}, extra "
                          f"{_f(ln.cb_parts['extra'], 'F')})", details=cb_details, **kw))
    # -- window
    grp.add(_window_check(ctx, seg_in, ln))
    # -- rise
    tr = float(pu.rise_time(rp_hi, ln.cb, ln.rise_factor))
    tr_1090 = float(pu.rise_time(rp_hi, ln.cb, RISE_10_90))
    figs.update(rise_time=tr, rise_time_10_90=tr_1090)
    defin = ("30–70 %" if lim.rise_definition == "30-70" else "SMBus points 0.65 V–1.50 V")
    grp.add(check_max("rise-time", tr, lim.tr_max, "s", lim.source_edges,
                      f"{up} rise time {_f(tr, 's')} ({defin}, Rp {_f(rp_hi, 'Ω')} at "
                      f"+{tol:.0%}, Cb {_f(ln.cb, 'F')}, factor {ln.rise_factor:.4g})",
                      details={"definition": lim.rise_definition, "factor": ln.rise_factor},
                      **kw))
    # -- low levels, per driver and corner
    far = _far_branches(ctx, seg_in, ln.signal)
    levels = []   # (label, v_bus per corner, i per corner or None, driver or None)
    offset_levels = []  # a repeater side's static-offset low: the bridge-offset check
    for d in ln.drivers:
        if d.offset is not None:
            vb = np.full(v.shape, d.offset)
            offset_levels.append((d.tap.label, vb, (v - vb) / rp_lo, d))
            continue
        r_low = d.r_on + d.r_series
        if not far:
            vb = np.asarray(pu.low_level(v, rp_lo, d.r_on, d.r_series), dtype=float)
            i = np.asarray(pu.sink_current(v, rp_lo, d.r_on, d.r_series), dtype=float)
        else:
            g = sum(1.0 / (rp + link.r_on) for link, _, rp in far)
            v_th = sum(vv / (rp + link.r_on) for link, vv, rp in far) / g
            vb, _, i = (np.asarray(x, dtype=float) for x in
                        pu.translator_low_levels(v, rp_lo, v_th, 1.0 / g, 0.0, r_low))
        levels.append((d.tap.label, vb, i, d))
    for link, v_other, rp_other in far:
        other = ctx.seg_ins[link.other]
        for d in other.lines[ln.signal].drivers:
            if d.offset is not None or d.tap.dev.is_bridge:
                continue
            _, vf, _ = pu.translator_low_levels(v_other, rp_other, v, rp_lo, link.r_on,
                                                d.r_on + d.r_series)
            levels.append((f"{d.tap.label} via {link.dev.ref}", np.asarray(vf, dtype=float),
                           None, None))
    checks_low: list[Check] = []
    if levels:
        vol_bus = np.max(np.stack([lv[1] for lv in levels]), axis=0)
        worst_drv = [levels[int(np.argmax([lv[1][c] for lv in levels]))][0] for c in range(2)]
        figs["v_ol"] = float(np.max(vol_bus))
        # v-ol against every receiver's VIL
        if ln.receivers:
            rows = []
            for r in ln.receivers:
                m = (r.v_il - vol_bus) / r.v_il
                c = _worst_index(m)
                rows.append((float(m[c]), c, r))
            rows.sort(key=lambda x: x[0])
            m, c, r = rows[0]
            failing = [x[2].tap.label for x in rows if x[0] < 0]
            chk = check_max("v-ol", float(vol_bus[c]), float(r.v_il[c]), "V", r.source,
                            f"{up} low level {_f(vol_bus[c], 'V')} (driver {worst_drv[c]} at the "
                            f"actual current, {_CORNERS[c]}, incl. I·Rs) against VIL "
                            f"{_f(r.v_il[c], 'V')} of {r.tap.label}",
                            details={"receivers": {x[2].tap.label: x[0] for x in rows}},
                            **ctx.kw(subject=f"{up} {r.tap.label}"))
            if failing:
                chk.fix = (f"receivers {', '.join(failing)} read the low level as high: a larger "
                           "pull-up, a stronger sink, smaller series resistors, or a translator")
                chk.message += f"; {chk.fix}"
            checks_low.append(chk)
            vil_min = np.min(np.stack([r.v_il for r in ln.receivers]), axis=0)
            nml = vil_min - vol_bus
            figs["noise_margin_low"] = float(np.min(nml))
            if lim.v_nl_rel is not None:
                limit = lim.v_nl_rel * v
                c = _worst_index((nml - limit) / limit)
                checks_low.append(check_min(
                    "noise-margin-low", float(nml[c]), float(limit[c]), "V", lim.source_noise,
                    f"{up} low-level noise margin {_f(nml[c], 'V')} (lowest VIL − low level, "
                    f"{_CORNERS[c]}) against {lim.v_nl_rel:g}·VDD", **kw))
    if levels or offset_levels:
        # sink current against each driver's rating (the worst one reported)
        rows = []
        for _label, _, i, d in levels + offset_levels:
            if d is None:
                continue
            ratio = np.max(i) / d.i_ol
            rows.append((ratio, float(np.max(i)), d))
        if rows:
            rows.sort(key=lambda x: -x[0])
            _, i_max, d = rows[0]
            extra = " and the far side's pull-up through the translator" if far else ""
            chk = check_max("sink-current", i_max, d.i_ol, "A", d.source_i,
                            f"{up} sink current {_f(i_max, 'A')} (pull-up at −{tol:.0%}, rail at "
                            f"its maximum{extra}) against {d.tap.label}'s rating "
                            f"{_f(d.i_ol, 'A')} at {_f(float(d.v_ol[1]), 'V')}",
                            details={"drivers": {x[2].tap.label: x[1] for x in rows}},
                            **ctx.kw(subject=f"{up} {d.tap.label}"))
            if chk.status == "fail":
                chk.fix = (f"raise the effective pull-up to at least "
                           f"{_f(ln.rp_min / (1 - tol), 'Ω')} (Rp(min) at −{tol:.0%})")
                chk.message += f"; {chk.fix}"
            checks_low.append(chk)
        power = max(float(np.max(v * (v - lv[1]) / rp_lo)) for lv in levels + offset_levels)
        figs["pullup_power"] = power
    else:
        figs["pullup_power"] = None
        grp.notes.append(f"{up}: no device on this segment drives the line low; levels not checked")
    if not levels:
        figs.update(v_ol=None, noise_margin_low=None)
        if offset_levels:
            grp.notes.append(f"{up} is driven low on this segment only by the static-offset side "
                             f"of {', '.join(x[0] for x in offset_levels)}: see bridge-offset")
    for chk in checks_low:
        grp.add(chk)
    # -- high level after leakage
    voh = np.asarray(pu.high_level(v, rp_hi, ln.leakage), dtype=float)
    figs["v_oh"] = float(np.min(voh))
    if ln.receivers:
        rows = []
        for r in ln.receivers:
            m = (voh - r.v_ih) / r.v_ih
            c = _worst_index(m)
            rows.append((float(m[c]), c, r))
        rows.sort(key=lambda x: x[0])
        m, c, r = rows[0]
        failing = [x[2].tap.label for x in rows if x[0] < 0]
        chk = check_min("v-oh", float(voh[c]), float(r.v_ih[c]), "V", r.tap.source("v_ih")
                        if r.tap.pin.v_ih is not None else lim.source_levels,
                        f"{up} high level {_f(voh[c], 'V')} (rail − {_f(ln.leakage, 'A')} leakage "
                        f"× {_f(rp_hi, 'Ω')}, {_CORNERS[c]}) against VIH {_f(r.v_ih[c], 'V')} of "
                        f"{r.tap.label}",
                        details={"receivers": {x[2].tap.label: x[0] for x in rows}},
                        **ctx.kw(subject=f"{up} {r.tap.label}"))
        if failing:
            chk.fix = (f"{', '.join(failing)} cannot read the pull-up rail as high: pull up to "
                       "a rail they accept, put a level translator between, or lower the pull-up "
                       "(leakage drop)")
            chk.message += f"; {chk.fix}"
        grp.add(chk)
        vih_max = np.max(np.stack([r.v_ih for r in ln.receivers]), axis=0)
        nmh = voh - vih_max
        figs["noise_margin_high"] = float(np.min(nmh))
        if lim.v_nh_rel is not None:
            limit = lim.v_nh_rel * v
            c = _worst_index((nmh - limit) / limit)
            grp.add(check_min("noise-margin-high", float(nmh[c]), float(limit[c]), "V",
                              lim.source_noise,
                              f"{up} high-level noise margin {_f(nmh[c], 'V')} (high level − "
                              f"highest VIH, {_CORNERS[c]}) against {lim.v_nh_rel:g}·VDD", **kw))
    else:
        figs["noise_margin_high"] = None
        figs.setdefault("noise_margin_low", None)
    # -- fall time: upper bound from each driver's guaranteed sink
    v_lo, v_hi = lim.measuring_levels(v)
    falls = []
    for d in ln.drivers:
        t = np.asarray(pu.fall_time_bound(rp_lo, ln.cb, v, d.v_ol, d.i_ol, v_hi, v_lo,
                                          d.r_series), dtype=float)
        falls.append((float(np.max(t)), d, ""))
    for link, _, _ in far:
        for d in ctx.seg_ins[link.other].lines[ln.signal].drivers:
            if d.offset is not None or d.tap.dev.is_bridge:
                continue
            t = np.asarray(pu.fall_time_bound(rp_lo, ln.cb, v, d.v_ol, d.i_ol, v_hi, v_lo,
                                              d.r_series + link.r_on), dtype=float)
            falls.append((float(np.max(t)), d, f" via {link.dev.ref}"))
    if falls:
        tf, d, via = max(falls, key=lambda x: x[0])
        figs["fall_time"] = tf
        grp.add(check_max("fall-time", tf, lim.tf_max, "s", lim.source_edges,
                          f"{up} fall time at most {_f(tf, 's')} (driver {d.tap.label}{via} "
                          f"sinking at least {_f(d.i_ol, 'A')} above {_f(float(d.v_ol[1]), 'V')}, "
                          f"pull-up at −{tol:.0%}, Cb {_f(ln.cb, 'F')})", **kw))
        # tf(min): a property of slope-controlled outputs
        tf_min = lim.tf_min(float(v[1]))
        if tf_min is not None:
            missing = []
            for d in ln.drivers:
                if d.tap.pin.t_of_min is not None:
                    grp.add(check_min("fall-time-min", float(d.tap.pin.t_of_min.value), tf_min,
                                      "s", lim.source_edges,
                                      f"{up} output fall time of {d.tap.label} at least "
                                      f"{_f(float(d.tap.pin.t_of_min.value), 's')} (its part's "
                                      f"t_of_min) against tf(min) {_f(tf_min, 's')}",
                                      **ctx.kw(subject=f"{up} {d.tap.label}")))
                elif not d.tap.dev.is_bridge:
                    missing.append(d.tap.label)
            if missing:
                _default(seg_in, f"tf(min) {_f(tf_min, 's')} ({lim.source_edges}) is the "
                                 "responsibility of each device's slope-controlled output; its "
                                 "part states no t_of_min, so it is not checked",
                         f"{up}: " + ", ".join(missing))
    else:
        figs["fall_time"] = None
    return figs


def _segment_checks(ctx: _Ctx, seg_in: SegmentInputs, grp: Group, per_line: dict) -> None:
    """Timing, voltage domains, power states and bridging parts of one segment."""
    lim, v, tol, vtol = ctx.lim, seg_in.vdd, seg_in.tol, seg_in.vtol
    seg = seg_in.segment
    # -- clock
    clock = ctx.clock
    ctrl = ctx.controller
    t_low = t_high = None
    if ctrl is not None and ctrl.part.timing.t_low is not None:
        t_low = float(ctrl.part.timing.t_low.value)
    if ctrl is not None and ctrl.part.timing.t_high is not None:
        t_high = float(ctrl.part.timing.t_high.value)
    if t_low is None or t_high is None:
        period = 1.0 / clock
        share = period / (lim.t_low + lim.t_high)
        t_low = t_low if t_low is not None else max(lim.t_low, lim.t_low * share)
        t_high = t_high if t_high is not None else max(lim.t_high, lim.t_high * share)
        if seg_in.index == ctx.ctrl_seg:
            grp.notes.append(f"SCL low/high times taken as the controller counting "
                             f"{_f(t_low, 's')} / {_f(t_high, 's')} for a {_f(clock, 'Hz')} clock "
                             f"(the specification's tLOW:tHIGH proportion, {lim.source_timing}); "
                             "give the controller's t_low/t_high to use its own")
    scl, sda = per_line["scl"], per_line["sda"]
    tr_scl = scl["rise_time"]
    tf_scl = scl["fall_time"] if scl["fall_time"] is not None else 0.0
    f_eff = float(pu.scl_frequency(t_low, t_high, tr_scl, tf_scl))
    grp.figure("scl_frequency_effective", f_eff, "Hz")
    grp.add(check_max("scl-frequency", clock, lim.f_max, "Hz", lim.source_f,
                      f"SCL clock {_f(clock, 'Hz')} against {lim.label}'s {_f(lim.f_max, 'Hz')}; "
                      f"with the edges the controller counts, the effective frequency is "
                      f"{_f(f_eff, 'Hz')} (UM10204 rev. 6 §7.2.1 eq. 3)",
                      warn_margin=0.0))  # running at the mode's own maximum is what it allows
    # devices that cannot follow the clock (targets; a controller's f_max is its own choice)
    slow = [(float(d.part.timing.f_max.value), d) for d in seg.devices
            if not d.is_controller and not d.is_bridge and d.part.timing.f_max is not None]
    if slow:
        f_dev, d = min(slow, key=lambda x: x[0])
        fm = d.part.timing.f_max
        why = fm.source or d.part.provenance.source or "part file"
        grp.add(check_min("device-speed", f_dev, clock, "Hz", f"{d.part_id} timing.f_max ({why})",
                          f"slowest device {d.ref} takes up to {_f(f_dev, 'Hz')} against the "
                          f"{_f(clock, 'Hz')} clock", subject=d.ref, warn_margin=0.0))
    # -- SDA data setup
    tr_sda = sda["rise_time"]
    rows = []
    if seg_in.index == ctx.ctrl_seg:
        for s in ctx.seg_ins:
            for d in s.segment.devices:
                if d.is_controller or d.is_bridge:
                    continue
                pin = d.part.pin_for("i2c-sda", d.side)
                if pin is None or pin[1].drive != "open-drain":
                    continue
                tvd = d.part.timing.t_vd_dat
                val = float(tvd.value) if tvd is not None else lim.t_vd_dat
                if tvd is None:
                    _default(seg_in, f"no t_vd_dat stated: taken at the specification's "
                                     f"{_f(lim.t_vd_dat, 's')} ({lim.source_vd_dat})", d.ref)
                rows.append((val + 2.0 * ctx.delay.get(s.index, 0.0), d))
    elif ctrl is not None:
        tvd = ctrl.part.timing.t_vd_dat
        val = float(tvd.value) if tvd is not None else lim.t_vd_dat
        if tvd is None:
            _default(seg_in, f"no t_vd_dat stated: taken at the specification's "
                             f"{_f(lim.t_vd_dat, 's')} ({lim.source_vd_dat})", ctrl.ref)
        rows.append((val, ctrl))
    if rows:
        tvd, d = max(rows, key=lambda x: x[0])
        budget_s = t_low - tvd - tr_sda
        grp.figure("sda_setup_margin", budget_s - lim.t_su_dat, "s")
        grp.add(check_min("setup-time", budget_s, lim.t_su_dat, "s",
                          f"{lim.source_timing}; tVD;DAT {lim.source_vd_dat}",
                          f"SDA data setup tLOW {_f(t_low, 's')} − tVD;DAT {_f(tvd, 's')} "
                          f"({d.ref}{', incl. bridge delays' if tvd > lim.t_vd_dat else ''}) − tr "
                          f"{_f(tr_sda, 's')} = {_f(budget_s, 's')} against tSU;DAT "
                          f"{_f(lim.t_su_dat, 's')}", subject=f"SDA {d.ref}", **ctx.kw()))
    else:
        grp.figure("sda_setup_margin", None, "s")
    # -- voltage domains: abs_max against the pull-up rail
    taps = [t for sig in SIGNALS for t in _taps(seg, SIGNALS[sig])]
    rows = []
    for t in taps:
        if t.pin.abs_max is None:
            continue
        am = _corner_values(t.pin.abs_max, t, v, vtol, "min")
        m = (am - v) / am
        c = _worst_index(m)
        rows.append((float(m[c]), float(v[c]), float(am[c]), t))
    if rows:
        rows.sort(key=lambda x: x[0])
        m, vv, am, t = rows[0]
        failing = sorted({x[3].label for x in rows if x[0] < 0})
        th = t.pin.abs_max.value
        # an abs_max written relative to a device's own rail, on the pull-up rail, moves with
        # it and cannot be exceeded: pass without a near-limit warning
        follows = not t.own and getattr(th, "scale", 0.0) == 1.0 and th.offset >= 0.0
        chk = check_max("input-voltage", vv, am, "V", t.source("abs_max"),
                        f"pull-up rail up to {_f(vv, 'V')} on the pins of {t.label} "
                        f"(abs_max {_f(am, 'V')} at its own rail {_f(t.vdd, 'V')})",
                        subject=t.label, **ctx.kw(warn_margin=0.0 if follows else ctx.warn))
        if failing:
            rails = sorted({x[3].vdd for x in rows if x[0] < 0})
            chk.fix = (f"{', '.join(failing)} would be driven above their absolute maximum: put "
                       f"a level translator between them and the {_f(seg.supply, 'V')} rail, or "
                       f"pull this segment up to {_f(rails[0], 'V')} if every device on it "
                       "accepts that rail")
            chk.message += f"; {chk.fix}"
        grp.add(chk)
    # -- devices on rails outside their part's supply range (the rail's tolerance is applied
    #    already, and a datasheet range is a hard limit: inside it passes, no warning band)
    rows = []
    seen = set()
    for t in taps:
        if t.ref in seen:
            continue
        seen.add(t.ref)
        sup = t.dev.part.supply_for(t.dev.side)
        if sup is None:
            continue
        lo, hi = t.vdd * (1 - vtol), t.vdd * (1 + vtol)
        m_lo = (lo - float(sup.min.value)) / float(sup.min.value)
        m_hi = (float(sup.max.value) - hi) / float(sup.max.value)
        rows.append((min(m_lo, m_hi), m_lo < m_hi, lo, hi, sup, t))
    if rows:
        rows.sort(key=lambda x: x[0])
        _, low_side, lo, hi, sup, t = rows[0]
        why = sup.min.source or t.dev.part.provenance.source or "part file"
        src = f"{t.dev.part_id} supply ({why})"
        rng = f"{_f(float(sup.min.value), 'V')} to {_f(float(sup.max.value), 'V')}"
        if low_side:
            chk = check_min("supply-range", lo, float(sup.min.value), "V", src,
                            f"{t.label} runs from {_f(lo, 'V')} at the rail's minimum; its part "
                            f"needs {rng}",
                            subject=t.label, warn_margin=0.0)
        else:
            chk = check_max("supply-range", hi, float(sup.max.value), "V", src,
                            f"{t.label} runs from {_f(hi, 'V')} at the rail's maximum; its part "
                            f"allows {rng}",
                            subject=t.label, warn_margin=0.0)
        if chk.status == "fail":
            chk.fix = ("give the device its own rail (supply = \"...\" on the device) or choose a "
                       "part for this rail")
            chk.message += f"; {chk.fix}"
        grp.add(chk)
    # -- power states
    for d in seg.devices:
        if not d.switched:
            continue
        pins = [t for t in taps if t.dev is d]
        loading = [t for t in pins if not t.pin.off_tolerant]
        if not loading:
            grp.add(check_true("power-off", True, f"{d.part_id} pins off_tolerant",
                               f"{d.ref} sits on a switched rail; its pins are power-off tolerant",
                               subject=d.ref))
            continue
        currents = []
        for t in loading:
            sig = "sda" if t.pin.function == "i2c-sda" else "scl"
            rp = seg_in.r_eff(sig) * (1 - tol)
            currents.append((sig.upper(), (float(v[1]) - CLAMP_DROP) / rp))
        shown = ", ".join(f"{s} {_f(i, 'A')}" for s, i in currents)
        chk = check_true(
            "power-off", False, f"{_COMMON}: input clamp diodes to the device's own rail "
            f"({CLAMP_DROP:g} V drop)",
            f"{d.ref} sits on a switched rail and its pins are not power-off tolerant: with its "
            f"rail off, its input clamps hold {' and '.join(s for s, _ in currents)} about "
            f"{CLAMP_DROP:g} V above the dead rail (below every VIL: the bus stops) and the "
            f"pull-ups feed {shown} into it, back-powering its rail", subject=d.ref,
            details={"clamp_current": {s: i for s, i in currents}})
        chk.fix = ("use a part with power-off-tolerant (fail-safe) bus pins, keep its rail on "
                   "while the bus runs, or isolate it behind a bus switch or buffer that "
                   "disconnects when its rail is off")
        chk.message += f"; fix: {chk.fix}"
        grp.add(chk)
    # -- bridging parts
    _bridge_checks(ctx, seg_in, grp)


def _bridge_checks(ctx: _Ctx, seg_in: SegmentInputs, grp: Group) -> None:
    v, vtol = seg_in.vdd, seg_in.vtol
    seg = seg_in.segment
    links = ctx.links[seg_in.index]
    offsets = []
    for link in links:
        d = link.dev
        if link.kind == "mosfet":
            other = ctx.seg_ins[link.other]
            if seg.supply > other.segment.supply:
                continue  # the low side reports the gate drive
            br = d.part.bridge
            if br.v_gs_th is None:
                grp.notes.append(f"{d.ref}: the translator's gate threshold (bridge.v_gs_th) is "
                                 "not stated; gate drive not checked")
            else:
                vth = float(br.v_gs_th.value)
                over = float(v[0]) - vth
                # the transistor does not conduct at all without overdrive (limit 0 V, a
                # fail); below GATE_OVERDRIVE it is a warning. The margin is relative to it.
                margin = over / GATE_OVERDRIVE
                status = "fail" if over <= 0 else ("warn" if over < GATE_OVERDRIVE else "pass")
                msg = (f"{d.ref} gate drive: low rail {_f(v[0], 'V')} at its minimum − gate "
                       f"threshold {_f(vth, 'V')} = {_f(over, 'V')} overdrive")
                fix = None
                if status != "pass":
                    fix = ("a MOSFET with a lower gate threshold (logic-level, below "
                           f"{_f(float(v[0]) - GATE_OVERDRIVE, 'V')}) or an active translator")
                    msg += (f"; below {_f(GATE_OVERDRIVE, 'V')} its on-resistance "
                            f"{_f(link.r_on, 'Ω')} is not assured: {fix}")
                grp.add(Check("bridge-gate-drive", status, over, 0.0, "V", margin,
                              f"{_COMMON}: gate overdrive of at least {GATE_OVERDRIVE:g} V; "
                              f"threshold from {d.part_id} bridge.v_gs_th", msg, subject=d.ref,
                              fix=fix))
            if br.r_on is None:
                grp.notes.append(f"{d.ref}: the translator's on-resistance (bridge.r_on) is not "
                                 "stated; taken as 0 Ω, so the far side's low level is optimistic")
            continue
        if link.t_pd == 0.0 and d.part.timing.t_pd is None:
            _default(seg_in, "bridge propagation delay (timing.t_pd) not stated: taken as 0 s "
                             "in the setup budget", d.ref)
        if _offset_side(d) == d.side:
            offsets.append(d)
    for d in offsets:
        side = d.part.sides[d.side]
        if side.low_offset is None:
            grp.notes.append(f"{d.ref}: side {d.side} drives a static offset low but states no "
                             "level (sides.<side>.low_offset); not checked")
            continue
        tap = next(t for t in _taps(seg, "i2c-sda") if t.dev is d)
        off = _corner_values(side.low_offset, tap, v, vtol, "max")
        rows = []
        for sig in SIGNALS:
            for r in seg_in.lines[sig].receivers:
                if r.tap.dev.ref == d.ref:
                    continue
                m = (r.v_il - off) / r.v_il
                c = _worst_index(m)
                rows.append((float(m[c]), c, r, sig))
        if rows:
            rows.sort(key=lambda x: x[0])
            m, c, r, sig = rows[0]
            chk = check_max("bridge-offset", float(off[c]), float(r.v_il[c]), "V",
                            f"{d.part_id} sides.{d.side}.low_offset; VIL from {r.source}",
                            f"{d.ref} drives side {d.side} low to {_f(off[c], 'V')} (static "
                            "offset) "
                            f"against VIL {_f(r.v_il[c], 'V')} of {r.tap.label} ({sig.upper()})",
                            subject=d.ref, **ctx.kw())
            if chk.status == "fail":
                chk.fix = (f"every device on the offset side must read {_f(off[c], 'V')} as low: "
                           "replace those with VIL below it, or turn the repeater so its offset "
                           "side faces devices with VIL = 0.3·VDD at a higher rail")
                chk.message += f"; {chk.fix}"
            grp.add(chk)
    if offsets:
        ok = len(offsets) < 2
        names = ", ".join(f"{d.ref} side {d.side}" for d in offsets)
        chk = check_true("bridge-offset-facing", ok,
                         "common practice, no source: a static-offset side reads another's "
                         "offset low as a driven low",
                         f"static-offset sides on this segment: {names}" + (
                             "" if ok else ": each sees the other's offset low as a driven low "
                             "and holds it — the bus locks low"), subject=offsets[0].ref)
        if not ok:
            chk.fix = ("never join two static-offset sides: turn one repeater round or use a "
                       "repeater without offset on one side")
            chk.message += f"; {chk.fix}"
        grp.add(chk)


_WORST = {"bus_capacitance": max, "pullup": min, "rp_min": max, "rp_max": min, "rise_time": max,
          "rise_time_10_90": max, "fall_time": max, "v_ol": max, "v_oh": min,
          "noise_margin_low": min, "noise_margin_high": min, "pullup_power": max}
_UNITS = {"bus_capacitance": "F", "pullup": "Ω", "rp_min": "Ω", "rp_max": "Ω", "rise_time": "s",
          "rise_time_10_90": "s", "fall_time": "s", "v_ol": "V", "v_oh": "V",
          "noise_margin_low": "V", "noise_margin_high": "V", "pullup_power": "W"}


def _evaluate_segment(ctx: _Ctx, seg_in: SegmentInputs) -> Group:
    grp = Group()
    per_line = {}
    for sig, ln in seg_in.lines.items():
        per_line[sig] = _line_levels(ctx, seg_in, ln, grp)
        per_line[sig]["bus_capacitance"] = per_line[sig].pop("cb")
    # figures: the worse of the two lines, then each line's own
    figs = {}
    for name, pick in _WORST.items():
        vals = [per_line[s].get(name) for s in SIGNALS]
        vals = [x for x in vals if x is not None]
        figs[name] = pick(vals) if vals else None
    for name in ("bus_capacitance", "rise_time", "fall_time", "pullup"):
        for sig in SIGNALS:
            figs[f"{name}_{sig}"] = per_line[sig].get(name)
    for name, value in figs.items():
        base = name.rsplit("_sda", 1)[0].rsplit("_scl", 1)[0]
        grp.figure(name, value, _UNITS.get(base, _UNITS.get(name, "")))
    grp.figure("supply", seg_in.segment.supply, "V")
    grp.figure("pullup_resistor", seg_in.pullup, "Ω")
    grp.figure("rise_factor", seg_in.lines["sda"].rise_factor, "")
    _segment_checks(ctx, seg_in, grp, per_line)
    # notes
    lim = ctx.lim
    if lim.rise_definition == "smbus":
        grp.notes.insert(0, f"rise and fall times follow the SMBus definition: {lim.rise_text}; "
                            "rise_time_10_90 is 10–90 % of VDD")
    if seg_in.auto:
        grp.notes.append(f"pull-up chosen from {seg_in.segment.pullup_series}: "
                         f"{_f(seg_in.pullup, 'Ω')} (±{seg_in.tol:.0%}), the value with the "
                         "largest smaller margin to Rp(min) and Rp(max) on both lines")
    for sig, ln in seg_in.lines.items():
        if ln.part_pullups:
            parts = "; ".join(f"{p['ref']} {p['pin']} {_f(p['value'], 'Ω')} ({p['kind']})"
                              for p in ln.part_pullups)
            grp.notes.append(f"{sig.upper()} pull-up contributors in parallel: design resistor "
                             f"{_f(seg_in.pullup, 'Ω')}; {parts} → {_f(seg_in.r_eff(sig), 'Ω')}")
    if seg_in.cb_notes:
        grp.notes.append("trace capacitance: " + "; ".join(dict.fromkeys(seg_in.cb_notes)))
    grp.notes.extend(seg_in.notes)
    for text, where in seg_in.defaults.items():
        grp.notes.append(f"{text}: {', '.join(where)}")
    return grp


def evaluate_bus(bus: Bus, design: Design) -> BusResult:
    """Evaluate an I2C or SMBus bus of a design.

    Parameters
    ----------
    bus : Bus
        The bus (protocol ``i2c`` or ``smbus``).
    design : Design
        The design it belongs to (for the warning threshold).

    Returns
    -------
    BusResult
        A single-segment bus carries its figures and checks itself; a bus split by
        bridging parts lists one :class:`~pinlib.result.SegmentResult` per segment.

    Raises
    ------
    DesignError
        When the bus cannot be evaluated (an SMBus rail below its rise-time point).
    """
    lim, seg_ins = collect(bus, design)
    ctx = _Ctx(bus, design, lim, seg_ins)
    result = BusResult(id=bus.id, protocol=bus.protocol)
    groups = []
    for s in seg_ins:
        try:
            groups.append(_evaluate_segment(ctx, s))
        except InputError as exc:  # a value the physics refuses: name the segment
            raise DesignError(exc.problem, field=f"bus {bus.id} segment {s.segment.id}"
                              + (f": {exc.field}" if exc.field else ""), value=exc.value,
                              expected=exc.expected) from None
    head = f"{lim.label}, clock {_f(ctx.clock, 'Hz')}"
    if len(bus.controllers) > 1:
        head += (f"; {len(bus.controllers)} controllers: timing from {ctx.controller.ref}")
    if len(groups) == 1:
        g = groups[0]
        result.figures, result.checks, result.notes = g.figures, g.checks, [head] + g.notes
    else:
        result.notes.append(head)
        for s, g in zip(seg_ins, groups, strict=True):
            sr = SegmentResult(id=s.segment.id)
            sr.figures, sr.checks, sr.notes = g.figures, g.checks, g.notes
            result.segments.append(sr)
    return result
