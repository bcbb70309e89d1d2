"""Worst case and yield: corners and Monte Carlo over a design's tolerances.

The engines check a design at its worst-case corners.  This module asks two further
questions of the open-drain buses (I2C, SMBus):

* **corners** (:func:`corners`): with every toleranced parameter at one end or the
  other, which combination is worst for each check, and by how much?  Each check's
  worst corner is reported with the parameters that set it (which one at which end)
  and how much margin each would give back at its other end.
* **yield** (:func:`monte_carlo`): with every parameter drawn at random within its
  tolerance, what fraction of boards pass each check, with a confidence interval, and
  which parameters the margin follows most closely?

The toleranced parameters (:func:`parameters`) are the rails (``supply_tolerance``;
rails of equal nominal voltage and tolerance are taken as one rail, wherever they
appear), each line's pull-up resistor and the pull-ups parts carry
(``pullup_tolerance``), series resistors (the segment's ``pullup_tolerance``: the
design format gives resistors one tolerance), each device's pin capacitances (its
``capacitance_tolerance``), a segment's board capacitance — traces, cables and extra —
(its ``capacitance_tolerance``) and its trace and cable length (``length_tolerance``).
Each is ``nominal · (1 + tolerance · u)``: ``u`` uniform on [−1, 1] by default, or
normal with the tolerance at 3σ when the design says ``distribution = "normal"``.
A board is evaluated at its own values, with no further tolerance: its rise time
is ``k·Rp·Cb`` with its own Rp and Cb, and so on.  The stored part values (maximum
pin capacitance, worst thresholds) stay what they are: they are limits, not spreads.

Everything is vectorized: a batch of boards goes through
:func:`pinlib.engines.opendrain.batch.build` in one numpy pass, :data:`CHUNK` boards at a time.
A run keeps what it reports, not every board: per check the counts of passing,
warning and failing boards, the lowest and highest margin (and the worst board), a
histogram of the margins in fixed bins (:class:`MarginHistogram`), and per bus and for
the board the boards on which every check passes; the draws, margins and values of
the first :data:`SENSITIVITY_BOARDS` boards are kept for the sensitivity fit and the
margin quantiles.  Memory so stays bounded (about 0.4 GB for 10^6 boards of the demo),
and the boards are drawn from one stream in board order, so that no result depends
on the chunk size; a run of at most :data:`SENSITIVITY_BOARDS` boards keeps every
board as before.  Push-pull buses (SPI, GPIO) go through :func:`pinlib.engines.ppbatch.build`:
supplies, line lengths and extra line capacitance drawn; a large batch is evaluated from
tables of the push-pull engine over the tolerance box, verified against the engine
(:mod:`pinlib.engines.pptable`), a small one (and every corner) by the engine itself.

References
----------
E. B. Wilson, "Probable inference, the law of succession, and statistical inference",
Journal of the American Statistical Association 22 (158), 1927, pp. 209–212 (the score
interval).  R. G. Newcombe, "Two-sided confidence intervals for the single proportion:
comparison of seven methods", Statistics in Medicine 17, 1998, pp. 857–872.
"""

from __future__ import annotations

import itertools
import math
from dataclasses import dataclass, field
from statistics import NormalDist

import numpy as np

from pinlib.core import messages as M
from pinlib.core import worklimits
from pinlib.core.errors import InputError
from pinlib.core.progress import progress_bar
from pinlib.core.protocols import OPEN_DRAIN_PROTOCOLS, PUSH_PULL_PROTOCOLS
from pinlib.core.quantity import format_si
from pinlib.engines import opendrain as od
from pinlib.engines import ppbatch as ppb
from pinlib.engines import pptable
from pinlib.engines import ppworst as ppw
from pinlib.engines.opendrain import batch as ob
from pinlib.model.design import Bus, Design, Segment
from pinlib.model.result import json_number

__all__ = [
    "CONFIDENCE",
    "CHUNK",
    "MAX_BOARDS",
    "SENSITIVITY_BOARDS",
    "EXHAUSTIVE_LIMIT",
    "Parameter",
    "parameters",
    "Sampled",
    "draw",
    "wilson_interval",
    "MarginHistogram",
    "McCheck",
    "Yield",
    "McResult",
    "monte_carlo",
    "CornerCheck",
    "CornersResult",
    "corners",
]

#: Confidence level of the pass-fraction intervals.
CONFIDENCE = 0.95

#: Samples evaluated per numpy pass (fixed, so that a seeded run does not depend on
#: whether a progress bar is shown).
CHUNK = 25_000

#: A run draws at most this many boards (:mod:`pinlib.core.worklimits` says why).
MAX_BOARDS = worklimits.MAX_BOARDS

#: Up to this many parameters on a bus, corners tries every vertex (2**k).
EXHAUSTIVE_LIMIT = 12

#: A parameter counts as a sensitivity when its standardized coefficient is this large.
SENSITIVITY_FLOOR = 0.05

