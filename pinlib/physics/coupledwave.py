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
shorter modal delay.  A step reads only waves sent at least one delay earlier, so where
every delay spans two steps or more the march goes in runs shorter than the shortest
delay: the waves a run reads are gathered, and all but the capacitors' memory formed,
for the whole run at once (the same arithmetic as step by step, to the last bit).

The start is the DC state of the terminations (the line carries their DC current).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import NamedTuple

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.physics.coupled import CoupledLine
from pinlib.physics.guards import positive
from pinlib.physics.lines.model import C0

__all__ = ["EndLoads", "PairWaves", "coupled_waves", "coupled_waves_batch"]

_T = np.array([[1.0, 1.0], [1.0, -1.0]]) / np.sqrt(2.0)
#: Longest run of steps :func:`_march` gathers at once (its arrays are run x 4B values).
_MAX_RUN = 256


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


def _end(loads: EndLoads, nt: int, name: str, batch: int):
    """Conductances, capacitances (each (B, 2)) and sources ((B, 2, nt)) of one end."""
    r = np.asarray(loads.r, dtype=float)
    c = np.asarray(loads.c, dtype=float)
    if (r.shape[-1:] != (2,) or c.shape[-1:] != (2,) or r.ndim > 2 or c.ndim > 2
            or np.any(~(r > 0)) or np.any(~(c >= 0))):
        raise InputError(M.PARAMETER_OUT_OF_RANGE.format(name=name), field=name,
                         value=(tuple(r.ravel()), tuple(c.ravel())),
                         expected="two resistances > 0 (inf for none) and two "
                                  "capacitances >= 0 (per batch member)")
    r = np.broadcast_to(r, (batch, 2))
    c = np.broadcast_to(c, (batch, 2))
    v = np.asarray(loads.v, dtype=float)
    if v.ndim <= 1 or (v.ndim == 2 and v.shape == (2, nt) and nt != 2):
        v = v.reshape(2, -1)  # one source for every member
    if v.ndim == 2 and v.shape[0] == 2 and v.shape != (batch, 2):
        v = v[None]
    elif v.ndim == 2:  # (B, 2): constant sources per member
        v = v[:, :, None]
    v = np.broadcast_to(v, (batch, 2, nt))
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
    w = coupled_waves_batch(line, np.reshape(float(positive(length, "length", "[m]")), (1,)),
                            t, near, far)
    return PairWaves(w.t, w.near[0], w.far[0])


def coupled_waves_batch(line: CoupledLine, length, t, near: EndLoads,
                        far: EndLoads) -> PairWaves:
    """:func:`coupled_waves` for B pairs at once, on one time grid.

    ``line``'s fields and ``length`` broadcast to shape (B,); each :class:`EndLoads`
    gives ``r`` and ``c`` of shape (2,) or (B, 2) and ``v`` of shape (2,), (2, nt),
    (B, 2) or (B, 2, nt).  Returns :class:`PairWaves` whose ``near`` and ``far`` have
    shape (B, 2, nt).
    """
    length = np.atleast_1d(positive(length, "length", "[m]")).astype(float)
    t = np.asarray(t, dtype=float)
    dt = float(t[1] - t[0]) if t.size > 1 else 0.0
    ze, zo, ee, eo, length = np.broadcast_arrays(
        np.asarray(line.z_even, float), np.asarray(line.z_odd, float),
        np.asarray(line.er_eff_even, float), np.asarray(line.er_eff_odd, float), length)
    z = np.stack([ze, zo], axis=-1).reshape(-1, 2)                       # (B, 2)
    tau = (length[..., None] * np.sqrt(np.stack([ee, eo], axis=-1)) / C0).reshape(-1, 2)
    if not dt > 0 or dt > tau.min():
        raise InputError(M.PARAMETER_OUT_OF_RANGE.format(name="t"), field="t", value=dt,
                         expected=f"a uniform step > 0 and <= the shorter modal delay "
                                  f"{tau.min():.4g} s")
    return _march(z, tau, t, dt, near, far)


class _Setup(NamedTuple):
    """What every step of :func:`_march` uses: the folded terminations (``m``, ``s_n``,
    ``p``; ``gk``, ``k``, ``src`` for the current into the line), the record of the
    waves sent (``rows``, its first ``pad`` rows the DC state) and where each end reads
    the waves the other end sent (``base``, row 0 at weights ``keep`` and ``frac``)."""

    z: np.ndarray
    m: np.ndarray
    s_n: np.ndarray
    p: np.ndarray
    gk: np.ndarray
    k: np.ndarray
    src: np.ndarray
    rows: np.ndarray
    pad: int
    base: np.ndarray
    keep: np.ndarray
    frac: np.ndarray


