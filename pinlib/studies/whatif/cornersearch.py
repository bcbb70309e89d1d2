"""The worst corner of each check: every toleranced parameter at one end or the other
(every vertex for few parameters, else a screen and single flips; the push-pull
engine's own search for a push-pull bus), and the parameters that set it."""

from __future__ import annotations

import itertools
import math
from dataclasses import field

import numpy as np

from pinlib.core import messages as M
from pinlib.core.labels import plural_s, sampled_check_label
from pinlib.core.progress import progress_bar
from pinlib.core.protocols import PUSH_PULL_PROTOCOLS
from pinlib.core.valueclass import value_class
from pinlib.core.wrapping import NBSP
from pinlib.engines import ppbatch as ppb
from pinlib.engines import ppworst as ppw
from pinlib.engines.memo import run_scope
from pinlib.engines.opendrain import batch as ob
from pinlib.engines.ppcorners import corner_rows
from pinlib.model.design import Design
from pinlib.model.result import STATUSES, json_number, margin_order
from pinlib.studies.whatif.checknames import _names, _not_sampled
from pinlib.studies.whatif.mcresult import _fmt_margin, find_check
from pinlib.studies.whatif.tolerances import (
    _FLOOR,
    Parameter,
    Sampled,
    _collected,
    _nominal,
    parameters,
)

#: Up to this many parameters on a bus, corners tries every vertex (2**k).
EXHAUSTIVE_LIMIT = 12


@value_class
class CornerCheck:
    """The worst corner of one check.

    Attributes
    ----------
    name : str
        As :attr:`McCheck.name`. [1]
    margin, value, limit : float or None
        At the worst corner. [1], [unit], [unit]
    status : str
        At the worst corner. [1]
    corner : list of (str, str, float)
        The parameters that set it: name, end (``"+"`` or ``"−"``) and the margin the
        check would gain with that parameter at its other end (largest first).  A
        parameter that moves nothing is left out. [1]
    margin_unit : str or None
        As :attr:`McCheck.margin_unit`. [1]
    """

    name: str
    bus: str
    segment: str
    signal: str | None
    id: str
    unit: str
    source: str
    margin: float | None
    value: float | None
    limit: float | None
    status: str
    corner: list
    nominal_status: str | None = None
    nominal_margin: float | None = None
    margin_unit: str | None = None
    #: The element the worst corner's value is of, where the check compares several
    #: (a device's supply range, an input's voltage, a driver's low level) and its
    #: name does not already say. [1]
    subject: str | None = None

    @property
    def label(self) -> str:
        """:attr:`name` for people: its check id as its label (``flash CIPO setup U7``),
        and the element its worst corner is of (``sensors/main-3v3 Supply range U4``)."""
        label = sampled_check_label(self.name, self.id)
        return f"{label} {self.subject}" if self.subject else label

    def to_json(self) -> dict:
        return {"name": self.name, "bus": self.bus, "segment": self.segment,
                "signal": self.signal, "id": self.id, "unit": self.unit, "source": self.source,
                "status": self.status, "margin": json_number(self.margin),
                "margin_unit": self.margin_unit,
                "value": json_number(self.value), "limit": json_number(self.limit),
                "corner": [{"parameter": n, "end": e, "gain": json_number(g)} for n, e, g in
                           self.corner],
                "worst_case_status": self.nominal_status,
                "worst_case_margin": json_number(self.nominal_margin),
                "subject": self.subject}


