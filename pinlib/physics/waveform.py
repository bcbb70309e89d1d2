"""Edge waveforms of a push-pull driver into lumped and transmission-line loads.

Two circuit models and a set of waveform metrics:

* :func:`lumped_response` -- a linear source ramp behind a resistance into one
  capacitance (closed form, :func:`pinlib.physics.rc.ramp_rc_response`);
* :func:`distributed_response` -- the same source into a chain of lossless line
  sections with capacitive loads, solved by the method of characteristics
  (Bergeron) on a uniform time grid;
* :func:`edge_time`, :func:`threshold_delay`, :func:`overshoot`, :func:`undershoot`,
  :func:`recrossings` -- figures read off a sampled waveform.

Waveform arrays hold time on their last axis; any leading axes are a batch of cases
(for instance one row per candidate series resistor).  All quantities are SI.

Falling edges.  Every circuit here is linear and starts in its DC steady state, so
the falling edge of a circuit is ``vdd`` minus the rising edge of the same circuit
(same resistances, same loads).  ``edge="fall"`` returns exactly that; a driver
whose output resistance differs between the edges is modelled by passing the
falling-edge ``r_source`` in the call for the fall.
"""

from __future__ import annotations

import math
import warnings
from typing import NamedTuple

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError, ValidityWarning
from pinlib.physics.rc import ramp_rc_response

__all__ = [
    "Waveform",
    "Recrossings",
    "edge_time",
    "threshold_delay",
    "overshoot",
    "undershoot",
    "recrossings",
    "lumped_response",
    "distributed_response",
]

# Largest relative change of a section delay by rounding it to the time grid before
# distributed_response warns.
_DELAY_ROUNDING_WARN = 0.05
#: An overshoot within this fraction of the level is float rounding of a settled edge.
_SETTLED_RTOL = 1e-12
# Relative tolerance on the spacing of the time grid given to distributed_response.
_GRID_RTOL = 1e-6
# Longest run of time steps solved together, and a cap on the elements of the
# per-block propagation matrices (nodes x cases x block^2) so memory stays bounded.
_MAX_BLOCK = 64
_MAX_BLOCK_ELEMENTS = 4_000_000


class Waveform(NamedTuple):
    """A sampled waveform.

    Attributes
    ----------
    t : numpy.ndarray
        Sample times, shape ``(n,)``. [s]
    v : numpy.ndarray
        Voltage at the far end (the receiver), shape ``batch + (n,)``. [V]
    junctions : numpy.ndarray or None
        Voltage at every junction of the line chain, shape
        ``batch + (sections + 1, n)``: index 0 is the driver end (after the source
        resistance), the last index the far end.  ``None`` unless requested. [V]
    """

    t: np.ndarray
    v: np.ndarray
    junctions: np.ndarray | None = None


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
    t = np.asarray(t, dtype=float)
    v = np.asarray(v, dtype=float)
    if t.ndim != 1 or t.size < 2:
        raise InputError(M.TIME_NOT_1D, field="t",
                         value=t.shape, expected="shape (n,), n >= 2")
    if v.shape[-1:] != t.shape:
        raise InputError(M.SAMPLES_NOT_ON_TIME_AXIS, field="v",
                         value=v.shape, expected=f"shape (..., {t.size})")
    return t, v


def _first_upward(t: np.ndarray, u: np.ndarray, level, start=None) -> tuple:
    """First upward crossing of ``level`` by ``u`` along the last axis, at or after ``start``.

    Returns the interpolated time (NaN where there is none) and the index of the first
    sample at or above the level (0 where there is none).
    """
    level = np.asarray(level, dtype=float)[..., None]
    reached = u >= level
    if start is not None:
        reached &= np.arange(u.shape[-1]) >= start[..., None]
    found = reached.any(axis=-1)
    k = np.argmax(reached, axis=-1)
    km1 = np.maximum(k - 1, 0)
    u1 = np.take_along_axis(u, k[..., None], axis=-1)[..., 0]
    u0 = np.take_along_axis(u, km1[..., None], axis=-1)[..., 0]
    t1 = t[k]
    t0 = t[km1]
    # k > 0 means u0 < level <= u1, so u1 - u0 > 0; at k = 0 take the first sample.
    interpolate = k > 0
    du = np.where(interpolate, u1 - u0, 1.0)
    frac = np.where(interpolate, (level[..., 0] - u0) / du, 0.0)
    tc = np.where(interpolate, t0 + frac * (t1 - t0), t1)
    return np.where(found, tc, np.nan), k, found


