"""The driver model into a measurement fixture, and its fit to measured or modelled waveforms.

An output's edge is often published as a voltage against time into a stated fixture: a
resistor ``r_fixture`` to a voltage ``v_fixture`` and a capacitance ``c_load`` at the pin
(an IBIS ``[Rising Waveform]`` or ``[Falling Waveform]``).  pinlib's driver model (a
Thevenin source ramping linearly from ``v_from`` to ``v_to`` in ``t_ramp`` behind
``r_out``, :mod:`pinlib.physics.driver.model`) into that fixture is one pole:
:func:`fixture_wave` gives its voltage in closed form, and :func:`fit_fixture` finds the
``r_out`` and ``t_ramp`` (and each waveform's start) that fit one or more waveforms of the
same edge best, by least squares on the voltages.  :func:`ramp_from_slew` gives the same
two values from a 20-80 % slew into a resistor (an IBIS ``[Ramp]``).
"""

from __future__ import annotations

import math

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.core.valueclass import value_class
from pinlib.physics import rc
from pinlib.physics.driver.solver import _lm

__all__ = ["RESIDUAL_LIMIT", "FixtureWave", "FixtureFit", "fixture_wave", "fit_fixture",
           "ramp_from_slew"]

#: RMS residual of a fit, as a fraction of the swing, above which the fit is reported as
#: a poor one.  common practice, no source: a linear ramp behind a resistor reproduces a
#: CMOS output's edge into a fixture to a few per cent of the swing.
RESIDUAL_LIMIT = 0.05

# Search box of r_out (common practice, no source: outputs from a fraction of an ohm to
# a few kilohms) and the starting values tried.
_R_LIMITS = (0.1, 1e4)
_R_STARTS = (3.0, 10.0, 30.0, 100.0, 300.0)
_T_STARTS = (0.1, 0.6, 1.2)


@value_class(frozen=True)
class FixtureWave:
    """One waveform of an edge into its fixture.

    Attributes
    ----------
    t, v : numpy.ndarray
        Time [s] and voltage at the pin [V], in order of time.
    r_fixture : float
        Fixture resistor. [Ω]
    v_fixture : float
        The voltage the fixture resistor goes to. [V]
    c_load : float
        Capacitance at the pin: the fixture's and the output's own. [F]
    """

    t: np.ndarray
    v: np.ndarray
    r_fixture: float
    v_fixture: float
    c_load: float


@value_class(frozen=True)
class FixtureFit:
    """The driver model fitted to the waveforms of one edge.

    Attributes
    ----------
    r_out : float
        Output resistance. [Ω]
    t_ramp : float
        Source ramp, 0 % to 100 %. [s]
    starts : tuple of float
        Where each waveform's ramp starts, in its own time. [s]
    rms : float
        RMS of the voltage residuals over every point. [V]
    swing : float
        ``abs(v_to - v_from)``, the measure of ``rms_fraction``. [V]
    points : int
        Points fitted. [1]
    """

    r_out: float
    t_ramp: float
    starts: tuple[float, ...]
    rms: float
    swing: float
    points: int

    @property
    def rms_fraction(self) -> float:
        """``rms / swing``. [1]"""
        return self.rms / self.swing

    @property
    def poor(self) -> bool:
        """Whether ``rms_fraction`` exceeds :data:`RESIDUAL_LIMIT`."""
        return not self.rms_fraction <= RESIDUAL_LIMIT


