"""Tests of the SPI timing budget (pinlib.engines.spi): modes, margins, max_clock.

Published and derived check values are marked where they are used; the buses are
built from the invented test parts in tests/data/pushpull.
"""

from __future__ import annotations

import dataclasses
import doctest
import importlib
import inspect
import pkgutil
import re
from pathlib import Path

import numpy as np
import pytest

from pinlib.core.errors import InputError
from pinlib.engines import spi
from pinlib.engines.pushline import EDGE_FRACTION, endpoint
from pinlib.engines.pushpull import evaluate_bus
from pinlib.model.design import load_design

DATA = Path(__file__).parent / "data" / "pushpull"

TRACE = '{ length = "LEN", capacitance = "1 pF/cm", delay = "50 ps/cm", series_resistor = "auto" }'


def write_design(tmp_path, *, mode=0, clock="20 MHz", length="5 cm", controller="pp-ctrl",
                 peripherals=("pp-periph",), extra_devices="", extra_library=None,
                 name="d.toml", signals=("sclk", "copi", "cipo", "cs")):
    devices = [f'{{ ref = "U1", part = "{controller}", role = "controller" }}']
    devices += [f'{{ ref = "U{i + 2}", part = "{p}" }}' for i, p in enumerate(peripherals)]
    if extra_devices:
        devices.append(extra_devices)
    lines = "\n".join(f"lines.{s} = {TRACE.replace('LEN', length)}" for s in signals)
    libs = [DATA.as_posix()] + ([Path(extra_library).as_posix()] if extra_library else [])
    text = f"""format = "pinlib.design/1"
title = "SPI test bus (invented)"
library = [{", ".join(f'"{p}"' for p in libs)}]

[[bus]]
id = "s"
protocol = "spi"
spi_mode = {mode}
clock = "{clock}"
supply = "3.3 V"
devices = [
  {(',' + chr(10) + '  ').join(devices)},
]
{lines}
"""
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    d = load_design(path)
    return d, d.bus("s")


# --------------------------------------------------------------------------- modes


def test_mode_table():
    # published: docs/references.md, SPI [C2]: mode 0 idle low, sample rising, change falling;
    # 1 sample falling, change rising; 2 idle high, sample falling (leading), change
    # rising; 3 sample rising (trailing), change falling
    published = {0: (0, 0, "low", "rise", "fall"), 1: (0, 1, "low", "fall", "rise"),
                 2: (1, 0, "high", "fall", "rise"), 3: (1, 1, "high", "rise", "fall")}
    for n, (cpol, cpha, idle, sample, launch) in published.items():
        m = spi.spi_mode(n)
        assert (m.cpol, m.cpha, m.idle, m.sample_edge, m.launch_edge) == (
            cpol, cpha, idle, sample, launch)
        # the leading edge leaves the idle level; CPHA 0 samples on it, CPHA 1 on the other
        assert m.first_edge == ("rise" if idle == "low" else "fall")
        assert (m.sample_edge == m.first_edge) is (cpha == 0)
    with pytest.raises(InputError, match="SPI mode"):
        spi.spi_mode(4)


@pytest.mark.parametrize("mode", [0, 1, 2, 3])
def test_budget_uses_each_modes_edges(tmp_path, mode):
    # the asymmetric controller pulls SCLK up through 60 Ω and down through 10 Ω, so the
    # two SCLK edges reach the peripheral at clearly different times
    d, bus = write_design(tmp_path, mode=mode, controller="pp-ctrl-asym")
    sa = spi.spi_analysis(bus, d)
    m = spi.SPI_MODES[mode]
    case = sa.lines["sclk"].cases["U1"]
    rx = endpoint(bus.devices[1], "spi-sclk", bus)
    flights = {e: case.flight(rx, e) for e in ("rise", "fall")}
    assert abs(flights["rise"].late - flights["fall"].late) > 0.05e-9
    assert abs(flights["rise"].early - flights["fall"].early) > 0.05e-9
    terms = {t.id: t for t in sa.terms}
    assert terms["copi-setup"].parts["sclk_early"] == flights[m.sample_edge].early
    assert terms["copi-hold"].parts["sclk_late"] == flights[m.sample_edge].late
    assert terms["cipo-setup"].parts["sclk_late"] == flights[m.launch_edge].late
    assert terms["cipo-hold"].parts["sclk_early"] == flights[m.launch_edge].early
    assert terms["cs-setup"].parts["sclk_early"] == flights[m.first_edge].early


