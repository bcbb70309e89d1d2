"""The series resistor of a line: the design's, or chosen by ``"auto"`` (``Z0 - r_out`` to the
nearest E24 value), and the check reporting the choice."""

from __future__ import annotations

import math

import numpy as np

from pinlib.core import eseries
from pinlib.core import messages as M
from pinlib.engines import memo
from pinlib.engines.pushline.analysis import LineAnalysis, _cases, _figures_of, _fmt
from pinlib.engines.pushline.rules import _TERMINATION_CURES, TERMINATION_RULE
from pinlib.engines.pushline.sichecks import _si_checks
from pinlib.engines.readout import explained
from pinlib.model.result import Check


def auto_series_resistor(z0, r_out):
    """The series resistor that "auto" picks for a line: ``Z0 - r_out``, nearest E24.

    Parameters
    ----------
    z0 : float or array_like
        Characteristic impedance of the line's first section. [Ω]
    r_out : float or array_like
        Output resistance of the driver. [Ω]

    Returns
    -------
    numpy.ndarray or float
        The E24 value nearest (by ratio) to ``z0 - r_out``, or 0 where the driver
        alone already matches or exceeds ``z0`` (or ``z0`` is not known). [Ω]

    Notes
    -----
    Series (source) termination: the wave launched into the line is then half the
    swing and the far-end reflection is absorbed at the source (REFERENCES.md, Board
    traces: Rs = Z0 - Rout).

    Examples
    --------
    >>> float(auto_series_resistor(50.0, 20.0))
    30.0
    """
    z0 = np.asarray(z0, dtype=float)
    r_out = np.asarray(r_out, dtype=float)
    ideal = z0 - r_out
    ok = np.isfinite(ideal) & (ideal > 0.0)
    out = np.where(ok, eseries.nearest("E24", np.where(ok, ideal, 1.0)), 0.0)
    return out[()] if out.ndim == 0 else out


def chosen_series_resistor(z0: float, r_drv: float) -> float:
    """:func:`auto_series_resistor` of one line, once per run for the same inputs (a
    position's candidates mostly share their lines' drivers). [Ω]"""
    return memo.remember(("pushline.auto_rs", z0, r_drv),
                         lambda: float(auto_series_resistor(z0, r_drv)))


def _solve_cases(a: LineAnalysis, pullup: dict, clock, clock_line, warn_margin,
                 notes: list) -> None:
    """The series resistor of the line (the design's, or chosen by "auto") and the final
    cases with it."""
    setting = a.line.series_resistor
    if setting == "auto":
        _auto_series(a, pullup, clock, clock_line, warn_margin, notes)
    elif setting == "none" or setting is None:
        a.rs = 0.0
        a.cases = _cases(a, 0.0, pullup)
    else:
        a.rs = float(setting)
        a.cases = _cases(a, a.rs, pullup)


def _auto_series(a: LineAnalysis, pullup: dict, clock, clock_line, warn_margin,
                 notes: list) -> None:
    """``series_resistor = "auto"``: none on a short line that passes what a series
    resistor cures, else ``Z0 - r_out`` to the nearest E24 value.  A long line's cases
    without the resistor only explain the choice (its check's comparison): a caller
    reading summaries only (:func:`pinlib.engines.readout.summaries_only`) goes without
    them."""
    bare = _cases(a, 0.0, pullup) if explained() or not a.long else None
    # Only what a series resistor can cure decides (a slow edge or a level it cannot),
    # so the choice does not depend on the clock; a long line is terminated whatever
    # its checks say, so they are made for a short one only.
    clean = not a.long and all(
        c.status != "fail" for c in _si_checks(a, bare, clock, clock_line, warn_margin)
        if c.id in _TERMINATION_CURES)
    r_drv, a.rs_ideal = auto_ideal(a)
    if clean or a.rs_ideal is None:
        a.rs, a.cases = 0.0, _cases(a, 0.0, pullup) if bare is None else bare
        why = ("electrically short, and no overshoot, undershoot or ringing check "
               "fails without one"
               if clean else "no line impedance or push-pull driver")
        notes.append(f"auto series resistor: none ({why})")
        return
    a.rs = chosen_series_resistor(a.z0, r_drv)
    z0, why = a.z0, ""
    if a.rs > 0:
        a.unterminated = bare
        a.cases = _cases(a, a.rs, pullup)
        z0, why = _best_match(a, r_drv, pullup)
        a.rs_ideal = z0 - r_drv
        notes.append(f"auto series resistor: {_fmt(a.rs, 'Ω')} (Z0 {_fmt(z0, 'Ω')} "
                     f"- r_out {_fmt(r_drv, 'Ω')} = {_fmt(a.rs_ideal, 'Ω')}, nearest "
                     f"E24{why}{_matched_words(a, r_drv)})")
    else:
        a.cases = _cases(a, 0.0, pullup) if bare is None else bare
        notes.append(f"auto series resistor: none (the driver's {_fmt(r_drv, 'Ω')} "
                     f"already matches or exceeds Z0 {_fmt(a.z0, 'Ω')})")


