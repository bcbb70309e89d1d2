"""Two equal traces side by side (edge-coupled): their mode impedances, their per-length
self and mutual inductance and capacitance, and the crosstalk a fast edge on one of them
(the aggressor) puts on the other (the victim).

Everything here is quasi-static, lossless and vectorised: every function takes SI floats
or numpy arrays (lengths in metres) that broadcast against one another.

Models
------
Coupled microstrip (:func:`coupled_microstrip`)
    Kirschning & Jansen, 'Accurate wide-range design equations for the frequency-dependent
    characteristic of parallel coupled microstrip lines', IEEE Trans. MTT-32 no. 1, Jan.
    1984, pp. 83-90: their static (zero-frequency) even- and odd-mode effective permittivity
    and impedance, built on Hammerstad & Jensen's single line (1980). The equation numbers
    are not at hand; the formulas are those of the paper's static part (from memory,
    checked here against their limits: wide spacing gives the single line, er = 1 gives
    equal mode velocities). Stated range 0.1 <= w/h <= 10, 0.1 <= s/h <= 10, er <= 18.
Coupled stripline (:func:`coupled_stripline`)
    Cohn, 'Shielded coupled-strip transmission line', IRE Trans. MTT-3 no. 10, Oct. 1955,
    pp. 29-38: the conformal map of two strips of no thickness centred between two planes,
    exact for any width and gap (moduli tanh(pi w/2b) tanh(pi (w+s)/2b) for the even mode,
    tanh(pi w/2b) coth(pi (w+s)/2b) for the odd mode).

Both take a strip of no thickness; a thickness given is ignored with a
:class:`~pinlib.core.errors.ValidityWarning`, as the single-line Cohn method does.

From modes to matrices
----------------------
With Ze, Zo and ve, vo the mode impedances and velocities of one line of the pair:
``Le = Ze/ve = L11 + Lm``, ``Lo = Zo/vo = L11 - Lm``, ``Ce = 1/(Ze ve) = C11 - Cm``,
``Co = 1/(Zo vo) = C11 + Cm`` (C11 the capacitance of one line with the other held at
ground, so including the mutual part; Cm >= 0 the mutual capacitance).

Crosstalk (:func:`crosstalk`)
-----------------------------
Weak coupling, both ends of both lines matched, a linear ramp of swing dV and 0-100 %
time tr on the aggressor, coupled length l and delay td = l sqrt(L11 C11) (the standard
derivation, e.g. Hall, Hall & McCall, 'High-Speed Digital System Design', Wiley 2000,
ch. 3, and Johnson & Graham, 'High-Speed Digital Design', Prentice Hall 1993, ch. 5):

* near end (backward): ``Kb = (Lm/L11 + Cm/C11)/4``; the pulse reaches
  ``Kb dV min(1, 2 td/tr)`` (it saturates once 2 td >= tr) and lasts ``max(tr, 2 td)``;
* far end (forward): ``Vfe = Kf dV td/tr`` with ``Kf = (Cm/C11 - Lm/L11)/2``, a pulse
  of width tr arriving at td; it grows with length over edge and vanishes in a
  homogeneous medium (stripline), where Cm/C11 = Lm/L11.

The 10-90 % edge time a user gives is turned into the ramp's 0-100 % time by tr =
t10-90 / 0.8 (a linear ramp).
"""

from __future__ import annotations

import math
import warnings

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError, ValidityWarning
from pinlib.core.valueclass import value_class
from pinlib.physics.guards import non_negative, positive
from pinlib.physics.lines.microstrip_models import _hj_er_eff0, _hj_z01
from pinlib.physics.lines.model import C0, ETA0, _out
from pinlib.physics.lines.stripline_models import _k_ratio
from pinlib.physics.lines.validity import ValidityRange

__all__ = ["CoupledLine", "Crosstalk", "COUPLED_VALIDITY", "coupled_microstrip",
           "coupled_stripline", "from_modes", "crosstalk", "RAMP_FROM_10_90"]

KJ_SOURCE = ("Kirschning & Jansen, 'Accurate wide-range design equations for the "
             "frequency-dependent characteristic of parallel coupled microstrip lines', "
             "IEEE Trans. MTT-32, 1984, pp. 83-90")
