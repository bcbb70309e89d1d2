"""Workbench 04: record datasheet values into a team library (:class:`PartRecorder`)."""

from __future__ import annotations

import contextlib
import os
from pathlib import Path

import ipywidgets as W

from pinlib.core import messages as M
from pinlib.core.errors import InputError, LibraryError, PinlibError
from pinlib.core.pathkind import FOLDER, path_kind
from pinlib.library import load_library
from pinlib.library.loader import Library
from pinlib.present.widgets.common import (
    StaticView,
    _Panel,
    block_layout,
    button_layout,
    field_layout,
    set_options,
    style,
)
from pinlib.present.widgets.markup import (
    block,
    caution_html,
    e,
    error_html,
    inline_error,
    note,
    notice,
)

#: Width of a form field in the recorder (its error goes beside it). [px]
FORM_WIDTH = 400


def _field_row(control, error: W.HTML) -> W.Box:
    """A form field with its error beside it (under it when the row is too narrow)."""
    return W.Box([control, error], layout=W.Layout(display="flex", flex_flow="row wrap",
                                                   align_items="center", width="100%"))

# =========================================================================== recorder


class PartRecorder(_Panel):
    """Record datasheet values into a team library folder, through the library's API.

    Two forms: a new part that extends a class (:func:`pinlib.library.record.new_part`),
    and one value with its source and basis (:func:`pinlib.library.record.record_value`).
    What the library refuses is shown beside the field it is about (``errors``), and the
    file is left as it was.

    Parameters
    ----------
    folder : path
        The team library folder written into (created by the first new part).
    library_folders : iterable of paths
        Other team folders to read (their parts may be extended, not written).

    Attributes
    ----------
    errors : dict of str to PinlibError
        The last refusal, by the name of the field it is shown beside (``id``,
        ``extends``, ``basis``, ``source``, ``part``, ``field``, ``value``, ``typ``,
        ``form``).
    written : Path or None
        The file the last successful action wrote.
    warnings : list of LibraryError
        What the last value recorded was warned of (written all the same): a typ beyond
        its limit, an implausible value; shown under the message.
    """

    _NEW = ("id", "extends", "title", "new_basis", "new_source")
    #: The tabs' titles (short: a tab's width is limited).
    TAB_TITLES = ("New part", "Record a value")
    _REC = ("part", "field", "value", "typ", "basis", "source")

    def __init__(self, folder: str | os.PathLike, *, library_folders=(),
                 title: str | None = None):
        from pinlib.library.record import RECORD_BASES

        super().__init__()
        self.folder = Path(folder)
        self.library_folders = [Path(f) for f in library_folders]
        self.library = self._reload()
        self.errors: dict[str, PinlibError] = {}
        self.written: Path | None = None
        self.warnings: list[LibraryError] = []

        def s():  # each control its own style and layout
            return {"style": style(), "layout": field_layout(width=f"{FORM_WIDTH}px",
                                                             max_width="100%")}

        self.new_id = W.Text(placeholder="eeprom-i2c-acme", description="New id", **s())
        self.extends = W.Dropdown(options=sorted(self.library.parts), description="Extends",
                                  **s())
        self.new_title = W.Text(placeholder="the class's title", description="Title", **s())
        self.new_basis = W.Dropdown(options=list(RECORD_BASES) + ["generic"],
                                    value="datasheet", description="Basis", **s())
        self.new_source = W.Text(placeholder="document, revision", description="Source",
                                 **s())
        self.create_button = W.Button(description="Create the part",
                                      layout=button_layout("160px"))
        self.part = W.Dropdown(options=[], description="Team part", **s())
        self.field = W.Combobox(options=[], placeholder="sda.c_in", ensure_option=False,
                                description="Field", **s())
        self.value = W.Text(placeholder="12 pF", description="Value", **s())
        self.typ = W.Text(placeholder="optional", description="Typical", **s())
        self.basis = W.Dropdown(options=list(RECORD_BASES), value="datasheet",
                                description="Basis", **s())
        self.source = W.Text(placeholder="datasheet rev B, table 6", description="Source",
                             **s())
        self.record_button = W.Button(description="Record the value",
                                      layout=button_layout("160px"))
        self.message = W.HTML(layout=block_layout())
        names = {"id": self.new_id, "extends": self.extends, "title": self.new_title,
                 "new_basis": self.new_basis, "new_source": self.new_source,
                 "part": self.part, "field": self.field, "value": self.value, "typ": self.typ,
                 "basis": self.basis, "source": self.source}
        self.controls = names
        self.error_labels = {k: W.HTML(layout=W.Layout(flex="1 1 240px", min_width="0",
                                                       margin="0 0 0 8px"))
                             for k in names}
        self.create_button.on_click(lambda _b: self.create())
        self.record_button.on_click(lambda _b: self.record())
        self.part.observe(self._part_changed, names="value")
        for name, control in names.items():
            control.observe(lambda change, name=name: self._edited(name), names="value")
        self._refresh_parts()
        new_form = W.VBox(
            [W.HTML(block("A new part in the team folder that extends a stored class: it "
                          "starts with the class's values, and records its own source."))]
            + [_field_row(names[k], self.error_labels[k]) for k in self._NEW]
            + [self.create_button], layout=W.Layout(width="100%"))
        rec_form = W.VBox(
            [W.HTML(block("One value of a team part, with its unit, its source and its "
                          "basis; a refusal is shown beside its field and nothing is "
                          "written."))]
            + [_field_row(names[k], self.error_labels[k]) for k in self._REC]
            + [self.record_button], layout=W.Layout(width="100%"))
        self.tabs = W.Tab(children=[new_form, rec_form], titles=self.TAB_TITLES,
                          layout=W.Layout(width="auto"))
        self.widget = W.VBox([self._header(title or f"Record part values into {self.folder}"),
                              self.tabs, self.message], layout=W.Layout(width="100%"))

    def _reload(self) -> Library:
        folders = self.library_folders + (
            [self.folder] if path_kind(self.folder)[0] == FOLDER else [])
        return load_library(folders)

    def _team_parts(self) -> list[str]:
        mine = self.folder.resolve()
        out = []
        for pid, pf in self.library.files.items():
            if pf.builtin or pid not in self.library.parts:
                continue
            with contextlib.suppress(ValueError):
                pf.path.resolve().relative_to(mine)
                out.append(pid)
        return sorted(out)

    def _refresh_parts(self) -> None:
        with self._hold():
            set_options(self.part, self._team_parts(), self.part.value, what="Team part")
            set_options(self.extends, sorted(self.library.parts), self.extends.value,
                        what="Extends")
        self._part_changed()

    def _part_changed(self, change=None) -> None:
        self.field.options = self.fields_of(self.part.value) if self.part.value else []

    def fields_of(self, part_id: str) -> list[str]:
        """Every field path a value can be recorded at on the part (``sda.c_in``...)."""
        from pinlib.library.fields import value_kind
        from pinlib.library.schema import Pin, Supply, Timing

        part = self.library.parts[part_id]
        pin_fields = [n for n, f in Pin.fields().items() if value_kind(f)]
        out = []
        for name in part.pins:
            out += [f"{name}.{f}" for f in pin_fields]
        for side, s in part.sides.items():
            for name in s.pins:
                out += [f"sides.{side}.{name}.{f}" for f in pin_fields]
        out += [f"timing.{n}" for n, f in Timing.fields().items() if value_kind(f)]
        out += [f"supply.{n}" for n, f in Supply.fields().items() if value_kind(f)]
        return out

    def _show(self, errors: dict[str, PinlibError]) -> None:
        self.errors = errors
        for name, label in self.error_labels.items():
            label.value = inline_error(errors.get(name))
        self.message.value = error_html(errors["form"]) if "form" in errors else ""
        tabs = getattr(self, "tabs", None)
        if tabs is not None:  # show the form whose field is refused
            if set(errors) & set(self._NEW):
                tabs.selected_index = 0
            elif set(errors) & set(self._REC):
                tabs.selected_index = 1

    def _edited(self, name: str) -> None:
        """A field was changed: its old refusal no longer applies."""
        errors = {k: v for k, v in self.errors.items() if k not in (name, "form")}
        if name in ("part", "field", "value", "typ"):
            self._check_value(errors)
        else:
            self._show(errors)

    def _check_value(self, errors: dict | None = None) -> dict:
        """Check the field path and the value's unit as they are typed, before anything
        is written; return the errors shown beside the record form's fields."""
        from pinlib.core.quantity import parse, parse_threshold
        from pinlib.library.fields import resolve_path

        errors = {k: v for k, v in (self.errors if errors is None else errors).items()
                  if k not in ("field", "value", "typ")}
        path = self.field.value.strip()
        if path:
            try:
                _keys, kind = resolve_path(path)
            except PinlibError as err:
                errors["field"] = err
                kind = None
            for name in ("value", "typ"):
                text = self.controls[name].value.strip()
                if kind is None or not text:
                    continue
                try:
                    if kind.kind == "level":
                        parse_threshold(text, field=path)
                    else:
                        parse(text, kind.unit, field=path)
                except PinlibError as err:
                    errors[name] = err
        self._show(errors)
        return {k: v for k, v in errors.items() if k in ("field", "value", "typ")}

    def set(self, **values):
        """Fill form fields by name (text as typed): ``id``, ``extends``, ``title``,
        ``new_basis``, ``new_source``, ``part``, ``field``, ``value``, ``typ``, ``basis``,
        ``source``."""
        unknown = sorted(set(values) - set(self.controls))
        if unknown:
            raise InputError(M.UNKNOWN_FIELD, field=unknown[0],
                             expected="one of " + ", ".join(self.controls))
        for name, value in values.items():
            self.controls[name].value = value
        return self

    def update(self) -> None:
        self._check_value()

    def create(self) -> Path | None:
        """Create the new part from the first form; None (and ``errors``) when refused."""
        from pinlib.library.record import new_part

        try:
            path = new_part(self.library, self.new_id.value.strip(), self.extends.value,
                            self.folder, self.new_title.value.strip() or None,
                            basis=self.new_basis.value, source=self.new_source.value.strip())
        except PinlibError as err:
            where = {"id": "id", "extends": "extends", "basis": "new_basis"}.get(err.field,
                                                                                 "form")
            self._show({where: err})
            return None
        pid = self.new_id.value.strip()
        return self._done(path, f"created part {pid} in", path, part=pid)

    def record(self) -> Path | None:
        """Record the value of the second form; None (and ``errors``) when refused."""
        from pinlib.library.record import record_value

        if not self.part.value:
            self._show({"part": LibraryError(M.NO_TEAM_PART, field="part",
                                             hint="create one in the first form")})
            return None
        if self._check_value():
            return None
        typ = self.typ.value.strip() or None
        try:
            path = record_value(self.library, self.part.value, self.field.value.strip(),
                                self.value.value, self.source.value, self.basis.value, typ)
        except PinlibError as err:
            self._show({self._place(err): err})
            return None
        done = self._done(path, f"recorded {self.field.value.strip()} = "
                                f"{self.value.value.strip()} in", path)
        self._warn_recorded(self.part.value, self.field.value.strip())
        return done

    def _warn_recorded(self, pid: str, field: str) -> None:
        """Show, under what was written, each warning about the value just recorded (a
        typ beyond its limit, an implausible value, a cable class that disagrees), as
        ``pinlib parts record`` prints them: written, not refused."""
        from pinlib.library.plausible import part_warnings
        from pinlib.library.record import resolve_field

        self.warnings = []
        try:
            keys, _ = resolve_field(self.library, pid, field)
            part = self.library.get(pid)
        except PinlibError:
            return
        path = ".".join(keys)

        def about(w) -> bool:
            f = w.field or ""
            return f == path or f.startswith(path + ".") or (
                bool(f) and path.startswith(f + "."))

        self.warnings = [w for w in part_warnings(part, self.library) if about(w)]
        self.message.value += "".join(notice(f"warning: {e(w.message)}") for w in self.warnings)

    @staticmethod
    def _place(err: PinlibError) -> str:
        """The form field an error of record_value belongs beside."""
        field = err.field or ""
        if field in ("source", "basis"):
            return field
        if field == "id" or err.problem == "unknown part":
            return "part"
        if field.endswith(".typ") or "typical" in err.problem:
            return "typ"
        value_problems = ("the value is refused", "the part would not validate",
                          "a value is needed", "cannot set this value")
        if err.problem.startswith(value_problems):
            return "value"
        if field:
            return "field"
        return "form"

    def _done(self, path: Path, what: str, shown: Path, *, part: str | None = None) -> Path:
        self.tabs.selected_index = 1  # after a new part, its values are recorded next
        self.written = path
        self.library = self._reload()
        self._refresh_parts()
        if part is not None:  # ... into that part, not the one chosen before
            self.part.value = part
        self._show({})
        self.message.value = block(f"{e(what)} <code>{e(shown)}</code>")
        return path

    def static_view(self) -> StaticView:
        """What the last action did, as plain HTML."""
        return StaticView(caution_html() + (self.message.value or note("nothing recorded")))

