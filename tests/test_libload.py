"""Loading team part folders: what a broken or odd team file does to every command."""

from __future__ import annotations

import pytest

from pinlib.core.errors import LibraryError, PinlibError
from pinlib.library.loader import load_library
from tests.test_library import builtin, part, write  # noqa: F401 - its fixture


@pytest.fixture
def own(builtin):  # noqa: F811 - the fixture imported above
    """A built-in library of our own (tests/test_library.py's), its folder."""
    return builtin


@pytest.mark.parametrize("extends", ['["base"]', '{ id = "base" }'])
def test_an_extends_that_is_not_an_id_is_its_file_s_error_everywhere(own, tmp_path, extends):
    # invented test input: extends written as an array or a table once raised
    # "unhashable type" from Library.get (pinlib check, parts show)
    team = tmp_path / "team"
    f = write(team, "c.toml", part("c") + f"extends = {extends}\n")
    lib = load_library([team], lazy=True)
    with pytest.raises(LibraryError) as caught:
        lib.get("c", file="d.toml", line=3, field="bus[0].devices[0].part")
    err = caught.value
    assert (err.file, err.line, err.field) == (str(f), 5, "extends")
    assert "extends names a part id" in err.message


_TOO_LONG = "x" * 300  # invented test input: longer than a file system allows a name


def _cli(argv, capsys) -> str:
    from pinlib.cli import main

    assert main(argv) == 2
    return capsys.readouterr().err


@pytest.mark.parametrize("how", ["--library", "PINLIB_LIBRARY", "FOLDER", "design"])
def test_a_folder_name_too_long_is_an_error_naming_its_field(own, tmp_path, monkeypatch,
                                                            capsys, how):
    # each once let "OSError: [Errno 36] File name too long" out as a traceback
    monkeypatch.chdir(tmp_path)
    design = tmp_path / "d.toml"
    write(tmp_path, "d.toml", 'format = "pinlib.design/1"\ntitle = "t"\n'
          + (f'library = ["{_TOO_LONG}"]\n' if how == "design" else ""))
    if how == "PINLIB_LIBRARY":
        monkeypatch.setenv("PINLIB_LIBRARY", _TOO_LONG)
        err = _cli(["parts", "list"], capsys)
    elif how == "FOLDER":
        err = _cli(["parts", "check", _TOO_LONG], capsys)
    elif how == "design":
        err = _cli(["check", str(design)], capsys)
        how = "library[0]"
    else:
        err = _cli(["check", str(design), "--library", _TOO_LONG], capsys)
    assert "Traceback" not in err and "cannot read the folder: File name too long" in err
    assert f"field '{how}'" in err


def test_the_loader_names_a_folder_it_cannot_look_up(own, tmp_path):
    lib = load_library([tmp_path / _TOO_LONG])
    (err,) = lib.problems
    assert err.problem == "cannot read the folder: File name too long"


@pytest.mark.parametrize("argv", [["check", "d.toml", "--library", ""],
                                  ["parts", "list", "--library", ""],
                                  ["new", "n.toml", "--part", "U1=base", "--library", ""]])
def test_an_empty_library_folder_name_is_refused(own, tmp_path, monkeypatch, capsys, argv):
    # invented test input: --library '' read the current folder as a library
    monkeypatch.chdir(tmp_path)
    write(tmp_path, "d.toml", 'format = "pinlib.design/1"\ntitle = "t"\n')
    err = _cli(argv, capsys)
    assert "field '--library': an empty folder name" in err


def test_an_empty_library_line_of_a_design_is_refused(own, tmp_path):
    from pinlib.model.design import load_design

    d = write(tmp_path, "d.toml", 'format = "pinlib.design/1"\ntitle = "t"\nlibrary = [""]\n')
    with pytest.raises(PinlibError) as caught:
        load_design(d)
    assert (caught.value.line, caught.value.field) == (3, "library[0]")
    assert caught.value.problem == "an empty folder name"
    lib = load_library([""])
    assert [p.problem for p in lib.problems] == ["an empty folder name"]


