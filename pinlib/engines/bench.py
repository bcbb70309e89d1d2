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

Two engines state the line: the open-drain engine an I2C or SMBus line (``sda``,
``scl``: its Cb and pull-up, :func:`pinlib.engines.opendrain.collect`), the push-pull
engine a GPIO line an open-drain pin drives (its pull-up,
:func:`pinlib.engines.pushline.open_drain_pullup`, and its figure
``load_capacitance``: the trace and every pin on the net, the driver's own included).
The comparison is one for both.
"""

from __future__ import annotations

from dataclasses import field

from pinlib.core import messages as M
from pinlib.core.errors import InputError, PinlibError
from pinlib.core.protocols import is_open_drain
from pinlib.core.quantity import format_si
from pinlib.core.valueclass import value_class
from pinlib.engines.opendrain import SIGNALS, capacitance_from_rise, collect
from pinlib.engines.pushline import open_drain_pullup
from pinlib.engines.pushpull import line_inputs
from pinlib.model.design import Bus, Design
from pinlib.model.design.objects import PULLUP_TOLERANCE
from pinlib.model.result import Check

__all__ = ["CB_MIN", "CB_UNMODELLED_MAX", "READING_TOLERANCE", "BenchComparison",
           "MeasurableLine", "compare_rise", "measurable_lines"]

#: The physics' names of the reading's values, and the command's options they come from.
_OPTIONS = {"t_measured": ("--rise", "s"), "c_probe": ("--probe", "F"), "lo/hi": ("--levels", "")}

#: How far a cursor reading of a rise time on an oscilloscope may be off (the edge's
#: ends are read by eye on a slow exponential): common practice, no source.
READING_TOLERANCE = 0.10

#: A reading whose Cb exceeds the model's by more than this warns that it is implausible:
#: a board's bus holds tens to hundreds of pF, so what a design leaves out (a pin, a
#: trace, a connector) adds well under it; 10 nF is a cable of about 100 m.  Common
#: practice, no source.
CB_UNMODELLED_MAX = 10e-9
#: A reading whose Cb is under this warns as well: one part's pin alone adds a few pF.
#: Common practice, no source.
CB_MIN = 1e-12

#: The rise times a reading is taken for: an oscilloscope reads no edge faster than
#: 100 ps, and a rise over 10 s is on no time base a bus edge is read with; outside, a
#: reading is a slip ("1e30s").  Within it a reading whose Cb no board holds (1 s, the
#: wrong time base) warns (:func:`_implausible`).  Common practice, no source.
RISE_RANGE = (100e-12, 10.0)
#: The probes a reading is taken with: passive and active probes load a line with well
#: under 1 nF (a 1x passive probe and its cable are about 100 pF).  Common practice, no
#: source.
PROBE_MAX = 1e-9
#: The least distance between the two levels a rise is read between, as a fraction of the
#: rail: closer, the reading's error in either level swamps the capacitance it gives
#: (levels 29.99999999999 % and 30 % gave 478 F).  Common practice, no source.
LEVELS_MIN_APART = 0.05

_CB_HIGH_BASIS = "common practice, no source: a board's bus holds tens to hundreds of pF"
_CB_LOW_BASIS = "common practice, no source: one part's pin alone adds a few pF"


def _cap(value: float) -> str:
    """A capacitance as text; none at all in the prefix the others use: "0 pF", not
    "0 F"; beyond the SI prefixes format_si writes (atto to tera) a bound, never an
    exponent: "< 1 aF", "> 1000 TF"."""
    if not value:
        return "0 pF"
    sign = "-" if value < 0 else ""
    if abs(value) < 1e-18:
        return f"{'> -' if sign else '< '}1 aF"
    if abs(value) >= 1e15:
        return f"{'< -' if sign else '> '}1000 TF"
    return format_si(value, "F")


def _pct(fraction: float) -> str:
    """A fraction as a percentage with the digits it needs: "30 %", "0.3 %", "0.5 %"
    (a level or a tolerance under 1 % never reads "0%")."""
    return format_si(fraction, "%")


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
    bus, signal : str
        Where the reading was taken: the bus and its line (``sda``, ``scl``, a GPIO
        line's name).
    segment : str or None
        The segment of an I2C or SMBus bus; None on a GPIO bus.
    rise, c_probe : float
        The reading and the probe's capacitance. [s], [F]
    levels : tuple of float
        The measuring levels as fractions of the rail. [1]
    rp : float
        The pull-up on the line, nominal. [Ω]
    rp_tolerance : float
        Its tolerance (the design's ``pullup_tolerance``: the bus's or segment's, a GPIO
        line's own). [1]
    cb : float
        Bus capacitance from the reading at the nominal pull-up, without the probe. [F]
    cb_low, cb_high : float
        The same over the pull-up's tolerance and the reading's (:data:`READING_TOLERANCE`). [F]
    cb_model : float
        The engine's Cb of the line, every contribution at its maximum (on a GPIO line
        its figure ``load_capacitance``). [F]
    contributions : dict
        The model's Cb by contribution (pins, traces, cables, extra). [F]
    verdict : str
        ``"agrees"``, ``"above"`` (the board has more than the model) or ``"below"``.
    revisit : list of str
        What to look at again, most likely first (empty when they agree).
    protocol : str
        The bus's protocol (``i2c``, ``smbus``, ``gpio``).
    notes : list of str
        What the reading holds under (a GPIO line that push-pull pins also drive).
    rise_alone : float or None
        The rise between the same levels without the probe, at the nominal pull-up (not
        in :meth:`to_json` nor the text: the workbench's bench panel shows it). [s]
    warnings : list of Check
        The reading's Cb outside what a board's bus can hold (:data:`CB_MIN`,
        :data:`CB_UNMODELLED_MAX`, rules of thumb): each a check of status ``warn``,
        its bound and basis in ``source`` and its message (the verdict is unchanged).
    one_segment : bool
        The line's bus is an open-drain bus of one segment: the text names no segment
        (the segment's id is the bus's own), the JSON still gives it.
    levels_volts : tuple of float or None
        The measuring levels as given in volts (``--levels 0.65V,1.5V``), None where
        they were given as shares of the rail. [V]
    rail : float or None
        The nominal rail the levels in volts were made fractions of. [V]
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
    protocol: str = "i2c"
    notes: list = field(default_factory=list)
    rise_alone: float | None = None
    warnings: list = field(default_factory=list)
    one_segment: bool = False
    levels_volts: tuple | None = None
    rail: float | None = None

    def place(self) -> str:
        """Where the reading was taken: ``bus reset, line reset``, ``bus i2c0, SDA`` (a
        bus of one segment, which its id names) or ``bus sense, segment sense-2, SDA``."""
        if self.segment is None:
            return f"bus {self.bus}, line {self.signal}"
        seg = "" if self.one_segment else f"segment {self.segment}, "
        return f"bus {self.bus}, {seg}{self.signal.upper()}"

    def verdict_text(self) -> str:
        """The verdict as a sentence (the revisit list follows it)."""
        return {"agrees": M.BENCH_AGREES, "above": M.BENCH_ABOVE,
                "below": M.BENCH_BELOW}[self.verdict]

    def to_json(self) -> dict:
        return {
            "bus": self.bus, "protocol": self.protocol, "segment": self.segment,
            "signal": self.signal,
            "rise": self.rise, "c_probe": self.c_probe, "levels": list(self.levels),
            "rp": self.rp, "rp_tolerance": self.rp_tolerance, "cb": self.cb,
            "cb_range": [self.cb_low, self.cb_high], "cb_model": self.cb_model,
            "contributions": dict(self.contributions), "verdict": self.verdict,
            "revisit": list(self.revisit), "notes": list(self.notes),
            "warnings": [w.to_json() for w in self.warnings],
            "levels_volts": None if self.levels_volts is None else list(self.levels_volts),
            "rail": self.rail,
            "reading_tolerance": READING_TOLERANCE,
            "source": "RC rise t = Rp (Cb + C_probe) ln((1 - lo)/(1 - hi)), UM10204 rev. 6 §7.1",
        }

    def format_text(self, width: int | None = None) -> str:
        """The comparison as text, each line wrapped to ``width`` (None: no limit)."""
        lo, hi = self.levels
        f = format_si
        between = f"{_pct(lo)} to {_pct(hi)}"
        if self.levels_volts is not None:
            v_lo, v_hi = self.levels_volts
            between = (f"{f(v_lo, 'V')} to {f(v_hi, 'V')}: {between} of the nominal "
                       f"{f(self.rail, 'V')} rail")
        lines = [
            f"{self.place()}: rise {f(self.rise, 's')} ({between}) with a "
            f"{_cap(self.c_probe)} probe, Rp {f(self.rp, 'Ω')} (±{_pct(self.rp_tolerance)})",
            f"  measured Cb  {_cap(self.cb)}  (range {_cap(self.cb_low)} to "
            f"{_cap(self.cb_high)}: pull-up tolerance and ±{_pct(READING_TOLERANCE)} "
            "reading, common practice)",
            f"  modelled Cb  {_cap(self.cb_model)}  (" + ", ".join(
                f"{k} {_cap(v)}" for k, v in self.contributions.items()) + ")",
        ]
        lines += [f"  note: {n}" for n in self.notes]
        lines += [f"  warning: {w.message}" for w in self.warnings]
        lines.append("  " + self.verdict_text())
        lines += [f"  - {r}" for r in self.revisit]
        if width is not None:
            from pinlib.core.wrapping import wrap

            lines = [w for ln in lines
                     for w in wrap(ln.lstrip(), width, ln[:len(ln) - len(ln.lstrip())])]
        return "\n".join(lines) + "\n"


def compare_rise(design: Design, bus_id: str, rise: float, c_probe: float, *,
                 levels: tuple[float, float] = (0.3, 0.7), signal: str | None = None,
                 segment: str | None = None,
                 levels_volts: tuple[float, float] | None = None) -> BenchComparison:
    """Compare a rise time measured on an open-drain line with the modelled Cb.

    Parameters
    ----------
    design : Design
        The loaded design.
    bus_id : str
        An ``i2c`` or ``smbus`` bus of the design, or a ``gpio`` bus with a line an
        open-drain pin drives.
    rise : float
        The rise time read between ``levels``. [s]
    c_probe : float
        The probe's capacitance. [F]
    levels : tuple of float
        The measuring levels as fractions of the rail (``(0.3, 0.7)``). [1]
    signal : str, optional
        ``"sda"`` (the default) or ``"scl"`` on an I2C or SMBus bus; on a GPIO bus the
        line's name (by default its only line).
    segment : str, optional
        The segment of a bus with a bridging part (its first by default); a GPIO bus
        has none.
    levels_volts : tuple of float, optional
        The measuring levels in volts instead (SMBus reads its rise between 0.65 V and
        1.50 V): made fractions of the line's nominal rail, in place of ``levels``. [V]

    Raises
    ------
    InputError
        An unknown bus, line or segment; a bus of no open-drain line (SPI); a GPIO line
        no open-drain pin drives, or one without a pull-up; a reading the pull-up and the
        probe cannot give.
    """
    try:
        bus = design.bus(bus_id)
    except KeyError:
        raise InputError(M.NO_SUCH_BUS, field="--bus", value=bus_id,
                         expected=", ".join(b.id for b in design.buses)) from None
    if is_open_drain(bus.protocol):
        got = _open_drain_line(bus, design, "sda" if signal is None else signal, segment)
    elif bus.protocol == "gpio":
        got = _gpio_line(bus, design, signal, segment)
    else:
        raise _not_open_drain(bus)
    rp, tol = got.rp, got.tolerance
    lo, hi = levels
    if levels_volts is not None:
        if not levels_volts[1] < got.rail:
            raise InputError(M.LEVEL_NOT_BELOW_RAIL, field="--levels",
                             value=format_si(levels_volts[1], "V"),
                             expected=f"levels below the line's nominal rail "
                                      f"{format_si(got.rail, 'V')} (an RC rise never "
                                      "reaches it)")
        lo, hi = levels_volts[0] / got.rail, levels_volts[1] / got.rail
    _plausible_reading(rise, c_probe, lo, hi)
    cb, alone = _from_reading(rise, rp, c_probe, lo, hi)
    # a larger pull-up charges slower: the same reading then means less capacitance
    cb_low, _ = capacitance_from_rise(rise * (1 - READING_TOLERANCE), rp * (1 + tol),
                                      0.0, lo=lo, hi=hi)
    cb_high, _ = capacitance_from_rise(rise * (1 + READING_TOLERANCE), rp * (1 - tol),
                                       0.0, lo=lo, hi=hi)
    cb_low, cb_high = max(float(cb_low) - c_probe, 0.0), float(cb_high) - c_probe
    model, parts = got.cb_model, got.contributions
    verdict = "agrees" if cb_low <= model <= cb_high else (
        "above" if cb_low > model else "below")
    revisit: list[str] = []
    if verdict != "agrees":
        for name, value in sorted(parts.items(), key=lambda kv: -kv[1]):
            if value > 0 or (verdict == "above" and name == "extra"):
                revisit.append(_REVISIT[name].format(value=_cap(value)))
        revisit.append(M.REVISIT_PULLUP.format(rp=format_si(rp, "Ω")))
        revisit.append(M.REVISIT_PROBE)
    return BenchComparison(bus.id, got.segment, got.signal, float(rise), float(c_probe),
                           (float(lo), float(hi)), float(rp), tol, float(cb), cb_low, cb_high,
                           model, parts, verdict, revisit, protocol=bus.protocol,
                           notes=list(got.notes), rise_alone=float(alone),
                           warnings=_implausible(float(cb), model, rp),
                           one_segment=is_open_drain(bus.protocol) and len(bus.segments) == 1,
                           levels_volts=None if levels_volts is None else (
                               float(levels_volts[0]), float(levels_volts[1])),
                           rail=None if levels_volts is None else float(got.rail))


def _implausible(cb: float, model: float, rp: float) -> list[Check]:
    """The warning of a reading whose Cb no board's bus holds: more than
    :data:`CB_UNMODELLED_MAX` above the model's, or under :data:`CB_MIN` (rules of
    thumb: they warn, they never fail)."""
    shown = {"cb": _cap(cb), "model": _cap(model), "rp": format_si(rp, "Ω")}
    high = model + CB_UNMODELLED_MAX
    if cb > high:
        message = M.BENCH_CB_TOO_HIGH.format(
            excess=_cap(cb - model), bound=_cap(CB_UNMODELLED_MAX), basis=_CB_HIGH_BASIS,
            **shown)
        source = (f"{_CB_HIGH_BASIS}, so a reading's Cb stays within "
                  f"{_cap(CB_UNMODELLED_MAX)} of the model's")
        return [Check("cb-plausible", "warn", cb, high, "F", (high - cb) / high, source,
                      message, details={"rule_of_thumb": True})]
    if cb < CB_MIN:
        message = M.BENCH_CB_TOO_LOW.format(bound=_cap(CB_MIN), basis=_CB_LOW_BASIS, **shown)
        source = f"{_CB_LOW_BASIS}, so a reading's Cb is at least {_cap(CB_MIN)}"
        return [Check("cb-plausible", "warn", cb, CB_MIN, "F", (cb - CB_MIN) / CB_MIN,
                      source, message, details={"rule_of_thumb": True})]
    return []


@value_class(frozen=True)
class MeasurableLine:
    """A line of a design a bench reading can be taken on (:func:`measurable_lines`).

    Attributes
    ----------
    bus : str
        The bus's id.
    protocol : str
        Its protocol (``i2c``, ``smbus``, ``gpio``).
    segment : str or None
        The segment, on an I2C or SMBus bus of more than one; None otherwise.
    signal : str
        ``sda`` or ``scl``, or the GPIO line's name.
    """

    bus: str
    protocol: str
    segment: str | None
    signal: str

    def place(self) -> str:
        """The line as a person names it: ``reset, line reset``, ``i2c0, SDA``,
        ``sense, segment sense-2, SDA``."""
        if self.protocol == "gpio":
            return f"{self.bus}, line {self.signal}"
        return self.bus + (f", segment {self.segment}" if self.segment else "") + \
            f", {self.signal.upper()}"

    def arguments(self) -> dict:
        """The keyword arguments of :func:`compare_rise` that name this line."""
        return {"signal": self.signal, "segment": self.segment}


def measurable_lines(design: Design) -> tuple[list[MeasurableLine], list[tuple]]:
    """The lines of a design :func:`compare_rise` takes a reading on, and the others.

    Every I2C or SMBus bus's SDA and SCL (per segment where it has several), and every
    GPIO line an open-drain pin drives that has a pull-up; not a line only push-pull
    pins drive, one without a pull-up, nor an SPI bus.

    Returns
    -------
    offered : list of MeasurableLine
        In design order.
    refused : list of (str, str or None, PinlibError)
        Each bus (with its line's name, or None for the whole bus) not offered, with the
        error :func:`compare_rise` would raise for it.
    """
    offered: list[MeasurableLine] = []
    refused: list[tuple] = []
    for bus in design.buses:
        if is_open_drain(bus.protocol):
            several = len(bus.segments) > 1
            offered += [MeasurableLine(bus.id, bus.protocol, seg.id if several else None, sig)
                        for seg in bus.segments for sig in SIGNALS]
        elif bus.protocol == "gpio":
            try:
                inputs = {x.signal: x for x in line_inputs(bus, design)}
            except PinlibError as err:
                refused.append((bus.id, None, err))
                continue
            for name in bus.lines:
                try:
                    _gpio_open_drain(bus, design, name, None, inputs)
                except PinlibError as err:
                    refused.append((bus.id, name, err))
                else:
                    offered.append(MeasurableLine(bus.id, bus.protocol, None, name))
        else:
            refused.append((bus.id, None, _not_open_drain(bus)))
    return offered, refused


@value_class(frozen=True)
class _Line:
    """What an engine states of the line measured: where it is, its pull-up (nominal)
    and that pull-up's tolerance, its modelled Cb and Cb's contributions, and the
    nominal rail the pull-up pulls to. [V]"""

    segment: str | None
    signal: str
    rp: float
    tolerance: float
    cb_model: float
    contributions: dict
    notes: tuple = ()
    rail: float = 0.0


def _open_drain_line(bus: Bus, design: Design, signal: str, segment: str | None) -> _Line:
    """An I2C or SMBus line, as the open-drain engine gathers it."""
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
    return _Line(seg_in.segment.id, signal, float(seg_in.r_eff(signal)),
                 float(seg_in.segment.pullup_tolerance), float(line.cb),
                 {k: float(v) for k, v in line.cb_parts.items()},
                 rail=float(seg_in.segment.supply))


def _gpio_open_drain(bus: Bus, design: Design, signal: str | None, segment: str | None,
                     inputs: dict | None = None) -> tuple:
    """A GPIO bus's line a bench reading can be taken on: its inputs to the push-pull
    engine, its open-drain and its push-pull drivers, and the pull-up (nominal) the
    open-drain ones pull against.  ``inputs``, the bus's line inputs by name, when
    already built.  An InputError says why the line cannot be measured."""
    names = list(bus.lines)
    listed = ", ".join(names) or "none (the bus routes no line)"
    if segment is not None:
        raise InputError(M.BENCH_GPIO_SEGMENT, field="--segment", value=segment,
                         expected=f"no --segment; --line names the line ({listed})")
    if signal is None:
        if len(names) != 1:
            raise InputError(M.BENCH_LINE_NEEDED, field="--line",
                             expected=f"--line with one of {listed}")
        signal = names[0]
    if signal not in bus.lines:
        raise InputError(M.BENCH_NO_SUCH_LINE, field="--line", value=signal, expected=listed)
    if inputs is None:
        inputs = {x.signal: x for x in line_inputs(bus, design)}
    li = inputs[signal]
    od = [d for d in li.drivers if d.pin.drive == "open-drain"]
    pp = [d for d in li.drivers if d.pin.drive != "open-drain"]
    if not od:
        others = [s for s, x in inputs.items()
                  if any(d.pin.drive == "open-drain" for d in x.drivers)]
        raise InputError(M.BENCH_PUSH_PULL_LINE, field="--line", value=signal,
                         expected="a line an open-drain pin drives"
                                  + (f" ({', '.join(others)})" if others else
                                     ": this bus has none"),
                         hint=f"{_who(pp)} drive{'s' if len(pp) == 1 else ''} it push-pull")
    # every open-drain driver pulls against the same pull-ups (all the net's but its
    # own, and its own): the first one's
    rp, _ = open_drain_pullup(li.line, li.loads, od[0])
    if rp is None:
        raise InputError(M.BENCH_NO_PULLUP, field="--line", value=signal,
                         expected=f"a pull-up on the line (lines.{signal}.pullup), or a part "
                                  "carrying one on its pin",
                         hint=f"{_who(od)} drive{'s' if len(od) == 1 else ''} it open-drain")
    return li, od, pp, rp


def _gpio_line(bus: Bus, design: Design, signal: str | None, segment: str | None) -> _Line:
    """A GPIO line an open-drain pin drives, as the push-pull engine analyses it: the
    pull-up its open-drain drivers pull against and its figure ``load_capacitance``."""
    li, od, pp, rp = _gpio_open_drain(bus, design, signal, segment)
    signal = li.signal
    tol = PULLUP_TOLERANCE if li.line.pullup_tolerance is None else li.line.pullup_tolerance
    a = li.analyse()
    fig = a.result.figures.get("load_capacitance")
    if fig is None or fig.value is None:
        raise RuntimeError(f"bench: the push-pull engine gave line {signal} of bus {bus.id} "
                           "no load_capacitance")
    cables = sum(st.c for sec, st in zip(li.line.sections, a.stretches, strict=True)
                 if sec.part_id)
    parts = {"pins": float(sum(p.c_in for p in li.loads)),
             "traces": float(a.trace_c - cables), "cables": float(cables),
             "extra": float(li.line.extra_capacitance)}
    total = float(fig.value)
    if abs(sum(parts.values()) - total) > 1e-9 * max(total, 1e-15):
        raise RuntimeError(f"bench: line {signal} of bus {bus.id}: the contributions "
                           f"{parts} do not add up to load_capacitance {total!r}")
    notes = ()
    if pp:
        notes = (M.BENCH_ALSO_PUSH_PULL.format(
            who=_who(pp), s="s" if len(pp) == 1 else "", signal=signal,
            them="it" if len(pp) == 1 else "them"),)
    rail = open_drain_pullup(li.line, li.loads, od[0])[1]
    return _Line(None, signal, float(rp), float(tol), total, parts, notes, rail=float(rail))


def _not_open_drain(bus: Bus) -> InputError:
    """The refusal of a bus of no open-drain line (SPI)."""
    return InputError(M.NOT_OPEN_DRAIN_BUS, field="--bus", value=f"{bus.id} ({bus.protocol})",
                      expected="an i2c or smbus bus, or a gpio bus's line an open-drain "
                               "pin drives")


def _who(endpoints) -> str:
    """The pins named as the engine labels them (``U2.reset``)."""
    return ", ".join(e.label for e in endpoints)


def _plausible_reading(rise: float, c_probe: float, lo: float, hi: float) -> None:
    """Refuse a reading no bench gives, naming the option: a rise outside
    :data:`RISE_RANGE`, a probe above :data:`PROBE_MAX`, levels closer than
    :data:`LEVELS_MIN_APART` (a value at zero or below, or levels out of order, is the
    physics' to refuse, in its words)."""
    import math

    if rise > 0 and not RISE_RANGE[0] <= rise <= RISE_RANGE[1]:
        raise InputError(M.OUTSIDE_RANGE, field="--rise", value=_shown(rise, "s"),
                         expected=M.BENCH_RISE_RANGE.format(
                             lo=format_si(RISE_RANGE[0], "s"),
                             hi=format_si(RISE_RANGE[1], "s")))
    if c_probe > PROBE_MAX:
        raise InputError(M.OUTSIDE_RANGE, field="--probe", value=_shown(c_probe, "F"),
                         expected=M.BENCH_PROBE_RANGE.format(hi=_cap(PROBE_MAX)))
    # (10,15 are 5 % apart, whatever the floats make of 0.15 - 0.1)
    if math.isfinite(lo) and math.isfinite(hi) and lo < hi < lo + LEVELS_MIN_APART - 1e-9:
        raise InputError(M.LEVELS_TOO_CLOSE, field="--levels",
                         value=f"{lo * 100:.15g}%,{hi * 100:.15g}%",
                         expected=M.LEVELS_APART.format(apart=_pct(LEVELS_MIN_APART)))


def _shown(value: float, unit: str) -> str:
    """A value a user gave, as text even beyond the SI prefixes (``1e30 s``): an error
    quotes what was given."""
    return format_si(value, unit)


def _from_reading(rise: float, rp: float, c_probe: float, lo: float,
                  hi: float) -> tuple[float, float]:
    """The bus capacitance of a reading and the rise without the probe; an error names
    the option it comes from, with its value in units (the physics names its own
    parameters)."""
    try:
        cb, alone = capacitance_from_rise(rise, rp, c_probe, lo=lo, hi=hi)
    except InputError as err:
        option, unit = _OPTIONS.get(err.field, (err.field, ""))
        if option == "--levels":
            value = f"{lo * 100:.3g}%,{hi * 100:.3g}%"  # as the option takes them
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
    return cb, alone


def _probe_rise(rp: float, c_probe: float, lo: float, hi: float) -> float:
    """The rise between ``lo`` and ``hi`` of the pull-up into the probe alone. [s]"""
    import math

    return rp * c_probe * (math.log1p(-lo) - math.log1p(-hi))