#: Sensitivities are fitted on at most this many boards (the first drawn): the standard
#: error of a standardized coefficient is then about 1/sqrt(100,000) = 0.003, far below
#: SENSITIVITY_FLOOR, and a run of millions of boards does not fit them on all.  The
#: draws, margins and values of these first boards are all a run keeps of each board
#: (:attr:`McResult.draws`, :attr:`McCheck.margins`); the counts cover every board.
SENSITIVITY_BOARDS = 100_000

#: Smallest factor a parameter may take (a 100 % tolerance must not give 0 Ω or 0 V).
_FLOOR = 1e-6

_PER_DEVICE = ("power-off", "fall-time-min", "bridge-gate-drive", "bridge-offset")


# ============================================================================ parameters


@dataclass(frozen=True)
class Parameter:
    """One toleranced quantity of a design.

    Attributes
    ----------
    name : str
        For people: ``"rail 3.3 V"``, ``"sensors SDA pull-up"``... [1]
    kind : str
        ``supply``, ``pullup``, ``series``, ``capacitance`` or ``length``. [1]
    nominal : float
        Its nominal value (a capacitance factor is 1). [unit]
    tolerance : float
        Relative tolerance, e.g. 0.05. [1]
    unit : str
        Unit of ``nominal``. [1]
    key : tuple
        How the model finds it. [1]
    """

    name: str
    kind: str
    nominal: float
    tolerance: float
    unit: str
    key: tuple

    def to_json(self) -> dict:
        return {"name": self.name, "kind": self.kind, "nominal": self.nominal,
                "tolerance": self.tolerance, "unit": self.unit}


def _rail_key(v: float, tol: float) -> tuple:
    return ("rail", round(float(v), 9), round(float(tol), 9))


def _where(bus: Bus, seg: Segment) -> str:
    return bus.id if len(bus.segments) == 1 else f"{bus.id}/{seg.id}"


def _bus_parameters(bus: Bus, seg_ins, refs_on_buses: dict) -> list[Parameter]:
    out: list[Parameter] = []
    for seg, sin in zip(bus.segments, seg_ins, strict=True):
        where = _where(bus, seg)
        vtol, tol = seg.supply_tolerance, seg.pullup_tolerance
        rails = [seg.supply] + [d.supply for d in seg.devices if d.supply is not None
                                and not math.isclose(d.supply, seg.supply, rel_tol=1e-9)]
        if vtol > 0:
            for v in rails:
                out.append(Parameter(f"rail {format_si(v, 'V')}", "supply", v, vtol, "V",
                                     _rail_key(v, vtol)))
        if tol > 0:
            for sig, fn in od.SIGNALS.items():
                out.append(Parameter(f"{where} {sig.upper()} pull-up", "pullup", sin.pullup,
                                     tol, "Ω", ("pullup", bus.id, seg.id, sig)))
                k = 0
                for d in seg.devices:
                    got = d.part.pin_for(fn, d.side)
                    if got is None:
                        continue
                    pin = got[1]
                    for what, value in (("on-part", pin.pullup), ("internal", pin.pullup_internal
                                        if d.internal_pullups else None)):
                        if value is None:
                            continue
                        out.append(Parameter(f"{d.ref} {sig.upper()} {what} pull-up", "pullup",
                                             float(value.value), tol, "Ω",
                                             ("part-pullup", bus.id, seg.id, sig, k)))
                        k += 1
                for d in seg.devices:
                    got = d.part.pin_for(fn, d.side)
                    if d.series_resistor and got is not None and got[1].drive == "open-drain":
                        out.append(Parameter(f"{d.ref} {sig.upper()} series resistor", "series",
                                             d.series_resistor, tol, "Ω",
                                             ("series", bus.id, seg.id, d.ref, d.side, sig)))
        for d in seg.devices:
            if d.capacitance_tolerance:
                name = f"{d.ref} pin capacitance"
                if len(refs_on_buses.get(d.ref, ())) > 1:
                    name += f" on {bus.id}"
                out.append(Parameter(name, "capacitance", 1.0, d.capacitance_tolerance, "",
                                     ("pins", bus.id, d.ref)))
        if seg.capacitance_tolerance > 0:
            out.append(Parameter(f"{where} board capacitance", "capacitance", 1.0,
                                 seg.capacitance_tolerance, "", ("board", bus.id, seg.id)))
        if seg.length_tolerance > 0 and (seg.sections or seg.cables):
            length = sum(s.length for s in seg.sections) + sum(c.length for c in seg.cables)
            out.append(Parameter(f"{where} trace and cable length", "length", length,
                                 seg.length_tolerance, "m", ("length", bus.id, seg.id)))
    seen, unique = set(), []
    for p in out:
        if p.key not in seen:
            seen.add(p.key)
            unique.append(p)
    return unique


def _nominal(design: Design) -> dict:
    """The engine's (worst-case) result of each open-drain bus, by id."""
    from pinlib.engines.dispatch import evaluate_bus

    return {b.id: evaluate_bus(b, design) for b in design.buses
            if b.protocol in OPEN_DRAIN_PROTOCOLS + PUSH_PULL_PROTOCOLS}


def _collected(design: Design) -> dict:
    return {b.id: od.collect(b, design) for b in design.buses if b.protocol in OPEN_DRAIN_PROTOCOLS}


