"""Tests of ``pinlib check``: the demo design, the JSON shape (docs/formats/result.md),
exit codes."""

from __future__ import annotations

import json
import re
import subprocess
import sys
from pathlib import Path

import pytest

from pinlib.cli import main
from pinlib.model.result import CAUTION

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "workbooks" / "designs" / "demo-board.toml"
PARTS = Path(__file__).parent / "data" / "parts"

# the figure names issue 3 requires of every open-drain segment
REQUIRED = ["bus_capacitance", "pullup", "rp_min", "rp_max", "rise_time", "rise_time_10_90",
            "fall_time", "v_ol", "v_oh", "noise_margin_low", "noise_margin_high",
            "pullup_power", "scl_frequency_effective", "sda_setup_margin"]
UNITS = {"bus_capacitance": "F", "pullup": "Ω", "rp_min": "Ω", "rp_max": "Ω", "rise_time": "s",
         "rise_time_10_90": "s", "fall_time": "s", "v_ol": "V", "v_oh": "V",
         "noise_margin_low": "V", "noise_margin_high": "V", "pullup_power": "W",
         "scl_frequency_effective": "Hz", "sda_setup_margin": "s"}
CHECK_KEYS = {"id", "status", "value", "limit", "unit", "margin", "source", "message"}


def run_json(args, capsys):
    code = main(["check", *args, "--json"])
    out = capsys.readouterr().out
    return code, json.loads(out)


def assert_group(g):
    assert g["status"] in ("pass", "warn", "fail")
    for name in REQUIRED:
        assert name in g["figures"], name
        f = g["figures"][name]
        # a figure without a number may say why (a line that never falls)
        keys = {"value", "unit"} | ({"reason"} if f["value"] is None else set())
        assert set(f) <= keys and {"value", "unit"} <= set(f) and f["unit"] == UNITS[name]
        assert f["value"] is None or isinstance(f["value"], float)
    assert g["checks"], "no checks"
    for c in g["checks"]:
        assert CHECK_KEYS <= set(c)
        assert c["status"] in ("pass", "warn", "fail")
        assert c["source"]
    worst = max(("pass", "warn", "fail").index(c["status"]) for c in g["checks"])
    assert g["status"] == ("pass", "warn", "fail")[worst]


def test_demo_design_json(capsys):
    code, doc = run_json([str(DEMO)], capsys)
    assert code in (0, 1)
    assert doc["format"] == "pinlib.result/1"
    assert doc["design"].startswith("Greenhouse climate logger")
    assert doc["caution"] == CAUTION
    assert code == (1 if doc["status"] == "fail" else 0)
    buses = {b["id"]: b for b in doc["buses"]}
    assert set(buses) == {"sensors", "power", "flash", "display"}
    sensors = buses["sensors"]
    assert sensors["protocol"] == "i2c" and sensors["lines"] == []
    assert [s["id"] for s in sensors["segments"]] == ["main-3v3", "sensor-1v8"]
    for seg in sensors["segments"]:
        assert_group(seg)
    power = buses["power"]
    assert power["protocol"] == "smbus" and "segments" not in power
    assert_group(power)   # a single-segment bus carries its figures itself
    rise = next(c for c in power["checks"] if c["id"] == "rise-time")
    assert rise["details"]["definition"] == "smbus"
    # mostly passing: the demo is a working board
    statuses = [c["status"] for b in doc["buses"] for g in [b, *b.get("segments", [])]
                for c in g["checks"]]
    assert statuses.count("pass") > 0.8 * len(statuses)


def _json_checks(node):
    """Every check object in a result's JSON, wherever it sits (bus, segment, line,
    coupling)."""
    if isinstance(node, dict):
        if {"id", "status", "source", "message"} <= set(node):
            yield node
        for v in node.values():
            yield from _json_checks(v)
    elif isinstance(node, list):
        for v in node:
            yield from _json_checks(v)


def test_json_gives_a_fix_where_the_text_does(capsys):
    """A check's `fix` goes with a problem, by the one rule the text follows
    (`Check.advice`): a passing check carries none in the JSON either, even where its
    rule states one (the demo's line-delay checks), and a failing or warning check
    carries its own."""
    from pinlib.engines.dispatch import check_file

    result = check_file(DEMO)
    checks = [c for r in result.results() for _, _, c in r.all_checks()]
    stated = [c for c in checks if c.status == "pass" and c.fix]
    assert stated, "the demo no longer has a passing check that states a fix"
    _, doc = run_json([str(DEMO)], capsys)
    shown = list(_json_checks(doc))
    assert len(shown) == len(checks)
    assert not [c for c in shown if c["status"] == "pass" and "fix" in c]
    assert sorted(c["fix"] for c in shown if "fix" in c) == sorted(
        c.advice for c in checks if c.advice)


