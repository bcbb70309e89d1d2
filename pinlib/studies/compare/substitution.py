"""Substitution: whether a part can stand in a device's position (the pin functions it
must offer, the drives the position allows), why a swap is refused, and the design
file's text with parts swapped."""

from __future__ import annotations

from dataclasses import replace

from pinlib.core import messages as M
from pinlib.core import protocols
from pinlib.core.errors import PinlibError
from pinlib.library.schema import Part

#: Pin functions each protocol puts on a bus.
PROTOCOL_FUNCTIONS = {name: p.functions for name, p in protocols.PROTOCOLS.items()}


def _allowed_drives(protocol: str, function: str, role: str) -> tuple[set[str], str] | None:
    """The drives a position allows for a pin function, and why; None: no rule."""
    controller = role == "controller"
    if protocols.is_open_drain(protocol):
        if function == protocols.protocol(protocol).function("sda"):
            return ({"open-drain"},
                    "every I2C/SMBus device drives SDA (acknowledge, read data) and the line is "
                    "wired-AND, so SDA must be open-drain")
        if function == protocols.protocol(protocol).function("scl"):
            if controller:
                return ({"open-drain", "push-pull"}, "a controller drives SCL")
            return ({"input", "open-drain"},
                    "a target only reads SCL or holds it low to stretch the clock; a push-pull "
                    "SCL would fight the controller")
    if protocol == "spi":
        if controller:
            if function == protocols.SIGNAL_FUNCTION["cipo"]:
                return ({"input"}, "a controller reads CIPO; an output there fights the "
                        "peripheral")
            return ({"push-pull"}, f"a controller drives {function.removeprefix('spi-').upper()}"
                    " with a push-pull (or tri-state) output")
        if function == protocols.SIGNAL_FUNCTION["cipo"]:
            return ({"push-pull"}, "a peripheral drives CIPO with a push-pull (tri-state) "
                    "output; the bus has no pull-up for an open-drain one")
        return ({"input"}, f"a peripheral reads {function.removeprefix('spi-').upper()}; an "
                "output there fights the controller")
    return None


def _scl_drivers_elsewhere(device, bus) -> list[str]:
    """Other devices on the bus whose SCL pin can pull the line low."""
    out = []
    for d in bus.devices:
        if d.ref == device.ref:
            continue
        got = d.part.pin_for(protocols.SIGNAL_FUNCTION["scl"], d.side if d.is_bridge else None)
        if got is not None and got[1].drive != "input":
            out.append(d.ref)
    return sorted(set(out))


def positions(design, ref: str, *, field: str = "REF") -> list:
    """Every (bus, device) where the reference designator sits.

    Raises
    ------
    DesignError
        When no device has that reference (``field`` names where it was given).
    """
    from pinlib.core.errors import DesignError

    out = [(b, d) for b in design.buses for d in b.devices if d.ref == ref]
    if not out:
        refs = sorted({d.ref for b in design.buses for d in b.devices})
        # a junction of a route is a point of the board but no device: say which route
        junction = next((f"{ref} is a junction of the route of {b.id}.{sig}, not a device; "
                         for b in design.buses for sig, line in getattr(b, "lines", {}).items()
                         if any(ref in pair for pair in line.route)), "")
        raise DesignError(M.NO_SUCH_REFERENCE, file=str(design.path or ""),
                          field=field, value=ref, hint=junction + "devices: " + ", ".join(refs))
    return out


def swap_refusals(design, ref: str, part_id: str, *, field: str = "REF=PART") -> tuple[str, list]:
    """Why ``part_id`` cannot take the place of the part at ``ref`` in ``design``.

    Parameters
    ----------
    design : Design
        A loaded design. [1]
    ref : str
        The reference designator to substitute. [1]
    part_id : str
        The proposed part class. [1]
    field : str, optional
        The field an error names (``REF=PART`` on the command line). [1]

    Returns
    -------
    (str, list of str)
        The part at ``ref`` now, and the reasons (empty when the swap can be made):
        an abstract or cable class, then :func:`can_serve` on every bus it sits on.

    Raises
    ------
    DesignError
        No device has that reference; LibraryError: no such part.
    """
    places = positions(design, ref, field=field)
    new_part = design.library.get(part_id, field=field)
    if new_part.abstract:
        return places[0][1].part_id, [M.ABSTRACT_NOT_PLACED.format(part=part_id)]
    if new_part.category == "cable":
        return places[0][1].part_id, [M.CABLE_NOT_PLACED.format(part=part_id)]
    reasons: list[str] = []
    for bus, dev in places:
        for reason in can_serve(dev.part, new_part, dev, bus):
            if reason not in reasons:
                reasons.append(reason)
    return places[0][1].part_id, reasons


