"""The part-class format, ``format = "pinlib.part/1"``, as records (:mod:`pinlib.core.records`).

Every dimensional field is a :class:`~pinlib.library.values.Sourced` value: a string
with its unit or a provenance table.  Each stored value is the guaranteed limit in the
direction that hurts the design (max capacitance and leakage, max VIL, min VIH, max
VOL at the stated current, max output delay, min setup and hold); ``typ`` rides beside
it for information.  Misspelt keys are errors (a record refuses a key it does not declare).

The glossary of field names (used throughout pinlib):

================ ======================================================== =====
name             meaning                                                  unit
================ ======================================================== =====
c_in             pin capacitance (input, or I/O in any state), max        F
leakage          input leakage current, max                               A
v_il             input low threshold, max (highest level read as low)     V
v_ih             input high threshold, min (lowest level read as high)    V
v_ol             output low level, max, at i_ol                           V
i_ol             sink current at which v_ol is guaranteed                 A
v_oh             output high level, min, at i_oh                          V
i_oh             source current at which v_oh is guaranteed               A
r_out            output resistance of a push-pull driver                  Ω
fast             a push-pull output's fast corner: its own r_out, edges
abs_max          absolute maximum input voltage                           V
pullup           a pull-up resistor the part carries on this pin          Ω
t_valid          clock edge to output valid, max (SPI)                    s
t_setup          input setup time before the sampling edge, min           s
t_hold           input hold time after the sampling edge, min             s
t_pd             propagation delay through a bridging part, max           s
t_of_min         output fall time 0.7 to 0.3 VDD at the pin, min          s
t_of_max         output fall time 0.7 to 0.3 VDD at the pin, max          s
t_transition_max an input's rise/fall time (10-90 %), max                 s
spi_modes        the SPI modes (0 to 3, CPOL/CPHA) the part works in      1
================ ======================================================== =====
"""

from __future__ import annotations

import datetime as _dt
from typing import Annotated, Literal

from pinlib.core import messages as M
from pinlib.core.errors import LibraryError
from pinlib.core.protocols import PIN_FUNCTIONS
from pinlib.core.quantity import DELAY_MIN, format_si
from pinlib.core.records import (
    Convert,
    Involving,
    Record,
    Rule,
    WrittenAs,
    after,
    check,
    field,
)
from pinlib.library.values import (
    Sourced,
    StatedList,
    modes_parser,
    sourced_parser,
    threshold_parser,
)

__all__ = [
    "FORMAT",
    "CATEGORIES",
    "POSITION_CATEGORIES",
    "FUNCTIONS",
    "DRIVES",
    "Edge",
    "FastCorner",
    "Pin",
    "Timing",
    "Supply",
    "Provenance",
    "LinePerLength",
    "Bridge",
    "Side",
    "Part",
]

FORMAT = "pinlib.part/1"

CATEGORIES = (
    "controller", "sensor", "memory", "io-expander", "clock", "converter", "display",
    "buffer", "translator", "logic", "connector", "cable", "module", "isolator",
    "power", "network", "driver",
)
#: The categories of parts that stand at a device's position (what ``pinlib candidates``
#: ranks): every one but ``cable``, which a bus or a line names in ``cables``.
POSITION_CATEGORIES = tuple(c for c in CATEGORIES if c != "cable")
FUNCTIONS = PIN_FUNCTIONS
DRIVES = ("open-drain", "push-pull", "input")


def _q(unit, lo=None, hi=None, signed=False):
    return Annotated[Sourced, Convert(sourced_parser(unit, lo, hi, signed=signed))]


# Allowed ranges (a value outside is refused; docs/formats/part.md): wide enough for any
# real pin, narrow enough to catch a lost prefix.  The plausible ranges, which only
# warn, are pinlib.library.plausible.RANGES.
Capacitance = _q("F", 0.0, 100e-9)
Current = _q("A", 0.0, 10.0)
Voltage = _q("V", -50.0, 50.0, signed=True)
Resistance = _q("Ω", 0.0, 100e6)
Time = _q("s", 0.0, 10.0)
Frequency = _q("Hz", 0.0, 100e9)
#: The shortest delay per length (pinlib.core.quantity.DELAY_MIN: light's in vacuum, 1/c,
#: less a rounded figure's 2 %); the design loader takes it from here.
CapPerLength = _q("F/m", 0.0, 1e-6)
DelayPerLength = Annotated[Sourced, Convert(sourced_parser(
    "s/m", DELAY_MIN, 1e-6, low_problem=M.DELAY_FASTER_THAN_LIGHT))]
