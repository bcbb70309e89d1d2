"""Design-file text a workbench writes (tomlkit), and the trace controls behind it."""

from __future__ import annotations

import os
from pathlib import Path

import ipywidgets as W
import tomlkit

from pinlib.core.tomlfile import tomllib
from pinlib.library.loader import BUILTIN_DIR, Library
from pinlib.model.design import FORMAT as DESIGN_FORMAT
from pinlib.model.design import Design, design_from_text
from pinlib.present.widgets.common import (
    QuantityField,
    _num,
    _Panel,
    field_layout,
    style,
)

# =========================================================================== traces


class _Trace:
    """Trace controls: geometry (microstrip, stripline or per-length values) and length,
    each value a :class:`~pinlib.present.widgets.common.QuantityField` read with its unit."""

    KINDS = (("microstrip", "microstrip"), ("stripline", "stripline"),
             ("per-length values", "per-length"))

    def __init__(self, panel: _Panel, *, length: float, max_length: float,
                 min_length: float = 0.0):
        self.kind = W.Dropdown(options=self.KINDS, value="microstrip", description="Trace",
                               style=style(), layout=field_layout())
        q = panel._quantity
        cm, mm = ("cm", 1e-2), ("mm", 1e-3)
        self.length = q(QuantityField("length", "Length", "m", length, lo=min_length,
                                      hi=max_length, shown=cm, placeholder="14 cm"))
        self.width = q(QuantityField("width", "Width", "m", 0.20e-3, lo=0.01e-3, hi=20e-3,
                                     shown=mm, placeholder="0.2 mm"))
        self.height = q(QuantityField("height", "Height", "m", 0.18e-3, lo=0.01e-3, hi=20e-3,
                                      shown=mm, placeholder="0.18 mm"))
        self.thickness = q(QuantityField("thickness", "Copper", "m", 35e-6, lo=1e-6, hi=500e-6,
                                         shown=("µm", 1e-6), placeholder="35 µm"))
        self.er = q(QuantityField("er", "εr", "", 4.2, lo=1.0, hi=20.0, placeholder="4.2"))
        self.c_per_length = q(QuantityField(
            "capacitance_per_length", "C per length", "F/m", 0.8e-10, lo=0.0, hi=1e-8,
            shown=("pF/cm", 1e-10), placeholder="0.8 pF/cm"))
        self.delay_per_length = q(QuantityField(
            "delay_per_length", "Delay per length", "s/m", 60e-10, lo=1e-9, hi=1e-6,
            shown=("ps/cm", 1e-10), placeholder="60 ps/cm"))
        self.kind.observe(self._show_fields, names="value")
        panel._watch(self.kind)
        panel._choice("geometry", self.kind)
        self.box = W.VBox([self.kind] + [f.box for f in (
            self.length, self.width, self.height, self.thickness, self.er, self.c_per_length,
            self.delay_per_length)], layout=W.Layout(width="100%"))
        self._show_fields()

    def _show_fields(self, change=None) -> None:
        kind = self.kind.value
        board = kind != "per-length"
        for f in (self.width, self.height, self.thickness, self.er):
            f.box.layout.display = None if board else "none"
        for f in (self.c_per_length, self.delay_per_length):
            f.box.layout.display = None if not board else "none"
        # microstrip: height above its plane; stripline: plane-to-plane spacing
        self.height.description = self.height.text.description = \
            "Spacing" if kind == "stripline" else "Height"

    def geometry(self) -> dict | None:
        """The ``[board.geometry.NAME]`` table, or None for per-length values."""
        kind = self.kind.value
        if kind == "per-length":
            return None
        out = {"kind": kind, "width": f"{_num(self.width.value * 1e3)} mm"}
        out["spacing" if kind == "stripline" else "height"] = \
            f"{_num(self.height.value * 1e3)} mm"
        out["thickness"] = f"{_num(self.thickness.value * 1e6)} µm"
        out["er"] = float(self.er.value)
        return out

    def entry(self, geometry_name: str) -> dict:
        """The trace or line inline table (without a series resistor)."""
        out = {"length": f"{_num(self.length.value * 100.0)} cm"}
        if self.kind.value == "per-length":
            out["capacitance"] = f"{_num(self.c_per_length.value * 1e10)} pF/cm"
            out["delay"] = f"{_num(self.delay_per_length.value * 1e10)} ps/cm"
        else:
            out["geometry"] = geometry_name
        return out


def _inline(d: dict):
    t = tomlkit.inline_table()
    for k, v in d.items():
        t[k] = v
    return t


def _design_doc(title: str, comment: str, library: list[str], geometry: dict | None):
    doc = tomlkit.document()
    doc.add(tomlkit.comment(comment))
    doc.add("format", DESIGN_FORMAT)
    doc.add("title", title)
    if library:
        doc.add("library", library)
    if geometry is not None:
        table = tomlkit.table()
        for k, v in geometry.items():
            table.add(k, v)
        geoms = tomlkit.table(is_super_table=True)
        geoms.add("trace", table)
        board = tomlkit.table(is_super_table=True)
        board.add("geometry", geoms)
        doc.add(tomlkit.nl())
        doc.add("board", board)
    return doc


def _with_bus(doc, bus) -> str:
    """The design text of ``doc`` (from :func:`_design_doc`) with ``bus`` as its one bus."""
    aot = tomlkit.aot()
    aot.append(bus)
    doc.add(tomlkit.nl())
    doc.add("bus", aot)
    return tomlkit.dumps(doc)


def _devices_array(devices: list[dict]):
    arr = tomlkit.array()
    for d in devices:
        arr.append(_inline(d))
    return arr.multiline(True)


def _library_entries(folders: list[Path], base: Path | None) -> list[str]:
    out = []
    for f in folders:
        f = Path(f)
        if base is None:
            out.append(f.as_posix())
        else:
            out.append(Path(os.path.relpath(f.resolve(), base.resolve())).as_posix())
    return out


def _team_folders(library: Library) -> list[Path]:
    builtin = Path(BUILTIN_DIR).resolve()
    return [Path(f) for f in library.folders if Path(f).resolve() != builtin]


def _load(text: str, library: Library, path: Path | None = None) -> Design:
    return design_from_text(tomllib.loads(text), text, path, library=library)