def _refs(design: Design) -> dict:
    refs: dict[str, set] = {}
    for b in design.buses:
        for d in b.devices:
            refs.setdefault(d.ref, set()).add(b.id)
    return refs


def parameters(design: Design, *, bus: str | None = None, collected=None) -> list[Parameter]:
    """Every toleranced parameter of a design's open-drain buses.

    Parameters
    ----------
    design : Design
        A loaded design. [1]
    bus : str, optional
        Only this bus's parameters. [1]
    collected : dict, optional
        :func:`pinlib.engines.opendrain.collect` of each bus by id, when at hand. [1]

    Returns
    -------
    list of Parameter
        In design order, each once (a rail shared by buses appears once).
    """
    collected = collected or _collected(design)
    refs = _refs(design)
    out, seen = [], set()
    for b in design.buses:
        if bus is not None and b.id != bus:
            continue
        if b.protocol in PUSH_PULL_PROTOCOLS:
            for spec in ppb.parameter_specs(b):
                p = Parameter(*spec)
                if p.key not in seen:
                    seen.add(p.key)
                    out.append(p)
            continue
        if b.id not in collected:
            continue
        for p in _bus_parameters(b, collected[b.id][1], refs):
            if p.key not in seen:
                seen.add(p.key)
                out.append(p)
    return out


class Sampled(ob.Scenario):
    """Boards at given points of their tolerances: ``nominal·(1 + tolerance·u)``.

    Parameters
    ----------
    u : numpy.ndarray
        Unit deviations, one row per board and one column per parameter. [1]
    params : list of Parameter
        The parameters of the columns. [1]
    """

    chooses = False

    def __init__(self, u, params):
        self.u = np.asarray(u, dtype=float).reshape(len(u), len(params))
        self.n = self.u.shape[0]
        self.index = {p.key: (i, p.tolerance) for i, p in enumerate(params)}

    def _factor(self, key):
        got = self.index.get(key)
        if got is None:
            return None
        i, tol = got
        return np.maximum(1.0 + tol * self.u[:, i:i + 1], _FLOOR)

    def rails(self, seg):
        return self.tap_rail(seg.supply, seg)

    def tap_rail(self, vdd, seg):
        f = self._factor(_rail_key(vdd, seg.supply_tolerance))
        return np.array([[vdd]]) if f is None else vdd * f

    def pin_factor(self, dev, bus):
        f = self._factor(("pins", bus.id, dev.ref))
        return 1.0 + (dev.capacitance_tolerance or 0.0) if f is None else f

    def board(self, bus, seg, parts):
        fl = self._factor(("length", bus.id, seg.id))
        fc = self._factor(("board", bus.id, seg.id))
        if fl is None and fc is None:
            return parts["traces"], parts["cables"], parts["extra"]
        # the engine's values carry the tolerances at their top: take them off, then
        # apply this board's
        lt, ct = 1.0 + seg.length_tolerance, 1.0 + seg.capacitance_tolerance
        fl = 1.0 if fl is None else fl
        fc = 1.0 if fc is None else fc
        return (parts["traces"] / (lt * ct) * fl * fc, parts["cables"] / (lt * ct) * fl * fc,
                parts["extra"] / ct * fc)

    def series(self, bus, seg, dev, signal):
        r = dev.series_resistor or 0.0
        f = self._factor(("series", bus.id, seg.id, dev.ref, dev.side, signal))
        return r if f is None else r * f

    def contributor(self, bus, seg, signal, index, value):
        f = self._factor(("part-pullup", bus.id, seg.id, signal, index))
        return value if f is None else value * f

    def resistor(self, bus, seg, signal, nominal):
        f = self._factor(("pullup", bus.id, seg.id, signal))
        return nominal if f is None else nominal * f

    def spread(self, seg):
        return 0.0

    def factors(self, bus) -> dict:
        """Factor of each parameter of a push-pull bus, shape ``(n,)``, by key."""
        out = {}
        for spec in ppb.parameter_specs(bus):
            f = self._factor(spec[-1])
            if f is not None:
                out[spec[-1]] = f[:, 0]
        return out


def draw(rng: np.random.Generator, n: int, k: int, distribution: str = "uniform"):
    """Unit deviations of ``k`` parameters for ``n`` boards.

    Parameters
    ----------
    rng : numpy.random.Generator
        The random source. [1]
    n, k : int
        Boards and parameters. [1]
    distribution : str
        ``"uniform"`` (on [−1, 1]) or ``"normal"`` (σ = 1/3: the tolerance is 3σ). [1]

    Returns
    -------
    numpy.ndarray
        Shape ``(n, k)``. [1]
    """
    if distribution == "uniform":
        return rng.uniform(-1.0, 1.0, size=(n, k))
    if distribution == "normal":
        return rng.standard_normal(size=(n, k)) / 3.0
    raise InputError(M.UNKNOWN_DISTRIBUTION, field="distribution", value=distribution,
                     expected="uniform or normal")


