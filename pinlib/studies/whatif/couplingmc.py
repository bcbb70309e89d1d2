"""The couplings of a design in a Monte Carlo run: their spacing and length tolerances as
parameters drawn from a stream of their own (so that adding a coupling leaves every bus's
boards as they were), a table of each coupling's noise over its tolerance box, and the
tally of its checks (:mod:`pinlib.engines.couplingbatch`)."""

from __future__ import annotations

import numpy as np

from pinlib.engines import couplingbatch as cb
from pinlib.model.design import Design
from pinlib.studies.whatif.tally import _Tally
from pinlib.studies.whatif.tolerances import _FLOOR, Parameter

__all__ = ["coupling_parameters", "CouplingRun"]


def coupling_parameters(design: Design) -> list[Parameter]:
    """Every toleranced spacing and parallel length of the design's couplings."""
    return [Parameter(*spec) for c in design.couplings for spec in cb.parameter_specs(c)]


class CouplingRun:
    """The couplings' part of one run: nominal results, tables and tallies."""

    def __init__(self, design: Design, nominal_buses: dict, params: list[Parameter],
                 kept: int, span: float, couplings: list | None = None):
        """``couplings``: the engine's coupling results when the caller has them (else
        they are evaluated from ``nominal_buses``)."""
        self.design, self.params, self.kept = design, params, kept
        sampled = {k[1] for k in (p.key for p in params)}
        self.couplings = [c for c in design.couplings if c.id in sampled]
        self.nominal: dict = {}
        self.tables: dict = {}
        if self.couplings:
            if couplings is None:
                from pinlib.engines.dispatch import evaluate_couplings

                couplings = evaluate_couplings(design, list(nominal_buses.values()))
            for r in couplings:
                self.nominal[r.id] = r
            for c in self.couplings:
                if c.id in self.nominal:
                    self.tables[c.id] = cb.CouplingTable.solve(c, self.nominal[c.id], span,
                                                               _FLOOR)
        self.stores: dict[str, _Tally] = {}
        self.last_warn = None  # the last chunk's boards on which some coupling warns
        self.index = {p.key: (i, p.tolerance) for i, p in enumerate(params)}

    def add_chunk(self, u, start: int, m: int):
        """Count one chunk; the boards on which every coupling passes (None: none), and
        those on which some coupling warns in :attr:`last_warn`."""
        ok = warn = None
        for c in self.couplings:
            if c.id not in self.tables:
                continue
            factors = {}
            for key, (i, tol) in self.index.items():
                if key[1] == c.id:
                    factors[key] = np.maximum(1.0 + tol * u[:, i], _FLOOR)
            bb = cb.build(c, self.nominal[c.id], self.tables[c.id], factors, m,
                          self.design.warn_margin)
            st = self.stores.get(c.id)
            if st is None:
                st = self.stores[c.id] = _Tally(bb.names, bb, self.kept)
            got = st.add(bb, start, m)
            ok = got if ok is None else ok & got
            warn = st.last_warn if warn is None else warn | st.last_warn
        self.last_warn = warn
        return ok
