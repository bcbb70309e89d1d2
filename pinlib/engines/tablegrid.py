"""Interpolation on the grids of the push-pull tables (:mod:`pinlib.engines.pptable`),
and the cells of a grid across which a quantity is not smooth.

A check measured on a waveform can jump where a factor moves a feature of the waveform
across a level: on a routed line a receiver between the driver and the far end sees a
staircase edge, and its 10-90 % edge time jumps when a step's plateau crosses 90 % (the
crossing moves from one step to the next).  It bends where the worst of two dips trades
places.  A local polynomial through nodes on both sides of such a cell is wrong near it
by a fraction of the jump, however fine the grid.  So:

- :func:`rough_cells` finds the cells whose two end nodes a cubic from either side
  (through the nodes on that side only) misses by more than a tolerance: a smooth
  quantity is extrapolated one cell within a small error, a jump or a bend is missed
  from both sides;
- :func:`stencil` takes, for each point, the interpolation stencil nearest the centred
  one that spans no rough cell but the point's own (the nodes on one side of the
  feature; linear within the point's cell where there is none), and says which points
  it cannot serve (a point in a cell still rough at the finest width): those are the
  caller's to evaluate otherwise.

Nodes need not be evenly spaced: a rough cell is bisected by the caller
(:mod:`pinlib.engines.pptable`) so that the cells left rough are narrow.
"""

from __future__ import annotations

import itertools

import numpy as np

__all__ = ["STENCIL", "rough_cells", "rough_spans", "stencil", "interpolate"]

#: Nodes in each axis's interpolation stencil: a cubic through 4 nodes where the axis has
#: them (error of order h^4 on a smooth result), else through all of them.
STENCIL = 4


def rough_spans(g: np.ndarray, values: np.ndarray, tol: float, before: list,
                steps: np.ndarray | None = None) -> tuple[np.ndarray, np.ndarray, list]:
    """The rough cells of an axis that a caller bisects, kept across its bisections.

    Returns the cells no other point's stencil may span, the cells rough now (the
    caller bisects them while wider than it allows, then declines their points), and
    the spans ``(lo, hi)`` to pass as ``before`` on the next, finer grid: a span rough
    on a coarser grid none of whose cells is rough now (a bend the finer grid follows
    within ``tol``) stays out of other points' stencils.  ``steps`` (shape ``(rows,
    g.size)``) holds quantities that take a few values (a status): a cell across which
    one of them changes at all is rough, however few nodes the axis has.
    """
    rough = rough_cells(g, values, tol)
    if steps is not None and steps.size:
        rough |= np.any(np.diff(steps, axis=1) != 0, axis=0)
    now = np.flatnonzero(rough)
    span = [(float(g[c]), float(g[c + 1])) for c in now]
    span += [(lo, hi) for lo, hi in before if not any(lo <= x < hi for x, _ in span)]
    avoided = [c for c in range(g.size - 1)
               if any(lo <= g[c] and g[c + 1] <= hi for lo, hi in span)]
    return np.array(avoided, dtype=int), now, span


def _lagrange(nodes: np.ndarray, x: np.ndarray) -> np.ndarray:
    """Lagrange weights of ``nodes`` (shape ``(n, m)``) at ``x`` (shape ``(n,)``)."""
    m = nodes.shape[1]
    w = np.ones(nodes.shape)
    for j in range(m):
        for k in range(m):
            if k != j:
                w[:, j] *= (x - nodes[:, k]) / (nodes[:, j] - nodes[:, k])
    return w


def _one_side(g: np.ndarray, values: np.ndarray, take: range, at: int) -> np.ndarray:
    """|prediction - value| at node ``at`` of the polynomial through the nodes ``take``
    (every row of ``values``, shape ``(rows, g.size)``); infinite with fewer than 2."""
    if len(take) < 2:
        return np.full(values.shape[0], np.inf)
    idx = np.array(take)
    w = _lagrange(g[idx][None, :], np.array([g[at]]))[0]
    return np.abs(values[:, idx] @ w - values[:, at])


