"""Microstrip: a trace over one plane (Hammerstad-Jensen, IPC-2141)."""

from __future__ import annotations

import math

import numpy as np

from pinlib.physics.lines.model import ETA0, LineModel, _model, _safe_x_log
from pinlib.physics.lines.validity import (
    _check_method,
    _geometry,
    _quantities,
    _warn_outside,
)

__all__ = ["microstrip"]


def _hj_z01(u: np.ndarray) -> np.ndarray:
    """Hammerstad & Jensen impedance of microstrip in air (er = 1), eq. (1)-(2). [Ω]"""
    f = 6.0 + (2.0 * math.pi - 6.0) * np.exp(-((30.666 / u) ** 0.7528))
    return ETA0 / (2.0 * math.pi) * np.log(f / u + np.sqrt(1.0 + (2.0 / u) ** 2))


def _hj_er_eff0(u: np.ndarray, er: np.ndarray) -> np.ndarray:
    """Hammerstad & Jensen effective permittivity of a zero-thickness strip, eq. (3)-(5)."""
    a = (
        1.0
        + np.log((u**4 + (u / 52.0) ** 2) / (u**4 + 0.432)) / 49.0
        + np.log1p((u / 18.1) ** 3) / 18.7
    )
    b = 0.564 * ((er - 0.9) / (er + 3.0)) ** 0.053
    return (er + 1.0) / 2.0 + (er - 1.0) / 2.0 * (1.0 + 10.0 / u) ** (-a * b)


def _hj_microstrip(w, h, er, t) -> tuple[np.ndarray, np.ndarray]:
    u = w / h
    x = t / h
    # coth^2(sqrt(6.517 u)) written as 1/tanh^2 so that large u stays finite
    tanh2 = np.tanh(np.sqrt(6.517 * u)) ** 2
    # du1 = x/pi * ln(1 + 4e/(x coth^2)); at x = 0 the limit is 0, kept free of 0*inf
    du1 = _safe_x_log(x, 1.0 + 4.0 * math.e * tanh2 / np.where(x > 0, x, 1.0)) / math.pi
    dur = 0.5 * (1.0 + 1.0 / np.cosh(np.sqrt(er - 1.0))) * du1
    u1 = u + du1
    ur = u + dur
    z01_r = _hj_z01(ur)
    e_r = _hj_er_eff0(ur, er)
    z0 = z01_r / np.sqrt(e_r)
    er_eff = e_r * (_hj_z01(u1) / z01_r) ** 2
    return z0, er_eff


def _ipc_microstrip(w, h, er, t) -> tuple[np.ndarray, np.ndarray]:
    arg = 5.98 * h / (0.8 * w + t)
    # the logarithm turns negative for wide traces (arg <= 1): no impedance there
    z0 = np.where(arg > 1.0, 87.0 / np.sqrt(er + 1.41) * np.log(np.where(arg > 1.0, arg, 2.0)),
                  np.nan)
    _, er_eff = _hj_microstrip(w, h, er, t)
    return z0, er_eff


_MICROSTRIP_IMPL = {"hammerstad-jensen": _hj_microstrip, "ipc-2141": _ipc_microstrip}


