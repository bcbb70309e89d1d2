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


# ---------------------------------------------------------------- 2: soft limits

def _result(checks, status="pass"):
    return {"format": "pinlib.result/1", "design": "t", "status": status,
            "buses": [{"id": "spi0", "protocol": "spi", "status": status, "figures": {},
                       "checks": list(checks), "lines": []}]}


SETUP = {"id": "cipo-setup", "status": "pass", "value": 3.37e-9, "limit": 2e-9, "unit": "s",
         "margin": 0.685, "source": "src", "message": "", "subject": "U7"}


def test_a_limit_a_check_only_warns_beyond_carries_its_tag():
    # a setup time below its 2 ns limit warns only: the limit is an estimate (invented)
    soft = dict(SETUP, status="warn", value=1.37e-9, margin=-0.315,
                details={"limit_basis": "estimate"})
    (c,) = compare(_result([SETUP]), _result([soft], "warn")).status_changes
    assert "pass → warn (3.37 ns → 1.37 ns, limit 2 ns (an estimate))" in c.format()
    assert c.to_json()["new_soft"] == "estimate" and "old_soft" not in c.to_json()
    # the same limit, re-recorded from a datasheet: the check fails now, and says why
    hard = dict(soft, status="fail", details={})
    (c,) = compare(_result([soft], "warn"), _result([hard], "fail")).status_changes
    assert "warn → fail (1.37 ns, limit 2 ns (an estimate) → 2 ns)" in c.format()
    # a rule of thumb and a class's typical value (invented)
    for details, tag in (({"rule_of_thumb": True}, "(a rule of thumb)"),
                         ({"limit_basis": "generic"}, "(a class's typical value)")):
        (c,) = compare(_result([SETUP]), _result([dict(soft, details=details)], "warn")
                       ).status_changes
        assert f"limit 2 ns {tag})" in c.format()
    # a warning within its limit (a positive margin) has no tag, as in pinlib check
    near = dict(SETUP, status="warn", value=1.9e-9, margin=0.05,
                details={"limit_basis": "estimate"})
    (c,) = compare(_result([SETUP]), _result([near], "warn")).status_changes
    assert "limit 2 ns)" in c.format()


# ---------------------------------------------------------------- 3: yes/no checks

MODE = {"id": "spi-mode", "status": "pass", "value": True, "limit": True, "unit": "",
        "margin": None, "source": "src", "message": "", "subject": "U7",
        "details": {"mode": 0, "modes": [0, 3]}}


def test_a_yes_no_check_shows_what_it_compared_not_yes_and_no():
    fail = dict(MODE, status="fail", value=False, details={"mode": 0, "modes": [3]})
    (c,) = compare(_result([MODE]), _result([fail], "fail")).status_changes
    assert c.format() == ("spi0 SPI mode U7: pass → fail (mode 0; U7's modes 0, 3 → 3); "
                          "source: src")
    (c,) = compare(_result([MODE]), _result([], "pass")).status_changes
    assert c.format() == "spi0 SPI mode U7: pass → (absent) (mode 0; U7's modes 0, 3); source: src"
    # power-off: the clamp current on the side that fails (invented currents)
    off = {"id": "power-off", "status": "pass", "value": True, "limit": True, "unit": "",
           "margin": None, "source": "src", "message": "", "subject": "U4"}
    on = dict(off, status="fail", value=False,
              details={"clamp_current": {"SDA": 1.2e-3, "SCL": 1.1e-3}})
    (c,) = compare(_result([off]), _result([on], "fail")).status_changes
    assert "pass → fail (clamp current SDA 1.2 mA, SCL 1.1 mA)" in c.format()
    # another yes/no check: nothing in parentheses, never "yes → no"
    facing = dict(off, id="bridge-offset-facing", subject="U9")
    (c,) = compare(_result([facing]), _result([dict(facing, status="fail", value=False)],
                                               "fail")).status_changes
    assert "(" not in c.format().replace("(absent)", "") and "yes" not in c.format()


def test_a_setting_prints_as_parts_show_prints_it_with_its_file(tmp_path, capsys,
                                                                monkeypatch):
    monkeypatch.setenv("COLUMNS", "200")
    _write(tmp_path / "team", "eeprom-t.toml", PART.format(basis="datasheet")
           + "\n[pins.sda]\noff_tolerant = true\n")
    design = _write(tmp_path, "board.toml", BOARD)
    main(["swap", str(design), "U4=eeprom-t"])
    out = capsys.readouterr().out
    # the class states no off_tolerant: the part format's default, false
    assert "U4 SDA off_tolerant false → true, source: T ds (invented) [datasheet]" in out
    main(["swap", str(design).replace("board", "board"), "U4=eeprom-t", "--json"])
    (pc,) = json.loads(capsys.readouterr().out)["changes"]["part_changes"]
    entry = {v["key"]: v for v in pc["values"]}["pins.sda.off_tolerant"]
    assert entry["old"] == {"value": False, "default": True}
    assert entry["new"]["origin"] == "eeprom-t" and entry["new"]["basis"] == "datasheet"


