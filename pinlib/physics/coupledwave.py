"""Waveforms at the four ends of a symmetric coupled pair with real terminations.

The closed forms of :mod:`pinlib.physics.coupled` hold for lines matched at both ends; an
open-drain victim is not: a pull-up of kilohms at one end, inputs of a few picofarads at
the other, a sink of tens of ohms when held low. Here the pair is solved in time instead.

Method
------
A symmetric pair has two uncoupled modes (even, odd) with the orthonormal transform
``T = [[1, 1], [1, -1]]/sqrt(2)`` (it diagonalises the symmetric L and C matrices).
Each mode is a lossless line of impedance Zk and delay tk = length*sqrt(er_eff_k)/c,
solved by the method of characteristics (Bergeron): with the current I taken into the
line at both ends, ``V0(t) - Z I0(t) = V1(t - tau) + Z I1(t - tau)`` and the same with
the ends swapped (e.g. Dommel, 'Digital computer solution of electromagnetic transients
in single- and multiphase networks', IEEE Trans. PAS-88, 1969). At each end the two
conductors meet their terminations: a resistor R to a source voltage and a capacitor C
to ground on each (backward Euler in the capacitor), a 2 x 2 solve per step. Delays are
read from the stored history by linear interpolation, so the step must not exceed the
shorter modal delay.

The start is the DC state of the terminations (the line carries their DC current).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.physics.coupled import CoupledLine
from pinlib.physics.guards import positive
from pinlib.physics.lines.model import C0

__all__ = ["EndLoads", "PairWaves", "coupled_waves"]

_T = np.array([[1.0, 1.0], [1.0, -1.0]]) / np.sqrt(2.0)


@dataclass(frozen=True)
class EndLoads:
    """The terminations of both conductors at one end of the pair.

    Attributes
    ----------
    r : (float, float)
        Resistance of each conductor (aggressor, victim) to its source; inf for none. [Ω]
    c : (float, float)
        Capacitance of each to ground. [F]
    v : array_like, shape (2,) or (2, nt)
        Source voltage of each, constant or sampled on the time grid. [V]
    """

    r: tuple[float, float]
    c: tuple[float, float]
    v: object = (0.0, 0.0)


@dataclass(frozen=True)
class PairWaves:
    """Voltages at the ends of the pair, each of shape (2, nt): row 0 the aggressor,
    row 1 the victim. ``near`` is the end of :class:`EndLoads` ``near``. [V]"""

    t: np.ndarray
    near: np.ndarray
    far: np.ndarray


def _end(loads: EndLoads, nt: int, name: str):
    r = np.asarray(loads.r, dtype=float)
    c = np.asarray(loads.c, dtype=float)
    if r.shape != (2,) or c.shape != (2,) or np.any(~(r > 0)) or np.any(~(c >= 0)):
        raise InputError(M.PARAMETER_OUT_OF_RANGE.format(name=name), field=name,
                         value=(tuple(r.ravel()), tuple(c.ravel())),
                         expected="two resistances > 0 (inf for none) and two "
                                  "capacitances >= 0")
    v = np.asarray(loads.v, dtype=float)
    v = np.broadcast_to(v.reshape(2, -1) if v.size != 2 else v.reshape(2, 1), (2, nt))
    g = np.where(np.isfinite(r), 1.0 / r, 0.0)
    return g, c, v


def _dc(g0, v0, g1, v1):
    """DC voltage of each conductor and the current into the line at end 0."""
    gs = g0 + g1
    v = np.where(gs > 0, (g0 * v0 + g1 * v1) / np.where(gs > 0, gs, 1.0), 0.0)
    return v, g0 * (v0 - v)


def coupled_waves(line: CoupledLine, length, t, near: EndLoads, far: EndLoads) -> PairWaves:
    """Solve the pair's end voltages on a uniform time grid.

    Parameters
    ----------
    line : CoupledLine
        The pair per length (scalar fields).
    length : float
        Length the traces run side by side. [m]
    t : array_like
        Uniform time grid from its first point; its step must not exceed the shorter
        modal delay. [s]
    near, far : EndLoads
        Terminations at the two ends.
    """
    length = float(positive(length, "length", "[m]"))
    t = np.asarray(t, dtype=float)
    dt = float(t[1] - t[0]) if t.size > 1 else 0.0
    z = np.array([float(line.z_even), float(line.z_odd)])
    tau = length * np.sqrt([float(line.er_eff_even), float(line.er_eff_odd)]) / C0
    if not dt > 0 or dt > tau.min():
        raise InputError(M.PARAMETER_OUT_OF_RANGE.format(name="t"), field="t", value=dt,
                         expected=f"a uniform step > 0 and <= the shorter modal delay "
                                  f"{tau.min():.4g} s")
    nt = t.size
    g0, c0, vs0 = _end(near, nt, "near")
    g1, c1, vs1 = _end(far, nt, "far")
    zc = _T @ np.diag(z) @ _T
    solve0 = np.linalg.inv(np.eye(2) + zc @ np.diag(g0 + c0 / dt))
    solve1 = np.linalg.inv(np.eye(2) + zc @ np.diag(g1 + c1 / dt))
    v_dc, i_dc = _dc(g0, vs0[:, 0], g1, vs1[:, 0])
    # modal history at both ends: V + Z I as the wave leaving each end
    out0 = np.empty((nt, 2))
    out1 = np.empty((nt, 2))
    init0 = _T @ v_dc + z * (_T @ i_dc)
    init1 = _T @ v_dc + z * (_T @ -i_dc)
    lag = tau / dt
    v_near = np.empty((2, nt))
    v_far = np.empty((2, nt))
    vp0, vp1 = v_dc.copy(), v_dc.copy()
    modes = np.arange(2)
    for n in range(nt):
        pos = n - lag
        lo = np.floor(pos).astype(int)
        frac = pos - lo
        ok = lo >= 0
        # waves arriving now: those that left the other end tau ago
        a1 = np.where(ok, (1 - frac) * out1[np.maximum(lo, 0), modes]
                      + frac * out1[np.clip(lo + 1, 0, max(n - 1, 0)), modes], init1)
        a0 = np.where(ok, (1 - frac) * out0[np.maximum(lo, 0), modes]
                      + frac * out0[np.clip(lo + 1, 0, max(n - 1, 0)), modes], init0)
        e0, e1 = _T @ a1, _T @ a0
        v0 = solve0 @ (e0 + zc @ (g0 * vs0[:, n] + c0 / dt * vp0))
        v1 = solve1 @ (e1 + zc @ (g1 * vs1[:, n] + c1 / dt * vp1))
        i0 = g0 * (vs0[:, n] - v0) - c0 / dt * (v0 - vp0)
        i1 = g1 * (vs1[:, n] - v1) - c1 / dt * (v1 - vp1)
        out0[n] = _T @ v0 + z * (_T @ i0)
        out1[n] = _T @ v1 + z * (_T @ i1)
        v_near[:, n], v_far[:, n] = v0, v1
        vp0, vp1 = v0, v1
    return PairWaves(t, v_near, v_far)
