"""Writing team part files: new parts, recorded values, locking and atomic replacement."""

from __future__ import annotations

import datetime as dt
import os
import random
import re
import signal
import subprocess
import sys
import textwrap
import time
from pathlib import Path

import pytest

from pinlib.core.errors import InputError, LibraryError, WriteError
from pinlib.core.tomlfile import tomllib
from pinlib.library import loader
from pinlib.library.loader import load_library
from pinlib.library.record import new_part, record_value

BASE = """\
format = "pinlib.part/1"
id = "base"
title = "Generic target"
category = "sensor"
abstract = true
supply = { min = "1.7 V", max = "5.5 V" }

[pins.sda]
function = "i2c-sda"
drive = "open-drain"
c_in = "10 pF"
v_il = "0.3 VDD"
v_ih = "0.7 VDD"

[pins.scl]
function = "i2c-scl"
c_in = "10 pF"

[timing]
f_max = "400 kHz"
"""

CHILD = """\
# Team part: a serial EEPROM we buy
format = "pinlib.part/1"
id = "child"   # our id
title = "Serial EEPROM"
category = "memory"
extends = "base"
provenance = { basis = "datasheet", source = "rev A", recorded = 2020-01-01 }

# the data pin
[pins.sda]
c_in = "8 pF"   # table 5
leakage = "1 µA"

# clock pin, below
[pins.scl]
c_in = "8 pF"

# timing follows
[timing]
f_max = "1 MHz"
"""



def _recorded(text: str, since: dt.date) -> str:
    """The date a written file records, held to a date of the test's own run (from
    ``since`` to now): a run across midnight may record either day."""
    got = re.search(r"recorded = (\d{4}-\d{2}-\d{2})", text)
    assert got is not None, text
    assert since <= dt.date.fromisoformat(got.group(1)) <= dt.date.today()
    return got.group(1)


@pytest.fixture
def lib_dirs(tmp_path, monkeypatch):
    builtin = tmp_path / "builtin"
    (builtin / "generic").mkdir(parents=True)
    (builtin / "generic" / "base.toml").write_text(BASE, encoding="utf-8")
    team = tmp_path / "team"
    team.mkdir()
    (team / "child.toml").write_text(CHILD, encoding="utf-8")
    monkeypatch.setattr(loader, "BUILTIN_DIR", builtin)
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    return builtin, team


def load(team):
    lib = load_library([team])
    assert not lib.problems, [p.message for p in lib.problems]
    return lib


def test_round_trip_keeps_comments_and_order(lib_dirs):
    _, team = lib_dirs
    path = team / "child.toml"
    lib = load(team)
    since = dt.date.today()
    assert record_value(lib, "child", "sda.c_in", "6 pF", "rev C, table 7.5", typ="4 pF") == path
    record_value(lib, "child", "scl.v_il", "0.3 VDD", "rev C, table 7.5")
    record_value(lib, "child", "timing.t_hold", "5 ns", "rev C, table 9", basis="measured")
    record_value(lib, "child", "supply.min", "1.8 V", "rev C, p. 1")
    today = _recorded(path.read_text(encoding="utf-8"), since)
    expected = CHILD.replace("recorded = 2020-01-01", f"recorded = {today}").replace(
        'c_in = "8 pF"   # table 5',
        'c_in = { value = "6 pF", basis = "datasheet", source = "rev C, table 7.5", '
        'typ = "4 pF" }   # table 5').replace(
        '[pins.scl]\nc_in = "8 pF"\n',
        '[pins.scl]\nc_in = "8 pF"\n'
        'v_il = { value = "0.3 VDD", basis = "datasheet", source = "rev C, table 7.5" }\n'
    ).replace(
        'f_max = "1 MHz"\n',
        'f_max = "1 MHz"\n'
        't_hold = { value = "5 ns", basis = "measured", source = "rev C, table 9" }\n'
        '\n[supply]\nmin = { value = "1.8 V", basis = "datasheet", source = "rev C, p. 1" }\n')
    assert path.read_text(encoding="utf-8") == expected
    part = load(team).parts["child"]
    c_in = part.pins["sda"].c_in
    assert (c_in.value, c_in.basis, c_in.source, c_in.typ, c_in.origin) == (
        6e-12, "datasheet", "rev C, table 7.5", 4e-12, "child")
    assert part.timing.t_hold.basis == "measured"
    assert (part.supply.min.value, part.supply.max.value) == (1.8, 5.5)
    assert part.provenance.recorded == dt.date.fromisoformat(today)


def test_record_into_a_new_part_creates_its_tables(lib_dirs):
    _, team = lib_dirs
    lib = load(team)
    since = dt.date.today()
    path = new_part(lib, "child-b", "base", team, title="Second source")
    text = path.read_text(encoding="utf-8")
    assert 'extends = "base"' in text and 'title = "Second source"' in text
    assert 'category = "sensor"' in text and _recorded(text, since)
    lib = load(team)
    assert lib.parts["child-b"].pins["sda"].c_in.origin == "base"
    record_value(lib, "child-b", "sda.c_in", "7 pF", "rev 2")
    record_value(lib, "child-b", "scl.c_in", "7 pF", "rev 2")
    record_value(lib, "child-b", "sda.v_ih", "0.7 VDD", "rev 2")
    data = tomllib.loads(path.read_text(encoding="utf-8"))
    assert data["pins"]["sda"] == {
        "c_in": {"value": "7 pF", "basis": "datasheet", "source": "rev 2"},
        "v_ih": {"value": "0.7 VDD", "basis": "datasheet", "source": "rev 2"}}
    assert text in path.read_text(encoding="utf-8")  # the header is kept as it was
    assert load(team).parts["child-b"].pins["scl"].c_in.value == 7e-12


