"""One edge at the far end of a line (:class:`EdgeWave`), solved on a bounded time grid."""

from __future__ import annotations

import math
import warnings
from collections.abc import Sequence

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError, PinlibError
from pinlib.core.quantity import format_si
from pinlib.core.valueclass import value_class
from pinlib.engines import memo
from pinlib.engines.pushline.rules import (
    _AT_REST,
    _FIRST_REFLECTION,
    _MAX_EXTENSIONS,
    _MAX_STEPS,
    _REST_DELAYS,
    _REST_TAUS,
    _SETTLE_DELAYS,
    _SETTLE_TAUS,
    _SETTLED,
    MAX_TIME_STEPS,
)
from pinlib.engines.pushline.sections import Stretch
from pinlib.physics import waveform as wf


@value_class(frozen=True)
class EdgeWave:
    """One edge at the far end of a line.

    Attributes
    ----------
    edge : str
        ``"rise"`` or ``"fall"``. [1]
    t, v : numpy.ndarray
        Sample times from the start of the source ramp, and far-end voltage. [s], [V]
    v_from, v_to : float
        Levels before and after the edge. [V]
    t_edge : float
        10-90 % edge time at the far end. [s]
    overshoot : float
        Peak above the high level (rise) or 0 (fall). [V]
    undershoot : float
        Dip below the low level (fall) or 0 (rise). [V]
    settled : bool
        Whether the record ends within 1 % of the swing of ``v_to``. [1]
    key : tuple or None
        The unit response's memo key (:func:`unit_edge_key`) when the edge came from
        :func:`simulate_edge`: its crossings and re-crossings are then taken from the
        run's memo where a batched study put them (:mod:`pinlib.engines.pushline.
        batchfigures`), else computed. [1]
    """

    edge: str
    t: np.ndarray
    v: np.ndarray
    v_from: float
    v_to: float
    t_edge: float
    overshoot: float
    undershoot: float
    settled: bool
    key: tuple | None = None

    def crossing(self, level: float) -> float:
        """First time the edge reaches ``level`` in its direction; NaN if never. [s]"""
        if self.key is None:
            return float(wf.threshold_delay(self.t, self.v, level, edge=self.edge))
        return memo.remember(
            crossing_key(self.key, self.v_from, self.v_to, self.edge, level),
            lambda: float(wf.threshold_delay(self.t, self.v, level, edge=self.edge)))

    def recrossings(self, v_il: float, v_ih: float) -> wf.Recrossings:
        """Re-crossings of VIL / VIH after the edge (:func:`pinlib.physics.waveform.
        recrossings`)."""
        if self.key is None:
            return wf.recrossings(self.t, self.v, v_il, v_ih, edge=self.edge)
        return memo.remember(
            recrossings_key(self.key, self.v_from, self.v_to, self.edge, v_il, v_ih),
            lambda: wf.recrossings(self.t, self.v, v_il, v_ih, edge=self.edge))


class _TooManySteps(InputError):
    """A record longer than :data:`MAX_TIME_STEPS`; :func:`analyse_line` names the line,
    or the section whose delay set the step (``t_end`` and ``dt``: the record and its
    step, NaN where there is no finite record; ``td``: the shortest delay solved as a
    line, which the step divides, NaN where none is). [s]"""

    t_end = dt = td = math.nan


def _grid(t_end: float, dt: float, td: float = math.nan) -> np.ndarray:
    """``arange(n + 1) * dt`` over ``t_end``, or :class:`_TooManySteps` (``td``: the
    shortest delay solved as a line, which ``dt`` divides, named in it)."""
    steps = t_end / dt
    if not math.isfinite(steps):  # a NaN delay or impedance: no count of steps to name
        raise _TooManySteps(
            M.NO_FINITE_RECORD,
            hint="give each section a geometry its method gives an impedance for, or a "
                 "capacitance and delay per length")
    if not steps <= MAX_TIME_STEPS:  # checked before anything is allocated
        exc = _TooManySteps(
            M.TOO_MANY_TIME_STEPS.format(steps=f"{steps:.3g}", limit=f"{MAX_TIME_STEPS:,}"),
            value=f"{format_si(t_end, 's')} in steps of {format_si(dt, 's')}",
            hint="the step divides the shortest section delay: merge a very short section "
                 "into its neighbour (or drop it), or shorten the longest section")
        exc.t_end, exc.dt, exc.td = t_end, dt, td
        raise exc
    n = int(math.ceil(steps))
    return np.arange(n + 1) * dt


