"""Invented designs whose checks fail or warn, each for the fix it should print (the
``fix`` of :class:`pinlib.model.result.Check`): used by ``tests/test_fixes.py`` and the
fix cases of ``tests/test_messages.py``.

Every part and value here is invented test data (its provenance says ``datasheet`` so
that the checks against it are firm, as a recorded part's are): team parts that extend the built-in
classes with timing long enough to fail (``slow-adc``), a controller that records its
CS lead and lag (``lead-mcu``) or a long CIPO hold (``hold-mcu``), and GPIO parts with a
strong output and a high VOL (``strong-io``) or a weak output (``weak-io``).
"""

from __future__ import annotations

from pathlib import Path

__all__ = ["PARTS", "write_design", "SPI_SLOW", "SPI_BRIDGE", "SPI_FAST", "GPIO_STRONG",
           "GPIO_WEAK_TREE", "GPIO_OPEN_DRAIN", "host_to_5v_smbus"]

PARTS = {
    "slow-adc": """\
format = "pinlib.part/1"
id = "slow-adc"
title = "ADC with long setup, hold and pulse times (invented test data)"
category = "converter"
provenance = { basis = "datasheet", source = "test data, invented" }
extends = "adc-spi"

[timing]
f_max = "100 MHz"
t_setup = "30 ns"
t_hold = "30 ns"
t_cs_setup = "60 ns"
t_cs_hold = "60 ns"
t_high = "40 ns"
t_low = "40 ns"
""",
    "lead-mcu": """\
format = "pinlib.part/1"
id = "lead-mcu"
title = "MCU that records its CS lead and lag (invented test data)"
category = "controller"
provenance = { basis = "datasheet", source = "test data, invented" }
extends = "mcu-3v3"

[timing]
t_cs_setup = "20 ns"
t_cs_hold = "20 ns"
""",
    "hold-mcu": """\
format = "pinlib.part/1"
id = "hold-mcu"
title = "MCU with a long CIPO hold (invented test data)"
category = "controller"
provenance = { basis = "datasheet", source = "test data, invented" }
extends = "mcu-3v3"

[timing]
t_hold = "40 ns"
""",
    "strong-io": """\
format = "pinlib.part/1"
id = "strong-io"
title = "GPIO part with a strong output and a high VOL (invented test data)"
category = "controller"
provenance = { basis = "datasheet", source = "test data, invented" }
supply = { min = "3.0 V", max = "3.6 V" }

# its levels state no current: taken as stated (a current would have them read at the
# line's load, where they pass)
[pins.out]
function = "gpio"
drive = "push-pull"
c_in = "5 pF"
r_out = "20 Ω"
v_ol = "0.8 V"
v_oh = "2.4 V"
abs_max = "VDD + 0.3 V"

[pins.in]
function = "gpio"
c_in = "5 pF"
v_il = "0.2 VDD"
v_ih = "0.7 VDD"
abs_max = "VDD + 0.3 V"
""",
    "weak-io": """\
format = "pinlib.part/1"
id = "weak-io"
title = "GPIO part with a weak output (invented test data)"
category = "controller"
provenance = { basis = "datasheet", source = "test data, invented" }
supply = { min = "3.0 V", max = "3.6 V" }

[pins.out]
function = "gpio"
drive = "push-pull"
c_in = "5 pF"
r_out = "120 Ω"
v_il = "0.3 VDD"
v_ih = "0.7 VDD"
abs_max = "VDD + 0.3 V"

[pins.in]
function = "gpio"
c_in = "5 pF"
v_il = "0.3 VDD"
v_ih = "0.7 VDD"
abs_max = "VDD + 0.3 V"
""",
}

_HEAD = """\
format = "pinlib.design/1"
title = "fixes (invented test data)"
library = ["team"]
{extra}
[board.geometry.g]
kind = "microstrip"
width = "0.2 mm"
height = "0.18 mm"
er = 4.2

[board.geometry.w]
kind = "microstrip"
width = "0.6 mm"
height = "0.18 mm"
er = 4.2
"""


def write_design(folder: Path, body: str, extra: str = "") -> Path:
    """The team parts and a design of ``body`` (its buses) in ``folder``; ``extra``: lines
    of the design's top table (``warn_margin = "90 %"``)."""
    team = folder / "team"
    team.mkdir(parents=True, exist_ok=True)
    for name, text in PARTS.items():
        (team / f"{name}.toml").write_text(text, encoding="utf-8")
    path = folder / "design.toml"
    path.write_text(_HEAD.format(extra=extra) + body, encoding="utf-8")
    return path


_SPI_LINES = """\
lines.sclk = { length = "3 cm", geometry = "g" }
lines.copi = { length = "3 cm", geometry = "g" }
lines.cipo = { length = "3 cm", geometry = "g" }
lines.cs = { length = "3 cm", geometry = "g" }
"""