def test_inline_supply_table_stays_on_its_line(lib_dirs):
    builtin, team = lib_dirs
    path = team / "own.toml"
    path.write_text(BASE.replace('"base"', '"own"').replace("abstract = true\n", ""),
                    encoding="utf-8")
    lib = load(team)
    record_value(lib, "own", "supply.max", "3.6 V", "rev D")
    lines = path.read_text(encoding="utf-8").splitlines()
    assert lines[4] == ('supply = { min = "1.7 V", max = { value = "3.6 V", '
                        'basis = "datasheet", source = "rev D" } }')
    assert len(lines) == len(BASE.splitlines()) - 1


@pytest.mark.parametrize(("field", "value", "match"), [
    ("sda.c_in", "10 pH", "capacitance"),
    ("sda.c_in", "8", "bare number"),
    ("sda.c_in", "4k7", "allowed range"),
    ("sda.v_il", "0.3 VCC", "relative to the supply"),
    # the class runs to 5.5 V: the minimum written is the value refused, not the class
    ("supply.min", "6 V", "value is refused: supply max 5.5 V is below min 6 V"),
    ("timing.f_max", "-1 MHz", "negative"),
])
def test_refused_value_leaves_the_file_byte_identical(lib_dirs, field, value, match):
    _, team = lib_dirs
    path = team / "child.toml"
    before = path.read_bytes()
    with pytest.raises(LibraryError, match=match) as info:
        record_value(load(team), "child", field, value, "rev C")
    assert info.value.file == str(path)
    assert info.value.field.endswith(field.split(".")[-1])
    assert path.read_bytes() == before
    assert sorted(p.name for p in team.iterdir() if not p.name.endswith(".lock")) == ["child.toml"]


def test_refused_value_names_field_and_expected(lib_dirs):
    _, team = lib_dirs
    with pytest.raises(LibraryError) as info:
        record_value(load(team), "child", "sda.c_in", "10 pH", "rev C")
    err = info.value
    assert err.field == "pins.sda.c_in"
    assert "capacitance" in err.expected and "'8 pF'" in err.expected
    assert err.line == 11  # the line of c_in in the file


def test_a_record_that_would_make_the_file_too_large_to_read_is_refused(lib_dirs,
                                                                        monkeypatch):
    # a source pasted whole (a page of a datasheet) grew the file past the size the
    # library reads: written, the part was then left out of the library ("file too large")
    _, team = lib_dirs
    monkeypatch.setattr(loader, "MAX_PART_BYTES", 4096)  # the limit, made small
    with pytest.raises(LibraryError, match="more than the 4,096 the library reads") as info:
        record_value(load(team), "child", "sda.c_in", "6 pF", "x" * 5000)
    assert info.value.field == "pins.sda.c_in" and "shorten" in info.value.hint
    assert (team / "child.toml").read_text(encoding="utf-8") == CHILD


def test_record_into_an_id_two_team_files_share_is_refused(lib_dirs):
    # invented: a copy of child.toml in a subfolder. The record went into whichever file
    # the walk read first, and the command then failed with exit 2 after writing
    _, team = lib_dirs
    (team / "copy").mkdir()
    (team / "copy" / "child.toml").write_text(CHILD, encoding="utf-8")
    lib = load_library([team])
    with pytest.raises(LibraryError, match="two team parts share one id"):
        record_value(lib, "child", "sda.c_in", "6 pF", "rev C")
    assert (team / "child.toml").read_text(encoding="utf-8") == CHILD
    assert (team / "copy" / "child.toml").read_text(encoding="utf-8") == CHILD


def test_a_problem_the_file_had_already_is_named_as_its_own(lib_dirs):
    # invented: f_max mistyped by hand. Recording sda.c_in was refused with "the part
    # would not validate with this value", as if the new c_in were at fault
    _, team = lib_dirs
    path = team / "child.toml"
    path.write_text(CHILD.replace('f_max = "1 MHz"', 'f_max = "1 MHzz"'), encoding="utf-8")
    kept = path.read_text(encoding="utf-8")
    lib = load_library([team])
    with pytest.raises(LibraryError) as info:
        record_value(lib, "child", "sda.c_in", "6 pF", "rev C")
    err = info.value
    assert "has a problem already" in err.problem and "would not validate" not in str(err)
    assert err.field == "timing.f_max" and err.line == kept.splitlines().index(
        'f_max = "1 MHzz"') + 1
    assert "pins.sda.c_in was not written" in err.hint
    assert path.read_text(encoding="utf-8") == kept
    # recording the mistyped value itself mends the file
    record_value(lib, "child", "timing.f_max", "1 MHz", "rev C")
    assert load(team).parts["child"].timing.f_max.value == 1e6  # the value just written


@pytest.mark.parametrize("value", ["1e300 pF", "4k7", "-3 pF"])
def test_refused_value_is_quoted_as_typed(lib_dirs, value):
    # "1e300 pF" was quoted back as "1e288 F", "4k7" as "4.7 kF", "-3 pF" as "-3 pF"
    _, team = lib_dirs
    with pytest.raises(LibraryError) as info:
        record_value(load(team), "child", "sda.c_in", value, "rev C")
    assert info.value.value == value
    assert f"(got '{value}')" in str(info.value) and "1e288" not in str(info.value)


