"""One driver on a line with its loads and series resistor: both edges at the far end
(:class:`DriveCase`)."""

from __future__ import annotations

import warnings
from collections.abc import Iterable, Sequence
from typing import TYPE_CHECKING

from pinlib.core.errors import PinlibError
from pinlib.core.quantity import format_si
from pinlib.core.valueclass import value_class
from pinlib.engines import memo
from pinlib.engines.pushline.pins import Endpoint, Flight
from pinlib.engines.pushline.rules import (
    _REF_LEVEL,
    LUMPED_INDUCTANCE_LIMIT,
    PULLUP_RISE_INDUCTANCE_LIMIT,
    SPREAD_INDUCTANCE_LIMIT,
)
from pinlib.engines.pushline.sections import Stretch, line_model, needs_distributed
from pinlib.engines.pushline.waves import EdgeWave, simulate_edge, solve_edges
from pinlib.library.schema import Pin
from pinlib.model.design import Device, Line
from pinlib.physics import driver as drv
from pinlib.physics import rc

if TYPE_CHECKING:  # a routed line's tree: imported by route_case
    from pinlib.engines.pushline.routes import RouteNet


@value_class
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
    fast_rise, fast_fall : EdgeWave or None
        The two edges of the driver's fast corner (``model.fast``), when its part states
        one: they set overshoot, undershoot and ringing, and the flights at that corner
        (:meth:`flight`, for hold); ``rise`` and ``fall`` (the slow corner) set edge
        times and the slow corner's flights. [1]
    net : RouteNet or None
        A routed line's tree; None for the simple form (every pin at the far end). [1]
    points : dict or None
        On a routed line, the :class:`PointWaves` of each edge; ``rise`` and ``fall``
        are then the edges at the device farthest (in delay) from the driver. [1]
    load_refs : tuple of str
        On a routed line, the devices whose pins load the driver. [1]
    fast_points : dict or None
        On a routed line, the :class:`PointWaves` of the fast corner's edges, when the
        driver has one. [1]
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
    fast_rise: EdgeWave | None = None
    fast_fall: EdgeWave | None = None
    net: RouteNet | None = None
    points: dict | None = None
    load_refs: tuple = ()
    fast_points: dict | None = None

    def wave(self, edge: str) -> EdgeWave:
        """The edge of the slow corner (edge time, timing). [1]"""
        return self.rise if edge == "rise" else self.fall

    def si_wave(self, edge: str) -> EdgeWave:
        """The edge that sets overshoot, undershoot and ringing: the fast corner's, when
        the driver has one, else :meth:`wave`. [1]"""
        fast = self.fast_rise if edge == "rise" else self.fast_fall
        return self.wave(edge) if fast is None else fast

    def wave_at(self, ref: str, edge: str) -> EdgeWave:
        """The edge at a device's own point (a routed line), else at the far end."""
        if self.points is None:
            return self.wave(edge)
        return self.points[edge].at(self.net.node(ref))

    def waves(self, edge: str) -> list[EdgeWave]:
        """The edge at every other pin's point on a routed line; else at the far end."""
        if self.points is None:
            return [self.wave(edge)]
        return [self.wave_at(r, edge) for r in self.load_refs] or [self.wave(edge)]

    @property
    def si_points(self) -> dict | None:
        """On a routed line, the :class:`PointWaves` that set overshoot, undershoot and
        ringing: the fast corner's, when the driver has one, else :attr:`points`. [1]"""
        return self.points if self.fast_points is None else self.fast_points

    def si_wave_at(self, ref: str, edge: str) -> EdgeWave:
        """The edge that sets overshoot, undershoot and ringing at a device's own point
        (the fast corner's, when the driver has one). [1]"""
        if self.points is None:
            return self.si_wave(edge)
        return self.si_points[edge].at(self.net.node(ref))

    def fast_ref(self, edge: str) -> float:
        """The timing reference of one edge at the driver's fast corner: when its pin
        would cross the reference level into its datasheet ``test_load`` with the fast
        corner's drive (as :attr:`ref` at the slow corner); :attr:`ref`'s where the
        driver has no fast corner. [s]"""
        fast = self.model.fast
        if fast is None or self.fast_rise is None:
            return self.ref[edge]
        c_test = _test_load(self.driver.device)
        if edge == "rise":
            return _ref_time(fast.t_ramp_rise, fast.r_rise * c_test)
        return _ref_time(fast.t_ramp_fall, fast.r_fall * c_test)

    def flight(self, receiver: Endpoint, edge: str) -> Flight:
        """Earliest and latest flight of one edge to a receiver's thresholds, at the
        slow corner and, where the driver's part states one, at the fast corner (from
        its own reference there, :meth:`fast_ref`). [s]

        Early: VIL on a rise, VIH on a fall; late the other way round.  A receiver
        without thresholds is taken to switch at half its supply.
        """
        v_il, v_ih = _thresholds(receiver)
        first, last = (v_il, v_ih) if edge == "rise" else (v_ih, v_il)
        w = self.wave_at(receiver.ref, edge)
        ref = self.ref[edge]
        if self.fast_rise is None:
            return Flight(w.crossing(first) - ref, w.crossing(last) - ref)
        fw, f_ref = self.si_wave_at(receiver.ref, edge), self.fast_ref(edge)
        return Flight(w.crossing(first) - ref, w.crossing(last) - ref,
                      fw.crossing(first) - f_ref, fw.crossing(last) - f_ref)

    def flight_both(self, receiver: Endpoint) -> Flight:
        """Flight over both edges: earliest of the early, latest of the late, at each
        corner. [s]"""
        r, f = self.flight(receiver, "rise"), self.flight(receiver, "fall")
        if r.fast_early is None:
            return Flight(min(r.early, f.early), max(r.late, f.late))
        return Flight(min(r.early, f.early), max(r.late, f.late),
                      min(r.fast_early, f.fast_early), max(r.fast_late, f.fast_late))


