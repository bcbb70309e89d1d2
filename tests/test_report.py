"""Tests of pinlib.present.report (the text of `pinlib check`) and its terminal helpers.

The demo's text at 80 and 120 columns is compared with the saved files under
tests/golden/text/ (PINLIB_UPDATE_TEXT_GOLDENS=1 rewrites them; see
tests/golden/README.md).  The rest: no line longer than the width, no escape code off a
terminal or under NO_COLOR, --quiet and --detail, the fix on a problem's line.
"""

from __future__ import annotations

import io
import os
import re
from pathlib import Path

import pytest

from pinlib.cli import main
from pinlib.cli.commands.check import render_text
from pinlib.engines.dispatch import check_file
from pinlib.present.report import CAUTION_LINE, bus_line, format_text, problem_line
from pinlib.present.terminal import columns, status_word, use_colour, width, wrap

ROOT = Path(__file__).resolve().parents[1]
DEMO_ARG = "workbooks/designs/demo-board.toml"   # as a user in the checkout types it
GOLDEN = ROOT / "tests" / "golden" / "text"
UPDATE = os.environ.get("PINLIB_UPDATE_TEXT_GOLDENS") == "1"
ESC = "\x1b["

#: (golden file, COLUMNS, extra arguments)
CASES = [("demo-80.txt", 80, []), ("demo-120.txt", 120, []),
         ("demo-detail-80.txt", 80, ["--detail"]), ("demo-quiet-80.txt", 80, ["--quiet"])]


def _run(monkeypatch, capsys, cols, *argv):
    monkeypatch.chdir(ROOT)
    monkeypatch.setenv("COLUMNS", str(cols))
    monkeypatch.delenv("NO_COLOR", raising=False)
    code = main(["check", DEMO_ARG, *argv])
    return code, capsys.readouterr().out


@pytest.fixture(scope="module")
def demo():
    return check_file(ROOT / DEMO_ARG)


@pytest.mark.parametrize("name, cols, argv", CASES)
def test_demo_text_matches_its_golden(monkeypatch, capsys, name, cols, argv):
    code, out = _run(monkeypatch, capsys, cols, *argv)
    assert code == 0  # the demo warns, it does not fail
    path = GOLDEN / name
    if UPDATE:
        path.parent.mkdir(parents=True, exist_ok=True)
        path.write_text(out, encoding="utf-8")
    assert out == path.read_text(encoding="utf-8"), (
        f"{name} differs; if the change is meant, rerun with PINLIB_UPDATE_TEXT_GOLDENS=1")


@pytest.mark.parametrize("cols", [40, 60, 80, 100, 120])
@pytest.mark.parametrize("argv", [[], ["--detail"], ["--quiet"]])
def test_no_line_is_wider_than_the_width(monkeypatch, capsys, cols, argv):
    _, out = _run(monkeypatch, capsys, cols, *argv)
    assert max(len(ln) for ln in out.splitlines()) <= cols


def test_default_fits_a_screen_problems_first(monkeypatch, capsys):
    _, out = _run(monkeypatch, capsys, 80)
    lines = out.splitlines()
    assert len(lines) <= 24  # one terminal screen: the aim of issue 15
    assert lines[0] == CAUTION_LINE
    # the demo's warnings come before the buses, each with its fix on its line (the
    # sensor bus's SDA joined across Q1 without a fall time, Q1's gate drive)
    assert lines[2].startswith("WARN sensors/main-3v3 SDA: Fall time")
    warn = next(i for i, ln in enumerate(lines) if ln.startswith("WARN sensors/sensor-1v8 Q1"))
    bus = next(i for i, ln in enumerate(lines) if ln.startswith("WARN sensors (I2C)"))
    assert warn < bus
    assert "fix: a MOSFET" in " ".join(lines[warn:bus])
    for b in ("power (SMBus)", "flash (SPI)", "display (SPI)"):
        assert any(ln.startswith(f"PASS {b}") for ln in lines)
    assert lines[-1].endswith("--detail") or "--detail" in " ".join(lines[-3:])
    assert "pinlib check workbooks/designs/demo-board.toml --detail" in " ".join(lines)


