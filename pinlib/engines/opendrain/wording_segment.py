"""The wording of an open-drain segment: its figures, its timing, voltage-domain,
power-state and bridging-part checks, and its notes, drawn from the array engine's
segment at one variant (:mod:`.batch`) and the gathered inputs (:func:`.inputs.collect`);
the checks of each line are worded by :mod:`.wording`."""

from __future__ import annotations

import math

import numpy as np

from pinlib.core import messages as M
from pinlib.core.labels import few_named
from pinlib.engines.opendrain.batchfigures import one
from pinlib.engines.opendrain.batchinputs import sda_valid_time
from pinlib.engines.opendrain.explain import _UNITS, segment_notes
from pinlib.engines.opendrain.inputs import (
    SegmentInputs,
    _default,
    _f,
    _offset_side,
    supply_source,
    value_source,
)
from pinlib.engines.opendrain.rules import (
    _COMMON,
    CLAMP_DROP,
    GATE_OVERDRIVE,
    SIGNALS,
    supply_range_text,
)
from pinlib.engines.opendrain.wording import (
    Words,
    firm_or_soft,
    held_high,
    line,
    make,
    row_corner,
)
from pinlib.library.loader import off_tolerant_stated
from pinlib.library.values import SOFT_BASES
from pinlib.model.result import (
    STATUSES,
    Group,
    check_true,
    soften,
    softest,
)

#: The units of the segment's own figures (the lines' are in ``explain._UNITS``).
_SEGMENT_UNITS = {"supply": "V", "pullup_resistor": "Ω", "rise_factor": "",
                  "scl_frequency_effective": "Hz", "sda_setup_margin": "s"}


def _unit(name: str) -> str:
    """The unit of a figure (a line's own figure ends in its signal)."""
    unit = _UNIT_OF.get(name)
    if unit is None:
        base = name.rsplit("_sda", 1)[0].rsplit("_scl", 1)[0]
        unit = _UNIT_OF[name] = _SEGMENT_UNITS.get(name, _UNITS.get(base, _UNITS.get(name, "")))
    return unit


_UNIT_OF: dict = {}


def segment(ctx, seg_in: SegmentInputs, sb) -> Group:
    """Every figure, check and note of one segment, worded (``sb``: the batch's
    :class:`.batchresult.SegmentBatch` of this segment at one variant)."""
    w = Words(ctx, seg_in, sb.checks)
    grp = w.grp
    for name, x in sb.figures.items():
        grp.figure(name, None if x is None else x.item(0), _unit(name))
    _unbounded(grp, w)
    _unrisen_figures(grp, w)
    for ln in seg_in.lines.values():
        line(w, ln)
    _timing(w, sb)
    taps = [t for sig in SIGNALS for t in seg_in.lines[sig].taps]
    _domains(w, taps)
    _power(w, taps)
    _bridges(w)
    w.finish()  # every check worded
    segment_notes(grp, ctx.lim, seg_in, w.r_eff)
    return grp


#: Figures that are infinite where a line never falls through its lower measuring level
#: (the sink cannot pull it there against the pull-up): none in the result, the
#: fall-time check says why.
_FALL_FIGURES = ("fall_time", "fall_time_sda", "fall_time_scl")


#: Why Rp(max) is none where Cb is 0: UM10204 eq. 1, tr/(k·Cb), bounds nothing.
RP_MAX_UNBOUNDED = "no upper bound (Cb is 0)"
#: Why Rp(min) is none where it is infinite: the weakest sink's rating is spent before
#: this segment's pull-up draws anything (the pull-ups across a pass-transistor
#: translator alone take it), so no resistor is large enough; pullup-window says more.
RP_MIN_NONE = "none: no pull-up is large enough for the weakest sink (see Pull-up window)"
#: Why the SDA setup margin is none where no device gives the segment data to read.
SETUP_NONE = "none: no target drives SDA, so no read's data setup to budget"
#: Why a fall time (and the clock worked out from it) is none where it is infinite
#: (``{line}``: "the line", or "SCL" for the clock worked out from SCL's fall).
FALL_NONE = "none: {line} never falls to VIL (see Fall time)"