def wilson_interval(passes: int, n: int, confidence: float = CONFIDENCE) -> tuple[float, float]:
    """Wilson score interval of a binomial proportion.

    Parameters
    ----------
    passes : int
        Successes. [1]
    n : int
        Trials, at least 1. [1]
    confidence : float, optional
        Two-sided confidence level; default 0.95. [1]

    Returns
    -------
    (float, float)
        Lower and upper bound of the proportion. [1]

    Notes
    -----
    With :math:`\\hat p = k/n` and :math:`z` the normal quantile of
    :math:`(1 + \\gamma)/2`:

    .. math::

        \\frac{\\hat p + z^2/2n \\pm z\\sqrt{\\hat p(1-\\hat p)/n + z^2/4n^2}}{1 + z^2/n}

    (Wilson 1927).  Unlike the normal approximation it stays inside [0, 1] and keeps
    its coverage near 0 and 1, where yields live (Newcombe 1998).

    Examples
    --------
    >>> lo, hi = wilson_interval(81, 263)
    >>> round(lo, 4), round(hi, 4)
    (0.2553, 0.3662)
    """
    if n < 1 or passes < 0 or passes > n:
        raise InputError(M.NOT_A_PROPORTION, field="passes", value=(passes, n),
                         expected="0 <= passes <= n, n >= 1")
    if not 0 < confidence < 1:
        raise InputError(M.NOT_A_CONFIDENCE, field="confidence", value=confidence,
                         expected="between 0 and 1")
    z = NormalDist().inv_cdf(0.5 + confidence / 2.0)
    p = passes / n
    denom = 1.0 + z * z / n
    centre = (p + z * z / (2.0 * n)) / denom
    half = z * math.sqrt(p * (1.0 - p) / n + z * z / (4.0 * n * n)) / denom
    return max(0.0, centre - half), min(1.0, centre + half)


# ============================================================================ check identity


def _check_names(bus: Bus, bb: ob.BusBatch, nominal) -> list[dict]:
    """A name, the engine's check (for source and subject) and where, for each batch
    check, in order."""
    groups = {None: nominal} if not nominal.segments else {s.id: s for s in nominal.segments}
    out, used = [], {}
    for sb in bb.segments:
        g = groups.get(sb.id if nominal.segments else None)
        engine = g.checks if g is not None else []
        same = [c.id for c in engine] == [c.id for c in sb.checks]
        where = bus.id if len(bus.segments) == 1 else f"{bus.id}/{sb.id}"
        for i, c in enumerate(sb.checks):
            ec = engine[i] if same else None
            name = f"{where} {c.signal} {c.id}" if c.signal else f"{where} {c.id}"
            if c.id in _PER_DEVICE and ec is not None and ec.subject:
                name += f" {ec.subject}"
            used[name] = used.get(name, 0) + 1
            if used[name] > 1:
                name += f" #{used[name]}"
            out.append({"name": name, "engine": ec, "segment": sb.id, "where": where})
    return out


# ============================================================================ Monte Carlo


@dataclass
class Yield:
    """Boards that pass, of all drawn, with the Wilson interval."""

    passes: int
    n: int
    interval: tuple[float, float]

    @property
    def fraction(self) -> float:
        return self.passes / self.n

    def to_json(self) -> dict:
        return {"passes": self.passes, "n": self.n, "fraction": self.fraction,
                "interval": list(self.interval)}


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


@dataclass
class McCheck:
    """One check over the drawn boards.

    Attributes
    ----------
    name : str
        ``"<bus>[/<segment>] [SDA|SCL] <check id> [<subject>]"``. [1]
    margins, values : numpy.ndarray
        The margin and value of each of the first :attr:`sampled` boards (None for a
        yes/no check). [1], [unit]
    passes : Yield
        Boards whose margin is not negative.
    sensitivity : list of (str, float)
        Parameters by standardized regression coefficient of the margin (largest
        first, those of at least :data:`SENSITIVITY_FLOOR`). [1]
    r2 : float or None
        How much of the margin's variance the linear fit explains. [1]
    warns, fails : int or None
        Boards on which the check warns, fails (of all ``passes.n``). [1]
    low, high : float or None
        Lowest and highest finite margin over all boards. [1]
    worst_board : int or None
        Index (in drawing order) of the board with the lowest margin. [1]
    sampled : int or None
        How many boards :attr:`margins` and :attr:`values` hold: all of them up to
        :data:`SENSITIVITY_BOARDS`, then the first that many. [1]
    histogram : MarginHistogram or None
        The finite margins of every board, counted in fine bins. [1]
    """

    name: str
    bus: str
    segment: str
    signal: str | None
    id: str
    unit: str
    source: str
    nominal_status: str | None
    nominal_margin: float | None
    passes: Yield
    margins: np.ndarray | None = None
    values: np.ndarray | None = None
    sensitivity: list = field(default_factory=list)
    r2: float | None = None
    warns: int | None = None
    fails: int | None = None
    low: float | None = None
    high: float | None = None
    worst_board: int | None = None
    sampled: int | None = None
    histogram: MarginHistogram | None = None

    @property
    def complete(self) -> bool:
        """Whether :attr:`margins` holds every board of the run."""
        return self.sampled is None or self.sampled >= self.passes.n

    @property
    def varies(self) -> bool:
        if self.margins is None:
            return False
        if not self.complete:
            return self.low is not None and self.high is not None and self.high > self.low
        m = self.margins[np.isfinite(self.margins)]
        return bool(m.size) and bool(m.max() > m.min())

    def margin_quantiles(self, qs=(0.0, 0.01, 0.5)) -> list[float | None]:
        """Quantiles of the finite margins: of every board when :attr:`margins` holds
        them all; else the lowest (``q = 0``) of every board, the others of the first
        :attr:`sampled` boards."""
        if self.margins is None:
            return [None] * len(qs)
        m = self.margins[np.isfinite(self.margins)]
        if self.complete:
            return [float(np.quantile(m, q)) if m.size else None for q in qs]
        return [self.low if q == 0 else float(np.quantile(m, q)) if m.size else None
                for q in qs]

    def to_json(self) -> dict:
        q = self.margin_quantiles()
        return {"name": self.name, "bus": self.bus, "segment": self.segment,
                "signal": self.signal, "id": self.id, "unit": self.unit, "source": self.source,
                "nominal_status": self.nominal_status,
                "nominal_margin": json_number(self.nominal_margin),
                "pass": self.passes.to_json(), "varies": self.varies,
                "margin": {"min": json_number(q[0]), "p01": json_number(q[1]),
                           "median": json_number(q[2])},
                "sensitivity": [{"parameter": n, "coefficient": c} for n, c in self.sensitivity],
                "r2": json_number(self.r2)}




