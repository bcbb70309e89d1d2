"""Timing helpers and the one-line result format shared by the benchmarks."""

from __future__ import annotations

import gc
import math
import os
import platform
import statistics
import sys
import time
from dataclasses import dataclass, field

import numpy as np

__all__ = ["Result", "median_time", "machine", "format_seconds", "format_ratio",
           "reference_work", "in_turn"]


def median_time(func, repeats: int, *, warmup: int = 1) -> float:
    """Median wall time of ``func()`` over ``repeats`` runs after ``warmup`` runs. [s]"""
    for _ in range(warmup):
        func()
    times = []
    for _ in range(repeats):
        gc.collect()
        start = time.perf_counter()
        func()
        times.append(time.perf_counter() - start)
    return statistics.median(times)


def in_turn(funcs, repeats: int) -> list[float]:
    """Median wall time of each of ``funcs``, after one warm-up run of each: the
    functions take turns in every round (a shared machine's speed drifts, and turns
    give every function the same drift). [s]"""
    for func in funcs:
        func()
    times: list[list[float]] = [[] for _ in funcs]
    for _ in range(repeats):
        for func, got in zip(funcs, times, strict=True):
            gc.collect()
            start = time.perf_counter()
            func()
            got.append(time.perf_counter() - start)
    return [statistics.median(t) for t in times]


def reference_work() -> float:
    """A fixed piece of work of the kind pinlib's engines do at one variant, with no
    pinlib code in it: small numpy arrays (where, sums, logs) between plain float
    arithmetic, dicts and string formatting.  A benchmark times it beside its subject, in
    turn, so that a ratio against it compares runs of code that has since changed (the
    subject's old form can no longer be run) on any machine and under any load.
    Returns a number so that the work is not optimised away."""
    a = np.array([1.0e-9, 2.2e-9, 3.3e-9])
    total = 0.0
    for i in range(400):
        b = np.where(a > 2.0e-9, a * 1.5, a - 1.0e-10)
        total += float(np.log(b).sum()) + math.log1p(i) / (1.0 + i)
        row = {"value": total, "limit": 0.3 * i, "unit": "s"}
        total += len(f"{row['value']:.4g} against {row['limit']:.4g} {row['unit']}")
    return total


def format_seconds(seconds: float) -> str:
    for scale, unit in ((1e-6, "µs"), (1e-3, "ms")):
        if seconds < 1000 * scale:
            return f"{seconds / scale:.3g} {unit}"
    return f"{seconds:.3g} s"


def format_ratio(x: float) -> str:
    return f"{x:,.0f}" if x >= 100 else f"{x:.3g}"


@dataclass
class Result:
    """One benchmark line.

    ``value`` and ``baseline`` are what was measured (seconds, unless ``unit`` says
    otherwise); ``ratio`` is how they compare, described by ``ratio_text``;
    ``passed`` is None when the benchmark has no target.
    """

    name: str
    value: float
    baseline_name: str
    baseline: float
    ratio: float
    ratio_text: str
    target: str = ""
    passed: bool | None = None
    unit: str = "s"
    extra: list[str] = field(default_factory=list)
    todo: str | None = None

    def shown(self, x: float) -> str:
        if self.unit == "s":
            return format_seconds(x)
        return f"{x:,.0f} {self.unit}"

    def line(self) -> str:
        if self.todo:
            return f"{self.name:<34} TODO: {self.todo}"
        verdict = "" if self.passed is None else ("pass" if self.passed else "MISS")
        bits = [f"{self.name:<34}", f"{self.shown(self.value):>11}",
                f"| {self.baseline_name} {self.shown(self.baseline)}",
                f"| {format_ratio(self.ratio)}x {self.ratio_text}"]
        bits += [f"| {e}" for e in self.extra]
        if self.target:
            bits.append(f"| target {self.target}: {verdict}")
        return " ".join(bits)


def machine() -> dict[str, str]:
    import numpy

    cpu = platform.processor() or platform.machine()
    try:
        with open("/proc/cpuinfo", encoding="utf-8") as fh:
            for line in fh:
                if line.startswith("model name"):
                    cpu = line.split(":", 1)[1].strip()
                    break
    except OSError:
        pass
    return {
        "platform": platform.platform(),
        "cpu": cpu,
        "cpus": str(os.cpu_count()),
        "python": sys.version.split()[0],
        "numpy": numpy.__version__,
    }