def test_demo_design_text(capsys):
    # the full tables moved to --detail (issue 15: the default prints problems first)
    code = main(["check", str(DEMO), "--detail"])
    out = capsys.readouterr().out
    assert code in (0, 1)
    assert out.startswith("Caution: pinlib's figures are estimates")
    assert "segment main-3v3" in out and "bus power (SMBus)" in out
    # figures carry SI prefixes, checks their source
    assert " pF" in out and " kΩ" in out and " ns" in out
    assert "UM10204 rev. 6, table 10" in out and "SMBus specification version 3.1" in out


def test_exit_codes(tmp_path, capsys):
    head = f"""format = "pinlib.design/1"
title = "exit codes"
library = ["{PARTS.as_posix()}"]

[[bus]]
id = "b"
protocol = "i2c"
mode = "fast"
supply = "3.3 V"
extra_capacitance = "EXTRA"
devices = [
  {{ ref = "U1", part = "t-ctrl-3v3", role = "controller" }},
  {{ ref = "U2", part = "t-target" }},
]
"""
    ok = tmp_path / "ok.toml"
    ok.write_text(head.replace("EXTRA", "80 pF"), encoding="utf-8")
    assert main(["check", str(ok)]) == 0
    bad = tmp_path / "bad.toml"
    bad.write_text(head.replace("EXTRA", "380 pF"), encoding="utf-8")  # no pull-up fits
    assert main(["check", str(bad)]) == 1
    broken = tmp_path / "broken.toml"
    broken.write_text(head.replace("EXTRA", "380 pH"), encoding="utf-8")
    assert main(["check", str(broken)]) == 2
    assert "field 'bus[0].extra_capacitance'" in capsys.readouterr().err


def test_library_option(tmp_path, capsys):
    design = tmp_path / "d.toml"
    design.write_text("""format = "pinlib.design/1"
title = "team library from the command line"

[[bus]]
id = "b"
protocol = "i2c"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "t-ctrl-3v3", role = "controller" },
  { ref = "U2", part = "t-target" },
]
""", encoding="utf-8")
    assert main(["check", str(design)]) == 2
    assert "unknown part" in capsys.readouterr().err
    assert main(["check", str(design), "--library", str(PARTS)]) == 0


def test_an_unknown_part_names_the_team_folders_read(tmp_path, capsys, monkeypatch):
    # A design written while PINLIB_LIBRARY named the team folder, checked in a shell
    # where it is not set: "unknown part 't-target'; closest in the library: ..." did not
    # say that no team folder had been read at all
    design = tmp_path / "d.toml"
    design.write_text("""format = "pinlib.design/1"
title = "a team part, no team folder"

[[bus]]
id = "b"
protocol = "i2c"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller" },
  { ref = "U2", part = "t-target" },
]
""", encoding="utf-8")
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    monkeypatch.setenv("COLUMNS", "1000")
    assert main(["check", str(design)]) == 2
    err = capsys.readouterr().err
    assert "unknown part" in err and "d.toml:10" in err
    assert "team folders read: none (PINLIB_LIBRARY, the design's library line and " \
           "--library name none)" in err
    empty = tmp_path / "team"
    empty.mkdir()
    monkeypatch.setenv("PINLIB_LIBRARY", str(empty))
    assert main(["check", str(design)]) == 2
    assert f"team folders read: {empty}" in capsys.readouterr().err


def test_help_has_an_example(capsys):
    with pytest.raises(SystemExit) as info:
        main(["check", "--help"])
    assert info.value.code == 0
    out = capsys.readouterr().out
    assert "pinlib check pinlib-demo/workbooks/designs/demo-board.toml" in out
    assert "--json" in out and "--library" in out


def test_no_pandas_or_altair_on_the_check_path():
    code = (
        "import sys, io, contextlib\n"
        "from pinlib.cli import main\n"
        "with contextlib.redirect_stdout(io.StringIO()):\n"
        f"    main(['check', {str(DEMO)!r}])\n"
        "print(','.join(m for m in ('pandas', 'altair', 'ipywidgets') if m in sys.modules))\n"
    )
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          cwd=ROOT, timeout=60, check=True)
    assert proc.stdout.strip() == ""


