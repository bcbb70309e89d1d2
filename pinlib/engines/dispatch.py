"""A design file -> results: each bus goes to the engine of its protocol.

The protocol table (:mod:`pinlib.core.protocols`) names each protocol's engine: open-drain
buses (``i2c``, ``smbus``) go to :mod:`pinlib.engines.opendrain`, push-pull buses
(``spi``, ``gpio``) to :mod:`pinlib.engines.pushpull`.  Each engine is imported here, in
plain code, when a bus first needs it, so a design of I2C buses never loads the waveform
solver.
"""

from __future__ import annotations

import os
from collections.abc import Iterator
from contextlib import contextmanager

from pinlib.core import messages as M
from pinlib.core.errors import PinlibError
from pinlib.core.protocols import PROTOCOLS
from pinlib.core.quantity import format_si
from pinlib.core.tomlfile import dotted, line_index, line_of
from pinlib.engines.memo import run_scope
from pinlib.model.design import Bus, Design, load_design
from pinlib.model.result import BusResult, DesignResult

__all__ = ["ENGINES", "check_design", "check_file", "design_result", "engine",
           "evaluate_bus", "evaluate_couplings"]

#: The engine module of each protocol; each has ``evaluate_bus(bus, design) -> BusResult``.
ENGINES = {name: p.engine for name, p in PROTOCOLS.items()}


def _opendrain():
    from pinlib.engines import opendrain

    return opendrain


def _pushpull():
    from pinlib.engines import pushpull

    return pushpull


#: How each engine the protocol table names is imported.
_IMPORT = {"pinlib.engines.opendrain": _opendrain, "pinlib.engines.pushpull": _pushpull}


def engine(protocol: str):
    """The engine module of ``protocol`` (imported on first use)."""
    # design.py admits only the protocols of the table, and each names an engine above.
    return _IMPORT[PROTOCOLS[protocol].engine]()


def evaluate_bus(bus: Bus, design: Design, **given) -> BusResult:
    """Evaluate one bus with the engine of its protocol.

    An error an engine meets without knowing the file (a value of a part refused at
    the bus's supply, a geometry the line formulas refuse) is raised again naming where
    it comes from: the part file and line of the pin's value, or the design file and the
    line of the bus (:func:`located_errors`).

    The bus is evaluated in a :func:`pinlib.engines.memo.run_scope` (joining the
    caller's, as :func:`check_design` opens one for all its buses): a waveform its
    analyses solve with identical inputs twice (a tolerance corner, the timing budget)
    is solved once.  ``given``: what the caller has already made for the engine (the
    push-pull engine's ``nominal``).
    """
    with located_errors(bus, design), run_scope():
        return engine(bus.protocol).evaluate_bus(bus, design, **given)


@contextmanager
def located_errors(bus: Bus, design: Design) -> Iterator[None]:
    """Raise an error the block meets without a file again, naming where it comes from
    (see :func:`evaluate_bus`)."""
    try:
        yield
    except PinlibError as err:
        if err.file is not None:
            raise
        raise _located(err, bus, design) from None


def _located(err: PinlibError, bus: Bus, design: Design) -> PinlibError:
    index = line_index(design.text) if design.text else {}
    bus_line = line_of(index, bus.loc)
    here = f"{design.path}:{bus_line}" if design.path and bus_line else str(design.path)
    pin_of = getattr(err, "pin_of", None)
    device = next((d for d in bus.devices if pin_of and d.ref == pin_of[0]), None)
    if device is not None and err.field == "vdd":  # the supply itself: where it is set
        loc = device.loc + ("supply",) if device.supply is not None else bus.loc + ("supply",)
        return type(err)(err.problem, file=str(design.path) if design.path else None,
                         line=line_of(index, loc), field=dotted(loc), value=err.value,
                         expected=err.expected, hint=err.hint)
    if device is not None:
        _, pin_name, vdd = pin_of
        if device.supply is not None:  # the device's own rail: the line that sets it
            own = line_of(index, device.loc + ("supply",))
            here = f"{design.path}:{own}" if design.path and own else here
        side = getattr(device, "side", None)
        pins = device.part.sides[side].pins if side in device.part.sides else device.part.pins
        head = ("sides", side, "pins") if side in device.part.sides else ("pins",)
        loc = head + (pin_name,) + ((err.field,) if err.field else ())
        files = design.library.files
        value = getattr(pins.get(pin_name), err.field or "", None)
        owner = getattr(value, "origin", None) or device.part_id
        pf = files.get(owner) or files.get(device.part_id)
        hint = M.PIN_VALUE_AT_SUPPLY.format(part=device.part_id, ref=device.ref,
                                            bus=bus.id, vdd=format_si(vdd, "V"), where=here)
        return type(err)(err.problem, file=str(pf.path) if pf else None,
                         line=pf.line(loc) if pf else None, field=dotted(loc),
                         value=err.value, expected=err.expected,
                         hint=f"{err.hint}; {hint}" if err.hint else hint)
    own = bus.loc + (err.field,) if err.field else None
    if err.field and err.field.startswith(("bus", "board")):  # a place in the design
        field, hint = err.field, err.hint
    elif own is not None and own in index:  # a key of the bus's own table, as written
        return type(err)(err.problem, file=str(design.path) if design.path else None,
                         line=index[own], field=dotted(own), value=err.value,
                         expected=err.expected, hint=err.hint)
    else:  # a value computed from the bus: named in the hint
        field = dotted(bus.loc) or None
        hint = M.MET_EVALUATING_BUS.format(bus=bus.id, field=err.field or "?")
        hint = f"{err.hint}; {hint}" if err.hint else hint
    loc = getattr(err, "loc", None)  # a place the engine names by its key path
    line = (line_of(index, loc) if loc else None) or bus_line
    return type(err)(err.problem, file=str(design.path) if design.path else None,
                     line=line, field=field, value=err.value, expected=err.expected,
                     hint=hint)


