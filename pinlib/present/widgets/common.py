"""What the workbenches share: the layout of controls, quantity fields, option lists that
say what they changed, the chart view and the panel base class.

Layout
------
Every control gets its own :class:`ipywidgets.Layout` from a factory here (a layout is a
widget of its own: shared, hiding one control would hide every control using it).  A
workbench is a header, then a row that wraps: a control column of fixed width
(:data:`COLUMN_WIDTH`, never shrinking) and an output column that takes the remaining
width, or goes below the controls when less than its basis is left.  Charts scale down to
their column; tables are capped to it (:mod:`pinlib.present.widgets.markup`).  Wide tables go in
a full-width row under both columns.

Quantities
----------
A value with a unit is typed into a :class:`QuantityField` and read by
:func:`pinlib.core.quantity.parse` ("4.7 kΩ" is refused where a voltage belongs, a bare number
is refused for its missing unit, a value outside the field's range is refused and never
clamped).  The refusal is shown under the field and the panel does not recompute: what it
shows stays that of the last valid inputs, and a notice above the figures says so; as
that notice may be out of view beside a field far down, the field's message says it too
and the outputs are dimmed until the text is valid.
"""

from __future__ import annotations

import contextlib
import copy
import itertools
import math
import os
import weakref
from collections.abc import Callable
from pathlib import Path

import ipywidgets as W

from pinlib.core import messages as M
from pinlib.core.errors import InputError, PinlibError
from pinlib.core.eseries import values_in_range
from pinlib.core.pathkind import FOLDER, MISSING, UNREADABLE, path_kind
from pinlib.core.quantity import format_si, likely_units, parse
from pinlib.present import charts
from pinlib.present.widgets.markup import (
    BLOCK,
    caution_html,
    e,
    error_html,
    inline_error,
    inline_svg,
    note,
    notice,
)

_ids = itertools.count(1)

#: Width of a control's description. [px]
LABEL_WIDTH = 130
#: Width of the control column. [px]
COLUMN_WIDTH = 380


# =========================================================================== layouts


def style(**extra) -> dict:
    """A control's description style (a new one each call)."""
    return {"description_width": f"{LABEL_WIDTH}px", **extra}


def field_layout(**kw) -> W.Layout:
    """A control's own layout: the width of the control column unless told otherwise."""
    return W.Layout(**({"width": "auto", "max_width": f"{COLUMN_WIDTH}px"} | kw))


def toggle_layout() -> W.Layout:
    """Toggle buttons: the description and the buttons on one line."""
    return W.Layout(display="flex", flex_flow="row nowrap", align_items="center",
                    width="auto")


def button_layout(width: str = "76px") -> W.Layout:
    return W.Layout(width=width, min_width=width, flex="0 0 auto")


def column_layout(width: int = COLUMN_WIDTH) -> W.Layout:
    """The control column: a fixed width that neither grows nor shrinks."""
    return W.Layout(width=f"{width}px", min_width=f"{width}px", max_width="100%",
                    flex="0 0 auto", margin="0 12px 0 0")


def outputs_layout(basis: int = 560) -> W.Layout:
    """The output column: the width left beside the controls, or the whole row below them
    when less than ``basis`` pixels are left."""
    return W.Layout(flex=f"1 1 {basis}px", min_width="0", max_width="100%")


def row_layout() -> W.Layout:
    """A row whose items wrap onto the next line when they do not fit side by side."""
    return W.Layout(display="flex", flex_flow="row wrap", align_items="flex-start",
                    width="100%")


def block_layout() -> W.Layout:
    """A full-width block (a table under both columns)."""
    return W.Layout(width="auto", max_width="100%")


def with_button(control, button) -> W.HBox:
    """A control with a button on its right, both on one line of the control column."""
    control.layout.flex = "1 1 auto"
    control.layout.min_width = "0"
    return W.HBox([control, button], layout=W.Layout(width="auto", align_items="center"))


def heading(text: str) -> W.HTML:
    return W.HTML(f'<b style="line-height:1.6">{e(text)}</b>', layout=W.Layout(margin="6px 0 0 0"))


def note_widget() -> W.HTML:
    """An HTML line under a control, empty until there is something to say."""
    return W.HTML(layout=W.Layout(width="auto", max_width=f"{COLUMN_WIDTH}px"))


