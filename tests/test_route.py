"""Routed push-pull lines (``lines.<signal>.route``): loading and refusals.

The designs are invented test data."""

from __future__ import annotations

import json
import re
from pathlib import Path

import pytest
from irqdesign import irq_design

from pinlib.cli import main
from pinlib.core import messages as M
from pinlib.core.errors import DesignError
from pinlib.engines.dispatch import check_design
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
    return _design_text(tmp_path, HEAD, *stretches, sig=sig)


def _design_text(tmp_path, head, *stretches, sig="sclk"):
    text = head + f"lines.{sig} = {{ route = [\n  " + ",\n  ".join(stretches) + "\n] }\n"
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


@pytest.mark.parametrize(("stretches", "hint"), [
    # the same stretch written twice: the earlier one is named
    ((_stretch("U1", "T1"), _stretch("T1", "U2"), _stretch("T1", "U2"), _stretch("T1", "U3")),
     "route[1] already joins T1 and U2 (the same stretch written twice?)"),
    # a loop through two earlier stretches: both named, in order from the one point
    ((_stretch("U1", "A"), _stretch("A", "U2"), _stretch("U2", "B"), _stretch("B", "A"),
      _stretch("B", "U3")),
     "B and A are already joined by route[2] (U2 to B) and route[1] (A to U2)"),
    ((_stretch("U1", "U2"), _stretch("U2", "U2"), _stretch("U2", "U3")),
     "a stretch from U2 to itself"),
])
def test_a_loop_names_what_already_joins_its_points(tmp_path, stretches, hint):
    # the error said only that the two points were already joined, leaving the user to
    # find the other stretch (a duplicated line of the file, or a loop through several)
    with pytest.raises(DesignError) as info:
        load_design(_design(tmp_path, *stretches))
    assert info.value.problem == M.ROUTE_CLOSES_LOOP
    assert info.value.hint.startswith(hint)
    assert info.value.hint.endswith("a route is a tree: drop this stretch or end it at a "
                                    "new junction")


def test_too_many_stretches_for_the_devices_on_the_line_says_so(tmp_path):
    # 70 peripherals on SCLK need a route of at least 70 stretches, past the limit of 64:
    # the hint said to join stretches between the same two devices, which cannot help
    from pinlib.core.worklimits import MAX_ROUTE_STRETCHES

    refs = ["U1", "U2", "U3"] + [f"U{k}" for k in range(10, 78)]
    head = HEAD.replace('  { ref = "U3", part = "nor-flash-spi" },\n',
                        '  { ref = "U3", part = "nor-flash-spi" },\n' + "".join(
                            f'  {{ ref = "{r}", part = "nor-flash-spi" }},\n'
                            for r in refs[3:]))
    pairs = zip(refs, refs[1:], strict=False)
    path = _design_text(tmp_path, head, *(_stretch(a, b) for a, b in pairs))
    with pytest.raises(DesignError) as info:
        load_design(path)
    assert info.value.problem == M.TOO_MANY_ROUTE_STRETCHES
    assert info.value.hint == (
        f"the line has {len(refs)} devices, and a route of {MAX_ROUTE_STRETCHES} stretches "
        f"joins at most {MAX_ROUTE_STRETCHES + 1} points: give the line as one stretch or "
        "as sections (every device at the far end) instead")
    # a line of few devices keeps the advice to join stretches
    chain = ["U1"] + [f"N{k}" for k in range(MAX_ROUTE_STRETCHES)] + ["U2"]
    pairs = zip(chain, chain[1:], strict=False)
    path = _design(tmp_path, *(_stretch(a, b) for a, b in pairs), _stretch("U2", "U3"))
    with pytest.raises(DesignError) as info:
        load_design(path)
    assert info.value.hint == "join stretches of one geometry between the same two devices"


def test_from_and_to_in_sections_point_to_a_route(tmp_path):
    # stretches with from/to written under sections: "unknown field" listed the section's
    # keys and left the user to find that from and to are a route's
    path = tmp_path / "d.toml"
    path.write_text(HEAD + "lines.sclk = { sections = [\n  " + _stretch("U1", "U2") + ",\n  "
                    + _stretch("U2", "U3") + "\n] }\n", encoding="utf-8")
    with pytest.raises(DesignError) as info:
        load_design(path)
    err = info.value
    assert err.problem == M.UNKNOWN_FIELD
    assert err.field == "bus[0].lines.sclk.sections[0].from" and err.line == 21
    assert err.hint == ("from and to name the points of a route's stretches: write the "
                        "stretches as route = [...] in place of sections or length")
    # a misspelt key inside a route keeps its closest-name hint
    path = _design(tmp_path, _stretch("U1", "U2").replace("from", "form"), _stretch("U2", "U3"))
    with pytest.raises(DesignError) as info:
        load_design(path)
    assert info.value.field.endswith("route[0].form") and "from" in info.value.hint


def test_a_route_written_as_a_line_says_where_it_goes(tmp_path):
    # lines.route = [...] was refused as "not a table" with the whole list quoted
    path = tmp_path / "d.toml"
    path.write_text(HEAD + "lines.route = [\n  " + _stretch("U1", "U2") + ",\n  "
                    + _stretch("U2", "U3") + "\n]\n", encoding="utf-8")
    with pytest.raises(DesignError) as info:
        load_design(path)
    err = info.value
    assert err.field == "bus[0].lines.route" and err.line == 20
    assert err.hint == "a route belongs to one line: lines.sclk = { route = [...] }"


def test_a_route_of_one_stretch_not_in_a_list_says_so(tmp_path):
    # route = { from = ..., to = ... } was refused as "not an array" and no more
    path = tmp_path / "d.toml"
    path.write_text(HEAD + "lines.sclk = { route = " + _stretch("U1", "U2") + " }\n",
                    encoding="utf-8")
    with pytest.raises(DesignError) as info:
        load_design(path)
    err = info.value
    assert err.field == "bus[0].lines.sclk.route" and err.line == 20
    assert err.hint.startswith("a route is a list of stretches, even of one: route = [{")


def test_a_stretch_with_a_delay_alone_names_the_capacitance_it_lacks(tmp_path):
    # { delay = "60 ps/cm" } alone: refused at its geometry with no word of the delay given
    path = _design(tmp_path, _stretch("U1", "U2"),
                   '{ from = "U2", to = "U3", length = "2 cm", delay = "60 ps/cm" }')
    with pytest.raises(DesignError) as info:
        load_design(path)
    assert info.value.field == "bus[0].lines.sclk.route[1].geometry"
    assert info.value.hint == "a delay per length goes with a capacitance per length"


