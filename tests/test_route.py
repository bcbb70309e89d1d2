"""Routed push-pull lines (``lines.<signal>.route``): loading and refusals.

The designs are invented test data."""

from __future__ import annotations

from pathlib import Path

import pytest

from pinlib.core import messages as M
from pinlib.core.errors import DesignError
from pinlib.model.design import load_design

DATA = Path(__file__).parent / "data"
ROUTE_DESIGN = DATA / "spi-route.toml"

HEAD = """\
format = "pinlib.design/1"
title = "route test (invented)"

[board.geometry.g]
kind = "microstrip"
width = "0.2 mm"
height = "0.18 mm"
er = 4.2

[[bus]]
id = "s"
protocol = "spi"
clock = "10 MHz"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller" },
  { ref = "U2", part = "nor-flash-spi" },
  { ref = "U3", part = "nor-flash-spi" },
]
"""


def _stretch(a, b, length="2 cm"):
    return f'{{ from = "{a}", to = "{b}", length = "{length}", geometry = "g" }}'


def _design(tmp_path, *stretches, sig="sclk"):
    text = HEAD + f"lines.{sig} = {{ route = [\n  " + ",\n  ".join(stretches) + "\n] }\n"
    if sig != "sclk":
        text += 'lines.sclk = { length = "3 cm", geometry = "g" }\n'
    path = tmp_path / "d.toml"
    path.write_text(text, encoding="utf-8")
    return path


def test_route_design_loads_with_points_aligned_to_sections():
    bus = load_design(ROUTE_DESIGN).buses[0]
    sclk = bus.lines["sclk"]
    assert sclk.route == (("U1", "T1"), ("T1", "U2"), ("T1", "U3"), ("U3", "U4"))
    assert len(sclk.sections) == 4
    # invented test data: the file's lengths, 2 + 1 + 13 + 3 cm
    assert sclk.length == pytest.approx(0.19)
    assert bus.lines["cs"].route == ()


def test_daisy_chain_stub_and_star_all_load(tmp_path):
    chain = _design(tmp_path, _stretch("U1", "U2"), _stretch("U2", "U3"))
    assert load_design(chain).buses[0].lines["sclk"].route == (("U1", "U2"), ("U2", "U3"))
    star = _design(tmp_path, _stretch("U1", "S"), _stretch("S", "U2"), _stretch("S", "U3"),
                   _stretch("S", "J9"))  # an open stub to a junction is allowed
    assert len(load_design(star).buses[0].lines["sclk"].route) == 4


@pytest.mark.parametrize(("stretches", "problem", "field", "line"), [
    ((_stretch("U1", "U2"), _stretch("U2", "U3"), _stretch("U3", "U1")),
     M.ROUTE_CLOSES_LOOP, "bus[0].lines.sclk.route[2].to", 23),
    ((_stretch("U1", "U1"), _stretch("U1", "U2"), _stretch("U2", "U3")),
     M.ROUTE_CLOSES_LOOP, "bus[0].lines.sclk.route[0].to", 21),
    ((_stretch("U1", "U2"), _stretch("U3", "J1")),
     M.ROUTE_NOT_CONNECTED, "bus[0].lines.sclk.route[1].from", 22),
    ((_stretch("U1", "U2"), _stretch("U2", "J1")),
     M.ROUTE_MISSES_DEVICE, "bus[0].lines.sclk.route", 20),
])
def test_refusals_name_file_line_and_field(tmp_path, stretches, problem, field, line):
    path = _design(tmp_path, *stretches)
    with pytest.raises(DesignError) as info:
        load_design(path)
    err = info.value
    assert err.problem == problem
    assert err.field == field
    assert err.file == str(path)
    assert err.line == line


def test_missing_device_is_named(tmp_path):
    with pytest.raises(DesignError) as info:
        load_design(_design(tmp_path, _stretch("U1", "U2"), _stretch("U2", "J1")))
    assert "U3" in str(info.value)


def test_route_and_a_stretch_together_are_refused(tmp_path):
    path = tmp_path / "d.toml"
    path.write_text(HEAD + 'lines.sclk = { length = "3 cm", route = [' + _stretch("U1", "U2")
                    + ", " + _stretch("U2", "U3") + "] }\n", encoding="utf-8")
    with pytest.raises(DesignError) as info:
        load_design(path)
    assert info.value.problem == M.ROUTE_OR_STRETCH
    assert info.value.field == "bus[0].lines.sclk.route"


def test_a_stretch_of_a_route_is_checked_like_any_stretch(tmp_path):
    bad = '{ from = "U2", to = "U3", length = "2 cm", geometry = "nope" }'
    with pytest.raises(DesignError) as info:
        load_design(_design(tmp_path, _stretch("U1", "U2"), bad))
    assert info.value.problem == M.UNKNOWN_GEOMETRY
    assert info.value.field == "bus[0].lines.sclk.route[1].geometry"


def test_unknown_key_in_a_route_stretch_is_refused(tmp_path):
    bad = '{ from = "U2", to = "U3", length = "2 cm", geometry = "g", stub = "1 cm" }'
    with pytest.raises(DesignError) as info:
        load_design(_design(tmp_path, _stretch("U1", "U2"), bad))
    assert "route" in info.value.field and "stub" in info.value.field
