"""Design files, ``format = "pinlib.design/1"``: loading, checking references, objects.

A design is the buses of one board built from library parts.  Loading happens in two
passes.  The first checks the file's structure and units with pydantic models (a
misspelt key or a capacitance written in henries is an error that names the file,
line and field).  The second resolves references — part ids against the merged
library, geometry names against ``[board.geometry]`` — and checks what a bus needs:
a controller, the pins its protocol uses, a bridging part present on both sides.

The result is a tree of plain dataclasses (:class:`Design` > :class:`Bus` >
:class:`Segment` / :class:`Line` > :class:`Device`) holding SI floats and resolved
:class:`~pinlib.library.schema.Part` objects, which the engines read.
"""

from __future__ import annotations

import os
from dataclasses import dataclass, field
from pathlib import Path
from typing import Annotated, Literal

from pydantic import BaseModel, BeforeValidator, ConfigDict, Field, ValidationError

from pinlib.core import messages as M
from pinlib.core import protocols
from pinlib.core.errors import DesignError, LibraryError, PinlibError
from pinlib.core.quantity import format_si, parse
from pinlib.core.tomlfile import dotted as dotted_path
from pinlib.core.tomlfile import line_index, line_of, load
from pinlib.core.worklimits import (
    MAX_DEVICES_OPEN_DRAIN,
    MAX_DEVICES_PUSH_PULL,
    MAX_SECTIONS_PER_LINE,
)
from pinlib.library.folders import require_folders
from pinlib.library.loader import Library, load_library, pydantic_errors
from pinlib.library.schema import Part

__all__ = [
    "FORMAT",
    "PROTOCOLS",
    "MODES",
    "Geometry",
    "Section",
    "Cable",
    "Device",
    "Segment",
    "Line",
    "Bus",
    "Design",
    "load_design",
    "design_from_text",
]

FORMAT = "pinlib.design/1"
PROTOCOLS = protocols.NAMES
MODES = {"i2c": ("standard", "fast", "fast-plus"), "smbus": ("100k", "400k", "1m")}
SPI_SIGNALS = protocols.protocol("spi").signal_names
# The pin function each signal of a protocol uses.
SIGNAL_FUNCTION = protocols.SIGNAL_FUNCTION


def _unit_validator(unit, lo=None, hi=None):
    def validate(raw, info=None):
        x = parse(raw, unit, field=getattr(info, "field_name", None))
        if x < 0 and unit not in ("V",):
            raise DesignError(M.NEGATIVE_VALUE, value=raw, expected="zero or more")
        if (lo is not None and x < lo) or (hi is not None and x > hi):
            raise DesignError(M.OUTSIDE_RANGE, value=raw,
                              expected=f"between {format_si(lo, unit)} and "
                                       f"{format_si(hi, unit)}")
        return x

    return validate


def _unit(unit, lo=None, hi=None):
    return Annotated[float, BeforeValidator(_unit_validator(unit, lo, hi))]


def _auto_or(unit, lo=None, hi=None, words=("auto",)):
    # Parse here: handed on as text, "2.2 kΩ" would satisfy the str side of the union and
    # stay a string.
    quantity = _unit_validator(unit, lo, hi)

    def validate(raw, info=None):
        if isinstance(raw, str) and raw.strip().lower() in words:
            return raw.strip().lower()
        return quantity(raw, info)

    return Annotated[str | float, BeforeValidator(validate)]


Length = _unit("m", 0.0, 1000.0)
Capacitance = _unit("F", 0.0, 1e-6)
Resistance = _unit("Ω", 0.0, 1e9)
Voltage = _unit("V", -100.0, 100.0)
Frequency = _unit("Hz", 0.0, 100e9)
Ratio = _unit("%", 0.0, 1.0)
# A tolerance that takes a pull-up or a supply down to zero leaves nothing to compute
# (a 100 % pull-up tolerance is a 0 Ω pull-up at its low end); half is already far past
# any real part (common practice, no source).
Tolerance = _unit("%", 0.0, 0.5)
# Board cross-sections: 10 µm to 100 mm for widths and heights, copper up to 1 mm thick.
# Outside this the trace models give impedances (and the line solver time grids) that no
# board has (common practice, no source).
Dimension = _unit("m", 10e-6, 0.1)
Thickness = _unit("m", 0.0, 1e-3)
CapPerLength = _unit("F/m", 0.0, 1e-6)
DelayPerLength = _unit("s/m", 1e-9, 1e-6)
PullupSetting = _auto_or("Ω", 1e-3, 1e9, words=("auto",))
SeriesSetting = _auto_or("Ω", 0.0, 1e6, words=("auto", "none"))


