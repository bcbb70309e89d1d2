"""pinlib.engines.readout: results made for summaries only rank exactly as full ones."""

from __future__ import annotations

from pathlib import Path

import pytest

from pinlib.engines import memo
from pinlib.engines.dispatch import evaluate_bus
from pinlib.engines.readout import UNSTATED, explained, summaries_only
from pinlib.model.design import load_design

ROOT = Path(__file__).resolve().parents[1]
DESIGNS = [ROOT / "workbooks" / "designs" / "demo-board.toml", ROOT / "tests" / "data" /
           "spi-route.toml", ROOT / "tests" / "data" / "long-spi-link.toml"]


def _push_pull(path):
    design = load_design(path)
    return design, [b for b in design.buses if b.protocol in ("spi", "gpio")]


def _summary(result) -> list:
    return [(seg, line, c.id, c.subject, c.status, c.value, c.limit, c.margin)
            for seg, line, c in result.all_checks()]


def test_the_mode_is_scoped():
    assert explained()
    with summaries_only():
        assert not explained()
    assert explained()


@pytest.mark.parametrize("path", DESIGNS, ids=lambda p: p.stem)
def test_summaries_equal_full_results(path):
    design, buses = _push_pull(path)
    assert buses
    for bus in buses:
        with memo.run_scope():
            full = evaluate_bus(bus, design)
        with memo.run_scope(), summaries_only():
            short = evaluate_bus(bus, design)
        # derived from the engine itself: every check and figure, to the last bit
        assert _summary(short) == _summary(full)
        assert short.figures == full.figures
        assert [ln.figures for ln in short.lines] == [ln.figures for ln in full.lines]


def _display_short_and_full():
    """The demo's display bus evaluated for summaries only, then in full."""
    design, buses = _push_pull(DESIGNS[0])
    display = next(b for b in buses if b.id == "display")
    with memo.run_scope(), summaries_only():
        short = evaluate_bus(display, design)
    return short, evaluate_bus(display, design)


def test_a_long_auto_line_leaves_its_comparison_out():
    short, full = _display_short_and_full()
    for s, f in zip(short.lines, full.lines, strict=True):
        ts = next(c for c in s.checks if c.id == "series-termination")
        tf = next(c for c in f.checks if c.id == "series-termination")
        assert ts.value == tf.value > 0  # the same resistor chosen
        assert tf.details["without"] is not None and ts.details["without"] is None
        assert "not worked out" in ts.message


def test_summaries_leave_the_numbers_of_texts_out():
    short, full = _display_short_and_full()
    pairs = list(zip((c for *_, c in short.all_checks()), (c for *_, c in full.all_checks()),
                     strict=True))
    # what names a check and its limit is the full engine's; only the texts are shorter
    assert all((s.id, s.subject, s.unit, s.source) == (f.id, f.subject, f.unit, f.source)
               for s, f in pairs)
    assert any(UNSTATED in s.message for s, _ in pairs)
    assert not any(UNSTATED in f.message for _, f in pairs)
    assert not any(UNSTATED in n for n in full.notes)
