"""What a user of the workbenches meets beyond the figures: controls that stay visible,
inputs read with their units and never changed unannounced, a swap view that follows the
position just changed.

* Every widget of every workbench has its own ``Layout`` (and its own style): hiding one
  control (the trace panel hides the fields its geometry does not use) can hide nothing
  else.
* A quantity typed into a field is read by :func:`pinlib.core.quantity.parse`; a refused text
  shows its error under the field, the panel is not recomputed (figures, charts and the
  count of updates stay as they were) and a notice says so; a valid text recomputes.
* A selection the filters no longer allow is kept and the note under it says why; a
  selection that must change says what it became.
* SwapExplorer: after a substitution the Device list, the ranking, the charts and the
  checks are those of the position just changed; the change list is grouped by bus, the
  buses with a status change first.
"""

from __future__ import annotations

import html
from pathlib import Path

import pytest

pytest.importorskip("ipywidgets")
pytest.importorskip("altair")
pytest.importorskip("vl_convert")

import ipywidgets as W  # noqa: E402

from pinlib.core.errors import InputError  # noqa: E402
from pinlib.core.quantity import format_si  # noqa: E402
from pinlib.library import load_library  # noqa: E402
from pinlib.present.widgets import (  # noqa: E402
    BusBuilder,
    CrosstalkExplorer,
    IbisImporter,
    LineExplorer,
    PartRecorder,
    SpiBudget,
    SwapExplorer,
)

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "workbooks" / "designs" / "demo-board.toml"


@pytest.fixture(scope="module")
def library():
    return load_library(env=False)


@pytest.fixture(scope="module")
def panels(library, tmp_path_factory):
    return {
        "BusBuilder": BusBuilder(library, peripherals=["eeprom-i2c", "rtc-i2c"], length=0.14),
        "LineExplorer": LineExplorer(library, length=0.28),
        "SpiBudget": SpiBudget(DEMO, bus="display"),
        "PartRecorder": PartRecorder(tmp_path_factory.mktemp("team") / "team"),
        "IbisImporter": _importer(tmp_path_factory.mktemp("ibis")),
        "SwapExplorer": SwapExplorer(DEMO),
        "CrosstalkExplorer": CrosstalkExplorer(DEMO),
    }


def _importer(folder):
    """An IBIS import panel with a file read and a component chosen (its pin rows shown)."""
    from test_ibis import ibis_text

    (folder / "invented.ibs").write_text(ibis_text(edges=""))
    return IbisImporter(folder / "team").set(file=str(folder / "invented.ibs"),
                                             component="DEMO-IO")


def _tree(widget) -> list:
    """Every widget under ``widget`` (itself included), depth first."""
    out, todo = [], [widget]
    while todo:
        w = todo.pop()
        out.append(w)
        todo.extend(getattr(w, "children", ()) or ())
    return out


def _attributes(panel) -> list:
    """Every widget a panel holds as an attribute (directly or in a helper object)."""
    found = []
    for value in vars(panel).values():
        if isinstance(value, W.Widget):
            found.append(value)
        elif hasattr(value, "__dict__") and not isinstance(value, type):
            found += [v for v in vars(value).values() if isinstance(v, W.Widget)]
    return found


@pytest.mark.parametrize("name", ["BusBuilder", "LineExplorer", "SpiBudget", "PartRecorder",
                                  "IbisImporter", "SwapExplorer", "CrosstalkExplorer"])
def test_no_two_widgets_share_a_layout_object(panels, name):
    panel = panels[name]
    widgets = [w for w in _tree(panel.widget) if hasattr(w, "layout")]
    assert len(widgets) > 10
    layouts = [id(w.layout) for w in widgets]
    shared = {i for i in layouts if layouts.count(i) > 1}
    assert not shared, [(type(w).__name__, getattr(w, "description", ""))
                        for w in widgets if id(w.layout) in shared]
    styled = [w for w in widgets if getattr(w, "style", None) is not None]
    assert len({id(w.style) for w in styled}) == len(styled)


