"""Trace geometries at and past the edge of a named method: a design whose IPC-2141 formula
gives no impedance is refused at the geometry's width, naming the default method; one
merely outside the formula's quoted range gives numbers and a note; the notes of a line
name it once."""

from __future__ import annotations

import math
import textwrap

import pytest

from pinlib.cli import main
from pinlib.core.errors import DesignError
from pinlib.engines.dispatch import check_file

GEOMETRY = """\
format = "pinlib.design/1"
title = "wide traces"

[board.geometry.w]
kind = "{kind}"
width = "{width}"
{height}
er = 4.2
method = "{method}"
"""

I2C = """
[[bus]]
id = "i2c"
protocol = "i2c"
supply = "3.3 V"
trace = { length = "10 cm", geometry = "w" }
devices = [{ ref = "U1", part = "mcu-3v3", role = "controller" },
           { ref = "U2", part = "eeprom-i2c" }]
"""

GPIO = """
[[bus]]
id = "g"
protocol = "gpio"
supply = "3.3 V"
devices = [{ref = "U1", part = "mcu-3v3", role = "controller", pin = "cs"},
           {ref = "U3", part = "adc-spi", pin = "cs"}]
lines.cs = { length = "1 cm", geometry = "w" }
"""


def _write(tmp_path, body, *, kind="microstrip", width="1 mm", height='height = "0.1 mm"',
           method="ipc-2141"):
    path = tmp_path / "d.toml"
    text = GEOMETRY.format(kind=kind, width=width, height=height, method=method) + body
    path.write_text(textwrap.dedent(text), encoding="utf-8")
    return path


@pytest.mark.parametrize("body", [I2C, GPIO])
def test_ipc_microstrip_with_no_impedance_is_refused_at_its_width(tmp_path, body):
    # derived: 0.8 * 1 mm + 35 µm (the default copper) = 835 µm is not below
    # 5.98 * 0.1 mm = 598 µm, so ln(5.98h/(0.8w + t)) <= 0; before, the I2C bus gave
    # "cb ... (got nan)" and the GPIO line "nan time steps"
    with pytest.raises(DesignError) as info:
        check_file(_write(tmp_path, body))
    err = info.value
    assert err.file.endswith("d.toml") and err.line == 6  # width = "1 mm"
    assert err.field == "board.geometry.w.width"
    assert err.value == "1 mm"
    assert "704 µm" in err.expected  # (598 - 35)/0.8
    assert 'method = "hammerstad-jensen"' in err.hint
    assert "nan" not in err.message.lower() and "time steps" not in err.message


def test_ipc_microstrip_thickness_alone_past_the_limit_names_thickness(tmp_path):
    # derived: 5.98 * 20 µm = 120 µm of copper leaves no width at all
    path = _write(tmp_path, GPIO, width="0.1 mm",
                  height='height = "0.02 mm"\nthickness = "0.2 mm"')
    with pytest.raises(DesignError) as info:
        check_file(path)
    assert info.value.field == "board.geometry.w.thickness"
    assert "120 µm" in info.value.expected


def test_ipc_stripline_with_no_impedance_is_refused(tmp_path):
    # derived: 0.8 * 1 mm + 35 µm = 835 µm against 1.9 * 0.4 mm = 760 µm
    path = _write(tmp_path, GPIO, kind="stripline", height='spacing = "0.4 mm"')
    with pytest.raises(DesignError) as info:
        check_file(path)
    assert info.value.field == "board.geometry.w.width"
    assert 'method = "wheeler"' in info.value.hint


def test_the_command_line_says_it_in_one_line(tmp_path, capsys):
    path = _write(tmp_path, I2C)
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert "Traceback" not in err and "nan" not in err.lower()
    assert "d.toml:6" in err and "board.geometry.w.width" in err


def test_a_wide_ipc_microstrip_still_under_its_limit_gives_numbers_and_a_note(tmp_path):
    # 0.7 mm over 0.1 mm: w/h = 7, outside 0.1 < w/h < 2 but the logarithm still positive
    result = check_file(_write(tmp_path, I2C + GPIO, width="0.7 mm"))
    i2c, gpio = result.results()
    notes = [n for n in i2c.notes if "ipc-2141" in n]
    assert notes and "0.1 < w/h < 2" in notes[0] and notes[0].startswith("geometry 'w': ")
    cb = i2c.figures["bus_capacitance"].value
    # the IPC Z0 (0.185 Ω with 35 µm copper) and its 338 pF/cm are the formula's own,
    # warned, not refused: finite and positive
    assert math.isfinite(cb) and cb > 0
    line = gpio.lines[0]
    assert [n for n in line.notes if "ipc-2141" in n][0].startswith("geometry 'w': ")


def test_a_cohn_note_names_the_line_once_and_the_zero_thickness(tmp_path, capsys):
    path = _write(tmp_path, GPIO, kind="stripline", width="0.15 mm",
                  height='spacing = "0.5 mm"\nthickness = "18 µm"', method="cohn")
    assert main(["check", str(path), "--detail"]) in (0, 1)
    out = " ".join(capsys.readouterr().out.split())
    assert ("cs: geometry 'w': stripline method 'cohn' is exact for a strip of zero "
            "thickness: thickness 18 µm is not taken into account") in out
    assert "cs: cs:" not in out and "0 <= t/b <= 0" not in out