#: Why a rise figure (and what is worked out from it) is none where the pins' leakage
#: through the pull-up holds the line below the level that rise ends at: the line never
#: gets there (its rise-time check fails without a value, ``wording._never_rises``).
RISE_NONE = ("none: {line} never rises to {level}, held at {held} by the pins' leakage "
             "through the pull-up (see VOH)")


def _unrisen_figures(grp: Group, w: Words) -> None:
    """The rise figures of a line held below their upper level (at the rail's minimum,
    the pull-up at its top: :func:`.wording.held_high`), and the clock and setup margin
    worked out from them, are none, each with its reason."""
    seg_in, lim = w.seg_in, w.lim
    worst = {}
    for sig, ln in seg_in.lines.items():
        vdd, held = held_high(seg_in, ln, w.r_eff(sig) * (1 + seg_in.tol))
        v_hi = float(lim.measuring_levels(vdd)[1])
        up = sig.upper()

        def none_why(level, up=up, vdd=vdd, held=held):
            if vdd <= level:  # the rail itself stays below it (an SMBus rail)
                return M.RISE_NONE_RAIL.format(line=up, level=_f(level, "V"), vdd=_f(vdd, "V"))
            return RISE_NONE.format(line=up, level=_f(level, "V"), held=_f(held, "V"))

        for name, level in (("rise_time", v_hi), ("rise_time_10_90", 0.9 * vdd)):
            if held < level and name not in worst:
                worst[name] = none_why(level)
        if held < 0.9 * vdd:  # the line's own 10–90 % rise
            f = grp.figures.get(f"rise_time_10_90_{sig}")
            if f is not None and f.value is not None:
                grp.figure(f"rise_time_10_90_{sig}", None, f.unit, RISE_NONE.format(
                    line=up, level=_f(0.9 * vdd, "V"), held=_f(held, "V")))
        if held < v_hi:
            why = none_why(v_hi)
            follows = {"sda": "sda_setup_margin", "scl": "scl_frequency_effective"}[sig]
            for name in (f"rise_time_{sig}", follows):
                f = grp.figures.get(name)
                if f is not None and f.value is not None:
                    grp.figure(name, None, f.unit, why)
    for name, why in worst.items():
        f = grp.figures.get(name)
        if f is not None and f.value is not None:
            grp.figure(name, None, f.unit, why)


def _unbounded(grp: Group, w: Words) -> None:
    """An infinite fall time, and the effective clock worked out from it (0 Hz), are
    none: a line that never falls has neither.  An infinite Rp(max) (Cb is 0) or Rp(min)
    (no resistor large enough) is none.  Each with its reason in words, which the text
    shows in place of the number (an infinite Rp(min) read "∞", a fall time "—")."""
    for name, f in list(grp.figures.items()):
        if f.value is None or isinstance(f.value, (bool, str)) or math.isfinite(f.value):
            continue
        if name.startswith("rp_max"):
            grp.figure(name, None, f.unit, _rp_max_none(w, name))
        elif name == "rise_factor":  # an SMBus rail below the rise's upper point
            v_hi = float(w.lim.measuring_levels(float(w.seg_in.vdd[0]))[1])
            grp.figure(name, None, f.unit, M.RISE_FACTOR_NONE.format(
                level=_f(v_hi, "V"), vdd=_f(float(w.seg_in.vdd[0]), "V")))
        elif name.startswith("rp_min"):   # the number stays (the batch holds it alike)
            grp.figure(name, f.value, f.unit, RP_MIN_NONE)
    for name in _FALL_FIGURES:
        f = grp.figures.get(name)
        if f is not None and f.value is not None and not math.isfinite(f.value):
            grp.figure(name, None, f.unit, FALL_NONE.format(line="the line"))
            if name == "fall_time_scl":
                grp.figure("scl_frequency_effective", None, _unit("scl_frequency_effective"),
                           FALL_NONE.format(line="SCL"))