# =========================================================================== sliders


class Slider:
    """A slider over a list of values (:class:`ipywidgets.SelectionSlider`) whose value is
    shown as plain text beside it.

    ipywidgets' own readout can be typed into, but a selection slider ignores what is
    typed and goes on showing it ("150" beside a chart still drawn at 100 µm); every
    slider of the workbenches is made here, its readout turned off and replaced by a
    label that cannot be edited.  A value is typed into a :class:`QuantityField`, never
    into a slider.

    Attributes
    ----------
    control : ipywidgets.SelectionSlider
        The slider (``readout`` False).
    label : ipywidgets.HTML
        The value shown: the option's label, empty while :attr:`shown` is False.
    box : ipywidgets.HBox
        The slider and its label, the width of the control column.
    """

    def __init__(self, description: str, options, value):
        self.control = W.SelectionSlider(
            options=options, value=value, description=description, readout=False,
            continuous_update=False, style=style(),
            layout=W.Layout(width="auto", flex="1 1 auto", min_width="0"))
        self.label = W.HTML(layout=W.Layout(width="72px", min_width="72px", flex="0 0 auto",
                                            margin="0 0 0 4px"))
        self.label.add_class("pinlib-readout")
        self.box = W.HBox([self.control, self.label],
                          layout=W.Layout(width="auto", max_width=f"{COLUMN_WIDTH}px",
                                          align_items="center"))
        self._shown = True
        self.control.observe(lambda _c: self._show(), names=["value", "options"])
        self._show()

    @property
    def shown(self) -> bool:
        """Whether the value is written beside the slider."""
        return self._shown

    @shown.setter
    def shown(self, on: bool) -> None:
        self._shown = bool(on)
        self._show()

    @property
    def text(self) -> str:
        """The value as shown (empty while it is hidden)."""
        return self.label.value and _label_of(self.control.options, self.control.value)

    def _show(self) -> None:
        self.label.value = (f'<span style="white-space:nowrap">'
                            f"{e(_label_of(self.control.options, self.control.value))}</span>"
                            if self._shown else "")


# =========================================================================== quantities


def _shown(value: float | None, unit: str, shown: tuple[str, float] | None) -> str:
    if value is None:
        return ""
    if shown is not None:
        text, scale = shown
        out = f"{value / scale:.6g} {text}"
        # far from the shown unit's own size ("1e+06 ns"): the SI prefix that suits it
        return out if "e" not in out.split()[0] else format_si(value, unit, digits=6)
    if unit == "":
        return f"{value:.6g}"
    return format_si(value, unit, digits=6)


