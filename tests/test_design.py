"""Tests of design-file loading (pinlib.model.design): bad designs give errors that name the
file, line and field, and ``pinlib check`` turns them into exit 2 with that message."""

from __future__ import annotations

import os
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

# invented: an SPI bus whose second microcontroller is marked controller too
SPI_TWO_CONTROLLERS = """
[[bus]]
id = "s"
protocol = "spi"
clock = "10 MHz"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller" },
  { ref = "U2", part = "nor-flash-spi" },
  { ref = "U3", part = "mcu-3v3", role = "controller" },
]
lines.sclk = { length = "10 cm", capacitance = "1 pF/cm", delay = "60 ps/cm" }
"""

# name -> (body, field, line, words the message must hold)
BAD = {
    "unknown-part": (ONE_BUS.replace("PART", "t-targit"), "bus[0].devices[1].part", 11,
                     ["unknown part", "'t-targit'", "closest in the library: t-target"]),
    # invented test design: the id in capitals got no suggestion
    "unknown-part-case": (ONE_BUS.replace("PART", "T-TARGET"), "bus[0].devices[1].part", 11,
                          ["unknown part", "'T-TARGET'", "closest in the library: t-target"]),
    "no-pins": (ONE_BUS.replace("PART", "t-spi-only"), "bus[0].devices[1].part", 11,
                ["has no i2c-sda pin", "t-spi-only"]),
    "no-controller": (ONE_BUS.replace('{ ref = "U1", part = "t-ctrl-3v3", role = "controller" },\n',
                                      "").replace("PART", "t-target"),
                      "bus[0].devices", 9, ["a bus needs a controller", 'role = "controller"']),
    "one-sided-bridge": (SEGMENTS, "bus[0].segment[0].devices[1].ref", 13,
                         ["bridging part must appear in two segments", "'Q1'", "found side: b"]),
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
    # A range states what is accepted: 0 Hz is refused, so not "between 0 Hz and 100 GHz".
    "zero-clock": (ONE_BUS.replace('supply = "3.3 V"', 'supply = "3.3 V"\nclock = "0 MHz"')
                   .replace("PART", "t-target"), "bus[0].clock", 9,
                   ["the clock must be above zero", "'0 MHz'",
                    "expected more than 0 Hz and at most 100 GHz"]),
    "clock-too-high": (ONE_BUS.replace('supply = "3.3 V"', 'supply = "3.3 V"\nclock = "200 GHz"')
                       .replace("PART", "t-target"), "bus[0].clock", 9,
                       ["outside the allowed range", "'200 GHz'",
                        "expected more than 0 Hz and at most 100 GHz"]),
    "negative-capacitance": (ONE_BUS.replace('supply = "3.3 V"',
                                             'supply = "3.3 V"\nextra_capacitance = "-1 pF"')
                             .replace("PART", "t-target"), "bus[0].extra_capacitance", 9,
                             ["a negative value", "'-1 pF'", "expected at least 0 F and at most"]),
    # A refusal quotes the value as written, with its unit, and says what is expected.
    "negative-supply": (ONE_BUS.replace('"3.3 V"', '"-3.3 V"').replace("PART", "t-target"),
                        "bus[0].supply", 8,
                        ["the supply must be positive (got '-3.3 V')",
                         "expected at least 500 mV and at most 100 V"]),
    "zero-device-supply": (ONE_BUS.replace('part = "PART" }',
                                           'part = "t-target", supply = "0 mV" }'),
                           "bus[0].devices[1].supply", 11,
                           ["the supply must be positive (got '0 mV')", "at least 500 mV"]),
    # invented test design: a format and a title, no bus; it printed "PASS no buses: 0
    # pass, 0 warn, 0 fail on 0 buses" and exited 0, a passed CI gate over nothing checked
    "no-bus": ("", "bus", 1,
               ["the design has no bus, so nothing would be checked",
                "expected a [[bus]] table", "pinlib new"]),
    # invented test design: a rail written in millivolts was taken, and every level
    # check failed with the supply-range check, the cause, listed last
    "millivolt-supply": (ONE_BUS.replace('"3.3 V"', '"3.3 mV"').replace("PART", "t-target"),
                         "bus[0].supply", 8,
                         ["implausibly low for a logic rail (got '3.3 mV')",
                          "expected at least 500 mV and at most 100 V",
                          "did you mean '3.3 V'?"]),
    "millivolt-device-supply": (ONE_BUS.replace('part = "PART" }',
                                                'part = "t-target", supply = "1.8 mV" }'),
                                "bus[0].devices[1].supply", 11,
                                ["implausibly low for a logic rail (got '1.8 mV')",
                                 "did you mean '1.8 V'?"]),
    # a rail no unit slip explains gets no guess
    "tiny-supply": (ONE_BUS.replace('"3.3 V"', '"0.0000001 V"').replace("PART", "t-target"),
                    "bus[0].supply", 8,
                    ["implausibly low for a logic rail (got '0.0000001 V')",
                     "expected at least 500 mV"]),
    "tolerance-too-wide": (ONE_BUS.replace('supply = "3.3 V"',
                                           'supply = "3.3 V"\nsupply_tolerance = "60 %"')
                           .replace("PART", "t-target"), "bus[0].supply_tolerance", 9,
                           ["(got '60 %')", "expected at least 0 % and at most 50 %"]),
    "quoted-number": (ONE_BUS.replace('protocol = "i2c"', 'protocol = "spi"\nspi_mode = "3"')
                      .replace("PART", "t-target"), "bus[0].spi_mode", 8,
                      ["not a whole number (got '3')", "expected a whole number, without quotes"]),
    # A bare number's unit as an engineer means it: an SPI clock of 20 is 20 MHz.
    "bare-spi-clock": (ONE_BUS.replace('protocol = "i2c"', 'protocol = "spi"\nclock = 20')
                       .replace("PART", "t-target"), "bus[0].clock", 8,
                       ['e.g. "20 MHz" or "20 kHz"']),
    "bare-i2c-clock": (ONE_BUS.replace('supply = "3.3 V"', 'supply = "3.3 V"\nclock = "400"')
                       .replace("PART", "t-target"), "bus[0].clock", 9,
                       ['e.g. "400 kHz" or "400 MHz"']),
    "bus-trace-with-segments": (SEGMENTS.replace('protocol = "i2c"\n', 'protocol = "i2c"\ntrace = '
                                                 '{ length = "5 cm", capacitance = "1 pF/cm" }\n'),
                                "bus[0].trace", 8, ["trace goes in the segments"]),
    # An empty id was taken: the check printed "PASS  (I2C)", and no coupling could name
    # the bus ("BUS.SIGNAL" with an empty BUS is refused as no line).
    "empty-bus-id": (ONE_BUS.replace('id = "b"', 'id = ""').replace("PART", "t-target"),
                     "bus[0].id", 6, ["text shorter than 1 character", "(got '')"]),
    # MOSI, MISO, SCK, SS: the older names were refused with no word of the new one
    "spi-signal-older-name": (ONE_BUS.replace('protocol = "i2c"', 'protocol = "spi"\nclock = '
                                              '"1 MHz"').replace("PART", "t-spi-only")
                              + 'lines.mosi = { length = "3 cm", capacitance = "1 pF/cm" }\n',
                              "bus[0].lines.mosi", 14,
                              ["unknown SPI signal (got 'mosi')", "mosi is named copi here"]),
    # a second SPI controller was left out of every line without a word
    "spi-second-controller": (SPI_TWO_CONTROLLERS, "bus[0].devices[2].role", 13,
                              ["a second controller on an SPI bus (got 'controller')",
                               "expected one controller per SPI bus",
                               "U1 is the bus's controller", 'role = "peripheral"']),
    # a target marked controller whose SCL only reads the line: nothing clocks the bus
    "i2c-controller-reads-scl": (ONE_BUS.replace('"t-ctrl-3v3"', '"t-target"')
                                 .replace("PART", "t-target"), "bus[0].devices[0].role", 10,
                                 ["a controller must pull SCL low",
                                  "t-target pin 'scl' (i2c-scl) has drive = \"input\"",
                                  "no device on this bus can pull SCL low"]),
    "translator-as-controller": (ONE_BUS.replace('"t-ctrl-3v3", role = "controller"',
                                                 '"t-fet-translator", side = "a", '
                                                 'role = "controller"')
                                 .replace("PART", "t-ctrl-3v3"), "bus[0].devices[0].role", 10,
                                 ["a controller must pull SCL low", "pass-transistor",
                                  "U2 can pull SCL low"]),
    "segment-not-joined": (SEGMENTS.replace(
        '  { ref = "Q1", part = "t-fet-translator", side = "b" },\n', ""),
        "bus[0].segment[1].devices", 17,
        ["no bridging part joins this segment to the controller's", "(got 'b-2')"]),
    "empty-segment-id": (SEGMENTS.replace('[[bus.segment]]\nsupply = "1.8 V"',
                                          '[[bus.segment]]\nid = ""\nsupply = "1.8 V"'),
                         "bus[0].segment[1].id", 17, ["text shorter than 1 character"]),
}

