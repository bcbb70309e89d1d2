"""Pass 1 of the open-drain engine: what each line of each segment is made of.

For every segment and each line (SDA, SCL) :func:`collect` gathers the pins on it (with
their parts' limits, or the specification's when a part states none), the bus
capacitance (pins, traces, cables, extra), the leakage, the pull-ups the parts carry and
the window Rp(min)..Rp(max); it picks the pull-up (``pullup = "auto"``) or takes the
design's, and joins segments linked by pass transistors.  The rules it applies are
those of :mod:`.rules`, which the array checks of :mod:`.batch` apply too.
"""

from __future__ import annotations

import math
import os
import warnings
from dataclasses import field

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import DesignError, ValidityWarning
from pinlib.core.protocols import OPEN_DRAIN_PROTOCOLS
from pinlib.core.quantity import format_si
from pinlib.core.valueclass import value_class
from pinlib.engines.limits import OpenDrainLimits, limits_for
from pinlib.engines.opendrain.rules import (
    SIGNALS,
    _Link,
    auto_margins,
    coupled_sinks,
    links,
    part_is_mosfet,
    pin_rules,
    rp_fast_of,
    rp_leak_of,
    rp_max_of,
    rp_min_of,
    window_open,
)
from pinlib.library.schema import Pin
from pinlib.library.values import Sourced
from pinlib.model.design import Bus, Design, Device, Section, Segment
from pinlib.physics import lines as line_models
from pinlib.physics import pullup as pu


def _f(x, unit):
    return format_si(x, unit)


# ============================================================================ inputs


@value_class
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
        """Where the pin's ``field_name`` comes from (:func:`value_source`), the field
        named as the part file writes it: a bridging part's under its side
        (``sides.b.pins.sda.v_il``)."""
        side = self.dev.part_side
        where = f"sides.{side}.pins" if side else "pins"
        return value_source(self.dev, f"{where}.{self.pin_name}.{field_name}",
                            getattr(self.pin, field_name))


def value_source(dev: Device, path: str, value) -> str:
    """Where a part's value comes from, for a check's ``source``: the placed part and the
    field, then the part and file that set the value (the class it extends, when
    inherited) with that value's basis and source (:meth:`Sourced.provenance_text`):
    ``'eeprom-i2c pins.sda.v_il from i2c-peripheral (i2c-peripheral.toml), generic: ...'``,
    ``'mcu-3v3 pins.scl.i_ol (mcu-3v3.toml), datasheet: rev B'``.  A value without a
    recorded origin is taken as the placed part's own."""
    where = f"{dev.part_id} {path}"
    if isinstance(value, Sourced) and value.origin:
        if value.origin != dev.part_id:
            return f"{where} from {value.provenance_text()}"
        if value.origin_file:  # the placed part's own file: named once, by its file
            where += f" ({os.path.basename(value.origin_file)})"
        bits = ": ".join(b for b in (value.basis, value.source) if b)
        return f"{where}, {bits}" if bits else where
    bits = [b for b in (getattr(value, "basis", None), getattr(value, "source", None)) if b]
    if not bits:
        prov = dev.part.provenance
        bits = [b for b in (prov.basis, prov.source) if b]
    return f"{where} ({': '.join(bits)})" if bits else where


def supply_source(dev: Device, sup, low: bool) -> str:
    """The ``source`` of a device's ``supply-range`` check, one text for every engine
    (open-drain and push-pull buses alike): the end of its part's supply range ``sup``
    the rail is nearer to, ``supply.min`` where ``low`` else ``supply.max`` (a bridging
    part's side ``sides.a.supply.min``), and where that value comes from
    (:func:`value_source`): ``'mcu-3v3 supply.max (mcu-3v3.toml), generic: ...'``."""
    where = "supply" if sup is dev.part.supply else f"sides.{dev.part_side}.supply"
    return (value_source(dev, f"{where}.min", sup.min) if low
            else value_source(dev, f"{where}.max", sup.max))


