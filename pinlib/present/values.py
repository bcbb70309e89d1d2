"""A result's values as text: figures and check values with SI prefixes, a group's
figures under their labels, a check's fix, and the count of checks by status (shared by
the summary and the detail of `pinlib check` and by the design-review report)."""

from __future__ import annotations

from collections.abc import Mapping

from pinlib.core import messages as M
from pinlib.core.labels import figure_label, shown_figures
from pinlib.core.quantity import format_value
from pinlib.model.result import (
    SOFT_TAGS,
    VALUE_TAGS,
    BusResult,
    Check,
    DesignResult,
    Figure,
    compared_cells,
    figure_text,
    held_on_value,
    status_counts,
    warns_beyond,
)

__all__ = ["format_value", "counts", "with_fix", "figure_cells", "assumed_cs",
           "assumed_cs_words", "SEARCH_BOUNDS",
           "search_bound_words", "limit_side", "FLIGHTS", "FLIGHT_HEAD", "flight_rows",
           "SOFT_TAGS", "soft_tag", "soft_words", "check_cells"]

#: Figures a search gives (a coupling's), with the figure of the search's own bound and
#: the words a result at that bound takes: there the search found no end, so "18 µm"
#: alone would read as the minimum when it is only where the search started.
SEARCH_BOUNDS = {
    "minimum_spacing": ("spacing_searched_from", "or less"),
    "maximum_parallel_length": ("length_searched_to", "or more"),
}


def search_bound_words(figures: Mapping[str, Figure], name: str) -> str:
    """``" or less"`` / ``" or more"`` when the figure ``name`` is a search's result
    lying at the search's own bound (:data:`SEARCH_BOUNDS`), else ``""``."""
    import math

    if name not in SEARCH_BOUNDS:
        return ""
    bound, words = SEARCH_BOUNDS[name]
    f, b = figures.get(name), figures.get(bound)
    if f is None or b is None or not isinstance(f.value, (int, float)) \
            or not isinstance(b.value, (int, float)) or isinstance(f.value, bool):
        return ""
    if not (math.isfinite(f.value) and math.isfinite(b.value)):
        return ""
    return f" {words}" if math.isclose(f.value, b.value, rel_tol=1e-9) else ""


def _same(a: Figure, b: Figure) -> bool:
    return a.value == b.value and a.unit == b.unit


def assumed_cs(checks, by: str) -> str | None:
    """The CS time (``"CS lead"``, ``"CS lag"``) assumed for a controller that records
    none, where the timing check named ``by`` (``"cipo-first-bit U2"``, the figure
    ``max_clock_limited_by``) rests on it (its details' ``assumed``); None otherwise."""
    from pinlib.engines.spi.modes import CS_ASSUMED

    for c in checks:
        if f"{c.id} {c.subject}" == by and c.details.get("assumed") in CS_ASSUMED:
            return CS_ASSUMED[c.details["assumed"]][0]
    return None


def assumed_cs_words(checks, by: str) -> str:
    """What the text adds after what sets the highest clock (:func:`assumed_cs`):
    ``", on an assumed CS lead"``, or ``""``."""
    what = assumed_cs(checks, by) if by else None
    return M.SET_ON_ASSUMED_CS.format(what=what) if what else ""


def figure_cells(figures: Mapping[str, Figure], checks=()) -> list[tuple[str, str]]:
    """A group's figures as people read them: (label, value with its unit) in table
    order, each quantity once (:func:`pinlib.core.labels.shown_figures`: a line's copy of
    the bus figure, the pull-up that is the resistor, shown once), a search's result at
    the search's own bound with its words (:func:`search_bound_words`: "18 µm or
    less"), what sets the highest clock with the CS time it rests on where the group's
    ``checks`` say it assumes one (:func:`assumed_cs_words`); ids stay in the JSON."""
    out = []
    for n in shown_figures(figures, same=_same):
        text = _text(n, figures[n]) + search_bound_words(figures, n)
        if n == "max_clock_limited_by" and isinstance(figures[n].value, str):
            text += assumed_cs_words(checks, figures[n].value)
        out.append((figure_label(n), text))
    return out


def _text(name: str, f: Figure) -> str:
    """A figure's value as text (:func:`~pinlib.model.result.figure_text`); a text value
    as :func:`~pinlib.studies.compare.figures.figure_value_text` gives it (the timing path
    that sets the highest clock as the checks name it, "CIPO setup U2", not its id)."""
    if isinstance(f.value, str):
        # imported here: pinlib check reads the compare package only beside a snapshot
        from pinlib.studies.compare.figures import figure_value_text

        return figure_value_text(name, f.value, f.unit)
    return figure_text(f)


def soft_tag(c: Check) -> str:
    """Beside the limit of a check beyond it that only warns, why (:data:`SOFT_TAGS`);
    else nothing (and nothing where a soft value, not the limit, holds it at a warning:
    :func:`value_tag`)."""
    return "" if held_on_value(c.details) else SOFT_TAGS.get(warns_beyond(c) or "", "")


