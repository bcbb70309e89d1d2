"""A rise time measured on the board, against the design's modelled bus capacitance.

On the bench an open-drain line's rise is read on an oscilloscope between two levels,
with a probe that adds its own capacitance.  The line is an RC charge through the
pull-up (UM10204 rev. 6 §7.1): ``t = Rp (Cb + C_probe) ln((1 - lo) / (1 - hi))``, so the
reading gives ``Cb`` (:func:`pinlib.physics.pullup.capacitance_from_rise`).  This module
takes the pull-up the engine finds on the line (the design's resistor in parallel with
the parts' own, nominal), turns the reading into Cb over the pull-up's tolerance, and
compares it with the Cb the engine models (every contribution at its maximum).  When the
two disagree it lists the model's contributions, largest first, as the places to
revisit.
"""

from __future__ import annotations

from dataclasses import field

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.core.quantity import format_si
from pinlib.core.valueclass import value_class
from pinlib.engines.opendrain import SIGNALS, capacitance_from_rise, collect
from pinlib.model.design import Design

__all__ = ["READING_TOLERANCE", "BenchComparison", "compare_rise"]

#: The physics' names of the reading's values, and the command's options they come from.
_OPTIONS = {"t_measured": ("--rise", "s"), "c_probe": ("--probe", "F"), "lo/hi": ("--levels", "")}

#: How far a cursor reading of a rise time on an oscilloscope may be off (the edge's
#: ends are read by eye on a slow exponential): common practice, no source.
READING_TOLERANCE = 0.10

def _cap(value: float) -> str:
    return format_si(value, "F") if value else "0 pF"


_REVISIT = {
    "pins": M.REVISIT_PINS,
    "traces": M.REVISIT_TRACES,
    "cables": M.REVISIT_CABLES,
    "extra": M.REVISIT_EXTRA,
}


@value_class(frozen=True)
class BenchComparison:
    """A measured rise time turned into Cb and set against the model.

    Attributes
    ----------
    bus, segment, signal : str
        Where the reading was taken.
    rise, c_probe : float
        The reading and the probe's capacitance. [s], [F]
    levels : tuple of float
        The measuring levels as fractions of the rail. [1]
    rp : float
        The pull-up on the line, nominal. [Ω]
    rp_tolerance : float
        Its tolerance (the design's ``pullup_tolerance``). [1]
    cb : float
        Bus capacitance from the reading at the nominal pull-up, without the probe. [F]
    cb_low, cb_high : float
        The same over the pull-up's tolerance and the reading's (:data:`READING_TOLERANCE`). [F]
    cb_model : float
        The engine's Cb of the line, every contribution at its maximum. [F]
    contributions : dict
        The model's Cb by contribution (pins, traces, cables, extra). [F]
    verdict : str
        ``"agrees"``, ``"above"`` (the board has more than the model) or ``"below"``.
    revisit : list of str
        What to look at again, most likely first (empty when they agree).
    """

    bus: str
    segment: str
    signal: str
    rise: float
    c_probe: float
    levels: tuple
    rp: float
    rp_tolerance: float
    cb: float
    cb_low: float
    cb_high: float
    cb_model: float
    contributions: dict
    verdict: str
    revisit: list = field(default_factory=list)

    def to_json(self) -> dict:
        return {
            "bus": self.bus, "segment": self.segment, "signal": self.signal,
            "rise": self.rise, "c_probe": self.c_probe, "levels": list(self.levels),
            "rp": self.rp, "rp_tolerance": self.rp_tolerance, "cb": self.cb,
            "cb_range": [self.cb_low, self.cb_high], "cb_model": self.cb_model,
            "contributions": dict(self.contributions), "verdict": self.verdict,
            "revisit": list(self.revisit), "reading_tolerance": READING_TOLERANCE,
            "source": "RC rise t = Rp (Cb + C_probe) ln((1 - lo)/(1 - hi)), UM10204 rev. 6 §7.1",
        }

    def format_text(self, width: int | None = None) -> str:
        """The comparison as text, each line wrapped to ``width`` (None: no limit)."""
        lo, hi = self.levels
        f = format_si
        lines = [
            f"bus {self.bus}, segment {self.segment}, {self.signal.upper()}: rise "
            f"{f(self.rise, 's')} ({lo:.0%}-{hi:.0%}) with a {f(self.c_probe, 'F')} probe, "
            f"Rp {f(self.rp, 'Ω')} (±{self.rp_tolerance:.0%})",
            f"  measured Cb  {f(self.cb, 'F')}  (range {f(self.cb_low, 'F')} to "
            f"{f(self.cb_high, 'F')}: pull-up tolerance and ±{READING_TOLERANCE:.0%} reading, "
            "common practice)",
            f"  modelled Cb  {f(self.cb_model, 'F')}  (" + ", ".join(
                f"{k} {_cap(v)}" for k, v in self.contributions.items()) + ")",
        ]
        verdict = {"agrees": M.BENCH_AGREES, "above": M.BENCH_ABOVE,
                   "below": M.BENCH_BELOW}[self.verdict]
        lines.append("  " + verdict)
        lines += [f"  - {r}" for r in self.revisit]
        if width is not None:
            from pinlib.core.wrapping import wrap

            lines = [w for ln in lines
                     for w in wrap(ln.lstrip(), width, ln[:len(ln) - len(ln.lstrip())])]
        return "\n".join(lines) + "\n"


