"""Workbench 03: the timing budget of an SPI bus (:class:`SpiBudget`)."""

from __future__ import annotations

import copy

import ipywidgets as W

from pinlib.core import messages as M
from pinlib.core.errors import InputError, PinlibError
from pinlib.core.labels import check_label
from pinlib.core.quantity import format_si
from pinlib.core.tomlfile import tomllib
from pinlib.core.valueclass import value_class
from pinlib.engines.dispatch import evaluate_bus
from pinlib.model.design import Design, design_from_text, load_design
from pinlib.model.result import BusResult, figure_text
from pinlib.present import charts, plotdata
from pinlib.present.report import format_value
from pinlib.present.widgets.common import (
    ChartView,
    QuantityField,
    StaticView,
    _num,
    _Panel,
    block_layout,
    field_layout,
    find_file,
    note_widget,
    style,
    toggle_layout,
)
from pinlib.present.widgets.markup import (
    CELL,
    NUM,
    TABLE,
    block,
    caution_html,
    checks_table,
    e,
    error_html,
    note,
    notes_html,
    notice,
    status_line,
)

# =========================================================================== SPI budget


@value_class(frozen=True)
class ClockLimit:
    """The highest clock one requirement allows on its own.

    Attributes
    ----------
    what : str
        The requirement: ``"copi-setup U7"``, ``"edge-time sclk"``, ``"f_max U1"``. [1]
    clock : float
        The highest clock it allows alone (:func:`pinlib.engines.spi.max_clock` of its
        term). [Hz]
    source : str
        Where its limit comes from. [1]
    """

    what: str
    clock: float
    source: str

    @property
    def label(self) -> str:
        """The requirement in words: ``"COPI setup, U7"``, ``"Edge time, SCLK"``,
        ``"f(max) of U1"``."""
        kind, _, who = self.what.partition(" ")
        if kind == "f_max":
            return f"f(max) of {who}"
        if kind == "edge-time":
            return f"{check_label(kind)}, {who.upper()}"
        return f"{check_label(kind)}, {who}" if who else check_label(kind)


