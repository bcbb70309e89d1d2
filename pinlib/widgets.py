"""Workbench widgets for Jupyter: build a bus, explore a line, budget SPI timing, record
part values, rerun a design after a substitution.

Each class holds ipywidgets 8 controls and what it last computed.  ``.widget`` is the
container to display; ``set(...)`` and a few named methods change the controls the way
a user would (values in SI units), so the code path a knob takes is the one the unit
tests drive, without a browser.

Every figure comes from the engines.  A widget writes the design its controls describe
(``pinlib.design/1`` text, built with tomlkit), loads it with
:func:`pinlib.design.design_from_text` and evaluates it with :mod:`pinlib.check`; the
arrays each chart draws come from :mod:`pinlib.plotdata` and the chart specifications
from :mod:`pinlib.charts`.  Nothing here computes an engineering figure; it formats.

Charts
------
A chart is an ``ipywidgets.HTML`` whose value is the chart as inline SVG, rendered by
vl-convert (:func:`pinlib.charts.to_svg`).  A redraw replaces that value in one message,
so the old chart stays on screen until the new one is there (no flicker, as there is when
an ``Output`` is cleared and redrawn), and a chart whose specification did not change is
not redrawn at all.  This is preferred over ``altair.JupyterChart`` because it needs no
JavaScript beyond ipywidgets itself: it works offline, in any front end that shows
ipywidgets (JupyterLab, Notebook 7, VS Code) with or without the anywidget extension,
and in headless runs (nbclient, nbval), where the SVG is a string the tests can read.
The price: no tooltips or zoom, and about 60 ms of rendering per chart.

Exported pages
--------------
In an exported HTML page, widgets come alive only through the ipywidgets JavaScript,
which such a page loads from a CDN.  For a page that must read offline, every class has
:meth:`static_view`: the same charts and tables as plain HTML with the SVG inline.

This module imports ipywidgets, and altair through :mod:`pinlib.charts`; the command line
and :mod:`pinlib.check` never import it.
"""

from __future__ import annotations

import contextlib
import copy
import html
import importlib.util
import itertools
import math
import os
import re
import sys
from dataclasses import dataclass
from pathlib import Path

import ipywidgets as W
import numpy as np
import tomlkit

from pinlib import charts, plotdata
from pinlib import messages as M
from pinlib.buses.pushpull import evaluate_gpio, gpio_analyses
from pinlib.check import check_design, design_result
from pinlib.design import FORMAT as DESIGN_FORMAT
from pinlib.design import MODES, Design, design_from_text, load_design
from pinlib.errors import InputError, LibraryError, PinlibError
from pinlib.eseries import values_in_range
from pinlib.library import load_library
from pinlib.library.loader import BUILTIN_DIR, Library
from pinlib.quantity import format_si
from pinlib.report import format_value
from pinlib.result import CAUTION, BusResult, Group
from pinlib.tomlfile import atomic_write

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover - exercised on 3.10 only
    import tomli as tomllib

__all__ = [
    "ChartView",
    "StaticView",
    "BenchReading",
    "ClockLimit",
    "BusBuilder",
    "LineExplorer",
    "SpiBudget",
    "PartRecorder",
    "SwapExplorer",
    "find_file",
    "figures_table",
    "checks_table",
]

_ids = itertools.count(1)
_LABEL = {"description_width": "120px"}
_WIDE = W.Layout(width="340px")
_STATUS_TEXT = {"pass": "PASS", "warn": "WARN", "fail": "FAIL"}
_CELL = "border:1px solid #c8c8c8;padding:1px 6px;vertical-align:top;text-align:left"
_NUM = "border:1px solid #c8c8c8;padding:1px 6px;vertical-align:top;text-align:right;" \
       "white-space:nowrap"
_HEAD = _CELL + ";background:#eef0f2"


# =========================================================================== helpers


def _e(text) -> str:
    return html.escape(str(text), quote=True)


def _badge(status: str) -> str:
    colour = charts.STATUS_COLOURS.get(status, "#999999")
    return (f'<span style="background:{colour};color:#000;font-weight:700;padding:0 4px;'
            f'border-radius:3px">{_STATUS_TEXT.get(status, _e(status))}</span>')


def _note(text: str) -> str:
    return f'<div style="color:#4a4a4a;font-style:italic;padding:4px 0">{_e(text)}</div>'


def _error_html(err: PinlibError) -> str:
    bits = [f"<b>{_e(err.problem)}</b>"]
    if err.field:
        bits.append(f"field <code>{_e(err.field)}</code>")
    if err.value is not None:
        bits.append(f"got <code>{_e(err.value)}</code>")
    if err.expected:
        bits.append(f"expected {_e(err.expected)}")
    if err.hint:
        bits.append(_e(err.hint))
    return (f'<div style="border-left:6px solid {charts.FAIL};padding:2px 8px;'
            f'background:#fff4ec">{"; ".join(bits)}</div>')


def _inline_error(err: PinlibError | None) -> str:
    """The short form shown beside a field: what is wrong and what would do."""
    if err is None:
        return ""
    text = err.problem
    if err.expected:
        text += f"; expected {err.expected}"
    if err.hint:
        text += f" ({err.hint})"
    return f'<span style="color:{charts.FAIL};font-weight:600">{_e(text)}</span>'


def _margin(m) -> str:
    if m is None:
        return ""
    m = float(m)
    return "∞" if not math.isfinite(m) else f"{m * 100:+.0f} %"


def figures_table(figures: dict, caption: str = "Figures") -> str:
    """An HTML table of figures (name, value with its SI prefix)."""
    rows = "".join(f'<tr><td style="{_CELL}"><code>{_e(name)}</code></td>'
                   f'<td style="{_NUM}">{_e(format_value(f.value, f.unit))}</td></tr>'
                   for name, f in figures.items())
    return (f'<table style="border-collapse:collapse;font-size:12px;margin:4px 0">'
            f'<caption style="text-align:left;font-weight:700">{_e(caption)}</caption>'
            f'<tr><th style="{_HEAD}">figure</th><th style="{_HEAD}">value</th></tr>{rows}'
            "</table>")


def checks_table(bus_result: BusResult, caption: str = "Checks") -> str:
    """An HTML table of every check of a bus: status (as a word and a colour), where,
    value, limit, margin and the source of the limit."""
    head = "".join(f'<th style="{_HEAD}">{h}</th>' for h in (
        "status", "check", "where", "subject", "value", "limit", "margin", "source"))
    rows = []
    for seg, sig, c in bus_result.all_checks():
        where = seg or sig or bus_result.id
        value = "" if isinstance(c.value, bool) else format_value(c.value, c.unit)
        limit = "" if isinstance(c.limit, bool) else format_value(c.limit, c.unit)
        rows.append(
            f'<tr title="{_e(c.message)}"><td style="{_CELL}">{_badge(c.status)}</td>'
            f'<td style="{_CELL}"><code>{_e(c.id)}</code></td><td style="{_CELL}">{_e(where)}'
            f'</td><td style="{_CELL}">{_e(c.subject or "")}</td>'
            f'<td style="{_NUM}">{_e(value)}</td><td style="{_NUM}">{_e(limit)}</td>'
            f'<td style="{_NUM}">{_e(_margin(c.margin))}</td>'
            f'<td style="{_CELL};font-size:11px">{_e(c.source)}</td></tr>')
    return (f'<table style="border-collapse:collapse;font-size:12px;margin:4px 0">'
            f'<caption style="text-align:left;font-weight:700">{_e(caption)}</caption>'
            f"<tr>{head}</tr>{''.join(rows)}</table>")


def _notes_html(groups: list[Group]) -> str:
    notes = [n for g in groups for n in g.notes]
    if not notes:
        return ""
    items = "".join(f"<li>{_e(n)}</li>" for n in dict.fromkeys(notes))
    return (f'<details style="font-size:12px"><summary>Notes ({len(notes)})</summary>'
            f"<ul>{items}</ul></details>")


