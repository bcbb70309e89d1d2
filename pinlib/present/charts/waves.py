"""The far-end waveforms chart, with the receivers' threshold band."""

from __future__ import annotations

from collections.abc import Mapping
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
    display_scale,
)
from pinlib.present.charts.render import _alt, _data, _reuse
from pinlib.present.charts.style import (
    _BAND_OPACITY,
    _HEIGHT,
    _WIDTH,
    INK,
    LIMIT,
    UNDEFINED,
    series_colours,
)

if TYPE_CHECKING:  # pragma: no cover - typing only
    import altair as alt


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
    # the time axis ends where the record does (a "nice" end past it drew a blank band
    # that read as missing data)
    layers.append(alt.Chart(_data(rows)).mark_line(strokeWidth=1.8).encode(
        x=_q("t", x_title, nice=False), y=_q("v", y_title, channel="y", pad=True), color=colour,
        detail=alt.Detail("series:N")))
    return _titled(alt.layer(*layers), title, subtitle, width, height)
