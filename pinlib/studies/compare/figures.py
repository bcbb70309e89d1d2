"""Two results side by side: their checks and figures keyed by place, the relative change
of each figure against a threshold, and figures and changes as text."""

from __future__ import annotations

import math
from typing import Any

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.core.quantity import format_value, parse_ratio
from pinlib.core.valueclass import value_class
from pinlib.model.result import MARGIN_SHOWN, tiny_percent_text

#: A figure that moves by more than this fraction of its old value is listed (5 %).
DEFAULT_THRESHOLD = 0.05


def parse_change_threshold(text) -> float:
    """A change threshold as users write it: ``"5 %"`` or ``"5%"`` -> 0.05.

    Raises
    ------
    UnitError
        For a bare number or another unit.
    InputError
        For a negative threshold.
    """
    value = parse_ratio(text, field="threshold")
    if value < 0:
        raise InputError(M.NEGATIVE_THRESHOLD, field="threshold", value=text,
                         expected="zero or more, e.g. '5 %'")
    return value


def _groups(result: dict):
    """Every group of a result JSON with its path: bus, segment (``bus/seg``), line
    (``bus/signal``), coupling (its id, ``victim<-aggressor``)."""
    for bus in result.get("buses", ()):
        bid = bus.get("id", "?")
        yield bid, bus
        for seg in bus.get("segments", ()) or ():
            yield f"{bid}/{seg.get('id', '?')}", seg
        for line in bus.get("lines", ()) or ():
            yield f"{bid}/{line.get('signal', '?')}", line
    for pair in result.get("couplings", ()) or ():
        yield pair.get("id", "?"), pair


def _checks(result: dict) -> dict[tuple, dict]:
    """Checks keyed by (path, id, subject, occurrence): a check with the same id and
    subject twice in one group (a lower and an upper bound) is told apart by order."""
    out: dict[tuple, dict] = {}
    for path, grp in _groups(result):
        seen: dict[tuple, int] = {}
        for c in grp.get("checks", ()):
            base = (path, c.get("id"), c.get("subject"))
            n = seen.get(base, 0)
            seen[base] = n + 1
            out[base + (n,)] = c
    return out


def _figures(result: dict) -> dict[tuple, dict]:
    out: dict[tuple, dict] = {}
    for path, grp in _groups(result):
        for name, fig in (grp.get("figures") or {}).items():
            out[(path, name)] = fig if isinstance(fig, dict) else {"value": fig, "unit": ""}
    return out


def _relative(old, new) -> float | None:
    """Relative change ``(new - old) / |old|``; inf when a zero becomes non-zero; None
    when either is not a number."""
    if not _is_number(old) or not _is_number(new):
        return None
    if old == new:
        return 0.0
    if old == 0:
        return math.copysign(math.inf, new)
    return (new - old) / abs(old)


def _is_number(x) -> bool:
    return isinstance(x, (int, float)) and not isinstance(x, bool) and math.isfinite(x)


#: A figure value as text (the one rule of :func:`pinlib.core.quantity.format_value`).
format_figure = format_value


def figure_value_text(name: str, value, unit: str) -> str:
    """A named figure's value as text (:data:`format_figure`); the timing path that sets
    the highest clock as the checks name it ("CIPO setup U2", not its id)."""
    if name == "max_clock_limited_by" and isinstance(value, str):
        from pinlib.core.labels import path_label

        return path_label(value)
    return format_figure(value, unit)


def format_change(rel: float | None, old=None, new=None, unit: str | None = None) -> str:
    """A relative change as text, never in exponent form: ``(+12.5 %)``, ``(-540 %)``
    (three significant digits), under 1 % one (``(-0.8 %)``, ``(+0.01 %)``) up to
    ±999 %; a positive figure that grew further by its factor, ``(×187)``; other changes
    beyond that as :func:`pinlib.model.result.percent_text` shows margins,
    ``(> +999 %)`` / ``(< -999 %)``; one nearer to zero than 0.001 % as it shows them too
    (:func:`pinlib.model.result.tiny_percent_text`), ``(< 0.001 %)`` / ``(> -0.001 %)``;
    ``(from zero)``; empty for none.

    ``old`` is the figure's old value (the factor is ``new / old`` only where it is
    positive).  A figure that changed sign (a timing slack that became negative: a
    percent of the old slack says nothing) shows its change in its own ``unit`` where
    ``new`` and ``unit`` are given: ``(-32.2 ns)``."""
    if rel is None:
        return ""
    if unit is not None and _is_number(old) and _is_number(new) and old * new < 0:
        from pinlib.core.quantity import format_si

        diff = new - old
        return f"({'+' if diff > 0 else '-'}{format_si(abs(diff), unit)})"
    if math.isinf(rel):
        return "(from zero)"
    pct = rel * 100
    tiny = tiny_percent_text(pct)
    if tiny:
        return f"({tiny})"
    if abs(pct) < MARGIN_SHOWN + 0.5:
        return f"({_percent_change(pct)} %)"
    if pct > 0 and _is_number(old) and old > 0:
        factor = 1.0 + rel
        return f"(×{factor:.3g})" if factor < 100 else f"(×{factor:,.0f})"
    return f"(> +{MARGIN_SHOWN} %)" if pct > 0 else f"(< -{MARGIN_SHOWN} %)"