@value_class
class _Driver:
    """A pin that pulls a line low, with its guaranteed low level per corner."""

    tap: _Tap
    v_ol: np.ndarray        # guaranteed low level at i_ol, per corner [V]
    i_ol: float             # [A]
    r_sink: np.ndarray      # the sink's effective resistance v_ol / i_ol, per corner [Ω]
    r_series: float         # [Ω]
    source_i: str
    offset: float | None = None   # static low-offset level of a repeater side [V]
    #: the values taken (the part's, else the specification's): their basis decides
    #: whether a limit resting on them is soft (model.result.soft_limit)
    v_ol_value: Sourced | None = None
    i_ol_value: Sourced | None = None
    #: the low level at ``i_ol`` at the low end of the device's own rail, per corner (the
    #: same as ``v_ol`` for a device on the pull-up rail): the sink's smallest resistance,
    #: which draws the most current (sink-current) and sets Rp(min) (UM10204 eq. 2) [V]
    v_ol_low: np.ndarray | None = None

    @property
    def r_sink_low(self):
        """The sink's smallest effective resistance ``v_ol_low / i_ol``, per corner. [Ω]"""
        return self.v_ol_low / self.i_ol


@value_class
class _Receiver:
    """A pin that reads a line, with its input thresholds per corner."""

    tap: _Tap
    v_il: np.ndarray        # per corner [V]
    v_ih: np.ndarray        # per corner [V]
    source: str
    #: the thresholds taken (the part's, else the specification's), as the driver's
    v_il_value: Sourced | None = None
    v_ih_value: Sourced | None = None


@value_class
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
        The pull-up window (UM10204 eq. 2 and eq. 1, or the SMBus rise factor). [Ω]
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
    #: Rp(min) from this segment's own drivers alone (before the current across pass
    #: transistors), its weakest sink and label; set where the segment is coupled. [Ω]
    own: tuple | None = None
    #: The largest effective pull-up the leakage allows at the high level (with its
    #: noise margin), :func:`.rules.rp_leak_of`; ``inf`` for none.  The ``auto`` choice
    #: keeps below it; it is not part of the window (Rp(max) is eq. 1's). [Ω]
    rp_leak: float = math.inf
    #: The smallest effective pull-up whose rise meets the mode's tr minimum,
    #: :func:`.rules.rp_fast_of`; 0 for none.  It steers ``auto`` as ``rp_leak`` does. [Ω]
    rp_fast: float = 0.0
    #: Cb with every tolerance at its low end (the pins as stated, their maxima): the
    #: fastest rise's, :data:`cb` being every contribution at its maximum. [F]
    cb_low: float = math.nan
    #: The largest Rp(min) of the drivers whose sink point is firm (a datasheet's, the
    #: specification's), the driver and its label (``(0.0, None, "")`` for none): where
    #: the pull-up is below it, the window fails against it even where Rp(min) rests on
    #: a soft sink (a class's typical one) and only warns. [Ω]
    rp_min_firm: tuple = (0.0, None, "")


def firm_sink(d: _Driver) -> bool:
    """Whether a driver's sink point (its ``v_ol`` and ``i_ol`` taken) is firm: neither
    is a class's typical value or an estimate (:attr:`Sourced.soft`). [1]"""
    return not any(x is not None and x.soft for x in (d.v_ol_value, d.i_ol_value))


def _firmest(bounds) -> tuple:
    """``(r, driver, label)`` of the largest Rp(min) ``r`` among ``bounds`` (the same
    triples) whose driver's sink is firm; ``(0.0, None, "")`` for none (a bound every
    pull-up meets, even one of a milliohm). [Ω]"""
    best = (0.0, None, "")
    for r, d, label in bounds:
        if firm_sink(d) and float(r) > best[0]:
            best = (float(r), d, label)
    return best


@value_class
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
    #: Segments joined through pass transistors that have no window of their own.
    blocked_by: list[str] = field(default_factory=list)

    def r_eff(self, signal: str) -> float:
        """Every pull-up on the line in parallel, nominal. [Ω]"""
        return float(pu.parallel(self.pullup, self.lines[signal].r_parts))


def _default(seg_in: SegmentInputs, text: str, where: str) -> None:
    seg_in.defaults.setdefault(text, [])
    if where not in seg_in.defaults[text]:
        seg_in.defaults[text].append(where)


def _rail_ends(tap: _Tap, v: np.ndarray, tol: float) -> np.ndarray:
    """The rails a pin's values are taken at: the two ends of the device's own rail,
    or the pull-up rail's corners ``v``. [V]"""
    if not tap.own:
        return np.asarray(v, dtype=float)
    return np.array([tap.vdd * (1 - tol), tap.vdd * (1 + tol)])


