"""One case's march in blocks longer than its shortest delay: the state-space form.

:func:`pinlib.physics.waveform.march.march` solves a run of steps at once only while
every wave the run reads was launched before it, so its runs are at most the shortest
delay long.  A short section on a long record (a centimetre of trace beside tens of
metres of cable, whose record the step count bounds to a grid of a few steps per
stub) then marches in runs of one or two steps: 200,000 runs of about ten numpy calls
each, seconds a solve.

The network is linear and time-invariant, so a block of ``K`` steps is one linear map
of what is known at its start: each node's last voltage and current, the waves the
short lines (delay under ``K``) launched in their last ``delay + 1`` steps, the waves
the long lines deliver during the block (all launched before it) and the source's
samples.  :func:`block_map` works that map out once, by carrying the march's own
equations through the block with every quantity a row over those inputs;
:func:`march_blocked` then marches one matrix-vector product a block.  The numbers are
the march's to rounding (the sums run in another order): ``tests/test_tree.py`` holds
them to 1e-12 of the swing.
"""

from __future__ import annotations

import numpy as np

__all__: list[str] = []

#: Steps of a block (:func:`march_blocked`), the longest tried first.  The map grows as
#: the block squared (its rows, nodes and ports times the block; its columns, the long
#: lines' waves over the block).  Measured on a route of five nodes (1 cm, 2 cm and
#: 13 cm of trace and 30 m of cable, 407,706 steps; the run march 2.65 s in runs of
#: two steps): blocks of 8 0.90 s, 16 0.27 s, 24 0.20 s, 32 0.16 s, 48 0.18 s.
BLOCKS = (32, 16)

#: The run march's runs (steps) below which, and the runs over the record above which,
#: a single case is marched in blocks: a grid coarsened to a few steps per short
#: section on a long record.  A route's usual grid has 20 steps in its shortest delay
#: (:func:`~pinlib.physics.waveform.choose_step`) and keeps the run march, bit for bit.
SHORT_RUN = 8
MANY_RUNS = 2_000

#: Bounds on a block's map: its entries, and its entries per step (the product's work
#: a step, against the run march's few microseconds a step); a network past them (tens
#: of nodes) keeps the run march.
MAX_MAP = 1_000_000
MAX_MAP_PER_STEP = 20_000

#: Elements of the launched waves kept whole (ports x record); a record beyond it is
#: marched by the run march instead (about 64 MB).
MAX_LAUNCHED = 8_000_000


def chosen_block(net, n_t: int, run: int) -> int | None:
    """The block :func:`march_blocked` marches ``net`` in, or None where the run march
    (runs of ``run`` steps) is kept: runs long enough or few, or a map too large."""
    if net.a.shape[1] != 1 or run >= SHORT_RUN or (n_t - 1) // run <= MANY_RUNS:
        return None
    n_nodes, n_ports = net.a.shape[0], net.port_node.size
    if net.port_delay.min() < 1 or n_ports * (n_t + 2 * max(BLOCKS)
                                              + int(net.port_delay.max())) > MAX_LAUNCHED:
        return None
    for block in BLOCKS:
        short = net.port_delay < block
        cols = (2 * n_nodes + int((net.port_delay[short] + 1).sum())
                + int((~short).sum()) * block + 2 * block)
        rows = (n_nodes + n_ports) * block + n_nodes
        if rows * cols <= MAX_MAP and rows * cols <= MAX_MAP_PER_STEP * block:
            return block
    return None


def block_map(net, block: int) -> tuple:
    """The linear map of one block: ``y = phi @ x``.

    ``x`` is ``[v_last (N), i_last (N), the short ports' partner history, the long
    ports' incident waves (block each), the source current (block), the forced source
    voltage (block, an ideal source only)]``; ``y`` is ``[v (N x block), launched
    (P x block), i_last (N)]``.  Returns ``(phi, short, hist_len, long_)``: the short
    ports, each one's history length (delay + 1) and the long ports. [1]
    """
    n_nodes, n_ports = net.a.shape[0], net.port_node.size
    a, c_now, c_prev = net.a[:, 0], net.c_now[:, 0], net.c_prev[:, 0]
    delay, frac, partner = net.port_delay, net.port_frac, net.port_partner
    weight = net.incidence * (2.0 * net.port_g[:, 0])[None, :]               # (N, P)
    short = np.flatnonzero(delay < block)
    long_ = np.flatnonzero(delay >= block)
    hist_len = delay[short] + 1
    forced = bool(net.forced[0])
    # the columns of x
    col_v, col_i = 0, n_nodes
    col_hist = 2 * n_nodes
    hist_start = {int(p): col_hist + int(s) for p, s in
                  zip(short, np.cumsum(hist_len) - hist_len, strict=True)}
    col_long = col_hist + int(hist_len.sum())
    long_at = {int(p): col_long + k * block for k, p in enumerate(long_)}
    col_src = col_long + long_.size * block
    col_forced = col_src + block
    n_cols = col_forced + (block if forced else 0)
    eye = np.eye(n_cols)
    v = eye[col_v:col_v + n_nodes].copy()                                    # (N, cols)
    i_prev = eye[col_i:col_i + n_nodes].copy()
    launched = np.zeros((n_ports, block, n_cols))
    v_out = np.zeros((n_nodes, block, n_cols))

    def wave(p: int, j: int) -> np.ndarray:
        """The wave port ``p``'s partner launched at block step ``j`` (before the block
        where negative: its history, newest first)."""
        if j >= 0:
            return launched[partner[p], j]
        return eye[hist_start[p] + (-j - 1)]

    inc = np.zeros((n_ports, n_cols))
    for k in range(block):
        for p in short:
            j = k - int(delay[p])
            inc[p] = wave(p, j)
            if frac[p] > 0.0:
                inc[p] = inc[p] + frac[p] * (wave(p, j - 1) - inc[p])
        for p in long_:
            inc[p] = eye[long_at[int(p)] + k]
        cur = weight @ inc
        cur[net.source] += eye[col_src + k]
        v = a[:, None] * v + (c_now[:, None] * cur + c_prev[:, None] * i_prev)
        if forced:
            v[net.source] = eye[col_forced + k]
        launched[:, k] = v[net.port_node] - inc
        v_out[:, k] = v
        i_prev = cur
    phi = np.concatenate([v_out.reshape(-1, n_cols), launched.reshape(-1, n_cols),
                          i_prev])
    return phi, short, hist_len, long_


