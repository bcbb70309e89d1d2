"""Edge waveforms of a ramping source into a lumped load and into a chain of lines.

:func:`lumped_response` is the closed form into one capacitance;
:func:`distributed_response` solves a chain of lossless line sections with capacitive
loads by the method of characteristics (Bergeron) on a uniform time grid.  Both return
a :class:`Waveform`.
"""

from __future__ import annotations

import math
import warnings
from typing import NamedTuple

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError, ValidityWarning
from pinlib.physics.rc import ramp_rc_response
from pinlib.physics.waveform.metrics import _edge_sign

__all__ = ["Waveform", "lumped_response", "distributed_response"]


# Largest relative change of a section delay by rounding it to the time grid before
# distributed_response warns.
_DELAY_ROUNDING_WARN = 0.05
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
    t, dt = _time_grid(t)
    n_t = t.size
    z_list, td_steps, keep = _line_sections(sections, dt)
    n_sections_in = len(keep)
    # node of each original junction: zero-delay sections merge their two ends
    node_of = np.concatenate([[0], np.cumsum(keep, dtype=int)]) if keep else np.array([0])

    if c_mid is None:
        mid_junction = 0  # nothing is placed there
    if not isinstance(mid_junction, (int, np.integer)) or not (
            0 <= mid_junction <= n_sections_in):
        raise InputError(M.MID_JUNCTION_OUT_OF_RANGE, field="mid_junction",
                         value=mid_junction, expected=f"an integer 0..{n_sections_in}")

    batch_shape, (vdd_b, ramp_b, rs_b, cl_b, cm_b, *z_b) = _batch(
        vdd, t_ramp, r_source, c_load, 0.0 if c_mid is None else c_mid, z_list)
    nodes = _nodes(z_b, rs_b, cl_b, cm_b, node_of[mid_junction], dt)
    v_src = _source_samples(t, vdd_b, ramp_b)                # (B, n)
    volts = _march(nodes, td_steps, v_src, n_t)

    if sign < 0:
        volts = vdd_b[None, :, None] - volts
    far = volts[-1].reshape(batch_shape + (n_t,))
    junctions = None
    if all_junctions:
        junctions = np.moveaxis(volts[node_of], 0, 1).reshape(
            batch_shape + (n_sections_in + 1, n_t))
    return Waveform(t, far, junctions)


def _time_grid(t) -> tuple[np.ndarray, float]:
    """The checked uniform time grid from 0 and its step ``dt``."""
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
    return t, dt


def _line_sections(sections, dt: float):
    """Impedances (batchable) and delays (whole steps) of the sections with a delay.

    Returns ``(z_list, td_steps, keep)``: ``keep`` has one flag per section given,
    False for a zero-delay section (dropped: its two ends are one node).  Warns when
    rounding changes a delay by more than :data:`_DELAY_ROUNDING_WARN`.
    """
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
            # stacklevel 3: the caller of distributed_response
            warnings.warn(M.DELAY_ROUNDED.format(k=k, td=f"{td:.4g}", steps=steps,
                                                 dt=f"{dt:.4g}", rounded=f"{steps * dt:.4g}"),
                          ValidityWarning, stacklevel=3)
        keep.append(steps > 0)
        if steps > 0:
            z_list.append(z0)
            td_steps.append(steps)
    return z_list, td_steps, keep


def _batch(vdd, t_ramp, r_source, c_load, c_mid, z_list):
    """The batch shape and every input broadcast to it, flattened: ``(shape, arrays)``."""
    arrays = [np.asarray(x, dtype=float)
              for x in (vdd, t_ramp, r_source, c_load, c_mid, *z_list)]
    batch_shape = np.broadcast_shapes(*(a.shape for a in arrays))
    arrays = [np.broadcast_to(a, batch_shape).reshape(-1) for a in arrays]
    _, ramp_b, rs_b, cl_b, cm_b, *_ = arrays
    for name, a, unit in (("t_ramp", ramp_b, "[s]"), ("r_source", rs_b, "[Ω]"),
                          ("c_load", cl_b, "[F]"), ("c_mid", cm_b, "[F]")):
        if not np.all(np.isfinite(a) & (a >= 0.0)):
            raise InputError(M.MUST_BE_FINITE_NON_NEGATIVE, field=name,
                             value=a, expected=f"values >= 0 {unit}")
    return batch_shape, arrays


class _Nodes(NamedTuple):
    """The junctions of the chain as companion models, each ``(nodes, batch)``."""

    g_left: np.ndarray    # conductance of the line to the node's left (towards the driver)
    g_right: np.ndarray   # conductance of the line to the node's right
    g_source: np.ndarray  # source conductance (batch,); 0 for an ideal source
    forced: np.ndarray    # (batch,): ideal source, the driver node follows it exactly
    a: np.ndarray         # exp(-G dt / C)
    c_now: np.ndarray     # weight of I[n+1] in v[n+1]
    c_prev: np.ndarray    # weight of I[n] in v[n+1]


def _nodes(z_b, rs_b, cl_b, cm_b, mid_node: int, dt: float) -> _Nodes:
    """Node conductances, capacitances and companion coefficients."""
    n_nodes, n_b = len(z_b) + 1, rs_b.size
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
    cap[mid_node] += cm_b

    has_cap = cap > 0.0
    # h = G dt / C, infinite without capacitance (then a = 0, p = 0: v = I / G).
    h = np.where(has_cap, g_node * dt / np.where(has_cap, cap, 1.0), np.inf)
    a = np.exp(-h)
    p = _phi(h)
    c_now = (1.0 - p) / g_node
    c_prev = (p - a) / g_node
    return _Nodes(g_left, g_right, g_source, forced, a, c_now, c_prev)


def _block_matrices(a: np.ndarray, td_steps: list[int], n_t: int):
    """The run length and its propagation matrices: ``(block, prop, a_pow)``.

    ``prop[..., k, l] = a^(k - l)`` for ``l <= k``: the voltages over a run of steps are
    ``prop @ w + a_pow * v_start``.
    """
    n_nodes, n_b = a.shape
    min_delay = min(td_steps) if td_steps else _MAX_BLOCK
    block_cap = max(1, int(math.isqrt(max(1, _MAX_BLOCK_ELEMENTS // (n_nodes * n_b)))))
    block = max(1, min(min_delay, _MAX_BLOCK, block_cap, n_t - 1))
    lag = np.arange(block)[:, None] - np.arange(block)[None, :]
    # P[k, l] = a^(k - l) for l <= k: v over a run of steps = P @ w + a^(k+1) v_start.
    prop = np.where(lag >= 0, a[..., None, None] ** np.maximum(lag, 0), 0.0)
    a_pow = a[..., None] ** np.arange(1, block + 1)
    return block, prop, a_pow


def _march(nodes: _Nodes, td_steps: list[int], v_src: np.ndarray, n_t: int) -> np.ndarray:
    """Every node's voltage at every step, ``(nodes, batch, n)``, a run of steps at a time."""
    g_left, g_right, g_source, forced, a, c_now, c_prev = nodes
    n_nodes, n_b = a.shape
    n_sec = n_nodes - 1
    block, prop, a_pow = _block_matrices(a, td_steps, n_t)
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
    return volts
