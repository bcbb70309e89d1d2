"""A push-pull line's chart data: edge time against load, and far-end waveforms."""

from __future__ import annotations

import math
from dataclasses import field

import numpy as np

from pinlib.core.quantity import format_si
from pinlib.core.valueclass import value_class
from pinlib.engines.pushline.analysis import case_edge_times
from pinlib.model.design import Bus, Design
from pinlib.physics import driver as drv
from pinlib.present.plotdata.common import (
    _LOAD_POINTS,
    _RING_MARGIN,
    _RING_TAIL,
    _SETTLE_BAND,
    _WAVE_POINTS,
    _WINDOW_PAD,
    _case,
    _line,
)


@value_class(frozen=True)
class EdgeLoadData:
    """A driver's edge time against load, its datasheet points and its operating point.

    Attributes
    ----------
    bus, signal, driver : str
        The bus, the line and the driving device's reference designator. [1]
    loads : numpy.ndarray
        Load capacitances of the curves. [F]
    curves : dict of str to numpy.ndarray
        Edge time of the driver model (:func:`pinlib.physics.driver.edge_vs_load`, a
        lumped load at the pin) at each load, by curve name (edge, measuring levels and
        series resistor, e.g. ``"rise 10–90 %"``, ``"fall 10–90 %, Rs 33 Ω"``). [s]
    points : tuple of (numpy.ndarray, numpy.ndarray, list of str)
        The pin's datasheet edge points: loads [F], times [s] and for each the name of
        the curve it belongs to. [F, s, 1]
    operating : tuple of (float, float)
        The engine's operating point: the line's load (trace and far-end pins,
        ``load_capacitance``) and the 10–90 % rise of the real line as its figure
        ``edge_rise_time`` reads it (the line engine's waveform at the far end, or on a
        route at the slowest receiver's point;
        :func:`pinlib.engines.pushline.analysis.case_edge_times`). [F, s]
    operating_fall : float
        The 10–90 % fall read the same way. [s]
    rs : float
        Series resistor on the line. [Ω]
    model : str
        ``"lumped"`` or ``"distributed"``: how the engine solved the line. [1]
    operating_label : str
        What the operating point is, for a legend: the far end of this line and the
        model the engine solved it with. [1]
    curves_title : str
        What the curves are, for a legend title. [1]
    subtitle : str
        A chart subtitle saying which to read: the curves (the driver into a lumped
        load at its pin) or the operating point (the engine's far end on the line). [1]
    """

    bus: str
    signal: str
    driver: str
    loads: np.ndarray
    curves: dict
    points: tuple
    operating: tuple
    operating_fall: float
    rs: float
    model: str
    operating_label: str = "far end of this line"
    curves_title: str = "Driver model into a lumped load"
    subtitle: str = ""


@value_class(frozen=True)
class WaveformData:
    """Far-end waveforms of one driver on one line, with the receivers' thresholds.

    Attributes
    ----------
    bus, signal, driver : str
        The bus, the line and the driving device. [1]
    t : numpy.ndarray
        Time from the start of the driver's source ramp. [s]
    traces : dict of str to numpy.ndarray
        Far-end voltage of each edge, with the line's series resistor and without it
        (``"rise, Rs 33 Ω"``, ``"rise, no series R"``...). [V]
    v_il, v_ih : float
        The lowest VIL and the highest VIH of the receivers on the line (the widest
        undefined band), each at its device's supply. [V]
    vdd : float
        The high level the line settles to. [V]
    receivers : list of str
        The receiving pins the thresholds come from. [1]
    overshoot, undershoot : dict of str to float
        Peak above the high level of each rise and dip below the low level of each
        fall, by trace name, as the line engine measured them. [V]
    notes : list of str
        What the data leaves out, and which corner and board the traces are. [1]
    si_corner : str
        The driver's corner the line's overshoot, undershoot and ringing checks use:
        ``"fast"`` (its part states one: the traces of both corners are drawn, those of
        the fast corner named ``"... (fast corner)"``, of the slow ``"... (slow
        corner)"``) or ``"slow"`` (the one corner, drawn alone). [1]
    checks_at_worst : bool
        The bus's checks are at the worst corner of its tolerances (supply, lengths,
        capacitances: :func:`pinlib.engines.pushpull.evaluate_bus`) while the traces
        are the nominal board; a note says so. [1]
    groups : dict of str to str
        On a route's chart of every receiver, the legend entry of each trace: its
        receiver (and corner), ``"at U2"`` for ``"rise at U2"`` and ``"fall at U2"``,
        so that the two edges at one receiver share its colour and dash and the legend
        names each receiver once (:func:`pinlib.present.charts.waveforms`); empty
        otherwise (each trace its own entry). [1]
    high_name : str
        What ``vdd`` is, for the chart's legend and caption: ``"VDD"``, a push-pull
        driver's supply; ``"high level"`` on a line an open-drain driver pulls low, whose
        pull-up's rail less the pins' leakage through it is no supply. [1]
    """

    bus: str
    signal: str
    driver: str
    t: np.ndarray
    traces: dict
    v_il: float
    v_ih: float
    vdd: float
    receivers: list
    overshoot: dict
    undershoot: dict
    notes: list = field(default_factory=list)
    si_corner: str = "slow"
    checks_at_worst: bool = False
    groups: dict = field(default_factory=dict)
    high_name: str = "VDD"