def march_blocked(net, v_src: np.ndarray, n_t: int, block: int = BLOCKS[0]) -> np.ndarray:
    """Every node's voltage at every step, ``(nodes, n_t, 1)``, for one case (``v_src``
    ``(n_t, 1)``), in blocks of ``block`` steps by :func:`block_map`."""
    n_nodes, n_ports, src = net.a.shape[0], net.port_node.size, net.source
    phi, short, hist_len, long_ = block_map(net, block)
    forced = bool(net.forced[0])
    runs = -(-(n_t - 1) // block)
    n_all = 1 + runs * block
    pad = int(net.port_delay.max()) + 2
    size = pad + n_all
    launched = np.zeros((n_ports, size))
    flat = launched.reshape(-1)
    partner = net.port_partner
    # where each short port's history sits, relative to the block's first step n: its
    # partner's launched wave at n - 1 - m, m = 0..delay
    hist_idx = np.concatenate([partner[p] * size + pad - 1 - np.arange(h)
                               for p, h in zip(short, hist_len, strict=True)]
                              ) if short.size else np.zeros(0, dtype=int)
    # each long port's incident waves over the block and the sample before (as the run
    # march reads them: got[:, j] is the partner's wave at n - 1 - delay + j)
    reach = (partner[long_, None] * size + pad - 1 - net.port_delay[long_, None]
             + np.arange(block + 1)[None, :])
    frac = net.port_frac[long_, None]
    interp = bool(np.any(frac > 0.0))
    src_cur, v_forced = source_samples(net, v_src, n_t, n_all)
    x = np.zeros(phi.shape[1])
    n_v = n_nodes * block
    n_l = n_ports * block
    c_hist = 2 * n_nodes
    c_long = c_hist + hist_idx.size
    c_src = c_long + long_.size * block
    x[n_nodes + src] = src_cur[0]
    if forced:
        x[src] = v_forced[0]
    volts = np.empty((n_nodes, n_all))
    volts[:, 0] = x[:n_nodes]
    y = np.empty(phi.shape[0])
    for n in range(1, n_all, block):
        if hist_idx.size:
            x[c_hist:c_long] = flat.take(hist_idx + n)
        if long_.size:
            got = flat.take(reach + n)
            inc = got[:, 1:]
            if interp:
                inc = inc + frac * (got[:, :-1] - inc)
            x[c_long:c_src] = inc.reshape(-1)
        x[c_src:c_src + block] = src_cur[n:n + block]
        if forced:
            x[c_src + block:] = v_forced[n:n + block]
        np.matmul(phi, x, out=y)
        v = y[:n_v].reshape(n_nodes, block)
        volts[:, n:n + block] = v
        launched[:, pad + n:pad + n + block] = y[n_v:n_v + n_l].reshape(n_ports, block)
        x[:n_nodes] = v[:, -1]
        x[n_nodes:c_hist] = y[n_v + n_l:]
    return volts[:, :n_t, None]


def source_samples(net, v_src, n_t: int, n_all: int) -> tuple[np.ndarray, np.ndarray]:
    """A single case's source over ``n_all`` samples, its last held past the record's
    ``n_t``: the current it injects (its Norton current, ``g_source`` times its
    voltage) and the voltage it forces (a source without resistance). [A], [V]"""
    src_cur = np.empty(n_all)
    src_cur[:n_t] = net.g_source[0] * v_src[:, 0]
    src_cur[n_t:] = src_cur[n_t - 1]
    v_forced = np.empty(n_all)
    v_forced[:n_t] = v_src[:, 0]
    v_forced[n_t:] = v_forced[n_t - 1]
    return src_cur, v_forced
