"""The time march shared by the line solvers: lossless lines between capacitive nodes.

A network here is a set of nodes (each a capacitance to ground, possibly zero) joined
by lossless lines; one node carries the source (a ramp behind a resistance).  The
method of characteristics (Bergeron) turns each line end into a source ``2 v_inc``
behind the line's impedance, ``v_inc`` being the wave that arrived there, launched
one delay earlier at the other end.  Node j is then one companion node with
conductance ``G = sum(1/Z) (+ 1/r_source)``, capacitance ``C`` and injected current
``I = sum(2 v_inc / Z) (+ v_s / r_source)``; junction scattering follows from this
nodal form by itself.

The companion update is the exact solution of ``C dv/dt + G v = I`` for ``I`` linear
between samples, with ``h = G dt / C``, ``a = exp(-h)``, ``p = (1 - a) / h``::

    v[n+1] = a v[n] + w[n+1],   w[n+1] = (1 - p) I[n+1] / G + (p - a) I[n] / G

Every current within a run of at most one (shortest) delay depends only on waves
launched before the run, so a whole run is known before it is solved: ``w`` is formed
for the run at once and the first-order recurrence is summed for the run by doubling
(after pass ``j`` each sample holds ``sum a^i w[k - i]`` over ``2^(j+1)`` terms): a few numpy
operations per run whatever the batch, stable for every ``a`` in [0, 1].  A single case
on short runs (at most ``_SINGLE_BLOCK`` steps) sums the same recurrence, with the
``c_now``/``c_prev`` mixing and the state carried in, as one small matrix product per node
and run (``_run_matrix``): seven numpy calls a run instead of 25-35, where those
calls' fixed cost, not the arithmetic, is the time.  Several such cases of one shape
(nodes, ports, delays, run) march in lockstep (:func:`march_cases`), each run's
products one stacked call whose members numpy computes as it would alone: each record
is the single march's to the last bit, for about the calls of one.  A single case whose
runs would be a step or two over a long record (a short stub on a grid the record's
length coarsened) is marched in blocks longer than its shortest delay instead, each a
linear map (:mod:`pinlib.physics.waveform.blockmarch`; the same numbers to rounding).
A delay that is not a whole number of steps reads the launched wave by linear
interpolation.

Layout inside: a batch marches time-major, ``(time, node or port, batch)``: a run of
the record is one contiguous slab, summed in the returned array itself, and the
launched waves sit in a window that slides instead of a ring read modulo its length;
a single case ``(node or port, time)``.  A batch whose cases share one source reads
its samples from one row.
"""

from __future__ import annotations

import math
import warnings
from typing import NamedTuple

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError, ValidityWarning
from pinlib.physics.waveform.blockmarch import chosen_block, march_blocked, source_samples

__all__: list[str] = []

# Largest relative change of a section delay by rounding it to the time grid before
# the solvers warn.
_DELAY_ROUNDING_WARN = 0.05
# Relative tolerance on the spacing of a time grid given to the solvers.
_GRID_RTOL = 1e-6
# Longest run of time steps solved together, and a cap on the elements of a run's
# arrays (ports x batch x run) so memory stays bounded for large batches.
_MAX_BLOCK = 512
_MAX_BLOCK_ELEMENTS = 4_000_000
# The launched waves are kept for the whole record up to this many elements (ports x
# steps x batch), else in a ring buffer of one longest delay plus one run.
_MAX_BUFFER_ELEMENTS = 2_000_000
# Longest run a single case solves as one matrix product per node (its cost per step
# grows with the run).
_SINGLE_BLOCK = 64


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


def _source_samples(t: np.ndarray, vdd: np.ndarray, t_ramp: np.ndarray) -> np.ndarray:
    """Thevenin source: 0 -> vdd linearly over t_ramp from t = 0; shape batch + (n,)."""
    ramp = t_ramp[..., None]
    has_ramp = ramp > 0.0
    # Divide only where the ramp has a duration; a step (t_ramp = 0) is 0 at t = 0 and
    # vdd after it.
    if np.all(has_ramp):  # every case ramps (the other branch would be discarded)
        fraction = np.clip(t / ramp, 0.0, 1.0)
    else:
        fraction = np.where(has_ramp, np.clip(t / np.where(has_ramp, ramp, 1.0), 0.0, 1.0),
                            (t > 0.0).astype(float))
    return vdd[..., None] * fraction


