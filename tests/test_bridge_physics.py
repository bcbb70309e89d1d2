"""The physics at bridging parts the engine must not miss: a pass-transistor translator
fitted backwards (its body diode joins the rails), and a line held low only by a
static-offset side (it sits at the offset)."""

from __future__ import annotations

import pytest

from pinlib.core import messages as M
from pinlib.engines import opendrain
from pinlib.model.design import load_design
from tests.fixdesigns import host_to_5v_smbus


def _result(tmp_path, host: str, pack: str, own: str = ""):
    # a 3.3 V host and a 5 V SMBus segment joined by the library's two-MOSFET
    # translator, its sides placed as given (tests/fixdesigns.py, invented test data)
    path = tmp_path / "d.toml"
    path.write_text(host_to_5v_smbus(host_side=host, pack_side=pack, pack_own=own,
                                     title="MOSFET translator sides (invented test data)"),
                    encoding="utf-8")
    d = load_design(path)
    return opendrain.evaluate_bus(d.buses[0], d)


def _checks(res, id_: str) -> list:
    return [c for s in res.segments for c in s.checks if c.id == id_]


def test_a_translator_fitted_the_right_way_round_passes_its_sides(tmp_path):
    (chk,) = _checks(_result(tmp_path, "a", "b"), "bridge-gate-side")
    assert chk.status == "pass" and chk.subject == "Q1"


@pytest.mark.parametrize("own", ["", ', supply = "3.3 V"'])
def test_a_translator_fitted_backwards_fails_firm(tmp_path, own):
    """Side a (gate, source, body) on the 5 V segment, side b on the 3.3 V one: the body
    diode conducts from side a to side b (the audit's DC ngspice: side b held at 4.35 V,
    189 µA into the 3.3 V rail).  A rail of its own on side a (the old fix text's advice)
    does not move the transistor's terminals off the 5 V lines: it fails all the same."""
    res = _result(tmp_path, "b", "a", own)
    (chk,) = _checks(res, "bridge-gate-side")
    assert chk.status == "fail" and chk.subject == "Q1"
    assert chk.source == M.GATE_SIDE_SOURCE and chk.source.startswith("physics:")
    assert "body diode" in chk.message
    assert chk.fix == M.GATE_SIDE_FIX.format(ref="Q1", va="5 V", vb="3.3 V")
    assert "swap" in chk.fix
    assert res.segments[1].status == "fail"


def test_a_translator_sides_supply_range_fix_never_says_its_own_rail(tmp_path):
    """Side a on 5 V is outside side a's 1.65-3.6 V range: the fix must not send the user
    to a rail of its own on the device (which leaves it backwards), but to the sides."""
    res = _result(tmp_path, "b", "a")
    bad = [c for c in _checks(res, "supply-range") if c.status != "pass"]
    assert bad and all("Q1" in c.subject for c in bad)
    for c in bad:
        assert "supply =" not in c.fix
        assert c.fix == M.SUPPLY_RANGE_MOSFET_FIX.format(ref="Q1")


# --------------------------------------------------------------------------- offset sides

#: An isolator whose side a drives its low to a static offset (invented test data: the
#: audit's team part, its offset OFFSET)
ISOLATOR = """format = "pinlib.part/1"
id = "t-isolator-offset"
title = "I2C isolator with a static offset on side a (invented test data)"
category = "isolator"
provenance = { basis = "datasheet", source = "invented test data" }

[bridge]
kind = "isolator"

[sides.a]
supply = { min = "3.0 V", max = "5.5 V" }
low_offset = { value = "OFFSET", source = "invented test data" }
"""
for _side, _vil, _vol, _iol in (("a", "0.5 V", "OFFSET", "3.5 mA"),
                                ("b", "0.3 VDD", "0.4 V", "30 mA")):
    if _side == "b":
        ISOLATOR += '\n[sides.b]\nsupply = { min = "3.0 V", max = "5.5 V" }\n'
    for _sig in ("sda", "scl"):
        ISOLATOR += f"""
[sides.{_side}.pins.{_sig}]
function = "i2c-{_sig}"
drive = "open-drain"
c_in = "10 pF"
leakage = "10 µA"
v_il = "{_vil}"
v_ih = "0.7 VDD"
v_ol = "{_vol}"
i_ol = "{_iol}"
abs_max = "6 V"
"""

