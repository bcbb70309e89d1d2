"""Pass 2 of the open-drain engine for one bus: every check of every segment, with its
message and fix.

A line is taken at the worst corners: pull-up at ± its tolerance, the rail at ± its
tolerance, capacitances at their stored maxima; then the segment's timing,
voltage-domain, power-state and bridging-part checks.  Worst cases are taken over the
two corners of the pull-up rail (``VDD·(1 − tol)`` and ``VDD·(1 + tol)``).
"""

from __future__ import annotations

import numpy as np

from pinlib.engines.opendrain.arith import fall_bounds, low_levels
from pinlib.engines.opendrain.bridges import bridge_checks, overdrive
from pinlib.engines.opendrain.explain import (
    SINK_MODEL,
    fall_basis,
    segment_figures,
    segment_notes,
    window_advice,
)
from pinlib.engines.opendrain.inputs import (
    LineInputs,
    SegmentInputs,
    _corner_values,
    _default,
    _f,
    _taps,
    value_source,
)
from pinlib.engines.opendrain.rules import (
    _COMMON,
    _CORNERS,
    CLAMP_DROP,
    GATE_OVERDRIVE,
    SIGNALS,
    abs_max_follows,
    controller_of,
    counted_clock,
    data_sources,
    delays,
    links,
    supply_margin,
    supply_range_check,
    worst_index,
    worst_per_row,
)
from pinlib.model.result import (
    Check,
    Group,
    check_max,
    check_min,
    check_true,
    max_margin,
    min_margin,
)
from pinlib.physics import pullup as pu
from pinlib.physics.rc import RISE_10_90


class Context:
    def __init__(self, bus, design, lim, seg_ins):
        self.bus = bus
        self.design = design
        self.lim = lim
        self.seg_ins = seg_ins
        self.warn = design.warn_margin
        self.clock = bus.clock if bus.clock is not None else lim.f_max
        segs = [(s.index, s.segment) for s in seg_ins]
        self.links = links(segs)
        self.controller, self.ctrl_seg = controller_of(bus, segs)
        self.delay = delays(self.ctrl_seg, self.links)

    def kw(self, **extra):
        return {"warn_margin": self.warn, **extra}


def _window_check(ctx: Context, seg_in: SegmentInputs, ln: LineInputs) -> Check:
    lim = ctx.lim
    tol = seg_in.tol
    up = ln.signal.upper()
    r_eff = seg_in.r_eff(ln.signal)
    m_lo, m_hi = (float(x) for x in pu.pullup_margins(seg_in.pullup, ln.rp_min, ln.rp_max, tol,
                                                       ln.r_parts))
    contributors = [{"ref": "design", "pin": ln.signal, "kind": "design resistor",
                     "value": seg_in.pullup,
                     "source": "chosen by auto from " + seg_in.segment.pullup_series
                     if seg_in.auto else "the design file"}] + ln.part_pullups
    src = (f"UM10204 rev. 6 §7.1 eq. 1 and 2; tr from {lim.source_edges}"
           if lim.protocol == "i2c" else
           f"UM10204 rev. 6 §7.1 eq. 2; Rp(max) with the SMBus rise points, {lim.source_edges}")
    if ln.coupled:
        src += "; Rp(min) shares each sink's rating with the pull-ups across the translator"
    details = {"rp_min": ln.rp_min, "rp_max": ln.rp_max, "margin_low": m_lo, "margin_high": m_hi,
               "tolerance": tol, "effective": r_eff, "contributors": contributors,
               "definition": lim.rise_definition, "auto": seg_in.auto}
    shown = (f"{_f(r_eff, 'Ω')} ({' ∥ '.join(_f(c['value'], 'Ω') for c in contributors)})"
             if ln.part_pullups else _f(r_eff, 'Ω'))
    lo_text = _f(ln.rp_min, 'Ω') if np.isfinite(ln.rp_min) else "none (no value: see below)"
    hi_text = _f(ln.rp_max, 'Ω') if np.isfinite(ln.rp_max) else "no upper limit"
    window = f"[{lo_text}, {hi_text}]"
    if not np.isfinite(ln.rp_min):
        # the far side's pull-ups alone exceed a sink's rating: no Rp(min) exists
        reason = ("no Rp(min) exists: the pull-ups across the translator alone draw more "
                  "than the weakest sink's rating, so no pull-up on this segment is large "
                  "enough")
        chk = Check("pullup-window", "fail", r_eff * (1 - tol), None, "Ω", None, src,
                    f"{up} pull-up {shown} at −{tol:.0%}: {_f(r_eff * (1 - tol), 'Ω')}; "
                    f"{reason}", subject=up, details=details, reason=reason)
    elif m_lo <= m_hi:
        chk = check_min("pullup-window", r_eff * (1 - tol), ln.rp_min, "Ω", src,
                        f"{up} pull-up {shown} at −{tol:.0%}: {_f(r_eff * (1 - tol), 'Ω')} "
                        f"against the window {window}", subject=up, details=details, **ctx.kw())
    else:
        chk = check_max("pullup-window", r_eff * (1 + tol), ln.rp_max, "Ω", src,
                        f"{up} pull-up {shown} at +{tol:.0%}: {_f(r_eff * (1 + tol), 'Ω')} "
                        f"against the window {window}", subject=up, details=details, **ctx.kw())
    if chk.status == "fail":
        chk.fix = window_advice(ctx.lim, seg_in, ln, m_lo, m_hi)
        chk.message += f"; {chk.fix}"
    return chk




