"""TEMPORARY: a minimal march of a tree of lossless lines, to be replaced by
:func:`pinlib.physics.waveform.tree_response` (being written on the ``tree`` branch) as
soon as that branch is merged; it has the same call and result.

Method: Bergeron's method of characteristics.  Each line of delay ``k`` whole steps is a
conductance ``1/Z0`` at each end with a history current from the other end ``k`` steps
before; each node capacitance a trapezoidal companion; the source a ramp behind its
resistance.  The node equations are then diagonal (no line couples two nodes within a
step), solved node by node each step.  A zero-delay section joins its two nodes.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np


class TreeWaveform(NamedTuple):
    t: np.ndarray
    v: np.ndarray


def _merge(sections, n_nodes):
    parent = list(range(n_nodes))

    def root(i):
        while parent[i] != i:
            parent[i] = parent[parent[i]]
            i = parent[i]
        return i

    for a, b, _z, td in sections:
        if not td > 0:
            parent[root(b)] = root(a)
    index: dict[int, int] = {}
    node_of = np.array([index.setdefault(root(i), len(index)) for i in range(n_nodes)])
    return node_of, len(index)


def tree_response(t, vdd, t_ramp, r_source, sections, node_caps, *, source=0,
                  edge="rise") -> TreeWaveform:
    """Scalar inputs only: ``v`` of shape ``(n_nodes, n_t)`` (see the module notes)."""
    t = np.asarray(t, dtype=float)
    n_t = t.size
    dt = float(t[1] - t[0])
    n_nodes = len(node_caps)
    node_of, n = _merge(sections, n_nodes)
    caps = np.zeros(n)
    for i, c in enumerate(node_caps):
        caps[node_of[i]] += float(c)
    lines = [(node_of[a], node_of[b], float(z), max(1, int(round(td / dt))))
             for a, b, z, td in sections if td > 0]
    ends = np.array([e for a, b, _, _ in lines for e in (a, b)], dtype=int)  # 2L ends
    z = np.repeat([z for _, _, z, _ in lines], 2)
    k = np.repeat([k for _, _, _, k in lines], 2)
    other = np.arange(ends.size) ^ 1                 # the other end of the same line
    r = max(float(r_source), 1e-9)
    g = 2.0 * caps / dt
    g_total = g + np.bincount(ends, weights=1.0 / z, minlength=n)
    src = int(node_of[source])
    g_total[src] += 1.0 / r
    ramp = float(t_ramp)
    vs = float(vdd) * (np.clip(t / ramp, 0.0, 1.0) if ramp > 0 else (t >= 0).astype(float))
    v_end = np.zeros((n_t, ends.size))              # voltage at each line end
    i_end = np.zeros((n_t, ends.size))              # current into the line at each end
    volts = np.zeros((n_t, n))
    v_prev = np.zeros(n)
    i_cap = np.zeros(n)
    rows = np.arange(ends.size)
    for step in range(n_t):
        back = step - k
        ok = back >= 0
        h = np.zeros(ends.size)
        bk = np.where(ok, back, 0)
        h[ok] = -(v_end[bk, other][ok] / z[other][ok] + i_end[bk, other][ok])
        j = g * v_prev + i_cap - np.bincount(ends, weights=h, minlength=n)
        j[src] += vs[step] / r
        v = j / g_total
        i_cap = g * (v - v_prev) - i_cap
        v_end[step] = v[ends]
        i_end[step, rows] = v[ends] / z + h
        volts[step] = v
        v_prev = v
    out = volts.T[node_of]
    if edge == "fall":
        out = float(vdd) - out
    return TreeWaveform(t, out)