#: The controller on side b (3.3 V); the 5 V side a carries two SMBus devices (the
#: audit's scenario, invented test data)
ISOLATED = """format = "pinlib.design/1"
title = "Isolated SMBus with an offset side (invented test data)"
library = ["parts"]

[[bus]]
id = "psmb"
protocol = "smbus"
mode = "100k"

[[bus.segment]]
id = "cold-3v3"
supply = "3.3 V"
supply_tolerance = "5 %"
pullup = "3.3 kΩ"
trace = { length = "6 cm", capacitance = "1 pF/cm" }
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller" },
  { ref = "U9", part = "t-isolator-offset", side = "b" },
]

[[bus.segment]]
id = "hot-5v"
supply = "5 V"
supply_tolerance = "5 %"
pullup = "2.7 kΩ"
trace = { length = "10 cm", capacitance = "1 pF/cm" }
devices = [
  { ref = "U9", part = "t-isolator-offset", side = "a" },
  { ref = "U2", part = "battery-gauge-smbus" },
  { ref = "U3", part = "fan-controller-smbus" },
]
"""


def _isolated(tmp_path, offset: str):
    (tmp_path / "parts").mkdir(exist_ok=True)
    (tmp_path / "parts" / "t-isolator-offset.toml").write_text(
        ISOLATOR.replace("OFFSET", offset), encoding="utf-8")
    path = tmp_path / "d.toml"
    path.write_text(ISOLATED, encoding="utf-8")
    d = load_design(path)
    hot = opendrain.evaluate_bus(d.buses[0], d).segments[1]
    assert hot.id == "hot-5v"
    return hot


def _fall(seg, signal: str):
    return next(c for c in seg.checks if c.id == "fall-time" and c.subject == signal)


@pytest.mark.parametrize("offset", ["0.72 V", "0.85 V"])
def test_a_fall_end_below_the_offset_is_never_reached(tmp_path, offset):
    """SCL on the 5 V side is driven low only by the isolator's offset side: the line sits
    at the offset, above SMBus's 0.65 V fall end (published: SMBus specification version
    3.1, table 2 and its measuring points), so it has no fall time and fails with the
    reason (as a rise the leakage holds below its upper level)."""
    hot = _isolated(tmp_path, offset)
    for signal in ("SCL", "SDA"):  # SDA: U2 and U3 drive it too; the offset row is worst
        chk = _fall(hot, signal)
        assert chk.status == "fail" and chk.value is None and chk.margin is None
        assert chk.reason and "never falls to 650 mV" in chk.reason
        shown = {"0.72 V": "720 mV", "0.85 V": "850 mV"}[offset]
        assert f"holds its low at {shown}" in chk.reason
        assert chk.fix == M.FALL_OFFSET_FIX.format(v_lo="650 mV")


def test_the_offset_low_is_the_segments_low_level_and_noise_margin(tmp_path):
    """With the 0.85 V offset the low on the 5 V side sits at 0.85 V: the low-level figure
    says so, and the noise margin is the lowest VIL of the other pins (SMBus's 0.8 V of
    U2 and U3; published: SMBus specification 3.1, table 4, VIL max) less it: −50 mV."""
    hot = _isolated(tmp_path, "0.85 V")
    assert hot.figures["v_ol"].value == pytest.approx(0.85, abs=1e-12)
    assert hot.figures["noise_margin_low"].value == pytest.approx(0.8 - 0.85, abs=1e-12)


def test_an_offset_below_the_fall_end_keeps_its_fall_time(tmp_path):
    # invented test data: a 0.5 V offset, below the 0.65 V end: the fall is bounded
    hot = _isolated(tmp_path, "0.5 V")
    chk = _fall(hot, "SCL")
    assert chk.status == "pass" and chk.value is not None and chk.value > 0
    assert hot.figures["v_ol"].value == pytest.approx(0.5, abs=1e-12)


