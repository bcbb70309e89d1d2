"""The push-pull engine's checks (SPI, GPIO) over a batch of variants of one bus.

:mod:`pinlib.whatif` samples a design's tolerances; this module gives it the push-pull
buses.  A variant is the bus with its own supply rails (``supply_tolerance``), its own
line lengths (``length_tolerance``: every section of a line scaled together) and its
own extra line capacitance (``capacitance_tolerance``).  The design format gives a
line's series resistor no tolerance, so it stays nominal ("auto" chooses again for
each variant, as the engine would on that board).

Each variant is evaluated by the engine itself
(:func:`pinlib.buses.pushpull.evaluate_bus` on the varied bus), so that every margin
is the engine's.  The line engine picks its time grid from each variant's own time
constants and delays, and the waveform solvers share one grid (and one delay per
section) across a batch, so a batched solve could not reproduce each variant's own
figures; variants with identical values are evaluated once.

Not drawn yet: the pin capacitance of a device (``capacitance_tolerance`` of a
device), which sits inside the stored part; the result of :func:`parameters` lists
only what is drawn.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import Any

import numpy as np

from pinlib.buses import pushpull as pp
from pinlib.buses.odbatch import STATUS, BatchCheck
from pinlib.design import Bus, Design

__all__ = [
    "PROTOCOLS",
    "PpBatch",
    "parameter_specs",
    "vary_bus",
    "check_names",
    "build",
]

#: The protocols this module evaluates.
PROTOCOLS = ("spi", "gpio")

_CODE = {s: i for i, s in enumerate(STATUS)}


def _rail_key(v: float, tol: float) -> tuple:
    return ("rail", round(float(v), 9), round(float(tol), 9))


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
        carries the same key as in :mod:`pinlib.whatif`). [1]
    """
    from pinlib.quantity import format_si

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
            add(f"rail {format_si(v, 'V')}", "supply", v, vtol, "V", _rail_key(v, vtol))
    ltol = bus.length_tolerance or 0.0
    ctol = bus.capacitance_tolerance or 0.0
    for sig, line in bus.lines.items():
        if ltol > 0 and line.sections and line.length > 0:
            add(f"{bus.id} {sig} length", "length", float(line.length), ltol, "m",
                ("line-length", bus.id, sig))
        if ctol > 0 and line.extra_capacitance > 0:
            add(f"{bus.id} {sig} extra capacitance", "capacitance", 1.0, ctol, "",
                ("line-extra", bus.id, sig))
    return out


def vary_bus(bus: Bus, factor) -> Bus:
    """The bus with its toleranced values scaled.

    Parameters
    ----------
    bus : Bus
        An ``spi`` or ``gpio`` bus. [1]
    factor : callable
        ``factor(key)``: the factor ``1 + tolerance·u`` of a parameter key, or None
        when the key is not varied. [1]

    Returns
    -------
    Bus
        A copy with its supplies, line lengths and extra capacitances multiplied. [1]
    """
    vtol = bus.supply_tolerance or 0.0

    def rail(v):
        if v is None:
            return None
        f = factor(_rail_key(v, vtol))
        return v if f is None else float(v) * f

    devices = tuple(replace(d, supply=rail(d.supply)) if d.supply is not None else d
                    for d in bus.devices)
    lines = {}
    for sig, line in bus.lines.items():
        fl = factor(("line-length", bus.id, sig))
        fc = factor(("line-extra", bus.id, sig))
        if fl is not None:
            line = replace(line, sections=tuple(replace(s, length=s.length * fl)
                                                for s in line.sections))
        if fc is not None:
            line = replace(line, extra_capacitance=line.extra_capacitance * fc)
        lines[sig] = line
    return replace(bus, supply=rail(bus.supply), devices=devices, lines=lines)


def _flat(res) -> list[tuple]:
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
        ``name`` (``"<bus> [<signal>] <check id> [<subject>]"``), ``engine``,
        ``signal``. [1]
    """
    out, used = [], {}
    for sig, c in _flat(res):
        name = f"{bus.id} {sig} {c.id}" if sig else f"{bus.id} {c.id}"
        if c.subject:
            name += f" {c.subject}"
        used[name] = used.get(name, 0) + 1
        if used[name] > 1:
            name += f" #{used[name]}"
        out.append({"name": name, "engine": c, "signal": sig})
    return out


def _num(x) -> float:
    if x is None or isinstance(x, bool):
        return math.nan
    try:
        return float(x)
    except (TypeError, ValueError):
        return math.nan


@dataclass
class PpBatch:
    """Every check of a push-pull bus over a batch of variants.

    Attributes
    ----------
    n : int
        Variants. [1]
    names : list of dict
        As :func:`check_names` of the nominal bus. [1]
    items : list of BatchCheck
        One per check, arrays of shape ``(n,)``; ``margin`` None for a check without
        one (a yes/no check). [1]
    """

    n: int
    names: list
    items: list

    def checks(self):
        """Every check: (None, BatchCheck), like :meth:`odbatch.BusBatch.checks`."""
        for c in self.items:
            yield None, c


def build(bus: Bus, design: Design, factors: dict[tuple, np.ndarray], n: int, *,
          nominal=None) -> PpBatch:
    """Evaluate ``n`` variants of a push-pull bus with the engine.

    Parameters
    ----------
    bus : Bus
        An ``spi`` or ``gpio`` bus of ``design``. [1]
    design : Design
        The design. [1]
    factors : dict
        Factor of each varied parameter key, shape ``(n,)`` each. [1]
    n : int
        Variants. [1]
    nominal : BusResult, optional
        The engine's result of the bus as designed (names the checks). [1]

    Returns
    -------
    PpBatch
        A check's margin, value and status for each variant; a check a variant does
        not have (its engine result lists other checks) has a NaN margin and passes.
    """
    nominal = nominal if nominal is not None else pp.evaluate_bus(bus, design)
    names = check_names(bus, nominal)
    index = {nm["name"]: i for i, nm in enumerate(names)}
    m = len(names)
    margin = np.full((n, m), np.nan)
    value = np.full((n, m), np.nan)
    limit = np.full((n, m), np.nan)
    status = np.zeros((n, m), dtype=int)
    keys = sorted(factors, key=repr)
    table = (np.stack([np.asarray(factors[k], dtype=float).reshape(n) for k in keys], axis=1)
             if keys else np.zeros((n, 0)))
    rows, inverse = np.unique(table, axis=0, return_inverse=True)
    inverse = np.asarray(inverse).reshape(-1)
    for r, row in enumerate(rows):
        got = dict(zip(keys, row, strict=True))
        res = nominal if not keys else pp.evaluate_bus(vary_bus(bus, got.get), design)
        at = inverse == r
        for nm, (_, c) in zip(check_names(bus, res), _flat(res), strict=True):
            j = index.get(nm["name"])
            if j is None:
                continue
            margin[at, j] = _num(c.margin)
            value[at, j] = _num(c.value)
            limit[at, j] = _num(c.limit)
            status[at, j] = _CODE[c.status]
    items: list[Any] = []
    for j, nm in enumerate(names):
        ec = nm["engine"]
        has_margin = ec.margin is not None
        has_value = isinstance(ec.value, (int, float)) and not isinstance(ec.value, bool)
        items.append(BatchCheck(
            ec.id, "", nm["signal"], value[:, j] if has_value else None,
            limit[:, j] if has_value else None, margin[:, j] if has_margin else None,
            status[:, j], ec.unit))
    return PpBatch(n, names, items)
