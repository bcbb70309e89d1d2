"""The rules of thumb and limits a push-pull line's checks name, and the time grid of the
waveform solver."""

from __future__ import annotations

from pinlib.core.protocols import protocol

#: A line is electrically long when its one-way delay exceeds this fraction of the
#: driver's 10-90 % edge.
LONG_LINE_FRACTION = 1.0 / 6.0
LONG_LINE_SOURCE = "Johnson & Graham, High-Speed Digital Design, 1993; common practice"
LONG_LINE_RULE = ("electrically long when the one-way delay exceeds 1/6 of the 10-90 % edge "
                  f"({LONG_LINE_SOURCE})")

#: A short line is lumped only when ``L / (R^2 C)`` is at most this (see LUMPED_RULE).
LUMPED_INDUCTANCE_LIMIT = 0.01
LUMPED_RULE = (
    "one lumped capacitance only when the line is short and its inductance is negligible: "
    "L / (R^2 C) <= 0.01, L = sum(Z0 td), R the source resistance, C the whole load "
    "(derived from the dominant pole of a series RLC, s = -(1 + L/(R^2 C) + ...)/(RC): "
    "the RC edge is then within about 1 %)")

#: The rise of an open-drain line (a step through the pull-up) is lumped only when
#: ``L / (R^2 C)`` is at most this, R the pull-up.  The limit above comes from a series
#: RLC, where the source resistance damps the line's inductance; on this rise the net's
#: capacitance is spread (the sink's own pin at the pull-up's point, inputs along a
#: route), and the inductance between those capacitances rings, excited by the pull-up's
#: step of current and damped only by it, at about sqrt(L/C)/R of the swing, which moves
#: the 10 and 90 % crossings at first order.  Against ngspice (tests/test_gpio_spice.py,
#: a 673 Ω pull-up, an input on a 1 cm stub beyond another) the lumped rise erred 4.3 %
#: at L/(R^2 C) = 1.5e-3 and 0.4 % at 3e-4; 1e-4 holds the ringing to 1 % of the swing.
PULLUP_RISE_INDUCTANCE_LIMIT = 1e-4
PULLUP_RISE_RULE = (
    "one lumped capacitance only when L / (R^2 C) <= 1e-4, R the pull-up: the line's "
    "inductance rings between the pins' capacitances at about sqrt(L/C)/R of the swing "
    "(derived from an LC tank excited by the pull-up's step, checked against ngspice)")

#: A push-pull line whose pins sit at more than one point of its route is lumped only
#: when ``L / (R^2 C)`` is at most this, R the driver's source resistance: the same
#: limit for the same reason as the open-drain rise above.  The series RLC behind
#: LUMPED_INDUCTANCE_LIMIT holds the line's capacitance at its far end with the pins;
#: with pins along a route the inductance between their capacitances rings, damped only
#: by the driver.  Against ngspice (tests/test_route_spice.py, weak 500 and 600 Ω
#: drivers, 1 pF/cm and 60 ps/cm, two or three inputs on stubs or a daisy chain) the
#: lumped edge erred 4.45 % at L/(R^2 C) = 7.9e-3 and 1.31 % at 5e-3; a random sweep of
#: 200-800 Ω drivers erred up to 6 % (0.94 % at 1.5e-3), and within 0.6 % with one input.
#: An open-drain sink's fall is held to it on every line form (its own pin at its
#: point, the inputs elsewhere: one input 6 cm away, lumped, was 2.56 % slow), R the
#: sink against the pull-ups in parallel: against ngspice, weak sinks (100-400 Ω) on
#: stubs or a daisy chain lumped at 0.01 erred over 1 % at an input in 10 of 15 random
#: routes, up to 3.9 % (L/(R^2 C) = 9.9e-3), and within 0.1 % solved as a line
#: (tests/test_gpio_spice.py).
SPREAD_INDUCTANCE_LIMIT = PULLUP_RISE_INDUCTANCE_LIMIT
SPREAD_RULE = (
    "one lumped capacitance only when L / (R^2 C) <= 1e-4, R the source resistance "
    "(an open-drain sink's with the pull-ups in parallel, on its fall): "
    "the line's inductance rings between the pins' capacitances at about sqrt(L/C)/R "
    "of the swing (derived from an LC tank between the pins, checked against ngspice)")

#: The 10-90 % edge at the far end must stay under this fraction of the clock period.
EDGE_FRACTION = 0.10
EDGE_RULE = ("10-90 % edge within 10 % of the clock period (rule of thumb, common "
             "practice; e.g. Morrison, Digital Circuit Boards: Mach 1 GHz, Wiley 2012, "
             "§1.14)")