def simulate_edge(stretches: Sequence[Stretch], r_source: float, t_ramp: float,
                  c_far: float, v_from: float, v_to: float, *, distributed: bool,
                  edge: str) -> EdgeWave:
    """One edge of a ramp source behind a resistance, at the far end of a line.

    Parameters
    ----------
    stretches : sequence of Stretch
        The line's sections. [1]
    r_source : float
        Driver resistance plus series resistor. [Ω]
    t_ramp : float
        Source ramp, 0-100 %. [s]
    c_far : float
        Capacitance at the far end: pins and extra capacitance. [F]
    v_from : float
        Level before the edge. [V]
    v_to : float
        Level after the edge. [V]
    distributed : bool
        Solve the chain of lines (True) or one lumped capacitance (False). [1]
    edge : str
        ``"rise"`` when ``v_to > v_from``, else ``"fall"``. [1]

    Returns
    -------
    EdgeWave
        The far-end waveform and its figures.

    Notes
    -----
    The circuit is linear and starts in its DC state, so the edge is
    ``v_from + (v_to - v_from) u(t)`` with ``u`` the unit response of the same circuit.
    The record runs for the ramp, 12 time constants of ``r_source`` into the whole
    capacitance and (distributed) 60 one-way delays, lengthened until it ends within
    1 % of the swing.  A chain driven through about its impedance (every reflection
    coefficient, at the source and between sections, at most 0.2) is first solved on
    a shorter record, the first samples of that one (the solver is causal: the same
    numbers to the last bit): the ramp, a round trip for each fall of the worst
    reflection until it is below 1e-14, 33 time constants of the far end's capacitance
    against the last section, and two more round trips.  When those last two round
    trips stay within 1e-14 of the final level, the line is at rest and the shorter
    record is kept: what follows could move an overshoot or undershoot only within the
    1e-12 of its level that they read as rounding, so every figure is the longer
    record's.  A series-terminated line comes to rest in about half the longer
    record.
    The step is :func:`pinlib.physics.waveform.choose_step`'s: 1/20
    of the shortest section delay, of the ramp or of the far end's time constant
    against the last section (``z0 c_far``), dividing the shortest delay exactly (over
    the ngspice case set of ``tests/test_tree_spice.py`` every edge within 0.02 %); a
    lumped load, exact at any sample, takes 1/20 of the longer of the ramp and the time
    constant.  It is made coarser
    only where the record would need more than ``_MAX_STEPS`` steps, and a record that
    would need more than :data:`MAX_TIME_STEPS` steps is refused with an InputError.
    """
    key = unit_edge_key(stretches, r_source, t_ramp, c_far, distributed)
    t, unit, settled = memo.remember(
        key, lambda: _unit_edge(stretches, r_source, t_ramp, c_far, distributed))
    # a batched study may have read them off its batch (batchfigures); else computed here
    # and kept, and the record itself is not: every driver of a line whose loads are the
    # same shares the one unit response (a bus of 255 peripherals on 1 km lines had kept
    # a 400,000-sample record per driver and edge, 2.6 GB at 200)
    fkey = figures_key(key, v_from, v_to)
    figs = memo.held(fkey)
    if figs is None:
        figs = _figures(t, v_from + (v_to - v_from) * unit, v_from, v_to)
        memo.keep(fkey, figs)
    return UnitEdgeWave(edge, (t, unit), v_from, v_to, *figs, bool(settled), key)


