"""Chart specifications (altair / Vega-Lite) of what the engines returned.

Presentation only: every number drawn here was computed by an engine and is passed in
as SI floats or numpy arrays (s, F, Ω, V).  This module picks a display scale for each
axis (pF, kΩ, ns...) and lays the figures out; it computes no engineering figure.

altair and vl_convert are imported inside the functions that need them, so that
importing this module (or :mod:`pinlib.engines.dispatch`, :mod:`pinlib.cli`) stays light.

Every chart carries a legend; every axis title names the quantity and its prefixed
unit, e.g. ``"Bus capacitance Cb (pF)"``, with the values scaled to that unit.
"""

from __future__ import annotations

import math
import re
import sys
from collections.abc import Callable, Mapping, Sequence
from contextvars import ContextVar
from typing import TYPE_CHECKING

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.core.quantity import format_si

if TYPE_CHECKING:  # pragma: no cover - typing only
    import altair as alt

__all__ = [
    "INK",
    "ORANGE",
    "SKY_BLUE",
    "BLUISH_GREEN",
    "YELLOW",
    "BLUE",
    "VERMILLION",
    "REDDISH_PURPLE",
    "PASS",
    "WARN",
    "FAIL",
    "REGION",
    "UNDEFINED",
    "LIMIT",
    "OPERATING",
    "SERIES",
    "STATUS_COLOURS",
    "display_scale",
    "pullup_window",
    "edge_vs_load",
    "waveforms",
    "timing_budget",
    "histogram",
    "spec",
    "to_svg",
]

# --------------------------------------------------------------------------- palette
# pinlib's chart palette.  Status and role colours are the Okabe–Ito colours (M. Okabe
# and K. Ito, "Color Universal Design (CUD): how to make figures and presentations that
# are friendly to colorblind people", 2002/2008; RGB values as reprinted in B. Wong,
# "Points of view: Color blindness", Nature Methods 8, 441 (2011)).  Series colours add
# four tones of P. Tol's colour-blind-safe "muted" scheme (indigo, wine, olive, sand;
# from memory: P. Tol, "Colour Schemes", SRON technical note) and a dark olive.  The
# selection is pinlib's own: every pair of colours that can meet in one chart stays
# apart under simulated protanopia, deuteranopia and tritanopia (tests/test_charts.py
# measures it).
INK = "#000000"  # black
ORANGE = "#E69F00"
SKY_BLUE = "#56B4E9"
BLUISH_GREEN = "#009E73"
YELLOW = "#F0E442"
BLUE = "#0072B2"
VERMILLION = "#D55E00"
REDDISH_PURPLE = "#CC79A7"
INDIGO = "#332288"
WINE = "#882255"
OLIVE = "#999933"
SAND = "#DDCC77"
DARK_OLIVE = "#666633"

# Roles, each a colour of the palette above.  A chart never gives two roles one colour.
# Status colours (pass, warn, fail) are never series colours.
PASS = BLUISH_GREEN
WARN = ORANGE
FAIL = VERMILLION
REGION = SKY_BLUE  # an allowed region (shaded, translucent)
UNDEFINED = ORANGE  # the band between VIL and VIH (shaded, translucent); name kept
THRESHOLD_BAND = UNDEFINED
LIMIT = REDDISH_PURPLE  # a limit or threshold line
OPERATING = INK  # the chosen operating point
BOUND_LOW = BLUE  # a lower bound drawn as a curve (Rp min)
BOUND_HIGH = WINE  # an upper bound drawn as a curve (Rp max)
STATUS_COLOURS = {"pass": PASS, "warn": WARN, "fail": FAIL}
# Series colours: never a status colour.  A series the table below does not name gets
# the first of these its chart has free, in this order after a stable hash of its name.
SERIES = (BLUE, WINE, SKY_BLUE, INDIGO, OLIVE, DARK_OLIVE, SAND)

#: The colour of every series pinlib's own charts draw, by name (a resistor value in the
#: name, "Rs 27 Ω", is left out of the key: see :func:`series_key`).  A series keeps its
#: colour whichever other series a redraw shows.
SERIES_COLOURS = {
    # edge time against load (pinlib.present.plotdata.edge_vs_load_data): rise blue tones,
    # fall wine/sky; the dark tone without the series resistor
    "rise 10-90": INDIGO,
    "fall 10-90": WINE,
    "rise 10-90, Rs": BLUE,
    "fall 10-90, Rs": SKY_BLUE,
    "rise 20-80": OLIVE,
    "fall 20-80": DARK_OLIVE,
    # far-end waveforms (pinlib.present.plotdata.waveform_data), the same pairs
    "rise, no series R": INDIGO,
    "fall, no series R": WINE,
    "rise, Rs": BLUE,
    "fall, Rs": SKY_BLUE,
    # timing budget components (pinlib.present.plotdata.BUDGET_COMPONENTS)
    "output valid (t_valid)": BLUE,
    "data or CS flight": WINE,
    "SCLK flight": SKY_BLUE,
    "required setup or hold": SAND,
    "bridging parts": INDIGO,
}

# The charts' font.  vl-convert measures text with the first family it finds (DejaVu
# Sans where installed, the widest common sans-serif); a browser that lacks it draws a
# narrower face, so text never runs past the place measured for it.
FONT = "DejaVu Sans, Verdana, sans-serif"

_WIDTH = 480  # the whole chart, axes and legend included
_HEIGHT = 260  # the plot
_REGION_OPACITY = 0.30
_BAND_OPACITY = 0.25
_PAD_PX = 12  # space between the outermost drawn value and the frame
_FLUSH_PX = 20  # an axis label this close to an end of its axis is aligned flush with it

# Engineering prefixes for axis units (exponent -> prefix); micro as µ, like format_si.
_PREFIXES = {12: "T", 9: "G", 6: "M", 3: "k", 0: "", -3: "m", -6: "µ", -9: "n", -12: "p",
             -15: "f"}


# --------------------------------------------------------------------------- helpers
def _alt():
    if "altair" not in sys.modules and "rfc3987_syntax" not in sys.modules:
        # jsonschema (altair's validator) builds the grammars of its optional IRI format
        # checker on import when that package is installed: over a second of start-up
        # for a format no chart schema uses.  Hide it for altair's import only.
        sys.modules["rfc3987_syntax"] = None
        try:
            import altair as alt
        finally:
            del sys.modules["rfc3987_syntax"]
        return alt
    import altair as alt

    return alt


# While spec() builds a chart, each layer's rows are held here and the altair objects get
# a named placeholder instead: altair deep-copies and walks every row it holds (most of a
# redraw for a waveform), while the rows are already plain JSON values.
_DEFERRED: ContextVar[list | None] = ContextVar("pinlib_charts_deferred", default=None)
_TOKEN = "pinlib-deferred-"


def _slot(values: list, held: list) -> int:
    """Index of ``values`` among the rows ``held`` (added when new)."""
    for i, rows in enumerate(held):  # equal rows, one name: altair hoists shared data
        if rows is values or rows == values:
            return i
    held.append(values)
    return len(held) - 1


def _data(values: list):
    """``alt.Data`` of ``values``, or a placeholder for them while :func:`spec` builds."""
    alt = _alt()
    held = _DEFERRED.get()
    if held is None:
        return alt.Data(values=values)
    return alt.Data(name=f"{_TOKEN}{_slot(values, held)}")


# Under spec(), a chart function may name its layout (everything but its rows) and the
# rows it is about to hand to _data, in order; a layout built before is then reused from
# here instead of building the altair objects again.
_LAYOUTS: dict[tuple, dict] = {}
_LAYOUTS_MAX = 32
_PENDING: ContextVar[list | None] = ContextVar("pinlib_charts_layout", default=None)


class _Known:
    """A layout :func:`spec` has built before, standing in for the altair chart."""

    def __init__(self, skeleton: dict):
        self.skeleton = skeleton

    def to_dict(self, validate: bool = False) -> dict:
        return self.skeleton


