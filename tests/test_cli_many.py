"""The commands for a team's many designs: ``pinlib new``, ``pinlib schema``, ``pinlib
check`` over many designs, ``pinlib parts used-by``."""

from __future__ import annotations

import json
import re
from pathlib import Path

import pytest

from pinlib.cli import main
from pinlib.core.errors import DesignError
from pinlib.core.tomlfile import tomllib
from pinlib.engines.dispatch import check_design
from pinlib.model.design import load_design

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "workbooks" / "designs" / "demo-board.toml"
DESIGNS = sorted([DEMO, *(ROOT / "tests" / "data").glob("*.toml"),
                  *(ROOT / "tests" / "golden" / "designs").glob("*.toml")])


@pytest.fixture(autouse=True)
def _no_env_library(monkeypatch):
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)


# ---------------------------------------------------------------- pinlib new
def test_new_writes_a_design_that_loads_and_checks(tmp_path, capsys):
    path = tmp_path / "board.toml"
    code = main(["new", str(path), "--part", "U1=mcu-3v3", "--part", "U2=eeprom-i2c",
                 "--part", "U3=nor-flash-spi", "--title", "Starter"])
    assert code == 0, capsys.readouterr().err
    text = path.read_text(encoding="utf-8")
    assert text.startswith("# A starter design")  # comments for the reader
    design = load_design(path)
    assert design.title == "Starter"
    # one bus per protocol the parts offer: I2C (mcu, eeprom), SPI (mcu, flash)
    assert [(b.id, b.protocol) for b in design.buses] == [("i2c", "i2c"), ("spi", "spi")]
    i2c, spi = design.buses
    assert sorted(d.ref for d in i2c.devices) == ["U1", "U2"]
    assert [d.ref for d in spi.devices if d.is_controller] == ["U1"]
    result = check_design(design)
    assert result.status in ("pass", "warn", "fail")
    assert main(["check", str(path)]) in (0, 1)


def test_a_new_design_fits_80_columns_with_its_notes_in_one_column(tmp_path, capsys):
    # the SPI lines' "# placeholder" notes ran to 115 columns, and the protocol's note
    # stood at another column than the others; GPIO and "on no bus" lists were one line
    parts = ["U1=mcu-3v3", "U2=eeprom-i2c", "U3=nor-flash-spi", "U4=adc-spi",
             "U5=dac-spi"] + [f"U{i}=rtc-i2c" for i in range(6, 30)]
    path = tmp_path / "board.toml"
    argv = ["new", str(path)] + [w for p in parts for w in ("--part", p)]
    assert main(argv) == 0, capsys.readouterr().err
    lines = path.read_text(encoding="utf-8").splitlines()
    assert all(len(ln) <= 80 for ln in lines), [ln for ln in lines if len(ln) > 80]
    beside = {ln.index(" # ") + 1 for ln in lines if " # " in ln and not ln.startswith("#")}
    assert beside == {33}
    assert load_design(path).buses  # and it still loads


def test_new_without_a_controller_says_who_stands_in_and_picks_a_common_rail(tmp_path, capsys):
    # invented scenario: an RTC and an EEPROM, the microcontroller forgotten.  The RTC
    # was made the controller without a word, on a rail of 3.55 V (the middle of its
    # 1.6 V to 5.5 V range), a rail no board has
    path = tmp_path / "board.toml"
    assert main(["new", str(path), "--part", "U2=rtc-i2c", "--part", "U3=eeprom-i2c"]) == 0
    err = " ".join(capsys.readouterr().err.split())
    assert "note: no part given drives SCL: U2 stands in as the controller" in err, err
    assert "'pinlib check' refuses the bus" in err, err
    text = path.read_text(encoding="utf-8")
    assert "U2 stands in as the controller" in text
    assert all(len(line) <= 80 for line in text.splitlines())
    # the stand-in cannot clock the bus (its SCL pin is an input): the loader refuses it
    # at its role, as the note says, until the part that drives SCL is added
    with pytest.raises(DesignError) as info:
        load_design(path)
    assert info.value.field == "bus[0].devices[0].role"
    assert "a controller must pull SCL low" in info.value.message
    # common practice, no source: 3.3 V, the first of the common rails within both ranges
    assert 'supply = "3.3 V"' in text
    assert 'supply = "3.55 V"' not in text
    # with the controller added to the file, it loads
    added = text.replace('  { ref = "U3", part = "eeprom-i2c" },',
                         '  { ref = "U3", part = "eeprom-i2c" },\n'
                         '  { ref = "U1", part = "mcu-3v3", role = "controller" },'
                         ).replace('part = "rtc-i2c", role = "controller"', 'part = "rtc-i2c"')
    path.write_text(added, encoding="utf-8")
    (bus,) = load_design(path).buses
    assert [d.ref for d in bus.controllers] == ["U1"]
    # with the controller placed, no note
    path2 = tmp_path / "two.toml"
    assert main(["new", str(path2), "--part", "U1=mcu-3v3", "--part", "U3=eeprom-i2c"]) == 0
    assert "note:" not in capsys.readouterr().err
    assert "stands in" not in path2.read_text(encoding="utf-8")


def test_new_names_each_part_whose_supply_range_excludes_its_bus_rail(tmp_path, capsys):
    # an audit's first board: a 1.8 V microcontroller with a 3.3 V FPGA, flash and ADC
    # went on one SPI bus at 1.8 V with no word but "check it"; 'pinlib check' then
    # failed "Supply range U10".  Each such part is named with its range, in the file
    # under the rail and in a note, on each bus it is on
    path = tmp_path / "board.toml"
    parts = ["U1=mcu-1v8", "U2=eeprom-i2c", "U3=rtc-i2c", "U4=temp-humidity-sensor",
             "U10=fpga-io-3v3", "U11=nor-flash-spi", "U12=adc-spi"]
    assert main(["new", str(path)] + [w for p in parts for w in ("--part", p)]) == 0
    err = " ".join(capsys.readouterr().err.split())
    text = path.read_text(encoding="utf-8")
    flat = " ".join(" ".join(ln.removeprefix("#") for ln in text.splitlines()).split())
    # invented test data: the ranges are the built-in parts' own (3.135 V to 3.465 V,
    # 2.7 V to 3.6 V, 2.7 V to 5.5 V), none of which holds 1.8 V ± 5 %
    fpga, flash, adc = ("U10 (3.135 V to 3.465 V)", "U11 (2.7 V to 3.6 V)",
                        "U12 (2.7 V to 5.5 V)")
    assert (f"note: bus i2c: its rail, 1.8 V ± 5 %, is outside the supply range of "
            f"{fpga}, which 'pinlib check' flags") in err, err
    assert (f"note: bus spi: its rail, 1.8 V ± 5 %, is outside the supply range of "
            f"{fpga}, {flash} and {adc}, which 'pinlib check' flags") in err, err
    assert "U2 (" not in err and "U4 (" not in err  # the parts that run from 1.8 V
    assert flat.count("This rail, 1.8 V ± 5 %, is outside the supply range of") == 2
    assert f"{fpga}, {flash} and {adc}" in flat
    assert all(len(line) <= 80 for line in text.splitlines())
    # the parts named are exactly those 'pinlib check' flags at their supply range (the
    # built-in classes' ranges are typical of the class: each warns, model.result.
    # soft_limit)
    main(["check", str(path), "--json"])
    got = json.loads(capsys.readouterr().out)
    failed = {(b["id"], c["subject"]) for b in got["buses"] for c in b["checks"]
              if c["id"] == "supply-range" and c["status"] != "pass"}
    assert failed == {("i2c", "U10"), ("spi", "U10"), ("spi", "U11"), ("spi", "U12")}
    # parts that all run from the rail: no such note
    path2 = tmp_path / "two.toml"
    assert main(["new", str(path2), "--part", "U1=mcu-3v3", "--part", "U2=nor-flash-spi"]) == 0
    assert "supply range" not in capsys.readouterr().err
    assert "supply range" not in path2.read_text(encoding="utf-8")


