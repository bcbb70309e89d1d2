"""Tests of the workbench widgets (pinlib.present.widgets) and of one workbook exported to HTML.

The widget classes are driven from Python the way a user turns their knobs (``set``
and the named methods).  What each test holds them to:

* the figures a widget shows are what :func:`pinlib.engines.dispatch.check_design` returns for the
  design text the widget wrote, and the same as for an equivalent design file written
  by hand here;
* a few figures against published relations (the I2C rise time, the probe's share of a
  measured rise, series termination, the SPI budget's half-period term);
* each chart is redrawn when its data changes (its Vega-Lite data differ) and its
  operating point is the engine's figure;
* refusals (a value without a unit, a part that cannot serve a position) are shown
  beside the field and change nothing.

The browser test executes workbook 02 with nbclient (widget state stored), exports it
with nbconvert's HTMLExporter, and opens the page in headless Chromium: the widget state
must be embedded, the static copy must carry the charts as inline SVG, and the screenshot
must show them (pixel variety and the chart palette's colours).
"""

from __future__ import annotations

import html
import json
import math
import re
import shutil
import subprocess
import sys
import textwrap
from pathlib import Path

import pytest

pytest.importorskip("ipywidgets")
pytest.importorskip("altair")
pytest.importorskip("vl_convert")

from pinlib.core import messages as M  # noqa: E402
from pinlib.core.errors import DesignError, InputError, WriteError  # noqa: E402
from pinlib.core.quantity import format_si  # noqa: E402
from pinlib.core.tomlfile import tomllib  # noqa: E402
from pinlib.engines.dispatch import check_design, check_file  # noqa: E402
from pinlib.library import load_library  # noqa: E402
from pinlib.model.design import design_from_text, load_design  # noqa: E402
from pinlib.present import charts  # noqa: E402
from pinlib.present.widgets import (  # noqa: E402
    BusBuilder,
    LineExplorer,
    PartRecorder,
    SpiBudget,
    SwapExplorer,
    find_file,
)

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "workbooks" / "designs" / "demo-board.toml"
WORKBOOKS = ROOT / "workbooks"

# published: SI Brochure, 9th edition (BIPM 2019), table 7 (SI prefixes)
PREFIX = {"T": 1e12, "G": 1e9, "M": 1e6, "k": 1e3, "": 1.0, "m": 1e-3, "µ": 1e-6, "n": 1e-9,
          "p": 1e-12, "f": 1e-15}
# published: UM10204 I2C-bus specification rev. 6 (2014), §7.1: tr = 0.8473 × Rp × Cb
# (30 % to 70 % of VDD), printed to four digits
I2C_RISE_FACTOR = 0.8473


@pytest.fixture(scope="module")
def library():
    return load_library()


def _same_result(widget_result, text, library):
    again = check_design(design_from_text(tomllib.loads(text), text, None, library=library))
    assert widget_result.to_json() == again.to_json()


def _values(figures: dict) -> dict:
    return {k: f.value for k, f in figures.items()}


def _axis_factor(spec: dict, channel: str) -> float:
    """The SI factor of a chart axis from its title, e.g. 'Bus capacitance Cb (pF)'."""
    for layer in spec["layer"]:
        enc = layer.get("encoding", {}).get(channel, {})
        title = (enc.get("axis") or {}).get("title")
        if title:
            m = re.search(r"\(([TGMkmµnpf]?)[A-Za-zΩ]+\)$", title)
            assert m, title
            return 1.0 / PREFIX[m.group(1)]
    raise AssertionError(f"no {channel} axis title")


# =========================================================================== BusBuilder

HAND_WRITTEN = """\
format = "pinlib.design/1"
title = "Hand-written twin of the builder's bus (invented)"

[board.geometry.outer]
kind = "microstrip"
width = "0.20 mm"
height = "0.18 mm"
thickness = "35 µm"
er = 4.2

[[bus]]
id = "main"
protocol = "i2c"
mode = "fast"
supply = "3.3 V"
supply_tolerance = "5 %"
pullup = "4.7 kΩ"
pullup_tolerance = "1 %"
trace = { length = "14 cm", geometry = "outer" }
extra_capacitance = "12 pF"
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller" },
  { ref = "U2", part = "eeprom-i2c" },
  { ref = "U3", part = "rtc-i2c" },
]
"""


@pytest.fixture(scope="module")
def builder(library):
    return BusBuilder(library, peripherals=["eeprom-i2c", "rtc-i2c"], length=0.14)


def test_bus_builder_figures_are_the_engines_for_its_design(builder, library):
    builder.set(pullup="auto", length=0.14, extra_capacitance=0.0)
    assert builder.error is None
    _same_result(builder.result, builder.text, library)
    assert builder.text == builder.design_text()


def test_bus_builder_matches_a_hand_written_design(builder, library):
    builder.set(protocol="i2c", mode="fast", supply=3.3, supply_tolerance=0.05,
                geometry="microstrip", width=0.2e-3, height=0.18e-3, thickness=35e-6, er=4.2,
                length=0.14, extra_capacitance=12e-12, pullup=4700.0, pullup_tolerance=0.01)
    twin = check_design(design_from_text(tomllib.loads(HAND_WRITTEN), HAND_WRITTEN, None,
                                         library=library)).bus("main")
    assert _values(builder.figures) == _values(twin.figures)
    assert [c.to_json() for _, _, c in builder.bus_result.all_checks()] == \
        [c.to_json() for _, _, c in twin.all_checks()]


def test_bus_builder_rise_time_is_the_published_rc_rise(builder):
    builder.set(pullup=4700.0, pullup_tolerance=0.0, supply_tolerance=0.0, length=0.14,
                extra_capacitance=12e-12)
    f = builder.figures
    expected = I2C_RISE_FACTOR * 4700.0 * f["bus_capacitance_sda"].value
    assert f["rise_time_sda"].value == pytest.approx(expected, rel=1e-4)


def test_bus_builder_redraws_the_window_with_the_engines_operating_point(builder):
    builder.set(pullup="auto", length=0.05, extra_capacitance=0.0)
    before, renders = builder.window.data(), builder.window.renders
    cb_short = builder.figures["bus_capacitance_sda"].value
    builder.set(length=0.60)
    after = builder.window.data()
    assert builder.figures["bus_capacitance_sda"].value > cb_short
    assert after != before and builder.window.renders == renders + 1
    w = builder.window_data
    assert w.chosen_cb == builder.figures["bus_capacitance_sda"].value
    assert w.chosen_rp == builder.figures["pullup_sda"].value
    point = after[-1][0]  # the last layer is the chosen point
    spec = builder.window.spec
    assert point["cb"] == pytest.approx(w.chosen_cb * _axis_factor(spec, "x"), rel=1e-9)
    assert point["rp"] == pytest.approx(w.chosen_rp * _axis_factor(spec, "y"), rel=1e-9)
    assert "<svg" in builder.window.svg and builder.window.widget.value.count("<svg") == 1
    # an unchanged design is not drawn again
    builder.set(length=0.60)
    assert builder.window.renders == renders + 1


def test_bus_builder_auto_pullup_lies_in_the_window_and_moves_the_slider(builder):
    builder.set(pullup="auto", length=0.14)
    chosen = builder.figures["pullup_resistor"].value
    assert builder.window_data.rp_min <= chosen <= builder.window_data.rp_max_chosen
    assert builder.pullup.value == chosen and builder.pullup.disabled
    assert 'pullup = "auto"' in builder.text
    builder.set(pullup=2200.0)
    assert not builder.pullup.disabled and builder.figures["pullup_resistor"].value == 2200.0
    assert 'pullup = "2200 Ω"' in builder.text


def test_bus_builder_refuses_unknown_settings_and_values_off_the_series(builder):
    with pytest.raises(InputError, match="unknown setting"):
        builder.set(colour="red")
    with pytest.raises(InputError, match="pull-up slider"):
        builder.set(pullup=2345.0)
    with pytest.raises(InputError, match="range"):
        builder.set(supply=50.0)
    with pytest.raises(InputError, match="unknown mode"):
        builder.set(mode="turbo")


def test_bus_builder_filters(library):
    b = BusBuilder(library, peripherals=())
    b.set(category="memory")
    assert b.pick.options and all(library.get(v).category == "memory" for _, v in b.pick.options)
    b.set(category="any", function="gpio")
    assert all("gpio" in library.get(v).functions() for _, v in b.pick.options)
    b.set(function="any", supply=1.8, fits_supply=True)
    offered = [v for k, v in list(b.pick.options) + list(b.controller.options)
               if not k.endswith("(does not fit)")]
    assert offered
    for v in offered:
        s = library.get(v).supply
        assert s is None or s.min.at() <= 1.8 <= s.max.at()
    # no controller runs at 1 V: the controller stays, the note under it says why, and
    # the engine's supply-range check warns (the class's typical range: a soft limit)
    b.set(supply=1.0)
    assert b.controller.value == "mcu-3v3" and b.error is None
    assert "mcu-3v3" in b.controller_note.value and "does not hold" in b.controller_note.value
    assert "(does not fit)" in dict((v, k) for k, v in b.controller.options)["mcu-3v3"]
    assert any(c.id == "supply-range" and c.status == "warn" and c.margin < 0
               and c.details["limit_basis"] == "generic"
               for _, _, c in b.bus_result.all_checks())
    # back to 3.3 V: the same controller, the note gone
    b.set(supply=3.3)
    assert b.controller.value == "mcu-3v3" and b.controller_note.value == ""
    assert all("(does not fit)" not in k for k, _ in b.controller.options)


def test_bus_builder_places_and_removes_parts(library):
    b = BusBuilder(library, peripherals=["eeprom-i2c"])
    ref = b.add_peripheral("eeprom-i2c")
    assert ref == "U3" and b.peripherals == [("U2", "eeprom-i2c"), ("U3", "eeprom-i2c")]
    assert [d.ref for d in b.design.buses[0].devices] == ["U1", "U2", "U3"]
    b.remove_peripheral("U2")
    assert b.peripherals == [("U3", "eeprom-i2c")]
    with pytest.raises(InputError, match="cannot sit on an open-drain bus"):
        b.add_peripheral("nor-flash-spi")
    with pytest.raises(InputError, match="no placed part"):
        b.remove_peripheral("U9")


