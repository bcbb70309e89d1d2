"""A name for each check of a batch (open-drain or push-pull), with the engine's check
that gives its source and subject; the buses a study does not sample."""

from __future__ import annotations

from pinlib.core.protocols import OPEN_DRAIN_PROTOCOLS, PUSH_PULL_PROTOCOLS
from pinlib.engines import ppbatch as ppb
from pinlib.engines.opendrain import batch as ob
from pinlib.model.design import Bus, Design

_PER_DEVICE = ("power-off", "fall-time-min", "bridge-gate-drive", "bridge-gate-side",
               "bridge-offset")


def _check_names(bus: Bus, bb: ob.BusBatch, nominal) -> list[dict]:
    """A name, the engine's check (for source and subject) and where, for each batch
    check, in order."""
    groups = {None: nominal} if not nominal.segments else {s.id: s for s in nominal.segments}
    out, used = [], {}
    for sb in bb.segments:
        g = groups.get(sb.id if nominal.segments else None)
        engine = g.checks if g is not None else []
        same = [c.id for c in engine] == [c.id for c in sb.checks]
        where = bus.id if len(bus.segments) == 1 else f"{bus.id}/{sb.id}"
        for i, c in enumerate(sb.checks):
            ec = engine[i] if same else None
            name = f"{where} {c.signal} {c.id}" if c.signal else f"{where} {c.id}"
            if c.id in _PER_DEVICE and ec is not None and ec.subject:
                name += f" {ec.subject}"
            used[name] = used.get(name, 0) + 1
            if used[name] > 1:
                name += f" #{used[name]}"
            out.append({"name": name, "engine": ec, "segment": sb.id, "where": where})
    return out


def _not_sampled(design: Design, what: str = "not sampled") -> list[str]:
    notes = [f"bus {b.id} ({b.protocol}): {what}"
             for b in design.buses if b.protocol not in OPEN_DRAIN_PROTOCOLS + PUSH_PULL_PROTOCOLS]
    return notes


def _names(bus: Bus, bb, nominal) -> list[dict]:
    """As :func:`_check_names`, for an open-drain or a push-pull batch."""
    if isinstance(bb, ppb.PpBatch):
        return [{"name": nm["name"], "engine": nm["engine"], "segment": "", "where": bus.id}
                for nm in bb.names]
    return _check_names(bus, bb, nominal)
