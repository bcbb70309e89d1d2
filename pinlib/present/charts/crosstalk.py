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
    spaced_log_ticks,
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
    WARN,
)

if TYPE_CHECKING:  # pragma: no cover - typing only
    import altair as alt


def noise_vs_spacing(spacing, peak, *, allowed, design_spacing, design_peak,
                     minimum_spacing=None, within_spacing=None, t_sp=None,
                     searched_from=None, title: str | None = "Crosstalk against spacing",
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
        (shaded below it). [V]
    design_spacing, design_peak : float
        The design's point. [m], [V]
    minimum_spacing : float, optional
        The smallest spacing at which no check fails, drawn as a vertical rule. [m]
    within_spacing : float, optional
        The spacing from which the noise stays within ``allowed``.  Where it is above
        the minimum spacing (a crossing shorter than the input filter's ``t_sp`` only
        warns), the spacings between the two are shaded as warning. [m]
    t_sp : float, optional
        The receivers' input filter, named in the warning's legend entry. [s]
    searched_from : float, optional
        The smallest spacing searched: a minimum spacing there is a bound, and its rule
        says every spacing from it passes. [m]
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
    labels = _labels(y0, x0, minimum_spacing, within_spacing, t_sp, searched_from)
    region, curve, point, rule, warned = labels
    domain = [region, curve, point] + ([rule] if rule else []) + ([warned] if warned else [])
    colours = ([REGION, BOUND_HIGH, OPERATING] + ([LIMIT] if rule else [])
               + ([WARN] if warned else []))
    colour = alt.Color("series:N", scale=_scale_pair(domain, colours),
                       legend=_legend(None, domain, _plot_room(width)))
    lo_s, hi_s = float(np.min(np.append(s[ok], x0))), float(np.max(np.append(s[ok], x0)))
    # ticks whose labels keep clear at this width (fixed 1-2-5 ticks over a few
    # decades of a narrow chart had every other label hidden by the renderer)
    ticks = spaced_log_ticks(lo_s * fx, hi_s * fx, _plot_room(width))

    def xq(field="s"):
        return _q(field, _title("Spacing, edge to edge", ux), log=True, pad=True,
                  ticks=ticks or None)

    def yq(field):
        return _q(field, _title("Peak noise on the victim", uy), channel="y", pad=True)

    rows = [{"s": _num(a * fx), "v": _num(b * fy), "series": curve}
            for a, b in zip(s[ok], p[ok], strict=True)]
    dot = [{"s": _num(x0 * fx), "v": _num(y0 * fy), "series": point}]
    layers = [_area([lo_s, hi_s], 0.0, lim, fx, fy, region, xq(), yq("lo"), colour)]
    if warned:
        top = float(np.max(np.append(p[ok], lim)))
        layers.append(_area([minimum_spacing, within_spacing], lim, top, fx, fy, warned,
                            xq(), yq("lo"), colour))
    layers += [
        alt.Chart(_data(rows)).mark_line(strokeWidth=2, point=True).encode(
            x=xq(), y=yq("v"), color=colour),
        alt.Chart(_data(dot)).mark_point(shape="diamond", filled=True, size=140,
                                         opacity=1).encode(x=xq(), y=yq("v"), color=colour),
    ]
    if rule:
        rows_rule = [{"s": _num(float(minimum_spacing) * fx), "series": rule}]
        layers.append(alt.Chart(_data(rows_rule)).mark_rule(strokeDash=[6, 3]).encode(
            x=xq(), color=colour))
    return _titled(alt.layer(*layers), title, subtitle, width, height)


def _area(xs, lo: float, hi: float, fx: float, fy: float, series: str, x, y, colour):
    """A shaded region from ``lo`` to ``hi`` over the spacings ``xs`` (SI units)."""
    alt = _alt()
    rows = [{"s": _num(float(v) * fx), "lo": _num(lo * fy), "hi": _num(hi * fy),
             "series": series} for v in xs]
    return alt.Chart(_data(rows)).mark_area(opacity=_REGION_OPACITY).encode(
        x=x, y=y, y2=alt.Y2("hi:Q"), color=colour)


def _labels(y0, x0, minimum_spacing, within_spacing, t_sp, searched_from) -> tuple:
    """The legend entries: the band, the curve, the design's point, the minimum spacing's
    rule (None without one) and the warning region (None where there is none)."""
    # the band is the excursion each threshold allows from the level the line is held
    # at: it read "noise within VIL, VDD − VIH", which named no side of either
    region = "noise that keeps the line below VIL (held low), above VIH (held high)"
    point = f"design: {format_si(y0, 'V')} at {format_si(x0, 'm')}"
    rule = warned = None
    if minimum_spacing is not None:
        ms = float(minimum_spacing)
        bound = searched_from is not None and ms <= float(searched_from) * (1 + 1e-9)
        rule = (f"no check fails from {format_si(ms, 'm')} (every spacing searched)"
                if bound else f"minimum spacing {format_si(ms, 'm')}: no check fails")
        if within_spacing is not None and float(within_spacing) > ms * 1.02:
            why = (f" for less than tSP {format_si(float(t_sp), 's')}" if t_sp else "")
            warned = f"beyond a threshold{why}: a warning, not a failure"
    return region, "peak noise", point, rule, warned
