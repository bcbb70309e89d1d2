"""One bus of a design built from its raw table and checked: open-drain (segments, bridging
parts) or push-pull (routed lines); one part per reference designator."""

from __future__ import annotations

from pinlib.core import messages as M
from pinlib.core import protocols
from pinlib.core.labels import and_list, plural_s
from pinlib.core.quantity import format_si
from pinlib.core.tomlfile import dotted as dotted_path
from pinlib.core.tomlfile import line_of
from pinlib.model.design.objects import PULLUP_TOLERANCE, Bus, Device, Line, Segment
from pinlib.model.design.raw import SIGNAL_FUNCTION, SPI_SIGNALS, RawBus
from pinlib.model.design.route import look_alikes, on_line, route_of

#: Older names of the SPI signals still on schematics and in datasheets, and the name a
#: design gives each (common practice, no source; SDI and SDO are left out: which line
#: they name depends on the device).
_SPI_OTHER_NAMES = {"mosi": "copi", "miso": "cipo", "sck": "sclk", "clk": "sclk",
                    "ss": "cs", "nss": "cs", "csn": "cs", "cs_n": "cs"}

_SEGMENT_KEYS = ("supply", "supply_tolerance", "pullup", "pullup_tolerance", "pullup_series",
                 "trace", "extra_capacitance", "capacitance_tolerance", "length_tolerance")


def _open_drain_bus(rb: RawBus, bloc, mode, device, sections, cables, err) -> Bus:
    own, seg_locs = _segment_tables(rb, bloc, err)
    segments = [_segment(rb, rs, sloc, si, len(own), device, sections, cables, err)
                for si, (rs, sloc) in enumerate(zip(own, seg_locs, strict=True))]
    all_devices: list[Device] = [d for seg in segments for d in seg.devices]
    if not any(d.is_controller for d in all_devices):
        raise err(M.BUS_NEEDS_CONTROLLER, bloc + ("devices",),
                  hint="mark one device role = \"controller\"")
    _no_device_pin(all_devices, err)
    _check_open_drain_pins(rb, segments, err)
    _check_controllers_drive(rb, all_devices, err)
    _check_bridges(segments, err)
    _check_joined(segments, err)
    return Bus(rb.id, rb.protocol, mode, rb.clock, segments[0].supply,
               segments[0].supply_tolerance, tuple(segments), tuple(all_devices), {},
               0, rb.title, segments[0].capacitance_tolerance,
               segments[0].length_tolerance, bloc)


def _segment_tables(rb: RawBus, bloc, err) -> tuple[list, list]:
    """The raw tables of an open-drain bus's segments and their places in the file: its
    ``[[bus.segment]]`` tables, or the bus itself as its one segment."""
    if rb.lines:
        raise err(M.OPEN_DRAIN_NO_LINES, bloc + ("lines",),
                  hint="give the bus (or each segment) a trace")
    raws = list(rb.segment)
    if raws and rb.devices:
        raise err(M.DEVICES_IN_SEGMENTS, bloc + ("devices",))
    # Capacitance belongs to one stretch of bus: inherited by every segment it would be
    # counted once per segment.
    for key in ("trace", "cables", "extra_capacitance"):
        if raws and getattr(rb, key):
            raise err(M.KEY_IN_SEGMENTS.format(key=key), bloc + (key,),
                      hint="give each [[bus.segment]] its own")
    if not raws:
        return [rb], [bloc]
    return raws, [bloc + ("segment", i) for i in range(len(raws))]


