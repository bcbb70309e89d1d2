"""Scaling lines: how the cost grows with the size of the input (issue 14).

Each line times one input made k times larger against its baseline, what linear growth
would cost: k times the time of the input at 1/k of the size, in this process.  The
ratio is that over the larger input's time: 1 means the cost grows linearly, above 1
less than linearly, 1/k quadratically.  The inputs (invented test data):

* a valid design whose ``description`` is a long string (the loader locates the lines
  of the values after it);
* devices on one I2C bus and on one SPI bus, loaded and checked;
* sections of one SPI line with a series resistor to choose, loaded and checked;
* peripherals on one CIPO line (4 -> 8 -> 16 -> 32), every one at the far end or each on
  a branch of a routed star (four branch lengths, repeated: equal branches share a solve);
  and 16 -> 32 on a star whose branches all differ (every driver its own solve over a
  tree of all the others: about N² node-records, printed without a target);
* peripherals of an SPI bus on 1 km lines, with the peak of traced memory (1 = bounded);
* the cable of a routed SCLK with centimetre stubs, 3 m -> 30 m;
* Monte Carlo boards, with the peak of traced memory as well (1 = bounded).

The push-pull engine checks every driver into the pins of every other device, so the
SPI device line has a part that grows with the square of the devices (small up to the
limit, :data:`pinlib.core.worklimits.MAX_DEVICES_PUSH_PULL`, dominant far beyond it): it
is printed without a target.  A target ``ratio > 0.5x`` (no more than twice linear growth,
the time less than 2k times the smaller input's) separates linear (1) from quadratic
(1/k).
"""

from __future__ import annotations

import tempfile
import time
import tracemalloc
import warnings
from pathlib import Path

from pinlib.core.errors import PinlibError
from pinlib.engines.dispatch import check_design
from pinlib.model.design import load_design
from pinlib.studies.whatif import monte_carlo
from tests.bench.common import Result, format_seconds, median_time
from tests.bench.common import linear as linear_cost

__all__ = ["run"]

HEAD = """\
format = "pinlib.design/1"
title = "scaling benchmark (generated)"
description = {description}

[board.geometry.g]
kind = "microstrip"
width = "0.2 mm"
height = "0.18 mm"
er = 4.2
"""


def _design(body: str, description: str = '"generated"') -> str:
    return HEAD.format(description=description) + body


def _i2c(n: int) -> str:
    devices = "".join(f'  {{ ref = "T{i}", part = "eeprom-i2c" }},\n' for i in range(n - 1))
    return _design(f"""
[[bus]]
id = "b"
protocol = "i2c"
mode = "standard"
supply = "3.3 V"
supply_tolerance = "5 %"
pullup = "auto"
capacitance_tolerance = "10 %"
trace = {{ length = "10 cm", geometry = "g" }}
devices = [
  {{ ref = "U1", part = "mcu-3v3", role = "controller" }},
{devices}]
""")


def _spi(n: int, sections: int = 1, alternating: bool = False) -> str:
    """An SPI bus of ``n`` devices whose SCLK and COPI are ``sections`` stretches of 1 cm,
    of one geometry (which the solver joins into one line), or (``alternating``) every
    other one a 50 Ω stretch given per length, so each junction reflects."""
    devices = "".join(f'  {{ ref = "P{i}", part = "nor-flash-spi" }},\n' for i in range(n - 1))
    stretch = '{ length = "1 cm", geometry = "g" }'
    other = '{ length = "1 cm", capacitance = "1.2 pF/cm", delay = "60 ps/cm" }'
    chain = [other if alternating and k % 2 else stretch for k in range(sections)]
    line = f'{{ sections = [{", ".join(chain)}], series_resistor = "auto" }}'
    return _design(f"""
[[bus]]
id = "s"
protocol = "spi"
clock = "1 MHz"
supply = "3.3 V"
devices = [
  {{ ref = "U1", part = "mcu-3v3", role = "controller" }},
{devices}]
lines.sclk = {line}
lines.copi = {line}
lines.cipo = {{ length = "3 cm", geometry = "g" }}
""")


