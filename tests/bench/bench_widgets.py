"""Widget recompute + redraw of one bus, against the engine alone on the same design.

Each widget is driven through ``set()`` between two values of one control, so every
run rebuilds the design, evaluates it, rebuilds the chart and renders its SVG (an
unchanged chart would not be rendered again).  The baseline is
:func:`pinlib.engines.dispatch.check_design` of the design the widget has just built, in the same
process: what the widget adds on top of the engine is charts, tables and HTML.
"""

from __future__ import annotations

import warnings
from pathlib import Path

from tests.bench.common import Result, median_time

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
        ("BusBuilder", builder, "length", (0.14, 0.16)),
        ("LineExplorer", line, "length", (0.28, 0.30)),
        ("SpiBudget", budget, "clock", (10e6, 12e6)),
    ]


def run(repeats: int = 7, quick: bool = False) -> list[Result]:
    from pinlib.engines.dispatch import check_design

    out = []
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # ValidityWarning/FitWarning are not timed here
        for name, widget, control, values in _cases():
            state = {"i": 0}

            def redraw(widget=widget, control=control, values=values, state=state):
                state["i"] += 1
                widget.set(**{control: values[state["i"] % 2]})

            t_widget = median_time(redraw, repeats)
            if widget.error is not None:
                raise RuntimeError(f"{name} did not evaluate: {widget.error}")
            design = widget.design
            t_engine = median_time(lambda design=design: check_design(design), repeats)
            out.append(Result(
                f"widget redraw: {name}", t_widget, "engine only", t_engine,
                t_widget / t_engine, "of the engine's time",
                target=f"< {TARGET * 1e3:g} ms", passed=t_widget < TARGET,
                extra=[f"{control} toggled"]))
    return out
