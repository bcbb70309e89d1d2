"""What every chart is built of: checked inputs, display scales, axes, legends, titles."""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.core.labels import counted
from pinlib.present.charts.render import _alt
from pinlib.present.charts.style import (
    _AXIS_ROOM,
    _FLUSH_PX,
    _LEGEND_GAP,
    _LEGEND_OFFSET,
    _LEGEND_SIZE,
    _LEGEND_SYMBOL,
    _LINE_BOX,
    _PAD_PX,
    _PREFIXES,
    _TICK_GAP_ALONG,
    _TICK_GAP_STACKED,
    _TICK_SIZE,
    _WIDTH,
    FONT,
    _wrap,
    text_width,
)


def _array(x, field: str, *, ndim: int | tuple[int, ...] = 1) -> np.ndarray:
    """``x`` as a float array of the allowed dimension(s), or an InputError naming it."""
    try:
        a = np.asarray(x, dtype=float)
    except (TypeError, ValueError):
        raise InputError(M.NOT_NUMBERS, field=field,
                         value=_short(x), expected="floats in SI units") from None
    dims = (ndim,) if isinstance(ndim, int) else ndim
    if a.ndim not in dims:
        raise InputError(counted(M.ARRAY_DIMENSIONS, a.ndim), field=field,
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


def _scale_pair(domain: list[str], colours: list[str]):
    alt = _alt()
    return alt.Scale(domain=list(domain), range=list(colours))


def _columns(labels: Sequence[str], room: float, symbol: float = _LEGEND_SYMBOL) -> int:
    """How many legend columns fit ``labels`` into ``room`` px, entries in rows, each
    after a symbol and its gap ``symbol`` px wide."""
    widths = [symbol + text_width(s, _LEGEND_SIZE) for s in labels]
    for k in range(max(len(widths), 1), 1, -1):
        cols = [max(widths[j::k]) for j in range(k)]
        if sum(cols) + _LEGEND_GAP * (k - 1) <= room:
            return k
    return 1


#: The entries Vega lists in a legend unless told more (its default ``symbolLimit``); the
#: rest it counts ("...38 entries"), which names none of them.
_VEGA_SYMBOL_LIMIT = 30

#: The side of a legend's square symbol: Vega's default size, 100 px². [px]
_LEGEND_SQUARE = 10.0


def _plot_room(width: int, left: float = _AXIS_ROOM, right: float = 12.0) -> float:
    """The plot's width in a chart ``width`` px wide with ``left`` px of axis before it and
    ``right`` px after it (estimates that err large, so the plot errs small). [px]"""
    return max(float(width) - left - right, 60.0)


def _legend(title: str | None, labels: Sequence[str] = (), room: float = _WIDTH, *,
            line: float | None = None, **extra):
    """A legend below the plot, starting at its left edge, its entries in as many
    columns as fit ``room`` px (the plot's width, :func:`_plot_room`); no label is cut.
    ``line``: each entry's symbol a line that long instead of a square (its dash shown),
    without fill. [px]"""
    alt = _alt()
    head = _wrap(title, _LEGEND_SIZE, room - 4, bold=True) if title else None
    symbol = _LEGEND_SYMBOL
    if line is not None:
        # Vega draws a "stroke" symbol as long as the square root of its size
        symbol += line - _LEGEND_SQUARE
        extra = dict(symbolType="stroke", symbolSize=line * line, symbolStrokeWidth=2,
                     symbolFillColor="transparent",
                     **extra)
    props = dict(title=head[0] if head and len(head) == 1 else head, orient="bottom",
                 direction="horizontal", titleLimit=int(room), titleOrient="top",
                 columns=_columns(list(labels), room, symbol), labelLimit=int(room),
                 labelFontSize=_LEGEND_SIZE, titleFontSize=_LEGEND_SIZE,
                 columnPadding=_LEGEND_GAP, rowPadding=4, symbolOpacity=0.9,
                 offset=_LEGEND_OFFSET)
    if len(labels) > _VEGA_SYMBOL_LIMIT:  # Vega lists 30 and counts the rest
        props["symbolLimit"] = len(labels)
    props.update(extra)
    return alt.Legend(**props)


def _axis(title: str, *, flush: bool = True, values=None):
    """A quantitative axis; ``flush`` for a horizontal one; ``values`` the ticks, when
    given (Vega's own otherwise)."""
    alt = _alt()
    # "~r": decimal notation, trailing zeros off (no "1.4e+2", no thousands commas);
    # Vega sets the precision from the tick step.  On a horizontal axis, labels near an
    # end sit flush inside it and any still past it are hidden (a label centred on a
    # tick near the end could reach past the chart).  Labels that would overlap are
    # left out.
    props = dict(title=title, format="~r", labelOverlap=True)
    if flush:
        props.update(labelFlush=_FLUSH_PX, labelBound=True)
    if values is not None:
        props["values"] = [float(v) for v in values]
    return alt.Axis(**props)


#: Mantissas of a decade's ticks, densest first; then one tick every few decades.
_DECADE_TICKS = ((1, 2, 3, 4, 5, 6, 7, 8, 9), (1, 2, 5), (1, 3), (1,))
_DECADE_STEPS = (2, 3, 5, 10, 20, 50, 100)


def tick_label(value: float) -> str:
    """An axis label as Vega writes a value given as a tick with the format ``~r``:
    decimal notation, 12 significant digits, trailing zeros off."""
    text = np.format_float_positional(float(f"{float(value):.12g}"), trim="-")
    return "0" if text == "-0" else text


def _label_spans(ticks: Sequence[float], lo: float, hi: float, length: float, *,
                 along: bool) -> list[tuple[float, float]]:
    """Where each tick's label lies on a log axis ``length`` px long from ``lo`` to
    ``hi``: (start, end) along the axis. [px]

    Along a horizontal axis a label is centred on its tick, or flush with the axis end
    it is within ``_FLUSH_PX`` of (as :func:`_axis` lays it); across a vertical one it
    is its line box, centred."""
    span = math.log10(hi / lo)
    out = []
    for v in ticks:
        x = math.log10(v / lo) / span * length
        w = text_width(tick_label(v), _TICK_SIZE) if along else _LINE_BOX * _TICK_SIZE
        if along and x < _FLUSH_PX:
            out.append((x, x + w))
        elif along and x > length - _FLUSH_PX:
            out.append((x - w, x))
        else:
            out.append((x - w / 2, x + w / 2))
    return out


def _candidates(lo: float, hi: float):
    """Tick sets for the values ``lo`` to ``hi``, densest first."""
    first, last = math.floor(math.log10(lo)) - 1, math.ceil(math.log10(hi)) + 1

    def inside(v: float) -> bool:
        return lo * (1 - 1e-9) <= v <= hi * (1 + 1e-9)

    for mantissas in _DECADE_TICKS:
        yield [v for d in range(first, last + 1) for m in mantissas
               if inside(v := float(f"{m * 10.0 ** d:.12g}"))]
    for step in _DECADE_STEPS:
        yield [v for d in range(first, last + 1) if d % step == 0
               if inside(v := float(f"{10.0 ** d:.12g}"))]


def spaced_log_ticks(lo: float, hi: float, length: float, *, along: bool = True,
                     pad: float = _PAD_PX) -> list[float] | None:
    """Ticks for a log axis whose labels never collide: the densest of 1-9, 1-2-5, 1-3
    and 1 per decade, then 1 every 2, 3, 5... decades, whose labels keep clear of each
    other on an axis ``length`` px long.

    Parameters
    ----------
    lo, hi : float
        The smallest and largest value the axis draws (display units, as labelled). [1]
    length : float
        The axis' length (an estimate that errs short errs safe). [px]
    along : bool, optional
        The labels lie along the axis (a horizontal axis); False for a vertical axis,
        whose labels are stacked. [1]
    pad : float, optional
        How far inside the axis ends ``lo`` and ``hi`` are drawn (the scale's padding);
        ticks in that margin are offered too. [px]

    Returns
    -------
    list of float or None
        At least two ticks whose labels are ``_TICK_GAP_ALONG`` px apart along the axis
        (``_TICK_GAP_STACKED`` stacked), or None where no set gives two (a range within
        one decade's step, or an axis too short): the renderer's own ticks then.
    """
    if not (0 < lo < hi and math.isfinite(hi) and length > 2 * pad):
        return None
    # the values at the axis ends, the padding included
    grow = math.log10(hi / lo) * pad / (length - 2 * pad)
    lo_end, hi_end = lo / 10.0 ** grow, hi * 10.0 ** grow
    gap = _TICK_GAP_ALONG if along else _TICK_GAP_STACKED
    for ticks in _candidates(lo_end, hi_end):
        if len(ticks) < 2:
            continue
        spans = _label_spans(ticks, lo_end, hi_end, length, along=along)
        # a label past a horizontal axis' end would be hidden (labelBound, 1 px)
        inside = not along or (spans[0][0] >= -1.0 and spans[-1][1] <= length + 1.0)
        if inside and all(b[0] - a[1] >= gap for a, b in zip(spans, spans[1:], strict=False)):
            return ticks
    return None


def _q(field: str, title: str, *, log: bool = False, channel: str = "x", pad: bool = False,
       ticks=None, nice: bool = True):
    """A quantitative position channel; ``pad`` keeps the outermost values ``_PAD_PX``
    inside the frame (a limit line is never drawn on the frame itself); ``nice=False``
    ends the axis at the data (no blank band after a record that ends between ticks)."""
    alt = _alt()
    props = {}
    if log:
        props["type"] = "log"
    if not nice:
        props["nice"] = False
    if pad:
        props.update(padding=_PAD_PX, nice=False)
        if not log:
            props["zero"] = False
    scale = alt.Scale(**props) if props else alt.Undefined
    cls = alt.X if channel == "x" else alt.Y
    return cls(f"{field}:Q", scale=scale,
               axis=_axis(title, flush=channel == "x", values=ticks))


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
