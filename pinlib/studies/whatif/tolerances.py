"""The toleranced parameters of a design, a board at given points of their tolerances
(:class:`Sampled`), and the unit deviations drawn for a batch of boards."""

from __future__ import annotations

import math

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.core.protocols import OPEN_DRAIN_PROTOCOLS, PUSH_PULL_PROTOCOLS
from pinlib.core.quantity import format_si
from pinlib.core.valueclass import value_class
from pinlib.engines import opendrain as od
from pinlib.engines import ppbatch as ppb
from pinlib.engines.opendrain import batch as ob
from pinlib.model.design import Bus, Design, Segment

#: Smallest factor a parameter may take (a 100 % tolerance must not give 0 Ω or 0 V).
_FLOOR = 1e-6


@value_class(frozen=True)
class Parameter:
    """One toleranced quantity of a design.

    Attributes
    ----------
    name : str
        For people: ``"rail 3.3 V"``, ``"sensors SDA pull-up"``... [1]
    kind : str
        ``supply``, ``pullup``, ``series``, ``capacitance`` or ``length``. [1]
    nominal : float
        Its nominal value (a capacitance factor is 1). [unit]
    tolerance : float
        Relative tolerance, e.g. 0.05. [1]
    unit : str
        Unit of ``nominal``. [1]
    key : tuple
        How the model finds it. [1]
    """

    name: str
    kind: str
    nominal: float
    tolerance: float
    unit: str
    key: tuple

    def to_json(self) -> dict:
        return {"name": self.name, "kind": self.kind, "nominal": self.nominal,
                "tolerance": self.tolerance, "unit": self.unit}


def _rail_key(v: float, tol: float) -> tuple:
    return ("rail", round(float(v), 9), round(float(tol), 9))


def _where(bus: Bus, seg: Segment) -> str:
    return bus.id if len(bus.segments) == 1 else f"{bus.id}/{seg.id}"


def _who(d) -> str:
    """A device as a parameter's name gives it: a bridging part by its side too (its two
    sides sit on different segments, each with its own pins: "M1 side a"). [1]"""
    return f"{d.ref} side {d.side}" if d.side else d.ref


def _bus_parameters(bus: Bus, seg_ins, refs_on_buses: dict) -> list[Parameter]:
    out: list[Parameter] = []
    for seg, sin in zip(bus.segments, seg_ins, strict=True):
        where = _where(bus, seg)
        vtol, tol = seg.supply_tolerance, seg.pullup_tolerance
        rails = [seg.supply] + [d.supply for d in seg.devices if d.supply is not None
                                and not math.isclose(d.supply, seg.supply, rel_tol=1e-9)]
        if vtol > 0:
            for v in rails:
                out.append(Parameter(f"rail {format_si(v, 'V')}", "supply", v, vtol, "V",
                                     _rail_key(v, vtol)))
        if tol > 0:
            for sig, fn in od.SIGNALS.items():
                out.append(Parameter(f"{where} {sig.upper()} pull-up", "pullup", sin.pullup,
                                     tol, "Ω", ("pullup", bus.id, seg.id, sig)))
                k = 0
                for d in seg.devices:
                    got = d.part.pin_for(fn, d.side)
                    if got is None:
                        continue
                    pin, who = got[1], _who(d)
                    for what, value in (("on-part", pin.pullup), ("internal", pin.pullup_internal
                                        if d.internal_pullups else None)):
                        if value is None:
                            continue
                        out.append(Parameter(f"{who} {sig.upper()} {what} pull-up", "pullup",
                                             float(value.value), tol, "Ω",
                                             ("part-pullup", bus.id, seg.id, sig, k)))
                        k += 1
                for d in seg.devices:
                    got = d.part.pin_for(fn, d.side)
                    if d.series_resistor and got is not None and got[1].drive == "open-drain":
                        out.append(Parameter(f"{_who(d)} {sig.upper()} series resistor", "series",
                                             d.series_resistor, tol, "Ω",
                                             ("series", bus.id, seg.id, d.ref, d.side, sig)))
        for d in seg.devices:
            if d.capacitance_tolerance:
                name = f"{d.ref} pin capacitance"
                if len(refs_on_buses.get(d.ref, ())) > 1:
                    name += f" on {bus.id}"
                out.append(Parameter(name, "capacitance", 1.0, d.capacitance_tolerance, "",
                                     ("pins", bus.id, d.ref)))
        if seg.capacitance_tolerance > 0:
            out.append(Parameter(f"{where} board capacitance", "capacitance", 1.0,
                                 seg.capacitance_tolerance, "", ("board", bus.id, seg.id)))
        if seg.length_tolerance > 0 and (seg.sections or seg.cables):
            length = sum(s.length for s in seg.sections) + sum(c.length for c in seg.cables)
            out.append(Parameter(f"{where} trace and cable length", "length", length,
                                 seg.length_tolerance, "m", ("length", bus.id, seg.id)))
    seen, unique = set(), []
    for p in out:
        if p.key not in seen:
            seen.add(p.key)
            unique.append(p)
    return unique


def _nominal(design: Design) -> dict:
    """The engine's (worst-case) result of each open-drain bus, by id."""
    from pinlib.engines.dispatch import evaluate_bus

    return {b.id: evaluate_bus(b, design) for b in design.buses
            if b.protocol in OPEN_DRAIN_PROTOCOLS + PUSH_PULL_PROTOCOLS}


