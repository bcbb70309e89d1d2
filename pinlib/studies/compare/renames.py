"""Buses and devices renamed between two snapshots, found by their content.

A bus present in the old snapshot and absent now, and a new bus with the same content
(protocol, segments, lines, the ids of its checks, the parts on it), is the same bus
renamed; so is a device reference absent now and a new one with the same part on the
same buses.  A bus renamed while a device on it changed its part has not the same
content (its parts, perhaps its checks); of the buses left, one absent now and one new
with the same shape (protocol, segments, lines), the same device references and most
of them on the same part are the same bus renamed.  A match must be unique both ways,
or it is not made.  The old snapshot is
then rewritten in the new names (:func:`renamed_snapshot`), so that the renamed items
are compared with each other as any other, and the change list says the rename once
instead of every check of the old name disappearing and every check of the new one
appearing.

A bus or coupling still present on one side only is counted, not listed check by check
(:func:`one_sided_groups`).
"""

from __future__ import annotations

import copy
import re

from pinlib.studies.compare.figures import _checks, _groups

__all__ = ["find_renames", "renamed_snapshot", "one_sided_groups", "top_id"]


def top_id(path: str) -> str:
    """The bus or coupling a group's path lies in: ``sensors/main-3v3`` -> ``sensors``."""
    return path.split("/", 1)[0]


def _seg_name(seg_id: str, bus_id: str) -> str:
    """A segment id with its bus's id (the name of an unnamed segment) taken out."""
    if seg_id == bus_id:
        return "\0"
    if seg_id.startswith(bus_id + "-") and seg_id[len(bus_id) + 1:].isdigit():
        return "\0" + seg_id[len(bus_id):]
    return seg_id


def _bus_content(snap: dict, bus: dict) -> tuple:
    bid = bus.get("id")
    checks = sorted(str(k[1]) for k in _checks({"buses": [bus]}))
    parts = sorted(str(p.get("part")) for p in (snap.get("parts") or {}).values()
                   if isinstance(p, dict) and bid in (p.get("buses") or ()))
    return (bus.get("protocol"),
            tuple(_seg_name(str(s.get("id")), bid) for s in bus.get("segments") or ()),
            tuple(str(ln.get("signal")) for ln in bus.get("lines") or ()),
            tuple(checks), tuple(parts))


def _unique_pairs(old: dict, new: dict, same=None) -> dict:
    """Old key -> new key where their content is the same (equal, or ``same(old, new)``)
    and no other key on either side is the same as either."""
    same = same or (lambda a, b: a == b)
    pairs = {}
    for ko, co in old.items():
        same_new = [kn for kn, cn in new.items() if same(co, cn)]
        if len(same_new) != 1:
            continue
        cn = new[same_new[0]]
        if [k for k, c in old.items() if same(c, cn)] == [ko]:
            pairs[ko] = same_new[0]
    return pairs


def _bus_devices(snap: dict, bus: dict) -> tuple:
    """A bus's shape (protocol, segments, lines) and its devices, reference -> part."""
    bid = bus.get("id")
    devices = {r: p.get("part") for r, p in (snap.get("parts") or {}).items()
               if isinstance(p, dict) and bid in (p.get("buses") or ())}
    return _bus_content(snap, bus)[:3], devices


def _mostly_same(old: tuple, new: tuple) -> bool:
    """The same shape and the same device references, more than half of them on the
    same part as before (a bus renamed while a device on it changed its part)."""
    (shape_o, dev_o), (shape_n, dev_n) = old, new
    if shape_o != shape_n or not dev_o or set(dev_o) != set(dev_n):
        return False
    return 2 * sum(dev_o[r] == dev_n[r] for r in dev_o) > len(dev_o)