def _reuse(key: tuple, rows: Sequence[list]):
    """The layout ``key`` already built for ``rows`` (a :class:`_Known`), or None.

    Outside :func:`spec` always None.  The key of the layout includes which of ``rows``
    are equal, as that decides the data names in it.
    """
    held = _DEFERRED.get()
    pending = _PENDING.get()
    if held is None or pending is None or held:
        return None
    full = (key, tuple(_slot(r, held) for r in rows))
    known = _LAYOUTS.get(full)
    if known is not None:
        return _Known(known)
    del held[:]  # the builder hands the rows to _data itself
    pending.append((full, len(rows)))
    return None


def _fill(node, held: list):
    """``node`` with every placeholder replaced by the rows it stands for."""
    if isinstance(node, dict):
        name = node.get("name")
        if len(node) == 1 and isinstance(name, str) and name.startswith(_TOKEN):
            return {"values": held[int(name[len(_TOKEN):])]}
        return {k: _fill(v, held) for k, v in node.items()}
    if isinstance(node, list):
        return [_fill(v, held) for v in node]
    return node


def _array(x, field: str, *, ndim: int | tuple[int, ...] = 1) -> np.ndarray:
    """``x`` as a float array of the allowed dimension(s), or an InputError naming it."""
    try:
        a = np.asarray(x, dtype=float)
    except (TypeError, ValueError):
        raise InputError(M.NOT_NUMBERS, field=field,
                         value=_short(x), expected="floats in SI units") from None
    dims = (ndim,) if isinstance(ndim, int) else ndim
    if a.ndim not in dims:
        raise InputError(M.ARRAY_DIMENSIONS.format(ndim=a.ndim), field=field,
                         value=_short(x),
                         expected=" or ".join(f"{d}-D" for d in dims) + " array")
    return a


def _scalar(x, field: str, *, positive: bool = False) -> float:
    try:
        v = float(x)
    except (TypeError, ValueError):
        raise InputError(M.NOT_A_NUMBER, field=field, value=_short(x),
                         expected="a float in SI units") from None
    if not math.isfinite(v) or (positive and v <= 0.0):
        raise InputError(M.CANNOT_BE_DRAWN, field=field, value=v,
                         expected="a finite positive value" if positive else "a finite value")
    return v


def _short(x) -> str:
    text = repr(x)
    return text if len(text) <= 60 else text[:57] + "..."


def _num(x: float) -> float:
    """A display value for the JSON spec: 12 significant digits (stable, compact)."""
    return float(f"{float(x):.12g}")


def display_scale(values, unit: str, *, log: bool = False) -> tuple[float, str]:
    """Display factor and prefixed unit for an axis showing ``values``.

    Parameters
    ----------
    values : array_like
        The values the axis shows. [unit]
    unit : str
        Their SI unit (``"F"``, ``"Ω"``, ``"s"``, ``"V"``); ``""`` for a pure number,
        ``"%"`` for a fraction shown in percent. [1]
    log : bool, optional
        The axis is logarithmic: the prefix is chosen for the geometric middle of the
        range rather than its largest magnitude. [1]

    Returns
    -------
    factor : float
        Multiply an SI value by this to get the displayed number. [1]
    shown_unit : str
        The unit with its prefix, e.g. ``"pF"``. [1]

    Examples
    --------
    >>> display_scale([10e-12, 400e-12], "F")
    (1000000000000.0, 'pF')
    >>> display_scale([0.0, 3.3], "V")
    (1.0, 'V')
    """
    if unit == "%":
        return 100.0, "%"
    v = np.abs(np.asarray(values, dtype=float).ravel())
    v = v[np.isfinite(v) & (v > 0.0)]
    if not unit or v.size == 0:
        return 1.0, unit
    ref = math.sqrt(float(v.min()) * float(v.max())) if log else float(v.max())
    exp = int(np.clip(math.floor(math.log10(ref) / 3.0) * 3, -15, 12))
    return 10.0 ** (-exp), _PREFIXES[exp] + unit


def _title(label: str, shown_unit: str) -> str:
    return f"{label} ({shown_unit})" if shown_unit else label


# Advance widths of DejaVu Sans (regular, bold) in em, read from the font's hmtx table
# (DejaVu fonts 2.37): what vl-convert measures the charts' text with.  Characters not
# listed count as a full em, so an estimate errs wide.
_EM = {
    False: dict(zip(
        " !\"#$%&'()*+,-./0123456789:;<=>?@ABCDEFGHIJKLMNOPQRSTUVWXYZ[\\]^_`"
        "abcdefghijklmnopqrstuvwxyz{|}~Ωµ–·≤≥×±°",
        (0.318, 0.401, 0.46, 0.838, 0.636, 0.95, 0.78, 0.275, 0.39, 0.39, 0.5, 0.838, 0.318,
         0.361, 0.318, 0.337, *[0.636] * 10, 0.337, 0.337, 0.838, 0.838, 0.838, 0.531, 1.0,
         0.684, 0.686, 0.698, 0.77, 0.632, 0.575, 0.775, 0.752, 0.295, 0.295, 0.656, 0.557,
         0.863, 0.748, 0.787, 0.603, 0.787, 0.695, 0.635, 0.611, 0.732, 0.684, 0.989, 0.685,
         0.611, 0.685, 0.39, 0.337, 0.39, 0.838, 0.5, 0.5, 0.613, 0.635, 0.55, 0.635, 0.615,
         0.352, 0.635, 0.634, 0.278, 0.278, 0.579, 0.278, 0.974, 0.634, 0.612, 0.635, 0.635,
         0.411, 0.521, 0.392, 0.634, 0.592, 0.818, 0.592, 0.592, 0.525, 0.636, 0.337, 0.636,
         0.838, 0.764, 0.636, 0.5, 0.318, 0.838, 0.838, 0.838, 0.838, 0.5), strict=True)),
    True: dict(zip(
        " !\"#$%&'()*+,-./0123456789:;<=>?@ABCDEFGHIJKLMNOPQRSTUVWXYZ[\\]^_`"
        "abcdefghijklmnopqrstuvwxyz{|}~Ωµ–·≤≥×±°",
        (0.348, 0.456, 0.521, 0.838, 0.696, 1.002, 0.872, 0.306, 0.457, 0.457, 0.523, 0.838,
         0.38, 0.415, 0.38, 0.365, *[0.696] * 10, 0.4, 0.4, 0.838, 0.838, 0.838, 0.58, 1.0,
         0.774, 0.762, 0.734, 0.83, 0.683, 0.683, 0.821, 0.837, 0.372, 0.372, 0.775, 0.637,
         0.995, 0.837, 0.85, 0.733, 0.85, 0.77, 0.72, 0.682, 0.812, 0.774, 1.103, 0.771,
         0.724, 0.725, 0.457, 0.365, 0.457, 0.838, 0.5, 0.5, 0.675, 0.716, 0.593, 0.716,
         0.678, 0.435, 0.716, 0.712, 0.343, 0.343, 0.665, 0.343, 1.042, 0.712, 0.687, 0.716,
         0.716, 0.493, 0.595, 0.478, 0.712, 0.652, 0.924, 0.645, 0.652, 0.582, 0.712, 0.365,
         0.712, 0.838, 0.85, 0.736, 0.5, 0.38, 0.838, 0.838, 0.838, 0.838, 0.5), strict=True)),
}


def text_width(text: str, size: float, *, bold: bool = False) -> float:
    """Width of ``text`` set in the charts' font at ``size`` px (an estimate that errs
    wide: no kerning, unknown characters a full em). [px]"""
    table = _EM[bool(bold)]
    return float(size) * sum(table.get(ch, 1.0) for ch in str(text))


