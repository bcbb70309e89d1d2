"""Explanations of the open-drain engine: advice for a pull-up window that fails, the
sink model the levels share, which of two lines' figures is the segment's (``_WORST``,
the array engine's figures) and a segment's notes, drawn from the gathered inputs."""

from __future__ import annotations

import math

import numpy as np

from pinlib.core import eseries
from pinlib.core.labels import few_named
from pinlib.engines.limits import OpenDrainLimits
from pinlib.engines.opendrain.inputs import (
    LineInputs,
    SegmentInputs,
    _f,
)
from pinlib.engines.opendrain.rules import (
    window_open,
)
from pinlib.model.result import Group
from pinlib.physics import pullup as pu


def _series_range(series: str, lo: float, hi: float) -> str:
    if not (0 < lo <= hi and math.isfinite(lo)):
        return ""
    hi_c = min(hi, 1e9)
    vals = eseries.values_in_range(series, lo, hi_c) if hi_c >= lo else np.array([])
    if vals.size == 0:
        return f"no {series} value lies in it"
    shown = ", ".join(_f(x, "Ω") for x in vals[:6]) + (" …" if vals.size > 6 else "")
    return f"{series}: {shown}"


def window_advice(lim: OpenDrainLimits, seg_in: SegmentInputs, ln: LineInputs, m_lo: float,
                   m_hi: float) -> str:
    """What would make the pull-up window work, quantified."""
    tol = seg_in.tol
    eff_lo, eff_hi = ln.rp_min / (1 - tol), ln.rp_max / (1 + tol)
    tips: list[str] = []
    # 1. every contributor in parallel below Rp(min): which of the parts' own to remove
    if ln.part_pullups and m_lo < 0:
        keep = sorted(ln.part_pullups, key=lambda p: p["value"])
        removed = []

        def fits(rest) -> bool:
            r_rest = float(pu.parallel(*[p["value"] for p in rest])) if rest else math.inf
            if seg_in.auto:  # the resistor will be re-chosen: the parts must leave room
                return r_rest > eff_lo
            return float(pu.parallel(seg_in.pullup, r_rest)) >= eff_lo

        while keep and not fits(keep):
            removed.append(keep.pop(0))
        if removed and fits(keep):
            names = ", ".join(f"{p['ref']} {p['pin'].upper()} ({_f(p['value'], 'Ω')}, "
                              f"{p['kind']})" for p in removed)
            now = ln.r_parts if seg_in.auto else float(pu.parallel(seg_in.pullup, ln.r_parts))
            what = "the parts' own pull-ups in parallel give" if seg_in.auto else \
                "every pull-up in parallel gives"
            tips.append(f"{what} {_f(now, 'Ω')}, below Rp(min) "
                        f"{_f(ln.rp_min, 'Ω')}: remove or disable {names}")
    if eff_lo <= eff_hi:
        # the window exists: the value is outside it
        if math.isfinite(ln.r_parts):
            r_q = ln.r_parts

            def need(eff):
                return math.inf if eff >= r_q else eff * r_q / (r_q - eff)

            lo_r, hi_r = need(eff_lo), need(eff_hi)
        else:
            lo_r, hi_r = eff_lo, eff_hi
        if lo_r <= hi_r and math.isfinite(lo_r):
            tips.append(f"a design resistor between {_f(lo_r, 'Ω')} and "
                        f"{_f(hi_r, 'Ω') if math.isfinite(hi_r) else 'no upper limit'} fits "
                        f"({_series_range(seg_in.segment.pullup_series, lo_r, hi_r)})")
        return "; ".join(tips)
    return "; ".join(tips + _no_fit_advice(lim, seg_in, ln))