def _far_branches(ctx: Context, seg_in: SegmentInputs, signal: str):
    """Pull-ups of segments joined through pass transistors: (link, rail corners, Rp min)."""
    out = []
    for link in ctx.links[seg_in.index]:
        if link.kind != "mosfet":
            continue
        other = ctx.seg_ins[link.other]
        rp = other.r_eff(signal) * (1 - other.tol)
        out.append((link, other.vdd, rp))
    return out


class _LineCtx:
    """One line of one segment while its checks are made: its corners and pull-up ends."""

    def __init__(self, ctx: Context, seg_in: SegmentInputs, ln: LineInputs, grp: Group):
        self.ctx, self.seg_in, self.ln, self.grp = ctx, seg_in, ln, grp
        self.lim, self.v, self.tol, self.up = ctx.lim, seg_in.vdd, seg_in.tol, ln.signal.upper()
        r_eff = seg_in.r_eff(ln.signal)
        self.rp_lo, self.rp_hi = r_eff * (1 - self.tol), r_eff * (1 + self.tol)
        self.figs: dict = {"cb": ln.cb, "pullup": r_eff, "rp_min": ln.rp_min,
                           "rp_max": ln.rp_max}
        self.kw = ctx.kw(subject=self.up)
        self.far = _far_branches(ctx, seg_in, ln.signal)


def _line_levels(ctx: Context, seg_in: SegmentInputs, ln: LineInputs, grp: Group) -> dict:
    """Rise, fall, levels, sink current, power and their checks for one line."""
    lc = _LineCtx(ctx, seg_in, ln, grp)
    _edges_and_window(lc)
    levels, offset_levels = _low_levels(lc)
    checks_low = _low_level_checks(lc, levels)
    checks_low += _sink_checks(lc, levels, offset_levels)
    for chk in checks_low:
        grp.add(chk)
    _high_level_checks(lc)
    _fall_checks(lc)
    return lc.figs