# --------------------------------------------------------------------------- margins


def test_published_isolated_loop_example():
    # published: an isolated-SPI application note (docs/references.md, SPI [C2]):
    # T_CLK,min = 2 (tptot + tsu), 160 ns + 5 ns -> about 3 MHz
    assert spi.max_clock([0.5], [160e-9 + 5e-9]) == pytest.approx(3.0e6, abs=0.05e6)
    # the same budget through the CIPO margin: T/2 - (160 ns total loop) >= 5 ns
    period = 1.0 / spi.max_clock([0.5], [165e-9])
    assert spi.cipo_setup_available(period, 0.0, 160e-9, 0.0) == pytest.approx(5e-9,
                                                                             rel=1e-12)


def test_margin_functions_vectorised():
    rng = np.random.default_rng(4)
    p, a, b, c, d = rng.uniform(1e-9, 50e-9, size=(5, 7))
    for fn, args in ((spi.copi_setup_available, (p, a, b, c)),
                     (spi.copi_hold_available, (p, a, b)),
                     (spi.cipo_setup_available, (p, a, b, c, d)),
                     (spi.cipo_hold_available, (p, a, b)),
                     (spi.cs_setup_available, (p, a, b))):
        arr = fn(*args)
        one = [fn(*(x[i] for x in args)) for i in range(7)]
        assert arr == pytest.approx(one, rel=1e-15)
    # derived by hand: T/2 = 20 ns; 20 + 0.5 - 8 - 1.5 = 11 ns
    assert spi.copi_setup_available(40e-9, 0.5e-9, 8e-9, 1.5e-9) == pytest.approx(11e-9)
    k = rng.uniform(0, 30e-9, size=(7, 3))
    many = spi.max_clock(np.full((7, 3), 0.5), k, 1e9)
    assert many == pytest.approx([spi.max_clock([0.5] * 3, row, 1e9) for row in k])


def test_max_clock_limits():
    # a fixed margin that is negative: no clock at all; nothing period-dependent: f_limit
    assert spi.max_clock([0.0, 0.5], [1e-9, 10e-9]) == 0.0
    assert spi.max_clock([0.0], [-1e-9], 50e6) == 50e6
    assert spi.max_clock([0.5], [-1e-9]) == np.inf
    with pytest.raises(InputError):
        spi.max_clock([-0.5], [1e-9])


# --------------------------------------------------------------------------- buses


def _worst_margin(sa, clock):
    period = 1.0 / clock
    out = [float(t.margin(period)) for t in sa.terms]
    out += [EDGE_FRACTION * period - e for _, e in sa.edge_terms]
    return min(out)


def test_max_clock_solves_the_margins(tmp_path):
    d, bus = write_design(tmp_path)
    sa = spi.spi_analysis(bus, d)
    f = sa.max_clock()
    assert 1e6 < f < 500e6  # timing-limited, below the parts' 500 MHz
    assert abs(_worst_margin(sa, f)) < 1e-15
    assert _worst_margin(sa, f * 0.999) > 0 > _worst_margin(sa, f * 1.001)
    res = evaluate_bus(bus, d)
    assert res.figures["max_clock"].value == pytest.approx(f, rel=1e-12)
    assert res.figures["max_clock"].unit == "Hz"


def test_clock_just_below_max_passes_just_above_fails(tmp_path):
    d, bus = write_design(tmp_path, length="12 cm")
    f = spi.spi_analysis(bus, d).max_clock()
    below = evaluate_bus(dataclasses.replace(bus, clock=f * (1 - 1e-6)), d)
    above = evaluate_bus(dataclasses.replace(bus, clock=f * (1 + 1e-6)), d)
    assert below.status != "fail"
    assert above.status == "fail"
    failing = [c for c in above.checks if c.status == "fail"] + [
        c for ln in above.lines for c in ln.checks if c.status == "fail"]
    assert failing  # the binding requirement shows which one


def test_max_clock_falls_with_trace_length(tmp_path):
    d, bus = write_design(tmp_path)
    lengths = np.array([0.01, 0.03, 0.06, 0.1, 0.2, 0.4])
    f = spi.max_clock_vs_length(bus, d, lengths)
    assert np.all(np.diff(f) < 0)
    # a single length agrees with the full evaluation of that design
    d2, bus2 = write_design(tmp_path, length="10 cm", name="d2.toml")
    assert f[3] == pytest.approx(evaluate_bus(bus2, d2).figures["max_clock"].value, rel=1e-9)