def test_problem_line_holds_value_limit_margin_and_fix(demo):
    bus = demo.bus("sensors")
    seg = next(s for s in bus.segments if s.id == "sensor-1v8")
    c = seg.check("bridge-gate-drive")
    text = problem_line(bus, seg.id, None, c)
    # 210 mV overdrive against the 0 V failing limit (common practice, no source: the
    # demo's translator class, low rail 1.71 V − threshold 1.5 V)
    assert text.startswith("WARN sensors/sensor-1v8 Q1: Translator gate drive 210 mV")
    assert "limit ≥ 0 V" in text and "margin +210 mV" in text
    # a warning at a positive margin says the band it warns within (the 1 V rule of
    # thumb, common practice, no source), which the line did not
    assert "margin +210 mV (warns below 1 V)" in text
    assert text.endswith("; fix: " + c.fix)


def test_a_fix_in_the_message_is_printed_once(tmp_path):
    # the demo with U4 on a switched rail: its power-off check has no value, so its line
    # shows the message, which carries the fix already (it was printed twice)
    board = (ROOT / DEMO_ARG).read_text(encoding="utf-8")
    old = '{ ref = "U4", part = "eeprom-i2c" }'
    assert old in board
    design = tmp_path / "switched.toml"
    design.write_text(board.replace(old, old[:-2] + ", switched = true }"), encoding="utf-8")
    result = check_file(design)
    bus = result.bus("sensors")
    seg = next(s for s in bus.segments if s.id == "main-3v3")
    c = next(c for c in seg.checks if c.id == "power-off" and c.subject == "U4")
    assert c.status != "pass" and c.fix and c.value is not True
    text = problem_line(bus, seg.id, None, c)
    assert text.count(c.fix) == 1


def test_bus_lines_carry_the_figures_of_their_protocol(demo):
    i2c = bus_line(demo.bus("power"))
    for words in ("Cb 77.7 pF", "Rp 766 Ω…30.7 kΩ", "chosen 4.7 kΩ", "tr 154 ns"):
        assert words in i2c  # figures as the engine returned them, 3 digits
    spi = bus_line(demo.bus("flash"))
    assert "max clock 24 MHz (set by f_max U1)" in spi and "worst margin" in spi


def test_quiet_prints_only_problems(monkeypatch, capsys):
    _, out = _run(monkeypatch, capsys, 80, "--quiet")
    lines = out.splitlines()
    assert lines[0].startswith("WARN sensors/main-3v3 SDA: Fall time")
    assert any(ln.startswith("WARN sensors/sensor-1v8 Q1") for ln in lines)
    assert not any(ln.startswith("PASS") for ln in lines)
    assert CAUTION_LINE not in out


def test_quiet_all_pass_prints_the_summary_line(tmp_path, monkeypatch, capsys):
    board = (ROOT / DEMO_ARG).read_text(encoding="utf-8")
    # the demo without its 1.8 V segment's translator warning: only the SMBus bus kept
    design = tmp_path / "power.toml"
    text = board.split("\n[[bus]]")[0]
    power = [b for b in board.split("\n[[bus]]")[1:] if 'protocol = "smbus"' in b]
    design.write_text(text + "\n[[bus]]" + power[0], encoding="utf-8")
    monkeypatch.setenv("COLUMNS", "80")
    assert main(["check", str(design), "--quiet"]) == 0
    out = capsys.readouterr().out
    assert len(out.splitlines()) <= 2 and out.startswith("PASS ")
    assert "0 warn, 0 fail on 1 bus" in out


def test_detail_shows_every_check_and_each_figure_once(monkeypatch, capsys, demo):
    _, out = _run(monkeypatch, capsys, 120, "--detail")
    n = sum(1 for b in demo.results() for _ in b.all_checks())
    rows = [ln for ln in out.splitlines() if re.match(r"\s+(PASS|WARN|FAIL)\s{2,}\S", ln)]
    assert len(rows) == n
    # pullup = pullup_resistor = pullup_sda = pullup_scl on main-3v3: one row, the resistor
    seg = out.split("segment main-3v3")[1].split("segment sensor-1v8")[0]
    assert seg.count("Pull-up resistor") == 1 and "Pull-up, effective" not in seg
    assert "Bus capacitance Cb, SDA" not in seg
    # a note shared by the lines of an SPI bus is printed once for the bus
    flash = out.split("bus flash (SPI)")[1].split("bus display")[0]
    assert flash.count("distributed model: one lumped capacitance") == 1
    # every source once per bus, numbered
    assert flash.count("mcu-3v3 supply.max (mcu-3v3.toml), generic: typical of the class "
                       "(common practice)") == 1


