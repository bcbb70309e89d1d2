"""An SPI bus's routed lines through the line engine and the flights taken from their waveforms
(:func:`spi_analysis`)."""

from __future__ import annotations

import math
from dataclasses import field

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import DesignError
from pinlib.core.labels import and_list, few_named
from pinlib.core.valueclass import value_class
from pinlib.engines.pushline import (
    EDGE_FRACTION,
    SIGNAL_FUNCTION,
    LineInputs,
    endpoint,
    is_bridge,
    pulled_to_bus,
)
from pinlib.engines.spi.budget import ControllerTiming, PeripheralTiming, budget_terms
from pinlib.engines.spi.margins import max_clock
from pinlib.engines.spi.modecheck import mode_limits
from pinlib.engines.spi.modes import (
    _CONTROLLER_DRIVES,
    _SPI_ORDER,
    CS_LAG_SOURCE,
    CS_LEAD_SOURCE,
    SpiMode,
    spi_mode,
)
from pinlib.model.design import Bus, Design, Device
from pinlib.model.result import soft_basis, softest


@value_class
class SpiAnalysis:
    """The lines and timing of one SPI bus.

    Attributes
    ----------
    bus : Bus
        The bus. [1]
    mode : SpiMode
        Its clock mode. [1]
    lines : dict
        :class:`LineAnalysis` by signal, routed signals only. [1]
    controller : ControllerTiming
        The controller's timing. [s]
    peripherals : list of PeripheralTiming
        Flights and timing of each peripheral. [s]
    t_bridge : float
        One crossing of every bridging part in the path. [s]
    terms : list of Term
        Every timing requirement as a function of the period. [s]
    f_limits : list of (str, float, str)
        Clock limits of the parts: (ref, f_max, source). [Hz]
    edge_terms : list of (str, float)
        Slowest far-end edge of each line, for the edge-time rule. [s]
    notes : list of str
        What was assumed or skipped. [1]
    mode_limits : list of ModeLimit
        The SPI modes each part states. [1]
    soft_limits : dict
        The soft basis (:func:`pinlib.model.result.soft_basis`) of a part's clock limit or
        modes no datasheet or standard stands behind, by ``("f-max", ref)`` or
        ``("spi-mode", ref)``: their checks warn where they would fail. [1]
    """

    bus: Bus
    mode: SpiMode
    lines: dict
    controller: ControllerTiming
    peripherals: list
    t_bridge: float
    terms: list
    f_limits: list
    edge_terms: list
    notes: list
    mode_limits: list = ()
    soft_limits: dict = field(default_factory=dict)

    def max_clock(self) -> float:
        """Highest clock at which every timing margin and every part's ``f_max`` hold:
        the limits of the parts' data (the edge rule of thumb is
        :meth:`edge_rule_clock`, beside it). [Hz]"""
        return self.clock_limits()[0][0]

    def clock_limits(self) -> list[tuple[float, str, str]]:
        """Each timing requirement's and each part's own highest clock, lowest first:
        ``(clock, name, source)``, the name as ``"cipo-setup U2"`` or ``"f_max U1"`` and
        the source of its limit (a term's
        :attr:`~pinlib.engines.spi.budget.Term.check_source`, which names a CS lead or lag
        it assumes); an unlimited bus gives ``[(inf, "nothing", "")]``. The first sets
        :meth:`max_clock`. [Hz]"""
        f_terms = term_clocks(self.terms)
        out = [(float(f), f"{t.id} {t.subject}", t.check_source)
               for f, t in zip(f_terms, self.terms, strict=True)]
        out += [(float(f), f"f_max {ref}", source) for ref, f, source in self.f_limits]
        out.sort(key=lambda x: x[0])
        return out or [(math.inf, "nothing", "")]

    def edge_rule_clock(self) -> tuple[float, str]:
        """Highest clock at which every line's far-end edge keeps within
        :data:`~pinlib.engines.pushline.EDGE_FRACTION` of the period (a rule of thumb),
        and the line that sets it. [Hz]"""
        if not self.edge_terms:
            return (math.inf, "nothing")
        f_edges = np.atleast_1d(max_clock([[EDGE_FRACTION]] * len(self.edge_terms),
                                          [[_finite_or_inf(e)] for _, e in self.edge_terms]))
        return min((float(f), sig) for f, (sig, _) in zip(f_edges, self.edge_terms,
                                                          strict=True))