def test_max_clock_falls_with_t_valid(tmp_path):
    d, bus = write_design(tmp_path)
    tv = np.linspace(2e-9, 40e-9, 9)
    f = spi.max_clock_vs_t_valid(bus, d, tv, "U2")
    assert np.all(np.diff(f) < 0)
    # against a full evaluation with a part whose t_valid is 20 ns
    lib = tmp_path / "lib"
    lib.mkdir()
    (lib / "slow.toml").write_text('''format = "pinlib.part/1"
id = "pp-periph-slow"
title = "Test peripheral with a slow read-back"
category = "memory"
extends = "pp-periph"
provenance = { basis = "datasheet", source = "test data, invented" }

[timing]
t_valid = "20 ns"
''', encoding="utf-8")
    d2, bus2 = write_design(tmp_path, peripherals=("pp-periph-slow",), extra_library=lib,
                            name="d2.toml")
    full = evaluate_bus(bus2, d2).figures["max_clock"].value
    assert spi.max_clock_vs_t_valid(bus, d, 20e-9, "U2") == pytest.approx(full, rel=1e-12)


def test_isolator_round_trip_counts_twice(tmp_path):
    iso = '{ ref = "U9", part = "pp-isolator" }'
    d0, bus0 = write_design(tmp_path)
    d1, bus1 = write_design(tmp_path, extra_devices=iso, name="iso.toml")
    t0 = {t.id: t for t in spi.spi_analysis(bus0, d0).terms}
    t1 = {t.id: t for t in spi.spi_analysis(bus1, d1).terms}
    # derived: the CIPO loop crosses the 10 ns isolator twice; forward paths cancel
    assert t1["cipo-setup"].b == pytest.approx(t0["cipo-setup"].b - 2 * 10e-9, rel=1e-12)
    assert t1["copi-setup"].b == pytest.approx(t0["copi-setup"].b, rel=1e-12)
    assert t1["cipo-setup"].parts["bridges_round_trip"] == pytest.approx(20e-9)


def test_bus_figures_and_f_max(tmp_path):
    d, bus = write_design(tmp_path, clock="20 MHz")
    res = evaluate_bus(bus, d)
    for name in ("max_clock", "cipo_setup_margin", "copi_setup_margin", "copi_hold_margin"):
        assert name in res.figures
    for name in ("cipo_setup_margin", "copi_setup_margin", "copi_hold_margin"):
        assert res.figures[name].unit == "s"
    # the margin figures are the checks' available minus required time
    setup = res.check("cipo-setup")
    assert res.figures["cipo_setup_margin"].value == pytest.approx(setup.value - setup.limit,
                                                                   rel=1e-12)
    # derived from the peripheral's t_setup (2 ns) and the half period (25 ns)
    copi = res.check("copi-setup")
    assert copi.limit == 2e-9
    assert copi.value == pytest.approx(25e-9 + copi.details["sclk_early"] - 5e-9
                                       - copi.details["copi_late"], rel=1e-12)
    f = res.check("f-max")
    assert f.limit == 500e6 and f.status == "pass"
    fast = evaluate_bus(dataclasses.replace(bus, clock=600e6), d)
    assert any(c.id == "f-max" and c.status == "fail" for c in fast.checks)


def test_unrouted_cipo_skips_the_read_budget(tmp_path):
    d, bus = write_design(tmp_path, signals=("sclk", "copi", "cs"))
    res = evaluate_bus(bus, d)
    assert res.figures["cipo_setup_margin"].value is None
    assert not any(c.id.startswith("cipo") for c in res.checks)
    assert any("cipo_setup_margin" in n for n in res.notes)


# --------------------------------------------------------------------------- API guards

PUBLIC_FUNCTIONS = [getattr(spi, n) for n in spi.__all__ if inspect.isfunction(getattr(spi, n))]


@pytest.mark.parametrize("func", PUBLIC_FUNCTIONS, ids=lambda f: f.__name__)
def test_docstring_parameters_match_signature_and_carry_units(func):
    doc = inspect.getdoc(func)
    section = doc.split("Parameters\n----------\n", 1)[1].split("\n\n", 1)[0]
    documented = re.findall(r"^(\w+) : ", section, flags=re.M)
    assert documented == list(inspect.signature(func).parameters)
    descriptions = re.split(r"^\w+ : .*$", section, flags=re.M)[1:]
    assert all(re.search(r"\[[^\]]+\]\s*$", d.strip()) for d in descriptions)


