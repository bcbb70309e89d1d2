"""Workbench 01: start an I2C/SMBus design from library parts (:class:`BusBuilder`)."""

from __future__ import annotations

import copy
import math
import os
from pathlib import Path

import ipywidgets as W
import tomlkit

from pinlib.core import messages as M
from pinlib.core.errors import InputError, PinlibError, WriteError
from pinlib.core.labels import plural_s
from pinlib.core.pathkind import FOLDER, path_kind
from pinlib.core.protocols import OPEN_DRAIN_PROTOCOLS, protocol
from pinlib.core.quantity import format_si
from pinlib.core.tomlfile import atomic_write, tomllib
from pinlib.engines.dispatch import check_design
from pinlib.library import load_library
from pinlib.library.loader import Library
from pinlib.model.design import MODES, design_from_text
from pinlib.present import charts, plotdata
from pinlib.present.widgets.benchreading import BenchReading, comparison_html
from pinlib.present.widgets.choices import choice_line, with_button_below
from pinlib.present.widgets.common import (
    ChartView,
    QuantityField,
    Slider,
    StaticView,
    _clear_on_next_choice,
    _closest_option,
    _e24_options,
    _num,
    _Panel,
    _values,
    block_layout,
    button_layout,
    design_path,
    field_layout,
    find_file,
    heading,
    note_widget,
    set_options,
    style,
    toggle_layout,
)
from pinlib.present.widgets.designdoc import (
    _design_doc,
    _devices_array,
    _inline,
    _library_entries,
    _load,
    _team_folders,
    _Trace,
    _with_bus,
)
from pinlib.present.widgets.markup import (
    BLOCK,
    block,
    caution_html,
    checks_table,
    e,
    error_html,
    figures_table,
    inline_error,
    note,
    notes_html,
    notice,
    status_line,
)
from pinlib.present.widgets.partfit import unfit_label, unfit_on_bus, unfit_sentence

#: The bench panel's Line offered first, and the key of its choice: SDA of the bus the
#: controls build (a saved design's lines follow it once one is loaded).
BUILT_LINE = ("SDA of the bus built here", "")

#: The pin functions of an open-drain bus (SDA and SCL), which every part on it needs.
_OPEN_DRAIN_FUNCTIONS = tuple(dict.fromkeys(fn for name in OPEN_DRAIN_PROTOCOLS
                                            for fn in protocol(name).functions))

# =========================================================================== bus builder