@dataclass
class McResult:
    """A Monte Carlo run over a design's tolerances (see :func:`monte_carlo`)."""

    design: str
    n: int
    seed: int
    distribution: str
    parameters: list[Parameter]
    checks: list[McCheck]
    buses: dict[str, Yield]
    board: Yield | None
    draws: np.ndarray
    notes: list[str] = field(default_factory=list)
    confidence: float = CONFIDENCE
    method: str = "Wilson score interval"

    def check(self, name: str) -> McCheck:
        for c in self.checks:
            if c.name == name:
                return c
        raise KeyError(name)

    def find(self, bus: str, check_id: str, signal: str | None = None,
             segment: str | None = None) -> McCheck:
        """The first check of a bus with this id (and line, segment)."""
        for c in self.checks:
            if c.bus == bus and c.id == check_id and (signal is None or c.signal == signal) \
                    and (segment is None or c.segment == segment):
                return c
        raise KeyError((bus, check_id, signal, segment))

    def to_json(self) -> dict:
        return {
            "format": "pinlib.montecarlo/1",
            "design": self.design, "samples": self.n, "seed": self.seed,
            "distribution": self.distribution, "confidence": self.confidence,
            "interval": self.method,
            "parameters": [p.to_json() for p in self.parameters],
            "board": self.board.to_json() if self.board else None,
            "buses": {k: v.to_json() for k, v in self.buses.items()},
            "checks": [c.to_json() for c in self.checks],
            "notes": list(self.notes),
        }

    def format_text(self, limit: int | None = 12) -> str:
        """The run for people: yields, then the checks with the fewest passing boards
        and lowest margins (``limit`` of them; None for all)."""
        pct = f"{self.confidence:.0%}"
        lines = [f"Monte Carlo: {self.n} boards, {self.distribution} within each tolerance"
                 f"{' (tolerance = 3σ)' if self.distribution == 'normal' else ''}, seed "
                 f"{self.seed}; pass fractions with {pct} {self.method}s"]
        if self.parameters:
            lines.append("  parameters: " + "; ".join(
                f"{p.name} ±{p.tolerance * 100:.3g} %" for p in self.parameters))
        else:
            lines.append("  no toleranced parameter: every board is the nominal one")
        if self.board is not None:
            lines.append(f"  all sampled buses pass on {_pct(self.board)}")
        for bus, y in self.buses.items():
            lines.append(f"  bus {bus}: {_pct(y)}")
        rows = [c for c in self.checks if c.varies or c.passes.passes < c.passes.n]
        rows.sort(key=lambda c: (c.passes.passes, _low(c)))
        shown = rows[:limit] if limit else rows
        if shown:
            lines.append("  checks with the fewest passing boards and the lowest margins (pass "
                         "fraction, lowest margin, most sensitive to):")
            w = max(len(c.name) for c in shown)
            for c in shown:
                sens = ", ".join(f"{n} {s:+.2f}" for n, s in c.sensitivity[:3]) or "—"
                lines.append(f"    {c.name:<{w}}  {_pct(c.passes):<34} "
                             f"min {_fmt_margin(c.margin_quantiles((0.0,))[0]):>8}  {sens}")
            if len(shown) < len(rows):
                lines.append(f"    … {len(rows) - len(shown)} more that vary (JSON lists every "
                             "check)")
        steady = len(self.checks) - len(rows)
        if steady:
            lines.append(f"  {steady} other checks pass on every board with the same margin")
        for n in self.notes:
            lines.append(f"  note: {n}")
        return "\n".join(lines) + "\n"


def _low(c: McCheck) -> float:
    q = c.margin_quantiles((0.0,))[0]
    return math.inf if q is None else q


