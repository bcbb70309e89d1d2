"""power-off: a device on a switched rail whose bus pins are not power-off tolerant.  It
fails only where a firm statement (a datasheet's, a measurement's, a published one; a
plain value in a datasheet's file) says the pins are not tolerant; where the part states
no off_tolerant, or a class's typical value or an estimate states it, it warns and asks
for the datasheet's value."""

from __future__ import annotations

import pytest
from test_bridge_offset import _result
from test_opendrain import one_bus

DEVICES = ['{ ref = "U1", part = "t-ctrl-3v3", role = "controller" }',
           '{ ref = "U2", part = "PART", switched = true }']


def team_target(basis: str, value: str | None) -> dict:
    """A team part extending t-target (invented) whose file, of ``basis``, states
    ``off_tolerant = value`` on both bus pins (none where ``value`` is None)."""
    body = "" if value is None else (f"\n[pins.sda]\noff_tolerant = {value}\n"
                                     f"\n[pins.scl]\noff_tolerant = {value}\n")
    return {"t-target-team": f"""format = "pinlib.part/1"
id = "t-target-team"
title = "Test target (invented)"
category = "sensor"
extends = "t-target"
provenance = {{ basis = "{basis}", source = "test data, invented" }}
{body}"""}


def power_off(tmp_path, part: str, team: dict | None = None):
    devices = [d.replace("PART", part) for d in DEVICES]
    res = _result(tmp_path, one_bus(pullup="2.2 kΩ", devices=devices), team)
    return res.check("power-off")


@pytest.mark.parametrize("basis, want", [("datasheet", "fail"), ("measured", "fail"),
                                         ("published", "fail"), ("generic", "warn"),
                                         ("estimate", "warn")])
def test_a_stated_false_fails_only_on_a_firm_basis(tmp_path, basis, want):
    chk = power_off(tmp_path, "t-target-team", team_target(basis, "false"))
    assert chk.status == want
    assert "t-target-team pins.sda.off_tolerant = false" in chk.source
    assert f"({basis}: test data, invented)" in chk.source
    if want == "warn":
        assert chk.details["limit_basis"] == basis
        assert "recording the part's off_tolerant makes it firm" in chk.message
    else:
        assert "limit_basis" not in chk.details


def test_an_unstated_off_tolerant_warns_and_asks_for_the_datasheets_value(tmp_path):
    # t-target's file (basis datasheet, invented) states no off_tolerant: the schema's
    # false is a default, not a statement; the clamps are a rule of thumb
    for part, team in (("t-target", None), ("t-target-team", team_target("datasheet", None))):
        chk = power_off(tmp_path, part, team)
        assert chk.status == "warn", part
        assert chk.details.get("rule_of_thumb") is True
        assert f"{part} states no pins.sda.off_tolerant, pins.scl.off_tolerant" in chk.message
        assert "record the datasheet's value there" in chk.message
        assert chk.source.startswith(f"{part} pins.sda.off_tolerant, pins.scl.off_tolerant: "
                                     "not stated; common practice, no source")


def test_a_stated_true_passes(tmp_path):
    chk = power_off(tmp_path, "t-target-team", team_target("generic", "true"))
    assert chk.status == "pass"


def test_the_built_in_switched_gauge_warns(tmp_path):
    # battery-gauge-smbus (a built-in class) states no off_tolerant: a warning
    body = one_bus(pullup="2.2 kΩ", protocol="smbus", mode="100k", devices=[
        '{ ref = "U1", part = "mcu-3v3", role = "controller" }',
        '{ ref = "U2", part = "battery-gauge-smbus", switched = true }'])
    chk = _result(tmp_path, body).check("power-off")
    assert chk.status == "warn"
    assert "battery-gauge-smbus states no pins.sda.off_tolerant" in chk.message
