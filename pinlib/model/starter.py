"""A starter design file from a list of placed parts (``pinlib new``).

Each placed part offers pin functions (:attr:`pinlib.library.schema.Part.functions`);
each protocol of :mod:`pinlib.core.protocols` whose named signals some part serves gets
one bus, holding every part that serves it.  Protocols that use the same pin functions
(I2C and SMBus) give one bus, of the first such protocol in the table; its comment names
the others.  An open-drain bus with one bridging part (a translator, a repeater) and parts
that do not all run from the controller's rail gets two segments across it: the
controller's rail and the parts that run from it, and the others on the rail of the
first of them, the lower rail facing the side that runs from the lower supply.  GPIO
lines are named freely: a pin name that some parts give a GPIO output of (push-pull or
open-drain) and others a GPIO input of (a supervisor's ``reset`` and a microcontroller's)
gets a GPIO bus of that one line; every other GPIO pin is listed in a comment rather
than guessed.  The values
written (rail, trace, clock) are placeholders a designer replaces; the file says so
beside each one, and it loads and checks as it is, except where no part given drives a
bus's clock: the first part then stands in as its controller, which the file and the
command's note say ``pinlib check`` refuses until the part that drives it is added.  A
part whose supply range excludes its bus's rail (± :data:`RAIL_TOLERANCE`) stays on the
bus, named with its range in a comment under the rail and in a note: ``pinlib check``
fails it there, and only the designer knows its rail or translator.
"""

from __future__ import annotations

import json

from pinlib.core import protocols
from pinlib.core.labels import and_list
from pinlib.core.quantity import format_si
from pinlib.core.tomlfile import toml_key
from pinlib.core.valueclass import value_class
from pinlib.core.wrapping import wrap
from pinlib.standards.i2c import I2C_MODE_NAMES
from pinlib.standards.smbus import SMBUS_CLASS_NAMES

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


#: The column a comment beside a value starts at; a longer line has its comment above it.
NOTE_COLUMN = 33
#: The widest line the starter writes.
WIDTH = 80
#: Peripherals the commented route example of an SPI bus chains through (the rest counted).
_ROUTE_EXAMPLE_DEVICES = 4


def _noted(code: str, note: str) -> str:
    """A line of TOML with its comment beside it at :data:`NOTE_COLUMN`, or on the line
    above it where the two would not fit in :data:`WIDTH` columns side by side."""
    if len(code) < NOTE_COLUMN and NOTE_COLUMN + 2 + len(note) <= WIDTH:
        return f"{code.ljust(NOTE_COLUMN)}# {note}"
    return f"# {note}\n{code}"


def _choices(names) -> str:
    """``("a", "b", "c")`` -> ``'"a", "b" or "c"'``."""
    return and_list((f'"{n}"' for n in names), "or")


def _toml_string(text: str) -> str:
    """``text`` as a TOML basic string (JSON's escapes are TOML's, and json.dumps writes
    no ``\\/``)."""
    return json.dumps(text, ensure_ascii=False)


def _serves(part, proto) -> list[str]:
    """The signals of ``proto`` whose pin function ``part`` offers."""
    offered = part.functions()
    return [sig for sig, fn in proto.signals if fn in offered]


def _spi_mode_line(parts) -> str:
    """``spi_mode = N``: the lowest mode every part that states its modes works in (0
    when none states any), with a comment naming the modes they allow or saying they
    share none."""
    stated = [p.timing.spi_modes for p in parts if p.timing.spi_modes is not None]
    common = protocols.spi_modes_in_common(stated)
    if not stated:
        return _noted("spi_mode = 0", "CPOL/CPHA of the peripherals")
    if not common:
        return _noted("spi_mode = 0", "the parts share no SPI mode: see pinlib check")
    return _noted(f"spi_mode = {common[0]}",
                  f"the parts' SPI modes allow {and_list(common, 'or')}")


def _drives_clock(part, proto) -> bool:
    clock = "scl" if proto.open_drain else "sclk"
    found = part.pin_for(protocols.SIGNAL_FUNCTION[clock])
    return found is not None and found[1].drive != "input"


#: Rails boards commonly have, the likeliest first (common practice, no source): the
#: rail a part that states no typical supply is put on, where its range holds one.
_COMMON_RAILS = (3.3, 5.0, 1.8, 2.5, 1.2)