def _pct(y: Yield) -> str:
    lo, hi = y.interval
    return f"{y.fraction:.2%} [{lo:.2%}, {hi:.2%}] ({y.passes}/{y.n})"


def _fmt_margin(m) -> str:
    return "—" if m is None else f"{m * 100:+.1f} %"


def _not_sampled(design: Design, what: str = "not sampled") -> list[str]:
    notes = [f"bus {b.id} ({b.protocol}): {what}"
             for b in design.buses if b.protocol not in OPEN_DRAIN_PROTOCOLS + PUSH_PULL_PROTOCOLS]
    return notes


def _names(bus: Bus, bb, nominal) -> list[dict]:
    """As :func:`_check_names`, for an open-drain or a push-pull batch."""
    if isinstance(bb, ppb.PpBatch):
        return [{"name": nm["name"], "engine": nm["engine"], "segment": "", "where": bus.id}
                for nm in bb.names]
    return _check_names(bus, bb, nominal)


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


def monte_carlo(design: Design, n: int, *, seed: int | None = None, progress=None,
                chunk: int = CHUNK) -> McResult:
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
    n = int(n)
    if n < 1:
        raise InputError(M.TOO_FEW_SAMPLES, field="monte-carlo", value=n, expected="at least 1")
    if n > MAX_BOARDS:
        raise InputError(M.TOO_MANY_SAMPLES, field="monte-carlo", value=f"{n:,} boards",
                         expected=f"at most {MAX_BOARDS:,} boards",
                         hint="split the run over several seeds and add the counts")
    if chunk < 1:
        raise InputError(M.CHUNK_NOT_POSITIVE, field="chunk", value=chunk)
    nominal = _nominal(design)
    collected = _collected(design)
    params = parameters(design, collected=collected)
    ss = np.random.SeedSequence(seed)
    rng = np.random.default_rng(ss)
    kept = min(n, SENSITIVITY_BOARDS)       # boards whose draws and margins are kept
    u_kept = np.empty((kept, len(params)))
    stores: dict[str, _Tally] = {}
    board_ok = 0
    # Push-pull buses: one table per bus for the whole run (pinlib.engines.pptable); a
    # normal draw is covered to 4σ (4/3 of the tolerance), boards beyond by the engine.
    tables: dict = {}
    span = 4.0 / 3.0 if design.distribution == "normal" else 1.0
    pp_notes: list[str] = []
    engine_boards: dict[str, int] = {}
    # the tables get a bar of their own; a caller's callback follows the boards only
    table_progress = False if callable(progress) and not isinstance(progress, bool) \
        else progress
    for bus in design.buses:
        if bus.protocol in PUSH_PULL_PROTOCOLS:
            # whether a table pays is decided once, for all n boards (not per chunk)
            ppb.prepare_table(bus, design, nominal[bus.id], tables, span, _FLOOR, n,
                              progress=table_progress)
    bar = progress_bar(n, desc="Monte Carlo", unit="board", enabled=progress)
    with bar:
        for start in range(0, n, chunk):
            m = min(chunk, n - start)
            # one stream for the run, drawn in board order: board i's draws do not
            # depend on the chunk size
            u = draw(rng, m, len(params), design.distribution)
            if start < kept:
                u_kept[start:start + m] = u[:kept - start]
            scen = Sampled(u, params)
            chunk_ok = None
            for bus in design.buses:
                if bus.protocol in PUSH_PULL_PROTOCOLS:
                    bb = ppb.build(bus, design, scen.factors(bus), m, nominal=nominal[bus.id],
                                   tables=tables, span=span, floor=_FLOOR,
                                   progress=table_progress)
                    for note in bb.notes:
                        if note not in pp_notes:
                            pp_notes.append(note)
                    engine_boards[bus.id] = engine_boards.get(bus.id, 0) + bb.engine_boards
                elif bus.id in collected:
                    bb = ob.build(bus, design, scen, collected=collected[bus.id])
                else:
                    continue
                st = stores.get(bus.id)
                if st is None:
                    st = stores[bus.id] = _Tally(_names(bus, bb, nominal[bus.id]), bb, kept)
                ok = st.add(bb, start, m)
                chunk_ok = ok if chunk_ok is None else chunk_ok & ok
                del bb
            if chunk_ok is not None:
                board_ok += int(np.count_nonzero(chunk_ok))
            del scen, u
            bar.update(m)
    checks, buses = [], {}
    for bus in design.buses:
        st = stores.get(bus.id)
        if st is None:
            continue
        fits = _sensitivities(u_kept, st.margin, params)
        for j, (name, (signal, cid, unit), mg, val, (sens, r2)) in enumerate(zip(
                st.names, st.meta, st.margin, st.value, fits, strict=True)):
            passes = int(n - st.fails[j])
            ec = name["engine"]
            checks.append(McCheck(
                name["name"], bus.id, name["segment"], signal, cid, unit,
                ec.source if ec is not None else "", ec.status if ec is not None else None,
                ec.margin if ec is not None else None,
                Yield(passes, n, wilson_interval(passes, n)), mg, val, sens, r2,
                warns=int(st.warns[j]), fails=int(st.fails[j]),
                low=st.extreme(j, 0), high=st.extreme(j, 1), worst_board=st.worst_board(j),
                sampled=kept, histogram=st.hist[j]))
        buses[bus.id] = Yield(st.bus_ok, n, wilson_interval(st.bus_ok, n))
    board = Yield(board_ok, n, wilson_interval(board_ok, n)) if stores else None
    notes = _not_sampled(design) + pp_notes
    for bus_id, k in engine_boards.items():
        if k and isinstance(tables.get(bus_id), pptable.LineTable):
            notes.append(f"bus {bus_id}: {k} boards evaluated by the engine (outside the "
                         "tolerance box, or close to failing)")
    if design.distribution == "normal":
        notes.append("normal draws: each tolerance is 3σ (a value may lie beyond it)")
    if n > SENSITIVITY_BOARDS and stores:
        notes.append(f"sensitivities, margin quantiles and histograms from the first "
                     f"{SENSITIVITY_BOARDS:,} boards; pass counts and lowest margins from all")
    return McResult(design.title, n, int(ss.entropy), design.distribution, params, checks, buses,
                    board, u_kept, notes)