# ---------------------------------------------------------------- keys a protocol does not read
# invented test designs: an I2C and an SPI bus of built-in parts over one microstrip.  Each
# case gives a key the bus's protocol does not read (taken and ignored before, the result
# unchanged), or a value the engine refused later at the bus's header line.
GEOMETRY = """
[board.geometry.top]
kind = "microstrip"
width = "0.15 mm"
height = "0.1 mm"
er = 4.3
"""  # lines 5 to 9

I2C = GEOMETRY + """
[[bus]]
id = "i2c0"
protocol = "i2c"
supply = "3.3 V"
trace = { length = "25 cm", geometry = "top" }
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller" },
  { ref = "U2", part = "eeprom-i2c" },
]
"""  # trace at line 15, U2 at line 18

SPI = GEOMETRY + """
[[bus]]
id = "spi0"
protocol = "spi"
clock = "10 MHz"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller" },
  { ref = "U2", part = "nor-flash-spi" },
]
lines.sclk = { length = "5 cm", geometry = "top" }
"""  # clock at line 14, U2 at line 18, lines.sclk at line 20

_I2C_TRACE = 'trace = { length = "25 cm", geometry = "top" }'
_SPI_U2 = '{ ref = "U2", part = "nor-flash-spi" }'
_SCLK = 'lines.sclk = { length = "5 cm", geometry = "top" }'

