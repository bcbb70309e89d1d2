"""Hardening: bad input never ends in a traceback, and library writes survive faults.

Design files (the demo design and small valid ones) are mutated at random by
hypothesis -- keys deleted, values replaced by other types, random text, numbers at
zero, negative, NaN, infinite and absurd magnitudes -- and loaded and checked: each
run gives a result or a :class:`~pinlib.core.errors.PinlibError` that names the file or the
field, never another exception and never a warning other than pinlib's own.  The same
goes through the command line's ``main()``: exit code 0, 1 or 2 and no traceback.
Part files are mutated the same way and run through a design that places them.

Library writes (beside ``tests/test_record.py``, which covers a killed single writer,
two writers of one file and a refused replace): a full disk at every step of a write, a
read-only folder at every step, a writer of several files killed at random moments,
and two writers creating and recording at once.  The hypothesis runs are derandomized
so that CI sees the same examples every run; ``PINLIB_FUZZ=20 pytest
tests/test_hardening.py`` hunts longer with fresh examples.
"""

from __future__ import annotations

import copy
import errno
import os
import random
import signal
import stat
import subprocess
import sys
import tempfile
import textwrap
import time
import warnings
from pathlib import Path

import pytest
import tomlkit
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from pinlib.cli import main
from pinlib.core.errors import FitWarning, PinlibError, ValidityWarning, WriteError
from pinlib.core.tomlfile import atomic_write, tomllib
from pinlib.engines.dispatch import check_design
from pinlib.library import loader
from pinlib.library.loader import load_library
from pinlib.library.record import new_part, record_value
from pinlib.model.design import load_design

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "workbooks" / "designs" / "demo-board.toml"

SMALL_I2C = """\
format = "pinlib.design/1"
title = "small I2C"

[board.geometry.g]
kind = "microstrip"
width = "0.2 mm"
height = "0.18 mm"
thickness = "35 µm"
er = 4.2

[[bus]]
id = "sensors"
protocol = "i2c"
mode = "fast"
clock = "400 kHz"
supply = "3.3 V"
supply_tolerance = "5 %"
pullup = "auto"
pullup_tolerance = "1 %"
trace = { length = "12 cm", geometry = "g" }
extra_capacitance = "10 pF"
cables = [{ part = "ribbon-cable", length = "0.3 m" }]
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller" },
  { ref = "U2", part = "eeprom-i2c" },
  { ref = "U3", part = "rtc-i2c", supply = "3.3 V", switched = true },
]
"""

SMALL_BRIDGED = """\
format = "pinlib.design/1"
title = "small bridged I2C"

[[bus]]
id = "b"
protocol = "i2c"

[[bus.segment]]
supply = "3.3 V"
pullup = "2.2 kΩ"
trace = { length = "5 cm", capacitance = "0.8 pF/cm" }
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller" },
  { ref = "Q1", part = "level-translator-mosfet", side = "b" },
]

[[bus.segment]]
supply = "1.8 V"
pullup = "auto"
trace = { length = "3 cm", capacitance = "0.8 pF/cm" }
devices = [
  { ref = "Q1", part = "level-translator-mosfet", side = "a" },
  { ref = "U9", part = "temp-humidity-sensor" },
]

[[bus]]
id = "power"
protocol = "smbus"
mode = "100k"
supply = "3.3 V"
pullup = "4.7 kΩ"
trace = { length = "20 cm", capacitance = "0.8 pF/cm" }
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller" },
  { ref = "U30", part = "battery-gauge-smbus" },
]
"""

SMALL_SPI = """\
format = "pinlib.design/1"
title = "small SPI"

[board.geometry.g]
kind = "microstrip"
width = "0.2 mm"
height = "0.18 mm"
er = 4.2

[[bus]]
id = "flash"
protocol = "spi"
spi_mode = 0
clock = "20 MHz"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller" },
  { ref = "U7", part = "nor-flash-spi" },
]
lines.sclk = { length = "6 cm", geometry = "g", series_resistor = "auto" }
lines.copi = { length = "6 cm", geometry = "g", series_resistor = "22 Ω" }
lines.cipo = { length = "6 cm", capacitance = "1.1 pF/cm", delay = "58 ps/cm" }
"""

BASES = {
    "demo": tomllib.loads(DEMO.read_text(encoding="utf-8")),
    "i2c": tomllib.loads(SMALL_I2C),
    "bridged": tomllib.loads(SMALL_BRIDGED),
    "spi": tomllib.loads(SMALL_SPI),
}

# Whatever the input, pinlib warns only with its own categories (a model used outside its
# validity range, datasheet points that do not fit); a numpy RuntimeWarning (overflow,
# division by zero, invalid value) means a bad value reached the arithmetic unchecked.
OWN_WARNINGS = (ValidityWarning, FitWarning)


@pytest.fixture(scope="module")
def library():
    old = os.environ.pop("PINLIB_LIBRARY", None)
    try:
        yield load_library()
    finally:
        if old is not None:
            os.environ["PINLIB_LIBRARY"] = old


