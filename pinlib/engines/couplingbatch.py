"""A coupling's checks over many boards (Monte Carlo over its spacing and length
tolerances), from a table of the time-domain solve.

Solving the pair in time for every drawn board would take seconds per thousand boards.
The noise is smooth in spacing and length, so :class:`CouplingTable` solves it once, in
one batched solve, on a grid of ``POINTS`` x ``POINTS`` factors spanning the tolerance
box (:func:`pinlib.engines.crosstalk.noise_batch`), and :func:`build` reads each board's
levels and glitch widths from it by bilinear interpolation, then applies the checks'
limits and status rules (:func:`pinlib.engines.crosstalk.coupling_checks`) to them.  A
board outside the box (a normal draw beyond 3σ) is read at the box's edge.  Only the
coupling's own tolerances vary; the victim's and aggressor's values stay those of the
engine's result.
"""

from __future__ import annotations

import numpy as np

from pinlib.core.valueclass import value_class
from pinlib.engines.coupling import pair_at
from pinlib.engines.crosstalk import noise_batch
from pinlib.engines.opendrain.batch import BatchCheck
from pinlib.model.design import Coupling
from pinlib.model.result import CouplingResult, max_margin, status_codes, warns_only

__all__ = ["POINTS", "parameter_specs", "CouplingTable", "CouplingBatch", "build"]

#: Grid points per toleranced factor (common practice, no source: the noise's curvature
#: over ±20 % of spacing or length is small; tests compare the table with the solver).
POINTS = 5


def parameter_specs(c: Coupling) -> list[tuple]:
    """``(name, kind, nominal, tolerance, unit, key)`` of each toleranced quantity."""
    out = []
    if c.spacing_tolerance > 0:
        out.append((f"{c.id} spacing", "spacing", c.spacing, c.spacing_tolerance, "m",
                    ("coupling-spacing", c.id)))
    if c.length_tolerance > 0:
        out.append((f"{c.id} parallel length", "length", c.length, c.length_tolerance, "m",
                    ("coupling-length", c.id)))
    return out


def _axis(tol: float, span: float, floor: float) -> np.ndarray:
    if tol <= 0:
        return np.array([1.0])
    return np.linspace(max(1.0 - tol * span, floor), 1.0 + tol * span, POINTS)


@value_class
class CouplingTable:
    """The noise at each (spacing factor, length factor) of the grid: ``levels`` and
    ``beyond`` map each ``(held, end)`` to an array of shape (len(fs), len(fl))."""

    fs: np.ndarray
    fl: np.ndarray
    levels: dict
    beyond: dict

    @classmethod
    def solve(cls, c: Coupling, nominal: CouplingResult, span: float = 1.0,
              floor: float = 0.05) -> CouplingTable:
        w = nominal.workings
        fs = _axis(c.spacing_tolerance, span, floor)
        fl = _axis(c.length_tolerance, span, floor)
        gs, gl = np.meshgrid(fs, fl, indexing="ij")
        pair = pair_at(c, c.spacing * gs.ravel())
        got = noise_batch(pair, c.length * gl.ravel(), w.aggressor, w.victim)
        keys = list(w.noise)
        levels = {k: np.array([g[k].level for g in got]).reshape(gs.shape) for k in keys}
        beyond = {k: np.array([g[k].beyond for g in got]).reshape(gs.shape) for k in keys}
        return cls(fs, fl, levels, beyond)

    def read(self, grid: np.ndarray, s: np.ndarray, ln: np.ndarray) -> np.ndarray:
        """Bilinear interpolation of one grid at spacing factors ``s`` and length
        factors ``ln`` (each clipped to the grid)."""
        i, ws = _cell(self.fs, s)
        j, wl = _cell(self.fl, ln)
        g = np.pad(grid, ((0, 1), (0, 1)), mode="edge")
        return ((1 - ws) * (1 - wl) * g[i, j] + ws * (1 - wl) * g[i + 1, j]
                + (1 - ws) * wl * g[i, j + 1] + ws * wl * g[i + 1, j + 1])


def _cell(axis: np.ndarray, x: np.ndarray):
    if axis.size == 1:
        return np.zeros(x.shape, int), np.zeros(x.shape)
    x = np.clip(x, axis[0], axis[-1])
    i = np.clip(np.searchsorted(axis, x, side="right") - 1, 0, axis.size - 2)
    return i, (x - axis[i]) / (axis[i + 1] - axis[i])


@value_class
class CouplingBatch:
    """Every check of a coupling over ``n`` boards, in the nominal result's order
    (``items``: :class:`~pinlib.engines.opendrain.batch.BatchCheck`, arrays of (n,))."""

    n: int
    names: list
    items: list

    def checks(self):
        for c in self.items:
            yield None, c


def build(c: Coupling, nominal: CouplingResult, table: CouplingTable, factors: dict,
          n: int, warn_margin: float) -> CouplingBatch:
    """The checks of ``n`` boards whose spacing and length factors are ``factors[key]``
    (shape (n,); 1 where a key is absent)."""
    w = nominal.workings
    vic = w.victim
    s = factors.get(("coupling-spacing", c.id), np.ones(n))
    ln = factors.get(("coupling-length", c.id), np.ones(n))
    items, names = [], []
    for chk in nominal.checks:
        key = (chk.details["held"], chk.details["end"])
        beyond = table.read(table.beyond[key], s, ln)
        passes_filter = beyond > (vic.t_sp or 0.0)
        if chk.id == "crosstalk-glitch":
            value, limit = beyond, vic.t_sp
            if limit is None:  # no filter: any crossing reaches the logic
                margin = None
                status = np.where(beyond > 0, 2, 0).astype(np.int8)
            else:
                margin = max_margin(beyond, limit)
                status = status_codes(margin, 0.0)
            status = np.where(beyond > 0, status, 0).astype(np.int8)
        else:
            value = table.read(table.levels[key], s, ln)
            limit = chk.limit
            margin = max_margin(value, limit) if chk.id == "crosstalk-low" \
                else -max_margin(value, limit)
            status = status_codes(margin, warn_margin)
            status = np.where((status == 2) & ~passes_filter, 1, status).astype(np.int8)
        if vic.signal != "scl" or warns_only(chk):  # SDA, or a soft VIL/VIH: a warning
            status = np.minimum(status, 1).astype(np.int8)    # at worst (as the engine)
        items.append(BatchCheck(chk.id, "", chk.subject, value,
                                None if limit is None else np.full(n, limit), margin,
                                status, chk.unit))
        names.append({"name": f"{c.id} {chk.subject} held {key[0]} {chk.id}", "engine": chk,
                      "segment": "", "where": c.id})
    return CouplingBatch(n, names, items)
