"""The signal-integrity checks of a line's final drive cases: overshoot, undershoot, ringing,
levels and edge time."""

from __future__ import annotations

import math

import numpy as np

from pinlib.core import messages as M
from pinlib.core.labels import plural_s
from pinlib.engines.pushline.analysis import LineAnalysis, _fmt, _others, fmt_above, fmt_below
from pinlib.engines.pushline.drive import net_leakage, net_pullups
from pinlib.engines.pushline.pins import Endpoint
from pinlib.engines.pushline.rules import (
    _RINGING_SOURCE,
    CLOCK_RINGING_SOURCE,
    EDGE_FRACTION,
    EDGE_RULE,
    UNDERSHOOT_DEFAULT,
    UNDERSHOOT_RULE,
)
from pinlib.model.result import Check, check_max, check_min, rule_of_thumb, soft_limit
from pinlib.physics.pullup.levels import held_low_level, loaded_level


def _si_checks(a: LineAnalysis, cases: dict, clock: float | None, clock_line: bool,
               warn: float) -> list[Check]:
    """Overshoot, undershoot, ringing, edge time and levels of a line's final cases."""
    checks: list[Check] = []
    table = (*_swing_table(cases), a.net,
             np.array([c.fast_rise is not None for c in cases.values()], dtype=bool))
    for p in a.loads:
        checks += _swing_checks(p, table, warn)
    drivers = {d.ref: d for d in a.drivers}
    # what each driver's DC level is loaded with: the net's pull-ups, the other pins'
    # leakage (once per line, not per receiver)
    pullups = net_pullups(a.line, a.loads, a.drivers)
    dc_load = {ref: (*pullups[ref], net_leakage(_others(a.loads, d)))
               for ref, d in drivers.items()}
    # behind a bridging part a device on another rail fails by the model's limit (its
    # far side is not modelled, and a note says so), not for want of a translator
    bridged = any(p.device.is_bridge for p in a.loads)
    for rx in a.receivers:
        v_il, v_ih = rx.level("v_il"), rx.level("v_ih")
        if v_il is None or v_ih is None or not v_ih > v_il:
            continue
        checks.append(_ringing_check(rx, cases, v_il, v_ih, clock_line))
        if rx.pin.t_transition_max is not None:
            checks.append(_transition_check(rx, cases, a.net is not None, warn, a.signal))
        for ref, c in cases.items():
            if ref != rx.ref:
                checks += _level_checks(a, rx, drivers[ref], c, dc_load[ref], v_il, v_ih,
                                        warn, named=len(drivers) > 1, advise=not bridged)
    if clock and a.net is not None:
        checks += [_edge_check(cases, clock, warn, rx) for rx in a.receivers]
    elif clock:
        checks.append(_edge_check(cases, clock, warn))
    return checks


def _swing_table(cases: dict) -> tuple[list, np.ndarray, np.ndarray, np.ndarray]:
    """Each driver's peak (rise: high level plus overshoot) and dip (fall: undershoot
    minus the low level): one value per driver, or on a route one per driver and node,
    each computed once (a line of N drivers and N pins costs N solves' extremes, not N²
    edge records); and each driver's settled high level (the same at every node). [V]"""
    refs = list(cases)
    highs = np.asarray([float(c.v_high) for c in cases.values()], dtype=float)
    peaks, dips = [], []
    for c in cases.values():  # the fast corner's edges, where a driver has one
        if c.points is None:
            rise, fall = c.si_wave("rise"), c.si_wave("fall")
            peaks.append(rise.v_to + rise.overshoot)
            dips.append(fall.undershoot - fall.v_to)
        else:
            si = c.si_points
            peaks.append(si["rise"].extremes()[0])
            dips.append(si["fall"].extremes()[1])
    return refs, np.asarray(peaks, dtype=float), np.asarray(dips, dtype=float), highs