def test_detail_keeps_units_labels_and_sources(monkeypatch, capsys):
    _, out = _run(monkeypatch, capsys, 80, "--detail")
    assert out.startswith("Caution: pinlib's figures are estimates")
    assert "Rp(min)" in out and "Bus capacitance Cb" in out and "rp_min " not in out
    assert "UM10204 rev. 6, table 10" in out


def test_no_escape_codes_off_a_terminal_or_with_no_color(monkeypatch, capsys, demo):
    _, out = _run(monkeypatch, capsys, 80)
    assert ESC not in out  # capsys is not a terminal

    class Tty(io.StringIO):
        def isatty(self):
            return True

    args = type("Args", (), {"detail": False, "quiet": False})()
    monkeypatch.delenv("NO_COLOR", raising=False)
    coloured = render_text(demo, args, stream=Tty())
    assert ESC in coloured and "\x1b[33mWARN\x1b[0m" in coloured
    monkeypatch.setenv("NO_COLOR", "1")
    assert ESC not in render_text(demo, args, stream=Tty())
    monkeypatch.setenv("NO_COLOR", "")  # empty: the convention says colour stays on
    assert use_colour(Tty())


def test_colour_does_not_change_the_layout(demo):
    plain = format_text(demo, width=80)
    coloured = format_text(demo, width=80, colour=True)
    assert re.sub(r"\x1b\[[0-9;]*m", "", coloured) == plain


def test_width_honours_columns(monkeypatch):
    monkeypatch.setenv("COLUMNS", "132")
    assert width() == 132
    monkeypatch.setenv("COLUMNS", "10")
    assert width() == 40  # the narrowest layout
    monkeypatch.delenv("COLUMNS")
    assert width() >= 40


@pytest.mark.parametrize("env_columns", [None, "132", "0", "-5", "wide", " 90 "])
@pytest.mark.parametrize("env_lines", [None, "30"])
@pytest.mark.parametrize("tty", [(123, 40), (0, 0), OSError])
def test_columns_are_those_of_shutil(monkeypatch, env_columns, env_lines, tty):
    """terminal.columns() takes the width without importing shutil: the same number as
    shutil.get_terminal_size for every COLUMNS, LINES and terminal (or none)."""
    import shutil

    for name, value in (("COLUMNS", env_columns), ("LINES", env_lines)):
        if value is None:
            monkeypatch.delenv(name, raising=False)
        else:
            monkeypatch.setenv(name, value)

    def terminal_size(fd=None):
        if tty is OSError:
            raise OSError("not a terminal")
        return os.terminal_size(tty)

    monkeypatch.setattr(os, "get_terminal_size", terminal_size)
    for fallback in (80, 100):
        assert columns(fallback) == shutil.get_terminal_size((fallback, 24)).columns
    monkeypatch.setattr("sys.__stdout__", None)  # no standard output at all
    assert columns() == shutil.get_terminal_size((80, 24)).columns


def test_wrap_keeps_a_number_with_its_unit():
    lines = wrap("a b c rise time 242 ns over the limit", 18)
    assert all(len(ln) <= 18 for ln in lines)
    assert any("242 ns" in ln for ln in lines)
    assert status_word("fail") == "FAIL" and status_word("fail", True).startswith(ESC)


def test_unknown_mode_is_refused(demo):
    with pytest.raises(ValueError):
        format_text(demo, mode="loud")


def test_readme_tour_shows_the_current_default_output():
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    sample = (GOLDEN / "demo-80.txt").read_text(encoding="utf-8")
    assert f"```text\n{sample}```" in readme


def test_a_check_without_a_value_gives_its_reason_on_its_line(monkeypatch, capsys):
    # a 3.3 V flash answering a 5 V controller: CIPO never reaches VIH, so the CIPO
    # setup time does not exist (test data, invented; see tests/test_pp_limits.py)
    monkeypatch.setenv("COLUMNS", "200")
    # (a warning: the thresholds it never crosses are typical of their class)
    assert main(["check", str(ROOT / "tests" / "data" / "spi-cipo-never-high.toml")]) == 0
    out = capsys.readouterr().out
    para = " ".join(out.split())   # the check's lines, wrapped or not
    line = para[para.index("WARN flash U2: CIPO setup: "):]
    assert "never crosses" in line and "fix: " in line.split("WARN", 2)[1]
    assert "max clock — (not computed" in out
    assert not re.search(r"\bnan\b|\binf\b|∞", out, re.IGNORECASE)


