"""Figures read off a sampled edge waveform: edge time, threshold delay, overshoot,
undershoot and threshold re-crossings.

Waveform arrays hold time on their last axis; any leading axes are a batch of cases.
A batch of records of different lengths can share one time axis padded to the longest:
``n_valid`` gives each record's own sample count, and the samples after it are left out
(the figures of a row are then those of its own record alone, to the last bit).  The
functions that read times also take ``t`` of the samples' own shape, one grid per
record (records on different steps in one call): each row's figures are then those
of its record on its own grid, to the last bit.
All quantities are SI.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError

__all__ = ["Recrossings", "edge_time", "threshold_delay", "overshoot", "undershoot",
           "recrossings"]

#: An overshoot within this fraction of the level is float rounding of a settled edge.
_SETTLED_RTOL = 1e-12
#: Samples searched first for a batch's first crossings (see :func:`_first_upward`).
_HEAD = 512


class Recrossings(NamedTuple):
    """Threshold re-crossings of an edge after it first entered its new logic level.

    For a rising edge the entry threshold is VIH and the opposite threshold VIL; for a
    falling edge it is the other way round.

    Attributes
    ----------
    entry : numpy.ndarray
        Times the waveform went back across the entry threshold (below VIH on a rise,
        above VIL on a fall). [1]
    opposite : numpy.ndarray
        Times it went back across the opposite threshold (below VIL on a rise, above
        VIH on a fall): a full false transition, a double-clocking risk even for a
        Schmitt-trigger input. [1]
    t_settled : numpy.ndarray
        Time of the last crossing of the entry threshold in the edge's direction, from
        which on the waveform stays in its new level (within the record); NaN if it
        never gets there. [s]
    """

    entry: np.ndarray
    opposite: np.ndarray
    t_settled: np.ndarray


# --------------------------------------------------------------------------- metrics


def _edge_sign(edge: str) -> float:
    if edge == "rise":
        return 1.0
    if edge == "fall":
        return -1.0
    raise InputError(M.UNKNOWN_EDGE, field="edge", value=edge, expected="'rise' or 'fall'")


def _time_axis(t, v) -> tuple[np.ndarray, np.ndarray]:
    """``t`` and ``v`` as arrays: ``t`` one axis ``(n,)``, or one grid per record (the
    shape of ``v``, at least two dimensions)."""
    t = np.asarray(t, dtype=float)
    v = np.asarray(v, dtype=float)
    if t.ndim > 1 and t.shape == v.shape and t.shape[-1] >= 2:
        return t, v
    if t.ndim != 1 or t.size < 2:
        raise InputError(M.TIME_NOT_1D, field="t",
                         value=t.shape, expected="shape (n,), n >= 2")
    if v.shape[-1:] != t.shape:
        raise InputError(M.SAMPLES_NOT_ON_TIME_AXIS, field="v",
                         value=v.shape, expected=f"shape (..., {t.size})")
    return t, v


def _at(t: np.ndarray, k: np.ndarray) -> np.ndarray:
    """The times of samples ``k`` (one index per record): ``t[k]`` on one time axis, each
    record's own on a grid per record."""
    if t.ndim == 1:
        return t[k]
    return np.take_along_axis(t, k[..., None], axis=-1)[..., 0]


def _valid(u: np.ndarray, n_valid) -> np.ndarray | None:
    """Which samples belong to each row's own record (None: all of them)."""
    if n_valid is None:
        return None
    return np.arange(u.shape[-1]) < np.asarray(n_valid)[..., None]


