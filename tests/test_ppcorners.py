"""The corners of an SPI bus's tolerances as arrays (pinlib.engines.ppcorners) against the
engine board by board: every ranked margin, every check the result takes, every bus
figure, and the worst-case result itself, to the last bit.

The designs are the invented ones of tests/data and the demo, given tolerances here
(supply, length, board capacitance, device pin capacitance, a device on its own rail)
so that the exhaustive search (up to six parameters) and the screened one (more) both
run, with boards where a receiver never switches (spi-cipo-never-high) and checks whose
worst corners differ.
"""

from __future__ import annotations

import itertools
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest

from pinlib.engines import ppcorners, ppworst
from pinlib.engines.memo import run_scope
from pinlib.engines.ppvariant import (
    check_names,
    chosen_resistors,
    flat_checks,
    parameter_specs,
    vary_bus,
)
from pinlib.engines.pushpull import evaluate_board
from pinlib.model.design import load_design
from pinlib.model.result import check_true

ROOT = Path(__file__).parent.parent
DATA = ROOT / "tests" / "data"


def _variants(bus):
    """The bus with tolerances: (name, bus)."""
    yield "supply-length", replace(bus, supply_tolerance=0.05, length_tolerance=0.1)
    lines = {s: replace(ln, extra_capacitance=5e-12) for s, ln in bus.lines.items()}
    yield "with-extra-c", replace(bus, supply_tolerance=0.05, length_tolerance=0.15,
                                  capacitance_tolerance=0.2, lines=lines)
    devs = tuple(replace(d, capacitance_tolerance=0.1) for d in bus.devices)
    yield "pins", replace(bus, supply_tolerance=0.1, length_tolerance=0.2, devices=devs)
    own = tuple(d if d.is_controller else replace(d, supply=3.0) for d in bus.devices)
    yield "own-rail", replace(bus, supply_tolerance=0.08, length_tolerance=0.05, devices=own)


CASES = [("spi-length-tolerance.toml", "link"), ("spi-cipo-never-high.toml", "flash"),
         ("spi-5v-flash.toml", "flash"), ("long-spi-link.toml", "link"),
         ("spi-fast-corner.toml", "link")]   # a controller with a fast corner (hold)


def _bus(name, bus_id):
    path = ROOT / "workbooks" / "designs" / name if name == "demo-board.toml" else DATA / name
    d = load_design(path)
    return d, next(b for b in d.buses if b.id == bus_id)


@pytest.mark.parametrize(("name", "bus_id"), CASES + [("demo-board.toml", "flash"),
                                                      ("demo-board.toml", "display")])
def test_worst_case_result_equals_board_by_board(name, bus_id):
    d, bus = _bus(name, bus_id)
    for label, v in _variants(bus):
        with run_scope():
            nominal = evaluate_board(v, d)
            rows = ppcorners.corner_rows(v, d, nominal)
            assert rows is not None, label
            fast = ppworst.at_worst_corners(v, d, nominal, evaluate_board, rows).to_json()
        with run_scope():
            nominal = evaluate_board(v, d)
            slow = ppworst.at_worst_corners(v, d, nominal, evaluate_board).to_json()
        assert fast == slow, label   # derived from the engine itself, board by board


@pytest.mark.parametrize(("name", "bus_id"), CASES)
def test_every_board_every_check(name, bus_id):
    d, bus = _bus(name, bus_id)
    v = dict(_variants(bus))["with-extra-c"]
    specs = parameter_specs(v)
    k = len(specs)
    u = np.array(list(itertools.product((-1.0, 1.0), repeat=k)))
    u = np.vstack([u, np.eye(k)])  # and each parameter alone (the screened search's)
    with run_scope():
        nominal = evaluate_board(v, d)
        got = ppcorners.corner_rows(v, d, nominal)(u)
        chosen = chosen_resistors(nominal)
        index = {nm["name"]: j for j, nm in enumerate(check_names(v, nominal))}
        worst_rows = set(np.argmin(np.where(np.isnan(got.rank), -np.inf, got.rank), axis=0))
        for i, row in enumerate(u):
            f = {s[-1]: 1.0 + s[3] * x for s, x in zip(specs, row, strict=True)}
            res = evaluate_board(vary_bus(v, f.get, chosen), d)
            seen = set()
            for nm, (_, c) in zip(check_names(v, res), flat_checks(res), strict=True):
                j = index.get(nm["name"])
                if j is None:
                    continue
                seen.add(j)
                # derived from the engine at the same board
                assert got.rank[i, j] == ppworst.rank_margin(c), (i, nm["name"])
                assert got.check(i, j).to_json() == c.to_json(), (i, nm["name"])
            assert set(np.flatnonzero(got.present[i])) == seen
            for fig, vals in got.figures.items():
                want = res.figures[fig].value
                assert (np.isnan(vals[i]) if want is None else vals[i] == want), fig
    # the checks' worst boards are not all one: the arrays pick each its own
    assert len(worst_rows) > 1


def test_buses_it_does_not_serve_stay_with_the_engine():
    d = load_design(DATA / "spi-5v-flash.toml")
    irq = next(b for b in d.buses if b.protocol == "gpio")
    assert ppcorners.corner_rows(irq, d, evaluate_board(irq, d)) is None
    # an SPI result with a bus check that is not the budget's, f_max or a supply range
    flash = replace(next(b for b in d.buses if b.protocol == "spi"), supply_tolerance=0.05)
    nominal = evaluate_board(flash, d)
    assert ppcorners.corner_rows(flash, d, nominal) is not None
    nominal.add(check_true("made-up", True, "common practice, no source", "a made-up check"))
    assert ppcorners.corner_rows(flash, d, nominal) is None


def test_the_search_note_counts_one_parameter_in_the_singular():
    # English: "1 parameter", "3 parameters" (the --corners note read "of 1 parameters")
    assert ppworst.method_text(1) == "all 2 corners of 1 parameter"
    assert ppworst.method_text(3) == "all 8 corners of 3 parameters"
