"""Tests of pinlib.present.plotdata: what the edge chart's data says about itself, and that every
series it names has its fixed chart colour.

The engine figures behind these arrays are tested against the result in
tests/test_review.py; here the checks are on the names and labels the charts show.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from pinlib.model.design import load_design
from pinlib.present import charts, plotdata

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "workbooks" / "designs" / "demo-board.toml"


@pytest.fixture(scope="module")
def demo():
    return load_design(DEMO)


def _push_pull_lines(design):
    for bus in design.buses:
        if bus.protocol in ("spi", "gpio"):
            lines = plotdata.line_analyses(bus, design)
            for sig, la in lines.items():
                for ref in la.cases:
                    yield bus, sig, ref, lines


def test_edge_data_says_which_figure_to_read(demo):
    seen = 0
    for bus, sig, ref, lines in _push_pull_lines(demo):
        e = plotdata.edge_vs_load_data(bus, demo, sig, driver=ref, analysis=lines)
        model = "transmission-line model" if e.model == "distributed" else "lumped model"
        # the point is named for what it is: the far end of this line, and how it was solved
        assert e.operating_label == f"far end of this line ({model})"
        # the curves are named for what they are, and the subtitle says which to read
        assert "lumped load" in e.curves_title
        assert "lumped load" in e.subtitle and model in e.subtitle
        assert "the figure the checks use" in e.subtitle
        seen += 1
    assert seen >= 3        # the demo's SPI bus: SCLK, COPI, CS and a CIPO per peripheral


def test_edge_curves_have_fixed_distinct_colours(demo):
    for bus, sig, ref, lines in _push_pull_lines(demo):
        e = plotdata.edge_vs_load_data(bus, demo, sig, driver=ref, analysis=lines)
        names = list(e.curves)
        assert all(charts.series_key(n) in charts.SERIES_COLOURS for n in names), names
        assert len(set(charts.series_colours(names))) == len(names)
        # the series resistor's curves are drawn at 10-90 %, the checks' levels
        assert all("10–90 %" in n for n in names if ", Rs " in n)
        other_levels = {n.split(",")[0].split()[1] for n in e.points[2]} - {"10–90"}
        assert len(names) == (4 if e.rs > 0 else 2) + 2 * len(other_levels)
        assert all(np.all(np.isfinite(c)) for c in e.curves.values())


def test_waveform_and_budget_series_have_fixed_colours(demo):
    bus = demo.bus("flash")
    tb = plotdata.timing_budget_data(bus, demo)
    comps = {c for _, c, _ in tb.rows}
    assert all(c in charts.SERIES_COLOURS for c in comps)
    for bus, sig, ref, lines in _push_pull_lines(demo):
        w = plotdata.waveform_data(bus, demo, sig, driver=ref, analysis=lines, points=50)
        names = list(w.traces)
        assert all(charts.series_key(n) in charts.SERIES_COLOURS for n in names), names
        assert len(set(charts.series_colours(names))) == len(names)


def _gpio_with_edges(tmp_path):
    """A GPIO line from a driver whose datasheet gives 10-90 % and 20-80 % edges, with a
    22 Ω series resistor (invented test parts)."""
    from pinlib.physics.driver import edge_time

    data = ROOT / "tests" / "data" / "pushpull"
    parts = tmp_path / "parts"
    parts.mkdir()
    # derived from pinlib.physics.driver.edge_time: 20 Ω behind a 1 ns ramp, so that the
    # fit meets its own points (invented values)
    rows = [(15e-12, "20-80"), (50e-12, "10-90")]
    edges = ", ".join(
        f'{{ load = "{c * 1e12:g} pF", rise = "{edge_time(20.0, 1e-9, c, lv) * 1e9:.4f} '
        f'ns", fall = "{edge_time(20.0, 1e-9, c, lv) * 1e9:.4f} ns", levels = "{lv}", '
        f'vdd = "3.3 V" }}' for c, lv in rows)
    (parts / "pp-ctrl-edges.toml").write_text(f'''format = "pinlib.part/1"
id = "pp-ctrl-edges"
extends = "pp-ctrl"
title = "Test controller with stated edges (invented)"
provenance = {{ basis = "datasheet", source = "test data, invented" }}

[pins.reset]
edges = [{edges}]
''', encoding="utf-8")
    design = tmp_path / "edges.toml"
    design.write_text(f'''format = "pinlib.design/1"
title = "GPIO with 20-80 edges (invented)"
library = ["{data.as_posix()}", "{parts.as_posix()}"]

[[bus]]
id = "reset"
protocol = "gpio"
supply = "3.3 V"
devices = [
  {{ ref = "U1", part = "pp-ctrl-edges", role = "controller", pin = "reset" }},
  {{ ref = "U2", part = "pp-periph", pin = "reset" }},
]
lines.reset.length = "6 cm"
lines.reset.capacitance = "1 pF/cm"
lines.reset.delay = "50 ps/cm"
lines.reset.series_resistor = "22 Ω"
''', encoding="utf-8")
    return load_design(design)


def test_edge_curves_at_every_datasheet_level_keep_their_colours(tmp_path):
    design = _gpio_with_edges(tmp_path)
    e = plotdata.edge_vs_load_data(design.bus("reset"), design, "reset")
    # the datasheet's levels without the resistor, the resistor's curves at 10-90 %;
    # each named with its levels as the figures write them ("Rise time, 10–90 %")
    assert list(e.curves) == ["rise 10–90 %", "fall 10–90 %", "rise 20–80 %", "fall 20–80 %",
                              "rise 10–90 %, Rs 22 Ω", "fall 10–90 %, Rs 22 Ω"]
    assert sorted(set(e.points[2])) == ["fall 10–90 %", "fall 20–80 %", "rise 10–90 %",
                                        "rise 20–80 %"]
    colours = charts.series_colours(list(e.curves))
    assert len(set(colours)) == 6
    assert colours == [charts.SERIES_COLOURS[charts.series_key(n)] for n in e.curves]
    # each datasheet point takes the colour of the curve at its levels
    chart = charts.edge_vs_load(e.loads, np.vstack(list(e.curves.values())),
                                series=list(e.curves), points=e.points,
                                operating=(*e.operating, e.operating_label))
    scale = chart.to_dict()["layer"][0]["encoding"]["color"]["scale"]
    assert scale["domain"] == list(e.curves)


def _gpio_with_fast_corner(tmp_path, extra: str = ""):
    """A GPIO line driven by a part with a slow (40 Ω) and a fast (12 Ω) corner
    (invented), into a 50 Ω line long enough to ring."""
    data = ROOT / "tests" / "data" / "pushpull"
    parts = tmp_path / "parts"
    parts.mkdir(exist_ok=True)
    body = (data / "pp-ctrl.toml").read_text(encoding="utf-8")
    body = body.replace('id = "pp-ctrl"', 'id = "pp-ctrl-fast"')
    head, reset = body.split("[pins.reset]")
    reset = reset.replace('r_out = "20 Ω"', 'r_out = "40 Ω"\nfast = { r_out = "12 Ω" }', 1)
    (parts / "pp-ctrl-fast.toml").write_text(head + "[pins.reset]" + reset,
                                             encoding="utf-8")
    design = tmp_path / "fast.toml"
    design.write_text(f'''format = "pinlib.design/1"
title = "GPIO from a part with a fast corner (invented)"
library = ["{data.as_posix()}", "{parts.as_posix()}"]

[[bus]]
id = "reset"
protocol = "gpio"
supply = "3.3 V"
{extra}
devices = [
  {{ ref = "U1", part = "pp-ctrl-fast", role = "controller", pin = "reset" }},
  {{ ref = "U2", part = "pp-periph", pin = "reset" }},
]
lines.reset.length = "20 cm"
lines.reset.capacitance = "1 pF/cm"
lines.reset.delay = "50 ps/cm"
''', encoding="utf-8")
    return load_design(design)


def test_waveforms_draw_the_corner_the_overshoot_check_uses(tmp_path):
    from pinlib.engines.dispatch import evaluate_bus

    design = _gpio_with_fast_corner(tmp_path)
    bus = design.bus("reset")
    w = plotdata.waveform_data(bus, design, "reset")
    assert w.si_corner == "fast" and not w.checks_at_worst
    fast, slow = "rise, no series R (fast corner)", "rise, no series R (slow corner)"
    assert {fast, slow} <= set(w.traces)
    assert "fall, no series R (fast corner)" in w.traces
    # the figure beside the chart is the fast corner's overshoot: the trace drawn for it
    # measures the same (the engine's own waveform, so to rounding); the slow corner's
    # overshoot is lower (derived: 12 Ω against 40 Ω into 50 Ω launches a larger step)
    result = evaluate_bus(bus, design)
    check = next(c for ln in result.lines for c in ln.checks if c.id == "overshoot")
    assert w.overshoot[fast] == pytest.approx(check.value, rel=1e-12)
    assert w.overshoot[slow] < w.overshoot[fast]
    # the drawn trace reaches the measured peak (the grid keeps each trace's peak sample)
    assert float(np.max(w.traces[fast])) == pytest.approx(w.vdd + w.overshoot[fast],
                                                          rel=1e-9)
    assert any("fast corner of U1" in n and "slow corner" in n for n in w.notes)


def test_waveform_notes_say_the_checks_are_at_the_worst_corner(tmp_path, demo):
    design = _gpio_with_fast_corner(tmp_path, 'supply_tolerance = "5 %"')
    w = plotdata.waveform_data(design.bus("reset"), design, "reset")
    assert w.checks_at_worst
    assert any("nominal board" in n and "worst corner" in n and "supply" in n
               for n in w.notes)
    # a part with one corner draws it alone, named as before
    flash = demo.bus("flash")
    w = plotdata.waveform_data(flash, demo, "sclk")
    assert w.si_corner == "slow"
    assert not any("corner)" in name for name in w.traces)


def _star_design(tmp_path, branches: int, series: str = "auto"):
    """Invented test data: a reset line from U1 over 10 cm to a junction S, then one branch
    to each of ``branches`` Schmitt inputs, 5 to 8 cm long in turn (50 Ω trace, 60 ps/cm
    over 1.2 pF/cm), so that no two neighbouring branches are equal."""
    refs = [f"U{i}" for i in range(2, branches + 2)]
    devices = ",\n".join(['  { ref = "U1", part = "pp-ctrl", role = "controller", '
                          'pin = "reset" }'] + [f'  {{ ref = "{r}", part = "pp-schmitt" }}'
                                                for r in refs])
    each = 'capacitance = "1.2 pF/cm", delay = "60 ps/cm"'
    route = [f'{{ from = "U1", to = "S", length = "10 cm", {each} }}'] + [
        f'{{ from = "S", to = "{r}", length = "{5 + k % 4} cm", {each} }}'
        for k, r in enumerate(refs)]
    lib = (ROOT / "tests" / "data" / "pushpull").as_posix()
    text = (f'format = "pinlib.design/1"\ntitle = "star of {branches} (invented)"\n'
            f'library = ["{lib}"]\n\n[[bus]]\nid = "rst"\nprotocol = "gpio"\n'
            f'supply = "3.3 V"\ndevices = [\n{devices}\n]\n'
            f'lines.reset = {{ series_resistor = "{series}", route = [\n  '
            + ",\n  ".join(route) + "\n] }\n")
    path = tmp_path / f"star{branches}.toml"
    path.write_text(text, encoding="utf-8")
    return load_design(path)


def test_a_star_chart_ends_where_its_edges_settle_not_at_the_record(tmp_path):
    # A star of 8 unequal branches rings at a few % of the swing to the end of the
    # solver's record in the lossless model (the branches against each other): the axis
    # ran to that record, 98 ns, for edges of about 11 ns.
    from pinlib.engines.pushline.analysis import case_edge_times

    design = _star_design(tmp_path, 8)
    bus = design.bus("rst")
    lines = plotdata.line_analyses(bus, design)
    la = lines["reset"]
    case = la.cases["U1"]
    w = plotdata.waveform_data(bus, design, "reset", analysis=lines)
    rise, fall = case_edge_times(case, la.receivers)
    record = min(float(case.wave_at(f"U{i}", "rise").t[-1]) for i in range(2, 10))
    # derived: the settling this chart shows is about 3 edge times (30.8 ns against a
    # 10.6 ns rise); the record the solver ran is 97.7 ns
    assert w.t[-1] < 4.0 * max(rise, fall)
    assert w.t[-1] < 0.5 * record
    # every trace has come within 1.5 times the ringing it keeps to the end of its record
    # (the rule; the note gives that ringing's size) by the chart's end
    note = next(n for n in w.notes if n.startswith("ringing of up to"))
    kept = float(note.split()[4]) / 100
    for name, v in w.traces.items():
        late = np.abs(v[w.t >= w.t[-1] / 1.3] - (3.3 if name.startswith("rise") else 0.0))
        assert late.max() <= 1.5 * (kept + 0.0005) * 3.3, name  # the note rounds to 0.1 %


def test_a_line_that_settles_keeps_its_window(demo):
    # a single-stretch line settles within 2 % in its record: its axis still ends 30 %
    # past that moment (common practice, no source: the chart's own display choice)
    bus = demo.bus("flash")
    lines = plotdata.line_analyses(bus, demo)
    w = plotdata.waveform_data(bus, demo, "sclk", analysis=lines)
    ref, case = next(iter(lines["sclk"].cases.items()))
    bare = lines["sclk"].without_series(ref)
    settled = 0.0
    for edge in ("rise", "fall"):
        for c in [case] + ([bare] if bare is not None else []):
            wave = c.wave(edge)
            off = np.abs(wave.v - wave.v_to) > 0.02 * abs(wave.v_to - wave.v_from)
            settled = max(settled, float(wave.t[np.flatnonzero(off)[-1] + 1]))
    assert w.t[-1] == pytest.approx(1.3 * settled, rel=1e-12)
    assert not any(n.startswith("ringing of up to") for n in w.notes)


def test_a_star_of_eight_draws_each_receiver_in_its_own_colour_and_dash(tmp_path):
    # invented test data (the star above): 8 receivers, past the 7 series colours; two
    # of them were drawn alike
    design = _star_design(tmp_path, 8)
    w = plotdata.waveform_data(design.bus("rst"), design, "reset")
    receivers = [f"U{i}" for i in range(2, 10)]
    assert set(w.groups.values()) == {f"at {r}" for r in receivers}
    assert all(w.groups[f"{e} at {r}"] == f"at {r}" for e in ("rise", "fall")
               for r in receivers)
    spec = charts.waveforms(w.t, w.traces, v_il=w.v_il, v_ih=w.v_ih, vdd=w.vdd,
                            groups=w.groups).to_dict()
    line = next(layer for layer in spec["layer"] if layer["mark"]["type"] == "line")
    colour = dict(zip(line["encoding"]["stroke"]["scale"]["domain"],
                      line["encoding"]["stroke"]["scale"]["range"], strict=True))
    dash = dict(zip(line["encoding"]["strokeDash"]["scale"]["domain"],
                    map(tuple, line["encoding"]["strokeDash"]["scale"]["range"]), strict=True))
    pairs = {(colour[f"at {r}"], dash[f"at {r}"]) for r in receivers}
    assert len(pairs) == 8
    # a line without a route keeps a legend entry per trace
    demo = load_design(DEMO)
    assert plotdata.waveform_data(demo.bus("flash"), demo, "sclk").groups == {}


def test_an_open_drain_lines_high_level_is_not_called_vdd():
    # the GPIO example's reset line (a 10 kΩ pull-up to 3.3 V, 13 µA of leakage on the
    # net) settles at 3.17 V, and its waveform chart and caption named that "VDD 3.17 V"
    # on a 3.3 V board; a push-pull line's high level is its driver's supply
    design = load_design(ROOT / "workbooks" / "designs" / "gpio-reset-board.toml")
    w = plotdata.waveform_data(design.bus("reset"), design, "reset")
    # derived: 3.3 V − (1 + 2 + 10) µA × 10 kΩ (the invented parts' leakage)
    assert w.vdd == pytest.approx(3.3 - 13e-6 * 10e3, rel=1e-9)
    assert w.high_name == "high level"
    chart = charts.waveforms(w.t, w.traces, v_il=w.v_il, v_ih=w.v_ih, vdd=w.vdd,
                             vdd_name=w.high_name)
    spec = str(chart.to_dict())
    assert "high level 3.17 V" in spec and "VDD 3.17 V" not in spec
    w = plotdata.waveform_data(design.bus("fpga-enable"), design, "enable")
    assert w.high_name == "VDD" and w.vdd == pytest.approx(3.3)


def test_the_board_note_spells_the_pull_up_as_a_word():
    # the reset line's caption ended "worst corner of its tolerances (supply, pullup)"
    design = load_design(ROOT / "workbooks" / "designs" / "gpio-reset-board.toml")
    w = plotdata.waveform_data(design.bus("reset"), design, "reset")
    assert any(n.endswith("worst corner of its tolerances (supply, pull-up)") for n in w.notes)
