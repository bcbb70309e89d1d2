"""A push-pull output's fast corner (``[pins.<name>.fast]``): the format and the line engine.

The slow corner (the pin's ``r_out`` and ``edges``) sets edge times and the latest
flights (setup); the fast corner sets overshoot, undershoot and ringing, and its flights
stand beside the slow ones for the hold checks.  The parts here are invented test data.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from pinlib.core.errors import LibraryError
from pinlib.engines.pushline import Endpoint, analyse_line
from pinlib.library import load_library
from pinlib.library.plausible import part_warnings
from pinlib.model.design import Device, Line, Section
from pinlib.physics.driver import driver_from_pin

DATA = Path(__file__).parent / "data" / "pushpull"
VDD = 3.3

HEAD = """format = "pinlib.part/1"
id = "{id}"
title = "Test output, invented"
category = "logic"
supply = {{ min = "3.0 V", max = "3.6 V" }}
provenance = {{ basis = "datasheet", source = "test data, invented" }}

[pins.sclk]
function = "spi-sclk"
drive = "push-pull"
c_in = "5 pF"
"""

# invented: a weak slow corner (40 ohm) and a strong fast one (12 ohm); the 12 ohm part
# is the fast corner alone, so its results are what the fast corner must give.
PARTS = {
    "slow-only": 'r_out = "40 Ω"\n',
    "fast-only": 'r_out = "12 Ω"\n',
    "both": 'r_out = "40 Ω"\nfast = { r_out = "12 Ω" }\n',
}


@pytest.fixture(scope="module")
def lib(tmp_path_factory):
    folder = tmp_path_factory.mktemp("parts")
    for pid, body in PARTS.items():
        (folder / f"{pid}.toml").write_text(HEAD.format(id=pid) + body, encoding="utf-8")
    return load_library([DATA, folder], builtin=False, env=False)


def line_of(lib, part, length=0.20):
    """The part driving a 50 ohm trace (1 pF/cm, 50 ps/cm) into one receiver."""
    ctrl = Device("U1", part, lib.parts[part], "controller", None)
    rx = Device("U2", "pp-periph", lib.parts["pp-periph"], "peripheral", None)
    d = Endpoint(ctrl, "sclk", ctrl.part.pins["sclk"], VDD)
    r = Endpoint(rx, "sclk", rx.part.pins["sclk"], VDD)
    line = Line("sclk", (Section(length, None, 1e-10, 5e-9),), "none", 0.0)
    return analyse_line("sclk", line, [d], [d, r], [r], clock=20e6, clock_line=True)


def test_fast_corner_sets_overshoot_slow_corner_sets_edges_and_timing(lib):
    slow, fast, both = (line_of(lib, p) for p in ("slow-only", "fast-only", "both"))
    f_slow, f_fast, f_both = (a.result.figures for a in (slow, fast, both))
    # derived: a stronger output (12 ohm against 40 ohm into a 50 ohm line) launches a
    # larger step and reflects more: overshoot rises; its RC edge shortens
    assert f_fast["overshoot"].value > f_slow["overshoot"].value
    assert f_fast["edge_rise_time"].value < f_slow["edge_rise_time"].value
    # the part with both corners: overshoot, undershoot and ringing from the fast one,
    # edge times and flights from the slow one (the same solves, so to rounding)
    assert f_both["overshoot"].value == pytest.approx(f_fast["overshoot"].value, rel=1e-12)
    assert f_both["undershoot"].value == pytest.approx(f_fast["undershoot"].value, rel=1e-12)
    for name in ("edge_rise_time", "edge_fall_time"):
        assert f_both[name].value == pytest.approx(f_slow[name].value, rel=1e-12)
    rx = both.receivers[0]
    for edge in ("rise", "fall"):
        got = both.cases["U1"].flight(rx, edge)
        want = slow.cases["U1"].flight(slow.receivers[0], edge)
        assert (got.early, got.late) == pytest.approx((want.early, want.late), rel=1e-12)
        # ...and the flights at the fast corner (for hold) the fast part's, each from
        # its own reference (the same solves, so to rounding)
        alone = fast.cases["U1"].flight(fast.receivers[0], edge)
        assert (got.fast_early, got.fast_late) == pytest.approx((alone.early, alone.late),
                                                                rel=1e-12)
        assert want.fast_early is None and want.at_fast() == want
    over = both.result.check("overshoot")
    assert over.value == pytest.approx(fast.result.check("overshoot").value, rel=1e-12)
    assert over.value > slow.result.check("overshoot").value
    assert "(fast corner)" in over.message
    assert "(fast corner)" in both.result.check("ringing").message
    assert "(slow corner)" in both.result.check("edge-time").message
    assert "(fast corner)" not in slow.result.check("overshoot").message
    assert any("fast corner (pins.sclk.fast)" in n for n in both.result.notes)


def test_fast_corner_without_edges_keeps_the_slow_ramps(lib):
    pin = lib.parts["both"].pins["sclk"]
    model = driver_from_pin(pin, VDD)
    assert model.r_rise == 40.0 and model.fast.r_rise == 12.0
    assert model.fast.t_ramp_rise == model.t_ramp_rise
    assert model.fast.basis["t_ramp_rise"] == "slow corner"
    assert driver_from_pin(lib.parts["slow-only"].pins["sclk"], VDD).fast is None


@pytest.mark.parametrize(("body", "needle"), [
    ('r_out = "40 Ω"\nfast = { description = "x" }\n', "needs r_out or edges"),
    ('fast = { r_out = "12 Ω" }\n', "belongs to a push-pull output"),
])
def test_fast_corner_refusals(tmp_path, body, needle):
    text = HEAD.format(id="bad") + body
    if "belongs" in needle:
        text = text.replace('drive = "push-pull"', 'drive = "input"')
    (tmp_path / "bad.toml").write_text(text, encoding="utf-8")
    with pytest.raises(LibraryError, match=needle):
        load_library([tmp_path], builtin=False, env=False, strict=True)


def test_fast_corner_r_out_has_the_plausible_range(tmp_path):
    text = HEAD.format(id="odd") + 'r_out = "40 Ω"\nfast = { r_out = "0.2 Ω" }\n'
    (tmp_path / "odd.toml").write_text(text, encoding="utf-8")
    lib = load_library([tmp_path], builtin=False, env=False)
    problems = part_warnings(lib.parts["odd"], lib)
    # common practice, no source: r_out 1 ohm to 1 kohm (plausible.RANGES)
    assert [p.field for p in problems] == ["pins.sclk.fast.r_out"]


def test_a_fast_corner_weaker_than_the_slow_one_is_a_problem(tmp_path):
    text = HEAD.format(id="swapped") + 'r_out = "12 Ω"\nfast = { r_out = "40 Ω" }\n'
    (tmp_path / "swapped.toml").write_text(text, encoding="utf-8")
    lib = load_library([tmp_path], builtin=False, env=False)
    (problem,) = part_warnings(lib.parts["swapped"], lib)
    assert problem.field == "pins.sclk.fast.r_out" and "swapped" in problem.message
    assert problem.line == 13  # the line of the fast corner (HEAD is 11 lines, r_out 12)


def routed_line_of(lib, part):
    """The same part on a routed line: U1 -10 cm- U2 -10 cm- U3 (a daisy chain)."""
    ctrl = Device("U1", part, lib.parts[part], "controller", None)
    rxs = [Device(ref, "pp-periph", lib.parts["pp-periph"], "peripheral", None)
           for ref in ("U2", "U3")]
    d = Endpoint(ctrl, "sclk", ctrl.part.pins["sclk"], VDD)
    rs = [Endpoint(x, "sclk", x.part.pins["sclk"], VDD) for x in rxs]
    sec = Section(0.10, None, 1e-10, 5e-9)
    line = Line("sclk", (sec, sec), "none", 0.0, route=(("U1", "U2"), ("U2", "U3")))
    return analyse_line("sclk", line, [d], [d, *rs], rs, clock=20e6, clock_line=True)


def _at(analysis, check_id, ref):
    """The check ``check_id`` of a line result whose subject is ``ref``."""
    (got,) = [c for c in analysis.result.checks if c.id == check_id and c.subject == ref]
    return got


def test_fast_corner_on_a_routed_line_sets_overshoot_at_every_receiver(lib):
    slow, fast, both = (routed_line_of(lib, p) for p in ("slow-only", "fast-only", "both"))
    for ref in ("U2", "U3"):
        # derived as above: the fast corner's edges set overshoot at each point, the
        # slow corner's the edge times (same solves, so to rounding)
        got = [_at(a, "overshoot", ref) for a in (slow, fast, both)]
        assert got[2].value == pytest.approx(got[1].value, rel=1e-12)
        assert got[2].value > got[0].value
        assert "(fast corner)" in got[2].message
        edge = [_at(a, "edge-time", ref) for a in (slow, both)]
        assert edge[1].value == pytest.approx(edge[0].value, rel=1e-12)
        for edge_name in ("rise", "fall"):
            assert both.cases["U1"].wave_at(ref, edge_name).t_edge == pytest.approx(
                slow.cases["U1"].wave_at(ref, edge_name).t_edge, rel=1e-12)
    f_both, f_fast = both.result.figures, fast.result.figures
    assert f_both["overshoot"].value == pytest.approx(f_fast["overshoot"].value, rel=1e-12)


def _auto_line_of(lib, part, length=0.20):
    """As :func:`line_of`, with ``series_resistor = "auto"``."""
    ctrl = Device("U1", part, lib.parts[part], "controller", None)
    rx = Device("U2", "pp-periph", lib.parts["pp-periph"], "peripheral", None)
    d = Endpoint(ctrl, "sclk", ctrl.part.pins["sclk"], VDD)
    r = Endpoint(rx, "sclk", rx.part.pins["sclk"], VDD)
    line = Line("sclk", (Section(length, None, 1e-10, 5e-9),), "auto", 0.0)
    return analyse_line("sclk", line, [d], [d, r], [r], clock=20e6, clock_line=True)


def test_the_fast_corner_judges_electrical_length_and_sizes_auto_series(lib):
    slow, fast, both = (line_of(lib, p) for p in ("slow-only", "fast-only", "both"))
    # the part with both corners: the line is long against the quicker of its edges
    # (here the fast corner's, the same ramps behind 12 Ω instead of 40 Ω), so its
    # delay-to-edge ratio is the fast part's (derived: same edge into the same pins)
    assert both.edge_alone == pytest.approx(fast.edge_alone, rel=1e-12)
    assert both.ratio == pytest.approx(fast.ratio, rel=1e-12) and both.ratio > slow.ratio
    a_slow, a_fast, a_both = (_auto_line_of(lib, p)
                              for p in ("slow-only", "fast-only", "both"))
    # derived: Z0 = td/C = 5 ns/m / 100 pF/m = 50 Ω; "auto" matches the corner that
    # rings, 50 - 12 = 38 Ω -> E24 39 Ω (the slow corner alone: 50 - 40 = 10 Ω)
    assert a_slow.rs == pytest.approx(10.0) and a_fast.rs == pytest.approx(39.0)
    assert a_both.rs == pytest.approx(39.0)
    # ...while its edge times stay the slow corner's, through that resistor: slower
    # than the fast part's through the same 39 Ω
    f_both, f_fast = a_both.result.figures, a_fast.result.figures
    assert f_both["edge_rise_time"].value > f_fast["edge_rise_time"].value


def test_auto_series_note_says_it_matched_the_fast_corner(lib):
    # the pin's own r_out is 40 Ω: a note reading "r_out 12 Ω" alone left the user to
    # guess where 12 Ω came from (the fast corner, which "auto" sizes for)
    a_both, a_slow = _auto_line_of(lib, "both"), _auto_line_of(lib, "slow-only")
    (note,) = [n for n in a_both.result.notes if n.startswith("auto series resistor")]
    assert "r_out 12 Ω = " in note and "r_out: U1.sclk at its fast corner, the mean" in note
    (note,) = [n for n in a_slow.result.notes if n.startswith("auto series resistor")]
    assert "fast corner" not in note