def _swing_checks(p: Endpoint, table, warn: float) -> list[Check]:
    """Overshoot and undershoot at one pin against its abs_max (none without one), over
    every other driver's edges (at the pin's own point on a route)."""
    abs_max = p.level("abs_max")
    if abs_max is None:
        return []
    refs, peaks, dips, highs, net, fast = table
    if net is None and refs and p.ref not in refs:  # a pin that drives none of the
        own = slice(None)                            # cases: all of them, without a mask
    else:
        own = np.array([r != p.ref for r in refs], dtype=bool)
        if not own.any():
            return []
    if net is not None:
        node = net.node(p.ref)
        peaks, dips = peaks[:, node], dips[:, node]
    peak = float(peaks[own].max())
    allowed = abs_max - p.vdd
    above = peak - p.vdd
    if abs(above) <= 1e-12 * max(abs(peak), 1.0):
        above = 0.0  # a settled edge at the supply: the difference is float rounding
    dip = float(dips[own].max())
    # the checks' values are excursions beyond the rail, none when the line stays inside
    # it (a driver on a lower rail, a low level above ground); the texts give the extremes
    over, under = max(above, 0.0), max(dip, 0.0)
    low_allowed = min(allowed, UNDERSHOOT_DEFAULT)
    corner = " (fast corner)" if fast[own].any() else ""
    # on a line of several drivers (CIPO's peripherals) the one whose edge it is, named
    # even at a pin only one other drives: where a series resistor would go
    mask = np.ones(len(refs), dtype=bool) if isinstance(own, slice) else own
    mine = [r for r, keep in zip(refs, mask, strict=True) if keep]
    fix = None
    high = float(highs[own].max())
    if high - p.vdd > allowed:
        # the settled level alone breaks the rating: no edge rate or termination mends it
        fix = (f"the line settles at {_fmt(high, 'V')}, above {p.label}'s abs_max at its "
               f"{_fmt(p.vdd, 'V')} supply: a series resistor or a slower edge does not "
               "help; shift the level (a level translator, a divider) or use a receiver "
               "rated for it")
    by_peak = by_dip = ""
    if len(refs) > 1:
        by_peak = f" while {mine[int(np.argmax(peaks[own]))]} drives"
        by_dip = f" while {mine[int(np.argmax(dips[own]))]} drives"
    return [
        soft_limit(check_max(
            "overshoot", over, allowed, "V", p.source("abs_max"),
            f"peak {_fmt(peak, 'V')} at {p.label}{by_peak} against its abs_max "
            f"{_fmt(abs_max, 'V')} at {_fmt(p.vdd, 'V')}: {_relative(above)} its "
            f"supply, {_fmt(allowed, 'V')} allowed{corner}", warn_margin=warn, subject=p.ref,
            fix=fix, details={"peak": peak, "abs_max": abs_max, "supply": p.vdd}),
            p.pin.abs_max, what="abs_max"),
        # the part format records the upper rating only: the low limit is inferred
        rule_of_thumb(check_max(
            "undershoot", under, low_allowed, "V",
            f"{UNDERSHOOT_RULE}; {p.source('abs_max')}",
            f"dip to {_fmt(-dip, 'V')} at {p.label}{by_dip}; {_fmt(low_allowed, 'V')} below "
            f"ground allowed{corner}", warn_margin=warn, subject=p.ref)),
    ]


def _relative(above: float) -> str:
    """How far a peak lies from the pin's supply, in words: ``400 mV above`` or, for a
    driver on a lower rail, ``1.5 V below`` (never "-1.5 V above")."""
    return f"{_fmt(above, 'V')} above" if above >= 0 else f"{_fmt(-above, 'V')} below"


def _corner(cases, which: str) -> str:
    """`` (fast corner)`` or `` (slow corner)`` when a driver among ``cases`` states a
    fast corner, else nothing (a part without one reads as before)."""
    return f" ({which} corner)" if any(c.fast_rise is not None for c in cases) else ""


