"""Implausible part values and cable classes (pinlib.library.plausible, the LinePerLength
model): issue 13, items 15 and 19."""

from __future__ import annotations

import textwrap

import pytest

from pinlib.cli import main
from pinlib.core.errors import LibraryError
from pinlib.core.quantity import Threshold
from pinlib.library.loader import load_library
from pinlib.library.plausible import RANGES, implausible, part_warnings
from pinlib.library.values import Sourced

CABLE = """\
format = "pinlib.part/1"
id = "{id}"
title = "Invented cable class (demo data)"
category = "cable"

[line]
{line}
"""

TARGET = """\
format = "pinlib.part/1"
id = "odd-target"
title = "Invented target (demo data)"
category = "sensor"
supply = {{ min = "1.7 V", max = "5.5 V" }}
provenance = {{ basis = "datasheet", source = "invented rev A" }}

[pins.sda]
function = "i2c-sda"
drive = "open-drain"
c_in = "{c_in}"
v_il = "{v_il}"
v_ih = "0.7 VDD"

[pins.scl]
function = "i2c-scl"
c_in = "8 pF"
"""


@pytest.fixture()
def team(tmp_path, monkeypatch):
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    folder = tmp_path / "team"
    folder.mkdir()
    return folder


def _cable(team, pid, line):
    (team / f"{pid}.toml").write_text(CABLE.format(id=pid, line=textwrap.dedent(line)),
                                      encoding="utf-8")


@pytest.mark.parametrize(("line", "field", "expected"), [
    # derived from the lossless line, Z0 = sqrt(L'/C') and tpd = sqrt(L'C'): C' = tpd / Z0
    # = 5 ns/m / 100 Ω = 50 pF/m
    ('delay = "5 ns/m"\nimpedance = "100 Ω"', "capacitance", 50e-12),
    # tpd = Z0 C' = 50 Ω x 100 pF/m = 5 ns/m
    ('capacitance = "1 pF/cm"\nimpedance = "50 Ω"', "delay", 5e-9),
    # Z0 = tpd / C' = 5 ns/m / 50 pF/m = 100 Ω
    ('capacitance = "0.5 pF/cm"\ndelay = "5 ns/m"', "impedance", 100.0),
])
def test_any_two_of_three_define_the_cable(team, line, field, expected):
    # 13.15: a class given by impedance and delay (no capacitance) is accepted
    _cable(team, "c2", line)
    lib = load_library([team], env=False, strict=True)
    got = getattr(lib.get("c2").line, field)
    assert got.value == pytest.approx(expected, rel=1e-12)
    assert got.derived and "lossless line" in got.source


def test_impedance_alone_is_refused(team):
    _cable(team, "c1", 'impedance = "100 Ω"')
    with pytest.raises(LibraryError, match="two of capacitance, delay and impedance"):
        load_library([team], env=False, strict=True)


@pytest.mark.parametrize(("delay", "refused"), [
    ("3.3 ns/m", False),  # an air line rounded: 1 % under 1/c = 3.3356 ns/m, accepted
    ("3.2 ns/m", True),   # 4 % under: refused, saying why (not a bare range)
])
def test_a_written_delay_under_light_s_is_refused_past_a_rounded_figure(team, delay, refused):
    # invented test part (the review's coax-air: 11 pF/m and 3.3 ns/m was refused with
    # "outside the allowed range ... at least 3.34 ns/m")
    _cable(team, "air", f'capacitance = "11 pF/m"\ndelay = "{delay}"')
    lib = load_library([team], env=False)
    assert ("air" not in lib.parts) == refused
    if refused:
        (problem,) = lib.problems
        assert problem.field == "line.delay" and problem.value == delay
        assert "shorter than light's in vacuum (1/c, 3.3356 ns/m)" in problem.problem
        # derived from 1/c = 3.3356 ns/m less 2 % (pinlib.core.quantity.DELAY_MIN)
        assert problem.expected == "at least 3.27 ns/m and at most 1 µs/m"


