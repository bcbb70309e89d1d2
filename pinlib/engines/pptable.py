"""Tables of the push-pull engine over a bus's tolerance box, for large batches of boards.

A drawn board of an SPI or GPIO bus differs from the design in its rails, its line
lengths and its lines' board capacitance (:mod:`pinlib.engines.ppvariant`).  Each line's
results (its checks, and the flights it gives the timing budget) depend only on that
line's own length and capacitance factors, on the rails and on the pins' capacitance; the
bus's timing checks are sums of flights from several lines
(:func:`pinlib.engines.spi.budget_terms`).  So:

1. **Nodes.**  The engine evaluates the bus at every node of a grid over the box: one
   axis for the length factor (every line at the same factor), one for the board
   capacitance factor, one per toleranced rail and one per device whose pin
   capacitance is toleranced.  One evaluation gives every line's
   results at that node, since no line depends on another's factors.
2. **Lines.**  A board's line quantities (check margins, values and limits, flights)
   are interpolated at that line's own factors: along each axis a cubic through the four
   nearest nodes (a parabola on a three-node axis), a quantity equal at every node
   taken as it is.
3. **Bus.**  The timing checks are computed from the interpolated flights by the
   engine's own budget (``budget_terms``, which takes arrays) and the margin rule of
   its checks (:meth:`pinlib.engines.spi.budget.Term.check_margin`: relative to the
   requirement, or the slack in seconds where the requirement is 0); statuses come from
   the margins by the engine's rule (:meth:`~pinlib.engines.spi.budget.Term.codes`: a
   slack in seconds passes from 0 up, and warns below it where the 0 was taken for a
   requirement the part does not record; a term whose available time rests on an
   assumed CS lead or lag warns at worst).  A slack in seconds is compared with the
   table's error in units of :func:`_flight_scale` (:meth:`LineTable.margin_scales`).
   A device's ``supply-range`` check is the engine's rule at the board's own rail
   (nothing interpolated).
4. **Rough cells.**  A line's margin or flight can jump or bend across a cell (on a
   routed line a stub's receiver sees a stepped edge, whose 10-90 % time jumps as a
   step's plateau crosses 90 %, and whose first crossing of a threshold jumps from one
   step to the next; a flight is judged in units of the budget's smallest
   requirement, what a flight's error moves a timing margin by):
   :mod:`pinlib.engines.tablegrid` finds such cells from the nodes, they
   are bisected (up to :data:`REFINE` times, the nodes the engine already gave kept),
   no other board's stencil spans them, and a board in a cell still rough at the finest
   width is left to the engine (:meth:`LineTable.declined`).  A yes/no check of a line
   (ringing) whose status moves takes its nodes' status, a cell across which that
   status changes being rough on any axis.
5. **Verification.**  The table is refused (the caller then runs the engine on every
   board) when the nodes do not all give the same checks, when the status of a check
   with a margin does not follow from it, or when, at :data:`VERIFY` boards drawn
   inside the box,
   a margin interpolated from the table differs from the engine's by more than
   :data:`MARGIN_TOL`.  The largest difference found is reported, and the caller runs
   the engine on every board with an interpolated margin within three times that
   difference of failing: the interpolation decides a board's pass or fail only where
   its margin is well clear of the limit.

A board outside the box (a normal draw beyond the span the table covers) is left to the
caller, which evaluates it with the engine.
"""

from __future__ import annotations

import itertools
import math
from dataclasses import field as _field
from dataclasses import replace

import numpy as np

from pinlib.core.valueclass import value_class
from pinlib.engines import ppnodes
from pinlib.engines import ppvariant as ppv
from pinlib.engines.opendrain.rules import supply_margin
from pinlib.engines.ppvariant import line_of_key
from pinlib.engines.ppvariant import number_or_nan as _num
from pinlib.engines.pushline import Flight
from pinlib.engines.spi.budget import EDGE_FIELDS
from pinlib.engines.tablegrid import interpolate, rough_spans, stencil
from pinlib.model.design import Bus, Design
from pinlib.model.result import STATUS_CODES, status_codes

__all__ = ["MARGIN_TOL", "VERIFY", "Axis", "LineTable", "Refusal", "axes_of", "tabulate"]