# Modules `pinlib check` of the demo has no use for: what draws, writes or imports parts,
# the notebook stack and the studies it does not run (DEVELOPERS.md, house rules).
NOT_ON_THE_CHECK_PATH = (
    "pandas", "altair", "ipywidgets", "vl_convert", "scipy", "skrf", "tomlkit", "jinja2",
    "IPython", "matplotlib", "tqdm", "pinlib.present.review", "pinlib.present.charts",
    "pinlib.present.plotdata", "pinlib.present.widgets", "pinlib.studies.whatif",
    "pinlib.studies.compare", "pinlib.studies.candidates", "pinlib.library.ibis",
    "pinlib.library.record", "pinlib.library.jsonschema", "pinlib.model.designschema",
    "pinlib.studies.many",
    # the formats are pinlib's own records: no validation library, no package metadata
    # scan, and their JSON Schema is built only when asked for
    "pydantic", "pydantic_core", "importlib.metadata", "email", "pinlib.core.recordschema",
    # near-miss names are sought only for a misspelt one (pinlib.core.nearby)
    "difflib",
    "numpy.ma",  # np.unique imports it: some milliseconds of a fresh check
    # the other commands' modules: the program's parser names them without importing them
    "pinlib.cli.commands.report", "pinlib.cli.commands.swap", "pinlib.cli.commands.candidates",
    "pinlib.cli.commands.measured", "pinlib.cli.commands.parts", "pinlib.cli.commands.new",
    "pinlib.cli.commands.schema", "pinlib.cli.commands.demo", "pinlib.cli.commands.workbench",
    "pinlib.cli.commands.partsimport", "pinlib.cli.commands.partsusedby",
    # a file is written through a temporary one only when something is written
    "tempfile", "random",
    # the part format's field tables answer only a misspelt key
    "pinlib.library.fields",
    # SHA-256 from CPython's own module: OpenSSL is not loaded (pinlib.core.digest)
    "hashlib", "_hashlib",
    # the JEDEC levels table: imported by pinlib.standards.logic_levels when first asked for
    "pinlib.standards.jedec",
    # a routed line's tree and the solver on one grid per case: the demo's lines are
    # point to point, and the check solves no batch of studies
    "pinlib.engines.pushline.routes", "pinlib.engines.pushline.treeshape",
    "pinlib.physics.waveform.rowgrids",
    # the terminal's width is taken without shutil and its compression modules, in the
    # help formatters argparse makes too (pinlib.present.terminal.columns)
    "shutil", "bz2", "lzma", "zlib",
    # a prefixed number is read by float() with the prefix added to its exponent
    # (pinlib.core.quantity._scaled)
    "decimal", "_decimal",
    # glob only for a pattern among the designs named (pinlib.studies.designpaths), the
    # command line to see more quoted without shlex (pinlib.present.terminal.shell_word)
    "glob", "shlex",
)


@pytest.mark.parametrize("path", ["", "demo-board.toml", "designs/demo board.toml",
                                  "it's.toml", "a\"b", "café.toml", "x;rm -rf y", "~/a$b",
                                  "C:\\boards\\a.toml", "@%+=:,./-_", "tab\there", "*.toml"])
def test_the_command_to_see_more_is_quoted_as_shlex_quotes(path):
    import shlex

    from pinlib.present.terminal import shell_word

    assert shell_word(path) == shlex.quote(path)


@pytest.mark.parametrize("item", ["a.toml", "*.toml", "d/?.toml", "[ab].toml", "a]b.toml",
                                  "designs/**/x.toml", "plain{1,2}.toml", ""])
def test_a_pattern_is_what_glob_takes_for_one(item):
    import glob

    from pinlib.studies.designpaths import _MAGIC

    assert any(c in item for c in _MAGIC) == glob.has_magic(item)


def test_check_imports_nothing_it_does_not_use():
    code = (
        "import sys, io, contextlib, runpy\n"
        f"sys.argv = ['pinlib', 'check', {str(DEMO)!r}]\n"
        "with contextlib.redirect_stdout(io.StringIO()):\n"
        "    try:\n"
        "        runpy.run_module('pinlib', run_name='__main__')\n"
        "    except SystemExit:\n"
        "        pass\n"
        f"print(','.join(m for m in {NOT_ON_THE_CHECK_PATH!r} if m in sys.modules))\n"
        "print('pinlib.engines.dispatch' in sys.modules)\n"
    )
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          cwd=ROOT, timeout=60, check=True)
    heavy, checked = proc.stdout.splitlines()
    assert heavy == ""
    assert checked == "True"  # the command ran (the list above is not vacuous)


