"""Crosstalk onto an open-drain line: the noise a fast neighbour puts at each receiver of
the victim, its checks, and the smallest spacing at which every check passes.

The pair is solved in time with its real terminations (:mod:`pinlib.physics.coupledwave`):
the aggressor a ramp through its source resistance at the near end, a receiver at the
far end; the victim its pull-up to VDD and, held low, its sink, at the ends given, and
a receiver's capacitance at each end. The system is linear, so the falling edge's noise
is the rising edge's with its sign turned: each held state takes the polarity that
pushes it toward the threshold.

Checks at each end of the victim, for a held-low and a held-high line:

* ``crosstalk-low`` / ``crosstalk-high``: the level the noise reaches against the
  receiver's VIL (held low) or VIH (held high), from its part data (``source`` names
  it). It fails where the level crosses and the glitch is longer than the input filter's
  tSP; a crossing the filter removes warns.
* ``crosstalk-glitch``: the time the level stays beyond the threshold against tSP
  (UM10204: Fast-mode and Fast-mode Plus inputs suppress spikes shorter than 50 ns;
  Standard-mode inputs need not, so any crossing passes). On SCL a glitch that passes
  fails (a second clock edge); on SDA it warns (data is sampled only while SCL is high).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.core.quantity import format_si
from pinlib.model.result import Check, check_max, check_min
from pinlib.physics.coupled import RAMP_FROM_10_90, CoupledLine
from pinlib.physics.coupledwave import EndLoads, coupled_waves
from pinlib.physics.lines.model import C0

__all__ = ["Aggressor", "Victim", "EndNoise", "victim_noise", "coupling_checks",
           "minimum_spacing"]

_ENDS = ("near", "far")
_STEPS_PER_EDGE = 50  # time steps over the aggressor's ramp (common practice, no source)


@dataclass(frozen=True)
class Aggressor:
    """The neighbour's edge: swing [V], 10-90 % edge time [s], source resistance [Ω] at
    the near end, receiver capacitance [F] at the far end."""

    swing: float
    edge_time: float
    r_source: float
    c_far: float = 0.0


@dataclass(frozen=True)
class Victim:
    """The open-drain line: supply and pull-up (at ``pullup_end``), the sink that holds it
    low (at ``sink_end``), the receivers' capacitance and thresholds at each end
    (``None`` where no receiver sits), its signal and the input filter's tSP (None where
    the inputs need not filter)."""

    vdd: float
    r_pullup: float
    r_sink: float
    c: dict                    # end -> capacitance [F]
    vil: dict                  # end -> VIL [V] or None
    vih: dict                  # end -> VIH [V] or None
    signal: str = "scl"
    t_sp: float | None = None
    pullup_end: str = "near"
    sink_end: str = "near"
    source_levels: str = "the receiver's part data"
    source_t_sp: str = ""


@dataclass(frozen=True)
class EndNoise:
    """The victim's worst excursion at one end in one held state: the level reached [V]
    and how long it stays beyond the threshold [s] (0 if it does not cross; ``open``
    True where it had not come back by the end of the window, a lower bound)."""

    level: float
    beyond: float
    open: bool


def _time_grid(line: CoupledLine, length: float, agg: Aggressor, window: float):
    ramp = agg.edge_time * RAMP_FROM_10_90
    tau = length * np.sqrt(min(float(line.er_eff_even), float(line.er_eff_odd))) / C0
    dt = min(tau, ramp / _STEPS_PER_EDGE)
    return np.arange(0.0, ramp + window, dt), ramp


def _loads(vic: Victim, agg: Aggressor, t, ramp, held: str):
    """Near and far EndLoads; held 'low' adds the sink in parallel with the pull-up."""
    va = np.clip(t / ramp, 0.0, 1.0) * agg.swing
    g = {e: 0.0 for e in _ENDS}
    i = {e: 0.0 for e in _ENDS}  # Norton current of the victim's terminations
    g[vic.pullup_end] += 1.0 / vic.r_pullup
    i[vic.pullup_end] += vic.vdd / vic.r_pullup
    if held == "low":
        g[vic.sink_end] += 1.0 / vic.r_sink
    r = {e: (1.0 / g[e] if g[e] > 0 else np.inf) for e in _ENDS}
    v = {e: (i[e] / g[e] if g[e] > 0 else 0.0) for e in _ENDS}
    near = EndLoads((agg.r_source, r["near"]), (0.0, vic.c.get("near", 0.0)),
                    np.vstack([va, np.full_like(t, v["near"])]))
    far = EndLoads((np.inf, r["far"]), (agg.c_far, vic.c.get("far", 0.0)),
                   (0.0, v["far"]))
    return near, far


def _excursion(t, v, threshold, held: str) -> EndNoise:
    dev = v - v[0]
    best = None
    for sign in (1.0, -1.0):  # the rising edge's noise, and the falling edge's
        level = v[0] + sign * dev
        beyond = level > threshold if held == "low" else level < threshold
        dt = t[1] - t[0]
        worst = level.max() if held == "low" else level.min()
        cand = EndNoise(float(worst), float(np.count_nonzero(beyond) * dt), bool(beyond[-1]))
        if best is None or (cand.level > best.level if held == "low"
                            else cand.level < best.level):
            best = cand
    return best


def victim_noise(line: CoupledLine, length: float, agg: Aggressor, vic: Victim,
                 window: float = 150e-9) -> dict:
    """The victim's worst excursion at each end with a receiver, held low and held high.

    Returns ``{(held, end): EndNoise}`` for held in ('low', 'high') and each end with a
    threshold. ``window`` is how long after the edge the waveform is followed. [s]
    """
    for name, val in (("r_pullup", vic.r_pullup), ("r_sink", vic.r_sink),
                      ("edge_time", agg.edge_time), ("r_source", agg.r_source)):
        if not (np.isfinite(val) and val > 0):
            raise InputError(M.PARAMETER_OUT_OF_RANGE.format(name=name), field=name,
                             value=val, expected="a number > 0, finite")
    t, ramp = _time_grid(line, length, agg, window)
    out = {}
    for held in ("low", "high"):
        near, far = _loads(vic, agg, t, ramp, held)
        w = coupled_waves(line, length, t, near, far)
        for end, wave in (("near", w.near[1]), ("far", w.far[1])):
            thr = (vic.vil if held == "low" else vic.vih).get(end)
            if thr is not None:
                out[(held, end)] = _excursion(t, wave, thr, held)
    return out


def coupling_checks(noise: dict, vic: Victim, *, subject: str, warn_margin=0.10) -> list[Check]:
    """The checks of :func:`victim_noise`'s result (see the module's description)."""
    checks = []
    t_sp = vic.t_sp or 0.0
    for (held, end), n in noise.items():
        passes_filter = n.beyond > t_sp
        where = f"{subject} {end} end held {held}"
        if held == "low":
            lim = vic.vil[end]
            chk = check_max("crosstalk-low", n.level, lim, "V", vic.source_levels,
                            f"{where}: noise lifts it to {format_si(n.level, 'V')} against "
                            f"VIL {format_si(lim, 'V')}", subject=subject,
                            warn_margin=warn_margin, details={"end": end, "held": held})
        else:
            lim = vic.vih[end]
            chk = check_min("crosstalk-high", n.level, lim, "V", vic.source_levels,
                            f"{where}: noise pulls it to {format_si(n.level, 'V')} against "
                            f"VIH {format_si(lim, 'V')}", subject=subject,
                            warn_margin=warn_margin, details={"end": end, "held": held})
        if chk.status == "fail" and not passes_filter:
            chk.status = "warn"
            chk.message += (f" for {format_si(n.beyond, 's')}, shorter than tSP "
                            f"{format_si(t_sp, 's')}: the input filter removes it")
        elif chk.status == "fail" and vic.signal != "scl":
            chk.status = "warn"
            chk.message += _SDA_NOTE
        checks.append(chk)
        if n.beyond > 0:
            checks.append(_glitch(n, vic, where, subject, end, held))
    return checks


_SDA_NOTE = " (SDA: a data error only where it falls while SCL is high; a warning)"


def _glitch(n: EndNoise, vic: Victim, where: str, subject: str, end: str, held: str) -> Check:
    """The time beyond the threshold against the input filter's tSP."""
    bound = "at least " if n.open else ""
    details = {"end": end, "held": held}
    if vic.t_sp is None:  # no filter: every crossing reaches the logic
        chk = Check("crosstalk-glitch", "fail", n.beyond, None, "s", None,
                    vic.source_t_sp or _NO_FILTER,
                    f"{where}: beyond the threshold for {bound}{format_si(n.beyond, 's')} "
                    f"and these inputs need not filter spikes", subject=subject,
                    details=details, reason="no input filter")
    else:
        chk = check_max("crosstalk-glitch", n.beyond, vic.t_sp, "s", vic.source_t_sp,
                        f"{where}: beyond the threshold for {bound}"
                        f"{format_si(n.beyond, 's')} against tSP {format_si(vic.t_sp, 's')}",
                        subject=subject, warn_margin=0.0, details=details)
    if chk.status == "fail" and vic.signal != "scl":
        chk.status = "warn"
        chk.message += _SDA_NOTE
    elif chk.status == "fail":
        chk.message += " (SCL: a second clock edge)"
    return chk


_NO_FILTER = "I2C-bus specification UM10204: Standard-mode inputs need not suppress spikes"


def minimum_spacing(make_line, length: float, agg: Aggressor, vic: Victim, lo: float,
                    hi: float, *, rel=0.01) -> float | None:
    """The smallest spacing in [lo, hi] at which no check fails, by bisection in log
    spacing (the noise falls monotonically with spacing). ``make_line(s)`` gives the
    pair at spacing ``s``. None where even ``hi`` fails; ``lo`` where ``lo`` passes. [m]"""
    def ok(s):
        checks = coupling_checks(victim_noise(make_line(s), length, agg, vic), vic,
                                 subject="victim")
        return all(c.status != "fail" for c in checks)

    if not ok(hi):
        return None
    if ok(lo):
        return lo
    a, b = np.log(lo), np.log(hi)
    while b - a > np.log1p(rel):
        m = 0.5 * (a + b)
        a, b = (a, m) if ok(np.exp(m)) else (m, b)
    return float(np.exp(b))