def test_missing_device_is_named(tmp_path):
    with pytest.raises(DesignError) as info:
        load_design(_design(tmp_path, _stretch("U1", "U2"), _stretch("U2", "J1")))
    assert "U3" in str(info.value)
    assert "misspelt" not in str(info.value)  # J1 is like no device


def test_a_misspelt_device_on_a_route_is_suggested(tmp_path):
    # U3 written "U33": the point reads as a junction (an open stub), so the error is
    # that U3 is on no point; it now names the point that looks like a misspelling
    with pytest.raises(DesignError) as info:
        load_design(_design(tmp_path, _stretch("U1", "T1"), _stretch("T1", "U2"),
                            _stretch("T1", "U33")))
    assert info.value.hint == "the route's point U33 names no device of the bus " \
                              "(a junction): U3 misspelt?"


def test_a_point_with_spaces_around_it_is_quoted_in_the_hint(tmp_path):
    # " U3" read "the route's point  U3 names no device": the space did not show
    with pytest.raises(DesignError) as info:
        load_design(_design(tmp_path, _stretch("U1", "U2"), _stretch("U2", " U3")))
    assert info.value.hint == ("the route's point ' U3' (spaces around it) names no device "
                               "of the bus (a junction): U3 misspelt?")


def test_an_empty_route_is_named_as_such(tmp_path):
    # route = [] was read as no route at all, and the line blamed for its missing length
    path = tmp_path / "d.toml"
    path.write_text(HEAD + "lines.sclk = { route = [] }\n", encoding="utf-8")
    with pytest.raises(DesignError) as info:
        load_design(path)
    err = info.value
    assert err.problem == M.ROUTE_EMPTY
    assert err.field == "bus[0].lines.sclk.route"
    assert err.line == HEAD.count("\n") + 1
    assert "at least one stretch" in err.expected


def test_a_point_naming_a_device_of_another_bus_is_refused(tmp_path):
    # U9 is wired to an I2C bus of the design and named on the SPI route without being
    # listed on the SPI bus: read as a junction it left the chip off the line and the
    # design passed; now the point is named, with the bus it sits on
    i2c = _I2C_U9
    path = _design(tmp_path, _stretch("U1", "U2"), _stretch("U2", "U3"),
                   _stretch("U3", "U9"))
    path.write_text(path.read_text(encoding="utf-8") + i2c, encoding="utf-8")
    with pytest.raises(DesignError) as info:
        load_design(path)
    err = info.value
    assert err.problem == M.ROUTE_DEVICE_OF_OTHER_BUS
    assert err.field == "bus[0].lines.sclk.route[2].to"
    assert err.line == 23 and err.value == "U9"
    assert "bus sensors" in str(err)
    # a junction named like no device of the design stays an open stub
    ok = _design(tmp_path, _stretch("U1", "U2"), _stretch("U2", "U3"), _stretch("U3", "TP9"))
    ok.write_text(ok.read_text(encoding="utf-8") + i2c, encoding="utf-8")
    assert len(load_design(ok).buses[0].lines["sclk"].route) == 3


def test_a_point_named_with_a_line_break_is_refused(tmp_path):
    # "a\nb" was taken as a junction's name and broke the report's route diagram in two
    path = _design(tmp_path, _stretch("U1", "U2"), _stretch("U2", "U3"),
                   _stretch("U3", "a\\nb"))
    with pytest.raises(DesignError) as info:
        load_design(path)
    err = info.value
    assert err.problem == M.POINT_NAME_CONTROL
    assert err.field == "bus[0].lines.sclk.route[2].to" and err.line == 23
    assert err.value == "a\nb"


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


def test_a_misspelt_key_of_a_route_stretch_lists_the_keys_as_written(tmp_path):
    # the keys a stretch takes are listed as the file spells them: "from", never the
    # Python attribute behind it ("from_")
    bad = '{ form = "U2", to = "U3", length = "2 cm", geometry = "g" }'
    with pytest.raises(DesignError) as info:
        load_design(_design(tmp_path, _stretch("U1", "U2"), bad))
    err = info.value
    assert err.field == "bus[0].lines.sclk.route[1].form"
    assert "from_" not in err.message
    assert "part, from, to" in err.message and err.message.endswith("closest: from")


# ---------------------------------------------------------------- the engine on routes

def _check(text: str, tmp_path):
    path = tmp_path / "d.toml"
    path.write_text(text, encoding="utf-8")
    design = load_design(path)
    return design, check_design(design).buses[0]


def _by_subject(line, check_id):
    return {c.subject: c for c in line.checks if c.id == check_id}


def _line(bus, signal):
    return next(x for x in bus.lines if x.signal == signal)


def test_daisy_chain_gives_the_far_device_the_later_and_slower_edge(tmp_path):
    # invented: a capacitive trace (Z0 = 40 ps/cm / 10 pF/cm = 4 Ω) where the driver's
    # RC sets the edge, U2 at 2 cm and U3 at 22 cm
    _, bus = _check(HEAD + """lines.sclk = { route = [
  { from = "U1", to = "U2", length = "2 cm", capacitance = "10 pF/cm", delay = "40 ps/cm" },
  { from = "U2", to = "U3", length = "20 cm", capacitance = "10 pF/cm", delay = "40 ps/cm" },
] }
""", tmp_path)
    edges = _by_subject(_line(bus, "sclk"), "edge-time")
    assert set(edges) == {"U2", "U3"}
    # derived from an RC ladder: the far end of a charged line lags and is no faster
    assert edges["U3"].value > edges["U2"].value
    assert "U3" in edges["U3"].message and "U2" in edges["U2"].message


def _stub_design(stub: str) -> str:
    return HEAD + f"""lines.sclk = {{ route = [
  {{ from = "U1", to = "T", length = "3 cm", geometry = "g" }},
  {{ from = "T", to = "U2", length = "{stub}", geometry = "g" }},
  {{ from = "T", to = "U3", length = "3 cm", geometry = "g" }},
] }}
"""


def test_a_long_stub_rings_worse_at_the_far_device_than_a_short_one(tmp_path):
    _, short = _check(_stub_design("0.1 cm"), tmp_path)
    _, long_ = _check(_stub_design("12 cm"), tmp_path)
    # derived from reflections: the open stub's echo returns to the junction and on to
    # U3 (invented geometry; the numbers come from the tree solver)
    for check_id in ("overshoot", "undershoot"):
        a = _by_subject(_line(short, "sclk"), check_id)["U3"].value
        b = _by_subject(_line(long_, "sclk"), check_id)["U3"].value
        assert b > 1.5 * a, check_id


