"""The push-pull engine's checks (SPI, GPIO) over a batch of variants of one bus.

:mod:`pinlib.studies.whatif` samples a design's tolerances; this module gives it the push-pull
buses.  A variant is the bus with its own supply rails (``supply_tolerance``), its own
line lengths (``length_tolerance``: every section of a line scaled together) and its
own line board capacitance (``capacitance_tolerance``: each section's capacitance per
length, its inductance held, and the line's extra capacitance).  The design format gives a
line's series resistor no tolerance, so it stays nominal; a line whose resistor is
"auto" keeps the value the engine chose on the nominal board (a built board carries
the resistor the design chose, whatever its own trace turned out to be).

A small batch (corners, a short Monte Carlo run) is evaluated by the engine itself,
variant by variant (:func:`pinlib.engines.pushpull.evaluate_board` on the varied bus;
identical variants once), so that every margin is the engine's.  The line engine picks
its time grid from each variant's own time constants and delays, so the waveform
solvers cannot share one batched solve across variants.  The corner boards of an SPI
bus (the corner study's) are evaluated instead as the engine's own corner search does,
as arrays (:func:`build_rows` over :func:`pinlib.engines.ppcorners.corner_rows`), the
same numbers board by board.  A large batch is evaluated
from tables of the engine over the tolerance box (:mod:`pinlib.engines.pptable`), built
once per run, verified against the engine, with the engine taking every board outside
the box, in a cell of the table a line's results jump or bend across, or close to
failing (:data:`WHY`; a run's notes count each).

A device's ``capacitance_tolerance`` scales the capacitance of every pin it has on
the bus (``Device.capacitance_factor``); the stored part is not changed.
"""

from __future__ import annotations

import math
from dataclasses import field
from typing import Any

import numpy as np

from pinlib.core.labels import plural_s
from pinlib.core.valueclass import value_class
from pinlib.engines import pptable
from pinlib.engines import pushpull as pp
from pinlib.engines.opendrain.batch import BatchCheck
from pinlib.engines.ppvariant import (
    check_names,
    chosen_resistors,
    flat_checks,
    number_or_nan,
    parameter_specs,
    vary_bus,
)
from pinlib.model.design import Bus, Design
from pinlib.model.result import STATUS_CODES

__all__ = [
    "PpBatch",
    "parameter_specs",
    "vary_bus",
    "chosen_resistors",
    "check_names",
    "flat_checks",
    "number_or_nan",
    "build",
    "build_rows",
    "engine_note",
    "WHY",
]


#: Why a board in a run with a table went to the engine, in the order a board's reason is
#: taken: beyond the box the table covers, in a cell of the table across which a line's
#: results jump or bend (still rough at the finest width), or an interpolated margin
#: within three times the table's error of failing.
WHY = {"outside": "outside the tolerance box",
       "rough": "in a table cell a line's results jump or bend across",
       "close": "close to failing"}