def _edges_and_window(lc: _LineCtx) -> None:
    """Bus capacitance, the pull-up window and the rise time."""
    ctx, seg_in, ln, grp, figs = lc.ctx, lc.seg_in, lc.ln, lc.grp, lc.figs
    lim, tol, up, rp_hi, kw = lc.lim, lc.tol, lc.up, lc.rp_hi, lc.kw
    # -- capacitance
    cb_details = dict(ln.cb_parts)
    if lim.cb_max is not None:
        grp.add(check_max("bus-capacitance", ln.cb, lim.cb_max, "F", lim.source_cb,
                          f"{up} bus capacitance {_f(ln.cb, 'F')} (pins "
                          f"{_f(ln.cb_parts['pins'], 'F')}, traces {_f(ln.cb_parts['traces'], 'F')}"
                          f", cables {_f(ln.cb_parts['cables'], 'F')}, extra "
                          f"{_f(ln.cb_parts['extra'], 'F')})", details=cb_details, **kw))
    # -- window
    grp.add(_window_check(ctx, seg_in, ln))
    # -- rise
    tr = float(pu.rise_time(rp_hi, ln.cb, ln.rise_factor))
    tr_1090 = float(pu.rise_time(rp_hi, ln.cb, RISE_10_90))
    figs.update(rise_time=tr, rise_time_10_90=tr_1090)
    defin = ("30–70 %" if lim.rise_definition == "30-70" else "SMBus points 0.65 V–1.50 V")
    grp.add(check_max("rise-time", tr, lim.tr_max, "s", lim.source_edges,
                      f"{up} rise time {_f(tr, 's')} ({defin}, Rp {_f(rp_hi, 'Ω')} at "
                      f"+{tol:.0%}, Cb {_f(ln.cb, 'F')}, factor {ln.rise_factor:.4g})",
                      details={"definition": lim.rise_definition, "factor": ln.rise_factor},
                      **kw))


def _low_levels(lc: _LineCtx) -> tuple[list, list]:
    """The low level each driver (or a far driver through a translator) makes, per corner."""
    ctx, ln, v, rp_lo, far = lc.ctx, lc.ln, lc.v, lc.rp_lo, lc.far
    # -- low levels, per driver and corner
    raw, offs = low_levels(v, rp_lo, ln.drivers, far, ctx.seg_ins, ln.signal)
    # (label, v_bus per corner, i per corner or None, driver on this segment or None)
    levels = [(d.tap.label if link is None else f"{d.tap.label} via {link.dev.ref}", vb, i,
               d if link is None else None) for vb, i, d, link in raw]
    # a repeater side's static-offset low: the bridge-offset check
    offset_levels = [(d.tap.label, vb, i, d) for vb, i, d in offs]
    return levels, offset_levels


def _low_level_checks(lc: _LineCtx, levels: list) -> list[Check]:
    """The bus low level against every receiver's VIL, and the low-level noise margin."""
    ctx, ln, figs, lim, v, up, kw = lc.ctx, lc.ln, lc.figs, lc.lim, lc.v, lc.up, lc.kw
    checks_low: list[Check] = []
    if levels:
        vol_bus = np.max(np.stack([lv[1] for lv in levels]), axis=0)
        worst_drv = [levels[int(np.argmax([lv[1][c] for lv in levels]))][0] for c in range(2)]
        figs["v_ol"] = float(np.max(vol_bus))
        # v-ol against every receiver's VIL
        if ln.receivers:
            ms, cs = worst_per_row(max_margin(vol_bus, np.stack([r.v_il for r in ln.receivers])))
            rows = [(ms[k], cs[k], r) for k, r in enumerate(ln.receivers)]
            rows.sort(key=lambda x: x[0])
            m, c, r = rows[0]
            failing = [x[2].tap.label for x in rows if x[0] < 0]
            chk = check_max("v-ol", float(vol_bus[c]), float(r.v_il[c]), "V", r.source,
                            f"{up} low level {_f(vol_bus[c], 'V')} (driver {worst_drv[c]} at the "
                            f"actual current, {_CORNERS[c]}, incl. I·Rs) against VIL "
                            f"{_f(r.v_il[c], 'V')} of {r.tap.label}",
                            details={"receivers": {x[2].tap.label: x[0] for x in rows},
                                     "sink_model": SINK_MODEL},
                            **ctx.kw(subject=f"{up} {r.tap.label}"))
            _conditional_on_r_on(ctx, lc.far, chk)
            if failing:
                chk.fix = (f"receivers {', '.join(failing)} read the low level as high: a larger "
                           "pull-up, a stronger sink, smaller series resistors, or a translator")
                chk.message += f"; {chk.fix}"
            checks_low.append(chk)
            vil_min = np.min(np.stack([r.v_il for r in ln.receivers]), axis=0)
            nml = vil_min - vol_bus
            figs["noise_margin_low"] = float(np.min(nml))
            if lim.v_nl_rel is not None:
                limit = lim.v_nl_rel * v
                c = worst_index(min_margin(nml, limit))
                # the figure is the check's value: the rail extreme where the margin to
                # its limit (a share of that rail) is smallest
                figs["noise_margin_low"] = float(nml[c])
                checks_low.append(check_min(
                    "noise-margin-low", float(nml[c]), float(limit[c]), "V", lim.source_noise,
                    f"{up} low-level noise margin {_f(nml[c], 'V')} (lowest VIL − low level, "
                    f"{_CORNERS[c]}) against {lim.v_nl_rel:g}·VDD", **kw))
    return checks_low