def _ringing_check(rx: Endpoint, cases: dict, v_il: float, v_ih: float,
                   clock_line: bool) -> Check:
    """Re-crossings of VIL/VIH at one receiver over every other driver's edges (the fast
    corner's, where a driver has one)."""
    counts = {}
    by_driver: dict[str, int] = {}
    # A Schmitt-trigger input that has switched at VIH switches back only below its
    # falling threshold, which is at most VIH less its (minimum) hysteresis (and at
    # least VIL): a re-crossing of VIH that stays above that level cannot switch it.
    hyst = rx.level("hysteresis") or 0.0
    back = {"rise": (max(v_ih - hyst, v_il), v_ih), "fall": (v_il, min(v_il + hyst, v_ih))}
    for ref, c in cases.items():
        if ref == rx.ref:
            continue
        for edge in ("rise", "fall"):
            wave = c.si_wave_at(rx.ref, edge)
            got = wave.recrossings(v_il, v_ih)
            entry = int(got.entry)
            if hyst > 0:  # only a swing back past the falling (rising) threshold counts
                entry = int(wave.recrossings(*back[edge]).opposite)
            prev = counts.get(edge, (0, 0))
            counts[edge] = (max(prev[0], entry), max(prev[1], int(got.opposite)))
            by_driver[ref] = by_driver.get(ref, 0) + entry
    total = sum(e for e, _ in counts.values())
    # with several drivers (CIPO's peripherals) the one whose edges ring most: where the
    # series resistor goes
    whose = max(by_driver, key=by_driver.get) if len(cases) > 1 and total else None
    if total == 0:
        status = "pass"
    else:
        status = "fail" if clock_line else "warn"
    what = "double clocking" if clock_line else "a glitch on a data line"
    corner = _corner([c for ref, c in cases.items() if ref != rx.ref], "fast")
    # on a clock it fails against the receiver's datasheet thresholds; elsewhere a rule
    source = (CLOCK_RINGING_SOURCE.format(v_il=rx.source("v_il"), v_ih=rx.source("v_ih"))
              if clock_line else _RINGING_SOURCE)
    levels = f"VIL {_fmt(v_il, 'V')} / VIH {_fmt(v_ih, 'V')}"
    if hyst > 0:
        source += f"; hysteresis: {rx.source('hysteresis')}"
        levels = (f"VIH {_fmt(v_ih, 'V')} down to {_fmt(back['rise'][0], 'V')} / VIL "
                  f"{_fmt(v_il, 'V')} up to {_fmt(back['fall'][1], 'V')} (hysteresis "
                  f"{_fmt(hyst, 'V')})")
    details = {f"{edge}_{kind}": n for edge, (e, o) in counts.items()
               for kind, n in (("recrossings", e), ("full_reversals", o))}
    if hyst > 0:
        details["hysteresis"] = hyst
    chk = Check(
        "ringing", status, total, 0, "", None, source,
        (f"no re-crossing of {levels} at {rx.label}"
         if total == 0 else
         f"{total} re-crossing{plural_s(total)} of {levels} at "
         f"{rx.label} after the first crossing"
         + (f" while {whose} drives" if whose else "") + f": risk of {what}") + corner,
        subject=rx.ref,
        details=details,
        fix=None if total == 0 else "add or increase a series resistor at the driver"
                                    + (f" ({whose})" if whose else ""))
    # on a clock it fails against the receiver's thresholds: firm as they are
    return soft_limit(chk, rx.pin.v_il, rx.pin.v_ih, what="VIL and VIH") if clock_line else chk


