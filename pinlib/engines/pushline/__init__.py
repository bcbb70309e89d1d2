"""One push-pull or open-drain line: its sections, driver, loads, waveforms and checks.

:func:`analyse_line` is the line engine of :mod:`pinlib.engines.pushpull` (GPIO) and
:mod:`pinlib.engines.spi` (SPI).  It returns a :class:`LineAnalysis` holding the
waveforms of every driver on the line and a :class:`~pinlib.model.result.LineResult` with
the figures ``load_capacitance``, ``trace_delay``, ``z0``, ``edge_rise_time``,
``edge_fall_time``, ``series_resistor``, ``overshoot``, ``undershoot``,
``transmission_line``, ``model`` and ``delay_to_edge_ratio``.

How a line is built
-------------------
* **Driver and load.**  The controller drives SCLK, COPI and CS; every peripheral
  drives CIPO in turn, the other peripherals' CIPO pins loading it (their output
  capacitance, high-impedance while deselected).  A driver's own pin capacitance is
  inside its datasheet edges (they were measured with it), so its load is the trace,
  the line's ``extra_capacitance`` and the ``c_in`` of every other pin on the net.
  In the simple form every pin is placed at the far end of the line: the farthest
  receiver sees the whole line (the conservative place for delay and for
  reflections).  A line with a ``route`` places each pin at its own point of a tree
  (:mod:`.routes`): each driver drives from its point, each receiver gets its own
  waveform, checks (their ``subject``) and flights, solved by
  :func:`pinlib.physics.waveform.tree_response`.
* **Sections.**  A named geometry goes through :mod:`pinlib.physics.lines` (microstrip
  or stripline, the geometry's ``method`` or the default); per-length values give
  ``Z0 = delay / capacitance``; a cable class gives its capacitance, delay and
  impedance.  A section with a capacitance but no delay counts as a lumped
  capacitance at the far end; one of 0 length is a point.
* **Model.**  A line is electrically long (``transmission_line``) when its one-way
  delay exceeds one sixth of the 10–90 % edge the driver makes into the pins and the
  line's ``extra_capacitance`` alone, without the trace
  (:data:`LONG_LINE_RULE`); the ratio is reported so that users can apply another
  rule.  A long line is solved as a chain of lossless lines
  (:func:`pinlib.physics.waveform.distributed_response`).  A short one is solved as
  one lumped capacitance (:func:`~pinlib.physics.waveform.lumped_response`) only
  when the line's inductance is also negligible against the RC
  (:data:`LUMPED_RULE`): a driver much stronger than the line impedance rings even on
  a short trace, and there the chain is solved too.  An open-drain rise, a step
  through the pull-up into capacitances spread along the net, is held to a stricter
  limit (:data:`PULLUP_RISE_RULE`): the inductance between them rings; so is every
  other edge (a push-pull driver's, an open-drain sink's fall) of a line whose pins
  sit at more than one point of its route (:data:`SPREAD_RULE`).
* **Driver model.**  :func:`pinlib.physics.driver.driver_from_pin`: a ramp behind
  ``r_out`` for each edge.  An open-drain GPIO driver sinks through ``v_ol / i_ol``
  against the pull-ups on the net, and the line rises through them.
* **Series termination.**  ``series_resistor = "auto"``: none when the line is
  electrically short and passes the overshoot, undershoot and ringing checks without
  one (what a series resistor cures; the choice so does not depend on the clock);
  otherwise ``Rs = Z0 - r_out`` (Z0 of the stretch at the driver,
  :attr:`LineAnalysis.z0`, whichever order the file writes the stretches in; ``r_out``
  the mean of the driver's rise and fall resistance; on CIPO the strongest driver's, a
  resistor of that value then sitting at each peripheral's pin) rounded to the nearest
  E24 value (by ratio), and the line evaluated again.  Where the sections differ in
  Z0 (a short trace into a cable) the match of each other section's Z0 is tried and
  kept only where it brings the overshoot, undershoot and ringing checks to a better
  standing (fewer failing, then fewer warning): a short first section hides behind
  the next, and matching it alone can leave the rest ringing, but a few millivolts less
  overshoot do not outweigh the slower edge of a larger resistor.  The check
  ``series-termination`` holds the edge, overshoot and undershoot with and without it.

Checks on each line: ``overshoot`` and ``undershoot`` against each pin's ``abs_max``
(at that pin's own supply), ``ringing`` (re-crossings of VIH/VIL after the first
crossing: a failure on SCLK, where it clocks twice, a warning on data lines),
(at a receiver with ``hysteresis``, only a swing back past VIH less it after a rise, or
VIL plus it after a fall: where a Schmitt-trigger input can switch back),
``edge-time`` (the 10–90 % edge under :data:`EDGE_FRACTION` of the clock period: a rule
of thumb, so it warns and never fails), ``line-delay`` (the one-way delay within one clock
period, a rule of thumb that flags a design outside a board-level bus), and ``level-high`` /
``level-low`` (the driver's VOH/VOL against each receiver's VIH/VIL at its own supply).

Assumptions and limits: supplies are nominal (the bus's, or a device's own); without a
route every pin sits at the far end (a receiver part way along is placed only by a
route); the design
format gives one route per signal, so a bridging part on the bus is modelled as a load
on the controller's side of it.

The package, each module importing only those above it:

- :mod:`.rules`: the rules of thumb and limits the checks name, the solver's time grid;
- :mod:`.pins`: a pin on a line (:class:`Endpoint`), its supply, a flight time;
- :mod:`.sections`: the sections of a line (:class:`Stretch`) and its model (long or
  short, lumped or distributed);
- :mod:`.waves`: the edge at the far end (:class:`EdgeWave`), solved on a time grid;
- :mod:`.routes`: a routed line as a tree (:class:`RouteNet`), its edges at every point;
- :mod:`.drive`: one driver with its loads and series resistor (:class:`DriveCase`);
- :mod:`.analysis`: what the engine worked out for a line (:class:`LineAnalysis`);
- :mod:`.sichecks`: overshoot, undershoot, ringing, levels and edge time;
- :mod:`.termination`: the series resistor, chosen by "auto" or given;
- :mod:`.line`: :func:`analyse_line` in its steps.
"""

