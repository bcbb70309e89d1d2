"""One line through the engine: :func:`analyse_line` (memoized within a run) in its steps."""

from __future__ import annotations

import math
import warnings
from collections.abc import Sequence

from pinlib.core import messages as M
from pinlib.core.errors import DesignError, InputError
from pinlib.core.labels import and_list
from pinlib.core.quantity import format_si
from pinlib.core.tomlfile import dotted
from pinlib.core.valueclass import value_class
from pinlib.engines import memo
from pinlib.engines.pushline.analysis import (
    LineAnalysis,
    _figures_of,
    _fmt,
    _others,
    idle_pin_extremes,
)
from pinlib.engines.pushline.drive import (
    _driver_model,
    _open_drain_model,
    _own_pullup,
    net_leakage,
    net_pullups,
    open_drain_pullup,
)
from pinlib.engines.pushline.pins import Endpoint
from pinlib.engines.pushline.rules import (
    _FIGURE_UNITS,
    _SETTLE_DELAYS,
    LINE_DELAY_RULE,
    LONG_LINE_SOURCE,
    LOSS_DELAY,
    LOSS_FRACTION,
    LUMPED_RULE,
    PULLUP_RISE_RULE,
    RHO_COPPER,
    SPREAD_RULE,
)
from pinlib.engines.pushline.sections import line_model, stretches_of
from pinlib.engines.pushline.sichecks import _si_checks
from pinlib.engines.pushline.sink import sink_checks
from pinlib.engines.pushline.termination import _solve_cases, _termination_check, swing_fix
from pinlib.engines.pushline.waves import MAX_TIME_STEPS, _TooManySteps
from pinlib.engines.readout import explained
from pinlib.model.design import Line
from pinlib.model.result import Check, LineResult, check_max, rule_of_thumb
from pinlib.physics import driver as drv
from pinlib.physics import lines as tl_models
from pinlib.physics import waveform as wf


@value_class(frozen=True)
class LineInputs:
    """The arguments of one :func:`analyse_line` call, gathered before it is made (a
    batched study reads every variant's first, :mod:`pinlib.engines.pushline.batchsolve`)."""

    signal: str
    line: Line
    drivers: tuple
    loads: tuple
    receivers: tuple
    clock: float | None = None
    clock_line: bool = False
    warn_margin: float = 0.10
    bus_id: str | None = None

    def analyse(self) -> LineAnalysis:
        """:func:`analyse_line` of these inputs."""
        return analyse_line(self.signal, self.line, self.drivers, self.loads,
                            self.receivers, clock=self.clock, clock_line=self.clock_line,
                            warn_margin=self.warn_margin, bus_id=self.bus_id)


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
           *rest, explained())  # a summary's analysis is not a full one
    try:
        hash(key)
    except TypeError:
        return None
    return key


def _analyse_line(signal, line, drivers, loads, receivers, clock, clock_line, warn_margin,
                  bus_id) -> LineAnalysis:
    res = LineResult(signal=signal)
    # Validity warnings of the trace models and of the solver become notes of the line
    # (the line's own: a report names the line beside them, so they do not).
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        try:
            a = _analyse(signal, line, drivers, loads, receivers, res, clock, clock_line,
                         warn_margin)
        except _TooManySteps as exc:
            raise _steps_error(exc, line, signal, bus_id) from None
    for w in caught:
        text = str(w.message)
        if text not in res.notes:
            res.notes.append(text)
    return a