def edge_time(t, v, v_final, lo=0.1, hi=0.9, *, v_initial=0.0):
    """Edge time between two fractions of the swing (10-90 % by default).

    Parameters
    ----------
    t : array_like
        Sample times, shape ``(n,)``. [s]
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
    t_lo, k_lo, _ = _first_upward(t, u, lo)
    t_hi, _, _ = _first_upward(t, u, np.broadcast_to(hi, k_lo.shape), start=k_lo)
    out = t_hi - t_lo
    return out[()] if np.ndim(out) == 0 else out


def threshold_delay(t, v, v_th, *, edge="rise"):
    """Time of the first crossing of a threshold.

    Parameters
    ----------
    t : array_like
        Sample times, shape ``(n,)``. [s]
    v : array_like
        Samples, shape ``batch + (n,)``. [V]
    v_th : float or array_like
        Threshold (VIH for a rising edge, VIL for a falling one). [V]
    edge : {"rise", "fall"}, optional
        Direction of the crossing sought. [1]

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
    tc, _, _ = _first_upward(t, sign * v, sign * np.asarray(v_th, dtype=float))
    return tc[()] if np.ndim(tc) == 0 else tc


def overshoot(v, v_high):
    """Overshoot above the final high level.

    Parameters
    ----------
    v : array_like
        Samples of a rising edge, time on the last axis. [V]
    v_high : float or array_like
        Final high level (the driver's supply). [V]

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
    excess = v.max(axis=-1) - high
    out = np.where(excess > _SETTLED_RTOL * np.abs(high), excess, 0.0)
    return out[()] if np.ndim(out) == 0 else out


def undershoot(v, v_low=0.0):
    """Undershoot below the final low level of a falling edge.

    Parameters
    ----------
    v : array_like
        Samples of a falling edge, time on the last axis. [V]
    v_low : float or array_like, optional
        Final low level; 0 V (ground) by default. [V]

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
    dip = low - v.min(axis=-1)
    scale = np.maximum(np.abs(v).max(axis=-1), np.abs(low))
    out = np.where(dip > _SETTLED_RTOL * scale, dip, 0.0)
    return out[()] if np.ndim(out) == 0 else out