class _Tally:
    """What a Monte Carlo run keeps of one bus's checks while its chunks go by: counts of
    failing and warning boards, boards on which every check passes, each margin's lowest
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
        self.bus_ok = 0
        # per check: lowest and highest finite margin, and the boards they came from
        self.ext = np.full((k, 2), np.nan)
        self.at = np.full((k, 2), -1, dtype=np.int64)
        self.hist = [None if c.margin is None else MarginHistogram() for c in items]

    def add(self, bb, start: int, m: int) -> np.ndarray:
        """Count one chunk of boards ``start .. start + m``; its boards where every check
        passes."""
        ok = np.ones(m, dtype=bool)
        take = max(0, min(m, self.kept - start))
        for j, (_, c) in enumerate(bb.checks()):
            fail = c.status == 2
            ok &= ~fail
            self.fails[j] += int(np.count_nonzero(fail))
            self.warns[j] += int(np.count_nonzero(c.status == 1))
            if take:
                if c.margin is not None:
                    self.margin[j][start:start + take] = c.margin[:take]
                if c.value is not None:
                    self.value[j][start:start + take] = c.value[:take]
            if c.margin is not None:
                mg = np.asarray(c.margin, dtype=float).reshape(m)
                self._extremes(j, mg, start)
                self.hist[j].add(mg)
        self.bus_ok += int(np.count_nonzero(ok))
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


# ============================================================================ corners


@dataclass
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

    def to_json(self) -> dict:
        return {"name": self.name, "bus": self.bus, "segment": self.segment,
                "signal": self.signal, "id": self.id, "unit": self.unit, "source": self.source,
                "status": self.status, "margin": json_number(self.margin),
                "value": json_number(self.value), "limit": json_number(self.limit),
                "corner": [{"parameter": n, "end": e, "gain": json_number(g)} for n, e, g in
                           self.corner],
                "worst_case_status": self.nominal_status,
                "worst_case_margin": json_number(self.nominal_margin)}


@dataclass
class CornersResult:
    design: str
    checks: list[CornerCheck]
    methods: dict[str, str]
    parameters: dict[str, list[Parameter]]
    notes: list[str] = field(default_factory=list)

    def find(self, bus: str, check_id: str, signal: str | None = None,
             segment: str | None = None) -> CornerCheck:
        for c in self.checks:
            if c.bus == bus and c.id == check_id and (signal is None or c.signal == signal) \
                    and (segment is None or c.segment == segment):
                return c
        raise KeyError((bus, check_id, signal, segment))

    def to_json(self) -> dict:
        return {"format": "pinlib.corners/1", "design": self.design,
                "methods": dict(self.methods),
                "parameters": {b: [p.to_json() for p in ps] for b, ps in self.parameters.items()},
                "checks": [c.to_json() for c in self.checks], "notes": list(self.notes)}

    def format_text(self, limit: int | None = 12) -> str:
        """The corners for people: the ``limit`` lowest margins (None for all)."""
        lines = ["Corners: every toleranced parameter at one end or the other; the worst corner "
                 "of each check and the parameters that set it"]
        for bus, method in self.methods.items():
            lines.append(f"  bus {bus}: {method}")
        rows = [c for c in self.checks if c.corner]
        rows.sort(key=lambda c: -math.inf if c.margin is None or math.isnan(c.margin)
                  else c.margin)
        shown = rows[:limit] if limit else rows
        if shown:
            lines.append("  lowest margins at their worst corners:")
            w = max(len(c.name) for c in shown)
            for c in shown:
                corner = ", ".join(f"{n} {e}" for n, e, _ in c.corner)
                lines.append(f"    {c.status:<4}  {c.name:<{w}}  {_fmt_margin(c.margin):>8}  "
                             f"at {corner}")
            if len(shown) < len(rows):
                lines.append(f"    … {len(rows) - len(shown)} more (JSON lists every check)")
        fixed = len(self.checks) - len(rows)
        if fixed:
            lines.append(f"  {fixed} checks depend on no toleranced parameter")
        for n in self.notes:
            lines.append(f"  note: {n}")
        return "\n".join(lines) + "\n"


def _key(m):
    return np.where(np.isnan(m), -np.inf, m)


def _margins(bb: ob.BusBatch) -> np.ndarray:
    """Every check's margin as columns, a yes/no check as 0 (pass) or −inf (fail)."""
    cols = []
    for _, c in bb.checks():
        cols.append(c.margin if c.margin is not None else np.where(c.status == 2, -np.inf, 0.0))
    return np.stack(cols, axis=1) if cols else np.empty((bb.n, 0))


