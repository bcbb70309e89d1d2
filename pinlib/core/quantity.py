"""Engineering quantities: parse what engineers write, format SI floats back.

Parsing is strict on purpose.  A value in a part or design file is a string with its
unit (``"8 pF"``, ``"4.7 kΩ"``, ``"2.2 ns"``); the caller names the unit it expects
and gets an SI float back, or a :class:`~pinlib.core.errors.UnitError` that names the
field, the value and the expected unit.  We parse ourselves rather than hand text to a
general quantity parser because the general parsers accept too much for a file
format: ``33R`` as 33 ronna-something, ``4k7`` as 4 with unit ``k7``, ``10 pH`` for a
capacitance.  Formatting writes SI prefixes (checked against quantiphy in the tests).

Accepted forms
--------------
- a number, an optional SI prefix (T G M k K m u µ μ n p f a) and the unit:
  ``"4.7 kΩ"``, ``"4.7k ohm"``, ``"10pF"``, ``"1e-12 F"``, ``"400 kHz"``, ``"3.3 V"``;
- the RKM code of schematics, the prefix letter standing for the decimal point:
  ``"4k7"`` (4.7 kΩ), ``"2R2"`` (2.2 Ω), ``"R47"``, ``"4n7"`` (4.7 nF);
- percentages ``"5 %"`` (returned as the fraction 0.05);
- per-length values ``"0.8 pF/cm"``, ``"3.5 pF/in"``, ``"58 ps/cm"``, ``"7 nH/in"``;
- lengths in metres with prefixes, ``mil`` (thou), ``in``, ``ft``.
"""

from __future__ import annotations

import functools
import math
import re

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import UnitError
from pinlib.core.valueclass import value_class

__all__ = [
    "LIGHT_DELAY",
    "LIGHT_DELAY_ROUNDING",
    "DELAY_MIN",
    "UNITS",
    "parse",
    "parse_ratio",
    "Threshold",
    "parse_threshold",
    "format_si",
    "format_value",
    "range_text",
    "unit_name",
]

#: The delay of light in vacuum per metre, 1/c (c = 299,792,458 m/s, exact by the SI's
#: definition of the metre): no line's delay per length is shorter. [s/m]
LIGHT_DELAY = 1.0 / 299_792_458.0
#: How far under :data:`LIGHT_DELAY` a delay per length may be written: an air-dielectric
#: line's figure rounded to two digits (3.3 ns/m, 33 ps/cm) is 1 % under 1/c, and an
#: engineer writes it so; 2 % allows that rounding and refuses a real slip (common
#: practice, no source).
LIGHT_DELAY_ROUNDING = 0.02
#: The shortest delay per length a part or design file may give, 1/c less the rounding
#: allowance (about 3.269 ns/m). [s/m]
DELAY_MIN = LIGHT_DELAY * (1.0 - LIGHT_DELAY_ROUNDING)

# Expected unit -> (name used in messages, example).
UNITS: dict[str, tuple[str, str]] = {
    "Ω": ("a resistance", "4.7 kΩ"),
    "F": ("a capacitance", "8 pF"),
    "H": ("an inductance", "10 nH"),
    "s": ("a time", "2.2 ns"),
    "V": ("a voltage", "3.3 V"),
    "A": ("a current", "3 mA"),
    "Hz": ("a frequency", "400 kHz"),
    "W": ("a power", "10 mW"),
    "m": ("a length", "14 cm"),
    "%": ("a percentage", "5 %"),
    "F/m": ("a capacitance per length", "0.8 pF/cm"),
    "s/m": ("a delay per length", "58 ps/cm"),
    "H/m": ("an inductance per length", "3 nH/cm"),
    "Ω/m": ("a resistance per length", "0.1 Ω/m"),
}

_PREFIX = {
    "T": 1e12, "G": 1e9, "M": 1e6, "k": 1e3, "K": 1e3,
    "m": 1e-3, "u": 1e-6, "µ": 1e-6, "μ": 1e-6,
    "n": 1e-9, "p": 1e-12, "f": 1e-15, "a": 1e-18,
}