def test_a_refusal_says_allowed_range_in_the_units_of_the_format_table(tmp_path):
    # invented test part: a team cable class extending the built-in ribbon-cable.  A
    # refusal is "outside the allowed range" ("plausible" is the range that only warns)
    # and states it per metre, as docs/formats/part.md does (it read "at least 10 ps/cm
    # and at most 10 ns/cm" beside a documented 1 ns/m to 1 µs/m; the lower end is now
    # light's delay in vacuum, 1/c)
    new_part(load_library([], env=False), "x-cable", "ribbon-cable", tmp_path,
             source="catalogue p. 3")
    with pytest.raises(LibraryError) as info:
        record_value(load_library([tmp_path], env=False), "x-cable", "line.delay",
                     "0.5 ns/m", "catalogue p. 3")
    # below the lowest end, the refusal says why: faster than light (1/c less the 2 %
    # a rounded figure is allowed, pinlib.core.quantity.DELAY_MIN)
    assert info.value.problem.startswith("the value is refused: a delay per length shorter "
                                         "than light's in vacuum")
    assert info.value.expected == "at least 3.27 ns/m and at most 1 µs/m"
    assert "plausible" not in str(info.value)


@pytest.mark.parametrize(("typ", "match"), [("-3 pF", "negative"),
                                            ("1e300 pF", "allowed range")])
def test_a_typical_value_is_held_to_the_limits_of_its_field(lib_dirs, typ, match):
    # a typical c_in of -3 pF was recorded without a word
    _, team = lib_dirs
    path = team / "child.toml"
    before = path.read_bytes()
    with pytest.raises(LibraryError, match=match) as info:
        record_value(load(team), "child", "sda.c_in", "3 pF", "rev C", typ=typ)
    assert info.value.value == typ and "1e288" not in str(info.value)
    assert path.read_bytes() == before


@pytest.mark.parametrize(("field", "match"), [
    ("sda.cin", "closest: c_in"), ("cs.c_in", "no such pin"), ("sda.function", "no recorded"),
    ("sda.edges", "list"), ("timing", "table"), ("timing.fmax", "f_max"),
    # the pin as the datasheet spells it: pin names are the file's, case and all
    ("SDA.c_in", "no such pin.*closest: sda"), ("sdaa.c_in", "closest: sda"),
])
def test_unknown_fields_are_refused(lib_dirs, field, match):
    _, team = lib_dirs
    before = (team / "child.toml").read_bytes()
    with pytest.raises(LibraryError, match=match):
        record_value(load(team), "child", field, "8 pF", "rev C")
    assert (team / "child.toml").read_bytes() == before


@pytest.mark.parametrize(("field", "line", "problem"), [
    # a pin the part lacks: at the first pin table; a misspelt field: at its pin's table
    ("sdx.c_in", 10, "the part has no such pin"), ("sda.c_inn", 10, "unknown field"),
    ("timing.fmax", 19, "unknown field"), ("scl.c_in.x", 16, "a value field has no sub-fields"),
    ("sides.a.sda.c_in", None, "the part has no sides: only a bridging part has them"),
])
def test_a_refused_field_names_the_part_file_and_its_table_line(lib_dirs, field, line,
                                                               problem):
    # invented test part.  "sdx.c_in" and "sda.c_inn" were refused without the file
    _, team = lib_dirs
    with pytest.raises(LibraryError) as info:
        record_value(load(team), "child", field, "8 pF", "rev C")
    assert info.value.problem == problem
    assert info.value.file == str(team / "child.toml")
    assert info.value.line == line


def test_a_value_refused_beside_a_class_value_names_where_the_class_sets_it(tmp_path,
                                                                           monkeypatch):
    # invented test part.  "supply max 5.5 V is below min 6 V" named the team file with
    # no line (it has no supply yet) and not where the 5.5 V comes from
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    path = new_part(load_library([], env=False), "ee", "eeprom-i2c", tmp_path,
                    source="rev A")
    with pytest.raises(LibraryError) as info:
        record_value(load_library([tmp_path], env=False), "ee", "supply.min", "6 V", "rev A")
    err = info.value
    assert (err.file, err.field, err.line) == (str(path), "supply.min", None)
    assert err.hint == "beside supply.max in i2c-peripheral.toml:9, set by a class it extends"


def test_a_side_the_bridge_lacks_is_named_with_its_sides(tmp_path, monkeypatch):
    # invented test part extending the built-in repeater: "sides.c.sda.c_in" was "the
    # part has no such pin ... expected one of its pins (none)"
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    path = new_part(load_library([], env=False), "rep", "i2c-repeater", tmp_path,
                    source="rev A")
    with pytest.raises(LibraryError) as info:
        record_value(load_library([tmp_path], env=False), "rep", "sides.c.sda.c_in",
                     "8 pF", "rev A")
    err = info.value
    assert (err.problem, err.field, err.file) == ("the part has no side 'c'", "sides.c",
                                                  str(path))
    assert err.expected == "one of its sides (a, b)" and err.hint == "e.g. sides.a.sda.c_in"


def test_a_source_pasted_over_two_lines_is_written_as_one(lib_dirs):
    # a source copied out of a PDF's table caption kept its line break: the file held
    # "rev C,\n table 7.5", and every listing of the source broke its line there
    _, team = lib_dirs
    record_value(load(team), "child", "sda.c_in", "6 pF", "rev C,\n  table 7.5\t")
    c_in = load(team).parts["child"].pins["sda"].c_in
    assert c_in.source == "rev C, table 7.5"


