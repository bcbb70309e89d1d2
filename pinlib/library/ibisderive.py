"""Pin values derived from an IBIS file by arithmetic on its stated numbers.

No physics model is fitted here (a fit of pinlib's driver model to the waveforms needs
the physics layer and belongs in the engines); each value is a sum, a reading of a
table between two of its rows, or the slope of a table's rows:

- ``c_in`` = C_comp + C_pin: the largest C_comp of the three columns plus the pin's own
  C_pin (the package's largest C_pkg where the pin gives none): the most capacitance
  the pin can load a line with, the direction that hurts.
- ``v_il`` = Vinl and ``v_ih`` = Vinh: IBIS states them as the receiver's guaranteed
  input thresholds (one value, no corners), which is what a part file stores (max VIL,
  min VIH).
- the open-drain sink's ``v_ol`` at a stated ``i_ol``: the ``[Pulldown]`` table read at
  that current, by straight-line interpolation between the two rows around it, in each
  column; the highest voltage of the columns (the weakest corner) is stored.
- push-pull ``r_out``: the slope dV/dI of the rows of the ``[Pulldown]`` table (and of
  the ``[Pullup]`` table, whose voltages IBIS counts down from the supply) within
  :data:`NEAR_RAIL` of the supply of their own rail, by least squares through the
  origin; the largest of the corners and of the two tables (the weakest drive, which
  slows edges) is stored, the typical one in ``typ``.
"""

from __future__ import annotations

from pinlib.core import messages as M
from pinlib.core.errors import LibraryError
from pinlib.core.valueclass import value_class
from pinlib.library.ibis import Component, IbisFile, Model, Pin, Table

__all__ = ["NEAR_RAIL", "Derived", "derive_pin", "c_in", "thresholds", "sink_v_ol", "r_out"]

#: The part of the supply voltage, from the rail, over which a table's slope is taken.
NEAR_RAIL = 0.2

_CORNERS = ("typ", "min", "max")


@value_class(frozen=True)
class Derived:
    """One value for a part file: SI value, unit, typical value, source and method, and
    where in the IBIS file it was read (``line`` and ``keyword``, e.g. ``[Model] io33,
    C_comp``: what a value the part format refuses is named by)."""

    field: str
    value: float
    unit: str
    source: str
    method: str
    typ: float | None = None
    line: int | None = None
    keyword: str | None = None


def _source(ibis: IbisFile, model: Model | None, corner: str) -> str:
    name = ibis.header.get("file name", "") or ibis.path
    where = f", [Model] {model.name}" if model is not None else ""
    return f"{name} rev {ibis.file_rev}{where}, {corner}"


def _error(ibis: IbisFile, problem: str, line: int, keyword: str, value=None, expected=None):
    return LibraryError(problem, file=ibis.path, line=line, field=keyword, value=value,
                        expected=expected)


def _largest(values) -> tuple[float, str]:
    pairs = [(v, c) for v, c in zip(values, _CORNERS, strict=True) if v is not None]
    return max(pairs)


def c_in(ibis: IbisFile, comp: Component, pin: Pin, model: Model) -> Derived:
    """C_comp (largest column) + C_pin (or the package's largest C_pkg)."""
    cc = model.params["c_comp"]
    comp_c, corner = _largest((cc.typ, cc.min, cc.max))
    if pin.c_pin is not None:
        pin_c, pin_typ, what = pin.c_pin, pin.c_pin, f"C_pin of pin {pin.name}"
    elif "c_pkg" in comp.package:
        pkg = comp.package["c_pkg"]
        pin_c, _ = _largest((pkg.typ, pkg.min, pkg.max))
        pin_typ = pkg.typ
        what = "the largest C_pkg of [Package]"
    else:
        pin_c, pin_typ, what = 0.0, 0.0, "no package capacitance given"
    return Derived("c_in", comp_c + pin_c, "F", _source(ibis, model, f"C_comp {corner}"),
                   f"C_comp ({corner}) + {what}", typ=cc.typ + pin_typ,
                   line=model.lines.get("c_comp", model.line),
                   keyword=f"[Model] {model.name}, C_comp")


def thresholds(ibis: IbisFile, model: Model) -> list[Derived]:
    out = []
    for key, fld in (("vinl", "v_il"), ("vinh", "v_ih")):
        if key in model.params:
            name = "Vinl" if key == "vinl" else "Vinh"
            out.append(Derived(fld, float(model.params[key]), "V",
                               _source(ibis, model, name), f"{name} as stated",
                               line=model.lines.get(key, model.line),
                               keyword=f"[Model] {model.name}, {name}"))
    return out


def _columns(table: Table):
    return {"typ": table.typ, "min": table.min, "max": table.max}


def _rows(table: Table, column, lo: float, hi: float):
    pairs = zip(table.x, column, strict=True)
    return [(x, y) for x, y in pairs if y is not None and lo <= x <= hi]


