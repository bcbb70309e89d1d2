"""Push-pull output drivers: a ramp behind an output resistance, fitted to datasheet edges.

The driver model is a Thevenin source whose open-circuit voltage ramps linearly from
one rail to the other in ``t_ramp`` (0 % to 100 %), behind the output resistance
``r_out``, into a capacitive load ``c_load``.  The edge seen on the load is that ramp
through a single pole of time constant ``tau = r_out c_load``
(:func:`pinlib.physics.rc.ramp_rc_edge_time`).  Rise and fall are the same model with
their own ``r_out`` and ``t_ramp``.

Datasheets give edge times at one or a few loads (``edges`` in a part class).  From
them :func:`fit_driver` finds ``r_out`` and ``t_ramp`` by least squares, or ``t_ramp``
alone when ``r_out`` is known; :func:`driver_from_pin` builds a :class:`Driver` from a
part-class pin, marking every value it had to derive; :func:`edge_time` and
:func:`edge_vs_load` give the edge time against load for charts.

The fit uses only numpy: a dense grid over ``(ln r_out, t_ramp)`` for starting points,
then a bounded Levenberg-Marquardt refinement (``r_out > 0``, ``t_ramp >= 0``).
"""

from __future__ import annotations

import math
import warnings
from collections import OrderedDict
from dataclasses import dataclass, field, replace

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import FitWarning, InputError
from pinlib.physics import guards, rc

__all__ = [
    "LEVELS",
    "DEFAULT_R_OUT",
    "DEFAULT_T_RAMP",
    "FIT_METHODS",
    "DriverFit",
    "Driver",
    "level_fractions",
    "edge_time",
    "r_out_from_levels",
    "fit_driver",
    "driver_from_pin",
    "edge_vs_load",
]

#: Measuring levels of a datasheet edge, as fractions of the swing.
LEVELS = {"10-90": (0.1, 0.9), "20-80": (0.2, 0.8)}

#: Output resistance used when neither ``r_out``, two edge points nor output levels
#: give one. [Ω]
#: common practice, no source: CMOS push-pull outputs are about 10-30 Ω; 25 Ω sits
#: towards the slow end of that range.
DEFAULT_R_OUT = 25.0

#: Source ramp (0-100 %) used when no datasheet edge is given. [s]
#: common practice, no source: fast CMOS output stages switch in about 1 ns.  A shorter
#: ramp makes overshoot worse and a longer one makes timing worse, so no single default
#: is the worst case for both.
DEFAULT_T_RAMP = 1e-9

#: Values of :attr:`DriverFit.method`.
FIT_METHODS = ("fixed-r_out", "least-squares", "from-levels", "default")

# A point whose model edge differs from the datasheet by more than this fraction makes
# the fit warn.  common practice, no source: datasheets print edge times to two or three
# digits, so a consistent model reproduces them to a few per cent.
_RESIDUAL_RTOL = 0.05

# Relative precision assumed for datasheet edge times when judging whether the points
# determine r_out (common practice, no source: two to three printed digits), and the
# relative spread of r_out above which the fit warns that r_out is poorly determined.
_POINT_RTOL = 0.01
_R_SPREAD_LIMIT = 0.10

# A fitted r_out whose RC edge (2.197 r_out C at the largest load) is under this share of
# the fastest point is taken as "driven to zero" (the points do not depend on it).
_RC_SHARE = 0.05

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

# Fits already made in this process, by their inputs.  The SPI engine fits the same
# datasheet points once per routed line and edge; the fit is deterministic, so a repeat
# returns the stored fit (and issues its warnings again).  Bounded, oldest dropped first.
_FIT_CACHE: OrderedDict = OrderedDict()
_FIT_CACHE_SIZE = 256
#: A second store of fits, by :func:`fit_key`, that outlives the process (the command
#: line installs one: :mod:`pinlib.engines.fitstore`); None: fits live in this process only.
FIT_STORE = None


# --------------------------------------------------------------------------- results


@dataclass(frozen=True)
class DriverFit:
    """The driver parameters fitted to datasheet edge points.

    Attributes
    ----------
    r_out : float
        Output resistance, fitted or as held fixed. [Ω]
    t_ramp : float
        Source ramp duration, 0 % to 100 %. [s]
    residuals : numpy.ndarray
        Model edge time minus datasheet edge time, one per point. [s]
    rms_residual : float
        Root mean square of ``residuals``. [s]
    method : str
        How ``r_out`` was obtained: ``"fixed-r_out"`` (given), ``"least-squares"``
        (fitted with ``t_ramp``), ``"from-levels"`` (from the output levels, the points
        being unable to separate it from ``t_ramp``) or ``"default"``
        (:data:`DEFAULT_R_OUT`, for the same reason). [1]
    warnings : tuple of str
        The messages of the :class:`~pinlib.core.errors.FitWarning` the fit emitted. [1]
    notes : tuple of str
        What the fit assumed (a default, a value taken from the output levels). [1]
    """

    r_out: float
    t_ramp: float
    residuals: np.ndarray
    rms_residual: float
    method: str
    warnings: tuple[str, ...] = ()
    notes: tuple[str, ...] = ()


