"""The edge-versus-load chart of a push-pull driver."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.core.quantity import format_si
from pinlib.present.charts.frame import (
    _array,
    _keep,
    _legend,
    _num,
    _plot_room,
    _q,
    _scalar,
    _scale_pair,
    _short,
    _title,
    _titled,
    _unique,
    display_scale,
)
from pinlib.present.charts.notes import NOTE_PLACES, note_place
from pinlib.present.charts.render import _alt, _data, _reuse
from pinlib.present.charts.style import _HEIGHT, _WIDTH, OPERATING, series_colours, text_width

if TYPE_CHECKING:  # pragma: no cover - typing only
    import altair as alt


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
    x = _array(loads, "loads")
    y2, names = _curves(x, edge_times, series)
    px, py, plabels = _points(points)
    op = _operating(operating, log_x, log_y)

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
    place = None
    if op_rows is not None:  # the note beside the point, clear of the curves
        place = note_place((op_rows[0]["load"], op_rows[0]["t"]),
                           [([r["load"] for r in rows if r["series"] == n],
                             [r["t"] for r in rows if r["series"] == n]) for n in names],
                           text_width(op_rows[0]["note"], 11, bold=True),
                           (_plot_room(width), float(height)), (log_x, log_y))
    known = _reuse(("edge_vs_load", x_title, y_title, bool(log_x), bool(log_y),
                    tuple(domain), tuple(kinds), tuple(shapes), curves_title, title,
                    subtitle, width, height, place),
                   [rows] + ([pts] if pts is not None else [])
                   + ([op_rows] if op_rows is not None else []))
    if known is not None:
        return known
    layers = _layers(rows, pts, op_rows, (x_title, y_title), (log_x, log_y),
                     (domain, kinds, shapes), curves_title, width, place)
    return _titled(_alt().layer(*layers), title, subtitle, width, height)


def _curves(x: np.ndarray, edge_times, series) -> tuple[np.ndarray, list[str]]:
    """The curves as a 2-D array (one row per curve) and their distinct names."""
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
    return y2, names


def _points(points) -> tuple[np.ndarray, np.ndarray, list[str]]:
    """The datasheet points' loads, times and labels (empty when there are none)."""
    if points is None:
        return np.zeros(0), np.zeros(0), []
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
    return px, py, plabels


def _operating(operating, log_x: bool, log_y: bool) -> tuple[float, float, str] | None:
    """The operating point ``(load, time, label)``, or None."""
    if operating is None:
        return None
    if len(operating) not in (2, 3):
        raise InputError(M.OPERATING_FORM,
                         field="operating", value=_short(operating),
                         expected="a 2- or 3-tuple")
    return (_scalar(operating[0], "operating.load", positive=log_x),
            _scalar(operating[1], "operating.time", positive=log_y),
            str(operating[2]) if len(operating) == 3 else "operating point")


def _layers(rows, pts, op_rows, titles, logs, legend, curves_title, width,
            place=None) -> list:
    """The curves, the datasheet points and the operating point (with its values
    written beside it), as altair layers."""
    alt = _alt()
    (x_title, y_title), (log_x, log_y), (domain, kinds, shapes) = titles, logs, legend
    x, y = _q("load", x_title, log=log_x), _q("t", y_title, log=log_y, channel="y")
    colour = alt.Color("series:N", scale=_scale_pair(domain, series_colours(domain,
                                                                             (OPERATING,))),
                       legend=_legend(curves_title, domain, _plot_room(width)))
    shape = alt.Shape("kind:N", scale=alt.Scale(domain=kinds, range=shapes),
                      legend=_legend("Points", kinds, _plot_room(width)))
    layers = [alt.Chart(_data(rows)).mark_line(strokeWidth=2).encode(
        x=x, y=y, color=colour, detail=alt.Detail("series:N"))]
    tips = [alt.Tooltip("load:Q", title=x_title), alt.Tooltip("t:Q", title=y_title)]
    if pts is not None:
        layers.append(alt.Chart(_data(pts)).mark_point(
            filled=True, size=90, opacity=1).encode(
            x=x, y=y, color=colour, shape=shape,
            tooltip=[*tips, alt.Tooltip("series:N", title="part")]))
    if op_rows is not None:
        layers.append(alt.Chart(_data(op_rows)).mark_point(
            filled=True, size=160, opacity=1, color=OPERATING).encode(
            x=x, y=y, shape=shape, tooltip=tips))
        # its values written beside it, where no curve passes (note_place): the cross
        # is read on its own, not off a curve
        align, baseline, dx, dy = place or NOTE_PLACES[0]
        layers.append(alt.Chart(_data(op_rows)).mark_text(
            align=align, baseline=baseline, dx=dx, dy=dy, fontSize=11, fontWeight="bold",
            color=OPERATING).encode(x=x, y=y, text=alt.Text("note:N")))
    return layers