#: Largest difference between an interpolated and an engine margin the table accepts (a
#: fraction of the limit): the engine's own overshoot on a route moves by about 0.1 % of
#: its limit as its time step moves with the lengths (tests/data/spi-route.toml).
MARGIN_TOL = 2e-3
#: Boards drawn inside the box (fixed seed) at which the table is checked against the engine.
VERIFY = 20
#: Nodes per axis, by kind: the length axis moves delays and reflections the most; a GPIO
#: line's pull-up moves its levels and its rise almost in proportion.
NODES = {"length": 7, "capacitance": 5, "supply": 3, "pullup": 3}


@value_class(frozen=True)
class Refusal:
    """Why no table stands in for the engine on a bus: every board then goes to the
    engine (correct, only slower), and the run's notes say why."""

    reason: str

    def __str__(self) -> str:
        return self.reason


#: More engine evaluations than this and the table is not built (nor refined further).
MAX_NODES = 400
#: Bisections of a rough cell at most; the largest miss of a one-sided cubic counted as
#: smooth (a margin, a fraction of its limit: :mod:`pinlib.engines.tablegrid`).
REFINE, ROUGH_TOL = 8, 2e-3


@value_class(frozen=True)
class Axis:
    """One axis of the table: the factor keys it sets and the span it covers.

    ``kind`` is ``"length"``, ``"capacitance"``, ``"supply"`` or ``"pullup"``; a line's
    length, board-capacitance or pull-up axis sets the key of every line at once
    (``keys``), a rail's or a device's axis its one key.
    """

    kind: str
    keys: tuple
    lo: float
    hi: float

    def nodes(self) -> np.ndarray:
        return np.linspace(self.lo, self.hi, NODES[self.kind])


def axes_of(specs: list[tuple], span: float, floor: float) -> list[Axis]:
    """The axes of a bus's table from :func:`pinlib.engines.ppvariant.parameter_specs`.

    Parameters
    ----------
    specs : list of tuple
        ``(name, kind, nominal, tolerance, unit, key)`` of each varied quantity. [1]
    span : float
        Tolerances covered: 1 for uniform draws, more for normal ones (3σ is 1). [1]
    floor : float
        The smallest factor a draw may take. [1]
    """
    groups: dict[tuple, list] = {}
    for _, kind, _, tol, _, key in specs:
        # a line factor: one axis for every line at once; a rail or a device: its own axis
        group = (kind, tol) if line_of_key(key) is not None else (kind, key)
        groups.setdefault(group, []).append((key, tol))
    out = []
    for (kind, _), members in groups.items():
        tol = members[0][1]
        lo, hi = max(1.0 - span * tol, floor), 1.0 + span * tol
        out.append(Axis(kind, tuple(k for k, _ in members), lo, hi))
    return out


