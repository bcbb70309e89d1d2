"""Peak crosstalk noise against the spacing of the two traces, the allowed region and
the design's point."""

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
)
from pinlib.present.charts.render import _alt, _data
from pinlib.present.charts.style import (
    _HEIGHT,
    _REGION_OPACITY,
    _WIDTH,
    BOUND_HIGH,
    LIMIT,
    OPERATING,
    REGION,
)

if TYPE_CHECKING:  # pragma: no cover - typing only
    import altair as alt


def noise_vs_spacing(spacing, peak, *, allowed, design_spacing, design_peak,
                     minimum_spacing=None, title: str | None = "Crosstalk against spacing",
                     subtitle: str | None = None, width: int = _WIDTH,
                     height: int = _HEIGHT) -> alt.LayerChart:
    """Peak noise on the victim against the gap between the traces (log spacing axis).

    Parameters
    ----------
    spacing, peak : array_like
        Spacings solved and the peak noise (largest excursion from the held level) at
        each. [m], [V]
    allowed : float
        The largest excursion that keeps the receivers on their side of VIL and VIH
        (the allowed region lies below it). [V]
    design_spacing, design_peak : float
        The design's point. [m], [V]
    minimum_spacing : float, optional
        The smallest spacing at which every check passes, drawn as a vertical rule. [m]
    """
    alt = _alt()
    s = _array(spacing, "spacing")
    p = _array(peak, "peak")
    if s.shape != p.shape:
        raise InputError(M.LENGTHS_DIFFER.format(a="peak", b="spacing"), field="peak",
                         value=p.size, expected=f"{s.size} values")
    lim = _scalar(allowed, "allowed")
    x0 = _scalar(design_spacing, "design_spacing", positive=True)
    y0 = _scalar(design_peak, "design_peak")
    ok = _keep(s, p, positive=(True, False))
    fx, ux = display_scale(np.append(s[ok], x0), "m", log=True)
    fy, uy = display_scale(np.concatenate([p[ok], [lim, y0]]), "V")
    region = "allowed noise (VIL, VDD − VIH)"
    curve = "peak noise"
    point = f"design: {format_si(y0, 'V')} at {format_si(x0, 'm')}"
    rule = (None if minimum_spacing is None
            else f"minimum spacing {format_si(float(minimum_spacing), 'm')}")
    domain = [region, curve, point] + ([rule] if rule else [])
    colours = [REGION, BOUND_HIGH, OPERATING] + ([LIMIT] if rule else [])
    colour = alt.Color("series:N", scale=_scale_pair(domain, colours),
                       legend=_legend(None, domain, _plot_room(width)))
    x_title = _title("Spacing, edge to edge", ux)
    y_title = _title("Peak noise on the victim", uy)
    lo_s, hi_s = float(np.min(np.append(s[ok], x0))), float(np.max(np.append(s[ok], x0)))
    band = [{"s": _num(x * fx), "lo": 0.0, "hi": _num(lim * fy), "series": region}
            for x in (lo_s, hi_s)]
    rows = [{"s": _num(a * fx), "v": _num(b * fy), "series": curve}
            for a, b in zip(s[ok], p[ok], strict=True)]
    dot = [{"s": _num(x0 * fx), "v": _num(y0 * fy), "series": point}]
    layers = [
        alt.Chart(_data(band)).mark_area(opacity=_REGION_OPACITY).encode(
            x=_q("s", x_title, log=True, pad=True), y=_q("lo", y_title, channel="y", pad=True),
            y2=alt.Y2("hi:Q"), color=colour),
        alt.Chart(_data(rows)).mark_line(strokeWidth=2, point=True).encode(
            x=_q("s", x_title, log=True, pad=True), y=_q("v", y_title, channel="y", pad=True),
            color=colour),
        alt.Chart(_data(dot)).mark_point(shape="diamond", filled=True, size=140,
                                         opacity=1).encode(
            x=_q("s", x_title, log=True, pad=True), y=_q("v", y_title, channel="y", pad=True),
            color=colour),
    ]
    if rule:
        rows_rule = [{"s": _num(float(minimum_spacing) * fx), "series": rule}]
        layers.append(alt.Chart(_data(rows_rule)).mark_rule(strokeDash=[6, 3]).encode(
            x=_q("s", x_title, log=True, pad=True), color=colour))
    return _titled(alt.layer(*layers), title, subtitle, width, height)