class QuantityField:
    """A text box for a value with its unit, read by :func:`pinlib.core.quantity.parse`.

    Parameters
    ----------
    name : str
        The setting's name (:meth:`_Panel.set`).
    description : str
        The label in front of the box.
    unit : str
        The SI unit expected (a key of :data:`pinlib.core.quantity.UNITS`); ``""`` for a plain
        number.
    value : float or None
        The first value. [SI]
    lo, hi : float, optional
        The range accepted, both ends included. [SI]
    above : float, optional
        A lower bound that is not included (a clock above 0). [SI]
    shown : (str, float), optional
        The unit text and scale the value is written in (``("cm", 1e-2)``); by default
        with the SI prefix that suits it.
    optional : bool
        An empty box is accepted and reads as None.

    Attributes
    ----------
    value : float or None
        The last valid value. [SI]
    error : PinlibError or None
        Why the text in the box is refused (the value then stays the last valid one).
    box : ipywidgets.VBox
        The text box and the error under it.
    """

    def __init__(self, name: str, description: str, unit: str, value: float | None, *,
                 lo: float | None = None, hi: float | None = None,
                 above: float | None = None, shown: tuple[str, float] | None = None,
                 optional: bool = False, placeholder: str = ""):
        self.name, self.unit, self.shown = name, unit, shown
        self.lo, self.hi, self.above, self.optional = lo, hi, above, optional
        self.description = description
        self.value = None if value is None else float(value)
        self.error: PinlibError | None = None
        self.on_change: Callable[[QuantityField], None] | None = None
        self._writing = False
        self.text = W.Text(value=_shown(self.value, unit, shown), description=description,
                           placeholder=placeholder, continuous_update=False, style=style(),
                           layout=field_layout())
        self.error_html = W.HTML(layout=W.Layout(width="auto", max_width=f"{COLUMN_WIDTH}px",
                                                 padding=f"0 0 0 {LABEL_WIDTH + 6}px"))
        self.box = W.VBox([self.text, self.error_html], layout=W.Layout(width="auto"))
        self.text.observe(self._typed, names="value")

    def _range_text(self) -> str:
        def f(v):
            return _shown(v, self.unit, self.shown)
        if self.above is not None and self.hi is not None:
            return f"above {f(self.above)}, up to {f(self.hi)}"
        if self.above is not None:
            return f"above {f(self.above)}"
        if self.lo is not None and self.hi is not None:
            return f"from {f(self.lo)} to {f(self.hi)}"
        if self.lo is not None:
            return f"{f(self.lo)} or more"
        return f"{f(self.hi)} or less"

    def _needed_text(self) -> str:
        """What an empty box is told to hold: the range, with the unit where the value has
        one (a plain number, such as εr, has none)."""
        return f"{self._range_text()}, with its unit" if self.unit else self._range_text()

    def _in_range(self, value: float) -> bool:
        return math.isfinite(value) and (self.lo is None or value >= self.lo) and \
            (self.hi is None or value <= self.hi) and (self.above is None or value > self.above)

    def check(self, value: float, shown_as) -> float:
        """``value`` when it is in range; otherwise an InputError naming the range."""
        if not self._in_range(value):
            # the value as read, where it differs from the text typed: "20 mhz" is read as
            # 20 mHz (a milli prefix), which the range alone leaves a puzzle
            typed = isinstance(shown_as, str) and math.isfinite(value)
            read = _shown(value, self.unit, self.shown) if typed else ""
            same = read.replace(" ", "") == str(shown_as).replace(" ", "")
            raise InputError(M.OUTSIDE_CONTROL_RANGE, field=self.name, value=shown_as,
                             expected=self._range_text(),
                             hint=None if same or not read else f"read as {read}")
        return value

    def read(self, text: str) -> float | None:
        """The SI value of ``text``; an InputError or UnitError when it is refused."""
        text = text.strip()
        if not text:
            if self.optional:
                return None
            raise InputError(M.VALUE_NEEDED, field=self.name, expected=self._needed_text())
        if self.unit == "":
            try:
                value = float(text)
            except ValueError:
                raise InputError(M.NOT_A_NUMBER, field=self.name, value=text,
                                 expected="a plain number such as 4.2") from None
        else:
            try:
                value = parse(text, self.unit, field=self.name)
            except InputError as err:
                raise self._bare_number(err, text) from None
        return self.check(value, text)

    def _bare_number(self, err: InputError, text: str) -> InputError:
        """A bare number's refusal, whose hint offers the number with its likeliest
        units, offers only those this control takes: "-3.3" is not told to be written
        "-3.3 V" in a 0.8 V to 5.5 V supply field, but what the field takes."""
        if err.problem != M.BARE_NUMBER:
            return err
        try:
            x = float(text)
            units = likely_units(x, self.unit, self.name)
            fit = [u for u in units if self._in_range(parse(f"{text} {u}", self.unit))]
        except (ValueError, InputError):
            return err
        if fit == list(units):
            return err
        err = copy.copy(err)
        err.hint = ("add the unit, e.g. " + " or ".join(f'"{text} {u}"' for u in fit) if fit
                    else f"add the unit; the control's range is {self._range_text()}")
        return err

    def _typed(self, change) -> None:
        if self._writing:
            return
        try:
            self.value = self.read(change["new"])
            self.error = None
        except PinlibError as err:
            self.error = err
        self.error_html.value = inline_error(self.error)
        if self.on_change is not None:
            self.on_change(self)

    def set_value(self, value: float | None) -> None:
        """Set the value from Python (SI), as if typed; an InputError when it is out of
        range, and the box as it was."""
        if value is None:
            if not self.optional:
                raise InputError(M.VALUE_NEEDED, field=self.name,
                                 expected=self._needed_text())
        else:
            value = self.check(float(value), value)
        self.value, self.error = value, None
        self._writing = True
        try:
            self.text.value = _shown(value, self.unit, self.shown)
        finally:
            self._writing = False
        self.error_html.value = ""
        if self.on_change is not None:
            self.on_change(self)


