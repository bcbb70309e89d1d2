"""Resistor pull-ups on open-drain lines: levels, currents, edges and what a bench gives.

Every function works elementwise on numpy arrays (pull-up Rp, bus capacitance Cb,
supply VDD, sink data) in SI units and knows nothing of parts or files; the open-drain
engine (:mod:`pinlib.engines.opendrain`) feeds them the worst-case corners of a design,
and sweeps feed them whole grids.

The circuit is the one of UM10204 §7: a pull-up resistor ``rp`` from the rail ``vdd``
to the bus line, the line's capacitance ``cb`` to ground, and an open-drain driver that
either lets go (the line rises through ``rp``) or sinks.  A driver's datasheet sink
point — at most ``v_ol`` while sinking ``i_ol`` — is used two ways:

* for static levels, as an on-resistance ``r_sink = v_ol / i_ol`` (the low level at the
  actual current then follows from the divider);
* for the fall time, as a guaranteed *current*: an output stage whose current rises
  with its voltage sinks at least ``i_ol`` whenever its pin is above ``v_ol``, so a
  constant ``i_ol`` bounds the fall time from above (a resistor of ``v_ol / i_ol`` would
  promise more current than that at higher voltages, which no datasheet guarantees).

Modules: ``levels`` (static levels and currents), ``edges`` (rise, fall, SCL frequency,
capacitance from a measured rise), ``sizing`` (margins and limits for choosing Rp),
``line_budget`` (the whole budget of one line) and ``inputs`` (the shared input checks); this
package re-exports their names.
"""

from __future__ import annotations

from pinlib.physics.pullup.edges import (  # noqa: F401
    _current_source_fall,
    _log1p_over,
    _resistive_fall,
    capacitance_from_rise,
    fall_time_bound,
    rise_time,
    rise_time_with_leakage,
    scl_frequency,
)
from pinlib.physics.pullup.inputs import (  # noqa: F401
    _arr,
    _non_negative,
    _out,
    _positive,
)
from pinlib.physics.pullup.levels import (  # noqa: F401
    held_low_level,
    high_level,
    loaded_level,
    low_level,
    parallel,
    sink_current,
    sink_resistance,
    static_power,
    translator_low_levels,
)
from pinlib.physics.pullup.line_budget import Budget, budget  # noqa: F401
from pinlib.physics.pullup.sizing import (  # noqa: F401
    cb_limit,
    current_source_needed,
    pullup_margins,
    sink_current_needed,
)
from pinlib.physics.rc import RISE_10_90, RISE_30_70  # noqa: F401

__all__ = [
    "parallel",
    "sink_resistance",
    "low_level",
    "sink_current",
    "high_level",
    "static_power",
    "rise_time",
    "rise_time_with_leakage",
    "fall_time_bound",
    "pullup_margins",
    "cb_limit",
    "sink_current_needed",
    "current_source_needed",
    "scl_frequency",
    "translator_low_levels",
    "capacitance_from_rise",
    "Budget",
    "budget",
]
