"""Edge waveforms at every node of a tree of lossless lines (a route with taps).

API
---
``tree_response(t, vdd, t_ramp, r_source, sections, node_caps, *, source=0,
edge="rise") -> TreeWaveform(t, v)``

* ``t``: uniform grid ``np.arange(n) * dt`` [s]; ``dt`` is the solver's step.
* ``sections``: ``(a, b, z0, td)`` per lossless line between nodes ``a`` and ``b``
  (ints); ``z0`` a float or a batch array [Ω], ``td`` a float [s] shared by the batch.
  A zero-delay section joins its two nodes into one.  The sections must form a tree
  over the nodes ``0 .. n-1`` (connected, no loop).
* ``node_caps``: one capacitance per node (float or batch array, 0 allowed) [F]: the
  input capacitance of the device at each tap or junction.
* ``source``: the node the driver attaches to: a ramp 0 -> ``vdd`` over ``t_ramp``
  (0-100 %) behind ``r_source`` (0: ideal).
* ``v``: shape ``batch + (n_nodes, n_t)``; ``edge="fall"`` gives ``vdd`` minus the rise.

The batch is the broadcast of ``vdd``, ``t_ramp``, ``r_source``, every node capacitance
and every ``z0``.  A chain of sections is a tree;
:func:`pinlib.physics.waveform.distributed_response` is that chain.

Method: :mod:`pinlib.physics.waveform.march` (Bergeron companion nodes; a junction's
conductance is the sum of ``1/Z`` of its lines, so its scattering needs no special
case).  A delay of at least one step that falls between two samples is taken by
linear interpolation between them; one shorter than a step is rounded to one step (a
:class:`ValidityWarning` above 5 % of the delay).

``choose_step(delays, t_ramp, *, tau=0.0, steps=STEPS_PER_EDGE) -> dt``: 20 steps per
shortest ramp, delay or receiver time constant, dividing the shortest delay (the grid
is then ``np.arange(n) * dt``).
"""

from __future__ import annotations

import math
import operator
from typing import NamedTuple

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.physics.waveform.march import (
    _batch_shape,
    _check_line,
    _non_negative,
    _source_samples,
    _time_grid,
    march,
    march_cases,
    network,
)
from pinlib.physics.waveform.metrics import _edge_sign

__all__ = ["TreeWaveform", "tree_response", "choose_step", "is_short", "lump_short",
           "STEPS_PER_EDGE", "LUMP_FRACTION"]

#: Time steps per shortest source ramp or line delay chosen by :func:`choose_step`.
#: Against ngspice (tests/test_tree_spice.py: daisy chains, stubs, a star, series
#: resistance none and matched, the driver at the controller and at the nearest and
#: farthest device) it keeps every receiver's 10-90 % edge within 1 %.
STEPS_PER_EDGE = 20

#: A section whose one-way delay is under this fraction of the source ramp is solved as
#: its capacitance, half at each of its two nodes (:func:`lump_short`).  Solved as a
#: line, it would make the step divide its delay: a 20 µm stub beside centimetres of
#: trace took hundreds of thousands of steps.  Lumping drops the section's delay and
#: inductance, which moves a receiver's 10-90 % edge where reflections leave a step on
#: it; against ngspice's ``T`` elements the worst edge moved about 4.5 times the
#: section's delay over the ramp (5 % at 1/111 of the ramp, 1.3 % at 1/333, 0.4 % at
#: 1/1111; tests/test_tree_spice.py's stubs and trunk at 1/1100 to 1/2200 of the ramp
#: measured 0.46 % and 0.0011 VDD on an overshoot, and hold them within 0.5 %).
LUMP_FRACTION = 0.001


class TreeWaveform(NamedTuple):
    """Sampled waveforms at every node of a tree.

    Attributes
    ----------
    t : numpy.ndarray
        Sample times, shape ``(n,)``. [s]
    v : numpy.ndarray
        Voltage at each node, shape ``batch + (n_nodes, n)``. [V]
    """

    t: np.ndarray
    v: np.ndarray


