"""The parts library: schema errors with their place, extends, overlays, checks, fuzz."""

from __future__ import annotations

import json
import re
import tempfile
import textwrap
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from pinlib.core.errors import LibraryError, PinlibError
from pinlib.core.quantity import UNITS, parse, parse_threshold
from pinlib.library import loader, walk
from pinlib.library.jsonschema import level_pattern, part_json_schema, quantity_pattern
from pinlib.library.loader import library_folders, load_library

BASE = """\
format = "pinlib.part/1"
id = "base"
title = "Generic target"
category = "sensor"
abstract = true
supply = { min = "1.7 V", max = "5.5 V" }
provenance = { basis = "generic", source = "common practice" }

[pins.sda]
function = "i2c-sda"
drive = "open-drain"
c_in = { value = "10 pF", source = "spec, Ci max" }
leakage = "10 µA"
v_il = "0.3 VDD"
v_ih = "0.7 VDD"
v_ol = "0.4 V"
i_ol = "3 mA"

[pins.scl]
function = "i2c-scl"
c_in = "10 pF"

[timing]
f_max = "400 kHz"
"""


def write(folder: Path, name: str, text: str) -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    path = folder / name
    path.write_text(textwrap.dedent(text), encoding="utf-8")
    return path


def part(pid: str, extends: str | None = None, body: str = "", title: str = "A part") -> str:
    head = f'format = "pinlib.part/1"\nid = "{pid}"\ntitle = "{title}"\ncategory = "sensor"\n'
    if extends:
        head += f'extends = "{extends}"\n'
    return head + textwrap.dedent(body)


@pytest.fixture
def builtin(tmp_path, monkeypatch):
    """A built-in library of our own, and no PINLIB_LIBRARY from the environment."""
    folder = tmp_path / "builtin"
    write(folder / "generic", "base.toml", BASE)
    monkeypatch.setattr(loader, "BUILTIN_DIR", folder)
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    return folder


def line_of_text(path: Path, needle: str) -> int:
    for number, line in enumerate(path.read_text(encoding="utf-8").splitlines(), start=1):
        if needle in line:
            return number
    raise AssertionError(needle)


# --- schema errors name file, line and field --------------------------------------------

def test_wrong_unit_names_file_line_field_and_expected(builtin, tmp_path):
    team = tmp_path / "team"
    path = write(team, "x.toml", part("x", "base", """
        [pins.sda]
        # a comment line before the value
        c_in = "10 pH"
        """))
    lib = load_library([team])
    assert "x" not in lib.parts
    (err,) = lib.problems
    assert isinstance(err, LibraryError)
    assert err.file == str(path)
    assert err.line == line_of_text(path, "10 pH")
    assert err.field == "pins.sda.c_in"
    assert "capacitance" in err.expected
    assert f"{path}:{err.line}" in err.message


def test_value_table_and_inline_table_lines(builtin, tmp_path):
    team = tmp_path / "team"
    path = write(team, "x.toml", part("x", "base", """
        supply = { min = "1.7 V", max = "5.5 A" }

        [pins.sda]
        c_in = { value = "8 pF", basis = "hearsay" }
        """))
    lib = load_library([team])
    by_field = {e.field: e for e in lib.problems}
    assert by_field["supply.max"].line == line_of_text(path, "supply =")
    assert by_field["supply.max"].file == str(path)
    assert by_field["pins.sda.c_in"].line == line_of_text(path, "hearsay")
    assert "basis" in by_field["pins.sda.c_in"].message


def test_a_yes_or_no_where_a_value_belongs_is_echoed_as_the_file_wrote_it(builtin, tmp_path):
    # "(got True)": Python's spelling of the file's true
    team = tmp_path / "team"
    write(team, "x.toml", part("x", "base", '[pins.sda]\nv_il = true\n'))
    (err,) = load_library([team]).problems
    assert err.field == "pins.sda.v_il" and "(got true)" in err.message


def test_unknown_field_and_bare_number(builtin, tmp_path):
    team = tmp_path / "team"
    path = write(team, "x.toml", part("x", "base", """
        [pins.sda]
        c_inn = "8 pF"
        leakage = 1
        """))
    lib = load_library([team])
    by_field = {e.field: e for e in lib.problems}
    assert by_field["pins.sda.c_inn"].problem == "unknown field"
    assert by_field["pins.sda.c_inn"].line == line_of_text(path, "c_inn")
    assert "bare number" in by_field["pins.sda.leakage"].problem
    assert '"1 mA"' in by_field["pins.sda.leakage"].hint


def test_not_toml_names_the_line(builtin, tmp_path):
    team = tmp_path / "team"
    path = write(team, "x.toml", 'format = "pinlib.part/1"\nid = "x"\ntitle = \n')
    (err,) = load_library([team]).problems
    assert err.file == str(path) and err.line == 3 and "TOML" in err.problem


def test_not_a_part_file(builtin, tmp_path):
    team = tmp_path / "team"
    write(team, "x.toml", 'format = "pinlib.design/1"\nid = "x"\n')
    (err,) = load_library([team]).problems
    assert err.field == "format" and err.line == 1
    # a design kept beside the team's parts (library = ["."]) is said to be one, and
    # where it belongs; every check of it warned "not a part-class file" alone
    assert err.hint == ("a design file: a library folder holds part files only; keep "
                        "designs in another folder")
    write(team, "x.toml", 'format = "pinlib.part/9"\nid = "x"\n')
    (err,) = load_library([team]).problems
    assert err.hint is None


@pytest.mark.parametrize("text", ["", "\n\n", "# a part, to write\n"])
def test_an_empty_part_file_is_said_to_be_empty(builtin, tmp_path, text):
    # it read "field 'format': not a part-class file", as if it held another format
    team = tmp_path / "team"
    write(team, "x.toml", text)
    (err,) = load_library([team]).problems
    assert err.problem == "the file holds nothing (empty, or comments only)"
    assert err.expected == 'format = "pinlib.part/1"' and err.field is None


