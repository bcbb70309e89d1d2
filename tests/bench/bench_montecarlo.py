"""Monte Carlo: boards per second drawn and checked by :func:`pinlib.studies.whatif.monte_carlo`.

An I2C bus (a small design with every tolerance set) and the demo design's open-drain
buses (a bridged I2C bus of two segments and an SMBus link). The baseline is the engine
checking the same boards one at a time (:func:`pinlib.engines.dispatch.evaluate_bus` on
each sampled bus, its rate the inverse of one board's time): the ratio is boards per
second against boards per second, so it says how many times faster the vectorized draw
checks a board than the engine does. The demo's SPI flash bus (with its supply and
length tolerances) is sampled through the tables of :mod:`pinlib.engines.pptable`
(engine evaluations over the tolerance box, verified against the engine); the time
includes building them. So is the routed SPI bus of tests/data/spi-route.toml given
tolerances (its table bisects the cells where a receiver's margin jumps, and leaves the
boards in them to the engine), timed against the engine board by board the same way (the
run's boards per second over the engine's).

The memory line has no baseline: it prints the peak of the process and its ceiling,
and beside it what the process held before the run.
"""

from __future__ import annotations

import tempfile
from dataclasses import replace
from pathlib import Path

from pinlib.engines.dispatch import evaluate_bus
from pinlib.model.design import load_design
from pinlib.studies.whatif import monte_carlo
from tests.bench.common import Result, median_time

__all__ = ["run"]

N = 200_000
#: SPI boards: the push-pull tables cost a fixed number of engine evaluations (about a
#: second), so the SPI run draws more boards than the open-drain ones.
N_SPI = 1_000_000
TARGET = 100_000  # boards per second
#: What the rate lines are compared with (the same boards, checked one at a time).
BASELINE = "engine board by board"

I2C = """\
format = "pinlib.design/1"
title = "Monte Carlo benchmark, one I2C bus (generated)"

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
pullup = "2.2 kΩ"
pullup_tolerance = "5 %"
capacitance_tolerance = "10 %"
length_tolerance = "10 %"
trace = { length = "12 cm", geometry = "g" }
extra_capacitance = "10 pF"
cables = [{ part = "ribbon-cable", length = "0.3 m" }]
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller" },
  { ref = "U2", part = "eeprom-i2c", capacitance_tolerance = "10 %" },
  { ref = "U3", part = "rtc-i2c", capacitance_tolerance = "10 %" },
  { ref = "U4", part = "adc-i2c" },
]
"""

DEMO = Path(__file__).resolve().parents[2] / "workbooks" / "designs" / "demo-board.toml"


def _rate(design, n: int, repeats: int):
    result = monte_carlo(design, 1000, seed=1)
    sampled = {c.bus for c in result.checks}
    buses = [b for b in design.buses if b.id in sampled]

    def one_board():  # the engine on every sampled bus, once
        for bus in buses:
            evaluate_bus(bus, design)

    t_mc = median_time(lambda: monte_carlo(design, n, seed=1), repeats, warmup=0)
    t_one = median_time(one_board, max(repeats, 3))
    return n / t_mc, 1.0 / t_one, result


def _open_drain_only(design):
    return replace(design, buses=tuple(b for b in design.buses
                                       if b.protocol in ("i2c", "smbus")))


