"""The wording of one open-drain line's checks: messages, fixes, subjects, details and
notes, drawn from the array engine's checks at one variant (:mod:`.batch` at the
design's own corners) and the gathered inputs (:func:`.inputs.collect`).

Every number of a check (value, limit, margin, status, which row and rail corner is the
worst) is the batch's; the gathered line gives the labels and sources, its receivers and
drivers in the batch's row order.  Nothing here works a check out again: a function
takes the next batch check of its kind and words it.
"""

from __future__ import annotations

import math

import numpy as np

from pinlib.core import messages as M
from pinlib.core.labels import and_list, few_named
from pinlib.engines.opendrain.arith import BY_PART, far_drivers
from pinlib.engines.opendrain.batchfigures import one
from pinlib.engines.opendrain.batchinputs import rp_min_rests_on
from pinlib.engines.opendrain.bridges import overdrive
from pinlib.engines.opendrain.explain import SINK_MODEL, window_advice
from pinlib.engines.opendrain.inputs import LineInputs, SegmentInputs, _default, _f
from pinlib.engines.opendrain.rules import _CORNERS, GATE_OVERDRIVE
from pinlib.model.result import STATUSES, Check, Group, soft_basis, soft_limit
from pinlib.physics.pullup import rise_time_with_leakage


class Words:
    """One segment while its checks are worded: the batch's checks in their order.

    The wording must walk the batch's checks in the batch's order and word every one;
    where it does not (a check added to the batch without its wording, or worded in
    another place), :meth:`take` and :meth:`finish` raise a RuntimeError naming the
    check ids: a bug in pinlib, not a problem of the design, and never a check worded
    with another check's numbers.
    """

    def __init__(self, ctx, seg_in: SegmentInputs, checks: list):
        self.ctx, self.seg_in, self.lim = ctx, seg_in, ctx.lim
        self.checks, self.k = checks, 0
        self.grp = Group()

    def peek(self, id: str):
        """The next batch check when it is ``id`` (else None)."""
        if self.k < len(self.checks) and self.checks[self.k].id == id:
            return self.checks[self.k]
        return None

    def take(self, id: str):
        """The next batch check, which must be ``id`` (else a RuntimeError)."""
        if self.k >= len(self.checks) or self.checks[self.k].id != id:
            got = repr(self.checks[self.k].id) if self.k < len(self.checks) else "none left"
            raise RuntimeError(
                f"open-drain wording out of step with the batch in segment "
                f"{self.seg_in.segment.id!r}: wording check {id!r} at place {self.k}, "
                f"the batch has {got} (its checks: {self._ids()})")
        chk = self.checks[self.k]
        self.k += 1
        return chk

    def finish(self) -> None:
        """A RuntimeError when a batch check was left without its wording."""
        if self.k != len(self.checks):
            raise RuntimeError(
                f"open-drain wording left batch checks unworded in segment "
                f"{self.seg_in.segment.id!r}: {self._ids(self.k)} (its checks: "
                f"{self._ids()})")

    def _ids(self, start: int = 0) -> str:
        return ", ".join(c.id for c in self.checks[start:])

    def r_eff(self, signal: str) -> float:
        """Every pull-up of a line in parallel, nominal, as the batch worked it out. [Ω]"""
        return one(self.ctx.segs[self.seg_in.index].r_eff(signal))

    def far_links(self) -> list:
        """The segment's links through pass transistors, as :func:`.arith.far_drivers`
        reads them."""
        return [(link, None, None) for link in self.ctx.links[self.seg_in.index]
                if link.kind == "mosfet"]


def row_corner(bc) -> tuple[int, int]:
    """The worst row and rail corner of a batch check at its one variant. [1]"""
    return (0 if bc.row is None else int(bc.row[0]),
            0 if bc.corner is None else int(bc.corner[0]))


def _num(x) -> float | None:
    """A batch column's one value; NaN or infinity is None in the result."""
    if x is None:
        return None
    v = x.item(0)
    return v if -math.inf < v < math.inf else None


def make(bc, source: str, message: str, **kw) -> Check:
    """A result check with the batch check's numbers (a NaN or infinite value or limit
    is None in the result).  A check the batch held at a warning because its limit is
    soft (:attr:`.batchresult.BatchCheck.soft`) is made failing, as its margin is:
    :func:`firm_or_soft` words it a warning again, with the note and the fix."""
    margin = None if bc.margin is None else bc.margin.item(0)
    code = bc.status.item(0)
    if code == 1 and bc.soft is not None and bool(bc.soft[0]) and not margin >= 0:
        code = 2
    return Check(bc.id, STATUSES[code], _num(bc.value), _num(bc.limit), bc.unit,
                 margin, source, message, **kw)