def _thresholds(rx: Endpoint) -> tuple[float, float]:
    v_il, v_ih = rx.level("v_il"), rx.level("v_ih")
    if v_il is None or v_ih is None:
        half = 0.5 * rx.vdd
        return (half if v_il is None else v_il), (half if v_ih is None else v_ih)
    return v_il, v_ih


def carried_pullup(p: Endpoint) -> float | None:
    """The pull-up a pin carries that counts on the net: its ``pullup`` (on the board),
    else its ``pullup_internal`` where the device sets ``internal_pullups``; or None. [Ω]"""
    if p.pin.pullup is not None:
        return float(p.pin.pullup.at())
    if p.device.internal_pullups and p.pin.pullup_internal is not None:
        return float(p.pin.pullup_internal.at())
    return None


def net_leakage(pins: Sequence[Endpoint]) -> float:
    """The leakage of these pins together (those that state one). [A]"""
    return sum(float(p.pin.leakage.at()) for p in pins if p.pin.leakage is not None)


def _pullups(loads: Sequence[Endpoint], driver: Endpoint,
             line_pullup: tuple[float, float] | None = None) -> tuple[float | None, float]:
    """Parallel resistance of every pull-up on the net and the rail it pulls to (the
    lowest of theirs): the pins' and ``line_pullup``, the line's own resistor and its
    rail, when it has one."""
    g, rail = 0.0, None
    if line_pullup is not None:
        g, rail = 1.0 / line_pullup[0], line_pullup[1]
    for p in list(loads) + [driver]:
        r = carried_pullup(p)
        if r:
            g += 1.0 / r
            rail = p.vdd if rail is None else min(rail, p.vdd)
    return (1.0 / g if g > 0 else None), (rail if rail is not None else driver.vdd)


def open_drain_pullup(line: Line, loads: Sequence[Endpoint],
                      driver: Endpoint) -> tuple[float | None, float]:
    """The pull-up an open-drain ``driver`` on ``line`` pulls against, and its rail.

    Parameters
    ----------
    line : Line
        The line of the design (its own ``pullup`` and ``pullup_rail``). [1]
    loads : sequence of Endpoint
        Every pin on the line (the driver's own among them or not). [1]
    driver : Endpoint
        The open-drain pin. [1]

    Returns
    -------
    tuple
        The line's resistor in parallel with every pull-up the pins carry (``pullup``,
        or ``pullup_internal`` of a device with ``internal_pullups``), nominal, or None
        when there is none [Ω]; the rail they pull to (the lowest of theirs) [V].
    """
    others = [p for p in loads if p.device is not driver.device]
    return _pullups(others, driver, _own_pullup(line, driver))


