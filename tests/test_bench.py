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


@pytest.mark.parametrize(("argv", "field", "words"), [
    # invented test design: levels 1e-11 % apart gave "measured Cb 478 F"
    (["--rise", "150ns", "--probe=5pF", "--levels", "29.99999999999,30"], "--levels",
     ["measuring levels too close together", "(got '29.99999999999%,30%')",
      "HI at least 5 % of the rail above LO"]),
    # a rise of 1e30 s gave "measured Cb 536e24 F", past every SI prefix
    (["--rise", "1e30s", "--probe", "10pF"], "--rise",
     ["outside the allowed range (got '1e30 s')", "between 100 ps and 10 s"]),
    (["--rise", "1e-30s", "--probe", "10pF"], "--rise", ["(got '1e-30 s')"]),
    (["--rise", "150ns", "--probe", "1e30F"], "--probe",
     ["outside the allowed range (got '1e30 F')", "at most 1 nF"]),
])
def test_a_reading_no_bench_gives_is_refused_naming_its_option(design, capsys, argv, field,
                                                               words):
    # common practice, no source: the ranges of RISE_RANGE, PROBE_MAX, LEVELS_MIN_APART
    assert main(["measured", str(design), "--bus", "i2c0", *argv]) == 2
    out, err = capsys.readouterr()
    err = " ".join(err.split())
    assert out == "" and f"field '{field}'" in err and "Traceback" not in err
    for w in words:
        assert w in err, (w, err)


def test_levels_just_far_enough_apart_and_the_ends_of_the_rise_range_are_taken(design):
    # invented test design: 10,15 are 5 % apart however the floats round 0.15 - 0.1
    d = load_design(design)
    for rise, levels in ((10.0, (0.10, 0.15)), (100e-12, (0.94, 0.99))):
        got = compare_rise(d, "i2c0", rise, 0.0, levels=levels)
        assert got.verdict in ("above", "below")


def test_no_capacitance_is_shown_past_the_si_prefixes():
    # invented test design: the text never writes an exponent ("536e24 F"); JSON keeps
    # the number
    from pinlib.engines.bench import _cap

    assert _cap(5.36e26) == "> 1000 TF" and _cap(-5.36e26) == "< -1000 TF"
    assert _cap(1e-25) == "< 1 aF" and _cap(-1e-25) == "> -1 aF"
    assert _cap(0.0) == "0 pF" and _cap(83.1e-12) == "83.1 pF" and _cap(79.5e-6) == "79.5 µF"


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


# ---------------------------------------------------------------- a GPIO line, open-drain
# A supervisor's open-drain reset output into a microcontroller's reset input, on a GPIO
# bus with the line's own pull-up (built-in parts; the layout is invented test data).
GPIO_DESIGN = """\
format = "pinlib.design/1"
title = "bench reading on a GPIO reset line (invented)"

[[bus]]
id = "reset"
protocol = "gpio"
supply = "3.3 V"
devices = [
  { ref = "U2", part = "supervisor-od", role = "controller", pin = "reset" },
  { ref = "U1", part = "mcu-3v3", pin = "reset"{internal} },
]
lines.reset = { length = "5 cm", capacitance = "1 pF/cm", pullup = "10 kΩ"{tolerance} }

[[bus]]
id = "en"
protocol = "gpio"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller", pin = "gpio_out" },
  { ref = "U3", part = "fpga-io-3v3", pin = "gpio_in" },
]
lines.enable = { length = "5 cm", capacitance = "1 pF/cm" }

[[bus]]
id = "two"
protocol = "gpio"
supply = "3.3 V"
devices = [
  { ref = "U2", part = "supervisor-od", role = "controller", pin = "reset" },
  { ref = "U1", part = "mcu-3v3", pin = "reset" },
]
lines.reset = { length = "2 cm", capacitance = "1 pF/cm" }
lines.gpio_out = { length = "2 cm", capacitance = "1 pF/cm" }
"""