def test_docstring_examples():
    # the examples sit in the package's modules
    modules = [spi] + [importlib.import_module(f"{spi.__name__}.{m.name}")
                       for m in pkgutil.iter_modules(spi.__path__)]
    results = [doctest.testmod(m, optionflags=doctest.NORMALIZE_WHITESPACE) for m in modules]
    assert sum(r.attempted for r in results) > 0
    assert sum(r.failed for r in results) == 0


# ---------------------------------------------------------------- issue 13, item 5
# An invented team part (demo data) that extends the built-in ADC class and states only
# its own f_max, under its own provenance.
TEAM_ADC = """\
format = "pinlib.part/1"
id = "adc-acme"
title = "Invented ADC (demo data)"
category = "converter"
extends = "adc-spi"
provenance = { basis = "datasheet", source = "datasheet rev B" }

[timing]
f_max = "20 MHz"
"""

TEAM_DESIGN = """\
format = "pinlib.design/1"
title = "timing provenance (invented)"

[[bus]]
id = "s"
protocol = "spi"
clock = "10 MHz"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller" },
  { ref = "U7", part = "adc-acme" },
]
lines.sclk = { length = "3 cm", capacitance = "1 pF/cm" }
lines.copi = { length = "3 cm", capacitance = "1 pF/cm" }
lines.cipo = { length = "3 cm", capacitance = "1 pF/cm" }
"""


def test_timing_sources_name_the_class_an_inherited_value_came_from(tmp_path, monkeypatch):
    # 13.5: t_setup and t_hold of adc-acme are adc-spi's (inherited), named with
    # adc-spi's own source; its own f_max keeps its own provenance
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    (tmp_path / "adc-acme.toml").write_text(TEAM_ADC, encoding="utf-8")
    (tmp_path / "d.toml").write_text(TEAM_DESIGN, encoding="utf-8")
    design = load_design(tmp_path / "d.toml", library_folders=[tmp_path])
    res = evaluate_bus(design.bus("s"), design)
    source = {(c.id, c.subject): c.source for c in res.checks}
    # the class file's text: pinlib/devices/converter/adc-spi.toml, [timing]
    assert source[("copi-setup", "U7")] == \
        "adc-spi t_setup: typical of the class (common practice)"
    assert source[("copi-hold", "U7")] == \
        "adc-spi t_hold: typical of the class (common practice)"
    assert source[("f-max", "U7")] == "adc-acme f_max: datasheet rev B"
    sa = spi.spi_analysis(design.bus("s"), design)
    (u7,) = sa.peripherals
    assert u7.sources["t_valid"].startswith("adc-spi t_valid: ")
    assert not any("rev B" in s for n, s in u7.sources.items() if n != "f_max")


CLASS_WITH_BASIS_ONLY = """\
format = "pinlib.part/1"
id = "t-adc-class"
title = "Invented ADC class (test data)"
category = "converter"
extends = "adc-spi"
provenance = { basis = "generic", source = "class notes (invented)" }

[pins.sclk]
abs_max = { value = "VDD + 0.5 V", basis = "generic" }
"""

TEAM_OF_CLASS = """\
format = "pinlib.part/1"
id = "t-adc-team"
title = "Invented ADC (test data)"
category = "converter"
extends = "t-adc-class"
provenance = { basis = "datasheet", source = "datasheet rev B" }
"""


def test_a_pin_value_inherited_with_a_basis_only_never_takes_the_placed_parts_source(
        tmp_path, monkeypatch):
    # 13.5: the sclk abs_max comes from t-adc-class (basis only); the overshoot check's
    # source names that class, not the placed part's "datasheet rev B"
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    (tmp_path / "t-adc-class.toml").write_text(CLASS_WITH_BASIS_ONLY, encoding="utf-8")
    (tmp_path / "t-adc-team.toml").write_text(TEAM_OF_CLASS, encoding="utf-8")
    (tmp_path / "d.toml").write_text(TEAM_DESIGN.replace("adc-acme", "t-adc-team"),
                                     encoding="utf-8")
    design = load_design(tmp_path / "d.toml", library_folders=[tmp_path])
    res = evaluate_bus(design.bus("s"), design)
    sclk = next(ln for ln in res.lines if ln.signal == "sclk")
    sources = [c.source for c in sclk.checks if c.id == "overshoot" and c.subject == "U7"]
    assert sources and all("t-adc-class" in s and "rev B" not in s for s in sources), sources