def fixture_wave(t, r_out, t_ramp, t_start, v_from, v_to, r_fixture, v_fixture, c_load,
                 v_initial):
    """Voltage at the pin of the driver model driving a fixture.

    Parameters
    ----------
    t : array_like
        Times. [s]
    r_out, t_ramp : float or array_like
        The driver: output resistance [Ω] and source ramp, 0-100 % [s].
    t_start : float or array_like
        When the source starts to ramp. [s]
    v_from, v_to : float
        The source's level before and after the ramp. [V]
    r_fixture, v_fixture : float
        Fixture resistor [Ω] and the voltage it goes to [V].
    c_load : float
        Capacitance at the pin. [F]
    v_initial : float
        The pin's voltage until ``t_start``. [V]

    Returns
    -------
    numpy.ndarray
        The pin voltage, ``t`` broadcast against the parameters. [V]

    Notes
    -----
    The pin node sees the source through ``r_out`` and the fixture through ``r_fixture``:
    its Thevenin equivalent moves linearly from ``a = (v_from/r_out + v_fixture/r_fixture)
    / g`` to ``e = (v_to/r_out + v_fixture/r_fixture) / g`` with ``g = 1/r_out +
    1/r_fixture``, through one pole of ``tau = c_load / g``.  From the state
    ``v_initial`` the response is ``v_initial + (a - v_initial)(1 - exp(-u/tau)) + (e - a)
    ramp(u)`` with ``u = t - t_start`` and ``ramp`` the normalised response of a ramp
    through one pole (:func:`pinlib.physics.rc.ramp_rc_response`); linear circuit theory
    (superposition).

    Examples
    --------
    >>> v = fixture_wave([0.0, 1.0], 50.0, 0.0, 0.0, 0.0, 3.3, 50.0, 0.0, 0.0, 0.0)
    >>> round(float(v[1]), 3)
    1.65
    """
    t = np.asarray(t, dtype=float)
    r = np.asarray(r_out, dtype=float)
    g = 1.0 / r + 1.0 / r_fixture
    a = (v_from / r + v_fixture / r_fixture) / g
    e = (v_to / r + v_fixture / r_fixture) / g
    tau = c_load / g
    u = np.maximum(t - t_start, 0.0)
    with np.errstate(over="ignore", divide="ignore", invalid="ignore"):
        decay = np.where(tau > 0, -np.expm1(-u / np.where(tau > 0, tau, 1.0)), 1.0)
    ramp = rc.ramp_rc_response(u, np.broadcast_to(t_ramp, np.shape(u)),
                               np.broadcast_to(tau, np.shape(u)))
    return v_initial + (a - v_initial) * decay + (e - a) * ramp


def _checked(waves) -> list[FixtureWave]:
    out = list(waves)
    if not out:
        raise InputError(M.NO_EDGE_POINTS, field="waves", value=None,
                         expected="at least one waveform")
    for w in out:
        ok = (w.t.ndim == 1 and w.t.shape == w.v.shape and w.t.size >= 3
              and np.all(np.isfinite(w.t)) and np.all(np.isfinite(w.v))
              and np.all(np.diff(w.t) > 0) and w.r_fixture > 0 and w.c_load >= 0)
        if not ok:
            raise InputError(M.VALUE_OUT_OF_RANGE, field="waves", value=None,
                             expected="three or more points in order of time, a positive "
                                      "fixture resistor, a capacitance of 0 or more")
    return out


def _start_guess(w: FixtureWave) -> float:
    """Where the waveform has moved 5 % of its own swing from its first point."""
    moved = np.abs(w.v - w.v[0])
    span = float(moved.max())
    k = int(np.argmax(moved >= 0.05 * span)) if span > 0 else 0
    return float(w.t[max(k - 1, 0)])


def fit_fixture(waves, v_from: float, v_to: float) -> FixtureFit:
    """Fit the driver model to the waveforms of one edge, each into its own fixture.

    Parameters
    ----------
    waves : sequence of FixtureWave
        The waveforms of the edge (each starts from its settled level). [1]
    v_from, v_to : float
        The source's levels before and after the edge: 0 and the supply for a rising
        edge, the other way round for a falling one. [V]

    Returns
    -------
    FixtureFit

    Notes
    -----
    Least squares on the voltages (scaled by the swing) over ``ln r_out``, ``t_ramp``
    and each waveform's start, from a grid of starting values, by the bounded
    Levenberg-Marquardt iteration of the driver fit (:mod:`.solver`; Marquardt, J. SIAM
    11(2), 1963).  Each waveform starts from its own first point (the other half of the
    output held it there).  Bounds: 0.1 Ω <= ``r_out`` <= 10 kΩ, ``0 <= t_ramp`` up to
    twice the longest record, each start inside its record.
    """
    ws = _checked(waves)
    swing = abs(float(v_to) - float(v_from))
    if not swing > 0:
        raise InputError(M.VALUE_OUT_OF_RANGE, field="v_to", value=v_to,
                         expected="a level other than v_from")
    span = max(float(w.t[-1] - w.t[0]) for w in ws)
    r_ref = 20.0
    n = len(ws)

    def fun(x):
        x = np.atleast_2d(x)
        r = r_ref * np.exp(x[:, 0])[:, None]
        t_ramp = x[:, 1][:, None] * span
        rows = []
        for j, w in enumerate(ws):
            model = fixture_wave(w.t[None, :], r, t_ramp, x[:, 2 + j][:, None] * span,
                                 v_from, v_to, w.r_fixture, w.v_fixture, w.c_load,
                                 float(w.v[0]))
            rows.append((model - w.v[None, :]) / swing)
        return np.concatenate(rows, axis=1)

    lower = np.array([math.log(_R_LIMITS[0] / r_ref), 0.0]
                     + [float(w.t[0]) / span for w in ws])
    upper = np.array([math.log(_R_LIMITS[1] / r_ref), 2.0]
                     + [float(w.t[-1]) / span for w in ws])
    edge = _edge_guess(ws) / span
    starts = [[math.log(r0 / r_ref), k * edge] + [_start_guess(w) / span for w in ws]
              for r0 in _R_STARTS for k in _T_STARTS]
    found = _lm(fun, np.array(starts), lower, upper, np.ones(2 + n, dtype=bool))
    x, res, _ = min(found, key=lambda item: item[2])
    rms = float(np.sqrt(np.mean(res * res))) * swing
    return FixtureFit(r_out=float(r_ref * math.exp(x[0])), t_ramp=float(x[1] * span),
                      starts=tuple(float(s * span) for s in x[2:]), rms=rms, swing=swing,
                      points=int(res.size))