def _status_line(result: BusResult, what: str) -> str:
    counts = {s: 0 for s in _STATUS_TEXT}
    for _, _, c in result.all_checks():
        counts[c.status] += 1
    return (f'<div style="font-size:14px;margin:2px 0">{_e(what)}: {_badge(result.status)} '
            f"{counts['pass']} pass, {counts['warn']} warn, {counts['fail']} fail</div>")


def _caution_html() -> str:
    return (f'<div style="border-left:6px solid {charts.WARN};background:#fff7e0;'
            f'padding:2px 8px;font-size:11px">{_e(CAUTION)}</div>')


_SVG_ID = re.compile(r'\bid="([^"]+)"')


def _inline_svg(svg: str, key: str) -> str:
    """SVG text ready to sit inline among others: no XML prologue, every id prefixed with
    ``key`` so that two charts' clip paths cannot collide."""
    svg = re.sub(r"^\s*<\?xml[^>]*\?>\s*", "", svg)
    for old in sorted(set(_SVG_ID.findall(svg)), key=len, reverse=True):
        new = f"{key}-{old}"
        svg = (svg.replace(f'id="{old}"', f'id="{new}"').replace(f"url(#{old})", f"url(#{new})")
               .replace(f'href="#{old}"', f'href="#{new}"'))
    return svg


def _num(x: float) -> str:
    """A number for a design file: six significant digits, no exponent for usual sizes."""
    return f"{float(x):.6g}"


def _closest_option(options, value: float, field: str, what: str) -> float:
    vals = [v for _, v in options]
    for v in vals:
        if math.isclose(v, float(value), rel_tol=1e-9):
            return v
    raise InputError(M.NOT_A_LISTED_VALUE.format(what=what), field=field, value=value,
                     expected=f"one of {format_si(vals[0], 'Ω')} … {format_si(vals[-1], 'Ω')} "
                              f"in E24")


def _e24_options(lo: float, hi: float) -> list[tuple[str, float]]:
    return [(format_si(float(v), "Ω"), float(v)) for v in values_in_range("E24", lo, hi)]


def _set_options(dropdown, options, keep) -> None:
    """Give a dropdown new options, keeping its value when it is still offered."""
    values = [o[1] if isinstance(o, tuple) else o for o in options]
    dropdown.options = options
    if keep in values:
        dropdown.value = keep
    elif values:
        dropdown.value = values[0]


def find_file(path: str | os.PathLike) -> Path:
    """A file by a path that may be relative to the working folder or to a folder above it.

    A notebook runs in its own folder (``workbooks/``), while a path is often written from
    the repository's root (``workbooks/designs/demo-board.toml``): the working folder is
    tried first, then each folder above it.

    Raises
    ------
    InputError
        When no such file exists.
    """
    p = Path(path)
    if p.is_absolute() or p.exists():
        if not p.exists():
            raise InputError(M.FILE_NOT_FOUND, file=str(p))
        return p
    for base in Path.cwd().resolve().parents:
        if (base / p).exists():
            return base / p
    raise InputError(M.FILE_NOT_FOUND, file=str(p),
                     hint="looked in the working folder and each folder above it")


class StaticView:
    """Charts and tables as plain HTML (inline SVG, no script), for exported pages.

    Display it (the last expression of a cell) and the notebook stores it as
    ``text/html``, which nbconvert writes into the page as it is.
    """

    def __init__(self, body: str):
        self.html = body

    def _repr_html_(self) -> str:
        return self.html


class ChartView:
    """One chart, drawn as inline SVG in an ``ipywidgets.HTML``.

    Attributes
    ----------
    widget : ipywidgets.HTML
        What to display.
    chart : altair chart, dict or None
        The chart last drawn (a dict when it was built by :func:`pinlib.charts.spec`).
    spec : dict or None
        Its Vega-Lite specification.
    svg : str or None
        Its SVG, as placed in the widget.
    renders : int
        How many times the SVG was rendered (an unchanged spec is not).
    """

    def __init__(self, placeholder: str = "no chart yet"):
        self.key = f"pinlib-chart-{next(_ids)}"
        self.widget = W.HTML(value=_note(placeholder))
        self.chart = None
        self.spec: dict | None = None
        self.svg: str | None = None
        self.message: str | None = placeholder
        self.renders = 0

    def draw(self, make) -> bool:
        """Build a chart with ``make()`` and draw it in place.

        False when the chart is the one already shown, or when the chart refuses its
        input (a PinlibError; the view then says why instead).
        """
        # altair checks every object it builds against the Vega-Lite schema ("debug
        # mode"); for a waveform of a few thousand points that is most of a redraw.
        # pinlib.charts' own tests validate the specifications it builds.
        from altair.utils import schemapi

        try:
            with schemapi.debug_mode(False):
                chart = make()
        except PinlibError as err:
            self.clear(f"no chart: {err.problem}")
            return False
        return self.show(chart)

    def show(self, chart) -> bool:
        """Draw ``chart`` (an altair chart or its spec as a dict) in place; False when it
        is the chart already shown."""
        spec = chart if isinstance(chart, dict) else chart.to_dict(validate=False)
        if spec == self.spec:
            return False
        svg = _inline_svg(charts.to_svg(spec), self.key)
        self.chart, self.spec, self.svg, self.message = chart, spec, svg, None
        self.widget.value = f'<div class="pinlib-chart">{svg}</div>'
        self.renders += 1
        return True

    def clear(self, text: str) -> None:
        """Replace the chart with a note saying why there is none."""
        self.chart = self.spec = self.svg = None
        self.message = text
        self.widget.value = _note(text)

    def data(self) -> list[list[dict]]:
        """The data values of each layer of the chart shown (empty when none)."""
        if self.spec is None:
            return []
        layers = self.spec.get("layer", [self.spec])
        return [list((layer.get("data") or {}).get("values", [])) for layer in layers]

    def html(self) -> str:
        return f'<figure style="margin:6px 0">{self.svg}</figure>' if self.svg else \
            _note(self.message or "no chart")


def _field_row(control, error: W.HTML) -> W.HBox:
    return W.HBox([control, error], layout=W.Layout(align_items="center"))


class _Panel:
    """What every workbench class shares: batching of changes, the error shown, setters."""

    def __init__(self):
        self._quiet = 0
        self.error: PinlibError | None = None
        self.updates = 0
        self._setters: dict = {}
        self.status_html = W.HTML()

    @contextlib.contextmanager
    def _hold(self):
        """Change several controls without recomputing after each one."""
        self._quiet += 1
        try:
            yield
        finally:
            self._quiet -= 1

    def _changed(self, change=None) -> None:
        if not self._quiet:
            self.update()

    def _watch(self, *controls) -> None:
        for c in controls:
            c.observe(self._changed, names="value")

    def update(self) -> None:  # pragma: no cover - every class has its own
        raise NotImplementedError

    def set(self, **values):
        """Set several controls at once (SI units), then recompute once.

        The names a class accepts are listed in its docstring; an unknown name is an
        InputError naming the accepted ones.
        """
        unknown = sorted(set(values) - set(self._setters))
        if unknown:
            raise InputError(M.UNKNOWN_SETTING, field=unknown[0], value=values[unknown[0]],
                             expected="one of " + ", ".join(sorted(self._setters)))
        with self._hold():
            for name, value in values.items():
                self._setters[name](value)
        self.update()
        return self

    def _number(self, name: str, control, scale: float = 1.0) -> None:
        """A setter for a number control that shows ``scale`` × the SI value."""

        def setter(value, control=control):
            shown = float(value) * scale
            lo, hi = getattr(control, "min", -math.inf), getattr(control, "max", math.inf)
            if not (math.isfinite(shown) and lo <= shown <= hi):
                raise InputError(M.OUTSIDE_CONTROL_RANGE, field=name, value=value,
                                 expected=f"between {lo / scale:g} and {hi / scale:g} (SI)")
            control.value = shown

        self._setters[name] = setter

    def _choice(self, name: str, control) -> None:
        def setter(value, control=control):
            values = [o[1] if isinstance(o, tuple) else o for o in control.options]
            if value not in values:
                raise InputError(M.NOT_ALLOWED_VALUE, field=name, value=value,
                                 expected=", ".join(map(str, values)) or "none offered")
            control.value = value

        self._setters[name] = setter

    def _failed(self, err: PinlibError, views=()) -> None:
        self.error = err
        self.status_html.value = _error_html(err)
        for v in views:
            v.clear(f"no chart: {err.problem}")

    def _header(self, text: str) -> W.HTML:
        return W.HTML(f'<h3 style="margin:2px 0">{_e(text)}</h3>{_caution_html()}')


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