def _finite_or_inf(x: float) -> float:
    return x if math.isfinite(x) else math.inf


def term_clocks(terms: list) -> np.ndarray:
    """Each timing term's own highest clock (:func:`~pinlib.engines.spi.margins.max_clock`
    of its one margin), shape ``(len(terms),) + shape of b``: ``b`` may be an array of
    boards (:mod:`pinlib.engines.ppcorners`), each clock then elementwise. [Hz]"""
    if not terms:
        return np.zeros((0,))
    b = np.broadcast_arrays(*[np.asarray(t.b, dtype=float) for t in terms])
    a = np.array([t.a for t in terms], dtype=float).reshape((-1,) + (1,) * b[0].ndim)
    k = np.stack([t.required - x for t, x in zip(terms, b, strict=True)])
    k = np.where(np.isfinite(k), k, math.inf)
    return max_clock(np.broadcast_to(a, k.shape)[..., None], k[..., None])


def line_flights(sig: str, la, controller: Device, p: Device, bus: Bus):
    """The flights one routed line gives a peripheral's timing budget: on ``sclk``
    and ``cs`` each edge's (``{"rise": Flight, "fall": Flight}``; CS asserts on its fall)
    from the controller, on ``copi`` both edges' from the controller, on ``cipo`` both
    edges' from the peripheral back to the controller; None where the peripheral (or,
    on ``cipo``, the controller) has no pin on the line or does not drive it. [s]"""
    cases = la.cases
    if sig == "cipo":
        back = endpoint(controller, SIGNAL_FUNCTION["cipo"], bus)
        return None if back is None or p.ref not in cases else cases[p.ref].flight_both(back)
    e = endpoint(p, SIGNAL_FUNCTION[sig], bus)
    if e is None:
        return None
    case = cases[controller.ref]
    if sig in ("sclk", "cs"):
        return {edge: case.flight(e, edge) for edge in ("rise", "fall")}
    return case.flight_both(e)


def _far_side_notes(bus: Bus, controller: Device, peripherals: list,
                    bridges: list) -> list[str]:
    """What a bridge on an SPI bus leaves out: each signal is one net from its driver to
    every device, the bridge a load and a delay (``t_pd``) in it, so a device on another
    rail than the controller's is checked against the controller's levels and edges,
    not those of the bridge's far side (the design format has no place for that side
    on an SPI bus). One note naming them, or none. [1]"""
    if not bridges:
        return []
    from pinlib.core.quantity import format_si
    from pinlib.engines.pushline import device_supply

    own = device_supply(controller, bus)
    away = [f"{p.ref} at {format_si(device_supply(p, bus), 'V')}" for p in peripherals
            if abs(device_supply(p, bus) - own) > 1e-9 * own]
    if not away:
        return []
    refs = ", ".join(f"{b.ref} ({b.part_id})" for b in bridges)
    its = "its far side is" if len(bridges) == 1 else "their far sides are"
    return [f"{refs}: {its} not modelled: each signal runs as one net from its "
            f"driver, so {few_named(away)} {'is' if len(away) == 1 else 'are'} checked "
            f"against the controller's {format_si(own, 'V')} levels and edges, not the far "
            "side's drive (a level check there fails where the bridge would translate)"]