# --------------------------------------------------------------------------- gate threshold

#: A 1.8 V sensor behind a two-MOSFET translator on a 3.3 V bus (invented test data, as
#: the demo's sensor bus): the gate's 1.71 V at the rail's minimum less VGS(th) 1.5 V
#: joins the lines only below 0.21 V, where the sensor's sink (2 mA at its VOL, VOL/IOL
#: below) cannot carry both pull-ups; at the typical 1.0 V it can
SENSOR = """format = "pinlib.design/1"
title = "1.8 V sensor behind a MOSFET translator (invented test data)"
LIBRARY
[[bus]]
id = "s"
protocol = "i2c"
mode = "fast"

[[bus.segment]]
id = "main-3v3"
supply = "3.3 V"
supply_tolerance = "5 %"
pullup = "2.7 kΩ"
extra_capacitance = "80 pF"
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller" },
  { ref = "Q1", part = "PART", side = "b" },
]

[[bus.segment]]
id = "sensor-1v8"
supply = "1.8 V"
supply_tolerance = "5 %"
pullup = "3.3 kΩ"
devices = [
  { ref = "Q1", part = "PART", side = "a" },
  { ref = "U9", part = "temp-humidity-sensor" },
]
"""


def _sensor_fall(tmp_path, datasheet: bool):
    text = SENSOR.replace("PART", "level-translator-mosfet").replace("LIBRARY", "")
    if datasheet:  # the library part with its threshold recorded from a datasheet
        from pinlib.library.loader import BUILTIN_DIR
        src = (BUILTIN_DIR / "translator" / "level-translator-mosfet.toml").read_text(
            encoding="utf-8")
        (tmp_path / "parts").mkdir()
        (tmp_path / "parts" / "t-fet-recorded.toml").write_text(
            src.replace('id = "level-translator-mosfet"', 'id = "t-fet-recorded"').replace(
                'v_gs_th = { value = "1.5 V", typ = "1.0 V", source',
                'v_gs_th = { value = "1.5 V", typ = "1.0 V", basis = "datasheet", source'),
            encoding="utf-8")
        text = SENSOR.replace("PART", "t-fet-recorded").replace(
            "LIBRARY", f'library = ["{tmp_path / "parts"}"]\n')
    path = tmp_path / "d.toml"
    path.write_text(text, encoding="utf-8")
    d = load_design(path)
    main = opendrain.evaluate_bus(d.buses[0], d).segments[0]
    return _fall(main, "SDA")


def test_a_joined_fall_failing_only_at_a_class_threshold_warns(tmp_path):
    chk = _sensor_fall(tmp_path, datasheet=False)
    assert chk.status == "warn" and chk.value is None and "U9 via Q1" in chk.message
    # derived: side a's rail at its minimum, 1.8 V − 5 % = 1.71 V, less the class's
    # VGS(th) maximum 1.5 V (the built-in class's value, typical of its kind)
    assert "Q1 conducts only below 210 mV" in chk.reason
    assert chk.details["value_basis"] == "generic"
    assert M.FALL_JOINED_SOFT.format(ref="Q1", vth="1.5 V", basis="a class's typical value",
                                     typ="1 V") in chk.message
    # why it only warns is read as every soft check's is: the text's tag after the
    # reason says it rests on a class's value (not that the limit is one), and the
    # closing count holds it among the checks beyond a soft basis
    from pinlib.model.result import warns_beyond, warns_only
    from pinlib.present.report import _against

    assert warns_only(chk) and warns_beyond(chk) == "generic"
    assert _against(chk).endswith("; a warning, resting on a class's typical value")


def test_a_joined_fall_failing_at_a_recorded_threshold_fails(tmp_path):
    chk = _sensor_fall(tmp_path, datasheet=True)
    assert chk.status == "fail" and chk.value is None
    from pinlib.model.result import warns_only

    assert "value_basis" not in chk.details and not warns_only(chk)
