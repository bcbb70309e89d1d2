"""Timing helpers and the one-line result format shared by the benchmarks."""

from __future__ import annotations

import gc
import math
import os
import platform
import statistics
import sys
import time
from dataclasses import KW_ONLY, dataclass, field

import numpy as np

__all__ = ["Result", "median_time", "machine", "format_seconds", "format_ratio",
           "reference_work", "in_turn", "linear"]


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

    ``value`` is what was measured: a time in seconds, a rate (``unit`` ending in
    ``/s``, such as ``boards/s``) or another quantity (``MB``).  A baseline is the same
    work done another way, or the same work at another size scaled to this one, measured
    in the same run unless ``baseline_name`` says otherwise; ``baseline_name`` says what
    it is, and the line prints it as "baseline: NAME = VALUE".  The ratio is not given by the
    benchmark: it is always the speed against the baseline (a time's baseline time over
    its time, a rate over its baseline rate), so above 1 means faster than the baseline.
    A benchmark with no like-for-like baseline gives ``baseline=None`` and says why in
    ``no_baseline``: its line prints the absolute value and that reason, no ratio.
    ``target`` says what it constrains ("time < 150 ms", "ratio >= 5x"); ``passed`` is
    None when the benchmark has no target.
    """

    name: str
    value: float
    baseline_name: str = ""
    baseline: float | None = None
    _: KW_ONLY  # the rest by name: a ratio can no longer be passed after the baseline
    target: str = ""
    passed: bool | None = None
    unit: str = "s"
    extra: list[str] = field(default_factory=list)
    todo: str | None = None
    no_baseline: str = ""

    def __post_init__(self) -> None:
        if self.todo:
            return
        if self.baseline is None:
            if not self.no_baseline:
                raise ValueError(f"{self.name}: a line without a baseline says why "
                                 "(no_baseline)")
            if self.baseline_name:
                raise ValueError(f"{self.name}: a baseline name without a baseline")
            return
        if self.no_baseline:
            raise ValueError(f"{self.name}: a baseline and a reason for none")
        if not self.baseline_name:
            raise ValueError(f"{self.name}: the baseline must say what it is")
        if not (self.unit == "s" or self.unit.endswith("/s")):
            raise ValueError(f"{self.name}: a ratio of speed needs a time or a rate, "
                             f"not {self.unit!r}")
        if not (self.value > 0 and self.baseline > 0):
            raise ValueError(f"{self.name}: a time or rate must be positive "
                             f"({self.value!r}, {self.baseline!r})")

    @property
    def ratio(self) -> float | None:
        """Speed against the baseline (above 1: faster than it); None without one."""
        if self.todo or self.baseline is None:
            return None
        if self.unit == "s":
            return self.baseline / self.value
        return self.value / self.baseline

    def shown(self, x: float) -> str:
        if self.unit == "s":
            return format_seconds(x)
        return f"{x:,.0f} {self.unit}" if x >= 100 else f"{x:.3g} {self.unit}"

    def ratio_words(self) -> str:
        """The ratio as printed: "3.2x faster than the baseline" (or "0.5x as fast")."""
        r = self.ratio
        if r is None:
            return ""
        return f"{format_ratio(r)}x " + ("faster than" if r >= 1 else "as fast as") + \
            " the baseline"

    def line(self) -> str:
        if self.todo:
            return f"{self.name:<34} TODO: {self.todo}"
        verdict = "" if self.passed is None else ("pass" if self.passed else "MISS")
        bits = [f"{self.name:<34}", f"{self.shown(self.value):>11}"]
        if self.baseline is None:
            bits.append(f"| no baseline: {self.no_baseline}")
        else:
            bits += [f"| baseline: {self.baseline_name} = {self.shown(self.baseline)}",
                     f"| {self.ratio_words()}"]
        bits += [f"| {e}" for e in self.extra]
        if self.target:
            bits.append(f"| target {self.target}: {verdict}")
        return " ".join(bits)


def linear(k: float, small: float) -> float:
    """The baseline of a scaling line: the time of the input 1/k of the size, times k
    (what linear growth would cost). [s]"""
    return k * small


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