def _phi(x: np.ndarray) -> np.ndarray:
    """(1 - exp(-x)) / x for x >= 0 with phi(0) = 1 and phi(inf) = 0."""
    small = x < 1e-5
    x_safe = np.where(small, 1.0, x)
    x_small = np.where(small, x, 0.0)
    return np.where(small, 1.0 - x_small / 2.0 + x_small * x_small / 6.0,
                    -np.expm1(-x_safe) / x_safe)


def _check_line(k: int, z0, td, dt: float, stacklevel: int) -> tuple[np.ndarray, float]:
    """Section ``k``'s impedance (batchable) and delay in steps (0: no line).

    A delay of a whole number of steps (to 1e-9) is that number; one of at least a
    step is kept as a fraction of steps (the march interpolates between the two
    samples around it); one of half a step to a step is rounded to one step, with a
    :class:`ValidityWarning` (at ``stacklevel`` from here) when that changes it by more
    than :data:`_DELAY_ROUNDING_WARN`; a shorter one is refused.
    """
    z0 = np.asarray(z0, dtype=float)
    if not np.all(np.isfinite(z0) & (z0 > 0.0)):
        raise InputError(M.Z0_NOT_POSITIVE,
                         field=f"sections[{k}].z0", value=z0, expected="z0 > 0 [Ω]")
    if np.ndim(td) != 0 or not (math.isfinite(float(td)) and float(td) >= 0.0):
        raise InputError(M.SECTION_DELAY_FORM,
                         field=f"sections[{k}].td", value=td, expected="td >= 0 [s]")
    td = float(td)
    exact = td / dt
    steps = int(round(exact))
    if td > 0.0 and steps == 0:
        raise InputError(M.TIME_STEP_TOO_COARSE,
                         field=f"sections[{k}].td", value=td,
                         expected=f"td >= dt/2 = {dt / 2:.3g} s (or a finer grid)")
    if abs(exact - steps) <= 1e-9 * exact or steps == 0:
        return z0, float(steps)
    if exact >= 1.0:
        return z0, exact
    if abs(steps * dt - td) > _DELAY_ROUNDING_WARN * td:
        warnings.warn(M.DELAY_ROUNDED.format(k=k, td=f"{td:.4g}", steps=steps,
                                             dt=f"{dt:.4g}", rounded=f"{steps * dt:.4g}"),
                      ValidityWarning, stacklevel=stacklevel + 1)
    return z0, float(steps)


def _non_negative(name: str, a: np.ndarray, unit: str) -> None:
    """Refuse a value that is not finite and >= 0."""
    if not np.all(np.isfinite(a) & (a >= 0.0)):
        raise InputError(M.MUST_BE_FINITE_NON_NEGATIVE, field=name,
                         value=a, expected=f"values >= 0 {unit}")


def _batch_shape(named: list[tuple[str, np.ndarray]]) -> tuple:
    """The batch: the broadcast shape of the arrays ``(name, array)``; an InputError
    naming two of them whose shapes do not broadcast together, and their shapes."""
    try:
        return np.broadcast_shapes(*(a.shape for _, a in named))
    except ValueError:
        pass
    # shapes that broadcast pairwise broadcast together: some pair clashes
    for i, (second, b) in enumerate(named):
        for first, a in named[:i]:
            try:
                np.broadcast_shapes(a.shape, b.shape)
            except ValueError:
                raise InputError(M.BATCH_SHAPES_CLASH.format(
                    first=first, a=a.shape, second=second, b=b.shape),
                    field=f"{first}, {second}", value=(a.shape, b.shape),
                    expected="scalars, or arrays whose shapes broadcast together "
                             "(numpy's rules)") from None
    raise AssertionError(named)  # unreachable: a clash is always between two shapes


