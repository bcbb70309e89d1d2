"""A large generated design checked: 100 buses of 20 devices each.

:func:`pinlib.model.design.load_design` (with the library load) and
:func:`pinlib.engines.dispatch.check_design` in this process, against a target of 2 s.
The baseline is what linear growth would cost: 10 times the time of the same kind of design with 10
buses, loaded and checked the same way.  Above 1, the cost grows less than linearly
with the buses (the fixed part, the library load, still counts at 10 buses).
"""

from __future__ import annotations

import tempfile
from pathlib import Path

from pinlib.engines.dispatch import check_design
from pinlib.model.design import load_design
from tests.bench.common import Result, format_seconds, linear, median_time
from tests.bench.generate import large_design

__all__ = ["run"]

BUSES, DEVICES = 100, 20
TARGET = 2.0  # s


def run(repeats: int = 5, quick: bool = False) -> list[Result]:
    with tempfile.TemporaryDirectory(prefix="pinlib-bench-") as tmp:
        big, small = Path(tmp) / "large.toml", Path(tmp) / "small.toml"
        big.write_text(large_design(BUSES, DEVICES), encoding="utf-8")
        small.write_text(large_design(BUSES // 10, DEVICES), encoding="utf-8")
        result = check_design(load_design(big))
        if len(result.buses) != BUSES or any(not b.checks for b in result.buses):
            raise RuntimeError("the large design was not checked bus by bus")
        t_big = median_time(lambda: check_design(load_design(big)), repeats)
        t_small = median_time(lambda: check_design(load_design(small)), repeats)
    statuses = sorted({b.status for b in result.buses})
    return [Result(f"large design: {BUSES} buses x {DEVICES} devices", t_big,
                   f"10 x the {BUSES // 10}-bus design ({format_seconds(t_small)}; "
                   "linear growth)", linear(10, t_small),
                   target=f"time < {TARGET:g} s", passed=t_big < TARGET,
                   extra=["bus status " + "/".join(statuses)])]
