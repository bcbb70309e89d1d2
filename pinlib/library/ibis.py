"""IBIS files (ANSI/EIA-656, the I/O Buffer Information Specification): the subset pinlib reads.

The library layer: this module knows the file's grammar and nothing of physics.  It
reads the header keywords, ``[Component]`` with ``[Manufacturer]``, ``[Package]`` and
``[Pin]``, ``[Model Selector]``, and ``[Model]`` with its parameters, ``[Voltage Range]``,
``[Temperature Range]``, the four current-voltage tables (``[Pullup]``, ``[Pulldown]``,
``[GND Clamp]``, ``[POWER Clamp]``), ``[Ramp]`` and the rising and falling waveforms.
Other keywords are recognised as keywords and their data skipped.

Grammar followed (IBIS syntax rules):

- a keyword is written in brackets at the start of a line; in keywords, case does not
  matter and a space and an underscore are the same character;
- the comment character is ``|`` until ``[Comment Char]`` names another (its argument is
  the character followed by ``_char``); everything after it on a line is a comment;
- numbers may carry one scaling letter from :data:`SCALE` after them, and any letters after
  that (a unit) are ignored: ``2.5pF`` is 2.5e-12, ``1.5meg`` is 1.5e-3 (``m`` is milli;
  IBIS has no ``meg``), ``3M`` is 3e6;
- columns typ, min, max; ``NA`` stands for a value not given (never in the typ column of
  a table, where a value is needed).

Work is bounded: the file is read through :func:`pinlib.core.tomlfile.read_regular` (a
regular file of at most :data:`MAX_BYTES`), and each line is scanned once with anchored
patterns.  Every problem is a :class:`~pinlib.core.errors.LibraryError` naming the file,
the line and the keyword.
"""

from __future__ import annotations

import math
import re
from dataclasses import field
from pathlib import Path

from pinlib.core import messages as M
from pinlib.core.errors import LibraryError
from pinlib.core.labels import plural_s
from pinlib.core.tomlfile import read_regular
from pinlib.core.valueclass import value_class

__all__ = ["SCALE", "MAX_BYTES", "TypMinMax", "Table", "Pin", "Component", "Ramp",
           "Waveform", "Model", "IbisFile", "parse_number", "parse_ibis", "read_ibis"]

#: IBIS's scaling letters and their factors (case matters: ``M`` is mega, ``m`` milli).
SCALE = {"T": 1e12, "G": 1e9, "M": 1e6, "k": 1e3, "m": 1e-3, "u": 1e-6, "n": 1e-9,
         "p": 1e-12, "f": 1e-15}

#: The largest IBIS file read (vendors' files of many components reach a few MB).
MAX_BYTES = 32 * 2**20

# Unambiguous (each character has one way to match), so a failing match backtracks
# in linear time; tokens longer than _TOKEN_LIMIT are refused before it runs.
_NUMBER = re.compile(r"([+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?)([TGMkmunpf]?)[A-Za-z]*")
_TOKEN_LIMIT = 64
_KEYWORD = re.compile(r"\[([^\]]{1,80})\]")
_HEADER = ("ibis ver", "file name", "file rev", "date", "source", "notes", "disclaimer",
           "copyright", "comment char")
_TABLES = {"pullup": "pullup", "pulldown": "pulldown", "gnd clamp": "gnd_clamp",
           "power clamp": "power_clamp"}
_WAVES = {"rising waveform": "rising", "falling waveform": "falling"}
_REFERENCES = ("pullup reference", "pulldown reference", "power clamp reference",
               "gnd clamp reference")
_MODEL_PARAMS = ("model_type", "polarity", "enable", "vinl", "vinh", "vmeas", "cref", "rref",
                 "vref", "c_comp")


@value_class(frozen=True)
class TypMinMax:
    """One quantity at the three corners (None where the file says NA)."""

    typ: float | None
    min: float | None = None
    max: float | None = None


@value_class(frozen=True)
class Table:
    """A table of rows ``x, typ, min, max`` (V-I or V-t), its keyword and first line."""

    keyword: str
    line: int
    x: tuple[float, ...]
    typ: tuple[float, ...]
    min: tuple[float | None, ...]
    max: tuple[float | None, ...]


@value_class(frozen=True)
class Pin:
    name: str
    signal: str
    model: str
    line: int
    r_pin: float | None = None
    l_pin: float | None = None
    c_pin: float | None = None