def test_new_given_a_folder_says_it_is_one(tmp_path, capsys):
    # "pinlib new boards/" said "the file exists", as if a design were there
    assert main(["new", str(tmp_path), "--part", "U1=mcu-3v3", "--part", "U2=eeprom-i2c"]) == 2
    err = capsys.readouterr().err
    assert "not a regular file" in err and "file exists" not in err
    assert str(tmp_path / "board.toml") in err


def test_new_refuses_to_overwrite(tmp_path, capsys):
    path = tmp_path / "board.toml"
    path.write_text("# mine\n", encoding="utf-8")
    code = main(["new", str(path), "--part", "U1=mcu-3v3", "--part", "U2=eeprom-i2c"])
    assert code == 2
    assert "does not overwrite" in capsys.readouterr().err
    assert path.read_text(encoding="utf-8") == "# mine\n"


def test_new_names_the_parts_that_share_no_protocol(tmp_path, capsys):
    path = tmp_path / "board.toml"
    code = main(["new", str(path), "--part", "U1=eeprom-i2c", "--part", "U2=nor-flash-spi"])
    assert code == 2 and not path.exists()
    assert "no two of these parts share a protocol" in capsys.readouterr().err


def test_new_lists_gpio_pins_and_parts_on_no_bus(tmp_path):
    path = tmp_path / "board.toml"
    assert main(["new", str(path), "--part", "U1=mcu-3v3", "--part", "U2=adc-i2c",
                 "--part", "U3=nor-flash-spi"]) == 0
    text = path.read_text(encoding="utf-8")
    assert "U2.rdy" in text  # the ADC's ready pin, a GPIO
    assert "On no bus" not in text
    design = load_design(path)
    assert [b.protocol for b in design.buses] == ["i2c", "spi"]


def test_new_wires_a_gpio_line_between_an_output_and_an_input_of_one_name(tmp_path, capsys):
    # a supervisor's open-drain reset and a microcontroller's reset input (built-in
    # classes) share no bus protocol; the starter wires the line their pins name, with a
    # placeholder pull-up for the open-drain output, and lists the other GPIO pins
    path = tmp_path / "board.toml"
    assert main(["new", str(path), "--part", "U1=mcu-3v3", "--part", "U2=supervisor-od"]) == 0
    text = path.read_text(encoding="utf-8")
    assert "(1 bus)" in capsys.readouterr().err
    assert all(len(line) <= 80 for line in text.splitlines())
    design = load_design(path)
    (bus,) = design.buses
    assert bus.protocol == "gpio" and bus.id == "reset" and list(bus.lines) == ["reset"]
    assert bus.lines["reset"].pullup == 10e3
    assert [(d.ref, d.role, d.pin) for d in bus.devices] == [
        ("U2", "controller", "reset"), ("U1", "peripheral", "reset")]
    assert "U1.gpio_out" in text and "U2.mr" in text and "U1.reset," not in text
    result = check_design(design)
    assert result.status == "pass"
    # two outputs of one name and no input (two microcontrollers' gpio_out) make no line
    path2 = tmp_path / "two.toml"
    assert main(["new", str(path2), "--part", "U1=mcu-3v3", "--part", "U2=mcu-3v3"]) == 0
    assert [b.protocol for b in load_design(path2).buses] == ["i2c", "spi"]


@pytest.mark.parametrize("bridge", ["level-translator-mosfet", "i2c-repeater"])
def test_new_puts_parts_on_another_rail_across_a_bridge(tmp_path, capsys, bridge):
    # a 1.8 V sensor with a 3.3 V controller and a bridging part: two segments, the
    # bridge in both (its lower-supply side a facing the 1.8 V rail), each part on the
    # rail it runs from, so the starter checks without a supply-range failure
    path = tmp_path / "board.toml"
    assert main(["new", str(path), "--part", "U1=mcu-3v3", "--part", f"Q1={bridge}",
                 "--part", "U3=temp-humidity-sensor", "--part", "U4=eeprom-i2c"]) == 0
    assert "On no bus" not in path.read_text(encoding="utf-8")
    bus = load_design(path).bus("i2c")
    segs = {s.id: s for s in bus.segments}
    assert list(segs) == ["near-3v3", "far-1v8"]
    assert sorted(d.ref for d in segs["near-3v3"].devices) == ["Q1", "U1", "U4"]
    assert sorted(d.ref for d in segs["far-1v8"].devices) == ["Q1", "U3"]
    assert {d.side for d in segs["far-1v8"].devices if d.ref == "Q1"} == {"a"}
    assert float(segs["far-1v8"].supply) == pytest.approx(1.8, rel=1e-12)
    assert main(["check", str(path), "--json"]) in (0, 1)
    got = json.loads(capsys.readouterr().out)
    ranges = [c for b in got["buses"] for s in b["segments"] for c in s["checks"]
              if c["id"] == "supply-range"]
    assert ranges and all(c["status"] != "fail" for c in ranges)


# ---------------------------------------------------------------- schema
def _validator(kind: str):
    import jsonschema

    from pinlib.cli.commands.schema import schema_text

    schema = json.loads(schema_text(kind))
    jsonschema.Draft202012Validator.check_schema(schema)
    return jsonschema.Draft202012Validator(schema)


def test_the_shipped_design_schema_is_the_generated_one():
    from pinlib.model.designschema import SHIPPED, schema_text

    assert SHIPPED.read_text(encoding="utf-8") == schema_text(), \
        "rebuild it: python -m pinlib.model.designschema"