def _conditional_on_r_on(ctx: Context, far: list, chk: Check) -> None:
    """A low level computed through a pass transistor whose on-resistance is not assured
    (gate overdrive below GATE_OVERDRIVE) holds only if it is: say so."""
    for link, _, _ in far:
        over = overdrive(link, ctx.seg_ins)
        if over is None or over >= GATE_OVERDRIVE:
            continue
        text = (f"conditional: it takes {link.dev.ref}'s on-resistance {_f(link.r_on, 'Ω')}, "
                f"not assured at {_f(over, 'V')} gate overdrive (bridge-gate-drive)")
        chk.message += f"; {text}"
        chk.details["conditional"] = text


def _sink_checks(lc: _LineCtx, levels: list, offset_levels: list) -> list[Check]:
    """Sink current against each driver's rating; the pull-up's power; notes on lines
    nothing on this segment drives low."""
    ctx, ln, grp, figs, v = lc.ctx, lc.ln, lc.grp, lc.figs, lc.v
    tol, up, rp_lo, far = lc.tol, lc.up, lc.rp_lo, lc.far
    checks_low: list[Check] = []
    if levels or offset_levels:
        # sink current against each driver's rating (the worst one reported)
        rows = []
        for _label, _, i, d in levels + offset_levels:
            if d is None:
                continue
            ratio = np.max(i) / d.i_ol
            rows.append((ratio, float(np.max(i)), d))
        if rows:
            rows.sort(key=lambda x: -x[0])
            _, i_max, d = rows[0]
            extra = " and the far side's pull-up through the translator" if far else ""
            chk = check_max("sink-current", i_max, d.i_ol, "A", d.source_i,
                            f"{up} sink current {_f(i_max, 'A')} (pull-up at −{tol:.0%}, rail at "
                            f"its maximum{extra}) against {d.tap.label}'s rating "
                            f"{_f(d.i_ol, 'A')} at {_f(float(d.v_ol[1]), 'V')}",
                            details={"drivers": {x[2].tap.label: x[1] for x in rows}},
                            **ctx.kw(subject=f"{up} {d.tap.label}"))
            if chk.status == "fail" and not np.isfinite(ln.rp_min):
                chk.fix = ("no pull-up on this segment helps: the pull-ups across the translator "
                           "alone draw more than the weakest sink's rating (see pullup-window)")
                chk.message += f"; {chk.fix}"
            elif chk.status == "fail":
                chk.fix = (f"raise the effective pull-up to at least "
                           f"{_f(ln.rp_min / (1 - tol), 'Ω')} (Rp(min) at −{tol:.0%})")
                chk.message += f"; {chk.fix}"
            checks_low.append(chk)
        power = max(float(np.max(v * (v - lv[1]) / rp_lo)) for lv in levels + offset_levels)
        figs["pullup_power"] = power
    else:
        figs["pullup_power"] = None
        grp.notes.append(f"{up}: no device on this segment drives the line low; levels not checked")
    if not levels:
        figs.update(v_ol=None, noise_margin_low=None)
        if offset_levels:
            grp.notes.append(f"{up} is driven low on this segment only by the static-offset side "
                             f"of {', '.join(x[0] for x in offset_levels)}: see bridge-offset")
    return checks_low


