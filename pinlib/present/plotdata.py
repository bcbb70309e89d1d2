"""The arrays each chart of a design review draws, computed by the engines themselves.

Engine side of the charts: every function here takes a bus of a loaded design and reads
what its engine worked out — the bus result's ``workings`` (:func:`workings`: the open-
drain engine's inputs, the SPI analysis, the push-pull lines' analyses) — and returns
plain SI arrays. Given the bus's result (``analysis=``), nothing is evaluated again;
without it, the bus is evaluated once through the dispatcher. Curves that the engine
does not store (a sweep over Cb or over load) come from the same physics functions the
engine uses, with the same inputs (:func:`pinlib.physics.rc.rp_max`,
:func:`pinlib.physics.driver.edge_vs_load`), so the chosen or operating point of every
chart is the figure the result reports. :mod:`pinlib.present.charts` then draws these
arrays; it computes nothing.

Functions
---------
* :func:`pullup_window_data`: Rp(min) and Rp(max) against Cb for one line of an
  open-drain segment, and the chosen (Cb, Rp).
* :func:`edge_vs_load_data`: a push-pull driver's edge time against load (its model),
  its datasheet points, and the engine's operating point on the real line.
* :func:`waveform_data`: the far-end waveforms of a line, with and without its series
  resistor, and the receivers' VIL/VIH.
* :func:`timing_budget_data`: the SPI timing budget, one bar per requirement.
* :func:`line_analyses`: the line engine's analysis of every routed line of a push-pull
  bus (shared by the two push-pull charts, so the lines are solved once).

No altair here: this module is importable with the core dependencies.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.core.protocols import OPEN_DRAIN_PROTOCOLS, PUSH_PULL_PROTOCOLS, protocol
from pinlib.core.quantity import format_si
from pinlib.model.design import Bus, Design
from pinlib.model.result import BusResult, check_min
from pinlib.physics import driver as drv
from pinlib.physics import rc

__all__ = [
    "PullupWindowData",
    "EdgeLoadData",
    "WaveformData",
    "TimingBudgetData",
    "BUDGET_COMPONENTS",
    "line_analyses",
    "pullup_window_data",
    "edge_vs_load_data",
    "waveform_data",
    "timing_budget_data",
]

# Display choices (not engineering figures): how far the sweeps reach and how many
# samples a chart gets.
_CB_POINTS = 61
_LOAD_POINTS = 61
_WAVE_POINTS = 700
_SETTLE_BAND = 0.02     # a trace has settled once it stays within 2 % of its swing
_WINDOW_PAD = 1.3       # the waveform window runs 30 % past the last trace's settling


# =========================================================================== results


@dataclass(frozen=True)
class PullupWindowData:
    """The pull-up window of one line of one open-drain segment.

    Attributes
    ----------
    bus, segment, signal : str
        Where the line is (``segment`` is the bus id for a single-segment bus). [1]
    cb : numpy.ndarray
        Bus capacitances of the sweep (log-spaced, the design's Cb among them). [F]
    rp_min : float
        Rp(min) of the line: the weakest sink's (VDD(max) − VOL)/IOL, as the engine
        found it (shared with the far side of a pass-transistor translator). It does not
        depend on Cb. [Ω]
    rp_max : numpy.ndarray
        Rp(max) = tr(max) / (factor · Cb) at each ``cb``. [Ω]
    chosen_cb : float
        The line's bus capacitance (every contribution at its maximum). [F]
    chosen_rp : float
        The pull-up on the line: the design's resistor in parallel with any the parts
        carry, nominal. [Ω]
    rp_max_chosen : float
        Rp(max) at ``chosen_cb``, the figure the result reports. [Ω]
    tr_max : float
        The rise-time limit. [s]
    rise_factor : float
        Rise time in units of Rp·Cb (0.8473 for I2C; the SMBus factor at the rail's
        minimum). [1]
    weakest : str
        The device whose sink sets Rp(min) (empty when no device drives the line). [1]
    source : str
        Where the limits come from. [1]
    """

    bus: str
    segment: str
    signal: str
    cb: np.ndarray
    rp_min: float
    rp_max: np.ndarray
    chosen_cb: float
    chosen_rp: float
    rp_max_chosen: float
    tr_max: float
    rise_factor: float
    weakest: str
    source: str


@dataclass(frozen=True)
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
        series resistor, e.g. ``"rise 10-90"``, ``"fall 10-90, Rs 33 Ω"``). [s]
    points : tuple of (numpy.ndarray, numpy.ndarray, list of str)
        The pin's datasheet edge points: loads [F], times [s] and for each the name of
        the curve it belongs to. [F, s, 1]
    operating : tuple of (float, float)
        The engine's operating point: the line's load (trace and far-end pins,
        ``load_capacitance``) and the 10–90 % rise at the far end of the real line (the
        line engine's waveform, ``edge_rise_time``). [F, s]
    operating_fall : float
        The far-end 10–90 % fall on the same line. [s]
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


@dataclass(frozen=True)
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
        What the data leaves out. [1]
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


@dataclass(frozen=True)
class TimingBudgetData:
    """The SPI timing budget at the design's clock: one bar per requirement.

    Attributes
    ----------
    bus : str
        The bus. [1]
    clock, period : float
        The design's clock and its period. [Hz], [s]
    rows : list of (str, str, float)
        ``(path, component, duration)``: what each requirement uses up, in the order it
        stacks; a credit (an early flight) is negative. [1, 1, s]
    available : dict of str to float
        Time available to each path (half a period; a CS lead the controller states). [s]
    margins : dict of str to float
        Available minus used time of each path (the check's value minus its limit). [s]
    status : dict of str to str
        Each path's check status at the design's warning margin. [1]
    sources : dict of str to str
        The source of each path's requirement. [1]
    """

    bus: str
    clock: float
    period: float
    rows: list
    available: dict
    margins: dict
    status: dict
    sources: dict


# =========================================================================== helpers


def _require_protocol(bus: Bus, allowed: tuple[str, ...], what: str) -> None:
    if bus.protocol not in allowed:
        raise InputError(M.DRAWN_FOR_PROTOCOLS.format(what=what, protocols=" and ".join(allowed)),
                         field="bus",
                         value=f"{bus.id} ({bus.protocol})",
                         expected=" or ".join(allowed))


def line_analyses(bus: Bus, design: Design, analysis=None) -> dict:
    """The line engine's analysis of every routed line of a push-pull bus.

    Parameters
    ----------
    bus : Bus
        An ``spi`` or ``gpio`` bus of ``design``. [1]
    design : Design
        The loaded design. [1]
    analysis : BusResult, SpiAnalysis or dict, optional
        The bus's result, or what an earlier call returned (or
        :func:`pinlib.engines.spi.spi_analysis`), to reuse instead of solving the lines
        again (see :func:`workings`). [1]

    Returns
    -------
    dict of str to LineAnalysis
        By signal: :class:`pinlib.engines.pushline.LineAnalysis` with the drive cases
        (waveforms) and the models of every driver.
    """
    _require_protocol(bus, PUSH_PULL_PROTOCOLS, "a push-pull line")
    got = workings(bus, design, analysis)
    return dict(getattr(got, "lines", got))


def workings(bus: Bus, design: Design, analysis=None):
    """What the engine worked out for ``bus`` (:attr:`BusResult.workings`): from
    ``analysis`` — the bus's result, or the engine's own object — or else from one
    evaluation of the bus (:func:`pinlib.engines.dispatch.evaluate_bus`).

    Every function here reads the engine's workings rather than computing a figure of
    its own; callers that hold the bus's result (the report, the widgets) pass it, so
    the bus is evaluated once."""
    if isinstance(analysis, BusResult):
        analysis = analysis.workings
    if analysis is None:
        from pinlib.engines.dispatch import evaluate_bus

        analysis = evaluate_bus(bus, design).workings
    return analysis


def _line(bus: Bus, design: Design, signal: str, analysis):
    lines = line_analyses(bus, design, analysis)
    if signal not in lines:
        raise InputError(M.NO_EVALUATED_LINE, field="signal",
                         value=signal, expected=", ".join(lines) or "a routed line")
    return lines[signal]


def _case(la, driver: str | None):
    if driver is None:
        driver = next(iter(la.cases))
    if driver not in la.cases:
        raise InputError(M.DOES_NOT_DRIVE_LINE, field="driver", value=driver,
                         expected=", ".join(la.cases))
    return driver, la.cases[driver]


# =========================================================================== open drain


def pullup_window_data(bus: Bus, design: Design, segment_id: str | None = None,
                       signal: str = "sda", *, points: int = _CB_POINTS,
                       analysis=None) -> PullupWindowData:
    """Rp(min) and Rp(max) against Cb for one line of an open-drain segment.

    Parameters
    ----------
    bus : Bus
        An ``i2c`` or ``smbus`` bus of ``design``. [1]
    design : Design
        The loaded design. [1]
    segment_id : str, optional
        The segment; the bus's first (its only one, for a bus without bridges) by
        default. [1]
    signal : str, optional
        ``"sda"`` (default) or ``"scl"``. [1]
    points : int, optional
        Number of capacitances in the sweep. [1]
    analysis : BusResult, optional
        The bus's result, whose workings hold the engine's inputs (see
        :func:`workings`). [1]

    Returns
    -------
    PullupWindowData
        The sweep, the engine's Rp(min), Rp(max) along the sweep, and the chosen point.

    Notes
    -----
    The engine's inputs (:func:`pinlib.engines.opendrain.collect`) give each line's Cb,
    Rp(min), rise factor and the chosen pull-up; Rp(max) along the sweep is UM10204
    rev. 6 §7.1 eq. 1, ``Rp(max) = tr / (factor · Cb)``
    (:func:`pinlib.physics.rc.rp_max`), with the same tr(max) and factor the engine
    used.  The sweep runs from a tenth of the line's Cb (at most 5 pF) to twice the
    larger of Cb and the mode's Cb(max) (400 pF where the document gives none), on a
    log scale; the line's own Cb is one of its points.
    """
    _require_protocol(bus, OPEN_DRAIN_PROTOCOLS, "a pull-up window")
    signals = protocol(bus.protocol).signal_names
    if signal not in signals:
        raise InputError(M.UNKNOWN_OPEN_DRAIN_LINE, field="signal", value=signal,
                         expected=" or ".join(signals))
    lim, seg_ins = workings(bus, design, analysis)
    ids = [s.segment.id for s in seg_ins]
    seg_in = seg_ins[0] if segment_id is None else next(
        (s for s in seg_ins if s.segment.id == segment_id), None)
    if seg_in is None:
        raise InputError(M.NO_SUCH_SEGMENT, field="segment_id",
                         value=segment_id, expected=", ".join(ids))
    ln = seg_in.lines[signal]
    cb0 = float(ln.cb)
    top = max(cb0, lim.cb_max if lim.cb_max is not None else 400e-12) * 2.0
    bottom = min(cb0 / 10.0, 5e-12) if cb0 > 0 else 1e-12
    n = max(int(points), 3)
    cb = np.unique(np.append(np.geomspace(bottom, top, n), cb0 if cb0 > 0 else bottom))
    rp_max = np.asarray(rc.rp_max(lim.tr_max, cb, ln.rise_factor), dtype=float)
    rp_max0 = float(rc.rp_max(lim.tr_max, cb0, ln.rise_factor)) if cb0 > 0 else math.inf
    source = (f"UM10204 rev. 6 §7.1 eq. 1 and 2; tr(max) {format_si(lim.tr_max, 's')} from "
              f"{lim.source_edges}")
    return PullupWindowData(bus.id, seg_in.segment.id, signal, cb, float(ln.rp_min), rp_max,
                            cb0, float(seg_in.r_eff(signal)), rp_max0, float(lim.tr_max),
                            float(ln.rise_factor), ln.rp_min_label, source)


# =========================================================================== push-pull


def _curve_name(edge: str, levels: str, rs: float) -> str:
    name = f"{edge} {levels}"
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
    return EdgeLoadData(
        bus.id, signal, ref, loads, curves, (np.array(pts_x), np.array(pts_y), pts_n),
        (load0, float(case.rise.t_edge)), float(case.fall.t_edge), float(la.rs), kind,
        operating_label=f"far end of this line ({line_model})",
        curves_title="Driver model into a lumped load at its pin",
        subtitle=("Curves: the driver alone into a lumped load (datasheet conditions). "
                  f"Cross: the rise at the far end of this line ({line_model}), the "
                  "figure the checks use."))


def _receiver_levels(la, ref: str) -> tuple[float, float, list[str]]:
    """Lowest VIL and highest VIH of the line's receivers other than the driver; a
    receiver without thresholds switches at half its supply, as in the line engine
    (:meth:`pinlib.engines.pushline.DriveCase.flight`)."""
    lows, highs, names = [], [], []
    for rx in la.receivers:
        if rx.ref == ref:
            continue
        v_il, v_ih = rx.level("v_il"), rx.level("v_ih")
        half = 0.5 * rx.vdd
        lows.append(half if v_il is None else v_il)
        highs.append(half if v_ih is None else v_ih)
        names.append(rx.label)
    return (min(lows) if lows else math.nan), (max(highs) if highs else math.nan), names


def _window_end(waves) -> float:
    """Where the chart's time axis ends: past the moment the slowest trace settles."""
    end = 0.0
    record = max(float(w.t[-1]) for w in waves)
    for w in waves:
        swing = abs(w.v_to - w.v_from)
        outside = np.flatnonzero(np.abs(w.v - w.v_to) > _SETTLE_BAND * swing)
        if outside.size:
            end = max(end, float(w.t[min(int(outside[-1]) + 1, w.t.size - 1)]))
    return min(_WINDOW_PAD * end, record) if end > 0 else record


def waveform_data(bus: Bus, design: Design, signal: str, *, driver: str | None = None,
                  analysis=None, points: int = _WAVE_POINTS) -> WaveformData:
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

    Returns
    -------
    WaveformData
        Rise and fall at the far end: with the line's series resistor (the engine's
        final case) and without it, when the line has one.

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
    final level.
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
    waves = {f"{edge}, {name}": c.wave(edge) for name, c in cases.items()
             for edge in ("rise", "fall")}
    end = _window_end(list(waves.values()))
    grid = [np.linspace(0.0, end, max(int(points), 2))]
    for w in waves.values():
        for k in (int(np.argmax(w.v)), int(np.argmin(w.v))):
            if w.t[k] <= end:
                grid.append(np.array([w.t[k]]))
    t = np.unique(np.concatenate(grid))
    traces = {name: np.interp(t, w.t, w.v) for name, w in waves.items()}
    v_il, v_ih, rx = _receiver_levels(la, ref)
    if not rx:
        notes.append("no receiving input on the line other than the driver")
    vdd = float(case.v_high)
    over = {n: float(w.overshoot) for n, w in waves.items() if w.edge == "rise"}
    under = {n: float(w.undershoot) for n, w in waves.items() if w.edge == "fall"}
    return WaveformData(bus.id, signal, ref, t, traces, v_il, v_ih, vdd, rx, over, under,
                        notes)


