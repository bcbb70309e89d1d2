"""Result snapshots, change lists and pin compatibility for part substitution.

A *snapshot* is a design's result (``format = "pinlib.result/1"``) saved beside the
design as ``<design>.result.json``, with what explains it: for every device, the part
it used, the library file that part came from, and every resolved pin and timing value
with its unit, basis, source and the part file that set it (``origin``); and the
library folders and overrides in force.  :func:`compare` sets two snapshots side by
side and returns a :class:`ChangeList`: the checks whose status changed, the figures
that moved by more than a relative threshold, and the part values behind the change
(``U4 SDA c_in 8 pF → 80 pF, source: …``).  The command line (``pinlib check``,
``pinlib swap``), the workbooks and the reports all show that same list.

:func:`can_serve` decides whether a part can stand in a device's position on a bus:
it must offer every pin function the old part served there, each with a drive the
position allows.  It is the rule ``pinlib swap`` refuses by and ``pinlib candidates``
filters by.

Nothing here computes a figure: the engines do (:mod:`pinlib.engines.dispatch`); this module
compares what they returned.
"""

from __future__ import annotations

import datetime as _dt
import json
import math
import os
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any

from pydantic import BaseModel

from pinlib import __version__
from pinlib.core import messages as M
from pinlib.core import protocols
from pinlib.core.errors import InputError
from pinlib.core.quantity import Threshold, format_si, format_threshold, parse_ratio
from pinlib.core.tomlfile import atomic_write, read_regular
from pinlib.library.loader import BUILTIN_DIR
from pinlib.library.schema import Part
from pinlib.library.values import Sourced
from pinlib.model.result import FORMAT as RESULT_FORMAT
from pinlib.model.result import json_number
from pinlib.studies.snapshotcheck import check_snapshot
from pinlib.studies.snapshotfile import snapshot_path

__all__ = [
    "CHANGES_FORMAT",
    "DEFAULT_THRESHOLD",
    "PROTOCOL_FUNCTIONS",
    "snapshot",
    "snapshot_path",
    "save_snapshot",
    "load_snapshot",
    "compare",
    "compare_with_snapshot",
    "figure_rows",
    "format_figure",
    "format_change",
    "parse_change_threshold",
    "part_values",
    "value_label",
    "can_serve",
    "positions",
    "swap_refusals",
    "swapped_text",
    "FigureRow",
    "StatusChange",
    "FigureChange",
    "ValueChange",
    "PartChange",
    "ChangeList",
]

#: Format tag of a change list's JSON form.
CHANGES_FORMAT = "pinlib.changes/1"

#: A figure that moves by more than this fraction of its old value is listed (5 %).
DEFAULT_THRESHOLD = 0.05

#: Pin functions each protocol puts on a bus.
PROTOCOL_FUNCTIONS = {name: p.functions for name, p in protocols.PROTOCOLS.items()}

_ARROW = "→"


# ============================================================================ snapshots


def _now() -> str:
    return _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds")


def _shown_path(path, design_dir: Path | None) -> str:
    """A library file as a snapshot records it: ``builtin:memory/eeprom-i2c.toml`` for a
    built-in part, relative to the design's folder when below it, else absolute."""
    p = Path(path).resolve()
    try:
        inside = p.relative_to(Path(BUILTIN_DIR).resolve()).as_posix()
    except ValueError:
        pass
    else:
        return "builtin" if inside == "." else "builtin:" + inside
    if design_dir is not None:
        try:
            return os.path.relpath(p, Path(design_dir).resolve()).replace(os.sep, "/")
        except ValueError:  # pragma: no cover - another drive on Windows
            pass
    return str(p)


def _sourced_entry(v: Sourced, vdd: float | None, library) -> dict:
    """One resolved value: text, SI value, unit, basis, source and origin.

    A value with no basis or source of its own takes those of the part file that set
    it (its provenance), and says so with ``"provenance": "part"``.
    """
    out: dict[str, Any] = {"text": v.text or str(v.value), "unit": v.unit}
    if isinstance(v.value, Threshold):
        out["scale"] = float(v.value.scale)
        out["offset"] = float(v.value.offset)
        if v.value.relative:
            if vdd is not None:
                out["value"] = float(v.value.resolve(vdd))
                out["vdd"] = float(vdd)
        else:
            out["value"] = float(v.value.offset)
    else:
        out["value"] = json_number(v.value)
    if v.typ is not None:
        out["typ"] = str(v.typ) if isinstance(v.typ, Threshold) else json_number(v.typ)
    basis, source, from_part = v.basis, v.source, bool(v.file_filled)
    if (basis is None or source is None) and v.origin and library is not None \
            and v.origin in library.parts:
        prov = library.parts[v.origin].provenance
        if basis is None:
            basis, from_part = prov.basis, True
        if source is None and prov.source:
            source, from_part = prov.source, True
    if basis:
        out["basis"] = basis
    if source:
        out["source"] = source
    if from_part:
        out["provenance"] = "part"
    if v.origin:
        out["origin"] = v.origin
    return out