def _driver_levels(d: Endpoint, c, rs: float,
                   load: tuple) -> tuple[float, str, float, str, str, str]:
    """A driver's VOH, its source, VOL, its source, and how each was taken (words for the
    message, empty where the level is the part's as stated): an open-drain driver's from
    the pull-up and sink on the net; a push-pull one's from its part's rated point at
    the current the line draws (:func:`_rated_at_load`; ``rs`` the line's series
    resistor, ``load`` its pull-ups, their rail and the other pins' leakage), or rail
    to rail."""
    if d.pin.drive == "open-drain":
        src = f"{d.label}: pull-up and sink on the net"
        return c.v_high, src, _guaranteed_low(d, c), src, "", ""
    v_oh = d.level("v_oh")
    v_ol = d.level("v_ol")
    oh_src = d.source("v_oh") if v_oh is not None else ""
    ol_src = d.source("v_ol") if v_ol is not None else ""
    oh_how = ol_how = ""
    if v_oh is None:
        v_oh, oh_src = d.vdd, f"{d.label}: rail-to-rail CMOS output assumed"
    elif d.pin.i_oh is not None:
        v_oh, oh_how = _rated_at_load(d, rs, load, d.vdd, v_oh, float(d.pin.i_oh.at()))
    if v_ol is None:
        v_ol, ol_src = 0.0, f"{d.label}: rail-to-rail CMOS output assumed"
    elif d.pin.i_ol is not None:
        v_ol, ol_how = _rated_at_load(d, rs, load, 0.0, v_ol, float(d.pin.i_ol.at()))
    return v_oh, oh_src, v_ol, ol_src, oh_how, ol_how


def _rated_at_load(d: Endpoint, rs: float, load: tuple, v_src: float, rated: float,
                   i_rated: float) -> tuple[float, str]:
    """A push-pull driver's level on the line at the current the line draws, and words
    saying so.

    Its part states the level at a current (VOH at IOH, VOL at IOL: LVTTL's 2.4 V at
    8 mA) far above what CMOS inputs draw; the point is read as a resistance from the
    rail (``physics.pullup.loaded_level``), as the open-drain engine reads a sink, in
    series with the line's series resistor, and loaded with the other pins' stated
    leakage and the net's pull-ups.  Within the rated current that level is one the part
    guarantees (a MOS output's drop grows no faster than that line below it).  Beyond,
    the part guarantees only its rated current: the line settles where the load takes
    that much (the open-drain sink's held level, :func:`held_low_level`; a high level
    where a pull-up to a lower rail takes it, none above ground where leakage alone
    would).  Pins that state no leakage add none. [V]"""
    if not i_rated > 0.0:
        return rated, ""
    high = v_src > 0.0
    r_src = abs(v_src - rated) / i_rated
    r = r_src + rs
    rp, rail, leak = load
    # leakage takes the level away from the rail it is driven to: out of a high pin,
    # into a low one
    level = loaded_level(v_src, r, leak if high else -leak, rp, rail)
    # the current through the pin at that level: out of it when high, into it when low
    # (negative: the other way, a pull-up to a higher rail feeding a high output)
    pin = (v_src - level if high else level) / r if r > 0.0 else leak
    name, way = ("VOH", "sources") if high else ("VOL", "sinks")
    rating = f"its {name} is rated {_fmt(rated, 'V')} at {_fmt(i_rated, 'A')}"
    through = f", with the series resistor {_fmt(rs, 'Ω')}" if rs > 0.0 else ""
    if pin > i_rated * (1.0 + 1e-9):
        if high:  # where the load takes i_rated: a pull-up to a lower rail, else ground
            held = rail + (i_rated - leak) * rp if rp is not None else 0.0
            level = max(min(held, level), 0.0)
        else:
            level = (float(held_low_level(level, rail, rp, i_rated)) if rp is not None
                     else max(level, d.vdd))
        return level, (f" held to its rating: the line would take {_fmt(pin, 'A')}, more "
                       f"than the {_fmt(i_rated, 'A')} its {name} is stated at, and the "
                       f"part guarantees no more ({rating})")
    if pin < 0.0:
        flow = f"with {_fmt(-pin, 'A')} flowing into it from the line's pull-up"
    elif pin > 0.0:
        flow = f"as it {way} {_fmt(pin, 'A')}"
    else:
        flow = "with no current drawn (no pin on the line states a leakage)"
    return level, f" {flow} ({rating}: {_fmt(r_src, 'Ω')}{through})"


