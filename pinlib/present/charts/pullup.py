"""The pull-up window chart: Rp(min) and Rp(max) against Cb, the design's point."""

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
    _title,
    _titled,
    display_scale,
    spaced_log_ticks,
)
from pinlib.present.charts.render import _alt, _data
from pinlib.present.charts.style import (
    _HEIGHT,
    _REGION_OPACITY,
    _WIDTH,
    BOUND_HIGH,
    BOUND_LOW,
    OPERATING,
    REGION,
)

if TYPE_CHECKING:  # pragma: no cover - typing only
    import altair as alt


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

    # ticks whose labels keep clear of each other at this width (Vega's own ticks on a
    # log axis label 1, 2, 3 and 4 of a decade: "300" and "400" ran together)
    xs = np.append(c[ok_lo | ok_hi], x0) * fx
    ys = np.concatenate([lo[ok_lo], hi[ok_hi], [y0]]) * fy
    x_ticks = spaced_log_ticks(float(xs.min()), float(xs.max()), _plot_room(width))
    y_ticks = spaced_log_ticks(float(ys.min()), float(ys.max()), float(height), along=False)

    def xq(field: str = "cb"):
        return _q(field, x_title, log=True, pad=True, ticks=x_ticks)

    def yq(field: str):
        return _q(field, y_title, log=True, channel="y", pad=True, ticks=y_ticks)

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
        x=xq(), y=yq("lo"), y2=alt.Y2("hi:Q"), color=colour)
    curves = alt.Chart(_data(lines)).mark_line(strokeWidth=2).encode(
        x=xq(), y=yq("rp"), color=colour, detail=alt.Detail("series:N"))
    marker = alt.Chart(_data(point)).mark_point(
        shape="diamond", filled=True, size=140, opacity=1).encode(
        x=xq(), y=yq("rp"), color=colour,
        tooltip=[alt.Tooltip("cb:Q", title=x_title), alt.Tooltip("rp:Q", title=y_title)])
    # a window closed at every Cb shown draws no band (an empty layer's scale has no
    # extent: the renderer warned "Infinite extent")
    layers = (area, curves, marker) if band else (curves, marker)
    return _titled(alt.layer(*layers), title, subtitle, width, height)
