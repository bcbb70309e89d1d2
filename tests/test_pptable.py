"""Tables of the push-pull engine over a tolerance box (pinlib.engines.pptable).

The reference here is the push-pull engine itself: a table only stands in for it, so
every board the table evaluates is compared with the engine's own evaluation of the
same board.  The test design (tests/data/long-spi-link.toml, an invented scenario) has
a CIPO setup margin close to zero, so that the drawn boards fall on both sides of the
limit.
"""

from __future__ import annotations

import math
import re
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest
from hypothesis import example, given
from hypothesis import strategies as st

from pinlib.engines import ppbatch as ppb
from pinlib.engines import pptable, tablegrid
from pinlib.engines.opendrain.rules import at_limit
from pinlib.engines.pushpull import evaluate_bus
from pinlib.model.design import load_design
from pinlib.model.result import (
    STATUS_CODES,
    _status,
    check_max,
    check_min,
    max_margin,
    min_margin,
    status_codes,
)

DATA = Path(__file__).parent / "data"
DEMO = Path(__file__).resolve().parents[1] / "workbooks" / "designs" / "demo-board.toml"

pytestmark = pytest.mark.filterwarnings("ignore::pinlib.physics.driver.FitWarning",
                                        "ignore::pinlib.physics.lines.ValidityWarning")


@pytest.fixture(scope="module")
def link():
    design = load_design(DATA / "long-spi-link.toml")
    return design, design.buses[0]



def _route_with(folder, tolerances: str):
    """tests/data/spi-route.toml with ``tolerances`` (TOML lines) after its supply,
    written into ``folder``; the design and its one bus."""
    text = (DATA / "spi-route.toml").read_text(encoding="utf-8").replace(
        'supply = "3.3 V"\n', 'supply = "3.3 V"\n' + tolerances, 1)
    path = folder / "route-tol.toml"
    path.write_text(text, encoding="utf-8")
    design = load_design(path)
    return design, design.buses[0]

def _factors(bus, n, seed):
    rng = np.random.default_rng(seed)
    return {spec[-1]: 1.0 + spec[3] * rng.uniform(-1.0, 1.0, n)
            for spec in ppb.parameter_specs(bus)}


def _both_ways(bus, design, n, seed):
    """``n`` boards of the bus built from its table and by the engine: (by table, by
    engine, the table, the nominal result)."""
    factors = _factors(bus, n, seed=seed)
    nominal = evaluate_bus(bus, design)
    tables: dict = {}
    by_table = ppb.build(bus, design, factors, n, nominal=nominal, tables=tables)
    by_engine = ppb.build(bus, design, factors, n, nominal=nominal)
    return by_table, by_engine, tables[bus.id], nominal


@pytest.fixture(scope="module")
def both(link):
    design, bus = link
    n = 60
    by_table, by_engine, table, _ = _both_ways(bus, design, n, seed=7)
    return by_table, by_engine, table, n


def test_the_table_is_built_and_says_how_well_it_agrees(both, link):
    by_table, by_engine, table, n = both
    assert isinstance(table, pptable.LineTable)
    assert table.max_error <= pptable.MARGIN_TOL
    assert any("interpolated from" in note for note in by_table.notes)
    assert not by_engine.notes
    assert by_engine.engine_boards == n and by_table.engine_boards < n
    # a length axis and one rail: NODES of each, and the verification boards
    kinds = sorted(ax.kind for ax in table.axes)
    assert kinds == ["length", "supply"]
    assert table.evaluations == (pptable.NODES["length"] * pptable.NODES["supply"]
                                 + pptable.VERIFY)


def test_every_board_passes_or_fails_as_the_engine_says(both):
    by_table, by_engine, table, n = both
    cipo = [i for i, nm in enumerate(by_engine.names) if nm["name"].startswith("link cipo-setup")]
    assert cipo
    fails = by_engine.items[cipo[0]].status == STATUS_CODES["fail"]
    assert 0 < fails.sum() < n  # the draw straddles the limit, so the test can fail
    for a, b in zip(by_table.items, by_engine.items, strict=True):
        assert a.id == b.id
        np.testing.assert_array_equal(a.status == 2, b.status == 2)
        if b.margin is not None:
            ok = np.isfinite(b.margin)
            np.testing.assert_allclose(a.margin[ok], b.margin[ok], rtol=0,
                                       atol=pptable.MARGIN_TOL)
            np.testing.assert_array_equal(np.isfinite(a.margin), ok)


