"""pinlib's driver model fitted to an IBIS output model: per corner, from the waveforms or
the ramp; edges at standard loads; the part's slow and fast corners; test_load.

The IBIS files are written here from a known, invented model: at each corner a Thevenin
source ramping linearly behind a known resistance into each fixture, integrated by the
test itself (trapezoidal rule, below), so the fit must give back the model.
"""

from __future__ import annotations

import functools
import json
from pathlib import Path

import numpy as np
import pytest
from test_ibis import ibis_text

from pinlib.cli import main
from pinlib.engines.ibisdriver import STANDARD_LOADS, fit_edges, output_corners
from pinlib.engines.pushline import Endpoint, analyse_line
from pinlib.library import load_library
from pinlib.library.ibis import parse_ibis
from pinlib.model.design import Device, Line, Section
from pinlib.physics import driver as drv
from pinlib.physics import rc

DATA = Path(__file__).parent / "data" / "pushpull"

# invented model, one row per IBIS column: supply, C_comp (as ibis_text writes them),
# r_out of the rising and falling edge (the pull-up and pull-down tables of ibis_text:
# 40 and 25 ohm typ, 1.2x at min, 0.8x at max) and the source ramps, 0-100 %
MODEL = {
    "typ": dict(vdd=3.3, c_comp=3.0e-12, r_rise=40.0, r_fall=25.0, t_rise=1.0e-9, t_fall=0.8e-9),
    "min": dict(vdd=3.0, c_comp=2.5e-12, r_rise=48.0, r_fall=30.0, t_rise=1.5e-9, t_fall=1.2e-9),
    "max": dict(vdd=3.6, c_comp=3.5e-12, r_rise=32.0, r_fall=20.0, t_rise=0.6e-9, t_fall=0.5e-9),
}
COLUMNS = ("typ", "min", "max")
# the fixtures of each edge: R_fixture, V_fixture, C_fixture (invented, the usual pair)
FIXTURES = ((50.0, 0.0, 5e-12), (50.0, 3.3, 0.0))
T_START, T_END, STEP, EVERY = 0.5e-9, 10e-9, 0.25e-12, 200   # a row every 50 ps
C_PIN = 0.4e-12   # ibis_text: C_pin of pin 1 (SDA)
# derived: the data carry 7 digits and the trapezoidal rule at 0.25 ps against the
# smallest pole (2.5 pF x 20 || 50 ohm = 36 ps) errs by about (h/tau)^2/12 ~ 4e-6 of the
# swing; the fit gives the model back to 1e-3 (relative)
REL = 1e-3


def integrate(edge, rf, vf, cf, *, bump=0.0):
    """The pin voltage of each column's model into one fixture: rows 't typ min max'.

    ``bump`` adds a known disturbance (volts, a sine over the record) to spoil the fit.
    """
    t, v = _integrated(edge, rf, vf, cf)
    shown = v + bump * np.sin(2 * np.pi * t / T_END)[:, None]
    return "\n".join(f"{tk:.7e} " + " ".join(f"{x:.7e}" for x in row)
                     for tk, row in zip(t, shown, strict=True))