def test_inherited_bad_value_points_at_the_parent_file(builtin, tmp_path):
    team = tmp_path / "team"
    parent = write(team, "p.toml", part("p", "base", '[pins.scl]\nleakage = "3 V"\n'))
    write(team, "c.toml", part("c", "p", '[pins.sda]\nc_in = "8 pF"\n'))
    lib = load_library([team])
    files = {e.file for e in lib.problems}
    assert files == {str(parent)}  # both p and c fail at the line in p
    assert all(e.field == "pins.scl.leakage" for e in lib.problems)


def test_a_threshold_that_crosses_the_class_s_is_blamed_on_the_team_file(builtin, tmp_path):
    # invented: the team part writes v_il 0.9 VDD over BASE's v_ih 0.7 VDD. The check
    # of the pin as a whole was blamed on the file that first wrote [pins.sda] (a
    # built-in class, for a team part), and `parts check FOLDER` then left it out
    team = tmp_path / "team"
    path = write(team, "x.toml", part("x", "base", """
        [pins.sda]
        c_in = "8 pF"
        v_il = { value = "0.9 VDD", source = "rev A, table 5" }
        """))
    lib = load_library([team])
    assert "x" not in lib.parts
    (err,) = lib.problems
    assert (err.file, err.line, err.field) == (str(path), line_of_text(path, "0.9 VDD"),
                                               "pins.sda.v_il")
    assert "0.9 VDD" in err.problem and "0.7 VDD" in err.problem


def test_a_threshold_the_class_moved_is_blamed_on_the_class(builtin, tmp_path):
    # invented: mid writes v_ih 0.2 VDD under BASE's v_il 0.3 VDD; leaf changes only
    # c_in. Both fail at mid's v_ih, the value that made the pair impossible
    team = tmp_path / "team"
    mid = write(team, "mid.toml", part("mid", "base", '[pins.sda]\nv_ih = "0.2 VDD"\n'))
    write(team, "leaf.toml", part("leaf", "mid", '[pins.sda]\nc_in = "8 pF"\n'))
    lib = load_library([team])
    assert "mid" not in lib.parts and "leaf" not in lib.parts
    assert {(e.file, e.line, e.field) for e in lib.problems} == {
        (str(mid), line_of_text(mid, "0.2 VDD"), "pins.sda.v_ih")}


def test_a_supply_min_above_the_class_s_max_is_blamed_on_the_team_file(builtin, tmp_path):
    # invented: BASE runs to 5.5 V; the team part raises only the minimum, to 6 V. The
    # error named BASE's supply line and its max (got '5.5 V'), a file not to edit
    team = tmp_path / "team"
    path = write(team, "x.toml", part("x", "base", 'supply = { min = "6 V" }\n'))
    lib = load_library([team])
    (err,) = lib.problems
    assert (err.file, err.line, err.field) == (str(path), line_of_text(path, "6 V"),
                                               "supply.min")
    assert err.value == "6 V" and "5.5 V" in err.problem


def test_a_drive_that_drops_the_class_s_fast_corner_is_blamed_on_the_team_file(builtin,
                                                                              tmp_path):
    # invented: a push-pull class with a fast corner; the team part makes the pin an
    # input, which may not have one
    team = tmp_path / "team"
    write(team, "pp.toml", part("pp", None, """
        [pins.sclk]
        function = "spi-sclk"
        drive = "push-pull"
        r_out = "40 Ω"
        fast = { r_out = "12 Ω" }
        """))
    path = write(team, "x.toml", part("x", "pp", '[pins.sclk]\ndrive = "input"\n'))
    lib = load_library([team])
    assert "pp" in lib.parts
    (err,) = lib.problems
    assert (err.file, err.line, err.field) == (str(path), line_of_text(path, "input"),
                                               "pins.sclk.drive")


def test_a_cable_s_capacitance_the_team_zeroed_is_blamed_on_the_team_file(builtin, tmp_path):
    # invented: a cable class of capacitance and delay; the team part writes 0 pF/m, which
    # leaves no capacitance to derive the impedance from
    team = tmp_path / "team"
    write(team, "cab.toml", 'format = "pinlib.part/1"\nid = "cab"\ntitle = "t"\n'
                            'category = "cable"\n[line]\ncapacitance = "50 pF/m"\n'
                            'delay = "5 ns/m"\n')
    path = write(team, "x.toml", 'format = "pinlib.part/1"\nid = "x"\ntitle = "t"\n'
                                 'category = "cable"\nextends = "cab"\n[line]\n'
                                 'capacitance = "0 pF/m"\n')
    lib = load_library([team])
    assert "cab" in lib.parts
    (err,) = lib.problems
    assert (err.file, err.line, err.field) == (str(path), 7, "line.capacitance")


def test_strict_raises_the_first_problem(builtin, tmp_path):
    team = tmp_path / "team"
    write(team, "x.toml", part("x", "base", '[pins.sda]\nc_in = "10 pH"\n'))
    with pytest.raises(LibraryError, match="pins.sda.c_in"):
        load_library([team], strict=True)


def test_unknown_part_names_the_closest(builtin):
    lib = load_library()
    with pytest.raises(LibraryError, match="closest in the library: base"):
        lib.get("bsae")


# --- extends ----------------------------------------------------------------------------

def test_a_source_without_its_value_is_not_claimed_for_the_inherited_value(builtin,
                                                                           tmp_path):
    # invented: mid sets c_in 8 pF "typical of the class"; leaf wrote only a source,
    # which merged into mid's table and showed mid's 8 pF as read from "rev A"
    team = tmp_path / "team"
    write(team, "mid.toml", part("mid", "base", """
        [pins.sda]
        c_in = { value = "8 pF", basis = "typical", source = "typical of the class" }
        """))
    leaf = write(team, "leaf.toml", part("leaf", "mid", """
        [pins.sda]
        c_in = { source = "rev A" }
        """))
    lib = load_library([team])
    assert "leaf" not in lib.parts
    (err,) = [e for e in lib.problems if e.file == str(leaf)]
    assert err.line == line_of_text(leaf, "rev A")
    assert err.field.startswith("pins.sda.c_in")
    # a table that gives its value with its source still replaces the inherited one
    write(team, "leaf.toml", part("leaf", "mid", """
        [pins.sda]
        c_in = { value = "6 pF", basis = "datasheet", source = "rev A" }
        """))
    c_in = load_library([team]).parts["leaf"].pins["sda"].c_in
    assert (c_in.value, c_in.source, c_in.origin) == (6e-12, "rev A", "leaf")