@dataclass(frozen=True)
class Driver:
    """A push-pull output: rise and fall each a ramp behind an output resistance.

    Attributes
    ----------
    r_rise, r_fall : float
        Output resistance while driving high / low. [Ω]
    t_ramp_rise, t_ramp_fall : float
        Source ramp duration (0-100 %) of the rising / falling edge. [s]
    basis : dict
        For each of the four fields above, where it came from: ``"given"`` (the pin's
        ``r_out``), ``"fitted"`` (to the pin's ``edges``), ``"from-levels"`` (from
        ``v_oh``/``i_oh`` or ``v_ol``/``i_ol``) or ``"default"``. [1]
    notes : tuple of str
        Assumptions made while building the driver. [1]
    fit_rise, fit_fall : DriverFit or None
        The edge fits, when the pin has edge points for that direction. [1]
    """

    r_rise: float
    r_fall: float
    t_ramp_rise: float
    t_ramp_fall: float
    basis: dict = field(default_factory=dict)
    notes: tuple[str, ...] = ()
    fit_rise: DriverFit | None = None
    fit_fall: DriverFit | None = None

    @property
    def derived(self) -> frozenset[str]:
        """Names of the fields pinlib derived rather than read from the part."""
        return frozenset(k for k, v in self.basis.items() if v != "given")

    @property
    def warnings(self) -> tuple[str, ...]:
        """Every fit warning of both edges."""
        out: tuple[str, ...] = ()
        for fit in (self.fit_rise, self.fit_fall):
            if fit is not None:
                out += fit.warnings
        return out


# --------------------------------------------------------------------------- checks


def _array(value, name: str) -> np.ndarray:
    try:
        return np.asarray(value, dtype=float)
    except (TypeError, ValueError) as exc:
        raise InputError(M.NOT_NUMBERS, field=name, value=value,
                         expected="a float or array of floats") from exc


def _require(value, ok, name: str, expected: str) -> None:
    if not np.all(ok):
        raise InputError(M.VALUE_OUT_OF_RANGE, field=name, value=value, expected=expected)


def _non_negative(value, name: str, unit: str) -> np.ndarray:
    return guards.non_negative(value, name, unit, convert=_array)


def _positive(value, name: str, unit: str) -> np.ndarray:
    return guards.positive(value, name, unit, convert=_array)


def level_fractions(levels="10-90"):
    """Lower and upper measuring level of an edge, as fractions of the swing.

    Parameters
    ----------
    levels : str or array_like of str
        ``"10-90"`` or ``"20-80"`` (a key of :data:`LEVELS`), or an array of them. [1]

    Returns
    -------
    lo, hi : numpy.ndarray
        Fractions of the swing, with the shape of ``levels``. [1]

    Examples
    --------
    >>> [float(x) for x in level_fractions("20-80")]
    [0.2, 0.8]
    """
    arr = np.asarray(levels, dtype=object)
    names = [str(s) for s in arr.flat]
    unknown = [s for s in names if s not in LEVELS]
    if unknown or not names:
        raise InputError(M.UNKNOWN_MEASURING_LEVELS, field="levels",
                         value=unknown[0] if unknown else levels,
                         expected="one of " + ", ".join(f"'{k}'" for k in LEVELS))
    lo = np.array([LEVELS[s][0] for s in names]).reshape(arr.shape)
    hi = np.array([LEVELS[s][1] for s in names]).reshape(arr.shape)
    return lo, hi


# --------------------------------------------------------------------------- model


def edge_time(r_out, t_ramp, c_load, levels="10-90"):
    """Edge time of a ramp source behind an output resistance into a capacitive load.

    Parameters
    ----------
    r_out : float or array_like
        Output resistance of the driver, plus any series resistor. [Ω]
    t_ramp : float or array_like
        Duration of the source ramp, 0 % to 100 % of the swing. [s]
    c_load : float or array_like
        Load capacitance. [F]
    levels : str or array_like of str, optional
        Measuring levels, ``"10-90"`` (default) or ``"20-80"``. [1]

    Returns
    -------
    numpy.ndarray or float
        Time between the two levels on the load, broadcast over the inputs. [s]

    Notes
    -----
    The load voltage is the ramp convolved with the single-pole step response of
    ``tau = r_out c_load`` (linear circuit theory); the edge is the time between its
    crossings of ``lo`` and ``hi`` (:func:`pinlib.physics.rc.ramp_rc_edge_time`).
    Limits: ``t_ramp -> 0`` gives ``ln((1 - lo)/(1 - hi)) r_out c_load`` (2.197 RC for
    10-90 %, 1.386 RC for 20-80 %); ``r_out c_load -> 0`` gives ``(hi - lo) t_ramp``.

    Examples
    --------
    >>> round(float(edge_time(20.0, 0.0, 100e-12)) * 1e9, 3)
    4.394
    """
    r = _non_negative(r_out, "r_out", "[Ω]")
    t = _non_negative(t_ramp, "t_ramp", "[s]")
    c = _non_negative(c_load, "c_load", "[F]")
    lo, hi = level_fractions(levels)
    out = rc.ramp_rc_edge_time(t, r * c, lo, hi)
    return out[()] if np.ndim(out) == 0 else out


