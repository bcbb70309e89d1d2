"""Result objects: figures, checks, and their roll-up per line, segment, bus and design.

The JSON form (``format = "pinlib.result/1"``) is an interface that scripts depend on;
see DESIGN.md.  Figures are SI floats with their unit (a yes/no figure is a JSON
boolean).  A check compares one value with one limit whose ``source`` it names, and
its ``margin`` is relative to the limit: positive means inside.  A passing check whose
margin is under the design's warning threshold is a warning.
"""

from __future__ import annotations

import math
from dataclasses import field
from typing import Any

from pinlib.core import messages as M
from pinlib.core.labels import plural_s
from pinlib.core.valueclass import value_class

__all__ = [
    "json_number",
    "FORMAT",
    "CAUTION",
    "STATUSES",
    "Figure",
    "Check",
    "check_max",
    "check_min",
    "check_true",
    "margin_text",
    "percent_text",
    "tiny_percent_text",
    "MARGIN_SHOWN",
    "beyond_shown",
    "PERCENT_TINY",
    "figure_text",
    "rule_of_thumb",
    "soft_limit",
    "soft_basis",
    "soften",
    "held_on_value",
    "SOFT_TAGS",
    "VALUE_TAGS",
    "warns_only",
    "warns_beyond",
    "why_warns",
    "softest",
    "status_counts",
    "min_margin",
    "max_margin",
    "status_codes",
    "STATUS_CODES",
    "Group",
    "LineResult",
    "SegmentResult",
    "BusResult",
    "CouplingResult",
    "DesignResult",
    "worst",
]

FORMAT = "pinlib.result/1"
STATUSES = ("pass", "warn", "fail")
CAUTION = (
    "pinlib's figures are estimates for design review. Confirm them by measurement or "
    "simulation on the real board before relying on them; the published standards, local "
    "codes and licensed engineering practice prevail over anything pinlib reports."
)


def worst(statuses) -> str:
    """The worst of a collection of statuses (``fail`` > ``warn`` > ``pass``)."""
    rank = {"pass": 0, "warn": 1, "fail": 2}
    out = "pass"
    for s in statuses:
        if rank[s] > rank[out]:
            out = s
    return out


@value_class
class Figure:
    """A computed value and its unit; ``reason`` says in words why a value that is None
    does not exist as a number (an unbounded Rp(max): "no upper bound (Cb is 0)")."""

    value: Any
    unit: str = ""
    reason: str | None = None

    def to_json(self) -> dict:
        v = self.value
        if not (isinstance(v, bool) or v is None or isinstance(v, str)):
            v = float(v)
            v = v if math.isfinite(v) else None
        out = {"value": v, "unit": self.unit}
        if self.reason:
            out["reason"] = self.reason
        return out


@value_class
class Check:
    """One comparison of a value with a limit from a named source."""

    id: str
    status: str
    value: Any
    limit: Any
    unit: str
    margin: float | None
    source: str
    message: str
    subject: str | None = None  # the signal, device or pin the check is about
    fix: str | None = None      # what would help, as the check's rule states it (see advice)
    details: dict = field(default_factory=dict)
    #: the unit of an absolute margin (value minus limit, or limit minus value) where a
    #: margin relative to the limit means nothing (a limit of 0 V or 0 s); None: relative
    margin_unit: str | None = None
    reason: str | None = None   # why the value does not exist (value and margin None)

    @property
    def advice(self) -> str | None:
        """The fix to show people: a failing or warning check's ``fix``, and None for a
        check that passes (a rule may state its fix whatever the status; advice goes with
        a problem only).  Every text that shows a fix reads it here, and so does the JSON."""
        return None if self.status == "pass" else self.fix

    def to_json(self) -> dict:
        out = {
            "id": self.id,
            "status": self.status,
            "value": json_number(self.value),
            "limit": json_number(self.limit),
            "unit": self.unit,
            "margin": json_number(self.margin),
            "source": self.source,
            "message": self.message,
        }
        if self.subject:
            out["subject"] = self.subject
        if self.advice:  # the fix the text shows: on a failing or warning check only
            out["fix"] = self.advice
        if self.reason:
            out["reason"] = self.reason
        if self.details:
            out["details"] = {k: _json_any(v) for k, v in self.details.items()}
        if self.margin_unit is not None:
            out["margin_unit"] = self.margin_unit
        return out


