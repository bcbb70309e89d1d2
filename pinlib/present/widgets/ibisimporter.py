"""Workbench 04, second panel: a team part from an IBIS file, previewed before it is
written (:class:`IbisImporter`).

The panel reads the file (:func:`pinlib.library.ibis.read_ibis`), offers its components,
and for the chosen one a function per pin, guessed from the signal name
(:func:`pinlib.library.pinguess.guess_function`).  *Preview* shows every value the
import would write, each with its provenance (the text of
:func:`pinlib.library.ibisimport.part_text`, the driver corners from
:func:`pinlib.engines.ibisdriver.output_corners`), and the fit's warnings; *Write* writes
the part through :func:`pinlib.library.ibisimport.import_part` (locked, atomic, never
into the built-in library).  Nothing here computes a value.
"""

from __future__ import annotations

import copy
import os
import re
from pathlib import Path

import ipywidgets as W

from pinlib.core import messages as M
from pinlib.core.errors import InputError, PinlibError
from pinlib.core.pathkind import FOLDER, path_kind
from pinlib.core.protocols import PIN_FUNCTIONS
from pinlib.core.tomlfile import tomllib
from pinlib.library import load_library
from pinlib.library.schema import CATEGORIES
from pinlib.present.widgets.common import (
    StaticView,
    _Panel,
    block_layout,
    button_layout,
    field_layout,
    style,
)
from pinlib.present.widgets.markup import (
    CELL,
    HEAD,
    NUM,
    TABLE,
    _caption,
    block,
    caution_html,
    e,
    error_html,
    note,
)

#: The choice of a pin that is not imported.
SKIP = "(not imported)"
_WIDTH = "400px"
#: The IBIS file's row (the field and its button): room for a path of some 80 characters.
_FILE_ROW = "860px"

#: The panel's label of each field the import names as the command's option (or as the
#: part file's key): a message here names what the user sees.
_LABELS = {"--component": "Component", "--category": "Category", "--pin": "pin functions",
           "--id": "Part id", "id": "Part id", "--i-ol": "i_ol", "--into": "team folder"}
#: Hints written for the command, as the panel says them.
_HINTS = {"choose another id with --id": "choose another Part id",
          "name a team library folder with --into":
              "the part is written into the panel's team folder; open the panel on "
              "another folder"}


def for_panel(err: PinlibError) -> PinlibError:
    """``err`` naming the panel's fields by their labels ("Component", "Part id"), never
    by the command's options ("--component", "--id")."""
    err = copy.copy(err)
    err.field = _LABELS.get(err.field, err.field)
    if err.hint:
        hint = _HINTS.get(err.hint, err.hint)
        err.hint = re.sub(r"--[a-z][a-z-]*", lambda m: _LABELS.get(m.group(0), m.group(0)),
                          hint)
    return err


def _s() -> dict:
    return {"style": style(), "layout": field_layout(width=_WIDTH, max_width="100%")}