def part_values(part: Part, rails: dict | None = None, library=None) -> dict[str, dict]:
    """Every resolved value of a part, flat, keyed by its dotted path.

    Parameters
    ----------
    part : Part
        A resolved part (``extends`` merged).
    rails : dict, optional
        The device's supply by side (``None`` for a part without sides, ``"a"``/``"b"``
        for a bridge), at which relative thresholds are also given as volts. [V]
    library : Library, optional
        To fill in the basis and source of values that state none (from the part file
        that set them).

    Returns
    -------
    dict
        ``{"pins.sda.c_in": {"text": "8 pF", "value": 8e-12, "unit": "F", "basis": ...,
        "source": ..., "origin": "eeprom-i2c"}, "pins.sda.drive": {"value": "open-drain"},
        ...}``.  Descriptions and the part's own header fields are left out.
    """
    rails = rails or {}
    out: dict[str, dict] = {}

    def walk(obj, key: str, vdd):
        if obj is None:
            return
        if isinstance(obj, Sourced):
            out[key] = _sourced_entry(obj, vdd, library)
        elif isinstance(obj, BaseModel):
            for name in type(obj).model_fields:
                if name == "description":
                    continue
                walk(getattr(obj, name), f"{key}.{name}" if key else name, vdd)
        elif isinstance(obj, dict):
            for name, sub in obj.items():
                sub_vdd = rails.get(name, vdd) if key == "sides" else vdd
                walk(sub, f"{key}.{name}", sub_vdd)
        elif isinstance(obj, tuple):
            for i, sub in enumerate(obj):
                walk(sub, f"{key}[{i}]", vdd)
        elif isinstance(obj, (bool, str, int, float)):
            out[key] = {"value": obj}

    for name in ("supply", "pins", "timing", "sides", "bridge", "line"):
        walk(getattr(part, name), name, rails.get(None))
    return out


def _device_rails(design) -> dict[str, dict]:
    """The rail each device (and each side of a bridge) runs on, first place found. [V]"""
    rails: dict[str, dict] = {}
    for bus in design.buses:
        places = [(seg.supply, seg.devices) for seg in bus.segments] or [(bus.supply,
                                                                           bus.devices)]
        for supply, devices in places:
            for d in devices:
                side = d.side if d.is_bridge else None
                rails.setdefault(d.ref, {}).setdefault(
                    side, d.supply if d.supply is not None else supply)
    return rails


def _parts_section(design) -> dict[str, dict]:
    library = design.library
    design_dir = design.path.parent if design.path else None
    rails = _device_rails(design)
    parts: dict[str, dict] = {}
    for bus in design.buses:
        for d in bus.devices:
            entry = parts.get(d.ref)
            if entry is not None:
                if bus.id not in entry["buses"]:
                    entry["buses"].append(bus.id)
                continue
            prov = d.part.provenance
            entry = {"part": d.part_id, "title": d.part.title, "category": d.part.category,
                     "role": d.role, "buses": [bus.id]}
            if d.part_id in library.files:
                entry["file"] = _shown_path(library.path_of(d.part_id), design_dir)
                entry["chain"] = library.chain(d.part_id)
            if d.part_id in library.overrides:
                entry["overrides"] = _shown_path(library.overrides[d.part_id], design_dir)
            entry["basis"] = prov.basis
            if prov.source:
                entry["source"] = prov.source
            if prov.recorded:
                entry["recorded"] = prov.recorded.isoformat()
            rail = rails.get(d.ref, {})
            entry["rails"] = {("" if k is None else k): v for k, v in rail.items()}
            entry["values"] = part_values(d.part, rail, library)
            parts[d.ref] = entry
    return parts


def snapshot(design, result) -> dict:
    """A result that explains itself: the result JSON, the resolved parts, the library.

    Parameters
    ----------
    design : Design
        The design the result was computed from (its parts and library are recorded).
    result : DesignResult or dict
        The result of :func:`pinlib.engines.dispatch.check_design`, or its JSON form.

    Returns
    -------
    dict
        The result JSON (``format = "pinlib.result/1"``) plus ``parts`` (per device
        reference: part id, library file, provenance, every resolved value), ``library``
        (folders, overrides) and ``created`` (UTC, ISO 8601).
    """
    out = dict(result.to_json() if hasattr(result, "to_json") else result)
    if out.get("format") != RESULT_FORMAT:
        raise InputError(M.NOT_A_RESULT, field="format", value=out.get("format"),
                         expected=f'"{RESULT_FORMAT}"')
    design_dir = design.path.parent if design.path else None
    lib = design.library
    lib.resolve_all()  # the snapshot counts the library's problems: every part validated
    out["created"] = _now()
    out["pinlib"] = __version__
    if design.path:
        out["design_file"] = Path(design.path).name
    out["parts"] = _parts_section(design)
    out["library"] = {
        "builtin": str(Path(BUILTIN_DIR).resolve()),
        "folders": [_shown_path(f, design_dir) for f in lib.folders],
        "overrides": {pid: {"file": _shown_path(lib.path_of(pid), design_dir),
                            "builtin": _shown_path(p, design_dir)}
                      for pid, p in sorted(lib.overrides.items()) if pid in lib.files},
        "problems": len(lib.problems),
    }
    return out


