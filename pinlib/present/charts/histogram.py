"""The Monte Carlo histogram chart of one check's margin or value."""

from __future__ import annotations

import math
from typing import TYPE_CHECKING

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.core.quantity import format_si
from pinlib.present.charts.frame import (
    _array,
    _axis,
    _legend,
    _num,
    _plot_room,
    _scalar,
    _scale_pair,
    _title,
    _titled,
    display_scale,
)
from pinlib.present.charts.render import _alt, _data
from pinlib.present.charts.style import _HEIGHT, _PAD_PX, _WIDTH, FAIL, LIMIT, PASS, REGION

if TYPE_CHECKING:  # pragma: no cover - typing only
    import altair as alt


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
