"""The variants of a push-pull bus (SPI, GPIO): what varies, a varied copy of the bus,
and the name of each check of its result.

Shared by :mod:`pinlib.engines.ppbatch` (the checks over a batch of variants) and
:mod:`pinlib.engines.pptable` (tables of the engine over the tolerance box), which both
build on it and not on each other.
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np

from pinlib.model.design import Bus

__all__ = [
    "line_place",
    "parameter_specs",
    "rail_key",
    "line_of_key",
    "line_variants",
    "vary_bus",
    "chosen_resistors",
    "check_names",
    "flat_checks",
    "number_or_nan",
]


def rail_key(v: float, tol: float) -> tuple:
    """The parameter key of a rail of ``v`` volts at ± ``tol``."""
    return ("rail", round(float(v), 9), round(float(tol), 9))


def line_place(bus_id: str, signal: str) -> str:
    """A bus's line as a parameter's or a check's name writes it: ``"fpga-enable
    enable"``; a line named as its bus once (``"reset"``, not ``"reset reset"``)."""
    return bus_id if signal == bus_id else f"{bus_id} {signal}"


def parameter_specs(bus: Bus) -> list[tuple]:
    """What varies on a push-pull bus: ``(name, kind, nominal, tolerance, unit, key)``.

    Parameters
    ----------
    bus : Bus
        An ``spi`` or ``gpio`` bus. [1]

    Returns
    -------
    list of tuple
        One per toleranced quantity, each key once (a rail shared with other buses
        carries the same key as in :mod:`pinlib.studies.whatif`). [1]
    """
    from pinlib.core.quantity import format_si

    out, seen = [], set()

    def add(*spec):
        if spec[-1] not in seen:
            seen.add(spec[-1])
            out.append(spec)

    vtol = bus.supply_tolerance or 0.0
    if vtol > 0 and bus.supply is not None:
        rails = [float(bus.supply)] + [float(d.supply) for d in bus.devices
                                       if d.supply is not None]
        for v in rails:
            add(f"rail {format_si(v, 'V')}", "supply", v, vtol, "V", rail_key(v, vtol))
    for d in bus.devices:
        if d.capacitance_tolerance:
            add(f"{d.ref} pin capacitance on {bus.id}", "capacitance", 1.0,
                d.capacitance_tolerance, "", ("pins", bus.id, d.ref))
    ltol = bus.length_tolerance or 0.0
    ctol = bus.capacitance_tolerance or 0.0
    for sig, line in bus.lines.items():
        if ltol > 0 and line.sections and line.length > 0:
            add(f"{line_place(bus.id, sig)} length", "length", float(line.length), ltol, "m",
                ("line-length", bus.id, sig))
        if ctol > 0 and (line.extra_capacitance > 0 or line.length > 0):
            add(f"{line_place(bus.id, sig)} board capacitance", "capacitance",
                1.0, ctol, "", ("line-board", bus.id, sig))
        if line.pullup is not None and line.pullup_tolerance:
            add(f"{line_place(bus.id, sig)} pull-up", "pullup", float(line.pullup),
                line.pullup_tolerance, "Ω", ("line-pullup", bus.id, sig))
    return out


def line_of_key(key: tuple) -> str | None:
    """The line a parameter key of :func:`parameter_specs` belongs to (its length or
    board capacitance, a line's pull-up), or None for one every line shares (a rail,
    a device's pins)."""
    return key[2] if key[0] in ("line-length", "line-board", "line-pullup") else None


def line_variants(bus: Bus, specs: list[tuple], u, sig: str | None,
                  resistors: dict[str, float] | None = None,
                  floor: float | None = None) -> tuple:
    """The distinct boards of one line among the boards ``u``: those that differ in the
    factors the line depends on (its own and those every line shares).

    Parameters
    ----------
    bus : Bus
        An ``spi`` or ``gpio`` bus. [1]
    specs : list of tuple
        :func:`parameter_specs` of the bus. [1]
    u : numpy.ndarray
        Boards, shape ``(n, k)``: each parameter's end, -1, 0 or +1. [1]
    sig : str or None
        The line; None for the factors every line shares alone. [1]
    resistors : dict, optional
        A fixed series resistor for lines set to "auto" (:func:`chosen_resistors`). [Ω]
    floor : float, optional
        The smallest factor ``1 + tolerance·u`` a parameter takes; without it, none. [1]

    Returns
    -------
    (numpy.ndarray, list of Bus, numpy.ndarray)
        The distinct rows of the line's factors (each parameter's end), the bus varied
        at each (:func:`vary_bus`), and the index of each board's row. [1]
    """
    cols = [i for i, s in enumerate(specs) if line_of_key(s[-1]) in (None, sig)]
    uniq, inverse = np.unique(u[:, cols], axis=0, return_inverse=True)
    buses = []
    for row in uniq:
        f = {specs[i][-1]: _factor(specs[i][3], x, floor)
             for i, x in zip(cols, row, strict=True)}
        buses.append(vary_bus(bus, f.get, resistors))
    return uniq, buses, np.asarray(inverse).reshape(-1)


