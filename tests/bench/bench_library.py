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
- :func:`pinlib.library.record.record_value` writing one value into a part file of
  10,000 pins written alike (about 0.6 MB) against 10 times the same into one of 1,000:
  linear growth, target ``ratio > 0.5x``.  Its matching of the lines before and after the
  edit was once quadratic on such a file (a 1 MB part did not finish in a minute).  Most
  of a record's time is tomlkit's parse of the file, which is linear.
"""

from __future__ import annotations

import tempfile
from pathlib import Path

from pinlib.core.tomlfile import tomllib
from pinlib.library.loader import load_library
from pinlib.library.record import record_value
from tests.bench.common import Result, format_seconds, linear, median_time
from tests.bench.generate import write_parts

__all__ = ["run"]

N = 1000
TARGET = 1.0  # s
#: Pins of the large part file a value is recorded into (a tenth of them in its baseline).
PINS = 10_000


def _write_many_pins(folder: Path, n: int) -> str:
    """A part file of ``n`` gpio pins written alike (the lines every pin repeats are what
    made the old matching quadratic); returns its id."""
    folder.mkdir(parents=True, exist_ok=True)
    pid = f"gen-pins-{n}"
    lines = ['format = "pinlib.part/1"', f'id = "{pid}"', 'title = "Many pins"',
             'category = "logic"', 'supply = { min = "1.7 V", max = "3.6 V" }',
             'provenance = { basis = "datasheet", source = "generated", '
             'recorded = 2026-01-01 }', ""]
    for i in range(n):
        lines += [f"[pins.p{i}]", 'function = "gpio"', 'drive = "push-pull"',
                  f'c_in = {{ value = "{5 + i % 7} pF", source = "table {i}" }}', ""]
    (folder / f"{pid}.toml").write_text("\n".join(lines), encoding="utf-8")
    return pid


def _record_timing(tmp: Path, n: int, repeats: int) -> float:
    pid = _write_many_pins(tmp / f"pins-{n}", n)
    lib = load_library([tmp / f"pins-{n}"], env=False)
    if lib.problems or pid not in lib.parts:
        raise RuntimeError(f"generated part did not load: {lib.problems[:3]}")
    return median_time(lambda: record_value(lib, pid, f"p{n // 2}.c_in", "9 pF",
                                            "bench, table 1"), repeats)


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
        pins = PINS // 10 if quick else PINS
        t_record = _record_timing(Path(tmp), pins, min(repeats, 3))
        t_record_small = _record_timing(Path(tmp), pins // 10, min(repeats, 3))
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
        Result(f"record one value: {pins:,} pins", t_record,
               f"10 x the same in {pins // 10:,} pins ({format_seconds(t_record_small)}; "
               "linear growth)", linear(10, t_record_small),
               target="ratio > 0.5x (under 2x linear growth)",
               passed=linear(10, t_record_small) / t_record > 0.5),
    ]
