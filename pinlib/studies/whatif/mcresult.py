"""The result of a Monte Carlo run: each check over the drawn boards (:class:`McCheck`)
and the run (:class:`McResult`), as JSON and as text."""

from __future__ import annotations

from dataclasses import field

import numpy as np

from pinlib.core.labels import counted, plural_s, sampled_check_label
from pinlib.core.quantity import format_si
from pinlib.core.valueclass import value_class
from pinlib.model.result import VALUE_TAGS, json_number, margin_order, signed_margin_text
from pinlib.studies.whatif.sensitivity import SENSITIVITY_FLOOR, beyond_rounding
from pinlib.studies.whatif.tally import MarginHistogram
from pinlib.studies.whatif.tolerances import Parameter
from pinlib.studies.whatif.yields import CONFIDENCE, Yield, _pct


def find_check(checks, bus: str, check_id: str, signal: str | None = None,
               segment: str | None = None):
    """The first of ``checks`` (a study's, each with ``bus``, ``id``, ``signal`` and
    ``segment``) of a bus with this id, and line or segment when given; KeyError if none."""
    for c in checks:
        if c.bus == bus and c.id == check_id and (signal is None or c.signal == signal) \
                and (segment is None or c.segment == segment):
            return c
    raise KeyError((bus, check_id, signal, segment))


def absent_words(n: int) -> str:
    """How many boards a check is absent from, as the text and the report say it:
    ``"absent from 3 boards"``."""
    return counted("absent from {n} board{s}", n)


