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

That march costs some fifteen numpy calls a run and two a step, whatever the batch, so
a delay of one or two steps makes it slow.  A pair need not be kept to the last bit
where only whether it passes is read (``bitwise=False``, a search's grid): the march is
linear and time-invariant, so a pair whose delays span at most :data:`_BLOCK_ROWS`
steps goes :data:`_BLOCK` steps at a time, its state (last voltages and the waves sent
back to the longer delay) times one matrix per pair plus its sources' share; longer
delays go in runs whose voltages are one product of their start and the waves they
read.  Both equal the step-by-step march to about 1e-13 of the waveform's scale.

The start is the DC state of the terminations (the line carries their DC current).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import NamedTuple

import numpy as np
from numpy.lib.stride_tricks import as_strided

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.physics.coupled import CoupledLine
from pinlib.physics.guards import positive
from pinlib.physics.lines.model import C0

__all__ = ["EndLoads", "PairWaves", "coupled_waves", "coupled_waves_batch"]

_T = np.array([[1.0, 1.0], [1.0, -1.0]]) / np.sqrt(2.0)
#: Longest run of steps :func:`_march` gathers at once (its arrays are run x 4B values).
_MAX_RUN = 256
#: Most rows back (steps of the longer delay) a pair may read to be marched in blocks
#: where the last bit need not be kept (a block's work grows with them; runs of
#: :func:`_in_runs` are then at least this long).
_BLOCK_ROWS = 16
#: Steps of one block of :func:`_in_blocks` (at least :data:`_BLOCK_ROWS`).
_BLOCK = 32
#: Longest run of :func:`_in_closed_runs`: its matrix is 2K x (2K + 4) a pair and end,
#: so a step costs O(K); 16-32 were fastest on the crosstalk bench (25 cm pair: 210 ms
#: against 540 ms at runs of up to 256 steps) and the demo's coupling alike.
_CLOSED_RUN = 16
#: Most multiply-adds of one matrix product :func:`_in_blocks` makes at once: OpenBLAS
#: shares a larger one among threads, and on a busy machine waiting for them to be
#: scheduled took up to 30 ms where the product takes 0.1 ms.
_ONE_THREAD = 4 * 65536


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
                        far: EndLoads, *, bitwise=True) -> PairWaves:
    """:func:`coupled_waves` for B pairs at once, on one time grid.

    ``line``'s fields and ``length`` broadcast to shape (B,); each :class:`EndLoads`
    gives ``r`` and ``c`` of shape (2,) or (B, 2) and ``v`` of shape (2,), (2, nt),
    (B, 2) or (B, 2, nt).  Returns :class:`PairWaves` whose ``near`` and ``far`` have
    shape (B, 2, nt).  ``bitwise`` (a bool or one per pair) False lets pairs march
    faster (:func:`_march`): the same voltages to about 1e-13 of their scale rather
    than to the last bit, several times faster where a delay spans only a few steps.
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
    return _march(z, tau, t, dt, near, far, bitwise)


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


def _march(z, tau, t, dt, near: EndLoads, far: EndLoads, bitwise=True) -> PairWaves:
    """Step the modal characteristics of B pairs through the grid (see the module).

    Both ends are stepped together (axis 0: near, far).  The history of the waves
    leaving the ends is one flat buffer of (P + nt) rows of 2 x B x 2 values, its first
    P rows the DC state (before the edge); a delay of ``tau = (k + f) dt`` reads the
    other end's rows n - k - 1 and n - k at fixed weights.  The terminations' solve is
    folded into constant matrices before the loop.

    Where every delay spans two steps or more, the steps go in runs
    (:func:`_in_runs`), else one by one (:func:`_one_by_one`).  Either way each value
    is the same arithmetic, in the same order and through the same kernels, as a step
    written out on its own.  Pairs not ``bitwise`` are marched apart (:func:`_groups`):
    those whose delays span at most :data:`_BLOCK_ROWS` steps in blocks
    (:func:`_in_blocks`), the rest in closed runs (:func:`_in_closed_runs`), the same
    values to about 1e-13 of their scale, not to the last bit.  The groups' voltages
    meet in one array laid out (end, pair, conductor, time), so each waveform the
    result gives is contiguous.
    """
    nb, nt = z.shape[0], t.size
    ends = _end(near, nt, "near", nb), _end(far, nt, "far", nb)
    lag = tau / dt
    groups = _groups(lag, bitwise)
    if len(groups) == 1 and groups[0][1] == "steps":
        return _march_steps(z, lag, t, dt, ends)
    # (end, pair, conductor, time), the time padded to whole blocks where there are any
    padded = -(-nt // _BLOCK) * _BLOCK if any(h == "blocks" for _, h in groups) else nt
    out = np.empty((2, nb, 2, padded))
    # blocks and closed runs read the sources only up to one step after their last move
    span = _moving_steps(ends[0][2], ends[1][2])
    for rows, how in groups:
        s, v_dc = _setup(z[rows], lag[rows], dt,
                         *((x[..., :span] if how != "steps" and x.ndim == 3 else x)[rows]
                           for e in ends for x in e), record=how != "blocks", steps=nt)
        if how == "blocks":
            out.reshape(2, nb, 2, -1, _BLOCK)[:, rows] = _in_blocks(s, lag[rows], v_dc, nt)
            continue
        run = _run_length(lag[rows])
        if run > 1 and how == "closed":
            v = _in_closed_runs(s, v_dc, nt, min(run, _CLOSED_RUN))
            out[:, rows, :, :nt] = v.reshape(2, len(rows), 2, -1)[..., :nt]
            continue
        v_ends = np.empty((nt + 1,) + v_dc.shape)
        v_ends[0] = v_dc                               # the state before the edge
        if run > 1:
            _in_runs(s, v_ends, run)
        else:
            _one_by_one(s, v_ends)
        out[:, rows, :, :nt] = v_ends[1:].transpose(1, 2, 3, 0)
    return PairWaves(t, out[0, :, :, :nt], out[1, :, :, :nt])


def _march_steps(z, lag, t, dt, ends) -> PairWaves:
    """:func:`_march` of pairs all ``bitwise``: in runs, or a step at a time."""
    s, v_dc = _setup(z, lag, dt, *(x for e in ends for x in e))
    v_ends = np.empty((t.size + 1,) + v_dc.shape)
    v_ends[0] = v_dc                                   # the state before the edge
    run = _run_length(lag)
    if run > 1:
        _in_runs(s, v_ends, run)
    else:
        _one_by_one(s, v_ends)
    out = v_ends[1:]
    return PairWaves(t, np.moveaxis(out[:, 0], 0, -1), np.moveaxis(out[:, 1], 0, -1))


def _groups(lag, bitwise) -> list:
    """The pairs marched together and how: ``(rows, "steps" | "blocks" | "closed")``.
    Those ``bitwise`` (a bool or one per pair) in one march by the steps' own
    arithmetic; of the others, those reading at most :data:`_BLOCK_ROWS` rows back in
    blocks, a group for each power of two of rows (a block's work grows with its rows),
    and the rest in closed runs."""
    exact = np.broadcast_to(np.asarray(bitwise, bool), lag.shape[:1])
    if exact.all():
        return [(slice(None), "steps")]
    out = [(np.flatnonzero(exact), "steps")] if exact.any() else []
    reach = np.ceil(lag.max(axis=1)).astype(int)
    short = (reach <= _BLOCK_ROWS) & ~exact
    bins = np.ceil(np.log2(np.maximum(reach, 2))).astype(int)
    # (np.unique would import numpy.ma, some milliseconds the command does not need)
    out += [(np.flatnonzero(short & (bins == b)), "blocks")
            for b in sorted(set(bins[short].tolist()))]
    if (long := ~short & ~exact).any():
        out.append((np.flatnonzero(long), "closed"))
    return out


def _setup(z, lag, dt, g0, c0, vs0, g1, c1, vs1, record: bool = True,
           steps: int | None = None):
    """The :class:`_Setup` of B pairs (their terminations from :func:`_end`) and the
    DC state of their ends, shape (2, B, 2).  The record is ``steps`` long (else as
    long as the sources: the closed runs are given them up to one step after their
    last move, :func:`_moving_steps`).  Without ``record`` (the blocks, given the
    sources so cut too), the record holds the DC waves only and ``s_n`` is the matrix
    ``S[n] = s_n @ src[n]``.
    """
    nb, nt = z.shape[0], vs0.shape[-1] if steps is None else steps
    g, k = np.stack([g0, g1]), np.stack([c0, c1]) / dt                   # (2, B, 2)
    zc = np.einsum("ij,bj,jk->bik", _T, z, _T)                            # (B, 2, 2)
    solve = np.linalg.inv(np.eye(2) + zc[None] * (g + k)[:, :, None, :])  # (2, B, 2, 2)
    src = np.moveaxis(g[..., None] * np.stack([vs0, vs1]), -1, 0)        # (nt, 2, B, 2)
    # v = solve (T a + zc (src + k vp)) = M a + S[n] + P vp
    zs = solve @ zc[None]
    v_dc, i_dc = _dc(g0, vs0[:, :, 0], g1, vs1[:, :, 0])
    init = np.stack([v_dc @ _T + z * (i_dc @ _T), v_dc @ _T - z * (i_dc @ _T)])
    width = 4 * nb
    pad = int(np.ceil(lag.max())) + 2
    back = np.floor(-lag).astype(int)                  # row n + back, weight 1 - frac
    frac = np.tile((-lag - back).ravel(), 2).reshape(2, nb, 2)
    if not record:
        return _Setup(z, solve @ _T, zs, zs * k[:, :, None, :], g + k, k, src, init[None],
                      0, None, 1.0 - frac, frac), np.broadcast_to(v_dc, (2, nb, 2))
    h = np.zeros((pad + nt) * width)
    h[:pad * width] = np.tile(init.ravel(), pad)
    # each end reads the waves the other end sent
    other = np.concatenate([np.arange(2 * nb, width), np.arange(2 * nb)])
    base = (np.tile(((back + pad) * width).ravel(), 2) + other).reshape(2, nb, 2)
    s = _Setup(z, solve @ _T, np.einsum("ebij,nebj->nebi", zs, src), zs * k[:, :, None, :],
               g + k, k, src, h.reshape(pad + nt, 2, nb, 2), pad, base, 1.0 - frac, frac)
    return s, np.broadcast_to(v_dc, (2, nb, 2))


def _moving_steps(vs0, vs1) -> int:
    """Steps up to one after the sources' last move (at least one): every later step
    repeats the last of them."""
    moves = [np.flatnonzero(np.any(x[..., 1:] != x[..., :-1], axis=(0, 1))) for x in (vs0, vs1)]
    return min(vs0.shape[-1], 2 + max(int(m.max(initial=-1)) for m in moves))


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
    flat = s.rows.reshape(-1)
    steps = np.arange(nt) * width
    for n0 in range(0, nt, run):
        n1 = min(n0 + run, nt)
        idx = s.base + steps[n0:n1, None, None, None]
        a = s.keep * flat[idx] + s.frac * flat[idx + width]             # (K, 2, B, 2)
        u = np.matmul(s.m, a[..., None])[..., 0] + s.s_n[n0:n1]
        for n in range(n0, n1):
            np.add(u[n - n0], np.matmul(s.p, v_ends[n][..., None])[..., 0],
                   out=v_ends[n + 1])
        v, vp = v_ends[n0 + 1:n1 + 1], v_ends[n0:n1]
        i = s.src[n0:n1] - s.gk * v + s.k * vp
        s.rows[s.pad + n0:s.pad + n1] = v @ _T + s.z * (i @ _T)


def _in_closed_runs(s: _Setup, v_dc, nt: int, run: int) -> np.ndarray:
    """:func:`_in_runs` with each run's voltages and the waves it sends in one product
    (to rounding, not to the bit): ``[v[0], the K + 1 rows of waves the run reads]``
    times one matrix per end and pair (:func:`_run_matrix`), plus the sources' share,
    formed for every run before the march.  Returns the voltages, shape (end, B,
    conductor, runs, K) (the steps of the last run past ``nt`` too)."""
    nb, width = s.base.shape[1], s.base.size
    mat, share = _run_matrix(s, run, nt)
    flat = s.rows.reshape(-1)
    # where each end reads row q of a run (q = 0..K) of each mode: (2, B, K + 1, 2)
    reads = (s.base[:, :, None, :] + (np.arange(run + 1) * width)[:, None]).reshape(
        2, nb, -1)
    volts = np.empty((2, nb, 2, -(-nt // run), run))
    buf = np.empty((2, nb, 2 * run + 4, 1))
    buf[:, :, :2, 0] = v_dc
    x = np.empty((2, nb, 4 * run, 1))
    out = x[..., 0]
    for r, n0 in enumerate(range(0, nt, run)):
        kn = min(run, nt - n0)
        buf[:, :, 2:, 0] = flat[reads + n0 * width]
        np.matmul(mat, buf, out=x)
        out += share[min(r, len(share) - 1)]
        volts[:, :, :, r] = out[:, :, :2 * run].reshape(2, nb, 2, run)
        buf[:, :, :2, 0] = out[:, :, run - 1:2 * run:run]     # the run's last voltages
        s.rows[s.pad + n0:s.pad + n0 + kn] = out[:, :, 2 * run:2 * (run + kn)].reshape(
            2, nb, kn, 2).transpose(2, 0, 1, 3)
    return volts


def _run_matrix(s: _Setup, run: int, nt: int):
    """The matrix of :func:`_in_closed_runs` (2, B, 4K, 2K + 4) and the runs' shares of
    the sources (R, 2, B, 4K: the runs the sources move in, then one for every later
    run): ``v[j] = P**j v[0] + sum over i < j of P**(j - 1 -
    i) (M a[i] + S[i])`` with ``a[i] = keep row[i] + frac row[i + 1]``, its rows the K
    steps of each conductor, then the waves sent at each step (:func:`_wave_rows`)."""
    powers = np.empty((run + 1,) + s.p.shape)
    powers[0] = np.eye(2)
    for j in range(run):
        np.matmul(s.p, powers[j], out=powers[j + 1])
    gap = np.arange(run)[:, None] - np.arange(run)[None, :]          # j - i
    lower = np.where((gap >= 0)[:, :, None, None, None, None],
                     powers[np.clip(gap, 0, run)], 0.0)    # (K_j, K_i, 2, B, 2, 2)
    lower = lower.transpose(2, 3, 0, 1, 4, 5)              # (2, B, K_j, K_i, 2, 2)
    nb = lower.shape[1]
    on_a = (lower.reshape(2, nb, -1, 2) @ s.m).reshape(lower.shape).transpose(
        0, 1, 2, 4, 3, 5)
    on_u = lower.transpose(0, 1, 2, 4, 3, 5)               # (2, B, K_j, 2, K_i, 2)
    mat = np.zeros((2, s.p.shape[1], run, 2, run + 2, 2))
    mat[:, :, :, :, 0] = np.moveaxis(powers[1:], 0, 2)     # v[0]
    mat[:, :, :, :, 1:-1] += on_a * s.keep[:, :, None, None, None, :]
    mat[:, :, :, :, 2:] += on_a * s.frac[:, :, None, None, None, :]
    # the runs whose sources move, and one for every later run (they repeat its last)
    nrun = min(-(-nt // run), -(-(len(s.s_n) - 1) // run) + 1)
    s_n = s.s_n[np.minimum(np.arange(nrun * run), len(s.s_n) - 1)]
    s_n = s_n.reshape(nrun, run, 2, nb, 2)
    lower = on_u.reshape(2, nb, 2 * run, 2 * run)
    share = np.empty((2, nb, nrun, 2 * run))
    const = np.all(s_n == s_n[:, :1], axis=(1, 2, 3, 4))
    if const.any():                                        # constant sources: summed
        total = on_u.sum(axis=4)                           # (2, B, K_j, 2, 2)
        share[:, :, const] = (total.reshape(2, nb, 2 * run, 2) @ np.ascontiguousarray(
            s_n[const, 0].transpose(1, 2, 3, 0))).swapaxes(2, 3)
    if not const.all():
        var = s_n[~const].transpose(2, 3, 1, 4, 0).reshape(2, nb, 2 * run, -1)
        share[:, :, ~const] = (lower @ var).swapaxes(2, 3)
    return _wave_rows(s, mat.reshape(2, nb, run, 2, 2 * run + 4),
                      share.reshape(2, nb, nrun, run, 2))


def _wave_rows(s: _Setup, mat, share):
    """:func:`_run_matrix`'s voltage rows (``mat`` (2, B, K, 2, 2K + 4), ``share`` (2,
    B, runs, K, 2), step then conductor) with the rows of the waves each step sends
    below them: the wave of step j is ``A v[j + 1] + Bm v[j] + C src[j]`` (the record's
    ``v T + z (src - gk v + k vp) T``), ``v[0]`` the start of the run's ``buf``."""
    nb, run, nrun = mat.shape[1], mat.shape[2], share.shape[2]
    c = s.z[None, :, :, None] * _T.T                       # (1, B, mode, conductor)
    a = _T.T - c * s.gk[:, :, None, :]
    b = c * s.k[:, :, None, :]
    first = np.broadcast_to(np.eye(2, mat.shape[-1]), (2, nb, 1, 2, mat.shape[-1]))
    before = np.concatenate([first, mat[:, :, :-1]], axis=2)
    waves = a[:, :, None] @ mat + b[:, :, None] @ before
    src = s.src[np.minimum(np.arange(nrun * run), len(s.src) - 1)]
    src = src.reshape(nrun, run, 2, nb, 2).transpose(2, 3, 0, 1, 4)
    ahead = np.concatenate([np.zeros_like(share[:, :, :, :1]), share[:, :, :, :-1]], axis=3)
    sent = sum(x.reshape(2, nb, -1, 2) @ np.swapaxes(y, 2, 3)    # (2, B, runs K, 2)
               for x, y in ((share, a), (ahead, b), (src, np.broadcast_to(c, a.shape))))
    full = np.concatenate([mat.transpose(0, 1, 3, 2, 4).reshape(2, nb, 2 * run, -1),
                           waves.reshape(2, nb, 2 * run, -1)], axis=2)
    shares = np.concatenate([share.transpose(2, 0, 1, 4, 3).reshape(nrun, 2, nb, 2 * run),
                             sent.reshape(2, nb, nrun, 2 * run).transpose(2, 0, 1, 3)],
                            axis=3)
    return full, shares


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