def _collected(design: Design) -> dict:
    return {b.id: od.collect(b, design) for b in design.buses if b.protocol in OPEN_DRAIN_PROTOCOLS}


def _refs(design: Design) -> dict:
    refs: dict[str, set] = {}
    for b in design.buses:
        for d in b.devices:
            refs.setdefault(d.ref, set()).add(b.id)
    return refs


def parameters(design: Design, *, bus: str | None = None, collected=None) -> list[Parameter]:
    """Every toleranced parameter of a design's open-drain buses.

    Parameters
    ----------
    design : Design
        A loaded design. [1]
    bus : str, optional
        Only this bus's parameters. [1]
    collected : dict, optional
        :func:`pinlib.engines.opendrain.collect` of each bus by id, when at hand. [1]

    Returns
    -------
    list of Parameter
        In design order, each once (a rail shared by buses appears once).
    """
    collected = collected or _collected(design)
    refs = _refs(design)
    out, seen = [], set()
    for b in design.buses:
        if bus is not None and b.id != bus:
            continue
        if b.protocol in PUSH_PULL_PROTOCOLS:
            for spec in ppb.parameter_specs(b):
                p = Parameter(*spec)
                if p.key not in seen:
                    seen.add(p.key)
                    out.append(p)
            continue
        if b.id not in collected:
            continue
        for p in _bus_parameters(b, collected[b.id][1], refs):
            if p.key not in seen:
                seen.add(p.key)
                out.append(p)
    return out


class Sampled(ob.Scenario):
    """Boards at given points of their tolerances: ``nominal·(1 + tolerance·u)``.

    Parameters
    ----------
    u : numpy.ndarray
        Unit deviations, one row per board and one column per parameter. [1]
    params : list of Parameter
        The parameters of the columns. [1]
    """

    chooses = False

    def __init__(self, u, params):
        self.u = np.asarray(u, dtype=float).reshape(len(u), len(params))
        self.n = self.u.shape[0]
        self.index = {p.key: (i, p.tolerance) for i, p in enumerate(params)}

    def _factor(self, key):
        got = self.index.get(key)
        if got is None:
            return None
        i, tol = got
        return np.maximum(1.0 + tol * self.u[:, i:i + 1], _FLOOR)

    def rails(self, seg):
        return self.tap_rail(seg.supply, seg)

    def tap_rail(self, vdd, seg):
        f = self._factor(_rail_key(vdd, seg.supply_tolerance))
        return np.array([[vdd]]) if f is None else vdd * f

    def pin_factor(self, dev, bus):
        f = self._factor(("pins", bus.id, dev.ref))
        return 1.0 + (dev.capacitance_tolerance or 0.0) if f is None else f

    def board(self, bus, seg, parts):
        fl = self._factor(("length", bus.id, seg.id))
        fc = self._factor(("board", bus.id, seg.id))
        if fl is None and fc is None:
            return parts["traces"], parts["cables"], parts["extra"]
        # the engine's values carry the tolerances at their top: take them off, then
        # apply this board's
        lt, ct = 1.0 + seg.length_tolerance, 1.0 + seg.capacitance_tolerance
        fl = 1.0 if fl is None else fl
        fc = 1.0 if fc is None else fc
        return (parts["traces"] / (lt * ct) * fl * fc, parts["cables"] / (lt * ct) * fl * fc,
                parts["extra"] / ct * fc)

    def series(self, bus, seg, dev, signal):
        r = dev.series_resistor or 0.0
        f = self._factor(("series", bus.id, seg.id, dev.ref, dev.side, signal))
        return r if f is None else r * f

    def contributor(self, bus, seg, signal, index, value):
        f = self._factor(("part-pullup", bus.id, seg.id, signal, index))
        return value if f is None else value * f

    def resistor(self, bus, seg, signal, nominal):
        f = self._factor(("pullup", bus.id, seg.id, signal))
        return nominal if f is None else nominal * f

    def spread(self, seg):
        return 0.0

    def factors(self, bus) -> dict:
        """Factor of each parameter of a push-pull bus, shape ``(n,)``, by key."""
        out = {}
        for spec in ppb.parameter_specs(bus):
            f = self._factor(spec[-1])
            if f is not None:
                out[spec[-1]] = f[:, 0]
        return out


def draw(rng: np.random.Generator, n: int, k: int, distribution: str = "uniform"):
    """Unit deviations of ``k`` parameters for ``n`` boards.

    Parameters
    ----------
    rng : numpy.random.Generator
        The random source. [1]
    n, k : int
        Boards and parameters. [1]
    distribution : str
        ``"uniform"`` (on [−1, 1]) or ``"normal"`` (σ = 1/3: the tolerance is 3σ). [1]

    Returns
    -------
    numpy.ndarray
        Shape ``(n, k)``. [1]
    """
    if distribution == "uniform":
        return rng.uniform(-1.0, 1.0, size=(n, k))
    if distribution == "normal":
        return rng.standard_normal(size=(n, k)) / 3.0
    raise InputError(M.UNKNOWN_DISTRIBUTION, field="distribution", value=distribution,
                     expected="uniform or normal")
