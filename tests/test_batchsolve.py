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
