"""Checks of the parts that join or split an open-drain bus: pass-transistor gate
drive, repeaters' static-offset sides.  :func:`gate_drive` is the one status rule of the
gate drive, for one bus and for arrays of variants."""

from __future__ import annotations

import numpy as np

from pinlib.engines.opendrain.inputs import (
    SegmentInputs,
    _corner_values,
    _default,
    _f,
    _offset_side,
    _taps,
    value_source,
)
from pinlib.engines.opendrain.rules import (
    _COMMON,
    GATE_OVERDRIVE,
    SIGNALS,
    worst_index,
)
from pinlib.model.result import STATUSES, Check, Group, check_max, check_true, max_margin


def gate_drive(over):
    """Margin and status code of a pass transistor's gate overdrive (low rail minus its
    threshold): it does not conduct at all without overdrive (limit 0 V, a fail); below
    :data:`GATE_OVERDRIVE` its on-resistance is not assured (a warning).  A margin
    relative to a limit of 0 V means nothing: the margin is the overdrive itself, in
    volts (absolute). Scalars or arrays. [V]"""
    over = np.asarray(over, dtype=float)
    status = np.where(over <= 0, 2, np.where(over < GATE_OVERDRIVE, 1, 0)).astype(np.int8)
    return over - 0.0, status


def overdrive(link, seg_ins) -> float | None:
    """A pass transistor's gate overdrive: the lower of the two rails at its minimum
    minus its threshold (None where the part states no threshold). [V]"""
    br = link.dev.part.bridge
    if br is None or br.v_gs_th is None:
        return None
    rails = [float(s.vdd[0]) for s in seg_ins
             if any(d.ref == link.dev.ref for d in s.segment.devices)]
    return min(rails) - float(br.v_gs_th.value)


def _gate_drive_check(seg_in: SegmentInputs, link, grp: Group) -> None:
    """A pass transistor's gate overdrive from the low rail at its minimum."""
    v = seg_in.vdd
    d = link.dev
    br = d.part.bridge
    if br.v_gs_th is None:
        grp.notes.append(f"{d.ref}: the translator's gate threshold (bridge.v_gs_th) is "
                         "not stated; gate drive not checked")
        return
    vth = float(br.v_gs_th.value)
    over = float(v[0]) - vth
    margin, code = gate_drive(over)
    margin, status = float(margin), STATUSES[int(code)]
    msg = (f"{d.ref} gate drive: low rail {_f(v[0], 'V')} at its minimum − gate "
           f"threshold {_f(vth, 'V')} = {_f(over, 'V')} overdrive")
    fix = None
    if status != "pass":
        fix = ("a MOSFET with a lower gate threshold (logic-level, below "
               f"{_f(float(v[0]) - GATE_OVERDRIVE, 'V')}) or an active translator")
        msg += (f"; below {_f(GATE_OVERDRIVE, 'V')} its on-resistance "
                f"{_f(link.r_on, 'Ω')} is not assured: {fix}")
    grp.add(Check("bridge-gate-drive", status, over, 0.0, "V", margin,
                  f"{_COMMON}: gate overdrive of at least {GATE_OVERDRIVE:g} V (a warning "
                  f"below it; none at all, 0 V, fails); threshold from {d.part_id} "
                  "bridge.v_gs_th", msg, subject=d.ref, fix=fix,
                  details={"warn_below": GATE_OVERDRIVE}, margin_unit="V"))


def _offset_check(ctx, seg_in: SegmentInputs, d, grp: Group) -> None:
    """A repeater side's static-offset low against every other receiver's VIL."""
    v, vtol = seg_in.vdd, seg_in.vtol
    seg = seg_in.segment
    side = d.part.sides[d.side]
    if side.low_offset is None:
        grp.notes.append(f"{d.ref}: side {d.side} drives a static offset low but states no "
                         "level (sides.<side>.low_offset); not checked")
        return
    tap = next(t for t in _taps(seg, SIGNALS["sda"]) if t.dev is d)
    off = _corner_values(side.low_offset, tap, v, vtol, "max")
    rows = []
    for sig in SIGNALS:
        for r in seg_in.lines[sig].receivers:
            if r.tap.dev.ref == d.ref:
                continue
            m = max_margin(off, r.v_il)
            c = worst_index(m)
            rows.append((float(m[c]), c, r, sig))
    if not rows:
        return
    rows.sort(key=lambda x: x[0])
    m, c, r, sig = rows[0]
    chk = check_max("bridge-offset", float(off[c]), float(r.v_il[c]), "V",
                    f"{value_source(d, f'sides.{d.side}.low_offset', side.low_offset)}; "
                    f"VIL from {r.source}",
                    f"{d.ref} drives side {d.side} low to {_f(off[c], 'V')} (static "
                    "offset) "
                    f"against VIL {_f(r.v_il[c], 'V')} of {r.tap.label} ({sig.upper()})",
                    subject=d.ref, **ctx.kw())
    if chk.status == "fail":
        chk.fix = (f"every device on the offset side must read {_f(off[c], 'V')} as low: "
                   "replace those with VIL below it, or turn the repeater so its offset "
                   "side faces devices with VIL = 0.3·VDD at a higher rail")
        chk.message += f"; {chk.fix}"
    grp.add(chk)


def bridge_checks(ctx, seg_in: SegmentInputs, grp: Group) -> None:
    """Gate drive of pass transistors; static-offset sides and two of them facing."""
    seg = seg_in.segment
    links = ctx.links[seg_in.index]
    offsets = []
    for link in links:
        d = link.dev
        if link.kind == "mosfet":
            other = ctx.seg_ins[link.other]
            if seg.supply > other.segment.supply:
                continue  # the low side reports the gate drive
            _gate_drive_check(seg_in, link, grp)
            if d.part.bridge.r_on is None:
                grp.notes.append(f"{d.ref}: the translator's on-resistance (bridge.r_on) is not "
                                 "stated; taken as 0 Ω, so the far side's low level is optimistic")
            continue
        if link.t_pd == 0.0 and d.part.timing.t_pd is None:
            _default(seg_in, "bridge propagation delay (timing.t_pd) not stated: taken as 0 s "
                             "in the setup budget", d.ref)
        if _offset_side(d) == d.side:
            offsets.append(d)
    for d in offsets:
        _offset_check(ctx, seg_in, d, grp)
    if offsets:
        ok = len(offsets) < 2
        names = ", ".join(f"{d.ref} side {d.side}" for d in offsets)
        chk = check_true("bridge-offset-facing", ok,
                         "common practice, no source: a static-offset side reads another's "
                         "offset low as a driven low",
                         f"static-offset sides on this segment: {names}" + (
                             "" if ok else ": each sees the other's offset low as a driven low "
                             "and holds it — the bus locks low"), subject=offsets[0].ref)
        if not ok:
            chk.fix = ("never join two static-offset sides: turn one repeater round or use a "
                       "repeater without offset on one side")
            chk.message += f"; {chk.fix}"
        grp.add(chk)