BAD.update({
    "i2c-trace-series-resistor": (
        I2C.replace(_I2C_TRACE, _I2C_TRACE[:-2] + ', series_resistor = "10 kΩ" }'),
        "bus[0].trace.series_resistor", 15,
        ["only an SPI or GPIO line takes series_resistor (got '10 kΩ')",
         "belongs on a device: devices[N].series_resistor"]),
    "i2c-trace-extra-capacitance": (
        I2C.replace(_I2C_TRACE, _I2C_TRACE[:-2] + ', extra_capacitance = "10 nF" }'),
        "bus[0].trace.extra_capacitance", 15,
        ["only an SPI or GPIO line takes extra_capacitance (got '10 nF')",
         "belongs beside its trace: the bus's (or segment's) extra_capacitance"]),
    "segment-trace-extra-capacitance": (
        SEGMENTS.replace('supply = "1.8 V"\n', 'supply = "1.8 V"\ntrace = { length = "2 cm", '
                         'capacitance = "1 pF/cm", extra_capacitance = "5 pF" }\n'),
        "bus[0].segment[1].trace.extra_capacitance", 18,
        ["only an SPI or GPIO line takes extra_capacitance"]),
    "i2c-spi-mode": (I2C.replace('protocol = "i2c"', 'protocol = "i2c"\nspi_mode = 3'),
                     "bus[0].spi_mode", 14, ["only an SPI bus takes an spi_mode (got 3)"]),
    "spi-bus-trace": (SPI + 'trace = { length = "100 m", geometry = "top" }\n',
                      "bus[0].trace", 21,
                      ["a spi bus has no trace",
                       'lines.<signal> = { length = "10 cm", geometry = "NAME" }']),
    "spi-bus-extra-capacitance": (
        SPI + 'extra_capacitance = "1 µF"\n', "bus[0].extra_capacitance", 21,
        ["a spi bus has no extra_capacitance (got '1 µF')",
         "extra_capacitance of an SPI or GPIO bus belongs on a line: "
         "lines.<signal>.extra_capacitance"]),
    "spi-device-series-resistor": (
        SPI.replace(_SPI_U2, _SPI_U2[:-2] + ', series_resistor = "33 Ω" }'),
        "bus[0].devices[1].series_resistor", 18,
        ["only a device on an I2C or SMBus bus takes series_resistor (got '33 Ω')",
         "lines.<signal>.series_resistor"]),
    "spi-device-switched": (
        SPI.replace(_SPI_U2, _SPI_U2[:-2] + ", switched = true }"),
        "bus[0].devices[1].switched", 18,
        ["only a device on an I2C or SMBus bus takes switched (got true)",
         "the power-off check is made on I2C and SMBus buses only"]),
    # Z0 = delay / capacitance: the engine refused it at the bus's header line, naming a
    # parameter 'c' of its own
    "zero-capacitance-with-delay": (
        SPI + 'lines.cs = { length = "10 cm", capacitance = "0 pF/cm", delay = "60 ps/cm" }\n',
        "bus[0].lines.cs.capacitance", 21,
        ["a stretch with a delay per length needs a capacitance above 0",
         "expected more than 0 and at most", "an infinite one"]),
    "zero-capacitance-with-delay-in-route": (
        SPI.replace(_SCLK, 'lines.sclk = { route = [\n  { from = "U1", to = "U2", '
                           'length = "5 cm", capacitance = "0 pF/cm", delay = "6 ns/m" },\n]}'),
        "bus[0].lines.sclk.route[0].capacitance", 21,
        ["needs a capacitance above 0"]),
    # Z0 = delay / capacitance = 50 MΩ (a capacitance in fF/cm typed as 1.2e-06 pF/cm):
    # the solver had blamed the length, asking for more than 5.7 m of a 4 cm trace
    "impossible-impedance": (  # invented test input
        SPI + 'lines.cs = { length = "4 cm", capacitance = "1.2e-06 pF/cm", '
              'delay = "60 ps/cm" }\n',
        "bus[0].lines.cs.capacitance", 21,
        ["an impedance of 50 MΩ", "no board trace or cable has", "got '1.2 aF/cm'",
         "between 1 Ω and 1 kΩ: at 60 ps/cm a capacitance of 60 fF/cm to 60 pF/cm"]),
    "faster-than-light": (  # invented test input: 20 ps/cm, 1.5 c
        SPI + 'lines.cs = { length = "4 cm", capacitance = "0.4 pF/cm", '
              'delay = "20 ps/cm" }\n',
        "bus[0].lines.cs.delay", 21,
        ["shorter than light's in vacuum (1/c, 3.3356 ns/m) by more than a rounded "
         "figure's 2 %", "got '20 ps/cm'",
         # derived from 1/c = 33.356 ps/cm less 2 % (pinlib.core.quantity.DELAY_MIN)
         "at least 32.7 ps/cm"]),
    "faster-than-light-beyond-rounding": (  # invented test input: 32 ps/cm, 4 % under 1/c
        SPI + 'lines.cs = { length = "4 cm", capacitance = "0.11 pF/cm", '
              'delay = "32 ps/cm" }\n',
        "bus[0].lines.cs.delay", 21,
        ["shorter than light's in vacuum", "got '32 ps/cm'"]),
    "impossible-impedance-low-in-route": (  # invented test input: 0.5 Ω
        SPI.replace(_SCLK, 'lines.sclk = { route = [\n  { from = "U1", to = "U2", '
                           'length = "5 cm", capacitance = "120 pF/cm", delay = "6 ns/m" },\n]}'),
        "bus[0].lines.sclk.route[0].capacitance", 21,
        ["an impedance of 500 mΩ"]),
    # the engine refused it when the bus was evaluated, at the bus's header line
    "unknown-method": (GEOMETRY.replace("er = 4.3", 'er = 4.3\nmethod = "ipc2141"')
                       + SPI[len(GEOMETRY):], "board.geometry.top.method", 10,
                       ["unknown microstrip method (got 'ipc2141')",
                        "expected one of 'hammerstad-jensen' (the default), 'ipc-2141'"]),
    "unknown-stripline-method": (
        GEOMETRY.replace("microstrip", "stripline").replace(
            "er = 4.3", 'er = 4.3\nmethod = "hammerstad-jensen"') + SPI[len(GEOMETRY):],
        "board.geometry.top.method", 10,
        ["unknown stripline method (got 'hammerstad-jensen')",
         "'wheeler' (the default), 'cohn', 'ipc-2141'"]),
    # a table's place written as a value: the form it takes
    "trace-as-a-length": (I2C.replace(_I2C_TRACE, 'trace = "25 cm"'), "bus[0].trace", 15,
                          ["not a table (got '25 cm')",
                           'expected { length = "25 cm", geometry = "NAME" }']),
    "line-as-a-length": (SPI.replace(_SCLK, 'lines.sclk = "5 cm"'), "bus[0].lines.sclk", 20,
                         ['expected { length = "5 cm", geometry = "NAME" }']),
    "device-as-a-name": (I2C.replace('  { ref = "U2", part = "eeprom-i2c" },', '  "U2",'),
                         "bus[0].devices[1]", 18,
                         ['not a table (got \'U2\')', 'expected { ref = "U2", part = "PART-ID" }']),
})


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