def margin_text(c: Check) -> str:
    """A check's margin for people: ``+12 %`` relative to its limit, or in the check's unit
    (``+210 mV``) where the margin is absolute; "—" where it is not a finite number (the
    check's message says why: a limit of zero, a value that does not exist)."""
    if c.margin is None:
        return ""
    return signed_margin_text(c.margin, c.margin_unit)


def signed_margin_text(m, unit: str | None = None, decimals: int = 0) -> str:
    """A margin as text: in ``unit`` where it is absolute (``+210 mV``), else relative
    (:func:`percent_text` with ``decimals``); "—" where it is None or not finite.  The one
    rule of the checks, the candidates and the Monte Carlo rows."""
    from pinlib.core.quantity import format_si

    if unit is None or m is None or not math.isfinite(float(m)):
        return percent_text(m, decimals)
    m = float(m)
    return ("−" if m < 0 else "+") + format_si(abs(m), unit)


def margin_order(m, unit: str | None, missing: float = math.inf) -> tuple[bool, float]:
    """A sort key of margins, lowest first: every relative margin before any margin in a
    unit (volts are never ranked against fractions of a limit), and ``missing`` for one
    that is None or NaN (``-inf`` puts it first, ``inf`` last).  The one order of the
    Monte Carlo rows, the corners and the report's Monte Carlo charts."""
    bad = m is None or math.isnan(float(m))
    return unit is not None, missing if bad else float(m)


def worst_order(check, missing: float = math.inf) -> tuple[int, bool, float]:
    """A sort key of checks, the worst first: the worst status (a warning check before a
    passing one of a smaller margin), then :func:`margin_order` (a check without a
    margin counts as ``missing`` and as relative).  The one order of a bus's worst check
    in the report and of a candidate's worst margin."""
    unit = check.margin_unit if check.margin is not None else None
    return (-STATUS_CODES.get(check.status, 0), *margin_order(check.margin, unit, missing))


#: The largest relative margin written as a number, in percent: beyond it a margin reads
#: as "> +999 %" or "< -999 %" ("-3286574 %" says nothing a reader can use; the value
#: and the limit shown beside it say by how much, and the JSON keeps the number).
MARGIN_SHOWN = 999


#: The smallest percentage written as a number: a non-zero one nearer to zero reads
#: "< 0.001 %" (a margin or a change of +1e-05 %; "> -0.001 %" below zero), never in
#: exponent form.
PERCENT_TINY = 1e-3


def tiny_percent_text(pct: float) -> str | None:
    """A percentage (``pct``, in percent) nearer to zero than :data:`PERCENT_TINY`, and not
    zero, as text: ``< 0.001 %``, below zero ``> -0.001 %``; None for any other.  The one
    rule of :func:`percent_text` and of the change lists
    (:func:`pinlib.studies.compare.format_change`)."""
    if pct == 0 or not abs(pct) < PERCENT_TINY:
        return None
    return f"< {PERCENT_TINY:g} %" if pct > 0 else f"> -{PERCENT_TINY:g} %"


def beyond_shown(m, decimals: int = 0) -> int:
    """Where a relative margin (a ratio) reads beyond ±:data:`MARGIN_SHOWN` % with
    ``decimals`` decimals: 1 for ``> +999 %``, -1 for ``< -999 %``, 0 for a margin
    written as a number (or None, or not finite).  The one rule of :func:`percent_text`
    and of the change lists, where two margins beyond the range on the same side did not
    move for a reader (:func:`pinlib.studies.compare.changes._margin_moved`)."""
    if m is None or not math.isfinite(float(m)):
        return 0
    pct = float(m) * 100
    if abs(round(pct, decimals)) <= MARGIN_SHOWN:
        return 0
    return -1 if pct < 0 else 1


def percent_text(m, decimals: int = 0) -> str:
    """A relative margin (a ratio) as a signed percentage with ``decimals`` decimals:
    ``+12 %``; beyond ±:data:`MARGIN_SHOWN` % ``> +999 %`` / ``< -999 %``; "—" where
    it is None or not finite.  With no decimals a margin under 0.5 % keeps one
    significant digit (never "-0 %" for a check that fails by a hair), and one under
    0.001 % reads ``< 0.001 %`` (:func:`tiny_percent_text`), never ``+1e-05 %``."""
    if m is None:
        return "—"
    m = float(m)
    if not math.isfinite(m):
        return "—"
    pct = m * 100
    side = beyond_shown(m, decimals)
    if side:
        return f"< -{MARGIN_SHOWN} %" if side < 0 else f"> +{MARGIN_SHOWN} %"
    if decimals == 0 and pct != 0 and abs(pct) < 0.5:
        return tiny_percent_text(pct) or f"{pct:+.1g} %"
    return f"{pct:+.{decimals}f} %"