@value_class
class CornersResult:
    design: str
    checks: list[CornerCheck]
    methods: dict[str, str]
    parameters: dict[str, list[Parameter]]
    notes: list[str] = field(default_factory=list)

    def find(self, bus: str, check_id: str, signal: str | None = None,
             segment: str | None = None) -> CornerCheck:
        return find_check(self.checks, bus, check_id, signal, segment)

    def to_json(self) -> dict:
        return {"format": "pinlib.corners/1", "design": self.design,
                "methods": dict(self.methods),
                "parameters": {b: [p.to_json() for p in ps] for b, ps in self.parameters.items()},
                "checks": [c.to_json() for c in self.checks], "notes": list(self.notes)}

    def format_text(self, limit: int | None = 12) -> str:
        """The corners for people: the ``limit`` worst checks (None for all): failing, then
        warning, then passing, each by its lowest margin."""
        lines = ["Corners: every toleranced parameter at one end or the other; the worst corner "
                 "of each check and the parameters that set it"]
        for bus, method in self.methods.items():
            lines.append(f"  bus {bus}: {method}")
        rows = [c for c in self.checks if c.corner]
        # the worst status first: a margin in a unit sorts after every fraction, and a
        # failing slack in seconds must not fall among the "more" below passing rows
        rows.sort(key=lambda c: (-(STATUSES.index(c.status) if c.status in STATUSES else 0),
                                 *margin_order(c.margin, c.margin_unit, -math.inf)))
        shown = rows[:limit] if limit else rows
        if shown:
            lines.append("  checks at their worst corners, failing and warning first, then "
                         "by the lowest margin:")
            w = max(len(c.label) for c in shown)
            for c in shown:
                # a parameter and its end, and "at" with the first, wrap as one word
                corner = ", ".join(f"{n} {e}".replace(" ", NBSP) for n, e, _ in c.corner)
                margin = _fmt_margin(c.margin, c.margin_unit)
                lines.append(f"    {c.status.upper():<4}  {c.label:<{w}}  {margin:>8}  "
                             f"at{NBSP}{corner}")
            if len(shown) < len(rows):
                lines.append(f"    … {len(rows) - len(shown)} more (JSON lists every check)")
            if any(c.status == "warn" and c.margin is not None and c.margin_unit is None
                   and c.margin < 0 for c in shown):
                lines.append("  " + M.CANDIDATE_WARN_BEYOND)
        fixed = len(self.checks) - len(rows)
        if fixed:
            lines.append(f"  {fixed} checks depend on no toleranced parameter")
        for n in self.notes:
            lines.append(f"  note: {n}")
        return "\n".join(lines) + "\n"


def _key(m):
    return np.where(np.isnan(m), -np.inf, m)


def _margins(bb: ob.BusBatch) -> np.ndarray:
    """Every check's margin as columns, a yes/no check as 0 (pass) or −inf (fail); a
    check a board does not have (a push-pull batch gives it a NaN margin and a pass,
    :func:`pinlib.engines.ppbatch.build`) as +inf, so that no search takes that board
    for its worst, where a NaN margin that fails (no number) is the worst, −inf."""
    cols = []
    for _, c in bb.checks():
        if c.margin is None:
            cols.append(np.where(c.status == 2, -np.inf, 0.0))
        else:
            cols.append(np.where(_absent(c), np.inf, c.margin))
    return np.stack(cols, axis=1) if cols else np.empty((bb.n, 0))


def _absent(c: ob.BatchCheck) -> np.ndarray:
    """Where a batch check with margins is not on a board: a NaN margin that passes. [1]"""
    return np.isnan(c.margin) & (np.asarray(c.status) == 0)


def corners(design: Design, *, exhaustive_limit: int = EXHAUSTIVE_LIMIT,
            progress=None, results: dict | None = None) -> CornersResult:
    """The worst corner of each check of the design's buses.

    Parameters
    ----------
    design : Design
        A loaded design. [1]
    exhaustive_limit : int, optional
        Try all 2**k vertices of an open-drain bus with up to this many parameters;
        above it, screen each parameter alone at both ends and improve the combined
        corner one flip at a time.  A push-pull bus takes the engine's own search
        (:func:`pinlib.engines.ppworst.search`), so that its corners and its checks'
        statuses agree, and an SPI bus's boards the engine's arrays
        (:func:`pinlib.engines.ppcorners.corner_rows`). [1]
    progress : bool, callable or None, optional
        Progress bar over the corner boards evaluated. [1]
    results : dict, optional
        The engine's result of each bus by id, when the caller has it (the buses of
        :func:`pinlib.engines.dispatch.check_design`); else each bus is evaluated
        here. [1]

    Returns
    -------
    CornersResult
        Per check: the margin at its worst corner and the parameters (at which end)
        that set it.
    """
    nominal = _nominal(design) if results is None else results
    collected = _collected(design)
    out, methods, per_bus = [], {}, {}
    sampled = [b for b in design.buses if b.id in collected or b.protocol in PUSH_PULL_PROTOCOLS]
    # the bar counts the corner boards evaluated: how many a search takes is known only
    # as it goes (a screened search stops when no flip improves)
    bar = progress_bar(None, desc="corners", unit="corner", enabled=progress)
    with bar:
        for bus in sampled:
            params = parameters(design, bus=bus.id, collected=collected)
            per_bus[bus.id] = params
            run = _runner(bus, design, params, nominal[bus.id], collected.get(bus.id), bar)
            # one memo per bus: a line with identical inputs at several of the search's
            # boards is analysed once, as in the engine's own corner search
            with run_scope():
                worst, methods[bus.id] = _worst(bus, run, len(params), exhaustive_limit)
                out += _bus_checks(bus, run, worst, params, nominal[bus.id])
    return CornersResult(design.title, out, methods, per_bus,
                         _not_sampled(design, "no corners"))