def _supply(part) -> float:
    s = part.supply
    if s is None:
        return 3.3  # a common rail, common practice; the comment asks for the real one
    if s.typ is not None:
        return s.typ.value
    # the middle of its range read 3.55 V for a 1.6 V to 5.5 V part: a rail no board has
    common = [v for v in _COMMON_RAILS if s.min.value <= v <= s.max.value]
    return common[0] if common else round((s.min.value + s.max.value) / 2, 2)


def _rail_name(rail: float) -> str:
    """A segment's id from its rail (1.8 V gives ``1v8``)."""
    volts = format_si(rail, "V").removesuffix(" V")
    return volts.replace(".", "v") if "." in volts else volts + "v"


def _groups() -> list[list]:
    """Protocols with named signals, grouped by the pin functions they use."""
    out: dict[tuple, list] = {}
    for proto in protocols.PROTOCOLS.values():
        if proto.signals:
            out.setdefault(tuple(fn for _, fn in proto.signals), []).append(proto)
    return list(out.values())


def _device_lines(members, controller, pin: str | None = None) -> list[str]:
    """The ``devices`` array of ``members`` ((placement, part) pairs); ``pin``: the pin
    each places on a GPIO line."""
    on = "" if pin is None else f", pin = {_toml_string(pin)}"
    out = ["devices = ["]
    for place, _part in members:
        role = ', role = "controller"' if place is controller else ""
        out.append(f'  {{ ref = {_toml_string(place.ref)}, part = "{place.part_id}"{role}{on} }},')
    out.append("]")
    return out


#: The tolerance the starter writes beside each rail (``supply_tolerance``): a placeholder,
#: common practice, no source.
RAIL_TOLERANCE = 0.05


def _off_rail(members, rail: float) -> list[str]:
    """``U10 (3.135 V to 3.465 V)`` for each of ``members`` ((placement, part) pairs)
    whose stated supply range does not hold the whole of ``rail`` ± :data:`RAIL_TOLERANCE`:
    the parts ``pinlib check`` flags at their supply range on the rail as written (fails,
    or warns where the range is a class's typical one)."""
    lo, hi = rail * (1 - RAIL_TOLERANCE), rail * (1 + RAIL_TOLERANCE)
    slack = 1e-9  # 1.8 V x 0.95 is 1.71 V less a unit in the last place
    out = []
    for pl, p in members:
        s = p.supply
        if s is None or p.sides:
            continue
        if lo < s.min.value * (1 - slack) or hi > s.max.value * (1 + slack):
            out.append(f"{pl.ref} ({format_si(s.min.value, 'V', 4)} to "
                       f"{format_si(s.max.value, 'V', 4)})")
    return out


def _off_rail_lines(where: str, members, rail: float, notes) -> list[str]:
    """Comment lines naming the parts of ``members`` whose supply range excludes
    ``rail`` (none when all run from it); the same said in ``notes`` of ``where`` (a bus
    or segment)."""
    off = _off_rail(members, rail)
    if not off:
        return []
    band = f"{format_si(rail, 'V')} ± {RAIL_TOLERANCE * 100:g} %"
    fix = "give it a rail it runs from" if len(off) == 1 else "give them a rail they run from"
    said = (f"outside the supply range of {and_list(off)}, which 'pinlib check' flags: "
            f"{fix}")
    if notes is not None:
        notes.append(f"{where}: its rail, {band}, is {said}, or choose parts for this rail")
    return wrap(f"This rail, {band}, is {said} (supply = \"...\" on the device, with level "
                "translation where the I/O differs), or choose parts for this rail.",
                WIDTH, "# ", "")


def _on_rail(part, rail: float) -> bool:
    """Whether ``part`` runs from ``rail`` (a part that states no supply is taken to)."""
    s = part.supply
    return s is None or s.min.value <= rail <= s.max.value


