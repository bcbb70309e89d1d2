"""The sections of a line as electrical stretches (:class:`Stretch`), and the line's model:
electrically long or short, lumped or distributed."""

from __future__ import annotations

import math
import warnings
from collections.abc import Sequence

from pinlib.core import messages as M
from pinlib.core.errors import DesignError
from pinlib.core.quantity import DELAY_MIN
from pinlib.core.valueclass import value_class
from pinlib.engines.pushline.rules import (
    LONG_LINE_FRACTION,
    LUMPED_INDUCTANCE_LIMIT,
)
from pinlib.model.design import Section
from pinlib.physics import lines as tl


@value_class(frozen=True)
class Stretch:
    """Electrical data of one section of a line.

    Attributes
    ----------
    length : float
        Length. [m]
    z0 : float
        Characteristic impedance; NaN when the section gives no delay. [Ω]
    td : float
        One-way delay; 0 when the section gives no delay (a lumped capacitance). [s]
    c : float
        Total capacitance of the section. [F]
    label : str
        What the section is: ``geometry NAME``, the cable class's id, or
        ``stretches given per length``. [1]
    """

    length: float
    z0: float
    td: float
    c: float
    label: str


def _geometry_model(g):
    """The trace model of geometry ``g``; a validity warning is given again with the
    geometry's name in front, as the open-drain engine words it."""
    kw = {"method": g.method} if g.method else {}
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", tl.ValidityWarning)
        if g.kind == "microstrip":
            model = tl.microstrip(g.width, g.height, g.er, g.thickness, **kw)
        else:
            b = g.spacing if g.spacing is not None else 2.0 * g.height + g.thickness
            model = tl.stripline(g.width, b, g.er, g.thickness, **kw)
    for w in caught:
        if issubclass(w.category, tl.ValidityWarning):
            warnings.warn(tl.ValidityWarning(M.GEOMETRY_WARNING.format(
                name=g.name, text=w.message)), stacklevel=3)
        else:
            warnings.warn_explicit(w.message, w.category, w.filename, w.lineno)
    return model


def stretches_of(sections: Sequence[Section]) -> list[Stretch]:
    """The electrical data of each section of a line.

    Parameters
    ----------
    sections : sequence of Section
        The line's sections, from the driver to the far end. [1]

    Returns
    -------
    list of Stretch
        One per section with ``z0`` [Ω], ``td`` [s] and ``c`` [F].

    Notes
    -----
    Per-length values follow the lossless-line relations ``Z0 = tpd / C`` and
    ``td = tpd * length`` (:func:`pinlib.physics.lines.from_per_length`).  A cable class
    with an impedance but no delay takes ``tpd = Z0 * C``; one with a capacitance only
    is a lumped capacitance.  A section's ``capacitance_factor`` ``k`` (a drawn board of
    a bus's ``capacitance_tolerance``) scales its capacitance per length with its
    inductance per length held (a dielectric or a width off nominal): ``C`` by ``k``,
    ``Z0 = sqrt(L/C)`` by ``1/sqrt(k)`` and the delay ``sqrt(L C)`` by ``sqrt(k)``; a
    lumped section's capacitance alone.  Validity warnings of the trace models
    propagate.
    """
    out = []
    for s in sections:
        st = _stretch(s)
        k = float(s.capacitance_factor)
        if k != 1.0:  # C' scaled, L' held: Z0 = sqrt(L'/C'), tpd = sqrt(L'C')
            _refuse_faster_than_light(st, k)
            r = math.sqrt(k)
            st = Stretch(st.length, st.z0 / r, st.td * r, st.c * k, st.label)
        out.append(st)
    return out


def _refuse_faster_than_light(st: Stretch, k: float) -> None:
    """A board capacitance ``k`` times the stated one (``capacitance_tolerance`` drawn
    low, the inductance held) may not carry a stretch's edge faster than light, nor take
    its capacitance to nothing: the tolerance is refused at its field, with the largest
    this line allows (its delay per length against light's, with the rounding the format
    allows a stated delay)."""
    if st.td > 0.0 and st.length > 0.0:
        per = st.td / st.length
        fastest = DELAY_MIN / per  # sqrt(k) may go down to this
        if k > 0.0 and math.sqrt(k) * per >= DELAY_MIN:
            return
        most = max(0.0, 1.0 - min(fastest, 1.0) ** 2)
    elif k > 0.0:
        return
    else:
        most = None
    low = 1.0 - k
    raise DesignError(
        M.BOARD_C_FASTER_THAN_LIGHT.format(low=f"{low * 100:.3g} %", label=st.label),
        field="capacitance_tolerance", value=f"{low * 100:.3g} %",
        expected=(M.BOARD_C_TOLERANCE_AT_MOST.format(most=f"{math.floor(most * 1000) / 10:g} %")
                  if most is not None else M.BOARD_C_TOLERANCE_BELOW_ALL))