def test_the_bus_line_gives_the_effective_pull_up_beside_the_chosen_one(tmp_path):
    # reproducer: with a module's own 10 kΩ pull-ups at U4, "Rp 1.95 kΩ…3.16 kΩ, chosen
    # 3.3 kΩ" read as a resistor outside its window; the lines see 3.3 kΩ ∥ 10 kΩ
    design = tmp_path / "d.toml"
    design.write_text((Path(DEMO_ARG)).read_text(encoding="utf-8"), encoding="utf-8")
    assert main(["swap", str(design), "U4=sensor-breakout-module", "--write"]) in (0, 1)
    res = check_file(design)
    seg = next(s for s in res.bus("sensors").segments if s.id == "main-3v3")
    own, eff = seg.figures["pullup_resistor"].value, seg.figures["pullup_sda"].value
    assert own == 3300.0 and eff < own
    line = bus_line(res.bus("sensors"))
    assert "chosen 3.3 kΩ (2.48 kΩ with the pull-ups in parts)" in " ".join(line.split())
    # derived: 3.3 kΩ ∥ 10 kΩ = 2.481 kΩ (the built-in sensor-breakout-module class's
    # pull-ups, 10 kΩ: common practice, no source)
    assert eff == pytest.approx(1 / (1 / 3300 + 1 / 10e3), rel=1e-9)
    # no addition where the lines see the resistor alone
    plain = check_file(DEMO_ARG)
    assert "with the pull-ups in parts" not in bus_line(plain.bus("sensors"))


def test_a_bus_line_names_the_failing_check_as_its_worst_not_a_deeper_warning():
    # invented: an SPI bus whose edge-time rule of thumb warns at -89 % while a setup
    # check fails at -5 %; "worst margin -89 % (Edge time)" beside FAIL pointed the
    # reader at a warning, away from the check that fails
    from pinlib.model.result import BusResult, Check
    from pinlib.present.report import bus_line

    bus = BusResult(id="s", protocol="spi")
    bus.add(Check("edge-time", "warn", 9e-9, 1e-9, "s", -0.89, "rule of thumb", "slow"))
    bus.add(Check("copi-setup", "fail", 1.9e-9, 2e-9, "s", -0.05, "datasheet", "short",
                  subject="U2"))
    bus.add(Check("f-max", "pass", 1e6, 2e6, "Hz", 0.5, "datasheet", "ok", subject="U2"))
    line = bus_line(bus)
    assert "worst margin −5 % (COPI setup U2)" in line.replace("-", "−"), line


def test_a_bus_that_warns_on_a_margin_in_seconds_alone_names_it_as_its_worst():
    # invented: a CIPO setup slack of -38 ps against a t_setup the controller does not
    # record (taken as 0, margin_unit "s") warns; the bus line named a passing supply
    # check's +4 % as the worst margin, away from the check that warns.  A margin in a
    # unit is still never ranked against fractions of a status that has them
    from pinlib.model.result import BusResult, Check
    from pinlib.present.report import bus_line

    bus = BusResult(id="s", protocol="spi")
    bus.add(Check("cipo-setup", "warn", -3.8e-11, 0.0, "s", -3.8e-11, "taken as 0", "short",
                  subject="U2", margin_unit="s"))
    bus.add(Check("cipo-hold", "pass", 9e-9, 0.0, "s", 9e-9, "taken as 0", "ok",
                  subject="U2", margin_unit="s"))
    bus.add(Check("supply-range", "pass", 3.46, 3.6, "V", 0.04, "datasheet", "ok",
                  subject="U1"))
    line = bus_line(bus)
    assert "worst margin −38 ps (CIPO setup U2)" in line, line
    # with a relative margin among the warnings, that one is named
    bus.add(Check("edge-time", "warn", 9e-9, 1e-9, "s", 0.05, "rule of thumb", "slow"))
    assert "worst margin +5 % (Edge time)" in bus_line(bus)


