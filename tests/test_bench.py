"""A rise time measured on the board against the modelled Cb (pinlib.engines.bench and the
``pinlib measured`` command): issue 13, item 21."""

from __future__ import annotations

import json
import math

import pytest

from pinlib.cli import main
from pinlib.core.errors import PinlibError
from pinlib.engines.bench import READING_TOLERANCE, compare_rise
from pinlib.model.design import load_design

DESIGN = """\
format = "pinlib.design/1"
title = "bench reading (invented)"

[[bus]]
id = "i2c0"
protocol = "i2c"
mode = "fast"
supply = "3.3 V"
pullup = "2.2 kΩ"
trace = { length = "10 cm", capacitance = "1 pF/cm" }
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller" },
  { ref = "U2", part = "eeprom-i2c" },
]

[[bus]]
id = "s"
protocol = "spi"
clock = "10 MHz"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller" },
  { ref = "U7", part = "nor-flash-spi" },
]
lines.sclk = { length = "3 cm", capacitance = "1 pF/cm" }
"""

# derived from the RC rise t = Rp C ln((1 - lo)/(1 - hi)), UM10204 rev. 6 §7.1
K_30_70 = math.log(0.7 / 0.3)


@pytest.fixture()
def design(tmp_path, monkeypatch):
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    path = tmp_path / "board.toml"
    path.write_text(DESIGN, encoding="utf-8")
    return path


def test_reading_becomes_cb_without_the_probe(design):
    got = compare_rise(load_design(design), "i2c0", 250e-9, 10e-12)
    # derived from Cb = t / (Rp k) - C_probe = 250 ns / (2.2 kΩ x 0.8473) - 10 pF = 124.1 pF
    assert got.cb == pytest.approx(250e-9 / (2200 * K_30_70) - 10e-12, rel=1e-9)
    assert got.cb == pytest.approx(124.12e-12, abs=0.01e-12)
    assert got.rp == pytest.approx(2200.0)  # no part on the line carries its own pull-up
    # derived from the same formula with the reading 10 % long and Rp 1 % low
    assert got.cb_high == pytest.approx(
        250e-9 * (1 + READING_TOLERANCE) / (2200 * 0.99 * K_30_70) - 10e-12, rel=1e-9)
    assert got.verdict == "above"  # the model holds about 28 pF
    assert got.revisit[0].startswith("pins ")
    assert any(r.startswith("the pull-up 2.2 kΩ") for r in got.revisit)


def test_a_reading_the_model_predicts_agrees(design):
    d = load_design(design)
    model = compare_rise(d, "i2c0", 100e-9, 10e-12).cb_model
    # derived from t = Rp (Cb + C_probe) k: the reading the model itself predicts
    t = 2200 * (model + 10e-12) * K_30_70
    got = compare_rise(d, "i2c0", t, 10e-12)
    assert got.verdict == "agrees" and got.revisit == []
    assert got.cb == pytest.approx(model, rel=1e-9)


def test_other_levels_change_the_factor(design):
    got = compare_rise(load_design(design), "i2c0", 100e-9, 10e-12, levels=(0.1, 0.9))
    # derived from k(10-90) = ln 9 = 2.197: 100 ns / (2.2 kΩ x 2.197) - 10 pF = 10.7 pF
    assert got.cb == pytest.approx(100e-9 / (2200 * math.log(9)) - 10e-12, rel=1e-9)
    assert got.verdict == "below"


@pytest.mark.parametrize(("argv", "code", "words"), [
    (["--rise", "250ns", "--probe", "10pF", "--levels", "30,70"], 1,
     ["measured Cb  124 pF", "more capacitance than the model", "- pins 18 pF"]),
    (["--rise", "100ns", "--probe", "10pF", "--levels", "0.1,0.9"], 1, ["less capacitance"]),
])
def test_command(design, capsys, argv, code, words):
    assert main(["measured", str(design), "--bus", "i2c0", *argv]) == code
    out = capsys.readouterr().out
    for w in words:
        assert w in out