def corners(design: Design, *, exhaustive_limit: int = EXHAUSTIVE_LIMIT,
            progress=None) -> CornersResult:
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
        statuses agree. [1]
    progress : bool, callable or None, optional
        Progress bar over the buses. [1]

    Returns
    -------
    CornersResult
        Per check: the margin at its worst corner and the parameters (at which end)
        that set it.
    """
    nominal = _nominal(design)
    collected = _collected(design)
    out, methods, per_bus = [], {}, {}
    sampled = [b for b in design.buses if b.id in collected or b.protocol in PUSH_PULL_PROTOCOLS]
    bar = progress_bar(len(sampled), desc="corners", unit="bus", enabled=progress)
    with bar:
        for bus in sampled:
            params = parameters(design, bus=bus.id, collected=collected)
            per_bus[bus.id] = params
            k = len(params)

            def run(u, bus=bus, params=params):
                scen = Sampled(u, params)
                if bus.protocol in PUSH_PULL_PROTOCOLS:
                    return ppb.build(bus, design, scen.factors(bus), scen.n,
                                     nominal=nominal[bus.id])
                return ob.build(bus, design, scen, collected=collected[bus.id])

            if bus.protocol in PUSH_PULL_PROTOCOLS:
                # the engine's own search, so a check's corner here and its status in
                # the engine's result agree
                worst = ppw.search(k, lambda u, run=run: _key(_margins(run(u))))
                methods[bus.id] = ppw.method_text(k)
            elif k <= exhaustive_limit:
                verts = (np.array(list(itertools.product((-1.0, 1.0), repeat=k))) if k
                         else np.zeros((1, 0)))
                bb = run(verts)
                mg = _key(_margins(bb))
                best = np.argmin(mg, axis=0)
                worst = verts[best]                         # (checks, k)
                methods[bus.id] = (f"all {len(verts)} corners of {k} parameters" if k else
                                   "no toleranced parameter")
            else:
                worst = _screen(run, k)
                methods[bus.id] = (f"{k} parameters: each screened alone at both ends, then "
                                   "the combined corner improved one flip at a time")
            bb_w = run(worst)
            names = _names(bus, bb_w, nominal[bus.id])
            checks = [c for _, c in bb_w.checks()]
            gains = _gains(run, worst, k, len(checks))
            for j, (nm, c) in enumerate(zip(names, checks, strict=True)):
                ec = nm["engine"]
                corner = []
                for i in np.argsort(-gains[j]) if k else []:
                    g = gains[j, i]
                    here = float(_margin(c, j))
                    if abs(g) > 1e-9 * max(1.0, abs(here) if math.isfinite(here) else 1.0):
                        corner.append((params[i].name, "+" if worst[j, i] > 0 else "−", float(g)))
                out.append(CornerCheck(
                    nm["name"], bus.id, nm["segment"], c.signal, c.id, c.unit,
                    ec.source if ec is not None else "",
                    None if c.margin is None else float(c.margin[j]),
                    None if c.value is None else float(c.value[j]),
                    None if c.limit is None else float(c.limit[j]),
                    ob.STATUS[int(c.status[j])], corner,
                    ec.status if ec is not None else None, ec.margin if ec is not None else None))
            bar.update(1)
    return CornersResult(design.title, out, methods, per_bus,
                         _not_sampled(design, "no corners"))


def _margin(c: ob.BatchCheck, j: int):
    if c.margin is None:
        return -np.inf if c.status[j] == 2 else 0.0
    return c.margin[j]


def _gains(run, worst: np.ndarray, k: int, m: int) -> np.ndarray:
    """For each check j and parameter i: the margin of check j with parameter i flipped
    at check j's worst corner, less the margin there. [1]"""
    if k == 0 or m == 0:
        return np.zeros((m, k))
    base = np.diagonal(_key(_margins(run(worst))))                # (m,)
    flips = np.repeat(worst, k, axis=0)                           # (m*k, k)
    idx = np.arange(m * k)
    flips[idx, idx % k] *= -1.0
    mg = _key(_margins(run(flips)))                              # (m*k, m)
    own = mg[idx, idx // k].reshape(m, k)
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
        g = _gains(run, worst, k, m)
        j_i = np.argmin(g, axis=1)
        better = g[np.arange(m), j_i] < 0
        if not better.any():
            break
        rows = np.nonzero(better)[0]
        worst[rows, j_i[rows]] *= -1.0
    return worst
