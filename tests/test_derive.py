"""Derived values listed by the library: output resistance bounds from stated levels."""

from __future__ import annotations

import pytest

from pinlib.cli import main
from pinlib.library.derive import derived_values
from pinlib.library.loader import load_library

PART = """\
format = "pinlib.part/1"
id = "t-lvttl-out"
title = "test part with LVTTL-style output levels"
category = "logic"
supply = { min = "3.0 V", max = "3.6 V" }

[pins.out]
function = "gpio"
drive = "push-pull"
c_in = "5 pF"
v_oh = "2.4 V"
i_oh = "2 mA"
v_ol = "0.4 V"
i_ol = "2 mA"

[pins.odr]
function = "gpio"
drive = "open-drain"
v_ol = "0.4 V"
i_ol = "3 mA"

[pins.fixed]
function = "gpio"
drive = "push-pull"
r_out = "25 Ω"
v_ol = "0.4 V"
i_ol = "2 mA"
"""


@pytest.fixture()
def part(tmp_path):
    (tmp_path / "t.toml").write_text(PART, encoding="utf-8")
    lib = load_library([tmp_path], builtin=False, env=False, strict=True)
    return lib.get("t-lvttl-out"), tmp_path


def test_output_resistance_from_levels(part):
    p, _ = part
    d = derived_values(p)
    # from memory: JESD8C.01 LVTTL, VOH 2.4 V at -2 mA, VOL 0.4 V at 2 mA (docs/references.md [M]);
    # derived from Ohm's law at VDD min 3.0 V: (3.0 - 2.4) / 2 mA and 0.4 / 2 mA
    assert d["pins.out.r_out_rise"].value == pytest.approx(300.0, rel=1e-12)
    assert d["pins.out.r_out_fall"].value == pytest.approx(200.0, rel=1e-12)
    # published: UM10204 rev. 6 table 9, VOL 0.4 V at IOL 3 mA -> 133.3 ohm sink (derived)
    assert d["pins.odr.r_sink"].value == pytest.approx(133.33, abs=0.01)
    assert all(v.basis == "derived" and v.derived for v in d.values())
    # a stated r_out is never overridden by a derived one
    assert not any(k.startswith("pins.fixed.") for k in d)


def test_parts_show_lists_derived_values(part, capsys):
    _, folder = part
    assert main(["parts", "show", "t-lvttl-out", "--library", str(folder)]) == 0
    out = capsys.readouterr().out
    assert "pins.out.r_out_rise" in out and "[derived]" in out
    assert "(VDD - v_oh) / i_oh" in out


def test_derivation_text_reads_as_the_formula(tmp_path):
    # reproducer: VOH written relative to the rail read "(VDD - VDD - 0.4 V) / 8 mA"
    text = PART.replace('v_oh = "2.4 V"', 'v_oh = "VDD - 0.4 V"').replace(
        'i_oh = "2 mA"', 'i_oh = "8 mA"')
    (tmp_path / "t.toml").write_text(text, encoding="utf-8")
    p = load_library([tmp_path], builtin=False, env=False, strict=True).get("t-lvttl-out")
    d = derived_values(p)["pins.out.r_out_rise"]
    assert "(VDD - (VDD - 0.4 V)) / 8 mA" in d.source
    # derived from Ohm's law: (VDD − (VDD − 0.4 V)) / 8 mA = 50 Ω
    assert d.value == pytest.approx(50.0, rel=1e-9)
    # a plain level keeps its text: (VDD - 2.4 V), as before
    assert "(VDD - 2.4 V) / 2 mA" in derived_values(part_of(tmp_path))["pins.out.r_out_rise"].source


def part_of(tmp_path):
    folder = tmp_path / "plain"
    folder.mkdir()
    (folder / "t.toml").write_text(PART, encoding="utf-8")
    return load_library([folder], builtin=False, env=False, strict=True).get("t-lvttl-out")


def test_a_level_below_ground_at_the_minimum_supply_derives_no_resistance(tmp_path):
    # VDD - 3.2 V is -0.2 V at the part's 3.0 V minimum: no sink resistance to show
    # (a negative "r_sink -67 Ω" was listed); the plausibility warning says where
    text = PART.replace('drive = "open-drain"\nv_ol = "0.4 V"',
                        'drive = "open-drain"\nv_ol = "VDD - 3.2 V"')
    (tmp_path / "t.toml").write_text(text, encoding="utf-8")
    p = load_library([tmp_path], builtin=False, env=False, strict=True).get("t-lvttl-out")
    assert "pins.odr.r_sink" not in derived_values(p)
    assert derived_values(p)["pins.out.r_out_fall"].value == pytest.approx(200.0)


TEAM_OD = """\
format = "pinlib.part/1"
id = "t-eeprom-rel"
title = "Invented EEPROM with a low level written against the supply (test data)"
category = "memory"
extends = "eeprom-i2c"
provenance = { basis = "datasheet", source = "invented" }

[pins.sda]
v_ol = "VDD - 2.9 V"
"""

OD_DESIGN = """\
format = "pinlib.design/1"
title = "low level below ground (invented)"

[[bus]]
id = "i2c0"
protocol = "i2c"
mode = "fast"
clock = "400 kHz"
supply = "1.8 V"
pullup = "auto"
trace = { length = "5 cm", capacitance = "1 pF/cm" }
devices = [
  { ref = "U1", part = "mcu-1v8", role = "controller" },
  { ref = "U2", part = "t-eeprom-rel" },
]
"""


def test_a_low_level_below_ground_at_the_bus_rail_is_refused_at_its_part_line(
        tmp_path, monkeypatch, capsys):
    # VDD - 2.9 V is 0.4 V at 3.3 V but -1.1 V on a 1.8 V bus: a physical impossibility,
    # refused naming the part file's line (the engine met it as "array([0.36, -1.1])")
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    (tmp_path / "t-eeprom-rel.toml").write_text(TEAM_OD, encoding="utf-8")
    (tmp_path / "d.toml").write_text(OD_DESIGN, encoding="utf-8")
    assert main(["check", str(tmp_path / "d.toml"), "--library", str(tmp_path)]) != 0
    err = capsys.readouterr().err
    last = " ".join(err.split())  # a terminal may wrap it
    assert "t-eeprom-rel.toml:9, field 'pins.sda.v_ol'" in last
    assert "below ground" in last and "-1.1 V at VDD 1.8 V" in last
    assert "array(" not in err and "Traceback" not in err
