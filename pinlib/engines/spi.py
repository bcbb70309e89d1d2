"""SPI buses: clock modes, the timing budget, the highest clock, and the bus evaluation.

Two layers.  :func:`spi_analysis` and :func:`evaluate_spi` build each routed signal
with the line engine (:func:`pinlib.engines.pushline.analyse_line`) and turn its
waveforms into plain numbers: for every peripheral, the time from a driver's datasheet
reference to the receiver's input threshold on each signal (the *flight*, which holds
the line delay and the edge up to the threshold), beside the parts' timing values.
Below them, the margin functions and :func:`max_clock` are arithmetic on those
numbers, vectorised with numpy so that sweeps over arrays of flights or ``t_valid``
cost nothing (:func:`max_clock_vs_t_valid`, :func:`max_clock_vs_length`).

Reference points
----------------
A part's output timing (``t_valid``) is counted from the clock edge at its pin to its
output crossing 50 % of its supply into its ``test_load`` (the usual datasheet
reference; common practice, no source).  A flight is counted from that same reference
of the driving pin to the receiving pin's threshold on the real line, so
``t_valid + flight`` is the time from the clock edge to the input threshold with the
real load in place of the test load: the "t_valid adjusted from its test load to the
actual load" of the budget.

Every receiving input switches somewhere between its VIL(max) and VIH(min).  An
*early* flight is the first moment it may see the edge (VIL on a rise, VIH on a fall),
a *late* flight the last (VIH on a rise, VIL on a fall).  Setup budgets use late data
against an early clock; hold budgets early data against a late clock.

Modes (CPOL, CPHA)
------------------
See :data:`SPI_MODES`.  Data is launched on one SCLK edge and sampled on the other,
half a period later (a 50 % duty cycle is assumed).

Margins
-------
With ``T`` the clock period, all flights at the peripheral P unless said otherwise:

* COPI setup at P:   ``T/2 + sclk_early - t_valid(controller) - copi_late >= t_setup(P)``
* COPI hold at P:    ``T/2 + copi_early - sclk_late >= t_hold(P)`` (the controller may
  change COPI as soon as its launch edge: its minimum output delay is taken as 0)
* CIPO setup at the controller:
  ``T/2 - (sclk_late + t_valid(P) + cipo_late + 2 t_pd) >= t_setup(controller)``
* CIPO hold at the controller: ``T/2 + sclk_early + cipo_early >= t_hold(controller)``
  (the peripheral's minimum output delay and any bridge's minimum delay taken as 0)
* CS setup at P: ``lead + sclk_early(first edge) - cs_late >= t_cs_setup(P)``, where
  ``lead`` is the controller's CS-to-first-edge time: its own ``t_cs_setup`` when the
  class records one, else half a clock period (a controller that asserts CS one half
  clock before the first edge; common practice, no source).

Bridging parts (buffers, translators, isolators) with a ``t_pd`` lie in the path of
every signal.  On the forward paths (SCLK, COPI, CS) the clock and the data cross the
same part, so its delay shifts both alike and cancels (its channels are taken as
matched: channel-to-channel skew has no field in the part format); the CIPO round
trip crosses it twice (SCLK out, CIPO back), so ``2 t_pd`` per bridge.

Every margin is ``a T - k`` with ``a`` either 1/2 or 0, so the highest clock at which
all of them hold is found in closed form (:func:`max_clock`), not by sweeping.
``max_clock`` also honours every part's ``f_max``, and names what sets it
(``max_clock_limited_by``).  The edge rule of each line
(:data:`pinlib.engines.pushline.EDGE_FRACTION` of the period) is a rule of thumb: its
own highest clock is the figure ``max_clock_edge_rule`` beside it, and it does not
lower ``max_clock``.

Limits: a signal the design does not route is not connected (no CIPO route: no read
budget); the design gives one CS route per bus, so every peripheral's CS pin loads it
(separate chip selects would each carry one); CS is taken as active low; the
controller's own ``t_valid``, ``t_setup`` and ``t_hold`` are taken as 0 when its class
does not record them (a note says so).

References
----------
CPOL/CPHA edge table: REFERENCES.md, SPI (secondary sources [C2]).  Loop budget
T/2 >= t(SCLK out) + t_valid + t(CIPO back) + t_setup: the structure of the published
isolated-SPI example (an isolator vendor's application note [C2]).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from typing import NamedTuple

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import DesignError, InputError
from pinlib.core.quantity import format_si
from pinlib.engines.pushline import (
    EDGE_FRACTION,
    SIGNAL_FUNCTION,
    Flight,
    analyse_line,
    endpoint,
    is_bridge,
)
from pinlib.model.design import Bus, Design, Device, Line
from pinlib.model.result import BusResult, Check, check_max, check_min

__all__ = [
    "SpiMode",
    "SPI_MODES",
    "MODE_SOURCE",
    "CS_LEAD_SOURCE",
    "TIMING_REFERENCE",
    "spi_mode",
    "copi_setup_available",
    "copi_hold_available",
    "cipo_setup_available",
    "cipo_hold_available",
    "cs_setup_available",
    "max_clock",
    "PeripheralTiming",
    "ControllerTiming",
    "Term",
    "budget_terms",
    "SpiAnalysis",
    "spi_analysis",
    "evaluate_spi",
    "max_clock_vs_length",
    "max_clock_vs_t_valid",
]

_CONTROLLER_DRIVES = ("sclk", "copi", "cs")


def _fmt(x, unit):
    return format_si(x, unit)


_SPI_ORDER = ("sclk", "copi", "cs", "cipo")

MODE_SOURCE = ("SPI clock modes (CPOL/CPHA) as described by controller and peripheral "
               "datasheets (common practice; no single published standard)")
CS_LEAD_SOURCE = ("controller asserts CS half a clock period before the first SCLK edge "
                  "when its class records no t_cs_setup (common practice, no source)")
TIMING_REFERENCE = ("output times referred to 50 % of the supply at the pin into the "
                    "part's test_load (common practice, no source)")


class SpiMode(NamedTuple):
    """The clock edges of one SPI mode.

    Attributes
    ----------
    mode : int
        Mode number, 0 to 3. [1]
    cpol : int
        Clock polarity: 0 idles low, 1 idles high. [1]
    cpha : int
        Clock phase: 0 samples on the leading edge, 1 on the trailing edge. [1]
    idle : str
        Level of SCLK between transfers, ``"low"`` or ``"high"``. [1]
    first_edge : str
        Direction of the first SCLK edge after CS asserts (the leading edge). [1]
    sample_edge : str
        Direction of the edges on which both ends sample data. [1]
    launch_edge : str
        Direction of the edges on which both ends change (launch) data. [1]
    """

    mode: int
    cpol: int
    cpha: int
    idle: str
    first_edge: str
    sample_edge: str
    launch_edge: str


#: The four SPI modes.  Mode 0: idle low, sample rising, launch falling; mode 1: idle
#: low, sample falling, launch rising; mode 2: idle high, sample falling, launch rising;
#: mode 3: idle high, sample rising, launch falling.  With CPHA = 0 the first bit is on
#: the line when CS asserts, before the first (sampling) edge.
SPI_MODES: dict[int, SpiMode] = {
    0: SpiMode(0, 0, 0, "low", "rise", "rise", "fall"),
    1: SpiMode(1, 0, 1, "low", "rise", "fall", "rise"),
    2: SpiMode(2, 1, 0, "high", "fall", "fall", "rise"),
    3: SpiMode(3, 1, 1, "high", "fall", "rise", "fall"),
}


def spi_mode(mode: int) -> SpiMode:
    """The clock edges of an SPI mode.

    Parameters
    ----------
    mode : int
        Mode number, 0 to 3. [1]

    Returns
    -------
    SpiMode
        Its CPOL, CPHA, idle level and edges.

    Raises
    ------
    InputError
        For any other mode number.

    Examples
    --------
    >>> spi_mode(3).sample_edge
    'rise'
    """
    if isinstance(mode, bool) or mode not in SPI_MODES:
        raise InputError(M.UNKNOWN_SPI_MODE, field="spi_mode", value=mode,
                         expected="0, 1, 2 or 3")
    return SPI_MODES[mode]


# --------------------------------------------------------------------------- margins


def _a(x):
    return np.asarray(x, dtype=float)


def _out(x):
    return x[()] if np.ndim(x) == 0 else x


def copi_setup_available(period, sclk_early, t_valid, copi_late):
    """Setup time COPI leaves at the peripheral before its sampling edge.

    Parameters
    ----------
    period : float or array_like
        Clock period. [s]
    sclk_early : float or array_like
        Earliest flight of the sampling SCLK edge to the peripheral. [s]
    t_valid : float or array_like
        Controller's launch edge to COPI valid at its pin (max). [s]
    copi_late : float or array_like
        Latest flight of a COPI edge to the peripheral. [s]

    Returns
    -------
    numpy.ndarray or float
        ``period/2 + sclk_early - t_valid - copi_late``; compare with the
        peripheral's ``t_setup``. [s]

    Examples
    --------
    >>> round(float(copi_setup_available(40e-9, 0.5e-9, 8e-9, 1.5e-9)) * 1e9, 3)
    11.0
    """
    out = _a(period) / 2.0 + _a(sclk_early) - _a(t_valid) - _a(copi_late)
    return _out(out)


def copi_hold_available(period, sclk_late, copi_early):
    """Hold time COPI leaves at the peripheral after its sampling edge.

    Parameters
    ----------
    period : float or array_like
        Clock period. [s]
    sclk_late : float or array_like
        Latest flight of the sampling SCLK edge to the peripheral. [s]
    copi_early : float or array_like
        Earliest flight of a COPI edge to the peripheral (the controller's minimum
        output delay is taken as 0). [s]

    Returns
    -------
    numpy.ndarray or float
        ``period/2 + copi_early - sclk_late``; compare with the peripheral's
        ``t_hold``. [s]

    Examples
    --------
    >>> round(float(copi_hold_available(40e-9, 1e-9, 0.5e-9)) * 1e9, 3)
    19.5
    """
    return _out(_a(period) / 2.0 + _a(copi_early) - _a(sclk_late))


def cipo_setup_available(period, sclk_late, t_valid, cipo_late, t_path=0.0):
    """Setup time CIPO leaves at the controller before its sampling edge.

    Parameters
    ----------
    period : float or array_like
        Clock period. [s]
    sclk_late : float or array_like
        Latest flight of the launching SCLK edge to the peripheral. [s]
    t_valid : float or array_like
        Peripheral's clock edge to CIPO valid at its pin, into its test load (max). [s]
    cipo_late : float or array_like
        Latest flight of a CIPO edge from the peripheral to the controller. [s]
    t_path : float or array_like, optional
        Delay of bridging parts on the round trip (each counted once per crossing:
        ``2 t_pd`` for one isolator). [s]

    Returns
    -------
    numpy.ndarray or float
        ``period/2 - (sclk_late + t_valid + cipo_late + t_path)``; compare with the
        controller's ``t_setup``. [s]

    Notes
    -----
    The round trip of the published budget ``T/2 >= t(SCLK out) + t_valid +
    t(CIPO back) + t_setup`` (REFERENCES.md, SPI).

    Examples
    --------
    >>> round(float(cipo_setup_available(40e-9, 1e-9, 7e-9, 1.5e-9)) * 1e9, 3)
    10.5
    """
    out = _a(period) / 2.0 - (_a(sclk_late) + _a(t_valid) + _a(cipo_late) + _a(t_path))
    return _out(out)


def cipo_hold_available(period, sclk_early, cipo_early):
    """Hold time CIPO leaves at the controller after its sampling edge.

    Parameters
    ----------
    period : float or array_like
        Clock period. [s]
    sclk_early : float or array_like
        Earliest flight of the next launching SCLK edge to the peripheral. [s]
    cipo_early : float or array_like
        Earliest flight of a CIPO edge back to the controller (the peripheral's
        minimum output delay is taken as 0). [s]

    Returns
    -------
    numpy.ndarray or float
        ``period/2 + sclk_early + cipo_early``; compare with the controller's
        ``t_hold``. [s]

    Examples
    --------
    >>> round(float(cipo_hold_available(40e-9, 0.5e-9, 0.5e-9)) * 1e9, 3)
    21.0
    """
    return _out(_a(period) / 2.0 + _a(sclk_early) + _a(cipo_early))


def cs_setup_available(lead, sclk_early, cs_late):
    """Time from CS asserted at the peripheral to the first SCLK edge there.

    Parameters
    ----------
    lead : float or array_like
        Controller's time from asserting CS to its first SCLK edge, at its pins. [s]
    sclk_early : float or array_like
        Earliest flight of the first SCLK edge to the peripheral. [s]
    cs_late : float or array_like
        Latest flight of the asserting (falling) CS edge to the peripheral. [s]

    Returns
    -------
    numpy.ndarray or float
        ``lead + sclk_early - cs_late``; compare with the peripheral's
        ``t_cs_setup``. [s]

    Examples
    --------
    >>> round(float(cs_setup_available(20e-9, 0.5e-9, 1.5e-9)) * 1e9, 3)
    19.0
    """
    return _out(_a(lead) + _a(sclk_early) - _a(cs_late))


def max_clock(a, k, f_limit=np.inf):
    """Highest clock at which every margin ``a_i T - k_i`` is at least zero.

    Parameters
    ----------
    a : array_like
        Coefficient of the period in each margin, ``>= 0``; the margins run along the
        last axis. [1]
    k : array_like
        Period-independent part of each margin (required time minus fixed terms),
        broadcast with ``a``. [s]
    f_limit : float or array_like, optional
        Further clock limits already in Hz (the parts' ``f_max``), broadcast over the
        leading axes. [Hz]

    Returns
    -------
    numpy.ndarray or float
        The clock ``1 / T_min`` with ``T_min = max_i(k_i / a_i)`` over the margins
        with ``a_i > 0`` (none below 0), capped at ``f_limit``; 0 when a margin with
        ``a_i = 0`` is negative (no clock satisfies it); ``inf`` when nothing limits
        the clock. [Hz]

    Notes
    -----
    Each margin is linear in the period and non-decreasing (``a_i >= 0``), so the set
    of periods satisfying all of them is ``T >= T_min``: the closed form is exact.

    Examples
    --------
    >>> float(max_clock([0.5, 0.5], [10e-9, 12.5e-9])) / 1e6
    40.0
    """
    a = _a(a)
    k = _a(k)
    a, k = np.broadcast_arrays(a, k)
    if not np.all(a >= 0.0):
        raise InputError(M.NEGATIVE_PERIOD_COEFFICIENT, field="a",
                         value=a, expected="a >= 0 [1]")
    slope = a > 0.0
    need = np.where(slope, k / np.where(slope, a, 1.0), np.where(k <= 0.0, 0.0, np.inf))
    t_min = np.max(np.maximum(need, 0.0), axis=-1) if need.ndim else np.maximum(need, 0.0)
    f = np.where(t_min > 0.0, 1.0 / np.where(t_min > 0.0, t_min, 1.0), np.inf)
    f = np.where(np.isinf(t_min), 0.0, f)
    return _out(np.minimum(f, _a(f_limit)))


# --------------------------------------------------------------------------- budget


@dataclass(frozen=True)
class PeripheralTiming:
    """What the budget needs of one peripheral.

    Attributes
    ----------
    ref : str
        Reference designator. [1]
    sclk : dict
        Flight of each SCLK edge direction (``"rise"``, ``"fall"``) to the
        peripheral. [s]
    copi, cs, cipo : Flight or None
        COPI and CS flights to the peripheral over both edges (CS: its asserting edge),
        CIPO flight from it back to the controller; None when the signal is not
        routed or the part has no such pin. [s]
    t_valid, t_setup, t_hold, t_cs_setup : float or None
        The peripheral's timing values. [s]
    f_max : float or None
        The peripheral's clock limit. [Hz]
    sources : dict
        Source text of each timing value, by name. [1]
    """

    ref: str
    sclk: dict
    copi: Flight | None = None
    cs: Flight | None = None
    cipo: Flight | None = None
    t_valid: float | None = None
    t_setup: float | None = None
    t_hold: float | None = None
    t_cs_setup: float | None = None
    f_max: float | None = None
    sources: dict = field(default_factory=dict)


@dataclass(frozen=True)
class ControllerTiming:
    """What the budget needs of the controller.

    Attributes
    ----------
    ref : str
        Reference designator. [1]
    t_valid : float or None
        Launch edge to COPI valid at its pin into its test load (max). [s]
    t_setup, t_hold : float or None
        CIPO setup and hold at its input (min). [s]
    t_cs_lead : float or None
        CS asserted to the first SCLK edge that it guarantees; None: half a period. [s]
    f_max : float or None
        Its SPI clock limit. [Hz]
    sources : dict
        Source text of each timing value, by name. [1]
    """

    ref: str
    t_valid: float | None = None
    t_setup: float | None = None
    t_hold: float | None = None
    t_cs_lead: float | None = None
    f_max: float | None = None
    sources: dict = field(default_factory=dict)


@dataclass(frozen=True)
class Term:
    """One timing requirement as ``available(T) = a T + b >= required``.

    Attributes
    ----------
    id : str
        Check id (``"copi-setup"``, ``"cipo-setup"``...). [1]
    subject : str
        The peripheral it concerns. [1]
    a : float
        Coefficient of the period in the available time (1/2 or 0). [1]
    b : float
        Period-independent part of the available time. [s]
    required : float
        The part's requirement (setup, hold), 0 when not recorded. [s]
    source : str
        Where the requirement comes from. [1]
    parts : dict
        The terms that make up ``b`` and ``required``, for the check details. [s]
    """

    id: str
    subject: str
    a: float
    b: float
    required: float
    source: str
    parts: dict

    def available(self, period):
        """Available time at a clock period. [s]"""
        return self.a * np.asarray(period, dtype=float) + self.b

    def margin(self, period):
        """Available minus required time at a clock period. [s]"""
        return self.available(period) - self.required


def _or0(x):
    return 0.0 if x is None else float(x)


def budget_terms(mode: SpiMode, controller: ControllerTiming,
                 peripherals: list[PeripheralTiming], t_bridge: float = 0.0) -> list[Term]:
    """Every timing requirement of an SPI bus as a linear function of the period.

    Parameters
    ----------
    mode : SpiMode
        The bus's clock mode. [1]
    controller : ControllerTiming
        The controller's timing. [s]
    peripherals : list of PeripheralTiming
        Each peripheral's flights and timing. [s]
    t_bridge : float, optional
        One crossing of every bridging part in the path, summed (``sum t_pd``). [s]

    Returns
    -------
    list of Term
        COPI setup and hold, CIPO setup and hold and CS setup for each peripheral that
        has the signals; a term whose inputs are missing (no CIPO route, no
        ``t_valid``) is left out, and the caller says so.
    """
    terms: list[Term] = []
    c_src = controller.sources
    for p in peripherals:
        s_sample = p.sclk[mode.sample_edge]
        s_launch = p.sclk[mode.launch_edge]
        s_first = p.sclk[mode.first_edge]
        src = p.sources
        if p.copi is not None:
            tv = _or0(controller.t_valid)
            terms.append(Term(
                "copi-setup", p.ref, 0.5, s_sample.early - tv - p.copi.late,
                _or0(p.t_setup), src.get("t_setup", ""),
                {"half_period": "T/2", "sclk_early": s_sample.early, "t_valid_controller": tv,
                 "copi_late": p.copi.late, "t_setup": _or0(p.t_setup)}))
            terms.append(Term(
                "copi-hold", p.ref, 0.5, p.copi.early - s_sample.late,
                _or0(p.t_hold), src.get("t_hold", ""),
                {"half_period": "T/2", "copi_early": p.copi.early, "sclk_late": s_sample.late,
                 "t_hold": _or0(p.t_hold)}))
        if p.cipo is not None and p.t_valid is not None:
            t_path = 2.0 * t_bridge
            terms.append(Term(
                "cipo-setup", p.ref, 0.5, -(s_launch.late + p.t_valid + p.cipo.late + t_path),
                _or0(controller.t_setup), c_src.get("t_setup", ""),
                {"half_period": "T/2", "sclk_late": s_launch.late, "t_valid": p.t_valid,
                 "cipo_late": p.cipo.late, "bridges_round_trip": t_path,
                 "t_setup_controller": _or0(controller.t_setup)}))
        if p.cipo is not None:
            terms.append(Term(
                "cipo-hold", p.ref, 0.5, s_launch.early + p.cipo.early,
                _or0(controller.t_hold), c_src.get("t_hold", ""),
                {"half_period": "T/2", "sclk_early": s_launch.early,
                 "cipo_early": p.cipo.early, "t_hold_controller": _or0(controller.t_hold)}))
        if p.cs is not None:
            if controller.t_cs_lead is None:
                a, lead = 0.5, 0.0
                lead_text = "T/2"
            else:
                a, lead = 0.0, float(controller.t_cs_lead)
                lead_text = lead
            terms.append(Term(
                "cs-setup", p.ref, a, lead + s_first.early - p.cs.late,
                _or0(p.t_cs_setup), src.get("t_cs_setup", ""),
                {"lead": lead_text, "sclk_early": s_first.early, "cs_late": p.cs.late,
                 "t_cs_setup": _or0(p.t_cs_setup)}))
    return terms


# --------------------------------------------------------------------------- SPI


@dataclass
class SpiAnalysis:
    """The lines and timing of one SPI bus.

    Attributes
    ----------
    bus : Bus
        The bus. [1]
    mode : SpiMode
        Its clock mode. [1]
    lines : dict
        :class:`LineAnalysis` by signal, routed signals only. [1]
    controller : ControllerTiming
        The controller's timing. [s]
    peripherals : list of PeripheralTiming
        Flights and timing of each peripheral. [s]
    t_bridge : float
        One crossing of every bridging part in the path. [s]
    terms : list of Term
        Every timing requirement as a function of the period. [s]
    f_limits : list of (str, float, str)
        Clock limits of the parts: (ref, f_max, source). [Hz]
    edge_terms : list of (str, float)
        Slowest far-end edge of each line, for the edge-time rule. [s]
    notes : list of str
        What was assumed or skipped. [1]
    """

    bus: Bus
    mode: SpiMode
    lines: dict
    controller: ControllerTiming
    peripherals: list
    t_bridge: float
    terms: list
    f_limits: list
    edge_terms: list
    notes: list

    def max_clock(self) -> float:
        """Highest clock at which every timing margin and every part's ``f_max`` hold:
        the limits of the parts' data (the edge rule of thumb is
        :meth:`edge_rule_clock`, beside it). [Hz]"""
        return self.clock_limits()[0][0]

    def clock_limits(self) -> list[tuple[float, str, str]]:
        """Each timing requirement's and each part's own highest clock, lowest first:
        ``(clock, name, source)``, the name as ``"cipo-setup U2"`` or ``"f_max U1"`` and
        the source of its limit; an unlimited bus gives ``[(inf, "nothing", "")]``. The
        first sets :meth:`max_clock`. [Hz]"""
        out = [(float(max_clock([t.a], [_finite_or_inf(t.required - t.b)])),
                f"{t.id} {t.subject}", t.source or "not recorded by the part: taken as 0")
               for t in self.terms]
        out += [(float(f), f"f_max {ref}", source) for ref, f, source in self.f_limits]
        out.sort(key=lambda x: x[0])
        return out or [(math.inf, "nothing", "")]

    def edge_rule_clock(self) -> tuple[float, str]:
        """Highest clock at which every line's far-end edge keeps within
        :data:`~pinlib.engines.pushline.EDGE_FRACTION` of the period (a rule of thumb),
        and the line that sets it. [Hz]"""
        got = [(float(max_clock([EDGE_FRACTION], [_finite_or_inf(e)])), sig)
               for sig, e in self.edge_terms]
        return min(got, default=(math.inf, "nothing"))


def _finite_or_inf(x: float) -> float:
    return x if math.isfinite(x) else math.inf


def _sourced_text(device: Device, name: str) -> str:
    got = getattr(device.part.timing, name)
    part = device.part
    text = (got.source if got is not None and got.source else None) or \
        part.provenance.source or part.provenance.basis
    return f"{device.part_id} {name}: {text}"


def _timing_value(device: Device, name: str) -> float | None:
    got = getattr(device.part.timing, name)
    return None if got is None else float(got.at())


def _spi_lines(bus: Bus, design: Design) -> tuple[dict, Device, list, list, list]:
    controllers = bus.controllers
    controller = controllers[0]
    notes = []
    if len(controllers) > 1:
        notes.append(f"more than one controller: {controller.ref} is taken as the one driving")
    peripherals = [d for d in bus.peripherals if not is_bridge(d)]
    bridges = [d for d in bus.peripherals if is_bridge(d)]
    warn = design.warn_margin
    out = {}
    for sig in _SPI_ORDER:
        if sig not in bus.lines:
            continue
        fn = SIGNAL_FUNCTION[sig]
        line = bus.lines[sig]
        if sig in _CONTROLLER_DRIVES:
            d = endpoint(controller, fn, bus)
            if d is None or d.pin.drive != "push-pull":
                raise DesignError(M.CONTROLLER_LACKS_PUSH_PULL_PIN.format(function=fn),
                                  field=f"lines.{sig}", value=controller.part_id)
            drivers = [d]
            others = [e for e in (endpoint(p, fn, bus) for p in peripherals + bridges) if e]
            loads = [d] + others
            receivers = [e for e in others if e.pin.drive == "input"]
        else:
            drivers = [e for e in (endpoint(p, fn, bus) for p in peripherals)
                       if e is not None and e.pin.drive == "push-pull"]
            rx = endpoint(controller, fn, bus)
            others = [e for e in (endpoint(p, fn, bus) for p in peripherals + bridges) if e]
            loads = ([rx] if rx else []) + others
            receivers = [rx] if rx is not None else []
            if not drivers:
                notes.append("cipo is routed but no peripheral drives it; line not evaluated")
                continue
        out[sig] = analyse_line(sig, line, drivers, loads, receivers, clock=bus.clock,
                                clock_line=(sig == "sclk"), warn_margin=warn, bus_id=bus.id)
    return out, controller, peripherals, bridges, notes


def spi_analysis(bus: Bus, design: Design) -> SpiAnalysis:
    """Lines and timing terms of an SPI bus (what :func:`evaluate_bus` reports).

    Parameters
    ----------
    bus : Bus
        An ``spi`` bus of ``design``. [1]
    design : Design
        The loaded design. [1]

    Returns
    -------
    SpiAnalysis
    """
    mode = spi_mode(bus.spi_mode)
    lines, controller, peripherals, bridges, notes = _spi_lines(bus, design)
    ct = controller.part.timing
    c_sources = {n: _sourced_text(controller, n) for n in ("t_valid", "t_setup", "t_hold",
                                                           "t_cs_setup", "f_max")}
    ctl = ControllerTiming(controller.ref, _timing_value(controller, "t_valid"),
                               _timing_value(controller, "t_setup"),
                               _timing_value(controller, "t_hold"),
                               _timing_value(controller, "t_cs_setup"),
                               None if ct.f_max is None else float(ct.f_max.at()), c_sources)
    for name in ("t_valid", "t_setup", "t_hold"):
        if getattr(ct, name) is None:
            notes.append(f"{controller.ref} ({controller.part_id}) records no {name}: taken as 0")
    if ct.t_cs_setup is None:
        notes.append(f"CS lead: {CS_LEAD_SOURCE}")
    t_bridge = 0.0
    for b in bridges:
        if b.part.timing.t_pd is not None:
            t_bridge += float(b.part.timing.t_pd.at())
            notes.append(f"{b.ref} ({b.part_id}) t_pd {b.part.timing.t_pd.text} in every path "
                         "(twice on the CIPO round trip)")
    sclk = lines.get("sclk")
    periph_t = []
    ctl_sclk = None if sclk is None else sclk.cases[controller.ref]
    ctl_cipo = endpoint(controller, SIGNAL_FUNCTION["cipo"], bus)
    for p in peripherals:
        if ctl_sclk is None:
            continue
        ep = endpoint(p, SIGNAL_FUNCTION["sclk"], bus)
        if ep is None:
            continue
        sclk_f = {e: ctl_sclk.flight(ep, e) for e in ("rise", "fall")}
        copi = cs = cipo = None
        if "copi" in lines and (e := endpoint(p, SIGNAL_FUNCTION["copi"], bus)) is not None:
            copi = lines["copi"].cases[controller.ref].flight_both(e)
        if "cs" in lines and (e := endpoint(p, SIGNAL_FUNCTION["cs"], bus)) is not None:
            cs = lines["cs"].cases[controller.ref].flight(e, "fall")
        if "cipo" in lines and p.ref in lines["cipo"].cases and ctl_cipo is not None:
            cipo = lines["cipo"].cases[p.ref].flight_both(ctl_cipo)
        tv = _timing_value(p, "t_valid")
        if cipo is not None and tv is None:
            notes.append(f"{p.ref} ({p.part_id}) records no t_valid: CIPO setup not checked")
        for name in ("t_setup", "t_hold", "t_cs_setup"):
            if getattr(p.part.timing, name) is None:
                notes.append(f"{p.ref} ({p.part_id}) records no {name}: taken as 0")
        periph_t.append(PeripheralTiming(
            p.ref, sclk_f, copi, cs, cipo, tv, _timing_value(p, "t_setup"),
            _timing_value(p, "t_hold"), _timing_value(p, "t_cs_setup"),
            _timing_value(p, "f_max"),
            {n: _sourced_text(p, n) for n in ("t_valid", "t_setup", "t_hold", "t_cs_setup",
                                              "f_max")}))
    terms = budget_terms(mode, ctl, periph_t, t_bridge)
    f_limits = []
    for d in [controller] + peripherals + bridges:
        f = _timing_value(d, "f_max")
        if f is not None:
            f_limits.append((d.ref, f, _sourced_text(d, "f_max")))
    edge_terms = []
    if bus.clock:
        for sig, la in lines.items():
            chk = la.result.check("edge-time")
            if chk is not None:
                edge_terms.append((sig, float(chk.value)))
    return SpiAnalysis(bus, mode, lines, ctl, periph_t, t_bridge, terms, f_limits,
                       edge_terms, notes)


_TERM_TEXT = {
    "copi-setup": ("COPI setup at {ref}", "available setup {avail} against t_setup {req}"),
    "copi-hold": ("COPI hold at {ref}", "available hold {avail} against t_hold {req}"),
    "cipo-setup": ("CIPO setup at the controller from {ref}",
                   "round trip leaves {avail} against the controller's t_setup {req}"),
    "cipo-hold": ("CIPO hold at the controller from {ref}",
                  "available hold {avail} against the controller's t_hold {req}"),
    "cs-setup": ("CS setup at {ref}", "CS leads the first edge by {avail} against "
                                      "t_cs_setup {req}"),
}


def evaluate_spi(bus: Bus, design: Design, *, analysis: SpiAnalysis | None = None) -> BusResult:
    """Evaluate an SPI bus: its lines and its timing budget at the design's clock.

    Parameters
    ----------
    bus : Bus
        An ``spi`` bus of ``design``. [1]
    design : Design
        The loaded design. [1]
    analysis : SpiAnalysis, optional
        ``spi_analysis(bus, design)`` when the caller already has it (a widget that
        also draws the budget), so that the lines are not solved twice. [1]

    Returns
    -------
    BusResult
        One line result per routed signal; checks ``copi-setup``, ``copi-hold``,
        ``cipo-setup``, ``cipo-hold``, ``cs-setup`` (per peripheral) and ``f-max``
        (per part); figures ``max_clock`` [Hz], ``cipo_setup_margin``,
        ``copi_setup_margin`` and ``copi_hold_margin`` (the worst over peripherals,
        available minus required time; None when not computed) [s].
    """
    sa = spi_analysis(bus, design) if analysis is None else analysis
    res = BusResult(id=bus.id, protocol=bus.protocol, workings=sa)
    res.notes.extend(sa.notes)
    res.notes.append(f"SPI mode {sa.mode.mode} (CPOL {sa.mode.cpol}, CPHA {sa.mode.cpha}): "
                     f"idle {sa.mode.idle}, data launched on the {sa.mode.launch_edge} and "
                     f"sampled on the {sa.mode.sample_edge} of SCLK")
    res.notes.append(f"timing reference: {TIMING_REFERENCE}")
    warn = design.warn_margin
    clock = float(bus.clock)
    worst: dict[str, float | None] = {}
    why: dict[str, str] = {}
    for t in sa.terms:
        chk = res.add(_term_check(t, clock, warn, sa.mode.mode))
        if chk.reason is not None:
            worst[t.id] = None   # no time exists; the check fails and says why
            why.setdefault(t.id, chk.reason)
        elif t.id not in worst or worst[t.id] is not None:
            m = float(chk.value) - t.required
            worst[t.id] = min(worst.get(t.id, math.inf), m)
    for ref, f, source in sa.f_limits:
        res.add(check_max("f-max", clock, f, "Hz", source,
                          f"clock {_fmt(clock, 'Hz')} against {ref}'s f_max {_fmt(f, 'Hz')}",
                          warn_margin=0.0, subject=ref))  # a rating: at it is inside
    for la in sa.lines.values():
        res.lines.append(la.result)
    (f_top, by, _), (f_edge, edge_sig) = sa.clock_limits()[0], sa.edge_rule_clock()
    res.figure("max_clock", f_top if f_top > 0 else None, "Hz")
    res.figure("max_clock_limited_by", by, "")
    res.figure("max_clock_edge_rule", f_edge, "Hz")
    if f_top <= 0:
        res.notes.append(f"max_clock: none, no clock satisfies {by}")
    elif math.isfinite(f_top):
        res.notes.append(f"max_clock {_fmt(f_top, 'Hz')}: the highest clock the timing "
                         f"budget and the parts' f_max allow, set by {by}")
    if math.isfinite(f_edge):
        res.notes.append(f"max_clock_edge_rule {_fmt(f_edge, 'Hz')}: the highest clock at "
                         f"which every far-end edge keeps within {EDGE_FRACTION:.0%} of the "
                         f"period (rule of thumb; set by {edge_sig}); it warns, it does not "
                         "limit")
    for fig, tid in (("cipo_setup_margin", "cipo-setup"), ("copi_setup_margin", "copi-setup"),
                     ("copi_hold_margin", "copi-hold")):
        res.figure(fig, worst.get(tid), "s")
        if tid not in worst:
            res.notes.append(f"{fig}: not computed (signal not routed or data missing)")
        elif tid in why:
            res.notes.append(f"{fig}: none, {why[tid]}")
    return res


def _term_check(t: Term, clock: float, warn: float, mode: int):
    """The check of one timing term at the clock; when a flight has no finite time (a
    receiver that never crosses its threshold) a failing check without a value, whose
    ``reason`` says why."""
    title, body = _TERM_TEXT[t.id]
    source = t.source or "not recorded by the part: taken as 0"
    details = {k: v for k, v in t.parts.items()} | {"mode": mode}
    head = f"{title.format(ref=t.subject)}: "
    avail = float(t.available(1.0 / clock))
    if not math.isfinite(avail):
        never = sorted({k.split("_")[0].upper() for k, v in t.parts.items()
                        if isinstance(v, float) and not math.isfinite(v)})
        what = " and ".join(never) or "a signal"
        reason = (f"{what} never crosses the receiving input's threshold (VIH on a rise, VIL "
                  "on a fall), so no time is available: see the line's level checks")
        return Check(t.id, "fail", None, t.required, "s", None, source,
                     head + reason + f"; {_fmt(t.required, 's')} required",
                     subject=t.subject, details=details, reason=reason,
                     fix="make the driver's high level reach the receiver's VIH (a "
                         "level translator, or parts on one rail)")
    return check_min(
        t.id, avail, t.required, "s", source,
        head + body.format(avail=_fmt(avail, "s"), req=_fmt(t.required, "s"))
        + f" at {_fmt(clock, 'Hz')}", warn_margin=warn, subject=t.subject, details=details)


def _scaled_line(line: Line, length: float) -> Line:
    total = line.length
    if total <= 0:
        raise InputError(M.ZERO_LENGTH_NOT_SCALED, field=f"lines.{line.signal}")
    k = length / total
    return replace(line, sections=tuple(replace(s, length=s.length * k) for s in line.sections))


def max_clock_vs_length(bus: Bus, design: Design, lengths, signals=None) -> np.ndarray:
    """``max_clock`` of an SPI bus with its lines stretched or shortened.

    Parameters
    ----------
    bus : Bus
        An ``spi`` bus. [1]
    design : Design
        Its design. [1]
    lengths : array_like
        Total length given to each chosen line (its sections scaled in proportion). [m]
    signals : iterable of str, optional
        The lines to change; every routed line by default. [1]

    Returns
    -------
    numpy.ndarray
        The highest clock for each length (same shape as ``lengths``). [Hz]

    Notes
    -----
    Each length needs its own waveforms (the line delay sets the solver's grid), so
    this evaluates the lines once per length; the timing itself is closed form.
    """
    lengths = np.asarray(lengths, dtype=float)
    chosen = set(bus.lines) if signals is None else set(signals)
    out = np.empty(lengths.shape)
    for idx, length in np.ndenumerate(lengths):
        new_lines = {s: (_scaled_line(ln, float(length)) if s in chosen else ln)
                     for s, ln in bus.lines.items()}
        out[idx] = spi_analysis(replace(bus, lines=new_lines), design).max_clock()
    return out


def max_clock_vs_t_valid(bus: Bus, design: Design, t_valid, peripheral: str | None = None):
    """``max_clock`` of an SPI bus as one peripheral's ``t_valid`` varies.

    Parameters
    ----------
    bus : Bus
        An ``spi`` bus. [1]
    design : Design
        Its design. [1]
    t_valid : array_like
        Values of the peripheral's ``t_valid``. [s]
    peripheral : str, optional
        Its reference designator; the first peripheral by default. [1]

    Returns
    -------
    numpy.ndarray
        The highest clock for each ``t_valid``. [Hz]

    Notes
    -----
    ``t_valid`` enters only the CIPO setup term, linearly, so the waveforms are solved
    once and the whole array goes through :func:`pinlib.engines.max_clock`.
    """
    sa = spi_analysis(bus, design)
    tv = np.asarray(t_valid, dtype=float)
    ref = peripheral or (sa.peripherals[0].ref if sa.peripherals else None)
    known = {p.ref: p for p in sa.peripherals}
    if ref not in known:
        raise InputError(M.NO_SUCH_PERIPHERAL, field="peripheral", value=ref,
                         expected=", ".join(known) or "a peripheral")
    base = known[ref].t_valid
    a_cols, k_cols = [], []
    for t in sa.terms:
        k = _finite_or_inf(t.required - t.b)
        if t.id == "cipo-setup" and t.subject == ref:
            # k = t_setup + sclk_late + t_valid + cipo_late + t_path: shift by t_valid
            k = k + (tv - base)
        a_cols.append(np.full(tv.shape, t.a))
        k_cols.append(np.broadcast_to(np.asarray(k, dtype=float), tv.shape))
    if ref in known and base is None:
        raise InputError(M.NO_T_VALID_TO_VARY, field="t_valid",
                         value=ref)
    f_lim = min([f for _, f, _ in sa.f_limits], default=math.inf)
    if not a_cols:
        return np.full(tv.shape, f_lim)
    return max_clock(np.stack(a_cols, axis=-1), np.stack(k_cols, axis=-1), f_lim)
