"""Widget recompute + redraw of one bus: the time against the 150 ms target.

Each widget is driven through ``set()`` between two values of one control, so every
run rebuilds the design, evaluates it, rebuilds the chart and renders its SVG (an
unchanged chart would not be rendered again).

No baseline: nothing else does a widget's work (its old form cannot run), so the line
prints the redraw's time and its target.  Beside it, for information, the engine call
the widget itself makes on the design it has just built, timed alone (BusBuilder and
LineExplorer: :func:`pinlib.engines.dispatch.check_design` of their one-bus design;
SpiBudget: :func:`pinlib.engines.dispatch.evaluate_bus` of its chosen bus, not the whole
design, which it never checks): the rest of the redraw is the design's rebuild, the
charts, tables and HTML.
"""

from __future__ import annotations

import warnings
from pathlib import Path

from tests.bench.common import Result, format_seconds, median_time

__all__ = ["run"]

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "workbooks" / "designs" / "demo-board.toml"
TARGET = 0.150  # s, one recompute + redraw


def _cases():
    from pinlib.library import load_library
    from pinlib.present.widgets import BusBuilder, LineExplorer, SpiBudget

    library = load_library(env=False)
    builder = BusBuilder(library, peripherals=["eeprom-i2c", "rtc-i2c"], length=0.14)
    line = LineExplorer(library, driver=("mcu-3v3", "sclk"),
                        receivers=[("display-controller-spi", "sclk")], length=0.28)
    budget = SpiBudget(DEMO, bus="display")
    return [
        ("BusBuilder", builder, "length", (0.14, 0.16), _whole),
        ("LineExplorer", line, "length", (0.28, 0.30), _whole),
        ("SpiBudget", budget, "clock", (10e6, 12e6), _chosen_bus),
    ]


def _whole(widget):
    """BusBuilder's and LineExplorer's engine call: their one-bus design checked."""
    from pinlib.engines.dispatch import check_design

    design = widget.design
    return "check_design", lambda: check_design(design)


def _chosen_bus(widget):
    """SpiBudget's engine call: the chosen bus alone (the design holds others)."""
    from pinlib.engines.dispatch import evaluate_bus

    design = widget.design
    bus = design.bus(widget.bus.value)
    return f"evaluate_bus of bus {bus.id}", lambda: evaluate_bus(bus, design)


def run(repeats: int = 7, quick: bool = False) -> list[Result]:
    out = []
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # ValidityWarning/FitWarning are not timed here
        for name, widget, control, values, engine_call in _cases():
            state = {"i": 0}

            def redraw(widget=widget, control=control, values=values, state=state):
                state["i"] += 1
                widget.set(**{control: values[state["i"] % 2]})

            t_widget = median_time(redraw, repeats)
            if widget.error is not None:
                raise RuntimeError(f"{name} did not evaluate: {widget.error}")
            what, call = engine_call(widget)
            t_engine = median_time(call, repeats)
            out.append(Result(
                f"widget redraw: {name}", t_widget,
                no_baseline="nothing else does the widget's work",
                target=f"time < {TARGET * 1e3:g} ms", passed=t_widget < TARGET,
                extra=[f"{control} toggled",
                       f"of it the widget's engine call ({what}) "
                       f"{format_seconds(t_engine)} alone"]))
    return out
