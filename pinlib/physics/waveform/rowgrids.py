"""The line solver on a batch of grids: each case its own time step.

:func:`pinlib.physics.waveform.distributed_response` takes ``t`` of shape ``(B, n)`` as
one uniform grid per case (row ``r`` is ``np.arange(n) * dt_r``).  The cases share the
circuit's form (sections and their delays in seconds) but each is marched on its own
step, so cases whose steps differ (the candidates of a position: each driver's step
divides the line's delay into a different whole number of steps) are solved in one
call instead of one call per step.

Every case marches in runs of its own shortest delay ``k_r`` steps, as
:func:`~pinlib.physics.waveform.march.march` does; the runs of all cases are taken in
lockstep, each padded to the longest ``K``.  A padded sample of a run (``i >= k_r``)
is a step of the next run computed early: nothing a case keeps reads it (every
current of a run depends only on waves launched at least ``k_r`` steps before, and the
first-order sum is causal), and the next run writes that step again before a later
run reads it (which needs ``K <= 2 k_r``; the batch is split where it is not).  The
valid samples of each case are summed by the same operations in the same order as a
batch of that case alone on its own grid, so they equal it to the last bit but for
the step (taken from each row as the one-grid path takes it from its grid).  Cases
whose record ends before the longest one's runs are marched on (the source held) and
cut.

Cost: the lockstep runs are those of the case with the most runs, each ``K`` steps
long, so a batch whose steps differ by a ratio ``q`` does about ``q^1.5`` times the
work of its cases alone; callers group cases by step (see
:mod:`pinlib.engines.pushline.batchsolve`).
"""

from __future__ import annotations

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.physics.waveform.march import (
    _GRID_RTOL,
    _MAX_BLOCK,
    _MAX_BLOCK_ELEMENTS,
    _MAX_BUFFER_ELEMENTS,
    Network,
    _node_sums,
    _non_negative,
    _port_groups,
    _Scan,
    _source_samples,
    network,
)
from pinlib.physics.waveform.metrics import _edge_sign
from pinlib.physics.waveform.tree import (
    TreeWaveform,
    _check_tree,
    _merge,
    _node_caps,
    _node_index,
    _sections,
)

__all__: list[str] = []


def row_grids(t) -> tuple[np.ndarray, np.ndarray]:
    """The checked grids ``(B, n)``, one per row from 0, and each row's step ``(B,)``."""
    t = np.asarray(t, dtype=float)
    if t.ndim != 2 or t.shape[1] < 2 or not np.all(t[:, 0] == 0.0):
        raise InputError(M.TIME_GRID_FORM, field="t", value=t.shape,
                         expected="np.arange(n) * dt, or one such row per case")
    dt = (t[:, -1] - t[:, 0]) / (t.shape[1] - 1)
    if np.all(t[:, 1] > 0.0) and np.array_equal(t, np.arange(t.shape[1]) * t[:, 1:2]):
        return t, dt  # each row exactly np.arange(n) * its step (as batched callers make it)
    steps = np.diff(t, axis=1)
    if not np.all(dt > 0.0) or not np.allclose(steps, dt[:, None], rtol=_GRID_RTOL,
                                                 atol=0.0):
        raise InputError(M.TIME_GRID_NOT_UNIFORM, field="t",
                         value=f"steps {steps.min():.3g} to {steps.max():.3g} s",
                         expected="np.arange(n) * dt in each row")
    return t, dt


