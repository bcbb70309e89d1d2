"""Receiver waveform of a series-terminated line: pinlib's solver against ngspice.

The circuit (RECIPES: a 1 ns ramp behind 20 Ω, a 50 Ω / 1 ns line, 10 pF at the far
end, series 33 Ω): pinlib's method-of-characteristics solver
(:func:`pinlib.physics.waveform.distributed_response`) on a 5 ps grid, and ngspice in
batch mode (one process per run, as a script would call it, so its start and the
parsing of the netlist count) with the same step as TMAX.  The ratio is ngspice's time
over pinlib's (above 1: pinlib faster); the edge-time difference is the
10-90 % edge of pinlib against the one ngspice measures.

A second line runs the sweep the SPI engine needs: 24 series resistors in one
batched call of the solver, against 24 ngspice runs.
"""

from __future__ import annotations

import numpy as np

from pinlib.physics import waveform as wf
from tests.bench.common import Result, median_time
from tests.spice import have_ngspice, run_deck

__all__ = ["run"]

VDD = 3.3
T_RAMP = 1e-9
R_OUT = 20.0
R_SERIES = 33.0
Z0, TD = 50.0, 1e-9
C_LOAD = 10e-12
DT = 5e-12
T_STOP = 30e-9


def deck(r_source: float) -> str:
    return "\n".join([
        f"* pinlib bench: series-terminated line, r_source {r_source:g} ohm",
        f"V1 src 0 PWL(0 0 {T_RAMP:.9g} {VDD} {4 * T_STOP:.9g} {VDD})",
        f"R1 src n0 {r_source:.9g}",
        f"T1 n0 0 n1 0 Z0={Z0:g} TD={TD:.9g}",
        f"CL n1 0 {C_LOAD:.9g}",
        f".tran {DT:.6g} {T_STOP:.9g} 0 {DT:.6g}",
        f".meas tran ta WHEN v(n1)={0.1 * VDD:.9g} RISE=1",
        f".meas tran tb WHEN v(n1)={0.9 * VDD:.9g} RISE=1",
        ".end",
        "",
    ])


def _pinlib(r_source):
    t = np.arange(int(round(T_STOP / DT)) + 1) * DT
    w = wf.distributed_response(t, VDD, T_RAMP, r_source, [(Z0, TD)], C_LOAD)
    return wf.edge_time(w.t, w.v, VDD)


def _ngspice(r_source: float) -> float:
    got = run_deck(deck(r_source), ["ta", "tb"])
    return got["tb"] - got["ta"]


def run(repeats: int = 7, quick: bool = False) -> list[Result]:
    name = "waveform: terminated line"
    if not have_ngspice():
        return [Result(name, 0, todo="ngspice is not on PATH")]
    rs = R_OUT + R_SERIES
    t_pin = median_time(lambda: _pinlib(rs), repeats)
    t_spice = median_time(lambda: _ngspice(rs), repeats)
    edge_pin, edge_spice = float(_pinlib(rs)), _ngspice(rs)
    diff = (edge_pin - edge_spice) / edge_spice
    out = [Result(name, t_pin, "ngspice -b, one process (its start included)", t_spice,
                  extra=[f"10-90 % edge {edge_pin * 1e9:.3f} ns vs {edge_spice * 1e9:.3f} ns "
                         f"({diff * 100:+.2g} %)"])]

    sweep = R_OUT + np.array([0, 10, 12, 15, 18, 22, 24, 27, 30, 33, 36, 39, 43, 47, 51, 56,
                              62, 68, 75, 82, 91, 100, 110, 120], dtype=float)
    t_pin_b = median_time(lambda: _pinlib(sweep), repeats)
    t_spice_b = median_time(lambda: [_ngspice(float(r)) for r in sweep], max(1, repeats // 3),
                            warmup=0)
    edges_pin = np.asarray(_pinlib(sweep))
    edges_spice = np.array([_ngspice(float(r)) for r in sweep])
    worst = float(np.max(np.abs(edges_pin / edges_spice - 1.0)))
    out.append(Result(f"waveform: {sweep.size} series resistors", t_pin_b,
                      f"{sweep.size} ngspice -b processes, one a resistor", t_spice_b,
                      extra=[f"largest edge-time difference {worst:.2%}"]))
    return out
