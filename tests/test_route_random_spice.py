"""Routed SPI lines drawn at random, through the whole engine, against ngspice.

``test_tree_spice.py`` holds the solver to ngspice over a hand-made case set (50 Ω
lines, two device capacitances); ``test_route_spice.py`` one design's daisy chain
through the engine.  Here a seeded generator draws designs as a person might write
them: one to three peripherals of the built-in library on an SPI bus, each of SCLK, COPI
and CIPO a daisy chain, a trunk with stubs or a star, each stretch a trace of the board's
geometry or given per length, from 5 mm to 25 cm; a series resistor of none, "auto" or
a value.  The engine analyses every line (its grid, its lumping of short stretches, its
series resistor, the driver model it fits); the test then builds the same circuit as a
netlist (the driver's ramp behind its resistance plus the series resistor, lossless
``T`` elements, each pin's capacitance at its point) and asks ngspice for every
receiver's rise and fall, each driver of CIPO in turn.  Each edge must agree within
1 % (10-90 %) and its overshoot or undershoot within 0.02 VDD: issue 16's bounds.

The draws are invented test data, not boards.  An exploratory run of 48 such designs
(lengths 1 mm to 40 cm) found the worst edge 0.077 % from ngspice's.
"""

from __future__ import annotations

import math
import random

import numpy as np
import pytest
from spice import have_ngspice, run_waveform

from pinlib.engines.dispatch import check_design
from pinlib.engines.pushline.routes import node_caps
from pinlib.model.design import load_design
from pinlib.physics import waveform as wf

pytestmark = [pytest.mark.spice,
              pytest.mark.skipif(not have_ngspice(), reason="ngspice not on PATH")]

SEED = 20261205  # invented: any seed draws a valid set
DESIGNS = 10
EDGE_REL = 0.01  # each receiver's 10-90 % edge against ngspice (issue 16's bound)
PEAK_VDD = 0.02  # overshoot and undershoot against ngspice, in VDD (issue 16's bound)
PERIPHERALS = ("nor-flash-spi", "adc-spi", "display-controller-spi",
               "network-controller-spi")
CONTROLLERS = ("mcu-3v3", "fpga-io-3v3")


def _stretch(rng: random.Random, a: str, b: str) -> str:
    mm = math.exp(rng.uniform(math.log(5.0), math.log(250.0)))
    if rng.random() < 0.5:
        return f'{{ from = "{a}", to = "{b}", length = "{mm:.3g} mm", geometry = "g" }}'
    return (f'{{ from = "{a}", to = "{b}", length = "{mm:.3g} mm", capacitance = '
            f'"{rng.uniform(0.6, 2.0):.3g} pF/cm", delay = "{rng.uniform(50, 80):.3g} ps/cm" }}')


def _route(rng: random.Random, refs: list[str]) -> tuple[str, list[str]]:
    shape = rng.choice(("daisy", "stubs", "star"))
    if shape == "star":
        return shape, [_stretch(rng, refs[0], "S")] + [_stretch(rng, "S", r)
                                                        for r in refs[1:]]
    out, prev = [], refs[0]
    for i, r in enumerate(refs[1:]):
        if shape == "stubs":  # a junction on the trunk, the device on a stub off it
            out += [_stretch(rng, prev, f"T{i}"), _stretch(rng, f"T{i}", r)]
            prev = f"T{i}"
        else:
            out.append(_stretch(rng, prev, r))
            prev = r
    return shape, out


def drawn_design(rng: random.Random) -> str:
    """One design's text (invented)."""
    refs = ["U1"] + [f"U{i + 2}" for i in range(rng.randint(1, 3))]
    devices = [f'  {{ ref = "U1", part = "{rng.choice(CONTROLLERS)}", role = "controller" }},']
    devices += [f'  {{ ref = "{r}", part = "{rng.choice(PERIPHERALS)}" }},' for r in refs[1:]]
    rs = rng.choice(('"none"', '"auto"', '"22 Ω"', '"47 Ω"'))
    lines = []
    for signal in ("sclk", "copi", "cipo"):
        shape, stretches = _route(rng, refs)
        r = rng.choice(('"none"', '"auto"')) if signal == "cipo" else rs
        lines.append(f"# {shape}\nlines.{signal} = {{ series_resistor = {r}, route = [\n  "
                     + ",\n  ".join(stretches) + "\n] }")
    return "\n".join([
        'format = "pinlib.design/1"',
        'title = "an SPI bus drawn at random (invented test data)"',
        "[board.geometry.g]",
        'kind = "microstrip"',
        f'width = "{rng.uniform(0.1, 0.4):.3g} mm"',
        f'height = "{rng.uniform(0.1, 0.3):.3g} mm"',
        "er = 4.2",
        "[[bus]]",
        'id = "b"',
        'protocol = "spi"',
        'clock = "5 MHz"',
        'supply = "3.3 V"',
        "devices = [", *devices, "]",
        *lines,
        'lines.cs = { length = "5 cm", capacitance = "1 pF/cm", delay = "60 ps/cm" }',
        ""])


