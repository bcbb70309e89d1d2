"""One push-pull or open-drain line: its sections, driver, loads, waveforms and checks.

:func:`analyse_line` is the line engine of :mod:`pinlib.engines.pushpull` (GPIO) and
:mod:`pinlib.engines.spi` (SPI).  It returns a :class:`LineAnalysis` holding the
waveforms of every driver on the line and a :class:`~pinlib.model.result.LineResult` with
the figures ``load_capacitance``, ``trace_delay``, ``z0``, ``edge_rise_time``,
``edge_fall_time``, ``series_resistor``, ``overshoot``, ``undershoot``,
``transmission_line``, ``model`` and ``delay_to_edge_ratio``.

How a line is built
-------------------
* **Driver and load.**  The controller drives SCLK, COPI and CS; every peripheral
  drives CIPO in turn, the other peripherals' CIPO pins loading it (their output
  capacitance, high-impedance while deselected).  A driver's own pin capacitance is
  inside its datasheet edges (they were measured with it), so its load is the trace,
  the line's ``extra_capacitance`` and the ``c_in`` of every other pin on the net.
  Every pin is placed at the far end of the line: the farthest receiver sees the
  whole line (the conservative place for delay and for reflections).
* **Sections.**  A named geometry goes through :mod:`pinlib.physics.lines` (microstrip
  or stripline, the geometry's ``method`` or the default); per-length values give
  ``Z0 = delay / capacitance``; a cable class gives its capacitance, delay and
  impedance.  A section with a capacitance but no delay counts as a lumped
  capacitance at the far end.
* **Model.**  A line is electrically long (``transmission_line``) when its one-way
  delay exceeds one sixth of the 10–90 % edge the driver makes into the pins alone
  (:data:`LONG_LINE_RULE`); the ratio is reported so that users can apply another
  rule.  A long line is solved as a chain of lossless lines
  (:func:`pinlib.physics.waveform.distributed_response`).  A short one is solved as
  one lumped capacitance (:func:`~pinlib.physics.waveform.lumped_response`) only
  when the line's inductance is also negligible against the RC
  (:data:`LUMPED_RULE`): a driver much stronger than the line impedance rings even on
  a short trace, and there the chain is solved too.
* **Driver model.**  :func:`pinlib.physics.driver.driver_from_pin`: a ramp behind
  ``r_out`` for each edge.  An open-drain GPIO driver sinks through ``v_ol / i_ol``
  against the pull-ups on the net, and the line rises through them.
* **Series termination.**  ``series_resistor = "auto"``: none when the line is
  electrically short and passes the overshoot, undershoot and ringing checks without
  one (what a series resistor cures; the choice so does not depend on the clock);
  otherwise ``Rs = Z0 - r_out`` (Z0 of the first section, ``r_out`` the mean of the driver's
  rise and fall resistance; on CIPO the strongest driver's) rounded to the nearest
  E24 value (by ratio), and the line evaluated again.  The check
  ``series-termination`` holds the edge, overshoot and undershoot with and without it.

Checks on each line: ``overshoot`` and ``undershoot`` against each pin's ``abs_max``
(at that pin's own supply), ``ringing`` (re-crossings of VIH/VIL after the first
crossing: a failure on SCLK, where it clocks twice, a warning on data lines),
``edge-time`` (the 10–90 % edge under :data:`EDGE_FRACTION` of the clock period: a rule
of thumb, so it warns and never fails), ``line-delay`` (the one-way delay within one clock
period, a rule of thumb that flags a design outside a board-level bus), and ``level-high`` /
``level-low`` (the driver's VOH/VOL against each receiver's VIH/VIL at its own supply).

Assumptions and limits: supplies are nominal (the bus's, or a device's own); every
pin sits at the far end (a receiver part way along is not placed there); the design
format gives one route per signal, so a bridging part on the bus is modelled as a load
on the controller's side of it.
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np

from pinlib.core import eseries
from pinlib.core import messages as M
from pinlib.core.errors import DesignError, InputError, PinlibError
from pinlib.core.protocols import protocol
from pinlib.core.quantity import format_si
from pinlib.engines import memo
from pinlib.library.schema import Pin
from pinlib.model.design import Bus, Device, Line, Section
from pinlib.model.result import Check, LineResult, check_max, check_min, rule_of_thumb
from pinlib.physics import driver as drv
from pinlib.physics import lines as tl
from pinlib.physics import rc
from pinlib.physics import waveform as wf

__all__ = [
    "LONG_LINE_FRACTION",
    "LONG_LINE_RULE",
    "LUMPED_INDUCTANCE_LIMIT",
    "LUMPED_RULE",
    "EDGE_FRACTION",
    "EDGE_RULE",
    "UNDERSHOOT_DEFAULT",
    "UNDERSHOOT_RULE",
    "TERMINATION_RULE",
    "SIGNAL_FUNCTION",
    "MAX_TIME_STEPS",
    "Endpoint",
    "Flight",
    "Stretch",
    "EdgeWave",
    "DriveCase",
    "LineAnalysis",
    "stretches_of",
    "line_model",
    "needs_distributed",
    "simulate_edge",
    "drive_case",
    "auto_series_resistor",
    "analyse_line",
    "endpoint",
    "device_supply",
    "is_bridge",
]

#: A line is electrically long when its one-way delay exceeds this fraction of the
#: driver's 10-90 % edge.
LONG_LINE_FRACTION = 1.0 / 6.0
LONG_LINE_RULE = (
    "electrically long when the one-way delay exceeds 1/6 of the 10-90 % edge "
    "(Johnson & Graham, High-Speed Digital Design, 1993; common practice)")

#: A short line is lumped only when ``L / (R^2 C)`` is at most this (see LUMPED_RULE).
LUMPED_INDUCTANCE_LIMIT = 0.01
LUMPED_RULE = (
    "one lumped capacitance only when the line is short and its inductance is negligible: "
    "L / (R^2 C) <= 0.01, L = sum(Z0 td), R the source resistance, C the whole load "
    "(derived from the dominant pole of a series RLC, s = -(1 + L/(R^2 C) + ...)/(RC): "
    "the RC edge is then within about 1 %)")

#: The 10-90 % edge at the far end must stay under this fraction of the clock period.
EDGE_FRACTION = 0.10
EDGE_RULE = ("10-90 % edge within 10 % of the clock period (rule of thumb, common "
             "practice; e.g. Morrison, Digital Circuit Boards: Mach 1 GHz, Wiley 2012, "
             "§1.14)")

LINE_DELAY_RULE = (
    "one-way line delay within one clock period: beyond it the line holds more than one "
    "bit in flight, and a board-level bus model (lossless lines, lines of one bus matched "
    "in delay) no longer describes it (common practice, no source)")

#: Largest undershoot below ground allowed when a pin's abs_max leaves more room. [V]
UNDERSHOOT_DEFAULT = 0.5
UNDERSHOOT_RULE = (
    "input low limit GND - min(abs_max - VDD, 0.5 V): the part format records the high "
    "limit only, and CMOS inputs are commonly rated to -0.5 V (common practice, no source)")

TERMINATION_RULE = ("series source termination Rs = Z0 - r_out, nearest E24 value by ratio "
                    "(common practice; IEC 60063 E24)")

_RINGING_SOURCE = ("an input that re-crosses its threshold after the first crossing may "
                   "switch twice (common practice, no source)")

#: Pin function of each SPI signal.
SIGNAL_FUNCTION = dict(protocol("spi").signals)

# Time grid of the waveform solvers.
_STEPS_PER_DELAY = 50      # steps per shortest section delay (distributed model)
_STEPS_PER_RAMP = 50       # steps per source ramp
_STEPS_PER_TAU = 50        # steps per driver time constant
_MIN_STEPS = 4000          # steps over the whole record, at least
_MAX_STEPS = 400_000       # and at most, where the shortest section delay allows it
#: Hard limit on the steps of one waveform record.  The step must divide the shortest
#: section delay, so a line whose shortest delay is tiny against the record (a long cable
#: beside a stub of a trace) would need more than ``_MAX_STEPS``; past this many the
#: engine refuses the line (an InputError naming it) rather than allocate the grid.
MAX_TIME_STEPS = 1_000_000
_SETTLE_TAUS = 12.0        # record length: ramp + this many RC time constants ...
_SETTLE_DELAYS = 60.0      # ... + this many one-way delays of the whole chain
_SETTLED = 0.01            # the record must end within this fraction of the swing
_MAX_EXTENSIONS = 4        # times the record is lengthened to settle
_REF_LEVEL = 0.5           # datasheet timing reference level, fraction of the swing
# Figures of every line, in their order in the result.
_FIGURE_UNITS = (("load_capacitance", "F"), ("trace_delay", "s"), ("z0", "Ω"),
                 ("edge_rise_time", "s"), ("edge_fall_time", "s"), ("series_resistor", "Ω"),
                 ("overshoot", "V"), ("undershoot", "V"), ("transmission_line", ""),
                 ("model", ""), ("delay_to_edge_ratio", ""))
# The checks whose failure makes "auto" fit a series resistor.
_TERMINATION_CURES = ("overshoot", "undershoot", "ringing")


# --------------------------------------------------------------------------- pins


@dataclass(frozen=True)
class Endpoint:
    """One pin of one device on a line, at that device's supply.

    Attributes
    ----------
    device : Device
        The device on the bus. [1]
    pin_name : str
        Name of the pin in its part class. [1]
    pin : Pin
        The pin's data. [1]
    vdd : float
        The device's supply (its own rail, else the bus supply). [V]
    """

    device: Device
    pin_name: str
    pin: Pin
    vdd: float

    @property
    def ref(self) -> str:
        return self.device.ref

    @property
    def label(self) -> str:
        return f"{self.device.ref}.{self.pin_name}"

    @property
    def c_in(self) -> float:
        """The pin's capacitance (times the device's drawn factor on a varied board). [F]"""
        if self.pin.c_in is None:
            return 0.0
        return float(self.pin.c_in.at()) * self.device.capacitance_factor

    @property
    def drives(self) -> bool:
        return self.pin.drive in ("push-pull", "open-drain")

    def level(self, name: str) -> float | None:
        """A level of the pin (``v_il``, ``v_ih``, ``abs_max``...) at its supply. [V]"""
        got = getattr(self.pin, name)
        return None if got is None else float(got.at(self.vdd))

    def source(self, name: str) -> str:
        """Where the pin's value ``name`` comes from, for a check's ``source``."""
        got = getattr(self.pin, name, None)
        part = self.device.part
        text = (got.source if got is not None and got.source else None) or \
            part.provenance.source or part.provenance.basis
        origin = got.origin if got is not None and got.origin else self.device.part_id
        return f"{origin} {name}: {text}"


@dataclass(frozen=True)
class Flight:
    """Earliest and latest flight of an edge (or a set of edges) to one input.

    Attributes
    ----------
    early, late : float
        From the driver's datasheet reference (its pin crossing 50 % of its swing into
        its ``test_load``) to the input's first / last possible switching point:
        VIL then VIH on a rise, VIH then VIL on a fall. [s]
    """

    early: float
    late: float


def _side(device: Device) -> str | None:
    if device.is_bridge:
        return device.side or "a"
    return None


def device_supply(device: Device, bus: Bus) -> float:
    """The supply a device runs from.

    Parameters
    ----------
    device : Device
        A device of the bus. [1]
    bus : Bus
        The bus. [1]

    Returns
    -------
    float
        The device's own rail when the design gives one, else the bus supply. [V]
    """
    return float(device.supply if device.supply is not None else bus.supply)


def endpoint(device: Device, function: str, bus: Bus) -> Endpoint | None:
    """The pin of a device that serves a function, at the device's supply.

    Parameters
    ----------
    device : Device
        A device of the bus. [1]
    function : str
        Pin function, e.g. ``"spi-sclk"``. [1]
    bus : Bus
        The bus (for its supply). [1]

    Returns
    -------
    Endpoint or None
        The pin (side ``a`` of a bridging part unless the device names its side), or
        None when the part has no such pin.
    """
    got = device.part.pin_for(function, _side(device))
    if got is None:
        return None
    return Endpoint(device, got[0], got[1], device_supply(device, bus))


def is_bridge(device: Device) -> bool:
    """Whether a device is a bridging part in the path of every signal.

    Parameters
    ----------
    device : Device
        A device of the bus. [1]

    Returns
    -------
    bool
        True for a part with ``[sides]`` or a ``[bridge]`` table, or a buffer,
        translator or isolator class with a ``t_pd``. [1]
    """
    p = device.part
    return bool(p.sides) or p.bridge is not None or (
        p.category in ("buffer", "translator", "isolator") and p.timing.t_pd is not None)


# --------------------------------------------------------------------------- sections


@dataclass(frozen=True)
class Stretch:
    """Electrical data of one section of a line.

    Attributes
    ----------
    length : float
        Length. [m]
    z0 : float
        Characteristic impedance; NaN when the section gives no delay. [Ω]
    td : float
        One-way delay; 0 when the section gives no delay (a lumped capacitance). [s]
    c : float
        Total capacitance of the section. [F]
    label : str
        What the section is (geometry name, cable part). [1]
    """

    length: float
    z0: float
    td: float
    c: float
    label: str


def _geometry_model(g):
    method = g.method
    if g.kind == "microstrip":
        kw = {"method": method} if method else {}
        return tl.microstrip(g.width, g.height, g.er, g.thickness, **kw)
    b = g.spacing if g.spacing is not None else 2.0 * g.height + g.thickness
    kw = {"method": method} if method else {}
    return tl.stripline(g.width, b, g.er, g.thickness, **kw)


def stretches_of(sections: Sequence[Section]) -> list[Stretch]:
    """The electrical data of each section of a line.

    Parameters
    ----------
    sections : sequence of Section
        The line's sections, from the driver to the far end. [1]

    Returns
    -------
    list of Stretch
        One per section with ``z0`` [Ω], ``td`` [s] and ``c`` [F].

    Notes
    -----
    Per-length values follow the lossless-line relations ``Z0 = tpd / C`` and
    ``td = tpd * length`` (:func:`pinlib.physics.lines.from_per_length`).  A cable class
    with an impedance but no delay takes ``tpd = Z0 * C``; one with a capacitance only
    is a lumped capacitance.  Validity warnings of the trace models propagate.
    """
    out = []
    for s in sections:
        if s.geometry is not None:
            m = _geometry_model(s.geometry)
            out.append(Stretch(s.length, float(m.z0), float(m.tpd) * s.length,
                               float(m.c) * s.length, f"geometry {s.geometry.name}"))
            continue
        label = f"cable {s.part_id}" if s.part_id else "per-length values"
        c = float(s.capacitance)
        tpd = s.delay
        if tpd is None and s.impedance is not None:
            tpd = float(s.impedance) * c
        if tpd is None:
            out.append(Stretch(s.length, math.nan, 0.0, c * s.length, label))
            continue
        m = tl.from_per_length(c, tpd)
        z0 = float(s.impedance) if (s.impedance is not None and s.delay is not None
                                    and s.part_id) else float(m.z0)
        out.append(Stretch(s.length, z0, float(tpd) * s.length, c * s.length, label))
    return out


# --------------------------------------------------------------------------- waveforms


@dataclass(frozen=True)
class EdgeWave:
    """One edge at the far end of a line.

    Attributes
    ----------
    edge : str
        ``"rise"`` or ``"fall"``. [1]
    t, v : numpy.ndarray
        Sample times from the start of the source ramp, and far-end voltage. [s], [V]
    v_from, v_to : float
        Levels before and after the edge. [V]
    t_edge : float
        10-90 % edge time at the far end. [s]
    overshoot : float
        Peak above the high level (rise) or 0 (fall). [V]
    undershoot : float
        Dip below the low level (fall) or 0 (rise). [V]
    settled : bool
        Whether the record ends within 1 % of the swing of ``v_to``. [1]
    """

    edge: str
    t: np.ndarray
    v: np.ndarray
    v_from: float
    v_to: float
    t_edge: float
    overshoot: float
    undershoot: float
    settled: bool

    def crossing(self, level: float) -> float:
        """First time the edge reaches ``level`` in its direction; NaN if never. [s]"""
        return float(wf.threshold_delay(self.t, self.v, level, edge=self.edge))


def line_model(stretches: Sequence[Stretch], edge_time: float) -> tuple[bool, float]:
    """Whether a line is electrically long, by :data:`LONG_LINE_RULE`.

    Parameters
    ----------
    stretches : sequence of Stretch
        The line's sections. [1]
    edge_time : float
        The driver's 10-90 % edge into the pins alone. [s]

    Returns
    -------
    long : bool
        ``delay > edge_time / 6``. [1]
    ratio : float
        One-way delay over edge time. [1]
    """
    td = sum(s.td for s in stretches)
    ratio = td / edge_time if edge_time > 0 else (math.inf if td > 0 else 0.0)
    return bool(ratio > LONG_LINE_FRACTION), float(ratio)


def needs_distributed(stretches: Sequence[Stretch], r_source: float, c_load: float,
                      long: bool) -> bool:
    """Whether a line must be solved as a chain of lines rather than one capacitance.

    Parameters
    ----------
    stretches : sequence of Stretch
        The line's sections. [1]
    r_source : float
        Smallest source resistance of the driver (output resistance plus series
        resistor). [Ω]
    c_load : float
        Capacitance at the far end (pins and extra capacitance). [F]
    long : bool
        Electrically long by :data:`LONG_LINE_RULE`. [1]

    Returns
    -------
    bool
        True when the line is long, or when ``L / (R^2 C) > 0.01`` with
        ``L = sum(Z0 td)`` and ``C`` the whole capacitance (:data:`LUMPED_RULE`);
        False for a line without any delay. [1]

    Notes
    -----
    A series R-L-C driven through ``R`` has, for ``L << R^2 C``, its dominant pole at
    ``s = -(1 + L/(R^2 C) + 2 (L/(R^2 C))^2 + ...)/(RC)`` (expanding the roots of
    ``LC s^2 + RC s + 1``), so an RC model is off by about ``L/(R^2 C)`` in its edge
    time; the limit 0.01 keeps that near 1 %.
    """
    ell = sum(s.z0 * s.td for s in stretches if s.td > 0.0)
    if ell <= 0.0:
        return False
    c_total = sum(s.c for s in stretches) + c_load
    if long or r_source <= 0.0 or c_total <= 0.0:
        return True
    return bool(ell / (r_source * r_source * c_total) > LUMPED_INDUCTANCE_LIMIT)


class _TooManySteps(InputError):
    """A record longer than :data:`MAX_TIME_STEPS`; :func:`analyse_line` names the line."""


def _grid(t_end: float, dt: float) -> np.ndarray:
    steps = t_end / dt
    if not steps <= MAX_TIME_STEPS:  # also NaN: checked before anything is allocated
        raise _TooManySteps(
            M.TOO_MANY_TIME_STEPS.format(steps=f"{steps:.3g}", limit=f"{MAX_TIME_STEPS:,}"),
            value=f"{format_si(t_end, 's')} in steps of {format_si(dt, 's')}",
            hint="the step divides the shortest section delay: merge a very short section "
                 "into its neighbour (or drop it), or shorten the longest section")
    n = int(math.ceil(steps))
    return np.arange(n + 1) * dt


def simulate_edge(stretches: Sequence[Stretch], r_source: float, t_ramp: float,
                  c_far: float, v_from: float, v_to: float, *, distributed: bool,
                  edge: str) -> EdgeWave:
    """One edge of a ramp source behind a resistance, at the far end of a line.

    Parameters
    ----------
    stretches : sequence of Stretch
        The line's sections. [1]
    r_source : float
        Driver resistance plus series resistor. [Ω]
    t_ramp : float
        Source ramp, 0-100 %. [s]
    c_far : float
        Capacitance at the far end: pins and extra capacitance. [F]
    v_from : float
        Level before the edge. [V]
    v_to : float
        Level after the edge. [V]
    distributed : bool
        Solve the chain of lines (True) or one lumped capacitance (False). [1]
    edge : str
        ``"rise"`` when ``v_to > v_from``, else ``"fall"``. [1]

    Returns
    -------
    EdgeWave
        The far-end waveform and its figures.

    Notes
    -----
    The circuit is linear and starts in its DC state, so the edge is
    ``v_from + (v_to - v_from) u(t)`` with ``u`` the unit response of the same circuit.
    The record runs for the ramp, 12 time constants of ``r_source`` into the whole
    capacitance and (distributed) 60 one-way delays, lengthened until it ends within
    1 % of the swing.  The step is at most 1/50 of the shortest section delay, of the
    ramp and of the time constant, and divides the shortest delay exactly.  A record
    that would need more than :data:`MAX_TIME_STEPS` steps is refused with an
    InputError.
    """
    key = ("pushline.unit_edge", tuple((s.z0, s.td, s.c) for s in stretches),
           r_source, t_ramp, c_far, bool(distributed))
    t, unit, settled = memo.remember(
        key, lambda: _unit_edge(stretches, r_source, t_ramp, c_far, distributed))
    swing = v_to - v_from
    v = v_from + swing * unit
    t_edge = float(wf.edge_time(t, v, v_to, v_initial=v_from))
    hi, lo = max(v_from, v_to), min(v_from, v_to)
    over = float(wf.overshoot(v, hi))
    under = float(wf.undershoot(v, lo))
    return EdgeWave(edge, t.copy(), v, v_from, v_to, t_edge, over, under, bool(settled))


def _unit_edge(stretches: Sequence[Stretch], r_source: float, t_ramp: float, c_far: float,
               distributed: bool) -> tuple[np.ndarray, np.ndarray, bool]:
    """The time grid, the unit response (0 -> 1) at the far end and whether it settled,
    for :func:`simulate_edge` (which the level of the edge only scales and shifts)."""
    c_line = sum(s.c for s in stretches)
    c_total = c_line + c_far
    tau = r_source * c_total
    sections = [(s.z0, s.td) for s in stretches if s.td > 0.0]
    c_lumped_far = c_far + sum(s.c for s in stretches if s.td <= 0.0)
    delays = [td for _, td in sections]
    distributed = distributed and bool(sections)
    t_end = t_ramp + _SETTLE_TAUS * tau + (_SETTLE_DELAYS * sum(delays) if distributed else 0.0)
    t_end = max(t_end, 1e-12)
    for _ in range(_MAX_EXTENSIONS + 1):
        limits = [t_end / _MIN_STEPS]
        if t_ramp > 0:
            limits.append(t_ramp / _STEPS_PER_RAMP)
        if tau > 0:
            limits.append(tau / _STEPS_PER_TAU)
        if distributed:
            limits.append(min(delays) / _STEPS_PER_DELAY)
        dt = max(min(limits), t_end / _MAX_STEPS)
        if distributed:
            d_min = min(delays)
            dt = d_min / math.ceil(d_min / dt)
        t = _grid(t_end, dt)
        if distributed:
            unit = wf.distributed_response(t, 1.0, t_ramp, r_source, sections,
                                           c_lumped_far).v
        else:
            unit = wf.lumped_response(t, 1.0, t_ramp, r_source, c_total).v
        settled = abs(unit[-1] - 1.0) <= _SETTLED
        if settled:
            break
        t_end *= 3.0
    return t, unit, bool(settled)


@dataclass
class DriveCase:
    """One driver on a line, with one series resistor: both edges at the far end.

    Attributes
    ----------
    driver : Endpoint
        The driving pin. [1]
    model : Driver
        Its rise and fall resistance and ramp (for an open-drain pin: the pull-up as
        ``r_rise`` and a step, the sink against the pull-up as ``r_fall``). [1]
    rs : float
        Series resistor at the driver. [Ω]
    c_far : float
        Capacitance at the far end. [F]
    distributed : bool
        Whether the chain of lines was solved. [1]
    rise, fall : EdgeWave
        The two edges. [1]
    ref : dict
        For each edge, the time at which the driver's pin would cross 50 % of its
        swing into its datasheet ``test_load`` (the reference of its output timing). [s]
    v_low, v_high : float
        Static levels of the line. [V]
    """

    driver: Endpoint
    model: drv.Driver
    rs: float
    c_far: float
    distributed: bool
    rise: EdgeWave
    fall: EdgeWave
    ref: dict
    v_low: float
    v_high: float

    def wave(self, edge: str) -> EdgeWave:
        return self.rise if edge == "rise" else self.fall

    def flight(self, receiver: Endpoint, edge: str) -> Flight:
        """Earliest and latest flight of one edge to a receiver's thresholds. [s]

        Early: VIL on a rise, VIH on a fall; late the other way round.  A receiver
        without thresholds is taken to switch at half its supply.
        """
        v_il, v_ih = _thresholds(receiver)
        w = self.wave(edge)
        first, last = (v_il, v_ih) if edge == "rise" else (v_ih, v_il)
        ref = self.ref[edge]
        return Flight(w.crossing(first) - ref, w.crossing(last) - ref)

    def flight_both(self, receiver: Endpoint) -> Flight:
        """Flight over both edges: earliest of the early, latest of the late. [s]"""
        r, f = self.flight(receiver, "rise"), self.flight(receiver, "fall")
        return Flight(min(r.early, f.early), max(r.late, f.late))


def _thresholds(rx: Endpoint) -> tuple[float, float]:
    v_il, v_ih = rx.level("v_il"), rx.level("v_ih")
    if v_il is None or v_ih is None:
        half = 0.5 * rx.vdd
        return (half if v_il is None else v_il), (half if v_ih is None else v_ih)
    return v_il, v_ih


def _pullups(loads: Sequence[Endpoint], driver: Endpoint) -> tuple[float | None, float]:
    """Parallel resistance of every pull-up on the net and the rail it pulls to."""
    g, rail = 0.0, None
    for p in list(loads) + [driver]:
        r = None
        if p.pin.pullup is not None:
            r = float(p.pin.pullup.at())
        elif p.device.internal_pullups and p.pin.pullup_internal is not None:
            r = float(p.pin.pullup_internal.at())
        if r:
            g += 1.0 / r
            rail = p.vdd if rail is None else min(rail, p.vdd)
    return (1.0 / g if g > 0 else None), (rail if rail is not None else driver.vdd)


def _open_drain_model(pin: Pin, vdd: float, r_pullup: float, notes: list) -> drv.Driver:
    if pin.r_out is not None:
        r_fall = float(pin.r_out.at(vdd))
    elif pin.v_ol is not None and pin.i_ol is not None:
        r_fall = float(pin.v_ol.at(vdd)) / float(pin.i_ol.at())
    else:
        r_fall = drv.DEFAULT_R_OUT
        notes.append(f"open-drain sink without r_out or v_ol/i_ol: {drv.DEFAULT_R_OUT:g} Ω "
                     "assumed (common practice, no source)")
    return drv.Driver(r_rise=r_pullup, r_fall=r_fall, t_ramp_rise=0.0,
                      t_ramp_fall=drv.DEFAULT_T_RAMP,
                      basis={"r_rise": "pull-up", "r_fall": "from-levels",
                             "t_ramp_rise": "step", "t_ramp_fall": "default"})


def _driver_model(ep: Endpoint, notes: list) -> drv.Driver:
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        try:
            model = drv.driver_from_pin(ep.pin, ep.vdd)
        except PinlibError as err:
            # the pin's values refused at this supply: say whose pin, for the dispatcher to
            # name the part file and the design line (pinlib.engines.dispatch)
            err.pin_of = (ep.device.ref, ep.pin_name, ep.vdd)
            raise
    for w in caught:
        notes.append(f"{ep.label}: {w.message}")
    for n in model.notes:
        notes.append(f"{ep.label}: {n}")
    return model


def _test_load(device: Device) -> float:
    t = device.part.timing.test_load
    return 0.0 if t is None else float(t.at())


def drive_case(stretches: Sequence[Stretch], driver: Endpoint, model: drv.Driver,
               loads: Sequence[Endpoint], rs: float, extra_c: float, *, long: bool,
               r_pullup: float | None = None, v_pullup: float | None = None) -> DriveCase:
    """Both edges of one driver through a line into its loads.

    Parameters
    ----------
    stretches : sequence of Stretch
        The line's sections. [1]
    driver : Endpoint
        The driving pin. [1]
    model : Driver
        Its driver model. [1]
    loads : sequence of Endpoint
        Every other pin on the net (their ``c_in`` sit at the far end). [1]
    rs : float
        Series resistor at the driver. [Ω]
    extra_c : float
        Extra capacitance at the far end (connectors, test points). [F]
    long : bool
        Electrically long by :data:`LONG_LINE_RULE`; with :func:`needs_distributed`
        it decides the model. [1]
    r_pullup : float, optional
        For an open-drain driver: the pull-up resistance on the net. [Ω]
    v_pullup : float, optional
        For an open-drain driver: the rail the pull-up goes to. [V]

    Returns
    -------
    DriveCase
    """
    c_far = sum(p.c_in for p in loads) + extra_c
    c_test = _test_load(driver.device)
    if driver.pin.drive == "open-drain":
        rp = float(r_pullup)
        v_hi = float(v_pullup)
        leak = sum(float(p.pin.leakage.at()) for p in list(loads) + [driver]
                   if p.pin.leakage is not None)
        v_hi = max(v_hi - leak * rp, 0.0)
        r_sink = model.r_fall + rs
        v_lo = v_hi * r_sink / (r_sink + rp)
        r_th = r_sink * rp / (r_sink + rp)
        distributed = needs_distributed(stretches, r_th, c_far, long)
        fall = simulate_edge(stretches, r_th, model.t_ramp_fall, c_far, v_hi, v_lo,
                             distributed=distributed, edge="fall")
        # The pull-up (>> Z0) charges the line as one capacitance.
        rise = simulate_edge(stretches, rp, 0.0, c_far, v_lo, v_hi, distributed=False,
                             edge="rise")
        ref = {"rise": float(rc.ramp_rc_crossing(_REF_LEVEL, 0.0, rp * c_test)),
               "fall": float(rc.ramp_rc_crossing(_REF_LEVEL, model.t_ramp_fall,
                                                 r_th * c_test))}
        return DriveCase(driver, model, rs, c_far, distributed, rise, fall, ref, v_lo, v_hi)
    vdd = driver.vdd
    distributed = needs_distributed(stretches, min(model.r_rise, model.r_fall) + rs, c_far,
                                    long)
    rise = simulate_edge(stretches, model.r_rise + rs, model.t_ramp_rise, c_far, 0.0, vdd,
                         distributed=distributed, edge="rise")
    fall = simulate_edge(stretches, model.r_fall + rs, model.t_ramp_fall, c_far, vdd, 0.0,
                         distributed=distributed, edge="fall")
    ref = {"rise": float(rc.ramp_rc_crossing(_REF_LEVEL, model.t_ramp_rise,
                                             model.r_rise * c_test)),
           "fall": float(rc.ramp_rc_crossing(_REF_LEVEL, model.t_ramp_fall,
                                             model.r_fall * c_test))}
    return DriveCase(driver, model, rs, c_far, distributed, rise, fall, ref, 0.0, vdd)


def auto_series_resistor(z0, r_out):
    """The series resistor that "auto" picks for a line: ``Z0 - r_out``, nearest E24.

    Parameters
    ----------
    z0 : float or array_like
        Characteristic impedance of the line's first section. [Ω]
    r_out : float or array_like
        Output resistance of the driver. [Ω]

    Returns
    -------
    numpy.ndarray or float
        The E24 value nearest (by ratio) to ``z0 - r_out``, or 0 where the driver
        alone already matches or exceeds ``z0`` (or ``z0`` is not known). [Ω]

    Notes
    -----
    Series (source) termination: the wave launched into the line is then half the
    swing and the far-end reflection is absorbed at the source (REFERENCES.md, Board
    traces: Rs = Z0 - Rout).

    Examples
    --------
    >>> float(auto_series_resistor(50.0, 20.0))
    30.0
    """
    z0 = np.asarray(z0, dtype=float)
    r_out = np.asarray(r_out, dtype=float)
    ideal = z0 - r_out
    ok = np.isfinite(ideal) & (ideal > 0.0)
    out = np.where(ok, eseries.nearest("E24", np.where(ok, ideal, 1.0)), 0.0)
    return out[()] if out.ndim == 0 else out


# --------------------------------------------------------------------------- lines


@dataclass
class LineAnalysis:
    """Everything the engine worked out for one line.

    Attributes
    ----------
    signal : str
        The signal name. [1]
    line : Line
        The line of the design. [1]
    stretches : list of Stretch
        Its sections. [1]
    drivers, loads, receivers : list of Endpoint
        Pins that drive it; every pin on it; the pins that sense it. [1]
    cases : dict
        Final :class:`DriveCase` by driver reference designator. [1]
    unterminated : dict or None
        The cases without a series resistor, when "auto" chose one. [1]
    rs : float
        Series resistor used. [Ω]
    rs_ideal : float or None
        ``Z0 - r_out`` when "auto" considered it. [Ω]
    long : bool
        Electrically long by :data:`LONG_LINE_RULE`. [1]
    ratio : float
        One-way delay over the driver's edge into the pins alone. [1]
    edge_alone : float
        That edge. [s]
    models : dict
        The driver model (:class:`~pinlib.physics.driver.Driver`) by driver reference
        designator. [1]
    result : LineResult
        Figures and checks. [1]
    """

    signal: str
    line: Line
    stretches: list
    drivers: list
    loads: list
    receivers: list
    cases: dict = field(default_factory=dict)
    unterminated: dict | None = None
    rs: float = 0.0
    rs_ideal: float | None = None
    long: bool = False
    ratio: float = 0.0
    edge_alone: float = 0.0
    models: dict = field(default_factory=dict)
    result: LineResult = field(default_factory=LineResult)

    @property
    def trace_c(self) -> float:
        return sum(s.c for s in self.stretches)

    @property
    def delay(self) -> float:
        return sum(s.td for s in self.stretches)

    @property
    def z0(self) -> float:
        return next((s.z0 for s in self.stretches if s.td > 0), math.nan)

    def without_series(self, ref: str) -> DriveCase | None:
        """The case of driver ``ref`` without the line's series resistor, solved on
        request (a chart's comparison trace) and kept.

        "auto" kept it when it chose a resistor (``unterminated``); with a fixed
        resistor it is solved here with the same sections, driver model and loads.  An
        open-drain driver has no such case (None).  With no resistor on the line it is
        the final case itself.
        """
        if self.rs <= 0:
            return self.cases[ref]
        kept = (self.unterminated or {}).get(ref)
        case = self.cases[ref]
        if kept is not None or case.driver.pin.drive == "open-drain":
            return kept
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")  # the engine already noted its warnings
            kept = drive_case(self.stretches, case.driver, self.models[ref],
                              _others(self.loads, case.driver), 0.0,
                              self.line.extra_capacitance, long=self.long)
        self.unterminated = {**(self.unterminated or {}), ref: kept}
        return kept


def _others(pins: Sequence[Endpoint], driver: Endpoint) -> list[Endpoint]:
    return [p for p in pins if p.device is not driver.device]


def _cases(a: LineAnalysis, rs: float, pullup) -> dict:
    out = {}
    for d in a.drivers:
        rp, vp = pullup.get(d.ref, (None, None))
        out[d.ref] = drive_case(a.stretches, d, a.models[d.ref], _others(a.loads, d), rs,
                                a.line.extra_capacitance, long=a.long, r_pullup=rp,
                                v_pullup=vp)
    return out


def _fmt(x, unit):
    return format_si(x, unit)


def _si_checks(a: LineAnalysis, cases: dict, clock: float | None, clock_line: bool,
               warn: float) -> list[Check]:
    """Overshoot, undershoot, ringing, edge time and levels of a line's final cases."""
    checks: list[Check] = []
    for p in a.loads:
        checks += _swing_checks(p, cases, warn)
    drivers = {d.ref: d for d in a.drivers}
    for rx in a.receivers:
        v_il, v_ih = rx.level("v_il"), rx.level("v_ih")
        if v_il is None or v_ih is None or not v_ih > v_il:
            continue
        checks.append(_ringing_check(rx, cases, v_il, v_ih, clock_line))
        for ref, c in cases.items():
            if ref != rx.ref:
                checks += _level_checks(rx, drivers[ref], c, v_il, v_ih, warn)
    if clock:
        checks.append(_edge_check(cases, clock, warn))
    return checks


def _swing_checks(p: Endpoint, cases: dict, warn: float) -> list[Check]:
    """Overshoot and undershoot at one pin against its abs_max (none without one)."""
    abs_max = p.level("abs_max")
    if abs_max is None:
        return []
    own = [c for ref, c in cases.items() if ref != p.ref]
    if not own:
        return []
    peak = max(c.rise.v_to + c.rise.overshoot for c in own)
    allowed = abs_max - p.vdd
    above = peak - p.vdd
    if abs(above) <= 1e-12 * max(abs(peak), 1.0):
        above = 0.0  # a settled edge at the supply: the difference is float rounding
    dip = max(c.fall.undershoot - c.fall.v_to for c in own)
    low_allowed = min(allowed, UNDERSHOOT_DEFAULT)
    return [
        check_max(
            "overshoot", above, allowed, "V", p.source("abs_max"),
            f"peak {_fmt(peak, 'V')} at {p.label} against its abs_max {_fmt(abs_max, 'V')} "
            f"at {_fmt(p.vdd, 'V')}: {_fmt(above, 'V')} above its supply, "
            f"{_fmt(allowed, 'V')} allowed", warn_margin=warn, subject=p.ref,
            details={"peak": peak, "abs_max": abs_max, "supply": p.vdd}),
        check_max(
            "undershoot", dip, low_allowed, "V", f"{UNDERSHOOT_RULE}; {p.source('abs_max')}",
            f"dip to {_fmt(-dip, 'V')} at {p.label}; {_fmt(low_allowed, 'V')} below ground "
            "allowed", warn_margin=warn, subject=p.ref),
    ]


def _ringing_check(rx: Endpoint, cases: dict, v_il: float, v_ih: float,
                   clock_line: bool) -> Check:
    """Re-crossings of VIL/VIH at one receiver over every other driver's edges."""
    counts = {}
    for ref, c in cases.items():
        if ref == rx.ref:
            continue
        for edge in ("rise", "fall"):
            w = c.wave(edge)
            got = wf.recrossings(w.t, w.v, v_il, v_ih, edge=edge)
            prev = counts.get(edge, (0, 0))
            counts[edge] = (max(prev[0], int(got.entry)), max(prev[1], int(got.opposite)))
    total = sum(e for e, _ in counts.values())
    if total == 0:
        status = "pass"
    else:
        status = "fail" if clock_line else "warn"
    what = "double clocking" if clock_line else "a glitch on a data line"
    return Check(
        "ringing", status, total, 0, "", None, _RINGING_SOURCE,
        (f"no re-crossing of VIL {_fmt(v_il, 'V')} / VIH {_fmt(v_ih, 'V')} at {rx.label}"
         if total == 0 else
         f"{total} re-crossing(s) of VIL {_fmt(v_il, 'V')} / VIH {_fmt(v_ih, 'V')} at "
         f"{rx.label} after the first crossing: risk of {what}"),
        subject=rx.ref,
        details={f"{edge}_{kind}": n for edge, (e, o) in counts.items()
                 for kind, n in (("recrossings", e), ("full_reversals", o))},
        fix=None if total == 0 else "add or increase a series resistor at the driver")


def _driver_levels(d: Endpoint, c) -> tuple[float, str, float, str]:
    """A driver's VOH, its source, VOL, its source: an open-drain driver's from the
    pull-up and sink on the net; a push-pull one's from its part, or rail to rail."""
    if d.pin.drive == "open-drain":
        src = f"{d.label}: pull-up and sink on the net"
        return c.v_high, src, c.v_low, src
    v_oh = d.level("v_oh")
    v_ol = d.level("v_ol")
    oh_src = d.source("v_oh") if v_oh is not None else ""
    ol_src = d.source("v_ol") if v_ol is not None else ""
    if v_oh is None:
        v_oh, oh_src = d.vdd, f"{d.label}: rail-to-rail CMOS output assumed"
    if v_ol is None:
        v_ol, ol_src = 0.0, f"{d.label}: rail-to-rail CMOS output assumed"
    return v_oh, oh_src, v_ol, ol_src


def _level_checks(rx: Endpoint, d: Endpoint, c, v_il: float, v_ih: float,
                  warn: float) -> list[Check]:
    """A driver's VOH/VOL against one receiver's VIH/VIL."""
    v_oh, oh_src, v_ol, ol_src = _driver_levels(d, c)
    return [
        check_min(
            "level-high", v_oh, v_ih, "V", rx.source("v_ih"),
            f"{d.label} VOH {_fmt(v_oh, 'V')} against {rx.label} VIH {_fmt(v_ih, 'V')}",
            warn_margin=warn, subject=rx.ref, details={"driver": d.label,
                                                       "driver_source": oh_src}),
        check_max(
            "level-low", v_ol, v_il, "V", rx.source("v_il"),
            f"{d.label} VOL {_fmt(v_ol, 'V')} against {rx.label} VIL {_fmt(v_il, 'V')}",
            warn_margin=warn, subject=rx.ref, details={"driver": d.label,
                                                       "driver_source": ol_src}),
    ]


def _edge_check(cases: dict, clock: float, warn: float) -> Check:
    """The slowest 10-90 % edge against a fraction of the clock period (a rule of thumb)."""
    edge = max(max(c.rise.t_edge, c.fall.t_edge) for c in cases.values())
    limit = EDGE_FRACTION / clock
    return rule_of_thumb(check_max(
        "edge-time", edge, limit, "s", EDGE_RULE,
        f"slowest 10-90 % edge {_fmt(edge, 's')} at the far end against "
        f"{EDGE_FRACTION:.0%} of the {_fmt(1.0 / clock, 's')} period",
        warn_margin=warn, details={"fraction": EDGE_FRACTION}))


def _figures_of(cases: dict) -> dict:
    return {
        "edge_rise_time": max(c.rise.t_edge for c in cases.values()),
        "edge_fall_time": max(c.fall.t_edge for c in cases.values()),
        "overshoot": max(c.rise.overshoot for c in cases.values()),
        "undershoot": max(c.fall.undershoot for c in cases.values()),
    }


def analyse_line(signal: str, line: Line, drivers: Sequence[Endpoint],
                 loads: Sequence[Endpoint], receivers: Sequence[Endpoint], *,
                 clock: float | None = None, clock_line: bool = False,
                 warn_margin: float = 0.10, bus_id: str | None = None) -> LineAnalysis:
    """Evaluate one routed push-pull or open-drain line.

    Parameters
    ----------
    signal : str
        Signal name (``"sclk"``, ``"reset"``...). [1]
    line : Line
        Its routing from the design. [1]
    drivers : sequence of Endpoint
        The pins that drive it, each evaluated in turn. [1]
    loads : sequence of Endpoint
        Every pin on it (drivers included; a driver never loads itself). [1]
    receivers : sequence of Endpoint
        The pins whose thresholds matter (inputs). [1]
    clock : float, optional
        Clock (or toggle) rate for the edge-time check. [Hz]
    clock_line : bool, optional
        Ringing is a failure (double clocking) rather than a warning. [1]
    warn_margin : float, optional
        Relative margin under which a passing check warns. [1]
    bus_id : str, optional
        The bus the line belongs to, named in an error about the line. [1]

    Returns
    -------
    LineAnalysis
        With its ``result`` filled.

    Raises
    ------
    InputError
        When a waveform record of the line would need more than
        :data:`MAX_TIME_STEPS` time steps.

    Notes
    -----
    Inside a :func:`pinlib.engines.memo.run_scope` a line analysed with identical inputs
    is analysed once (the corners of a bus's tolerances vary one line's length at a time);
    the analysis returned is then shared and must not be changed.
    """
    key = _line_key(signal, line, drivers, loads, receivers, clock, clock_line,
                    warn_margin, bus_id)
    if key is None or not memo.active():
        return _analyse_line(signal, line, drivers, loads, receivers, clock, clock_line,
                             warn_margin, bus_id)
    return memo.remember(key, lambda: _analyse_line(
        signal, line, drivers, loads, receivers, clock, clock_line, warn_margin, bus_id))


def _endpoint_key(e: Endpoint) -> tuple:
    d = e.device
    return (d.ref, d.part_id, id(d.part), d.role, d.supply, d.switched, d.series_resistor,
            d.side, d.internal_pullups, d.pin, d.capacitance_factor, e.pin_name, id(e.pin),
            float(e.vdd))


def _line_key(signal, line, drivers, loads, receivers, *rest) -> tuple | None:
    """An exact key of a line analysis's inputs (parts by identity: one library serves a
    run), or None when an input is not hashable."""
    key = ("analyse_line", signal, line, tuple(_endpoint_key(e) for e in drivers),
           tuple(_endpoint_key(e) for e in loads), tuple(_endpoint_key(e) for e in receivers),
           *rest)
    try:
        hash(key)
    except TypeError:
        return None
    return key


def _analyse_line(signal, line, drivers, loads, receivers, clock, clock_line, warn_margin,
                  bus_id) -> LineAnalysis:
    res = LineResult(signal=signal)
    # Validity warnings of the trace models and of the solver become notes of the line.
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        try:
            a = _analyse(signal, line, drivers, loads, receivers, res, clock, clock_line,
                         warn_margin)
        except _TooManySteps as exc:
            where = f"bus.{bus_id}.lines.{signal}" if bus_id else f"lines.{signal}"
            raise InputError(exc.problem, field=where, value=exc.value,
                             hint=exc.hint) from None
    for w in caught:
        text = f"{signal}: {w.message}"
        if text not in res.notes:
            res.notes.append(text)
    return a


def _analyse(signal, line, drivers, loads, receivers, res, clock, clock_line, warn_margin):
    """The line analysis in its steps: sections, driver models, electrical length, the
    series resistor and the final cases, checks, figures."""
    notes = res.notes
    stretches = stretches_of(line.sections)
    a = LineAnalysis(signal, line, stretches, list(drivers), list(loads), list(receivers),
                     result=res)
    if not a.drivers:
        raise DesignError(M.NO_DRIVER_ON_LINE, field=f"lines.{signal}",
                          hint="a push-pull or open-drain pin must sit on the line")
    if any(not s.td > 0 for s in stretches) and stretches:
        notes.append("a section without a delay counts as a lumped capacitance at the far end")
    pullup = _driver_models(a, res)
    if not a.drivers:
        for name, unit in _FIGURE_UNITS:
            res.figure(name, None, unit)
        return a
    _electrical_length(a, notes)
    _solve_cases(a, pullup, clock, clock_line, warn_margin, notes)
    _add_checks(a, res, clock, clock_line, warn_margin)
    _add_figures(a, res)
    return a


def _driver_models(a: LineAnalysis, res: LineResult) -> dict:
    """Fill ``a.models``; open-drain drivers pull against the net's pull-ups.  A driver
    with no pull-up to pull against fails and leaves ``a.drivers``.  Returns the
    (pull-up, its rail) of each open-drain driver."""
    pullup = {}
    stuck = []
    for d in a.drivers:
        if d.pin.drive == "open-drain":
            rp, rail = _pullups(_others(a.loads, d), d)
            if rp is None:
                res.add(Check("pull-up", "fail", None, None, "Ω", None,
                              "an open-drain line needs a pull-up (common practice)",
                              f"{d.label} is open-drain and no pin on {a.signal} carries a "
                              "pull-up: the line never rises", subject=d.ref,
                              fix="use a part with an on-board pull-up, or enable internal "
                                  "pull-ups"))
                stuck.append(d)
                continue
            pullup[d.ref] = (rp, rail)
            a.models[d.ref] = _open_drain_model(d.pin, d.vdd, rp, res.notes)
        else:
            a.models[d.ref] = _driver_model(d, res.notes)
    a.drivers = [d for d in a.drivers if d not in stuck]
    return pullup


def _electrical_length(a: LineAnalysis, notes: list) -> None:
    """Electrical length against the fastest edge into the pins alone."""
    alone = []
    for d in a.drivers:
        m = a.models[d.ref]
        c_pins = sum(p.c_in for p in _others(a.loads, d)) + a.line.extra_capacitance
        alone.append(float(drv.edge_time(m.r_fall, m.t_ramp_fall, c_pins)))
        if d.pin.drive != "open-drain":
            alone.append(float(drv.edge_time(m.r_rise, m.t_ramp_rise, c_pins)))
    a.edge_alone = min(alone)
    a.long, a.ratio = line_model(a.stretches, a.edge_alone)
    notes.append(f"one-way delay {_fmt(a.delay, 's')} is {a.ratio:.2f} of the driver's "
                 f"{_fmt(a.edge_alone, 's')} edge into the pins alone: "
                 f"{'electrically long' if a.long else 'electrically short'} "
                 f"({LONG_LINE_RULE})")


def _solve_cases(a: LineAnalysis, pullup: dict, clock, clock_line, warn_margin,
                 notes: list) -> None:
    """The series resistor of the line (the design's, or chosen by "auto") and the final
    cases with it."""
    setting = a.line.series_resistor
    if setting == "auto":
        _auto_series(a, pullup, clock, clock_line, warn_margin, notes)
    elif setting == "none" or setting is None:
        a.rs = 0.0
        a.cases = _cases(a, 0.0, pullup)
    else:
        a.rs = float(setting)
        a.cases = _cases(a, a.rs, pullup)


def _auto_series(a: LineAnalysis, pullup: dict, clock, clock_line, warn_margin,
                 notes: list) -> None:
    """``series_resistor = "auto"``: none on a short line that passes what a series
    resistor cures, else ``Z0 - r_out`` to the nearest E24 value."""
    bare = _cases(a, 0.0, pullup)
    bare_checks = _si_checks(a, bare, clock, clock_line, warn_margin)
    # Only what a series resistor can cure decides (a slow edge or a level it cannot),
    # so the choice does not depend on the clock.
    clean = all(c.status != "fail" for c in bare_checks if c.id in _TERMINATION_CURES)
    r_drv = min(0.5 * (a.models[d.ref].r_rise + a.models[d.ref].r_fall)
                for d in a.drivers if d.pin.drive != "open-drain") \
        if any(d.pin.drive != "open-drain" for d in a.drivers) else math.nan
    a.rs_ideal = a.z0 - r_drv if math.isfinite(a.z0) and math.isfinite(r_drv) else None
    if (not a.long and clean) or a.rs_ideal is None:
        a.rs, a.cases = 0.0, bare
        why = ("electrically short, and no overshoot, undershoot or ringing check "
               "fails without one"
               if (not a.long and clean) else "no line impedance or push-pull driver")
        notes.append(f"auto series resistor: none ({why})")
        return
    a.rs = float(auto_series_resistor(a.z0, r_drv))
    if a.rs > 0:
        a.unterminated = bare
        a.cases = _cases(a, a.rs, pullup)
        notes.append(f"auto series resistor: {_fmt(a.rs, 'Ω')} (Z0 {_fmt(a.z0, 'Ω')} "
                     f"- r_out {_fmt(r_drv, 'Ω')} = {_fmt(a.rs_ideal, 'Ω')}, "
                     "nearest E24)")
    else:
        a.cases = bare
        notes.append(f"auto series resistor: none (the driver's {_fmt(r_drv, 'Ω')} "
                     f"already matches or exceeds Z0 {_fmt(a.z0, 'Ω')})")


def _add_checks(a: LineAnalysis, res: LineResult, clock, clock_line, warn_margin) -> None:
    """The signal-integrity checks of the final cases, the line delay, the series
    termination "auto" chose, and a note for a waveform that had not settled."""
    for c in _si_checks(a, a.cases, clock, clock_line, warn_margin):
        res.add(c)
    if clock and a.delay > 0:
        res.add(rule_of_thumb(check_max(
            "line-delay", a.delay, 1.0 / clock, "s", LINE_DELAY_RULE,
            f"one-way delay {_fmt(a.delay, 's')} against the {_fmt(1.0 / clock, 's')} clock "
            "period", warn_margin=warn_margin,
            fix="shorten the line, lower the clock, or model the link as a transmission "
                "system (losses, skew between lines) outside pinlib")))
    if a.line.series_resistor == "auto":
        res.add(_termination_check(a))
    for c in a.cases.values():
        for w in (c.rise, c.fall):
            if not w.settled:
                res.notes.append(f"{c.driver.label} {w.edge}: the waveform had not settled "
                                 "within 1 % at the end of the record")


def _termination_check(a: LineAnalysis) -> Check:
    """What "auto" chose, with the figures with and without the resistor."""
    with_f = _figures_of(a.cases)
    details = {"rs_chosen": a.rs, "rs_ideal": a.rs_ideal, "z0": a.z0,
               "delay_to_edge_ratio": a.ratio, "with": with_f}
    if a.unterminated is not None:
        details["without"] = _figures_of(a.unterminated)
    else:
        details["without"] = with_f
    wo = details["without"]
    return Check(
        "series-termination", "pass", a.rs, a.rs_ideal, "Ω", None, TERMINATION_RULE,
        (f"auto: {_fmt(a.rs, 'Ω')}; overshoot {_fmt(wo['overshoot'], 'V')} -> "
         f"{_fmt(with_f['overshoot'], 'V')}, rise {_fmt(wo['edge_rise_time'], 's')} -> "
         f"{_fmt(with_f['edge_rise_time'], 's')}" if a.unterminated is not None else
         "auto: no series resistor needed"),
        details=details)


def _add_figures(a: LineAnalysis, res: LineResult) -> None:
    """The line's figures, in the order of ``_FIGURE_UNITS``."""
    figs = _figures_of(a.cases)
    res.figure("load_capacitance", a.trace_c + max(c.c_far for c in a.cases.values()), "F")
    res.figure("trace_delay", a.delay, "s")
    res.figure("z0", a.z0, "Ω")
    res.figure("edge_rise_time", figs["edge_rise_time"], "s")
    res.figure("edge_fall_time", figs["edge_fall_time"], "s")
    res.figure("series_resistor", a.rs, "Ω")
    res.figure("overshoot", figs["overshoot"], "V")
    res.figure("undershoot", figs["undershoot"], "V")
    res.figure("transmission_line", bool(a.long), "")
    used = any(c.distributed for c in a.cases.values())
    res.figure("model", "distributed" if used else "lumped", "")
    if not a.long:
        res.notes.append(("distributed" if used else "lumped") + f" model: {LUMPED_RULE}")
    res.figure("delay_to_edge_ratio", a.ratio, "")
