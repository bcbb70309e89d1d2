"""Edge waveforms of a push-pull driver into lumped and transmission-line loads.

Two circuit models and a set of waveform metrics:

* :func:`lumped_response` -- a linear source ramp behind a resistance into one
  capacitance (closed form, :func:`pinlib.physics.rc.ramp_rc_response`);
* :func:`distributed_response` -- the same source into a chain of lossless line
  sections with capacitive loads, solved by the method of characteristics
  (Bergeron) on a uniform time grid;
* :func:`tree_response` -- the same source at any node of a tree of lossless lines
  (a route: daisy chain, stubs, star) with a capacitance at every node, the waveform
  at every node (``distributed_response`` is its chain);
* :func:`edge_time`, :func:`threshold_delay`, :func:`overshoot`, :func:`undershoot`,
  :func:`recrossings` -- figures read off a sampled waveform.

Waveform arrays hold time on their last axis; any leading axes are a batch of cases
(for instance one row per candidate series resistor).  All quantities are SI.

Falling edges.  Every circuit here is linear and starts in its DC steady state, so
the falling edge of a circuit is ``vdd`` minus the rising edge of the same circuit
(same resistances, same loads).  ``edge="fall"`` returns exactly that; a driver
whose output resistance differs between the edges is modelled by passing the
falling-edge ``r_source`` in the call for the fall.

Modules: ``metrics`` (the figures read off a waveform), ``march`` (the method of
characteristics over a network of lines), ``tree`` (a tree of lines) and ``circuits``
(the lumped and chain models); this package re-exports their names.
"""

from __future__ import annotations

from pinlib.core.errors import InputError, ValidityWarning  # noqa: F401
from pinlib.physics.waveform.circuits import (  # noqa: F401
    Waveform,
    distributed_response,
    distributed_responses,
    lumped_response,
)
from pinlib.physics.waveform.march import (  # noqa: F401
    _DELAY_ROUNDING_WARN,
    _GRID_RTOL,
    _MAX_BLOCK,
    _MAX_BLOCK_ELEMENTS,
    _phi,
    _source_samples,
)
from pinlib.physics.waveform.metrics import (  # noqa: F401
    _SETTLED_RTOL,
    Recrossings,
    _edge_sign,
    _first_upward,
    _time_axis,
    edge_time,
    overshoot,
    recrossings,
    threshold_delay,
    undershoot,
)
from pinlib.physics.waveform.tree import (  # noqa: F401
    LUMP_FRACTION,
    STEPS_PER_EDGE,
    TreeWaveform,
    choose_step,
    is_short,
    lump_short,
    tree_response,
)

__all__ = [
    "Waveform",
    "Recrossings",
    "edge_time",
    "threshold_delay",
    "overshoot",
    "undershoot",
    "recrossings",
    "lumped_response",
    "distributed_response",
    "distributed_responses",
    "TreeWaveform",
    "tree_response",
    "choose_step",
    "STEPS_PER_EDGE",
    "is_short",
    "lump_short",
    "LUMP_FRACTION",
]
