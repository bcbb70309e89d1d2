"""``pinlib parts``: every action run in-process, its output and exit code."""

from __future__ import annotations

import json
import subprocess
import sys
import textwrap
from pathlib import Path

import pytest

from pinlib.cli import main
from pinlib.core import messages as M
from pinlib.core.tomlfile import tomllib
from pinlib.library import loader

BASE = """\
format = "pinlib.part/1"
id = "base"
title = "Generic I2C target"
category = "sensor"
abstract = true
supply = { min = "1.7 V", max = "5.5 V" }
provenance = { basis = "generic", source = "common practice" }

[pins.sda]
function = "i2c-sda"
drive = "open-drain"
c_in = { value = "10 pF", source = "spec, Ci max" }
v_il = "0.3 VDD"

[pins.scl]
function = "i2c-scl"
c_in = "10 pF"
"""

FLASH = """\
format = "pinlib.part/1"
id = "flash"
title = "Serial flash, SPI"
category = "memory"
supply = { min = "2.7 V", max = "3.6 V" }

[pins.sclk]
function = "spi-sclk"
c_in = "6 pF"

[timing]
f_max = "50 MHz"
t_valid = "7 ns"
"""

EEPROM = """\
# our EEPROM
format = "pinlib.part/1"
id = "eeprom"
title = "Serial EEPROM, team"
category = "memory"
extends = "base"
supply = { max = "3.6 V" }

[pins.sda]
c_in = "8 pF"   # rev A, table 3
"""


@pytest.fixture
def lib(tmp_path, monkeypatch):
    builtin = tmp_path / "builtin"
    builtin.mkdir()
    (builtin / "base.toml").write_text(BASE, encoding="utf-8")
    (builtin / "flash.toml").write_text(FLASH, encoding="utf-8")
    team = tmp_path / "team"
    team.mkdir()
    (team / "eeprom.toml").write_text(EEPROM, encoding="utf-8")
    monkeypatch.setattr(loader, "BUILTIN_DIR", builtin)
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    monkeypatch.chdir(tmp_path)
    return builtin, team


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


# --- list --------------------------------------------------------------------------------

def test_list_table(lib, capsys):
    code, out, err = run(capsys, "parts", "list", "--library", "team")
    assert code == 0 and not err
    lines = {line.split()[0]: line for line in out.splitlines()[2:]}
    assert set(lines) == {"base", "eeprom", "flash", "*"}
    assert "abstract" in lines["base"] and "built-in" in lines["base"]
    assert lines["base"].startswith("base *") and lines["*"] == M.ABSTRACT_MARKED
    assert "1.7-3.6 V" in lines["eeprom"] and "i2c-scl, i2c-sda" in lines["eeprom"]
    assert "team" in lines["eeprom"]


@pytest.mark.parametrize("columns", ["80", "400"])
def test_list_marks_an_abstract_class_at_any_width(lib, capsys, monkeypatch, columns):
    # invented test design: at 80 columns the kind column that said "abstract" was left
    # out, and an abstract class read as a part to place (placing one is refused)
    monkeypatch.setenv("COLUMNS", columns)
    code, out, _ = run(capsys, "parts", "list", "--library", "team")
    lines = out.splitlines()
    assert code == 0 and max(map(len, lines)) <= int(columns)
    rows = {line.split()[0]: line for line in lines[2:] if line[:1] not in " *("}
    assert rows["base"].startswith("base *") and not rows["eeprom"].startswith("eeprom *")
    # the key is the line right under the table, before any line of columns left out
    key = lines.index(M.ABSTRACT_MARKED)
    assert all(not line.startswith("(") for line in lines[:key])
    # a listing without an abstract class has no key
    code, out, _ = run(capsys, "parts", "list", "--library", "team", "--category", "memory")
    assert code == 0 and "*" not in out and "eeprom" in out


def test_list_marks_a_team_override(lib, capsys):
    _, team = lib
    (team / "flash.toml").write_text(FLASH.replace("50 MHz", "80 MHz"), encoding="utf-8")
    code, out, _ = run(capsys, "parts", "list", "--library", "team")
    line = next(x for x in out.splitlines() if x.startswith("flash"))
    assert code == 0 and "team, overrides built-in" in line
    code, out, _ = run(capsys, "parts", "list", "--library", "team", "--json")
    entry = next(p for p in json.loads(out) if p["id"] == "flash")
    assert entry["overrides"].endswith("flash.toml") and not entry["builtin"]


def test_list_names_the_overrides_when_the_kind_column_does_not_fit(lib, capsys,
                                                                    monkeypatch):
    _, team = lib
    (team / "flash.toml").write_text(FLASH.replace("50 MHz", "80 MHz"), encoding="utf-8")
    (team / "eeprom.toml").write_text(EEPROM.replace(
        'title = "Serial EEPROM, team"', 'title = "Serial EEPROM, team' + ", long" * 12 + '"'),
        encoding="utf-8")
    monkeypatch.setenv("COLUMNS", "60")
    code, out, _ = run(capsys, "parts", "list", "--library", "team")
    lines = out.splitlines()
    assert code == 0 and max(map(len, lines)) <= 60 and "kind" not in lines[0]
    assert "team parts that override a built-in one: flash" in out
    # the title stays, wrapped (the codes beside it give way)
    assert lines[0].split()[-1] == "title" and "kind;" in " ".join(lines[-2:])
    monkeypatch.setenv("COLUMNS", "400")  # the kind column shows it: no line for it
    code, out, _ = run(capsys, "parts", "list", "--library", "team")
    assert "team, overrides built-in" in out and "override a built-in one" not in out



def test_list_keeps_a_long_id_whole_at_80_columns(lib, capsys, monkeypatch):
    _, team = lib
    long_id = "eeprom-" + "-".join(["two-kilobit"] * 3) + "-write-protect-pin-x"  # invented
    assert 56 <= len(long_id) <= 64  # the part format allows 64 characters
    (team / "long.toml").write_text(EEPROM.replace('id = "eeprom"', f'id = "{long_id}"'),
                                    encoding="utf-8")
    monkeypatch.setenv("COLUMNS", "80")
    code, out, _ = run(capsys, "parts", "list", "--library", "team")
    lines = out.splitlines()
    assert code == 0 and max(map(len, lines)) <= 80
    assert long_id in lines  # on a line of its own, whole: it can be copied
    after = lines[lines.index(long_id) + 1]
    assert after.split()[:3] == ["memory", "1.7-3.6", "V"]
    assert any(line.startswith("eeprom ") for line in lines)



def _column(lines, name):
    """Each row's text in the column headed ``name`` of a table laid out by 'parts list'
    (rows begin with their id at the left edge; wrapped cells continue on the lines
    under it), by id."""
    at = lines[0].index(name)
    cells: dict[str, str] = {}
    last = None
    for line in lines[2:]:
        if not line.strip() or line.startswith("(") or ":" in line.split("  ")[0]:
            break  # the lines under the table
        if not line[0].isspace():
            last = line.split()[0]
            cells[last] = ""
        cells[last] = (cells[last] + " " + line[at:].split("  ")[0].strip()).strip()
    return cells


@pytest.mark.parametrize("columns", [80, 120])
def test_list_keeps_the_titles_readable(capsys, monkeypatch, columns):
    # the built-in library at 80 columns left the title out ("not shown at this width:
    # kind, title") and kept four columns of codes; at 120 it left out kind and title too
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    monkeypatch.setenv("COLUMNS", str(columns))
    code, out, _ = run(capsys, "parts", "list")
    lines = out.splitlines()
    assert code == 0 and max(map(len, lines)) <= columns, out
    assert lines[0].split("  ")[-1].strip() == "title", lines[0]
    code, js, _ = run(capsys, "parts", "list", "--json")
    titles = {p["id"]: p["title"] for p in json.loads(js)}
    assert _column(lines, "title") == titles  # each title whole, its words in order
    width = len(lines[1].split()[-1])  # the title column's rule
    assert width >= 24  # common practice, no source: a phrase a line
    if columns >= 120:  # room for the pins too, wrapped
        assert "pin functions" in lines[0] and "supply" in lines[0]
        assert width >= 30


def test_list_lays_out_every_column_whole_in_a_pipe(capsys, monkeypatch):
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    monkeypatch.delenv("COLUMNS", raising=False)
    code, out, _ = run(capsys, "parts", "list")
    lines = out.splitlines()
    assert code == 0 and lines[0].split() == ["id", "category", "supply", "pin",
                                              "functions", "kind", "title"]
    # a row a part, whole, and the line saying what the abstract classes' mark means
    assert len(lines) == 2 + len(json.loads(run(capsys, "parts", "list", "--json")[1])) + 1
    assert lines[-1] == M.ABSTRACT_MARKED