def _wrap(text: str, size: float, limit: float, *, bold: bool = False) -> list[str]:
    """``text`` broken at spaces into lines no wider than ``limit`` px (a word longer
    than that stays whole on its own line)."""
    lines: list[str] = []
    for word in str(text).split(" "):
        if lines and text_width(f"{lines[-1]} {word}", size, bold=bold) <= limit:
            lines[-1] = f"{lines[-1]} {word}"
        else:
            lines.append(word)
    return lines


_QUANTITY = re.compile(r"\s*[-+]?\d+(?:\.\d+)?\s?[TGMkmµnpf]?Ω")


def series_key(name: str) -> str:
    """The key of a series in :data:`SERIES_COLOURS`: its name without a resistor value
    (``"rise, Rs 27 Ω"`` -> ``"rise, Rs"``), so that a series keeps its colour when the
    value changes."""
    return _QUANTITY.sub("", str(name)).strip()


def series_colours(names: Sequence[str], taken: Sequence[str] = ()) -> list[str]:
    """A colour for each series name, from :data:`SERIES_COLOURS`.

    Parameters
    ----------
    names : sequence of str
        The series of one chart. [1]
    taken : sequence of str, optional
        Colours the chart already gives to fixed roles (limits, bands...). [1]

    Returns
    -------
    list of str
        One colour per name.  A name the table knows always gets its colour; any other
        name gets the first colour of :data:`SERIES` free in this chart, starting from a
        stable hash of its name (the same for the same set of names), never a status
        colour.
    """
    import zlib

    out: list[str | None] = [SERIES_COLOURS.get(series_key(n)) for n in names]
    used = set(taken) | {c for c in out if c is not None}
    for i, name in enumerate(names):
        if out[i] is not None:
            continue
        start = zlib.crc32(series_key(name).encode("utf-8")) % len(SERIES)
        ring = SERIES[start:] + SERIES[:start]
        free = [c for c in ring if c not in used] or list(ring)
        out[i] = free[0]
        used.add(free[0])
    return [str(c) for c in out]


def _scale_pair(domain: list[str], colours: list[str]):
    alt = _alt()
    return alt.Scale(domain=list(domain), range=list(colours))


_LEGEND_SIZE = 11  # legend label font size [px]
_LEGEND_SYMBOL = 20  # a legend entry's symbol and the gap after it [px]
_LEGEND_GAP = 14  # between two legend columns [px]
_LEGEND_OFFSET = 26  # from the plot to the legend below the x axis and its title [px]
_AXIS_ROOM = 66  # a y axis of numbers with its title, left of the plot [px]
_ROW = 44  # a timing budget's row: the path's name and margin above its bar [px]


def _columns(labels: Sequence[str], room: float) -> int:
    """How many legend columns fit ``labels`` into ``room`` px, entries in rows."""
    widths = [_LEGEND_SYMBOL + text_width(s, _LEGEND_SIZE) for s in labels]
    for k in range(max(len(widths), 1), 1, -1):
        cols = [max(widths[j::k]) for j in range(k)]
        if sum(cols) + _LEGEND_GAP * (k - 1) <= room:
            return k
    return 1


def _plot_room(width: int, left: float = _AXIS_ROOM, right: float = 12.0) -> float:
    """The plot's width in a chart ``width`` px wide with ``left`` px of axis before it and
    ``right`` px after it (estimates that err large, so the plot errs small). [px]"""
    return max(float(width) - left - right, 60.0)


def _legend(title: str | None, labels: Sequence[str] = (), room: float = _WIDTH, **extra):
    """A legend below the plot, starting at its left edge, its entries in as many
    columns as fit ``room`` px (the plot's width, :func:`_plot_room`); no label is cut."""
    alt = _alt()
    head = _wrap(title, _LEGEND_SIZE, room - 4, bold=True) if title else None
    props = dict(title=head[0] if head and len(head) == 1 else head, orient="bottom",
                 direction="horizontal", titleLimit=int(room), titleOrient="top",
                 columns=_columns(list(labels), room), labelLimit=int(room),
                 labelFontSize=_LEGEND_SIZE, titleFontSize=_LEGEND_SIZE,
                 columnPadding=_LEGEND_GAP, rowPadding=4, symbolOpacity=0.9,
                 offset=_LEGEND_OFFSET)
    props.update(extra)
    return alt.Legend(**props)


def _axis(title: str, *, flush: bool = True):
    """A quantitative axis; ``flush`` for a horizontal one."""
    alt = _alt()
    # "~r": decimal notation, trailing zeros off (no "1.4e+2", no thousands commas);
    # Vega sets the precision from the tick step.  On a horizontal axis, labels near an
    # end sit flush inside it and any still past it are hidden (a label centred on a
    # tick near the end could reach past the chart).  Labels that would overlap are
    # left out.
    props = dict(title=title, format="~r", labelOverlap=True)
    if flush:
        props.update(labelFlush=_FLUSH_PX, labelBound=True)
    return alt.Axis(**props)


def _q(field: str, title: str, *, log: bool = False, channel: str = "x", pad: bool = False):
    """A quantitative position channel; ``pad`` keeps the outermost values ``_PAD_PX``
    inside the frame (a limit line is never drawn on the frame itself)."""
    alt = _alt()
    props = {}
    if log:
        props["type"] = "log"
    if pad:
        props.update(padding=_PAD_PX, nice=False)
        if not log:
            props["zero"] = False
    scale = alt.Scale(**props) if props else alt.Undefined
    cls = alt.X if channel == "x" else alt.Y
    return cls(f"{field}:Q", scale=scale, axis=_axis(title, flush=channel == "x"))


def _titled(chart, title: str | None, subtitle: str | None, width: int, height: int):
    """Size, title and font of a chart: ``width`` is the whole chart's (axes and legend
    included), ``height`` the plot's; a title or subtitle wider than the chart wraps."""
    alt = _alt()
    props = {"width": int(width), "height": int(height),
             "autosize": alt.AutoSizeParams(type="fit-x", contains="padding")}
    if title:
        room = float(width) - 10.0
        params = {"text": _wrap(title, 13, room, bold=True), "anchor": "start"}
        if subtitle:
            params["subtitle"] = _wrap(subtitle, 11, room)
            params["subtitleFontSize"] = 11
        props["title"] = alt.TitleParams(fontSize=13, **params)
    # Legends below the plot stack one under the other (Vega's default puts them side by
    # side, past the chart's width); the layout object goes to Vega as an expression.
    stack = alt.ExprRef(expr="{bottom: {direction: 'vertical', anchor: 'start'}}")
    # as .configure(font=FONT).configure_legend(layout=stack), set on the one copy
    # properties() made: each altair call copies every layer of the chart once more
    out = chart.properties(**props)
    out.config = alt.Config(font=FONT)
    out.config["legend"] = alt.LegendConfig(layout=stack)
    return out


def _unique(labels) -> list[str]:
    seen: dict[str, None] = {}
    for s in labels:
        seen.setdefault(str(s), None)
    return list(seen)


def _keep(*arrays: np.ndarray, positive: Sequence[bool]) -> np.ndarray:
    """Mask of the points that can be drawn: finite, and positive on log axes."""
    ok = np.ones(arrays[0].shape, dtype=bool)
    for a, pos in zip(arrays, positive, strict=True):
        ok &= np.isfinite(a)
        if pos:
            ok &= a > 0.0
    return ok