@functools.cache
def _integrated(edge, rf, vf, cf):
    """Times and the pin voltage of each column (rows), every EVERY steps.

    C dv/dt = (Vs(t) - v) / r + (vf - v) / rf, with Vs ramping from one rail to the
    other from T_START; the pin starts settled with the other half of the output on.
    """
    p = {k: np.array([MODEL[c][k] for c in COLUMNS]) for k in MODEL["typ"]}
    r = p["r_rise"] if edge == "rise" else p["r_fall"]
    r_other = p["r_fall"] if edge == "rise" else p["r_rise"]
    t_ramp = p["t_rise"] if edge == "rise" else p["t_fall"]
    v_from, v_to = (0.0 * p["vdd"], p["vdd"]) if edge == "rise" else (p["vdd"], 0.0 * p["vdd"])
    c = cf + p["c_comp"]
    v = (v_from / r_other + vf / rf) / (1 / r_other + 1 / rf)
    b = (1 / r + 1 / rf) / c
    n = int(round(T_END / STEP))
    times, rows = [], []

    def drive(t):
        s = np.clip((t - T_START) / t_ramp, 0.0, 1.0)
        return (v_from + (v_to - v_from) * s) / r / c + vf / rf / c

    for k in range(n + 1):
        t = k * STEP
        if k % EVERY == 0:
            times.append(t)
            rows.append(v.copy())
        if t < T_START:
            continue
        a0, a1 = drive(t), drive(t + STEP)
        v = (v * (1 - STEP * b / 2) + STEP / 2 * (a0 + a1)) / (1 + STEP * b / 2)
    return np.array(times), np.array(rows)


def waveforms(*, bump=0.0):
    out = []
    for edge, key in (("rise", "Rising"), ("fall", "Falling")):
        for rf, vf, cf in FIXTURES:
            out.append(f"[{key} Waveform]\nR_fixture = {rf:g}\nV_fixture = {vf:g}\n"
                       f"C_fixture = {cf * 1e12:g}p\n" + integrate(edge, rf, vf, cf, bump=bump))
    return "\n".join(out) + "\n"


@pytest.fixture(scope="module")
def waves_text():
    return waveforms()


def model_of(text):
    f = parse_ibis(ibis_text(edges=text, cref="15pF"), "invented.ibs")
    return f, f.models["io33"]


def test_fit_recovers_the_model_at_every_corner(waves_text):
    f, model = model_of(waves_text)
    for corner in COLUMNS:
        got = fit_edges(f, model, corner)
        want = MODEL[corner]
        # derived: the invented model above
        assert got["rise"].r_out == pytest.approx(want["r_rise"], rel=REL)
        assert got["fall"].r_out == pytest.approx(want["r_fall"], rel=REL)
        assert got["rise"].t_ramp == pytest.approx(want["t_rise"], rel=REL)
        assert got["fall"].t_ramp == pytest.approx(want["t_fall"], rel=REL)
        for fit in got.values():
            assert fit.rms / fit.swing < 1e-4 and not fit.poor
            assert "2 [" in fit.what


def test_edges_at_the_standard_loads_come_from_the_fitted_model(waves_text):
    f, model = model_of(waves_text)
    pin = f.components["DEMO-IO"].pins[0]
    got = output_corners(f, pin, model, C_PIN)
    for side, corner in (("slow", "min"), ("fast", "max")):
        rows = getattr(got, side).rows
        m = MODEL[corner]
        for row, load in zip(rows, STANDARD_LOADS, strict=True):
            # derived: the model's 10-90 % edge (ramp through one pole) into the load
            # plus the output's own C_comp and C_pin
            c = load + m["c_comp"] + C_PIN
            assert row["rise"] == pytest.approx(float(drv.edge_time(m["r_rise"], m["t_rise"], c)),
                                                rel=REL)
            assert row["fall"] == pytest.approx(float(drv.edge_time(m["r_fall"], m["t_fall"], c)),
                                                rel=REL)
    assert got.warnings == ()
    assert "RMS residual" in got.slow.sources["rise"] and "(min)" in got.slow.sources["rise"]


def test_a_fit_that_misses_the_waveforms_warns():
    # derived: a 0.4 V sine over the record is an RMS of 0.28 V, 8.6 % of 3.3 V, which
    # the model cannot follow: more than the 5 % bound (common practice, no source)
    f, model = model_of(waveforms(bump=0.4))
    got = output_corners(f, f.components["DEMO-IO"].pins[0], model, C_PIN)
    assert got.warnings and "more than 5%" in got.warnings[0]