def _sourced_text(device: Device, name: str) -> str:
    """Where a timing value of a device's part comes from, for a check's ``source``: the
    part whose file set it (for a value inherited through ``extends``, the class it came
    from, not the part placed) and that value's own source or basis.  The placed part's
    provenance stands in only for a value the part states itself without a source.  A
    value the part lacks is cited as lacking (the budget takes it as 0): its file's
    provenance is not where a number that was never stated came from."""
    got = getattr(device.part.timing, name)
    part = device.part
    own_text = part.provenance.source or part.provenance.basis
    if got is None:
        return f"{device.part_id} records no {name}: taken as 0"
    origin = got.origin or device.part_id
    if origin == device.part_id:
        text = got.source or own_text
    else:
        text = got.source or got.basis or got.provenance_text()
    return f"{origin} {name}: {text}"


def _soft_values(device: Device) -> dict:
    """The soft basis (:func:`pinlib.model.result.soft_basis`) of each of a device's
    timing values that no datasheet or standard stands behind, by name."""
    timing = device.part.timing
    got = {n: soft_basis(getattr(timing, n, None)) for n in _TIMING_NAMES}
    return {n: b for n, b in got.items() if b is not None}


def _level_state(lines: dict, ref: str, signals) -> str | None:
    """How firm the thresholds are that a signal received at ``ref`` may never cross,
    for a timing term with no time at all: its lines' failing ``level-high`` and
    ``level-low`` checks at that receiver say it (a signal that never crosses VIH has a
    high level below it).  ``"firm"`` where any of them fails against a firm limit, else
    the soft basis of those that would fail (``details["limit_basis"]``), else None
    (no level short of its threshold: an edge too slow to arrive, which is
    physical)."""
    states = set()
    for sig in signals:
        la = lines.get(sig)
        if la is None:
            continue
        for c in la.result.checks:
            if (c.id in ("level-high", "level-low") and c.margin is not None
                    and c.margin < 0 and (c.subject or "").split(" ")[0] == ref):
                states.add(c.details.get("limit_basis") or "firm")
    return "firm" if "firm" in states else softest(states)


#: The timing values a budget term or clock limit takes from a part.
_TIMING_NAMES = ("t_valid", "t_setup", "t_hold", "t_cs_setup", "t_cs_hold", "t_cs_valid",
                 "f_max", "t_high", "t_low")


def _timing_value(device: Device, name: str) -> float | None:
    got = getattr(device.part.timing, name)
    return None if got is None else float(got.at())


def _spi_lines(bus: Bus, design: Design) -> tuple[dict, Device, list, list, list]:
    inputs, controller, peripherals, bridges, notes = line_setup(bus, design)
    out = {sig: li.analyse() for sig, li in inputs.items()}
    return out, controller, peripherals, bridges, notes


def spi_line_inputs(bus: Bus, design: Design, only: str | None = None) -> list[LineInputs]:
    """The inputs of every line analysis :func:`spi_analysis` makes on the bus, in its
    order (a batched study solves their edges first:
    :func:`pinlib.engines.pushline.batchsolve.prefetch`).

    Parameters
    ----------
    bus : Bus
        An ``spi`` bus of ``design``. [1]
    design : Design
        The loaded design. [1]
    only : str, optional
        The signal of the one line wanted; every line by default. [1]

    Returns
    -------
    list of LineInputs

    Raises
    ------
    DesignError
        As :func:`spi_analysis`.
    """
    return list(line_setup(bus, design, only)[0].values())


