"""Checking and reporting a design evaluates each bus once and solves each distinct
waveform once: the report, the charts' data and the widgets read the results' workings
(pinlib.model.result.BusResult.workings) instead of running the engines again."""

from __future__ import annotations

from collections import Counter
from pathlib import Path

import pytest

from pinlib.core.protocols import protocol
from pinlib.engines import opendrain, pushpull, spi
from pinlib.engines.dispatch import check_design
from pinlib.engines.pushline import waves
from pinlib.engines.spi import evaluate as spi_evaluate
from pinlib.engines.spi import sweeps as spi_sweeps
from pinlib.model.design import load_design
from pinlib.present import plotdata
from pinlib.present.review import build_review

DEMO = Path(__file__).resolve().parents[1] / "workbooks" / "designs" / "demo-board.toml"


@pytest.fixture
def counts(monkeypatch):
    """Calls of each engine's bus-level work on a bus as designed, by bus id (a board
    at a tolerance corner is another bus object, evaluated on purpose), and of the
    waveform solver, by its exact inputs."""
    seen = {"bus": Counter(), "solve": Counter()}

    def by_bus(module, name):
        real = getattr(module, name)

        def counted(bus, design, *args, **kw):
            if any(bus is b for b in design.buses):
                seen["bus"][bus.id] += 1
            return real(bus, design, *args, **kw)

        monkeypatch.setattr(module, name, counted)

    by_bus(opendrain, "collect")
    # spi_analysis as the package exports it (a lazy import looks it up there) and as
    # the modules calling it look it up in their own
    by_bus(spi, "spi_analysis")
    by_bus(spi_evaluate, "spi_analysis")
    by_bus(spi_sweeps, "spi_analysis")
    by_bus(pushpull, "gpio_analyses")
    solve = waves._unit_edge

    def counted_solve(stretches, r_source, t_ramp, c_far, distributed):
        key = (tuple((s.z0, s.td, s.c) for s in stretches), r_source, t_ramp, c_far,
               bool(distributed))
        seen["solve"][key] += 1
        return solve(stretches, r_source, t_ramp, c_far, distributed)

    # simulate_edge looks the solver up in its own module
    monkeypatch.setattr(waves, "_unit_edge", counted_solve)
    return seen


def test_check_and_report_of_the_demo_evaluate_each_bus_once(counts):
    design = load_design(DEMO)
    result = check_design(design)
    review = build_review(design, result)
    assert review.charts  # the report drew its charts from the results
    assert set(counts["bus"]) == {b.id for b in design.buses}
    assert all(n == 1 for n in counts["bus"].values()), counts["bus"]
    assert counts["solve"] and max(counts["solve"].values()) == 1, counts["solve"]


def test_chart_data_from_a_result_runs_no_engine(counts):
    design = load_design(DEMO)
    result = check_design(design)
    counts["bus"].clear()
    counts["solve"].clear()
    for bus in design.buses:
        br = result.bus(bus.id)
        if protocol(bus.protocol).open_drain:
            plotdata.pullup_window_data(bus, design, signal="scl", analysis=br)
        else:
            sig = next(iter(plotdata.line_analyses(bus, design, br)))
            plotdata.edge_vs_load_data(bus, design, sig, analysis=br)
        if bus.protocol == "spi":
            plotdata.timing_budget_data(bus, design, analysis=br)
    assert not counts["bus"]


def test_chart_data_without_a_result_evaluates_the_bus_once(counts):
    design = load_design(DEMO)
    bus = next(b for b in design.buses if b.protocol == "spi")
    plotdata.timing_budget_data(bus, design)
    assert counts["bus"] == Counter({bus.id: 1})