@value_class
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
        Boards on which the check does not fail (a warning passes: a rule of thumb's
        negative margin warns, :attr:`warns` counts those boards).
    sensitivity : list of (str, float)
        Parameters by standardized regression coefficient of the margin (largest
        first, those of at least :data:`SENSITIVITY_FLOOR`). [1]
    r2 : float or None
        How much of the margin's variance the linear fit explains. [1]
    warns, fails : int or None
        Boards on which the check warns, fails (of all ``passes.n``). [1]
    absent : int or None
        Boards that have no such check (no margin and no failure: a check the engine
        makes on some boards only); :attr:`passes` counts them, as boards on which the
        check does not fail, and the text says how many. [1]
    low, high : float or None
        Lowest and highest finite margin over all boards. [1]
    worst_board : int or None
        Index (in drawing order) of the board with the lowest margin. [1]
    sampled : int or None
        How many boards :attr:`margins` and :attr:`values` hold: all of them up to
        :data:`SENSITIVITY_BOARDS`, then the first that many. [1]
    histogram : MarginHistogram or None
        The finite margins of every board, counted in fine bins. [1]
    margin_unit : str or None
        The unit of an absolute margin (``"V"``: a translator's gate overdrive), None
        for a margin relative to its limit (:attr:`pinlib.model.result.Check.margin_unit`).
    warns_only : str or None
        Why it warns where its margin would fail, as the engine's check says: ``"rule"``
        (a rule of thumb), ``"generic"`` or ``"estimate"`` (its limit's basis,
        :func:`pinlib.model.result.soften`); None for a check that can fail. [1]
    on_value : bool
        True where that basis is a value the check rests on, not its limit's
        (:func:`pinlib.model.result.held_on_value`: a joined fall at a class's VGS(th)
        maximum). [1]
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
    absent: int | None = None
    low: float | None = None
    high: float | None = None
    worst_board: int | None = None
    sampled: int | None = None
    histogram: MarginHistogram | None = None
    margin_unit: str | None = None
    warns_only: str | None = None
    on_value: bool = False

    @property
    def label(self) -> str:
        """:attr:`name` for people: its check id as its label (``flash CIPO setup U7``)."""
        return sampled_check_label(self.name, self.id)

    @property
    def complete(self) -> bool:
        """Whether :attr:`margins` holds every board of the run."""
        return self.sampled is None or self.sampled >= self.passes.n

    @property
    def varies(self) -> bool:
        if self.margins is None:
            return False
        if not self.complete:
            return (self.low is not None and self.high is not None
                    and bool(beyond_rounding(self.low, self.high)))
        m = self.margins[np.isfinite(self.margins)]
        return bool(m.size) and bool(beyond_rounding(m.min(), m.max()))

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

    def sensitivity_text(self, most: int = 3) -> str:
        """The parameters the margin follows most (at most ``most``, each with its
        standardized coefficient), or why none is named."""
        if self.sensitivity:
            return ", ".join(f"{n} {s:+.2f}" for n, s in self.sensitivity[:most])
        if self.margins is None:
            return "a yes/no check: no margin to follow"
        if self.absent and self.absent >= self.passes.n:
            return "no margin to follow"
        if not self.varies:
            return "the same margin on every board" + (" that has it" if self.absent else "")
        if self.r2 is None:
            return "too few boards to fit"
        return (f"no parameter's coefficient reaches {SENSITIVITY_FLOOR:g} clear of the "
                f"fit's noise (R² {self.r2:.2f})")

    def to_json(self) -> dict:
        q = self.margin_quantiles()
        return {"name": self.name, "bus": self.bus, "segment": self.segment,
                "signal": self.signal, "id": self.id, "unit": self.unit, "source": self.source,
                "nominal_status": self.nominal_status,
                "nominal_margin": json_number(self.nominal_margin),
                "margin_unit": self.margin_unit,
                "pass": self.passes.to_json(), "warns": self.warns, "fails": self.fails,
                "absent": self.absent, "varies": self.varies,
                "margin": {"min": json_number(q[0]), "p01": json_number(q[1]),
                           "median": json_number(q[2])},
                "sensitivity": [{"parameter": n, "coefficient": c} for n, c in self.sensitivity],
                "r2": json_number(self.r2)}




@value_class
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
        return find_check(self.checks, bus, check_id, signal, segment)

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
        pct = format_si(self.confidence, '%')
        lines = [f"Monte Carlo: {self.n} board{plural_s(self.n)}, {self.distribution} within "
                 "each tolerance"
                 f"{' (tolerance = 3σ)' if self.distribution == 'normal' else ''}, seed "
                 f"{self.seed}; pass fractions with {pct} {self.method}s"]
        if self.parameters:
            lines.append("  parameters: " + "; ".join(
                f"{p.name} ±{p.tolerance * 100:.3g} %" for p in self.parameters))
        else:
            lines.append("  no toleranced parameter: every board is the nominal one")
        if self.board is not None:
            lines.append(f"  all sampled buses pass on {_pct(self.board)}"
                         f"{self.board.warned_text()}")
        for bus, y in self.buses.items():  # a coupling's id holds "<-"
            lines.append(f"  {'coupling' if '<-' in bus else 'bus'} {bus}: {_pct(y)}"
                         f"{y.warned_text('')}")
        # a check that warns on some board is a row, whatever its margin does: it must
        # never be counted among those that pass on every board (a yes/no ringing check
        # has no margin to vary and warns on half the boards)
        rows = [c for c in self.checks
                if c.varies or c.passes.passes < c.passes.n or c.absent or c.warns]
        # the fewest passing boards, then the most boards that warn (a margin in a unit
        # sorts after every fraction: a warning slack in seconds must not fall among the
        # "more" below rows that never warn), then the lowest margin
        rows.sort(key=lambda c: (c.passes.passes, -(c.warns or 0),
                                 *margin_order(_low(c), c.margin_unit)))
        shown = rows[:limit] if limit else rows
        if shown:
            lines.append("  checks with the fewest passing boards, the most that warn and the "
                         "lowest margins (pass fraction, a warning passing; lowest margin; "
                         "boards that warn; most sensitive to):")
            w = max(len(c.label) for c in shown)
            for c in shown:
                sens = c.sensitivity_text()
                # a rule of thumb's check warns below its limit: 100 % passing beside a
                # margin of -89 % says so, or it reads as a contradiction
                # beyond its limit on some board, why that only warns
                lowest = _low(c)
                tags = VALUE_TAGS if c.on_value else _ONLY_WARNS
                why = (tags.get(c.warns_only, "") if lowest is not None
                       and lowest < 0 else "")
                warned = f"warns on {c.warns}{why}; " if c.warns else ""
                if c.absent:  # counted as passing: the text says the check is not there
                    warned += absent_words(c.absent) + "; "
                # "min" beside its margin (one space: a wrapped row keeps them together),
                # the pair right-aligned so the margins line up
                low = "min " + _fmt_margin(_low(c), c.margin_unit)
                lines.append(f"    {c.label:<{w}}  {_pct(c.passes):<34} {low:>12}  "
                             f"{warned}{sens}")
            if len(shown) < len(rows):
                more = len(rows) - len(shown)
                lines.append(f"    … {more} more that "
                             f"{'varies, warns' if more == 1 else 'vary, warn'} or "
                             f"{'fails' if more == 1 else 'fail'} (JSON lists every check)")
                # every check that warns on some board is named, with how many: those of
                # the "more" too
                hidden = [c for c in rows[len(shown):] if c.warns]
                if hidden:
                    one = len(hidden) == 1
                    lines.append(f"    of those, {len(hidden)} warn{'s' if one else ''} on "
                                 "some boards (boards that warn): " + ", ".join(
                                     f"{c.label} ({c.warns})" for c in hidden))
        steady = len(self.checks) - len(rows)
        if steady:
            one = steady == 1  # no warning, no failure and one margin on every board
            lines.append(f"  {steady} other check{plural_s(steady)} "
                         f"{'passes' if one else 'pass'} on every board, never "
                         f"{'warns' if one else 'warn'} and never "
                         f"{'varies' if one else 'vary'}")
        for n in self.notes:
            lines.append(f"  note: {n}")
        return "\n".join(lines) + "\n"


#: After a count of boards that warn: why the check warns and never fails there.
_ONLY_WARNS = {"rule": " (a rule of thumb)", "generic": " (a class's typical limit)",
               "estimate": " (an estimated limit)"}


def _low(c: McCheck) -> float | None:
    return c.margin_quantiles((0.0,))[0]


def _fmt_margin(m, unit: str | None = None) -> str:
    return signed_margin_text(m, unit, 1)
