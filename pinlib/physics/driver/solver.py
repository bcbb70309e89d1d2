"""The least-squares solver behind :func:`pinlib.physics.driver.fit_driver`.

:class:`_Problem` holds the relative residuals of the driver model against datasheet
points in scaled parameters (``ln r_out``, ``t_ramp``) and the search box;
:func:`_solve` evaluates a dense grid over the box for starting points and refines the
best of them with a bounded Levenberg-Marquardt iteration (:func:`_lm`, numpy only);
:func:`_flat_ramp_limit` finds how far the ramp can grow without changing any edge.
"""

from __future__ import annotations

import math

import numpy as np

from pinlib.physics import rc

# Search box, relative to the data: r_out from a value whose RC is negligible at every
# load up to one whose 20-80 % RC edge alone is four times the slowest point; t_ramp
# from 0 to four times the ramp whose 20-80 % edge alone is the slowest point.
_R_LOW_FACTOR = 1e-6
_BOX_FACTOR = 4.0
_GRID_R = 61
_GRID_T = 41
_STARTS = 4

# Levenberg-Marquardt settings (scaled parameters: ln r_out and t_ramp / max(times)).
_MAX_ITER = 300
_STEP_TOL = 1e-13
_COST_RTOL = 1e-15
_FD_STEP = 1e-7
#: Damping values tried per Levenberg-Marquardt iteration, each this factor above the last.
_TRIALS = 40
_LAM_GROWTH = 4.0
#: The trials in the order they are evaluated: most iterations take the first or second.
_TRIAL_CHUNKS = ((0, 2), (2, _TRIALS))


# --------------------------------------------------------------------------- solver


def _lm(fun, x0, lower, upper, free, *, by_row=False):
    """Bounded Levenberg-Marquardt on a small least-squares problem, from several starts.

    ``x0`` holds one start per row; every start runs its own iteration (its own damping,
    its own end), all of them advanced together so that each residual evaluation covers
    every start still running.  ``fun(X)`` returns one residual row per row of ``X``;
    parameters outside ``free`` stay at their start.  A parameter sitting on a bound
    whose gradient points out of the box is held there for the step (a projected
    active-set step); steps are clipped into the box.  Returns ``(x, residuals, cost)``
    per start, in the order of the starts.

    With ``by_row``, the starts may belong to different problems (of one number of
    residuals): ``lower`` and ``upper`` are then one row per start, and ``fun(X, rows)``
    is told the start each row of ``X`` belongs to.  Every operation is element by
    element or per start, so a start ends where it would alone, to the bit.
    """
    x = np.array(x0, dtype=float, ndmin=2)
    lower = np.broadcast_to(np.asarray(lower, dtype=float), x.shape)
    upper = np.broadcast_to(np.asarray(upper, dtype=float), x.shape)
    call = fun if by_row else (lambda xs, rows: fun(xs))
    x = np.clip(x, lower, upper)
    r = np.array(call(x, np.arange(x.shape[0])), dtype=float)
    cost = np.einsum("ij,ij->i", r, r)
    lam = np.full(x.shape[0], 1e-3)
    running = np.ones(x.shape[0], dtype=bool)
    for _ in range(_MAX_ITER):
        idx = np.flatnonzero(running)
        if not idx.size:
            break
        xr, lo, up = x[idx], lower[idx], upper[idx]
        jac = _jacobian(call, xr, lo, up, free, idx)  # (starts, residuals, parameters)
        grad = np.einsum("kmp,km->kp", jac, r[idx])
        held = ((xr <= lo) & (grad > 0.0)) | ((xr >= up) & (grad < 0.0))
        active = free & ~held
        stuck = ~active.any(axis=1)
        running[idx[stuck]] = False
        keep = ~stuck
        idx, xr, jac, grad, active = idx[keep], xr[keep], jac[keep], grad[keep], active[keep]
        if not idx.size:
            break
        a, diag, rhs = _normal_equations(jac, grad, active)
        taken, new_x, new_r, new_cost, new_lam = _damped_step(
            call, xr, lam[idx], cost[idx], a, diag, rhs, active, lower[idx], upper[idx],
            r.shape[1], idx)
        refused = taken < 0
        running[idx[refused]] = False
        ok = ~refused
        idx = idx[ok]
        moved = np.max(np.abs(new_x[ok] - x[idx]), axis=1)
        gain = cost[idx] - new_cost[ok]
        x[idx], r[idx], cost[idx] = new_x[ok], new_r[ok], new_cost[ok]
        lam[idx] = np.maximum(new_lam[ok] / 3.0, 1e-12)
        done = ((moved < _STEP_TOL) | ((gain <= _COST_RTOL * cost[idx] + 1e-300) & (moved < 1e-9))
                | (cost[idx] == 0.0))  # an exact fit: nothing left to gain
        running[idx[done]] = False
    return [(x[i], r[i], float(cost[i])) for i in range(x.shape[0])]