def _worst(bus, run, k: int, exhaustive_limit: int) -> tuple[np.ndarray, str]:
    """The worst corner of each check of one bus, shape ``(checks, k)``, and how it was
    searched."""
    if bus.protocol in PUSH_PULL_PROTOCOLS:
        # the engine's own search, so a check's corner here and its status in the
        # engine's result agree
        return ppw.search(k, lambda u: _key(_margins(run(u)))), ppw.method_text(k)
    if k <= exhaustive_limit:
        verts = (np.array(list(itertools.product((-1.0, 1.0), repeat=k))) if k
                 else np.zeros((1, 0)))
        mg = _key(_margins(run(verts)))
        return verts[np.argmin(mg, axis=0)], (f"all {len(verts)} corners of {k} parameter"
                                              f"{plural_s(k)}"
                                              if k else "no toleranced parameter")
    return _screen(run, k), (f"{k} parameters: each screened alone at both ends, then the "
                             "combined corner improved one flip at a time")


def _bus_checks(bus, run, worst: np.ndarray, params: list[Parameter],
                nominal) -> list[CornerCheck]:
    """Each check of one bus at its worst corner (``worst``), with the parameters that
    set it."""
    k = len(params)
    # each distinct corner once (many checks share one: a bus of 255 devices had 7,664
    # checks and as many boards, each with every check), check j read at board at[j]
    boards, at = _distinct(worst)
    bb_w = run(boards)
    names = _names(bus, bb_w, nominal)
    checks = [c for _, c in bb_w.checks()]
    gains = _gains(run, boards, at, k, len(checks), _key(_margins(bb_w)))
    out = []
    for j, (nm, c) in enumerate(zip(names, checks, strict=True)):
        ec = nm["engine"]
        b = int(at[j])
        if c.margin is not None and _absent(c)[b] and ec is not None:
            # on no board searched: the check as designed, at no corner
            out.append(CornerCheck(
                nm["name"], bus.id, nm["segment"], c.signal, c.id, c.unit, ec.source,
                ec.margin, _number(ec.value), _number(ec.limit), ec.status, [], ec.status,
                ec.margin, ec.margin_unit))
            continue
        corner = []
        for i in np.argsort(-gains[j]) if k else []:
            g = gains[j, i]
            here = float(_margin(c, b))
            if math.isfinite(g) and abs(g) > 1e-9 * max(
                    1.0, abs(here) if math.isfinite(here) else 1.0):
                corner.append((params[i].name, "+" if worst[j, i] > 0 else "−", float(g)))
        out.append(CornerCheck(
            nm["name"], bus.id, nm["segment"], c.signal, c.id, c.unit,
            ec.source if ec is not None else "",
            None if c.margin is None else float(c.margin[b]),
            None if c.value is None else float(c.value[b]),
            None if c.limit is None else float(c.limit[b]),
            ob.STATUS[int(c.status[b])], corner,
            ec.status if ec is not None else None, ec.margin if ec is not None else None,
            ec.margin_unit if ec is not None else None, _subject(c, b, nm["name"])))
    return out


