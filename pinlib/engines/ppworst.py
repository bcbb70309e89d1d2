"""A push-pull bus (SPI, GPIO) at its worst-case corners.

The engine's result of a push-pull bus holds every check at its worst corner over the
bus's tolerances (``supply_tolerance``, ``length_tolerance``, ``capacitance_tolerance``
of the bus, ``capacitance_tolerance`` of its devices; see
:func:`pinlib.engines.ppvariant.parameter_specs`), as the open-drain engine holds its
checks at the worst rail and pull-up corners.  A line whose series resistor is "auto"
keeps the value chosen on the nominal board at every corner (a built board carries the
resistor the design chose).

Which corners are evaluated (:func:`search`):

* up to :data:`EXHAUSTIVE_LIMIT` parameters, every vertex of the tolerance box;
* above it, the nominal board and each parameter alone at both ends; then, per check,
  the vertex with every parameter at the end that lowered that check's margin when moved
  alone (a check's margin moves one way with each of a line's length, capacitance and
  rail in practice); each check takes the worst of all the boards evaluated.

:func:`pinlib.studies.whatif.corners` uses the same search on push-pull buses, so the
corner it lists for a check and the check's status in the result agree.
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Callable
from dataclasses import replace
from typing import NamedTuple

import numpy as np

from pinlib.core.labels import plural_s
from pinlib.engines.memo import run_scope
from pinlib.engines.ppvariant import (
    check_names,
    chosen_resistors,
    flat_checks,
    parameter_specs,
    vary_bus,
)
from pinlib.model.design import Bus, Design
from pinlib.model.result import BusResult

__all__ = ["EXHAUSTIVE_LIMIT", "search", "first_boards", "rank_margin", "at_worst_corners",
           "method_text", "BoardRows"]

#: Every vertex of the tolerance box is evaluated up to this many parameters (2**6 = 64
#: evaluations, most of whose waveforms the run memo shares); above it, the screened
#: search of :func:`search`.
EXHAUSTIVE_LIMIT = 6

#: Bus figures taken at their worst over the corners: the smallest is the worst.
_LOWEST_FIGURES = ("max_clock", "max_clock_edge_rule", "cipo_setup_margin",
                   "copi_setup_margin", "copi_hold_margin")
#: Bus figures taken from the board where another is lowest: what sets ``max_clock``.
_FOLLOWING_FIGURES = {"max_clock_limited_by": "max_clock"}


def rank_margin(check) -> float:
    """The margin a check is ranked by across corners: its margin, ``-inf`` for a
    failing check without a finite one (a yes/no check that fails, a NaN margin) and for
    one without a value that does not pass (no time at all, a warning where its limit
    is soft: :func:`pinlib.model.result.soften`), 0 for a passing yes/no check. [1]"""
    m = check.margin
    if m is None or isinstance(m, bool):
        beyond = check.status == "fail" or (check.value is None and check.status != "pass")
        return -math.inf if beyond else 0.0
    m = float(m)
    return -math.inf if math.isnan(m) else m


def search(k: int, margins: Callable[[np.ndarray], np.ndarray],
           limit: int = EXHAUSTIVE_LIMIT) -> np.ndarray:
    """The worst board of each check over a tolerance box of ``k`` parameters.

    Parameters
    ----------
    k : int
        Toleranced parameters. [1]
    margins : callable
        ``margins(u)`` for boards ``u`` of shape ``(n, k)`` (each entry -1, 0 or +1:
        the end of each parameter, 0 nominal) returns the ranked margins of the ``m``
        checks, shape ``(n, m)`` (NaN counted as the worst). [1]
    limit : int, optional
        Every vertex up to this many parameters. [1]

    Returns
    -------
    numpy.ndarray
        Shape ``(m, k)``: the board at which each check's margin is lowest. [1]
    """
    pts = first_boards(k, limit)
    if k <= limit:
        mg = _nan_low(margins(pts))
        return pts[np.argmin(mg, axis=0)]
    mg = _nan_low(margins(pts))                                   # (2k+1, m)
    lower = mg[1::2] < mg[2::2]                                   # (k, m): the -1 end hurts
    combined = np.where(lower.T, -1.0, 1.0)                       # (m, k)
    uniq, inverse = np.unique(combined, axis=0, return_inverse=True)
    mg_c = _nan_low(margins(uniq))                                # (u, m)
    m = mg.shape[1]
    at_c = mg_c[np.asarray(inverse).reshape(-1), np.arange(m)]    # each check at its own
    best = np.argmin(mg, axis=0)
    take = at_c < mg[best, np.arange(m)]
    return np.where(take[:, None], combined, pts[best])


def first_boards(k: int, limit: int = EXHAUSTIVE_LIMIT) -> np.ndarray:
    """The boards :func:`search` evaluates first, shape ``(n, k)``: every vertex up to
    ``limit`` parameters (all it evaluates), else the nominal board and each parameter
    alone at both ends (the screening its combined corners follow from). [1]"""
    if k <= limit:
        return (np.array(list(itertools.product((-1.0, 1.0), repeat=k))) if k
                else np.zeros((1, 0)))
    pts = np.zeros((2 * k + 1, k))
    for i in range(k):
        pts[1 + 2 * i, i], pts[2 + 2 * i, i] = -1.0, 1.0
    return pts


def _nan_low(mg: np.ndarray) -> np.ndarray:
    return np.where(np.isnan(mg), -np.inf, mg)


def method_text(k: int, limit: int = EXHAUSTIVE_LIMIT) -> str:
    """How :func:`search` covers ``k`` parameters, for a note."""
    if k == 0:
        return "no toleranced parameter"
    if k <= limit:
        return f"all {2 ** k} corners of {k} parameter{plural_s(k)}"
    return (f"{k} parameters: each alone at both ends, then for each check every parameter "
            "at the end that lowered its margin")


class BoardRows(NamedTuple):
    """The nominal board's checks at many boards (a corner evaluation over arrays,
    :mod:`pinlib.engines.ppcorners`, that equals the engine board by board).

    Attributes
    ----------
    rank : numpy.ndarray
        Shape ``(n, m)``: each check's :func:`rank_margin` at each board, ``+inf`` where
        the board lacks the check. [1]
    present : numpy.ndarray
        Shape ``(n, m)``: whether the board has the check (bool). [1]
    figures : dict
        Each of the bus figures taken at their lowest over the corners, shape ``(n,)``,
        NaN where the board has none (None in its result), and what sets ``max_clock``
        (``max_clock_limited_by``, text). [1]
    check : callable
        ``check(i, j)``: the engine's check ``j`` at board ``i`` (for the boards whose
        checks the result takes). [1]
    """

    rank: np.ndarray
    present: np.ndarray
    figures: dict
    check: Callable[[int, int], object]


def at_worst_corners(bus: Bus, design: Design, nominal: BusResult,
                     evaluate: Callable[[Bus, Design], BusResult],
                     boards: Callable[[np.ndarray], BoardRows | None] | None = None
                     ) -> BusResult:
    """``nominal`` with every check taken at its worst corner.

    Parameters
    ----------
    bus : Bus
        An ``spi`` or ``gpio`` bus of ``design``. [1]
    design : Design
        The design. [1]
    nominal : BusResult
        ``evaluate(bus, design)``: the bus as designed. [1]
    evaluate : callable
        The engine at one board (no corners). [1]
    boards : callable, optional
        ``boards(u)``: the checks of the boards ``u`` (shape ``(n, k)``, none nominal)
        as :class:`BoardRows`, equal to ``evaluate`` board by board, or None where it
        cannot stand in for it; the engine then evaluates each board.  Either way the
        engine evaluates in full only the boards whose checks the result takes. [1]

    Returns
    -------
    BusResult
        The nominal result when nothing is toleranced; else a copy whose checks are the
        worst corner's (each check's message names its corner, ``details["corner"]``
        lists it), whose bus figures ``max_clock``, ``max_clock_edge_rule`` and the
        timing margins are the lowest over the boards evaluated and the nominal one
        (``max_clock_limited_by`` the board's where ``max_clock`` is lowest, and the
        notes of the two clocks giving the corner's number beside the nominal one's
        where a corner lowers them), and whose notes say which corners were evaluated.
        Line figures stay those of the nominal board.
    """
    specs = parameter_specs(bus)
    if not specs:
        return nominal
    chosen = chosen_resistors(nominal)
    index = {nm["name"]: j for j, nm in enumerate(check_names(bus, nominal))}
    # each board's (rank, present, figures, its check j)
    seen: dict[tuple, tuple] = {}

    def by_engine(key: tuple) -> None:
        if not any(key):
            res = nominal
        else:
            f = {s[-1]: 1.0 + s[3] * x for s, x in zip(specs, key, strict=True)}
            res = evaluate(vary_bus(bus, f.get, chosen), design)
        seen[key] = _row_of(_by_index(bus, res, index), res, len(index))

    def margins(u: np.ndarray) -> np.ndarray:
        keys = [tuple(float(x) for x in row) for row in u]
        new = [key for key in dict.fromkeys(keys) if key not in seen and any(key)]
        got = boards(np.array(new)) if boards is not None and new else None
        for i, key in enumerate(new if got is not None else ()):
            seen[key] = (got.rank[i], got.present[i],
                         {f: _figure_at(v, i) for f, v in got.figures.items()},
                         lambda j, i=i, got=got: got.check(i, j))
        for key in keys:
            if key not in seen:
                by_engine(key)
        return np.stack([seen[key][0] for key in keys])

    with run_scope():
        worst = search(len(specs), margins)
        return _assemble(bus, nominal, specs, worst, seen)


def _figure_at(v: np.ndarray, i: int):
    """A figure of :class:`BoardRows` at board ``i``: a float, None for NaN, or a text
    (what sets the clock)."""
    x = v[i]
    if isinstance(x, str):
        return x
    return None if math.isnan(x) else float(x)


def _row_of(checks: dict[int, object], res: BusResult, m: int) -> tuple:
    """One board's (rank, present, figures, its check j) from its result (``checks``:
    by index)."""
    rank, present = np.full(m, np.inf), np.zeros(m, dtype=bool)
    for j, c in checks.items():
        rank[j], present[j] = rank_margin(c), True
    figs = {f: res.figures[f].value for f in (*_LOWEST_FIGURES, *_FOLLOWING_FIGURES)
            if f in res.figures}
    return rank, present, figs, checks.__getitem__


def _by_index(bus: Bus, res: BusResult, index: dict[str, int]) -> dict[int, object]:
    """The checks of one board's result by the index of their name among the nominal
    board's checks (a check the nominal board does not have is left out)."""
    out = {}
    for nm, (_, c) in zip(check_names(bus, res), flat_checks(res), strict=True):
        j = index.get(nm["name"])
        if j is not None:
            out[j] = c
    return out


