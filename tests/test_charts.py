"""Tests of pinlib.charts: Vega-Lite specs, their SVG rendering, determinism, lazy imports.

The charts draw what the engines return; the inputs here are small invented arrays
whose displayed values follow from the SI prefixes, so the checks are on the spec and
on the scaling, not on any engineering figure.
"""

from __future__ import annotations

import re
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from pinlib import charts
from pinlib.errors import InputError

pytest.importorskip("altair")
pytest.importorskip("vl_convert")

# published: SI Brochure, 9th edition (BIPM 2019), table 7 (SI prefixes)
PICO, NANO, MICRO, MILLI, KILO = 1e-12, 1e-9, 1e-6, 1e-3, 1e3

# from memory: the Okabe–Ito colour-universal-design palette, RGB values as reprinted in
# B. Wong, "Points of view: Color blindness", Nature Methods 8, 441 (2011), figure 2.
OKABE_ITO_RGB = {
    "black": (0, 0, 0),
    "orange": (230, 159, 0),
    "sky blue": (86, 180, 233),
    "bluish green": (0, 158, 115),
    "yellow": (240, 228, 66),
    "blue": (0, 114, 178),
    "vermillion": (213, 94, 0),
    "reddish purple": (204, 121, 167),
}


def _rgb(hex_colour: str) -> tuple[int, int, int]:
    h = hex_colour.lstrip("#")
    return tuple(int(h[i:i + 2], 16) for i in (0, 2, 4))


def _layers(chart) -> list[dict]:
    return chart.to_dict()["layer"]


def _marks(chart) -> list[str]:
    return [layer["mark"]["type"] for layer in _layers(chart)]


def _colour_scale(chart) -> dict:
    for layer in _layers(chart):
        colour = layer["encoding"].get("color", {})
        if "scale" in colour:
            return colour["scale"]
    raise AssertionError("no colour scale")


# --------------------------------------------------------------------------- fixtures
def _window():
    cb = np.array([10, 20, 50, 100, 200, 400, 800]) * PICO
    rp_min = 967.0                                     # one flat line, broadcast over cb
    rp_max = np.array([35.4, 17.7, 7.08, 3.54, 1.77, 0.885, 0.443]) * KILO
    return charts.pullup_window(cb, rp_min, rp_max, chosen_cb=120 * PICO, chosen_rp=2200.0)


def _edges():
    loads = np.array([0, 10, 20, 30, 40, 50]) * PICO
    times = np.array([[0.5, 1.4, 2.3, 3.2, 4.1, 5.0],
                      [0.4, 1.1, 1.8, 2.5, 3.2, 3.9]]) * NANO
    return charts.edge_vs_load(loads, times, series=["U1 rise", "U1 fall"],
                               points=(np.array([15, 30]) * PICO, np.array([2.0, 2.6]) * NANO,
                                       ["U1 rise", "U1 fall"]),
                               operating=(22 * PICO, 2.5 * NANO))


def _waves():
    t = np.linspace(0.0, 20.0, 201) * NANO
    return charts.waveforms(t, {"no series R": 3.3 * (1 - np.exp(-t / (2 * NANO))),
                                "33 Ω": 3.3 * (1 - np.exp(-t / (3 * NANO)))},
                            v_il=0.99, v_ih=2.31, vdd=3.3)


_BUDGET_ROWS = [
    ("COPI setup at U7", "controller t_valid", 8.0 * NANO),
    ("COPI setup at U7", "flight", 1.5 * NANO),
    ("COPI setup at U7", "t_setup", 5.0 * NANO),
    ("CIPO setup", "flight", 1.0 * NANO),
    ("CIPO setup", "peripheral t_valid", 7.0 * NANO),
    ("CIPO setup", "t_setup", 12.5 * NANO),
]


def _budget():
    return charts.timing_budget(_BUDGET_ROWS, available=20 * NANO,
                                margins={"COPI setup at U7": 5.5 * NANO,
                                         "CIPO setup": -0.5 * NANO})


def _hist():
    samples = np.random.default_rng(7).normal(250.0, 25.0, 5000) * NANO
    return charts.histogram(samples, limit=300 * NANO, unit="s", label="Rise time")


ALL = {"pullup_window": _window, "edge_vs_load": _edges, "waveforms": _waves,
       "timing_budget": _budget, "histogram": _hist}