@pytest.mark.parametrize(("args", "ids"), [
    (["--category", "memory"], ["eeprom", "flash"]),
    (["--function", "spi-sclk"], ["flash"]),
    (["--supply", "3.3V"], ["base", "eeprom", "flash"]),
    (["--supply", "5 V"], ["base"]),
    (["--supply", "1.8 V", "--category", "memory"], ["eeprom"]),
    (["--supply", "12 V"], []),
])
def test_list_filters(lib, capsys, args, ids):
    code, out, _ = run(capsys, "parts", "list", "--library", "team", "--json", *args)
    assert code == 0
    assert [p["id"] for p in json.loads(out)] == ids


def test_list_json_fields(lib, capsys):
    code, out, _ = run(capsys, "parts", "list", "--library", "team", "--json")
    eeprom = next(p for p in json.loads(out) if p["id"] == "eeprom")
    assert eeprom["supply"] == [{"side": None, "min": 1.7, "max": 3.6, "unit": "V"}]
    assert eeprom["functions"] == ["i2c-scl", "i2c-sda"]
    assert eeprom["abstract"] is False and eeprom["category"] == "memory"


@pytest.mark.parametrize(("args", "match"), [
    (["--category", "memroy"], "closest: memory"),
    (["--function", "i2c_sda"], "i2c-sda"),
    (["--supply", "3.3"], "bare number"),
])
def test_list_bad_filters(lib, capsys, args, match):
    code, out, err = run(capsys, "parts", "list", *args)
    assert code == 2 and not out and match in err and err.startswith("pinlib: error:")


def test_list_warns_about_problems(lib, capsys):
    _, team = lib
    (team / "broken.toml").write_text('format = "pinlib.part/1"\nid = "broken"\n',
                                      encoding="utf-8")
    code, out, err = run(capsys, "parts", "list", "--library", "team")
    # title, category
    assert code == 0 and "2 problems in the library" in err and "pinlib parts check" in err


# --- show --------------------------------------------------------------------------------

def test_show_values_with_provenance_and_origin(lib, capsys):
    code, out, _ = run(capsys, "parts", "show", "eeprom", "--library", "team")
    assert code == 0
    assert "eeprom: Serial EEPROM, team" in out and "extends: eeprom <- base" in out
    rows = {line.split()[0]: line for line in out.splitlines()
            if line.startswith(("pins.", "supply."))}
    assert "8 pF" in rows["pins.sda.c_in"] and "base" not in rows["pins.sda.c_in"]
    assert "10 pF" in rows["pins.scl.c_in"] and "base (" in rows["pins.scl.c_in"]
    assert "builtin" in rows["pins.scl.c_in"]  # the file it came from
    assert "3.6 V" in rows["supply.max"] and "1.7 V" in rows["supply.min"]


def test_show_provenance_is_the_team_part_s_own(lib, capsys):
    # a team part written by 'parts new' without --source: its provenance line read
    # "datasheet, common practice", the class's source beside the team part's basis
    # (a class whose provenance has a date: without one, it was replaced whole)
    _, team = lib
    (team / "cls.toml").write_text(BASE.replace('id = "base"', 'id = "cls"').replace(
        'source = "common practice" }', 'source = "common practice", recorded = 2026-12-01 }'),
        encoding="utf-8")
    code, _, _ = run(capsys, "parts", "new", "x1", "--from", "cls", "--into", "team",
                       "--library", "team")
    assert code == 0
    code, out, _ = run(capsys, "parts", "show", "x1", "--library", "team")
    assert code == 0
    (line,) = [ln for ln in out.splitlines() if "provenance:" in ln]
    assert line.split("provenance: ")[1].startswith("datasheet, recorded "), out
    assert "common practice" not in line
    code, out, _ = run(capsys, "parts", "show", "x1", "--library", "team", "--json")
    assert json.loads(out)["provenance"]["source"] == ""


def test_show_head_fits_80_columns(lib, capsys, monkeypatch, tmp_path):
    # a team part overriding a built-in one whose file lies deep: the line naming the
    # overridden file ran to 99 columns and more, unwrapped
    monkeypatch.setenv("COLUMNS", "80")
    deep = tmp_path / "built-in-library-folder" / "generic-classes"  # shown relative
    deep.mkdir(parents=True)
    (deep / "base.toml").write_text(BASE, encoding="utf-8")
    monkeypatch.setattr(loader, "BUILTIN_DIR", deep)
    (tmp_path / "team" / "base.toml").write_text(BASE, encoding="utf-8")
    code, out, _ = run(capsys, "parts", "show", "base", "--library", "team")
    assert code == 0 and "overrides the built-in" in out
    assert max(len(ln) for ln in out.splitlines()) <= 80, out


def test_show_names_what_is_inherited_when_its_column_is_left_out(lib, capsys, monkeypatch):
    # at 80 columns (the sources of a real class are long) the 'inherited from' column
    # was left out, and nothing said which values the team part sets and which it takes
    # from its class: "(not shown at this width: inherited from ...)" alone
    monkeypatch.setenv("COLUMNS", "60")
    code, out, _ = run(capsys, "parts", "show", "eeprom", "--library", "team")
    assert code == 0 and "not shown at this width: inherited from" in out
    flat = " ".join(out.split())
    assert ("inherited from base (builtin/base.toml): supply.min, pins.sda.v_il, "
            "pins.scl.c_in") in flat, out
    assert max(len(ln) for ln in out.splitlines()) <= 60


def test_show_json(lib, capsys):
    code, out, _ = run(capsys, "parts", "show", "eeprom", "--library", "team", "--json")
    data = json.loads(out)
    assert code == 0 and data["id"] == "eeprom"
    assert [c["id"] for c in data["chain"]] == ["eeprom", "base"]
    values = {v["field"]: v for v in data["values"]}
    sda = values["pins.sda.c_in"]
    assert (sda["value"], sda["unit"], sda["origin"], sda["inherited"]) == (8e-12, "F", "eeprom",
                                                                            False)
    scl = values["pins.scl.c_in"]
    assert scl["origin"] == "base" and scl["inherited"] and scl["origin_file"].endswith("base.toml")
    assert scl["basis"] == "generic" and scl["basis_from_part"]
    v_il = values["pins.sda.v_il"]
    assert (v_il["scale"], v_il["offset"], v_il["derived"]) == (0.3, 0.0, False)
    attributes = {a["field"]: a["value"] for a in data["attributes"]}
    assert attributes["pins.sda.drive"] == "open-drain"


def test_show_inherited_value_table_keeps_its_source(lib, capsys):
    code, out, _ = run(capsys, "parts", "show", "base", "--json")
    values = {v["field"]: v for v in json.loads(out)["values"]}
    assert values["pins.sda.c_in"]["source"] == "spec, Ci max"


@pytest.mark.parametrize("argv", [("parts", "show", "eeprom"),
                                  ("parts", "record", "eeprom", "sda.c_in", "6 pF",
                                   "--source", "rev B"),
                                  ("parts", "new", "x1", "--from", "eeprom", "--into", "team"),
                                  ("new", "board.toml", "--part", "U1=eeprom",
                                   "--part", "U2=base"),
                                  ("parts", "used-by", "eeprom")])
def test_a_part_whose_file_is_not_toml_is_named_at_its_file_and_line(lib, capsys, argv):
    # a stray line in the team file: "field 'ID': part 'eeprom' does not load: not valid
    # TOML ...", neither file nor line, and where team folders are read (it was found)
    _, team = lib
    (team / "eeprom.toml").write_text(EEPROM + "oops =\n", encoding="utf-8")
    before = (team / "eeprom.toml").read_bytes()
    code, _, err = run(capsys, *argv, "--library", "team")
    err = " ".join(err.split())
    assert code == 2 and "team/eeprom.toml:11" in err and "does not load" in err, err
    assert "team folders are read" not in err
    assert (team / "eeprom.toml").read_bytes() == before
    assert not (team / "x1.toml").exists()


def test_show_unknown_part(lib, capsys):
    code, out, err = run(capsys, "parts", "show", "eeprm", "--library", "team")
    assert code == 2 and "unknown part" in err and "eeprom" in err