class SpiBudget(_Panel):
    """The timing budget of an SPI bus of a design: clock and mode, bars, max_clock.

    Parameters
    ----------
    design : path or Design
        The design (a path may be relative to the working folder or a folder above).
    bus : str, optional
        The SPI bus's id; the design's first SPI bus by default.
    folders : iterable of paths
        Extra team library folders.

    Settings for :meth:`set`: ``bus``, ``clock`` [Hz], ``spi_mode`` (0–3).

    Attributes
    ----------
    design, bus_result : the design at the chosen clock and mode, and its bus's result.
    figures : dict of str to Figure
        The bus's figures (``max_clock``, the worst margins).
    budget_data : TimingBudgetData
        What the budget chart draws.
    limits : list of ClockLimit
        Each requirement's own highest clock, lowest first: ``limits[0]`` is what sets
        ``max_clock``.
    chart : ChartView
        The budget bars.
    """

    def __init__(self, design, bus: str | None = None, *, folders=()):
        super().__init__()
        if isinstance(design, Design):
            base = design
        else:
            base = load_design(find_file(design), library_folders=folders)
        self.base = base
        self.library = base.library
        self._data = tomllib.loads(base.text)
        spi = [b.id for b in base.buses if b.protocol == "spi"]
        if not spi:
            raise InputError(M.NO_SPI_BUS, field="bus",
                             file=str(base.path) if base.path else None)
        bus = bus or spi[0]
        if bus not in spi:
            raise InputError(M.NO_SPI_BUS_OF_ID, field="bus", value=bus,
                             expected=", ".join(spi))
        self.design = self.bus_result = self.analysis = self.budget_data = None
        self.figures: dict = {}
        self.limits: list[ClockLimit] = []
        self.bus = W.Dropdown(options=spi, value=bus, description="Bus", style=style(),
                              layout=field_layout())
        self.bus_note = note_widget()
        self.clock = self._quantity(QuantityField("clock", "Clock", "Hz", 1e6, lo=1e3,
                                                  hi=1e9, placeholder="10 MHz"))
        self.spi_mode = W.ToggleButtons(options=[0, 1, 2, 3], value=0, description="SPI mode",
                                        style=style(button_width="48px"),
                                        layout=toggle_layout())
        self.mode_note = note_widget()  # the devices that do not take the mode
        self.chart = ChartView()
        self.max_html = W.HTML(layout=block_layout())
        self.limits_html = W.HTML(layout=block_layout())
        self.checks_html = W.HTML(layout=block_layout())
        self.notes_html = W.HTML(layout=block_layout())
        self.bus.observe(self._bus_changed, names="value")
        self._watch(self.spi_mode)
        self._choice("bus", self.bus)
        self._choice("spi_mode", self.spi_mode)
        self._bus_changed()
        self.widget = W.VBox([
            self._header("SPI timing budget"),
            self._columns([self.bus, self.bus_note, self.clock.box, self.spi_mode,
                           self.mode_note, self.max_html, self.limits_html],
                          [self.held_html, self.status_html, self.chart.widget,
                           self.notes_html], [self.checks_html])],
            layout=W.Layout(width="100%"))

    def _bus_changed(self, change=None) -> None:
        """Another bus: its clock and mode start as the design saved them (and the note
        under the bus says so)."""
        b = self.base.bus(self.bus.value)
        with self._hold():
            self.clock.set_value(float(b.clock))
            self.spi_mode.value = int(b.spi_mode)
        self.bus_note.value = note(f"Clock and SPI mode start as saved in the design for "
                                   f"this bus: {format_si(b.clock, 'Hz')}, mode "
                                   f"{int(b.spi_mode)}.")
        self._changed()

    def _bus_index(self) -> int:
        return next(i for i, b in enumerate(self._data["bus"]) if b.get("id") == self.bus.value)

    def design_data(self) -> dict:
        """The design's data with the chosen bus's clock and mode as the controls say."""
        data = copy.deepcopy(self._data)
        raw = data["bus"][self._bus_index()]
        raw["clock"] = f"{_num(self.clock.value * 1e-6)} MHz"
        raw["spi_mode"] = int(self.spi_mode.value)
        return data

    def _recompute(self) -> None:
        """Evaluate the bus at the chosen clock and mode; redraw the budget."""
        try:
            design = design_from_text(self.design_data(), self.base.text, self.base.path,
                                      library=self.library)
            bus = design.bus(self.bus.value)
            br = evaluate_bus(bus, design)  # once: the chart reads the result's workings
            sa = br.workings
            tb = plotdata.timing_budget_data(bus, design, analysis=br) if sa.terms else None
        except PinlibError as err:
            self.design = self.bus_result = self.analysis = self.budget_data = None
            self.figures, self.limits = {}, []
            self.mode_note.value = ""
            self._failed(err, [self.chart])
            return
        self.error = None
        self.design, self.bus_result, self.analysis, self.budget_data = design, br, sa, tb
        self.figures = dict(br.figures)
        self.limits = self._limits(sa, br)
        missing = "".join(f"; not drawn: {path} ({why})"
                          for path, why in (tb.not_drawn.items() if tb else ()))
        if tb is None:
            self.chart.clear("no timing requirement to draw (no peripheral with the signals "
                             "the budget needs)")
        elif not tb.rows:
            self.chart.clear("no timing requirement has a time to draw" + missing)
        else:
            self.chart.draw(lambda: charts.spec(
                charts.timing_budget, tb.rows, available=tb.available, margins=tb.margins,
                status=tb.status, worst=tb.worst,
                title=f"SPI timing budget, {bus.id} at {format_si(tb.clock, 'Hz')}",
                subtitle=f"SPI mode {bus.spi_mode}; the tick is the time available"
                         + ("; bars: the board as designed, and each check's margin at "
                            "its worst corner of the tolerances (the checks table's)"
                            if tb.worst else "") + missing))
        self.status_html.value = status_line(br, f"Bus {br.id} at "
                                                  f"{format_si(bus.clock, 'Hz')}")
        self._show_limits()
        self._show_mode(br)
        self.checks_html.value = checks_table(br)
        self.notes_html.value = notes_html([br] + list(br.lines))

    def _show_mode(self, br: BusResult) -> None:
        """Under the mode: the devices that do not take it (the budget's bars and the
        highest clock do not depend on the mode, so nothing else shows why it fails or
        warns)."""
        refused = [c for _, _, c in br.all_checks() if c.id == "spi-mode" and c.status != "pass"]
        if not refused:
            self.mode_note.value = ""
            return
        said = "; ".join(e(c.message) for c in refused)
        fix = refused[0].advice
        # the worst of them: a mode against a class's typical list only warns
        word = "FAIL" if any(c.status == "fail" for c in refused) else "WARN"
        self.mode_note.value = notice(
            f"<b>{word}</b>: {said}. The timing budget and the highest clock do not "
            "depend on the mode" + (f"; {e(fix)}" if fix else "") + ".")

    @staticmethod
    def _limits(sa, br: BusResult) -> list[ClockLimit]:
        """Each requirement's own highest clock, as the engine worked it out (the
        edge rule of thumb is not among them: it warns and sets no limit)."""
        return [ClockLimit(what, clock, source) for clock, what, source in sa.clock_limits()
                if what != "nothing"]

    def _show_limits(self) -> None:
        f = self.figures.get("max_clock")
        top = self.limits[0] if self.limits else None
        text = f"Highest clock: <b>{e(figure_text(f))}</b>" if f else ""
        if top is not None:
            text += f", set by <b>{e(top.label)}</b> ({e(top.source)})"
        self.max_html.value = block(text, size=13)
        rows = "".join(f'<tr title="{e(x.what)}"><td style="{CELL}">{e(x.label)}</td>'
                       f'<td style="{NUM}">{e(format_value(x.clock, "Hz"))}</td></tr>'
                       for x in self.limits[:8])
        self.limits_html.value = (
            f'<table style="{TABLE}">'
            '<caption style="text-align:left;font-weight:700">Each requirement\'s own '
            f'highest clock</caption>{rows}</table>')

    def static_view(self) -> StaticView:
        """The chart and tables as plain HTML, for exported pages."""
        if self.bus_result is None:
            return StaticView(caution_html() + error_html(self.error))
        return StaticView(caution_html() + self.status_html.value + self.max_html.value
                          + self.chart.html() + self.limits_html.value
                          + self.checks_html.value)

