"""The array engine's lines taken from the one-bus gathering (:func:`.inputs.collect`).

At the design's own corners (:class:`.batchinputs.WorstCase`, nothing substituted) every
value of a line is the one :func:`.inputs.collect` has worked out already: its
capacitance, leakage, drivers' sink points and receivers' thresholds at each rail
corner, the parts' pull-ups and the window.  :func:`line_from` turns a gathered
:class:`.inputs.LineInputs` into the batch's ``_Line`` of one variant (rail corners on
the second axis) without reading the pins again; of each pin it takes only what the
checks read beyond the line's sums (abs_max, off-tolerance, the output fall times).
"""

from __future__ import annotations

from pinlib.engines.opendrain.batchinputs import (
    Level,
    PinData,
    Scenario,
    _Driver,
    _Line,
    _Parts,
    _Receiver,
    _Tap,
    rp_min_rests_on,
    soft_flags,
)
from pinlib.engines.opendrain.inputs import LineInputs
from pinlib.engines.opendrain.rules import abs_max_follows, part_is_mosfet
from pinlib.model.design import Segment


def _pin(t, driver, receiver) -> PinData:
    """What the checks read of a gathered pin beyond its line's sums (its capacitance,
    leakage, pull-ups and levels are in the gathered line: None here); ``driver`` and
    ``receiver`` its gathered driver and receiver (None where it is not one), whose
    values taken decide the limits' softness."""
    pin = t.pin
    taken = {}
    if driver is not None:
        taken.update(v_ol=driver.v_ol_value, i_ol=driver.i_ol_value)
    if receiver is not None:
        taken.update(v_il=receiver.v_il_value, v_ih=receiver.v_ih_value)
    return PinData(
        name=t.pin_name, open_drain=pin.drive == "open-drain", driver=driver is not None,
        receiver=receiver is not None, c_in=None, leakage=None, v_ol=None, i_ol=None, v_il=None,
        v_ih=None,
        abs_max=Level.of(pin.abs_max) if pin.abs_max is not None else None,
        abs_follows=abs_max_follows(pin) if pin.abs_max is not None else None,
        pullup=None, pullup_internal=None, off_tolerant=bool(pin.off_tolerant),
        t_of_min=float(pin.t_of_min.value) if pin.t_of_min is not None else None,
        t_of_max=float(pin.t_of_max.value) if pin.t_of_max is not None else None,
        **soft_flags(pin, taken))


def line_from(li: LineInputs, seg: Segment, parts: _Parts, scen: Scenario) -> _Line:
    """The batch's line of one variant from a gathered line (rail corners ``(1, 2)``).

    Rp(min) is the gathering's, with the current across pass transistors (the pull-ups
    are the design's as gathered, so the coupling is the gathering's)."""
    drives = {id(d.tap): d for d in li.drivers}
    reads = {id(r.tap): r for r in li.receivers}
    taps = {}
    for t in li.taps:
        taps[id(t)] = _Tap(t.dev, t.dev.part, _pin(t, drives.get(id(t)), reads.get(id(t))),
                           parts.timing(t.dev), t.vdd, t.own, part_is_mosfet(t.dev.part),
                           scen.tap_rail(t.vdd, seg))
    drivers = [_Driver(taps[id(d.tap)], d.v_ol[None, :], d.i_ol, d.r_sink[None, :],
                       d.r_series, d.offset, d.v_ol_low[None, :]) for d in li.drivers]
    receivers = [_Receiver(taps[id(r.tap)], r.v_il[None, :], r.v_ih[None, :])
                 for r in li.receivers]
    return _Line(li.signal, list(taps.values()), li.cb, li.leakage, drivers, receivers,
                 li.r_parts, li.rp_min, li.rp_max, li.rise_factor, li.rp_leak, li.rp_fast,
                 li.cb_low,
                 soft_min=bool(rp_min_rests_on(li, seg.supply * (1 + seg.supply_tolerance))),
                 rp_min_firm=li.rp_min_firm[0])