def _factor(tolerance: float, x: float, floor: float | None) -> float:
    """A parameter's factor at its end ``x``: ``1 + tolerance·x``, at least ``floor``."""
    f = 1.0 + tolerance * x
    return f if floor is None else max(f, floor)


def chosen_resistors(nominal) -> dict[str, float]:
    """The series resistor "auto" chose on each line of a push-pull result, by signal.

    Parameters
    ----------
    nominal : BusResult
        The engine's result of the bus as designed. [1]

    Returns
    -------
    dict of str to float
        Only the lines whose setting was "auto" (their ``series-termination`` check
        holds the choice; 0 is no resistor). [Ω]
    """
    out = {}
    for ln in nominal.lines:
        c = ln.check("series-termination")
        if c is not None and c.value is not None:
            out[ln.signal] = float(c.value)
    return out


def vary_bus(bus: Bus, factor, resistors: dict[str, float] | None = None) -> Bus:
    """The bus with its toleranced values scaled.

    Parameters
    ----------
    bus : Bus
        An ``spi`` or ``gpio`` bus. [1]
    factor : callable
        ``factor(key)``: the factor ``1 + tolerance·u`` of a parameter key, or None
        when the key is not varied. [1]
    resistors : dict, optional
        A fixed series resistor for lines set to "auto" (:func:`chosen_resistors`). [Ω]

    Returns
    -------
    Bus
        A copy with its supplies, line lengths, board capacitances (each section's
        capacitance per length, :attr:`~pinlib.model.design.Section.capacitance_factor`,
        and the extra capacitance), GPIO line pull-ups and device pin capacitances
        multiplied. [1]
    """
    resistors = resistors or {}
    vtol = bus.supply_tolerance or 0.0

    def rail(v):
        if v is None:
            return None
        f = factor(rail_key(v, vtol))
        return v if f is None else float(v) * f

    def device(d):
        if d.supply is not None:
            d = replace(d, supply=rail(d.supply))
        f = factor(("pins", bus.id, d.ref))
        return d if f is None else replace(d, capacitance_factor=float(f))

    devices = tuple(device(d) for d in bus.devices)
    lines = {}
    for sig, line in bus.lines.items():
        fl = factor(("line-length", bus.id, sig))
        fc = factor(("line-board", bus.id, sig))
        fp = factor(("line-pullup", bus.id, sig))
        if fl is not None:
            line = replace(line, sections=tuple(replace(s, length=s.length * fl)
                                                for s in line.sections))
        if fc is not None:  # the sections' C per length (L held) and the extra capacitance
            line = replace(line, extra_capacitance=line.extra_capacitance * fc,
                           sections=tuple(replace(s, capacitance_factor=float(fc))
                                          for s in line.sections))
        if fp is not None and line.pullup is not None:
            line = replace(line, pullup=line.pullup * fp)
        if line.series_resistor == "auto" and sig in resistors:
            rs = resistors[sig]
            line = replace(line, series_resistor=rs if rs > 0 else "none")
        lines[sig] = line
    return replace(bus, supply=rail(bus.supply), devices=devices, lines=lines)


def flat_checks(res) -> list[tuple]:
    """Every check of a push-pull result in order: (signal or None, Check)."""
    out = [(ln.signal, c) for ln in res.lines for c in ln.checks]
    out += [(None, c) for c in res.checks]
    return out


def check_names(bus: Bus, res) -> list[dict]:
    """A unique name and the engine's check for each check of ``res``, in order.

    Parameters
    ----------
    bus : Bus
        The bus. [1]
    res : BusResult
        The engine's result of it. [1]

    Returns
    -------
    list of dict
        ``name`` (``"<bus> [<signal>] <check id> [<subject>]"``, the signal left out
        where it is the bus's id: :func:`line_place`), ``engine``,
        ``signal``. [1]
    """
    out, used = [], {}
    for sig, c in flat_checks(res):
        name = f"{line_place(bus.id, sig) if sig else bus.id} {c.id}"
        if c.subject:
            name += f" {c.subject}"
        used[name] = used.get(name, 0) + 1
        if used[name] > 1:
            name += f" #{used[name]}"
        out.append({"name": name, "engine": c, "signal": sig})
    return out


def number_or_nan(x) -> float:
    """A check's value, limit or margin as a float; NaN for none or a yes/no value."""
    if x is None or isinstance(x, bool):
        return math.nan
    try:
        return float(x)
    except (TypeError, ValueError):
        return math.nan
