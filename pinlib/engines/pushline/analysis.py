"""What the engine worked out for one line (:class:`LineAnalysis`) and the drive cases of its
drivers."""

from __future__ import annotations

import math
import warnings
from collections.abc import Sequence
from dataclasses import field
from typing import TYPE_CHECKING

import numpy as np

from pinlib.core.quantity import format_si
from pinlib.core.valueclass import value_class
from pinlib.engines.pushline.drive import DriveCase, drive_case, route_case
from pinlib.engines.pushline.pins import Endpoint
from pinlib.engines.readout import UNSTATED, explained
from pinlib.model.design import Line
from pinlib.model.result import LineResult

if TYPE_CHECKING:  # a routed line's tree: imported by the line that has one
    from pinlib.engines.pushline.routes import RouteNet


@value_class
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
        ``Z0 - r_out`` when "auto" considered it, of the Z0 it matched. [Ω]
    z0 : float
        The line's Z0: of the stretch at the driver (:meth:`z0_at`), on a line of several
        drivers (CIPO) the strongest push-pull driver's, the one "auto" matches
        (:meth:`matched_driver`); NaN where no stretch has a delay.  Set once the
        drivers' models are made (:func:`~pinlib.engines.pushline.line._driver_models`),
        then read many times. [Ω]
    z0_matched : float or None
        The Z0 "auto" matched when it chose a resistor: :attr:`z0` (the stretch at the
        driver) unless another section's match brought a check to a better standing. [Ω]
    long : bool
        Electrically long by :data:`LONG_LINE_RULE`. [1]
    ratio : float
        One-way delay over the driver's edge into the pins and extra capacitance alone
        (without the trace). [1]
    edge_alone : float
        That edge. [s]
    models : dict
        The driver model (:class:`~pinlib.physics.driver.Driver`) by driver reference
        designator. [1]
    result : LineResult
        Figures and checks. [1]
    net : RouteNet or None
        A routed line's tree (each pin at its own point); None for the simple form. [1]
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
    z0: float = math.nan
    z0_matched: float | None = None
    long: bool = False
    ratio: float = 0.0
    edge_alone: float = 0.0
    models: dict = field(default_factory=dict)
    result: LineResult = field(default_factory=LineResult)
    net: RouteNet | None = None

    @property
    def trace_c(self) -> float:
        return sum(s.c for s in self.stretches)

    @property
    def delay(self) -> float:
        """One-way delay of the line; of a route, the longest from a driver's point to any
        point of it (:meth:`RouteNet.farthest_delay`: a line fed from its middle is not as
        long as its two arms end to end). [s]"""
        if self.net is not None:
            return self.net.farthest_delay([self.net.node(d.ref) for d in self.drivers])
        return sum(s.td for s in self.stretches)

    def z0_at(self, ref: str | None) -> float:
        """Z0 of the stretch at driver ``ref``'s point: on a route the first stretch with
        a delay on the way to the point farthest from it
        (:meth:`~pinlib.engines.pushline.routes.RouteNet.section_at`), whichever order
        the route is written in; on a chain of sections (which starts at the driver)
        the first with a delay. NaN where no stretch has a delay. [Ω]"""
        if self.net is not None and ref is not None:
            s = self.net.section_at(self.net.node(ref))
            return s.z0 if s is not None else math.nan
        for s in self.stretches:
            if s.td > 0:
                return s.z0
        return math.nan

    def matched_driver(self) -> Endpoint | None:
        """The driver whose resistance "auto" matches: the strongest push-pull driver
        (the least :func:`matched_resistance`; of equals the first of the line's), or the
        line's first driver where none is push-pull or their models are not made yet."""
        push = [d for d in self.drivers if d.pin.drive != "open-drain"]
        if push and all(d.ref in self.models for d in push):
            return min(push, key=lambda d: matched_resistance(self.models[d.ref]))
        return self.drivers[0] if self.drivers else None

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
            kept = _case(self, case.driver, 0.0)
        self.unterminated = {**(self.unterminated or {}), ref: kept}
        return kept


def matched_resistance(m) -> float:
    """The resistance "auto" matches of one push-pull driver's model: the mean of rise
    and fall, at its fast corner where its part states one (the corner that rings). [Ω]"""
    m = m.fast if m.fast is not None else m
    return 0.5 * (m.r_rise + m.r_fall)


def _others(pins: Sequence[Endpoint], driver: Endpoint) -> list[Endpoint]:
    return [p for p in pins if p.device is not driver.device]


def _case(a: LineAnalysis, d: Endpoint, rs: float, rp=None, vp=None) -> DriveCase:
    """One driver's case: at its own point of a route, else with every pin at the far end."""
    # a route keeps the records of the receivers' points (and the farthest load's)
    solve = drive_case if a.net is None else (
        lambda *args, **kw: route_case(a.net, *args, **kw,
                                       sensed=[r.ref for r in a.receivers]))
    return solve(a.stretches, d, a.models[d.ref], _others(a.loads, d), rs,
                 a.line.extra_capacitance, long=a.long, r_pullup=rp, v_pullup=vp)