def tree_response(t, vdd, t_ramp, r_source, sections, node_caps, *, source=0,
                  edge="rise"):
    """Edge of a ramping source through a tree of lossless lines, at every node.

    Parameters
    ----------
    t : array_like
        Uniform time grid starting at 0, shape ``(n,)``. [s]
    vdd : float or array_like
        Swing of the source (its high level; the low level is 0 V). [V]
    t_ramp : float or array_like
        Duration of the source ramp, 0 % to 100 %; 0 for a step. [s]
    r_source : float or array_like
        Driver output resistance plus series resistor; 0 for an ideal source. [Ω]
    sections : sequence of (a, b, z0, td)
        Lossless lines between nodes ``a`` and ``b``: impedance (float or batch
        array) and one-way delay (float, 0 joins the nodes). [1, 1, Ω, s]
    node_caps : sequence
        Capacitance at each node, float or batch array; its length is the number of
        nodes. [F]
    source : int, optional
        The node driven by the source. [1]
    edge : {"rise", "fall"}, optional
        ``"fall"`` is ``vdd`` minus the rise of the same circuit. [1]

    Returns
    -------
    TreeWaveform
        ``v`` of shape ``batch + (n_nodes, n)``.

    Examples
    --------
    A matched source at the middle of a star of two open 1 ns lines: each far end
    sees the launched half swing doubled.

    >>> t = np.arange(0, 601) * 5e-12
    >>> w = tree_response(t, 1.0, 0.0, 25.0, [(0, 1, 50.0, 1e-9), (0, 2, 50.0, 1e-9)],
    ...                   [0.0, 0.0, 0.0])
    >>> [round(float(x), 3) for x in w.v[:, 250]]
    [0.5, 1.0, 1.0]
    """
    return _tree(t, vdd, t_ramp, r_source, sections, node_caps, source, edge, stacklevel=3)


def _tree(t, vdd, t_ramp, r_source, sections, node_caps, source, edge, *,
          stacklevel: int, cap_names: list[str] | None = None) -> TreeWaveform:
    """:func:`tree_response`; a rounded delay is warned ``stacklevel`` frames up, and a
    batch that does not broadcast names the node capacitances ``cap_names``."""
    s = _tree_setup(t, vdd, t_ramp, r_source, sections, node_caps, source, edge,
                    stacklevel=stacklevel + 1, cap_names=cap_names)
    return _tree_finish(s, march(s.net, s.v_src, s.n_t))


def trees(cases: list[tuple]) -> list[TreeWaveform]:
    """:func:`_tree` of each of ``cases`` (its positional arguments, ``stacklevel`` and
    ``cap_names``), the single cases of one shape marched together
    (:func:`~pinlib.physics.waveform.march.march_cases`): each the same to the last bit."""
    setups = [_tree_setup(*args, stacklevel=stacklevel + 1, cap_names=names)
              for *args, stacklevel, names in cases]
    volts = march_cases([(s.net, s.v_src, s.n_t) for s in setups])
    return [_tree_finish(s, v) for s, v in zip(setups, volts, strict=True)]


class _Setup(NamedTuple):
    """A tree's companion network and source, and what shapes its records."""

    t: np.ndarray
    n_t: int
    sign: float
    net: object
    v_src: np.ndarray
    vdd_b: np.ndarray
    node_of: np.ndarray
    n_merged: int
    n_nodes: int
    batch_shape: tuple


def _tree_setup(t, vdd, t_ramp, r_source, sections, node_caps, source, edge, *,
                stacklevel: int, cap_names: list[str] | None = None) -> _Setup:
    """:func:`_tree` up to its march."""
    sign = _edge_sign(edge)
    t, dt = _time_grid(t)
    n_t = t.size
    caps_in = _node_caps(node_caps)
    n_nodes = len(caps_in)
    source = _node_index(source, n_nodes, "source")
    ends, lines = _sections(sections, n_nodes, dt, stacklevel + 1)
    _check_tree(ends, n_nodes)
    node_of, n_merged = _merge(ends, n_nodes)

    arrays = [np.asarray(x, dtype=float) for x in (vdd, t_ramp, r_source, *caps_in)]
    arrays += [np.asarray(z, dtype=float) for _, _, z, _ in lines]
    names = ["vdd", "t_ramp", "r_source",
             *(cap_names or (f"node_caps[{i}]" for i in range(n_nodes)))]
    names += [f"sections[{k}].z0" for k, (_, _, steps) in enumerate(ends) if steps > 0]
    batch_shape = _batch_shape(list(zip(names, arrays, strict=True)))
    flat = [np.broadcast_to(x, batch_shape).reshape(-1) for x in arrays]
    vdd_b, ramp_b, rs_b = flat[:3]
    caps_b, z_b = flat[3:3 + n_nodes], flat[3 + n_nodes:]
    _non_negative("t_ramp", ramp_b, "[s]")
    _non_negative("r_source", rs_b, "[Ω]")
    caps = np.zeros((n_merged, rs_b.size))
    for i, c in enumerate(caps_b):
        _non_negative(f"node_caps[{i}]", c, "[F]")
        caps[node_of[i]] += c

    merged_lines = [(node_of[a], node_of[b], z, d)
                    for (a, b, _, d), z in zip(lines, z_b, strict=True)]
    net = network(n_merged, merged_lines, caps, rs_b, int(node_of[source]), dt)
    one = arrays[0].size == 1 and arrays[1].size == 1  # one source for the whole batch
    v_src = _source_samples(t, vdd_b[:1] if one else vdd_b, ramp_b[:1] if one else ramp_b).T
    return _Setup(t, n_t, sign, net, v_src, vdd_b, node_of, n_merged, n_nodes, batch_shape)


