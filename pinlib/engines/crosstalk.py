"""Crosstalk onto an open-drain line: the noise a fast neighbour puts at each receiver of
the victim, its checks, and the smallest spacing at which every check passes.

The pair is solved in time with its real terminations (:mod:`pinlib.physics.coupledwave`):
the aggressor (:class:`~pinlib.model.design.coupling.Aggressor`, the type of a design's
described edge too) a ramp through its source resistance at the near end, a receiver at
the far end; the victim its pull-up to VDD and, held low, its sink, at the ends given, and
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

import math
from typing import Any

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.core.quantity import format_si
from pinlib.core.valueclass import value_class
from pinlib.core.worklimits import MAX_COUPLED_STEPS
from pinlib.model.design.coupling import Aggressor
from pinlib.model.result import Check, check_max, check_min, soft_limit
from pinlib.physics.coupled import RAMP_FROM_10_90, CoupledLine
from pinlib.physics.coupledwave import EndLoads, coupled_waves_batch
from pinlib.physics.lines.model import C0

__all__ = ["Victim", "EndNoise", "victim_noise", "victim_waves", "noise_batch",
           "noise_of_waves",
           "coupling_checks", "edge_of_passing", "minimum_spacing", "maximum_length"]

_ENDS = ("near", "far")
_STEPS_PER_EDGE = 50  # time steps over the aggressor's ramp (common practice, no source)


@value_class(frozen=True)
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
    source_vih: str = ""       # VIH's source where it differs from ``source_levels``
    #: The rail the held-low line is solved at, where its worst corner differs from the
    #: held-high line's ``vdd`` (None: ``vdd``). [V]
    vdd_low: float | None = None
    #: The level the sink pulls toward (0 for a driver on the line; the far side's
    #: divider for a driver across a pass transistor). [V]
    v_sink: float = 0.0
    source_sink: str = ""      # the sink's driver where it is not on the line itself
    corner_low: str = ""       # the rail corner each held state is taken at (check text)
    corner_high: str = ""
    #: The part values VIL and VIH are (:class:`~pinlib.library.values.Sourced`; None for
    #: the specification's levels): against a soft one a crossing warns where it would
    #: fail (:func:`pinlib.model.result.soft_limit`).
    value_vil: Any = None
    value_vih: Any = None

    def held_level(self, held: str) -> float:
        """The level the line rests at, held ``'low'`` (the sink against the pull-up) or
        ``'high'`` (the rail), before any noise. [V]"""
        if held == "high":
            return self.vdd
        vdd = self.vdd if self.vdd_low is None else self.vdd_low
        return (vdd * self.r_sink + self.v_sink * self.r_pullup) / (self.r_sink
                                                                    + self.r_pullup)


@value_class(frozen=True)
class EndNoise:
    """The victim's worst excursion at one end in one held state: the level reached [V]
    and how long it stays beyond the threshold [s] (0 if it does not cross; ``open``
    True where it had not come back by the end of the window, a lower bound)."""

    level: float
    beyond: float
    open: bool


def _time_grid(line: CoupledLine, length, agg: Aggressor, window: float):
    """The solve's uniform grid and the aggressor's 0-100 % ramp; a grid longer than
    :data:`~pinlib.core.worklimits.MAX_COUPLED_STEPS` is refused before any work."""
    ramp = agg.edge_time * RAMP_FROM_10_90
    er = np.minimum(np.asarray(line.er_eff_even, float), np.asarray(line.er_eff_odd, float))
    tau = float(np.min(np.asarray(length, float) * np.sqrt(er))) / C0
    dt = min(tau, ramp / _STEPS_PER_EDGE)
    steps = (ramp + window) / dt if dt > 0 else math.inf
    if not steps <= MAX_COUPLED_STEPS:
        step = (ramp + window) / MAX_COUPLED_STEPS   # the finest step allowed
        run = step * C0 / math.sqrt(float(np.max(er)))
        edge = step * _STEPS_PER_EDGE / RAMP_FROM_10_90
        raise InputError(M.TOO_MANY_COUPLED_STEPS.format(
            steps=int(min(steps, 1e15)), limit=MAX_COUPLED_STEPS), field="parallel_length",
            value=format_si(float(np.min(length)), "m"),
            expected=f"a run of at least {format_si(run, 'm')} and an edge of at least "
                     f"{format_si(edge, 's')}")
    return np.arange(0.0, ramp + window, dt), ramp


def _loads(vic: Victim, agg: Aggressor, t, ramp, held: str):
    """Near and far EndLoads; held 'low' adds the sink in parallel with the pull-up."""
    va = np.clip(t / ramp, 0.0, 1.0) * agg.swing
    g = {e: 0.0 for e in _ENDS}
    i = {e: 0.0 for e in _ENDS}  # Norton current of the victim's terminations
    vdd = vic.vdd if held == "high" or vic.vdd_low is None else vic.vdd_low
    g[vic.pullup_end] += 1.0 / vic.r_pullup
    i[vic.pullup_end] += vdd / vic.r_pullup
    if held == "low":
        g[vic.sink_end] += 1.0 / vic.r_sink
        i[vic.sink_end] += vic.v_sink / vic.r_sink
    r = {e: (1.0 / g[e] if g[e] > 0 else np.inf) for e in _ENDS}
    v = {e: (i[e] / g[e] if g[e] > 0 else 0.0) for e in _ENDS}
    near = EndLoads((agg.r_source, r["near"]), (0.0, vic.c.get("near", 0.0)),
                    np.vstack([va, np.full_like(t, v["near"])]))
    far = EndLoads((np.inf, r["far"]), (agg.c_far, vic.c.get("far", 0.0)),
                   (0.0, v["far"]))
    return near, far


def _stacked(vic: Victim, agg: Aggressor, t, ramp, nb: int):
    """The loads of ``nb`` pairs held low followed by the same ``nb`` held high.  The
    sources are repeated only where the held states' differ in time: one for all where
    they are the same, a constant per pair where neither moves (the same values, without
    two arrays of pairs x samples)."""
    ends = []
    for k in range(2):  # near, far
        per = [_loads(vic, agg, t, ramp, held)[k] for held in ("low", "high")]
        r = np.repeat(np.array([p.r for p in per], float), nb, axis=0)
        c = np.repeat(np.array([p.c for p in per], float), nb, axis=0)
        vs = [np.asarray(p.v, float).reshape(2, -1) for p in per]
        if all(x.shape[1] == 1 for x in vs):              # constant: (pairs, 2)
            v = np.repeat(np.stack([x[:, 0] for x in vs]), nb, axis=0)
        elif vs[0].shape == vs[1].shape and np.array_equal(vs[0], vs[1]):
            v = np.broadcast_to(vs[0], (2, t.size))       # one for every pair
        else:
            v = np.repeat(np.stack([np.broadcast_to(x, (2, t.size)) for x in vs]), nb,
                          axis=0)
        ends.append(EndLoads(r, c, v))
    return ends


def _excursions(t, rows, threshold, held: str) -> list[EndNoise]:
    """The worst excursion of each waveform of ``rows`` (B, nt) held ``held``, over the
    rising edge's noise and the falling edge's (its sign turned: ``start - dev``), all
    rows at once; the falling edge's where it goes further."""
    low = held == "low"
    dt = t[1] - t[0]
    start = rows[:, :1]
    dev = rows - start
    level = np.empty_like(dev)
    beyond = np.empty(dev.shape, bool)
    edges = []
    for turn in (np.add, np.subtract):  # the rising edge's noise, and the falling edge's
        turn(start, dev, out=level)
        (np.greater if low else np.less)(level, threshold, out=beyond)
        edges.append((level.max(axis=1) if low else level.min(axis=1),
                      np.count_nonzero(beyond, axis=1) * dt, beyond[:, -1].copy()))
    (rise, rise_t, rise_open), (fall, fall_t, fall_open) = edges
    turned = fall > rise if low else fall < rise
    return [EndNoise(*x) for x in zip(np.where(turned, fall, rise).tolist(),
                                      np.where(turned, fall_t, rise_t).tolist(),
                                      np.where(turned, fall_open, rise_open).tolist(),
                                      strict=True)]


