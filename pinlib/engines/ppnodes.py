"""What a push-pull table (:mod:`pinlib.engines.pptable`) keeps of each engine evaluation
at a node of its grid, and how it fills each check from those numbers.

:func:`evaluate` runs the engine on a (varied) bus; :func:`record` labels what one
evaluation gives each line (its checks' margins, values and limits, and the flights it
gives the SPI timing budget); :func:`plan` decides, from every node's checks, how a
board's check is filled (a constant, a line's interpolated numbers, a timing term of
the budget, or a device's supply range at the board's rail), raising :class:`Refused`
where no table can stand in for the engine; :func:`flight_slots` finds each
peripheral's flights among a line's numbers.
"""

from __future__ import annotations

import numpy as np

from pinlib.engines import ppvariant as ppv
from pinlib.engines import pushpull as pp
from pinlib.engines.ppvariant import number_or_nan as _num
from pinlib.engines.spi.budget import EDGE_FIELDS
from pinlib.model.design import Bus, Design
from pinlib.model.result import STATUS_CODES, status_codes, warns_only

__all__ = ["FIELDS", "Refused", "evaluate", "flight_slots", "plan", "record", "supply_plan"]


class Refused(Exception):
    """Raised while a table is built; :func:`pinlib.engines.pptable.tabulate` returns it
    as a :class:`~pinlib.engines.pptable.Refusal`."""


def evaluate(bus: Bus, design: Design):
    """The engine's result of a (varied) bus, and its SPI analysis (None for GPIO)."""
    if bus.protocol == "spi":
        from pinlib.engines.spi import spi_analysis

        sa = spi_analysis(bus, design)
        return pp.evaluate_board(bus, design, analysis=sa), sa
    return pp.evaluate_board(bus, design), None


#: The peripherals' flights of one value over both edges (the others, EDGE_FIELDS, per
#: edge direction).
FIELDS = ("copi", "cipo")


def record(bus: Bus, res, sa) -> tuple[dict, list]:
    """Per line, the labelled numbers of one evaluation; and each check's record."""
    per_line: dict[str, list] = {}
    checks = []
    for nm, (sig, c) in zip(ppv.check_names(bus, res), ppv.flat_checks(res), strict=True):
        checks.append((nm["name"], sig, c))
        if sig is not None:
            per_line.setdefault(sig, []).extend(
                [("check", nm["name"], "margin", _num(c.margin)),
                 ("check", nm["name"], "value", _num(c.value)),
                 ("check", nm["name"], "limit", _num(c.limit)),
                 ("check", nm["name"], "status", STATUS_CODES[c.status])])
    if sa is not None:
        for i, p in enumerate(sa.peripherals):
            for sig in EDGE_FIELDS:
                edges = getattr(p, sig)
                for e in ("rise", "fall") if edges is not None else ():
                    per_line.setdefault(sig, []).extend(_flight_labels(i, f"{sig}-{e}",
                                                                       edges[e]))
            for field in FIELDS:
                f = getattr(p, field)
                if f is not None:
                    per_line.setdefault(field, []).extend(_flight_labels(i, field, f))
    return per_line, checks