def _rp_max_none(w: Words, name: str) -> str:
    """Why an Rp(max) figure (``rp_max``, ``rp_max_sda``...) is none: Cb is 0, or the
    rise never reaches its upper point on the rail's minimum (infinite factor)."""
    lines = w.seg_in.lines
    sigs = [name.rsplit("_", 1)[1]] if name.rsplit("_", 1)[1] in lines else list(lines)
    if any(lines[s].cb > 0 and not math.isfinite(lines[s].rise_factor) for s in sigs):
        v_hi = float(w.lim.measuring_levels(float(w.seg_in.vdd[0]))[1])
        return M.RP_MAX_NO_RISE.format(level=_f(v_hi, "V"))
    return RP_MAX_UNBOUNDED


def _timing(w: Words, sb) -> None:
    """The clock against the mode, the slowest device, the SDA data setup."""
    ctx, lim, seg_in, grp = w.ctx, w.lim, w.seg_in, w.grp
    clock = ctx.clock
    bc = w.take("scl-frequency")
    t = bc.basis
    if t["counted"] and seg_in.index == ctx.ctrl_seg:
        grp.notes.append(f"SCL low/high times taken as the controller counting "
                         f"{_f(t['t_low'], 's')} / {_f(t['t_high'], 's')} for a "
                         f"{_f(clock, 'Hz')} clock (the specification's tLOW:tHIGH proportion, "
                         f"{lim.source_timing}); give the controller's t_low/t_high to use its "
                         "own")
    f_eff = grp.figures["scl_frequency_effective"].value
    eff = ("SCL never falls, so it has no effective frequency" if f_eff is None else
           f"with the edges the controller counts, the effective frequency is "
           f"{_f(f_eff, 'Hz')} (UM10204 rev. 6 §7.2.1 eq. 3)")
    k, _ = row_corner(bc)
    if k == 1:  # below the document's minimum clock (SMBus's fSMB min)
        chk = make(bc, lim.source_f,
                   f"SCL clock {_f(clock, 'Hz')} against {lim.label}'s minimum "
                   f"{_f(lim.f_min, 'Hz')} (fSMB runs from {_f(lim.f_min, 'Hz')} to "
                   f"{_f(lim.f_max, 'Hz')})")
        if chk.status == "fail":
            chk.fix = f"run the clock at {_f(lim.f_min, 'Hz')} or faster"
            chk.message += f"; {chk.fix}"
        grp.add(chk)
    else:
        grp.add(make(bc, lim.source_f,
                     f"SCL clock {_f(clock, 'Hz')} against {lim.label}'s {_f(lim.f_max, 'Hz')}"
                     f"; {eff}"))
    bc = w.peek("device-speed")
    if bc is not None:
        w.take("device-speed")
        k, _ = row_corner(bc)
        d = next(d for d in seg_in.segment.devices if d.ref == bc.names[k])
        chk = make(bc, value_source(d, "timing.f_max", d.part.timing.f_max),
                   f"clock {_f(clock, 'Hz')} against the slowest device {d.ref}'s "
                   f"rated {_f(bc.limit[0], 'Hz')}", subject=d.ref)
        grp.add(firm_or_soft(chk, bc, d.part.timing.f_max, what="f_max"))
    bc = w.peek("setup-time")
    if bc is None:
        f = grp.figures.get("sda_setup_margin")
        if f is not None and f.value is None:
            grp.figure("sda_setup_margin", None, f.unit, SETUP_NONE)
        return
    w.take("setup-time")
    devices = ctx.devices
    for ref in bc.names:
        part = devices[ref].part
        if part.timing.t_vd_dat is None and sda_valid_time(part, lim)[1] == "tVD;DAT":
            _default(seg_in, f"no t_vd_dat stated: taken at the specification's "
                             f"{_f(lim.t_vd_dat, 's')} ({lim.source_vd_dat})", ref)
    k, _ = row_corner(bc)
    t = bc.basis
    tvd, ref = one(t["t_vd"][k]), bc.names[k]
    own, which = sda_valid_time(devices[ref].part, lim)
    # where the valid time came from: the part's value (its basis and source, as
    # value_source words it), else the specification's
    field = "t_vd_ack" if which == "tVD;ACK" else "t_vd_dat"
    value = getattr(devices[ref].part.timing, field)
    src = (f"{which} {value_source(devices[ref], f'timing.{field}', value)}"
           if value is not None else f"tVD;DAT {lim.source_vd_dat}")
    if not math.isfinite(one(t["t_r"])):  # SDA never completes its rise
        v_hi = float(lim.measuring_levels(float(seg_in.vdd[0]))[1])
        chk = make(bc, f"{lim.source_timing}; {src}", M.SETUP_NO_RISE.format(
            level=_f(v_hi, "V"), limit=_f(lim.t_su_dat, "s")), subject=f"SDA {ref}")
        chk.value = chk.margin = None
        grp.add(chk)
        return
    chk = make(bc, f"{lim.source_timing}; {src}",
               f"SDA data setup tLOW {_f(t['t_low'], 's')} − {which} {_f(tvd, 's')} "
               f"({ref}{', incl. bridge delays' if tvd > own else ''}) − tr "
               f"{_f(one(t['t_r']), 's')} = {_f(bc.value[0], 's')} against tSU;DAT "
               f"{_f(lim.t_su_dat, 's')}", subject=f"SDA {ref}")
    if value is not None and value.soft:  # the value side rests on a soft number
        chk.details = {**(chk.details or {}), "value_basis": value.rests_on}
    if value is not None and value.soft and chk.status != "pass":
        chk.message += M.SETUP_SOFT_VALID.format(
            which=which, value=_f(own, 's'), field=field,
            kind=(M.SETUP_SOFT_GENERIC if value.rests_on == "generic"
                  else M.SETUP_SOFT_ESTIMATE).format(ref=ref))
    grp.add(chk)