@value_class
class Component:
    name: str
    line: int
    manufacturer: str = ""
    package: dict[str, TypMinMax] = field(default_factory=dict)
    pins: list[Pin] = field(default_factory=list)


@value_class(frozen=True)
class Ramp:
    """``dV/dt`` as (dV, dt) pairs per corner, and the load they were taken into."""

    dv_dt_r: tuple[tuple[float, float] | None, ...]
    dv_dt_f: tuple[tuple[float, float] | None, ...]
    r_load: float | None
    line: int


@value_class(frozen=True)
class Waveform:
    """A V-t table into a stated fixture (``R_fixture``, ``V_fixture``, ``C_fixture``...)."""

    edge: str
    fixture: dict[str, float]
    table: Table


@value_class
class Model:
    name: str
    line: int
    params: dict[str, object] = field(default_factory=dict)
    #: the line of each parameter in ``params``, by the same key
    lines: dict[str, int] = field(default_factory=dict)
    voltage_range: TypMinMax | None = None
    #: ``[Pullup Reference]``, ``[Pulldown Reference]``... by key ("pullup reference"),
    #: which may stand in for ``[Voltage Range]``
    references: dict[str, TypMinMax] = field(default_factory=dict)
    temperature_range: TypMinMax | None = None
    tables: dict[str, Table] = field(default_factory=dict)
    ramp: Ramp | None = None
    waveforms: list[Waveform] = field(default_factory=list)

    @property
    def model_type(self) -> str:
        return str(self.params.get("model_type", ""))

    def supply(self) -> TypMinMax | None:
        """The supply its tables are counted from: ``[Voltage Range]``, else the
        ``[Pullup Reference]`` less a ``[Pulldown Reference]`` (0 V when none)."""
        if self.voltage_range is not None:
            return self.voltage_range
        up = self.references.get("pullup reference")
        if up is None:
            return None
        down = self.references.get("pulldown reference", TypMinMax(0.0, 0.0, 0.0))

        def less(a, b):
            return None if a is None else a - (b or 0.0)
        return TypMinMax(up.typ - (down.typ or 0.0), less(up.min, down.min),
                         less(up.max, down.max))


@value_class
class IbisFile:
    path: str
    header: dict[str, str]
    components: dict[str, Component]
    selectors: dict[str, list[tuple[str, str]]]
    models: dict[str, Model]

    @property
    def file_rev(self) -> str:
        return self.header.get("file rev", "")


# ---------------------------------------------------------------- numbers
def parse_number(text: str) -> float:
    """A number in IBIS notation (``2.5pF``, ``-1.2e-3``, ``33k``); ValueError otherwise,
    also for one too large for a float (``1e999``: infinity is no number of a model)."""
    text = text.strip()
    m = _NUMBER.fullmatch(text) if len(text) <= _TOKEN_LIMIT else None
    if m is None:
        raise ValueError(text)
    value = float(m.group(1)) * SCALE.get(m.group(2), 1.0)
    if not math.isfinite(value):
        raise ValueError(text)
    return value


class _Where:
    """The file being read, to place errors."""

    def __init__(self, path: str):
        self.path = path

    def error(self, problem: str, line: int, keyword: str, value=None, expected=None):
        return LibraryError(problem, file=self.path, line=line, field=keyword, value=value,
                            expected=expected)

    def number(self, text: str, line: int, keyword: str, *, na: bool = False):
        if text.upper() == "NA":
            if na:
                return None
            raise self.error(M.IBIS_NA_NOT_ALLOWED, line, keyword, text,
                             "a number (NA only in the min and max columns)")
        try:
            return parse_number(text)
        except ValueError:
            written = len(text) <= _TOKEN_LIMIT and _NUMBER.fullmatch(text.strip())
            raise self.error(M.IBIS_NUMBER_TOO_LARGE if written else M.IBIS_NOT_A_NUMBER,
                             line, keyword, text,
                             "a number with an optional scaling letter "
                             "(T G M k m u n p f), e.g. 2.5p or 1.2e-3") from None

    def columns(self, cols: list[str], want: int, line: int, keyword: str, what: str):
        if len(cols) != want:
            found = f"{len(cols)} column{plural_s(len(cols))}"
            raise self.error(M.IBIS_WRONG_COLUMNS.format(found=found, expected=want),
                             line, keyword, " ".join(cols), what)

    def tmm(self, cols: list[str], line: int, keyword: str) -> TypMinMax:
        self.columns(cols, 3, line, keyword, "typ min max")
        typ = self.number(cols[0], line, keyword)
        return TypMinMax(typ, self.number(cols[1], line, keyword, na=True),
                         self.number(cols[2], line, keyword, na=True))