def recrossings(t, v, v_il, v_ih, *, edge="rise"):
    """Count threshold re-crossings caused by ringing after an edge.

    Parameters
    ----------
    t : array_like
        Sample times, shape ``(n,)``. [s]
    v : array_like
        Samples, shape ``batch + (n,)``. [V]
    v_il : float or array_like
        Receiver low-level input threshold VIL(max). [V]
    v_ih : float or array_like
        Receiver high-level input threshold VIH(min). [V]
    edge : {"rise", "fall"}, optional
        Direction of the edge. [1]

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
    th_entry = np.where(sign > 0, v_ih, -v_il)[..., None]
    th_opposite = np.where(sign > 0, v_il, -v_ih)[..., None]
    th_entry, th_opposite = np.broadcast_arrays(th_entry, th_opposite)

    t_first, k_first, found = _first_upward(t, u, th_entry[..., 0])
    after = np.arange(u.shape[-1])[1:] > k_first[..., None]
    after &= found[..., None]
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
    t_again = t[last] + frac * (t[i1] - t[last])
    t_settled = np.where(has_rise_again, t_again, t_first)
    t_settled = np.where(found & above_e[..., -1], t_settled, np.nan)

    def _out(x):
        return x[()] if np.ndim(x) == 0 else x

    return Recrossings(_out(n_entry), _out(n_opposite), _out(t_settled))


# --------------------------------------------------------------------------- circuits


def _source_samples(t: np.ndarray, vdd: np.ndarray, t_ramp: np.ndarray) -> np.ndarray:
    """Thevenin source: 0 -> vdd linearly over t_ramp from t = 0; shape batch + (n,)."""
    ramp = t_ramp[..., None]
    has_ramp = ramp > 0.0
    # Divide only where the ramp has a duration; a step (t_ramp = 0) is 0 at t = 0 and
    # vdd after it.
    fraction = np.where(has_ramp, np.clip(t / np.where(has_ramp, ramp, 1.0), 0.0, 1.0),
                        (t > 0.0).astype(float))
    return vdd[..., None] * fraction


def lumped_response(t, vdd, t_ramp, r_source, c_load, *, edge="rise"):
    """Edge of a ramping source behind a resistance into a single capacitance.

    Parameters
    ----------
    t : array_like
        Sample times from the start of the source ramp, shape ``(n,)``. [s]
    vdd : float or array_like
        Swing of the source (its high level; the low level is 0 V). [V]
    t_ramp : float or array_like
        Duration of the source ramp, 0 % to 100 %; 0 for a step. [s]
    r_source : float or array_like
        Total series resistance: driver output resistance plus series resistor. [Ω]
    c_load : float or array_like
        Total load capacitance (receiver pins, trace, connector). [F]
    edge : {"rise", "fall"}, optional
        ``"rise"``: 0 -> vdd; ``"fall"``: vdd -> 0. [1]

    Returns
    -------
    Waveform
        ``v`` has shape ``broadcast(vdd, t_ramp, r_source, c_load) + (n,)``.

    Notes
    -----
    ``v(t) = vdd * ramp_rc_response(t, t_ramp, r_source * c_load)`` (exact); the fall is
    ``vdd - v(t)`` (see the module notes).

    Examples
    --------
    >>> w = lumped_response(np.array([0.0, 1e-9]), 1.0, 0.0, 1000.0, 1e-12)
    >>> round(float(w.v[-1]), 4)
    0.6321
    """
    sign = _edge_sign(edge)
    t = np.asarray(t, dtype=float)
    vdd, t_ramp, r_source, c_load = np.broadcast_arrays(
        *(np.asarray(x, dtype=float) for x in (vdd, t_ramp, r_source, c_load)))
    if not np.all(r_source >= 0.0) or not np.all(c_load >= 0.0):
        raise InputError(M.NEGATIVE_SOURCE_OR_LOAD,
                         field="r_source, c_load", value=(r_source, c_load),
                         expected="values >= 0 [Ω], [F]")
    rise = vdd[..., None] * ramp_rc_response(t, t_ramp[..., None],
                                             (r_source * c_load)[..., None])
    v = rise if sign > 0 else vdd[..., None] - rise
    return Waveform(t, v)


def _phi(x: np.ndarray) -> np.ndarray:
    """(1 - exp(-x)) / x for x >= 0 with phi(0) = 1 and phi(inf) = 0."""
    small = x < 1e-5
    x_safe = np.where(small, 1.0, x)
    x_small = np.where(small, x, 0.0)
    return np.where(small, 1.0 - x_small / 2.0 + x_small * x_small / 6.0,
                    -np.expm1(-x_safe) / x_safe)


def distributed_response(t, vdd, t_ramp, r_source, sections, c_load, c_mid=None, *,
                         mid_junction=1, edge="rise", all_junctions=False):
    """Edge of a ramping source through a chain of lossless lines into capacitive loads.

    Parameters
    ----------
    t : array_like
        Uniform time grid starting at 0, shape ``(n,)``; its step ``dt`` is the
        solver's step. [s]
    vdd : float or array_like
        Swing of the source (its high level; the low level is 0 V). [V]
    t_ramp : float or array_like
        Duration of the source ramp, 0 % to 100 %; 0 for a step. [s]
    r_source : float or array_like
        Total series resistance at the driver end: output resistance plus series
        resistor; 0 for an ideal source. [Ω]
    sections : sequence of (z0, td)
        Line sections from driver to far end: characteristic impedance ``z0``
        (float or array broadcast with the batch) [Ω] and one-way delay ``td``
        (a float, the same for the whole batch) [s].  An empty chain, or sections of
        zero delay, are allowed (no line). [Ω, s]
    c_load : float or array_like
        Capacitance at the far end. [F]
    c_mid : float or array_like, optional
        Extra capacitance at junction ``mid_junction`` (a second receiver part way
        along, a connector). [F]
    mid_junction : int, optional
        Junction carrying ``c_mid``: 0 is the driver end, ``i`` the boundary after the
        ``i``-th section; 1 (after the first section) by default. [1]
    edge : {"rise", "fall"}, optional
        ``"rise"``: 0 -> vdd; ``"fall"``: vdd -> 0 (``vdd`` minus the rise of the same
        circuit, see the module notes). [1]
    all_junctions : bool, optional
        Also return the waveform of every junction (``Waveform.junctions``). [1]

    Returns
    -------
    Waveform
        ``v`` (far end) has shape ``batch + (n,)``, the batch being the broadcast of
        ``vdd``, ``t_ramp``, ``r_source``, ``c_load``, ``c_mid`` and every ``z0``.

    Notes
    -----
    Method of characteristics (Bergeron).  A lossless line of impedance Z seen from
    one end is a source ``2 v_inc`` behind Z, ``v_inc`` being the wave that arrives at
    that end, launched ``td`` earlier from the other end as ``v - v_inc`` there.  Each
    junction j is then a single node with conductance ``G = sum(1/Z) (+ 1/r_source)``,
    capacitance ``C`` and an injected current ``I = sum(2 v_inc / Z) (+ v_s / r_source)``
    that depends only on waves launched at least one delay earlier, so all junctions
    are solved independently at each step::

        C dv/dt + G v = I(t)

    The node update is the exact solution for ``I`` linear between samples (an
    exponential companion model, stable and free of numerical ringing for any step;
    a junction without capacitance reduces to ``v = I / G``), with ``h = G dt / C``,
    ``a = exp(-h)``, ``p = (1 - a) / h``::

        v[n+1] = a v[n] + (1 - p) I[n+1] / G + (p - a) I[n] / G

    **Grid.**  Each section's delay is rounded to a whole number of steps,
    ``round(td / dt)`` (an error of at most ``dt / 2`` per section, which shifts the
    reflections by that much); a :class:`ValidityWarning` is issued when this changes a
    delay by more than 5 %, and a delay shorter than ``dt / 2`` that is not exactly 0
    is refused.  Choose ``dt`` as a divisor of the delays and at most about a tenth
    of the shortest delay and of the ramp.  With ``t_ramp`` a multiple of ``dt`` the
    source is represented exactly; a chain of zero-delay sections then reproduces
    :func:`lumped_response` to rounding error.

    The circuit starts discharged (all waves zero) and the source starts its ramp at
    ``t = 0``.  Runs of up to ``min(delays)`` steps are solved together with small
    matrix products, so the cost is a few numpy operations per run and section.

    References
    ----------
    H. W. Dommel, "Digital computer solution of electromagnetic transients in single-
    and multiphase networks", IEEE Trans. PAS-88 no. 4 (1969), pp. 388-399 (the
    characteristic-line model); L. Bergeron, *Water Hammer in Hydraulics and Wave
    Surges in Electricity* (1961).

    Examples
    --------
    >>> t = np.arange(0, 801) * 5e-12
    >>> w = distributed_response(t, 1.0, 0.0, 50.0, [(50.0, 1e-9)], 0.0)
    >>> round(float(w.v[199]), 3), round(float(w.v[201]), 3)
    (0.0, 1.0)
    """
    sign = _edge_sign(edge)
    t = np.asarray(t, dtype=float)
    if t.ndim != 1 or t.size < 2 or t[0] != 0.0:
        raise InputError(M.TIME_GRID_FORM,
                         field="t", value=t[:3] if t.ndim == 1 else t.shape,
                         expected="np.arange(n) * dt")
    dt = (t[-1] - t[0]) / (t.size - 1)
    if not dt > 0.0 or not np.allclose(np.diff(t), dt, rtol=_GRID_RTOL, atol=0.0):
        raise InputError(M.TIME_GRID_NOT_UNIFORM, field="t",
                         value=f"steps {np.diff(t).min():.3g} to {np.diff(t).max():.3g} s",
                         expected="np.arange(n) * dt")
    n_t = t.size

    # ---- sections: impedances (batchable) and delays (whole steps) ----------------
    z_list, td_steps, keep = [], [], []
    for k, section in enumerate(sections):
        try:
            z0, td = section
        except (TypeError, ValueError):
            raise InputError(M.SECTION_NOT_A_PAIR,
                             field=f"sections[{k}]", value=section,
                             expected="(z0 [Ω], td [s])") from None
        z0 = np.asarray(z0, dtype=float)
        if not np.all(np.isfinite(z0) & (z0 > 0.0)):
            raise InputError(M.Z0_NOT_POSITIVE,
                             field=f"sections[{k}].z0", value=z0, expected="z0 > 0 [Ω]")
        if np.ndim(td) != 0 or not (math.isfinite(float(td)) and float(td) >= 0.0):
            raise InputError(M.SECTION_DELAY_FORM,
                             field=f"sections[{k}].td", value=td, expected="td >= 0 [s]")
        td = float(td)
        steps = int(round(td / dt))
        if td > 0.0 and steps == 0:
            raise InputError(M.TIME_STEP_TOO_COARSE,
                             field=f"sections[{k}].td", value=td,
                             expected=f"td >= dt/2 = {dt / 2:.3g} s (or a finer grid)")
        if td > 0.0 and abs(steps * dt - td) > _DELAY_ROUNDING_WARN * td:
            warnings.warn(M.DELAY_ROUNDED.format(k=k, td=f"{td:.4g}", steps=steps,
                                                 dt=f"{dt:.4g}", rounded=f"{steps * dt:.4g}"),
                          ValidityWarning, stacklevel=2)
        keep.append(steps > 0)
        if steps > 0:
            z_list.append(z0)
            td_steps.append(steps)
    n_sections_in = len(keep)
    n_sec = len(z_list)  # sections that remain after dropping zero-delay ones
    n_nodes = n_sec + 1
    # node of each original junction: zero-delay sections merge their two ends
    node_of = np.concatenate([[0], np.cumsum(keep, dtype=int)]) if keep else np.array([0])

    if c_mid is None:
        mid_junction = 0  # nothing is placed there
    if not isinstance(mid_junction, (int, np.integer)) or not (
            0 <= mid_junction <= n_sections_in):
        raise InputError(M.MID_JUNCTION_OUT_OF_RANGE, field="mid_junction",
                         value=mid_junction, expected=f"an integer 0..{n_sections_in}")

    # ---- batch ----------------------------------------------------------------------
    c_mid_in = 0.0 if c_mid is None else c_mid
    arrays = [np.asarray(x, dtype=float)
              for x in (vdd, t_ramp, r_source, c_load, c_mid_in, *z_list)]
    batch_shape = np.broadcast_shapes(*(a.shape for a in arrays))
    arrays = [np.broadcast_to(a, batch_shape).reshape(-1) for a in arrays]
    vdd_b, ramp_b, rs_b, cl_b, cm_b, *z_b = arrays
    n_b = vdd_b.size
    for name, a, unit in (("t_ramp", ramp_b, "[s]"), ("r_source", rs_b, "[Ω]"),
                          ("c_load", cl_b, "[F]"), ("c_mid", cm_b, "[F]")):
        if not np.all(np.isfinite(a) & (a >= 0.0)):
            raise InputError(M.MUST_BE_FINITE_NON_NEGATIVE, field=name,
                             value=a, expected=f"values >= 0 {unit}")

    # ---- node conductances, capacitances and companion coefficients ---------------
    g_left = np.zeros((n_nodes, n_b))   # line to the node's left (towards the driver)
    g_right = np.zeros((n_nodes, n_b))  # line to the node's right
    for k, z in enumerate(z_b):
        g_right[k] = 1.0 / z
        g_left[k + 1] = 1.0 / z
    forced = rs_b == 0.0  # ideal source: the driver node follows the source exactly
    g_source = np.where(forced, 0.0, 1.0 / np.where(forced, 1.0, rs_b))
    g_node = g_left + g_right
    g_node[0] += g_source
    # A node with no conductance exists only as a forced driver node with no line;
    # give it a placeholder so no division by zero is formed (its value is overwritten).
    g_node = np.where(g_node > 0.0, g_node, 1.0)
    cap = np.zeros((n_nodes, n_b))
    cap[-1] += cl_b
    cap[node_of[mid_junction]] += cm_b

    has_cap = cap > 0.0
    # h = G dt / C, infinite without capacitance (then a = 0, p = 0: v = I / G).
    h = np.where(has_cap, g_node * dt / np.where(has_cap, cap, 1.0), np.inf)
    a = np.exp(-h)
    p = _phi(h)
    c_now = (1.0 - p) / g_node
    c_prev = (p - a) / g_node

    # ---- source -------------------------------------------------------------------
    v_src = _source_samples(t, vdd_b, ramp_b)                # (B, n)

    # ---- block propagation matrices -------------------------------------------------
    min_delay = min(td_steps) if td_steps else _MAX_BLOCK
    block_cap = max(1, int(math.isqrt(max(1, _MAX_BLOCK_ELEMENTS // (n_nodes * n_b)))))
    block = max(1, min(min_delay, _MAX_BLOCK, block_cap, n_t - 1))
    lag = np.arange(block)[:, None] - np.arange(block)[None, :]
    # P[k, l] = a^(k - l) for l <= k: v over a run of steps = P @ w + a^(k+1) v_start.
    prop = np.where(lag >= 0, a[..., None, None] ** np.maximum(lag, 0), 0.0)
    a_pow = a[..., None] ** np.arange(1, block + 1)

    # ---- histories ------------------------------------------------------------------
    pad = max(td_steps) if td_steps else 0
    fwd = np.zeros((n_sec, n_b, pad + n_t))  # wave launched rightwards at node k
    bwd = np.zeros((n_sec, n_b, pad + n_t))  # wave launched leftwards at node k + 1
    volts = np.zeros((n_nodes, n_b, n_t))
    inc_left = np.zeros((n_nodes, n_b, block))   # arriving from the line on the left
    inc_right = np.zeros((n_nodes, n_b, block))  # arriving from the line on the right

    v_last = np.zeros((n_nodes, n_b))
    i_last = np.zeros((n_nodes, n_b))
    i_last[0] = g_source * v_src[:, 0]
    v_last[0] = np.where(forced, v_src[:, 0], 0.0)
    volts[:, :, 0] = v_last

    n = 1
    while n < n_t:
        m = min(block, n_t - n)
        here = slice(n, n + m)
        q = pad + n
        for k, d in enumerate(td_steps):
            inc_left[k + 1, :, :m] = fwd[k, :, q - d:q - d + m]
            inc_right[k, :, :m] = bwd[k, :, q - d:q - d + m]
        il = inc_left[:, :, :m]
        ir = inc_right[:, :, :m]
        cur = 2.0 * (il * g_left[..., None] + ir * g_right[..., None])
        cur[0] += g_source[:, None] * v_src[:, here]
        cur_prev = np.concatenate([i_last[..., None], cur[..., :-1]], axis=-1)
        w = c_now[..., None] * cur + c_prev[..., None] * cur_prev
        vb = np.matmul(prop[..., :m, :m], w[..., None])[..., 0]
        vb += a_pow[..., :m] * v_last[..., None]
        vb[0] = np.where(forced[:, None], v_src[:, here], vb[0])
        volts[:, :, here] = vb
        if n_sec:
            fwd[:, :, q:q + m] = vb[:-1] - ir[:-1]
            bwd[:, :, q:q + m] = vb[1:] - il[1:]
        i_last = cur[..., -1]
        v_last = vb[..., -1]
        n += m

    if sign < 0:
        volts = vdd_b[None, :, None] - volts
    far = volts[-1].reshape(batch_shape + (n_t,))
    junctions = None
    if all_junctions:
        junctions = np.moveaxis(volts[node_of], 0, 1).reshape(
            batch_shape + (n_sections_in + 1, n_t))
    return Waveform(t, far, junctions)
