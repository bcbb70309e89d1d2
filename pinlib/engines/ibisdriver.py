"""pinlib's driver model fitted to an IBIS output model, per corner, and its edges at
standard loads.

The library reads the IBIS file (:mod:`pinlib.library.ibis`) and the physics fits the
model (:mod:`pinlib.physics.driver.fixture`); this module joins the two, as the engines
do.  For one ``[Model]`` and one corner (a column: ``typ``, ``min``, ``max``) each edge is
fitted to its ``[Rising Waveform]`` or ``[Falling Waveform]`` tables (every fixture at
once), or, lacking waveforms, taken from the ``[Ramp]`` dV/dt into ``R_load``.  The
fitted driver then gives the edge times at :data:`STANDARD_LOADS`, which is how a part
file states a driver (``edges``).  IBIS's ``min`` column is the slow corner (weak, slow
process, low supply, hot) and ``max`` the fast one: :func:`output_corners` gives the
part file's slow corner from ``min`` and its fast corner from ``max``, with ``typ``
beside each value.

Left out of the fit: a fixture's ``L_fixture`` and the package terms a waveform may name
(``R_dut``, ``L_dut``, ``C_dut``), the clamps, and the shape of the current-voltage
tables (the model is one resistance per edge); the residual shows what that costs.
"""

from __future__ import annotations

import numpy as np

from pinlib.core import messages as M
from pinlib.core.labels import plural_s
from pinlib.core.quantity import format_si
from pinlib.core.valueclass import value_class
from pinlib.library.ibis import IbisFile, Model, Pin
from pinlib.library.ibisimport import CornerEdges, OutputCorners
from pinlib.physics import driver as drv
from pinlib.physics.driver.fixture import (
    RESIDUAL_LIMIT,
    FixtureFit,
    FixtureWave,
    fit_fixture,
    ramp_from_slew,
)

__all__ = ["STANDARD_LOADS", "R_LOAD_DEFAULT", "EdgeFit", "fit_edges", "output_corners"]

#: The loads the edges of an imported part are stated into. [F]  common practice, no
#: source: 15 pF and 50 pF are the loads output timing is most often specified into
#: (the part format's own example uses 15 pF).
STANDARD_LOADS = (15e-12, 50e-12)

#: ``R_load`` of a ``[Ramp]`` that does not state one. [Ω]  published: IBIS Version 7.x,
#: keyword [Ramp], R_load: "if not specified, 50 ohms is assumed" (from memory).
R_LOAD_DEFAULT = 50.0

_COLUMN = {"typ": "typ", "min": "min", "max": "max"}


@value_class(frozen=True)
class EdgeFit:
    """The driver model of one edge at one corner, and how it was found.

    Attributes
    ----------
    edge : str
        ``"rise"`` or ``"fall"``. [1]
    corner : str
        The IBIS column: ``"typ"``, ``"min"`` or ``"max"``. [1]
    r_out, t_ramp : float
        The fitted driver. [Ω], [s]
    what : str
        What it was fitted to (``"2 [Rising Waveform] tables"``, ``"[Ramp] dV/dt_r"``). [1]
    rms, swing : float or None
        RMS residual of the fit and the swing it is measured against; None for a ramp
        (two numbers, two unknowns: no residual). [V]
    c_pin : float
        The output's own capacitance (C_comp of the corner plus the pin's package
        capacitance), added to every standard load. [F]
    """

    edge: str
    corner: str
    r_out: float
    t_ramp: float
    what: str
    rms: float | None
    swing: float | None
    c_pin: float

    @property
    def poor(self) -> bool:
        """The RMS residual exceeds :data:`RESIDUAL_LIMIT` of the swing."""
        return self.rms is not None and not self.rms <= RESIDUAL_LIMIT * self.swing

    def edge_time(self, load: float) -> float:
        """10-90 % edge into ``load`` plus the output's own capacitance. [s]"""
        return float(drv.edge_time(self.r_out, self.t_ramp, load + self.c_pin, "10-90"))

    def note(self) -> str:
        """The fit in words, for a value's source."""
        text = (f"driver model r_out {format_si(self.r_out, 'Ω', 4)}, t_ramp "
                f"{format_si(self.t_ramp, 's', 4)} fitted to {self.what} ({self.corner})")
        if self.rms is None:
            return text + ", exact (two numbers, two unknowns)"
        return (text + f", RMS residual {format_si(self.rms, 'V', 3)} "
                f"({self.rms / self.swing:.2%} of the {format_si(self.swing, 'V', 3)} swing)")


def _column(values, corner: str):
    return getattr(values, _COLUMN[corner])


def _corner_value(tmm, corner: str) -> float:
    """A typ/min/max value at ``corner``, the typical one where the file says NA."""
    v = _column(tmm, corner)
    return tmm.typ if v is None else v


