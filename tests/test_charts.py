"""Tests of pinlib.present.charts: Vega-Lite specs, their SVG rendering, determinism, lazy imports.

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

from pinlib.core.errors import InputError
from pinlib.present import charts

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
def test_palette_roles_are_okabe_ito_and_series_are_never_status_colours():
    published = set(OKABE_ITO_RGB.values())
    names = ["PASS", "WARN", "FAIL", "REGION", "UNDEFINED", "LIMIT", "OPERATING", "INK"]
    for name in names:
        assert _rgb(getattr(charts, name)) in published, name
    assert len({charts.PASS, charts.WARN, charts.FAIL}) == 3
    status = set(charts.STATUS_COLOURS.values())
    assert status.isdisjoint(charts.SERIES)
    assert set(charts.SERIES_COLOURS.values()) <= set(charts.SERIES)
    assert charts.YELLOW not in charts.SERIES       # yellow is too weak for a line on white


# from memory: G. M. Machado, M. M. Oliveira, L. A. F. Fernandes, "A physiologically-based
# model for simulation of color vision deficiency", IEEE TVCG 15(6), 2009,
# severity 1.0 (linear RGB)
CVD = {
    "protanopia": [[0.152286, 1.052583, -0.204868], [0.114503, 0.786281, 0.099216],
                   [-0.003882, -0.048116, 1.051998]],
    "deuteranopia": [[0.367322, 0.860646, -0.227968], [0.280085, 0.672501, 0.047413],
                     [-0.011820, 0.042940, 0.968881]],
    "tritanopia": [[1.255528, -0.076749, -0.178779], [-0.078411, 0.930809, 0.147602],
                   [0.004733, 0.691367, 0.303900]],
}


def _lab(hex_colour: str, matrix=None) -> np.ndarray:
    """CIELAB (D65) of an sRGB colour, seen through a colour-vision matrix."""
    # from memory: IEC 61966-2-1 (sRGB) transfer curve and matrix; CIE 15 (CIELAB, D65)
    c = np.array(_rgb(hex_colour)) / 255.0
    lin = np.where(c <= 0.04045, c / 12.92, ((c + 0.055) / 1.055) ** 2.4)
    if matrix is not None:
        lin = np.clip(np.array(matrix) @ lin, 0.0, 1.0)
    xyz = np.array([[0.4124, 0.3576, 0.1805], [0.2126, 0.7152, 0.0722],
                    [0.0193, 0.1192, 0.9505]]) @ lin
    t = xyz / np.array([0.95047, 1.0, 1.08883])
    f = np.where(t > (6 / 29) ** 3, np.cbrt(t), t / (3 * (6 / 29) ** 2) + 4 / 29)
    return np.array([116 * f[1] - 16, 500 * (f[0] - f[1]), 200 * (f[1] - f[2])])


def _worst_difference(a: str, b: str) -> float:
    """The smallest CIELAB difference of two colours, for normal and deficient vision."""
    return min(float(np.linalg.norm(_lab(a, m) - _lab(b, m)))
               for m in [None, *CVD.values()])


def test_worst_difference_of_the_okabe_ito_pairs_it_was_designed_for():
    # derived: black and white differ by 100 in L* for every kind of vision
    assert _worst_difference("#000000", "#FFFFFF") == pytest.approx(100.0, abs=0.1)
    # derived from the model: each simulation keeps a neutral grey neutral (every row of
    # its matrix sums to 1), which catches a mistyped coefficient
    for matrix in CVD.values():
        assert np.sum(matrix, axis=1) == pytest.approx([1.0, 1.0, 1.0], abs=2e-6)
        assert _lab("#777777", matrix) == pytest.approx(_lab("#777777"), abs=0.05)
    # derived: vermillion and bluish green, far apart to most eyes, come closer for a
    # deuteranope than for normal vision
    normal = np.linalg.norm(_lab(charts.FAIL) - _lab(charts.PASS))
    deutan = np.linalg.norm(_lab(charts.FAIL, CVD["deuteranopia"])
                            - _lab(charts.PASS, CVD["deuteranopia"]))
    assert deutan < normal


@pytest.mark.parametrize("name", sorted(ALL))
def test_legend_colours_stay_apart_for_colour_blind_readers(name):
    scale = _colour_scale(ALL[name]())
    colours = sorted(set(scale["range"]))
    worst = min((_worst_difference(a, b), a, b) for i, a in enumerate(colours)
                for b in colours[i + 1:])
    # common practice, no source: the closest Okabe–Ito pairs a chart uses (orange and
    # vermillion, bluish green and sky blue) differ by about 16-18 under simulation
    assert worst[0] >= 15.0, worst


def test_every_series_pinlib_draws_has_its_own_fixed_colour():
    from pinlib.present import plotdata

    comps = {c for terms in plotdata.BUDGET_COMPONENTS.values() for _, _, c in terms}
    edges = [plotdata._curve_name(e, lv, 0.0) for e in ("rise", "fall")
             for lv in ("10-90", "20-80")]
    edges += [plotdata._curve_name(e, "10-90", rs) for rs in (27.0, 1500.0)
              for e in ("rise", "fall")]
    waves = [f"{e}, {case}" for e in ("rise", "fall") for case in ("no series R", "Rs 27 Ω")]
    for group in (sorted(comps), edges, waves):
        assert all(charts.series_key(n) in charts.SERIES_COLOURS for n in group), group
    # the keys leave the resistor value out, nothing else
    assert charts.series_key("fall 10-90, Rs 1.5 kΩ") == "fall 10-90, Rs"
    assert charts.series_key("rise, Rs 27 Ω") == "rise, Rs"
    assert charts.series_key("SCLK flight") == "SCLK flight"
    # one colour per curve within a chart (the Rs value does not matter)
    assert len(set(charts.series_colours(sorted(comps)))) == len(comps)
    assert len(set(charts.series_colours(edges[:6]))) == 6
    assert len(set(charts.series_colours(waves))) == 4


def _colour_of(chart, series: str) -> str:
    scale = _colour_scale(chart)
    return dict(zip(scale["domain"], scale["range"], strict=True))[series]


def test_a_series_keeps_its_colour_whichever_others_are_drawn():
    t = np.linspace(0.0, 20.0, 101) * NANO
    up = 3.3 * (1 - np.exp(-t / (2 * NANO)))
    four = {"rise, Rs 27 Ω": up, "fall, Rs 27 Ω": 3.3 - up, "rise, no series R": up,
            "fall, no series R": 3.3 - up}
    two = {"rise, no series R": up, "fall, no series R": 3.3 - up}
    other_rs = {"rise, Rs 33 Ω": up, "rise, no series R": up}
    colours = [_colour_of(charts.waveforms(t, traces, v_il=0.99, v_ih=2.31, vdd=3.3),
                          "rise, no series R") for traces in (four, two, other_rs)]
    assert len(set(colours)) == 1
    assert (_colour_of(charts.waveforms(t, four, v_il=0.99, v_ih=2.31), "rise, Rs 27 Ω")
            == _colour_of(charts.waveforms(t, other_rs, v_il=0.99, v_ih=2.31),
                          "rise, Rs 33 Ω"))
    # the SPI budget: "data or CS flight" with every other component, with one, and with
    # every status
    full = [("copi-setup U7", "output valid (t_valid)", 8 * NANO),
            ("copi-setup U7", "data or CS flight", 1 * NANO),
            ("copi-setup U7", "SCLK flight", -0.5 * NANO),
            ("copi-setup U7", "required setup, hold or width", 5 * NANO),
            ("cipo-setup U7", "bridging parts", 2 * NANO)]
    flight = [("cs-setup U7", "data or CS flight", 1 * NANO)]
    budgets = [charts.timing_budget(full, available=20 * NANO,
                                    margins={"copi-setup U7": 6.5 * NANO}),
               charts.timing_budget(flight),
               charts.timing_budget(flight + full, available=10 * NANO,
                                    margins={"cs-setup U7": 0.1 * NANO,
                                             "copi-setup U7": 0.2 * NANO,
                                             "cipo-setup U7": -1 * NANO},
                                    status={"cs-setup U7": "pass", "copi-setup U7": "warn",
                                            "cipo-setup U7": "fail"})]
    seen = {_colour_of(b, "data or CS flight") for b in budgets}
    assert seen == {charts.SERIES_COLOURS["data or CS flight"]}
    assert seen.isdisjoint(charts.STATUS_COLOURS.values())
    # a name the table does not know: the same colour for the same set of names
    a = charts.series_colours(["U1 rise", "U1 fall"])
    assert a == charts.series_colours(["U1 rise", "U1 fall"]) and len(set(a)) == 2


def _entry_styles(chart) -> dict:
    """Each legend entry of a waveforms chart with its (colour, dash) as drawn."""
    for layer in _layers(chart):
        enc = layer["encoding"]
        paint = enc.get("stroke") or enc.get("color") or {}
        if layer["mark"]["type"] == "line" and "scale" in paint:
            colours = dict(zip(paint["scale"]["domain"], paint["scale"]["range"], strict=True))
            dash = enc.get("strokeDash", {}).get("scale")
            dashes = (dict(zip(dash["domain"], map(tuple, dash["range"]), strict=True))
                      if dash else {})
            return {k: (c, dashes.get(k, (1, 0))) for k, c in colours.items()}
    raise AssertionError("no line layer")


def _route_traces(receivers: int, corners: bool = False):
    """Invented test data: a rise and a fall at each receiver U2... of a route (and at
    each corner), named and grouped as plotdata.waveform_data names a route's traces."""
    t = np.linspace(0.0, 20.0, 41) * NANO
    traces, groups = {}, {}
    for i in range(2, receivers + 2):
        for corner in ((" (slow corner)", " (fast corner)") if corners else ("",)):
            up = 3.3 * (1 - np.exp(-t / ((1 + 0.1 * i) * NANO)))
            for edge, v in (("rise", up), ("fall", 3.3 - up)):
                traces[f"{edge} at U{i}{corner}"] = v
                groups[f"{edge} at U{i}{corner}"] = f"at U{i}{corner}"
    return t, traces, groups