def test_an_open_stub_is_named_in_the_line_notes(tmp_path):
    # "U7" at the end of a stub names no device of the design, so it is a junction and the
    # stub is open: the design passed without a word, though a device written there but
    # not listed on the bus (or misspelt) reads the same way
    _, bus = _check(HEAD + """lines.sclk = { route = [
  { from = "U1", to = "U2", length = "2 cm", geometry = "g" },
  { from = "U2", to = "U3", length = "2 cm", geometry = "g" },
  { from = "U3", to = "U7", length = "3 cm", geometry = "g" },
] }
""", tmp_path)
    notes = [n for n in _line(bus, "sclk").notes if "open stub" in n]
    assert notes == ["an open stub: U3–U7 (30 mm): no device on the line sits at its end, "
                     "so it only loads the line and reflects its edges; if a device does, "
                     "list it on the bus with a pin on sclk"]
    # many open stubs (a star of test points): one note, the first six named
    _, bus = _check(HEAD + "lines.sclk = { route = [\n  " + ",\n  ".join(
        [_stretch("U1", "S"), _stretch("S", "U2"), _stretch("S", "U3")]
        + [_stretch("S", f"TP{k}", "1 cm") for k in range(8)]) + "\n] }\n", tmp_path)
    notes = [n for n in _line(bus, "sclk").notes if "open stub" in n]
    assert len(notes) == 1 and notes[0].startswith(
        "open stubs: S–TP0 (10 mm), S–TP1 (10 mm), S–TP2 (10 mm), S–TP3 (10 mm), "
        "S–TP4 (10 mm), S–TP5 (10 mm) and 2 more: no device on the line sits at their "
        "ends, so each only loads")
    # a route whose every end is a device has no such note
    _, bus = _check(_stub_design("1 cm"), tmp_path)
    assert not [n for n in _line(bus, "sclk").notes if "open stub" in n]


_I2C_U9 = """
[[bus]]
id = "sensors"
protocol = "i2c"
supply = "3.3 V"
trace = { length = "5 cm", geometry = "g" }
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller" },
  { ref = "U9", part = "eeprom-i2c" },
]
"""


def _alike_notes(bus):
    return [n for n in _line(bus, "sclk").notes if "named like a device" in n]


def test_a_mid_route_junction_named_like_a_missing_device_is_noted(tmp_path):
    # invented test data.  "U7" joins U1 to U2 and U3: it names no device of the design,
    # so it was read as a junction without a word, though it reads as a chip the bus
    # forgot to list (its stub end would have had the open-stub note; a mid-route point
    # had none)
    _, bus = _check(HEAD + "lines.sclk = { route = [\n  " + ",\n  ".join(
        [_stretch("U1", "U7"), _stretch("U7", "U2"), _stretch("U7", "U3")]) + "\n] }\n",
        tmp_path)
    assert _alike_notes(bus) == [
        "a junction named like a device: U7 names no device of the design, so nothing "
        "loads the line there; if a device sits there, list it on the bus with a pin on "
        "sclk"]
    # a junction named as junctions are (other letters than the line's devices, or no
    # digits) is not noted: the design file's own examples, T1 and S
    for name in ("T1", "S", "TP3", "N1", "J9"):
        _, bus = _check(HEAD + "lines.sclk = { route = [\n  " + ",\n  ".join(
            [_stretch("U1", name), _stretch(name, "U2"), _stretch(name, "U3")])
            + "\n] }\n", tmp_path)
        assert _alike_notes(bus) == [], name


def test_a_point_named_like_a_device_but_for_its_case_is_noted(tmp_path):
    # invented test data: "u9" is U9 of the I2C bus written in lower case (U9 itself is
    # refused, as a device of another bus); it was read as a junction silently
    path = tmp_path / "d.toml"
    path.write_text(HEAD + "lines.sclk = { route = [\n  " + ",\n  ".join(
        [_stretch("U1", "U2"), _stretch("U2", "u9"), _stretch("u9", "U3")]) + "\n] }\n"
        + _I2C_U9, encoding="utf-8")
    design = load_design(path)
    assert design.buses[0].lines["sclk"].look_alikes == (("u9", "U9"),)
    line = _line(check_design(design).buses[0], "sclk")
    assert [n for n in line.notes if "named like a device" in n] == [
        "a point of the route named like a device but for case or spaces: 'u9' (like U9); "
        "a point is a device only by its exact reference designator, so it is read as a "
        "junction with nothing on it; if the device sits there, write its reference as "
        "the bus lists it"]


def test_the_stretches_without_a_delay_are_named(tmp_path):
    # one stretch of the route given a capacitance without its delay, another of 0 cm:
    # the note said "a section without a delay" and left the user to find which
    _, bus = _check(HEAD + """lines.sclk = { route = [
  { from = "U1", to = "T", length = "3 cm", geometry = "g" },
  { from = "T", to = "U2", length = "2 cm", capacitance = "1 pF/cm" },
  { from = "T", to = "U3", length = "3 cm", geometry = "g" },
  { from = "T", to = "TP1", length = "0 cm", geometry = "g" },
] }
""", tmp_path)
    notes = _line(bus, "sclk").notes
    assert ("a section without a delay (T–U2) counts as a lumped capacitance half "
            "at each of its two points") in notes
    # a stretch of 0 length is a point (docs/formats/design.md), no capacitance
    assert ("a section of 0 length (T–TP1) is a point, without capacitance: its two "
            "points are one") in notes


def test_the_point_of_the_extra_capacitance_is_named(tmp_path):
    # a star of equal branches: which device's point took the 10 pF was said nowhere
    _, bus = _check(HEAD + """lines.sclk = { extra_capacitance = "10 pF", route = [
  { from = "U1", to = "S", length = "1 cm", geometry = "g" },
  { from = "S", to = "U2", length = "6 cm", geometry = "g" },
  { from = "S", to = "U3", length = "9 cm", geometry = "g" },
] }
""", tmp_path)
    assert ("extra_capacitance 10 pF sits at U3, the route's point farthest in delay "
            "from U1") in _line(bus, "sclk").notes
    # equal branches: the note says the other point is as far and which one took it
    _, bus = _check(HEAD + """lines.sclk = { extra_capacitance = "10 pF", route = [
  { from = "U1", to = "S", length = "1 cm", geometry = "g" },
  { from = "S", to = "U2", length = "6 cm", geometry = "g" },
  { from = "S", to = "U3", length = "6 cm", geometry = "g" },
] }
""", tmp_path)
    assert ("extra_capacitance 10 pF sits at U2, the route's point farthest in delay "
            "from U1 (U3 as far: it goes to the first the route names)"
            ) in _line(bus, "sclk").notes


