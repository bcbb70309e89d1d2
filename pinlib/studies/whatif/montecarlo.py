"""The Monte Carlo run: boards drawn within the design's tolerances in fixed chunks from
one stream, each chunk evaluated and counted, then the checks and yields assembled."""

from __future__ import annotations

import numpy as np

from pinlib.core import messages as M
from pinlib.core import worklimits
from pinlib.core.errors import InputError
from pinlib.core.progress import progress_bar
from pinlib.core.protocols import PUSH_PULL_PROTOCOLS
from pinlib.engines import ppbatch as ppb
from pinlib.engines import pptable
from pinlib.engines.opendrain import batch as ob
from pinlib.model.design import Design
from pinlib.model.result import held_on_value, why_warns
from pinlib.studies.whatif.checknames import _names, _not_sampled
from pinlib.studies.whatif.couplingmc import CouplingRun, coupling_parameters
from pinlib.studies.whatif.mcresult import McCheck, McResult
from pinlib.studies.whatif.sensitivity import _sensitivities
from pinlib.studies.whatif.tally import _Tally
from pinlib.studies.whatif.tolerances import _FLOOR, Sampled, _collected, _nominal, draw, parameters
from pinlib.studies.whatif.yields import Yield

#: Samples evaluated per numpy pass (fixed, so that a seeded run does not depend on
#: whether a progress bar is shown; board i's draws do not depend on it either).  Smaller
#: passes keep the arrays of a pass nearer the processor: measured 2026-12-03 on a
#: two-CPU Intel Xeon, medians of three runs, 25,000 -> 5,000 boards a pass took the
#: demo's open-drain buses from 63,000 to 84,000 boards/s, its flash bus from 105,000 to
#: 130,000 and the whole demo from 28,000 to 34,000 (1,000 a pass: 57,000, the Python of
#: each pass then showing).  Once the open-drain checks' cells were laid out with the
#: variants last (``engines/opendrain/batchresult.py``) those buses ran at 107,000
#: boards/s with either size, and the flash bus still at 131,000 against 104,000.
CHUNK = 5_000

#: A run draws at most this many boards (:mod:`pinlib.core.worklimits` says why).
MAX_BOARDS = worklimits.MAX_BOARDS

#: Sensitivities are fitted on at most this many boards (the first drawn): the standard
#: error of a standardized coefficient is then about 1/sqrt(100,000) = 0.003, far below
#: SENSITIVITY_FLOOR, and a run of millions of boards does not fit them on all.  The
#: draws, margins and values of these first boards are all a run keeps of each board
#: (:attr:`McResult.draws`, :attr:`McCheck.margins`); the counts cover every board.
SENSITIVITY_BOARDS = 100_000


def monte_carlo(design: Design, n: int, *, seed: int | None = None, progress=None,
                chunk: int = CHUNK, results: dict | None = None,
                couplings: list | None = None) -> McResult:
    """Draw ``n`` boards within the design's tolerances and check each.

    Parameters
    ----------
    design : Design
        A loaded design. [1]
    n : int
        Boards to draw, at least 1. [1]
    seed : int, optional
        Seed of the random generator; the same seed gives the same boards.  Without
        one a fresh seed is drawn and reported, so the run can be repeated. [1]
    progress : bool, callable or None, optional
        Progress bar (see :func:`pinlib.core.progress.progress_bar`). [1]
    chunk : int, optional
        Boards per numpy pass. [1]
    results : dict, optional
        The engine's result of each bus by id, when the caller has it (the buses of
        :func:`pinlib.engines.dispatch.check_design`); else each bus is evaluated
        here. [1]
    couplings : list, optional
        The engine's coupling results, with ``results`` (the couplings of the same
        check); else each coupling is evaluated here. [1]

    Returns
    -------
    McResult
        Per check: the pass fraction with its Wilson interval, the margins, and the
        parameters the margin is most sensitive to (standardized regression
        coefficients of the margin on the parameters); per bus and for all sampled
        buses together: the fraction of boards on which every check passes.

    Notes
    -----
    A check passes on a board when its margin is not negative (a warning passes).
    Each parameter is ``nominal·(1 + tolerance·u)`` with ``u`` uniform on [−1, 1], or
    normal with σ = 1/3 when ``design.distribution == "normal"`` (then clipped so that
    no value goes to zero or below).
    """
    n = _checked_size(n, chunk)
    nominal = _nominal(design) if results is None else results
    collected = _collected(design)
    params = parameters(design, collected=collected)
    ss = np.random.SeedSequence(seed)
    rng = np.random.default_rng(ss)
    kept = min(n, SENSITIVITY_BOARDS)       # boards whose draws and margins are kept
    u_kept = np.empty((kept, len(params)))
    run = _Run(design, nominal, collected, params, kept, progress)
    run.prepare_tables(n)
    # the couplings' spacings and lengths: a stream of their own
    cparams = coupling_parameters(design)
    crun = CouplingRun(design, nominal, cparams, kept, run.span, couplings)
    rng_c = np.random.default_rng(ss.spawn(1)[0])
    uc_kept = np.empty((kept, len(cparams)))
    bar = progress_bar(n, desc="Monte Carlo", unit="board", enabled=progress)
    with bar:
        for start in range(0, n, chunk):
            m = min(chunk, n - start)
            # one stream for the run, drawn in board order: board i's draws do not
            # depend on the chunk size
            u = draw(rng, m, len(params), design.distribution)
            if start < kept:
                u_kept[start:start + m] = u[:kept - start]
            run.add_chunk(u, start, m)
            if crun.couplings:
                uc = draw(rng_c, m, len(cparams), design.distribution)
                if start < kept:
                    uc_kept[start:start + m] = uc[:kept - start]
                run.add_coupling_chunk(crun, uc, start, m)
            del u
            bar.update(m)
    checks, buses = _checks_and_yields(run, u_kept, n)
    for c in crun.couplings:
        st = crun.stores.get(c.id)
        if st is not None:
            fits = _sensitivities(uc_kept, st.margin, cparams)
            checks += _bus_checks(c.id, st, fits, n, kept)
            buses[c.id] = Yield.of(st.bus_ok, n, st.bus_warned)
    stored = run.stores or crun.stores
    board = Yield.of(run.board_ok, n, run.board_warned) if stored else None
    return McResult(design.title, n, int(ss.entropy), design.distribution, params + cparams,
                    checks, buses, board, np.hstack([u_kept, uc_kept]), _run_notes(run, n))