def test_a_source_and_a_known_basis_are_required(lib_dirs):
    _, team = lib_dirs
    lib = load(team)
    with pytest.raises(InputError, match="source"):
        record_value(lib, "child", "sda.c_in", "8 pF", "  ")
    with pytest.raises(InputError, match="basis") as err:
        record_value(lib, "child", "sda.c_in", "8 pF", "rev C", basis="hearsay")
    assert err.value.problem == "unknown basis" and err.value.value == "hearsay"
    assert err.value.expected == ("one of datasheet, measured, estimate, published, generic")


def test_a_standard_s_limit_is_recorded_with_the_basis_published(lib_dirs):
    # a team part whose datasheet states no VIH of its own but compliance with the I2C
    # specification: the standard's limit, with the standard as its source
    _, team = lib_dirs
    path = team / "child.toml"
    record_value(load(team), "child", "sda.v_ih", "0.7 VDD",
                 "I2C-bus specification UM10204 rev. 6, table 9, VIH min", basis="published")
    assert ('v_ih = { value = "0.7 VDD", basis = "published", source = "I2C-bus '
            'specification UM10204 rev. 6, table 9, VIH min" }') in path.read_text(
        encoding="utf-8")
    v_ih = load(team).parts["child"].pins["sda"].v_ih
    # published: UM10204 rev. 6, table 9, VIH min 0.7·VDD
    assert (v_ih.value.scale, v_ih.basis, v_ih.soft) == (0.7, "published", False)


def test_a_new_part_with_a_published_basis_and_no_source_asks_for_the_standard(lib_dirs):
    _, team = lib_dirs
    path = new_part(load(team), "child-std", "base", team, basis="published")
    text = path.read_text(encoding="utf-8")
    assert 'provenance = { basis = "published", recorded = ' in text
    assert '#   source = "I2C-bus specification UM10204 rev. 6"' in text
    assert load(team).parts["child-std"].provenance.basis == "published"


def test_value_that_breaks_a_child_part_is_refused(lib_dirs):
    _, team = lib_dirs
    (team / "grandchild.toml").write_text(
        'format = "pinlib.part/1"\nid = "grandchild"\nextends = "child"\n'
        'supply = { min = "1.8 V" }\n', encoding="utf-8")
    path = team / "child.toml"
    before = path.read_bytes()
    lib = load(team)
    # child alone would validate with supply.max = 1.75 V (its min is 1.7 V), the
    # grandchild with its min of 1.8 V would not.
    with pytest.raises(LibraryError, match="grandchild"):
        record_value(lib, "child", "supply.max", "1.75 V", "rev C")
    assert path.read_bytes() == before


def test_refuses_to_write_into_the_builtin_library(lib_dirs):
    builtin, team = lib_dirs
    target = builtin / "generic" / "base.toml"
    before = target.read_bytes()
    lib = load(team)
    with pytest.raises(LibraryError, match="built-in library is not written"):
        record_value(lib, "base", "sda.c_in", "8 pF", "rev C")
    assert target.read_bytes() == before
    with pytest.raises(LibraryError, match="built-in"):
        new_part(lib, "fresh", "base", builtin / "generic")
    assert sorted(p.name for p in (builtin / "generic").iterdir()) == ["base.toml"]


@pytest.mark.parametrize("title, head", [
    ("bell\x07", "# bell"),
    ("tab\there", "# tab here"),
])
def test_a_title_with_a_control_character_stays_one_comment(lib_dirs, title, head):
    # Once a traceback (TOMLDecodeError): the title, written as the first comment, held a
    # character no TOML comment may hold.  The title itself is kept as given.
    _, team = lib_dirs
    lib = load(team)
    path = new_part(lib, "fresh", "base", team, title=title)
    text = path.read_text(encoding="utf-8")
    assert tomllib.loads(text)["title"] == title
    assert load(team).parts["fresh"].title == title
    assert text.splitlines()[0] == head


@pytest.mark.parametrize(("title", "problem"), [
    ("", "an empty title"), ("   ", "an empty title"), ("\t\n", "an empty title"),
    ("Line one\nformat = 3", "a title of more than one line"),
    ("tab\tand\r\nreturn", "a title of more than one line"),
    ("next\x85line", "a title of more than one line"),
    ("para\u2029graph", "a title of more than one line"),
])
def test_a_blank_title_or_one_of_several_lines_is_refused(lib_dirs, title, problem):
    # invented titles.  The format says a title is one line: "" and "   " were written,
    # and a title with a line break was stored with its "\n"
    _, team = lib_dirs
    with pytest.raises(InputError) as info:
        new_part(load(team), "fresh", "base", team, title=title)
    assert (info.value.problem, info.value.field, info.value.value) == (problem, "title", title)
    assert not (team / "fresh.toml").exists()


@pytest.mark.parametrize(("written", "problem"), [
    ('""', "an empty title"), ('"  "', "an empty title"),
    ('"Serial EEPROM\\nsecond line"', "a title of more than one line"),
    ('"""\nSerial EEPROM\nsecond line"""', "a title of more than one line"),
])
def test_a_part_file_whose_title_is_blank_or_several_lines_is_refused(lib_dirs, written,
                                                                      problem):
    # invented test part: parts check names the file, line and field
    _, team = lib_dirs
    (team / "child.toml").write_text(CHILD.replace('title = "Serial EEPROM"',
                                                   f"title = {written}"), encoding="utf-8")
    lib = load_library([team])
    (err,) = [p for p in lib.problems if p.field == "title"]
    assert (err.problem, err.file, err.line) == (problem, str(team / "child.toml"), 4)