def tree_rows(t, vdd, t_ramp, r_source, sections, node_caps, source, edge, *,
              stacklevel: int) -> TreeWaveform:
    """:func:`~pinlib.physics.waveform.tree.tree_response` with ``t`` one grid per case
    (``(B, n)``; every batch array broadcast to ``(B,)``); ``v`` is ``(B, nodes, n)``."""
    sign = _edge_sign(edge)
    t, dt = row_grids(t)
    n_b, n_t = t.shape
    caps_in = _node_caps(node_caps)
    n_nodes = len(caps_in)
    source = _node_index(source, n_nodes, "source")
    steps_of, first = {}, None
    for step in dict.fromkeys(dt.tolist()):  # each distinct step's delays, in steps
        ends, lines = _sections(sections, n_nodes, step, stacklevel + 1)
        steps_of[step] = [line[3] for line in lines]
        first = first or (ends, lines)
    ends, lines = first
    _check_tree(ends, n_nodes)
    node_of, n_merged = _merge(ends, n_nodes)

    arrays = [np.asarray(x, dtype=float) for x in (vdd, t_ramp, r_source, *caps_in)]
    arrays += [np.asarray(z, dtype=float) for _, _, z, _ in lines]
    try:
        shape = np.broadcast_shapes(*(x.shape for x in arrays), (n_b,))
    except ValueError:
        shape = None
    if shape != (n_b,):
        raise InputError(M.TIME_GRID_FORM, field="t", value=t.shape,
                         expected="one row per case of the batch")
    flat = [np.broadcast_to(x, shape) for x in arrays]
    vdd_b, ramp_b, rs_b = flat[:3]
    _non_negative("t_ramp", ramp_b, "[s]")
    _non_negative("r_source", rs_b, "[Ω]")
    caps = np.zeros((n_merged, n_b))
    for i, c in enumerate(flat[3:3 + n_nodes]):
        _non_negative(f"node_caps[{i}]", c, "[F]")
        caps[node_of[i]] += c
    merged = [(node_of[a], node_of[b], z, d)
              for (a, b, _, d), z in zip(lines, flat[3 + n_nodes:], strict=True)]
    net = network(n_merged, merged, caps, rs_b, int(node_of[source]), dt)
    delays = np.repeat(np.array([steps_of[s] for s in dt.tolist()]).T.reshape(-1, n_b),
                       2, axis=0)                                # (P, B) in steps
    v_src = _source_samples(t, vdd_b, ramp_b).T                 # (n, B)
    volts = _in_parts(net, delays, v_src, n_t)                  # (merged, n, B)
    if not np.array_equal(node_of, np.arange(n_merged)):
        volts = volts[node_of]
    if sign < 0:
        volts = vdd_b - volts
    # each case's samples contiguous, as the one-grid path gives them (the march lays
    # them out so: no copy here unless nodes were merged)
    return TreeWaveform(t, np.ascontiguousarray(np.transpose(volts, (2, 0, 1))))


def _rows(net: Network, cols) -> Network:
    """The network of some cases of a batch (every per-case array cut to ``cols``)."""
    return net._replace(port_g=net.port_g[:, cols], g_source=net.g_source[cols],
                        forced=net.forced[cols], a=net.a[:, cols], c_now=net.c_now[:, cols],
                        c_prev=net.c_prev[:, cols])