def test_show_unknown_part_says_where_team_parts_come_from(lib, capsys, monkeypatch):
    # eeprom is a team part: without its folder it is not found, and the error says where
    # team folders come from (a design's library line is not read by parts show)
    (lib[0].parent / "other").mkdir()
    monkeypatch.setenv("PINLIB_LIBRARY", "other")
    code, out, err = run(capsys, "parts", "show", "eeprom")
    err = " ".join(err.split())
    assert code == 2 and not out and "unknown part" in err
    assert "PINLIB_LIBRARY (other) and --library (none given)" in err
    assert "a design's own library line counts only where the design is read" in err


def test_show_makes_a_title_s_escape_codes_visible_even_those_like_pinlib_s_own(
        lib, capsys, monkeypatch):
    # Once written raw: a code equal to one of pinlib's status colours was let through
    # whoever wrote it, so a part's title could paint the terminal (a red "FAIL", text
    # hidden). Every escape code of a file is shown; piped output holds no ESC at all.
    _, team = lib
    title = "Looks fine \\u001b[1;31mFAIL hidden\\u001b[0m \\u001b[32mgreen\\u001b[0m"
    (team / "esc.toml").write_text(EEPROM.replace('id = "eeprom"', 'id = "esc"').replace(
        'title = "Serial EEPROM, team"', f'title = "{title}"'), encoding="utf-8")
    monkeypatch.setenv("NO_COLOR", "1")
    code, out, err = run(capsys, "parts", "show", "esc", "--library", "team")
    assert code == 0 and "\x1b" not in out + err
    assert ("esc: Looks fine \\x1b[1;31mFAIL hidden\\x1b[0m \\x1b[32mgreen\\x1b[0m"
            in out.splitlines())
    # on a terminal too: the title is the file's, not pinlib's, and gets no colour
    monkeypatch.delenv("NO_COLOR")
    monkeypatch.setattr(sys.stdout, "isatty", lambda: True, raising=False)
    code, out, _ = run(capsys, "parts", "show", "esc", "--library", "team")
    assert code == 0 and "\x1b" not in out and "\\x1b[1;31mFAIL" in out


# --- new and record ----------------------------------------------------------------------

@pytest.mark.parametrize(("title", "problem"), [
    ("", "an empty title"), ("   ", "an empty title"),
    ("two\nlines", "a title of more than one line")])
def test_new_refuses_a_blank_title_or_one_of_two_lines(lib, capsys, title, problem):
    # invented titles: each was written into the new file
    _, team = lib
    code, out, err = run(capsys, "parts", "new", "flash-b", "--from", "flash", "--into",
                         "team", "--title", title)
    assert code == 2 and not out
    assert f"field '--title': {problem}" in " ".join(err.split())
    assert "Traceback" not in err and not (team / "flash-b.toml").exists()


def test_new_then_record(lib, capsys):
    _, team = lib
    code, out, _ = run(capsys, "parts", "new", "flash-b", "--from", "flash", "--into", "team",
                       "--title", "Second-source flash")
    assert code == 0 and "created team/flash-b.toml" in out
    code, out, _ = run(capsys, "parts", "record", "flash-b", "sclk.c_in", "5 pF",
                       "--source", "rev B, table 6", "--typ", "3 pF", "--library", "team")
    assert code == 0 and "recorded pins.sclk.c_in = 5 pF" in out
    code, out, _ = run(capsys, "parts", "record", "flash-b", "timing.t_valid", "6 ns",
                       "--source", "rev B, table 9", "--basis", "measured", "--library", "team")
    assert code == 0
    data = tomllib.loads((team / "flash-b.toml").read_text(encoding="utf-8"))
    assert data["extends"] == "flash" and data["title"] == "Second-source flash"
    assert data["pins"]["sclk"]["c_in"] == {"value": "5 pF", "basis": "datasheet",
                                            "source": "rev B, table 6", "typ": "3 pF"}
    assert data["timing"]["t_valid"]["basis"] == "measured"
    code, out, _ = run(capsys, "parts", "show", "flash-b", "--library", "team", "--json")
    values = {v["field"]: v for v in json.loads(out)["values"]}
    assert values["timing.t_valid"]["value"] == 6e-9
    assert values["timing.f_max"]["origin"] == "flash"


def test_record_says_what_it_replaces(lib, capsys):
    # a measured value written over by a datasheet one, and a typical value dropped by a
    # record without --typ, went without a word
    run(capsys, "parts", "new", "flash-c", "--from", "flash", "--into", "team")
    code, out, _ = run(capsys, "parts", "record", "flash-c", "sclk.c_in", "5 pF",
                       "--source", "bench 2026-11", "--basis", "measured", "--typ", "3 pF",
                       "--library", "team")
    assert code == 0 and "replaces" in out and "inherited from flash" in out
    code, out, _ = run(capsys, "parts", "record", "flash-c", "sclk.c_in", "6 pF",
                       "--source", "rev B, table 6", "--library", "team")
    assert code == 0
    assert "replaces 5 pF, typ 3 pF (measured: bench 2026-11)" in " ".join(out.split())
    assert "typ is dropped" in out
    code, out, _ = run(capsys, "parts", "record", "flash-c", "sclk.c_in", "6 pF",
                       "--source", "rev B, table 6", "--typ", "4 pF", "--library", "team")
    assert code == 0 and "typ is dropped" not in out


def test_record_fits_80_columns_and_shows_what_it_wrote(lib, capsys, monkeypatch):
    # the 'recorded' line ran past 80 columns, and showed the value with the spaces
    # around it that the file does not keep
    monkeypatch.setenv("COLUMNS", "80")
    run(capsys, "parts", "new", "flash-d", "--from", "flash", "--into", "team")
    code, out, _ = run(capsys, "parts", "record", "flash-d", "sclk.c_in", " 5 pF ",
                       "--source", "datasheet revision B of 2026-03, table 6, Ci max",
                       "--library", "team")
    assert code == 0 and max(len(ln) for ln in out.splitlines()) <= 80, out
    assert "recorded pins.sclk.c_in = 5 pF (datasheet:" in out


def test_record_shows_an_escape_code_of_its_source_not_obeyed(lib, capsys):
    # the source given on the command line was echoed with its escape code raw
    run(capsys, "parts", "new", "flash-e", "--from", "flash", "--into", "team")
    code, out, err = run(capsys, "parts", "record", "flash-e", "sclk.c_in", "5 pF",
                         "--source", "S\x1b[32mT", "--library", "team")
    assert code == 0 and "\x1b" not in out + err
    assert "(datasheet: S\\x1b[32mT)" in out


@pytest.mark.parametrize(("field", "typed", "typ", "echoed"), [
    # invented test data; each echo derived: the value as quantity.parse reads it, in
    # format_si's writing (a space before the unit, an SI prefix)
    ("timing.f_max", "1MHz", None, "timing.f_max = 1 MHz ("),
    ("timing.f_max", "1.234e6 Hz", None, "timing.f_max = 1.234 MHz ("),  # not rounded
    ("sclk.c_in", "6.80pF", "3000fF", "pins.sclk.c_in = 6.8 pF, typ 3 pF ("),
    ("timing.t_valid", "0.0000000071 s", None, "timing.t_valid = 7.1 ns ("),
    ("sclk.v_il", "0.3VDD", None, "pins.sclk.v_il = 0.3 VDD ("),
    ("sclk.v_il", "800mV", None, "pins.sclk.v_il = 800 mV ("),
])
def test_record_echoes_the_value_as_pinlib_read_it(lib, capsys, field, typed, typ, echoed):
    # 'recorded timing.f_max = 1MHz' echoed the text as typed, not what pinlib made of it
    _, team = lib
    run(capsys, "parts", "new", "flash-e", "--from", "flash", "--into", "team")
    code, out, err = run(capsys, "parts", "record", "flash-e", field, typed,
                         "--source", "rev B, table 6", "--library", "team",
                         *(["--typ", typ] if typ else []))
    assert code == 0, err
    assert f"recorded {echoed}datasheet: rev B, table 6)" in " ".join(out.split()), out
    # the file keeps the text as it was written
    assert f'"{typed}"' in (team / "flash-e.toml").read_text(encoding="utf-8")