def firm_or_soft(chk: Check, bc, *values, what: str) -> Check:
    """:func:`pinlib.model.result.soft_limit` of a worded check against ``values``, the
    part's values its limit rests on (None for the specification's): the status is then
    the batch's again (a RuntimeError where not: the batch and the wording took the
    limit's basis from different values, a bug in pinlib)."""
    soft_limit(chk, *values, what=what)
    if STATUSES.index(chk.status) != bc.status.item(0):
        raise RuntimeError(f"open-drain wording of {chk.id} {chk.subject}: status "
                           f"{chk.status}, the batch's {STATUSES[bc.status.item(0)]}")
    return chk


def _failed(chk: Check, fix: str, sep: str = "; ") -> None:
    chk.fix = fix
    chk.message += f"{sep}{fix}"


def _by_margin(margins) -> list:
    """(margin, row) of each row, smallest margin first (a stable sort: the first of
    equal margins first)."""
    return sorted(((m, k) for k, m in enumerate(margins)), key=lambda x: x[0])


def line(w: Words, ln: LineInputs) -> None:
    """Every check of one line, worded, in the engine's order."""
    seg_in, lim, grp = w.seg_in, w.lim, w.grp
    up, tol = ln.signal.upper(), seg_in.tol
    r_eff = w.r_eff(ln.signal)
    rp_lo, rp_hi = r_eff * (1 - tol), r_eff * (1 + tol)
    if lim.cb_max is not None:
        p = ln.cb_parts
        # pins and traces always; cables and extra capacitance only where the design has
        # them (details carry all four)
        shown = ", ".join(f"{name} {_f(p[name], 'F')}" for name in ("pins", "traces", "cables",
                                                                  "extra")
                          if name in ("pins", "traces") or p[name])
        grp.add(make(w.take("bus-capacitance"), lim.source_cb,
                     f"{up} bus capacitance {_f(ln.cb, 'F')} ({shown})", subject=up,
                     details=dict(p)))
    if lim.leakage_bus is not None:
        chk = make(w.take("bus-leakage"), lim.source_leakage_bus,
                   f"{up} leakage {_f(ln.leakage, 'A')}, every pin on the segment "
                   f"together, against {_f(lim.leakage_bus, 'A')}", subject=up)
        if chk.status == "fail":
            _failed(chk, "fewer devices on this segment, parts that leak less, or a bus "
                         "buffer splitting it")
        grp.add(chk)
    grp.add(_window(w, ln, r_eff, rp_lo))
    defin = ("30–70 %" if lim.rise_definition == "30-70" else "SMBus points 0.65 V–1.50 V")
    bc = w.take("rise-time")
    # an infinite factor (a rail below the SMBus upper point) has no number
    details = {"definition": lim.rise_definition,
               "factor": ln.rise_factor if math.isfinite(ln.rise_factor) else None}
    if bc.basis is None:
        basis = (f"{defin}, Rp {_f(rp_hi, 'Ω')} at +{_f(tol, '%')}, Cb {_f(ln.cb, 'F')}, "
                 f"factor {ln.rise_factor:.4g}")
    else:  # joined through pass transistors while they conduct (batch.Join)
        text, details["joined"] = joined_words(w, bc.basis, row_corner(bc)[1], ln.cb,
                                               bc.basis.rp_hi)
        basis = (f"{defin}, Rp {_f(rp_hi, 'Ω')} at +{_f(tol, '%')}; {text}"
                 f"{M.RISE_ALONE_ABOVE}")
    if math.isfinite(bc.value[0]):
        grp.add(make(bc, lim.source_edges, f"{up} rise time {_f(bc.value[0], 's')} ({basis})",
                     subject=up, details=details))
        _leaky_rise_note(w, ln, rp_hi, defin)
    else:
        grp.add(_never_rises(w, bc, ln, rp_hi, basis, details))
    _fastest_rise(w, ln, rp_lo, defin)
    far = w.far_links()
    behind = any(True for _ in far_drivers(far, w.ctx.collected, ln.signal))
    local = [d for d in ln.drivers if d.offset is None]
    offsets = [d for d in ln.drivers if d.offset is not None]
    if ln.receivers and (local or behind):
        _v_ol(w, ln, far)
    if local or offsets:
        _sink(w, ln, far)
    elif not behind:
        grp.notes.append(_pulled_low_afar(w, ln.signal))
    if not (local or behind) and offsets:
        grp.notes.append(f"{up} is driven low on this segment only by the static-offset side "
                         f"of {few_named(d.tap.label for d in offsets)}: see bridge-offset")
    if ln.receivers:
        _v_oh(w, ln, rp_hi)
    _fall(w, ln, far)