# =========================================================================== options


def _num(x: float) -> str:
    """A number for a design file: six significant digits, no exponent for usual sizes."""
    return f"{float(x):.6g}"


def _closest_option(options, value: float, field: str, what: str, *, unit: str = "Ω",
                    series: str | None = "E24") -> float:
    """The option equal to ``value``; else an InputError naming the options (their
    labels, each with its unit; a long list by its ends and its ``series``)."""
    vals = [v for _, v in options]
    for v in vals:
        if math.isclose(v, float(value), rel_tol=1e-9):
            return v
    labels = [str(label) for label, _ in options]
    if len(labels) <= 16:
        expected = "one of " + ", ".join(labels)
    else:
        expected = f"one of {labels[0]} … {labels[-1]}" + (f" in {series}" if series else "")
    shown = format_si(float(value), unit) if isinstance(value, (int, float)) else value
    raise InputError(M.NOT_A_LISTED_VALUE.format(what=what), field=field, value=shown,
                     expected=expected)


def _e24_options(lo: float, hi: float) -> list[tuple[str, float]]:
    return [(format_si(float(v), "Ω"), float(v)) for v in values_in_range("E24", lo, hi)]


def _values(options) -> list:
    return [o[1] if isinstance(o, tuple) else o for o in options]


def _label_of(options, value) -> str:
    for o in options:
        if (o[1] if isinstance(o, tuple) else o) == value:
            return str(o[0] if isinstance(o, tuple) else o)
    return str(value)


def _name(options, value) -> str:
    """A value as a note names it: itself when it is a plain id, else its label."""
    return str(value) if isinstance(value, (str, int, float)) else _label_of(options, value)


def set_options(dropdown, options, keep, *, what: str = "", said: W.HTML | None = None,
                unfit: Callable[[object], str] | None = None, empty: str = "") -> None:
    """Give a dropdown new options without changing its value unannounced.

    The value stays when it is still offered.  When it is not:

    * with ``unfit`` (a function giving the reason why the value no longer fits), the value
      is kept, listed first with "(does not fit)", and ``said`` tells why;
    * otherwise the first option is taken and ``said`` names the old and the new value.

    ``said`` is emptied when the value stays as an ordinary option.  When nothing is
    offered, ``said`` says so, with ``empty`` (what would offer some) after it.
    """
    old = list(dropdown.options)
    values = _values(options)
    message = ""
    nothing = f"no {e(what.lower() or 'choice')} is offered here." + (
        f" {e(empty)}" if empty else "")
    if keep in values or keep is None or keep == "":
        dropdown.options = options
        if keep in values:
            dropdown.value = keep
        elif values:
            dropdown.value = values[0]
        else:  # still nothing to offer: said again, not emptied
            message = nothing
    elif unfit is not None:
        label = _label_of(old, keep).replace(" (does not fit)", "")
        dropdown.options = [(f"{label} (does not fit)", keep)] + [
            o if isinstance(o, tuple) else (str(o), o) for o in options]
        dropdown.value = keep
        message = (f"{e(what)} <b>{e(keep)}</b> is kept although it no longer fits: "
                   f"{e(unfit(keep))}. Choose another, or change the filters.")
    else:
        dropdown.options = options
        if values:
            dropdown.value = values[0]
            message = (f"{e(what)} <b>{e(_name(old, keep))}</b> is not offered here: now "
                       f"<b>{e(_name(options, values[0]))}</b>.")
        else:
            message = nothing
    if said is not None:
        said.value = notice(message) if message else ""
        if message:
            _clear_on_next_choice(dropdown, said)


#: The observer that empties a note at a dropdown's next choice, by note.
_CLEARERS: weakref.WeakKeyDictionary = weakref.WeakKeyDictionary()


def _clear_on_next_choice(dropdown, said: W.HTML) -> None:
    """Empty ``said`` when the dropdown's value next changes: a note on what the options'
    change did ("Mode fast is not offered here: now standard") no longer holds once the
    user has chosen another value."""
    old = _CLEARERS.pop(said, None)
    if old is not None:
        with contextlib.suppress(ValueError):
            dropdown.unobserve(old, names="value")

    def clear(change) -> None:
        with contextlib.suppress(ValueError):
            dropdown.unobserve(clear, names="value")
        _CLEARERS.pop(said, None)
        said.value = ""

    _CLEARERS[said] = clear
    dropdown.observe(clear, names="value")


