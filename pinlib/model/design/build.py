"""The design as a whole (:class:`Design`) and the second pass of loading, which builds it from
the validated file."""

from __future__ import annotations

from pathlib import Path

from pinlib.core import messages as M
from pinlib.core import protocols
from pinlib.core.errors import DesignError
from pinlib.core.quantity import format_si
from pinlib.core.tomlfile import line_index
from pinlib.core.valueclass import value_class
from pinlib.library.loader import Library
from pinlib.model.design.buses import _one_part_per_reference, _open_drain_bus, _push_pull_bus
from pinlib.model.design.coupling import Coupling, resolve_couplings
from pinlib.model.design.objects import Bus, Device, Geometry
from pinlib.model.design.raw import MODES, RawBus, RawDesign
from pinlib.model.design.resolve import _geometries, _Resolver


@value_class(frozen=True)
class Design:
    """A design read and resolved: its buses, geometries and couplings, the library its
    parts come from, and the file it was read from (path and text)."""

    title: str
    path: Path | None
    buses: tuple[Bus, ...]
    geometries: dict[str, Geometry]
    library: Library
    warn_margin: float = 0.10
    distribution: str = "uniform"
    description: str | None = None
    text: str = ""
    couplings: tuple[Coupling, ...] = ()

    def bus(self, bus_id: str) -> Bus:
        for b in self.buses:
            if b.id == bus_id:
                return b
        raise KeyError(bus_id)

    def device(self, ref: str) -> tuple[Bus, Device]:
        """The first (bus, device) with this reference designator."""
        for b in self.buses:
            for d in b.devices:
                if d.ref == ref:
                    return b, d
        raise KeyError(ref)

    def with_parts(self, swaps: dict[str, str], *, keep_others: bool = False) -> Design:
        """The same design with parts substituted by reference: ``{"U4": "eeprom-alt"}``.

        ``keep_others``: the buses with none of the references are this design's own
        (the file's tables built again would give the same buses; a study that swaps
        one position many times builds only the buses at that position)."""
        # the file's line index is the same for every swap (read-only): made once
        return _build(self._raw, self.path, self.library, self.text, swaps,
                      getattr(self, "_index", None), self if keep_others else None)

    _raw: RawDesign | None = None


def _build(raw: RawDesign, path, library: Library, text: str, swaps: dict,
           index: dict | None = None, kept: Design | None = None) -> Design:
    index = line_index(text) if index is None else index
    fname = str(path) if path else None
    r = _Resolver(library, fname, index, swaps)
    r.geometries = _geometries(raw, r.err) if kept is None else kept.geometries
    buses = []
    ids: set[str] = set()
    homes: dict[str, str] = {}  # each reference's first bus (a route's point names them)
    for rb in raw.bus:
        for d in _raw_devices(rb):
            homes.setdefault(d.ref, rb.id)
    for bi, rb in enumerate(raw.bus):
        if kept is not None and not any(d.ref in swaps for d in _raw_devices(rb)):
            buses.append(kept.buses[bi])  # built from the same tables before
            continue
        buses.append(_bus(rb, ("bus", bi), ids, r, homes))
        _levels_in_order(buses[-1], r.err)
    _one_part_per_reference(buses, r.err, fname, index)
    unknown = set(swaps) - r.swapped
    if unknown:
        raise DesignError(M.NO_SUCH_REFERENCE, field="swap",
                          value=sorted(unknown)[0], file=fname)
    couplings = resolve_couplings(raw.coupling, buses, r.geometries, r.err)
    design = Design(raw.title, Path(path) if path else None, tuple(buses), r.geometries,
                    library, raw.warn_margin, raw.distribution, raw.description, text,
                    couplings)
    object.__setattr__(design, "_raw", raw)
    object.__setattr__(design, "_index", index)
    return design


def _raw_devices(rb: RawBus):
    """Every device of a bus's table and of its segments' tables."""
    yield from rb.devices
    for seg in rb.segment:
        yield from seg.devices