def rough_cells(g: np.ndarray, values: np.ndarray, tol: float) -> np.ndarray:
    """Which cells of the axis ``g`` a quantity is not smooth across.

    Parameters
    ----------
    g : numpy.ndarray
        The axis's nodes, increasing. [1]
    values : numpy.ndarray
        Shape ``(rows, g.size)``: the quantity along the axis, one row per combination
        of the other axes' nodes (and per column). [1]
    tol : float
        The largest miss of a one-sided cubic counted as smooth, in the values' unit. [1]

    Returns
    -------
    numpy.ndarray
        Bool, shape ``(g.size - 1,)``: a cell whose right node every polynomial through
        the 2, 3 or 4 nearest nodes on its left, and whose left node every one through
        the nearest nodes on its right, miss by more than ``tol`` in some row.  An axis
        of fewer than 4 nodes says nothing (no cell is rough).  Rows not finite
        everywhere are skipped.
    """
    n = g.size
    out = np.zeros(max(n - 1, 0), dtype=bool)
    rows = values[np.isfinite(values).all(axis=1)] if values.size else values
    if n < STENCIL or not rows.size:
        return out
    for i in range(n - 1):
        # the best of the polynomials through the 2, 3 or 4 nodes nearest on each side
        # (the nearest ones alone where farther ones would cross another rough cell)
        left = np.min([_one_side(g, rows, range(max(0, i - k + 1), i + 1), i + 1)
                       for k in range(2, STENCIL + 1)], axis=0)
        right = np.min([_one_side(g, rows, range(i + 1, min(n, i + 1 + k)), i)
                        for k in range(2, STENCIL + 1)], axis=0)
        out[i] = bool(np.any(np.minimum(left, right) > tol))
    return out


def _even(g: np.ndarray) -> bool:
    return g.size > 1 and bool(np.allclose(np.diff(g), g[1] - g[0], rtol=1e-9, atol=0))


def _cells(g: np.ndarray, x: np.ndarray) -> np.ndarray:
    """The cell of each point (an evenly spaced grid: by its step, as the tables always
    did; else by search)."""
    if _even(g):
        return np.clip(np.floor((x - g[0]) / (g[1] - g[0])).astype(int), 0, g.size - 2)
    return np.clip(np.searchsorted(g, x, side="right") - 1, 0, g.size - 2)


def _weights(g: np.ndarray, first: np.ndarray, m: int, x: np.ndarray) -> np.ndarray:
    """Lagrange weights of the ``m`` nodes of ``g`` from ``first`` at ``x`` (on an evenly
    spaced grid in node steps, the arithmetic the tables always used)."""
    if _even(g):
        u = (x - g[first]) / (g[1] - g[0])
        w = np.ones((x.size, m))
        for j in range(m):
            for k in range(m):
                if k != j:
                    w[:, j] *= (u - k) / (j - k)
        return w
    return _lagrange(g[first[:, None] + np.arange(m)[None, :]], x)