def test_the_ramp_gives_r_out_and_t_ramp_without_waveforms():
    lines = []
    for edge in ("r", "f"):
        cols = []
        for corner in COLUMNS:
            m = MODEL[corner]
            r = m["r_rise"] if edge == "r" else m["r_fall"]
            t = m["t_rise"] if edge == "r" else m["t_fall"]
            # derived: 20-80 % of the swing on 50 ohm, through the pole of C_comp
            # and r_out || 50 ohm (pinlib.physics.rc, the ramp through one pole)
            dv = 0.6 * m["vdd"] * 50.0 / (r + 50.0)
            dt = float(rc.ramp_rc_edge_time(t, m["c_comp"] * r * 50.0 / (r + 50.0), 0.2, 0.8))
            cols.append(f"{dv:.9e}/{dt:.9e}")
        lines.append(f"dV/dt_{edge} " + " ".join(cols))
    f, model = model_of("[Ramp]\n" + "\n".join(lines) + "\nR_load = 50\n")
    for corner in COLUMNS:
        got = fit_edges(f, model, corner)
        m = MODEL[corner]
        assert got["rise"].r_out == pytest.approx(m["r_rise"], rel=1e-6)
        assert got["fall"].t_ramp == pytest.approx(m["t_fall"], rel=1e-5)
        assert got["rise"].rms is None and "exact" in got["rise"].note()


def _import(tmp_path, capsys, waves_text):
    ibs = tmp_path / "invented.ibs"
    ibs.write_text(ibis_text(edges=waves_text, cref="15pF"))
    parts = tmp_path / "parts"
    code = main(["parts", "import", str(ibs), "--component", "DEMO-IO", "--pin", "SDA=spi-sclk",
                 "--id", "demo-out", "--into", str(parts), "--category", "controller"])
    out = capsys.readouterr()
    assert code == 0, out.err
    return parts


def test_import_writes_the_slow_and_fast_corners_and_test_load(tmp_path, capsys, waves_text):
    parts = _import(tmp_path, capsys, waves_text)
    part = load_library([parts], builtin=False, env=False).get("demo-out")
    pin = part.pins["sclk"]
    assert pin.r_out is None  # the fitted edges describe the driver
    assert [float(e.load.value) for e in pin.edges] == list(STANDARD_LOADS)
    assert [float(e.load.value) for e in pin.fast.edges] == list(STANDARD_LOADS)
    rise = pin.edges[0].rise
    assert rise.basis == "ibis" and "derived:" in rise.source and "slow corner (min)" in rise.source
    assert pin.fast.edges[0].rise.value < rise.value
    # published-style Cref of the invented file: 15 pF
    assert float(part.timing.test_load.value) == pytest.approx(15e-12, rel=1e-9)
    assert "Rref 50 Ω" in part.timing.test_load.source
    code = main(["parts", "show", "demo-out", "--library", str(parts)])
    shown = capsys.readouterr().out
    assert code == 0 and "ibis" in shown


def _line(lib, part, length=0.15):
    ctrl = Device("U1", part, lib.parts[part], "controller", None)
    rx = Device("U2", "pp-periph", lib.parts["pp-periph"], "peripheral", None)
    d = Endpoint(ctrl, "sclk", ctrl.part.pins["sclk"], 3.3)
    r = Endpoint(rx, "sclk", rx.part.pins["sclk"], 3.3)
    line = Line("sclk", (Section(length, None, 1e-10, 5e-9),), "none", 0.0)
    return analyse_line("sclk", line, [d], [d, r], [r], clock=20e6, clock_line=True)


