"""A design's ``[[coupling]]`` -> a :class:`~pinlib.model.result.CouplingResult`: the
victim's noise at its receivers, the checks of :mod:`pinlib.engines.crosstalk`, the
minimum spacing and the maximum parallel length.

The victim is taken from its bus's result (the open-drain engine's workings): the
pull-up the design places (the one ``auto`` chose) in parallel with the parts' own, at
the top of its tolerance, the weakest sink of the line's drivers (on a segment with
none, behind translators, the drivers beyond them: :func:`_sink`), and for each held state
one rail corner with the receivers' thresholds at that same corner (the lowest VIL, the
highest VIH): the corner leaving the least room between the held level and the threshold
(:func:`_worst_corners`; the noise's excursion does not depend on the rail), and at each
end of the run the smallest pin capacitance on the line (the rest
of the bus's capacitance lies somewhere along it, where it may not help: leaving it out
keeps the noise an upper bound).
Its pull-up and sink sit at the far end (the aggressor's receiver end), so the end
where the aggressor's edge starts is the victim's high-impedance receiver, which catches
the whole near-end pulse. The input filter's tSP is the mode's (UM10204 table 10,
SMBus's tSP).

The aggressor is a routed push-pull line (its first driver's model from the push-pull
engine: the source ramp as the 10-90 % edge, the output resistance plus the series
resistor, the far end's capacitance and the line's swing) or a described edge.

Both traces have the coupling's geometry; the pair's copper thickness is not modelled
(the coupled-line models take strips of no thickness: a note says so).
"""

from __future__ import annotations

import math
import warnings
from dataclasses import field

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError, ValidityWarning
from pinlib.core.quantity import format_si
from pinlib.core.valueclass import value_class
from pinlib.engines.crosstalk import (
    Victim,
    coupling_checks,
    edge_of_passing,
    noise_batch,
    noise_of_waves,
    victim_waves,
)
from pinlib.engines.opendrain.rules import links
from pinlib.model.design import Aggressor, Coupling, Design
from pinlib.model.result import BusResult, CouplingResult
from pinlib.physics.coupled import RAMP_FROM_10_90, coupled_microstrip, coupled_stripline

__all__ = ["CouplingWorkings", "pair_at", "victim_of", "aggressor_of", "evaluate_coupling",
           "SEARCH_POINTS"]

#: Points of each batched grid of the minimum-spacing and maximum-length searches, and
#: the relative precision they stop at (common practice, no source).
SEARCH_POINTS = 16
SEARCH_REL = 0.02
#: The longest parallel run the search considers. [m] (a board's scale; common practice)
LENGTH_SEARCH_MAX = 1.0


@value_class
class CouplingWorkings:
    """What the engine worked out for one coupling (charts read it).

    ``sweep`` maps each spacing solved (the design's and the search's grids) to its
    ``{(held, end): EndNoise}``; ``t`` and ``waves`` are the victim's waveforms at the
    design point (:func:`pinlib.engines.crosstalk.victim_waves`, row 0).
    """

    coupling: Coupling
    victim: Victim
    aggressor: Aggressor
    t: np.ndarray
    waves: dict
    noise: dict
    sweep: dict = field(default_factory=dict)
    spacing_range: tuple = (0.0, 0.0)
    minimum_spacing: float | None = None
    maximum_length: float | None = None


def pair_at(coupling: Coupling, spacing, notes: list | None = None):
    """The coupled pair of ``coupling``'s geometry at ``spacing`` (array or float); a
    validity warning becomes a note (when ``notes`` is given) or is dropped."""
    g = coupling.geometry
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", ValidityWarning)
        if g.kind == "microstrip":
            pair = coupled_microstrip(g.width, g.height, g.er, spacing)
        else:
            b = g.spacing if g.spacing is not None else 2.0 * g.height + g.thickness
            pair = coupled_stripline(g.width, b, g.er, spacing)
    if notes is not None:
        for w in caught:
            if issubclass(w.category, ValidityWarning) and str(w.message) not in notes:
                notes.append(str(w.message))
    return pair


def _spacing_range(coupling: Coupling) -> tuple[float, float]:
    """Where the search looks: the coupled microstrip's stated range 0.1 <= s/h <= 10;
    for stripline 0.05 to 5 plane spacings (common practice, no source)."""
    g = coupling.geometry
    if g.kind == "microstrip":
        return 0.1 * g.height, 10.0 * g.height
    b = g.spacing if g.spacing is not None else 2.0 * g.height + g.thickness
    return 0.05 * b, 5.0 * b


