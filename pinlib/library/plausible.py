"""Values a part file may hold but that no real part has: warnings, not errors.

The schema refuses what cannot be a value at all (a negative capacitance, a lost unit
prefix).  This module lists what is possible but implausible for the field and the kind
of pin, by the ranges of :data:`RANGES`, a typical value on the wrong side of the limit
it rides beside (:func:`typ_beyond`: one of the two mistyped, or a typ measured under
other conditions; pinlib never computes with a typ), an output's ``r_out`` that alone
gives a slower edge than the pin's edge points state (:func:`edge_contradictions`), and
the cable classes whose capacitance, delay and impedance disagree.  ``pinlib parts
check`` lists them as problems, ``pinlib parts record`` warns when it writes one, and
``pinlib check`` warns about the parts a design places.

The ranges are common practice, with no source: wide enough for every ordinary pin
(a 5 V part's levels, a connector's capacitance), narrow enough to catch a value typed
in the wrong unit or with the wrong sign.
"""

from __future__ import annotations

import math

from pinlib.core import messages as M
from pinlib.core.errors import LibraryError
from pinlib.core.quantity import format_si
from pinlib.library.schema import LINE_AGREEMENT, Part
from pinlib.library.values import Sourced

__all__ = ["RANGES", "LINE_AGREEMENT", "TYP_SIDE", "GIVEN_BY_CONTROLLER", "EDGE_SLACK",
           "implausible", "part_warnings", "typ_beyond", "edge_contradictions"]

# common practice, no source: (field, pin drive or "*") -> (low, high, unit); levels in
# volts at the part's supply (a relative level is tried at the supply's two ends), or as
# a fraction of that supply when the unit is "VDD".
RANGES: dict[tuple[str, str], tuple[float, float, str]] = {
    ("c_in", "*"): (0.1e-12, 50e-12, "F"),
    ("leakage", "*"): (0.0, 100e-6, "A"),
    ("v_il", "*"): (0.05, 0.8, "VDD"),
    ("v_ih", "*"): (0.2, 1.0, "VDD"),
    ("hysteresis", "*"): (0.0, 0.5, "VDD"),
    ("v_ol", "*"): (0.0, 1.0, "V"),
    ("i_ol", "*"): (50e-6, 100e-3, "A"),
    ("v_oh", "*"): (0.5, 1.0, "VDD"),
    ("i_oh", "*"): (10e-6, 100e-3, "A"),
    ("r_out", "*"): (1.0, 1e3, "Ω"),
    ("abs_max", "*"): (1.0, 45.0, "V"),
    ("pullup", "*"): (100.0, 1e6, "Ω"),
    ("pullup_internal", "*"): (1e3, 1e6, "Ω"),
    ("t_of_min", "*"): (0.0, 1e-6, "s"),
    ("t_of_max", "*"): (1e-9, 1e-6, "s"),
    ("t_transition_max", "*"): (1e-9, 1e-3, "s"),
    ("f_max", "timing"): (1e3, 10e9, "Hz"),
    ("t_valid", "timing"): (0.0, 1e-6, "s"),
    ("t_setup", "timing"): (0.0, 1e-6, "s"),
    ("t_hold", "timing"): (0.0, 1e-6, "s"),
    ("t_pd", "timing"): (0.0, 10e-6, "s"),
    ("capacitance", "line"): (10e-12, 500e-12, "F/m"),
    ("delay", "line"): (3.3e-9, 20e-9, "s/m"),
    ("impedance", "line"): (20.0, 300.0, "Ω"),
}

# LINE_AGREEMENT is pinlib.library.schema's, where a refusal weighs it too.


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


def _range_text(lo: float, hi: float, unit: str) -> str:
    if unit == "VDD":
        return f"{lo:g} VDD to {hi:g} VDD"
    # per metre, as the ranges are stated (docs/formats/part.md) and cables catalogued
    return f"{format_si(lo, unit, per='m')} to {format_si(hi, unit, per='m')}"