@pytest.mark.parametrize("path", DESIGNS, ids=lambda p: p.name)
def test_every_shipped_and_test_design_is_valid_under_the_schema(path):
    data = tomllib.loads(path.read_text(encoding="utf-8"))
    errors = [f"{list(e.path)}: {e.message}" for e in _validator("design").iter_errors(data)]
    assert not errors, errors


@pytest.mark.parametrize(("change", "where"), [
    ({"title": 3}, ["title"]),                                   # a number for a title
    ({"bus": [{"id": "b", "protocol": "can"}]}, ["bus", 0, "protocol"]),
    ({"bus": [{"id": "b", "protocol": "i2c", "supply": 3.3}]}, ["bus", 0, "supply"]),
    ({"bus": [{"id": "b", "protocol": "i2c", "supply": "3.3 volts!"}]}, ["bus", 0, "supply"]),
    ({"bus": [{"id": "b", "protocol": "i2c", "pullup": "sometimes"}]}, ["bus", 0, "pullup"]),
    ({"colour": "red"}, []),                                    # an unknown key
    # keys a bus's protocol does not read (invented test designs)
    ({"bus": [{"id": "b", "protocol": "spi", "extra_capacitance": "1 µF"}]},
     ["bus", 0, "extra_capacitance"]),
    ({"bus": [{"id": "b", "protocol": "gpio", "trace": {"length": "5 cm"}}]},
     ["bus", 0, "trace"]),
    ({"bus": [{"id": "b", "protocol": "i2c", "trace": {"length": "5 cm",
                                                        "series_resistor": "10 Ω"}}]},
     ["bus", 0, "trace", "series_resistor"]),
    ({"bus": [{"id": "b", "protocol": "i2c", "segment": [
        {"trace": {"length": "5 cm", "extra_capacitance": "10 pF"}}]}]},
     ["bus", 0, "segment", 0, "trace", "extra_capacitance"]),
    ({"bus": [{"id": "b", "protocol": "smbus", "spi_mode": 1}]}, ["bus", 0, "spi_mode"]),
    ({"bus": [{"id": "b", "protocol": "spi", "devices": [
        {"ref": "U1", "part": "p", "switched": True}]}]}, ["bus", 0, "devices", 0, "switched"]),
    ({"board": {"geometry": {"g": {"kind": "microstrip", "width": "0.1 mm", "er": 4.3,
                                   "method": "ipc2141"}}}},
     ["board", "geometry", "g", "method"]),
    ({"board": {"geometry": {"g": {"kind": "stripline", "width": "0.1 mm", "er": 4.3,
                                   "method": "hammerstad-jensen"}}}},
     ["board", "geometry", "g", "method"]),
])
def test_the_design_schema_refuses_what_the_loader_refuses(change, where):
    data = {"format": "pinlib.design/1", "title": "t", **change}
    errors = list(_validator("design").iter_errors(data))
    assert errors
    assert where in [list(e.absolute_path) for e in errors]


def test_the_design_schema_takes_each_key_where_its_protocol_reads_it():
    # invented test designs: the conditions by protocol refuse nothing the loader takes
    data = {"format": "pinlib.design/1", "title": "t", "board": {"geometry": {"g": {
        "kind": "stripline", "width": "0.1 mm", "spacing": "0.5 mm", "er": 4.3,
        "method": "cohn"}}}, "bus": [
        {"id": "a", "protocol": "i2c", "extra_capacitance": "10 pF",
         "trace": {"length": "5 cm", "geometry": "g"},
         "devices": [{"ref": "U1", "part": "p", "series_resistor": "100 Ω",
                      "switched": True}]},
        {"id": "b", "protocol": "spi", "spi_mode": 3, "clock": "1 MHz",
         "lines": {"sclk": {"length": "5 cm", "geometry": "g", "series_resistor": "auto",
                            "extra_capacitance": "4 pF", "pullup": "10 kΩ"}}}]}
    errors = [f"{list(e.path)}: {e.message}" for e in _validator("design").iter_errors(data)]
    assert not errors, errors


def test_the_design_schema_describes_a_route_and_bounds_it_as_the_loader_does():
    # a route had no description and no size limit in the schema: an editor let a file
    # of 100 stretches through that the loader refuses (pinlib.core.worklimits)
    from pinlib.core.worklimits import MAX_ROUTE_STRETCHES
    from pinlib.model.designschema import design_json_schema

    defs = design_json_schema()["$defs"]
    route = defs["RawTrace"]["properties"]["route"]
    assert route["maxItems"] == MAX_ROUTE_STRETCHES
    assert route["minItems"] == 1  # an empty route is refused (ROUTE_EMPTY)
    assert "stretches between named points" in route["description"]
    assert f"1 to {MAX_ROUTE_STRETCHES} stretches" in route["description"]
    item = defs[route["items"]["$ref"].rsplit("/", 1)[1]]
    assert item["description"].startswith("One stretch of a routed line between two points")
    for end in ("from", "to"):
        assert "junction" in item["properties"][end]["description"]
    # the schema refuses what the loader refuses, and takes the largest route it takes
    one = {"from": "U1", "to": "U2", "length": "1 cm", "geometry": "g"}
    for n, refused in ((MAX_ROUTE_STRETCHES, False), (MAX_ROUTE_STRETCHES + 1, True),
                       (0, True)):
        data = {"format": "pinlib.design/1", "title": "t",
                "bus": [{"id": "b", "protocol": "spi", "lines": {"sclk": {"route": [one] * n}}}]}
        where = [list(e.absolute_path) for e in _validator("design").iter_errors(data)]
        assert (["bus", 0, "lines", "sclk", "route"] in where) == refused, n