@value_class
class LineTable:
    """The engine's results over a bus's tolerance box.

    Attributes
    ----------
    axes : list of Axis
        The grid's axes. [1]
    names : list of dict
        The checks of a varied board, as :func:`pinlib.engines.ppvariant.check_names`. [1]
    evaluations : int
        Engine evaluations made (nodes and verification boards). [1]
    max_error : float
        Largest margin difference found at the verification boards. [1]
    """

    axes: list
    names: list
    evaluations: int
    max_error: float
    _grids: list
    _lines: dict          # signal -> (labels, table of shape grid + (labels,))
    _checks: list         # per check: how to fill it (see ppnodes.plan)
    _analysis: object     # the nominal SpiAnalysis (mode, controller, bridges), or None
    _flight_slots: list   # per peripheral: {field: (signal, label index base)}
    _warn: float          # the design's warning margin
    _rough: dict = _field(default_factory=dict)  # signal -> per axis (avoided, declined)
    _spans: dict = _field(default_factory=dict)  # signal -> per axis, its rough spans

    def inside(self, factors: dict, n: int) -> np.ndarray:
        """Which boards lie inside the box (the others are the caller's)."""
        ok = np.ones(n, dtype=bool)
        for ax in self.axes:
            for key in ax.keys:
                f = factors.get(key)
                if f is not None:
                    f = np.asarray(f, dtype=float).reshape(n)
                    ok &= (f >= ax.lo - 1e-12) & (f <= ax.hi + 1e-12)
        return ok

    def has_jumps(self) -> bool:
        """Whether some line has a cell the table declines (see :meth:`declined`)."""
        return any(len(r[1]) for rough in self._rough.values() for r in rough)

    def declined(self, factors: dict, n: int) -> np.ndarray:
        """Which boards (inside the box) the table does not answer for: a line's factor
        in a cell its results are not smooth across (:mod:`pinlib.engines.tablegrid`).
        The caller evaluates them with the engine."""
        out = np.zeros(n, dtype=bool)
        for sig, rough in self._rough.items():
            if any(len(r[0]) for r in rough):
                coords = self._coords(sig, factors, n)
                for i, (g, r) in enumerate(zip(self._grids, rough, strict=True)):
                    out |= stencil(g, coords[:, i], *r, self._coarse()[i])[2]
        return out

    def evaluate(self, factors: dict, n: int, order: list[str] | None = None) -> dict:
        """Margins, values, limits and statuses of every check at ``n`` boards.

        Parameters
        ----------
        factors : dict
            Factor of each varied key, shape ``(n,)`` each, inside the box. [1]
        n : int
            Boards. [1]
        order : list of str, optional
            Check names for the columns (a name the table lacks gets a NaN margin and
            passes); the table's own names by default. [1]

        Returns
        -------
        dict
            ``margin``, ``value``, ``limit`` (float, shape ``(n, checks)``) and
            ``status`` (int codes of :data:`pinlib.model.result.STATUS_CODES`).
        """
        got = {sig: self._line_values(sig, factors, n) for sig in self._lines}
        where = {nm["name"]: j for j, nm in enumerate(self.names)}
        order = [nm["name"] for nm in self.names] if order is None else order
        m = len(order)
        # one row per check while filling (contiguous), handed back transposed
        margin = np.full((m, n), np.nan)
        value = np.full((m, n), np.nan)
        limit = np.full((m, n), np.nan)
        status = np.zeros((m, n), dtype=int)
        terms = self._terms(got, n) if self._analysis is not None else []
        by_margin = []
        for j, name in enumerate(order):
            if name not in where:
                continue
            plan = self._checks[where[name]]
            kind = plan[0]
            if kind == "const":
                _, mg, val, lim, code = plan
                margin[j], value[j], limit[j], status[j] = mg, val, lim, code
            elif kind == "supply":  # the engine's rule, at each board's rail
                _, key, v, lo, hi, soft = plan
                f = factors.get(key) if key is not None else None
                rail = v * (np.ones(n) if f is None else np.asarray(f, dtype=float).reshape(n))
                mg, low = supply_margin(rail, rail, lo, hi)
                margin[j], value[j], limit[j] = mg, rail, np.where(low, lo, hi)
                # beyond a soft end of the range at most a warning (model.result.soft_limit)
                codes = status_codes(mg, 0.0)
                status[j] = np.where(np.where(low, *soft), np.minimum(codes, 1), codes)
            elif kind == "line":
                _, sig, slots, margin_rule, code = plan
                vals = got[sig]
                for arr, slot in zip((margin, value, limit), slots[:3], strict=True):
                    arr[j] = vals[:, slot]
                if margin_rule == "nodes":  # its nodes' status (equal across the cell)
                    status[j] = np.clip(np.rint(vals[:, slots[3]]), 0, 2)
                elif margin_rule == 1:   # a rule of thumb: its status from its margin, at most warn
                    status[j] = np.minimum(status_codes(margin[j], self._warn), 1)
                elif margin_rule:
                    by_margin.append(j)
                else:
                    status[j] = code
            else:  # a timing term of the budget
                _, k, period = plan
                t = terms[k]
                value[j] = t.a * period + np.asarray(t.b, dtype=float)
                limit[j] = t.required
                margin[j] = t.check_margin(value[j])   # the engine's term_check
                status[j] = t.codes(margin[j], self._warn)   # and its status rule
        if by_margin:
            rows = np.array(by_margin)
            status[rows] = status_codes(margin[rows], self._warn)
        return {"margin": margin.T, "value": value.T, "limit": limit.T, "status": status.T}

    def margin_scales(self, order: list[str]) -> np.ndarray:
        """What one unit of margin is, per check named in ``order``, for comparing margins
        with the table's error (:attr:`max_error`): 1 for a margin relative to its limit,
        :func:`_flight_scale` seconds for a timing term's slack in seconds (a requirement
        of 0, :attr:`pinlib.engines.spi.budget.Term.margin_unit`)."""
        where = {nm["name"]: j for j, nm in enumerate(self.names)}
        out = np.ones(len(order))
        for i, name in enumerate(order):
            plan = self._checks[where[name]] if name in where else ("const",)
            if plan[0] == "term" and self._analysis.terms[plan[1]].margin_unit is not None:
                out[i] = _flight_scale(self)
        return out

    def interpolated(self, order: list[str]) -> np.ndarray:
        """Which of the checks named in ``order`` have interpolated margins (the others
        are the engine's own, the same at every node)."""
        where = {nm["name"]: j for j, nm in enumerate(self.names)}
        out = np.zeros(len(order), dtype=bool)
        for i, name in enumerate(order):
            plan = self._checks[where[name]] if name in where else ("const",)
            if plan[0] == "term":
                out[i] = True
            elif plan[0] == "line":
                col = self._lines[plan[1]][1][..., plan[2][0]]
                out[i] = bool(np.ptp(col) > 0) if np.isfinite(col).all() else False
        return out

    # ---------------------------------------------------------------- internals

    def _coords(self, sig: str, factors: dict, n: int) -> np.ndarray:
        cols = []
        for ax, grid in zip(self.axes, self._grids, strict=True):
            per_line = line_of_key(ax.keys[0]) is not None
            key = next((k for k in ax.keys if line_of_key(k) == sig), None) if per_line \
                else ax.keys[0]
            f = factors.get(key) if key is not None else None
            cols.append(np.full(n, grid[0]) if f is None
                        else np.asarray(f, dtype=float).reshape(n))
        return np.stack(cols, axis=1) if cols else np.zeros((n, 0))

    def _line_values(self, sig: str, factors: dict, n: int) -> np.ndarray:
        _, table = self._lines[sig]
        return interpolate(self._grids, table, self._coords(sig, factors, n),
                           self._rough.get(sig), self._coarse())[0]

    def _coarse(self) -> list:
        """Each axis's nodes before any bisection (:func:`Axis.nodes`)."""
        return [np.isin(g, ax.nodes()) for ax, g in zip(self.axes, self._grids, strict=True)]

    def _terms(self, got: dict, n: int) -> list:
        from pinlib.engines.spi import budget_terms

        sa = self._analysis
        periphs = []
        for p, slots in zip(sa.peripherals, self._flight_slots, strict=True):
            def flight(field, p=p, slots=slots):
                if field not in slots:
                    return getattr(p, field)
                if field in EDGE_FIELDS:
                    return {e: _flight(got[field], slots[field][e]) for e in ("rise", "fall")}
                sig, base = slots[field]
                return _flight(got[sig], base)
            periphs.append(replace(p, sclk=flight("sclk"), copi=flight("copi"),
                                   cs=flight("cs"), cipo=flight("cipo")))
        return budget_terms(sa.mode, sa.controller, periphs, sa.t_bridge)


