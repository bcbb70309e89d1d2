"""Workbench 06: crosstalk onto a slow line (:class:`CrosstalkExplorer`)."""

from __future__ import annotations

from dataclasses import replace

import ipywidgets as W

from pinlib.core import messages as M
from pinlib.core.errors import InputError, PinlibError
from pinlib.core.quantity import format_si
from pinlib.engines.coupling import LENGTH_SEARCH_MAX, evaluate_coupling
from pinlib.engines.dispatch import evaluate_bus
from pinlib.model.design import Aggressor, load_design
from pinlib.present import charts, plotdata
from pinlib.present.widgets.common import (
    ChartView,
    Slider,
    StaticView,
    _closest_option,
    _Panel,
    block_layout,
    find_file,
    heading,
    style,
    toggle_layout,
)
from pinlib.present.widgets.markup import (
    caution_html,
    checks_table,
    error_html,
    figures_table,
    notes_html,
    status_line,
)

__all__ = ["CrosstalkExplorer"]

#: The slider positions (common practice, no source: a board's usual gaps, runs, edges).
SPACINGS = (0.05e-3, 0.075e-3, 0.1e-3, 0.15e-3, 0.2e-3, 0.25e-3, 0.3e-3, 0.4e-3, 0.5e-3,
            0.75e-3, 1e-3, 1.5e-3, 2e-3)
LENGTHS = (0.01, 0.02, 0.03, 0.04, 0.06, 0.08, 0.1, 0.15, 0.2, 0.3, 0.5, 0.75,
           LENGTH_SEARCH_MAX)
EDGES = (0.2e-9, 0.3e-9, 0.5e-9, 0.75e-9, 1e-9, 1.5e-9, 2e-9, 3e-9, 5e-9, 10e-9)


#: The unit of each slider's values.
_UNITS = {"spacing": "m", "length": "m", "edge_time": "s"}


def _options(values, unit: str, own: float, within: tuple[float, float] | None = None
             ) -> list[tuple[str, float]]:
    """Slider options: the usual values and the design's own; with ``within``, the usual
    values inside it and its two ends (the range the engine searches and the chart
    draws), so the slider reaches as far as the chart, and no further."""
    got = set(values)
    if within is not None:
        lo, hi = (float(x) for x in within)
        got = {v for v in got if lo <= v <= hi} | {lo, hi}
    got = sorted(got | {float(own)})
    return [(format_si(v, unit), v) for v in got]


