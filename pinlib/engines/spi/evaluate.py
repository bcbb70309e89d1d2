"""One SPI bus evaluated: its timing checks and figures (:func:`evaluate_spi`)."""

from __future__ import annotations

import math

import numpy as np

from pinlib.core import messages as M
from pinlib.core.labels import path_label
from pinlib.engines.pushline import (
    EDGE_FRACTION,
)
from pinlib.engines.pushline.analysis import fmt_above, fmt_below
from pinlib.engines.spi.analysis import SpiAnalysis, spi_analysis
from pinlib.engines.spi.budget import Term
from pinlib.engines.spi.margins import max_clock
from pinlib.engines.spi.modecheck import mode_checks
from pinlib.engines.spi.modes import (
    CS_ASSUMED,
    MARGIN_NOT_COMPUTED,
    NO_CLOCK_LIMIT,
    TIMING_REFERENCE,
    _fmt,
)
from pinlib.model.design import Bus, Design
from pinlib.model.result import (
    STATUSES,
    BusResult,
    Check,
    check_max,
    check_min,
    rule_of_thumb,
    soften,
)

_TERM_TEXT = {
    "copi-setup": ("COPI setup at {ref}", "available setup {avail} against t_setup {req}"),
    "copi-hold": ("COPI hold at {ref}", "available hold {avail} against t_hold {req}"),
    "cipo-setup": ("CIPO setup at the controller from {ref}",
                   "round trip leaves {avail} against the controller's t_setup {req}"),
    "cipo-hold": ("CIPO hold at the controller from {ref}",
                  "available hold {avail} against the controller's t_hold {req}"),
    "cs-setup": ("CS setup at {ref}", "CS leads the first edge by {avail} against "
                                      "t_cs_setup {req}"),
    "sclk-high": ("SCLK high pulse at {ref}", "the high pulse lasts {avail} at its input "
                                              "against t_high {req}"),
    "sclk-low": ("SCLK low pulse at {ref}", "the low pulse lasts {avail} at its input "
                                            "against t_low {req}"),
    "cs-hold": ("CS hold at {ref}", "CS stays asserted {avail} after the last edge against "
                                    "t_cs_hold {req}"),
    "cipo-first-bit": ("first CIPO bit at the controller from {ref} (driven when CS "
                       "asserts)", "CS to the first sampling edge leaves {avail} against "
                                   "the controller's t_setup {req}"),
}

#: The bus figures that hold the lowest margin of a term id over the peripherals.
MARGIN_FIGURES = (("cipo_setup_margin", "cipo-setup"), ("copi_setup_margin", "copi-setup"),
                  ("copi_hold_margin", "copi-hold"))