def _check_inputs(vic: Victim, agg: Aggressor) -> None:
    for name, val in (("r_pullup", vic.r_pullup), ("r_sink", vic.r_sink),
                      ("edge_time", agg.edge_time), ("r_source", agg.r_source)):
        if not (np.isfinite(val) and val > 0):
            raise InputError(M.PARAMETER_OUT_OF_RANGE.format(name=name), field=name,
                             value=val, expected="a number > 0, finite")


def victim_waves(line: CoupledLine, length, agg: Aggressor, vic: Victim,
                 window: float = 150e-9, *, bitwise: bool | list = True):
    """The victim's waveforms at both ends for B pairs (``line``'s fields and ``length``
    broadcast to (B,)), held low and held high, in one batched solve.  ``bitwise`` (a
    bool or one per pair) False: the solver's faster form, equal to about 1e-13 of the
    waveform's scale rather than to the last bit
    (:func:`~pinlib.physics.coupledwave.coupled_waves_batch`), for a search that reads
    only whether each pair passes.

    Returns ``(t, {(held, end): array (B, nt)})``. [s], [V]
    """
    _check_inputs(vic, agg)
    length = np.atleast_1d(np.asarray(length, float))
    fields = np.broadcast_arrays(np.asarray(line.z_even, float), length)
    nb = fields[0].size
    t, ramp = _time_grid(line, length, agg, window)
    near, far = _stacked(vic, agg, t, ramp, nb)
    pair = CoupledLine(*(np.tile(np.broadcast_to(np.asarray(getattr(line, f), float),
                                                 (nb,)), 2)
                         for f in CoupledLine.__dataclass_fields__))
    w = coupled_waves_batch(pair, np.tile(np.broadcast_to(length, (nb,)), 2), t, near, far,
                            bitwise=np.tile(np.broadcast_to(bitwise, (nb,)), 2))
    out = {}
    for k, held in enumerate(("low", "high")):
        rows = slice(k * nb, (k + 1) * nb)
        out[(held, "near")] = w.near[rows, 1]
        out[(held, "far")] = w.far[rows, 1]
    return t, out


