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
read (:mod:`pinlib.physics.coupledblocks`).  Both equal the step-by-step march to
about 1e-13 of the waveform's scale.

The start is the DC state of the terminations (the line carries their DC current).
"""

from __future__ import annotations

import math
from typing import NamedTuple

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.core.valueclass import value_class
from pinlib.physics.coupled import CoupledLine
from pinlib.physics.coupledblocks import _BLOCK, _CLOSED_RUN, _T, _in_blocks, _in_closed_runs
from pinlib.physics.guards import positive
from pinlib.physics.lines.model import C0

__all__ = ["EndLoads", "PairWaves", "coupled_waves", "coupled_waves_batch"]

#: Longest run of steps :func:`_march` gathers at once (its arrays are run x 4B values).
_MAX_RUN = 256
#: Most rows back (steps of the longer delay) a pair may read to be marched in blocks
#: where the last bit need not be kept (a block's work grows with them; runs of
#: :func:`_in_runs` are then at least this long).
_BLOCK_ROWS = 16
#: Rows back that part the pairs marched in blocks into two groups: the demo's length
#: grid (16 pairs in blocks, 1-16 rows back) took 11 ms split here, 12 in one group
#: and 13-15 in a group for each power of two.
_FEW_ROWS = 4


@value_class(frozen=True)
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


@value_class(frozen=True)
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
    blocks, in two groups, up to :data:`_FEW_ROWS` rows and more (a block's work grows
    with its rows, a group's set-up is some hundreds of numpy calls), and the rest in
    closed runs."""
    exact = np.broadcast_to(np.asarray(bitwise, bool), lag.shape[:1])
    if exact.all():
        return [(slice(None), "steps")]
    out = [(np.flatnonzero(exact), "steps")] if exact.any() else []
    reach = np.ceil(lag.max(axis=1)).astype(int)
    short = (reach <= _BLOCK_ROWS) & ~exact
    bins = (reach > _FEW_ROWS).astype(int)
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
    # where each step reads its two rows, and the voltages as columns for the products
    first = s.base + (np.arange(nt) * width)[:, None, None, None]        # (nt, 2, B, 2)
    second = first + width
    col, s_n = v_ends[..., None], s.s_n[..., None]
    p_v = np.empty(col.shape[1:])
    for n0 in range(0, nt, run):
        n1 = min(n0 + run, nt)
        a = s.keep * flat[first[n0:n1]] + s.frac * flat[second[n0:n1]]  # (K, 2, B, 2)
        u = np.matmul(s.m, a[..., None])
        u += s_n[n0:n1]
        for n in range(n0, n1):
            np.matmul(s.p, col[n], out=p_v)
            np.add(u[n - n0], p_v, out=col[n + 1])
        v = v_ends[n0 + 1:n1 + 1]
        i = s.src[n0:n1] - s.gk * v
        i += s.k * v_ends[n0:n1]
        sent = v @ _T
        sent += s.z * (i @ _T)
        s.rows[s.pad + n0:s.pad + n1] = sent


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