def test_an_empty_title_is_refused(tmp_path, capsys):
    # Once taken: the closing line read "PASS : 0 pass, ..." for a board with no name.
    path = tmp_path / "bad.toml"
    path.write_text(HEAD.replace('title = "bad design"', 'title = ""'), encoding="utf-8")
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert f"{path}:2, field 'title': text shorter than 1 character" in err


@pytest.mark.parametrize(("key", "written"), [
    ("title", 'expected title = "'), ("format", 'expected format = "pinlib.design/1"')])
def test_a_missing_title_or_format_is_named_at_the_top_of_the_file(tmp_path, capsys, key,
                                                                       written):
    # invented test design: the file lacks one of its two required keys; the error had no
    # line, and for the title no word of what to write
    path = write(tmp_path, ONE_BUS.replace("PART", "t-target"))
    text = path.read_text(encoding="utf-8")
    path.write_text("\n".join(ln for ln in text.splitlines() if not ln.startswith(key + " ")),
                    encoding="utf-8")
    with pytest.raises(DesignError) as info:
        load_design(path)
    err = info.value
    assert (err.file, err.line, err.field) == (str(path), 1, key)
    assert written in err.message
    assert main(["check", str(path)]) == 2
    assert f"{path}:1, field '{key}'" in capsys.readouterr().err


