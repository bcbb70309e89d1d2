"""Workbench 02: a push-pull line and its termination (:class:`LineExplorer`)."""

from __future__ import annotations

import math
from pathlib import Path

import ipywidgets as W
import numpy as np
import tomlkit

from pinlib.core import messages as M
from pinlib.core.errors import InputError, PinlibError
from pinlib.core.quantity import format_si
from pinlib.engines.dispatch import check_design
from pinlib.library import load_library
from pinlib.library.loader import Library
from pinlib.present import charts, plotdata
from pinlib.present.widgets.choices import choice_line, with_button_below
from pinlib.present.widgets.common import (
    ChartView,
    QuantityField,
    Slider,
    StaticView,
    _closest_option,
    _e24_options,
    _num,
    _Panel,
    _values,
    block_layout,
    button_layout,
    field_layout,
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
    _load,
    _Trace,
    _with_bus,
)
from pinlib.present.widgets.markup import (
    caution_html,
    checks_table,
    e,
    error_html,
    figures_table,
    note,
    notes_html,
    notice,
    status_line,
)

# =========================================================================== line explorer

#: What the status line says, and the charts, while no receiver is placed.
NO_RECEIVER = "nothing to check: the line has no receiver (add one under Receivers)"


class LineExplorer(_Panel):
    """A push-pull line: a driver, its receivers, the trace and a series resistor.

    The line is evaluated as a one-line ``gpio`` bus by the push-pull engine.  Charts: the
    driver's edge time against load with its datasheet points and the engine's operating
    point (the far-end edge on the real line), and the far-end waveforms with the VIL/VIH
    band, with and without the series resistor.

    Parameters
    ----------
    library : Library, optional
        The merged library; loaded from ``folders`` by default.
    folders : iterable of paths
        Team library folders.
    driver : (str, str)
        Part id and pin name of the driving output (a push-pull pin).
    receivers : iterable of (str, str)
        Part id and pin name of each receiving input.
    supply : float
        The rail of every part on the line. [V]
    length : float
        Trace length. [m]
    series : str or float
        ``"auto"``, ``"none"`` or an E24 resistance. [Ω]
    placement : str
        ``"far end"`` (every receiver at the end of the trace) or ``"daisy chain"``
        (the line routed U1 -> U2 -> U3 ..., the trace cut into equal stretches between
        the receivers in their order, each receiver solved at its own point). [1]

    Settings for :meth:`set` (SI units): ``driver_part``, ``driver_pin``, ``supply``,
    ``geometry``, ``length``, ``width``, ``height``, ``thickness``, ``er``,
    ``capacitance_per_length``, ``delay_per_length``, ``series`` (``"auto"``,
    ``"none"`` or an E24 value), ``any_function``, ``placement``, ``receiver`` (on a
    daisy chain: the receiver whose waveforms are drawn, ``""`` for all of them).

    Attributes
    ----------
    design, result, line_result : the design, its result and the line's LineResult.
    figures : dict of str to Figure
        The line's figures.
    edge_data, wave_data : EdgeLoadData, WaveformData
        What the two charts draw.
    edges, waves : ChartView
        The charts.
    """

    signal = "net"
    #: Samples per waveform on the chart: about one per 1.5 px of its 440 px width (each
    #: trace's peak and dip are added, so the drawn overshoot is the measured one).
    wave_points = 300

    def __init__(self, library: Library | None = None, *, folders=(),
                 driver=("mcu-3v3", "sclk"), receivers=(("display-controller-spi", "sclk"),),
                 supply: float = 3.3, length: float = 0.28, series="auto",
                 placement: str = "far end"):
        super().__init__()
        self.folders = [Path(f) for f in folders]
        self.library = library if library is not None else load_library(self.folders)
        self.design = self.result = self.line_result = None
        self.figures: dict = {}
        self.edge_data = self.wave_data = None
        self.text = ""
        self._receivers: list[tuple[str, str, str]] = []   # (ref, part, pin)

        drivers = self._driver_parts()
        self.driver_part = W.Dropdown(options=[(f"{k} — {p.title}", k) for k, p in
                                               drivers.items()],
                                      description="Driver", style=style(),
                                      layout=field_layout())
        self.driver_pin = W.Dropdown(options=[], description="Output pin", style=style(),
                                     layout=field_layout())
        self.pin_note = note_widget()
        self.any_function = W.Checkbox(value=False, description="receivers of any pin "
                                       "function", indent=False, layout=field_layout())
        self.pick = W.Dropdown(options=[], description="Receiver", style=style(),
                               layout=field_layout())
        self.pick_note = note_widget()
        self.add_button = W.Button(description="Add", layout=button_layout())
        self.placed = W.Select(options=[], rows=5, description="Receivers", style=style(),
                               layout=field_layout())
        self.remove_button = W.Button(description="Remove", layout=button_layout())
        self.placed_note = note_widget()  # receivers placed for another pin function
        self.supply = self._quantity(QuantityField("supply", "Supply", "V", supply, lo=0.8,
                                                   hi=5.5, placeholder="3.3 V"))
        self.supply_note = note_widget()  # the supply following the driver's
        self.supply.on_change = lambda _f: (setattr(self.supply_note, "value", ""),
                                            self._changed())
        self.trace = _Trace(self, length=length, max_length=2.0, min_length=0.005)
        self.series_mode = W.ToggleButtons(options=["auto", "none", "fixed"], value="auto",
                                           description="Series R",
                                           style=style(button_width="64px"),
                                        layout=toggle_layout())
        self.series_slider = Slider("Rs (E24)", _e24_options(1.0, 1000.0), 33.0)
        self.series = self.series_slider.control
        self.placement = W.ToggleButtons(options=["far end", "daisy chain"], value=placement
                                         if placement in ("far end", "daisy chain")
                                         else "far end", description="Receivers at",
                                         style=style(button_width="96px"),
                                         layout=toggle_layout())
        self.receiver_view = W.Dropdown(options=[("every receiver", "")], value="",
                                        description="Waveforms at", style=style(),
                                        layout=field_layout(), disabled=True)
        self.edges = ChartView()
        self.waves = ChartView()
        self.figures_html = W.HTML(layout=block_layout())
        self.checks_html = W.HTML(layout=block_layout())
        self.notes_html = W.HTML(layout=block_layout())

        self.driver_part.observe(self._driver_changed, names="value")
        self.driver_pin.observe(self._pin_changed, names="value")
        self.any_function.observe(self._pin_changed, names="value")
        self._watch(self.series_mode, self.series, self.placement, self.receiver_view)
        self.add_button.on_click(lambda _b: self.pick.value and
                                 self.add_receiver(*self.pick.value))
        self.remove_button.on_click(lambda _b: self.placed.value and
                                    self.remove_receiver(self.placed.value))
        self._choice("driver_part", self.driver_part)
        self._choice("driver_pin", self.driver_pin)
        self._choice("placement", self.placement)
        self._choice("receiver", self.receiver_view)
        self._setters["any_function"] = lambda v: setattr(self.any_function, "value", bool(v))
        self._setters["series"] = self._set_series

        with self._hold():
            part, pin = driver
            if part in drivers:
                self.driver_part.value = part
            self._driver_changed()
            if pin in _values(self.driver_pin.options):
                self.driver_pin.value = pin
            self._pin_changed()
            self._set_series(series)
            for rpart, rpin in receivers:
                self.add_receiver(rpart, rpin)
        self.widget = self._layout()
        self.update()

    def _driver_parts(self) -> dict:
        return {pid: p for pid, p in sorted(self.library.placeable().items())
                if not p.sides and p.category != "cable"
                and any(pin.drive == "push-pull" for pin in p.pins.values())}

    def _driver_changed(self, change=None) -> None:
        part = self.library.parts.get(self.driver_part.value)
        pins = [] if part is None else [
            (f"{n} ({pin.function})", n) for n, pin in part.pins.items()
            if pin.drive == "push-pull"]
        with self._hold():
            set_options(self.driver_pin, pins, self.driver_pin.value, what="Output pin",
                        said=self.pin_note)
            if change is not None:
                self._follow_supply(part)
        self._pin_changed()

    def _follow_supply(self, part) -> None:
        """Another driver: a supply outside its range becomes its typical supply (a 5 V
        part at 3.3 V failed on its supply with nothing said), and the note under Supply
        says so; without a typical supply the note points at Supply."""
        sup = None if part is None else part.supply_for(None)
        self.supply_note.value = ""
        if sup is None or self.supply.value is None:
            return
        lo, hi = sup.min.value, sup.max.value
        now = self.supply.value
        if lo <= now <= hi:
            return
        name = e(self.driver_part.value)
        span = f"{format_si(lo, 'V')} to {format_si(hi, 'V')}"
        typ = None if sup.typ is None else sup.typ.value
        if typ is not None and self.supply._in_range(typ):
            self.supply.set_value(typ)
            self.supply_note.value = notice(
                f"Supply set to <b>{e(format_si(typ, 'V'))}</b>, the typical supply of "
                f"{name} ({span}); it was {e(format_si(now, 'V'))}.")
        else:
            self.supply_note.value = notice(
                f"Supply {e(format_si(now, 'V'))} is outside {name}'s range ({span}): "
                "change <b>Supply</b>.")

    def _pin_changed(self, change=None) -> None:
        part = self.library.parts.get(self.driver_part.value)
        fn = part.pins[self.driver_pin.value].function if part and self.driver_pin.value \
            else None
        options = []
        for pid, p in sorted(self.library.placeable().items()):
            if p.sides or p.category == "cable":
                continue
            for name, pin in p.pins.items():
                if pin.drive == "input" and (self.any_function.value or pin.function == fn):
                    options.append((f"{pid}: {name} ({pin.function})", (pid, name)))
        with self._hold():
            set_options(self.pick, options, self.pick.value, what="Receiver",
                        said=self.pick_note)
        self._say_other_functions()
        self._changed()

    def _say_other_functions(self) -> None:
        """Under the list: the receivers placed for another function than the output
        pin's (kept when the pin changes), unless any function is asked for."""
        part = self.library.parts.get(self.driver_part.value)
        pin = part.pins.get(self.driver_pin.value) if part and self.driver_pin.value else None
        other = [] if pin is None or self.any_function.value else [
            f"{r} {p}: {n} ({fn})" for r, p, n in self._receivers
            if (fn := self.library.parts[p].pins[n].function) != pin.function]
        self.placed_note.value = "" if not other else notice(
            f"{e(', '.join(other))} {'receives' if len(other) == 1 else 'receive'} "
            f"another function than the output pin ({e(pin.function)}): Remove "
            f"{'it' if len(other) == 1 else 'them'}, or tick "
            "<i>receivers of any pin function</i> to keep "
            f"{'it' if len(other) == 1 else 'them'}.")

    def _set_series(self, value) -> None:
        if isinstance(value, str) and value.strip().lower() in ("auto", "none"):
            self.series_mode.value = value.strip().lower()
            return
        self.series.value = _closest_option(self.series.options, value, "series",
                                            "series resistor slider")
        self.series_mode.value = "fixed"

    def add_receiver(self, part_id: str, pin: str) -> str:
        """Place a receiving input on the line; return its reference designator."""
        part = self.library.get(part_id, field="receiver")
        if pin not in part.pins or part.pins[pin].drive != "input":
            raise InputError(M.NOT_AN_INPUT_PIN, field="receiver pin", value=pin,
                             expected=", ".join(n for n, p in part.pins.items()
                                                if p.drive == "input") or "none")
        used = [int(r[1:]) for r, _, _ in self._receivers if r[1:].isdigit()] + [1]
        ref = f"U{max(used) + 1}"
        self._receivers.append((ref, part_id, pin))
        with self._hold():
            self.placed.options = [(f"{r}  {p}: {n}", r) for r, p, n in self._receivers]
        self._say_other_functions()
        self._changed()
        return ref

    def remove_receiver(self, ref: str) -> None:
        """Take a receiver off the line by its reference designator."""
        refs = [r for r, _, _ in self._receivers]
        if ref not in refs:
            raise InputError(M.NO_PLACED_PART, field="ref", value=ref,
                             expected=", ".join(refs) or "none placed")
        self._receivers = [x for x in self._receivers if x[0] != ref]
        with self._hold():
            self.placed.options = [(f"{r}  {p}: {n}", r) for r, p, n in self._receivers]
        self._say_other_functions()
        self._changed()

    @property
    def receivers(self) -> list[tuple[str, str, str]]:
        """The receivers as (reference designator, part id, pin)."""
        return list(self._receivers)

    def design_text(self) -> str:
        """The design file the controls describe: one ``gpio`` bus with one line."""
        doc = _design_doc("Push-pull line (explored in a workbook)",
                          "A push-pull line explored in a pinlib workbook (LineExplorer).",
                          [], self.trace.geometry())
        bus = tomlkit.table()
        bus.add("id", "line")
        bus.add("protocol", "gpio")
        bus.add("supply", f"{_num(self.supply.value)} V")
        devices = [{"ref": "U1", "part": self.driver_part.value, "role": "controller",
                    "pin": self.driver_pin.value}]
        devices += [{"ref": r, "part": p, "pin": n} for r, p, n in self._receivers]
        bus.add("devices", _devices_array(devices))
        entry = self.trace.entry("trace")
        refs = ["U1"] + [r for r, _, _ in self._receivers]
        if self.placement.value == "daisy chain" and len(refs) > 1:
            each = f"{_num(self.trace.length.value * 100.0 / (len(refs) - 1))} cm"
            entry = {"route": [_inline({"from": a, "to": b, **entry, "length": each})
                               for a, b in zip(refs, refs[1:], strict=False)]}
        mode = self.series_mode.value
        entry["series_resistor"] = mode if mode != "fixed" else f"{_num(self.series.value)} Ω"
        lines = tomlkit.table()
        lines.add(self.signal, _inline(entry))
        bus.add("lines", lines)
        return _with_bus(doc, bus)

    def _recompute(self) -> None:
        """Rebuild the line from the controls, evaluate it, redraw both charts."""
        try:
            text = self.design_text()
            design = _load(text, self.library)
            bus = design.buses[0]
            result = check_design(design)  # the line solved once, for checks and charts
            solved = result.buses[0]
            edge = plotdata.edge_vs_load_data(bus, design, self.signal, analysis=solved)
            wave = plotdata.waveform_data(bus, design, self.signal, analysis=solved,
                                          points=self.wave_points,
                                          receiver=self._receiver_shown(bus))
        except PinlibError as err:
            self.design = self.result = self.line_result = None
            self.figures, self.edge_data, self.wave_data = {}, None, None
            self.figures_html.value = self.checks_html.value = self.notes_html.value = ""
            self._failed(err, [self.edges, self.waves])
            return
        self.error = None
        self.text, self.design, self.result = text, design, result
        br = result.buses[0]
        self.line_result = br.lines[0]
        self.figures = dict(self.line_result.figures)
        self.edge_data, self.wave_data = edge, wave
        self._show_series()
        if self._receivers:
            self._draw_edges(edge)
            self._draw_waves(wave)
            self.status_html.value = status_line(br, f"Line from {edge.driver} "
                                                      f"({self.driver_part.value} "
                                                      f"{self.driver_pin.value})")
        else:
            # a PASS would say the line was checked, and the charts' "far end" would be a
            # receiver that is not there
            for view in (self.edges, self.waves):
                view.clear(NO_RECEIVER)
            self.status_html.value = note(NO_RECEIVER)
        self.figures_html.value = figures_table(self.figures)
        self.checks_html.value = checks_table(br)
        self.notes_html.value = notes_html([br, self.line_result])

    def _receiver_shown(self, bus) -> str | None:
        """The receiver chooser follows the route: on a daisy chain it offers every
        receiver (its choice kept while it stays on the line), on the far end it is
        disabled; returns the receiver to draw, None for all."""
        routed = bool(bus.lines[self.signal].route)
        options = [("every receiver", "")] + (
            [(f"{r} — {p}: {n}", r) for r, p, n in self._receivers] if routed else [])
        keep = self.receiver_view.value if self.receiver_view.value in _values(options) else ""
        with self._hold():
            if list(self.receiver_view.options) != options:
                self.receiver_view.options = options
            self.receiver_view.value = keep
            self.receiver_view.disabled = not routed
        return keep or None

    def _show_series(self) -> None:
        """The Rs slider shows the resistor in use: with ``auto`` the engine's choice (the
        slider then disabled), with ``none`` disabled.  Where no resistor is in use (``none``,
        or ``auto`` choosing none) it says so and hides its value: it showed the last one
        ``auto`` had chosen (27 Ω) beside waveforms with no series R."""
        mode = self.series_mode.value
        self.series.disabled = mode != "fixed"
        rs = self.figures.get("series_resistor")
        used = mode == "fixed" or (mode == "auto" and rs is not None and bool(rs.value))
        self.series_slider.shown = used
        self.series.description = "Rs (E24)" if used else "Rs: none"
        if mode == "auto" and used:
            with self._hold():
                for _, v in self.series.options:
                    if math.isclose(v, float(rs.value), rel_tol=1e-9):
                        self.series.value = v

    def _draw_edges(self, e) -> None:
        self.edges.draw(lambda: charts.spec(
            charts.edge_vs_load, e.loads, np.vstack(list(e.curves.values())),
            series=list(e.curves),
            points=e.points if len(e.points[0]) else None,
            operating=(e.operating[0], e.operating[1], e.operating_label),
            curves_title=e.curves_title, edge_label="Edge time",
            title=f"Edge time against load: {e.driver}", subtitle=e.subtitle))

    def _draw_waves(self, w) -> None:
        if not w.receivers:
            self.waves.clear("no chart: " + "; ".join(w.notes))
            return
        self.waves.draw(lambda: charts.spec(
            charts.waveforms, w.t, w.traces, v_il=w.v_il, v_ih=w.v_ih, vdd=w.vdd,
            vdd_name=w.high_name,
            title=("Receiver waveforms" if self.placement.value == "daisy chain"
                   else "Far-end waveforms"),
            subtitle="at " + ", ".join(w.receivers), groups=w.groups))

    def static_view(self) -> StaticView:
        """The charts and tables as plain HTML, for exported pages."""
        if self.line_result is None:
            return StaticView(caution_html() + error_html(self.error))
        return StaticView(caution_html() + self.status_html.value + self.edges.html()
                          + self.waves.html() + self.figures_html.value
                          + self.checks_html.value)

    def _layout(self) -> W.Widget:
        controls = [
            self.driver_part, choice_line(self.driver_part), self.driver_pin, self.pin_note,
            self.supply.box, self.supply_note,
            heading("Receivers"), self.any_function,
            with_button_below(self.pick, self.add_button),
            choice_line(self.pick), self.pick_note,
            with_button_below(self.placed, self.remove_button), self.placed_note,
            heading("Trace"), self.trace.box,
            heading("Termination"), self.series_mode, self.series_slider.box,
            heading("Placement"), self.placement, self.receiver_view,
            choice_line(self.receiver_view),
        ]
        outputs = [self.held_html, self.status_html, self.edges.widget, self.waves.widget,
                   self.figures_html, self.notes_html]
        return W.VBox([self._header("A push-pull line and its termination"),
                       self._columns(controls, outputs, [self.checks_html])],
                      layout=W.Layout(width="100%"))