def _open_drain_rail(members, ctrl, bridge=None, where: str = "", notes=None) -> list[str]:
    """The rail, pull-ups, trace and devices of an open-drain bus or segment; ``bridge``:
    (placement, side) of a bridging part on it; ``where``: the bus or segment, as
    ``notes`` name it."""
    parts = dict((pl.ref, p) for pl, p in members)
    rail = _supply(parts[ctrl.ref]) if ctrl is not None else _supply(members[0][1])
    out = [_noted(f'supply = "{format_si(rail, "V")}"', "the rail of the pull-ups: check it"),
           *_off_rail_lines(where, members, rail, notes),
           f'supply_tolerance = "{RAIL_TOLERANCE * 100:g} %"',
           _noted('pullup = "auto"', 'or a value, e.g. "4.7 kΩ"'),
           'pullup_tolerance = "1 %"',
           'pullup_series = "E24"',
           _noted('trace = { length = "10 cm", geometry = "outer" }',
                  "placeholder: your routed length")]
    out += _device_lines(members, ctrl)
    if bridge is not None:
        pl, side = bridge
        out.insert(-1, f'  {{ ref = {_toml_string(pl.ref)}, part = "{pl.part_id}", '
                       f'side = "{side}" }},')
    return out


def _segments(members, ctrl, bridge, bus_id: str,
              notes=None) -> list[tuple[str, list[str]]] | None:
    """The two segments of an open-drain bus ``bus_id`` across a bridging part
    (``bridge``: its placement and part), each its id and lines: the controller's rail
    and the parts that run from it, and the parts that do not, on the rail of the first
    of them; None when every part runs from the controller's rail (nothing says where
    the bridge goes).  ``notes``: as :func:`_off_rail_lines` fills them."""
    parts = dict((pl.ref, p) for pl, p in members)
    rail = _supply(parts[ctrl.ref])
    here = [(pl, p) for pl, p in members if _on_rail(p, rail)]
    there = [(pl, p) for pl, p in members if not _on_rail(p, rail)]
    if not there:
        return None
    far_rail = _supply(there[0][1])
    # the lower rail faces the side that runs from the lower supply (a MOSFET's source)
    pl, part = bridge
    low, high = sorted(part.sides, key=lambda k: (part.sides[k].supply.min.value, k))
    near, far = (high, low) if rail > far_rail else (low, high)
    names = f"near-{_rail_name(rail)}", f"far-{_rail_name(far_rail)}"
    return [(names[0], _open_drain_rail(here, ctrl, (pl, near),
                                        f"bus {bus_id}, segment {names[0]}", notes)),
            (names[1], _open_drain_rail(there, None, (pl, far),
                                        f"bus {bus_id}, segment {names[1]}", notes))]