def _never_rises(w: Words, bc, ln: LineInputs, rp_hi: float, basis: str,
                 details: dict) -> Check:
    """The rise-time check where the pins' leakage through the pull-up holds the line
    below the rise's upper measuring level (at a rail corner): the line never completes
    the rise and has no rise time (failed, with the reason, as a line that never falls
    fails its fall time)."""
    vdd, held = held_high(w.seg_in, ln, rp_hi)
    v_hi = float(w.lim.measuring_levels(vdd)[1])
    up = ln.signal.upper()
    if vdd <= v_hi:  # the rail itself stays below the point (an SMBus rail)
        reason = M.RISE_ABOVE_RAIL.format(line=up, level=_f(v_hi, "V"), vdd=_f(vdd, "V"))
        chk = make(bc, w.lim.source_edges, f"{up} has no rise time: {reason}", subject=up,
                   details=details, reason=reason)
        chk.margin = None
        _failed(chk, M.RISE_ABOVE_RAIL_FIX.format(level=_f(v_hi, "V")))
        return chk
    reason = (f"{up} never rises to {_f(v_hi, 'V')}, where its rise time ends: the pins' "
              f"leakage {_f(ln.leakage, 'A')} through the pull-up holds it at {_f(held, 'V')} "
              f"on the rail's {_f(vdd, 'V')}")
    chk = make(bc, w.lim.source_edges, f"{up} has no rise time: {reason} ({basis})",
               subject=up, details=details, reason=reason)
    chk.margin = None
    _failed(chk, "a smaller pull-up, or parts that leak less (see VOH)")
    return chk


def held_high(seg_in: SegmentInputs, ln: LineInputs, rp_hi: float) -> tuple[float, float]:
    """The rail's minimum, and the level the pins' leakage through the pull-up ``rp_hi``
    holds the line at there (never below 0 V): where the leakage's drop is the largest
    share of the rail. [V]"""
    vdd = float(seg_in.vdd[0])
    return vdd, max(vdd - ln.leakage * rp_hi, 0.0)


def _fastest_rise(w: Words, ln: LineInputs, rp_lo: float, defin: str) -> None:
    """The rise-time minimum where the mode has one (I2C Fast-mode): the rise through
    the pull-up at its low end into Cb at the low end of its tolerances.  The pins'
    values are their maxima, so a line with less capacitance rises faster still: a rise
    under the minimum here is under it on the board too (it fails), and one above it
    holds only as far as the capacitance is really there, which the check says."""
    bc = w.peek("rise-time-min")
    if bc is None or bc.signal != ln.signal.upper():
        return
    w.take("rise-time-min")
    up, tol = ln.signal.upper(), w.seg_in.tol
    chk = make(bc, w.lim.source_edges,
               f"{up} fastest rise {_f(bc.value[0], 's')} ({defin}, Rp {_f(rp_lo, 'Ω')} at "
               f"−{_f(tol, '%')}, Cb {_f(ln.cb_low, 'F')} with its tolerances at their low "
               f"ends) against tr(min) "
               f"{_f(bc.limit[0], 's')}; the pins' capacitances are their stated maxima, "
               "so a bus with less rises faster", subject=up,
               details={"definition": w.lim.rise_definition, "factor": ln.rise_factor})
    if chk.status == "fail":
        _failed(chk, "a larger pull-up, inside its window")
    w.grp.add(chk)


def _pulled_low_afar(w: Words, signal: str) -> str:
    """The note of a line that no driver on its segment, nor one across a single pass
    transistor, pulls low.  Every segment is joined to the controller's (the loader
    refuses one that is not), so the line is pulled low from further away: through two
    or more bridging parts in a row (a pass transistor beyond another, or beyond a
    repeater), which the engine does not work out; the note names the devices."""
    up, start = signal.upper(), w.seg_in.index
    reached, queue = {start}, [start]
    while queue:  # a walk over the segments joined by bridging parts, each taken once
        i = queue.pop()
        for link in w.ctx.links[i]:
            if link.other not in reached:
                reached.add(link.other)
                queue.append(link.other)
    names = sorted({d.tap.label for i in reached if i != start
                    for d in w.ctx.collected[i].lines[signal].drivers
                    if not d.tap.dev.is_bridge})
    head = (f"{up}: pulled low only from beyond the segments next to this one, through "
            f"two or more bridging parts in a row ({and_list(names)})" if names else
            f"{up}: no device on this segment drives the line low")
    return (f"{head}; its low level, sink current and fall time are not worked out "
            "here")