def _corner_values(value: Sourced, tap: _Tap, v: np.ndarray, tol: float, worst: str,
                   follow_bus: bool = False):
    """A part value at each rail corner: following the pull-up rail, or the worst end of
    the device's own rail (``worst`` = ``"min"`` or ``"max"``); ``follow_bus`` takes it
    at the pull-up rail even for a device on its own rail. [unit]"""
    if not tap.own or follow_bus:
        return np.broadcast_to(np.asarray(value.at(v), dtype=float), v.shape).astype(float)
    vals = np.asarray(value.at(_rail_ends(tap, v, tol)), dtype=float)
    return np.full(v.shape, float(vals.min() if worst == "min" else vals.max()))


def _is_mosfet(dev: Device) -> bool:
    return part_is_mosfet(dev.part)


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
                               f"{_f(c, 'F/m')}, Z0 {_f(float(model.z0), 'Ω')}; "
                               f"{line_models.method_label(g.kind, g.method)})")
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
                 c_traces: float) -> tuple[dict, float]:
    """The contributions to Cb, each at its maximum: pins, traces, cables, extra; and Cb
    with each tolerance at its low end (the pins as stated). [F]"""
    seg = seg_in.segment
    c_pins = c_low = 0.0
    for t in taps:
        if t.pin.c_in is None:
            c = lim.c_pin
            _default(seg_in, f"no c_in stated: taken at the specification's "
                             f"{_f(lim.c_pin, 'F')} maximum ({lim.source_pin})", f"{t.label} {up}")
        else:
            c = float(t.pin.c_in.value)
        tol = t.dev.capacitance_tolerance or 0.0
        c_pins += c * (1.0 + tol)
        c_low += c * (1.0 + tol) * low_end(tol)  # as the batch works it
    board_tol = 1.0 + seg.capacitance_tolerance
    c_cables = sum(float(c.part.line.capacitance.value) * c.length for c in seg.cables) * (
        1.0 + seg.length_tolerance) * board_tol
    c_extra = seg.extra_capacitance * board_tol
    # the same contributions with each tolerance at its low end (pins, board, lengths)
    board_low = low_end(seg.capacitance_tolerance)
    c_low += ((c_traces + c_cables) * low_end(seg.length_tolerance) + c_extra) * board_low
    return {"pins": c_pins, "traces": c_traces, "cables": c_cables, "extra": c_extra}, c_low


def low_end(tol: float) -> float:
    """The factor from a value at the top of its tolerance ``tol`` to its bottom. [1]"""
    return (1.0 - tol) / (1.0 + tol)


def _leakage(taps: list[_Tap], seg_in: SegmentInputs, lim: OpenDrainLimits, up: str) -> float:
    """Sum of the pins' leakage; a receiver that states none at the specification's. [A]"""
    leak = 0.0
    for t in taps:
        value = pin_rules(t.pin, t.dev.part, lim)[2]
        if value is not None:
            leak += value
        if t.pin.leakage is None and value is not None:
            _default(seg_in, f"no leakage stated: taken at the specification's "
                             f"{_f(lim.leakage, 'A')} ({lim.source_pin})", f"{t.label} {up}")
    return leak


def _refuse_below_ground(v_ol: np.ndarray, value: Sourced, tap: _Tap, v: np.ndarray,
                         vtol: float) -> None:
    """A low level written relative to the supply (``VDD - 2.9 V``) that resolves below
    ground at this bus's rail is a physical impossibility: refused, naming the pin's
    value for the dispatcher to locate in its part file."""
    worst = float(np.min(v_ol))
    if worst >= 0.0:
        return
    ends = _rail_ends(tap, v, vtol)
    vals = np.asarray(value.at(ends), dtype=float)
    # where the value was taken: the lowest rail corner, or the own rail's lowest level
    at = float(ends[int(np.argmin(vals))])
    err = DesignError(M.LEVEL_BELOW_GROUND, field="v_ol", value=value.text,
                      expected=M.LEVEL_BELOW_GROUND_EXPECTED.format(
                          level=format_si(worst, "V"), vdd=format_si(at, "V")))
    err.pin_of = (tap.dev.ref, tap.pin_name, tap.vdd)
    raise err