def test_bench_panel_takes_the_probe_out_of_a_measured_rise(builder):
    builder.set(pullup=2200.0, length=0.14, rise_measured=300e-9, c_probe=10e-12,
                levels=(0.3, 0.7))
    b = builder.bench
    assert b.rp == builder.window_data.chosen_rp == 2200.0  # no part carries a pull-up
    # derived from UM10204 rev. 6 §7.1: t(30-70 %) = 0.8473 Rp (Cb + C_probe)
    c_total = 300e-9 / (I2C_RISE_FACTOR * 2200.0)
    assert b.cb == pytest.approx(c_total - 10e-12, rel=1e-4)
    assert b.rise == pytest.approx(I2C_RISE_FACTOR * 2200.0 * b.cb, rel=1e-4)
    assert b.cb_model == builder.figures["bus_capacitance_sda"].value
    # faster than the probe alone allows: refused beside the panel
    builder.set(rise_measured=5e-9)
    assert builder.bench is None and "faster than the probe" in builder.bench_html.value
    builder.set(rise_measured=0.0)


def test_bench_panel_on_the_built_bus_gives_pinlib_measureds_answer(library, tmp_path,
                                                                     capsys, monkeypatch):
    """SDA of the bus built in the workbench takes the path a saved design's line
    takes: compare_rise, the function ``pinlib measured`` calls, and the panel shows its
    numbers."""
    from pinlib.cli import main
    from pinlib.engines.bench import compare_rise

    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    b = BusBuilder(library, peripherals=["eeprom-i2c"], length=0.14)
    b.set(pullup=2200.0, pullup_tolerance=0.01, rise_measured=300e-9, c_probe=10e-12,
          levels=(0.3, 0.7))
    got = b.bench
    # derived: the same function as pinlib measured, on the design the controls describe
    engine = compare_rise(b.design, "i2c", 300e-9, 10e-12, levels=(0.3, 0.7), signal="sda")
    assert got.line is None and got.comparison == engine
    assert (got.rp, got.cb, got.rise, got.cb_model) == (engine.rp, engine.cb,
                                                        engine.rise_alone, engine.cb_model)
    # and the command itself on the design saved from the panel, for the same reading
    path = b.save(tmp_path / "built.toml")
    code = main(["measured", str(path), "--bus", "i2c", "--rise", "300ns", "--probe", "10pF",
                 "--levels", "30,70", "--json"])
    cli = json.loads(capsys.readouterr().out)
    assert cli == engine.to_json() and code == (0 if engine.verdict == "agrees" else 1)
    # derived from UM10204 rev. 6 §7.1 (docs/references.md): the 30-70 % rise is
    # 0.8473 Rp C, so C = 300 ns / (0.8473 x 2.2 kΩ) = 160.94 pF and Cb = C - 10 pF
    # = 150.94 pF; the factor has four digits, hence rel=1e-4
    assert got.rp == pytest.approx(2200.0, rel=1e-12)  # no part on the bus has a pull-up
    assert got.cb == pytest.approx(150.94e-12, rel=1e-4)
    # what the panel shows are those numbers, in the command's words
    shown = html.unescape(b.bench_html.value).replace("\u00a0", " ")
    f = format_si
    for text in ("SDA of the bus built here, with Rp = 2.2 kΩ (±1 %; every pull-up on SDA "
                 "in parallel)", f"<b>{f(engine.cb, 'F')}</b>", "151 pF",
                 f"({f(engine.cb_low, 'F')} to {f(engine.cb_high, 'F')} over the pull-up's "
                 "tolerance", f"the model's Cb <b>{f(engine.cb_model, 'F')}</b>",
                 f"without the probe <b>{f(engine.rise_alone, 's')}</b>",
                 engine.verdict_text()[1:]):
        assert text in shown, (text, shown)
    assert all(f"<li>{r}</li>" in shown for r in engine.revisit)
    assert not re.search(r"\de[+-]\d|\bnan\b|\binf\b", shown, re.IGNORECASE)


def test_bench_panel_writes_a_range_down_to_zero_in_pf(library):
    """A rise barely longer than the probe alone gives puts the low end of the Cb range
    at 0 (it is clamped there); the panel writes it "0 pF", as it writes a contribution
    of 0, not "0 F"."""
    b = BusBuilder(library, peripherals=["eeprom-i2c"])
    b.set(pullup=2200.0, rise_measured=20e-9, c_probe=10e-12)
    got = b.bench.comparison
    # derived: 20 ns x 0.9 (the reading's -10 %) / (ln(7/3) x 2.2 kΩ x 1.01) = 9.6 pF,
    # under the 10 pF probe: the low end clamps to 0
    assert got.cb_low == 0.0
    shown = html.unescape(b.bench_html.value).replace("\u00a0", " ")
    assert f"(0 pF to {format_si(got.cb_high, 'F')} over" in shown, shown
    assert not re.search(r"\b0 F\b", shown), shown


def test_bench_messages_write_numbers_with_si_prefixes(library):
    import re

    b = BusBuilder(library, peripherals=["eeprom-i2c"])
    b.rise_measured.text.value = "5 ms"  # above the field's 1 ms
    refused = b.rise_measured.error_html.value
    assert "from 0 ns to 1 ms" in refused and not re.search(r"\de[+-]\d", refused)
    b.rise_measured.text.value = "5 ns"  # faster than the probe alone allows
    shown = b.bench_html.value
    assert "faster than the probe" in shown and not re.search(r"\de[+-]\d", shown)
    # pinlib measured's refusal: the shortest rise the probe alone gives, in ns
    assert re.search(r"probe alone gives through the pull-up [\d.]+ kΩ: [\d.]+ ns",
                     shown), shown


# ---------------------------------------------------------------- the bench panel on a
# saved design's line: a GPIO line an open-drain pin drives (pinlib measured's answer)
GPIO_RESET = ROOT / "workbooks" / "designs" / "gpio-reset-board.toml"


def test_bench_panel_offers_a_gpio_line_an_open_drain_pin_drives(library):
    b = BusBuilder(library, peripherals=["eeprom-i2c"])
    assert b.bench_line.options == (("SDA of the bus built here", ""),)
    b.set(bench_file=str(GPIO_RESET))
    # reset: the supervisor's open-drain output with the line's 10 kΩ pull-up; not
    # fpga-enable's enable, which the microcontroller drives push-pull
    assert b.bench_line.options == (("SDA of the bus built here", ""),
                                    ("reset, line reset", "reset/reset"))
    assert b.bench_line.value == "reset/reset"  # the first line offered
    said = " ".join(html.unescape(re.sub(r"<[^>]+>", " ", b.bench_line_note.value)).split())
    assert "1 line of gpio-reset-board.toml offered" in said
    assert ("fpga-enable, line enable: no open-drain pin drives this line" in said
            and "U1.gpio_out drives it push-pull" in said), said
    with pytest.raises(InputError, match="allowed values") as refused:
        b.set(bench_line="fpga-enable/enable")
    assert 'expected "" (SDA of the bus built here), reset/reset' in str(refused.value)
    assert "not offered: no open-drain pin drives this line" in str(refused.value)


def test_bench_panel_on_a_gpio_line_gives_pinlib_measureds_answer(library, capsys,
                                                                 monkeypatch):
    from pinlib.cli import main
    from pinlib.engines.bench import compare_rise

    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    b = BusBuilder(library, peripherals=["eeprom-i2c"])
    b.set(bench_file=str(GPIO_RESET), bench_line="reset/reset", rise_measured=800e-9,
          c_probe=10e-12, levels=(0.1, 0.9))
    got = b.bench
    # derived: same engine as pinlib measured (compare_rise on the same file and inputs)
    engine = compare_rise(load_design(GPIO_RESET), "reset", 800e-9, 10e-12,
                          levels=(0.1, 0.9), signal="reset")
    assert got.comparison == engine and got.line.bus == "reset"
    assert (got.rp, got.cb, got.cb_model) == (engine.rp, engine.cb, engine.cb_model)
    # the command itself, on the same reading
    assert main(["measured", str(GPIO_RESET), "--bus", "reset", "--line", "reset",
                 "--rise", "800ns", "--probe", "10pF", "--levels", "10,90", "--json"]) == 0
    cli = json.loads(capsys.readouterr().out)
    assert cli == engine.to_json() and cli["verdict"] == "agrees"
    # derived by hand from the RC charge through the line's pull-up (the design's
    # lines.reset.pullup 10 kΩ; no part on the line counts a pull-up of its own):
    # v(t) = V (1 - exp(-t / (Rp C))), so from 10 % to 90 % t = Rp C ln(0.9 / 0.1);
    # C = Cb + C_probe = 800 ns / (10 kΩ x ln 9) = 36.410 pF, Cb = 26.410 pF, and
    # without the probe the same levels take 10 kΩ x 26.410 pF x ln 9 = 580.28 ns
    assert got.rp == pytest.approx(10e3, rel=1e-12)
    c_total = 800e-9 / (10e3 * math.log(9.0))
    assert got.cb == pytest.approx(c_total - 10e-12, rel=1e-9)
    assert got.cb == pytest.approx(26.410e-12, rel=1e-4)
    assert got.rise == pytest.approx(10e3 * got.cb * math.log(9.0), rel=1e-9)
    assert got.rise == pytest.approx(580.28e-9, rel=1e-4)
    # what the panel shows is that answer, with units and the command's verdict; a
    # number is held to its unit (a no-break space), as the command's wrapping holds it
    held = html.unescape(b.bench_html.value)
    assert "26.4\u00a0pF" in held and "(±1\u00a0%)" in held and " pF" not in held, held
    shown = held.replace("\u00a0", " ")
    for text in ("Bus reset, line reset", "26.4 pF", "580 ns", "(10–90 %, as measured)",
                 "the model's Cb <b>" + format_si(engine.cb_model, "F"),
                 "The measurement agrees with the model"):
        assert text in shown, (text, shown)
    assert not re.search(r"\de[+-]\d", shown)


def test_bench_panel_gpio_line_disagreeing_lists_what_to_revisit(library):
    b = BusBuilder(library, peripherals=["eeprom-i2c"])
    b.set(bench_file=str(GPIO_RESET), rise_measured=2e-6, c_probe=10e-12)
    got = b.bench.comparison
    assert got.verdict == "above" and got.revisit
    shown = html.unescape(b.bench_html.value).replace("\u00a0", " ")
    assert "The board holds more capacitance than the model" in shown
    assert all(f"<li>{r}</li>" in shown for r in got.revisit)
    # faster than the probe alone through 10 kΩ: refused beside the panel, no answer
    b.set(rise_measured=20e-9)
    assert b.bench is None and "faster than the probe" in b.bench_html.value
    assert "Traceback" not in b.bench_html.value