def evaluate_spi(bus: Bus, design: Design, *, analysis: SpiAnalysis | None = None) -> BusResult:
    """Evaluate an SPI bus: its lines and its timing budget at the design's clock.

    Parameters
    ----------
    bus : Bus
        An ``spi`` bus of ``design``. [1]
    design : Design
        The loaded design. [1]
    analysis : SpiAnalysis, optional
        ``spi_analysis(bus, design)`` when the caller already has it (a widget that
        also draws the budget), so that the lines are not solved twice. [1]

    Returns
    -------
    BusResult
        One line result per routed signal; checks ``copi-setup``, ``copi-hold``,
        ``sclk-high``, ``sclk-low`` (a peripheral that records ``t_high``, ``t_low``),
        ``cipo-setup``, ``cipo-hold``, ``cs-setup``, ``cs-hold``, ``cipo-first-bit`` (CPHA 0, a
        peripheral that records ``t_cs_valid``; per peripheral), ``f-max``
        (per part) and ``spi-mode`` (per part that states its modes); figures
        ``max_clock`` [Hz], ``cipo_setup_margin``,
        ``copi_setup_margin`` and ``copi_hold_margin`` (the worst over peripherals,
        available minus required time; None when not computed) [s].
    """
    sa = spi_analysis(bus, design) if analysis is None else analysis
    res = BusResult(id=bus.id, protocol=bus.protocol, workings=sa)
    res.notes.extend(sa.notes)
    res.notes.append(f"SPI mode {sa.mode.mode} (CPOL {sa.mode.cpol}, CPHA {sa.mode.cpha}): "
                     f"idle {sa.mode.idle}, data launched on the {sa.mode.launch_edge} and "
                     f"sampled on the {sa.mode.sample_edge} of SCLK")
    res.notes.append(f"timing reference: {TIMING_REFERENCE}")
    warn = design.warn_margin
    clock = float(bus.clock)
    why: dict[str, str] = {}
    for t in sa.terms:
        chk = res.add(term_check(t, clock, warn, sa.mode.mode))
        if chk.reason is not None:
            why.setdefault(t.id, chk.reason)   # no time exists; the check fails and says why
    worst = {tid: None if math.isnan(m) else float(m)
             for tid, m in lowest_margins(sa.terms, clock).items()}
    for ref, f, source in sa.f_limits:
        res.add(soften(check_max(
            "f-max", clock, f, "Hz", source,
            f"clock {_fmt(clock, 'Hz')} against {ref}'s f_max {_fmt(f, 'Hz')}",
            warn_margin=0.0, subject=ref,  # a rating: at it is inside
            fix=None if clock <= f else M.F_MAX_FIX.format(
                f_max=_fmt(f, "Hz"), clock=_fmt(clock, "Hz"), ref=ref)),
            sa.soft_limits.get(("f-max", ref)), what="f_max"))
    for chk in mode_checks(bus, sa.mode_limits):
        res.add(soften(chk, sa.soft_limits.get(("spi-mode", chk.subject)),
                       what="spi_modes"))
    for la in sa.lines.values():
        res.lines.append(la.result)
    (f_top, by, _), (f_edge, edge_sig) = sa.clock_limits()[0], sa.edge_rule_clock()
    by_label = path_label(by)
    if f_top <= 0:
        res.figure("max_clock", None, "Hz", reason=f"none: no clock satisfies {by_label}")
        res.notes.append(f"highest clock: none, no clock satisfies {by_label}")
    elif math.isfinite(f_top):
        res.figure("max_clock", f_top, "Hz")
        res.notes.append(clock_note(sa, f_top, by))
    else:  # no number to give: in words, never as infinity
        res.figure("max_clock", None, "Hz", reason=NO_CLOCK_LIMIT)
        res.notes.append(f"highest clock: {NO_CLOCK_LIMIT}")
    res.figure("max_clock_limited_by", by, "")
    res.figure("max_clock_edge_rule", f_edge, "Hz")
    if math.isfinite(f_edge):
        res.notes.append(edge_rule_note(sa, f_edge, edge_sig))
    for fig, tid in MARGIN_FIGURES:
        # a figure without a number says why, in place of it (it read "—"); the notes
        # repeat a reason the checks do not give
        reason = None
        if tid not in worst or tid in why:
            reason = MARGIN_NOT_COMPUTED if tid not in worst else f"none, {why[tid]}"
            res.notes.append(f"{fig}: {reason}")
        elif worst[tid] is None:
            reason = "none: a receiver never switches (see the checks)"
        res.figure(fig, worst.get(tid), "s", reason)
    return res


def clock_note(sa: SpiAnalysis, f_top: float, by: str) -> str:
    """The note of the figure ``max_clock`` on one board: the clock ``f_top`` and what
    sets it (``by``, as ``"cipo-setup U2"``)."""
    return (f"highest clock {_fmt(f_top, 'Hz')}: what the timing budget and the parts' "
            f"f_max allow, set by {path_label(by)}" + _assumed_clock_text(sa, by))


def clock_note_at_corner(sa: SpiAnalysis, low: float, by: str, nominal: float,
                         by_nominal: str) -> str:
    """:func:`clock_note` where a corner of the tolerances lowers the figure: the lowest
    clock over the boards and what sets it there (``by``), the board as designed's
    beside it (``nominal``, and ``by_nominal`` where it differs)."""
    also = "" if by_nominal == by else f", set by {path_label(by_nominal)}"
    return M.CLOCK_AT_WORST_CORNER.format(
        low=_fmt(low, "Hz"), nominal=_fmt(nominal, "Hz"), nominal_by=also,
        by=path_label(by)) + _assumed_clock_text(sa, by)


def _edges_word(sa: SpiAnalysis) -> str:
    # on a route the edges are each receiver's at its own point, not a far end's
    return ("receiver's edge (at its own point of a route)"
            if any(la.net is not None for la in sa.lines.values()) else "far-end edge")