@pytest.mark.parametrize("name", ["BusBuilder", "LineExplorer", "SpiBudget", "PartRecorder",
                                  "IbisImporter", "SwapExplorer", "CrosstalkExplorer"])
def test_every_control_of_a_panel_is_in_its_widget_tree(panels, name):
    panel = panels[name]
    tree = {id(w) for w in _tree(panel.widget)}
    controls = [w for w in _attributes(panel)
                if isinstance(w, (W.Text, W.Dropdown, W.ToggleButtons, W.SelectionSlider,
                                  W.Select, W.Checkbox, W.Combobox, W.Button))]
    assert controls
    missing = [getattr(w, "description", type(w).__name__) for w in controls
               if id(w) not in tree]
    assert not missing


@pytest.mark.parametrize("name", ["BusBuilder", "LineExplorer", "CrosstalkExplorer"])
def test_no_slider_readout_can_be_typed_into(panels, name):
    """A selection slider's own readout takes typed text ("150") and ignores it while it
    goes on showing it: every slider shows its value as a label instead."""
    panel = panels[name]
    sliders = [w for w in _tree(panel.widget) if isinstance(w, W.SelectionSlider)]
    assert sliders
    assert [s.description for s in sliders if s.readout] == []
    labels = {w.value for w in _tree(panel.widget) if isinstance(w, W.HTML)
              and "pinlib-readout" in w._dom_classes}
    for s in sliders:
        shown = dict((v, label) for label, v in s.options)[s.value]
        assert s.disabled or any(f">{html.escape(shown)}<" in v for v in labels), s.description


def test_a_slider_label_follows_its_value(panels):
    xt = panels["CrosstalkExplorer"]
    slider = xt.sliders["Spacing"]
    # invented test input: a spacing on the slider's list
    xt.set(spacing=0.2e-3)
    assert slider.text == "200 µm"
    xt.set(spacing=xt.coupling.spacing)


def test_crosstalk_sliders_reach_as_far_as_the_search(panels):
    """The chart and the figures search the spacing from 0.1 h and the length up to 1 m:
    the sliders reach the same ends (they stopped at 50 µm and 500 mm)."""
    from pinlib.engines.coupling import LENGTH_SEARCH_MAX

    xt = panels["CrosstalkExplorer"]
    lo, hi = xt.result.workings.spacing_range
    spacings = [v for _, v in xt.spacing.options]
    assert min(spacings) == pytest.approx(lo) and max(spacings) == pytest.approx(hi)
    assert xt.figures["spacing_searched_from"].value == pytest.approx(min(spacings))
    lengths = [v for _, v in xt.length.options]
    assert max(lengths) == LENGTH_SEARCH_MAX == xt.figures["length_searched_to"].value


@pytest.mark.parametrize("name", ["BusBuilder", "LineExplorer"])
def test_part_lists_start_where_the_other_fields_do(panels, name):
    """The Peripheral and Receiver dropdowns and the lists of placed parts had a narrower
    description (84 px): they started 46 px left of every other field."""
    from pinlib.present.widgets.common import LABEL_WIDTH

    panel = panels[name]
    widths = {w.description: w.style.description_width for w in _tree(panel.widget)
              if isinstance(w, (W.Dropdown, W.Select, W.Text)) and w.description}
    assert widths["Supply"] == f"{LABEL_WIDTH}px"
    assert {d: v for d, v in widths.items() if v != f"{LABEL_WIDTH}px"} == {}