def _normal_equations(jac, grad, active):
    """The Gauss-Newton system of each start on its active parameters: ``(a, diag, rhs)``.

    A held parameter gets an identity row and a zero right-hand side, so its step is 0;
    ``diag`` is the diagonal that the damping scales, floored at 1e-12 of its largest
    active entry.
    """
    eye = np.eye(jac.shape[-1])
    both = active[:, :, None] & active[:, None, :]
    a = np.where(both, np.einsum("kmp,kmq->kpq", jac, jac), 0.0)
    diag = np.where(active, np.einsum("kpp->kp", a), 0.0)
    floor = 1e-12 * np.maximum(np.max(np.where(active, diag, -np.inf), axis=1), 1e-300)
    diag = np.where(active, np.maximum(diag, floor[:, None]), 1.0)
    a = np.where(both, a, eye)
    rhs = np.where(active, -grad, 0.0)
    return a, diag, rhs


def _damped_step(fun, xr, lam, cost, a, diag, rhs, active, lower, upper, size, starts):
    """The first damped step of each start that does not raise its cost.

    The damped steps for lam, 4 lam, 16 lam, ... (:data:`_TRIALS` of them) are tried a
    chunk at a time, each chunk in one evaluation; a start takes the first step that
    does not raise its cost, as a loop raising lam after each refusal would.  Returns
    ``(taken, x, residuals, cost, lam)`` per start, ``taken`` being -1 where every
    trial was refused (the other rows are then unset).  ``lower`` and ``upper`` are one
    row per start, ``starts`` the start of each (``fun(X, starts)``).
    """
    p = xr.shape[1]
    eye = np.eye(p)
    count = xr.shape[0]
    taken = np.full(count, -1)
    new_x = np.empty_like(xr)
    new_r = np.empty((count, size))
    new_cost = np.empty(count)
    new_lam = np.empty(count)
    for first, last in _TRIAL_CHUNKS:
        todo = np.flatnonzero(taken < 0)
        if not todo.size:
            break
        lams = lam[todo, None] * _LAM_GROWTH ** np.arange(first, last)  # (t, c)
        damp = np.where(active[todo], 1.0, 0.0) * diag[todo]
        systems = a[todo, None] + lams[:, :, None, None] * (damp[:, None, :, None] * eye)
        steps = np.linalg.solve(systems, np.broadcast_to(
            rhs[todo, None, :, None], systems.shape[:3] + (1,)))[..., 0]
        trial = np.clip(xr[todo, None, :] + steps, lower[todo, None, :], upper[todo, None, :])
        r_trial = np.asarray(fun(trial.reshape(-1, p), np.repeat(starts[todo], trial.shape[1]))
                             ).reshape(trial.shape[:2] + (-1,))
        costs = np.einsum("tcm,tcm->tc", r_trial, r_trial)
        ok = costs <= cost[todo, None]
        got = ok.any(axis=1)
        k = np.argmax(ok, axis=1)
        rows = np.flatnonzero(got)
        sel = todo[rows]
        taken[sel] = 1
        new_x[sel] = trial[rows, k[rows]]
        new_r[sel] = r_trial[rows, k[rows]]
        new_cost[sel] = costs[rows, k[rows]]
        new_lam[sel] = lams[rows, k[rows]]
    return taken, new_x, new_r, new_cost, new_lam


