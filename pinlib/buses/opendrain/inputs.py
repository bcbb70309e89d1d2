"""Pass 1 of the open-drain engine: what each line of each segment is made of.

For every segment and each line (SDA, SCL) :func:`collect` gathers the pins on it (with
their parts' limits, or the specification's when a part states none), the bus
capacitance (pins, traces, cables, extra), the leakage, the pull-ups the parts carry and
the window Rp(min)..Rp(max); it picks the pull-up (``pullup = "auto"``) or takes the
design's, and joins segments linked by pass transistors.  The bridging parts between
segments (:func:`links`) and the bridge delays (:func:`delays`) serve both the one-bus
checks and the array checks of :mod:`pinlib.buses.opendrain.batch`.
"""

from __future__ import annotations

import math
import warnings
from collections import deque
from dataclasses import dataclass, field

import numpy as np

from pinlib import eseries
from pinlib import messages as M
from pinlib.buses.limits import OpenDrainLimits, limits_for
from pinlib.design import Bus, Design, Device, Section, Segment
from pinlib.errors import DesignError, ValidityWarning
from pinlib.library.schema import Pin
from pinlib.library.values import Sourced
from pinlib.physics import lines as line_models
from pinlib.physics import pullup as pu
from pinlib.physics import rc
from pinlib.quantity import format_si
from pinlib.result import max_margin, min_margin

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


def part_is_mosfet(part) -> bool:
    """A pass-transistor translator (it neither drives nor reads the line)."""
    return part is not None and part.bridge is not None and part.bridge.kind == "mosfet"


def _is_mosfet(dev: Device) -> bool:
    return part_is_mosfet(dev.part)


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
    return driver, receiver, None if quiet else lim.i_leak


def abs_max_follows(pin: Pin) -> bool:
    """An abs_max written as the device's own rail plus a non-negative offset."""
    th = pin.abs_max.value
    return getattr(th, "scale", 0.0) == 1.0 and th.offset >= 0.0


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


def _capacitance(taps: list[_Tap], seg_in: SegmentInputs, lim: OpenDrainLimits, up: str,
                 c_traces: float) -> dict:
    """The contributions to Cb, each at its maximum: pins, traces, cables, extra. [F]"""
    seg = seg_in.segment
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
    return {"pins": c_pins, "traces": c_traces, "cables": c_cables, "extra": c_extra}


def _leakage(taps: list[_Tap], seg_in: SegmentInputs, lim: OpenDrainLimits, up: str) -> float:
    """Sum of the pins' leakage; a receiver that states none at the specification's. [A]"""
    leak = 0.0
    for t in taps:
        value = pin_rules(t.pin, t.dev.part, lim)[2]
        if value is not None:
            leak += value
        if t.pin.leakage is None and value is not None:
            _default(seg_in, f"no leakage stated: taken at the specification's "
                             f"{_f(lim.i_leak, 'A')} ({lim.source_pin})", f"{t.label} {up}")
    return leak


def _drivers(taps: list[_Tap], seg_in: SegmentInputs, lim: OpenDrainLimits,
             up: str) -> list[_Driver]:
    """The open-drain outputs on the line, their sink points at each rail corner."""
    v, vtol = seg_in.vdd, seg_in.vtol
    drivers: list[_Driver] = []
    for t in taps:
        if not pin_rules(t.pin, t.dev.part, lim)[0]:
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
    return drivers


def _receivers(taps: list[_Tap], seg_in: SegmentInputs, lim: OpenDrainLimits,
               up: str) -> list[_Receiver]:
    """The inputs that read the line, their thresholds at each rail corner."""
    v, vtol = seg_in.vdd, seg_in.vtol
    d_il, d_ih = lim.default_levels()
    receivers: list[_Receiver] = []
    for t in taps:
        if not pin_rules(t.pin, t.dev.part, lim)[1]:
            continue
        if t.pin.v_il is None or t.pin.v_ih is None:
            _default(seg_in, f"no input thresholds stated: taken at the specification's "
                             f"levels ({lim.source_levels})", f"{t.label} {up}")
        il = t.pin.v_il if t.pin.v_il is not None else d_il
        ih = t.pin.v_ih if t.pin.v_ih is not None else d_ih
        src = t.source("v_il") if t.pin.v_il is not None else lim.source_levels
        receivers.append(_Receiver(t, _corner_values(il, t, v, vtol, "min"),
                                   _corner_values(ih, t, v, vtol, "max"), src))
    return receivers