@pytest.mark.parametrize("new_id", ["b", "x" * 64])
def test_a_new_part_file_fits_80_columns(lib_dirs, new_id):
    # Once past 80 columns: the comments gave the title, the class (an id of up to 64
    # characters) and the example command a line each (the command passed 80 with any
    # id but one of a single character).
    builtin, team = lib_dirs
    long_class = "a-very-long-generic-class-id-for-a-level-translator-with-enable1"
    assert len(long_class) == 64
    (builtin / "generic" / "long.toml").write_text(
        BASE.replace('id = "base"', f'id = "{long_class}"'), encoding="utf-8")
    lib = load(team)
    title = ("Second-source serial EEPROM, 2 Mbit, 1.7 to 5.5 V, from the approved vendor "
             "list of the 2027 build, with its own lot-dependent input capacitance")
    path = new_part(lib, new_id, long_class, team, title=title)
    text = path.read_text(encoding="utf-8")
    data = tomllib.loads(text)
    assert data["extends"] == long_class and data["title"] == title
    comments = [x for x in text.splitlines() if x.startswith("#")]
    assert all(len(x) <= 80 for x in comments), [x for x in comments if len(x) > 80]
    # the words are all there, in their order, each line still a comment
    said = " ".join(x[1:].strip() for x in comments)
    assert said.startswith(title + " A team part that extends")
    assert f"'{long_class}'" in said
    # the example command, continued with a backslash where it is cut
    at = next(i for i, x in enumerate(comments) if "pinlib parts record" in x)
    command = comments[at:at + 1 + sum(x.endswith(" \\") for x in comments[at:])]
    assert len(command) >= 2 and all(x.endswith(" \\") for x in command[:-1])
    assert " ".join(x[1:].strip(" \\") for x in command) == (
        f'pinlib parts record {new_id} sda.c_in "VALUE" --source "document, revision, table"')


def test_new_part_refusals(lib_dirs, tmp_path):
    _, team = lib_dirs
    lib = load(team)
    with pytest.raises(LibraryError, match="exists"):
        new_part(lib, "child", "base", team)
    with pytest.raises(LibraryError, match="closest in the library: base"):
        new_part(lib, "fresh", "bsae", team)
    with pytest.raises(LibraryError, match="not a valid part id"):
        new_part(lib, "Fresh Part", "base", team)
    blocker = tmp_path / "plain-file"
    blocker.write_text("x", encoding="utf-8")
    with pytest.raises(WriteError):
        new_part(lib, "fresh", "base", blocker)
    with pytest.raises(WriteError):
        new_part(lib, "fresh", "base", blocker / "sub")
    assert not (team / "fresh.toml").exists()


def test_unwritable_folder_gives_a_write_error_and_changes_nothing(lib_dirs, monkeypatch):
    # Tests run as root, where a read-only folder is still writable: make the final
    # replace fail instead, as it does in a read-only folder.
    _, team = lib_dirs
    path = team / "child.toml"
    before = path.read_bytes()
    lib = load(team)

    def refuse(src, dst):
        raise PermissionError(13, "Permission denied", str(dst))

    monkeypatch.setattr(os, "replace", refuse)
    with pytest.raises(WriteError, match="cannot write the file: Permission denied") as info:
        record_value(lib, "child", "sda.c_in", "6 pF", "rev C")
    assert info.value.file == str(path)
    assert path.read_bytes() == before
    leftovers = [p.name for p in team.iterdir() if p.name not in ("child.toml", ".child.toml.lock")]
    assert leftovers == []


# --- concurrency and crashes -----------------------------------------------------------

def _many_pins_part(team: Path, n: int = 100) -> Path:
    lines = ['format = "pinlib.part/1"', 'id = "many"', 'title = "Many pins"',
             'category = "logic"', 'supply = { min = "1.7 V", max = "5.5 V" }', ""]
    for i in range(n):
        lines += [f"# pin {i}", f"[pins.p{i:02d}]", 'function = "gpio"', ""]
    path = team / "many.toml"
    path.write_text("\n".join(lines), encoding="utf-8")
    return path


WRITER = textwrap.dedent("""\
    import sys
    from pinlib.library.loader import load_library
    from pinlib.library.record import record_value
    folder, first, last = sys.argv[1], int(sys.argv[2]), int(sys.argv[3])
    lib = load_library([folder], builtin=False, env=False)
    for i in range(first, last):
        record_value(lib, "many", f"p{i:02d}.c_in", f"{i + 1} pF", f"writer {first}")
        print(i, flush=True)
""")


def _writer(team: Path, first: int, last: int) -> subprocess.Popen:
    env = dict(os.environ)
    env.pop("PINLIB_LIBRARY", None)
    return subprocess.Popen([sys.executable, "-c", WRITER, str(team), str(first), str(last)],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, env=env,
                            cwd=Path(__file__).resolve().parents[1])


def _c_in_values(path: Path) -> dict[int, str]:
    data = tomllib.loads(path.read_text(encoding="utf-8"))
    return {int(name[1:]): pin["c_in"]["value"] for name, pin in data["pins"].items()
            if "c_in" in pin}


def test_two_processes_recording_lose_nothing(tmp_path):
    team = tmp_path / "team"
    team.mkdir()
    path = _many_pins_part(team)
    procs = [_writer(team, 0, 50), _writer(team, 50, 100)]
    outputs = [p.communicate(timeout=300) for p in procs]
    for p, (out, err) in zip(procs, outputs, strict=True):
        assert p.returncode == 0, err
        assert len(out.split()) == 50
    assert _c_in_values(path) == {i: f"{i + 1} pF" for i in range(100)}
    text = path.read_text(encoding="utf-8")
    assert text.count("# pin ") == 100  # the comments survive every rewrite
    lib = load_library([team], builtin=False, env=False)
    assert not lib.problems and len(lib.parts["many"].pins) == 100


