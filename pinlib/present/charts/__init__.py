"""Chart specifications (altair / Vega-Lite) of what the engines returned.

Presentation only: every number drawn here was computed by an engine and is passed in
as SI floats or numpy arrays (s, F, Ω, V).  This package picks a display scale for each
axis (pF, kΩ, ns...) and lays the figures out; it computes no engineering figure.

altair and vl_convert are imported inside the functions that need them, so that
importing this package (or :mod:`pinlib.engines.dispatch`, :mod:`pinlib.cli`) stays light.

Every chart carries a legend; every axis title names the quantity and its prefixed
unit, e.g. ``"Bus capacitance Cb (pF)"``, with the values scaled to that unit.

Modules: ``style`` (palette, roles, font, text measures), ``frame`` (checked inputs,
display scales, axes, legends, titles), ``render`` (:func:`spec`, :func:`to_svg`), and
one module per chart: ``pullup``, ``edges``, ``waves``, ``budget``, ``histogram``,
``crosstalk``.
"""

from __future__ import annotations

from pinlib.present.charts.budget import (  # noqa: F401
    timing_budget,
)
from pinlib.present.charts.crosstalk import (  # noqa: F401
    noise_vs_spacing,
)
from pinlib.present.charts.edges import (  # noqa: F401
    edge_vs_load,
)
from pinlib.present.charts.frame import (  # noqa: F401
    display_scale,
)
from pinlib.present.charts.histogram import (  # noqa: F401
    histogram,
)
from pinlib.present.charts.pullup import (  # noqa: F401
    pullup_window,
)
from pinlib.present.charts.render import (  # noqa: F401
    spec,
    to_svg,
)
from pinlib.present.charts.style import (  # noqa: F401
    _EM,
    BLUE,
    BLUISH_GREEN,
    BOUND_HIGH,
    BOUND_LOW,
    DARK_OLIVE,
    DASHES,
    FAIL,
    FONT,
    INDIGO,
    INK,
    LIMIT,
    OLIVE,
    OPERATING,
    ORANGE,
    PASS,
    REDDISH_PURPLE,
    REGION,
    SAND,
    SERIES,
    SERIES_COLOURS,
    SKY_BLUE,
    STATUS_COLOURS,
    THRESHOLD_BAND,
    UNDEFINED,
    VERMILLION,
    WARN,
    WINE,
    YELLOW,
    dash_pattern,
    series_colours,
    series_key,
    series_styles,
    text_width,
)
from pinlib.present.charts.waves import (  # noqa: F401
    waveforms,
)

__all__ = [
    "INK",
    "ORANGE",
    "SKY_BLUE",
    "BLUISH_GREEN",
    "YELLOW",
    "BLUE",
    "VERMILLION",
    "REDDISH_PURPLE",
    "PASS",
    "WARN",
    "FAIL",
    "REGION",
    "UNDEFINED",
    "LIMIT",
    "OPERATING",
    "SERIES",
    "STATUS_COLOURS",
    "display_scale",
    "pullup_window",
    "noise_vs_spacing",
    "edge_vs_load",
    "waveforms",
    "timing_budget",
    "histogram",
    "spec",
    "to_svg",
]
