"""Static-offset sides of bridging parts: the bridge-offset check's fix (what it asks of
the devices, the bridge named by its kind, no higher rail on an SMBus segment, whose
levels are fixed) and bridge-offset-facing (one side's offset low against the facing
side's input threshold; a class's typical values warn, a datasheet's fail)."""

from __future__ import annotations

from pathlib import Path

import pytest
from test_opendrain import repeater_bus

from pinlib.engines import opendrain
from pinlib.model.design import load_design

PARTS = Path(__file__).parent / "data" / "parts"
HEAD = 'format = "pinlib.design/1"\ntitle = "bridge offsets (invented)"\n'


def _result(tmp_path, body: str, team: dict | None = None):
    folders = [PARTS]
    if team:
        folder = tmp_path / "team"
        folder.mkdir(exist_ok=True)
        for name, text in team.items():
            (folder / f"{name}.toml").write_text(text, encoding="utf-8")
        folders.append(folder)
    path = tmp_path / "d.toml"
    path.write_text(HEAD + body, encoding="utf-8")
    d = load_design(path, library_folders=folders)
    return opendrain.evaluate_bus(d.buses[0], d)


def facing_bus(part: str = "t-repeater", protocol: str = "i2c", mode: str = "fast",
               far: str = "t-target", other: str | None = None) -> str:
    """Two repeaters whose offset sides (b) share the middle segment (invented): U5 of
    ``part``, U6 of ``other`` (else ``part`` too)."""
    other = other or part
    return f"""
[[bus]]
id = "r"
protocol = "{protocol}"
mode = "{mode}"

[[bus.segment]]
id = "one"
supply = "3.3 V"
devices = [
  {{ ref = "U1", part = "t-ctrl-3v3", role = "controller" }},
  {{ ref = "U5", part = "{part}", side = "a" }},
]

[[bus.segment]]
id = "mid"
supply = "3.3 V"
devices = [
  {{ ref = "U5", part = "{part}", side = "b" }},
  {{ ref = "U6", part = "{other}", side = "b" }},
]

[[bus.segment]]
id = "two"
supply = "3.3 V"
devices = [
  {{ ref = "U6", part = "{other}", side = "a" }},
  {{ ref = "U2", part = "{far}" }},
]
"""


# ------------------------------------------------------------------ bridge-offset's fix

def test_the_fix_asks_for_a_vil_above_the_offset_and_names_the_bridges_kind(tmp_path):
    # t-repeater's 0.6 V offset low (invented) against VIL 0.3 · 1.71 V = 0.513 V of a
    # 1.8 V target: every device on that side must read 0.6 V as low, so it needs a VIL
    # above 0.6 V; 0.3·VDD reaches 0.6 V at 2 V (derived: 0.6 V / 0.3)
    res = _result(tmp_path, repeater_bus("t-sensor-1v8", "1.8 V"))
    chk = res.segments[1].check("bridge-offset")
    assert chk.status == "fail"
    assert "whose VIL is above 600 mV" in chk.fix
    assert "VIL below" not in chk.fix
    assert "turn the repeater" in chk.fix
    assert "0.3·VDD on a rail above 2 V" in chk.fix


ISOLATOR = """format = "pinlib.part/1"
id = "t-isolator-offset"
title = "Test isolator with a static low offset on side b (invented)"
category = "isolator"
extends = "t-repeater"
provenance = { basis = "datasheet", source = "test data, invented" }

[bridge]
kind = "isolator"
low_offset_side = "b"

[sides.b]
supply = { min = "2.3 V", max = "5.5 V" }
low_offset = "0.85 V"
"""


@pytest.mark.parametrize("kind, part, offset", [("repeater", "t-repeater", "600 mV"),
                                                ("isolator", "t-isolator-offset", "850 mV")])