def _kill_when(proc, team: Path, mode: str, rng: random.Random) -> None:
    """SIGKILL the writer at a random moment, or at a random moment inside a write
    (while its temporary file exists, between writing it and replacing the part file)."""
    if mode == "random":
        time.sleep(rng.uniform(0.0, 0.03))
    else:
        deadline = time.monotonic() + 20
        while time.monotonic() < deadline and proc.poll() is None:
            if any(name.endswith(".tmp") for name in os.listdir(team)):
                break
    proc.send_signal(signal.SIGKILL)


@pytest.mark.parametrize(("mode", "seed"), [("random", 1), ("random", 2), ("in-write", 3),
                                            ("in-write", 4)])
def test_killed_writer_leaves_a_whole_file_with_every_completed_write(tmp_path, mode, seed):
    team = tmp_path / "team"
    team.mkdir()
    path = _many_pins_part(team)
    rng = random.Random(seed)
    proc = _writer(team, 0, 100)
    done = []
    wanted = rng.randint(2, 25)
    while len(done) < wanted:
        line = proc.stdout.readline()
        if not line:
            break
        done.append(int(line))
    _kill_when(proc, team, mode, rng)
    rest, _ = proc.communicate(timeout=60)
    done += [int(x) for x in rest.split()]
    assert proc.returncode == -signal.SIGKILL
    assert wanted <= len(done) < 100
    values = _c_in_values(path)  # parses: never a truncated file
    for i in done:
        assert values[i] == f"{i + 1} pF"
    # at most the write in flight went through unreported
    assert set(values) - set(done) <= {len(done)}
    assert path.read_text(encoding="utf-8").count("# pin ") == 100  # whole, comments kept
    # A temporary file of the interrupted write may remain; the loader ignores it.
    lib = load_library([team], builtin=False, env=False)
    assert not lib.problems and "many" in lib.parts


# --- bridging parts: pins per side --------------------------------------------------------

def _bridge_part(tmp_path, monkeypatch):
    """A team translator extending the built-in pass-transistor class (pins per side)."""
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    team = tmp_path / "team"
    path = new_part(load_library([], env=False), "xl", "level-translator-mosfet", team,
                    source="rev A")
    return team, path


def test_record_top_level_pin_on_a_bridging_part_names_the_side_paths(tmp_path, monkeypatch):
    team, path = _bridge_part(tmp_path, monkeypatch)
    before = path.read_bytes()
    with pytest.raises(LibraryError) as info:
        record_value(load(team), "xl", "sda.c_in", "5 pF", "rev A, table 3")
    err = info.value
    assert err.field == "pins.sda" and "on its sides" in err.problem
    assert err.expected == "sides.a.sda.c_in or sides.b.sda.c_in"
    assert "[sides.a.pins.sda] or [sides.b.pins.sda]" in err.hint
    with pytest.raises(LibraryError) as info:  # a pin no side has: the sides' pins listed
        record_value(load(team), "xl", "cs.c_in", "5 pF", "rev A, table 3")
    assert info.value.expected == ("a pin of one side: sides.a.sda, sides.a.scl, sides.b.sda, "
                                   "sides.b.scl")
    assert path.read_bytes() == before
    record_value(load(team), "xl", "sides.a.sda.c_in", "5 pF", "rev A, table 3")  # as named
    data = tomllib.loads(path.read_text(encoding="utf-8"))
    assert data["sides"]["a"]["pins"]["sda"]["c_in"]["value"] == "5 pF"


@pytest.mark.parametrize("order", [(0, 1, 2), (0, 2, 1), (1, 0, 2), (1, 2, 0), (2, 0, 1),
                                   (2, 1, 0)])
def test_new_tables_of_a_bridging_part_read_cleanly(tmp_path, monkeypatch, order):
    # every table header the records write or move next to a value has a blank line
    # before it, whatever the order ([bridge] followed a new side's value before)
    team, path = _bridge_part(tmp_path, monkeypatch)
    values = [("sides.a.sda.c_in", "15 pF"), ("sides.b.low_offset", "50 mV"),
              ("bridge.v_gs_th", "1.1 V")]
    for i in order:
        record_value(load(team), "xl", *values[i], "rev A, table 2")
    lines = path.read_text(encoding="utf-8").splitlines()
    headers = [i for i, x in enumerate(lines) if x.startswith("[")]
    assert len(headers) == 3
    assert all(lines[i - 1] == "" for i in headers), "\n".join(lines)


def test_a_file_without_blank_lines_between_tables_keeps_its_layout(lib_dirs):
    _, team = lib_dirs
    # a value added at the end of [pins.sda] sits right above [pins.scl], as the file had
    tight = "".join(x for x in CHILD.splitlines(keepends=True)[:7]) + "".join(
        x for x in CHILD.splitlines(keepends=True)[7:] if x.strip() and x[0] != "#")
    (team / "child.toml").write_text(tight, encoding="utf-8")
    since = dt.date.today()
    record_value(load(team), "child", "sda.v_il", "0.3 VDD", "rev A")
    text = (team / "child.toml").read_text(encoding="utf-8")
    new = 'v_il = { value = "0.3 VDD", basis = "datasheet", source = "rev A" }\n'
    assert new + "[pins.scl]" in text
    assert text.replace(new, "") == tight.replace("2020-01-01", _recorded(text, since))