def _paths(node, prefix=()):
    out = []
    if isinstance(node, dict):
        for key, value in node.items():
            out.append(prefix + (key,))
            out += _paths(value, prefix + (key,))
    elif isinstance(node, list):
        for i, value in enumerate(node):
            out.append(prefix + (i,))
            out += _paths(value, prefix + (i,))
    return out


def _at(doc, path):
    node = doc
    for key in path[:-1]:
        node = node[key]
    return node


_NUMBERS = st.one_of(
    st.sampled_from(["0", "-0", "-1", "1", "0.5", "1e-30", "1e-12", "1e-3", "1e3", "1e9",
                     "1e30", "1e300", "1e-300", "nan", "inf", "-inf", "NaN"]),
    st.floats(allow_nan=True, allow_infinity=True).map(repr),
)
_UNITS = st.sampled_from(["", "F", "pF", "nF", "µF", "Ω", "mΩ", "kΩ", "MΩ", "V", "mV", "VDD",
                          "A", "mA", "s", "ns", "Hz", "kHz", "MHz", "GHz", "%", "m", "cm", "mm",
                          "µm", "mil", "pF/cm", "ps/cm", "H", "pH", "R", "k"])
_QUANTITIES = st.builds(lambda n, sep, u: f"{n}{sep}{u}", _NUMBERS, st.sampled_from(["", " "]),
                        _UNITS)
_ODD_VALUES = st.one_of(
    _QUANTITIES,
    st.sampled_from(["", " ", "auto", "none", "1 F", "1 mΩ", "0 Ω", "-5 pF", "nan pF", "inf Ω",
                     "1e300 Ω", "0 Hz", "-3.3 V", "0 V", "100 %", "-5 %", "4k7", "33R", "2R2",
                     "0.7 VDD", "VDD - 0.4 V", "controller", "a", "b", "i2c", "spi", "E24",
                     "fast", "standard"]),
    st.text(max_size=20),
    st.integers(min_value=-(10 ** 18), max_value=10 ** 18),
    st.floats(allow_nan=True, allow_infinity=True),
    st.booleans(),
    st.just([]),
    st.just({}),
    st.lists(st.integers(-3, 3), max_size=3),
    st.dictionaries(st.sampled_from(["value", "x", "length", "part"]), st.text(max_size=5),
                    max_size=2),
)


def _same_unit_other_magnitude(old, number):
    """The old value's unit with another number: '12 cm' -> '1e30 cm'."""
    if not isinstance(old, str) or not old[:1].isdigit():
        return None
    head = old.split(" ")[0].rstrip("abcdefghijklmnopqrstuvwxyzµΩ%/")
    unit = old[len(head):].strip()
    return f"{number} {unit}".strip()


@st.composite
def mutated_designs(draw, names=tuple(BASES)):
    name = draw(st.sampled_from(names))
    doc = copy.deepcopy(BASES[name])
    for _ in range(draw(st.integers(1, 3))):
        paths = _paths(doc)
        if not paths:
            break
        path = draw(st.sampled_from(paths))
        parent = _at(doc, path)
        old = parent[path[-1]]
        op = draw(st.sampled_from(["delete", "replace", "magnitude", "magnitude"]))
        new = None
        if op == "magnitude":
            new = _same_unit_other_magnitude(old, draw(_NUMBERS))
        if op == "delete":
            del parent[path[-1]]
        else:
            parent[path[-1]] = new if new is not None else draw(_ODD_VALUES)
    return name, doc


def _write(doc, folder: Path) -> Path:
    try:
        text = tomlkit.dumps(doc)
    except Exception:  # tomlkit cannot write every structure (e.g. mixed arrays)
        assume(False)
    try:
        tomllib.loads(text)
    except tomllib.TOMLDecodeError:
        assume(False)  # not a TOML file at all: covered by the loader's own tests
    path = folder / "design.toml"
    path.write_text(text, encoding="utf-8")
    return path


def _check_or_clear_error(path: Path, library):
    """Load and check; return the result or the PinlibError, failing on anything else."""
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        for category in OWN_WARNINGS:
            warnings.simplefilter("ignore", category)
        try:
            return check_design(load_design(path, library=library))
        except PinlibError as err:
            assert err.file or err.field, f"an error that says neither file nor field: {err}"
            assert err.problem and err.message
            return err


# PINLIB_FUZZ=N multiplies the examples by N and draws new ones each run (a longer hunt by
# hand); by default the examples are the same every run.
_SCALE = int(os.environ.get("PINLIB_FUZZ", "0") or 0)
_FUZZ = settings(max_examples=60, deadline=None, derandomize=not _SCALE, database=None,
                 suppress_health_check=[HealthCheck.function_scoped_fixture,
                                        HealthCheck.too_slow, HealthCheck.filter_too_much])


def _examples(n: int) -> int:
    return n * max(_SCALE, 1)


@settings(_FUZZ, max_examples=_examples(60))
@given(case=mutated_designs(("i2c", "bridged", "spi")))
def test_mutated_small_designs_give_a_result_or_a_located_error(case, library, tmp_path):
    _, doc = case
    _check_or_clear_error(_write(doc, tmp_path), library)


@settings(_FUZZ, max_examples=_examples(30))
@given(case=mutated_designs(("demo",)))
def test_mutated_demo_design_gives_a_result_or_a_located_error(case, library, tmp_path):
    _, doc = case
    _check_or_clear_error(_write(doc, tmp_path), library)