def _first_upward(t: np.ndarray, u: np.ndarray, level, start=None, valid=None) -> tuple:
    """First upward crossing of ``level`` by ``u`` along the last axis, at or after ``start``
    (and within ``valid``, a mask of the samples that count).

    Returns the interpolated time (NaN where there is none), the index of the first
    sample at or above the level (0 where there is none) and whether there is one.

    An edge's first crossings come early in its record: the first :data:`_HEAD` samples
    are searched first, and only the records that do not cross there are searched
    whole.  The first sample at or above the level in the head is the first in the
    record, read from the same samples by the same arithmetic: the same numbers.
    """
    if u.ndim == 1 and np.ndim(level) == 0:
        return _first_upward_1d(t, u, float(level), start, valid)
    n = u.shape[-1]
    if u.ndim < 2 or n <= 2 * _HEAD:
        return _first_upward_in(t, u, level, start, valid)
    tc, k, found = _first_upward_in(t if t.ndim == 1 else t[..., :_HEAD], u[..., :_HEAD],
                                    level, start, None if valid is None else valid[..., :_HEAD])
    if found.all():
        return tc, k, found
    rest = ~found
    level = np.broadcast_to(np.asarray(level, dtype=float), found.shape)[rest]
    start = None if start is None else np.broadcast_to(start, found.shape)[rest]
    valid = None if valid is None else np.broadcast_to(valid, u.shape)[rest]
    got = _first_upward_in(t if t.ndim == 1 else np.broadcast_to(t, u.shape)[rest],
                           u[rest], level, start, valid)
    tc, k, found = tc.copy(), k.copy(), found.copy()
    tc[rest], k[rest], found[rest] = got
    return tc, k, found


def _first_upward_in(t: np.ndarray, u: np.ndarray, level, start=None, valid=None) -> tuple:
    """:func:`_first_upward` over every sample of ``u``."""
    level = np.asarray(level, dtype=float)[..., None]
    reached = u >= level
    if start is not None:
        reached &= np.arange(u.shape[-1]) >= start[..., None]
    if valid is not None:
        reached &= valid
    found = reached.any(axis=-1)
    k = np.argmax(reached, axis=-1)
    km1 = np.maximum(k - 1, 0)
    u1 = np.take_along_axis(u, k[..., None], axis=-1)[..., 0]
    u0 = np.take_along_axis(u, km1[..., None], axis=-1)[..., 0]
    t1 = _at(t, k)
    t0 = _at(t, km1)
    # k > 0 means u0 < level <= u1, so u1 - u0 > 0; at k = 0 take the first sample.
    interpolate = k > 0
    du = np.where(interpolate, u1 - u0, 1.0)
    frac = np.where(interpolate, (level[..., 0] - u0) / du, 0.0)
    tc = np.where(interpolate, t0 + frac * (t1 - t0), t1)
    return np.where(found, tc, np.nan), k, found


def _first_upward_1d(t: np.ndarray, u: np.ndarray, level: float, start, valid) -> tuple:
    """:func:`_first_upward` of one record and one level: the same numbers (the same
    float64 operations on the two samples around the crossing) without the batch's
    gathers, as the batch path returns them for one record."""
    reached = u >= level
    if start is not None:
        reached[:int(start)] = False
    if valid is not None:
        reached &= valid
    k = int(reached.argmax())
    if not reached[k]:
        return np.asarray(np.nan), np.intp(0), np.False_
    if k == 0:
        return np.asarray(t[0]), np.intp(0), np.True_
    u0, u1, t0 = u[k - 1], u[k], t[k - 1]
    return np.asarray(t0 + (level - u0) / (u1 - u0) * (t[k] - t0)), np.intp(k), np.True_


