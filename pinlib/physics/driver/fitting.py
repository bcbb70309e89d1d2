"""Fitting the driver model to datasheet edges: :func:`fit_driver` and its checks.

The fit finds ``r_out`` and ``t_ramp`` by least squares (:mod:`.solver`), or ``t_ramp``
alone when ``r_out`` is known, and warns (:class:`~pinlib.core.errors.FitWarning`) when
the points do not fix the model.  Fits already made are kept in the package
:mod:`pinlib.physics.driver` (``_FIT_CACHE``, ``FIT_STORE``) and served again by their
inputs (:func:`fit_key`).
"""

from __future__ import annotations

import math
import sys
import warnings
from dataclasses import replace

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import FitWarning, InputError
from pinlib.physics import rc
from pinlib.physics.driver.model import DEFAULT_R_OUT, DriverFit, _positive, level_fractions
from pinlib.physics.driver.solver import (
    _flat_ramp_limit,
    _jacobian,
    _Problem,
    _solve,
    _solve_many,
)

__all__ = ["fit_driver", "fit_drivers", "fit_key"]

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
    job = _Job(loads, times, levels, r_out, r_out_dc)
    if job.fit is not None:
        return _replay(job.key, stacklevel=3)
    return job.finish(_solve(job.problem, job.r_fixed), stacklevel=3)


def fit_drivers(requests) -> list:
    """:func:`fit_driver` of many sets of points, their least-squares solves made together.

    Parameters
    ----------
    requests : iterable of tuple
        Each ``(loads, times, levels, r_out, r_out_dc)``, the arguments of one
        :func:`fit_driver` call. [1]

    Returns
    -------
    list
        In the order of ``requests``: the :class:`DriverFit` that :func:`fit_driver`
        gives for those points (the same numbers to the last bit; it is kept in this
        process and the store as that call keeps it, so a later call is served from
        there), or the :class:`~pinlib.core.errors.InputError` it would raise.

    Warns
    -----
    FitWarning
        As :func:`fit_driver`, each fit's warnings once per request.

    Notes
    -----
    Fits with as many points and the same free parameters share one Levenberg-Marquardt
    iteration over all their starts (:func:`pinlib.physics.driver.solver._solve_many`):
    ranking a thousand candidates that each bring an output pin costs a few iterations'
    numpy calls instead of a few thousand.
    """
    jobs: list = []
    for req in requests:
        try:
            jobs.append(_Job(*req))
        except InputError as err:
            jobs.append(err)
    todo: dict = {}  # one solve per distinct key
    for job in jobs:
        if isinstance(job, _Job) and job.fit is None and job.key not in todo:
            todo[job.key] = job
    solved = _solve_many([j.problem for j in todo.values()],
                         [j.r_fixed for j in todo.values()])
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # each request's warnings are issued below
        for job, got in zip(todo.values(), solved, strict=True):
            job.finish(got)
    out = []
    for job in jobs:
        if isinstance(job, InputError):
            out.append(job)
            continue
        fit = job.fit if job.fit is not None else todo[job.key].fit
        for msg in fit.warnings:
            warnings.warn(msg, FitWarning, stacklevel=2)
        out.append(replace(fit, residuals=fit.residuals.copy()))
    return out


class _Job:
    """One fit's inputs checked, its key, and the fit already made for it (in this
    process or the store) or what solving it needs."""

    def __init__(self, loads, times, levels, r_out, r_out_dc):
        loads_a, times_a, lo, hi, names = _checked_points(loads, times, levels)
        r_fixed = None if r_out is None else float(_positive(r_out, "r_out", "[Ω]"))
        r_dc = None if r_out_dc is None else float(_positive(r_out_dc, "r_out_dc", "[Ω]"))
        conditions = {(float(c), n) for c, n in zip(loads_a, names, strict=True)}
        # r_out_dc enters only a fit that cannot separate r_out from t_ramp by itself, so
        # it is part of the key only then (the SPI engine fits the same points with and
        # without).
        uses_dc = r_out is None and len(conditions) < 2 and r_out_dc is not None
        self.key = (loads_a.tobytes(), times_a.tobytes(), tuple(names), r_fixed,
                    r_dc if uses_dc else None)
        self.fit = None
        if self.key in _memory()._FIT_CACHE:
            self.fit = _memory()._FIT_CACHE[self.key]
            return
        self.loads, self.times, self.names = loads_a, times_a, names
        self.messages = _decreasing_points(loads_a, times_a, names)
        self.method, self.r_fixed, self.notes = _r_out_method(r_fixed, r_dc, len(conditions))
        self.problem = _Problem(loads_a, times_a, lo, hi)
        store = _memory().FIT_STORE
        if store is not None:
            stored = _stored_fit(store.get(fit_key(self.key)), self.problem, self.method,
                                 self.r_fixed)
            if stored is not None:
                _memory()._FIT_CACHE[self.key] = self.fit = stored

    def finish(self, solved, stacklevel: int = 2) -> DriverFit:
        """The fit from the solver's solutions (``solved``, :func:`_solve`'s), its
        warnings issued and the fit kept."""
        problem, notes = self.problem, list(self.notes)
        found, x, r_fit, t_fit, box = _best_solution(problem, self.r_fixed, notes, solved)
        model = problem.model(r_fit, t_fit)
        residuals = model - self.times
        messages = self.messages + _misfit_messages(problem, self.method, found, x, r_fit,
                                                    t_fit, model, residuals, self.names, box)
        for msg in messages:
            warnings.warn(msg, FitWarning, stacklevel=stacklevel)
        fit = DriverFit(
            r_out=r_fit,
            t_ramp=t_fit,
            residuals=residuals,
            rms_residual=float(np.sqrt(np.mean(residuals * residuals))),
            method=self.method,
            warnings=tuple(messages),
            notes=tuple(notes),
        )
        _remember(self.key, fit)
        self.fit = fit
        return fit


