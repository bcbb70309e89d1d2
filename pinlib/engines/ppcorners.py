"""An SPI bus's checks at many corners of its tolerances, as arrays, equal to the engine
board by board (:func:`corner_rows`, for :func:`pinlib.engines.ppworst.at_worst_corners`
and, through :func:`pinlib.engines.ppbatch.build_rows`, for the corner study
:func:`pinlib.studies.whatif.corners`).

A board of the worst-corner search differs from the next only in its factors, and what
the engine makes of it falls apart along them:

* each routed line's analysis (its checks, and the flights it gives each peripheral's
  budget) depends only on that line's own factors (length, board capacitance) and the
  ones every line shares (the rails, the devices' pin capacitances): it is made once per
  distinct combination of those (the line engine, :meth:`LineInputs.analyse`), not once
  per board;
* the devices' ``supply-range`` checks depend only on the shared factors (the engine's
  :func:`pinlib.engines.ppsupply.supply_checks`, once per combination);
* the timing budget sums flights of several lines: :func:`pinlib.engines.spi.budget_terms`
  takes them as arrays over the boards, each term's available time and margin as the
  engine computes them (elementwise, the same operations in the same order, so the
  same numbers to the last bit), and the bus figures ``max_clock`` and the lowest timing
  margins likewise (:func:`~pinlib.engines.spi.analysis.term_clocks`,
  :func:`~pinlib.engines.spi.evaluate.lowest_margins`);
* the parts' ``f-max`` and ``spi-mode`` checks depend on no toleranced value: the
  nominal board's.

A bus whose nominal result is not laid out that way (a check the budget did not make, a
peripheral whose flights differ in kind between boards) is left to the engine board by
board (:func:`corner_rows` or the evaluator returns None).  GPIO buses are too.
``tests/test_ppcorners.py`` holds the arrays to the engine's boards, and
``tests/test_corners_arrays.py`` the corner study's result to its board-by-board path.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import replace

import numpy as np

from pinlib.engines.ppsupply import supply_checks
from pinlib.engines.ppvariant import (
    check_names,
    chosen_resistors,
    line_variants,
    parameter_specs,
)
from pinlib.engines.ppworst import BoardRows, rank_margin
from pinlib.engines.pushline import EDGE_FRACTION, Flight
from pinlib.engines.spi import budget_terms
from pinlib.engines.spi.analysis import SpiAnalysis, line_flights, line_setup, term_clocks
from pinlib.engines.spi.budget import EDGE_FIELDS, Term
from pinlib.engines.spi.evaluate import MARGIN_FIGURES, lowest_margins, term_check
from pinlib.engines.spi.margins import max_clock
from pinlib.model.design import Bus, Design
from pinlib.model.result import BusResult, LineResult

__all__ = ["corner_rows"]

_FIELDS = ("sclk", "copi", "cs", "cipo")


def corner_rows(bus: Bus, design: Design, nominal: BusResult, *,
                floor: float | None = None
                ) -> Callable[[np.ndarray], BoardRows | None] | None:
    """The evaluator of many corner boards of an SPI bus as arrays.

    Parameters
    ----------
    bus : Bus
        A bus of ``design``. [1]
    design : Design
        The design. [1]
    nominal : BusResult
        The engine's result of the bus as designed (``evaluate_board``), or its result
        at the worst corners (``evaluate_bus``: the same checks by name, the nominal
        board's ``workings`` and, equal at every corner, its ``f-max`` checks). [1]
    floor : float, optional
        The smallest factor ``1 + tolerance·u`` a parameter takes (the what-if studies'
        floor); without it, none. [1]

    Returns
    -------
    callable or None
        ``rows(u)`` for boards ``u`` of shape ``(n, k)`` (each entry the end of a
        parameter of :func:`~pinlib.engines.ppvariant.parameter_specs`, -1, 0 or +1; a
        row all 0 is the nominal board): a :class:`~pinlib.engines.ppworst.BoardRows` in
        the order of
        ``check_names(bus, nominal)``, or None where the boards' results are not laid
        out as the nominal's.  None for a bus it does not serve (not SPI, or a nominal
        result whose bus checks are not the budget's terms, the parts' ``f-max`` and
        ``spi-mode`` and the devices' ``supply-range``, in that order).
    """
    sa = nominal.workings
    if bus.protocol != "spi" or not isinstance(sa, SpiAnalysis) or not bus.clock:
        return None
    n_line = sum(len(ln.checks) for ln in nominal.lines)
    own = [c.id for c in nominal.checks]
    fixed = _fixed_ids(sa)
    n_terms, n_f = len(sa.terms), len(fixed)
    if (own[:n_terms] != [t.id for t in sa.terms]
            or own[n_terms:n_terms + n_f] != fixed
            or any(i != "supply-range" for i in own[n_terms + n_f:])):
        return None
    return _Corners(bus, design, nominal, sa, n_line, floor).rows


def _fixed_ids(sa: SpiAnalysis) -> list[str]:
    """The ids of the bus checks no tolerance moves, in the engine's order: each part's
    ``f-max``, then each ``spi-mode``."""
    return ["f-max"] * len(sa.f_limits) + ["spi-mode"] * len(sa.mode_limits)


class _Corners:
    """What :func:`corner_rows` keeps of the nominal board between calls."""

    def __init__(self, bus: Bus, design: Design, nominal: BusResult, sa: SpiAnalysis,
                 n_line: int, floor: float | None = None):
        self.bus, self.design, self.sa, self.n_line = bus, design, sa, n_line
        self.floor = floor
        self.specs = parameter_specs(bus)
        self.chosen = chosen_resistors(nominal)
        self.index = {nm["name"]: j for j, nm in enumerate(check_names(bus, nominal))}
        n_fixed = len(_fixed_ids(sa))
        self.fixed = {n_line + len(sa.terms) + q: nominal.checks[len(sa.terms) + q]
                      for q in range(n_fixed)}
        self.warn = design.warn_margin
        self.n_supply = len(nominal.checks) - len(sa.terms) - n_fixed

    def _variants(self, u: np.ndarray, sig: str | None):
        """The distinct factors of the boards on one line (``sig``; None: the factors
        every line shares) and each board's index among them."""
        _, buses, inverse = line_variants(self.bus, self.specs, u, sig, self.chosen,
                                          self.floor)
        return buses, inverse

    def rows(self, u: np.ndarray) -> BoardRows | None:
        """The checks of the boards ``u`` (see :func:`corner_rows`)."""
        n, m = len(u), len(self.index)
        rank, present = np.full((n, m), np.inf), np.zeros((n, m), dtype=bool)
        checks: dict = {}   # check index -> its check at board i (a function of i)
        flights: dict = {}
        edges: dict = {}    # signal -> its slowest edge-time value at each board
        for sig in self.sa.lines:
            got = self._line(u, sig, rank, present, checks, edges)
            if got is None:
                return None
            flights[sig] = got
        terms = budget_terms(self.sa.mode, self.sa.controller,
                             self._peripherals(flights), self.sa.t_bridge)
        if [t.id for t in terms] != [t.id for t in self.sa.terms]:
            return None
        clock = float(self.bus.clock)
        j0 = self.n_line
        for q, t in enumerate(terms):
            avail = np.asarray(t.available(1.0 / clock), dtype=float)
            mg = t.check_margin(np.where(np.isfinite(avail), avail, 0.0))
            # no finite available time: the check fails without a margin (rank_margin)
            mg = np.where(np.isfinite(avail) & ~np.isnan(mg), mg, -np.inf)
            rank[:, j0 + q], present[:, j0 + q] = mg, True
            checks[j0 + q] = lambda i, t=t: term_check(_term_at(t, i), clock, self.warn,
                                                       self.sa.mode.mode)
        for j, c in self.fixed.items():
            rank[:, j], present[:, j] = rank_margin(c), True
            checks[j] = lambda i, c=c: c
        if not self._supply(u, rank, present, checks):
            return None
        return BoardRows(rank, present, self._figures(terms, clock, n, edges),
                         lambda i, j: checks[j](i))

    def _line(self, u, sig, rank, present, checks, edges) -> dict | None:
        """One line's checks into ``rank``/``present``, its slowest ``edge-time`` value
        into ``edges`` (the edge rule's term, as :func:`~pinlib.engines.spi.analysis.
        spi_analysis` takes it) and, per peripheral, the flights it gives:
        ``{(peripheral index, field): (early, late, fast_early, fast_late)}``, each of
        shape ``(n,)`` (the fast corner's the slow one's where the driver states none)."""
        buses, inverse = self._variants(u, sig)
        nv = len(buses)
        slowest, timed = np.full(nv, np.nan), np.zeros(nv, dtype=bool)
        cols: dict[int, np.ndarray] = {}
        out: dict = {}
        count: dict = {}   # how many variants give each flight (all, or the bus is not served)
        held: dict = {}    # check index -> its check in each variant
        for v, bus_v in enumerate(buses):
            inputs, controller, peripherals, _, _ = line_setup(bus_v, self.design, sig)
            la = inputs[sig].analyse()
            times = [float(c.value) for c in la.result.checks if c.id == "edge-time"]
            if times:
                slowest[v], timed[v] = max(times), True
            res = BusResult(id=self.bus.id, lines=[LineResult(signal=sig,
                                                              checks=la.result.checks)])
            for nm, c in zip(check_names(self.bus, res), la.result.checks, strict=True):
                j = self.index.get(nm["name"])
                if j is not None:
                    cols.setdefault(j, np.full(nv, np.nan))[v] = rank_margin(c)
                    held.setdefault(j, [None] * nv)[v] = c
            by_ref = {p.ref: p for p in peripherals}
            for i, p0 in enumerate(self.sa.peripherals):
                fl = line_flights(sig, la, controller, by_ref[p0.ref], bus_v)
                pieces = fl.items() if isinstance(fl, dict) else [(None, fl)]
                for edge, f in pieces:
                    if f is None:
                        continue
                    cols4 = out.setdefault((i, edge), tuple(np.full(nv, np.nan)
                                                            for _ in range(4)))
                    fast = f.at_fast()
                    for col, x in zip(cols4, (f.early, f.late, fast.early, fast.late),
                                      strict=True):
                        col[v] = x
                    count[(i, edge)] = count.get((i, edge), 0) + 1
        if any(c != nv for c in count.values()):
            return None
        if self.bus.clock and np.any(timed):
            if not np.all(timed):
                return None   # an edge-time check on some variants only
            edges[sig] = slowest[inverse]
        for j, col in cols.items():
            has = ~np.isnan(col)   # a rank is never NaN (rank_margin): NaN, no such check
            rank[:, j] = np.where(has, col, np.inf)[inverse]
            present[:, j] = has[inverse]
            checks[j] = lambda i, got=held[j]: got[inverse[i]]
        return {k: tuple(col[inverse] for col in cols4) for k, cols4 in out.items()}

    def _peripherals(self, flights: dict) -> list:
        """The nominal peripherals' timing with each board's flights (arrays)."""
        out = []
        for i, p in enumerate(self.sa.peripherals):
            def flight(sig, p=p, i=i):
                got = flights.get(sig)
                if got is None:
                    return getattr(p, sig)
                if sig in EDGE_FIELDS:
                    return {e: Flight(*got[(i, e)]) for e in ("rise", "fall")}
                return Flight(*got[(i, None)]) if (i, None) in got else None
            out.append(replace(p, **{sig: flight(sig) for sig in _FIELDS}))
        return out

    def _supply(self, u, rank, present, checks) -> bool:
        """The devices' ``supply-range`` checks at each board's rails (the engine's own,
        once per distinct set of shared factors); False where their number differs."""
        if not self.n_supply:
            return True
        buses, inverse = self._variants(u, None)
        j0 = len(self.index) - self.n_supply
        table = np.empty((len(buses), self.n_supply))
        held = []
        for v, bus_v in enumerate(buses):
            held.append(supply_checks(bus_v))
            if len(held[v]) != self.n_supply:
                return False
            table[v] = [rank_margin(c) for c in held[v]]
        rank[:, j0:] = table[inverse]
        present[:, j0:] = True
        for q in range(self.n_supply):
            checks[j0 + q] = lambda i, q=q: held[inverse[i]][q]
        return True

    def _figures(self, terms, clock: float, n: int, edges: dict) -> dict:
        """``max_clock``, what sets it, the edge rule's clock and the lowest timing
        margins at each board, NaN for None (as :meth:`SpiAnalysis.clock_limits` and
        :meth:`SpiAnalysis.edge_rule_clock` take them)."""
        rows = [np.broadcast_to(c, (n,)) for c in term_clocks(terms)] if terms else []
        names = [f"{t.id} {t.subject}" for t in terms]
        for ref, f, _ in self.sa.f_limits:
            rows.append(np.full(n, f))
            names.append(f"f_max {ref}")
        if rows:
            table = np.stack(rows)
            first = np.argmin(table, axis=0)   # the first lowest: the engine's stable sort
            f_top = table[first, np.arange(n)]
            by = np.array([names[i] for i in first], dtype=object)
        else:
            f_top, by = np.full(n, np.inf), np.full(n, "nothing", dtype=object)
        figs = {"max_clock": np.where(f_top > 0, f_top, np.nan), "max_clock_limited_by": by}
        f_edge = np.full(n, np.inf)
        for e in edges.values():
            k = np.where(np.isfinite(e), e, np.inf)[:, None]
            f_edge = np.minimum(f_edge, max_clock(np.full((n, 1), EDGE_FRACTION), k))
        figs["max_clock_edge_rule"] = f_edge
        low = lowest_margins(terms, clock)
        for fig, tid in MARGIN_FIGURES:
            figs[fig] = np.broadcast_to(low.get(tid, np.nan), (n,))
        return figs


def _term_at(t: Term, i: int) -> Term:
    """One board's term of a budget over arrays of boards: its own numbers (floats)."""
    def at(x):
        return float(x[i]) if isinstance(x, np.ndarray) else x
    return replace(t, b=at(t.b), parts={k: at(x) for k, x in t.parts.items()})
