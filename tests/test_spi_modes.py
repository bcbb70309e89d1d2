"""The SPI modes a part states (``timing.spi_modes``) and the ``spi-mode`` check.

The four modes are CPOL·2 + CPHA (from memory: the usual numbering of SPI clock modes,
mode 0 = CPOL 0 / CPHA 0 ... mode 3 = CPOL 1 / CPHA 1).  The parts are invented test
classes extending the test parts in tests/data/pushpull.
"""

from __future__ import annotations

import json

import pytest

from pinlib.core.errors import InputError
from pinlib.engines import ppcorners, ppworst
from pinlib.engines.memo import run_scope
from pinlib.engines.pushpull import evaluate_board, evaluate_bus
from pinlib.library.jsonschema import part_json_schema
from pinlib.library.loader import load_library
from tests.test_spi import DATA, write_design

PART = """format = "pinlib.part/1"
id = "{id}"
title = "test part (invented)"
category = "memory"
extends = "{base}"
provenance = {{ basis = "datasheet", source = "{source}" }}
{timing}
"""


def _lib(tmp_path, **parts):
    """Write test parts: id -> (base, source, spi_modes text or None)."""
    lib = tmp_path / "lib"
    lib.mkdir(exist_ok=True)
    for pid, (base, source, modes) in parts.items():
        timing = "" if modes is None else f"[timing]\nspi_modes = {modes}\n"
        (lib / f"{pid}.toml").write_text(PART.format(id=pid, base=base, source=source,
                                                     timing=timing), encoding="utf-8")
    return lib


def _modes(res):
    return {c.subject: c for c in res.checks if c.id == "spi-mode"}


@pytest.fixture
def parts(tmp_path):
    return _lib(tmp_path,
                **{"ctl-all": ("pp-ctrl", "invented ctl sheet", "[0, 1, 2, 3]"),
                   "per-03": ("pp-periph", "invented sheet A, table 3", "[3, 0]"),
                   "per-12": ("pp-periph", "invented sheet B", "[1, 2]"),
                   # restates nothing: its modes are its class's, cited from that file
                   "per-03-child": ("per-03", "invented sheet C", None)})


def test_a_mode_the_parts_state_passes_and_cites_each_file(tmp_path, parts):
    d, bus = write_design(tmp_path, mode=3, controller="ctl-all",
                          peripherals=("per-03", "per-03-child"), extra_library=parts)
    res = evaluate_bus(bus, d)
    got = _modes(res)
    assert set(got) == {"U1", "U2", "U3"}
    assert all(c.status == "pass" and c.value is True for c in got.values())
    assert got["U2"].source == "per-03 spi_modes: invented sheet A, table 3"
    # the child restates nothing: the list and its source are its class's
    assert got["U3"].source == "per-03 spi_modes: invented sheet A, table 3"
    assert got["U2"].details == {"mode": 3, "modes": [0, 3]}
    assert "SPI mode 3 is one of U2's modes (0 and 3)" == got["U2"].message


def test_a_mode_a_part_does_not_state_fails_and_says_which_would_do(tmp_path, parts):
    d, bus = write_design(tmp_path, mode=1, controller="ctl-all",
                          peripherals=("per-03",), extra_library=parts)
    res = evaluate_bus(bus, d)
    got = _modes(res)
    assert got["U1"].status == "pass"
    assert got["U2"].status == "fail"   # against the datasheet's own list
    assert res.status == "fail"
    assert got["U2"].message == "SPI mode 1 is not one of U2's modes (0 and 3)"
    assert got["U2"].advice == ("set spi_mode to 0 or 3, a mode every part on the bus "
                                "states")
    j = res.to_json()["checks"]
    assert {"id": "spi-mode", "status": "fail", "value": False} .items() <= next(
        c for c in j if c["id"] == "spi-mode" and c["subject"] == "U2").items()