@settings(_FUZZ, max_examples=_examples(30))
@given(case=mutated_designs())
def test_mutated_designs_through_the_command_line(case, tmp_path, capsys, monkeypatch):
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    _, doc = case
    path = _write(doc, tmp_path)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        for category in OWN_WARNINGS:
            warnings.simplefilter("ignore", category)
        code = main(["check", str(path), "--json"])
    out, err = capsys.readouterr()
    assert code in (0, 1, 2)
    assert "Traceback" not in err
    if code == 2:
        # one error, then the further problems of the same file, each on its own line
        first, *others = err.splitlines()
        assert first.startswith("pinlib: error: ") and err.endswith("\n"), err
        assert all(line.startswith(("pinlib: also: ", "pinlib: and ")) for line in others), err
    else:
        assert out.lstrip().startswith("{")


def test_broken_design_in_a_fresh_process_prints_one_line(tmp_path):
    doc = copy.deepcopy(BASES["spi"])
    doc["bus"][0]["lines"]["sclk"]["length"] = float("nan")
    path = _write(doc, tmp_path)
    env = dict(os.environ)
    env.pop("PINLIB_LIBRARY", None)
    proc = subprocess.run([sys.executable, "-m", "pinlib", "check", str(path)], cwd=ROOT,
                          capture_output=True, text=True, env=env, timeout=120)
    assert proc.returncode == 2
    assert "Traceback" not in proc.stderr
    assert proc.stderr.count("\n") == 1 and "bus[0].lines.sclk.length" in proc.stderr


# --- the named edge values, each with the message it gets --------------------------------

# (base, path, value, what the error names).  Each is refused with a message naming the
# field; the values a board could have (a 1 mΩ pull-up is extreme but a resistance)
# are in ACCEPTED below and must give a result.
REFUSED = [
    ("i2c", ("bus", 0, "supply"), "0 V", "supply"),
    ("i2c", ("bus", 0, "supply"), "-3.3 V", "supply"),
    ("i2c", ("bus", 0, "supply"), "nan V", "supply"),
    ("i2c", ("bus", 0, "supply"), "inf V", "supply"),
    ("i2c", ("bus", 0, "supply"), "1e9 V", "supply"),
    ("i2c", ("bus", 0, "clock"), "0 Hz", "clock"),
    ("i2c", ("bus", 0, "clock"), "-400 kHz", "clock"),
    ("i2c", ("bus", 0, "clock"), "1e30 Hz", "clock"),
    ("i2c", ("bus", 0, "pullup"), "0 Ω", "pullup"),
    ("i2c", ("bus", 0, "pullup"), "-2.2 kΩ", "pullup"),
    ("i2c", ("bus", 0, "pullup"), "inf Ω", "pullup"),
    ("i2c", ("bus", 0, "pullup_tolerance"), "100 %", "pullup_tolerance"),
    ("i2c", ("bus", 0, "supply_tolerance"), "100 %", "supply_tolerance"),
    ("i2c", ("bus", 0, "supply_tolerance"), "-5 %", "supply_tolerance"),
    ("i2c", ("bus", 0, "extra_capacitance"), "1 F", "extra_capacitance"),
    ("i2c", ("bus", 0, "extra_capacitance"), "nan pF", "extra_capacitance"),
    ("i2c", ("bus", 0, "trace", "length"), "-12 cm", "trace.length"),
    ("i2c", ("bus", 0, "trace", "length"), "1e9 m", "trace.length"),
    ("i2c", ("board", "geometry", "g", "width"), "0 mm", "width"),
    ("i2c", ("board", "geometry", "g", "width"), "1 km", "width"),
    ("i2c", ("board", "geometry", "g", "height"), "1e-12 mm", "height"),
    ("i2c", ("board", "geometry", "g", "er"), 0.0, "er"),
    ("i2c", ("board", "geometry", "g", "er"), float("nan"), "er"),
    ("i2c", ("board", "geometry", "g", "er"), float("inf"), "er"),
    ("spi", ("bus", 0, "clock"), "0 Hz", "clock"),
    ("spi", ("bus", 0, "lines", "sclk", "length"), "inf cm", "lines.sclk.length"),
    ("spi", ("bus", 0, "lines", "cipo", "delay"), "0 ps/cm", "lines.cipo.delay"),
    ("spi", ("bus", 0, "lines", "cipo", "capacitance"), "1 F/cm", "lines.cipo.capacitance"),
    ("spi", ("bus", 0, "lines", "copi", "series_resistor"), "-22 Ω", "series_resistor"),
]

