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
