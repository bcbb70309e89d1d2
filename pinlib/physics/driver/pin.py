"""The driver model of a push-pull pin built from its part-class data."""

from __future__ import annotations

import warnings
from dataclasses import replace

from pinlib.core import messages as M
from pinlib.core.errors import FitWarning, InputError, PinlibError
from pinlib.core.valueclass import value_class
from pinlib.physics.driver.fitting import _fmt, fit_driver
from pinlib.physics.driver.model import (
    DEFAULT_R_OUT,
    DEFAULT_T_RAMP,
    Driver,
    DriverFit,
    _non_negative,
    _positive,
    _r_high,
    _r_low,
)

__all__ = ["driver_from_pin", "fit_requests"]


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
    r_dc = _r_out_dc(pin, vdd_f)
    result: dict[str, float] = {}
    fits: dict[str, DriverFit | None] = {}
    for which in ("rise", "fall"):
        r_key = "r_rise" if which == "rise" else "r_fall"
        t_key = f"t_ramp_{which}"
        rows = _points(pin.edges, which)
        notes.extend(_supply_notes(which, rows, vdd_f))
        if rows:
            fits[which], r_basis, more = _fitted_edge(which, rows, r_given, r_dc[which])
            result[r_key], result[t_key] = fits[which].r_out, fits[which].t_ramp
            basis[r_key], basis[t_key] = r_basis, "fitted"
        else:
            fits[which] = None
            result[r_key], basis[r_key], more = _unfitted_r_out(which, r_given, r_dc[which])
            result[t_key], basis[t_key] = t_default, "default"
            more.append(f"{which}: no edge points; t_ramp set to {_fmt(t_default, 's')}")
        notes.extend(more)

    slow = Driver(
        r_rise=result["r_rise"],
        r_fall=result["r_fall"],
        t_ramp_rise=result["t_ramp_rise"],
        t_ramp_fall=result["t_ramp_fall"],
        basis=basis,
        notes=tuple(notes),
        fit_rise=fits["rise"],
        fit_fall=fits["fall"],
    )
    fast = _fast_driver(pin, vdd_f, slow)
    return slow if fast is None else replace(slow, fast=fast)


@value_class(frozen=True)
class _CornerPin:
    """The fields of a pin that :func:`driver_from_pin` reads, for one output corner."""

    drive: str
    r_out: object
    edges: tuple
    v_oh: object
    i_oh: object
    v_ol: object
    i_ol: object


def _fast_driver(pin, vdd_f: float, slow: Driver) -> Driver | None:
    """The pin's fast corner (``fast``: its own ``r_out`` and ``edges``) as a driver.

    Built as the slow corner is, from the corner's ``r_out`` and ``edges`` and the pin's
    output levels; a direction without edge points of its own keeps the slow corner's
    ramp (a stronger output with the same ramp) and, without a corner ``r_out``, the slow
    corner's ``r_out`` too; a note says so.
    """
    view = _fast_view(pin)
    if view is None:
        return None
    corner = pin.fast
    model = driver_from_pin(view, vdd_f)
    basis = dict(model.basis)
    ramps = {}
    notes = [n for n in model.notes if "no edge points" not in n
             and "no r_out, edges or output levels" not in n]
    for which in ("rise", "fall"):
        key, r_key = f"t_ramp_{which}", ("r_rise" if which == "rise" else "r_fall")
        if basis[key] != "default":
            continue
        ramps[key] = getattr(slow, key)
        basis[key] = "slow corner"
        kept = f"ramp {_fmt(ramps[key], 's')}"
        if corner.r_out is None:
            ramps[r_key] = getattr(slow, r_key)
            basis[r_key] = "slow corner"
            kept = f"r_out {_fmt(ramps[r_key], 'Ω')} and " + kept
        notes.append(f"{which}: no edge points of the fast corner; the slow corner's "
                     f"{kept} kept")
    notes = tuple(f"fast corner: {n}" for n in notes)
    return replace(model, basis=basis, notes=notes, **ramps)


