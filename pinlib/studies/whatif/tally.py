"""What a Monte Carlo run keeps while its chunks go by: per check the counts of failing
and warning boards, the extremes of the margins, the margins and values of the first
boards, and a histogram of every board's margin in fixed bins."""

from __future__ import annotations

import numpy as np


class MarginHistogram:
    """Counts of relative margins in fixed bins aligned on 0 (the limit), filled chunk by
    chunk: bin ``k`` holds the margins in ``[k·width, (k + 1)·width)``, so a bin lies
    wholly on one side of the limit (``k >= 0``: the boards pass).

    The width is set from the first margins that spread (a :data:`FINE_BINS`-th of their
    range, the limit included); when later margins would need more than
    :data:`MAX_BINS` bins, the width doubles and pairs of bins merge (still aligned on
    0).  Non-finite margins are left out.
    """

    FINE_BINS = 400
    MAX_BINS = 4000

    def __init__(self):
        self.width: float | None = None
        self.counts: dict[int, int] = {}
        self._pending: list[float] = []   # equal margins seen before any spread

    def add(self, mg: np.ndarray) -> None:
        x = mg[np.isfinite(mg)]
        if not x.size:
            return
        if self.width is None:
            lo, hi = min(float(x.min()), 0.0), max(float(x.max()), 0.0)
            if hi <= lo:
                self._pending.append(float(x.size))   # all 0: counted once a width is set
                return
            self.width = (hi - lo) / self.FINE_BINS
            if self._pending:
                self.counts[0] = int(sum(self._pending))
                self._pending = []
        k = np.floor(x / self.width).astype(np.int64)
        while int(max(k.max(), max(self.counts, default=0))) - int(
                min(k.min(), min(self.counts, default=0))) >= self.MAX_BINS:
            self.width *= 2.0
            k = np.floor_divide(k, 2)
            merged: dict[int, int] = {}
            for b, c in self.counts.items():
                merged[b // 2] = merged.get(b // 2, 0) + c
            self.counts = merged
        bins, got = np.unique(k, return_counts=True)
        for b, c in zip(bins.tolist(), got.tolist(), strict=True):
            self.counts[b] = self.counts.get(b, 0) + c

    @property
    def total(self) -> int:
        return sum(self.counts.values()) + int(sum(self._pending))

    def bins(self) -> tuple[float, np.ndarray, np.ndarray] | None:
        """``(width, k, count)`` of the bins from the lowest to the highest filled one
        (empty ones between included); None while no margin has spread."""
        if self.width is None or not self.counts:
            return None
        k = np.arange(min(self.counts), max(self.counts) + 1)
        return self.width, k, np.array([self.counts.get(int(b), 0) for b in k], dtype=np.int64)


class _Tally:
    """What a Monte Carlo run keeps of one bus's checks while its chunks go by: counts of
    failing and warning boards, of boards a check is absent from (no margin, no failure:
    the board has no such check), boards on which every check passes, each margin's lowest
    and highest finite value with the board it came from, and the margins and values of
    the first ``kept`` boards (the sample of the sensitivity fit)."""

    def __init__(self, names, bb, kept: int):
        items = [c for _, c in bb.checks()]
        self.names = names
        self.meta = [(c.signal, c.id, c.unit) for c in items]
        k = len(items)
        self.kept = kept
        self.margin = [None if c.margin is None else np.empty(kept) for c in items]
        self.value = [None if c.value is None else np.empty(kept) for c in items]
        self.fails = np.zeros(k, dtype=np.int64)
        self.warns = np.zeros(k, dtype=np.int64)
        self.absent = np.zeros(k, dtype=np.int64)
        self.bus_ok = 0
        self.bus_warned = 0     # of those, boards on which some check warns
        self.last_warn = None   # the last chunk's boards on which some check warns
        # per check: lowest and highest finite margin, and the boards they came from
        self.ext = np.full((k, 2), np.nan)
        self.at = np.full((k, 2), -1, dtype=np.int64)
        self.hist = [None if c.margin is None else MarginHistogram() for c in items]

    def add(self, bb, start: int, m: int) -> np.ndarray:
        """Count one chunk of boards ``start .. start + m``; its boards where every check
        passes (those where some check warns: :attr:`last_warn`)."""
        ok = np.ones(m, dtype=bool)
        warn = np.zeros(m, dtype=bool)
        take = max(0, min(m, self.kept - start))
        for j, (_, c) in enumerate(bb.checks()):
            fail = c.status == 2
            ok &= ~fail
            self.fails[j] += int(np.count_nonzero(fail))
            warned = c.status == 1
            warn |= warned
            self.warns[j] += int(np.count_nonzero(warned))
            if take:
                if c.margin is not None:
                    self.margin[j][start:start + take] = c.margin[:take]
                if c.value is not None:
                    self.value[j][start:start + take] = c.value[:take]
            if c.margin is not None:
                mg = np.asarray(c.margin, dtype=float).reshape(m)
                self.absent[j] += int(np.count_nonzero(np.isnan(mg) & (c.status == 0)))
                self._extremes(j, mg, start)
                self.hist[j].add(mg)
        self.bus_ok += int(np.count_nonzero(ok))
        self.bus_warned += int(np.count_nonzero(ok & warn))
        self.last_warn = warn
        return ok

    def _extremes(self, j: int, mg: np.ndarray, start: int) -> None:
        finite = np.isfinite(mg)
        if not finite.any():
            return
        key = np.where(finite, mg, np.inf)
        i = int(np.argmin(key))
        if np.isnan(self.ext[j, 0]) or mg[i] < self.ext[j, 0]:
            self.ext[j, 0], self.at[j, 0] = mg[i], start + i
        key = np.where(finite, mg, -np.inf)
        i = int(np.argmax(key))
        if np.isnan(self.ext[j, 1]) or mg[i] > self.ext[j, 1]:
            self.ext[j, 1], self.at[j, 1] = mg[i], start + i

    def extreme(self, j: int, which: int) -> float | None:
        x = self.ext[j, which]
        return None if np.isnan(x) else float(x)

    def worst_board(self, j: int) -> int | None:
        i = int(self.at[j, 0])
        return None if i < 0 else i