def test_a_cable_by_impedance_and_delay_serves_a_design(team, tmp_path):
    _cable(team, "zd", 'delay = "5 ns/m"\nimpedance = "100 Ω"')
    design = tmp_path / "d.toml"
    design.write_text(f"""\
format = "pinlib.design/1"
title = "cable by Z0 and delay (invented)"
library = ["{team.as_posix()}"]

[[bus]]
id = "b"
protocol = "i2c"
supply = "3.3 V"
cables = [ {{ part = "zd", length = "2 m" }} ]
devices = [
  {{ ref = "U1", part = "mcu-3v3", role = "controller" }},
  {{ ref = "U2", part = "eeprom-i2c" }},
]
""", encoding="utf-8")
    from pinlib.model.design import load_design

    seg = load_design(design).buses[0].segments[0]
    # derived from C' = tpd / Z0 = 50 pF/m over 2 m
    assert seg.cables[0].part.line.capacitance.value * 2.0 == pytest.approx(100e-12)


@pytest.mark.parametrize(("capacitance", "problem"), [
    ("0.5 pF/cm", False),   # 100 Ω x 50 pF/m = 5 ns/m: agrees (derived from tpd = Z0 C')
    ("0.52 pF/cm", False),  # +4 %: within 5 % (common practice, no source)
    ("0.8 pF/cm", True),    # +60 %
])
def test_three_values_that_disagree_are_a_problem(team, capsys, capacitance, problem):
    _cable(team, "c3", f'capacitance = "{capacitance}"\ndelay = "5 ns/m"\nimpedance = "100 Ω"')
    lib = load_library([team], env=False, strict=True)
    found = part_warnings(lib.get("c3"), lib)
    assert bool(found) is problem
    assert main(["parts", "check", str(team), "--library", str(team)]) == int(problem)
    out = capsys.readouterr().out
    if problem:
        assert "c3.toml:7, field 'line': capacitance, delay and impedance disagree" in out
        assert "8 ns/m against the delay 5 ns/m (+60%)" in out


@pytest.mark.parametrize(("c_in", "v_il", "fields"), [
    ("500 pF", "0.3 VDD", ["pins.sda.c_in"]),
    ("8 pF", "-0.3 V", ["pins.sda.v_il"]),
    ("8 pF", "0.3 VDD", []),
])
def test_implausible_values_are_listed_by_parts_check(team, capsys, c_in, v_il, fields):
    # 13.19: c_in 500 pF and v_il -0.3 V load (they are values), but are listed
    (team / "odd.toml").write_text(TARGET.format(c_in=c_in, v_il=v_il), encoding="utf-8")
    code = main(["parts", "check", str(team), "--library", str(team)])
    out = capsys.readouterr().out
    assert code == (1 if fields else 0)
    for f in fields:
        assert f"field '{f}': an implausible value for this field" in out
        assert "(common practice, no source)" in out


def test_record_warns_on_an_implausible_value(team, capsys):
    (team / "odd.toml").write_text(TARGET.format(c_in="8 pF", v_il="0.3 VDD"), encoding="utf-8")
    lib = ["--library", str(team)]
    assert main(["parts", "record", "odd-target", "sda.c_in", "500 pF", "--source", "x", *lib]) == 0
    err = capsys.readouterr().err
    assert "pinlib: warning:" in err and "field 'pins.sda.c_in'" in err
    assert "100 fF to 50 pF" in err
    assert main(["parts", "record", "--source", "x", *lib, "odd-target", "--", "sda.v_il",
                 "-0.3 V"]) == 0
    err = capsys.readouterr().err
    assert "field 'pins.sda.v_il'" in err and "pins.sda.c_in" not in err
    assert main(["parts", "record", "odd-target", "sda.v_il", "0.3 VDD", "--source", "x",
                 *lib]) == 0
    assert "warning" not in capsys.readouterr().err


def test_record_warns_when_a_cable_s_three_values_come_to_disagree(team, capsys):
    # invented: a cable class of 50 pF/m, 5 ns/m, 100 Ω. A record of 80 pF/m makes
    # Z0·C' 8 ns/m against 5 ns/m; the warning, on the table 'line', was filtered out
    # as another field's, and only 'parts check' told of it
    _cable(team, "c4", 'capacitance = "0.5 pF/cm"\ndelay = "5 ns/m"\nimpedance = "100 Ω"')
    assert main(["parts", "record", "c4", "line.capacitance", "80 pF/m", "--source", "x",
                 "--library", str(team)]) == 0
    err = " ".join(capsys.readouterr().err.split())
    assert "pinlib: warning:" in err and "capacitance, delay and impedance disagree" in err
    # derived: 100 Ω x 80 pF/m = 8 ns/m against 5 ns/m, +60 %
    assert "8 ns/m against the delay 5 ns/m (+60%)" in err