def test_a_misspelt_value_table_is_blamed_on_its_own_file(builtin, tmp_path):
    # invented: mid sets c_in as a value table; leaf misspelt 'value' in its own. The
    # two tables merged key by key, and the unknown key was blamed on mid's file and
    # line (a built-in class's file, for a team part), never on the file to correct
    team = tmp_path / "team"
    mid = write(team, "mid.toml", part("mid", "base", """
        [pins.sda]
        c_in = { value = "8 pF", source = "typical of the class" }
        """))
    leaf = write(team, "leaf.toml", part("leaf", "mid", """
        [pins.sda]
        c_in = { vlaue = "6 pF", source = "rev A" }
        """))
    lib = load_library([team])
    assert "leaf" not in lib.parts and "mid" in lib.parts
    errs = [e for e in lib.problems if e.field and e.field.startswith("pins.sda.c_in")]
    assert errs and all(e.file == str(leaf) for e in errs), [str(e) for e in errs]
    assert not [e for e in lib.problems if e.file == str(mid)]
    assert errs[0].line == line_of_text(leaf, "vlaue")


def test_three_level_chain_and_origins(builtin, tmp_path):
    team = tmp_path / "team"
    mid = write(team, "mid.toml", part("mid", "base", """
        supply = { max = "3.6 V" }

        [pins.sda]
        c_in = "8 pF"
        """))
    leaf = write(team, "leaf.toml", part("leaf", "mid", """
        [pins.sda]
        leakage = { value = "1 µA", basis = "datasheet", source = "rev B, table 4" }

        [timing]
        f_max = "1 MHz"
        """))
    lib = load_library([team])
    assert not lib.problems
    p = lib.parts["leaf"]
    assert lib.chain("leaf") == ["leaf", "mid", "base"]
    sda = p.pins["sda"]
    assert (sda.c_in.value, sda.c_in.origin) == (8e-12, "mid")
    assert (sda.leakage.value, sda.leakage.origin) == (1e-6, "leaf")
    assert (sda.leakage.basis, sda.leakage.source) == ("datasheet", "rev B, table 4")
    assert sda.v_il.origin == "base" and sda.v_il.value.scale == 0.3
    assert (p.supply.min.value, p.supply.min.origin) == (1.7, "base")
    assert (p.supply.max.value, p.supply.max.origin) == (3.6, "mid")
    assert (p.timing.f_max.value, p.timing.f_max.origin) == (1e6, "leaf")
    assert p.pins["scl"].c_in.origin == "base"
    # id, extends and abstract are not inherited
    assert not p.abstract and lib.parts["base"].abstract
    assert lib.path_of("mid") == mid and lib.path_of("leaf") == leaf


def test_a_part_s_provenance_is_its_own_file_s_whole(builtin, tmp_path):
    # invented: a team part states its basis (datasheet) and no source yet, as
    # 'pinlib parts new' writes it.  Its provenance merged key by key with the class's
    # and read "datasheet, common practice": the class's source claimed for the team
    # part's datasheet, and cited for every value the team part states without one
    team = tmp_path / "team"
    write(team, "cls.toml", part("cls", "base", """
        provenance = { basis = "generic", source = "common practice", recorded = 2026-12-01 }
        """))
    write(team, "x.toml", part("x", "cls", """
        provenance = { basis = "datasheet", recorded = 2026-12-05 }

        [timing]
        f_max = "1 MHz"
        """))
    p = load_library([team]).parts["x"]
    assert (p.provenance.basis, p.provenance.source) == ("datasheet", "")
    assert (p.timing.f_max.basis, p.timing.f_max.source) == ("datasheet", None)
    assert p.provenance.recorded.isoformat() == "2026-12-05"
    # a part that states no provenance at all still takes its class's
    write(team, "x.toml", part("x", "cls"))
    p = load_library([team]).parts["x"]
    assert (p.provenance.basis, p.provenance.source) == ("generic", "common practice")


def test_a_value_table_replaces_the_parents_whole(builtin, tmp_path):
    team = tmp_path / "team"
    write(team, "x.toml", part("x", "base", '[pins.sda]\nc_in = { value = "6 pF" }\n'))
    c_in = load_library([team]).parts["x"].pins["sda"].c_in
    # The parent's source ("spec, Ci max") belongs to its 10 pF, not to the new value.
    assert (c_in.value, c_in.source, c_in.origin) == (6e-12, None, "x")


def test_cycle_names_both_files(builtin, tmp_path):
    team = tmp_path / "team"
    a = write(team, "a.toml", part("a", "b"))
    b = write(team, "b.toml", part("b", "a"))
    lib = load_library([team])
    assert "a" not in lib.parts and "b" not in lib.parts
    cycles = [e for e in lib.problems if e.problem == "an extends cycle"]
    assert cycles
    for err in cycles:
        assert str(a) in err.message and str(b) in err.message


def test_self_extension_is_a_cycle(builtin, tmp_path):
    team = tmp_path / "team"
    write(team, "a.toml", part("a", "a"))
    (err,) = load_library([team]).problems
    assert err.problem == "an extends cycle"


def test_an_override_that_extends_its_own_id_says_how_to_extend_the_class(builtin,
                                                                          tmp_path):
    # invented: a team file with the built-in id "base" meant to change one value of it
    # by extending "base": a cycle, and the message said only "base -> base"
    team = tmp_path / "team"
    write(team, "base.toml", part("base", "base", '[pins.sda]\nc_in = "6 pF"\n'))
    (err,) = [e for e in load_library([team]).problems if e.problem == "an extends cycle"]
    assert 'id = "base-team"' in err.hint and "where 'base' is a built-in class" in err.hint
    write(team, "base.toml", part("base-team", "base", '[pins.sda]\nc_in = "6 pF"\n'))
    assert load_library([team]).parts["base-team"].pins["sda"].c_in.value == 6e-12


