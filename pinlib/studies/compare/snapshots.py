"""Snapshots: a design's result with what explains it (every device's part, its library
file and resolved values with their provenance; the library's folders and overrides),
written beside the design and read back."""

from __future__ import annotations

import datetime as _dt
import json
import os
from pathlib import Path
from typing import Any

from pinlib import __version__
from pinlib.core import messages as M
from pinlib.core.errors import InputError, PinlibError
from pinlib.core.pathkind import FOLDER, path_kind
from pinlib.core.quantity import Threshold
from pinlib.core.records import Record
from pinlib.core.tomlfile import UTF8_BOM, atomic_write, read_regular, refuse_irregular_target
from pinlib.library.loader import BUILTIN_DIR
from pinlib.library.schema import Part
from pinlib.library.values import Sourced, StatedList
from pinlib.model.result import FORMAT as RESULT_FORMAT
from pinlib.model.result import json_number
from pinlib.studies.snapshotcheck import check_snapshot
from pinlib.studies.snapshotfile import snapshot_advice, snapshot_path


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




def _setting_provenance(part: Part, key: str, library) -> dict:
    """Where a setting (``function``, ``drive``, ``off_tolerant``) comes from: the part
    file of the part's chain, child first, that states it (``origin``) with that file's
    provenance basis and source (``"provenance": "part"``); ``"default": True`` where
    no file states it (the part format's default); nothing without a library."""
    files = getattr(library, "files", None)
    if not files or part.id not in files:
        return {}
    loc = [int(k) if k.isdigit() else k
           for k in key.replace("[", ".").replace("]", "").split(".")]
    for pid in library.chain(part.id):
        raw = files[pid].raw
        for k in loc:
            if isinstance(raw, dict) and isinstance(k, str) and k in raw:
                raw = raw[k]
            elif isinstance(raw, list) and isinstance(k, int) and k < len(raw):
                raw = raw[k]
            else:
                raw = None
                break
        if raw is None:
            continue
        prov = files[pid].raw.get("provenance")
        prov = prov if isinstance(prov, dict) else {}
        out: dict[str, Any] = {"origin": pid, "provenance": "part"}
        for name in ("basis", "source"):
            if isinstance(prov.get(name), str) and prov[name]:
                out[name] = prov[name]
        return out
    return {"default": True}


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
        elif isinstance(obj, StatedList):  # one setting with its file's provenance
            out[key] = {"value": list(obj), "basis": obj.basis, "source": obj.source,
                        "origin": obj.origin}
        elif isinstance(obj, Record):
            for name in type(obj).fields():
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
            out[key] = {"value": obj, **_setting_provenance(part, key, library)}

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


def _pins_used(bus, device) -> set[str] | None:
    """The pins of ``device`` that ``bus`` connects: those whose function is one of the
    bus's signals (an SPI bus's routed lines only), a GPIO line's pin; None where that is
    not worked out (a bridging part's sides)."""
    from pinlib.core.protocols import protocol

    part = device.part
    if device.is_bridge:
        return None
    proto = protocol(bus.protocol)
    if bus.protocol == "gpio":
        from pinlib.engines.pushpull import gpio_pin

        got = set()
        for sig in bus.lines:
            try:
                pin = gpio_pin(device, sig, len(bus.lines))
            except PinlibError:  # the engine names a bad pin; here nothing is hidden
                return None
            if pin is not None:
                got.add(pin[0])
        return got
    if proto.open_drain:
        functions = set(proto.functions)
    else:
        functions = {proto.function(sig) for sig in bus.lines}
    return {name for name, pin in part.pins.items() if pin.function in functions}


def _parts_section(design) -> dict[str, dict]:
    library = design.library
    design_dir = design.path.parent if design.path else None
    rails = _device_rails(design)
    parts: dict[str, dict] = {}
    # the pins no bus connects, by device (a device on several buses: on none of them);
    # the devices whose pins are not worked out (a bridging part) have none listed
    unused: dict[str, set] = {}
    not_worked_out: set = set()
    for bus in design.buses:
        for d in bus.devices:
            entry = parts.get(d.ref)
            used = _pins_used(bus, d)
            if used is None:
                unused.pop(d.ref, None)
                not_worked_out.add(d.ref)
            elif d.ref not in not_worked_out:
                unused[d.ref] = unused.get(d.ref, set(d.part.pins)) - used
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
    for ref, pins in unused.items():
        parts[ref]["unconnected"] = sorted(pins)
    return parts


