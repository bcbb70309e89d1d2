"""The line's Z0 and the series resistor "auto" chooses on a route whose stretches differ
in impedance, and the words the engine says about them (the audit of push-pull routes).

The designs are invented test data: the parts of ``tests/data/pushpull`` (pp-ctrl drives
through 20 Ω, pp-periph's CIPO through 30 Ω) and per-length stretches whose Z0 is
``delay / capacitance``."""

from __future__ import annotations

from pathlib import Path

import pytest

from pinlib.core import eseries
from pinlib.engines.dispatch import check_design
from pinlib.model.design import load_design

PARTS = Path(__file__).parent / "data" / "pushpull"
R_CTRL = 20.0  # pp-ctrl r_out (invented test data)
R_PERIPH = 30.0  # pp-periph cipo r_out (invented test data)

# invented test data: 16 cm of 50 Ω (60 ps/cm over 1.2 pF/cm) from the driver, then
# 4 cm of 80 Ω (60 ps/cm over 0.75 pF/cm)
NEAR = ('{ from = "U1", to = "U2", length = "16 cm", capacitance = "1.2 pF/cm", '
        'delay = "60 ps/cm" }')
FAR = ('{ from = "U2", to = "U3", length = "4 cm", capacitance = "0.75 pF/cm", '
       'delay = "60 ps/cm" }')
Z_NEAR, Z_FAR = 50.0, 80.0  # derived: 60 / 1.2 and 60 / 0.75


def _gpio(tmp_path, *stretches, extra="", length=None):
    line = (f'length = "{length}", capacitance = "1 pF/cm"' if length else
            'series_resistor = "auto", route = [\n  ' + ",\n  ".join(stretches) + "\n]")
    text = f"""format = "pinlib.design/1"
title = "route termination test (invented)"
library = ["{PARTS.as_posix()}"]

[[bus]]
id = "g"
protocol = "gpio"
supply = "3.3 V"
devices = [
  {{ ref = "U1", part = "pp-ctrl", role = "controller", pin = "reset" }},
  {{ ref = "U2", part = "pp-periph", pin = "reset" }},
  {{ ref = "U3", part = "pp-periph", pin = "reset" }},
]
lines.reset = {{ {line}{extra} }}
"""
    return _run(tmp_path, text)


def _run(tmp_path, text):
    path = tmp_path / "d.toml"
    path.write_text(text, encoding="utf-8")
    bus = check_design(load_design(path)).buses[0]
    return bus.lines[0], bus


def _auto_note(line):
    return next(n for n in line.notes if "auto series resistor" in n)


@pytest.mark.parametrize("order", ["driver first", "far first"])
def test_z0_is_the_stretch_at_the_driver_whichever_order_the_route_is_written(
        tmp_path, order):
    # z2/z3 of the audit: the same route written two ways gave Z0 80 Ω or 55 Ω
    stretches = (NEAR, FAR) if order == "driver first" else (FAR, NEAR)
    line, _ = _gpio(tmp_path, *stretches)
    assert line.figures["z0"].value == pytest.approx(Z_NEAR, rel=1e-9)
    # the termination check's details agree with themselves and with the figure
    chk = next(c for c in line.checks if c.id == "series-termination")
    assert chk.details["z0"] == line.figures["z0"].value
    assert chk.details["rs_ideal"] == pytest.approx(chk.details["z0"] - R_CTRL, rel=1e-9)
    assert "z0_matched" not in chk.details
    assert "the sections differ in Z0" in _auto_note(line)


def test_auto_matches_the_drivers_section_when_its_checks_pass(tmp_path):
    # zs-auto of the audit: 39 Ω matching a short far stretch was chosen over the
    # driver's section's 15 Ω for a few millivolts less overshoot, at twice the edge
    line, _ = _gpio(tmp_path, NEAR, FAR)
    # derived: 50 - 20 = 30 Ω, an E24 value (IEC 60063); the far stretch's 80 - 20 = 60
    # would round to 62 Ω
    assert line.figures["series_resistor"].value == 30.0
    assert all(c.status == "pass" for c in line.checks
               if c.id in ("overshoot", "undershoot", "ringing"))
    note = _auto_note(line)
    assert "the driver's section is matched" in note
    assert "62 Ω for 80 Ω" in note


def test_auto_matches_another_section_only_to_pass_a_check(tmp_path):
    # tests/data/gpio-cable-auto.toml (invented): 4 cm of 50 Ω into 1 m of 100 Ω cable;
    # 30 Ω for the trace leaves the receiver above its rating (tests/
    # test_cable_auto_spice.py, against ngspice), so the cable's match is taken
    line = check_design(load_design(
        Path(__file__).parent / "data" / "gpio-cable-auto.toml")).buses[0].lines[0]
    # derived: 100 - 20 = 80 Ω, nearest E24 82 Ω
    assert line.figures["series_resistor"].value == 82.0
    assert line.figures["z0"].value == pytest.approx(50.0, rel=1e-9)
    chk = next(c for c in line.checks if c.id == "series-termination")
    assert chk.details["z0"] == pytest.approx(50.0, rel=1e-9)
    assert chk.details["z0_matched"] == pytest.approx(100.0, rel=1e-9)
    assert chk.details["rs_ideal"] == pytest.approx(80.0, rel=1e-9)
    note = _auto_note(line)
    assert "with the driver's section matched (30 Ω for 50 Ω)" in note
    assert "1 failing" in note and "with 100 Ω of pp-cable matched they pass" in note