class _Raw(BaseModel):
    model_config = ConfigDict(extra="forbid", frozen=True)


class RawGeometry(_Raw):
    kind: Literal["microstrip", "stripline"]
    width: Dimension
    height: Dimension | None = None   # microstrip: to the plane; stripline: to each plane
    spacing: Dimension | None = None  # stripline: plane to plane
    thickness: Thickness = 35e-6      # 1 oz copper, common practice
    er: Annotated[float, Field(ge=1.0, le=100.0)]
    method: str | None = None


class RawSection(_Raw):
    length: Length
    geometry: str | None = None
    capacitance: CapPerLength | None = None
    delay: DelayPerLength | None = None
    part: str | None = None           # a cable class from the library


class RawTrace(RawSection):
    sections: tuple[RawSection, ...] = ()
    length: Length | None = None  # type: ignore[assignment]
    series_resistor: SeriesSetting = "none"  # push-pull lines only
    extra_capacitance: Capacitance = 0.0


class RawCable(_Raw):
    part: str
    length: Length


class RawDevice(_Raw):
    ref: Annotated[str, Field(min_length=1, max_length=40)]
    part: str
    role: Literal["controller", "peripheral", "target"] = "peripheral"
    supply: Voltage | None = None
    switched: bool = False
    series_resistor: Resistance | None = None
    side: Literal["a", "b"] | None = None
    internal_pullups: bool = False
    pin: str | None = None
    capacitance_tolerance: Ratio | None = None


class RawSegment(_Raw):
    id: str | None = None
    supply: Voltage | None = None
    supply_tolerance: Tolerance | None = None
    pullup: PullupSetting | None = None
    pullup_tolerance: Tolerance | None = None
    pullup_series: str | None = None
    trace: RawTrace | None = None
    extra_capacitance: Capacitance | None = None
    capacitance_tolerance: Ratio | None = None
    length_tolerance: Ratio | None = None
    cables: tuple[RawCable, ...] = ()
    devices: tuple[RawDevice, ...] = ()


class RawBus(RawSegment):
    id: str
    protocol: Literal[PROTOCOLS]  # type: ignore[valid-type]
    title: str | None = None
    mode: str | None = None
    clock: Frequency | None = None
    spi_mode: Annotated[int, Field(ge=0, le=3)] = 0
    segment: tuple[RawSegment, ...] = ()
    lines: dict[str, RawTrace] = Field(default_factory=dict)


class RawBoard(_Raw):
    geometry: dict[str, RawGeometry] = Field(default_factory=dict)


class RawDesign(_Raw):
    format: Literal["pinlib.design/1"]
    title: str
    description: str | None = None
    library: tuple[str, ...] = ()
    warn_margin: Ratio = 0.10
    distribution: Literal["uniform", "normal"] = "uniform"
    board: RawBoard = RawBoard()
    bus: tuple[RawBus, ...] = ()


# ---------------------------------------------------------------- resolved objects


@dataclass(frozen=True)
class Geometry:
    name: str
    kind: str
    width: float
    height: float | None
    spacing: float | None
    thickness: float
    er: float
    method: str | None = None


@dataclass(frozen=True)
class Section:
    """A stretch of a line: a board trace of a named geometry, per-length values given
    directly, or a cable class from the library."""

    length: float
    geometry: Geometry | None = None
    capacitance: float | None = None  # F/m
    delay: float | None = None        # s/m
    impedance: float | None = None    # Ω, from a cable class
    part_id: str | None = None


