"""An open-drain interrupt line between two invented test parts, written as a design
file: the GPIO bus that tests/test_gpio_spice.py and tests/test_route.py build."""

from __future__ import annotations

from pathlib import Path

#: The invented test parts (pp-ctrl, pp-periph, pp-cable).
PARTS = Path(__file__).parent / "data" / "pushpull"


def irq_design(path: Path, line: str, more: str = "",
               title: str = "an open-drain interrupt line (invented)", *,
               sink: str = "pp-periph", library: tuple[Path, ...] = ()) -> Path:
    """Write at ``path`` a design of one GPIO bus ``irq`` whose line runs from the sink
    U2 (``sink``'s open-drain irq; pp-periph's: VOL 0.4 V at 4 mA, 5 pF, 1 µA) to the
    input U1 (pp-ctrl's irq, 5 pF, 1 µA), with the devices ``more`` lists (lines of the
    devices array) and ``line`` the body of ``[bus.lines.irq]``, ``library`` further
    part folders; ``path``."""
    folders = ", ".join(f'"{p.as_posix()}"' for p in (PARTS, *library))
    path.write_text(f"""format = "pinlib.design/1"
title = "{title}"
library = [{folders}]

[[bus]]
id = "irq"
protocol = "gpio"
supply = "3.3 V"
devices = [
  {{ ref = "U1", part = "pp-ctrl", role = "controller", pin = "irq" }},
  {{ ref = "U2", part = "{sink}", pin = "irq" }},
{more}]
[bus.lines.irq]
{line}
""", encoding="utf-8")
    return path