COHN_COUPLED_SOURCE = ("Cohn, 'Shielded coupled-strip transmission line', IRE Trans. MTT-3, "
                       "1955, pp. 29-38 (exact for strips of zero thickness)")

RAMP_FROM_10_90 = 1.0 / 0.8
"""0-100 % time of a linear ramp over its 10-90 % time. [1]"""

COUPLED_VALIDITY: dict[str, tuple[ValidityRange, ...]] = {
    "coupled microstrip": (
        # from memory: K&J 1984 state their range as 0.1 <= u <= 10, 0.1 <= g <= 10, er <= 18
        ValidityRange("w/h", 0.1, 10.0, source=KJ_SOURCE),
        ValidityRange("s/h", 0.1, 10.0, source=KJ_SOURCE),
        ValidityRange("er", 1.0, 18.0, source=KJ_SOURCE),
        ValidityRange("t/h", 0.0, 0.0, source=KJ_SOURCE + "; a thickness given is ignored"),
    ),
    "coupled stripline": (
        ValidityRange("t/b", 0.0, 0.0,
                      source=COHN_COUPLED_SOURCE + "; a thickness given is ignored"),
    ),
}
"""Validity ranges of the coupled-line models, by line kind."""

_METHOD = {"coupled microstrip": "kirschning-jansen", "coupled stripline": "cohn"}


@value_class(frozen=True)
class CoupledLine:
    """A symmetric pair of coupled lines, per unit length.

    Attributes
    ----------
    z_even, z_odd : mode impedances of one line. [Ω]
    er_eff_even, er_eff_odd : mode effective permittivities. [1]
    l_self, l_mutual : L11 and Lm. [H/m]
    c_self, c_mutual : C11 (including the mutual part) and Cm. [F/m]
    """

    z_even: float | np.ndarray
    z_odd: float | np.ndarray
    er_eff_even: float | np.ndarray
    er_eff_odd: float | np.ndarray
    l_self: float | np.ndarray
    l_mutual: float | np.ndarray
    c_self: float | np.ndarray
    c_mutual: float | np.ndarray

    @property
    def kb(self):
        """Backward (near-end) coefficient ¼(Lm/L11 + Cm/C11). [1]"""
        return 0.25 * (self.l_mutual / self.l_self + self.c_mutual / self.c_self)

    @property
    def kf(self):
        """Forward (far-end) coefficient ½(Cm/C11 − Lm/L11); times dV·td/tr. [1]"""
        return 0.5 * (self.c_mutual / self.c_self - self.l_mutual / self.l_self)

    @property
    def tpd(self):
        """Delay per length of the coupled line, sqrt(L11 C11). [s/m]"""
        return np.sqrt(self.l_self * self.c_self)


def from_modes(z_even, z_odd, er_eff_even, er_eff_odd) -> CoupledLine:
    """The per-length matrices of a symmetric pair from its even and odd modes.

    Parameters
    ----------
    z_even, z_odd : float or array_like
        Even- and odd-mode impedance of one line. [Ω]
    er_eff_even, er_eff_odd : float or array_like
        Even- and odd-mode effective permittivity. [1]
    """
    ze = positive(z_even, "z_even", "[Ω]")
    zo = positive(z_odd, "z_odd", "[Ω]")
    ee = positive(er_eff_even, "er_eff_even", "[1]")
    eo = positive(er_eff_odd, "er_eff_odd", "[1]")
    ve, vo = C0 / np.sqrt(ee), C0 / np.sqrt(eo)
    le, lo = ze / ve, zo / vo
    ce, co = 1.0 / (ze * ve), 1.0 / (zo * vo)
    return CoupledLine(_out(ze), _out(zo), _out(ee), _out(eo),
                       _out(0.5 * (le + lo)), _out(0.5 * (le - lo)),
                       _out(0.5 * (ce + co)), _out(0.5 * (co - ce)))


# --------------------------------------------------------------------------- inputs