def implausible(value: Sourced, field: str, drive: str = "*",
                supplies: tuple[float, ...] = ()) -> str | None:
    """The plausible range of ``field`` as text when ``value`` lies outside it, else None.

    Parameters
    ----------
    value : Sourced
        The stored value.
    field : str
        The field's own name (``c_in``, ``v_il``, ``f_max``...).
    drive : str
        The pin's drive, ``"timing"`` or ``"line"``.
    supplies : tuple of float
        The part's supply range ends, where relative levels are resolved. [V]
    """
    row = RANGES.get((field, drive)) or RANGES.get((field, "*"))
    if row is None or value.derived:
        return None
    lo, hi, unit = row
    for vdd in supplies or (None,):
        try:
            x = float(value.at(vdd))
        except ValueError:  # a relative level and no supply to resolve it at
            return None
        if unit == "VDD":
            if vdd is None or not vdd > 0:
                return None
            x = x / vdd
        if not lo <= x <= hi:
            relative = getattr(value.value, "relative", False)
            if vdd is None or (unit != "VDD" and not relative):
                return _range_text(lo, hi, unit)
            # the value depends on the supply: say at which end it leaves the range
            got = f"{x:.3g} VDD" if unit == "VDD" else format_si(x, unit, per="m")
            return f"{_range_text(lo, hi, unit)}; at VDD {format_si(vdd, 'V')} it is {got}"
    return None


#: How much slower than a stated edge the RC of ``r_out`` alone may be before the two
#: contradict each other (the 5 % within which the driver fit holds its points).
EDGE_SLACK = 0.05

#: ln((1 - lo) / (1 - hi)): an RC edge's time between the levels, in time constants
#: (published: the single-pole step response v = 1 - exp(-t/RC)).
_RC_SPAN = {"10-90": math.log(9.0), "20-80": math.log(4.0)}


def edge_contradictions(r_out: Sourced | None, edges, vdd: float | None = None
                        ) -> list[tuple[str, str, float, float, float]]:
    """The edge points an output's ``r_out`` cannot meet: its RC into the point's load
    alone (the fastest edge that resistance gives, with an instant ramp before it) is
    more than :data:`EDGE_SLACK` slower than the time the point states.  Each as
    ``(direction, levels, load, stated time, RC time)``, in farads and seconds."""
    if r_out is None or not edges:
        return []
    out = []
    for e in edges:
        point_vdd = float(e.vdd.value) if e.vdd is not None else vdd
        try:
            r = float(r_out.at(point_vdd))
        except ValueError:
            continue
        load = float(e.load.value)
        for direction in ("rise", "fall"):
            t = getattr(e, direction)
            if t is None:
                continue
            rc = _RC_SPAN[e.levels] * r * load
            if rc > float(t.value) * (1.0 + EDGE_SLACK):
                out.append((direction, e.levels, load, float(t.value), rc))
    return out


def _where(lib, pid: str, value: Sourced, path: tuple) -> dict:
    origin = value.origin or pid
    pf = lib.files.get(origin) if lib is not None else None
    return {"file": str(pf.path) if pf else value.origin_file,
            "line": pf.line(path) if pf else None}