# derived: the line's load capacitance, trace and every pin on the net (the open-drain
# driver's own included): 5 cm x 1 pF/cm + supervisor-od reset c_in 5 pF + mcu-3v3 reset
# c_in 10 pF (the built-in part files' maxima) = 20 pF
GPIO_CB = 20e-12
GPIO_RP = 10e3  # the design's lines.reset.pullup (invented test data)


def _gpio_reading(cb: float, c_probe: float, rp: float = GPIO_RP,
                  lo: float = 0.3, hi: float = 0.7) -> float:
    """The rise between ``lo`` and ``hi`` of an RC charge through ``rp``. [s]"""
    # published: UM10204 rev. 6, section 7.1: t = Rp (Cb + C_probe) ln((1 - lo)/(1 - hi))
    return rp * (cb + c_probe) * math.log((1 - lo) / (1 - hi))


@pytest.fixture()
def gpio_design(tmp_path, monkeypatch):
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)

    def write(internal: str = "", tolerance: str = ""):
        path = tmp_path / "gpio.toml"
        path.write_text(GPIO_DESIGN.replace("{internal}", internal)
                        .replace("{tolerance}", tolerance), encoding="utf-8")
        return path
    return write


def test_gpio_reading_the_model_predicts_agrees(gpio_design):
    d = load_design(gpio_design())
    t = _gpio_reading(GPIO_CB, 10e-12)
    got = compare_rise(d, "reset", t, 10e-12, signal="reset")
    assert got.verdict == "agrees" and got.revisit == [] and got.notes == []
    assert got.cb == pytest.approx(GPIO_CB, rel=1e-9)  # the formula run backwards
    assert got.rp == pytest.approx(GPIO_RP)  # U1 carries its pull-up, not counted here
    assert got.rp_tolerance == pytest.approx(0.01)  # the line's default pullup_tolerance
    assert got.cb_model == pytest.approx(GPIO_CB, rel=1e-12)
    # derived: the same split as GPIO_CB's sum
    assert got.contributions == pytest.approx(
        {"pins": 15e-12, "traces": 5e-12, "cables": 0.0, "extra": 0.0})
    assert got.segment is None and got.signal == "reset" and got.protocol == "gpio"


def test_gpio_model_cb_is_the_engines_load_capacitance(gpio_design):
    from pinlib.engines.dispatch import check_design

    d = load_design(gpio_design())
    line = next(ln for b in check_design(d).buses if b.id == "reset" for ln in b.lines)
    engine = line.figures["load_capacitance"].value
    assert compare_rise(d, "reset", 300e-9, 10e-12).cb_model == pytest.approx(engine,
                                                                              rel=1e-12)


def test_gpio_reading_half_as_slow_again_is_above(gpio_design):
    d = load_design(gpio_design())
    # derived: 50 % slower than the model's own reading
    t = 1.5 * _gpio_reading(GPIO_CB, 10e-12)
    got = compare_rise(d, "reset", t, 10e-12, signal="reset")
    assert got.verdict == "above"
    # derived: Cb = 1.5 (Cb + Cp) - Cp = 1.5 x 30 pF - 10 pF = 35 pF
    assert got.cb == pytest.approx(35e-12, rel=1e-9)
    assert [r.split(":")[0] for r in got.revisit] == [
        "pins 15 pF", "traces 5 pF", "extra 0 pF", "the pull-up 10 kΩ on the line",
        "the measurement"]


def test_gpio_pullup_tolerance_and_pullups_in_parts(gpio_design):
    d = load_design(gpio_design(internal=", internal_pullups = true",
                                tolerance=', pullup_tolerance = "5 %"'))
    got = compare_rise(d, "reset", 300e-9, 10e-12, signal="reset")
    # derived: 10 kΩ in parallel with mcu-3v3's reset pullup_internal 40 kΩ = 8 kΩ
    assert got.rp == pytest.approx(8e3)
    assert got.rp_tolerance == pytest.approx(0.05)  # the design's pullup_tolerance
    # derived from the RC formula with the reading 10 % short and Rp 5 % high
    low = 300e-9 * 0.9 / (8e3 * 1.05 * K_30_70) - 10e-12
    assert got.cb_low == pytest.approx(low, rel=1e-9)


