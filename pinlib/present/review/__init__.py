"""Design-review reports: one self-contained HTML page, or Markdown with its charts.

A review holds, in this order: the caution (:data:`pinlib.model.result.CAUTION`); a summary
of every bus; per bus its notes, figures and checks (each check with its status as
text and colour, its value, limit, margin, message and the source of its limit) and
its charts; the Monte Carlo histograms when a run is given; every part used with the
provenance of each value (basis, source, the part file that set it: this part or one
it inherits from); and the change list against the design's saved snapshot.

Charts (:mod:`pinlib.present.charts`, rendered to SVG by vl-convert) draw the arrays of
:mod:`pinlib.present.plotdata`, which the engines compute:

* each open-drain line: the pull-up window (Rp against Cb, log axes, the allowed band
  shaded, the chosen point marked);
* each push-pull line, per driver: edge time against load with the datasheet points
  and the operating point, and the far-end waveforms with the VIL/VIH band, with and
  without the line's series resistor;
* each SPI bus: the timing budget as stacked bars;
* a Monte Carlo run: one histogram per check, with the limit and the pass fraction.

HTML: semantic elements, a small inline style sheet, the SVGs inline (their ids made
unique per chart), no script and no external resource.  Markdown: the same text;
each chart is an SVG file in a folder beside the ``.md`` linked as an image
(``chart_dir``) — the form that repository viewers (which drop ``data:`` images) and
editors show — or, with no ``chart_dir``, embedded as a ``data:image/svg+xml`` URI so
that the text stands alone.

A Monte Carlo run (:func:`pinlib.studies.whatif.monte_carlo`) adds a section: the run's size,
draws, seed and yields; a table of every sampled check whose margin varies over the
boards (or that warns or fails on some) with its pass fraction (a warning passes),
confidence interval, the boards on which it warns, lowest margin, the parameters it is
most sensitive to and its source; and histograms of the per-board margins (a board
passes when its margin is not negative) of the :data:`MC_CHARTS` checks with the
lowest pass fractions and margins.  Other sources of
samples may use a plain protocol instead: ``mc.checks`` (or ``mc`` itself) an iterable
of entries (objects or dicts) with ``id``, ``samples`` (the checked value on each board,
SI), ``limit``, ``unit``, and optionally ``path``, ``subject``, ``kind`` (``"max"``, the
default, or ``"min"``), ``pass_fraction``, ``ci`` (``(low, high)``), ``label`` and
``source``; ``mc.n`` and ``mc.seed`` are shown when present.  Such entries say nothing
of warnings: their cell of boards that warn is empty.

The package's modules, each importing only those before it: ``draw`` (a chart of the
review, built and cleaned for inline use), ``charts`` (the charts of each bus),
``montecarlo`` (the Monte Carlo table, summary and histograms), ``text`` (the words and
counts both pages share), ``parts`` (the parts section's values and facts), ``html``
(the HTML page), ``markdown`` (the Markdown page and its escaping) and ``build``
(:class:`Review`, :func:`build_review`, :func:`render_html`, :func:`render_markdown`).
"""

from __future__ import annotations

from pinlib.present.review.build import (  # noqa: F401
    Review,
    build_review,
    render_html,
    render_markdown,
)
from pinlib.present.review.draw import (  # noqa: F401
    ReviewChart,
    _clean_svg,
    _f,
    _Keys,
    _slug,
)
from pinlib.present.review.markdown import (  # noqa: F401
    _m,
    _mt,
)
from pinlib.present.review.montecarlo import (  # noqa: F401
    MC_CHARTS,
    _mc_charts,
)
from pinlib.present.review.text import (  # noqa: F401
    _no_snapshot_text,
)

__all__ = [
    "MC_CHARTS",
    "ReviewChart",
    "Review",
    "build_review",
    "render_html",
    "render_markdown",
]