def _drivers(taps: list[_Tap], seg_in: SegmentInputs, lim: OpenDrainLimits,
             up: str) -> list[_Driver]:
    """The open-drain outputs on the line, their sink points at each rail corner."""
    v, vtol = seg_in.vdd, seg_in.vtol
    drivers: list[_Driver] = []
    for t in taps:
        if not pin_rules(t.pin, t.dev.part, lim)[0]:
            continue
        d_vol, d_iol, rule = lim.default_sink(t.vdd, vtol)
        vol_s = t.pin.v_ol if t.pin.v_ol is not None else d_vol
        iol_s = t.pin.i_ol if t.pin.i_ol is not None else d_iol
        if t.pin.v_ol is None or t.pin.i_ol is None:
            _default(seg_in, f"no sink point (v_ol, i_ol) stated: taken at the specification's "
                             f"{rule} ({lim.source_sink})", f"{t.label} {up}")
        # the low level at the end of its own rail that hurts each check: the highest
        # for the bus's low level and the fall, the lowest for the current it draws and
        # Rp(min)
        v_ol = _corner_values(vol_s, t, v, vtol, "max")
        v_ol_low = _corner_values(vol_s, t, v, vtol, "min")
        _refuse_below_ground(v_ol_low, vol_s, t, v, vtol)
        i_ol = float(iol_s.value)
        if lim.protocol == "i2c" and t.pin.v_ol is not None and t.pin.i_ol is not None:
            _below_spec_sink(seg_in, t, i_ol, d_vol, d_iol, rule, lim, up)
        src = t.source("i_ol") if t.pin.i_ol is not None else lim.source_sink
        offset = None
        if _offset_side(t.dev) == t.dev.side and t.dev.side is not None:
            side = t.dev.part.sides[t.dev.side]
            if side.low_offset is not None:
                offset = float(np.max(_corner_values(side.low_offset, t, v, vtol, "max")))
        drivers.append(_Driver(t, v_ol, i_ol, v_ol / i_ol, t.dev.series_resistor or 0.0, src,
                               offset, vol_s, iol_s, v_ol_low))
    return drivers


def _below_spec_sink(seg_in: SegmentInputs, t: _Tap, i_ol: float, d_vol: Sourced,
                     d_iol: Sourced, rule: str, lim: OpenDrainLimits, up: str) -> None:
    """A note where a pin's stated sink guarantees less current at the specification's VOL
    than UM10204 rev. 6 table 9 asks of every device of the mode (not on SMBus, whose
    low-power devices of table 3 sink only 350 µA; not where the table gives the mode no
    point for the rail, :meth:`OpenDrainLimits.states_sink`).  The pin's point is taken
    as the engine takes it: a resistance v_ol/i_ol up to its rating, the current held at
    i_ol beyond it.  The pin's VOL and the specification's are taken at the same rail,
    each end of the pin's own (VOL2 and a relative v_ol follow it), and the note gives
    the end of least current.  The pull-up window already follows the pin's own rating:
    the note says that the part is off the specification."""
    rails = _rail_ends(t, seg_in.vdd, seg_in.vtol)
    spec_vol = np.broadcast_to(np.asarray(d_vol.at(rails), dtype=float), rails.shape)
    part_vol = np.broadcast_to(np.asarray(t.pin.v_ol.at(rails), dtype=float), rails.shape)
    guaranteed = i_ol * np.minimum(1.0, spec_vol / np.maximum(part_vol, 1e-30))
    # only the rail ends the table gives the mode a point at (Standard-mode has none at
    # 2 V and below: a rail across 2 V is held to VOL1 at its top end alone)
    given = np.array([lim.states_sink(float(x)) for x in rails.ravel()]).reshape(rails.shape)
    if not given.any():
        return
    guaranteed = np.where(given, guaranteed, np.inf)
    at = int(np.argmin(guaranteed))
    least = float(guaranteed.flat[at])
    if not least < float(d_iol.value) * (1.0 - 1e-9):
        return
    _default(seg_in, M.SINK_BELOW_SPEC.format(rule=rule, source=lim.source_sink),
             f"{t.label} {up} ({format_si(least, 'A')} at "
             f"{format_si(float(spec_vol.flat[at]), 'V')})")


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
            # relative levels of a device on its own rail: those of the pull-up rail
            rail = (", those of the pull-up rail for a device on its own (UM10204 rev. 6, "
                    "table 11, note [1])" if t.own and getattr(d_il.value, "scale", 0.0)
                    else "")
            _default(seg_in, f"no input thresholds stated: taken at the specification's "
                             f"levels ({lim.source_levels}){rail}", f"{t.label} {up}")
        il = t.pin.v_il if t.pin.v_il is not None else d_il
        ih = t.pin.v_ih if t.pin.v_ih is not None else d_ih
        src = t.source("v_il") if t.pin.v_il is not None else lim.source_levels
        # the specification's levels of a device on its own rail are those of the rail
        # its pull-ups pull to (UM10204 rev. 6, table 11, note [1]); a part's own levels
        # follow its own rail
        receivers.append(_Receiver(t, _corner_values(il, t, v, vtol, "min",
                                                     t.pin.v_il is None),
                                   _corner_values(ih, t, v, vtol, "max",
                                                  t.pin.v_ih is None), src, il, ih))
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


