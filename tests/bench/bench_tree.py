"""A tree of lines (a route with taps): pinlib's solver against ngspice's simulation alone.

The case set is tests/test_tree_spice.py's (36 routes: daisy chains, stubs, a star;
series resistance none and matched; the controller, the nearest and the farthest device
driving).  ngspice runs every case in ONE process (a control script that loads each
netlist, runs it and reports ``rusage trantime``), so process start and netlist parsing
are left out: its time is the sum of the transient analyses.  Its step limit is the
coarsest of TMAX_CHOICES whose worst 10-90 % edge error (against ngspice at 1 ps) is
no larger than pinlib's on choose_step's grid, so both read the edges equally well.

Lines: one case at a time (pinlib's ``tree_response`` per case against ngspice's
transient per case, target 5x), and 1,000 variants of one route in one batched call
(per case, target 100x).  Each side takes turns with the other over the rounds (one
pinlib call, then one ngspice process: all 36 cases, or the batch's nominal case
SPICE_RUNS times; the mean of its transient times) and is the median of its rounds, so
a shared machine's load falls on both alike; ngspice reports its times to 1 ms (about
8 % of a case), which the mean over a process's runs smooths.
"""

from __future__ import annotations

import gc
import re
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

from pinlib.physics import waveform as wf
from tests import spice
from tests.bench.common import Result
from tests.spice import have_ngspice

# the test module imports its helper as pytest sees it (tests/ on the path)
sys.modules.setdefault("spice", spice)
from tests.test_tree_spice import (  # noqa: E402
    CASES,
    R_OUT,
    ROUTES,
    SPICE_TMAX,
    T_RAMP,
    VDD,
    driver_node,
    pinlib_figures,
    spice_figures,
    t_stop,
    tree_deck,
)

__all__ = ["run"]

TMAX_CHOICES = (2e-12, 5e-12, 10e-12, 20e-12, 50e-12)  # ngspice step limits tried [s]
BATCH = 1000  # variants in one call
SPICE_RUNS = 5  # ngspice runs of the batch's nominal case in one process, each round
_TRAN = re.compile(r"Transient analysis time\s*=\s*([0-9.eE+-]+)")


def _cases():
    out = []
    for p in CASES:
        name, r_series, which = p.values
        route = ROUTES[name]
        source = driver_node(route, which)
        receivers = [i for i in route.devices() if i != source]
        out.append((route, source, R_OUT + r_series, receivers, t_stop(route)))
    return out


def _spice_tran_times(cases, tmax: float) -> list[float]:
    """ngspice's transient time of each case, all run in one process. [s]"""
    with tempfile.TemporaryDirectory(prefix="pinlib-bench-") as tmp:
        script = ["* pinlib bench: every case in one ngspice process", ".control"]
        for k, (route, source, r_source, _, stop) in enumerate(cases):
            Path(tmp, f"c{k}.cir").write_text(tree_deck(route, source, r_source, stop, tmax),
                                             encoding="utf-8")
            script += [f"source c{k}.cir", "run", "rusage trantime", "destroy all"]
        script += ["quit", ".endc", ".end", ""]
        Path(tmp, "all.cir").write_text("\n".join(script), encoding="utf-8")
        proc = subprocess.run(["ngspice", "-b", "all.cir"], cwd=tmp, capture_output=True,
                              text=True, timeout=600, check=False)
    times = [float(x) for x in _TRAN.findall(proc.stdout + proc.stderr)]
    if len(times) != len(cases):
        raise RuntimeError(f"ngspice reported {len(times)} transient times for "
                           f"{len(cases)} cases")
    return times


def _errors(cases, reference, figures) -> float:
    worst = 0.0
    for (edge_ref, _), (edge, _) in zip(reference, figures, strict=True):
        worst = max(worst, float(np.max(np.abs(edge / edge_ref - 1.0))))
    return worst