TITLES = {
    "pullup_window": ["Bus capacitance Cb (pF)", "Pull-up resistance Rp (kΩ)"],
    "edge_vs_load": ["Load capacitance (pF)", "Edge time (ns)"],
    "waveforms": ["Time (ns)", "Voltage at the receiver (V)"],
    "timing_budget": ["Time (ns)"],
    "histogram": ["Rise time (ns)", "Samples per bin (count)"],
}


# --------------------------------------------------------------------------- palette
def test_palette_is_okabe_ito_and_roles_are_distinct():
    published = set(OKABE_ITO_RGB.values())
    names = ["PASS", "WARN", "FAIL", "REGION", "UNDEFINED", "LIMIT", "OPERATING", "INK"]
    for name in names:
        assert _rgb(getattr(charts, name)) in published, name
    assert all(_rgb(c) in published for c in charts.SERIES)
    assert len({charts.PASS, charts.WARN, charts.FAIL}) == 3
    assert charts.YELLOW not in charts.SERIES       # yellow is too weak for a line on white


@pytest.mark.parametrize("name", sorted(ALL))
def test_every_chart_has_a_legend_with_distinct_colours(name):
    chart = ALL[name]()
    scale = _colour_scale(chart)
    assert len(scale["domain"]) == len(scale["range"])
    # no two legend entries share a colour when the palette has room for them all
    assert len(set(scale["range"])) == len(scale["range"])
    assert all(_rgb(c) in set(OKABE_ITO_RGB.values()) for c in scale["range"])
    for layer in _layers(chart):
        colour = layer["encoding"].get("color")
        if colour is not None and "field" in colour:
            assert colour.get("legend", {}) is not None     # legend not switched off


# --------------------------------------------------------------------------- scaling
@pytest.mark.parametrize(("values", "unit", "log", "factor", "shown"), [
    ([10 * PICO, 400 * PICO], "F", False, 1 / PICO, "pF"),
    ([0.0, 3.3], "V", False, 1.0, "V"),
    ([500.0, 20 * KILO], "Ω", True, 1 / KILO, "kΩ"),    # geometric middle 3.2 kΩ
    ([10 * PICO, 1000 * PICO], "F", True, 1 / PICO, "pF"),  # middle 100 pF, not nF
    ([0.0, 2.5 * MICRO], "s", False, 1 / MICRO, "µs"),
    ([0.0, 990 * MILLI], "V", False, 1 / MILLI, "mV"),
    ([0.25], "%", False, 100.0, "%"),
    ([3.0], "", False, 1.0, ""),
])
def test_display_scale_picks_the_si_prefix(values, unit, log, factor, shown):
    # derived from the SI prefixes (SI Brochure table 7): engineering steps of 10^3
    f, u = charts.display_scale(values, unit, log=log)
    assert u == shown
    assert f == pytest.approx(factor, rel=1e-12)


# --------------------------------------------------------------------------- specs
def test_pullup_window_spec():
    chart = _window()
    assert _marks(chart) == ["area", "line", "point"]
    for layer in _layers(chart):
        enc = layer["encoding"]
        assert enc["x"]["scale"]["type"] == "log"
        assert enc["y"]["scale"]["type"] == "log"
        assert enc["x"]["axis"]["title"] == "Bus capacitance Cb (pF)"
        assert enc["y"]["axis"]["title"] == "Pull-up resistance Rp (kΩ)"
    area, lines, point = _layers(chart)
    band = area["data"]["values"]
    # derived from the inputs scaled to pF / kΩ: 10 pF ... 800 pF, Rp min 0.967 kΩ
    assert [r["cb"] for r in band] == pytest.approx([10, 20, 50, 100, 200, 400, 800])
    assert all(r["lo"] == pytest.approx(0.967) for r in band)
    # the band's top is Rp max where the window is open and Rp min where it is shut
    assert [r["hi"] for r in band] == pytest.approx([35.4, 17.7, 7.08, 3.54, 1.77, 0.967,
                                                     0.967])
    assert area["encoding"]["y2"]["field"] == "hi"
    series = {r["series"] for r in lines["data"]["values"]}
    assert series == {"Rp min (VOL at IOL)", "Rp max (rise time)"}
    (p,) = point["data"]["values"]
    assert (p["cb"], p["rp"]) == (pytest.approx(120.0), pytest.approx(2.2))
    domain = _colour_scale(chart)["domain"]
    assert domain[0] == "allowed Rp" and domain[-1] == "chosen: 2.2 kΩ at 120 pF"
    assert _colour_scale(chart)["range"][0] == charts.REGION
    assert _colour_scale(chart)["range"][-1] == charts.OPERATING