def victim_of(coupling: Coupling, bus: BusResult, pair, design: Design) -> Victim:
    """The victim line from its bus's result (see the module's description)."""
    lim, seg_ins = bus.workings
    seg = next(s for s in seg_ins if s.segment.id == coupling.segment)
    ln = seg.lines[coupling.victim_signal]
    r_sink, v_sink, sink_text = _sink(coupling, seg, seg_ins)
    r_pullup = seg.r_eff(coupling.victim_signal) * (1.0 + seg.tol)
    lo, hi, texts = _worst_corners(seg.vdd, ln.receivers, r_sink / (r_sink + r_pullup))
    vil = min(ln.receivers, key=lambda r: float(r.v_il[lo]))
    vih = max(ln.receivers, key=lambda r: float(r.v_ih[hi]))
    # the least capacitance a run's end may see: one pin, the smallest on the line
    c_end = min((float(t.pin.c_in.value) if t.pin.c_in is not None else lim.c_pin)
                for t in ln.taps)
    t_sp, source_t_sp = lim.spike_filter()
    ends = ("near", "far")
    return Victim(vdd=float(seg.vdd[hi]), vdd_low=float(seg.vdd[lo]), v_sink=v_sink,
                  source_sink=sink_text,
                  corner_low=texts[lo], corner_high=texts[hi],
                  r_pullup=r_pullup, r_sink=r_sink, c={e: c_end for e in ends},
                  vil={e: float(vil.v_il[lo]) for e in ends},
                  vih={e: float(vih.v_ih[hi]) for e in ends},
                  signal=coupling.victim_signal, t_sp=t_sp, pullup_end="far",
                  sink_end="far",
                  source_levels=f"{vil.tap.label} {_level_source(vil, 'v_il', lim)}",
                  source_vih=f"{vih.tap.label} {_level_source(vih, 'v_ih', lim)}",
                  source_t_sp=source_t_sp, value_vil=vil.v_il_value,
                  value_vih=vih.v_ih_value)


def _sink(coupling: Coupling, seg, seg_ins) -> tuple[float, float, str]:
    """What holds the victim low: ``(r_sink, v_sink, text)``, the weakest sink of the
    line's own drivers (toward 0 V).  On a segment with none (behind pass-transistor
    translators) each driver beyond them is taken in turn as the one pulling low, and the
    network the victim's segment sees through the transistors (their on-resistance, the
    other segments' pull-ups at -tolerance to their rails at the maximum, as the bus's
    Rp(min) takes them) reduced to one source: the one holding the line highest
    (the weakest) is kept."""
    signal = coupling.victim_signal
    own = seg.lines[signal].drivers
    if own:
        return max(float(np.max(d.r_sink)) for d in own), 0.0, ""
    net = {i: [ln for ln in lst if ln.kind == "mosfet"]
           for i, lst in links([(s.index, s.segment) for s in seg_ins]).items()}
    best = None
    for d, where in _drivers_beyond(seg.index, net, seg_ins, signal):
        v, r = _norton([_branch(ln, seg.index, d, net, seg_ins, signal, {seg.index})
                        for ln in net[seg.index]])
        if best is None or (v, r) > best[:2]:
            best = (v, r, f"{d.tap.label} via {where}")
    if best is None:
        raise InputError(M.COUPLING_VICTIM_UNDRIVEN.format(segment=coupling.segment),
                         field="segment", value=coupling.segment,
                         expected="a segment where a device pulls the line low, or one "
                                  "joined to such a segment through MOSFET translators")
    v, r, text = best
    return r, v, text


def _drivers_beyond(start: int, net: dict, seg_ins, signal: str):
    """``(driver, "Q1, Q2")`` of every segment reached from ``start`` through pass
    transistors (a repeater's side among them: it pulls its segment low, to its offset
    where it has one)."""
    seen, queue = {start}, [(start, [])]
    while queue:
        i, path = queue.pop(0)
        for ln in net[i]:
            if ln.other in seen:
                continue
            seen.add(ln.other)
            via = path + [ln.dev.ref]
            for d in seg_ins[ln.other].lines[signal].drivers:
                yield d, ", ".join(via)
            queue.append((ln.other, via))


def _branch(link, came_from: int, d, net: dict, seg_ins, signal: str, seen: set):
    """``(v, r)`` of the source seen into ``link`` from segment ``came_from``: the far
    segment's pull-up, ``d``'s sink where it sits there, and the branches beyond, in
    series with the transistor's on-resistance."""
    far = seg_ins[link.other]
    seen = seen | {link.other}
    parts = [(float(far.vdd[1]), far.r_eff(signal) * (1.0 - far.tol))]
    if any(x is d for x in far.lines[signal].drivers):
        parts.append((float(d.offset or 0.0), float(np.max(d.r_sink))))
    parts += [_branch(ln, link.other, d, net, seg_ins, signal, seen)
              for ln in net[link.other] if ln.other not in seen]
    v, r = _norton(parts)
    return v, r + link.r_on


