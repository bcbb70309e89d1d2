"""Library load: 1,000 generated team part files merged with the built-in library.

:func:`pinlib.library.loader.load_library` reads, merges (``extends`` chains up to
three files deep) and validates every part.

- The load's time against its target (1 s).  No baseline: nothing else does the load's
  work.  Beside it, for information, a plain parse of the same 1,000 files by the
  reader pinlib uses (``tomli``, else ``tomllib``): a part of the load's work, the rest
  being merging and validating.
- The load of 1,000 files against 10 times the load of 100 (what linear growth would
  cost): above 1, the cost grows less than linearly (the built-in library's load is
  paid once in both).
"""

from __future__ import annotations

import tempfile
from pathlib import Path

from pinlib.core.tomlfile import tomllib
from pinlib.library.loader import load_library
from tests.bench.common import Result, format_seconds, linear, median_time
from tests.bench.generate import write_parts

__all__ = ["run"]

N = 1000
TARGET = 1.0  # s


def run(repeats: int = 5, quick: bool = False) -> list[Result]:
    with tempfile.TemporaryDirectory(prefix="pinlib-bench-") as tmp:
        big, small = Path(tmp) / "team-1000", Path(tmp) / "team-100"
        paths = write_parts(big, N)
        write_parts(small, N // 10)
        lib = load_library([big], env=False)
        if lib.problems or sum(p.startswith("gen-") for p in lib.parts) != N:
            raise RuntimeError(f"generated library did not load: {lib.problems[:3]}")

        def parse_only():
            for p in paths:
                tomllib.loads(p.read_text(encoding="utf-8"))

        t_load = median_time(lambda: load_library([big], env=False), repeats)
        t_parse = median_time(parse_only, repeats)
        t_small = median_time(lambda: load_library([small], env=False), repeats)
    n_all = len(lib.parts)
    k = N // (N // 10)
    return [
        Result(f"library load: {N} part files", t_load,
               no_baseline="nothing else does the load's work",
               target=f"time < {TARGET:g} s", passed=t_load < TARGET,
               extra=[f"{n_all} parts with the built-in ones",
                      f"{tomllib.__name__} parse alone {format_seconds(t_parse)} "
                      f"({t_parse / t_load:.0%} of the load)"]),
        Result(f"library load: {N} vs {N // 10} files", t_load,
               f"{k} x the {N // 10}-file load ({format_seconds(t_small)}; linear growth)",
               linear(k, t_small)),
    ]
