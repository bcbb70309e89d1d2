"""Symmetric stripline: a trace centred between two planes (Wheeler, Cohn, IPC-2141)."""

from __future__ import annotations

import math
import warnings

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import ValidityWarning
from pinlib.core.quantity import format_si
from pinlib.physics.lines.model import ETA0, LineModel, _model, _wheeler_width
from pinlib.physics.lines.validity import (
    _COHN_SOURCE,
    _check_method,
    _geometry,
    _quantities,
    _warn_outside,
)

__all__ = ["stripline"]


def _agm(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Arithmetic-geometric mean, elementwise.

    Converges quadratically; 12 steps reach double precision for b/a down to 1e-300
    (the ratio reaches 1 - 1e-2 within about 10 steps, then digits double each step).
    """
    a = np.asarray(a, dtype=float)
    b = np.asarray(b, dtype=float)
    for _ in range(12):
        a, b = 0.5 * (a + b), np.sqrt(a * b)
    return 0.5 * (a + b)


def _k_ratio(k: np.ndarray, kp: np.ndarray) -> np.ndarray:
    """K(k)/K(k') for complementary moduli k, k' = sqrt(1 - k^2), by the AGM.

    K(k) = pi / (2 AGM(1, k')), so K(k)/K(k') = AGM(1, k) / AGM(1, k'). k and k' are
    passed separately so that neither loses precision by being computed from the other.
    """
    return _agm(np.ones_like(k), k) / _agm(np.ones_like(kp), kp)


# Above this pi*w/(2b) the Cohn ratio is taken from K(k') = ln(4/k) (see below).
_COHN_WIDE_X = 20.0


def _cohn_stripline(w, b, er, t) -> tuple[np.ndarray, np.ndarray]:
    x = math.pi * w / (2.0 * b)
    # sech(x) as 2e^-x/(1 + e^-2x): no overflow of cosh for very wide strips
    ex = np.exp(-x)
    k = 2.0 * ex / (1.0 + ex * ex)
    kp = np.tanh(x)
    ratio = _k_ratio(k, kp)
    # For a wide strip k underflows (to 0 past x of about 745, w/b of about 474) and the
    # AGM ratio with it, giving Z0 = 0. There K(k) = pi/2 and K(k') = ln(4/k) to a
    # relative k^2/4 (from memory: the standard expansion of K near modulus 1), and
    # ln(4/k) = x + ln 2 + ln(1 + e^-2x): above x = 20 the ratio is pi/(2(x + ln 2)),
    # within 1e-17.
    wide = x > _COHN_WIDE_X
    if np.any(wide):
        ratio = np.where(wide, math.pi / (2.0 * (np.where(wide, x, 1.0) + math.log(2.0))),
                         ratio)
    z0 = ETA0 / (4.0 * np.sqrt(er)) * ratio
    return z0, er


def _wheeler_stripline(w, b, er, t) -> tuple[np.ndarray, np.ndarray]:
    # g = (b - t)/w', the reciprocal of Wheeler's normalised width
    g = (b - t) / _wheeler_width(w, b, t)
    p = 8.0 / math.pi * g
    z0 = 30.0 / np.sqrt(er) * np.log1p(4.0 / math.pi * g * (p + np.sqrt(p * p + 6.27)))
    return z0, er


def _ipc_stripline(w, b, er, t) -> tuple[np.ndarray, np.ndarray]:
    arg = 1.9 * b / (0.8 * w + t)
    z0 = np.where(arg > 1.0, 60.0 / np.sqrt(er) * np.log(np.where(arg > 1.0, arg, 2.0)), np.nan)
    return z0, er


_STRIPLINE_IMPL = {
    "wheeler": _wheeler_stripline,
    "cohn": _cohn_stripline,
    "ipc-2141": _ipc_stripline,
}


def stripline(w, b, er, t=0.0, *, method: str = "wheeler") -> LineModel:
    """Characteristic impedance and delay of a symmetric (centred) stripline trace.

    Parameters
    ----------
    w : float or array_like
        Trace width. [m]
    b : float or array_like
        Spacing between the two reference planes; the trace lies midway. [m]
    er : float or array_like
        Relative permittivity of the (homogeneous) dielectric. [1]
    t : float or array_like, optional
        Trace thickness, less than ``b``. Default 0. [m]
    method : {'wheeler', 'cohn', 'ipc-2141'}, optional
        Model to use; default ``'wheeler'`` (see Notes). [1]

    Returns
    -------
    LineModel
        ``z0`` [Ω], ``er_eff`` (= ``er``, the line is TEM) [1], ``tpd`` [s/m],
        ``c`` [F/m], ``l`` [H/m].

    Raises
    ------
    InputError
        For ``w <= 0``, ``b <= 0``, ``er < 1``, ``t < 0``, ``t >= b``, or an unknown method.

    Warns
    -----
    ValidityWarning
        Outside the method's range (see :data:`VALIDITY`): ``w'/(b-t) < 10`` for Wheeler;
        ``t = 0`` for Cohn (a thickness given is not counted: the warning names it and
        gives Wheeler's Z0 with it); ``w/(b-t) < 0.35`` and
        ``t/b < 0.25`` for IPC-2141.

    Notes
    -----
    **Wheeler (1978)**, the default, for a strip of finite thickness:

    .. math::

        Z_0 = \\frac{30}{\\sqrt{\\varepsilon_r}}\\ln\\left\\{1 + \\frac{4}{\\pi}\\frac{1}{m}
              \\left[\\frac{8}{\\pi}\\frac{1}{m} + \\sqrt{\\left(\\frac{8}{\\pi}\\frac{1}{m}
              \\right)^2 + 6.27}\\right]\\right\\},\\qquad m = \\frac{w'}{b - t}

    with the widened strip :math:`w' = w + \\Delta w`, x = t/b,

    .. math::

        \\frac{\\Delta w}{b - t} = \\frac{x}{\\pi(1 - x)}\\left\\{1 - \\frac12\\ln\\left[
        \\left(\\frac{x}{2 - x}\\right)^2 + \\left(\\frac{0.0796x}{w/b + 1.1x}\\right)^n
        \\right]\\right\\},\\qquad n = \\frac{2}{1 + \\frac23\\frac{x}{1 - x}} .

    Wheeler states 0.5 % accuracy for w'/(b - t) < 10; at t = 0 it stays within about
    0.5 % of Cohn's exact result.

    **Cohn**, exact for a strip of zero thickness (conformal mapping):

    .. math::

        Z_0 = \\frac{\\eta_0}{4\\sqrt{\\varepsilon_r}}\\frac{K(k)}{K(k')},\\qquad
        k = \\operatorname{sech}\\frac{\\pi w}{2b},\\quad k' = \\tanh\\frac{\\pi w}{2b}

    (Cohn writes :math:`30\\pi` for :math:`\\eta_0/4`). The ratio of complete elliptic
    integrals is computed exactly with the arithmetic-geometric mean,
    K(k)/K(k') = AGM(1, k)/AGM(1, k'); no scipy is needed. Above
    :math:`\\pi w/2b = 20` the ratio is :math:`\\pi/(2(\\pi w/2b + \\ln 2))` (K(k') = ln(4/k)
    for small k), so a very wide strip keeps a positive Z0 where sech underflows. No
    thickness correction is applied: a thickness given is not counted (Z0 is the
    zero-thickness strip's, higher than the thick strip's), and a warning names it with
    Wheeler's Z0 for it.

    **IPC-2141**: :math:`Z_0 = \\frac{60}{\\sqrt{\\varepsilon_r}}\\ln\\frac{1.9b}{0.8w + t}`,
    quoted for w/(b - t) < 0.35 and t/b < 0.25. NaN where 1.9b <= 0.8w + t; a
    design using such a geometry is refused when it is loaded.

    Why Wheeler is the default: a 50 Ω stripline in FR-4 needs w/(b - t) of about 0.35–0.5,
    at or beyond the edge of the IPC formula's range, whose error grows outside it; Cohn's
    formula is exact but only for zero thickness, while 18–35 µm copper in a 0.2–0.5 mm
    gap lowers Z0 by several ohms. Wheeler's formula covers finite thickness over nearly
    every board geometry (w'/(b - t) < 10) at 0.5 %.

    References
    ----------
    .. [1] H. A. Wheeler, "Transmission-line properties of a strip line between parallel
       planes", IEEE Trans. Microwave Theory Tech., vol. MTT-26, no. 11, pp. 866–876, 1978.
    .. [2] S. B. Cohn, "Characteristic impedance of the shielded-strip transmission line",
       IRE Trans. Microwave Theory Tech., vol. MTT-2, pp. 52–57, July 1954.
    .. [3] IPC-2141A, "Design Guide for High-Speed Controlled Impedance Circuit Boards",
       IPC, 2004 (formula from IPC-D-317A, 1995).

    Examples
    --------
    >>> mil = 25.4e-6
    >>> s = stripline(7 * mil, 20 * mil, 4.3, 0.7 * mil)
    >>> round(float(s.z0), 1), round(float(s.er_eff), 2)
    (53.1, 4.3)
    """
    _check_method("stripline", method)
    w, b, er, t = _geometry("stripline", w, b, er, t, "b")
    _warn_outside("stripline", method, _quantities("stripline", w, b, er, t))
    z0, er_eff = _STRIPLINE_IMPL[method](w, b, er, t)
    if method == "cohn" and np.any(t > 0):
        _warn_cohn_thickness(w, b, er, t, z0)
    return _model(z0, er_eff)


def _warn_cohn_thickness(w, b, er, t, z0) -> None:
    """The warning for a thickness Cohn's zero-thickness formula cannot count: the first
    such geometry's thickness, its Z0, and Wheeler's Z0 with the thickness beside it."""
    thick = t > 0
    i = np.flatnonzero(thick.reshape(-1))[0]
    at = [np.asarray(x, dtype=float).reshape(-1)[i] for x in (w, b, er, t)]
    z_w, _ = _wheeler_stripline(*at)
    count = "" if t.size == 1 else f" (in {int(np.count_nonzero(thick))} of {t.size})"
    warnings.warn(ValidityWarning(M.COHN_THICKNESS_IGNORED.format(
        thickness=format_si(float(at[3]), "m"), count=count,
        z0=format_si(float(np.asarray(z0, dtype=float).reshape(-1)[i]), "Ω"),
        z0_wheeler=format_si(float(z_w), "Ω"), source=_COHN_SOURCE)), stacklevel=3)