def _jacobian(fun, x, lower, upper, free, rows=None):
    """Central differences inside the box (one-sided at a bound).

    ``x`` is one parameter vector (the Jacobian is ``(residuals, parameters)``) or one
    per row (then ``(rows, residuals, parameters)``; ``lower`` and ``upper`` one row per
    row of ``x`` or one for all).  Every displaced point of every row is evaluated in
    one call of ``fun``, which takes a stack of parameter vectors and returns one
    residual row each; given ``rows`` (the start each row of ``x`` is), it is called
    ``fun(X, starts)``, told the start each vector is displaced from.  A held
    parameter's column is zero.
    """
    x = np.asarray(x, dtype=float)
    if x.ndim == 1:
        return _jacobian(fun, x[None, :], lower, upper, free)[0]
    k, p = x.shape
    if rows is None:  # one problem: fun(X) alone
        plain, rows = fun, np.zeros(k, dtype=int)

        def fun(xs, starts):
            return plain(xs)

    lower = np.broadcast_to(np.asarray(lower, dtype=float), x.shape)
    upper = np.broadcast_to(np.asarray(upper, dtype=float), x.shape)
    moved = [i for i in range(p) if free[i]]
    if not moved:
        size = np.asarray(fun(x, rows)).shape[-1]
        return np.zeros((k, size, p))
    stack = np.repeat(x[:, None, :], 2 * len(moved), axis=1)  # (k, 2 F, p)
    for j, i in enumerate(moved):
        stack[:, 2 * j, i] = np.minimum(x[:, i] + _FD_STEP, upper[:, i])
        stack[:, 2 * j + 1, i] = np.maximum(x[:, i] - _FD_STEP, lower[:, i])
    out = fun(stack.reshape(-1, p), np.repeat(rows, 2 * len(moved)))
    rows_r = np.asarray(out).reshape(k, 2 * len(moved), -1)
    jac = np.zeros((k, rows_r.shape[-1], p))
    for j, i in enumerate(moved):
        jac[:, :, i] = ((rows_r[:, 2 * j] - rows_r[:, 2 * j + 1])
                        / (stack[:, 2 * j, i] - stack[:, 2 * j + 1, i])[:, None])
    return jac


def _median(values: np.ndarray) -> float:
    """The median of a few values (numpy's own imports numpy.ma on first use, which
    costs a fresh ``pinlib check`` about 10 ms)."""
    v = np.sort(np.asarray(values, dtype=float).ravel())
    mid = v.size // 2
    return float(v[mid]) if v.size % 2 else float((v[mid - 1] + v[mid]) / 2.0)