def test_an_air_line_written_with_a_rounded_delay_is_taken_and_evaluated(tmp_path):
    # invented test design: an air-spaced line, 33 ps/cm (1/c = 33.356 ps/cm rounded to
    # two digits, 1 % under it) was refused as faster than light
    from pinlib.engines.dispatch import check_design

    path = write(tmp_path, SPI + 'lines.cs = { length = "4 cm", capacitance = "0.11 pF/cm", '
                                 'delay = "33 ps/cm" }\n')
    design = load_design(path)
    (section,) = design.bus("spi0").lines["cs"].sections
    # published: SI Brochure, 9th edition, table 7: p = 1e-12, c = 1e-2
    assert section.delay == pytest.approx(33e-12 / 1e-2, rel=1e-12)
    assert check_design(design).buses  # the line engine takes it too


def test_a_capacitance_of_zero_without_a_delay_is_still_taken(tmp_path):
    # invented test design: a stretch that loads nothing (no delay: a lumped 0 pF) has no
    # impedance to be infinite; only beside a delay is a capacitance of 0 refused
    path = write(tmp_path, SPI.replace(_SCLK, 'lines.sclk = { length = "5 cm", '
                                             'capacitance = "0 pF/cm" }'))
    line = load_design(path).bus("spi0").lines["sclk"]
    assert [s.capacitance for s in line.sections] == [0.0]


def test_the_keys_a_protocol_reads_still_load(tmp_path):
    # invented test designs: each refused key written where its protocol reads it
    i2c = I2C.replace('supply = "3.3 V"', 'supply = "3.3 V"\nextra_capacitance = "10 pF"')
    i2c = i2c.replace('part = "eeprom-i2c" }', 'part = "eeprom-i2c", series_resistor = "100 Ω", '
                                              "switched = true }")
    bus = load_design(write(tmp_path, i2c)).bus("i2c0")
    assert bus.segments[0].extra_capacitance == pytest.approx(10e-12)
    assert [(d.series_resistor, d.switched) for d in bus.devices] == [
        (None, False), (pytest.approx(100.0), True)]
    spi = SPI.replace('clock = "10 MHz"', 'clock = "10 MHz"\nspi_mode = 3').replace(
        _SCLK, 'lines.sclk = { length = "5 cm", geometry = "top", series_resistor = "33 Ω", '
               'extra_capacitance = "4 pF" }')
    bus = load_design(write(tmp_path, spi)).bus("spi0")
    assert bus.spi_mode == 3
    sclk = bus.lines["sclk"]
    assert (sclk.series_resistor, sclk.extra_capacitance) == (pytest.approx(33.0),
                                                              pytest.approx(4e-12))
    # and their defaults where a line leaves them out
    bare = load_design(write(tmp_path, SPI)).bus("spi0")
    assert (bare.spi_mode, bare.lines["sclk"].series_resistor,
            bare.lines["sclk"].extra_capacitance) == (0, "none", 0.0)


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


# ---------------------------------------------------------------- issue 13, items 14-18
def test_part_whose_file_does_not_validate_names_the_broken_file(tmp_path, capsys):
    # 13.14: `c_in = 10` without a unit is the error, at the part file's line and field,
    # not "unknown part ... closest: ..."
    team = tmp_path / "team"
    team.mkdir()
    (team / "adc.toml").write_text(
        (PARTS / "t-target.toml").read_text(encoding="utf-8")
        .replace('id = "t-target"', 'id = "adc-team"'), encoding="utf-8")
    text = (team / "adc.toml").read_text(encoding="utf-8")
    first = text.index("c_in = ")
    end = text.index("\n", first)
    (team / "adc.toml").write_text(text[:first] + "c_in = 10" + text[end:], encoding="utf-8")
    line = text[:first].count("\n") + 1
    body = ONE_BUS.replace("PART", "adc-team")
    path = tmp_path / "bad.toml"
    path.write_text(HEAD.replace("]\n", f', "{team.as_posix()}"]\n', 1) + body,
                    encoding="utf-8")
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert f"{team / 'adc.toml'}:{line}" in err
    assert "part 'adc-team' does not load: a bare number has no unit" in err
    assert "unknown part" not in err
    assert f"named at {path}:11, field 'bus[0].devices[1].part'" in err


DUPLICATES = """
[[bus]]
id = "i"
protocol = "i2c"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "t-ctrl-3v3", role = "controller" },
  { ref = "U2", part = "t-target" },
  { ref = "U2", part = "OTHER" },
]
"""