def test_missing_parent(builtin, tmp_path):
    team = tmp_path / "team"
    child = write(team, "c.toml", part("c", "bas"))
    (err,) = load_library([team]).problems
    assert err.file == str(child) and err.field == "extends" and err.value == "bas"
    assert err.line == line_of_text(child, "extends")
    assert "base" in err.hint


def test_a_long_extends_chain_is_refused_by_name_not_by_recursion(builtin, tmp_path):
    # 1,000 levels once raised RecursionError; the chain is now followed in a loop
    team = tmp_path / "team"
    n = 1000
    for i in range(n):
        write(team, f"p{i}.toml", part(f"p{i}", f"p{i + 1}" if i + 1 < n else "base"))
    lib = load_library([team], lazy=True)
    assert "p0" not in lib.parts
    (err,) = lib.problems
    assert err.problem == "an extends chain deeper than 32 levels"
    assert err.file == str(team / "p0.toml") and err.line == 5 and err.field == "extends"
    # at the limit: 32 steps from p0 to base load, values inherited from the root
    ok = tmp_path / "ok"
    for i in range(32):
        write(ok, f"q{i}.toml", part(f"q{i}", f"q{i + 1}" if i + 1 < 32 else "base"))
    lib = load_library([ok])
    assert not lib.problems
    assert lib.parts["q0"].pins["sda"].c_in.value == 10e-12  # from BASE, 32 levels up


@pytest.mark.parametrize("low", ["0 V", "-1 V", "0 mV"])
def test_a_supply_min_not_above_zero_is_refused_where_written(builtin, tmp_path, low):
    # "0 V" once divided by zero in the open-drain engine; "-1 V" passed silently
    team = tmp_path / "team"
    f = write(team, "z.toml", part("z", "base", f'supply = {{ min = "{low}", max = "3.6 V" }}\n'))
    lib = load_library([team])
    (err,) = lib.problems
    assert (err.file, err.line, err.field) == (str(f), 6, "supply.min")
    assert err.problem == "the supply min must be above 0 V" and "z" not in lib.parts


def test_a_part_of_many_keys_merges_in_linear_time(builtin, tmp_path):
    # Merging a child over its class once copied the whole origin map for every key:
    # 20,000 keys took minutes.  Each unknown key is a problem with its own line.
    team = tmp_path / "team"
    n = 20_000
    write(team, "wide.toml", part("wide", "base", "".join(f"k{i} = 1\n" for i in range(n))))
    lib = load_library([team])
    assert len(lib.problems) == n
    assert lib.problems[-1].line == 5 + n and lib.problems[-1].field == f"k{n - 1}"


# --- what a library folder may be -------------------------------------------------------

def test_a_system_folder_is_refused_as_a_library(builtin, tmp_path):
    with pytest.raises(LibraryError, match="may not be a system folder"):
        load_library([Path(tmp_path.anchor)])  # once walked the whole machine
    # named by a design as ../../.. up to the root: the design's line says where
    from pinlib.model.design import load_design

    up = "/".join([".."] * (len(tmp_path.parts) - 1))
    design = write(tmp_path, "d.toml", f'format = "pinlib.design/1"\ntitle = "t"\n'
                                       f'library = ["{up}"]\n')
    with pytest.raises(PinlibError) as info:
        load_design(design)
    err = info.value
    assert (err.file, err.line, err.field) == (str(design), 3, "library")
    assert "system folder" in err.message


def test_only_regular_part_files_inside_the_folder_are_read(builtin, tmp_path):
    import os

    team = tmp_path / "team"
    write(team, "good.toml", part("good", "base"))
    (team / "zero.toml").symlink_to("/dev/zero")  # once grew to gigabytes
    os.mkfifo(team / "pipe.toml")  # once blocked forever
    write(team, "huge.toml", part("huge", "base", f'description = "{"x" * 2**20}"\n'))
    outside = write(tmp_path / "elsewhere", "far.toml", part("far", "base"))
    (team / "far.toml").symlink_to(outside)
    lib = load_library([team])
    assert list(lib.placeable()) == ["good"]
    problems = {Path(p.file).name: p.problem for p in lib.problems}
    assert problems == {
        "zero.toml": "a link out of the library folder is not followed",
        "far.toml": "a link out of the library folder is not followed",
        "pipe.toml": "not a regular file (a device, a pipe or a socket is not read)",
        "huge.toml": f"the file holds {len(part('huge', 'base')) + 2**20 + 17:,} bytes, "
                     f"more than the {2**20:,} read",
    }
    # asked to follow links: the far part is read, /dev/zero is still refused
    lib = load_library([team], follow_links=True)
    assert sorted(lib.placeable()) == ["far", "good"]
    assert "not a regular file" in str([p for p in lib.problems if "zero" in p.file])


def test_links_inside_the_folder_are_read_once(builtin, tmp_path):
    team = tmp_path / "team"
    write(team / "sub", "a.toml", part("a", "base"))
    (team / "alias").symlink_to(team / "sub")
    (team / "sub" / "loop").symlink_to(team)  # a cycle of folders
    (team / "b.toml").symlink_to(team / "sub" / "a.toml")
    lib = load_library([team])
    assert not lib.problems and list(lib.placeable()) == ["a"]


def test_the_walk_of_a_library_folder_is_bounded(builtin, tmp_path, monkeypatch):
    deep = tmp_path / "deep"
    write(deep.joinpath(*["d"] * 17), "x.toml", part("x", "base"))
    with pytest.raises(LibraryError, match="nests deeper than 16 folders"):
        load_library([deep])
    wide = tmp_path / "wide"
    for i in range(11):
        write(wide, f"p{i}.toml", part(f"p{i}", "base"))
    monkeypatch.setattr(walk, "MAX_PART_FILES", 10)
    with pytest.raises(LibraryError, match="more than 10 part files"):
        load_library([wide])
    monkeypatch.setattr(walk, "MAX_FOLDER_ENTRIES", 5)
    with pytest.raises(LibraryError, match="more than 5 files and folders"):
        load_library([wide])


# --- overlays ---------------------------------------------------------------------------

