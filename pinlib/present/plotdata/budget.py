"""The SPI timing budget's chart data: one stacked bar per requirement."""

from __future__ import annotations

import math
from dataclasses import field

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.core.valueclass import value_class
from pinlib.engines.spi.evaluate import term_check
from pinlib.model.design import Bus, Design
from pinlib.present.plotdata.common import _require_protocol, workings


@value_class(frozen=True)
class TimingBudgetData:
    """The SPI timing budget at the design's clock: one bar per requirement.

    Attributes
    ----------
    bus : str
        The bus. [1]
    clock, period : float
        The design's clock and its period. [Hz], [s]
    rows : list of (str, str, float)
        ``(path, component, duration)``: what each requirement uses up, in the order it
        stacks; a credit (an early flight) is negative. [1, 1, s]
    available : dict of str to float
        Time available to each path (half a period; a CS lead the controller states). [s]
    margins : dict of str to float
        Available minus used time of each path (the check's value minus its limit). [s]
    status : dict of str to str
        Each path's check status at the design's warning margin. [1]
    sources : dict of str to str
        The source of each path's check: its requirement's, and the CS lead or lag
        assumed where the time available rests on one. [1]
    worst : dict of str to (float, str, str)
        For a path whose check the engine took at a corner of the bus's tolerances worse
        than the board as designed (:func:`pinlib.engines.ppworst.at_worst_corners`):
        the check's margin there (its value minus its limit, the figure of the checks
        table), its status and the corner. The bars, ``margins`` and ``status`` are the
        board as designed. [s, 1, 1]
    not_drawn : dict of str to str
        A path that has no time to draw (a signal that never crosses its receiver's
        threshold: the engine's check fails without a value) and why, in words; it has
        no bar, margin or status here. [1]
    """

    bus: str
    clock: float
    period: float
    rows: list
    available: dict
    margins: dict
    status: dict
    sources: dict
    worst: dict = field(default_factory=dict)
    not_drawn: dict = field(default_factory=dict)


#: Why a path has no bar: its available time does not exist.
NO_TIME = ("no time available: {what} never crosses the receiving input's threshold "
           "(see the check)")


# =========================================================================== SPI budget

#: How each SPI requirement's terms stack in the budget bars: ``(key in Term.parts,
#: sign, component)``.  A term's used time is ``required - b`` (see
#: :class:`pinlib.engines.spi.Term`): late flights, output delays and the requirement
#: itself add; early flights (of the clock on setup, of the data on hold) are credits.
BUDGET_COMPONENTS = {
    "copi-setup": (("t_valid_controller", 1.0, "output valid (t_valid)"),
                   ("copi_late", 1.0, "data or CS flight"),
                   ("sclk_early", -1.0, "SCLK flight"),
                   ("t_setup", 1.0, "required setup, hold or width")),
    "copi-hold": (("sclk_late", 1.0, "SCLK flight"),
                  ("copi_early", -1.0, "data or CS flight"),
                  ("t_hold", 1.0, "required setup, hold or width")),
    "cipo-setup": (("sclk_late", 1.0, "SCLK flight"),
                   ("t_valid", 1.0, "output valid (t_valid)"),
                   ("cipo_late", 1.0, "data or CS flight"),
                   ("bridges_round_trip", 1.0, "bridging parts"),
                   ("t_setup_controller", 1.0, "required setup, hold or width")),
    "cipo-hold": (("sclk_early", -1.0, "SCLK flight"),
                  ("cipo_early", -1.0, "data or CS flight"),
                  ("t_hold_controller", 1.0, "required setup, hold or width")),
    "cs-setup": (("cs_late", 1.0, "data or CS flight"),
                 ("sclk_early", -1.0, "SCLK flight"),
                 ("t_cs_setup", 1.0, "required setup, hold or width")),
    "sclk-high": (("sclk_rise_late", 1.0, "SCLK flight"),
                  ("sclk_fall_early", -1.0, "SCLK flight"),
                  ("t_high", 1.0, "required setup, hold or width")),
    "sclk-low": (("sclk_fall_late", 1.0, "SCLK flight"),
                 ("sclk_rise_early", -1.0, "SCLK flight"),
                 ("t_low", 1.0, "required setup, hold or width")),
    "cs-hold": (("sclk_late", 1.0, "SCLK flight"),
                ("cs_early", -1.0, "data or CS flight"),
                ("t_cs_hold", 1.0, "required setup, hold or width")),
    "cipo-first-bit": (("cs_late", 1.0, "data or CS flight"),
                       ("t_cs_valid", 1.0, "output valid after CS (t_cs_valid)"),
                       ("cipo_late", 1.0, "data or CS flight"),
                       ("bridges_round_trip", 1.0, "bridging parts"),
                       ("t_setup_controller", 1.0, "required setup, hold or width")),
}