# Figure names that docs/formats/result.md and the push-pull issue promise for every routed line.
LINE_FIGURES = {"load_capacitance", "trace_delay", "z0", "edge_rise_time", "edge_fall_time",
                "series_resistor", "overshoot", "undershoot", "transmission_line", "model"}
SPI_FIGURES = {"max_clock", "cipo_setup_margin", "copi_setup_margin", "copi_hold_margin"}


def test_demo_spi_buses_report_line_and_timing_figures(capsys):
    _, doc = run_json([str(DEMO)], capsys)
    for bus in doc["buses"]:
        if bus["protocol"] != "spi":
            continue
        assert SPI_FIGURES <= set(bus["figures"])
        assert bus["lines"], bus["id"]
        for line in bus["lines"]:
            assert LINE_FIGURES <= set(line["figures"]), line["signal"]
            assert isinstance(line["figures"]["transmission_line"]["value"], bool)
            assert line["figures"]["model"]["value"] in ("lumped", "distributed")
            for check in line["checks"]:
                assert check["source"], check["id"]


def test_every_invalid_field_of_a_design_named_in_one_run(tmp_path, capsys):
    # Four problems in one file: the command names them all, the first as the error and
    # the others after it in the file's order (a misspelt key would come first).
    design = tmp_path / "four.toml"
    design.write_text('format = "pinlib.design/1"\ntitle = "four"\nwarn_margin = "yes"\n'
                      '[[bus]]\nid = "b"\nprotocol = "i2c"\nspi_mode = 2.5\n'
                      'supply = true\n[[bus.devices]]\nref = "U1"\npart = "mcu-3v3"\n'
                      'switched = "no"\n', encoding="utf-8")
    assert main(["check", str(design)]) == 2
    lines = capsys.readouterr().err.splitlines()
    assert [line.split(":")[0] for line in lines] == ["pinlib"] * 4
    assert lines[0].startswith(f"pinlib: error: {design}:3, field 'warn_margin'")
    assert [line.split(", field ")[0].rsplit(":", 1)[1] for line in lines[1:]] == \
        ["7", "8", "12"]
    assert all(line.startswith("pinlib: also: ") for line in lines[1:])


def test_misspelt_keys_come_first_then_the_others_in_file_order(tmp_path, capsys):
    # an audit: docs/cli.md said the "also" lines follow the file's order, but every
    # misspelt key came first (lines 20, 38, 22, 36, 69 of its file).  The program's
    # order is kept (a misspelt key explains the field it leaves missing) and the page
    # says it.  Invented test data: two misspelt keys, three bare numbers
    design = tmp_path / "five.toml"
    design.write_text(
        'format = "pinlib.design/1"\ntitle = "five"\n'
        '[board.geometry.g]\nkind = "microstrip"\nwidth = "0.2 mm"\nheight = "0.18 mm"\n'
        'er = 4.2\n'
        '[[bus]]\nid = "b"\nprotocol = "i2c"\nsupply = "3.3 V"\n'
        'extra_capacitance = "5"\nlength_tolerence = "5 %"\n'
        'trace = { length = "5 cm", geometry = "g" }\n'
        'devices = [{ ref = "U1", part = "mcu-3v3", role = "controller" }, '
        '{ ref = "U2", part = "eeprom-i2c" }]\n'
        '[[bus]]\nid = "s"\nprotocol = "spi"\nsupply = "3.3 V"\nclock = "25"\n'
        'length_tolerence = "5 %"\n'
        'devices = [{ ref = "U1", part = "mcu-3v3", role = "controller" }, '
        '{ ref = "U7", part = "nor-flash-spi" }]\n'
        'lines.sclk = { length = "3 cm", geometry = "g" }\n', encoding="utf-8")
    assert main(["check", str(design)]) == 2
    lines = capsys.readouterr().err.splitlines()
    at = [ln.split(", field ")[0].rsplit(":", 1)[1] for ln in lines if ", field " in ln]
    assert at == ["13", "21", "12", "20"], lines
    page = " ".join((Path(__file__).resolve().parents[1] / "docs" / "cli.md")
                    .read_text(encoding="utf-8").split())
    assert ("Every misspelt (unknown) key comes first, in the file's order, since each "
            "explains a field it leaves missing; the other problems follow, in the "
            "file's order.") in page
    assert "more as `pinlib: also:` lines in the file's order" not in page