# --- the layout kept, in time linear in the file ----------------------------------------
#
# record.py once matched the lines before and after an edit with difflib on the whole
# file, which costs about the product of the two lengths on a file of many like lines (a
# part of 20,000 pins took minutes).  These are that code, kept as the reference the
# faster matching (record._matching_blocks) must agree with byte for byte.

def _reference_keep_untouched_lines(old_text, before, after):
    import difflib

    if before == old_text:
        return after
    old_lines = old_text.splitlines(keepends=True)
    b, a = before.splitlines(keepends=True), after.splitlines(keepends=True)
    if len(old_lines) != len(b):
        return after
    out = []
    matcher = difflib.SequenceMatcher(a=b, b=a, autojunk=False)
    for tag, i1, i2, j1, j2 in matcher.get_opcodes():
        out += old_lines[i1:i2] if tag == "equal" else a[j1:j2]
    return "".join(out)


def _reference_blank_before_tables(old_text, new_text):
    import difflib

    from pinlib.library.record import _HEADER

    old_lines = old_text.splitlines(keepends=True)
    lines = new_text.splitlines(keepends=True)
    was = {}
    matcher = difflib.SequenceMatcher(a=old_lines, b=lines, autojunk=False)
    for tag, i1, _i2, j1, j2 in matcher.get_opcodes():
        if tag == "equal":
            was.update((j, i1 + j - j1) for j in range(j1, j2))
    out = []
    for j, line in enumerate(lines):
        prev = out[-1] if out else ""
        if _HEADER.match(line) and prev.strip() and not prev.lstrip().startswith("#"):
            i = was.get(j)
            if i is None or (i > 0 and not old_lines[i - 1].strip()):
                out.append("\n")
        out.append(line)
    return "".join(out)


# Hand-edited team part files (invented test parts): comments between and after tables,
# a file without blank lines, spacing tomlkit does not keep, CRLF line ends, a table
# left empty, repeated lines.
_HAND_EDITED = {
    "comments": CHILD,
    "tight": (CHILD.splitlines(keepends=True)[0] + "".join(
        x for x in CHILD.splitlines(keepends=True)[1:] if x.strip() and x[0] != "#")),
    "spacing": CHILD.replace("provenance = { basis", "provenance = {basis").replace(
        "recorded = 2020-01-01 }", "recorded = 2020-01-01}").replace(
        '[pins.scl]\nc_in = "8 pF"', '[pins.scl]\nc_in   =   "8 pF"  # spaced'),
    "crlf": CHILD.replace("\n", "\r\n"),
    "repeated": CHILD.replace(
        "# clock pin, below\n[pins.scl]\n",
        "# clock pin, below\n\n\n# clock pin, below\n[pins.scl]\n").replace(
        "[timing]\n", "[timing]\n# timing\n# timing\n\n") + "\n# end\n\n# end\n",
    "empty-table": CHILD.replace("# timing follows\n[timing]\nf_max = \"1 MHz\"\n",
                                 "[pins.int]\nfunction = \"gpio\"\n\n[timing]\n\n"
                                 "# nothing yet\n"),
}
_RECORDS = [("sda.c_in", "6 pF", None), ("scl.v_il", "0.3 VDD", None),
            ("timing.t_hold", "5 ns", None), ("supply.min", "1.8 V", None),
            ("sda.v_ih", "0.7 VDD", "0.65 VDD"), ("scl.c_in", "7 pF", None)]


def _record_all(team: Path, records) -> list[bytes]:
    """The file's bytes after each record (None where the record was refused)."""
    out = []
    for field, value, typ in records:
        try:
            record_value(load(team), "child", field, value, "rev C, table 7", typ=typ)
        except LibraryError as err:
            out.append(("refused", err.message))
            continue
        out.append((team / "child.toml").read_bytes())
    return out


@pytest.mark.parametrize("name", sorted(_HAND_EDITED))
def test_recording_writes_the_bytes_the_whole_file_matcher_wrote(lib_dirs, monkeypatch, name):
    from pinlib.library import record

    _, team = lib_dirs
    (team / "child.toml").write_bytes(_HAND_EDITED[name].encode("utf-8"))
    reference = team.parent / "reference"
    reference.mkdir()
    (reference / "child.toml").write_bytes(_HAND_EDITED[name].encode("utf-8"))
    got = _record_all(team, _RECORDS)
    monkeypatch.setattr(record, "_keep_untouched_lines", _reference_keep_untouched_lines)
    monkeypatch.setattr(record, "_blank_before_tables", _reference_blank_before_tables)
    assert got == _record_all(reference, _RECORDS)
    assert any(isinstance(x, bytes) for x in got)


def _many_like_pins(n: int) -> str:
    """A part file of ``n`` pins written alike (invented test part): the lines that repeat
    on every pin are what made the whole-file matcher slow."""
    lines = ['format = "pinlib.part/1"', 'id = "child"', 'title = "Many pins"',
             'category = "logic"', 'supply = { min = "1.7 V", max = "5.5 V" }',
             'provenance = { basis = "datasheet", source = "rev A", recorded = 2020-01-01 }',
             ""]
    for i in range(n):
        lines += [f"# pin {i}", f"[pins.p{i}]", 'function = "gpio"',
                  f'c_in = {{ value = "{5 + i % 7} pF", source = "table {i}" }}', ""]
    return "\n".join(lines)