def test_a_timing_value_the_part_lacks_is_cited_as_lacking(tmp_path):
    # the controller's file states no t_setup/t_hold; the CIPO checks take them as 0 and
    # must not cite the file's provenance as if it had stated them
    text = (DATA / "pp-ctrl.toml").read_text(encoding="utf-8")
    text = text.replace('id = "pp-ctrl"', 'id = "t-ctrl-untimed"')
    text = re.sub(r'^t_(setup|hold) = .*\n', "", text, flags=re.MULTILINE)
    (tmp_path / "t-ctrl-untimed.toml").write_text(text, encoding="utf-8")
    d, bus = write_design(tmp_path, controller="t-ctrl-untimed", extra_library=tmp_path)
    res = evaluate_bus(bus, d)
    source = {c.id: c.source for c in res.checks if c.subject == "U2"}
    assert source["cipo-setup"] == "t-ctrl-untimed records no t_setup: taken as 0"
    assert source["cipo-hold"] == "t-ctrl-untimed records no t_hold: taken as 0"
    assert "test data, invented" not in source["cipo-setup"]
    # a stated value still names its file's provenance
    assert source["copi-setup"].startswith("pp-periph t_setup: ")


# ------------------------------------------------------------------ first bit at CS

_FIRST_BIT_PART = """format = "pinlib.part/1"
id = "pp-periph-cs-out"
title = "Test peripheral that drives its first CIPO bit when CS asserts (invented)"
extends = "pp-periph"
provenance = { basis = "datasheet", source = "test data, invented" }

[timing]
t_cs_valid = { value = "T_EN", source = "invented for testing" }
"""


def _first_bit_design(tmp_path, t_en="25 ns", **kw):
    lib = tmp_path / "lib"
    lib.mkdir(exist_ok=True)
    (lib / "pp-periph-cs-out.toml").write_text(_FIRST_BIT_PART.replace("T_EN", t_en),
                                               encoding="utf-8")
    return write_design(tmp_path, peripherals=("pp-periph-cs-out",), extra_library=lib, **kw)


@pytest.mark.parametrize("mode", [0, 1, 2, 3])
def test_the_first_cipo_bit_after_cs_is_budgeted_in_cpha_0(tmp_path, mode):
    # Once not budgeted at all: in CPHA 0 a peripheral that drives its first bit when CS
    # asserts has it sampled on the first edge, the controller's CS lead after CS leaves
    # it (half a period for pp-ctrl, which records no t_cs_setup). derived: lead -
    # (CS flight + t_cs_valid + CIPO flight) >= the controller's t_setup
    d, bus = _first_bit_design(tmp_path, mode=mode, clock="5 MHz")
    sa = spi.spi_analysis(bus, d)
    terms = {t.id: t for t in sa.terms}
    if spi.SPI_MODES[mode].cpha == 1:  # the first bit follows the first edge
        assert "cipo-first-bit" not in terms
        return
    t = terms["cipo-first-bit"]
    p = sa.peripherals[0]
    assert (t.a, t.subject, t.required) == (0.5, "U2", pytest.approx(3e-9))  # pp-ctrl t_setup
    assert t.b == pytest.approx(-(p.cs["fall"].late + 25e-9 + p.cipo.late), rel=1e-12)
    assert p.cs["fall"].late > 0 and p.cipo.late > 0
    res = evaluate_bus(bus, d)
    chk = next(c for c in res.checks if c.id == "cipo-first-bit")
    period = 1 / 5e6
    assert chk.value == pytest.approx(period / 2 + t.b, rel=1e-12)
    assert chk.limit == pytest.approx(3e-9) and chk.status == "pass"
    assert "pp-periph-cs-out t_cs_valid" not in chk.source  # the requirement is t_setup's
    assert "pp-ctrl t_setup" in chk.source
    assert "first CIPO bit" in chk.message


