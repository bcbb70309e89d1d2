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

Corners: a driver's flights are taken at its slow corner (the pin's ``r_out`` and
``edges``), the maximum delays of setup.  Where its part states a fast corner
(``pins.<pin>.fast``), the hold checks also take it, the side of the minimum delays:
each corner's flights run from that corner's own timing reference (its pin into
``test_load`` with that corner's drive), so two flights of one driver are paired within
a corner, never mixed (COPI hold and CS hold: the controller's data or CS against its
own SCLK, the shorter hold of its two corners), while flights of two drivers each take
their own driver's earlier corner (CIPO hold: the controller's SCLK, the peripheral's
CIPO).  Setup, the SCLK pulses and the first CIPO bit stay at the slow corner.

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
* SCLK pulses at P (where it records ``t_high``, ``t_low``): ``T/2 + fall_early -
  rise_late >= t_high(P)`` and ``T/2 + rise_early - fall_late >= t_low(P)``: the high
  pulse runs from the rise's last crossing to the fall's first, the low one the other
  way round.
* CS hold at P: ``lag + cs_early(release) - sclk_late(last edge) >= t_cs_hold(P)``, where
  ``lag`` is the controller's last-edge-to-CS-release time: its own ``t_cs_hold`` when
  the class records one, else half a clock period (common practice, no source); the last
  edge is the one that returns SCLK to its idle level.
* First CIPO bit at the controller (CPHA 0, a peripheral that records ``t_cs_valid``,
  its CS-asserted-to-output-valid time): ``lead - (cs_late + t_cs_valid + cipo_late +
  2 t_pd) >= t_setup(controller)``: the first bit leaves when CS asserts and is sampled
  on the first edge.  Without ``t_cs_valid`` a note says the first bit is not budgeted
  (a memory drives nothing until a command is in; many converters drive at once).

The CS lead and lag of half a period are assumptions, not datasheet values: a check
whose available time rests on one (CS setup and the first CIPO bit on the lead, CS hold
on the lag, where the controller records no ``t_cs_setup`` or ``t_cs_hold``) is a rule
of thumb (``Term.assumed``): it warns where it would fail, and its source names the
assumption and the controller's value that makes it a full check.  ``max_clock`` keeps
such a term (half a period is what is known of that controller; leaving the term out
would give a clock no data backs either), and where one sets it the figure's note says
it rests on the assumed lead or lag.

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
(separate chip selects would each carry one; the bus's notes say so where a plain CS
line serves several peripherals); CS is taken as active low; the
controller's own ``t_valid``, ``t_setup`` and ``t_hold`` are taken as 0 when its class
does not record them (a note says so).  A check against a requirement of 0 has the
slack in seconds as its margin (``Term.check_margin``); against a 0 taken for a
requirement the part does not record, a negative slack warns, since no published limit
stands behind it.

References
----------
CPOL/CPHA edge table: REFERENCES.md, SPI (secondary sources [C2]).  Loop budget
T/2 >= t(SCLK out) + t_valid + t(CIPO back) + t_setup: the structure of the published
isolated-SPI example (an isolator vendor's application note [C2]).

The package, each module importing only those above it:

- :mod:`.modes`: the four clock modes and the sources the checks name;
- :mod:`.margins`: the margin formulas over arrays, and :func:`max_clock` in closed form;
- :mod:`.budget`: the timing values of the parts and the terms of each budget;
- :mod:`.analysis`: the routed lines through the line engine, and the flights;
- :mod:`.evaluate`: the bus's checks and figures (:func:`evaluate_spi`);
- :mod:`.sweeps`: the highest clock against a line's length or a ``t_valid``.
"""

from __future__ import annotations

from pinlib.engines.spi.analysis import (  # noqa: F401
    SpiAnalysis,
    spi_analysis,
    spi_line_inputs,
)
from pinlib.engines.spi.budget import (  # noqa: F401
    ControllerTiming,
    PeripheralTiming,
    Term,
    budget_terms,
)
from pinlib.engines.spi.evaluate import (  # noqa: F401
    evaluate_spi,
)
from pinlib.engines.spi.margins import (  # noqa: F401
    cipo_hold_available,
    cipo_setup_available,
    copi_hold_available,
    copi_setup_available,
    cs_setup_available,
    max_clock,
)
from pinlib.engines.spi.modes import (  # noqa: F401
    CS_LAG_SOURCE,
    CS_LEAD_SOURCE,
    MODE_SOURCE,
    SPI_MODES,
    TIMING_REFERENCE,
    SpiMode,
    spi_mode,
)
from pinlib.engines.spi.sweeps import (  # noqa: F401
    max_clock_vs_length,
    max_clock_vs_t_valid,
)

__all__ = [
    "SpiMode",
    "SPI_MODES",
    "MODE_SOURCE",
    "CS_LAG_SOURCE",
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
    "spi_line_inputs",
    "evaluate_spi",
    "max_clock_vs_length",
    "max_clock_vs_t_valid",
]