def _abs_max_rail(t, seg) -> float:
    """The end of a device's own rail at which its abs_max is lowest: the rail the
    input-voltage check reads its limit at (the engine's ``_corner_values``). [V]"""
    tol = seg.supply_tolerance
    ends = np.array([t.vdd * (1 - tol), t.vdd * (1 + tol)])
    return float(ends[int(np.argmin(np.asarray(t.pin.abs_max.at(ends), dtype=float)))])


def _domains(w: Words, taps: list) -> None:
    """abs_max against the pull-up rail; rails inside the parts' supply ranges."""
    seg_in, grp = w.seg_in, w.grp
    bc = w.peek("input-voltage")
    if bc is not None:
        w.take("input-voltage")
        capped = [t for t in taps if t.pin.abs_max is not None]
        k, _ = row_corner(bc)
        t = capped[k]
        at = (f"at its own rail {_f(_abs_max_rail(t, seg_in.segment), 'V')}" if t.own
              else "at the pull-up rail")
        chk = make(bc, t.source("abs_max"),
                   f"pull-up rail up to {_f(bc.value[0], 'V')} on the pins of {t.label} "
                   f"(abs_max {_f(bc.limit[0], 'V')} {at})", subject=t.label)
        bad = [capped[j] for j, m in enumerate(bc.row_margins[0].tolist()) if m < 0]
        if bad:
            failing = sorted({x.label for x in bad})
            rails = sorted({x.vdd for x in bad})
            its, them = ("its", "it") if len(failing) == 1 else ("their", "them")
            chk.fix = (f"{few_named(failing)} would be driven above {its} absolute maximum: "
                       f"put a level translator between {them} and the "
                       f"{_f(seg_in.segment.supply, 'V')} rail, or pull this segment up to "
                       f"{_f(rails[0], 'V')} if every device on it accepts that rail")
            chk.message += f"; {chk.fix}"
        grp.add(firm_or_soft(chk, bc, t.pin.abs_max, what="abs_max"))
    bc = w.peek("supply-range")
    if bc is not None:
        w.take("supply-range")
        k, _ = row_corner(bc)
        t = next(t for t in taps if t.label == bc.names[k])
        sup = t.dev.part.supply_for(t.dev.side)
        low = bool(bc.basis[k].reshape(-1)[0])
        chk = make(bc, supply_source(t.dev, sup, low),
                   supply_range_text(t.label, low, float(bc.value[0]), float(sup.min.value),
                                     float(sup.max.value)),
                   subject=t.label)
        if chk.status == "fail":
            chk.fix = ("give the device its own rail (supply = \"...\" on the device) or choose "
                       "a part for this rail")
            if t.dev.is_bridge and t.dev.part.bridge and t.dev.part.bridge.kind == "mosfet":
                chk.fix = M.SUPPLY_RANGE_MOSFET_FIX.format(ref=t.dev.ref)
            chk.message += f"; {chk.fix}"
        grp.add(firm_or_soft(chk, bc, sup.min if low else sup.max, what="supply range"))


