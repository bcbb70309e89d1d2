"""Many designs checked at once (``pinlib check DESIGN... --jobs N``).

:func:`pinlib.studies.many.check_many` over 200 generated designs (each 4 buses of 5
devices, :func:`tests.bench.generate.large_design`), in 2 worker processes against the
same designs in one process: the ratio is the speed-up (at most 2 on two free cores; the
shared machine gives less when others are busy).  And the cost per design with 200
designs, in one process, against the cost per design with 20 (flat growth): about 1
when nothing grows with the number of designs, below 1 when something does.
"""

from __future__ import annotations

import tempfile
from pathlib import Path

from pinlib.studies.many import check_many
from tests.bench.common import Result, format_seconds, median_time
from tests.bench.generate import large_design

__all__ = ["run"]

DESIGNS, FEW, BUSES, DEVICES = 200, 20, 4, 5


def _designs(folder: Path, n: int) -> list[Path]:
    text = large_design(BUSES, DEVICES)
    out = []
    for i in range(n):
        path = folder / f"board-{i:03d}.toml"
        path.write_text(text, encoding="utf-8")
        out.append(path)
    return out


def run(repeats: int = 3, quick: bool = False) -> list[Result]:
    n = DESIGNS // 4 if quick else DESIGNS
    with tempfile.TemporaryDirectory(prefix="pinlib-bench-") as tmp:
        paths = _designs(Path(tmp), n)
        got = check_many(paths[:2], jobs=1)
        if any(s.status == "error" or not s.counts["pass"] for s in got):
            raise RuntimeError("the generated designs were not checked")
        t_one = median_time(lambda: check_many(paths, jobs=1), repeats, warmup=0)
        t_two = median_time(lambda: check_many(paths, jobs=2), repeats, warmup=0)
        t_few = median_time(lambda: check_many(paths[:FEW], jobs=1), repeats, warmup=1)
    per_few, per_many = t_few / FEW, t_one / n
    return [
        Result(f"check {n} designs, --jobs 2", t_two, "the same in one process", t_one,
               extra=["2x = both cores free", f"{format_seconds(t_two / n)} a design"]),
        Result(f"cost per design, {n} designs", per_many,
               f"a design's cost at {FEW} designs (flat growth)", per_few,
               target="ratio > 0.67x (less than 1.5x the cost)",
               passed=per_many / per_few < 1.5),
    ]