def noise_batch(line: CoupledLine, length, agg: Aggressor, vic: Victim,
                window: float = 150e-9, *, bitwise: bool | list = True) -> list[dict]:
    """:func:`victim_noise` for B pairs in one solve: a list of B such dicts
    (``bitwise`` as :func:`victim_waves`)."""
    t, waves = victim_waves(line, length, agg, vic, window, bitwise=bitwise)
    return noise_of_waves(t, waves, vic)


def noise_of_waves(t, waves: dict, vic: Victim) -> list[dict]:
    """:func:`victim_noise`'s dicts from :func:`victim_waves`' result, one per pair."""
    nb = next(iter(waves.values())).shape[0]
    out: list[dict] = [{} for _ in range(nb)]
    for (held, end), rows in waves.items():
        thr = (vic.vil if held == "low" else vic.vih).get(end)
        if thr is None:
            continue
        for b, noise in enumerate(_excursions(t, rows, thr, held)):
            out[b][(held, end)] = noise
    return out


def victim_noise(line: CoupledLine, length: float, agg: Aggressor, vic: Victim,
                 window: float = 150e-9) -> dict:
    """The victim's worst excursion at each end with a receiver, held low and held high.

    Returns ``{(held, end): EndNoise}`` for held in ('low', 'high') and each end with a
    threshold. ``window`` is how long after the edge the waveform is followed. [s]
    """
    return noise_batch(line, length, agg, vic, window)[0]


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
                            f"VIL {format_si(lim, 'V')}{_at(vic.corner_low)}",
                            subject=subject,
                            warn_margin=warn_margin, details={"end": end, "held": held})
        else:
            lim = vic.vih[end]
            chk = check_min("crosstalk-high", n.level, lim, "V",
                            vic.source_vih or vic.source_levels,
                            f"{where}: noise pulls it to {format_si(n.level, 'V')} against "
                            f"VIH {format_si(lim, 'V')}{_at(vic.corner_high)}",
                            subject=subject,
                            warn_margin=warn_margin, details={"end": end, "held": held})
        rest = vic.held_level(held)
        if rest > lim if held == "low" else rest < lim:
            chk.message += (f"; the held level alone, {format_si(rest, 'V')}, is beyond it "
                            "(a static fault the bus's own checks name)")
        if chk.status == "fail" and not passes_filter:
            chk.status = "warn"
            chk.message += (f" for {format_si(n.beyond, 's')}, shorter than tSP "
                            f"{format_si(t_sp, 's')}: the input filter removes it")
        elif chk.status == "fail" and vic.signal != "scl":
            chk.status = "warn"
            chk.message += _SDA_NOTE
        if held == "low":
            soft_limit(chk, vic.value_vil, what="VIL")
        else:
            soft_limit(chk, vic.value_vih, what="VIH")
        checks.append(chk)
        if n.beyond > 0:
            checks.append(_glitch(n, vic, where, subject, end, held))
    return checks