def net_pullups(line: Line, loads: Sequence[Endpoint],
                drivers: Sequence[Endpoint]) -> dict[str, tuple[float | None, float]]:
    """By driver reference, the pull-ups its net carries and their rail
    (:func:`open_drain_pullup`), or ``(None, the driver's rail)`` on a net without any:
    most push-pull lines have none, found in one look at the line. [Ω, V]"""
    pulled = line.pullup is not None or any(carried_pullup(p) for p in loads)
    return {d.ref: open_drain_pullup(line, loads, d) if pulled else (None, d.vdd)
            for d in drivers}


def _own_pullup(line: Line, driver: Endpoint) -> tuple[float, float] | None:
    """The line's own resistor and the rail it pulls to (the bus supply, set where the
    line is analysed; the driver's rail where it is not), or None. [Ω, V]"""
    if line.pullup is None:
        return None
    return float(line.pullup), float(line.pullup_rail or driver.vdd)


def _open_drain_model(pin: Pin, vdd: float, r_pullup: float, notes: list,
                      label: str = "") -> drv.Driver:
    # the sink's switching time is not in the part format: the default ramp, said so
    who = f"{label}: " if label else ""
    notes.append(f"{who}fall: no edge points for an open-drain sink; t_ramp set to "
                 f"{format_si(drv.DEFAULT_T_RAMP, 's')} (common practice, no source)")
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
    try:
        # within a run, a pin at one supply is modelled once (its warnings kept with it)
        # (parts by identity, as the line memo: one library serves a run)
        key = ("pushline.driver_model", ep.device.part_id, ep.pin_name, id(ep.pin),
               float(ep.vdd))
        model, caught = memo.remember(key, lambda: _fit_pin(ep.pin, float(ep.vdd)))
    except PinlibError as err:
        # the pin's values refused at this supply: say whose pin, for the dispatcher to
        # name the part file and the design line (pinlib.engines.dispatch)
        err.pin_of = (ep.device.ref, ep.pin_name, ep.vdd)
        raise
    for w in caught:
        notes.append(f"{ep.label}: {w}")
    for n in model.notes:
        notes.append(f"{ep.label}: {n}")
    unfitted = [e for e in ("rise", "fall") if model.basis.get(f"t_ramp_{e}") == "default"]
    if unfitted and ep.c_in > 0:
        # a model fitted to edge points holds the pin's own capacitance in its fit; one
        # without them does not, and the line leaves the driver's own pin out
        notes.append(f"{ep.label}: its own pin capacitance ({format_si(ep.c_in, 'F')}) is "
                     f"not in its {' and '.join(unfitted)} (no edge points, which would "
                     "hold it): those edges may be faster, and ring more, than on the board")
    if model.fast is not None:
        notes.extend(f"{ep.label}: {n}" for n in model.fast.notes)
        notes.append(f"{ep.label}: fast corner (pins.{ep.pin_name}.fast) used for overshoot, "
                     "undershoot and ringing, and beside the slow corner for SPI hold (the "
                     "shorter); slow corner (r_out, edges) for edge time and other timing")
    return model


def prefit(endpoints: Iterable[Endpoint]) -> None:
    """Fit the driver models of these pins together (:func:`~pinlib.physics.driver.
    fit_drivers`), so that :func:`_driver_model`, one pin at a time, finds each fit made
    (the same numbers and warnings as its own would be).  A pin whose values a fit would
    refuse is left to it, to say so where it is read."""
    pins = {(id(ep.pin), float(ep.vdd)): ep for ep in endpoints}  # a pin at a supply once
    requests = [req for ep in pins.values() for req in drv.fit_requests(ep.pin, ep.vdd)]
    if requests:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")  # each model issues its fit's warnings again
            drv.fit_drivers(requests)