@pytest.mark.parametrize(("other", "words"), [
    ("t-target", ["one reference designator twice on one bus", "'U2'",
                  "also at {path}:11, field 'bus[0].devices[1].ref' as t-target"]),
    ("t-target-6ma", ["one reference designator names two parts (t-target-6ma here, t-target "
                      "before)", "also at {path}:11"]),
])
def test_duplicate_reference_names_both_places(tmp_path, other, words):
    # 13.16: U2 twice on one bus is an error naming the two lines
    path = write(tmp_path, DUPLICATES.replace("OTHER", other))
    with pytest.raises(DesignError) as info:
        load_design(path)
    assert info.value.line == 12 and info.value.field == "bus[0].devices[2].ref"
    for w in words:
        assert w.format(path=path) in info.value.message


def test_one_chip_on_two_buses_is_one_part(tmp_path):
    # 13.16: U1 on an I2C and an SPI bus as one part is one chip on two buses (allowed);
    # as two parts it is an error naming both places
    spi = """
[[bus]]
id = "s"
protocol = "spi"
clock = "10 MHz"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "CTRL", role = "controller" },
  { ref = "U7", part = "nor-flash-spi" },
]
lines.sclk = { length = "3 cm", capacitance = "1 pF/cm" }
"""
    body = ONE_BUS.replace("PART", "t-target").replace("t-ctrl-3v3", "mcu-3v3")
    d = load_design(write(tmp_path, body + spi.replace("CTRL", "mcu-3v3")))
    assert [b.devices[0].ref for b in d.buses] == ["U1", "U1"]
    with pytest.raises(DesignError) as info:
        load_design(write(tmp_path, body + spi.replace("CTRL", "mcu-5v")))
    assert "names two parts (mcu-5v here, mcu-3v3 before)" in info.value.message
    assert f"also at {tmp_path / 'bad.toml'}:10, field 'bus[0].devices[0].ref'" in \
        info.value.message


def test_bridge_once_per_side_is_not_a_duplicate(tmp_path):
    d = load_design(write(tmp_path, SEGMENTS.replace(
        '{ ref = "U3", part = "t-sensor-1v8" },',
        '{ ref = "U3", part = "t-sensor-1v8" },\n  { ref = "Q1", part = "t-fet-translator", '
        'side = "a" },')))
    assert sorted(dev.side for dev in d.buses[0].devices if dev.ref == "Q1") == ["a", "b"]


@pytest.mark.parametrize(("body", "field", "closest"), [
    (ONE_BUS.replace("PART", "t-target").replace('supply = "3.3 V"', 'suply = "3.3 V"'),
     "bus[0].suply", "supply"),
    (ONE_BUS.replace('part = "PART"', 'prat = "t-target"'), "bus[0].devices[1].prat", "part"),
])
def test_misspelt_design_key_names_the_design_fields(tmp_path, body, field, closest):
    # 13.17: the design format's fields at that place, and the closest one
    with pytest.raises(DesignError) as info:
        load_design(write(tmp_path, body))
    msg = info.value.message
    assert info.value.field == field
    assert "a field of the design format here:" in msg and "part format" not in msg
    assert msg.endswith(f"closest: {closest}")


def test_a_missing_field_of_a_few_choices_names_them(tmp_path):
    # "field 'bus[0].protocol': a required field is missing", and nothing said what
    # to write there
    path = write(tmp_path, ONE_BUS.replace("PART", "t-target").replace(
        'protocol = "i2c"\n', ""))
    with pytest.raises(DesignError) as info:
        load_design(path)
    assert info.value.problem == "a required field is missing"
    assert info.value.field == "bus[0].protocol"
    assert info.value.expected == "'i2c', 'smbus', 'spi' or 'gpio'"


def test_an_empty_design_file_is_said_to_be_empty(tmp_path, capsys):
    # it read "field 'format': not a design file", as if it held another format
    path = tmp_path / "d.toml"
    path.write_text("# to write\n", encoding="utf-8")
    with pytest.raises(DesignError) as info:
        load_design(path)
    assert info.value.problem == "the file holds nothing (empty, or comments only)"
    assert info.value.expected == 'format = "pinlib.design/1"'
    assert main(["check", str(path)]) == 2
    assert "not a design file" not in capsys.readouterr().err


def test_misspelt_title_is_named_before_the_missing_title(tmp_path):
    path = tmp_path / "d.toml"
    path.write_text(HEAD.replace("title =", "titel =") + ONE_BUS.replace("PART", "t-target"),
                    encoding="utf-8")
    with pytest.raises(DesignError, match="unknown field.*closest: title"):
        load_design(path)


