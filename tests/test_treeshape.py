"""Drivers of one route that see the same tree share one solve (issue 16): the shape key,
and the shared edges against each driver solved on its own (to 1e-12 relative) on a
star, a daisy chain and a trunk with stubs, the CIPO way (each peripheral drives, the
others load the line)."""

from __future__ import annotations

import numpy as np
import pytest

from pinlib.engines import memo
from pinlib.engines.dispatch import check_design
from pinlib.engines.pushline import routes
from pinlib.engines.pushline.routes import node_caps, route_net, tree_edges
from pinlib.engines.pushline.sections import Stretch
from pinlib.engines.pushline.treeshape import shape_from
from pinlib.model.design import load_design
from tests.golden.compare import differences

# Invented lines: about 50 Ω at 6.5 ps/mm (FR-4 microstrip, common practice, no source)
# and input pins of 5-8 pF (typical CMOS inputs, common practice, no source).
_PS_PER_CM = 65e-12


def _s(cm: float, z0: float = 50.0) -> Stretch:
    td = cm * _PS_PER_CM
    return Stretch(cm / 100.0, z0, td, td / z0, f"{cm} cm")


def _lump(pf: float) -> Stretch:
    return Stretch(0.01, float("nan"), 0.0, pf * 1e-12, "lumped")


# (points, stretches, the pins {ref: c_in}); P* are peripherals driving in turn
STAR = ([("U1", "S")] + [("S", f"P{i}") for i in range(7)],
        [_s(2.0)] + [_s(1.0 + i % 3) for i in range(6)] + [_s(2.5)],
        {"U1": 8e-12, **{f"P{i}": 5e-12 for i in range(7)}})
CHAIN = ([("P0", "A"), ("A", "U1"), ("U1", "B"), ("B", "P1")],  # the controller mid-chain
         [_s(3.0), _s(2.0), _s(2.0), _s(3.0)],
         {"U1": 8e-12, "P0": 5e-12, "A": 5e-12, "B": 5e-12, "P1": 5e-12})
STUBS = ([("T1", "U1"), ("U1", "T2"), ("T1", "P0"), ("T2", "P1"), ("T2", "X")],
         [_s(2.0), _s(2.0), _s(1.0), _s(1.0), _lump(1.0)],
         {"U1": 8e-12, "P0": 5e-12, "P1": 5e-12, "X": 0.0})
# ... with the lumped stretch at the other stub too, so P0 and P1 see the same tree
STUBS_EVEN = (STUBS[0] + [("T1", "Y")], STUBS[1] + [_lump(1.0)], {**STUBS[2], "Y": 0.0})


def test_equal_branches_give_equal_shapes_and_matching_orders():
    net = route_net(*STAR[:2])
    caps = node_caps(net, {r: c for r, c in STAR[2].items() if r != "P0"}, 0.0)
    caps1 = node_caps(net, {r: c for r, c in STAR[2].items() if r != "P3"}, 0.0)
    a, order_a = shape_from(net.sections, caps, net.node("P0"))
    b, order_b = shape_from(net.sections, caps1, net.node("P3"))
    assert a == b  # P0 and P3 are both on 1 cm branches
    assert sorted(order_a) == list(range(len(net.names))) == sorted(order_b)
    # matching places: the driver, the hub, the controller
    for ref_a, ref_b in (("P0", "P3"), ("S", "S"), ("U1", "U1")):
        assert order_a.index(net.node(ref_a)) == order_b.index(net.node(ref_b))


def test_a_different_branch_pin_or_value_changes_the_shape():
    net = route_net(*STAR[:2])
    pins = {r: c for r, c in STAR[2].items() if r != "P0"}
    base, _ = shape_from(net.sections, node_caps(net, pins, 0.0), net.node("P0"))
    other, _ = shape_from(net.sections, node_caps(net, {r: c for r, c in STAR[2].items()
                                                        if r != "P1"}, 0.0), net.node("P1"))
    assert base != other  # P1's branch is 2 cm
    heavier = node_caps(net, {**pins, "P4": 5.5e-12}, 0.0)
    assert shape_from(net.sections, heavier, net.node("P0"))[0] != base
    # the same tree listed in another order is the same shape
    points, stretches = STAR[0][::-1], STAR[1][::-1]
    net2 = route_net(points, stretches)
    again, _ = shape_from(net2.sections, node_caps(net2, pins, 0.0), net2.node("P0"))
    assert again == base


def _edges(net, pins, drv, r, ramp):
    caps = node_caps(net, {k: c for k, c in pins.items() if k != drv}, 0.0)
    return tree_edges(net, net.node(drv), r, ramp, caps, 3.3, 0.0, distributed=True,
                      edge="fall")


def _same(a, b):
    """Equal to 1e-12 of the 3.3 V swing (rounding: the shared solve sums a junction's
    lines in another order)."""
    np.testing.assert_allclose(a, b, rtol=1e-12, atol=1e-12 * 3.3)


@pytest.mark.parametrize("case, drivers", [(STAR, [f"P{i}" for i in range(7)]),
                                           (CHAIN, ["P0", "P1", "A", "B"]),
                                           (STUBS, ["P0", "P1"]),
                                           (STUBS_EVEN, ["P0", "P1"])])
