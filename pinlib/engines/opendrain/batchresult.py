"""The result of the open-drain array engine: every check of a bus as arrays over the
variants (:class:`BatchCheck`, by segment), and how a check's worst is picked from its
rows and rail corners (each check keeps, per variant, the row and corner its worst came
from, and what each row is, so that its wording can name them).
"""

from __future__ import annotations

import math
from dataclasses import field
from typing import Any

import numpy as np

from pinlib.core.valueclass import value_class
from pinlib.model.result import STATUSES, status_codes

#: Status codes of :attr:`BatchCheck.status`, in order of severity (the index of each).
STATUS = STATUSES

@value_class
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
    basis : Any
        What a check's wording needs beyond its numbers, where kept: pullup-window
        (margin to Rp(min), margin to Rp(max)) as :func:`pinlib.physics.pullup.pullup_margins`
        gives them; sink-current each row's index among its line's drivers; fall-time per
        row (:func:`.arith.fall_bounds`' info, the driver's segment index, its index among
        that segment's drivers of the line); scl-frequency a dict of the SCL low and high
        times and whether they are counted (the controller states none); setup-time a
        dict of ``t_low``, each row's tVD;DAT with its bridge delays (``t_vd``) and the
        SDA rise time ``t_r``; supply-range per row whether the rail's low end is the
        one nearer its limit. [unit]
    soft : numpy.ndarray or None
        Where the check's limits are parts' values, per variant whether the limit of
        its worst row rests on a soft value (a class's typical value, an estimate:
        :attr:`pinlib.library.values.Sourced.soft`): its status is then at most a
        warning (:func:`pinlib.model.result.soft_limit` words it), shape ``(N,)``. [1]
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
    basis: Any = None
    soft: Any = None

    def worst(self, i: int = 0) -> tuple[str | None, int | None]:
        """What variant ``i``'s worst came from: the name of its row (None for a check
        of one element) and its corner (None where the check has one point). [1]"""
        name = None if self.names is None else self.names[int(self.row[i]) if self.row
                                                          is not None else 0]
        return name, None if self.corner is None else int(self.corner[i])

    @property
    def label(self) -> str:
        return f"{self.id} {self.signal}" if self.signal else self.id


@value_class
class SegmentBatch:
    """The checks and figures of one segment over a batch."""

    id: str
    checks: list[BatchCheck] = field(default_factory=list)
    figures: dict = field(default_factory=dict)


@value_class
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


def le(value, limit):
    """A row of a check that ``value <= limit`` (margin ``(limit − value)/|limit|``)."""
    return (value, limit, 1.0, None)


def ge(value, limit):
    """A row of a check that ``value >= limit`` (margin ``(value − limit)/|limit|``)."""
    return (value, limit, -1.0, None)


def given(margin, value, limit):
    """A row whose margin is worked out already. [1]"""
    return (value, limit, 0.0, margin)


class _Pending:
    """A check of :meth:`_Out.pick` whose worst is found in :meth:`_Out.finish`."""

    __slots__ = ("chk", "r0", "r1", "k", "warn", "per_row", "single", "soft")

    def __init__(self, chk, r0, r1, k, warn, per_row, single, soft=None):
        self.chk, self.r0, self.r1, self.k = chk, r0, r1, k
        self.warn, self.per_row, self.single = warn, per_row, single
        self.soft = soft


def _corners(rows) -> int:
    """The number of rail corners of a check's rows (the last axis, broadcast). [1]"""
    k = 1
    for value, limit, _, margin in rows:  # the sense is a number
        for x in (value, limit, margin):
            shape = getattr(x, "shape", None)  # a Python number or None has none
            if shape and shape[-1] > k:
                k = shape[-1]
    return k


class _Out:
    """The checks of one segment, in the engine's order.  :meth:`pick` records a check's
    rows; :meth:`finish` works out the margins of every recorded row of the segment in
    one array, then each check's worst row and corner, status, and what :meth:`after`
    asked for."""

    def __init__(self, seg_id: str, n: int):
        self.seg_id, self.n = seg_id, n
        self.checks: list[BatchCheck] = []
        self._rows: list = []
        self._pending: list[_Pending] = []
        self._after: list = []

    def _n(self, x):
        return _column(np.asarray(x, dtype=float), self.n)

    def pick(self, id, signal, rows, warn, unit, names=None, per_row=False,
             soft=None) -> BatchCheck:
        """A check over ``rows`` (:func:`le`, :func:`ge`, :func:`given`, each of shape
        ``(N or 1, corners or 1)``) and a warning threshold (one, or one per row).  Its
        worst (row, corner) per variant is found in :meth:`finish`: the check keeps the
        row and the corner (:attr:`BatchCheck.row`, ``corner``) and ``names``, what each
        row is; with ``per_row``, each row's own worst margin too
        (:attr:`BatchCheck.row_margins`).  ``soft``, where the limits are parts' values:
        per row whether its limit rests on a soft value (a bool, or a batch column of
        them where the parts differ); a row that would fail against a soft limit warns
        (:func:`pinlib.model.result.soft_limit`), and a row that fails against a firm one
        is the check's worst before it (:func:`_worst_cell`).  Returns the check (filled
        by :meth:`finish`)."""
        chk = BatchCheck(id, self.seg_id, signal, None, None, None, None, unit, names=names)
        self.checks.append(chk)
        k = _corners(rows) if self.n > 1 else 0  # at one variant: found in _finish_one
        r0 = len(self._rows)
        self._rows.extend(rows)
        single = len(rows) == 1 and k <= 1 and not isinstance(warn, (list, tuple))
        if soft is not None and not any(np.any(x) for x in soft):
            soft = None  # every limit firm: the plain rule
        self._pending.append(_Pending(chk, r0, len(self._rows), k, warn, per_row, single,
                                      soft))
        return chk

    def after(self, fn) -> None:
        """Call ``fn()`` once :meth:`finish` has filled the checks."""
        self._after.append(fn)

    def finish(self) -> list[BatchCheck]:
        """Every recorded check's margin, worst row and corner, value, limit and status
        (NaN counted as the worst margin; the first of equal margins)."""
        if self._pending and self.n == 1:
            _finish_one(self._pending, self._rows)
        elif self._pending:  # the number of corners of every check is known
            n, rows = self.n, self._rows
            k = max(p.k for p in self._pending)
            # (value, limit, sense, given margin) × row × corner × variant: each cell as
            # broadcast to (variant, corner), written where a row's variants lie side
            # by side (with the variants first, a row's values were written n strides
            # apart: at 5,000 variants the writes, not the margins, were the time)
            buf = np.empty((4, len(rows), k, n))
            for j, cells in enumerate(rows):
                for q, x in enumerate(cells):
                    buf[q, j] = 0.0 if x is None else np.broadcast_to(x, (n, k)).T
            margin = _margins(buf)
            for p in self._pending:
                _finish_many(p, margin, buf[0], buf[1], n)
        for fn in self._after:
            fn()
        self._rows, self._pending, self._after = [], [], []
        return self.checks

    def add(self, id, signal, value, limit, margin, status, unit=""):
        self.checks.append(BatchCheck(
            id, self.seg_id, signal,
            None if value is None else self._n(value),
            None if limit is None else self._n(limit),
            None if margin is None else self._n(margin),
            _column(np.asarray(status, dtype=np.int8), self.n),
            unit))

    def truth(self, id, signal, ok, names=None, soft=False):
        """A yes/no check (no value, limit or margin): fails where ``ok`` is False, and
        warns there instead where ``soft`` (a bool or a batch column: what it rests on
        is a soft value, :func:`pinlib.model.result.soft_limit`; then
        :attr:`BatchCheck.soft`); ``names``: what it is of (one name), as
        :attr:`BatchCheck.names`."""
        soft = np.asarray(soft, dtype=bool)
        self.add(id, signal, None, None, None,
                 np.where(np.asarray(ok), 0, np.where(soft, 1, 2)))
        self.checks[-1].names = names
        if soft.any():
            self.checks[-1].soft = np.broadcast_to(np.reshape(soft, (-1,)), (self.n,)).copy()


def _cells(x) -> list:
    """One variant's value of a row (a number, None for no given margin, or an array
    of one value or one per corner) as a list: one value, or one per corner. [unit]"""
    t = type(x)
    if t is float:
        return [x]
    if x is None:
        return [0.0]
    if t is np.ndarray and x.dtype == np.float64:
        return x.ravel().tolist()
    return np.asarray(x, dtype=float).reshape(-1).tolist()


#: A worked-out margin nearer to 0 than this is 0: the value is at its limit.  A sum
#: written to land on a limit (10 pF + 10 pF + 530 pF against Cb 550 pF) comes out a
#: unit in the last place beyond it, which read as a failure at "-0 %". [1]
AT_LIMIT = 1e-12


def _margins(buf):
    """The margins of stacked rows (:func:`pinlib.model.result.max_margin` where the
    sense is 1, ``min_margin`` where it is −1, the given margin where 0); one within
    :data:`AT_LIMIT` of 0 is 0. [1]"""
    value, limit, sense, known = buf
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        excess = np.where(sense > 0, limit - value, value - limit)
        m = excess / np.abs(limit)
    m = np.where(np.abs(m) <= AT_LIMIT, 0.0, m)
    zero = limit == 0
    if zero.any():  # a zero limit: met (+inf) or not (−inf)
        m = np.where(zero, np.where(excess >= 0, math.inf, -math.inf), m)
    return np.where(sense == 0, known, m)


def _status(m: float, warn: float) -> int:
    """:func:`pinlib.model.result.status_codes` of one margin."""
    return 2 if m != m or m < 0 else (1 if m < warn else 0)


def _margin(value: float, limit: float, sense: float, given: float) -> float:
    """:func:`_margins` of one cell, in plain Python (the same IEEE arithmetic). [1]"""
    if sense == 0:
        return given
    excess = limit - value if sense > 0 else value - limit
    if limit == 0:  # met (+inf) or not (−inf); NaN is not met
        return math.inf if excess >= 0 else -math.inf
    m = excess / abs(limit)
    return 0.0 if abs(m) <= AT_LIMIT else m


def _finish_one(pending, rows) -> None:
    """:meth:`_Out.finish` for one variant, in plain Python over the few numbers (the
    margins as :func:`_margins` works them out); each check's columns are views of a
    few arrays made once for the segment."""
    nums, codes, where = [], [], []
    for p in pending:
        # each row's cells as they come (one value, or one per corner), then the
        # check's number of corners: the most any cell has (as _corners for many)
        raw = [[_cells(x) for x in rows[j]] for j in range(p.r0, p.r1)]
        k = max([len(c) for cells in raw for c in cells])
        p.k, p.single = k, p.single and k == 1
        worst_of = []
        best = None   # (firm, key, margin, value, limit, row, corner) of the worst cell
        soft = None if p.soft is None else [bool(np.ravel(x)[0]) for x in p.soft]
        for j, (vs, ls, ss, gs) in enumerate(raw):
            if k > 1:
                vs, ls, ss, gs = (c if len(c) == k else c * k for c in (vs, ls, ss, gs))
            row_best = None   # the first of equal margins, NaN counted as the worst
            for c in range(k):
                x = _margin(vs[c], ls[c], ss[c], gs[c])
                key = -math.inf if x != x else x
                if row_best is None or key < row_best[1]:
                    row_best = (1, key, x, vs[c], ls[c], j, c)
            worst_of.append(row_best[2])
            if soft is not None and not soft[j] and row_best[1] < 0:
                row_best = (0,) + row_best[1:]  # a firm failure: before any other (_worst_cell)
            if best is None or row_best[:2] < best[:2]:
                best = row_best
        _, _, m, v, lim, j, c = best
        w = p.warn[j] if isinstance(p.warn, (list, tuple)) else p.warn
        w = w if type(w) is float else float(np.ravel(w)[0])
        nums += (m, v, lim)
        code = _status(m, w)
        if soft is not None:
            code = min(code, 1) if soft[j] else code
            p.chk.soft = np.array([soft[j]])
        codes.append(code)
        where += (j, c)
        if p.per_row:
            p.chk.row_margins = np.array([worst_of])
    nums, codes, where = np.array(nums), np.array(codes, dtype=np.int8), np.array(where)
    for i, p in enumerate(pending):
        chk = p.chk
        chk.margin, chk.value, chk.limit = nums[3 * i:3 * i + 1], nums[3 * i + 1:3 * i + 2], \
            nums[3 * i + 2:3 * i + 3]
        chk.status = codes[i:i + 1]
        chk.row = None if p.single else where[2 * i:2 * i + 1]
        chk.corner = where[2 * i + 1:2 * i + 2] if p.k > 1 else None


def _finish_many(p: _Pending, margin, value, limit, n: int) -> None:
    """:meth:`_Out.finish` of one check over many variants (arrays laid out row ×
    corner × variant; a variant's cells taken row by row, corner by corner, so the
    first of equal margins is the same cell in any layout)."""
    sl = (slice(p.r0, p.r1), slice(0, p.k))
    mm = margin[sl]
    flat = mm.reshape(-1, n)
    ar = np.arange(n)
    chk = p.chk
    soft = None
    if p.soft is not None:  # each row's softness per variant, each cell's (row × corner)
        soft = np.repeat(np.stack([np.broadcast_to(np.reshape(x, (-1,)), (n,))
                                   for x in p.soft]), p.k, axis=0)
    if flat.shape[0] == 1:  # one cell a variant (most checks): it is the worst
        idx = np.zeros(n, dtype=np.intp)
        chk.margin, chk.value, chk.limit = (
            a[sl].reshape(-1, n)[0].copy() for a in (margin, value, limit))
    else:
        idx = _worst_cell(flat, soft)
        chk.margin = flat[idx, ar]
        chk.value = value[sl].reshape(-1, n)[idx, ar]
        chk.limit = limit[sl].reshape(-1, n)[idx, ar]
    row = idx // p.k
    warn = p.warn
    if isinstance(warn, (list, tuple)):
        w = np.empty((n, len(warn)))
        for j, x in enumerate(warn):
            w[:, j] = np.reshape(x, (-1,)) if np.ndim(x) else x
        warn = w[ar, row]
    chk.status = _column(status_codes(chk.margin, warn), n)
    if soft is not None:  # a limit no datasheet stands behind: at most a warning
        chk.soft = soft[idx, ar]
        chk.status = np.where(chk.soft, np.minimum(chk.status, 1), chk.status).astype(np.int8)
    chk.row = None if p.single else row
    chk.corner = idx % p.k if p.k > 1 else None
    if p.per_row:  # each row at its own worst corner (NaN counted as the worst)
        at = np.argmin(np.where(mm != mm, -np.inf, mm), axis=1)[:, None]
        chk.row_margins = np.ascontiguousarray(np.take_along_axis(mm, at, axis=1)[:, 0].T)


def _worst_cell(flat, soft):
    """Per variant, the index of a check's worst cell among ``flat`` (cells × variants):
    the smallest margin (NaN counted as the worst; the first of equal margins), except
    that a cell failing against a firm limit (``soft`` False, cells × variants, or None
    for every limit firm) comes before every cell that does not (a failure against a
    datasheet limit is not hidden behind a larger one against a class's typical value,
    which only warns: :func:`pinlib.model.result.soft_limit`). [1]"""
    key = np.where(flat != flat, -np.inf, flat)
    idx = np.argmin(key, axis=0)
    if soft is None:
        return idx
    firm_fail = (key < 0) & ~soft
    any_firm = firm_fail.any(axis=0)
    return np.where(any_firm, np.argmin(np.where(firm_fail, key, np.inf), axis=0), idx)


def _column(a: np.ndarray, n: int) -> np.ndarray:
    """``a`` as shape ``(n,)``: its own values when it has ``n``, else its one value
    broadcast. [unit]"""
    return a.reshape(n) if a.size == n else np.broadcast_to(a.reshape(-1), (n,))