def test_new_fits_its_lines_to_80_columns_and_the_next_command_still_pastes(
        lib, capsys, monkeypatch):
    # a 50-character id in a folder not yet a library: the "next:" command ran to 125
    # columns; on a terminal it is continued with " \\" as a shell reads it
    monkeypatch.setenv("COLUMNS", "80")
    new_id = "a-very-long-part-class-identifier-for-testing-wrap"
    code, out, _ = run(capsys, "parts", "new", new_id, "--from", "base", "--into", "other",
                       "--library", "team")
    assert code == 0
    assert max(len(x) for x in out.splitlines()) <= 80, out
    nxt = out[out.index("next: "):].rstrip("\n")
    assert " \\\n    " in nxt
    assert nxt.replace(" \\\n    ", " ") == (
        f'next: pinlib parts record {new_id} sda.c_in "VALUE" --source "..." '
        "--library team --library other")
    # the command as printed runs: the class lives in team, the new part in other (it
    # named only "other", and the record failed: "extends a part that is not in the
    # library")
    import shlex

    argv = shlex.split(nxt.replace(" \\\n    ", " ").removeprefix("next: pinlib "))
    argv[argv.index("VALUE")] = "8 pF"
    code, _, err = run(capsys, *argv)
    assert code == 0, err
    # in a pipe (no COLUMNS, not a terminal) each stays one line
    monkeypatch.delenv("COLUMNS")
    code, out, _ = run(capsys, "parts", "new", new_id + "-b", "--from", "base", "--into",
                       "other", "--library", "team")
    assert [x[:6] for x in out.splitlines()] == ["create", "next: "]


def test_new_without_a_source_writes_none_and_check_lists_it(lib, capsys):
    _, team = lib
    code, _, err = run(capsys, "parts", "new", "x1", "--from", "base", "--into", "team")
    assert code == 0 and "no --source" in err and "team/x1.toml" in err
    text = (team / "x1.toml").read_text(encoding="utf-8")
    prov = tomllib.loads(text)["provenance"]
    assert prov["basis"] == "datasheet" and "source" not in prov  # never an empty source
    line = next(i for i, x in enumerate(text.splitlines(), 1) if x.startswith("provenance"))
    assert "source =" in text.splitlines()[line - 2]  # the comment above says what to add
    code, out, _ = run(capsys, "parts", "check", "team")
    assert code == 1
    assert f"team/x1.toml:{line}, field 'provenance.source'" in out
    assert "basis 'datasheet' but no source" in out
    # the fixture's SDA pins (open-drain, no v_ol and i_ol) are not warned of: an I2C
    # bus takes the specification's sink point for them
    assert out.splitlines()[-1] == "checked 2 files in team: 1 problem"
    code, _, err = run(capsys, "parts", "new", "x2", "--from", "base", "--into", "team",
                       "--source", "rev A")
    assert code == 0 and "no --source" not in err
    assert tomllib.loads((team / "x2.toml").read_text(encoding="utf-8"))["provenance"][
        "source"] == "rev A"


def test_check_lists_values_that_claim_a_document_without_naming_it(lib, capsys):
    _, team = lib
    (team / "eeprom.toml").write_text(EEPROM + textwrap.dedent("""\
        v_il = { value = "0.3 VDD", basis = "measured" }
        v_ih = { value = "0.7 VDD", basis = "estimate" }

        [pins.scl]
        c_in = { value = "9 pF", basis = "datasheet", source = "" }
        v_il = { value = "0.3 VDD", typ = "0.35 VDD" }
        """), encoding="utf-8")
    code, out, _ = run(capsys, "parts", "check", "--library", "team", "--json")
    found = [(p["file"][-11:], p["line"], p["field"]) for p in json.loads(out)["problems"]]
    # an estimate names no document; a value stating neither basis nor source is its
    # file's (which has no provenance: generic)
    assert code == 1
    assert found == [("eeprom.toml", 11, "pins.sda.v_il"), ("eeprom.toml", 15, "pins.scl.c_in")]


def test_new_defaults_to_the_first_library_folder(lib, capsys, monkeypatch, tmp_path):
    code, out, err = run(capsys, "parts", "new", "x1", "--from", "base")
    assert code == 2 and "--into" in err
    code, out, _ = run(capsys, "parts", "new", "x1", "--from", "base", "--library", "team")
    assert code == 0 and (tmp_path / "team" / "x1.toml").exists()
    other = tmp_path / "other"
    other.mkdir()
    monkeypatch.setenv("PINLIB_LIBRARY", str(other))
    code, out, _ = run(capsys, "parts", "new", "x2", "--from", "base")
    assert code == 0 and (other / "x2.toml").exists()


def test_new_into_a_folder_no_library_holds_names_the_design_library_line(lib, capsys):
    # the note said "pass --library team-parts or add it to PINLIB_LIBRARY", neither of
    # which a design reads: a design finds a team part through its own library line
    code, _, err = run(capsys, "parts", "new", "x3", "--from", "base", "--into",
                       "team-parts", "--source", "invented rev A")
    assert code == 0
    said = " ".join(err.split())
    assert ("note: team-parts is not a library folder yet: pass --library team-parts or add "
            "it to PINLIB_LIBRARY, and write it in the library line of each design that "
            'places the part: library = ["team-parts"] (relative to the design file)') \
        in said, said
    # a folder the library already holds: no note
    code, _, err = run(capsys, "parts", "new", "x4", "--from", "base", "--into", "team",
                       "--library", "team", "--source", "invented rev A")
    assert code == 0 and "library line" not in err


def test_show_an_id_in_capitals_names_the_closest(lib, capsys):
    # invented test design: "parts show EEPROM" got no suggestion, "parts show eeprm" did
    code, _, err = run(capsys, "parts", "show", "EEPROM", "--library", "team")
    assert code == 2 and "closest in the library: eeprom" in " ".join(err.split())


def test_new_refusals(lib, capsys):
    code, _, err = run(capsys, "parts", "new", "eeprom", "--from", "base", "--into", "team",
                       "--library", "team")
    assert code == 2 and "exists" in err
    code, _, err = run(capsys, "parts", "new", "x", "--from", "bse", "--into", "team")
    assert code == 2 and "closest in the library: base" in err
    # the class typed after --from (it said field 'extends', the file's key), and where
    # a team class was looked for, as 'parts show' says
    err = " ".join(err.split())
    assert "field '--from'" in err and "team folders are read from PINLIB_LIBRARY" in err
    code, _, err = run(capsys, "parts", "new", "x", "--from", "base", "--into", "builtin")
    assert code == 2 and "built-in" in err


def test_record_refusals_leave_files_alone(lib, capsys):
    builtin, team = lib
    before = (team / "eeprom.toml").read_bytes()
    code, _, err = run(capsys, "parts", "record", "eeprom", "sda.c_in", "10 pH",
                       "--source", "rev B", "--library", "team")
    assert code == 2 and "pins.sda.c_in" in err and "capacitance" in err
    assert "team/eeprom.toml:10" in err
    code, _, err = run(capsys, "parts", "record", "flash", "sclk.c_in", "5 pF",
                       "--source", "rev B", "--library", "team")
    assert code == 2 and "built-in" in err and "pinlib parts new" in err
    assert (team / "eeprom.toml").read_bytes() == before
    assert (builtin / "flash.toml").read_text(encoding="utf-8") == FLASH
    # a team part recorded into in a shell without its folder: said only "unknown part"
    code, _, err = run(capsys, "parts", "record", "eeprom", "sda.c_in", "5 pF",
                       "--source", "rev B")
    err = " ".join(err.split())
    assert code == 2 and "field 'ID'" in err and "unknown part (got 'eeprom')" in err
    assert "team folders are read from PINLIB_LIBRARY (not set)" in err


@pytest.mark.parametrize("typ, problem", [("banana", "not a number with a unit"),
                                          ("3 V", "a value in V where a capacitance"),
                                          ("-3 pF", "a negative value")])
def test_record_names_the_typ_field_it_refuses(lib, capsys, typ, problem):
    # Once "field 'pins.sda.c_in'" for a bad --typ beside a good value: the user wrote
    # the typical value, and the field to fix is its .typ.
    before = (lib[1] / "eeprom.toml").read_bytes()
    code, _, err = run(capsys, "parts", "record", "eeprom", "sda.c_in", "5 pF", "--typ", typ,
                       "--source", "rev B", "--library", "team")
    err = " ".join(err.split())
    assert code == 2 and "field 'pins.sda.c_in.typ'" in err, err
    assert problem in err and f"(got '{typ}')" in err and "team/eeprom.toml:10" in err
    assert (lib[1] / "eeprom.toml").read_bytes() == before


@pytest.mark.parametrize("field, expected", [("c_in", "PIN.c_in"),
                                             ("sides.a.v_il", "sides.a.PIN.v_il")])