def can_serve(old_part: Part, new_part: Part, device, bus) -> list[str]:
    """Why ``new_part`` cannot stand where ``old_part`` serves ``device`` on ``bus``.

    Parameters
    ----------
    old_part : Part
        The part in the position now.
    new_part : Part
        The part proposed instead.
    device : Device
        The device (its role, its side for a bridging part, its named pin on a GPIO
        line).
    bus : Bus
        The bus the position is on (its protocol, its other devices).

    Returns
    -------
    list of str
        The reasons, empty when the part can serve.

    Notes
    -----
    The rule, applied to each pin function of the protocol that the old part serves
    (on the device's side, for a bridging part):

    * the new part has a pin with that function (on a GPIO line: the pin the design
      names, or the one the engine would pick);
    * its drive is one the position allows: SDA open-drain on every device; SCL
      open-drain or input on a target, open-drain on a controller (push-pull only when
      no other device on the bus can hold SCL low — no clock stretching, no second
      controller); an SPI controller drives SCLK, COPI and CS push-pull and reads CIPO,
      a peripheral reads SCLK, COPI and CS and drives CIPO push-pull (tri-state); a
      bridging part on an open-drain bus is open-drain or passive ("input") on each
      side, one on an SPI bus keeps each channel's direction; a GPIO pin keeps the old
      pin's drive;
    * a bridging part is replaced by a bridging part, and a plain part by a plain one;
    * on a push-pull bus, a pin the new part has and the old part lacks does not put it
      on a routed line whose ``route`` does not reach the device (the design would not
      load: every device on a routed line is one of its points).

    A drive rule the old part itself breaks is not held against the new part: the
    position is what the design already accepted.  Electrical fitness (capacitance,
    levels, timing, supply range) is not judged here; the engines judge it.
    """
    reasons: list[str] = []
    if bool(old_part.sides) != bool(new_part.sides):
        if old_part.sides:
            reasons.append(f"{old_part.id} is a bridging part (sides a and b); "
                           f"{new_part.id} is not")
        else:
            reasons.append(f"{new_part.id} is a bridging part (sides a and b); the position "
                           "takes a plain device")
        return reasons
    side = device.side if old_part.sides else None
    on_side = f" on side {side}" if side else ""
    protocol = bus.protocol

    if protocol == "gpio":
        return _can_serve_gpio(old_part, new_part, device, bus) + _off_route(new_part,
                                                                               device, bus)

    for function in PROTOCOL_FUNCTIONS.get(protocol, ()):
        got_old = old_part.pin_for(function, side)
        if got_old is None:
            continue
        old_name, old_pin = got_old
        got_new = new_part.pin_for(function, side)
        if got_new is None:
            reasons.append(f"{new_part.id} has no {function} pin{on_side} (the {old_part.id} "
                           f"pin '{old_name}' serves it on bus {bus.id})")
            continue
        new_name, new_pin = got_new
        if old_part.sides and protocols.is_open_drain(protocol):
            rule = ({"open-drain", "input"}, "a bridging part on an open-drain bus either "
                    "drives it open-drain (a repeater) or passes it through (a pass "
                    "transistor); a push-pull side would fight the pull-ups")
        elif old_part.sides:
            rule = ({old_pin.drive}, "a bridging part keeps the direction of each channel")
        else:
            rule = _allowed_drives(protocol, function, device.role)
        if rule is None:
            continue
        allowed, why = rule
        if (protocols.is_open_drain(protocol)
                and function == protocols.protocol(protocol).function("scl")
                and device.role == "controller" and new_pin.drive == "push-pull"):
            others = _scl_drivers_elsewhere(device, bus)
            if others and old_pin.drive != "push-pull":
                reasons.append(f"{new_part.id} pin '{new_name}' ({function}) is push-pull, but "
                               f"{', '.join(others)} can hold SCL low (clock stretching or "
                               "another controller): the outputs would fight; SCL must be "
                               "open-drain here")
            continue
        if new_pin.drive not in allowed and old_pin.drive in allowed:
            reasons.append(f"{new_part.id} pin '{new_name}' ({function}) is {new_pin.drive}, "
                           f"the position needs {' or '.join(sorted(allowed))}: {why}")
    return reasons + _off_route(new_part, device, bus)