def _r_high(vdd, v_oh, i_oh):
    vdd = _positive(vdd, "vdd", "[V]")
    v_oh = _non_negative(v_oh, "v_oh", "[V]")
    i_oh = _positive(i_oh, "i_oh", "[A]")
    _require(v_oh, v_oh < vdd, "v_oh", "v_oh < vdd [V]")
    return (vdd - v_oh) / i_oh


def _r_low(v_ol, i_ol):
    v_ol = _positive(v_ol, "v_ol", "[V]")
    i_ol = _positive(i_ol, "i_ol", "[A]")
    return v_ol / i_ol


def r_out_from_levels(vdd, v_oh, i_oh, v_ol, i_ol):
    """Output resistance from the guaranteed output levels at their test currents.

    Parameters
    ----------
    vdd : float or array_like
        Supply of the driver, at which ``v_oh`` is stated. [V]
    v_oh : float or array_like
        Minimum high-level output voltage at ``i_oh`` (resolved, not relative). [V]
    i_oh : float or array_like
        Source current at which ``v_oh`` is guaranteed, as a magnitude. [A]
    v_ol : float or array_like
        Maximum low-level output voltage at ``i_ol``. [V]
    i_ol : float or array_like
        Sink current at which ``v_ol`` is guaranteed. [A]

    Returns
    -------
    r_rise, r_fall : numpy.ndarray or float
        ``(vdd - v_oh) / i_oh`` and ``v_ol / i_ol``. [Ω]

    Notes
    -----
    Ohm's law on the DC output specification: the drop from the rail at the test
    current is taken as a linear output resistance.  It is a chord of the output's
    real (non-linear) characteristic at the guaranteed limit, so it is the largest
    resistance the part may have at that current.  At small test currents (e.g. the
    LVCMOS 0.2 V at 100 µA of JESD8C.01) it greatly overstates the resistance that sets
    the edge; a datasheet ``r_out`` or ``edges`` serve better.

    Examples
    --------
    >>> [round(float(x), 1) for x in r_out_from_levels(3.3, 2.9, 8e-3, 0.4, 8e-3)]
    [50.0, 50.0]

    References
    ----------
    JEDEC JESD8C.01 (3.3 V), JESD8-7A (1.8 V): VOH/VOL at stated currents.
    """
    r_rise = _r_high(vdd, v_oh, i_oh)
    r_fall = _r_low(v_ol, i_ol)
    return (r_rise[()] if np.ndim(r_rise) == 0 else r_rise,
            r_fall[()] if np.ndim(r_fall) == 0 else r_fall)


# --------------------------------------------------------------------------- solver


def _lm(fun, x0, lower, upper, free):
    """Bounded Levenberg-Marquardt on a small least-squares problem, from several starts.

    ``x0`` holds one start per row; every start runs its own iteration (its own damping,
    its own end), all of them advanced together so that each residual evaluation covers
    every start still running.  ``fun(X)`` returns one residual row per row of ``X``;
    parameters outside ``free`` stay at their start.  A parameter sitting on a bound
    whose gradient points out of the box is held there for the step (a projected
    active-set step); steps are clipped into the box.  Returns ``(x, residuals, cost)``
    per start, in the order of the starts.
    """
    x = np.clip(np.array(x0, dtype=float, ndmin=2), lower, upper)
    r = np.array(fun(x), dtype=float)
    cost = np.einsum("ij,ij->i", r, r)
    lam = np.full(x.shape[0], 1e-3)
    running = np.ones(x.shape[0], dtype=bool)
    p = x.shape[1]
    eye = np.eye(p)
    for _ in range(_MAX_ITER):
        idx = np.flatnonzero(running)
        if not idx.size:
            break
        xr = x[idx]
        jac = _jacobian(fun, xr, lower, upper, free)  # (starts, residuals, parameters)
        grad = np.einsum("kmp,km->kp", jac, r[idx])
        held = ((xr <= lower) & (grad > 0.0)) | ((xr >= upper) & (grad < 0.0))
        active = free & ~held
        stuck = ~active.any(axis=1)
        running[idx[stuck]] = False
        keep = ~stuck
        idx, xr, jac, grad, active = idx[keep], xr[keep], jac[keep], grad[keep], active[keep]
        if not idx.size:
            break
        # The normal equations on the active parameters; a held parameter gets an
        # identity row and a zero right-hand side, so its step is 0.
        both = active[:, :, None] & active[:, None, :]
        a = np.where(both, np.einsum("kmp,kmq->kpq", jac, jac), 0.0)
        diag = np.where(active, np.einsum("kpp->kp", a), 0.0)
        floor = 1e-12 * np.maximum(np.max(np.where(active, diag, -np.inf), axis=1), 1e-300)
        diag = np.where(active, np.maximum(diag, floor[:, None]), 1.0)
        a = np.where(both, a, eye)
        rhs = np.where(active, -grad, 0.0)
        # The damped steps for lam, 4 lam, 16 lam, ... (_TRIALS of them) are tried a
        # chunk at a time, each chunk in one evaluation; a start takes the first step
        # that does not raise its cost, as a loop raising lam after each refusal would.
        taken = np.full(idx.size, -1)
        new_x = np.empty_like(xr)
        new_r = np.empty((idx.size, r.shape[1]))
        new_cost = np.empty(idx.size)
        new_lam = np.empty(idx.size)
        for first, last in _TRIAL_CHUNKS:
            todo = np.flatnonzero(taken < 0)
            if not todo.size:
                break
            lams = lam[idx[todo], None] * _LAM_GROWTH ** np.arange(first, last)  # (t, c)
            damp = np.where(active[todo], 1.0, 0.0) * diag[todo]
            systems = a[todo, None] + lams[:, :, None, None] * (damp[:, None, :, None] * eye)
            steps = np.linalg.solve(systems, np.broadcast_to(
                rhs[todo, None, :, None], systems.shape[:3] + (1,)))[..., 0]
            trial = np.clip(xr[todo, None, :] + steps, lower, upper)
            r_trial = np.asarray(fun(trial.reshape(-1, p))).reshape(trial.shape[:2] + (-1,))
            costs = np.einsum("tcm,tcm->tc", r_trial, r_trial)
            ok = costs <= cost[idx[todo], None]
            got = ok.any(axis=1)
            k = np.argmax(ok, axis=1)
            rows = np.flatnonzero(got)
            sel = todo[rows]
            taken[sel] = 1
            new_x[sel] = trial[rows, k[rows]]
            new_r[sel] = r_trial[rows, k[rows]]
            new_cost[sel] = costs[rows, k[rows]]
            new_lam[sel] = lams[rows, k[rows]]
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