def save_snapshot(design, result, path=None) -> Path:
    """Write the snapshot of ``result`` beside the design (or to ``path``); return its path.

    The file is written atomically (a reader sees the old snapshot or the new one).
    """
    target = Path(path) if path is not None else snapshot_path(design)
    text = json.dumps(snapshot(design, result), indent=2, ensure_ascii=False) + "\n"
    atomic_write(target, text)
    return target


#: The largest snapshot read (the result of a design of hundreds of buses is a few MB).
MAX_SNAPSHOT_BYTES = 64 * 2**20


def load_snapshot(path) -> dict | None:
    """Read a snapshot; None when the file does not exist.

    Raises
    ------
    InputError
        When the file is not a regular file of at most :data:`MAX_SNAPSHOT_BYTES`, not
        UTF-8 JSON, not a pinlib result, or not shaped as a snapshot
        (:func:`pinlib.studies.snapshotcheck.check_snapshot` names the field).
    """
    path = Path(path)
    hint = "delete it or save a new one with `pinlib check DESIGN --save`"
    try:
        raw = read_regular(path, max_bytes=MAX_SNAPSHOT_BYTES)
    except InputError as exc:
        if exc.problem == M.FILE_NOT_FOUND:
            return None
        raise
    try:
        data = json.loads(raw.decode("utf-8"))
    except UnicodeDecodeError:
        raise InputError(M.NOT_UTF8, file=str(path), hint=hint) from None
    except json.JSONDecodeError as exc:
        raise InputError(M.SNAPSHOT_NOT_JSON.format(detail=exc.msg), file=str(path),
                         line=exc.lineno, hint=hint) from None
    except RecursionError:
        raise InputError(M.SNAPSHOT_NOT_JSON.format(detail="nested too deep"),
                         file=str(path), hint=hint) from None
    if not isinstance(data, dict) or data.get("format") != RESULT_FORMAT:
        raise InputError(M.NOT_A_SNAPSHOT, file=str(path), field="format",
                         value=data.get("format") if isinstance(data, dict) else None,
                         expected=f'"{RESULT_FORMAT}"')
    check_snapshot(data, path)
    return data


def compare_with_snapshot(design, result, threshold: float = DEFAULT_THRESHOLD, *,
                          damaged: list | None = None):
    """Compare a fresh result with the design's saved snapshot.

    Parameters
    ----------
    damaged : list, optional
        Given, a snapshot that cannot be read or is damaged (the InputError of
        :func:`load_snapshot`) is appended to it and ignored: None is returned, as for
        no snapshot.  Not given, that error is raised.

    Returns
    -------
    ChangeList or None
        None when the design has no snapshot (or was not loaded from a file).
    """
    if getattr(design, "path", None) is None:
        return None
    try:
        old = load_snapshot(snapshot_path(design))
    except InputError as exc:
        if damaged is None:
            raise
        damaged.append(exc)
        return None
    if old is None:
        return None
    return compare(old, snapshot(design, result), threshold=threshold)


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


# ============================================================================ comparing


def _groups(result: dict):
    """Every group of a result JSON with its path: bus, segment (``bus/seg``), line
    (``bus/signal``)."""
    for bus in result.get("buses", ()):
        bid = bus.get("id", "?")
        yield bid, bus
        for seg in bus.get("segments", ()) or ():
            yield f"{bid}/{seg.get('id', '?')}", seg
        for line in bus.get("lines", ()) or ():
            yield f"{bid}/{line.get('signal', '?')}", line


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


def format_figure(value, unit: str) -> str:
    """A figure value as text: SI prefix and unit, ``yes``/``no``, text as is, ``—`` for none."""
    if value is None:
        return "—"
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, str):
        return value
    if not unit:  # a ratio or a count: no SI prefix ("847 m" reads badly)
        return f"{value:.4g}"
    return format_si(value, unit)


def format_change(rel: float | None) -> str:
    """A relative change as text: ``(+12.5 %)``; ``(from zero)``; empty for none."""
    if rel is None:
        return ""
    if math.isinf(rel):
        return "(from zero)"
    return f"({rel * 100:+.3g} %)"


@dataclass
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
        if o is None:
            rows.append(FigureRow(*key, unit, None, nv, None, True, "added"))
            continue
        if n is None:
            rows.append(FigureRow(*key, unit, ov, None, None, True, "removed"))
            continue
        rel = _relative(ov, nv)
        if rel is not None:
            moved = abs(rel) > threshold
            rows.append(FigureRow(*key, unit, ov, nv, rel, moved, "moved" if moved else "same"))
        else:
            differ = ov != nv
            rows.append(FigureRow(*key, unit, ov, nv, None, differ,
                                  "changed" if differ else "same"))
    return rows