def test_pullup_window_rp_min_as_array_and_bad_shapes():
    cb = np.array([10, 100]) * PICO
    chart = charts.pullup_window(cb, np.array([900.0, 1000.0]), np.array([30e3, 3e3]),
                                 chosen_cb=50 * PICO, chosen_rp=1500.0)
    lo = [r["rp"] for r in _layers(chart)[1]["data"]["values"]
          if r["series"].startswith("Rp min")]
    assert lo == pytest.approx([0.9, 1.0])
    with pytest.raises(InputError, match="rp_max"):
        charts.pullup_window(cb, 900.0, np.array([1.0, 2.0, 3.0]), chosen_cb=50 * PICO,
                             chosen_rp=1500.0)
    with pytest.raises(InputError, match="chosen_rp"):
        charts.pullup_window(cb, 900.0, 3e3, chosen_cb=50 * PICO, chosen_rp=0.0)


def test_edge_vs_load_spec():
    chart = _edges()
    assert _marks(chart) == ["line", "point", "point"]
    lines, pts, op = _layers(chart)
    assert lines["encoding"]["x"]["axis"]["title"] == "Load capacitance (pF)"
    assert lines["encoding"]["y"]["axis"]["title"] == "Edge time (ns)"
    assert "scale" not in lines["encoding"]["x"]              # linear by default
    values = lines["data"]["values"]
    assert {r["series"] for r in values} == {"U1 rise", "U1 fall"}
    rise = [r["t"] for r in values if r["series"] == "U1 rise"]
    assert rise == pytest.approx([0.5, 1.4, 2.3, 3.2, 4.1, 5.0])
    # datasheet points labelled like a curve share its legend entry (and colour)
    assert _colour_scale(chart)["domain"] == ["U1 rise", "U1 fall"]
    assert [(r["load"], r["t"]) for r in pts["data"]["values"]] == [
        (pytest.approx(15.0), pytest.approx(2.0)), (pytest.approx(30.0), pytest.approx(2.6))]
    assert pts["encoding"]["shape"]["scale"]["domain"] == ["datasheet", "operating point"]
    assert op["mark"]["color"] == charts.OPERATING
    assert op["data"]["values"][0]["load"] == pytest.approx(22.0)


def test_edge_vs_load_log_axes_and_errors():
    loads = np.array([1, 10, 100]) * PICO
    chart = charts.edge_vs_load(loads, np.array([1.0, 2.0, 9.0]) * NANO, log_x=True,
                                log_y=True)
    for layer in _layers(chart):
        assert layer["encoding"]["x"]["scale"]["type"] == "log"
        assert layer["encoding"]["y"]["scale"]["type"] == "log"
    assert _colour_scale(chart)["domain"] == ["model"]
    with pytest.raises(InputError, match="edge_times"):
        charts.edge_vs_load(loads, np.ones(4) * NANO)
    with pytest.raises(InputError, match="series"):
        charts.edge_vs_load(loads, np.ones((2, 3)) * NANO, series=["a"])
    with pytest.raises(InputError, match="points"):
        charts.edge_vs_load(loads, np.ones(3) * NANO, points=([1e-12], [1e-9, 2e-9], "x"))


def test_waveforms_spec():
    chart = _waves()
    assert _marks(chart) == ["rect", "rule", "text", "rule", "line"]
    band, rules, words, vdd, traces = _layers(chart)
    (b,) = band["data"]["values"]
    assert (b["lo"], b["hi"]) == (pytest.approx(0.99), pytest.approx(2.31))
    assert band["encoding"]["y2"]["field"] == "hi"
    assert [r["text"] for r in words["data"]["values"]] == ["VIL 0.99 V", "VIH 2.31 V"]
    assert vdd["data"]["values"][0]["v"] == pytest.approx(3.3)
    assert traces["encoding"]["x"]["axis"]["title"] == "Time (ns)"
    values = traces["data"]["values"]
    assert {r["series"] for r in values} == {"no series R", "33 Ω"}
    assert max(r["t"] for r in values) == pytest.approx(20.0)
    scale = _colour_scale(chart)
    assert scale["domain"][:3] == ["undefined (VIL to VIH)", "VIL / VIH", "VDD 3.3 V"]
    assert scale["range"][:2] == [charts.UNDEFINED, charts.LIMIT]