# derived: a route of MAX_ROUTE_STRETCHES stretches joins at most one point more, one of
# them the driver: 64 receivers on one chart, two entries each with a fast corner
@pytest.mark.parametrize(("receivers", "corners"), [(8, False), (12, False), (64, False),
                                                    (64, True)])
def test_every_receiver_of_a_route_chart_has_its_own_colour_and_dash(receivers, corners):
    # past 7 receivers two of them were drawn in one colour, with nothing to tell them
    # apart (the series colours number 7)
    from pinlib.core.worklimits import MAX_ROUTE_STRETCHES

    assert MAX_ROUTE_STRETCHES == 64  # the largest count above
    t, traces, groups = _route_traces(receivers, corners)
    chart = charts.waveforms(t, traces, v_il=0.99, v_ih=2.31, vdd=3.3, groups=groups)
    styles = _entry_styles(chart)
    entries = list(dict.fromkeys(groups.values()))
    assert len(entries) == receivers * (2 if corners else 1)
    pairs = [styles[e] for e in entries]
    assert len(set(pairs)) == len(pairs)
    # nor is a receiver drawn like a fixed entry (band, thresholds, VDD)
    fixed = {styles[k] for k in styles if k not in entries}
    assert fixed.isdisjoint(pairs)
    # every receiver in the series colours, never a status colour; solid for the first 7
    assert {c for c, _ in pairs} <= set(charts.SERIES)
    assert [d for _, d in pairs[:7]] == [(1, 0)] * 7 and pairs[7][1] != (1, 0)
    # the legend names each receiver once, all of them (Vega lists 30 unless told), and
    # draws its entries as lines so that the dash shows
    legend = next(layer["encoding"]["stroke"]["legend"] for layer in _layers(chart)
                  if "stroke" in layer["encoding"])
    assert legend["symbolType"] == "stroke"
    assert legend.get("symbolLimit", 30) >= len(styles)
    # the rise and the fall at one receiver are drawn apart, in its style
    line = next(layer for layer in _layers(chart) if layer["mark"]["type"] == "line")
    assert line["encoding"]["detail"]["field"] == "trace"