def test_a_slow_first_bit_sets_the_highest_clock(tmp_path):
    # derived: with t_cs_valid 60 ns the first bit needs T/2 >= CS flight + 60 ns + CIPO
    # flight + 3 ns, a lower clock than any other term allows
    d, bus = _first_bit_design(tmp_path, t_en="60 ns", clock="5 MHz")
    sa = spi.spi_analysis(bus, d)
    t = next(t for t in sa.terms if t.id == "cipo-first-bit")
    res = evaluate_bus(bus, d)
    assert res.figures["max_clock_limited_by"].value == "cipo-first-bit U2"
    assert res.figures["max_clock"].value == pytest.approx(1 / (2 * (t.required - t.b)),
                                                           rel=1e-9)
    # the figure keeps the term, and its note says it rests on the assumed CS lead
    # (pp-ctrl records no t_cs_setup)
    assert any("set by CIPO first bit U2, which rests on the CS lead assumed for U1"
               in n for n in res.notes)
    # a clock above it is short of the controller's t_setup: on the assumed lead a
    # warning (tests/test_spi_cs_lead.py has it fail on a stated lead); the budget
    # chart draws the path and adds up
    d2, bus2 = _first_bit_design(tmp_path, t_en="60 ns", clock="10 MHz", name="fast.toml")
    chk = next(c for c in evaluate_bus(bus2, d2).checks if c.id == "cipo-first-bit")
    assert chk.status == "warn" and chk.margin < 0
    from pinlib.present.plotdata import timing_budget_data
    data = timing_budget_data(bus2, d2)
    assert "cipo-first-bit U2" in data.available


def test_a_bridge_delays_the_first_bit_both_ways(tmp_path):
    iso = '{ ref = "U9", part = "pp-isolator" }'
    d0, bus0 = _first_bit_design(tmp_path)
    d1, bus1 = _first_bit_design(tmp_path, extra_devices=iso, name="iso.toml")
    b0 = next(t for t in spi.spi_analysis(bus0, d0).terms if t.id == "cipo-first-bit").b
    b1 = next(t for t in spi.spi_analysis(bus1, d1).terms if t.id == "cipo-first-bit").b
    # derived: CS crosses the 10 ns isolator out, the first bit back
    assert b1 == pytest.approx(b0 - 2 * 10e-9, rel=1e-12)


def test_a_cpha_0_peripheral_without_t_cs_valid_is_noted(tmp_path):
    d, bus = write_design(tmp_path, mode=0)
    res = evaluate_bus(bus, d)
    assert not any(c.id == "cipo-first-bit" for c in res.checks)
    assert any("records no t_cs_valid" in n and "not budgeted" in n for n in res.notes)
    d3, bus3 = write_design(tmp_path, mode=3, name="m3.toml")
    assert not any("t_cs_valid" in n for n in evaluate_bus(bus3, d3).notes)


# ------------------------------------------------------- requirements of zero: slack in s


def _ctrl_with(tmp_path, part_id: str, setup_hold: str) -> None:
    """pp-ctrl (invented test data) as ``part_id`` with its t_setup/t_hold lines replaced
    by ``setup_hold`` (TOML lines; "" to record none)."""
    text = (DATA / "pp-ctrl.toml").read_text(encoding="utf-8")
    text = text.replace('id = "pp-ctrl"', f'id = "{part_id}"')
    text = re.sub(r'^t_(setup|hold) = .*\n', "", text, flags=re.MULTILINE)
    text = text.replace('t_valid = "5 ns"\n', 't_valid = "5 ns"\n' + setup_hold)
    (tmp_path / f"{part_id}.toml").write_text(text, encoding="utf-8")


def test_a_requirement_of_zero_shows_its_slack_in_seconds(tmp_path):
    # the controller records no t_setup/t_hold (taken as 0): a margin relative to 0
    # means nothing, so the margin is the slack in seconds, shown in the unit
    from pinlib.core.quantity import format_si
    from pinlib.model.result import margin_text

    _ctrl_with(tmp_path, "t-ctrl-untimed", "")
    d, bus = write_design(tmp_path, controller="t-ctrl-untimed", extra_library=tmp_path)
    res = evaluate_bus(bus, d)
    for cid in ("cipo-setup", "cipo-hold"):
        c = next(c for c in res.checks if c.id == cid)
        assert c.limit == 0.0 and c.value > 0
        assert c.margin_unit == "s"
        assert c.margin == c.value   # derived: slack = available - 0
        assert c.status == "pass"
        assert margin_text(c) == "+" + format_si(c.value, "s")  # not "—"
        assert c.to_json()["margin_unit"] == "s"
    # a requirement the part records keeps its relative margin
    c = next(c for c in res.checks if c.id == "copi-setup")
    assert c.margin_unit is None and "margin_unit" not in c.to_json()
    assert c.margin == pytest.approx((c.value - c.limit) / c.limit, rel=1e-12)


