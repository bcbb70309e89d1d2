"""The run memo (pinlib.engines.memo): identical waveform solves are computed once
inside one check, give the same numbers as computing again, and are dropped after."""

from __future__ import annotations

from pathlib import Path

import numpy as np

from pinlib.engines import memo
from pinlib.engines.dispatch import check_design
from pinlib.engines.pushline import Stretch, simulate_edge, waves
from pinlib.model.design import load_design

DEMO = Path(__file__).resolve().parents[1] / "workbooks" / "designs" / "demo-board.toml"

# An invented 10 cm, 50 Ω line with 3 pF at the far end, driven through 40 Ω with a
# 0.5 ns ramp.  # common practice, no source (round test values, not a board's)
LINE = [Stretch(length=0.1, z0=50.0, td=0.6e-9, c=0.6e-9 / 50.0, label="trace")]


def _counting(monkeypatch) -> list:
    calls = []
    solve = waves._unit_edge

    def counted(*args):
        calls.append(args)
        return solve(*args)

    # simulate_edge looks the solver up in its own module
    monkeypatch.setattr(waves, "_unit_edge", counted)
    return calls


def _edge(r=40.0, v_from=0.0, v_to=3.3, edge="rise"):
    return simulate_edge(LINE, r, 0.5e-9, 3e-12, v_from, v_to, distributed=True, edge=edge)


def _same(a, b):
    assert np.array_equal(a.t, b.t) and np.array_equal(a.v, b.v)
    assert (a.t_edge, a.overshoot, a.undershoot, a.settled) == \
        (b.t_edge, b.overshoot, b.undershoot, b.settled)


def test_outside_a_scope_every_solve_computes(monkeypatch):
    calls = _counting(monkeypatch)
    _edge()
    _edge()
    assert len(calls) == 2
    assert not memo.active()


def test_a_repeated_solve_is_served_from_the_memo_with_identical_numbers(monkeypatch):
    fresh_rise, fresh_fall = _edge(), _edge(v_from=3.3, v_to=0.0, edge="fall")
    calls = _counting(monkeypatch)
    with memo.run_scope():
        first = _edge()
        again = _edge()
        fall = _edge(v_from=3.3, v_to=0.0, edge="fall")  # same circuit, other levels
        assert len(calls) == 1
        other = _edge(r=41.0)  # one input differs: solved anew
        assert len(calls) == 2
        assert other.t_edge != first.t_edge
    _same(first, fresh_rise)
    _same(again, fresh_rise)
    _same(fall, fresh_fall)
    assert first.t is not again.t  # each edge owns its arrays
    assert not memo.active()


def test_the_memo_ends_with_its_scope_and_nested_scopes_share_it(monkeypatch):
    calls = _counting(monkeypatch)
    with memo.run_scope() as outer:
        with memo.run_scope() as inner:
            assert inner is outer
            _edge()
            held = len(outer)  # the unit edge, and the figures read off it
        _edge()
        assert len(calls) == 1 and len(outer) == held >= 1
    assert outer == {}
    with memo.run_scope():
        _edge()
    assert len(calls) == 2


def test_the_demo_check_solves_each_distinct_edge_once_and_changes_no_number(monkeypatch):
    design = load_design(DEMO)
    calls = _counting(monkeypatch)
    with monkeypatch.context() as m:
        m.setattr(memo, "remember", lambda key, compute: compute())
        plain = check_design(design).to_json()
    solves_without = len(calls)
    calls.clear()
    memoized = check_design(design).to_json()
    assert memoized == plain
    keys = {(tuple((s.z0, s.td, s.c) for s in a[0]),) + a[1:] for a in calls}
    assert calls and len(keys) == len(calls)
    assert len(calls) < solves_without  # the demo's SPI lines repeat solves


def test_kept_values_and_a_transient_block():
    # keep() stores a value computed elsewhere (never over one already there), known()
    # says whether one is held, transient() drops what its block added and nothing else
    assert not memo.known("a")
    memo.keep("a", 1)  # outside any scope: nothing is kept
    with memo.run_scope():
        assert not memo.known("a")
        memo.keep("a", 1)
        memo.keep("a", 2)
        assert memo.known("a") and memo.remember("a", lambda: 3) == 1
        with memo.transient():
            memo.keep("b", 4)
            assert memo.remember("c", lambda: 5) == 5
        assert memo.known("a") and not memo.known("b") and not memo.known("c")
    assert not memo.known("a")


def test_held_and_nested_transient_blocks():
    # held() gives a stored value or None without computing anything; a transient block
    # inside another drops only its own keys, the outer one then its own (custom case)
    assert memo.held("a") is None
    with memo.run_scope() as held:
        memo.keep("a", 1)
        assert memo.held("a") == 1 and memo.held("z") is None and "z" not in held
        with memo.transient():
            memo.keep("b", 2)
            with memo.transient():
                memo.keep("c", 3)
                memo.keep("a", 9)  # already held: not stored again
            assert list(held) == ["a", "b"]
            memo.keep("d", 4)
        assert list(held) == ["a"] and held["a"] == 1