def test_record_of_a_pin_field_without_its_pin_says_so(lib, capsys, field, expected):
    # "c_in" was read as a pin named c_in: "field 'pins.c_in': the path stops before a
    # field", when the field is there and its pin is what is missing
    before = (lib[1] / "eeprom.toml").read_bytes()
    code, _, err = run(capsys, "parts", "record", "eeprom", field, "5 pF",
                       "--source", "rev B", "--library", "team")
    err = " ".join(err.split())
    assert code == 2 and f"field '{field}': a pin's field without its pin" in err, err
    assert f"(got '{field}'); expected {expected}" in err and "stops before" not in err
    assert (lib[1] / "eeprom.toml").read_bytes() == before


def test_record_holds_a_typical_level_to_the_limit_s_range(lib, capsys):
    # "9 VDD" is refused as a level; as its typical value it was stored
    before = (lib[1] / "eeprom.toml").read_bytes()
    code, _, err = run(capsys, "parts", "record", "eeprom", "sda.v_il", "0.3 VDD", "--typ",
                       "9 VDD", "--source", "rev B", "--library", "team")
    err = " ".join(err.split())
    assert code == 2 and "field 'pins.sda.v_il.typ'" in err, err
    assert "(got '9 VDD')" in err and "a multiple of VDD within ±2" in err
    assert (lib[1] / "eeprom.toml").read_bytes() == before


def test_check_names_the_typ_field_of_a_file(lib, capsys, tmp_path):
    # the same field where the typical value is written in the file by hand
    bad = tmp_path / "bad"
    bad.mkdir()
    (bad / "a.toml").write_text(EEPROM.replace('id = "eeprom"', 'id = "a"').replace(
        '"8 pF"', '{ value = "8 pF", typ = "5 pH" }'), encoding="utf-8")
    code, out, _ = run(capsys, "parts", "check", "bad", "--library", "team")
    assert code == 1
    assert "bad/a.toml:10, field 'pins.sda.c_in.typ'" in out, out


def test_record_needs_a_source(lib, capsys):
    with pytest.raises(SystemExit) as info:
        main(["parts", "record", "eeprom", "sda.c_in", "5 pF", "--library", "team"])
    assert info.value.code == 2
    assert "--source" in capsys.readouterr().err


def test_record_negative_value_after_double_dash(lib, capsys):
    code, out, err = run(capsys, "parts", "record", "eeprom", "--source", "rev B",
                         "--library", "team", "--", "sda.v_il", "-0.3 V")
    assert code == 0, err
    data = tomllib.loads((lib[1] / "eeprom.toml").read_text(encoding="utf-8"))
    assert data["pins"]["sda"]["v_il"]["value"] == "-0.3 V"


def test_record_the_help_s_negative_value_example_runs(lib, capsys):
    # the help said 'pinlib parts record X -- sda.v_il "-0.3 V" --source S': after '--'
    # the --source was a positional too, and the command it showed failed ("the
    # following arguments are required: --source")
    import shlex

    from pinlib.cli.commands.parts import _EXAMPLES

    lines = [ln.strip() for ln in _EXAMPLES["record"].splitlines()
             if ln.strip().startswith("pinlib parts record") and '"-' in ln]
    assert lines
    for line in lines:
        words = shlex.split(line)[1:]
        words = ["eeprom" if w in ("X", "eeprom-acme") else w for w in words]
        code, _, err = run(capsys, *words[:2], "--library", "team", *words[2:])
        assert code == 0, (line, err)
    data = tomllib.loads((lib[1] / "eeprom.toml").read_text(encoding="utf-8"))
    assert data["pins"]["sda"]["v_il"]["value"].startswith("-")


# --- check -------------------------------------------------------------------------------

def test_check_clean(lib, capsys):
    code, out, _ = run(capsys, "parts", "check", "--library", "team")
    assert code == 0 and "checked 3 files in the library: no problems" in out
    code, out, _ = run(capsys, "parts", "check", "team")
    assert code == 0 and "checked 1 file in team: no problems" in out


def test_check_reports_every_problem(lib, capsys, tmp_path):
    bad = tmp_path / "bad"
    bad.mkdir()
    (bad / "a.toml").write_text(EEPROM.replace('id = "eeprom"', 'id = "a"').replace(
        '"8 pF"', '"8 pH"'), encoding="utf-8")
    (bad / "b.toml").write_text('format = "pinlib.part/1"\nid = "b"\nextends = "nobody"\n',
                                encoding="utf-8")
    (bad / "c.toml").write_text("format = [\n", encoding="utf-8")
    code, out, _ = run(capsys, "parts", "check", "bad", "--library", "team")
    assert code == 1
    lines = out.splitlines()
    assert any(x.startswith("bad/a.toml:10, field 'pins.sda.c_in'") for x in lines)
    assert any(x.startswith("bad/b.toml:3, field 'extends'") for x in lines)
    assert any(x.startswith("bad/c.toml") and "TOML" in x for x in lines)
    assert lines[-1] == "checked 3 files in bad: 3 problems"
    code, out, _ = run(capsys, "parts", "check", "bad", "--json")
    data = json.loads(out)
    assert code == 1 and len(data["problems"]) == 3
    assert {p["field"] for p in data["problems"]} == {"pins.sda.c_in", "extends", None}


def test_check_lists_problems_by_file_then_line(lib, capsys):
    # invented: a file whose provenance names no source (line 6) and whose c_in has a
    # unit of inductance (line 10), and a second file with a problem: each kind of problem
    # was listed in turn (the c_in at line 10 before the source at line 6), not in the
    # order of the lines
    _, team = lib
    sourceless = EEPROM.replace('extends = "base"\n',
                                'extends = "base"\nprovenance = { basis = "datasheet" }\n')
    (team / "b.toml").write_text(sourceless.replace('id = "eeprom"', 'id = "b"')
                                 .replace('"8 pF"', '"8 pH"'), encoding="utf-8")
    (team / "a.toml").write_text(sourceless.replace('id = "eeprom"', 'id = "a"'),
                                 encoding="utf-8")
    code, out, _ = run(capsys, "parts", "check", "team")
    lines = [ln for ln in out.splitlines() if ln.startswith("team/")]
    assert code == 1 and [ln.split(",")[0] for ln in lines] == [
        "team/a.toml:7", "team/b.toml:7", "team/b.toml:11"], out
    assert [ln.split("'")[1] for ln in lines] == ["provenance.source", "provenance.source",
                                                   "pins.sda.c_in"]
    code, out, _ = run(capsys, "parts", "check", "team", "--json")
    assert [(p["file"], p["line"]) for p in json.loads(out)["problems"]] == [
        ("team/a.toml", 7), ("team/b.toml", 7), ("team/b.toml", 11)]


def test_check_folder_reports_a_broken_parent(lib, capsys, tmp_path):
    builtin, _ = lib
    (builtin / "base.toml").write_text(BASE.replace('c_in = "10 pF"', 'c_in = "10 pH"'),
                                       encoding="utf-8")
    code, out, _ = run(capsys, "parts", "check", "team")
    assert code == 1 and "team/eeprom.toml" in out and "base.toml" in out


@pytest.mark.parametrize("where", [(), ("team",)])
def test_check_lists_a_problem_two_parts_inherit_once(lib, capsys, where):
    # invented: eeprom writes supply.min 4 V beside its own max 3.6 V, and leaf extends
    # it. Each part failed with the same error (file, line, field), and the list gave
    # it once per part: two problems for one
    _, team = lib
    (team / "eeprom.toml").write_text(EEPROM.replace('supply = { max = "3.6 V" }',
                                                     'supply = { min = "4 V", max = "3.6 V" }'),
                                      encoding="utf-8")
    (team / "leaf.toml").write_text('format = "pinlib.part/1"\nid = "leaf"\ntitle = "t"\n'
                                    'category = "memory"\nextends = "eeprom"\n',
                                    encoding="utf-8")
    lib_option = () if where else ("--library", "team")
    code, out, _ = run(capsys, "parts", "check", *lib_option, *where)
    lines = out.splitlines()
    supply = [x for x in lines if "supply max 3.6 V is below min 4 V" in x]
    assert code == 1 and len(supply) == 1, out
    assert supply[0].startswith("team/eeprom.toml:7, field 'supply.max'")
    code, out, _ = run(capsys, "parts", "check", *lib_option, *where, "--json")
    problems = [p for p in json.loads(out)["problems"] if p["field"] == "supply.max"]
    assert len(problems) == 1