def figure_text(f: Figure) -> str:
    """A figure as text: its value with its unit (:func:`pinlib.core.quantity.format_value`),
    or, where it has no number, its reason in words ("no upper bound (Cb is 0)")."""
    from pinlib.core.quantity import format_value

    if f.reason and (f.value is None or (isinstance(f.value, float)
                                         and not math.isfinite(f.value))):
        return f.reason
    return format_value(f.value, f.unit)


def json_number(v):
    """A figure for JSON: a finite float, or None where there is no finite number (a
    yes/no or text value, and None, pass as they are)."""
    if v is None or isinstance(v, (bool, str)):
        return v
    v = float(v)
    return v if math.isfinite(v) else None


def _json_any(v):
    if isinstance(v, (list, tuple)):
        return [_json_any(x) for x in v]
    if isinstance(v, dict):
        return {k: _json_any(x) for k, x in v.items()}
    if hasattr(v, "item"):
        v = v.item()
    if isinstance(v, float):
        return json_number(v)
    return v


def _status(margin: float, warn_margin: float) -> str:
    if not math.isfinite(margin) and margin > 0:
        return "pass"
    if margin < 0 or math.isnan(margin):
        return "fail"
    return "warn" if margin < warn_margin else "pass"


#: Integer code of each status in arrays of many boards (worse is larger): its index in
#: :data:`STATUSES`.
STATUS_CODES = {s: i for i, s in enumerate(STATUSES)}


def status_codes(margin, warn_margin: float):
    """:func:`_status` over an array of margins, as :data:`STATUS_CODES` (int8)."""
    import numpy as np

    m = np.asarray(margin, dtype=float)
    return np.where(np.isnan(m) | (m < 0), 2, np.where(m < warn_margin, 1, 0)).astype(np.int8)


def _array_margin(excess, limit, at_zero):
    """``excess / |limit|`` over arrays; at a zero limit ``+inf`` where ``at_zero()``
    holds (the value meets a zero limit) and ``-inf`` where it does not."""
    import numpy as np

    if excess.ndim == 0 and limit.ndim == 0:  # one value, as Python floats (no error state)
        e, lim = float(excess), float(limit)
        if lim != 0:
            return np.float64(e / abs(lim))
        return np.float64(math.inf if at_zero() else -math.inf)
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):  # as float: inf, NaN
        ratio = excess / np.abs(limit)
    nonzero = limit != 0
    if nonzero.all():
        return ratio
    return np.where(nonzero, ratio, np.where(at_zero(), math.inf, -math.inf))


def min_margin(value, limit):
    """The margin of :func:`check_min` (``value >= limit``) over arrays."""
    import numpy as np

    value, limit = np.asarray(value, dtype=float), np.asarray(limit, dtype=float)
    with np.errstate(over="ignore", invalid="ignore"):  # as float: inf, NaN
        excess = value - limit
    return _array_margin(excess, limit, lambda: value >= 0)


def max_margin(value, limit):
    """The margin of :func:`check_max` (``value <= limit``) over arrays."""
    import numpy as np

    value, limit = np.asarray(value, dtype=float), np.asarray(limit, dtype=float)
    with np.errstate(over="ignore", invalid="ignore"):  # as float: inf, NaN
        excess = limit - value
    return _array_margin(excess, limit, lambda: value <= 0)


def check_max(id, value, limit, unit, source, message, *, warn_margin=0.10, **kw) -> Check:
    """A check that ``value <= limit``; margin ``(limit - value) / |limit|``."""
    value, limit = float(value), float(limit)
    margin = ((limit - value) / abs(limit) if limit != 0
              else (math.inf if value <= 0 else -math.inf))
    return Check(id, _status(margin, warn_margin), value, limit, unit, margin, source, message,
                 **kw)


