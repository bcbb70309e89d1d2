"""A push-pull bus's ``capacitance_tolerance`` varies its lines' board capacitance: the
traces (by geometry or by per-length values), the cables and the extra capacitance, as
the design format says, not the extra capacitance alone.

A transmission line's capacitance per length off nominal keeps its inductance per
length (a dielectric off nominal: the inductance of a non-magnetic line does not depend
on it), so its Z0 = sqrt(L/C) and its delay sqrt(L C) move with it; the corners, the
Monte Carlo parameters and the engine at one board agree.
"""

from __future__ import annotations

import math

import pytest

from pinlib.engines import ppcorners, ppworst
from pinlib.engines.memo import run_scope
from pinlib.engines.ppvariant import parameter_specs, vary_bus
from pinlib.engines.pushline import stretches_of
from pinlib.engines.pushpull import evaluate_board
from pinlib.model.design import load_design
from pinlib.studies.whatif.tolerances import parameters

# invented test data: an SPI bus whose lines are given by per-length values only
DESIGN = """
format = "pinlib.design/1"
title = "SPI bus with a board capacitance tolerance (invented)"

[board.geometry.ms]
kind = "microstrip"
width = "0.30 mm"
height = "0.20 mm"
thickness = "35 µm"
er = 4.3

[[bus]]
id = "spi1"
protocol = "spi"
spi_mode = 0
clock = "20 MHz"
supply = "3.3 V"
capacitance_tolerance = "20 %"
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller" },
  { ref = "U2", part = "nor-flash-spi" },
]
lines.sclk = { length = "10 cm", capacitance = "1.06 pF/cm" }
lines.copi = { length = "10 cm", capacitance = "1.06 pF/cm", delay = "58.4 ps/cm" }
lines.cipo = { length = "10 cm", geometry = "ms", extra_capacitance = "10 pF" }
"""


@pytest.fixture
def design(tmp_path):
    path = tmp_path / "board-c.toml"
    path.write_text(DESIGN, encoding="utf-8")
    return load_design(path)


def test_every_line_with_a_length_has_a_board_capacitance_parameter(design):
    bus = design.buses[0]
    names = [s[0] for s in parameter_specs(bus)]
    assert names == ["spi1 sclk board capacitance", "spi1 copi board capacitance",
                     "spi1 cipo board capacitance"]
    # the Monte Carlo draws the same parameters
    assert [p.name for p in parameters(design)] == names


def test_a_varied_line_keeps_its_inductance_per_length(design):
    bus = design.buses[0]
    k = 1.2
    nominal = {sig: stretches_of(ln.sections)[0] for sig, ln in bus.lines.items()}
    varied = vary_bus(bus, lambda key: k if key[0] == "line-board" else None)
    got = {sig: stretches_of(ln.sections)[0] for sig, ln in varied.lines.items()}
    # lumped (no delay): the capacitance alone, 10 cm at 1.06 pF/cm by 1.2
    assert got["sclk"].c == pytest.approx(10 * 1.06e-12 * k)  # invented test data
    assert got["sclk"].td == 0.0
    # per-length C and delay: L = tpd^2 / C held (lossless line, Z0 = sqrt(L/C),
    # tpd = sqrt(L C): from memory, the telegrapher's equations of a lossless line)
    c1, tpd = 1.06e-10, 58.4e-10            # per metre: 1.06 pF/cm, 58.4 ps/cm
    inductance = tpd ** 2 / c1              # 3.218 µH/m
    assert got["copi"].c == pytest.approx(c1 * k * 0.1)
    assert got["copi"].z0 == pytest.approx(math.sqrt(inductance / (c1 * k)))   # 50.3 Ω
    assert got["copi"].td == pytest.approx(math.sqrt(inductance * c1 * k) * 0.1)
    # a geometry: the same relation to its nominal model
    n, g = nominal["cipo"], got["cipo"]
    assert g.c == pytest.approx(n.c * k)
    assert g.z0 == pytest.approx(n.z0 / math.sqrt(k))
    assert g.td == pytest.approx(n.td * math.sqrt(k))
    # the extra capacitance with it
    assert varied.lines["cipo"].extra_capacitance == pytest.approx(10e-12 * k)


def test_the_engine_sees_the_varied_trace(design):
    bus = design.buses[0]
    with run_scope():
        nom = evaluate_board(bus, design)
        up = evaluate_board(vary_bus(bus, lambda key: 1.2 if key[0] == "line-board"
                                     else None), design)
    load = {ln.signal: ln.figures["load_capacitance"].value for ln in nom.lines}
    load_up = {ln.signal: ln.figures["load_capacitance"].value for ln in up.lines}
    # 10 cm at 1.06 pF/cm, 20 % more: 2.12 pF (invented test data)
    assert load_up["sclk"] - load["sclk"] == pytest.approx(2.12e-12, rel=1e-6)


def test_corners_over_arrays_equal_the_engine_board_by_board(design):
    bus = design.buses[0]
    with run_scope():
        nominal = evaluate_board(bus, design)
        rows = ppcorners.corner_rows(bus, design, nominal)
        assert rows is not None
        fast = ppworst.at_worst_corners(bus, design, nominal, evaluate_board, rows).to_json()
    with run_scope():
        nominal = evaluate_board(bus, design)
        slow = ppworst.at_worst_corners(bus, design, nominal, evaluate_board).to_json()
    assert fast == slow
    corners = [c["details"].get("corner", "") for ln in fast["lines"] for c in ln["checks"]]
    assert any("sclk board capacitance" in c for c in corners)


def test_the_edge_rule_figure_and_note_are_the_worst_corners(design):
    # the figure was the nominal board's (38.6 MHz here) while the edge-time check at
    # the +20 % corner allowed less; now both give the slowest edge over the corners
    from pinlib.core.quantity import format_si
    from pinlib.engines.pushpull import evaluate_bus

    bus = design.buses[0]
    res = evaluate_bus(bus, design)
    nominal = evaluate_board(bus, design).figures["max_clock_edge_rule"].value
    slowest = max(c.value for ln in res.lines for c in ln.checks if c.id == "edge-time")
    f_edge = res.figures["max_clock_edge_rule"].value
    # 10 % of the period: the rule the edge-time check and the figure share
    assert f_edge == pytest.approx(0.1 / slowest, rel=1e-12)
    assert f_edge < nominal
    note = next(n for n in res.notes if n.startswith("highest clock by the edge rule"))
    assert note.startswith(f"highest clock by the edge rule of thumb "
                           f"{format_si(f_edge, 'Hz')} at the worst corner of the tolerances "
                           f"({format_si(nominal, 'Hz')} as designed, set by ")