@dataclass
class StatusChange:
    """A check whose status changed (``old`` or ``new`` is None for a check that appeared
    or disappeared)."""

    path: str
    check: str
    subject: str | None
    old: str | None
    new: str | None
    unit: str = ""
    old_value: Any = None
    new_value: Any = None
    old_limit: Any = None
    new_limit: Any = None
    old_margin: float | None = None
    new_margin: float | None = None
    source: str = ""
    message: str = ""
    old_subject: str | None = None  # when the worst case moved to another device

    def format(self) -> str:
        where = f"{self.path} {self.check}" + (f" {self.subject}" if self.subject else "")
        if self.old_subject:
            where += f" (was {self.old_subject})"
        old = self.old or "(absent)"
        new = self.new or "(absent)"
        text = f"{where}: {old} {_ARROW} {new}"
        vals = []
        if self.old is not None and self.new is not None:
            vals.append(f"{format_figure(self.old_value, self.unit)} {_ARROW} "
                        f"{format_figure(self.new_value, self.unit)}")
        elif self.new is not None:
            vals.append(format_figure(self.new_value, self.unit))
        else:
            vals.append(format_figure(self.old_value, self.unit))
        limit = self.new_limit if self.new is not None else self.old_limit
        if limit is not None and not isinstance(limit, bool):
            if self.old is not None and self.new is not None and self.old_limit != self.new_limit:
                vals.append(f"limit {format_figure(self.old_limit, self.unit)} {_ARROW} "
                            f"{format_figure(self.new_limit, self.unit)}")
            else:
                vals.append(f"limit {format_figure(limit, self.unit)}")
        text += " (" + ", ".join(vals) + ")"
        if self.source:
            text += f"; source: {self.source}"
        return text

    def to_json(self) -> dict:
        return {"path": self.path, "check": self.check, "subject": self.subject,
                "old": self.old, "new": self.new, "unit": self.unit,
                "old_value": self.old_value, "new_value": self.new_value,
                "old_limit": self.old_limit, "new_limit": self.new_limit,
                "old_margin": self.old_margin, "new_margin": self.new_margin,
                "source": self.source, "message": self.message,
                "old_subject": self.old_subject}


@dataclass
class FigureChange:
    """A figure that moved beyond the threshold, changed kind, appeared or disappeared."""

    path: str
    name: str
    unit: str
    old: Any
    new: Any
    change: float | None
    kind: str  # "moved", "changed", "added", "removed"

    def format(self) -> str:
        return (f"{self.path} {self.name}: {format_figure(self.old, self.unit)} {_ARROW} "
                f"{format_figure(self.new, self.unit)} {format_change(self.change)}").rstrip()

    def to_json(self) -> dict:
        return {"path": self.path, "name": self.name, "unit": self.unit, "old": self.old,
                "new": self.new,
                "change": None if self.change is None or math.isinf(self.change)
                else self.change, "kind": self.kind}


def value_label(key: str) -> str:
    """A value's dotted key as an engineer reads it: ``pins.sda.c_in`` -> ``SDA c_in``,
    ``sides.b.pins.scl.v_il`` -> ``side b SCL v_il``, ``timing.t_valid`` -> ``t_valid``."""
    parts = key.split(".")
    out = []
    i = 0
    while i < len(parts):
        p = parts[i]
        if p == "sides" and i + 1 < len(parts):
            out.append(f"side {parts[i + 1]}")
            i += 2
            continue
        if p == "pins" and i + 1 < len(parts):
            out.append(parts[i + 1].upper())
            i += 2
            continue
        if p == "timing" and i + 1 < len(parts):
            i += 1
            continue
        out.append(p)
        i += 1
    return " ".join(out)


def _show_value(entry: dict | None) -> str:
    if entry is None:
        return "(none)"
    if "scale" in entry:
        th = Threshold(entry["scale"], entry["offset"])
        shown = entry.get("text") or format_threshold(th)
        if th.relative and entry.get("value") is not None:
            shown += f" ({format_si(entry['value'], 'V')} at {format_si(entry['vdd'], 'V')})"
        return shown
    v = entry.get("value")
    if isinstance(v, (bool, str)) or v is None:
        return format_figure(v, "")
    return format_si(v, entry.get("unit", ""))


def _same_value(a: dict | None, b: dict | None) -> bool:
    if a is None or b is None:
        return a is b
    if "scale" in a or "scale" in b:
        return (math.isclose(a.get("scale", 0.0), b.get("scale", 0.0), rel_tol=1e-12,
                             abs_tol=1e-15)
                and math.isclose(a.get("offset", 0.0), b.get("offset", 0.0), rel_tol=1e-12,
                                 abs_tol=1e-15))
    va, vb = a.get("value"), b.get("value")
    if _is_number(va) and _is_number(vb):
        return math.isclose(va, vb, rel_tol=1e-12, abs_tol=0.0)
    return va == vb and a.get("unit") == b.get("unit")


@dataclass
class ValueChange:
    """One part value that differs between the two snapshots."""

    key: str
    old: dict | None
    new: dict | None

    @property
    def label(self) -> str:
        return value_label(self.key)

    def format(self, ref: str, part_id: str | None = None) -> str:
        """``U4 SDA c_in 8 pF → 80 pF, source: … [estimate]``; the part file that set
        the value is named when it is not ``part_id`` itself (an inherited value)."""
        text = f"{ref} {self.label} {_show_value(self.old)} {_ARROW} {_show_value(self.new)}"
        shown = self.new if self.new is not None else self.old
        bits = []
        basis = f" [{shown['basis']}]" if shown.get("basis") else ""
        if shown.get("source"):
            bits.append(f"source: {shown['source']}{basis}")
        elif basis:
            bits.append(f"basis: {shown['basis']}")
        if shown.get("origin") and shown["origin"] != part_id:
            bits.append(f"set in {shown['origin']}")
        return text + (", " + ", ".join(bits) if bits else "")

    def to_json(self) -> dict:
        return {"key": self.key, "label": self.label, "old": self.old, "new": self.new}