def test_a_table_that_disagrees_with_the_engine_is_refused(link, monkeypatch):
    design, bus = link
    monkeypatch.setattr(pptable, "MARGIN_TOL", 0.0)
    axes = pptable.axes_of(ppb.parameter_specs(bus), 1.0, 1e-6)
    chosen = ppb.chosen_resistors(evaluate_bus(bus, design))
    got = pptable.tabulate(bus, design, axes, chosen)
    assert isinstance(got, pptable.Refusal) and "interpolated margin" in got.reason


def test_a_refused_table_leaves_every_board_to_the_engine(link):
    design, bus = link
    n = 50
    factors = _factors(bus, n, seed=3)
    tables = {bus.id: pptable.Refusal("refused for this test")}
    got = ppb.build(bus, design, factors, n, tables=tables)
    assert got.engine_boards == n
    assert any("refused for this test" in note for note in got.notes)


def test_a_small_batch_goes_to_the_engine_without_a_table(link):
    design, bus = link
    tables: dict = {}
    got = ppb.build(bus, design, _factors(bus, 4, seed=1), 4, tables=tables)
    assert got.engine_boards == 4 and bus.id not in tables


def test_axes_group_line_factors_and_keep_rails_apart():
    specs = [("a", "supply", 3.3, 0.05, "V", ("rail", 3.3, 0.05)),
             ("b", "supply", 1.8, 0.05, "V", ("rail", 1.8, 0.05)),
             ("c", "length", 0.1, 0.1, "m", ("line-length", "x", "sclk")),
             ("d", "length", 0.1, 0.1, "m", ("line-length", "x", "copi")),
             ("e", "capacitance", 1.0, 0.2, "", ("line-board", "x", "copi"))]
    axes = pptable.axes_of(specs, 4.0 / 3.0, 1e-6)
    kinds = [ax.kind for ax in axes]
    assert kinds.count("supply") == 2 and kinds.count("length") == 1
    length = next(ax for ax in axes if ax.kind == "length")
    assert set(length.keys) == {("line-length", "x", "sclk"), ("line-length", "x", "copi")}
    # a normal draw is covered to 4 sigma: 4/3 of a tolerance at 3 sigma
    assert length.lo == pytest.approx(1 - 0.1 * 4 / 3)
    assert length.hi == pytest.approx(1 + 0.1 * 4 / 3)
    cap = next(ax for ax in axes if ax.kind == "capacitance")
    assert cap.lo == pytest.approx(1 - 0.2 * 4 / 3)


def test_multilinear_interpolation_is_exact_on_a_bilinear_function():
    # f(x, y) = 1 + 2x - 3y + 0.5xy is reproduced exactly by multilinear interpolation
    # (common practice, no source: the interpolant is bilinear on each cell)
    gx, gy = np.linspace(0.9, 1.1, 5), np.linspace(0.95, 1.05, 3)
    x, y = np.meshgrid(gx, gy, indexing="ij")
    table = (1 + 2 * x - 3 * y + 0.5 * x * y)[..., None]
    rng = np.random.default_rng(0)
    pts = np.stack([rng.uniform(0.9, 1.1, 200), rng.uniform(0.95, 1.05, 200)], axis=1)
    got = tablegrid.interpolate([gx, gy], table, pts)[0][:, 0]
    want = 1 + 2 * pts[:, 0] - 3 * pts[:, 1] + 0.5 * pts[:, 0] * pts[:, 1]
    np.testing.assert_allclose(got, want, rtol=1e-12)


def test_monte_carlo_of_an_spi_bus_reports_its_table(link):
    from pinlib.studies.whatif import monte_carlo

    design, bus = link
    result = monte_carlo(design, 80, seed=5)
    assert any("interpolated from" in note for note in result.notes)


def test_auto_series_resistors_stay_as_chosen_on_the_nominal_board():
    design = load_design(DEMO)
    bus = design.bus("display")
    nominal = evaluate_bus(bus, design)
    chosen = ppb.chosen_resistors(nominal)
    assert chosen  # the display's auto lines
    varied = ppb.vary_bus(bus, lambda key: None, chosen)
    for sig, rs in chosen.items():
        assert bus.lines[sig].series_resistor == "auto"
        assert varied.lines[sig].series_resistor == (rs if rs > 0 else "none")
    one = next(iter(chosen))
    zero = ppb.vary_bus(bus, lambda key: None, {one: 0.0})
    assert zero.lines[one].series_resistor == "none"


@given(value=st.floats(allow_nan=True, allow_infinity=True, width=64),
       limit=st.floats(allow_nan=False, allow_infinity=False, min_value=-1e9, max_value=1e9),
       warn=st.floats(0.0, 0.5))