def _stretch(s: Section) -> Stretch:
    """One section's electrical data as stated (no capacitance factor)."""
    if s.geometry is not None:
        m = _geometry_model(s.geometry)
        return Stretch(s.length, float(m.z0), float(m.tpd) * s.length,
                       float(m.c) * s.length, f"geometry {s.geometry.name}")
    label = s.part_id or "stretches given per length"
    c = float(s.capacitance)
    tpd = s.delay
    if tpd is None and s.impedance is not None:
        tpd = float(s.impedance) * c
    if tpd is None:
        return Stretch(s.length, math.nan, 0.0, c * s.length, label)
    m = tl.from_per_length(c, tpd)
    z0 = float(s.impedance) if (s.impedance is not None and s.delay is not None
                                and s.part_id) else float(m.z0)
    return Stretch(s.length, z0, float(tpd) * s.length, c * s.length, label)


def line_model(stretches: Sequence[Stretch], edge_time: float, *,
               td: float | None = None) -> tuple[bool, float]:
    """Whether a line is electrically long, by :data:`LONG_LINE_RULE`.

    Parameters
    ----------
    stretches : sequence of Stretch
        The line's sections. [1]
    edge_time : float
        The driver's 10-90 % edge into the pins alone. [s]
    td : float, optional
        The line's one-way delay when it is not the sum of its stretches' (a route: the
        longest between two of its points). [s]

    Returns
    -------
    long : bool
        ``delay > edge_time / 6``. [1]
    ratio : float
        One-way delay over edge time. [1]
    """
    td = sum(s.td for s in stretches) if td is None else td
    ratio = td / edge_time if edge_time > 0 else (math.inf if td > 0 else 0.0)
    return bool(ratio > LONG_LINE_FRACTION), float(ratio)


def needs_distributed(stretches: Sequence[Stretch], r_source: float, c_load: float,
                      long: bool, limit: float = LUMPED_INDUCTANCE_LIMIT) -> bool:
    """Whether a line must be solved as a chain of lines rather than one capacitance.

    Parameters
    ----------
    stretches : sequence of Stretch
        The line's sections. [1]
    r_source : float
        Smallest source resistance of the driver (output resistance plus series
        resistor). [Ω]
    c_load : float
        Capacitance at the far end (pins and extra capacitance). [F]
    long : bool
        Electrically long by :data:`LONG_LINE_RULE`. [1]
    limit : float, optional
        The largest ``L / (R^2 C)`` taken lumped: :data:`LUMPED_INDUCTANCE_LIMIT`, or
        :data:`PULLUP_RISE_INDUCTANCE_LIMIT` for an open-drain rise and
        :data:`SPREAD_INDUCTANCE_LIMIT` for an edge whose pins' capacitance is spread
        along the line (an open-drain fall, a push-pull route of several points). [1]

    Returns
    -------
    bool
        True when the line is long, or when ``L / (R^2 C) > limit`` (0.01 by default) with
        ``L = sum(Z0 td)`` and ``C`` the whole capacitance (:data:`LUMPED_RULE`);
        False for a line without any delay. [1]

    Notes
    -----
    A series R-L-C driven through ``R`` has, for ``L << R^2 C``, its dominant pole at
    ``s = -(1 + L/(R^2 C) + 2 (L/(R^2 C))^2 + ...)/(RC)`` (expanding the roots of
    ``LC s^2 + RC s + 1``), so an RC model is off by about ``L/(R^2 C)`` in its edge
    time; the limit 0.01 keeps that near 1 %.
    """
    ell = sum(s.z0 * s.td for s in stretches if s.td > 0.0)
    if ell <= 0.0:
        return False
    c_total = sum(s.c for s in stretches) + c_load
    if long or r_source <= 0.0 or c_total <= 0.0:
        return True
    return bool(ell / (r_source * r_source * c_total) > limit)
