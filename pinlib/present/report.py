"""Presentation of results: plain text for the terminal (HTML and Markdown come later).

Nothing here computes a figure: it formats what the engines returned, with SI prefixes.
"""

from __future__ import annotations

import math
import textwrap

from pinlib.core.quantity import format_si
from pinlib.model.result import CAUTION, BusResult, Check, DesignResult, Group

__all__ = ["format_text", "format_value"]

_MARK = {"pass": "pass", "warn": "WARN", "fail": "FAIL"}
_WIDTH = 100


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


def _margin(c: Check) -> str:
    if c.margin is None:
        return ""
    m = float(c.margin)
    if not math.isfinite(m):
        return "—"  # no number: the message says why (a zero limit, a value that is none)
    return f"{m * 100:+.0f} %"


def _table(rows: list[list[str]], indent: str) -> list[str]:
    widths = [max(len(r[i]) for r in rows) for i in range(len(rows[0]))]
    out = []
    for r in rows:
        out.append(indent + "  ".join(cell.ljust(w)
                                      for cell, w in zip(r, widths, strict=True)).rstrip())
    return out


def _group(g: Group, indent: str) -> list[str]:
    out = []
    if g.figures:
        out.append(f"{indent}figures")
        rows = [[name, format_value(f.value, f.unit)] for name, f in g.figures.items()]
        out += _table(rows, indent + "  ")
    if g.checks:
        out.append(f"{indent}checks")
        rows = [["status", "check", "subject", "value", "limit", "margin", "source"]]
        for c in g.checks:
            limit = format_value(c.limit, c.unit) if not isinstance(c.limit, bool) else ""
            value = format_value(c.value, c.unit) if not isinstance(c.value, bool) else ""
            rows.append([_MARK[c.status], c.id, c.subject or "", value, limit, _margin(c),
                         c.source])
        out += _table(rows, indent + "  ")
        problems = [c for c in g.checks if c.status != "pass"]
        for c in problems:
            about = f" ({c.subject})" if c.subject else ""
            lines = textwrap.wrap(f"{_MARK[c.status]} {c.id}{about}: {c.message}",
                                  _WIDTH - len(indent) - 2, subsequent_indent="    ")
            out += [indent + "  " + ln for ln in lines]
    if g.notes:
        out.append(f"{indent}notes")
        for n in g.notes:
            out += [indent + "  " + ln for ln in
                    textwrap.wrap(f"- {n}", _WIDTH - len(indent) - 2, subsequent_indent="    ")]
    return out


def _bus(b: BusResult) -> list[str]:
    out = [f"bus {b.id} ({b.protocol}): {b.status.upper()}"]
    out += _group(b, "  ")
    for s in b.segments:
        out.append(f"  segment {s.id}: {s.status.upper()}")
        out += _group(s, "    ")
    for ln in b.lines:
        out.append(f"  line {ln.signal}: {ln.status.upper()}")
        out += _group(ln, "    ")
    return out


def format_text(result: DesignResult) -> str:
    """The whole result as text: the caution first, then a table per bus and segment.

    Parameters
    ----------
    result : DesignResult
        What :func:`pinlib.engines.dispatch.check_design` returned.

    Returns
    -------
    str
        Lines ready to print (figures with SI prefixes; each check with its status,
        value, limit, margin and source; problems spelt out below the table).
    """
    out = textwrap.wrap(f"Caution: {CAUTION}", _WIDTH)
    out.append("")
    out.append(f"design: {result.design}" + (f" ({result.path})" if result.path else ""))
    counts = {s: 0 for s in ("pass", "warn", "fail")}
    for b in result.buses:
        for _, _, c in b.all_checks():
            counts[c.status] += 1
    out.append(f"status: {result.status.upper()} — {counts['pass']} pass, {counts['warn']} warn, "
               f"{counts['fail']} fail (warn below {result.warn_margin:.0%} margin)")
    for n in result.notes:
        out.append(f"note: {n}")
    for b in result.buses:
        out.append("")
        out += _bus(b)
    return "\n".join(out) + "\n"