def _weakest_sink(drivers: list[_Driver], v_max: float) -> tuple[float, _Driver | None]:
    """Rp(min) of a line: the largest of its drivers' and whose it is (1 mΩ and None when
    no driver bounds Rp from below); all drivers in one array. [Ω]"""
    if not drivers:
        return 1e-3, None
    r = rp_min_of(v_max, np.array([float(d.v_ol_low[1]) for d in drivers]),
                  np.array([d.i_ol for d in drivers]))
    k = int(np.argmax(r))
    return (float(r[k]), drivers[k]) if r[k] > 0 else (1e-3, None)


def _line_inputs(signal: str, seg_in: SegmentInputs, lim: OpenDrainLimits,
                 c_traces: float) -> LineInputs:
    v = seg_in.vdd
    taps = _taps(seg_in.segment, SIGNALS[signal])
    up = signal.upper()
    cb_parts, cb_low = _capacitance(taps, seg_in, lim, up, c_traces)
    cb = cb_parts["pins"] + cb_parts["traces"] + cb_parts["cables"] + cb_parts["extra"]
    leak = _leakage(taps, seg_in, lim, up)
    drivers = _drivers(taps, seg_in, lim, up)
    receivers = _receivers(taps, seg_in, lim, up)
    part_pullups = _part_pullups(taps, seg_in, up)
    r_parts = float(pu.parallel(*[p["value"] for p in part_pullups])) if part_pullups else math.inf
    rp_min, weakest = _weakest_sink(drivers, float(v[1]))
    firm = _firmest((rp_min_of(float(v[1]), float(d.v_ol_low[1]), d.i_ol), d, d.tap.label)
                    for d in drivers)
    rise_factor = float(lim.rise_factor(float(v[0])))
    rp_max = rp_max_of(lim, rise_factor, cb)
    rp_leak = rp_leak_of(v, lim.v_nh_rel or 0.0, leak, [r.v_ih for r in receivers])
    return LineInputs(signal, taps, cb, cb_parts, leak, drivers, receivers, part_pullups,
                      r_parts, rp_min, weakest, rp_max, rise_factor,
                      weakest.tap.label if weakest else "", rp_leak=rp_leak,
                      rp_fast=rp_fast_of(lim, v, rise_factor, cb_low), cb_low=cb_low,
                      rp_min_firm=firm)


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
    if bus.protocol not in OPEN_DRAIN_PROTOCOLS:
        raise DesignError(M.NOT_OPEN_DRAIN_BUS, field="protocol", value=bus.protocol,
                          expected="i2c or smbus")
    lim = limits_for(bus.protocol, bus.mode)
    out = []
    for i, seg in enumerate(bus.segments):
        v = np.array([seg.supply * (1 - seg.supply_tolerance),
                      seg.supply * (1 + seg.supply_tolerance)])
        seg_in = SegmentInputs(seg, i, v, seg.pullup_tolerance, seg.supply_tolerance, {},
                               math.nan, False)
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