def test_check_of_one_part_file_lists_that_file_s_problems(lib, capsys, tmp_path):
    # "pinlib parts check team/eeprom.toml" (the file a person just recorded into) said
    # "field 'FOLDER': not a folder"; it checks that file against its folder's library
    _, team = lib
    (team / "eeprom.toml").write_text(EEPROM.replace('"8 pF"', '"8 pH"'), encoding="utf-8")
    (team / "other.toml").write_text(EEPROM.replace('id = "eeprom"', 'id = "other"')
                                     .replace('"8 pF"', '"9 pH"'), encoding="utf-8")
    code, out, err = run(capsys, "parts", "check", "team/eeprom.toml")
    lines = out.splitlines()
    assert code == 1 and not err, err
    assert lines[0].startswith("team/eeprom.toml:10, field 'pins.sda.c_in'")
    assert "other.toml" not in out
    assert lines[-1] == "checked 1 file, team/eeprom.toml: 1 problem"
    (team / "other.toml").unlink()
    (team / "eeprom.toml").write_text(EEPROM, encoding="utf-8")
    code, out, _ = run(capsys, "parts", "check", "team/eeprom.toml", "--json")
    assert code == 0 and json.loads(out)["files"] == 1


@pytest.mark.parametrize("library", [(), ("--library", "linked")])
def test_check_of_a_folder_reports_a_link_out_of_it(lib, capsys, tmp_path, library):
    # "parts check linked --library linked" said "checked 0 files in linked: no problems",
    # exit 0, where "parts check --library linked" reported the link it does not follow:
    # the problem's file was resolved through the link, out of the folder checked
    _, team = lib
    linked = tmp_path / "linked"
    linked.mkdir()
    (linked / "link-out.toml").symlink_to(team / "eeprom.toml")
    (linked / "sub").symlink_to(team, target_is_directory=True)
    code, out, _ = run(capsys, "parts", "check", "linked", *library)
    lines = out.splitlines()
    assert code == 1, out
    assert any(x.startswith("linked/link-out.toml: a link out of the library folder is "
                            "not followed") for x in lines)
    assert any(x.startswith("linked/sub: a link out of the library folder") for x in lines)
    assert lines[-1] == "checked 0 files in linked: 2 problems"
    code, out, _ = run(capsys, "parts", "check", "linked", *library, "--json")
    assert code == 1 and len(json.loads(out)["problems"]) == 2
    # the same from the whole library, and from the link named alone
    assert run(capsys, "parts", "check", "--library", "linked")[0] == 1
    code, out, _ = run(capsys, "parts", "check", "linked/link-out.toml")
    assert code == 1 and out.splitlines()[-1] == ("checked 1 file, linked/link-out.toml: "
                                                  "1 problem")


def test_check_missing_folder(lib, capsys):
    code, _, err = run(capsys, "parts", "check", "nowhere")
    assert code == 2 and "nowhere, field 'FOLDER': library folder not found" in err, err


def test_new_into_a_file_says_to_name_its_folder(lib, capsys):
    # "--into team/eeprom.toml" (the file, not its folder) said only "not a folder"
    code, _, err = run(capsys, "parts", "new", "x9", "--from", "base", "--into",
                       "team/eeprom.toml")
    err = " ".join(err.split())
    assert code == 2 and "not a folder" in err and "not a file in it (e.g. team)" in err


def test_new_into_a_folder_no_library_may_be_is_refused(lib, capsys, tmp_path, monkeypatch):
    # "--into /" (or the home folder) wrote /x9.toml and said "pass --library /", a folder
    # every command then refuses as a library: a part file nothing could ever read
    home = tmp_path / "home"
    home.mkdir()
    monkeypatch.setenv("HOME", str(home))
    code, _, err = run(capsys, "parts", "new", "x9", "--from", "base", "--into", str(home))
    err = " ".join(err.split())
    assert code == 2 and "a library folder may not be a system folder" in err, err
    assert "--into" in err and not list(home.iterdir())


# --- schema ------------------------------------------------------------------------------

def test_schema_stdout_and_file(lib, capsys, tmp_path):
    code, out, _ = run(capsys, "parts", "schema")
    schema = json.loads(out)
    assert code == 0 and schema["$schema"].startswith("https://json-schema.org/")
    code, out, _ = run(capsys, "parts", "schema", "--output", "part.schema.json")
    assert code == 0 and json.loads((tmp_path / "part.schema.json").read_text(
        encoding="utf-8")) == schema


# --- help and start-up -------------------------------------------------------------------

@pytest.mark.parametrize("action", ["list", "show", "new", "record", "check", "schema"])
def test_every_action_has_help_with_an_example(capsys, action):
    with pytest.raises(SystemExit) as info:
        main(["parts", action, "--help"])
    out = capsys.readouterr().out
    assert info.value.code == 0
    assert "examples:" in out and f"pinlib parts {action}" in out


def test_parts_without_action_prints_help(capsys):
    assert main(["parts"]) == 2
    assert "examples:" in capsys.readouterr().out


def test_cli_stays_free_of_pandas_and_altair(lib):
    code = ("import sys; from pinlib.cli import main; main(['parts', 'list', '--json']); "
            "assert 'pandas' not in sys.modules and 'altair' not in sys.modules, "
            "sorted(m for m in ('pandas', 'altair') if m in sys.modules)")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          cwd=Path(__file__).resolve().parents[1], timeout=120)
    assert done.returncode == 0, done.stderr


def test_check_keeps_a_long_path_whole_on_a_line_of_its_own(lib, capsys, tmp_path, monkeypatch):
    # at 80 columns a folder's path was cut mid-name where the width fell
    # (".../with-another-level-bel" then "ow/parts/a.toml:10, ..."), and the closing line
    # "checked 1 file in <path>: 1 problem" ran past the width unwrapped.  A path that
    # fits the width goes whole on a line of its own; a longer one breaks after a "/"
    rel = "a" * 40 + "/" + "b" * 37  # invented folder names: 78 characters
    (tmp_path / rel).mkdir(parents=True)
    (tmp_path / rel / "a.toml").write_text(EEPROM.replace('id = "eeprom"', 'id = "a"').replace(
        '"8 pF"', '"8 pH"'), encoding="utf-8")
    monkeypatch.setenv("COLUMNS", "80")
    code, out, _ = run(capsys, "parts", "check", rel, "--library", "team")
    assert code == 1
    lines = out.splitlines()
    assert all(len(ln) <= 80 for ln in lines), out
    # the problem's "<path>/a.toml:10," (89 characters) broken after its last fitting "/"
    i = lines.index(rel + "/")
    assert lines[i + 1] == "a.toml:10," and lines[i + 2].startswith("    field 'pins.sda.c_in'")
    # the closing line's "<path>:" (79 characters) whole and unindented
    assert lines[-3:] == ["checked 1 file in", rel + ":", "    1 problem"]


@pytest.mark.parametrize(("cls", "field"), [
    ("ribbon-cable", "line.capacitance"), ("i2c-repeater", "sides.a.sda.c_in"),
    ("eeprom-i2c", "sda.c_in"), ("i2c-peripheral", "sda.c_in")])
def test_new_names_a_field_the_class_has_as_the_next_step(tmp_path, monkeypatch, capsys,
                                                          cls, field):
    # a cable has no pins: its next step read "pinlib parts record x PIN.FIELD ...", and
    # so did the comment the new file opens with; a part with pins read the literal
    # PIN.FIELD too, where a field it has (its first pin's c_in) pastes as it is
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    monkeypatch.setenv("COLUMNS", "80")
    code, out, _ = run(capsys, "parts", "new", "x-part", "--from", cls, "--into",
                       str(tmp_path), "--source", "invented rev A")
    assert code == 0
    assert f"next: pinlib parts record x-part {field} \"VALUE\"" in out
    assert all(len(line) <= 80 for line in out.splitlines())
    text = (tmp_path / "x-part.toml").read_text(encoding="utf-8")
    assert f'#   pinlib parts record x-part {field} "VALUE"' in text
    # the step it names is one that works (invented test data)
    value = "60 pF/m" if field == "line.capacitance" else "5 pF"
    code, out, err = run(capsys, "parts", "record", "x-part", field, value,
                         "--source", "invented rev A", "--library", str(tmp_path))
    assert code == 0, err


