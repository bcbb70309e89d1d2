"""The arithmetic of one open-drain line, shape-agnostic: the same code serves one bus
(arrays over the two rail corners) and a batch of variants (``(N, corners)``).

``drivers`` are the line's drivers on this segment; ``far`` the segments joined through
pass transistors as ``(link, their rail, their pull-up at −tolerance)``; ``segs`` every
segment by index (each with ``lines[signal].drivers``), for the drivers across a
translator.
"""

from __future__ import annotations

import numpy as np

from pinlib.physics import pullup as pu


def far_drivers(far, segs, signal: str):
    """The drivers across each pass transistor that pull this line low through it:
    ``(driver, link, their rail, their pull-up)``."""
    for link, v_other, rp_other in far:
        for d in segs[link.other].lines[signal].drivers:
            if d.offset is not None or d.tap.dev.is_bridge:
                continue
            yield d, link, v_other, rp_other


def low_levels(v, rp_lo, drivers, far, segs, signal: str) -> tuple[list, list]:
    """The low level each driver makes on the line at the actual current.

    Returns
    -------
    levels : list
        ``(v_bus, i_sink or None, driver, link or None)``: a driver on this segment (its
        current through its sink) or, with its link, one across a translator. [V], [A]
    offset_levels : list
        ``(v_bus, i, driver)`` of a repeater side's static-offset low. [V], [A]
    """
    levels, offset_levels = [], []
    for d in drivers:
        if d.offset is not None:
            vb = np.broadcast_to(d.offset, np.broadcast_shapes(np.shape(d.offset), np.shape(v)))
            offset_levels.append((vb, (v - vb) / rp_lo, d))
            continue
        if not far:
            vb = np.asarray(pu.low_level(v, rp_lo, d.r_on, d.r_series), dtype=float)
            i = np.asarray(pu.sink_current(v, rp_lo, d.r_on, d.r_series), dtype=float)
        else:
            g = 0
            for link, _, rp in far:
                g = g + 1.0 / (rp + link.r_on)
            v_th = 0
            for link, vv, rp in far:
                v_th = v_th + vv / (rp + link.r_on)
            vb, _, i = (np.asarray(x, dtype=float) for x in pu.translator_low_levels(
                v, rp_lo, v_th / g, 1.0 / g, 0.0, d.r_on + d.r_series))
        levels.append((vb, i, d, None))
    for d, link, v_other, rp_other in far_drivers(far, segs, signal):
        _, vf, _ = pu.translator_low_levels(v_other, rp_other, v, rp_lo, link.r_on,
                                            d.r_on + d.r_series)
        levels.append((np.asarray(vf, dtype=float), None, d, link))
    return levels, offset_levels


def fall_bounds(lim, rp_lo, cb, v, drivers, far, segs, signal: str) -> list:
    """Upper bound of the fall time from each driver's guaranteed sink (and from each
    across a translator, through its on-resistance): ``(t, driver, link or None)``. [s]"""
    v_lo, v_hi = lim.measuring_levels(v)
    out = []
    for d in drivers:
        out.append((np.asarray(pu.fall_time_bound(rp_lo, cb, v, d.v_ol, d.i_ol, v_hi, v_lo,
                                                  d.r_series), dtype=float), d, None))
    for d, link, _, _ in far_drivers(far, segs, signal):
        out.append((np.asarray(pu.fall_time_bound(rp_lo, cb, v, d.v_ol, d.i_ol, v_hi, v_lo,
                                                  d.r_series + link.r_on), dtype=float),
                    d, link))
    return out