# --------------------------------------------------------------------------- charts
def pullup_window(cb, rp_min, rp_max, *, chosen_cb, chosen_rp,
                  title: str | None = "Pull-up window", subtitle: str | None = None,
                  rp_min_label: str = "Rp min (VOL at IOL)",
                  rp_max_label: str = "Rp max (rise time)",
                  region_label: str = "allowed Rp",
                  chosen_label: str | None = None,
                  width: int = _WIDTH, height: int = _HEIGHT) -> alt.LayerChart:
    """The pull-up window: Rp against Cb on log axes, the allowed band shaded.

    Parameters
    ----------
    cb : array_like
        Bus capacitances at which the bounds were computed. [F]
    rp_min : float or array_like
        Lowest pull-up at each ``cb`` (from the sink current); a float for a flat
        line. [Ω]
    rp_max : float or array_like
        Highest pull-up at each ``cb`` (from the rise time). [Ω]
    chosen_cb : float
        The bus capacitance of the design. [F]
    chosen_rp : float
        The pull-up chosen for it. [Ω]
    title, subtitle : str, optional
        Chart title and a line below it (each wrapped to the width). [1]
    rp_min_label, rp_max_label, region_label, chosen_label : str, optional
        Legend entries; ``chosen_label`` defaults to the point's values. [1]
    width : int, optional
        Width of the whole chart, axes and legend included. [px]
    height : int, optional
        Height of the plot. [px]

    Returns
    -------
    altair.LayerChart
        Band (area), the two bounds (lines) and the chosen point; both axes log.

    Notes
    -----
    Where ``rp_max < rp_min`` there is no window; the band is drawn with no height
    there (its top is ``max(rp_min, rp_max)``), the two lines still show the gap.
    """
    alt = _alt()
    c = _array(cb, "cb")
    try:
        lo = np.broadcast_to(_array(rp_min, "rp_min", ndim=(0, 1)), c.shape)
        hi = np.broadcast_to(_array(rp_max, "rp_max", ndim=(0, 1)), c.shape)
    except ValueError:
        raise InputError(M.RP_BOUNDS_SHAPE,
                         field="rp_max", value=f"{np.shape(rp_min)}, {np.shape(rp_max)}",
                         expected=f"shape {c.shape}") from None
    x0 = _scalar(chosen_cb, "chosen_cb", positive=True)
    y0 = _scalar(chosen_rp, "chosen_rp", positive=True)
    ok_lo = _keep(c, lo, positive=(True, True))
    ok_hi = _keep(c, hi, positive=(True, True))
    if not ok_lo.any() and not ok_hi.any():
        raise InputError(M.WINDOW_NOT_DRAWABLE, field="cb",
                         expected="positive finite cb with positive rp_min/rp_max")

    fx, ux = display_scale(np.append(c[ok_lo | ok_hi], x0), "F", log=True)
    fy, uy = display_scale(np.concatenate([lo[ok_lo], hi[ok_hi], [y0]]), "Ω", log=True)
    chosen_label = chosen_label or f"chosen: {format_si(y0, 'Ω')} at {format_si(x0, 'F')}"
    domain = [region_label, rp_min_label, rp_max_label, chosen_label]
    colour = alt.Color("series:N",
                       scale=_scale_pair(domain, [REGION, BOUND_LOW, BOUND_HIGH, OPERATING]),
                       legend=_legend(None, domain, _plot_room(width)))
    x_title = _title("Bus capacitance Cb", ux)
    y_title = _title("Pull-up resistance Rp", uy)

    ok_band = ok_lo & ok_hi
    top = np.maximum(lo, hi)  # display clip: no band where the window is closed
    band = [{"cb": _num(a * fx), "lo": _num(b * fy), "hi": _num(t * fy), "series": region_label}
            for a, b, t in zip(c[ok_band], lo[ok_band], top[ok_band], strict=True)]
    lines = ([{"cb": _num(a * fx), "rp": _num(b * fy), "series": rp_min_label}
              for a, b in zip(c[ok_lo], lo[ok_lo], strict=True)]
             + [{"cb": _num(a * fx), "rp": _num(b * fy), "series": rp_max_label}
                for a, b in zip(c[ok_hi], hi[ok_hi], strict=True)])
    point = [{"cb": _num(x0 * fx), "rp": _num(y0 * fy), "series": chosen_label}]

    # both axes padded: Rp(min), flat, would otherwise lie on the frame
    area = alt.Chart(_data(band)).mark_area(opacity=_REGION_OPACITY).encode(
        x=_q("cb", x_title, log=True, pad=True),
        y=_q("lo", y_title, log=True, channel="y", pad=True), y2=alt.Y2("hi:Q"), color=colour)
    curves = alt.Chart(_data(lines)).mark_line(strokeWidth=2).encode(
        x=_q("cb", x_title, log=True, pad=True),
        y=_q("rp", y_title, log=True, channel="y", pad=True),
        color=colour, detail=alt.Detail("series:N"))
    marker = alt.Chart(_data(point)).mark_point(
        shape="diamond", filled=True, size=140, opacity=1).encode(
        x=_q("cb", x_title, log=True, pad=True),
        y=_q("rp", y_title, log=True, channel="y", pad=True),
        color=colour,
        tooltip=[alt.Tooltip("cb:Q", title=x_title), alt.Tooltip("rp:Q", title=y_title)])
    return _titled(alt.layer(area, curves, marker), title, subtitle, width, height)