def _placing(tmp_path, team, part_id: str, title: str):
    """A design of one 3.3 V I2C bus placing team part ``part_id`` beside mcu-3v3
    (invented test design)."""
    design = tmp_path / "d.toml"
    design.write_text(f"""\
format = "pinlib.design/1"
title = "{title}"
library = ["{team.as_posix()}"]

[[bus]]
id = "b"
protocol = "i2c"
supply = "3.3 V"
trace = {{ length = "5 cm", capacitance = "1 pF/cm" }}
devices = [
  {{ ref = "U1", part = "mcu-3v3", role = "controller" }},
  {{ ref = "U2", part = "{part_id}" }},
]
""", encoding="utf-8")
    return design


def test_check_warns_about_the_parts_it_places(team, tmp_path, capsys):
    (team / "odd.toml").write_text(TARGET.format(c_in="8 pF", v_il="-0.3 V"), encoding="utf-8")
    design = _placing(tmp_path, team, "odd-target", "implausible part (invented)")
    main(["check", str(design)])
    err = capsys.readouterr().err
    assert "pinlib: warning: odd-target:" in err and "field 'pins.sda.v_il'" in err


def test_check_warnings_wrap_to_the_terminal_and_stay_whole_in_a_pipe(team, tmp_path, capsys,
                                                                      monkeypatch):
    # a warning about an implausible value ran to ~200 characters on a terminal
    (team / "odd.toml").write_text(TARGET.format(c_in="8 pF", v_il="-0.3 V"), encoding="utf-8")
    design = _placing(tmp_path, team, "odd-target", "implausible part (invented)")
    monkeypatch.delenv("COLUMNS", raising=False)
    main(["check", str(design)])
    piped = capsys.readouterr().err.splitlines()
    (line,) = [ln for ln in piped if "pins.sda.v_il" in ln]
    assert line.startswith("pinlib: warning: odd-target:") and len(line) > 80
    monkeypatch.setenv("COLUMNS", "80")
    main(["check", str(design)])
    err = capsys.readouterr().err
    assert "pinlib: warning: odd-target:" in err
    assert max(len(ln) for ln in err.splitlines()) <= 80


def test_relative_levels_are_tried_at_both_supply_ends():
    # 2 V as v_il is 0.36 VDD at 5.5 V but 1.18 VDD at 1.7 V (above 0.8 VDD)
    v = Sourced(2.0, "V", "2 V")
    assert implausible(v, "v_il", "open-drain", (1.7, 5.5)) == \
        "0.05 VDD to 0.8 VDD; at VDD 1.7 V it is 1.18 VDD"
    assert implausible(v, "v_il", "open-drain", (3.0, 5.5)) is None


def test_a_relative_level_out_of_range_names_the_supply_it_was_tried_at():
    # VDD - 2.9 V is 0.4 V at 3.3 V but -1.2 V at the class's 1.7 V minimum
    v = Sourced(Threshold(1.0, -2.9, "VDD - 2.9 V"), "V", "VDD - 2.9 V")
    assert implausible(v, "v_ol", "open-drain", (1.7, 5.5)) == \
        "0 V to 1 V; at VDD 1.7 V it is -1.2 V"


def test_the_builtin_library_holds_no_implausible_value():
    lib = load_library(env=False)
    found = [w.message for pid in lib.parts for w in part_warnings(lib.parts[pid], lib)]
    assert not found
    assert all(lo <= hi for lo, hi, _ in RANGES.values())


TYP_PART = """\
format = "pinlib.part/1"
id = "t-typ"
title = "Invented EEPROM with typical values beside its limits (test data)"
category = "memory"
extends = "eeprom-i2c"
provenance = {{ basis = "datasheet", source = "invented rev A" }}

[pins.sda]
c_in = {{ value = "4 pF", typ = "{c_typ}" }}
v_ol = {{ value = "0.4 V", typ = "0.2 V" }}
v_il = {{ value = "0.3 VDD", typ = "0.5 VDD" }}

[timing]
f_max = {{ value = "400 kHz", typ = "{f_typ}" }}
"""


