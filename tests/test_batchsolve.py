"""Edges solved ahead in batches (pinlib.engines.pushline.batchsolve): each is the edge the
engine solves itself, on the same grid, and the engine's results do not change."""

from __future__ import annotations

from pathlib import Path

import numpy as np

from pinlib.engines import memo
from pinlib.engines.dispatch import evaluate_bus
from pinlib.engines.pushline import batchsolve, waves
from pinlib.engines.pushpull import line_inputs
from pinlib.model.design import load_design
from pinlib.physics import waveform as wf

DEMO = Path(__file__).resolve().parents[1] / "workbooks" / "designs" / "demo-board.toml"


def _inputs(design, refs_parts):
    """The line inputs of the display bus with each part in turn at U12."""
    out = []
    for part in refs_parts:
        sw = design.with_parts({"U12": part})
        out += line_inputs(sw.bus("display"), sw)
    return out


def test_each_batched_edge_is_the_engines_own():
    d = load_design(DEMO)
    inputs = _inputs(d, ["display-controller-spi", "nor-flash-spi", "adc-spi", "dac-spi"])
    assert batchsolve.prefetch(inputs) == 0  # outside a run scope: nothing to keep
    with memo.run_scope() as held:
        n = batchsolve.prefetch(inputs)
        # at least one edge per part (the three lines are alike, so they share theirs)
        assert n >= 4
        keys = [k for k in held if k[0] == "pushline.unit_edge"]
        assert len(keys) == n
        for key in keys:
            _, sections, r_source, t_ramp, c_far, distributed = key
            stretches = [waves.Stretch(0.0, z0, td, c, "") for z0, td, c in sections]
            t, unit, settled = held[key]
            t1, unit1, settled1 = waves._unit_edge(stretches, r_source, t_ramp, c_far,
                                                   distributed)
            assert settled and settled1
            # derived from the solver being causal on one grid: the same samples up to
            # rounding inside the batched matrix products
            assert np.array_equal(t, t1)
            assert np.allclose(unit, unit1, rtol=1e-12, atol=1e-13)
        assert batchsolve.prefetch(inputs) == 0  # held already: not solved again


def test_the_engine_takes_the_batched_edges(monkeypatch):
    d = load_design(DEMO)
    sw = d.with_parts({"U12": "adc-spi"})
    bus = sw.bus("display")
    plain = evaluate_bus(bus, sw)
    calls = []
    solve = waves._unit_edge
    monkeypatch.setattr(waves, "_unit_edge", lambda *a: calls.append(a) or solve(*a))
    with memo.run_scope():
        batchsolve.prefetch(line_inputs(bus, sw))
        got = evaluate_bus(bus, sw)
    assert calls == []  # every edge of this long line came from the batch
    for a, b in zip(plain.lines, got.lines, strict=True):
        for ca, cb in zip(a.checks, b.checks, strict=True):
            assert ca.id == cb.id and ca.status == cb.status
            if isinstance(ca.value, float):
                assert np.isclose(ca.value, cb.value, rtol=1e-9, atol=0.0)


def test_the_figures_read_off_the_batch_are_the_engines_own():
    # every figure the prefetch stores (edge time, overshoot, undershoot, threshold
    # crossings, re-crossings) is, to the last bit, what the engine computes from the
    # same record on its own: the same operations on the same samples, one row at a time
    # (derived from IEEE 754: element-wise operations round each element alike)
    d = load_design(DEMO)
    inputs = _inputs(d, ["display-controller-spi", "nor-flash-spi", "adc-spi", "dac-spi"])
    with memo.run_scope() as held:
        batchsolve.prefetch(inputs)
        counts = {"pushline.edge_figures": 0, "pushline.crossing": 0,
                  "pushline.recrossings": 0}
        for key, got in list(held.items()):
            if key[0] not in counts:
                continue
            counts[key[0]] += 1
            unit_key, v_from, v_to = key[1:4]
            t, unit, _ = held[unit_key]
            v = v_from + (v_to - v_from) * unit  # the record simulate_edge makes
            if key[0] == "pushline.edge_figures":
                assert got == waves._figures(t, v, v_from, v_to)
            elif key[0] == "pushline.crossing":
                edge, level = key[4:]
                assert got == float(wf.threshold_delay(t, v, level, edge=edge))
            else:
                edge, v_il, v_ih = key[4:]
                own = wf.recrossings(t, v, v_il, v_ih, edge=edge)
                assert got.entry == own.entry and got.opposite == own.opposite
                assert (got.t_settled == own.t_settled
                        or (np.isnan(got.t_settled) and np.isnan(own.t_settled)))
        assert all(n > 0 for n in counts.values()), counts


def test_an_edge_takes_its_figures_from_the_memo():
    # an edge from simulate_edge reads its figures, crossings and re-crossings under its
    # unit key: a value kept there first is the one it gives (so a batch's are used)
    st = [waves.Stretch(0.02, 50.0, 1e-10, 2e-12, "")]
    with memo.run_scope():
        key = waves.unit_edge_key(st, 30.0, 1e-9, 5e-12, True)
        memo.keep(waves.figures_key(key, 0.0, 3.3), (1.0, 2.0, 3.0))
        memo.keep(waves.crossing_key(key, 0.0, 3.3, "rise", 1.5), 4.0)
        w = waves.simulate_edge(st, 30.0, 1e-9, 5e-12, 0.0, 3.3, distributed=True,
                                edge="rise")
        assert (w.t_edge, w.overshoot, w.undershoot) == (1.0, 2.0, 3.0)
        assert w.crossing(1.5) == 4.0
        assert w.crossing(1.6) == float(wf.threshold_delay(w.t, w.v, 1.6))
    plain = waves.simulate_edge(st, 30.0, 1e-9, 5e-12, 0.0, 3.3, distributed=True,
                                edge="rise")
    assert plain.t_edge == float(wf.edge_time(plain.t, plain.v, 3.3))
    own = wf.recrossings(plain.t, plain.v, 1.0, 2.0)
    assert plain.recrossings(1.0, 2.0) == own