def _in_parts(net: Network, delays: np.ndarray, v_src: np.ndarray, n_t: int) -> np.ndarray:
    """:func:`march_rows`, the batch split where one lockstep would not hold (runs of
    more than twice a case's own, or arrays over the march's bounds)."""
    n_b = delays.shape[1]
    block = _blocks(delays, n_t)
    runs = int(np.max(-(-(n_t - 1) // block)))
    k_max = int(block.max())
    rows = max(net.a.shape[0], delays.shape[0]) * n_b
    if n_b > 1 and (k_max > 2 * int(block.min()) or rows * k_max > _MAX_BLOCK_ELEMENTS
                    or delays.shape[0] * (runs * k_max + k_max) * n_b
                    > 4 * _MAX_BUFFER_ELEMENTS):
        order = np.argsort(block, kind="stable")
        halves = (order[:n_b // 2], order[n_b // 2:])
        out = np.empty((n_b, net.a.shape[0], n_t)).transpose(1, 2, 0)  # as march_rows
        for cols in halves:
            out[:, :, cols] = _in_parts(_rows(net, cols), delays[:, cols], v_src[:, cols],
                                        n_t)
        return out
    return march_rows(net, delays, v_src, n_t)


def _blocks(delays: np.ndarray, n_t: int) -> np.ndarray:
    """Each case's run: its shortest delay in whole steps, within the march's bounds."""
    if delays.shape[0] == 0:
        return np.full(delays.shape[1], max(1, min(_MAX_BLOCK, n_t - 1)))
    return np.clip(np.floor(delays).astype(int).min(axis=0), 1, max(1, min(_MAX_BLOCK,
                                                                         n_t - 1)))


def march_rows(net: Network, delays: np.ndarray, v_src: np.ndarray, n_t: int) -> np.ndarray:
    """Every node's voltage at every step of each case's own grid, ``(nodes, n_t, B)``
    (a view of an array laid out ``(B, nodes, n_t)``: each case's samples contiguous).

    ``net`` holds each case's companion coefficients (its own step); ``delays`` is
    ``(P, B)``, each port's line delay in that case's steps; ``v_src`` ``(n_t, B)``.
    """
    n_nodes, n_b = net.a.shape
    cols = np.arange(n_b)
    whole = np.floor(delays).astype(int)
    frac = delays - whole
    n_ports = whole.shape[0]
    block = _blocks(delays, n_t)
    k_max = int(block.max())
    runs = int(np.max(-(-(n_t - 1) // block)))
    src = net.source
    scan = _Scan(net.a, k_max)
    c_now, c_prev = net.c_now[:, None, :], net.c_prev[:, None, :]
    two_g = 2.0 * net.port_g[:, None, :]
    forced = net.forced[None, :]
    # the source past a record's end (cases marched on): held at its last sample; each
    # case's samples and launched waves in a row of their own, read through flat indices
    m_all = 2 + runs * k_max
    source = np.empty((n_b, m_all))
    source[:, :n_t] = v_src.T
    source[:, n_t:] = v_src[-1][:, None]
    source = source.reshape(-1)
    pad = (int(whole.max()) + 1) if n_ports else 1
    size = pad + m_all + k_max
    launched = np.zeros(n_ports * n_b * size)
    ahead = np.arange(k_max)[:, None] + cols[None, :] * m_all          # (K, B)
    # port p's partner's wave, one step before a run's first sample delayed, onwards
    base = ((net.port_partner[:, None, None] * n_b + cols[None, None, :]) * size
            + (pad - 1 - whole)[:, None, :] + np.arange(k_max + 1)[None, :, None])
    put = ((np.arange(n_ports)[:, None, None] * n_b + cols[None, None, :]) * size
           + pad + np.arange(k_max)[None, :, None])                    # (P, K, B)
    frac = frac[:, None, :] if np.any(frac > 0.0) else None
    one_each = n_ports == n_nodes and np.array_equal(net.port_node, np.arange(n_nodes))
    groups = _port_groups(net)

    out = np.empty((runs, n_nodes, k_max, n_b))  # each run's block contiguous
    v_last = np.zeros((n_nodes, n_b))
    i_last = np.zeros((n_nodes, n_b))
    i_last[src] = net.g_source * v_src[0]
    v_last[src] = np.where(net.forced, v_src[0], 0.0)
    first = v_last.copy()
    # what does not depend on the march, for every run at once: each run's first step,
    # the source's samples and its current (the same products, taken together)
    starts = 1 + np.arange(runs)[:, None] * block[None, :]          # (runs, B)
    v_runs = source.take(ahead[None] + starts[:, None, :])          # (runs, K, B)
    held = bool(np.any(net.forced))  # else the source node is never overwritten
    # the samples are read again only at a forced node: else their current takes their place
    i_runs = np.multiply(net.g_source, v_runs, out=None if held else v_runs)
    last = block - 1
    at_in, at_out = np.empty_like(base), np.empty_like(put)
    for j in range(runs):
        start = starts[j]                                           # (B,)
        v_here = v_runs[j]                                          # (K, B)
        if n_ports:
            got = launched.take(np.add(base, start, out=at_in))     # (P, K + 1, B)
            inc = got[:, 1:]
            if frac is not None:  # a delay between two samples: linear interpolation
                inc = inc + frac * (got[:, :-1] - inc)
            if one_each:  # a port per node, in order: the incidence is the identity
                cur = two_g * inc
            else:  # each node's ports summed in port order, as the march sums them
                cur = _node_sums(two_g * inc, groups, np.empty((n_nodes, k_max, n_b)), axis=0)
        else:
            cur = np.zeros((n_nodes, k_max, n_b))
        cur[src] += i_runs[j]
        w = np.multiply(c_now, cur, out=out[j])  # the run summed in its place
        w[:, 0] += net.c_prev * i_last
        w[:, 1:] += c_prev * cur[:, :-1]
        w = scan(w, v_last)
        if held:
            w[src] = np.where(forced, v_here, w[src])
        if n_ports:
            launched[np.add(put, start, out=at_out)] = (
                (w if one_each else w[net.port_node]) - inc)
        i_last = cur[:, last, cols]
        v_last = w[:, last, cols]
    volts = np.empty((n_b, n_nodes, n_t))
    volts[:, :, 0] = first.T
    for r in range(n_b):  # each case's runs, its own steps of each, in order
        k = int(block[r])
        runs_r = out[:, :, :k, r].transpose(1, 0, 2)                # (nodes, runs, k)
        volts[r, :, 1:] = runs_r.reshape(n_nodes, runs * k)[:, :n_t - 1]
    return volts.transpose(1, 2, 0)