def part_warnings(part: Part, lib=None, *, own_only: bool = False) -> list[LibraryError]:
    """Every implausible value of a part and a disagreeing cable class, as problems
    naming the file (the one that set the value), line and field.

    ``own_only`` leaves out values the part inherits (a whole library lists those once,
    with the class that sets them).
    """
    out: list[LibraryError] = []

    def pins(prefix: tuple, table: dict, supply) -> None:
        ends = () if supply is None else (float(supply.min.value), float(supply.max.value))
        for name, pin in table.items():
            for field in type(pin).fields():
                value = getattr(pin, field)
                if isinstance(value, Sourced):
                    _add(prefix + (name, field), value, field, pin.drive, ends)
            if pin.fast is not None and pin.fast.r_out is not None:
                _add(prefix + (name, "fast", "r_out"), pin.fast.r_out, "r_out", pin.drive)
                _corners(prefix + (name, "fast", "r_out"), pin)
            typ = None if supply is None or supply.typ is None else float(supply.typ.value)
            _edges(prefix + (name, "r_out"), pin.r_out, pin.edges, typ)
            if pin.fast is not None:
                _edges(prefix + (name, "fast", "r_out"), pin.fast.r_out,
                       pin.fast.edges, typ)

    def _edges(path, r_out, edges, vdd) -> None:
        if r_out is None or (own_only and r_out.origin not in (None, part.id)):
            return
        for direction, levels, load, stated, rc in edge_contradictions(r_out, edges, vdd):
            out.append(LibraryError(
                M.R_OUT_SLOWER_THAN_EDGES.format(
                    model=format_si(rc, "s"), levels=levels, load=format_si(load, "F"),
                    time=format_si(stated, "s"), direction=direction),
                field=".".join(map(str, path)), value=r_out.text,
                expected=M.R_OUT_EDGES_RULE, **_where(lib, part.id, r_out, path)))
            return  # one problem a resistance: the first point it cannot meet

    def _corners(path, pin) -> None:
        fast, slow = pin.fast.r_out, pin.r_out
        if slow is None or (own_only and fast.origin not in (None, part.id)):
            return
        if float(fast.value) > float(slow.value):
            out.append(LibraryError(M.FAST_CORNER_WEAKER.format(slow=slow.text),
                                    field=".".join(map(str, path)), value=fast.text,
                                    expected=M.FAST_CORNER_RULE,
                                    **_where(lib, part.id, fast, path)))

    def _add(path, value, field, drive, ends=()):
        if own_only and value.origin not in (None, part.id):
            return
        rule = typ_beyond(value, field, ends, part.category)
        if rule:
            # the typical value is what is named and quoted, the limit beside it told
            typ = value.typ
            out.append(LibraryError(M.TYP_BEYOND_LIMIT.format(limit=value.text),
                                    field=".".join(map(str, path + ("typ",))),
                                    value=getattr(typ, "text", "")
                                    or format_si(float(typ), value.unit),
                                    expected=rule, **_where(lib, part.id, value, path)))
        rng = implausible(value, field, drive, ends)
        if rng:
            out.append(LibraryError(M.IMPLAUSIBLE_VALUE, field=".".join(map(str, path)),
                                    value=value.text, expected=M.PLAUSIBLE_RANGE.format(
                                        range=rng), **_where(lib, part.id, value, path)))

    pins(("pins",), part.pins, part.supply)
    for side_name, side in part.sides.items():
        pins(("sides", side_name, "pins"), side.pins, part.supply_for(side_name))
        if isinstance(side.low_offset, Sourced):
            _add(("sides", side_name, "low_offset"), side.low_offset, "low_offset", "*")
    if part.bridge is not None and isinstance(part.bridge.v_gs_th, Sourced):
        _add(("bridge", "v_gs_th"), part.bridge.v_gs_th, "v_gs_th", "*")
    for field in type(part.timing).fields():
        value = getattr(part.timing, field)
        if isinstance(value, Sourced):
            _add(("timing", field), value, field, "timing")
    if part.line is not None:
        for field in ("capacitance", "delay", "impedance"):
            value = getattr(part.line, field)
            if isinstance(value, Sourced):
                _add(("line", field), value, field, "line")
        if not own_only or part.line.capacitance.origin in (None, part.id):
            out += _line_agreement(part, lib)
    return out


def _line_agreement(part: Part, lib) -> list[LibraryError]:
    c, d, z = part.line.capacitance, part.line.delay, part.line.impedance
    if c is None or d is None or z is None or c.derived or d.derived or z.derived:
        return []
    if not (c.value > 0 and d.value > 0 and z.value > 0):
        return []
    implied = float(z.value) * float(c.value)  # tpd = Z0 C' (lossless line)
    off = implied / float(d.value) - 1.0
    if abs(off) <= LINE_AGREEMENT:
        return []
    return [LibraryError(M.LINE_VALUES_DISAGREE.format(
        implied=f"{implied * 1e9:.3g} ns/m", delay=d.text, off=f"{off:+.0%}"),
        field="line", expected=M.LINE_AGREEMENT_RULE.format(pct=f"{LINE_AGREEMENT:.0%}"),
        **_where(lib, part.id, c, ("line", "capacitance")))]