def edge_vs_load(loads, edge_times, *, points=None, operating=None, series=None,
                 log_x: bool = False, log_y: bool = False, edge_label: str = "Edge time",
                 curves_title: str | None = "Curve",
                 title: str | None = "Edge time against load", subtitle: str | None = None,
                 width: int = _WIDTH, height: int = _HEIGHT) -> alt.LayerChart:
    """Edge time against load capacitance, one curve per driver or edge.

    Parameters
    ----------
    loads : array_like
        Load capacitances of the curves (1-D, shared by every curve). [F]
    edge_times : array_like
        Edge times, 1-D (one curve) or 2-D of shape ``(curves, len(loads))``. [s]
    points : tuple, optional
        Datasheet points ``(loads, times, labels)``: arrays of loads [F] and times [s]
        and a label per point (or one label for all). A label equal to a curve's name
        takes that curve's colour. [F, s, 1]
    operating : tuple, optional
        The operating point ``(load, time)`` or ``(load, time, label)``. [F, s, 1]
    series : str or sequence of str, optional
        The name of each curve (legend); default ``"model"`` for one curve, else
        ``"curve 1"``, ``"curve 2"``... [1]
    log_x, log_y : bool, optional
        Logarithmic load / time axis. [1]
    edge_label : str, optional
        What the time axis shows, e.g. ``"Rise time 10-90 %"``. [1]
    curves_title : str, optional
        Title of the curves' legend, e.g. what the curves model. [1]
    title, subtitle : str, optional
        Chart title and lines below it (wrapped to the width). [1]
    width : int, optional
        Width of the whole chart, axes and legends included. [px]
    height : int, optional
        Height of the plot. [px]

    Returns
    -------
    altair.LayerChart
        Curves (lines), then datasheet points and the operating point (point marks
        with a shape legend) with its time and load written beside it.
    """
    alt = _alt()
    x = _array(loads, "loads")
    y = _array(edge_times, "edge_times", ndim=(1, 2))
    y2 = y[np.newaxis, :] if y.ndim == 1 else y
    if y2.shape[1] != x.size:
        raise InputError(M.EDGE_TIMES_NOT_LOADS, field="edge_times",
                         value=f"shape {y.shape}", expected=f"{x.size} values per curve")
    if series is None:
        names = ["model"] if y2.shape[0] == 1 else [f"curve {i + 1}" for i in
                                                     range(y2.shape[0])]
    else:
        names = [series] if isinstance(series, str) else [str(s) for s in series]
    if len(names) != y2.shape[0] or len(set(names)) != len(names):
        raise InputError(M.SERIES_NAMES, field="series",
                         value=names, expected=f"{y2.shape[0]} distinct names")

    px = py = np.zeros(0)
    plabels: list[str] = []
    if points is not None:
        if len(points) != 3:
            raise InputError(M.POINTS_FORM, field="points",
                             value=_short(points), expected="a 3-tuple")
        px = _array(points[0], "points.loads", ndim=(0, 1)).ravel()
        py = _array(points[1], "points.times", ndim=(0, 1)).ravel()
        lab = points[2]
        plabels = [lab] * px.size if isinstance(lab, str) else [str(s) for s in lab]
        if not (px.size == py.size == len(plabels)):
            raise InputError(M.POINTS_LENGTHS,
                             field="points",
                             value=f"{px.size}, {py.size}, {len(plabels)}",
                             expected="equal lengths")
    op = None
    if operating is not None:
        if len(operating) not in (2, 3):
            raise InputError(M.OPERATING_FORM,
                             field="operating", value=_short(operating),
                             expected="a 2- or 3-tuple")
        op = (_scalar(operating[0], "operating.load", positive=log_x),
              _scalar(operating[1], "operating.time", positive=log_y),
              str(operating[2]) if len(operating) == 3 else "operating point")

    xs, ys = np.broadcast_to(x, y2.shape), y2
    ok = _keep(xs, ys, positive=(log_x, log_y))
    okp = _keep(px, py, positive=(log_x, log_y))
    if not ok.any():
        raise InputError(M.CURVES_NOT_DRAWABLE, field="edge_times",
                         expected="finite values (positive on a log axis)")
    all_x = np.concatenate([xs[ok], px[okp], [op[0]] if op else []])
    all_y = np.concatenate([ys[ok], py[okp], [op[1]] if op else []])
    fx, ux = display_scale(all_x, "F", log=log_x)
    fy, uy = display_scale(all_y, "s", log=log_y)
    x_title = _title("Load capacitance", ux)
    y_title = _title(edge_label, uy)

    domain = _unique([*names, *(plabels[i] for i in np.flatnonzero(okp))])
    kinds = (["datasheet"] if okp.any() else []) + ([op[2]] if op else [])
    shapes = (["diamond"] if okp.any() else []) + (["cross"] if op else [])
    rows = [{"load": _num(a * fx), "t": _num(b * fy), "series": names[k]}
            for k in range(y2.shape[0]) for a, b in zip(xs[k][ok[k]], ys[k][ok[k]], strict=True)]
    pts = ([{"load": _num(a * fx), "t": _num(b * fy), "series": s, "kind": "datasheet"}
            for a, b, s, keep in zip(px, py, plabels, okp, strict=True) if keep]
           if okp.any() else None)
    op_rows = ([{"load": _num(op[0] * fx), "t": _num(op[1] * fy), "kind": op[2],
                 "note": f"{format_si(op[1], 's')} at {format_si(op[0], 'F')}"}]
               if op else None)
    known = _reuse(("edge_vs_load", x_title, y_title, bool(log_x), bool(log_y),
                    tuple(domain), tuple(kinds), tuple(shapes), curves_title, title,
                    subtitle, width, height),
                   [rows] + ([pts] if pts is not None else [])
                   + ([op_rows] if op_rows is not None else []))
    if known is not None:
        return known

    colour = alt.Color("series:N", scale=_scale_pair(domain, series_colours(domain,
                                                                             (OPERATING,))),
                       legend=_legend(curves_title, domain, _plot_room(width)))
    shape = alt.Shape("kind:N", scale=alt.Scale(domain=kinds, range=shapes),
                      legend=_legend("Points", kinds, _plot_room(width)))
    layers = [alt.Chart(_data(rows)).mark_line(strokeWidth=2).encode(
        x=_q("load", x_title, log=log_x), y=_q("t", y_title, log=log_y, channel="y"),
        color=colour, detail=alt.Detail("series:N"))]
    tips = [alt.Tooltip("load:Q", title=x_title), alt.Tooltip("t:Q", title=y_title)]
    if pts is not None:
        layers.append(alt.Chart(_data(pts)).mark_point(
            filled=True, size=90, opacity=1).encode(
            x=_q("load", x_title, log=log_x), y=_q("t", y_title, log=log_y, channel="y"),
            color=colour, shape=shape, tooltip=[*tips, alt.Tooltip("series:N", title="part")]))
    if op_rows is not None:
        layers.append(alt.Chart(_data(op_rows)).mark_point(
            filled=True, size=160, opacity=1, color=OPERATING).encode(
            x=_q("load", x_title, log=log_x), y=_q("t", y_title, log=log_y, channel="y"),
            shape=shape, tooltip=tips))
        # its values written beside it: the cross is read on its own, not off a curve
        layers.append(alt.Chart(_data(op_rows)).mark_text(
            align="left", baseline="middle", dx=9, fontSize=11, fontWeight="bold",
            color=OPERATING).encode(
            x=_q("load", x_title, log=log_x), y=_q("t", y_title, log=log_y, channel="y"),
            text=alt.Text("note:N")))
    return _titled(alt.layer(*layers), title, subtitle, width, height)


def waveforms(t, traces: Mapping[str, object], *, v_il, v_ih, vdd=None,
              title: str | None = "Receiver waveforms", subtitle: str | None = None,
              band_label: str = "between VIL and VIH", threshold_label: str = "VIL / VIH",
              width: int = _WIDTH, height: int = _HEIGHT) -> alt.LayerChart:
    """Receiver voltage against time, with the band between VIL and VIH shaded.

    Parameters
    ----------
    t : array_like
        Time of the samples (1-D, shared by every trace). [s]
    traces : dict of str to array_like
        Voltage at the receiver for each case, e.g. ``{"no series R": v0, "33 Ω": v1}``,
        each as long as ``t``. [V]
    v_il : float
        Receiver's highest input low level. [V]
    v_ih : float
        Receiver's lowest input high level. [V]
    vdd : float, optional
        Supply, drawn as a dotted line when given. [V]
    title, subtitle : str, optional
        Chart title and a line below it (each wrapped to the width). [1]
    band_label, threshold_label : str, optional
        Legend entries of the band and of the threshold lines. [1]
    width : int, optional
        Width of the whole chart, axes and legend included. [px]
    height : int, optional
        Height of the plot. [px]

    Returns
    -------
    altair.LayerChart
        Band (rect between VIL and VIH), threshold lines with their values written
        beside them, the optional VDD line, then one line per trace.
    """
    alt = _alt()
    tt = _array(t, "t")
    if not isinstance(traces, Mapping) or not traces:
        raise InputError(M.TRACES_FORM,
                         field="traces", value=_short(traces),
                         expected="{label: array of V}")
    vs = {}
    for label, v in traces.items():
        a = _array(v, f"traces[{label!r}]")
        if a.shape != tt.shape:
            raise InputError(M.LENGTHS_DIFFER.format(a="trace", b="time"),
                             field=f"traces[{label!r}]",
                             value=a.size, expected=f"{tt.size} samples")
        vs[str(label)] = a
    lo = _scalar(v_il, "v_il")
    hi = _scalar(v_ih, "v_ih")
    if lo > hi:
        raise InputError(M.VIL_ABOVE_VIH, field="v_il", value=lo,
                         expected=f"at most v_ih = {hi}")
    top = None if vdd is None else _scalar(vdd, "vdd")

    every_v = np.concatenate([*vs.values(), [lo, hi] + ([top] if top is not None else [])])
    fx, ux = display_scale(tt, "s")
    fy, uy = display_scale(every_v, "V")
    x_title = _title("Time", ux)
    y_title = _title("Voltage at the receiver", uy)

    names = list(vs)
    vdd_label = None if top is None else f"VDD {format_si(top, 'V')}"
    fixed = [band_label, threshold_label] + ([vdd_label] if vdd_label else [])
    fixed_colours = [UNDEFINED, LIMIT] + ([INK] if vdd_label else [])
    if set(names) & set(fixed):
        raise InputError(M.LABEL_IN_LEGEND.format(what="trace label"), field="traces",
                         value=sorted(set(names) & set(fixed)), expected="other labels")
    band_rows = [{"lo": _num(lo * fy), "hi": _num(hi * fy), "series": band_label}]
    levels = [{"v": _num(lo * fy), "series": threshold_label,
               "text": f"VIL {lo * fy:.3g} {uy}"},
              {"v": _num(hi * fy), "series": threshold_label,
               "text": f"VIH {hi * fy:.3g} {uy}"}]
    vdd_rows = [{"v": _num(top * fy), "series": vdd_label}] if vdd_label else None
    rows = []
    for name in names:
        a = vs[name]
        ok = _keep(tt, a, positive=(False, False))
        rows += [{"t": _num(p * fx), "v": _num(q * fy), "series": name}
                 for p, q in zip(tt[ok], a[ok], strict=True)]
    known = _reuse(("waveforms", x_title, y_title, tuple(names), band_label,
                    threshold_label, vdd_label, title, subtitle, width, height),
                   [band_rows, levels, levels] + ([vdd_rows] if vdd_label else []) + [rows])
    if known is not None:
        return known

    colour = alt.Color("series:N",
                       scale=_scale_pair(fixed + names,
                                         fixed_colours + series_colours(names, fixed_colours)),
                       legend=_legend(None, fixed + names, _plot_room(width)))
    # the voltage axis padded: VDD or a threshold is never drawn on the frame
    band = alt.Chart(_data(band_rows)).mark_rect(
        opacity=_BAND_OPACITY).encode(y=_q("lo", y_title, channel="y", pad=True), y2=alt.Y2("hi:Q"),
                                      color=colour)
    rules = alt.Chart(_data(levels)).mark_rule(strokeDash=[6, 3]).encode(
        y=_q("v", y_title, channel="y", pad=True), color=colour)
    words = alt.Chart(_data(levels)).mark_text(
        align="right", baseline="bottom", dx=-4, dy=-2, fontSize=10, fontWeight="bold",
        color=LIMIT).encode(x=alt.value("width"), y=_q("v", y_title, channel="y", pad=True),
                            text=alt.Text("text:N"))
    layers = [band, rules, words]
    if vdd_label:
        layers.append(alt.Chart(_data(vdd_rows))
                      .mark_rule(strokeDash=[2, 3]).encode(
                          y=_q("v", y_title, channel="y", pad=True), color=colour))
    layers.append(alt.Chart(_data(rows)).mark_line(strokeWidth=1.8).encode(
        x=_q("t", x_title), y=_q("v", y_title, channel="y", pad=True), color=colour,
        detail=alt.Detail("series:N")))
    return _titled(alt.layer(*layers), title, subtitle, width, height)


