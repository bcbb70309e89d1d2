"""A starter design file from a list of placed parts (``pinlib new``).

Each placed part offers pin functions (:attr:`pinlib.library.schema.Part.functions`);
each protocol of :mod:`pinlib.core.protocols` whose named signals some part serves gets
one bus, holding every part that serves it.  Protocols that use the same pin functions
(I2C and SMBus) give one bus, of the first such protocol in the table; its comment names
the others.  GPIO lines are named freely, so they are listed in a comment rather than
guessed.  The values written (rail, trace, clock) are placeholders a designer replaces;
the file says so beside each one, and it loads and checks as it is.
"""

from __future__ import annotations

import json

from pinlib.core import protocols
from pinlib.core.quantity import format_si
from pinlib.core.valueclass import value_class

__all__ = ["Placement", "starter_text", "STARTER_GEOMETRY"]

#: The example cross-section the starter's traces use: an outer-layer trace over FR-4
#: (common practice, no source); the comment above it asks for the board's own stack-up.
STARTER_GEOMETRY = {"kind": "microstrip", "width": "0.2 mm", "height": "0.18 mm",
                    "thickness": "35 µm", "er": 4.2}


@value_class(frozen=True)
class Placement:
    """One part placed on the board: its reference designator and part id."""

    ref: str
    part_id: str


def _toml_string(text: str) -> str:
    """``text`` as a TOML basic string (JSON's escapes are TOML's, and json.dumps writes
    no ``\\/``)."""
    return json.dumps(text, ensure_ascii=False)


def _serves(part, proto) -> list[str]:
    """The signals of ``proto`` whose pin function ``part`` offers."""
    offered = part.functions()
    return [sig for sig, fn in proto.signals if fn in offered]


def _drives_clock(part, proto) -> bool:
    clock = "scl" if proto.open_drain else "sclk"
    found = part.pin_for(protocols.SIGNAL_FUNCTION[clock])
    return found is not None and found[1].drive != "input"


def _supply(part) -> float:
    s = part.supply
    if s is None:
        return 3.3  # a common rail, common practice; the comment asks for the real one
    if s.typ is not None:
        return s.typ.value
    return round((s.min.value + s.max.value) / 2, 2)


def _groups() -> list[list]:
    """Protocols with named signals, grouped by the pin functions they use."""
    out: dict[tuple, list] = {}
    for proto in protocols.PROTOCOLS.values():
        if proto.signals:
            out.setdefault(tuple(fn for _, fn in proto.signals), []).append(proto)
    return list(out.values())


def _device_lines(members, controller) -> list[str]:
    out = ["devices = ["]
    for place, _part in members:
        role = ', role = "controller"' if place is controller else ""
        out.append(f'  {{ ref = {_toml_string(place.ref)}, part = "{place.part_id}"{role} }},')
    out.append("]")
    return out


def _bus(group, members) -> list[str]:
    proto = group[0]
    ctrl = next((pl for pl, p in members if _drives_clock(p, proto)), members[0][0])
    ctrl_part = dict((pl.ref, p) for pl, p in members)[ctrl.ref]
    supply = format_si(_supply(ctrl_part), "V")
    others = [p.name for p in group[1:]]
    alt = ("   # or " + " or ".join(f'"{o}"' for o in others)) if others else ""
    out = ["", f"# The {proto.name.upper()} bus of {', '.join(pl.ref for pl, _ in members)}.",
           "[[bus]]", f'id = "{proto.name}"', f'protocol = "{proto.name}"{alt}']
    if proto.open_drain:
        out += ['mode = "standard"                # see docs/formats/design.md for the modes',
                'clock = "100 kHz"',
                f'supply = "{supply}"                 # the rail of the pull-ups: check it',
                'supply_tolerance = "5 %"',
                'pullup = "auto"                  # or a value, e.g. "4.7 kΩ"',
                'pullup_tolerance = "1 %"',
                'pullup_series = "E24"',
                'trace = { length = "10 cm", geometry = "outer" }   # placeholder: '
                'your routed length']
        out += _device_lines(members, ctrl)
        return out
    out += ["spi_mode = 0                     # CPOL/CPHA of the peripherals",
            'clock = "1 MHz"                  # placeholder: the clock you intend',
            f'supply = "{supply}"                 # the rail of the I/O: check it',
            'supply_tolerance = "5 %"']
    out += _device_lines(members, ctrl)
    for sig in proto.signal_names:
        if sig in ("sclk", "cs") or any(sig in _serves(p, proto) for pl, p in members
                                        if pl is not ctrl):
            out.append(f'lines.{sig} = {{ length = "5 cm", geometry = "outer", '
                       'series_resistor = "auto" }   # placeholder: your routed length')
    return out


def starter_text(title: str, placed: list[tuple[Placement, object]]) -> tuple[str, int]:
    """The text of a starter design file.

    Parameters
    ----------
    title : str
        The design's title.
    placed : list of (Placement, Part)
        Each placed part with its library part, in the order given.

    Returns
    -------
    (str, int)
        A ``pinlib.design/1`` file with comments: one bus per protocol the parts serve
        (a protocol needs at least two parts serving it), a board cross-section for the
        traces, and the parts that went on no bus named in a comment; and the number
        of buses it holds.
    """
    out = ["# A starter design written by 'pinlib new': every length, rail and clock below is",
           "# a placeholder to replace with your board's own.  Check it with",
           "#   pinlib check THIS-FILE",
           'format = "pinlib.design/1"', f"title = {_toml_string(title)}", "",
           "# An example outer-layer trace over FR-4: put your board's stack-up here.",
           "[board.geometry.outer]"]
    out += [f"{k} = {v!r}".replace("'", '"') for k, v in STARTER_GEOMETRY.items()]
    on_bus: set[str] = set()
    buses = 0
    for group in _groups():
        need = ("sda", "scl") if group[0].open_drain else ("sclk",)
        members = [(pl, p) for pl, p in placed
                   if not p.sides and all(s in _serves(p, group[0]) for s in need)]
        if len(members) < 2:
            continue
        buses += 1
        out += _bus(group, members)
        on_bus |= {pl.ref for pl, _ in members}
    gpio = [f"{pl.ref}.{name}" for pl, p in placed
            for name, pin in p.pins.items() if pin.function == "gpio"]
    if gpio:
        out += ["", "# GPIO pins of these parts (a gpio bus per line, see "
                "docs/formats/design.md): " + ", ".join(gpio)]
    left = [pl.ref for pl, _ in placed if pl.ref not in on_bus]
    if left:
        out += ["", "# On no bus (no protocol they share with another part): " + ", ".join(left)]
    return "\n".join(out) + "\n", buses