def _flight(numbers: np.ndarray, base: int) -> Flight:
    """A flight over the boards from a line's numbers, its four from ``base`` on (early,
    late, and the same at the fast corner: :func:`pinlib.engines.ppnodes.record`). [s]"""
    return Flight(*(numbers[:, base + k] for k in range(4)))


def tabulate(bus: Bus, design: Design, axes: list[Axis],
             resistors: dict, *, progress=None,
             budget: int | None = None) -> LineTable | Refusal:
    """Build and verify the table of a push-pull bus, or say why it cannot stand in for
    the engine (see the module notes).

    Parameters
    ----------
    bus : Bus
        An ``spi`` or ``gpio`` bus of ``design``. [1]
    design : Design
        The design. [1]
    axes : list of Axis
        From :func:`axes_of`. [1]
    resistors : dict
        Series resistors fixed for "auto" lines (``ppvariant.chosen_resistors``). [Ω]
    progress : bool, callable or None, optional
        A bar over the engine evaluations (see :func:`pinlib.core.progress.progress_bar`). [1]
    budget : int, optional
        The most engine evaluations the table may take, nodes and verification boards
        together: rough cells are bisected only while the finer grid stays within it
        (cells left wider are declined all the same).  :data:`MAX_NODES` nodes at most
        in any case. [1]
    """
    from pinlib.core.progress import progress_bar

    grids = [ax.nodes() for ax in axes]
    shape = tuple(g.size for g in grids)
    if int(np.prod(shape, dtype=float)) > MAX_NODES:
        return Refusal(f"{int(np.prod(shape, dtype=float))} nodes, more than {MAX_NODES}")
    bar = progress_bar(int(np.prod(shape)) + VERIFY, desc=f"tables for bus {bus.id}",
                       unit="engine run", enabled=progress)
    with bar:
        try:
            return _tabulate(bus, design, axes, resistors, grids, shape, bar, budget)
        except ppnodes.Refused as refused:
            return Refusal(str(refused))