def _inputs(w, h, er, s, t, hname: str):
    w = positive(w, "w", "[m]")
    h = positive(h, hname, "[m]")
    s = positive(s, "s", "[m]")
    er = positive(er, "er", "[1]")
    t = non_negative(t, "t", "[m]")
    if np.any(er < 1.0):
        raise InputError(M.PARAMETER_OUT_OF_RANGE.format(name="er"), field="er",
                         value=float(np.min(er)), expected="a relative permittivity >= 1")
    try:
        return np.broadcast_arrays(w, h, er, s, t)
    except ValueError:
        raise InputError(M.SHAPES_DO_NOT_BROADCAST, field="w",
                         value=tuple(np.shape(a) for a in (w, h, er, s, t)),
                         expected="arrays of one shape, or scalars") from None


def _warn_outside(kind: str, q: dict[str, np.ndarray]) -> None:
    for rng in COUPLED_VALIDITY[kind]:
        text = rng.outside_text(kind, _METHOD[kind], q[rng.quantity])
        if text is not None:
            warnings.warn(ValidityWarning(text), stacklevel=3)


# --------------------------------------------------------------------------- microstrip


def _kj_odd_er_eff(u, g, er, er_eff):
    """Kirschning & Jansen odd-mode static effective permittivity."""
    a0 = 0.7287 * (er_eff - 0.5 * (er + 1.0)) * (1.0 - np.exp(-0.179 * u))
    b0 = 0.747 * er / (0.15 + er)
    c0 = b0 - (b0 - 0.207) * np.exp(-0.414 * u)
    d0 = 0.593 + 0.694 * np.exp(-0.562 * u)
    return (0.5 * (er + 1.0) + a0 - er_eff) * np.exp(-c0 * g**d0) + er_eff


def _kj_q(u, g):
    """Kirschning & Jansen's Q4 (even mode) and Q10 (odd mode) impedance terms."""
    q1 = 0.8695 * u**0.194
    q2 = 1.0 + 0.7519 * g + 0.189 * g**2.31
    # ln(g^10/(1 + (g/x)^10)) written as 10 ln g - log1p((g/x)^10): no overflow
    q3 = (0.1975 + (16.6 + (8.4 / g) ** 6) ** -0.387
          + (10.0 * np.log(g) - np.log1p((g / 3.4) ** 10)) / 241.0)
    eg = np.exp(-g)
    q4 = 2.0 * q1 / q2 / (eg * u**q3 + (2.0 - eg) * u**-q3)
    q5 = 1.794 + 1.14 * np.log1p(0.638 / (g + 0.517 * g**2.43))
    q6 = (0.2305 + (10.0 * np.log(g) - np.log1p((g / 5.8) ** 10)) / 281.3
          + np.log1p(0.598 * g**1.154) / 5.1)
    q7 = (10.0 + 190.0 * g * g) / (1.0 + 82.3 * g**3)
    q8 = np.exp(-6.5 - 0.95 * np.log(g) - (g / 0.15) ** 5)
    q9 = np.log(q7) * (q8 + 1.0 / 16.5)
    q10 = q4 - q5 / q2 * np.exp(q6 * np.log(u) * u**-q9)
    return q4, q10


def coupled_microstrip(w, h, er, s, t=0.0) -> CoupledLine:
    """Two equal surface microstrip traces side by side (Kirschning & Jansen 1984, static).

    Parameters
    ----------
    w : float or array_like
        Width of each trace. [m]
    h : float or array_like
        Dielectric height to the reference plane. [m]
    er : float or array_like
        Relative permittivity of the dielectric. [1]
    s : float or array_like
        Edge-to-edge spacing (gap) of the traces. [m]
    t : float or array_like, optional
        Trace thickness; not modelled (a value above 0 warns). Default 0. [m]

    Returns
    -------
    CoupledLine

    Warns
    -----
    ValidityWarning
        For inputs outside 0.1 <= w/h <= 10, 0.1 <= s/h <= 10, er <= 18, or t > 0.
    """
    w, h, er, s, t = _inputs(w, h, er, s, t, "h")
    u, g = w / h, s / h
    _warn_outside("coupled microstrip", {"w/h": u, "s/h": g, "er": er, "t/h": t / h})
    er_eff = _hj_er_eff0(u, er)
    z0 = _hj_z01(u) / np.sqrt(er_eff)
    v = u * (20.0 + g * g) / (10.0 + g * g) + g * np.exp(-g)
    er_eff_e = _hj_er_eff0(v, er)
    er_eff_o = _kj_odd_er_eff(u, g, er, er_eff)
    q4, q10 = _kj_q(u, g)
    scale = z0 / ETA0 * np.sqrt(er_eff)
    z_e = z0 * np.sqrt(er_eff / er_eff_e) / (1.0 - scale * q4)
    z_o = z0 * np.sqrt(er_eff / er_eff_o) / (1.0 - scale * q10)
    return from_modes(z_e, z_o, er_eff_e, er_eff_o)