def test_bench_panel_offers_no_push_pull_line_no_line_without_pullup_and_no_spi_bus(
        library, tmp_path, monkeypatch):
    from test_bench import GPIO_DESIGN

    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    path = tmp_path / "gpio.toml"
    path.write_text(GPIO_DESIGN.replace("{internal}", "").replace("{tolerance}", ""),
                    encoding="utf-8")
    b = BusBuilder(library, peripherals=["eeprom-i2c"])
    b.set(bench_file=str(path))
    assert [v for _, v in b.bench_line.options] == ["", "reset/reset"]
    said = " ".join(html.unescape(re.sub(r"<[^>]+>", " ", b.bench_line_note.value)).split())
    for text in ("en, line enable: no open-drain pin drives this line",
                 "two, line reset: the line has no pull-up",
                 "two, line gpio_out: no open-drain pin drives this line"):
        assert text in said, (text, said)
    # an SPI bus is named, not offered; the demo's I2C lines are, per segment
    b.set(bench_file=str(DEMO))
    said = " ".join(html.unescape(re.sub(r"<[^>]+>", " ", b.bench_line_note.value)).split())
    assert "flash (spi): not an open-drain bus" in said
    assert "display (spi): not an open-drain bus" in said
    assert not any(v.startswith(("flash", "display")) for _, v in b.bench_line.options)
    assert ("sensors, segment sensor-1v8, SCL", "sensors/sensor-1v8/scl") in \
        b.bench_line.options


def test_bench_panel_i2c_reading_is_unchanged_by_a_saved_design(library):
    b = BusBuilder(library, peripherals=["eeprom-i2c"])
    b.set(pullup=2200.0, rise_measured=300e-9)
    before, shown = b.bench, b.bench_html.value
    b.set(bench_file=str(GPIO_RESET))
    assert b.bench.line is not None and b.bench_html.value != shown
    b.set(bench_line="")
    assert b.bench == before and b.bench_html.value == shown
    assert before.line is None and before.comparison.signal == "sda"
    b.set(bench_file="")
    assert b.bench_line.options == (("SDA of the bus built here", ""),)
    assert b.bench_html.value == shown and b.bench_line_note.value == ""


def test_bench_panel_a_design_that_cannot_be_read_says_why_and_keeps_the_lines(library,
                                                                              tmp_path):
    b = BusBuilder(library, peripherals=["eeprom-i2c"])
    b.set(bench_file=str(GPIO_RESET))
    for text, words in (("", "a design file path is needed"),
                        (str(tmp_path / "nowhere.toml"), "file not found")):
        b.bench_file.value = text
        b.bench_load.click()
        shown = html.unescape(b.bench_file_error.value)
        assert words in shown and "still those of" in shown, shown
        assert "Traceback" not in shown
        assert b.bench_line.value == "reset/reset"
    bad = tmp_path / "bad.toml"
    bad.write_text('format = "pinlib.design/1"\n[[bus]]\nid = 3\n', encoding="utf-8")
    b.bench_file.value = str(bad)
    b.bench_load.click()
    assert str(bad) in html.unescape(b.bench_file_error.value)
    b.bench_file.value = str(GPIO_RESET)
    b.bench_load.click()
    assert b.bench_file_error.value == ""


def test_saved_design_loads_and_checks_the_same(builder, tmp_path, library):
    builder.set(pullup="auto", length=0.14, extra_capacitance=12e-12)
    path = builder.save(tmp_path / "board.toml")
    saved = check_file(path)
    assert _values(saved.bus(builder.bus_result.id).figures) == _values(builder.figures)
    assert path.read_text(encoding="utf-8") == builder.text


def test_saved_design_names_its_team_folder_relative_to_itself(tmp_path):
    team = tmp_path / "team"
    team.mkdir()
    (team / "eeprom-team.toml").write_text(textwrap.dedent("""\
        format = "pinlib.part/1"
        id = "eeprom-team"
        title = "Team EEPROM (invented)"
        category = "memory"
        extends = "eeprom-i2c"
        """), encoding="utf-8")
    b = BusBuilder(folders=[team], peripherals=["eeprom-team"])
    boards = tmp_path / "boards"
    boards.mkdir()
    path = b.save(boards / "b.toml")
    assert 'library = ["../team"]' in path.read_text(encoding="utf-8")
    assert load_design(path).bus("i2c").devices[1].part_id == "eeprom-team"


def test_save_refuses_an_invalid_design_and_writes_nothing(library, tmp_path, monkeypatch):
    b = BusBuilder(library, peripherals=["eeprom-i2c"])
    target = tmp_path / "x.toml"
    target.write_text("old", encoding="utf-8")
    # a design whose only device names a part the library does not hold
    bad = b.design_text().replace('part = "eeprom-i2c"', 'part = "no-such-part"')
    monkeypatch.setattr(b, "design_text", lambda relative_to=None: bad)
    with pytest.raises(DesignError, match="part"):
        b.save(target)
    assert target.read_text(encoding="utf-8") == "old"
    b._save_clicked()  # the button with no name: refused beside the box
    assert "file name" in b.save_error.value


def test_save_never_overwrites_an_existing_file_unless_ticked(library, tmp_path):
    b = BusBuilder(library, peripherals=["eeprom-i2c"])
    target = tmp_path / "demo-board.toml"
    target.write_text("# a commented design\n", encoding="utf-8")
    with pytest.raises(WriteError, match="exists"):
        b.save(target)
    assert target.read_text(encoding="utf-8") == "# a commented design\n"
    # the button: refused beside the box, naming the file; the box offers to overwrite it
    b.save_path.value = str(target)
    b.save_button.click()
    assert target.read_text(encoding="utf-8") == "# a commented design\n"
    assert str(target) in b.save_error.value and "overwrite" in b.save_error.value
    assert b.save_overwrite.description == "overwrite demo-board.toml"
    # ticked: replaced (atomically), and the consent is spent
    b.save_overwrite.value = True
    b.save_button.click()
    assert target.read_text(encoding="utf-8") == b.design_text(relative_to=tmp_path)
    assert "saved" in b.save_error.value and not b.save_overwrite.value
    # a consent given for one name does not carry to another
    other = tmp_path / "other.toml"
    other.write_text("keep", encoding="utf-8")
    b.save_overwrite.value = True
    b.save_path.value = str(other)
    assert not b.save_overwrite.value
    b.save_button.click()
    assert other.read_text(encoding="utf-8") == "keep"
    # a folder is not a file to save into
    b.save_overwrite.value = True
    b.save_path.value = str(tmp_path)
    b.save_overwrite.value = True
    b.save_button.click()
    assert "is a folder" in b.save_error.value


def test_save_refuses_while_a_field_is_refused(library, tmp_path):
    # the file would hold the field's last valid value, not the text it shows
    b = BusBuilder(library, peripherals=["eeprom-i2c"])
    b.supply.text.value = "3.3"  # no unit: refused, the panel keeps 3.3 V
    assert b.refused_fields()
    with pytest.raises(InputError, match="refused: Supply"):
        b.save(tmp_path / "board.toml")
    b.save_path.value = str(tmp_path / "board.toml")
    b.save_button.click()
    assert not (tmp_path / "board.toml").exists()
    assert "refused: Supply" in b.save_error.value
    b.supply.text.value = "3.3 V"
    b.save_button.click()
    assert (tmp_path / "board.toml").exists() and "saved" in b.save_error.value


def test_save_into_a_missing_folder_names_the_file(library, tmp_path):
    b = BusBuilder(library, peripherals=["eeprom-i2c"])
    target = tmp_path / "nowhere" / "board.toml"
    b.save_path.value = str(target)
    b.save_button.click()
    # the folder named, not "cannot write in this folder: No such file or directory"
    assert f"the folder {target.parent} does not exist" in b.save_error.value
    assert str(target) in b.save_error.value and not target.parent.exists()


def test_bench_reading_says_when_it_is_not_that_of_the_field(library):
    b = BusBuilder(library, peripherals=["eeprom-i2c"])
    b.set(rise_measured=250e-9)
    reading = b.bench_html.value
    assert "bus capacitance without the probe" in reading
    b.rise_measured.text.value = "5 pF"  # refused: the reading shown is that of 250 ns
    shown = b.bench_html.value
    assert "Not recomputed" in shown and "Rise measured" in shown
    assert "last valid inputs" in shown and reading in shown
    b.rise_measured.text.value = "300 ns"
    assert "Not recomputed" not in b.bench_html.value
    assert b.bench is not None and b.bench.t_measured == pytest.approx(300e-9)


# =========================================================================== LineExplorer


@pytest.fixture(scope="module")
def line(library):
    return LineExplorer(library, driver=("mcu-3v3", "sclk"),
                        receivers=[("display-controller-spi", "sclk")], length=0.28)


def test_line_svg_is_the_uncached_render(line):
    # derived from vl-convert's vegalite_to_svg of each whole spec: the widget's redraws,
    # which reuse the compiled layout, must give the same SVG as a render from scratch
    from pinlib.present.widgets.markup import inline_svg

    for length in (0.28, 0.30, 0.9, 0.28):
        line.set(series="auto", length=length)
        assert line.error is None
        for panel in (line.edges, line.waves):
            direct = charts.to_svg(panel.spec, cache=False)
            assert charts.to_svg(panel.spec) == direct
            assert panel.svg == inline_svg(direct, panel.key)


def test_line_figures_are_the_engines_for_its_design(line, library):
    line.set(series="auto", length=0.28)
    assert line.error is None
    _same_result(line.result, line.text, library)
    assert line.edge_data.operating == (line.figures["load_capacitance"].value,
                                        line.figures["edge_rise_time"].value)


def test_line_chart_point_is_the_checks_figure_in_daisy_chain_placement(library):
    # two receivers along a route: the figure is the slowest receiver's rise, and the
    # chart's cross (captioned "the figure the checks use") must be that figure
    x = LineExplorer(library, driver=("mcu-3v3", "sclk"),
                     receivers=[("display-controller-spi", "sclk"),
                                ("display-controller-spi", "sclk")], length=0.28)
    for placement in ("far end", "daisy chain"):
        x.set(placement=placement, series="auto")
        assert x.error is None
        assert x.edge_data.operating == (x.figures["load_capacitance"].value,
                                         x.figures["edge_rise_time"].value), placement
        assert x.edge_data.operating_fall == x.figures["edge_fall_time"].value
        assert "the figure the checks use" in x.edge_data.subtitle
    assert x.edge_data.operating_label.startswith("slowest receiver on this line")


def test_line_auto_termination_is_z0_minus_r_out(line, library):
    import eseries

    line.set(series="auto", length=0.28)
    z0 = line.figures["z0"].value
    from pinlib.physics.driver import driver_from_pin

    # the class states edges, not r_out: the engine uses the mean of the fitted rise and
    # fall output resistances
    drv = driver_from_pin(library.get("mcu-3v3").pins["sclk"], 3.3)
    r_out = 0.5 * (drv.r_rise + drv.r_fall)
    rs = line.figures["series_resistor"].value
    # common practice, no source: series (source) termination Rs = Z0 - Rout, from E24;
    # the eseries package gives the E24 neighbours of the ideal value
    ideal = z0 - r_out
    assert rs in (eseries.find_less_than_or_equal(eseries.E24, ideal),
                  eseries.find_greater_than_or_equal(eseries.E24, ideal))


