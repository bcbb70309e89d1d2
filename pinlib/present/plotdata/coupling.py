"""The arrays the crosstalk charts draw, read from a coupling result's ``workings``
(:class:`pinlib.engines.coupling.CouplingWorkings`): the engine solved every spacing
drawn here while it searched for the minimum spacing; nothing is solved again."""

from __future__ import annotations

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.core.valueclass import value_class

__all__ = ["NoiseSweep", "noise_vs_spacing_data", "NoiseWaves", "noise_waveform_data"]


def _workings(result):
    w = getattr(result, "workings", None)
    if w is None or not hasattr(w, "sweep"):
        raise InputError(M.NO_COUPLING_WORKINGS, field="result",
                         value=getattr(result, "id", None),
                         expected="a coupling result from pinlib check")
    return w


def _excursion(noise: dict, vic) -> float:
    """The largest excursion from the held level at any receiver. [V]"""
    return max(abs(n.level - vic.held_level(held)) for (held, _), n in noise.items())


@value_class(frozen=True)
class NoiseSweep:
    """Peak noise against spacing at the design's parallel length.

    ``spacing`` and ``peak`` [m], [V] sorted by spacing; ``allowed`` the largest
    excursion that keeps every receiver on its side of VIL (held low) and VIH (held
    high) [V]; the design's ``design_spacing`` and ``design_peak``; ``minimum_spacing``
    (None where none passes) [m]; ``length`` [m].

    The minimum spacing is where no check fails: a crossing of VIL or VIH shorter than
    the receivers' input filter ``t_sp`` [s] (None: they need not filter) only warns, so
    the noise may stand above ``allowed`` there.  ``within_spacing`` [m] is the spacing
    from which the swept noise stays within ``allowed`` (interpolated on the log-spaced
    sweep; ``spacing[0]`` where it always does, None where it never does), and
    ``searched_from`` [m] the smallest spacing searched (a minimum spacing there is a
    bound: every spacing searched passes).
    """

    spacing: np.ndarray
    peak: np.ndarray
    allowed: float
    design_spacing: float
    design_peak: float
    minimum_spacing: float | None
    length: float
    within_spacing: float | None = None
    t_sp: float | None = None
    searched_from: float = 0.0


def noise_vs_spacing_data(result) -> NoiseSweep:
    """The sweep the engine solved for a coupling result (see :class:`NoiseSweep`)."""
    w = _workings(result)
    v = w.victim
    items = sorted(w.sweep.items())
    spacing = np.array([s for s, _ in items])
    peak = np.array([_excursion(n, v) for _, n in items])
    # the excursion each threshold allows from the level the line is held at
    lows = [x - v.held_level("low") for e, x in v.vil.items()
            if x is not None and (("low", e) in w.noise)]
    highs = [v.held_level("high") - x for e, x in v.vih.items()
             if x is not None and (("high", e) in w.noise)]
    allowed = min(lows + highs)
    return NoiseSweep(spacing, peak, float(allowed), w.coupling.spacing,
                      _excursion(w.noise, v), w.minimum_spacing, w.coupling.length,
                      _within_from(spacing, peak, float(allowed)), v.t_sp,
                      float(w.spacing_range[0]))


def _within_from(spacing: np.ndarray, peak: np.ndarray, allowed: float) -> float | None:
    """The spacing from which every swept peak is within ``allowed``: between the last
    point beyond it and the next, where the peak (log-interpolated in spacing) equals it."""
    beyond = np.flatnonzero(peak > allowed)
    if beyond.size == 0:
        return float(spacing[0]) if spacing.size else None
    k = int(beyond[-1])
    if k + 1 >= spacing.size:
        return None
    s0, s1, p0, p1 = np.log(spacing[k]), np.log(spacing[k + 1]), peak[k], peak[k + 1]
    return float(np.exp(s0 + (s1 - s0) * (p0 - allowed) / (p0 - p1)))


#: The victim's waveforms are drawn until the last drawn trace has come back within this
#: fraction of its largest excursion from its held level, and on for a quarter of that time
#: again, so that the return shows (a held-high line recovering through its pull-up over
#: 100 ns squeezed a 6 ns held-low pulse into the chart's first pixels).
_QUIET = 0.02
_TAIL = 0.25


@value_class(frozen=True)
class NoiseWaves:
    """The victim's voltage at each end, held low and held high, at the design point:
    ``t`` [s], ``traces`` label -> [V], the thresholds ``v_il``, ``v_ih`` and ``vdd``
    [V]. Each trace is drawn for the aggressor's edge (rising or falling: the same
    noise, its sign turned) that pushes it toward its threshold, as the checks take it."""

    t: np.ndarray
    traces: dict
    v_il: float
    v_ih: float
    vdd: float

    def window(self, labels=None) -> tuple[np.ndarray, dict]:
        """``(t, traces)`` of the traces named in ``labels`` (all by default), cut where
        the last of them has come back within :data:`_QUIET` of its largest excursion
        and a quarter of that time again has passed (the whole record where one never
        does)."""
        traces = {k: v for k, v in self.traces.items() if labels is None or k in labels}
        last = 0.0
        for v in traces.values():
            dev = np.abs(np.asarray(v) - v[0])
            beyond = np.flatnonzero(dev > _QUIET * dev.max())
            if beyond.size:
                last = max(last, float(self.t[min(beyond[-1] + 1, self.t.size - 1)]))
        n = int(np.searchsorted(self.t, last * (1.0 + _TAIL), side="right"))
        if last <= 0.0 or n >= self.t.size:
            return self.t, traces
        n = max(n, 2)
        return self.t[:n], {k: np.asarray(v)[:n] for k, v in traces.items()}


def noise_waveform_data(result) -> NoiseWaves:
    """The victim's waveforms a coupling result carries (see :class:`NoiseWaves`)."""
    w = _workings(result)
    v = w.victim
    traces = {}
    for (held, end), wave in w.waves.items():
        a = np.asarray(wave)
        dev = a - a[0]
        worse = dev.max() >= -dev.min() if held == "low" else -dev.min() >= dev.max()
        traces[f"held {held}, {end} end"] = a if worse else a[0] - dev
    vil = min(x for x in v.vil.values() if x is not None)
    vih = max(x for x in v.vih.values() if x is not None)
    return NoiseWaves(np.asarray(w.t), traces, float(vil), float(vih), float(v.vdd))
