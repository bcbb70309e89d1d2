"""The charts' palette, roles, font and the text measures that lay them out."""

from __future__ import annotations

import re
from collections.abc import Sequence

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
    "rise 10–90 %": INDIGO,
    "fall 10–90 %": WINE,
    "rise 10–90 %, Rs": BLUE,
    "fall 10–90 %, Rs": SKY_BLUE,
    "rise 20–80 %": OLIVE,
    "fall 20–80 %": DARK_OLIVE,
    # far-end waveforms (pinlib.present.plotdata.waveform_data), the same pairs
    "rise, no series R": INDIGO,
    "fall, no series R": WINE,
    "rise, Rs": BLUE,
    "fall, Rs": SKY_BLUE,
    # timing budget components (pinlib.present.plotdata.BUDGET_COMPONENTS)
    "output valid (t_valid)": BLUE,
    "data or CS flight": WINE,
    "SCLK flight": SKY_BLUE,
    "required setup, hold or width": SAND,
    "bridging parts": INDIGO,
    "output valid after CS (t_cs_valid)": OLIVE,
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


#: Where a word wider than a line may be broken: after each of these (an id's hyphens,
#: a path's slashes, dots and underscores).
_WORD_BREAKS = re.compile(r"(?<=[-/._])")


def _wrap(text: str, size: float, limit: float, *, bold: bool = False) -> list[str]:
    """``text`` broken at spaces into lines no wider than ``limit`` px.  A word wider
    than that (a long bus id) is broken after a hyphen, slash, dot or underscore, and
    where it has none that fits, between characters: a chart cuts off what passes its
    edge."""
    lines: list[str] = []
    for word in str(text).split(" "):
        if lines and text_width(f"{lines[-1]} {word}", size, bold=bold) <= limit:
            lines[-1] = f"{lines[-1]} {word}"
        elif text_width(word, size, bold=bold) <= limit:
            lines.append(word)
        else:
            lines += _broken(word, size, limit, bold)
    return lines


def _broken(word: str, size: float, limit: float, bold: bool) -> list[str]:
    """A word wider than ``limit`` px as lines that fit (at least one character each)."""
    out: list[str] = []
    for piece in _WORD_BREAKS.split(word):
        while piece:
            if out and text_width(out[-1] + piece, size, bold=bold) <= limit:
                out[-1] += piece
                break
            if text_width(piece, size, bold=bold) <= limit:
                out.append(piece)
                break
            cut = 1   # the longest head of the piece that fits, one character at least
            while cut < len(piece) and text_width(piece[:cut + 1], size, bold=bold) <= limit:
                cut += 1
            out.append(piece[:cut])
            piece = piece[cut:]
    return out


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


#: The dash patterns a chart's series cycle through once :data:`SERIES` is used up (a
#: route's waveforms at every receiver: up to 64 receivers, two corners each): the
#: first cycle solid, each later one its own pattern, so that every series of a chart has
#: a (colour, dash) pair of its own.  [on, off...] in px; ``(1, 0)`` is solid.  The
#: first few are the most readable (long dashes, then dots, then dash-dot); past the
#: table (56 series on 7 colours) each cycle lengthens the dash of a dash-dot by 2 px.
DASHES = ((1, 0), (7, 3), (2, 2), (9, 3, 2, 3), (4, 4), (12, 4), (1, 3), (9, 3, 2, 3, 2, 3))


def dash_pattern(cycle: int) -> tuple[int, ...]:
    """The dash pattern of the ``cycle``-th pass through the series colours (0: solid),
    each cycle's its own. [px]"""
    if cycle < len(DASHES):
        return DASHES[cycle]
    k = cycle - len(DASHES)
    return (14 + 2 * k, 3, 3, 3) if k % 2 == 0 else (14 + 2 * k, 3, 1, 3, 1, 3)


def series_styles(names: Sequence[str], taken: Sequence[str] = ()
                  ) -> list[tuple[str, tuple[int, ...]]]:
    """A (colour, dash pattern) for each series name, every pair distinct.

    Parameters
    ----------
    names : sequence of str
        The series of one chart, each once. [1]
    taken : sequence of str, optional
        Colours the chart already gives to fixed roles. [1]

    Returns
    -------
    list of (str, tuple of int)
        While :func:`series_colours` gives every name a colour of its own, those, solid.
        Past that (more series than :data:`SERIES` has colours free) the names take the
        free colours in turn, in their order, solid on the first pass and with the
        pass's :func:`dash_pattern` on each later one: a chart of 8 receivers draws
        the eighth as the first, dashed.
    """
    colours = series_colours(names, taken)
    if len(set(colours)) == len(names):
        return [(c, DASHES[0]) for c in colours]
    free = [c for c in SERIES if c not in set(taken)] or list(SERIES)
    return [(free[i % len(free)], dash_pattern(i // len(free))) for i in range(len(names))]


_LEGEND_SIZE = 11  # legend label font size [px]
_LEGEND_SYMBOL = 20  # a legend entry's symbol and the gap after it [px]
_LEGEND_GAP = 14  # between two legend columns [px]
_LEGEND_OFFSET = 26  # from the plot to the legend below the x axis and its title [px]
_AXIS_ROOM = 66  # a y axis of numbers with its title, left of the plot [px]
_TICK_SIZE = 10  # an axis label's font size (Vega's default) [px]
# Room between two axis labels (common practice, no source): one em between neighbours
# along a horizontal axis ("300 400" read as one number closer than that), a fifth of
# an em between the line boxes of labels stacked on a vertical one. [px]
_TICK_GAP_ALONG = 10.0
_TICK_GAP_STACKED = 2.0
_LINE_BOX = 1.164  # DejaVu Sans' line box, ascender to descender (hhea 1901 + 483 of 2048) [em]
_ROW = 44  # a timing budget's row: the path's name and margin above its bar [px]