def _norton(parts) -> tuple[float, float]:
    """Sources ``(v, r)`` in parallel as one. [V], [Ω]"""
    g = sum(1.0 / r for _, r in parts)
    return sum(v / r for v, r in parts) / g, 1.0 / g


_COUNT = {2: "two"}


def _worst_corners(vdd, receivers, k_low: float) -> tuple[int, int, list[str]]:
    """The rail corner (index into ``vdd``) each held state is checked at, and each
    corner's text.  The pair is linear and the rail enters only as the line's static
    level, so the noise's excursion is the same at every corner: the worse corner is the
    one leaving the least room between the held level and the threshold at that same
    corner, held low ``VIL - k_low VDD`` (``k_low`` the sink's divider against the
    pull-up), held high ``VDD - VIH``, the lowest threshold of the line's receivers at
    each corner."""
    n = len(vdd)
    vil = [min(float(r.v_il[i]) for r in receivers) for i in range(n)]
    vih = [max(float(r.v_ih[i]) for r in receivers) for i in range(n)]
    lo = min(range(n), key=lambda i: vil[i] - k_low * float(vdd[i]))
    hi = min(range(n), key=lambda i: float(vdd[i]) - vih[i])
    names = ["low", "high"] if n == 2 else [str(i) for i in range(n)]
    texts = [f"both at the rail's {names[i]} corner {format_si(float(vdd[i]), 'V')}, the "
             f"worse of its {_COUNT.get(n, n)} for this check" for i in range(n)]
    return lo, hi, texts


def _level_source(rx, name: str, lim) -> str:
    """Where a receiver's threshold comes from: its part's value, or the standard's."""
    return rx.tap.source(name) if getattr(rx.tap.pin, name) is not None else lim.source_levels


def aggressor_of(coupling: Coupling, results: dict[str, BusResult]) -> Aggressor:
    """The aggressor's edge: described, or from its line's analysis."""
    a = coupling.aggressor
    if isinstance(a, Aggressor):
        return a
    bus_id, signal = a
    w = results[bus_id].workings
    lines = w.lines if hasattr(w, "lines") else w
    la = lines[signal]
    case = next(iter(la.cases.values()))
    m = case.model
    ramp = min(m.t_ramp_rise, m.t_ramp_fall)
    # a driver with no ramp of its own: its edge into the pins alone
    edge = ramp / RAMP_FROM_10_90 if ramp > 0 else la.edge_alone
    r_drv = min(m.r_rise, m.r_fall)
    made = ((f"series {format_si(case.rs, 'Ω')} + " if case.rs > 0 else "")
            + f"driver {format_si(r_drv, 'Ω')}, the stronger of its model's rise and fall")
    return Aggressor(swing=case.v_high - case.v_low, edge_time=edge,
                     r_source=r_drv + case.rs, c_far=case.c_far, made=made)


def _sweep(coupling, agg, vic, memo: dict, spacings) -> list[bool]:
    """Solve the spacings not yet in ``memo`` in one batch; pass/fail of each."""
    new = [float(s) for s in spacings if float(s) not in memo]
    if new:
        pair = pair_at(coupling, np.array(new))
        for s, n in zip(new, noise_batch(pair, coupling.length, agg, vic, bitwise=False),
                        strict=True):
            memo[s] = n
    return [_passes(memo[float(s)], vic) for s in spacings]


def _passes(noise, vic) -> bool:
    return all(c.status != "fail" for c in coupling_checks(noise, vic, subject="v"))


def solve_coupling(coupling: Coupling, results: dict[str, BusResult], design: Design,
                   notes: list) -> CouplingWorkings:
    """The design point, the minimum spacing and the maximum length of one coupling."""
    pair = pair_at(coupling, coupling.spacing, notes)
    vic = victim_of(coupling, results[coupling.victim_bus], pair, design)
    agg = aggressor_of(coupling, results)
    lo, hi = _spacing_range(coupling)
    # the design point and the search's first grid in one solve, the waves of the first
    # kept for the charts; the design point to the last bit (its figures are reported,
    # and a swap's changes are differences of them), the search's pairs faster (they
    # are read as pass or fail, and drawn)
    first = [float(x) for x in np.exp(np.linspace(np.log(lo), np.log(hi), SEARCH_POINTS))]
    spacings = [coupling.spacing] + first
    t, rows = victim_waves(pair_at(coupling, np.array(spacings)), coupling.length, agg, vic,
                           bitwise=[True] + [False] * len(first))
    memo: dict = {}
    for s, n in zip(spacings, noise_of_waves(t, rows, vic), strict=True):
        memo.setdefault(s, n)
    waves = {k: v[0] for k, v in rows.items()}
    s_min = edge_of_passing(lambda s: _sweep(coupling, agg, vic, memo, s), lo, hi,
                            rel=SEARCH_REL, points=SEARCH_POINTS)
    ramp = agg.edge_time * RAMP_FROM_10_90
    er = max(float(pair.er_eff_even), float(pair.er_eff_odd))
    # the shortest run whose delay covers one time step of the solver (crosstalk._time_grid)
    len_lo = max(1e-3, 1.01 * ramp / 50 * 299_792_458.0 / math.sqrt(er))
    # only pass or fail is read: the solver's faster form (its shortest run's delay is
    # one step)
    l_max = edge_of_passing(
        lambda ls: [_passes(n, vic) for n in noise_batch(pair, ls, agg, vic, bitwise=False)],
        len_lo, LENGTH_SEARCH_MAX, rel=SEARCH_REL, points=SEARCH_POINTS,
        passing_above=False)
    return CouplingWorkings(coupling, vic, agg, t, waves, memo[coupling.spacing], memo,
                            (lo, hi), s_min, l_max)


