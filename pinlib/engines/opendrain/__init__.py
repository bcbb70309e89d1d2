"""The open-drain engine (I2C, SMBus): pull-up budgets per segment and per line.

:func:`evaluate_bus` takes a loaded :class:`~pinlib.model.design.Bus` of protocol ``i2c`` or
``smbus`` and returns a :class:`~pinlib.model.result.BusResult`.  It works in two passes:

1. For every segment and each line (SDA, SCL) it gathers what the line is made of —
   the pins on it (with their parts' limits, or the specification's when a part states
   none), the bus capacitance (pins, traces, cables, extra), the leakage, the pull-ups
   the parts carry — and the window Rp(min)..Rp(max).  It picks the pull-up
   (``pullup = "auto"``) or takes the design's.
2. With every segment's pull-up known (a pass-transistor translator joins two), the
   array engine (:mod:`.batch`, at one variant) evaluates each line at the worst
   corners: pull-up at ± its tolerance, the rail at ± its tolerance, capacitances at
   their stored maxima; then the segment's timing, voltage-domain, power-state and
   bridging-part checks; :mod:`.wording_segment` words them.

Worst cases are taken over the two corners of the pull-up rail (``VDD·(1 − tol)`` and
``VDD·(1 + tol)``).  A device on the pull-up rail follows it (its relative thresholds
move with the rail); a device on its own rail (``supply = ...`` in the design, at the
same relative tolerance) is taken at whichever end of its own rail hurts.

The numbers come from the vectorized functions of :mod:`pinlib.physics.pullup` and
:mod:`pinlib.physics.rc`; :func:`budget` (re-exported) evaluates a whole line for arrays
of Rp, Cb and VDD, and :func:`capacitance_from_rise` is the bench helper.

The package:

- :mod:`.inputs`: pass 1 for one bus;
- :mod:`.rules`: the rules both paths share: a pin's roles
  and leakage (``pin_rules``), Rp(min)/Rp(max) through :mod:`pinlib.physics.rc`, the
  ``auto`` rule, Rp(min) across pass transistors, the joins between segments, bridge
  delays, the controller's segment, the SCL times it counts, who sets SDA, a rail
  against a supply range;
- :mod:`.arith`: shape-agnostic line arithmetic (low levels, fall-time bounds);
  :mod:`.bridges`: the gate-drive rule of pass transistors;
- :mod:`.batchinputs`, :mod:`.batchresult`, :mod:`.batchfigures` and :mod:`.batch`:
  pass 2, every check over arrays of variants (one for :func:`evaluate_bus`; Monte
  Carlo, corners, candidate parts), without messages; each check keeps the row and rail
  corner of its worst and what its wording needs; at the design's own corners
  :mod:`.batchgathered` takes the lines from :func:`collect` (one gathering);
- :mod:`.wording` (a line's checks) and :mod:`.wording_segment` (a segment's figures,
  checks and notes): messages, fixes, subjects and details of the batch's checks at one
  variant, with the labels and sources of the gathered inputs;
- :mod:`.explain`: advice for a failing window, the sink model, a segment's notes.
"""

from __future__ import annotations

from pinlib.engines.opendrain.batch import WorstCase, run
from pinlib.engines.opendrain.inputs import (
    LineInputs,
    SegmentInputs,
    _f,
    collect,
)
from pinlib.engines.opendrain.rules import (
    CLAMP_DROP,
    GATE_OVERDRIVE,
    SIGNALS,
)
from pinlib.engines.opendrain.wording_segment import segment
from pinlib.model.design import Bus, Design
from pinlib.model.result import BusResult, SegmentResult
from pinlib.physics.pullup import Budget, budget, capacitance_from_rise

__all__ = [
    "SIGNALS",
    "CLAMP_DROP",
    "GATE_OVERDRIVE",
    "LineInputs",
    "SegmentInputs",
    "collect",
    "evaluate_bus",
    "budget",
    "Budget",
    "capacitance_from_rise",
]


def evaluate_bus(bus: Bus, design: Design) -> BusResult:
    """Evaluate an I2C or SMBus bus of a design.

    Parameters
    ----------
    bus : Bus
        The bus (protocol ``i2c`` or ``smbus``).
    design : Design
        The design it belongs to (for the warning threshold).

    Returns
    -------
    BusResult
        A single-segment bus carries its figures and checks itself; a bus split by
        bridging parts lists one :class:`~pinlib.model.result.SegmentResult` per segment.

    Raises
    ------
    DesignError
        When the bus cannot be evaluated (not an open-drain bus).  An SMBus rail whose
        minimum does not exceed the rise's upper point is no error: its rise-time check
        fails.
    """
    lim, seg_ins = collect(bus, design)
    ctx, batch = run(bus, design, WorstCase(1), collected=(lim, seg_ins), name_segments=True)
    ctx.collected = seg_ins
    ctx.devices = {d.ref: d for s in seg_ins for d in s.segment.devices}
    result = BusResult(id=bus.id, protocol=bus.protocol, workings=(lim, seg_ins))
    groups = [segment(ctx, s, sb) for s, sb in zip(seg_ins, batch.segments, strict=True)]
    head = f"{lim.label}, clock {_f(ctx.clock, 'Hz')}"
    if len(bus.controllers) > 1:
        head += (f"; {len(bus.controllers)} controllers: timing from {ctx.controller.ref}")
    if len(groups) == 1:
        g = groups[0]
        result.figures, result.checks, result.notes = g.figures, g.checks, [head] + g.notes
    else:
        result.notes.append(head)
        for s, g in zip(seg_ins, groups, strict=True):
            sr = SegmentResult(id=s.segment.id)
            sr.figures, sr.checks, sr.notes = g.figures, g.checks, g.notes
            result.segments.append(sr)
    return result
