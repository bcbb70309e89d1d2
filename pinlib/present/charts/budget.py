"""The SPI timing budget chart: one stacked bar per requirement."""

from __future__ import annotations

from collections.abc import Mapping
from typing import TYPE_CHECKING

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.core.labels import path_label
from pinlib.core.quantity import format_si
from pinlib.present.charts.frame import (
    _axis,
    _legend,
    _num,
    _plot_room,
    _scalar,
    _scale_pair,
    _short,
    _title,
    _titled,
    _unique,
    display_scale,
)
from pinlib.present.charts.render import _alt, _data, _reuse
from pinlib.present.charts.style import (
    _PAD_PX,
    _ROW,
    _WIDTH,
    INK,
    LIMIT,
    STATUS_COLOURS,
    series_colours,
)

if TYPE_CHECKING:  # pragma: no cover - typing only
    import altair as alt


def timing_budget(rows, *, available=None, margins: Mapping[str, float] | None = None,
                  status: Mapping[str, str] | None = None,
                  worst: Mapping[str, tuple] | None = None,
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
    worst : dict of str to (float, str, ...), optional
        For a path whose check was taken at a worse corner of the tolerances than the
        bars: that margin and status, written after the bar's (``margin +5.51 ns;
        worst corner +5.49 ns``) and colouring it. [s, 1]
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
    items, paths, comps = _rows(rows)
    avail, marg, stat = _per_path(paths, available, margins, status)
    worst = {str(p): w for p, w in (worst or {}).items() if str(p) in marg}
    stat = {p: worst[p][1] if p in worst else s for p, s in stat.items()}

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
    names = [{"path": p, "name": path_label(p)} for p in paths]
    notes = ([{"path": p, "text": _margin_text(m, worst.get(p)), "series": stat[p]}
              for p, m in marg.items()] if marg else None)
    known = _reuse(("timing_budget", x_title, tuple(paths), tuple(comps), tuple(fixed),
                    available_label, title, subtitle, width, plot_h),
                   [bars] + ([ticks] if ticks else []) + [names] + ([notes] if notes else []))
    if known is not None:
        return known

    layers = _layers(bars, ticks, names, notes, x_title, paths, comps, fixed,
                     fixed_colours, plot_h / n_rows, width)
    return _titled(_alt().layer(*layers), title, subtitle, width, plot_h)


def _signed(m: float) -> str:
    return f"{'+' if m >= 0 else ''}{format_si(m, 's')}"


def _margin_text(m: float, worst: tuple | None) -> str:
    """A bar's margin, and its check's at a worse corner of the tolerances when given."""
    text = f"margin {_signed(m)}"
    return text if worst is None else f"{text}; worst corner {_signed(worst[0])}"


def _rows(rows) -> tuple[list, list[str], list[str]]:
    """The rows as ``(path, component, duration)``, the paths and the components."""
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
    return items, _unique(p for p, _, _ in items), _unique(c for _, c, _ in items)


def _per_path(paths, available, margins, status) -> tuple[dict, dict, dict]:
    """The available time, the margin and the status of each path, checked."""
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
    return avail, marg, stat


def _layers(bars, ticks, names, notes, x_title, paths, comps, fixed, fixed_colours,
            band, width) -> list:
    """The stacked bars, the available ticks, each path's name above its bar and its
    margin at the right, as altair layers."""
    alt = _alt()
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
        x=alt.value(0), y=y, text=alt.Text("name:N")))
    if notes:
        layers.append(alt.Chart(_data(notes)).mark_text(
            align="right", baseline="bottom", dx=-2, dy=above, fontSize=11,
            fontWeight="bold").encode(
            x=alt.value("width"), y=y, text=alt.Text("text:N"), color=colour))
    return layers