def test_a_chart_within_the_series_colours_keeps_its_solid_lines():
    t, traces, groups = _route_traces(3, corners=True)  # 6 entries: 7 colours suffice
    chart = charts.waveforms(t, traces, v_il=0.99, v_ih=2.31, vdd=3.3, groups=groups)
    styles = _entry_styles(chart)
    assert all(d == (1, 0) for k, (_, d) in styles.items() if k.startswith("at U"))
    assert len({c for k, (c, _) in styles.items() if k.startswith("at U")}) == 6
    assert not any("strokeDash" in layer["encoding"] for layer in _layers(chart))


def test_series_styles_pairs_stay_distinct_past_every_table():
    # beyond the dash table the patterns are made; still one pair per name
    names = [f"s{i}" for i in range(400)]
    pairs = charts.series_styles(names, [charts.ORANGE, charts.REDDISH_PURPLE, charts.INK])
    assert len(set(pairs)) == 400
    assert len({charts.dash_pattern(k) for k in range(60)}) == 60


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


def _axis_labels(scene) -> dict[str, list[tuple[str, float, float, str]]]:
    """Each axis' shown labels (text, x, y, align), from the rendered scenegraph: "x"
    the horizontal axis (one y), "y" the vertical one (one x)."""
    found = []

    def walk(node):
        if isinstance(node, dict):
            if node.get("role") == "axis-label":
                found.append([(i["text"], i["x"], i["y"], i.get("align", "center"))
                              for i in node.get("items", [])
                              if i.get("text") and i.get("opacity", 1) != 0])
            for item in node.get("items", []):
                walk(item)

    walk(scene["scenegraph"])
    assert len(found) == 2, found
    horizontal = [a for a in found if len({y for _, _, y, _ in a}) == 1 and len(a) > 1]
    vertical = [a for a in found if a is not horizontal[0]]
    return {"x": horizontal[0], "y": vertical[0]}


def _label_gaps(labels, *, along: bool) -> list[float]:
    """The room between neighbouring labels of an axis: along it, between the texts'
    widths in the charts' font at 10 px (Vega's label size) placed by their align;
    stacked, between their line boxes (1.164 em, DejaVu Sans). [px]"""
    spans = []
    for text, x, y, align in labels:
        if along:
            w = charts.text_width(text, 10)
            start = {"left": x, "center": x - w / 2, "right": x - w}[align]
            spans.append((start, start + w))
        else:
            spans.append((y - 5.82, y + 5.82))
    spans.sort()
    return [b[0] - a[1] for a, b in zip(spans, spans[1:], strict=False)]


@pytest.mark.parametrize("width", [340, 480, 720])
@pytest.mark.parametrize(("c_lo", "c_hi", "rp_min"), [
    (5, 800, 1020.0),      # the I2C workbook's Fast-mode window
    (10, 400, 967.0),
    (2, 4000, 150.0),      # more than three decades each way
    (30, 90, 2000.0),      # half a decade of Cb
])
def test_pullup_window_axis_labels_keep_clear_of_each_other(width, c_lo, c_hi, rp_min):
    import vl_convert

    cb = np.geomspace(c_lo, c_hi, 41) * PICO
    rp_max = 1e-6 / (0.8473 * cb)
    spec = charts.spec(charts.pullup_window, cb, rp_min, rp_max,
                       chosen_cb=float(np.sqrt(c_lo * c_hi)) * PICO,
                       chosen_rp=float(np.sqrt(rp_min * rp_max[20])), width=width)
    labels = _axis_labels(vl_convert.vegalite_to_scenegraph(spec))
    # common practice, no source: one em (10 px) between labels along an axis reads as
    # two numbers ("300 400" 4 px apart ran together), 2 px between stacked line boxes
    for axis, along, gap in (("x", True, 10.0), ("y", False, 2.0)):
        shown = labels[axis]
        assert len(shown) >= 2, (axis, shown)
        gaps = _label_gaps(shown, along=along)
        assert min(gaps) >= gap - 0.5, (axis, [t for t, *_ in shown], gaps)