@dataclass
class PartChange:
    """A device whose part changed, or whose part's resolved values differ."""

    ref: str
    old_part: str | None
    new_part: str | None
    buses: list[str] = field(default_factory=list)
    old_file: str | None = None
    new_file: str | None = None
    values: list[ValueChange] = field(default_factory=list)

    def lines(self) -> list[str]:
        head = f"{self.ref}"
        if self.old_part != self.new_part:
            head += f" part {self.old_part or '(absent)'} {_ARROW} {self.new_part or '(absent)'}"
            if self.new_file:
                head += f" ({self.new_file})"
        else:
            head += f" part {self.new_part}: values differ"
        if self.buses:
            head += f"; on {', '.join(self.buses)}"
        shown_part = self.new_part if self.new_part is not None else self.old_part
        return [head] + ["  " + v.format(self.ref, shown_part) for v in self.values]

    def to_json(self) -> dict:
        return {"ref": self.ref, "old_part": self.old_part, "new_part": self.new_part,
                "buses": list(self.buses), "old_file": self.old_file,
                "new_file": self.new_file, "values": [v.to_json() for v in self.values]}


@dataclass
class ChangeList:
    """What changed between two snapshots (see :func:`compare`)."""

    threshold: float
    old_status: str | None = None
    new_status: str | None = None
    status_changes: list[StatusChange] = field(default_factory=list)
    figure_changes: list[FigureChange] = field(default_factory=list)
    part_changes: list[PartChange] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)
    old_created: str | None = None
    new_created: str | None = None

    @property
    def empty(self) -> bool:
        """True when no check changed status, no figure moved and no part value differs."""
        return not (self.status_changes or self.figure_changes or self.part_changes)

    def to_json(self) -> dict:
        return {
            "format": CHANGES_FORMAT,
            "threshold": self.threshold,
            "status": {"old": self.old_status, "new": self.new_status},
            "old_created": self.old_created,
            "new_created": self.new_created,
            "empty": self.empty,
            "status_changes": [c.to_json() for c in self.status_changes],
            "figure_changes": [c.to_json() for c in self.figure_changes],
            "part_changes": [c.to_json() for c in self.part_changes],
            "notes": list(self.notes),
        }

    def format_text(self) -> str:
        """The change list as plain text, one item a line."""
        pct = f"{self.threshold * 100:g} %"
        when = f" saved {self.old_created}" if self.old_created else ""
        out = [f"Changes against the snapshot{when}: status {self.old_status or '—'} "
               f"{_ARROW} {self.new_status or '—'}"]
        if self.empty:
            out.append(f"  no check changed status, no figure moved more than {pct}, "
                       "no part value differs")
        if self.status_changes:
            out.append("Checks whose status changed:")
            out += ["  " + c.format() for c in self.status_changes]
        if self.figure_changes:
            out.append(f"Figures that moved more than {pct}:")
            out += ["  " + c.format() for c in self.figure_changes]
        if self.part_changes:
            out.append("Part values behind the change:")
            for pc in self.part_changes:
                out += ["  " + line for line in pc.lines()]
        out += [f"Note: {n}" for n in self.notes]
        return "\n".join(out) + "\n"


def _paired_checks(old_c: dict, new_c: dict) -> list[tuple[dict | None, dict | None]]:
    """Match the checks of two results.

    A check is matched by its group, id, subject and order first.  The checks left over
    on both sides with the same group and id are then paired in order: an engine names
    the worst receiver or driver as a check's subject, so when a substitution moves
    the worst case to another device the check is the same one with a new subject.
    Whatever is still left appeared or disappeared.
    """
    pairs: list[tuple[dict | None, dict | None]] = []
    left_old = {k: v for k, v in old_c.items() if k not in new_c}
    pending: dict[tuple, list] = {}
    for k in left_old:
        pending.setdefault(k[:2], []).append(k)
    for k in new_c:
        if k in old_c:
            pairs.append((dict(old_c[k], _path=k[0]), dict(new_c[k], _path=k[0])))
        elif pending.get(k[:2]):
            ko = pending[k[:2]].pop(0)
            del left_old[ko]
            pairs.append((dict(old_c[ko], _path=ko[0]), dict(new_c[k], _path=k[0])))
        else:
            pairs.append((None, dict(new_c[k], _path=k[0])))
    pairs += [(dict(old_c[k], _path=k[0]), None) for k in left_old]
    return pairs