# Spellings of each base unit.  Keys are matched exactly (case matters: mHz is not MHz).
_UNIT_ALIAS = {
    "\u03a9": "Ω", "\u2126": "Ω",  # Greek capital omega and the ohm sign
    "ohm": "Ω", "ohms": "Ω", "Ohm": "Ω", "Ohms": "Ω", "OHM": "Ω", "R": "Ω",
    "F": "F", "H": "H",
    "s": "s", "sec": "s",
    "V": "V", "v": "V",
    "A": "A",
    "Hz": "Hz", "hz": "Hz", "HZ": "Hz",
    "W": "W",
    "m": "m",
    "%": "%",
}

# Non-metric lengths, in metres.
_LENGTH = {"mil": 25.4e-6, "mils": 25.4e-6, "thou": 25.4e-6, "in": 0.0254, "inch": 0.0254,
           "ft": 0.3048}

_NUMBER = r"[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?"
_PLAIN = re.compile(rf"^\s*({_NUMBER})\s*(.*?)\s*$")
#: No quantity or threshold is longer; a longer text is refused before any pattern sees it
#: (the patterns below take time that grows faster than the length of what they scan).
MAX_QUANTITY_TEXT = 100
_RKM = re.compile(r"^\s*(\d*)([RKkMGmunpµμ])(\d+)\s*(.*?)\s*$"
                  r"|^\s*(\d+(?:\.\d+)?)([RKkMG])\s*$")


#: A field's own example where its unit's (:data:`UNITS`) would mislead: a trace's width
#: is no "14 cm" (common practice, no source: the board cross-sections of the demo
#: designs), by unit and the field's last name.
_FIELD_EXAMPLES = {"m": {"width": "0.2 mm", "height": "0.18 mm", "spacing": "0.2 mm",
                         "thickness": "35 µm"}}


def unit_name(unit: str, field: str | None = None) -> str:
    """The words for an expected unit in messages, e.g. ``'a capacitance (e.g. 8 pF)'``;
    the example is the field's kind's (``width``: ``'0.2 mm'``) where it has one."""
    name, example = UNITS[unit]
    leaf = (field or "").rsplit(".", 1)[-1].lower()
    example = _FIELD_EXAMPLES.get(unit, {}).get(leaf, example)
    return f"{name} in {unit} (e.g. '{example}')"


def _split_unit(text: str) -> tuple[float, str] | None:
    """Split ``'kΩ'`` into (1e3, 'Ω'), ``'pF/cm'`` into (1e-10, 'F/m'); None when unknown."""
    if "/" in text:
        num, _, den = text.partition("/")
        top = _split_unit(num.strip())
        bottom = _split_length(den.strip())
        if top is None or bottom is None or top[1] not in ("F", "s", "H", "Ω"):
            return None
        return top[0] / bottom, f"{top[1]}/m"
    if text in _UNIT_ALIAS:
        return 1.0, _UNIT_ALIAS[text]
    if text in _LENGTH:
        return _LENGTH[text], "m"
    if text == "cm":
        return 1e-2, "m"
    if len(text) >= 2 and text[0] in _PREFIX and text[1:] in _UNIT_ALIAS:
        base = _UNIT_ALIAS[text[1:]]
        if base in ("%",) or (text[1:] == "R"):
            return None
        if text[0] == "m" and text[1:] in ("hz", "HZ"):
            # 'mhz': a unit written out of case, whose prefix's case cannot be trusted
            # either: read as millihertz, a clock of "20 mhz" passed every check.  Only
            # 'mHz' is millihertz; this is refused with both readings offered.
            return None
        return _PREFIX[text[0]], base
    return None


def _split_length(text: str) -> float | None:
    got = _split_unit(text)
    if got is None or got[1] != "m":
        return None
    return got[0]


def _fail(text, unit, field, problem, hint=None):
    """The error of a refused quantity; where the hint gives the user's own number with
    a unit, the expected part leaves out the generic example (one example, not two)."""
    expected = f"{UNITS[unit][0]} in {unit}" if hint else unit_name(unit, field)
    return UnitError(problem, field=field, value=text, expected=expected, hint=hint)