@pytest.mark.parametrize("width", [340, 480, 720])
@pytest.mark.parametrize(("s_lo", "s_hi"), [
    (0.1, 2.0),     # the crosstalk workbook's search, 100 µm to 2 mm
    (0.01, 10.0),   # three decades of spacing
    (0.05, 0.6),    # about a decade
    (0.02, 3.0),    # two decades and more
])
def test_crosstalk_spacing_labels_keep_clear_of_each_other(width, s_lo, s_hi):
    """The crosstalk chart's log spacing axis takes its ticks by the chart's width
    (spaced_log_ticks), as the pull-up window's: with fixed 1-2-5 ticks over three
    decades of a narrow chart the renderer hid every other label (20, 100, 500... had
    ticks and no number).  Every tick keeps its label, clear of its neighbours."""
    import vl_convert

    from pinlib.present.charts.frame import tick_label

    spacing = np.geomspace(s_lo, s_hi, 21) * MILLI
    spec = charts.spec(charts.noise_vs_spacing, spacing, 0.4 / (spacing / MILLI),
                       allowed=0.99, design_spacing=float(np.sqrt(s_lo * s_hi)) * MILLI,
                       design_peak=1.3, width=width)
    ticks = spec["layer"][0]["encoding"]["x"]["axis"]["values"]
    shown = _axis_labels(vl_convert.vegalite_to_scenegraph(spec))["x"]
    assert len(shown) >= 2, shown
    assert sorted(t for t, *_ in shown) == sorted(tick_label(v) for v in ticks), (ticks, shown)
    gaps = _label_gaps(shown, along=True)
    # common practice, no source: one em (10 px) between labels along an axis
    assert min(gaps) >= 10.0 - 0.5, ([t for t, *_ in shown], gaps)


def test_spaced_log_ticks_thin_out_as_the_axis_shortens():
    from pinlib.present.charts.frame import spaced_log_ticks, tick_label

    # 1-2-5 of a decade where they fit, one a decade, then one every few decades
    assert spaced_log_ticks(5.0, 800.0, 402) == [5, 10, 20, 50, 100, 200, 500]
    assert spaced_log_ticks(5.0, 800.0, 200) == [10, 100, 1000]
    assert spaced_log_ticks(0.001, 1e5, 402) == [0.01, 1, 100, 10000]
    # within a decade: every whole step of it
    assert spaced_log_ticks(1.5, 8.0, 400) == [2, 3, 4, 5, 6, 7, 8]
    # stacked labels need only their line's height
    assert spaced_log_ticks(0.44, 35.4, 260, along=False) == [0.5, 1, 2, 5, 10, 20]
    # no two ticks to be had: the renderer's own
    assert spaced_log_ticks(3.1, 3.9, 400) is None
    assert spaced_log_ticks(10.0, 10.0, 400) is None
    assert spaced_log_ticks(1.0, 100.0, 20) is None
    assert [tick_label(v) for v in (0.5, 1.0, 20.0, 1000.0, 0.001)] == [
        "0.5", "1", "20", "1000", "0.001"]


def test_a_window_closed_at_every_cb_draws_no_band():
    # invented inputs: no Rp(min) at all (no pull-up lets the sinks pull low: the
    # pull-ups across a translator alone draw more than the weakest sink's IOL). The
    # band's layer had no rows, and the renderer warned "Infinite extent for field cb"
    cb = np.array([10, 100, 800]) * PICO
    chart = charts.pullup_window(cb, np.inf, np.array([35.4, 3.54, 0.443]) * KILO,
                                 chosen_cb=120 * PICO, chosen_rp=2200.0)
    assert _marks(chart) == ["line", "point"]
    assert "<svg" in charts.to_svg(chart, cache=False)


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
    assert _marks(chart) == ["line", "point", "point", "text"]
    lines, pts, op, note = _layers(chart)
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
    # the operating point's values are written beside it
    assert note["data"]["values"][0]["note"] == "2.5 ns at 22 pF"
    assert note["encoding"]["text"]["field"] == "note"


def test_edge_vs_load_writes_the_operating_point_where_it_fits():
    # the values were always written on the cross's right: with the cross near the end
    # of the load axis (a line loaded beyond the datasheet's loads, the common case) they
    # ran past the plot's edge, and across a curve passing beside it
    loads = np.array([0, 10, 20, 30, 40, 50]) * PICO
    times = np.array([[0.5, 1.4, 2.3, 3.2, 4.1, 5.0],
                      [0.4, 1.1, 1.8, 2.5, 3.2, 3.9]]) * NANO

    def note(load, t):
        chart = charts.edge_vs_load(loads, times, series=["rise", "fall"],
                                    operating=(load, t))
        return _layers(chart)[-1]["mark"]

    # at 90 % and 80 % of the axis: never written on its right, past the plot's edge
    # (where exactly is notes.note_place's, tested on workbook 02's rendered charts)
    for load, t in ((45 * PICO, 2.0 * NANO), (40 * PICO, 2.4 * NANO)):
        far = note(load, t)
        assert far["align"] in ("right", "center") and far.get("dx", 0) <= 0
    # in the middle of the axis, the curves above it: on its right, level with it
    mid = note(22 * PICO, 1.0 * NANO)
    assert (mid["align"], mid["dx"], mid["baseline"]) == ("left", 9, "middle")


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
    assert scale["domain"][:3] == ["between VIL and VIH", "VIL / VIH", "VDD 3.3 V"]
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
    assert _marks(chart) == ["bar", "tick", "text", "text"]
    bars, ticks, names, notes = _layers(chart)
    assert [r["path"] for r in names["data"]["values"]] == ["COPI setup at U7", "CIPO setup"]
    assert bars["encoding"]["y"]["axis"] is None          # the names stand above the bars
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


