"""The series resistor of a line: the design's, or chosen by ``"auto"`` (``Z0 - r_out`` to the
nearest E24 value), and the check reporting the choice."""

from __future__ import annotations

import math

import numpy as np

from pinlib.core import eseries
from pinlib.core import messages as M
from pinlib.engines import memo
from pinlib.engines.pushline.analysis import (
    LineAnalysis,
    _cases,
    _figures_of,
    _fmt,
    matched_resistance,
)
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
    resistor cures, else ``Z0 - r_out`` to the nearest E24 value (Z0 of the stretch at
    the driver, :attr:`LineAnalysis.z0`).  A long line's cases without the resistor only
    explain the choice (its check's comparison): a caller reading summaries only
    (:func:`pinlib.engines.readout.summaries_only`) goes without them."""
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
    if a.rs > 0:
        a.unterminated = bare
        a.cases = _cases(a, a.rs, pullup)
        z0, why = _best_match(a, r_drv, pullup, (clock, clock_line, warn_margin))
        a.z0_matched = z0
        a.rs_ideal = z0 - r_drv
        notes.append(f"auto series resistor: {_fmt(a.rs, 'Ω')} (Z0 {_fmt(z0, 'Ω')} "
                     f"- r_out {_fmt(r_drv, 'Ω')} = {_fmt(a.rs_ideal, 'Ω')}, nearest "
                     f"E24{why}{_matched_words(a, r_drv)})")
    else:
        a.cases = _cases(a, 0.0, pullup) if bare is None else bare
        notes.append(f"auto series resistor: none (the driver's {_fmt(r_drv, 'Ω')} "
                     f"already matches or exceeds Z0 {_fmt(a.z0, 'Ω')})")


#: Driver labels the note on a line of several drivers lists in full (beyond, the first
#: and the last).
_DRIVERS_NAMED = 4


def _matched_words(a: LineAnalysis, r_drv: float) -> str:
    """Whose resistance "auto" matched and how it was made: the mean of a driver's
    fitted rise and fall (at its fast corner, ``pins.<name>.fast``, where its part states
    one), which differs from the pin's own ``r_out`` where the fit moved it."""
    for d in a.drivers:
        m = a.models[d.ref]
        if d.pin.drive == "open-drain" or matched_resistance(m) != r_drv:
            continue
        at = m.fast if m.fast is not None else m
        corner = " at its fast corner" if m.fast is not None else ""
        push = [e.label for e in a.drivers if e.pin.drive != "open-drain"]
        # the model puts a resistor of this value at each driver's own pin (CIPO: one
        # per peripheral), sized for the strongest; a weaker driver's edge slows through
        # its own (its checks say so)
        names = (", ".join(push) if len(push) <= _DRIVERS_NAMED
                 else f"{push[0]}, …, {push[-1]}")
        most = (f", the strongest of the line's {len(push)} drivers: fit one resistor of "
                f"this value at each driver's output ({names})") if len(push) > 1 else ""
        return (f"; r_out: {d.label}{corner}, the mean of its driver model's rise "
                f"{_fmt(at.r_rise, 'Ω')} and fall {_fmt(at.r_fall, 'Ω')}{most}")
    return ""


def _standing(a: LineAnalysis, cases: dict, how: tuple) -> tuple[int, int]:
    """How the checks a series resistor cures (overshoot, undershoot, ringing) stand with
    ``cases``: ``(failing, warning)``; ``how`` is ``(clock, clock_line, warn_margin)``."""
    got = [c.status for c in _si_checks(a, cases, *how) if c.id in _TERMINATION_CURES]
    return got.count("fail"), got.count("warn")


def _standing_words(got: tuple[int, int]) -> str:
    """``(failing, warning)`` as the note says it: ``all pass``, ``have 1 failing and 2
    warning``."""
    fail, warn = got
    parts = [f"{n} {word}" for n, word in ((fail, "failing"), (warn, "warning")) if n]
    return "have " + " and ".join(parts) if parts else "all pass"


def _best_match(a: LineAnalysis, r_drv: float, pullup: dict,
                how: tuple) -> tuple[float, str]:
    """On a line whose sections differ in impedance (a trace into a cable), the Z0 that
    "auto" matches: the driver's section (``a.rs`` and ``a.cases`` on entry), unless
    the match of another section's Z0 brings the overshoot, undershoot and ringing
    checks to a better standing (fewer failing, then fewer warning; of several, the
    best standing, then the smallest resistor, which slows the edge least).  Only what
    changes a check decides: a few millivolts less overshoot do not outweigh the slower
    edge of a larger resistor.  Sets ``a.rs`` and ``a.cases`` to the choice and returns
    its Z0 and words for the note (empty where the sections agree); ``how`` is
    ``(clock, clock_line, warn_margin)``. [Ω]"""
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
    stand = {rs: _standing(a, cases, how) for rs, (_, cases) in tried.items()}
    first = a.rs
    better = [rs for rs in tried if stand[rs] < stand[first]]
    others = ", ".join(f"{_fmt(rs, 'Ω')} for {_fmt(z, 'Ω')}{_of(a, z)}"
                       for rs, (z, _) in tried.items() if rs != first)
    checks = "the overshoot, undershoot and ringing checks"
    if not better:
        if stand[first] == (0, 0):
            return a.z0, (f"; the sections differ in Z0: the driver's section is matched, "
                          f"as {checks} all pass with it (another section's match is taken "
                          f"only to pass a check this one does not: {others})")
        return a.z0, (f"; the sections differ in Z0: the driver's section is matched ("
                      f"{checks} {_standing_words(stand[first])} with it, and no fewer "
                      f"with {others})")
    best = min(better, key=lambda rs: (stand[rs], rs))
    a.rs = best
    z0, a.cases = tried[best]
    return z0, (f"; the sections differ in Z0: with the driver's section matched "
                f"({_fmt(first, 'Ω')} for {_fmt(tried[first][0], 'Ω')}) {checks} "
                f"{_standing_words(stand[first])}, with {_fmt(z0, 'Ω')}{_of(a, z0)} "
                f"matched they {_standing_words(stand[best]).removeprefix('all ')}")


def _of(a: LineAnalysis, z0: float) -> str:
    """`` of LABEL``: what the first stretch of Z0 ``z0`` is (empty if none). [1]"""
    label = next((s.label for s in a.stretches if s.td > 0 and s.z0 == z0), "")
    return f" of {label}" if label else ""


def auto_ideal(a: LineAnalysis) -> tuple[float, float | None]:
    """The driver resistance "auto" matches (the strongest push-pull driver's mean of
    rise and fall, at its fast corner where its part states one: the corner that rings;
    NaN with none) and ``Z0 - r_out`` (None when either is unknown), Z0 of the stretch at
    that driver. [Ω]"""
    d = a.matched_driver()
    r_drv = (matched_resistance(a.models[d.ref])
             if d is not None and d.pin.drive != "open-drain" else math.nan)
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
    if a.z0_matched is not None and a.z0_matched != a.z0:
        # another section's Z0 matched (_best_match): the Z0 rs_ideal is made from
        details["z0_matched"] = a.z0_matched
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
