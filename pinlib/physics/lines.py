"""Board trace models: characteristic impedance and delay of microstrip and stripline.

Every function takes SI floats or numpy arrays (lengths in metres) and broadcasts them
against one another; each returns a :class:`LineModel` whose fields have the broadcast
shape (numpy scalars for scalar input).

The models are quasi-static and lossless (TEM or quasi-TEM at low frequency): they give
the impedance, delay and per-length capacitance and inductance that the edge-rate and
termination calculations use. Dispersion and conductor or dielectric loss are left out.

Each method's validity range is held as data in :data:`VALIDITY`;
:func:`line_methods` lists the methods whose ranges contain given inputs, and the model
functions emit :class:`~pinlib.core.errors.ValidityWarning` for inputs outside them.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass
from typing import NamedTuple

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError, ValidityWarning

__all__ = [
    "C0",
    "ETA0",
    "LineModel",
    "ValidityRange",
    "VALIDITY",
    "MICROSTRIP_METHODS",
    "STRIPLINE_METHODS",
    "microstrip",
    "stripline",
    "from_per_length",
    "line_methods",
]

C0 = 299792458.0
"""Speed of light in vacuum. [m/s]"""

ETA0 = 4e-7 * math.pi * C0
"""Wave impedance of free space, mu0*c0 with mu0 = 4*pi*1e-7 H/m (about 376.730 Ω). [Ω]"""

_HJ_SOURCE = (
    "Hammerstad & Jensen, 'Accurate models for microstrip computer-aided design', "
    "IEEE MTT-S Digest 1980, p. 407"
)
_IPC_SOURCE = "IPC-2141 / IPC-D-317A (range as commonly quoted)"
_WHEELER_SOURCE = (
    "Wheeler, 'Transmission-line properties of a strip line between parallel planes', "
    "IEEE Trans. MTT-26, 1978 (0.5 % for w'/(b-t) < 10)"
)
_COHN_SOURCE = (
    "Cohn, 'Characteristic impedance of the shielded-strip transmission line', "
    "IRE Trans. MTT-2, 1954 (exact for a strip of zero thickness)"
)


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


@dataclass(frozen=True)
class ValidityRange:
    """The range of one dimensionless input in which a published model holds.

    Parameters
    ----------
    quantity : str
        Name of the quantity, e.g. ``"w/h"``, ``"er"``, ``"t/b"``. [1]
    low, high : float or None
        Bounds; None for no bound. [1]
    low_inclusive, high_inclusive : bool
        Whether a bound itself lies inside the range. [1]
    source : str
        Where the range is published. [1]
    """

    quantity: str
    low: float | None
    high: float | None
    low_inclusive: bool = True
    high_inclusive: bool = True
    source: str = ""

    def contains(self, x) -> np.ndarray:
        """Boolean array: True where ``x`` lies inside the range."""
        x = np.asarray(x, dtype=float)
        inside = np.ones(x.shape, dtype=bool)
        if self.low is not None:
            inside &= (x >= self.low) if self.low_inclusive else (x > self.low)
        if self.high is not None:
            inside &= (x <= self.high) if self.high_inclusive else (x < self.high)
        return inside

    def describe(self) -> str:
        """The range as text, e.g. ``'0.01 <= w/h <= 100'``."""
        parts = []
        if self.low is not None:
            parts.append(f"{self.low:g} {'<=' if self.low_inclusive else '<'} ")
        parts.append(self.quantity)
        if self.high is not None:
            parts.append(f" {'<=' if self.high_inclusive else '<'} {self.high:g}")
        return "".join(parts)


MICROSTRIP_METHODS = ("hammerstad-jensen", "ipc-2141")
"""Microstrip methods, the default first."""

STRIPLINE_METHODS = ("wheeler", "cohn", "ipc-2141")
"""Symmetric stripline methods, the default first."""

VALIDITY: dict[str, dict[str, tuple[ValidityRange, ...]]] = {
    "microstrip": {
        "hammerstad-jensen": (
            # published: H&J 1980, er_eff within 0.2 % for 0.01 <= u <= 100
            ValidityRange("w/h", 0.01, 100.0, source=_HJ_SOURCE),
            # from memory: H&J 1980 state the accuracy for er <= 128
            ValidityRange("er", 1.0, 128.0, source=_HJ_SOURCE + " (er <= 128, from memory)"),
        ),
        "ipc-2141": (
            ValidityRange("w/h", 0.1, 2.0, False, False, source=_IPC_SOURCE),
            ValidityRange("er", 1.0, 15.0, False, False, source=_IPC_SOURCE),
        ),
    },
    "stripline": {
        "wheeler": (
            # Wheeler states 0.5 % for w'/(b-t) < 10, w' the thickness-widened strip;
            # w'/(b-t) >= w/(b-t), so the range is applied to the widened width.
            ValidityRange("w'/(b-t)", None, 10.0, high_inclusive=False, source=_WHEELER_SOURCE),
        ),
        "cohn": (
            # the conformal map is exact for any width, but only for a strip of no thickness
            ValidityRange("t/b", 0.0, 0.0, source=_COHN_SOURCE + "; a thickness given is ignored"),
        ),
        "ipc-2141": (
            ValidityRange("w/(b-t)", None, 0.35, high_inclusive=False, source=_IPC_SOURCE),
            ValidityRange("t/b", None, 0.25, high_inclusive=False, source=_IPC_SOURCE),
        ),
    },
}
"""Validity ranges of each method, by line kind and method name."""

_METHODS = {"microstrip": MICROSTRIP_METHODS, "stripline": STRIPLINE_METHODS}


# --------------------------------------------------------------------------- input checks


def _as_float_array(value, name: str) -> np.ndarray:
    try:
        arr = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise InputError(
            M.PARAMETER_NOT_A_NUMBER.format(name=name), field=name, value=value,
            expected="a float [SI]",
        ) from None
    return arr


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


def _check_method(kind: str, method: str) -> None:
    choices = _METHODS[kind]
    if method not in choices:
        raise InputError(
            M.UNKNOWN_LINE_METHOD.format(kind=kind),
            field="method",
            value=method,
            expected="one of " + ", ".join(repr(m) for m in choices),
        )


def _geometry(kind: str, w, h, er, t, hname: str):
    """Validate and broadcast the inputs; return float arrays (w, h, er, t)."""
    w = _as_float_array(w, "w")
    h = _as_float_array(h, hname)
    er = _as_float_array(er, "er")
    t = _as_float_array(t, "t")
    # written as 'not (x > 0)' so that NaN is refused too
    _require(w, w > 0, "w", "a trace width > 0 [m]")
    _require(h, h > 0, hname, "a dielectric height > 0 [m]")
    _require(er, er >= 1, "er", "a relative permittivity >= 1")
    _require(t, t >= 0, "t", "a trace thickness >= 0 [m]")
    try:
        w, h, er, t = np.broadcast_arrays(w, h, er, t)
    except ValueError:
        raise InputError(
            M.SHAPES_DO_NOT_BROADCAST,
            field="w",
            value=tuple(np.shape(a) for a in (w, h, er, t)),
            expected="arrays of one shape, or scalars",
        ) from None
    if kind == "stripline":
        _require(t, t < h, "t", "a trace thickness smaller than the plane spacing b [m]")
    return w, h, er, t


def _quantities(kind: str, w, h, er, t) -> dict[str, np.ndarray]:
    """The dimensionless inputs the validity ranges are written in."""
    if kind == "microstrip":
        return {"w/h": w / h, "er": er, "t/h": t / h}
    return {
        "w/b": w / h,
        "w/(b-t)": w / (h - t),
        "w'/(b-t)": _wheeler_width(w, h, t) / (h - t),
        "t/b": t / h,
        "er": er,
    }


def _warn_outside(kind: str, method: str, q: dict[str, np.ndarray]) -> None:
    for rng in VALIDITY[kind][method]:
        x = q[rng.quantity]
        outside = ~rng.contains(x)
        if np.any(outside):
            first = float(x[outside].flat[0]) if x.ndim else float(x)
            warnings.warn(
                ValidityWarning(M.OUTSIDE_VALIDITY.format(
                    kind=kind, method=method, count=int(np.count_nonzero(outside)),
                    size=x.size, range=rng.describe(), quantity=rng.quantity,
                    first=f"{first:.4g}", source=rng.source)),
                stacklevel=3,  # the caller of microstrip()/stripline()
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


# --------------------------------------------------------------------------- microstrip


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
    logarithm is not positive and Z0 is NaN.

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


# --------------------------------------------------------------------------- stripline


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


def _cohn_stripline(w, b, er, t) -> tuple[np.ndarray, np.ndarray]:
    x = math.pi * w / (2.0 * b)
    # sech(x) as 2e^-x/(1 + e^-2x): no overflow of cosh for very wide strips
    ex = np.exp(-x)
    k = 2.0 * ex / (1.0 + ex * ex)
    kp = np.tanh(x)
    z0 = ETA0 / (4.0 * np.sqrt(er)) * _k_ratio(k, kp)
    return z0, er


def _wheeler_width(w, b, t) -> np.ndarray:
    """Wheeler's thickness-widened strip width w' (1978). [m]"""
    x = t / b
    # x/(pi(1-x)) * {1 - 0.5 ln[(x/(2-x))^2 + (0.0796x/(w/b + 1.1x))^m]},
    # m = 2/(1 + (2/3) x/(1-x)). Written as x*ln(...) with the x = 0 limit 0.
    m = 2.0 / (1.0 + (2.0 / 3.0) * x / (1.0 - x))
    inner = (x / (2.0 - x)) ** 2 + (0.0796 * x / (w / b + 1.1 * x)) ** m
    dw_over = (x - 0.5 * _safe_x_log(x, inner)) / (math.pi * (1.0 - x))
    return w + dw_over * (b - t)


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
        ``t = 0`` for Cohn (a thickness given is ignored); ``w/(b-t) < 0.35`` and
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
    K(k)/K(k') = AGM(1, k)/AGM(1, k'); no scipy is needed. A thickness given is
    ignored, with a warning.

    **IPC-2141**: :math:`Z_0 = \\frac{60}{\\sqrt{\\varepsilon_r}}\\ln\\frac{1.9b}{0.8w + t}`,
    quoted for w/(b - t) < 0.35 and t/b < 0.25. NaN where 1.9b <= 0.8w + t.

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
    return _model(z0, er_eff)


# --------------------------------------------------------------------------- others


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
    # a relative tolerance of 1e-9 lets a free-space value rounded in the last digit pass
    _require(
        tpd,
        tpd * C0 >= 1.0 - 1e-9,
        "tpd",
        f"a delay per length >= 1/c0 = {1.0 / C0:.6g} s/m (no faster than light)",
    )
    c, tpd = np.broadcast_arrays(c, tpd)
    z0 = tpd / c
    return LineModel(_out(z0), _out((tpd * C0) ** 2), _out(tpd), _out(c), _out(tpd * z0))


def line_methods(kind: str, w, h, er, t=0.0) -> list[str]:
    """The methods whose validity ranges contain every given input.

    Parameters
    ----------
    kind : {'microstrip', 'stripline'}
        Line kind. [1]
    w : float or array_like
        Trace width. [m]
    h : float or array_like
        Dielectric height to the plane (microstrip) or plane spacing b (stripline). [m]
    er : float or array_like
        Relative permittivity. [1]
    t : float or array_like, optional
        Trace thickness. Default 0. [m]

    Returns
    -------
    list of str
        Method names in order of preference (the default first); empty when no method
        covers all the inputs.

    Raises
    ------
    InputError
        For an unknown ``kind`` or inputs the models refuse (see :func:`microstrip`,
        :func:`stripline`).

    Notes
    -----
    The ranges are the data in :data:`VALIDITY`, each with its source.

    Examples
    --------
    >>> line_methods("microstrip", 0.3e-3, 0.2e-3, 4.3, 35e-6)
    ['hammerstad-jensen', 'ipc-2141']
    >>> line_methods("stripline", 0.2e-3, 0.5e-3, 4.3, 18e-6)
    ['wheeler']
    """
    if kind not in _METHODS:
        raise InputError(
            M.UNKNOWN_LINE_KIND,
            field="kind",
            value=kind,
            expected="one of " + ", ".join(repr(k) for k in _METHODS),
        )
    w, h, er, t = _geometry(kind, w, h, er, t, "h" if kind == "microstrip" else "b")
    q = _quantities(kind, w, h, er, t)
    return [
        method
        for method in _METHODS[kind]
        if all(np.all(rng.contains(q[rng.quantity])) for rng in VALIDITY[kind][method])
    ]