@dataclass(frozen=True)
class Cable:
    part_id: str
    part: Part
    length: float


@dataclass(frozen=True)
class Device:
    ref: str
    part_id: str
    part: Part
    role: str = "peripheral"
    supply: float | None = None       # the device's own rail; None: the bus supply
    switched: bool = False
    series_resistor: float | None = None
    side: str | None = None
    internal_pullups: bool = False
    pin: str | None = None
    capacitance_tolerance: float | None = None
    loc: tuple = ()                   # its place in the file, for messages
    capacitance_factor: float = 1.0   # a drawn board's pin capacitance over the stored one

    @property
    def is_controller(self) -> bool:
        return self.role == "controller"

    @property
    def is_bridge(self) -> bool:
        return bool(self.part.sides)


@dataclass(frozen=True)
class Segment:
    """A stretch of open-drain bus with one supply and one pull-up per line."""

    id: str
    supply: float
    supply_tolerance: float
    pullup: object                    # "auto" or a resistance [Ω]
    pullup_tolerance: float
    pullup_series: str
    sections: tuple[Section, ...]
    extra_capacitance: float
    capacitance_tolerance: float
    length_tolerance: float
    cables: tuple[Cable, ...]
    devices: tuple[Device, ...]
    loc: tuple = ()


@dataclass(frozen=True)
class Line:
    """One routed push-pull signal."""

    signal: str
    sections: tuple[Section, ...]
    series_resistor: object           # "auto", "none" or a resistance [Ω]
    extra_capacitance: float = 0.0
    loc: tuple = ()

    @property
    def length(self) -> float:
        return sum(s.length for s in self.sections)


@dataclass(frozen=True)
class Bus:
    id: str
    protocol: str
    mode: str | None
    clock: float | None
    supply: float | None
    supply_tolerance: float
    segments: tuple[Segment, ...] = ()
    devices: tuple[Device, ...] = ()  # every device (all segments)
    lines: dict[str, Line] = field(default_factory=dict)
    spi_mode: int = 0
    title: str | None = None
    capacitance_tolerance: float = 0.0
    length_tolerance: float = 0.0
    loc: tuple = ()

    @property
    def controllers(self) -> list[Device]:
        return [d for d in self.devices if d.is_controller]

    @property
    def peripherals(self) -> list[Device]:
        return [d for d in self.devices if not d.is_controller]


@dataclass(frozen=True)
class Design:
    title: str
    path: Path | None
    buses: tuple[Bus, ...]
    geometries: dict[str, Geometry]
    library: Library
    warn_margin: float = 0.10
    distribution: str = "uniform"
    description: str | None = None
    text: str = ""

    def bus(self, bus_id: str) -> Bus:
        for b in self.buses:
            if b.id == bus_id:
                return b
        raise KeyError(bus_id)

    def device(self, ref: str) -> tuple[Bus, Device]:
        """The first (bus, device) with this reference designator."""
        for b in self.buses:
            for d in b.devices:
                if d.ref == ref:
                    return b, d
        raise KeyError(ref)

    def with_parts(self, swaps: dict[str, str]) -> Design:
        """The same design with parts substituted by reference: ``{"U4": "eeprom-alt"}``."""
        return _build(self._raw, self.path, self.library, self.text, swaps)

    _raw: RawDesign | None = None


# ---------------------------------------------------------------- loading


def load_design(path: str | os.PathLike, *, library_folders=(), library: Library | None = None,
                swaps: dict[str, str] | None = None) -> Design:
    """Load a design file and resolve its parts.

    Parameters
    ----------
    path : path
        The design file.
    library_folders : iterable of paths
        Extra team library folders (the command line's ``--library``); they take
        precedence over the design's own ``library`` folders.
    library : Library, optional
        An already-merged library to use instead of loading one.
    swaps : dict, optional
        Parts to substitute, by reference designator.
    """
    path = Path(path)
    data, text = load(path, error=DesignError)
    return design_from_text(data, text, path, library_folders=library_folders, library=library,
                            swaps=swaps)