class Network(NamedTuple):
    """Lossless lines between nodes, as companion models; arrays over the batch ``B``.

    Each line with a delay has two ports (its two ends), ``2k`` and ``2k + 1``.
    """

    port_node: np.ndarray     # (P,) node of each port
    port_partner: np.ndarray  # (P,) the port at the line's other end
    port_delay: np.ndarray    # (P,) the line's delay in whole steps (rounded down)
    port_frac: np.ndarray     # (P,) and the fraction of a step beyond them
    port_g: np.ndarray        # (P, B) 1 / Z of the port's line
    incidence: np.ndarray     # (nodes, P): 1 where the port is at the node
    source: int               # the node the source attaches to
    g_source: np.ndarray      # (B,) source conductance; 0 for an ideal source
    forced: np.ndarray        # (B,) ideal source: the source node follows it exactly
    a: np.ndarray             # (nodes, B) exp(-G dt / C)
    c_now: np.ndarray         # (nodes, B) weight of I[n+1] in v[n+1]
    c_prev: np.ndarray        # (nodes, B) weight of I[n] in v[n+1]


def network(n_nodes: int, lines, caps: np.ndarray, r_source: np.ndarray, source: int,
            dt: float) -> Network:
    """The companion network.

    ``lines`` holds ``(node_a, node_b, z0 (B,), delay in steps)`` for each line with a
    delay of at least one step; ``caps`` is ``(n_nodes, B)``; ``r_source`` ``(B,)``.
    """
    n_b = r_source.size
    ends = [(a, b) for a, b, _, _ in lines]
    port_node = np.array([n for pair in ends for n in pair], dtype=int)
    port_partner = np.arange(port_node.size) ^ 1
    delays = np.repeat(np.array([d for *_, d in lines], dtype=float), 2)
    port_delay = np.floor(delays).astype(int)
    port_frac = delays - port_delay
    port_g = np.repeat(np.array([1.0 / z for _, _, z, _ in lines]).reshape(-1, n_b), 2,
                       axis=0)
    incidence = np.zeros((n_nodes, port_node.size))
    incidence[port_node, np.arange(port_node.size)] = 1.0

    forced = r_source == 0.0  # ideal source: the source node follows the source exactly
    g_source = np.where(forced, 0.0, 1.0 / np.where(forced, 1.0, r_source))
    g_node = np.zeros((n_nodes, n_b))
    for p, node in enumerate(port_node):
        g_node[node] += port_g[p]
    g_node[source] += g_source
    # A node with no conductance exists only as a forced source node with no line;
    # give it a placeholder so no division by zero is formed (its value is overwritten).
    g_node = np.where(g_node > 0.0, g_node, 1.0)

    has_cap = caps > 0.0
    # h = G dt / C, infinite without capacitance (then a = 0, p = 0: v = I / G).
    h = np.where(has_cap, g_node * dt / np.where(has_cap, caps, 1.0), np.inf)
    a = np.exp(-h)
    p = _phi(h)
    return Network(port_node, port_partner, port_delay, port_frac, port_g, incidence, source,
                   g_source, forced, a, (1.0 - p) / g_node, (p - a) / g_node)