def timing_budget(rows, *, available=None, margins: Mapping[str, float] | None = None,
                  status: Mapping[str, str] | None = None,
                  available_label: str = "available (half period)",
                  title: str | None = "Timing budget", subtitle: str | None = None,
                  width: int = _WIDTH, height: int | None = None) -> alt.LayerChart:
    """The timing budget as stacked bars, one bar per path.

    Parameters
    ----------
    rows : iterable of (str, str, float)
        ``(path, component, duration)``: each path's bar stacks its components in the
        order given; a negative duration (a credit) stacks left of zero. [1, 1, s]
    available : float or dict of str to float, optional
        Time available to each path (e.g. half the clock period), one float for every
        path or a value per path; drawn as a tick on the bar. [s]
    margins : dict of str to float, optional
        The margin the engine computed for each path, written beside its bar. [s]
    status : dict of str to str, optional
        ``"pass"``, ``"warn"`` or ``"fail"`` per path (the colour of the margin);
        default from the sign of the margin. [1]
    available_label : str, optional
        Legend entry of the tick. [1]
    title, subtitle : str, optional
        Chart title and a line below it (each wrapped to the width). [1]
    width : int, optional
        Width of the whole chart, axes, margins and legend included. [px]
    height : int, optional
        Height of the plot; 44 px per path by default. [px]

    Returns
    -------
    altair.LayerChart
        Stacked bars (x: time, y: path), the available-time ticks, each path's name
        above its bar at the left and its margin at the right.
    """
    alt = _alt()
    items = []
    for i, row in enumerate(rows):
        try:
            path, comp, dur = row
        except (TypeError, ValueError):
            raise InputError(M.BUDGET_ROW_FORM,
                             field=f"rows[{i}]", value=_short(row),
                             expected="a 3-tuple") from None
        items.append((str(path), str(comp), _scalar(dur, f"rows[{i}].duration")))
    if not items:
        raise InputError(M.NO_BUDGET_ROWS, field="rows", expected="at least one row")
    paths = _unique(p for p, _, _ in items)
    comps = _unique(c for _, c, _ in items)

    if available is None:
        avail: dict[str, float] = {}
    elif isinstance(available, Mapping):
        avail = {str(k): _scalar(v, f"available[{k!r}]") for k, v in available.items()}
    else:
        value = _scalar(available, "available")
        avail = dict.fromkeys(paths, value)
    marg = {str(k): _scalar(v, f"margins[{k!r}]") for k, v in (margins or {}).items()}
    unknown = sorted((set(avail) | set(marg) | set(status or {})) - set(paths))
    if unknown:
        raise InputError(M.UNKNOWN_PATH, field="available/margins/status", value=unknown,
                         expected=f"one of {paths}")
    stat = {p: (status or {}).get(p, "pass" if m >= 0.0 else "fail") for p, m in marg.items()}
    bad = sorted(s for s in stat.values() if s not in STATUS_COLOURS)
    if bad:
        raise InputError(M.UNKNOWN_STATUS, field="status", value=bad,
                         expected="'pass', 'warn' or 'fail'")

    # Display prefix from the longest stack or available time (display only).
    ends = [sum(d for p, _, d in items if p == q and d > 0) for q in paths]
    fx, ux = display_scale(np.array([*ends, *avail.values(), *map(abs, marg.values())]), "s")
    x_title = _title("Time", ux)
    statuses = [s for s in ("pass", "warn", "fail") if s in stat.values()]
    fixed = ([available_label] if avail else []) + statuses
    fixed_colours = ([LIMIT] if avail else []) + [STATUS_COLOURS[s] for s in statuses]
    if set(comps) & set(fixed):
        raise InputError(M.LABEL_IN_LEGEND.format(what="component name"),
                         field="rows", value=sorted(set(comps) & set(fixed)),
                         expected="other names")
    # Each path's name is written above its bar, at the left, and its margin at the
    # right: no axis labels to measure, and the plot gets the chart's whole width.
    n_rows = len(paths)
    plot_h = height if height is not None else max(80, _ROW * n_rows)
    bars = [{"path": p, "series": c, "t": _num(d * fx), "order": i}
            for i, (p, c, d) in enumerate(items)]
    ticks = ([{"path": p, "t": _num(v * fx), "series": available_label}
              for p, v in avail.items()] if avail else None)
    names = [{"path": p} for p in paths]
    notes = ([{"path": p, "text": f"margin {'+' if m >= 0 else ''}{format_si(m, 's')}",
               "series": stat[p]} for p, m in marg.items()] if marg else None)
    known = _reuse(("timing_budget", x_title, tuple(paths), tuple(comps), tuple(fixed),
                    available_label, title, subtitle, width, plot_h),
                   [bars] + ([ticks] if ticks else []) + [names] + ([notes] if notes else []))
    if known is not None:
        return known

    band = plot_h / n_rows
    colour = alt.Color("series:N",
                       scale=_scale_pair(comps + fixed, series_colours(comps, fixed_colours)
                                         + fixed_colours),
                       legend=_legend(None, comps + fixed, _plot_room(width, left=12)))
    y = alt.Y("path:N", sort=paths, axis=None,
              scale=alt.Scale(paddingInner=0, paddingOuter=0))
    x_pad = alt.Scale(padding=_PAD_PX, nice=False)  # an available tick clear of the frame
    bar_h = 0.4 * band  # the bar sits low in its row, the words above it
    drop = 0.1 * band
    above = -(0.5 * bar_h - drop + 3)

    layers = [alt.Chart(_data(bars)).mark_bar(
        height=bar_h, yOffset=drop, stroke="white", strokeWidth=1).encode(
        x=alt.X("t:Q", stack="zero", axis=_axis(x_title), scale=x_pad), y=y, color=colour,
        order=alt.Order("order:Q"),
        tooltip=[alt.Tooltip("path:N"), alt.Tooltip("series:N", title="component"),
                 alt.Tooltip("t:Q", title=x_title)])]
    if ticks:
        layers.append(alt.Chart(_data(ticks)).mark_tick(
            thickness=3, bandSize=0, size=bar_h + 4, yOffset=drop, opacity=1).encode(
            x=alt.X("t:Q", axis=_axis(x_title), scale=x_pad), y=y, color=colour))
    layers.append(alt.Chart(_data(names)).mark_text(
        align="left", baseline="bottom", dx=2, dy=above, fontSize=11, color=INK).encode(
        x=alt.value(0), y=y, text=alt.Text("path:N")))
    if notes:
        layers.append(alt.Chart(_data(notes)).mark_text(
            align="right", baseline="bottom", dx=-2, dy=above, fontSize=11,
            fontWeight="bold").encode(
            x=alt.value("width"), y=y, text=alt.Text("text:N"), color=colour))
    return _titled(alt.layer(*layers), title, subtitle, width, plot_h)