def _checked_points(loads, times, levels):
    """The points as flat arrays, with the fractions and names of their levels."""
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
    return loads_a, times_a, lo, hi, names


def _memory():
    """The package :mod:`pinlib.physics.driver`, which holds this process's fits.

    Its ``_FIT_CACHE`` (fits by their inputs), ``_FIT_CACHE_SIZE`` and ``FIT_STORE``
    (set by :func:`pinlib.engines.fitstore.install`) are read there at each call, so
    whatever sets them on the package reaches the fit.
    """
    return sys.modules[__package__]


def _replay(key, stacklevel: int = 3) -> DriverFit:
    """The fit made earlier for ``key``, its warnings issued again."""
    memory = _memory()
    memory._FIT_CACHE.move_to_end(key)
    while len(memory._FIT_CACHE) > memory._FIT_CACHE_SIZE:
        memory._FIT_CACHE.popitem(last=False)
    cached = memory._FIT_CACHE[key]
    for msg in cached.warnings:
        warnings.warn(msg, FitWarning, stacklevel=stacklevel)
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


def _remember(key, fit: DriverFit) -> None:
    """Keep ``fit`` in this process (the oldest dropped first) and in the store, if any."""
    memory = _memory()
    memory._FIT_CACHE[key] = replace(fit, residuals=fit.residuals.copy())
    while len(memory._FIT_CACHE) > memory._FIT_CACHE_SIZE:
        memory._FIT_CACHE.popitem(last=False)
    if memory.FIT_STORE is not None:
        memory.FIT_STORE[fit_key(key)] = _to_record(fit)


def _r_out_method(r_fixed, r_dc, n_conditions: int):
    """How r_out is obtained: ``(method, r_out held fixed or None, notes)``."""
    notes: list[str] = []
    if r_fixed is not None:
        method = "fixed-r_out"
    elif n_conditions >= 2:
        method = "least-squares"
        r_fixed = None
    else:
        reason = ("one load at one pair of levels cannot separate r_out from t_ramp")
        if r_dc is not None:
            method, r_fixed = "from-levels", r_dc
            notes.append(f"{reason}: r_out {_fmt(r_dc, 'Ω')} from the output levels")
        else:
            method, r_fixed = "default", DEFAULT_R_OUT
            notes.append(f"{reason}: r_out set to the default {_fmt(DEFAULT_R_OUT, 'Ω')} "
                         "(common practice, no source)")
    return method, r_fixed, notes


def _best_solution(problem: _Problem, r_fixed, notes: list[str], solved):
    """The best of the solutions (``solved``, :func:`_solve`'s): ``(found, x, r_out,
    t_ramp, box)``.

    ``found`` lists the solutions, the one taken first; ``box`` is ``(lower, upper,
    free)``.  A ramp the points do not fix is set to 0, with a note.
    """
    found, lower, upper, free = solved
    found = list(found)
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
    return found, x, r_fit, t_fit, (lower, upper, free)


def _misfit_messages(problem: _Problem, method: str, found, x, r_fit: float, t_fit: float,
                     model, residuals, names, box) -> list[str]:
    """Warnings on how the fitted driver meets the points, and on r_out's determination."""
    loads_a, times_a = problem.loads, problem.times
    rel = residuals / times_a
    messages: list[str] = []
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
        messages += _r_out_messages(problem, found, x, r_fit, t_fit, rel, box)
    return messages


def _r_out_messages(problem: _Problem, found, x, r_fit: float, t_fit: float, rel,
                    box) -> list[str]:
    """Warnings when the points barely fix r_out, or when another driver fits them too."""
    messages: list[str] = []
    spread = _r_out_spread(problem, x, *box)
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
    return messages


def fit_key(key: tuple) -> str:
    """A digest of a fit's inputs (the points, their levels, a fixed or DC r_out)."""
    from pinlib.core.digest import sha256

    h = sha256()
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