def test_gpio_line_push_pull_pins_also_drive_is_noted(tmp_path, monkeypatch):
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    text = GPIO_DESIGN.replace("{internal}", "").replace("{tolerance}", "").replace(
        '{ ref = "U1", part = "mcu-3v3", pin = "reset" },\n]\nlines.reset = { length = "5',
        '{ ref = "U1", part = "mcu-3v3", pin = "gpio_out" },\n]\nlines.reset = { length = "5')
    assert "gpio_out" in text.split('id = "en"')[0]
    path = tmp_path / "mixed.toml"
    path.write_text(text, encoding="utf-8")
    got = compare_rise(load_design(path), "reset", 300e-9, 10e-12)
    assert len(got.notes) == 1 and got.notes[0].startswith("U1.gpio_out also drives reset")


def test_gpio_command_agrees_reads_at_80_columns_and_json(gpio_design, capsys, monkeypatch):
    path = str(gpio_design())
    t = _gpio_reading(GPIO_CB, 10e-12)
    monkeypatch.setenv("COLUMNS", "80")
    argv = ["measured", path, "--bus", "reset", "--line", "reset", "--rise",
            f"{t * 1e9:.4f} ns", "--probe", "10pF"]
    assert main(argv) == 0
    out = capsys.readouterr().out
    assert all(len(ln) <= 80 for ln in out.splitlines())
    assert out.startswith("bus reset, line reset: rise")
    assert "modelled Cb  20 pF  (pins 15 pF, traces 5 pF" in out
    assert "agrees with the model" in out
    assert main([*argv, "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["verdict"] == "agrees" and data["protocol"] == "gpio"
    assert data["segment"] is None and data["signal"] == "reset"
    assert data["cb"] == pytest.approx(GPIO_CB, rel=1e-5)  # the time given to 4 decimals
    assert data["cb_model"] == pytest.approx(GPIO_CB)


def test_gpio_command_slow_reading_disagrees(gpio_design, capsys, monkeypatch):
    monkeypatch.setenv("COLUMNS", "80")
    t = 1.5 * _gpio_reading(GPIO_CB, 10e-12)  # derived: 50 % slower than the model's
    # (the bus's only line when --line is not given)
    assert main(["measured", str(gpio_design()), "--bus", "reset", "--rise",
                 f"{t * 1e9:.4f} ns", "--probe", "10pF"]) == 1
    out = capsys.readouterr().out
    assert all(len(ln) <= 80 for ln in out.splitlines())
    assert "more capacitance than the model" in out and "- pins 15 pF" in out


@pytest.mark.parametrize(("argv", "words"), [
    # a push-pull line: its rise is the driver's edge
    (["--bus", "en", "--line", "enable"],
     ["no open-drain pin drives this line", "not an RC charge through a pull-up",
      "this bus has none", "U1.gpio_out drives it push-pull"]),
    (["--bus", "reset", "--line", "rst"], ["no line of that name on the bus",
                                           "(got 'rst'); expected reset"]),
    (["--bus", "reset", "--segment", "reset"], ["a GPIO bus has no segments"]),
    (["--bus", "two"], ["the bus has several lines: name the one measured; expected "
                        "--line with one of reset, gpio_out"]),
    (["--bus", "two", "--line", "reset"], ["the line has no pull-up",
                                           "lines.reset.pullup"]),
    (["--bus", "two", "--line", "gpio_out"], ["no open-drain pin drives this line",
                                              "expected a line an open-drain pin drives "
                                              "(reset)"]),
])
def test_gpio_refusals_exit_2(gpio_design, capsys, monkeypatch, argv, words):
    monkeypatch.setenv("COLUMNS", "80")
    assert main(["measured", str(gpio_design()), *argv, "--rise", "250ns",
                 "--probe", "10pF"]) == 2
    err = capsys.readouterr().err
    assert all(len(ln) <= 80 for ln in err.splitlines())
    err = " ".join(err.split())
    for w in words:
        assert w in err


def test_i2c_line_stays_a_choice_of_sda_and_scl(design, capsys):
    with pytest.raises(SystemExit) as got:
        main(["measured", str(design), "--bus", "i2c0", "--line", "reset", "--rise", "250ns",
              "--probe", "10pF"])
    assert got.value.code == 2
    err = " ".join(capsys.readouterr().err.split())
    assert "argument --line: invalid choice: 'reset' (choose from 'sda', 'scl')" in err
    assert main(["measured", str(design), "--bus", "i2c0", "--line", "scl", "--rise",
                 "250ns", "--probe", "10pF"]) == 1
    # a bus of one segment is named once: "bus i2c0, segment i2c0, SCL" named it twice,
    # as if it had segments (an audit)
    out = capsys.readouterr().out
    assert out.startswith("bus i2c0, SCL: rise 250 ns") and "segment" not in out, out


def test_gpio_contributions_split_traces_cables_and_extra(gpio_design, tmp_path):
    text = gpio_design().read_text(encoding="utf-8").replace(
        'lines.reset = { length = "5 cm", capacitance = "1 pF/cm", pullup = "10 kΩ" }',
        'lines.reset = { sections = [{ length = "3 cm", capacitance = "1 pF/cm" }, '
        '{ part = "ribbon-cable", length = "20 cm" }], pullup = "10 kΩ", '
        'extra_capacitance = "4 pF" }')
    path = tmp_path / "cable.toml"
    path.write_text(text, encoding="utf-8")
    got = compare_rise(load_design(path), "reset", 900e-9, 10e-12)
    # derived: 3 cm x 1 pF/cm; ribbon-cable's 0.5 pF/cm (its part file) x 20 cm; the
    # line's extra_capacitance; the two pins as in GPIO_CB
    assert got.contributions == pytest.approx(
        {"pins": 15e-12, "traces": 3e-12, "cables": 10e-12, "extra": 4e-12})
    assert got.cb_model == pytest.approx(32e-12)
    assert got.verdict == "above"
    assert [r.split(" ")[0] for r in got.revisit[:4]] == ["pins", "cables", "extra", "traces"]


# ---------------------------------------------------------------- the lines offered
# (the workbench's bench panel offers these: pinlib.engines.bench.measurable_lines)


def test_measurable_lines_are_those_compare_rise_takes(gpio_design, design):
    from pinlib.engines.bench import measurable_lines

    d = load_design(gpio_design())
    offered, refused = measurable_lines(d)
    assert [(x.bus, x.segment, x.signal) for x in offered] == [("reset", None, "reset")]
    assert offered[0].place() == "reset, line reset"
    # each line not offered is one compare_rise refuses, with the same words
    assert [(bus, line) for bus, line, _ in refused] == [
        ("en", "enable"), ("two", "reset"), ("two", "gpio_out")]
    for bus, line, err in refused:
        with pytest.raises(PinlibError) as got:
            compare_rise(d, bus, 300e-9, 10e-12, signal=line)
        assert got.value.message == err.message
    # an I2C bus: SDA and SCL; an SPI bus: refused as a whole, as compare_rise does
    d = load_design(design)
    offered, refused = measurable_lines(d)
    assert [(x.bus, x.signal, x.place()) for x in offered] == [
        ("i2c0", "sda", "i2c0, SDA"), ("i2c0", "scl", "i2c0, SCL")]
    assert [(bus, line) for bus, line, _ in refused] == [("s", None)]
    with pytest.raises(PinlibError) as got:
        compare_rise(d, "s", 300e-9, 10e-12)
    assert got.value.message == refused[0][2].message


def test_measurable_lines_name_each_segment_of_a_bridged_bus():
    from pathlib import Path

    from pinlib.engines.bench import measurable_lines

    demo = Path(__file__).resolve().parents[1] / "workbooks" / "designs" / "demo-board.toml"
    offered, _ = measurable_lines(load_design(demo))
    bridged = [(x.segment, x.signal) for x in offered if x.bus == "sensors"]
    assert bridged == [("main-3v3", "sda"), ("main-3v3", "scl"), ("sensor-1v8", "sda"),
                       ("sensor-1v8", "scl")]
    assert all(x.segment is None for x in offered if x.bus == "power")
    # a bus of several segments names the segment the reading was taken on; one of a
    # single segment does not (invented test data: the reading)
    got = compare_rise(load_design(demo), "sensors", 300e-9, 10e-12, segment="sensor-1v8")
    assert got.place() == "bus sensors, segment sensor-1v8, SDA"


def test_rise_without_the_probe_is_kept_out_of_the_command(gpio_design):
    d = load_design(gpio_design())
    t = _gpio_reading(GPIO_CB, 10e-12)
    got = compare_rise(d, "reset", t, 10e-12, signal="reset")
    # derived: the same RC charge with the probe's 10 pF taken off, t x Cb / (Cb + Cp)
    assert got.rise_alone == pytest.approx(t * 20e-12 / 30e-12, rel=1e-9)
    assert got.rise_alone == pytest.approx(_gpio_reading(GPIO_CB, 0.0), rel=1e-9)
    assert "rise_alone" not in got.to_json() and "without the probe" not in got.format_text()


def test_levels_tolerances_and_a_probe_of_none_keep_their_precision(design):
    # a level of 0.3 % read "0%" and a 0 pF probe "0 F"; a pull-up tolerance of 0.5 %
    # read "0%" (invented test data: levels 0.3 % and 70 %, no probe, Rp 0.5 %)
    text = DESIGN.replace('pullup = "2.2 kΩ"', 'pullup = "2.2 kΩ"\npullup_tolerance = "0.5 %"')
    design.write_text(text, encoding="utf-8")
    got = compare_rise(load_design(design), "i2c0", 250e-9, 0.0, levels=(0.003, 0.7))
    first = got.format_text().splitlines()[0]
    assert "(0.3 % to 70 %)" in first, first
    assert "with a 0 pF probe" in first and "0 F" not in first, first
    assert "(±0.5 %)" in first and "0%" not in first, first
    assert "±10 % reading" in got.format_text()


# ---------------------------------------------------------------- implausible readings
# A reading's Cb beyond what a board's bus can hold warns (a rule of thumb: the verdict
# and the exit status stay as they were); the bound and its basis are in the message and
# the warning's source.


def test_a_very_slow_reading_warns_that_its_cb_is_implausible(design, capsys, monkeypatch):
    from pinlib.engines.bench import CB_UNMODELLED_MAX

    d = load_design(design)
    # invented test data: 1 s on I2C SDA with a 2.2 kΩ pull-up, a reading taken on the
    # wrong time base; derived: Cb = 1 s / (2.2 kΩ x 0.8473) - 10 pF = 536 µF
    got = compare_rise(d, "i2c0", 1.0, 10e-12)
    assert got.cb == pytest.approx(1.0 / (2200 * K_30_70) - 10e-12, rel=1e-9)
    assert got.verdict == "above"  # the verdict is unchanged; the warning stands beside it
    assert len(got.warnings) == 1
    w = got.warnings[0]
    assert w.status == "warn" and w.id == "cb-plausible" and w.unit == "F"
    assert w.limit == pytest.approx(got.cb_model + CB_UNMODELLED_MAX)
    assert "common practice, no source" in w.source
    for words in ("10 nF", "common practice", "probe", "levels", "pull-up 2.2 kΩ"):
        assert words in w.message, (words, w.message)
    monkeypatch.setenv("COLUMNS", "80")
    assert main(["measured", str(design), "--bus", "i2c0", "--rise", "1s",
                 "--probe", "10pF"]) == 1  # the disagreement's status, not the warning's
    out = capsys.readouterr().out
    assert all(len(ln) <= 80 for ln in out.splitlines())
    assert "warning: Cb 536 µF from the reading is implausible" in " ".join(out.split())
    assert main(["measured", str(design), "--bus", "i2c0", "--rise", "1s",
                 "--probe", "10pF", "--json"]) == 1
    data = json.loads(capsys.readouterr().out)
    assert [x["id"] for x in data["warnings"]] == ["cb-plausible"]
    assert data["warnings"][0]["status"] == "warn"
    assert "common practice, no source" in data["warnings"][0]["source"]


def test_a_reading_of_almost_no_capacitance_warns(design):
    from pinlib.engines.bench import CB_MIN

    # invented test data: a rise that the 10 pF probe alone nearly gives (probe set to
    # 10 pF on a reading taken with a 20 pF one, say); derived: Cb = 10.5 pF - 10 pF
    t = 2200 * 10.5e-12 * K_30_70
    got = compare_rise(load_design(design), "i2c0", t, 10e-12)
    assert got.cb == pytest.approx(0.5e-12, rel=1e-6)
    assert [w.id for w in got.warnings] == ["cb-plausible"]
    w = got.warnings[0]
    assert w.limit == CB_MIN and "1 pF" in w.message and "probe" in w.message
    assert "common practice, no source" in w.source


def test_a_plausible_reading_gives_no_warning(design):
    d = load_design(design)
    for rise in (30e-9, 250e-9, 5e-6):  # invented test data: 6 pF to 2.7 nF
        got = compare_rise(d, "i2c0", rise, 10e-12)
        assert got.warnings == [], rise
        assert got.to_json()["warnings"] == []
        assert "warning" not in got.format_text()


def test_the_panel_keeps_a_level_under_one_percent(design):
    # the workbench's panel read levels as whole percents: 0.3 % showed as "0–70 %";
    # it writes them as the command does (invented reading on the test design)
    from pinlib.present.widgets.benchreading import comparison_html

    got = compare_rise(load_design(design), "i2c0", 250e-9, 10e-12, levels=(0.003, 0.7))
    html = comparison_html(got)
    assert "(0.3–70\u00a0%, as measured)" in html, html


def test_levels_in_volts_as_smbus_measures(design, capsys):
    # published: SMBus 3.1 table 2 reads tR between VIL,max − 0.15 V and VIH,min + 0.15 V,
    # 0.65 V and 1.50 V (docs/references.md [C2]); on the 3.3 V rail (invented test
    # design) they are 0.65/3.3 and 1.5/3.3 of it, the same reading as in fractions
    d = load_design(design)
    got = compare_rise(d, "i2c0", 100e-9, 10e-12, levels_volts=(0.65, 1.5))
    same = compare_rise(d, "i2c0", 100e-9, 10e-12, levels=(0.65 / 3.3, 1.5 / 3.3))
    assert got.cb == pytest.approx(same.cb, rel=1e-12)
    # derived from Cb = t / (Rp ln((VDD − 0.65)/(VDD − 1.5))) − C_probe
    assert got.cb == pytest.approx(100e-9 / (2200 * math.log(2.65 / 1.8)) - 10e-12,
                                   rel=1e-9)
    assert got.levels_volts == (0.65, 1.5) and got.rail == 3.3
    assert got.to_json()["levels_volts"] == [0.65, 1.5]
    # the command takes them with their unit, mV too, and says what they are of the rail
    for levels in ("0.65V,1.5V", "650mV,1.5 V"):
        main(["measured", str(design), "--bus", "i2c0", "--rise", "100ns", "--probe",
              "10pF", "--levels", levels])
        out = " ".join(capsys.readouterr().out.split())
        assert "(650 mV to 1.5 V: 19.7 % to 45.5 % of the nominal 3.3 V rail)" in out, out
    # one with a unit beside one without, or a level at the rail, is refused, saying how
    with pytest.raises(SystemExit):
        main(["measured", str(design), "--bus", "i2c0", "--rise", "1us", "--probe", "1pF",
              "--levels", "0.65,1.5V"])
    assert "each with its unit (0.65V,1.5V)" in " ".join(capsys.readouterr().err.split())
    assert main(["measured", str(design), "--bus", "i2c0", "--rise", "1us", "--probe",
                 "1pF", "--levels", "0.65V,3.3V"]) == 2
    assert "never reached" in capsys.readouterr().err