# =========================================================================== files, views


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
    # path_kind, not Path.exists: a name too long raises there
    kind, reason = path_kind(p)
    if kind == UNREADABLE:
        raise InputError(M.CANNOT_USE_NAME.format(reason=reason), file=str(p))
    if p.is_absolute() or kind != MISSING:
        if kind == MISSING:
            raise InputError(M.FILE_NOT_FOUND, file=str(p))
        return p
    for base in Path.cwd().resolve().parents:
        if path_kind(base / p)[0] not in (MISSING, UNREADABLE):
            return base / p
    raise InputError(M.FILE_NOT_FOUND, file=str(p),
                     hint="looked in the working folder and each folder above it")


def design_path(text: str, example: str) -> str:
    """The path typed into a Design box, for Load; an InputError naming it when it is
    empty or a folder ("designs": a .toml file is expected).  Every panel shows a
    refused Load with :func:`~pinlib.present.widgets.markup.error_html`, which names the
    file (and its line) as the command does."""
    path = text.strip()
    if not path:
        raise InputError(M.DESIGN_PATH_NEEDED, field="Design",
                         expected=f"a design file path such as {example}")
    if path_kind(path)[0] == FOLDER:  # (a name the system will not look up is no folder)
        raise InputError(M.DESIGN_PATH_IS_FOLDER, file=path,
                         expected=f"a design file (.toml), such as {example}")
    return path


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
        The chart last drawn (a dict when it was built by :func:`pinlib.present.charts.spec`).
    spec : dict or None
        Its Vega-Lite specification.
    svg : str or None
        Its SVG, as placed in the widget.
    renders : int
        How many times the SVG was rendered (an unchanged spec is not).
    """

    def __init__(self, placeholder: str = "no chart yet", layout: W.Layout | None = None):
        self.key = f"pinlib-chart-{next(_ids)}"
        self.widget = W.HTML(value=note(placeholder), layout=layout or block_layout())
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
        # pinlib.present.charts' own tests validate the specifications it builds.
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
        svg = inline_svg(charts.to_svg(spec), self.key)
        self.chart, self.spec, self.svg, self.message = chart, spec, svg, None
        self.widget.value = f'<div class="pinlib-chart">{svg}</div>'
        self.renders += 1
        return True

    def clear(self, text: str) -> None:
        """Replace the chart with a note saying why there is none."""
        self.chart = self.spec = self.svg = None
        self.message = text
        self.widget.value = note(text)

    def data(self) -> list[list[dict]]:
        """The data values of each layer of the chart shown (empty when none)."""
        if self.spec is None:
            return []
        layers = self.spec.get("layer", [self.spec])
        return [list((layer.get("data") or {}).get("values", [])) for layer in layers]

    def html(self) -> str:
        return f'<figure style="margin:6px 0">{self.svg}</figure>' if self.svg else \
            note(self.message or "no chart")




#: While a field is refused the outputs are dimmed (all but the notice saying so), and
#: the field's message says the outputs are not recomputed.
_STALE_STYLE = ("<style>.pinlib-stale > :not(.pinlib-held-note), .pinlib-stale.widget-html"
                "{opacity:.45}</style>")
_HELD_LINE = (f'<div class="pinlib-held-line" style="{BLOCK};font-size:12px;color:#4a4a4a">Not '
              "recomputed: the figures and charts (dimmed) are those of the last valid "
              "inputs.</div>")


class _Panel:
    """What every workbench class shares: batching of changes, the error shown, setters,
    quantity fields held back while one is refused."""

    def __init__(self):
        self._quiet = 0
        self.error: PinlibError | None = None
        self.updates = 0
        self._setters: dict = {}
        self.fields: dict[str, QuantityField] = {}
        self.status_html = W.HTML(layout=block_layout())
        self.held_html = W.HTML(layout=block_layout())
        self.held_html.add_class("pinlib-held-note")
        self._stale: list = []  # what _columns drew the outputs in (dimmed while held)

    @contextlib.contextmanager
    def _hold(self):
        """Change several controls without recomputing after each one."""
        self._quiet += 1
        try:
            yield
        finally:
            self._quiet -= 1

    def refused_fields(self) -> dict[str, PinlibError]:
        """The quantity fields whose text is refused, by setting name."""
        return {n: f.error for n, f in self.fields.items() if f.error is not None}

    def _changed(self, change=None) -> None:
        """A control changed: recompute, unless changes are batched or a field is
        refused (then the notice above the figures says which)."""
        if self._quiet:
            return
        if self._show_held():
            return
        self.update()

    def _show_held(self) -> bool:
        """Say which fields hold the panel back; True while one does."""
        refused = [f for f in self.fields.values() if f.error is not None]
        for box in self._stale:  # the outputs dimmed (the style comes with the notice)
            (box.add_class if refused else box.remove_class)("pinlib-stale")
        if not refused:
            self.held_html.value = ""
            return False
        names = ", ".join(f"<b>{e(f.description)}</b>" for f in refused)
        self.held_html.value = _STALE_STYLE + notice(
            f"Not recomputed: {names} {'is' if len(refused) == 1 else 'are'} not valid (see "
            "the message under the field). The figures and charts below are those of the "
            "last valid inputs.")
        for f in refused:  # said where the user is looking, too: the outputs may be far up
            f.error_html.value = inline_error(f.error) + _HELD_LINE
        return True

    def _watch(self, *controls) -> None:
        for c in controls:
            c.observe(self._changed, names="value")

    def update(self) -> None:
        """Recompute and redraw from the controls (not while changes are batched); the
        notice of refused fields is refreshed first."""
        if self._quiet:
            return
        self.updates += 1
        self._show_held()
        self._recompute()

    def _recompute(self) -> None:  # pragma: no cover - every class has its own
        raise NotImplementedError

    def set(self, **values):
        """Set several controls at once (SI units), then recompute once.

        The names a class accepts are listed in its docstring; an unknown name, or a value
        outside a field's range, is an InputError naming what would do.  While a field
        typed in the browser is refused, nothing is recomputed (see :meth:`_changed`).
        """
        unknown = sorted(set(values) - set(self._setters))
        if unknown:
            raise InputError(M.UNKNOWN_SETTING, field=unknown[0], value=values[unknown[0]],
                             expected="one of " + ", ".join(sorted(self._setters)))
        with self._hold():
            for name, value in values.items():
                self._setters[name](value)
        self._changed()
        return self

    def _quantity(self, field: QuantityField, on_change=None, *, held: bool = True
                  ) -> QuantityField:
        """Register a quantity field: its setter, and what an edit recomputes (the whole
        panel by default).  A ``held`` field that is refused holds the whole panel back;
        another one (a side panel's input) holds only what its ``on_change`` draws."""
        if held:
            self.fields[field.name] = field
        self._setters[field.name] = field.set_value
        field.on_change = on_change or (lambda _f: self._changed())
        return field

    def _choice(self, name: str, control) -> None:
        def setter(value, control=control):
            values = _values(control.options)
            if value not in values:
                raise InputError(M.NOT_ALLOWED_VALUE, field=name, value=value,
                                 expected=", ".join(map(str, values)) or "none offered")
            control.value = value

        self._setters[name] = setter

    def _failed(self, err: PinlibError, views=()) -> None:
        self.error = err
        self.status_html.value = error_html(err)
        for v in views:
            v.clear(f"no chart: {err.problem}")

    def _header(self, text: str) -> W.HTML:
        return W.HTML(f'<h3 style="margin:2px 0">{e(text)}</h3>{caution_html()}',
                      layout=block_layout())

    def _columns(self, controls: list, outputs: list, below: list = (), *,
                 basis: int = 560) -> W.VBox:
        """The usual arrangement: the controls' column, the outputs beside or under it,
        then ``below`` across the whole width."""
        out = W.VBox(list(outputs), layout=outputs_layout(basis))
        self._stale = [out, *below]
        row = W.Box([W.VBox(list(controls), layout=column_layout()), out],
                    layout=row_layout())
        return W.VBox([row, *below], layout=W.Layout(width="100%", max_width="100%"))