def _part_pullups(taps: list[_Tap], seg_in: SegmentInputs, up: str) -> list[dict]:
    """The pull-ups the parts carry (and the internal ones the design enables)."""
    out = []
    for t in taps:
        if t.pin.pullup is not None:
            out.append({"ref": t.ref, "pin": t.pin_name, "kind": "on the part",
                        "value": float(t.pin.pullup.value), "source": t.source("pullup")})
        if t.dev.internal_pullups:
            if t.pin.pullup_internal is not None:
                out.append({"ref": t.ref, "pin": t.pin_name, "kind": "internal, enabled",
                            "value": float(t.pin.pullup_internal.value),
                            "source": t.source("pullup_internal")})
            else:
                _default(seg_in, "internal pull-ups enabled but the part states none: not counted",
                         f"{t.label} {up}")
    return out


def rp_min_of(v_max, v_ol, i_ol):
    """Rp(min) that one driver allows, UM10204 eq. 2 at the rail's maximum; 0 where its
    sink point is at or above the rail (it bounds nothing); scalars or arrays. [Ω]"""
    if np.ndim(v_max) == 0 and np.ndim(v_ol) == 0 and np.ndim(i_ol) == 0:
        return float(rc.rp_min(v_max, v_ol, i_ol)) if v_ol < v_max else 0.0
    ok = np.asarray(v_ol < v_max)
    return np.where(ok, rc.rp_min(v_max, np.where(ok, v_ol, 0.0), i_ol), 0.0)


def _weakest_sink(drivers: list[_Driver], v_max: float) -> tuple[float, _Driver | None]:
    """Rp(min) of a line: the largest of its drivers' and whose it is (1 mΩ and None when
    no driver bounds Rp from below); all drivers in one array. [Ω]"""
    if not drivers:
        return 1e-3, None
    r = rp_min_of(v_max, np.array([float(d.v_ol[1]) for d in drivers]),
                  np.array([d.i_ol for d in drivers]))
    k = int(np.argmax(r))
    return (float(r[k]), drivers[k]) if r[k] > 0 else (1e-3, None)


def rp_max_of(lim: OpenDrainLimits, factor, cb):
    """Rp(max) of a line, UM10204 eq. 1 (or the SMBus rise points): ``inf`` where Cb is
    0 (nothing bounds the pull-up from above); scalars or arrays. [Ω]"""
    if np.ndim(cb) == 0 and np.ndim(factor) == 0:
        return float(rc.rp_max(lim.tr_max, cb, factor)) if cb > 0 else math.inf
    cb_arr = np.asarray(cb, dtype=float)
    ok = cb_arr > 0
    return np.where(ok, rc.rp_max(lim.tr_max, np.where(ok, cb_arr, 1.0), factor), math.inf)


def _line_inputs(signal: str, seg_in: SegmentInputs, lim: OpenDrainLimits,
                 c_traces: float) -> LineInputs:
    v = seg_in.vdd
    taps = _taps(seg_in.segment, SIGNALS[signal])
    up = signal.upper()
    cb_parts = _capacitance(taps, seg_in, lim, up, c_traces)
    cb = cb_parts["pins"] + cb_parts["traces"] + cb_parts["cables"] + cb_parts["extra"]
    leak = _leakage(taps, seg_in, lim, up)
    drivers = _drivers(taps, seg_in, lim, up)
    receivers = _receivers(taps, seg_in, lim, up)
    part_pullups = _part_pullups(taps, seg_in, up)
    r_parts = float(pu.parallel(*[p["value"] for p in part_pullups])) if part_pullups else math.inf
    rp_min, weakest = _weakest_sink(drivers, float(v[1]))
    factor = float(lim.rise_factor(float(v[0])))
    rp_max = rp_max_of(lim, factor, cb)
    return LineInputs(signal, taps, cb, cb_parts, leak, drivers, receivers, part_pullups,
                      r_parts, rp_min, weakest, rp_max, factor,
                      weakest.tap.label if weakest else "")