class BusBuilder(_Panel):
    """Start an I2C or SMBus design from the library's parts.

    Pick a controller and peripherals (filtered by category, supply range and a further
    pin function), set the supply, the mode, the trace and the pull-up (``auto`` or an
    E24 value); the figures, the checks and the pull-up window chart (SDA) follow each
    change.  The bench panel turns a rise time measured on the board, with the probe's
    capacitance, back into the bus capacitance: on SDA of the bus built here, or on a
    line of a saved design read with :meth:`load_bench_design` (its I2C and SMBus lines,
    and each GPIO line an open-drain pin drives that has a pull-up), where its answer is
    ``pinlib measured``'s.  :meth:`save` writes the design file.

    Parameters
    ----------
    library : Library, optional
        The merged library; loaded from ``folders`` (and the built-in one) by default.
    folders : iterable of paths
        Team library folders (written into a saved design as its ``library``).
    protocol : str
        ``"i2c"`` or ``"smbus"``.
    controller : str
        Part id of the controller (the first controller offered when absent).
    peripherals : iterable of str
        Part ids placed as U2, U3...
    supply : float
        The pull-up rail. [V]
    length : float
        Trace length. [m]
    title : str
        The design's title.

    Settings for :meth:`set` (SI units): ``protocol``, ``mode``, ``supply``,
    ``supply_tolerance``, ``controller``, ``category``, ``fits_supply``, ``function``,
    ``geometry``, ``length``, ``width``, ``height``, ``thickness``, ``er``,
    ``capacitance_per_length``, ``delay_per_length``, ``extra_capacitance``, ``pullup``
    (``"auto"`` or an E24 value), ``pullup_tolerance``, ``rise_measured``, ``c_probe``,
    ``levels``, ``bench_file`` (a saved design whose lines the bench panel offers:
    :meth:`load_bench_design`), ``bench_line`` (the line measured: ``""`` for SDA of the
    bus built here, else ``bus/line`` or ``bus/segment/line`` of the saved design; set
    after ``bench_file``), ``title``.  In the browser the quantities are typed with
    their units (:class:`~pinlib.present.widgets.common.QuantityField`); a refused text
    leaves everything as it was and says why under the field.  A controller the filters
    no longer allow stays the controller, and ``controller_note`` says why it does not
    fit.

    Attributes
    ----------
    design, result, bus_result : Design, DesignResult, BusResult
        The design the controls describe and what the engine returned (None while the
        controls describe no valid design; ``error`` then says why).
    figures : dict of str to Figure
        The bus's figures.
    window_data : PullupWindowData
        What the pull-up window chart draws.
    window : ChartView
        The pull-up window chart.
    bench : BenchReading or None
        The bench panel's answer (None until a rise time is entered).
    bench_design : Design or None
        The saved design whose lines the bench panel offers (None until one is loaded).
    text : str
        The design file text.
    """

    signal = "sda"

    def __init__(self, library: Library | None = None, *, folders=(), protocol: str = "i2c",
                 controller: str = "mcu-3v3", peripherals=("eeprom-i2c",), supply: float = 3.3,
                 length: float = 0.10, title: str = "New board (started in a workbook)"):
        super().__init__()
        self.folders = [Path(f) for f in folders]
        self.library = library if library is not None else load_library(self.folders)
        if library is not None and not self.folders:
            self.folders = _team_folders(library)
        self.design = self.result = self.bus_result = None
        self.figures: dict = {}
        self.window_data = None
        self.bench: BenchReading | None = None
        self.bench_error: PinlibError | None = None
        self.bench_design = None
        self._bench_lines: dict = {}  # the saved design's lines offered, by key
        self._bench_refused: dict = {}  # its lines not offered: why, by key
        self.text = ""
        self.saved_path: Path | None = None
        self._peripherals: list[tuple[str, str]] = []

        self._bus_controls(title, protocol, supply)
        self._part_controls()
        self._pullup_controls(length)
        self._bench_controls()
        self.window = ChartView()
        self.figures_html = W.HTML(layout=block_layout())
        self.checks_html = W.HTML(layout=block_layout())
        self.notes_html = W.HTML(layout=block_layout())

        self._wire()

        with self._hold():
            self._filters_changed()
            if controller in _values(self.controller.options):
                self.controller.value = controller
            for pid in peripherals:
                self.add_peripheral(pid)
        self.widget = self._layout()
        self.update()

    def _bus_controls(self, title: str, protocol: str, supply: float) -> None:
        """The bus: title, protocol, mode, supply and its tolerance."""
        q = self._quantity
        # a row of its own across the workbench (a title is prose: the control column
        # showed some 30 characters of it)
        self.title = W.Text(value=title, description="Title", style=style(),
                            layout=W.Layout(width="auto", max_width="100%"))
        self.protocol = W.ToggleButtons(options=list(OPEN_DRAIN_PROTOCOLS), value=protocol,
                                        description="Protocol",
                                        style=style(button_width="72px"),
                                        layout=toggle_layout())
        self.mode = W.Dropdown(options=MODES[protocol], value=MODES[protocol][
            1 if protocol == "i2c" else 0], description="Mode", style=style(),
            layout=field_layout())
        self.mode_note = note_widget()
        self._modes_chosen: dict[str, str] = {}  # the mode last chosen, by protocol
        self.supply = q(QuantityField("supply", "Supply", "V", supply, lo=0.8, hi=5.5,
                                      placeholder="3.3 V"),
                        lambda _f: self._filters_changed())
        self.supply_tolerance = q(QuantityField("supply_tolerance", "Supply ±", "%", 0.05,
                                                lo=0.0, hi=0.2, placeholder="5 %"),
                                  lambda _f: self._filters_changed())

    def _part_controls(self) -> None:
        """The parts: filters, the controller, the peripherals placed."""
        parts = self._bus_parts()
        cats = sorted({p.category for p in parts.values() if p.category != "controller"})
        fns = sorted({f for p in parts.values() for f in p.functions()} -
                     set(_OPEN_DRAIN_FUNCTIONS))
        self.category = W.Dropdown(options=["any"] + cats, value="any",
                                   description="Category", style=style(),
                                   layout=field_layout())
        self.fits_supply = W.Checkbox(value=True, description="parts whose supply range "
                                      "holds the rail", indent=False, layout=field_layout())
        self.function = W.Dropdown(options=["any"] + fns, value="any",
                                   description="Also offers", style=style(),
                                   layout=field_layout())
        self.controller = W.Dropdown(options=[], description="Controller", style=style(),
                                     layout=field_layout())
        self.controller_note = note_widget()
        self.pick = W.Dropdown(options=[], description="Peripheral", style=style(),
                               layout=field_layout())
        self.pick_note = note_widget()
        self.pick_fit = note_widget()  # why the part picked would fail the bus as set
        self._pick_unfit: dict = {}
        self.add_button = W.Button(description="Add", layout=button_layout())
        self.placed = W.Select(options=[], rows=6, description="Placed", style=style(),
                               layout=field_layout())
        self.remove_button = W.Button(description="Remove", layout=button_layout())

    def _pullup_controls(self, length: float) -> None:
        """The trace, the extra capacitance and the pull-up."""
        q = self._quantity
        self.trace = _Trace(self, length=length, max_length=2.0)
        self.extra_capacitance = q(QuantityField("extra_capacitance", "Extra C", "F", 0.0,
                                                 lo=0.0, hi=1e-9, shown=("pF", 1e-12),
                                                 placeholder="12 pF"))
        self.pullup_mode = W.ToggleButtons(options=["auto", "fixed"], value="auto",
                                           description="Choose Rp",
                                           style=style(button_width="72px"),
                                        layout=toggle_layout())
        self.pullup_slider = Slider("Rp (E24)", _e24_options(100.0, 100e3), 4700.0)
        self.pullup = self.pullup_slider.control
        self.pullup_tolerance = q(QuantityField("pullup_tolerance", "Rp ±", "%", 0.01,
                                                lo=0.0, hi=0.2, placeholder="1 %"))

    def _bench_controls(self) -> None:
        """The bench reading (a measured rise time) and saving the design."""
        q = self._quantity
        self.bench_file = W.Text(value="", placeholder="designs/board.toml",
                                 description="Design", style=style(),
                                 layout=field_layout())
        self.bench_load = W.Button(description="Load", layout=button_layout())
        self.bench_file_error = note_widget()
        self.bench_line = W.Dropdown(options=[BUILT_LINE], value=BUILT_LINE[1],
                                     description="Line", style=style(), layout=field_layout())
        self.bench_line_note = note_widget()
        self.rise_measured = q(QuantityField("rise_measured", "Rise measured", "s", None,
                                             lo=0.0, hi=1e-3, shown=("ns", 1e-9),
                                             optional=True, placeholder="e.g. 250 ns"),
                               lambda _f: self._bench(), held=False)
        self.c_probe = q(QuantityField("c_probe", "Probe C", "F", 10e-12, lo=0.0, hi=1e-9,
                                       shown=("pF", 1e-12), placeholder="10 pF"),
                         lambda _f: self._bench(), held=False)
        self.levels = W.Dropdown(options=[("30–70 %", (0.3, 0.7)), ("10–90 %", (0.1, 0.9)),
                                          ("20–80 %", (0.2, 0.8))], value=(0.3, 0.7),
                                 description="Measured", style=style(), layout=field_layout())
        self.bench_html = W.HTML(layout=W.Layout(width="auto"))
        self._bench_shown = ""  # the last reading worked out (HTML)
        self.save_path = W.Text(value="", placeholder="board.toml", description="Save as",
                                style=style(), layout=field_layout())
        self.save_button = W.Button(description="Save", layout=button_layout())
        # An existing file is replaced only with this ticked; it names the file the box
        # holds and is unticked again when the name changes or after each save.
        self.save_overwrite = W.Checkbox(value=False, description="overwrite an existing file",
                                         indent=False, layout=field_layout())
        self.save_error = W.HTML(layout=W.Layout(width="auto"))

    def _wire(self) -> None:
        """Observers, buttons and the setters of :meth:`set`."""
        self.protocol.observe(self._protocol_changed, names="value")
        self.pick.observe(self._show_pick_fit, names="value")
        for c in (self.category, self.fits_supply, self.function, self.controller):
            c.observe(self._filters_changed, names="value")
        self._watch(self.mode, self.pullup_mode, self.pullup, self.title)
        self.levels.observe(lambda change: self._bench(), names="value")
        self.bench_line.observe(lambda change: self._quiet or self._bench(), names="value")
        self.bench_load.on_click(lambda _b: self._bench_load_clicked())
        self.add_button.on_click(lambda _b: self.pick.value and
                                 self.add_peripheral(self.pick.value))
        self.remove_button.on_click(lambda _b: self.placed.value and
                                    self.remove_peripheral(self.placed.value))
        self.save_button.on_click(lambda _b: self._save_clicked())
        self.save_path.observe(self._save_path_changed, names="value")

        self._choice("protocol", self.protocol)
        self._setters["mode"] = self._set_mode
        self._choice("controller", self.controller)
        self._choice("category", self.category)
        self._setters["fits_supply"] = lambda v: setattr(self.fits_supply, "value", bool(v))
        self._choice("function", self.function)
        self._setters["pullup"] = self._set_pullup
        self._choice("levels", self.levels)
        self._setters["bench_file"] = self.load_bench_design
        self._setters["bench_line"] = self._set_bench_line
        self._setters["title"] = lambda v: setattr(self.title, "value", str(v))

    # ---------------------------------------------------------------- choices
    def _bus_parts(self) -> dict:
        """Parts that can sit on an open-drain bus: SDA and SCL pins, not a bridging part
        (a translator splits the bus into segments, which this builder does not draw)."""
        return {pid: p for pid, p in sorted(self.library.placeable().items())
                if not p.sides and p.category != "cable"
                and all(p.pin_for(fn) for fn in _OPEN_DRAIN_FUNCTIONS)}

    def _unfit(self, part, *, category: bool) -> str:
        """Why a part is not offered under the filters ("" when it is)."""
        why = []
        if category and self.category.value != "any" and part.category != self.category.value:
            why.append(f"its category is {part.category}, not {self.category.value}")
        if self.fits_supply.value and part.supply is not None:
            # the rail over its tolerance, by the engine's supply-range rule (an end
            # within rounding of the part's limit is at it)
            from pinlib.engines.opendrain.rules import supply_margin

            lo, hi = float(part.supply.min.at()), float(part.supply.max.at())
            v, tol = self.supply.value, self.supply_tolerance.value
            if float(supply_margin(v * (1.0 - tol), v * (1.0 + tol), lo, hi)[0]) < 0:
                rail = f"the {format_si(v, 'V')} rail"
                if tol > 0:
                    rail += (f" at ±{tol * 100:g} % ({format_si(v * (1.0 - tol), 'V')}–"
                             f"{format_si(v * (1.0 + tol), 'V')})")
                why.append(f"its supply range {format_si(lo, 'V')}–{format_si(hi, 'V')} "
                           f"does not hold {rail}")
        if self.function.value != "any" and self.function.value not in part.functions():
            why.append(f"it offers no {self.function.value} pin")
        return "; ".join(why)

    def _fits(self, part, *, category: bool) -> bool:
        return not self._unfit(part, category=category)

    def _label(self, pid: str, part) -> str:
        return f"{pid} — {part.title}"

    def _filters_changed(self, change=None) -> None:
        """Offer the parts the filters let through.  The controller the filters no longer
        let through stays the controller, and the note under it says why; the peripheral
        to add follows the filters, and its note says when it changed."""
        parts = self._bus_parts()
        with self._hold():
            ctl = [(self._label(k, p), k) for k, p in parts.items()
                   if p.category == "controller" and self._fits(p, category=False)]
            set_options(self.controller, ctl, self.controller.value, what="Controller",
                        said=self.controller_note,
                        unfit=lambda k: self._unfit(parts[k], category=False))
            self._offer_peripherals(parts)
        self._changed()

    def _offer_peripherals(self, parts: dict | None = None) -> None:
        """The peripherals the filters let through; one the bus as set would fail is
        still offered, marked with why (:mod:`~pinlib.present.widgets.partfit`: the
        engine's device-speed and supply-range limits), and said under the list when
        picked."""
        parts = self._bus_parts() if parts is None else parts
        bus = {"protocol": self.protocol.value, "mode": self.mode.value,
               "supply": self.supply.value, "tolerance": self.supply_tolerance.value}
        self._pick_unfit = {k: unfit_on_bus(p, **bus) for k, p in parts.items()
                            if self._fits(p, category=True)}
        per = [(unfit_label(self._label(k, parts[k]), u), k)
               for k, u in self._pick_unfit.items()]
        if per != list(self.pick.options):
            set_options(self.pick, per, self.pick.value, what="Peripheral",
                        said=self.pick_note,
                        empty="Choose another Category or Also offers, or untick "
                              "“parts whose supply range holds the rail”.")
        self.add_button.disabled = not per
        self._show_pick_fit()

    def _show_pick_fit(self, change=None) -> None:
        why = unfit_sentence(self.pick.value, self._pick_unfit.get(self.pick.value, []))
        self.pick_fit.value = notice(e(why)) if why else ""

    def _protocol_changed(self, change=None) -> None:
        """Another protocol: its modes.  Back on a protocol chosen before, the mode is the
        one last chosen there (fast-plus, not standard, after a look at SMBus), and the
        note under Mode says so; on another, :func:`set_options` says what it became."""
        old = change["old"] if change else None
        if old in MODES and self.mode.value in MODES[old]:
            self._modes_chosen[old] = self.mode.value
        modes = list(MODES[self.protocol.value])
        back = self._modes_chosen.get(self.protocol.value)
        with self._hold():
            if back in modes and back != self.mode.value:
                self.mode.options = modes
                self.mode.value = back
                self.mode_note.value = notice(
                    f"Mode <b>{e(back)}</b>: the one last chosen for "
                    f"{e(self.protocol.value.upper())}.")
                _clear_on_next_choice(self.mode, self.mode_note)
            else:
                set_options(self.mode, modes, self.mode.value, what="Mode",
                            said=self.mode_note)
        self._changed()

    def _set_mode(self, value) -> None:
        modes = MODES[self.protocol.value]
        if value not in modes:
            raise InputError(M.UNKNOWN_MODE, field="mode", value=value,
                             expected="one of " + ", ".join(modes))
        self.mode.value = value

    def _set_pullup(self, value) -> None:
        if isinstance(value, str) and value.strip().lower() == "auto":
            self.pullup_mode.value = "auto"
            return
        self.pullup.value = _closest_option(self.pullup.options, value, "pullup",
                                            "pull-up slider")
        self.pullup_mode.value = "fixed"

    def add_peripheral(self, part_id: str) -> str:
        """Place a part on the bus; return its reference designator (U2, U3...)."""
        self.library.get(part_id, field="peripheral")  # an unknown id names the closest
        if part_id not in self._bus_parts():
            raise InputError(M.PART_NOT_FOR_OPEN_DRAIN_BUS, field="peripheral",
                             value=part_id, expected="a part with SDA and SCL pins (not a "
                                                     "bridging part or a cable)")
        used = [int(r[1:]) for r, _ in self._peripherals if r[1:].isdigit()] + [1]
        ref = f"U{max(used) + 1}"
        self._peripherals.append((ref, part_id))
        self._refresh_placed()
        self._changed()
        return ref

    def remove_peripheral(self, ref: str) -> None:
        """Take a placed part off the bus by its reference designator."""
        refs = [r for r, _ in self._peripherals]
        if ref not in refs:
            raise InputError(M.NO_PLACED_PART, field="ref", value=ref,
                             expected=", ".join(refs) or "none placed")
        self._peripherals = [(r, p) for r, p in self._peripherals if r != ref]
        self._refresh_placed()
        self._changed()

    @property
    def peripherals(self) -> list[tuple[str, str]]:
        """The placed peripherals as (reference designator, part id)."""
        return list(self._peripherals)

    def _refresh_placed(self) -> None:
        with self._hold():
            self.placed.options = [(f"{r}  {p}", r) for r, p in self._peripherals]

    # ---------------------------------------------------------------- the design
    def design_text(self, relative_to: Path | None = None) -> str:
        """The design file the controls describe (``pinlib.design/1``).

        Parameters
        ----------
        relative_to : path, optional
            The folder the file will be saved in: team library folders are written
            relative to it.
        """
        doc = _design_doc(self.title.value.strip() or "Untitled board",
                          "A design started in a pinlib workbook (BusBuilder).",
                          _library_entries(self.folders, relative_to),
                          self.trace.geometry())
        bus = tomlkit.table()
        bus.add("id", self.protocol.value)
        bus.add("protocol", self.protocol.value)
        bus.add("mode", self.mode.value)
        bus.add("supply", f"{_num(self.supply.value)} V")
        bus.add("supply_tolerance", f"{_num(self.supply_tolerance.value * 100.0)} %")
        bus.add("pullup", "auto" if self.pullup_mode.value == "auto" else
                f"{_num(self.pullup.value)} Ω")
        bus.add("pullup_tolerance", f"{_num(self.pullup_tolerance.value * 100.0)} %")
        bus.add("pullup_series", "E24")
        bus.add("trace", _inline(self.trace.entry("trace")))
        if self.extra_capacitance.value:
            bus.add("extra_capacitance", f"{_num(self.extra_capacitance.value * 1e12)} pF")
        devices = []
        if self.controller.value:
            devices.append({"ref": "U1", "part": self.controller.value, "role": "controller"})
        devices += [{"ref": r, "part": p} for r, p in self._peripherals]
        bus.add("devices", _devices_array(devices))
        return _with_bus(doc, bus)

    def _recompute(self) -> None:
        """Rebuild the design from the controls, evaluate it, redraw."""
        with self._hold():
            self._offer_peripherals()  # the bus as set: which parts would fail it
        try:
            text = self.design_text()
            design = _load(text, self.library)
            result = check_design(design)
            window = plotdata.pullup_window_data(design.buses[0], design, signal=self.signal,
                                                 analysis=result.buses[0])
        except PinlibError as err:
            self.design = self.result = self.bus_result = None
            self.figures, self.window_data = {}, None
            self.figures_html.value = self.checks_html.value = self.notes_html.value = ""
            self._failed(err, [self.window])
            self._bench()
            return
        self.error = None
        self.text, self.design, self.result = text, design, result
        br = self.bus_result = result.buses[0]
        self.figures = dict(br.figures)
        self.window_data = window
        with self._hold():
            auto = self.pullup_mode.value == "auto"
            self.pullup.disabled = auto
            chosen = float(br.figures["pullup_resistor"].value)
            if auto and any(math.isclose(v, chosen, rel_tol=1e-9) for _, v in
                            self.pullup.options):
                self.pullup.value = _closest_option(self.pullup.options, chosen, "pullup",
                                                    "pull-up slider")
        w = window
        self.window.draw(lambda: charts.spec(
            charts.pullup_window, w.cb, w.rp_min, w.rp_max, chosen_cb=w.chosen_cb,
            chosen_rp=w.chosen_rp,
            title=f"Pull-up window, {w.signal.upper()}",
            subtitle=(f"tr ≤ {format_si(w.tr_max, 's')}; Rp(min) {format_si(w.rp_min, 'Ω')}"
                      + (f" set by {w.weakest}" if w.weakest else "")),
            chosen_label=f"design: {format_si(w.chosen_rp, 'Ω')} at "
                         f"{format_si(w.chosen_cb, 'F')}"))
        self.status_html.value = status_line(br, f"Bus {br.id} ({self.mode.value})")
        self.figures_html.value = figures_table(self.figures)
        self.checks_html.value = checks_table(br)
        self.notes_html.value = notes_html([br])
        self._bench()

    # ---------------------------------------------------------------- the bench
    def load_bench_design(self, path: str | os.PathLike | None) -> None:
        """Read a saved design whose lines the bench panel offers beside SDA of the bus
        built here: each I2C and SMBus line (per segment), and each GPIO line an
        open-drain pin drives that has a pull-up
        (:func:`pinlib.engines.bench.measurable_lines`); the others are listed under the
        Line with why.  The line chosen stays when the design still has it; else the
        first line offered is chosen.  A file that cannot be loaded raises, and the lines
        offered stay as they were.  None or ``""``: no saved design (SDA of the bus built
        here only)."""
        from pinlib.engines.bench import measurable_lines
        from pinlib.model.design import load_design

        if path is None or not str(path).strip():
            with self._hold():
                self.bench_file.value = ""
                self.bench_design, self._bench_lines, self._bench_refused = None, {}, {}
                self.bench_line.options = [BUILT_LINE]
                self.bench_line.value = BUILT_LINE[1]
            self.bench_file_error.value = self.bench_line_note.value = ""
            self._bench()
            return
        design = load_design(find_file(path), library_folders=self.folders)
        offered, refused = measurable_lines(design)
        lines = {_line_key(x): x for x in offered}
        keep = self.bench_line.value if self.bench_line.value in lines else None
        with self._hold():
            self.bench_file.value = str(path)
            self.bench_design, self._bench_lines = design, lines
            self._bench_refused = {"/".join(x for x in (bus, line) if x): err
                                   for bus, line, err in refused}
            self.bench_line.options = [BUILT_LINE] + [(x.place(), k) for k, x in lines.items()]
            self.bench_line.value = keep or next(iter(lines), BUILT_LINE[1])
        self.bench_file_error.value = ""
        name = e(Path(str(path)).name)
        said = (f"{len(lines)} line{plural_s(len(lines))} of <b>{name}</b> offered "
                "under Line." if lines else
                f"<b>{name}</b> has no line a rise time gives the bus capacitance of.")
        if refused:
            items = "".join(f"<li>{e(_refused_place(design, bus, line))}: {e(err.problem)}"
                            + (f" ({e(err.hint)})" if err.hint else "") + "</li>"
                            for bus, line, err in refused)
            said += (f' Not offered:<ul style="{BLOCK};margin:2px 0;padding-left:18px">'
                     f"{items}</ul>")
        self.bench_line_note.value = block(said, size=11)
        self._bench()

    def _set_bench_line(self, value) -> None:
        if value not in _values(self.bench_line.options):
            why = self._bench_refused.get(value)
            raise InputError(M.NOT_ALLOWED_VALUE, field="bench_line", value=value,
                             expected='"" (SDA of the bus built here)' + "".join(
                                 f", {k}" for k in self._bench_lines),
                             hint=None if why is None else f"not offered: {why.problem}")
        self.bench_line.value = value

    def _bench_load_clicked(self) -> None:
        try:
            path = design_path(self.bench_file.value, "designs/gpio-reset-board.toml")
            self.load_bench_design(path)
        except PinlibError as err:
            # where, as the command names it (the file and line, the field)
            kept = ("" if self.bench_design is None else
                    f"The lines offered are still those of {self.bench_design.path}.")
            self.bench_file_error.value = error_html(err) + (note(kept) if kept else "")

    def _bench(self) -> None:
        refused = [f for f in (self.rise_measured, self.c_probe) if f.error]
        if refused:
            # the reading shown stays that of the last valid inputs, and says so
            names = " and ".join(f"<b>{e(f.description)}</b>" for f in refused)
            self.bench_html.value = notice(
                f"Not recomputed: {names} {'is' if len(refused) == 1 else 'are'} not valid. "
                + ("The reading below is that of the last valid inputs." if self._bench_shown
                   else "")) + self._bench_shown
            return
        self.bench, self.bench_error = None, None
        self._bench_shown = ""
        line = self._bench_lines.get(self.bench_line.value)
        if line is None and self.design is None:
            self.bench_html.value = note("the bench panel needs a design that evaluates")
            return
        t = self.rise_measured.value
        if t is None or t <= 0:
            self.bench_html.value = note("enter the rise time read on the oscilloscope")
            return
        self._bench_reading(line, t)

    def _bench_reading(self, line, t: float) -> None:
        """The reading on the line chosen: ``pinlib measured``'s answer
        (:func:`pinlib.engines.bench.compare_rise`), on SDA of the bus built here
        (``line`` None) as on a saved design's line."""
        from pinlib.engines.bench import compare_rise

        levels, c_probe = self.levels.value, self.c_probe.value
        if line is None:
            design, bus, where = self.design, self.design.buses[0].id, {"signal": self.signal}
            place = BUILT_LINE[0]
        else:
            design, bus, where, place = self.bench_design, line.bus, line.arguments(), None
        try:
            got = compare_rise(design, bus, t, c_probe, levels=levels, **where)
        except PinlibError as err:
            self.bench_error = err
            self.bench_html.value = inline_error(err)
            return
        self.bench = BenchReading(t, c_probe, tuple(levels), got.rp, got.cb, got.rise_alone,
                                  got.cb_model, got, line=line)
        self.bench_html.value = self._bench_shown = comparison_html(got, place=place)

    def save(self, path: str | os.PathLike, *, overwrite: bool = False) -> Path:
        """Write the design file atomically, after loading it back as a check.

        The text is loaded with :func:`pinlib.model.design.design_from_text` from where it will
        be (its ``library`` folders resolved beside it) before anything is written; an
        invalid design raises and leaves any existing file as it was.  An existing file
        is replaced only with ``overwrite`` (as ``pinlib new`` only with ``--force``):
        without it a :class:`~pinlib.core.errors.WriteError` names the file.  While a
        quantity field's text is refused nothing is written (an InputError names the
        fields): the file would hold their last valid values, not what they show.
        """
        refused = [f.description for f in self.fields.values() if f.error is not None]
        if refused:
            raise InputError(M.SAVE_WITH_REFUSED_FIELDS.format(fields=", ".join(refused)),
                             field="save as",
                             expected="a valid value in each (its message is under it)")
        path = Path(path)
        text = self.design_text(relative_to=path.parent)
        design_from_text(tomllib.loads(text), text, path)
        if path_kind(path)[0] == FOLDER:
            raise WriteError(M.SAVE_TARGET_IS_FOLDER.format(file=path), file=str(path),
                             field="save as", expected="a design file path such as board.toml")
        if not overwrite and os.path.lexists(path):
            raise WriteError(M.SAVE_WOULD_OVERWRITE.format(file=path), file=str(path),
                             field="save as",
                             hint=M.SAVE_OVERWRITE_HINT.format(name=path.name))
        atomic_write(path, text)
        self.saved_path = path
        return path

    def _save_path_changed(self, change=None) -> None:
        """Another name: a consent to overwrite was given for the old one only."""
        self.save_overwrite.value = False
        self.save_overwrite.description = "overwrite an existing file"
        self.save_error.value = ""

    def _save_clicked(self) -> None:
        name = self.save_path.value.strip()
        try:
            if not name:
                raise InputError(M.FILE_NAME_NEEDED, field="save as",
                                 expected="a path such as board.toml")
            path = self.save(name, overwrite=self.save_overwrite.value)
        except PinlibError as err:
            if err.problem == M.SAVE_WOULD_OVERWRITE.format(file=Path(name)):
                self.save_overwrite.description = f"overwrite {Path(name).name}"
            if err.file and err.file not in err.problem:
                # the file it is about, as the command line writes it ("cannot write in
                # this folder" alone does not say which folder)
                err = copy.copy(err)
                err.problem = f"{err.file}: {err.problem}"
            self.save_error.value = inline_error(err)
            return
        self.save_overwrite.value = False  # the next overwrite is asked for again
        self.save_overwrite.description = "overwrite an existing file"
        self.save_error.value = block(f"saved {e(path)}")

    def static_view(self) -> StaticView:
        """The charts and tables as plain HTML, for exported pages."""
        if self.bus_result is None:
            return StaticView(caution_html() + error_html(self.error))
        return StaticView(caution_html() + self.status_html.value + self.window.html()
                          + self.bench_html.value + self.figures_html.value
                          + self.checks_html.value)

    def _layout(self) -> W.Widget:
        controls = [
            self.protocol, self.mode, self.mode_note, self.supply.box,
            self.supply_tolerance.box,
            heading("Parts"), self.category, self.fits_supply, self.function,
            self.controller, choice_line(self.controller), self.controller_note,
            with_button_below(self.pick, self.add_button), choice_line(self.pick),
            self.pick_fit, self.pick_note,
            with_button_below(self.placed, self.remove_button),
            heading("Trace"), self.trace.box, self.extra_capacitance.box,
            heading("Pull-up"), self.pullup_mode, self.pullup_slider.box, self.pullup_tolerance.box,
            heading("Bench: a measured rise"),
            with_button_below(self.bench_file, self.bench_load), self.bench_file_error,
            self.bench_line, choice_line(self.bench_line), self.bench_line_note,
            self.rise_measured.box, self.c_probe.box, self.levels, self.bench_html,
            heading("Save"), with_button_below(self.save_path, self.save_button),
            self.save_overwrite, self.save_error,
        ]
        outputs = [self.held_html, self.status_html, self.window.widget, self.figures_html,
                   self.notes_html]
        return W.VBox([self._header("Start a design: an I2C/SMBus bus from library parts"),
                       self.title, self._columns(controls, outputs, [self.checks_html])],
                      layout=W.Layout(width="100%"))


def _line_key(line) -> str:
    """The key of a saved design's line on the Line dropdown: ``bus/line`` or
    ``bus/segment/line``."""
    return "/".join(x for x in (line.bus, line.segment, line.signal) if x)


def _refused_place(design, bus_id: str, line: str | None) -> str:
    """A bus or line not offered, named with its protocol: ``flash (spi)``,
    ``fpga-enable, line enable``."""
    if line is not None:
        return f"{bus_id}, line {line}"
    return f"{bus_id} ({design.bus(bus_id).protocol})"