Level = Annotated[Sourced, Convert(threshold_parser())]
#: The lowest supply a part may state, as the lowest rail a design may set
#: (pinlib.model.design.raw.SUPPLY_MIN takes it from here): no logic rail runs below
#: 0.5 V, and a lower figure is a unit slip ("3.3 mV", "1e-30 V") whose relative levels
#: would come out at thousands of VDD (common practice, no source).
LOWEST_RAIL = 0.5


def _modes_written() -> dict:
    """What a part file writes for ``spi_modes``, for the JSON Schema."""
    from pinlib.library.values import BASES

    text = "the SPI modes (CPOL·2 + CPHA) the part works in, e.g. [0, 3]"
    array = {"type": "array", "items": {"type": "integer", "minimum": 0, "maximum": 3},
             "minItems": 1, "maxItems": 4, "uniqueItems": True, "description": text}
    table = {"type": "object", "description": f"{text}, with where it came from",
             "properties": {"value": dict(array),
                            "basis": {"enum": list(BASES[:-1])},
                            "source": {"type": "string"}},
             "required": ["value"], "additionalProperties": False}
    return {"anyOf": [array, table], "description": text}


class Edge(Record):
    """One datasheet edge-time point: rise and fall into a stated load."""

    load: Capacitance
    rise: Time | None = None
    fall: Time | None = None
    levels: Literal["10-90", "20-80"] = "10-90"
    vdd: Voltage | None = None  # the supply the point was stated at, when it matters

    @check("rise")
    def _rise_above_zero(cls, v, earlier):
        return _edge_time(v)

    @check("fall")
    def _fall_above_zero(cls, v, earlier):
        return _edge_time(v)

    @after
    def _one_edge(self):
        # A check of the whole record, so it also runs when neither key is given
        # (defaults are not checked field by field).
        if self.rise is None and self.fall is None:
            raise ValueError(M.EDGE_NEEDS_RISE_OR_FALL)
        return self


def _edge_time(v):
    # an edge of 0 s is no datasheet's figure: the edge fit would need an infinite slope
    if v is not None and not v.value > 0.0:
        raise LibraryError(M.EDGE_TIME_NOT_POSITIVE, value=v.text, expected="above 0 s")
    return v


class FastCorner(Record):
    """A push-pull output's fast corner (strongest drive, quickest edges).

    The pin's own ``r_out`` and ``edges`` are the slow corner, which sets edge times and
    timing; this corner sets overshoot, undershoot and ringing, and joins the slow one in
    the SPI hold checks (the minimum delays).
    """

    r_out: Resistance | None = None
    edges: tuple[Edge, ...] = ()
    description: str | None = None

    @after
    def _r_out_or_edges(self):
        if self.r_out is None and not self.edges:
            raise ValueError(M.FAST_CORNER_EMPTY)
        return self


class Pin(Record):
    """One pin of a part class."""

    function: Literal[FUNCTIONS]  # type: ignore[valid-type]
    drive: Literal[DRIVES] = "input"  # type: ignore[valid-type]
    c_in: Capacitance | None = None
    leakage: Current | None = None
    v_il: Level | None = None
    v_ih: Level | None = None
    hysteresis: Level | None = None
    v_ol: Level | None = None
    i_ol: Current | None = None
    v_oh: Level | None = None
    i_oh: Current | None = None
    r_out: Resistance | None = None
    edges: tuple[Edge, ...] = ()
    fast: FastCorner | None = None
    abs_max: Level | None = None
    pullup: Resistance | None = None
    pullup_internal: Resistance | None = None  # present only when the design enables it
    off_tolerant: bool = False
    t_of_min: Time | None = None  # output fall time of a slope-controlled open-drain stage
    t_of_max: Time | None = None
    # the slowest edge (10-90 %) an input is specified for: an input without hysteresis
    # may switch more than once on a slower one
    t_transition_max: Time | None = None
    description: str | None = None

    @after
    def _thresholds_in_order(self):
        # VIL above VIH at every supply (both written alike, "1.5 VDD" beside "0.7 VDD"):
        # no input reads that way; two thresholds written differently ("2 V" beside
        # "0.7 VDD") cross at some supply and are left to the part's own range
        lo, hi = self.v_il, self.v_ih
        if lo is not None and hi is not None:
            ends = (0.5, 50.0)  # the schema's voltage range, where a threshold can sit
            if all(float(lo.at(v)) > float(hi.at(v)) for v in ends):
                raise Involving(M.THRESHOLDS_INVERTED.format(v_il=lo.text, v_ih=hi.text),
                                ("v_il", "v_ih"))
        return self

    @after
    def _fast_on_push_pull(self):
        if self.fast is not None and self.drive != "push-pull":
            raise Involving(M.FAST_CORNER_NEEDS_PUSH_PULL.format(drive=self.drive),
                            ("drive", "fast"))
        return self