def _jacobian(fun, x, lower, upper, free):
    """Central differences inside the box (one-sided at a bound).

    ``x`` is one parameter vector (the Jacobian is ``(residuals, parameters)``) or one
    per row (then ``(rows, residuals, parameters)``).  Every displaced point of every
    row is evaluated in one call of ``fun``, which takes a stack of parameter vectors
    and returns one residual row each.  A held parameter's column is zero.
    """
    x = np.asarray(x, dtype=float)
    if x.ndim == 1:
        return _jacobian(fun, x[None, :], lower, upper, free)[0]
    k, p = x.shape
    moved = [i for i in range(p) if free[i]]
    if not moved:
        size = np.asarray(fun(x)).shape[-1]
        return np.zeros((k, size, p))
    stack = np.repeat(x[:, None, :], 2 * len(moved), axis=1)  # (k, 2 F, p)
    for j, i in enumerate(moved):
        stack[:, 2 * j, i] = np.minimum(x[:, i] + _FD_STEP, upper[i])
        stack[:, 2 * j + 1, i] = np.maximum(x[:, i] - _FD_STEP, lower[i])
    rows = np.asarray(fun(stack.reshape(-1, p))).reshape(k, 2 * len(moved), -1)
    jac = np.zeros((k, rows.shape[-1], p))
    for j, i in enumerate(moved):
        jac[:, :, i] = ((rows[:, 2 * j] - rows[:, 2 * j + 1])
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
    x1_grid = np.concatenate([[0.0], np.geomspace(1e-4, problem.upper[1], _GRID_T - 1)])
    if r_fixed is None:
        x0_grid = np.linspace(problem.lower[0], problem.upper[0], _GRID_R)
        free = np.array([True, True])
        lower, upper = problem.lower, problem.upper
    else:
        x0_grid = np.array([math.log(r_fixed / problem.r_ref)])
        free = np.array([False, True])
        lower = np.array([x0_grid[0], problem.lower[1]])
        upper = np.array([x0_grid[0], problem.upper[1]])
    cost = problem.grid_cost(x0_grid, x1_grid)
    starts = np.array([[x0_grid[i], x1_grid[j]] for i, j in _grid_starts(cost, _STARTS)])
    found = _lm(problem.residual, starts, lower, upper, free)
    found.sort(key=lambda item: item[2])
    return found, lower, upper, free


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


# --------------------------------------------------------------------------- fit


def _fmt(x: float, unit: str) -> str:
    """A value with an SI prefix for messages: ``_fmt(2.2e-9, "s") == "2.2 ns"``."""
    for scale, prefix in ((1e-12, "p"), (1e-9, "n"), (1e-6, "µ"), (1e-3, "m")):
        if abs(x) < scale * 1000.0:
            return f"{x / scale:.4g} {prefix}{unit}"
    return f"{x:.4g} {unit}"


def _decreasing_points(loads, times, names) -> list[str]:
    """Messages for pairs at the same levels whose edge falls as the load rises."""
    out = []
    for name in sorted(set(names)):
        sel = np.array([n == name for n in names])
        c, t = loads[sel], times[sel]
        order = np.argsort(c, kind="stable")
        c, t = c[order], t[order]
        for k in range(1, c.size):
            # 1e-12: ignore differences at the level of rounding in the arithmetic.
            if c[k] > c[k - 1] and t[k] < t[k - 1] * (1.0 - 1e-12):
                out.append(M.FIT_EDGE_FALLS_WITH_LOAD.format(
                    levels=name, time_a=_fmt(t[k - 1], "s"), load_a=_fmt(c[k - 1], "F"),
                    time_b=_fmt(t[k], "s"), load_b=_fmt(c[k], "F")))
    return out


def fit_driver(loads, times, levels="10-90", *, r_out=None, r_out_dc=None):
    """Fit the driver model to datasheet edge times at stated loads.

    Parameters
    ----------
    loads : array_like
        Load capacitance of each datasheet point. [F]
    times : array_like
        Edge time of each point between its measuring levels. [s]
    levels : str or array_like of str, optional
        Measuring levels of each point, ``"10-90"`` (default) or ``"20-80"``; one
        string applies to every point. [1]
    r_out : float, optional
        Known output resistance: held fixed, and only ``t_ramp`` is fitted. [Ω]
    r_out_dc : float, optional
        Output resistance from the output levels (:func:`r_out_from_levels`), used only
        when ``r_out`` is not given and the points cannot separate ``r_out`` from
        ``t_ramp`` (a single load at a single pair of levels); otherwise
        :data:`DEFAULT_R_OUT` is used there. [Ω]

    Returns
    -------
    DriverFit
        ``r_out`` [Ω], ``t_ramp`` [s], per-point residuals and their RMS [s], the
        method, and any warnings and notes.

    Warns
    -----
    FitWarning
        When the points are inconsistent with any positive ``r_out`` (edge time falling
        as the load rises, a best fit that drives ``r_out`` to zero), when ``r_out``
        alone already makes an edge slower than the datasheet, when any point misses
        the model by more than 5 %, when the points barely depend on ``r_out`` (a 1 %
        error in them moves ``r_out`` by more than 10 %), or when two distinct drivers
        fit them.

    Notes
    -----
    The model edge is :func:`edge_time` (a linear ramp of ``t_ramp`` through
    ``tau = r_out C``).  The fit minimises the sum of squared *relative* residuals
    ``(model_i - time_i) / time_i``, because datasheet edge times carry a relative
    precision (their printed digits); the reported residuals are in seconds.  Bounds:
    ``r_out > 0`` (from 1e-6 of a resistance negligible at every load up to four times
    the largest the slowest point allows), ``0 <= t_ramp``.  The solver evaluates the
    model on a grid of 121 values of ``ln r_out`` by 81 of ``t_ramp`` (including 0),
    then refines the best four local minima with a bounded Levenberg-Marquardt
    iteration (Marquardt, J. SIAM 11(2), 1963) and keeps the best; of solutions that
    fit equally well it keeps the shortest ramp, and it warns when another solution
    with an ``r_out`` more than 10 % away also fits every point within 1 %.

    When the ramp ends before every point's lower level is crossed, each edge lies on
    the exponential tail and lasts ``tau ln((1 - lo)/(1 - hi))`` whatever ``t_ramp``
    is: the points then only bound ``t_ramp`` from above.  The fit takes 0 and says so
    in ``notes``.

    When ``r_out`` is fitted, two points at different loads (or at one load with both
    pairs of levels) are needed; with fewer, ``r_out`` comes from ``r_out_dc`` or
    :data:`DEFAULT_R_OUT` and only ``t_ramp`` is fitted (``method`` says which).
    When ``r_out C << t_ramp`` at every load, the edge is ``(hi - lo) t_ramp`` whatever
    ``r_out`` is, and the points cannot determine it: the fit warns.

    Examples
    --------
    >>> fit = fit_driver([15e-12, 50e-12], [0.6592e-9, 2.197e-9])
    >>> round(fit.r_out, 1), fit.method
    (20.0, 'least-squares')
    """
    loads_a = _positive(loads, "loads", "[F]").reshape(-1)
    times_a = _positive(times, "times", "[s]").reshape(-1)
    if loads_a.size == 0:
        raise InputError(M.NO_EDGE_POINTS, field="loads", value=loads,
                         expected="at least one load and edge time")
    if times_a.size != loads_a.size:
        raise InputError(M.LENGTHS_DIFFER.format(a="loads", b="times"), field="times",
                         value=times,
                         expected=f"{loads_a.size} edge times, one per load")
    lv = np.asarray(levels, dtype=object)
    if lv.ndim == 0:
        lv = np.full(loads_a.size, str(levels), dtype=object)
    lv = lv.reshape(-1)
    if lv.size != loads_a.size:
        raise InputError(M.LENGTHS_DIFFER.format(a="levels", b="loads"), field="levels",
                         value=levels,
                         expected=f"one string, or {loads_a.size}, one per load")
    lo, hi = level_fractions(lv)
    names = [str(s) for s in lv]
    if r_out is not None:
        r_fixed = float(_positive(r_out, "r_out", "[Ω]"))
    if r_out_dc is not None:
        r_dc = float(_positive(r_out_dc, "r_out_dc", "[Ω]"))

    conditions = {(float(c), n) for c, n in zip(loads_a, names, strict=True)}
    # r_out_dc enters only a fit that cannot separate r_out from t_ramp by itself, so it
    # is part of the key only then (the SPI engine fits the same points with and without).
    uses_dc = r_out is None and len(conditions) < 2 and r_out_dc is not None
    key = (loads_a.tobytes(), times_a.tobytes(), tuple(names),
           None if r_out is None else r_fixed, r_dc if uses_dc else None)
    if key in _FIT_CACHE:
        return _replay(key)

    notes: list[str] = []
    messages = _decreasing_points(loads_a, times_a, names)
    if r_out is not None:
        method = "fixed-r_out"
    elif len(conditions) >= 2:
        method = "least-squares"
        r_fixed = None
    else:
        reason = ("one load at one pair of levels cannot separate r_out from t_ramp")
        if r_out_dc is not None:
            method, r_fixed = "from-levels", r_dc
            notes.append(f"{reason}: r_out {_fmt(r_dc, 'Ω')} from the output levels")
        else:
            method, r_fixed = "default", DEFAULT_R_OUT
            notes.append(f"{reason}: r_out set to the default {_fmt(DEFAULT_R_OUT, 'Ω')} "
                         "(common practice, no source)")

    problem = _Problem(loads_a, times_a, lo, hi)
    if FIT_STORE is not None:
        stored = _stored_fit(FIT_STORE.get(fit_key(key)), problem, method, r_fixed)
        if stored is not None:
            _FIT_CACHE[key] = stored
            return _replay(key)
    found, lower, upper, free = _solve(problem, r_fixed)
    # Among solutions that fit equally well (to rounding), take the shortest ramp.
    ties = [k for k, item in enumerate(found) if item[2] <= found[0][2] + 1e-18]
    first = min(ties, key=lambda k: found[k][0][1])
    found.insert(0, found.pop(first))
    x = found[0][0]
    r_fit = r_fixed if r_fixed is not None else float(problem.r_out(x[0]))
    t_fit = float(x[1] * problem.t_ref)
    t_flat = _flat_ramp_limit(problem, r_fit, t_fit, float(upper[1] * problem.t_ref))
    if t_flat > 0.0:
        # Every point lies on the exponential tail: any ramp up to t_flat fits equally.
        # Take 0 (an ideal step), the one definite choice; it gives the fastest edges
        # at smaller loads.
        notes.append(f"the points fit any t_ramp from 0 to {_fmt(t_flat, 's')} equally "
                     "(each edge starts after the ramp has ended); t_ramp set to 0")
        t_fit = 0.0
        x = np.array([x[0], 0.0])
    model = problem.model(r_fit, t_fit)
    residuals = model - times_a
    rel = residuals / times_a

    # r_out "at zero": its RC is under _RC_SHARE of every edge, where a ramp-dominated
    # edge no longer depends on it (the fit has run down towards its lower bound).
    at_zero = (method == "least-squares"
               and rc.RISE_10_90 * r_fit * float(loads_a.max()) < _RC_SHARE * float(times_a.min()))
    if at_zero:
        messages.append(M.FIT_R_OUT_TO_ZERO.format(r_out=_fmt(r_fit, "Ω")))
    if t_fit <= 0.0 and np.any(rel > _RESIDUAL_RTOL):
        slow = int(np.argmax(rel))
        messages.append(M.FIT_R_OUT_ALONE_TOO_SLOW.format(
            r_out=_fmt(r_fit, "Ω"), model=_fmt(model[slow], "s"), load=_fmt(loads_a[slow], "F"),
            time=_fmt(times_a[slow], "s")))
    worst = int(np.argmax(np.abs(rel)))
    if abs(rel[worst]) > _RESIDUAL_RTOL:
        messages.append(M.FIT_POINTS_DO_NOT_FIT.format(
            tolerance=f"{_RESIDUAL_RTOL:.0%}", load=_fmt(loads_a[worst], "F"),
            levels=names[worst], model=_fmt(model[worst], "s"), time=_fmt(times_a[worst], "s")))
    if method == "least-squares" and not at_zero:
        spread = _r_out_spread(problem, x, lower, upper, free)
        if not spread <= _R_SPREAD_LIMIT:
            messages.append(M.FIT_R_OUT_POORLY_DETERMINED.format(
                tolerance=f"{_POINT_RTOL:.0%}", spread=_spread_text(spread)))
        rivals = [item for item in found[1:]
                  if np.max(np.abs(item[1])) <= _POINT_RTOL
                  and abs(item[0][0] - x[0]) > math.log1p(_R_SPREAD_LIMIT)]
        if rivals and np.max(np.abs(rel)) <= _POINT_RTOL:
            other = rivals[0][0]
            messages.append(M.FIT_TWO_DRIVERS.format(
                tolerance=f"{_POINT_RTOL:.0%}", r_out=_fmt(r_fit, "Ω"), t_ramp=_fmt(t_fit, "s"),
                other_r_out=_fmt(float(problem.r_out(other[0])), "Ω"),
                other_t_ramp=_fmt(float(other[1] * problem.t_ref), "s")))

    for msg in messages:
        warnings.warn(msg, FitWarning, stacklevel=2)
    fit = DriverFit(
        r_out=r_fit,
        t_ramp=t_fit,
        residuals=residuals,
        rms_residual=float(np.sqrt(np.mean(residuals * residuals))),
        method=method,
        warnings=tuple(messages),
        notes=tuple(notes),
    )
    _FIT_CACHE[key] = replace(fit, residuals=residuals.copy())
    while len(_FIT_CACHE) > _FIT_CACHE_SIZE:
        _FIT_CACHE.popitem(last=False)
    if FIT_STORE is not None:
        FIT_STORE[fit_key(key)] = _to_record(fit)
    return fit


def fit_key(key: tuple) -> str:
    """A digest of a fit's inputs (the points, their levels, a fixed or DC r_out)."""
    import hashlib

    h = hashlib.sha256()
    for part in key:
        h.update(part if isinstance(part, bytes) else repr(part).encode())
        h.update(b"|")
    return h.hexdigest()


def _to_record(fit: DriverFit) -> dict:
    # floats written by repr read back to the same bits (json keeps 17 significant digits)
    return {"r_out": fit.r_out, "t_ramp": fit.t_ramp, "residuals": fit.residuals.tolist(),
            "rms_residual": fit.rms_residual, "method": fit.method,
            "warnings": list(fit.warnings), "notes": list(fit.notes)}


def _from_record(record) -> DriverFit | None:
    """A stored fit, or None for a record that is not one (a damaged file)."""
    try:
        fit = DriverFit(float(record["r_out"]), float(record["t_ramp"]),
                        np.array(record["residuals"], dtype=float),
                        float(record["rms_residual"]), str(record["method"]),
                        tuple(str(w) for w in record["warnings"]),
                        tuple(str(n) for n in record["notes"]))
    except (TypeError, KeyError, ValueError):
        return None
    return fit if fit.residuals.ndim == 1 else None


def _replay(key) -> DriverFit:
    """The fit made earlier for ``key``, its warnings issued again."""
    _FIT_CACHE.move_to_end(key)
    while len(_FIT_CACHE) > _FIT_CACHE_SIZE:
        _FIT_CACHE.popitem(last=False)
    cached = _FIT_CACHE[key]
    for msg in cached.warnings:
        warnings.warn(msg, FitWarning, stacklevel=3)
    return replace(cached, residuals=cached.residuals.copy())


#: The methods a stored fit may name; "least-squares" fits r_out, the others fix it.
_METHODS = ("least-squares", "fixed-r_out", "from-levels", "default")


def _stored_fit(record, problem, method, r_fixed) -> DriverFit | None:
    """A stored fit that holds up against its own inputs, or None (then fit again).

    The store is a file anyone can edit, so a record is taken only when it is the fit
    these inputs would give: the same method, the fixed ``r_out`` when there is one, an
    ``r_out`` and ``t_ramp`` inside the bounds a fresh fit searches, finite numbers, and
    residuals and their RMS equal to those the model gives with the stored parameters.
    """
    fit = _from_record(record)
    if fit is None or fit.method != method or fit.method not in _METHODS:
        return None
    r, t = fit.r_out, fit.t_ramp
    if not (math.isfinite(r) and math.isfinite(t) and math.isfinite(fit.rms_residual)):
        return None
    if r_fixed is not None:
        if r != r_fixed:
            return None
    else:
        # the fit's search box in ln r_out, widened by rounding of exp(log(...))
        r_lo = float(problem.r_out(problem.lower[0])) * (1 - 1e-9)
        r_hi = float(problem.r_out(problem.upper[0])) * (1 + 1e-9)
        if not r_lo <= r <= r_hi:
            return None
    if not 0.0 <= t <= float(problem.upper[1] * problem.t_ref) * (1 + 1e-9):
        return None
    if fit.residuals.shape != problem.times.shape:
        return None
    residuals = problem.model(r, t) - problem.times
    if not np.array_equal(residuals, fit.residuals):
        return None
    if fit.rms_residual != float(np.sqrt(np.mean(residuals * residuals))):
        return None
    return fit


def _r_out_spread(problem, x, lower, upper, free) -> float:
    """Relative standard deviation of r_out for a relative error _POINT_RTOL per point."""
    jac = _jacobian(problem.residual, x, lower, upper, free)
    cov = np.linalg.pinv(jac.T @ jac, rcond=1e-12)
    var = float(cov[0, 0])
    if not np.any(jac[:, 0]) or not math.isfinite(var):
        return math.inf  # the edge times do not depend on r_out at all
    return _POINT_RTOL * math.sqrt(max(var, 0.0))


def _spread_text(spread: float) -> str:
    return "an unbounded amount" if not math.isfinite(spread) else f"{spread:.0%}"


# --------------------------------------------------------------------------- from a pin


def _points(edges, which: str):
    rows = [(e.load.at(), getattr(e, which).at(), e.levels, e.vdd)
            for e in edges if getattr(e, which) is not None]
    return rows


def driver_from_pin(pin, vdd, *, default_t_ramp=DEFAULT_T_RAMP):
    """Build the driver model of a push-pull pin from its part-class data.

    Parameters
    ----------
    pin : pinlib.library.schema.Pin
        A pin with ``drive = "push-pull"``. [1]
    vdd : float
        Supply of the part, used to resolve relative output levels. [V]
    default_t_ramp : float, optional
        Source ramp for an edge direction without datasheet points;
        :data:`DEFAULT_T_RAMP` (1 ns, common practice, no source) by default. [s]

    Returns
    -------
    Driver
        Rise and fall resistance and ramp, with the basis of each and any fits.

    Warns
    -----
    FitWarning
        From :func:`fit_driver`, when the pin's edge points are inconsistent.

    Notes
    -----
    Each edge direction is built on its own:

    * the pin gives ``r_out``: it is used for both directions (``"given"``), and
      ``t_ramp`` is fitted to that direction's edge points, or is the default;
    * no ``r_out``, edge points: :func:`fit_driver` fits both (with one point, ``r_out``
      comes from the output levels if the pin has them, else :data:`DEFAULT_R_OUT`);
    * no ``r_out``, no points: ``r_out`` from ``v_oh``/``i_oh`` (rise) and
      ``v_ol``/``i_ol`` (fall) by :func:`r_out_from_levels`, else
      :data:`DEFAULT_R_OUT`; ``t_ramp`` the default.

    Edge points are used as stated, whatever supply (``vdd``) they were stated at; a
    note says so when that differs from ``vdd``.
    """
    if getattr(pin, "drive", None) != "push-pull":
        raise InputError(M.DRIVER_NEEDS_PUSH_PULL, field="drive",
                         value=getattr(pin, "drive", None), expected="'push-pull'")
    vdd_f = float(_positive(vdd, "vdd", "[V]"))
    t_default = float(_non_negative(default_t_ramp, "default_t_ramp", "[s]"))
    notes: list[str] = []
    basis: dict[str, str] = {}

    r_given = None if pin.r_out is None else float(pin.r_out.at(vdd_f))
    if r_given is not None:
        _positive(r_given, "r_out", "[Ω]")
    r_dc = {
        "rise": (None if pin.v_oh is None or pin.i_oh is None
                 else float(_r_high(vdd_f, pin.v_oh.at(vdd_f), pin.i_oh.at()))),
        "fall": (None if pin.v_ol is None or pin.i_ol is None
                 else float(_r_low(pin.v_ol.at(vdd_f), pin.i_ol.at()))),
    }
    result: dict[str, float] = {}
    fits: dict[str, DriverFit | None] = {}
    for which in ("rise", "fall"):
        r_key = "r_rise" if which == "rise" else "r_fall"
        t_key = f"t_ramp_{which}"
        rows = _points(pin.edges, which)
        stated = {float(v.at()) for *_, v in rows if v is not None}
        if any(abs(v - vdd_f) > 0.01 * vdd_f for v in stated):
            notes.append(f"{which} edges stated at "
                         + ", ".join(_fmt(v, "V") for v in sorted(stated))
                         + f", used unscaled at {_fmt(vdd_f, 'V')}")
        if rows:
            loads = [c for c, *_ in rows]
            times = [t for _, t, *_ in rows]
            levels = [lv for _, _, lv, _ in rows]
            fit = fit_driver(loads, times, levels, r_out=r_given, r_out_dc=r_dc[which])
            fits[which] = fit
            result[r_key], result[t_key] = fit.r_out, fit.t_ramp
            basis[r_key] = {"fixed-r_out": "given", "least-squares": "fitted",
                            "from-levels": "from-levels", "default": "default"}[fit.method]
            basis[t_key] = "fitted"
            notes.extend(f"{which}: {n}" for n in fit.notes)
            continue
        fits[which] = None
        if r_given is not None:
            result[r_key], basis[r_key] = r_given, "given"
        elif r_dc[which] is not None:
            result[r_key], basis[r_key] = r_dc[which], "from-levels"
        else:
            result[r_key], basis[r_key] = DEFAULT_R_OUT, "default"
            notes.append(f"{which}: no r_out, edges or output levels; r_out set to the "
                         f"default {_fmt(DEFAULT_R_OUT, 'Ω')} (common practice, no source)")
        result[t_key], basis[t_key] = t_default, "default"
        notes.append(f"{which}: no edge points; t_ramp set to {_fmt(t_default, 's')}")

    return Driver(
        r_rise=result["r_rise"],
        r_fall=result["r_fall"],
        t_ramp_rise=result["t_ramp_rise"],
        t_ramp_fall=result["t_ramp_fall"],
        basis=basis,
        notes=tuple(notes),
        fit_rise=fits["rise"],
        fit_fall=fits["fall"],
    )


def edge_vs_load(driver, loads, edge="rise", levels="10-90", *, r_series=0.0):
    """Edge time of a driver against load capacitance, for the chart of edge rate.

    Parameters
    ----------
    driver : Driver
        The driver model, e.g. from :func:`driver_from_pin`. [1]
    loads : float or array_like
        Load capacitance. [F]
    edge : str, optional
        ``"rise"`` (default) or ``"fall"``. [1]
    levels : str or array_like of str, optional
        Measuring levels, ``"10-90"`` (default) or ``"20-80"``. [1]
    r_series : float or array_like, optional
        Series resistor between the pin and the load, added to ``r_out``; 0 by
        default. [Ω]

    Returns
    -------
    numpy.ndarray or float
        Edge time at each load. [s]

    Notes
    -----
    :func:`edge_time` with the driver's ``r_out + r_series`` and ``t_ramp`` for the
    chosen edge; a lumped load (no line delay).

    Examples
    --------
    >>> d = Driver(20.0, 20.0, 0.0, 0.0)
    >>> [round(float(x) * 1e9, 3) for x in edge_vs_load(d, [10e-12, 100e-12])]
    [0.439, 4.394]
    """
    if edge not in ("rise", "fall"):
        raise InputError(M.UNKNOWN_EDGE, field="edge", value=edge,
                         expected="'rise' or 'fall'")
    r = driver.r_rise if edge == "rise" else driver.r_fall
    t = driver.t_ramp_rise if edge == "rise" else driver.t_ramp_fall
    rs = _non_negative(r_series, "r_series", "[Ω]")
    return edge_time(r + rs, t, loads, levels)
