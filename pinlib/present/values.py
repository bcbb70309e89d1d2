"""A result's values as text: figures and check values with SI prefixes, and the count
of checks by status (shared by the summary and the detail of `pinlib check`)."""

from __future__ import annotations

import math

from pinlib.core.quantity import format_si
from pinlib.model.result import DesignResult

__all__ = ["format_value", "counts"]


def format_value(value, unit: str) -> str:
    """A figure or check value as text: SI prefix, yes/no, or a dash for none."""
    if value is None:
        return "—"
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, str):
        return value
    try:
        x = float(value)
    except (TypeError, ValueError):
        return str(value)
    if not math.isfinite(x):
        return "∞" if x > 0 else ("−∞" if x < 0 else "—")
    if not unit:
        return f"{x:.4g}"
    return format_si(x, unit)


def counts(result: DesignResult) -> dict[str, int]:
    """Checks by status over the whole design: {"pass": n, "warn": n, "fail": n}."""
    out = {s: 0 for s in ("pass", "warn", "fail")}
    for b in result.results():
        for _, _, c in b.all_checks():
            out[c.status] = out.get(c.status, 0) + 1
    return out