class CrosstalkExplorer(_Panel):
    """One ``[[coupling]]`` of a design: move the spacing, the parallel length and the
    aggressor's edge and watch the victim's noise.

    The design's buses are evaluated once (the victim's pull-up, sink and receivers, the
    aggressor's driver); each change evaluates the coupling again
    (:func:`pinlib.engines.coupling.evaluate_coupling`): its checks, the minimum spacing
    and maximum length, the noise against spacing and the victim's waveforms.

    Parameters
    ----------
    path : path
        The design file (relative to the working folder or a folder above it).
    coupling : int
        Which ``[[coupling]]`` of the file (0: the first).

    Settings for :meth:`set` (SI units): ``spacing``, ``length``, ``edge_time`` (the
    aggressor's 10-90 % edge; its swing and source resistance stay the design's),
    ``show`` (the waveforms drawn: ``"both"``, ``"held low"`` or ``"held high"``; the
    chart only, nothing is solved again).

    Attributes
    ----------
    design, result : the design and the coupling's CouplingResult.
    figures : dict of str to Figure
    sweep, waves : NoiseSweep, NoiseWaves
        What the charts draw.
    noise_chart : ChartView
        Peak noise against spacing.
    wave_charts : dict of str to ChartView
        The victim's waveforms held ``"low"`` and held ``"high"``, each on its own time
        axis to where it settles (a line held high through its pull-up recovers far
        slower than a driven-low one); "Show" hides the one not chosen.
    """

    def __init__(self, path="workbooks/designs/demo-board.toml", *, coupling: int = 0):
        super().__init__()
        self.design = load_design(find_file(path))
        if not 0 <= coupling < len(self.design.couplings):
            raise InputError(M.NO_SUCH_COUPLING, field="coupling", value=coupling,
                             expected=f"0 to {len(self.design.couplings) - 1}"
                             if self.design.couplings else "a design with [[coupling]]")
        self.coupling = self.design.couplings[coupling]
        needed = {self.coupling.victim_bus}
        if not isinstance(self.coupling.aggressor, Aggressor):
            needed.add(self.coupling.aggressor[0])
        self.buses = {b.id: evaluate_bus(b, self.design) for b in self.design.buses
                      if b.id in needed}
        first = evaluate_coupling(self.coupling, self.buses, self.design)
        # the coupling as the design and pinlib check name it ("sensors.scl<-display.sclk");
        # a moved edge slider makes the aggressor a described edge named "edge-1", which
        # says nothing to the reader: the checks keep this name, the status line says
        # the edge was moved
        self.name = first.id
        self.aggressor = first.workings.aggressor
        self.result = None
        self.figures: dict = {}
        self.sweep = self.waves = None
        c = self.coupling
        self.sliders: dict[str, Slider] = {}  # by label
        # the spacing from where the search starts to where it ends (the chart's axis)
        searched = first.workings.spacing_range
        self.spacing = self._slider("Spacing", _options(SPACINGS, "m", c.spacing, searched),
                                    c.spacing)
        self.length = self._slider("Parallel length", _options(LENGTHS, "m", c.length),
                                   c.length)
        edge = self.aggressor.edge_time
        self.edge_time = self._slider("Aggressor edge", _options(EDGES, "s", edge), edge)
        # short labels so the three buttons fit the control column on one row
        self.show = W.ToggleButtons(options=[("both", "both"), ("low", "held low"),
                                             ("high", "held high")], value="both",
                                    description="Show", style=style(button_width="64px"),
                                    layout=toggle_layout())
        self.show.observe(lambda _c: self._draw_waves(), names="value")
        self._choice("show", self.show)
        self.noise_chart = ChartView()
        self.wave_charts = {held: ChartView() for held in ("low", "high")}
        self.figures_html = W.HTML(layout=block_layout())
        self.checks_html = W.HTML(layout=block_layout())
        self.notes_html = W.HTML(layout=block_layout())
        for name in ("spacing", "length", "edge_time"):
            self._setters[name] = lambda v, name=name: self._set_slider(name, v)
            self._watch(getattr(self, name))
        self.widget = self._layout()
        self._show(first)

    def _slider(self, label: str, options, value) -> W.SelectionSlider:
        slider = Slider(label, options, value)
        self.sliders[label] = slider
        return slider.control

    def _set_slider(self, name: str, value) -> None:
        slider = getattr(self, name)
        slider.value = _closest_option(slider.options, value, name, f"{name} slider",
                                       unit=_UNITS[name], series=None)

    def varied(self):
        """The coupling as the sliders set it (a described edge where the edge moved)."""
        c = replace(self.coupling, spacing=self.spacing.value, length=self.length.value)
        if (self.edge_time.value != self.aggressor.edge_time
                or isinstance(c.aggressor, Aggressor)):
            c = replace(c, aggressor=replace(self.aggressor, edge_time=self.edge_time.value),
                        loc=self.coupling.loc)
        return c

    def title(self) -> str:
        """What the status line names: the victim beside the design's aggressor (a moved
        edge slider turns it into a described edge, whose name says nothing)."""
        name = f"{self.coupling.victim} beside {self.coupling.aggressor_name}"
        if self.edge_time.value != self.aggressor.edge_time:
            name += f", its edge set to {format_si(self.edge_time.value, 's')}"
        return name

    def _recompute(self) -> None:
        try:
            got = evaluate_coupling(self.varied(), self.buses, self.design)
        except PinlibError as err:
            self.result, self.figures, self.sweep, self.waves = None, {}, None, None
            self.figures_html.value = self.checks_html.value = self.notes_html.value = ""
            self._failed(err, [self.noise_chart, *self.wave_charts.values()])
            return
        self._show(got)

    def _show(self, got) -> None:
        self.error = None
        self.result = got
        self.figures = dict(got.figures)
        self.sweep = plotdata.noise_vs_spacing_data(got)
        self.waves = plotdata.noise_waveform_data(got)
        d = self.sweep
        self.noise_chart.draw(lambda: charts.spec(
            charts.noise_vs_spacing, d.spacing, d.peak, allowed=d.allowed,
            design_spacing=d.design_spacing, design_peak=d.design_peak,
            minimum_spacing=d.minimum_spacing, within_spacing=d.within_spacing,
            t_sp=d.t_sp, searched_from=d.searched_from, title="Crosstalk against spacing",
            subtitle=f"parallel length {format_si(d.length, 'm')}; " + (
                f"a crossing shorter than tSP {format_si(d.t_sp, 's')} is filtered (a "
                "warning): the minimum spacing is where no check fails" if d.t_sp else
                "these inputs need not filter spikes: a crossing fails")))
        self._draw_waves()
        self.status_html.value = status_line(got, self.title())
        self.figures_html.value = figures_table(self.figures)
        self.checks_html.value = checks_table(got, name=self.name)
        self.notes_html.value = notes_html([got], self._notes(got))

    def _notes(self, got) -> list[str]:
        """The result's notes, where a moved edge slider made the aggressor a described
        edge: the engine names it ("aggressor edge-1: 3.3 V swing, edge 500 ps ..."),
        a name the reader never met; it is the design's aggressor, its edge set here."""
        if got.aggressor == self.coupling.aggressor_name:
            return list(got.notes)
        said = f"aggressor {got.aggressor}:"
        named = f"aggressor {self.coupling.aggressor_name} (its edge set here):"
        return [named + n[len(said):] if n.startswith(said) else n for n in got.notes]

    def _draw_waves(self) -> None:
        w = self.waves
        if w is None:
            return
        shown = self.show.value
        for held, view in self.wave_charts.items():
            labels = [k for k in w.traces if k.startswith(f"held {held}")]
            if shown not in ("both", f"held {held}") or not labels:
                view.clear(f"held {held}: not shown (Show)")
                view.widget.layout.display = "none"
                continue
            view.widget.layout.display = None
            t, traces = w.window(labels)
            view.draw(lambda t=t, traces=traces, held=held: charts.spec(
                charts.waveforms, t, traces, v_il=w.v_il, v_ih=w.v_ih, vdd=w.vdd,
                title=f"Victim noise, held {held}",
                subtitle="at the victim's receivers, to where it settles"))

    def static_view(self) -> StaticView:
        """The charts and tables as plain HTML, for exported pages."""
        if self.result is None:
            return StaticView(caution_html() + error_html(self.error))
        waves = "".join(v.html() for v in self.wave_charts.values() if v.svg)
        return StaticView(caution_html() + self.status_html.value + self.noise_chart.html()
                          + waves + self.figures_html.value + self.checks_html.value)

    def _layout(self) -> W.Widget:
        box = {label: s.box for label, s in self.sliders.items()}
        controls = [heading("The run"), box["Spacing"], box["Parallel length"],
                    heading("The aggressor"), box["Aggressor edge"],
                    heading("Waveforms"), self.show]
        outputs = [self.held_html, self.status_html, self.noise_chart.widget,
                   *(v.widget for v in self.wave_charts.values()), self.figures_html,
                   self.notes_html]
        return W.VBox([self._header("Crosstalk onto a slow line"),
                       self._columns(controls, outputs, [self.checks_html])],
                      layout=W.Layout(width="100%"))