def _bus(rb: RawBus, bloc, ids: set[str], r: _Resolver, homes: dict) -> Bus:
    """One bus of the file: its id unique, its mode and clock valid, then built by its
    kind (open-drain or push-pull); ``homes``: the bus of each reference designator of
    the design."""
    err = r.err
    if rb.id in ids:
        raise err(M.DUPLICATE_BUS_ID, bloc + ("id",), value=rb.id)
    ids.add(rb.id)
    modes = MODES.get(rb.protocol)
    mode = rb.mode
    if modes:
        mode = mode or modes[1 if rb.protocol == "i2c" else 0]
        if mode not in modes:
            raise err(M.UNKNOWN_MODE, bloc + ("mode",), value=rb.mode,
                      expected="one of " + ", ".join(modes))
    elif rb.mode is not None:
        raise err(M.BUS_HAS_NO_MODE.format(protocol=rb.protocol), bloc + ("mode",),
                  value=rb.mode,
                  hint="give its clock instead" if rb.protocol == "spi" else None)
    if rb.spi_mode is not None and rb.protocol != "spi":
        raise err(M.SPI_MODE_NOT_SPI, bloc + ("spi_mode",), value=rb.spi_mode,
                  hint="leave spi_mode out")
    if protocols.is_open_drain(rb.protocol):
        return _open_drain_bus(rb, bloc, mode, r.device, r.sections, r.cables, err)
    return _push_pull_bus(rb, bloc, r.device, r.sections, err, homes)


def _outputs_in_order(d, name: str, pin, rail: float, err) -> None:
    """Refuse a device whose part has an output pin with ``v_oh`` at or below ``v_ol`` on
    the device's rail: its high level would lie under its low one, and every level check
    of its line would read nonsense (a fuzz found 0.5 VDD against 0.6 VDD accepted)."""
    if pin.v_oh is None or pin.v_ol is None:
        return
    lo, hi = float(pin.v_ol.at(rail)), float(pin.v_oh.at(rail))
    # a level below ground is the driver model's to refuse, at the part's own field
    if 0.0 <= hi <= lo:
        raise err(M.OUTPUT_LEVELS_INVERTED_AT_RAIL.format(
            pin=name, v_oh=format_si(hi, "V"), v_ol=format_si(lo, "V"),
            rail=format_si(rail, "V")), d.loc + ("part",), value=d.part_id,
            hint=_levels_hint(pin.v_oh, pin.v_ol))


def _levels_hint(*values) -> str:
    """What to do about a part's levels that cross on a device's rail, naming the file
    that set them where one did."""
    where = next((v.origin_file for v in values if v.origin_file), None)
    return (f"correct the part's values{f' ({where})' if where else ''}, or place a part "
            "whose levels suit this rail")


def _levels_in_order(bus: Bus, err) -> None:
    """Refuse a device whose part has an input pin with ``v_il`` above ``v_ih`` on the
    device's own rail, nominal (its supply, else its segment's or bus's): no input
    switches that way, so every level check on it would read nonsense.  The part file
    itself is refused only where the two cross at every supply
    (:data:`~pinlib.core.messages.THRESHOLDS_INVERTED`); a value typed wrong may cross
    only at some, and this is where the design meets it."""
    rails = [(seg.supply, seg.devices) for seg in bus.segments] or [(bus.supply, bus.devices)]
    for supply, devices in rails:
        for d in devices:
            rail = d.supply if d.supply is not None else supply
            if rail is None:
                continue
            for name, pin in d.part.pins.items():
                _outputs_in_order(d, name, pin, rail, err)
                if pin.v_il is None or pin.v_ih is None:
                    continue
                lo, hi = float(pin.v_il.at(rail)), float(pin.v_ih.at(rail))
                if lo > hi:
                    raise err(M.THRESHOLDS_INVERTED_AT_RAIL.format(
                        pin=name, v_il=format_si(lo, "V"), v_ih=format_si(hi, "V"),
                        rail=format_si(rail, "V")), d.loc + ("part",), value=d.part_id,
                        hint=_levels_hint(pin.v_il, pin.v_ih))