def _rp_min_coupled(seg_in: SegmentInputs, signal: str, seg_ins: list[SegmentInputs],
                    links: list[_Link]) -> tuple[float, _Driver | None, str, tuple]:
    """Rp(min) of a segment joined to others through pass transistors (see
    :func:`coupled_sinks`), the weakest sink and its label, and the firm sinks' largest
    (:attr:`LineInputs.rp_min_firm`)."""
    far = [(link, float(seg_ins[link.other].vdd[1]),
            seg_ins[link.other].r_eff(signal) * (1 - seg_ins[link.other].tol))
           for link in links if link.kind == "mosfet"]
    best, who, label = 1e-3, None, ""
    bounds = []
    for r, d, link in coupled_sinks(float(seg_in.vdd[1]), seg_in.lines[signal].drivers, far,
                                    seg_ins, signal, lambda x: float(x[1])):
        r = float(r)
        name = d.tap.label if link is None else f"{d.tap.label} via {link.dev.ref}"
        bounds.append((r, d, name))
        if r > best:
            best, who, label = r, d, name
    return best, who, label, _firmest(bounds)


def _own_window(s: SegmentInputs) -> bool:
    """Every line of a segment has a window a value of its tolerance fits (with the
    Rp(min) the lines carry now)."""
    return all(bool(window_open(ln.rp_min, ln.rp_max, s.tol)) for ln in s.lines.values())


def _couple(seg_ins: list[SegmentInputs], links: dict[int, list[_Link]]) -> None:
    """Choose the pull-ups of segments joined by pass transistors together.

    Each segment's Rp(min) depends on the pull-ups of the segments it is joined to (see
    :func:`_rp_min_coupled`); starting from the independent choice, each segment is
    re-chosen in turn against the others' present values until nothing changes (a few
    rounds; at most 8).  A segment whose own window is empty (its own sinks cannot meet
    its Rp(max), the translator aside) keeps its independent compromise; a segment whose
    sinks the pull-ups across the translator already fill (Rp(min) infinite: every value
    scores alike) keeps the value it has: neither is pushed to the end of the series.
    """
    coupled = [s for s in seg_ins if any(ln.kind == "mosfet" for ln in links[s.index])]
    held: set[int] = set()
    for s in coupled:
        for ln in s.lines.values():
            ln.own = (ln.rp_min, ln.rp_min_driver, ln.rp_min_label)
        if not _own_window(s):
            held.add(s.index)
            if s.auto:
                s.notes.append(f"no value fits this segment's own window ({_windows(s)}, "
                               "its own sinks alone): its pull-up is the compromise "
                               f"{_f(s.pullup, 'Ω')}, and the segments across the translator "
                               "are chosen against it; see pullup-window for what to change")
    for s in coupled:
        s.blocked_by = [seg_ins[ln.other].segment.id for ln in links[s.index]
                        if ln.kind == "mosfet" and ln.other in held]
    for _ in range(8):
        changed = False
        for s in coupled:
            _set_coupled(s, seg_ins, links)
            if s.index in held or _sinks_full(s):
                continue
            before = s.pullup
            _choose(s)
            changed |= s.pullup != before
        if not changed:
            break
    for s in coupled:  # Rp(min) against the values finally chosen
        _set_coupled(s, seg_ins, links)
        if s.index not in held and s.auto and _sinks_full(s):
            s.notes.append(f"with the current across the translator no value fits "
                           f"({_windows(s)}): the pull-up stays at {_f(s.pullup, 'Ω')}, the "
                           "last value its window allowed")


def _sinks_full(s: SegmentInputs) -> bool:
    """A line whose sinks the pull-ups across the translator already fill (Rp(min)
    infinite): no value is better than another, so the segment is not re-chosen."""
    return any(not math.isfinite(ln.rp_min) for ln in s.lines.values())


def _set_coupled(s: SegmentInputs, seg_ins: list[SegmentInputs], links) -> None:
    for sig, ln in s.lines.items():
        ln.rp_min, ln.rp_min_driver, ln.rp_min_label, ln.rp_min_firm = _rp_min_coupled(
            s, sig, seg_ins, links[s.index])
        ln.coupled = True


def _windows(s: SegmentInputs) -> str:
    def lo(ln):
        if ln.rp_min_driver is None:
            return "— (no driver)"
        return _f(ln.rp_min, "Ω") if math.isfinite(ln.rp_min) else "none (its sinks are full)"

    return "; ".join(f"{sig.upper()} Rp(min) {lo(ln)}, Rp(max) "
                     f"{_f(ln.rp_max, 'Ω') if math.isfinite(ln.rp_max) else 'no limit'}"
                     for sig, ln in s.lines.items())