def _segment(rb: RawBus, rs, sloc, si: int, count: int, device, sections, cables,
             err) -> Segment:
    """One segment of an open-drain bus; a key it does not give falls back to the bus's."""
    def pick(key, default=None):
        v = getattr(rs, key)
        if v is None and rs is not rb:
            v = getattr(rb, key)
        return default if v is None else v

    supply = pick("supply")
    if supply is None:
        raise err(M.BUS_NEEDS_PULLUP_SUPPLY, sloc + ("supply",),
                  expected="supply = \"3.3 V\"")
    if supply <= 0:
        raise err(M.SUPPLY_NOT_POSITIVE, sloc + ("supply",), value=format_si(supply, "V"))
    devices = tuple(device(d, sloc + ("devices", i)) for i, d in enumerate(rs.devices))
    seg_id = rs.id or (rb.id if count == 1 else f"{rb.id}-{si + 1}")
    cab = cables(rs.cables or (rb.cables if rs is not rb else ()), sloc + ("cables",))
    trace = pick("trace")
    if trace is not None:
        # (a bus with segments gives no trace of its own: the segment's is at sloc)
        _refuse_line_keys(trace, sloc + ("trace",), err)
    series = pick("pullup_series", "E24")
    from pinlib.core.eseries import SERIES_NAMES
    if series.upper() not in SERIES_NAMES:
        raise err(M.UNKNOWN_NUMBER_SERIES, sloc + ("pullup_series",), value=series,
                  expected="one of " + ", ".join(SERIES_NAMES))
    return Segment(
        seg_id, supply, pick("supply_tolerance", 0.0), pick("pullup", "auto"),
        pick("pullup_tolerance", PULLUP_TOLERANCE), series.upper(),
        sections(trace, sloc + ("trace",)), pick("extra_capacitance", 0.0),
        pick("capacitance_tolerance", 0.0), pick("length_tolerance", 0.0), cab, devices,
        sloc)


def _check_open_drain_pins(rb: RawBus, segments: list[Segment], err) -> None:
    """A bridging part names its side, no other part does, and every part has the pins
    of the protocol (on its side)."""
    for seg in segments:
        for d in seg.devices:
            side = d.side
            if d.is_bridge and side is None:
                raise err(M.BRIDGE_NEEDS_SIDE, d.loc + ("side",),
                          expected='side = "a" or "b"')
            if not d.is_bridge and side is not None:
                raise err(M.SIDE_ONLY_FOR_BRIDGE, d.loc + ("side",), value=side)
            for fn in protocols.protocol(rb.protocol).device_needs:
                if d.part.pin_for(fn, side) is None:
                    raise err(M.PART_LACKS_PIN_ON_SIDE.format(function=fn, side=side) if side
                              else M.PART_LACKS_PIN.format(function=fn),
                              d.loc + ("part",), value=d.part_id,
                              hint="an I2C/SMBus device needs SDA and SCL pins")


def _pulls_low(d: Device, fn: str) -> bool:
    """Whether device ``d``'s pin of function ``fn`` can pull its line low: an output
    (open-drain, or push-pull), not an input, on any part but a pass-transistor
    translator (which passes a low from one side to the other and drives neither)."""
    got = d.part.pin_for(fn, d.side)
    bridge = d.part.bridge
    return (got is not None and got[1].drive != "input"
            and not (bridge is not None and bridge.kind == "mosfet"))


def _check_controllers_drive(rb: RawBus, devices: list[Device], err) -> None:
    """Every controller of an open-drain bus can pull SCL and SDA low: it makes the
    clock, the start and the address, so a part whose pin on either line only reads it
    cannot be one (nothing would clock the bus).  Refused at the device's ``role``; the
    hint names the devices that can pull the line low, or says that none can.  A
    segment reached through a bridging part is driven through it (the engine works out
    how well)."""
    proto = protocols.protocol(rb.protocol)
    for d in devices:
        if not d.is_controller:
            continue
        for sig in ("scl", "sda"):
            fn = proto.function(sig)
            if _pulls_low(d, fn):
                continue
            name, pin = d.part.pin_for(fn, d.side)  # every part has it (checked before)
            bridge = d.part.bridge
            why = (f"{d.part_id} is a pass-transistor translator: it drives neither side"
                   if bridge is not None and bridge.kind == "mosfet" else
                   f"{d.part_id} pin '{name}' ({fn}) has drive = \"{pin.drive}\": it only "
                   "reads the line")
            up = sig.upper()
            whom = _who_else(devices, d, lambda o, fn=fn: _pulls_low(o, fn),
                             f"pull {up} low")
            raise err(M.CONTROLLER_CANNOT_DRIVE.format(signal=up), d.loc + ("role",),
                      value=d.role,
                      expected=f'role = "peripheral" here, and role = "controller" on a '
                               f"device whose {up} pin drives the line",
                      hint=f"{why}; {whom}")


