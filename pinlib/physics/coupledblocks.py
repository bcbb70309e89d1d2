"""The march of coupled pairs not kept to the last bit (``bitwise=False``: a search's
grid, read only as pass or fail), for :mod:`pinlib.physics.coupledwave`.

The march is linear and time-invariant, so a pair whose delays span a few steps goes a
block of steps at a time by its state-space form (:func:`_in_blocks`: its state, the
last voltages and the waves sent back to the longer delay, times one matrix per pair
plus its sources' share), and a pair of longer delays in closed runs
(:func:`_in_closed_runs`: a run's voltages and the waves it sends are one product of
its start and the waves it reads).  Both equal the step-by-step march of
:mod:`~pinlib.physics.coupledwave` to about 1e-13 of the waveform's scale, not to the
last bit.  Each function takes that module's ``_Setup`` of the pairs (``s``).
"""

from __future__ import annotations

import numpy as np
from numpy.lib.stride_tricks import as_strided

__all__: list[str] = []

#: The orthonormal transform between conductors and modes (even, odd) of a symmetric pair.
_T = np.array([[1.0, 1.0], [1.0, -1.0]]) / np.sqrt(2.0)
#: Steps of one block of :func:`_in_blocks` (at least the rows back a pair marched in
#: blocks may read: ``coupledwave._BLOCK_ROWS``).
_BLOCK = 32
#: Longest run of :func:`_in_closed_runs`: its matrix is 4K x (2K + 4) a pair and end,
#: so a step costs O(K); 16-32 were fastest on the crosstalk bench (25 cm pair: 210 ms
#: against 540 ms at runs of up to 256 steps) and the demo's coupling alike.
_CLOSED_RUN = 16
#: Most multiply-adds of one matrix product :func:`_in_blocks` makes at once: OpenBLAS
#: shares a larger one among threads, and on a busy machine waiting for them to be
#: scheduled took up to 30 ms where the product takes 0.1 ms.
_ONE_THREAD = 4 * 65536


def _in_closed_runs(s, v_dc, nt: int, run: int) -> np.ndarray:
    """The step-by-step march's runs (``coupledwave._in_runs``) with each run's voltages
    and the waves it sends in one product (to rounding, not to the bit): ``[v[0], the
    K + 1 rows of waves the run reads]`` times one matrix per end and pair
    (:func:`_run_matrix`), plus the sources' share, formed before the march.  Returns
    the voltages, shape (end, B, conductor, runs, K) (the steps of the last run past
    ``nt`` too)."""
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


def _run_matrix(s, run: int, nt: int):
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


def _wave_rows(s, mat, share):
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