def _march(z, tau, t, dt, near: EndLoads, far: EndLoads) -> PairWaves:
    """Step the modal characteristics of B pairs through the grid (see the module).

    Both ends are stepped together (axis 0: near, far).  The history of the waves
    leaving the ends is one flat buffer of (P + nt) rows of 2 x B x 2 values, its first
    P rows the DC state (before the edge); a delay of ``tau = (k + f) dt`` reads the
    other end's rows n - k - 1 and n - k at fixed weights.  The terminations' solve is
    folded into constant matrices before the loop.

    Where every delay spans two steps or more, the steps go in runs
    (:func:`_in_runs`), else one by one (:func:`_one_by_one`).  Either way each value
    is the same arithmetic, in the same order and through the same kernels, as a step
    written out on its own.
    """
    nb, nt = z.shape[0], t.size
    g0, c0, vs0 = _end(near, nt, "near", nb)
    g1, c1, vs1 = _end(far, nt, "far", nb)
    g, k = np.stack([g0, g1]), np.stack([c0, c1]) / dt                   # (2, B, 2)
    zc = np.einsum("ij,bj,jk->bik", _T, z, _T)                            # (B, 2, 2)
    solve = np.linalg.inv(np.eye(2) + zc[None] * (g + k)[:, :, None, :])  # (2, B, 2, 2)
    src = np.moveaxis(g[..., None] * np.stack([vs0, vs1]), -1, 0)        # (nt, 2, B, 2)
    # v = solve (T a + zc (src + k vp)) = M a + S[n] + P vp
    zs = solve @ zc[None]
    v_dc, i_dc = _dc(g0, vs0[:, :, 0], g1, vs1[:, :, 0])
    init = np.stack([v_dc @ _T + z * (i_dc @ _T), v_dc @ _T - z * (i_dc @ _T)])
    lag = tau / dt
    width = 4 * nb
    pad = int(np.ceil(lag.max())) + 2
    h = np.zeros((pad + nt) * width)
    h[:pad * width] = np.tile(init.ravel(), pad)
    back = np.floor(-lag).astype(int)                  # row n + back, weight 1 - frac
    frac = np.tile((-lag - back).ravel(), 2).reshape(2, nb, 2)
    # each end reads the waves the other end sent
    other = np.concatenate([np.arange(2 * nb, width), np.arange(2 * nb)])
    base = (np.tile(((back + pad) * width).ravel(), 2) + other).reshape(2, nb, 2)
    setup = _Setup(z, solve @ _T, np.einsum("ebij,nebj->nebi", zs, src),
                   zs * k[:, :, None, :], g + k, k, src, h.reshape(pad + nt, 2, nb, 2),
                   pad, base, 1.0 - frac, frac)
    v_ends = np.empty((nt + 1, 2, nb, 2))
    v_ends[0] = v_dc                                   # the state before the edge
    run = _run_length(lag)
    if run > 1:
        _in_runs(setup, v_ends, run)
    else:
        _one_by_one(setup, v_ends)
    v_ends = v_ends[1:]
    return PairWaves(t, np.moveaxis(v_ends[:, 0], 0, -1), np.moveaxis(v_ends[:, 1], 0, -1))


def _run_length(lag) -> int:
    """Steps that may be solved as one run: a step reads the rows ``lag`` and ``lag - 1``
    steps back (``lag`` >= 1, in steps), so a run shorter than every lag reads only rows
    written before it (a whole-number lag would read one more, at weight 0); at most
    :data:`_MAX_RUN` steps, so a run's arrays stay small."""
    return max(1, min(math.ceil(float(np.min(lag))) - 1, _MAX_RUN))


def _in_runs(s: _Setup, v_ends: np.ndarray, run: int) -> None:
    """Fill ``v_ends[1:]`` (and the record) in runs of ``run`` steps.

    The waves a run's steps read were all sent before it, so the run gathers them and
    forms ``u = M a + S[n]`` for all its steps at once; only ``v = u + P vp`` goes step
    by step, and the waves the run sends are formed after it.
    """
    nt = v_ends.shape[0] - 1
    width = s.base.size
    for n0 in range(0, nt, run):
        n1 = min(n0 + run, nt)
        idx = s.base + (np.arange(n0, n1) * width)[:, None, None, None]
        flat = s.rows.reshape(-1)
        a = s.keep * flat[idx] + s.frac * flat[idx + width]             # (K, 2, B, 2)
        u = np.matmul(s.m, a[..., None])[..., 0] + s.s_n[n0:n1]
        for n in range(n0, n1):
            np.add(u[n - n0], np.matmul(s.p, v_ends[n][..., None])[..., 0],
                   out=v_ends[n + 1])
        v, vp = v_ends[n0 + 1:n1 + 1], v_ends[n0:n1]
        i = s.src[n0:n1] - s.gk * v + s.k * vp
        s.rows[s.pad + n0:s.pad + n1] = v @ _T + s.z * (i @ _T)


def _one_by_one(s: _Setup, v_ends: np.ndarray) -> None:
    """Fill ``v_ends[1:]`` (and the record) a step at a time (a delay of less than two
    steps): the arithmetic of :func:`_in_runs` for runs of one step, without the
    run's bookkeeping."""
    nt = v_ends.shape[0] - 1
    width = s.base.size
    flat = s.rows.reshape(-1)
    base = s.base.ravel()
    keep, frac = s.keep.ravel(), s.frac.ravel()
    for n in range(nt):
        idx = base + n * width
        a = (keep * flat[idx] + frac * flat[idx + width]).reshape(s.base.shape)
        vp = v_ends[n]
        v = _matvec(s.m, a) + s.s_n[n] + _matvec(s.p, vp)
        i = s.src[n] - s.gk * v + s.k * vp
        s.rows[s.pad + n] = v @ _T + s.z * (i @ _T)
        v_ends[n + 1] = v


def _matvec(m, x):
    return np.matmul(m, x[..., None])[..., 0]