def _in_blocks(s: _Setup, lag, v_dc, nt: int) -> np.ndarray:
    """The voltages of G pairs, shape (end, G, conductor, blocks, :data:`_BLOCK`) (the
    steps of the last block past ``nt`` too), marched a block at a time by the march's
    state-space form (:func:`_one_step`): the state a block leaves (its last voltage
    and R rows of waves) is its start's times one matrix per pair, plus its inputs'
    share (:func:`_block_gain`, :func:`_input_share`), one small product a block,
    whatever the delays; every block's voltages then come from the states at their
    starts in a few products.  A state's size grows with the rows a pair reads back,
    so only short delays come here.  ``s`` is a :func:`_setup` without its record.
    """
    a, b_in = _one_step(s, lag)
    g, size = a.shape[0], a.shape[1]
    gain, taps, keep = _block_gain(a, b_in)
    nblk = -(-nt // _BLOCK)
    moved = np.flatnonzero(np.any(s.src[1:] != s.src[:-1], axis=(1, 2, 3)))
    nvar = 0 if moved.size == 0 else -(-(int(moved[-1]) + 2) // _BLOCK)
    # the inputs [S[n], src[n]] of the blocks whose sources move, and the constant after
    src = s.src[np.minimum(np.arange(nvar * _BLOCK), len(s.src) - 1)]
    u = np.concatenate([np.moveaxis(x, 2, 0).reshape(g, nvar, _BLOCK, 4)
                        for x in ((s.s_n @ src[..., None])[..., 0], src)], axis=-1)
    last = np.concatenate([np.moveaxis(x, 1, 0).reshape(g, 4)
                           for x in ((s.s_n @ s.src[-1, ..., None])[..., 0], s.src[-1])],
                          axis=-1)
    moving, steady = _input_share(taps, u, last, keep)
    # the state at each block's start: its last voltages and R rows of waves
    at = np.concatenate([np.arange(1, 5) * _BLOCK - 1, np.arange(4 * _BLOCK, keep.size)])
    states = np.empty((nblk, g, size))
    states[0] = np.concatenate([np.moveaxis(v_dc, 1, 0).reshape(g, 4),
                                np.tile(np.moveaxis(s.rows[0], 1, 0).reshape(g, 4),
                                        (size - 4) // 4)], axis=1)
    step, into, after = gain[:, at], moving[:, :, at], steady[:, at]
    for i in range(nblk - 1):
        np.matmul(step, states[i, :, :, None], out=states[i + 1, :, :, None])
        states[i + 1] += into[i] if i < nvar else after
    # every block's voltages from its start: (G, blocks, 4K), K steps of each (end,
    # conductor), in products small enough to run on one thread
    g_v = np.ascontiguousarray(gain[:, :4 * _BLOCK].transpose(0, 2, 1))
    v = np.empty((g, nblk, 4 * _BLOCK))
    chunk = max(1, _ONE_THREAD // (size * 4 * _BLOCK))
    for i in range(0, nblk, chunk):
        np.matmul(states[i:i + chunk].transpose(1, 0, 2), g_v, out=v[:, i:i + chunk])
    v[:, :nvar] += moving[:, :, :4 * _BLOCK].transpose(1, 0, 2)
    v[:, nvar:] += steady[:, None, :4 * _BLOCK]
    return v.reshape(g, nblk, 2, 2, _BLOCK).transpose(2, 0, 3, 1, 4)


def _block_gain(a, b_in):
    """What a block of K = :data:`_BLOCK` steps makes of its start's state and of its
    inputs.  Row ``j`` of ``rows`` (K + 1, G, 8, 4 + 4R) is ``a**j`` read at the
    newest voltage and waves, so step j of a block gives ``rows[j + 1] @ state``
    plus ``taps[j - i] @ u[i]`` (taps (G, K, 8, 8)) of its inputs.  Of those K x 8
    values the block keeps (``keep``) its K voltages, each (end, conductor)'s in step
    order, and the R newest rows of waves: ``gain`` (G, 4K + 4R, 4 + 4R)."""
    g, size = a.shape[0], a.shape[1]
    reach = (size - 4) // 4
    rows = np.empty((_BLOCK + 1, g, 8, size))
    rows[0] = 0.0
    rows[0, :, :4, :4] = np.eye(4)
    rows[0, :, 4:, size - 4:] = np.eye(4)
    for j in range(_BLOCK):
        np.matmul(rows[j], a, out=rows[j + 1])
    taps = np.moveaxis(rows[:_BLOCK] @ b_in, 0, 1)                  # (G, K, 8, 8)
    keep = np.concatenate([(np.arange(4)[:, None] + 8 * np.arange(_BLOCK)).ravel(),
                           (8 * np.arange(_BLOCK - reach, _BLOCK)[:, None]
                            + np.arange(4, 8)).ravel()])
    gain = np.moveaxis(rows[1:], 0, 1).reshape(g, 8 * _BLOCK, size)[:, keep]
    return gain, taps, keep


def _input_share(taps, u, last, keep):
    """The blocks' outputs (``keep`` of their K x 8) from their own inputs: of each block
    whose sources move (u: (G, nvar, K, 8)), step j takes ``sum over i <= j of
    taps[j - i] @ u[i]``, (nvar, G, 4K + 4R); of every later block, whose inputs stay
    at ``last`` (G, 8), the running sums of the taps times it, (G, 4K + 4R)."""
    g, nvar, kb, _ = u.shape
    steady = (np.cumsum(taps, axis=1) @ last[:, None, :, None]).reshape(g, -1)[:, keep]
    # the inputs before each step, latest last: row j holds u[j - K + 1 .. j] (zero
    # before the block), a strided view of the block after K - 1 rows of zeros
    pre = np.concatenate([np.zeros((g, nvar, kb - 1, 8)), u], axis=2)
    window = as_strided(pre, (g, nvar, kb, kb * 8), pre.strides[:2] + pre.strides[2:])
    moving = window @ np.swapaxes(taps[:, ::-1], 2, 3).reshape(g, 1, kb * 8, 8)
    return np.moveaxis(moving.reshape(g, nvar, kb * 8)[:, :, keep], 1, 0), steady


def _one_step(s: _Setup, lag):
    """One step of the march as a linear map of G pairs: ``state' = a @ state + b_in @
    u``, the state ``[v (end, conductor), then the waves sent (end, mode) R rows back
    to one]`` (4 + 4R values), ``u = [S[n], src[n]]`` (the sources' two terms), R the
    most rows back a pair reads.  Returns ``a`` (G, 4 + 4R, 4 + 4R) and ``b_in``
    (G, 4 + 4R, 8)."""
    g = s.z.shape[0]
    back = np.ceil(lag).astype(int)                    # rows back of the first tap
    reach = int(back.max())
    size = 4 + 4 * reach
    cases = np.arange(g)
    # the incoming waves a (end e, mode j): the other end's waves at two taps
    read = np.zeros((g, 4, size))
    for e in range(2):
        for j in range(2):
            col = 4 + 4 * (reach - back[:, j]) + 2 * (1 - e) + j
            read[cases, 2 * e + j, col] = s.keep[e, :, j]
            two = back[:, j] > 1                       # a lag of one step: weight 0
            read[cases[two], 2 * e + j, col[two] + 4] = s.frac[e, two, j]
    v_x = _blockdiag(s.m) @ read
    v_x[:, :, :4] += _blockdiag(s.p)
    v_u = np.eye(4, 8)
    gk, k = (np.moveaxis(x, 1, 0).reshape(g, 4, 1) for x in (s.gk, s.k))
    i_x = -gk * v_x
    i_x[:, :, :4] += k * np.eye(4)
    i_u = -gk * v_u + np.eye(4, 8, 4)
    tt = np.kron(np.eye(2), _T)
    zz = np.tile(s.z, 2)[:, :, None]                   # mode j of each end
    a = np.zeros((g, size, size))
    a[:, :4] = v_x
    a[:, 4:size - 4, 8:] = np.eye(size - 8)            # the older waves move down a row
    a[:, size - 4:] = tt @ v_x + zz * (tt @ i_x)
    b_in = np.zeros((g, size, 8))
    b_in[:, :4] = v_u
    b_in[:, size - 4:] = tt @ v_u + zz * (tt @ i_u)
    return a, b_in


def _blockdiag(x):
    """(2, G, 2, 2) -> (G, 4, 4): each pair's two ends' matrices on the diagonal."""
    out = np.zeros((x.shape[1], 4, 4))
    out[:, :2, :2], out[:, 2:, 2:] = x[0], x[1]
    return out