def value_tag(c: Check) -> str:
    """Beside the value of a check beyond its limit that only warns because a value it
    rests on is soft (``details.soft_value``: a joined fall at a class's VGS(th)
    maximum), why; else nothing."""
    return VALUE_TAGS.get(warns_beyond(c) or "", "") if held_on_value(c.details) else ""


def check_cells(c: Check, *, answer: bool = False, why: bool = False) -> tuple[str, str]:
    """A check's value and limit cells, as every table writes them (the text, the
    report, the widgets).

    A number is written with its unit.  A yes/no check whose details say what was
    compared shows that ("mode 1" against "modes 0, 3"); another one shows its answer
    ("yes", "no") where ``answer`` (the report's table), else nothing, and no limit.
    With ``why`` (the widgets' and the reviews' tables, which print no message beside
    them), a limit a check beyond it only warns against says why (:data:`SOFT_TAGS`)."""
    if isinstance(c.value, bool):
        shown = compared_cells(c.id, c.details)
        if shown is not None:
            return shown
        return ("yes" if c.value else "no") if answer else "", ""
    limit = "" if isinstance(c.limit, bool) else format_value(c.limit, c.unit)
    value = format_value(c.value, c.unit)
    if why:  # why a check beyond its limit only warns
        limit += soft_tag(c) if limit else ""
        value += value_tag(c) if c.value is not None else ""
    return value, limit


def limit_side(c: Check) -> str:
    """Which side of its limit a check's value must stay: ``"≤"`` (the limit is a
    maximum), ``"≥"`` (a minimum), or ``""`` where the check does not tell (no numbers,
    a value at its limit, a margin of 0).

    Read from the check's own margin, which is positive on the passing side: a value
    under its limit with a positive margin (or over it with a negative one) has a
    maximum.  A window check (the pull-up window, the supply range) is held against
    its nearer end, which this names."""
    import math

    v, lim, m = c.value, c.limit, c.margin
    if not all(isinstance(x, (int, float)) and not isinstance(x, bool) for x in (v, lim, m)):
        return ""
    if not all(math.isfinite(float(x)) for x in (v, lim, m)) or v == lim or m == 0:
        return ""
    return "≤" if (v < lim) == (m > 0) else "≥"


def with_fix(text: str, c: Check) -> str:
    """``text``, what is shown of a check, with "; fix: ..." added: only for a check that
    fails or warns (:attr:`~pinlib.model.result.Check.advice`), and only when ``text``
    does not hold the fix already (a message may carry it)."""
    fix = c.advice
    return f"{text}; fix: {fix}" if fix and fix not in text else text


def counts(result: DesignResult) -> dict[str, int]:
    """Checks by status over the whole design, and the warnings for want of a datasheet
    value (:func:`pinlib.model.result.status_counts`)."""
    return status_counts(c for b in result.results() for _, _, c in b.all_checks())


def soft_words(n: dict) -> str:
    """After a count of warnings (of :func:`counts`): how many only warn for want of a
    datasheet value, on their limit or on a value they rest on (``" (3 for want of a
    datasheet value)"``), else nothing."""
    soft = n.get("soft", 0)
    return f" ({soft} for want of a datasheet value)" if soft else ""


#: An SPI peripheral's flights as its budget checks' ``details`` hold them (see
#: :mod:`pinlib.engines.spi`): the row's label, then (check id, detail key) of the
#: earliest and of the latest flight; None where no check takes that end.
FLIGHTS = (
    ("SCLK sampling edge", ("copi-setup", "sclk_early"), ("copi-hold", "sclk_late")),
    ("SCLK launching edge", ("cipo-hold", "sclk_early"), ("cipo-setup", "sclk_late")),
    ("COPI", ("copi-hold", "copi_early"), ("copi-setup", "copi_late")),
    ("CIPO, back at the controller", ("cipo-hold", "cipo_early"), ("cipo-setup", "cipo_late")),
    ("CS asserting", None, ("cs-setup", "cs_late")),
    ("CS releasing", ("cs-hold", "cs_early"), None),
)


#: The columns of :func:`flight_rows`.
FLIGHT_HEAD = ("Device", "Flight", "Earliest", "Latest")


def flight_rows(bus: BusResult) -> list[list[str]]:
    """Each SPI peripheral's flights, from its budget checks' ``details``
    (:data:`FLIGHTS`): ``[device, flight, earliest, latest]`` as text, a row where the
    device has a check that takes one end of it; "—" for the end no check takes, or a
    flight with no time (a receiver that never crosses its threshold); none on a bus
    that is not SPI.  The text of ``pinlib check --detail`` and the reports show the
    same rows."""
    if bus.protocol != "spi":
        return []
    got: dict[str, dict[str, dict]] = {}
    for c in bus.checks:
        if c.subject and isinstance(c.details, dict):
            got.setdefault(c.subject, {})[c.id] = c.details
    rows = []
    for ref, checks in got.items():
        for label, *ends in FLIGHTS:
            if not any(end and end[0] in checks for end in ends):
                continue
            cells = [checks[end[0]].get(end[1]) if end and end[0] in checks else None
                     for end in ends]
            rows.append([ref, label, *(format_value(x, "s") for x in cells)])
    return rows