BAD_PART = """format = "pinlib.design/1"
title = "x"
[[bus]]
id = "a"
protocol = "spi"
supply = "3.3 V"
devices = [{ ref = "U1", part = "no-such-part-with-a-rather-long-name-here", role = "controller" }]
"""


def test_errors_wrap_to_the_terminal_and_stay_whole_in_a_pipe(tmp_path, capsys,
                                                              monkeypatch):
    # at COLUMNS=80 an error (and argparse's own) wraps with its continuation indented,
    # the first line still "file:line, field"; piped, without COLUMNS, each is one line
    monkeypatch.chdir(tmp_path)
    path = Path("bad.toml")
    path.write_text(BAD_PART, encoding="utf-8")
    monkeypatch.setenv("COLUMNS", "80")
    assert main(["check", str(path)]) == 2
    lines = capsys.readouterr().err.splitlines()
    assert len(lines) > 1 and max(len(ln) for ln in lines) <= 80
    assert lines[0].startswith("pinlib: error: bad.toml:7, field")
    assert all(ln.startswith("    ") for ln in lines[1:])
    with pytest.raises(SystemExit):
        main(["chek"])
    err = capsys.readouterr().err.splitlines()
    assert max(len(ln) for ln in err) <= 80 and err[1].startswith("pinlib: error:")
    monkeypatch.delenv("COLUMNS")
    assert main(["check", str(path)]) == 2  # stderr captured: not a terminal
    assert len(capsys.readouterr().err.splitlines()) == 1


def test_ctrl_c_prints_one_line_to_a_file_or_pipe(capsys, monkeypatch):
    # it printed a blank line first (meant to leave the ^C a terminal echoes), so a log
    # or a pipe got two lines; a terminal still gets its line on a fresh row
    from pinlib.cli.commands import check

    def stop(args):
        raise KeyboardInterrupt

    monkeypatch.setattr(check, "run", stop)
    assert main(["check", str(DEMO)]) == 130
    assert capsys.readouterr().err == "pinlib: interrupted (Ctrl-C): stopped\n"
    monkeypatch.setattr(sys.stderr, "isatty", lambda: True, raising=False)
    assert main(["check", str(DEMO)]) == 130
    assert capsys.readouterr().err == "\npinlib: interrupted (Ctrl-C): stopped\n"


def test_a_figure_without_a_number_says_why(capsys, monkeypatch):
    # --detail printed an infinite Rp(min) as "∞" (the translator link: no pull-up is
    # large enough for its weakest sink), and the CIPO setup margin of the demo's
    # write-only display bus, or of a CIPO that never reaches VIH, as a bare "—"
    monkeypatch.setenv("COLUMNS", "100")
    data = ROOT / "tests" / "data"
    cases = [(data / "translator-cable.toml", "rp_min", "Rp(min)", "no pull-up is large enough"),
             (DEMO, "cipo_setup_margin", "CIPO setup margin", "not computed"),
             (data / "spi-cipo-never-high.toml", "cipo_setup_margin", "CIPO setup margin",
              "CIPO never crosses"),
             (data / "spi-cipo-never-high.toml", "max_clock", "Highest clock",
              "no clock satisfies")]
    for path, fig, label, why in cases:
        main(["check", str(path), "--json"])
        doc = json.loads(capsys.readouterr().out)
        groups = [g for b in doc["buses"] for g in [b, *b.get("segments", [])]]
        nones = [g["figures"][fig] for g in groups
                 if fig in g["figures"] and g["figures"][fig]["value"] is None]
        assert nones and all(why in f["reason"] for f in nones), (path.name, fig)
        main(["check", str(path), "--detail"])
        out = capsys.readouterr().out
        assert "∞" not in out and "inf" not in out.split()
        # a line's own figure ends its label with the line ("Rp(min), SDA")
        rows = [ln for ln in out.splitlines()
                if re.match(re.escape(label) + r"(, [A-Z]+)?  ", ln.strip())]
        assert any(why in ln for ln in rows), (path.name, rows)
        assert not any(ln.rstrip().endswith("—") for ln in rows), (path.name, rows)