def _high_level_checks(lc: _LineCtx) -> None:
    """The high level after leakage against every receiver's VIH; its noise margin."""
    ctx, ln, grp, figs, lim = lc.ctx, lc.ln, lc.grp, lc.figs, lc.lim
    v, up, rp_hi, kw = lc.v, lc.up, lc.rp_hi, lc.kw
    # -- high level after leakage
    voh = np.asarray(pu.high_level(v, rp_hi, ln.leakage), dtype=float)
    figs["v_oh"] = float(np.min(voh))
    if ln.receivers:
        ms, cs = worst_per_row(min_margin(voh, np.stack([r.v_ih for r in ln.receivers])))
        rows = [(ms[k], cs[k], r) for k, r in enumerate(ln.receivers)]
        rows.sort(key=lambda x: x[0])
        m, c, r = rows[0]
        failing = [x[2].tap.label for x in rows if x[0] < 0]
        chk = check_min("v-oh", float(voh[c]), float(r.v_ih[c]), "V", r.tap.source("v_ih")
                        if r.tap.pin.v_ih is not None else lim.source_levels,
                        f"{up} high level {_f(voh[c], 'V')} (rail − {_f(ln.leakage, 'A')} leakage "
                        f"× {_f(rp_hi, 'Ω')}, {_CORNERS[c]}) against VIH {_f(r.v_ih[c], 'V')} of "
                        f"{r.tap.label}",
                        details={"receivers": {x[2].tap.label: x[0] for x in rows}},
                        **ctx.kw(subject=f"{up} {r.tap.label}"))
        if failing:
            chk.fix = (f"{', '.join(failing)} cannot read the pull-up rail as high: pull up to "
                       "a rail they accept, put a level translator between, or lower the pull-up "
                       "(leakage drop)")
            chk.message += f"; {chk.fix}"
        grp.add(chk)
        vih_max = np.max(np.stack([r.v_ih for r in ln.receivers]), axis=0)
        nmh = voh - vih_max
        figs["noise_margin_high"] = float(np.min(nmh))
        if lim.v_nh_rel is not None:
            limit = lim.v_nh_rel * v
            c = worst_index(min_margin(nmh, limit))
            figs["noise_margin_high"] = float(nmh[c])  # the check's value, as above
            grp.add(check_min("noise-margin-high", float(nmh[c]), float(limit[c]), "V",
                              lim.source_noise,
                              f"{up} high-level noise margin {_f(nmh[c], 'V')} (high level − "
                              f"highest VIH, {_CORNERS[c]}) against {lim.v_nh_rel:g}·VDD", **kw))
    else:
        figs["noise_margin_high"] = None
        figs.setdefault("noise_margin_low", None)