def compare(old_snapshot: dict, new_snapshot: dict, *, threshold: float = DEFAULT_THRESHOLD
            ) -> ChangeList:
    """Compare two snapshots (or two plain results).

    Parameters
    ----------
    old_snapshot, new_snapshot : dict
        Snapshots from :func:`snapshot` (plain result JSON works too; then no part
        values can be compared).
    threshold : float
        A figure is listed when it moves by more than this fraction of its old value
        (keyword-only; 0.05 by default). [1]

    Returns
    -------
    ChangeList
        Checks whose status changed (and checks that appeared or disappeared), figures
        that moved beyond ``threshold`` (and yes/no or text figures that differ, and
        figures that appeared or disappeared), and for each device whose part id or
        resolved values differ, the values that differ with their source.
    """
    threshold = float(threshold)
    if not threshold >= 0:
        raise InputError(M.NEGATIVE_THRESHOLD, field="threshold", value=threshold,
                         expected="zero or more")
    cl = ChangeList(threshold, old_snapshot.get("status"), new_snapshot.get("status"),
                    old_created=old_snapshot.get("created"),
                    new_created=new_snapshot.get("created"))
    if old_snapshot.get("design") != new_snapshot.get("design"):
        cl.notes.append(f"the snapshot is of design {old_snapshot.get('design')!r}, this is "
                        f"{new_snapshot.get('design')!r}")

    for o, n in _paired_checks(_checks(old_snapshot), _checks(new_snapshot)):
        os_, ns_ = (o or {}).get("status"), (n or {}).get("status")
        if os_ == ns_:
            continue
        ref = n or o
        old_subject = (o or {}).get("subject")
        cl.status_changes.append(StatusChange(
            ref["_path"], ref.get("id"), ref.get("subject"), os_, ns_, ref.get("unit", ""),
            (o or {}).get("value"), (n or {}).get("value"),
            (o or {}).get("limit"), (n or {}).get("limit"),
            (o or {}).get("margin"), (n or {}).get("margin"),
            ref.get("source", ""), ref.get("message", ""),
            old_subject if o and n and old_subject != ref.get("subject") else None))

    for row in figure_rows(old_snapshot, new_snapshot, threshold=threshold):
        if row.moved:
            cl.figure_changes.append(FigureChange(row.path, row.name, row.unit, row.old,
                                                  row.new, row.change, row.kind))

    old_p, new_p = old_snapshot.get("parts"), new_snapshot.get("parts")
    if old_p is None or new_p is None:
        if (old_p is None) != (new_p is None):
            cl.notes.append("one side is a plain result without part data: part values "
                            "are not compared")
    else:
        for ref in list(new_p) + [r for r in old_p if r not in new_p]:
            o, n = old_p.get(ref), new_p.get(ref)
            ov, nv = (o or {}).get("values", {}), (n or {}).get("values", {})
            values = [ValueChange(k, ov.get(k), nv.get(k))
                      for k in list(nv) + [k for k in ov if k not in nv]
                      if not _same_value(ov.get(k), nv.get(k))]
            old_id, new_id = (o or {}).get("part"), (n or {}).get("part")
            if old_id == new_id and not values:
                continue
            cl.part_changes.append(PartChange(
                ref, old_id, new_id, list((n or o).get("buses", [])),
                (o or {}).get("file"), (n or {}).get("file"), values))
        ol, nl = old_snapshot.get("library") or {}, new_snapshot.get("library") or {}
        if ol.get("folders") != nl.get("folders"):
            cl.notes.append("library folders differ: "
                            f"{ol.get('folders')} {_ARROW} {nl.get('folders')}")
        if ol.get("overrides") != nl.get("overrides"):
            cl.notes.append("built-in parts overridden by team parts differ: "
                            f"{sorted(ol.get('overrides') or {})} {_ARROW} "
                            f"{sorted(nl.get('overrides') or {})}")
    return cl


# ============================================================================ compatibility


def _allowed_drives(protocol: str, function: str, role: str) -> tuple[set[str], str] | None:
    """The drives a position allows for a pin function, and why; None: no rule."""
    controller = role == "controller"
    if protocols.is_open_drain(protocol):
        if function == protocols.protocol(protocol).function("sda"):
            return ({"open-drain"},
                    "every I2C/SMBus device drives SDA (acknowledge, read data) and the line is "
                    "wired-AND, so SDA must be open-drain")
        if function == protocols.protocol(protocol).function("scl"):
            if controller:
                return ({"open-drain", "push-pull"}, "a controller drives SCL")
            return ({"input", "open-drain"},
                    "a target only reads SCL or holds it low to stretch the clock; a push-pull "
                    "SCL would fight the controller")
    if protocol == "spi":
        if controller:
            if function == protocols.SIGNAL_FUNCTION["cipo"]:
                return ({"input"}, "a controller reads CIPO; an output there fights the "
                        "peripheral")
            return ({"push-pull"}, f"a controller drives {function.removeprefix('spi-').upper()}"
                    " with a push-pull (or tri-state) output")
        if function == protocols.SIGNAL_FUNCTION["cipo"]:
            return ({"push-pull"}, "a peripheral drives CIPO with a push-pull (tri-state) "
                    "output; the bus has no pull-up for an open-drain one")
        return ({"input"}, f"a peripheral reads {function.removeprefix('spi-').upper()}; an "
                "output there fights the controller")
    return None