def _checked_size(n, chunk: int) -> int:
    """The number of boards as an int, refused below 1 or above :data:`MAX_BOARDS`; a
    chunk below 1 refused."""
    n = int(n)
    if n < 1:
        raise InputError(M.TOO_FEW_SAMPLES, field="--monte-carlo", value=n, expected="at least 1")
    if n > MAX_BOARDS:
        raise InputError(M.TOO_MANY_SAMPLES, field="--monte-carlo", value=f"{n:,} boards",
                         expected=f"at most {MAX_BOARDS:,} boards",
                         hint="split the run over several seeds and add the counts")
    if chunk < 1:
        raise InputError(M.CHUNK_NOT_POSITIVE, field="chunk", value=chunk)
    return n


class _Run:
    """What a Monte Carlo run carries from chunk to chunk: each bus's tally, the boards on
    which every sampled bus passes, the push-pull tables with their notes and the boards
    the engine evaluated."""

    def __init__(self, design: Design, nominal: dict, collected: dict, params: list,
                 kept: int, progress):
        self.design, self.nominal, self.collected = design, nominal, collected
        self.params, self.kept = params, kept
        self.stores: dict[str, _Tally] = {}
        self.board_ok = 0
        self.board_warned = 0  # of those, boards on which some check warns
        # Push-pull buses: one table per bus for the whole run (pinlib.engines.pptable); a
        # normal draw is covered to 4σ (4/3 of the tolerance), boards beyond by the engine.
        self.tables: dict = {}
        self.span = 4.0 / 3.0 if design.distribution == "normal" else 1.0
        self.pp_notes: list[str] = []
        self.engine_boards: dict[str, int] = {}
        self.engine_why: dict[str, dict] = {}  # beside a table: by reason (ppbatch.WHY)
        # the tables get a bar of their own; a caller's callback follows the boards only
        self.table_progress = False if callable(progress) and not isinstance(progress, bool) \
            else progress

    def prepare_tables(self, n: int) -> None:
        """Build the table of each push-pull bus that pays for ``n`` boards."""
        for bus in self.design.buses:
            if bus.protocol in PUSH_PULL_PROTOCOLS:
                # whether a table pays is decided once, for all n boards (not per chunk)
                ppb.prepare_table(bus, self.design, self.nominal[bus.id], self.tables,
                                  self.span, _FLOOR, n, progress=self.table_progress)

    def add_chunk(self, u: np.ndarray, start: int, m: int) -> None:
        """Evaluate and count the boards ``start .. start + m``, drawn as ``u``."""
        scen = Sampled(u, self.params)
        chunk_ok = chunk_warn = None
        for bus in self.design.buses:
            bb = self._batch(bus, scen, m)
            if bb is None:
                continue
            st = self.stores.get(bus.id)
            if st is None:
                st = self.stores[bus.id] = _Tally(_names(bus, bb, self.nominal[bus.id]), bb,
                                                  self.kept)
            ok = st.add(bb, start, m)
            chunk_ok = ok if chunk_ok is None else chunk_ok & ok
            chunk_warn = st.last_warn if chunk_warn is None else chunk_warn | st.last_warn
            del bb
        if chunk_ok is not None:
            self.board_ok += int(np.count_nonzero(chunk_ok))
            self.board_warned += int(np.count_nonzero(chunk_ok & chunk_warn))
        self._last_ok, self._last_warn = chunk_ok, chunk_warn

    def add_coupling_chunk(self, crun: CouplingRun, uc: np.ndarray, start: int,
                           m: int) -> None:
        """Count the couplings of a chunk already counted for its buses: a board passes
        only where its buses and its couplings do."""
        ok = crun.add_chunk(uc, start, m)
        if ok is None:
            return
        warn = crun.last_warn
        if self.stores:  # count the chunk's boards again with their couplings
            self.board_ok -= int(np.count_nonzero(self._last_ok))
            self.board_warned -= int(np.count_nonzero(self._last_ok & self._last_warn))
            ok, warn = ok & self._last_ok, warn | self._last_warn
        self.board_ok += int(np.count_nonzero(ok))
        self.board_warned += int(np.count_nonzero(ok & warn))

    def _batch(self, bus, scen: Sampled, m: int):
        """One chunk of a bus evaluated as a batch; None for a bus the run does not sample."""
        if bus.protocol in PUSH_PULL_PROTOCOLS:
            bb = ppb.build(bus, self.design, scen.factors(bus), m, nominal=self.nominal[bus.id],
                           tables=self.tables, span=self.span, floor=_FLOOR,
                           progress=self.table_progress)
            for note in bb.notes:
                if note not in self.pp_notes:
                    self.pp_notes.append(note)
            self.engine_boards[bus.id] = self.engine_boards.get(bus.id, 0) + bb.engine_boards
            why = self.engine_why.setdefault(bus.id, {})
            for k, count in bb.engine_why.items():
                why[k] = why.get(k, 0) + count
            return bb
        if bus.id in self.collected:
            return ob.build(bus, self.design, scen, collected=self.collected[bus.id])
        return None