def edge_rule_note(sa: SpiAnalysis, f_edge: float, sig: str) -> str:
    """The note of the figure ``max_clock_edge_rule`` on one board, set by line ``sig``."""
    return (f"highest clock by the edge rule of thumb {_fmt(f_edge, 'Hz')}: every "
            f"{_edges_word(sa)} keeps within {EDGE_FRACTION * 100:.0f} % of the period up "
            f"to it (set by {sig}); it warns, it does not limit")


def edge_rule_note_at_corner(sa: SpiAnalysis, low: float, nominal: float, sig: str) -> str:
    """:func:`edge_rule_note` where a corner of the tolerances lowers the figure: the
    lowest over the boards, the board as designed's (set by line ``sig``) beside it."""
    return M.EDGE_RULE_AT_WORST_CORNER.format(
        low=_fmt(low, "Hz"), nominal=_fmt(nominal, "Hz"), line=sig, edges=_edges_word(sa),
        percent=f"{EDGE_FRACTION * 100:.0f}")


def _assumed_clock_text(sa: SpiAnalysis, by: str) -> str:
    """What the highest clock's note adds where the term that sets it (``by``, as
    ``"cipo-first-bit U2"``) rests on a CS lead or lag assumed for a controller that
    records none (:attr:`Term.assumed`): ", " and the words that say so; "" otherwise.
    The figure keeps that term: half a period is what is known of such a controller,
    and leaving the term out would give a clock that no data backs either."""
    t = next((t for t in sa.terms if f"{t.id} {t.subject}" == by), None)
    if t is None or not t.assumed:
        return ""
    return ", " + M.CLOCK_ON_ASSUMED_CS.format(what=CS_ASSUMED[t.assumed][0],
                                               ref=sa.controller.ref, field=t.assumed)


def lowest_margins(terms: list, clock: float) -> dict:
    """The figures ``cipo_setup_margin``, ``copi_setup_margin``...: for each term id, the
    lowest available minus required time over its peripherals at ``clock``, NaN where
    one of them has no finite available time (the figure is then None).  A term's ``b``
    may be an array of boards (:mod:`pinlib.engines.ppcorners`): elementwise. [s]"""
    out: dict = {}
    period = 1.0 / clock
    for t in terms:
        avail = np.asarray(t.available(period), dtype=float)
        m = np.where(np.isfinite(avail), avail - t.required, np.nan)
        out[t.id] = m if t.id not in out else np.minimum(out[t.id], m)
    return out


def term_check(t: Term, clock: float, warn: float, mode: int) -> Check:
    """The check of one timing term at the clock.

    Parameters
    ----------
    t : Term
        The timing requirement. [s]
    clock : float
        The bus's clock. [Hz]
    warn : float
        The design's warning margin. [1]
    mode : int
        The SPI mode, for the check's details. [1]

    Returns
    -------
    Check
        Against the requirement (:meth:`Term.check_margin`, its status by
        :meth:`Term.codes`); where a flight has no finite time (a receiver that never
        crosses its threshold) a failing check without a value, whose ``reason`` says
        why.  A term whose available time rests on an assumed CS lead or lag
        (:attr:`Term.assumed`) is a rule of thumb
        (:func:`pinlib.model.result.rule_of_thumb`): it warns where it would fail, and
        its source and fix say what was assumed.
    """
    title, body = _TERM_TEXT[t.id]
    source = t.check_source
    details = {k: v for k, v in t.parts.items()} | {"mode": mode}
    if t.assumed:
        details["assumed"] = t.assumed
    head = f"{title.format(ref=t.subject)}: "
    avail = float(t.available(1.0 / clock))
    if not math.isfinite(avail):
        reason = (f"{t.never_switching()} never crosses the receiving input's threshold "
                  "(VIH on a rise, VIL on a fall), so no time is available: see the line's "
                  "level checks")
        # it fails on the receiving inputs' thresholds, as the lines' level checks do
        return soften(Check(t.id, "fail", None, t.required, "s", None, source,
                            head + reason + f"; {_fmt(t.required, 's')} required",
                            subject=t.subject, details=details, reason=reason,
                            fix="make the driver's high level reach the receiver's VIH (a "
                                "level translator, or parts on one rail)"),
                      t.levels_soft, what="VIH and VIL", owner=t.owner)
    message = (head + body.format(avail=_fmt(avail, "s"), req=_fmt(t.required, "s"))
               + f" at {_fmt(clock, 'Hz')}")
    if t.margin_unit is None:
        chk = check_min(t.id, avail, t.required, "s", source, message, warn_margin=warn,
                        subject=t.subject, details=details)
        if chk.status != "pass" and not t.assumed:
            chk.fix = _timing_fix(t, avail, t.required * (1.0 + warn))
    else:
        # A requirement of 0 (recorded, or taken for one the part does not record): a
        # fraction of it means nothing, so the margin is the slack in seconds
        slack = float(t.check_margin(avail))
        status = STATUSES[int(t.slack_codes(slack))]
        fix = None
        if status == "fail" and not t.assumed:
            fix = _timing_fix(t, avail, t.required)
        if status == "warn":  # short of a 0 the part does not record: no limit to fail
            fix = (f"record the part's {_required_field(t)} from its datasheet, or "
                   "give the path more time")
            message += (f"; {_fmt(-slack, 's')} short of 0, which is taken for a "
                        "requirement the part does not record: a warning, not a failure")
        chk = Check(t.id, status, avail, t.required, "s", slack, source, message,
                    subject=t.subject, details=details, margin_unit=t.margin_unit, fix=fix)
    if t.assumed:
        # the time available rests on a rule of thumb: no failure (Term.codes)
        chk = rule_of_thumb(chk)
        assumed_fix = M.CS_TIMING_ASSUMED_FIX.format(field=t.assumed,
                                                     what=CS_ASSUMED[t.assumed][0])
        chk.fix = assumed_fix if chk.fix is None else f"{chk.fix}; {assumed_fix}"
    # a requirement no datasheet or standard stands behind: no failure either (Term.codes)
    return soften(chk, t.soft, what=_required_field(t), owner=t.owner)