def _bus(group, members, bridges=(), notes=None) -> tuple[list[str], bool]:
    """A bus's lines, and whether the bridging part (the one of ``bridges``) is on it.
    Where no part drives the clock, the first stands in as the controller (a design
    needs one), which the file and ``notes`` say."""
    proto = group[0]
    ctrl = next((pl for pl, p in members if _drives_clock(p, proto)), None)
    stand_in = ctrl is None
    ctrl = ctrl or members[0][0]
    ctrl_part = dict((pl.ref, p) for pl, p in members)[ctrl.ref]
    rail = _supply(ctrl_part)
    others = [p.name for p in group[1:]]
    kind = f'protocol = "{proto.name}"'
    refs = ", ".join(pl.ref for pl, _ in members)
    out = ["", *wrap(f"The {proto.name.upper()} bus of {refs}.", WIDTH, "# ", "")]
    if stand_in:
        clock = "SCL" if proto.open_drain else "SCLK"
        # the file keeps every part given on its bus, the first marked the controller
        # (a bus needs one); 'pinlib check' refuses the stand-in, which cannot clock it
        note = (f"no part given drives {clock}: {ctrl.ref} stands in as the controller "
                f"of the {proto.name.upper()} bus, and 'pinlib check' refuses the bus "
                f"(nothing would clock it) until you add the part that drives "
                f"{clock} (--part REF=PART)")
        out += wrap(f"Placeholder: {note}.", WIDTH, "# ", "")
        if notes is not None:
            notes.append(note)
    out += ["[[bus]]", f'id = "{proto.name}"',
            _noted(kind, "or " + " or ".join(f'"{o}"' for o in others)) if others else kind]
    if proto.open_drain:
        out += [f"# mode: I2C {_choices(I2C_MODE_NAMES)}; SMBus {_choices(SMBUS_CLASS_NAMES)}",
                'mode = "standard"', 'clock = "100 kHz"']
        segments = (_segments(members, ctrl, bridges[0], proto.name, notes)
                    if len(bridges) == 1 else None)
        if segments is None:
            return out + _open_drain_rail(members, ctrl, None, f"bus {proto.name}",
                                          notes), False
        for (name, seg), first in zip(segments, (True, False), strict=True):
            where = ("the controller's rail" if first
                     else f"the parts across {bridges[0][0].ref}")
            out += ["", f"# Segment: {where}.", "[[bus.segment]]", f'id = "{name}"'] + seg
        return out, True
    out += [_spi_mode_line([p for _, p in members]),
            _noted('clock = "1 MHz"', "placeholder: the clock you intend"),
            _noted(f'supply = "{format_si(rail, "V")}"', "the rail of the I/O: check it"),
            *_off_rail_lines(f"bus {proto.name}", members, rail, notes),
            f'supply_tolerance = "{RAIL_TOLERANCE * 100:g} %"']
    out += _device_lines(members, ctrl)
    # the design format's documents are not in an installed wheel: the comment shows
    # the form of a route itself
    # a daisy chain through every device: a route must hold each device on its line, so
    # an example to one peripheral of several is refused once uncommented
    chain = [ctrl.ref] + ([pl.ref for pl, _ in members if pl is not ctrl] or ["U2"])
    shown = chain[:_ROUTE_EXAMPLE_DEVICES + 1]
    out += ["# placeholders: each line's routed length; a `route` instead puts each",
            "# device at its own place, as stretches between refs or junctions, e.g.",
            '#   lines.sclk = { series_resistor = "auto", route = [']
    out += [f'#     {{ from = "{a}", to = "{b}", length = "5 cm", geometry = "outer" }},'
            for a, b in zip(shown, shown[1:], strict=False)]
    if len(chain) > len(shown):
        rest = len(chain) - len(shown)
        out.append(f"#     (and on to the other {rest}: every device on the line is a "
                   "point of its route)")
    out.append("#   ] }")
    for sig in proto.signal_names:
        if sig in ("sclk", "cs") or any(sig in _serves(p, proto) for pl, p in members
                                        if pl is not ctrl):
            out.append(f'lines.{sig} = {{ length = "5 cm", geometry = "outer", '
                       'series_resistor = "auto" }')
    return out, False


#: The placeholder pull-up of a starter GPIO line that an open-drain output drives.
_GPIO_PULLUP = "10 kΩ"


def _gpio_nets(placed) -> list[tuple[str, list]]:
    """The GPIO lines a starter wires itself: each pin name that placed parts (bridging
    parts aside) give a GPIO pin of, one of them an output (push-pull or open-drain) and
    another an input; ``(name, [(placement, part, pin), ...])``, the parts in the order
    given."""
    nets: dict[str, list] = {}
    for pl, p in placed:
        if p.sides:
            continue
        for name, pin in p.pins.items():
            if pin.function == "gpio":
                nets.setdefault(name, []).append((pl, p, pin))
    return [(name, pins) for name, pins in nets.items()
            if any(x[2].drive != "input" for x in pins)
            and any(x[2].drive == "input" for x in pins)]


def _gpio_bus(name: str, pins: list, taken: set[str], notes=None) -> list[str]:
    """A GPIO bus of one line: the pins of ``name``, the first output driving it;
    ``notes``: as :func:`_off_rail_lines` fills them."""
    driver = next(x for x in pins if x[2].drive != "input")
    members = [driver] + [x for x in pins if x is not driver]
    bus_id = name if name not in taken else f"{name}-gpio"
    open_drain = any(x[2].drive == "open-drain" for x in pins)
    refs = ", ".join(f"{pl.ref}.{name}" for pl, _, _ in members)
    out = ["", *wrap(f"A GPIO line of the pins named {name}: {refs}.", WIDTH, "# ", ""),
           "[[bus]]", f"id = {_toml_string(bus_id)}", 'protocol = "gpio"',
           _noted(f'supply = "{format_si(_supply(driver[1]), "V")}"',
                  "the rail of the I/O: check it"),
           *_off_rail_lines(f"bus {bus_id}", [(pl, p) for pl, p, _ in members],
                            _supply(driver[1]), notes),
           f'supply_tolerance = "{RAIL_TOLERANCE * 100:g} %"']
    out += _device_lines([(pl, p) for pl, p, _ in members], driver[0], pin=name)
    line = f'lines.{toml_key(name)} = {{ length = "5 cm", geometry = "outer"'
    if open_drain:
        out += ["# an open-drain output: the line's pull-up to the supply (placeholder)",
                f'{line}, pullup = "{_GPIO_PULLUP}" }}']
    else:
        out.append(_noted(line + " }", "placeholder: your routed length"))
    return out