def _tree_finish(s: _Setup, volts: np.ndarray) -> TreeWaveform:
    """The tree's waveforms from its march ``volts`` ``(merged, n, B)``."""
    if s.sign < 0:
        volts = np.subtract(s.vdd_b, volts, out=volts)
    if s.n_merged < s.n_nodes:  # joined nodes share their solver node's waveform
        volts = volts[s.node_of]
    v = np.transpose(volts, (2, 0, 1)).reshape(s.batch_shape + (s.n_nodes, s.n_t))
    return TreeWaveform(s.t, v)


def choose_step(delays, t_ramp, *, tau=0.0, steps=STEPS_PER_EDGE) -> float:
    """A time step for :func:`tree_response`: ``steps`` per shortest ramp, delay or tau.

    Parameters
    ----------
    delays : sequence of float
        One-way delays of the sections (zero-delay sections are ignored). [s]
    t_ramp : float
        Source ramp, 0-100 %. [s]
    tau : float, optional
        The shortest time constant of a receiver's capacitance with the lines at its
        node (``C / sum(1/Z)``), when its corner is to be sampled as finely as the
        ramp; 0 to leave it out. [s]
    steps : float, optional
        Steps per shortest ramp, delay or time constant. [1]

    Returns
    -------
    float
        ``min(t_ramp, delays, tau) / steps`` (those above 0), made smaller so that it
        divides the shortest delay exactly (the others fall between samples and are
        interpolated). [s]

    Notes
    -----
    The solver's companion nodes are exact for a current linear between samples, so
    a time constant needs no step of its own for the solution; the step resolves the
    ramp's corners and the delays.  What a coarse step still costs is the reading of
    the edge: crossings are interpolated linearly between samples, which misses by
    about ``dt^2 / (8 tau)`` on an RC corner of time constant ``tau``; ``tau`` bounds
    that.  Over the ngspice case set of ``tests/test_tree_spice.py`` 20 steps per ramp
    or delay kept every edge within 0.02 % and every overshoot within 0.0003 VDD.

    Examples
    --------
    >>> choose_step([0.3e-9, 1.0e-9], 1e-9) * 1e12
    15.0
    """
    positive = [float(d) for d in delays if float(d) > 0.0]
    spans = positive + [float(x) for x in (t_ramp, tau) if x > 0.0]
    dt = (min(spans) if spans else 1e-12 * steps) / steps
    if positive:
        shortest = min(positive)
        dt = shortest / math.ceil(shortest / dt * (1.0 - 1e-12))
    return dt


def is_short(td, t_ramp, fraction=LUMP_FRACTION) -> bool:
    """Whether a section of delay ``td`` is solved as its capacitance against a source
    ramp ``t_ramp``: a delay above zero and under ``fraction * t_ramp``
    (:data:`LUMP_FRACTION`).  The one rule of :func:`lump_short`, of the chain's grid
    and of the line's note naming what was lumped.

    Examples
    --------
    >>> is_short(0.5e-12, 1e-9), is_short(2e-12, 1e-9), is_short(0.0, 1e-9)
    (True, False, False)
    """
    return 0.0 < td < fraction * t_ramp


