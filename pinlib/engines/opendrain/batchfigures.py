"""A segment's figures in the array engine: the one-bus result's (the worse of the two
lines by ``explain._WORST``, each line's own, the segment's), each an array over the
variants; at one variant worked out in plain Python over the few numbers."""

from __future__ import annotations

import math

import numpy as np

from pinlib.engines.opendrain.batchinputs import _Seg
from pinlib.engines.opendrain.batchresult import _Out
from pinlib.engines.opendrain.explain import _WORST
from pinlib.engines.opendrain.rules import SIGNALS

#: The figures each line also gives under its own name (``rise_time_sda``): the ones a
#: reader compares between SDA and SCL, or finds moved in one line (``pinlib check
#: --against-snapshots`` names the line where it can).
LINE_FIGURES = ("bus_capacitance", "rp_min", "rp_max", "rise_time", "rise_time_10_90",
                "fall_time", "pullup")


def _reduce(fn, arrays):
    """The element-wise maximum (``fn`` = ``np.max``) or minimum (``np.min``) of arrays
    that broadcast together, NaN propagated. [unit]"""
    pair = np.maximum if fn is np.max else np.minimum
    out = np.asarray(arrays[0], dtype=float)
    for a in arrays[1:]:
        out = pair(out, a)
    return out


def _figures(s: _Seg, figs: dict, out: _Out) -> dict:
    """A segment's figures, each an array over the variants: the one-bus engine's (the
    worse of the two lines, each line's own, the segment's); a figure that is a check's
    value is asked for once the checks are finished."""
    for group in figs.values():
        for name, x in group.items():
            if callable(x):
                group[name] = x()
    if out.n == 1:
        return _figures_one(s, figs)

    def col(x):
        return None if x is None else out._n(np.asarray(x, dtype=float).reshape(-1))

    res = {}
    for name, pick in _WORST.items():
        vals = [np.asarray(figs[sig][name], dtype=float).reshape(-1, 1) for sig in SIGNALS
                if figs[sig].get(name) is not None]
        res[name] = col(_reduce(np.max if pick is max else np.min, vals)) if vals else None
    for name in LINE_FIGURES:
        for sig in SIGNALS:
            res[f"{name}_{sig}"] = col(figs[sig].get(name))
    res["supply"] = col(s.seg.supply)
    res["pullup_resistor"] = col(s.lines["sda"].pullup)
    res["rise_factor"] = col(s.lines["sda"].rise_factor)
    res.update({k: col(x) for k, x in figs["segment"].items()})
    return res


def one(x) -> float | None:
    """The one value of a number or an array of one element, as a float (None stays
    None): a figure or a check's number at one variant. [unit]"""
    if x is None or type(x) is float:
        return x
    return float(x.item()) if hasattr(x, "item") else float(x)


def _worse(pick, a: float, b: float) -> float:
    """``pick`` (max or min) of two numbers, NaN propagated (as ``_reduce``). [unit]"""
    return a if a != a else b if b != b else pick(a, b)


def _figures_one(s: _Seg, figs: dict) -> dict:
    """:func:`_figures` at one variant, in plain Python over the few numbers; each
    figure a view of one array of shape ``(1,)``."""
    res: dict = {}
    for name, pick in _WORST.items():
        vals = [one(figs[sig][name]) for sig in SIGNALS if figs[sig].get(name) is not None]
        worst = vals[0] if vals else None
        for x in vals[1:]:
            worst = _worse(pick, worst, x)
        res[name] = worst
    for name in LINE_FIGURES:
        for sig in SIGNALS:
            res[f"{name}_{sig}"] = one(figs[sig].get(name))
    res["supply"] = float(s.seg.supply)
    res["pullup_resistor"] = one(s.lines["sda"].pullup)
    res["rise_factor"] = one(s.lines["sda"].rise_factor)
    res.update({k: one(x) for k, x in figs["segment"].items()})
    arr = np.array([math.nan if x is None else x for x in res.values()])
    return {k: None if x is None else arr[j:j + 1] for j, (k, x) in enumerate(res.items())}