def _power(w: Words, taps: list) -> None:
    """Devices on switched rails: power-off tolerant pins, or the clamp current."""
    seg_in, grp = w.seg_in, w.grp
    v_max, tol = float(seg_in.vdd[1]), seg_in.tol
    for d in seg_in.segment.devices:
        if not d.switched:
            continue
        bc = w.take("power-off")
        loading = [t for t in taps if t.dev is d and not t.pin.off_tolerant]
        if not loading:
            grp.add(check_true("power-off", True, f"{d.part_id} pins off_tolerant",
                               f"{d.ref} sits on a switched rail; its pins are power-off tolerant",
                               subject=d.ref))
            continue
        currents = []
        for t in loading:
            sig = "sda" if t.pin.function == SIGNALS["sda"] else "scl"
            currents.append((sig.upper(), (v_max - CLAMP_DROP) / (w.r_eff(sig) * (1 - tol))))
        shown = ", ".join(f"{s} {_f(i, 'A')}" for s, i in currents)
        stated = [(t, off_tolerant_stated(t.pin)) for t in loading]
        firm = [(t, st) for t, st in stated if st is not None and st[0] not in SOFT_BASES]
        unstated = [t for t, st in stated if st is None]
        clamp = (f"{_COMMON}: input clamp diodes to the device's own rail "
                 f"({CLAMP_DROP:g} V drop)")
        if firm or not unstated:  # the statements it rests on: the firm ones, else all
            said = [_stated_source(d, t, st) for t, st in (firm or stated)]
        else:
            said = [M.POWER_OFF_SOURCE_UNSTATED.format(
                part=d.part_id, fields=", ".join(_off_field(t) for t in unstated))]
        fields = ", ".join(_off_field(t) for t in unstated)
        how = ("its pins are not power-off tolerant" if firm or not unstated else
               M.POWER_OFF_TAKEN.format(part=d.part_id, fields=fields))
        chk = check_true(
            "power-off", False, f"{'; '.join(said)}; {clamp}",
            f"{d.ref} sits on a switched rail and {how}: with its "
            f"rail off, its input clamps hold {' and '.join(s for s, _ in currents)} about "
            f"{CLAMP_DROP:g} V above the dead rail (below every VIL: the bus stops) and the "
            f"pull-ups feed {shown} into it, back-powering its rail", subject=d.ref,
            details={"clamp_current": {s: i for s, i in currents}})
        chk.fix = ("use a part with power-off-tolerant (fail-safe) bus pins, keep its rail on "
                   "while the bus runs, or isolate it behind a bus switch or buffer that "
                   "disconnects when its rail is off")
        chk.message += f"; fix: {chk.fix}"
        if not firm and unstated:  # nothing states it: the clamps are a rule of thumb
            chk.status = "warn"
            chk.details = {**chk.details, "rule_of_thumb": True}
            chk.message += M.POWER_OFF_UNSTATED
        elif not firm:  # stated by a class or an estimate
            soften(chk, softest(st[0] for _, st in stated), what="off_tolerant")
        if STATUSES.index(chk.status) != bc.status.item(0):
            raise RuntimeError(f"open-drain wording of power-off {d.ref}: status "
                               f"{chk.status}, the batch's {STATUSES[bc.status.item(0)]}")
        grp.add(chk)


def _off_field(t) -> str:
    """A pin's ``off_tolerant`` field as its part file writes it (a bridging part's under
    its side)."""
    side = t.dev.part_side
    return f"{f'sides.{side}.pins' if side else 'pins'}.{t.pin_name}.off_tolerant"


def _stated_source(d, t, stated) -> str:
    """Where a pin's stated ``off_tolerant`` comes from: the field, its value, and the
    file that states it with that file's basis and source."""
    basis, source, pid = stated
    where = f" from {pid}" if pid != d.part_id else ""
    bits = ": ".join(b for b in (basis, source) if b)
    return (f"{d.part_id} {_off_field(t)} = {str(bool(t.pin.off_tolerant)).lower()}{where}"
            f" ({bits})")


