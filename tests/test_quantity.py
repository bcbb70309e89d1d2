"""Engineering quantities: parsing every unit form, errors, thresholds, formatting."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from pinlib.core.errors import UnitError
from pinlib.core.quantity import (
    UNITS,
    Threshold,
    format_si,
    format_value,
    likely_units,
    parse,
    parse_ratio,
    parse_threshold,
    range_text,
)

# One inch is 25.4 mm and one mil a thousandth of it.
INCH = 25.4e-3  # published: international yard and pound agreement (1959), 1 in = 25.4 mm
MIL = 25.4e-6  # published: definition of the mil (thou), 1/1000 in = 25.4 µm

# --- every unit form of the part and design formats --------------------------------------

# (text, expected unit, SI value).  The SI prefixes: k 1e3, m 1e-3, µ 1e-6, n 1e-9,
# p 1e-12 (from memory: BIPM SI Brochure, 9th ed., table 7, SI prefixes).
UNIT_FORMS = [
    ("4.7 kΩ", "Ω", 4700.0),  # from memory: SI prefix k = 1e3
    ("4.7k ohm", "Ω", 4700.0),  # from memory: SI prefix k = 1e3
    ("4k7", "Ω", 4700.0),  # from memory: IEC 60062 letter code, the letter stands for the point
    ("2R2", "Ω", 2.2),  # from memory: IEC 60062 letter code, R marks the point of ohms
    ("R47", "Ω", 0.47),  # from memory: IEC 60062 letter code
    ("10pF", "F", 10e-12),  # from memory: SI prefix p = 1e-12
    ("2.2 ns", "s", 2.2e-9),  # from memory: SI prefix n = 1e-9
    ("3.3 V", "V", 3.3),  # no prefix
    ("0.5 mA", "A", 0.5e-3),  # from memory: SI prefix m = 1e-3
    ("1e-12 F", "F", 1e-12),  # E notation, no prefix
    ("5 %", "%", 0.05),  # derived from 1 % = 1/100
    ("0.8 pF/cm", "F/m", 0.8e-12 / 1e-2),  # derived from 1 cm = 1e-2 m
    ("3.5 pF/in", "F/m", 3.5e-12 / INCH),  # derived from 1 in = 25.4 mm
    ("400 kHz", "Hz", 400e3),  # from memory: SI prefix k = 1e3
    ("35 µm", "m", 35e-6),  # from memory: SI prefix µ = 1e-6
    ("1.6 mm", "m", 1.6e-3),  # from memory: SI prefix m = 1e-3
    ("6 mil", "m", 6 * MIL),  # published: definition of the mil (thou)
    ("1 in", "m", INCH),  # published: 1 in = 25.4 mm
    ("58 ps/cm", "s/m", 58e-12 / 1e-2),  # derived from 1 cm = 1e-2 m
    ("7 nH/in", "H/m", 7e-9 / INCH),  # derived from 1 in = 25.4 mm
]


@pytest.mark.parametrize(("text", "unit", "expected"), UNIT_FORMS)
def test_every_unit_form(text, unit, expected):
    assert parse(text, unit) == pytest.approx(expected, rel=1e-12)


def test_mil_and_inch_definitions():
    assert parse("1 mil", "m") == pytest.approx(25.4e-6, rel=1e-12)  # published: mil = 25.4 µm
    assert parse("1000 mil", "m") == pytest.approx(parse("1 in", "m"), rel=1e-12)
    assert parse("1 in", "m") == pytest.approx(25.4e-3, rel=1e-12)  # published: 1 in = 25.4 mm


def test_decimal_prefixes_give_the_nearest_double():
    # "2.2 ns" must be the double nearest 2.2e-9, not 2.2 * 1e-9 (2.2000000000000003e-09).
    assert parse("2.2 ns", "s") == 2.2e-9  # derived from decimal reading of "2.2e-9"
    assert parse("4.7 kΩ", "Ω") == 4700.0


@settings(max_examples=400, deadline=None)
@given(st.text("0123456789", min_size=1, max_size=28), st.integers(0, 28),
       st.sampled_from(["", "e7", "E-3", "e+12", "e-400", "e400", "e-99999999999"]),
       st.sampled_from(["", "-", "+"]), st.sampled_from(["a", "f", "p", "n", "µ", "m", "",
                                                        "k", "M", "G", "T"]))
def test_prefixed_numbers_read_as_decimal_reads_them(digits, point, power, sign, prefix):
    """The prefix's power of ten added to the number's exponent as text (no decimal
    module): bit for bit what Decimal(number).scaleb(power), rounded to a float, gives
    for every number of up to 28 digits (Decimal's precision), inf and 0 included."""
    from decimal import Decimal

    number = f"{sign}{digits[:point]}.{digits[point:]}{power}"
    exponent = {"a": -18, "f": -15, "p": -12, "n": -9, "µ": -6, "m": -3, "": 0, "k": 3,
                "M": 6, "G": 9, "T": 12}[prefix]  # published: the SI prefixes
    try:
        expected = float(Decimal(number).scaleb(exponent))
    except ArithmeticError:  # beyond Decimal's exponents: the float product
        expected = float(number) * 10.0 ** exponent
    got = parse(f"{number} {prefix}V", "V") if math.isfinite(expected) else None
    if got is None:  # refused as not finite, as before
        with pytest.raises(UnitError):
            parse(f"{number} {prefix}V", "V")
        return
    assert got == expected and math.copysign(1.0, got) == math.copysign(1.0, expected)


def test_a_long_number_reads_as_its_nearest_double():
    # derived: 2**53 + 1 = 9007199254740993 is halfway between the doubles 2**53 and
    # 2**53 + 2, so any number just above it is nearest 2**53 + 2 (Decimal's 28 digits
    # rounded it to the halfway point first, and then to 2**53)
    assert parse("9007199254740993.0000000000000000000001 V", "V") == 2.0**53 + 2


@pytest.mark.parametrize("text", ["4.7 kΩ", "4.7 kΩ", "4.7kohm", "4.7 k ohm", "4.7 KOhm",
                                  "4700 R", "4K7"])
def test_resistance_spellings(text):
    # The ohm sign U+2126 and the Greek capital omega U+03A9 are both accepted.
    assert parse(text, "Ω") == pytest.approx(4700.0, rel=1e-12)


@pytest.mark.parametrize("text", ["1 µF", "1 μF", "1 uF"])
def test_micro_spellings(text):
    # U+00B5 micro sign, U+03BC Greek mu and the ASCII 'u' all mean 1e-6.
    assert parse(text, "F") == pytest.approx(1e-6, rel=1e-12)  # from memory: SI prefix µ


def test_percent_ratio():
    assert parse_ratio("1 %") == pytest.approx(0.01, rel=1e-12)  # derived from 1 % = 1/100


# --- errors -----------------------------------------------------------------------------

def test_wrong_dimension_names_field_value_and_expected_unit():
    with pytest.raises(UnitError) as info:
        parse("10 pH", "F", field="pins.sda.c_in")
    err = info.value
    assert err.field == "pins.sda.c_in"
    assert err.value == "10 pH"
    assert "capacitance" in err.expected and "F" in err.expected
    assert "pins.sda.c_in" in str(err) and "10 pH" in str(err) and "H" in err.problem


@pytest.mark.parametrize(("text", "unit", "expected"), [
    # '47k' and '10K' were read, '4.7k' and '2.2M' refused: the same trailing letter
    ("4.7k", "Ω", 4700.0),  # from memory: SI prefix k = 1e3
    ("2.2M", "Ω", 2.2e6),  # from memory: SI prefix M = 1e6
    ("4.7R", "Ω", 4.7),  # from memory: IEC 60062, R marks ohms
    ("1.5M", "Hz", 1.5e6),  # from memory: SI prefix M = 1e6
])
def test_a_trailing_prefix_letter_takes_decimals(text, unit, expected):
    assert parse(text, unit) == pytest.approx(expected, rel=1e-12)


def test_mhz_in_lower_case_is_refused_with_both_readings():
    # "20 mhz" was read as 20 millihertz: an SPI clock of 0.02 Hz passed every check with
    # seconds of slack.  Only 'mHz' is millihertz; 'Mhz', 'khz' and 'MHZ' read as before.
    for text in ("20 mhz", "20 mHZ", "20 m hz"):
        with pytest.raises(UnitError) as info:
            parse(text, "Hz", field="clock")
        assert '"20 MHz" or "20 mHz"' in str(info.value), str(info.value)
    assert parse("20 mHz", "Hz") == pytest.approx(20e-3, rel=1e-12)  # SI: m = 1e-3
    assert parse("20 Mhz", "Hz") == parse("20 MHZ", "Hz") == 20e6  # SI: M = 1e6


@pytest.mark.parametrize(("text", "unit", "hint"), [
    ("10 pf", "F", 'write "10 pF"'),
    ("10 PF", "F", 'write "10 pF"'),
    ("2 uf", "F", 'write "2 µF"'),
    ("10 NS", "s", 'write "10 ns"'),
    ("10 ma", "A", 'write "10 mA" or "10 MA"'),
    ("10 p", "F", 'a prefix without its unit: write "10 pF"'),
    ("4.7 k", "Ω", 'a prefix without its unit: write "4.7 kΩ"'),
    ("10,5 pF", "F", 'a decimal comma: write a point, "10.5 pF"'),
])
def test_an_unknown_unit_says_what_was_likely_meant(text, unit, hint):
    # the message said only "unknown unit 'pf'" and gave the generic example '8 pF'
    with pytest.raises(UnitError) as info:
        parse(text, unit, field="pins.sda.c_in")
    assert info.value.hint and hint in info.value.hint, str(info.value)


@pytest.mark.parametrize(("text", "hint"), [
    # "0,7 VDD", "0.7 VCC", "0.7" and "70 %" said only "not a voltage or a multiple of VDD"
    ("0,7 VDD", 'write "0.7 VDD" (a decimal point, not a comma)'),
    ("0.7 vcc", 'write "0.7 VDD" (the part\'s own supply is written VDD'),
    ("VCC - 0,4 V", 'write "VDD - 0.4 V"'),
    ("0.7", 'write "0.7 VDD" (relative to the supply) or "0.7 V"'),
    ("70%", 'write "70 % VDD"'),
    # the same mistakes that had no hint: VCC against the number ("0.3VCC"), an offset
    # without its unit, and a multiple written with "x"
    ("0.3VCC", 'write "0.3VDD" (the part\'s own supply is written VDD'),
    ("VDD - 0.4", 'write "VDD - 0.4 V" (the offset with its unit)'),
    ("0.7 x VDD", 'write "0.7 VDD" (a multiple of VDD is written 0.7 VDD)'),
])
def test_a_refused_level_says_what_was_likely_meant(text, hint):
    with pytest.raises(UnitError) as info:
        parse_threshold(text, field="pins.sda.v_ih")
    assert info.value.hint and hint in info.value.hint, str(info.value)
    parse_threshold(info.value.hint.split('"')[1])  # the suggestion reads


def test_a_thousands_comma_is_not_read_as_a_decimal_one():
    with pytest.raises(UnitError) as info:
        parse("1,000 pF", "F")
    assert not info.value.hint  # 1000 pF or 1.000 pF: no guess


@pytest.mark.parametrize(("value", "unit", "suggested"), [
    # 4700 for a resistance is 4700 Ω written without its unit (it offered "4700 kΩ")
    ("8", "F", '"8 pF"'), (8, "F", '"8 pF"'), (3.3, "V", '"3.3 V"'), ("4700", "Ω", '"4.7 kΩ"'),
])
def test_bare_number_suggests_the_unit(value, unit, suggested):
    with pytest.raises(UnitError, match="bare number") as info:
        parse(value, unit, field="x")
    assert suggested in info.value.hint


@pytest.mark.parametrize(("value", "first", "other"), [
    (0.05, '"5 %"', '"0.05 %"'), (0.2, '"20 %"', '"0.2 %"'), (0.001, '"0.1 %"', '"0.001 %"'),
])
@pytest.mark.parametrize("written", [float, str])
def test_bare_fraction_for_a_percentage_suggests_it_times_100(value, first, other, written):
    # common practice, no source: a tolerance written 0.05 means 5 % far more often
    # than 0.05 %; both readings offered, the fraction's first.  Written as text ("0.05",
    # as a command line's --threshold gets it) only "0.05 %" was offered
    with pytest.raises(UnitError, match="bare number") as info:
        parse(written(value), "%", field="supply_tolerance")
    hint = info.value.hint
    assert first in hint and other in hint and hint.index(first) < hint.index(other)


def test_bare_number_of_one_or_more_for_a_percentage_is_taken_as_percent():
    # common practice, no source: 5 for a tolerance is 5 %
    with pytest.raises(UnitError) as info:
        parse(5, "%", field="supply_tolerance")
    assert '"5 %"' in info.value.hint and "fraction" not in info.value.hint


@pytest.mark.parametrize("value", [float("nan"), float("inf"), "nan pF", "inf pF", "1e400 pF",
                                   "-1e400 F", "1e9999999 pF", "1e99999999999999999999 F"])
def test_nan_and_inf_are_refused(value):
    with pytest.raises(UnitError):
        parse(value, "F", field="c_in")


@pytest.mark.parametrize("value", [float("nan"), float("inf"), float("-inf")])
def test_a_bare_nan_or_inf_is_not_advised_to_be_written_with_a_unit(value):
    # TOML's bare nan and inf were answered "a bare number has no unit ... e.g. "nan pF"",
    # advice that the parser itself then refuses.
    from pinlib.core.quantity import parse_threshold

    for call in (lambda: parse(value, "F", field="c_in"),
                 lambda: parse_threshold(value, field="v_il")):
        with pytest.raises(UnitError) as info:
            call()
        assert "not a finite" in info.value.problem and "nan " not in info.value.message
        assert "inf " not in (info.value.hint or "")


@pytest.mark.parametrize("text", ["", "   ", "pF", "10", "10 p F x", "ten pF", "10 mF/cm/cm",
                                  "10 kmF", "33R", "10 m%", "1..2 V", "1,5 V", "3.3 v v"])
def test_malformed_text(text):
    with pytest.raises(UnitError):
        parse(text, "F" if "F" in text else "V")


def test_rkm_with_r_only_for_resistance():
    with pytest.raises(UnitError, match="resistance"):
        parse("2R2", "F")


def test_new_si_prefixes_are_not_accepted():
    # 'R' (ronna) and 'Q' (quetta) would turn a schematic's '33R' into 3.3e28.
    assert parse("33R", "Ω") == 33.0
    with pytest.raises(UnitError):
        parse("33 RF", "F")
    with pytest.raises(UnitError):
        parse("3 QHz", "Hz")


def test_types_that_are_not_quantities():
    for value in (True, None, [1], {"value": "8 pF"}):
        with pytest.raises(UnitError):
            parse(value, "F")


def test_unknown_expected_unit_is_a_programming_error():
    with pytest.raises(ValueError, match="unknown expected unit"):
        parse("1 F", "furlong")


# --- thresholds -------------------------------------------------------------------------

def test_relative_threshold_scalar_and_array():
    vdd = np.array([1.8, 3.3, 5.0])
    th = parse_threshold("0.7 VDD")
    assert th == Threshold(0.7, 0.0, "0.7 VDD")
    # published: UM10204 rev. 6, table 9: VIH min = 0.7·VDD; 2.31 V at 3.3 V derived from it
    assert th.resolve(3.3) == pytest.approx(2.31, abs=1e-12)
    np.testing.assert_allclose(th.resolve(vdd), [1.26, 2.31, 3.5], atol=1e-12)
    assert isinstance(th.resolve(vdd), np.ndarray)


def test_supply_minus_offset_threshold():
    th = parse_threshold("VDD - 0.4 V")
    assert (th.scale, th.offset) == (1.0, pytest.approx(-0.4, abs=1e-15))
    assert th.resolve(3.3) == pytest.approx(2.9, abs=1e-12)  # derived from 3.3 V - 0.4 V
    np.testing.assert_allclose(th.resolve(np.array([1.8, 5.0])), [1.4, 4.6], atol=1e-12)


def test_absolute_threshold_against_an_array():
    th = parse_threshold("2.0 V")
    assert not th.relative
    assert th.resolve(3.3) == 2.0
    np.testing.assert_array_equal(th.resolve(np.array([3.0, 3.6])), [2.0, 2.0])


@pytest.mark.parametrize(("text", "scale", "offset"), [
    ("VDD + 0.5 V", 1.0, 0.5), ("70 % VDD", 0.7, 0.0), ("0.3*VDD", 0.3, 0.0),
    ("-0.3 V", 0.0, -0.3), ("0.5 VDD - 100 mV", 0.5, -0.1), ("vdd", 1.0, 0.0),
    ("1e-1 VDD", 0.1, 0.0),
])
def test_threshold_forms(text, scale, offset):
    th = parse_threshold(text)
    assert th.scale == pytest.approx(scale, abs=1e-12)
    assert th.offset == pytest.approx(offset, abs=1e-12)


@pytest.mark.parametrize("text", ["0.7 VCC", "0.7", "2 A", "VDD -", "", "1e400 VDD", 0.7, None])
def test_bad_thresholds(text):
    with pytest.raises(UnitError):
        parse_threshold(text, field="v_ih")


# --- formatting -------------------------------------------------------------------------

@pytest.mark.parametrize(("value", "unit", "text"), [
    (2200.0, "Ω", "2.2 kΩ"),  # the examples of SI formatting (common practice)
    (1.12e-10, "F", "112 pF"),
    (2.1349e-6, "s", "2.13 µs"),
    (3.3, "V", "3.3 V"),
    (0.0, "F", "0 F"),
    (0.05, "%", "5 %"),
    (1.1e-10, "F/m", "1.1 pF/cm"),  # derived from 1.1 pF/cm = 1.1e-10 F/m
])
def test_format_si(value, unit, text):
    assert format_si(value, unit) == text


def test_format_si_round_trips_through_parse():
    for value, unit in [(4700.0, "Ω"), (1.5e-12, "F"), (2.5e-9, "s"), (400e3, "Hz")]:
        assert parse(format_si(value, unit), unit) == pytest.approx(value, rel=1e-3)


def test_format_si_special_values():
    assert format_si(None, "V") == "—"
    assert format_si(True, "") == "yes"
    assert "inf" in format_si(float("inf"), "s")


@pytest.mark.parametrize("value, text", [
    # a unitless ratio carries three significant digits, as format_si gives every value
    # with a unit (common practice, no source); once "0.07821", "0.8473"
    (0.0782129, "0.0782"),   # invented: a delay-to-edge ratio
    (0.8472979, "0.847"),    # derived: ln(0.7/0.3), the rise factor k
    (-0.0348, "-0.0348"),    # invented: a far-end coupling coefficient
    (2.0, "2"),
    (12.0, "12"),
    (1234.0, "1234"),        # a count of a thousand or more whole, never "1.23e+03"
    (-25000.4, "-25000"),
    (0.0, "0"),
])
def test_format_value_of_a_ratio(value, text):
    assert format_value(value, "") == text


# --- fuzz: any text gives a float or a UnitError, never another exception --------------

_ALPHABET = st.sampled_from(list("0123456789.eE+-  kKmMunpµμfaGTRΩΩ%/·*×") +
                            ["ohm", "VDD", "vdd", "V", "F", "Hz", "s", "A", "cm", "in", "mil",
                             "nan", "inf", "1e400", "e-", "\t", "\n"])
_TEXT = st.one_of(st.text(), st.lists(_ALPHABET, max_size=12).map("".join))
_OTHER = st.one_of(st.none(), st.booleans(), st.integers(), st.floats(allow_nan=True),
                   st.lists(st.integers(), max_size=2), st.dictionaries(st.text(), st.text()))


@settings(max_examples=400, deadline=None)
@given(text=st.one_of(_TEXT, _OTHER), unit=st.sampled_from(sorted(UNITS)))
def test_fuzz_parse(text, unit):
    try:
        value = parse(text, unit, field="f")
    except UnitError as err:
        assert err.field == "f"
        return
    assert isinstance(value, float) and math.isfinite(value)


@settings(max_examples=400, deadline=None)
@given(text=st.one_of(_TEXT, _OTHER))
def test_fuzz_parse_threshold(text):
    try:
        th = parse_threshold(text, field="v_il")
    except UnitError:
        return
    assert math.isfinite(th.scale) and math.isfinite(th.offset)
    assert math.isfinite(float(th.resolve(3.3)))


def test_both_ohm_characters_are_accepted():
    # published: Unicode 15, U+2126 OHM SIGN is canonically equivalent to U+03A9 (Omega)
    assert parse("4.7 k\u2126", "Ω") == parse("4.7 k\u03a9", "Ω") == 4700.0


def _quantiphy_text(value: float, unit: str, digits: int) -> str:
    """quantiphy's rendering with the options format_si follows: micro as the micro
    sign, trailing zeros stripped, a space between the number and the unit."""
    import re

    quantiphy = pytest.importorskip("quantiphy")

    class Shown(quantiphy.Quantity):
        pass

    Shown.set_prefs(map_sf=quantiphy.Quantity.map_sf_to_greek)
    text = Shown(value, unit).render(prec=digits - 1, strip_zeros=True)
    m = re.match(r"^([+-]?[\d.]+(?:e[+-]?\d+)?)\s*(.*)$", text)
    return f"{m.group(1)} {m.group(2)}".strip()


@settings(max_examples=400, deadline=None)
@given(mantissa=st.floats(1.0, 10.0, exclude_max=True), exponent=st.integers(-40, 40),
       negative=st.booleans(), unit=st.sampled_from(["F", "Ω", "s", "", "Hz", "V"]),
       digits=st.integers(1, 6))
def test_format_si_agrees_with_quantiphy(mantissa, exponent, negative, unit, digits):
    # quantiphy (PyPI) is the reference for SI-prefixed engineering notation: prefixes
    # from atto to tera, engineering exponents outside them.
    value = (-1.0 if negative else 1.0) * mantissa * 10.0 ** exponent
    assert format_si(value, unit, digits) == _quantiphy_text(value, unit, digits)


@pytest.mark.parametrize("value", [999.5, 999.96e12, 9.9996e-19, 1e-100, 5e-324,
                                   1.7976931348623157e308, 0.0015, 1234.0])
@pytest.mark.parametrize("digits", [1, 2, 3, 5])
def test_format_si_rounding_edges_agree_with_quantiphy(value, digits):
    # values that round up into the next prefix, and the ends of the float range
    assert format_si(value, "F", digits) == _quantiphy_text(value, "F", digits)


def test_range_text_says_whether_the_low_end_is_accepted():
    # common practice, no source: the words of the test applied, so a refused 0 Hz is
    # never inside the range an error states
    assert range_text(0.0, 100e9, "Hz", above=True) == "more than 0 Hz and at most 100 GHz"
    assert range_text(10e-6, 0.1, "m") == "at least 10 µm and at most 100 mm"
    assert range_text(None, 3, "") == "at most 3"
    assert range_text(1.0, 100.0) == "at least 1 and at most 100"
    assert range_text(0, 1, above=True, below=True) == "more than 0 and less than 1"


def test_a_refused_end_is_not_inside_the_stated_range():
    # a confidence of exactly 1 was refused with "expected between 0 and 1"
    from pinlib.core.errors import InputError
    from pinlib.studies.whatif import wilson_interval

    with pytest.raises(InputError) as info:
        wilson_interval(2, 4, confidence=1.0)
    assert info.value.expected == "more than 0 and less than 1"


@pytest.mark.parametrize("x, unit, field, units", [
    # common practice, no source: SPI clocks are written in MHz (1-100), I2C/SMBus clocks
    # in kHz (100-1000), pull-ups in kΩ, series resistors in Ω, traces in cm, cables in m,
    # board cross-sections in mm and copper in µm
    (20, "Hz", "clock", ("MHz", "kHz")),
    (1, "Hz", "clock", ("MHz", "kHz")),
    (400, "Hz", "clock", ("kHz", "MHz")),
    (4.7, "Ω", "pullup", ("kΩ", "Ω")),
    (22, "Ω", "series_resistor", ("Ω", "kΩ")),
    (9, "m", "length", ("cm", "mm")),
    (0.5, "m", "length", ("m", "cm")),
    (0.2, "m", "width", ("mm",)),
    (35, "m", "thickness", ("µm",)),
    (8, "F", "c_in", ("pF",)),
    (3.3, "V", "supply", ("V",)),
])
def test_a_bare_number_is_offered_its_likely_units(x, unit, field, units):
    assert likely_units(x, unit, field) == units
    with pytest.raises(UnitError) as info:
        parse(x, unit, field=field)
    assert f'"{x} {units[0]}"' in info.value.hint
    with pytest.raises(UnitError) as info:
        parse(str(x), unit, field=field)
    assert f'"{x} {units[0]}"' in info.value.hint


@pytest.mark.parametrize("x, unit, field, offered, not_offered", [
    # common practice, no source: a number that, read in a prefixed unit, is far beyond
    # any board value was written in the SI unit itself (as Python and spreadsheets
    # write it).  The hint offered "4700 kΩ", "400000 MHz", "2.5e-09 ns".
    (4700, "Ω", "pullup", ['"4.7 kΩ"'], ['"4700 kΩ"', '"4700 Ω"']),
    (400000, "Hz", "clock", ['"400 kHz"'], ["MHz", "400000"]),
    (25e6, "Hz", "clock", ['"25 MHz"'], ["25000000"]),
    (1000, "Hz", "clock", ['"1000 kHz"', '"1 kHz"'], ["1000 MHz"]),
    (1e-11, "F", "extra_capacitance", ['"10 pF"'], ["e-11"]),
    (2.5e-9, "s", "t_setup", ['"2.5 ns"'], ["e-09"]),
    (1e-10, "F/m", "capacitance", ['"1 pF/cm"'], ["e-10"]),
    (0.0002, "m", "width", ['"200 µm"'], ["0.0002 mm"]),
    (0.003, "A", "i_ol", ['"0.003 mA"', '"3 mA"'], []),
    # where both readings are board values, the likely units stay as they were
    (33, "Ω", "series_resistor", ['"33 Ω"', '"33 kΩ"'], []),
    (400, "Hz", "clock", ['"400 kHz"'], []),
])
def test_a_bare_number_in_the_si_unit_is_offered_as_such(x, unit, field, offered,
                                                         not_offered):
    for written in (x, str(x)):
        with pytest.raises(UnitError) as info:
            parse(written, unit, field=field)
        hint = info.value.hint
        assert all(o in hint for o in offered), hint
        assert not any(n in hint for n in not_offered), hint


@pytest.mark.parametrize("text, fixed", [("3V3", '"3.3 V"'), ("1V8", '"1.8 V"'),
                                         ("0V9", '"0.9 V"'), ("5V0", '"5.0 V"')])
def test_a_rail_written_with_its_unit_for_a_point_is_offered_as_a_value(text, fixed):
    # common practice, no source: rails are named 3V3, 1V8 on schematics; it read
    # "unknown unit 'V3'" with no hint
    with pytest.raises(UnitError) as info:
        parse(text, "V", field="supply")
    assert fixed in info.value.hint, info.value.hint


@pytest.mark.parametrize("text", ["±5 %", "+/-5%", "± 5 %", "+-5 %"])
def test_a_tolerance_written_with_its_plus_minus_is_offered_without_it(text):
    # common practice, no source: datasheets and BOMs write "±5 %"; a tolerance field is
    # already ± (docs/formats/design.md); it read "not a number with a unit", no hint
    with pytest.raises(UnitError) as info:
        parse(text, "%", field="supply_tolerance")
    assert info.value.hint == 'a tolerance is taken both ways: write "5 %" without the ±'


@pytest.mark.parametrize("text, field, hint", [
    ("4.7 kΩ ±1%", "bus[0].pullup",
     'a tolerance beside the value: write "4.7 kΩ", and the tolerance as pullup_tolerance'),
    ("3.3 V +/- 5 %", "bus[0].supply",
     'a tolerance beside the value: write "3.3 V", and the tolerance as supply_tolerance'),
    ("8 pF ±10%", "pins.sda.c_in",
     'a tolerance beside the value: write "8 pF", the limit in the direction that hurts'),
])
def test_a_value_with_its_tolerance_beside_it_is_told_where_each_goes(text, field, hint):
    # a BOM line's "4.7 kΩ ±1%" read "unknown unit 'kΩ ±1%'" with no hint
    with pytest.raises(UnitError) as info:
        parse(text, {"F": "F"}.get(text.split()[1][-1], text.split()[1][-1]), field=field)
    assert info.value.hint == hint


def test_a_prefix_without_its_unit_is_offered_in_the_prefix_s_own_case():
    # "4.7 K" was told to write "4.7 KΩ"
    with pytest.raises(UnitError) as info:
        parse("4.7 K", "Ω", field="pullup")
    assert '"4.7 kΩ"' in info.value.hint, info.value.hint


def test_a_bare_number_is_given_one_example_its_own():
    # '28' for a length: the hint writes the user's number with units, so the expected
    # part no longer adds the generic "(e.g. '14 cm')" beside it
    with pytest.raises(UnitError) as info:
        parse("28", "m", field="length")
    text = str(info.value)
    assert "expected a length in m;" in text and "e.g. '14 cm'" not in text
    assert text.count("e.g.") == 1 and '"28 cm"' in text
    # a text that is no number keeps the generic example
    with pytest.raises(UnitError) as info:
        parse("abc", "m", field="length")
    assert "e.g. '14 cm'" in str(info.value)


@pytest.mark.parametrize(("field", "example"), [
    ("width", "0.2 mm"), ("board.geometry.outer.width", "0.2 mm"), ("thickness", "35 µm"),
    ("spacing", "0.2 mm"), ("length", "14 cm")])
def test_a_length_is_given_an_example_of_its_kind(field, example):
    # common practice, no source: a trace is some tenths of a mm wide, copper 35 µm thick
    with pytest.raises(UnitError) as info:
        parse("abc", "m", field=field)
    assert f"e.g. '{example}'" in str(info.value)


def test_an_unknown_unit_is_echoed_as_written():
    # "5 pF pF" said "unknown unit 'pFpF'": the spaces the reader drops to match a unit
    # ("k Ω") are kept where it echoes one it does not know
    with pytest.raises(UnitError) as info:
        parse("5 pF pF", "F", field="pins.sda.c_in")
    assert "unknown unit 'pF pF'" in str(info.value), str(info.value)
    # spaces inside a unit still read; derived: 4.7 × 10^3 Ω
    assert parse("4.7 k Ω", "Ω") == pytest.approx(4700.0)