def test_characters_that_act_on_a_terminal_are_shown_not_obeyed(tmp_path, capsys,
                                                                 monkeypatch):
    # Once written raw: a design titled with an escape code cleared the terminal's
    # screen, a carriage return overwrote the line, a right-to-left override reversed
    # what followed it. They are now shown as their escapes; the file keeps them.
    text = DEMO.read_text(encoding="utf-8")
    title = "Bench \x1b[2J board\r\u202eLIAF\x07"
    design = tmp_path / "odd.toml"
    escaped = "".join(c if c.isprintable() else f"\\u{ord(c):04x}" for c in title)
    design.write_text(text.replace('title = "Greenhouse climate logger',
                                   f'title = "{escaped} Greenhouse climate logger', 1),
                      encoding="utf-8")
    main(["check", str(design)])
    out = capsys.readouterr().out
    for raw in ("\x1b[2J", "\r", "\u202e", "\x07"):
        assert raw not in out
    # the carriage return shown as its escape too: the line's wrapping took it for a
    # space, where the one-line-per-design output showed \x0d
    assert "Bench \\x1b[2J board\\x0d\\u202eLIAF\\x07 Greenhouse" in out
    main(["check", str(design), str(DEMO)])
    assert "board\\x0d\\u202eLIAF" in capsys.readouterr().out
    assert '"Bench \\u001b[2J' in design.read_text(encoding="utf-8")  # the file as it was
    # on a terminal the status words keep their colours, and nothing else gets through
    monkeypatch.delenv("NO_COLOR", raising=False)
    monkeypatch.setattr(sys.stdout, "isatty", lambda: True, raising=False)
    main(["check", str(design)])
    out = capsys.readouterr().out
    assert "\x1b[33mWARN\x1b[0m" in out
    assert "\x1b[2J" not in out and "\x07" not in out
    # an error naming a bad value shows it the same way
    bad = tmp_path / "bad.toml"
    bad.write_text(text.replace('supply = "3.3 V"', 'supply = "3.3\\u001b[2J V"', 1),
                   encoding="utf-8")
    assert main(["check", str(bad)]) == 2
    err = capsys.readouterr().err
    assert "\x1b" not in err and "\\x1b[2J" in err


def test_a_file_s_code_like_pinlib_s_own_colours_is_shown_and_the_status_words_coloured(
        tmp_path, capsys, monkeypatch):
    # A title holding the very codes pinlib colours its status words with was let
    # through raw (a green "PASS" of the file's own making). The file's text is now made
    # visible before pinlib adds its colours: on a terminal every code left is pinlib's.
    import re

    text = DEMO.read_text(encoding="utf-8")
    design = tmp_path / "painted.toml"
    design.write_text(text.replace(
        'title = "Greenhouse climate logger',
        'title = "\\u001b[32mPASS\\u001b[0m \\u001b[1;31mhidden Greenhouse climate logger',
        1), encoding="utf-8")
    monkeypatch.setenv("NO_COLOR", "1")
    main(["check", str(design)])
    out = capsys.readouterr().out
    assert "\x1b" not in out and "\\x1b[32mPASS\\x1b[0m \\x1b[1;31mhidden" in out
    monkeypatch.delenv("NO_COLOR")
    monkeypatch.setattr(sys.stdout, "isatty", lambda: True, raising=False)
    main(["check", str(design)])
    out = capsys.readouterr().out
    assert "\x1b[33mWARN\x1b[0m" in out and "\x1b[32mPASS\x1b[0m" in out
    assert "\\x1b[32mPASS\\x1b[0m \\x1b[1;31mhidden" in out
    # every code left colours a status word
    ours = re.compile(r"\x1b\[(?:32|33|1;31)m(?:PASS|WARN|FAIL)\x1b\[0m")
    assert "\x1b" not in ours.sub("", out)


def test_a_line_with_controls_fits_the_width_once_they_are_shown(tmp_path, capsys,
                                                                  monkeypatch):
    # a NUL in a value (invented design: the demo with "3 pF\u0000" as a tolerance) was
    # measured as one column while wrapping and shown as four ("\x00"): 83 columns
    monkeypatch.setenv("COLUMNS", "80")
    text = DEMO.read_text(encoding="utf-8")
    design = tmp_path / "nul.toml"
    design.write_text(text.replace('supply_tolerance = "5 %"',
                                   'supply_tolerance = "3 pF' + "\\u0000" * 8 + '"', 1),
                      encoding="utf-8")
    assert main(["check", str(design)]) == 2
    err = capsys.readouterr().err
    assert "\\x00" * 8 in err and "\x00" not in err
    assert all(len(ln) <= 80 for ln in err.splitlines()), err