def test_line_with_and_without_termination(line):
    line.set(series="none", length=0.28)
    bare, bare_waves = line.figures, line.wave_data
    assert bare["series_resistor"].value == 0.0
    assert set(bare_waves.traces) == {"rise, no series R", "fall, no series R"}
    line.set(series=33.0)
    assert line.figures["series_resistor"].value == 33.0
    assert set(line.wave_data.traces) == {"rise, Rs 33 Ω", "fall, Rs 33 Ω",
                                          "rise, no series R", "fall, no series R"}
    # the terminated line overshoots less (the reflection is absorbed at the source)
    assert line.figures["overshoot"].value < bare["overshoot"].value
    w = line.wave_data
    assert w.overshoot["rise, no series R"] == pytest.approx(bare["overshoot"].value)
    line.set(series="auto")


def test_line_series_slider_never_shows_a_resistor_not_in_use(line):
    # auto chose 27 Ω on a long line; on a short one it chooses none, and the disabled
    # slider kept reading "27 Ω" beside waveforms labelled "no series R"
    line.set(series="auto", length=0.28)
    assert line.figures["series_resistor"].value > 0
    assert line.series_slider.shown and line.series.description == "Rs (E24)"
    assert line.series.value == line.figures["series_resistor"].value
    line.set(length=0.03)
    assert line.figures["series_resistor"].value == 0.0
    assert not line.series_slider.shown and line.series.description == "Rs: none"
    assert set(line.wave_data.traces) == {"rise, no series R", "fall, no series R"}
    line.set(series="none")
    assert not line.series_slider.shown
    line.set(series=33.0)
    assert line.series_slider.shown and line.series.description == "Rs (E24)"
    line.set(series="auto", length=0.28)


def test_line_charts_follow_the_length(line):
    line.set(series="auto", length=0.10)
    edges, waves = line.edges.data(), line.waves.data()
    line.set(length=0.40)
    assert line.edges.data() != edges and line.waves.data() != waves
    assert line.edges.svg.count("<svg") == 1 and line.waves.svg.count("<svg") == 1


def test_line_receivers_and_pins(library):
    le = LineExplorer(library, receivers=[("nor-flash-spi", "sclk")], length=0.05)
    assert all(library.get(p).pins[n].function == "spi-sclk" for _, (p, n) in le.pick.options)
    ref = le.add_receiver("display-controller-spi", "sclk")
    assert [r for r, _, _ in le.receivers] == ["U2", ref]
    with pytest.raises(InputError, match="not an input pin"):
        le.add_receiver("nor-flash-spi", "cipo")
    le.remove_receiver("U2")
    le.remove_receiver(ref)
    # no receiver left: the line still evaluates, the waveform chart says why it is empty
    assert le.error is None and le.waves.svg is None
    assert "the line has no receiver" in le.waves.message
    le.set(driver_pin="copi")
    assert le.design.buses[0].devices[0].pin == "copi"


def test_line_says_which_receivers_take_another_function_than_the_pin(library):
    # the output pin changed from sclk to copi: the sclk receivers placed stay, and the
    # list says so rather than drawing a copi line into sclk inputs without a word
    le = LineExplorer(library, receivers=[("nor-flash-spi", "sclk")], length=0.05)
    assert le.placed_note.value == ""
    le.set(driver_pin="copi")
    said = le.placed_note.value
    assert "U2 nor-flash-spi: sclk (spi-sclk) receives another function" in said
    assert "(spi-copi)" in said
    le.add_receiver("nor-flash-spi", "copi")
    assert "U2 nor-flash-spi" in le.placed_note.value
    assert "U3" not in le.placed_note.value
    le.set(any_function=True)  # asked for: nothing to say
    assert le.placed_note.value == ""
    le.set(any_function=False)
    le.remove_receiver("U2")
    assert le.placed_note.value == ""


# =========================================================================== SpiBudget


@pytest.fixture(scope="module")
def budget():
    return SpiBudget(DEMO, bus="display")


def test_spi_budget_chart_gives_the_checks_margins_at_their_corner():
    from pinlib.core.quantity import format_si

    b = SpiBudget(DEMO, bus="flash")
    b.set(clock=30e6)
    notes = {d["path"]: d["text"] for layer in b.chart.data() for d in layer if "text" in d}
    at_corner = [c for c in b.bus_result.checks if (c.details or {}).get("corner")
                 and f"{c.id} {c.subject}" in notes]  # the budget's requirements
    assert {c.id for c in at_corner} >= {"copi-setup", "cipo-setup"}
    for c in at_corner:
        # the checks table's figure (value minus limit at the check's worst corner)
        m = c.value - c.limit
        shown = f"worst corner {'+' if m >= 0 else ''}{format_si(m, 's')}"
        assert shown in notes[f"{c.id} {c.subject}"], (c.id, notes)
    assert "worst corner" in str(b.chart.spec["title"])


def test_spi_budget_at_the_saved_clock_is_check_file(budget):
    budget.set(clock=10e6, spi_mode=3)
    saved = check_file(DEMO).bus("display")
    assert _values(budget.figures) == _values(saved.figures)
    assert budget.bus_result.to_json() == saved.to_json()


def test_spi_budget_follows_clock_and_mode(budget):
    budget.set(clock=5e6, spi_mode=0)
    redo = check_design(design_from_text(budget.design_data(), budget.base.text,
                                         budget.base.path, library=budget.library))
    assert budget.bus_result.to_json() == redo.bus("display").to_json()
    assert budget.design.bus("display").spi_mode == 0
    m5 = budget.budget_data.margins["copi-setup U12"]
    data5 = budget.chart.data()
    budget.set(clock=8e6)
    m8 = budget.budget_data.margins["copi-setup U12"]
    # derived from the COPI setup budget T/2 + sclk_early - t_valid - copi_late >= t_setup:
    # only the half period depends on the clock
    assert m5 - m8 == pytest.approx((1 / 5e6 - 1 / 8e6) / 2, rel=1e-9)
    assert budget.chart.data() != data5
    budget.set(clock=10e6, spi_mode=3)


def test_spi_max_clock_and_what_limits_it(budget):
    budget.set(clock=10e6, spi_mode=3)
    f_max = budget.figures["max_clock"].value
    assert budget.limits[0].clock == pytest.approx(f_max, rel=1e-12)
    assert [x.clock for x in budget.limits] == sorted(x.clock for x in budget.limits)
    assert budget.limits[0].label in budget.max_html.value
    budget.set(clock=f_max)
    timing = [c for _, _, c in budget.bus_result.all_checks() if c.id != "f-max"]
    assert all(c.status != "fail" for c in timing)
    budget.set(clock=f_max * 1.05)
    # beyond it a check is beyond its limit (a warning where the limit is a class's
    # typical value, as the demo's are)
    beyond = [c for _, _, c in budget.bus_result.all_checks()
              if c.margin is not None and c.margin < 0]
    assert beyond and all(c.status != "pass" for c in beyond)
    budget.set(clock=10e6)


def test_spi_budget_shows_a_mode_the_display_does_not_take(budget):
    # the built-in display class states modes 0 and 3 (common practice, no source)
    budget.set(clock=10e6, spi_mode=1)
    mode = {c.subject: c for c in budget.bus_result.checks if c.id == "spi-mode"}
    # the class's modes: a warning, not a failure (no datasheet stands behind them)
    assert mode["U12"].status == "warn" and mode["U1"].status == "pass"
    assert mode["U12"].details["limit_basis"] == "generic"
    assert "SPI mode 1 is not one of U12" in budget.checks_html.value
    assert "WARN" in budget.status_html.value.upper()
    # and the status line counts it among the warnings beyond a class's typical limit
    assert "for want of a datasheet value" in budget.status_html.value \
        or "for want of a datasheet value" in budget.status_html.value
    # the row shows the mode against the part's modes, and a note under the mode says it
    assert ">mode 1<" in budget.checks_html.value and ">modes 0, 3<" in budget.checks_html.value
    assert "SPI mode 1 is not one of U12" in budget.mode_note.value
    # the note's word is the check's status (it read FAIL beside a warning)
    assert "<b>WARN</b>" in budget.mode_note.value and "FAIL" not in budget.mode_note.value
    budget.set(clock=10e6, spi_mode=3)
    assert all(c.status == "pass" for c in budget.bus_result.checks if c.id == "spi-mode")
    assert budget.mode_note.value == ""


def test_spi_budget_refuses_a_design_without_that_bus():
    with pytest.raises(InputError, match="no SPI bus of that id"):
        SpiBudget(DEMO, bus="sensors")


# =========================================================================== PartRecorder


def test_recorder_new_part_and_value(tmp_path):
    team = tmp_path / "team"
    r = PartRecorder(team)
    r.set(id="eeprom-acme", extends="eeprom-i2c", new_source="Acme datasheet rev B (invented)")
    path = r.create()
    assert path == team / "eeprom-acme.toml" and r.errors == {}
    assert r.part.value == "eeprom-acme" and "sda.c_in" in r.field.options
    r.set(part="eeprom-acme", field="sda.c_in", value="12 pF", typ="9 pF", basis="datasheet",
          source="rev B, table 6 (invented)")
    assert r.record() == path
    c_in = load_library([team]).get("eeprom-acme").pins["sda"].c_in
    # published: SI Brochure, 9th edition, table 7: p = 1e-12
    assert c_in.value == pytest.approx(12e-12, rel=1e-12)
    assert (c_in.basis, c_in.source) == ("datasheet", "rev B, table 6 (invented)")
    assert c_in.typ == pytest.approx(9e-12, rel=1e-12)


def test_recorder_offers_and_records_a_standard_s_limit(tmp_path):
    # the panel's bases are the command's (RECORD_BASES); a new part may also be generic
    team = tmp_path / "team"
    r = PartRecorder(team)
    assert list(r.basis.options) == ["datasheet", "measured", "estimate", "published"]
    assert list(r.new_basis.options) == ["datasheet", "measured", "estimate", "published",
                                         "generic"]
    r.set(id="eeprom-std", extends="eeprom-i2c", new_source="Acme rev A (invented)")
    path = r.create()
    r.set(part="eeprom-std", field="sda.v_il", value="0.3 VDD", basis="published",
          source="I2C-bus specification UM10204 rev. 6, table 9, VIL max")
    assert r.record() == path and r.errors == {}
    v_il = load_library([team]).get("eeprom-std").pins["sda"].v_il
    # published: UM10204 rev. 6, table 9, VIL max 0.3·VDD
    assert (v_il.value.scale, v_il.basis, v_il.soft) == (0.3, "published", False)


