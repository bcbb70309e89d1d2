"""Where a point's note goes: beside it, clear of the chart's curves.

The renderer places marks; the chart is built before it runs, so the plot's pixels are
estimated here as the renderer sets them: each axis' domain is the data's, "nice" as
Vega rounds it (a linear axis from zero, to a multiple of the 1-2-5 step of about ten
ticks; a log axis to whole decades), over the plot's estimated width and its height.
Of a few places around the point, the first whose text keeps ``CLEAR`` px from every
curve is taken, else the one farthest from them.
"""

from __future__ import annotations

import math

import numpy as np

#: (align, baseline, dx, dy) of the note around its point, in the order tried: right,
#: then above and below on the right, then the left side, then farther away. [px]
NOTE_PLACES = (("left", "middle", 9, 0), ("left", "bottom", 7, -7), ("left", "top", 7, 7),
               ("right", "bottom", -7, -7), ("right", "top", -7, 7),
               ("right", "middle", -9, 0), ("left", "bottom", 7, -22),
               ("left", "top", 7, 22), ("right", "bottom", -7, -22),
               ("right", "top", -7, 22))
#: Room kept between the note's text and a curve; the text's line height in ems. [px, 1]
CLEAR = 4.0
_LINE_EM = 1.2


def _nice(lo: float, hi: float, log: bool) -> tuple[float, float]:
    """The axis' domain as Vega makes it "nice" (d3's nice over ten ticks)."""
    if log:
        return 10.0 ** math.floor(math.log10(lo)), 10.0 ** math.ceil(math.log10(hi))
    lo = min(lo, 0.0)  # a linear position scale includes zero
    if hi <= lo:
        return lo, lo + 1.0
    for _ in range(3):  # d3 repeats until the step settles
        raw = (hi - lo) / 10.0
        power = 10.0 ** math.floor(math.log10(raw))
        err = raw / power
        step = power * (10 if err >= math.sqrt(50) else 5 if err >= math.sqrt(10)
                        else 2 if err >= math.sqrt(2) else 1)
        lo, hi = math.floor(lo / step) * step, math.ceil(hi / step) * step
    return lo, hi


def _pixels(v, domain, length: float, log: bool, flip: bool) -> np.ndarray:
    a, b = domain
    v = np.asarray(v, dtype=float)
    f = ((np.log10(v) - math.log10(a)) / (math.log10(b) - math.log10(a)) if log
         else (v - a) / (b - a))
    return length * (1.0 - f) if flip else length * f


def _box(px: float, py: float, place, w: float, h: float) -> tuple[float, ...]:
    align, baseline, dx, dy = place
    x0 = px + dx - (w if align == "right" else 0.0)
    y0 = py + dy - {"top": 0.0, "middle": h / 2, "bottom": h}[baseline]
    return x0, y0, x0 + w, y0 + h


def _distance(box, xs: np.ndarray, ys: np.ndarray) -> float:
    """The least distance from the box to a polyline (sampled along each segment). [px]"""
    if xs.size == 0:
        return math.inf
    t = np.linspace(0.0, 1.0, 9)[:, None]
    sx = (xs[:-1] + t * np.diff(xs)).ravel() if xs.size > 1 else xs
    sy = (ys[:-1] + t * np.diff(ys)).ravel() if ys.size > 1 else ys
    ddx = np.maximum(np.maximum(box[0] - sx, sx - box[2]), 0.0)
    ddy = np.maximum(np.maximum(box[1] - sy, sy - box[3]), 0.0)
    return float(np.min(np.hypot(ddx, ddy)))


def note_place(point, curves, text_w: float, plot, logs=(False, False),
               size: float = 11.0) -> tuple:
    """Where to write a point's note (one of :data:`NOTE_PLACES`).

    Parameters
    ----------
    point : (float, float)
        The point, in the chart's display units. [1]
    curves : list of (sequence, sequence)
        Each curve's x and y, in the same units. [1]
    text_w : float
        The note's width. [px]
    plot : (float, float)
        The plot's width (an estimate) and height. [px]
    logs : (bool, bool)
        Log x and y axes. [1]
    size : float
        The note's font size. [px]
    """
    xs_all = np.concatenate([np.asarray(c[0], float) for c in curves] + [[point[0]]])
    ys_all = np.concatenate([np.asarray(c[1], float) for c in curves] + [[point[1]]])
    (w, h), (log_x, log_y) = plot, logs
    dx = _nice(float(xs_all.min()), float(xs_all.max()), log_x)
    dy = _nice(float(ys_all.min()), float(ys_all.max()), log_y)
    px = float(_pixels(point[0], dx, w, log_x, False))
    py = float(_pixels(point[1], dy, h, log_y, True))
    lines = [(_pixels(c[0], dx, w, log_x, False), _pixels(c[1], dy, h, log_y, True))
             for c in curves]
    best, best_room = NOTE_PLACES[0], -math.inf
    for place in NOTE_PLACES:
        box = _box(px, py, place, text_w, size * _LINE_EM)
        if box[0] < 0 or box[2] > w or box[1] < 0 or box[3] > h:
            continue  # past the frame
        room = min((_distance(box, a, b) for a, b in lines), default=math.inf)
        if room >= CLEAR:
            return place
        if room > best_room:
            best, best_room = place, room
    return best