def _edge_guess(ws) -> float:
    """The quickest 10-90 % of its own swing among the waveforms. [s]"""
    best = math.inf
    for w in ws:
        moved = np.abs(w.v - w.v[0])
        span = float(moved.max())
        if span > 0:
            t10 = float(w.t[np.argmax(moved >= 0.1 * span)])
            t90 = float(w.t[np.argmax(moved >= 0.9 * span)])
            best = min(best, max(t90 - t10, 0.0))
    total = max(float(w.t[-1] - w.t[0]) for w in ws)
    return best if 0 < best < math.inf else 0.1 * total


def ramp_from_slew(dv: float, dt: float, swing: float, r_load: float, c_load: float):
    """``r_out`` and ``t_ramp`` from a 20-80 % slew ``dv`` in ``dt`` into ``r_load``.

    Parameters
    ----------
    dv, dt : float
        The 20-80 % voltage change [V] and the time it takes [s].
    swing : float
        The source's swing (the supply). [V]
    r_load : float
        The resistor the slew was stated into (to the far rail). [Ω]
    c_load : float
        Capacitance at the pin (the output's own). [F]

    Returns
    -------
    r_out, t_ramp : float
        [Ω], [s]; ``t_ramp`` is 0 when ``dt`` is no longer than the pole alone gives.

    Notes
    -----
    Into a resistor the edge settles at ``swing r_load / (r_out + r_load)``, and ``dv``
    is 60 % of that: ``r_out = r_load (0.6 swing / dv - 1)``.  The edge is then a ramp
    through one pole of ``tau = c_load (r_out || r_load)``, whose 20-80 % time
    (:func:`pinlib.physics.rc.ramp_rc_edge_time`) grows with ``t_ramp``: ``t_ramp`` is
    found by bisection to 1e-6 of ``dt``.  Two numbers give two unknowns: no residual.
    """
    if not (dv > 0 and dt > 0 and swing > 0 and r_load > 0 and c_load >= 0):
        raise InputError(M.VALUE_OUT_OF_RANGE, field="dV/dt", value=f"{dv}/{dt}",
                         expected="a positive slew, supply and load")
    r = r_load * (0.6 * swing / dv - 1.0)
    if not r > 0:
        raise InputError(M.VALUE_OUT_OF_RANGE, field="dV/dt", value=f"{dv}/{dt}",
                         expected=f"dV below 60 % of the {swing:g} V supply")
    tau = c_load * r * r_load / (r + r_load)

    def edge(t):
        return float(rc.ramp_rc_edge_time(t, tau, 0.2, 0.8))
    if edge(0.0) >= dt:
        return r, 0.0
    lo, hi = 0.0, dt / 0.6 + 1e-18
    while edge(hi) < dt:
        hi *= 2.0
    while hi - lo > 1e-6 * dt:
        mid = 0.5 * (lo + hi)
        lo, hi = (mid, hi) if edge(mid) < dt else (lo, mid)
    return r, 0.5 * (lo + hi)