def _checks_and_yields(run: _Run, u_kept: np.ndarray, n: int) -> tuple[list, dict]:
    """Every sampled check of the run, with its sensitivities, and each bus's yield."""
    checks, buses = [], {}
    for bus in run.design.buses:
        st = run.stores.get(bus.id)
        if st is None:
            continue
        fits = _sensitivities(u_kept, st.margin, run.params)
        checks += _bus_checks(bus.id, st, fits, n, run.kept)
        buses[bus.id] = Yield.of(st.bus_ok, n, st.bus_warned)
    return checks, buses


def _bus_checks(bus_id: str, st: _Tally, fits: list, n: int, kept: int) -> list[McCheck]:
    """The checks of one bus over the ``n`` boards, from its tally and fits."""
    checks = []
    for j, (name, (signal, cid, unit), mg, val, (sens, r2)) in enumerate(zip(
            st.names, st.meta, st.margin, st.value, fits, strict=True)):
        passes = int(n - st.fails[j])
        ec = name["engine"]
        checks.append(McCheck(
            name["name"], bus_id, name["segment"], signal, cid, unit,
            ec.source if ec is not None else "", ec.status if ec is not None else None,
            ec.margin if ec is not None else None,
            Yield.of(passes, n, int(st.warns[j])), mg, val, sens, r2,
            warns=int(st.warns[j]), fails=int(st.fails[j]), absent=int(st.absent[j]),
            margin_unit=ec.margin_unit if ec is not None else None,
            low=st.extreme(j, 0), high=st.extreme(j, 1), worst_board=st.worst_board(j),
            sampled=kept, histogram=st.hist[j],
            warns_only=why_warns(ec) if ec is not None else None,
            on_value=ec is not None and held_on_value(ec.details)))
    return checks


def _run_notes(run: _Run, n: int) -> list[str]:
    """The notes of a run: buses not sampled, the push-pull tables' notes, boards the
    engine evaluated, normal draws, and the boards the sensitivities come from."""
    design = run.design
    notes = _not_sampled(design) + run.pp_notes
    for bus_id, k in run.engine_boards.items():
        if k and isinstance(run.tables.get(bus_id), pptable.LineTable):
            notes.append(ppb.engine_note(bus_id, run.engine_why.get(bus_id, {})))
    if design.distribution == "normal":
        notes.append("normal draws: each tolerance is 3σ (a value may lie beyond it)")
    if n > SENSITIVITY_BOARDS and run.stores:
        notes.append(f"sensitivities, margin quantiles and histograms from the first "
                     f"{SENSITIVITY_BOARDS:,} boards; pass counts and lowest margins from all")
    return notes
