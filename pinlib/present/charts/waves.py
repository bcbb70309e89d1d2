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
    series_styles,
)

#: The length of a legend's line symbol where the entries differ in dash: one whole
#: period of the longest of the first patterns (:data:`DASHES`). [px]
_DASH_SYMBOL = 28.0

if TYPE_CHECKING:  # pragma: no cover - typing only
    import altair as alt


def waveforms(t, traces: Mapping[str, object], *, v_il, v_ih, vdd=None,
              vdd_name: str = "VDD", title: str | None = "Receiver waveforms",
              subtitle: str | None = None,
              band_label: str = "between VIL and VIH", threshold_label: str = "VIL / VIH",
              width: int = _WIDTH, height: int = _HEIGHT,
              groups: Mapping[str, str] | None = None) -> alt.LayerChart:
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
    vdd_name : str, optional
        Its legend entry, before its value: ``"VDD"``, or ``"high level"`` where the
        line settles below the supply (an open-drain line's pull-up less leakage). [1]
    title, subtitle : str, optional
        Chart title and a line below it (each wrapped to the width). [1]
    band_label, threshold_label : str, optional
        Legend entries of the band and of the threshold lines. [1]
    width : int, optional
        Width of the whole chart, axes and legend included. [px]
    height : int, optional
        Height of the plot. [px]
    groups : dict of str to str, optional
        The legend entry of each trace named in it (``{"rise at U2": "at U2", "fall at
        U2": "at U2"}``): the traces of one entry share its colour and dash, each still
        its own line.  A trace not named is an entry of its own.

    Returns
    -------
    altair.LayerChart
        Band (rect between VIL and VIH), threshold lines with their values written
        beside them, the optional VDD line, then one line per trace.  Every legend entry
        has a (colour, dash) pair of its own (:func:`pinlib.present.charts.style.
        series_styles`), however many there are: solid while the series colours last.
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

    entry = {name: str((groups or {}).get(name, name)) for name in vs}
    names = list(dict.fromkeys(entry.values()))  # the legend's entries, in trace order
    vdd_label = None if top is None else f"{vdd_name} {format_si(top, 'V')}"
    fixed = [band_label, threshold_label] + ([vdd_label] if vdd_label else [])
    fixed_colours = [UNDEFINED, LIMIT] + ([INK] if vdd_label else [])
    fixed_dashes = [[1, 0], [6, 3]] + ([[2, 3]] if vdd_label else [])
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
    for name, a in vs.items():
        ok = _keep(tt, a, positive=(False, False))
        rows += [{"t": _num(p * fx), "v": _num(q * fy), "series": entry[name], "trace": name}
                 for p, q in zip(tt[ok], a[ok], strict=True)]
    known = _reuse(("waveforms", x_title, y_title, tuple(entry.items()), band_label,
                    threshold_label, vdd_label, title, subtitle, width, height),
                   [band_rows, levels, levels] + ([vdd_rows] if vdd_label else []) + [rows])
    if known is not None:
        return known

    styles = series_styles(names, fixed_colours)
    domain = fixed + names
    colours = _scale_pair(domain, fixed_colours + [c for c, _ in styles])
    dashed = any(d != styles[0][1] for _, d in styles)
    if dashed:
        # More entries than series colours: each later pass through them dashed.  The
        # lines then draw their colour as a stroke and the band its fill as a fixed value
        # (its entry kept by the scale's domain), so that the legend draws each entry as
        # a line with its dash and no fill (the threshold and VDD entries with their
        # rules' dashes).
        legend = _legend(None, domain, _plot_room(width), line=_DASH_SYMBOL)
        colour = alt.Stroke("series:N", scale=colours, legend=legend)
        dash = {"strokeDash": alt.StrokeDash("series:N", legend=legend, scale=alt.Scale(
            domain=domain, range=fixed_dashes + [list(d) for _, d in styles]))}
    else:
        colour = alt.Color("series:N", scale=colours,
                           legend=_legend(None, domain, _plot_room(width)))
        dash = {}
    # the voltage axis padded: VDD or a threshold is never drawn on the frame
    band = alt.Chart(_data(band_rows)).mark_rect(
        opacity=_BAND_OPACITY, **({"strokeWidth": 0, "fill": UNDEFINED} if dashed else {})).encode(
        y=_q("lo", y_title, channel="y", pad=True), y2=alt.Y2("hi:Q"),
        **({} if dashed else {"color": colour}))
    rules = alt.Chart(_data(levels)).mark_rule(strokeDash=[6, 3]).encode(
        y=_q("v", y_title, channel="y", pad=True), **_paint(colour, dashed))
    words = alt.Chart(_data(levels)).mark_text(
        align="right", baseline="bottom", dx=-4, dy=-2, fontSize=10, fontWeight="bold",
        color=LIMIT).encode(x=alt.value("width"), y=_q("v", y_title, channel="y", pad=True),
                            text=alt.Text("text:N"))
    layers = [band, rules, words]
    if vdd_label:
        layers.append(alt.Chart(_data(vdd_rows))
                      .mark_rule(strokeDash=[2, 3]).encode(
                          y=_q("v", y_title, channel="y", pad=True), **_paint(colour, dashed)))
    # the time axis ends where the record does (a "nice" end past it drew a blank band
    # that read as missing data)
    layers.append(alt.Chart(_data(rows)).mark_line(strokeWidth=1.8).encode(
        x=_q("t", x_title, nice=False), y=_q("v", y_title, channel="y", pad=True),
        **_paint(colour, dashed), **dash, detail=alt.Detail("trace:N")))
    return _titled(alt.layer(*layers), title, subtitle, width, height)


def _paint(colour, dashed: bool) -> dict:
    """A line's colour encoding: as its stroke where the legend draws lines, else as
    its colour."""
    return {"stroke": colour} if dashed else {"color": colour}