class Timing(Record):
    """Protocol timing of a part (limits in the direction that hurts)."""

    f_max: Frequency | None = None
    # I2C / SMBus
    t_vd_dat: Time | None = None
    t_vd_ack: Time | None = None
    t_su_dat: Time | None = None
    t_hd_dat: Time | None = None
    t_low: Time | None = None
    t_high: Time | None = None
    # SPI
    t_valid: Time | None = None
    t_setup: Time | None = None
    t_hold: Time | None = None
    t_cs_setup: Time | None = None
    t_cs_hold: Time | None = None
    # a peripheral that drives its first CIPO bit when CS asserts (CPHA 0): CS to valid
    t_cs_valid: Time | None = None
    # the SPI modes (CPOL/CPHA, 0 to 3) the datasheet says the part works in; its source
    # is the provenance of the file that states it
    spi_modes: Annotated[StatedList, Convert(modes_parser), WrittenAs(_modes_written)] \
        | None = None
    test_load: Capacitance | None = None
    # bridging parts, isolators, buffers
    t_pd: Time | None = None

    @check("f_max")
    def _clock_above_zero(cls, v, earlier):
        # a maximum clock of 0 Hz allows no clock at all: a slip, not a rating
        if v is not None and not v.value > 0.0:
            raise ValueError(M.F_MAX_NOT_POSITIVE)
        return v


class Supply(Record):
    min: Voltage
    max: Voltage
    typ: Voltage | None = None

    @check("min")
    def _positive(cls, v, earlier):
        # a part runs from a positive supply; 0 V once divided by zero in the engines
        if not v.value > 0.0:
            raise ValueError(M.SUPPLY_MIN_NOT_POSITIVE)
        return _a_rail(v)

    @check("typ")
    def _typ_a_rail(cls, v, earlier):
        return v if v is None or not v.value > 0.0 else _a_rail(v)

    @check("max")
    def _ordered(cls, v, earlier):
        if v.value > 0.0:
            _a_rail(v)
        lo = earlier.get("min")
        if lo is not None and v.value < lo.value:
            raise Involving(M.SUPPLY_MAX_BELOW_MIN.format(max=v.text, min=lo.text),
                            ("min", "max"))
        return v


def _a_rail(v):
    """A supply figure at least :data:`LOWEST_RAIL`, as a design's rail."""
    if v.value < LOWEST_RAIL:
        raise LibraryError(M.SUPPLY_TOO_LOW, value=v.text,
                           expected=f"at least {LOWEST_RAIL:g} V, as a "
                                    "design's rail (no logic rail runs lower)")
    return v


class Provenance(Record):
    basis: Literal["generic", "datasheet", "measured", "estimate", "ibis", "published"] = \
        "generic"
    source: str = ""
    recorded: _dt.date | None = None
    by: str | None = None


#: The characteristic impedance a line can have, in ohms.  On a lossless line Z0 =
#: delay / capacitance per length (Z0 = sqrt(L'/C'), tpd = sqrt(L'C')), and on a TEM
#: line Z0 = (eta0 / sqrt(er)) x a factor of the cross-section alone (eta0 = 376.73 Ω,
#: the impedance of free space).  Board traces and cables lie between about 5 Ω (a wide
#: trace over a thin dielectric) and about 600 Ω (an open two-wire line, a wire high
#: above its return: 60 ln(4h/d) Ω).  1 kΩ needs a wire in air 1.7 x 10^7 of its
#: diameters above its return (0.1 mm at 430 m), 1 Ω a plane pair in FR-4 180 times as
#: wide as it is thick (18 mm over 0.1 mm): a power plane, not a signal's line.  Per-length
#: values whose ratio lies outside are refused as physically impossible (a capacitance
#: typed in fF/cm for pF/cm gives 50 MΩ).  (From the lossless-line relations and the
#: handbook TEM formulas for the plane pair and the wire above a plane.)
LINE_Z0_MIN = 1.0
LINE_Z0_MAX = 1000.0