def compare_rise(design: Design, bus_id: str, rise: float, c_probe: float, *,
                 levels: tuple[float, float] = (0.3, 0.7), signal: str = "sda",
                 segment: str | None = None) -> BenchComparison:
    """Compare a rise time measured on an open-drain line with the modelled Cb.

    Parameters
    ----------
    design : Design
        The loaded design.
    bus_id : str
        An ``i2c`` or ``smbus`` bus of the design.
    rise : float
        The rise time read between ``levels``. [s]
    c_probe : float
        The probe's capacitance. [F]
    levels : tuple of float
        The measuring levels as fractions of the rail (``(0.3, 0.7)``). [1]
    signal : str
        ``"sda"`` or ``"scl"``.
    segment : str, optional
        The segment of a bus with a bridging part (its first by default).
    """
    try:
        bus = design.bus(bus_id)
    except KeyError:
        raise InputError(M.NO_SUCH_BUS, field="--bus", value=bus_id,
                         expected=", ".join(b.id for b in design.buses)) from None
    if signal not in SIGNALS:
        raise InputError(M.UNKNOWN_OPEN_DRAIN_LINE, field="--line", value=signal,
                         expected=" or ".join(SIGNALS))
    _, seg_ins = collect(bus, design)
    seg_in = seg_ins[0] if segment is None else next(
        (s for s in seg_ins if s.segment.id == segment), None)
    if seg_in is None:
        raise InputError(M.NO_SUCH_SEGMENT, field="--segment", value=segment,
                         expected=", ".join(s.segment.id for s in seg_ins))
    line = seg_in.lines[signal]
    rp = seg_in.r_eff(signal)
    tol = float(seg_in.segment.pullup_tolerance)
    lo, hi = levels
    cb = _from_reading(rise, rp, c_probe, lo, hi)
    # a larger pull-up charges slower: the same reading then means less capacitance
    cb_low, _ = capacitance_from_rise(rise * (1 - READING_TOLERANCE), rp * (1 + tol),
                                      0.0, lo=lo, hi=hi)
    cb_high, _ = capacitance_from_rise(rise * (1 + READING_TOLERANCE), rp * (1 - tol),
                                       0.0, lo=lo, hi=hi)
    cb_low, cb_high = max(float(cb_low) - c_probe, 0.0), float(cb_high) - c_probe
    model = float(line.cb)
    parts = {k: float(v) for k, v in line.cb_parts.items()}
    verdict = "agrees" if cb_low <= model <= cb_high else (
        "above" if cb_low > model else "below")
    revisit: list[str] = []
    if verdict != "agrees":
        for name, value in sorted(parts.items(), key=lambda kv: -kv[1]):
            if value > 0 or (verdict == "above" and name == "extra"):
                revisit.append(_REVISIT[name].format(value=_cap(value)))
        revisit.append(M.REVISIT_PULLUP.format(rp=format_si(rp, "Ω")))
        revisit.append(M.REVISIT_PROBE)
    return BenchComparison(bus.id, seg_in.segment.id, signal, float(rise), float(c_probe),
                           (float(lo), float(hi)), float(rp), tol, float(cb), cb_low, cb_high,
                           model, parts, verdict, revisit)


def _from_reading(rise: float, rp: float, c_probe: float, lo: float, hi: float) -> float:
    """The bus capacitance of a reading; an error names the option it comes from, with
    its value in units (the physics names its own parameters)."""
    try:
        cb, _ = capacitance_from_rise(rise, rp, c_probe, lo=lo, hi=hi)
    except InputError as err:
        option, unit = _OPTIONS.get(err.field, (err.field, ""))
        if option == "--levels":
            value = f"{lo:.0%},{hi:.0%}"
            expected = "0 % <= LO < HI < 100 % of the rail (an RC rise never reaches 100 %)"
        else:
            value = format_si(float(err.value), unit) if unit else err.value
            expected = err.expected
            if err.field == "t_measured" and float(rise) > 0:
                alone = format_si(_probe_rise(rp, c_probe, lo, hi), "s")
                expected = ("a rise longer than the probe alone gives through the pull-up "
                            f"{format_si(rp, 'Ω')}: {alone}")
        raise InputError(err.problem, field=option, value=value, expected=expected,
                         hint=err.hint) from None
    return cb


def _probe_rise(rp: float, c_probe: float, lo: float, hi: float) -> float:
    """The rise between ``lo`` and ``hi`` of the pull-up into the probe alone. [s]"""
    import math

    return rp * c_probe * (math.log1p(-lo) - math.log1p(-hi))