def test_a_bus_that_fails_on_a_check_without_a_margin_names_it_not_a_passing_one():
    # invented GPIO reset line whose open-drain driver has no pull-up: its yes/no
    # pull-up check fails (no margin) while supply checks pass; the bus line read
    # "FAIL reset (GPIO): worst margin +4 % (Supply range U2)", naming a passing check
    from pinlib.model.result import BusResult, Check, LineResult

    bus = BusResult(id="reset", protocol="gpio")
    bus.add(Check("supply-range", "pass", 1.71, 1.65, "V", 0.04, "datasheet", "ok",
                  subject="U2"))
    ln = LineResult(signal="reset")
    ln.add(Check("pull-up", "fail", None, None, "", None, "common practice, no source",
                 "never rises", subject="U10"))
    bus.lines.append(ln)
    line = bus_line(bus)
    assert "Supply range" not in line and "+4 %" not in line, line
    assert "failing check Pull-up (RESET U10)" in line, line
    # a warning without a margin is named the same way beside passing margins
    ln.checks[0] = Check("contention", "warn", 2, 1, "", None, "common practice, no source",
                         "two drivers")
    assert "warning check Contention (RESET)" in bus_line(bus)
    # and a check of the same status with a margin is still named by its margin
    ln.add(Check("overshoot", "warn", 0.3, 0.3, "V", 0.02, "rule", "high", subject="U2"))
    assert "worst margin +2 % (Overshoot RESET U2)" in bus_line(bus)


def test_a_relation_and_a_sign_stay_with_their_number_and_the_clock_names_its_check(
        monkeypatch, capsys):
    # invented 1 km link: at 80 columns "margin <" ended a line and "-999 %" began the
    # next, and the bus line read "set by cipo-setup U2" where the checks say "CIPO setup"
    monkeypatch.setenv("COLUMNS", "80")
    main(["check", str(ROOT / "tests" / "data" / "spi-one-km.toml")])
    lines = capsys.readouterr().out.splitlines()
    assert all(len(ln) <= 80 for ln in lines)
    for ln in lines:
        assert not ln.rstrip().endswith(("<", ">", "≤", "≥", "margin")), ln
    text = " ".join(ln.strip() for ln in lines)
    assert "set by CIPO setup U2" in text and "cipo-setup" not in text
    assert wrap("so the margin < -999 % here", 20) == ["so the", "    margin < -999 %",
                                                        "    here"]


def test_detail_names_the_path_that_sets_the_clock_as_the_checks_do(monkeypatch, capsys):
    # --detail listed "Highest clock set by  cipo-first-bit U3", the check's id, where the
    # summary line and the checks table say "CIPO first bit U3"
    monkeypatch.setenv("COLUMNS", "80")
    main(["check", str(ROOT / "tests" / "data" / "spi-route.toml"), "--detail"])
    out = capsys.readouterr().out
    (row,) = [ln for ln in out.splitlines() if "Highest clock set by" in ln]
    # and, as the summary line does, the CS lead that check rests on (mcu-3v3 records
    # no t_cs_setup)
    assert row.split("set by", 1)[1].strip() == "CIPO first bit U3, on an assumed CS lead"
    main(["check", str(ROOT / "tests" / "data" / "spi-route.toml")])
    assert "set by CIPO first bit U3, on an assumed CS lead" in " ".join(
        capsys.readouterr().out.split())


def test_detail_notes_name_a_figure_by_its_label(monkeypatch, capsys):
    # the SPI notes start with their figure's JSON id ("max_clock 24 MHz: ..."); --detail
    # lists the figure above as "Highest clock" and its notes say the same
    _, out = _run(monkeypatch, capsys, 200, "--detail")
    assert "- highest clock 24 MHz: what the timing budget" in out  # the engine's words
    assert "- CIPO setup margin: not computed" in out
    assert not re.search(r"\b(max_clock|max_clock_edge_rule|cipo_setup_margin)\b", out)


def test_the_ringing_row_says_its_numbers_count_re_crossings(monkeypatch, capsys, demo):
    # the ringing check's value and limit are counts (unit "", as the result format has
    # a dimensionless number): the checks table's label says of what, so that a row
    # reads "Ringing re-crossings ... 0  0" rather than a bare "0  0"
    _, out = _run(monkeypatch, capsys, 80, "--detail")
    rows = [ln for ln in out.splitlines() if re.match(r"\s+(PASS|WARN|FAIL)\s+Ringing", ln)]
    assert rows and all(re.search(r"Ringing re-crossings\s+U\d+\s+0\s+0\s", r)
                        for r in rows), rows
    ringing = [c for b in demo.results() for _, _, c in b.all_checks() if c.id == "ringing"]
    assert ringing and all(c.to_json()["unit"] == "" for c in ringing)