FLIGHT_HEAD = HEAD.replace('part = "mcu-3v3", role', 'part = "fpga-io-3v3", role')
FLIGHT_ROUTE = """lines.{sig} = {{ route = [
  {{ from = "U1", to = "U2", length = "2 cm", geometry = "g" }},
  {{ from = "U2", to = "U3", length = "40 cm", geometry = "g" }},
] }}
"""


def _flight_design() -> str:
    return FLIGHT_HEAD + "".join(FLIGHT_ROUTE.format(sig=s) for s in ("sclk", "copi", "cipo"))


def test_each_peripheral_has_its_own_flights_in_the_budget(tmp_path):
    design, bus = _check(_flight_design(), tmp_path)
    sa = bus.workings
    flights = {p.ref: p for p in sa.peripherals}
    # derived from the route: U3 sits 40 cm (about 2.8 ns) beyond U2 on every line
    assert flights["U3"].sclk["rise"].late > flights["U2"].sclk["rise"].late + 1e-9
    assert flights["U3"].copi.late > flights["U2"].copi.late + 1e-9
    # CIPO: each drives from its own point; U2 mid-line also charges the 40 cm stub to
    # U3, whose echo comes back 5.6 ns later (derived from the route), so its flight is
    # not the shorter one: each is its own case's
    la = sa.lines["cipo"]
    ctl = la.receivers[0]
    for ref in ("U2", "U3"):
        assert flights[ref].cipo == la.cases[ref].flight_both(ctl)
    assert flights["U2"].cipo != flights["U3"].cipo
    # the budget's terms carry each device's own flight
    setup = {c.subject: c for c in bus.checks if c.id == "copi-setup"}
    assert setup["U3"].details["copi_late"] == flights["U3"].copi.late
    assert setup["U2"].details["copi_late"] == flights["U2"].copi.late
    for ref in ("U2", "U3"):
        # derived from the budget: T/2 + SCLK early - t_valid - COPI late, mode 0 samples
        # on the rise; the controller's t_valid 7 ns is the fpga-io-3v3 class's
        want = 0.5 / 10e6 + flights[ref].sclk["rise"].early - 7e-9 - flights[ref].copi.late
        assert setup[ref].value == pytest.approx(want, rel=1e-12)


def test_detail_lists_each_peripherals_flights_from_its_budget(tmp_path):
    # the flights were in the JSON checks' details only: --detail now lists them per
    # device, each equal to the budget's own flight (mode 0: sampled on the rise)
    from pinlib.core.quantity import format_value
    from pinlib.present.detail import detail_lines, flight_rows

    design, bus = _check(_flight_design(), tmp_path)
    rows = {(r[0], r[1]): r[2:] for r in flight_rows(bus)}
    for p in bus.workings.peripherals:
        want = {"SCLK sampling edge": (p.sclk["rise"].early, p.sclk["rise"].late),
                "COPI": (p.copi.early, p.copi.late),
                "CIPO, back at the controller": (p.cipo.early, p.cipo.late)}
        for label, ends in want.items():
            assert rows[(p.ref, label)] == [format_value(t, "s") for t in ends], label
    assert {ref for ref, _ in rows} == {p.ref for p in bus.workings.peripherals}
    text = detail_lines(check_design(design), 80)
    assert any(ln.strip().startswith("flights: from the driver's timing") for ln in text)
    assert all(len(ln) <= 80 for ln in text)
    # the reports show the same rows: a table of their own in HTML and in Markdown
    from pinlib.present import review

    result = check_design(design)
    page = review.render_html(design, result)
    md = review.render_markdown(design, result)
    for ref, label, early, late in flight_rows(bus):
        assert (f"<tr><td>{ref}</td><td>{label}</td><td class=\"num\">{early}</td>"
                f"<td class=\"num\">{late}</td></tr>") in page
        assert f"| {ref} | {label} | {early} | {late} |" in md


def test_max_clock_follows_the_worst_device_and_names_it(tmp_path):
    _, bus = _check(_flight_design(), tmp_path)
    limits = bus.workings.clock_limits()
    by = bus.figures["max_clock_limited_by"].value
    assert by == limits[0][1]
    # derived from the route: U2, 2 cm from the controller, drives CIPO into the 40 cm
    # stub to U3 as well, whose echo holds its edge at the controller back by 5.6 ns; U3's
    # own edge arrives whole.  The worst device is the near one, and the result says so.
    assert by == "cipo-setup U2"
    u3 = min(f for f, name, _ in limits if name.endswith(" U3"))
    assert bus.figures["max_clock"].value == pytest.approx(limits[0][0])
    assert limits[0][0] < u3
    # every device at the far end (the simple form) cannot tell them apart
    simple = FLIGHT_HEAD + "".join(f'lines.{s} = {{ length = "42 cm", geometry = "g" }}\n'
                                   for s in ("sclk", "copi", "cipo"))
    _, far = _check(simple, tmp_path)
    got = {name.split()[-1]: f for f, name, _ in far.workings.clock_limits()
           if name.startswith("cipo-setup")}
    assert got["U2"] == pytest.approx(got["U3"], rel=1e-9)


def test_candidates_name_the_receiver_of_a_line_check_that_sets_the_worst(tmp_path):
    # on a route each receiver has its own overshoot, edge and ringing: the ranking's
    # "set by" names which one, as pinlib check does (it read "sclk Overshoot")
    from pinlib.core.labels import check_label
    from pinlib.studies.candidates import rank_candidates

    design, _ = _check(_flight_design(), tmp_path)
    ranking = rank_candidates(design, "U3")
    text = ranking.format_text(width=None)
    on_lines = [c.worst_check for c in ranking.candidates
                if c.worst_check and c.worst_check.get("line")]
    assert on_lines  # the 40 cm stub rings: line checks set the worst margins
    for wc in on_lines:
        assert wc["subject"]
        # the signal in capitals, as pinlib check writes it
        assert f"{wc['line'].upper()} {check_label(wc['id'])} {wc['subject']}" in text