def _steps_error(exc: _TooManySteps, line: Line, signal: str, bus_id) -> InputError:
    """The error of a record too long to solve.  Where a section's delay set the step (a
    1 µm stub beside centimetres of trace: the step divides the shortest delay), it names
    that section's length in the design file, 0 (a point, as a 0 cm stub is) as the way
    out, and the length below which this record alone needs too many steps (a longer
    record of another edge may need more); else the line."""
    stretches = line_stretches(line)
    # the section solved as a line whose delay the step divides (a shorter one is lumped)
    timed = [(abs(s.td - exc.td), i) for i, s in enumerate(stretches) if s.td > 0]
    gap, i = min(timed, default=(math.nan, -1))
    td = stretches[i].td if i >= 0 else math.nan
    loc = line.sections[i].loc if 0 <= i < len(line.sections) else ()
    # (a run of stretches of one impedance is solved as one line, waves._joined: when
    # its summed delay set the step, no one stretch did, and the line is named)
    if loc and gap <= 1e-9 * td and td <= exc.dt * (1 + 1e-9):  # its delay is the step
        s = line.sections[i]
        # below this length the delay, the step, is under the record over MAX_TIME_STEPS
        shortest = _round_up(s.length * (exc.t_end / MAX_TIME_STEPS) / td)
        err = InputError(
            exc.problem, field=dotted(loc + ("length",)),
            value=f"{format_si(s.length, 'm')}, a delay of {format_si(td, 's')} as the step "
                  f"over {format_si(exc.t_end, 's')}",
            expected="0 for a point (its capacitance lumped at its two ends, as a stub far "
                     f"shorter than the edge is), or more than {format_si(shortest, 'm')} "
                     "(the least for this edge's record; another edge may need more)",
            hint="the solver's step divides the shortest section's delay"
                 + _record_setter(line, stretches, i, exc.t_end))
        err.loc = loc
        return err
    where = f"bus.{bus_id}.lines.{signal}" if bus_id else f"lines.{signal}"
    return InputError(exc.problem, field=where, value=exc.value, hint=exc.hint)


def _record_setter(line: Line, stretches, step_setter: int, t_end: float) -> str:
    """The hint's second half where another section's delay makes most of the record (a
    2 cm stretch beside 900 m: the step is the 2 cm's, the length the 900 m's): that
    section, to be shortened (or described as the cable it likely is); else empty."""
    j = max(range(len(stretches)), key=lambda k: stretches[k].td, default=-1)
    if j < 0 or j == step_setter or j >= len(line.sections) or not line.sections[j].loc:
        return ""
    # the record runs _SETTLE_DELAYS of the line's delays (waves.edge_grid, routes._record)
    if not _SETTLE_DELAYS * stretches[j].td > 0.5 * t_end:
        return ""
    s = line.sections[j]
    return (f"; the record's length is set by {dotted(s.loc)} ({format_si(s.length, 'm')}, "
            f"{_SETTLE_DELAYS:.0f} of its delays): shortened, it needs fewer steps")


def _round_up(x: float) -> float:
    """``x`` rounded up to two significant digits (a length to write). [m]"""
    scale = 10.0 ** (math.floor(math.log10(x)) - 1)
    return math.ceil(x / scale * (1 - 1e-12)) * scale


def _analyse(signal, line, drivers, loads, receivers, res, clock, clock_line, warn_margin):
    """The line analysis in its steps: sections, driver models, electrical length, the
    series resistor and the final cases, checks, figures."""
    notes = res.notes
    stretches = line_stretches(line)
    anchor = next((p.ref for p in loads if p.device.is_controller), None)
    net = _route_net(line.route, stretches, anchor) if line.route else None
    a = LineAnalysis(signal, line, stretches, list(drivers), list(loads), list(receivers),
                     result=res, net=net)
    if not a.drivers:
        raise DesignError(M.NO_DRIVER_ON_LINE, field=f"lines.{signal}",
                          hint="a push-pull or open-drain pin must sit on the line")
    _no_delay_notes(line, stretches, net is not None, notes)
    pullup = _driver_models(a, res)
    _lumped_note(a, notes)
    _open_stub_note(a, notes)
    _look_alike_note(a, notes)
    if net is not None and line.extra_capacitance > 0:
        # where on a route it sits is the engine's choice; a star's equal branches tie
        frm = anchor if anchor in net.names else line.route[0][0]
        d = net.delays_from(net.node(frm))
        far = net.names[net.far]
        ties = [net.names[k] for k, x in enumerate(d)
                if k != net.far and x >= d[net.far] * (1 - 1e-9)]
        notes.append(f"extra_capacitance {format_si(line.extra_capacitance, 'F')} sits at "
                     f"{far}, the route's point farthest in delay from {frm}"
                     + (f" ({', '.join(ties)} as far: it goes to the first the route "
                        "names)" if ties else ""))
    if not a.drivers:
        for name, unit in _FIGURE_UNITS:
            res.figure(name, None, unit)
        return a
    _electrical_length(a, notes)
    _loss_note(a, notes)
    _trace_models_note(a, notes)
    _solve_cases(a, pullup, clock, clock_line, warn_margin, notes)
    _add_checks(a, res, clock, clock_line, warn_margin, pullup)
    _add_figures(a, res)
    return a