def check_design(design: Design) -> DesignResult:
    """Evaluate every bus of a loaded design.

    Parameters
    ----------
    design : Design
        A design from :func:`pinlib.model.design.load_design`.

    Returns
    -------
    DesignResult
        One :class:`~pinlib.model.result.BusResult` per bus, in file order, and one
        :class:`~pinlib.model.result.CouplingResult` per ``[[coupling]]``.

    Notes
    -----
    The buses are evaluated in one :func:`pinlib.engines.memo.run_scope`: a waveform
    solved with identical inputs twice in the check is solved once.
    """
    with run_scope():
        return design_result(design, [evaluate_bus(bus, design) for bus in design.buses])


def evaluate_couplings(design: Design, buses: list) -> list:
    """The result of each ``[[coupling]]`` of the design
    (:mod:`pinlib.engines.coupling`), from its buses' results; an error is placed at
    the coupling's line of the design file.  A coupling whose victim or aggressor bus is
    not among ``buses`` (a caller that evaluated some of them) is left out."""
    if not design.couplings:
        return []
    from pinlib.engines import coupling

    by_id = {b.id: b for b in buses}
    out = []
    for c in design.couplings:
        if c.victim_bus not in by_id or (isinstance(c.aggressor, tuple)
                                         and c.aggressor[0] not in by_id):
            continue
        try:
            out.append(coupling.evaluate_coupling(c, by_id, design))
        except PinlibError as err:
            if err.file is not None:
                raise
            raise _coupling_located(err, c, design) from None
    return out


def _coupling_located(err: PinlibError, c, design: Design) -> PinlibError:
    """An engine's error placed at the coupling's table: at its key where the error
    names one (``parallel_length``), else at the table with the value named in the hint."""
    from pinlib.model.design import RawCoupling

    index = line_index(design.text) if design.text else {}
    own = err.field in RawCoupling.fields()
    loc = c.loc + ((err.field,) if own else ())
    hint = err.hint if own else M.MET_EVALUATING_BUS.format(bus=c.id, field=err.field or "?")
    return type(err)(err.problem, file=str(design.path) if design.path else None,
                     line=line_of(index, loc) or line_of(index, c.loc), field=dotted(loc),
                     value=err.value, expected=err.expected, hint=hint)


def design_result(design: Design, buses: list, couplings: list | None = None) -> DesignResult:
    """The result of ``design`` holding bus results evaluated by the caller (a widget
    that solved a bus's lines once for its checks and its charts); its couplings are
    evaluated from them unless given."""
    buses = list(buses)
    if couplings is None:
        couplings = evaluate_couplings(design, buses)
    return DesignResult(design=design.title,
                        path=str(design.path) if design.path else None,
                        warn_margin=design.warn_margin, buses=buses,
                        couplings=list(couplings))


def check_file(path: str | os.PathLike, library_folders=()) -> DesignResult:
    """Load a design file and evaluate it.

    Parameters
    ----------
    path : path
        The design file (``format = "pinlib.design/1"``).
    library_folders : iterable of paths
        Extra team library folders (they take precedence over the design's own).

    Raises
    ------
    DesignError, LibraryError, UnitError
        For a design that cannot be loaded; the message names file, line and field.
    """
    return check_design(load_design(path, library_folders=library_folders))