#: A rise the pins' leakage lengthens by at least this much against the specification's
#: formula is noted (common practice, no source: below it the difference is within what
#: a bus's capacitance is known to).
LEAKY_RISE_NOTED = 0.05


def _leaky_rise_note(w: Words, ln: LineInputs, rp_hi: float, defin: str) -> None:
    """A note where the pins' leakage through the pull-up lengthens the rise between the
    bus's measuring levels (``defin``) by :data:`LEAKY_RISE_NOTED` or more
    (``physics.pullup.rise_time_with_leakage``, at the rail's minimum, where the drop is
    the largest share of it, and the pull-up at its top, the rise-time check's): the
    check keeps the specification's formula, which leaves leakage out.  A line held
    short of the upper level has no rise at all: its check says so
    (:func:`_never_rises`)."""
    if not ln.leakage > 0 or not ln.cb > 0:
        return
    vdd, held = held_high(w.seg_in, ln, rp_hi)
    v_lo, v_hi = (float(x) for x in w.lim.measuring_levels(vdd))
    lo, hi = v_lo / vdd, v_hi / vdd
    t0 = float(rise_time_with_leakage(rp_hi, ln.cb, vdd, 0.0, lo, hi))
    t = float(rise_time_with_leakage(rp_hi, ln.cb, vdd, ln.leakage, lo, hi))
    if math.isfinite(t) and t0 > 0 and t >= t0 * (1 + LEAKY_RISE_NOTED):
        w.grp.notes.append(f"{ln.signal.upper()}: the pins' leakage {_f(ln.leakage, 'A')} "
                           f"through the pull-up {_f(rp_hi, 'Ω')} holds the line's high "
                           f"level at {_f(held, 'V')} on the rail's minimum {_f(vdd, 'V')}"
                           f", so its rise ({defin}) takes {_f(t, 's')}, "
                           f"{_f(t / t0 - 1, '%')} more than the specification's formula "
                           "that the rise-time check keeps (it leaves leakage out)")


def _window(w: Words, ln: LineInputs, r_eff: float, rp_lo: float) -> Check:
    lim, seg_in = w.lim, w.seg_in
    tol, up = seg_in.tol, ln.signal.upper()
    bc = w.take("pullup-window")
    m_lo, m_hi = (one(x) for x in bc.basis)
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
    lo_text = _f(ln.rp_min, 'Ω') if math.isfinite(ln.rp_min) else "none (no value: see below)"
    hi_text = _f(ln.rp_max, 'Ω') if math.isfinite(ln.rp_max) else "no upper limit"
    window = f"[{lo_text}, {hi_text}]"
    value = float(bc.value[0])
    if not math.isfinite(ln.rp_min):
        # the far side's pull-ups alone exceed a sink's rating: no Rp(min) exists
        reason = ("no Rp(min) exists: the pull-ups across the translator alone draw more "
                  "than the weakest sink's rating, so no pull-up on this segment is large "
                  "enough")
        chk = Check("pullup-window", "fail", rp_lo, None, "Ω", None, src,
                    f"{up} pull-up {shown} at −{_f(tol, '%')}: {_f(rp_lo, 'Ω')}; "
                    f"{reason}", subject=up, details=details, reason=reason)
    else:
        sign = "−" if m_lo <= m_hi or not math.isfinite(ln.rp_max) else "+"
        chk = make(bc, src, f"{up} pull-up {shown} at {sign}{_f(tol, '%')}: {_f(value, 'Ω')} "
                   f"against the window {window}", subject=up, details=details)
    # the batch's second row: the largest Rp(min) of a firm sink, where Rp(min) itself
    # rests on a soft one and the pull-up is below the firm bound too (it fails)
    firm_row = (bc.row is not None and int(bc.row[0]) == 1
                and ln.rp_min_firm[1] is not None)
    if firm_row:
        r_f, d_f, label_f = ln.rp_min_firm
        basis = getattr(d_f.i_ol_value, "rests_on", None) or "published"
        chk.message += M.WINDOW_BELOW_FIRM.format(limit=_f(r_f, 'Ω'), driver=label_f,
                                                  basis=basis)
        chk.source = f"{src}; Rp(min) {_f(r_f, 'Ω')} from {d_f.source_i}"
        chk.details.update(rp_min_firm=r_f, rp_min_firm_driver=label_f)
    if chk.status == "fail":
        _failed(chk, window_advice(lim, seg_in, ln, m_lo, m_hi))
    # at its lower end the window rests on the weakest sink's point (Rp(min), eq. 2)
    low = m_lo <= m_hi or not math.isfinite(ln.rp_max)  # the batch's end
    values = rp_min_rests_on(ln, float(seg_in.vdd[1])) if low and not firm_row else []
    return firm_or_soft(chk, bc, *values, what="sink point (v_ol at i_ol)")