def test_two_team_parts_with_one_id_are_neither_used(builtin, tmp_path, monkeypatch):
    # invented: the same id with two c_in values in two folders. The file the walk
    # read first was used (by design 'parts show' and 'check' without a word, the other
    # dropped with a warning), so which value a design got depended on file names
    env_dir, cli_dir = tmp_path / "env", tmp_path / "cli"
    first = write(env_dir, "x.toml", part("x", "base", '[pins.sda]\nc_in = "6 pF"\n'))
    second = write(cli_dir, "x-copy.toml", part("x", "base", '[pins.sda]\nc_in = "9 pF"\n'))
    write(cli_dir, "y.toml", part("y", "x"))
    monkeypatch.setenv("PINLIB_LIBRARY", str(env_dir))
    lib = load_library([cli_dir])
    assert "x" not in lib.parts and "y" not in lib.parts
    with pytest.raises(LibraryError) as info:
        lib.get("x", file="board.toml", line=9, field="bus[0].devices[1].part")
    text = str(info.value)
    assert "two team parts share one id" in text
    assert str(first) in text and str(second) in text and "board.toml:9" in text
    with pytest.raises(LibraryError, match="two team parts share one id"):
        lib.get("y")
    lazy = load_library([cli_dir], lazy=True)
    assert "x" not in lazy.parts
    with pytest.raises(LibraryError, match="two team parts share one id"):
        lazy.get("x")
    with pytest.raises(LibraryError, match="two team parts share one id"):
        load_library([cli_dir], strict=True)


def test_a_folder_inside_another_is_not_two_parts(builtin, tmp_path, monkeypatch):
    # invented: team/sub named on its own (absolute) as well as inside team (relative):
    # one file, one part; it was reported as two team parts sharing one id
    team = tmp_path / "team"
    write(team / "sub", "x.toml", part("x", "base"))
    monkeypatch.chdir(tmp_path)
    lib = load_library(["team", team / "sub"])
    assert not lib.problems and "x" in lib.parts


def test_overlay_order_and_override(builtin, tmp_path, monkeypatch):
    env_dir, design_dir, cli_dir = tmp_path / "env", tmp_path / "design", tmp_path / "cli"
    over = write(env_dir, "base.toml", BASE.replace('c_in = "10 pF"', 'c_in = "7 pF"'))
    write(design_dir, "d.toml", part("d", "base"))
    write(cli_dir, "c.toml", part("c", "d", '[pins.scl]\nc_in = "5 pF"\n'))
    monkeypatch.setenv("PINLIB_LIBRARY", str(env_dir))
    assert library_folders([design_dir, cli_dir]) == [env_dir, design_dir, cli_dir]
    lib = load_library([design_dir, cli_dir])
    assert not lib.problems
    assert lib.folders == [builtin, env_dir, design_dir, cli_dir]
    # The team part overrides the built-in one of the same id, and the library says so.
    assert lib.overrides == {"base": builtin / "generic" / "base.toml"}
    assert lib.path_of("base") == over
    assert lib.parts["base"].pins["scl"].c_in.value == 7e-12
    # A --library part can extend a design-folder part that extends the team override.
    c = lib.parts["c"]
    assert lib.chain("c") == ["c", "d", "base"]
    assert c.pins["scl"].c_in.value == 5e-12 and c.pins["sda"].c_in.value == 10e-12


def test_two_team_parts_with_one_id_is_an_error_naming_both(builtin, tmp_path):
    one, two = tmp_path / "one", tmp_path / "two"
    first = write(one, "x.toml", part("x", "base"))
    second = write(two, "x2.toml", part("x", "base"))
    lib = load_library([one, two])
    # each file is named at its own id, the other in its hint (the first had been told
    # only that it "does not load", by a problem in a file it extends)
    err, other = lib.problems
    assert err.file == str(second) and str(first) in err.hint and err.field == "id"
    assert other.file == str(first) and str(second) in other.hint and other.line == 2


def test_the_same_folder_twice_is_not_a_duplicate(builtin, tmp_path, monkeypatch):
    team = tmp_path / "team"
    write(team, "x.toml", part("x", "base"))
    monkeypatch.chdir(tmp_path)
    monkeypatch.setenv("PINLIB_LIBRARY", "team")
    lib = load_library([team.resolve()])
    assert not lib.problems and "x" in lib.parts


def test_missing_folder_is_a_problem(builtin, tmp_path):
    lib = load_library([tmp_path / "nowhere"])
    (err,) = lib.problems
    assert err.problem == "library folder not found"


# --- a check reports every problem ------------------------------------------------------

def test_every_problem_is_reported(builtin, tmp_path):
    team = tmp_path / "team"
    write(team, "bad-toml.toml", "format = \n")
    write(team, "two-errors.toml", part("two-errors", "base", """
        [pins.sda]
        c_in = "8 pH"
        v_il = "0.3 VCC"
        """))
    write(team, "unknown.toml", part("unknown", "base", "colour = 'red'\n"))
    write(team, "orphan.toml", part("orphan", "nobody"))
    write(team, "good.toml", part("good", "base"))
    lib = load_library([team])
    assert set(lib.parts) == {"base", "good"}
    found = {(Path(e.file).name, e.field) for e in lib.problems}
    assert found == {("bad-toml.toml", None), ("two-errors.toml", "pins.sda.c_in"),
                     ("two-errors.toml", "pins.sda.v_il"), ("unknown.toml", "colour"),
                     ("orphan.toml", "extends")}
    assert all(e.line for e in lib.problems)


def test_a_file_of_many_unknown_keys_names_each_and_guesses_a_few(builtin, tmp_path,
                                                                   monkeypatch):
    # invented: 1 MB of misspelt keys (50,000) took 7 s in `parts check` and 3 s in
    # every `check` against a snapshot, all of it guessing the closest field of each
    from pinlib.core import nearby

    calls = []
    real = nearby.closest_hint
    monkeypatch.setattr(nearby, "closest_hint", lambda *a, **k: calls.append(1) or real(*a, **k))
    team = tmp_path / "team"
    body = "[pins.sda]\n" + "".join(f'c_inn{i} = "8 pF"\n' for i in range(500))
    write(team, "x.toml", part("x", "base", body))
    lib = load_library([team])
    assert len(lib.problems) == 500 and all(e.problem == "unknown field" for e in lib.problems)
    assert all("c_in" in e.expected for e in lib.problems)
    assert lib.problems[0].hint == "closest: c_in"
    assert len(calls) == loader.MAX_CLOSEST_HINTS < 500