def _tabulate(bus, design, axes, resistors, grids, shape, bar, budget) -> LineTable:
    done: dict = {}  # engine evaluations by node (coordinates): kept as the grid refines
    most = MAX_NODES if budget is None else min(MAX_NODES, budget - VERIFY)
    table = _assemble(bus, design, axes, resistors, grids, done, bar, {})
    for _ in range(REFINE):
        finer = _refined(table)
        if finer is None or math.prod(g.size for g in finer) > most:
            break
        bar.grow(math.prod(g.size for g in finer) - math.prod(g.size for g in grids))
        grids = finer
        table = _assemble(bus, design, axes, resistors, grids, done, bar, table._spans)
    table.evaluations = len(done)
    return _verify(table, bus, design, resistors, bar)


def _assemble(bus, design, axes, resistors, grids, done, bar, spans) -> LineTable:
    """The table over ``grids`` (the nodes ``done`` lacks evaluated), its rough cells."""
    shape = tuple(g.size for g in grids)
    names: list | None = None
    order: list | None = None
    labels: dict[str, list] | None = None
    values: dict[str, np.ndarray] = {}
    node_checks = []
    first_sa = None
    for index in itertools.product(*(range(s) for s in shape)):
        node = tuple(float(g[i]) for g, i in zip(grids, index, strict=True))
        if node not in done:
            factor = {key: x for ax, x in zip(axes, node, strict=True) for key in ax.keys}
            res, sa = ppnodes.evaluate(ppv.vary_bus(bus, factor.get, resistors), design)
            # only what the table reads (a result holds its waveforms); the analysis of
            # the first node (the box's low corner, first on every grid) is the table's
            done[node] = (ppv.check_names(bus, res), sa if not done else None,
                          *ppnodes.record(bus, res, sa))
            bar.update(1)
        node_names, sa, per_line, checks = done[node]
        if order is None:  # the first node names the checks (a varied board has no
            names = node_names  # "auto" left: no series-termination check)
            order = [nm["name"] for nm in names]
        if [c[0] for c in checks] != order:
            raise ppnodes.Refused("the checks differ across the tolerance box")
        here = {sig: [item[:-1] for item in items] for sig, items in per_line.items()}
        if labels is None:
            labels = here
            values = {sig: np.empty(shape + (len(items),)) for sig, items in here.items()}
            first_sa = sa
        elif here != labels:
            raise ppnodes.Refused("the lines' flights differ across the tolerance box")
        for sig, items in per_line.items():
            values[sig][index] = [item[-1] for item in items]
        node_checks.append(checks)
    plans = ppnodes.plan(names, node_checks, labels or {}, values, first_sa, bus, design)
    slots = ppnodes.flight_slots(first_sa, labels or {})
    table = LineTable(axes, names, len(node_checks), 0.0, grids,
                      {sig: (labels[sig], values[sig]) for sig in (labels or {})},
                      plans, first_sa, slots, design.warn_margin)
    _rough(table, spans)
    return table


def _rough(table: LineTable, before: dict) -> None:
    """Each line's rough cells along each axis, where one of its interpolated margins or
    one of the flights it gives the timing budget is not smooth
    (:func:`pinlib.engines.tablegrid.rough_spans`, :data:`ROUGH_TOL`).  Sets ``_rough``
    and ``_spans``.

    A flight enters a timing term's available time with a coefficient of one, so a
    flight missed by ``d`` moves that term's margin by ``d / |required|``: flights are
    judged in units of the smallest requirement of the budget, against the same
    tolerance as the margins."""
    scale = _flight_scale(table)
    for sig, (labels, values) in table._lines.items():
        mine = [p for p in table._checks if p[0] == "line" and p[1] == sig]
        cols = [p[2][0] for p in mine]
        # a yes/no check whose status moves: a cell where its status changes is rough
        steps = [p[2][3] for p in mine if p[3] == "nodes"]
        flights = [i for i, label in enumerate(labels) if label[0] == "flight"]
        got = []
        for a, g in enumerate(table._grids):
            rows = np.concatenate([_along(values[..., cols], a),
                                   _along(values[..., flights], a) / scale])
            got.append(rough_spans(g, rows, ROUGH_TOL,
                                   before.get(sig, [[]] * len(table._grids))[a],
                                   _along(values[..., steps], a)))
        table._rough[sig] = [(avoided, now) for avoided, now, _ in got]
        table._spans[sig] = [span for _, _, span in got]