def _percent_change(pct: float) -> str:
    """A change in percent, signed, for :func:`format_change`: three significant digits
    from 1 % on (``+12.5``, ``-9.42``, ``+5.04``, ``-540``: a change just past a
    threshold of 5 % must not read ``+5``), one below (``+0.8``, ``+0.01``)."""
    return f"{pct:+.3g}" if abs(pct) >= 1.0 else f"{pct:+.1g}"


@value_class
class FigureRow:
    """One figure before and after, for side-by-side tables."""

    path: str
    name: str
    unit: str
    old: Any
    new: Any
    change: float | None      # relative, (new - old) / |old|
    moved: bool               # beyond the threshold, or a value of another kind that differs
    kind: str                 # "same", "moved", "changed", "added", "removed"

    def to_json(self) -> dict:
        return {"path": self.path, "name": self.name, "unit": self.unit,
                "old": self.old, "new": self.new,
                "change": None if self.change is None or math.isinf(self.change)
                else self.change, "kind": self.kind}


#: The lines of an open-drain segment, as the suffixes of their own figures.
_LINE_SUFFIXES = ("_sda", "_scl")


def _line_form_new_in_pinlib(key: tuple, old_f: dict) -> bool:
    """Whether figure ``key`` is a line's own form (``rise_time_10_90_sda``) of a figure
    the old result gives only for the segment (the worse of its lines): a figure a later
    pinlib adds, not a change of the board, so it is not listed as new."""
    path, name = key
    for suffix in _LINE_SUFFIXES:
        if name.endswith(suffix):
            base = name[:-len(suffix)]
            return (path, base) in old_f and not any((path, base + s) in old_f
                                                     for s in _LINE_SUFFIXES)
    return False


#: Figures that are a part pinlib chose ("auto" pull-ups and series resistors).
CHOSEN_PARTS = frozenset({"pullup_resistor", "series_resistor"})


def figure_rows(old_result: dict, new_result: dict, *, threshold: float = DEFAULT_THRESHOLD
                ) -> list[FigureRow]:
    """Every figure of two results side by side, in the new result's order (figures only
    in the old one last), each marked with whether it moved beyond ``threshold``.

    A number moves when ``|new - old| > threshold·|old|`` (any change from zero counts);
    a yes/no or text figure, or one that became undefined, when it differs.
    """
    if threshold < 0:
        raise InputError(M.NEGATIVE_THRESHOLD, field="threshold", value=threshold,
                         expected="zero or more")
    old_f, new_f = _figures(old_result), _figures(new_result)
    keys = list(new_f) + [k for k in old_f if k not in new_f]
    rows = []
    for key in keys:
        o, n = old_f.get(key), new_f.get(key)
        unit = (n or o or {}).get("unit", "")
        ov = o.get("value") if o else None
        nv = n.get("value") if n else None
        if o is None and _line_form_new_in_pinlib(key, old_f):
            continue
        if o is None:
            rows.append(FigureRow(*key, unit, None, nv, None, True, "added"))
            continue
        if n is None:
            rows.append(FigureRow(*key, unit, ov, None, None, True, "removed"))
            continue
        rel = _relative(ov, nv)
        if rel is not None:
            # a part pinlib chose (an "auto" resistor) is a line of the bill of materials:
            # listed whenever it changes, however little
            moved = abs(rel) > threshold or (key[-1] in CHOSEN_PARTS and ov != nv)
            rows.append(FigureRow(*key, unit, ov, nv, rel, moved, "moved" if moved else "same"))
        else:
            differ = ov != nv
            rows.append(FigureRow(*key, unit, ov, nv, None, differ,
                                  "changed" if differ else "same"))
    return rows