# =========================================================================== push-pull


def _curve_name(edge: str, levels: str, rs: float) -> str:
    """A curve's name as its legend shows it: the edge, its measuring levels written as
    the figures write them ("10–90 %", from the library's "10-90") and the series
    resistor (``"rise 10–90 %, Rs 27 Ω"``)."""
    lo, _, hi = levels.partition("-")
    name = f"{edge} {lo}–{hi} %"
    return name + (f", Rs {format_si(rs, 'Ω')}" if rs > 0 else "")


def edge_vs_load_data(bus: Bus, design: Design, signal: str, *, driver: str | None = None,
                      analysis=None, points: int = _LOAD_POINTS) -> EdgeLoadData:
    """Edge time against load for the driver of a push-pull line.

    Parameters
    ----------
    bus : Bus
        An ``spi`` or ``gpio`` bus of ``design``. [1]
    design : Design
        The loaded design. [1]
    signal : str
        The routed line, e.g. ``"sclk"``. [1]
    driver : str, optional
        Reference designator of the driving device; the line's first driver by
        default (a CIPO line has one per peripheral). [1]
    analysis : BusResult, SpiAnalysis or dict, optional
        The bus's result, or the lines already solved (:func:`line_analyses`). [1]
    points : int, optional
        Number of loads on each curve. [1]

    Returns
    -------
    EdgeLoadData
        Curves of the driver model (rise and fall at 10–90 % and at the levels of any
        datasheet point, and at 10–90 % with the line's series resistor), the datasheet
        points, the engine's operating point, and labels that say which is which.

    Notes
    -----
    The curves are :func:`pinlib.physics.driver.edge_vs_load` of the driver model the
    line engine built (:func:`pinlib.physics.driver.driver_from_pin`, fitted to the
    pin's datasheet edges): a ramp behind ``r_out`` into a lumped load at the pin.  The
    operating point is the engine's far-end edge on the real line (a transmission
    line where the engine found one), so it can sit off the lumped curves: the gap is
    what the line does.  Loads run from 0 to 1.25 times the largest of the line's load,
    the datasheet loads and 20 pF.
    """
    la = _line(bus, design, signal, analysis)
    ref, case = _case(la, driver)
    model = la.models[ref]
    pin = case.driver.pin
    load0 = float(la.trace_c + case.c_far)
    edges = [e for e in pin.edges]
    pts_x, pts_y, pts_n = [], [], []
    for e in edges:
        for which in ("rise", "fall"):
            got = getattr(e, which)
            if got is not None:
                pts_x.append(float(e.load.at()))
                pts_y.append(float(got.at()))
                pts_n.append(_curve_name(which, e.levels, 0.0))
    levels = ["10-90"] + sorted({e.levels for e in edges} - {"10-90"})
    top = 1.25 * max([load0, 20e-12] + pts_x)
    loads = np.linspace(0.0, top, max(int(points), 2))
    # The datasheet's levels without the series resistor (where its points are); the
    # resistor's curves at 10-90 %, the levels the line's checks use.
    wanted = [(0.0, lv) for lv in levels] + ([(la.rs, "10-90")] if la.rs > 0 else [])
    curves = {}
    for rs, lv in wanted:
        for edge in ("rise", "fall"):
            curves[_curve_name(edge, lv, rs)] = np.asarray(
                drv.edge_vs_load(model, loads, edge, lv, r_series=rs), dtype=float)
    kind = "distributed" if case.distributed else "lumped"
    line_model = "transmission-line model" if case.distributed else "lumped model"
    # The edges the line's figures read (edge_rise_time is their worst over the
    # drivers): at the far end, or on a route the slowest at a receiver's point.
    rise, fall = case_edge_times(case, la.receivers)
    where = ("far end of this line" if case.points is None
             else "slowest receiver on this line")
    return EdgeLoadData(
        bus.id, signal, ref, loads, curves, (np.array(pts_x), np.array(pts_y), pts_n),
        (load0, float(rise)), float(fall), float(la.rs), kind,
        operating_label=f"{where} ({line_model})",
        curves_title="Driver model into a lumped load at its pin",
        subtitle=("Curves: the driver alone into a lumped load (datasheet conditions). "
                  f"Cross: the rise at the {where} ({line_model}), the figure the "
                  "checks use."))