# =========================================================================== bus builder


@dataclass(frozen=True)
class BenchReading:
    """The bench panel's answer: a rise time measured on the board turned into Cb.

    Attributes
    ----------
    t_measured : float
        The rise time read on the oscilloscope. [s]
    c_probe : float
        The probe's capacitance. [F]
    levels : tuple of float
        The measuring levels as fractions of VDD. [1]
    rp : float
        The effective pull-up on the line (the engine's nominal value). [Ω]
    cb : float
        Bus capacitance without the probe. [F]
    rise : float
        The rise time between the same levels without the probe. [s]
    cb_model : float
        The engine's bus capacitance of the line, for comparison. [F]
    """

    t_measured: float
    c_probe: float
    levels: tuple
    rp: float
    cb: float
    rise: float
    cb_model: float


class BusBuilder(_Panel):
    """Start an I2C or SMBus design from the library's parts.

    Pick a controller and peripherals (filtered by category, supply range and a further
    pin function), set the supply, the mode, the trace and the pull-up (``auto`` or an
    E24 value); the figures, the checks and the pull-up window chart (SDA) follow each
    change.  The bench panel turns a rise time measured on the board, with the probe's
    capacitance, back into the bus capacitance.  :meth:`save` writes the design file.

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
    ``levels``, ``title``.

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
        self.text = ""
        self.saved_path: Path | None = None
        self._peripherals: list[tuple[str, str]] = []

        parts = self._bus_parts()
        cats = sorted({p.category for p in parts.values() if p.category != "controller"})
        fns = sorted({f for p in parts.values() for f in p.functions()} -
                     {"i2c-sda", "i2c-scl"})

        self.title = W.Text(value=title, description="Title", style=_LABEL, layout=_WIDE)
        self.protocol = W.ToggleButtons(options=["i2c", "smbus"], value=protocol,
                                        description="Protocol", style=_LABEL)
        self.mode = W.Dropdown(options=MODES[protocol], value=MODES[protocol][
            1 if protocol == "i2c" else 0], description="Mode", style=_LABEL, layout=_WIDE)
        self.supply = W.BoundedFloatText(value=supply, min=0.8, max=5.5, step=0.05,
                                         description="Supply (V)", style=_LABEL, layout=_WIDE)
        self.supply_tolerance = W.BoundedFloatText(value=5.0, min=0.0, max=20.0, step=0.5,
                                                   description="Supply ± (%)", style=_LABEL,
                                                   layout=_WIDE)
        self.category = W.Dropdown(options=["any"] + cats, value="any",
                                   description="Category", style=_LABEL, layout=_WIDE)
        self.fits_supply = W.Checkbox(value=True, description="parts whose supply range "
                                      "holds the rail", indent=False)
        self.function = W.Dropdown(options=["any"] + fns, value="any",
                                   description="Also offers", style=_LABEL, layout=_WIDE)
        self.controller = W.Dropdown(options=[], description="Controller", style=_LABEL,
                                     layout=_WIDE)
        self.pick = W.Dropdown(options=[], description="Peripheral", style=_LABEL,
                               layout=_WIDE)
        self.add_button = W.Button(description="Add", layout=W.Layout(width="70px"))
        self.placed = W.Select(options=[], rows=6, description="Placed", style=_LABEL,
                               layout=_WIDE)
        self.remove_button = W.Button(description="Remove", layout=W.Layout(width="70px"))
        self.trace = _Trace(self, length_cm=length * 100.0, max_cm=200.0)
        self.extra_capacitance = W.BoundedFloatText(value=0.0, min=0.0, max=1000.0, step=1.0,
                                                    description="Extra C (pF)", style=_LABEL,
                                                    layout=_WIDE)
        self.pullup_mode = W.ToggleButtons(options=["auto", "fixed"], value="auto",
                                           description="Pull-up", style=_LABEL)
        self.pullup = W.SelectionSlider(options=_e24_options(100.0, 100e3), value=4700.0,
                                        description="Rp (E24)", continuous_update=False,
                                        style=_LABEL, layout=_WIDE)
        self.pullup_tolerance = W.BoundedFloatText(value=1.0, min=0.0, max=20.0, step=0.5,
                                                   description="Rp ± (%)", style=_LABEL,
                                                   layout=_WIDE)
        self.rise_measured = W.BoundedFloatText(value=0.0, min=0.0, max=1e6, step=1.0,
                                                description="Rise (ns)", style=_LABEL,
                                                layout=_WIDE)
        self.c_probe = W.BoundedFloatText(value=10.0, min=0.0, max=1000.0, step=0.5,
                                          description="Probe (pF)", style=_LABEL,
                                          layout=_WIDE)
        self.levels = W.Dropdown(options=[("30–70 %", (0.3, 0.7)), ("10–90 %", (0.1, 0.9)),
                                          ("20–80 %", (0.2, 0.8))], value=(0.3, 0.7),
                                 description="Measured", style=_LABEL, layout=_WIDE)
        self.bench_html = W.HTML()
        self.save_path = W.Text(value="", placeholder="board.toml", description="Save as",
                                style=_LABEL, layout=_WIDE)
        self.save_button = W.Button(description="Save", layout=W.Layout(width="70px"))
        self.save_error = W.HTML()
        self.window = ChartView()
        self.figures_html = W.HTML()
        self.checks_html = W.HTML()
        self.notes_html = W.HTML()

        self.protocol.observe(self._protocol_changed, names="value")
        for c in (self.category, self.fits_supply, self.function, self.supply):
            c.observe(self._filters_changed, names="value")
        self._watch(self.mode, self.supply_tolerance, self.controller, self.extra_capacitance,
                    self.pullup_mode, self.pullup, self.pullup_tolerance, self.title)
        for c in (self.rise_measured, self.c_probe, self.levels):
            c.observe(lambda change: self._bench(), names="value")
        self.add_button.on_click(lambda _b: self.add_peripheral(self.pick.value))
        self.remove_button.on_click(lambda _b: self.placed.value and
                                    self.remove_peripheral(self.placed.value))
        self.save_button.on_click(lambda _b: self._save_clicked())

        self._choice("protocol", self.protocol)
        self._setters["mode"] = self._set_mode
        self._number("supply", self.supply)
        self._number("supply_tolerance", self.supply_tolerance, 100.0)
        self._choice("controller", self.controller)
        self._choice("category", self.category)
        self._setters["fits_supply"] = lambda v: setattr(self.fits_supply, "value", bool(v))
        self._choice("function", self.function)
        self._number("extra_capacitance", self.extra_capacitance, 1e12)
        self._setters["pullup"] = self._set_pullup
        self._number("pullup_tolerance", self.pullup_tolerance, 100.0)
        self._number("rise_measured", self.rise_measured, 1e9)
        self._number("c_probe", self.c_probe, 1e12)
        self._choice("levels", self.levels)
        self._setters["title"] = lambda v: setattr(self.title, "value", str(v))

        with self._hold():
            self._filters_changed()
            if controller in [v for _, v in self.controller.options]:
                self.controller.value = controller
            for pid in peripherals:
                self.add_peripheral(pid)
        self.widget = self._layout()
        self.update()

    # ---------------------------------------------------------------- choices
    def _bus_parts(self) -> dict:
        """Parts that can sit on an open-drain bus: SDA and SCL pins, not a bridging part
        (a translator splits the bus into segments, which this builder does not draw)."""
        return {pid: p for pid, p in sorted(self.library.placeable().items())
                if not p.sides and p.category != "cable" and p.pin_for("i2c-sda")
                and p.pin_for("i2c-scl")}

    def _fits(self, part, *, category: bool) -> bool:
        if category and self.category.value != "any" and part.category != self.category.value:
            return False
        if self.fits_supply.value and part.supply is not None:
            lo, hi = float(part.supply.min.at()), float(part.supply.max.at())
            if not lo <= self.supply.value <= hi:
                return False
        return self.function.value == "any" or self.function.value in part.functions()

    def _label(self, pid: str, part) -> str:
        return f"{pid} — {part.title}"

    def _filters_changed(self, change=None) -> None:
        parts = self._bus_parts()
        with self._hold():
            ctl = [(self._label(k, p), k) for k, p in parts.items()
                   if p.category == "controller" and self._fits(p, category=False)]
            _set_options(self.controller, ctl, self.controller.value)
            per = [(self._label(k, p), k) for k, p in parts.items()
                   if self._fits(p, category=True)]
            _set_options(self.pick, per, self.pick.value)
        self._changed()

    def _protocol_changed(self, change=None) -> None:
        with self._hold():
            modes = MODES[self.protocol.value]
            _set_options(self.mode, list(modes), self.mode.value)
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
        bus.add("supply_tolerance", f"{_num(self.supply_tolerance.value)} %")
        bus.add("pullup", "auto" if self.pullup_mode.value == "auto" else
                f"{_num(self.pullup.value)} Ω")
        bus.add("pullup_tolerance", f"{_num(self.pullup_tolerance.value)} %")
        bus.add("pullup_series", "E24")
        bus.add("trace", _inline(self.trace.entry("trace")))
        if self.extra_capacitance.value:
            bus.add("extra_capacitance", f"{_num(self.extra_capacitance.value)} pF")
        devices = []
        if self.controller.value:
            devices.append({"ref": "U1", "part": self.controller.value, "role": "controller"})
        devices += [{"ref": r, "part": p} for r, p in self._peripherals]
        bus.add("devices", _devices_array(devices))
        aot = tomlkit.aot()
        aot.append(bus)
        doc.add(tomlkit.nl())
        doc.add("bus", aot)
        return tomlkit.dumps(doc)

    def update(self) -> None:
        """Rebuild the design from the controls, evaluate it, redraw."""
        if self._quiet:
            return
        self.updates += 1
        try:
            text = self.design_text()
            design = _load(text, self.library)
            result = check_design(design)
            window = plotdata.pullup_window_data(design.buses[0], design, signal=self.signal)
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
        self.window.draw(lambda: charts.pullup_window(
            w.cb, w.rp_min, w.rp_max, chosen_cb=w.chosen_cb, chosen_rp=w.chosen_rp,
            title=f"Pull-up window, {w.signal.upper()}",
            subtitle=(f"tr ≤ {format_si(w.tr_max, 's')}; Rp(min) {format_si(w.rp_min, 'Ω')}"
                      + (f" set by {w.weakest}" if w.weakest else "")),
            chosen_label=f"design: {format_si(w.chosen_rp, 'Ω')} at "
                         f"{format_si(w.chosen_cb, 'F')}"))
        self.status_html.value = _status_line(br, f"Bus {br.id} ({self.mode.value})")
        self.figures_html.value = figures_table(self.figures)
        self.checks_html.value = checks_table(br)
        self.notes_html.value = _notes_html([br])
        self._bench()

    def _bench(self) -> None:
        from pinlib.buses.opendrain import capacitance_from_rise

        self.bench, self.bench_error = None, None
        t = self.rise_measured.value * 1e-9
        if self.window_data is None:
            self.bench_html.value = _note("the bench panel needs a design that evaluates")
            return
        if t <= 0:
            self.bench_html.value = _note("enter the rise time read on the oscilloscope")
            return
        w = self.window_data
        lo, hi = self.levels.value
        c_probe = self.c_probe.value * 1e-12
        try:
            cb, rise = capacitance_from_rise(t, w.chosen_rp, c_probe, lo=lo, hi=hi)
        except PinlibError as err:
            self.bench_error = err
            self.bench_html.value = _inline_error(err)
            return
        self.bench = BenchReading(t, c_probe, (lo, hi), w.chosen_rp, float(cb), float(rise),
                                  w.chosen_cb)
        self.bench_html.value = (
            f'<div style="font-size:12px">With Rp = {format_si(w.chosen_rp, "Ω")} (every '
            f"pull-up on {w.signal.upper()} in parallel): bus capacitance without the probe "
            f"<b>{format_si(cb, 'F')}</b> (the model's Cb: {format_si(w.chosen_cb, 'F')}); "
            f"rise time without the probe <b>{format_si(rise, 's')}</b> "
            f"({lo:.0%}–{hi:.0%}).</div>")

    def save(self, path: str | os.PathLike) -> Path:
        """Write the design file atomically, after loading it back as a check.

        The text is loaded with :func:`pinlib.design.design_from_text` from where it will
        be (its ``library`` folders resolved beside it) before anything is written; an
        invalid design raises and leaves any existing file as it was.
        """
        path = Path(path)
        text = self.design_text(relative_to=path.parent)
        design_from_text(tomllib.loads(text), text, path)
        atomic_write(path, text)
        self.saved_path = path
        return path

    def _save_clicked(self) -> None:
        try:
            if not self.save_path.value.strip():
                raise InputError(M.FILE_NAME_NEEDED, field="save as",
                                 expected="a path such as board.toml")
            path = self.save(self.save_path.value.strip())
        except PinlibError as err:
            self.save_error.value = _inline_error(err)
            return
        self.save_error.value = f'<span style="font-size:12px">saved {_e(path)}</span>'

    def static_view(self) -> StaticView:
        """The charts and tables as plain HTML, for exported pages."""
        if self.bus_result is None:
            return StaticView(_caution_html() + _error_html(self.error))
        return StaticView(_caution_html() + self.status_html.value + self.window.html()
                          + self.bench_html.value + self.figures_html.value
                          + self.checks_html.value)

    def _layout(self) -> W.Widget:
        controls = W.VBox([
            self.title, self.protocol, self.mode, self.supply, self.supply_tolerance,
            W.HTML("<b>Parts</b>"), self.category, self.fits_supply, self.function,
            self.controller, W.HBox([self.pick, self.add_button]),
            W.HBox([self.placed, self.remove_button]),
            W.HTML("<b>Trace</b>"), self.trace.box, self.extra_capacitance,
            W.HTML("<b>Pull-up</b>"), self.pullup_mode, self.pullup, self.pullup_tolerance,
            W.HTML("<b>Bench: a measured rise</b>"), self.rise_measured, self.c_probe,
            self.levels, self.bench_html,
            W.HTML("<b>Save</b>"), W.HBox([self.save_path, self.save_button]),
            self.save_error,
        ], layout=W.Layout(width="430px"))
        outputs = W.VBox([self.status_html, self.window.widget, self.figures_html,
                          self.checks_html, self.notes_html])
        return W.VBox([self._header("Start a design: an I2C/SMBus bus from library parts"),
                       W.HBox([controls, outputs])])


# =========================================================================== line explorer


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

    Settings for :meth:`set` (SI units): ``driver_part``, ``driver_pin``, ``supply``,
    ``geometry``, ``length``, ``width``, ``height``, ``thickness``, ``er``,
    ``capacitance_per_length``, ``delay_per_length``, ``series`` (``"auto"``,
    ``"none"`` or an E24 value), ``any_function``.

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
                 supply: float = 3.3, length: float = 0.28, series="auto"):
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
                                      description="Driver", style=_LABEL, layout=_WIDE)
        self.driver_pin = W.Dropdown(options=[], description="Output pin", style=_LABEL,
                                     layout=_WIDE)
        self.any_function = W.Checkbox(value=False, description="receivers of any pin "
                                       "function", indent=False)
        self.pick = W.Dropdown(options=[], description="Receiver", style=_LABEL, layout=_WIDE)
        self.add_button = W.Button(description="Add", layout=W.Layout(width="70px"))
        self.placed = W.Select(options=[], rows=5, description="Receivers", style=_LABEL,
                               layout=_WIDE)
        self.remove_button = W.Button(description="Remove", layout=W.Layout(width="70px"))
        self.supply = W.BoundedFloatText(value=supply, min=0.8, max=5.5, step=0.05,
                                         description="Supply (V)", style=_LABEL, layout=_WIDE)
        self.trace = _Trace(self, length_cm=length * 100.0, max_cm=200.0, min_cm=0.5)
        self.series_mode = W.ToggleButtons(options=["auto", "none", "fixed"], value="auto",
                                           description="Series R", style=_LABEL)
        self.series = W.SelectionSlider(options=_e24_options(1.0, 1000.0), value=33.0,
                                        description="Rs (E24)", continuous_update=False,
                                        style=_LABEL, layout=_WIDE)
        self.edges = ChartView()
        self.waves = ChartView()
        self.figures_html = W.HTML()
        self.checks_html = W.HTML()
        self.notes_html = W.HTML()

        self.driver_part.observe(self._driver_changed, names="value")
        self.driver_pin.observe(self._pin_changed, names="value")
        self.any_function.observe(self._pin_changed, names="value")
        self._watch(self.supply, self.series_mode, self.series)
        self.add_button.on_click(lambda _b: self.pick.value and
                                 self.add_receiver(*self.pick.value))
        self.remove_button.on_click(lambda _b: self.placed.value and
                                    self.remove_receiver(self.placed.value))
        self._choice("driver_part", self.driver_part)
        self._choice("driver_pin", self.driver_pin)
        self._setters["any_function"] = lambda v: setattr(self.any_function, "value", bool(v))
        self._number("supply", self.supply)
        self._setters["series"] = self._set_series

        with self._hold():
            part, pin = driver
            if part in drivers:
                self.driver_part.value = part
            self._driver_changed()
            if pin in [v for _, v in self.driver_pin.options]:
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
            _set_options(self.driver_pin, pins, self.driver_pin.value)
        self._pin_changed()

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
            _set_options(self.pick, options, self.pick.value)
        self._changed()

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
        mode = self.series_mode.value
        entry["series_resistor"] = mode if mode != "fixed" else f"{_num(self.series.value)} Ω"
        lines = tomlkit.table()
        lines.add(self.signal, _inline(entry))
        bus.add("lines", lines)
        aot = tomlkit.aot()
        aot.append(bus)
        doc.add(tomlkit.nl())
        doc.add("bus", aot)
        return tomlkit.dumps(doc)

    def update(self) -> None:
        """Rebuild the line from the controls, evaluate it, redraw both charts."""
        if self._quiet:
            return
        self.updates += 1
        try:
            text = self.design_text()
            design = _load(text, self.library)
            bus = design.buses[0]
            solved = gpio_analyses(bus, design)  # the line solved once, for checks and charts
            result = design_result(design, [evaluate_gpio(bus, design, analysis=solved)])
            edge = plotdata.edge_vs_load_data(bus, design, self.signal, analysis=solved)
            wave = plotdata.waveform_data(bus, design, self.signal, analysis=solved,
                                          points=self.wave_points)
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
        self._draw_edges(edge)
        self._draw_waves(wave)
        self.status_html.value = _status_line(br, f"Line from {edge.driver} "
                                                  f"({self.driver_part.value} "
                                                  f"{self.driver_pin.value})")
        self.figures_html.value = figures_table(self.figures)
        self.checks_html.value = checks_table(br)
        self.notes_html.value = _notes_html([br, self.line_result])

    def _draw_edges(self, e) -> None:
        self.edges.draw(lambda: charts.spec(
            charts.edge_vs_load, e.loads, np.vstack(list(e.curves.values())),
            series=list(e.curves),
            points=e.points if len(e.points[0]) else None,
            operating=(e.operating[0], e.operating[1], f"far end ({e.model} line)"),
            edge_label="Edge time", title=f"Edge time against load: {e.driver}",
            subtitle="driver model into a lumped load; 10–90 % unless a curve says 20-80"))

    def _draw_waves(self, w) -> None:
        if not w.receivers:
            self.waves.clear("no chart: " + "; ".join(w.notes))
            return
        self.waves.draw(lambda: charts.spec(
            charts.waveforms, w.t, w.traces, v_il=w.v_il, v_ih=w.v_ih, vdd=w.vdd,
            title="Far-end waveforms",
            subtitle="at " + ", ".join(w.receivers)))

    def static_view(self) -> StaticView:
        """The charts and tables as plain HTML, for exported pages."""
        if self.line_result is None:
            return StaticView(_caution_html() + _error_html(self.error))
        return StaticView(_caution_html() + self.status_html.value + self.edges.html()
                          + self.waves.html() + self.figures_html.value
                          + self.checks_html.value)

    def _layout(self) -> W.Widget:
        controls = W.VBox([
            self.driver_part, self.driver_pin, self.supply,
            W.HTML("<b>Receivers</b>"), self.any_function, W.HBox([self.pick, self.add_button]),
            W.HBox([self.placed, self.remove_button]),
            W.HTML("<b>Trace</b>"), self.trace.box,
            W.HTML("<b>Termination</b>"), self.series_mode, self.series,
        ], layout=W.Layout(width="430px"))
        outputs = W.VBox([self.status_html, self.edges.widget, self.waves.widget,
                          self.figures_html, self.checks_html, self.notes_html])
        return W.VBox([self._header("A push-pull line and its termination"),
                       W.HBox([controls, outputs])])


# =========================================================================== SPI budget


@dataclass(frozen=True)
class ClockLimit:
    """The highest clock one requirement allows on its own.

    Attributes
    ----------
    what : str
        The requirement: ``"copi-setup U7"``, ``"edge-time sclk"``, ``"f_max U1"``. [1]
    clock : float
        The highest clock it allows alone (:func:`pinlib.buses.spi.max_clock` of its
        term). [Hz]
    source : str
        Where its limit comes from. [1]
    """

    what: str
    clock: float
    source: str


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
        self.bus = W.Dropdown(options=spi, value=bus, description="Bus", style=_LABEL,
                              layout=_WIDE)
        self.clock = W.BoundedFloatText(value=1.0, min=0.001, max=1000.0, step=0.5,
                                        description="Clock (MHz)", style=_LABEL, layout=_WIDE)
        self.spi_mode = W.ToggleButtons(options=[0, 1, 2, 3], value=0, description="SPI mode",
                                        style=_LABEL)
        self.chart = ChartView()
        self.max_html = W.HTML()
        self.limits_html = W.HTML()
        self.checks_html = W.HTML()
        self.notes_html = W.HTML()
        self.bus.observe(self._bus_changed, names="value")
        self._watch(self.clock, self.spi_mode)
        self._choice("bus", self.bus)
        self._number("clock", self.clock, 1e-6)
        self._choice("spi_mode", self.spi_mode)
        self._bus_changed()
        self.widget = W.VBox([self._header("SPI timing budget"), W.HBox([
            W.VBox([self.bus, self.clock, self.spi_mode, self.max_html, self.limits_html],
                   layout=W.Layout(width="430px")),
            W.VBox([self.status_html, self.chart.widget, self.checks_html, self.notes_html])])])

    def _bus_changed(self, change=None) -> None:
        b = self.base.bus(self.bus.value)
        with self._hold():
            self.clock.value = float(b.clock) * 1e-6
            self.spi_mode.value = int(b.spi_mode)
        self._changed()

    def _bus_index(self) -> int:
        return next(i for i, b in enumerate(self._data["bus"]) if b.get("id") == self.bus.value)

    def design_data(self) -> dict:
        """The design's data with the chosen bus's clock and mode as the controls say."""
        data = copy.deepcopy(self._data)
        raw = data["bus"][self._bus_index()]
        raw["clock"] = f"{_num(self.clock.value)} MHz"
        raw["spi_mode"] = int(self.spi_mode.value)
        return data

    def update(self) -> None:
        """Evaluate the bus at the chosen clock and mode; redraw the budget."""
        from pinlib.buses.spi import evaluate_spi, spi_analysis

        if self._quiet:
            return
        self.updates += 1
        try:
            design = design_from_text(self.design_data(), self.base.text, self.base.path,
                                      library=self.library)
            bus = design.bus(self.bus.value)
            sa = spi_analysis(bus, design)
            br = evaluate_spi(bus, design, analysis=sa)  # the lines solved once, not twice
            tb = plotdata.timing_budget_data(bus, design, analysis=sa) if sa.terms else None
        except PinlibError as err:
            self.design = self.bus_result = self.analysis = self.budget_data = None
            self.figures, self.limits = {}, []
            self._failed(err, [self.chart])
            return
        self.error = None
        self.design, self.bus_result, self.analysis, self.budget_data = design, br, sa, tb
        self.figures = dict(br.figures)
        self.limits = self._limits(sa, br)
        if tb is None:
            self.chart.clear("no timing requirement to draw (no peripheral with the signals "
                             "the budget needs)")
        else:
            self.chart.draw(lambda: charts.spec(
                charts.timing_budget, tb.rows, available=tb.available, margins=tb.margins,
                status=tb.status,
                title=f"SPI timing budget, {bus.id} at {format_si(tb.clock, 'Hz')}",
                subtitle=f"SPI mode {bus.spi_mode}; the tick is the time available"))
        self.status_html.value = _status_line(br, f"Bus {br.id} at "
                                                  f"{format_si(bus.clock, 'Hz')}")
        self._show_limits()
        self.checks_html.value = checks_table(br)
        self.notes_html.value = _notes_html([br] + list(br.lines))

    @staticmethod
    def _limits(sa, br: BusResult) -> list[ClockLimit]:
        """Each requirement's own highest clock, by the engine's own closed form."""
        from pinlib.buses.pushline import EDGE_FRACTION
        from pinlib.buses.spi import max_clock

        out = []
        for t in sa.terms:
            k = t.required - t.b
            k = k if math.isfinite(k) else math.inf
            out.append(ClockLimit(f"{t.id} {t.subject}", float(max_clock([t.a], [k])),
                                  t.source or "not recorded by the part: taken as 0"))
        for sig, edge in sa.edge_terms:
            ln = next((x for x in br.lines if x.signal == sig), None)
            chk = ln.check("edge-time") if ln is not None else None
            out.append(ClockLimit(f"edge-time {sig}",
                                  float(max_clock([EDGE_FRACTION],
                                                  [edge if math.isfinite(edge) else math.inf])),
                                  chk.source if chk is not None else ""))
        for ref, f, source in sa.f_limits:
            out.append(ClockLimit(f"f_max {ref}", float(f), source))
        return sorted(out, key=lambda x: x.clock)

    def _show_limits(self) -> None:
        f = self.figures.get("max_clock")
        top = self.limits[0] if self.limits else None
        text = f"Highest clock: <b>{_e(format_value(f.value, f.unit))}</b>" if f else ""
        if top is not None:
            text += f", set by <b>{_e(top.what)}</b> ({_e(top.source)})"
        self.max_html.value = f'<div style="font-size:13px;margin:4px 0">{text}</div>'
        rows = "".join(f'<tr><td style="{_CELL}">{_e(x.what)}</td>'
                       f'<td style="{_NUM}">{_e(format_value(x.clock, "Hz"))}</td></tr>'
                       for x in self.limits[:8])
        self.limits_html.value = (
            '<table style="border-collapse:collapse;font-size:12px">'
            '<caption style="text-align:left;font-weight:700">Each requirement\'s own '
            f'highest clock</caption>{rows}</table>')

    def static_view(self) -> StaticView:
        """The chart and tables as plain HTML, for exported pages."""
        if self.bus_result is None:
            return StaticView(_caution_html() + _error_html(self.error))
        return StaticView(_caution_html() + self.status_html.value + self.max_html.value
                          + self.chart.html() + self.limits_html.value
                          + self.checks_html.value)


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
    """

    _NEW = ("id", "extends", "title", "new_basis", "new_source")
    _REC = ("part", "field", "value", "typ", "basis", "source")

    def __init__(self, folder: str | os.PathLike, *, library_folders=()):
        from pinlib.library.record import RECORD_BASES

        super().__init__()
        self.folder = Path(folder)
        self.library_folders = [Path(f) for f in library_folders]
        self.library = self._reload()
        self.errors: dict[str, PinlibError] = {}
        self.written: Path | None = None
        s = {"style": _LABEL, "layout": _WIDE}
        self.new_id = W.Text(placeholder="eeprom-i2c-acme", description="New id", **s)
        self.extends = W.Dropdown(options=sorted(self.library.parts), description="Extends",
                                  **s)
        self.new_title = W.Text(placeholder="the class's title", description="Title", **s)
        self.new_basis = W.Dropdown(options=list(RECORD_BASES) + ["generic"],
                                    value="datasheet", description="Basis", **s)
        self.new_source = W.Text(placeholder="document, revision", description="Source", **s)
        self.create_button = W.Button(description="Create the part")
        self.part = W.Dropdown(options=[], description="Team part", **s)
        self.field = W.Combobox(options=[], placeholder="sda.c_in", ensure_option=False,
                                description="Field", **s)
        self.value = W.Text(placeholder="12 pF", description="Value", **s)
        self.typ = W.Text(placeholder="optional", description="Typical", **s)
        self.basis = W.Dropdown(options=list(RECORD_BASES), value="datasheet",
                                description="Basis", **s)
        self.source = W.Text(placeholder="datasheet rev B, table 6", description="Source", **s)
        self.record_button = W.Button(description="Record the value")
        self.message = W.HTML()
        names = {"id": self.new_id, "extends": self.extends, "title": self.new_title,
                 "new_basis": self.new_basis, "new_source": self.new_source,
                 "part": self.part, "field": self.field, "value": self.value, "typ": self.typ,
                 "basis": self.basis, "source": self.source}
        self.controls = names
        self.error_labels = {k: W.HTML() for k in names}
        self.create_button.on_click(lambda _b: self.create())
        self.record_button.on_click(lambda _b: self.record())
        self.part.observe(self._part_changed, names="value")
        for name, control in names.items():
            control.observe(lambda change, name=name: self._edited(name), names="value")
        self._refresh_parts()
        new_form = W.VBox([_field_row(names[k], self.error_labels[k]) for k in self._NEW]
                          + [self.create_button])
        rec_form = W.VBox([_field_row(names[k], self.error_labels[k]) for k in self._REC]
                          + [self.record_button])
        self.tabs = W.Tab(children=[new_form, rec_form],
                          titles=("New part (extends a class)", "Record a value"))
        self.widget = W.VBox([self._header(f"Record part values into {self.folder}"),
                              self.tabs, self.message])

    def _reload(self) -> Library:
        folders = self.library_folders + ([self.folder] if self.folder.is_dir() else [])
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
            _set_options(self.part, self._team_parts(), self.part.value)
            _set_options(self.extends, sorted(self.library.parts), self.extends.value)
        self._part_changed()

    def _part_changed(self, change=None) -> None:
        self.field.options = self.fields_of(self.part.value) if self.part.value else []

    def fields_of(self, part_id: str) -> list[str]:
        """Every field path a value can be recorded at on the part (``sda.c_in``...)."""
        from pinlib.library.fields import value_kind
        from pinlib.library.schema import Pin, Supply, Timing

        part = self.library.parts[part_id]
        pin_fields = [n for n, f in Pin.model_fields.items() if value_kind(f)]
        out = []
        for name in part.pins:
            out += [f"{name}.{f}" for f in pin_fields]
        for side, s in part.sides.items():
            for name in s.pins:
                out += [f"sides.{side}.{name}.{f}" for f in pin_fields]
        out += [f"timing.{n}" for n, f in Timing.model_fields.items() if value_kind(f)]
        out += [f"supply.{n}" for n, f in Supply.model_fields.items() if value_kind(f)]
        return out

    def _show(self, errors: dict[str, PinlibError]) -> None:
        self.errors = errors
        for name, label in self.error_labels.items():
            label.value = _inline_error(errors.get(name))
        self.message.value = _error_html(errors["form"]) if "form" in errors else ""

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
        from pinlib.library.fields import resolve_path
        from pinlib.quantity import parse, parse_threshold

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
        return self._done(path, f"created part {self.new_id.value.strip()} in", path)

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
        return self._done(path, f"recorded {self.field.value.strip()} = "
                                f"{self.value.value.strip()} in", path)

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

    def _done(self, path: Path, what: str, shown: Path) -> Path:
        self.written = path
        self.library = self._reload()
        self._refresh_parts()
        self._show({})
        self.message.value = (f'<div style="font-size:12px">{_e(what)} '
                              f"<code>{_e(shown)}</code></div>")
        return path

    def static_view(self) -> StaticView:
        """What the last action did, as plain HTML."""
        return StaticView(_caution_html() + (self.message.value or _note("nothing recorded")))