class UnitEdgeWave(EdgeWave):
    """An :class:`EdgeWave` whose figures are given (from a batch, or worked out by a
    route's :class:`~pinlib.engines.pushline.routes.PointWaves`): its record (``t``,
    ``v``) is made from the unit response when first read, as :func:`simulate_edge`
    makes it (a ranking, or a line of many drivers, reads the records of few edges)."""

    def __init__(self, edge: str, unit: tuple, v_from: float, v_to: float, t_edge: float,
                 overshoot: float, undershoot: float, settled: bool, key: tuple):
        for name, value in (("edge", edge), ("v_from", v_from), ("v_to", v_to),
                            ("t_edge", t_edge), ("overshoot", overshoot),
                            ("undershoot", undershoot), ("settled", settled),
                            ("key", key), ("_unit", unit)):
            object.__setattr__(self, name, value)

    @property
    def t(self) -> np.ndarray:
        """The shared grid, read-only (no copy per edge). [s]"""
        t = self._unit[0].view()
        t.flags.writeable = False
        return t

    @property
    def v(self) -> np.ndarray:
        """The record, made from the unit response on each read and not kept: an edge
        holds no array of its own (its figures, crossings and re-crossings are kept in
        the run's memo). [V]"""
        return self.v_from + (self.v_to - self.v_from) * self._unit[1]


def _figures(t: np.ndarray, v: np.ndarray, v_from: float, v_to: float) -> tuple:
    """Edge time, overshoot and undershoot of one edge record. [s, V, V]"""
    hi, lo = max(v_from, v_to), min(v_from, v_to)
    return (float(wf.edge_time(t, v, v_to, v_initial=v_from)), float(wf.overshoot(v, hi)),
            float(wf.undershoot(v, lo)))


def figures_key(unit_key: tuple, v_from: float, v_to: float) -> tuple:
    """The memo key of an edge's ``(t_edge, overshoot, undershoot)``: its unit
    response's key and its levels (the record is ``v_from + (v_to - v_from) * unit``)."""
    return ("pushline.edge_figures", unit_key, v_from, v_to)


def crossing_key(unit_key: tuple, v_from: float, v_to: float, edge: str,
                 level: float) -> tuple:
    """The memo key of :meth:`EdgeWave.crossing` of an edge from :func:`simulate_edge`."""
    return ("pushline.crossing", unit_key, v_from, v_to, edge, level)


def recrossings_key(unit_key: tuple, v_from: float, v_to: float, edge: str, v_il: float,
                    v_ih: float) -> tuple:
    """The memo key of :meth:`EdgeWave.recrossings` of an edge from :func:`simulate_edge`."""
    return ("pushline.recrossings", unit_key, v_from, v_to, edge, v_il, v_ih)


def unit_edge_key(stretches: Sequence[Stretch], r_source: float, t_ramp: float,
                  c_far: float, distributed: bool) -> tuple:
    """The exact key under which :func:`simulate_edge` keeps a unit response within a
    run (:mod:`pinlib.engines.memo`): a value stored under it by a batched solve
    (:mod:`pinlib.engines.pushline.batchsolve`) is taken as the engine's own."""
    return ("pushline.unit_edge", tuple((s.z0, s.td, s.c) for s in stretches),
            r_source, t_ramp, c_far, bool(distributed))


@value_class(frozen=True)
class EdgeGrid:
    """The time grid of one unit edge and the circuit solved on it.

    Attributes
    ----------
    t : numpy.ndarray
        Sample times, ``arange(n + 1) * dt``. [s]
    sections : list of (float, float)
        ``(z0, td)`` of the sections with a delay. [Ω, s]
    c_lumped_far : float
        Far-end capacitance with the sections that have no delay. [F]
    c_total : float
        Every capacitance of the line and its loads (the lumped model's load). [F]
    distributed : bool
        Whether the chain of lines is solved. [1]
    t_end : float
        The record's length asked for. [s]
    n_first : int
        Samples of the first record, the first of ``t`` (all of them when there is no
        shorter first record: a lumped edge, a lengthened record). [1]
    rest : int
        The first record's last samples that must stay at rest for it to be kept
        (:func:`at_rest`); 0 without a first record. [1]
    """

    t: np.ndarray
    sections: list
    c_lumped_far: float
    c_total: float
    distributed: bool
    t_end: float
    n_first: int
    rest: int