def test_e24_rounding_is_nearest_by_ratio():
    # docs/formats/design.md's example: 16.98 Ω lies nearer 16 Ω in ohms (0.98 against
    # 1.02) but nearer 18 Ω by ratio (18 / 16.98 = 1.0601 against 16.98 / 16 = 1.0613);
    # IEC 60063 E24 holds 16 and 18 (published: IEC 60063, E24 series)
    assert eseries.nearest("E24", 16.98) == 18.0


SPI_HEAD = f"""format = "pinlib.design/1"
title = "route termination test, CIPO (invented)"
library = ["{PARTS.as_posix()}"]

[[bus]]
id = "s"
protocol = "spi"
clock = "10 MHz"
supply = "3.3 V"
devices = [
  {{ ref = "U1", part = "pp-ctrl", role = "controller" }},
  {{ ref = "U2", part = "pp-periph" }},
  {{ ref = "U3", part = "pp-periph" }},
]
lines.sclk = {{ length = "3 cm", capacitance = "1 pF/cm", delay = "60 ps/cm" }}
"""
# invented test data: a CIPO daisy chain of 50 Ω stretches, U2 at 2 cm and U3 at 15 cm
CIPO = SPI_HEAD + """lines.cipo = { series_resistor = "%s", route = [
  { from = "U1", to = "U2", length = "2 cm", capacitance = "1.2 pF/cm", delay = "60 ps/cm" },
  { from = "U2", to = "U3", length = "13 cm", capacitance = "1.2 pF/cm", delay = "60 ps/cm" },
] }
"""


def _cipo(bus):
    return next(x for x in bus.lines if x.signal == "cipo")


def test_the_cipo_note_says_to_fit_a_resistor_at_each_peripheral(tmp_path):
    # the note said "each of which drives through this one resistor", but the model puts
    # a resistor of the value at each driving peripheral's pin
    _, bus = _run(tmp_path, CIPO % "auto")
    line = _cipo(bus)
    # derived: 50 - 30 = 20 Ω, an E24 value
    assert line.figures["series_resistor"].value == 20.0
    la = bus.workings.lines["cipo"]
    assert {c.rs for c in la.cases.values()} == {20.0}  # one at each driver's point
    note = _auto_note(line)
    assert "fit one resistor of this value at each driver's output (U2.cipo, U3.cipo)" \
        in note
    assert "this one resistor" not in note


def test_every_cipo_swing_message_names_the_driving_peripheral(tmp_path):
    # at a peripheral's own CIPO pin only the other peripheral drives: the message named
    # no driver there, though the line has two
    _, bus = _run(tmp_path, CIPO % "none")
    checks = [c for c in _cipo(bus).checks if c.id in ("overshoot", "undershoot")]
    by = {"U1": None, "U2": "U3", "U3": "U2"}
    assert {c.subject for c in checks} == set(by)
    for c in checks:
        if by[c.subject] is not None:
            assert f"at {c.subject}.cipo while {by[c.subject]} drives" in c.message
        else:
            assert " drives" in c.message  # the controller: whichever is worst


def test_the_long_line_note_names_the_extra_capacitance_in_its_edge(tmp_path):
    # g1 of the audit: the edge compared is into the pins and the extra capacitance; the
    # note said "the pins alone"
    with_extra, _ = _gpio(tmp_path, length="5 cm", extra=', extra_capacitance = "30 pF"')
    note = next(n for n in with_extra.notes if n.startswith("one-way delay"))
    assert "edge into the pins and extra capacitance alone" in note
    bare, _ = _gpio(tmp_path, length="5 cm")
    note = next(n for n in bare.notes if n.startswith("one-way delay"))
    assert "edge into the pins alone" in note


def test_a_stretch_of_zero_length_is_noted_as_a_point(tmp_path):
    # v1 of the audit: a 0 cm stretch was said to count as a lumped capacitance, half at
    # each of its points; docs/formats/design.md: a stretch of 0 length is a point
    point = '{ from = "U1", to = "T1", length = "0 cm", capacitance = "1 pF/cm" }'
    lumped = '{ from = "T1", to = "T2", length = "1 cm", capacitance = "1 pF/cm" }'
    rest = ('{ from = "T2", to = "U2", length = "16 cm", capacitance = "1.2 pF/cm", '
            'delay = "60 ps/cm" }')
    line, _ = _gpio(tmp_path, point, lumped, rest, FAR)
    assert ("a section of 0 length (U1–T1) is a point, without capacitance: its two "
            "points are one") in line.notes
    assert ("a section without a delay (T1–T2) counts as a lumped capacitance half at "
            "each of its two points") in line.notes
    # the driver's stretch is found across the point and the lumped stretch
    assert line.figures["z0"].value == pytest.approx(Z_NEAR, rel=1e-9)
