"""The schema of a design file: records (:mod:`pinlib.core.records`) whose fields carry their
units and ranges (the first pass of loading)."""

from __future__ import annotations

from typing import Annotated, Literal

from pinlib.core import messages as M
from pinlib.core import protocols
from pinlib.core.errors import DesignError
from pinlib.core.quantity import format_si, parse, range_text
from pinlib.core.records import Convert, Record, Rule, WrittenAs, field
from pinlib.core.worklimits import MAX_ROUTE_STRETCHES
from pinlib.library.schema import DELAY_MIN, LOWEST_RAIL

FORMAT = "pinlib.design/1"
PROTOCOLS = protocols.NAMES
MODES = {"i2c": ("standard", "fast", "fast-plus"), "smbus": ("100k", "400k", "1m")}
SPI_SIGNALS = protocols.protocol("spi").signal_names
# The pin function each signal of a protocol uses.
SIGNAL_FUNCTION = protocols.SIGNAL_FUNCTION


def _unit_validator(unit, lo=None, hi=None, *, above=False, low_problem=None,
                    zero_problem=None, low_hint=None):
    """A value with ``unit`` within ``lo``..``hi`` (``above``: ``lo`` itself refused).  A
    refusal quotes the text as written and states the range in the words of this test
    (:func:`pinlib.core.quantity.range_text`); ``low_problem`` names a value below it,
    ``zero_problem`` (when given) one at zero or below, and ``low_hint(raw, x)`` may add
    a hint to a low value's refusal."""
    expected = range_text(lo, hi, unit, above=above)

    def validate(raw, name=None):
        x = parse(raw, unit, field=name)
        low = lo is not None and (x <= lo if above else x < lo)
        if low or (hi is not None and x > hi):
            if low and zero_problem and x <= 0:
                problem = zero_problem
            elif low and low_problem:
                problem = low_problem
            else:
                problem = M.NEGATIVE_VALUE if x < 0 <= (lo or 0) else M.OUTSIDE_RANGE
            hint = low_hint(raw, x) if low and low_hint and x > 0 else None
            raise DesignError(problem, value=raw, expected=expected, hint=hint)
        return x

    return validate


class _AsWritten(WrittenAs):
    """What a file writes for a value with a unit (a string; or one of ``words``), for the
    JSON Schema of design files (:mod:`pinlib.model.designschema`), not the float it
    becomes.  The pattern is built only when a schema is asked for."""

    __slots__ = ("unit", "words")

    def __init__(self, unit: str, words: tuple = ()):
        self.unit, self.words = unit, words
        self.func = self._schema

    def _schema(self):
        from pinlib.core.quantity import UNITS
        from pinlib.library.jsonschema import quantity_pattern

        what, example = UNITS[self.unit]
        text = f"{what}, e.g. '{example}'"
        string = {"type": "string", "pattern": quantity_pattern(self.unit)}
        if not self.words:
            return {**string, "description": text}
        words = " or ".join(f"'{w}'" for w in self.words)
        return {"anyOf": [{"enum": list(self.words)}, string],
                "description": f"{words}, or {text}"}


def _unit(unit, lo=None, hi=None, **how):
    return Annotated[float, Convert(_unit_validator(unit, lo, hi, **how)), _AsWritten(unit)]


def _auto_or(unit, lo=None, hi=None, words=("auto",)):
    # Parse here: handed on as text, "2.2 kΩ" would satisfy the str side of the union and
    # stay a string.
    quantity = _unit_validator(unit, lo, hi)

    def validate(raw, name=None):
        if isinstance(raw, str) and raw.strip().lower() in words:
            return raw.strip().lower()
        return quantity(raw, name)

    return Annotated[str | float, Convert(validate), _AsWritten(unit, words)]


Length = _unit("m", 0.0, 1000.0)
Capacitance = _unit("F", 0.0, 1e-6)
Resistance = _unit("Ω", 0.0, 1e9)
Voltage = _unit("V", -100.0, 100.0)
# A rail: every level and current is figured from it, so zero and below are refused here,
# quoted as written.  Below 0.5 V no logic rail is plausible: the lowest I/O rails in use
# are near 0.8 V to 1.2 V, and a rail below 0.5 V is a unit slip ("3.3 mV" for "3.3 V")
# that would fail every level check with the cause listed last (common practice, no
# source).
SUPPLY_MIN = LOWEST_RAIL  # the part format's lowest supply, one figure for both