def _required_field(t: Term) -> str:
    """The part field a term's requirement is (``t_setup``, ``t_cs_hold``...), found
    among its parts by :data:`_REQUIRED_FIELDS`. [1]"""
    return _REQUIRED_FIELDS[next(k for k in _REQUIRED_FIELDS if k in t.parts)]


def _timing_fix(t: Term, avail: float, passing: float) -> str:
    """The fix of a timing term short of ``passing``, the time at which its check passes
    (its requirement, with the design's warning margin where the margin is relative):
    the clock at which it would, rounded down
    (:func:`~pinlib.engines.pushline.analysis.fmt_below`), and what else gives the term
    its time; where the period does not enter it (a CS lead or lag the
    controller records), the lead or lag it needs. [1]"""
    parts = t.parts
    if t.a <= 0.0:
        lead = parts.get("lead", parts.get("lag"))
        need = fmt_above(float(lead) + passing - avail, "s")
        if "lag" in parts:
            return M.TIMING_CS_LAG_FIX.format(lag=_fmt(float(lead), "s"), need=need)
        return M.TIMING_CS_LEAD_FIX.format(lead=_fmt(float(lead), "s"), need=need)
    clock = fmt_below(float(max_clock([t.a], [passing - t.b])), "Hz")
    out = M.TIMING_CLOCK_FIX.format(clock=clock)
    if t.id == "copi-setup":
        out += M.TIMING_COPI_SETUP_ALT.format(ref=t.subject, copi=_fmt(parts["copi_late"], "s"),
                                              t_valid=_fmt(parts["t_valid_controller"], "s"))
    elif t.id == "cipo-setup":
        out += M.TIMING_CIPO_SETUP_ALT.format(ref=t.subject, sclk=_fmt(parts["sclk_late"], "s"),
                                              t_valid=_fmt(parts["t_valid"], "s"),
                                              cipo=_fmt(parts["cipo_late"], "s"))
        if parts["bridges_round_trip"] > 0:
            out += M.TIMING_BRIDGES_ALT.format(bridges=_fmt(parts["bridges_round_trip"], "s"))
    return out


#: The requirement of each term, by the key of its details, as the part records it.
_REQUIRED_FIELDS = {"t_setup": "t_setup", "t_hold": "t_hold", "t_cs_setup": "t_cs_setup",
                    "t_cs_hold": "t_cs_hold", "t_high": "t_high", "t_low": "t_low",
                    "t_setup_controller": "t_setup", "t_hold_controller": "t_hold"}