def _cases(a: LineAnalysis, rs: float, pullup) -> dict:
    out = {}
    for d in a.drivers:
        rp, vp = pullup.get(d.ref, (None, None))
        out[d.ref] = _case(a, d, rs, rp, vp)
    return out


def _fmt(x, unit):
    """``format_si(x, unit)``; inside :func:`~pinlib.engines.readout.summaries_only`, where
    no text is read, :data:`~pinlib.engines.readout.UNSTATED`."""
    return format_si(x, unit) if explained() else UNSTATED


def fmt_below(x: float, unit: str) -> str:
    """A positive limit as :func:`_fmt` writes it, rounded down to the three digits shown:
    a fix that names a clock passes at it (one rounded up could leave the check
    short)."""
    return _fmt_rounded(x, unit, math.floor)


def fmt_above(x: float, unit: str) -> str:
    """A positive need as :func:`_fmt` writes it, rounded up to the three digits shown
    (a time a fix asks for at least)."""
    return _fmt_rounded(x, unit, math.ceil)


def _fmt_rounded(x: float, unit: str, rounding) -> str:
    if not (math.isfinite(x) and x > 0):
        return _fmt(x, unit)
    step = 10.0 ** (math.floor(math.log10(x)) - 2)
    q = x / step
    if abs(q - round(q)) <= 1e-9 * q:  # float noise of a round value: 199.99999999999997
        q = float(round(q))
    return _fmt(rounding(q) * step, unit)


def case_edge_times(c, receivers=()) -> tuple:
    """One driver's edge times as the line's figures read them (``edge_rise_time`` and
    ``edge_fall_time`` are the worst of these over the drivers): the slow corner's rise and
    fall at the far end, or on a route the slowest at the receivers' points (those of
    ``receivers``, else of every pin it loads). [s, s]"""
    if c.points is None:
        return c.rise.t_edge, c.fall.t_edge
    others = [c.net.node(r) for r in c.load_refs] or [c.net.node(c.driver.ref)]
    sensed = [c.net.node(r.ref) for r in receivers if r.ref != c.driver.ref] or others
    return (float(np.max(c.points["rise"].edge_times(sensed))),
            float(np.max(c.points["fall"].edge_times(sensed))))


def _figures_of(cases: dict, receivers=()) -> dict:
    """The worst edge figures over every driver; on a route the edge times at the points
    of the receivers (``receivers``: on CIPO the controller only, so the cost stays linear
    in the peripherals) and the overshoot and undershoot at every pin's point, all nodes
    of one solve at once."""
    rise_t, fall_t, over, under = [], [], [], []
    for c in cases.values():
        rise, fall = case_edge_times(c, receivers)
        rise_t.append(rise)
        fall_t.append(fall)
        if c.points is None:
            over.append(c.si_wave("rise").overshoot)
            under.append(c.si_wave("fall").undershoot)
            continue
        others = [c.net.node(r) for r in c.load_refs] or [c.net.node(c.driver.ref)]
        si = c.si_points  # the fast corner's, where the driver has one
        over.append(float(np.max(si["rise"].extremes()[0][others])) - si["rise"].v_to)
        under.append(float(np.max(si["fall"].extremes()[1][others])) + si["fall"].v_to)
    return {"edge_rise_time": max(rise_t), "edge_fall_time": max(fall_t),
            "overshoot": max(over), "undershoot": max(under)}


def idle_pin_extremes(cases: dict, loads=()) -> list[tuple]:
    """On a route, the line's overshoot or undershoot figure (the worst at any pin's
    point) where it lies at a pin that has no check of it, its part stating no
    ``abs_max`` for the pin (on CIPO often a peripheral's own CIPO pin while another
    drives), beyond the worst at the pins that have one:
    ``(figure, value, pin label, driver ref, worst at a checked pin or None)``. [1, V]
    """
    if any(c.points is None for c in cases.values()):
        return []
    checked = {p.ref for p in loads if p.level("abs_max") is not None}
    label = {p.ref: p.label for p in loads}
    out = []
    for name, edge, k in (("overshoot", "rise", 0), ("undershoot", "fall", 1)):
        idle, at_checked = [], -math.inf
        for c in cases.values():
            wave = c.si_points[edge]
            ext = wave.extremes()[k]
            for ref in c.load_refs:
                v = float(ext[c.net.node(ref)]) + (wave.v_to if k else -wave.v_to)
                if ref in checked:
                    at_checked = max(at_checked, v)
                else:
                    idle.append((v, label.get(ref, ref), c.driver.ref))
        top = max((v for v, _, _ in idle), default=-math.inf)
        if top > at_checked and top > 0:
            # the first of the pins at the worst, to the solver's last bits (twin pins of
            # a symmetric route tie; which of them is named does not follow rounding)
            _, pin, driver = next(x for x in idle if x[0] >= top - 1e-9 * top)
            out.append((name, top, pin, driver,
                        at_checked if math.isfinite(at_checked) else None))
    return out