def test_an_edge_with_batched_figures_makes_its_record_when_read():
    # the record of an edge whose figures came from the memo is the one simulate_edge
    # makes itself, sample for sample (derived from the same expression on the same unit)
    st = [waves.Stretch(0.02, 50.0, 1e-10, 2e-12, "")]
    plain = waves.simulate_edge(st, 30.0, 1e-9, 5e-12, 3.3, 0.0, distributed=True,
                                edge="fall")
    with memo.run_scope():
        key = waves.unit_edge_key(st, 30.0, 1e-9, 5e-12, True)
        memo.keep(waves.figures_key(key, 3.3, 0.0),
                  (plain.t_edge, plain.overshoot, plain.undershoot))
        lazy = waves.simulate_edge(st, 30.0, 1e-9, 5e-12, 3.3, 0.0, distributed=True,
                                   edge="fall")
    # the figures were taken, the record not made (every edge now makes it when read)
    assert "v" not in vars(lazy)
    assert np.array_equal(lazy.t, plain.t) and np.array_equal(lazy.v, plain.v)
    assert lazy.crossing(1.2) == plain.crossing(1.2)
    assert (lazy.edge, lazy.v_from, lazy.v_to, lazy.t_edge, lazy.settled) == (
        plain.edge, plain.v_from, plain.v_to, plain.t_edge, plain.settled)


def test_the_edges_into_the_pins_alone_are_the_engines_own():
    # derived from the arithmetic being elementwise (a Newton step per element): each
    # edge of the batched array is the scalar call's to the last bit
    from pinlib.physics import driver as drv

    d = load_design(DEMO)
    inputs = _inputs(d, ["display-controller-spi", "nor-flash-spi", "adc-spi", "dac-spi"])
    with memo.run_scope() as held:
        batchsolve.prefetch(inputs)
        keys = [k for k in held if k[0] == "pushline.edge_alone"]
        assert len(keys) >= 4
        for _, r, t_ramp, c in keys:
            assert held[("pushline.edge_alone", r, t_ramp, c)] == float(
                drv.edge_time(r, t_ramp, c))


def test_a_group_of_like_steps_is_parted_by_record_length():
    """Short records are not marched on to a long one's end when another call costs
    less; every edge is in exactly one call, in order of length, each call within
    MAX_ELEMENTS."""
    from types import SimpleNamespace

    def member(i, n):
        g = SimpleNamespace(t=np.arange(n) * 1e-11, n_first=n, sections=[(50.0, 3e-10)])
        return (f"edge{i}", g, 30.0, 1e-9)

    # 30 records of 1,000 samples beside two of 200,000 (invented test data)
    members = [member(i, 200_000 if i in (3, 17) else 1_000) for i in range(32)]
    calls = batchsolve._batches(members, full=False)
    assert sorted(m[0] for c in calls for m in c) == sorted(m[0] for m in members)
    lengths = [[m[1].n_first for m in c] for c in calls]
    assert lengths == [[1_000] * 30, [200_000] * 2]
    # one call would march 32 records of 200,000 steps: more than MAX_ELEMENTS allows
    many = [member(i, 400_000) for i in range(12)]
    for c in batchsolve._batches(many, full=False):
        assert len(c) == 1 or len(c) * 400_000 <= batchsolve.MAX_ELEMENTS
    # like lengths stay in one call
    assert len(batchsolve._batches([member(i, 1_000) for i in range(40)], full=False)) == 1


def test_drivers_of_one_line_share_one_record():
    # memory of many drivers on a long line (a fuzz audit: 255 peripherals on 1 km lines
    # kept a 400,000-sample record per driver and edge, 2.6 GB at 200): the edges of
    # drivers that see the same line share the memo's unit response and keep no record
    # of their own; the record is made when read and not held
    st = [waves.Stretch(0.02, 50.0, 1e-10, 2e-12, "")]  # invented test input
    with memo.run_scope():
        edges = [waves.simulate_edge(st, 30.0, 1e-9, 5e-12, 0.0, 3.3, distributed=True,
                                     edge="rise") for _ in range(3)]
        assert all(e._unit[0] is edges[0]._unit[0] and e._unit[1] is edges[0]._unit[1]
                   for e in edges)
        w = edges[1]
        assert w.t.base is w._unit[0] and not w.t.flags.writeable  # a view, no copy
        v = w.v
        assert v.shape == w.t.shape and "v" not in vars(w) and "t" not in vars(w)
        # the figures are the record's, computed once and kept under the figures' key
        key = waves.unit_edge_key(st, 30.0, 1e-9, 5e-12, True)
        assert memo.held(waves.figures_key(key, 0.0, 3.3)) == (
            w.t_edge, w.overshoot, w.undershoot)
        assert w.t_edge == float(wf.edge_time(w.t, v, 3.3, v_initial=0.0))