def test_check_lists_what_the_first_problems_of_a_part_hide(lib, capsys):
    # The checks between fields ran only once every field read: v_il above v_ih, and a
    # fast corner on an open-drain pin, were reported only after the bare number, the
    # unit and the value table without 'value' were fixed.
    _, team = lib
    # invented test inputs: each line below one problem
    (team / "a.toml").write_text(textwrap.dedent("""\
        format = "pinlib.part/1"
        id = "t-a"
        title = "a"
        category = "sensor"
        extends = "base"
        [pins.sda]
        c_in = 8
        v_il = "0.8 VDD"
        v_ih = "0.7 VDD"
        [timing]
        f_max = "1 mhz"
        """), encoding="utf-8")
    (team / "b.toml").write_text(textwrap.dedent("""\
        format = "pinlib.part/1"
        id = "t-b"
        title = "b"
        category = "sensor"
        extends = "base"
        [pins.sda]
        c_in = { source = "datasheet rev A, table 5" }
        fast = { r_out = "10 Ω" }
        """), encoding="utf-8")
    code, out, _ = run(capsys, "parts", "check", "team")
    found = [x.split("':")[0] + "'" for x in out.splitlines() if x.startswith("team/")]
    assert code == 1
    assert found == ["team/a.toml:7, field 'pins.sda.c_in'",
                     "team/a.toml:8, field 'pins.sda.v_il'",
                     "team/a.toml:11, field 'timing.f_max'",
                     "team/b.toml:7, field 'pins.sda.c_in'",
                     "team/b.toml:8, field 'pins.sda.fast'"], out
    assert "v_il 0.8 VDD lies above v_ih 0.7 VDD" in out
    assert "a fast corner belongs to a push-pull output" in out
    assert "note:" not in out  # every check ran on the fields that read


def test_check_adds_no_problem_that_taking_the_first_one_s_fields_out_made(lib, capsys):
    # A cable class refused for values no line has was checked again without them, and
    # then reported "a cable class gives its capacitance per length, or two of ..." as a
    # problem of its own: the file has all three (coax-3) or two (coax-50).
    _, team = lib
    # invented test inputs: the delay typed per cm for per m (5 kΩ), and 50 Ω over
    # 50 pF/m (2.5 ns/m, faster than light)
    for pid, line in (("coax-3", 'capacitance = "100 pF/m"\nimpedance = "50 Ω"\n'
                                 'delay = "5 ns/cm"'),
                      ("coax-50", 'capacitance = "50 pF/m"\nimpedance = "50 Ω"')):
        (team / f"{pid}.toml").write_text(
            f'format = "pinlib.part/1"\nid = "{pid}"\ntitle = "coax"\ncategory = "cable"\n'
            'provenance = { basis = "datasheet", source = "rev A" }\n\n[line]\n'
            f"{line}\n", encoding="utf-8")
    code, out, _ = run(capsys, "parts", "check", "team")
    text = " ".join(out.split())
    assert code == 1
    assert M.CABLE_NEEDS_TWO_OF_THREE not in text, out
    found = [x.split("':")[0] + "'" for x in out.splitlines() if x.startswith("team/")]
    assert found == ["team/coax-3.toml:8, field 'line.capacitance'",
                     "team/coax-50.toml:8, field 'line.capacitance'"], out
    # all three given and disagreeing: the disagreement first, then why it is refused.
    # derived from tpd = Z0 C' = 50 Ω x 100 pF/m = 5 ns/m against 500 ns/m (-99 %), and
    # Z0 = tpd / C' = 500 ns/m / 100 pF/m = 5 kΩ
    assert ("capacitance, delay and impedance disagree: impedance x capacitance gives "
            "5 ns/m against the delay 5 ns/cm (-99%); and delay / capacitance is an "
            "impedance of 5 kΩ, one no line has") in text, out
    # no delay written: the one derived is named as such.  derived from tpd = Z0 C' =
    # 50 Ω x 50 pF/m = 2.5 ns/m
    assert ("impedance x capacitance = 50 Ω x 50 pF/m gives a delay per length of "
            "2.5 ns/m, shorter than light's in vacuum") in text, out


def test_check_says_when_a_part_s_later_checks_cannot_run(lib, capsys):
    # a field every part needs is missing: the checks of the part as a whole wait for it
    _, team = lib
    (team / "m.toml").write_text(textwrap.dedent("""\
        format = "pinlib.part/1"
        id = "t-m"
        title = "m"
        [pins.sda]
        function = "i2c-sda"
        c_in = 8
        """), encoding="utf-8")
    code, out, _ = run(capsys, "parts", "check", "team/m.toml")
    assert code == 1
    assert f"note: team/m.toml: {M.PART_CHECKS_WAIT}" in out, out
    code, out, _ = run(capsys, "parts", "check", "team/m.toml", "--json")
    notes = json.loads(out)["notes"]
    assert [n["problem"] for n in notes] == [M.PART_CHECKS_WAIT]


def test_check_lists_a_part_no_bus_can_take(lib, capsys):
    # an SDA pin without SCL, an SPI pin without SCLK: the design loader refuses either
    # part on its bus; an open-drain pin without its sink point (a GPIO's: an I2C pin
    # without one takes the specification's, and is not warned of).  Once "no problems".
    _, team = lib
    # invented test inputs
    (team / "half.toml").write_text(textwrap.dedent("""\
        format = "pinlib.part/1"
        id = "half"
        title = "half"
        category = "sensor"
        supply = { min = "1.7 V", max = "3.6 V" }
        [pins.sda]
        function = "i2c-sda"
        drive = "open-drain"
        c_in = "5 pF"
        [pins.cs]
        function = "spi-cs"
        c_in = "5 pF"
        [pins.int]
        function = "gpio"
        drive = "open-drain"
        c_in = "5 pF"
        """), encoding="utf-8")
    code, out, _ = run(capsys, "parts", "check", "team/half.toml")
    flat = " ".join(out.split())
    assert code == 0  # warnings: the part is valid
    assert ("warning: team/half.toml:6, field 'pins.sda': pins of i2c/smbus (i2c-sda) but "
            "no i2c-scl pin: the part cannot be placed on such a bus; expected every "
            "device on such a bus to have i2c-sda and i2c-scl") in flat, out
    assert ("team/half.toml:10, field 'pins.cs': pins of spi (spi-cs) but no spi-sclk pin"
            in flat), out
    assert ("team/half.toml:13, field 'pins.int': an open-drain pin without v_ol and i_ol"
            in flat), out
    assert "'pins.sda': an open-drain pin" not in flat
    assert out.splitlines()[-1] == "checked 1 file, team/half.toml: no problems, 3 warnings"
    code, out, _ = run(capsys, "parts", "check", "team/half.toml", "--json")
    got = json.loads(out)
    assert code == 0 and not got["problems"] and len(got["warnings"]) == 3


def test_a_long_unknown_key_in_a_value_table_is_cut_as_values_are(tmp_path, capsys,
                                                                  monkeypatch):
    # invented team part: a 300-character key beside `value` was printed whole, over
    # four lines not indented as continuation lines
    monkeypatch.chdir(tmp_path)
    monkeypatch.setenv("COLUMNS", "80")
    (tmp_path / "team").mkdir()
    (tmp_path / "team" / "long.toml").write_text(
        'format = "pinlib.part/1"\nid = "long"\ntitle = "long key (invented)"\n'
        'extends = "eeprom-i2c"\n[pins.sda]\nc_in = { value = "8 pF", '
        + "x" * 300 + ' = "1" }\n', encoding="utf-8")
    code, out, _ = run(capsys, "parts", "check", "team")
    assert code == 1
    assert "(300 characters)" in out and "x" * 100 not in out
    assert all(len(ln) <= 80 for ln in out.splitlines()), out