def histogram(samples, *, limit=None, unit: str, label: str, limit_kind: str = "max",
              bins: int = 40, title: str | None = None, subtitle: str | None = None,
              count_label: str = "Samples per bin (count)",
              width: int = _WIDTH, height: int = _HEIGHT, binned=None) -> alt.LayerChart:
    """Histogram of Monte Carlo samples of one figure, with its limit.

    Parameters
    ----------
    samples : array_like
        The figure on every sampled board (non-finite samples are left out). [unit]
    limit : float, optional
        The check's limit, drawn as a line; the bins are aligned on it so that each bin
        lies wholly on one side and is coloured pass or fail. [unit]
    unit : str
        SI unit of the samples and the limit, e.g. ``"s"``. [1]
    label : str
        What the samples are, e.g. ``"Rise time"``. [1]
    limit_kind : str, optional
        ``"max"`` (default: a sample passes when ``<= limit``) or ``"min"``
        (passes when ``>= limit``), as the check applies it. [1]
    bins : int, optional
        About how many bins span the samples. [1]
    title, subtitle : str, optional
        Chart title (default from ``label``) and a line below it, e.g. the pass
        fraction the engine reported. [1]
    count_label : str, optional
        Title of the count axis. [1]
    width : int, optional
        Width of the whole chart, axes and legend included. [px]
    height : int, optional
        Height of the plot. [px]
    binned : (float, array_like, array_like), optional
        Samples already counted, instead of ``samples`` (which may then be None):
        ``(w, k, count)``, bin ``k`` holding the samples in ``[limit + k·w,
        limit + (k + 1)·w)`` (a run too long to keep every sample, e.g.
        :class:`pinlib.studies.whatif.MarginHistogram`); needs ``limit`` and
        ``limit_kind="min"``.  Adjacent bins are merged to about ``bins`` bars, still
        aligned on the limit. [unit], [1], [1]

    Returns
    -------
    altair.LayerChart
        Bars (``x`` to ``x2``, ``y`` the count), then the limit rule.

    Notes
    -----
    Bins of width ``w = span / bins`` have edges at ``limit + k w``. For a maximum limit
    a bin is ``(a, b]`` and passes when ``b <= limit``; for a minimum it is ``[a, b)``
    and passes when ``a >= limit`` — the same comparison as the check, so the pass bars
    hold exactly the samples that pass.
    """
    if binned is not None:
        return _histogram_binned(binned, limit=limit, unit=unit, label=label,
                                 limit_kind=limit_kind, bins=bins, title=title,
                                 subtitle=subtitle, count_label=count_label, width=width,
                                 height=height)
    s = _array(samples, "samples", ndim=(1, 2)).ravel()
    s = s[np.isfinite(s)]
    if s.size == 0:
        raise InputError(M.NO_FINITE_SAMPLE, field="samples", expected="finite values")
    if limit_kind not in ("max", "min"):
        raise InputError(M.UNKNOWN_LIMIT_KIND, field="limit_kind", value=limit_kind,
                         expected="'max' or 'min'")
    n = int(bins)
    if n < 1:
        raise InputError(M.TOO_FEW_BINS, field="bins", value=bins, expected="at least 1")
    lim = None if limit is None else _scalar(limit, "limit")
    lo, hi = float(s.min()), float(s.max())
    if lim is not None:
        lo, hi = min(lo, lim), max(hi, lim)
    span = hi - lo
    w = span / n if span > 0 else max(abs(lo) * 1e-3, 1e-300)
    if lim is None:  # bins [a, b), the last one closed
        start = lo if span > 0 else lo - w / 2
        k = np.arange((n if span > 0 else 1) + 1)
        edges = start + w * k
        idx = np.clip(np.searchsorted(edges, s, side="right") - 1, 0, edges.size - 2)
        status = np.full(edges.size - 1, "samples", dtype=object)
    else:
        if limit_kind == "max":  # bins (a, b]
            k0 = math.ceil((lo - lim) / w) - 1
            k1 = math.ceil((hi - lim) / w)
            side = "left"
        else:  # bins [a, b)
            k0 = math.floor((lo - lim) / w)
            k1 = math.floor((hi - lim) / w) + 1
            side = "right"
        k = np.arange(k0, max(k1, k0 + 1) + 1)
        edges = lim + w * k  # k = 0 gives the limit itself, exactly
        idx = np.clip(np.searchsorted(edges, s, side=side) - 1, 0, edges.size - 2)
        k_lo = k[:-1]  # bin i spans edges k_lo[i] .. k_lo[i] + 1
        ok = (k_lo + 1 <= 0) if limit_kind == "max" else (k_lo >= 0)
        status = np.where(ok, "pass", "fail").astype(object)
    counts = np.bincount(idx, minlength=edges.size - 1)
    return _histogram_bars(edges, counts, status, lim, unit=unit, label=label,
                           limit_kind=limit_kind, title=title, subtitle=subtitle,
                           count_label=count_label, width=width, height=height,
                           scale_with=s[[0]])


