"""The line model (:class:`LineModel`), its input checks and the formula helpers the
methods share, and :func:`from_per_length` for a line given per length."""

from __future__ import annotations

import math
from typing import NamedTuple

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.core.quantity import DELAY_MIN
from pinlib.physics import guards

__all__ = ["C0", "ETA0", "LineModel", "from_per_length"]

C0 = 299792458.0
"""Speed of light in vacuum. [m/s]"""

ETA0 = 4e-7 * math.pi * C0
"""Wave impedance of free space, mu0*c0 with mu0 = 4*pi*1e-7 H/m (about 376.730 Ω). [Ω]"""


class LineModel(NamedTuple):
    """Per-length properties of a lossless transmission line.

    Attributes
    ----------
    z0 : float or numpy.ndarray
        Characteristic impedance. [Ω]
    er_eff : float or numpy.ndarray
        Effective relative permittivity. [1]
    tpd : float or numpy.ndarray
        Propagation delay per length, sqrt(er_eff)/c0. [s/m]
    c : float or numpy.ndarray
        Capacitance per length, tpd/z0. [F/m]
    l : float or numpy.ndarray
        Inductance per length, tpd*z0. [H/m]
    """

    z0: float | np.ndarray
    er_eff: float | np.ndarray
    tpd: float | np.ndarray
    c: float | np.ndarray
    l: float | np.ndarray  # noqa: E741 - the trade's symbol for inductance per length


# --------------------------------------------------------------------------- checks and helpers


def _as_float_array(value, name: str) -> np.ndarray:
    return guards.floats(value, name, problem=M.PARAMETER_NOT_A_NUMBER.format(name=name))


def _first_bad(arr: np.ndarray, bad: np.ndarray) -> float:
    return float(arr[bad].flat[0]) if np.ndim(arr) else float(arr)


def _require(arr: np.ndarray, ok: np.ndarray, name: str, expected: str) -> None:
    bad = ~ok
    if np.any(bad):
        raise InputError(
            M.PARAMETER_OUT_OF_RANGE.format(name=name),
            field=name,
            value=_first_bad(arr, np.broadcast_to(bad, arr.shape)),
            expected=expected,
        )


def _out(x: np.ndarray):
    x = np.asarray(x, dtype=float)
    return x[()] if x.ndim == 0 else x


def _model(z0, er_eff) -> LineModel:
    tpd = np.sqrt(er_eff) / C0
    return LineModel(_out(z0), _out(er_eff), _out(tpd), _out(tpd / z0), _out(tpd * z0))


def _safe_x_log(x: np.ndarray, y: np.ndarray) -> np.ndarray:
    """x*ln(y) where x > 0, else 0 (the limit x*ln(1/x) -> 0), without 0*inf."""
    pos = x > 0
    xs = np.where(pos, x, 1.0)
    ys = np.where(pos, y, 1.0)
    return np.where(pos, xs * np.log(ys), 0.0)


def _wheeler_width(w, b, t) -> np.ndarray:
    """Wheeler's thickness-widened strip width w' (1978). [m]"""
    x = t / b
    # x/(pi(1-x)) * {1 - 0.5 ln[(x/(2-x))^2 + (0.0796x/(w/b + 1.1x))^m]},
    # m = 2/(1 + (2/3) x/(1-x)). Written as x*ln(...) with the x = 0 limit 0.
    m = 2.0 / (1.0 + (2.0 / 3.0) * x / (1.0 - x))
    inner = (x / (2.0 - x)) ** 2 + (0.0796 * x / (w / b + 1.1 * x)) ** m
    dw_over = (x - 0.5 * _safe_x_log(x, inner)) / (math.pi * (1.0 - x))
    return w + dw_over * (b - t)


# --------------------------------------------------------------------------- per length


def from_per_length(c, tpd) -> LineModel:
    """A line model from its capacitance and delay per length (a cable, a measured trace).

    Parameters
    ----------
    c : float or array_like
        Capacitance per length. [F/m]
    tpd : float or array_like
        Propagation delay per length, at least that of free space, 1/c0. [s/m]

    Returns
    -------
    LineModel
        ``z0`` = tpd/c [Ω], ``er_eff`` = (tpd*c0)^2 [1], ``tpd`` [s/m], ``c`` [F/m],
        ``l`` = tpd*z0 [H/m].

    Raises
    ------
    InputError
        For ``c <= 0``, ``tpd <= 0``, or a delay shorter than free space (faster than
        light).

    Notes
    -----
    For a lossless TEM line :math:`Z_0 = \\sqrt{L/C}` and :math:`t_{pd} = \\sqrt{LC}`, so
    :math:`Z_0 = t_{pd}/C`, :math:`L = t_{pd} Z_0 = t_{pd}^2/C`, and
    :math:`\\varepsilon_{eff} = (c_0 t_{pd})^2`.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley, 2012, §2.1 (telegrapher
       line parameters).

    Examples
    --------
    >>> m = from_per_length(1.1e-10, 5.8e-9)   # 1.1 pF/cm, 58 ps/cm
    >>> round(float(m.z0), 1), round(float(m.er_eff), 2)
    (52.7, 3.02)
    """
    c = _as_float_array(c, "c")
    tpd = _as_float_array(tpd, "tpd")
    _require(c, c > 0, "c", "a capacitance per length > 0 [F/m]")
    _require(tpd, tpd > 0, "tpd", "a delay per length > 0 [s/m]")
    # the part and design formats accept a figure rounded to within 2 % under 1/c (an
    # air line's 3.3 ns/m: pinlib.core.quantity.DELAY_MIN); 1e-9 more for float rounding
    _require(
        tpd,
        tpd >= DELAY_MIN * (1.0 - 1e-9),
        "tpd",
        f"a delay per length >= {DELAY_MIN:.6g} s/m (1/c0 = {1.0 / C0:.6g} s/m less a "
        f"rounded figure's 2 %: no faster than light)",
    )
    c, tpd = np.broadcast_arrays(c, tpd)
    z0 = tpd / c
    return LineModel(_out(z0), _out((tpd * C0) ** 2), _out(tpd), _out(c), _out(tpd * z0))