LINE_DELAY_RULE = (
    "one-way line delay within one clock period: beyond it the line holds more than one "
    "bit in flight, and a board-level bus model (lossless lines, lines of one bus matched "
    "in delay) no longer describes it (common practice, no source)")

#: Resistivity of annealed copper at 20 °C (IEC 60028, the International Annealed Copper
#: Standard). [Ω m]
RHO_COPPER = 1.7241e-8
#: The line is solved lossless; a note says so where its traces' copper resistance
#: (DC: the least it has, the skin effect adds more on an edge) reaches this fraction of
#: the lowest Z0 of its sections (common practice, no source) ...
LOSS_FRACTION = 0.10
#: ... or, for sections that carry no resistance (per-length values, cable classes),
#: where their one-way delay reaches this (about 2 m of cable; common practice, no
#: source). [s]
LOSS_DELAY = 10e-9

#: Largest undershoot below ground allowed when a pin's abs_max leaves more room. [V]
UNDERSHOOT_DEFAULT = 0.5
UNDERSHOOT_RULE = (
    "input low limit GND - min(abs_max - VDD, 0.5 V): the part format records the high "
    "limit only, and CMOS inputs are commonly rated to -0.5 V (common practice, no source)")

TERMINATION_RULE = ("series source termination Rs = Z0 - r_out, nearest E24 value by ratio "
                    "(common practice; IEC 60063 E24)")

_RINGING_SOURCE = ("an input that re-crosses its threshold after the first crossing may "
                   "switch twice (common practice, no source)")
#: The limit of ringing on a clock line: the receiver's own thresholds (``{v_il}``,
#: ``{v_ih}``: their sources), which assure its level only outside the band between them.
CLOCK_RINGING_SOURCE = ("{v_il}; {v_ih}: the input's level is assured only outside the "
                        "band between them, so a clock that re-enters it after crossing "
                        "may switch twice")

#: Pin function of each SPI signal.
SIGNAL_FUNCTION = dict(protocol("spi").signals)

# Time grid of the waveform solvers: pinlib.physics.waveform.choose_step's step, made
# coarser only where a record would need more steps than this (and the shortest
# section delay allows it).
# The routed solver's grid (routes.py): steps per driver time constant, and at least
# this many steps over the record.
_STEPS_PER_TAU = 50
_MIN_STEPS = 4000
_MAX_STEPS = 400_000
#: Hard limit on the steps of one waveform record.  The step must divide the shortest
#: section delay, so a line whose shortest delay is tiny against the record (a long cable
#: beside a stub of a trace) would need more than ``_MAX_STEPS``; past this many the
#: engine refuses the line (an InputError naming it) rather than allocate the grid.
MAX_TIME_STEPS = 1_000_000
_SETTLE_TAUS = 12.0        # record length: ramp + this many RC time constants ...
_SETTLE_DELAYS = 60.0      # ... + this many one-way delays of the whole chain
_SETTLED = 0.01            # the record must end within this fraction of the swing
_MAX_EXTENSIONS = 4        # times the record is lengthened to settle
# A chain's first record (waves.edge_grid): the first samples of the record above, long
# enough for a line driven through about its impedance to come to rest: the ramp, a
# round trip for each time the worst reflection coefficient (source, junctions)
# multiplies what is left until it is below _AT_REST, _REST_TAUS time constants of the
# far end's capacitance against the last section, and _REST_DELAYS delays.  It is kept
# when those last delays stay within _AT_REST of the final level, far below the 1e-12
# of the level that the overshoot and undershoot read as rounding, so every figure read
# off it is the longer record's; else the longer record is solved.  Lines with a worse
# reflection than _FIRST_REFLECTION ring for longer: no first record.
_FIRST_REFLECTION = 0.2
_REST_TAUS = 33.0          # e^-33 < _AT_REST
_REST_DELAYS = 4.0         # two round trips of the whole chain
_AT_REST = 1e-14           # of the swing
_REF_LEVEL = 0.5           # datasheet timing reference level, fraction of the swing
# Figures of every line, in their order in the result.
_FIGURE_UNITS = (("load_capacitance", "F"), ("trace_delay", "s"), ("z0", "Ω"),
                 ("edge_rise_time", "s"), ("edge_fall_time", "s"), ("series_resistor", "Ω"),
                 ("overshoot", "V"), ("undershoot", "V"), ("transmission_line", ""),
                 ("model", ""), ("delay_to_edge_ratio", ""))
# The checks whose failure makes "auto" fit a series resistor.
_TERMINATION_CURES = ("overshoot", "undershoot", "ringing")