def _drawn() -> list[str]:
    rng = random.Random(SEED)
    return [drawn_design(rng) for _ in range(DESIGNS)]


def _deck(case, caps, model, edge: str) -> tuple[str, float, list[str]]:
    """The driver's edge through the line as a netlist; the receivers' nodes."""
    net, vdd = case.net, case.v_high
    stop = float(getattr(case, edge).t[-1])
    ramp = model.t_ramp_rise if edge == "rise" else model.t_ramp_fall
    r = (model.r_rise if edge == "rise" else model.r_fall) + case.rs
    v0, v1 = (0.0, vdd) if edge == "rise" else (vdd, 0.0)  # a fall starts settled high
    shortest = min([s.td for _, _, s in net.sections if s.td > 0] + [ramp])
    # ngspice's step: 20 on the shortest delay or ramp, 1-5 ps (edges here are 0.5 ns and
    # more; test_tree_spice.py finds 1 ps converged to 1e-5 of an edge)
    tmax = min(max(shortest / 20.0, 1e-12), 5e-12)
    deck = ["* a drawn route", f"V1 src 0 PWL(0 {v0} {ramp:.9g} {v1} {4 * stop:.9g} {v1})",
            f"R1 src n{net.node(case.driver.ref)} {r:.9g}"]
    for k, (a, b, s) in enumerate(net.sections):
        deck.append(f"T{k} n{a} 0 n{b} 0 Z0={s.z0:.9g} TD={s.td:.9g}" if s.td > 0
                    else f"R{k}j n{a} n{b} 1e-6")  # a stretch of no length joins its ends
    deck += [f"C{i} n{i} 0 {c:.9g}" for i, c in enumerate(caps) if c > 0]
    deck += [f".tran {tmax:.6g} {stop:.9g} 0 {tmax:.6g}", ".end", ""]
    return "\n".join(deck), vdd, [f"v(n{net.node(x)})" for x in case.load_refs]


@pytest.mark.parametrize("index", range(DESIGNS))
def test_drawn_route_matches_ngspice_at_every_receiver(tmp_path, index):
    text = _drawn()[index]
    path = tmp_path / "drawn.toml"
    path.write_text(text, encoding="utf-8")
    lines = check_design(load_design(path)).buses[0].workings.lines
    compared = 0
    for signal in ("sclk", "copi", "cipo"):
        la = lines[signal]
        for ref, case in la.cases.items():
            assert case.points is not None, (signal, ref)  # a route: every point solved
            caps = node_caps(case.net, {p.ref: p.c_in for p in la.loads if p.ref != ref},
                             la.line.extra_capacitance)
            for edge in ("rise", "fall"):
                deck, vdd, vectors = _deck(case, caps, la.models[ref], edge)
                t, volts = run_waveform(deck, vectors)
                v = np.array(volts)
                rising = v if edge == "rise" else vdd - v
                want_edge = wf.edge_time(t, rising, vdd)
                want_peak = wf.overshoot(rising, vdd)
                for i, x in enumerate(case.load_refs):
                    got = case.wave_at(x, edge)
                    peak = got.overshoot if edge == "rise" else got.undershoot
                    where = f"{signal} from {ref} at {x}, {edge}:\n{text}"
                    assert got.t_edge == pytest.approx(float(want_edge[i]), rel=EDGE_REL,
                                                       abs=0.0), where
                    assert peak == pytest.approx(float(want_peak[i]), abs=PEAK_VDD * vdd), where
                    compared += 1
    assert compared >= 6  # SCLK and COPI at one receiver at least, CIPO back, both edges


def test_the_draws_cover_each_shape_and_series_resistor():
    """The seeded set holds every route shape and several series resistors, so the test
    above is not a set of one kind."""
    texts = "\n".join(_drawn())
    for shape in ("# daisy", "# stubs", "# star"):
        assert shape in texts
    assert len({r for r in ('"none"', '"auto"', '"22 Ω"', '"47 Ω"') if r in texts}) >= 3