def _who_else(devices, d: Device, able, doing: str) -> str:
    """The hint's half that names the other devices that ``able(device)`` says could be
    the controller ("U1 can pull SCL low"), or says that none can and what to add."""
    others = sorted({o.ref for o in devices if o.ref != d.ref and not o.is_bridge and able(o)})
    if others:
        return f"{and_list(others)} can {doing}"
    return (f"no device on this bus can {doing}: add the part that controls the bus (a "
            "microcontroller, a host adapter)")


def _check_bridges(segments: list[Segment], err) -> None:
    """Every bridging part sits in two segments, one on each side."""
    bridges: dict[str, list[str]] = {}
    for seg in segments:
        for d in seg.devices:
            if d.is_bridge:
                bridges.setdefault(d.ref, []).append(d.side)
    for ref, sides in bridges.items():
        if sorted(sides) != ["a", "b"]:
            loc = next(d.loc for s in segments for d in s.devices if d.ref == ref)
            raise err(M.BRIDGE_IN_TWO_SEGMENTS, loc + ("ref",), value=ref,
                      hint=f"found side{plural_s(len(sides))}: {', '.join(sides)}")


def _check_joined(segments: list[Segment], err) -> None:
    """Every segment is joined to the controller's through bridging parts (the first
    controller's segment, and from there each segment sharing a bridging part with one
    reached): a segment joined to none is cut off from the controller, and its lines
    have no clock.  Refused at the first such segment's ``devices``."""
    if len(segments) < 2:
        return
    start = next(i for i, s in enumerate(segments) if any(d.is_controller for d in s.devices))
    bridges = [{d.ref for d in s.devices if d.is_bridge} for s in segments]
    reached, queue = {start}, [start]
    while queue:  # a walk over the segments, each taken once
        i = queue.pop()
        for j, refs in enumerate(bridges):
            if j not in reached and refs & bridges[i]:
                reached.add(j)
                queue.append(j)
    for j, seg in enumerate(segments):
        if j not in reached:
            joined = [segments[k].id for k in sorted(reached)]
            raise err(M.SEGMENT_NOT_JOINED, seg.loc + ("devices",), value=seg.id,
                      expected="a bridging part in this segment and in one joined to "
                               f"the controller's ({and_list(joined)})",
                      hint="list the translator or repeater in both segments (side = "
                           "\"a\" in one, \"b\" in the other), or give these devices a "
                           "bus of their own")