def _corner_text(specs, u, moves=None) -> str:
    """The corner ``u`` for people: each parameter off nominal, but those that
    ``moves(i)`` says leave the check where it is."""
    parts = []
    for i, (s, x) in enumerate(zip(specs, u, strict=True)):
        if x and (moves is None or moves(i)):
            sign = "+" if x > 0 else "−"
            parts.append(f"{s[0]} {sign}{s[3] * 100:.3g} %")
    return ", ".join(parts) if parts else "nominal"


def _assemble(bus, nominal, specs, worst, seen) -> BusResult:
    """The worst-case result: each check from its worst board (``seen``: each board's
    ranked margins and checks, :func:`_row_of`)."""
    names = check_names(bus, nominal)

    def worst_check(j, c):
        key = tuple(float(x) for x in worst[j])
        rank, present, _, check = seen[key]
        if not any(key) or not present[j] or rank[j] >= rank_margin(c):
            return c  # no corner is worse than the board as designed
        w, b = check(j), rank[j]

        def moves(i):  # flipping parameter i changes the check (unknown: say it does)
            flipped = key[:i] + (-key[i],) + key[i + 1:]
            if flipped not in seen or not seen[flipped][1][j]:
                return True
            a = seen[flipped][0][j]
            return not (a == b or abs(a - b) <= 1e-12 * max(1.0, abs(b)))

        text = _corner_text(specs, key, moves)
        if text == "nominal":  # worse than nominal, and alike at both ends of each
            text = _corner_text(specs, key)  # parameter: the board it was found on
        return replace(w, message=f"{w.message} (worst corner: {text})",
                       details={**w.details, "corner": text})

    out = replace(nominal, checks=[], lines=[], figures=dict(nominal.figures),
                  notes=list(nominal.notes))
    j = 0
    for ln in nominal.lines:
        checks = []
        for c in ln.checks:
            checks.append(worst_check(j, c))
            j += 1
        out.lines.append(replace(ln, checks=checks))
    for c in nominal.checks:
        out.checks.append(worst_check(j, c))
        j += 1
    if j != len(names):  # the walk above must be flat_checks', whose order the rows follow
        raise RuntimeError(
            f"push-pull worst case of bus {bus.id!r}: {j} checks assembled against "
            f"{len(names)} named ({', '.join(nm['name'] for nm in names)})")
    lowest_at: dict[str, tuple] = {}   # figure -> the board it is lowest on
    # the board as designed is among the boards, as it is for the checks (a search of
    # vertices alone does not evaluate it, and a figure need not be monotonic)
    zero = (0.0,) * len(specs)
    boards = {zero: {f: nominal.figures[f].value
                     for f in (*_LOWEST_FIGURES, *_FOLLOWING_FIGURES) if f in nominal.figures},
              **{key: row[2] for key, row in seen.items()}}
    for fig in _LOWEST_FIGURES:
        if fig in out.figures and out.figures[fig].value is not None:
            vals = [(key, figs[fig]) for key, figs in boards.items() if fig in figs]
            # a board where it does not exist (a receiver that never switches) is the worst
            low = None
            if all(v is not None for _, v in vals):
                # the lowest; of boards alike, the nominal, then the first in corner order
                key, low = min(vals, key=lambda kv: (float(kv[1]), any(kv[0]), kv[0]))
                low = float(low)
                lowest_at[fig] = key
            out.figures[fig] = replace(out.figures[fig], value=low, reason=None if low is not None
                                       else "none at a corner of the tolerances (see the "
                                            "checks there)")
            if low is None:
                out.notes.append(f"{fig}: none at a corner of the tolerances (see the "
                                 "checks there)")
    for fig, by in _FOLLOWING_FIGURES.items():
        if fig in out.figures and by in lowest_at and fig in boards[lowest_at[by]]:
            out.figures[fig] = replace(out.figures[fig], value=boards[lowest_at[by]][fig])
    _clock_notes(nominal, out)
    auto = any(ln.series_resistor == "auto" for ln in bus.lines.values())
    out.notes.append(f"checks at their worst corner: {method_text(len(specs))}, "
                     f"{len(seen)} boards evaluated"
                     + (" (an \"auto\" series resistor kept at its nominal choice)" if auto
                        else "") + "; line figures are the nominal board's")
    return out