#: Capacitance, delay and impedance of a cable class agree when C' Z0 is within this
#: fraction of the delay (common practice, no source: catalogue values are rounded to a
#: few percent).  Beyond it they are a warning (pinlib.library.plausible), unless
#: delay / capacitance is an impedance no line has: then the disagreement is the reason
#: given with the refusal, as it points at the slip.
LINE_AGREEMENT = 0.05


def line_z0_problem(delay: float, capacitance: float) -> str | None:
    """The expected text when ``delay / capacitance`` (per length, SI) is no line's
    impedance, else None; the capacitance per length that would fit that delay."""
    z0 = delay / capacitance
    if LINE_Z0_MIN <= z0 <= LINE_Z0_MAX:
        return None
    return M.LINE_Z0_EXPECTED.format(
        low=format_si(LINE_Z0_MIN, "Ω"), high=format_si(LINE_Z0_MAX, "Ω"),
        delay=format_si(delay * 1e-2, "s") + "/cm",  # the design's own unit
        c_low=format_si(delay / LINE_Z0_MAX * 1e-2, "F") + "/cm",
        c_high=format_si(delay / LINE_Z0_MIN * 1e-2, "F") + "/cm")


class LinePerLength(Record):
    """A cable or interconnect class, per length: capacitance (per conductor to its
    return), delay and impedance.

    Any two define the third on a lossless line (Z0 = sqrt(L'/C'), tpd = sqrt(L'C'), so
    C' = tpd / Z0 and tpd = Z0 C'); the one not given is derived (basis ``derived``).
    Three that disagree are listed by ``pinlib parts check``
    (:mod:`pinlib.library.plausible`).
    """

    capacitance: CapPerLength | None = None
    delay: DelayPerLength | None = None
    impedance: Resistance | None = None

    @after
    def _two_of_three(self):
        c, d, z = self.capacitance, self.delay, self.impedance
        given = [x for x in (c, d, z) if x is not None]
        if c is not None and len(given) == 1:
            return self  # capacitance alone serves the bus engines (no delay, no Z0)
        if len(given) == 3:
            return self._possible(given)
        if len(given) < 2 or (z is not None and not z.value > 0) or \
                (c is not None and not c.value > 0):
            raise Involving(M.CABLE_NEEDS_TWO_OF_THREE, ("capacitance", "delay", "impedance"))
        if c is None:
            value, field, unit = d.value / z.value, "capacitance", "F/m"
            how = f"delay / impedance = {d.text} / {z.text}"
        elif d is None:
            value, field, unit = z.value * c.value, "delay", "s/m"
            how = f"impedance x capacitance = {z.text} x {c.text}"
        else:
            value, field, unit = d.value / c.value, "impedance", "Ω"
            how = f"delay / capacitance = {d.text} / {c.text}"
        derived = Sourced(value, unit, format_si(value, unit), "derived",
                          f"{how} (lossless line)")
        object.__setattr__(self, field, derived)
        return self._possible(given)

    def _possible(self, given):
        """Refuse an impedance no line has (:data:`LINE_Z0_MIN` to :data:`LINE_Z0_MAX`):
        the stated or derived one, and delay / capacitance where all three are given
        (there, when they also disagree beyond :data:`LINE_AGREEMENT`, the disagreement
        is said first: it points at the value mistyped); and a derived delay shorter
        than light's."""
        d, c, z = self.delay, self.capacitance, self.impedance
        if d.value < DELAY_MIN:  # derived (impedance x capacitance): a given one is ranged
            raise Involving(M.DELAY_DERIVED_FASTER_THAN_LIGHT.format(
                delay=f"{d.value * 1e9:.3g} ns/m", z=z.text, c=c.text),
                ("capacitance", "impedance"))
        for z0, how in ((z.value, "delay / capacitance" if z.derived else "as given"),
                        (d.value / c.value, "delay / capacitance")):
            if LINE_Z0_MIN <= z0 <= LINE_Z0_MAX:
                continue
            bounds = {"z0": format_si(z0, "Ω"), "how": how,
                      "low": format_si(LINE_Z0_MIN, "Ω"), "high": format_si(LINE_Z0_MAX, "Ω")}
            fields = tuple(f for f, x in (("capacitance", c), ("delay", d), ("impedance", z))
                           if any(x is g for g in given))
            implied = z.value * c.value  # tpd = Z0 C' (lossless line)
            off = implied / d.value - 1.0
            if len(given) == 3 and abs(off) > LINE_AGREEMENT:
                raise Involving(M.LINE_VALUES_DISAGREE.format(
                    implied=f"{implied * 1e9:.3g} ns/m", delay=d.text, off=f"{off:+.0%}")
                    + M.CABLE_DISAGREE_Z0_IMPOSSIBLE.format(**bounds), fields)
            raise Involving(M.CABLE_Z0_IMPOSSIBLE.format(**bounds), fields)
        return self


