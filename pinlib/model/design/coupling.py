"""The ``[[coupling]]`` tables of a design: a fast neighbour running beside an open-drain
line (issue 17), resolved against the design's buses and geometries.

A coupling names its victim as ``"BUS.SIGNAL"`` (an open-drain bus's ``sda`` or ``scl``;
``segment`` picks one segment of a bus that has several, the first by default) and its
aggressor either as ``"BUS.SIGNAL"`` (a routed push-pull line: the engines take its edge,
swing and series resistor) or as a described edge (:class:`Aggressor`, the crosstalk
solver's input too).  A misspelt bus or signal is answered with the closest name the
design has.
"""

from __future__ import annotations

from pinlib.core import messages as M
from pinlib.core import nearby, protocols
from pinlib.core.quantity import format_si
from pinlib.core.valueclass import value_class
from pinlib.model.design.objects import Bus, Geometry
from pinlib.model.design.raw import RawCoupling, RawEdge, RawGeometry

__all__ = ["Aggressor", "Coupling", "resolve_couplings"]


@value_class(frozen=True)
class Aggressor:
    """An aggressor's edge, as a coupling describes it and as the crosstalk solver
    (:mod:`pinlib.engines.crosstalk`) takes it.

    Attributes
    ----------
    swing : float
        The edge's swing. [V]
    edge_time : float
        Its 10-90 % time. [s]
    r_source : float
        The driver's output resistance plus any series resistor, at the near end (the
        design file's ``source_resistance``). [Ω]
    c_far : float
        What the aggressor drives at its far end (the design file's
        ``load_capacitance``). [F]
    made : str
        How ``r_source`` was made where pinlib worked it out (an aggressor line's
        driver model and series resistor); empty where the design states it. [1]
    """

    swing: float
    edge_time: float
    r_source: float
    c_far: float = 0.0
    made: str = ""


@value_class(frozen=True)
class Coupling:
    """One parallel run of a victim and an aggressor.

    Attributes
    ----------
    victim_bus, victim_signal, segment : str
        The open-drain line (its bus, ``sda``/``scl``, the segment it runs in).
    aggressor : tuple of (bus id, signal) or Aggressor
        A push-pull line of the design, or a described edge.
    spacing, length : float
        Edge-to-edge gap and the length the two run side by side. [m]
    geometry : Geometry
        The cross-section of each trace (both the same).
    spacing_tolerance, length_tolerance : float
        Relative tolerances for Monte Carlo (0 where not given). [1]
    """

    victim_bus: str
    victim_signal: str
    segment: str
    aggressor: tuple | Aggressor
    spacing: float
    length: float
    geometry: Geometry
    spacing_tolerance: float = 0.0
    length_tolerance: float = 0.0
    loc: tuple = ()

    @property
    def id(self) -> str:
        """``victim<-aggressor``, e.g. ``sensors.scl<-display.sclk``."""
        return f"{self.victim}<-{self.aggressor_name}"

    @property
    def victim(self) -> str:
        return f"{self.victim_bus}.{self.victim_signal}"

    @property
    def aggressor_name(self) -> str:
        if isinstance(self.aggressor, Aggressor):  # the described edge of coupling N
            return f"edge-{self.loc[1] + 1}" if len(self.loc) > 1 else "edge"
        return ".".join(self.aggressor)


def _closest_hint(word: str, names) -> str | None:
    close = nearby.closest(word, names, n=1)
    if close:
        return M.DID_YOU_MEAN.format(name=close[0])
    return ("defined: " + ", ".join(names)) if names else None


def _split(text: str, loc, err) -> tuple[str, str]:
    bus, dot, signal = text.rpartition(".")  # a bus id may hold a dot, a signal not
    if not dot or not bus or not signal:
        raise err(M.COUPLING_NAMES_A_LINE, loc, value=text, expected='"BUS.SIGNAL", e.g. '
                  '"i2c0.scl"')
    return bus.strip(), signal.strip().lower()


def _line(text: str, loc, buses: dict[str, Bus], err, open_drain: bool) -> tuple[str, str]:
    """The (bus, signal) a ``"BUS.SIGNAL"`` names, of the family the field needs."""
    bus_id, signal = _split(text, loc, err)
    if bus_id not in buses:
        raise err(M.COUPLING_UNKNOWN_BUS, loc, value=bus_id,
                  hint=_closest_hint(bus_id, buses))
    bus = buses[bus_id]
    if protocols.is_open_drain(bus.protocol) != open_drain:
        raise err(M.COUPLING_WRONG_FAMILY.format(
            family="an open-drain line" if open_drain else "a push-pull line"), loc, value=bus_id,
            expected="an I2C or SMBus line" if open_drain else "a routed SPI or GPIO line")
    signals = (protocols.protocol(bus.protocol).signal_names if open_drain
               else tuple(bus.lines))
    if signal not in signals:
        raise err(M.COUPLING_UNKNOWN_SIGNAL.format(bus=bus_id), loc, value=signal,
                  expected="one of " + ", ".join(signals), hint=_closest_hint(signal, signals))
    return bus_id, signal