def test_negative_slack_fails_a_recorded_zero_and_warns_an_unrecorded_one(tmp_path):
    # at 80 MHz the CIPO round trip of the test parts (invented test data) overruns
    # half the period: the slack is negative.  A t_setup the part records as 0 ns is a
    # datasheet limit and fails; one it does not record has no published limit behind
    # the 0 taken for it, so it warns (a check fails only against a published limit)
    _ctrl_with(tmp_path, "t-ctrl-untimed", "")
    _ctrl_with(tmp_path, "t-ctrl-zero", 't_setup = "0 ns"\nt_hold = "0 ns"\n')
    got = {}
    for part in ("t-ctrl-untimed", "t-ctrl-zero"):
        d, bus = write_design(tmp_path, controller=part, extra_library=tmp_path,
                              clock="80 MHz", name=f"{part}-d.toml")
        got[part] = next(c for c in evaluate_bus(bus, d).checks if c.id == "cipo-setup")
    for c in got.values():
        assert c.value < 0 and c.margin == c.value and c.margin_unit == "s"
    assert got["t-ctrl-zero"].status == "fail"
    assert got["t-ctrl-untimed"].status == "warn"
    assert "not a failure" in got["t-ctrl-untimed"].message
    assert "t_setup" in got["t-ctrl-untimed"].advice


def test_a_cs_line_shared_by_several_peripherals_says_what_it_stands_for(tmp_path):
    # one CS description for two peripherals is solved as one net loading both CS pins;
    # on most boards each has its own chip select, so the note says the lines are lighter
    d, bus = write_design(tmp_path, peripherals=("pp-periph", "pp-periph"))
    notes = [n for n in evaluate_bus(bus, d).notes if n.startswith("cs: solved as one net")]
    assert len(notes) == 1 and "CS pins of U2 and U3 together" in notes[0]
    assert "faster" in notes[0] and "GPIO bus of its own" in notes[0]
    # ... and that way works: a GPIO bus of the controller's and U2's cs pins (invented)
    gpio = (tmp_path / "d.toml").read_text(encoding="utf-8") + """
[[bus]]
id = "cs-u2"
protocol = "gpio"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "pp-ctrl", role = "controller", pin = "cs" },
  { ref = "U2", part = "pp-periph", pin = "cs" },
]
lines.cs_u2 = { length = "5 cm", capacitance = "1 pF/cm", delay = "50 ps/cm" }
"""
    (tmp_path / "gpio.toml").write_text(gpio, encoding="utf-8")
    dg = load_design(tmp_path / "gpio.toml")
    own = evaluate_bus(dg.bus("cs-u2"), dg)
    shared = next(x for x in evaluate_bus(dg.bus("s"), dg).lines if x.signal == "cs")
    # one CS pin on the line, not two: the lighter load
    assert own.lines[0].figures["load_capacitance"].value < \
        shared.figures["load_capacitance"].value
    d1, bus1 = write_design(tmp_path, name="one.toml")
    assert not any(n.startswith("cs: solved") for n in evaluate_bus(bus1, d1).notes)
    # a route drawn for cs is the one net the user drew: no note
    route = (Path(__file__).parent / "data" / "spi-route.toml").read_text(encoding="utf-8")
    drawn = route.replace(
        'lines.cs = { length = "5 cm", capacitance = "1 pF/cm", delay = "60 ps/cm" }',
        'lines.cs = { route = [\n'
        '  { from = "U1", to = "U2", length = "2 cm", geometry = "outer-0p2" },\n'
        '  { from = "U2", to = "U3", length = "3 cm", geometry = "outer-0p2" },\n'
        '  { from = "U3", to = "U4", length = "3 cm", geometry = "outer-0p2" },\n] }')
    assert drawn != route
    (tmp_path / "route.toml").write_text(drawn, encoding="utf-8")
    dr = load_design(tmp_path / "route.toml")
    res = evaluate_bus(dr.buses[0], dr)
    assert not any(n.startswith("cs: solved") for n in res.notes)
    plain = load_design(Path(__file__).parent / "data" / "spi-route.toml")
    assert any("U2, U3 and U4 together" in n for n in evaluate_bus(plain.buses[0], plain).notes)