def design_from_text(data: dict, text: str, path: Path | None, *, library_folders=(),
                     library: Library | None = None, swaps=None) -> Design:
    index = line_index(text)
    fname = str(path) if path else None

    def at(loc):
        return {"file": fname, "line": line_of(index, loc)}

    if data.get("format") != FORMAT:
        raise DesignError(M.NOT_A_DESIGN, field="format", value=data.get("format"),
                          expected=f'format = "{FORMAT}"', **at(("format",)))
    _refuse_too_many_devices(data, at)  # before validating what would not be checked
    try:
        raw = RawDesign.model_validate(data)
    except ValidationError as exc:
        errors = pydantic_errors(exc, file=fname, locate=lambda _f, loc: line_of(index, loc),
                                 cls=DesignError, model=RawDesign, format_name="design")
        # a misspelt key explains the required field it leaves missing: name it first
        errors.sort(key=lambda e: e.problem != M.UNKNOWN_FIELD)
        raise errors[0] from None
    if library is None:
        base = path.parent if path else Path.cwd()
        own = [base / p for p in raw.library]
        for i, folder in enumerate(own):
            if not folder.is_dir():
                raise DesignError(M.DESIGN_LIBRARY_MISSING, field=f"library[{i}]",
                                  value=raw.library[i], hint=M.LOOKED_FOR.format(path=folder),
                                  **at(("library", i)))
        # PINLIB_LIBRARY and the caller's folders: an error naming the setting
        require_folders(library_folders)
        try:
            library = load_library(own + [Path(p) for p in library_folders],
                                   lazy=True)  # only the parts the design names
        except LibraryError as exc:
            if exc.field != "library":
                raise
            # a refused folder (a system folder, a walk past its bounds): where it is named
            raise DesignError(exc.problem, field="library", value=exc.file,
                              hint=exc.hint, **at(("library",))) from None
    return _build(raw, path, library, text, swaps or {}, index)