def test_hiding_the_unused_trace_fields_hides_nothing_else(library):
    b = BusBuilder(library, peripherals=["eeprom-i2c"])
    b.set(geometry="per-length")
    hidden = [w for w in _tree(b.widget) if getattr(w.layout, "display", None) == "none"]
    # the four board-geometry fields (each a box of its text and its error line)
    assert sorted(w.children[0].description for w in hidden) == \
        ["Copper", "Height", "Width", "εr"]
    b.set(geometry="stripline")
    hidden = [w for w in _tree(b.widget) if getattr(w.layout, "display", None) == "none"]
    assert sorted(w.children[0].description for w in hidden) == \
        ["C per length", "Delay per length"]
    assert b.trace.height.text.description == "Spacing"


def test_control_column_is_fixed_and_outputs_wrap_below(panels):
    for name in ("BusBuilder", "LineExplorer", "SpiBudget", "CrosstalkExplorer"):
        row = next(w for w in _tree(panels[name].widget)
                   if isinstance(w, W.Box) and w.layout.flex_flow == "row wrap")
        controls, outputs = row.children
        assert controls.layout.flex == "0 0 auto"
        assert controls.layout.width == controls.layout.min_width
        assert outputs.layout.min_width == "0" and outputs.layout.flex.startswith("1 1 ")


# =========================================================================== quantities


def _type(field, text):
    """Type ``text`` into a quantity field, as the browser sends it (on Enter or blur)."""
    field.text.value = text


@pytest.mark.parametrize("text, words", [
    ("4.7 kohms", "Ω where a voltage belongs"),
    ("3.3", "bare number has no unit"),
    ("-3.3 V", "outside the control's range"),
    ("50 V", "outside the control's range"),
    ("", "a value is needed"),
])
def test_a_refused_supply_leaves_the_figures_and_says_so(library, text, words):
    b = BusBuilder(library, peripherals=["eeprom-i2c"], supply=3.3)
    figures, svg, updates = dict(b.figures), b.window.svg, b.updates
    controller, pick = b.controller.value, b.pick.value
    _type(b.supply, text)
    assert b.supply.error is not None and words in b.supply.error.problem + " " + \
        (b.supply.error.expected or "")
    assert html.escape(b.supply.error.problem, quote=True) in b.supply.error_html.value
    assert b.updates == updates and b.figures == figures and b.window.svg == svg
    assert b.supply.value == 3.3 and "Supply" in b.held_html.value
    assert (b.controller.value, b.pick.value) == (controller, pick)
    # a valid text recomputes and clears both messages
    _type(b.supply, "3.0 V")
    assert b.supply.error is None and b.supply.error_html.value == ""
    assert b.held_html.value == "" and b.updates == updates + 1
    assert b.figures["supply"].value == 3.0


def test_a_refused_field_marks_the_outputs_stale_where_it_is(library):
    """The notice sits at the top of the outputs, out of view beside a field far down
    the controls: the field's own message says the outputs are not recomputed, and the
    outputs (all but the notice) carry the class that dims them, until a valid text."""
    b = BusBuilder(library, peripherals=["eeprom-i2c"])
    outputs = b._stale
    assert b.checks_html in outputs and b.window.widget in outputs[0].children
    _type(b.pullup_tolerance, "abc")
    assert "Not recomputed" in b.pullup_tolerance.error_html.value
    assert all("pinlib-stale" in w._dom_classes for w in outputs)
    assert "pinlib-held-note" in b.held_html._dom_classes
    assert ".pinlib-stale" in b.held_html.value  # its style comes with the notice
    _type(b.supply, "3.3")  # two refused: each says it
    assert "Not recomputed" in b.supply.error_html.value
    _type(b.supply, "3.3 V")
    _type(b.pullup_tolerance, "2 %")
    assert b.pullup_tolerance.error_html.value == "" and b.held_html.value == ""
    assert not any("pinlib-stale" in w._dom_classes for w in outputs)


