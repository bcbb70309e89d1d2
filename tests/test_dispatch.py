"""pinlib.engines.dispatch: an error an engine meets names the file and line it comes from.

Each case once ended in a message naming no file (issue 14, item 7): a value of a part
refused at the bus's supply is placed at the part file's line of that pin, with the
design's bus line in the hint; any other error of an engine at the design's bus line.
Parts and designs here are invented for the tests.
"""

from __future__ import annotations

import textwrap
import warnings

import pytest

from pinlib.core.errors import InputError, PinlibError
from pinlib.engines.dispatch import check_design
from pinlib.model.design import load_design

DESIGN = """\
format = "pinlib.design/1"
title = "invented SPI board"
library = ["team"]

[board.geometry.g]
kind = "microstrip"
width = "0.2 mm"
height = "0.18 mm"
er = 4.2

[[bus]]
id = "flash"
protocol = "spi"
clock = "20 MHz"
supply = "{supply}"
devices = [
  {{ ref = "U1", part = "{controller}", role = "controller" }},
  {{ ref = "U7", part = "t-flash" }},
]
lines.sclk = {{ length = "6 cm", geometry = "g" }}
lines.cipo = {{ length = "6 cm", geometry = "g" }}
"""

PART = """\
format = "pinlib.part/1"
id = "t-flash"
title = "Invented flash for the tests"
category = "memory"
extends = "nor-flash-spi"

[pins.cipo]
{pin}
"""


def _check(tmp_path, *, supply="3.3 V", pin='r_out = { value = "35 Ω", source = "test" }',
           controller="mcu-3v3"):
    (tmp_path / "team").mkdir(exist_ok=True)
    (tmp_path / "team" / "t-flash.toml").write_text(PART.format(pin=textwrap.dedent(pin)),
                                                     encoding="utf-8")
    design = tmp_path / "board.toml"
    design.write_text(DESIGN.format(supply=supply, controller=controller), encoding="utf-8")
    with warnings.catch_warnings():
        warnings.simplefilter("error")  # no RuntimeWarning on the way either
        with pytest.raises(PinlibError) as info:
            check_design(load_design(design))
    return info.value, design


@pytest.mark.parametrize(("pin", "field", "line"), [
    ('v_ol = "0 V"\ni_ol = "4 mA"', "pins.cipo.v_ol", 8),    # once: field 'v_ol' only
    ('v_ol = "0.4 V"\ni_ol = "1e-320 A"', "pins.cipo.r_out_dc", 7),  # once: a numpy array
])
def test_a_pin_value_refused_at_the_supply_names_the_part_file_and_line(tmp_path, pin, field,
                                                                       line):
    err, design = _check(tmp_path, pin=pin)
    assert (err.file, err.line, err.field) == (str(tmp_path / "team" / "t-flash.toml"), line,
                                               field)
    assert f"t-flash as U7 on bus 'flash' at its supply 3.3 V ({design}:11)" in err.message
    assert "array" not in err.message


def test_a_supply_too_low_for_a_part_names_the_pin_and_the_bus_line(tmp_path):
    # an SPI supply of 0.5 V (the lowest rail a design takes): the generic peripheral's
    # VDD - 0.2 V (300 mV) lies under its 0.4 V VOL there, which the design refuses at
    # the device's line, naming the pin, the rail and the part's file (the 5 V
    # controller's negative VDD - 0.8 V is the driver model's to refuse, at its field)
    err, design = _check(tmp_path, supply="0.5 V", controller="mcu-5v")
    assert err.file == str(design) and err.field.endswith(".part") and err.line is not None
    assert "v_oh 300 mV at or below v_ol 400 mV on this device's 500 mV rail" in err.message
    assert "spi-peripheral.toml" in err.message


def test_any_other_engine_error_is_placed_at_the_bus(tmp_path, monkeypatch):
    from pinlib.engines import pushpull

    def refuse(bus, design):
        raise InputError("a refused computed value", field="x_computed")

    monkeypatch.setattr(pushpull, "evaluate_bus", refuse)
    err, design = _check(tmp_path)
    assert (err.file, err.line, err.field) == (str(design), 11, "bus[0]")
    assert "in the value 'x_computed' computed from it" in err.message


def test_stripline_spacing_below_the_copper_is_refused_at_its_line(tmp_path):
    # once: "field 't': parameter 't' is out of range", no file
    design = tmp_path / "board.toml"
    design.write_text(DESIGN.format(supply="3.3 V", controller="mcu-3v3").replace(
        'kind = "microstrip"\nwidth = "0.2 mm"\nheight = "0.18 mm"',
        'kind = "stripline"\nwidth = "0.2 mm"\nspacing = "0.02 mm"\nthickness = "35 µm"'),
        encoding="utf-8")
    (tmp_path / "team").mkdir()
    with pytest.raises(PinlibError) as info:
        load_design(design)
    err = info.value
    assert (err.file, err.line, err.field) == (str(design), 8, "board.geometry.g.spacing")
    assert "(got '20 µm'); expected more than the copper thickness, 35 µm" in err.message


def test_a_device_supply_is_named_where_the_design_sets_it(tmp_path):
    # a doubled device list whose devices carry their own supply: 0 V is refused at the
    # device's line; a supply too low for the part's levels names that line in the hint
    board = DESIGN.format(supply="3.3 V", controller="mcu-3v3").replace(
        '{ ref = "U7", part = "t-flash" },',
        '{ ref = "U7", part = "t-flash", supply = "0 V" },\n'
        '  { ref = "U8", part = "t-flash", supply = "0 V" },')
    design = tmp_path / "board.toml"
    design.write_text(board, encoding="utf-8")
    (tmp_path / "team").mkdir()
    (tmp_path / "team" / "t-flash.toml").write_text(
        PART.format(pin='r_out = { value = "35 Ω", source = "test" }\n'
                        'v_oh = { value = "VDD - 0.8 V", source = "test" }'),
        encoding="utf-8")
    with pytest.raises(PinlibError) as info:
        load_design(design)
    err = info.value
    assert (err.file, err.line, err.field) == (str(design), 18, "bus[0].devices[1].supply")
    # the lowest rail a design takes, 0.5 V, under the invented part's VDD - 0.8 V
    design.write_text(board.replace('"0 V"', '"0.5 V"'), encoding="utf-8")
    with pytest.raises(PinlibError) as info:
        check_design(load_design(design))
    assert info.value.file.endswith(".toml") and info.value.line
    assert f"at its supply 500 mV ({design}:18)" in info.value.message
