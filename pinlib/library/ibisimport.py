"""A team part file written from one component of an IBIS file.

Each pin the user maps to a function gets the values :mod:`pinlib.library.ibisderive`
works out, every one with ``basis = "ibis"`` and a source naming the file, its revision,
the ``[Model]`` and the corner used.  The part's supply is the ``[Voltage Range]`` of the
first mapped pin's model.  The file is written like ``pinlib parts new``: never into the
built-in library, validated (through its ``extends`` chain) before anything is written,
under :func:`pinlib.core.tomlfile.file_lock`, by :func:`pinlib.core.tomlfile.atomic_write`.
"""

from __future__ import annotations

import datetime as _dt
from collections.abc import Callable
from pathlib import Path

from pinlib.core import messages as M
from pinlib.core.errors import LibraryError
from pinlib.core.protocols import PIN_FUNCTIONS, PROTOCOLS
from pinlib.core.quantity import format_si
from pinlib.core.tomlfile import toml_key, tomllib
from pinlib.core.valueclass import value_class
from pinlib.library import loader
from pinlib.library.ibis import IbisFile
from pinlib.library.ibisderive import Derived, _model_of, derive_pin
from pinlib.library.pinsets import pin_set_warnings
from pinlib.library.record import (
    _check_id,
    _comment,
    _refuse_builtin,
    _toml_string,
    _validate,
    _within,
    team_folder,
    write_new_part,
)
from pinlib.library.schema import CATEGORIES, FORMAT

__all__ = ["OPEN_DRAIN_FUNCTIONS", "CornerEdges", "OutputCorners", "part_text",
           "import_part"]

#: Pin functions of open-drain buses: a driving model serves them as an open-drain sink.
OPEN_DRAIN_FUNCTIONS = tuple(fn for p in PROTOCOLS.values() if p.open_drain
                             for fn in p.functions)

_ORDER = ("c_in", "v_il", "v_ih", "v_ol", "i_ol", "r_out")


@value_class(frozen=True)
class CornerEdges:
    """One corner of an output as edge points: rows of ``{"load", "rise", "rise_typ",
    "fall", "fall_typ"}`` (SI) and the source of each edge's values."""

    rows: tuple[dict, ...]
    sources: dict[str, str]


@value_class(frozen=True)
class OutputCorners:
    """A push-pull output's slow corner (the pin's ``edges``) and fast corner (its
    ``fast.edges``, None when the file gives none), and the fit's warnings."""

    slow: CornerEdges
    fast: CornerEdges | None
    warnings: tuple[str, ...] = ()


#: What works out a push-pull pin's corners: ``(ibis, pin, model, c_package)`` ->
#: :class:`OutputCorners` or None (the engines' fit, :mod:`pinlib.engines.ibisdriver`).
Outputs = Callable[..., "OutputCorners | None"]


def _value(d: Derived) -> str:
    typ = f", typ = {_toml_string(format_si(d.typ, d.unit, 6))}" if d.typ is not None else ""
    return (f"{{ value = {_toml_string(format_si(d.value, d.unit, 6))}{typ}, basis = \"ibis\", "
            f"source = {_toml_string(d.source + ' (' + d.method + ')')} }}")


def _drive(ibis: IbisFile, component: str, pin: str, function: str) -> str:
    comp = ibis.components[component]
    entry = next((p for p in comp.pins if pin in (p.name, p.signal)), None)
    if entry is None:
        return "input"  # derive_pin names the unknown pin
    kind = _model_of(ibis, entry).model_type.lower()
    if kind.startswith("input") or kind == "terminator":
        return "input"
    return "open-drain" if function in OPEN_DRAIN_FUNCTIONS or "open" in kind else "push-pull"