def test_parts_that_share_no_mode_are_told_so(tmp_path, parts):
    d, bus = write_design(tmp_path, mode=0, controller="ctl-all",
                          peripherals=("per-03", "per-12"), extra_library=parts)
    got = _modes(evaluate_bus(bus, d))
    assert got["U3"].status == "fail" and got["U2"].status == "pass"
    assert got["U3"].advice.startswith(
        "no mode suits every part (U1 0, 1, 2 and 3; U2 0 and 3; U3 1 and 2)")


def test_a_part_with_spi_timing_but_no_modes_is_named_in_a_note(tmp_path, parts):
    # pp-ctrl and pp-periph state SPI timing and no modes
    d, bus = write_design(tmp_path, mode=2, extra_library=parts)
    res = evaluate_bus(bus, d)
    assert not _modes(res)
    assert ("SPI mode 2 not checked against U1 and U2: no SPI modes stated "
            "(timing.spi_modes)") in res.notes


def test_corners_keep_the_mode_checks_as_the_engine_does(tmp_path, parts):
    from dataclasses import replace

    d, bus = write_design(tmp_path, mode=1, controller="ctl-all",
                          peripherals=("per-03", "per-12"), extra_library=parts)
    v = replace(bus, supply_tolerance=0.05, length_tolerance=0.1)
    with run_scope():
        nominal = evaluate_board(v, d)
        rows = ppcorners.corner_rows(v, d, nominal)
        assert rows is not None   # the array path serves the bus with its mode checks
        fast = ppworst.at_worst_corners(v, d, nominal, evaluate_board, rows).to_json()
    with run_scope():
        nominal = evaluate_board(v, d)
        slow = ppworst.at_worst_corners(v, d, nominal, evaluate_board).to_json()
    assert fast == slow   # derived from the engine itself, board by board
    assert [c["status"] for c in fast["checks"] if c["id"] == "spi-mode"] == [
        "pass", "fail", "pass"]


@pytest.mark.parametrize(("text", "words"), [
    ("[0, 4]", "whole number from 0 to 3"),
    ("[]", "each once"),
    ("[0, 0]", "each once"),
    ('["0"]', "whole number from 0 to 3"),
    ("[true]", "whole number from 0 to 3"),
    ("3", "each once"),
    ("[0.0]", "whole number from 0 to 3"),
])
def test_a_bad_list_is_refused_with_file_line_and_field(tmp_path, text, words):
    lib = _lib(tmp_path, bad=("pp-periph", "x", text))
    with pytest.raises(InputError) as err:
        load_library([lib, DATA], env=False).get("bad")
    msg = str(err.value)
    assert "bad.toml:8" in msg and "timing.spi_modes" in msg and words in msg


def test_the_json_schema_says_what_a_file_writes():
    prop = part_json_schema()["$defs"]["Timing"]["properties"]["spi_modes"]
    array, table = prop["anyOf"]
    assert array["type"] == "array" and array["uniqueItems"] is True
    assert array["items"] == {"type": "integer", "minimum": 0, "maximum": 3}
    assert table["properties"]["value"]["type"] == "array"
    assert table["required"] == ["value"] and table["additionalProperties"] is False
    json.dumps(prop)


def test_a_list_with_its_own_source_cites_it(tmp_path):
    # the table form: its own source wins over the file's provenance (invented values)
    lib = tmp_path / "lib"
    lib.mkdir()
    (lib / "own.toml").write_text(PART.format(
        id="own", base="pp-periph", source="file-wide sheet",
        timing='[timing]\nspi_modes = { value = [3, 0], source = "sheet D, §6.2" }\n'),
        encoding="utf-8")
    modes = load_library([lib, DATA], env=False).get("own").timing.spi_modes
    assert tuple(modes) == (0, 3)
    # its basis is the file's (datasheet), as a Sourced value's that states none
    assert (modes.source, modes.basis) == ("sheet D, §6.2", "datasheet")
    assert modes.cited("spi_modes") == "own spi_modes: sheet D, §6.2"
    (lib / "own.toml").write_text(PART.format(
        id="own", base="pp-periph", source="x",
        timing='[timing]\nspi_modes = { value = [0], typ = [0] }\n'), encoding="utf-8")
    with pytest.raises(InputError, match="typ"):
        load_library([lib, DATA], env=False).get("own")