def test_on_smbus_the_fix_offers_no_higher_rail(tmp_path, kind, part, offset):
    # SMBus levels are fixed (SMBus 3.1: VIL 0.8 V, whatever the rail): a 1.8 V target
    # with I2C levels (0.3·VDD, invented t-sensor-1v8) on the offset side fails, and the
    # fix offers no rail that would raise a VIL.  0.6 V is under SMBus's 0.8 V: devices
    # with SMBus levels read it; 0.85 V is above it: none is sure to
    body = repeater_bus("t-sensor-1v8", "1.8 V").replace('"i2c"', '"smbus"').replace(
        '"fast"', '"100k"').replace("t-repeater", part)
    res = _result(tmp_path, body, {part: ISOLATOR} if kind == "isolator" else None)
    chk = res.segments[1].check("bridge-offset")
    assert chk.status == "fail"
    assert "VDD" not in chk.fix and "rail" not in chk.fix
    assert f"the {kind}" in chk.fix
    assert "repeater" not in chk.fix or kind == "repeater"
    if kind == "repeater":
        assert "SMBus levels there (VIL 800 mV)" in chk.fix  # published: SMBus 3.1, VIL
    else:
        assert "sure to read a low only below 800 mV" in chk.fix
        assert f"whose VIL is above {offset}" in chk.fix


# ------------------------------------------------------------ bridge-offset-facing

def test_two_offset_sides_facing_fail_where_neither_reads_the_others_low(tmp_path):
    # t-repeater (invented, basis datasheet): offset low 0.6 V, side b VIL 0.4 V: each
    # reads a low only below 0.4 V, so neither reads the other's 0.6 V as low and a low
    # does not pass; the bus does not lock
    res = _result(tmp_path, facing_bus())
    chk = res.segments[1].check("bridge-offset-facing")
    assert chk.status == "fail"
    assert "neither reads the other's offset low as a low" in chk.message
    assert "does not pass" in chk.message and "locks" not in chk.message
    assert chk.source.startswith("U5 side b's offset low against U6 side b's VIL: "
                                 "t-repeater sides.b.low_offset")
    assert "VIL from t-repeater sides.b.pins.sda.v_il" in chk.source
    assert "common practice" not in chk.source
    assert "limit_basis" not in chk.details


#: A side b that reads a low below 0.7 V, above its 0.6 V offset (invented test data).
HIGH_VIL = {"t-repeater-high-vil": """format = "pinlib.part/1"
id = "t-repeater-high-vil"
title = "Test repeater reading its side b low below 0.7 V (invented)"
category = "buffer"
extends = "t-repeater"
provenance = { basis = "datasheet", source = "test data, invented" }

[sides.b.pins.sda]
v_il = "0.7 V"

[sides.b.pins.scl]
v_il = "0.7 V"
"""}


def test_two_offset_sides_that_read_each_others_low_lock_the_bus(tmp_path):
    # a side b that reads below 0.7 V (HIGH_VIL, above the 0.6 V offset): each reads
    # the other's offset low as a driven low and holds it
    res = _result(tmp_path, facing_bus("t-repeater-high-vil"), HIGH_VIL)
    chk = res.segments[1].check("bridge-offset-facing")
    assert chk.status == "fail"
    assert "each reads the other's offset low as a driven low" in chk.message
    assert "the bus locks low" in chk.message


def test_facing_sides_of_a_class_warn_and_name_the_basis(tmp_path):
    # the built-in i2c-repeater's offset (0.6 V) and side b VIL (0.4 V) are typical of
    # its class (basis generic): the same comparison warns where it would fail
    body = facing_bus("i2c-repeater", "smbus", "100k", "battery-gauge-smbus")
    res = _result(tmp_path, body.replace("t-ctrl-3v3", "mcu-3v3"))
    chk = res.segments[1].check("bridge-offset-facing")
    assert chk.status == "warn"
    assert chk.details["limit_basis"] == "generic"
    assert "does not pass" in chk.message
    assert "i2c-repeater sides.b.low_offset" in chk.source
    assert "recording the part's low_offset and VIL makes it firm" in chk.message