def _scl_drivers_elsewhere(device, bus) -> list[str]:
    """Other devices on the bus whose SCL pin can pull the line low."""
    out = []
    for d in bus.devices:
        if d.ref == device.ref:
            continue
        got = d.part.pin_for(protocols.SIGNAL_FUNCTION["scl"], d.side if d.is_bridge else None)
        if got is not None and got[1].drive != "input":
            out.append(d.ref)
    return sorted(set(out))


def positions(design, ref: str, *, field: str = "REF") -> list:
    """Every (bus, device) where the reference designator sits.

    Raises
    ------
    DesignError
        When no device has that reference (``field`` names where it was given).
    """
    from pinlib.core.errors import DesignError

    out = [(b, d) for b in design.buses for d in b.devices if d.ref == ref]
    if not out:
        refs = sorted({d.ref for b in design.buses for d in b.devices})
        raise DesignError(M.NO_SUCH_REFERENCE, file=str(design.path or ""),
                          field=field, value=ref, hint="devices: " + ", ".join(refs))
    return out


def swap_refusals(design, ref: str, part_id: str, *, field: str = "REF=PART") -> tuple[str, list]:
    """Why ``part_id`` cannot take the place of the part at ``ref`` in ``design``.

    Parameters
    ----------
    design : Design
        A loaded design. [1]
    ref : str
        The reference designator to substitute. [1]
    part_id : str
        The proposed part class. [1]
    field : str, optional
        The field an error names (``REF=PART`` on the command line). [1]

    Returns
    -------
    (str, list of str)
        The part at ``ref`` now, and the reasons (empty when the swap can be made):
        an abstract or cable class, then :func:`can_serve` on every bus it sits on.

    Raises
    ------
    DesignError
        No device has that reference; LibraryError: no such part.
    """
    places = positions(design, ref, field=field)
    new_part = design.library.get(part_id, field=field)
    if new_part.abstract:
        return places[0][1].part_id, [M.ABSTRACT_NOT_PLACED.format(part=part_id)]
    if new_part.category == "cable":
        return places[0][1].part_id, [M.CABLE_NOT_PLACED.format(part=part_id)]
    reasons: list[str] = []
    for bus, dev in places:
        for reason in can_serve(dev.part, new_part, dev, bus):
            if reason not in reasons:
                reasons.append(reason)
    return places[0][1].part_id, reasons


def can_serve(old_part: Part, new_part: Part, device, bus) -> list[str]:
    """Why ``new_part`` cannot stand where ``old_part`` serves ``device`` on ``bus``.

    Parameters
    ----------
    old_part : Part
        The part in the position now.
    new_part : Part
        The part proposed instead.
    device : Device
        The device (its role, its side for a bridging part, its named pin on a GPIO
        line).
    bus : Bus
        The bus the position is on (its protocol, its other devices).

    Returns
    -------
    list of str
        The reasons, empty when the part can serve.

    Notes
    -----
    The rule, applied to each pin function of the protocol that the old part serves
    (on the device's side, for a bridging part):

    * the new part has a pin with that function (on a GPIO line: the pin the design
      names, or the one the engine would pick);
    * its drive is one the position allows: SDA open-drain on every device; SCL
      open-drain or input on a target, open-drain on a controller (push-pull only when
      no other device on the bus can hold SCL low — no clock stretching, no second
      controller); an SPI controller drives SCLK, COPI and CS push-pull and reads CIPO,
      a peripheral reads SCLK, COPI and CS and drives CIPO push-pull (tri-state); a
      bridging part on an open-drain bus is open-drain or passive ("input") on each
      side, one on an SPI bus keeps each channel's direction; a GPIO pin keeps the old
      pin's drive;
    * a bridging part is replaced by a bridging part, and a plain part by a plain one.

    A drive rule the old part itself breaks is not held against the new part: the
    position is what the design already accepted.  Electrical fitness (capacitance,
    levels, timing, supply range) is not judged here; the engines judge it.
    """
    reasons: list[str] = []
    if bool(old_part.sides) != bool(new_part.sides):
        if old_part.sides:
            reasons.append(f"{old_part.id} is a bridging part (sides a and b); "
                           f"{new_part.id} is not")
        else:
            reasons.append(f"{new_part.id} is a bridging part (sides a and b); the position "
                           "takes a plain device")
        return reasons
    side = device.side if old_part.sides else None
    on_side = f" on side {side}" if side else ""
    protocol = bus.protocol

    if protocol == "gpio":
        return _can_serve_gpio(old_part, new_part, device, bus)

    for function in PROTOCOL_FUNCTIONS.get(protocol, ()):
        got_old = old_part.pin_for(function, side)
        if got_old is None:
            continue
        old_name, old_pin = got_old
        got_new = new_part.pin_for(function, side)
        if got_new is None:
            reasons.append(f"{new_part.id} has no {function} pin{on_side} (the {old_part.id} "
                           f"pin '{old_name}' serves it on bus {bus.id})")
            continue
        new_name, new_pin = got_new
        if old_part.sides and protocols.is_open_drain(protocol):
            rule = ({"open-drain", "input"}, "a bridging part on an open-drain bus either "
                    "drives it open-drain (a repeater) or passes it through (a pass "
                    "transistor); a push-pull side would fight the pull-ups")
        elif old_part.sides:
            rule = ({old_pin.drive}, "a bridging part keeps the direction of each channel")
        else:
            rule = _allowed_drives(protocol, function, device.role)
        if rule is None:
            continue
        allowed, why = rule
        if (protocols.is_open_drain(protocol)
                and function == protocols.protocol(protocol).function("scl")
                and device.role == "controller" and new_pin.drive == "push-pull"):
            others = _scl_drivers_elsewhere(device, bus)
            if others and old_pin.drive != "push-pull":
                reasons.append(f"{new_part.id} pin '{new_name}' ({function}) is push-pull, but "
                               f"{', '.join(others)} can hold SCL low (clock stretching or "
                               "another controller): the outputs would fight; SCL must be "
                               "open-drain here")
            continue
        if new_pin.drive not in allowed and old_pin.drive in allowed:
            reasons.append(f"{new_part.id} pin '{new_name}' ({function}) is {new_pin.drive}, "
                           f"the position needs {' or '.join(sorted(allowed))}: {why}")
    return reasons


