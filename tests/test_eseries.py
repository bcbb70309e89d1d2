"""Tests of pinlib.core.eseries against IEC 60063 and the independent `eseries` package."""

from __future__ import annotations

import math

import eseries as ref  # independent implementation (PyPI `eseries`), test reference only
import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from pinlib.core import eseries as es
from pinlib.core.errors import InputError

# ---------------------------------------------------------------------------
# Published data
# ---------------------------------------------------------------------------

# published: IEC 60063, E24 series (docs/references.md: "E24: 1.0 ... 9.1 [C]", read in a
# stored copy of the primary document; docs/references.md records no edition/table number)
IEC60063_E24 = [
    1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0,
    3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1,
]  # fmt: skip

# derived from IEC 60063 E24 above: E12, E6, E3 are every 2nd / 4th / 8th value
# (docs/references.md, IEC 60063 section)
IEC60063_E12 = IEC60063_E24[::2]
IEC60063_E6 = IEC60063_E24[::4]
IEC60063_E3 = IEC60063_E24[::8]

# derived from round(10**(i/24), 1) vs the E24 table: the eight E24 values that the
# formula misses (docs/references.md [D])
E24_OFF_FORMULA = [2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 8.2]

REF_KEYS = {
    "E3": ref.E3, "E6": ref.E6, "E12": ref.E12, "E24": ref.E24,
    "E48": ref.E48, "E96": ref.E96, "E192": ref.E192,
}  # fmt: skip


# ---------------------------------------------------------------------------
# The tables
# ---------------------------------------------------------------------------


def test_e24_is_the_iec_table():
    # published: IEC 60063 E24 (docs/references.md [C]); values print to 0.1, exact floats
    assert es.series("E24").tolist() == IEC60063_E24


@pytest.mark.parametrize(
    "name, table",
    [("E12", IEC60063_E12), ("E6", IEC60063_E6), ("E3", IEC60063_E3)],
)
def test_e12_e6_e3_take_every_nth_e24_value(name, table):
    assert es.series(name).tolist() == table


def test_e3_e6_e12_spelled_out():
    # derived from IEC 60063 E24 (every 8th / 4th / 2nd value), typed out as a cross-check
    assert es.series("E3").tolist() == [1.0, 2.2, 4.7]
    assert es.series("E6").tolist() == [1.0, 1.5, 2.2, 3.3, 4.7, 6.8]
    assert es.series("E12").tolist() == [
        1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2,
    ]  # fmt: skip


def test_eight_e24_values_differ_from_the_formula():
    e24 = es.series("E24")
    formula = np.round(10.0 ** (np.arange(24) / 24), 1)
    differ = e24[~np.isclose(e24, formula, rtol=0, atol=1e-9)]
    # derived from round(10**(i/24), 1) (docs/references.md [D])
    assert differ.tolist() == E24_OFF_FORMULA


@pytest.mark.parametrize("name, n", [("E48", 48), ("E96", 96)])
def test_e48_e96_follow_the_formula_exactly(name, n):
    # derived from round(100 * 10**(i/N)) (docs/references.md [D])
    formula = np.round(100 * 10.0 ** (np.arange(n) / n)) / 100
    np.testing.assert_array_equal(es.series(name), formula)


def test_e192_has_the_single_920_exception():
    e192 = es.series("E192")
    formula = np.round(100 * 10.0 ** (np.arange(192) / 192)) / 100
    differ = np.nonzero(e192 != formula)[0]
    assert differ.tolist() == [185]
    # derived from round(100 * 10**(185/192)) = 919 (docs/references.md [D, C2])
    assert formula[185] == 9.19
    # published: IEC 60063 E192 prints 920 (docs/references.md [D, C2])
    assert e192[185] == 9.20


@pytest.mark.parametrize("name", es.SERIES_NAMES)
def test_tables_match_the_eseries_package(name):
    mant = np.array(ref.series(REF_KEYS[name]), dtype=float)
    # the package stores integers 10..91 or 100..988; ours are 1.0..9.88
    expected = mant / 10.0 ** (len(str(int(mant[0]))) - 1)
    np.testing.assert_array_equal(es.series(name), expected)


@pytest.mark.parametrize("name, size", [("E3", 3), ("E6", 6), ("E12", 12), ("E24", 24),
                                        ("E48", 48), ("E96", 96), ("E192", 192)])
def test_series_length_and_order(name, size):
    s = es.series(name)
    assert s.size == size
    assert s[0] == 1.0 and s[-1] < 10.0
    assert np.all(np.diff(s) > 0)


def test_series_returns_a_fresh_array():
    s = es.series("E6")
    s[0] = 99.0
    assert es.series("E6")[0] == 1.0


def test_names_are_case_insensitive():
    np.testing.assert_array_equal(es.series("e24"), es.series("E24"))
    assert es.above(" e96 ", 1.011) == es.above("E96", 1.011)


# ---------------------------------------------------------------------------
# values_in_range against the eseries package's erange
# ---------------------------------------------------------------------------


