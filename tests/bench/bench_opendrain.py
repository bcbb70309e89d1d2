"""od-one-bus: the open-drain array engine at one variant against the one-bus engine.

Issue 12 routes :func:`pinlib.engines.opendrain.evaluate_bus` through the array engine
(:func:`pinlib.engines.opendrain.batch.build`) at N = 1; it may do so only if that costs
no more than the one-bus path does today.  This bench times, on every open-drain bus
of the demo, the translator-and-cable test design and the two what-if golden designs:

- the array path: the inputs gathered once (``collect``), then ``build`` at the
  engine's corners (``WorstCase(1)``) on them;
- the baseline: ``evaluate_bus`` (the inputs gathered, every check with its wording).

The two are timed in turn, run by run, in the same process (the shared machine's speed
drifts), and the medians compared: a ratio at or below 1 meets the target.
"""

from __future__ import annotations

import gc
import statistics
import time
from pathlib import Path

from pinlib.core.protocols import OPEN_DRAIN_PROTOCOLS
from pinlib.engines import opendrain
from pinlib.engines.opendrain.batch import WorstCase, build
from pinlib.model.design import load_design
from tests.bench.common import Result

__all__ = ["run"]

ROOT = Path(__file__).resolve().parents[2]
PARTS = ROOT / "tests" / "data" / "parts"
DESIGNS = (
    (ROOT / "workbooks" / "designs" / "demo-board.toml", ()),
    (ROOT / "tests" / "data" / "translator-cable.toml", ()),
    (ROOT / "tests" / "golden" / "designs" / "whatif-buses.toml", (PARTS,)),
    (ROOT / "tests" / "golden" / "designs" / "whatif-rc.toml", (PARTS,)),
)


def _buses():
    out = []
    for path, folders in DESIGNS:
        design = load_design(path, library_folders=folders)
        out += [(b, design) for b in design.buses if b.protocol in OPEN_DRAIN_PROTOCOLS]
    return out


def _in_turn(funcs, repeats: int) -> list[float]:
    """Median time of each function, the functions run one after another in each round."""
    for f in funcs:
        f()
    times: list[list[float]] = [[] for _ in funcs]
    for _ in range(repeats):
        for f, got in zip(funcs, times, strict=True):
            gc.collect()
            start = time.perf_counter()
            f()
            got.append(time.perf_counter() - start)
    return [statistics.median(t) for t in times]


def run(repeats: int = 40, quick: bool = False) -> list[Result]:
    buses = _buses()

    def one_bus():
        for bus, design in buses:
            opendrain.evaluate_bus(bus, design)

    def arrays():
        for bus, design in buses:
            build(bus, design, WorstCase(1), collected=opendrain.collect(bus, design))

    t_arrays, t_one = _in_turn((arrays, one_bus), max(repeats, 10 if quick else 40))
    ratio = t_arrays / t_one
    return [Result(f"od-one-bus: {len(buses)} open-drain buses, array engine at N=1",
                   t_arrays, "evaluate_bus", t_one, ratio, "of the one-bus engine's time",
                   target="<= 1", passed=ratio <= 1.0)]