def _histogram_binned(binned, *, limit, unit, label, limit_kind, bins, title, subtitle,
                      count_label, width, height):
    """:func:`histogram` of counts already binned on the limit."""
    if limit is None or limit_kind != "min":
        raise InputError(M.UNKNOWN_LIMIT_KIND, field="limit_kind", value=limit_kind,
                         expected="'min' and a limit, for counted bins")
    lim = _scalar(limit, "limit")
    w = _scalar(binned[0], "binned width")
    k = np.asarray(binned[1], dtype=np.int64).ravel()
    got = np.asarray(binned[2], dtype=np.int64).ravel()
    if not (w > 0 and k.size and k.size == got.size and got.sum() > 0):
        raise InputError(M.NO_FINITE_SAMPLE, field="binned", expected="counted samples")
    n = int(bins)
    if n < 1:
        raise InputError(M.TOO_FEW_BINS, field="bins", value=bins, expected="at least 1")
    # the limit's own bin boundary (k = 0) stays in view, as with samples
    lo, hi = min(int(k.min()), 0), max(int(k.max()) + 1, 0)
    g = max(1, math.ceil((hi - lo) / n))
    kk = np.floor_divide(k, g)
    k_lo = np.arange(min(int(kk.min()), lo // g), max(int(kk.max()) + 1, -(-hi // g)))
    counts = np.zeros(k_lo.size, dtype=np.int64)
    np.add.at(counts, kk - k_lo[0], got)
    edges = lim + g * w * np.append(k_lo, k_lo[-1] + 1)
    status = np.where(k_lo >= 0, "pass", "fail").astype(object)
    return _histogram_bars(edges, counts, status, lim, unit=unit, label=label,
                           limit_kind=limit_kind, title=title, subtitle=subtitle,
                           count_label=count_label, width=width, height=height,
                           scale_with=edges[:1])


def _histogram_bars(edges, counts, status, lim, *, unit, label, limit_kind, title, subtitle,
                    count_label, width, height, scale_with):
    alt = _alt()
    fx, ux = display_scale(np.append(edges, scale_with), unit)
    x_title = _title(label, ux)
    if lim is None:
        domain, colours = ["samples"], [REGION]
    else:
        lim_label = f"limit ({limit_kind}) {format_si(lim, unit) if unit else f'{lim:.4g}'}"
        domain, colours = ["pass", "fail", lim_label], [PASS, FAIL, LIMIT]
    colour = alt.Color("series:N", scale=_scale_pair(domain, colours),
                       legend=_legend(None, domain, _plot_room(width)))
    x_scale = alt.Scale(zero=False, padding=_PAD_PX, nice=False)  # the limit off the frame
    bars = [{"a": _num(edges[i] * fx), "b": _num(edges[i + 1] * fx), "n": int(counts[i]),
             "z": 0, "series": str(status[i])} for i in range(counts.size)]
    layers = [alt.Chart(_data(bars)).mark_rect(
        opacity=0.85, stroke="white", strokeWidth=0.5).encode(
        x=alt.X("a:Q", axis=_axis(x_title), scale=x_scale), x2=alt.X2("b:Q"),
        y=alt.Y("n:Q", axis=alt.Axis(title=count_label, format="~s", labelOverlap=True)),
        y2=alt.Y2("z:Q"),
        color=colour,
        tooltip=[alt.Tooltip("a:Q", title="from"), alt.Tooltip("b:Q", title="to"),
                 alt.Tooltip("n:Q", title="samples")])]
    if lim is not None:
        layers.append(alt.Chart(_data([{"x": _num(lim * fx), "series": lim_label}]))
                      .mark_rule(strokeWidth=2, strokeDash=[6, 3]).encode(
                          x=alt.X("x:Q", axis=_axis(x_title), scale=x_scale),
                          color=colour))
    return _titled(alt.layer(*layers), title if title is not None else f"Monte Carlo: {label}",
                   subtitle, width, height)


# --------------------------------------------------------------------------- output
def spec(build: Callable[..., object], *args, **kwargs) -> dict:
    """The Vega-Lite specification of ``build(*args, **kwargs)`` as a plain dict, fast.

    The same dict as ``build(...).to_dict(validate=False)``, built without handing the
    data rows to altair (which copies and walks each of them) and without altair's
    schema checks; for redraws, where :func:`to_svg` takes the dict as it is.

    Parameters
    ----------
    build : callable
        A chart function of this module, e.g. :func:`waveforms`. [1]
    *args, **kwargs
        Its arguments. [1]

    Returns
    -------
    dict
        The specification, data values inline in each layer.
    """
    schemapi = _alt().utils.schemapi  # altair imported the light way (see _alt)

    held: list = []
    pending: list = []
    token = _DEFERRED.set(held)
    token_layout = _PENDING.set(pending)
    try:
        with schemapi.debug_mode(False):
            chart = build(*args, **kwargs)
            skeleton = chart.to_dict(validate=False)
    finally:
        _DEFERRED.reset(token)
        _PENDING.reset(token_layout)
    if len(pending) == 1 and not isinstance(chart, _Known):
        key, count = pending[0]
        if len(held) == len(set(key[1])) and count == len(key[1]):
            if len(_LAYOUTS) >= _LAYOUTS_MAX:
                _LAYOUTS.pop(next(iter(_LAYOUTS)))
            _LAYOUTS[key] = skeleton
    return _fill(skeleton, held)


def _vl_version() -> str | None:
    """The Vega-Lite version altair writes, as vl_convert names it (``"6.4"``)."""
    alt = _alt()
    import vl_convert

    wanted = ".".join(alt.SCHEMA_VERSION.lstrip("v").split(".")[:2])
    known = getattr(vl_convert, "get_vegalite_versions", lambda: [])()
    return wanted if wanted in known else None


# Compiled Vega of each chart layout (its spec with the data rows taken out), so that a
# redraw with new rows only renders: the Vega-Lite compile reads the spec, not the rows.
_COMPILED: dict[str, tuple[str, list[str]] | None] = {}
_COMPILED_MAX = 32
_SLOT = "pinlib-slot"


def _slots(node, rows: list):
    """``node`` with each inline ``values`` list replaced by a one-row marker of its slot.

    Equal lists share a slot, as they share a data source once compiled.
    """
    if isinstance(node, dict):
        out = {}
        for k, v in node.items():
            if k == "values" and isinstance(v, list):
                out[k] = [{_SLOT: _slot(v, rows)}]
            elif k == "datasets" and isinstance(v, dict):
                out[k] = {name: _slots({"values": d}, rows)["values"]
                          if isinstance(d, list) else _slots(d, rows)
                          for name, d in v.items()}
            else:
                out[k] = _slots(v, rows)
        return out
    if isinstance(node, list):
        return [_slots(v, rows) for v in node]
    return node


def _compiled(layout: dict, slots: int, version: str | None) -> tuple[str, list[str]] | None:
    """The Vega JSON of ``layout`` split at its slot markers, or None when a marker is not
    found exactly once (the caller then renders the whole spec)."""
    import json

    import vl_convert

    text = json.dumps(layout, sort_keys=True, ensure_ascii=False)
    key = f"{version}|{text}"
    if key in _COMPILED:
        return _COMPILED[key]
    if version is None:
        vega = vl_convert.vegalite_to_vega(text)
    else:
        vega = vl_convert.vegalite_to_vega(text, vl_version=version)
    vega_text = json.dumps(vega, ensure_ascii=False)
    markers = [json.dumps([{_SLOT: i}], ensure_ascii=False) for i in range(slots)]
    pattern = "|".join(re.escape(m) for m in markers)
    found = re.findall(pattern, vega_text) if markers else []
    split = None
    if not slots:
        split = (vega_text, [])
    elif len(found) == slots and len(set(found)) == slots and _SLOT not in re.sub(
            pattern, "", vega_text):
        pieces = re.split(f"({pattern})", vega_text)
        split = (pieces[0], [pieces[j] for j in range(1, len(pieces), 2)]
                 + pieces[2::2])  # markers in order, then the text after each
    if len(_COMPILED) >= _COMPILED_MAX:
        _COMPILED.pop(next(iter(_COMPILED)))
    _COMPILED[key] = split
    return split


def to_svg(chart, *, cache: bool = True) -> str:
    """Render a chart to SVG text with vl-convert (no browser, no network).

    Parameters
    ----------
    chart : altair chart, dict or str
        A chart from this module (or any altair chart), a Vega-Lite spec as a dict, or
        its JSON text. [1]
    cache : bool, optional
        For a dict: compile each layout (the spec without its data rows) to Vega once
        and then only swap the rows in; the SVG is the same as without. [1]

    Returns
    -------
    str
        The SVG document; the same chart gives the same bytes.
    """
    import json

    import vl_convert

    version = _vl_version()
    if cache and isinstance(chart, Mapping):
        rows: list = []
        layout = _slots(chart, rows)
        split = _compiled(layout, len(rows), version)
        if split is not None:
            head, rest = split
            n = len(rows)
            order, tails = rest[:n], rest[n:]
            parts = [head]
            for marker, tail in zip(order, tails, strict=True):
                i = json.loads(marker)[0][_SLOT]
                parts += [json.dumps(rows[i], sort_keys=True, ensure_ascii=False), tail]
            return vl_convert.vega_to_svg("".join(parts))
    if isinstance(chart, str):
        spec = chart
    elif isinstance(chart, Mapping):
        spec = json.dumps(chart, sort_keys=True, ensure_ascii=False)
    else:
        spec = chart.to_json()
    if version is None:
        return vl_convert.vegalite_to_svg(spec)
    return vl_convert.vegalite_to_svg(spec, vl_version=version)