def test_recorder_writes_a_typ_beyond_its_limit_and_shows_the_warning(tmp_path):
    """A typ on the wrong side of its limit (a datasheet's typ at other conditions, or a
    slip) is written, and the panel says so: it was refused, then written silently."""
    team = tmp_path / "team"
    r = PartRecorder(team)
    r.set(id="ulv-acme", extends="eeprom-i2c", new_source="Acme rev A (invented)")
    path = r.create()
    # invented values: a typ of 6 pF beside a maximum of 5 pF
    r.set(part="ulv-acme", field="sda.c_in", value="5 pF", typ="6 pF", basis="datasheet",
          source="rev A, table 2 (invented)")
    assert r.record() == path and r.errors == {}
    assert 'typ = "6 pF"' in path.read_text(encoding="utf-8")
    assert [w.field for w in r.warnings] == ["pins.sda.c_in.typ"]
    assert "warning:" in r.message.value
    assert "the typical value lies beyond the limit" in r.message.value
    # a value on the right side leaves no warning behind
    r.set(typ="4 pF")
    assert r.record() == path and r.warnings == []
    assert "warning:" not in r.message.value


def test_recorder_records_next_into_the_part_just_created(tmp_path):
    """Creating a part turns to the record form: its Team part is the new part, not the
    one chosen before (a value recorded next would land in another part's file)."""
    r = PartRecorder(tmp_path / "team")
    r.set(id="eeprom-acme", extends="eeprom-i2c", new_source="Acme rev B (invented)")
    assert r.create() is not None and r.part.value == "eeprom-acme"
    r.set(id="rtc-acme", extends="rtc-i2c")
    path = r.create()
    assert r.tabs.selected_index == 1 and r.part.value == "rtc-acme", r.part.value
    assert "created part rtc-acme" in r.message.value and r.errors == {}
    r.set(field="sda.c_in", value="9 pF", source="rev A, table 3 (invented)")
    assert r.record() == path


@pytest.mark.parametrize("form, beside, words", [
    ({"value": "12"}, "value", "no unit"),
    ({"value": "12 pH"}, "value", "H where a capacitance"),
    ({"value": "4k7"}, "value", "allowed range"),
    ({"typ": "9 pH"}, "typ", "H where a capacitance"),
    ({"field": "sda.c_inn"}, "field", "unknown field"),
    ({"field": "xyz.c_in"}, "field", "no such pin"),
    ({"source": ""}, "source", "needs its source"),
])
def test_recorder_shows_refusals_beside_the_field(tmp_path, form, beside, words):
    team = tmp_path / "team"
    r = PartRecorder(team)
    r.set(id="eeprom-acme", extends="eeprom-i2c")
    path = r.create()
    before = path.read_text(encoding="utf-8")
    good = {"part": "eeprom-acme", "field": "sda.c_in", "value": "12 pF", "typ": "",
            "source": "rev B, table 6 (invented)"}
    r.set(**(good | form))
    assert r.record() is None
    assert set(r.errors) == {beside}, r.errors
    assert words in r.errors[beside].problem
    assert words in r.error_labels[beside].value or r.errors[beside].problem in \
        r.error_labels[beside].value.replace("&#x27;", "'")
    assert path.read_text(encoding="utf-8") == before
    # correcting the field clears its message
    r.set(**{beside: good[beside] if beside in good else "12 pF"})
    assert beside not in r.errors


def test_recorder_new_part_refusals(tmp_path):
    from pinlib.library.loader import BUILTIN_DIR

    r = PartRecorder(tmp_path / "team")
    r.set(id="Bad_ID", extends="eeprom-i2c")
    assert r.create() is None and set(r.errors) == {"id"}
    assert "valid part id" in r.error_labels["id"].value
    r.set(id="eeprom-i2c")
    assert r.create() is None and set(r.errors) == {"id"}  # the id exists
    builtin = PartRecorder(BUILTIN_DIR)
    builtin.set(id="never-written", extends="eeprom-i2c")
    assert builtin.create() is None and "form" in builtin.errors
    assert not (Path(BUILTIN_DIR) / "never-written.toml").exists()
    r.set(id="eeprom-x")
    assert r.create() is not None
    r.set(part="eeprom-x", field="sda.c_in", value="12 pF", source="s")
    assert r.record() is not None


# =========================================================================== SwapExplorer


@pytest.fixture(scope="module")
def explorer():
    return SwapExplorer(DEMO)


def test_swap_rerun_is_the_engines(explorer):
    explorer.reset()
    assert explorer.apply_swap("U4", "io-expander-i2c") == []
    rerun = check_design(explorer.design.with_parts({"U4": "io-expander-i2c"}))
    assert explorer.swapped_result.to_json() == rerun.to_json()
    changed = {pc.ref: pc for pc in explorer.changes.part_changes}
    assert changed["U4"].new_part == "io-expander-i2c"
    assert "io-expander-i2c" in explorer.changes_html.value
    assert explorer.before.svg and explorer.after.svg
    assert explorer.before.data() != explorer.after.data()
    assert explorer.static_view()._repr_html_().count("<svg") == 2
    explorer.reset()
    assert explorer.changes is None and explorer.after.svg is None


def test_swap_refused_with_the_reason(explorer):
    explorer.reset()
    reasons = explorer.apply_swap("U4", "nor-flash-spi")
    assert reasons and any("i2c-sda" in r for r in reasons)
    assert explorer.swaps == {} and "U4 = nor-flash-spi refused" in explorer.refused_html.value
    offered = [v for _, v in explorer.new_part.options] if explorer.ref.value == "U4" else []
    assert "nor-flash-spi" not in offered


def test_swap_candidates_ranking(explorer, monkeypatch):
    pytest.importorskip("pinlib.studies.candidates")
    explorer.ref.value = "U4"
    r = explorer.ranking
    assert r is not None and r.ref == "U4" and r.candidates
    assert explorer.candidates_box.layout.display is None
    assert r.candidates[0].part in explorer.candidates_html.value
    # a part that warns at a negative margin (mcu-5v past mcu-5v's class supply range,
    # typical of its class) has the key line under the table, as the command writes it
    assert any(c.status == "warn" and (c.worst_margin or 0) < 0 for c in r.candidates[:10])
    assert M.CANDIDATE_WARN_BEYOND in html.unescape(explorer.candidates_html.value)
    import importlib.util

    real = importlib.util.find_spec
    monkeypatch.setattr(importlib.util, "find_spec",
                        lambda name, *a: (None if name == "pinlib.studies.candidates"
                                          else real(name, *a)))
    explorer.update()
    assert explorer.ranking is None and explorer.candidates_box.layout.display == "none"
    assert "pinlib.studies.candidates" in explorer.candidates_note.value


def _ranking_cells(table_html: str) -> tuple[list[str], list[list[str]]]:
    """A ranking table's headings and rows as plain text (tags dropped, spaces joined)."""
    def plain(x):
        return " ".join(html.unescape(re.sub(r"<[^>]+>", " ", x)).split())

    heads = [plain(h) for h in re.findall(r"<th[^>]*>(.*?)</th>", table_html, re.S)]
    rows = [[plain(c) for c in re.findall(r"<td[^>]*>(.*?)</td>", tr, re.S)]
            for tr in re.findall(r"<tr>(.*?)</tr>", table_html, re.S) if "<td" in tr]
    return heads, rows


def test_swap_ranking_table_names_its_figures_place_and_each_check_as_the_command(tmp_path):
    """Workbook 05's candidates table: the figures' heading names the bus, segment and
    lines they are of; each worst margin and the check that sets it read as `pinlib
    candidates` writes them (the bus named only where the position is on several)."""
    pytest.importorskip("pinlib.studies.candidates")
    from pinlib.studies.candidates import rank_candidates

    design = load_design(DEMO)
    # U1 sits on four buses: the figures are those of the bus charted, and say so
    r = rank_candidates(design, "U1")
    heads, rows = _ranking_cells(SwapExplorer._ranking_html(r, "flash"))
    assert "figures of bus flash the bus chosen in Chart bus" in heads, heads
    assert "Highest clock f(max)" in heads, heads
    text = r.format_text(None)  # the command's table, every column
    for row in rows:
        part, margin, by = row[1].removesuffix(" (now)"), row[3], row[4]
        line = next(ln for ln in text.splitlines()
                    if re.match(rf"\d+ +{re.escape(part)}( \*)? ", ln))
        assert f"  {margin}  " in line and f"  {by}  " in line, (row, line)
        assert by.split()[0] in ("sensors", "power", "flash", "display"), by
    # U4 on one bus of two segments: the segment's figures, no bus before each check
    r = rank_candidates(design, "U4")
    heads, rows = _ranking_cells(SwapExplorer._ranking_html(r, "sensors"))
    assert "figures of bus sensors, segment main-3v3, the worse of SDA and SCL" in heads
    assert "worst margin % of its limit" in heads, heads
    assert not any(row[4].startswith("sensors ") for row in rows), rows
    # Q1 joins two segments; with the test translator (VGS(th) 1.2 V, invented test
    # data: the library part's 1.5 V leaves the demo's 3.3 V SDA without a fall time,
    # a margin-less worst) its worst margin is the gate drive's, in volts
    variant = tmp_path / "demo-tfet.toml"
    variant.write_text(DEMO.read_text(encoding="utf-8").replace(
        'part = "level-translator-mosfet"', 'part = "t-fet-translator"'), encoding="utf-8")
    parts = Path(__file__).parent / "data" / "parts"
    r = rank_candidates(load_design(variant, library_folders=[parts]), "Q1")
    heads, rows = _ranking_cells(SwapExplorer._ranking_html(r, "sensors"))
    assert "worst margin % of its limit, or in V" in heads, heads
    assert "figures of bus sensors, segment main-3v3, the worse of SDA and SCL" in heads
    k = next(i for i, c in enumerate(r.candidates) if c.part == "t-fet-translator")
    assert rows[k][3] == r.candidates[k].margin_text(1) and rows[k][3].endswith(" mV")


def _listed(x) -> list[str]:
    """What `pinlib swap` lists for the explorer's substitutions (status changes with
    their values and limits, moved figures each quantity once), as the widget must show it
    (HTML-escaped)."""
    import html as _html

    from pinlib.core.labels import figure_label
    from pinlib.studies.compare import format_figure
    from pinlib.studies.compare.changes import shown_changes

    out = []
    for c in x.changes.status_changes:
        out.append(_html.escape(c.values_text(), quote=False))
    for c in shown_changes(x.changes.figure_changes):
        out.append(_html.escape(f"{figure_label(c.name)}", quote=False))
        out.append(_html.escape(f"{format_figure(c.old, c.unit)} → "
                                f"{format_figure(c.new, c.unit)}", quote=False))
    return out