ACCEPTED = [
    ("i2c", ("bus", 0, "pullup"), "1 mΩ"),
    ("i2c", ("bus", 0, "pullup"), "1 GΩ"),
    ("i2c", ("bus", 0, "extra_capacitance"), "0 pF"),
    ("i2c", ("bus", 0, "extra_capacitance"), "1 µF"),
    ("i2c", ("bus", 0, "trace", "length"), "0 cm"),
    ("i2c", ("bus", 0, "trace", "length"), "1000 m"),
    ("i2c", ("bus", 0, "clock"), "1 mHz"),
    ("i2c", ("bus", 0, "supply"), "100 V"),
    ("i2c", ("board", "geometry", "g", "width"), "100 mm"),
    ("i2c", ("board", "geometry", "g", "height"), "10 µm"),
    ("spi", ("bus", 0, "clock"), "100 GHz"),
    ("spi", ("bus", 0, "lines", "sclk", "length"), "0 cm"),
    ("spi", ("bus", 0, "lines", "sclk", "length"), "100 m"),
    ("spi", ("bus", 0, "lines", "copi", "series_resistor"), "1 MΩ"),
    ("spi", ("board", "geometry", "g", "width"), "100 mm"),
]


def _edited(base, path, value):
    doc = copy.deepcopy(BASES[base])
    _at(doc, path)[path[-1]] = value
    return doc


@pytest.mark.parametrize(("base", "path", "value", "field"), REFUSED,
                         ids=[f"{b}-{p[-1]}={v}" for b, p, v, _ in REFUSED])
def test_edge_values_are_refused_naming_the_field(base, path, value, field, library, tmp_path):
    got = _check_or_clear_error(_write(_edited(base, path, value), tmp_path), library)
    assert isinstance(got, PinlibError), f"{value!r} accepted"
    assert got.field.endswith(field), got.message
    assert got.file == str(tmp_path / "design.toml")
    assert got.line is not None


@pytest.mark.parametrize(("base", "path", "value"), ACCEPTED,
                         ids=[f"{b}-{p[-1]}={v}" for b, p, v in ACCEPTED])
def test_extreme_but_possible_values_give_a_result(base, path, value, library, tmp_path):
    got = _check_or_clear_error(_write(_edited(base, path, value), tmp_path), library)
    assert not isinstance(got, PinlibError), got.message
    assert got.status in ("pass", "warn", "fail")


def test_one_milliohm_pullup_fails_with_the_sink_current_named(library, tmp_path):
    result = _check_or_clear_error(
        _write(_edited("i2c", ("bus", 0, "pullup"), "1 mΩ"), tmp_path), library)
    assert result.status == "fail"
    failing = [c for b in result.buses for g in [b, *b.segments] for c in g.checks
               if c.status == "fail"]
    assert failing and all(c.source for c in failing)


# --- part files with absurd values, placed on a board ------------------------------------

@pytest.mark.parametrize(("value", "problem"), [
    ("1 F", "outside the allowed range"), ("0 pF", None), ("-8 pF", "a negative value"),
    ("nan pF", "not a number with a unit"), ("inf pF", "not a number with a unit"),
    ("1e999 pF", "not a finite number"),
    ("1e-300 pF", None), ("8", "a bare number has no unit"),
])
def test_pin_capacitance_edge_values_in_a_part_file(value, problem, tmp_path, monkeypatch):
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    team = tmp_path / "team"
    team.mkdir()
    part = team / "odd-eeprom.toml"
    part.write_text(PART.format(id="odd-eeprom").replace('c_in = "8 pF"', f'c_in = "{value}"'),
                    encoding="utf-8")
    lib = load_library([team])
    doc = copy.deepcopy(BASES["i2c"])
    doc["bus"][0]["devices"][1]["part"] = "odd-eeprom"
    got = _check_or_clear_error(_write(doc, tmp_path), lib)
    if problem is None:  # zero and a vanishing capacitance are values, if odd ones
        assert not isinstance(got, PinlibError), got.message
        return
    (err,) = lib.problems
    assert (err.problem, err.file, err.field, err.line) == (problem, str(part), "pins.sda.c_in",
                                                            9)
    # the error is the part file's (its file, line and field), naming the design's place
    assert isinstance(got, PinlibError) and (got.file, got.field) == (str(part), "pins.sda.c_in")
    assert problem in got.message and "field 'bus[0].devices[1].part'" in got.message



PART_BASES = ["eeprom-i2c", "mcu-3v3", "nor-flash-spi", "level-translator-mosfet"]


@st.composite
def mutated_parts(draw):
    part_id = draw(st.sampled_from(PART_BASES))
    path = loader.BUILTIN_DIR
    files = {p.stem: p for p in path.rglob("*.toml")}
    doc = tomllib.loads(files[part_id].read_text(encoding="utf-8"))
    for _ in range(draw(st.integers(1, 3))):
        paths = [p for p in _paths(doc) if p[0] not in ("format", "id")]
        path = draw(st.sampled_from(paths))
        parent = _at(doc, path)
        old = parent[path[-1]]
        if isinstance(old, dict) and "value" in old and draw(st.booleans()):
            parent, path, old = old, path + ("value",), old["value"]
        op = draw(st.sampled_from(["delete", "replace", "magnitude", "magnitude"]))
        new = _same_unit_other_magnitude(old, draw(_NUMBERS)) if op == "magnitude" else None
        if op == "delete":
            del parent[path[-1]]
        else:
            parent[path[-1]] = new if new is not None else draw(_ODD_VALUES)
    return part_id, doc


_PLACED = {"eeprom-i2c": "i2c", "mcu-3v3": "spi", "nor-flash-spi": "spi",
           "level-translator-mosfet": "bridged"}