def test_imported_corners_on_a_test_line(tmp_path, capsys, waves_text):
    parts = _import(tmp_path, capsys, waves_text)
    text = (parts / "demo-out.toml").read_text()
    head, fast = text.split("[pins.sclk.fast]\n")
    fast_edges, timing = fast.split("\n\n[timing]")
    # the same part at one corner each: the slow corner only, and the fast one as its edges
    slow_only = head.replace('id = "demo-out"', 'id = "slow-only"') + "[timing]" + timing
    start = head.index("edges = [")
    end = head.index("]\n", start) + 2
    fast_only = (head[:start] + fast_edges.strip() + "\n" + head[end:]).replace(
        'id = "demo-out"', 'id = "fast-only"') + "\n[timing]" + timing
    (parts / "slow-only.toml").write_text(slow_only)
    (parts / "fast-only.toml").write_text(fast_only)
    lib = load_library([DATA, parts], builtin=False, env=False)
    both, slow, quick = (_line(lib, p) for p in ("demo-out", "slow-only", "fast-only"))
    fb, fs, fq = (a.result.figures for a in (both, slow, quick))
    # derived from the invented model: the max corner (32/20 ohm, 0.6/0.5 ns) drives the
    # 50 ohm line harder than the min corner (48/30 ohm, 1.5/1.2 ns): more overshoot,
    # shorter edges
    assert fq["overshoot"].value > fs["overshoot"].value
    assert fb["overshoot"].value == pytest.approx(fq["overshoot"].value, rel=1e-12)
    assert fb["edge_rise_time"].value == pytest.approx(fs["edge_rise_time"].value, rel=1e-12)
    assert fb["edge_rise_time"].value > fq["edge_rise_time"].value
    late = {k: a.cases["U1"].flight(a.receivers[0], "rise").late
            for k, a in (("both", both), ("slow", slow), ("fast", quick))}
    assert late["both"] == pytest.approx(late["slow"], rel=1e-12)
    assert late["both"] > late["fast"]
    checks = json.dumps([c.message for c in both.result.checks])
    assert "(fast corner)" in checks and "(slow corner)" in checks


SPI_PINS = ("[Pin]  signal_name  model_name\n"
            "1      SPI_SCK      io33\n"
            "2      MOSI         io33\n"
            "3      nCS          io33\n"
            "4      MISO         io33\n"
            "5      VDD          POWER\n")

SPI_DESIGN = """format = "pinlib.design/1"
title = "imported controller on a test line (invented)"
library = ["{data}", "{parts}"]

[[bus]]
id = "s"
protocol = "spi"
clock = "20 MHz"
supply = "3.3 V"
devices = [
  {{ ref = "U1", part = "demo-spi", role = "controller" }},
  {{ ref = "U2", part = "pp-periph" }},
]
lines.sclk = {{ length = "15 cm", capacitance = "1 pF/cm", delay = "50 ps/cm" }}
lines.copi = {{ length = "15 cm", capacitance = "1 pF/cm", delay = "50 ps/cm" }}
lines.cipo = {{ length = "15 cm", capacitance = "1 pF/cm", delay = "50 ps/cm" }}
"""


@pytest.mark.parametrize("study", [[], ["--corners"]])
def test_an_imported_spi_controller_is_checked_in_a_design(tmp_path, capsys, waves_text, study):
    ibs = tmp_path / "invented.ibs"
    ibs.write_text(ibis_text(pins=SPI_PINS, edges=waves_text, cref="15pF"))
    parts = tmp_path / "parts"
    assert main(["parts", "import", str(ibs), "--component", "DEMO-IO", "--id", "demo-spi",
                 "--into", str(parts), "--category", "controller", "--yes"]) == 0
    design = tmp_path / "d.toml"
    design.write_text(SPI_DESIGN.format(data=DATA.as_posix(), parts=parts.as_posix()))
    capsys.readouterr()
    code = main(["check", str(design), "--json", *study])
    out = capsys.readouterr().out
    assert code in (0, 1), out
    result = json.loads(out)
    sclk = next(ln for ln in result["buses"][0]["lines"] if ln["signal"] == "sclk")
    messages = " ".join(c["message"] for c in sclk["checks"])
    assert "(fast corner)" in messages and "(slow corner)" in messages