def _fit_pin(pin: Pin, vdd: float) -> tuple[drv.Driver, tuple]:
    """A pin's driver model at ``vdd`` and the texts of the warnings its fit gave."""
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        model = drv.driver_from_pin(pin, vdd)
    return model, tuple(str(w.message) for w in caught)


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
    plan = edge_plan(stretches, driver, model, loads, rs, extra_c, long=long,
                     r_pullup=r_pullup, v_pullup=v_pullup)
    solve_edges(stretches, [(*getattr(plan, e)[:3], d) for e, d in (
        ("rise", plan.rise_distributed), ("fall", plan.distributed))
        if not plan.own_point(e)])  # those of the far end in one march
    rise, fall = (_own_point_edge(stretches, plan, e) if plan.own_point(e) else
                  simulate_edge(stretches, *getattr(plan, e), edge=e,
                                distributed=plan.rise_distributed if e == "rise"
                                else plan.distributed) for e in ("rise", "fall"))
    ref = ref_times(driver, model, plan, r_pullup)
    fast = (None, None)
    if driver.pin.drive != "open-drain" and model.fast is not None:
        fast = _fast_edges(stretches, model.fast, rs, plan.c_far, plan.v_high, long)
    return DriveCase(driver, model, rs, plan.c_far, plan.distributed, rise, fall, ref,
                     plan.v_low, plan.v_high, *fast)


def _own_point_edge(stretches: Sequence[Stretch], plan: EdgePlan, edge: str) -> EdgeWave:
    """One edge of :func:`drive_case` with the driver's own pin (``plan.c_own``) at its
    point and the rest at the far end: the line as a chain of points (the tree solver's),
    the edge read at the far end."""
    from pinlib.engines.pushline.routes import route_net, tree_edges

    r, ramp, c_far, v_from, v_to = getattr(plan, edge)
    lines = [st for st in stretches if st.td > 0]
    net = route_net([(f"p{i}", f"p{i + 1}") for i in range(len(lines))], lines, "p0")
    caps = [0.0] * len(net.names)
    caps[0] += plan.c_own
    # a stretch without a delay, as simulate_edge takes it: a capacitance at the far end
    caps[-1] += c_far + sum(st.c for st in stretches if not st.td > 0)
    waves = tree_edges(net, 0, r, ramp, caps, v_from, v_to, distributed=True, edge=edge,
                       keep=[len(net.names) - 1])
    return waves.at(len(net.names) - 1)


def ref_times(driver: Endpoint, model: drv.Driver, plan: EdgePlan,
              r_pullup: float | None = None) -> dict:
    """For each edge of :func:`drive_case`, when the driver's pin would cross the timing
    reference level into its datasheet ``test_load`` (``DriveCase.ref``; a batched study
    asks first, so that what a position's candidates share is worked out once). [s]"""
    c_test = _test_load(driver.device)
    if driver.pin.drive == "open-drain":
        rp, r_th = float(r_pullup), plan.fall[0]
        return {"rise": _ref_time(0.0, rp * c_test),
                "fall": _ref_time(model.t_ramp_fall, r_th * c_test)}
    return {"rise": _ref_time(model.t_ramp_rise, model.r_rise * c_test),
            "fall": _ref_time(model.t_ramp_fall, model.r_fall * c_test)}


def _ref_time(t_ramp: float, tau: float) -> float:
    """When a ramp through ``tau`` crosses the timing reference level (once per run). [s]"""
    return memo.remember(("pushline.ref_time", t_ramp, tau), lambda: float(
        rc.ramp_rc_crossing(_REF_LEVEL, t_ramp, tau)))


@value_class(frozen=True)
class EdgePlan:
    """What :func:`drive_case` solves: each edge as ``(r_source, t_ramp, c_far, v_from,
    v_to)`` (the arguments of :func:`simulate_edge` after the sections), whether the
    chain of lines is solved for each, and the line's static levels.  Batched studies
    read it to solve the same edges together (:mod:`pinlib.engines.pushline.batchsolve`)."""

    rise: tuple
    fall: tuple
    distributed: bool
    rise_distributed: bool
    c_far: float
    v_low: float
    v_high: float
    c_own: float = 0.0

    def own_point(self, edge: str) -> bool:
        """Whether ``edge`` is solved with the driver's own pin at its point of the line
        (``c_own``, an open-drain sink's pin on an edge solved as a line), not at the far
        end with the rest: :func:`drive_case` solves it as a chain of two points, not
        by :func:`simulate_edge`. [1]"""
        dist = self.rise_distributed if edge == "rise" else self.distributed
        return self.c_own > 0 and dist