# =========================================================================== SPI budget

#: How each SPI requirement's terms stack in the budget bars: ``(key in Term.parts,
#: sign, component)``.  A term's used time is ``required - b`` (see
#: :class:`pinlib.engines.spi.Term`): late flights, output delays and the requirement
#: itself add; early flights (of the clock on setup, of the data on hold) are credits.
BUDGET_COMPONENTS = {
    "copi-setup": (("t_valid_controller", 1.0, "output valid (t_valid)"),
                   ("copi_late", 1.0, "data or CS flight"),
                   ("sclk_early", -1.0, "SCLK flight"),
                   ("t_setup", 1.0, "required setup or hold")),
    "copi-hold": (("sclk_late", 1.0, "SCLK flight"),
                  ("copi_early", -1.0, "data or CS flight"),
                  ("t_hold", 1.0, "required setup or hold")),
    "cipo-setup": (("sclk_late", 1.0, "SCLK flight"),
                   ("t_valid", 1.0, "output valid (t_valid)"),
                   ("cipo_late", 1.0, "data or CS flight"),
                   ("bridges_round_trip", 1.0, "bridging parts"),
                   ("t_setup_controller", 1.0, "required setup or hold")),
    "cipo-hold": (("sclk_early", -1.0, "SCLK flight"),
                  ("cipo_early", -1.0, "data or CS flight"),
                  ("t_hold_controller", 1.0, "required setup or hold")),
    "cs-setup": (("cs_late", 1.0, "data or CS flight"),
                 ("sclk_early", -1.0, "SCLK flight"),
                 ("t_cs_setup", 1.0, "required setup or hold")),
}