def _receiver_levels(la, ref: str, only: str | None = None) -> tuple[float, float, list[str]]:
    """Lowest VIL and highest VIH of the line's receivers other than the driver (or of
    the one named ``only``); a receiver without thresholds switches at half its supply,
    as in the line engine (:meth:`pinlib.engines.pushline.DriveCase.flight`)."""
    lows, highs, names = [], [], []
    for rx in la.receivers:
        if rx.ref == ref or (only is not None and rx.ref != only):
            continue
        v_il, v_ih = rx.level("v_il"), rx.level("v_ih")
        half = 0.5 * rx.vdd
        lows.append(half if v_il is None else v_il)
        highs.append(half if v_ih is None else v_ih)
        names.append(rx.label)
    return (min(lows) if lows else math.nan), (max(highs) if highs else math.nan), names


def _window_end(waves) -> tuple[float, float]:
    """Where the chart's time axis ends, and the ringing that outlasts the records.

    The axis ends :data:`_WINDOW_PAD` past the moment the slowest trace stays within
    :data:`_SETTLE_BAND` of its swing of its final level; or, for a trace that still
    rings at the end of its record (a star's branches ringing against each other in the
    lossless model keep a few % of the swing to the end), within :data:`_RING_MARGIN`
    times the largest excursion over the last part of its record (:data:`_RING_TAIL`, the
    second half): it has settled into the ringing it keeps, and the axis shows the edges
    rather than the solver's whole record.  Returns the end [s] and the largest such
    excursion as a fraction of the swing (0 when every trace settles within the band in
    its record) [1].
    """
    end, ringing = 0.0, 0.0
    record = max(float(w.t[-1]) for w in waves)
    for w in waves:
        swing = abs(w.v_to - w.v_from)
        off = np.abs(w.v - w.v_to)
        tail = off[w.t >= (1.0 - _RING_TAIL) * float(w.t[-1])]
        kept = float(tail.max()) if tail.size and swing > 0 else 0.0
        band = max(_SETTLE_BAND * swing, _RING_MARGIN * kept)
        if band > _SETTLE_BAND * swing:
            ringing = max(ringing, kept / swing)
        outside = np.flatnonzero(off > band)
        if outside.size:
            end = max(end, float(w.t[min(int(outside[-1]) + 1, w.t.size - 1)]))
    return (min(_WINDOW_PAD * end, record) if end > 0 else record), ringing


def _route_waves(la, ref: str, case, receiver: str | None, cases: dict) -> dict:
    """The traces of a routed line: at one receiver's point (with and without the series
    resistor, as the far end of the simple form), or the final case at every receiver's
    point (``"rise at U3"``)."""
    if receiver is not None:
        return {f"{edge}, {name}": c.wave_at(receiver, edge) for name, c in cases.items()
                for edge in ("rise", "fall")}
    return {f"{edge} at {rx.ref}": case.wave_at(rx.ref, edge)
            for rx in la.receivers if rx.ref != ref for edge in ("rise", "fall")}


def _fast_waves(la, ref: str, case, receiver: str | None, cases: dict) -> dict:
    """The fast corner's traces, named like the slow ones plus ``" (fast corner)"``, for
    the cases that have one (empty when the driver states no fast corner)."""
    out = {}
    for edge in ("rise", "fall"):
        if la.net is None:
            out.update({f"{edge}, {name} (fast corner)": c.si_wave(edge)
                        for name, c in cases.items() if c.fast_rise is not None})
        elif receiver is not None:
            out.update({f"{edge}, {name} (fast corner)": c.si_wave_at(receiver, edge)
                        for name, c in cases.items() if c.fast_points is not None})
        elif case.fast_points is not None:
            out.update({f"{edge} at {rx.ref} (fast corner)": case.si_wave_at(rx.ref, edge)
                        for rx in la.receivers if rx.ref != ref})
    return out


def _board_note(bus: Bus) -> str | None:
    """What the traces are against the checks, when the bus has tolerances: the engine's
    checks are at their worst corner, the traces the nominal board."""
    from pinlib.engines.ppvariant import parameter_specs

    specs = parameter_specs(bus)
    if not specs:
        return None
    what = ", ".join(dict.fromkeys("pull-up" if kind == "pullup" else kind
                                   for _, kind, *_ in specs))
    return (f"the traces are the nominal board; the bus's checks are at the worst corner "
            f"of its tolerances ({what})")