def sink_v_ol(ibis: IbisFile, model: Model, i_ol: float) -> Derived:
    """The ``[Pulldown]`` voltage at ``i_ol`` (A, into the pin), the weakest corner's."""
    table = _table(ibis, model, "pulldown")
    vcc = model.supply().typ
    found = []
    for corner, column in _columns(table).items():
        rows = _rows(table, column, 0.0, vcc)
        for (x0, y0), (x1, y1) in zip(rows[:-1], rows[1:], strict=True):
            if y0 <= i_ol <= y1 and y1 > y0:
                found.append((x0 + (i_ol - y0) * (x1 - x0) / (y1 - y0), corner))
                break
    if not found:
        raise _error(ibis, M.IBIS_CURRENT_OUTSIDE_TABLE, table.line, table.keyword, i_ol,
                     "a current the table reaches between 0 V and the supply")
    v, corner = max(found)
    typ = next((x for x, c in found if c == "typ"), None)
    return Derived("v_ol", v, "V", _source(ibis, model, f"[Pulldown] {corner}"),
                   "the [Pulldown] table read at i_ol (straight line between rows), "
                   "the highest voltage of its corners", typ=typ, line=table.line,
                   keyword=f"[Model] {model.name}, {table.keyword}")


def _table(ibis: IbisFile, model: Model, key: str) -> Table:
    if key not in model.tables:
        keyword = "[Pulldown]" if key == "pulldown" else "[Pullup]"
        raise _error(ibis, M.IBIS_MISSING_KEYWORD.format(keyword=keyword), model.line,
                     "[Model]", model.name, f"{keyword} to derive a driver's values")
    return model.tables[key]


def _slope(ibis: IbisFile, table: Table, column, vcc: float, sign: float) -> float | None:
    rows = _rows(table, column, 0.0, NEAR_RAIL * vcc)
    sxx = sum(x * x for x, _ in rows)
    sxy = sum(x * sign * y for x, y in rows)
    if len(rows) < 2 or sxy <= 0:
        return None
    return sxx / sxy  # V = r * I through the origin: r = sum(V^2) / sum(V*I)


def r_out(ibis: IbisFile, model: Model) -> Derived:
    """The largest near-rail resistance of the pull-down and pull-up tables' corners."""
    vcc = model.supply().typ
    found, typ = [], []
    for key, sign in (("pulldown", 1.0), ("pullup", -1.0)):
        if key not in model.tables and found:
            continue
        table = _table(ibis, model, key)
        for corner, column in _columns(table).items():
            r = _slope(ibis, table, column, vcc, sign)
            if r is not None:
                found.append((r, f"{table.keyword} {corner}"))
                if corner == "typ":
                    typ.append(r)
    if not found:
        table = model.tables["pulldown"]
        raise _error(ibis, M.IBIS_NO_SLOPE, table.line, table.keyword, None,
                     f"two rows or more between 0 V and {NEAR_RAIL:g} of the supply")
    r, corner = max(found)
    table = model.tables["pullup" if corner.startswith("[Pullup]") else "pulldown"]
    return Derived("r_out", r, "Ω", _source(ibis, model, corner),
                   f"slope dV/dI of the table rows within {NEAR_RAIL:.0%} of the supply "
                   "from the rail (least squares through the origin), the largest of "
                   "the tables and corners", typ=max(typ) if typ else None,
                   line=table.line, keyword=f"[Model] {model.name}, {table.keyword}")



def derive_pin(ibis: IbisFile, component: str, pin_name: str, *,
               drive: str = "push-pull", i_ol: float | None = None) -> dict[str, Derived]:
    """Every value pinlib derives for one pin of one component (by pin name or signal)."""
    comp = ibis.components[component]
    pin = next((p for p in comp.pins if pin_name in (p.name, p.signal)), None)
    if pin is None:
        raise _error(ibis, M.IBIS_UNKNOWN_PIN, comp.line, "[Pin]", pin_name,
                     "a pin name or signal name of [Component] " + comp.name)
    model = _model_of(ibis, pin)
    out = {"c_in": c_in(ibis, comp, pin, model)}
    out.update((d.field, d) for d in thresholds(ibis, model))
    kind = model.model_type.lower()
    drives = not kind.startswith("input") and kind not in ("terminator",)
    if drives and drive == "open-drain" and i_ol is not None:
        out["v_ol"] = sink_v_ol(ibis, model, i_ol)
    elif drives and drive == "push-pull":
        out["r_out"] = r_out(ibis, model)
    return out


def _model_of(ibis: IbisFile, pin: Pin) -> Model:
    """The pin's model; for a [Model Selector], its first (default) model."""
    name = pin.model
    if name in ibis.selectors and ibis.selectors[name]:
        name = ibis.selectors[name][0][0]
    if name not in ibis.models:
        raise _error(ibis, M.IBIS_UNKNOWN_MODEL, pin.line, "[Pin]", name,
                     "a pin driven by a [Model] of the file (not POWER, GND or NC)")
    return ibis.models[name]