def _bridges(w: Words) -> None:
    """Gate drive of pass transistors; static-offset sides and two of them facing."""
    ctx, seg_in, grp = w.ctx, w.seg_in, w.grp
    seg = seg_in.segment
    offsets = []
    for link in ctx.links[seg_in.index]:
        d = link.dev
        if link.kind == "mosfet":
            if d.part_side == "a":
                _gate_side(w, link)
            if seg.supply > ctx.collected[link.other].segment.supply:
                continue  # the low side reports the gate drive
            _gate_drive(w, link)
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
        _offset(w, d)
    if offsets:
        _facing(w, offsets)


def _offset_low(w: Words, d):
    """A static-offset side's low level (its ``low_offset``, None where not stated),
    its SDA tap and the VIL that side reads with (its pin's, else the
    specification's): (low, tap, vil), the values as :class:`Sourced`."""
    tap = next(t for t in w.seg_in.lines["sda"].taps if t.dev is d)
    vil = tap.pin.v_il if tap.pin.v_il is not None else w.lim.default_levels()[0]
    return d.part.sides[d.side].low_offset, tap, vil


def _facing(w: Words, offsets: list) -> None:
    """Static-offset sides on one segment: one alone passes; with two, each one's low
    against the other's input threshold says what goes wrong: a low one does not read
    does not pass it, and two that read each other's lows hold each other low."""
    bc = w.take("bridge-offset-facing")
    names = ", ".join(f"{d.ref} side {d.side}" for d in offsets)
    msg = f"static-offset sides on this segment: {names}"
    if len(offsets) < 2:
        w.grp.add(check_true("bridge-offset-facing", True, f"{_COMMON}: no other static-offset "
                             "side on this segment to face", msg, subject=offsets[0].ref))
        return
    x, y = offsets[0], offsets[1]
    (lx, tx, vx), (ly, ty, vy) = _offset_low(w, x), _offset_low(w, y)
    kind = x.part.bridge.kind if x.part.bridge is not None else "bridge"
    nx, ny = f"{x.ref} side {x.side}", f"{y.ref} side {y.side}"
    src = M.FACING_SOURCE.format(
        x=nx, y=ny, offset_source=value_source(x, f"sides.{x.side}.low_offset", lx),
        vil_source=ty.source("v_il") if ty.pin.v_il is not None else w.lim.source_levels)
    if lx is None or ly is None:
        why = M.FACING_UNSTATED.format(x=nx if lx is None else ny,
                                       side=(x if lx is None else y).side)
    else:
        ox, oy = float(lx.at(tx.vdd)), float(ly.at(ty.vdd))
        ix, iy = float(vx.at(tx.vdd)), float(vy.at(ty.vdd))
        f = {"x": nx, "y": ny, "off": _f(ox, "V"), "vil": _f(iy, "V"),
             "off2": _f(oy, "V"), "vil2": _f(ix, "V")}
        if ox <= iy and oy <= ix:
            why = M.FACING_LOCK.format(**f)
        elif ox > iy and oy > ix:
            why = M.FACING_NEITHER.format(**f)
        elif ox <= iy:  # y reads x's low, x does not read y's
            why = M.FACING_ONE_WAY.format(**f)
        else:
            why = M.FACING_ONE_WAY.format(x=ny, y=nx, off=f["off2"], vil=f["vil2"],
                                          off2=f["off"], vil2=f["vil"])
    chk = check_true("bridge-offset-facing", False, src, f"{msg}: {why}", subject=x.ref)
    chk.fix = M.FACING_FIX.format(kind=kind)
    chk.message += f"; {chk.fix}"
    w.grp.add(firm_or_soft(chk, bc, lx, vx, ly, vy, what="low_offset and VIL"))