def _run_length(net: Network, n_t: int) -> int:
    """Steps solved together: at most the shortest delay, and bounded in memory."""
    n_rows = max(net.a.shape[0], net.port_node.size) * net.a.shape[1]
    cap = max(1, _MAX_BLOCK_ELEMENTS // max(1, n_rows))
    shortest = int(net.port_delay.min()) if net.port_delay.size else _MAX_BLOCK
    return max(1, min(shortest, _MAX_BLOCK, cap, n_t - 1))


class _Scan:
    """``v[k] = a v[k-1] + w[k]`` over a run from ``v_last``, summed in place by doubling
    (after pass ``j`` each sample holds ``sum a^i w[k - i]`` over ``2^(j+1)`` terms).

    ``time`` is the run's axis in ``w`` (1 for ``(nodes, m, B)``, 0 for ``(m, nodes,
    B)``); the sums are the same in either layout, element for element.
    """

    def __init__(self, a: np.ndarray, block: int, time: int = 1):
        steps = np.arange(1, block + 1)
        if time == 1:
            self.a_pow = a[:, None, :] ** steps[None, :, None]                 # (N, k, B)
        else:
            self.a_pow = a[None, :, :] ** steps[:, None, None]                 # (k, N, B)
        self.time = time
        self.doubling = []
        x, span = a, 1
        while span < block:
            self.doubling.append(np.expand_dims(x, time))
            x = x * x
            span *= 2
        self.tmp = np.empty_like(self.a_pow)
        self.lead = (slice(None),) * time + (None,)  # v_last with the run's axis added
        self.plans: dict = {}

    def __call__(self, w: np.ndarray, v_last: np.ndarray) -> np.ndarray:
        m = w.shape[self.time]
        passes, head, a_pow = self._plan(m)
        for power, tmp, early, late in passes:
            np.multiply(power, w[early], out=tmp)
            w[late] += tmp
        np.multiply(a_pow, v_last[self.lead], out=head)
        w += head
        return w

    def _plan(self, m: int) -> tuple:
        """The doubling passes over a run of ``m`` samples (each pass's power, its part
        of the scratch array, the indices of its earlier and later samples), the scratch
        of the whole run and the powers it takes; made once per run length."""
        got = self.plans.get(m)
        if got is None:
            t, span, passes = (slice(None),) * self.time, 1, []
            for power in self.doubling:
                if span >= m:
                    break
                passes.append((power, self.tmp[t + (slice(0, m - span),)],
                               t + (slice(0, m - span),), t + (slice(span, m),)))
                span *= 2
            got = self.plans[m] = (passes, self.tmp[t + (slice(0, m),)],
                                   self.a_pow[t + (slice(0, m),)])
        return got


def _port_groups(net: Network) -> list[list[int]]:
    """The ports at each node, in port order (a node's current sums them in it)."""
    groups: list[list[int]] = [[] for _ in range(net.a.shape[0])]
    for p, node in enumerate(net.port_node.tolist()):
        groups[node].append(p)
    return groups


def _node_sums(terms: np.ndarray, groups: list[list[int]], out: np.ndarray, axis: int):
    """``out`` along ``axis``: each node's sum of its ports' ``terms`` (in port order;
    0 for a node without a port)."""
    def at(a, i):
        return a[(slice(None),) * axis + (i,)]

    for node, ports in enumerate(groups):
        dst = at(out, node)
        if not ports:
            dst.fill(0.0)
        elif len(ports) == 1:
            dst[...] = at(terms, ports[0])
        else:
            np.add(at(terms, ports[0]), at(terms, ports[1]), out=dst)
            for p in ports[2:]:
                dst += at(terms, p)
    return out


class _Waves:
    """The waves launched into every port, time-major ``(steps, P, B)``, in a window.

    Step ``s`` sits at row ``pad + s - base``; a run reads at most one longest delay
    back, so when a run's writes would pass the window's end its last ``pad`` rows are
    moved to the front (``base`` becomes the run's first step).  The window holds the
    whole record when that fits in :data:`_MAX_BUFFER_ELEMENTS`.
    """

    def __init__(self, net: Network, block: int, n_t: int):
        n_ports, n_b = net.port_node.size, net.a.shape[1]
        self.pad = int(net.port_delay.max()) + 1
        span = n_t
        if n_ports * (self.pad + n_t) * n_b > _MAX_BUFFER_ELEMENTS:
            span = block * -(-2 * self.pad // block)
        self.rows = np.zeros(((self.pad + span) * n_ports, n_b))
        self.size, self.n_ports, self.base = self.pad + span, n_ports, 0
        # port p reads its partner's wave from one step before the run's start delayed
        steps = (self.pad - 1 - net.port_delay)[None, :] + np.arange(block + 1)[:, None]
        self.reach = steps * n_ports + net.port_partner[None, :]          # (block + 1, P)
        self.frac = net.port_frac[None, :, None] if np.any(net.port_frac > 0.0) else None

    def incident(self, n: int, m: int) -> np.ndarray:
        """The waves arriving at every port over steps ``n .. n + m - 1``: ``(m, P, B)``."""
        if self.pad + n - self.base + m > self.size:  # slide the window
            keep = (n - self.base) * self.n_ports
            self.rows[:self.pad * self.n_ports] = self.rows[keep:keep + self.pad * self.n_ports]
            self.base = n
        got = self.rows.take(self.reach[:m + 1] + (n - self.base) * self.n_ports, axis=0)
        inc = got[1:]
        if self.frac is not None:  # a delay between two samples: linear interpolation
            inc = inc + self.frac * (got[:-1] - inc)
        return inc

    def launch(self, n: int, out_waves: np.ndarray, inc: np.ndarray, port_node) -> None:
        """Store the waves sent at steps ``n ..``: each port's node voltage less the
        wave that arrived (``out_waves`` ``(m, nodes, B)``)."""
        m, start = inc.shape[0], (self.pad + n - self.base) * self.n_ports
        dst = self.rows[start:start + m * self.n_ports].reshape(inc.shape)
        np.subtract(out_waves.take(port_node, axis=1), inc, out=dst)


def _run_matrix(net: Network, block: int) -> np.ndarray:
    """One case's run as a matrix per node: ``v = M @ [v_last, i_last, I[0..m-1]]``.

    Row ``i`` sums ``a^(i+1) v_last + sum_k a^(i-k) (c_now I[k] + c_prev I[k-1])`` (the
    companion update of the module docstring carried through the run); ``(nodes, block,
    block + 2)`` for a batch of one.
    """
    a = net.a[:, 0][:, None, None]
    i = np.arange(block)[:, None]
    lag = i - np.arange(block)[None, :]                                  # i - k
    power = np.where(lag >= 0, a ** np.maximum(lag, 0), 0.0)            # (N, m, m)
    out = np.zeros((a.shape[0], block, block + 2))
    out[:, :, 0] = a[:, :, 0] ** (i[:, 0] + 1)
    out[:, :, 1] = net.c_prev[:, 0][:, None] * power[:, :, 0]
    out[:, :, 2:] = net.c_now[:, 0][:, None, None] * power
    out[:, :, 2:-1] += net.c_prev[:, 0][:, None, None] * power[:, :, 1:]
    return out


def march(net: Network, v_src: np.ndarray, n_t: int) -> np.ndarray:
    """Every node's voltage at every step, ``(nodes, n_t, B)`` (a view of a time-major
    array for a batch); ``v_src`` is ``(n_t, B)``, or ``(n_t, 1)`` for one source."""
    n_nodes, n_b = net.a.shape
    block = _run_length(net, n_t)
    n_ports = net.port_node.size
    # one case on short runs, its launched waves kept whole (else the ring below)
    if n_b == 1 and n_ports and block <= _SINGLE_BLOCK:
        # runs of a step or two over a long record: the state-space blocks
        blocked = chosen_block(net, n_t, block)
        if blocked is not None:
            return march_blocked(net, v_src, n_t, blocked)
        return _march_single(net, v_src, n_t)
    src, a, g_src = net.source, net.a, net.g_source
    two_g = 2.0 * net.port_g[None]                                      # (1, P, B)
    groups = _port_groups(net)
    waves = _Waves(net, block, n_t) if n_ports else None
    volts = np.empty((n_t, n_nodes, n_b))                               # time-major
    scan = _Scan(a, block, time=0)
    i_last = np.zeros((n_nodes, n_b))
    i_last[src] = g_src * v_src[0]
    volts[0] = 0.0
    volts[0, src] = np.where(net.forced, v_src[0], 0.0)
    for n in range(1, n_t, block):
        m = min(block, n_t - n)
        here = slice(n, n + m)
        if waves is not None:
            inc = waves.incident(n, m)
            cur = _node_sums(two_g * inc, groups, np.empty((m, n_nodes, n_b)), axis=1)
        else:
            cur = np.zeros((m, n_nodes, n_b))
        cur[:, src] += g_src * v_src[here]
        w = np.multiply(net.c_now, cur, out=volts[here])               # the run in place
        w[0] += net.c_prev * i_last
        w[1:] += net.c_prev * cur[:-1]
        scan(w, volts[n - 1])
        w[:, src] = np.where(net.forced, v_src[here], w[:, src])
        if waves is not None:
            waves.launch(n, w, inc, net.port_node)
        i_last = cur[-1]
    return volts.transpose(1, 0, 2)


def _march_single(net: Network, v_src: np.ndarray, n_t: int) -> np.ndarray:
    """:func:`march` for one case: each run one matrix product per node.

    Every run is a whole block: the record is solved past its end to a whole number of
    runs (the source held), and cut.  Each run's voltages are the product's own output
    (``(runs, nodes, block)``, laid out as the record once at the end), and a record
    whose launched waves are kept whole reads a run's from a view starting at it, so a
    run is seven numpy calls; the arithmetic is the same, to the last bit.
    """
    n_nodes, src, port_node = net.a.shape[0], net.source, net.port_node
    block = _run_length(net, n_t)
    mat = _run_matrix(net, block)
    runs = -(-(n_t - 1) // block)
    n_all = 1 + runs * block
    pad = int(net.port_delay.max()) + 1
    # the launched waves of the whole record when they fit, else a ring of one longest
    # delay plus one run (a run reads back at most that far, and writes after reading),
    # rounded up to whole runs: run j's places in it repeat every `laps` runs
    full = port_node.size * (pad + n_all) <= _MAX_BUFFER_ELEMENTS
    laps = -(-(pad + block) // block)
    size = pad + n_all if full else laps * block
    launched = np.zeros((port_node.size, size))
    flat_launched = launched.reshape(-1)
    reach = pad - 1 - net.port_delay[:, None] + np.arange(block + 1)[None, :]
    base = net.port_partner[:, None] * size                              # (P, 1)
    flat = base + reach                                                  # (P, block + 1)
    ahead = pad + np.arange(block)                                       # ring writes
    reads: list = [None] * (0 if full else laps)  # each lap's places, made when first met
    writes: list = [None] * len(reads)
    frac = net.port_frac[:, None] if np.any(net.port_frac > 0.0) else None
    weight = net.incidence * (2.0 * net.port_g[:, 0])[None, :]           # (N, P)
    # each port at its own node, in node order: a node's launched wave is its voltage
    by_node = port_node.size == n_nodes and bool(np.all(port_node == np.arange(n_nodes)))
    src_cur, v_forced = source_samples(net, v_src, n_t, n_all)
    forced = bool(net.forced[0])
    blocks = np.empty((runs, n_nodes, block, 1))   # each run's product, in place
    state = np.zeros((n_nodes, block + 2))                               # v, i, I[...]
    cur = state[:, 2:]
    state[src, 1] = src_cur[0]
    if forced:
        state[src, 0] = v_forced[0]
    first = state[:, 0].copy()
    column = state[:, :, None]
    for j, n in enumerate(range(1, n_all, block)):
        if full:
            got = flat_launched[n:].take(flat)
        else:
            if reads[j % laps] is None:
                reads[j % laps], writes[j % laps] = (base + (reach + n) % size,
                                                     (ahead + n) % size)
            got = flat_launched.take(reads[j % laps])
        inc = got[:, 1:]
        if frac is not None:
            inc = inc + frac * (got[:, :-1] - inc)
        np.matmul(weight, inc, out=cur)
        cur[src] += src_cur[n:n + block]
        w = np.matmul(mat, column, out=blocks[j])[:, :, 0]
        if forced:
            w[src] = v_forced[n:n + block]
        sent = w if by_node else w.take(port_node, axis=0)
        if full:
            np.subtract(sent, inc, out=launched[:, pad + n:pad + n + block])
        else:
            launched[:, writes[j % laps]] = sent - inc
        state[:, 0] = w[:, -1]
        state[:, 1] = cur[:, -1]
    volts = np.empty((n_nodes, n_t, 1))
    volts[:, 0, 0] = first
    volts[:, 1:, 0] = blocks[:, :, :, 0].transpose(1, 0, 2).reshape(n_nodes, -1)[:, :n_t - 1]
    return volts


def _structure(net: Network, n_t: int) -> tuple | None:
    """What cases marched together by :func:`march_cases` must share (the nodes, the
    ports, the delays, the source and the run), or None for a case :func:`march` does
    not march alone by :func:`_march_single`."""
    block = _run_length(net, n_t)
    if net.a.shape[1] != 1 or not net.port_node.size or block > _SINGLE_BLOCK:
        return None
    return (net.a.shape[0], net.source, bool(net.forced[0]), block,
            net.port_node.tobytes(), net.port_partner.tobytes(), net.port_delay.tobytes(),
            net.port_frac.tobytes())


def march_cases(cases: list) -> list:
    """:func:`march` of several single cases ``(net, v_src, n_t)`` at once: the cases of
    one :func:`_structure` run in lockstep, each run's products a stack of the same
    products :func:`_march_single` forms (numpy's matmul makes each member's call as
    alone), so each record is :func:`march`'s to the last bit; any other case is marched
    alone."""
    out: list = [None] * len(cases)
    groups: dict = {}
    for i, (net, _, n_t) in enumerate(cases):
        groups.setdefault(_structure(net, n_t) or ("alone", i), []).append(i)
    for key, members in groups.items():
        pad = int(cases[members[0]][0].port_delay.max()) + 1 if key[0] != "alone" else 0
        n_all = max(cases[i][2] for i in members) + (key[3] if key[0] != "alone" else 0)
        if (len(members) == 1 or len(members) * cases[members[0]][0].port_node.size
                * (pad + n_all) > _MAX_BUFFER_ELEMENTS):
            for i in members:
                out[i] = march(*cases[i])
            continue
        for i, volts in zip(members, _march_stack([cases[i] for i in members], key[3]),
                            strict=True):
            out[i] = volts
    return out


def _march_stack(cases: list, block: int) -> list:
    """:func:`_march_single` of cases of one :func:`_structure` in lockstep (the launched
    waves of every record kept whole): the same operations on a leading axis of cases,
    each record run to the longest's whole runs (its own source held) and cut."""
    net0, k = cases[0][0], len(cases)
    n_nodes, src, port_node = net0.a.shape[0], net0.source, net0.port_node
    n_ports = port_node.size
    mat = np.stack([_run_matrix(net, block) for net, _, _ in cases])   # (K, N, m, m + 2)
    runs = max(-(-(n_t - 1) // block) for _, _, n_t in cases)
    n_all = 1 + runs * block
    pad = int(net0.port_delay.max()) + 1
    size = pad + n_all
    launched = np.zeros((k, n_ports, size))
    flat_launched = launched.reshape(-1)
    reach = pad - 1 - net0.port_delay[:, None] + np.arange(block + 1)[None, :]
    flat = (np.arange(k)[:, None, None] * (n_ports * size)
            + (net0.port_partner[:, None] * size + reach)[None])        # (K, P, m + 1)
    frac = net0.port_frac[:, None] if np.any(net0.port_frac > 0.0) else None
    weight = np.stack([net.incidence * (2.0 * net.port_g[:, 0])[None, :]
                       for net, _, _ in cases])                          # (K, N, P)
    by_node = n_ports == n_nodes and bool(np.all(port_node == np.arange(n_nodes)))
    src_cur, v_forced = np.empty((k, n_all)), np.empty((k, n_all))
    for c, (net, v_src, n_t) in enumerate(cases):
        src_cur[c, :n_t] = net.g_source[0] * v_src[:, 0]
        src_cur[c, n_t:] = src_cur[c, n_t - 1]
        v_forced[c, :n_t] = v_src[:, 0]
        v_forced[c, n_t:] = v_forced[c, n_t - 1]
    forced = bool(net0.forced[0])
    blocks = np.empty((runs, k, n_nodes, block, 1))
    state = np.zeros((k, n_nodes, block + 2))                            # v, i, I[...]
    cur = state[:, :, 2:]
    state[:, src, 1] = src_cur[:, 0]
    if forced:
        state[:, src, 0] = v_forced[:, 0]
    first = state[:, :, 0].copy()
    column = state[:, :, :, None]
    for j, n in enumerate(range(1, n_all, block)):
        got = flat_launched[n:].take(flat)
        inc = got[:, :, 1:]
        if frac is not None:
            inc = inc + frac * (got[:, :, :-1] - inc)
        np.matmul(weight, inc, out=cur)
        cur[:, src] += src_cur[:, n:n + block]
        w = np.matmul(mat, column, out=blocks[j])[:, :, :, 0]
        if forced:
            w[:, src] = v_forced[:, n:n + block]
        sent = w if by_node else w.take(port_node, axis=1)
        np.subtract(sent, inc, out=launched[:, :, pad + n:pad + n + block])
        state[:, :, 0] = w[:, :, -1]
        state[:, :, 1] = cur[:, :, -1]
    records = blocks[..., 0].transpose(1, 2, 0, 3).reshape(k, n_nodes, -1)
    out = []
    for c, (_, _, n_t) in enumerate(cases):
        volts = np.empty((n_nodes, n_t, 1))
        volts[:, 0, 0] = first[c]
        volts[:, 1:, 0] = records[c, :, :n_t - 1]
        out.append(volts)
    return out
