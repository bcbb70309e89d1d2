"""The open-drain engine at the edges of physics and of the standards' ranges: a line
the sink cannot pull down (no fall time, said in words, never ``inf``), a high level the
leakage would drop below ground (held at 0 V), and an SMBus clock below fSMB's minimum."""

from __future__ import annotations

import pytest
from test_opendrain import bus_result, fig, one_bus

from pinlib.present.report import problem_line

# --------------------------------------------------------------------- high level


@pytest.mark.parametrize("pullup", ["1 GΩ", "4.7 MΩ"])
def test_leakage_holds_the_high_level_at_ground_not_below(tmp_path, pullup):
    # derived: two pins of 1 µA (test data, invented) through 4.7 MΩ drop 9.4 V, through
    # 1 GΩ 2 kV, both more than the 3.3 V rail; the pins sink the leakage to ground and
    # cannot pull the line below it: the level is 0 V, the check fails
    res = bus_result(tmp_path, one_bus(pullup=pullup))
    assert fig(res, "v_oh") == 0.0
    chk = res.check("v-oh")
    assert chk.status == "fail" and chk.value == 0.0
    assert "pulls the line to ground" in chk.message
    assert "-" not in problem_line(res, None, "sda", chk).split("VOH")[1].split(",")[0]


def test_a_high_level_above_ground_is_worded_as_before(tmp_path):
    res = bus_result(tmp_path, one_bus(pullup="10 kΩ"))
    assert "leakage ×" in res.check("v-oh").message
    assert "ground" not in res.check("v-oh").message