def _no_fit_advice(lim: OpenDrainLimits, seg_in: SegmentInputs, ln: LineInputs) -> list[str]:
    """Quantified ways out when no passive pull-up fits the window."""
    tol = seg_in.tol
    v_max = float(seg_in.vdd[1])
    tips: list[str] = []
    rp_min, label, weakest = ln.rp_min, ln.rp_min_label, ln.rp_min_driver
    own = ln.own
    if own is not None and own[1] is not None and not window_open(own[0], ln.rp_max, tol):
        # this segment's own sinks cannot meet its Rp(max), the translator aside: the
        # advice of a single segment, with the Rp(min) across the translator beside it
        rp_min, weakest, label = own
        across = (f"with them {_f(ln.rp_min, 'Ω')}" if math.isfinite(ln.rp_min) else
                  # an infinite Rp(min): no number to give
                  "with them no pull-up works: the sinks cannot carry the current of the "
                  "pull-ups across the translator")
        tips.append(f"no resistor fits: Rp(max) {_f(ln.rp_max, 'Ω')} at Cb {_f(ln.cb, 'F')} "
                    f"is below Rp(min) {_f(rp_min, 'Ω')} of this segment's own sinks (weakest "
                    f"{label}), before the pull-ups across the translator ({across}); the "
                    "pull-up is a compromise")
    elif not math.isfinite(rp_min):
        if seg_in.blocked_by:
            tips.append(f"the weakest sink ({label}) cannot even carry the current of the "
                        f"pull-up across the translator: segment {', '.join(seg_in.blocked_by)} "
                        "has no window of its own and its pull-up is a compromise; change that "
                        "segment first (see its pullup-window)")
        else:
            tips.append(f"the weakest sink ({label}) cannot even carry the current the "
                        "pull-ups across the translator already draw: raise those pull-ups, or "
                        "use drivers with a larger rating or an active translator")
        return tips
    else:
        tips.append(f"no resistor fits: Rp(min) {_f(rp_min, 'Ω')} (weakest sink "
                    f"{label or '—'}) is above Rp(max) "
                    f"{_f(ln.rp_max, 'Ω')} at Cb {_f(ln.cb, 'F')}")
    if lim.cb_max is not None and ln.cb > FAR_BEYOND_CB * lim.cb_max:
        # thousands of buffer segments or amperes of sink would read as advice
        tips.append(f"Cb {_f(ln.cb, 'F')} is {ln.cb / lim.cb_max:.0f} times {lim.label}'s "
                    f"{_f(lim.cb_max, 'F')}: no pull-up, buffer or driver makes this load an "
                    "I2C line; check the capacitance entered (extra_capacitance, cable and "
                    "trace lengths)")
        return tips
    eff_lo = rp_min / (1 - tol)
    cb_lim = float(pu.cb_limit(lim.tr_max, rp_min, tol, ln.rise_factor))
    own = _own_pin(weakest)
    if not ln.cb <= FAR_BEYOND_CB * cb_lim or cb_lim < own:
        # the sink, not the load, is what is wrong (a 3 nA rating allows 340 aF): cutting
        # the load thousands of times, or as many buffer segments, would read as advice
        # (or less than the weakest sink's own pin: no segment can be that light)
        less = (f"less than {weakest.tap.label}'s own pin ({_f(own, 'F')})" if cb_lim < own
                else f"{_ratio(ln.cb, cb_lim)} times less than {_f(ln.cb, 'F')}")
        tips.append(f"at that Rp(min) only a Cb under {_f(cb_lim, 'F')} rises in time, "
                    f"{less}: no shorter trace, buffer or active pull-up makes up for so "
                    "weak a sink; check its i_ol, or use a stronger driver")
        tips.extend(_sink_advice(v_max, ln, tol, weakest))
        return tips
    tips.append(f"bring Cb below {_f(cb_lim, 'F')} (now {_f(ln.cb, 'F')}: "
                f"{_f(ln.cb - cb_lim, 'F')} less: shorter traces or cable, fewer loads)")
    lower = lim.lower()
    if lower is not None:
        f_low = float(lower.rise_factor(float(seg_in.vdd[0])))
        rpmax_low = lower.tr_max / (f_low * ln.cb)
        if rp_min * (1 + tol) / (1 - tol) <= rpmax_low:
            fitting = _series_range(seg_in.segment.pullup_series, eff_lo, rpmax_low / (1 + tol))
            tips.append(f"{lower.label} (tr ≤ {_f(lower.tr_max, 's')}, "
                        f"{_f(lower.f_max, 'Hz')}) allows Rp up to {_f(rpmax_low, 'Ω')}: "
                        f"{fitting}")
        else:
            tips.append(f"even {lower.label} allows only {_f(rpmax_low, 'Ω')}")
    n = max(2, math.ceil(ln.cb / cb_lim)) if cb_lim > 0 else 2
    tips.append(f"a bus buffer splitting the bus into {n} segments of under {_f(cb_lim, 'F')} each")
    v_lo, v_hi = lim.measuring_levels(float(seg_in.vdd[1]))
    i_cs = float(pu.current_source_needed(ln.cb, float(v_lo), float(v_hi), lim.tr_max))
    i_weak = weakest.i_ol if weakest is not None else math.nan
    ok_cs = "" if i_cs < i_weak else f" — more than the weakest sink's {_f(i_weak, 'A')}"
    tips.append(f"an active (current-source) pull-up of at least {_f(i_cs, 'A')} "
                f"(UM10204 rev. 6 §5.1){ok_cs}")
    return tips + _sink_advice(v_max, ln, tol, weakest)