def _gate_side(w: Words, link) -> None:
    """A pass-transistor translator's side a (gate, source, body) on the lower rail: on a
    higher rail than side b its body diode conducts from side a to side b (a firm
    failure, physics)."""
    bc = w.take("bridge-gate-side")
    d = link.dev
    ok = bool(bc.status.item(0) == 0)
    va = _f(w.seg_in.segment.supply, "V")
    vb = _f(w.ctx.collected[link.other].segment.supply, "V")
    chk = check_true("bridge-gate-side", ok, M.GATE_SIDE_SOURCE,
                     (M.GATE_SIDE_OK if ok else M.GATE_SIDE_BAD).format(ref=d.ref, va=va, vb=vb),
                     subject=d.ref)
    if not ok:
        chk.fix = M.GATE_SIDE_FIX.format(ref=d.ref, va=va, vb=vb)
        chk.message += f"; {chk.fix}"
    w.grp.add(chk)


def _gate_drive(w: Words, link) -> None:
    """A pass transistor's gate overdrive from the low rail at its minimum."""
    d, v_min = link.dev, float(w.seg_in.vdd[0])
    br = d.part.bridge
    if br.v_gs_th is None:
        w.grp.notes.append(f"{d.ref}: the translator's gate threshold (bridge.v_gs_th) is "
                           "not stated; gate drive not checked")
        return
    bc = w.take("bridge-gate-drive")
    over = float(bc.value[0])
    msg = (f"{d.ref} gate drive: low rail {_f(v_min, 'V')} at its minimum − gate "
           f"threshold {_f(float(br.v_gs_th.value), 'V')} = {_f(over, 'V')} overdrive")
    chk = make(bc, f"{_COMMON}: gate overdrive of at least {GATE_OVERDRIVE:g} V (a warning "
               f"below it; none at all, 0 V, fails); threshold from {d.part_id} "
               "bridge.v_gs_th", msg, subject=d.ref, details={"warn_below": GATE_OVERDRIVE},
               margin_unit="V")
    if chk.status != "pass":
        chk.fix = ("a MOSFET with a lower gate threshold (logic-level, below "
                   f"{_f(v_min - GATE_OVERDRIVE, 'V')}) or an active translator")
        chk.message += (f"; below {_f(GATE_OVERDRIVE, 'V')} its on-resistance "
                        f"{_f(link.r_on, 'Ω')} is not assured: {chk.fix}")
    w.grp.add(chk)


def _offset(w: Words, d) -> None:
    """A repeater side's static-offset low against every other receiver's VIL."""
    seg_in = w.seg_in
    side = d.part.sides[d.side]
    if side.low_offset is None:
        w.grp.notes.append(f"{d.ref}: side {d.side} drives a static offset low but states no "
                           "level (sides.<side>.low_offset); not checked")
        return
    facing = [(r, sig) for sig in SIGNALS for r in seg_in.lines[sig].receivers
              if r.tap.dev.ref != d.ref]
    if not facing:
        return
    bc = w.take("bridge-offset")
    k, _ = row_corner(bc)
    r, sig = facing[k]
    off = _f(bc.value[0], 'V')
    chk = make(bc, f"{value_source(d, f'sides.{d.side}.low_offset', side.low_offset)}; "
                   f"VIL from {r.source}",
               f"{d.ref} drives side {d.side} low to {off} (static offset) against VIL "
               f"{_f(bc.limit[0], 'V')} of {r.tap.label} ({sig.upper()})", subject=d.ref)
    if chk.status == "fail":
        kind = d.part.bridge.kind if d.part.bridge is not None else "bridge"
        low, spec = float(bc.value[0]), w.lim.default_levels()[0]
        if w.lim.protocol == "smbus":  # fixed levels: no rail raises a VIL
            vil = float(spec.at())
            fix = M.BRIDGE_OFFSET_FIX_SMBUS_HIGH if low > vil else M.BRIDGE_OFFSET_FIX_SMBUS
            chk.fix = fix.format(offset=off, kind=kind, vil=_f(vil, "V"))
        else:  # the specification's VIL, a fraction of VDD, reaches the offset at a rail
            scale = spec.value.scale
            chk.fix = M.BRIDGE_OFFSET_FIX.format(offset=off, kind=kind, scale=scale,
                                                 rail=_f(low / scale, "V"))
        chk.message += f"; {chk.fix}"
    w.grp.add(firm_or_soft(chk, bc, r.v_il_value, what="VIL"))