def test_quantities_are_read_with_their_units(library):
    b = BusBuilder(library, peripherals=["eeprom-i2c"])
    _type(b.trace.length, "5.5 in")
    # published: NIST SP 811 (2008), B.8: 1 in = 2.54 cm exactly
    assert b.trace.length.value == pytest.approx(5.5 * 0.0254, rel=1e-12)
    assert 'length = "13.97 cm"' in b.text
    _type(b.extra_capacitance, "0.012 nF")
    # published: SI Brochure, 9th edition, table 7: n = 1e-9
    assert b.extra_capacitance.value == pytest.approx(12e-12, rel=1e-12)
    _type(b.trace.length, "-3 cm")
    assert "outside the control's range" in b.trace.length.error.problem
    assert b.trace.length.value == pytest.approx(5.5 * 0.0254, rel=1e-12)
    _type(b.trace.length, "14 cm")
    assert b.error is None and b.held_html.value == ""


def test_a_trace_width_is_given_a_width_as_its_example(library):
    b = BusBuilder(library, peripherals=["eeprom-i2c"])
    _type(b.fields["width"], "abc")  # invented test input: no number
    # common practice, no source: a trace is some tenths of a mm wide, not "14 cm"
    shown = html.unescape(b.fields["width"].error_html.value)
    assert "e.g. '0.2 mm'" in shown and "14 cm" not in shown


def test_an_empty_plain_number_is_not_asked_for_a_unit(library):
    """εr is a plain number: an empty box asks for the number in its range, not for a
    unit it has none of; an empty quantity still asks for its unit."""
    b = BusBuilder(library, peripherals=["eeprom-i2c"])
    _type(b.trace.er, "")
    assert b.trace.er.error is not None and "a value is needed" in b.trace.er.error.problem
    assert "unit" not in b.trace.er.error.expected, b.trace.er.error.expected
    assert "unit" not in b.trace.er.error_html.value
    _type(b.trace.er, "4.2")
    _type(b.supply, "")
    assert b.supply.error.expected.endswith("with its unit")


def test_an_out_of_range_value_says_how_it_was_read():
    """"0.5 Hz" is read as 500 mHz: the refusal says so beside the range, which alone
    leaves the user puzzled; a value read as typed is not repeated.  ("20 mhz", once read
    as 20 mHz, is refused with both readings by the unit parser.)"""
    sb = SpiBudget(DEMO, bus="display")
    _type(sb.clock, "0.5 Hz")
    assert "outside the control's range" in sb.clock.error.problem
    assert sb.clock.error.hint == "read as 500 mHz"
    assert "read as 500 mHz" in html.unescape(sb.clock.error_html.value)
    _type(sb.clock, "20 mhz")
    assert '"20 MHz" or "20 mHz"' in str(sb.clock.error)
    _type(sb.clock, "10 GHz")
    assert sb.clock.error.hint is None
    _type(sb.clock, "10 MHz")
    assert sb.clock.error is None


def test_set_refuses_out_of_range_values_and_writes_the_box(library):
    b = BusBuilder(library, peripherals=["eeprom-i2c"])
    with pytest.raises(InputError, match="range"):
        b.set(supply=50.0)
    assert b.supply.value == 3.3 and b.supply.text.value == "3.3 V"
    b.set(supply=2.5, length=0.2, extra_capacitance=15e-12)
    assert (b.supply.text.value, b.trace.length.text.value,
            b.extra_capacitance.text.value) == ("2.5 V", "20 cm", "15 pF")


def test_two_refused_fields_hold_the_panel_until_both_are_valid(library):
    le = LineExplorer(library, length=0.28)
    updates = le.updates
    _type(le.supply, "3.3 A")
    _type(le.trace.length, "28")
    assert le.updates == updates and "Supply" in le.held_html.value and \
        "Length" in le.held_html.value
    le.set(series="none")  # another control while held: nothing recomputed
    assert le.updates == updates
    _type(le.supply, "3.3 V")
    assert le.updates == updates and "Length" in le.held_html.value
    _type(le.trace.length, "28 cm")
    assert le.updates == updates + 1 and le.held_html.value == ""
    assert le.figures["series_resistor"].value == 0.0  # the "none" set while held