@pytest.mark.parametrize("name", es.SERIES_NAMES)
@pytest.mark.parametrize(
    "lo, hi",
    [(1e3, 1e4), (1.0, 1.0), (0.9, 1.1), (4.7e-12, 1e-9), (2345.0, 6789.0), (1e5, 3.3e7),
     (0.05, 0.05)],
)
def test_values_in_range_matches_erange(name, lo, hi):
    expected = list(ref.erange(REF_KEYS[name], lo, hi))
    assert es.values_in_range(name, lo, hi).tolist() == expected


def test_values_in_range_e24_one_decade():
    # published: IEC 60063 E24 (docs/references.md [C]), one decade plus its end point
    expected = [v * 1e3 for v in IEC60063_E24] + [1e4]
    np.testing.assert_allclose(es.values_in_range("E24", 1e3, 1e4), expected, rtol=1e-15)


def test_values_in_range_bounds_within_tolerance_are_included():
    lo = 4.7 * 1e-9 * (1 + 1e-12)  # 4.7 nF off by a rounding error
    vals = es.values_in_range("E12", lo, 6.8e-9 * (1 - 1e-12))
    assert vals.tolist() == [4.7e-9, 5.6e-9, 6.8e-9]


def _far_from_series(name: str, *xs: float) -> bool:
    """True when no x lies within 1e-8 (relative) of a series value."""
    for x in xs:
        lo, hi = es.below(name, x), es.above(name, x)
        if abs(x / lo - 1) < 1e-8 or abs(hi / x - 1) < 1e-8:
            return False
    return True


@settings(max_examples=150, deadline=None)
@given(
    name=st.sampled_from(es.SERIES_NAMES),
    lo=st.floats(1e-12, 1e9),
    ratio=st.floats(1.0, 1e3),
)
def test_values_in_range_matches_erange_random(name, lo, ratio):
    hi = lo * ratio
    assume(_far_from_series(name, lo, hi))
    expected = list(ref.erange(REF_KEYS[name], lo, hi))
    assert es.values_in_range(name, lo, hi).tolist() == expected


# ---------------------------------------------------------------------------
# Look-ups against the eseries package
# ---------------------------------------------------------------------------


def test_known_lookups_from_the_eseries_package():
    # published: eseries package README/recipe, find_nearest(E24, 2345) -> 2400
    # (RECIPES.md, eseries section)
    assert es.nearest("E24", 2345.0, how="linear") == 2400.0
    # published: docs/references.md, eseries "nearest" is linear: 1049 -> 1000
    assert es.nearest("E24", 1049.0, how="linear") == 1000.0
    assert ref.find_nearest(ref.E24, 1049) == 1000


def test_log_and_linear_nearest_differ_below_the_geometric_mean():
    # derived from sqrt(1000 * 1100) = 1048.81: 1049 is nearer 1100 by ratio
    assert es.nearest("E24", 1049.0) == 1100.0
    assert es.nearest("E24", 1048.0) == 1000.0
    # derived from (1000 + 1100) / 2 = 1050: a linear tie goes to the lower value,
    # as in the eseries package
    assert es.nearest("E24", 1050.0, how="linear") == 1000.0
    assert ref.find_nearest(ref.E24, 1050.0) == 1000.0


def test_small_bus_rounding_to_e6():
    # derived from docs/references.md small-bus check [D]: Rp(max) 23.76 kΩ and 79.21 kΩ
    # rounded down to E6 are 22 kΩ and 68 kΩ
    np.testing.assert_array_equal(es.below("E6", [23.76e3, 79.21e3]), [22e3, 68e3])


@settings(max_examples=300, deadline=None)
@given(name=st.sampled_from(es.SERIES_NAMES), x=st.floats(1e-12, 1e12))
def test_linear_nearest_matches_find_nearest(name, x):
    assume(_far_from_series(name, x))
    assert es.nearest(name, x, how="linear") == ref.find_nearest(REF_KEYS[name], x)


@settings(max_examples=300, deadline=None)
@given(name=st.sampled_from(es.SERIES_NAMES), x=st.floats(1e-12, 1e12))
def test_above_below_match_the_package(name, x):
    assume(_far_from_series(name, x))
    key = REF_KEYS[name]
    assert es.above(name, x) == ref.find_greater_than_or_equal(key, x)
    assert es.below(name, x) == ref.find_less_than_or_equal(key, x)


@pytest.mark.parametrize("name", es.SERIES_NAMES)
def test_every_series_value_returns_itself(name):
    # each value of three decades, given exactly and off by a relative 1e-12
    vals = es.values_in_range(name, 1e-3, 0.999)
    for x in (vals, vals * (1 + 1e-12), vals * (1 - 1e-12)):
        np.testing.assert_array_equal(es.above(name, x), vals)
        np.testing.assert_array_equal(es.below(name, x), vals)
        np.testing.assert_array_equal(es.nearest(name, x), vals)
        np.testing.assert_array_equal(es.nearest(name, x, how="linear"), vals)
    # the package agrees on the exact values
    key = REF_KEYS[name]
    assert [ref.find_nearest(key, v) for v in vals] == vals.tolist()