def _segment(rc: RawCoupling, bus: Bus, loc, err) -> str:
    ids = [s.id for s in bus.segments]
    if rc.segment is None:
        return ids[0]
    if rc.segment not in ids:
        raise err(M.COUPLING_UNKNOWN_SEGMENT.format(bus=bus.id), loc + ("segment",),
                  value=rc.segment, expected="one of " + ", ".join(ids),
                  hint=_closest_hint(rc.segment, ids))
    return rc.segment


def _geometry(rc: RawCoupling, geometries: dict[str, Geometry], loc, err) -> Geometry:
    g = rc.geometry
    if isinstance(g, str):
        if g not in geometries:
            raise err(M.UNKNOWN_GEOMETRY, loc, value=g,
                      hint=_closest_hint(g, geometries) or "none defined; add "
                      "[board.geometry.NAME] or give the geometry inline")
        return geometries[g]
    assert isinstance(g, RawGeometry)
    if g.kind == "microstrip" and g.height is None:
        raise err(M.MICROSTRIP_NEEDS_HEIGHT, loc + ("height",))
    if g.kind == "stripline" and g.height is None and g.spacing is None:
        raise err(M.STRIPLINE_NEEDS_SPACING, loc + ("spacing",))
    return Geometry("(inline)", g.kind, g.width, g.height, g.spacing, g.thickness, g.er,
                    g.method)


def resolve_couplings(raws, buses, geometries: dict[str, Geometry], err) -> tuple:
    """The design's :class:`Coupling` objects, each reference checked (``err(problem,
    loc, ...)`` builds the error naming file, line and field)."""
    by_id = {b.id: b for b in buses}
    out = []
    seen: set[str] = set()
    for i, rc in enumerate(raws):
        loc = ("coupling", i)
        vb, vs = _line(rc.victim, loc + ("victim",), by_id, err, open_drain=True)
        segment = _segment(rc, by_id[vb], loc, err)
        if isinstance(rc.aggressor, RawEdge):
            a = rc.aggressor
            aggressor: tuple | Aggressor = Aggressor(
                a.swing, a.edge_time, r_source=a.source_resistance,
                c_far=a.load_capacitance)
        else:
            aggressor = _line(rc.aggressor, loc + ("aggressor",), by_id, err,
                              open_drain=False)
        geometry = _geometry(rc, geometries, loc + ("geometry",), err)
        c = Coupling(vb, vs, segment, aggressor, rc.spacing, rc.parallel_length, geometry,
                     rc.spacing_tolerance or 0.0, rc.length_tolerance or 0.0, loc)
        _check_length(c, by_id, loc, err)
        if c.id in seen and not isinstance(aggressor, Aggressor):
            raise err(M.COUPLING_TWICE, loc + ("aggressor",), value=c.id,
                      hint="give one run the total parallel length")
        seen.add(c.id)
        out.append(c)
    return tuple(out)


def _line_lengths(c: Coupling, buses: dict[str, Bus]) -> list[tuple[str, float]]:
    """``(what, length)`` of each end of a coupling whose length the design gives: the
    victim's segment (its traces and cables) and a routed aggressor (every stretch). [m]"""
    seg = next(s for s in buses[c.victim_bus].segments if s.id == c.segment)
    out = [(f"victim {c.victim} ({c.segment})",
            sum(x.length for x in seg.sections) + sum(x.length for x in seg.cables))]
    if not isinstance(c.aggressor, Aggressor):
        bus_id, signal = c.aggressor
        out.append((f"aggressor {c.aggressor_name}", buses[bus_id].lines[signal].length))
    return [(w, float(n)) for w, n in out if n > 0]   # 0: the design gives no length


def _check_length(c: Coupling, buses: dict[str, Bus], loc, err) -> None:
    """A parallel run longer than the shorter line is physically impossible (a line of
    unknown length sets no bound)."""
    known = _line_lengths(c, buses)
    if not known:
        return
    shortest = min(n for _, n in known)
    if c.length > shortest * (1 + 1e-9):
        raise err(M.COUPLING_LONGER_THAN_LINE, loc + ("parallel_length",),
                  value=format_si(c.length, "m"),
                  expected=f"at most {format_si(shortest, 'm')} ("
                  + "; ".join(f"{w}: {format_si(n, 'm')}" for w, n in known) + ")",
                  hint="the run beside the victim cannot be longer than either line")