def timing_budget_data(bus: Bus, design: Design, *, analysis=None) -> TimingBudgetData:
    """The SPI timing budget at the design's clock, as stacked bars.

    Parameters
    ----------
    bus : Bus
        An ``spi`` bus of ``design``. [1]
    design : Design
        The loaded design. [1]
    analysis : BusResult or SpiAnalysis, optional
        The bus's result (or :func:`pinlib.engines.spi.spi_analysis` of the bus), to
        reuse (see :func:`workings`). [1]

    Returns
    -------
    TimingBudgetData
        One path per requirement the engine checks (``copi-setup U7``...), each with
        the components it uses up, the time available and the margin.

    Notes
    -----
    Every requirement of :func:`pinlib.engines.spi.budget_terms` is
    ``a T + b >= required``.  The bar of a path stacks ``required - b`` split into
    its terms (:data:`BUDGET_COMPONENTS`) against the available ``a T`` (half a
    period), or against the controller's stated CS lead for ``cs-setup``; the margin
    is the engine's ``Term.margin(T)``.  The status is the engine's own check
    (:func:`pinlib.model.result.check_min` at the design's warning margin).
    """
    _require_protocol(bus, ("spi",), "a timing budget")
    analysis = workings(bus, design, analysis)
    clock = float(bus.clock)
    period = 1.0 / clock
    rows, avail, margins, status, sources = [], {}, {}, {}, {}
    for term in analysis.terms:
        path = f"{term.id} {term.subject}"
        lead = term.parts.get("lead")
        lead_s = float(lead) if isinstance(lead, (int, float)) else 0.0
        used = 0.0
        for key, sign, comp in BUDGET_COMPONENTS[term.id]:
            value = term.parts.get(key)
            if value is None or isinstance(value, str):
                continue
            if key == "bridges_round_trip" and value == 0.0:
                continue
            rows.append((path, comp, sign * float(value)))
            used += sign * float(value)
        available = term.a * period + lead_s
        margin = float(term.margin(period))
        # The split must add up to the engine's own margin; a change in Term.parts that
        # this table does not know would show here rather than draw a wrong bar.
        if not math.isclose(available - used, margin, rel_tol=1e-9,
                            abs_tol=1e-6 * max(abs(available), 1e-15)):
            raise InputError(M.BUDGET_DOES_NOT_ADD_UP,
                             field=f"{term.id} {term.subject}",
                             value=f"{available - used!r} against {margin!r}",
                             expected="pinlib.present.plotdata.BUDGET_COMPONENTS to match "
                                      "pinlib.engines.spi.budget_terms")
        avail[path] = available
        margins[path] = margin
        chk = check_min(term.id, float(term.available(period)), term.required, "s",
                        term.source, "", warn_margin=design.warn_margin)
        status[path] = chk.status
        sources[path] = term.source or "not recorded by the part: taken as 0"
    return TimingBudgetData(bus.id, clock, period, rows, avail, margins, status, sources)
