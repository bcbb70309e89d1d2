"""The edges of many line analyses solved together, ahead of the analyses.

A study that evaluates many variants of one bus (the candidates of a position) makes
the same line analyses again and again with one pin changed; most of each analysis's
time is its waveform solves, one :func:`pinlib.physics.waveform.distributed_response`
call per edge.  :func:`prefetch` takes the inputs of every variant's line analyses
(:class:`~pinlib.engines.pushline.line.LineInputs`), works out the edges each will solve
with the engine's own steps (driver models, electrical length, :func:`edge_plan`, the
grid of :func:`edge_grid`), and solves the edges that share a chain of sections in one
call per group of time steps within :data:`STEP_RATIO` of each other, each edge on its
own grid (:mod:`pinlib.physics.waveform.rowgrids`): the grid ``arange(n + 1) * dt`` of
a record is the start of that grid lengthened to the batch's longest record, and the
solver is causal, so each edge is the first samples of its row.  Each edge is first
solved on its shorter first record, kept when the line is at rest by its end (as
:func:`~pinlib.engines.pushline.waves.simulate_edge` keeps it); the edges that are not
are solved again, batched the same way, on their whole grids.  Each result goes into
the run's memo under the exact key :func:`~pinlib.engines.pushline.waves.simulate_edge`
asks for, and the analyses made
afterwards take it there, with the figures they will read off each edge (edge time,
overshoot, undershoot, threshold crossings, re-crossings: :mod:`pinlib.engines.pushline.
batchfigures`, read over the whole batch at once); an edge the prefetch did not solve (a
lumped edge, a record not yet at rest, a solve that warned, a series resistor
"auto" chose on a short line) the engine solves itself, as it would without the
prefetch.  So every figure is the engine's, from the same grid and solver; only rounding
inside a batched solve can differ (a few units in the last place).

Before the edges, the drivers' models are fitted together
(:func:`~pinlib.engines.pushline.drive.prefit`): a candidate's output pin brings its own
datasheet edges, and one fit at a time took most of a driving position's ranking.

It needs an active :func:`pinlib.engines.memo.run_scope` (without one it does nothing),
and the scope holds every edge solved until it ends: callers prefetch a bounded number
of variants per scope.
"""

from __future__ import annotations

import warnings
from collections.abc import Iterable

import numpy as np

from pinlib.core.errors import PinlibError
from pinlib.engines import memo
from pinlib.engines.pushline.analysis import LineAnalysis, _others
from pinlib.engines.pushline.batchfigures import EdgeUse, store_figures
from pinlib.engines.pushline.drive import _thresholds, edge_plan, prefit, ref_times
from pinlib.engines.pushline.line import (
    LineInputs,
    _driver_models,
    _electrical_length,
    alone_inputs,
    alone_key,
    line_stretches,
)
from pinlib.engines.pushline.termination import auto_ideal, chosen_series_resistor
from pinlib.engines.pushline.waves import edge_grid, keeps, unit_edge_key
from pinlib.engines.readout import explained
from pinlib.model.result import LineResult
from pinlib.physics import driver as drv
from pinlib.physics import waveform as wf

__all__ = ["prefetch", "MAX_ELEMENTS", "STEP_RATIO"]

#: Samples times edges in one batched solve, at most (about 32 MB per array the solver
#: keeps; its own cap on a run's matrices then leaves the run length alone).
MAX_ELEMENTS = 4_000_000
#: The steps of one batched solve differ by at most this ratio: the solver marches them
#: in lockstep, padded to the longest run, so a batch does about ``STEP_RATIO ** 1.5``
#: times the work of its edges alone (1.1: about 15 % more for about a fifth of the
#: solver calls of one call per step at the demo's display position).
STEP_RATIO = 1.1


def prefetch(inputs: Iterable[LineInputs]) -> int:
    """Solve the edges the analyses of ``inputs`` will ask for, batched, into the run's
    memo (see the module notes).

    Parameters
    ----------
    inputs : iterable of LineInputs
        The line analyses about to be made. [1]

    Returns
    -------
    int
        Edges solved and stored. [1]
    """
    if not memo.active():
        return 0
    inputs = list(inputs)
    prefit(ep for li in inputs for ep in li.drivers)
    requests, uses = {}, {}
    made = [(li, a) for li in inputs if (a := _analysis(li)) is not None]
    _edges_alone([a for _, (a, _) in made])
    for li, (a, pullup) in made:
        for req, use in _requests(li, a, pullup):
            key = unit_edge_key(*req)
            if key not in requests and not memo.known(key):
                requests[key] = req
            if key in requests:
                uses.setdefault(key, {})[use] = None
    groups: dict[tuple, list] = {}
    for key, (stretches, r_source, t_ramp, c_far, distributed) in requests.items():
        try:
            g = edge_grid(stretches, r_source, t_ramp, c_far, distributed)
        except PinlibError:
            continue  # too many steps: the engine names the line
        if g.distributed:  # a lumped edge is a closed form, cheap on its own
            groups.setdefault(tuple(g.sections), []).append((key, g, r_source, t_ramp))
    stored = 0
    for full in (False, True):  # first records, then the whole grids of those not at rest
        left = {}
        for sections, members in groups.items():
            members.sort(key=lambda m: -float(m[1].t[1]))  # by step, the coarsest first
            start = 0
            while start < len(members):
                end = _step_end(members, start)
                for batch in _batches(members[start:end], full):
                    done, rest = _solve(list(sections), batch, uses, full)
                    stored += done
                    if rest:
                        left.setdefault(sections, []).extend(rest)
                start = end
        groups = left
    return stored


