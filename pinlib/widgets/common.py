"""What the workbenches share: labels and layouts of controls, HTML tables, the chart view,
the panel base class (batched changes, setters, the error shown)."""

from __future__ import annotations

import contextlib
import html
import itertools
import math
import os
import re
from pathlib import Path

import ipywidgets as W

from pinlib import charts
from pinlib import messages as M
from pinlib.errors import InputError, PinlibError
from pinlib.eseries import values_in_range
from pinlib.quantity import format_si
from pinlib.report import format_value
from pinlib.result import CAUTION, BusResult, Group

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