def test_an_overshoot_figure_at_a_pin_no_check_covers_is_explained(tmp_path):
    # CIPO U1 -2 cm- U2 -13 cm- U3: the line's overshoot figure is the worst at any pin,
    # here a peripheral's CIPO pin while the other drives, which no check covers (its
    # part states no abs_max there); the line said a number no check or device explained
    from pinlib.core.quantity import format_si

    # a peripheral class whose CIPO pin states no rating (the built-in classes now give
    # every pin one): the test part without its cipo abs_max (invented)
    lib = tmp_path / "unrated"
    lib.mkdir()
    part = (Path(__file__).parent / "data" / "pushpull" / "pp-periph.toml").read_text(
        encoding="utf-8").replace('id = "pp-periph"', 'id = "periph-unrated"')
    cut = 'r_out = "30 Ω"\nabs_max = "VDD + 0.5 V"\n'
    assert cut in part
    (lib / "periph-unrated.toml").write_text(part.replace(cut, 'r_out = "30 Ω"\n'),
                                              encoding="utf-8")
    unrated = HEAD.replace('title = "route test (invented)"\n',
                           f'title = "route test (invented)"\nlibrary = ["{lib.as_posix()}"]\n'
                           ).replace('part = "nor-flash-spi"', 'part = "periph-unrated"')
    assert unrated.count("periph-unrated") == 2
    _, bus = _check(unrated + """lines.cipo = { route = [
  { from = "U1", to = "U2", length = "2 cm", geometry = "g" },
  { from = "U2", to = "U3", length = "13 cm", geometry = "g" },
] }
lines.sclk = { route = [
  { from = "U1", to = "U2", length = "2 cm", geometry = "g" },
  { from = "U2", to = "U3", length = "13 cm", geometry = "g" },
] }
""", tmp_path)
    cipo = _line(bus, "cipo")
    for name in ("overshoot", "undershoot"):
        figure = cipo.figures[name].value
        checked = max(c.value for c in cipo.checks if c.id == name)
        assert figure > checked  # the solver's numbers for this invented route
        note = next(n for n in cipo.notes if f"{name} {format_si(figure, 'V')}" in n)
        assert "no check covers" in note and format_si(checked, "V") in note
        assert ("U2.cipo while U3 drives" in note) or ("U3.cipo while U2 drives" in note)
    # a line whose every loaded pin has a check (SCLK: each input's abs_max) has none
    assert not any("no check covers" in n for n in _line(bus, "sclk").notes)
    # a pin with an abs_max at that point (an ESD array beside U3) is checked there: the
    # figure is that check's value, and no note
    last = '  { ref = "U3", part = "nor-flash-spi" },\n'
    head = HEAD.replace(last, last + '  { ref = "D1", part = "esd-diode-array-low-cap" },\n')
    _, esd = _check(head + """lines.cipo = { route = [
  { from = "U1", to = "U2", length = "2 cm", geometry = "g" },
  { from = "U2", to = "U3", length = "13 cm", geometry = "g" },
  { from = "U3", to = "D1", length = "0 cm", capacitance = "1 pF/cm" },
] }
lines.sclk = { length = "3 cm", geometry = "g" }
""", tmp_path)
    cipo = _line(esd, "cipo")
    d1 = {c.id: c for c in cipo.checks if c.subject == "D1"}
    assert cipo.figures["overshoot"].value == pytest.approx(d1["overshoot"].value, rel=1e-12)
    assert not any("no check covers" in n for n in cipo.notes)


# invented test data: a CIPO daisy chain, U2 at 2 cm and U3 at 15 cm from the controller
CIPO_CHAIN = HEAD + """lines.cipo = { route = [
  { from = "U1", to = "U2", length = "2 cm", geometry = "g" },
  { from = "U2", to = "U3", length = "13 cm", geometry = "g" },
] }
lines.sclk = { length = "3 cm", geometry = "g" }
"""


def test_an_overshoot_on_cipo_names_the_peripheral_whose_edge_it_is(tmp_path):
    # the controller's overshoot on CIPO is the worst over the peripherals' edges; the
    # message said where, not whose, so not where a series resistor would go
    _, bus = _check(CIPO_CHAIN, tmp_path)
    la = bus.workings.lines["cipo"]
    checks = {c.id: c for c in _line(bus, "cipo").checks if c.subject == "U1"}
    for check_id, edge, attr in (("overshoot", "rise", "overshoot"),
                                 ("undershoot", "fall", "undershoot")):
        # the engine's own waveforms at U1, one per driver
        worst = max(la.cases, key=lambda r: getattr(la.cases[r].si_wave_at("U1", edge), attr))
        assert f"at U1.cipo while {worst} drives" in checks[check_id].message
    # one driver (SCLK): nothing to tell apart
    assert not any("drives" in c.message for c in _line(bus, "sclk").checks
                   if c.id == "overshoot")


def test_ringing_on_cipo_names_the_peripheral_whose_edges_ring(tmp_path):
    # "fix: add or increase a series resistor at the driver" on a line of two drivers
    # left the engineer to guess which one
    _, bus = _check(CIPO_CHAIN, tmp_path)
    la = bus.workings.lines["cipo"]
    ring = next(c for c in _line(bus, "cipo").checks if c.id == "ringing")
    assert ring.value > 0  # the solver's: this invented route rings at the controller
    # the engine's own waveforms at U1: the re-crossings of each driver's two edges
    ctl = la.receivers[0]
    v_il, v_ih = ctl.level("v_il"), ctl.level("v_ih")
    per = {r: sum(int(c.si_wave_at("U1", e).recrossings(v_il, v_ih).entry)
                  for e in ("rise", "fall")) for r, c in la.cases.items()}
    worst = max(per, key=per.get)
    assert f"while {worst} drives" in ring.message
    assert ring.fix.endswith(f"at the driver ({worst})")


def test_cipo_each_peripheral_drives_from_its_own_point(tmp_path):
    _, bus = _check(_flight_design(), tmp_path)
    la = bus.workings.lines["cipo"]
    assert set(la.cases) == {"U2", "U3"}
    ctl = la.receivers[0]
    assert [r.ref for r in la.receivers] == ["U1"]  # only the controller receives CIPO
    near, far = la.cases["U2"].flight(ctl, "rise"), la.cases["U3"].flight(ctl, "rise")
    # derived from the route: U3's edge starts 40 cm (about 2.8 ns) farther away, so the
    # controller's VIL is reached later; U2's edge is held back by the stub it charges
    assert far.early > near.early + 1e-9


def test_a_route_with_every_device_at_one_point_matches_the_simple_form(tmp_path):
    # the simple form puts every pin at the far end: a route whose devices share the far
    # point through zero-length stretches is the same circuit (two solvers: the chain
    # and the tree; derived from the same lossless-line model)
    simple = HEAD + 'lines.sclk = { length = "15 cm", geometry = "g" }\n'
    routed = HEAD + """lines.sclk = { route = [
  { from = "U1", to = "E", length = "15 cm", geometry = "g" },
  { from = "E", to = "U2", length = "0 cm", capacitance = "1 pF/cm" },
  { from = "E", to = "U3", length = "0 cm", capacitance = "1 pF/cm" },
] }
"""
    _, a = _check(simple, tmp_path)
    _, b = _check(routed, tmp_path)
    fa, fb = _line(a, "sclk").figures, _line(b, "sclk").figures
    for name in ("edge_rise_time", "edge_fall_time", "trace_delay", "load_capacitance"):
        assert fb[name].value == pytest.approx(fa[name].value, rel=2e-3), name
    assert fb["overshoot"].value == pytest.approx(fa["overshoot"].value, abs=0.01)