def test_shared_solves_equal_each_driver_solved_alone(case, drivers):
    points, stretches, pins = case
    net = route_net(points, stretches)
    r, ramp = 30.0, 0.8e-9  # invented driver: 30 Ω, 0.8 ns ramp
    with memo.run_scope() as held:
        shared = {d: _edges(net, pins, d, r, ramp) for d in drivers}
        solves = sum(1 for k in held if k[0] == "pushline.tree_edge")
    alone = {d: _edges(net, pins, d, r, ramp) for d in drivers}  # no scope: each solved
    n_shapes = len({shape_from(net.sections, node_caps(net, {k: c for k, c in pins.items()
                                                             if k != d}, 0.0),
                               net.node(d))[0] for d in drivers})
    assert solves == n_shapes
    if case is not STUBS:  # the uneven stubs: every driver its own tree
        assert solves < len(drivers)  # some solves were shared, or the test proves nothing
    nodes = range(len(net.names))
    for d in drivers:
        s, a = shared[d], alone[d]
        np.testing.assert_array_equal(s.t, a.t)
        for n in nodes:
            _same(s.at(n).v, a.at(n).v)
            assert s.at(n).settled == a.at(n).settled
            for field in ("t_edge", "overshoot", "undershoot"):
                _same(getattr(s.at(n), field), getattr(a.at(n), field))
        _same(s.edge_times(nodes), a.edge_times(nodes))
        for x, y in zip(s.extremes(), a.extremes(), strict=True):
            _same(x, y)


@pytest.mark.parametrize("case, drivers", [(STAR, [f"P{i}" for i in range(7)]),
                                           (CHAIN, ["P0", "P1", "A", "B"])])
def test_kept_records_equal_every_record_kept(case, drivers):
    # derived: keeping only some nodes' records (the controller's and the route's far
    # point's) drops the others after the solve; a dropped one read later is the same
    # solve made again, so every figure equals the solve that keeps all, bit for bit
    points, stretches, pins = case
    net = route_net(points, stretches)
    r, ramp = 30.0, 0.8e-9  # invented driver: 30 Ω, 0.8 ns ramp
    nodes = range(len(net.names))
    with memo.run_scope():
        every = {d: _edges(net, pins, d, r, ramp) for d in drivers}
    with memo.run_scope() as held:
        some = {}
        for d in drivers:
            caps = node_caps(net, {k: c for k, c in pins.items() if k != d}, 0.0)
            some[d] = tree_edges(net, net.node(d), r, ramp, caps, 3.3, 0.0,
                                 distributed=True, edge="fall", keep=[net.node("U1"), net.far])
        solves = [v for k, v in held.items() if k[0] == "pushline.tree_edge"]
        kept = [len(v._held) for v in solves]
    assert len(solves) < len(drivers)  # still shared
    assert max(kept) < len(nodes)  # only some rows held
    for d in drivers:
        a, b = every[d], some[d]
        for x, y in zip(a.extremes(), b.extremes(), strict=True):
            np.testing.assert_array_equal(x, y)
        for n in [net.node("U1"), *nodes]:  # kept first, then every node (made again)
            np.testing.assert_array_equal(a.at(n).v, b.at(n).v)
            assert (a.at(n).t_edge, a.at(n).settled) == (b.at(n).t_edge, b.at(n).settled)
        np.testing.assert_array_equal(a.edge_times(nodes), b.edge_times(nodes))


def _cipo_star(n: int) -> str:
    """An SPI bus of ``n`` peripherals on a star of four branch lengths (invented)."""
    devices = "".join(f'  {{ ref = "P{i}", part = "nor-flash-spi" }},\n' for i in range(n))
    branches = ", ".join(f'{{ from = "S", to = "P{i}", length = "{1 + i % 4} cm", '
                         'geometry = "g" }' for i in range(n))
    return f"""format = "pinlib.design/1"
title = "CIPO star (invented)"
[board.geometry.g]
kind = "microstrip"
width = "0.2 mm"
height = "0.18 mm"
er = 4.2
[[bus]]
id = "s"
protocol = "spi"
clock = "10 MHz"
supply = "3.3 V"
devices = [
  {{ ref = "U1", part = "mcu-3v3", role = "controller" }},
{devices}]
lines.sclk = {{ length = "3 cm", geometry = "g" }}
lines.cipo = {{ route = [{{ from = "U1", to = "S", length = "2 cm", geometry = "g" }},
  {branches}] }}
"""


def test_cipo_star_result_equals_one_solve_per_driver(monkeypatch, tmp_path):
    """The whole result of a CIPO star (8 peripherals on 4 branch lengths: 4 solves
    shared) against every driver solved on its own tree, as before."""
    path = tmp_path / "star.toml"
    path.write_text(_cipo_star(8), encoding="utf-8")
    design = load_design(path)
    solved = []
    real_unit = routes._unit_tree
    monkeypatch.setattr(routes, "_unit_tree", lambda *a: solved.append(a[1]) or real_unit(*a))
    shared = check_design(design).to_json()
    n_shared = len(solved)
    real = routes.shape_from

    def own(sections, caps, source):  # a key no other driver has: no solve shared
        shape, order = real(sections, caps, source)
        return (shape, source), list(range(len(caps)))

    monkeypatch.setattr(routes, "shape_from", own)
    alone = check_design(design).to_json()
    assert (n_shared, len(solved) - n_shared) == (4, 8)  # the 8 CIPO drivers: 4 shapes
    assert differences(alone, shared) == []
