"""Edge waveforms of a ramping source into a lumped load and into a chain of lines.

:func:`lumped_response` is the closed form into one capacitance;
:func:`distributed_response` solves a chain of lossless line sections with capacitive
loads by the method of characteristics (Bergeron) on a uniform time grid.  Both return
a :class:`Waveform`.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.physics.rc import ramp_rc_response
from pinlib.physics.waveform.march import _batch_shape, _non_negative
from pinlib.physics.waveform.metrics import _edge_sign
from pinlib.physics.waveform.tree import _tree, trees

__all__ = ["Waveform", "lumped_response", "distributed_response"]


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
    named = list(zip(("vdd", "t_ramp", "r_source", "c_load"),
                     (np.asarray(x, dtype=float) for x in (vdd, t_ramp, r_source, c_load)),
                     strict=True))
    _batch_shape(named)
    vdd, t_ramp, r_source, c_load = np.broadcast_arrays(*(a for _, a in named))
    if not np.all(r_source >= 0.0) or not np.all(c_load >= 0.0):
        raise InputError(M.NEGATIVE_SOURCE_OR_LOAD,
                         field="r_source, c_load", value=(r_source, c_load),
                         expected="values >= 0 [Ω], [F]")
    rise = vdd[..., None] * ramp_rc_response(t, t_ramp[..., None],
                                             (r_source * c_load)[..., None])
    v = rise if sign > 0 else vdd[..., None] - rise
    return Waveform(t, v)


def distributed_response(t, vdd, t_ramp, r_source, sections, c_load, c_mid=None, *,
                         mid_junction=1, edge="rise", all_junctions=False):
    """Edge of a ramping source through a chain of lossless lines into capacitive loads.

    Parameters
    ----------
    t : array_like
        Uniform time grid starting at 0, shape ``(n,)``; its step ``dt`` is the
        solver's step.  Or one such grid per case, shape ``(B, n)``, each row its own
        step (:mod:`pinlib.physics.waveform.rowgrids`; the batch is then ``(B,)``). [s]
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
    ``t = 0``.  The chain is solved as a tree (:func:`pinlib.physics.waveform.tree_response`,
    nodes ``0 .. len(sections)``, the source at node 0): runs of up to ``min(delays)``
    steps are solved together (:mod:`pinlib.physics.waveform.march`), so the cost is a
    few numpy operations per run.

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
    chain, caps, names = _chain(sections, c_load, c_mid, mid_junction, edge)
    if np.ndim(t) == 2:  # one grid per case: the row solver checks its own shapes
        from pinlib.physics.waveform.rowgrids import tree_rows  # a batched study's only

        w = tree_rows(t, vdd, t_ramp, r_source, chain, caps, 0, edge, stacklevel=4)
    else:
        w = _tree(t, vdd, t_ramp, r_source, chain, caps, 0, edge, stacklevel=4,
                  cap_names=names)
    return Waveform(w.t, w.v[..., -1, :], w.v if all_junctions else None)


def distributed_responses(cases) -> list[Waveform]:
    """:func:`distributed_response` (far end) of each of ``cases``, ``(t, vdd, t_ramp,
    r_source, sections, c_load)`` on a grid of its own (1-D), the single cases of one
    shape solved together (:func:`pinlib.physics.waveform.tree.trees`): each the
    same to the last bit."""
    args = []
    for t, vdd, t_ramp, r_source, sections, c_load in cases:
        chain, caps, names = _chain(sections, c_load, None, 1, "rise")
        args.append((t, vdd, t_ramp, r_source, chain, caps, 0, "rise", 4, names))
    return [Waveform(w.t, w.v[..., -1, :], None) for w in trees(args)]


def _chain(sections, c_load, c_mid, mid_junction, edge) -> tuple[list, list, list]:
    """:func:`distributed_response`'s checked chain: its lines, node capacitances and
    their names."""
    _edge_sign(edge)
    pairs = []
    for k, section in enumerate(sections):
        try:
            z0, td = section
        except (TypeError, ValueError):
            raise InputError(M.SECTION_NOT_A_PAIR,
                             field=f"sections[{k}]", value=section,
                             expected="(z0 [Ω], td [s])") from None
        pairs.append((z0, td))
    if c_mid is None:
        mid_junction = 0  # nothing is placed there
    if not isinstance(mid_junction, (int, np.integer)) or not (
            0 <= mid_junction <= len(pairs)):
        raise InputError(M.MID_JUNCTION_OUT_OF_RANGE, field="mid_junction",
                         value=mid_junction, expected=f"an integer 0..{len(pairs)}")
    for name, value in (("c_load", c_load), ("c_mid", c_mid)):
        if value is not None:
            _non_negative(name, np.asarray(value, dtype=float), "[F]")
    caps = [0.0] * (len(pairs) + 1)
    names = [f"c at junction {k}" for k in range(len(pairs) + 1)]
    caps[-1], names[-1] = c_load, "c_load"
    if c_mid is not None:
        if mid_junction == len(pairs):  # both at the far end: their sum
            _batch_shape([("c_load", np.asarray(c_load, dtype=float)),
                          ("c_mid", np.asarray(c_mid, dtype=float))])
        caps[mid_junction] = caps[mid_junction] + np.asarray(c_mid, dtype=float)
        names[mid_junction] = "c_load + c_mid" if mid_junction == len(pairs) else "c_mid"
    return [(k, k + 1, z0, td) for k, (z0, td) in enumerate(pairs)], caps, names