def test_schema_command_prints_and_writes(tmp_path, capsys):
    assert main(["schema", "design"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["properties"]["format"]["const"] == "pinlib.design/1"
    target = tmp_path / "part.schema.json"
    assert main(["schema", "part", "--output", str(target)]) == 0
    assert json.loads(target.read_text(encoding="utf-8"))["title"].startswith("pinlib part")
    assert main(["schema", "board"]) == 2
    assert "no schema of this kind" in capsys.readouterr().err


# ---------------------------------------------------------------- check over many designs
def _board(tmp_path, name, replace=None):
    text = DEMO.read_text(encoding="utf-8")
    if replace:
        text = text.replace(*replace)
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def test_one_design_keeps_the_full_report(tmp_path, capsys):
    path = _board(tmp_path, "a.toml")
    code_one = main(["check", str(path)])
    one = capsys.readouterr().out
    assert code_one in (0, 1)
    assert "sensors (I2C)" in one  # the design's own report (a line per bus), not a summary line


def test_many_designs_one_line_each_and_the_worst_exit_code(tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    _board(tmp_path, "a.toml")
    # a failing variant: a 1 MΩ pull-up cannot meet the Fast-mode rise time
    _board(tmp_path, "b.toml", ('pullup = "4.7 kΩ"', 'pullup = "1 MΩ"'))
    (tmp_path / "c.toml").write_text('format = "pinlib.design/1"\ntitle = 3\n',
                                     encoding="utf-8")
    code = main(["check", "[ab].toml", "--jobs", "2"])
    out = capsys.readouterr().out.splitlines()
    assert code == 1  # the worst of warn and fail
    assert out[0].startswith("WARN  a.toml") and out[1].startswith("FAIL  b.toml")
    assert out[-1].startswith("2 designs: 0 pass, 1 warn, 1 fail, 0 not checked")
    code = main(["check", "*.toml", "--jobs", "1", "--json"])
    captured = capsys.readouterr()
    rows = json.loads(captured.out)
    assert code == 2  # c.toml could not be loaded; the others are still reported
    assert [r["path"] for r in rows] == ["a.toml", "b.toml", "c.toml"]
    assert [r["status"] for r in rows] == ["warn", "fail", "error"]
    assert "c.toml:2, field 'title'" in rows[2]["error"]
    assert "c.toml: not checked" in captured.err
    # beside the design's name the location is a line of it, the file not named twice
    main(["check", "*.toml", "--jobs", "1"])
    captured = capsys.readouterr()
    line = captured.out.splitlines()[2]
    assert line.startswith("ERROR c.toml  not checked: line 2, field 'title'")
    assert "c.toml:2" not in line
    assert "pinlib: error: c.toml: not checked: line 2, field 'title'" in captured.err


def test_an_error_in_another_file_keeps_its_file(tmp_path):
    from pinlib.core.errors import InputError

    design = tmp_path / "board.toml"
    here = InputError("a required field is missing", file=str(design), line=3, field="bus")
    assert here.message_in(design) == "line 3, field 'bus': a required field is missing"
    assert here.message_in(str(design)) == here.message_in(design)
    lib = InputError("bad value", file=str(tmp_path / "part.toml"), line=7, field="c_in",
                     expected="a capacitance")
    assert lib.message_in(design) == lib.message  # a library file stays named
    assert lib.message.startswith(str(tmp_path / "part.toml") + ":7")
    no_line = InputError("cannot be read", file=str(design))
    assert no_line.message_in(design) == "cannot be read"
    line_only = InputError("not TOML", file=str(design), line=4)
    assert line_only.message_in(design) == "line 4: not TOML"


def test_parallel_and_serial_runs_agree(tmp_path):
    from pinlib.studies.many import check_many, default_jobs

    paths = [_board(tmp_path, f"{i}.toml") for i in range(3)]
    serial = check_many(paths, jobs=1)
    parallel = check_many(paths, jobs=2)
    assert [s.result for s in serial] == [p.result for p in parallel]
    assert default_jobs(1) == 1


def _slow_check(path, *args):
    """A stand-in for ``many.check_one`` in the workers: marks the design as checked."""
    import time

    from pinlib.studies.many import DesignSummary

    time.sleep(0.2)
    Path(str(path) + ".checked").write_text("", encoding="utf-8")
    return DesignSummary(str(path))


def test_ctrl_c_drops_the_designs_not_started(tmp_path, monkeypatch):
    """Ctrl-C while many designs are checked in workers: the designs still waiting are
    not checked (nor saved) after the command has stopped; only those a worker had
    already taken finish."""
    import multiprocessing
    import time

    from pinlib.studies import many

    monkeypatch.setattr(many, "check_one", _slow_check)  # the forked workers see it too
    paths = [tmp_path / f"{i}.toml" for i in range(24)]

    def ctrl_c(done, total):
        raise KeyboardInterrupt

    with pytest.raises(KeyboardInterrupt):
        many.check_many(paths, jobs=2, progress=ctrl_c)
    # the command's frame is gone once it has printed its line; wait for the workers
    end = time.monotonic() + 30
    while multiprocessing.active_children() and time.monotonic() < end:
        time.sleep(0.05)
    checked = len(list(tmp_path.glob("*.checked")))
    # the first two done, two running and three queued for them when it came (the
    # pool's call queue holds workers + 1), and a spare for timing; before: all 24
    assert checked <= 8, f"{checked} of {len(paths)} designs checked after Ctrl-C"


def test_progress_counts_designs(tmp_path):
    from pinlib.studies.many import check_many

    paths = [_board(tmp_path, f"{i}.toml") for i in range(2)]
    seen = []
    check_many(paths, jobs=1, progress=lambda done, total: seen.append((done, total)))
    assert seen == [(1, 2), (2, 2)]


def test_against_snapshots_lists_what_moved_per_design(tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    a = _board(tmp_path, "a.toml")
    _board(tmp_path, "b.toml")
    assert main(["check", str(a), "--save"]) in (0, 1)
    capsys.readouterr()
    # the saved design's pull-up changes after its snapshot
    a.write_text(a.read_text(encoding="utf-8").replace('pullup = "4.7 kΩ"', 'pullup = "3.3 kΩ"'),
                 encoding="utf-8")
    main(["check", "a.toml", "b.toml", "--against-snapshots", "--jobs", "1"])
    out = capsys.readouterr().out
    assert "no snapshot to compare with" in out  # b.toml
    moved = out.split("b.toml")[0]  # what moved in a.toml: each quantity once, labelled
    assert moved.count("Pull-up resistor 4.7 kΩ → 3.3 kΩ") == 1 and "pullup_sda" not in moved
    main(["check", "a.toml", "b.toml", "--against-snapshots", "--json", "--jobs", "1"])
    rows = json.loads(capsys.readouterr().out)
    assert [r["snapshot"] for r in rows] == ["compared", "none"]
    assert rows[0]["changes"]


@pytest.mark.parametrize("jobs", ["1", "2"])
def test_save_over_several_designs_writes_each_snapshot_beside_its_design(
        tmp_path, capsys, monkeypatch, jobs):
    # once "error: field '--save': this option takes one design at a time"
    from pinlib.studies.compare import load_snapshot, snapshot_path

    monkeypatch.chdir(tmp_path)
    (tmp_path / "sub").mkdir()
    a, b = _board(tmp_path, "a.toml"), _board(tmp_path / "sub", "b.toml")
    code = main(["check", "a.toml", "sub/b.toml", "--save", "--jobs", jobs])
    out, err = capsys.readouterr()
    assert code in (0, 1) and "one design at a time" not in err
    for design in (a, b):
        saved = load_snapshot(snapshot_path(load_design(design)))
        assert saved is not None and saved["buses"]
    assert (tmp_path / "sub" / "b.result.json").is_file()
    assert ("saved 2 snapshots, each beside its design: a.result.json, "
            "sub/b.result.json") in " ".join(err.split())
    # each later run compares with its own snapshot
    main(["check", "a.toml", "sub/b.toml", "--against-snapshots", "--jobs", "1"])
    assert capsys.readouterr().out.count("no figure moved") == 2


def test_save_over_several_designs_names_a_snapshot_it_cannot_write(
        tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    _board(tmp_path, "a.toml")
    _board(tmp_path, "b.toml")
    (tmp_path / "b.result.json").mkdir()  # in the way of b's snapshot
    assert main(["check", "a.toml", "b.toml", "--save", "--jobs", "1"]) == 2
    err = " ".join(capsys.readouterr().err.split())
    assert "pinlib: error: " in err and "b.result.json" in err
    assert "saved 1 snapshot, each beside its design: a.result.json; 1 design not saved" in err
    assert (tmp_path / "a.result.json").is_file()


def test_against_snapshots_wraps_to_the_terminal_and_keeps_lines_in_a_pipe(
        tmp_path, capsys, monkeypatch):
    # "    Changes against the snapshot saved <time>: status pass → warn" ran to 84
    # characters on an 80-column terminal
    monkeypatch.chdir(tmp_path)
    a = _board(tmp_path, "a.toml")
    _board(tmp_path, "b.toml")
    assert main(["check", str(a), "--save"]) in (0, 1)
    a.write_text(a.read_text(encoding="utf-8").replace('pullup = "4.7 kΩ"', 'pullup = "3.3 kΩ"'),
                 encoding="utf-8")
    capsys.readouterr()
    monkeypatch.setenv("COLUMNS", "80")
    main(["check", "a.toml", "b.toml", "--against-snapshots", "--jobs", "1"])
    out = capsys.readouterr().out
    assert "Changes against the snapshot saved" in out
    assert max(len(ln) for ln in out.splitlines()) <= 80
    monkeypatch.delenv("COLUMNS")
    main(["check", "a.toml", "b.toml", "--against-snapshots", "--jobs", "1"])
    piped = capsys.readouterr().out.splitlines()
    head = next(ln for ln in piped if "Changes against the snapshot" in ln)
    assert head.startswith("    Changes") and "status " in head  # one line, whole


# ---------------------------------------------------------------- parts used-by
def test_used_by_finds_direct_and_inherited_uses(tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    _board(tmp_path, "a.toml")
    (tmp_path / "notes.toml").write_text("x = 1\n", encoding="utf-8")  # not a design
    assert main(["parts", "used-by", "eeprom-i2c", "--json"]) == 0
    got = json.loads(capsys.readouterr().out)
    assert [(u["bus"], u["ref"]) for u in got["uses"]] == [("sensors", "U4")]
    # the designs found below the current folder are named from it, as when given
    # ('/tmp/.../a.toml' where 'parts used-by eeprom-i2c a.toml' said 'a.toml')
    assert main(["parts", "used-by", "eeprom-i2c"]) == 0
    assert capsys.readouterr().out.startswith("a.toml  bus sensors  U4")
    assert main(["parts", "used-by", "i2c-peripheral", "a.toml"]) == 0
    out = capsys.readouterr().out
    assert "U4  eeprom-i2c  (eeprom-i2c → i2c-peripheral)" in out
    assert main(["parts", "used-by", "ribbon-cable", "a.toml"]) == 0
    assert "bus sensors  cable  ribbon-cable" in capsys.readouterr().out


def test_used_by_reads_each_designs_own_library_line(tmp_path, capsys, monkeypatch):
    # a team part that only a design's library line brings in is found through it
    monkeypatch.chdir(tmp_path)
    (tmp_path / "team").mkdir()
    (tmp_path / "team" / "eeprom-team.toml").write_text(
        'format = "pinlib.part/1"\nid = "eeprom-team"\ntitle = "Team EEPROM"\n'
        'category = "memory"\nextends = "eeprom-i2c"\n', encoding="utf-8")
    _board(tmp_path, "a.toml", ('format = "pinlib.design/1"\n',
                                'format = "pinlib.design/1"\nlibrary = ["team"]\n'))
    text = (tmp_path / "a.toml").read_text(encoding="utf-8")
    (tmp_path / "a.toml").write_text(text.replace('{ ref = "U4", part = "eeprom-i2c" }',
                                                  '{ ref = "U4", part = "eeprom-team" }'),
                                     encoding="utf-8")
    assert main(["parts", "used-by", "eeprom-team", "a.toml"]) == 0
    assert "a.toml  bus sensors  U4  eeprom-team" in capsys.readouterr().out
    # an id no library holds: where team parts were looked for
    assert main(["parts", "used-by", "eeprom-teem", "a.toml"]) == 2
    err = " ".join(capsys.readouterr().err.split())
    assert "no part of the library has this id" in err
    assert "PINLIB_LIBRARY (not set) and --library (none given)" in err
    assert "library lines of the designs searched (1)" in err


def test_used_by_rows_fit_the_terminal_and_stay_whole_when_piped(tmp_path, capsys,
                                                                 monkeypatch):
    monkeypatch.chdir(tmp_path)
    _board(tmp_path, "a.toml")
    assert main(["parts", "used-by", "i2c-peripheral", "a.toml"]) == 0
    whole = capsys.readouterr().out.splitlines()
    assert max(map(len, whole)) > 80  # a class's chains run past 80 columns
    monkeypatch.setenv("COLUMNS", "80")
    assert main(["parts", "used-by", "i2c-peripheral", "a.toml"]) == 0
    fitted = capsys.readouterr().out.splitlines()
    assert max(map(len, fitted)) <= 80
    # the same rows, a long one's rest on an indented line below it
    heads = [x for x in fitted if not x.startswith("    ")]
    assert all(w.startswith(h) for w, h in zip(whole, heads, strict=True))
    assert " ".join(" ".join(fitted).split()) == " ".join(" ".join(whole).split())


def test_used_by_without_designs_walks_the_current_folder_within_bounds(
        capsys, monkeypatch):
    # from a file system root the search for designs is refused, not a walk of the disk
    monkeypatch.chdir("/")
    assert main(["parts", "used-by", "eeprom-i2c"]) == 2
    err = capsys.readouterr().err
    assert "the current folder is searched, but not this one" in err
    assert "system folder" in err and "Traceback" not in err


# ---------------------------------------------------------------- swap over many designs
def test_swap_part_over_designs_reports_and_writes_only_what_was_not_refused(
        tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    a = _board(tmp_path, "a.toml")
    # in b.toml the part to replace sits where the new one cannot serve: a 5 V-only
    # expander class is fine, but an SPI flash has no I2C pins
    b = _board(tmp_path, "b.toml", ('{ ref = "U4", part = "eeprom-i2c" }',
                                    '{ ref = "U4", part = "rtc-i2c" }'))
    c = _board(tmp_path, "c.toml", ('{ ref = "U6", part = "io-expander-i2c" }',
                                    '{ ref = "U6", part = "eeprom-i2c" }'))
    before = {p: p.read_text(encoding="utf-8") for p in (a, b, c)}
    code = main(["swap", "--part", "eeprom-i2c=io-expander-legacy-5v", "a.toml", "b.toml",
                 "--json"])
    got = json.loads(capsys.readouterr().out)
    assert code == 1  # the legacy expander fails a Fast-mode check in a.toml
    rows = {d["path"]: d for d in got["designs"]}
    assert rows["a.toml"]["status"] == "swapped"
    assert rows["a.toml"]["positions"] == [{"ref": "U4", "old": "eeprom-i2c",
                                            "new": "io-expander-legacy-5v"}]
    assert (rows["a.toml"]["before"], rows["a.toml"]["after"]) == ("warn", "fail")
    assert rows["a.toml"]["changes"]["status_changes"]
    assert rows["b.toml"]["status"] == "unused"
    assert all(p.read_text(encoding="utf-8") == before[p] for p in (a, b, c))  # no --write
    # an SPI flash cannot serve the I2C positions: refused with reasons, exit 2
    code = main(["swap", "--part", "eeprom-i2c=nor-flash-spi", "*.toml", "--write"])
    out = capsys.readouterr().out
    assert code == 2
    assert "refused (U4 eeprom-i2c → nor-flash-spi)" in out
    assert "has no i2c-sda pin" in out
    assert all(p.read_text(encoding="utf-8") == before[p] for p in (a, b, c))
    # --write edits the designs that were not refused, only the part line
    code = main(["swap", "--part", "eeprom-i2c=rtc-i2c", "a.toml", "c.toml", "--write"])
    out = capsys.readouterr().out
    assert code in (0, 1) and "written" in out
    assert a.read_text(encoding="utf-8") == before[a].replace(
        '{ ref = "U4", part = "eeprom-i2c" }', '{ ref = "U4", part = "rtc-i2c" }')
    assert '{ ref = "U6", part = "rtc-i2c" }' in c.read_text(encoding="utf-8")
    assert b.read_text(encoding="utf-8") == before[b]


@pytest.mark.parametrize("cols", [60, 80])
def test_swap_over_designs_fits_the_terminal(tmp_path, capsys, monkeypatch, cols):
    # each design's line, its status changes and the closing count wrap to COLUMNS,
    # with the path, the statuses and the part change kept on the first line
    monkeypatch.chdir(tmp_path)
    _board(tmp_path, "a-board-with-a-rather-long-file-name.toml")
    _board(tmp_path, "b.toml")
    monkeypatch.setenv("COLUMNS", str(cols))
    main(["swap", "--part", "eeprom-i2c=io-expander-legacy-5v", "*.toml"])
    lines = capsys.readouterr().out.splitlines()
    assert max(len(ln) for ln in lines) <= cols
    first = next(ln for ln in lines if ln.startswith("a-board"))
    assert "WARN → FAIL" in first
    assert any(ln.startswith("2 designs: 2 changed") for ln in lines)


def test_swap_over_designs_refuses_mixed_forms(tmp_path, capsys):
    a = _board(tmp_path, "a.toml")
    assert main(["swap", str(a), "U4=rtc-i2c", "--part", "eeprom-i2c=rtc-i2c"]) == 2
    assert "cannot be mixed" in capsys.readouterr().err
    assert main(["swap", str(a)]) == 2
    assert "no substitution given" in capsys.readouterr().err


def test_new_writes_any_title_and_reference_as_valid_toml(tmp_path):
    path = tmp_path / "odd.toml"
    title = 'A "quoted" title \\ with a back-slash,\na new line and a tab\t'
    assert main(["new", str(path), "--part", 'U"1=mcu-3v3', "--part", "U2=eeprom-i2c",
                 "--title", title]) == 0
    design = load_design(path)
    assert design.title == title
    assert {d.ref for d in design.buses[0].devices} == {'U"1', "U2"}


def test_many_designs_fit_the_width(tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    _board(tmp_path, "a.toml")
    _board(tmp_path, "b.toml")
    monkeypatch.setenv("COLUMNS", "60")
    main(["check", "a.toml", "b.toml", "--jobs", "1"])
    lines = capsys.readouterr().out.splitlines()
    assert all(len(line) <= 60 for line in lines)
    # each design's line wrapped whole, its rest indented (the title was cut at "…")
    heads = [ln for ln in lines if not ln.startswith(" ")]
    assert heads[0].startswith("WARN  a.toml") and heads[1].startswith("WARN  b.toml")
    assert "…" not in "\n".join(lines)
    assert " ".join(" ".join(lines).split()).count("Greenhouse climate logger, main board") \
        == 2


@pytest.mark.parametrize("columns", [80, 40])
def test_many_designs_wrap_a_long_line_and_cut_nothing(tmp_path, capsys, monkeypatch,
                                                       columns):
    # at 80 columns "WARN  spi-board.toml" stood alone over "43 pass, 2 warn (1 beyond a
    # class's typical or an estimated limit), 0 fail…", the title lost; and a long title
    # was cut ("Greenhouse climate logger, ma…")
    monkeypatch.chdir(tmp_path)
    _board(tmp_path, "demo-board.toml")
    # an overshoot past a class's typical limit: a warning beyond a soft limit, counted
    _board(tmp_path, "long-name-board.toml", ('title = "', 'title = "A board named at length: '))
    monkeypatch.setenv("COLUMNS", str(columns))
    main(["check", "demo-board.toml", "long-name-board.toml", "--jobs", "1"])
    out = capsys.readouterr().out
    lines = out.splitlines()
    assert all(len(line) <= columns for line in lines)
    assert "…" not in out
    flat = " ".join(out.split())
    assert "— Greenhouse climate logger, main board (invented demo scenario)" in flat
    assert "— A board named at length: Greenhouse climate logger" in flat
    assert lines[0].startswith("WARN  demo-board.toml")


def test_a_damaged_snapshot_is_not_called_missing(tmp_path, capsys):
    # a snapshot cut short (a disk full, an editor) read "no snapshot to compare with
    # (pinlib check DESIGN --save keeps one)" above the warning that named it
    a, b = _board(tmp_path, "a.toml"), _board(tmp_path, "b.toml")
    (tmp_path / "a.result.json").write_text('{"format": "pinlib.res', encoding="utf-8")
    main(["check", str(a), str(b), "--against-snapshots", "--jobs", "1"])
    out = capsys.readouterr().out.splitlines()
    below_a = out[out.index(next(ln for ln in out if "a.toml" in ln)) + 1]
    assert below_a.strip() == "its snapshot could not be read: nothing to compare with"
    below_b = out[out.index(next(ln for ln in out if "b.toml" in ln)) + 1]
    assert below_b.strip().startswith("no snapshot to compare with")


def test_new_with_a_team_library_writes_its_library_line(tmp_path, capsys):
    # a team part placed from a --library folder: the starter design named no library,
    # so 'pinlib check board.toml', the command it suggests, said 'unknown part'
    team = tmp_path / "team"
    team.mkdir()
    (team / "eeprom-team.toml").write_text(
        'format = "pinlib.part/1"\nid = "eeprom-team"\ntitle = "Team EEPROM (invented)"\n'
        'category = "memory"\nextends = "eeprom-i2c"\n', encoding="utf-8")
    boards = tmp_path / "boards"
    boards.mkdir()
    path = boards / "board.toml"
    assert main(["new", str(path), "--part", "U1=mcu-3v3", "--part", "U2=eeprom-team",
                 "--library", str(team)]) == 0, capsys.readouterr().err
    assert 'library = ["../team"]' in path.read_text(encoding="utf-8")
    design = load_design(path)
    assert [d.part_id for d in design.bus("i2c").devices] == ["mcu-3v3", "eeprom-team"]
    assert main(["check", str(path)]) in (0, 1)


def test_new_with_an_unknown_part_says_where_team_parts_were_looked_for(tmp_path, capsys,
                                                                       monkeypatch):
    # a team part named in a shell without PINLIB_LIBRARY read like a misspelt id
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    monkeypatch.setenv("COLUMNS", "1000")
    path = tmp_path / "board.toml"
    assert main(["new", str(path), "--part", "U1=mcu-3v3", "--part", "U2=eeprom-team"]) == 2
    err = capsys.readouterr().err
    assert "field '--part': unknown part (got 'eeprom-team')" in err
    assert "team folders are read from PINLIB_LIBRARY (not set) and --library (none given)" \
        in err and not path.exists()


def test_the_route_example_of_a_new_design_holds_every_device(tmp_path):
    # the commented route went from the controller to the first peripheral only: with a
    # second one on the bus, the example uncommented was refused (U3 at no point)
    path = tmp_path / "board.toml"
    assert main(["new", str(path), "--part", "U1=mcu-3v3", "--part", "U2=nor-flash-spi",
                 "--part", "U3=adc-spi"]) == 0
    text = path.read_text(encoding="utf-8")
    lines = text.splitlines()
    first = next(i for i, ln in enumerate(lines) if ln.startswith("#   lines.sclk = "))
    last = next(i for i in range(first, len(lines)) if lines[i] == "#   ] }")
    example = [ln.removeprefix("#   ") for ln in lines[first:last + 1]]
    routed = re.sub(r"^lines\.sclk = .*$", "\n".join(example), text, count=1,
                    flags=re.MULTILINE)
    path.write_text(routed, encoding="utf-8")
    (spi,) = load_design(path).buses
    assert spi.lines["sclk"].route == (("U1", "U2"), ("U2", "U3"))
    assert main(["check", str(path)]) in (0, 1)


def test_a_new_design_explains_itself_without_the_source_documents(tmp_path):
    # its comments sent the reader to docs/formats/design.md (for the modes, routes and
    # GPIO buses), a file of the source tree that an installed wheel does not carry
    from pinlib.standards.i2c import I2C_MODE_NAMES
    from pinlib.standards.smbus import SMBUS_CLASS_NAMES

    path = tmp_path / "board.toml"
    assert main(["new", str(path), "--part", "U1=mcu-3v3", "--part", "U2=adc-i2c",
                 "--part", "U3=nor-flash-spi"]) == 0
    text = path.read_text(encoding="utf-8")
    assert "docs/" not in text
    (mode_note,) = [ln for ln in text.splitlines() if ln.startswith("# mode:")]
    assert all(f'"{m}"' in mode_note for m in I2C_MODE_NAMES + SMBUS_CLASS_NAMES)
    # the route shown in a comment is one the loader takes in place of the line
    lines = text.splitlines()
    first = next(i for i, ln in enumerate(lines) if ln.startswith("#   lines.sclk = "))
    example = [ln.removeprefix("#   ") for ln in lines[first:first + 3]]
    assert example[-1] == "] }"
    routed = re.sub(r"^lines\.sclk = .*$", "\n".join(example), text, count=1,
                    flags=re.MULTILINE)
    path.write_text(routed, encoding="utf-8")
    (spi,) = [b for b in load_design(path).buses if b.protocol == "spi"]
    assert re.search(r'^lines\.sclk = \{ series_resistor = "auto", route = \[$', routed,
                     flags=re.MULTILINE) and spi.devices
    assert main(["check", str(path)]) in (0, 1)


def test_swap_over_designs_names_an_old_part_no_library_holds(tmp_path, capsys):
    # "pinlib swap --part eeprom-i2=eeprom-hicap a.toml" (a typo of eeprom-i2c) said
    # "no position to change" and exited 0, as though no design used the part, where
    # "pinlib parts used-by eeprom-i2" names the typo
    a = _board(tmp_path, "a.toml")
    before = a.read_text(encoding="utf-8")
    assert main(["swap", "--part", "eeprom-i2=rtc-i2c", str(a)]) == 2
    out, err = capsys.readouterr()
    err = " ".join(err.split())
    assert "field '--part'" in err and "(got 'eeprom-i2')" in err
    assert "closest: eeprom-i2c" in err
    # in capitals, as docs/cli.md promises: offered the id in its own case (it was
    # refused as a malformed OLD=NEW, with no suggestion)
    assert main(["swap", "--part", "EEPROM-I2C=rtc-i2c", str(a)]) == 2
    err = " ".join(capsys.readouterr().err.split())
    assert "(got 'EEPROM-I2C')" in err and "closest: eeprom-i2c" in err
    assert main(["swap", str(a), "U4=RTC-I2C"]) == 2
    err = " ".join(capsys.readouterr().err.split())
    assert "(got 'RTC-I2C')" in err and "rtc-i2c" in err
    assert a.read_text(encoding="utf-8") == before
    # a known part that no design places still reads as before
    assert main(["swap", "--part", "led-driver-fmplus=rtc-i2c", str(a)]) == 0
    assert "no position to change" in capsys.readouterr().out


def test_swap_over_designs_names_a_new_part_no_library_holds_once_up_front(tmp_path, capsys):
    # invented test design: "pinlib swap --part eeprom-i2c=eeprom-i2cc a.toml b.toml" said
    # "not checked: ... unknown part" under each design, after the substitution's header,
    # and each design's error again on standard error
    a, b = _board(tmp_path, "a.toml"), _board(tmp_path, "b.toml")
    before = a.read_text(encoding="utf-8")
    assert main(["swap", "--part", "eeprom-i2c=EEPROM-i2cc", str(a), str(b)]) == 2
    # an id in capitals is no id of the library: named with its closest, as any unknown
    out, err = capsys.readouterr()
    err = " ".join(err.split())
    assert "(got 'EEPROM-i2cc')" in err and "closest: eeprom-i2c" in err
    assert main(["swap", "--part", "eeprom-i2c=eeprom-i2cc", str(a), str(b), "--write"]) == 2
    out, err = capsys.readouterr()
    assert out == ""
    err = " ".join(err.split())
    assert err.count("pinlib: error:") == 1 and "not checked" not in err
    assert "field '--part'" in err and "(got 'eeprom-i2cc')" in err
    assert "closest: eeprom-i2c" in err
    assert a.read_text(encoding="utf-8") == before


def test_many_designs_in_a_deep_folder_keep_their_names_and_counts_at_80_columns(
        tmp_path, capsys, monkeypatch):
    # designs in a folder of 76 characters read at 80 columns as
    # "WARN  <folder>/and-another-level-of-folders-below-i…" twice (which design is
    # which?), and the short one padded to their width as "FAIL  spi-route.toml…": the
    # names, the counts and an error's message were cut with the title
    monkeypatch.chdir(tmp_path)
    deep = Path("a-rather-long-folder-name-for-boards") / "and-another-level-of-folders-below"
    (tmp_path / deep).mkdir(parents=True)
    _board(tmp_path / deep, "demo.toml")
    (tmp_path / deep / "gpio.toml").write_text(
        (ROOT / "workbooks" / "designs" / "gpio-reset-board.toml").read_text(encoding="utf-8"),
        encoding="utf-8")
    _board(tmp_path, "b.toml")
    (tmp_path / "c.toml").write_text('format = "pinlib.design/1"\ntitle = 3\n',
                                     encoding="utf-8")
    monkeypatch.setenv("COLUMNS", "80")
    assert main(["check", str(deep / "*.toml"), "b.toml", "c.toml", "--jobs", "1"]) == 2
    out, err = capsys.readouterr()
    lines = out.splitlines()
    assert all(len(ln) <= 80 for ln in lines), out
    flat = " ".join(out.split())
    for name in ("demo.toml", "gpio.toml", "b.toml"):
        assert name in flat
    # each checked design's counts, whole (the demo's twice, the GPIO example's once)
    # (the demo's with its count of warnings for want of a datasheet value)
    assert len(re.findall(r"\d+ pass, \d+ warn( \(\d+ for want of a datasheet value\))?, "
                          r"\d+ fail —", flat)) == 3
    # the error's message whole, as standard error has it: nothing of it cut
    message = " ".join(err.split()).split("c.toml: not checked: ", 1)[1]
    assert "ERROR c.toml" in flat and f"not checked: {message}" in flat


def test_swap_over_designs_in_a_deep_folder_never_cuts_a_name(tmp_path, capsys, monkeypatch):
    # "pinlib swap --part ..." at 80 columns cut a design's path where the width fell:
    # ".../and-another-level-of-folders-below-it/demo." then "    toml  no position..."
    monkeypatch.chdir(tmp_path)
    deep = Path("a-rather-long-folder-name-for-boards") / "and-another-level-of-folders-below-it"
    (tmp_path / deep).mkdir(parents=True)
    _board(tmp_path / deep, "demo.toml")
    _board(tmp_path / deep, "second-demo-board.toml")
    monkeypatch.setenv("COLUMNS", "80")
    assert main(["swap", "--part", "nor-flash-spi=adc-spi", str(deep / "*.toml")]) in (0, 1)
    lines = capsys.readouterr().out.splitlines()
    assert all(len(ln) <= 80 for ln in lines)
    for name in ("demo.toml", "second-demo-board.toml"):
        assert any(ln.strip().startswith(name) or f"/{name}" in ln for ln in lines), lines


def test_swap_over_designs_counts_in_words():
    # "5 check(s) changed status, 16 margin(s) moved, 24 figure(s) moved" and
    # "3 design(s): ..." where "pinlib check" over designs writes "3 designs: ..."
    from pinlib.present.designs import _counted

    assert _counted(1, "check") == "1 check" and _counted(0, "check") == "0 checks"
    assert _counted(16, "margin") == "16 margins"


def test_swap_over_designs_gives_every_design_the_same_three_counts(tmp_path, capsys,
                                                                    monkeypatch):
    # one design's line said "0 checks changed status, 1 margin moved, 0 figures moved",
    # the next "0 checks changed status, 0 figures moved": the margins' count went
    # missing where it was 0
    monkeypatch.setenv("COLUMNS", "200")
    a, b = _board(tmp_path, "a.toml"), _board(tmp_path, "b.toml")
    main(["swap", "--part", "eeprom-i2c=rtc-i2c", str(a), str(b)])
    out = capsys.readouterr().out
    rows = [ln for ln in out.splitlines() if "changed status" in ln]
    assert rows and all(re.search(r"\d+ checks? changed status, \d+ margins? moved, "
                                  r"\d+ figures? moved", ln) for ln in rows), out


def test_detail_over_several_designs_is_refused_naming_the_command_for_each(tmp_path, capsys):
    # "pinlib check 'boards/*.toml' --detail" printed the one line per design and left
    # --detail unsaid, where --corners over several designs says it takes one at a time
    a, b = _board(tmp_path, "a.toml"), _board(tmp_path, "b.toml")
    assert main(["check", str(a), str(b), "--detail"]) == 2
    out, err = capsys.readouterr()
    err = " ".join(err.split())
    assert out == "" and "field '--detail'" in err
    assert "run 'pinlib check DESIGN --detail' on each design" in err


def test_swap_part_of_a_class_names_the_parts_that_extend_it(tmp_path, capsys, monkeypatch):
    # --part i2c-peripheral=... answered "no position to change" and nothing more, where
    # the design's I2C parts all extend that class: --part matches a part as placed
    monkeypatch.chdir(tmp_path)
    _board(tmp_path, "a.toml")
    monkeypatch.setenv("COLUMNS", "80")
    code = main(["swap", "--part", "i2c-peripheral=eeprom-i2c", "a.toml"])
    out = " ".join(capsys.readouterr().out.split())
    assert code == 0
    assert ("a.toml no position to change: i2c-peripheral is a class other parts extend "
            "(U4 eeprom-i2c, U5 rtc-i2c") in out
    assert "`pinlib parts used-by i2c-peripheral` lists the positions" in out
    main(["swap", "--part", "i2c-peripheral=eeprom-i2c", "a.toml", "--json"])
    row = json.loads(capsys.readouterr().out)["designs"][0]
    assert row["status"] == "unused" and "U4 eeprom-i2c" in row["extended"]["i2c-peripheral"]
    # a part that stands nowhere, as itself or as a class, gets no such words
    main(["swap", "--part", "io-expander-legacy-5v=eeprom-i2c", "a.toml"])
    out = capsys.readouterr().out
    assert "no position to change\n" in out and "used-by" not in out