def test_a_part_file_named_as_a_library_folder_is_told_to_name_its_folder(
        tmp_path, monkeypatch, capsys):
    # a person names the team part's file where its folder belongs: it read "library
    # folder not found" (the file is there) or "does not exist" for the design's line
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    team = tmp_path / "team"
    team.mkdir()
    part_file = team / "x.toml"
    part_file.write_text("", encoding="utf-8")
    good = write(tmp_path, ONE_BUS.replace("PART", "t-target"))
    assert main(["check", str(good), "--library", str(part_file)]) == 2
    err = " ".join(capsys.readouterr().err.split())
    assert "field '--library': a file where a library folder belongs" in err, err
    assert f"name the folder that holds the part files: {team}" in err
    assert "not found" not in err
    monkeypatch.setenv("PINLIB_LIBRARY", str(part_file))
    assert main(["parts", "list"]) == 2
    err = " ".join(capsys.readouterr().err.split())
    assert "field 'PINLIB_LIBRARY': a file where a library folder belongs" in err, err
    monkeypatch.delenv("PINLIB_LIBRARY")
    own = tmp_path / "own.toml"
    own.write_text(HEAD.replace("library = [", 'library = ["team/x.toml", ')
                   + ONE_BUS.replace("PART", "t-target"), encoding="utf-8")
    with pytest.raises(DesignError) as info:
        load_design(own)
    assert info.value.problem == "a file where a library folder belongs"
    assert info.value.field == "library[0]" and info.value.line == 3
    assert info.value.hint == "name the folder that holds the part files: team"


def test_missing_library_folder_blames_its_source(tmp_path, monkeypatch, capsys):
    # 13.18: the design's own line, --library or PINLIB_LIBRARY, whichever named it; exit 2
    from pinlib.core.errors import InputError

    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    good = write(tmp_path, ONE_BUS.replace("PART", "t-target"))
    with pytest.raises(InputError) as info:
        load_design(good, library_folders=[tmp_path / "gone"])
    assert info.value.field == "--library" and info.value.line is None
    monkeypatch.setenv("PINLIB_LIBRARY", str(tmp_path / "away"))
    assert main(["check", str(good)]) == 2
    assert "field 'PINLIB_LIBRARY': library folder not found" in capsys.readouterr().err
    assert main(["parts", "list"]) == 2
    assert "PINLIB_LIBRARY names it" in capsys.readouterr().err
    monkeypatch.delenv("PINLIB_LIBRARY")
    assert main(["parts", "list", "--library", str(tmp_path / "gone")]) == 2
    assert "field '--library': library folder not found" in capsys.readouterr().err
    own = tmp_path / "own.toml"
    own.write_text(HEAD.replace("library = [", 'library = ["nowhere", ')
                   + ONE_BUS.replace("PART", "t-target"), encoding="utf-8")
    with pytest.raises(DesignError) as info:
        load_design(own)
    assert (info.value.line, info.value.field) == (3, "library[0]")


@pytest.mark.skipif(os.name != "posix", reason="POSIX system folders")
def test_a_system_folder_as_library_blames_its_source(tmp_path, monkeypatch, capsys):
    # Once always the design's `library` line ("d.toml, field 'library'"), even for a
    # folder that --library or PINLIB_LIBRARY named, and the design named none.
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    good = write(tmp_path, ONE_BUS.replace("PART", "t-target"))
    assert main(["check", str(good), "--library", "/etc"]) == 2
    err = capsys.readouterr().err
    assert "field '--library': a library folder may not be a system folder" in err
    assert "--library names it" in err and f"{good}, field 'library'" not in err
    monkeypatch.setenv("PINLIB_LIBRARY", "/usr")
    assert main(["check", str(good)]) == 2
    err = capsys.readouterr().err
    assert "field 'PINLIB_LIBRARY': a library folder may not be a system folder" in err
    monkeypatch.delenv("PINLIB_LIBRARY")
    own = tmp_path / "own.toml"
    own.write_text(HEAD.replace('"]\n', '", "/etc"]\n', 1) + ONE_BUS.replace("PART", "t-target"),
                   encoding="utf-8")
    with pytest.raises(DesignError) as info:
        load_design(own, library_folders=[tmp_path])
    assert (info.value.line, info.value.field) == (3, "library")


def test_a_swap_keeping_the_other_buses_builds_the_same_design():
    # derived from the buses' tables: a bus without the swapped reference is built from
    # the same tables, so the design's own bus stands for it (the candidates' ranking)
    design = load_design(Path(__file__).resolve().parents[1] / "workbooks" / "designs"
                         / "demo-board.toml")
    for ref, part in (("U12", "adc-spi"), ("U4", "rtc-i2c"), ("U1", "mcu-3v3")):
        full = design.with_parts({ref: part})
        kept = design.with_parts({ref: part}, keep_others=True)
        assert kept.buses == full.buses and kept.couplings == full.couplings
        mine = [b.id for b in design.buses if any(d.ref == ref for d in b.devices)]
        assert mine and all((b is o) == (b.id not in mine)
                            for b, o in zip(kept.buses, design.buses, strict=True))
    with pytest.raises(DesignError):
        design.with_parts({"U99": "adc-spi"}, keep_others=True)