def _matched_words(a: LineAnalysis, r_drv: float) -> str:
    """Whose resistance "auto" matched and how it was made: the mean of a driver's
    fitted rise and fall (at its fast corner, ``pins.<name>.fast``, where its part states
    one), which differs from the pin's own ``r_out`` where the fit moved it."""
    for d in a.drivers:
        m = a.models[d.ref]
        if d.pin.drive == "open-drain" or _matched(m) != r_drv:
            continue
        at = m.fast if m.fast is not None else m
        corner = " at its fast corner" if m.fast is not None else ""
        n = sum(1 for e in a.drivers if e.pin.drive != "open-drain")
        # one resistor for the line: sized for the strongest driver, and in every one's
        # path (a weaker driver's edge slows through it: its checks say so)
        most = (f", the strongest of the line's {n} drivers, each of which drives "
                "through this one resistor") if n > 1 else ""
        return (f"; r_out: {d.label}{corner}, the mean of its driver model's rise "
                f"{_fmt(at.r_rise, 'Ω')} and fall {_fmt(at.r_fall, 'Ω')}{most}")
    return ""


def _swing(cases: dict, receivers) -> float:
    """The worst overshoot or undershoot of ``cases`` over every pin. [V]"""
    f = _figures_of(cases, receivers)
    return max(f["overshoot"], f["undershoot"])


def _best_match(a: LineAnalysis, r_drv: float, pullup: dict) -> tuple[float, str]:
    """On a line whose sections differ in impedance (a trace into a cable), the Z0 that
    "auto" matches: of the resistors that match each section's Z0, the one that leaves
    the least overshoot and undershoot (ties to the first section's, already in
    ``a.cases``).  A short first section hides behind the next: the edge sees the
    impedance of the longer line, and matching the first alone can leave the
    reflection off the rest undamped.  Sets ``a.rs`` and ``a.cases`` to the choice and
    returns its Z0 and words for the note (empty where the sections agree). [Ω]"""
    seen = {a.z0: a.rs}
    for s in a.stretches:
        if s.td > 0 and math.isfinite(s.z0) and s.z0 not in seen:
            seen[s.z0] = chosen_series_resistor(s.z0, r_drv)
    tried = {a.rs: (a.z0, a.cases)}  # by resistor: two Z0 may round to one value
    for z, rs in seen.items():
        if rs > 0 and rs not in tried:
            tried[rs] = (z, _cases(a, rs, pullup))
    if len(tried) < 2:
        return a.z0, ""
    swings = {rs: _swing(cases, a.receivers) for rs, (_, cases) in tried.items()}
    first = a.rs
    best = min(swings, key=swings.get)
    if swings[first] <= swings[best] + 1e-3:  # within a millivolt: the first's
        return a.z0, ""
    others = ", ".join(f"{_fmt(rs, 'Ω')} leaves {_fmt(swings[rs], 'V')}"
                       for rs in tried if rs != best)
    a.rs = best
    z0, a.cases = tried[best]
    label = next((s.label for s in a.stretches if s.td > 0 and s.z0 == z0), "")
    where = f" of {label}" if label else ""
    return z0, (f"; the sections differ in Z0: matching {_fmt(z0, 'Ω')}{where} leaves the "
                f"least overshoot/undershoot, {_fmt(swings[best], 'V')} ({others})")


def _matched(m) -> float:
    """The resistance "auto" matches of one push-pull driver's model: the mean of rise
    and fall, at its fast corner where its part states one (the corner that rings). [Ω]"""
    m = m.fast if m.fast is not None else m
    return 0.5 * (m.r_rise + m.r_fall)