def _chosen(design) -> list[str]:
    """The places whose resistor pinlib chose (an ``"auto"`` pull-up of a segment, an
    ``"auto"`` series resistor of a line), as the result's figures are placed: ``bus``
    and ``bus/segment`` for a pull-up (a bus of one segment gives its figures at the
    bus), ``bus/signal`` for a line."""
    out = []
    for bus in design.buses:
        segments = [s for s in bus.segments if s.pullup == "auto"]
        if segments and len(bus.segments) == 1:
            out.append(bus.id)
        out += [f"{bus.id}/{s.id}" for s in segments]
        out += [f"{bus.id}/{sig}" for sig, ln in bus.lines.items()
                if ln.series_resistor == "auto"]
    return sorted(set(out))


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
        (folders, overrides), ``chosen`` (the places whose resistor pinlib chose,
        :func:`_chosen`) and ``created`` (UTC, ISO 8601).
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
    out["chosen"] = _chosen(design)
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
    # a folder in its place: refused with the advice that works (move it away)
    refuse_irregular_target(target, hint=snapshot_advice(target, getattr(design, "path", None)))
    text = json.dumps(snapshot(design, result), indent=2, ensure_ascii=False) + "\n"
    atomic_write(target, text)
    return target


#: The largest snapshot read (the result of a design of hundreds of buses is a few MB).
MAX_SNAPSHOT_BYTES = 64 * 2**20


def load_snapshot(path, design=None) -> dict | None:
    """Read a snapshot; None when the file does not exist.  ``design``: the design file as
    the user named it, for the advice an error gives (``DESIGN`` where not given).

    Raises
    ------
    InputError
        When the file is not a regular file of at most :data:`MAX_SNAPSHOT_BYTES`, not
        UTF-8 JSON, not a pinlib result, or not shaped as a snapshot
        (:func:`pinlib.studies.snapshotcheck.check_snapshot` names the field); its hint
        says what to do (:func:`pinlib.studies.snapshotfile.snapshot_advice`).
    """
    path = Path(path)
    hint = snapshot_advice(path, design)
    if path_kind(path)[0] == FOLDER:
        raise InputError(M.SNAPSHOT_IS_FOLDER, file=str(path), hint=hint)
    try:
        raw = read_regular(path, max_bytes=MAX_SNAPSHOT_BYTES)
    except InputError as exc:
        if exc.problem == M.FILE_NOT_FOUND:
            return None
        raise exc.with_hint(hint) from None
    try:
        data = json.loads(raw.removeprefix(UTF8_BOM).decode("utf-8"))  # a BOM as if absent
    except UnicodeDecodeError:
        raise InputError(M.NOT_UTF8, file=str(path), hint=hint) from None
    except json.JSONDecodeError as exc:
        raise InputError(M.SNAPSHOT_NOT_JSON.format(detail=_json_reason(exc)), file=str(path),
                         line=exc.lineno, hint=hint) from None
    except RecursionError:
        raise InputError(M.SNAPSHOT_NOT_JSON.format(detail="nested too deep"),
                         file=str(path), hint=hint) from None
    if not isinstance(data, dict) or data.get("format") != RESULT_FORMAT:
        raise InputError(M.NOT_A_SNAPSHOT, file=str(path), field="format",
                         value=data.get("format") if isinstance(data, dict) else None,
                         expected=f'"{RESULT_FORMAT}"', hint=hint)
    try:
        check_snapshot(data, path)
    except InputError as exc:
        raise exc.with_hint(exc.hint or hint) from None
    return data


def _json_reason(exc: json.JSONDecodeError) -> str:
    """The JSON parser's reason whole, with its line and column: its own message stops at
    "at" (``Unterminated string starting at``), the place being left to its str()."""
    where = f"line {exc.lineno}, column {exc.colno}"
    if exc.msg.endswith(" at"):
        return f"{exc.msg} {where}"
    return f"{exc.msg} at {where}"
