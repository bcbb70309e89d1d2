"""Candidate ranking: the vectorized ranking against a per-candidate Python loop.

10,000 generated I2C targets (invented values: pin capacitance, leakage, sink current
and input threshold varied from part to part) are added to the merged library, and
every one is ranked for the EEPROM position of a small I2C design:
:func:`pinlib.studies.candidates.rank_candidates` (one numpy batch per group of candidates of
the same structure) against :func:`pinlib.studies.candidates.rank_candidates_slow` (the design
rebuilt with each candidate and checked by the engine, one at a time).  The two
rankings must be the same, candidate by candidate, before any time is reported.

The same at an SPI position: 1,000 generated SPI peripherals (tests/spiparts.py,
invented values: pin capacitance, output resistance and edges, thresholds, timing)
ranked for the display position of the demo board (a 28 cm line, series resistors
"auto"), the batched ranking (the engine per candidate, the edges of many candidates
solved together) against the one-at-a-time path; target 25 times faster.  The
one-at-a-time path evaluates each candidate in a run of its own, as ``pinlib check``
evaluates a design (an edge solved twice for the candidate is solved once): before
2026-12-03 it ran without that memo and solved each edge about three times, and the
ratio it gave (10-12x) was measured against that slower path.

And at the demo's flash position, where each candidate drives CIPO (its output pin's
driver fitted from its edges) and the bus has tolerances (each candidate's corners):
200 generated parts, both paths without the fits of the run before.
"""

from __future__ import annotations

import math
import tempfile
import time
from pathlib import Path

from pinlib.library.loader import load_library
from pinlib.library.schema import Part
from pinlib.model.design import load_design
from pinlib.studies import candidates as cand
from tests.bench.common import Result, median_time

__all__ = ["run", "DESIGN"]

N = 10_000
#: Generated SPI parts, and the speed-up the issue asks of their ranking.
N_SPI = 1_000
SPI_TARGET = 25.0
#: Generated SPI parts ranked where the candidate drives a line (the one-at-a-time path
#: takes about 60 ms a candidate there).
N_DRIVING = 200
DEMO = Path(__file__).resolve().parents[2] / "workbooks" / "designs" / "demo-board.toml"

DESIGN = """\
format = "pinlib.design/1"
title = "Candidate benchmark (generated)"

[board.geometry.g]
kind = "microstrip"
width = "0.2 mm"
height = "0.18 mm"
er = 4.2

[[bus]]
id = "sensors"
protocol = "i2c"
mode = "fast"
supply = "3.3 V"
supply_tolerance = "5 %"
pullup = "auto"
trace = { length = "12 cm", geometry = "g" }
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller" },
  { ref = "U2", part = "eeprom-i2c" },
  { ref = "U3", part = "rtc-i2c" },
]
"""


def generated_part(i: int) -> Part:
    c = 2 + (i * 7919) % 2300 / 100  # 2 to 25 pF, scattered
    return Part.validate({
        "format": "pinlib.part/1", "id": f"gen-cand-{i:05d}", "title": f"Generated target {i}",
        "category": "memory", "supply": {"min": "1.7 V", "max": "5.5 V"},
        "pins": {
            "sda": {"function": "i2c-sda", "drive": "open-drain", "c_in": f"{c:.2f} pF",
                    "leakage": f"{1 + i % 10} µA", "v_il": f"{0.25 + (i % 11) / 100:.2f} VDD",
                    "v_ih": "0.7 VDD", "v_ol": "0.4 V", "i_ol": f"{2 + i % 5} mA"},
            "scl": {"function": "i2c-scl", "drive": "input", "c_in": f"{c:.2f} pF",
                    "leakage": "1 µA", "v_il": "0.3 VDD", "v_ih": "0.7 VDD"}},
        "timing": {"f_max": "1 MHz" if i % 3 == 0 else "400 kHz"},
    })


def same_ranking(fast, slow) -> bool:
    if [c.part for c in fast.candidates] != [c.part for c in slow.candidates]:
        return False
    for a, b in zip(fast.candidates, slow.candidates, strict=True):
        if a.status != b.status or len(a.margins) != len(b.margins):
            return False
        pairs = [(a.worst_margin, b.worst_margin)] + list(zip(a.margins, b.margins, strict=True))
        for x, y in pairs:
            if (x is None) != (y is None):
                return False
            if x is not None and not (x == y or math.isclose(x, y, rel_tol=1e-9, abs_tol=1e-12)):
                return False
    return True