def parse(text: object, unit: str, *, field: str | None = None) -> float:
    """Parse an engineering quantity into an SI float, checking its unit.

    Parameters
    ----------
    text : str
        What the user wrote, e.g. ``"4.7 kΩ"`` or ``"4k7"``.
    unit : str
        The SI unit expected: one of :data:`UNITS` (``"Ω"``, ``"F"``, ``"F/m"``...).
        ``"%"`` returns a fraction (``"5 %"`` -> 0.05).
    field : str, optional
        The field path, for the error message.

    Returns
    -------
    float
        The value in SI base units (Ω, F, s, V, A, Hz, W, m, F/m, s/m, H/m).

    Raises
    ------
    UnitError
        When the text does not parse, has no unit, or has a unit of another dimension.

    Examples
    --------
    >>> parse("4k7", "Ω")
    4700.0
    >>> round(parse("3.5 pF/in", "F/m"), 15)
    1.37795e-10
    """
    if unit not in UNITS:
        raise ValueError(f"unknown expected unit {unit!r}")
    if isinstance(text, bool):
        raise _fail(text, unit, field, M.YES_NO_AS_QUANTITY)
    if isinstance(text, float) and not math.isfinite(text):  # TOML's nan and inf
        raise _fail(text, unit, field, M.NOT_FINITE)  # no hint to write "nan pF"
    if isinstance(text, (int, float)):
        raise _fail(text, unit, field, M.BARE_NUMBER, hint=_bare_hint(text, unit, field))
    if not isinstance(text, str):
        raise _fail(text, unit, field, M.TYPE_AS_QUANTITY.format(type=type(text).__name__))
    if len(text) > MAX_QUANTITY_TEXT:
        raise _fail(text, unit, field, M.QUANTITY_TOO_LONG.format(n=len(text),
                                                                  limit=MAX_QUANTITY_TEXT))
    value = _parse_text(text, unit, field)
    if not math.isfinite(value):
        raise _fail(text, unit, field, M.NOT_FINITE)
    return value


#: The unit a bare number most likely meant where it does not depend on its size.
_LIKELY = {"F": "pF", "s": "ns", "A": "mA", "W": "mW", "V": "V", "H": "nH"}


def likely_units(x: float, unit: str, field: str | None = None) -> tuple[str, ...]:
    """The one or two units a number written without one most likely meant, most likely
    first, for the hint of a bare number (common practice, no source).

    A clock under 100 is read in MHz first (SPI and GPIO clocks, 1 to 100 MHz; an I2C
    Fast-mode Plus "1"), from 100 up in kHz first (I2C and SMBus clocks, 100 to 1000 kHz).
    A resistance under 10 in kΩ first (a pull-up), from 10 up in Ω first (a series
    resistor).  A board cross-section (``width``, ``height``, ``spacing``) in mm, copper
    ``thickness`` in µm (mm under 1); another length as the project's designs write
    them: traces in cm (then mm), under 1 in m (a cable, then cm)."""
    x = abs(x)
    leaf = (field or "").rsplit(".", 1)[-1]
    if unit == "Hz":
        return ("MHz", "kHz") if x < 100 else ("kHz", "MHz")
    if unit == "Ω":
        return ("kΩ", "Ω") if x < 10 else ("Ω", "kΩ")
    if unit == "m":
        if leaf in ("width", "height", "spacing"):
            return ("mm",)
        if leaf == "thickness":
            return ("mm",) if x < 1 else ("µm",)
        return ("m", "cm") if x < 1 else ("cm", "mm")
    return (_LIKELY.get(unit) or UNITS[unit][1].split()[-1],)


def _with_unit(number: str, x: float, unit: str, field: str | None) -> str:
    """``"20 MHz" or "20 kHz"``: the number with its likeliest units; a number that is
    most likely in the SI unit itself is offered as that, with its prefix
    (``4700`` for a resistance: ``"4.7 kΩ"``)."""
    units, si = _bare_readings(x, unit, field)
    texts = [f'"{number} {u}"' for u in units]
    if si:
        texts.append(f'"{format_si(x, unit, 12)}"')
    return " or ".join(texts)