def _in_blocks(s, lag, v_dc, nt: int) -> np.ndarray:
    """The voltages of G pairs, shape (end, G, conductor, blocks, :data:`_BLOCK`) (the
    steps of the last block past ``nt`` too), marched a block at a time by the march's
    state-space form (:func:`_one_step`): the state a block leaves (its last voltage
    and R rows of waves) is its start's times one matrix per pair, plus its inputs'
    share (:func:`_block_gain`, :func:`_input_share`), one small product a block,
    whatever the delays; every block's voltages then come from the states at their
    starts in a few products.  A state's size grows with the rows a pair reads back,
    so only short delays come here.  ``s`` is a ``_Setup`` without its record.
    """
    a, b_in = _one_step(s, lag)
    g, size = a.shape[0], a.shape[1]
    step, g_v, taps, keep = _block_gain(a, b_in)
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
    into, after = moving[:, :, at], steady[:, at]
    for i in range(nblk - 1):
        np.matmul(step, states[i, :, :, None], out=states[i + 1, :, :, None])
        states[i + 1] += into[i] if i < nvar else after
    # every block's voltages from its start: (G, blocks, 4K), K steps of each (end,
    # conductor), in products small enough to run on one thread
    v = np.empty((g, nblk, 4 * _BLOCK))
    chunk = max(1, _ONE_THREAD // (size * 4 * _BLOCK))
    for i in range(0, nblk, chunk):
        np.matmul(states[i:i + chunk].transpose(1, 0, 2), g_v, out=v[:, i:i + chunk])
    v[:, :nvar] += moving[:, :, :4 * _BLOCK].transpose(1, 0, 2)
    v[:, nvar:] += steady[:, None, :4 * _BLOCK]
    return v.reshape(g, nblk, 2, 2, _BLOCK).transpose(2, 0, 3, 1, 4)


def _block_gain(a, b_in):
    """What a block of K = :data:`_BLOCK` steps makes of its start's state and of its
    inputs.  Row ``j`` (j = 0..K) of the march's rows is ``a**j`` read at the newest
    voltages and waves (8 x (4 + 4R)), so step j of a block gives ``row[j + 1] @
    state`` plus ``taps[j - i] @ u[i]`` (taps (G, K, 8, 8)) of its inputs.  Of those K
    x 8 values a block keeps (``keep``) its K voltages, each (end, conductor)'s in step
    order, and the R newest rows of waves.  Returns the state's ``step`` (G, 4 + 4R, 4
    + 4R: the last voltages and those rows of waves), the voltages' gain ``g_v`` (G, 4
    + 4R, 4K), transposed for :func:`_in_blocks`' product, ``taps`` and ``keep``."""
    g, size = a.shape[0], a.shape[1]
    reach = (size - 4) // 4
    # a's rows between the newest voltages and the newest waves only move the older
    # waves down a row: the product with them is a shift
    ends = np.r_[0:4, size - 4:size]
    dense = np.ascontiguousarray(a[:, ends])                         # (G, 8, 4 + 4R)
    b_ends = np.ascontiguousarray(b_in[:, ends])                     # (G, 8, 8)
    g_v = np.empty((g, size, 4, _BLOCK))
    step = np.empty((g, size, size))
    taps = np.empty((g, _BLOCK, 8, 8))
    rows = np.zeros((2, g, 8, size))                    # row j and row j + 1, in turn
    rows[0, :, :4, :4] = np.eye(4)
    rows[0, :, 4:, size - 4:] = np.eye(4)
    for j in range(_BLOCK):
        now, new = rows[j % 2], rows[1 - j % 2]
        read = now[..., ends]
        np.matmul(read, b_ends, out=taps[:, j])
        np.matmul(read, dense, out=new)
        new[..., 8:] += now[..., 4:size - 4]
        g_v[..., j] = new[:, :4].transpose(0, 2, 1)
        if j >= _BLOCK - reach:
            step[:, 4 * (j - _BLOCK + reach + 1):4 * (j - _BLOCK + reach + 2)] = new[:, 4:]
    step[:, :4] = new[:, :4]
    keep = np.concatenate([(np.arange(4)[:, None] + 8 * np.arange(_BLOCK)).ravel(),
                           (8 * np.arange(_BLOCK - reach, _BLOCK)[:, None]
                            + np.arange(4, 8)).ravel()])
    return step, g_v.reshape(g, size, 4 * _BLOCK), taps, keep


def _input_share(taps, u, last, keep):
    """The blocks' outputs (``keep`` of their K x 8) from their own inputs: of each block
    whose sources move (u: (G, nvar, K, 8)), step j takes ``sum over i <= j of
    taps[j - i] @ u[i]``, (nvar, G, 4K + 4R); of every later block, whose inputs stay
    at ``last`` (G, 8), the running sums of the taps times it, (G, 4K + 4R)."""
    g, nvar, kb, _ = u.shape
    steady = np.cumsum((taps.reshape(g, kb * 8, 8) @ last[:, :, None]).reshape(g, kb, 8),
                       axis=1).reshape(g, -1)[:, keep]
    # the inputs before each step, latest last: row j holds u[j - K + 1 .. j] (zero
    # before the block), a strided view of the block after K - 1 rows of zeros
    pre = np.concatenate([np.zeros((g, nvar, kb - 1, 8)), u], axis=2)
    window = as_strided(pre, (g, nvar, kb, kb * 8), pre.strides[:2] + pre.strides[2:])
    moving = window @ np.swapaxes(taps[:, ::-1], 2, 3).reshape(g, 1, kb * 8, 8)
    return np.moveaxis(moving.reshape(g, nvar, kb * 8)[:, :, keep], 1, 0), steady


def _one_step(s, lag):
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