def _push_pull_bus(rb: RawBus, bloc, device, sections, err, homes=None) -> Bus:
    if rb.segment:
        raise err(M.BUS_HAS_NO_SEGMENTS.format(protocol=rb.protocol), bloc + ("segment",),
                  hint="route each signal under lines.<signal>")
    for key in ("pullup", "pullup_tolerance", "pullup_series", "cables", "trace",
                "extra_capacitance"):
        if getattr(rb, key) is not None and getattr(rb, key) != ():
            # where the value belongs: a line's own key, or the lines themselves
            hint = (M.TRACE_BELONGS_ON_LINES if key == "trace" else
                    M.KEY_BELONGS_ON_LINE.format(key=key)
                    if key in ("pullup", "pullup_tolerance", "extra_capacitance") else None)
            value = (_shown(rb.extra_capacitance, "F") if key == "extra_capacitance" else
                     _shown(rb.pullup, "Ω") if key == "pullup" else None)
            raise err(M.BUS_HAS_NO_KEY.format(protocol=rb.protocol, key=key), bloc + (key,),
                      value=value, hint=hint)
    if rb.supply is None:
        raise err(M.BUS_NEEDS_SUPPLY, bloc + ("supply",), expected="supply = \"3.3 V\"")
    _refuse_open_drain_device_keys(rb, bloc, err)
    devices = tuple(device(d, bloc + ("devices", i)) for i, d in enumerate(rb.devices))
    if not any(d.is_controller for d in devices):
        raise err(M.BUS_NEEDS_CONTROLLER, bloc + ("devices",),
                  hint="mark one device role = \"controller\"")
    if rb.protocol == "spi":
        _one_spi_controller(devices, err)
    if rb.protocol == "gpio":
        _check_gpio_pins(devices, tuple(rb.lines), err)
    else:
        _no_device_pin(devices, err)
    lines = {}
    for sig, rt in rb.lines.items():
        loc = bloc + ("lines", sig)
        if rb.protocol == "spi" and sig not in SPI_SIGNALS:
            same = _SPI_OTHER_NAMES.get(sig.lower())
            raise err(M.UNKNOWN_SPI_SIGNAL, loc, value=sig, expected=", ".join(SPI_SIGNALS),
                      hint=f"{sig} is named {same} here" if same else None)
        alike: tuple = ()
        if rt.route:
            secs, points = route_of(rt, loc, devices, rb.protocol, sig, len(rb.lines),
                                    sections, err, homes)
            alike = look_alikes(points, devices, rb.protocol, sig, len(rb.lines), homes)
        else:
            secs, points = sections(rt, loc), ()
        # a line's own pull-up: a GPIO line's, or an SPI line's (a chip select held
        # high while its driver is not yet driving, a CIPO while no peripheral drives it)
        if rt.pullup_tolerance is not None and rt.pullup is None:
            raise err(M.LINE_PULLUP_TOLERANCE_ALONE, loc + ("pullup_tolerance",),
                      expected='pullup = "10 kΩ" beside it, or no pullup_tolerance')
        lines[sig] = Line(sig, secs, "none" if rt.series_resistor is None
                          else rt.series_resistor, rt.extra_capacitance or 0.0, loc, points,
                          alike, pullup=rt.pullup,
                          pullup_tolerance=(None if rt.pullup is None else
                                            PULLUP_TOLERANCE if rt.pullup_tolerance is None
                                            else rt.pullup_tolerance))
    if rb.protocol == "spi":
        if rb.clock is None:
            raise err(M.SPI_NEEDS_CLOCK, bloc + ("clock",),
                      expected="clock = \"25 MHz\"")
        for d in devices:
            # a controller drives the clock, data out and select; a peripheral needs the clock
            needs = (tuple(SIGNAL_FUNCTION[sig] for sig in ("sclk", "copi", "cs"))
                     if d.is_controller else protocols.protocol("spi").device_needs)
            for fn in needs:
                if d.part.pin_for(fn, d.side) is None and not d.is_bridge:
                    raise err(M.PART_LACKS_PIN.format(function=fn), d.loc + ("part",),
                              value=d.part_id)
        _spi_controller_drives(devices, lines, err)
        if "sclk" not in lines:
            raise err(M.SPI_NEEDS_SCLK, bloc + ("lines",),
                      expected='lines.sclk = { length = "8 cm", geometry = "..." }')
    return Bus(rb.id, rb.protocol, None, rb.clock, rb.supply, rb.supply_tolerance or 0.0, (),
               devices, lines, rb.spi_mode or 0, rb.title, rb.capacitance_tolerance or 0.0,
               rb.length_tolerance or 0.0, bloc)