#: copi-setup, copi-hold; cs-setup, cs-hold and cipo-first-bit on a recorded CS lead/lag.
SPI_SLOW = """
[[bus]]
id = "s"
protocol = "spi"
clock = "20 MHz"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "lead-mcu", role = "controller" },
  { ref = "U2", part = "slow-adc" },
]
""" + _SPI_LINES

#: sclk-high, sclk-low, cipo-setup across an isolator (its delay both ways), cipo-hold.
SPI_BRIDGE = """
[[bus]]
id = "s"
protocol = "spi"
clock = "20 MHz"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "hold-mcu", role = "controller" },
  { ref = "U2", part = "slow-adc" },
  { ref = "U9", part = "isolator-spi" },
]
""" + _SPI_LINES

#: f-max (adc-spi's 20 MHz), level-high (an LVTTL VOH against a CMOS VIH), overshoot on
#: lines without a series resistor, edge-time on the slow CIPO.
SPI_FAST = """
[[bus]]
id = "s"
protocol = "spi"
supply = "3.3 V"
supply_tolerance = "5 %"
clock = "25 MHz"
spi_mode = 0
devices = [
  { ref = "U1", part = "fpga-io-3v3", role = "controller" },
  { ref = "U2", part = "nor-flash-spi" },
  { ref = "U3", part = "adc-spi" },
]
lines.sclk = { series_resistor = "auto", length = "15 cm", geometry = "g" }
lines.copi = { route = [
  { from = "U1", to = "U2", length = "7 cm", geometry = "g" },
  { from = "U2", to = "U3", length = "9 cm", geometry = "g" },
] }
lines.cipo = { route = [
  { from = "U1", to = "U2", length = "7 cm", geometry = "g" },
  { from = "U2", to = "U3", length = "9 cm", geometry = "g" },
] }
lines.cs = { length = "12 cm", geometry = "g" }
"""

#: One push-pull GPIO line, ``{line}`` (replaced, not formatted) its table: overshoot,
#: undershoot, level-low.
GPIO_STRONG = """
[[bus]]
id = "g"
protocol = "gpio"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "strong-io", role = "controller", pin = "out" },
  { ref = "U2", part = "strong-io", pin = "in" },
]
lines.x = {line}
"""

#: A weak driver (r_out above Z0) into a tree: a little overshoot at its ends.
GPIO_WEAK_TREE = """
[[bus]]
id = "g"
protocol = "gpio"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "weak-io", role = "controller", pin = "out" },
  { ref = "U2", part = "weak-io", pin = "in" },
  { ref = "U3", part = "weak-io", pin = "in" },
]
lines.x = { route = [
  { from = "U1", to = "T1", length = "10 cm", geometry = "g" },
  { from = "T1", to = "U2", length = "5 cm", geometry = "g" },
  { from = "T1", to = "U3", length = "15 cm", geometry = "g" },
] }
"""

#: An open-drain line, ``{driver}`` the controller's part and pin and ``{line}`` its table
#: (both replaced, not formatted).
GPIO_OPEN_DRAIN = """
[[bus]]
id = "alarm"
protocol = "gpio"
supply = "1.8 V"
devices = [
  { ref = "U3", {driver}, role = "controller" },
  { ref = "U1", part = "mcu-1v8", pin = "gpio_in" },
]
lines.alarm = {line}
"""


def host_to_5v_smbus(*, host_side: str = "a", pack_side: str = "b", pack_own: str = "",
                     extra: str | None = None, fan: bool = False,
                     title: str = "Host to 5 V SMBus via MOSFET (invented test data)") -> str:
    """A 3.3 V host reaching a 5 V SMBus segment through the library's two-MOSFET
    translator Q1 (an audit's scenario, invented test data): ``host_side``/``pack_side``
    the translator's side on each segment, ``pack_own`` more keys of its pack-side
    placement (``', supply = "3.3 V"'``), ``extra`` the host segment's extra
    capacitance, ``fan`` a fan controller U3 beside the gauge U2 on the pack."""
    more = f'extra_capacitance = "{extra}"\n' if extra else ""
    fan_row = '  { ref = "U3", part = "fan-controller-smbus" },\n' if fan else ""
    return f"""format = "pinlib.design/1"
title = "{title}"

[[bus]]
id = "smb"
protocol = "smbus"
mode = "100k"

[[bus.segment]]
id = "host-3v3"
supply = "3.3 V"
supply_tolerance = "5 %"
pullup = "4.7 kΩ"
trace = {{ length = "5 cm", capacitance = "1 pF/cm" }}
{more}devices = [
  {{ ref = "U1", part = "mcu-3v3", role = "controller" }},
  {{ ref = "Q1", part = "level-translator-mosfet", side = "{host_side}" }},
]

[[bus.segment]]
id = "pack-5v"
supply = "5 V"
supply_tolerance = "5 %"
pullup = "2.2 kΩ"
trace = {{ length = "25 cm", capacitance = "1 pF/cm" }}
devices = [
  {{ ref = "Q1", part = "level-translator-mosfet", side = "{pack_side}"{pack_own} }},
  {{ ref = "U2", part = "battery-gauge-smbus" }},
{fan_row}]
"""