def check_min(id, value, limit, unit, source, message, *, warn_margin=0.10, **kw) -> Check:
    """A check that ``value >= limit``; margin ``(value - limit) / |limit|``."""
    value, limit = float(value), float(limit)
    margin = ((value - limit) / abs(limit) if limit != 0
              else (math.inf if value >= 0 else -math.inf))
    return Check(id, _status(margin, warn_margin), value, limit, unit, margin, source, message,
                 **kw)


def rule_of_thumb(check: Check) -> Check:
    """A check whose limit is a rule of thumb: it warns where it would fail (a check
    fails only against a published or datasheet limit or a physical impossibility).
    Its margin and numbers are unchanged; ``details["rule_of_thumb"]`` is True."""
    check.details = {**check.details, "rule_of_thumb": True}
    if check.status == "fail":
        check.status = "warn"
        check.message += " (a rule of thumb: a warning, not a failure)"
    return check


#: What a check whose limit rests on a soft value (:data:`SOFT_BASES`) adds to its
#: message where it would fail, by that value's basis (``what``: the value to record).
SOFT_LIMIT_NOTE = {"generic": M.SOFT_LIMIT_GENERIC, "estimate": M.SOFT_LIMIT_ESTIMATE}


def soft_basis(*values) -> str | None:
    """The soft basis a limit resting on ``values`` has (each a
    :class:`~pinlib.library.values.Sourced` or :class:`~pinlib.library.values.StatedList`,
    or None): ``"generic"`` where any of them is a class's typical value, else
    ``"estimate"`` where any is an estimate, else None (a datasheet, a measurement or a
    standard stands behind every one, or nothing says otherwise)."""
    return softest(getattr(v, "rests_on", getattr(v, "basis", None)) for v in values
                   if v is not None and getattr(v, "soft", False))


def softest(bases) -> str | None:
    """The softest of soft bases: ``"generic"`` (a class's typical value) before
    ``"estimate"``, either before none (None; anything else in ``bases`` is ignored). [1]"""
    bases = set(bases)
    return "generic" if "generic" in bases else ("estimate" if "estimate" in bases else None)


def soft_limit(check: Check, *values, what: str = "value", owner: str | None = None) -> Check:
    """``check`` against a limit that rests on ``values`` (as :func:`soft_basis`): where
    any of them is soft (no datasheet, measurement or standard behind it) the check warns
    where it would fail, as a rule of thumb does (a check fails only against a published
    or datasheet limit or a physical impossibility); :func:`soften`."""
    return soften(check, soft_basis(*values), what=what, owner=owner)


def soften(check: Check, basis: str | None, *, what: str = "value",
           owner: str | None = None) -> Check:
    """``check`` against a limit of soft ``basis`` (``"generic"``, ``"estimate"``; None:
    a firm limit, the check unchanged).  Its margin and numbers are unchanged;
    ``details["limit_basis"]`` names the basis, and a failing check warns and says why
    and what recording makes it firm (``what``: the value, e.g. ``"VIH"``; ``owner``: the
    device whose value it is, where it is not the check's subject); its fix, the change
    to the design that would pass it, is the caller's."""
    if basis is None:
        return check
    check.details = {**check.details, "limit_basis": basis}
    if check.status == "fail":
        check.status = "warn"
        whose = f"{owner}'s" if owner else "the part's"
        check.message += SOFT_LIMIT_NOTE[basis].format(what=what, whose=whose)
    return check


def why_warns(check: Check) -> str | None:
    """Why ``check`` warns where its margin would fail: ``"rule"`` (a rule of thumb,
    :func:`rule_of_thumb`), or the basis of a limit no datasheet states (``"generic"``,
    ``"estimate"``: :func:`soften`); None for a check that can fail. [1]"""
    return _why(check.details)


def _why(details) -> str | None:
    """:func:`why_warns` read off a check's details: a rule of thumb, a soft limit's
    basis, or that of a soft value the check was held at a warning on
    (``soft_value``: a joined fall failing only at a class's threshold maximum)."""
    details = details if isinstance(details, dict) else {}
    if details.get("rule_of_thumb"):
        return "rule"
    return details.get("limit_basis") or details.get("soft_value")


def warns_only(check: Check) -> bool:
    """True when ``check`` warns where its margin would fail (:func:`why_warns`).  The
    array paths (corners, Monte Carlo tables) cap its status at a warning."""
    return why_warns(check) is not None