def test_a_typical_value_beyond_its_limit_is_a_problem_naming_the_line(team, capsys):
    # c_in is a maximum and f_max a minimum (pinlib.library.schema glossary): a typical
    # 5 pF beside a 4 pF maximum, or a typical 100 kHz beside a 400 kHz minimum, is a
    # typing slip; a threshold's typical switching point beyond VIL is normal
    (team / "t-typ.toml").write_text(TYP_PART.format(c_typ="5 pF", f_typ="100 kHz"),
                                     encoding="utf-8")
    assert main(["parts", "check", str(team)]) != 0
    out = " ".join(capsys.readouterr().out.split())
    assert ("t-typ.toml:9, field 'pins.sda.c_in.typ': the typical value lies beyond the "
            "limit beside it, 4 pF (got '5 pF')") in out
    assert "which for c_in is the maximum" in out
    assert "field 'timing.f_max.typ'" in out and "which for f_max is the minimum" in out
    assert "pins.sda.v_il" not in out and "pins.sda.v_ol" not in out
    (team / "t-typ.toml").write_text(TYP_PART.format(c_typ="3.5 pF", f_typ="1 MHz"),
                                     encoding="utf-8")
    assert main(["parts", "check", str(team)]) == 0


def test_check_warns_of_a_placed_value_that_claims_a_datasheet_but_names_none(
        team, tmp_path, capsys):
    # an invented team part whose c_in says "datasheet" and names no document: parts check
    # lists it, and pinlib check of a design placing the part says so too
    (team / "nosrc.toml").write_text("""\
format = "pinlib.part/1"
id = "nosrc-target"
title = "Target without its sources (invented test part)"
category = "memory"
extends = "eeprom-i2c"
provenance = { basis = "estimate", source = "invented test part" }

[pins.sda]
c_in = { value = "6 pF", basis = "datasheet" }
""", encoding="utf-8")
    design = _placing(tmp_path, team, "nosrc-target", "unsourced part (invented)")
    main(["check", str(design)])
    err = capsys.readouterr().err
    assert "pinlib: warning: nosrc-target:" in err and "field 'pins.sda.c_in'" in err
    assert "basis 'datasheet' but no source" in err


TIMING_TYP = """\
format = "pinlib.part/1"
id = "t-timing"
title = "Invented part with typical timing beside its limits (test data)"
category = "{category}"
extends = "{parent}"
provenance = {{ basis = "datasheet", source = "invented rev A" }}

[timing]
{timing}
"""

# every timing field with a side, its typical value on the wrong side for a part that
# is not a controller: output delays are maximums, setups, holds and widths what the
# part must be given (its typical need at or below the guaranteed one)
_WRONG_SIDE = {
    "t_vd_dat": ("0.9 us", "2 us"), "t_vd_ack": ("0.9 us", "1 us"),
    "t_cs_valid": ("20 ns", "25 ns"), "t_valid": ("20 ns", "25 ns"),
    "t_pd": ("20 ns", "25 ns"), "t_su_dat": ("100 ns", "250 ns"),
    "t_hd_dat": ("10 ns", "20 ns"), "t_setup": ("5 ns", "8 ns"), "t_hold": ("5 ns", "8 ns"),
    "t_cs_setup": ("10 ns", "20 ns"), "t_cs_hold": ("10 ns", "20 ns"),
    "t_low": ("1.3 us", "2 us"), "t_high": ("0.6 us", "1 us"),
}


def _timing_warnings(team, category, parent, fields):
    timing = "\n".join(f'{f} = {{ value = "{v}", typ = "{t}" }}' for f, (v, t) in fields.items())
    (team / "t-timing.toml").write_text(TIMING_TYP.format(category=category, parent=parent,
                                                          timing=timing), encoding="utf-8")
    lib = load_library([team], env=False)
    # a warning: the part loads (a typ is never computed with), each typ named at its
    # own line and field
    assert not lib.problems
    return {w.field: w for w in part_warnings(lib.get("t-timing"), lib)}


def test_every_timing_limit_checks_the_side_of_its_typical_value(team):
    # invented test part.  t_vd_dat 0.9 us beside a typical 2 us gave no warning
    got = _timing_warnings(team, "memory", "eeprom-i2c", _WRONG_SIDE)
    assert sorted(got) == sorted(f"timing.{f}.typ" for f in _WRONG_SIDE)
    assert got["timing.t_vd_dat.typ"].expected.startswith(
        "a typ at most the value, which for t_vd_dat is the maximum")
    assert got["timing.t_su_dat.typ"].expected.startswith(
        "a typ at most the value: t_su_dat is the least the part must be given")
    assert got["timing.t_vd_dat.typ"].file.endswith("t-timing.toml")
    assert got["timing.t_vd_dat.typ"].line == 9
    # the right side: no problem
    right = {f: (t, v) for f, (v, t) in _WRONG_SIDE.items()}
    assert _timing_warnings(team, "memory", "eeprom-i2c", right) == {}