def test_timing_budget_names_an_engine_path_as_the_checks_table_does():
    # the engine's paths are "<check id> <subject>": the bar read "copi-setup U12" above
    # a table row "COPI setup"; a path that is no check id is shown as given
    chart = charts.timing_budget([("copi-setup U12", "flight", 1e-9),
                                  ("cipo-hold U2", "flight", 2e-9),
                                  ("my path", "flight", 1e-9)], available=20e-9)
    names = _layers(chart)[2]["data"]["values"]
    assert [(r["path"], r["name"]) for r in names] == [
        ("copi-setup U12", "COPI setup U12"), ("cipo-hold U2", "CIPO hold U2"),
        ("my path", "my path")]
    assert _layers(chart)[2]["encoding"]["text"]["field"] == "name"


def test_timing_budget_per_path_available_status_and_errors():
    chart = charts.timing_budget(_BUDGET_ROWS,
                                 available={"COPI setup at U7": 20 * NANO, "CIPO setup": 21 * NANO},
                                 margins={"CIPO setup": 0.5 * NANO},
                                 status={"CIPO setup": "warn"})
    bars, ticks, names, notes = _layers(chart)
    assert [r["t"] for r in ticks["data"]["values"]] == pytest.approx([20.0, 21.0])
    assert notes["data"]["values"] == [
        {"path": "CIPO setup", "text": "margin +500 ps", "series": "warn"}]
    assert charts.WARN in _colour_scale(chart)["range"]
    only_bars = charts.timing_budget(_BUDGET_ROWS[:2])
    assert _marks(only_bars) == ["bar", "text"]
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


# --------------------------------------------------------------------------- layout
_NUMBER = r"[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?"


def _transform(text: str | None) -> np.ndarray:
    """The 3x3 matrix of an SVG transform list (translate, rotate, scale)."""
    m = np.eye(3)
    for op, args in re.findall(r"(\w+)\(([^)]*)\)", text or ""):
        v = [float(x) for x in re.findall(_NUMBER, args)]
        if op == "translate":
            step = np.array([[1, 0, v[0]], [0, 1, v[1] if len(v) > 1 else 0.0], [0, 0, 1]])
        elif op == "rotate":
            a = np.radians(v[0])
            step = np.array([[np.cos(a), -np.sin(a), 0], [np.sin(a), np.cos(a), 0], [0, 0, 1]])
        elif op == "scale":
            step = np.diag([v[0], v[1] if len(v) > 1 else v[0], 1.0])
        else:
            raise AssertionError(f"transform {op} not handled")
        m = m @ step
    return m


def _svg_texts(svg: str) -> tuple[float, float, list[tuple[str, tuple]]]:
    """The SVG's size and each line of text with its box, the text's width estimated in
    the charts' font (DejaVu Sans advance widths) and its height from ascent to
    descent."""
    import xml.etree.ElementTree as ET

    root = ET.fromstring(svg)
    out = []

    def visit(node, m):
        m = m @ _transform(node.get("transform"))
        if node.get("opacity") == "0":      # hidden (an axis label that would overlap)
            return
        if node.tag.endswith("text"):
            size = float(node.get("font-size", "11px").rstrip("px"))
            bold = node.get("font-weight") == "bold"
            anchor = node.get("text-anchor", "start")
            spans = [c for c in node if c.tag.endswith("tspan")]
            lines = ([(c.text or "", float(c.get("dy", 0))) for c in spans] if spans
                     else [(node.text or "", 0.0)])
            y = 0.0
            for line, dy in lines:
                y += dy
                w = charts.text_width(line, size, bold=bold)
                x0 = {"start": 0.0, "middle": -w / 2, "end": -w}[anchor]
                # from the font file: DejaVu Sans' line box, 0.928 em above the baseline
                # and 0.236 em below (hhea ascender 1901, descender -483 of 2048 units),
                # the box a browser gives a line of text
                corners = np.array([[x0, x0 + w, x0, x0 + w],
                                    [y - 0.928 * size] * 2 + [y + 0.236 * size] * 2,
                                    [1, 1, 1, 1]])
                xy = (m @ corners)[:2]
                out.append((line, (xy[0].min(), xy[1].min(), xy[0].max(), xy[1].max())))
            return
        for child in node:
            visit(child, m)

    visit(root, np.eye(3))
    return float(root.get("width")), float(root.get("height")), out