def _own_pin(weakest) -> float:
    """The capacitance of the weakest sink's own pin (0 where it states none): no segment
    of a split bus that holds it is lighter. [F]"""
    c_in = getattr(getattr(getattr(weakest, "tap", None), "pin", None), "c_in", None)
    return float(c_in.value) if c_in is not None else 0.0


def _sink_advice(v_max: float, ln: LineInputs, tol: float, weakest) -> list[str]:
    """The sink current that would open the window at Rp(max), against the weakest's."""
    if weakest is None:
        return []
    d = weakest
    v_ol = float(d.v_ol_low[1])  # Rp(min)'s point (the low end of its own rail)
    i_need = float(pu.sink_current_needed(v_max, v_ol, ln.rp_max, tol))
    return [f"drivers sinking at least {_f(i_need, 'A')} at {_f(v_ol, 'V')} "
            f"(the weakest, {d.tap.label}, is rated {_f(d.i_ol, 'A')})"]


def _ratio(big: float, small: float) -> str:
    """``big / small`` as a count a person reads (no infinity: "over a billion")."""
    r = big / small if small > 0 else math.inf
    return f"{r:,.0f}" if r < 1e9 else "over a billion"


#: A bus capacitance this many times its mode's limit gets no sizing advice, only the
#: question whether it was entered right (common practice, no source: past it the
#: buffers and sink currents the advice would name are not parts anyone fits).
FAR_BEYOND_CB = 10.0


#: The one sink model of a line's checks, stated in the v-ol and fall-time details.
SINK_MODEL = ("I ≥ min(V·IOL/VOL, IOL): the datasheet point (VOL at IOL) read as a "
               "resistance VOL/IOL below VOL and as a constant current above it; the v-ol "
               "check and the fall-time bound both use it: where the pull-ups draw more than "
               "IOL the line settles where they carry IOL, above VOL (across a pass "
               "transistor the v-ol check keeps the resistance: the transistor's own limit "
               "is not modelled)")


_WORST = {"bus_capacitance": max, "pullup": min, "rp_min": max, "rp_max": min, "rise_time": max,
          "rise_time_10_90": max, "fall_time": max, "v_ol": max, "v_oh": min,
          "noise_margin_low": min, "noise_margin_high": min, "pullup_power": max}
_UNITS = {"bus_capacitance": "F", "pullup": "Ω", "rp_min": "Ω", "rp_max": "Ω", "rise_time": "s",
          "rise_time_10_90": "s", "fall_time": "s", "v_ol": "V", "v_oh": "V",
          "noise_margin_low": "V", "noise_margin_high": "V", "pullup_power": "W"}


def segment_notes(grp: Group, lim: OpenDrainLimits, seg_in: SegmentInputs, r_eff) -> None:
    """A segment's notes: the rise definition, the chosen pull-up, the contributors in
    parallel (``r_eff(signal)``: every pull-up of a line in parallel), the trace
    capacitance, and every default taken for a value not stated."""
    if lim.rise_definition == "smbus":
        grp.notes.insert(0, f"rise and fall times follow the SMBus definition: {lim.rise_text}; "
                            "the figure 'Rise time, 10–90 %' is 10–90 % of VDD")
    if seg_in.auto:
        grp.notes.append(f"pull-up chosen from {seg_in.segment.pullup_series}: "
                         f"{_f(seg_in.pullup, 'Ω')} (±{_f(seg_in.tol, '%')}), the value with the "
                         "largest smaller margin to Rp(min) and Rp(max) on both lines (each a "
                         "fraction of its bound, at the tolerance's ends: R/Rp(min)−1 and "
                         "1−R/Rp(max); on a wide window this lands near twice Rp(min))")
    for sig, ln in seg_in.lines.items():
        if ln.part_pullups:
            parts = "; ".join(f"{p['ref']} {p['pin']} {_f(p['value'], 'Ω')} ({p['kind']})"
                              for p in ln.part_pullups)
            grp.notes.append(f"{sig.upper()} pull-up contributors in parallel: design resistor "
                             f"{_f(seg_in.pullup, 'Ω')}; {parts} → {_f(r_eff(sig), 'Ω')}")
    if seg_in.cb_notes:
        grp.notes.append("trace capacitance: " + "; ".join(dict.fromkeys(seg_in.cb_notes)))
    grp.notes.extend(seg_in.notes)
    for text, where in seg_in.defaults.items():
        grp.notes.append(f"{text}: {few_named(where)}")
