"""The current a driver sinks while it holds a pulled-up line low (``sink-current``).

A part states its low level ``v_ol`` as a maximum at a sink current ``i_ol``; drawn
harder, the pin's low level is no longer what its datasheet guarantees, and the
``level-low`` check that reads ``v_ol`` no longer holds. On a push-pull line only a
line's own ``pullup`` (a GPIO or SPI line's) or a pull-up a part carries on its pin
loads a driver this way; an open-drain driver always pulls against one.
"""

from __future__ import annotations

from pinlib.engines.pushline.analysis import LineAnalysis, _fmt
from pinlib.engines.pushline.pins import Endpoint
from pinlib.model.result import Check, check_max, soft_limit
from pinlib.physics.pullup.levels import sink_current, sink_resistance


def sink_checks(a: LineAnalysis, pullups: dict,
                warn: float) -> tuple[list[Check], list[str]]:
    """A ``sink-current`` check for each driver holding the line low against pull-ups
    whose part states ``v_ol`` at ``i_ol``, and a note for each that states no ``i_ol``.

    Parameters
    ----------
    a : LineAnalysis
        The line, its drivers and its series resistor ``a.rs`` solved. [1]
    pullups : dict
        By driver reference, ``(rp, rail)``: the parallel pull-ups it pulls against and
        their rail, or ``(None, rail)`` for none. [Ω, V]
    warn : float
        The warning band, relative to the rating. [1]

    Returns
    -------
    tuple
        The checks and the notes. [1]

    Notes
    -----
    The current is :math:`V / (R_p + R_s + v_{OL}/i_{OL})`: the sink taken as a
    resistance through the rated point, as the open-drain engine takes it. It reaches
    ``i_ol`` exactly where the pull-up equals :math:`(V - v_{OL})/i_{OL} - R_s`, the
    smallest pull-up for which the rated low level holds.
    """
    checks, notes = [], []
    for d in a.drivers:
        rp, rail = pullups.get(d.ref, (None, None))
        if rp is None:
            continue
        if d.pin.drive == "push-pull" and rail > d.vdd * (1 + 1e-6):
            notes.append(_back_current_note(a, d, rp, rail))
        v_ol, i_ol = d.level("v_ol"), d.pin.i_ol
        i_ol = None if i_ol is None else float(i_ol.at())
        if v_ol is None or not i_ol:
            top = float(sink_current(rail, rp, 0.0, a.rs))
            notes.append(
                f"{d.label} sinks up to {_fmt(top, 'A')} from the line's pull-up "
                f"{_fmt(rp, 'Ω')} while it holds {a.signal} low; its part states no "
                f"{'i_ol' if v_ol is not None else 'v_ol at i_ol'}, so that current is "
                "not checked against a rating")
            continue
        checks.append(_check(a, d, rp, rail, v_ol, i_ol, warn))
    return checks, notes


def _back_current_note(a: LineAnalysis, d: Endpoint, rp: float, rail: float) -> str:
    """A push-pull driver on a lower rail than the line's pull-up: while it drives high,
    the pull-up feeds current into its output, and so into its rail."""
    into = (rail - d.vdd) / rp
    return (f"{d.label} drives {a.signal} high to its own {_fmt(d.vdd, 'V')} rail against "
            f"the pull-up {_fmt(rp, 'Ω')} to {_fmt(rail, 'V')}: about {_fmt(into, 'A')} "
            "flows into its output, and its rail, while it is high (the part format "
            "records no injection current to check it against); a pull-up to the "
            "driver's rail, or an open-drain output, avoids it")


def _check(a: LineAnalysis, d: Endpoint, rp: float, rail: float, v_ol: float,
           i_ol: float, warn: float) -> Check:
    r_sink = float(sink_resistance(v_ol, i_ol))
    current = float(sink_current(rail, rp, r_sink, a.rs))
    through = f" and the series resistor {_fmt(a.rs, 'Ω')}" if a.rs > 0 else ""
    fix = None
    if current > i_ol:
        rp_min = (rail - v_ol) / i_ol - a.rs
        # a driver rated for i at this v_ol sinks V / (Rp + Rs + v_ol/i): within i only
        # from (V - v_ol) / (Rp + Rs) on (its own current, not this one's, which a
        # stronger sink raises)
        need = (rail - v_ol) / (rp + a.rs)
        fix = (f"keep the line's pull-ups together at or above {_fmt(rp_min, 'Ω')} over "
               f"their tolerance, or use a driver rated to sink at least {_fmt(need, 'A')} "
               f"at {_fmt(v_ol, 'V')}: its part states its low level ({_fmt(v_ol, 'V')}) "
               f"only up to {_fmt(i_ol, 'A')}, and level-low relies on it")
    # a rating no datasheet stands behind (a class's typical one) warns where it would fail
    return soft_limit(check_max(
        "sink-current", current, i_ol, "A", d.source("i_ol"),
        f"{a.signal} sink current {_fmt(current, 'A')} into {d.label} (pull-up "
        f"{_fmt(rp, 'Ω')} to {_fmt(rail, 'V')}{through}) against its rating "
        f"{_fmt(i_ol, 'A')} at VOL {_fmt(v_ol, 'V')}",
        warn_margin=warn,
        subject=d.ref, fix=fix,
        details={"pullup": rp, "rail": rail, "series_resistor": a.rs,
                 "r_sink": r_sink}), d.pin.i_ol, what="IOL")
