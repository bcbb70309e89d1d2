"""Generated inputs for the benchmarks: team part files and large designs.

Everything here is invented test data (ids ``gen-...``), written to a temporary folder.
"""

from __future__ import annotations

from pathlib import Path

__all__ = ["write_parts", "large_design"]

_I2C_PINS = """\
[pins.sda]
function = "i2c-sda"
drive = "open-drain"
c_in = {{ value = "{c} pF", typ = "{ct} pF", basis = "datasheet", source = "generated, table {i}" }}
leakage = {{ value = "{leak} µA", source = "generated" }}
v_il = "0.3 VDD"
v_ih = "0.7 VDD"
v_ol = "0.4 V"
i_ol = "{iol} mA"
abs_max = "VDD + 0.5 V"

[pins.scl]
function = "i2c-scl"
drive = "input"
c_in = "{c} pF"
leakage = "{leak} µA"
v_il = "0.3 VDD"
v_ih = "0.7 VDD"

[timing]
f_max = "400 kHz"
t_vd_dat = "0.9 µs"
"""

_SPI_PINS = """\
[pins.sclk]
function = "spi-sclk"
c_in = "{c} pF"
v_il = "0.3 VDD"
v_ih = "0.7 VDD"

[pins.copi]
function = "spi-copi"
c_in = "{c} pF"
v_il = "0.3 VDD"
v_ih = "0.7 VDD"

[pins.cs]
function = "spi-cs"
c_in = "{c} pF"
v_il = "0.3 VDD"
v_ih = "0.7 VDD"

[pins.cipo]
function = "spi-cipo"
drive = "push-pull"
c_in = "{c} pF"
r_out = {{ value = "{rout} Ω", source = "generated" }}
edges = [
  {{ load = "15 pF", rise = "1.5 ns", fall = "1.5 ns" }},
  {{ load = "30 pF", rise = "2.5 ns", fall = "2.4 ns" }},
]

[timing]
f_max = "50 MHz"
t_valid = "7 ns"
t_setup = "2 ns"
t_hold = "3 ns"
"""


def _header(pid: str, title: str, category: str, extends: str | None = None) -> str:
    lines = ['format = "pinlib.part/1"', f'id = "{pid}"', f'title = "{title}"',
             f'category = "{category}"']
    if extends:
        lines.append(f'extends = "{extends}"')
    lines += ['supply = { min = "1.7 V", max = "5.5 V" }',
              'provenance = { basis = "datasheet", source = "generated for the benchmark", '
              'recorded = 2026-01-01 }', ""]
    return "\n".join(lines) + "\n"


def part_text(i: int) -> tuple[str, str]:
    """(id, file text) of generated part ``i``: four kinds in turn.

    0: a standalone I2C target; 1: a team part extending the built-in
    ``i2c-peripheral`` with a few values changed; 2: a part extending generated part
    ``i - 1`` (a chain of three files); 3: a standalone SPI peripheral.
    """
    pid = f"gen-{i:04d}"
    kind = i % 4
    c = 4 + i % 7
    if kind == 0:
        text = _header(pid, f"Generated I2C target {i}", "sensor") + _I2C_PINS.format(
            c=c, ct=c - 2, i=i, leak=1 + i % 3, iol=3 + i % 4)
    elif kind == 1:
        text = _header(pid, f"Generated variant {i}", "memory", "i2c-peripheral") + (
            f'[pins.sda]\nc_in = {{ value = "{c} pF", basis = "datasheet", '
            f'source = "generated, table {i}" }}\n\n'
            f'[pins.scl]\nc_in = "{c} pF"\n\n[timing]\nf_max = "1 MHz"\n')
    elif kind == 2:
        text = _header(pid, f"Generated second source {i}", "memory", f"gen-{i - 1:04d}") + (
            f'[pins.sda]\nleakage = {{ value = "{1 + i % 5} µA", basis = "measured", '
            f'source = "generated bench" }}\n')
    else:
        text = _header(pid, f"Generated SPI peripheral {i}", "converter") + _SPI_PINS.format(
            c=c, rout=25 + i % 20)
    return pid, text


def write_parts(folder: Path, n: int) -> list[Path]:
    """Write ``n`` generated part files into ``folder``; return their paths."""
    folder.mkdir(parents=True, exist_ok=True)
    paths = []
    for i in range(n):
        pid, text = part_text(i)
        path = folder / f"{pid}.toml"
        path.write_text(text, encoding="utf-8")
        paths.append(path)
    return paths


_PERIPHERALS = ["eeprom-i2c", "rtc-i2c", "io-expander-i2c", "adc-i2c"]


def large_design(n_buses: int, n_devices: int) -> str:
    """A design of ``n_buses`` I2C and SMBus buses with ``n_devices`` devices each.

    Each bus has a controller and ``n_devices - 1`` peripherals of the built-in
    library, its own trace and an automatic pull-up; every fifth bus is SMBus.
    """
    out = ['format = "pinlib.design/1"',
           f'title = "Generated benchmark design, {n_buses} buses x {n_devices} devices"', "",
           "[board.geometry.outer]", 'kind = "microstrip"', 'width = "0.2 mm"',
           'height = "0.18 mm"', 'thickness = "35 µm"', "er = 4.2", ""]
    for b in range(n_buses):
        smbus = b % 5 == 4
        out += ["[[bus]]", f'id = "bus-{b:03d}"',
                f'protocol = "{"smbus" if smbus else "i2c"}"',
                f'mode = "{"100k" if smbus else "standard"}"',
                'supply = "3.3 V"', 'supply_tolerance = "5 %"',
                'pullup = "auto"' if b % 2 == 0 else 'pullup = "2.2 kΩ"',
                f'trace = {{ length = "{5 + b % 10} cm", geometry = "outer" }}',
                "devices = [",
                f'  {{ ref = "U{b}00", part = "mcu-3v3", role = "controller" }},']
        for d in range(1, n_devices):
            if smbus:
                part = "fan-controller-smbus" if d % 2 else "battery-gauge-smbus"
            else:
                part = _PERIPHERALS[(b + d) % len(_PERIPHERALS)]
            out.append(f'  {{ ref = "U{b}{d:02d}", part = "{part}" }},')
        out += ["]", ""]
    return "\n".join(out)