def test_a_line_fed_from_its_middle_is_as_long_as_its_longer_arm(tmp_path):
    # U2 -15 cm- U1 -10 cm- U3, the controller between them: its edge travels 15 cm at
    # most (derived from the route), not the 25 cm from U2 to U3; the delay, the
    # electrical length and the line-delay check follow the longer arm
    routed = HEAD + """lines.sclk = { route = [
  { from = "U2", to = "U1", length = "15 cm", geometry = "g" },
  { from = "U1", to = "U3", length = "10 cm", geometry = "g" },
] }
"""
    simple = HEAD + 'lines.sclk = { length = "15 cm", geometry = "g" }\n'
    _, a = _check(routed, tmp_path)
    _, b = _check(simple, tmp_path)
    la, lb = a.workings.lines["sclk"], b.workings.lines["sclk"]
    want = lb.delay
    assert la.delay == pytest.approx(want, rel=1e-12)
    assert _line(a, "sclk").figures["trace_delay"].value == pytest.approx(want, rel=1e-12)
    check = next(c for c in _line(a, "sclk").checks if c.id == "line-delay")
    assert check.value == pytest.approx(want, rel=1e-12)
    assert la.ratio == pytest.approx(want / la.edge_alone, rel=1e-12)
    # CIPO from the far peripheral: the whole way to the controller counts
    cipo = HEAD + """lines.cipo = { route = [
  { from = "U2", to = "U1", length = "15 cm", geometry = "g" },
  { from = "U1", to = "U3", length = "10 cm", geometry = "g" },
] }
lines.sclk = { length = "3 cm", geometry = "g" }
"""
    _, c = _check(cipo, tmp_path)
    assert c.workings.lines["cipo"].delay == pytest.approx(25 / 15 * want, rel=1e-9)


def test_extra_capacitance_sits_far_from_the_controller_however_the_route_is_written(
        tmp_path):
    # one stretch U1 -> U3 written both ways: the line's extra capacitance went to the
    # point farthest from the route's first point, so written U3 -> U1 it sat at the
    # driver and the same board gave another edge; now both are the simple form's
    def line(way, extra='extra_capacitance = "20 pF", '):
        a, b = way
        return (f'lines.sclk = {{ {extra}route = [{{ from = "{a}", to = "{b}", '
                'length = "15 cm", geometry = "g" }] }\n')

    two = HEAD.replace('  { ref = "U3", part = "nor-flash-spi" },\n', "")
    _, fwd = _check(two + line(("U1", "U2")), tmp_path)
    _, rev = _check(two + line(("U2", "U1")), tmp_path)
    _, simple = _check(two + 'lines.sclk = { extra_capacitance = "20 pF", length = "15 cm", '
                       'geometry = "g" }\n', tmp_path)
    want = _line(simple, "sclk").figures
    for bus in (fwd, rev):
        got = _line(bus, "sclk").figures
        for name in ("edge_rise_time", "edge_fall_time"):
            # two solvers (the chain and the tree) of the same lossless-line model
            assert got[name].value == pytest.approx(want[name].value, rel=2e-3), name
        assert got["overshoot"].value == pytest.approx(want["overshoot"].value, abs=0.01)


def test_route_test_design_checks_and_reports(tmp_path, capsys):
    code = main(["check", str(ROUTE_DESIGN), "--detail"])
    out = capsys.readouterr().out
    assert code in (0, 1)
    assert "U4" in out and "edge" in out.lower()
    html = tmp_path / "r.html"
    assert main(["report", str(ROUTE_DESIGN), "--html", str(html)]) == code  # as check
    text = html.read_text(encoding="utf-8")
    assert "U1 ─2 cm─ T1" in text  # the route drawn as text


def test_a_long_route_diagram_keeps_within_80_columns(tmp_path):
    # invented: a daisy chain of twelve peripherals 2.5 cm apart, a 150-character row
    # when drawn on one; a branch off its far end too
    from pinlib.present.review.text import route_diagram

    devices = "".join(f'  {{ ref = "U{i}", part = "nor-flash-spi" }},\n' for i in range(4, 14))
    last = '  { ref = "U3", part = "nor-flash-spi" },\n'
    head = HEAD.replace(last, last + devices)
    chain = [_stretch(f"U{i}", f"U{i + 1}", "2.5 cm") for i in range(1, 13)]
    line = load_design(_design_text(tmp_path, head, *chain, _stretch("U12", "TP1")))
    rows = route_diagram(line.buses[0].lines["sclk"])
    assert all(len(r) <= 80 for r in rows), rows
    assert len(rows) == 3
    assert rows[0].startswith("U1 ─2.5 cm─ U2 ─2.5 cm─ U3")
    # the second row goes on from the point the first ended at; the branch names its point
    assert rows[1].startswith("… " + rows[0].split()[-1] + " ─")
    # every point of the path once, in order, across its rows
    names = [w for w in (rows[0] + " " + rows[1].split(" ", 2)[2]).split() if w.startswith("U")]
    assert names == [f"U{i}" for i in range(1, 14)]
    assert rows[2].strip() == "└ U12 ─2 cm─ TP1"


def test_route_chart_captions_say_where_and_claim_no_resistor_the_line_lacks(tmp_path):
    # a route without a series resistor: the waveforms' caption read "each receiver at
    # its own point of the route, with the line's series resistor", and the edge chart's
    # operating point was "at the far end", which a route's is not (its slowest receiver)
    pytest.importorskip("altair")
    from pinlib.present import review

    design, _ = _check(_flight_design(), tmp_path)
    built = review.build_review(design, check_design(design))
    charts = [c for c in built.all_charts() if c.kind in ("waveforms", "edge-vs-load")]
    assert {c.kind for c in charts} == {"waveforms", "edge-vs-load"}
    for c in charts:
        assert "series resistor" not in c.caption, c.caption
        assert "far end" not in c.caption, c.caption
        assert ". each" not in c.caption and ". rise" not in c.caption  # sentences
    edges = [c for c in charts if c.kind == "edge-vs-load"]
    assert all("at the slowest receiver's own point of the route" in c.caption
               for c in edges)


