"""A typical value on the wrong side of the limit it rides beside: a warning.

``c_in = { value = "12 pF", typ = "20 pF" }`` states a maximum of 12 pF and a typical
20 pF: one of the two may be mistyped (or the two swapped), or the datasheet gives a typ
measured under other conditions than the tabulated limit.  pinlib never computes with a
typ, so the part still loads; :func:`pinlib.library.plausible.part_warnings` names the
typ's file, line and field (``pinlib parts check`` lists it, ``pinlib parts record`` and
the recording panel warn when they write one).  The sides are common practice, no source.
"""

from __future__ import annotations

from pinlib.core import messages as M
from pinlib.library.values import Sourced

__all__ = ["GIVEN_BY_CONTROLLER", "TYP_SIDE", "typ_beyond"]


#: The direction each stored limit guards (common practice, no source; the glossary of
#: pinlib.library.schema and docs/formats/part.md): ``"max"`` where the value is a
#: maximum, so its typical value lies at or below it; ``"min"`` where it is a minimum, so
#: its typical value lies at or above it; ``"need"`` where it is what the part must be
#: given (a setup, hold or pulse width stored as the datasheet's minimum): the part's
#: typical need lies at or below the guaranteed one.  Thresholds (v_il, v_ih) are left
#: out: a receiver's typical switching point lies beyond its guaranteed VIL and VIH by
#: nature; i_ol/i_oh are the currents a level is stated at, not limits; r_out, pullup,
#: abs_max, hysteresis, test_load and the supply are no limit with a side.
TYP_SIDE: dict[str, str] = {
    "c_in": "max", "leakage": "max", "v_ol": "max", "v_oh": "min",
    "t_valid": "max", "t_pd": "max", "t_vd_dat": "max", "t_vd_ack": "max",
    "t_cs_valid": "max", "f_max": "min", "t_of_max": "max", "t_of_min": "min",
    "t_transition_max": "max", "low_offset": "max", "v_gs_th": "max",
    "t_setup": "need", "t_hold": "need", "t_su_dat": "need", "t_hd_dat": "need",
    "t_cs_setup": "need", "t_cs_hold": "need", "t_low": "need", "t_high": "need",
}

#: The fields that a part of category ``controller`` states as what it gives (its own
#: SCL low and high times, the data setup and hold it drives, the CS lead and lag:
#: docs/formats/part.md, ``[timing]``), a minimum whose typical value lies at or above it;
#: on any other part they are what it needs (``"need"`` of :data:`TYP_SIDE`).
GIVEN_BY_CONTROLLER = frozenset({"t_su_dat", "t_hd_dat", "t_cs_setup", "t_cs_hold",
                                 "t_low", "t_high"})


def typ_beyond(value: Sourced, field: str, supplies: tuple[float, ...] = (),
               category: str | None = None) -> str | None:
    """The rule a value's ``typ`` breaks when it lies on the wrong side of the value it
    rides beside (a typical 5 pF beside a maximum of 4 pF: one of them mistyped), else
    None.

    Parameters
    ----------
    value : Sourced
        The stored value with its typical value.
    field : str
        The field's own name (``c_in``, ``t_vd_dat``...), a key of :data:`TYP_SIDE`.
    supplies : tuple of float
        The part's supply range ends, where relative levels are compared. [V]
    category : str, optional
        The part's category: on a ``controller`` the fields of
        :data:`GIVEN_BY_CONTROLLER` are minimums it gives.

    Returns
    -------
    str or None
        The rule broken, as text.
    """
    side = TYP_SIDE.get(field)
    if side is None or value.typ is None or value.derived:
        return None
    if side == "need" and category == "controller" and field in GIVEN_BY_CONTROLLER:
        side = "min"
    for vdd in supplies or (None,):
        try:
            lim = float(value.at(vdd))
            typ = value.typ.resolve(vdd) if hasattr(value.typ, "resolve") and vdd is not None \
                else getattr(value.typ, "offset", value.typ)
            typ = float(typ)
        except (TypeError, ValueError):
            return None
        bad = typ < lim * (1 - 1e-9) if side == "min" else typ > lim * (1 + 1e-9)
        if bad and side == "need":
            return M.TYP_NEED_RULE.format(field=field)
        if bad:
            return M.TYP_SIDE_RULE.format(field=field, side="maximum" if side == "max"
                                          else "minimum",
                                          rel="at most" if side == "max" else "at least")
    return None