def edge_grid(stretches: Sequence[Stretch], r_source: float, t_ramp: float, c_far: float,
              distributed: bool, t_end: float | None = None) -> EdgeGrid:
    """The grid :func:`simulate_edge` solves a unit edge on (see its notes): the record's
    first length unless ``t_end`` is given (each lengthening multiplies it by 3), with
    the shorter first record of a chain of lines within it."""
    c_line = sum(s.c for s in stretches)
    c_total = c_line + c_far
    tau = r_source * c_total
    # a section far shorter than the ramp counts as a capacitance (wf.LUMP_FRACTION: its
    # delay would set the step for no visible change), at the far end as one without a
    # delay does
    solved = [s.td > 0.0 and not wf.is_short(s.td, t_ramp) for s in stretches]
    sections = _joined([(s.z0, s.td) for s, x in zip(stretches, solved, strict=True) if x])
    c_lumped_far = c_far + sum(s.td / s.z0 if s.td > 0.0 else s.c
                               for s, x in zip(stretches, solved, strict=True) if not x)
    delays = [td for _, td in sections]
    distributed = distributed and bool(sections)
    first = distributed and t_end is None
    if t_end is None:
        t_end = t_ramp + _SETTLE_TAUS * tau + (_SETTLE_DELAYS * sum(delays) if distributed
                                               else 0.0)
        t_end = max(t_end, 1e-12)
    if distributed:  # the far end's corner: its capacitance against the last line
        dt = wf.choose_step(delays, t_ramp, tau=sections[-1][0] * c_lumped_far)
    else:  # exact at any sample: the step only has to sample the edge
        dt = wf.choose_step([], 0.0, tau=max(t_ramp, tau))
    dt = max(dt, t_end / _MAX_STEPS)
    d_min = min(delays) if distributed else math.nan
    if distributed:
        dt = d_min / math.ceil(d_min / dt)
    t = _grid(t_end, dt, d_min)
    t_first = _first_length(sections, r_source, t_ramp, c_lumped_far) if first else None
    n_first = None if t_first is None else _same_step(t, math.ceil(t_first / dt) + 1)
    if n_first is None:
        return EdgeGrid(t, sections, c_lumped_far, c_total, distributed, t_end, t.size, 0)
    return EdgeGrid(t, sections, c_lumped_far, c_total, distributed, t_end, n_first,
                    math.ceil(_REST_DELAYS * sum(delays) / dt))


def _joined(sections: list) -> list:
    """Neighbouring sections of one impedance as one line of their summed delay: with no
    pin between them (a chain's pins are at its far end) nothing reflects where they
    meet, so the line is the same, and the solver's work grows with its sections."""
    out: list = []
    for z0, td in sections:
        if out and out[-1][0] == z0:
            out[-1] = (z0, out[-1][1] + td)
        else:
            out.append((z0, td))
    return out


def _same_step(t: np.ndarray, n: int) -> int | None:
    """The first length from ``n`` whose samples of ``t`` give the solver the step the
    whole of ``t`` gives it (it reads the step off a grid's last sample, which can move
    it by a unit in the last place), or None (none within a few samples, or not
    shorter than ``t``)."""
    whole = t[-1] / (t.size - 1)
    for m in range(n, min(n + 64, t.size - 1)):
        if t[m - 1] / (m - 1) == whole:
            return m
    return None


def _first_length(sections: list, r_source: float, t_ramp: float,
                  c_far: float) -> float | None:
    """The first record's length (see :func:`simulate_edge`), or None for a chain whose
    source or junctions reflect more than ``_FIRST_REFLECTION`` (it rings for longer)."""
    z = [z0 for z0, _ in sections]
    worst = max([abs(r_source - z[0]) / (r_source + z[0])]
                + [abs(b - a) / (a + b) for a, b in zip(z[:-1], z[1:], strict=True)])
    if not worst <= _FIRST_REFLECTION:  # also NaN
        return None
    rounds = 1 + (math.ceil(math.log(_AT_REST) / math.log(worst)) if worst > 0.0 else 0)
    trip = 2.0 * sum(td for _, td in sections)
    return (t_ramp + rounds * trip + _REST_TAUS * z[-1] * c_far
            + _REST_DELAYS / 2.0 * trip)