def test_the_edge_rule_clock_note_of_a_routed_bus_speaks_of_receivers(tmp_path):
    # on a route there is no one far end: the edges the rule reads are each receiver's
    _, bus = _check(_flight_design(), tmp_path)
    note = next(n for n in bus.notes if n.startswith("highest clock by the edge rule of thumb"))
    assert "every receiver's edge (at its own point of a route)" in note
    assert "far-end" not in note


def test_a_route_diagram_puts_each_branch_right_below_the_row_it_leaves(tmp_path):
    # U1 -> A -> B -> U2 with a stub B -> TP, and A -> C -> U3 with C -> U4 beside: the
    # stub at B was drawn after A's whole branch, under C's row, as if it left that row
    from pinlib.present.review.text import route_diagram

    last = '  { ref = "U3", part = "nor-flash-spi" },\n'
    head = HEAD.replace(last, last + '  { ref = "U4", part = "nor-flash-spi" },\n')
    path = _design_text(tmp_path, head, _stretch("U1", "A"), _stretch("A", "B", "3 cm"),
                        _stretch("B", "U2", "1 cm"), _stretch("A", "C", "4 cm"),
                        _stretch("C", "U3", "5 mm"), _stretch("C", "U4", "7 cm"),
                        _stretch("B", "TP", "1.5 mm"))
    rows = route_diagram(load_design(path).buses[0].lines["sclk"])
    assert rows == [
        "U1 ─2 cm─ A ─3 cm─ B ─1 cm─ U2",
        "                   └ B ─1.5 mm─ TP",
        "          └ A ─4 cm─ C ─5 mm─ U3",
        "                     └ C ─7 cm─ U4",
    ]


def test_a_route_diagram_joins_the_branches_of_one_point(tmp_path):
    # invented star: S feeds U2, a branch on to A (which feeds U3 and U5) and U4; every
    # branch of S was drawn "└", as if each were the last, and nothing joined the first
    # to the one below its own sub-branch
    from pinlib.present.review.text import route_diagram

    last = '  { ref = "U3", part = "nor-flash-spi" },\n'
    head = HEAD.replace(last, last + '  { ref = "U4", part = "nor-flash-spi" },\n'
                        '  { ref = "U5", part = "nor-flash-spi" },\n')
    path = _design_text(tmp_path, head, _stretch("U1", "S"), _stretch("S", "U2", "1 cm"),
                        _stretch("S", "A", "13 cm"), _stretch("A", "U3", "3 cm"),
                        _stretch("A", "U5", "3 cm"), _stretch("S", "U4", "3 cm"))
    rows = route_diagram(load_design(path).buses[0].lines["sclk"])
    assert rows == [
        "U1 ─2 cm─ S ─1 cm─ U2",
        "          ├ S ─13 cm─ A ─3 cm─ U3",
        "          │           └ A ─3 cm─ U5",
        "          └ S ─3 cm─ U4",
    ]


def test_a_route_diagram_names_a_cable_stretch_by_its_class(tmp_path):
    # invented: a board trace to a connector J1, then 25 cm of ribbon to U2 and a trace
    # on to U3; the cable stretch read "─25 cm─" like a trace of the board
    from pinlib.present.review.text import route_diagram

    cable = '{ from = "J1", to = "U2", length = "25 cm", part = "ribbon-cable" }'
    path = _design_text(tmp_path, HEAD, _stretch("U1", "J1"), cable,
                        _stretch("U2", "U3", "3 cm"))
    rows = route_diagram(load_design(path).buses[0].lines["sclk"])
    assert rows == ["U1 ─2 cm─ J1 ─25 cm ribbon-cable─ U2 ─3 cm─ U3"]


def test_the_reports_route_diagram_starts_at_the_controller(tmp_path):
    # a route written from its far end drew "U3 ─3 cm─ U2 ─2 cm─ U1": the engine reads it
    # from the controller whichever way it is written, and now so does the report
    path = _design(tmp_path, _stretch("U3", "U2", "3 cm"), _stretch("U2", "U1"))
    out = tmp_path / "r.md"
    assert main(["report", str(path), "--md", str(out)]) in (0, 1)
    text = out.read_text(encoding="utf-8")
    assert "U1 ─2 cm─ U2 ─3 cm─ U3" in text and "U3 ─3 cm─ U2" not in text


def test_json_names_each_receiver(capsys):
    main(["check", str(ROUTE_DESIGN), "--json"])
    data = json.loads(capsys.readouterr().out)
    bus = data["buses"][0]
    sclk = next(x for x in bus["lines"] if x["signal"] == "sclk")
    subjects = {c.get("subject") for c in sclk["checks"] if c["id"] == "edge-time"}
    assert subjects == {"U2", "U3", "U4"}


def test_waveform_chart_data_holds_every_receiver_of_a_route():
    from pinlib.present import plotdata

    design = load_design(ROUTE_DESIGN)
    bus = design.buses[0]
    result = check_design(design).buses[0]
    w = plotdata.waveform_data(bus, design, "copi", analysis=result)
    assert set(w.traces) == {f"{e} at {r}" for e in ("rise", "fall") for r in ("U2", "U3", "U4")}
    la = result.workings.lines["copi"]
    # the engine's own overshoot at each point (no engine runs again)
    for r in ("U2", "U3", "U4"):
        assert w.overshoot[f"rise at {r}"] == la.cases["U1"].wave_at(r, "rise").overshoot
    one = plotdata.waveform_data(bus, design, "copi", analysis=result, receiver="U3")
    assert set(one.traces) == {"rise, no series R", "fall, no series R"}
    assert one.receivers == [next(x.label for x in la.receivers if x.ref == "U3")]


def test_a_stub_far_shorter_than_the_ramp_is_lumped_and_says_so(tmp_path):
    # invented test data: a 1 µm stub (delay 5.7 fs) beside 2 cm and 13 cm of trace.  Its
    # delay once set the step (1.3e7 steps over a 75 ns record: refused); under 1/1000
    # of the ramp it is now its capacitance, half at each end, and named in a note
    text = ROUTE_DESIGN.read_text(encoding="utf-8")
    stub = '{ from = "T1", to = "U2", length = "1 cm"'
    assert stub in text
    path = tmp_path / "d.toml"

    def sclk_of(length):
        path.write_text(text.replace(stub, stub.replace("1 cm", length)), encoding="utf-8")
        return next(ln for ln in check_design(load_design(path)).buses[0].lines
                    if ln.signal == "sclk")

    tiny, point = sclk_of("1 µm"), sclk_of("0 cm")
    note = next(n for n in tiny.notes if n.startswith("T1–U2 (1 µm"))
    assert "lumped capacitance, half at each of its two points" in note
    # a stretch of 0 length is a point (docs/formats/design.md), not a capacitance
    assert "a section of 0 length (T1–U2) is a point, without capacitance: its two points " \
        "are one" in point.notes
    # a point and a 1 µm stub: the same edges but for the stub's 0.1 fF (common practice,
    # no source: the capacitance of 1 µm of trace is negligible against picofarads of pins)
    for name in ("edge_rise_time", "edge_fall_time", "overshoot", "undershoot"):
        assert tiny.figures[name].value == pytest.approx(point.figures[name].value, rel=1e-4)