# ---------------------------------------------------------------- sections
@value_class
class _Section:
    keyword: str          # normalised: lower case, '_' as ' '
    name: str             # as written
    arg: str
    line: int
    rows: list[tuple[int, str]] = field(default_factory=list)


def _norm(word: str) -> str:
    return " ".join(word.replace("_", " ").lower().split())


def _sections(text: str, where: _Where) -> list[_Section]:
    """The file cut at its keywords; comments removed; stops at ``[End]``."""
    comment = "|"
    out: list[_Section] = []
    for number, raw in enumerate(text.splitlines(), start=1):
        line = raw.rstrip()
        stripped = line.lstrip()
        m = _KEYWORD.match(stripped)
        if m is not None and _norm(m.group(1)) == "comment char":
            arg = stripped[m.end():].strip()
            char = arg[:1]
            if len(arg) < 6 or arg[1:6].lower() != "_char" or char.isalnum() or char == "[":
                raise where.error(M.IBIS_BAD_COMMENT_CHAR, number, "[Comment Char]", arg,
                                  "a character and '_char', e.g. #_char")
            comment = arg[0]
            out.append(_Section("comment char", m.group(1), arg, number))
            continue
        cut = line.find(comment)
        if cut >= 0:
            line = line[:cut]
        stripped = line.strip()
        if not stripped:
            continue
        m = _KEYWORD.match(stripped)
        if m is not None:
            key = _norm(m.group(1))
            if key == "end":
                break
            out.append(_Section(key, f"[{m.group(1).strip()}]", stripped[m.end():].strip(),
                                number))
        elif not out:
            raise where.error(M.IBIS_DATA_BEFORE_KEYWORD, number, "", stripped[:40],
                              "a keyword in brackets first, e.g. [IBIS Ver]")
        else:
            out[-1].rows.append((number, stripped))
    return out


def _pairs(row: str) -> tuple[str, str]:
    """``name = value`` or ``name value ...`` as (name, rest)."""
    if "=" in row:
        name, _, rest = row.partition("=")
        return name.strip(), rest.strip()
    parts = row.split(None, 1)
    return parts[0], parts[1] if len(parts) > 1 else ""


# ---------------------------------------------------------------- component
def _pins(sec: _Section, where: _Where) -> list[Pin]:
    head = [_norm(w) for w in sec.arg.split()]
    rlc = "r pin" in head or "c pin" in head
    want = 6 if rlc else 3
    pins = []
    for line, row in sec.rows:
        cols = row.split()
        if rlc and len(cols) == 3:
            want_here = 3  # a pin without its own R/L/C takes the [Package] values
        else:
            want_here = want
        where.columns(cols, want_here, line, sec.name,
                      "pin signal_name model_name" + (" R_pin L_pin C_pin" if rlc else ""))
        r = l_ = c = None
        if want_here == 6:
            r, l_, c = (where.number(v, line, sec.name, na=True) for v in cols[3:])
        pins.append(Pin(cols[0], cols[1], cols[2], line, r, l_, c))
    return pins


def _package(sec: _Section, where: _Where) -> dict[str, TypMinMax]:
    out = {}
    for line, row in sec.rows:
        cols = row.split()
        out[cols[0].lower()] = where.tmm(cols[1:], line, sec.name)
    return out


# ---------------------------------------------------------------- model
def _table(sec: _Section, where: _Where, rows=None) -> Table:
    rows = sec.rows if rows is None else rows
    if not rows:
        raise where.error(M.IBIS_EMPTY_TABLE, sec.line, sec.name, None,
                          "rows of four columns: x typ min max")
    xs, typ, mins, maxs = [], [], [], []
    for line, row in rows:
        cols = row.split()
        where.columns(cols, 4, line, sec.name, "four columns: x typ min max")
        xs.append(where.number(cols[0], line, sec.name))
        t = where.tmm(cols[1:], line, sec.name)
        typ.append(t.typ)
        mins.append(t.min)
        maxs.append(t.max)
    return Table(sec.name, rows[0][0], tuple(xs), tuple(typ), tuple(mins), tuple(maxs))


