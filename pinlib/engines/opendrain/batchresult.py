"""The result of the open-drain array engine: every check of a bus as arrays over the
variants (:class:`BatchCheck`, by segment), and how a check's worst is picked from its
rows and rail corners (each check keeps, per variant, the row and corner its worst came
from, and what each row is, so that its wording can name them).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from pinlib.model.result import STATUSES, status_codes

#: Status codes of :attr:`BatchCheck.status`, in order of severity (the index of each).
STATUS = STATUSES

@dataclass
class BatchCheck:
    """One check of the engine, for every variant of the batch.

    Attributes
    ----------
    id : str
        The engine's check id (``rise-time``...). [1]
    segment : str
        The segment id. [1]
    signal : str or None
        ``"SDA"``/``"SCL"`` for a check of one line. [1]
    value, limit : numpy.ndarray or None
        At the worst corner and element, shape ``(N,)``; None for a yes/no check. [unit]
    margin : numpy.ndarray or None
        Relative margin, shape ``(N,)``; None for a yes/no check. [1]
    status : numpy.ndarray
        Index into :data:`STATUS`, shape ``(N,)``. [1]
    unit : str
        Unit of value and limit. [1]
    row, corner : numpy.ndarray or None
        Per variant, where the worst came from: the index of the row (the element the
        check compares: a receiver, a driver, a device, in the order the engine lists
        them) and of the rail corner (``0`` the rail at its minimum, ``1`` at its
        maximum for :class:`WorstCase`), shape ``(N,)``; None for a check of one
        element at one point. [1]
    names : tuple or None
        What each row is (a device and its side; a driver across a translator "via"
        it), the same for every variant. [1]
    row_margins : numpy.ndarray or None
        Where kept (the checks that list every element: v-ol, v-oh, input-voltage),
        each row's own worst margin over the corners, shape ``(N, rows)``. [1]
    row_values : numpy.ndarray or None
        Where kept (sink-current: each driver's largest current), each row's own
        value, shape ``(N, rows)``. [unit]
    by, by_names : numpy.ndarray, list or None
        Where kept (v-ol: the driver whose low level is the bus's), the index into
        ``by_names`` of what is behind the worst value, shape ``(N,)``. [1]
    """

    id: str
    segment: str
    signal: str | None
    value: Any
    limit: Any
    margin: Any
    status: Any
    unit: str = ""
    row: Any = None
    corner: Any = None
    names: Any = None
    row_margins: Any = None
    row_values: Any = None
    by: Any = None
    by_names: Any = None

    def worst(self, i: int = 0) -> tuple[str | None, int | None]:
        """What variant ``i``'s worst came from: the name of its row (None for a check
        of one element) and its corner (None where the check has one point). [1]"""
        name = None if self.names is None else self.names[int(self.row[i]) if self.row
                                                          is not None else 0]
        return name, None if self.corner is None else int(self.corner[i])

    @property
    def label(self) -> str:
        return f"{self.id} {self.signal}" if self.signal else self.id


@dataclass
class SegmentBatch:
    id: str
    checks: list[BatchCheck] = field(default_factory=list)
    figures: dict = field(default_factory=dict)


@dataclass
class BusBatch:
    """The checks of one open-drain bus over a batch, segment by segment (in the
    engine's order within each)."""

    bus: str
    n: int
    segments: list[SegmentBatch] = field(default_factory=list)

    def checks(self):
        """Every check: (segment id, BatchCheck)."""
        for s in self.segments:
            for c in s.checks:
                yield s.id, c


class _Out:
    def __init__(self, seg_id: str, n: int):
        self.seg_id, self.n = seg_id, n
        self.checks: list[BatchCheck] = []

    def _n(self, x):
        return _column(np.asarray(x, dtype=float), self.n)

    def pick(self, id, signal, rows, warn, unit, names=None, per_row=False):
        """The worst (row, corner) of margin arrays: ``rows`` of (margin, value, limit)
        and optionally a per-row warning threshold.  The check keeps, per variant, the
        row and the corner its worst came from (:attr:`BatchCheck.row`, ``corner``) and
        ``names``, what each row is; with ``per_row``, each row's own worst margin too
        (:attr:`BatchCheck.row_margins`)."""
        if self.n == 1 and len(rows) == 1 and np.size(rows[0][0]) > 1:
            self._pick_one(id, signal, rows, warn, unit, names)  # one row, its corners
            if per_row:
                self.checks[-1].row_margins = self.checks[-1].margin[:, None]
            return
        # a margin has the shape of its value and limit broadcast (a row whose value
        # does not fails loudly at the assignment below)
        n, k = np.broadcast_shapes(*[np.shape(r[0]) for r in rows], (self.n, 1))
        if len(rows) == 1 and k == 1 and not isinstance(warn, (list, tuple)):
            m, v, lim = rows[0][:3]  # columns (or one value), made (n,) by add
            self.add(id, signal, v, lim, m, status_codes(m, warn), unit)
            chk = self.checks[-1]
            chk.names = names
            if per_row:
                chk.row_margins = chk.margin[:, None]
            return
        # (margin, value, limit) × variant × row × corner, filled by broadcasting
        # assignment (one buffer rather than a broadcast view and a stack per array)
        buf = np.empty((3, n, len(rows), k))
        for j, r in enumerate(rows):
            buf[0, :, j] = r[0]
            buf[1, :, j] = r[1]
            buf[2, :, j] = r[2]
        flat = buf.reshape(3, n, -1)
        m = flat[0]
        idx = np.argmin(np.where(m != m, -np.inf, m), axis=1)
        margin, value, limit = flat[:, np.arange(n), idx]
        row = idx // k
        if isinstance(warn, (list, tuple)):
            w = np.empty((n, len(warn)))
            for j, x in enumerate(warn):
                w[:, j] = np.reshape(x, (-1,)) if np.ndim(x) else x
            warn = w[np.arange(n), row]
        self.add(id, signal, value, limit, margin, status_codes(margin, warn), unit)
        chk = self.checks[-1]
        chk.row, chk.corner, chk.names = row, idx % k if k > 1 else None, names
        if per_row:  # each row at its own worst corner (NaN counted as the worst)
            mm = buf[0]
            at = np.argmin(np.where(mm != mm, -np.inf, mm), axis=2)[..., None]
            chk.row_margins = np.take_along_axis(mm, at, axis=2)[..., 0]

    def _pick_one(self, id, signal, rows, warn, unit, names):
        """:meth:`pick` for one variant, in plain Python over the few numbers it has (the
        same order, NaN the worst, the first of equal margins): faster than the arrays
        for one row at its corners, slower for many rows."""
        best, k = None, 1
        for j, r in enumerate(rows):
            ms = np.ravel(r[0]).tolist()
            k = max(k, len(ms))
            for c, m in enumerate(ms):
                key = -math.inf if m != m else m
                if best is None or key < best[0]:
                    best = (key, j, c)
        _, j, c = best
        margin, value, limit = (np.ravel(x)[c if np.size(x) > 1 else 0] for x in rows[j][:3])
        w = warn[j] if isinstance(warn, (list, tuple)) else warn
        self.add(id, signal, value, limit, margin, status_codes(margin, w), unit)
        chk = self.checks[-1]
        chk.row, chk.corner, chk.names = np.array([j]), np.array([c]) if k > 1 else None, names

    def add(self, id, signal, value, limit, margin, status, unit=""):
        self.checks.append(BatchCheck(
            id, self.seg_id, signal,
            None if value is None else self._n(value),
            None if limit is None else self._n(limit),
            None if margin is None else self._n(margin),
            _column(np.asarray(status, dtype=np.int8), self.n),
            unit))

    def truth(self, id, signal, ok):
        self.add(id, signal, None, None, None, np.where(np.asarray(ok), 0, 2))


def _column(a: np.ndarray, n: int) -> np.ndarray:
    """``a`` as shape ``(n,)``: its own values when it has ``n``, else its one value
    broadcast. [unit]"""
    return a.reshape(n) if a.size == n else np.broadcast_to(a.reshape(-1), (n,))