def _at(corner: str) -> str:
    """The rail corner a check's level and threshold are both taken at, as text."""
    return f" ({corner})" if corner else ""


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


def _passes(noise: dict, vic: Victim) -> bool:
    return all(c.status != "fail" for c in coupling_checks(noise, vic, subject="victim"))


def edge_of_passing(solve, lo: float, hi: float, *, rel=0.01, points: int = 12,
                    passing_above: bool = True) -> float | None:
    """The edge between failing and passing values of a quantity on [lo, hi], found on
    batched log-spaced grids (each ``solve(array) -> list of bools`` one batched solve),
    each grid refining the bracket of the last until it is within ``rel``.

    ``passing_above``: the quantity passes at large values (spacing) and the edge is the
    smallest passing one; otherwise (length) the largest passing one. None where no
    grid point passes; the bound itself where every point passes.
    """
    a, b = np.log(lo), np.log(hi)
    found = None
    while True:
        grid = np.exp(np.linspace(a, b, points))
        ok = np.asarray(solve(grid), bool)
        if passing_above:
            # the smallest point from which every larger one passes
            bad = np.flatnonzero(~ok)
            first = 0 if bad.size == 0 else bad[-1] + 1
            if first >= points:
                return found
            found = float(grid[first])
            if first == 0:
                return found
            a, b = np.log(grid[first - 1]), np.log(grid[first])
        else:
            bad = np.flatnonzero(~ok)
            last = points - 1 if bad.size == 0 else bad[0] - 1
            if last < 0:
                return found
            found = float(grid[last])
            if last == points - 1:
                return found
            a, b = np.log(grid[last]), np.log(grid[last + 1])
        if b - a <= np.log1p(rel):
            return found


def minimum_spacing(make_line, length: float, agg: Aggressor, vic: Victim, lo: float,
                    hi: float, *, rel=0.01) -> float | None:
    """The smallest spacing in [lo, hi] at which no check fails (the noise falls
    monotonically with spacing), on batched grids of spacings (:func:`edge_of_passing`).
    ``make_line(s)`` gives the pair at spacings ``s`` (an array: the physics broadcasts).
    None where even ``hi`` fails; ``lo`` where ``lo`` passes. [m]"""
    def solve(s):  # only pass or fail is read: the solver's faster form
        return [_passes(n, vic)
                for n in noise_batch(make_line(s), length, agg, vic, bitwise=False)]

    return edge_of_passing(solve, lo, hi, rel=rel)


def maximum_length(line: CoupledLine, agg: Aggressor, vic: Victim, lo: float, hi: float,
                   *, rel=0.01) -> float | None:
    """The longest parallel run in [lo, hi] at which no check fails, on batched grids of
    lengths. None where even ``lo`` fails; ``hi`` where ``hi`` passes. [m]"""
    def solve(lengths):  # the shortest run's delay may span one step: the faster form
        return [_passes(n, vic) for n in noise_batch(line, lengths, agg, vic, bitwise=False)]

    return edge_of_passing(solve, lo, hi, rel=rel, passing_above=False)