def lump_short(sections, node_caps, t_ramp, fraction=LUMP_FRACTION):
    """The sections and node capacitances of a tree with every section whose delay is
    under ``fraction * t_ramp`` made a lumped capacitance (``td / z0``), half at each of
    its two nodes, the section then joining them (delay 0).

    Parameters
    ----------
    sections : sequence of (a, b, z0, td)
        As :func:`tree_response` takes them (scalar ``z0``). [1, 1, Ω, s]
    node_caps : sequence of float
        Capacitance at each node. [F]
    t_ramp : float
        Source ramp, 0-100 %; 0 lumps nothing. [s]
    fraction : float, optional
        Delay against the ramp below which a section is lumped
        (:data:`LUMP_FRACTION`). [1]

    Returns
    -------
    (list, list, list of int)
        The sections, the node capacitances, and the indices of the sections lumped.

    Examples
    --------
    >>> secs, caps, lumped = lump_short([(0, 1, 50.0, 1e-9), (1, 2, 50.0, 0.5e-12)],
    ...                                 [5e-12, 0.0, 4e-12], 1e-9)
    >>> lumped, secs[1], round(caps[2] * 1e15, 3)
    ([1], (1, 2, 1.0, 0.0), 4005.0)
    """
    caps = [float(c) for c in node_caps]
    out, lumped = [], []
    for k, (a, b, z0, td) in enumerate(sections):
        if is_short(td, float(t_ramp), fraction):
            half = 0.5 * td / z0
            caps[a] += half
            caps[b] += half
            out.append((a, b, 1.0, 0.0))
            lumped.append(k)
        else:
            out.append((a, b, z0, td))
    return out, caps, lumped


def _node_caps(node_caps) -> list:
    """The node capacitances as a list (one per node, at least one)."""
    try:
        caps = list(node_caps)
    except TypeError:
        caps = []
    if not caps:
        raise InputError(M.NODE_CAPS_FORM, field="node_caps", value=node_caps,
                         expected="one capacitance [F] per node, at least one node")
    return caps


def _node_index(value, n_nodes: int, field: str) -> int:
    """``value`` as a node index, or an InputError naming ``field``."""
    try:
        index = operator.index(value)
    except TypeError:
        index = None
    if isinstance(value, bool) or index is None or not 0 <= index < n_nodes:
        raise InputError(M.NODE_INDEX_OUT_OF_RANGE, field=field, value=value,
                         expected=f"an integer 0..{n_nodes - 1} (len(node_caps) nodes)")
    return index


def _sections(sections, n_nodes: int, dt: float, stacklevel: int):
    """Every section's ends, and the lines with a delay ``(a, b, z0, steps)``."""
    ends, lines = [], []
    for k, section in enumerate(sections):
        try:
            a, b, z0, td = section
        except (TypeError, ValueError):
            raise InputError(M.TREE_SECTION_FORM, field=f"sections[{k}]", value=section,
                             expected="(a, b, z0 [Ω], td [s])") from None
        a = _node_index(a, n_nodes, f"sections[{k}].a")
        b = _node_index(b, n_nodes, f"sections[{k}].b")
        z0, steps = _check_line(k, z0, td, dt, stacklevel + 1)
        ends.append((a, b, steps))
        lines.append((a, b, z0, steps))
    return ends, [line for line in lines if line[3] > 0]


def _root(parent: list[int], i: int) -> int:
    """The representative of ``i`` in a union-find forest (paths halved)."""
    while parent[i] != i:
        parent[i] = parent[parent[i]]
        i = parent[i]
    return i


def _check_tree(ends, n_nodes: int) -> None:
    """Refuse a section that closes a loop, and nodes no section reaches."""
    parent = list(range(n_nodes))
    for k, (a, b, _) in enumerate(ends):
        ra, rb = _root(parent, a), _root(parent, b)
        if ra == rb:
            raise InputError(M.TREE_LOOP, field=f"sections[{k}]", value=(a, b),
                             expected="sections forming a tree (one path between two nodes)")
        parent[rb] = ra
    roots = {_root(parent, i) for i in range(n_nodes)}
    if len(roots) > 1:
        home = _root(parent, 0)
        apart = [i for i in range(n_nodes) if _root(parent, i) != home]
        raise InputError(M.TREE_NOT_CONNECTED, field="sections",
                         value=f"nodes {apart[:8]} not joined to node 0",
                         expected=f"{n_nodes - 1} sections joining all {n_nodes} nodes")


def _merge(ends, n_nodes: int) -> tuple[np.ndarray, int]:
    """Each node's solver node (zero-delay sections join their ends), and their count."""
    parent = list(range(n_nodes))
    for a, b, steps in ends:
        if steps == 0:
            parent[_root(parent, b)] = _root(parent, a)
    index: dict[int, int] = {}
    node_of = np.array([index.setdefault(_root(parent, i), len(index))
                        for i in range(n_nodes)], dtype=int)
    return node_of, len(index)