def _pinlib_solves(cases):
    """One tree_response per case on choose_step's grid (the solve only)."""
    for route, source, r_source, _, stop in cases:
        lines = route.lines()
        dt = wf.choose_step([td for *_, td in lines], T_RAMP)
        t = np.arange(int(np.ceil(stop / dt)) + 1) * dt
        wf.tree_response(t, VDD, T_RAMP, r_source, lines, route.caps, source=source)


def _batch_case(cases):
    """BATCH variants of the daisy-3 route driven by the controller: Rs, pins, Z0."""
    route, source, r_source, _, stop = next(c for c in cases if len(c[0].caps) == 4)
    rng = np.random.default_rng(16)
    rs = R_OUT + rng.uniform(0.0, 40.0, BATCH)
    caps = [c * rng.uniform(0.8, 1.2, BATCH) for c in route.caps]
    lines = [(a, b, z * rng.uniform(0.9, 1.1, BATCH), td) for a, b, z, td in route.lines()]
    dt = wf.choose_step([td for *_, td in lines], T_RAMP)
    t = np.arange(int(np.ceil(stop / dt)) + 1) * dt
    return (route, source, r_source, stop), lambda: wf.tree_response(
        t, VDD, T_RAMP, rs, lines, caps, source=source)


def _in_turn(ours_once, cases, tmax: float, rounds: int, *, runs: int = SPICE_RUNS,
             per: int = 1) -> tuple[float, float]:
    """pinlib's time per case (``ours_once()`` solves ``per`` cases) and ngspice's
    transient per case, timed in turn: each round one call of ``ours_once`` and one
    ngspice process running ``cases`` ``runs`` times (the mean of its transient times);
    the median of each side over the rounds, after one warm-up call of ours. [s, s]"""
    ours_once()
    ours, theirs = [], []
    for _ in range(rounds):
        gc.collect()
        start = time.perf_counter()
        ours_once()
        ours.append((time.perf_counter() - start) / per)
        theirs.append(float(np.mean(_spice_tran_times(list(cases) * runs, tmax))))
    return statistics.median(ours), statistics.median(theirs)


def run(repeats: int = 5, quick: bool = False) -> list[Result]:
    name = "tree: one route vs ngspice"
    if not have_ngspice():
        return [Result(name, 0, todo="ngspice is not on PATH")]
    cases = _cases()
    reference = [spice_figures(r, s, rs, rec, stop) for r, s, rs, rec, stop in cases]
    ours = [pinlib_figures(r, s, rs, rec, stop) for r, s, rs, rec, stop in cases]
    err_pin = _errors(cases, reference, ours)
    tmax, err_spice = SPICE_TMAX, 0.0
    for choice in TMAX_CHOICES:
        figs = [spice_figures(r, s, rs, rec, stop, choice) for r, s, rs, rec, stop in cases]
        err = _errors(cases, reference, figs)
        if err > err_pin:
            break
        tmax, err_spice = choice, err
    t_pin, t_spice = _in_turn(lambda: _pinlib_solves(cases), cases, tmax, max(3, repeats),
                              runs=1, per=len(cases))
    accuracy = (f"worst edge vs ngspice@1ps: pinlib {err_pin:.3%}, ngspice@{tmax * 1e12:g}ps "
                f"{err_spice:.3%}")
    out = [Result(name, t_pin, f"ngspice's transient alone, per case (TMAX "
                  f"{tmax * 1e12:g} ps)", t_spice, target="ratio >= 5x",
                  passed=t_spice / t_pin >= 5.0,
                  extra=[f"{len(cases)} cases", accuracy])]

    (route, source, r_source, stop), batched = _batch_case(cases)
    t_batch, t_spice_one = _in_turn(batched, [(route, source, r_source, [], stop)], tmax,
                                    max(3, repeats), per=BATCH)
    out.append(Result(f"tree: {BATCH:,} variants in one call", t_batch,
                      "ngspice's transient alone, per case (in turn)", t_spice_one,
                      target="ratio >= 100x (per case)",
                      passed=t_spice_one / t_batch >= 100.0,
                      extra=["daisy-3 route; Rs, pin capacitances and Z0 drawn per variant"]))
    return out