def _along(values: np.ndarray, axis: int) -> np.ndarray:
    """``values`` (grid shape + (q,)) as rows along one axis, shape ``(rows, nodes)``."""
    return np.moveaxis(values, axis, -1).reshape(-1, values.shape[axis])


def _flight_scale(table: LineTable) -> float:
    """The time that one unit of a timing term's margin is: the smallest requirement of
    the budget at the table's first node (the clock period where none is recorded). [s]"""
    sa = table._analysis
    if sa is None:
        return 1.0  # no budget: a line of a GPIO bus has no flights
    required = [abs(float(t.required)) for t in sa.terms if float(t.required) != 0.0]
    periods = [p[2] for p in table._checks if p[0] == "term"]
    return min(required) if required else (periods[0] if periods else 1.0)


def _refined(table: LineTable) -> list | None:
    """The grids with every rough cell wider than the finest allowed bisected, or None
    when there is none."""
    out, more = [], False
    for a, (ax, g) in enumerate(zip(table.axes, table._grids, strict=True)):
        finest = (ax.hi - ax.lo) / ((NODES[ax.kind] - 1) * 2 ** REFINE) * (1 + 1e-9)
        cells = sorted({int(c) for rough in table._rough.values() for c in rough[a][1]
                        if g[c + 1] - g[c] > finest})
        if cells:
            more = True
            g = np.sort(np.concatenate([g, 0.5 * (g[cells] + g[np.array(cells) + 1])]))
        out.append(g)
    return out if more else None


def _verify(table: LineTable, bus: Bus, design: Design, resistors: dict,
            bar) -> LineTable:
    """Check the table at VERIFY boards drawn in the box (fixed seed) against the engine."""
    rng = np.random.default_rng(20261201)
    keys = [k for ax in table.axes for k in ax.keys]
    span = {k: (ax.lo, ax.hi) for ax in table.axes for k in ax.keys}
    draws = {k: rng.uniform(*span[k], VERIFY) for k in keys}
    for _ in range(VERIFY):  # a board the table declines is the engine's: draw another
        off = np.flatnonzero(table.declined(draws, VERIFY))
        if not off.size:
            break
        for k in keys:
            draws[k][off] = rng.uniform(*span[k], off.size)
    else:
        raise ppnodes.Refused("the table declines almost every board")
    got = table.evaluate(draws, VERIFY)
    scales = table.margin_scales([nm["name"] for nm in table.names])
    worst = 0.0
    for b in range(VERIFY):
        at = {k: float(v[b]) for k, v in draws.items()}
        res, _ = ppnodes.evaluate(ppv.vary_bus(bus, at.get, resistors), design)
        bar.update(1)
        engine = [c for _, c in ppv.flat_checks(res)]
        if [nm["name"] for nm in ppv.check_names(bus, res)] != [nm["name"] for nm in table.names]:
            raise ppnodes.Refused("a verification board has other checks")
        for j, c in enumerate(engine):
            if c.margin is None:
                if STATUS_CODES[c.status] != got["status"][b, j]:
                    raise ppnodes.Refused(f"{table.names[j]['name']}: another status at a "
                                   "verification board")
                continue
            mine, theirs = got["margin"][b, j], _num(c.margin)
            if math.isfinite(theirs) or math.isfinite(mine):
                diff = abs(mine - theirs) / scales[j]
                if not diff <= MARGIN_TOL:
                    raise ppnodes.Refused(f"{table.names[j]['name']}: interpolated margin "
                                   f"{mine:.4g} against the engine's {theirs:.4g} at a "
                                   "verification board")
                worst = max(worst, diff)
    table.evaluations += VERIFY
    table.max_error = worst
    return table