def is_settled(unit: np.ndarray) -> bool:
    """Whether a unit response ends within 1 % of its final level."""
    return bool(abs(unit[-1] - 1.0) <= _SETTLED)


def keeps(g: EdgeGrid, unit: np.ndarray) -> bool:
    """Whether :func:`simulate_edge` keeps ``unit``, solved on the first samples of
    ``g.t``: at rest when it is shorter than the grid (the first record), else
    settled."""
    return at_rest(unit, g.rest) if unit.size < g.t.size else is_settled(unit)


def at_rest(unit: np.ndarray, rest: int) -> bool:
    """Whether the last ``rest`` samples of a unit response stay within ``_AT_REST``
    of its final level (:func:`simulate_edge`'s first record)."""
    return bool(unit.size > rest and np.max(np.abs(unit[-rest:] - 1.0)) <= _AT_REST)


def _unit_edge(stretches: Sequence[Stretch], r_source: float, t_ramp: float, c_far: float,
               distributed: bool) -> tuple[np.ndarray, np.ndarray, bool]:
    """The time grid, the unit response (0 -> 1) at the far end and whether it settled,
    for :func:`simulate_edge` (which the level of the edge only scales and shifts)."""
    g = edge_grid(stretches, r_source, t_ramp, c_far, distributed)
    if g.n_first < g.t.size:  # the first record, kept when the line is at rest
        t = g.t[:g.n_first].copy()
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")  # a warning is left to the longer solve
            unit = wf.distributed_response(t, 1.0, t_ramp, r_source, g.sections,
                                           g.c_lumped_far).v
        if not caught and keeps(g, unit):
            return t, unit, True
    for extension in range(_MAX_EXTENSIONS + 1):
        if g.distributed:
            unit = wf.distributed_response(g.t, 1.0, t_ramp, r_source, g.sections,
                                           g.c_lumped_far).v
        else:
            unit = wf.lumped_response(g.t, 1.0, t_ramp, r_source, g.c_total).v
        settled = is_settled(unit)
        if settled or extension == _MAX_EXTENSIONS:  # the last record: kept unsettled
            break
        g = edge_grid(stretches, r_source, t_ramp, c_far, distributed, 3.0 * g.t_end)
    return g.t, unit, bool(settled)


def solve_edges(stretches: Sequence[Stretch], requests: Sequence[tuple]) -> None:
    """Solve together, into the run's memo, the unit edges :func:`simulate_edge` is about
    to ask for on one line: ``requests`` holds ``(r_source, t_ramp, c_far,
    distributed)`` of each (a driver's rise and fall).

    The distributed edges not yet held, on the first record :func:`_unit_edge` takes,
    are marched together (:func:`pinlib.physics.waveform.distributed_responses`: each
    record the single solve's to the last bit); each that :func:`_unit_edge` would
    keep (:func:`keeps`) is kept under its key.  Nothing is kept from a solve that
    warned or refused (the engine then solves and reports it itself), and nothing is
    done outside a run or for fewer than two edges to solve.
    """
    if not memo.active():
        return
    todo: dict = {}
    for r_source, t_ramp, c_far, distributed in requests:
        key = unit_edge_key(stretches, r_source, t_ramp, c_far, distributed)
        if key in todo or memo.known(key):
            continue
        try:
            g = edge_grid(stretches, r_source, t_ramp, c_far, distributed)
        except PinlibError:
            return
        if g.distributed:
            todo[key] = (g, (g.t[:g.n_first].copy(), 1.0, t_ramp, r_source, g.sections,
                             g.c_lumped_far))
    if len(todo) < 2:
        return
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        try:
            got = wf.distributed_responses([case for _, case in todo.values()])
        except PinlibError:
            return
    if caught:
        return
    for (key, (g, case)), w in zip(todo.items(), got, strict=True):
        if keeps(g, w.v):
            memo.keep(key, (case[0], w.v, True))