def test_one_folder_written_as_library_text_gets_the_list_to_write(tmp_path):
    # library = "parts" said only "not an array"
    path = tmp_path / "bad.toml"
    path.write_text(HEAD.replace(f'library = ["{PARTS.as_posix()}"]', 'library = "parts"')
                    + ONE_BUS.replace("PART", "t-target"), encoding="utf-8")
    with pytest.raises(DesignError) as info:
        load_design(path)
    err = info.value
    assert (err.field, err.line) == ("library", 3)
    assert 'expected a list, e.g. ["parts"]' in err.message


# ---------------------------------------------------------------- controllers and roles
def test_several_controllers_stay_legal_where_the_bus_allows_them(tmp_path):
    # invented designs: an I2C bus with two controllers (multi-controller arbitration,
    # UM10204 §3.1.7: legal), and a GPIO line that two parts marked controller share
    body = ONE_BUS.replace("PART", "t-ctrl-3v3").replace(
        '{ ref = "U2", part = "t-ctrl-3v3" }',
        '{ ref = "U2", part = "t-ctrl-3v3", role = "controller" }')
    d = load_design(write(tmp_path, body))
    assert [x.ref for x in d.buses[0].controllers] == ["U1", "U2"]
    gpio = """
[[bus]]
id = "g"
protocol = "gpio"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller", pin = "reset" },
  { ref = "U2", part = "mcu-3v3", role = "controller", pin = "reset" },
]
lines.reset = { length = "5 cm", capacitance = "1 pF/cm" }
"""
    d = load_design(write(tmp_path, gpio))
    assert len(d.buses[0].controllers) == 2


def test_a_second_spi_microcontroller_described_as_a_load_is_on_the_lines(tmp_path):
    # The fix the refusal names: U3 as role = "peripheral" loads the clock line, where
    # the second controller used to be left out (the same load capacitance as without it)
    from pinlib.engines.dispatch import check_design

    def sclk_load(body):
        res = check_design(load_design(write(tmp_path, body)))
        (sclk,) = [ln for ln in res.buses[0].lines if ln.signal == "sclk"]
        return sclk.figures["load_capacitance"].value

    as_load = SPI_TWO_CONTROLLERS.replace('{ ref = "U3", part = "mcu-3v3", role = "controller" }',
                                          '{ ref = "U3", part = "mcu-3v3" }')
    without = SPI_TWO_CONTROLLERS.replace(
        '  { ref = "U3", part = "mcu-3v3", role = "controller" },\n', "")
    # derived: U3's SCLK pin adds its c_in to the line the controller drives
    assert sclk_load(as_load) > sclk_load(without)


_CROSSED = """format = "pinlib.part/1"
id = "t-crossed"
title = "Target whose fixed v_il meets 0.7 VDD at 3.57 V (invented test part)"
category = "memory"
extends = "eeprom-i2c"
provenance = { basis = "estimate", source = "invented test part" }

[pins.sda]
v_il = "2.5 V"
v_ih = "0.7 VDD"
"""


@pytest.mark.parametrize("supply, refused", [("3.3 V", True), ("5 V", False)])
def test_a_part_whose_input_levels_cross_on_its_rail_is_refused_there(tmp_path, supply,
                                                                      refused):
    # derived: v_il 2.5 V lies above v_ih = 0.7·3.3 V = 2.31 V, below 0.7·5 V = 3.5 V
    # (invented test part); the part file itself loads (the two cross at some supplies)
    (tmp_path / "team").mkdir()
    (tmp_path / "team" / "t-crossed.toml").write_text(_CROSSED, encoding="utf-8")
    path = tmp_path / "d.toml"
    path.write_text(f"""format = "pinlib.design/1"
title = "crossed levels (invented test design)"
library = ["team"]

[[bus]]
id = "b"
protocol = "i2c"
supply = "{supply}"
pullup = "4.7 kΩ"
trace = {{ length = "5 cm", capacitance = "1 pF/cm", delay = "60 ps/cm" }}
devices = [
  {{ ref = "U1", part = "mcu-3v3", role = "controller", supply = "3.3 V" }},
  {{ ref = "U2", part = "t-crossed" }},
]
""", encoding="utf-8")
    if not refused:
        assert load_design(path).bus("b").devices[1].part_id == "t-crossed"
        return
    with pytest.raises(DesignError) as info:
        load_design(path)
    err = info.value
    assert err.field == "bus[0].devices[1].part" and err.line == 13  # U2's line
    assert "v_il 2.5 V above v_ih 2.31 V" in str(err) and "t-crossed.toml" in str(err)