def _no_delay_notes(line: Line, stretches, routed: bool, notes: list) -> None:
    """Notes on the sections without a delay: one given a capacitance without its delay
    counts as a lumped capacitance; one of 0 length is a point (no capacitance: on a
    route its two points are one).  On a route (or a chain of sections) the notes name
    which."""
    def name(i):
        return "–".join(line.route[i]) if line.route else f"section {i + 1}"

    def named(idx):
        return f" ({', '.join(name(i) for i in idx)})" if len(stretches) > 1 else ""

    lumped = [i for i, s in enumerate(stretches) if not s.td > 0 and s.length > 0]
    points = [i for i, s in enumerate(stretches) if not s.td > 0 and not s.length > 0]
    if lumped:
        notes.append(f"a section without a delay{named(lumped)} counts as a lumped "
                     "capacitance " + ("half at each of its two points" if routed
                                       else "at the far end"))
    if points:
        notes.append(f"a section of 0 length{named(points)} is a point, without "
                     "capacitance" + (": its two points are one" if routed else ""))


def _trace_models_note(a: LineAnalysis, notes: list) -> None:
    """The model behind each board geometry of the line, with its Z0 (the open-drain
    engine's trace note says the same of a bus's traces): only text, so it is left out
    where no text is read."""
    if not explained() or len(a.stretches) != len(a.line.sections):
        return
    seen: dict[str, str] = {}
    for sec, st in zip(a.line.sections, a.stretches, strict=True):
        g = sec.geometry
        if g is not None and g.name not in seen:
            seen[g.name] = (f"'{g.name}' ({g.kind}, Z0 {_fmt(st.z0, 'Ω')}; "
                            f"{tl_models.method_label(g.kind, g.method)})")
    if seen:
        notes.append("trace: " + "; ".join(seen.values()))


def _loss_note(a: LineAnalysis, notes: list) -> None:
    """A note where the lossless model flatters the line (:data:`LOSS_RULE`): its traces'
    copper resistance against Z0, or the delay of its sections that carry no resistance."""
    z0s = [s.z0 for s in a.stretches if s.td > 0]
    if not z0s:
        return  # a lumped capacitance: no line to be lossy
    # (a geometry of zero thickness, the models' thin-strip limit, states no resistance)
    r_dc = sum(RHO_COPPER * st.length / (sec.geometry.width * sec.geometry.thickness)
               for sec, st in zip(a.line.sections, a.stretches, strict=True)
               if sec.geometry is not None and sec.geometry.thickness > 0)
    bare = [st for sec, st in zip(a.line.sections, a.stretches, strict=True)
            if sec.geometry is None and st.td > 0]
    td_bare = sum(st.td for st in bare)
    z_low = min(z0s)
    effect = ("pinlib solves the line lossless, so the far-end edges are likely slower "
              "and the overshoot smaller than shown; confirm them by measurement or a lossy "
              "line model (common practice, no source)")
    if r_dc >= LOSS_FRACTION * z_low:
        notes.append(f"the traces' copper resistance, {_fmt(r_dc, 'Ω')} (DC at 20 °C, "
                     f"IEC 60028 copper; more on an edge), is {r_dc / z_low * 100:.0f} % of Z0 "
                     f"{_fmt(z_low, 'Ω')}: {effect}")
    if td_bare >= LOSS_DELAY:
        kinds = " and ".join(dict.fromkeys(st.label for st in bare))
        notes.append(f"{_fmt(sum(st.length for st in bare), 'm')} of {kinds} (a delay of "
                     f"{_fmt(td_bare, 's')}) carry no resistance or dielectric loss: "
                     f"{effect}")