def starter_text(title: str, placed: list[tuple[Placement, object]],
                 library: list[str] | tuple[str, ...] = (),
                 notes: list[str] | None = None) -> tuple[str, int]:
    """The text of a starter design file.

    Parameters
    ----------
    title : str
        The design's title.
    placed : list of (Placement, Part)
        Each placed part with its library part, in the order given.
    library : list of str
        Team library folders for the design's ``library`` line, as the design file
        names them (relative to its folder): without them a team part placed from a
        ``--library`` folder would be unknown when the design is next read.
    notes : list of str, optional
        Filled with what the reader should know about the file written: a part that
        stands in as a bus's controller, since no part given drives its clock (the
        design loader refuses it until the part that does is added); the parts whose
        supply range excludes the rail of their bus or segment (the controller's, or
        the first part's), which ``pinlib check`` fails.

    Returns
    -------
    (str, int)
        A ``pinlib.design/1`` file with comments: one bus per protocol the parts serve
        (a protocol needs at least two parts serving it), a board cross-section for the
        traces, and the parts that went on no bus named in a comment; and the number
        of buses it holds.
    """
    out = ["# A starter design written by 'pinlib new': every length, rail and clock",
           "# below is a placeholder to replace with your board's own.  Check it with",
           "#   pinlib check THIS-FILE",
           'format = "pinlib.design/1"', f"title = {_toml_string(title)}"]
    if library:
        out += ["# The team library folders of the parts, relative to this file.",
                "library = [" + ", ".join(_toml_string(f) for f in library) + "]"]
    out += ["",
            "# An example outer-layer trace over FR-4: put your board's stack-up here.",
            "[board.geometry.outer]"]
    out += [f"{k} = {v!r}".replace("'", '"') for k, v in STARTER_GEOMETRY.items()]
    on_bus: set[str] = set()
    buses = 0
    for group in _groups():
        need = ("sda", "scl") if group[0].open_drain else ("sclk",)
        serving = [(pl, p) for pl, p in placed if all(s in _serves(p, group[0]) for s in need)]
        members = [(pl, p) for pl, p in serving if not p.sides]
        if len(members) < 2:
            continue
        bridges = [(pl, p) for pl, p in serving if p.sides and group[0].open_drain]
        buses += 1
        text, bridged = _bus(group, members, bridges, notes)
        out += text
        on_bus |= {pl.ref for pl, _ in members + (bridges if bridged else [])}
    taken = set(protocols.PROTOCOLS)  # a bus named like a protocol's would read oddly
    wired = set()
    for name, pins in _gpio_nets(placed):
        out += _gpio_bus(name, pins, taken, notes)
        taken.add(name)
        buses += 1
        wired |= {(pl.ref, name) for pl, _, _ in pins}
        on_bus |= {pl.ref for pl, _, _ in pins}
    gpio = [f"{pl.ref}.{name}" for pl, p in placed
            for name, pin in p.pins.items()
            if pin.function == "gpio" and (pl.ref, name) not in wired]
    if gpio:
        other = "other " if wired else ""
        out += ["", *wrap(f'The {other}GPIO pins of these parts (a bus with protocol = "gpio" '
                          "carries them, a `lines.NAME` each, a device's `pin` naming its "
                          "pin): " + ", ".join(gpio), WIDTH, "# ", "")]
    left = [pl.ref for pl, _ in placed if pl.ref not in on_bus]
    if left:
        out += ["", *wrap("On no bus (no protocol they share with another part): "
                          + ", ".join(left), WIDTH, "# ", "")]
    return "\n".join(out) + "\n", buses