def test_waveforms_errors():
    t = np.linspace(0, 1e-8, 5)
    with pytest.raises(InputError, match=r"traces\['a'\]"):
        charts.waveforms(t, {"a": np.ones(4)}, v_il=0.99, v_ih=2.31)
    with pytest.raises(InputError, match="v_il"):
        charts.waveforms(t, {"a": np.ones(5)}, v_il=2.5, v_ih=2.31)
    with pytest.raises(InputError, match="traces"):
        charts.waveforms(t, {}, v_il=0.99, v_ih=2.31)


def test_timing_budget_spec():
    chart = _budget()
    assert _marks(chart) == ["bar", "tick", "text"]
    bars, ticks, notes = _layers(chart)
    assert bars["encoding"]["x"]["stack"] == "zero"
    assert bars["encoding"]["order"]["field"] == "order"
    assert bars["encoding"]["y"]["sort"] == ["COPI setup at U7", "CIPO setup"]
    assert bars["encoding"]["x"]["axis"]["title"] == "Time (ns)"
    assert [r["t"] for r in bars["data"]["values"]] == pytest.approx(
        [8.0, 1.5, 5.0, 1.0, 7.0, 12.5])
    assert [r["t"] for r in ticks["data"]["values"]] == pytest.approx([20.0, 20.0])
    assert [(r["text"], r["series"]) for r in notes["data"]["values"]] == [
        ("margin +5.5 ns", "pass"), ("margin -500 ps", "fail")]
    scale = _colour_scale(chart)
    colour = dict(zip(scale["domain"], scale["range"], strict=True))
    assert colour["pass"] == charts.PASS and colour["fail"] == charts.FAIL
    assert colour["available (half period)"] == charts.LIMIT
    components = ["controller t_valid", "flight", "t_setup", "peripheral t_valid"]
    assert {colour[c] for c in components}.isdisjoint({charts.PASS, charts.FAIL,
                                                       charts.LIMIT})


def test_timing_budget_per_path_available_status_and_errors():
    chart = charts.timing_budget(_BUDGET_ROWS,
                                 available={"COPI setup at U7": 20 * NANO, "CIPO setup": 21 * NANO},
                                 margins={"CIPO setup": 0.5 * NANO},
                                 status={"CIPO setup": "warn"})
    bars, ticks, notes = _layers(chart)
    assert [r["t"] for r in ticks["data"]["values"]] == pytest.approx([20.0, 21.0])
    assert notes["data"]["values"] == [
        {"path": "CIPO setup", "text": "margin +500 ps", "series": "warn"}]
    assert charts.WARN in _colour_scale(chart)["range"]
    only_bars = charts.timing_budget(_BUDGET_ROWS[:2])
    assert _marks(only_bars) == ["bar"]
    with pytest.raises(InputError, match="unknown path"):
        charts.timing_budget(_BUDGET_ROWS, available={"SCLK": 1e-8})
    with pytest.raises(InputError, match=r"rows\[0\]"):
        charts.timing_budget([("a", 1e-9)])
    with pytest.raises(InputError, match="status"):
        charts.timing_budget(_BUDGET_ROWS, margins={"CIPO setup": 1e-9},
                             status={"CIPO setup": "ok"})


def _bins(chart) -> list[dict]:
    spec = chart.to_dict()
    # altair lifts the data of a single-layer chart to the top level
    return spec["layer"][0].get("data", spec.get("data"))["values"]