class _Problem:
    """Relative residuals of the model against the points, in scaled parameters.

    ``x[0] = ln(r_out / r_ref)`` and ``x[1] = t_ramp / t_ref`` with ``t_ref`` the
    slowest point; residual ``i`` is ``(model_i - time_i) / time_i``.
    """

    def __init__(self, loads, times, lo, hi):
        self.loads = loads
        self.times = times
        self.lo = lo
        self.hi = hi
        self._levels2 = np.concatenate([np.broadcast_to(np.asarray(lo, dtype=float), loads.shape),
                                        np.broadcast_to(np.asarray(hi, dtype=float), loads.shape)])
        self._loads2 = np.concatenate([loads, loads])
        self.t_ref = float(times.max())
        self.r_ref = float(_median(times) / (rc.RISE_10_90 * _median(loads)))
        r_lo = _R_LOW_FACTOR * float(times.min()) / float(loads.max())
        r_hi = _BOX_FACTOR * float(times.max()) / (rc.RISE_20_80 * float(loads.min()))
        t_hi = _BOX_FACTOR * float(times.max()) / 0.6
        self.lower = np.array([math.log(r_lo / self.r_ref), 0.0])
        self.upper = np.array([math.log(r_hi / self.r_ref), t_hi / self.t_ref])

    def r_out(self, x0):
        return self.r_ref * np.exp(x0)

    def model(self, r_out, t_ramp):
        # Both crossings of every point in one unchecked call (the fit loop evaluates
        # this hundreds of times; fit_driver has checked the inputs once): the same
        # element-wise arithmetic as rc.ramp_rc_edge_time, so the same results.  Array
        # parameters give one row of edge times per value.
        n = self.loads.size
        r_out = np.asarray(r_out, dtype=float)[..., None]
        t_ramp = np.asarray(t_ramp, dtype=float)[..., None]
        t = rc._ramp_rc_crossing(self._levels2, t_ramp, r_out * self._loads2)
        return t[..., n:] - t[..., :n]

    def residual(self, x):
        """Relative residuals at ``x`` (shape ``(2,)``), or one row per row of ``x``."""
        x = np.asarray(x, dtype=float)
        return self.model(self.r_out(x[..., 0]), x[..., 1] * self.t_ref) / self.times - 1.0

    def grid_cost(self, x0_grid, x1_grid):
        r = self.r_out(np.asarray(x0_grid))[:, None, None]
        t = (np.asarray(x1_grid) * self.t_ref)[None, :, None]
        tau = r * self.loads
        edge = rc._ramp_rc_crossing(self.hi, t, tau) - rc._ramp_rc_crossing(self.lo, t, tau)
        rel = edge / self.times - 1.0
        return np.sum(rel * rel, axis=-1)


def _grid_starts(cost: np.ndarray, k: int):
    """Indices of up to ``k`` local minima of a 2-D grid of costs, best first."""
    padded = np.pad(cost, 1, constant_values=np.inf)
    centre = padded[1:-1, 1:-1]
    is_min = np.ones_like(centre, dtype=bool)
    for di in (-1, 0, 1):
        for dj in (-1, 0, 1):
            if di or dj:
                nb = padded[1 + di:padded.shape[0] - 1 + di, 1 + dj:padded.shape[1] - 1 + dj]
                is_min &= centre <= nb
    idx = np.argwhere(is_min)
    order = np.argsort(cost[is_min], kind="stable")
    return [tuple(i) for i in idx[order][:k]]


def _solve(problem: _Problem, r_fixed: float | None):
    """Local least-squares solutions over the box, best first.

    ``r_out`` is held at ``r_fixed`` when given.  Returns the list of
    ``(x, relative residuals, cost)`` reached from the best grid starts, and the
    ``lower``, ``upper`` and ``free`` arrays used.
    """
    return _solve_many([problem], [r_fixed])[0]


def _box(problem: _Problem, r_fixed: float | None):
    """The search grid and box of one problem: ``(x0_grid, x1_grid, lower, upper, free)``."""
    x1_grid = np.concatenate([[0.0], np.geomspace(1e-4, problem.upper[1], _GRID_T - 1)])
    if r_fixed is None:
        x0_grid = np.linspace(problem.lower[0], problem.upper[0], _GRID_R)
        return x0_grid, x1_grid, problem.lower, problem.upper, np.array([True, True])
    x0_grid = np.array([math.log(r_fixed / problem.r_ref)])
    lower = np.array([x0_grid[0], problem.lower[1]])
    upper = np.array([x0_grid[0], problem.upper[1]])
    return x0_grid, x1_grid, lower, upper, np.array([False, True])


