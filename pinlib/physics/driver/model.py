"""The driver model: a ramp behind an output resistance, its results and the edge it gives.

:class:`DriverFit` and :class:`Driver` hold the fitted and built models;
:func:`edge_time` is the model edge (:func:`pinlib.physics.rc.ramp_rc_edge_time`),
:func:`edge_vs_load` the same for a built driver, :func:`r_out_from_levels` the output
resistance from the DC output levels, and :func:`level_fractions` the measuring levels
of an edge.  The input checks here serve the whole :mod:`pinlib.physics.driver` package.
"""

from __future__ import annotations

from dataclasses import field

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.core.valueclass import value_class
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


# --------------------------------------------------------------------------- results


@value_class(frozen=True)
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


@value_class(frozen=True)
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
    fast : Driver or None
        The output's fast corner (strongest drive, quickest ramps), when the part states
        one (``[pins.<name>.fast]``): the corner that sets overshoot, undershoot and
        ringing, while this driver (the slow corner) sets edge times and timing. [1]
    """

    r_rise: float
    r_fall: float
    t_ramp_rise: float
    t_ramp_fall: float
    basis: dict = field(default_factory=dict)
    notes: tuple[str, ...] = ()
    fit_rise: DriverFit | None = None
    fit_fall: DriverFit | None = None
    fast: Driver | None = None

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
        arr = np.asarray(value, dtype=float)  # a number as a number, never "array(3.3)"
        shown = float(arr) if arr.size == 1 else [float(x) for x in arr.ravel()]
        raise InputError(M.VALUE_OUT_OF_RANGE, field=name, value=shown, expected=expected)


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