def test_a_swap_names_the_paths_that_set_the_clock_as_the_checks_do(capsys):
    # "Highest clock set by cipo-first-bit U3 -> cipo-setup U3": the figure's ids, where
    # the checks and pinlib check's summary say "CIPO first bit U3"
    assert main(["swap", str(ROUTE_DESIGN), "U3=display-controller-spi"]) in (0, 1)
    (row,) = [ln for ln in capsys.readouterr().out.splitlines() if "Highest clock set by" in ln]
    assert "cipo-" not in row and "CIPO first bit U3 → CIPO setup U3" in row


def test_the_swap_workbooks_ranking_writes_a_lines_signal_in_capitals():
    # the ranking table of workbook 05 read "shared cipo Overshoot U1"
    from pinlib.present.widgets.swaps import SwapExplorer
    from pinlib.studies.candidates import rank_candidates

    ranking = rank_candidates(load_design(ROUTE_DESIGN), "U3")
    lines = [c.worst_check["line"] for c in ranking.candidates
             if c.worst_check and c.worst_check.get("line")]
    html = SwapExplorer._ranking_html(ranking)
    # the table's text (U3 is on one bus: the command names no bus before the check)
    text = " " + " ".join(re.sub(r"<[^>]+>", " ", html).split()) + " "
    assert lines and all(f" {s.upper()} " in text and f" {s} " not in text
                         for s in lines)


def test_candidates_at_a_junction_say_it_is_one(capsys):
    # "pinlib candidates spi-route.toml T1": T1 is a point of the SCLK route, and the
    # error listed the devices without a word of why T1, on the board, is not one
    assert main(["candidates", str(ROUTE_DESIGN), "T1"]) == 2
    err = " ".join(capsys.readouterr().err.split())
    assert "no device with this reference (got 'T1')" in err
    assert "T1 is a junction of the route of shared.sclk, not a device; devices: U1" in err


def test_an_idle_peripherals_cipo_pin_is_checked_against_its_rating(tmp_path):
    # the built-in peripheral classes rate every pin (VDD + 0.4 V, typical of the class):
    # while U2 drives CIPO, U3's output sits idle on the line and its rating applies
    _, bus = _check(CIPO_CHAIN, tmp_path)
    cipo = _line(bus, "cipo")
    for name in ("overshoot", "undershoot"):
        got = _by_subject(cipo, name)
        assert {"U1", "U2", "U3"} <= set(got), name
        # the line's figure is the worst at any pin, and now a check covers each
        assert cipo.figures[name].value == pytest.approx(max(c.value for c in got.values()),
                                                         rel=1e-12)
    assert not any("no check covers" in n for n in cipo.notes)


def test_a_swap_that_puts_a_pin_on_a_line_whose_route_misses_the_device_is_refused(capsys):
    # spi-route.toml's U4 (dac-spi) has no CIPO pin and the CIPO route does not reach
    # it; "pinlib swap ... U4=adc-spi" gave a load error at the design file's line 36,
    # a file the user had not touched, and "pinlib candidates ... U4" ranked seven parts
    # as ERROR with that text.  The swap is a refusal in its own terms.
    before = ROUTE_DESIGN.read_bytes()
    assert main(["swap", str(ROUTE_DESIGN), "U4=adc-spi"]) == 2
    err = " ".join(capsys.readouterr().err.split())
    assert "U4 = adc-spi refused" in err
    assert ("adc-spi pin 'cipo' (spi-cipo) would be on line cipo of bus shared, whose "
            "route does not reach U4" in err)
    assert "spi-route.toml:36" not in err
    assert ROUTE_DESIGN.read_bytes() == before

    from pinlib.studies.candidates import rank_candidates

    ranking = rank_candidates(load_design(ROUTE_DESIGN), "U4")
    assert [c.part for c in ranking.candidates] == ["dac-spi"]
    assert all(c.status != "error" for c in ranking.candidates)
    assert "cannot: pin functions, drives or routes" in " ".join(
        ranking.format_text(width=80).split())


def test_swap_help_names_the_route_refusal(capsys):
    with pytest.raises(SystemExit):
        main(["swap", "--help"])
    out = " ".join(capsys.readouterr().out.split())
    assert "a pin the old part lacks would sit on a routed line whose route does not reach " \
           "the position" in out
    assert "margins and figures that moved" in out


def _cable_line(tmp_path, ends: bool):
    """An open-drain irq over 10 m of the test cable (pp-cable, invented), 4.7 kΩ, with
    or without 3 mm of trace at each end: its line analysis."""
    trace = '  { length = "3 mm", capacitance = "1.2 pF/cm", delay = "60 ps/cm" },\n'
    stretches = (trace if ends else "") + '  { part = "pp-cable", length = "10 m" },\n'
    path = irq_design(tmp_path / ("ends.toml" if ends else "bare.toml"),
                      f'pullup = "4.7 kΩ"\nsections = [\n{stretches}{trace if ends else ""}]',
                      title="an interrupt over a long cable (invented)")
    return check_design(load_design(path)).buses[0].lines[0]


def test_millimetres_of_trace_beside_a_long_cable_do_not_set_the_rises_grid(tmp_path):
    # a pull-up's rise into 10 m of cable is recorded over tens of microseconds; 3 mm of
    # trace (18 ps) at its ends got one step of the coarsest grid the record affords,
    # marched the record one step a run (7.5 s an edge) and read 13 re-crossings of the
    # input's thresholds that the cable alone does not have. Below that step a stretch
    # is its capacitance (0.36 pF each, beside the cable's): the rise and the ringing
    # check read as the bare cable's, the edge within the 0.7 pF the traces add
    # (derived: 1.4e-3 of the whole capacitance; common practice, no source)
    ends, bare = _cable_line(tmp_path, True), _cable_line(tmp_path, False)
    rise = ends.figures["edge_rise_time"].value
    assert rise == pytest.approx(bare.figures["edge_rise_time"].value, rel=2e-3)
    ringing = {c.id: c for c in ends.checks}["ringing"]
    assert ringing.value == {c.id: c for c in bare.checks}["ringing"].value == 0