def _supply_hint(raw, x):
    """A rail written in millivolts or smaller that reads as a rail in volts: the
    likely slip."""
    volts = x * 1e3
    if isinstance(raw, str) and SUPPLY_MIN <= volts <= 100.0:
        return M.DID_YOU_MEAN.format(name=format_si(volts, "V"))
    return None


Supply = _unit("V", SUPPLY_MIN, 100.0, low_problem=M.SUPPLY_TOO_LOW,
               zero_problem=M.SUPPLY_NOT_POSITIVE, low_hint=_supply_hint)
# Every engine divides by the clock (its period, its budget): zero is refused here.
Frequency = _unit("Hz", 0.0, 100e9, above=True, low_problem=M.CLOCK_NOT_POSITIVE)
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
DelayPerLength = _unit("s/m", DELAY_MIN, 1e-6, low_problem=M.DELAY_FASTER_THAN_LIGHT)
PullupSetting = _auto_or("Ω", 1e-3, 1e9, words=("auto",))
Pullup = _unit("Ω", 1e-3, 1e9)
SeriesSetting = _auto_or("Ω", 0.0, 1e6, words=("auto", "none"))


class RawGeometry(Record):
    kind: Literal["microstrip", "stripline"]
    width: Dimension
    height: Dimension | None = None   # microstrip: to the plane; stripline: to each plane
    spacing: Dimension | None = None  # stripline: plane to plane
    thickness: Thickness = 35e-6      # 1 oz copper, common practice
    er: Annotated[float, Rule(ge=1.0, le=100.0)]
    method: str | None = None


class RawSection(Record):
    length: Length
    geometry: str | None = None
    capacitance: CapPerLength | None = None
    delay: DelayPerLength | None = None
    part: str | None = None           # a cable class from the library


def _one_line(raw, name=None):
    """A route point's name as written; one with a line break or another control
    character is refused (it would break the report's route diagram)."""
    if isinstance(raw, str) and any(ord(ch) < 32 or ord(ch) == 127 for ch in raw):
        raise DesignError(M.POINT_NAME_CONTROL, value=raw,
                          expected="a name on one line, without control characters")
    return raw


_POINT = ("the reference designator of a device on the line (\"U2\"), or any other name "
          "for a junction (\"T1\", \"S\"); 1 to 40 characters")
PointName = Annotated[str, Convert(_one_line), Rule(min_length=1, max_length=40)]


class RawRouteStretch(RawSection):
    """One stretch of a routed line between two points: a device's reference designator on
    the line, or a junction named freely (``"T1"``).  Written like any stretch (``length``
    with ``geometry``, ``capacitance``/``delay``, or a cable ``part``) plus its two
    points."""

    from_: Annotated[PointName, Rule(description="one end of the stretch: " + _POINT)] = (
        field(alias="from"))
    to: Annotated[PointName, Rule(description="the other end of the stretch: " + _POINT)]


def _a_route(raw, name=None):
    """A route as written; an empty one is refused (it would read as no route, and the
    line would then be blamed for a missing length)."""
    if isinstance(raw, list) and not raw:
        raise DesignError(M.ROUTE_EMPTY, value="[]",
                          expected='at least one stretch, e.g. route = [{ from = "U1", '
                                   'to = "U2", length = "2 cm", geometry = "NAME" }]')
    return raw


class RawTrace(RawSection):
    sections: tuple[RawSection, ...] = ()
    # push-pull lines only
    route: Annotated[tuple[RawRouteStretch, ...], Convert(_a_route), Rule(
        min_items=1, max_items=MAX_ROUTE_STRETCHES,
        description=f"push-pull lines: the line as stretches between named points, each "
                    f"device on it at the point named by its reference designator, instead "
                    f"of length/sections; the points form one tree holding every device "
                    f"with a pin on the line; 1 to {MAX_ROUTE_STRETCHES} stretches")] = ()
    length: Length | None = None  # type: ignore[assignment]
    # push-pull lines only: None (not written) lets the loader refuse them in an
    # open-drain trace, where nothing reads them (pinlib.model.design.buses)
    series_resistor: SeriesSetting | None = field(
        default=None, description="SPI and GPIO lines only (default 'none'; refused in an "
                                  "I2C or SMBus trace)")
    extra_capacitance: Capacitance | None = field(
        default=None, description="SPI and GPIO lines only, at the line's far end (default "
                                  "0; refused in an I2C or SMBus trace, whose bus or "
                                  "segment takes it beside the trace)")
    pullup: Pullup | None = None  # GPIO and SPI lines: a resistor to the bus supply
    pullup_tolerance: Tolerance | None = None  # lines with a pullup: ± of that resistor


