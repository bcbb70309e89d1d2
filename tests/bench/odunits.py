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

import importlib.util
import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent


def od_designs(root: Path) -> tuple:
    """The bench's designs under ``root`` (a tree of pinlib), each with the library
    folders it needs: every open-drain bus of them is timed."""
    parts = root / "tests" / "data" / "parts"
    return ((root / "workbooks" / "designs" / "demo-board.toml", ()),
            (root / "tests" / "data" / "translator-cable.toml", ()),
            (root / "tests" / "golden" / "designs" / "whatif-buses.toml", (parts,)),
            (root / "tests" / "golden" / "designs" / "whatif-rc.toml", (parts,)))


def _common():
    """This checkout's tests/bench/common.py, loaded without the package (whose
    ``__init__`` may import this checkout's pinlib before ``TREE``'s is on the path)."""
    spec = importlib.util.spec_from_file_location("_bench_common", HERE / "common.py")
    module = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = module  # dataclasses look their module up
    spec.loader.exec_module(module)
    return module


def main(argv: list[str]) -> None:
    tree = Path(argv[0]).resolve()
    rounds = int(argv[1]) if len(argv) > 1 else 40
    common = _common()
    sys.path.insert(0, str(tree))
    from pinlib.engines import opendrain
    from pinlib.model.design import load_design

    buses = []
    for path, folders in od_designs(tree):
        design = load_design(path, library_folders=folders)
        buses += [(b, design) for b in design.buses if b.protocol in ("i2c", "smbus")]

    def one_bus():
        for bus, design in buses:
            opendrain.evaluate_bus(bus, design)

    t_one, t_unit = common.in_turn((one_bus, common.reference_work), rounds)
    print(f"{len(buses)} buses: evaluate_bus {t_one * 1e3:.2f} ms, reference_work "
          f"{t_unit * 1e3:.3f} ms, ratio {t_one / t_unit:.3f}")


if __name__ == "__main__":
    main(sys.argv[1:])