def _ratio(text: str, line: int, keyword: str, where: _Where):
    if text.upper() == "NA":
        return None
    dv, slash, dt = text.partition("/")
    if not slash:
        raise where.error(M.IBIS_NOT_A_NUMBER, line, keyword, text, "dV/dt as e.g. 1.2/0.5n")
    return (where.number(dv, line, keyword), where.number(dt, line, keyword))


def _ramp(sec: _Section, where: _Where) -> Ramp:
    r_load, ramps = None, {}
    for line, row in sec.rows:
        name, rest = _pairs(row)
        key = name.lower()
        if key == "r_load":
            r_load = where.number(rest, line, sec.name)
        elif key in ("dv/dt_r", "dv/dt_f"):
            cols = rest.split()
            where.columns(cols, 3, line, sec.name, "typ min max, each dV/dt")
            ramps[key] = tuple(_ratio(c, line, sec.name, where) for c in cols)
            if ramps[key][0] is None:
                raise where.error(M.IBIS_NA_NOT_ALLOWED, line, sec.name, rest,
                                  "a typical dV/dt")
    for key in ("dv/dt_r", "dv/dt_f"):
        if key not in ramps:
            raise where.error(M.IBIS_MISSING_KEYWORD.format(keyword=key.replace("dv", "dV")),
                              sec.line, sec.name, None, "dV/dt_r and dV/dt_f rows")
    return Ramp(ramps["dv/dt_r"], ramps["dv/dt_f"], r_load, sec.line)


def _waveform(sec: _Section, where: _Where) -> Waveform:
    fixture, lines, rows = {}, {}, []
    for line, row in sec.rows:
        if row[:1].isalpha():
            name, rest = _pairs(row)
            fixture[name.lower()] = where.number(rest, line, sec.name)
            lines[name.lower()] = line
        else:
            rows.append((line, row))
    for need in ("r_fixture", "v_fixture"):
        if need not in fixture:
            raise where.error(M.IBIS_MISSING_KEYWORD.format(keyword=need.capitalize()),
                              sec.line, sec.name, None, "R_fixture and V_fixture")
    for name, least in (("r_fixture", "above 0"), ("c_fixture", "0 or more")):
        value = fixture.get(name)
        if value is not None and not (value > 0 if name == "r_fixture" else value >= 0):
            raise where.error(M.IBIS_FIXTURE_OUT_OF_RANGE.format(name=name.capitalize()),
                              lines[name], sec.name, value, f"{name.capitalize()} {least}")
    table = _table(sec, where, rows)
    for (line, row), before, after in zip(rows[1:], table.x[:-1], table.x[1:], strict=True):
        if not after > before:
            raise where.error(M.IBIS_TIME_NOT_INCREASING, line, sec.name, row.strip(),
                              "the rows in order of time, each later than the one before")
    return Waveform(_WAVES[sec.keyword], fixture, table)


def _model_params(model: Model, sec: _Section, where: _Where) -> None:
    for line, row in sec.rows:
        name, rest = _pairs(row)
        key = name.lower()
        if key not in _MODEL_PARAMS:
            continue  # a parameter pinlib does not use (Vinl+, Cref_rising, ...)
        model.lines[key] = line
        if key in ("model_type", "polarity", "enable"):
            model.params[key] = rest.split()[0] if rest.split() else ""
        elif key == "c_comp":
            model.params[key] = where.tmm(rest.split(), line, "C_comp")
        else:
            model.params[key] = where.number(rest, line, name)
    if "model_type" not in model.params:
        raise where.error(M.IBIS_MISSING_KEYWORD.format(keyword="Model_type"), sec.line,
                          sec.name, model.name, "Model_type and C_comp in every [Model]")
    if "c_comp" not in model.params:
        raise where.error(M.IBIS_MISSING_KEYWORD.format(keyword="C_comp"), sec.line,
                          sec.name, model.name, "Model_type and C_comp in every [Model]")


def _in_model(model: Model | None, sec: _Section, where: _Where) -> Model:
    if model is None:
        raise where.error(M.IBIS_OUTSIDE_SECTION.format(keyword=sec.name, section="[Model]"),
                          sec.line, sec.name, None, "after a [Model] keyword")
    return model


