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

Modules: ``common`` (the engine's workings of a bus, display constants), ``window``
(the pull-up window), ``lines`` (edge against load, waveforms), ``budget`` (the SPI
timing budget), ``coupling`` (a coupling's noise against spacing, its waveforms).
"""

from __future__ import annotations

from pinlib.present.plotdata.budget import (  # noqa: F401
    BUDGET_COMPONENTS,
    TimingBudgetData,
    timing_budget_data,
)
from pinlib.present.plotdata.common import (  # noqa: F401
    line_analyses,
    workings,
)
from pinlib.present.plotdata.coupling import (  # noqa: F401
    NoiseSweep,
    NoiseWaves,
    noise_vs_spacing_data,
    noise_waveform_data,
)
from pinlib.present.plotdata.lines import (  # noqa: F401
    EdgeLoadData,
    WaveformData,
    _curve_name,
    edge_vs_load_data,
    waveform_data,
)
from pinlib.present.plotdata.window import (  # noqa: F401
    PullupWindowData,
    pullup_window_data,
)

__all__ = [
    "PullupWindowData",
    "EdgeLoadData",
    "WaveformData",
    "TimingBudgetData",
    "BUDGET_COMPONENTS",
    "line_analyses",
    "workings",
    "pullup_window_data",
    "edge_vs_load_data",
    "waveform_data",
    "timing_budget_data",
    "NoiseSweep",
    "NoiseWaves",
    "noise_vs_spacing_data",
    "noise_waveform_data",
]