def _spi_controller_drives(devices, lines: dict, err) -> None:
    """The SPI controller drives SCLK, COPI and CS: a part whose pin of one of them (a
    routed line, or SCLK) is not a push-pull output cannot be it (a memory's SCLK only
    reads the clock).  Refused at its ``role``, naming the devices that could drive the
    line, or saying none can, as an open-drain bus refuses a controller that cannot
    pull SCL low."""
    ctrl = next(d for d in devices if d.is_controller)
    if ctrl.is_bridge:
        return  # a buffer's side passes the controller's edges on (the engine's model)
    for sig in ("sclk", "copi", "cs"):
        if sig != "sclk" and sig not in lines:
            continue
        fn = SIGNAL_FUNCTION[sig]
        got = ctrl.part.pin_for(fn, ctrl.side)
        if got is None or got[1].drive == "push-pull":
            continue  # a missing pin is PART_LACKS_PIN's
        name, pin = got
        whom = _who_else(devices, ctrl,
                         lambda o, fn=fn: (p := o.part.pin_for(fn, o.side)) is not None
                         and p[1].drive == "push-pull", f"drive {sig.upper()}")
        raise err(M.SPI_CONTROLLER_CANNOT_DRIVE.format(signal=sig.upper()),
                  ctrl.loc + ("role",), value=ctrl.role,
                  expected=f'role = "peripheral" here, and role = "controller" on the '
                           f"device whose {sig.upper()} pin is a push-pull output",
                  hint=f"{ctrl.part_id} pin '{name}' ({fn}) has drive = \"{pin.drive}\"; "
                       f"{whom}")


def _one_spi_controller(devices, err) -> None:
    """An SPI bus has one controller: it alone drives SCLK, COPI and CS, and the engine
    solves each line from it.  A second device marked ``role = "controller"`` is refused
    at its ``role`` (left in, it would be on no line as a driver and in no timing path:
    left out without a word).  Several controllers on an I2C or SMBus bus are legal
    (arbitration), and on a GPIO bus the drivers are the pins' own drives."""
    ctrls = [d for d in devices if d.is_controller]
    if len(ctrls) < 2:
        return
    first, second = ctrls[0], ctrls[1]
    raise err(M.SPI_ONE_CONTROLLER, second.loc + ("role",), value=second.role,
              expected="one controller per SPI bus",
              hint=f"{first.ref} is the bus's controller (field "
                   f"'{dotted_path(first.loc + ('role',))}'); describe {second.ref}'s pins "
                   "on this bus as a load (role = \"peripheral\"), or give it an SPI bus "
                   "of its own")


#: The keys of an SPI or GPIO line that an open-drain trace does not take, with where the
#: value belongs on an I2C or SMBus bus (None: the pull-up keys, one hint for both).
_LINE_ONLY_KEYS = {"pullup": None, "pullup_tolerance": None,
                   "series_resistor": M.SERIES_RESISTOR_ON_DEVICE,
                   "extra_capacitance": M.EXTRA_CAPACITANCE_BESIDE_TRACE}


def _refuse_line_keys(trace, loc, err) -> None:
    """Refuse in an open-drain bus's (or segment's) ``trace`` the first key only a push-pull
    line takes (its own pull-up, series resistor, extra capacitance), at that key, with
    where its value belongs: the open-drain engine reads none of them, and a key taken
    but not read would let a design look checked with it."""
    for key, hint in _LINE_ONLY_KEYS.items():
        value = getattr(trace, key)
        if value is None:
            continue
        if hint is None:
            raise err(M.LINE_PULLUP_NOT_GPIO, loc + (key,),
                      hint="an I2C or SMBus bus (or segment) takes its pull-up as pullup = "
                           "\"2.2 kΩ\" or \"auto\" beside its trace")
        raise err(M.LINE_KEY_NOT_OPEN_DRAIN.format(key=key), loc + (key,),
                  value=_shown(value, "Ω" if key == "series_resistor" else "F"), hint=hint)


def _shown(value, unit: str):
    """A validated value as a message shows it: a word as written, a number with its
    unit."""
    return value if isinstance(value, str) else format_si(value, unit)