def line_setup(bus: Bus, design: Design,
               only: str | None = None) -> tuple[dict, Device, list, list, list]:
    """What :func:`spi_analysis` starts from: the :class:`LineInputs` of each line it
    analyses (by signal, in its order; of the line ``only`` alone when given), the
    controller, the peripherals and the bridging parts (devices of ``bus``), and the
    notes of what it skips. [1]"""
    controller = bus.controllers[0]  # the loader admits one on an SPI bus
    notes = []
    peripherals = [d for d in bus.peripherals if not is_bridge(d)]
    bridges = [d for d in bus.peripherals if is_bridge(d)]
    warn = design.warn_margin
    out = {}
    for sig in _SPI_ORDER:
        if sig not in bus.lines or only not in (None, sig):
            continue
        fn = SIGNAL_FUNCTION[sig]
        line = bus.lines[sig]
        if sig in _CONTROLLER_DRIVES:
            d = endpoint(controller, fn, bus)
            if d is None or d.pin.drive != "push-pull":
                raise DesignError(M.CONTROLLER_LACKS_PUSH_PULL_PIN.format(function=fn),
                                  field=f"lines.{sig}", value=controller.part_id)
            drivers = [d]
            others = [e for e in (endpoint(p, fn, bus) for p in peripherals + bridges) if e]
            loads = [d] + others
            receivers = [e for e in others if e.pin.drive == "input"]
            if sig == "cs" and not line.route and len(others) > 1:
                notes.append(_shared_cs_note(controller, others))
        else:
            drivers = [e for e in (endpoint(p, fn, bus) for p in peripherals)
                       if e is not None and e.pin.drive == "push-pull"]
            rx = endpoint(controller, fn, bus)
            others = [e for e in (endpoint(p, fn, bus) for p in peripherals + bridges) if e]
            loads = ([rx] if rx else []) + others
            receivers = [rx] if rx is not None else []
            if not drivers:
                notes.append("cipo is routed but no peripheral drives it; line not evaluated")
                continue
        out[sig] = LineInputs(sig, pulled_to_bus(line, bus), tuple(drivers), tuple(loads),
                              tuple(receivers), clock=bus.clock, clock_line=(sig == "sclk"),
                              warn_margin=warn, bus_id=bus.id)
    return out, controller, peripherals, bridges, notes


def _shared_cs_note(controller: Device, pins: list) -> str:
    """What the one CS line of a bus with several peripherals stands for: the design
    gives one CS description, and pinlib solves it as one net loading every peripheral's
    CS pin; a board with a chip select per peripheral has lighter lines."""
    named = and_list(p.ref for p in pins)
    return (f"cs: solved as one net from {controller.ref} to the CS pins of {named} "
            "together; where each peripheral has a chip select of its own (the usual "
            "board), each of those lines carries one pin, so its edges are faster and "
            "may overshoot and ring more than shown: to check each on its own, describe "
            "it on a GPIO bus of its own (the controller's and that peripheral's cs pins; "
            "a route drawn for cs is taken as the one net it draws)")