def part_text(ibis: IbisFile, component: str, pins: dict[str, str], new_id: str, *,
              category: str = "logic", extends: str | None = None,
              i_ol: float | None = None, outputs: Outputs | None = None,
              warnings: list | None = None, origins: dict | None = None) -> str:
    """The TOML text of the part: ``pins`` maps an IBIS pin (name or signal) to a function.

    ``outputs`` works out a push-pull pin's slow and fast corners as edge points; where
    it gives them they replace the ``r_out`` of the pull-up and pull-down tables (the
    engine fits its driver to the edges).  Its warnings are appended to ``warnings``.
    ``origins`` is filled with where each field of the part was read: a field path
    (``pins.sda.c_in``, ``pins.sda``, ``supply``) -> ``(file, line, keyword)``.
    """
    origins = {} if origins is None else origins
    if component not in ibis.components:
        raise LibraryError(M.IBIS_UNKNOWN_COMPONENT, file=ibis.path, field="--component",
                           value=component, expected="one of " + ", ".join(ibis.components))
    if category not in CATEGORIES:
        raise LibraryError(M.NOT_ALLOWED_VALUE, field="--category", value=category,
                           expected="one of " + ", ".join(CATEGORIES))
    name = ibis.header.get("file name", "") or Path(ibis.path).name
    source = f"{name} rev {ibis.file_rev}, [Component] {component}"
    lines = [*_comment(f"{component}, imported from the IBIS file {name} "
                       f"(rev {ibis.file_rev})."),
             "# Every value was read or derived from the file; its source names the",
             "# [Model] and the corner used.",
             f"format = {_toml_string(FORMAT)}", f"id = {_toml_string(new_id)}",
             f"title = {_toml_string(component + ' (from IBIS)')}",
             f"category = {_toml_string(category)}"]
    if extends:
        lines.append(f"extends = {_toml_string(extends)}")
    lines.append(f"provenance = {{ basis = \"ibis\", source = {_toml_string(source)}, "
                 f"recorded = {_dt.date.today().isoformat()} }}")
    origins[""] = (ibis.path, ibis.components[component].line, f"[Component] {component}")
    body, supply, used = [], None, set()
    for pin, function in pins.items():
        if function not in PIN_FUNCTIONS:
            raise LibraryError(M.NOT_ALLOWED_VALUE, field="--pin", value=f"{pin}={function}",
                               expected="a pin function: " + ", ".join(PIN_FUNCTIONS))
        drive = _drive(ibis, component, pin, function)
        values = derive_pin(ibis, component, pin, drive=drive, i_ol=i_ol)
        if supply is None:
            model = _model_of(ibis, next(p for p in ibis.components[component].pins
                                         if pin in (p.name, p.signal)))
            supply = (model, model.supply())
        if "v_ol" in values:
            values["i_ol"] = Derived("i_ol", i_ol, "A", values["v_ol"].source,
                                     "the current v_ol was read at (--i-ol)")
        corners = None
        if drive == "push-pull" and outputs is not None:
            entry = _entry(ibis, component, pin)
            corners = outputs(ibis, entry, _model_of(ibis, entry),
                              _c_package(ibis, component, entry))
        if corners is not None:
            values.pop("r_out", None)
            if warnings is not None:
                warnings.extend(corners.warnings)
        key = function.split("-")[-1] if function != "gpio" else pin.lower()
        if key in used:  # a second pin of one function (CS0, CS1): named after itself
            key = pin.lower()
        used.add(key)
        head = f"pins.{toml_key(key)}"
        model_here = _model_of(ibis, _entry(ibis, component, pin))
        origins[f"pins.{key}"] = (ibis.path, model_here.line, f"[Model] {model_here.name}")
        for f, d in values.items():
            origins[f"pins.{key}.{f}"] = ((None, None, "--i-ol") if f == "i_ol" else
                                         (ibis.path, d.line, d.keyword))
        body += ["", f"[{head}]", f"function = {_toml_string(function)}",
                 f"drive = {_toml_string(drive)}"]
        body += [f"{f} = {_value(values[f])}" for f in _ORDER if f in values]
        if corners is not None:
            body += _edges_lines(corners.slow)
            if corners.fast is not None:
                body += ["", f"[{head}.fast]"] + _edges_lines(corners.fast)
    model, vr = supply
    lines.append(_supply_line(ibis, model, vr))
    where = "voltage range" if model.voltage_range is not None else "pullup reference"
    origins["supply"] = (ibis.path, model.lines.get(where, model.line),
                         f"[Model] {model.name}, [{where.title()}]")
    body += _timing_lines(ibis, component, pins)
    return "\n".join(lines + body) + "\n"


def _entry(ibis: IbisFile, component: str, pin: str):
    return next(p for p in ibis.components[component].pins if pin in (p.name, p.signal))


def _c_package(ibis: IbisFile, component: str, entry) -> float:
    """The pin's package capacitance: its C_pin, else the package's typical C_pkg."""
    if entry.c_pin is not None:
        return entry.c_pin
    pkg = ibis.components[component].package.get("c_pkg")
    return pkg.typ if pkg is not None else 0.0


def _edge_value(value: float, typ, source: str) -> str:
    t = f", typ = {_toml_string(format_si(typ, 's', 6))}" if typ is not None else ""
    return (f"{{ value = {_toml_string(format_si(value, 's', 6))}{t}, basis = \"ibis\", "
            f"source = {_toml_string(source)} }}")


def _edges_lines(corner: CornerEdges) -> list[str]:
    out = ["edges = ["]
    for row in corner.rows:
        parts = [f"load = {_toml_string(format_si(row['load'], 'F'))}"]
        for edge in ("rise", "fall"):
            if row.get(edge) is not None:
                parts.append(f"{edge} = " + _edge_value(row[edge], row.get(f"{edge}_typ"),
                                                        corner.sources[edge]))
        out.append("  { " + ", ".join(parts) + ", levels = \"10-90\" },")
    return out + ["]"]