def run(repeats: int = 3, quick: bool = False) -> list[Result]:
    n = N // 10 if quick else N
    lib = load_library(env=False)
    for i in range(n):
        part = generated_part(i)
        lib.parts[part.id] = part
    with tempfile.TemporaryDirectory(prefix="pinlib-bench-") as tmp:
        path = Path(tmp) / "design.toml"
        path.write_text(DESIGN, encoding="utf-8")
        design = load_design(path, library=lib)
        fast = cand.rank_candidates(design, "U2")
        t_fast = median_time(lambda: cand.rank_candidates(design, "U2"), repeats, warmup=0)
        start = time.perf_counter()
        slow = cand.rank_candidates_slow(design, "U2")  # once: it is the slow one
        t_slow = time.perf_counter() - start
    generated = sum(c.part.startswith("gen-cand-") for c in fast.candidates)
    equal = same_ranking(fast, slow)
    if not equal:
        raise RuntimeError("the vectorized ranking differs from the per-candidate one")
    methods = sorted({c.method for c in fast.candidates})
    spi = [_spi(repeats, quick), _spi_driving(repeats, quick)]
    return [*spi, Result(f"candidate ranking: {generated:,} parts", t_fast,
                        "the same ranking by a per-candidate loop", t_slow,
                        extra=[f"{len(fast.candidates):,} ranked, rankings equal",
                               "method " + "/".join(methods)])]


def _spi(repeats: int, quick: bool) -> Result:
    """1,000 generated SPI peripherals at the demo's display position (see the notes)."""
    n = N_SPI // 10 if quick else N_SPI
    return _spi_at("U12", n, "SPI candidate ranking", repeats)


def _spi_driving(repeats: int, quick: bool) -> Result:
    """Generated SPI peripherals at the demo's flash position: each candidate drives
    CIPO (its own output pin fitted from its edges) and the bus carries supply and
    length tolerances (each candidate's corners).  Both paths start without the fits
    of the last run (a library's first ranking; the command line keeps fits between
    runs, :mod:`pinlib.engines.fitstore`)."""
    n = N_DRIVING // 10 if quick else N_DRIVING
    return _spi_at("U7", n, "SPI candidates driving CIPO, with corners", repeats,
                   cold_fits=True)


def _spi_at(ref: str, n: int, label: str, repeats: int, cold_fits: bool = False) -> Result:
    """``n`` generated SPI peripherals ranked at ``ref`` of the demo, batched and one at a
    time (``cold_fits``: each run without the driver fits of the run before)."""
    from pinlib.physics import driver
    from tests.spiparts import add_generated

    lib = load_library(env=False)
    add_generated(lib, n)
    design = load_design(DEMO, library=lib)

    def rank(how):
        if cold_fits:
            driver._FIT_CACHE.clear()
        return how(design, ref)

    fast = rank(cand.rank_candidates)
    t_fast = median_time(lambda: rank(cand.rank_candidates), max(1, repeats // 3), warmup=0)
    start = time.perf_counter()
    slow = rank(cand.rank_candidates_slow)
    t_slow = time.perf_counter() - start
    if not same_ranking(fast, slow):
        raise RuntimeError(f"the batched SPI ranking at {ref} differs from the "
                           "per-candidate one")
    generated = sum(c.part.startswith("gen-spi-") for c in fast.candidates)
    ratio = t_slow / t_fast
    return Result(f"{label}: {generated:,} parts", t_fast,
                  "the same ranking one candidate at a time", t_slow,
                  target=f"ratio >= {SPI_TARGET:g}x",
                  passed=ratio >= SPI_TARGET,
                  extra=[f"{len(fast.candidates):,} ranked, rankings equal",
                         f"{t_fast / len(fast.candidates) * 1e3:.1f} ms a candidate batched, "
                         f"{t_slow / len(slow.candidates) * 1e3:.1f} ms one at a time"])
