"""Sensitivities of each margin: the standardized regression coefficients of the margin
on the parameter draws, and R²."""

from __future__ import annotations

import numpy as np

from pinlib.studies.whatif.tolerances import Parameter

#: A parameter counts as a sensitivity when its standardized coefficient is this large.
SENSITIVITY_FLOOR = 0.05


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

    def fit(zz, y):
        sd = y.std(axis=0)
        good = sd > 0
        rows = zz.shape[0]
        if not good.any() or rows < zz.shape[1] + 2:
            return [None] * y.shape[1]
        yz = (y[:, good] - y[:, good].mean(axis=0)) / sd[good]
        # least squares by the normal equations: the standardized draws of independent
        # parameters are well conditioned (their Gram matrix is close to n·I)
        gram = zz.T @ zz / rows
        cross = zz.T @ yz / rows
        beta = np.linalg.solve(gram, cross)
        r2 = (beta * cross).sum(axis=0)   # explained variance of a unit-variance margin
        res, g = [], 0
        for ok in good:
            if not ok:
                res.append(None)
                continue
            ranked = sorted(zip(names, beta[:, g].tolist(), strict=True), key=lambda t: -abs(t[1]))
            res.append(([(nm, float(b)) for nm, b in ranked if abs(b) >= SENSITIVITY_FLOOR],
                        float(r2[g])))
            g += 1
        return res

    whole = [i for i, c in enumerate(columns) if c is not None and np.isfinite(c).all()]
    if whole:
        for i, r in zip(whole, fit(z, np.stack([columns[i] for i in whole], axis=1)), strict=True):
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
        for i, r in zip(cols, fit(zz, np.stack([columns[i][ok] for i in cols], axis=1)),
                        strict=True):
            if r is not None:
                out[i] = r
    return out