def _guaranteed_low(d: Endpoint, c) -> float:
    """An open-drain driver's low level as its part guarantees it: its datasheet point
    (VOL at IOL) read as a resistance while the pull-up (``c.model.r_rise``) draws at
    most IOL, and IOL alone beyond it, where the line settles at the level the pull-up
    carries IOL from (the open-drain engine's model,
    :data:`pinlib.engines.opendrain.explain.SINK_MODEL`).  The waveforms keep the
    resistance (``c.v_low``), as a transient simulator's resistor does. [V]"""
    i_ol, rp = d.pin.i_ol, c.model.r_rise
    if i_ol is None or d.level("v_ol") is None or not (0.0 < rp < math.inf):
        return c.v_low
    return float(held_low_level(c.v_low, c.v_high, rp, float(i_ol.at())))


def _level_checks(a: LineAnalysis, rx: Endpoint, d: Endpoint, c, load: tuple, v_il: float,
                  v_ih: float, warn: float, named: bool = False,
                  advise: bool = True) -> list[Check]:
    """A driver's VOH/VOL against one receiver's VIH/VIL; ``named``: the line has more
    than one driver, and the subject names this one (``U3 from U1``); ``advise``: a
    level short of its threshold across two rails has a fix (none behind a bridging
    part, whose far side is not modelled)."""
    v_oh, oh_src, v_ol, ol_src, oh_how, ol_how = _driver_levels(d, c, a.rs, load)
    signal = a.signal
    subject = f"{rx.ref} from {d.ref}" if named else rx.ref
    fix = None
    if advise and v_oh < v_ih and rx.vdd > d.vdd:  # two domains: drive cannot mend it
        fix = (f"{d.label} on its {_fmt(d.vdd, 'V')} rail cannot reach the VIH of "
               f"{rx.label} on {_fmt(rx.vdd, 'V')}: shift the level (a level translator) "
               "or use a receiver whose VIH the output meets")
    # behind a bridging part a level across two rails is the model's limit: no fix; the
    # levels a fix names are those at which the check passes (outside the warning margin)
    mend = advise or rx.vdd == d.vdd
    if fix is None and mend and v_oh < v_ih * (1.0 + warn) and v_ih > 0:
        fix = _level_high_fix(d, c, v_oh, v_ih, warn)
    low_fix = None
    if mend and v_ol > v_il * (1.0 - warn) and v_il > 0 and warn < 1:
        vol = fmt_below(v_il * (1.0 - warn), "V")
        vil = v_ol / (1.0 - warn)
        if d.pin.drive == "open-drain" or ol_how.startswith(" held"):  # pull-up bound
            low_fix = M.LEVEL_LOW_SINK_FIX.format(signal=signal, driver=d.label, v_ol=vol)
        elif vil > rx.vdd:  # no input on the receiver's rail has such a VIL
            low_fix = M.LEVEL_LOW_FIX_DRIVER.format(v_ol=vol)
        else:
            low_fix = M.LEVEL_LOW_FIX.format(v_il=fmt_above(vil, "V"), v_ol=vol)
    return [
        soft_limit(check_min(
            "level-high", v_oh, v_ih, "V", rx.source("v_ih"),
            f"{d.label} VOH {_fmt(v_oh, 'V')}{oh_how} against {rx.label} VIH "
            f"{_fmt(v_ih, 'V')}",
            warn_margin=warn, subject=subject, fix=fix,
            details={"driver": d.label, "driver_source": oh_src}), rx.pin.v_ih, what="VIH"),
        soft_limit(check_max(
            "level-low", v_ol, v_il, "V", rx.source("v_il"),
            f"{d.label} VOL {_fmt(v_ol, 'V')}{ol_how} against {rx.label} VIL "
            f"{_fmt(v_il, 'V')}",
            warn_margin=warn, subject=subject, fix=low_fix,
            details={"driver": d.label, "driver_source": ol_src}), rx.pin.v_il, what="VIL"),
    ]