class IbisImporter(_Panel):
    """Pick an IBIS file, a component and its pins' functions; preview the derived
    values with their provenance; write the team part.

    Parameters
    ----------
    folder : path
        The team library folder the part is written into.
    library_folders : iterable of paths
        Other team folders to read (a part's id must not clash with theirs).

    Attributes
    ----------
    ibis : IbisFile or None
        The file last read.
    text : str or None
        The part file of the last preview.
    warnings : list of str
        The fit's warnings of the last preview.
    written : Path or None
        The file the last write made.
    """

    def __init__(self, folder: str | os.PathLike, *, library_folders=(),
                 title: str | None = None):
        super().__init__()
        self.folder = Path(folder)
        self.library_folders = [Path(f) for f in library_folders]
        self.ibis = None
        self.text: str | None = None
        self.warnings: list[str] = []
        self.written: Path | None = None
        self._read_line = ""  # what the last read said
        # a path is longer than an id: the field takes the width beside its button
        self.file = W.Text(placeholder="path/to/part.ibs", description="IBIS file",
                           style=style(), layout=W.Layout(width="auto", flex="1 1 auto",
                                                          min_width=_WIDTH, max_width="100%"))
        self.read_button = W.Button(description="Read the file", layout=button_layout("160px"))
        self.component = W.Dropdown(options=[], description="Component", **_s())
        self.new_id = W.Text(placeholder="io-buffer-acme", description="Part id", **_s())
        self.category = W.Dropdown(options=list(CATEGORIES), value="logic",
                                   description="Category", **_s())
        self.i_ol = W.Text(placeholder="3 mA (open-drain pins)", description="i_ol", **_s())
        self.preview_button = W.Button(description="Preview", layout=button_layout("160px"))
        self.write_button = W.Button(description="Write the part", layout=button_layout("160px"))
        self.pin_box = W.VBox(layout=W.Layout(width="100%"))
        self.pins: dict[str, W.Dropdown] = {}
        self.preview_html = W.HTML(layout=block_layout())
        self.message = W.HTML(layout=block_layout())
        self.read_button.on_click(lambda _b: self.read())
        self.preview_button.on_click(lambda _b: self.preview())
        self.write_button.on_click(lambda _b: self.write())
        self.component.observe(lambda _c: self._component_chosen(), names="value")
        form = W.VBox([W.HBox([self.file, self.read_button],
                              layout=W.Layout(width="100%", max_width=_FILE_ROW,
                                              align_items="center")), self.component,
                       W.HTML(block("The function of each pin (guessed from its signal "
                                    "name; pins left out are not imported):")),
                       self.pin_box, self.new_id, self.category, self.i_ol,
                       W.HBox([self.preview_button, self.write_button])],
                      layout=W.Layout(width="100%"))
        self.widget = W.VBox([self._header(title or f"Import a part from IBIS into {self.folder}"),
                              form, self.message, self.preview_html],
                             layout=W.Layout(width="100%"))

    # ------------------------------------------------------------------ controls
    def set(self, **values):
        """Fill fields by name: ``file``, ``component``, ``id``, ``category``, ``i_ol``,
        and ``pins`` (a dict of pin signal to function, or to None to leave it out)."""
        names = {"file": self.file, "component": self.component, "id": self.new_id,
                 "category": self.category, "i_ol": self.i_ol}
        unknown = sorted(set(values) - set(names) - {"pins"})
        if unknown:
            raise InputError(M.UNKNOWN_FIELD, field=unknown[0],
                             expected="one of " + ", ".join([*names, "pins"]))
        if "file" in values:
            self.file.value = values["file"]
            self.read()
        for name, value in values.items():
            if name not in ("pins", "file"):
                names[name].value = value
        for signal, function in (values.get("pins") or {}).items():
            self.pins[signal].value = function or SKIP
        return self

    def read(self) -> bool:
        """Read the file named in the first field; offer its components."""
        from pinlib.library.ibis import read_ibis

        path = self.file.value.strip()
        try:
            if not path or path_kind(path)[0] == FOLDER:  # read_ibis("") reads the folder
                raise InputError(M.FILE_NAME_NEEDED, field="IBIS file", value=path or None,
                                 expected="the path of an IBIS file, such as "
                                          "path/to/part.ibs")
            self.ibis = read_ibis(path)
        except PinlibError as err:
            self.ibis = None
            self.component.options = []
            self._pins_of_component()
            self.message.value = error_html(for_panel(err))
            return False
        components = list(self.ibis.components)
        self.component.options = components
        if self.component.value not in components and components:
            # after a refused read the list was empty and its value None: the first
            # component is chosen, as on a first read
            self.component.value = components[0]
        self._read_line = block(f"read {e(self.file.value.strip())}: IBIS "
                                f"{e(self.ibis.header.get('ibis ver', '?'))}, file rev "
                                f"{e(self.ibis.file_rev or '?')}")
        self._pins_of_component()
        self.message.value = self._read_line
        return True

    def _component_chosen(self) -> None:
        """Another component: its pins, and a message about the last one's preview or
        write gone (it is no longer about what is shown)."""
        self._pins_of_component()
        if self.ibis is not None:
            self.message.value = self._read_line

    def _pins_of_component(self) -> None:
        from pinlib.library.pinguess import guess_function

        self.pins = {}
        rows = []
        if self.ibis is not None and self.component.value in self.ibis.components:
            for pin in self.ibis.components[self.component.value].pins:
                if pin.model.upper() in ("POWER", "GND", "NC") or pin.signal in self.pins:
                    continue
                guess = guess_function(pin.signal)
                box = W.Dropdown(options=[SKIP, *PIN_FUNCTIONS], value=guess or SKIP,
                                 description=f"{pin.signal}", **_s())
                self.pins[pin.signal] = box
                rows.append(box)
        self.pin_box.children = rows
        self.text = None
        self.preview_html.value = ""

    def mapping(self) -> dict[str, str]:
        """The pins chosen, by signal name, with their functions."""
        return {sig: box.value for sig, box in self.pins.items() if box.value != SKIP}

    # ------------------------------------------------------------------ actions
    def _arguments(self) -> dict:
        from pinlib.core.quantity import parse
        from pinlib.engines.ibisdriver import output_corners

        text = self.i_ol.value.strip()
        return {"category": self.category.value, "outputs": output_corners,
                "i_ol": parse(text, "A", field="i_ol") if text else None}

    def preview(self) -> str | None:
        """The part file the import would write, shown as a table of its values with
        their provenance; None (and the problem shown) when refused."""
        from pinlib.library.ibisimport import part_text

        self.warnings = []
        try:
            if self.ibis is None:
                raise InputError(M.IBIS_PIN_MAPPING, field="IBIS file",
                                 expected="a file read with 'Read the file'")
            self.text = part_text(self.ibis, self.component.value, self.mapping(),
                                  self.new_id.value.strip() or "preview",
                                  warnings=self.warnings, **self._arguments())
        except PinlibError as err:
            self.text = None
            self.message.value = error_html(for_panel(err))
            return None
        self.message.value = "".join(block(f"warning: {e(w)}") for w in self.warnings)
        self.preview_html.value = values_table(self.text)
        return self.text

    def write(self) -> Path | None:
        """Write the part into the team folder; None (and the problem shown) when refused."""
        from pinlib.library.ibisimport import import_part

        if self.preview() is None:
            return None
        # the import's warnings: the fit's, as the preview gave them, then what the part
        # lacks to be of use on a bus
        written: list[str] = []
        try:
            folders = self.library_folders + (
                [self.folder] if path_kind(self.folder)[0] == FOLDER else [])
            path = import_part(load_library(folders), self.ibis, self.component.value,
                               self.mapping(), self.new_id.value.strip(), self.folder,
                               warnings=written, **self._arguments())
        except PinlibError as err:
            self.message.value = error_html(for_panel(err))
            return None
        self.written = path
        self.warnings = written
        self.message.value = block(f"created <code>{e(path)}</code>") + "".join(
            block(f"warning: {e(w)}") for w in self.warnings)
        return path

    def update(self) -> None:
        self.preview()

    def static_view(self) -> StaticView:
        """The last preview, as plain HTML."""
        return StaticView(caution_html() + (self.preview_html.value or note("no preview")))