def test_histogram_bins_split_at_the_limit():
    samples = np.random.default_rng(3).uniform(200.0, 400.0, 20000) * NANO
    limit = 300 * NANO
    chart = charts.histogram(samples, limit=limit, unit="s", label="Rise time")
    assert _marks(chart) == ["rect", "rule"]
    bins = _bins(chart)
    assert sum(b["n"] for b in bins) == samples.size
    # the limit is a bin edge: no bin straddles it
    assert any(b["b"] == pytest.approx(300.0, abs=1e-9) for b in bins)
    assert all(b["b"] <= 300.0 + 1e-9 for b in bins if b["series"] == "pass")
    assert all(b["a"] >= 300.0 - 1e-9 for b in bins if b["series"] == "fail")
    # derived from the check's comparison (check_max: value <= limit passes)
    passing = int(np.count_nonzero(samples <= limit))
    assert sum(b["n"] for b in bins if b["series"] == "pass") == passing
    (rule,) = _layers(chart)[1]["data"]["values"]
    assert rule["x"] == pytest.approx(300.0)
    assert rule["series"] == "limit (max) 300 ns"
    assert _layers(chart)[0]["encoding"]["x"]["axis"]["title"] == "Rise time (ns)"


def test_histogram_samples_on_the_limit_count_as_passing():
    # derived from check_max / check_min: a value equal to its limit passes
    s = np.array([1.0, 2.0, 3.0, 4.0]) * 1e-7
    high = charts.histogram(s, limit=2e-7, unit="s", label="Rise time", bins=6)
    assert sum(b["n"] for b in _bins(high) if b["series"] == "pass") == 2
    low = charts.histogram(s, limit=2e-7, unit="s", label="Hold margin", limit_kind="min",
                           bins=6)
    assert sum(b["n"] for b in _bins(low) if b["series"] == "pass") == 3


def test_histogram_without_limit_and_constant_samples():
    s = np.full(100, 120 * PICO)                 # zero tolerance: every board the same
    chart = charts.histogram(s, unit="F", label="Bus capacitance")
    assert _marks(chart) == ["rect"]
    bins = _bins(chart)
    assert sum(b["n"] for b in bins) == 100
    assert {b["series"] for b in bins} == {"samples"}
    assert _colour_scale(chart)["range"] == [charts.REGION]
    assert _layers(chart)[0]["encoding"]["x"]["axis"]["title"] == "Bus capacitance (pF)"
    with pytest.raises(InputError, match="samples"):
        charts.histogram([np.nan], unit="s", label="x")
    with pytest.raises(InputError, match="limit_kind"):
        charts.histogram([1e-9], limit=1e-9, unit="s", label="x", limit_kind="below")


# --------------------------------------------------------------------------- SVG
@pytest.mark.parametrize("name", sorted(ALL))
def test_svg_renders_with_axis_titles(name):
    svg = charts.to_svg(ALL[name]())
    assert svg.lstrip().startswith("<svg") and svg.rstrip().endswith("</svg>")
    texts = re.findall(r"<text[^>]*>([^<]*)</text>", svg)
    for title in TITLES[name]:
        assert title in texts, (title, texts)
    assert len(svg) > 2000


@pytest.mark.parametrize("name", sorted(ALL))
def test_svg_is_deterministic(name):
    first = charts.to_svg(ALL[name]())
    second = charts.to_svg(ALL[name]())
    assert first.encode() == second.encode()


def test_to_svg_accepts_a_spec_dict_and_json():
    chart = _window()
    from_chart = charts.to_svg(chart)
    assert charts.to_svg(chart.to_dict()) == from_chart
    assert charts.to_svg(chart.to_json()) == from_chart


@pytest.mark.parametrize("name", sorted(ALL))
def test_fast_spec_is_the_altair_spec(name):
    # derived from altair's own Chart.to_dict(): the fast path must give the same dict
    assert charts.spec(ALL[name]) == ALL[name]().to_dict(validate=False)


def test_fast_spec_of_a_one_layer_chart_keeps_altair_hoisting():
    # derived from altair's own Chart.to_dict() (one layer: data moved to the top level)
    rows = [("read", "clock to out", 12e-9), ("read", "setup", 5e-9)]
    assert (charts.spec(charts.timing_budget, rows)
            == charts.timing_budget(rows).to_dict(validate=False))


def test_svg_shows_the_legend_entries():
    texts = re.findall(r"<text[^>]*>([^<]*)</text>", charts.to_svg(_budget()))
    for label in ("flight", "available (half period)", "pass", "fail", "margin +5.5 ns",
                  "margin -500 ps"):
        assert label in texts