def _lumped_note(a: LineAnalysis, notes: list) -> None:
    """A note naming each section short enough against a driver's ramp to be solved as
    its capacitance (:data:`pinlib.physics.waveform.LUMP_FRACTION`, 1/1000)."""
    ramps = [r for m in a.models.values()
             for c in (m, m.fast) if c is not None for r in (c.t_ramp_rise, c.t_ramp_fall)]
    slowest = max(ramps, default=0.0)
    for i, s in enumerate(a.stretches):
        if not wf.is_short(s.td, slowest):
            continue
        name = ("–".join(a.line.route[i]) if a.line.route else f"section {i + 1}")
        where = "half at each of its two points" if a.net else "at the far end"
        notes.append(
            f"{name} ({format_si(s.length, 'm')}, a delay of {format_si(s.td, 's')}) counts "
            f"as a lumped capacitance, {where}, on each edge whose ramp is longer than "
            f"{format_si(s.td / wf.LUMP_FRACTION, 's')} (1,000 times its delay; so lumped, "
            "stubs kept every edge within 0.5 % of ngspice's)")


def _open_stub_note(a: LineAnalysis, notes: list) -> None:
    """One note naming the ends of a route where no device on the line sits (open stubs;
    the first :data:`_STUBS_NAMED`, the rest counted): a point is a device's pin or a
    junction by its name alone, so a device misspelt or not listed on the bus, at the
    end of a stub, is read as a stub with nothing on it."""
    route = a.line.route
    if not route:
        return
    count: dict[str, int] = {}
    for pair in route:
        for p in pair:
            count[p] = count.get(p, 0) + 1
    on = {p.ref for p in a.loads} | {d.ref for d in a.drivers}
    stubs = [f"{other}–{end} ({format_si(a.line.sections[i].length, 'm')})"
             for i, (x, y) in enumerate(route) for end, other in ((x, y), (y, x))
             if count[end] == 1 and end not in on]
    if not stubs:
        return
    more = len(stubs) - _STUBS_NAMED
    listed = ", ".join(stubs[:_STUBS_NAMED]) + (f" and {more} more" if more > 0 else "")
    one = len(stubs) == 1
    notes.append(
        f"{'an open stub' if one else 'open stubs'}: {listed}: no device on the line sits "
        f"at {'its end' if one else 'their ends'}, so {'it' if one else 'each'} only "
        "loads the line and reflects its edges; if a device does, list it on the bus with "
        f"a pin on {a.signal}")


#: Open stubs one note names by their stretch (:func:`_open_stub_note`); the rest counted.
_STUBS_NAMED = 6


def _look_alike_note(a: LineAnalysis, notes: list) -> None:
    """A note naming the route's junctions named like a device
    (:func:`pinlib.model.design.route.look_alikes`): a device's reference but for its
    case, or in the middle of the route in the style of the line's devices while naming
    none; each is read as a junction, with nothing on it."""
    alike = getattr(a.line, "look_alikes", ())
    case = [(p, ref) for p, ref in alike if ref]
    style = [p for p, ref in alike if not ref]
    if case:
        listed = ", ".join(f"{p!r} (like {ref})" for p, ref in case[:_STUBS_NAMED])
        more = len(case) - _STUBS_NAMED
        notes.append(
            f"{'a point' if len(case) == 1 else 'points'} of the route named like a device "
            f"but for case or spaces: {listed}{f' and {more} more' if more > 0 else ''}; "
            "a point is a device only by its exact reference designator, so "
            f"{'it is' if len(case) == 1 else 'each is'} read as a junction with nothing "
            "on it; if the device sits there, write its reference as the bus lists it")
    if style:
        listed = ", ".join(style[:_STUBS_NAMED])
        more = len(style) - _STUBS_NAMED
        one = len(style) == 1
        notes.append(
            f"{'a junction' if one else 'junctions'} named like a device: {listed}"
            f"{f' and {more} more' if more > 0 else ''} "
            f"{'names' if one else 'name'} no device of the design, so nothing loads the "
            f"line there; if a device sits {'there' if one else 'at one'}, list it on the "
            f"bus with a pin on {a.signal}")


