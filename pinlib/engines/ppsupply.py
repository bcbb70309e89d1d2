"""The ``supply-range`` checks of a push-pull bus (SPI, GPIO): each device's rail against
its part's supply range.

Kept apart from :mod:`pinlib.engines.pushpull`, which re-exports both names, so that
:mod:`pinlib.engines.ppcorners` (the corners of a bus's tolerances as arrays) can make
them at each board's rails without importing the engine's entry point.
"""

from __future__ import annotations

from pinlib.engines.opendrain.inputs import supply_source
from pinlib.engines.opendrain.rules import supply_range_check
from pinlib.engines.pushline import device_supply
from pinlib.model.design import Bus
from pinlib.model.result import Check

__all__ = ["supply_rows", "supply_checks"]


def supply_rows(bus: Bus) -> list[tuple]:
    """Each device of the bus whose part states a supply range:
    ``(device, rail, min, max, source_of, sourced)``, the rail the device runs from (its
    own, else the bus's), its part's range on that side, ``source_of(low)`` the check's
    source at the low or the high end (:func:`pinlib.engines.opendrain.inputs.
    supply_source`, as the open-drain engine words it), and ``sourced`` the range's
    ``(min, max)`` as the part states them (their basis: a range no datasheet stands
    behind warns where it would fail). [V]"""
    out, seen = [], set()
    for d in bus.devices:
        if d.ref in seen:
            continue
        seen.add(d.ref)
        sup = d.part.supply_for(d.part_side)
        if sup is None:
            continue
        out.append((d, device_supply(d, bus), float(sup.min.value), float(sup.max.value),
                    lambda low, d=d, sup=sup: supply_source(d, sup, low), (sup.min, sup.max)))
    return out


def supply_checks(bus: Bus) -> list[Check]:
    """Every device's rail against its part's supply range (the rule of the open-drain
    engine: :func:`pinlib.engines.opendrain.rules.supply_range_check`, a datasheet range is a
    hard limit, no warning band; a class's typical range warns where it would fail).  The
    rail's tolerance enters through the corners :func:`pinlib.engines.pushpull.evaluate_bus`
    takes. [V]"""
    out = []
    for d, v, lo, hi, src, sourced in supply_rows(bus):
        chk = supply_range_check(d.ref, v, v, lo, hi, src, ends=False, sourced=sourced)
        out.append(chk)
    return out
