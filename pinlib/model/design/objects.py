"""The resolved objects of a design that the engines read: geometries, sections, cables,
devices, segments, lines and buses (plain dataclasses of SI floats)."""

from __future__ import annotations

from dataclasses import field

from pinlib.core.valueclass import value_class
from pinlib.library.schema import Part

#: ± of a pull-up resistor a design gives no ``pullup_tolerance`` for (a bus's, a
#: segment's, a GPIO line's): the common 1 % thick-film part. [1]
PULLUP_TOLERANCE = 0.01


@value_class(frozen=True)
class Geometry:
    """A named trace geometry of the design: its kind, the trace's dimensions [m], the
    dielectric's relative permittivity ``er`` and the model ``method`` when one is named."""

    name: str
    kind: str
    width: float
    height: float | None
    spacing: float | None
    thickness: float
    er: float
    method: str | None = None


@value_class(frozen=True)
class Section:
    """A stretch of a line: a board trace of a named geometry, per-length values given
    directly, or a cable class from the library."""

    length: float
    geometry: Geometry | None = None
    capacitance: float | None = None  # F/m
    delay: float | None = None        # s/m
    impedance: float | None = None    # Ω, from a cable class
    part_id: str | None = None
    #: a drawn board's capacitance per length over the stated one (a bus's
    #: ``capacitance_tolerance`` at a corner or a Monte Carlo draw): the inductance per
    #: length held, so Z0 moves by ``1/sqrt(k)`` and the delay by ``sqrt(k)``
    #: (:func:`pinlib.engines.pushline.sections.stretches_of`); 1 as designed
    capacitance_factor: float = 1.0
    #: where the design file writes it (``("bus", 0, "lines", "sclk", "route", 1)``): an
    #: error about the section names it; no part of its value (equality, hash)
    loc: tuple = field(default=(), compare=False, repr=False)


@value_class(frozen=True)
class Cable:
    """A cable class from the library on a segment, and its length [m]."""

    part_id: str
    part: Part
    length: float


@value_class(frozen=True)
class Device:
    """A part placed on a bus: its reference designator, the part, its role and what
    the design sets for it there (own rail, series resistor, side of a bridging part,
    tolerances)."""

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

    @property
    def part_side(self) -> str | None:
        """The side of its bridging part the device places (``a`` where the design
        names none); None for any other part."""
        return (self.side or "a") if self.is_bridge else None

    @property
    def part_pins(self) -> dict:
        """The pins the device places: its side's of a bridging part, else the part's."""
        side = self.part_side
        return self.part.sides[side].pins if side else self.part.pins


@value_class(frozen=True)
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


@value_class(frozen=True)
class Line:
    """One routed push-pull signal."""

    signal: str
    sections: tuple[Section, ...]
    series_resistor: object           # "auto", "none" or a resistance [Ω]
    extra_capacitance: float = 0.0
    loc: tuple = ()
    # A routed line: the (from, to) points of each of ``sections``, index by index; the
    # points form a tree, each device on the line at the point named by its reference
    # designator.  Empty: the simple form, every pin at the far end of ``sections``.
    route: tuple[tuple[str, str], ...] = ()
    # Junctions of the route named like a device (:func:`pinlib.model.design.route.
    # look_alikes`): (junction, the device's reference) for a name that is a device's of
    # the design but for its case; (junction, "") for a mid-route junction named in the
    # style of the line's devices (their letters, then digits) that names no device.
    look_alikes: tuple[tuple[str, str], ...] = ()
    # A GPIO or SPI line's pull-up resistor (``lines.<signal>.pullup``) [Ω], and the rail it
    # pulls to [V]: the bus supply, set where the line is analysed (it follows a varied
    # board's rail).
    pullup: float | None = None
    pullup_rail: float | None = None
    # ± of that resistor (``lines.<signal>.pullup_tolerance``, 1 % unless given), for
    # corners and Monte Carlo; None without a pull-up
    pullup_tolerance: float | None = None

    @property
    def length(self) -> float:
        return sum(s.length for s in self.sections)


@value_class(frozen=True)
class Bus:
    """A bus of the design: protocol, mode, clock and rail; its segments (open-drain)
    or lines (push-pull), and every device on it."""

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