def test_swap_change_list_shows_what_pinlib_swap_lists():
    x = SwapExplorer(DEMO)
    assert x.apply_swap("Q1", "i2c-repeater") == []
    html = x.changes_html.value
    couplings = [c for c in x.changes.status_changes if "<-" in c.path]
    assert couplings  # the crosstalk checks of sensors.scl<-display.sclk changed status
    assert html.count("<li title=") == len(x.changes.status_changes)  # each listed once
    assert "sensors.scl&lt;-display.sclk" in html and "Crosstalk" in html
    # the widget escapes quotes too (a class&#x27;s typical value): compared without
    missing = [t for t in _listed(x) if t not in html.replace("&#x27;", "'")]
    assert not missing
    # a check that appeared shows its value, not only its limit
    offset = next(c for c in x.changes.status_changes if c.check == "bridge-offset")
    assert offset.old is None and "600 mV, limit 940 mV" in html  # pinlib swap's text
    # the default substitution: the coupling's moved figure is listed too
    x.reset()
    assert x.apply_swap("U4", "io-expander-i2c") == []
    assert "Level held low, with noise" in x.changes_html.value
    assert not [t for t in _listed(x) if t not in x.changes_html.value.replace("&#x27;", "'")]
    # the threshold in pinlib swap's words: "moved more than 5 %" (a space before %)
    pct = f"{x.changes.threshold * 100:g} %"
    assert f"figures moved more than {pct}" in x.changes_html.value
    assert f"Figures that moved more than {pct}:" in x.changes.format_text()


def test_checks_tables_say_which_side_of_its_limit_a_value_keeps():
    """The pull-up window is held against its nearer end: after workbook 05's
    substitution main-3v3's SDA pull-up (at -1 %) stands against Rp(min) and SCL's
    (at +1 %) against Rp(max), which a bare "limit" column left for the reader to guess
    ("2.38 kΩ, limit 1.95 kΩ, PASS"). Each limit now carries "≤" or "≥"."""
    x = SwapExplorer(DEMO)
    assert x.apply_swap("U4", "io-expander-i2c") == []
    rows = {}
    for body in re.findall(r'<tr title="[^"]*">(.*?)</tr>', x.checks_html.value):
        cells = [html.unescape(re.sub(r"<[^>]+>", "", c)).replace("\u00a0", " ")
                 for c in re.findall(r"<td[^>]*>(.*?)</td>", body)]
        rows[(cells[1], cells[2])] = cells
    sda = rows[("Pull-up window Rp(min)…Rp(max)", "main-3v3 SDA")]
    scl = rows[("Pull-up window Rp(min)…Rp(max)", "main-3v3 SCL")]
    assert sda[4].startswith("≥ ") and scl[4].startswith("≤ "), (sda, scl)
    # published: UM10204 rev. 6, table 10: Cb is at most 400 pF
    assert rows[("Bus capacitance", "main-3v3 SDA")][4] == "≤ 400 pF"
    # the checks' sources: VOL against the receiver's VIL max, VOH against its VIH min
    assert rows[("VOL", "main-3v3 SDA U1")][4].startswith("≤ ")
    assert rows[("VOH", "main-3v3 SDA U1")][4].startswith("≥ ")
    # the side agrees with every check's own verdict: a limit check fails exactly when
    # its value is on the other side (derived: the sign convention of Check.margin)
    from pinlib.present.values import limit_side

    result = check_file(DEMO)
    for b in list(result.buses) + list(result.couplings):
        for _, _, c in b.all_checks():
            side = limit_side(c)
            if side:
                outside = c.value > c.limit if side == "≤" else c.value < c.limit
                assert outside == (c.margin < 0), (c.id, c.value, c.limit, c.margin)


def test_swap_chart_titles_name_the_line_without_repeating_the_bus():
    """Workbook 05's chart of a one-segment bus was titled "pull-up window, power power
    SDA" (the segment takes the bus's id); a line is named as the bench panel names it:
    the bus, its segment only where it has several, the line."""
    x = SwapExplorer(DEMO)
    x.ref.value = "U30"  # on power, an SMBus bus of one segment
    assert x.before.spec["title"]["text"] == ["Before: pull-up window, power, SDA"]
    x.ref.value = "U4"   # on sensors, split in two by the translator Q1
    assert x.before.spec["title"]["text"] == [
        "Before: pull-up window, sensors, segment main-3v3, SDA"]
    # a GPIO bus's line: "reset reset" was the bus and its line of the same name
    g = SwapExplorer(GPIO_RESET)
    g.ref.value = "U2"
    assert g.before.spec["title"]["text"] == ["Before: edge time against load, reset, line reset"]


def test_swap_device_list_names_the_segments_of_a_bridging_part(explorer):
    labels = dict((v, k) for k, v in explorer.ref.options)
    assert "(sensors/main-3v3, sensors/sensor-1v8)" in labels["Q1"]
    assert labels["U4"].endswith("(sensors)")


def test_swap_load_refuses_an_empty_path_and_says_when_results_are_old(explorer, tmp_path):
    explorer.reset()
    explorer.path_box.value = ""
    explorer.load_button.click()
    assert "a design file path is needed" in explorer.path_error.value
    assert "directory" not in explorer.path_error.value
    assert "Not recomputed" in explorer.held_html.value
    explorer.path_box.value = str(tmp_path / "no-such.toml")
    explorer.load_button.click()
    assert "file not found" in explorer.path_error.value
    assert "Not recomputed" in explorer.held_html.value and "no-such.toml" in \
        explorer.held_html.value
    # choosing another device recomputes the old design: the notice stays
    explorer.ref.value = "U4"
    assert "Not recomputed" in explorer.held_html.value
    explorer.path_box.value = str(DEMO)
    explorer.load_button.click()
    assert explorer.path_error.value == "" and explorer.held_html.value == ""


def test_load_messages_name_the_file_alike_on_01_and_05(library, explorer, tmp_path):
    """A folder is said to be one (a .toml file expected); a missing or bad file is named,
    on the bus builder's bench panel as on the swap panel."""
    bad = tmp_path / "bad.toml"
    bad.write_text("this is not TOML\n", encoding="utf-8")  # invented test input
    b = BusBuilder(library, peripherals=["eeprom-i2c"])
    cases = [(str(tmp_path), "this is a folder, not a design file"),
             (str(tmp_path / "nowhere.toml"), "file not found"),
             (str(bad), "not valid TOML")]
    for text, words in cases:
        b.bench_file.value = text
        b.bench_load.click()
        explorer.path_box.value = text
        explorer.load_button.click()
        for shown in (html.unescape(b.bench_file_error.value),
                      html.unescape(explorer.path_error.value)):
            assert words in shown and f"<code>{text}" in shown, shown
            assert ".toml" in shown or words != cases[0][1]
    explorer.path_box.value = str(DEMO)
    explorer.load_button.click()


def test_find_file_from_a_subfolder(monkeypatch):
    monkeypatch.chdir(WORKBOOKS)
    assert find_file("workbooks/designs/demo-board.toml").resolve() == DEMO.resolve()
    assert find_file("designs/demo-board.toml").resolve() == DEMO.resolve()
    with pytest.raises(InputError, match="file not found"):
        find_file("no/such/design.toml")


# =========================================================================== imports


def test_widgets_stay_out_of_the_command_line_import_path():
    code = ("import sys, pinlib.cli, pinlib.engines.dispatch; "
            "bad = [m for m in ('ipywidgets', 'pinlib.present.widgets', 'altair') "
            "if m in sys.modules]; "
            "print(bad); sys.exit(1 if bad else 0)")
    run = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         timeout=60)
    assert run.returncode == 0, run.stdout + run.stderr


# =========================================================================== export


def _executed(name: str):
    import nbformat
    from nbclient import NotebookClient

    nb = nbformat.read(WORKBOOKS / name, as_version=4)
    NotebookClient(nb, timeout=180, kernel_name="python3",
                   resources={"metadata": {"path": str(WORKBOOKS)}}).execute()
    return nb


@pytest.fixture(scope="module")
def exported(tmp_path_factory):
    pytest.importorskip("nbclient")
    pytest.importorskip("nbconvert")
    from nbconvert import HTMLExporter

    nb = _executed("02-push-pull-line.ipynb")
    body, _ = HTMLExporter(template_name="lab").from_notebook_node(nb)
    page = tmp_path_factory.mktemp("export") / "02-push-pull-line.html"
    page.write_text(body, encoding="utf-8")
    return nb, body, page


#: A number a person should not meet in a workbook's printed output: a float as Python
#: writes it ("9.305951865072275e-08", "0.0034869678028752737") or a quantity rounded
#: to a zero it is not ("0.000 V"). Common practice, no source: three significant
#: digits with an SI prefix, as the widgets show figures.
_RAW_NUMBER = re.compile(r"\d\.\d{6,}|\b\d(?:\.\d+)?e[-+]\d+\b|(?<![\d.])0\.0+ ?[A-Za-zΩµ]")


def test_raw_number_pattern():
    for raw in ("pass 1800.0 9.305951865072275e-08", "{'U2': 0.0034869678028752737}",
                "overshoot 0.000 V (without: 0.703 V)"):
        assert _RAW_NUMBER.search(raw), raw
    for fine in ("pass: Rp 1.8 kΩ, rise time 93.1 ns", "max_clock 24 MHz", "0.8473",
                 "U2: 3.49 mV", "Cb without the probe: 153.9 pF (model: 60.4 pF)"):
        assert not _RAW_NUMBER.search(fine), fine


@pytest.mark.parametrize("name", ["01-start-a-design.ipynb", "02-push-pull-line.ipynb"])
def test_workbook_prints_quantities_with_units_and_sensible_rounding(name):
    """What the workbook's own code cells print or show (not the widgets) reads as the
    widgets do: no float as Python writes it, no quantity rounded to zero."""
    pytest.importorskip("nbclient")
    nb = _executed(name)
    shown = []
    for cell in nb.cells:
        for out in cell.get("outputs", []) if cell.cell_type == "code" else []:
            data = out.get("data", {})
            if "text/html" in data or "application/vnd.jupyter.widget-view+json" in data:
                continue  # a widget or the static view: shown as HTML, not as this text
            shown.append(out.get("text", "") + data.get("text/plain", ""))
    raw = [m.group(0) for text in shown for m in [_RAW_NUMBER.search(text)] if m]
    assert not raw, (raw, shown)