def spi_analysis(bus: Bus, design: Design) -> SpiAnalysis:
    """Lines and timing terms of an SPI bus (what :func:`evaluate_bus` reports).

    Parameters
    ----------
    bus : Bus
        An ``spi`` bus of ``design``. [1]
    design : Design
        The loaded design. [1]

    Returns
    -------
    SpiAnalysis
    """
    mode = spi_mode(bus.spi_mode)
    lines, controller, peripherals, bridges, notes = _spi_lines(bus, design)
    ct = controller.part.timing
    c_sources = {n: _sourced_text(controller, n) for n in ("t_valid", "t_setup", "t_hold",
                                                           "t_cs_setup", "t_cs_hold",
                                                           "f_max")}
    ctl = ControllerTiming(controller.ref, _timing_value(controller, "t_valid"),
                               _timing_value(controller, "t_setup"),
                               _timing_value(controller, "t_hold"),
                               _timing_value(controller, "t_cs_setup"),
                               None if ct.f_max is None else float(ct.f_max.at()), c_sources,
                               t_cs_lag=_timing_value(controller, "t_cs_hold"),
                               soft={**_soft_values(controller), "levels": _level_state(
                                   lines, controller.ref, ("cipo",))})
    for name in ("t_valid", "t_setup", "t_hold"):
        if getattr(ct, name) is None:
            notes.append(f"{controller.ref} ({controller.part_id}) records no {name}: taken as 0")
    if ct.t_cs_setup is None:
        notes.append(f"CS lead: {CS_LEAD_SOURCE}")
    if ct.t_cs_hold is None and "cs" in lines:
        notes.append(f"CS lag: {CS_LAG_SOURCE}")
    t_bridge = 0.0
    for b in bridges:
        if b.part.timing.t_pd is not None:
            t_bridge += float(b.part.timing.t_pd.at())
            notes.append(f"{b.ref} ({b.part_id}) t_pd {b.part.timing.t_pd.text} in every path "
                         "(twice on the CIPO round trip)")
    notes += _far_side_notes(bus, controller, peripherals, bridges)
    periph_t = []
    for p in peripherals:
        sclk_f = None if "sclk" not in lines else line_flights(
            "sclk", lines["sclk"], controller, p, bus)
        if sclk_f is None:
            continue
        copi, cs, cipo = (None if sig not in lines else
                          line_flights(sig, lines[sig], controller, p, bus)
                          for sig in ("copi", "cs", "cipo"))
        tv = _timing_value(p, "t_valid")
        if cipo is not None and tv is None:
            notes.append(f"{p.ref} ({p.part_id}) records no t_valid: CIPO setup not checked")
        for name in ("t_setup", "t_hold", "t_cs_setup") + (("t_cs_hold",) if cs else ()):
            if getattr(p.part.timing, name) is None:
                notes.append(f"{p.ref} ({p.part_id}) records no {name}: taken as 0")
        t_cs_valid = _timing_value(p, "t_cs_valid")
        if mode.cpha == 0 and cipo is not None and cs is not None and t_cs_valid is None:
            notes.append(f"{p.ref} ({p.part_id}) records no t_cs_valid: a first CIPO bit "
                         "it drives when CS asserts (CPHA 0) is not budgeted")
        periph_t.append(PeripheralTiming(
            p.ref, sclk_f, copi, cs, cipo, tv, _timing_value(p, "t_setup"),
            _timing_value(p, "t_hold"), _timing_value(p, "t_cs_setup"),
            _timing_value(p, "f_max"),
            {n: _sourced_text(p, n) for n in ("t_valid", "t_setup", "t_hold", "t_cs_setup",
                                              "t_cs_hold", "t_cs_valid", "f_max", "t_high",
                                              "t_low")},
            t_cs_valid=t_cs_valid, t_cs_hold=_timing_value(p, "t_cs_hold"),
            t_high=_timing_value(p, "t_high"), t_low=_timing_value(p, "t_low"),
            soft={**_soft_values(p), "levels": _level_state(lines, p.ref,
                                                            ("sclk", "copi", "cs"))}))
    unpulsed = [p.ref for p in periph_t if p.t_high is None and p.t_low is None]
    if unpulsed:
        notes.append(f"SCLK high and low pulses not checked at {and_list(unpulsed)}: no "
                     "t_high or t_low recorded (the shortest pulse the input takes)")
    terms = budget_terms(mode, ctl, periph_t, t_bridge)
    f_limits = []
    for d in [controller] + peripherals + bridges:
        f = _timing_value(d, "f_max")
        if f is not None:
            f_limits.append((d.ref, f, _sourced_text(d, "f_max")))
    m_limits, silent = mode_limits([controller] + peripherals + bridges)
    soft_limits = {}
    for d in [controller] + peripherals + bridges:
        for cid, value in (("f-max", d.part.timing.f_max), ("spi-mode", d.part.timing.spi_modes)):
            basis = soft_basis(value)
            if basis is not None:
                soft_limits[(cid, d.ref)] = basis
    if silent:
        notes.append(f"SPI mode {mode.mode} not checked against {and_list(silent)}: "
                     "no SPI modes stated (timing.spi_modes)")
    edge_terms = []
    if bus.clock:
        for sig, la in lines.items():
            # a route checks the edge at each receiver: the slowest of them
            edges = [float(c.value) for c in la.result.checks if c.id == "edge-time"]
            if edges:
                edge_terms.append((sig, max(edges)))
    return SpiAnalysis(bus, mode, lines, ctl, periph_t, t_bridge, terms, f_limits,
                       edge_terms, notes, m_limits, soft_limits)