def test_array_margins_and_statuses_follow_the_scalar_rules(value, limit, warn):
    if math.isnan(value):
        return  # check_min takes float(value): NaN values are not checks
    c = check_min("x", value, limit, "s", "", "", warn_margin=warn)
    m = float(min_margin(np.array([value]), limit)[0])
    assert (m == c.margin) or (math.isnan(m) and math.isnan(c.margin))
    assert int(status_codes(np.array([m]), warn)[0]) == STATUS_CODES[_status(m, warn)]
    assert STATUS_CODES[c.status] == int(status_codes(np.array([c.margin]), warn)[0])
    c = check_max("x", value, limit, "s", "", "", warn_margin=warn)
    m = float(max_margin(np.array([value]), limit)[0])
    assert (m == c.margin) or (math.isnan(m) and math.isnan(c.margin))


@given(value=st.floats(allow_nan=True, allow_infinity=True, width=64),
       limit=st.floats(allow_nan=False, allow_infinity=False, width=64))
@example(value=1.7976931348623157e308, limit=-9.9792015476736e291)  # the difference overflows
def test_one_value_margins_equal_the_arrays(value, limit):
    # min_margin / max_margin / at_limit of one value take Python floats (no error
    # state to set): the same numbers as the array of one
    for f in (min_margin, max_margin, at_limit):
        one, arr = float(f(value, limit)), float(f(np.array([value]), np.array([limit]))[0])
        assert one == arr or (math.isnan(one) and math.isnan(arr)), f.__name__


def test_replace_keeps_frozen_timing_records_usable_with_arrays(link):
    # budget_terms takes flights as arrays: one term per peripheral, arrays of margins
    from pinlib.engines.pushline import Flight
    from pinlib.engines.spi import budget_terms, spi_analysis

    design, bus = link
    sa = spi_analysis(bus, design)
    p = sa.peripherals[0]
    shifted = replace(p, cipo=Flight(np.array([p.cipo.early, p.cipo.early + 1e-9]),
                                     np.array([p.cipo.late, p.cipo.late + 1e-9])))
    terms = budget_terms(sa.mode, sa.controller, [shifted], sa.t_bridge)
    setup = next(t for t in terms if t.id == "cipo-setup")
    # a CIPO flight 1 ns later leaves 1 ns less setup time (derived from the budget)
    assert setup.b[0] - setup.b[1] == pytest.approx(1e-9, rel=1e-9)


def test_device_pin_capacitance_is_drawn_on_push_pull_buses(link):
    design, bus = link
    dev = bus.devices[1]
    toleranced = replace(bus, devices=(bus.devices[0], replace(dev, capacitance_tolerance=0.2)))
    specs = ppb.parameter_specs(toleranced)
    key = ("pins", bus.id, dev.ref)
    assert any(spec[-1] == key and spec[3] == 0.2 for spec in specs)
    varied = ppb.vary_bus(toleranced, {key: 1.2}.get)
    assert varied.devices[1].capacitance_factor == 1.2
    assert varied.devices[0].capacitance_factor == 1.0
    # a pin's capacitance on the line is the stored value times the drawn factor
    from pinlib.engines.pushline import Endpoint
    pin = dev.part.pins["cipo"] if "cipo" in dev.part.pins else next(iter(dev.part.pins.values()))
    stored = Endpoint(dev, "x", pin, 3.3).c_in
    assert Endpoint(varied.devices[1], "x", pin, 3.3).c_in == pytest.approx(1.2 * stored)
    axes = pptable.axes_of(specs, 1.0, 1e-6)
    pins_axis = next(ax for ax in axes if ax.keys == (key,))
    assert pins_axis.kind == "capacitance" and pins_axis.lo == pytest.approx(0.8)


def test_building_a_table_reports_its_progress(link):
    design, bus = link
    seen = []
    axes = pptable.axes_of(ppb.parameter_specs(bus), 1.0, 1e-6)
    chosen = ppb.chosen_resistors(evaluate_bus(bus, design))
    table = pptable.tabulate(bus, design, axes, chosen,
                             progress=lambda done, total: seen.append((done, total)))
    assert isinstance(table, pptable.LineTable)
    total = table.evaluations
    assert seen[-1] == (total, total) and len(seen) == total