def plan(names, node_checks, labels, values, sa, bus, design) -> list:
    """How each check is filled: a constant, a line's interpolated numbers, or a term.

    A line check is ``("line", signal, slots, rule, code)``: ``slots`` its margin, value
    and limit among the line's numbers (and its status, for the rule ``"nodes"``);
    ``rule`` how its status is found: 2 from its margin, 1 from its margin at most
    warn (a rule of thumb), ``"nodes"`` its nodes' (a yes/no check whose status moves),
    falsy the constant ``code``."""
    warn = design.warn_margin
    plans = []
    term_k = 0
    n_terms = len(sa.terms) if sa is not None else 0
    for j, nm in enumerate(names):
        at_nodes = [checks[j][2] for checks in node_checks]
        sig = node_checks[0][j][1]
        codes = {STATUS_CODES[c.status] for c in at_nodes}
        mgs = np.array([_num(c.margin) for c in at_nodes])
        c0 = at_nodes[0]
        if sig is None:
            # evaluate_board lists the budget's terms first, in order, then the f_max and
            # supply-range checks
            if term_k < n_terms and sa.terms[term_k].id == c0.id:
                plans.append(("term", term_k, 1.0 / float(bus.clock)))
                term_k += 1
                continue
            if c0.id == "supply-range":
                plans.append(supply_plan(bus, c0.subject))
                continue
            if len(codes) != 1 or len({_num(c.value) for c in at_nodes}) > 1:
                raise Refused(f"{nm['name']}: a bus check that moves and is not a "
                               "timing term")
            plans.append(("const", _num(c0.margin), _num(c0.value), _num(c0.limit),
                          codes.pop()))
            continue
        base = labels[sig].index(("check", nm["name"], "margin"))
        slots = []
        for off in range(3):
            col = values[sig][..., base + off]
            finite = np.isfinite(col)
            if finite.all():
                slots.append(base + off)
            elif len(np.unique(col)) == 1 or np.isnan(col).all():
                slots.append(base + off)   # a constant (inf or NaN) interpolates to itself
            else:
                raise Refused(f"{nm['name']}: not finite at every node")
        has_margin = c0.margin is not None
        # a rule of thumb, or a limit no datasheet stands behind, warns where its margin
        # would fail (model.result.warns_only)
        cap = 1 if warns_only(c0) else 2
        by_margin = has_margin and all(STATUS_CODES[c.status] == min(int(status_codes(
            np.array([_num(c.margin)]), warn)[0]), cap) for c in at_nodes)
        if not by_margin and len(codes) != 1:
            if has_margin:
                raise Refused(f"{nm['name']}: its status moves, but not with its margin")
            # a yes/no check (ringing) whose status moves: each board takes its nodes'
            # status, the cells where it changes being rough (pptable._rough)
            plans.append(("line", sig, (*slots, base + 3), "nodes", min(codes)))
            continue
        if has_margin and not np.isfinite(mgs).all() and len(np.unique(mgs)) != 1:
            raise Refused(f"{nm['name']}: a margin not finite at every node")
        plans.append(("line", sig, tuple(slots), by_margin and cap, min(codes)))
    if term_k != n_terms:
        raise Refused("the budget's terms are not all checks")
    return plans


def supply_plan(bus: Bus, ref: str) -> tuple:
    """A device's supply-range check: its rail's key and value, its part's range, and
    whether each end of that range is soft (at most a warning beyond it:
    :func:`pinlib.model.result.soft_limit`)."""
    for d, v, lo, hi, _, sourced in pp.supply_rows(bus):
        if d.ref == ref:
            vtol = bus.supply_tolerance or 0.0
            soft = tuple(bool(x is not None and x.soft) for x in sourced)
            return ("supply", ppv.rail_key(v, vtol) if vtol > 0 else None, v, lo, hi, soft)
    raise AssertionError(ref)  # the engine made the check from these rows


def _flight_labels(i: int, key: str, f) -> list:
    """A flight's labelled numbers, in the order :func:`flight_slots` finds them from its
    first: early, late, and the same at the driver's fast corner (the slow corner's where
    it states none: :meth:`~pinlib.engines.pushline.Flight.at_fast`)."""
    fast = f.at_fast()
    return [("flight", i, key, "early", f.early), ("flight", i, key, "late", f.late),
            ("flight", i, key, "fast-early", fast.early),
            ("flight", i, key, "fast-late", fast.late)]


def flight_slots(sa, labels) -> list:
    if sa is None:
        return []
    out = []
    for i, _p in enumerate(sa.peripherals):
        slots = {}
        for sig in EDGE_FIELDS:
            if sig in labels and ("flight", i, f"{sig}-rise", "early") in labels[sig]:
                slots[sig] = {e: labels[sig].index(("flight", i, f"{sig}-{e}", "early"))
                              for e in ("rise", "fall")}
        for field in FIELDS:
            if field in labels and ("flight", i, field, "early") in labels[field]:
                slots[field] = (field, labels[field].index(("flight", i, field, "early")))
        out.append(slots)
    return out