def _v_ol(w: Words, ln: LineInputs, far: list) -> None:
    """The bus low level against every receiver's VIL, and the low-level noise margin."""
    lim, up = w.lim, ln.signal.upper()
    bc = w.take("v-ol")
    k, c = row_corner(bc)
    r = ln.receivers[k]
    rows = _by_margin(bc.row_margins[0].tolist())
    failing = [ln.receivers[j].tap.label for m, j in rows if m < 0]
    by = bc.by_names[int(bc.by[0])]
    # the sink held to IOL above VOL on a segment without a pass transistor (arith.
    # low_levels); across one its datasheet point stays a resistance
    held = "" if far else ", at most its IOL above its VOL"
    chk = make(bc, r.source, f"{up} low level {_f(bc.value[0], 'V')} (driver {by} at the actual "
               f"current{held}, {_CORNERS[c]}, incl. I·Rs) against "
               f"VIL {_f(bc.limit[0], 'V')} of {r.tap.label}", subject=f"{up} {r.tap.label}",
               details={"receivers": {ln.receivers[j].tap.label: m for m, j in rows},
                        "sink_model": SINK_MODEL})
    _conditional_on_r_on(w, far, chk)
    if failing:
        _failed(chk, f"receivers {few_named(failing)} read the low level as high: a larger "
                     "pull-up, a stronger sink, smaller series resistors"
                     + ("" if far else ", or a translator"))
    w.grp.add(firm_or_soft(chk, bc, r.v_il_value, what="VIL"))
    _noise_margin(w, up, "low", "lowest VIL − low level", lim.v_nl_rel)



def _noise_margin(w: Words, up: str, side: str, basis: str, rel: float,
                  ln: LineInputs | None = None, rp_hi: float = math.nan) -> None:
    """The line's low- or high-level noise margin, when the batch made one for it; a
    failing high-level margin of a leaking line (``ln``, its pull-up ``rp_hi`` at + its
    tolerance) names the largest pull-up that meets it."""
    nm = w.peek(f"noise-margin-{side}")
    if nm is None or nm.signal != up:
        return
    w.take(f"noise-margin-{side}")
    _, c = row_corner(nm)
    chk = make(nm, w.lim.source_noise,
               f"{up} {side}-level noise margin {_f(nm.value[0], 'V')} ({basis}, "
               f"{_CORNERS[c]}) against {rel:g}·VDD", subject=up)
    if chk.status == "fail" and ln is not None:
        fix = _leakage_fix(w, ln, rp_hi, float(nm.value[0]) - float(nm.limit[0]), c)
        if fix:
            _failed(chk, fix)
    w.grp.add(chk)


def _leakage_fix(w: Words, ln: LineInputs, rp_hi: float, short: float, c: int) -> str:
    """What a high level ``short`` volts under its limit (at rail corner ``c``) needs of
    the pull-up: the largest effective pull-up (nominal) whose leakage drop meets it,
    ``Rp·(1 + tol) ≤ rp_hi + short / ΣI``; and where that is under Rp(min), that no
    pull-up can.  Empty where nothing leaks or even no drop at all would meet it (the
    rail is too low).  A drop larger than the rail leaves the level at 0 V, not below:
    ``short`` is then worked from the drop itself."""
    tol = w.seg_in.tol
    if not ln.leakage > 0:
        return ""
    short -= max(0.0, ln.leakage * rp_hi - float(w.seg_in.vdd[c]))  # the level held at 0 V
    r_ok = rp_hi + short / ln.leakage
    if not r_ok > 0:
        return ""
    top = r_ok / (1 + tol)
    text = (f"an effective pull-up of at most {_f(top, 'Ω')} (at +{_f(tol, '%')}: the leakage "
            f"{_f(ln.leakage, 'A')} drops the high level by ΣI·Rp)")
    if math.isfinite(ln.rp_min) and top < ln.rp_min / (1 - tol):
        text += (f", below Rp(min) {_f(ln.rp_min / (1 - tol), 'Ω')}: no pull-up meets both; "
                 "fewer or less leaky devices on the line, or a bus buffer splitting it")
    return text