def _waves(model: Model, edge: str, corner: str, c_comp: float) -> list[FixtureWave]:
    name = "rising" if edge == "rise" else "falling"
    out = []
    for w in model.waveforms:
        if w.edge != name:
            continue
        col = _column(w.table, corner)
        pairs = [(x, y) for x, y in zip(w.table.x, col, strict=True) if y is not None]
        if len(pairs) < 3:
            continue
        t, v = (np.array(a, dtype=float) for a in zip(*pairs, strict=True))
        out.append(FixtureWave(t, v, float(w.fixture["r_fixture"]),
                               float(w.fixture["v_fixture"]),
                               float(w.fixture.get("c_fixture", 0.0)) + c_comp))
    return out


def _from_waves(model, edge, corner, vdd, c_comp) -> tuple[FixtureFit, int] | None:
    waves = _waves(model, edge, corner, c_comp)
    if not waves:
        return None
    v_from, v_to = (0.0, vdd) if edge == "rise" else (vdd, 0.0)
    return fit_fixture(waves, v_from, v_to), len(waves)


def fit_edges(ibis: IbisFile, model: Model, corner: str, c_package: float = 0.0
              ) -> dict[str, EdgeFit]:
    """The driver model of each edge of ``model`` at ``corner`` (none where the model has
    neither waveforms nor a ramp for it).

    ``c_package`` is the pin's package capacitance, counted with C_comp in the
    standard-load edges (a datasheet's edge at a load includes the pin's own).
    """
    vdd = _corner_value(model.supply(), corner)
    c_comp = _corner_value(model.params["c_comp"], corner)
    out: dict[str, EdgeFit] = {}
    for edge in ("rise", "fall"):
        got = _from_waves(model, edge, corner, vdd, c_comp)
        keyword = "[Rising Waveform]" if edge == "rise" else "[Falling Waveform]"
        if got is not None:
            fit, n = got
            what = f"{n} {keyword} table{plural_s(n)}"
            out[edge] = EdgeFit(edge, corner, fit.r_out, fit.t_ramp, what, fit.rms,
                                fit.swing, c_comp + c_package)
            continue
        ramp = model.ramp
        if ramp is None:
            continue
        pairs = ramp.dv_dt_r if edge == "rise" else ramp.dv_dt_f
        pair = pairs[("typ", "min", "max").index(corner)]
        if pair is None:
            continue  # NA: this corner is not given (the caller falls back to typ)
        r_load = ramp.r_load if ramp.r_load is not None else R_LOAD_DEFAULT
        r, t = ramp_from_slew(pair[0], pair[1], vdd, r_load, c_comp)
        key = "dV/dt_r" if edge == "rise" else "dV/dt_f"
        out[edge] = EdgeFit(edge, corner, r, t, f"[Ramp] {key} into R_load "
                            f"{format_si(r_load, 'Ω', 3)}", None, None, c_comp + c_package)
    return out


def _corner_edges(ibis: IbisFile, model: Model, fits: dict, typ: dict, side: str
                  ) -> CornerEdges:
    name = ibis.header.get("file name", "") or ibis.path
    rows = []
    for load in STANDARD_LOADS:
        row = {"load": load}
        for edge in ("rise", "fall"):
            if edge in fits:
                row[edge] = fits[edge].edge_time(load)
                row[f"{edge}_typ"] = typ[edge].edge_time(load) if edge in typ else None
        rows.append(row)
    sources = {edge: (f"{name} rev {ibis.file_rev}, [Model] {model.name}, {side} corner "
                      f"({fit.corner}); derived: 10-90 % edge into the load plus the "
                      f"output's own {format_si(fit.c_pin, 'F', 3)} from pinlib's "
                      + fit.note())
               for edge, fit in fits.items()}
    return CornerEdges(tuple(rows), sources)


def output_corners(ibis: IbisFile, pin: Pin, model: Model, c_package: float = 0.0
                   ) -> OutputCorners | None:
    """The slow (``min``) and fast (``max``) corners of a push-pull output as edges at
    :data:`STANDARD_LOADS`, with the typical corner beside them; None when the model
    has neither waveforms nor a ramp.  A fit whose residual exceeds
    :data:`RESIDUAL_LIMIT` of the swing is named in ``warnings``."""
    typ = fit_edges(ibis, model, "typ", c_package)
    if not typ:
        return None
    slow = fit_edges(ibis, model, "min", c_package)
    fast = fit_edges(ibis, model, "max", c_package)
    warnings = [M.IBIS_FIT_POOR.format(
        pin=pin.name, edge=f.edge, corner=f.corner, residual=f"{f.rms / f.swing:.1%}",
        limit=f"{RESIDUAL_LIMIT:.0%}") for fits in (typ, slow, fast) for f in fits.values()
        if f.poor]
    return OutputCorners(
        slow=_corner_edges(ibis, model, slow or typ, typ, "slow"),
        fast=_corner_edges(ibis, model, fast, typ, "fast") if fast else None,
        warnings=tuple(warnings))