# --- JSON Schema ------------------------------------------------------------------------

def test_json_schema_shape():
    schema = part_json_schema()
    assert schema["$schema"] == "https://json-schema.org/draft/2020-12/schema"
    assert "pinlib.part/1" in schema["title"]
    assert schema["properties"]["id"]["pattern"] == "^[a-z0-9][a-z0-9-]*$"
    assert "memory" in schema["properties"]["category"]["enum"]
    pin = schema["$defs"]["Pin"]["properties"]
    assert "i2c-sda" in pin["function"]["enum"]
    assert pin["drive"]["enum"] == ["open-drain", "push-pull", "input"]
    c_in = schema["$defs"][pin["c_in"]["$ref"].split("/")[-1]]
    string, table = c_in["anyOf"]
    assert string["type"] == "string" and "capacitance" in string["description"]
    assert "'8 pF'" in string["description"]
    assert set(table["properties"]) == {"value", "basis", "source", "typ"}
    assert "capacitance" in pin["c_in"]["description"]
    json.dumps(schema)  # serialisable
    assert "Sourced" not in json.dumps(schema)


QUANTITY_GOOD = {
    "F": ["8 pF", "10pF", "1e-12 F", "4n7", "0.1 µF", "100 nF"],
    "Ω": ["4.7 kΩ", "4.7k ohm", "4k7", "2R2", "47R", "10 kΩ", "33 Ohm", "4.7k", "2.2M"],
    "s": ["2.2 ns", "0.9 µs", "5 ms"],
    "Hz": ["400 kHz", "1 MHz", "25MHz", "400 khz", "20 Mhz", "1.5M"],
    "A": ["3 mA", "0.5 mA", "10 µA"],
    "V": ["3.3 V", "-0.3 V", "400 mV"],
    "F/m": ["0.8 pF/cm", "3.5 pF/in", "1 pF / mm"],
    "s/m": ["58 ps/cm", "170 ps/in"],
    "m": ["35 µm", "1.6 mm", "6 mil", "14 cm", "1 in"],
}
QUANTITY_BAD = {
    "F": ["10 pH", "8", "8 pF x", "pF", "4k7 Ω"],
    "Ω": ["4.7 kF", "10 K", "1 kR"],
    "Hz": ["400 khz x", "1 M", "20 mhz", "20 mHZ", "20 m hz"],
    "V": ["3.3", "0.7 VDD"],
    "F/m": ["0.8 pF", "1 pF/s"],
}


@pytest.mark.parametrize("unit", sorted(QUANTITY_GOOD))
def test_schema_patterns_follow_the_parser(unit):
    pattern = re.compile(quantity_pattern(unit))
    for text in QUANTITY_GOOD[unit]:
        parse(text, unit)
        assert pattern.match(text), text
    for text in QUANTITY_BAD.get(unit, []):
        assert not pattern.match(text), text


def test_level_pattern_follows_the_parser():
    pattern = re.compile(level_pattern())
    for text in ["0.7 VDD", "VDD - 0.4 V", "2.0 V", "VDD + 0.5 V", "70 % VDD", "-0.3 V",
                 "0.5 VDD - 100 mV"]:
        parse_threshold(text)
        assert pattern.match(text), text
    for text in ["0.7 VCC", "0.7", "VDD -", "2 A", "VDD - -0.3 V"]:
        assert not pattern.match(text), text


_PATTERN_TEXT = st.lists(st.sampled_from(
    list("0123456789.eE+- kKmunpµfMGRΩ%/·*") + ["ohm", "VDD", "V", "F", "Hz", "s", "A", "cm",
                                               "in", "mil", "m"]), max_size=8).map("".join)


@settings(max_examples=300, deadline=None)
@given(text=_PATTERN_TEXT, unit=st.sampled_from(["F", "Ω", "s", "Hz", "V", "A", "F/m", "m"]))
def test_fuzz_schema_pattern_implies_parse(text, unit):
    """What the editor's pattern accepts, the parser accepts (finite values aside)."""
    if re.match(quantity_pattern(unit), text):
        try:
            parse(text, unit)
        except PinlibError as err:
            assert "finite" in err.problem, (text, err)
    if re.match(level_pattern(), text):
        try:
            parse_threshold(text)
        except PinlibError as err:
            assert "finite" in err.problem, (text, err)


def test_schema_validates_part_files(builtin):
    jsonschema = pytest.importorskip("jsonschema")
    from pinlib.core.tomlfile import tomllib

    schema = part_json_schema()
    jsonschema.Draft202012Validator.check_schema(schema)
    validator = jsonschema.Draft202012Validator(schema)
    base = tomllib.loads(BASE)
    assert not list(validator.iter_errors(base))
    child = tomllib.loads(part("x", "base",
                               '[pins.sda]\nc_in = { value = "8 pF", typ = "5 pF" }\n'))
    assert not list(validator.iter_errors(child))
    # a child need not repeat the pin function; a root class must give it
    orphan = tomllib.loads(part("x", None, '[pins.sda]\nc_in = "8 pF"\n'))
    assert list(validator.iter_errors(orphan))
    for body in ['[pins.sda]\nc_in = "10 pH"\n', '[pins.sda]\ncolour = "red"\n',
                 '[pins.sda]\nc_in = { value = "8 pF", basis = "hearsay" }\n',
                 '[pins.sda]\nv_il = "0.3 VCC"\n', '[timing]\nf_max = "1 MHz x"\n']:
        assert list(validator.iter_errors(tomllib.loads(part("x", "base", body)))), body
    bad_id = dict(base, id="Not An Id")
    assert list(validator.iter_errors(bad_id))