def _first(g: np.ndarray, x: np.ndarray, bad: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """First node of each point's stencil on ``g`` (the centred one, or the nearest
    shift that spans no ``bad`` cell but the point's own) and whether there is none."""
    m = min(STENCIL, g.size)
    cell = _cells(g, x)
    centred = np.clip(cell - (m - 1) // 2, 0, g.size - m)
    if not bad.any():
        return centred, np.zeros(x.size, dtype=bool)
    counts = np.concatenate([[0], np.cumsum(bad)])
    first = np.full(x.size, -1)
    for shift in (0, -1, 1, -2, 2, -3, 3)[:2 * m - 1]:
        cand = centred + shift
        ok = ((first < 0) & (cand >= np.maximum(cell - m + 1, 0))
              & (cand <= np.minimum(cell, g.size - m)))
        at = np.clip(cand, 0, g.size - m)
        ok &= counts[at + m - 1] - counts[at] - bad[cell] == 0  # its own cell aside
        first = np.where(ok, cand, first)
    return np.where(first < 0, centred, first), first < 0


def stencil(g: np.ndarray, x: np.ndarray, rough=None, declined_cells=None,
            coarse: np.ndarray | None = None) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Nodes, Lagrange weights and which points are declined, for the local polynomial
    through ``STENCIL`` nodes of the axis ``g`` around each ``x``.

    Parameters
    ----------
    g : numpy.ndarray
        The axis's nodes, increasing. [1]
    x : numpy.ndarray
        The points. [1]
    rough, declined_cells : array of int, optional
        Cells no stencil may span but the point's own; cells whose points are declined. [1]
    coarse : numpy.ndarray of bool, optional
        The nodes of the evenly spaced grid before any cell was bisected (all by
        default).  A point in a cell of that grid left whole takes its stencil from
        those nodes (a cubic on nodes bunched near a bisected feature would swing); a
        point in a bisected cell, or whose every such stencil spans a rough cell other
        than its own, is interpolated linearly between its cell's two nodes.

    Returns
    -------
    tuple of numpy.ndarray
        Node indices ``(n, m)``, weights ``(n, m)``, declined ``(n,)``: a point in a cell
        of ``declined_cells``.
    """
    coarse = np.ones(g.size, dtype=bool) if coarse is None else np.asarray(coarse, bool)
    bad = np.zeros(max(g.size - 1, 0), dtype=bool)
    if rough is not None and len(rough):
        bad[np.asarray(rough, dtype=int)] = True
    cidx = np.flatnonzero(coarse)
    m = min(STENCIL, cidx.size)
    cell = _cells(g, x)
    # a cell of the coarse grid is bad where one of its fine cells is
    owner = np.searchsorted(cidx, np.arange(g.size - 1), side="right") - 1
    bad_c = np.zeros(cidx.size - 1, dtype=bool)
    np.logical_or.at(bad_c, owner, bad)
    first, off = _first(g[cidx], x, bad_c)
    idx = cidx[first[:, None] + np.arange(m)[None, :]]
    w = _weights(g[cidx], first, m, x)
    whole = coarse[cell] & coarse[cell + 1]
    if not whole.all() or off.any():
        # a bisected cell, or one hemmed in by rough cells on both sides: linear there
        part = ~whole | off
        c = cell[part]
        lin = np.stack([c] + [c + 1] * (m - 1), axis=1)
        right = (x[part] - g[c]) / (g[c + 1] - g[c])
        lw = np.zeros((c.size, m))
        lw[:, 0], lw[:, 1] = 1.0 - right, right
        idx[part], w[part] = lin, lw
    off = np.zeros(x.size, dtype=bool)
    if declined_cells is not None and len(declined_cells):
        off = np.isin(cell, np.asarray(declined_cells, dtype=int))
    return idx, w, off


def interpolate(grids: list, table: np.ndarray, coords: np.ndarray,
                rough: list | None = None,
                coarse: list | None = None) -> tuple[np.ndarray, np.ndarray]:
    """Tensor-product local polynomial interpolation of ``table`` (grid shape + (q,)) at
    ``coords`` (n, d); a column equal at every node is returned as it is.

    ``rough`` gives per axis None or ``(avoided, declined)`` cell indices, ``coarse``
    per axis None or its nodes before bisection (:func:`stencil`); returns the values and
    which points are declined.
    """
    n = coords.shape[0]
    q = table.shape[-1]
    flat = table.reshape(-1, q)
    declined = np.zeros(n, dtype=bool)
    # equal at every node (an infinite margin included), or undefined at every node
    const = (np.all(flat == flat[:1], axis=0) | np.all(np.isnan(flat), axis=0)) \
        if flat.size else np.zeros(q, dtype=bool)
    out = np.empty((n, q))
    out[:, const] = flat[0, const] if flat.size else 0.0
    moving = np.flatnonzero(~const)
    if not grids or not moving.size:
        if moving.size:
            out[:, moving] = flat[0, moving]
        return out, declined
    sub = table[..., moving]
    rough = rough if rough is not None else [None] * len(grids)
    coarse = coarse if coarse is not None else [None] * len(grids)
    stencils = []
    for i, g in enumerate(grids):
        idx, w, off = stencil(g, coords[:, i], *(rough[i] or (None, None)), coarse[i])
        stencils.append((idx, w))
        declined |= off
    acc = np.zeros((n, moving.size))
    for offsets in itertools.product(*(range(w.shape[1]) for _, w in stencils)):
        w = np.ones(n)
        index = []
        for (idx, weights), o in zip(stencils, offsets, strict=True):
            w = w * weights[:, o]
            index.append(idx[:, o])
        acc += w[:, None] * sub[tuple(index)]
    out[:, moving] = acc
    return out, declined
