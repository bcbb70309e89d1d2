"""Where each line method holds: its validity ranges as data (:data:`VALIDITY`), the
checked geometry and the dimensionless quantities the ranges are written in, the
warning for inputs outside them, and :func:`line_methods`."""

from __future__ import annotations

import warnings

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError, ValidityWarning
from pinlib.core.valueclass import value_class
from pinlib.physics.lines.model import _as_float_array, _require, _wheeler_width

__all__ = ["ValidityRange", "VALIDITY", "MICROSTRIP_METHODS", "STRIPLINE_METHODS",
           "line_methods", "LOG_FORMS", "widest_width"]

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


@value_class(frozen=True)
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
        """The range as text, e.g. ``'0.01 <= w/h <= 100'``; ``'t/b = 0'`` for a range of
        one value."""
        if self.low is not None and self.low == self.high:
            return f"{self.quantity} = {self.low:g}"
        parts = []
        if self.low is not None:
            parts.append(f"{self.low:g} {'<=' if self.low_inclusive else '<'} ")
        parts.append(self.quantity)
        if self.high is not None:
            parts.append(f" {'<=' if self.high_inclusive else '<'} {self.high:g}")
        return "".join(parts)

    def outside_text(self, kind: str, method: str, x: np.ndarray) -> str | None:
        """The warning for the inputs ``x`` outside the range, or None when all lie
        inside: how many, the first of them, the range and its source."""
        x = np.asarray(x, dtype=float)
        outside = ~self.contains(x)
        if not np.any(outside):
            return None
        first = float(x[outside].flat[0]) if x.ndim else float(x)
        point = self.low is not None and self.low == self.high
        return (M.OFF_VALIDITY_POINT if point else M.OUTSIDE_VALIDITY).format(
            kind=kind, method=method, count=int(np.count_nonzero(outside)), size=x.size,
            range=self.describe(), quantity=self.quantity, first=f"{first:.4g}",
            source=self.source)


MICROSTRIP_METHODS = ("hammerstad-jensen", "ipc-2141")
"""Microstrip methods, the default first."""

STRIPLINE_METHODS = ("wheeler", "cohn", "ipc-2141")
"""Symmetric stripline methods, the default first."""

_METHOD_LABELS = {
    ("microstrip", "hammerstad-jensen"): "Hammerstad–Jensen",
    # IPC-2141's microstrip formula gives Z0 alone: the delay keeps Hammerstad–Jensen's
    # effective permittivity
    ("microstrip", "ipc-2141"): "Z0 by IPC-2141, delay by Hammerstad–Jensen",
    ("stripline", "wheeler"): "Wheeler",
    ("stripline", "cohn"): "Cohn",
    ("stripline", "ipc-2141"): "IPC-2141",
}


def method_label(kind: str, method: str | None) -> str:
    """The model behind a trace geometry's Z0 and delay, for people.

    Parameters
    ----------
    kind : str
        ``"microstrip"`` or ``"stripline"``. [1]
    method : str or None
        The geometry's ``method``; None for the kind's default. [1]

    Returns
    -------
    str
        E.g. ``"Hammerstad–Jensen"``. [1]

    Examples
    --------
    >>> method_label("stripline", None)
    'Wheeler'
    """
    default = MICROSTRIP_METHODS[0] if kind == "microstrip" else STRIPLINE_METHODS[0]
    return _METHOD_LABELS.get((kind, method or default), method or default)

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
            # the conformal map is exact for any width, but only for a strip of no
            # thickness; outside it :func:`stripline` warns in its own words
            # (M.COHN_THICKNESS_IGNORED), naming the thickness not counted
            ValidityRange("t/b", 0.0, 0.0, source=_COHN_SOURCE),
        ),
        "ipc-2141": (
            ValidityRange("w/(b-t)", None, 0.35, high_inclusive=False, source=_IPC_SOURCE),
            ValidityRange("t/b", None, 0.25, high_inclusive=False, source=_IPC_SOURCE),
        ),
    },
}
"""Validity ranges of each method, by line kind and method name."""

_METHODS = {"microstrip": MICROSTRIP_METHODS, "stripline": STRIPLINE_METHODS}

LOG_FORMS: dict[tuple[str, str], tuple[float, str]] = {
    ("microstrip", "ipc-2141"): (5.98, "ln(5.98·h/(0.8·w + t))"),
    ("stripline", "ipc-2141"): (1.9, "ln(1.9·b/(0.8·w + t))"),
}
"""The closed forms Z0 = A·ln(a·h/(0.8·w + t)), by (kind, method): the factor a and the
logarithm as text. Their Z0 falls to 0 as 0.8·w + t rises to a·h and has no value from
there on (the model returns NaN)."""


def widest_width(kind: str, method: str, h: float, t: float) -> float | None:
    """The trace width at which the method's formula gives Z0 = 0 (no impedance at or above
    it), (a·h - t)/0.8 for the forms in :data:`LOG_FORMS`; None for a method without such
    a bound. Not above 0 when the thickness alone reaches a·h. [m]"""
    form = LOG_FORMS.get((kind, method))
    if form is None:
        return None
    return (form[0] * h - t) / 0.8


# --------------------------------------------------------------------------- input checks


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
    if (kind, method) == ("stripline", "cohn"):
        return  # stripline() says what a thickness it cannot count does to Z0
    for rng in VALIDITY[kind][method]:
        text = rng.outside_text(kind, method, q[rng.quantity])
        if text is not None:
            # stacklevel 3: the caller of microstrip()/stripline()
            warnings.warn(ValidityWarning(text), stacklevel=3)


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