def test_every_unit_kind_in_the_schema_has_an_example_that_parses():
    schema = part_json_schema()
    for name, node in schema["$defs"].items():
        if "anyOf" not in node or name == "Level":
            continue
        string = node["anyOf"][0]
        example = re.search(r"e\.g\. '([^']+)'", string["description"]).group(1)
        unit = next(u for u, (_, ex) in UNITS.items() if ex == example)
        assert re.match(string["pattern"], example)
        parse(example, unit)


# --- fuzz: random or mutated part files give a part or a pinlib error ----------------------

_KEYS = ["format", "id", "title", "category", "extends", "abstract", "supply", "pins",
         "timing", "sides", "bridge", "line", "provenance", "sda", "scl", "a", "b", "c_in",
         "v_il", "v_ih", "function", "drive", "edges", "load", "rise", "value", "basis",
         "source", "typ", "min", "max", "f_max", "kind", "capacitance", "recorded", "x"]
_SCALARS = st.one_of(
    st.sampled_from(["pinlib.part/1", "base", "x", "sensor", "i2c-sda", "open-drain", "8 pF",
                     "0.7 VDD", "VDD - 0.4 V", "3.3 V", "1 MHz", "10 pH", "4k7", "datasheet",
                     "10-90", "a", "", "mosfet"]),
    st.text(max_size=8), st.integers(), st.floats(), st.booleans(), st.dates())
_VALUES = st.recursive(
    _SCALARS,
    lambda children: st.one_of(st.lists(children, max_size=3),
                               st.dictionaries(st.sampled_from(_KEYS), children, max_size=4)),
    max_leaves=12)
_DOCS = st.fixed_dictionaries(
    {}, optional={"format": st.just("pinlib.part/1"), "id": st.sampled_from(["x", "y", "base"]),
                  "extends": st.sampled_from(["base", "x", "y", "nobody", 3])}
).flatmap(lambda d: st.dictionaries(st.sampled_from(_KEYS), _VALUES, max_size=6).map(
    lambda extra: {**extra, **d}))


# The built-in fixture is only read, so one instance can serve every generated example.
_SLOW_FIXTURE = [HealthCheck.too_slow, HealthCheck.function_scoped_fixture]


def _fuzz_load(files: dict[str, str]):
    with tempfile.TemporaryDirectory() as tmp:
        team = Path(tmp) / "team"
        team.mkdir()
        for name, text in files.items():
            (team / name).write_text(text, encoding="utf-8")
        lib = load_library([team], env=False)
        for err in lib.problems:
            assert isinstance(err, PinlibError)
            assert err.message
        try:
            load_library([team], env=False, strict=True)
        except PinlibError:
            pass
        return lib


@settings(max_examples=150, deadline=None, suppress_health_check=_SLOW_FIXTURE)
@given(docs=st.lists(_DOCS, min_size=1, max_size=3))
def test_fuzz_random_part_files(builtin, docs):
    import tomlkit

    files = {}
    for i, doc in enumerate(docs):
        try:
            files[f"f{i}.toml"] = tomlkit.dumps(doc)
        except Exception:  # tomlkit cannot write every structure (e.g. mixed arrays)
            continue
    _fuzz_load(files)


_MUTATIONS = st.lists(st.tuples(st.sampled_from(["delete", "duplicate", "replace", "insert"]),
                                st.integers(0, 40), st.text(max_size=12)), min_size=1, max_size=4)


@settings(max_examples=150, deadline=None, suppress_health_check=_SLOW_FIXTURE)
@given(mutations=_MUTATIONS, child=st.booleans())
def test_fuzz_mutated_part_files(builtin, mutations, child):
    text = part("x", "base", '[pins.sda]\nc_in = "8 pF"\nv_il = "0.3 VDD"\n') if child else BASE
    lines = text.splitlines()
    for op, at, junk in mutations:
        at = at % (len(lines) + 1)
        if op == "delete" and at < len(lines):
            del lines[at]
        elif op == "duplicate" and at < len(lines):
            lines.insert(at, lines[at])
        elif op == "replace" and at < len(lines):
            line = lines[at]
            cut = len(line) // 2
            lines[at] = line[:cut] + junk + line[cut + len(junk):]
        else:
            lines.insert(at, junk)
    lib = _fuzz_load({"x.toml": "\n".join(lines) + "\n", "y.toml": BASE.replace('"base"', '"y"')})
    for p in lib.parts.values():
        assert p.id in ("base", "x", "y")


# ---------------------------------------------------------------- issue 13, item 5
TEAM_ADC = """\
format = "pinlib.part/1"
id = "adc-acme"
title = "Invented ADC (demo data)"
category = "converter"
extends = "adc-spi"
provenance = { basis = "datasheet", source = "datasheet rev B" }

[timing]
f_max = "20 MHz"
"""


def test_inherited_value_names_the_file_basis_and_source_it_came_from(tmp_path, monkeypatch):
    # 13.5: a value inherited from a generic class is that class's, not the team part's
    # "datasheet rev B"; the team part's own value keeps the team part's provenance
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    (tmp_path / "adc-acme.toml").write_text(TEAM_ADC, encoding="utf-8")
    lib = load_library([tmp_path])
    part = lib.get("adc-acme")
    abs_max = part.pins["sclk"].abs_max
    assert (abs_max.origin, abs_max.basis, abs_max.source) == (
        "adc-spi", "generic", "typical of the class (common practice)")
    assert abs_max.origin_file == str(lib.path_of("adc-spi"))
    assert abs_max.file_filled == ("basis", "source")
    assert abs_max.provenance_text() == (
        "adc-spi (adc-spi.toml), generic: typical of the class (common practice)")
    own = part.timing.f_max
    assert (own.origin, own.basis, own.source) == ("adc-acme", "datasheet", "datasheet rev B")
    assert own.origin_file == str(tmp_path / "adc-acme.toml")