from __future__ import annotations

from pinlib.engines.pushline.analysis import (  # noqa: F401
    LineAnalysis,
)
from pinlib.engines.pushline.drive import (  # noqa: F401
    DriveCase,
    drive_case,
)
from pinlib.engines.pushline.line import (  # noqa: F401
    LineInputs,
    analyse_line,
    open_drain_pullup,
)
from pinlib.engines.pushline.pins import (  # noqa: F401
    Endpoint,
    Flight,
    device_supply,
    endpoint,
    is_bridge,
    pulled_to_bus,
)
from pinlib.engines.pushline.rules import (  # noqa: F401
    EDGE_FRACTION,
    EDGE_RULE,
    LINE_DELAY_RULE,
    LONG_LINE_FRACTION,
    LONG_LINE_RULE,
    LUMPED_INDUCTANCE_LIMIT,
    LUMPED_RULE,
    MAX_TIME_STEPS,
    PULLUP_RISE_INDUCTANCE_LIMIT,
    PULLUP_RISE_RULE,
    SIGNAL_FUNCTION,
    SPREAD_INDUCTANCE_LIMIT,
    SPREAD_RULE,
    TERMINATION_RULE,
    UNDERSHOOT_DEFAULT,
    UNDERSHOOT_RULE,
)
from pinlib.engines.pushline.sections import (  # noqa: F401
    Stretch,
    line_model,
    needs_distributed,
    stretches_of,
)
from pinlib.engines.pushline.termination import (  # noqa: F401
    auto_series_resistor,
)
from pinlib.engines.pushline.waves import (  # noqa: F401
    EdgeWave,
    simulate_edge,
)

__all__ = [
    "LONG_LINE_FRACTION",
    "LONG_LINE_RULE",
    "LUMPED_INDUCTANCE_LIMIT",
    "LUMPED_RULE",
    "PULLUP_RISE_INDUCTANCE_LIMIT",
    "PULLUP_RISE_RULE",
    "SPREAD_INDUCTANCE_LIMIT",
    "SPREAD_RULE",
    "EDGE_FRACTION",
    "EDGE_RULE",
    "UNDERSHOOT_DEFAULT",
    "UNDERSHOOT_RULE",
    "TERMINATION_RULE",
    "SIGNAL_FUNCTION",
    "MAX_TIME_STEPS",
    "Endpoint",
    "Flight",
    "Stretch",
    "EdgeWave",
    "DriveCase",
    "LineAnalysis",
    "stretches_of",
    "line_model",
    "needs_distributed",
    "simulate_edge",
    "drive_case",
    "auto_series_resistor",
    "analyse_line",
    "open_drain_pullup",
    "LineInputs",
    "endpoint",
    "device_supply",
    "is_bridge",
    "pulled_to_bus",
]