@settings(_FUZZ, max_examples=_examples(60))
@given(case=mutated_parts())
def test_mutated_part_files_load_and_check_or_fail_clearly(case, tmp_path, monkeypatch):
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    part_id, doc = case
    team = tmp_path / "team"
    team.mkdir(exist_ok=True)
    try:
        text = tomlkit.dumps(doc)
        tomllib.loads(text)
    except Exception:
        assume(False)
    (team / f"{part_id}.toml").write_text(text, encoding="utf-8")
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        for category in OWN_WARNINGS:
            warnings.simplefilter("ignore", category)
        lib = load_library([team])
    for problem in lib.problems:
        assert isinstance(problem, PinlibError) and problem.file, problem
    design = _write(copy.deepcopy(BASES[_PLACED[part_id]]), tmp_path)
    got = _check_or_clear_error(design, lib)
    if part_id not in lib.parts:
        assert isinstance(got, PinlibError)


# --- library writes under faults ---------------------------------------------------------

PART = """\
# a team part; the comment must survive
format = "pinlib.part/1"
id = "{id}"
title = "Team target {id}"
category = "sensor"
extends = "i2c-peripheral"

[pins.sda]
c_in = "8 pF"   # table 5
"""


@pytest.fixture
def team(tmp_path, monkeypatch):
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    folder = tmp_path / "team"
    folder.mkdir()
    (folder / "mine.toml").write_text(PART.format(id="mine"), encoding="utf-8")
    return folder


def _snapshot(folder: Path) -> dict[str, bytes]:
    return {p.name: p.read_bytes() for p in sorted(folder.iterdir()) if p.is_file()
            and not p.name.endswith(".lock")}


class _Failing:
    """A file object whose write raises ``OSError(code)``: a disk that fills up."""

    def __init__(self, fh, code):
        self._fh, self._code = fh, code

    def write(self, _text):
        raise OSError(self._code, os.strerror(self._code))

    def __getattr__(self, name):
        return getattr(self._fh, name)

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self._fh.close()
        return False


def _inject(monkeypatch, step: str, code: int) -> None:
    """Make one step of :func:`atomic_write` fail with ``OSError(code)``."""
    err = OSError(code, os.strerror(code))

    def fail(*_a, **_k):
        raise err

    if step == "mkstemp":
        monkeypatch.setattr(tempfile, "mkstemp", fail)
    elif step == "write":
        real = os.fdopen
        monkeypatch.setattr(os, "fdopen", lambda *a, **k: _Failing(real(*a, **k), code))
    elif step == "fsync":
        monkeypatch.setattr(os, "fsync", fail)
    elif step == "chmod":
        monkeypatch.setattr(os, "chmod", fail)
    elif step == "replace":
        monkeypatch.setattr(os, "replace", fail)
    else:  # pragma: no cover
        raise AssertionError(step)


STEPS = ["mkstemp", "write", "fsync", "chmod", "replace"]
FAULTS = [errno.ENOSPC, errno.EDQUOT, errno.EROFS, errno.EACCES, errno.EIO]


def _says(code: int, message: str, step: str = "mkstemp") -> bool:
    """Whether ``message`` says what the fault ``code`` at ``step`` means: a folder the
    temporary file cannot be made in is named as not writable by this user, or on a
    read-only file system; any other fault gives the system's own words."""
    if step == "mkstemp" and code == errno.EROFS:
        return "is on a read-only file system" in message
    if step == "mkstemp" and code in (errno.EACCES, errno.EPERM):
        return "is not writable by this user" in message
    return os.strerror(code) in message


@pytest.mark.parametrize("code", FAULTS, ids=[errno.errorcode[c] for c in FAULTS])
@pytest.mark.parametrize("step", STEPS)
def test_a_failing_write_is_a_clear_error_and_changes_nothing(team, monkeypatch, step, code):
    lib = load_library([team])
    before = _snapshot(team)
    _inject(monkeypatch, step, code)
    with pytest.raises(WriteError) as info:
        record_value(lib, "mine", "sda.c_in", "6 pF", "rev C, table 5")
    err = info.value
    assert err.file == str(team / "mine.toml")
    assert _says(code, err.message, step)
    assert err.problem.startswith(("cannot write the file", "cannot write in this folder",
                                   "the folder "))
    monkeypatch.undo()
    assert _snapshot(team) == before  # no temporary file left, the part file unchanged
    # derived from the part file written above: c_in = "8 pF"
    assert load_library([team]).parts["mine"].pins["sda"].c_in.value == 8e-12


@pytest.mark.parametrize("code", [errno.ENOSPC, errno.EROFS],
                         ids=[errno.errorcode[c] for c in (errno.ENOSPC, errno.EROFS)])
@pytest.mark.parametrize("step", STEPS)
def test_a_failing_new_part_leaves_no_file(team, monkeypatch, step, code):
    lib = load_library([team])
    before = _snapshot(team)
    _inject(monkeypatch, step, code)
    with pytest.raises(WriteError) as info:
        new_part(lib, "fresh", "eeprom-i2c", team)
    assert _says(code, info.value.message, step)
    assert info.value.file == str(team / "fresh.toml")
    monkeypatch.undo()
    assert _snapshot(team) == before
    assert "fresh" not in load_library([team]).parts


