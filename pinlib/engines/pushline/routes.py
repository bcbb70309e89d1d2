"""A routed line (``route``) as a tree of nodes and lossless sections, and its edges at every
point (:class:`RouteNet`, :func:`tree_edges`).

The route of the design names its points (devices and junctions); here each point is a
node, each stretch a section between two nodes, each pin's capacitance sits at its
device's node and the line's ``extra_capacitance`` at the point farthest (in delay)
from the route's first point.  A stretch without a delay is a lumped capacitance, half at
each of its ends, joining them into one node.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

from pinlib.core.valueclass import value_class
from pinlib.engines import memo
from pinlib.engines.pushline.rules import (
    _MAX_STEPS,
    _MIN_STEPS,
    _SETTLE_DELAYS,
    _SETTLED,
    _STEPS_PER_TAU,
)
from pinlib.engines.pushline.sections import Stretch
from pinlib.engines.pushline.treeshape import shape_from
from pinlib.engines.pushline.waves import EdgeWave, UnitEdgeWave, _grid
from pinlib.physics import waveform as wf

#: Times a route's record is lengthened (threefold) to settle.  The branches of a lossless
#: tree ring among themselves, damped only through the driver: a star of unequal
#: branches measured 300 ns to settle within 1 % against 25 ns of its first record,
#: though its edges were measured long before.  The solver cannot go on from where a
#: record ends, so each extension solves again three times as long: a route keeps its
#: first record and says so in a note when it has not settled (the chain, whose far end
#: settles far sooner, still lengthens its record).
_ROUTE_EXTENSIONS = 0

#: Time constants of ``r_source`` into the whole capacitance in a route's record (the
#: chain takes 12).  One pole is within 1 % of its final value after ln(100) = 4.6 of
#: them and past its 90 % point after 2.3 (derived from exp(-t/tau)); 6 leave room for
#: the tree's reflections on top.  The record is what grows with the devices on a line
#: (each pin adds to tau), so this sets how the peripherals of a CIPO route cost.
_ROUTE_SETTLE_TAUS = 6.0


@value_class(frozen=True)
class RouteNet:
    """The nodes and sections of a routed line.

    Attributes
    ----------
    names : tuple of str
        The point of each node (a device's reference designator or a junction). [1]
    sections : tuple of (int, int, Stretch)
        Each stretch of the route between its two nodes, in the route's order. [1]
    far : int
        The node farthest in delay from the route's anchor, the bus's controller, or
        else its first point (the line's ``extra_capacitance`` sits there). [1]
    """

    names: tuple[str, ...]
    sections: tuple[tuple[int, int, Stretch], ...]
    far: int

    def node(self, ref: str) -> int:
        """The node of a point. [1]"""
        return self.names.index(ref)

    def delays_from(self, start: int) -> list[float]:
        """One-way delay from node ``start`` to every node along the tree. [s]"""
        adj: dict[int, list[tuple[int, float]]] = {i: [] for i in range(len(self.names))}
        for a, b, s in self.sections:
            adj[a].append((b, s.td))
            adj[b].append((a, s.td))
        out = [math.nan] * len(self.names)
        out[start] = 0.0
        todo = [start]
        while todo:  # a walk of the tree: each node once
            n = todo.pop()
            for m, td in adj[n]:
                if math.isnan(out[m]):
                    out[m] = out[n] + td
                    todo.append(m)
        return out

    def farthest_node(self, start: int) -> tuple[int, list[float]]:
        """The node farthest in delay from node ``start``, and the delays from it to
        every node (:meth:`delays_from`). [1, s]"""
        d = self.delays_from(start)
        far = max(range(len(d)), key=d.__getitem__)
        return far, d

    @property
    def longest_delay(self) -> float:
        """The largest one-way delay between two points of the tree (its diameter). [s]"""
        end, _ = self.farthest_node(0)
        return max(self.delays_from(end))

    def section_at(self, start: int) -> Stretch | None:
        """The stretch an edge launched at node ``start`` meets first: the first with a
        delay on the way from ``start`` to the point farthest from it in delay (stretches
        without a delay on the way are crossed: a point, or a lumped capacitance), so the
        same whichever order the route is written in; of points equally far, the way
        whose first such stretch has the lowest Z0.  None when no stretch has a delay."""
        adj: dict[int, list[tuple[int, Stretch]]] = {i: [] for i in range(len(self.names))}
        for a, b, s in self.sections:
            adj[a].append((b, s))
            adj[b].append((a, s))
        first: dict[int, Stretch | None] = {start: None}  # by node: the way's first
        delay = {start: 0.0}
        todo = [start]
        while todo:  # a walk of the tree: each node once
            n = todo.pop()
            for m, s in adj[n]:
                if m not in first:
                    first[m] = first[n] if first[n] is not None or not s.td > 0 else s
                    delay[m] = delay[n] + s.td
                    todo.append(m)
        top = max(delay.values())
        ways = [first[n] for n, d in delay.items()
                if d >= top * (1 - 1e-9) and first[n] is not None]
        return min(ways, key=lambda s: s.z0, default=None)

    def farthest_delay(self, nodes: Sequence[int]) -> float:
        """The longest one-way delay from any of ``nodes`` to any point (the diameter for
        none). [s]

        In a tree whose stretches have no negative delay, the point farthest from any
        point is an end of a longest path, so three walks serve every node: from the
        first point to one end, from that end to the other, and back."""
        a, _ = self.farthest_node(0)
        b, da = self.farthest_node(a)
        db = self.delays_from(b)
        return max(max(da[n], db[n]) for n in (nodes or range(len(da))))


def route_net(points: Sequence[tuple[str, str]], stretches: Sequence[Stretch],
              anchor: str | None = None) -> RouteNet:
    """The tree of a line's route.

    Parameters
    ----------
    points : sequence of (str, str)
        The (from, to) points of each stretch (:attr:`pinlib.model.design.Line.route`). [1]
    stretches : sequence of Stretch
        The electrical data of each stretch, index by index. [1]
    anchor : str, optional
        The point the far point (:attr:`RouteNet.far`) is the farthest from in delay:
        the bus's controller, so that it is the same whichever way the route is written;
        the route's first point where it is None or not on the route. [1]

    Returns
    -------
    RouteNet
    """
    names: list[str] = []
    for pair in points:
        for p in pair:
            if p not in names:
                names.append(p)
    secs = tuple((names.index(a), names.index(b), s)
                 for (a, b), s in zip(points, stretches, strict=True))
    net = RouteNet(tuple(names), secs, 0)
    far, _ = net.farthest_node(names.index(anchor) if anchor in names else 0)
    return RouteNet(net.names, secs, far)


def node_caps(net: RouteNet, pins: dict, extra_c: float) -> list[float]:
    """Capacitance at each node: the pins there (``{ref: c_in}``), half of each stretch
    without a delay at each of its ends, the extra capacitance at the far node. [F]"""
    caps = [0.0] * len(net.names)
    for ref, c in pins.items():
        caps[net.node(ref)] += c
    for a, b, s in net.sections:
        if not s.td > 0:
            caps[a] += 0.5 * s.c
            caps[b] += 0.5 * s.c
    caps[net.far] += extra_c
    return caps


def pins_spread(net: RouteNet, refs: Sequence[str], extra_c: float) -> bool:
    """Whether the pins ``refs`` (and the extra capacitance, at the far node) sit at more
    than one point of the route: their capacitance is then spread along it, and the
    lumping of a push-pull driver's edges and of an open-drain sink's fall is held to
    :data:`~pinlib.engines.pushline.rules.SPREAD_INDUCTANCE_LIMIT`. [1]"""
    points = {net.node(r) for r in refs}
    if extra_c > 0:
        points.add(net.far)
    return len(points) > 1


class PointWaves:
    """One edge at every node of a route, each :class:`EdgeWave` made when first asked
    for (a line of many devices asks for few of them).

    Attributes
    ----------
    edge : str
        ``"rise"`` or ``"fall"``. [1]
    t : numpy.ndarray
        Sample times. [s]
    v_from, v_to : float
        Levels before and after the edge. [V]
    """

    def __init__(self, edge: str, solve: TreeSolve, v_from: float, v_to: float, *,
                 rows=None):
        self.edge, self.t, self.v_from, self.v_to = edge, solve.t, float(v_from), float(v_to)
        # the solve's rows: ``rows[node]`` is a node's row (a solve shared by drivers that
        # see the same tree, in its own node order; None: the node's own)
        self._solve, self._rows = solve, rows
        self._made: dict[int, EdgeWave] = {}
        self._extremes: tuple | None = None

    def _row(self, node):
        """The solve's row of a node (or of a list of nodes). [1]"""
        if self._rows is None:
            return node
        return self._rows[node] if np.ndim(node) == 0 else [self._rows[n] for n in node]

    def extremes(self) -> tuple[np.ndarray, np.ndarray]:
        """At every node at once: the peak (the high level plus the overshoot) and the dip
        (the undershoot below the low level, minus the low level), as
        :class:`EdgeWave` computes them one node at a time (computed once). [V]"""
        if self._extremes is None:
            # overshoot and undershoot read only the largest and smallest sample, and
            # v_from + (v_to - v_from) u is monotonic in u (so in its rounding too): the
            # edge at each node's smallest and largest u has the same two extremes
            span = self._solve.span
            if self._rows is not None:
                span = span[self._rows]
            v = self.v_from + (self.v_to - self.v_from) * span
            hi, lo = max(self.v_from, self.v_to), min(self.v_from, self.v_to)
            self._extremes = (self.v_to + np.asarray(wf.overshoot(v, hi)),
                              np.asarray(wf.undershoot(v, lo)) - self.v_to)
        return self._extremes

    def edge_times(self, nodes) -> np.ndarray:
        """The 10-90 % edge at the given nodes (NaN where it is not reached). [s]"""
        v = self.v_from + (self.v_to - self.v_from) * self._solve.records(
            self._row(list(nodes)))
        return np.asarray(wf.edge_time(self.t, v, self.v_to, v_initial=self.v_from),
                          dtype=float)

    def at(self, node: int) -> EdgeWave:
        """The edge at one node. [1]"""
        got = self._made.get(node)
        if got is None:
            row = self._row(node)
            record = self._solve.records(row)
            v = self.v_from + (self.v_to - self.v_from) * record
            hi, lo = max(self.v_from, self.v_to), min(self.v_from, self.v_to)
            # its record made again from the unit response when read, the same way (a
            # line of many drivers reads the records of few of its edges)
            got = UnitEdgeWave(self.edge, (self.t, record), self.v_from, self.v_to,
                               float(wf.edge_time(self.t, v, self.v_to,
                                                  v_initial=self.v_from)),
                               float(wf.overshoot(v, hi)), float(wf.undershoot(v, lo)),
                               bool(self._solve.settled[row]), None)
            self._made[node] = got
        return got


def tree_edges(net: RouteNet, source: int, r_source: float, t_ramp: float,
               caps: Sequence[float], v_from: float, v_to: float, *, distributed: bool,
               edge: str, keep: Sequence[int] | None = None) -> PointWaves:
    """One edge of a ramp source behind a resistance at node ``source``, at every node.

    Parameters
    ----------
    net : RouteNet
        The route. [1]
    source : int
        The driver's node. [1]
    r_source : float
        Driver resistance plus series resistor. [Ω]
    t_ramp : float
        Source ramp, 0-100 %. [s]
    caps : sequence of float
        Capacitance at each node (:func:`node_caps`). [F]
    v_from, v_to : float
        Levels before and after the edge. [V]
    distributed : bool
        Solve the tree of lines (True) or one lumped capacitance, the same at every node
        (False). [1]
    edge : str
        ``"rise"`` or ``"fall"``. [1]
    keep : sequence of int, optional
        The nodes whose records are kept (those a check reads); the others' are dropped
        after the solve, each node's extremes and whether it settled kept, and made
        again by the same solve if read.  None keeps every node's. [1]

    Returns
    -------
    PointWaves

    Notes
    -----
    The record runs for the ramp, 6 time constants of ``r_source`` into the whole
    capacitance (:data:`_ROUTE_SETTLE_TAUS`) and (distributed) 60 times the tree's
    longest one-way delay, and is not lengthened
    (:data:`_ROUTE_EXTENSIONS`; each node says whether it ended within 1 % of the
    swing).  The step is the tree solver's (:func:`pinlib.physics.waveform.choose_step`:
    20 per shortest ramp or delay), at least 4,000 over the record, dividing the
    shortest delay.  The tree is solved by
    :func:`pinlib.physics.waveform.tree_response`; the circuit is linear, so the edge is
    ``v_from + (v_to - v_from) u(t)`` with ``u`` its unit response.
    """
    tau, t_end = _record(net, r_source, t_ramp, caps, distributed)
    # drivers that see the same tree (equal branches and pins) share one solve, its rows
    # in its own node order
    shape, order = shape_from(net.sections, caps, source)
    key = ("pushline.tree_edge", shape, r_source, t_ramp, bool(distributed), tau, t_end)

    def solve():
        return _unit_tree(net, source, r_source, t_ramp, caps, distributed, tau, t_end)

    held = memo.remember(key, lambda: TreeSolve(solve, order))
    rows = None
    if held.order != order:
        rows = np.empty(len(order), dtype=int)
        rows[order] = held.order
    wanted = range(len(order)) if keep is None else keep
    held.hold([int(n) if rows is None else int(rows[n]) for n in wanted])
    return PointWaves(edge, held, v_from, v_to, rows=rows)


class TreeSolve:
    """One solve of :func:`tree_edges`, shared through the memo by the drivers that see
    the same tree: the grid, whether each node settled and its extremes (:func:`_span`),
    and the records of the rows asked for (:meth:`hold`).  A row asked for after the
    solve's own array was let go is the same solve made again (the same numbers to the
    bit), once for all the rows missing then.

    Attributes
    ----------
    t : numpy.ndarray
        Sample times. [s]
    settled, span : numpy.ndarray
        Per row (the solving driver's node order, :attr:`order`). [1]
    order : list of int
        The solving driver's nodes in the shape's order. [1]
    """

    def __init__(self, solve, order: list[int]):
        self._solve, self.order = solve, order
        self.t, self._unit, self.settled, self.span = solve()
        self._held: dict[int, np.ndarray] = {}

    def hold(self, rows) -> None:
        """Keep the records of ``rows``; the solve's whole array is let go after the
        first rows are chosen."""
        missing = sorted(set(rows) - self._held.keys())
        if missing:
            unit = self._unit if self._unit is not None else self._solve()[1]
            every = len(missing) == unit.shape[0]
            got = unit if every else unit[missing]  # a copy of only those rows
            self._held.update(zip(missing, got if every else list(got), strict=True))
        self._unit = None

    def records(self, rows):
        """The records of solve rows ``rows`` (an int or a list), held on first use. [1]"""
        self.hold([rows] if np.ndim(rows) == 0 else list(rows))
        if np.ndim(rows) == 0:
            return self._held[rows]
        return np.stack([self._held[r] for r in rows]) if len(rows) else np.empty(
            (0, self.t.size))


def _span(unit: np.ndarray) -> np.ndarray:
    """Each node's smallest and largest sample, ``(nodes, 2)``. [1]"""
    return np.stack([unit.min(axis=-1), unit.max(axis=-1)], axis=-1)


def _record(net: RouteNet, r_source: float, t_ramp: float, caps: Sequence[float],
            distributed: bool) -> tuple[float, float]:
    """The time constant of ``r_source`` into the whole capacitance and the end of the
    first record. [s, s]"""
    c_total = float(sum(caps)) + sum(s.c for _, _, s in net.sections if s.td > 0)
    tau = r_source * c_total
    distributed = distributed and any(s.td > 0 for _, _, s in net.sections)
    longest = net.longest_delay if distributed else 0.0
    return tau, max(t_ramp + _ROUTE_SETTLE_TAUS * tau + _SETTLE_DELAYS * longest, 1e-12)


def _unit_tree(net: RouteNet, source: int, r_source: float, t_ramp: float,
               caps: Sequence[float], distributed: bool, tau: float, t_end: float):
    """The time grid, the unit response (0 -> 1) at every node, whether each settled and
    each node's smallest and largest sample (:func:`_span`); ``tau`` and ``t_end`` are
    :func:`_record`'s."""
    c_total = float(sum(caps)) + sum(s.c for _, _, s in net.sections if s.td > 0)
    # a section far shorter than the ramp is its capacitance (wf.lump_short: its delay
    # would set the step for no visible change); so is one shorter than the coarsest
    # step the record affords (t_end / _MAX_STEPS: a pull-up's rise into a long cable
    # with a few millimetres of trace at its ends), which would otherwise get one step
    # and march the record one step a run (a GPIO line over 10 m took 7.5 s an edge)
    lump_below = max(wf.LUMP_FRACTION * t_ramp, t_end / _MAX_STEPS)
    sections, caps, _ = wf.lump_short(
        [(a, b, s.z0 if s.td > 0 else 1.0, s.td) for a, b, s in net.sections], caps,
        lump_below, fraction=1.0)
    delays = [td for *_, td in sections if td > 0]
    distributed = distributed and bool(delays)
    n_nodes = len(net.names)
    for _ in range(_ROUTE_EXTENSIONS + 1):
        # the tree solver's own step (20 per shortest ramp or delay; its error against
        # ngspice is stated there), at least _MIN_STEPS over the record
        dt = min(wf.choose_step(delays if distributed else [], t_ramp,
                                tau=tau / _STEPS_PER_TAU * wf.STEPS_PER_EDGE),
                 t_end / _MIN_STEPS)
        dt = max(dt, t_end / _MAX_STEPS)
        if distributed:  # the shortest delay in whole steps; the others interpolated
            dt = min(delays) / math.ceil(min(delays) / dt * (1.0 - 1e-12))
        t = _grid(t_end, dt, min(delays) if distributed else math.nan)
        if distributed:
            unit = wf.tree_response(t, 1.0, t_ramp, r_source, sections, list(caps),
                                    source=source, edge="rise").v
        else:
            one = wf.lumped_response(t, 1.0, t_ramp, r_source, c_total).v
            unit = np.broadcast_to(one, (n_nodes, one.size))
        settled = np.abs(unit[:, -1] - 1.0) <= _SETTLED
        if settled.all():
            break
        t_end *= 3.0
    return t, unit, settled, _span(unit)
