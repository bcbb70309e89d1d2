"""A result's values as text: figures and check values with SI prefixes, and the count
of checks by status (shared by the summary and the detail of `pinlib check`)."""

from __future__ import annotations

from pinlib.core.quantity import format_value  # noqa: F401 - its home is core.quantity
from pinlib.model.result import Check, DesignResult

__all__ = ["format_value", "counts", "with_fix"]


def with_fix(text: str, c: Check) -> str:
    """``text``, what is shown of a check, with "; fix: ..." added: only for a check that
    fails or warns (:attr:`~pinlib.model.result.Check.advice`), and only when ``text``
    does not hold the fix already (a message may carry it)."""
    fix = c.advice
    return f"{text}; fix: {fix}" if fix and fix not in text else text


def counts(result: DesignResult) -> dict[str, int]:
    """Checks by status over the whole design: {"pass": n, "warn": n, "fail": n}."""
    out = {s: 0 for s in ("pass", "warn", "fail")}
    for b in result.results():
        for _, _, c in b.all_checks():
            out[c.status] = out.get(c.status, 0) + 1
    return out