# --------------------------------------------------------------------------- imports
def test_chart_libraries_stay_out_of_the_command_line_import_path():
    code = ("import sys; import pinlib.cli, pinlib.check, pinlib.charts; "
            "bad = sorted(m for m in ('altair', 'vl_convert') if m in sys.modules); "
            "assert not bad, bad")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          cwd=Path(__file__).resolve().parents[1], timeout=120)
    assert done.returncode == 0, done.stderr


@pytest.mark.parametrize("name", sorted(ALL))
def test_cached_compile_gives_the_same_svg(name, monkeypatch):
    # derived from vl-convert's own vegalite_to_svg of the whole spec: swapping the rows
    # into a cached compile must give the same bytes, for fresh and for cached layouts
    import vl_convert

    spec = charts.spec(ALL[name])
    direct = charts.to_svg(spec, cache=False)
    assert charts.to_svg(spec) == direct  # compiles the layout
    with monkeypatch.context() as m:  # now only the cached compile may be used
        m.setattr(vl_convert, "vegalite_to_svg", None)
        m.setattr(vl_convert, "vegalite_to_vega", None)
        assert charts.to_svg(spec).encode() == direct.encode()


def test_fast_spec_reuses_a_layout_only_where_it_is_the_same():
    # derived from altair's own Chart.to_dict(): a redraw that reuses the layout built
    # for earlier arguments must still give the dict altair builds for these arguments
    t = np.linspace(0.0, 20.0, 201) * NANO
    cases = [
        (t, {"a": 3.3 * (1 - np.exp(-t / (2 * NANO)))}, dict(v_il=0.99, v_ih=2.31, vdd=3.3)),
        (t, {"a": 3.3 * (1 - np.exp(-t / (3 * NANO)))}, dict(v_il=0.99, v_ih=2.31, vdd=3.3)),
        (t, {"a": 3.0 * (1 - np.exp(-t / (3 * NANO)))}, dict(v_il=0.8, v_ih=2.0, vdd=3.0)),
        (t * 1e3, {"a": 3.0 * (1 - np.exp(-t / (3 * NANO)))}, dict(v_il=0.8, v_ih=2.0)),
        (t, {"b": 1.8 * (1 - np.exp(-t / NANO)), "c": 1.8 * (1 - np.exp(-t / (2 * NANO)))},
         dict(v_il=0.63, v_ih=1.17, vdd=1.8, title="other")),
        (t, {"a": 3.3 * (1 - np.exp(-t / (2 * NANO)))}, dict(v_il=0.99, v_ih=2.31, vdd=3.3)),
    ]
    for _ in range(2):
        for tt, traces, kw in cases:
            assert (charts.spec(charts.waveforms, tt, traces, **kw)
                    == charts.waveforms(tt, traces, **kw).to_dict(validate=False))
    loads = np.array([0, 10, 20, 30, 40, 50]) * PICO
    times = np.array([[0.5, 1.4, 2.3, 3.2, 4.1, 5.0],
                      [0.4, 1.1, 1.8, 2.5, 3.2, 3.9]]) * NANO
    points = (np.array([15, 30]) * PICO, np.array([2.0, 2.6]) * NANO, ["U1 rise", "U1 fall"])
    edge_cases = [
        dict(points=points, operating=(22 * PICO, 2.5 * NANO)),
        dict(points=points, operating=(24 * PICO, 2.7 * NANO, "far end")),
        dict(points=points, operating=(24 * PICO, 2.7 * NANO, "far end")),
        dict(operating=(24 * PICO, 2.7 * NANO, "far end")),
        dict(points=points),
        dict(points=points, operating=(240 * PICO, 27 * NANO, "far end")),
        dict(points=points, operating=(22 * PICO, 2.5 * NANO)),
    ]
    for _ in range(2):
        for kw in edge_cases:
            args = (loads, times)
            kw = dict(kw, series=["U1 rise", "U1 fall"])
            assert (charts.spec(charts.edge_vs_load, *args, **kw)
                    == charts.edge_vs_load(*args, **kw).to_dict(validate=False))


def test_cached_compile_of_a_chart_without_data_rows():
    # derived from vl-convert's own vegalite_to_svg of the whole spec
    spec = {"mark": "rule", "encoding": {"y": {"datum": 1, "type": "quantitative"}}}
    direct = charts.to_svg(spec, cache=False)
    assert charts.to_svg(spec) == direct
    assert charts.to_svg(spec) == direct