def test_a_new_part_file_gets_the_mode_of_any_new_file(team, monkeypatch):
    # mkstemp makes its file 0600; a team library is read by the whole team.
    old = os.umask(0o022)
    try:
        path = new_part(load_library([team]), "fresh", "eeprom-i2c", team)
    finally:
        os.umask(old)
    assert path.stat().st_mode & 0o777 == 0o644  # derived: 0o666 & ~umask 0o022 (POSIX creat)
    (team / "mine.toml").chmod(0o640)
    record_value(load_library([team]), "mine", "sda.c_in", "6 pF", "rev C")
    assert (team / "mine.toml").stat().st_mode & 0o777 == 0o640  # an old file keeps its own


def test_a_read_only_file_is_never_replaced(team, tmp_path, monkeypatch, capsys):
    # A part file or design made read-only (by its owner, or by a version control tool
    # until checked out) was replaced all the same: the write's rename asks only the
    # folder.  As root every file is writable, so no write bit at all counts as read-only.
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    mine = team / "mine.toml"
    kept = mine.read_text(encoding="utf-8")
    mine.chmod(0o444)
    with pytest.raises(WriteError, match="read-only") as info:
        record_value(load_library([team]), "mine", "sda.c_in", "6 pF", "rev C")
    assert info.value.file == str(mine) and "chmod u+w" in str(info.value)
    assert mine.read_text(encoding="utf-8") == kept
    design = tmp_path / "design.toml"
    design.write_text(SMALL_I2C, encoding="utf-8")
    design.chmod(0o444)
    assert main(["swap", str(design), "U2=rtc-i2c", "--write"]) == 2
    err = capsys.readouterr().err
    assert "read-only" in err and str(design) in err and "Traceback" not in err
    assert design.read_text(encoding="utf-8") == SMALL_I2C


@pytest.mark.parametrize("step", ["write", "replace"])
def test_a_failing_swap_write_leaves_the_design_as_it_was(tmp_path, monkeypatch, capsys, step):
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    path = tmp_path / "design.toml"
    path.write_text(SMALL_I2C, encoding="utf-8")
    _inject(monkeypatch, step, errno.ENOSPC)
    code = main(["swap", str(path), "U2=rtc-i2c", "--write"])
    err = capsys.readouterr().err
    monkeypatch.undo()
    assert code == 2
    assert "No space left on device" in err and str(path) in err and "Traceback" not in err
    assert path.read_text(encoding="utf-8") == SMALL_I2C
    assert sorted(p.name for p in tmp_path.iterdir() if not p.name.endswith(".lock")) == [
        "design.toml"]


def test_a_report_never_replaces_its_design_or_snapshot(tmp_path, monkeypatch, capsys):
    # `pinlib report board.toml --md board.toml` (the two names slipped) once replaced the
    # design with the report, and --html onto board.result.json the saved snapshot.
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    design = tmp_path / "design.toml"
    design.write_text(SMALL_I2C, encoding="utf-8")
    assert main(["check", str(design), "--save"]) in (0, 1)
    snapshot = tmp_path / "design.result.json"
    kept = snapshot.read_bytes()
    (tmp_path / "link.md").symlink_to(design)
    for flag, target in (("--md", design), ("--html", snapshot),
                         ("--md", tmp_path / "link.md")):
        capsys.readouterr()
        assert main(["report", str(design), flag, str(target)]) == 2
        err = capsys.readouterr().err
        assert "would replace the design it reports on, or its snapshot" in err, err
        assert str(target) in err and "Traceback" not in err
    assert design.read_text(encoding="utf-8") == SMALL_I2C and snapshot.read_bytes() == kept
    assert sorted(p.name for p in tmp_path.iterdir()) == [
        "design.result.json", "design.toml", "link.md"]


def test_a_failing_snapshot_save_is_a_clear_error(tmp_path, monkeypatch, capsys):
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    path = tmp_path / "design.toml"
    path.write_text(SMALL_I2C, encoding="utf-8")
    _inject(monkeypatch, "mkstemp", errno.EROFS)
    code = main(["check", str(path), "--save"])
    err = capsys.readouterr().err
    monkeypatch.undo()
    assert code == 2
    assert f"the folder {tmp_path} is on a read-only file system" in err
    assert "Traceback" not in err
    assert sorted(p.name for p in tmp_path.iterdir()) == ["design.toml"]


