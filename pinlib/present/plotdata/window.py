"""The pull-up window's data: Rp(min) and Rp(max) against Cb, and the design's point."""

from __future__ import annotations

import math

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.core.protocols import OPEN_DRAIN_PROTOCOLS, protocol
from pinlib.core.quantity import format_si
from pinlib.core.valueclass import value_class
from pinlib.model.design import Bus, Design
from pinlib.physics import rc
from pinlib.present.plotdata.common import _CB_POINTS, _require_protocol, workings


@value_class(frozen=True)
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
    shared : bool
        Whether the segment is joined to another through a pass-transistor translator:
        Rp(min) is then the weakest sink's rating less the current it also sinks from
        the far side's pull-ups. [1]
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
    shared: bool = False


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
    if math.isfinite(ln.rise_factor):
        rp_max = np.asarray(rc.rp_max(lim.tr_max, cb, ln.rise_factor), dtype=float)
        rp_max0 = float(rc.rp_max(lim.tr_max, cb0, ln.rise_factor)) if cb0 > 0 else math.inf
    else:  # an SMBus rail below the rise's upper point: the rise bounds nothing
        rp_max, rp_max0 = np.full(cb.shape, math.inf), math.inf
    source = (f"UM10204 rev. 6 §7.1 eq. 1 and 2; tr(max) {format_si(lim.tr_max, 's')} from "
              f"{lim.source_edges}")
    return PullupWindowData(bus.id, seg_in.segment.id, signal, cb, float(ln.rp_min), rp_max,
                            cb0, float(seg_in.r_eff(signal)), rp_max0, float(lim.tr_max),
                            float(ln.rise_factor), ln.rp_min_label, source, bool(ln.coupled))