def _step_end(members: list, start: int) -> int:
    """The end of the members from ``start`` (steps sorted from the coarsest) whose
    steps are within :data:`STEP_RATIO` of the first."""
    coarsest = float(members[start][1].t[1])
    end = start + 1
    while end < len(members) and not coarsest > STEP_RATIO * float(members[end][1].t[1]):
        end += 1
    return end


#: The cost model that parts a group of like steps into solver calls (measured on the
#: candidates of the demo's display position, 2026-12-04): a call's fixed cost, a
#: lockstep run's, and a sample's (each record is marched on to its batch's longest,
#: so a short record beside a long one costs the long one's samples). [s]
_CALL_COST = 1.0e-3
_RUN_COST = 33e-6
_SAMPLE_COST = 49e-9


def _batches(members: list, full: bool) -> list[list]:
    """``members`` (steps within :data:`STEP_RATIO`) in solver calls: by record length,
    parted where the padding of the short records to the long ones would cost more
    than another call (:data:`_CALL_COST`...), at most :data:`MAX_ELEMENTS` samples a
    call.  Which call an edge is solved in changes none of its samples (each case is
    marched on its own grid and runs, :mod:`pinlib.physics.waveform.rowgrids`)."""
    members = sorted(members, key=lambda m: _length(m[1], full))
    lengths = [_length(m[1], full) for m in members]
    run = max(1, min(_run_steps(m[1]) for m in members))
    # best[j]: the least cost of the first j members, parted at cut[j]
    best, cut = [0.0], [0]
    for j in range(1, len(members) + 1):
        longest, choice = lengths[j - 1], None
        for i in range(j - 1, -1, -1):
            size = j - i
            if size > 1 and size * longest > MAX_ELEMENTS:
                break
            cost = (best[i] + _CALL_COST + -(-longest // run) * _RUN_COST
                    + size * longest * _SAMPLE_COST)
            if choice is None or cost < choice[0]:
                choice = (cost, i)
        best.append(choice[0])
        cut.append(choice[1])
    out, j = [], len(members)
    while j > 0:
        out.append(members[cut[j]:j])
        j = cut[j]
    return out[::-1]


def _run_steps(g) -> int:
    """The steps of the solver's lockstep run on an edge's grid: its shortest delay."""
    dt = float(g.t[1])
    return int(min(td for _, td in g.sections) / dt) if g.sections else 1


def _length(g, full: bool) -> int:
    """Samples of an edge's first record, or of its whole grid (``full``)."""
    return g.t.size if full else g.n_first


def _solve(sections: list, batch: list, uses: dict, full: bool) -> tuple[int, list]:
    """One distributed solve of a batch of unit edges, each on its own grid padded to the
    longest record (:mod:`pinlib.physics.waveform.rowgrids`), and the figures read off
    them (``uses``: per key, the :class:`EdgeUse` asked for).  Each record is the first
    record :func:`~pinlib.engines.pushline.waves.simulate_edge` solves, kept as it keeps
    it (:func:`~pinlib.engines.pushline.waves.keeps`), or (``full``) the whole grid it
    solves next, kept as it keeps that; returns the edges stored and the members whose
    first record was not at rest (the others are left to the engine)."""
    n = max(_length(g, full) for _, g, _, _ in batch)
    dt = np.array([g.t[1] for _, g, _, _ in batch])
    t = np.arange(n)[None, :] * dt[:, None]  # each row its own arange(n) * dt
    if not all(np.array_equal(t[j, :_length(g, full)], g.t[:_length(g, full)])
               for j, (_, g, _, _) in enumerate(batch)):
        return 0, []  # not the engine's grids: left to the engine
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        try:
            v = wf.distributed_response(
                t if dt.size > 1 else t[0], 1.0, np.array([m[3] for m in batch]),
                np.array([m[2] for m in batch]), sections,
                np.array([m[1].c_lumped_far for m in batch])).v
        except PinlibError:
            return 0, []
    if caught:
        return 0, []  # the engine solves these itself, so that its notes carry the warning
    stored, rows, grids, left = 0, [], {}, []
    for j, member in enumerate(batch):
        key, g = member[:2]
        m = _length(g, full)
        unit = v[j, :m]  # views of the batch (the engine copies what it keeps)
        if keeps(g, unit):
            # one grid per step, its records' grids views of it (as the batch's rows)
            grid = grids.setdefault(float(dt[j]), t[j].copy())
            memo.keep(key, (grid[:m], unit, True))
            stored += 1
            rows.extend((j, m, key, use) for use in uses.get(key, ()))
        elif not full and g.n_first < g.t.size:
            left.append(member)
    store_figures(t if dt.size > 1 else t[0], v, rows)  # every row on its own grid
    return stored, left


def _analysis(li: LineInputs) -> tuple[LineAnalysis, dict] | None:
    """The analysis of ``li`` up to its drivers' models (and the pull-up of each
    open-drain driver), by the engine's steps; None where a step refuses or no driver
    is left (the analysis itself then says why)."""
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")  # the analysis notes its own warnings
            a = LineAnalysis(li.signal, li.line, line_stretches(li.line),
                             list(li.drivers), list(li.loads), list(li.receivers),
                             result=LineResult(signal=li.signal))
            pullup = _driver_models(a, a.result)
    except PinlibError:
        return None
    return (a, pullup) if a.drivers else None


def _edges_alone(analyses: list) -> None:
    """Every driver's edge into the pins alone, of all ``analyses`` in one array (the
    arithmetic is elementwise: each is the engine's own to the last bit), into the
    run's memo under :func:`_edge_alone`'s key."""
    todo = {}
    for a in analyses:
        for x in alone_inputs(a):
            key = alone_key(*x)
            if key not in todo and not memo.known(key):
                todo[key] = x
    if not todo:
        return
    r, t_ramp, c = (np.array(col, dtype=float) for col in zip(*todo.values(), strict=True))
    try:
        got = np.atleast_1d(drv.edge_time(r, t_ramp, c))
    except PinlibError:
        return  # a value the physics refuses: the engine meets it on its own
    for key, value in zip(todo, got, strict=True):
        memo.keep(key, float(value))


def _requests(li: LineInputs, a: LineAnalysis, pullup: dict) -> list[tuple]:
    """The edges the analysis of ``li`` (``a``: its drivers' models made) will solve:
    ``((stretches, r_source, t_ramp, c_far, distributed), EdgeUse)`` each, by the
    engine's own steps; none when a step refuses (the analysis itself then says why)."""
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            _electrical_length(a, [])
    except PinlibError:
        return []
    setting = li.line.series_resistor
    options = [0.0] if setting in ("auto", "none", None) else [float(setting)]
    if setting == "auto" and a.long:
        # a long line: "auto" chooses Z0 - r_out (a short one only when a check fails);
        # the edges without it only explain the choice, left out of summaries
        r_drv, ideal = auto_ideal(a)
        if ideal is not None:
            rs = chosen_series_resistor(a.z0, r_drv)
            if rs > 0:
                options = [0.0, rs] if explained() else [rs]
    out = []
    for rs in options:
        for d in a.drivers:
            rp, vp = pullup.get(d.ref, (None, None))
            others = _others(a.loads, d)
            plan = edge_plan(a.stretches, d, a.models[d.ref], others, rs,
                             li.line.extra_capacitance, long=a.long, r_pullup=rp,
                             v_pullup=vp)
            try:
                ref_times(d, a.models[d.ref], plan, rp)  # kept in the run's memo
            except PinlibError:
                pass  # the analysis meets it again and reports it
            levels, pairs = _reads(a, d, others)
            # the ringing check reads the fast corner's edges where a driver has one
            pairs = () if a.models[d.ref].fast is not None else pairs
            for edge, dist in (("rise", plan.rise_distributed), ("fall", plan.distributed)):
                if plan.own_point(edge):
                    continue  # a chain of two points, the tree solver's: solved in turn
                e = getattr(plan, edge)
                out.append(((a.stretches, *e[:3], dist), EdgeUse(*e[3:5], edge, levels,
                                                                 pairs)))
    return out


def _reads(a: LineAnalysis, d, others: list) -> tuple[tuple, tuple]:
    """What the analysis reads off a driver's edges: the thresholds of every other pin
    (its flights) and the (VIL, VIH) of every receiver with both (its ringing check)."""
    levels = {}
    for p in others:
        for level in _thresholds(p):
            levels[level] = None
    pairs = {}
    for rx in a.receivers:
        v_il, v_ih = rx.level("v_il"), rx.level("v_ih")
        if rx.ref != d.ref and v_il is not None and v_ih is not None and v_ih > v_il:
            pairs[(v_il, v_ih)] = None
    return tuple(levels), tuple(pairs)