def _fall_checks(lc: _LineCtx) -> None:
    """Fall time (upper bound from each driver's guaranteed sink) and tf(min)."""
    ctx, seg_in, ln, grp, figs, lim = lc.ctx, lc.seg_in, lc.ln, lc.grp, lc.figs, lc.lim
    v, tol, up, rp_lo, kw, far = lc.v, lc.tol, lc.up, lc.rp_lo, lc.kw, lc.far
    # -- fall time: upper bound from each driver's guaranteed sink, or the output fall
    #    time its part states or a compliant output stage guarantees, whichever is less
    falls = [(t, d, link, info) for t, d, link, info in
             fall_bounds(lim, rp_lo, ln.cb, v, ln.drivers, far, ctx.seg_ins, ln.signal)]
    if falls:
        t, d, link, info = max(falls, key=lambda x: float(np.max(x[0])))
        c = int(np.argmax(t))
        tf = float(t[c])
        figs["fall_time"] = tf
        via = "" if link is None else f" via {link.dev.ref}"
        text, details = fall_basis(lim, d, info, c, ln.cb)
        chk = check_max("fall-time", tf, lim.tf_max, "s", lim.source_edges,
                        f"{up} fall time at most {_f(tf, 's')} (driver {d.tap.label}{via}: "
                        f"{text}; pull-up at −{tol:.0%}, Cb {_f(ln.cb, 'F')}, {_CORNERS[c]})",
                        details=details, **kw)
        if chk.status == "fail":
            chk.fix = ("a stronger sink, a larger pull-up (inside its window), less bus "
                       "capacitance, or a part that states its output fall time (t_of_max)")
            chk.message += f"; {chk.fix}"
        grp.add(chk)
        # tf(min): a property of slope-controlled outputs
        tf_min = lim.tf_min(float(v[1]))
        if tf_min is not None:
            missing = []
            for d in ln.drivers:
                if d.tap.pin.t_of_min is not None:
                    grp.add(check_min("fall-time-min", float(d.tap.pin.t_of_min.value), tf_min,
                                      "s", lim.source_edges,
                                      f"{up} output fall time of {d.tap.label} at least "
                                      f"{_f(float(d.tap.pin.t_of_min.value), 's')} (its part's "
                                      f"t_of_min) against tf(min) {_f(tf_min, 's')}",
                                      **ctx.kw(subject=f"{up} {d.tap.label}")))
                elif not d.tap.dev.is_bridge:
                    missing.append(d.tap.label)
            if missing:
                _default(seg_in, f"tf(min) {_f(tf_min, 's')} ({lim.source_edges}) is the "
                                 "responsibility of each device's slope-controlled output; its "
                                 "part states no t_of_min, so it is not checked",
                         f"{up}: " + ", ".join(missing))
    else:
        figs["fall_time"] = None


def _segment_checks(ctx: Context, seg_in: SegmentInputs, grp: Group, per_line: dict) -> None:
    """Timing, voltage domains, power states and bridging parts of one segment."""
    _timing_checks(ctx, seg_in, grp, per_line)
    taps = [t for sig in SIGNALS for t in _taps(seg_in.segment, SIGNALS[sig])]
    _domain_checks(ctx, seg_in, grp, taps)
    _power_checks(seg_in, grp, taps)
    bridge_checks(ctx, seg_in, grp)


def _drives_sda(d, seg) -> bool:
    pin = d.part.pin_for(SIGNALS["sda"], d.side)
    return pin is not None and pin[1].drive == "open-drain"