def test_recording_into_a_file_of_many_like_pins_writes_the_reference_bytes(
        lib_dirs, monkeypatch):
    from pinlib.library import record

    _, team = lib_dirs
    text = _many_like_pins(300)  # 1,500 lines: beyond what is matched whole
    (team / "child.toml").write_text(text, encoding="utf-8")
    reference = team.parent / "reference"
    reference.mkdir()
    (reference / "child.toml").write_text(text, encoding="utf-8")
    records = [("p0.c_in", "9 pF", None), ("p150.v_il", "0.3 VDD", None),
               ("p299.c_in", "8 pF", "7 pF"), ("timing.f_max", "1 MHz", None),
               ("p7.leakage", "1 µA", None)]
    got = _record_all(team, records)
    monkeypatch.setattr(record, "_keep_untouched_lines", _reference_keep_untouched_lines)
    monkeypatch.setattr(record, "_blank_before_tables", _reference_blank_before_tables)
    assert got == _record_all(reference, records)
    assert all(isinstance(x, bytes) for x in got)


def _valid_blocks(a, b, blocks) -> bool:
    i0 = j0 = 0
    for i, j, k in blocks:
        if i < i0 or j < j0 or k <= 0 or a[i:i + k] != b[j:j + k]:
            return False
        i0, j0 = i + k, j + k
    return True


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_matching_after_one_edit_is_difflibs(seed):
    import difflib

    from pinlib.library.record import _matching_blocks

    rng = random.Random(seed)
    lines = _many_like_pins(rng.randint(60, 200)).splitlines(keepends=True)
    pool = ["\n", "[pins.x]\n", 'function = "gpio"\n', "# pin 3\n"]
    for _ in range(30):
        new = list(lines)
        at = rng.randrange(len(new))
        kind = rng.choice(["insert", "replace", "delete", "repeat"])
        if kind == "insert":
            new[at:at] = rng.choices(pool + lines, k=rng.randint(1, 4))
        elif kind == "replace":
            new[at] = rng.choice(pool + lines)
        elif kind == "delete":
            del new[at:at + rng.randint(1, 3)]
        else:  # the lines that follow, once more: where to match them is ambiguous
            new[at:at] = lines[at:at + rng.randint(1, 6)]
        want = [m for m in difflib.SequenceMatcher(a=lines, b=new, autojunk=False)
                .get_matching_blocks() if m.size]
        assert _matching_blocks(lines, new) == [tuple(m) for m in want], (kind, at)


def test_matching_edits_far_apart_stays_a_valid_matching():
    # two files that share neither end nor an edit region small enough to match whole: the
    # lines met once in each anchor the matching, which must still pair only equal lines
    from pinlib.library.record import _matching_blocks

    a = _many_like_pins(2000).splitlines(keepends=True)
    b = ["# changed\n"] + a[1:5000] + ["# inserted\n"] * 3 + a[5000:-1] + ["# changed\n"]
    blocks = _matching_blocks(a, b)
    assert _valid_blocks(a, b, blocks)
    assert sum(k for _i, _j, k in blocks) == len(a) - 2  # all but the two changed


def test_a_lock_left_by_a_killed_writer_is_taken_over(tmp_path):
    # SIGKILL frees the lock (an flock on the open lock file), not the lock file: the
    # next record takes the lock, writes, and removes the file
    team = tmp_path / "team"
    team.mkdir()
    path = _many_pins_part(team)
    proc = _writer(team, 0, 100)
    assert proc.stdout.readline()
    _kill_when(proc, team, "in-write", random.Random(5))
    proc.communicate(timeout=60)
    lock = team / ".many.toml.lock"
    lock.touch()  # as a kill between taking the lock and letting it go leaves it
    record_value(load_library([team], builtin=False, env=False), "many", "p99.c_in",
                 "1 pF", "after the kill")
    assert _c_in_values(path)[99] == "1 pF" and not lock.exists()


def test_a_folder_this_user_may_not_write_in_is_named(tmp_path, monkeypatch):
    # "cannot lock the file: Permission denied" did not say what was not writable.  Root
    # writes anywhere: it runs the command without the capability that lets it
    import shutil

    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    prefix = []
    if os.geteuid() == 0:
        if not shutil.which("setpriv"):
            pytest.skip("root without setpriv writes in any folder")
        prefix = ["setpriv", "--bounding-set=-dac_override,-dac_read_search,-fowner"]
    folder = tmp_path / "ro"
    path = new_part(load_library([], env=False), "ro-part", "eeprom-i2c", folder,
                    source="rev A")
    before = path.read_bytes()
    folder.chmod(0o555)
    env = dict(os.environ, COLUMNS="80", PINLIB_CACHE_DIR="off",
               PYTHONPATH=str(Path(__file__).resolve().parents[1]))
    try:
        for argv in (["record", "ro-part", "sda.c_in", "5 pF", "--source", "rev A"],
                     ["new", "ro-two", "--from", "eeprom-i2c", "--into", str(folder)]):
            run = subprocess.run([*prefix, sys.executable, "-m", "pinlib", "parts", *argv,
                                  "--library", str(folder)], capture_output=True, text=True,
                                 env=env, timeout=60)
            err = " ".join(run.stderr.split())
            assert run.returncode == 2, err
            assert f"the folder {folder} is not writable by this user" in err, err
            assert "Traceback" not in err and "Permission denied" not in err
    finally:
        folder.chmod(0o755)
    assert path.read_bytes() == before
    assert sorted(p.name for p in folder.iterdir()) == ["ro-part.toml"]