def test_decade_edges():
    assert es.above("E3", 4.71) == 10.0
    assert es.below("E3", 0.99) == 0.47
    assert es.below("E192", 0.9999) == 0.988
    assert es.above("E192", 9.881) == 10.0
    assert es.nearest("E24", 9.6) == 10.0  # 9.6/9.1 = 1.055 > 10/9.6 = 1.042


# ---------------------------------------------------------------------------
# Properties (custom, no external source)
# ---------------------------------------------------------------------------

xs = st.floats(1e-15, 1e15)


@settings(max_examples=300, deadline=None)
@given(name=st.sampled_from(es.SERIES_NAMES), x=xs)
def test_below_x_above(name, x):
    lo, hi = es.below(name, x), es.above(name, x)
    assert lo <= x * (1 + es.RTOL)
    assert hi >= x * (1 - es.RTOL)
    # no series value strictly between the two
    assert es.values_in_range(name, lo, hi).size <= 2


@settings(max_examples=300, deadline=None)
@given(name=st.sampled_from(es.SERIES_NAMES), x=xs, how=st.sampled_from(["log", "linear"]))
def test_nearest_is_below_or_above(name, x, how):
    v = es.nearest(name, x, how=how)
    assert v in (es.below(name, x), es.above(name, x))


@settings(max_examples=200, deadline=None)
@given(name=st.sampled_from(es.SERIES_NAMES), x=xs)
def test_log_nearest_minimises_the_ratio(name, x):
    lo, hi = es.below(name, x), es.above(name, x)
    v = es.nearest(name, x)
    ratio = max(v / x, x / v)
    assert ratio <= max(lo / x, x / lo) * (1 + 1e-15)
    assert ratio <= max(hi / x, x / hi) * (1 + 1e-15)


@settings(max_examples=100, deadline=None)
@given(
    name=st.sampled_from(es.SERIES_NAMES),
    x=st.lists(xs, min_size=1, max_size=20),
)
def test_array_equals_scalar_loop(name, x):
    arr = np.array(x)
    for func in (es.above, es.below, es.nearest):
        expected = [func(name, float(v)) for v in arr]
        np.testing.assert_array_equal(func(name, arr), expected)
    expected = [es.nearest(name, float(v), how="linear") for v in arr]
    np.testing.assert_array_equal(es.nearest(name, arr, how="linear"), expected)


def test_shapes_are_kept():
    x = np.array([[1.05, 2.0], [3.4e3, 7.9e-9]])
    for func in (es.above, es.below, es.nearest):
        assert func("E12", x).shape == (2, 2)
    scalar = es.nearest("E12", 3.4e3)
    assert np.ndim(scalar) == 0 and isinstance(scalar, float)
    assert scalar == 3.3e3


# ---------------------------------------------------------------------------
# Errors
# ---------------------------------------------------------------------------


@pytest.mark.parametrize("bad", ["E5", "E1000", "", "R10", None, 24])
def test_unknown_series_names_the_choices(bad):
    with pytest.raises(InputError, match=r"field 'name'.*E3, E6, E12, E24, E48, E96, E192"):
        es.series(bad)
    with pytest.raises(InputError, match="field 'name'"):
        es.above(bad, 1.0)


@pytest.mark.parametrize("bad", [0.0, -1.0, math.nan, math.inf, -math.inf, [1.0, -2.0], "x"])
@pytest.mark.parametrize("func", [es.above, es.below, es.nearest])
def test_bad_x_names_the_argument(func, bad):
    with pytest.raises(InputError, match="field 'x'.*positive finite"):
        func("E24", bad)


def test_bad_how():
    with pytest.raises(InputError, match=r"field 'how'.*\"log\" or \"linear\""):
        es.nearest("E24", 1.0, how="geometric")


def test_bad_range():
    with pytest.raises(InputError, match="field 'lo'"):
        es.values_in_range("E24", 10.0, 1.0)
    with pytest.raises(InputError, match="field 'lo'.*positive finite"):
        es.values_in_range("E24", 0.0, 1.0)
    with pytest.raises(InputError, match="field 'hi'.*positive finite"):
        es.values_in_range("E24", 1.0, math.inf)


def test_input_error_is_a_value_error():
    with pytest.raises(ValueError):
        es.above("E24", -1.0)


def test_products_with_rounding_error_round_to_themselves():
    # 4.7 * 1e-9 is 4.700000000000001e-09 in double precision; with exact comparison
    # the eseries package's find_greater_than_or_equal(E24, ...) returns 5.1e-09 here.
    # pinlib treats a relative 1e-9 as "on the value" (custom edge case, no source).
    x = 4.7 * 1e-9
    assert x != 4.7e-9
    assert es.above("E24", x) == 4.7e-9
    assert es.below("E24", 4.7e-9 * (1 - 1e-15)) == 4.7e-9