def _timing_checks(ctx: Context, seg_in: SegmentInputs, grp: Group, per_line: dict) -> None:
    """The clock against the mode, the slowest device, and the SDA data setup."""
    lim = ctx.lim
    seg = seg_in.segment
    # -- clock
    clock = ctx.clock
    ctrl = ctx.controller
    t_low = t_high = None
    if ctrl is not None and ctrl.part.timing.t_low is not None:
        t_low = float(ctrl.part.timing.t_low.value)
    if ctrl is not None and ctrl.part.timing.t_high is not None:
        t_high = float(ctrl.part.timing.t_high.value)
    if t_low is None or t_high is None:
        t_low, t_high = counted_clock(lim, clock, t_low, t_high)
        if seg_in.index == ctx.ctrl_seg:
            grp.notes.append(f"SCL low/high times taken as the controller counting "
                             f"{_f(t_low, 's')} / {_f(t_high, 's')} for a {_f(clock, 'Hz')} clock "
                             f"(the specification's tLOW:tHIGH proportion, {lim.source_timing}); "
                             "give the controller's t_low/t_high to use its own")
    scl, sda = per_line["scl"], per_line["sda"]
    tr_scl = scl["rise_time"]
    tf_scl = scl["fall_time"] if scl["fall_time"] is not None else 0.0
    f_eff = float(pu.scl_frequency(t_low, t_high, tr_scl, tf_scl))
    grp.figure("scl_frequency_effective", f_eff, "Hz")
    grp.add(check_max("scl-frequency", clock, lim.f_max, "Hz", lim.source_f,
                      f"SCL clock {_f(clock, 'Hz')} against {lim.label}'s {_f(lim.f_max, 'Hz')}; "
                      f"with the edges the controller counts, the effective frequency is "
                      f"{_f(f_eff, 'Hz')} (UM10204 rev. 6 §7.2.1 eq. 3)",
                      warn_margin=0.0))  # running at the mode's own maximum is what it allows
    # devices that cannot follow the clock (targets; a controller's f_max is its own choice)
    slow = [(float(d.part.timing.f_max.value), d) for d in seg.devices
            if not d.is_controller and not d.is_bridge and d.part.timing.f_max is not None]
    if slow:
        f_dev, d = min(slow, key=lambda x: x[0])
        src = value_source(d, "timing.f_max", d.part.timing.f_max)
        grp.add(check_max("device-speed", clock, f_dev, "Hz", src,
                          f"clock {_f(clock, 'Hz')} against the slowest device {d.ref}'s "
                          f"rated {_f(f_dev, 'Hz')}", subject=d.ref,
                          warn_margin=0.0))  # a rating: at it is inside
    # -- SDA data setup
    tr_sda = sda["rise_time"]
    rows = []
    segments = [(s.index, s.segment) for s in ctx.seg_ins]
    for d, extra in data_sources(seg_in.index, ctx.ctrl_seg, segments, ctrl, ctx.delay,
                                 _drives_sda):
        tvd = d.part.timing.t_vd_dat
        val = float(tvd.value) if tvd is not None else lim.t_vd_dat
        if tvd is None:
            _default(seg_in, f"no t_vd_dat stated: taken at the specification's "
                             f"{_f(lim.t_vd_dat, 's')} ({lim.source_vd_dat})", d.ref)
        rows.append((val + extra, d))
    if rows:
        tvd, d = max(rows, key=lambda x: x[0])
        budget_s = t_low - tvd - tr_sda
        grp.figure("sda_setup_margin", budget_s - lim.t_su_dat, "s")
        grp.add(check_min("setup-time", budget_s, lim.t_su_dat, "s",
                          f"{lim.source_timing}; tVD;DAT {lim.source_vd_dat}",
                          f"SDA data setup tLOW {_f(t_low, 's')} − tVD;DAT {_f(tvd, 's')} "
                          f"({d.ref}{', incl. bridge delays' if tvd > lim.t_vd_dat else ''}) − tr "
                          f"{_f(tr_sda, 's')} = {_f(budget_s, 's')} against tSU;DAT "
                          f"{_f(lim.t_su_dat, 's')}", subject=f"SDA {d.ref}", **ctx.kw()))
    else:
        grp.figure("sda_setup_margin", None, "s")


def _domain_checks(ctx: Context, seg_in: SegmentInputs, grp: Group, taps: list) -> None:
    """Voltage domains: abs_max against the pull-up rail; rails inside the parts' ranges."""
    v, vtol = seg_in.vdd, seg_in.vtol
    seg = seg_in.segment
    # -- voltage domains: abs_max against the pull-up rail
    rows = []
    capped = [t for t in taps if t.pin.abs_max is not None]
    if capped:
        ams = np.stack([_corner_values(t.pin.abs_max, t, v, vtol, "min") for t in capped])
        ms, cs = worst_per_row(max_margin(v, ams))
        rows = [(ms[k], float(v[cs[k]]), float(ams[k, cs[k]]), t) for k, t in enumerate(capped)]
    if rows:
        rows.sort(key=lambda x: x[0])
        m, vv, am, t = rows[0]
        failing = sorted({x[3].label for x in rows if x[0] < 0})
        # an abs_max written relative to a device's own rail, on the pull-up rail, moves with
        # it and cannot be exceeded: pass without a near-limit warning
        follows = not t.own and abs_max_follows(t.pin)
        chk = check_max("input-voltage", vv, am, "V", t.source("abs_max"),
                        f"pull-up rail up to {_f(vv, 'V')} on the pins of {t.label} "
                        f"(abs_max {_f(am, 'V')} at its own rail {_f(t.vdd, 'V')})",
                        subject=t.label, **ctx.kw(warn_margin=0.0 if follows else ctx.warn))
        if failing:
            rails = sorted({x[3].vdd for x in rows if x[0] < 0})
            chk.fix = (f"{', '.join(failing)} would be driven above their absolute maximum: put "
                       f"a level translator between them and the {_f(seg.supply, 'V')} rail, or "
                       f"pull this segment up to {_f(rails[0], 'V')} if every device on it "
                       "accepts that rail")
            chk.message += f"; {chk.fix}"
        grp.add(chk)
    # -- devices on rails outside their part's supply range (the rail's tolerance is applied
    #    already, and a datasheet range is a hard limit: inside it passes, no warning band)
    rows = []
    seen = set()
    for t in taps:
        if t.ref in seen:
            continue
        seen.add(t.ref)
        sup = t.dev.part.supply_for(t.dev.side)
        if sup is None:
            continue
        lo, hi = t.vdd * (1 - vtol), t.vdd * (1 + vtol)
        m, low_side = supply_margin(lo, hi, float(sup.min.value), float(sup.max.value))
        rows.append((float(m), bool(low_side), lo, hi, sup, t))
    if rows:
        rows.sort(key=lambda x: x[0])
        _, low_side, lo, hi, sup, t = rows[0]
        where = "supply" if sup is t.dev.part.supply else f"sides.{t.dev.side}.supply"
        chk = supply_range_check(
            t.label, lo, hi, float(sup.min.value), float(sup.max.value),
            lambda low, t=t, where=where, sup=sup: (
                value_source(t.dev, f"{where}.min", sup.min) if low
                else value_source(t.dev, f"{where}.max", sup.max)))
        grp.add(chk)