def auto_ideal(a: LineAnalysis) -> tuple[float, float | None]:
    """The driver resistance "auto" matches (the strongest push-pull driver's mean of
    rise and fall, at its fast corner where its part states one: the corner that rings;
    NaN with none) and ``Z0 - r_out`` (None when either is unknown). [Ω]"""
    r_drv = min(_matched(a.models[d.ref]) for d in a.drivers
                if d.pin.drive != "open-drain") \
        if any(d.pin.drive != "open-drain" for d in a.drivers) else math.nan
    return r_drv, (a.z0 - r_drv if math.isfinite(a.z0) and math.isfinite(r_drv) else None)


def swing_fix(a: LineAnalysis) -> str | None:
    """The fix of an overshoot or undershoot past a pin's rating on line ``a`` (where
    the level it settles at does not break the rating alone): none on a lumped line
    (no impedance: no ringing, only a level above the pin's supply, which the check's
    own fix names where it breaks the rating); no series resistor yet,
    the one "auto" fits (``Z0 - r_out`` to E24, named where every section gives the same
    value: :func:`_best_match` tries each otherwise); one already, a larger one; and
    where none applies or the driver alone matches Z0, a slower edge or a shorter
    line."""
    r_drv, ideal = auto_ideal(a)
    if not math.isfinite(a.z0):  # a lumped line does not ring: its level is what is past
        return None
    if a.rs > 0:
        return M.SWING_FIX_LARGER.format(rs=_fmt(a.rs, "Ω"), signal=a.signal)
    if ideal is None:
        return M.SWING_FIX_NO_SERIES
    rs = chosen_series_resistor(a.z0, r_drv)
    if rs <= 0:
        return M.SWING_FIX_MATCHED.format(r_out=_fmt(r_drv, "Ω"), z0=_fmt(a.z0, "Ω"))
    if a.line.series_resistor == "auto":  # it chose none: no check it cures failed
        return M.SWING_FIX_VALUE.format(rs=_fmt(rs, "Ω"), signal=a.signal)
    others = {chosen_series_resistor(s.z0, r_drv) for s in a.stretches
              if s.td > 0 and math.isfinite(s.z0)}
    if others - {rs}:
        return M.SWING_FIX_AUTO_SECTIONS.format(signal=a.signal)
    return M.SWING_FIX_AUTO.format(rs=_fmt(rs, "Ω"), signal=a.signal)


def _termination_check(a: LineAnalysis) -> Check:
    """What "auto" chose, with the figures with and without the resistor.

    Its value is the resistor chosen (0: none).  It has no limit (``None``): the target
    ``Z0 - r_out`` that the E24 value approximates is no bound the choice must keep
    within (0 Ω on a short line is no shortfall, 27 Ω no excess over 26.7 Ω), so the
    check always passes and the target is in its message and ``details["rs_ideal"]``."""
    with_f = _figures_of(a.cases, a.receivers)
    details = {"rs_chosen": a.rs, "rs_ideal": a.rs_ideal, "z0": a.z0,
               "delay_to_edge_ratio": a.ratio, "with": with_f}
    if a.unterminated is not None:
        details["without"] = _figures_of(a.unterminated, a.receivers)
    elif a.rs > 0:  # summaries only: the comparison was not worked out
        details["without"] = None
    else:
        details["without"] = with_f
    wo = details["without"]
    target = ("" if a.rs <= 0 or a.rs_ideal is None else
              f" (Z0 - r_out = {_fmt(a.rs_ideal, 'Ω')}, nearest E24)")
    if a.unterminated is not None:
        text = (f"auto: {_fmt(a.rs, 'Ω')}{target}; overshoot {_fmt(wo['overshoot'], 'V')} -> "
                f"{_fmt(with_f['overshoot'], 'V')}, rise {_fmt(wo['edge_rise_time'], 's')} "
                f"-> {_fmt(with_f['edge_rise_time'], 's')}")
    else:
        text = ("auto: no series resistor needed" if a.rs <= 0 else
                f"auto: {_fmt(a.rs, 'Ω')}{target} (the edges without it not worked out)")
    return Check("series-termination", "pass", a.rs, None, "Ω", None,
                 TERMINATION_RULE, text, details=details)