def warns_beyond(c: Check) -> str | None:
    """:func:`why_warns` of a check that warns beyond its limit (a negative margin, or a
    yes/no check's warning); None for any other check."""
    return soft_beyond(c.status, c.margin, c.details)


def soft_beyond(status, margin, details) -> str | None:
    """:func:`warns_beyond` of a check given by its status, margin and details (a
    check's JSON form, as a snapshot holds it)."""
    beyond = margin is None or (isinstance(margin, (int, float)) and margin < 0)
    if status != "warn" or not beyond:
        return None
    return _why(details)


def held_on_value(details) -> bool:
    """True where a soft value the check rests on, not its limit, held it at a warning
    (``details.soft_value`` without a ``limit_basis`` or rule of thumb): its limit gets
    no soft tag."""
    d = details if isinstance(details, dict) else {}
    return bool(d.get("soft_value")) and not d.get("limit_basis") and not d.get("rule_of_thumb")


def soft_limit_beyond(status, margin, details) -> str | None:
    """:func:`soft_beyond` where the soft basis is the limit's (the tag beside a limit);
    None where a soft value held the check (:func:`held_on_value`)."""
    return None if held_on_value(details) else soft_beyond(status, margin, details)


#: Beside a limit that a check beyond it only warns against: no datasheet stands behind
#: it (:func:`soften`, by its basis), or it is a rule of thumb (:func:`rule_of_thumb`);
#: :func:`warns_beyond` says which.
SOFT_TAGS = {"generic": " (a class's typical value)", "estimate": " (an estimate)",
             "rule": " (a rule of thumb)"}
#: Beside the value (or after the count of boards that warn) of a check a soft value it
#: rests on, not its limit, holds at a warning (:func:`held_on_value`), by that basis.
VALUE_TAGS = {"generic": " (resting on a class's typical value)",
              "estimate": " (resting on an estimate)"}


def _modes_text(modes) -> str:
    modes = sorted(int(m) for m in modes)
    return f"mode{plural_s(len(modes))} {', '.join(map(str, modes))}"


#: A yes/no check whose details say what was held against what: its value and limit
#: as text, by check id (the SPI mode against the modes the part states).
_COMPARED = {
    "spi-mode": lambda d: (f"mode {int(d['mode'])}", _modes_text(d["modes"]))
    if "mode" in d and "modes" in d else None,
}


def compared_cells(check_id, details) -> tuple[str, str] | None:
    """What a yes/no check held against what, as (value, limit) text (``"mode 1"``,
    ``"modes 0, 3"``), where its details say it; else None."""
    make = _COMPARED.get(check_id)
    return make(details) if make is not None and isinstance(details, dict) else None


def status_counts(checks) -> dict[str, int]:
    """``checks`` by status, ``{"pass": n, "warn": n, "fail": n}``, and ``"soft"``: the
    warnings for want of a datasheet value (:func:`warns_beyond`),
    which would fail against a datasheet's. [1]"""
    out = {s: 0 for s in (*STATUSES, "soft")}
    for c in checks:
        out[c.status] += 1
        out["soft"] += warns_beyond(c) in ("generic", "estimate")
    return out


def check_true(id, ok, source, message, **kw) -> Check:
    """A yes/no check: pass when ``ok``, fail otherwise (margin not defined)."""
    return Check(id, "pass" if ok else "fail", bool(ok), True, "", None, source, message, **kw)


@value_class
class Group:
    """Figures, checks and notes of one line, segment or bus."""

    figures: dict[str, Figure] = field(default_factory=dict)
    checks: list[Check] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)

    def figure(self, name: str, value, unit: str = "", reason: str | None = None) -> None:
        self.figures[name] = Figure(value, unit, reason)

    def add(self, check: Check) -> Check:
        self.checks.append(check)
        return check

    def own_status(self) -> str:
        return worst(c.status for c in self.checks)

    def check(self, check_id: str) -> Check | None:
        """The first check with this id (None when absent)."""
        return next((c for c in self.checks if c.id == check_id), None)

    def _json_body(self) -> dict:
        out = {
            "figures": {k: f.to_json() for k, f in self.figures.items()},
            "checks": [c.to_json() for c in self.checks],
        }
        if self.notes:
            out["notes"] = list(self.notes)
        return out


