"""Why a part picked for an open-drain bus would fail there, before it is added.

Workbench 01 offers every part the filters let through, including those the bus as set
would fail (an engineer may want to see the failure); each such offer says why.  The
reasons are the engine's own checks at their own limits, read through the engine's own
rules, not a second rule:

* ``device-speed``: the bus clock (the bus's own, else the mode's maximum, as the engine
  takes it) against the part's ``timing.f_max`` (:func:`pinlib.model.result.max_margin`,
  the margin of the engine's ``value <= limit`` rows);
* ``supply-range``: the rail at its two tolerance corners (the engine's
  ``WorstCase.rails``) against the part's supply range
  (:func:`pinlib.engines.opendrain.rules.supply_margin`).

Where the part's value is soft (a class's typical value, an estimate:
:func:`pinlib.model.result.soft_basis`) the engine's check only warns
(:func:`pinlib.model.result.soft_limit`), and so does the offer ("warns here").
"""

from __future__ import annotations

from pinlib.core import messages as M
from pinlib.core.quantity import format_si
from pinlib.core.valueclass import value_class
from pinlib.engines.limits import limits_for
from pinlib.engines.opendrain.rules import supply_margin
from pinlib.model.result import max_margin, soft_basis


@value_class(frozen=True)
class Unfit:
    """One check a part would fail on the bus as set.

    Attributes
    ----------
    check : str
        The engine's check id (``device-speed``, ``supply-range``).
    short : str
        A few words for the part's option in the list ("up to 100 kHz").
    reason : str
        The sentence for the line under the list.
    soft : str or None
        The basis of the part's value where it is soft (``"generic"``, ``"estimate"``):
        the engine's check then warns rather than fails; None for a firm one.
    """

    check: str
    short: str
    reason: str
    soft: str | None = None


def unfit_on_bus(part, *, protocol: str, mode: str, supply: float, tolerance: float,
                 clock: float | None = None) -> list[Unfit]:
    """The checks ``part``, placed as a peripheral, would fail on the bus (empty when
    none of these would).

    Parameters
    ----------
    part : Part
        A library part without sides (not a bridge).
    protocol, mode : str
        The bus's protocol and mode.
    supply : float
        The pull-up rail. [V]
    tolerance : float
        The rail's tolerance, a fraction. [1]
    clock : float, optional
        The bus's own clock; the mode's maximum when None (as the engine). [Hz]
    """
    out = []
    timing = getattr(part, "timing", None)
    f_max = getattr(timing, "f_max", None)
    if f_max is not None:
        f = float(f_max.value)
        f_clock = clock if clock is not None else limits_for(protocol, mode).f_max
        if float(max_margin(f_clock, f)) < 0:
            out.append(Unfit("device-speed", f"up to {format_si(f, 'Hz')}",
                             f"it is rated up to {format_si(f, 'Hz')}; the bus runs at "
                             f"{format_si(f_clock, 'Hz')}", soft_basis(f_max)))
    sup = part.supply_for(None)
    if sup is not None:
        s_min, s_max = float(sup.min.value), float(sup.max.value)
        lo, hi = supply * (1.0 - tolerance), supply * (1.0 + tolerance)
        margin, low_side = supply_margin(lo, hi, s_min, s_max)
        if float(margin) < 0:
            rng = f"{format_si(s_min, 'V', digits=4)}–{format_si(s_max, 'V', digits=4)}"
            end = (f"down to {format_si(lo, 'V')}" if bool(low_side)
                   else f"up to {format_si(hi, 'V')}")
            out.append(Unfit("supply-range", f"supply {rng}",
                             f"its supply range is {rng}; the rail runs {end}",
                             soft_basis(sup.min if bool(low_side) else sup.max)))
    return out


def unfit_label(label: str, unfit: list[Unfit]) -> str:
    """A part's option with what it would fail ("… — fails here: up to 100 kHz"), then
    what it would only warn on ("; warns: supply 4.5 V–5.5 V"), or "… — warns here: ..."
    where every such limit is soft."""
    if not unfit:
        return label
    firm, soft = _split(unfit)
    if not firm:
        return f"{label} — warns here: " + "; ".join(u.short for u in unfit)
    text = f"{label} — fails here: " + "; ".join(u.short for u in firm)
    return text + ("; warns: " + "; ".join(u.short for u in soft) if soft else "")


def _split(unfit: list[Unfit]) -> tuple[list[Unfit], list[Unfit]]:
    """``unfit`` in two: those against a firm limit (the engine's check fails) and those
    against a soft one (it only warns)."""
    return [u for u in unfit if u.soft is None], [u for u in unfit if u.soft is not None]


def unfit_sentence(pid: str, unfit: list[Unfit]) -> str:
    """The line under the list for the part picked (plain text; empty when it fits)."""
    if not unfit:
        return ""
    firm, soft = _split(unfit)
    if not firm:
        return (M.UNFIT_SOFT.format(part=pid, checks=", ".join(u.check for u in unfit))
                + "; ".join(u.reason for u in unfit) + ".")
    # which checks would fail and which would only warn (a class's typical value)
    text = (M.UNFIT_FIRM.format(part=pid, checks=", ".join(u.check for u in firm))
            + "; ".join(u.reason for u in firm))
    if soft:
        text += (M.UNFIT_ALSO_WARN.format(checks=", ".join(u.check for u in soft))
                 + "; ".join(u.reason for u in soft))
    return text + "."
