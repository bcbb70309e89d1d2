"""Trace geometries at and past the edge of a named method: a design whose IPC-2141 formula
gives no impedance is refused at the geometry's width, naming the default method; one
merely outside the formula's quoted range gives numbers and a note; the notes of a line
name it once."""

from __future__ import annotations

import textwrap

from pinlib.cli import main

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


def test_a_cohn_note_names_the_line_once_and_the_zero_thickness(tmp_path, capsys):
    path = _write(tmp_path, GPIO, kind="stripline", width="0.15 mm",
                  height='spacing = "0.5 mm"\nthickness = "18 µm"', method="cohn")
    assert main(["check", str(path), "--detail"]) in (0, 1)
    out = " ".join(capsys.readouterr().out.split())
    assert "cs: geometry 'w': stripline method 'cohn' holds only at t/b = 0" in out
    assert "cs: cs:" not in out and "0 <= t/b <= 0" not in out