def edge_time(t, v, v_final, lo=0.1, hi=0.9, *, v_initial=0.0, n_valid=None):
    """Edge time between two fractions of the swing (10-90 % by default).

    Parameters
    ----------
    t : array_like
        Sample times, shape ``(n,)``, or one grid per record (the shape of ``v``). [s]
    v : array_like
        Samples, shape ``batch + (n,)``. [V]
    v_final : float or array_like
        Level the edge goes to (``vdd`` on a rise, 0 on a fall). [V]
    lo : float, optional
        Start level as a fraction of the swing; 0.1 by default. [1]
    hi : float, optional
        End level as a fraction of the swing; 0.9 by default. [1]
    v_initial : float or array_like, optional
        Level the edge starts from; 0 V by default. [V]
    n_valid : int or array_like, optional
        Samples of each record, when records of different lengths share ``t`` (see
        the module notes); all by default. [1]

    Returns
    -------
    numpy.ndarray or float
        Time from the first crossing of ``lo`` to the first time the waveform reaches
        ``hi`` after it; NaN if either is not reached. [s]

    Notes
    -----
    Levels are fractions of ``v_final - v_initial`` counted from ``v_initial``, so a
    falling edge is measured with ``v_initial=vdd, v_final=0``.  Crossing times are
    interpolated linearly between samples.  On a ringing edge the end is the *first*
    arrival at ``hi`` (as a ``.meas ... RISE=1`` in SPICE).

    Examples
    --------
    >>> t = np.linspace(0.0, 10.0, 10001)
    >>> round(float(edge_time(t, 1.0 - np.exp(-t), 1.0)), 3)
    2.197
    """
    t, v = _time_axis(t, v)
    v_initial = np.asarray(v_initial, dtype=float)
    swing = np.asarray(v_final, dtype=float) - v_initial
    if not np.all(swing != 0.0):
        raise InputError(M.EDGE_NO_SWING, field="v_final", value=v_final,
                         expected=f"a level different from v_initial = {v_initial} [V]")
    if not 0.0 <= lo < hi <= 1.0:
        raise InputError(M.EDGE_LEVELS_OUT_OF_ORDER, field="lo, hi", value=(lo, hi),
                         expected="0 <= lo < hi <= 1")
    u = (v - v_initial[..., None]) / swing[..., None]
    valid = _valid(u, n_valid)
    t_lo, k_lo, _ = _first_upward(t, u, lo, valid=valid)
    t_hi, _, _ = _first_upward(t, u, np.broadcast_to(hi, k_lo.shape), start=k_lo,
                               valid=valid)
    out = t_hi - t_lo
    return out[()] if np.ndim(out) == 0 else out


def threshold_delay(t, v, v_th, *, edge="rise", n_valid=None):
    """Time of the first crossing of a threshold.

    Parameters
    ----------
    t : array_like
        Sample times, shape ``(n,)``, or one grid per record (the shape of ``v``). [s]
    v : array_like
        Samples, shape ``batch + (n,)``. [V]
    v_th : float or array_like
        Threshold (VIH for a rising edge, VIL for a falling one). [V]
    edge : {"rise", "fall"}, optional
        Direction of the crossing sought. [1]
    n_valid : int or array_like, optional
        Samples of each record (see the module notes); all by default. [1]

    Returns
    -------
    numpy.ndarray or float
        First time at which the waveform reaches ``v_th`` going up (``"rise"``) or
        down (``"fall"``), linearly interpolated; NaN if never. [s]

    Examples
    --------
    >>> t = np.linspace(0.0, 4.0, 401)
    >>> float(threshold_delay(t, t / 4.0, 0.5))
    2.0
    """
    t, v = _time_axis(t, v)
    sign = _edge_sign(edge)
    u = sign * v
    tc, _, _ = _first_upward(t, u, sign * np.asarray(v_th, dtype=float),
                             valid=_valid(u, n_valid))
    return tc[()] if np.ndim(tc) == 0 else tc


def overshoot(v, v_high, *, n_valid=None):
    """Overshoot above the final high level.

    Parameters
    ----------
    v : array_like
        Samples of a rising edge, time on the last axis. [V]
    v_high : float or array_like
        Final high level (the driver's supply). [V]
    n_valid : int or array_like, optional
        Samples of each record (see the module notes); all by default. [1]

    Returns
    -------
    numpy.ndarray or float
        ``max(v) - v_high``, or 0 if the waveform stays at or below it; an excess within
        1e-12 of ``v_high`` is the rounding of a settled edge and reads 0. [V]

    Examples
    --------
    >>> round(float(overshoot([0.0, 3.6, 3.2, 3.3], 3.3)), 3)
    0.3
    """
    v = np.asarray(v, dtype=float)
    high = np.asarray(v_high, dtype=float)
    valid = _valid(v, n_valid)
    excess = (v if valid is None else np.where(valid, v, -np.inf)).max(axis=-1) - high
    out = np.where(excess > _SETTLED_RTOL * np.abs(high), excess, 0.0)
    return out[()] if np.ndim(out) == 0 else out


