"""The push-pull engine's checks (SPI, GPIO) over a batch of variants of one bus.

:mod:`pinlib.whatif` samples a design's tolerances; this module gives it the push-pull
buses.  A variant is the bus with its own supply rails (``supply_tolerance``), its own
line lengths (``length_tolerance``: every section of a line scaled together) and its
own extra line capacitance (``capacitance_tolerance``).  The design format gives a
line's series resistor no tolerance, so it stays nominal; a line whose resistor is
"auto" keeps the value the engine chose on the nominal board (a built board carries
the resistor the design chose, whatever its own trace turned out to be).

A small batch (corners, a short Monte Carlo run) is evaluated by the engine itself,
variant by variant (:func:`pinlib.buses.pushpull.evaluate_bus` on the varied bus;
identical variants once), so that every margin is the engine's.  The line engine picks
its time grid from each variant's own time constants and delays, so the waveform
solvers cannot share one batched solve across variants.  A large batch is evaluated
from tables of the engine over the tolerance box (:mod:`pinlib.buses.pptable`), built
once per run, verified against the engine, with the engine taking every board outside
the box or close to failing.

A device's ``capacitance_tolerance`` scales the capacitance of every pin it has on
the bus (``Device.capacitance_factor``); the stored part is not changed.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np

from pinlib.buses import pushpull as pp
from pinlib.buses.opendrain.batch import BatchCheck
from pinlib.design import Bus, Design
from pinlib.result import STATUS_CODES

__all__ = [
    "PROTOCOLS",
    "PpBatch",
    "parameter_specs",
    "vary_bus",
    "chosen_resistors",
    "check_names",
    "flat_checks",
    "number_or_nan",
    "build",
]

#: The protocols this module evaluates.
PROTOCOLS = ("spi", "gpio")



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
    for d in bus.devices:
        if d.capacitance_tolerance:
            add(f"{d.ref} pin capacitance on {bus.id}", "capacitance", 1.0,
                d.capacitance_tolerance, "", ("pins", bus.id, d.ref))
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
        A copy with its supplies, line lengths, extra capacitances and device pin
        capacitances multiplied. [1]
    """
    resistors = resistors or {}
    vtol = bus.supply_tolerance or 0.0

    def rail(v):
        if v is None:
            return None
        f = factor(_rail_key(v, vtol))
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
        fc = factor(("line-extra", bus.id, sig))
        if fl is not None:
            line = replace(line, sections=tuple(replace(s, length=s.length * fl)
                                                for s in line.sections))
        if fc is not None:
            line = replace(line, extra_capacitance=line.extra_capacitance * fc)
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
        ``name`` (``"<bus> [<signal>] <check id> [<subject>]"``), ``engine``,
        ``signal``. [1]
    """
    out, used = [], {}
    for sig, c in flat_checks(res):
        name = f"{bus.id} {sig} {c.id}" if sig else f"{bus.id} {c.id}"
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
    notes : list of str
        How the variants were evaluated (engine, or tables and their verification). [1]
    engine_boards : int
        Variants evaluated by the engine itself. [1]
    """

    n: int
    names: list
    items: list
    notes: list = field(default_factory=list)
    engine_boards: int = 0

    def checks(self):
        """Every check: (None, BatchCheck), like the open-drain
        :meth:`~pinlib.buses.opendrain.batch.BusBatch.checks`."""
        for c in self.items:
            yield None, c


