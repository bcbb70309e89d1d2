"""The minimum spacing of a coupled run: batched grids against a bisection of single
solves.

:func:`pinlib.engines.crosstalk.minimum_spacing` solves each grid of trial spacings in
one batched time-domain solve (:func:`pinlib.physics.coupledwave.coupled_waves_batch`);
the baseline bisects in log spacing with one solve per trial (what the engine did before
the batch), to the same precision.  Both find the edge of passing for an invented case:
a 0.5 ns edge beside an I2C Standard-mode SCL, 25 cm of coupled microstrip.
"""

from __future__ import annotations

import warnings

import numpy as np

from pinlib.core.errors import ValidityWarning
from pinlib.engines.crosstalk import (
    Victim,
    coupling_checks,
    minimum_spacing,
    victim_noise,
)
from pinlib.model.design import Aggressor
from pinlib.physics.coupled import coupled_microstrip
from tests.bench.common import Result, median_time

__all__ = ["run"]

H = 0.18e-3
LENGTH = 0.25
REL = 0.02
AGG = Aggressor(swing=3.3, edge_time=0.5e-9, r_source=20.0, c_far=5e-12)
VIC = Victim(vdd=3.3, r_pullup=4.7e3, r_sink=50.0, c={"near": 8e-12, "far": 8e-12},
             vil={"near": 0.99, "far": 0.99}, vih={"near": 2.31, "far": 2.31}, t_sp=None)


def _pair(s):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        return coupled_microstrip(0.2e-3, H, 4.2, s)


def _bisection(lo: float, hi: float) -> float:
    def ok(s):
        checks = coupling_checks(victim_noise(_pair(s), LENGTH, AGG, VIC), VIC, subject="v")
        return all(c.status != "fail" for c in checks)

    a, b = np.log(lo), np.log(hi)
    while b - a > np.log1p(REL):
        m = 0.5 * (a + b)
        a, b = (a, m) if ok(np.exp(m)) else (m, b)
    return float(np.exp(b))


def run(repeats: int = 3, quick: bool = False) -> list[Result]:
    lo, hi = 0.1 * H, 10 * H
    reps = 1 if quick else repeats
    t_batch = median_time(lambda: minimum_spacing(_pair, LENGTH, AGG, VIC, lo, hi, rel=REL),
                          reps, warmup=0)
    t_single = median_time(lambda: _bisection(lo, hi), reps, warmup=0)
    got = minimum_spacing(_pair, LENGTH, AGG, VIC, lo, hi, rel=REL)
    ref = _bisection(lo, hi)
    return [Result("crosstalk: minimum spacing", t_batch,
                   "bisection to the same precision, one solve a trial", t_single,
                   extra=[f"{got * 1e6:.0f} µm vs {ref * 1e6:.0f} µm"])]
