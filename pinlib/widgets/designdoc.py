"""Design-file text a workbench writes (tomlkit), and the trace controls behind it."""

from __future__ import annotations

import os
from pathlib import Path

import ipywidgets as W
import tomlkit

from pinlib.design import FORMAT as DESIGN_FORMAT
from pinlib.design import Design, design_from_text
from pinlib.library.loader import BUILTIN_DIR, Library
from pinlib.tomlfile import tomllib
from pinlib.widgets.common import (
    _LABEL,
    _WIDE,
    _num,
    _Panel,
)

# =========================================================================== traces


class _Trace:
    """Trace controls: geometry (microstrip, stripline or per-length values) and length."""

    KINDS = (("microstrip", "microstrip"), ("stripline", "stripline"),
             ("per-length values", "per-length"))

    def __init__(self, panel: _Panel, *, length_cm: float, max_cm: float, min_cm: float = 0.0):
        self.kind = W.Dropdown(options=self.KINDS, value="microstrip", description="Trace",
                               style=_LABEL, layout=_WIDE)
        self.length = W.FloatSlider(value=length_cm, min=min_cm, max=max_cm, step=0.5,
                                    description="Length (cm)", continuous_update=False,
                                    style=_LABEL, layout=_WIDE)
        self.width = W.BoundedFloatText(value=0.20, min=0.01, max=20.0, step=0.01,
                                        description="Width (mm)", style=_LABEL, layout=_WIDE)
        self.height = W.BoundedFloatText(value=0.18, min=0.01, max=20.0, step=0.01,
                                         description="Height (mm)", style=_LABEL, layout=_WIDE)
        self.thickness = W.BoundedFloatText(value=35.0, min=1.0, max=500.0, step=1.0,
                                            description="Copper (µm)", style=_LABEL,
                                            layout=_WIDE)
        self.er = W.BoundedFloatText(value=4.2, min=1.0, max=20.0, step=0.1, description="εr",
                                     style=_LABEL, layout=_WIDE)
        self.c_per_cm = W.BoundedFloatText(value=0.8, min=0.0, max=100.0, step=0.05,
                                           description="C (pF/cm)", style=_LABEL, layout=_WIDE)
        self.delay_per_cm = W.BoundedFloatText(value=60.0, min=10.0, max=10000.0, step=1.0,
                                               description="Delay (ps/cm)", style=_LABEL,
                                               layout=_WIDE)
        self.kind.observe(self._show_fields, names="value")
        panel._watch(self.kind, self.length, self.width, self.height, self.thickness, self.er,
                     self.c_per_cm, self.delay_per_cm)
        panel._choice("geometry", self.kind)
        panel._number("length", self.length, 100.0)
        panel._number("width", self.width, 1e3)
        panel._number("height", self.height, 1e3)
        panel._number("thickness", self.thickness, 1e6)
        panel._number("er", self.er)
        panel._number("capacitance_per_length", self.c_per_cm, 1e12 / 100.0)
        panel._number("delay_per_length", self.delay_per_cm, 1e12 / 100.0)
        self.box = W.VBox([self.kind, self.length, self.width, self.height, self.thickness,
                           self.er, self.c_per_cm, self.delay_per_cm])
        self._show_fields()

    def _show_fields(self, change=None) -> None:
        kind = self.kind.value
        board = kind != "per-length"
        for c in (self.width, self.height, self.thickness, self.er):
            c.layout.display = None if board else "none"
        for c in (self.c_per_cm, self.delay_per_cm):
            c.layout.display = None if not board else "none"
        # microstrip: height above its plane; stripline: plane-to-plane spacing
        self.height.description = "Spacing (mm)" if kind == "stripline" else "Height (mm)"

    def geometry(self) -> dict | None:
        """The ``[board.geometry.NAME]`` table, or None for per-length values."""
        kind = self.kind.value
        if kind == "per-length":
            return None
        out = {"kind": kind, "width": f"{_num(self.width.value)} mm"}
        out["spacing" if kind == "stripline" else "height"] = f"{_num(self.height.value)} mm"
        out["thickness"] = f"{_num(self.thickness.value)} µm"
        out["er"] = float(self.er.value)
        return out

    def entry(self, geometry_name: str) -> dict:
        """The trace or line inline table (without a series resistor)."""
        out = {"length": f"{_num(self.length.value)} cm"}
        if self.kind.value == "per-length":
            out["capacitance"] = f"{_num(self.c_per_cm.value)} pF/cm"
            out["delay"] = f"{_num(self.delay_per_cm.value)} ps/cm"
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