def _fast_view(pin) -> _CornerPin | None:
    """The pin's fast corner as a pin :func:`driver_from_pin` reads, or None."""
    corner = getattr(pin, "fast", None)
    if corner is None:
        return None
    return _CornerPin("push-pull", corner.r_out, tuple(corner.edges), pin.v_oh, pin.i_oh,
                      pin.v_ol, pin.i_ol)


def fit_requests(pin, vdd) -> list[tuple]:
    """The fits :func:`driver_from_pin` makes of a push-pull pin at ``vdd``, its fast
    corner's included, as :func:`~pinlib.physics.driver.fitting.fit_drivers` takes them.

    Parameters
    ----------
    pin : pinlib.library.schema.Pin
        A pin (any drive; only a push-pull pin's edges are fitted). [1]
    vdd : float
        Supply of the part. [V]

    Returns
    -------
    list of tuple
        ``(loads, times, levels, r_out, r_out_dc)`` of each edge direction with points;
        empty where :func:`driver_from_pin` would refuse the pin's values (it says why
        when called).
    """
    out: list[tuple] = []
    if getattr(pin, "drive", None) != "push-pull":
        return out
    try:
        vdd_f = float(_positive(vdd, "vdd", "[V]"))
        for view in (pin, _fast_view(pin)):
            if view is None:
                continue
            r_given = None if view.r_out is None else float(view.r_out.at(vdd_f))
            r_dc = _r_out_dc(view, vdd_f)
            for which in ("rise", "fall"):
                rows = _points(view.edges, which)
                if rows:
                    out.append(_request(rows, r_given, r_dc[which]))
    except PinlibError:
        return []
    return out


def _r_out_dc(pin, vdd_f: float) -> dict:
    """r_out of each edge from the pin's output levels, or None where it has none."""
    return {
        "rise": (None if pin.v_oh is None or pin.i_oh is None
                 else float(_r_high(vdd_f, pin.v_oh.at(vdd_f), pin.i_oh.at()))),
        "fall": (None if pin.v_ol is None or pin.i_ol is None
                 else float(_r_low(pin.v_ol.at(vdd_f), pin.i_ol.at()))),
    }


def _supply_notes(which: str, rows, vdd_f: float) -> list[str]:
    """A note when the edge points were stated at another supply than ``vdd_f``."""
    stated = {float(v.at()) for *_, v in rows if v is not None}
    if any(abs(v - vdd_f) > 0.01 * vdd_f for v in stated):
        return [f"{which} edges stated at "
                + ", ".join(_fmt(v, "V") for v in sorted(stated))
                + f", used unscaled at {_fmt(vdd_f, 'V')}"]
    return []


def _request(rows, r_given, r_dc) -> tuple:
    """The arguments of the fit of one edge direction's points: ``(loads, times, levels,
    r_out, r_out_dc)``."""
    return ([c for c, *_ in rows], [t for _, t, *_ in rows], [lv for _, _, lv, _ in rows],
            r_given, r_dc)


def _fitted_edge(which: str, rows, r_given, r_dc):
    """The fit of one edge direction to its points: ``(fit, basis of r_out, notes)``."""
    loads, times, levels, r_out, r_out_dc = _request(rows, r_given, r_dc)
    # rise and fall are fitted apart: each warning of the fit says whose it is
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        fit = fit_driver(loads, times, levels, r_out=r_out, r_out_dc=r_out_dc)
    for w in caught:
        if issubclass(w.category, FitWarning):
            warnings.warn(f"{which}: {w.message}", FitWarning, stacklevel=3)
        else:
            warnings.warn_explicit(w.message, w.category, w.filename, w.lineno)
    r_basis = {"fixed-r_out": "given", "least-squares": "fitted",
               "from-levels": "from-levels", "default": "default"}[fit.method]
    return fit, r_basis, [f"{which}: {n}" for n in fit.notes]


def _unfitted_r_out(which: str, r_given, r_dc):
    """r_out of an edge direction without points: ``(r_out, basis, notes)``."""
    if r_given is not None:
        return r_given, "given", []
    if r_dc is not None:
        return r_dc, "from-levels", []
    return DEFAULT_R_OUT, "default", [
        f"{which}: no r_out, edges or output levels; r_out set to the "
        f"default {_fmt(DEFAULT_R_OUT, 'Ω')} (common practice, no source)"]