def _bare_readings(x: float, unit: str, field: str | None) -> tuple[tuple[str, ...], bool]:
    """The prefixed units a bare number is offered in, and whether its reading in the SI
    unit itself is offered too (common practice, no source).  A number under 0.001 (a
    capacitance of 1e-11, a time of 2.5e-09), a resistance from 1000 (4700) or a
    frequency from 10000 (400000) reads as no board value in a prefixed unit, and is
    taken as written in the SI unit, as Python and spreadsheets write it.  A frequency
    from 1000 is not offered in MHz (a GHz clock), but in kHz and in Hz; a current under
    1 A in mA and in A."""
    x_abs = abs(x)
    units = likely_units(x, unit, field)
    if unit == "%":
        return units, False
    if (0 < x_abs < 1e-3 or (unit == "Ω" and x_abs >= 1e3)
            or (unit == "Hz" and x_abs >= 1e4)):
        return (), True
    if unit == "Hz" and x_abs >= 1e3:
        return tuple(u for u in units if u != "MHz"), True
    if unit == "A" and 0 < x_abs < 1:
        return units, True
    return units, False


def _bare_hint(x: float, unit: str, field: str | None = None) -> str:
    """How to write a bare number (a TOML number) with its unit."""
    return "write it as a string with its unit" + _readings(str(x), x, unit, field)


def _readings(number: str, x: float, unit: str, field: str | None) -> str:
    """The values a number written without its unit likely meant, after the advice to add
    it: ``', e.g. "20 MHz" or "20 kHz"'``.  A number between 0 and 1 for a percentage is
    most likely a fraction (0.05 for 5 %): both readings, the fraction's first."""
    if unit == "%" and 0 < x < 1:
        return (f": \"{x * 100:.10g} %\" if {number} is a fraction, or \"{number} %\" if "
                f"you meant {number} percent")
    return f", e.g. {_with_unit(number, x, unit, field)}"


def _parse_text(text: str, unit: str, field: str | None) -> float:
    rkm = _RKM.match(text)
    if rkm:
        if rkm.group(5) is not None:  # '47R', '10K', '4.7k': a trailing letter
            whole, _, frac = rkm.group(5).partition(".")
            letter, rest = rkm.group(6), ""
        else:
            whole, letter, frac, rest = rkm.group(1), rkm.group(2), rkm.group(3), rkm.group(4)
        if unit == "Ω" and letter in "mnpµμu":
            # Sub-ohm RKM codes are written with R ('R47'); 'm' here would be milliohm.
            scale = _PREFIX[letter]
        elif letter == "R":
            scale = 1.0
        else:
            scale = _PREFIX.get(letter)
        base = unit if not rest else None
        if rest:
            got = _split_unit(rest)
            if got is None or got[0] != 1.0:
                raise _fail(text, unit, field, M.UNKNOWN_UNIT.format(unit=rest))
            base = got[1]
        if letter == "R" and unit != "Ω":
            raise _fail(text, unit, field, M.RKM_R_FOR_RESISTANCE)
        if base != unit:
            raise _fail(text, unit, field,
                        M.WRONG_DIMENSION.format(unit=base, quantity=UNITS[unit][0]))
        return _scaled(f"{whole or '0'}.{frac or '0'}", scale)
    m = _PLAIN.match(text)
    if not m:
        raise _fail(text, unit, field, M.NOT_A_QUANTITY, hint=_plus_minus_hint(text, unit))
    number, rest = float(m.group(1)), m.group(2)
    if not rest:
        raise _fail(text, unit, field, M.BARE_NUMBER,
                    hint="add the unit" + _readings(m.group(1), number, unit, field))
    written = rest.strip()
    rest = rest.replace("·", "").replace(" ", "")
    got = _split_unit(rest)
    if got is None:  # the unit as written ('pF pF', not 'pFpF')
        raise _fail(text, unit, field, M.UNKNOWN_UNIT.format(unit=written),
                    hint=_unit_hint(text, m.group(1), rest, unit, field))
    scale, base = got
    if base != unit:
        raise _fail(text, unit, field, M.WRONG_DIMENSION.format(unit=base, quantity=UNITS[unit][0]))
    if base == "%":
        return number / 100.0
    return _scaled(m.group(1), scale)


