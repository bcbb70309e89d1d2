"""The figures of many edges read off one batched solve, ahead of the line analyses.

Once :mod:`pinlib.engines.pushline.batchsolve` has solved many unit edges in one array,
the analyses that follow read each edge's figures one record at a time: its 10-90 %
edge time, overshoot and undershoot (:func:`~pinlib.engines.pushline.waves.
simulate_edge`), its crossings of the receivers' thresholds (the flights,
:meth:`EdgeWave.crossing`) and its re-crossings (the ringing check,
:meth:`EdgeWave.recrossings`).  :func:`store_figures` reads them for every edge of the
batch at once, with the same functions of :mod:`pinlib.physics.waveform` over the batch
axis (``n_valid`` leaves each row's padding out), and keeps each under the memo key the
engine asks for.  Every operation is the engine's, element by element, on the same
samples (the record ``v_from + (v_to - v_from) * unit``) and the same grid (a batch of
edges on different steps passes each row's own), so the figures are the ones the
engine would compute to the last bit; an edge the batch did not describe is
computed by the engine as before.
"""

from __future__ import annotations

import numpy as np

from pinlib.core.valueclass import value_class
from pinlib.engines import memo
from pinlib.engines.pushline.waves import crossing_key, figures_key, recrossings_key
from pinlib.physics import waveform as wf

__all__ = ["EdgeUse", "store_figures"]

#: Samples in one array of records at most (several such arrays live at once).
MAX_ELEMENTS = 2_000_000


@value_class(frozen=True)
class EdgeUse:
    """One way an analysis will read a unit edge: the edge's levels and direction, the
    levels whose first crossing it asks for and the (VIL, VIH) pairs whose re-crossings
    it counts. [V]"""

    v_from: float
    v_to: float
    edge: str
    levels: tuple = ()
    pairs: tuple = ()


def store_figures(t: np.ndarray, v: np.ndarray, rows: list) -> int:
    """Read the figures of batched edges into the run's memo.

    Parameters
    ----------
    t : numpy.ndarray
        The batch's time grid, shape ``(n,)``, or one grid per row of ``v``. [s]
    v : numpy.ndarray
        Unit responses, shape ``(m, n)``. [1]
    rows : list of (int, int, tuple, EdgeUse)
        Per use: the row of ``v``, its record's sample count, its unit key and the use.

    Returns
    -------
    int
        Uses whose figures were stored. [1]
    """
    rows = [r for r in rows if r[3].v_to != r[3].v_from]  # no swing: the engine refuses
    if not rows:
        return 0
    per = max(1, MAX_ELEMENTS // t.shape[-1])
    for start in range(0, len(rows), per):
        _store(t, v, rows[start:start + per])
    return len(rows)


def _store(t: np.ndarray, v: np.ndarray, rows: list) -> None:
    idx = np.array([r[0] for r in rows])
    n = np.array([r[1] for r in rows])
    uses = [r[3] for r in rows]
    keys = [r[2] for r in rows]
    vf = np.array([u.v_from for u in uses])
    vt = np.array([u.v_to for u in uses])
    # as simulate_edge makes each record, v_from + swing * unit (summed in place)
    rec = np.multiply((vt - vf)[:, None], _pick(v, idx))
    rec += vf[:, None]
    t = _pick(t, idx) if t.ndim > 1 else t  # each row's own grid, or the one they share
    t_edge = wf.edge_time(t, rec, vt, v_initial=vf, n_valid=n)
    over = wf.overshoot(rec, np.maximum(vf, vt), n_valid=n)
    under = wf.undershoot(rec, np.minimum(vf, vt), n_valid=n)
    for i, (key, u) in enumerate(zip(keys, uses, strict=True)):
        memo.keep(figures_key(key, u.v_from, u.v_to),
                  (float(t_edge[i]), float(over[i]), float(under[i])))
    for edge in ("rise", "fall"):
        mine = [i for i, u in enumerate(uses) if u.edge == edge]
        if not mine:
            continue
        # the edge's rows taken once; a slot that asks of all of them reads these whole
        part = (_rows(t, mine), _pick(rec, mine), n[mine], [keys[i] for i in mine],
                [uses[i] for i in mine])
        _crossings(*part, list(range(len(mine))), edge)
        _recrossings(*part, list(range(len(mine))), edge)


def _pick(a: np.ndarray, sel) -> np.ndarray:
    """Rows ``sel`` of ``a``: a view where they are evenly spaced in order (a batch's
    rises or falls, every row), else a copy; the same rows either way."""
    sel = np.asarray(sel)
    if sel.size > 1:
        step = int(sel[1] - sel[0])
        if step > 0 and np.array_equal(sel, np.arange(sel.size) * step + sel[0]):
            return a[int(sel[0]):int(sel[-1]) + 1:step]
    return a[sel]


def _rows(t: np.ndarray, sel: list) -> np.ndarray:
    """The time grids of rows ``sel``: the one shared axis, or each row's own."""
    return _pick(t, sel) if t.ndim > 1 else t


def _taken(t: np.ndarray, rec: np.ndarray, n: np.ndarray, sel: list) -> tuple:
    """Grids, records and sample counts of rows ``sel`` (no copy when they are all)."""
    if len(sel) == rec.shape[0]:
        return t, rec, n
    return _rows(t, sel), _pick(rec, sel), n[sel]


def _slots(mine: list, count) -> list[tuple[int, list[int]]]:
    """Per slot ``s``: the rows that ask for at least ``s + 1`` values."""
    most = max((count(i) for i in mine), default=0)
    return [(s, [i for i in mine if count(i) > s]) for s in range(most)]


def _crossings(t, rec, n, keys, uses, mine, edge) -> None:
    for s, sel in _slots(mine, lambda i: len(uses[i].levels)):
        levels = np.array([uses[i].levels[s] for i in sel])
        ts, rs, ns = _taken(t, rec, n, sel)
        got = wf.threshold_delay(ts, rs, levels, edge=edge, n_valid=ns)
        for i, tc in zip(sel, got, strict=True):
            u = uses[i]
            memo.keep(crossing_key(keys[i], u.v_from, u.v_to, edge, u.levels[s]), float(tc))


def _recrossings(t, rec, n, keys, uses, mine, edge) -> None:
    for s, sel in _slots(mine, lambda i: len(uses[i].pairs)):
        v_il = np.array([uses[i].pairs[s][0] for i in sel])
        v_ih = np.array([uses[i].pairs[s][1] for i in sel])
        ts, rs, ns = _taken(t, rec, n, sel)
        got = wf.recrossings(ts, rs, v_il, v_ih, edge=edge, n_valid=ns)
        for j, i in enumerate(sel):
            u = uses[i]
            memo.keep(recrossings_key(keys[i], u.v_from, u.v_to, edge, *u.pairs[s]),
                      wf.Recrossings(got.entry[j], got.opposite[j], got.t_settled[j]))