def _timing_lines(ibis: IbisFile, component: str, pins: dict[str, str]) -> list[str]:
    """``test_load`` from the Cref of the first mapped output's model that states one."""
    for pin in pins:
        entry = next((p for p in ibis.components[component].pins
                      if pin in (p.name, p.signal)), None)
        if entry is None or entry.model.upper() in ("POWER", "GND", "NC"):
            continue
        model = _model_of(ibis, entry)
        kind = model.model_type.lower()
        if "cref" not in model.params or kind.startswith("input") or kind == "terminator":
            continue
        name = ibis.header.get("file name", "") or Path(ibis.path).name
        extra = [f"{k} {format_si(float(model.params[p]), u)}"
                 for k, p, u in (("Rref", "rref", "Ω"), ("Vref", "vref", "V"),
                                 ("Vmeas", "vmeas", "V")) if p in model.params]
        src = (f"{name} rev {ibis.file_rev}, [Model] {model.name}, Cref (the load its "
               "timing is stated into"
               + ("; " + ", ".join(extra) + ": not held by the part format, whose test_load "
                  "is a capacitance" if extra else "") + ")")
        value = format_si(float(model.params["cref"]), "F")
        return ["", "[timing]", f"test_load = {{ value = {_toml_string(value)}, "
                f"basis = \"ibis\", source = {_toml_string(src)} }}"]
    return []


def _supply_line(ibis, model, vr) -> str:
    lo = min(v for v in (vr.typ, vr.min, vr.max) if v is not None)
    hi = max(v for v in (vr.typ, vr.min, vr.max) if v is not None)
    name = ibis.header.get("file name", "") or Path(ibis.path).name
    where = "[Voltage Range]" if model.voltage_range is not None else "[Pullup Reference]"
    # an IBIS file states the supply its tables were taken at, not the part's rating:
    # the source says so, for the engineer to replace with the datasheet's range
    src = _toml_string(f"{name} rev {ibis.file_rev}, [Model] {model.name}, {where} "
                       "(the supply the model's tables were taken at, standing in for the "
                       "datasheet's operating range)")
    return (f"supply = {{ min = {{ value = {_toml_string(format_si(lo, 'V'))}, basis = \"ibis\", "
            f"source = {src} }}, max = {{ value = {_toml_string(format_si(hi, 'V'))}, "
            f"basis = \"ibis\", source = {src} }}, typ = {_toml_string(format_si(vr.typ, 'V'))} }}")


def import_part(library: loader.Library, ibis: IbisFile, component: str,
                pins: dict[str, str], new_id: str, into_folder: str | Path, **kw) -> Path:
    """Write ``<into_folder>/<new_id>.toml`` from ``component`` of ``ibis``; the path."""
    _check_id(new_id)
    if new_id in library.files:
        raise LibraryError(M.PART_ID_EXISTS, field="id", value=new_id,
                           file=str(library.files[new_id].path),
                           hint="choose another id with --id")
    _refuse_builtin(Path(into_folder), "an imported part belongs in a team folder",
                    "name a team library folder with --into")
    origins: dict = {}
    text = part_text(ibis, component, pins, new_id, origins=origins, **kw)
    target = Path(into_folder) / f"{new_id}.toml"
    try:  # before the folder is made: a refused part leaves nothing behind
        part = _validate(library, new_id, target, text)
    except LibraryError as err:
        raise _in_ibis(err, str(target), origins) from None
    folder = team_folder(into_folder, "an imported part belongs in a team folder")
    path = write_new_part(library, new_id, folder / f"{new_id}.toml", text)
    if kw.get("warnings") is not None:  # what the part lacks to be of use on a bus
        pf = loader.PartFile(path, tomllib.loads(text), text, False)
        for w in pin_set_warnings(part, pf, every_sink=True):
            sink = w.expected == M.SINK_POINT_RULE
            kw["warnings"].append((w.with_hint(M.IBIS_GIVE_I_OL) if sink else w).message)
    return path


def _in_ibis(err: LibraryError, target: str, origins: dict) -> LibraryError:
    """A problem of the part text (in ``target``, never written) named where its value
    was read: the IBIS file's line and keyword (``--i-ol`` for the current given), the
    part's field said in the hint; a problem of another file is kept as it is."""
    if err.file != target or err.field is None:
        return err
    key = max((k for k in origins if not k or _within(err.field, k)), key=len)
    file, line, keyword = origins[key]
    said = M.IBIS_VALUE_WOULD_BE.format(field=err.field)
    return LibraryError(err.problem, file=file, line=line, field=keyword, value=err.value,
                        expected=err.expected,
                        hint=f"{err.hint}; {said}" if err.hint else said)