def line_stretches(line: Line) -> list:
    """The line's sections as :func:`stretches_of` gives them, once per run for one line;
    a trace model's warnings are given again each time (the line's notes carry them)."""
    key = ("pushline.stretches", line.sections)
    try:
        hash(key)
    except TypeError:
        return stretches_of(line.sections)

    def compute():
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            got = stretches_of(line.sections)
        return got, tuple(caught)

    got, caught = memo.remember(key, compute)
    for w in caught:
        warnings.warn_explicit(w.message, w.category, w.filename, w.lineno)
    return list(got)


def _driver_models(a: LineAnalysis, res: LineResult) -> dict:
    """Fill ``a.models``; open-drain drivers pull against the net's pull-ups.  A driver
    with no pull-up to pull against fails and leaves ``a.drivers``.  Returns the
    (pull-up, its rail) of each open-drain driver."""
    pullup = {}
    stuck = []
    for d in a.drivers:
        if d.pin.drive == "open-drain":
            own = _own_pullup(a.line, d)
            rp, rail = open_drain_pullup(a.line, a.loads, d)
            if rp is None:
                res.add(_no_pullup_check(a, d))
                stuck.append(d)
                continue
            _held_low(a, d, rp, rail)
            pullup[d.ref] = (rp, rail)
            if own is not None and not any(n.startswith("pull-up:") for n in res.notes):
                r_own, to = own
                both = "" if abs(rp - r_own) <= 1e-9 * rp else (
                    f"; with the pull-ups that parts on the line carry, {format_si(rp, 'Ω')}")
                res.notes.append(f"pull-up: {format_si(r_own, 'Ω')} to the bus supply "
                                 f"{format_si(to, 'V')} (lines.{a.signal}.pullup){both}")
            a.models[d.ref] = _open_drain_model(d.pin, d.vdd, rp, res.notes, d.label)
        else:
            a.models[d.ref] = _driver_model(d, res.notes)
    a.drivers = [d for d in a.drivers if d not in stuck]
    matched = a.matched_driver()
    a.z0 = a.z0_at(matched.ref if matched is not None else None)
    return pullup


def _held_low(a: LineAnalysis, d: Endpoint, rp: float, rail: float) -> None:
    """Refuse a line whose pins' leakage through the pull-ups would drop more than the
    rail: it never leaves 0 V, so there is no edge to solve. An error, not a failing
    check, since at a corner of the tolerances a board without the line's checks would
    read to the corner search as their worst."""
    leak = net_leakage(_others(a.loads, d) + [d])
    if not leak > 0 or rail - leak * rp > 0:
        return
    vih = [v for v in (r.level("v_ih") for r in a.receivers) if v is not None]
    reach = (f"at most {format_si((rail - max(vih)) / leak, 'Ω')}, which holds the high "
             f"level at the inputs' VIH {format_si(max(vih), 'V')}"
             if vih and rail > max(vih) else f"far below {format_si(rail / leak, 'Ω')}")
    loc = a.line.loc + ("pullup",) if a.line.loc else ()
    err = DesignError(
        M.LINE_HELD_LOW.format(signal=a.signal, rp=format_si(rp, "Ω"),
                               leak=format_si(leak, "A"), drop=format_si(leak * rp, "V"),
                               rail=format_si(rail, "V")),
        field=dotted(loc) or f"lines.{a.signal}.pullup", expected=f"a pull-up of {reach}")
    err.loc = loc  # the line's pull-up in the file (the dispatcher's line)
    raise err


def _no_pullup_check(a: LineAnalysis, d: Endpoint) -> Check:
    """``pull-up``: an open-drain driver with nothing to pull its line up; the message
    and fix name the pins whose pull-up inside the part is not counted (the device has
    no ``internal_pullups = true``), often the one the board relies on."""
    idle = [p for p in a.loads if p.pin.pullup_internal is not None
            and not p.device.internal_pullups]
    inside, last = "", "enable internal pull-ups"
    if idle:
        named = and_list(f"{p.label} ({format_si(float(p.pin.pullup_internal.at()), 'Ω')})"
                         for p in idle)
        refs = and_list(dict.fromkeys(p.device.ref for p in idle))
        inside = (f"; {named} {'has a pull-up' if len(idle) == 1 else 'have pull-ups'} "
                  f"inside the part, counted only with internal_pullups = true")
        last = f"set internal_pullups = true on {refs} (its entry on this bus)"
    return Check("pull-up", "fail", None, None, "Ω", None,
                 "an open-drain line needs a pull-up (common practice)",
                 f"{d.label} is open-drain and {a.signal} has no pull-up counted (no "
                 f"resistor of its own, no pin carrying one), so the line never "
                 f"rises{inside}", subject=d.ref,
                 fix=f"give the line a resistor to the bus supply "
                     f"(lines.{a.signal}.pullup = \"4.7 kΩ\"), use a part with an on-board "
                     f"pull-up, or {last}")