def _can_serve_gpio(old_part: Part, new_part: Part, device, bus) -> list[str]:
    from pinlib.core.errors import PinlibError
    from pinlib.engines.pushpull import gpio_pin

    reasons = []
    n_lines = len(bus.lines)
    new_dev = replace(device, part=new_part, part_id=new_part.id)
    for signal in bus.lines:
        try:
            got_old = gpio_pin(device, signal, n_lines)
        except PinlibError:
            got_old = None
        if got_old is None:
            continue
        old_name, old_pin = got_old
        try:
            got_new = gpio_pin(new_dev, signal, n_lines)
        except PinlibError:
            got_new = None
        if got_new is None:
            named = f"pin '{device.pin}'" if device.pin else f"pin for line {signal}"
            reasons.append(f"{new_part.id} has no {named} (the {old_part.id} pin '{old_name}' "
                           f"serves line {signal} on bus {bus.id})")
            continue
        new_name, new_pin = got_new
        if new_pin.drive != old_pin.drive:
            reasons.append(f"{new_part.id} pin '{new_name}' is {new_pin.drive}, the "
                           f"{old_part.id} pin '{old_name}' on line {signal} is "
                           f"{old_pin.drive}: a GPIO position keeps its drive")
    return reasons


# ============================================================================ editing


def swapped_text(design, swaps: dict[str, str]) -> str:
    """The design file's text with the ``part`` of every device in ``swaps`` replaced.

    Only the ``part = "..."`` values of those devices change — in inline tables inside
    ``devices = [...]`` arrays, in ``[[bus.segment]]`` devices, and in
    ``[[bus.devices]]`` tables alike; comments, order, spacing and every other byte stay
    as they were (the file is edited with tomlkit, which keeps them).  The new text is
    checked before it is returned: parsed again it must equal the old data with exactly
    those values changed, and it must load as a design with the same library.

    Parameters
    ----------
    design : Design
        A design loaded from a file (its text and the place of each device are used).
    swaps : dict
        New part id by reference designator, ``{"U4": "eeprom-hicap"}``.

    Raises
    ------
    DesignError
        When a reference is not in the design, or the edit would not round-trip.
    """
    import copy

    import tomlkit

    from pinlib.core.errors import DesignError
    from pinlib.core.tomlfile import tomllib
    from pinlib.model.design import design_from_text

    fname = str(design.path) if design.path else None
    places = {ref: [] for ref in swaps}
    for bus in design.buses:
        for d in bus.devices:
            if d.ref in places and d.loc not in places[d.ref]:
                places[d.ref].append(d.loc)
    for ref, locs in places.items():
        if not locs:
            raise DesignError(M.NO_SUCH_REFERENCE, file=fname, field="swap",
                              value=ref)
    doc = tomlkit.parse(design.text)
    expected = copy.deepcopy(tomllib.loads(design.text))
    for ref, locs in places.items():
        for loc in locs:
            item = doc
            want = expected
            for key in loc:
                item = item[key]
                want = want[key]
            old = item["part"]
            literal = getattr(getattr(old, "type", None), "name", "") == "SLL"
            item["part"] = tomlkit.string(swaps[ref], literal=literal and "'" not in swaps[ref])
            want["part"] = swaps[ref]
    text = tomlkit.dumps(doc)
    if tomllib.loads(text) != expected:  # pragma: no cover - a tomlkit defect
        raise DesignError(M.EDIT_CHANGES_MORE,
                          file=fname, hint="edit the part ids by hand")
    check = design_from_text(tomllib.loads(text), text, design.path, library=design.library)
    for ref, part_id in swaps.items():
        for bus in check.buses:
            for d in bus.devices:
                if d.ref == ref and d.part_id != part_id:  # pragma: no cover - defensive
                    raise DesignError(M.EDIT_LOST_PART,
                                      file=fname, field="swap", value=ref)
    return text
