"""Sensitivities of each margin: the standardized regression coefficients of the margin
on the parameter draws, and R²."""

from __future__ import annotations

import numpy as np

from pinlib.studies.whatif.tolerances import Parameter

#: A parameter counts as a sensitivity when its standardized coefficient is this large
#: (common practice, no source) ...
SENSITIVITY_FLOOR = 0.05
#: ... and this many of its standard errors from 0: a coefficient within the noise of a
#: fit on few boards, of a margin the parameters explain only in part (a supply range
#: is V-shaped in its rail), is chance, not a sensitivity (a t-statistic of 3, common
#: practice, no source).
SIGNIFICANCE = 3.0

#: Margins that differ from board to board by no more than this fraction of their size
#: do not vary: the difference is float rounding (a level check whose value and limit
#: both follow one rail reads 0.42857142857142855 on one board and ...87 on the next),
#: and a fit of it names whichever parameter the rounding happens to follow.
ROUNDING = 1e-12


def beyond_rounding(lo, hi):
    """Whether margins from ``lo`` to ``hi`` (numbers or arrays, elementwise) differ by
    more than :data:`ROUNDING` of their size."""
    return (hi - lo) > ROUNDING * np.maximum(np.abs(lo), np.abs(hi))


#: Boards the fit reads at a time.  Each margin is read from its own column once, a
#: block of every margin at a time (about 8 MB at 60 margins), and each block is one small
#: matrix product: stacked whole (100,000 boards of 60 margins, 48 MB) and then centred
#: and scaled, the margins were written and read again four times, a sixth of a Monte
#: Carlo run's time on the demo (0.2 s against 0.05 s on one BLAS thread).
_BLOCK = 16384


def _sensitivities(u: np.ndarray, columns: list, params: list[Parameter]) -> list:
    """Standardized regression coefficients of each margin on the parameters, and R².

    Each margin (a column; None for a yes/no check) is regressed linearly on the
    standardized parameter draws; the coefficient of a standardized parameter in the
    fit of the standardized margin is its standardized regression coefficient (for
    independent draws, about its correlation with the margin; their squares add up to
    R² when the margin is linear in the parameters).
    """
    out = [([], None)] * len(columns)
    n, k = u.shape
    xs = u.std(axis=0) if n else np.zeros(k)
    keep = xs > 0
    if not keep.any():
        return out
    names = [p.name for p, kk in zip(params, keep, strict=True) if kk]
    z = (u[:, keep] - u[:, keep].mean(axis=0)) / xs[keep]
    whole = [i for i, c in enumerate(columns) if c is not None and np.isfinite(c).all()]
    if whole:
        for i, r in zip(whole, _fit(z, [columns[i] for i in whole], names), strict=True):
            if r is not None:
                out[i] = r
    # a margin with non-finite boards is fitted on its finite ones; margins finite on the
    # same boards share one fit (one Gram matrix: most of the time of a fit)
    groups: dict[bytes, tuple[np.ndarray, list[int]]] = {}
    done = set(whole)
    for i, c in enumerate(columns):
        if c is None or i in done:
            continue
        ok = np.isfinite(c)
        if ok.sum() > 2:
            groups.setdefault(np.packbits(ok).tobytes(),
                              (ok, []))[1].append(i)
    for ok, cols in groups.values():
        zz = z[ok]
        zz = (zz - zz.mean(axis=0))
        for i, r in zip(cols, _fit(zz, [columns[i][ok] for i in cols], names), strict=True):
            if r is not None:
                out[i] = r
    return out


def _fit(zz: np.ndarray, cols: list, names: list) -> list:
    """The fit of each margin of ``cols`` (1-D, one value a board) on the centred
    standardized draws ``zz``: ``(sensitivities, R²)``, or None for a margin that does
    not vary (or too few boards)."""
    rows = zz.shape[0]
    if rows < zz.shape[1] + 2:
        return [None] * len(cols)
    sd, cross, varies = _moments(zz, cols)
    good = varies & (sd > 0)
    if not good.any():
        return [None] * len(cols)
    # the covariance of each draw with each standardized margin; least squares by the
    # normal equations: the standardized draws of independent parameters are well
    # conditioned (their Gram matrix is close to n·I)
    cross = cross[:, good] / sd[good]
    gram = zz.T @ zz / rows
    beta = np.linalg.solve(gram, cross)
    r2 = (beta * cross).sum(axis=0)   # explained variance of a unit-variance margin
    # each coefficient's standard error (least squares: the residual variance over the
    # degrees of freedom, times the diagonal of the inverse of X'X): a unit-variance
    # margin leaves 1 − R² unexplained on each board
    free = rows - zz.shape[1] - 1
    spread = np.sqrt(np.maximum(1.0 - r2, 0.0)[None, :] / free
                     * np.diag(np.linalg.inv(gram))[:, None])
    res, g = [], 0
    for ok in good:
        if not ok:
            res.append(None)
            continue
        ranked = sorted(zip(names, beta[:, g].tolist(), spread[:, g].tolist(), strict=True),
                        key=lambda t: -abs(t[1]))
        res.append(([(nm, float(b)) for nm, b, se in ranked
                     if abs(b) >= SENSITIVITY_FLOOR and abs(b) >= SIGNIFICANCE * se],
                    float(r2[g])))
        g += 1
    return res


def _moments(zz: np.ndarray, cols: list) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Each margin's standard deviation over the boards, ``zz.T @ (y − mean) / rows``
    (shape draws × margins) and whether it varies beyond rounding (:func:`beyond_rounding`:
    a margin equal on every board has no fit, whatever rounding its mean leaves), read
    :data:`_BLOCK` boards at a time."""
    rows, k = zz.shape
    means = np.array([c.mean() for c in cols])
    lo = np.full(len(cols), np.inf)
    hi = np.full(len(cols), -np.inf)
    squares = np.zeros(len(cols))
    cross = np.zeros((k, len(cols)))
    for s in range(0, rows, _BLOCK):
        yb = np.stack([c[s:s + _BLOCK] for c in cols])
        np.minimum(lo, yb.min(axis=1), out=lo)
        np.maximum(hi, yb.max(axis=1), out=hi)
        yb -= means[:, None]
        squares += np.einsum("ij,ij->i", yb, yb)
        cross += zz[s:s + _BLOCK].T @ yb.T
    return np.sqrt(squares / rows), cross / rows, beyond_rounding(lo, hi)