def test_atomic_write_keeps_the_old_text_when_interrupted_by_any_exception(tmp_path, monkeypatch):
    path = tmp_path / "x.toml"
    path.write_text("a = 1\n", encoding="utf-8")

    def interrupted(*_a):
        raise KeyboardInterrupt

    monkeypatch.setattr(os, "fsync", interrupted)
    with pytest.raises(KeyboardInterrupt):
        atomic_write(path, "a = 2\n")
    monkeypatch.undo()
    assert path.read_text(encoding="utf-8") == "a = 1\n"
    assert [p.name for p in tmp_path.iterdir()] == ["x.toml"]


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="named pipes are POSIX")
def test_a_target_that_is_no_regular_file_is_refused_and_left_as_it_was(tmp_path, monkeypatch,
                                                                         capsys):
    # `pinlib report --html /dev/full` once replaced the device node with a regular file
    # (the rename of the temporary file); a named pipe stands in for the device here.
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    pipe = tmp_path / "out.md"
    os.mkfifo(pipe)
    link = tmp_path / "link.json"
    link.symlink_to(pipe)
    with pytest.raises(WriteError) as info:
        atomic_write(pipe, "a = 1\n")
    assert info.value.file == str(pipe)
    design = tmp_path / "design.toml"
    design.write_text(SMALL_I2C, encoding="utf-8")
    for argv in (["schema", "design", "--output", str(link)],
                 ["report", str(design), "--md", str(pipe)]):
        code = main(argv)
        err = capsys.readouterr().err
        assert code == 2 and "not a regular file" in err and str(pipe) in err, argv
        assert "Traceback" not in err
    assert stat.S_ISFIFO(pipe.stat().st_mode) and link.is_symlink()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["design.toml", "link.json", "out.md"]


def test_a_file_saved_with_crlf_keeps_its_line_endings_when_written(tmp_path, team,
                                                                    capsys):
    # The readers take CRLF (a file saved on Windows), but `swap --write` and `parts
    # record` once wrote every line back with LF: a diff of the whole file for one value.
    design = tmp_path / "design.toml"
    design.write_bytes(SMALL_I2C.replace("\n", "\r\n").encode("utf-8"))
    assert main(["swap", str(design), "U2=rtc-i2c", "--write"]) in (0, 1)
    capsys.readouterr()
    raw = design.read_bytes()
    assert b'part = "rtc-i2c"' in raw and raw.count(b"\n") == raw.count(b"\r\n")
    part = team / "mine.toml"
    part.write_bytes(part.read_bytes().replace(b"\n", b"\r\n"))
    record_value(load_library([team]), "mine", "sda.c_in", "6 pF", "rev C, table 5")
    raw = part.read_bytes()
    assert b'"6 pF"' in raw and raw.count(b"\n") == raw.count(b"\r\n")
    # derived from the value recorded above
    assert load_library([team]).parts["mine"].pins["sda"].c_in.value == 6e-12
    fresh = tmp_path / "new.toml"
    atomic_write(fresh, "a = 1\nb = 2\n")  # a new file: LF, as written
    assert fresh.read_bytes() == b"a = 1\nb = 2\n"



def test_a_file_saved_with_a_byte_order_mark_keeps_it_when_written(tmp_path, team, capsys):
    # A file a Windows editor saved with a UTF-8 byte-order mark is read as if it had
    # none; `swap --write` and `parts record` write it back as the editor saved it (the
    # mark, CRLF), atomically as any write.
    bom = b"\xef\xbb\xbf"
    design = tmp_path / "design.toml"
    design.write_bytes(bom + SMALL_I2C.replace("\n", "\r\n").encode("utf-8"))
    assert main(["swap", str(design), "U2=rtc-i2c", "--write"]) in (0, 1)
    assert "error" not in capsys.readouterr().err
    raw = design.read_bytes()
    assert raw.startswith(bom) and raw.count(bom) == 1 and b'part = "rtc-i2c"' in raw
    assert raw.count(b"\n") == raw.count(b"\r\n")
    part = team / "mine.toml"
    part.write_bytes(bom + part.read_bytes())
    record_value(load_library([team]), "mine", "sda.c_in", "6 pF", "rev C, table 5")
    raw = part.read_bytes()
    assert raw.startswith(bom) and raw.count(bom) == 1 and b'"6 pF"' in raw
    # derived from the value recorded above
    assert load_library([team]).parts["mine"].pins["sda"].c_in.value == 6e-12
    assert sorted(p.name for p in team.iterdir()) == ["mine.toml"]  # no temporary left
    atomic_write(part, "a = 1\n")  # any writer keeps it
    assert part.read_bytes() == bom + b"a = 1\n"

# A writer that works through several files: it creates new parts and records values into
# them and into a shared part, printing each operation once it has completed.
WRITER = textwrap.dedent("""\
    import sys
    from pinlib.library.loader import load_library
    from pinlib.library.record import new_part, record_value
    folder, tag, count = sys.argv[1], sys.argv[2], int(sys.argv[3])
    for i in range(count):
        lib = load_library([folder], env=False)
        new_id = f"{tag}-{i:02d}"
        new_part(lib, new_id, "i2c-peripheral", folder, title=f"part {i}")
        print("new", new_id, sep="\t", flush=True)
        lib = load_library([folder], env=False)
        record_value(lib, new_id, "sda.c_in", f"{i + 1} pF", f"{tag} sheet {i}")
        print("record", new_id, f"{i + 1} pF", sep="\t", flush=True)
        record_value(lib, "shared", f"p{tag}{i:02d}.c_in", f"{i + 1} pF", f"{tag} {i}")
        print("record", "shared", f"p{tag}{i:02d}", f"{i + 1} pF", sep="\t", flush=True)
""")