def test_a_quantity_equal_at_every_node_is_returned_as_it_is():
    # an infinite margin (a limit of 0) or an undefined value at every node must not be
    # mixed by the cubic's weights, some of which are negative
    grids = [np.linspace(0.9, 1.1, 7)]
    table = np.stack([np.full(7, np.inf), np.full(7, np.nan), np.full(7, 2.5),
                      np.linspace(0.0, 1.0, 7)], axis=1)
    pts = np.array([[0.93], [1.0], [1.07]])
    got = tablegrid.interpolate(grids, table, pts)[0]
    assert np.all(np.isposinf(got[:, 0])) and np.all(np.isnan(got[:, 1]))
    assert np.all(got[:, 2] == 2.5)
    # the linear column is reproduced exactly (common practice: a cubic holds a line)
    np.testing.assert_allclose(got[:, 3], (pts[:, 0] - 0.9) / 0.2, rtol=1e-12)


def test_rough_cells_find_a_jump_and_a_bend_and_leave_a_smooth_curve():
    # a cubic is extrapolated exactly from either side (common practice, no source: a
    # polynomial of degree 3 through 4 nodes is itself); a step and a kink are not
    g = np.linspace(0.9, 1.1, 9)
    smooth = 1 + 3 * g - 2 * g ** 2 + 0.5 * g ** 3
    step = smooth + 0.08 * (g > 0.99)          # a jump inside the cell (0.975, 1.0)
    kink = np.abs(g - 1.04) * 0.9              # a bend inside the cell (1.025, 1.05)
    assert not tablegrid.rough_cells(g, smooth[None, :], 1e-9).any()
    assert list(np.flatnonzero(tablegrid.rough_cells(g, step[None, :], 5e-3))) == [3]
    assert list(np.flatnonzero(tablegrid.rough_cells(g, kink[None, :], 5e-3))) == [5]


def test_stencils_keep_to_one_side_of_a_rough_cell_on_an_uneven_grid():
    # derived: a cubic through 4 nodes of one smooth piece holds that piece's cubic
    # exactly, wherever the nodes are; the piecewise function jumps inside cell 3
    g = np.array([0.9, 0.93, 0.96, 0.97, 0.975, 1.0, 1.05, 1.1])
    def f(x):
        return np.where(x > 0.972, 2 + x ** 3, 1 - x ** 2)
    table = f(g)[:, None]
    x = np.array([0.91, 0.95, 0.965, 0.973, 0.98, 1.02, 1.09])
    got, declined = tablegrid.interpolate([g], table, x[:, None], [(np.array([3]), np.array([3]))])
    assert list(declined) == [False, False, False, True, False, False, False]
    ok = ~declined
    np.testing.assert_allclose(got[ok, 0], f(x[ok]), rtol=1e-12)


@pytest.fixture(scope="module")
def routed(tmp_path_factory):
    """tests/data/spi-route.toml (invented) with a supply, a length and a capacitance
    tolerance: a receiver on a stub sees a stepped edge whose 10-90 % time jumps as the
    lengths move a step's plateau across 90 %."""
    design, bus = _route_with(tmp_path_factory.mktemp("route"),
                              'supply_tolerance = "5 %"\nlength_tolerance = "10 %"\n')
    n = 16
    factors = _factors(bus, n, seed=11)
    nominal = evaluate_bus(bus, design)
    tables: dict = {}
    # a run of many boards builds the table; these few are checked against the engine
    ppb.prepare_table(bus, design, nominal, tables, 1.0, 1e-6, 20_000)
    table = tables[bus.id]
    if isinstance(table, pptable.LineTable):  # and one board inside sclk's jump cell
        length = next(i for i, ax in enumerate(table.axes) if ax.kind == "length")
        g = table._grids[length]
        for c in table._rough["sclk"][length][1][:1]:
            for key in factors:
                if key[0] == "line-length":
                    factors[key][0] = 0.5 * (g[c] + g[c + 1])
    by_table = ppb.build(bus, design, factors, n, nominal=nominal, tables=tables)
    by_engine = ppb.build(bus, design, factors, n, nominal=nominal)
    return by_table, by_engine, tables[bus.id], factors, n


def test_a_routed_line_is_tabulated_and_its_jumps_left_to_the_engine(routed):
    by_table, by_engine, table, factors, n = routed
    assert isinstance(table, pptable.LineTable), table
    assert table.max_error <= pptable.MARGIN_TOL
    # the jump of sclk's edge time at U2 is found, bisected to a narrow cell and declined
    length = next(i for i, ax in enumerate(table.axes) if ax.kind == "length")
    g = table._grids[length]
    avoided, declined = table._rough["sclk"][length]
    assert declined.size and all(g[c + 1] - g[c] < 0.2 / 6 / 16 for c in declined)
    assert table.declined(factors, n)[0]
    assert by_table.engine_boards < n
    # every board: the same status as the engine's, margins within the table's tolerance
    for a, b in zip(by_table.items, by_engine.items, strict=True):
        np.testing.assert_array_equal(a.status, b.status)
        if b.margin is not None:
            ok = np.isfinite(b.margin)
            np.testing.assert_allclose(a.margin[ok], b.margin[ok], rtol=0,
                                       atol=pptable.MARGIN_TOL)