def _conditional_on_r_on(w: Words, far: list, chk: Check) -> None:
    """A low level computed through a pass transistor whose on-resistance is not assured
    (gate overdrive below GATE_OVERDRIVE) holds only if it is: say so."""
    for link, _, _ in far:
        over = overdrive(link, w.ctx.collected)
        if over is None or over >= GATE_OVERDRIVE:
            continue
        text = (f"conditional: it takes {link.dev.ref}'s on-resistance {_f(link.r_on, 'Ω')}, "
                f"not assured at {_f(over, 'V')} gate overdrive (bridge-gate-drive)")
        chk.message += f"; {text}"
        chk.details["conditional"] = text


def _sink(w: Words, ln: LineInputs, far: list) -> None:
    """Sink current against each driver's rating (the worst one reported)."""
    up, tol = ln.signal.upper(), w.seg_in.tol
    bc = w.take("sink-current")
    k, _ = row_corner(bc)
    d = ln.drivers[bc.basis[k]]
    currents = bc.row_values[0].tolist()
    order = sorted(range(len(currents)),
                   key=lambda j: -(currents[j] / ln.drivers[bc.basis[j]].i_ol))
    extra = " and the far side's pull-up through the translator" if far else ""
    # a driver on its own rail draws the most at that rail's minimum (its smallest VOL)
    own = M.SINK_OWN_RAIL_LOW.format(vdd=_f(d.tap.vdd, 'V')) if d.tap.own else ""
    chk = make(bc, d.source_i,
               f"{up} sink current {_f(bc.value[0], 'A')} (pull-up at −{_f(tol, '%')}, rail at its "
               f"maximum{extra}{own}) against {d.tap.label}'s rating {_f(d.i_ol, 'A')} at "
               f"{_f(float(d.v_ol_low[1]), 'V')}", subject=f"{up} {d.tap.label}",
               details={"drivers": {ln.drivers[bc.basis[j]].tap.label: currents[j]
                                    for j in order}})
    if chk.status == "fail" and not math.isfinite(ln.rp_min):
        _failed(chk, "no pull-up on this segment helps: the pull-ups across the translator "
                     "alone draw more than the weakest sink's rating (see pullup-window)")
    elif chk.status == "fail":
        _failed(chk, f"raise the effective pull-up to at least "
                     f"{_f(ln.rp_min / (1 - tol), 'Ω')} (Rp(min) at −{_f(tol, '%')})")
    w.grp.add(firm_or_soft(chk, bc, d.i_ol_value, what="IOL"))


def _v_oh(w: Words, ln: LineInputs, rp_hi: float) -> None:
    """The high level after leakage against every receiver's VIH; its noise margin."""
    lim, up = w.lim, ln.signal.upper()
    bc = w.take("v-oh")
    k, c = row_corner(bc)
    r = ln.receivers[k]
    rows = _by_margin(bc.row_margins[0].tolist())
    failing = [ln.receivers[j].tap.label for m, j in rows if m < 0]
    src = r.tap.source("v_ih") if r.tap.pin.v_ih is not None else lim.source_levels
    level = (f"rail − {_f(ln.leakage, 'A')} leakage × {_f(rp_hi, 'Ω')}, {_CORNERS[c]}"
             if bc.value[0] > 0 else
             f"the leakage {_f(ln.leakage, 'A')} × {_f(rp_hi, 'Ω')} would drop "
             f"{_f(ln.leakage * rp_hi, 'V')}, more than the rail: the leakage pulls the line "
             f"to ground, {_CORNERS[c]}")
    chk = make(bc, src, f"{up} high level {_f(bc.value[0], 'V')} ({level}) against VIH "
               f"{_f(bc.limit[0], 'V')} of {r.tap.label}", subject=f"{up} {r.tap.label}",
               details={"receivers": {ln.receivers[j].tap.label: m for m, j in rows}})
    if failing:
        fix = _leakage_fix(w, ln, rp_hi, float(bc.value[0]) - float(bc.limit[0]), c)
        _failed(chk, f"{few_named(failing)} cannot read the pull-up rail as high: pull up to "
                     "a rail they accept, put a level translator between, or lower the pull-up "
                     f"(leakage drop){': ' + fix if fix else ''}")
    w.grp.add(firm_or_soft(chk, bc, r.v_ih_value, what="VIH"))
    _noise_margin(w, up, "high", "high level − highest VIH", lim.v_nh_rel, ln, rp_hi)


