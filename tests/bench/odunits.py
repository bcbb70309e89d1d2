"""Measure od-one-bus's ratio for any tree of pinlib: how :data:`SCALAR_BASELINE` of
``bench_opendrain`` was made, and how to make it again.

    python tests/bench/odunits.py TREE [ROUNDS]

runs, in one process with ``TREE``'s ``pinlib`` first on the path, ``evaluate_bus`` on
the bench's eight open-drain buses (the design files of ``TREE``) and this checkout's
:func:`tests.bench.common.reference_work` in turn, and prints the median of each and
their ratio.  For the scalar engine: ``git worktree add --detach /tmp/scalar 7abe15c``
and an environment with ``pydantic>=2.5`` (that tree reads its files through it).
"""

from __future__ import annotations

import gc
import importlib.util
import statistics
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent


def _reference_work():
    spec = importlib.util.spec_from_file_location("_bench_common", HERE / "common.py")
    module = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = module  # dataclasses look their module up
    spec.loader.exec_module(module)
    return module.reference_work


def main(argv: list[str]) -> None:
    tree = Path(argv[0]).resolve()
    rounds = int(argv[1]) if len(argv) > 1 else 40
    unit = _reference_work()
    sys.path.insert(0, str(tree))
    from pinlib.engines import opendrain
    from pinlib.model.design import load_design

    parts = tree / "tests" / "data" / "parts"
    designs = ((tree / "workbooks" / "designs" / "demo-board.toml", ()),
               (tree / "tests" / "data" / "translator-cable.toml", ()),
               (tree / "tests" / "golden" / "designs" / "whatif-buses.toml", (parts,)),
               (tree / "tests" / "golden" / "designs" / "whatif-rc.toml", (parts,)))
    buses = []
    for path, folders in designs:
        design = load_design(path, library_folders=folders)
        buses += [(b, design) for b in design.buses if b.protocol in ("i2c", "smbus")]

    def one_bus():
        for bus, design in buses:
            opendrain.evaluate_bus(bus, design)

    funcs = (one_bus, unit)
    times: list[list[float]] = [[], []]
    for f in funcs:
        f()
    for _ in range(rounds):
        for f, got in zip(funcs, times, strict=True):
            gc.collect()
            start = time.perf_counter()
            f()
            got.append(time.perf_counter() - start)
    t_one, t_unit = (statistics.median(t) for t in times)
    print(f"{len(buses)} buses: evaluate_bus {t_one * 1e3:.2f} ms, reference_work "
          f"{t_unit * 1e3:.3f} ms, ratio {t_one / t_unit:.3f}")


if __name__ == "__main__":
    main(sys.argv[1:])