def _off_route(new_part: Part, device, bus) -> list[str]:
    """The routed lines of a push-pull bus that the new part would have a pin on and the
    old part has none on, whose route does not reach the device: every device with a pin
    on a routed line is one of its points, so the swapped design would not load."""
    from pinlib.model.design.route import gpio_pin, on_line

    if bus.protocol not in protocols.PUSH_PULL_PROTOCOLS:
        return []
    new_dev = replace(device, part=new_part, part_id=new_part.id)
    n_lines = len(bus.lines)
    reasons = []
    for signal, line in bus.lines.items():
        if not line.route or any(device.ref in pair for pair in line.route):
            continue
        if on_line(device, bus.protocol, signal, n_lines):
            continue  # the design placed it so: not the new part's doing
        if not on_line(new_dev, bus.protocol, signal, n_lines):
            continue
        if bus.protocol == "spi":
            function = protocols.SIGNAL_FUNCTION[signal]
            name = new_dev.part.pin_for(function, new_dev.part_side)[0]
            pin = f"pin '{name}' ({function})"
        else:
            try:
                got = gpio_pin(new_dev, signal, n_lines)
            except PinlibError:
                got = None
            pin = f"pin '{got[0]}'" if got else "pin"
        reasons.append(f"the {new_part.id} {pin} would be on line {signal} of bus {bus.id}, "
                       f"whose route does not reach {device.ref} (every device with a pin on "
                       f"a routed line is one of its points): add a stretch to {device.ref} "
                       f"in lines.{signal}.route, or choose a part without that pin")
    return reasons


def _can_serve_gpio(old_part: Part, new_part: Part, device, bus) -> list[str]:
    from pinlib.engines.pushpull import gpio_pin

    reasons = []
    n_lines = len(bus.lines)
    new_dev = replace(device, part=new_part, part_id=new_part.id)
    for signal in bus.lines:
        try:
            got_old = gpio_pin(device, signal, n_lines)
        except PinlibError:
            got_old = None
        if got_old is None:
            continue
        old_name, old_pin = got_old
        try:
            got_new = gpio_pin(new_dev, signal, n_lines)
        except PinlibError:
            got_new = None
        if got_new is None:
            named = f"pin '{device.pin}'" if device.pin else f"pin for line {signal}"
            reasons.append(f"{new_part.id} has no {named} (the {old_part.id} pin '{old_name}' "
                           f"serves line {signal} on bus {bus.id})")
            continue
        new_name, new_pin = got_new
        if new_pin.drive != old_pin.drive:
            reasons.append(f"{new_part.id} pin '{new_name}' is {new_pin.drive}, the "
                           f"{old_part.id} pin '{old_name}' on line {signal} is "
                           f"{old_pin.drive}: a GPIO position keeps its drive")
    return reasons


def swapped_text(design, swaps: dict[str, str]) -> str:
    """The design file's text with the ``part`` of every device in ``swaps`` replaced.

    Only the ``part = "..."`` values of those devices change — in inline tables inside
    ``devices = [...]`` arrays, in ``[[bus.segment]]`` devices, and in
    ``[[bus.devices]]`` tables alike; comments, order, spacing and every other byte stay
    as they were (the file is edited with tomlkit, which keeps them).  The new text is
    checked before it is returned: parsed again it must equal the old data with exactly
    those values changed, and it must load as a design with the same library.

    Parameters
    ----------
    design : Design
        A design loaded from a file (its text and the place of each device are used).
    swaps : dict
        New part id by reference designator, ``{"U4": "eeprom-hicap"}``.

    Raises
    ------
    DesignError
        When a reference is not in the design, or the edit would not round-trip.
    """
    import copy

    import tomlkit

    from pinlib.core.errors import DesignError
    from pinlib.core.tomlfile import tomllib
    from pinlib.model.design import design_from_text

    fname = str(design.path) if design.path else None
    places = {ref: [] for ref in swaps}
    for bus in design.buses:
        for d in bus.devices:
            if d.ref in places and d.loc not in places[d.ref]:
                places[d.ref].append(d.loc)
    for ref, locs in places.items():
        if not locs:
            raise DesignError(M.NO_SUCH_REFERENCE, file=fname, field="swap",
                              value=ref)
    doc = tomlkit.parse(design.text)
    expected = copy.deepcopy(tomllib.loads(design.text))
    for ref, locs in places.items():
        for loc in locs:
            item = doc
            want = expected
            for key in loc:
                item = item[key]
                want = want[key]
            old = item["part"]
            literal = getattr(getattr(old, "type", None), "name", "") == "SLL"
            item["part"] = tomlkit.string(swaps[ref], literal=literal and "'" not in swaps[ref])
            want["part"] = swaps[ref]
    text = tomlkit.dumps(doc)
    if tomllib.loads(text) != expected:  # pragma: no cover - a tomlkit defect
        raise DesignError(M.EDIT_CHANGES_MORE,
                          file=fname, hint="edit the part ids by hand")
    check = design_from_text(tomllib.loads(text), text, design.path, library=design.library)
    for ref, part_id in swaps.items():
        for bus in check.buses:
            for d in bus.devices:
                if d.ref == ref and d.part_id != part_id:  # pragma: no cover - defensive
                    raise DesignError(M.EDIT_LOST_PART,
                                      file=fname, field="swap", value=ref)
    return text