def _fall(w: Words, ln: LineInputs, far: list) -> None:
    """Fall time (upper bound from each driver's guaranteed sink) and tf(min)."""
    lim, seg_in, up, tol = w.lim, w.seg_in, ln.signal.upper(), w.seg_in.tol
    bc = w.peek("fall-time")
    if bc is None or bc.signal != up:
        return
    w.take("fall-time")
    k, c = row_corner(bc)
    info, s_i, j = bc.basis[k]
    d = w.ctx.collected[s_i].lines[ln.signal].drivers[j]
    via = "" if s_i == seg_in.index else f" via {bc.names[k].rsplit(' via ', 1)[1]}"
    text, details = fall_basis(lim, d, info, c, ln.cb)
    basis = (f"driver {d.tap.label}{via}: {text}; pull-up at −{_f(tol, '%')}, Cb {_f(ln.cb, 'F')}, "
             f"{_CORNERS[c]}")
    join = info.get("join")
    if join is not None:  # the sink discharges both lines while the transistor conducts
        text, details["joined"] = joined_words(w, join, c, ln.cb, join.rp_lo)
        basis += f"; {text}"
    offset = info.get("offset")
    if math.isfinite(bc.value[0]):
        chk = make(bc, lim.source_edges, f"{up} fall time at most {_f(bc.value[0], 's')} "
                   f"({basis})", subject=up, details=details)
    else:  # the bound is infinite: the line never reaches the fall's lower level
        if offset is not None:  # a static-offset side: its low sits at the offset
            off = np.asarray(offset, dtype=float).reshape(-1)
            details["offset_level"] = float(off[c] if off.size > 1 else off[0])
        chk = _never_falls(w, bc, up, basis, c, details, details.get("joined"),
                           (d.tap.label, details["offset_level"]) if offset is not None
                           else None)
    if chk.status == "fail" and chk.value is None and offset is not None:
        v_lo = float(lim.fall_levels(float(seg_in.vdd[c]))[0])
        _failed(chk, M.FALL_OFFSET_FIX.format(v_lo=_f(v_lo, "V")))
    elif chk.status == "fail" and chk.value is None and join is not None:
        _failed(chk, M.FALL_JOINED_NEVER_FIX.format(via=and_list(details["joined"]["via"])))
    elif chk.status == "fail":
        _failed(chk, "a stronger sink, a larger pull-up (inside its window), less bus "
                     "capacitance, or a part that states its output fall time (t_of_max)")
        if join is not None:
            chk.fix += M.FALL_JOINED_FIX.format(via=and_list(details["joined"]["via"]))
            chk.message += M.FALL_JOINED_FIX.format(via=and_list(details["joined"]["via"]))
    if bc.soft is not None and bool(bc.soft[0]) and join is not None:
        _soft_threshold(chk, bc, join)
    w.grp.add(chk)
    tf_min = lim.tf_min(float(seg_in.vdd[1]))
    if tf_min is None:
        return
    missing = []
    for d in ln.drivers:
        t_of = d.tap.pin.t_of_min
        if t_of is not None:
            m = w.take("fall-time-min")
            w.grp.add(make(m, lim.source_edges,
                           f"{up} output fall time of {d.tap.label} at least "
                           f"{_f(float(t_of.value), 's')} (its part's t_of_min) against "
                           f"tf(min) {_f(tf_min, 's')}", subject=f"{up} {d.tap.label}"))
        elif not d.tap.dev.is_bridge:
            missing.append(d.tap.label)
    if missing:
        _default(seg_in, f"tf(min) {_f(tf_min, 's')} ({lim.source_edges}) is the "
                         "responsibility of each device's slope-controlled output; its "
                         "part states no t_of_min, so it is not checked",
                 f"{up}: " + ", ".join(missing))


def _never_falls(w: Words, bc, up: str, basis: str, c: int, details: dict,
                 joined: dict | None = None, offset: tuple | None = None) -> Check:
    """The fall-time check where its bound is infinite: the driver's guaranteed sink
    cannot pull the line through the fall's lower measuring level against the pull-up
    (``joined``: against both segments' pull-ups, below the level where the pass
    transistor conducts; ``offset``: a static-offset side's low sits at or above it), so
    the line never falls and has no fall time (failed, with the reason)."""
    v_lo = float(w.lim.fall_levels(float(w.seg_in.vdd[c]))[0])
    if offset is not None:  # (driver, the level its static offset holds the line at)
        reason = M.FALL_OFFSET_NEVER.format(up=up, v_lo=_f(v_lo, "V"), driver=offset[0],
                                            level=_f(offset[1], "V"))
    elif joined is None:
        reason = (f"{up} never falls to {_f(v_lo, 'V')}, where its fall time ends: against "
                  "the pull-up the driver's guaranteed sink cannot pull the line that low")
    else:
        reason = M.FALL_JOINED_NEVER.format(up=up, v_lo=_f(v_lo, "V"),
                                            via=and_list(joined["via"]),
                                            v_join=_f(joined["v_join"], "V"))
    chk = make(bc, w.lim.source_edges, f"{up} has no fall time: {reason} ({basis})",
               subject=up, details=details, reason=reason)
    chk.margin = None
    return chk