def _power_checks(seg_in: SegmentInputs, grp: Group, taps: list) -> None:
    """Devices on switched rails: power-off tolerant pins, or the clamp current."""
    v, tol = seg_in.vdd, seg_in.tol
    seg = seg_in.segment
    # -- power states
    for d in seg.devices:
        if not d.switched:
            continue
        pins = [t for t in taps if t.dev is d]
        loading = [t for t in pins if not t.pin.off_tolerant]
        if not loading:
            grp.add(check_true("power-off", True, f"{d.part_id} pins off_tolerant",
                               f"{d.ref} sits on a switched rail; its pins are power-off tolerant",
                               subject=d.ref))
            continue
        currents = []
        for t in loading:
            sig = "sda" if t.pin.function == SIGNALS["sda"] else "scl"
            rp = seg_in.r_eff(sig) * (1 - tol)
            currents.append((sig.upper(), (float(v[1]) - CLAMP_DROP) / rp))
        shown = ", ".join(f"{s} {_f(i, 'A')}" for s, i in currents)
        chk = check_true(
            "power-off", False, f"{_COMMON}: input clamp diodes to the device's own rail "
            f"({CLAMP_DROP:g} V drop)",
            f"{d.ref} sits on a switched rail and its pins are not power-off tolerant: with its "
            f"rail off, its input clamps hold {' and '.join(s for s, _ in currents)} about "
            f"{CLAMP_DROP:g} V above the dead rail (below every VIL: the bus stops) and the "
            f"pull-ups feed {shown} into it, back-powering its rail", subject=d.ref,
            details={"clamp_current": {s: i for s, i in currents}})
        chk.fix = ("use a part with power-off-tolerant (fail-safe) bus pins, keep its rail on "
                   "while the bus runs, or isolate it behind a bus switch or buffer that "
                   "disconnects when its rail is off")
        chk.message += f"; fix: {chk.fix}"
        grp.add(chk)


def evaluate_segment(ctx: Context, seg_in: SegmentInputs) -> Group:
    """Every figure, check and note of one segment."""
    grp = Group()
    per_line = {}
    for sig, ln in seg_in.lines.items():
        per_line[sig] = _line_levels(ctx, seg_in, ln, grp)
        per_line[sig]["bus_capacitance"] = per_line[sig].pop("cb")
    segment_figures(grp, seg_in, per_line)
    _segment_checks(ctx, seg_in, grp, per_line)
    segment_notes(grp, ctx.lim, seg_in)
    return grp