def _electrical_length(a: LineAnalysis, notes: list) -> None:
    """Electrical length against the fastest edge into the pins alone: of either corner
    of a push-pull driver whose part states a fast one (its edge makes the line long
    sooner)."""
    edge, fastest = min(((min(_edge_alone(*x) for x in _alone_of(a, d)), k)
                         for k, d in enumerate(a.drivers)), key=lambda p: p[0])
    a.edge_alone = edge
    a.long, a.ratio = line_model(a.stretches, a.edge_alone,
                                 td=a.delay if a.net is not None else None)
    # of several drivers (CIPO, a shared GPIO line) the one whose edge is the fastest
    whose = (f"{a.drivers[fastest].label}'s" if len(a.drivers) > 1 else "the driver's")
    # the edge into the lumped loads without the trace: the line's extra capacitance is
    # one of them (_alone_of)
    into = ("the pins and extra capacitance alone" if a.line.extra_capacitance > 0
            else "the pins alone")
    notes.append(f"one-way delay {_fmt(a.delay, 's')} is {a.ratio:.2f} of {whose} "
                 f"{_fmt(a.edge_alone, 's')} edge into {into}: electrically "
                 + ("long, beyond" if a.long else "short, within")
                 + f" 1/6 of the edge ({LONG_LINE_SOURCE})")


def alone_inputs(a: LineAnalysis) -> list[tuple[float, float, float]]:
    """``(r, t_ramp, c_pins)`` of each edge :func:`_electrical_length` compares (the
    drivers' models filled)."""
    return [x for d in a.drivers for x in _alone_of(a, d)]


def _alone_of(a: LineAnalysis, d) -> list[tuple[float, float, float]]:
    """``(r, t_ramp, c_pins)`` of each edge of driver ``d`` into the line's pins and extra
    capacitance alone (without the trace)."""
    out = []
    # every pin's capacitance once; each driver's load is all of them but its own
    c_in = {id(p.device): p.c_in for p in a.loads}
    c_all = sum(c_in.values())
    m = a.models[d.ref]
    c_pins = c_all - c_in.get(id(d.device), 0.0) + a.line.extra_capacitance
    out.append((m.r_fall, m.t_ramp_fall, c_pins))
    if d.pin.drive != "open-drain":
        out.append((m.r_rise, m.t_ramp_rise, c_pins))
        if m.fast is not None:
            f = m.fast
            out += [(f.r_rise, f.t_ramp_rise, c_pins), (f.r_fall, f.t_ramp_fall, c_pins)]
    return out


def alone_key(r: float, t_ramp: float, c_pins: float) -> tuple:
    """The run memo's key of :func:`_edge_alone` (a batched study stores it ahead)."""
    return ("pushline.edge_alone", r, t_ramp, c_pins)


def _edge_alone(r: float, t_ramp: float, c_pins: float) -> float:
    """A driver's 10-90 % edge into the pins alone (once per run for equal inputs). [s]"""
    return memo.remember(alone_key(r, t_ramp, c_pins),
                         lambda: float(drv.edge_time(r, t_ramp, c_pins)))