def _solve_many(problems: list[_Problem], fixed: list[float | None]) -> list[tuple]:
    """:func:`_solve` of several problems at once, each one's result as alone, to the bit.

    Problems with as many points and the same free parameters share one
    Levenberg-Marquardt iteration (:func:`_lm` with ``by_row``: each start keeps its own
    damping and end), so a hundred fits cost about what a few do one at a time.
    """
    out: list = [None] * len(problems)
    groups: dict[tuple, list[int]] = {}
    for i, (pr, rf) in enumerate(zip(problems, fixed, strict=True)):
        groups.setdefault((rf is None, pr.loads.size), []).append(i)
    for members in groups.values():
        boxes = [_box(problems[i], fixed[i]) for i in members]
        starts, owner = [], []
        for k, i in enumerate(members):
            x0_grid, x1_grid = boxes[k][:2]
            cost = problems[i].grid_cost(x0_grid, x1_grid)
            for a, b in _grid_starts(cost, _STARTS):
                starts.append([x0_grid[a], x1_grid[b]])
                owner.append(k)
        stack = _Stack([problems[i] for i in members], owner)
        found = _lm(stack.residual, np.array(starts),
                    np.array([boxes[k][2] for k in owner]),
                    np.array([boxes[k][3] for k in owner]), boxes[0][4], by_row=True)
        for k, i in enumerate(members):
            mine = [item for item, o in zip(found, owner, strict=True) if o == k]
            mine.sort(key=lambda item: item[2])
            out[i] = (mine, *boxes[k][2:])
    return out


class _Stack:
    """The residuals of several problems of as many points, for starts of each.

    :meth:`residual` is :meth:`_Problem.residual` row by row: the same operations on the
    same numbers, each row's problem that of its start (``owner``: the problem of each
    start, an index into ``problems``).
    """

    def __init__(self, problems: list[_Problem], owner: list[int]):
        self.owner = np.array(owner, dtype=int)
        self.n = problems[0].loads.size
        self.loads2 = np.stack([p._loads2 for p in problems])
        self.levels2 = np.stack([p._levels2 for p in problems])
        self.times = np.stack([p.times for p in problems])
        self.r_ref = np.array([p.r_ref for p in problems])
        self.t_ref = np.array([p.t_ref for p in problems])

    def residual(self, x, starts):
        """Relative residuals at each row of ``x`` (shape ``(N, 2)``), displaced from the
        start ``starts[row]``."""
        which = self.owner[starts]
        x = np.asarray(x, dtype=float)
        r_out = self.r_ref[which] * np.exp(x[:, 0])
        t_ramp = x[:, 1] * self.t_ref[which]
        t = rc._ramp_rc_crossing(self.levels2[which], t_ramp[:, None],
                                 r_out[:, None] * self.loads2[which])
        return (t[:, self.n:] - t[:, :self.n]) / self.times[which] - 1.0


def _flat_ramp_limit(problem: _Problem, r_out: float, t_ramp: float, t_hi: float) -> float:
    """Largest ramp that leaves every point's edge as with no ramp, or 0 if none does.

    When the ramp ends before a point's lower level is crossed, the whole edge lies on
    the exponential tail ``1 - phi(m) exp(-(t - t_ramp)/tau)`` and its duration is
    ``tau ln((1 - lo)/(1 - hi))`` whatever ``t_ramp`` is: the points then bound
    ``t_ramp`` from above but do not fix it.
    """
    step = problem.model(r_out, 0.0)

    def same(t):
        return bool(np.all(np.abs(problem.model(r_out, t) / step - 1.0) <= 1e-12))

    if not same(t_ramp):
        return 0.0
    lo, hi = t_ramp, t_hi
    if same(hi):
        return hi
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        lo, hi = (mid, hi) if same(mid) else (lo, mid)
    # A limit this small against the slowest point is rounding, not a flat stretch.
    return lo if lo > 1e-6 * problem.t_ref else 0.0