def edge_plan(stretches: Sequence[Stretch], driver: Endpoint, model: drv.Driver,
              loads: Sequence[Endpoint], rs: float, extra_c: float, *, long: bool,
              r_pullup: float | None = None, v_pullup: float | None = None,
              spread: bool = False) -> EdgePlan:
    """The edges :func:`drive_case` solves for these inputs (same arguments); ``spread``:
    the driver's loads sit at more than one point of a route
    (:func:`~pinlib.engines.pushline.routes.pins_spread`), which holds the lumping of
    its edges (a push-pull driver's, an open-drain sink's fall) to
    :data:`~pinlib.engines.pushline.rules.SPREAD_INDUCTANCE_LIMIT`."""
    c_far = sum(p.c_in for p in loads) + extra_c
    if driver.pin.drive == "open-drain":
        rp = float(r_pullup)
        v_lo, v_hi, r_th = _open_drain_levels(driver, loads, model, rs, rp, v_pullup)
        # The sink's own pin is on the net whether it sinks or not: the pull-up charges
        # it on the rise and the sink discharges it on the fall, at the driver's own
        # point (ngspice agrees: tests/test_gpio_spice.py). An edge solved as one lumped
        # capacitance counts it with the rest; an edge solved as a line keeps it at the
        # driver's point (c_own), which drive_case solves as a chain of two points.
        c_all = c_far + driver.c_in
        # the rise is a step through the pull-up: a line for it only where its RC would
        # be off (L / (R^2 C) against PULLUP_RISE_INDUCTANCE_LIMIT: the line's
        # inductance rings between the spread capacitances), not for being long against
        # the sink's fast fall; and not behind a series resistor, which parts the sink's
        # pin from the line's pull-up on the board (one source cannot hold that: as a
        # line the rise read up to 10 % faster than ngspice, lumped about 2 % slower)
        rise_dist = rs <= 0 and needs_distributed(stretches, rp, c_all, False,
                                                  PULLUP_RISE_INDUCTANCE_LIMIT)
        # the fall's capacitance is spread too wherever the sink has a pin: its own at
        # its point, the inputs along the line (one input 6 cm away, 400 Ω against
        # 2 kΩ, lumped at 0.01: 2.56 % slower than ngspice; tests/test_gpio_spice.py)
        distributed = needs_distributed(stretches, r_th, c_all, long,
                                        _limit(spread or driver.c_in > 0))
        own = driver.c_in if (rise_dist or distributed) and driver.c_in > 0 else 0.0
        return EdgePlan((rp, 0.0, c_far if rise_dist and own else c_all, v_lo, v_hi),
                        (r_th, model.t_ramp_fall, c_far if distributed and own else c_all,
                         v_hi, v_lo), distributed, rise_dist, c_all, v_lo, v_hi, own)
    vdd = driver.vdd
    distributed = needs_distributed(stretches, min(model.r_rise, model.r_fall) + rs, c_far,
                                    long, _limit(spread))
    return EdgePlan((model.r_rise + rs, model.t_ramp_rise, c_far, 0.0, vdd),
                    (model.r_fall + rs, model.t_ramp_fall, c_far, vdd, 0.0), distributed,
                    distributed, c_far, 0.0, vdd)


def _open_drain_levels(driver: Endpoint, loads: Sequence[Endpoint], model: drv.Driver,
                       rs: float, rp: float, v_pullup) -> tuple[float, float, float]:
    """An open-drain line's low and high levels and the Thevenin resistance of its sink
    against the pull-up: ``(v_lo, v_hi, r_th)`` (the pins' leakage through the pull-up
    lowers the high level). [V, V, Ω]"""
    leak = net_leakage(list(loads) + [driver])
    v_hi = max(float(v_pullup) - leak * rp, 0.0)
    r_sink = model.r_fall + rs
    return v_hi * r_sink / (r_sink + rp), v_hi, r_sink * rp / (r_sink + rp)


def _limit(spread: bool) -> float:
    """The largest ``L / (R^2 C)`` an edge driven through a source resistance (a
    push-pull driver's, an open-drain sink's fall) is lumped at: the pins' capacitance
    spread along a route rings through the line's inductance between them."""
    return SPREAD_INDUCTANCE_LIMIT if spread else LUMPED_INDUCTANCE_LIMIT


def _fast_distributed(stretches: Sequence[Stretch], fast: drv.Driver, rs: float,
                      c_far: float, long: bool, spread: bool = False) -> bool:
    """Whether the fast corner's edges solve the line as distributed: it is electrically
    long for them when it is for the slow corner or against the fast corner's own edge
    into the pins (``spread``: as :func:`edge_plan`'s)."""
    alone = min(float(drv.edge_time(fast.r_rise, fast.t_ramp_rise, c_far)),
                float(drv.edge_time(fast.r_fall, fast.t_ramp_fall, c_far)))
    long = long or line_model(stretches, alone)[0]
    return needs_distributed(stretches, min(fast.r_rise, fast.r_fall) + rs, c_far, long,
                             _limit(spread))