def _add_checks(a: LineAnalysis, res: LineResult, clock, clock_line, warn_margin,
                pullup: dict) -> None:
    """The signal-integrity checks of the final cases, the line delay, the series
    termination "auto" chose, and a note for a waveform that had not settled."""
    swing: list = []  # the line's one swing fix, worked out at the first check needing it
    for c in _si_checks(a, a.cases, clock, clock_line, warn_margin):
        if c.id in ("overshoot", "undershoot") and c.status != "pass" and c.fix is None:
            swing = swing or [swing_fix(a)]
            c.fix = swing[0]
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
    # the open-drain drivers' pull-ups as _driver_models found them; a push-pull
    # driver's where the line has any
    pullups = {**net_pullups(a.line, a.loads, a.drivers), **pullup}
    sinks, notes = sink_checks(a, pullups, warn_margin)
    for c in sinks:
        res.add(c)
    res.notes.extend(notes)
    for c in a.cases.values():
        for w in (c.rise, c.fall):
            if not w.settled:
                res.notes.append(f"{c.driver.label} {w.edge}: the waveform had not settled "
                                 "within 1 % at the end of the record")


def _add_figures(a: LineAnalysis, res: LineResult) -> None:
    """The line's figures, in the order of ``_FIGURE_UNITS``."""
    figs = _figures_of(a.cases, a.receivers)
    res.figure("load_capacitance", a.trace_c + max(c.c_far for c in a.cases.values()), "F")
    res.figure("trace_delay", a.delay, "s")
    res.figure("z0", a.z0, "Ω",
               reason="no section with a delay (the line is a lumped capacitance)"
               if math.isnan(a.z0) else None)
    res.figure("edge_rise_time", figs["edge_rise_time"], "s")
    res.figure("edge_fall_time", figs["edge_fall_time"], "s")
    res.figure("series_resistor", a.rs, "Ω")
    res.figure("overshoot", figs["overshoot"], "V")
    res.figure("undershoot", figs["undershoot"], "V")
    _idle_pin_notes(a, res)
    res.figure("transmission_line", bool(a.long), "")
    used = any(c.distributed for c in a.cases.values())
    res.figure("model", "distributed" if used else "lumped", "")
    if not a.long:
        res.notes.append(("distributed" if used else "lumped") + f" model: {LUMPED_RULE}")
        if any(c.driver.pin.drive == "open-drain" for c in a.cases.values()):
            res.notes.append(f"open-drain rise: {PULLUP_RISE_RULE}")
            res.notes.append(f"open-drain fall (the sink's pin at its point, the inputs "
                             f"along the line): {SPREAD_RULE}")
        if a.net is not None and _spread(a):
            res.notes.append(f"pins at several points of the route: {SPREAD_RULE}")
    res.figure("delay_to_edge_ratio", a.ratio, "")


def _idle_pin_notes(a: LineAnalysis, res: LineResult) -> None:
    """A note for each pin where the line's overshoot or undershoot figure lies that no
    check covers (:func:`~pinlib.engines.pushline.analysis.idle_pin_extremes`)."""
    by_place: dict[tuple, list] = {}
    for name, v, pin, driver, at_checked in idle_pin_extremes(a.cases, a.loads):
        by_place.setdefault((pin, driver), []).append((name, v, at_checked))
    for (pin, driver), got in by_place.items():
        what = " and ".join(f"{name} {_fmt(v, 'V')}" for name, v, _ in got)
        many = len(got) > 1
        known = [r for _, _, r in got if r is not None]
        rest = ("; the worst at a pin with a check: "
                + " and ".join(_fmt(r, "V") for r in known)) if len(known) == len(got) else ""
        res.notes.append(f"{what} (the line's {'figures' if many else 'figure'}, the worst "
                         f"at any pin) at {pin} while {driver} drives: its part states no "
                         f"abs_max for that pin, so no check covers {'them' if many else 'it'}"
                         f"{rest}")


def _spread(a: LineAnalysis) -> bool:
    """Whether a push-pull driver of the routed line ``a`` loads pins at more than one
    point of its route (:func:`pinlib.engines.pushline.routes.pins_spread`); an
    open-drain line's note says its fall's rule on every line form."""
    from pinlib.engines.pushline.routes import pins_spread

    return any(c.driver.pin.drive != "open-drain"
               and pins_spread(a.net, c.load_refs, a.line.extra_capacitance)
               for c in a.cases.values())


def _route_net(route, stretches, anchor: str | None = None):
    """:func:`pinlib.engines.pushline.routes.route_net`, imported by the first routed
    line (a design of point-to-point lines does without the tree solver's set-up)."""
    from pinlib.engines.pushline.routes import route_net

    return route_net(route, stretches, anchor)