def _rows(prefix: str, table: dict):
    """(field path, value, typ, basis, source) of every value of a part file's table."""
    for key, value in table.items():
        path = f"{prefix}.{key}" if prefix else key
        if isinstance(value, dict) and "value" in value:
            yield (path, value["value"], value.get("typ", ""), value.get("basis", ""),
                   value.get("source", ""))
        elif isinstance(value, dict):
            yield from _rows(path, value)
        elif isinstance(value, list):
            for item in value:
                if isinstance(item, dict):
                    load = item.get("load", "")
                    inner = {k: v for k, v in item.items() if k not in ("load", "levels")}
                    yield from _rows(f"{path}[{load}]", inner)
        elif key not in ("format", "id", "title", "category", "function", "drive"):
            yield path, str(value), "", "", ""


#: A quantity as the part file writes it: a number with a decimal point, then its unit.
_QUANTITY = re.compile(r"([+-]?\d+\.\d+) ?([A-Za-zµΩ%]{1,4})")


def _cell(style: str, text, *, number: bool) -> str:
    """A cell of the values table: a quantity with three significant digits, as every
    table of pinlib shows figures ("1.27 ns"; the file keeps six, "1.27329 ns", shown as
    the cell's tooltip)."""
    text = str(text)
    m = _QUANTITY.fullmatch(text.strip()) if number and len(text) < 40 else None
    if m is None:
        return f'<td style="{style}">{e(text)}</td>'
    shown = f"{float(m.group(1)):.3g} {m.group(2)}"
    if shown == text.strip() or "e" in shown.split()[0]:
        return f'<td style="{style}">{e(text)}</td>'
    return f'<td style="{style}" title="{e(text)}, as written in the file">{e(shown)}</td>'


def values_table(text: str) -> str:
    """An HTML table of the values of a part file's text, each with its provenance."""
    data = tomllib.loads(text)
    body = {k: v for k, v in data.items() if k in ("supply", "pins", "timing")}
    # the value and typ columns as the figures tables' (a quantity never wraps)
    styles = (CELL, NUM, NUM, CELL, CELL)
    rows = "".join(
        "<tr>" + "".join(_cell(st, c, number=i in (1, 2))
                         for i, (st, c) in enumerate(zip(styles, row, strict=True)))
        + "</tr>"
        for row in _rows("", body))
    head = "".join(f'<th style="{HEAD}">{h}</th>'
                   for h in ("field", "value", "typ", "basis", "source"))
    return (f'<table style="{TABLE}">{_caption("Values the import writes")}'
            f"<tr>{head}</tr>{rows}</table>")
