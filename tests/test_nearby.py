"""pinlib.core.nearby: the names offered for a misspelt one."""

from pinlib.core import nearby


# the expected names follow difflib's ratio of matching characters (the cutoffs are
# pinlib's own): common practice, no source
def test_closest_names_the_near_misses_best_first():
    names = ["c_in", "leakage", "v_il", "v_ih", "v_ol"]
    assert nearby.closest("v_iil", names)[0] == "v_il"
    assert nearby.closest("zzzz", names) == []
    assert nearby.closest("v_i", names, n=1) == ["v_il"]


def test_closest_hint_is_none_when_nothing_is_close():
    assert nearby.closest_hint("leakge", ["leakage", "c_in"]) == "closest: leakage"
    assert nearby.closest_hint("qqqq", ["leakage", "c_in"]) is None
    # a looser cutoff admits a weaker match
    assert nearby.closest_hint("cap", ["c_in"], cutoff=0.4) is None
    assert nearby.closest_hint("cin", ["c_in"], cutoff=0.4) == "closest: c_in"


def test_letter_case_does_not_count_against_a_name():
    # invented test design: "EEPROM-I2C" (the part's id in capitals) found nothing close,
    # where "eeprom-i2cc" found eeprom-i2c; names come back as written
    names = ["eeprom-i2c", "rtc-i2c", "adc-i2c", "Mixed-Case"]
    assert nearby.closest("EEPROM-I2C", names)[0] == "eeprom-i2c"
    assert nearby.closest("mixed-case", names) == ["Mixed-Case"]
    assert nearby.closest_hint("V_IL", ["v_il", "leakage"]) == "closest: v_il"
    # two names alike but for case are both offered, up to n in all
    assert nearby.closest("ab", ["AB", "ab", "Ab", "abc"], n=3) == ["AB", "ab", "Ab"]