def find_renames(old: dict, new: dict) -> tuple[dict, dict]:
    """(bus renames, reference renames), each old name -> new name."""
    old_b = {b.get("id"): b for b in old.get("buses", ()) or ()}
    new_b = {b.get("id"): b for b in new.get("buses", ()) or ()}
    buses = _unique_pairs({k: _bus_content(old, b) for k, b in old_b.items() if k not in new_b},
                          {k: _bus_content(new, b) for k, b in new_b.items() if k not in old_b})
    taken = set(buses.values())
    buses.update(_unique_pairs(
        {k: _bus_devices(old, b) for k, b in old_b.items() if k not in new_b and k not in buses},
        {k: _bus_devices(new, b) for k, b in new_b.items() if k not in old_b and k not in taken},
        _mostly_same))
    old_p, new_p = old.get("parts") or {}, new.get("parts") or {}

    def device(p: dict, rename: dict) -> tuple:
        return (p.get("part"), tuple(sorted(rename.get(b, b) for b in p.get("buses") or ())))

    refs = _unique_pairs(
        {r: device(p, buses) for r, p in old_p.items() if r not in new_p and isinstance(p, dict)},
        {r: device(p, {}) for r, p in new_p.items() if r not in old_p and isinstance(p, dict)})
    return buses, refs


def _signal_renamed(name: str, buses: dict) -> str:
    """``sensors.scl`` -> ``sensors-bus.scl`` (a coupling's victim or aggressor)."""
    bus, dot, signal = str(name).rpartition(".")  # as the design's coupling reads it
    return f"{buses.get(bus, bus)}{dot}{signal}" if dot else signal


def renamed_snapshot(old: dict, buses: dict, refs: dict) -> dict:
    """A copy of ``old`` written in the new names: bus ids (and the segment ids made of
    them), couplings' ends and ids, the buses each part is on, references (as keys of
    ``parts`` and as words of check subjects and messages)."""
    out = copy.deepcopy(old)
    words = re.compile(r"\b(" + "|".join(map(re.escape, refs)) + r")\b") if refs else None

    def reword(text):
        return words.sub(lambda m: refs[m.group(1)], text) if words and text else text

    for bus in out.get("buses", ()) or ():
        was = bus.get("id")
        now = buses.get(was, was)
        bus["id"] = now
        for seg in bus.get("segments", ()) or ():
            name = _seg_name(str(seg.get("id")), was)
            if name.startswith("\0"):
                seg["id"] = now + name[1:]
    for pair in out.get("couplings", ()) or ():
        for end in ("victim", "aggressor"):
            if isinstance(pair.get(end), str):
                pair[end] = _signal_renamed(pair[end], buses)
        victim, arrow, aggressor = str(pair.get("id", "")).partition("<-")
        if arrow:
            pair["id"] = (f"{_signal_renamed(victim, buses)}<-"
                          f"{_signal_renamed(aggressor, buses)}")
    for _, grp in _groups(out):
        for c in grp.get("checks", ()) or ():
            for key in ("subject", "message"):
                if isinstance(c.get(key), str):
                    c[key] = reword(c[key])
    parts = out.get("parts")
    if isinstance(parts, dict):
        out["parts"] = {refs.get(r, r): p for r, p in parts.items()}
        for p in out["parts"].values():
            if isinstance(p, dict) and isinstance(p.get("buses"), list):
                p["buses"] = [buses.get(b, b) for b in p["buses"]]
    return out


def one_sided_groups(old: dict, new: dict) -> tuple[dict, dict]:
    """(absent now, new): each bus or coupling present on one side only, id -> (kind,
    number of its checks)."""

    def tops(snap):
        out = {b.get("id"): ["bus", 0] for b in snap.get("buses", ()) or ()}
        out.update({c.get("id"): ["coupling", 0] for c in snap.get("couplings", ()) or ()})
        for key in _checks(snap):
            top = top_id(key[0])
            if top in out:
                out[top][1] += 1
        return {k: tuple(v) for k, v in out.items()}

    o, n = tops(old), tops(new)
    return ({k: v for k, v in o.items() if k not in n},
            {k: v for k, v in n.items() if k not in o})