class Bridge(Record):
    """How a bridging part joins its two sides."""

    kind: Literal["repeater", "mosfet", "buffer", "isolator"]
    r_on: Resistance | None = None     # MOSFET on-resistance
    v_gs_th: Voltage | None = None     # MOSFET gate threshold, max
    low_offset_side: Literal["a", "b"] | None = None


class Side(Record):
    """One side of a bridging part: its supply, pins and any static low-level offset."""

    supply: Supply | None = None
    pins: dict[str, Pin] = field(default_factory=dict)
    low_offset: Voltage | None = None  # the low level this side drives (static offset), max


#: What ends a line (``str.splitlines``): a title holding one of them is not one line.
LINE_BREAKS = frozenset("\n\r\v\f\x1c\x1d\x1e\x85\u2028\u2029")


def title_problem(title: object) -> str | None:
    """Why ``title`` is no part title, or None: a title is one line of text, not blank
    (an empty title listed the part with no name; a line break split its listing and
    the comment a new part file opens with).

    Parameters
    ----------
    title : object
        The title as given (a file's ``title``, ``parts new --title``).

    Returns
    -------
    str or None
        The problem, a message of :mod:`pinlib.core.messages`.
    """
    if not isinstance(title, str):
        return None  # the record's own type check names it
    if not title.strip():
        return M.TITLE_BLANK
    if any(ch in LINE_BREAKS for ch in title):
        return M.TITLE_NOT_ONE_LINE
    return None


class Part(Record):
    """A part class: the whole file, after ``extends`` has been merged in."""

    format: Literal["pinlib.part/1"]
    id: Annotated[str, Rule(pattern=r"^[a-z0-9][a-z0-9-]*$", max_length=64)]
    title: str
    category: Literal[CATEGORIES]  # type: ignore[valid-type]
    extends: str | None = None
    abstract: bool = False  # a class meant to be extended, not placed on a board
    supply: Supply | None = None
    provenance: Provenance = Provenance()
    description: str | None = None
    pins: dict[str, Pin] = field(default_factory=dict)
    timing: Timing = Timing()
    sides: dict[Literal["a", "b"], Side] = field(default_factory=dict)
    bridge: Bridge | None = None
    line: LinePerLength | None = None

    @check("title")
    def _title_one_line(cls, v, earlier):
        problem = title_problem(v)
        if problem is not None:
            raise LibraryError(problem, value=v, expected=M.TITLE_EXPECTED)
        return v

    @check("sides")
    def _both_sides(cls, v, earlier):
        if v and set(v) != {"a", "b"}:
            raise ValueError(M.BRIDGE_BOTH_SIDES)
        return v

    def functions(self) -> set[str]:
        """Every pin function the part offers (on either side for a bridge)."""
        out = {p.function for p in self.pins.values()}
        for side in self.sides.values():
            out |= {p.function for p in side.pins.values()}
        return out

    def pin_for(self, function: str, side: str | None = None) -> tuple[str, Pin] | None:
        """The (name, pin) serving ``function``, on ``side`` for a bridge; None if absent."""
        pins = self.sides[side].pins if side else self.pins
        for name, pin in pins.items():
            if pin.function == function:
                return name, pin
        return None

    def supply_for(self, side: str | None = None) -> Supply | None:
        if side and side in self.sides and self.sides[side].supply is not None:
            return self.sides[side].supply
        return self.supply