def test_exported_workbook_embeds_widget_state_and_static_charts(exported):
    nb, body, _ = exported
    state = nb.metadata["widgets"]["application/vnd.jupyter.widget-state+json"]["state"]
    charts_in_state = [m for m in state.values()
                       if m["model_name"] == "HTMLModel" and "<svg" in m["state"]["value"]]
    assert len(charts_in_state) >= 2  # edge time against load, far-end waveforms
    assert '<script type="application/vnd.jupyter.widget-state+json">' in body
    # the static copy: both charts inline, outside the widgets, so no script is needed
    static = [o for c in nb.cells if c.cell_type == "code" for o in c.get("outputs", [])
              if "text/html" in o.get("data", {}) and "<svg" in o["data"]["text/html"]]
    assert len(static) == 1 and static[0]["data"]["text/html"].count("<svg") == 2
    assert body.count("Edge time against load") >= 1


def _screenshot(page: Path, tmp: Path):
    from pngcheck import png_pixels

    shot = tmp / f"{page.stem}.png"
    profile = tmp / f"profile-{page.stem}"
    cmd = ["chromium", "--headless", "--no-sandbox", "--disable-gpu",
           "--disable-background-networking", "--disable-component-update", "--disable-sync",
           "--no-first-run", "--disable-quic", f"--user-data-dir={profile}",
           f"--screenshot={shot}", "--window-size=1280,2000", page.as_uri()]
    run = subprocess.run(cmd, capture_output=True, text=True, timeout=60, cwd=tmp)
    assert shot.exists(), run.stderr[-2000:]
    return png_pixels(shot.read_bytes())


def _chart_pixels(img) -> int:
    from pngcheck import colour_count

    # the curve colours of the charts (Okabe–Ito blue and vermillion); the page's own
    # styles use neither
    return colour_count(img, charts.BLUE, tol=10) + colour_count(img, charts.VERMILLION,
                                                                 tol=10)


@pytest.mark.browser
@pytest.mark.skipif(shutil.which("chromium") is None, reason="chromium is not on PATH")
def test_exported_workbook_renders_its_charts_in_chromium(exported, tmp_path):
    from pngcheck import distinct_colours, non_white_fraction

    _, body, page = exported
    img = _screenshot(page, tmp_path)
    assert img.shape == (2000, 1280, 3)
    # common practice, no source: thresholds well below what the page shows (about 10 %
    # non-white, several hundred colours, about 1800 chart-coloured pixels) and well above
    # what a blank or chart-less page gives (the control below)
    assert non_white_fraction(img) > 0.02
    assert distinct_colours(img) >= 50
    assert _chart_pixels(img) > 200
    # control: the same page with the inline charts taken out shows none of their colours
    bare = tmp_path / "no-charts.html"
    bare.write_text(re.sub(r"<svg\b.*?</svg>", "", body, flags=re.S), encoding="utf-8")
    assert _chart_pixels(_screenshot(bare, tmp_path)) < 20


def test_line_explorer_daisy_chain_offers_each_receiver(library):
    # invented: a flash and an ADC along a 20 cm trace, each at its own point
    le = LineExplorer(library, receivers=[("nor-flash-spi", "sclk"), ("adc-spi", "sclk")],
                      length=0.2)
    assert le.receiver_view.disabled  # the far end: one point, nothing to choose
    le.set(placement="daisy chain")
    assert le.error is None
    assert not le.receiver_view.disabled
    assert [v for _, v in le.receiver_view.options] == ["", "U2", "U3"]
    assert set(le.wave_data.traces) == {f"{e} at {r}" for e in ("rise", "fall")
                                        for r in ("U2", "U3")}
    assert "route" in le.design_text()
    le.set(receiver="U2")
    assert le.wave_data.receivers == ["U2.sclk"]
    subjects = {c.subject for c in le.line_result.checks if c.id == "ringing"}
    assert subjects == {"U2", "U3"}
    le.set(placement="far end")
    assert le.receiver_view.disabled and le.receiver_view.value == ""
# =========================================================================== crosstalk


def test_crosstalk_explorer_is_the_engines_coupling():
    from pinlib.widgets import CrosstalkExplorer

    demo = Path(__file__).resolve().parents[1] / "workbooks" / "designs" / "demo-board.toml"
    x = CrosstalkExplorer(demo)
    # at the design's own settings the widget shows the check's coupling result
    (expected,) = check_file(demo).couplings
    assert [c.to_json() for c in x.result.checks] == [c.to_json() for c in expected.checks]
    low, high = x.wave_charts["low"], x.wave_charts["high"]
    assert x.noise_chart.svg and low.svg and high.svg
    near = x.figures["peak_noise"].value
    # closer traces over a longer run with a faster edge: more noise (derived from Kb
    # rising as the gap closes, pinlib.physics.coupled)
    x.set(spacing=0.05e-3, length=0.3, edge_time=0.2e-9)
    assert x.error is None and x.figures["peak_noise"].value > near
    assert x.result.aggressor == "edge-1"   # the edge moved: a described edge now
    assert x.updates == 1                   # three settings, one recompute
    x.show.value = "held high"              # a click: the charts only, nothing solved again
    assert x.updates == 1 and low.svg is None and low.widget.layout.display == "none"
    assert "held high" in high.svg and "held low" not in high.svg
    # held low and held high each on its own time axis, drawn to where it settles (a
    # line held high through its pull-up recovers far slower than a driven-low one)
    x.show.value = "both"
    assert low.svg and high.svg and low.widget.layout.display is None
    for held, view in x.wave_charts.items():
        labels = [k for k in x.waves.traces if k.startswith(f"held {held}")]
        rows = [r for layer in view.data() for r in layer if "t" in r]
        assert len(rows) == len(labels) * len(x.waves.window(labels)[0])
    assert len(x.waves.window([k for k in x.waves.traces if "low" in k])[0]) < len(x.waves.t)
    with pytest.raises(InputError):
        x.set(spacing=-1.0)


def test_crosstalk_chart_shades_by_the_rule_the_checks_use():
    from pinlib.widgets import CrosstalkExplorer

    x = CrosstalkExplorer(DEMO)
    x.set(length=0.5)  # a long run: the noise crosses VIL at close spacings
    d = x.sweep
    assert d.t_sp and d.minimum_spacing is not None
    above = [s for s, p in zip(d.spacing, d.peak, strict=True) if p > d.allowed]
    assert above  # the curve stands above the band there ...
    assert d.within_spacing > max(above)
    # ... and every such point lies in the region drawn as a warning, from the minimum
    # spacing (where no check fails) to where the noise is within the thresholds
    assert all(d.minimum_spacing * (1 - 1e-9) <= s for s in above)
    spec = str(x.noise_chart.spec)
    assert "a warning, not a failure" in spec and "no check fails" in spec
    assert "allowed noise" not in spec
    failing = [c for c in x.result.checks if c.status == "fail"]
    assert not failing  # at the design's 250 µm: the rule says no check fails
    # the x axis: ticks 1, 2 and 5 of each decade (400 and 500 ran together)
    ticks = [v for layer in x.noise_chart.spec["layer"]
             for v in (layer.get("encoding", {}).get("x", {}).get("axis", {}) or {})
             .get("values", [])]
    assert ticks and set(ticks) <= {10.0, 20.0, 50.0, 100.0, 200.0, 500.0, 1000.0, 2000.0}


def test_crosstalk_checks_keep_the_couplings_name_when_the_edge_moves():
    """Workbook 06 moves the aggressor's edge (500 ps): the engine then names the
    aggressor a described edge, "edge-1", which the checks table's where column showed
    ("sensors.scl<-edge-1 SCL near end"); it keeps the coupling's name as the design and
    pinlib check write it, and the status line says the edge was set."""
    from pinlib.widgets import CrosstalkExplorer

    x = CrosstalkExplorer(DEMO)
    (design_coupling,) = check_file(DEMO).couplings
    x.set(edge_time=0.5e-9)
    assert x.result.id != design_coupling.id  # the engine's own name for the moved edge
    shown = html.unescape(x.checks_html.value)
    assert x.result.id not in shown and "edge-1" not in shown
    assert f"{design_coupling.id} SCL near end" in shown, shown
    assert "its edge set to 500 ps" in x.status_html.value


def test_crosstalk_notes_name_the_designs_aggressor_when_the_edge_moves():
    """The engine's note on the aggressor named the described edge "edge-1" once the
    edge slider moved; the notes name the design's aggressor, its edge set here."""
    from pinlib.widgets import CrosstalkExplorer

    x = CrosstalkExplorer(DEMO)
    x.set(edge_time=0.5e-9)
    notes = html.unescape(x.notes_html.value)
    assert x.result.aggressor not in notes and "edge-1" not in notes, notes
    assert "aggressor display.sclk (its edge set here): 3.3 V swing, edge 500 ps" in notes
    # at the design's own edge the engine's note stands as it is
    x.set(edge_time=x.aggressor.edge_time)
    assert x.result.notes[0] in html.unescape(x.notes_html.value)


def test_crosstalk_chart_band_says_which_side_of_each_threshold():
    """The shaded band of workbook 06's noise chart is the noise that keeps the victim
    below VIL while held low and above VIH while held high; its legend read "noise
    within VIL, VDD − VIH", which named no side of either."""
    from pinlib.widgets import CrosstalkExplorer

    x = CrosstalkExplorer(DEMO)
    legend = html.unescape(x.noise_chart.svg)
    assert "below VIL (held low), above VIH (held high)" in legend
    assert "within VIL, VDD" not in legend


def test_crosstalk_figures_say_when_a_search_ended_at_its_own_bound():
    """The minimum spacing and the maximum parallel length are searches: where no
    spacing searched fails (and every length searched passes) the result is the
    search's own bound, which the figures table says ("18 µm or less", "1 m or more")
    as pinlib check's line does, instead of showing the bound as if it were the limit."""
    from pinlib.model.result import Figure
    from pinlib.present.report import coupling_line
    from pinlib.widgets import CrosstalkExplorer

    x = CrosstalkExplorer(DEMO)
    x.set(spacing=0.1e-3, length=0.3, edge_time=0.5e-9)  # the workbook's closer, longer run
    f = x.figures
    # derived: the engine's results lie at the bounds it searched (its own figures)
    assert f["minimum_spacing"].value == pytest.approx(f["spacing_searched_from"].value,
                                                       rel=1e-9)
    assert f["maximum_parallel_length"].value == pytest.approx(f["length_searched_to"].value,
                                                               rel=1e-9)
    cells = {k: html.unescape(v) for k, v in re.findall(
        r'<tr title="([^"]+)"><td[^>]*>[^<]*</td><td[^>]*>([^<]*)</td>', x.figures_html.value)}
    low, top = format_si(f["spacing_searched_from"].value, "m"), \
        format_si(f["length_searched_to"].value, "m")
    assert cells["minimum_spacing"] == f"{low} or less", cells
    assert cells["maximum_parallel_length"] == f"{top} or more", cells
    assert cells["spacing_searched_from"] == low and cells["length_searched_to"] == top
    # the same words as pinlib check's line of the coupling
    line = coupling_line(x.result)
    assert f"minimum {low} or less" in line and f"maximum {top} or more" in line
    # a result inside the searched range is the limit itself: no words
    from pinlib.present.values import search_bound_words

    # (invented test data: a minimum spacing of 50 µm found above an 18 µm start)
    inside = {"minimum_spacing": Figure(50e-6, "m"), "spacing_searched_from": Figure(18e-6, "m")}
    assert search_bound_words(inside, "minimum_spacing") == ""
    assert search_bound_words({"minimum_spacing": Figure(None, "m", "none passes"),
                               "spacing_searched_from": Figure(18e-6, "m")},
                              "minimum_spacing") == ""