def test_boards_left_to_the_engine_are_counted_by_why(both, routed):
    by_table, _, _, n = both
    # a uniform draw lies inside the box and the straight link has no rough cell: every
    # board the engine took beside the table was close to failing
    assert by_table.engine_why == {"outside": 0, "rough": 0, "close": by_table.engine_boards}
    assert ppb.engine_note("link", {"outside": 0, "rough": 0, "close": 3}) == (
        "bus link: 3 boards evaluated by the engine (3 close to failing)")
    assert ppb.engine_note("link", {"outside": 1, "rough": 2, "close": 3}) == (
        "bus link: 6 boards evaluated by the engine (1 outside the tolerance box, 2 in a "
        "table cell a line's results jump or bend across, 3 close to failing)")
    # the routed bus: board 0 lies in sclk's jump cell, and is counted as such
    routed_table, _, table, factors, n = routed
    why = routed_table.engine_why
    assert sum(why.values()) == routed_table.engine_boards and why["rough"] >= 1
    note = ppb.engine_note("shared", why)
    assert f"{why['rough']} in a table cell a line's results jump or bend across" in note
    assert "outside" not in note  # no board of the draw lies outside the box


def test_a_board_outside_the_box_is_counted_as_such(link):
    design, bus = link
    n = 60
    factors = _factors(bus, n, seed=7)
    for key in factors:
        if key[0] == "line-length":
            factors[key][:2] = 1.3  # beyond the 10 % length tolerance the box covers
    got = ppb.build(bus, design, factors, n, nominal=evaluate_bus(bus, design), tables={})
    assert got.engine_why["outside"] == 2
    assert sum(got.engine_why.values()) == got.engine_boards
    assert "2 outside the tolerance box" in ppb.engine_note("link", got.engine_why)


def test_a_table_takes_fewer_engine_runs_than_the_boards_it_stands_in_for(tmp_path):
    # the route's jump cells refine its table past the first grid's 7 x 3 nodes and 20
    # verification boards (66 nodes + 20 when the run is large); for a run of 60 boards
    # the table must cost fewer than 60 engine runs, or the engine alone is cheaper
    design, bus = _route_with(tmp_path, 'supply_tolerance = "5 %"\nlength_tolerance = "10 %"\n')
    n = 60
    nominal = evaluate_bus(bus, design)
    first = pptable.NODES["length"] * pptable.NODES["supply"] + pptable.VERIFY
    assert first < n  # the first grid pays, so a table is built
    tables: dict = {}
    ppb.prepare_table(bus, design, nominal, tables, 1.0, 1e-6, n)
    table = tables[bus.id]
    assert isinstance(table, pptable.LineTable), table
    assert first < table.evaluations < n  # refined, within the run's boards
    # what it declines goes to the engine, and every board agrees with the engine
    factors = _factors(bus, 12, seed=4)
    by_table = ppb.build(bus, design, factors, 12, nominal=nominal, tables=tables)
    by_engine = ppb.build(bus, design, factors, 12, nominal=nominal)
    for a, b in zip(by_table.items, by_engine.items, strict=True):
        np.testing.assert_array_equal(a.status, b.status)
        if b.margin is not None:
            ok = np.isfinite(b.margin)
            np.testing.assert_allclose(a.margin[ok], b.margin[ok], rtol=0,
                                       atol=pptable.MARGIN_TOL)