class RawCable(Record):
    part: str
    length: Length


class RawDevice(Record):
    ref: Annotated[str, Rule(min_length=1, max_length=40)]
    part: str
    role: Literal["controller", "peripheral", "target"] = "peripheral"
    supply: Supply | None = None
    switched: bool | None = field(
        default=None, description="I2C and SMBus buses only: the device's rail can be off "
                                  "while the bus is live (default false)")
    series_resistor: Resistance | None = field(
        default=None, description="I2C and SMBus buses only: a resistor between the pin "
                                  "and the bus (an SPI or GPIO line takes its own)")
    side: Literal["a", "b"] | None = None
    internal_pullups: bool = False
    pin: str | None = None
    capacitance_tolerance: Ratio | None = None


#: An id or title the user names things by: never empty ("" could not be named in a
#: coupling's BUS.SIGNAL nor shown in a report).
Name = Annotated[str, Rule(min_length=1)]


class RawSegment(Record):
    id: Name | None = None
    supply: Supply | None = None
    supply_tolerance: Tolerance | None = None
    pullup: PullupSetting | None = None
    pullup_tolerance: Tolerance | None = None
    pullup_series: str | None = None
    trace: RawTrace | None = field(
        default=None, description="I2C and SMBus buses only (an SPI or GPIO bus routes "
                                  "each signal as lines.<signal>)")
    extra_capacitance: Capacitance | None = field(
        default=None, description="I2C and SMBus buses only (an SPI or GPIO line takes "
                                  "its own: lines.<signal>.extra_capacitance)")
    capacitance_tolerance: Ratio | None = None
    length_tolerance: Ratio | None = None
    cables: tuple[RawCable, ...] = ()
    devices: tuple[RawDevice, ...] = ()


class RawBus(RawSegment):
    id: Name
    protocol: Literal[PROTOCOLS]  # type: ignore[valid-type]
    title: str | None = None
    mode: str | None = None
    clock: Frequency | None = None
    spi_mode: Annotated[int, Rule(ge=0, le=3)] | None = field(
        default=None, description="SPI buses only: 0 to 3 (default 0)")
    segment: tuple[RawSegment, ...] = ()
    lines: dict[str, RawTrace] = field(default_factory=dict)


class RawBoard(Record):
    geometry: dict[str, RawGeometry] = field(default_factory=dict)


# ---------------------------------------------------------------- coupling (issue 17)
# Resolved in :mod:`pinlib.model.design.coupling`.


class RawEdge(Record):
    """A described aggressor: its swing, 10-90 % edge time and source resistance."""

    swing: _unit("V", 0.0, 100.0)
    edge_time: _unit("s", 1e-12, 1e-3)
    source_resistance: _unit("Ω", 0.1, 1e6)
    load_capacitance: Capacitance = 0.0


class RawCoupling(Record):
    """Two traces side by side: the victim (an open-drain line), the aggressor (a line of
    the design or a described edge), their gap and the length they run together."""

    victim: Annotated[str, Rule(description="the open-drain line, 'BUS.SIGNAL', e.g. "
                                            "'i2c0.scl'")]
    segment: Annotated[str | None, Rule(description="the victim bus's segment the run is "
                                                    "in (default: its first)")] = None
    aggressor: Annotated[str | RawEdge, Rule(
        description="a routed push-pull line, 'BUS.SIGNAL' (e.g. 'spi0.sclk'), or a "
                    "described edge {swing, edge_time, source_resistance}")]
    spacing: Dimension
    parallel_length: _unit("m", 1e-4, 10.0)
    geometry: str | RawGeometry
    spacing_tolerance: Tolerance | None = None
    length_tolerance: Tolerance | None = None


class RawDesign(Record):
    format: Literal["pinlib.design/1"]
    title: Name
    description: str | None = None
    library: tuple[str, ...] = ()
    warn_margin: Ratio = 0.10
    distribution: Literal["uniform", "normal"] = "uniform"
    board: RawBoard = RawBoard()
    bus: tuple[RawBus, ...] = ()
    coupling: tuple[RawCoupling, ...] = ()
