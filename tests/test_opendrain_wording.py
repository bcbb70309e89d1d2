"""The open-drain wording walks the batch's checks in the batch's order and words every
one (pinlib.engines.opendrain.wording.Words): a wording out of step with the batch is a
RuntimeError naming the check ids, under ``python -O`` too, never a check worded with
another check's numbers."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest

from pinlib.engines import opendrain
from pinlib.engines.opendrain import wording
from pinlib.model.design import load_design

DESIGN = Path(__file__).parent.parent / "workbooks" / "designs" / "demo-board.toml"


def _first_bus():
    design = load_design(DESIGN)
    bus = next(b for b in design.buses if b.protocol in ("i2c", "smbus"))
    return bus, design


def _altered(monkeypatch, alter):
    """Hand every :class:`wording.Words` the batch's checks as ``alter`` leaves them."""
    seen = []
    init = wording.Words.__init__

    def altered_init(self, ctx, seg_in, checks):
        checks = alter(list(checks))
        seen.append([c.id for c in checks])
        init(self, ctx, seg_in, checks)

    monkeypatch.setattr(wording.Words, "__init__", altered_init)
    return seen


def _swap_first_pair(checks):
    i = next(i for i in range(len(checks) - 1) if checks[i].id != checks[i + 1].id)
    checks[i], checks[i + 1] = checks[i + 1], checks[i]
    return checks


def test_the_demo_bus_is_worded_in_the_batchs_order(monkeypatch):
    bus, design = _first_bus()
    seen = _altered(monkeypatch, lambda checks: checks)
    result = opendrain.evaluate_bus(bus, design)
    # each segment's batch checks, worded one by one in their order
    assert [[c.id for c in s.checks] for s in result.segments] == seen


def test_two_checks_out_of_order_raise_naming_both(monkeypatch):
    bus, design = _first_bus()
    seen = _altered(monkeypatch, _swap_first_pair)
    with pytest.raises(RuntimeError, match="out of step with the batch") as err:
        opendrain.evaluate_bus(bus, design)
    ids = seen[0]
    i = next(i for i in range(len(ids) - 1) if ids[i] != ids[i + 1])
    # the batch's id at the place and the one the wording expected there (the swap's
    # other half) are both named
    assert f"'{ids[i]}'" in str(err.value) and f"'{ids[i + 1]}'" in str(err.value)


def test_a_check_left_unworded_raises_naming_it(monkeypatch):
    bus, design = _first_bus()

    def one_more(checks):
        return [*checks, checks[0]]

    seen = _altered(monkeypatch, one_more)
    with pytest.raises(RuntimeError, match="unworded") as err:
        opendrain.evaluate_bus(bus, design)
    assert f"unworded in segment '{bus.segments[0].id}': {seen[0][-1]} (" in str(err.value)


def test_a_check_missing_raises_not_an_index_error(monkeypatch):
    bus, design = _first_bus()
    _altered(monkeypatch, lambda checks: checks[:-1])
    with pytest.raises(RuntimeError, match="none left"):
        opendrain.evaluate_bus(bus, design)


_REORDER = """\
import sys
from pinlib.engines import opendrain
from pinlib.engines.opendrain import wording
from pinlib.model.design import load_design
init = wording.Words.__init__
def swapped(self, ctx, seg_in, checks):
    checks = list(checks)
    i = next(i for i in range(len(checks) - 1) if checks[i].id != checks[i + 1].id)
    checks[i], checks[i + 1] = checks[i + 1], checks[i]
    init(self, ctx, seg_in, checks)
wording.Words.__init__ = swapped
design = load_design(sys.argv[1])
bus = next(b for b in design.buses if b.protocol in ("i2c", "smbus"))
try:
    opendrain.evaluate_bus(bus, design)
except RuntimeError as err:
    print("raised:", err)
    sys.exit(0)
sys.exit(1)
"""


def test_the_check_holds_under_python_O(tmp_path):
    # python -O drops assert statements; the order check must raise all the same
    script = tmp_path / "reorder.py"
    script.write_text(_REORDER, encoding="utf-8")
    root = Path(__file__).parent.parent
    env = {**os.environ, "PYTHONPATH": str(root), "PINLIB_CACHE_DIR": "off"}
    done = subprocess.run([sys.executable, "-O", str(script), str(DESIGN)], cwd=root,
                          capture_output=True, text=True, timeout=120, env=env)
    assert done.returncode == 0, done.stdout + done.stderr
    assert "out of step with the batch" in done.stdout


def test_the_capacitance_breakdown_names_only_what_the_segment_has():
    # the demo's main segment has cables and extra capacitance, its 1.8 V segment
    # neither: "cables 0 F" read as if a cable were there (invented demo data)
    design = load_design(DESIGN)
    res = opendrain.evaluate_bus(design.bus("sensors"), design)
    cb = [c for _, _, c in res.all_checks() if c.id == "bus-capacitance"]
    texts = [c.message for c in cb]
    assert len(texts) == 4
    with_all = [t for t in texts if "cables" in t]
    assert len(with_all) == 2 and all("extra" in t and "traces" in t for t in with_all)
    bare = [t for t in texts if "cables" not in t]
    assert len(bare) == 2
    assert all("pins" in t and "traces" in t and "extra" not in t and " 0 F" not in t
               for t in bare)
    # details keep all four, zeros included
    assert all(set(c.details) >= {"pins", "traces", "cables", "extra"} for c in cb)
