"""The parts section of a design review: each resolved value as text, its basis, typical
value and the part file that set it, and the facts of each part."""

from __future__ import annotations

from pinlib.core.quantity import format_si
from pinlib.present.review.draw import _f


def _part_value(entry: dict) -> str:
    if "scale" in entry:
        shown = entry.get("text") or ""
        if entry.get("vdd") is not None and entry.get("value") is not None \
                and entry.get("scale"):
            shown += f" = {_f(entry['value'], 'V')} at {_f(entry['vdd'], 'V')}"
        return shown
    v = entry.get("value")
    unit = entry.get("unit", "")
    if isinstance(v, bool):
        return "yes" if v else "no"
    if isinstance(v, (int, float)) and unit:
        return format_si(v, unit)
    if v is None:
        return entry.get("text", "—")
    return str(v)


def _origin(entry: dict, part_id: str) -> str:
    origin = entry.get("origin")
    if not origin:
        return "—"
    return "this part" if origin == part_id else f"inherited from {origin}"


def _basis(entry: dict) -> str:
    b = entry.get("basis") or "—"
    if entry.get("provenance") == "part":
        b += " (file provenance)"
    return b


def _typ(entry: dict) -> str:
    t = entry.get("typ")
    if t is None:
        return ""
    if isinstance(t, (int, float)) and entry.get("unit"):
        return format_si(t, entry["unit"])
    return str(t)


def _part_heading(ref: str, p: dict) -> str:
    return f"{ref}: {p.get('part')} — {p.get('title', '')}"


def _part_facts(p: dict) -> list[tuple[str, str]]:
    facts = [("category", p.get("category", "")), ("role", p.get("role", "")),
             ("buses", ", ".join(p.get("buses", [])))]
    if p.get("file"):
        facts.append(("library file", p["file"]))
    chain = p.get("chain") or []
    if len(chain) > 1:
        facts.append(("inherits", " → ".join(chain)))
    if p.get("overrides"):
        facts.append(("overrides the built-in", p["overrides"]))
    prov = p.get("basis", "")
    if p.get("source"):
        prov += f": {p['source']}"
    if p.get("recorded"):
        prov += f" (recorded {p['recorded']})"
    facts.append(("provenance", prov))
    rails = p.get("rails") or {}
    if rails:
        facts.append(("rail", ", ".join((f"side {k} " if k else "") + _f(v, "V")
                                        for k, v in rails.items() if v is not None)))
    return facts