def test_show_gives_a_value_the_basis_of_the_file_that_set_it(lib, capsys):
    # a value with a source of its own and no basis rests on its file's basis: the format's
    # default (generic) for a class file whose provenance names no basis, not the basis of
    # the part shown (datasheet); one that states a basis keeps it
    _, team = lib
    (team / "team-class.toml").write_text(textwrap.dedent("""\
        format = "pinlib.part/1"
        id = "team-class"
        title = "A team class (invented)"
        category = "sensor"
        extends = "base"
        provenance = { source = "our notes (invented)" }

        [pins.sda]
        leakage = { value = "2 µA", source = "bench notes (invented)" }
        v_ih = { value = "0.7 VDD", basis = "published", source = "UM10204 rev. 6, table 9" }
        """), encoding="utf-8")
    (team / "team-part.toml").write_text(textwrap.dedent("""\
        format = "pinlib.part/1"
        id = "team-part"
        title = "A team part (invented)"
        category = "sensor"
        extends = "team-class"
        provenance = { basis = "datasheet", source = "rev A (invented)" }

        [pins.sda]
        c_in = { value = "6 pF", source = "rev A, table 2 (invented)" }
        """), encoding="utf-8")
    code, out, _ = run(capsys, "parts", "show", "team-part", "--library", "team", "--json")
    assert code == 0
    values = {v["field"]: v for v in json.loads(out)["values"]}
    leakage = values["pins.sda.leakage"]
    assert (leakage["basis"], leakage["basis_from_part"], leakage["origin"]) == (
        "generic", True, "team-class")
    v_ih = values["pins.sda.v_ih"]
    assert (v_ih["basis"], v_ih["basis_from_part"]) == ("published", False)
    c_in = values["pins.sda.c_in"]  # its own file's basis
    assert (c_in["basis"], c_in["basis_from_part"]) == ("datasheet", True)
    scl = values["pins.scl.c_in"]  # states nothing: its file's basis and source
    assert (scl["basis"], scl["source"], scl["origin"]) == ("generic", "common practice", "base")
    lib_values = loader.load_library(["team"], env=False).get("team-part").pins["sda"]
    assert lib_values.leakage.rests_on == "generic" and lib_values.leakage.soft
    assert lib_values.v_ih.rests_on == "published" and not lib_values.v_ih.soft
    code, out, _ = run(capsys, "parts", "show", "team-part", "--library", "team")
    rows = {ln.split()[0]: ln for ln in out.splitlines() if ln.startswith("pins.sda.")}
    assert "generic (part)" in rows["pins.sda.leakage"], out
    assert "published" in rows["pins.sda.v_ih"] and "(part)" not in rows["pins.sda.v_ih"], out


def test_record_a_standard_s_limit_with_the_basis_published(lib, capsys):
    _, team = lib
    run(capsys, "parts", "new", "eeprom-b", "--from", "base", "--into", "team")
    code, out, _ = run(capsys, "parts", "record", "eeprom-b", "sda.v_ih", "0.7 VDD",
                       "--basis", "published", "--source",
                       "I2C-bus specification UM10204 rev. 6, table 9, VIH min",
                       "--library", "team")
    assert code == 0 and "(published: I2C-bus specification UM10204" in " ".join(out.split())
    data = tomllib.loads((team / "eeprom-b.toml").read_text(encoding="utf-8"))
    # published: UM10204 rev. 6, table 9, VIH min 0.7·VDD
    assert data["pins"]["sda"]["v_ih"] == {
        "value": "0.7 VDD", "basis": "published",
        "source": "I2C-bus specification UM10204 rev. 6, table 9, VIH min"}
    code, out, _ = run(capsys, "parts", "show", "eeprom-b", "--library", "team", "--json")
    values = {v["field"]: v for v in json.loads(out)["values"]}
    assert (values["pins.sda.v_ih"]["basis"], values["pins.sda.v_ih"]["basis_from_part"]) == (
        "published", False)
    with pytest.raises(SystemExit) as info:
        main(["parts", "record", "eeprom-b", "sda.v_il", "0.3 VDD", "--basis", "rumour",
              "--source", "x", "--library", "team"])
    err = capsys.readouterr().err
    assert info.value.code == 2 and "invalid choice: 'rumour'" in err and "'published'" in err


def test_check_lists_a_published_basis_that_names_no_standard(lib, capsys):
    _, team = lib
    (team / "eeprom.toml").write_text(EEPROM + textwrap.dedent("""\
        v_ih = { value = "0.7 VDD", basis = "published" }
        v_il = { value = "0.3 VDD", basis = "published", source = "UM10204 rev. 6, table 9" }
        """), encoding="utf-8")
    code, out, _ = run(capsys, "parts", "check", "--library", "team", "--json")
    problems = json.loads(out)["problems"]
    assert code == 1
    assert [(p["line"], p["field"]) for p in problems] == [(11, "pins.sda.v_ih")]
    assert "basis 'published' but no source" in problems[0]["message"]


@pytest.mark.parametrize(("field", "value", "what", "line"), [
    ("sda.off_tolerant", "true", M.FIELD_IS_YES_NO, "`off_tolerant = true` under [pins.sda]"),
    ("sda.drive", "push-pull", M.FIELD_IS_SETTING, "`drive = ...` under [pins.sda]"),
    ("category", "memory", M.FIELD_IS_SETTING, "`category = ...` before the file's first"),
])
def test_record_of_a_setting_says_how_to_write_it(lib, capsys, field, value, what, line):
    # 'parts record X sclk.off_tolerant true' read "not a value with a unit (got
    # 'sclk.off_tolerant')": the field echoed as the value, and no way forward. A
    # record is a value with a unit and a source (docs/cli.md); a setting has neither
    _, team = lib
    before = (team / "eeprom.toml").read_text(encoding="utf-8")
    code, _, err = run(capsys, "parts", "record", "eeprom", field, value, "--source", "ds",
                       "--library", "team")
    err = " ".join(err.split())
    assert code == 2
    assert M.FIELD_TAKES_NO_VALUE.format(what=what) in err
    assert f"(got '{value}')" in err and f"(got '{field}')" not in err
    assert "write it in the part file by hand: " + line in err
    assert (team / "eeprom.toml").read_text(encoding="utf-8") == before


def test_record_of_a_list_echoes_no_field_as_its_value(lib, capsys):
    code, _, err = run(capsys, "parts", "record", "eeprom", "timing.spi_modes", "3",
                       "--source", "ds", "--library", "team")
    err = " ".join(err.split())
    assert code == 2 and "a list (edit the file by hand" in err
    assert "(got 'timing.spi_modes')" not in err and "(got '3')" in err


def test_new_where_a_folder_has_the_files_name_says_folder(lib, capsys):
    # a folder named eeprom-q.toml in the --into folder read "the file exists"
    _, team = lib
    (team / "eeprom-q.toml").mkdir()
    code, out, err = run(capsys, "parts", "new", "eeprom-q", "--from", "base", "--into",
                         "team")
    err = " ".join(err.split())
    assert code == 2 and not out
    assert M.PART_FILE_IS_FOLDER in err and "the file exists" not in err
    assert "move that folder away" in err
    assert (team / "eeprom-q.toml").is_dir() and not any((team / "eeprom-q.toml").iterdir())


def test_record_notes_a_copied_title_that_states_another_figure(lib, capsys):
    # a team part made by 'parts new' keeps its class's title, "..., up to 50 MHz": once
    # a lower f_max was recorded it read on, unremarked, in every list and report
    builtin, team = lib
    (builtin / "flash.toml").write_text(FLASH.replace(
        'title = "Serial flash, SPI"', 'title = "Serial flash, SPI, 2.7 to 3.6 V, up to 50 MHz"'),
        encoding="utf-8")  # invented test data: a class's title stating its figures
    assert run(capsys, "parts", "new", "flash-b", "--from", "flash", "--into", "team")[0] == 0
    code, out, err = run(capsys, "parts", "record", "flash-b", "timing.f_max", "20 MHz",
                         "--source", "ds rev A, table 9", "--library", "team")
    err = " ".join(err.split())
    assert code == 0 and "recorded timing.f_max = 20 MHz" in out
    assert M.TITLE_STATES_OLD_FIGURE.format(
        title="Serial flash, SPI, 2.7 to 3.6 V, up to 50 MHz", cls="flash",
        field="timing.f_max", value="20 MHz", file="team/flash-b.toml") in err
    # a value the title states, and a field no title states: no note
    for field, value in (("supply.max", "3.6 V"), ("sclk.c_in", "5 pF")):
        code, _, err = run(capsys, "parts", "record", "flash-b", field, value,
                           "--source", "ds rev A", "--library", "team")
        assert code == 0 and "note: the title" not in err
    code, _, err = run(capsys, "parts", "record", "flash-b", "supply.max", "3.3 V",
                       "--source", "ds rev A", "--library", "team")
    assert "does not state the supply.max now recorded (3.3 V)" in " ".join(err.split())
    # a title of the part's own is its writer's words: no note
    path = team / "flash-b.toml"
    path.write_text(path.read_text(encoding="utf-8").replace(
        'title = "Serial flash, SPI, 2.7 to 3.6 V, up to 50 MHz"',
        'title = "Team flash, up to 50 MHz"'), encoding="utf-8")
    code, _, err = run(capsys, "parts", "record", "flash-b", "timing.f_max", "10 MHz",
                       "--source", "ds rev B", "--library", "team")
    assert code == 0 and "note: the title" not in err