def _soft_threshold(chk: Check, bc, join) -> None:
    """A joined fall that fails only with the translator's soft threshold maximum (the
    batch held it at a warning): it warns, saying so; ``details.value_basis`` names the
    threshold's basis (its limit, the specification's tf, is firm)."""
    th = join.link.dev.part.bridge.v_gs_th
    basis = soft_basis(th)
    chk.details = {**chk.details, "value_basis": basis}
    if chk.status == "fail":
        chk.status = "warn"
        # why it only warns, as a soft limit's basis says it (model.result.why_warns)
        chk.details["soft_value"] = basis
        chk.message += M.FALL_JOINED_SOFT.format(
            ref=join.link.dev.ref, vth=_f(float(th.value), "V"), typ=_f(float(th.typ), "V"),
            basis="a class's typical value" if basis == "generic" else "an estimate")
    if STATUSES.index(chk.status) != bc.status.item(0):
        raise RuntimeError(f"open-drain wording of {chk.id} {chk.subject}: status "
                           f"{chk.status}, the batch's {STATUSES[bc.status.item(0)]}")


def joined_words(w: Words, join, c: int, cb: float, rp_far) -> tuple[str, dict]:
    """The words and details of a line joined through pass transistors (an
    :class:`.arith.Join` at corner ``c``; ``rp_far`` the far pull-up at the end the check
    took)."""
    links = join.links or [join.link]
    segs = w.ctx.collected
    v_join = np.asarray(join.v_join, dtype=float).reshape(-1)
    v_join = float(v_join[c] if v_join.size > 1 else v_join[0])
    vals = {"via": and_list([ln.dev.ref for ln in links]),
            "far": and_list([segs[ln.other].segment.id for ln in links]),
            "v_join": _f(v_join, "V"), "cb": _f(cb, "F"), "cb_far": _f(one(join.cb), "F"),
            "rp_far": _f(one(rp_far), "Ω")}
    details = {"via": [ln.dev.ref for ln in links],
               "segments": [segs[ln.other].segment.id for ln in links],
               "v_join": v_join, "cb_far": one(join.cb), "rp_far": one(rp_far)}
    return M.EDGE_JOINED.format(**vals), details


def fall_basis(lim, d, info: dict, c: int, cb: float) -> tuple[str, dict]:
    """What bounds the reported fall time (at corner ``c``; ``info`` as
    :func:`.arith.fall_bounds` gives it, one variant): the text and the details."""
    t_sink = float(info["t_sink"].reshape(-1)[c] if info["t_sink"].size > 1
                   else info["t_sink"].reshape(-1)[0])
    t_of = info["t_of"]
    if t_of is not None:
        t_of = t_of.reshape(-1)
        t_of = float(t_of[c] if t_of.size > 1 else t_of[0])
    sink = (f"sinking at least {_f(d.i_ol, 'A')} above {_f(float(d.v_ol[c]), 'V')} and as "
            f"{_f(float(d.r_sink[c]), 'Ω')} (VOL/IOL) below it")
    details = {"bound": "constant sink current", "sink_bound": t_sink,
               "sink_model": SINK_MODEL}
    if t_of is not None and math.isfinite(t_of) and t_of <= t_sink:
        if info["kind"] == BY_PART:
            src = d.tap.source("t_of_max")
            details.update(bound="t_of_max of its part", bound_source=src)
            return (f"its part's output fall time t_of_max {_f(t_of, 's')} ({src}); the sink "
                    f"alone bounds it at {_f(t_sink, 's')}"), details
        spec = lim.output_fall()
        details.update(bound="tof of a compliant output stage", bound_source=spec.source)
        return (f"tof {_f(t_of, 's')} of a compliant {lim.label} output stage ({spec.source}), "
                f"Cb inside its range; the sink alone bounds it at {_f(t_sink, 's')}"), details
    if info["why"]:
        details["tof_not_used"] = info["why"]
    return sink, details