def test_parts_check_notes_names_it_does_not_read_as_part_files(own, tmp_path, capsys):
    # invented test input: UPPER.TOML and a folder dir.toml were passed over silently
    team = tmp_path / "team"
    write(team, "UPPER.TOML", part("upper", "base"))
    (team / "dir.toml").mkdir()
    from pinlib.cli import main

    assert main(["parts", "check", str(team)]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "UPPER.TOML: not read: a part file's name ends in .toml in lower case" in out
    assert "dir.toml: a folder, not a part file" in out


def test_an_edge_time_of_zero_is_refused_at_its_own_line(own, tmp_path):
    # invented test input: "0 ns" passed parts check, and check then blamed a field
    # 'pins.sclk.times' that no file holds, at the pin's line, in raw SI lists
    team = tmp_path / "team"
    f = write(team, "o.toml", part("o", "base", '''
        [pins.clk]
        function = "gpio"
        drive = "push-pull"
        edges = [
          { load = "15 pF", rise = "5 ns", fall = "5 ns" },
          { load = "50 pF", rise = "0 ns", fall = "5 ns" },
        ]
        '''))
    (err,) = load_library([team]).problems
    assert (err.file, err.line, err.field) == (str(f), 12, "pins.clk.edges[1].rise")
    assert err.problem == "an edge time of 0 s or less" and err.expected == "above 0 s"


@pytest.mark.parametrize("low", ["1e-320 V", "1e-30 V", "3.3 mV"])
def test_a_supply_below_the_lowest_rail_is_refused_where_written(own, tmp_path, low):
    # invented test input: a denormal supply min passed parts check, and check then
    # warned of "inf VDD" at VDD "10e-321 V" in the class's file
    team = tmp_path / "team"
    f = write(team, "z.toml", part("z", "base", f'supply = {{ min = "{low}", max = "3.6 V" }}\n'))
    lib = load_library([team])
    (err,) = lib.problems
    assert (err.file, err.line, err.field) == (str(f), 6, "supply.min")
    assert err.problem == "implausibly low for a logic rail" and "0.5 V" in err.expected
    assert "inf" not in err.message and "z" not in lib.parts


@pytest.mark.parametrize("text", ['format = "pinlib.part/1\nid = "base\n',  # not TOML
                                  'format = "pinlib.part/2"\nid = "base"\n',
                                  'format = "pinlib.part/1"\nid = "base"\n'
                                  'title = "t"\ncategory = "sensor"\nsupply = "1 pF"\n'])
def test_a_team_file_named_as_a_built_in_part_that_does_not_load_stands_in_its_place(
        own, tmp_path, text):
    # invented test input: an unterminated string or another format in a team file
    # named as a built-in part left it out, and designs silently used the built-in part
    # (a file that read but did not validate was already refused): both now fail with
    # the team file's own error, and so does a part that extends it
    team = tmp_path / "team"
    f = write(team, "base.toml", text)
    write(team, "child.toml", part("child", "base"))
    lib = load_library([team], lazy=True)
    for pid in ("base", "child"):
        with pytest.raises(LibraryError) as caught:
            lib.get(pid, file="d.toml", line=4, field="bus[0].devices[0].part")
        assert caught.value.file == str(f) and "does not load" in caught.value.problem
    assert lib.overrides == {"base": own / "generic" / "base.toml"}


def test_a_team_override_that_breaks_a_built_in_part_is_named_and_checked(own, tmp_path,
                                                                          capsys):
    # invented test input: a team override of the built-in class "base" with no pins;
    # a built-in part extending it failed at its own file, the team file unnamed, and
    # parts check of the team folder said "no problems"
    from pinlib.library import loader

    write(own / "sensor", "kid.toml", part("kid", "base", '[pins.sda]\nc_in = "6 pF"\n'))
    team = tmp_path / "team"
    over = write(team, "base.toml", 'format = "pinlib.part/1"\nid = "base"\ntitle = "t"\n'
                 'category = "sensor"\nabstract = true\n[pins]\n')
    lib = load_library([team], lazy=True)
    with pytest.raises(LibraryError) as caught:
        lib.get("kid")
    hint = caught.value.hint
    assert caught.value.file == str(own / "sensor" / "kid.toml")
    assert f"'kid' extends 'base', which the team file {over} overrides" in hint
    from pinlib.cli import main

    assert main(["parts", "check", str(team)]) == 1
    out = " ".join(capsys.readouterr().out.split())
    assert "kid.toml:6, field 'pins.sda.function': a required field is missing" in out
    assert "which the team file" in out and "1 problem" in out
    assert loader.BUILTIN_DIR == own


def test_an_override_of_another_category_is_warned_and_named_where_refused(own, tmp_path,
                                                                          capsys):
    # invented test input: a translator file copied with the id of a built-in cable
    # class; parts check said "no problems", and check refused the design's cable
    # without naming the team file
    from pinlib.cli import main
    from pinlib.model.design import load_design

    write(own / "cable", "flat.toml", '''format = "pinlib.part/1"
id = "flat"
title = "Invented flat cable (test data)"
category = "cable"
[line]
capacitance = "50 pF/m"
impedance = "110 Ω"
''')
    team = tmp_path / "team"
    clash = write(team, "xl.toml", part("flat", "base", title="copied translator")
                  .replace('"sensor"', '"translator"'))
    assert main(["parts", "check", str(team)]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "xl.toml:2, field 'id': overrides the built-in part 'flat'" in out
    assert "a cable part, with a translator part" in out
    design = write(tmp_path, "d.toml", '''format = "pinlib.design/1"
title = "t"
[board.geometry.g]
kind = "microstrip"
width = "0.2 mm"
height = "0.18 mm"
er = 4.2
[[bus]]
id = "b"
protocol = "i2c"
supply = "3.3 V"
trace = { length = "5 cm", geometry = "g" }
cables = [{ part = "flat", length = "0.5 m" }]
devices = [{ ref = "U1", part = "dev", role = "controller" }]
''')
    write(team, "dev.toml", part("dev", "base"))
    with pytest.raises(PinlibError) as caught:
        load_design(design, library_folders=[team])
    assert caught.value.field.endswith("cables[0].part")
    assert f"'flat' here is the team part of {clash}" in caught.value.hint


def test_a_workbook_file_name_too_long_is_an_error_not_a_traceback(tmp_path, monkeypatch):
    # the workbooks' find_file asked Path.exists of the name typed: OSError
    pytest.importorskip("ipywidgets")
    from pinlib.present.widgets.common import find_file

    monkeypatch.chdir(tmp_path)
    with pytest.raises(PinlibError) as caught:
        find_file(_TOO_LONG + ".toml")
    assert caught.value.problem == "cannot use this name: File name too long"