# --------------------------------------------------------------------------- stripline


def coupled_stripline(w, b, er, s, t=0.0) -> CoupledLine:
    """Two equal traces side by side centred between two planes (Cohn 1955, exact at t = 0).

    Parameters
    ----------
    w : float or array_like
        Width of each trace. [m]
    b : float or array_like
        Spacing of the two planes. [m]
    er : float or array_like
        Relative permittivity of the (homogeneous) dielectric. [1]
    s : float or array_like
        Edge-to-edge spacing (gap) of the traces. [m]
    t : float or array_like, optional
        Trace thickness; not modelled (a value above 0 warns). Default 0. [m]

    Returns
    -------
    CoupledLine
        Both modes travel at c/sqrt(er), so ``kf`` is 0.
    """
    w, b, er, s, t = _inputs(w, b, er, s, t, "b")
    _warn_outside("coupled stripline", {"t/b": t / b})
    x1 = math.pi * w / (2.0 * b)
    x2 = math.pi * (w + s) / (2.0 * b)
    t1, t2 = np.tanh(x1), np.tanh(x2)
    # complementary moduli from e^-2x so that neither loses digits near 1
    k_e, k_o = t1 * t2, t1 / t2
    kp_e = np.sqrt((1.0 - k_e) * (1.0 + k_e))
    kp_o = np.sqrt((1.0 - k_o) * (1.0 + k_o))
    base = ETA0 / (4.0 * np.sqrt(er))
    # Z = eta0/(4 sqrt(er)) K(k')/K(k), as the single line with k' = sech, k = tanh
    z_e = base * _k_ratio(kp_e, k_e)
    z_o = base * _k_ratio(kp_o, k_o)
    return from_modes(z_e, z_o, er, er)


# --------------------------------------------------------------------------- crosstalk


@value_class(frozen=True)
class Crosstalk:
    """Peak coupled noise at the two ends of the victim, both ends matched.

    Attributes
    ----------
    near_peak : near-end (backward) pulse, same sign as the aggressor's step. [V]
    near_width : its duration, max(tr, 2 td). [s]
    far_peak : far-end (forward) pulse; negative where Lm/L11 > Cm/C11. [V]
    far_width : its duration, tr. [s]
    delay : coupled delay td of the run. [s]
    ramp : the aggressor's 0-100 % ramp time tr. [s]
    """

    near_peak: float | np.ndarray
    near_width: float | np.ndarray
    far_peak: float | np.ndarray
    far_width: float | np.ndarray
    delay: float | np.ndarray
    ramp: float | np.ndarray


def crosstalk(line: CoupledLine, length, swing, edge_time) -> Crosstalk:
    """Near- and far-end noise of a parallel run of ``length`` (weak coupling, matched ends).

    Parameters
    ----------
    line : CoupledLine
        The pair, per length.
    length : float or array_like
        Length the traces run side by side. [m]
    swing : float or array_like
        The aggressor's step dV (signed). [V]
    edge_time : float or array_like
        The aggressor's 10-90 % edge time. [s]
    """
    length = positive(length, "length", "[m]")
    edge = positive(edge_time, "edge_time", "[s]")
    dv = np.asarray(swing, dtype=float)
    tr = edge * RAMP_FROM_10_90
    td = length * line.tpd
    near = line.kb * dv * np.minimum(1.0, 2.0 * td / tr)
    far = line.kf * dv * td / tr
    return Crosstalk(_out(near), _out(np.maximum(tr, 2.0 * td)), _out(far),
                     _out(np.broadcast_to(tr, np.shape(far))), _out(td), _out(tr))
