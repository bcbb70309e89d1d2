"""Push-pull buses (SPI, GPIO) at the worst corners of their tolerances (issue 13.1).

The reproducer is an invented SPI link (tests/data/spi-length-tolerance.toml): 80 cm
lines at 15 % length tolerance whose CIPO setup passes on the nominal board and fails
on the same board with 92 cm lines (80 cm + 15 %).  The engine's result, the corner
study and the board built at the worst corner must all say the same.
"""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest

from pinlib.engines import ppworst
from pinlib.engines.dispatch import check_design
from pinlib.engines.pushpull import evaluate_board, evaluate_bus
from pinlib.model.design import load_design
from pinlib.studies import whatif

DATA = Path(__file__).parent / "data"


def _design():
    return load_design(DATA / "spi-length-tolerance.toml")


def _scaled(bus, factor):
    """The bus with every line's sections scaled by ``factor``."""
    lines = {s: replace(ln, sections=tuple(replace(x, length=x.length * factor)
                                          for x in ln.sections))
             for s, ln in bus.lines.items()}
    return replace(bus, lines=lines, length_tolerance=None)


def test_cipo_setup_taken_at_the_long_corner():
    d = _design()
    bus = d.buses[0]
    nominal = evaluate_board(bus, d).check("cipo-setup")
    assert nominal.status != "fail"           # 80 cm: inside (the old answer of check)
    # derived from the tolerance: 80 cm + 15 % = 92 cm on every line
    long_board = evaluate_board(_scaled(bus, 1.15), d).check("cipo-setup")
    assert long_board.status == "fail"
    got = evaluate_bus(bus, d).check("cipo-setup")
    assert got.status == "fail"
    # the worst corner is SCLK and CIPO long (the round trip): the same number as the
    # board whose lines are all 92 cm (COPI and CS do not enter the CIPO budget)
    assert abs(got.value - long_board.value) <= 1e-12 * abs(long_board.value)
    assert "link sclk length +15 %" in got.message and "link cipo length +15 %" in got.message
    assert "copi length" not in got.message
    assert got.details["corner"]
    res = evaluate_bus(bus, d)
    assert res.figures["cipo_setup_margin"].value < 0
    assert any("worst corner" in n for n in res.notes)


def test_corners_and_worst_case_status_agree():
    d = _design()
    res = check_design(d)
    cr = whatif.corners(d)
    for c in cr.checks:
        assert c.status == c.nominal_status, c.name
    cs = cr.find("link", "cipo-setup")
    assert cs.status == "fail" and cs.to_json()["worst_case_status"] == "fail"
    assert res.status == "fail" and res.exit_code() == 1


def test_no_tolerance_leaves_the_board_as_it_is():
    d = _design()
    bus = replace(d.buses[0], length_tolerance=None)
    a, b = evaluate_bus(bus, d), evaluate_board(bus, d)
    assert a.to_json() == b.to_json()


def test_search_finds_the_worst_vertex_and_screens_above_the_limit():
    # a made-up margin: check 0 falls with parameters 0 and 2 high and 1 low, check 1
    # is lowest at the far vertex; linear, so the screening finds the same vertices
    w = np.array([[-1.0, 2.0, -0.5, 0.0, 0.0, 0.0, 0.0, 0.1],
                  [1.0, 1.0, 1.0, 1.0, 1.0, 1.0, 1.0, 1.0]])

    def margins(u):
        return 10.0 + u @ w.T

    for limit in (8, 3):
        got = ppworst.search(8, margins, limit=limit)
        assert got.shape == (2, 8)
        assert list(got[0, :3]) == [1.0, -1.0, 1.0] and got[0, 7] == -1.0
        assert (got[1] == -1.0).all()


def test_shared_line_analyses_change_no_number(monkeypatch):
    from pinlib.engines.pushline import line

    d = _design()
    bus = d.buses[0]
    shared = evaluate_bus(bus, d).to_json()
    # every line analysed afresh at every corner: derived from the same engine
    monkeypatch.setattr(line, "_line_key", lambda *a: None)
    assert evaluate_bus(bus, d).to_json() == shared


def _assembled(bus, d):
    """The worst case assembled from the nominal board alone (every check's worst corner
    the nominal one)."""
    nominal = evaluate_board(bus, d)
    specs = ppworst.parameter_specs(bus)
    m = len(ppworst.check_names(bus, nominal))
    zero = (0.0,) * len(specs)
    figs = {f: nominal.figures[f].value for f in ppworst._LOWEST_FIGURES
            if f in nominal.figures}
    seen = {zero: (np.zeros(m), np.ones(m, dtype=bool), figs, None)}
    return nominal, ppworst._assemble(bus, nominal, specs, np.zeros((m, len(specs))), seen)


def test_assembling_walks_every_named_check_or_raises(monkeypatch):
    d = _design()
    bus = d.buses[0]
    nominal, got = _assembled(bus, d)
    assert [c.to_json() for c in got.checks] == [c.to_json() for c in nominal.checks]
    # a walk out of step with the names is a RuntimeError, under python -O too
    names = ppworst.check_names
    monkeypatch.setattr(ppworst, "check_names",
                        lambda b, r: [*names(b, r), {"name": "extra", "engine": None}])
    with pytest.raises(RuntimeError, match=r"checks assembled against \d+ named \(.*extra\)"):
        _assembled(bus, d)


def test_clock_figures_and_their_notes_give_the_worst_corner():
    # the figure read the lowest clock over the corners and its note the nominal one's
    # (29.5 MHz in the note, 28.8 MHz in the figure); the edge rule's figure was the
    # nominal board's while the edge-time check at the long corner allowed less
    from pinlib.core.labels import path_label
    from pinlib.core.quantity import format_si

    d = _design()
    bus = d.buses[0]
    res = evaluate_bus(bus, d)
    nominal = evaluate_board(bus, d)
    # derived from the tolerance: every line 80 cm + 15 %, a corner of the search
    long_board = evaluate_board(_scaled(bus, 1.15), d)
    f_nom = nominal.figures["max_clock"].value
    f_low = res.figures["max_clock"].value
    assert f_low <= long_board.figures["max_clock"].value * (1 + 1e-12) < f_nom
    note = next(n for n in res.notes if n.startswith("highest clock ")
                and "edge rule" not in n)
    assert note.startswith(f"highest clock {format_si(f_low, 'Hz')} at the worst corner")
    assert f"({format_si(f_nom, 'Hz')} as designed" in note
    assert f"set by {path_label(res.figures['max_clock_limited_by'].value)}" in note
    # the edge rule: the slowest edge-time check at its worst corner sets it (10 % of
    # the period, the rule the check and the figure share); here the board as designed
    # has the slowest edge, and the note is its own
    slowest = max(c.value for ln in res.lines for c in ln.checks if c.id == "edge-time")
    f_edge = res.figures["max_clock_edge_rule"].value
    assert f_edge == pytest.approx(0.1 / slowest, rel=1e-12)
    assert f_edge == nominal.figures["max_clock_edge_rule"].value
    assert any(n.startswith(f"highest clock by the edge rule of thumb "
                            f"{format_si(f_edge, 'Hz')}: ") for n in res.notes)