def undershoot(v, v_low=0.0, *, n_valid=None):
    """Undershoot below the final low level of a falling edge.

    Parameters
    ----------
    v : array_like
        Samples of a falling edge, time on the last axis. [V]
    v_low : float or array_like, optional
        Final low level; 0 V (ground) by default. [V]
    n_valid : int or array_like, optional
        Samples of each record (see the module notes); all by default. [1]

    Returns
    -------
    numpy.ndarray or float
        ``v_low - min(v)`` (``-min(v)`` for ground), or 0 if it stays at or above it; a
        dip within 1e-12 of the waveform's largest level is the rounding of a settled
        edge and reads 0. [V]

    Examples
    --------
    >>> float(undershoot([3.3, -0.4, 0.1, 0.0]))
    0.4
    >>> float(undershoot([3.3, 1.0, -8.9e-16]))
    0.0
    """
    v = np.asarray(v, dtype=float)
    low = np.asarray(v_low, dtype=float)
    valid = _valid(v, n_valid)
    if valid is None:
        v_min, v_abs = v.min(axis=-1), np.abs(v).max(axis=-1)
    else:  # the largest |v| is the largest v or the negated smallest: the same number
        v_min = np.where(valid, v, np.inf).min(axis=-1)
        v_abs = np.maximum(np.where(valid, v, -np.inf).max(axis=-1), -v_min)
    dip = low - v_min
    scale = np.maximum(v_abs, np.abs(low))
    out = np.where(dip > _SETTLED_RTOL * scale, dip, 0.0)
    return out[()] if np.ndim(out) == 0 else out