# ---------------------------------------------------------------- 4: noise

RISE_MIN = {"id": "rise-time-min", "status": "pass", "value": 238e-9, "limit": 20e-9,
            "unit": "s", "margin": 10.9, "source": "src", "message": "", "subject": "SCL"}


def test_a_move_between_margins_far_above_the_limit_is_not_listed():
    # 238 ns -> 207 ns against a minimum of 20 ns: "> +999 % -> +935 %" (invented)
    far = dict(RISE_MIN, value=207e-9, margin=9.35)
    assert not compare(_result([RISE_MIN]), _result([far])).margin_changes
    # +189 % -> +201 %: far from the limit either way
    a, b = dict(RISE_MIN, margin=1.89), dict(RISE_MIN, margin=2.01)
    assert not compare(_result([a]), _result([b])).margin_changes
    # one that comes near its limit is listed: +150 % -> +40 %
    near = dict(RISE_MIN, margin=0.40)
    (m,) = compare(_result([a]), _result([near])).margin_changes
    assert "margin +189 % → +40 %" in m.format()


def test_a_slack_that_changes_sign_shows_its_change_in_its_unit():
    from pinlib.studies.compare.changes import FigureChange
    from pinlib.studies.compare.figures import format_change

    # a CIPO setup slack 2.14 ns -> -30.1 ns (invented): not "(< -999 %)"
    c = FigureChange("spi0", "cipo_setup_margin", "s", 2.14e-9, -30.1e-9,
                     (-30.1 - 2.14) / 2.14, "moved")
    assert c.format() == "spi0: CIPO setup margin 2.14 ns → -30.1 ns (-32.2 ns)"
    assert format_change(-1.5, -2e-9, 1e-9, "s") == "(+3 ns)"
    # the same sign: a percent, as before
    assert format_change(-0.5, 2e-9, 1e-9, "s") == "(-50 %)"


# ---------------------------------------------------------------- 5: a value gone

def test_a_value_no_longer_stated_names_whose_source_is_shown():
    old = _snap({"supply.typ": {"text": "3.3 V", "value": 3.3, "unit": "V",
                                "basis": "generic", "source": "typical of the class",
                                "origin": "nor-flash-spi"}}, part="flash-x")
    new = _snap({}, part="flash-z")
    (pc,) = compare(old, new).part_changes
    (line,) = pc.lines()[1:]
    assert line.strip() == ("U4 supply typ 3.3 V → (none), not stated by flash-z; "
                            "flash-x's source: typical of the class [generic], "
                            "set in nor-flash-spi")
    # the same part, its file edited
    (pc,) = compare(old, _snap({}, part="flash-x")).part_changes
    assert pc.lines()[1].strip().startswith(
        "U4 supply typ 3.3 V → (none), no longer stated; before: source: typical")


# ---------------------------------------------------------------- 6: an auto resistor

def test_an_automatic_pull_up_chosen_anew_says_so_in_one_line():
    def snap(rp, chosen=("b",)):
        return {"format": "pinlib.result/1", "design": "t", "status": "pass",
                "chosen": list(chosen),
                "buses": [{"id": "b", "protocol": "i2c", "status": "pass", "checks": [],
                           "figures": {"pullup_resistor": {"value": rp, "unit": "Ω"}}}]}

    # 2.7 kΩ -> 2.4 kΩ, both of E24 (invented choice)
    cl = compare(snap(2700.0), snap(2400.0))
    assert cl.notes == ["b: the automatic pull-up is now 2.4 kΩ, not 2.7 kΩ: pinlib chose "
                        "another resistor to fit, a change to the bill of materials"]
    assert "Note: b: the automatic pull-up is now 2.4 kΩ" in cl.format_text()
    # a pull-up the design sets (no "chosen"), or an old snapshot: the figure alone
    assert compare(snap(2700.0, ()), snap(2400.0, ())).notes == []
    assert compare(dict(snap(2700.0), chosen=7), snap(2400.0)).notes == []


def test_swap_says_the_automatic_pull_up_changed(tmp_path, capsys, monkeypatch):
    monkeypatch.setenv("COLUMNS", "80")
    _write(tmp_path / "team", "eeprom-t.toml", PART.format(basis="datasheet")
           + '\n[pins.sda]\nc_in = { value = "60 pF", basis = "estimate", source = "x" }\n')
    design = _write(tmp_path, "board.toml", BOARD.replace('"2.2 kΩ"', '"auto"'))
    main(["swap", str(design), "U4=eeprom-t"])
    out = capsys.readouterr().out
    assert "Note: b: the automatic pull-up is now" in out
    assert all(len(ln) <= 80 for ln in out.splitlines())