class _Resolver:
    """The references of one design file resolved: parts against the library, geometry
    names against ``[board.geometry]``; devices, sections and cables built from the raw
    tables.  Every error names the file, line and field."""

    def __init__(self, library: Library, fname: str | None, index: dict, swaps: dict):
        self.library = library
        self.fname = fname
        self.index = index
        self.swaps = swaps
        self.swapped: set[str] = set()
        self.geometries: dict[str, Geometry] = {}

    def err(self, problem, loc, **kw):
        dotted = dotted_path(loc)
        return DesignError(problem, file=self.fname, line=line_of(self.index, loc),
                           field=dotted, **kw)

    def part_of(self, part_id: str, loc) -> Part:
        # A part whose file does not validate is the library's error at that file (it
        # names this place); an unknown id is this file's error.
        try:
            return self.library.get(part_id, file=self.fname, line=line_of(self.index, loc),
                                    field=dotted_path(loc))
        except PinlibError as e:
            if e.problem != M.UNKNOWN_PART:
                raise
            raise self.err(M.UNKNOWN_PART, loc, value=part_id, hint=e.hint) from None

    def device(self, d: RawDevice, loc) -> Device:
        err = self.err
        part_id = self.swaps.get(d.ref, d.part)
        if d.ref in self.swaps:
            self.swapped.add(d.ref)
        part = self.part_of(part_id, loc + ("part",))
        if part.abstract:
            raise err(M.ABSTRACT_ON_BOARD, loc + ("part",),
                      value=part_id, hint="place a part that extends it, or `pinlib parts new`")
        if part.category == "cable":
            raise err(M.CABLE_AS_DEVICE, loc + ("part",),
                      value=part_id)
        if d.supply is not None and not d.supply > 0:
            raise err(M.SUPPLY_NOT_POSITIVE, loc + ("supply",), value=format_si(d.supply, "V"))
        role = "peripheral" if d.role == "target" else d.role
        return Device(d.ref, part_id, part, role, d.supply, d.switched, d.series_resistor,
                      d.side, d.internal_pullups, d.pin, d.capacitance_tolerance, loc)

    def too_many_sections(self, count, loc):
        return self.err(M.TOO_MANY_SECTIONS, loc, value=f"{count:,} sections",
                        expected=f"at most {MAX_SECTIONS_PER_LINE:,} sections",
                        hint="join stretches of one geometry into one (their lengths add up)")

    def sections(self, t: RawTrace | RawSection | None, loc) -> tuple[Section, ...]:
        if t is None:
            return ()
        err = self.err
        subs = getattr(t, "sections", ())
        if subs:
            if t.length is not None or t.geometry or t.capacitance or t.part:
                raise err(M.SECTIONS_OR_STRETCH, loc + ("sections",))
            if len(subs) > MAX_SECTIONS_PER_LINE:  # before building any of them
                raise self.too_many_sections(len(subs), loc + ("sections",))
            out: list[Section] = []
            for i, s in enumerate(subs):
                out.extend(self.sections(s, loc + ("sections", i)))
            return tuple(out)
        if t.length is None:
            raise err(M.TRACE_NEEDS_LENGTH, loc + ("length",))
        if t.part:
            return (self._cable_section(t, loc),)
        if t.geometry:
            geometries = self.geometries
            if t.geometry not in geometries:
                raise err(M.UNKNOWN_GEOMETRY, loc + ("geometry",), value=t.geometry,
                          hint="defined: " + (", ".join(geometries) or "none; add "
                                              "[board.geometry.NAME]"))
            if t.capacitance is not None or t.delay is not None:
                raise err(M.GEOMETRY_OR_PER_LENGTH, loc + ("capacitance",))
            return (Section(t.length, geometries[t.geometry]),)
        if t.capacitance is None:
            raise err(M.TRACE_NEEDS_GEOMETRY, loc + ("geometry",),
                      expected="geometry = \"NAME\" or capacitance = "
                      "\"0.8 pF/cm\"")
        return (Section(t.length, None, t.capacitance, t.delay),)

    def _cable_section(self, t: RawTrace | RawSection, loc) -> Section:
        cable = self.part_of(t.part, loc + ("part",))
        if cable.line is None:
            raise self.err(M.NOT_A_CABLE, loc + ("part",), value=t.part)
        return Section(t.length, None, cable.line.capacitance.value,
                       cable.line.delay.value if cable.line.delay else None,
                       cable.line.impedance.value if cable.line.impedance else None,
                       t.part)

    def cables(self, items, loc) -> tuple[Cable, ...]:
        out = []
        for i, c in enumerate(items):
            part = self.part_of(c.part, loc + (i, "part"))
            if part.line is None:
                raise self.err(M.NOT_A_CABLE, loc + (i, "part"), value=c.part)
            out.append(Cable(c.part, part, c.length))
        return tuple(out)


def _geometries(raw: RawDesign, err) -> dict[str, Geometry]:
    """The board's named trace geometries, each with what its kind needs."""
    geometries = {
        name: Geometry(name, g.kind, g.width, g.height, g.spacing, g.thickness, g.er, g.method)
        for name, g in raw.board.geometry.items()
    }
    for name, g in geometries.items():
        loc = ("board", "geometry", name)
        if g.kind == "microstrip" and g.height is None:
            raise err(M.MICROSTRIP_NEEDS_HEIGHT, loc + ("height",))
        if g.kind == "stripline" and g.height is None and g.spacing is None:
            raise err(M.STRIPLINE_NEEDS_SPACING, loc + ("spacing",))
        if g.kind == "stripline" and g.spacing is not None and not g.spacing > g.thickness:
            raise err(M.SPACING_NOT_ABOVE_COPPER, loc + ("spacing",),
                      value=format_si(g.spacing, "m"),
                      expected=f"more than the copper thickness, {format_si(g.thickness, 'm')}")
    return geometries