def test_check_sources_of_inherited_values_are_the_class_s(tmp_path, monkeypatch):
    from pinlib.engines.dispatch import check_design
    from pinlib.model.design import load_design

    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    (tmp_path / "adc-acme.toml").write_text(TEAM_ADC, encoding="utf-8")
    design = tmp_path / "d.toml"
    design.write_text("""\
format = "pinlib.design/1"
title = "provenance (invented)"

[[bus]]
id = "s"
protocol = "spi"
clock = "10 MHz"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller" },
  { ref = "U7", part = "adc-acme" },
]
lines.sclk = { length = "3 cm", capacitance = "1 pF/cm" }
lines.copi = { length = "3 cm", capacitance = "1 pF/cm" }
lines.cipo = { length = "3 cm", capacitance = "1 pF/cm" }
""", encoding="utf-8")
    result = check_design(load_design(design, library_folders=[tmp_path]))
    sources = [c["source"] for c in _checks(result.to_json())]
    inherited = [s for s in sources if s.startswith("adc-spi abs_max")]
    assert inherited and all(s == "adc-spi abs_max: typical of the class (common practice)"
                             for s in inherited)
    assert not any("adc-spi" in s and "rev B" in s for s in sources)


def _checks(node):
    if isinstance(node, dict):
        if "source" in node and "status" in node:
            yield node
        for v in node.values():
            yield from _checks(v)
    elif isinstance(node, list):
        for v in node:
            yield from _checks(v)


def test_parts_show_gives_inherited_values_the_class_s_basis(tmp_path, monkeypatch, capsys):
    # 13.5: adc-spi's pins.sclk.c_in states a source but no basis; the class file's basis
    # (generic) is its basis, not the team part's (datasheet)
    from pinlib.cli import main

    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    (tmp_path / "adc-acme.toml").write_text(TEAM_ADC, encoding="utf-8")
    assert main(["parts", "show", "adc-acme", "--library", str(tmp_path), "--json"]) == 0
    values = {v["field"]: v for v in json.loads(capsys.readouterr().out)["values"]}
    c_in = values["pins.sclk.c_in"]
    assert (c_in["basis"], c_in["origin"], c_in["basis_from_part"]) == ("generic", "adc-spi", True)
    abs_max = values["pins.sclk.abs_max"]
    assert (abs_max["basis"], abs_max["source"]) == (
        "generic", "typical of the class (common practice)")
    assert values["timing.f_max"]["source"] == "datasheet rev B"


def test_a_missing_builtin_folder_is_named_with_the_setting_that_chose_it(
        tmp_path, monkeypatch):
    # PINLIB_BUILTIN naming a folder that does not exist left only "unknown part
    # mcu-3v3" at the design's line, with nothing on the setting behind it
    import pinlib.library.loader as loader

    missing = tmp_path / "no-such-folder"
    monkeypatch.setattr(loader, "BUILTIN_DIR", missing)
    monkeypatch.setenv("PINLIB_BUILTIN", str(missing))
    with pytest.raises(LibraryError) as info:
        loader.load_library(env=False)
    assert info.value.file == str(missing)
    assert "PINLIB_BUILTIN" in info.value.hint


# --- the basis "published" ---------------------------------------------------------------

PUBLISHED_CHILD = """
    provenance = { basis = "published", source = "I2C-bus specification UM10204 rev. 6" }

    [pins.sda]
    # published: UM10204 rev. 6, table 9, VIH min 0.7·VDD
    v_ih = { value = "0.7 VDD", basis = "published", source = "UM10204 rev. 6, table 9, VIH min" }
    c_in = "10 pF"   # published: UM10204 rev. 6, table 9, Ci max (the file's basis and source)
    leakage = { value = "1 µA", basis = "datasheet", source = "rev A (invented)" }
    """


def test_published_is_a_basis_of_a_value_table_and_of_a_file_s_provenance(builtin, tmp_path):
    team = tmp_path / "team"
    write(team, "x.toml", part("x", "base", PUBLISHED_CHILD))
    lib = load_library([team])
    assert [str(p) for p in lib.problems] == []
    p = lib.parts["x"]
    assert (p.provenance.basis, p.provenance.source) == (
        "published", "I2C-bus specification UM10204 rev. 6")
    sda = p.pins["sda"]
    assert (sda.v_ih.basis, sda.v_ih.rests_on, sda.v_ih.soft) == ("published", "published", False)
    assert (sda.c_in.basis, sda.c_in.file_filled) == ("published", ("basis", "source"))
    assert sda.leakage.rests_on == "datasheet"
    # what the class sets stays the class's: generic, a limit that warns only
    assert p.pins["scl"].c_in.rests_on == "generic" and p.pins["scl"].c_in.soft


def test_the_json_schema_offers_published_for_values_and_provenance(builtin):
    jsonschema = pytest.importorskip("jsonschema")
    from pinlib.core.tomlfile import tomllib

    schema = part_json_schema()
    pin = schema["$defs"]["Pin"]["properties"]
    table = schema["$defs"][pin["c_in"]["$ref"].split("/")[-1]]["anyOf"][1]
    assert "published" in table["properties"]["basis"]["enum"]
    assert "derived" not in table["properties"]["basis"]["enum"]  # pinlib's own
    assert "published" in schema["$defs"]["Provenance"]["properties"]["basis"]["enum"]
    validator = jsonschema.Draft202012Validator(schema)
    assert not list(validator.iter_errors(tomllib.loads(part("x", "base", PUBLISHED_CHILD))))


@pytest.mark.parametrize("where, text, field", [
    ("value", '[pins.sda]\nc_in = { value = "8 pF", basis = "standard" }\n', "pins.sda.c_in"),
    ("provenance", 'provenance = { basis = "standard", source = "UM10204" }\n',
     "provenance.basis"),
])
def test_an_unknown_basis_is_refused_naming_the_bases_a_file_may_give(builtin, tmp_path,
                                                                       where, text, field):
    team = tmp_path / "team"
    path = write(team, "x.toml", part("x", "base", text))
    lib = load_library([team])
    assert "x" not in lib.parts
    (err,) = lib.problems
    assert (err.file, err.field, err.value) == (str(path), field, "standard")
    assert err.line == line_of_text(path, '"standard"')
    for basis in ("generic", "datasheet", "measured", "estimate", "ibis", "published"):
        assert basis in err.expected, (where, err.expected)
    assert "derived" not in err.expected  # set by pinlib itself, never by a file
    assert ("unknown basis" if where == "value" else "not one of the allowed values") \
        in err.message