def recrossings(t, v, v_il, v_ih, *, edge="rise", n_valid=None):
    """Count threshold re-crossings caused by ringing after an edge.

    Parameters
    ----------
    t : array_like
        Sample times, shape ``(n,)``, or one grid per record (the shape of ``v``). [s]
    v : array_like
        Samples, shape ``batch + (n,)``. [V]
    v_il : float or array_like
        Receiver low-level input threshold VIL(max). [V]
    v_ih : float or array_like
        Receiver high-level input threshold VIH(min). [V]
    edge : {"rise", "fall"}, optional
        Direction of the edge. [1]
    n_valid : int or array_like, optional
        Samples of each record (see the module notes); all by default. [1]

    Returns
    -------
    Recrossings
        ``entry``: how often, after first reaching VIH, a rising edge falls back below
        VIH; ``opposite``: how often it falls back below VIL; ``t_settled``: the last
        time it rose through VIH.  A falling edge is mirrored (first reaching VIL, then
        rising back above VIL / above VIH).

    Notes
    -----
    A count is taken between consecutive samples, so ringing faster than the sample
    interval is not seen.  A receiver without hysteresis may clock twice on any
    ``entry`` re-crossing; one with hysteresis only on ``opposite`` ones.

    Examples
    --------
    >>> t = np.arange(6.0)
    >>> r = recrossings(t, [0.0, 0.8, 0.6, 0.9, 0.2, 1.0], 0.3, 0.7)
    >>> int(r.entry), int(r.opposite)
    (2, 1)
    """
    t, v = _time_axis(t, v)
    sign = _edge_sign(edge)
    v_il = np.asarray(v_il, dtype=float)
    v_ih = np.asarray(v_ih, dtype=float)
    if not np.all(v_ih > v_il):
        raise InputError(M.VIH_NOT_ABOVE_VIL, field="v_ih", value=v_ih,
                         expected=f"v_ih > v_il = {v_il} [V]")
    # Mirror a falling edge onto a rising one: its entry threshold is VIL.
    u = sign * v
    if u.ndim == 1 and n_valid is None and v_il.ndim == 0 and v_ih.ndim == 0:
        return _recrossings_1d(t, u, float(v_ih if sign > 0 else -v_il),
                               float(v_il if sign > 0 else -v_ih))
    th_entry = np.where(sign > 0, v_ih, -v_il)[..., None]
    th_opposite = np.where(sign > 0, v_il, -v_ih)[..., None]
    th_entry, th_opposite = np.broadcast_arrays(th_entry, th_opposite)

    valid = _valid(u, n_valid)
    t_first, k_first, found = _first_upward(t, u, th_entry[..., 0], valid=valid)
    after = np.arange(u.shape[-1])[1:] > k_first[..., None]
    after &= found[..., None]
    if valid is not None:
        after &= valid[..., 1:]  # the pair ends within the record
    above_e = u >= th_entry
    above_o = u >= th_opposite
    fell_e = above_e[..., :-1] & ~above_e[..., 1:] & after
    fell_o = above_o[..., :-1] & ~above_o[..., 1:] & after
    rose_e = ~above_e[..., :-1] & above_e[..., 1:] & after
    n_entry = fell_e.sum(axis=-1)
    n_opposite = fell_o.sum(axis=-1)

    # Last upward crossing of the entry threshold (the first one if it never fell back),
    # and only if the record ends above it.
    last = (u.shape[-1] - 2) - np.argmax(rose_e[..., ::-1], axis=-1)
    has_rise_again = rose_e.any(axis=-1)
    i1 = last + 1
    u0 = np.take_along_axis(u, last[..., None], axis=-1)[..., 0]
    u1 = np.take_along_axis(u, i1[..., None], axis=-1)[..., 0]
    du = np.where(has_rise_again, u1 - u0, 1.0)
    frac = np.where(has_rise_again, (th_entry[..., 0] - u0) / du, 0.0)
    t_last = _at(t, last)
    t_again = t_last + frac * (_at(t, i1) - t_last)
    t_settled = np.where(has_rise_again, t_again, t_first)
    if valid is None:
        ends_above = above_e[..., -1]
    else:
        last_sample = np.broadcast_to(np.asarray(n_valid)[..., None] - 1,
                                      above_e.shape[:-1] + (1,))
        ends_above = np.take_along_axis(above_e, last_sample, axis=-1)[..., 0]
    t_settled = np.where(found & ends_above, t_settled, np.nan)

    def _out(x):
        return x[()] if np.ndim(x) == 0 else x

    return Recrossings(_out(n_entry), _out(n_opposite), _out(t_settled))


def _recrossings_1d(t: np.ndarray, u: np.ndarray, th_entry: float,
                    th_opposite: float) -> Recrossings:
    """:func:`recrossings` of one whole record (``u`` mirrored onto a rising edge, its
    two thresholds): the same counts and the same float64 operations for the time, on
    the samples from the first arrival on.  There ``u`` starts at or above both
    thresholds, so its crossings of each alternate, a fall first: the falls are every
    other crossing, and the last rise of the entry threshold is the last crossing when
    their number is even."""
    t_first, k, found = _first_upward_1d(t, u, th_entry, None, None)
    if not found:
        return Recrossings(np.int64(0), np.int64(0), np.float64(np.nan))
    a = u[k:]
    above_e = a >= th_entry
    cross_e = np.flatnonzero(above_e[1:] != above_e[:-1])
    above_o = a >= th_opposite
    n_opposite = np.count_nonzero(above_o[1:] != above_o[:-1])
    t_settled = t_first[()]
    if cross_e.size >= 2:   # the last upward crossing of the entry threshold
        last = k + int(cross_e[-1] if cross_e.size % 2 == 0 else cross_e[-2])
        u0, u1, t0 = u[last], u[last + 1], t[last]
        t_settled = t0 + (th_entry - u0) / (u1 - u0) * (t[last + 1] - t0)
    if not u[-1] >= th_entry:   # it ends below: not settled
        t_settled = np.float64(np.nan)
    return Recrossings(np.int64((cross_e.size + 1) // 2), np.int64((n_opposite + 1) // 2),
                       t_settled)