def _advance_widths(path: Path):
    """Advance width in em of each character of a TrueType font (its cmap format 4 and
    hmtx tables, as the OpenType specification lays them out)."""
    import struct

    data = path.read_bytes()
    tables = {}
    for i in range(struct.unpack(">H", data[4:6])[0]):
        tag, _, off, _ = struct.unpack(">4sIII", data[12 + 16 * i:28 + 16 * i])
        tables[tag.decode("latin-1")] = off
    units = struct.unpack(">H", data[tables["head"] + 18:tables["head"] + 20])[0]
    n_metrics = struct.unpack(">H", data[tables["hhea"] + 34:tables["hhea"] + 36])[0]
    advance = [struct.unpack(">H", data[tables["hmtx"] + 4 * i:tables["hmtx"] + 4 * i + 2])[0]
               for i in range(n_metrics)]
    cmap = tables["cmap"]
    sub = None
    for i in range(struct.unpack(">H", data[cmap + 2:cmap + 4])[0]):
        pid, eid, off = struct.unpack(">HHI", data[cmap + 4 + 8 * i:cmap + 12 + 8 * i])
        if (pid, eid) == (3, 1):
            sub = cmap + off
    assert sub is not None and struct.unpack(">H", data[sub:sub + 2])[0] == 4
    seg2 = struct.unpack(">H", data[sub + 6:sub + 8])[0]
    n = seg2 // 2
    ends = struct.unpack(f">{n}H", data[sub + 14:sub + 14 + seg2])
    starts = struct.unpack(f">{n}H", data[sub + 16 + seg2:sub + 16 + 2 * seg2])
    deltas = struct.unpack(f">{n}h", data[sub + 16 + 2 * seg2:sub + 16 + 3 * seg2])
    at = sub + 16 + 3 * seg2
    offsets = struct.unpack(f">{n}H", data[at:at + seg2])

    def width(ch: str) -> float:
        c = ord(ch)
        k = next(j for j in range(n) if ends[j] >= c)
        glyph = 0
        if starts[k] <= c:
            if offsets[k] == 0:
                glyph = (c + deltas[k]) & 0xFFFF
            else:
                p = at + 2 * k + offsets[k] + 2 * (c - starts[k])
                g = struct.unpack(">H", data[p:p + 2])[0]
                glyph = (g + deltas[k]) & 0xFFFF if g else 0
        return advance[min(glyph, n_metrics - 1)] / units

    return width


@pytest.mark.parametrize(("bold", "name"), [(False, "DejaVuSans.ttf"),
                                            (True, "DejaVuSans-Bold.ttf")])
def test_text_widths_are_the_fonts_own(bold, name):
    path = Path("/usr/share/fonts/truetype/dejavu") / name
    if not path.exists():
        pytest.skip(f"{path} is not installed")
    width = _advance_widths(path)
    # derived from the font file itself: the table the charts lay text out with
    for ch, em in charts._EM[bold].items():
        assert em == pytest.approx(width(ch), abs=6e-4), ch
    assert charts.text_width("Rp min (VOL at IOL)", 11, bold=bold) == pytest.approx(
        11 * sum(width(c) for c in "Rp min (VOL at IOL)"), rel=1e-3)


def _long_labels(width: int) -> dict:
    """Every chart with the longest labels the widgets and the report give it."""
    loads = np.linspace(0.0, 62.0, 31) * PICO
    names = ["rise 10–90 %", "fall 10–90 %", "rise 10–90 %, Rs 27 Ω", "fall 10–90 %, Rs 27 Ω"]
    times = np.vstack([2 * NANO + loads * k for k in (65.0, 50.0, 120.0, 105.0)])
    t = np.linspace(0.0, 20.0, 201) * NANO
    up = 3.3 * (1 - np.exp(-t / (2 * NANO)))
    rows = [(f"{p} U7", c, d * NANO) for p in ("copi-setup", "copi-hold", "cipo-setup",
                                               "cipo-hold", "cs-setup")
            for c, d in (("output valid (t_valid)", 8.0), ("data or CS flight", 1.2),
                         ("SCLK flight", -0.4), ("required setup, hold or width", 5.0),
                         ("bridging parts", 2.0))]
    paths = list(dict.fromkeys(p for p, _, _ in rows))
    cb = np.geomspace(5, 800, 41) * PICO
    return {
        "pullup_window": lambda: charts.pullup_window(
            cb, 1020.0, 1e-6 / (0.8473 * cb), chosen_cb=60.4 * PICO, chosen_rp=1800.0,
            title="Before: pull-up window, sensors seg-a SDA",
            subtitle="tr ≤ 1 µs, rise = 0.8473·Rp·Cb; Rp(min) 1.02 kΩ set by U2 (an "
                     "I/O expander on the far side of the translator)",
            chosen_label="design: 1.8 kΩ at 60.4 pF", width=width),
        "edge_vs_load": lambda: charts.edge_vs_load(
            loads, times, series=names,
            points=(np.array([15, 50]) * PICO, np.array([2.5, 5.0]) * NANO,
                    ["rise 10–90 %", "fall 10–90 %"]),
            operating=(34.8 * PICO, 2.74 * NANO, "far end of this line (transmission-line "
                                                 "model)"),
            curves_title="Driver model into a lumped load at its pin",
            title="Edge time against load: U1 driving flash SCLK",
            subtitle="Curves: the driver alone into a lumped load (datasheet conditions). "
                     "Cross: the rise at the far end of this line.", width=width),
        "waveforms": lambda: charts.waveforms(
            t, {"rise, Rs 27 Ω": up, "fall, Rs 27 Ω": 3.3 - up, "rise, no series R": up,
                "fall, no series R": 3.3 - up}, v_il=0.99, v_ih=2.31, vdd=3.3,
            title="Receiver waveforms: flash SCLK from U1", subtitle="at U2.sclk, U3.sclk",
            width=width),
        "timing_budget": lambda: charts.timing_budget(
            rows, available=25 * NANO, margins=dict.fromkeys(paths, 13.8 * NANO) | {
                "cipo-setup U7": -0.3 * NANO, "cs-setup U7": 0.4 * NANO},
            status={"cipo-setup U7": "fail", "cs-setup U7": "warn"},
            title="SPI timing budget, flash at 20 MHz",
            subtitle="SPI mode 0; the tick is the time available", width=width),
        "histogram": lambda: charts.histogram(
            np.random.default_rng(7).normal(250.0, 25.0, 2000) * NANO, limit=300 * NANO,
            unit="s", label="Rise time", subtitle="98.1 % of 2000 boards pass",
            width=width),
    }