def _distinct(worst: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The distinct corners of ``worst`` (one row a check) and, per check, the index of
    its own among them."""
    boards, at = np.unique(worst, axis=0, return_inverse=True)
    return boards, at.reshape(-1)


def _subject(c, j: int, name: str) -> str | None:
    """What row ``j``'s worst of a batch check that compares several elements is of
    (None for a check of one, or where ``name`` already ends with it)."""
    if not c.names:
        return None
    if c.row is None:
        got = c.names[0] if len(c.names) == 1 else None
    else:
        rows = np.broadcast_to(c.row, (j + 1,)) if np.ndim(c.row) == 0 else c.row
        got = c.names[int(rows[j])]
    return None if got is None or name.endswith(f" {got}") else got


def _runner(bus, design: Design, params: list[Parameter], nominal, collected, bar):
    """``run(u)``: the bus's checks at the boards ``u`` (rows of unit deviations of
    ``params``), a batch of the open-drain array engine or of the push-pull engine.

    An SPI bus's corner boards are evaluated as arrays where the engine's own corner
    search does so (:func:`pinlib.engines.ppcorners.corner_rows`: each line once per
    distinct set of its factors, equal to the engine board by board); other push-pull
    buses, or boards it does not serve, the engine evaluates board by board
    (:func:`pinlib.engines.ppbatch.build`)."""
    if bus.protocol not in PUSH_PULL_PROTOCOLS:
        def run(u):
            bar.update(len(u))
            return ob.build(bus, design, Sampled(u, params), collected=collected)
        return run
    arrays = None
    if params and [p.key for p in params] == [s[-1] for s in ppb.parameter_specs(bus)]:
        arrays = corner_rows(bus, design, nominal, floor=_FLOOR)

    def run_pp(u):
        bar.update(len(u))
        got = ppb.build_rows(bus, nominal, u, arrays) if arrays is not None else None
        if got is not None:
            return got
        scen = Sampled(u, params)
        return ppb.build(bus, design, scen.factors(bus), scen.n, nominal=nominal)
    return run_pp


def _number(x) -> float | None:
    """A check's value or limit as the corner rows hold them: a number, else None."""
    return float(x) if isinstance(x, (int, float)) and not isinstance(x, bool) else None


def _margin(c: ob.BatchCheck, j: int):
    if c.margin is None:
        return -np.inf if c.status[j] == 2 else 0.0
    return c.margin[j]


def _gains(run, boards: np.ndarray, at: np.ndarray, k: int, m: int,
           margins: np.ndarray) -> np.ndarray:
    """For each check j and parameter i: the margin of check j with parameter i flipped
    at check j's worst corner (``boards[at[j]]``, the distinct corners, whose margins
    are ``margins``), less the margin there. [1]"""
    if k == 0 or m == 0:
        return np.zeros((m, k))
    j = np.arange(m)
    base = margins[at, j]                                         # (m,)
    n = len(boards)
    flips = np.repeat(boards, k, axis=0)                          # (n*k, k)
    idx = np.arange(n * k)
    flips[idx, idx % k] *= -1.0
    mg = _key(_margins(run(flips)))                              # (n*k, m)
    own = mg[(at[:, None] * k + np.arange(k)[None, :]), j[:, None]]  # (m, k)
    with np.errstate(invalid="ignore"):
        g = own - base[:, None]
    return np.where(np.isnan(g), 0.0, g)


def _screen(run, k: int) -> np.ndarray:
    """Worst corners of every check for many parameters: each alone at both ends, then
    single flips while one lowers the check's margin."""
    pts = np.zeros((2 * k + 1, k))
    for i in range(k):
        pts[2 * i, i], pts[2 * i + 1, i] = -1.0, 1.0
    mg = _key(_margins(run(pts)))                                 # (2k+1, m)
    m = mg.shape[1]
    lower = mg[0:2 * k:2] < mg[1:2 * k:2]                         # (k, m): -1 end is worse
    worst = np.where(lower.T, -1.0, 1.0)                          # (m, k)
    for _ in range(2 * k):
        boards, at = _distinct(worst)
        g = _gains(run, boards, at, k, m, _key(_margins(run(boards))))
        j_i = np.argmin(g, axis=1)
        better = g[np.arange(m), j_i] < 0
        if not better.any():
            break
        rows = np.nonzero(better)[0]
        worst[rows, j_i[rows]] *= -1.0
    return worst
