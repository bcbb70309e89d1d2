"""What a change list says after a part was substituted or re-recorded: a value whose
basis alone changed, the tags of soft limits, yes/no checks, margins and slacks that
moved, a value no longer stated, an automatic resistor chosen anew."""

from __future__ import annotations

import json
import textwrap
from pathlib import Path

from pinlib.cli import main
from pinlib.studies.compare import compare

# ---------------------------------------------------------------- invented test data

PART = """\
format = "pinlib.part/1"
id = "eeprom-t"
title = "Test EEPROM (invented)"
category = "memory"
extends = "eeprom-i2c"
provenance = {{ basis = "datasheet", source = "T ds (invented)" }}

[timing]
f_max = {{ value = "400 kHz", basis = "{basis}", source = "T ds (invented), table 1" }}
"""

BOARD = """\
format = "pinlib.design/1"
title = "Basis test board (invented scenario)"
library = ["team"]

[[bus]]
id = "b"
protocol = "i2c"
mode = "fast"
supply = "3.3 V"
pullup = "2.2 kΩ"
trace = { length = "5 cm", capacitance = "0.8 pF/cm" }
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller" },
  { ref = "U4", part = "eeprom-i2c" },
]
"""


def _write(folder: Path, name: str, text: str) -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    path = folder / name
    path.write_text(textwrap.dedent(text), encoding="utf-8")
    return path


def _value(number, basis, source="src"):
    return {"text": "8 pF", "value": number, "unit": "F", "basis": basis, "source": source}


def _snap(values: dict, part="p", status="pass"):
    return {"format": "pinlib.result/1", "design": "t", "status": status, "buses": [],
            "parts": {"U4": {"part": part, "buses": ["b"], "values": values}}}


# ---------------------------------------------------------------- 1: a basis alone


def test_a_basis_that_changed_alone_is_listed_with_both_bases():
    # the same 8 pF, first a class's typical value, then a datasheet's (invented data)
    old = _snap({"pins.sda.c_in": _value(8e-12, "generic", "typical of the class")})
    new = _snap({"pins.sda.c_in": _value(8e-12, "datasheet", "T ds, table 5")})
    cl = compare(old, new)
    (pc,) = cl.part_changes
    (v,) = pc.values
    assert v.basis_moved
    assert v.format("U4", "p") == "U4 SDA c_in 8 pF [generic → datasheet], source: T ds, table 5"
    entry = cl.to_json()["part_changes"][0]["values"][0]
    assert (entry["old"]["basis"], entry["new"]["basis"]) == ("generic", "datasheet")
    assert "U4 SDA c_in 8 pF [generic → datasheet]" in cl.format_text()
    # the same basis and number: nothing
    assert compare(old, old).empty


def test_a_setting_whose_file_differs_is_not_a_change():
    # a setting (function, drive) has only its file's basis: not compared
    old = _snap({"pins.sda.drive": {"value": "open-drain", "basis": "generic"}})
    new = _snap({"pins.sda.drive": {"value": "open-drain", "basis": "datasheet"}})
    assert compare(old, new).empty


def test_swap_to_a_part_stating_the_class_values_names_them(tmp_path, capsys, monkeypatch):
    monkeypatch.setenv("COLUMNS", "80")
    _write(tmp_path / "team", "eeprom-t.toml", PART.format(basis="datasheet"))
    design = _write(tmp_path, "board.toml", BOARD)
    main(["swap", str(design), "U4=eeprom-t", "--json"])
    data = json.loads(capsys.readouterr().out)
    (pc,) = data["changes"]["part_changes"]
    by_key = {v["key"]: v for v in pc["values"]}
    # eeprom-i2c's f_max 400 kHz is a class's typical value; eeprom-t states the same
    # number from a datasheet (invented)
    f_max = by_key["timing.f_max"]
    assert f_max["old"]["value"] == f_max["new"]["value"] == 400e3
    assert (f_max["old"]["basis"], f_max["new"]["basis"]) == ("generic", "datasheet")
    main(["swap", str(design), "U4=eeprom-t"])
    out = capsys.readouterr().out
    assert "U4 f_max 400 kHz [generic → datasheet], source: T ds (invented)," in out


def test_a_value_re_recorded_as_a_datasheet_is_listed_against_the_snapshot(
        tmp_path, capsys, monkeypatch):
    monkeypatch.setenv("COLUMNS", "80")
    part = _write(tmp_path / "team", "eeprom-t.toml", PART.format(basis="estimate"))
    design = _write(tmp_path, "board.toml", BOARD.replace('"eeprom-i2c"', '"eeprom-t"'))
    main(["check", str(design), "--save"])
    capsys.readouterr()
    part.write_text(part.read_text(encoding="utf-8").replace(
        'basis = "estimate"', 'basis = "datasheet"'), encoding="utf-8")
    main(["check", str(design), "--against-snapshots"])
    out = capsys.readouterr().out
    assert "no part value differs" not in out
    assert "U4 f_max 400 kHz [estimate → datasheet]" in out