def test_a_flight_that_jumps_is_refined_and_left_to_the_engine(tmp_path, monkeypatch):
    # On this route the CIPO edge from U2 reaches U1's VIH on its first step only from
    # a length factor of about 1.2 on (its latest flight then moves 1.8 ns earlier; the
    # engine, 2026-12-03): here the same jump is put inside the box, at a CIPO length
    # factor of 1.047, onto the engine's own flights, which every check is built from.
    from pinlib.engines import spi
    from pinlib.engines.pushline import Flight

    design, bus = _route_with(tmp_path, 'length_tolerance = "10 %"\n')
    nominal_cipo = sum(s.length for s in bus.lines["cipo"].sections)
    analysis = spi.spi_analysis

    def jumping(varied, design_):
        sa = analysis(varied, design_)
        factor = sum(s.length for s in varied.lines["cipo"].sections) / nominal_cipo
        if factor > 1.047:
            p = sa.peripherals[0]
            moved = replace(p, cipo=Flight(p.cipo.early, p.cipo.late - 1.8e-9))
            sa = replace(sa, peripherals=[moved, *sa.peripherals[1:]])
            from pinlib.engines.spi import budget_terms
            sa = replace(sa, terms=budget_terms(sa.mode, sa.controller, sa.peripherals,
                                                sa.t_bridge))
        return sa

    monkeypatch.setattr(spi, "spi_analysis", jumping)
    axes = pptable.axes_of(ppb.parameter_specs(bus), 1.0, 1e-6)
    chosen = ppb.chosen_resistors(evaluate_bus(bus, design))
    table = pptable.tabulate(bus, design, axes, chosen)
    assert isinstance(table, pptable.LineTable), table
    assert table.max_error <= pptable.MARGIN_TOL
    # the jump's cell is bisected down to a narrow one, which the table declines
    length = next(i for i, ax in enumerate(table.axes) if ax.kind == "length")
    g = table._grids[length]
    declined = table._rough["cipo"][length][1]
    jump = [c for c in declined if g[c] < 1.047 <= g[c + 1]]
    assert jump and all(g[c + 1] - g[c] < 0.2 / 6 / 16 for c in declined)
    # a board there is the engine's; one beside it on either side the table's
    key = next(k for ax in table.axes for k in ax.keys if k[2] == "cipo")
    x = np.array([0.5 * (g[jump[0]] + g[jump[0] + 1]), 1.03, 1.06])
    at = {k: x if k == key else np.ones(3) for ax in table.axes for k in ax.keys}
    assert list(table.declined(at, 3)) == [True, False, False]
    # next to the jump the table's margins are the (jumping) engine's: a cubic across
    # it missed CIPO setup at U2 by 0.21 of its limit at a factor of 1.045, unnoticed by
    # the verification boards
    from pinlib.engines import ppnodes
    from pinlib.engines import ppvariant as ppv
    x = np.array([1.035, 1.04, 1.045, 1.055])
    got = table.evaluate({k: x for ax in table.axes for k in ax.keys}, x.size)
    for b, f in enumerate(x):
        varied = ppv.vary_bus(bus, {k: f for ax in table.axes for k in ax.keys}.get, chosen)
        res, _ = ppnodes.evaluate(varied, design)
        for j, (_, c) in enumerate(ppv.flat_checks(res)):
            if c.margin is not None and math.isfinite(c.margin):
                assert got["margin"][b, j] == pytest.approx(c.margin, abs=pptable.MARGIN_TOL)


def test_a_yes_no_check_whose_status_moves_is_tabulated_by_its_nodes(tmp_path):
    # On this route the CIPO edge from U2 reaches U1's VIH on its first step from a
    # length factor of about 1.195 on, and then rings at U1 (the engine, 2026-12-03):
    # the ringing check (yes/no) turns from pass to warn and the latest flight moves
    # 1.8 ns earlier.  The table was refused ("its status moves"); now the cell where
    # the status changes is rough like a jump, and each board takes its nodes' status.
    design, bus = _route_with(tmp_path, 'supply_tolerance = "5 %"\nlength_tolerance = "20 %"\n')
    nominal = evaluate_bus(bus, design)
    tables: dict = {}
    ppb.prepare_table(bus, design, nominal, tables, 1.0, 1e-6, 20_000)
    table = tables[bus.id]
    assert isinstance(table, pptable.LineTable), table
    length = next(i for i, ax in enumerate(table.axes) if ax.kind == "length")
    g = table._grids[length]
    jump = [c for c in table._rough["cipo"][length][1] if g[c] < 1.2 and g[c + 1] > 1.19]
    assert jump
    # boards around the jump (in its cell, and either side of it) and some drawn
    n = 12
    factors = _factors(bus, n, seed=2)
    keys = [k for k in factors if k[0] == "line-length"]
    for b, x in enumerate((0.5 * (g[jump[0]] + g[jump[0] + 1]), 1.18, 1.2)):
        for k in keys:
            factors[k][b] = x
    by_table = ppb.build(bus, design, factors, n, nominal=nominal, tables=tables)
    by_engine = ppb.build(bus, design, factors, n, nominal=nominal)
    assert by_table.engine_why["rough"] >= 1 and by_table.engine_boards < n
    ringing = next(i for i, nm in enumerate(by_engine.names)
                   if nm["name"] == "shared cipo ringing U1")
    assert set(by_engine.items[ringing].status) == {0, 1}  # pass and warn both drawn
    for a, b in zip(by_table.items, by_engine.items, strict=True):
        np.testing.assert_array_equal(a.status, b.status)
        if b.margin is not None:
            ok = np.isfinite(b.margin)
            np.testing.assert_allclose(a.margin[ok], b.margin[ok], rtol=0,
                                       atol=pptable.MARGIN_TOL)