def _overlap(a, b) -> float:
    """How far two boxes overlap in the direction they overlap least. [px]"""
    return min(min(a[2], b[2]) - max(a[0], b[0]), min(a[3], b[3]) - max(a[1], b[1]))


def _dejavu_installed() -> bool:
    import shutil

    if Path("/usr/share/fonts/truetype/dejavu/DejaVuSans.ttf").exists():
        return True
    if shutil.which("fc-list") is None:
        return False
    listed = subprocess.run(["fc-list", "DejaVu Sans"], capture_output=True, text=True,
                            timeout=30)
    return "DejaVu Sans" in listed.stdout


# vl-convert lays text out with the font it finds; the boxes below use DejaVu Sans'
# widths, so they describe the chart only where that font is installed (CI installs it)
needs_dejavu = pytest.mark.skipif(not _dejavu_installed(), reason="DejaVu Sans not installed")


@needs_dejavu
@pytest.mark.parametrize("width", [340, 480, 720])
@pytest.mark.parametrize("name", sorted(ALL))
def test_text_stays_inside_the_chart_and_clear_of_other_text(name, width):
    svg = charts.to_svg(charts.spec(_long_labels(width)[name]))
    w, h, texts = _svg_texts(svg)
    assert w == width                                 # the chart fits the width it is given
    assert len(texts) > 10
    for text, (x0, y0, x1, y1) in texts:
        # common practice, no source: 1 px for rounding in the renderer
        assert -1.0 <= x0 and x1 <= w + 1.0, (text, x0, x1, w)
        assert -1.0 <= y0 and y1 <= h + 1.0, (text, y0, y1, h)
    for i, (ta, a) in enumerate(texts):
        for tb, b in texts[i + 1:]:
            assert _overlap(a, b) <= 1.0, (ta, a, tb, b)


@pytest.mark.parametrize("name", sorted(ALL))
def test_no_label_is_cut_or_says_undefined(name):
    for build in (ALL[name], _long_labels(340)[name]):
        _, _, texts = _svg_texts(charts.to_svg(charts.spec(build)))
        words = [t for t, _ in texts]
        assert not [t for t in words if "…" in t or "..." in t], words
        assert not [t for t in words if re.search(r"undefined|NaN|null", t)], words


def test_legends_sit_below_the_plot_with_room_for_their_labels():
    for width in (340, 480):
        for name, build in _long_labels(width).items():
            spec = charts.spec(build)
            for layer in spec["layer"]:
                for channel in ("color", "shape"):
                    enc = layer.get("encoding", {}).get(channel, {})
                    legend = enc.get("legend")
                    if not legend:
                        continue
                    assert legend["orient"] == "bottom", name
                    size = legend["labelFontSize"]
                    longest = max(charts.text_width(s, size) for s in enc["scale"]["domain"])
                    assert legend["labelLimit"] >= longest + 1, (name, width)
                    title = legend.get("title")
                    for line in ([title] if isinstance(title, str) else title or []):
                        assert legend["titleLimit"] >= charts.text_width(
                            line, legend["titleFontSize"], bold=True), (name, width)


def _scene_items(node, marktype: str, colour: str) -> list[dict]:
    """Every item of a mark of ``marktype`` stroked or filled with ``colour``."""
    found = []
    if isinstance(node, dict):
        for item in node.get("items", []):
            if node.get("marktype") == marktype and colour in (item.get("stroke"),
                                                               item.get("fill")):
                found.append(item)
            found += _scene_items(item, marktype, colour)
    return found


def _plot_size(scene) -> tuple[float, float]:
    frame = scene["scenegraph"]["items"][0]
    return frame["width"], frame["height"]


def test_rp_min_line_lies_inside_the_frame():
    import vl_convert

    # a flat Rp(min) is the lowest value drawn: Standard-mode, every Cb, 1.02 kΩ
    cb = np.geomspace(5, 800, 41) * PICO
    spec = charts.spec(charts.pullup_window, cb, 1020.0, 1e-6 / (0.8473 * cb),
                       chosen_cb=60 * PICO, chosen_rp=2000.0, height=260)
    scene = vl_convert.vegalite_to_scenegraph(spec)
    _, height = _plot_size(scene)
    assert height == 260
    low = _scene_items(scene["scenegraph"], "line", charts.BOUND_LOW)
    high = _scene_items(scene["scenegraph"], "line", charts.BOUND_HIGH)
    assert len(low) == len(high) == cb.size
    # common practice, no source: a line 6 px or more from the frame is seen as a line
    assert all(6.0 <= p["y"] <= height - 6.0 for p in low + high)
    assert all(6.0 <= p["x"] for p in low + high)