def _refuse_open_drain_device_keys(rb: RawBus, bloc, err) -> None:
    """Refuse on a device of an SPI or GPIO bus the keys only the open-drain engine reads:
    ``series_resistor`` (a push-pull line takes its own, at the driver) and ``switched``
    (the power-off check), at the first device that writes one."""
    for i, d in enumerate(rb.devices):
        loc = bloc + ("devices", i)
        if d.series_resistor is not None:
            raise err(M.DEVICE_KEY_NOT_PUSH_PULL.format(key="series_resistor"),
                      loc + ("series_resistor",), value=format_si(d.series_resistor, "Ω"),
                      hint=M.SERIES_RESISTOR_ON_LINE)
        if d.switched is not None:
            raise err(M.DEVICE_KEY_NOT_PUSH_PULL.format(key="switched"), loc + ("switched",),
                      value=d.switched, hint=M.SWITCHED_NOT_CHECKED)


def _no_device_pin(devices, err) -> None:
    """``pin`` chooses a device's pin on a GPIO line; on another bus nothing reads it
    (the pins of the bus's functions are used): refused at the device's ``pin``."""
    for d in devices:
        if d.pin is not None:
            raise err(M.DEVICE_PIN_NOT_GPIO, d.loc + ("pin",), value=d.pin,
                      hint="the bus uses the part's pins of its functions; leave pin out")


def _check_gpio_pins(devices, lines: tuple, err) -> None:
    """Each ``pin`` a device of a GPIO bus names is a pin of its part (of its side, for a
    bridge), and on a bus of several lines the name of one of them (the rule of
    :func:`pinlib.model.design.route.gpio_pin`; another name would select nothing):
    refused at the device's ``pin``; and each peripheral is on a line (refused at the
    device)."""
    for d in devices:
        if d.pin is None:
            continue
        pins = d.part_pins
        if d.pin not in pins:
            raise err(M.NO_SUCH_PIN, d.loc + ("pin",), value=d.pin,
                      hint=f"{d.part_id} has pins: " + (", ".join(pins) or "none"))
        if len(lines) > 1 and d.pin not in lines:
            raise err(M.GPIO_PIN_NAMES_NO_LINE, d.loc + ("pin",), value=d.pin,
                      expected="one of the bus's lines: " + ", ".join(lines),
                      hint="to put a pin of another name on a line, give that line a bus "
                           "of its own")
    # a peripheral on no line serves no purpose there (a misspelt or missing pin); the
    # controller every bus names may stand apart from its lines (the engine notes it)
    for d in devices:
        if d.is_controller:
            continue
        if lines and not any(on_line(d, "gpio", sig, len(lines)) for sig in lines):
            pins = d.part_pins
            raise err(M.GPIO_DEVICE_ON_NO_LINE, d.loc, value=d.ref,
                      hint=f"{d.part_id} has no pin named "
                           + " or ".join(repr(s) for s in lines)
                           + (" and no single gpio pin" if len(lines) == 1 else "")
                           + "; give the device its pin (pin = \"NAME\"; pins: "
                           + (", ".join(pins) or "none") + ")")


def _one_part_per_reference(buses, err, fname, index) -> None:
    """One reference designator is one chip: it may sit on several buses (one chip on two
    buses), but always as the same part, and once per bus (a bridging part once per side).
    """
    seen: dict[str, tuple[Bus, Device]] = {}
    for bus in buses:
        for d in bus.devices:
            first = seen.get(d.ref)
            if first is None:
                seen[d.ref] = (bus, d)
                continue
            fb, fd = first
            where = f"{fname}:{line_of(index, fd.loc + ('ref',))}" if fname else \
                f"line {line_of(index, fd.loc + ('ref',))}"
            also = M.ALSO_AT.format(where=f"{where}, field '{dotted_path(fd.loc + ('ref',))}'",
                                    part=fd.part_id)
            if fd.part_id != d.part_id:
                raise err(M.REFERENCE_TWO_PARTS.format(part=d.part_id, other=fd.part_id),
                          d.loc + ("ref",), value=d.ref, hint=also)
            if fb is bus and not (d.is_bridge and d.side != fd.side):
                raise err(M.REFERENCE_TWICE_ON_BUS, d.loc + ("ref",), value=d.ref, hint=also)