def test_a_bare_number_is_offered_only_units_its_field_takes(library):
    """A bare number's refusal suggests writing it with a unit; where that value would
    be refused too (a supply of "-3.3" read as -3.3 V), it names the field's range
    instead of sending the user to a second refusal."""
    b = BusBuilder(library, peripherals=["eeprom-i2c"])
    lo, hi = b.supply.lo, b.supply.hi  # the field's own range
    _type(b.supply, "-3.3")
    shown = html.unescape(b.supply.error_html.value)
    assert "a bare number has no unit" in shown, shown
    assert '"-3.3 V"' not in shown
    assert f"range is from {format_si(lo, 'V')} to {format_si(hi, 'V')}" in shown, shown
    # in range with its unit: the unit is offered, as the parser words it
    _type(b.supply, "3.3")
    assert 'add the unit, e.g. "3.3 V"' in html.unescape(b.supply.error_html.value)
    # a length: of the two likely units only those the field takes (5000 cm and 5000 mm
    # are past 2 m; 14 cm and 14 mm are both inside)
    _type(b.trace.length, "14")
    assert '"14 cm" or "14 mm"' in html.unescape(b.trace.length.error_html.value)
    _type(b.trace.length, "5000")
    shown = html.unescape(b.trace.length.error_html.value)
    assert '"5000 cm"' not in shown and "range is from" in shown, shown


def test_bench_reading_writes_the_levels_as_the_dropdown_does(library):
    """The reading names its levels as the Measured dropdown offers them ("10–90 %"),
    not in another spelling ("10%–90%")."""
    b = BusBuilder(library, peripherals=["eeprom-i2c"])
    b.levels.value = (0.1, 0.9)
    b.set(pullup=2200.0, rise_measured=300e-9)
    # a number is held to its unit by a no-break space (benchreading._held)
    shown = html.unescape(b.bench_html.value).replace("\u00a0", " ")
    label = next(k for k, v in b.levels.options if v == (0.1, 0.9))
    assert f"({label}, as measured)" in shown, shown


def test_bench_inputs_refused_keep_the_reading(library):
    b = BusBuilder(library, peripherals=["eeprom-i2c"])
    b.set(pullup=2200.0, rise_measured=300e-9)
    reading = b.bench
    _type(b.rise_measured, "300 pF")
    assert "F where a time belongs" in b.rise_measured.error.problem
    assert b.bench == reading and b.held_html.value == ""  # the main panel is not held
    _type(b.rise_measured, "")
    assert b.bench is None and "enter the rise time" in b.bench_html.value


def test_clock_is_a_quantity_and_a_bus_change_says_where_the_clock_came_from():
    sb = SpiBudget(DEMO, bus="display")
    assert "10 MHz" in sb.bus_note.value and "mode 3" in sb.bus_note.value
    _type(sb.clock, "5000")
    assert "bare number" in sb.clock.error.problem and sb.clock.value == 10e6
    _type(sb.clock, "5 MHz")
    assert sb.design.bus("display").clock == 5e6
    sb.set(bus="flash")
    assert sb.clock.text.value == "20 MHz" and "20 MHz" in sb.bus_note.value


# =========================================================================== selections


def test_protocol_change_says_what_the_mode_became(library):
    b = BusBuilder(library, peripherals=["eeprom-i2c"])
    assert b.mode.value == "fast"
    b.set(protocol="smbus")
    assert b.mode.value != "fast"
    assert "fast" in b.mode_note.value and b.mode.value in b.mode_note.value
    b.set(protocol="i2c")  # back on I2C: the I2C mode last chosen, and said
    assert b.mode.value == "fast" and "last chosen for I2C" in b.mode_note.value