# =========================================================================== swaps


class SwapExplorer(_Panel):
    """Rerun a saved design after a substitution: the change list, charts, candidates.

    Parameters
    ----------
    path : path
        The design file (relative to the working folder or a folder above it).
    folders : iterable of paths
        Extra team library folders.

    Attributes
    ----------
    design, result : the design as saved and its result.
    swapped, swapped_result : the design with the substitutions and its result (the
        same as ``design``/``result`` while there are none).
    swaps : dict of str to str
        New part id by reference designator.
    changes : ChangeList or None
        :func:`pinlib.compare.compare` of the two snapshots.
    refused : list of str
        Why the last substitution asked for was refused (empty when applied).
    before, after : ChartView
        The chart of the first bus the substituted device is on, before and after.
    ranking : object or None
        What :mod:`pinlib.candidates` ranked for the position, when that module exists.
    """

    def __init__(self, path: str | os.PathLike, *, folders=()):
        super().__init__()
        self.folders = [Path(f) for f in folders]
        self.swaps: dict[str, str] = {}
        self.refused: list[str] = []
        self.changes = None
        self.ranking = None
        self.path_box = W.Text(value=str(path), description="Design", style=_LABEL,
                               layout=W.Layout(width="520px"))
        self.load_button = W.Button(description="Load", layout=W.Layout(width="70px"))
        self.path_error = W.HTML()
        self.ref = W.Dropdown(options=[], description="Device", style=_LABEL, layout=_WIDE)
        self.new_part = W.Dropdown(options=[], description="Put there", style=_LABEL,
                                   layout=_WIDE)
        self.apply_button = W.Button(description="Apply", layout=W.Layout(width="70px"))
        self.reset_button = W.Button(description="Reset", layout=W.Layout(width="70px"))
        self.refused_html = W.HTML()
        self.swaps_html = W.HTML()
        self.changes_html = W.HTML()
        self.checks_html = W.HTML()
        self.before = ChartView("load a design")
        self.after = ChartView("apply a substitution")
        self.candidates_html = W.HTML()
        self.candidates_box = W.VBox([W.HTML("<b>Candidates for the position</b>"),
                                      self.candidates_html])
        self.candidates_note = W.HTML()
        self.load_button.on_click(lambda _b: self._load_clicked())
        self.apply_button.on_click(lambda _b: self.new_part.value and
                                   self.apply_swap(self.ref.value, self.new_part.value))
        self.reset_button.on_click(lambda _b: self.reset())
        self.ref.observe(self._ref_changed, names="value")
        self.widget = W.VBox([
            self._header("Rerun a saved design after a substitution"),
            W.HBox([self.path_box, self.load_button]), self.path_error,
            W.HBox([W.VBox([self.ref, self.new_part, W.HBox([self.apply_button,
                                                             self.reset_button]),
                            self.refused_html, self.swaps_html],
                           layout=W.Layout(width="430px")),
                    W.VBox([self.status_html, self.changes_html])]),
            W.HBox([self.before.widget, self.after.widget]),
            self.candidates_box, self.candidates_note, self.checks_html])
        self.load(path)

    # ---------------------------------------------------------------- loading
    def load(self, path: str | os.PathLike) -> None:
        """Load a design file and evaluate it as saved (clears the substitutions)."""
        from pinlib.compare import snapshot

        design = load_design(find_file(path), library_folders=self.folders)
        result = check_design(design)
        self.design, self.result = design, result
        self.before_snapshot = snapshot(design, result)
        self.swaps = {}
        self.refused = []
        self.ranking = None
        with self._hold():
            self.path_box.value = str(path)
            refs = {}
            for b in design.buses:
                for d in b.devices:
                    refs.setdefault(d.ref, f"{d.ref} — {d.part_id} ({b.id})")
            _set_options(self.ref, [(label, ref) for ref, label in refs.items()],
                         self.ref.value)
        self._ref_changed()

    def _load_clicked(self) -> None:
        try:
            self.load(self.path_box.value.strip())
        except PinlibError as err:
            self.path_error.value = _inline_error(err)
            return
        self.path_error.value = ""

    def _places(self, ref: str) -> list:
        return [(b, d) for b in self.design.buses for d in b.devices if d.ref == ref]

    def refusals(self, ref: str, part_id: str) -> list[str]:
        """Why ``part_id`` cannot stand in ``ref``'s position (empty: it can)."""
        from pinlib.compare import swap_refusals

        return swap_refusals(self.design, ref, part_id, field="ref")[1]

    def _ref_changed(self, change=None) -> None:
        ref = self.ref.value
        options = []
        if ref:
            current = self._places(ref)[0][1].part_id
            for pid, part in sorted(self.design.library.placeable().items()):
                if pid != current and part.category != "cable" and not self.refusals(ref, pid):
                    options.append((f"{pid} — {part.title}", pid))
        with self._hold():
            _set_options(self.new_part, options, self.new_part.value)
        self._changed()

    # ---------------------------------------------------------------- swapping
    def apply_swap(self, ref: str, part_id: str) -> list[str]:
        """Substitute ``part_id`` at ``ref`` and rerun; return the reasons for a refusal
        (empty when applied)."""
        reasons = self.refusals(ref, part_id)
        self.refused = reasons
        if reasons:
            self.refused_html.value = (f'<div style="color:{charts.FAIL};font-size:12px">'
                                       + _e(M.SWAP_REFUSED.format(
                                           ref=ref, new=part_id,
                                           old=self._places(ref)[0][1].part_id)) + ":<ul>"
                                       + "".join(f"<li>{_e(r)}</li>" for r in reasons)
                                       + "</ul></div>")
            return reasons
        self.refused_html.value = ""
        self.swaps[ref] = part_id
        self.update()
        return []

    def reset(self) -> None:
        """Drop every substitution."""
        self.swaps = {}
        self.refused = []
        self.refused_html.value = ""
        self.update()

    def update(self) -> None:
        """Rerun the design with the substitutions and show what changed."""
        from pinlib.compare import compare, snapshot

        if self._quiet:
            return
        self.updates += 1
        try:
            if self.swaps:
                swapped = self.design.with_parts(self.swaps)
                swapped_result = check_design(swapped)
                self.changes = compare(self.before_snapshot, snapshot(swapped, swapped_result))
            else:
                swapped, swapped_result, self.changes = self.design, self.result, None
        except PinlibError as err:
            self._failed(err, [self.after])
            return
        self.error = None
        self.swapped, self.swapped_result = swapped, swapped_result
        self.swaps_html.value = ("<b>Substitutions</b><ul>" + "".join(
            f"<li>{_e(r)}: {_e(self._places(r)[0][1].part_id)} → {_e(p)}</li>"
            for r, p in self.swaps.items()) + "</ul>") if self.swaps else _note(
            "no substitution yet")
        self.status_html.value = (f'<div style="font-size:14px">Design '
                                  f"{_badge(self.result.status)} → "
                                  f"{_badge(swapped_result.status)}</div>")
        self.changes_html.value = self._changes_html()
        self._draw()
        self._rank()
        focus = self._focus_bus()
        self.checks_html.value = checks_table(swapped_result.bus(focus.id),
                                              f"Checks of bus {focus.id} after the "
                                              "substitution") if focus is not None else ""

    def _changes_html(self) -> str:
        cl = self.changes
        if cl is None:
            return _note("apply a substitution to see what changes")
        if cl.empty:
            return _note("no check changed status, no figure moved beyond "
                         f"{cl.threshold:.0%}, no part value differs")
        out = []
        if cl.status_changes:
            out.append("<b>Checks whose status changed</b><ul>" + "".join(
                f"<li>{_e(c.format())}</li>" for c in cl.status_changes) + "</ul>")
        if cl.figure_changes:
            out.append(f"<b>Figures that moved more than {cl.threshold:.0%}</b><ul>" + "".join(
                f"<li>{_e(c.format())}</li>" for c in cl.figure_changes) + "</ul>")
        if cl.part_changes:
            out.append("<b>Part values behind the change</b><ul>" + "".join(
                "<li>" + "<br>".join(_e(line) for line in pc.lines()) + "</li>"
                for pc in cl.part_changes) + "</ul>")
        return f'<div style="font-size:12px">{"".join(out)}</div>'

    def _focus_bus(self):
        refs = list(self.swaps) or ([self.ref.value] if self.ref.value else [])
        for ref in refs:
            places = self._places(ref)
            if places:
                return places[0][0]
        return self.design.buses[0] if self.design.buses else None

    def _chart_for(self, bus, design, label: str):
        """The chart that says most about a bus: the pull-up window of an open-drain bus,
        the timing budget of an SPI bus, the edge chart of a GPIO line."""
        if bus.protocol in ("i2c", "smbus"):
            seg = next((s.id for s in bus.segments if any(
                d.ref in self.swaps or d.ref == self.ref.value for d in s.devices)), None)
            w = plotdata.pullup_window_data(bus, design, seg, "sda")
            return charts.pullup_window(
                w.cb, w.rp_min, w.rp_max, chosen_cb=w.chosen_cb, chosen_rp=w.chosen_rp,
                title=f"{label}: pull-up window, {bus.id} {w.segment} SDA",
                chosen_label=f"design: {format_si(w.chosen_rp, 'Ω')} at "
                             f"{format_si(w.chosen_cb, 'F')}")
        if bus.protocol == "spi":
            tb = plotdata.timing_budget_data(bus, design)
            return charts.timing_budget(tb.rows, available=tb.available, margins=tb.margins,
                                        status=tb.status,
                                        title=f"{label}: timing budget, {bus.id}")
        sig = next(iter(bus.lines))
        e = plotdata.edge_vs_load_data(bus, design, sig)
        return charts.edge_vs_load(e.loads, np.vstack(list(e.curves.values())),
                                   series=list(e.curves),
                                   points=e.points if len(e.points[0]) else None,
                                   operating=(e.operating[0], e.operating[1], "far end"),
                                   title=f"{label}: edge time against load, {bus.id} {sig}")

    def _draw(self) -> None:
        bus = self._focus_bus()
        if bus is None:
            self.before.clear("the design has no bus")
            self.after.clear("the design has no bus")
            return
        for view, design, label in ((self.before, self.design, "Before"),
                                    (self.after, self.swapped, "After")):
            if view is self.after and not self.swaps:
                view.clear("apply a substitution")
                continue
            view.draw(lambda design=design, label=label:
                      self._chart_for(design.bus(bus.id), design, label))

    def _rank(self) -> None:
        """The candidates ranking of the selected position, when :mod:`pinlib.candidates`
        is installed; otherwise the panel is hidden and a note says why."""
        if importlib.util.find_spec("pinlib.candidates") is None:
            self.ranking = None
            self.candidates_box.layout.display = "none"
            self.candidates_note.value = _note(
                "The candidates ranking needs pinlib.candidates, which this installation "
                "does not have.")
            return
        from pinlib.candidates import rank_candidates

        self.candidates_box.layout.display = None
        self.candidates_note.value = ""
        ref = self.ref.value
        if not ref:
            self.ranking = None
            self.candidates_html.value = _note("no device to rank candidates for")
            return
        if self.ranking is None or self.ranking.ref != ref:
            try:
                self.ranking = rank_candidates(self.design, ref)
            except PinlibError as err:
                self.ranking = None
                self.candidates_html.value = _error_html(err)
                return
        self.candidates_html.value = self._ranking_html(self.ranking)

    @staticmethod
    def _ranking_html(r, top: int = 10) -> str:
        from pinlib.candidates import FIGURES

        cols = []
        for b in r.buses:
            family = "open-drain" if b["protocol"] in ("i2c", "smbus") else "push-pull"
            cols += [(b["bus"], name, unit) for name, unit in FIGURES[family]]
        multi = len(r.buses) > 1
        head = ["#", "part", "status", "worst margin", "set by"] + [
            f"{n} ({b})" if multi else n for b, n, _ in cols]
        rows = []
        for i, c in enumerate(r.candidates[:top], 1):
            wc = c.worst_check or {}
            by = " ".join(str(wc[k]) for k in ("bus", "segment", "line", "id", "subject")
                          if wc.get(k)) if c.status != "error" else (c.error or "")
            cells = [f'<td style="{_NUM}">{i}</td>',
                     f'<td style="{_CELL}"><code>{_e(c.part)}</code>'
                     + (" (now)" if c.current else "") + "</td>",
                     f'<td style="{_CELL}">{_badge(c.status)}</td>',
                     f'<td style="{_NUM}">{_e(_margin(c.worst_margin))}</td>',
                     f'<td style="{_CELL}">{_e(by)}</td>']
            for b, n, unit in cols:
                v = c.figures.get(b, {}).get(n)
                cells.append(f'<td style="{_NUM}">'
                             f"{_e(format_value(None if v is None else v[0], unit))}</td>")
            rows.append("<tr>" + "".join(cells) + "</tr>")
        more = (f"<div style='font-size:11px'>{len(r.candidates) - top} more not shown</div>"
                if len(r.candidates) > top else "")
        notes = "".join(f"<li>{_e(n)}</li>" for n in r.notes)
        return (f'<div style="font-size:12px">Position {_e(r.ref)}, now '
                f"<code>{_e(r.current)}</code>: {len(r.candidates)} of {r.library_size} "
                f"placeable parts can serve it ({r.excluded} cannot: pin functions or "
                "drives)</div>"
                '<table style="border-collapse:collapse;font-size:12px;margin:4px 0"><tr>'
                + "".join(f'<th style="{_HEAD}">{_e(h)}</th>' for h in head) + "</tr>"
                + "".join(rows) + "</table>" + more
                + (f'<ul style="font-size:11px">{notes}</ul>' if notes else ""))

    def static_view(self) -> StaticView:
        """The change list, charts and checks as plain HTML, for exported pages."""
        ranking = self.candidates_html.value if self.ranking is not None else \
            self.candidates_note.value
        return StaticView(_caution_html() + self.status_html.value + self.swaps_html.value
                          + self.changes_html.value + self.before.html() + self.after.html()
                          + ranking + self.checks_html.value)
