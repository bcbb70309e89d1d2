"""The corner study (`pinlib check --corners`) on SPI buses: the corner boards evaluated
as arrays (pinlib.engines.ppcorners, through ppbatch.build_rows) against the study's
board-by-board path (ppbatch.build: the engine at each board, no memo), whole results
compared as JSON text, to the last character.

The designs are the demo and invented ones of tests/data, some with tolerances added
here (the variants of tests/test_ppcorners.py): the exhaustive search and the screened
one (which evaluates the nominal board too), a receiver that never switches, a device on
its own rail, a GPIO bus beside an SPI bus (which stays board by board), and buses whose
checks have their worst at different corners.
"""

from __future__ import annotations

import contextlib
import json
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest

from pinlib.engines import ppbatch, ppcorners, ppvariant
from pinlib.engines.memo import run_scope
from pinlib.engines.ppvariant import parameter_specs
from pinlib.engines.pushpull import evaluate_board
from pinlib.model.design import load_design
from pinlib.studies.whatif import cornersearch
from tests.test_ppcorners import _variants

ROOT = Path(__file__).parent.parent
DATA = ROOT / "tests" / "data"
DEMO = ROOT / "workbooks" / "designs" / "demo-board.toml"

#: (design file, SPI bus given tolerances here or None, variant of tests/test_ppcorners)
CASES = [
    (DEMO, None, None),
    (DATA / "long-spi-link.toml", None, None),
    (DATA / "spi-5v-flash.toml", None, None),
    (DATA / "spi-length-tolerance.toml", "link", "with-extra-c"),   # 9 parameters: screened
    (DATA / "spi-cipo-never-high.toml", "flash", "pins"),           # 8: CIPO never high
    (DEMO, "flash", "own-rail"),                                    # 6: every vertex
    (DATA / "spi-fast-corner.toml", None, None),    # hold at the controller's fast corner
]


def _design(path, bus_id, variant):
    d = load_design(path)
    if bus_id is None:
        return d
    bus = next(b for b in d.buses if b.id == bus_id)
    return replace(d, buses=(dict(_variants(bus))[variant],), couplings=())


def _run(design, monkeypatch, arrays: bool):
    """The study's JSON text, and which SPI buses took each path."""
    took: dict[str, set] = {"rows": set(), "build": set()}
    build, build_rows = ppbatch.build, ppbatch.build_rows

    def spy_build(bus, *a, **k):
        took["build"].add(bus.id)
        return build(bus, *a, **k)

    def spy_rows(bus, *a, **k):
        got = build_rows(bus, *a, **k)
        if got is not None:
            took["rows"].add(bus.id)
        return got

    with monkeypatch.context() as mp:
        mp.setattr(ppbatch, "build", spy_build)
        mp.setattr(ppbatch, "build_rows", spy_rows)
        if not arrays:
            # the path as it was before the arrays: the engine board by board, no memo
            mp.setattr(cornersearch, "corner_rows", lambda *a, **k: None)
            mp.setattr(cornersearch, "run_scope", contextlib.nullcontext)
        res = cornersearch.corners(design)
    return json.dumps(res.to_json(), indent=1, allow_nan=True), took, res


@pytest.mark.parametrize(("path", "bus_id", "variant"), CASES,
                         ids=[f"{p.stem}-{v or 'as-is'}" for p, _, v in CASES])
def test_arrays_equal_board_by_board(path, bus_id, variant, monkeypatch):
    d = _design(path, bus_id, variant)
    fast, took, res = _run(d, monkeypatch, arrays=True)
    slow, took_slow, _ = _run(d, monkeypatch, arrays=False)
    assert fast == slow   # derived from the engine itself, board by board
    spi = {b.id for b in d.buses if b.protocol == "spi" and parameter_specs(b)}
    assert spi and took["rows"] == spi            # every toleranced SPI bus as arrays
    assert not took["build"] & spi                # and none of them board by board
    assert took_slow["rows"] == set() and spi <= took_slow["build"]
    others = {b.id for b in d.buses if b.protocol == "gpio" and parameter_specs(b)}
    assert others <= took["build"]                # GPIO stays board by board
    if variant is not None:
        # the bus's checks have their worst at different corners
        corners = {tuple(c.corner[i][:2] for i in range(len(c.corner)))
                   for c in res.checks if c.corner}
        assert len(corners) > 1


def test_rows_at_the_nominal_board_and_a_floor(monkeypatch):
    """A row all 0 is the nominal board; the floor bounds a factor from below."""
    d = _design(DATA / "spi-length-tolerance.toml", "link", "pins")
    bus = d.buses[0]
    k = len(parameter_specs(bus))
    with run_scope():
        nominal = evaluate_board(bus, d)
        got = ppbatch.build_rows(bus, nominal, np.zeros((2, k)),
                                 ppcorners.corner_rows(bus, d, nominal))
        want = ppbatch.build(bus, d, {s[-1]: np.ones(2) for s in parameter_specs(bus)}, 2,
                             nominal=nominal)
    assert got is not None and got.n == 2
    for a, b in zip(got.items, want.items, strict=True):
        for f in ("margin", "value", "limit", "status"):
            x, y = getattr(a, f), getattr(b, f)
            assert (x is None) == (y is None), (a.id, f)
            if x is not None:   # derived from the engine at the same board
                np.testing.assert_array_equal(x, y, err_msg=f"{a.id} {f}")
    # a tolerance of 100 % at its low end: the factor 0 is held at the floor
    big = replace(bus, length_tolerance=1.0)
    specs = parameter_specs(big)
    i = next(n for n, s in enumerate(specs) if s[1] == "length")
    seen = []
    rows = ppcorners.corner_rows(big, d, evaluate_board(big, d), floor=0.25)
    vary = ppvariant.vary_bus  # the corner rows vary each line's bus there

    def spy(b, factor, *a):
        seen.append(factor(specs[i][-1]))
        return vary(b, factor, *a)

    monkeypatch.setattr(ppvariant, "vary_bus", spy)
    u = np.zeros((1, len(specs)))
    u[0, i] = -1.0
    rows(u)
    assert 0.25 in seen and 0.0 not in seen   # common practice, no source: max(1 - 1.0, 0.25)


def test_results_handed_in_equal_results_evaluated_here():
    """`pinlib check --corners` hands the study the buses it has just checked."""
    from pinlib.engines.dispatch import check_design

    d = load_design(DEMO)
    here = cornersearch.corners(d).to_json()
    given = cornersearch.corners(d, results={b.id: b for b in check_design(d).buses})
    assert given.to_json() == here   # derived from the engine itself, the same buses