def _shared_part(folder: Path, tags, count: int) -> None:
    lines = ['format = "pinlib.part/1"', 'id = "shared"', 'title = "Shared pins"',
             'category = "logic"', 'supply = { min = "1.7 V", max = "5.5 V" }', ""]
    for tag in tags:
        for i in range(count):
            lines += [f"# pin {tag}{i}", f"[pins.p{tag}{i:02d}]", 'function = "gpio"', ""]
    (folder / "shared.toml").write_text("\n".join(lines), encoding="utf-8")


def _writer(folder: Path, tag: str, count: int) -> subprocess.Popen:
    env = dict(os.environ)
    env.pop("PINLIB_LIBRARY", None)
    return subprocess.Popen([sys.executable, "-c", WRITER, str(folder), tag, str(count)],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, env=env,
                            cwd=ROOT)


def _check_folder(folder: Path, done: list[list[str]], tags) -> None:
    """Every file parses, the library loads, and every completed operation is there."""
    for path in folder.glob("*.toml"):
        tomllib.loads(path.read_text(encoding="utf-8"))  # never a truncated file
    lib = load_library([folder], env=False)
    assert not lib.problems, [p.message for p in lib.problems]
    shared = tomllib.loads((folder / "shared.toml").read_text(encoding="utf-8"))
    assert (folder / "shared.toml").read_text(encoding="utf-8").count("# pin ") == sum(
        1 for _ in shared["pins"])
    for op in done:
        if op[0] == "new":
            assert op[1] in lib.parts
        elif op[1] == "shared":
            assert shared["pins"][op[2]]["c_in"]["value"] == op[3]
        else:
            assert lib.parts[op[1]].pins["sda"].c_in.text == op[2]
            assert lib.parts[op[1]].pins["sda"].c_in.origin == op[1]


@pytest.mark.parametrize("seed", [11, 12, 13])
def test_a_writer_of_several_files_killed_at_random_leaves_every_completed_write(tmp_path,
                                                                                 seed):
    folder = tmp_path / "team"
    folder.mkdir()
    _shared_part(folder, ["a"], 30)
    rng = random.Random(seed)
    proc = _writer(folder, "a", 30)
    done: list[list[str]] = []
    wanted = rng.randint(2, 12)
    while len(done) < wanted:
        line = proc.stdout.readline()
        if not line:
            break
        done.append(line.rstrip("\n").split("\t"))
    time.sleep(rng.uniform(0.0, 0.2))
    proc.send_signal(signal.SIGKILL)
    rest, err = proc.communicate(timeout=60)
    done += [line.split("\t") for line in rest.splitlines()]
    assert proc.returncode == -signal.SIGKILL, err
    assert wanted <= len(done) < 90
    _check_folder(folder, done, ["a"])


def test_two_writers_creating_and_recording_at_once_lose_nothing(tmp_path):
    folder = tmp_path / "team"
    folder.mkdir()
    _shared_part(folder, ["a", "b"], 8)
    procs = [_writer(folder, "a", 8), _writer(folder, "b", 8)]
    outputs = [p.communicate(timeout=300) for p in procs]
    done = []
    for p, (out, err) in zip(procs, outputs, strict=True):
        assert p.returncode == 0, err
        done += [line.split("\t") for line in out.splitlines()]
    assert len(done) == 2 * 8 * 3
    _check_folder(folder, done, ["a", "b"])


CREATOR = textwrap.dedent("""\
    import sys
    from pinlib.core.errors import LibraryError
    from pinlib.library.loader import load_library
    from pinlib.library.record import new_part
    folder, title = sys.argv[1], sys.argv[2]
    lib = load_library([folder], env=False)
    try:
        new_part(lib, "contested", "i2c-peripheral", folder, title=title)
    except LibraryError as err:
        print("refused", err.problem, flush=True)
    else:
        print("created", flush=True)
""")


def test_two_writers_creating_one_part_one_wins_and_the_file_is_whole(tmp_path):
    folder = tmp_path / "team"
    folder.mkdir()
    env = dict(os.environ)
    env.pop("PINLIB_LIBRARY", None)
    procs = [subprocess.Popen([sys.executable, "-c", CREATOR, str(folder), f"writer {i}"],
                              stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
                              env=env, cwd=ROOT) for i in range(3)]
    outcomes = []
    for p in procs:
        out, err = p.communicate(timeout=120)
        assert p.returncode == 0, err
        outcomes.append(out.strip())
    assert sorted(o.split()[0] for o in outcomes) == ["created", "refused", "refused"]
    # The loser finds the file inside the lock, or (starting later) the part in the library.
    assert all(o in ("created", "refused the file exists", "refused a part with this id exists")
               for o in outcomes), outcomes
    data = tomllib.loads((folder / "contested.toml").read_text(encoding="utf-8"))
    assert data["id"] == "contested" and data["title"].startswith("writer ")
    assert not load_library([folder], env=False).problems


def test_a_stale_temporary_file_is_ignored_by_the_loader(team):
    # What a writer killed between writing its temporary file and the replace leaves.
    (team / ".mine.toml.k3j2.tmp").write_text('format = "pinlib.part/1"\nid = "mi', "utf-8")
    lib = load_library([team])
    assert not lib.problems
    assert lib.parts["mine"].pins["sda"].c_in.value == 8e-12  # derived from c_in = "8 pF"