def test_own_colours_are_kept_only_in_text_made_visible_first():
    from pinlib.present.report import paint
    from pinlib.present.visible import coloured_visible, visible

    code = "\x1b[32m"  # green, as pinlib colours PASS
    assert visible(f"{code}PASS\x1b[0m") == "\\x1b[32mPASS\\x1b[0m"
    assert visible(visible(f"a{code}\r\u202e")) == visible(f"a{code}\r\u202e")
    assert paint([f"PASS {code}title"]) == ["\x1b[32mPASS\x1b[0m \\x1b[32mtitle"]
    assert coloured_visible("\x1b[32mPASS\x1b[0m \x1b[2J") == "\x1b[32mPASS\x1b[0m \\x1b[2J"


def test_json_is_written_whole(monkeypatch):
    # The command line's standard output shows control characters as escapes, which
    # looks at each write: json.dump wrote a chunk per token (a 5 MB document took four
    # times as long). Every --json is now one write.
    import io

    class Counting(io.StringIO):
        writes = 0

        def write(self, s):
            Counting.writes += 1
            return super().write(s)

    out = Counting()
    monkeypatch.setattr(sys, "stdout", out)
    assert main(["check", str(DEMO), "--json"]) == 0
    assert Counting.writes == 1
    assert json.loads(out.getvalue())["format"] == "pinlib.result/1"


def test_the_gpio_example_reads_at_80_columns(capsys, monkeypatch):
    # the invented GPIO example (workbooks/designs/gpio-reset-board.toml): both lines
    # pass, one line a bus, and nothing wider than the terminal
    monkeypatch.setenv("COLUMNS", "80")
    design = ROOT / "workbooks" / "designs" / "gpio-reset-board.toml"
    seen = {}
    for extra in ([], ["--detail"]):
        assert main(["check", str(design), *extra]) == 0
        seen[bool(extra)] = out = capsys.readouterr().out
        assert max(len(ln) for ln in out.splitlines()) <= 80, extra
        assert "WARN" not in out and "FAIL" not in out
    buses = [ln for ln in seen[False].splitlines() if ln.startswith("PASS ")]
    assert [b.split(":")[0] for b in buses] == [
        "PASS reset (GPIO)", "PASS fpga-enable (GPIO)",
        "PASS Controller board, reset and enable lines (invented example)"]
    assert "(reset rise)" in seen[False] and "lines.reset.pullup" in seen[True]


def test_a_fix_names_a_few_receivers_and_counts_the_rest(tmp_path, capsys, monkeypatch):
    # invented test design: 30 EEPROMs under a 100 Ω pull-up, whose low level every
    # receiver reads as high; at 1,024 the fix listed "receivers U1, U2, ... U1024" over
    # 87 lines
    devices = "\n".join(f'  {{ ref = "U{i}", part = "eeprom-i2c" }},' for i in range(2, 32))
    path = tmp_path / "many.toml"
    path.write_text(f"""format = "pinlib.design/1"
title = "many targets (invented)"

[[bus]]
id = "i2c0"
protocol = "i2c"
mode = "fast"
supply = "3.3 V"
pullup = "100 Ω"
trace = {{ length = "5 cm", capacitance = "1 pF/cm" }}
devices = [
  {{ ref = "U1", part = "mcu-3v3", role = "controller" }},
{devices}
]
""", encoding="utf-8")
    monkeypatch.setenv("COLUMNS", "80")
    assert main(["check", str(path)]) == 1
    out = " ".join(capsys.readouterr().out.split())
    assert "receivers U1, U2, U3, U4, U5, U6, U7, U8 and 23 more read the low level" in out
    assert "U31" not in out
    main(["check", str(path), "--json"])
    data = json.loads(capsys.readouterr().out)
    vol = [c for b in data["buses"] for c in b.get("checks", []) if c["id"] == "v-ol"]
    vol += [c for b in data["buses"] for s in b.get("segments", []) for c in s["checks"]
            if c["id"] == "v-ol"]
    assert vol and len(vol[0]["details"]["receivers"]) == 31  # the JSON keeps every one