def _level_high_fix(d: Endpoint, c, v_oh: float, v_ih: float, warn: float) -> str:
    """The fix of a driver's high level short of a receiver's VIH (with the warning
    margin ``warn``) on one rail, or from a driver on the higher one: an open-drain
    line's pull-up level, or a push-pull driver's VOH (already at the current the line
    draws, where its part states ``i_oh``)."""
    voh = fmt_above(v_ih * (1.0 + warn), "V")
    if d.pin.drive == "open-drain":
        return M.LEVEL_HIGH_PULLUP_FIX.format(v_high=_fmt(c.v_high, "V"), v_oh=voh)
    vih = fmt_below(v_oh / (1.0 + warn), "V")
    if v_ih * (1.0 + warn) > d.vdd:  # no output on the driver's rail reaches it
        return M.LEVEL_HIGH_FIX_RECEIVER.format(v_ih=vih)
    return M.LEVEL_HIGH_FIX.format(v_ih=vih, v_oh=voh)


def _slowest_edge(cases: dict, rx: Endpoint | None = None) -> tuple[float, str | None]:
    """The slowest 10-90 % edge (rise or fall) and the driver whose edge it is: at the far
    end (``rx`` None, every driver), or on a route at receiver ``rx``'s own point (every
    other driver); ``(0.0, None)`` when no driver is left."""
    edges = [(max(c.wave_at(rx.ref, "rise").t_edge, c.wave_at(rx.ref, "fall").t_edge)
              if rx is not None else max(c.rise.t_edge, c.fall.t_edge), ref)
             for ref, c in cases.items() if rx is None or ref != rx.ref]
    return max(edges, default=(0.0, None))


def _transition_check(rx: Endpoint, cases: dict, routed: bool, warn: float,
                      signal: str) -> Check:
    """The slowest 10-90 % edge at a receiver (from every other driver, at its own point
    on a route) against the input transition time its part states."""
    limit = rx.level("t_transition_max")
    edge, by = _slowest_edge(cases, rx if routed else None)
    fix = None
    if edge > limit:
        drv = cases[by].driver if by is not None else None
        fix = (f"a smaller pull-up speeds the rise (lines.{signal}.pullup)"
               if drv is not None and drv.pin.drive == "open-drain"
               else "a stronger driver or less load speeds the edge (a series resistor "
                    "slows it)")
        # a receiver whose input already has hysteresis is no better for another one
        if not (rx.level("hysteresis") or 0.0) > 0.0:
            fix += ", or a receiver with a Schmitt-trigger input"
    many = len(cases) > 1
    return soft_limit(check_max(
        "input-transition", edge, limit, "s", rx.source("t_transition_max"),
        f"slowest 10-90 % edge {_fmt(edge, 's')} at {rx.label}"
        + (f" while {by} drives" if many and by else "")
        + f" against its input transition time, at most {_fmt(limit, 's')}"
        + _corner(cases.values(), "slow"),
        warn_margin=warn, subject=rx.ref, fix=fix), rx.pin.t_transition_max,
        what="t_transition_max")


def _edge_check(cases: dict, clock: float, warn: float, rx: Endpoint | None = None) -> Check:
    """The slowest 10-90 % edge against a fraction of the clock period (a rule of thumb):
    at the far end, or on a route at one receiver's point (from every other driver)."""
    edge = _slowest_edge(cases, rx)[0]
    where, subject = ("the far end", None) if rx is None else (rx.label, rx.ref)
    limit = EDGE_FRACTION / clock
    # the check passes where the period is at least edge / (fraction (1 - warn))
    fix = (M.EDGE_TIME_FIX.format(clock=fmt_below(EDGE_FRACTION * (1.0 - warn) / edge, "Hz"))
           if edge > 0 and warn < 1 else None)
    return rule_of_thumb(check_max(
        "edge-time", edge, limit, "s", EDGE_RULE,
        f"slowest 10-90 % edge {_fmt(edge, 's')} at {where} against "
        f"{EDGE_FRACTION:.0%} of the {_fmt(1.0 / clock, 's')} period"
        + _corner(cases.values(), "slow"),
        warn_margin=warn, subject=subject, fix=fix, details={"fraction": EDGE_FRACTION}))