def run(repeats: int = 3, quick: bool = False) -> list[Result]:
    n = N // 10 if quick else N
    out = []
    with tempfile.TemporaryDirectory(prefix="pinlib-bench-") as tmp:
        path = Path(tmp) / "i2c.toml"
        path.write_text(I2C, encoding="utf-8")
        cases = [("I2C bus", load_design(path)),
                 ("demo open-drain buses", _open_drain_only(load_design(DEMO)))]
        for label, design in cases:
            rate, one, result = _rate(design, n, repeats)
            sampled = sorted({c.bus for c in result.checks})
            out.append(Result(f"Monte Carlo: {label}", rate, BASELINE, one, unit="boards/s",
                              target=f"rate > {TARGET:,}/s", passed=rate > TARGET,
                              extra=[f"{n:,} boards, {len(result.parameters)} parameters, buses "
                                     + ", ".join(sampled)]))
    # the demo's flash bus (its design gives a supply and a length tolerance)
    design = load_design(DEMO)
    flash = design.bus("flash")
    spi_only = replace(design, buses=(flash,))
    n_spi = N_SPI // 20 if quick else N_SPI
    t_mc = median_time(lambda: monte_carlo(spi_only, n_spi, seed=1), repeats, warmup=0)
    t_one = median_time(lambda: evaluate_bus(flash, spi_only), max(repeats, 3))
    rate = n_spi / t_mc
    result = monte_carlo(spi_only, n_spi, seed=1)
    table = next((note.split(":", 1)[1].split(" over ")[0].strip()
                  for note in result.notes if "interpolated from" in note), None)
    out.append(Result("Monte Carlo: SPI bus (demo flash)", rate, BASELINE, 1 / t_one,
                      unit="boards/s",
                      target=f"rate > {TARGET:,}/s", passed=rate > TARGET,
                      extra=[f"{n_spi:,} boards; {table or 'no table: every board by the engine'}"
                             " (pinlib.engines.pptable), the table's cost included"]))
    out.append(_routed(repeats, quick))
    out.append(_memory(N_MEMORY // 10 if quick else N_MEMORY))
    return out


#: Boards of the routed SPI run: its table costs tens of engine evaluations at about
#: 0.4 s each (a route's tree solves), so a run of this size shows what a table saves.
N_ROUTE = 20_000
ROUTE = Path(__file__).resolve().parents[1] / "data" / "spi-route.toml"


def _routed(repeats: int, quick: bool) -> Result:
    """tests/data/spi-route.toml (invented) with a 5 % supply and a 10 % length
    tolerance: Monte Carlo through the table of its routed lines (cells where a
    receiver's margin jumps left to the engine), against the engine on one board."""
    text = ROUTE.read_text(encoding="utf-8").replace(
        'supply = "3.3 V"\n', 'supply = "3.3 V"\nsupply_tolerance = "5 %"\n'
        'length_tolerance = "10 %"\n', 1)
    with tempfile.TemporaryDirectory(prefix="pinlib-bench-") as tmp:
        path = Path(tmp) / "route.toml"
        path.write_text(text, encoding="utf-8")
        design = load_design(path)
    bus = design.buses[0]
    n = N_ROUTE // 10 if quick else N_ROUTE
    from pinlib.engines.pushpull import evaluate_board

    t_one = median_time(lambda: evaluate_board(bus, design), 3, warmup=1)
    runs = []
    t_mc = median_time(lambda: runs.append(monte_carlo(design, n, seed=1)),
                       max(1, repeats // 3), warmup=0)
    table = next((note.split(":", 1)[1].split(" over ")[0].strip()
                  for note in runs[-1].notes if "interpolated from" in note), None)
    rate = n / t_mc
    return Result("Monte Carlo: routed SPI bus (spi-route)", rate, BASELINE, 1 / t_one,
                  unit="boards/s",
                  extra=[f"{n:,} boards in {t_mc:.3g} s, the table's cost included; "
                         f"{table or 'no table: every board by the engine'}"])


#: Boards of the memory benchmark, and its ceiling. [1], [MB]
N_MEMORY = 1_000_000
MEMORY_TARGET = 500

_MEMORY_RUN = """
import json, resource, time
from pinlib.engines.dispatch import evaluate_bus
from pinlib.model.design import load_design
from pinlib.studies.whatif import monte_carlo
design = load_design({demo!r})
first = monte_carlo(design, 1000, seed=1)
buses = [b for b in design.buses if b.id in {{c.bus for c in first.checks}}]
t = time.perf_counter()
for _ in range(3):
    for bus in buses:
        evaluate_bus(bus, design)
one = (time.perf_counter() - t) / 3
before = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
t = time.perf_counter()
monte_carlo(design, {n}, seed=1)
took = time.perf_counter() - t
peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
print(json.dumps({{"before": before / 1024, "peak": peak / 1024, "took": took, "one": one}}))
"""


def _memory(n: int) -> Result:
    """Peak memory of a Monte Carlo run of the whole demo, in a fresh process (its
    resident set size, Linux ``ru_maxrss`` in KiB), against the same process before the
    run (design loaded, a small run done, every module imported)."""
    import json
    import subprocess
    import sys

    root = Path(__file__).resolve().parents[2]
    proc = subprocess.run([sys.executable, "-c", _MEMORY_RUN.format(demo=str(DEMO), n=n)],
                          cwd=root, capture_output=True, text=True, check=True)
    got = json.loads(proc.stdout.strip().splitlines()[-1])
    rate = n / got["took"]
    return Result(f"Monte Carlo: demo, {n:,} boards, memory", got["peak"], unit="MB",
                  no_baseline="a ceiling, not a speed: the process's peak resident size",
                  target=f"peak < {MEMORY_TARGET} MB", passed=got["peak"] < MEMORY_TARGET,
                  extra=[f"{got['before']:,.0f} MB before the run "
                         f"(+{got['peak'] - got['before']:,.0f} MB)",
                         f"{rate:,.0f} boards/s, {rate * got['one']:,.0f}x the engine board "
                         "by board (every sampled bus)"])