def timing_budget_data(bus: Bus, design: Design, *, analysis=None) -> TimingBudgetData:
    """The SPI timing budget at the design's clock, as stacked bars.

    Parameters
    ----------
    bus : Bus
        An ``spi`` bus of ``design``. [1]
    design : Design
        The loaded design. [1]
    analysis : BusResult or SpiAnalysis, optional
        The bus's result (or :func:`pinlib.engines.spi.spi_analysis` of the bus), to
        reuse (see :func:`workings`). [1]

    Returns
    -------
    TimingBudgetData
        One path per requirement the engine checks (``copi-setup U7``...), each with
        the components it uses up, the time available and the margin; a requirement
        without a time (a signal that never switches its receiver) in ``not_drawn``.

    Notes
    -----
    Every requirement of :func:`pinlib.engines.spi.budget_terms` is
    ``a T + b >= required``.  The bar of a path stacks ``required - b`` split into
    its terms (:data:`BUDGET_COMPONENTS`) against the available ``a T`` (half a
    period), or against the controller's stated CS lead for ``cs-setup`` (its CS lag
    for ``cs-hold``); the margin
    is the engine's ``Term.margin(T)``.  The status is the engine's own check
    (:func:`pinlib.engines.spi.evaluate.term_check` at the design's warning margin).
    """
    _require_protocol(bus, ("spi",), "a timing budget")
    checks = _corner_checks(analysis)
    analysis = workings(bus, design, analysis)
    clock = float(bus.clock)
    period = 1.0 / clock
    rows, avail, margins, status, sources, worst, not_drawn = [], {}, {}, {}, {}, {}, {}
    for term in analysis.terms:
        path = f"{term.id} {term.subject}"
        if not math.isfinite(float(term.available(period))):
            not_drawn[path] = NO_TIME.format(what=term.never_switching())
            continue
        # a CS lead or lag the controller states is available time of its own
        lead = term.parts.get("lead", term.parts.get("lag"))
        lead_s = float(lead) if isinstance(lead, (int, float)) else 0.0
        used = 0.0
        for key, sign, comp in BUDGET_COMPONENTS[term.id]:
            value = term.parts.get(key)
            if value is None or isinstance(value, str):
                continue
            if key == "bridges_round_trip" and value == 0.0:
                continue
            rows.append((path, comp, sign * float(value)))
            used += sign * float(value)
        available = term.a * period + lead_s
        margin = float(term.margin(period))
        # The split must add up to the engine's own margin; a change in Term.parts that
        # this table does not know would show here rather than draw a wrong bar.
        if not math.isclose(available - used, margin, rel_tol=1e-9,
                            abs_tol=1e-6 * max(abs(available), 1e-15)):
            raise InputError(M.BUDGET_DOES_NOT_ADD_UP,
                             field=f"{term.id} {term.subject}",
                             value=f"{available - used!r} against {margin!r}",
                             expected="pinlib.present.plotdata.BUDGET_COMPONENTS to match "
                                      "pinlib.engines.spi.budget_terms")
        avail[path] = available
        margins[path] = margin
        chk = term_check(term, clock, design.warn_margin, analysis.mode.mode)
        status[path] = chk.status
        sources[path] = chk.source   # the check's own: it names an assumed CS lead or lag
        c = checks.get((term.id, term.subject))
        if c is not None:
            worst[path] = (float(c.value) - float(c.limit), c.status, c.details["corner"])
    return TimingBudgetData(bus.id, clock, period, rows, avail, margins, status, sources,
                            worst, not_drawn)


def _corner_checks(result) -> dict:
    """The checks of a bus's result taken at a corner of its tolerances (their
    ``details["corner"]``), by (id, subject); none when ``result`` is not a result."""
    out = {}
    for c in getattr(result, "checks", None) or ():
        corner = (c.details or {}).get("corner")
        if corner and isinstance(c.value, (int, float)) and isinstance(c.limit, (int, float)):
            out[(c.id, c.subject)] = c
    return out