def test_back_on_i2c_the_last_i2c_mode_is_kept(library):
    b = BusBuilder(library, peripherals=["eeprom-i2c"])
    b.set(mode="fast-plus")
    b.set(protocol="smbus")
    b.set(mode="400k")
    b.set(protocol="i2c")
    assert b.mode.value == "fast-plus" and "fast-plus" in b.mode_note.value
    b.set(protocol="smbus")  # and back on SMBus, its own last mode
    assert b.mode.value == "400k"
    b.set(mode="1m")  # a choice of the user's: the note goes
    assert b.mode_note.value == ""


def test_a_note_on_what_a_change_did_goes_when_the_user_chooses_again(library):
    """"Mode 100k is not offered here: now standard." is true until the user chooses a
    mode: beside fast-plus it would say the mode is standard."""
    b = BusBuilder(library, peripherals=["eeprom-i2c"])
    b.set(protocol="smbus")
    b.set(protocol="i2c")
    assert "last chosen" in b.mode_note.value
    b.set(mode="fast-plus")
    assert b.mode_note.value == ""
    b.set(protocol="smbus")  # said again on the next change of the options
    assert "last chosen" in b.mode_note.value
    # the driver's output pin on workbench 02 alike
    le = LineExplorer(library, length=0.28)
    le.driver_part.value = "nor-flash-spi"  # its one output pin is cipo
    le.driver_part.value = "mcu-3v3"
    assert "cipo" in le.pin_note.value and "now" in le.pin_note.value
    le.driver_pin.value = "cs"
    assert le.pin_note.value == ""


def test_the_line_under_the_list_does_not_say_a_part_was_added(library):
    """The warning under the peripherals offered is about a part not yet placed: it
    reads as a condition, never as "Added, ..." beside a list that does not hold it."""
    b = BusBuilder(library, peripherals=["eeprom-i2c"])
    b.set(mode="fast-plus")
    b.pick.value = "adc-i2c"  # rated up to 400 kHz: the library's class
    said = html.unescape(b.pick_fit.value)
    # (its rating is typical of its class: it would warn, not fail, and says why)
    assert "If added, adc-i2c would warn on this bus (device-speed, against values " \
           "typical of its class" in said, said
    assert "adc-i2c" not in [p for _, p in b.peripherals]


def test_no_peripheral_offered_says_what_would_offer_some(library):
    """A category none of whose parts holds the rail empties the list: the note says
    which filters would offer parts, Add is disabled (it did nothing), and the note
    stays while the list stays empty."""
    b = BusBuilder(library, peripherals=["eeprom-i2c"])
    b.set(category="sensor")  # the library's one sensor is a 1.8 V part; the rail 3.3 V
    assert list(b.pick.options) == [] and b.add_button.disabled
    said = html.unescape(b.pick_note.value)
    assert "no peripheral is offered here" in said and "untick" in said, said
    b.set(function="gpio")  # another filter, the list still empty: still said
    assert "no peripheral is offered here" in html.unescape(b.pick_note.value)
    b.set(function="any", fits_supply=False)
    assert b.pick.options and not b.add_button.disabled
    assert "no peripheral" not in b.pick_note.value


def test_line_explorer_slider_shows_the_resistor_in_use(library):
    le = LineExplorer(library, length=0.28, series="auto")
    rs = le.figures["series_resistor"].value
    assert le.series.disabled and le.series.value == rs
    le.set(series="none")
    assert le.series.disabled
    le.set(series=47.0)
    assert not le.series.disabled and le.figures["series_resistor"].value == 47.0


# =========================================================================== swaps