def test_limit_lines_lie_inside_the_frame():
    import vl_convert

    # VDD is the highest value of a trace that settles without overshoot
    t = np.linspace(0.0, 20.0, 201) * NANO
    wave = charts.spec(charts.waveforms, t, {"rise": 3.0 * (1 - np.exp(-t / NANO))},
                       v_il=0.8, v_ih=2.0, vdd=3.0)
    scene = vl_convert.vegalite_to_scenegraph(wave)
    _, height = _plot_size(scene)
    (vdd,) = _scene_items(scene["scenegraph"], "rule", charts.INK)
    assert 6.0 <= vdd["y"] <= height - 6.0
    # every sample passes: the limit is the histogram's last bin edge
    hist = charts.spec(charts.histogram, np.linspace(200.0, 300.0, 500) * NANO,
                       limit=300 * NANO, unit="s", label="Rise time")
    scene = vl_convert.vegalite_to_scenegraph(hist)
    width, _ = _plot_size(scene)
    (rule,) = _scene_items(scene["scenegraph"], "rule", charts.LIMIT)
    assert 6.0 <= rule["x"] <= width - 6.0
    # the time available is the longest bar's end
    budget = charts.spec(charts.timing_budget, [("read", "setup", 20 * NANO)],
                         available=20 * NANO)
    scene = vl_convert.vegalite_to_scenegraph(budget)
    width, _ = _plot_size(scene)
    (tick,) = _scene_items(scene["scenegraph"], "rect", charts.LIMIT)
    assert 6.0 <= tick["x"] + tick["width"] / 2 <= width - 6.0


# --------------------------------------------------------------------------- imports
def test_chart_libraries_stay_out_of_the_command_line_import_path():
    code = ("import sys; import pinlib.cli, pinlib.engines.dispatch, pinlib.present.charts; "
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


def test_cached_compile_keeps_an_axis_ticks_as_layout(monkeypatch):
    # an axis given its ticks ("values" in the axis, as the crosstalk chart's log
    # spacing axis) is layout, not data rows: the layout still compiles once and later
    # redraws only render
    import vl_convert

    spacing = np.geomspace(0.1, 2.0, 9) * MILLI
    spec = charts.spec(charts.noise_vs_spacing, spacing, 0.4 / (spacing / MILLI),
                       allowed=0.99, design_spacing=0.3 * MILLI, design_peak=1.3)
    axis = spec["layer"][0]["encoding"]["x"]["axis"]
    assert axis["values"] == [100, 200, 500, 1000, 2000]  # derived: 1-2-5 over 100-2000 µm
    direct = charts.to_svg(spec, cache=False)
    assert charts.to_svg(spec) == direct
    with monkeypatch.context() as m:
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
    budget_cases = [
        dict(available=20 * NANO, margins={"CIPO setup": 1 * NANO}),
        dict(available=21 * NANO, margins={"CIPO setup": 2 * NANO}),
        dict(available=21 * NANO, margins={"CIPO setup": -2 * NANO}),
        dict(available=21 * NANO),
        dict(),
        dict(available=20 * NANO, margins={"CIPO setup": 1 * NANO}, title="other"),
    ]
    for _ in range(2):
        for kw in budget_cases:
            assert (charts.spec(charts.timing_budget, _BUDGET_ROWS, **kw)
                    == charts.timing_budget(_BUDGET_ROWS, **kw).to_dict(validate=False))
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


def test_a_title_word_wider_than_the_chart_is_broken_to_fit():
    # reproducer: a report on a bus whose id is long (invented design) titled its pull-up
    # window "Pull-up window: a-very-long-bus-identifier-for-the-sensor-and-memory-bus-on-
    # the-main-board SDA"; the id stayed whole on its line and the chart cut it off at
    # its right edge ("main-board" lost)
    from pinlib.present.charts.style import _wrap, text_width

    bus = "a-very-long-bus-identifier-for-the-sensor-and-memory-bus-on-the-main-board"
    title = f"Pull-up window: {bus} SDA"
    room = 470.0
    lines = _wrap(title, 13, room, bold=True)
    assert all(text_width(ln, 13, bold=True) <= room for ln in lines), lines
    assert "".join(lines).replace(" ", "") == title.replace(" ", "")
    # broken after a hyphen, not inside a word
    assert all(ln.endswith("-") for ln in lines if bus.startswith(ln) or ln in bus[:-1])
    # a word with no place to break is cut where it must be
    solid = "x" * 200
    got = _wrap(solid, 11, 100.0)
    assert len(got) > 1 and "".join(got) == solid
    assert all(text_width(ln, 11) <= 100.0 for ln in got)
    # text that fits is as before: broken at spaces only
    assert _wrap("rise 10-90 and fall", 11, 1000.0) == ["rise 10-90 and fall"]
    got = _wrap("tr ≤ 300 ns, rise = 0.8473·Rp·Cb", 11, 90.0)
    assert len(got) > 1 and " ".join(got) == "tr ≤ 300 ns, rise = 0.8473·Rp·Cb"


def test_a_long_bus_id_keeps_the_chart_title_inside_the_chart():
    bus = "a-very-long-bus-identifier-for-the-sensor-and-memory-bus-on-the-main-board"
    from pinlib.present.charts.style import text_width

    chart = charts.pullup_window(np.array([10e-12, 100e-12]), 1e3, np.array([3e4, 3e3]),
                                 chosen_cb=50e-12, chosen_rp=2e3,
                                 title=f"Pull-up window: {bus} SDA")
    spec = chart.to_dict()
    text = spec["title"]["text"]
    assert "main-board" in "".join(text)
    assert all(text_width(ln, 13, bold=True) <= spec["width"] - 10 for ln in text), text