def microstrip(w, h, er, t=0.0, *, method: str = "hammerstad-jensen") -> LineModel:
    """Characteristic impedance and delay of a surface microstrip trace.

    Parameters
    ----------
    w : float or array_like
        Trace width. [m]
    h : float or array_like
        Dielectric height from the trace to its reference plane. [m]
    er : float or array_like
        Relative permittivity of the dielectric. [1]
    t : float or array_like, optional
        Trace (copper) thickness; 0 for an ideal thin strip. Default 0. [m]
    method : {'hammerstad-jensen', 'ipc-2141'}, optional
        Model to use; default ``'hammerstad-jensen'``, the more accurate. [1]

    Returns
    -------
    LineModel
        ``z0`` [Ω], ``er_eff`` [1], ``tpd`` [s/m], ``c`` [F/m], ``l`` [H/m], each with the
        broadcast shape of the inputs.

    Raises
    ------
    InputError
        For ``w <= 0``, ``h <= 0``, ``er < 1``, ``t < 0``, or an unknown method.

    Warns
    -----
    ValidityWarning
        When an input lies outside the method's validity range (see :data:`VALIDITY`):
        ``0.01 <= w/h <= 100`` (and ``er <= 128``) for Hammerstad–Jensen,
        ``0.1 < w/h < 2.0`` and ``1 < er < 15`` for IPC-2141.

    Notes
    -----
    **Hammerstad–Jensen** (quasi-static, no dispersion). With u = w/h,

    .. math::

        Z_{01}(u) &= \\frac{\\eta_0}{2\\pi}\\ln\\left[\\frac{f(u)}{u}
                    + \\sqrt{1 + (2/u)^2}\\right],\\quad
        f(u) = 6 + (2\\pi - 6)\\exp\\left[-(30.666/u)^{0.7528}\\right] \\\\
        \\varepsilon_{eff}(u) &= \\frac{\\varepsilon_r + 1}{2}
            + \\frac{\\varepsilon_r - 1}{2}(1 + 10/u)^{-ab} \\\\
        a &= 1 + \\frac{1}{49}\\ln\\frac{u^4 + (u/52)^2}{u^4 + 0.432}
              + \\frac{1}{18.7}\\ln\\left[1 + (u/18.1)^3\\right],\\quad
        b = 0.564\\left(\\frac{\\varepsilon_r - 0.9}{\\varepsilon_r + 3}\\right)^{0.053}

    The thickness T = t/h widens the strip (H&J's correction):
    :math:`\\Delta u_1 = \\frac{T}{\\pi}\\ln\\left[1 + \\frac{4e}{T\\coth^2\\sqrt{6.517u}}\\right]`,
    :math:`\\Delta u_r = \\tfrac12\\left[1 + \\operatorname{sech}\\sqrt{\\varepsilon_r-1}\\right]
    \\Delta u_1`, :math:`u_1 = u + \\Delta u_1`, :math:`u_r = u + \\Delta u_r`, and

    .. math::

        Z_0 = \\frac{Z_{01}(u_r)}{\\sqrt{\\varepsilon_{eff}(u_r)}},\\qquad
        \\varepsilon_{eff} = \\varepsilon_{eff}(u_r)\\left[\\frac{Z_{01}(u_1)}
        {Z_{01}(u_r)}\\right]^2 .

    H&J give :math:`Z_{01}` within 0.01 % for u <= 1 and 0.03 % for u <= 1000, and
    :math:`\\varepsilon_{eff}` within 0.2 % for 0.01 <= u <= 100. :math:`\\eta_0` is
    :data:`ETA0`.

    **IPC-2141** (IPC-D-317A): :math:`Z_0 = \\frac{87}{\\sqrt{\\varepsilon_r + 1.41}}
    \\ln\\frac{5.98h}{0.8w + t}`. The standard's formula gives no effective permittivity;
    here ``er_eff`` (and so ``tpd``, ``c``, ``l``) is the Hammerstad–Jensen value for the
    same w, h, er, t, so the two methods differ only in Z0. Where 5.98h <= 0.8w + t the
    logarithm is not positive and Z0 is NaN; a design using such a geometry is refused
    when it is loaded (see :func:`widest_width`).

    Per length: :math:`t_{pd} = \\sqrt{\\varepsilon_{eff}}/c_0`, :math:`C = t_{pd}/Z_0`,
    :math:`L = t_{pd} Z_0` (lossless TEM line).

    References
    ----------
    .. [1] E. Hammerstad and Ø. Jensen, "Accurate models for microstrip computer-aided
       design", IEEE MTT-S International Microwave Symposium Digest, 1980, pp. 407–409.
    .. [2] IPC-2141A, "Design Guide for High-Speed Controlled Impedance Circuit Boards",
       IPC, 2004 (formula from IPC-D-317A, 1995).

    Examples
    --------
    >>> m = microstrip(0.3e-3, 0.2e-3, 4.3, 35e-6)
    >>> round(float(m.z0), 2), round(float(m.er_eff), 3)
    (55.08, 3.066)
    >>> round(float(m.tpd) * 0.0254 * 1e12)  # ps per inch
    148
    """
    _check_method("microstrip", method)
    w, h, er, t = _geometry("microstrip", w, h, er, t, "h")
    _warn_outside("microstrip", method, _quantities("microstrip", w, h, er, t))
    z0, er_eff = _MICROSTRIP_IMPL[method](w, h, er, t)
    return _model(z0, er_eff)