def waveform_data(bus: Bus, design: Design, signal: str, *, driver: str | None = None,
                  analysis=None, points: int = _WAVE_POINTS,
                  receiver: str | None = None) -> WaveformData:
    """Far-end waveforms of a push-pull line, with and without its series resistor.

    Parameters
    ----------
    bus : Bus
        An ``spi`` or ``gpio`` bus of ``design``. [1]
    design : Design
        The loaded design. [1]
    signal : str
        The routed line. [1]
    driver : str, optional
        The driving device; the line's first driver by default. [1]
    analysis : BusResult, SpiAnalysis or dict, optional
        The bus's result, or the lines already solved (:func:`line_analyses`). [1]
    points : int, optional
        About how many samples each trace gets on the chart. [1]
    receiver : str, optional
        On a routed line, the device whose point the traces are taken at (with and
        without the series resistor); by default every receiver's, with the line's
        series resistor, on one chart.  Ignored on a line without a route. [1]

    Returns
    -------
    WaveformData
        Rise and fall at the far end: with the line's series resistor (the engine's
        final case) and without it, when the line has one; on a routed line at the
        receivers' own points (``receiver``).

    Notes
    -----
    The traces are the line engine's own waveforms (:class:`DriveCase` of
    :func:`pinlib.engines.pushline.analyse_line`): with ``series_resistor = "auto"`` the
    engine keeps the case without the resistor it chose; with a fixed resistor the
    engine solves the case without it on request
    (:meth:`pinlib.engines.pushline.LineAnalysis.without_series`: push-pull drivers; for
    an open-drain driver it is left out and a note says so). Each solver record has its
    own time grid; the traces are put on one grid (uniform over the window, plus each
    trace's own peak and dip sample so that the drawn overshoot is the measured one) by
    linear interpolation, holding a record's last (settled, within 1 %) value past its
    end. The window ends 30 % past the moment the slowest trace stays within 2 % of its
    final level, or, where ringing outlasts the record, within 1.5 times the ringing it
    keeps to the end (:func:`_window_end`; a note then gives the ringing's size).
    """
    la = _line(bus, design, signal, analysis)
    ref, case = _case(la, driver)
    notes: list[str] = []
    cases = {}
    if la.rs > 0:
        shown = format_si(la.rs, "Ω")
        cases[f"Rs {shown}"] = case
        bare = la.without_series(ref)
        if bare is not None:
            cases["no series R"] = bare
        else:
            notes.append("the open-drain driver's case without the series resistor is not "
                         "drawn")
    else:
        cases["no series R"] = case
    if la.net is not None:
        waves = _route_waves(la, ref, case, receiver, cases)
        if receiver is None:
            notes.append("each receiver at its own point of the route"
                         + (", with the line's series resistor" if la.rs > 0 else ""))
    else:
        waves = {f"{edge}, {name}": c.wave(edge) for name, c in cases.items()
                 for edge in ("rise", "fall")}
    fast = _fast_waves(la, ref, case, receiver, cases)
    if fast:  # the checks' overshoot and ringing come from the fast corner: draw both
        waves = {f"{n} (slow corner)": w for n, w in waves.items()} | fast
        notes.append(f"overshoot, undershoot and ringing are checked on the fast corner of "
                     f"{ref} (its part's pins.{case.driver.pin_name}.fast), edge times and "
                     "timing on its slow corner (SPI hold on both)")
    board = _board_note(bus)
    if board is not None:
        notes.append(board)
    end, ringing = _window_end(list(waves.values()))
    if ringing > 0:
        notes.append(f"ringing of up to {ringing * 100:.1f} % of the swing remains through "
                     "the second half of the solved record (the line is solved lossless; "
                     "loss on a real board damps it): the time axis ends once the edges "
                     "have settled into it")
    grid = [np.linspace(0.0, end, max(int(points), 2))]
    for w in waves.values():
        for k in (int(np.argmax(w.v)), int(np.argmin(w.v))):
            if w.t[k] <= end:
                grid.append(np.array([w.t[k]]))
    t = np.unique(np.concatenate(grid))
    traces = {name: np.interp(t, w.t, w.v) for name, w in waves.items()}
    v_il, v_ih, rx = _receiver_levels(la, ref, receiver if la.net is not None else None)
    if not rx:
        notes.append("no receiving input on the line other than the driver")
    vdd = float(case.v_high)
    over = {n: float(w.overshoot) for n, w in waves.items() if w.edge == "rise"}
    under = {n: float(w.undershoot) for n, w in waves.items() if w.edge == "fall"}
    # every receiver of a route: one legend entry per receiver (and corner), its rise and
    # fall in one colour and dash (a route holds up to 64 receivers)
    groups = ({n: n.split(" ", 1)[1] for n in traces}
              if la.net is not None and receiver is None else {})
    high = "high level" if case.driver.pin.drive == "open-drain" else "VDD"
    return WaveformData(bus.id, signal, ref, t, traces, v_il, v_ih, vdd, rx, over, under,
                        notes, "fast" if fast else "slow", board is not None, groups, high)