#: The prefix each scale is written with in a suggestion.
_PREFIX_SHOWN = {1e12: "T", 1e9: "G", 1e6: "M", 1e3: "k", 1.0: "", 1e-3: "m", 1e-6: "µ",
                 1e-9: "n", 1e-12: "p", 1e-15: "f", 1e-18: "a"}
#: A decimal comma ("10,5 pF"), not a thousands separator ("1,000 pF": three digits).
_DECIMAL_COMMA = re.compile(r"^\s*[+-]?\d+,(?!\d{3}(?!\d))\d+(?![\d,])")


#: A plus-minus sign as people type it: "±", "+/-" or "+-".
_PM = r"±|\+/-|\+-"

#: Fields of a design whose tolerance has a field of its own beside them.
_TOLERANCE_FIELDS = ("pullup", "supply")


def _tolerance_hint(number: str, rest: str, unit: str, field: str | None) -> str | None:
    """A value with its tolerance beside it, as a BOM writes it ("4.7 kΩ ±1%"): the value
    to write, and where the tolerance goes (a design's ``pullup_tolerance``,
    ``supply_tolerance``; a part states its limit, not a tolerance)."""
    value = re.split(_PM, rest, maxsplit=1)
    if len(value) < 2:
        return None
    got = _split_unit(value[0])
    if got is None or got[1] != unit:
        return None
    leaf = (field or "").rsplit(".", 1)[-1]
    where = (f"and the tolerance as {leaf}_tolerance" if leaf in _TOLERANCE_FIELDS
             else "the limit in the direction that hurts")
    return f'a tolerance beside the value: write "{number} {value[0]}", {where}'


def _unit_hint(text: str, number: str, rest: str, unit: str,
               field: str | None = None) -> str | None:
    """What an unknown unit most likely meant, as the value to write: a decimal comma
    (``"10,5 pF"``), a prefix without its unit (``"10 p"``, ``"4.7 k"``), or a unit in the
    wrong case (``"10 pf"``; both readings where the case decides, ``"MHz" or "mHz"``).
    None when nothing is likely."""
    if unit not in ("Ω", "F", "H", "s", "V", "A", "Hz", "W"):
        return None
    tolerance = _tolerance_hint(number, rest, unit, field)
    if tolerance:
        return tolerance
    if _DECIMAL_COMMA.match(text):
        fixed = text.strip().replace(",", ".", 1)
        return f'a decimal comma: write a point, "{fixed}"'
    if rest in _PREFIX:
        return f'a prefix without its unit: write "{number} {_PREFIX_SHOWN[_PREFIX[rest]]}{unit}"'
    if unit == "V" and re.fullmatch(r"V\d+", rest) and re.fullmatch(r"\d+", number):
        # a rail's schematic name, 3V3: the unit where the decimal point goes
        return (f'a rail\'s name, its unit where the decimal point goes: write '
                f'"{number}.{rest[1:]} V"')
    shown = []
    # a clock in MHz before mHz; a current in mA before MA
    letters = sorted([*_PREFIX.items(), ("", 1.0)], key=lambda kv: kv[1],
                     reverse=unit == "Hz")
    for letter, scale in letters:
        written = f"{number} {_PREFIX_SHOWN[scale]}{unit}"
        if (letter + unit).lower() == rest.lower() and written not in shown:
            shown.append(written)
    if not shown:
        return None
    case = " (the case of a prefix matters: M is mega, m milli)" if len(shown) > 1 else ""
    return "write " + " or ".join(f'"{s}"' for s in shown) + case


_PLUS_MINUS = re.compile(rf"^\s*(?:{_PM})\s*")


def _plus_minus_hint(text: str, unit: str) -> str | None:
    """A percentage written with its ± ("±5 %", "+/-5%"), as datasheets write a
    tolerance: the value to write, since a tolerance field is taken both ways."""
    m = _PLUS_MINUS.match(text)
    if unit != "%" or not m:
        return None
    plain = _PLAIN.match(text[m.end():].strip())
    if not plain:
        return None
    number, after = plain.groups()
    return (f'a tolerance is taken both ways: write "{number} {after.strip() or "%"}" '
            "without the ±")