def _spi_cipo(n: int, routed: bool, distinct: bool = False) -> str:
    """An SPI bus of ``n`` peripherals whose CIPO each drives in turn: every device at the
    far end, or (``routed``) each on a star branch of 1 to 4 cm (every length from 4
    peripherals on, so that the record, set by the longest branch, does not grow;
    ``distinct``: spread evenly over 1 to 4 cm, no two equal)."""
    refs = [f"P{i}" for i in range(n)]
    devices = "".join(f'  {{ ref = "{r}", part = "nor-flash-spi" }},\n' for r in refs)
    if routed:
        cm = [1 + 3 * i / (n - 1) if distinct else 1 + i % 4 for i in range(n)]
        branches = ", ".join(f'{{ from = "S", to = "{r}", length = "{c:.4g} cm", '
                             'geometry = "g" }' for c, r in zip(cm, refs, strict=True))
        cipo = (f'{{ route = [{{ from = "U1", to = "S", length = "2 cm", geometry = "g" }}, '
                f"{branches}] }}")
    else:
        cipo = '{ length = "5 cm", geometry = "g" }'
    return _design(f"""
[[bus]]
id = "s"
protocol = "spi"
clock = "1 MHz"
supply = "3.3 V"
devices = [
  {{ ref = "U1", part = "mcu-3v3", role = "controller" }},
{devices}]
lines.sclk = {{ length = "3 cm", geometry = "g" }}
lines.cipo = {cipo}
""")


def _spi_km(n: int) -> str:
    """An SPI bus of ``n`` peripherals with every line 1 km long, all at the far end (a
    fuzz audit's: each driver's edge a record of 400,000 samples)."""
    devices = "".join(f'  {{ ref = "P{i}", part = "nor-flash-spi" }},\n' for i in range(n))
    line = '{ length = "1000 m", geometry = "g" }'
    return _design(f"""
[[bus]]
id = "s"
protocol = "spi"
clock = "20 MHz"
supply = "3.3 V"
devices = [
  {{ ref = "U1", part = "mcu-3v3", role = "controller" }},
{devices}]
lines.sclk = {line}
lines.copi = {line}
lines.cipo = {line}
lines.cs = {line}
""")


def _route_cable(metres: float) -> str:
    """A routed SCLK with stubs of 1 and 2 cm and 13 cm of trace before ``metres`` of
    cable (a fuzz audit's: the stubs' delays set the march's runs over a record the
    cable's delay sets)."""
    cable = 'capacitance = "1 pF/cm", delay = "60 ps/cm"'
    return _design(f"""
[[bus]]
id = "s"
protocol = "spi"
clock = "1 MHz"
supply = "3.3 V"
devices = [
  {{ ref = "U1", part = "mcu-3v3", role = "controller" }},
  {{ ref = "U2", part = "nor-flash-spi" }},
  {{ ref = "U3", part = "nor-flash-spi" }},
  {{ ref = "U4", part = "nor-flash-spi" }},
]
lines.sclk = {{ series_resistor = "auto", route = [
  {{ from = "U1", to = "T1", length = "2 cm", geometry = "g" }},
  {{ from = "T1", to = "U2", length = "1 cm", geometry = "g" }},
  {{ from = "T1", to = "U3", length = "13 cm", geometry = "g" }},
  {{ from = "U3", to = "U4", length = "{metres:g} m", {cable} }},
] }}
lines.cipo = {{ length = "3 cm", geometry = "g" }}
""")


def _memory(name: str, small: str, large: str, k: int, tmp: Path) -> Result:
    """Time and peak traced memory of an input k times larger (1 = bounded memory)."""
    a, b = tmp / f"{name}-small.toml", tmp / f"{name}-large.toml"
    a.write_text(small, encoding="utf-8")
    b.write_text(large, encoding="utf-8")
    _load_and_check(a)  # imports, library, fits

    def measure(path):
        tracemalloc.start()
        start = time.perf_counter()
        _load_and_check(path)
        took = time.perf_counter() - start
        peak = tracemalloc.get_traced_memory()[1]
        tracemalloc.stop()
        return took, peak

    t_small, m_small = measure(a)
    t_large, m_large = measure(b)
    return Result(name, t_large, _baseline_name(k, t_small, "size"), linear_cost(k, t_small),
                  extra=[f"peak traced memory {m_large / 2**20:.0f} MB against "
                         f"{m_small / 2**20:.0f} MB ({m_large / m_small:.2f}x; 1 = bounded)"])


def _long_string(length: int) -> str:
    body = _i2c(2).split('er = 4.2\n', 1)[1]
    return _design(body, description='"' + "a" * length + '"')


def _load_and_check(path: Path):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        try:
            return check_design(load_design(path))
        except PinlibError as err:
            return err


#: A linear line's target: no worse than twice linear growth (t_large < 2 k t_small).
LINEAR_TARGET = "ratio > 0.5x (under 2x linear growth)"


def _baseline_name(k: int, t_small: float, small: str) -> str:
    if small == "size":
        small = f"the 1/{k}-size input"
    return f"{k} x {small} ({format_seconds(t_small)}; linear growth)"


