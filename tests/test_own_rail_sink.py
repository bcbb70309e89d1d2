"""A driver on its own rail (``supply = ...`` on the device) whose sink point is relative
to that rail (VOL2 = 0.2·VDD) is taken at each check's own worst end of it: the highest
low level (v-ol, fall time) at the top of the rail, the most current (sink-current) and
the largest Rp(min) (pullup-window) at the bottom, where its VOL/IOL resistance is
smallest.  The engine, its corners and the candidate batch agree."""

from __future__ import annotations

import pytest
from test_candidates import assert_same_ranking

from pinlib.engines.dispatch import check_design
from pinlib.model.design import load_design
from pinlib.studies import candidates as cand
from pinlib.studies import whatif

DESIGN = """format = "pinlib.design/1"
title = "a 1.8 V controller on a 5 V SMBus, pull-up at the edge (invented)"
[[bus]]
id = "pm"
protocol = "smbus"
mode = "100k"
supply = "5 V"
supply_tolerance = "5 %"
pullup = "2.47 kΩ"
trace = { length = "10 cm", capacitance = "1 pF/cm" }
devices = [
  { ref = "U1", part = "mcu-1v8", role = "controller", supply = "1.8 V" },
  { ref = "U2", part = "battery-gauge-smbus" },
]
"""

V_MAX = 5.0 * 1.05      # invented test data: the 5 V rail at +5 %
RP_LO = 2470.0 * 0.99   # invented test data: the pull-up at −1 % (the default tolerance)
# published: UM10204 rev. 6, table 9, VOL2 = 0.2·VDD at 2 mA (mcu-1v8's sink point),
# at the bottom of its own 1.8 V ± 5 % rail (invented test data)
VOL_LOW, IOL = 0.2 * 1.8 * 0.95, 2e-3


def _design(tmp_path):
    path = tmp_path / "d.toml"
    path.write_text(DESIGN, encoding="utf-8")
    return load_design(path)


def _checks(design, id_: str):
    res = check_design(design).buses[0]
    return [c for c in res.checks if c.id == id_]


def test_sink_current_and_rp_min_at_the_bottom_of_the_drivers_own_rail(tmp_path):
    d = _design(tmp_path)
    # derived: I = V / (Rp + VOL/IOL) = 5.25 V / (2445.3 Ω + 171 Ω) = 2.0066 mA > 2 mA
    i = V_MAX / (RP_LO + VOL_LOW / IOL)
    sink = [c for c in _checks(d, "sink-current") if c.subject == "SDA U1"][0]
    assert sink.value == pytest.approx(i, rel=1e-9)
    assert sink.margin == pytest.approx(1 - i / IOL, rel=1e-9) and sink.margin < 0
    assert sink.status == "fail"  # mcu-1v8's IOL is published (UM10204 table 9)
    assert "342 mV" in sink.message and "rail at its minimum" in sink.message
    # derived: UM10204 rev. 6 §7.1 eq. 2, Rp(min) = (5.25 V − 0.342 V) / 2 mA = 2454 Ω
    win = [c for c in _checks(d, "pullup-window") if c.subject == "SDA"][0]
    assert win.details["rp_min"] == pytest.approx((V_MAX - VOL_LOW) / IOL, rel=1e-9)
    assert win.status == "fail"
    # the bus's low level stays at the top of its rail: 0.2 · 1.89 V through the divider
    vol = [c for c in _checks(d, "v-ol") if c.subject.startswith("SDA")][0]
    r_hi = 0.2 * 1.8 * 1.05 / IOL  # derived: VOL/IOL at the top of U1's rail
    assert vol.value == pytest.approx(V_MAX * r_hi / (RP_LO + r_hi), rel=1e-9)


def test_corners_leave_the_engines_statuses_and_margins_unchanged(tmp_path):
    d = _design(tmp_path)
    nominal = {(c.id, c.subject): c for c in check_design(d).buses[0].checks}
    cr = whatif.corners(d)
    for id_, subject in (("sink-current", "SDA U1"), ("pullup-window", "SDA")):
        got = cr.find("pm", id_, "SDA")
        engine = nominal[id_, subject]
        assert got.status == engine.status == "fail", id_
        assert got.margin == pytest.approx(engine.margin, rel=1e-9), id_
        assert ("rail 1.8 V", "−") in [(n, e) for n, e, _ in got.corner], id_


def test_the_candidate_batch_takes_the_same_ends(tmp_path):
    d = _design(tmp_path)
    ranking = cand.rank_candidates(d, "U2")
    assert_same_ranking(ranking, cand.rank_candidates_slow(d, "U2"))
    assert ranking.candidate("battery-gauge-smbus").status == "fail"