def _scaled(number: str, scale: float) -> float:
    """number × scale, exact to the last digit where the scale is a power of ten.

    ``2.2 × 1e-9`` in floating point is 2.2000000000000003e-09; reading ``"2.2e-9"``
    gives the nearest double to the written value instead (``float`` of a decimal
    string is correctly rounded).  The prefix's power of ten is added to the number's
    own exponent as text, so no :mod:`decimal` is imported; an exponent beyond the
    doubles' range gives inf or 0, which the callers' finiteness check handles.
    """
    exponent = math.log10(scale)
    if exponent == round(exponent):
        mantissa, _, power = number.partition("e") if "e" in number else number.partition("E")
        return float(f"{mantissa}e{int(power or 0) + round(exponent)}")
    return float(number) * scale


def parse_ratio(text: object, *, field: str | None = None) -> float:
    """Parse a tolerance or fraction written as a percentage (``"5 %"`` -> 0.05)."""
    return parse(text, "%", field=field)


@value_class(frozen=True)
class Threshold:
    """A voltage that may be relative to a part's own supply: ``scale·VDD + offset``.

    ``"0.7 VDD"`` is ``Threshold(0.7, 0.0)``; ``"VDD - 0.4 V"`` is ``Threshold(1.0, -0.4)``;
    ``"2.0 V"`` is ``Threshold(0.0, 2.0)``.
    """

    scale: float
    offset: float
    text: str = ""

    @property
    def relative(self) -> bool:
        return self.scale != 0.0

    def resolve(self, vdd):
        """The threshold at a supply voltage (scalar or numpy array). [V]"""
        if isinstance(vdd, (float, int)):  # one number (numpy's float64 among them)
            return self.offset if self.scale == 0.0 else self.scale * float(vdd) + self.offset
        if self.scale == 0.0:
            return self.offset if np.ndim(vdd) == 0 else np.full(np.shape(vdd), self.offset)
        return self.scale * np.asarray(vdd, dtype=float) + self.offset if np.ndim(vdd) else (
            self.scale * float(vdd) + self.offset)

    def __str__(self) -> str:
        return self.text or format_threshold(self)


def format_threshold(th: Threshold) -> str:
    if th.scale == 0.0:
        return format_si(th.offset, "V")
    head = "VDD" if th.scale == 1.0 else f"{th.scale:g} VDD"
    if th.offset == 0.0:
        return head
    sign = "+" if th.offset > 0 else "-"
    return f"{head} {sign} {format_si(abs(th.offset), 'V')}"


_TERM_SPLIT = re.compile(r"(?<![eE])\s*([+-])\s*")
_VDD_TERM = re.compile(rf"^\s*(?:({_NUMBER})\s*(%)?\s*[*×·]?\s*)?VDD\s*$", re.IGNORECASE)