def test_a_status_that_changes_makes_its_cell_rough_on_any_axis():
    # a status takes a few values: any change across a cell is a step (common practice,
    # no source), found on a three-node axis too, where a cubic has too few nodes
    g = np.array([0.95, 1.0, 1.05])
    smooth = np.array([[0.1, 0.2, 0.3]])
    _, now, _ = tablegrid.rough_spans(g, smooth, 2e-3, [], np.array([[0, 0, 1], [0, 0, 0]]))
    assert list(now) == [1]
    _, now, _ = tablegrid.rough_spans(g, smooth, 2e-3, [], np.zeros((2, 3)))
    assert not now.size


@pytest.mark.parametrize("max_error, shown", [
    (8.2e-5, "within ±0.0082 percentage points of margin"),   # the demo's flash bus
    (3.0e-3, "within ±0.3 percentage points of margin"),
    (1.5, "within ±150 percentage points of margin"),
    (1.0e-9, "within ±0.001 percentage points of margin"),    # below it: at most that
    (0.0, "within ±0.001 percentage points of margin"),
])
def test_the_table_note_gives_its_agreement_without_an_exponent(max_error, shown):
    # reproducer: the Monte Carlo note read "agree with the engine within 8.2e-05 of
    # margin", an exponent and no unit, in pinlib check and in the report
    from types import SimpleNamespace

    axis = SimpleNamespace(kind="length", lo=0.9, hi=1.1)
    grid = SimpleNamespace(axes=[axis], evaluations=41, max_error=max_error,
                           has_jumps=lambda: False)
    note = ppb._table_note(SimpleNamespace(id="flash"), grid)
    assert shown in note
    assert not re.search(r"\de-?\d", note)


def test_a_slack_in_seconds_is_tabulated_as_the_engine_gives_it(tmp_path):
    # the controller records no t_setup/t_hold (taken as 0): its CIPO checks' margins
    # are slacks in seconds (Term.margin_unit), and at 56 MHz the CIPO setup slack of
    # the invented test parts straddles 0 over the tolerances, warning on some boards.
    # The table gives the engine's margins and statuses, and compares them with its
    # error in units of the budget's smallest requirement, so that not every board is
    # "close to failing"
    pp = DATA / "pushpull"
    text = (pp / "pp-ctrl.toml").read_text(encoding="utf-8")
    text = text.replace('id = "pp-ctrl"', 'id = "t-ctrl-untimed"')
    text = re.sub(r'^t_(setup|hold) = .*\n', "", text, flags=re.MULTILINE)
    (tmp_path / "t-ctrl-untimed.toml").write_text(text, encoding="utf-8")
    line = ('{ length = "5 cm", capacitance = "1 pF/cm", delay = "60 ps/cm", '
            'series_resistor = "auto" }')
    (tmp_path / "d.toml").write_text(f"""format = "pinlib.design/1"
title = "SPI test bus (invented)"
library = ["{pp.as_posix()}", "{tmp_path.as_posix()}"]

[[bus]]
id = "s"
protocol = "spi"
spi_mode = 0
clock = "56 MHz"
supply = "3.3 V"
supply_tolerance = "5 %"
length_tolerance = "10 %"
devices = [
  {{ ref = "U1", part = "t-ctrl-untimed", role = "controller" }},
  {{ ref = "U2", part = "pp-periph" }},
]
""" + "".join(f"lines.{s} = {line}\n" for s in ("sclk", "copi", "cipo", "cs")),
                                     encoding="utf-8")
    design = load_design(tmp_path / "d.toml", library_folders=[tmp_path])
    bus = design.buses[0]
    n = 200
    by_table, by_engine, table, nominal = _both_ways(bus, design, n, seed=3)
    assert isinstance(table, pptable.LineTable)
    j = next(i for i, nm in enumerate(by_engine.names)
             if nm["name"].startswith("s cipo-setup"))
    eng, tab = by_engine.items[j], by_table.items[j]
    assert nominal.check("cipo-setup").margin_unit == "s"
    # the draw straddles 0: some boards warn, none fails (no published limit), so the
    # test can fail
    assert 0 < (eng.status == STATUS_CODES["warn"]).sum() < n
    assert not (eng.status == STATUS_CODES["fail"]).any()
    np.testing.assert_array_equal(tab.status, eng.status)
    np.testing.assert_allclose(tab.margin, eng.margin, rtol=0, atol=1e-12)  # s
    assert np.all(np.abs(eng.margin) < 1e-8)   # seconds, not a fraction or ±inf
    assert by_table.engine_boards < n / 2


