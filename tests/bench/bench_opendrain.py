"""od-one-bus: the open-drain engine at one bus against the scalar engine it replaced.

Issue 12 routed :func:`pinlib.engines.opendrain.evaluate_bus` through the array engine
(:func:`pinlib.engines.opendrain.batch.build`) at N = 1, with the wording drawn from the
arrays, and removed the scalar one-bus checks; it might do so only if that costs no more
than the scalar engine did.  The scalar engine cannot run any more (it read its parts
through pydantic, no longer a dependency), so both are measured in units of
:func:`tests.bench.common.reference_work`, a fixed piece of numpy and Python work with no
pinlib code in it, timed in turn with the subject in the same process:

- ``evaluate_bus`` on every open-drain bus of the demo, the translator-and-cable test
  design and the two what-if golden designs.  Its baseline is the scalar engine on the
  same buses, its time taken as :data:`SCALAR_BASELINE` times ``reference_work``'s time
  in this run (the ratio of the two measured in turn for the scalar engine, recorded):
  the ratio is that time over ``evaluate_bus``'s, so 1 or more (no slower than the
  scalar engine) meets the target;
- the array path alone (``collect``, then ``build`` at the engine's corners on it) and
  ``collect`` alone (the gathering every path pays), for information.  They are parts
  of ``evaluate_bus``'s work, not the same work another way, so that line has no
  baseline: it prints the time and the share of ``evaluate_bus``'s time (the rest is
  the wording).
"""

from __future__ import annotations

from pathlib import Path

from pinlib.core.protocols import OPEN_DRAIN_PROTOCOLS
from pinlib.engines import opendrain
from pinlib.engines.opendrain.batch import WorstCase, build
from pinlib.model.design import load_design
from tests.bench.common import Result, format_seconds, in_turn, reference_work
from tests.bench.odunits import od_designs

__all__ = ["run"]

ROOT = Path(__file__).resolve().parents[2]

#: ``evaluate_bus`` time of the 8 buses below / ``reference_work`` time for the scalar
#: one-bus engine (``checks.py``), measured 2026-12-03 at commit 7abe15c (a worktree of it
#: on the path, pydantic installed), 40 rounds in turn per run, on the shared 2-core
#: machine: eight runs gave 12.27, 11.99, 12.01, 11.98, 11.63, 12.13, 12.09, 11.61
#: (median 12.0; evaluate_bus 19.5-21.6 ms, reference_work 1.67-1.80 ms), the array
#: engine of the same day 10.6-10.9 in runs taken in turn with them.  ``odunits.py``
#: beside this module measures it for any tree (how to run it for 7abe15c is there).
SCALAR_BASELINE = 12.0


def _buses():
    out = []
    for path, folders in od_designs(ROOT):
        design = load_design(path, library_folders=folders)
        out += [(b, design) for b in design.buses if b.protocol in OPEN_DRAIN_PROTOCOLS]
    return out


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
    # the two alone in turn, as SCALAR_BASELINE was measured; then the information
    t_one, t_unit = in_turn((one_bus, reference_work), n)
    units = t_one / t_unit
    t_scalar = SCALAR_BASELINE * t_unit
    t_again, t_collect, t_arrays = in_turn((one_bus, gather, arrays), max(10, n // 2))
    return [Result(f"od-one-bus: evaluate_bus, {len(buses)} buses", t_one,
                   f"scalar engine ({SCALAR_BASELINE:g} x reference_work "
                   f"{format_seconds(t_unit)}, recorded at 7abe15c)", t_scalar,
                   target="ratio >= 1x (no slower than the scalar engine)",
                   passed=units <= SCALAR_BASELINE,
                   extra=[f"{units:.3g} reference works (scalar {SCALAR_BASELINE:g})"]),
            Result(f"od-one-bus: {len(buses)} buses, arrays without wording", t_arrays,
                   no_baseline="a part of evaluate_bus's work",
                   extra=[f"{t_arrays / t_again:.0%} of evaluate_bus's "
                          f"{format_seconds(t_again)} in turn",
                          f"collect alone {format_seconds(t_collect)} "
                          f"({t_collect / t_again:.0%})"])]