def parse_threshold(text: object, *, field: str | None = None) -> Threshold:
    """Parse ``"0.7 VDD"``, ``"VDD - 0.4 V"``, ``"70 % VDD"`` or ``"2.0 V"`` into a Threshold.

    Raises
    ------
    UnitError
        When a term is neither a multiple of VDD nor a voltage.
    """
    expected = "a voltage ('2.0 V') or one relative to the supply ('0.7 VDD', 'VDD - 0.4 V')"
    if not isinstance(text, str):
        if isinstance(text, float) and not math.isfinite(text):  # TOML's nan and inf
            raise UnitError(M.THRESHOLD_NOT_FINITE, field=field, value=text,
                            expected=expected)
        if isinstance(text, (int, float)) and not isinstance(text, bool):
            raise UnitError(M.BARE_NUMBER, field=field, value=text,
                            expected=expected, hint=f"write \"{text} V\" or \"{text} VDD\"")
        raise UnitError(M.TYPE_AS_THRESHOLD.format(type=type(text).__name__), field=field,
                        value=text, expected=expected)
    if len(text) > MAX_QUANTITY_TEXT:
        raise UnitError(M.QUANTITY_TOO_LONG.format(n=len(text), limit=MAX_QUANTITY_TEXT),
                        field=field, value=text, expected=expected)
    body = text.strip()
    if not body:
        raise UnitError(M.EMPTY_THRESHOLD, field=field, value=text, expected=expected)
    # Split into signed terms; a leading sign belongs to the first term.
    pieces = _TERM_SPLIT.split(body)
    terms: list[tuple[str, str]] = []
    sign = "+"
    if pieces and pieces[0] == "":
        pieces = pieces[1:]
        sign = pieces.pop(0) if pieces else "+"
    terms.append((sign, pieces[0]))
    for i in range(1, len(pieces) - 1, 2):
        terms.append((pieces[i], pieces[i + 1]))
    scale = offset = 0.0
    for sign, term in terms:
        k = -1.0 if sign == "-" else 1.0
        vm = _VDD_TERM.match(term)
        if vm:
            coef = float(vm.group(1)) if vm.group(1) else 1.0
            if vm.group(2):
                coef /= 100.0
            scale += k * coef
            continue
        try:
            offset += k * _parse_text(term, "V", field)
        except UnitError:
            raise UnitError(M.NOT_A_THRESHOLD, field=field, value=text, expected=expected,
                            hint=_threshold_hint(body)) from None
    if not (math.isfinite(scale) and math.isfinite(offset)):
        raise UnitError(M.THRESHOLD_NOT_FINITE, field=field, value=text, expected=expected)
    return Threshold(scale, offset, body)


_PERCENT_ALONE = re.compile(rf"^({_NUMBER})\s*%$")
_VCC = re.compile(r"(?<![A-Za-z])V(?:CC|DDIO|IO)\b", re.IGNORECASE)  # "0.3VCC" too
_TIMES_VDD = re.compile(r"(\d)\s*[x×]\s*(VDD)\b")
_OFFSET_NO_UNIT = re.compile(rf"^VDD\s*[-+]\s*{_NUMBER}$")


def _threshold_hint(body: str) -> str | None:
    """What a refused level most likely meant, when that reads: with a point for a
    decimal comma ("0,7 VDD"), VDD for the supply named VCC ("0.7 VCC"), or a bare
    number ("0.7") or percentage ("70 %") given its VDD."""
    def reads(candidate: str) -> bool:
        try:
            parse_threshold(candidate)
        except UnitError:
            return False
        return True

    fixed, why = body, []
    if re.search(r"\d,\d", fixed):
        fixed, _ = re.subn(r"(\d),(\d)", r"\1.\2", fixed)
        why.append("a decimal point, not a comma")
    if _VCC.search(fixed):
        fixed = _VCC.sub("VDD", fixed)
        why.append("the part's own supply is written VDD, a datasheet's VCC too")
    if _TIMES_VDD.search(fixed):
        fixed = _TIMES_VDD.sub(r"\1 \2", fixed)
        why.append("a multiple of VDD is written 0.7 VDD")
    if _OFFSET_NO_UNIT.match(fixed.strip()):
        fixed = fixed.strip() + " V"
        why.append("the offset with its unit")
    if why and reads(fixed):
        return f'write "{fixed}" ({"; ".join(why)})'
    if re.fullmatch(_NUMBER, body):
        return f'write "{body} VDD" (relative to the supply) or "{body} V"'
    if (pct := _PERCENT_ALONE.match(body)) is not None:
        return f'write "{pct.group(1)} % VDD"'
    return None


def format_value(value, unit: str) -> str:
    """A figure or check value as text: SI prefix and unit, ``yes``/``no``, text as is,
    ``∞``/``−∞`` for an unbounded number, ``—`` for none (or NaN).  A value without a
    unit (a ratio, a count) takes no SI prefix ("847 m" reads badly) and carries the
    three significant digits :func:`format_si` gives a value with one (``0.0782``,
    ``0.847``); from a thousand on it is written whole (``1234``, never ``1.23e+03``)."""
    if value is None:
        return "—"
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, str):
        return value
    try:
        x = float(value)
    except (TypeError, ValueError):
        return str(value)
    if not math.isfinite(x):
        return "∞" if x > 0 else ("−∞" if x < 0 else "—")
    if not unit:
        return _sig(x, 3) if abs(x) < 1000 else f"{x:.0f}"
    return format_si(x, unit)


