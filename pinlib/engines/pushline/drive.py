"""One driver on a line with its loads and series resistor: both edges at the far end
(:class:`DriveCase`)."""

from __future__ import annotations

import warnings
from collections.abc import Sequence
from dataclasses import dataclass

from pinlib.core.errors import PinlibError
from pinlib.engines.pushline.pins import Endpoint, Flight
from pinlib.engines.pushline.routes import RouteNet, node_caps, tree_edges
from pinlib.engines.pushline.rules import _REF_LEVEL
from pinlib.engines.pushline.sections import Stretch, needs_distributed
from pinlib.engines.pushline.waves import EdgeWave, simulate_edge
from pinlib.library.schema import Pin
from pinlib.model.design import Device
from pinlib.physics import driver as drv
from pinlib.physics import rc


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
    net : RouteNet or None
        A routed line's tree; None for the simple form (every pin at the far end). [1]
    points : dict or None
        On a routed line, the :class:`PointWaves` of each edge; ``rise`` and ``fall``
        are then the edges at the device farthest (in delay) from the driver. [1]
    load_refs : tuple of str
        On a routed line, the devices whose pins load the driver. [1]
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
    net: RouteNet | None = None
    points: dict | None = None
    load_refs: tuple = ()

    def wave(self, edge: str) -> EdgeWave:
        return self.rise if edge == "rise" else self.fall

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

    def flight(self, receiver: Endpoint, edge: str) -> Flight:
        """Earliest and latest flight of one edge to a receiver's thresholds. [s]

        Early: VIL on a rise, VIH on a fall; late the other way round.  A receiver
        without thresholds is taken to switch at half its supply.
        """
        v_il, v_ih = _thresholds(receiver)
        w = self.wave_at(receiver.ref, edge)
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
    ref = _source_ref(driver.device, model, c_test)
    return DriveCase(driver, model, rs, c_far, distributed, rise, fall, ref, 0.0, vdd)


def _source_ref(device: Device, model: drv.Driver, c_test: float) -> dict:
    """When the driver's pin would cross 50 % of its swing into its ``test_load``. [s]"""
    return {"rise": float(rc.ramp_rc_crossing(_REF_LEVEL, model.t_ramp_rise,
                                              model.r_rise * c_test)),
            "fall": float(rc.ramp_rc_crossing(_REF_LEVEL, model.t_ramp_fall,
                                              model.r_fall * c_test))}


def route_case(net: RouteNet, stretches: Sequence[Stretch], driver: Endpoint,
               model: drv.Driver, loads: Sequence[Endpoint], rs: float, extra_c: float, *,
               long: bool, r_pullup: float | None = None,
               v_pullup: float | None = None) -> DriveCase:
    """Both edges of one driver at its own point of a routed line, at every point.

    Parameters are those of :func:`drive_case`, with ``net`` the route's tree: each
    load's capacitance sits at its own point, the extra capacitance at the route's far
    point.  ``rise`` and ``fall`` of the case are the edges at the load farthest in delay
    from the driver; :meth:`DriveCase.wave_at` gives any device's.
    """
    caps = node_caps(net, {p.ref: p.c_in for p in loads}, extra_c)
    c_far = sum(p.c_in for p in loads) + extra_c
    src = net.node(driver.ref)
    c_test = _test_load(driver.device)
    if driver.pin.drive == "open-drain":
        rp, v_hi = float(r_pullup), float(v_pullup)
        leak = sum(float(p.pin.leakage.at()) for p in list(loads) + [driver]
                   if p.pin.leakage is not None)
        v_hi = max(v_hi - leak * rp, 0.0)
        r_sink = model.r_fall + rs
        v_lo = v_hi * r_sink / (r_sink + rp)
        r_th = r_sink * rp / (r_sink + rp)
        distributed = needs_distributed(stretches, r_th, c_far, long)
        points = {"fall": tree_edges(net, src, r_th, model.t_ramp_fall, caps, v_hi, v_lo,
                                     distributed=distributed, edge="fall"),
                  # The pull-up (>> Z0) charges the line as one capacitance.
                  "rise": tree_edges(net, src, rp, 0.0, caps, v_lo, v_hi, distributed=False,
                                     edge="rise")}
        ref = {"rise": float(rc.ramp_rc_crossing(_REF_LEVEL, 0.0, rp * c_test)),
               "fall": float(rc.ramp_rc_crossing(_REF_LEVEL, model.t_ramp_fall,
                                                 r_th * c_test))}
    else:
        v_lo, v_hi = 0.0, driver.vdd
        distributed = needs_distributed(stretches, min(model.r_rise, model.r_fall) + rs,
                                        c_far, long)
        points = {"rise": tree_edges(net, src, model.r_rise + rs, model.t_ramp_rise, caps,
                                     0.0, v_hi, distributed=distributed, edge="rise"),
                  "fall": tree_edges(net, src, model.r_fall + rs, model.t_ramp_fall, caps,
                                     v_hi, 0.0, distributed=distributed, edge="fall")}
        ref = _source_ref(driver.device, model, c_test)
    delays = net.delays_from(src)
    far = max((net.node(p.ref) for p in loads), key=delays.__getitem__, default=src)
    return DriveCase(driver, model, rs, c_far, distributed, points["rise"].at(far),
                     points["fall"].at(far), ref, v_lo, v_hi, net, points,
                     tuple(p.ref for p in loads))