def _fast_edges(stretches: Sequence[Stretch], fast: drv.Driver, rs: float, c_far: float,
                vdd: float, long: bool) -> tuple[EdgeWave, EdgeWave]:
    """Both edges of a driver's fast corner.  The line is electrically long for them when
    it is for the slow corner or against the fast corner's own edge into the pins."""
    distributed = _fast_distributed(stretches, fast, rs, c_far, long)
    rise = simulate_edge(stretches, fast.r_rise + rs, fast.t_ramp_rise, c_far, 0.0, vdd,
                         distributed=distributed, edge="rise")
    fall = simulate_edge(stretches, fast.r_fall + rs, fast.t_ramp_fall, c_far, vdd, 0.0,
                         distributed=distributed, edge="fall")
    return rise, fall


def route_case(net: RouteNet, stretches: Sequence[Stretch], driver: Endpoint,
               model: drv.Driver, loads: Sequence[Endpoint], rs: float, extra_c: float, *,
               long: bool, r_pullup: float | None = None,
               v_pullup: float | None = None,
               sensed: Sequence[str] | None = None) -> DriveCase:
    """Both edges of one driver at its own point of a routed line, at every point.

    Parameters are those of :func:`drive_case`, with ``net`` the route's tree: each
    load's capacitance sits at its own point, the extra capacitance at the route's far
    point.  ``rise`` and ``fall`` of the case are the edges at the load farthest in delay
    from the driver; :meth:`DriveCase.wave_at` gives any device's.  ``sensed``: the
    devices whose edges the checks read (the line's receivers); the records of the other
    points are not kept (made again if read), None keeps every point's.
    """
    from pinlib.engines.pushline.routes import node_caps, pins_spread, tree_edges

    caps = node_caps(net, {p.ref: p.c_in for p in loads}, extra_c)
    src = net.node(driver.ref)
    delays = net.delays_from(src)
    far = max((net.node(p.ref) for p in loads), key=delays.__getitem__, default=src)
    keep = None if sensed is None else [far, *(net.node(r) for r in sensed)]
    spread = pins_spread(net, [p.ref for p in loads], extra_c)
    plan = edge_plan(stretches, driver, model, loads, rs, extra_c, long=long,
                     r_pullup=r_pullup, v_pullup=v_pullup, spread=spread)
    c_far, distributed, v_lo, v_hi = plan.c_far, plan.distributed, plan.v_low, plan.v_high
    points = {}
    # an open-drain sink's own pin is on the net whether it sinks or not: the pull-up
    # charges it on the rise and the sink discharges it on the fall, at its point
    od_caps = caps if driver.pin.drive != "open-drain" else node_caps(
        net, {**{p.ref: p.c_in for p in loads}, driver.ref: driver.c_in}, extra_c)
    for edge, (r, ramp, _, v_from, v_to), dist in (
            ("rise", plan.rise, plan.rise_distributed), ("fall", plan.fall, distributed)):
        points[edge] = tree_edges(net, src, r, ramp, od_caps, v_from, v_to,
                                  distributed=dist, edge=edge, keep=keep)
    ref = ref_times(driver, model, plan, r_pullup)
    fast = None
    if driver.pin.drive != "open-drain" and model.fast is not None:
        f = model.fast
        f_dist = _fast_distributed(stretches, f, rs, c_far, long, spread)
        fast = {"rise": tree_edges(net, src, f.r_rise + rs, f.t_ramp_rise, caps, 0.0, v_hi,
                                   distributed=f_dist, edge="rise", keep=keep),
                "fall": tree_edges(net, src, f.r_fall + rs, f.t_ramp_fall, caps, v_hi, 0.0,
                                   distributed=f_dist, edge="fall", keep=keep)}
    fast_far = (None, None) if fast is None else (fast["rise"].at(far), fast["fall"].at(far))
    return DriveCase(driver, model, rs, c_far, distributed, points["rise"].at(far),
                     points["fall"].at(far), ref, v_lo, v_hi, *fast_far, net, points,
                     tuple(p.ref for p in loads), fast)