def _clock_notes(nominal: BusResult, out: BusResult) -> None:
    """The notes of an SPI bus's ``max_clock`` and ``max_clock_edge_rule`` where a corner
    lowers them: the figure's number (the lowest over the boards), what sets it there,
    and the board as designed's beside it, in place of the nominal note."""
    from pinlib.core.quantity import format_si
    from pinlib.engines.spi.analysis import SpiAnalysis
    from pinlib.engines.spi.evaluate import (
        clock_note,
        clock_note_at_corner,
        edge_rule_note,
        edge_rule_note_at_corner,
    )

    sa = nominal.workings
    if not isinstance(sa, SpiAnalysis):
        return

    def lowered(fig, same=True):
        """(nominal, lowest) where a corner lowers the figure as written (3 figures), or
        sets it by something else (``same`` False); else None."""
        a, b = nominal.figures.get(fig), out.figures.get(fig)
        if a is None or b is None or a.value is None or b.value is None:
            return None
        a, b = float(a.value), float(b.value)
        moved = b < a and format_si(b, "Hz") != format_si(a, "Hz")
        return (a, b) if math.isfinite(a) and (moved or not same) else None

    def swap(old, new):
        if old in out.notes:
            out.notes[out.notes.index(old)] = new

    by_nom = nominal.figures.get("max_clock_limited_by")
    by = out.figures.get("max_clock_limited_by")
    by_nom, by = (by_nom.value if by_nom else None), (by.value if by else None)
    got = lowered("max_clock", same=by == by_nom)
    if got is not None:
        f_nom, f_low = got
        swap(clock_note(sa, f_nom, by_nom), clock_note_at_corner(sa, f_low, by, f_nom, by_nom))
    got = lowered("max_clock_edge_rule")
    if got is not None:
        sig = sa.edge_rule_clock()[1]
        swap(edge_rule_note(sa, got[0], sig), edge_rule_note_at_corner(sa, got[1], got[0], sig))
