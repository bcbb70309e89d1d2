"""Values pinlib derives from a part's stated ones, marked as derived.

A push-pull pin without ``r_out`` still has an output resistance: its output levels are
guaranteed at a stated current, so the resistance is at most the voltage lost at that
current divided by it (Ohm's law):

- rising edge (source): ``r_rise = (VDD − VOH) / IOH``
- falling edge (sink):  ``r_fall = VOL / IOL``

An open-drain pin's sink is likewise at most ``VOL / IOL`` (its on-resistance at the
guaranteed point).  Levels written relative to the supply are resolved at the part's
minimum supply, where a level like ``2.4 V`` leaves the least headroom and so gives
the tightest bound.  The engines derive the same values at the design's own rail; this
module is what ``pinlib parts show`` lists, so an engineer sees what pinlib will assume
before placing the part.
"""

from __future__ import annotations

from pinlib.core.quantity import format_si
from pinlib.library.schema import Part, Pin
from pinlib.library.values import Sourced

__all__ = ["derived_values"]


def _term(text: str) -> str:
    """A level's text as an operand of a formula: in parentheses where it is itself a sum
    or difference (``VDD - 0.4 V``), so ``VDD - (VDD - 0.4 V)`` reads as it computes."""
    t = text.strip()
    body = t[1:] if t[:1] in "+-−" else t
    return f"({t})" if any(op in body for op in ("+", "-", "−")) else t


def _pin_derived(prefix: str, pin: Pin, vdd: float | None) -> dict[str, Sourced]:
    out: dict[str, Sourced] = {}
    if vdd is None:
        return out
    at = f"at VDD {format_si(vdd, 'V')} (the part's minimum supply)"
    if pin.drive == "push-pull" and pin.r_out is None:
        if pin.v_oh is not None and pin.i_oh is not None and pin.i_oh.value > 0:
            r = (vdd - float(pin.v_oh.at(vdd))) / pin.i_oh.value
            if r > 0:
                out[f"{prefix}.r_out_rise"] = Sourced(
                    r, "Ω", format_si(r, "Ω"), "derived",
                    f"(VDD - v_oh) / i_oh = (VDD - {_term(pin.v_oh.text)}) / "
                    f"{_term(pin.i_oh.text)} {at}")
    if pin.drive in ("push-pull", "open-drain") and pin.r_out is None:
        if pin.v_ol is not None and pin.i_ol is not None and pin.i_ol.value > 0:
            r = float(pin.v_ol.at(vdd)) / pin.i_ol.value
            name = "r_out_fall" if pin.drive == "push-pull" else "r_sink"
            if r > 0:  # a level at or below ground there gives no resistance to show
                out[f"{prefix}.{name}"] = Sourced(
                    r, "Ω", format_si(r, "Ω"), "derived",
                    f"v_ol / i_ol = {_term(pin.v_ol.text)} / {_term(pin.i_ol.text)} {at}")
    return out


def derived_values(part: Part) -> dict[str, Sourced]:
    """Every value pinlib derives for ``part``, by dotted field path.

    Parameters
    ----------
    part : Part
        A resolved part class.

    Returns
    -------
    dict of str to Sourced
        ``{"pins.sclk.r_out_rise": Sourced(...), ...}``, each with ``basis = "derived"``
        and a source that shows the arithmetic.  Empty when nothing can be derived.
    """
    out: dict[str, Sourced] = {}
    vdd = part.supply.min.value if part.supply is not None else None
    for name, pin in part.pins.items():
        out.update(_pin_derived(f"pins.{name}", pin, vdd))
    for side_name, side in part.sides.items():
        supply = part.supply_for(side_name)
        side_vdd = supply.min.value if supply is not None else None
        for name, pin in side.pins.items():
            out.update(_pin_derived(f"sides.{side_name}.pins.{name}", pin, side_vdd))
    return out