def test_a_controller_gives_its_lead_lag_and_widths_at_least_as_stated(team):
    # invented test part.  A controller's t_cs_setup, t_cs_hold, t_low, t_high, t_su_dat
    # and t_hd_dat are what it gives (docs/formats/part.md): typically more than the
    # minimum; its t_setup and t_hold stay what it needs
    given = {f: _WRONG_SIDE[f] for f in ("t_cs_setup", "t_cs_hold", "t_low", "t_high",
                                         "t_su_dat", "t_hd_dat")}
    assert _timing_warnings(team, "controller", "mcu-3v3", given) == {}
    short = {f: (v, t) for f, (t, v) in given.items()}
    got = _timing_warnings(team, "controller", "mcu-3v3", short)
    assert sorted(got) == sorted(f"timing.{f}.typ" for f in given)
    assert "which for t_cs_setup is the minimum" in got["timing.t_cs_setup.typ"].expected
    need = _timing_warnings(team, "controller", "mcu-3v3", {"t_setup": ("5 ns", "8 ns")})
    assert list(need) == ["timing.t_setup.typ"]


def test_a_bridge_offset_threshold_and_transition_limit_check_their_typical_value(team):
    # invented test parts: a repeater's low_offset and a pass transistor's v_gs_th are
    # maximums, as is a pin's t_transition_max
    (team / "rep.toml").write_text(textwrap.dedent("""\
        format = "pinlib.part/1"
        id = "rep"
        title = "Invented repeater (test data)"
        category = "buffer"
        extends = "i2c-repeater"

        [sides.b]
        low_offset = { value = "0.6 V", typ = "0.7 V" }
        """), encoding="utf-8")
    (team / "xl.toml").write_text(textwrap.dedent("""\
        format = "pinlib.part/1"
        id = "xl"
        title = "Invented translator (test data)"
        category = "translator"
        extends = "level-translator-mosfet"

        [bridge]
        v_gs_th = { value = "1.5 V", typ = "1.8 V" }
        """), encoding="utf-8")
    lib = load_library([team], env=False)
    assert not lib.problems  # warnings: both parts load
    assert [w.field for w in part_warnings(lib.get("rep"), lib, own_only=True)] == [
        "sides.b.low_offset.typ"]
    assert [w.field for w in part_warnings(lib.get("xl"), lib, own_only=True)] == [
        "bridge.v_gs_th.typ"]


def test_recording_a_typical_output_delay_above_its_maximum_warns(team, capsys):
    # invented test part; the audit's command: no warning was given.  A typ beyond its
    # limit (a datasheet's typ at other conditions, or a slip) is written and warned of
    path = team / "t-timing.toml"
    path.write_text(TIMING_TYP.format(category="memory", parent="eeprom-i2c", timing=""),
                    encoding="utf-8")
    assert main(["parts", "record", "t-timing", "timing.t_vd_dat", "0.9 us", "--typ", "2 us",
                 "--source", "invented rev A", "--library", str(team)]) == 0
    err = " ".join(capsys.readouterr().err.split())
    assert "field 'timing.t_vd_dat.typ': the typical value lies beyond the limit" in err
    assert 'typ = "2 us"' in path.read_text(encoding="utf-8")


def test_parts_check_lists_a_typ_beyond_its_limit_and_the_part_still_loads(team, capsys):
    # invented test part (the review's ulv-sensor): a typ c_in of 6 pF beside a maximum
    # of 5 pF was refused, and the part could not be placed
    (team / "ulv.toml").write_text(textwrap.dedent("""\
        format = "pinlib.part/1"
        id = "ulv"
        title = "Invented sensor with a typ c_in above its max (test data)"
        category = "sensor"
        extends = "eeprom-i2c"

        [pins.sda]
        c_in = { value = "5 pF", typ = "6 pF" }
        """), encoding="utf-8")
    lib = load_library([team], env=False)
    assert "ulv" in lib.parts and not lib.problems
    assert main(["parts", "check", str(team)]) == 1
    got = capsys.readouterr()
    err = " ".join((got.out + got.err).split())
    assert "field 'pins.sda.c_in.typ': the typical value lies beyond the limit" in err


