"""Tests of design-file loading (pinlib.model.design): bad designs give errors that name the
file, line and field, and ``pinlib check`` turns them into exit 2 with that message."""

from __future__ import annotations

from pathlib import Path

import pytest

from pinlib.cli import main
from pinlib.core.errors import DesignError
from pinlib.model.design import load_design

PARTS = Path(__file__).parent / "data" / "parts"

HEAD = f"""format = "pinlib.design/1"
title = "bad design"
library = ["{PARTS.as_posix()}"]
"""

ONE_BUS = """
[[bus]]
id = "b"
protocol = "i2c"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "t-ctrl-3v3", role = "controller" },
  { ref = "U2", part = "PART" },
]
"""

SEGMENTS = """
[[bus]]
id = "b"
protocol = "i2c"

[[bus.segment]]
supply = "3.3 V"
devices = [
  { ref = "U1", part = "t-ctrl-3v3", role = "controller" },
  { ref = "Q1", part = "t-fet-translator", side = "b" },
]

[[bus.segment]]
supply = "1.8 V"
devices = [
  { ref = "U3", part = "t-sensor-1v8" },
]
"""

# name -> (body, field, line, words the message must hold)
BAD = {
    "unknown-part": (ONE_BUS.replace("PART", "t-targit"), "bus[0].devices[1].part", 11,
                     ["unknown part", "'t-targit'", "closest in the library: t-target"]),
    "no-pins": (ONE_BUS.replace("PART", "t-spi-only"), "bus[0].devices[1].part", 11,
                ["has no i2c-sda pin", "t-spi-only"]),
    "no-controller": (ONE_BUS.replace('{ ref = "U1", part = "t-ctrl-3v3", role = "controller" },\n',
                                      "").replace("PART", "t-target"),
                      "bus[0].devices", 9, ["a bus needs a controller", 'role = "controller"']),
    "one-sided-bridge": (SEGMENTS, "bus[0].segment[0].devices[1].ref", 13,
                         ["bridging part must appear in two segments", "'Q1'", "side(s): b"]),
    "dimension": (ONE_BUS.replace('supply = "3.3 V"', 'supply = "3.3 pF"').replace(
        "PART", "t-target"), "bus[0].supply", 8,
        ["a value in F where a voltage belongs", "'3.3 pF'", "3.3 V"]),
    "dimension-in-device": (ONE_BUS.replace('part = "PART" }', 'part = "t-target", '
                                            'series_resistor = "100 pF" }'),
                            "bus[0].devices[1].series_resistor", 11,
                            ["a value in F where a resistance belongs"]),
    "bare-number": (ONE_BUS.replace('supply = "3.3 V"', 'supply = "3.3 V"\nextra_capacitance = 12')
                    .replace("PART", "t-target"), "bus[0].extra_capacitance", 9,
                    ["a bare number has no unit", '"12 pF"']),
    "bus-trace-with-segments": (SEGMENTS.replace('protocol = "i2c"\n', 'protocol = "i2c"\ntrace = '
                                                 '{ length = "5 cm", capacitance = "1 pF/cm" }\n'),
                                "bus[0].trace", 8, ["trace goes in the segments"]),
}


def write(tmp_path, body: str) -> Path:
    path = tmp_path / "bad.toml"
    path.write_text(HEAD + body, encoding="utf-8")
    return path


@pytest.mark.parametrize("name", list(BAD))
def test_bad_design_names_field_and_line(tmp_path, name):
    body, field, line, words = BAD[name]
    path = write(tmp_path, body)
    with pytest.raises(DesignError) as info:
        load_design(path)
    err = info.value
    assert err.field == field
    assert err.line == line
    assert err.file == str(path)
    for w in words:
        assert w in err.message, (w, err.message)


@pytest.mark.parametrize("name", list(BAD))
def test_bad_design_exits_2_with_the_message(tmp_path, name, capsys):
    body, field, line, words = BAD[name]
    path = write(tmp_path, body)
    assert main(["check", str(path)]) == 2
    out, err = capsys.readouterr()
    assert out == ""
    assert err.startswith("pinlib: error: ")
    assert f"{path}:{line}" in err and f"field '{field}'" in err
    assert "Traceback" not in err


def test_missing_file_exits_2(tmp_path, capsys):
    assert main(["check", str(tmp_path / "nope.toml")]) == 2
    assert "file not found" in capsys.readouterr().err


def test_fixed_values_parse_to_si(tmp_path):
    body = ONE_BUS.replace("PART", "t-target").replace(
        'supply = "3.3 V"', 'supply = "3.3 V"\npullup = "4k7"')
    d = load_design(write(tmp_path, body))
    assert d.buses[0].segments[0].pullup == pytest.approx(4700.0)
    body = ONE_BUS.replace("PART", "t-target").replace(
        'supply = "3.3 V"', 'supply = "3.3 V"\npullup = "Auto"')
    assert load_design(write(tmp_path, body)).buses[0].segments[0].pullup == "auto"
    body = ONE_BUS.replace("PART", "t-target").replace(
        'supply = "3.3 V"', 'supply = "3.3 V"\npullup = "2.2 pF"')
    with pytest.raises(DesignError, match="where a resistance belongs"):
        load_design(write(tmp_path, body))