def auto_margins(series: str, lines, tol: float):
    """The ``auto`` rule's score of every value of a series (10 Ω to 10 MΩ): the smaller
    of the two tolerance-adjusted relative margins to Rp(min) and Rp(max), the worst over
    the lines; the value with the largest score is chosen.  ``lines`` carry ``rp_min``,
    ``rp_max`` and ``r_parts`` as floats (one bus) or ``(N, 1)`` columns (a batch).

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
        lo, hi = pu.pullup_margins(cand, ln.rp_min, ln.rp_max, tol, ln.r_parts)
        worst = np.minimum(worst, np.minimum(lo, hi))
    return cand, worst


def _choose(seg_in: SegmentInputs) -> None:
    """Pick the design's resistor from its series (``auto``): the value that maximises the
    smaller of the two tolerance-adjusted relative margins over both lines."""
    seg = seg_in.segment
    if seg.pullup != "auto":
        seg_in.pullup, seg_in.auto = float(seg.pullup), False
        return
    seg_in.auto = True
    cand, worst = auto_margins(seg.pullup_series, seg_in.lines.values(), seg_in.tol)
    cand, worst = cand[0], worst[0]
    parts_only = math.inf
    for ln in seg_in.lines.values():
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
    links_ = links([(s.index, s.segment) for s in out])
    if any(ln.kind == "mosfet" for lst in links_.values() for ln in lst):
        _couple(out, links_)
    return lim, out


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
        A driver's ``v_ol`` at the rail's maximum. [V]

    Yields
    ------
    (r, driver, link or None)
        Rp(min) of one driver, the driver, and the link it acts through. [Ω]
    """
    for d in drivers:
        v_ol = top(d.v_ol)
        i_far = 0
        for link, vo, rp in far:
            i_far = i_far + _clip0(vo - v_ol) / (rp + link.r_on)
        yield _over_budget(v_max - v_ol, d.i_ol - i_far, 0.0), d, None
    for link, vo, rp_o in far:
        for d in segs[link.other].lines[signal].drivers:
            if d.tap.dev.is_bridge:
                continue
            v_ol = top(d.v_ol)
            yield (_over_budget(v_max - v_ol, d.i_ol - _clip0(vo - v_ol) / rp_o,
                                link.r_on), d, link)


def _rp_min_coupled(seg_in: SegmentInputs, signal: str, seg_ins: list[SegmentInputs],
                    links: list[_Link]) -> tuple[float, _Driver | None, str]:
    """Rp(min) of a segment joined to others through pass transistors (see
    :func:`coupled_sinks`), the weakest sink and its label."""
    far = [(link, float(seg_ins[link.other].vdd[1]),
            seg_ins[link.other].r_eff(signal) * (1 - seg_ins[link.other].tol))
           for link in links if link.kind == "mosfet"]
    best, who, label = 1e-3, None, ""
    for r, d, link in coupled_sinks(float(seg_in.vdd[1]), seg_in.lines[signal].drivers, far,
                                    seg_ins, signal, lambda x: float(x[1])):
        r = float(r)
        if r > best:
            best, who = r, d
            label = d.tap.label if link is None else f"{d.tap.label} via {link.dev.ref}"
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


@dataclass
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


def worst_index(margins: np.ndarray) -> int:
    """Index of the smallest margin, NaN counted as the worst. [1]"""
    m = np.where(np.isnan(margins), -np.inf, margins)
    return int(np.argmin(m))


def counted_clock(lim: OpenDrainLimits, clock: float, t_low, t_high):
    """SCL low and high times as the controller counts them: its own where its part
    states them, else the specification's tLOW:tHIGH proportion of the clock's period
    (never below the specification's minima). [s]"""
    if t_low is None or t_high is None:
        share = (1.0 / clock) / (lim.t_low + lim.t_high)
        t_low = t_low if t_low is not None else max(lim.t_low, lim.t_low * share)
        t_high = t_high if t_high is not None else max(lim.t_high, lim.t_high * share)
    return t_low, t_high


def worst_per_row(margins: np.ndarray) -> tuple[list[float], list[int]]:
    """Per row of a ``(rows, corners)`` array of margins: the smallest (NaN counted as
    the worst) and its corner. [1]"""
    idx = np.argmin(np.where(np.isnan(margins), -np.inf, margins), axis=1)
    return margins[np.arange(margins.shape[0]), idx].tolist(), idx.tolist()


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


def supply_margin(lo, hi, s_min, s_max):
    """A rail's ends against a part's supply range: the margin of the end nearer its
    limit, and whether that is the low end (floats or arrays). [1]"""
    m_lo, m_hi = min_margin(lo, s_min), max_margin(hi, s_max)
    low_side = m_lo < m_hi
    return np.where(low_side, m_lo, m_hi), low_side