def test_the_warning_band_says_a_rating_has_none(capsys, tmp_path):
    # the GPIO example's status line read "(warn below 10% margin)" above "Supply range
    # U3 ... +2 %" passing: a rating (a part's supply range, a clock limit, an input's
    # highest voltage) passes up to its limit, and the line now says so, in every form
    gpio = ROOT / "workbooks" / "designs" / "gpio-reset-board.toml"
    rule = ("a rating — a supply range, a clock limit, the highest DC voltage on a pin — "
            "passes up to its limit")
    assert main(["check", str(gpio), "--detail"]) == 0
    assert f"(warn below 10 % margin; {rule})" in " ".join(capsys.readouterr().out.split())
    for kind, name in (("--md", "r.md"), ("--html", "r.html")):
        assert main(["report", str(gpio), kind, str(tmp_path / name)]) == 0
        text = " ".join((tmp_path / name).read_text(encoding="utf-8").split())
        assert f"(warning below 10 % margin; {rule})" in text, kind


def test_the_detail_command_of_a_long_path_pastes_whole_at_80_columns():
    # "Every figure and check: pinlib check /tmp/.../a-rather-long-folder-name-for-board"
    # then "    s/and-another-.../gpio-reset-board.toml --detail": the path was cut inside
    # a name, and what a reader pasted was no longer the command.  The command is
    # continued as a shell reads it: lines end in a backslash, a word too long for a
    # line goes on after one with no space (the shell joins the two halves)
    import shlex

    result = check_file(ROOT / "workbooks" / "designs" / "gpio-reset-board.toml")
    path = ("/tmp/hb/a-rather-long-folder-name-for-boards/"
            "and-another-level-of-folders-below-it/gpio-reset-board.toml")  # invented
    more = f"pinlib check {path} --detail"
    text = format_text(result, width=80, more=more)
    lines = text.splitlines()
    assert all(len(ln) <= 80 for ln in lines), text
    start = next(i for i, ln in enumerate(lines) if ln.startswith("Every figure and check:"))
    pasted = "\n".join(lines[start:]).removeprefix("Every figure and check:")
    assert shlex.split(pasted.replace("\\\n", "")) == ["pinlib", "check", path, "--detail"]
    # a command that fits is one line below the words, as before
    short = format_text(result, width=80, more="pinlib check board.toml --detail")
    assert "Every figure and check: pinlib check board.toml --detail" in short


def test_a_long_path_in_the_detail_and_the_swap_heading_is_never_cut_inside_a_name(
        tmp_path, capsys, monkeypatch):
    # "design: ... (/tmp/hb/a-r" then "    ather-long-folder-name-...": --detail's
    # heading and swap's cut a design's path where the width fell
    deep = tmp_path / "a-rather-long-folder-name-for-boards" / "and-another-level-of-folders"
    deep.mkdir(parents=True)
    design = deep / "gpio-reset-board.toml"
    design.write_text((ROOT / "workbooks" / "designs" / "gpio-reset-board.toml")
                      .read_text(encoding="utf-8"), encoding="utf-8")
    monkeypatch.setenv("COLUMNS", "80")
    for argv in (["check", str(design), "--detail"], ["swap", str(design), "U3=mcu-3v3"]):
        main(argv)
        lines = capsys.readouterr().out.splitlines()
        assert all(len(ln) <= 80 for ln in lines)
        for name in (*tmp_path.parts[1:], "a-rather-long-folder-name-for-boards",
                     "and-another-level-of-folders", "gpio-reset-board.toml"):
            assert any(name in ln for ln in lines), (argv[0], name)


def test_a_yes_no_check_shows_what_it_compared_in_every_table():
    """The spi-mode check's value and limit cells: the bus's mode against the part's
    modes, the same in the text, the report and the widgets (one function makes them)."""
    from pinlib.model.result import check_true
    from pinlib.present.review.text import _check_cells
    from pinlib.present.values import check_cells

    # invented test input: mode 1 on a part stating modes 0 and 3
    c = check_true("spi-mode", False, "invented", "SPI mode 1 is not one of U7's modes",
                   subject="U7", details={"mode": 1, "modes": [3, 0]})
    assert check_cells(c) == ("mode 1", "modes 0, 3") == _check_cells(c)
    plain = check_true("pullup-present", True, "invented", "a pull-up is placed")
    assert check_cells(plain) == ("", "") and _check_cells(plain) == ("yes", "")