def _build(raw: RawDesign, path, library: Library, text: str, swaps: dict,
           index: dict | None = None) -> Design:
    index = line_index(text) if index is None else index
    fname = str(path) if path else None
    r = _Resolver(library, fname, index, swaps)
    r.geometries = _geometries(raw, r.err)
    buses = []
    ids: set[str] = set()
    for bi, rb in enumerate(raw.bus):
        buses.append(_bus(rb, ("bus", bi), ids, r))
    _one_part_per_reference(buses, r.err, fname, index)
    unknown = set(swaps) - r.swapped
    if unknown:
        raise DesignError(M.NO_SUCH_REFERENCE, field="swap",
                          value=sorted(unknown)[0], file=fname)
    design = Design(raw.title, Path(path) if path else None, tuple(buses), r.geometries,
                    library, raw.warn_margin, raw.distribution, raw.description, text)
    object.__setattr__(design, "_raw", raw)
    return design


def _bus(rb: RawBus, bloc, ids: set[str], r: _Resolver) -> Bus:
    """One bus of the file: its id unique, its mode and clock valid, then built by its
    kind (open-drain or push-pull)."""
    err = r.err
    if rb.id in ids:
        raise err(M.DUPLICATE_BUS_ID, bloc + ("id",), value=rb.id)
    ids.add(rb.id)
    modes = MODES.get(rb.protocol)
    mode = rb.mode
    if modes:
        mode = mode or modes[1 if rb.protocol == "i2c" else 0]
        if mode not in modes:
            raise err(M.UNKNOWN_MODE, bloc + ("mode",), value=rb.mode,
                      expected="one of " + ", ".join(modes))
    elif rb.mode is not None:
        raise err(M.BUS_HAS_NO_MODE.format(protocol=rb.protocol), bloc + ("mode",),
                  value=rb.mode,
                  hint="give its clock instead" if rb.protocol == "spi" else None)
    if rb.clock is not None and not rb.clock > 0.0:
        # Every engine divides by the clock (its period, its budget).
        raise err(M.CLOCK_NOT_POSITIVE, bloc + ("clock",), value=format_si(rb.clock, "Hz"),
                  expected='a clock such as "400 kHz"')
    if protocols.is_open_drain(rb.protocol):
        return _open_drain_bus(rb, bloc, mode, r.device, r.sections, r.cables, err)
    return _push_pull_bus(rb, bloc, r.device, r.sections, err)


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