def build(bus: Bus, design: Design, factors: dict[tuple, np.ndarray], n: int, *,
          nominal=None, tables: dict | None = None, span: float = 1.0,
          floor: float = 0.0, progress=None) -> PpBatch:
    """Evaluate ``n`` variants of a push-pull bus.

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
    tables : dict, optional
        Where the tables of :mod:`pinlib.buses.pptable` are kept between calls, by bus
        id (a Monte Carlo run passes one dict for all its chunks).  Without it, or when
        a table would cost more engine evaluations than there are distinct variants,
        every variant is evaluated by the engine. [1]
    span, floor : float, optional
        The tolerances a table covers (1 for uniform draws) and the smallest factor a
        draw takes. [1]
    progress : bool, callable or None, optional
        A bar over the engine evaluations that build a table. [1]

    Returns
    -------
    PpBatch
        A check's margin, value and status for each variant; a check a variant does
        not have (its engine result lists other checks) has a NaN margin and passes.
        ``notes`` say how the variants were evaluated.
    """
    nominal = nominal if nominal is not None else pp.evaluate_bus(bus, design)
    names = check_names(bus, nominal)
    chosen = chosen_resistors(nominal)
    index = {nm["name"]: i for i, nm in enumerate(names)}
    m = len(names)
    margin = np.full((n, m), np.nan)
    value = np.full((n, m), np.nan)
    limit = np.full((n, m), np.nan)
    status = np.zeros((n, m), dtype=int)
    keys = sorted(factors, key=repr)
    table = (np.stack([np.asarray(factors[k], dtype=float).reshape(n) for k in keys], axis=1)
             if keys else np.zeros((n, 0)))
    notes: list[str] = []
    todo = np.ones(n, dtype=bool)  # the variants the engine evaluates
    grid = _table(bus, design, chosen, tables, span, floor, n, progress) if keys else None
    if grid is not None:
        inside = grid.inside(factors, n)
        if inside.all():
            got = grid.evaluate(factors, n, [nm["name"] for nm in names])
            margin, value, limit, status = (got[k] for k in ("margin", "value", "limit",
                                                             "status"))
        elif inside.any():
            got = grid.evaluate({k: np.asarray(f, dtype=float).reshape(n)[inside]
                                 for k, f in factors.items()}, int(inside.sum()),
                                [nm["name"] for nm in names])
            margin[inside], value[inside] = got["margin"], got["value"]
            limit[inside], status[inside] = got["limit"], got["status"]
        todo = ~inside
        # A board whose interpolated margin is within the table's error of failing goes
        # to the engine: its pass or fail must not rest on the interpolation.
        band = 3.0 * grid.max_error + 1e-12
        moving = grid.interpolated([nm["name"] for nm in names])
        if moving.any():
            todo |= np.any(np.abs(margin[:, moving]) < band, axis=1)
        notes.append(_table_note(bus, grid))
    elif tables is not None and isinstance(tables.get(bus.id), str):
        notes.append(f"bus {bus.id}: every board evaluated by the engine (no table over its "
                     f"tolerances: {tables[bus.id]})")
    where = np.flatnonzero(todo)
    rows, inverse = np.unique(table[where], axis=0, return_inverse=True)
    inverse = np.asarray(inverse).reshape(-1)
    for r, row in enumerate(rows):
        got = dict(zip(keys, row, strict=True))
        res = nominal if not keys else pp.evaluate_bus(vary_bus(bus, got.get, chosen),
                                                      design)
        at = where[inverse == r]
        for nm, (_, c) in zip(check_names(bus, res), flat_checks(res), strict=True):
            j = index.get(nm["name"])
            if j is None:
                continue
            margin[at, j] = number_or_nan(c.margin)
            value[at, j] = number_or_nan(c.value)
            limit[at, j] = number_or_nan(c.limit)
            status[at, j] = STATUS_CODES[c.status]
    items: list[Any] = []
    for j, nm in enumerate(names):
        ec = nm["engine"]
        has_margin = ec.margin is not None
        has_value = isinstance(ec.value, (int, float)) and not isinstance(ec.value, bool)
        items.append(BatchCheck(
            ec.id, "", nm["signal"], value[:, j] if has_value else None,
            limit[:, j] if has_value else None, margin[:, j] if has_margin else None,
            status[:, j], ec.unit))
    return PpBatch(n, names, items, notes, int(where.size))


def _table(bus, design, chosen, tables, span, floor, distinct, progress):
    """The bus's table from ``tables``, built on first use when it costs fewer engine
    evaluations than the distinct variants; None when there is none."""
    if tables is None:
        return None
    if bus.id in tables:
        got = tables[bus.id]
        return None if isinstance(got, str) else got
    from pinlib.buses import pptable

    axes = pptable.axes_of(parameter_specs(bus), span, floor)
    cost = math.prod(pptable.NODES[ax.kind] for ax in axes) + pptable.VERIFY
    if cost >= distinct:
        return None  # cheaper to run the engine on each variant (and not remembered)
    got = tables[bus.id] = pptable.tabulate(bus, design, axes, chosen, progress=progress)
    return None if isinstance(got, str) else got


def _table_note(bus: Bus, grid) -> str:
    from pinlib.buses import pptable

    axes = ", ".join(f"{ax.kind} factor {ax.lo:.3g}–{ax.hi:.3g}" for ax in grid.axes)
    return (f"bus {bus.id}: line results interpolated from {grid.evaluations} engine "
            f"evaluations over the tolerance box ({axes}); at {pptable.VERIFY} boards "
            f"drawn in the box they agree with the engine within {grid.max_error:.1e} "
            "of margin (boards outside the box, or within three times that of failing: "
            "evaluated by the engine)")