def test_the_table_note_names_each_rail_when_two_rails_vary(tmp_path):
    # invented GPIO reset line of built-in classes, a 1.8 V receiver on a 3.3 V bus: the
    # note read "(supply factor 0.95–1.05, supply factor 0.95–1.05)", two axes alike
    from types import SimpleNamespace

    path = tmp_path / "two-rails.toml"
    path.write_text('''format = "pinlib.design/1"
title = "two rails (invented)"

[[bus]]
id = "reset"
protocol = "gpio"
supply = "3.3 V"
supply_tolerance = "5 %"
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller", pin = "cs" },
  { ref = "U2", part = "display-controller-spi", pin = "dc", supply = "1.8 V" },
]
lines.reset = { length = "5 cm", capacitance = "1 pF/cm", delay = "60 ps/cm" }
''', encoding="utf-8")
    design = load_design(path)
    bus = design.buses[0]
    axes = pptable.axes_of(ppb.parameter_specs(bus), 1.0, 0.0)
    assert [ax.kind for ax in axes] == ["supply", "supply"]
    grid = SimpleNamespace(axes=axes, evaluations=9, max_error=0.0, has_jumps=lambda: False)
    note = ppb._table_note(bus, grid)
    assert "supply factor of rail 3.3 V 0.95–1.05" in note, note
    assert "supply factor of rail 1.8 V 0.95–1.05" in note, note
    # one axis of a kind keeps its short name (the goldens' notes)
    grid.axes = axes[:1]
    assert "(supply factor 0.95–1.05)" in ppb._table_note(bus, grid)


def test_the_table_note_wraps_as_one_sentence():
    # reproducer: at 80 columns the note read "... at 20 boards drawn in the box they
    # agree with the engine" and "within 0.047 percentage points ..." on the next line,
    # 18 columns short, as if broken by hand: "within 0.047 percentage" was held together
    # as one word (a word before a number is glued to it).  The numbers are those of an
    # invented board's note (invented test data)
    from types import SimpleNamespace

    from pinlib.core.wrapping import NBSP, glue
    from pinlib.present.report import fit

    axes = [SimpleNamespace(kind="supply", lo=0.95, hi=1.05),
            SimpleNamespace(kind="length", lo=0.95, hi=1.05)]
    grid = SimpleNamespace(axes=axes, evaluations=173, max_error=4.7e-4,
                           has_jumps=lambda: True)
    note = ppb._table_note(SimpleNamespace(id="store"), grid)
    assert "within ±0.047 percentage points of margin" in note
    assert f"within{NBSP}" not in glue(note)   # a line may end after "within"
    lines = fit(["  note: " + note], 80)
    assert len(lines) > 2 and all(len(ln) <= 80 for ln in lines)
    # each line but the last as full as its next word allows, none ending a dozen
    # columns short (the line that ended "with the engine" held 62)
    for line, after in zip(lines, lines[1:], strict=False):
        first = glue(after.strip()).split(" ")[0]
        assert len(line) + 1 + len(first) > 80, (line, after)
        assert len(line) >= 68, lines


def test_hold_at_a_fast_corner_is_tabulated_as_the_engine_gives_it():
    # tests/data/spi-fast-corner.toml (invented): a controller stating a fast corner whose
    # COPI hold is shorter there; the table carries each flight at both corners, so its
    # boards' hold margins are the engine's within the table's tolerance
    design = load_design(DATA / "spi-fast-corner.toml")
    bus = design.buses[0]
    n = 400
    by_table, by_engine, table, _ = _both_ways(bus, design, n, seed=3)
    assert isinstance(table, pptable.LineTable) and by_table.engine_boards < n
    hold = [i for i, nm in enumerate(by_engine.names)
            if nm["name"].startswith("link copi-hold")]
    assert hold
    for a, b in zip(by_table.items, by_engine.items, strict=True):
        np.testing.assert_array_equal(a.status, b.status)
        if b.margin is not None:
            np.testing.assert_allclose(a.margin, b.margin, rtol=0, atol=pptable.MARGIN_TOL)