def _refuse_too_many_devices(data: dict, at) -> None:
    """Refuse a bus with more devices than :mod:`pinlib.core.worklimits` allows (the
    limit's reasons are there), from the file's tables before they are validated: a bus of
    10^5 devices is refused in the time it takes to read it.  Anything not shaped like a
    bus is left to the validation that follows."""
    buses = data.get("bus")
    if not isinstance(buses, list):
        return
    for bi, rb in enumerate(buses):
        if not isinstance(rb, dict):
            continue
        own = rb.get("devices") if isinstance(rb.get("devices"), list) else []
        segments = rb.get("segment") if isinstance(rb.get("segment"), list) else []
        protocol = rb.get("protocol")
        if not isinstance(protocol, str) or protocol not in protocols.NAMES:
            continue  # the validation names the protocol that is wrong
        if protocols.is_open_drain(protocol):
            limit = MAX_DEVICES_OPEN_DRAIN
            count = len(own) + sum(len(rs["devices"]) for rs in segments
                                   if isinstance(rs, dict) and isinstance(rs.get("devices"), list))
        else:
            limit = MAX_DEVICES_PUSH_PULL
            count = len(own)
        if count > limit:
            loc = ("bus", bi, "devices") if own or not segments else ("bus", bi, "segment")
            raise DesignError(M.TOO_MANY_DEVICES.format(protocol=protocol), field=dotted_path(loc),
                              value=f"{count:,} devices",
                              expected=f"at most {limit:,} devices on one bus",
                              hint="split the devices over several buses", **at(loc))


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
    _check_open_drain_pins(rb, segments, err)
    _check_bridges(segments, err)
    return Bus(rb.id, rb.protocol, mode, rb.clock, segments[0].supply,
               segments[0].supply_tolerance, tuple(segments), tuple(all_devices), {},
               rb.spi_mode, rb.title, segments[0].capacitance_tolerance,
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
        raise err(M.SUPPLY_NOT_POSITIVE, sloc + ("supply",), value=supply)
    devices = tuple(device(d, sloc + ("devices", i)) for i, d in enumerate(rs.devices))
    seg_id = rs.id or (rb.id if count == 1 else f"{rb.id}-{si + 1}")
    cab = cables(rs.cables or (rb.cables if rs is not rb else ()), sloc + ("cables",))
    series = pick("pullup_series", "E24")
    from pinlib.core.eseries import SERIES_NAMES
    if series.upper() not in SERIES_NAMES:
        raise err(M.UNKNOWN_NUMBER_SERIES, sloc + ("pullup_series",), value=series,
                  expected="one of " + ", ".join(SERIES_NAMES))
    return Segment(
        seg_id, supply, pick("supply_tolerance", 0.0), pick("pullup", "auto"),
        pick("pullup_tolerance", 0.01), series.upper(),
        sections(pick("trace"), sloc + ("trace",)), pick("extra_capacitance", 0.0),
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
            for fn in protocols.protocol(rb.protocol).functions:
                if d.part.pin_for(fn, side) is None:
                    raise err(M.PART_LACKS_PIN_ON_SIDE.format(function=fn, side=side) if side
                              else M.PART_LACKS_PIN.format(function=fn),
                              d.loc + ("part",), value=d.part_id,
                              hint="an I2C/SMBus device needs SDA and SCL pins")


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
                      hint=f"found side(s): {', '.join(sides)}")


def _push_pull_bus(rb: RawBus, bloc, device, sections, err) -> Bus:
    if rb.segment:
        raise err(M.BUS_HAS_NO_SEGMENTS.format(protocol=rb.protocol), bloc + ("segment",),
                  hint="route each signal under lines.<signal>")
    for key in ("pullup", "pullup_tolerance", "pullup_series", "cables"):
        if getattr(rb, key):
            raise err(M.BUS_HAS_NO_KEY.format(protocol=rb.protocol, key=key), bloc + (key,))
    if rb.supply is None:
        raise err(M.BUS_NEEDS_SUPPLY, bloc + ("supply",), expected="supply = \"3.3 V\"")
    devices = tuple(device(d, bloc + ("devices", i)) for i, d in enumerate(rb.devices))
    if not any(d.is_controller for d in devices):
        raise err(M.BUS_NEEDS_CONTROLLER, bloc + ("devices",),
                  hint="mark one device role = \"controller\"")
    lines = {}
    for sig, rt in rb.lines.items():
        loc = bloc + ("lines", sig)
        if rb.protocol == "spi" and sig not in SPI_SIGNALS:
            raise err(M.UNKNOWN_SPI_SIGNAL, loc, value=sig, expected=", ".join(SPI_SIGNALS))
        lines[sig] = Line(sig, sections(rt, loc), rt.series_resistor, rt.extra_capacitance, loc)
    if rb.protocol == "spi":
        if rb.clock is None:
            raise err(M.SPI_NEEDS_CLOCK, bloc + ("clock",),
                      expected="clock = \"25 MHz\"")
        for d in devices:
            # a controller drives the clock, data out and select; a peripheral needs the clock
            driven = ("sclk", "copi", "cs") if d.is_controller else ("sclk",)
            for fn in (SIGNAL_FUNCTION[sig] for sig in driven):
                if d.part.pin_for(fn, d.side) is None and not d.is_bridge:
                    raise err(M.PART_LACKS_PIN.format(function=fn), d.loc + ("part",),
                              value=d.part_id)
        if "sclk" not in lines:
            raise err(M.SPI_NEEDS_SCLK, bloc + ("lines",),
                      expected='lines.sclk = { length = "8 cm", geometry = "..." }')
    return Bus(rb.id, rb.protocol, None, rb.clock, rb.supply, rb.supply_tolerance or 0.0, (),
               devices, lines, rb.spi_mode, rb.title, rb.capacitance_tolerance or 0.0,
               rb.length_tolerance or 0.0, bloc)