#: A push-pull output whose edge points are stated (invented test data): 1.5 ns (10-90 %)
#: into 15 pF, 2.5 ns into 30 pF, and 1.2 ns (20-80 %) into 15 pF.
OUTPUT = """\
format = "pinlib.part/1"
id = "out-x"
title = "Invented output (demo data)"
category = "memory"
supply = {{ min = "3 V", max = "3.6 V" }}
provenance = {{ basis = "datasheet", source = "invented rev A" }}

[pins]
sclk = {{ function = "spi-sclk" }}
copi = {{ function = "spi-copi" }}
cs = {{ function = "spi-cs" }}

[pins.cipo]
function = "spi-cipo"
drive = "push-pull"
{r_out}
edges = [
  {{ load = "15 pF", rise = "1.5 ns", fall = "1.5 ns" }},
  {{ load = "30 pF", rise = "2.5 ns", fall = "2.5 ns" }},
  {{ load = "15 pF", fall = "1.2 ns", levels = "20-80" }},
]
"""


@pytest.mark.parametrize(("r_out", "problem"), [
    # derived (single-pole RC step, 10-90 % = ln 9 · RC): 35 Ω · 15 pF → 1.153 ns and
    # 35 Ω · 30 pF → 2.307 ns, 20-80 % (ln 4 · RC) 0.728 ns: no problem
    ('r_out = "35 Ω"', None),
    # 40 Ω · 30 pF → 2.637 ns, beyond 5 % over 2.5 ns (2.625 ns)
    ('r_out = "40 Ω"', "a 10-90 % rise of 2.64 ns into 30 pF, slower than the 2.5 ns"),
    # 60 Ω · 15 pF → 1.977 ns against 1.5 ns: the rise of the first point
    ('r_out = "60 Ω"', "a 10-90 % rise of 1.98 ns into 15 pF, slower than the 1.5 ns"),
    # 20-80 % = ln 4 · RC: 45 Ω · 15 pF → 0.936 ns of 1.2 ns, but 10-90 % 45 Ω · 30 pF →
    # 2.966 ns against 2.5 ns
    ('r_out = "45 Ω"', "a 10-90 % rise of 2.97 ns into 30 pF, slower than the 2.5 ns"),
    # the fast corner's own r_out against its own edges: 30 Ω · 15 pF → 0.989 ns (10-90 %)
    # against 0.8 ns
    ('r_out = "35 Ω"\nfast = { r_out = "30 Ω", edges = [{ load = "15 pF", rise = "0.8 ns" }] }',
     "a 10-90 % rise of 989 ps into 15 pF, slower than the 800 ps"),
    ('', None),  # no r_out: the edges set it
])
def test_an_r_out_its_own_edges_contradict_is_a_problem(team, capsys, r_out, problem):
    # A team part recorded r_out 60 Ω beside inherited edges of 1.5 ns into 15 pF: its
    # RC alone is slower than the edge, so the driver fit cannot hold the points, and
    # only --detail said so (the edges got faster and the margins larger)
    (team / "out-x.toml").write_text(OUTPUT.format(r_out=r_out), encoding="utf-8")
    code = main(["parts", "check", str(team), "--library", str(team)])
    out = " ".join(capsys.readouterr().out.split())
    assert code == (1 if problem else 0)
    if problem:
        field = "pins.cipo.fast.r_out" if "fast" in r_out else "pins.cipo.r_out"
        line = 17 if "fast" in r_out else 16  # the file's line that sets it
        assert f"out-x.toml:{line}, field '{field}': alone it gives {problem}" in out
        assert "record r_out and the edges from the same datasheet" in out


def test_recording_an_r_out_its_edges_contradict_warns(team, capsys):
    (team / "out-x.toml").write_text(OUTPUT.format(r_out=""), encoding="utf-8")
    assert main(["parts", "record", "out-x", "cipo.r_out", "60 Ω", "--source", "x",
                 "--library", str(team)]) == 0
    err = " ".join(capsys.readouterr().err.split())
    assert "pinlib: warning:" in err and "field 'pins.cipo.r_out'" in err
    assert "1.98 ns into 15 pF" in err  # derived: ln 9 · 60 Ω · 15 pF