def test_swap_view_follows_the_position_just_changed():
    x = SwapExplorer(DEMO)
    assert x.apply_swap("U4", "io-expander-i2c") == []
    assert x.ref.value == "U4" and x.chart_bus.value == "sensors"
    assert dict((v, k) for k, v in x.ref.options)["U4"].startswith(
        "U4 — io-expander-i2c, was eeprom-i2c")
    assert x.ranking.ref == "U4" and x.ranking.current == "io-expander-i2c"
    assert "io-expander-i2c" not in [v for _, v in x.new_part.options]
    # the next swap is on the SPI flash: everything moves to it
    assert x.apply_swap("U7", "adc-spi") == []
    assert x.ref.value == "U7" and x.chart_bus.value == "flash"
    assert x.ranking.ref == "U7"
    assert "timing budget, flash" in str(x.before.spec["title"])
    assert "timing budget, flash" in str(x.after.spec["title"])
    assert "Checks of bus flash" in x.checks_html.value
    # choosing another device moves the charts to its bus, without a recompute
    swapped = x.swapped_result
    x.ref.value = "U30"
    assert x.chart_bus.value == "power" and "power" in str(x.after.spec["title"])
    assert x.swapped_result is swapped and x.ranking.ref == "U30"


def test_swap_charts_the_bus_with_a_status_change_first():
    x = SwapExplorer(DEMO)
    assert x.apply_swap("U1", "mcu-1v8") == [] or x.refused
    if x.refused:
        pytest.skip("the demo's controller has no 1.8 V stand-in in this library")
    changed = [c.path.split("/")[0] for c in x.changes.status_changes]
    assert changed and x.chart_bus.value == next(
        b for b in x.chart_bus.options if b in changed)


def test_change_list_is_grouped_by_bus_status_changes_first():
    x = SwapExplorer(DEMO)
    # a status change on flash: a slow read-back fails the CIPO setup (adc-spi, used
    # here before, only met its 20 MHz rating at 20 MHz, a pass since issue 13.9)
    x.apply_swap("U7", "display-controller-spi")
    x.apply_swap("U4", "io-expander-i2c")  # figures move on sensors, no status change
    html = x.changes_html.value
    assert html.index("Bus <b>flash</b>") < html.index("Bus <b>sensors</b>")
    assert html.count("<details") == 3  # flash, sensors, the part values
    # each figure once: the per-line copies equal to the bus's figure are left out
    assert "Rise time tr (30–70 %), SDA" not in html and "Rise time tr" in html
    # no part on the bus adds a pull-up: the effective pull-up is the resistor, shown once
    assert "Pull-up resistor" in html and "Pull-up, effective" not in html


# =========================================================================== long choices


def _choice_lines(panel) -> list[str]:
    return [html.unescape(w.value) for w in _tree(panel.widget)
            if isinstance(w, W.HTML) and "pinlib-choice" in w.value]


def _label(dropdown) -> str:
    return dict((v, k) for k, v in dropdown.options)[dropdown.value]


def test_a_part_choice_is_shown_whole_under_its_dropdown(panels):
    # a closed dropdown in the control column shows ~30 characters of a part's label
    # ("mcu-3v3 — Microcontroller, 3"): the whole label is on a line under it
    b = panels["BusBuilder"]
    for dd in (b.controller, b.pick):
        assert any(_label(dd) in line for line in _choice_lines(b)), _label(dd)
        assert dd.tooltip == _label(dd)
    other = next(v for _, v in b.pick.options if v != b.pick.value)
    b.pick.value = other
    assert any(_label(b.pick) in line for line in _choice_lines(b))
    le = panels["LineExplorer"]
    for dd in (le.driver_part, le.pick):
        assert any(_label(dd) in line for line in _choice_lines(le)), _label(dd)
    x = panels["SwapExplorer"]
    x.ref.value = "Q1"
    assert any("(sensors/main-3v3, sensors/sensor-1v8)" in line for line in _choice_lines(x))
    assert any(_label(x.new_part) in line for line in _choice_lines(x))


def test_a_list_of_placed_parts_has_the_column_to_itself(panels):
    # a Remove button beside the list left 136 px for "U2  display-controller-spi: sclk"
    for name in ("BusBuilder", "LineExplorer"):
        p = panels[name]
        row = next(w for w in _tree(p.widget) if p.placed in getattr(w, "children", ()))
        assert p.remove_button not in row.children, name
