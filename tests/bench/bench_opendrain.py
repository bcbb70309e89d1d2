"""od-one-bus: the open-drain engine at one bus against what gathering its inputs costs.

Issue 12 routed :func:`pinlib.engines.opendrain.evaluate_bus` through the array engine
(:func:`pinlib.engines.opendrain.batch.build`) at N = 1, with the wording drawn from the
arrays, and removed the scalar one-bus checks; it might do so only if that costs no more
than the scalar engine did.  This bench times, on every open-drain bus of the demo, the
translator-and-cable test design and the two what-if golden designs, in turn, run by run,
in the same process (the shared machine's speed drifts), and compares medians:

- ``evaluate_bus`` against ``collect`` alone (the gathering every path pays): that ratio
  against :data:`SCALAR_BASELINE`, the same ratio of the scalar engine measured before
  it was removed (the in-process ``collect`` makes the two comparable across machines
  and loads); at or below it meets the target;
- the array path alone (``collect``, then ``build`` at the engine's corners on it)
  against ``evaluate_bus``: what the wording costs on top, for information.
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


#: ``evaluate_bus`` time / ``collect`` time of the scalar one-bus engine (``checks.py``),
#: measured 2026-12-03 at commit 7abe15c on the shared 2-core machine: five runs of 40
#: rounds each in turn, ratios 3.40, 3.27, 3.31, 3.22, 3.28 (median 3.28;
#: evaluate_bus 21.0-24.7 ms, collect 6.2-7.5 ms for the 8 buses below).
SCALAR_BASELINE = 3.28


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

    def gather():
        for bus, design in buses:
            opendrain.collect(bus, design)

    n = max(repeats, 10 if quick else 40)
    t_one, t_collect, t_arrays = _in_turn((one_bus, gather, arrays), n)
    per_collect = t_one / t_collect
    return [Result("od-one-bus: evaluate_bus / collect", t_one, "collect", t_collect,
                   per_collect, f"of collect's time (scalar engine {SCALAR_BASELINE:g}x)",
                   target=f"<= {SCALAR_BASELINE:g}", passed=per_collect <= SCALAR_BASELINE),
            Result(f"od-one-bus: {len(buses)} buses, arrays without wording", t_arrays,
                   "evaluate_bus", t_one, t_arrays / t_one, "of evaluate_bus's time")]