def evaluate_coupling(coupling: Coupling, results: dict[str, BusResult],
                      design: Design) -> CouplingResult:
    """The checks and figures of one coupling; ``results`` the design's bus results by
    id (the victim's and aggressor's engines have run)."""
    res = CouplingResult(id=coupling.id, victim=coupling.victim,
                         aggressor=coupling.aggressor_name)
    notes: list[str] = []
    w = solve_coupling(coupling, results, design, notes)
    res.workings = w
    subject = f"{coupling.victim_bus} {coupling.victim_signal.upper()}"
    for chk in coupling_checks(w.noise, w.victim, subject=subject,
                               warn_margin=design.warn_margin):
        chk.subject = f"{coupling.victim_signal.upper()} {chk.details['end']} end"
        res.add(chk)
    _figures(res, w)
    res.notes = _notes(w) + notes
    return res


def _figures(res: CouplingResult, w: CouplingWorkings) -> None:
    c = w.coupling
    pair = pair_at(c, c.spacing)
    res.figure("spacing", c.spacing, "m")
    res.figure("parallel_length", c.length, "m")
    res.figure("near_end_coefficient", float(pair.kb), "")
    res.figure("far_end_coefficient", float(pair.kf), "")
    lows = [n.level for (held, _), n in w.noise.items() if held == "low"]
    highs = [n.level for (held, _), n in w.noise.items() if held == "high"]
    res.figure("noise_level_low", max(lows) if lows else None, "V")
    res.figure("noise_level_high", min(highs) if highs else None, "V")
    res.figure("peak_noise", _peak(w.noise, w.victim), "V")
    res.figure("minimum_spacing", w.minimum_spacing, "m")
    res.figure("maximum_parallel_length", w.maximum_length, "m")
    # the ends of the searches: a minimum or maximum at one of them is a bound
    res.figure("spacing_searched_from", w.spacing_range[0], "m")
    res.figure("length_searched_to", LENGTH_SEARCH_MAX, "m")


def _peak(noise: dict, vic: Victim) -> float:
    """The largest excursion from the held level at any receiver. [V]"""
    return max((abs(n.level - vic.held_level(held)) for (held, _), n in noise.items()),
               default=0.0)


def _sink_text(v: Victim) -> str:
    if not v.source_sink:
        return ""
    return f" ({v.source_sink}, toward {format_si(v.v_sink, 'V')})"


def _notes(w: CouplingWorkings) -> list[str]:
    c, a, v = w.coupling, w.aggressor, w.victim
    lo, hi = w.spacing_range
    out = [f"aggressor {c.aggressor_name}: {format_si(a.swing, 'V')} swing, edge "
           f"{format_si(a.edge_time, 's')} (10-90 %), source {format_si(a.r_source, 'Ω')}"
           + (f" ({a.made})" if a.made else ""),
           f"victim {c.victim} ({c.segment}): pull-up {format_si(v.r_pullup, 'Ω')} and "
           f"sink {format_si(v.r_sink, 'Ω')}{_sink_text(v)} at the far end, "
           f"{format_si(v.c['near'], 'F')} (one pin) at each end"]
    if w.minimum_spacing is None:
        out.append(f"no spacing up to {format_si(hi, 'm')} passes at this length")
    elif w.minimum_spacing <= lo:
        out.append(f"every spacing from {format_si(lo, 'm')} passes at this length")
    if w.maximum_length is None:
        out.append("even the shortest run fails at this spacing")
    elif w.maximum_length >= LENGTH_SEARCH_MAX:
        out.append(f"every run up to {format_si(LENGTH_SEARCH_MAX, 'm')} passes at this "
                   "spacing")
    if c.geometry.thickness > 0:
        out.append("the coupled-line models take strips of no thickness: the copper's "
                   f"{format_si(c.geometry.thickness, 'm')} is not modelled")
    return out