def _scaling(name, small, large, k, tmp: Path, repeats: int, *, linear=True) -> Result:
    a, b = tmp / f"{name}-small.toml", tmp / f"{name}-large.toml"
    a.write_text(small, encoding="utf-8")
    b.write_text(large, encoding="utf-8")
    _load_and_check(a)  # imports, library, fits
    t_small = median_time(lambda: _load_and_check(a), repeats, warmup=0)
    t_large = median_time(lambda: _load_and_check(b), max(1, repeats // 2), warmup=0)
    grew = t_large / t_small
    return Result(name, t_large, _baseline_name(k, t_small, "size"), linear_cost(k, t_small),
                  target=LINEAR_TARGET if linear else "",
                  passed=grew < 2 * k if linear else None)


def _monte_carlo(tmp: Path, n: int, k: int) -> Result:
    path = tmp / "mc.toml"
    path.write_text(_i2c(3), encoding="utf-8")
    design = load_design(path)

    def measure(boards):
        tracemalloc.start()
        start = time.perf_counter()
        monte_carlo(design, boards, seed=1)
        took = time.perf_counter() - start
        peak = tracemalloc.get_traced_memory()[1]
        tracemalloc.stop()
        return took, peak

    measure(1000)
    t_small, m_small = measure(n)
    t_large, m_large = measure(k * n)
    grew = t_large / t_small
    return Result(f"Monte Carlo: {k * n:,} boards", t_large,
                  _baseline_name(k, t_small, f"{n:,} boards"), linear_cost(k, t_small),
                  target=LINEAR_TARGET, passed=grew < 2 * k,
                  extra=[f"peak traced memory {m_large / 2**20:.0f} MB against "
                         f"{m_small / 2**20:.0f} MB ({m_large / m_small:.2f}x; 1 = bounded)"])


def run(repeats: int = 3, quick: bool = False) -> list[Result]:
    s = 4 if quick else 1  # quick: a quarter of each size
    out = []
    with tempfile.TemporaryDirectory(prefix="pinlib-bench-") as tmp:
        tmp = Path(tmp)
        out.append(_scaling(f"long string: {16000 // s:,} characters",
                            _long_string(2000 // s), _long_string(16000 // s), 8, tmp, repeats))
        out.append(_scaling(f"I2C bus: {1000 // s} devices", _i2c(100 // s), _i2c(1000 // s),
                            10, tmp, repeats))
        out.append(_scaling(f"SPI bus: {256 // s} devices", _spi(32 // s), _spi(256 // s),
                            8, tmp, repeats, linear=False))
        # CIPO: each peripheral drives while the others load the line; only the
        # controller receives it, so the peripherals should cost linearly
        for n in (4, 8, 16):
            out.append(_scaling(f"SPI CIPO: {2 * n} peripherals at the far end",
                                _spi_cipo(n, False), _spi_cipo(2 * n, False), 2, tmp, repeats))
            out.append(_scaling(f"SPI CIPO: {2 * n} peripherals on a routed star",
                                _spi_cipo(n, True), _spi_cipo(2 * n, True), 2, tmp, repeats))
        out.append(_scaling("SPI CIPO: 32 peripherals, a star of distinct branches",
                            _spi_cipo(16, True, True), _spi_cipo(32, True, True), 2, tmp,
                            repeats, linear=False))
        out.append(_scaling("SPI line: 32 sections, auto resistor", _spi(2, 8), _spi(2, 32),
                            4, tmp, repeats))
        # the same line 4x as long with a reflection at each junction: a record 4x as
        # long over 4x the sections, quadratic by its nature (printed without a target)
        out.append(_scaling("SPI line: 32 sections, alternating impedance",
                            _spi(2, 8, True), _spi(2, 32, True), 4, tmp, repeats,
                            linear=False))
        # every peripheral's edges on 1 km lines share one record (was one each: 2.6 GB
        # at 200); printed without a target, with the peak memory
        out.append(_memory(f"SPI bus: {255 // s} peripherals on 1 km lines",
                           _spi_km(31 // s), _spi_km(255 // s), 8, tmp))
        # the cable 10x as long: a record 10x as long over the same stubs (marched in
        # blocks where its runs would be a step or two: 20-45 s a check before)
        out.append(_scaling("SPI route: 1 cm stub beside 30 m of cable",
                            _route_cable(3), _route_cable(30), 10, tmp, repeats))
        # above whatif.SENSITIVITY_BOARDS (100,000), whose draws a run keeps
        out.append(_monte_carlo(tmp, 120_000 if quick else 200_000, 4))
    return out