def test_command_agrees_and_json(design, capsys):
    d = load_design(design)
    model = compare_rise(d, "i2c0", 100e-9, 10e-12).cb_model
    t = 2200 * (model + 10e-12) * K_30_70
    assert main(["measured", str(design), "--bus", "i2c0", "--rise", f"{t * 1e9:.4f} ns",
                 "--probe", "10 pF", "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["verdict"] == "agrees" and data["cb_model"] == pytest.approx(model)
    assert data["revisit"] == []


@pytest.mark.parametrize(("argv", "words"), [
    (["--bus", "nope", "--rise", "250ns", "--probe", "10pF"], "no bus of that id"),
    (["--bus", "s", "--rise", "250ns", "--probe", "10pF"], "not an open-drain bus"),
    (["--bus", "i2c0", "--rise", "1ns", "--probe", "10pF"], "faster than the probe"),
    (["--bus", "i2c0", "--rise", "250 pF", "--probe", "10pF"], "where a time belongs"),
])
def test_command_refusals_exit_2(design, capsys, argv, words):
    assert main(["measured", str(design), *argv]) == 2
    assert words in capsys.readouterr().err


def test_bad_levels_are_refused(design, capsys):
    with pytest.raises(SystemExit):
        main(["measured", str(design), "--bus", "i2c0", "--rise", "1us", "--probe", "1pF",
              "--levels", "30"])
    assert "measuring levels are two numbers" in capsys.readouterr().err
    with pytest.raises(PinlibError, match="measuring levels out of range") as got:
        compare_rise(load_design(design), "i2c0", 250e-9, 10e-12, levels=(0.7, 0.3))
    assert got.value.field == "--levels" and got.value.value == "70%,30%"
    # in % as the help says: 0 % and 100 % are refused by the option itself, in %
    for levels in ("0,100", "70,30"):
        with pytest.raises(SystemExit):
            main(["measured", str(design), "--bus", "i2c0", "--rise", "1us", "--probe",
                  "1pF", "--levels", levels])
        assert "expected 0 <= LO < HI < 100, in % of the rail" in capsys.readouterr().err


def test_reading_errors_name_the_option_and_its_value_in_units(design, capsys):
    # the physics names its parameters t_measured, c_probe; the command's user gave
    # --rise and --probe, in units
    assert main(["measured", str(design), "--bus", "i2c0", "--rise", "1ns",
                 "--probe", "10pF"]) == 2
    err = " ".join(capsys.readouterr().err.split())
    assert "field '--rise'" in err and "(got '1 ns')" in err and "t_measured" not in err
    assert main(["measured", str(design), "--bus", "i2c0", "--rise=-5ns",
                 "--probe", "10pF"]) == 2
    err = " ".join(capsys.readouterr().err.split())
    assert "field '--rise'" in err and "(got '-5 ns')" in err


@pytest.mark.parametrize("width", range(60, 90, 3))
def test_wrapped_output_never_parts_a_number_from_its_unit(design, capsys, monkeypatch,
                                                             width):
    # at 80 columns the first line ended "Rp 4.7" and the next began "kΩ (±1%)": the
    # comparison wrapped with plain textwrap, not the one rule that glues a number to
    # its unit and to the word it names
    import re

    monkeypatch.setenv("COLUMNS", str(width))
    main(["measured", str(design), "--bus", "i2c0", "--rise", "150ns", "--probe", "10pF",
          "--levels", "10,90"])
    lines = capsys.readouterr().out.splitlines()
    assert len(lines) > 4 and all(len(ln) <= width for ln in lines)
    assert any("Rp 2.2 kΩ" in ln for ln in lines)
    for ln in lines:
        assert not re.search(r"(^|\s)[\d.]+$", ln), ln  # a number left without its unit
        assert not re.match(r"\s+(kΩ|pF|ns|Ω)\b", ln), ln
