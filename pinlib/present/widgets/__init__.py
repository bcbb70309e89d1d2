"""Workbench widgets for Jupyter: build a bus, explore a line, budget SPI timing, record
part values, rerun a design after a substitution.

Each class holds ipywidgets 8 controls and what it last computed.  ``.widget`` is the
container to display; ``set(...)`` and a few named methods change the controls the way
a user would (values in SI units), so the code path a knob takes is the one the unit
tests drive, without a browser.

Every figure comes from the engines.  A widget writes the design its controls describe
(``pinlib.design/1`` text, built with tomlkit), loads it with
:func:`pinlib.model.design.design_from_text` and evaluates it with
:mod:`pinlib.engines.dispatch`; the arrays each chart draws come from
:mod:`pinlib.present.plotdata` and the chart specifications from :mod:`pinlib.present.charts`.
Nothing here computes an engineering figure; it formats.

Charts
------
A chart is an ``ipywidgets.HTML`` whose value is the chart as inline SVG, rendered by
vl-convert (:func:`pinlib.present.charts.to_svg`).  A redraw replaces that value in one message,
so the old chart stays on screen until the new one is there (no flicker, as there is when
an ``Output`` is cleared and redrawn), and a chart whose specification did not change is
not redrawn at all.  This is preferred over ``altair.JupyterChart`` because it needs no
JavaScript beyond ipywidgets itself: it works offline, in any front end that shows
ipywidgets (JupyterLab, Notebook 7, VS Code) with or without the anywidget extension,
and in headless runs (nbclient, nbval), where the SVG is a string the tests can read.
The price: no tooltips or zoom, and about 60 ms of rendering per chart.

Exported pages
--------------
In an exported HTML page, widgets come alive only through the ipywidgets JavaScript,
which such a page loads from a CDN.  For a page that must read offline, every class has
:meth:`static_view`: the same charts and tables as plain HTML with the SVG inline.

Modules
-------
``common`` (layouts, quantity fields, option lists, the chart view, the panel base class),
``markup`` (badges, notes, tables of figures and checks), ``designdoc`` (design text and
trace controls), and one module per workbench: ``busbuilder`` (01), ``lineexplorer`` (02),
``spibudget`` (03), ``recorder`` and ``ibisimporter`` (04), ``swaps`` (05), ``crosstalk``
(06).  Labels of
figures and checks come from :mod:`pinlib.core.labels`.

This package imports ipywidgets, and altair through :mod:`pinlib.present.charts`; the command line
and :mod:`pinlib.engines.dispatch` never import it.
"""

from pinlib.core.extras import need

# without the notebook extra, say which one to install (not a bare ModuleNotFoundError);
# the imports below come after this check on purpose
need("ipywidgets", extra="notebook", feature="the workbook widgets")

from pinlib.present.widgets.busbuilder import BenchReading, BusBuilder  # noqa: E402
from pinlib.present.widgets.common import ChartView, StaticView, find_file  # noqa: E402
from pinlib.present.widgets.crosstalk import CrosstalkExplorer  # noqa: E402
from pinlib.present.widgets.ibisimporter import IbisImporter  # noqa: E402
from pinlib.present.widgets.lineexplorer import LineExplorer  # noqa: E402
from pinlib.present.widgets.markup import checks_table, figures_table  # noqa: E402
from pinlib.present.widgets.recorder import PartRecorder  # noqa: E402
from pinlib.present.widgets.spibudget import ClockLimit, SpiBudget  # noqa: E402
from pinlib.present.widgets.swaps import SwapExplorer  # noqa: E402

__all__ = [
    "ChartView",
    "StaticView",
    "BenchReading",
    "ClockLimit",
    "BusBuilder",
    "LineExplorer",
    "SpiBudget",
    "PartRecorder",
    "IbisImporter",
    "SwapExplorer",
    "CrosstalkExplorer",
    "find_file",
    "figures_table",
    "checks_table",
]