def test_parts_record_says_how_to_write_the_list(tmp_path, parts, capsys):
    from pinlib.cli import main

    code = main(["parts", "record", "per-03", "timing.spi_modes", "0, 3", "--source", "x",
                 "--library", str(DATA), "--library", str(parts)])
    err = " ".join(capsys.readouterr().err.split())
    assert code == 2 and "spi_modes = { value = [...], source = \"...\" }" in err


def test_built_in_classes_state_modes_typical_of_their_kind():
    lib = load_library(env=False)
    # common practice, no source: serial flash samples on the rising edge, modes 0 and 3
    assert tuple(lib.get("nor-flash-spi").timing.spi_modes) == (0, 3)
    # common practice, no source: a controller sets CPOL and CPHA in a register
    assert tuple(lib.get("mcu-3v3").timing.spi_modes) == (0, 1, 2, 3)
    assert lib.get("mcu-3v3").timing.spi_modes.cited("spi_modes") == (
        "mcu-3v3 spi_modes: typical of the class (common practice)")


def _new(tmp_path, *parts, library=None):
    from pinlib.cli import main

    path = tmp_path / "board.toml"
    argv = ["new", str(path)] + [w for p in parts for w in ("--part", p)]
    argv += ["--library", str(DATA), "--library", str(library)] if library else []
    assert main(argv) == 0
    return path


def test_new_writes_a_mode_every_part_states(tmp_path, parts):
    from pinlib.model.design import load_design

    path = _new(tmp_path, "U1=ctl-all", "U2=per-12", library=parts)
    line = next(ln for ln in path.read_text(encoding="utf-8").splitlines()
                if ln.startswith("spi_mode"))
    assert line.split("#")[0].strip() == "spi_mode = 1"   # the lowest of 1 and 2
    assert line.split("#")[1].strip() == "the parts' SPI modes allow 1 or 2"
    bus = load_design(path).bus("spi")
    assert all(c.status == "pass" for c in _modes(evaluate_bus(bus, load_design(path))).values())


def test_new_says_when_the_parts_share_no_mode(tmp_path, parts):
    path = _new(tmp_path, "U1=ctl-all", "U2=per-03", "U3=per-12", library=parts)
    assert "the parts share no SPI mode: see pinlib check" in path.read_text(encoding="utf-8")


def test_show_swap_and_snapshot_carry_the_list_whole(tmp_path, parts, capsys, monkeypatch):
    import shutil

    from pinlib.cli import main

    monkeypatch.setenv("COLUMNS", "80")
    lib = ["--library", str(DATA), "--library", str(parts)]
    assert main(["parts", "show", "per-03-child", "--json", *lib]) == 0
    shown = json.loads(capsys.readouterr().out)
    assert {"field": "timing.spi_modes", "value": [0, 3]} in shown["attributes"]
    d, _ = write_design(tmp_path, mode=0, controller="ctl-all", peripherals=("per-03",),
                        extra_library=parts)
    path = tmp_path / "d.toml"
    assert main(["check", str(path), "--save"]) == 0
    capsys.readouterr()
    # a part of other modes in its place: the check and the list that moved it
    assert main(["swap", str(path), "U2=per-12", *lib]) == 1
    out = capsys.readouterr().out
    assert "SPI mode U2: pass → fail" in out
    assert "U2 spi_modes [0, 3] → [1, 2], source: invented sheet B [datasheet]" in out
    shutil.copy(path, tmp_path / "e.toml")
    # the saved snapshot holds the list and reads back (it was refused as damaged)
    assert "spi_modes" in (tmp_path / "d.result.json").read_text(encoding="utf-8")
    assert main(["check", str(path), str(tmp_path / "e.toml"), "--against-snapshots"]) in (0, 1)
    got = capsys.readouterr()
    assert "damaged" not in got.out + got.err and "Traceback" not in got.err
    assert "no part value differs" in " ".join(got.out.split())