@value_class
class LineResult(Group):
    """The figures and checks of one line (signal) of a bus."""

    signal: str = ""

    @property
    def status(self) -> str:
        return self.own_status()

    def to_json(self) -> dict:
        return {"signal": self.signal, "status": self.status, **self._json_body()}


@value_class
class SegmentResult(Group):
    """The figures and checks of one segment of an open-drain bus."""

    id: str = ""

    @property
    def status(self) -> str:
        return self.own_status()

    def to_json(self) -> dict:
        return {"id": self.id, "status": self.status, **self._json_body()}


@value_class
class BusResult(Group):
    """The result of one bus.

    ``workings`` holds what the engine worked out on the way to the checks — the
    open-drain engine's inputs (limits and each segment's lines), the SPI analysis, the
    GPIO lines' analyses — so that charts and reports read it instead of running the
    engine again.  It is not part of the JSON result and takes no part in comparisons.
    """

    id: str = ""
    protocol: str = ""
    segments: list[SegmentResult] = field(default_factory=list)
    lines: list[LineResult] = field(default_factory=list)
    workings: Any = field(default=None, repr=False, compare=False)

    @property
    def status(self) -> str:
        return worst([self.own_status()] + [s.status for s in self.segments]
                     + [ln.status for ln in self.lines])

    def all_checks(self):
        """Every check of the bus with where it sits: (segment id or None, signal or None,
        check)."""
        for c in self.checks:
            yield None, None, c
        for s in self.segments:
            for c in s.checks:
                yield s.id, None, c
        for ln in self.lines:
            for c in ln.checks:
                yield None, ln.signal, c

    def to_json(self) -> dict:
        out = {"id": self.id, "protocol": self.protocol, "status": self.status,
               **self._json_body()}
        if self.segments:
            out["segments"] = [s.to_json() for s in self.segments]
        out["lines"] = [ln.to_json() for ln in self.lines]
        return out


@value_class
class CouplingResult(Group):
    """The result of one ``[[coupling]]`` of the design: a fast line beside an open-drain
    one.  It has the shape of a bus's result with no segments or lines (``id``, figures,
    checks, notes, ``workings``, :meth:`all_checks`), so whatever lists the checks of
    a design's buses lists a coupling's the same way (:meth:`DesignResult.results`).

    ``id`` is ``"VICTIM<-AGGRESSOR"`` (``sensors.scl<-display.sclk``), ``protocol``
    ``"coupling"``; ``workings`` holds the pair, the victim's and aggressor's models
    and the noise waveforms (charts read them).
    """

    id: str = ""
    victim: str = ""
    aggressor: str = ""
    protocol: str = "coupling"
    workings: Any = field(default=None, repr=False, compare=False)

    @property
    def status(self) -> str:
        return self.own_status()

    @property
    def segments(self) -> list:
        return []

    @property
    def lines(self) -> list:
        return []

    def all_checks(self):
        """Every check with where it sits: (None, None, check)."""
        for c in self.checks:
            yield None, None, c

    def to_json(self) -> dict:
        return {"id": self.id, "victim": self.victim, "aggressor": self.aggressor,
                "status": self.status, **self._json_body()}


@value_class
class DesignResult:
    """The result of a design: its buses' and couplings' results, in file order."""

    design: str
    path: str | None = None
    buses: list[BusResult] = field(default_factory=list)
    warn_margin: float = 0.10
    notes: list[str] = field(default_factory=list)
    couplings: list[CouplingResult] = field(default_factory=list)

    @property
    def status(self) -> str:
        return worst(b.status for b in self.results())

    def results(self) -> list:
        """Every result of the design in file order: its buses, then its couplings."""
        return [*self.buses, *self.couplings]

    def bus(self, bus_id: str) -> BusResult:
        for b in self.buses:
            if b.id == bus_id:
                return b
        raise KeyError(bus_id)

    def exit_code(self) -> int:
        return 1 if self.status == "fail" else 0

    def to_json(self) -> dict:
        out = {
            "format": FORMAT,
            "design": self.design,
            "status": self.status,
            "caution": CAUTION,
            "warn_margin": self.warn_margin,
            "buses": [b.to_json() for b in self.buses],
        }
        if self.couplings:
            out["couplings"] = [c.to_json() for c in self.couplings]
        if self.path:
            out["path"] = self.path
        if self.notes:
            out["notes"] = list(self.notes)
        return out