def format_si(value, unit: str, digits: int = 3, *, per: str = "cm") -> str:
    """Format an SI float with an SI prefix and ``digits`` significant digits.

    A per-length value (a unit with ``/m``) is shown per centimetre, as boards read it,
    or per metre with ``per="m"`` (the part format's tables, a cable's catalogue).

    >>> format_si(2200.0, "Ω")
    '2.2 kΩ'
    >>> format_si(1.12e-10, "F")
    '112 pF'
    >>> format_si(2.1349e-6, "s")
    '2.13 µs'
    """
    if value is None:
        return "—"
    if isinstance(value, (bool, np.bool_)):
        return "yes" if value else "no"
    value = float(value)
    if not math.isfinite(value):
        return f"{value} {unit}".strip()
    if unit == "%":
        return f"{_sig(value * 100.0, digits)} %"
    if "/" in unit:
        return _per_length(value, unit, digits, per)
    if value == 0.0:
        return f"0 {unit}".strip()
    return _rendered(value, unit, digits)


def range_text(lo: float | None, hi: float | None, unit: str = "", *,
               above: bool = False, below: bool = False, per: str = "cm") -> str:
    """What a range accepts, in the words of the test it applies, for an error's
    ``expected``: ``"at least 10 µm and at most 100 mm"``; with ``above`` (the low end
    itself refused) ``"more than 0 Hz and at most 100 GHz"``; with ``below`` (the high
    end refused) ``"... and less than 1"``.  Without a unit the bounds are plain
    numbers; a per-length range is stated per centimetre, or per metre with ``per="m"``
    (:func:`format_si`)."""

    def shown(x):
        return format_si(x, unit, per=per) if unit else f"{x:g}"

    ends = []
    if lo is not None:
        ends.append(f"{'more than' if above else 'at least'} {shown(lo)}")
    if hi is not None:
        ends.append(f"{'less than' if below else 'at most'} {shown(hi)}")
    return " and ".join(ends)


#: SI prefixes written by format_si, by engineering exponent (micro as the micro sign).
_SHOWN_PREFIX = {-18: "a", -15: "f", -12: "p", -9: "n", -6: "\u00b5", -3: "m", 0: "",
           3: "k", 6: "M", 9: "G", 12: "T"}


# The engines format the same limits and thresholds for every bus they check: keep
# recent ones.
@functools.lru_cache(maxsize=4096)
def _rendered(value: float, unit: str, digits: int) -> str:
    """``value`` rounded to ``digits`` significant digits in engineering form: a prefix
    from ``_SHOWN_PREFIX`` when its exponent has one, else ``e<exponent>`` (a multiple of 3);
    trailing zeros after the decimal point dropped.  (tests/test_quantity.py holds it
    to quantiphy's rendering over a sweep of magnitudes.)"""
    sign = "-" if value < 0 else ""
    mantissa, exponent = f"{abs(value):.{max(digits, 1) - 1}e}".split("e")
    exp10 = int(exponent)
    eng = 3 * (exp10 // 3)
    figures = mantissa.replace(".", "")
    point = 1 + exp10 - eng  # digits before the decimal point: 1, 2 or 3
    figures = figures.ljust(point, "0")
    whole, frac = figures[:point], figures[point:].rstrip("0")
    number = sign + whole + ("." + frac if frac else "")
    if eng in _SHOWN_PREFIX:
        return f"{number} {_SHOWN_PREFIX[eng]}{unit}".strip()
    return f"{number}e{eng} {unit}".strip()


def _per_length(value: float, unit: str, digits: int, per: str = "cm") -> str:
    """Per-length values read best per centimetre on boards: '0.8 pF/cm', '58 ps/cm';
    ``per="m"``: per metre, '80 pF/m'."""
    base = unit.split("/")[0]
    if per == "m":
        return f"{format_si(value, base, digits)}/m"
    return f"{format_si(value * 0.01, base, digits)}/cm"


def _sig(x: float, digits: int) -> str:
    return f"{x:.{digits}g}"