@value_class
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
    engine_why : dict
        Where a table stood in for the engine, the variants it left to the engine by
        reason (:data:`WHY`; each variant counted once, under the first reason that
        applies); empty without a table (every variant the engine's). [1]
    """

    n: int
    names: list
    items: list
    notes: list = field(default_factory=list)
    engine_boards: int = 0
    engine_why: dict = field(default_factory=dict)

    def checks(self):
        """Every check: (None, BatchCheck), like the open-drain
        :meth:`~pinlib.engines.opendrain.batch.BusBatch.checks`."""
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
        Where the tables of :mod:`pinlib.engines.pptable` are kept between calls, by bus
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
    nominal = nominal if nominal is not None else pp.evaluate_board(bus, design)
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
    why: dict[str, int] = {}       # and why, where a table stands in for the engine
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
        # a line's factor in a cell its results jump or bend across: the engine's
        rough = np.zeros(n, dtype=bool)
        rough[inside] = grid.declined({k: np.asarray(f, dtype=float).reshape(n)[inside]
                                       for k, f in factors.items()}, int(inside.sum()))
        # A board whose interpolated margin is within the table's error of failing goes
        # to the engine: its pass or fail must not rest on the interpolation.
        band = 3.0 * grid.max_error + 1e-12
        moving = grid.interpolated([nm["name"] for nm in names])
        close = np.zeros(n, dtype=bool)
        if moving.any():
            scale = grid.margin_scales([nm["name"] for nm in names])[moving]
            close = np.any(np.abs(margin[:, moving]) / scale < band, axis=1)
        todo = ~inside | rough | close
        why = {"outside": int(np.count_nonzero(~inside)),
               "rough": int(np.count_nonzero(rough & inside)),
               "close": int(np.count_nonzero(close & inside & ~rough))}
        notes.append(_table_note(bus, grid))
    elif tables is not None and isinstance(tables.get(bus.id), pptable.Refusal):
        notes.append(f"bus {bus.id}: every board evaluated by the engine (no table over its "
                     f"tolerances: {tables[bus.id]})")
    where = np.flatnonzero(todo)
    rows, inverse = np.unique(table[where], axis=0, return_inverse=True)
    inverse = np.asarray(inverse).reshape(-1)
    arrays = (margin, value, limit, status)
    for r, row in enumerate(rows):
        got = dict(zip(keys, row, strict=True))
        res = nominal if not keys else pp.evaluate_board(vary_bus(bus, got.get, chosen),
                                                      design)
        at = where[inverse == r]
        for nm, (_, c) in zip(check_names(bus, res), flat_checks(res), strict=True):
            j = index.get(nm["name"])
            if j is not None:
                _put(arrays, at, j, c)
    return PpBatch(n, names, _items(names, arrays), notes, int(where.size), why)


def build_rows(bus: Bus, nominal, u: np.ndarray, boards) -> PpBatch | None:
    """The checks of the corner boards ``u`` of a push-pull bus from an evaluator over
    arrays of boards (:func:`pinlib.engines.ppcorners.corner_rows`): the same
    :class:`PpBatch` as :func:`build` at their factors, check by check the engine's.

    Parameters
    ----------
    bus : Bus
        The bus. [1]
    nominal : BusResult
        The engine's result of the bus (names the checks, as in :func:`build`). [1]
    u : numpy.ndarray
        Boards, shape ``(n, k)``: the end of each parameter of :func:`parameter_specs`
        (-1, 0 or +1). [1]
    boards : callable
        ``boards(u)``: the :class:`~pinlib.engines.ppworst.BoardRows` of distinct boards
        in the order of ``check_names(bus, nominal)``, or None. [1]

    Returns
    -------
    PpBatch or None
        None where ``boards`` does not serve these boards (:func:`build` then
        evaluates them board by board).
    """
    names = check_names(bus, nominal)
    n, m = len(u), len(names)
    uniq, inverse = np.unique(np.asarray(u, dtype=float).reshape(n, -1), axis=0,
                              return_inverse=True)
    got = boards(uniq) if n else None
    if got is None:
        return None
    d = len(uniq)
    arrays = (np.full((d, m), np.nan), np.full((d, m), np.nan), np.full((d, m), np.nan),
              np.zeros((d, m), dtype=int))
    for i in range(d):
        for j in np.flatnonzero(got.present[i]):
            _put(arrays, i, int(j), got.check(i, int(j)))
    inverse = np.asarray(inverse).reshape(-1)
    arrays = tuple(a[inverse] for a in arrays)
    return PpBatch(n, names, _items(names, arrays), [], d, {})


def _put(arrays: tuple, at, j: int, c) -> None:
    """Check ``c`` of one board as check ``j`` of the boards ``at`` (margin, value,
    limit, status: NaN for none or a yes/no value)."""
    margin, value, limit, status = arrays
    margin[at, j] = number_or_nan(c.margin)
    value[at, j] = number_or_nan(c.value)
    limit[at, j] = number_or_nan(c.limit)
    status[at, j] = STATUS_CODES[c.status]


def _items(names: list, arrays: tuple) -> list:
    """One :class:`BatchCheck` per check of ``names`` from the arrays of :func:`_put`
    (value and limit only where the nominal check's value is a number, a margin only
    where it has one)."""
    margin, value, limit, status = arrays
    items: list[Any] = []
    for j, nm in enumerate(names):
        ec = nm["engine"]
        has_margin = ec.margin is not None
        has_value = isinstance(ec.value, (int, float)) and not isinstance(ec.value, bool)
        items.append(BatchCheck(
            ec.id, "", nm["signal"], value[:, j] if has_value else None,
            limit[:, j] if has_value else None, margin[:, j] if has_margin else None,
            status[:, j], ec.unit))
    return items


def engine_note(bus_id: str, why: dict) -> str:
    """The note of a run that says how many of a bus's boards the engine evaluated
    beside its table, and why (``why``: counts by the keys of :data:`WHY`)."""
    total = sum(why.values())
    parts = ", ".join(f"{why[k]} {text}" for k, text in WHY.items() if why.get(k))
    return f"bus {bus_id}: {total} board{plural_s(total)} evaluated by the engine ({parts})"


def prepare_table(bus: Bus, design, nominal, tables: dict, span: float, floor: float,
                  boards: int, progress=None) -> None:
    """Build (or decline) the bus's table in ``tables`` for a run of ``boards`` variants,
    before the run's first :func:`build` call.

    :func:`build` decides whether a table pays from the variants of the call at hand; a
    run that evaluates its boards in chunks calls this first with all of them, so that
    the decision, and so every board's result, does not depend on the chunk size.
    """
    if parameter_specs(bus):
        _table(bus, design, chosen_resistors(nominal), tables, span, floor, boards, progress)


def _table(bus, design, chosen, tables, span, floor, distinct, progress):
    """The bus's table from ``tables``, built on first use when it costs fewer engine
    evaluations than the distinct variants; None when there is none.

    A table's first grid and its verification boards are what it costs at least; a
    routed line's rough cells then add nodes (:mod:`pinlib.engines.pptable`: the route
    of tests/data/spi-route.toml took 66 nodes where its first grid has 21).  The table
    is given the variants less one as its budget, so that it never takes as many engine
    evaluations as the variants would: a rough cell it cannot afford to bisect further
    is declined, and its boards go to the engine with the rest of the run's.
    """
    if tables is None:
        return None
    if bus.id in tables:
        got = tables[bus.id]
        return got if isinstance(got, pptable.LineTable) else None
    axes = pptable.axes_of(parameter_specs(bus), span, floor)
    cost = math.prod(pptable.NODES[ax.kind] for ax in axes) + pptable.VERIFY
    if cost >= distinct:
        return None  # cheaper to run the engine on each variant (and not remembered)
    got = tables[bus.id] = pptable.tabulate(bus, design, axes, chosen, progress=progress,
                                            budget=distinct - 1)
    return got if isinstance(got, pptable.LineTable) else None


def _table_note(bus: Bus, grid) -> str:
    # an axis is named by its kind; two of one kind (a rail and a device's own rail) by
    # the parameters each sets as well, so that they read apart
    kinds = [ax.kind for ax in grid.axes]
    names = ({spec[-1]: spec[0] for spec in parameter_specs(bus)}
             if len(set(kinds)) < len(kinds) else {})

    def axis_name(ax) -> str:
        word = "pull-up" if ax.kind == "pullup" else ax.kind  # as the text writes it
        if kinds.count(ax.kind) < 2:
            return f"{word} factor"
        return f"{word} factor of " + ", ".join(names.get(k, str(k)) for k in ax.keys)

    axes = ", ".join(f"{axis_name(ax)} {ax.lo:.3g}–{ax.hi:.3g}" for ax in grid.axes)
    # the largest difference of a relative margin, in percentage points; under 0.001 the
    # bound itself (never an exponent)
    points = max(float(grid.max_error) * 100.0, 0.001)
    points_text = f"{points:.2g}" if points < 10 else f"{points:.0f}"
    # "±" before the number: a word before a number is held to it in wrapping
    # (pinlib.core.wrapping), and "within 0.047 percentage" held as one word left a gap
    # at the end of the line before it that read as a line break in mid-sentence
    return (f"bus {bus.id}: line results interpolated from {grid.evaluations} engine "
            f"evaluations over the tolerance box ({axes}); at {pptable.VERIFY} boards "
            f"drawn in the box they agree with the engine within ±{points_text} percentage "
            "points "
            + ("of margin (boards outside the box, within three times that of failing, "
               "or where a line's results jump: evaluated by the engine)" if grid.has_jumps()
               else "of margin (boards outside the box, or within three times that of "
               "failing: evaluated by the engine)"))