def test_crosstalk_explorer_names_the_designs_aggressor_and_its_sliders_units():
    from pinlib.widgets import CrosstalkExplorer

    x = CrosstalkExplorer(DEMO)
    x.set(edge_time=1e-9)
    assert "sensors.scl beside display.sclk, its edge set to 1 ns" in x.status_html.value
    assert "edge-1" not in x.status_html.value
    with pytest.raises(InputError) as info:
        x.set(spacing=30e-6)
    text = info.value.message
    # the slider's ends are the search's: 0.1 h to 10 h of the demo's 0.18 mm height
    assert "30 µm" in text and "18 µm" in text and "1.8 mm" in text
    assert "Ω" not in text and "E24" not in text


def test_bus_builder_marks_the_parts_the_bus_would_fail(library):
    """A peripheral the bus as set would fail is still offered, its option says why
    ("— fails here: up to 100 kHz") and so does the line under the list when it is
    picked; the marks are the engine's own verdicts: each part offered is added, and
    the device-speed and supply-range checks fail exactly for the marked ones."""
    b = BusBuilder(library, peripherals=())
    marked = set()
    # Fast-mode at 3.3 V ± 5 %; ± 6 % takes the rail past a 3.135-3.465 V part's range
    # (the controller's 3.0-3.6 V still holds it); SMBus 100 kHz slows the clock
    for settings in ({}, {"supply_tolerance": 0.06, "fits_supply": False},
                     {"protocol": "smbus", "mode": "100k", "supply_tolerance": 0.05}):
        b.set(**settings)
        for label, pid in list(b.pick.options):
            b.pick.value = pid
            ref = b.add_peripheral(pid)
            failed = sorted(c.id for _, _, c in b.bus_result.all_checks()
                            if c.id in ("device-speed", "supply-range") and c.status == "fail")
            # against a class's typical value the engine's check warns, and so does the
            # offer (model.result.soft_limit)
            warned = sorted(c.id for _, _, c in b.bus_result.all_checks()
                            if c.id in ("device-speed", "supply-range") and c.status == "warn"
                            and c.margin < 0)
            b.remove_peripheral(ref)
            assert ("— fails here:" in label) == bool(failed), (settings, label, failed)
            assert ("— warns here:" in label) == (bool(warned) and not failed), (label, warned)
            failed = failed or warned
            if failed:
                marked.add((pid, tuple(failed)))
                assert all(c in b.pick_fit.value for c in failed), b.pick_fit.value
                assert pid in b.pick_fit.value
            else:
                assert b.pick_fit.value == ""
    # the library's SMBus 100 kHz parts on the 400 kHz bus, and the FPGA bank at ± 6 %
    assert ("battery-gauge-smbus", ("device-speed",)) in marked
    assert ("fpga-io-3v3", ("supply-range",)) in marked


def _scene_marks(node, marktype: str, out: list) -> list:
    """The items of each mark of ``marktype`` in a rendered scenegraph."""
    if isinstance(node, dict):
        if node.get("marktype") == marktype and node.get("role") == "mark":
            out.append(node.get("items", []))
        for item in node.get("items", []):
            _scene_marks(item, marktype, out)
    return out


def _note_clearance(spec) -> tuple[float, str]:
    """The rendered edge chart: the least distance from its operating point's note (its
    text's box, the charts' font at its size) to any curve. [px]"""
    import numpy as np
    import vl_convert

    scene = vl_convert.vegalite_to_scenegraph(spec)["scenegraph"]
    (note,) = [t for ts in _scene_marks(scene, "text", []) for t in ts
               if " at " in (t.get("text") or "")]
    w, h = charts.text_width(note["text"], note["fontSize"], bold=True), note["fontSize"]
    x0 = note["x"] + note.get("dx", 0) - (w if note["align"] == "right" else 0)
    y0 = note["y"] + note.get("dy", 0) - {"top": 0, "middle": h / 2,
                                           "bottom": h}[note["baseline"]]
    least = float("inf")
    for line in _scene_marks(scene, "line", []):
        xs, ys = np.array([p["x"] for p in line]), np.array([p["y"] for p in line])
        t = np.linspace(0.0, 1.0, 50)[:, None]
        sx, sy = (xs[:-1] + t * np.diff(xs)).ravel(), (ys[:-1] + t * np.diff(ys)).ravel()
        d = np.hypot(np.maximum(np.maximum(x0 - sx, sx - x0 - w), 0.0),
                     np.maximum(np.maximum(y0 - sy, sy - y0 - h), 0.0))
        least = min(least, float(d.min()))
    return least, note["text"]


def test_line_explorer_charts_end_at_the_record_and_keep_the_note_off_the_curves(library):
    """Workbook 02: the waveform chart's time axis ends where the record does (it ran to
    18 ns with the record ending at 16, a blank band that read as missing data), and the
    operating point's note on the edge chart keeps clear of every curve."""
    import vl_convert

    le = LineExplorer(library, driver=("mcu-3v3", "sclk"),
                      receivers=[("display-controller-spi", "sclk")], length=0.28,
                      series="auto")
    for length in (0.28, 0.1, 0.05, 0.5):
        le.set(length=length)
        scene = vl_convert.vegalite_to_scenegraph(le.waves.spec)["scenegraph"]
        plot_width = scene["items"][0]["width"]
        last = max(p["x"] for line in _scene_marks(scene, "line", []) for p in line)
        # common practice, no source: 1 px of rounding; a band wider reads as no data
        assert plot_width - last <= 1.0, (length, plot_width, last)
        room, text = _note_clearance(le.edges.spec)
        # common practice, no source: 3 px between text and a line reads as apart
        assert room >= 3.0, (length, text, room)


def test_line_explorer_edge_legend_names_its_levels_in_percent(library):
    """Workbook 02's edge chart: each curve's levels are written as the figures table
    and the bench panel write them ("10–90 %"), not as a bare "10-90"."""
    le = LineExplorer(library, driver=("mcu-3v3", "sclk"),
                      receivers=[("display-controller-spi", "sclk")], length=0.28,
                      series="auto")
    legend = html.unescape(le.edges.svg)
    for name in ("rise 10–90 %", "fall 10–90 %"):
        assert name in legend, name
    assert not re.search(r"(rise|fall) \d+-\d+(?! %)", legend)


def test_bus_builder_supply_filter_takes_the_rail_over_its_tolerance(library):
    # mcu-3v3's class states 3.0–3.6 V (invented built-in class); a 3.3 V rail at ±5 %
    # (3.135–3.465 V) stays inside it, at ±10 % (2.97–3.63 V) it does not, and the
    # engine's supply-range check takes the rail at its tolerance (derived: 3.3·0.9, 3.3·1.1;
    # against the class's typical range it warns)
    b = BusBuilder(library, peripherals=())
    b.set(function="any", supply=3.3, supply_tolerance=0.05, fits_supply=True)
    assert "(does not fit)" not in dict((v, k) for k, v in b.controller.options)["mcu-3v3"]
    b.set(supply_tolerance=0.10)
    assert "(does not fit)" in dict((v, k) for k, v in b.controller.options)["mcu-3v3"]
    assert "does not hold the 3.3 V rail at ±10 % (2.97 V–3.63 V)" in b.controller_note.value
    assert any(c.id == "supply-range" and c.status == "warn" and c.margin < 0
               and c.details["limit_basis"] == "generic"
               for _, _, c in b.bus_result.all_checks())
    # fpga-io-3v3 states 3.135–3.465 V: exactly the 3.3 V rail at ±5 %, the ends at the
    # part's limits, where the check passes at a margin of 0
    b.set(supply_tolerance=0.05)
    assert "(does not fit)" not in dict((v, k) for k, v in b.controller.options)["fpga-io-3v3"]


def test_line_without_a_receiver_says_there_is_nothing_to_check(library):
    le = LineExplorer(library, driver=("mcu-3v3", "sclk"),
                      receivers=[("display-controller-spi", "sclk")], length=0.28)
    for ref, _, _ in le.receivers:
        le.remove_receiver(ref)
    assert "nothing to check: the line has no receiver" in le.status_html.value
    assert "PASS" not in le.status_html.value.upper().replace("PASSES", "")
    assert le.edges.svg is None and le.waves.svg is None
    assert "no receiver" in le.edges.widget.value
    le.add_receiver("display-controller-spi", "sclk")
    assert "nothing to check" not in le.status_html.value and le.edges.svg


def test_line_supply_follows_a_driver_that_does_not_take_it(library):
    le = LineExplorer(library, length=0.05)
    assert le.supply.value == pytest.approx(3.3)
    le.set(driver_part="mcu-5v")
    typ = library.get("mcu-5v").supply.typ.value  # the part file's typical supply
    assert le.supply.value == pytest.approx(typ) and "typical supply" in le.supply_note.value
    # the driver (U1) within its range; a 3.3 V receiver may not be, and says so
    assert all(c.status == "pass" for _, _, c in le.result.buses[0].all_checks()
               if c.id == "supply-range" and c.subject == "U1")
    le.supply.text.value = "4.5 V"  # invented test input: the user's own choice
    assert le.supply_note.value == ""
    le.set(driver_part="mcu-3v3")  # 4.5 V is outside a 3.3 V part's range too
    assert le.supply.value == pytest.approx(library.get("mcu-3v3").supply.typ.value)


def test_swap_change_list_names_a_coupling_as_the_reports_do():
    # invented test input: a 1.8 V controller moves the crosstalk figures of the demo's
    # coupling; its row says "beside", not the id's arrow
    x = SwapExplorer(DEMO)
    assert x.apply_swap("U1", "mcu-1v8") == []
    assert any("<-" in c.path for c in x.changes.figure_changes)
    cells = re.findall(r"<td[^>]*>([^<]*)</td>", x.changes_html.value)
    assert "sensors.scl beside display.sclk" in cells
    assert not any("&lt;-" in c or "<-" in c for c in cells)