def _model_keyword(model: Model, sec: _Section, where: _Where) -> None:
    if sec.keyword in ("voltage range", "temperature range"):
        value = where.tmm(sec.arg.split(), sec.line, sec.name)
        setattr(model, sec.keyword.replace(" ", "_"), value)
        model.lines[sec.keyword] = sec.line
    elif sec.keyword in _REFERENCES:
        model.references[sec.keyword] = where.tmm(sec.arg.split(), sec.line, sec.name)
        model.lines[sec.keyword] = sec.line
    elif sec.keyword in _TABLES:
        model.tables[_TABLES[sec.keyword]] = _table(sec, where)
    elif sec.keyword == "ramp":
        model.ramp = _ramp(sec, where)
    elif sec.keyword in _WAVES:
        model.waveforms.append(_waveform(sec, where))


# ---------------------------------------------------------------- the file
def _build(sections: list[_Section], where: _Where) -> IbisFile:
    header: dict[str, str] = {}
    components: dict[str, Component] = {}
    selectors: dict[str, list[tuple[str, str]]] = {}
    models: dict[str, Model] = {}
    comp: Component | None = None
    model: Model | None = None
    for sec in sections:
        key = sec.keyword
        if key in _HEADER:
            header[key] = sec.arg or " ".join(r for _, r in sec.rows)
        elif key == "component":
            comp, model = Component(sec.arg, sec.line), None
            components[sec.arg] = comp
        elif key in ("manufacturer", "package", "pin"):
            if comp is None:
                raise where.error(M.IBIS_OUTSIDE_SECTION.format(keyword=sec.name,
                                                                section="[Component]"),
                                  sec.line, sec.name, None, "after a [Component] keyword")
            if key == "manufacturer":
                comp.manufacturer = sec.arg
            elif key == "package":
                comp.package = _package(sec, where)
            else:
                comp.pins = _pins(sec, where)
        elif key == "model selector":
            comp, model = None, None
            selectors[sec.arg] = [(_pairs(r)[0], _pairs(r)[1]) for _, r in sec.rows]
        elif key == "model":
            comp, model = None, Model(sec.arg, sec.line)
            _model_params(model, sec, where)
            models[sec.arg] = model
        elif key in ("voltage range", "temperature range", "ramp") or key in _TABLES \
                or key in _WAVES or key in _REFERENCES:
            _model_keyword(_in_model(model, sec, where), sec, where)
    return IbisFile(where.path, header, components, selectors, models)


def _check(ibis: IbisFile, where: _Where) -> None:
    for need in ("ibis ver", "file name", "file rev"):
        if need not in ibis.header:
            raise where.error(M.IBIS_MISSING_KEYWORD.format(keyword=f"[{need.title()}]"),
                              1, f"[{need.title()}]", None, "the header keywords")
    if not ibis.components:
        raise where.error(M.IBIS_MISSING_KEYWORD.format(keyword="[Component]"), 1,
                          "[Component]", None, "at least one component")
    for comp in ibis.components.values():
        if not comp.pins:
            raise where.error(M.IBIS_MISSING_KEYWORD.format(keyword="[Pin]"), comp.line,
                              "[Component]", comp.name, "a [Pin] list in every component")
        for pin in comp.pins:
            known = pin.model.upper() in ("POWER", "GND", "NC") or pin.model in ibis.models \
                or pin.model in ibis.selectors
            if not known:
                raise where.error(M.IBIS_UNKNOWN_MODEL, pin.line, "[Pin]", pin.model,
                                  "a [Model] or [Model Selector] of the file, or POWER, "
                                  "GND, NC")
    for model in ibis.models.values():
        if model.supply() is None and model.model_type.lower() not in ("terminator",):
            raise where.error(M.IBIS_MISSING_KEYWORD.format(keyword="[Voltage Range]"),
                              model.line, "[Model]", model.name,
                              "[Voltage Range] (or [Pullup Reference]) in every [Model]")


def parse_ibis(text: str, path: str = "<text>") -> IbisFile:
    """The content of an IBIS file given as text."""
    where = _Where(path)
    ibis = _build(_sections(text, where), where)
    _check(ibis, where)
    return ibis


def read_ibis(path: str | Path, *, max_bytes: int = MAX_BYTES) -> IbisFile:
    """Read and parse the IBIS file at ``path`` (a regular file of at most ``max_bytes``)."""
    raw = read_regular(Path(path), error=LibraryError, max_bytes=max_bytes)
    return parse_ibis(raw.decode("latin-1"), str(path))
