"""Push-pull buses, SPI and GPIO: the engine entry point and single GPIO nets.

:func:`evaluate_bus` takes an ``spi`` or ``gpio`` bus of a loaded design and returns
its :class:`~pinlib.model.result.BusResult`:

* every routed signal becomes a :class:`~pinlib.model.result.LineResult` from the line
  engine :func:`pinlib.engines.pushline.analyse_line` (edges at the far end, lumped or
  transmission-line model, series termination, overshoot, ringing, levels);
* an SPI bus adds the timing budget of :mod:`pinlib.engines.spi` (setup, hold, chip
  select, ``f_max``, and the figures ``max_clock``, ``cipo_setup_margin``,
  ``copi_setup_margin``, ``copi_hold_margin``);
* a GPIO bus is one or more single nets (reset, interrupt, enable), push-pull or
  open-drain: edge, levels, overshoot.

Which pin of a device sits on a GPIO line: the device's ``pin`` (when the bus has one
line, or the pin is named like the line), else the pin named like the line, else on a
one-line bus the part's only ``gpio`` pin.  Pins that drive (push-pull or open-drain)
are drivers, evaluated in turn; inputs are receivers.  An open-drain net rises through
the line's own ``pullup`` (a resistor to the bus supply) and the pull-ups that parts on
it carry (``pullup``, or ``pullup_internal`` of a device with ``internal_pullups =
true``), in parallel.
"""

from __future__ import annotations

from dataclasses import replace

from pinlib.core import messages as M
from pinlib.core.errors import DesignError, InputError
from pinlib.core.labels import few_named
from pinlib.core.tomlfile import dotted
from pinlib.engines.ppsupply import supply_checks, supply_rows
from pinlib.engines.pushline import Endpoint, LineInputs, device_supply, pulled_to_bus
from pinlib.engines.spi import evaluate_spi, spi_line_inputs
from pinlib.model.design import Bus, Design
from pinlib.model.design.route import gpio_pin  # the rule of a device's GPIO pin
from pinlib.model.result import BusResult, Check

__all__ = ["evaluate_bus", "evaluate_board", "evaluate_gpio", "gpio_pin", "supply_checks",
           "supply_rows", "line_inputs", "gpio_line_inputs", "corner_line_inputs"]


# --------------------------------------------------------------------------- GPIO


def gpio_analyses(bus: Bus, design: Design) -> dict:
    """The line engine's analysis of every routed line of a GPIO bus.

    Parameters
    ----------
    bus : Bus
        A ``gpio`` bus of ``design``. [1]
    design : Design
        The loaded design. [1]

    Returns
    -------
    dict of str to LineAnalysis
        By signal, with the drive cases (waveforms) and the models of every driver; the
        line results carry no contention check yet (:func:`evaluate_gpio` adds it).

    Raises
    ------
    DesignError
        A routed line no device drives.
    """
    return {li.signal: li.analyse() for li in gpio_line_inputs(bus, design)}


def gpio_line_inputs(bus: Bus, design: Design, only: str | None = None) -> list[LineInputs]:
    """The inputs of every line analysis :func:`gpio_analyses` makes, in its order.

    Parameters
    ----------
    bus : Bus
        A ``gpio`` bus of ``design``. [1]
    design : Design
        The loaded design. [1]
    only : str, optional
        The signal of the one line wanted; every line by default. [1]

    Returns
    -------
    list of LineInputs

    Raises
    ------
    DesignError
        As :func:`gpio_analyses`.
    """
    out = []
    for sig, line in bus.lines.items():
        if only not in (None, sig):
            continue
        eps = []
        for d in bus.devices:
            got = gpio_pin(d, sig, len(bus.lines))
            if got is not None:
                eps.append(Endpoint(d, got[0], got[1], device_supply(d, bus)))
        drivers = [e for e in eps if e.drives]
        receivers = [e for e in eps if e.pin.drive == "input"]
        if not drivers:
            err = DesignError(M.NO_DRIVER_ON_LINE, field=dotted(line.loc) or f"lines.{sig}",
                              hint="give each device's pin (pin = \"NAME\") or use parts with "
                                   "a push-pull or open-drain pin of that name")
            err.loc = line.loc  # the line's own place in the file (the dispatcher's line)
            raise err
        out.append(LineInputs(sig, pulled_to_bus(line, bus), tuple(drivers), tuple(eps),
                              tuple(receivers), clock=bus.clock, clock_line=False,
                              warn_margin=design.warn_margin, bus_id=bus.id))
    return out


def line_inputs(bus: Bus, design: Design, only: str | None = None) -> list[LineInputs]:
    """The inputs of every line analysis :func:`evaluate_board` makes on an ``spi`` or
    ``gpio`` bus (for :func:`pinlib.engines.pushline.batchsolve.prefetch`).

    Parameters
    ----------
    bus : Bus
        An ``spi`` or ``gpio`` bus of ``design``. [1]
    design : Design
        The loaded design. [1]
    only : str, optional
        The signal of the one line wanted; every line by default. [1]

    Returns
    -------
    list of LineInputs

    Raises
    ------
    DesignError
        As :func:`evaluate_board`.
    """
    if bus.protocol == "spi":
        return spi_line_inputs(bus, design, only)
    return gpio_line_inputs(bus, design, only)


def corner_line_inputs(bus: Bus, design: Design, nominal: BusResult) -> list:
    """The line analyses the corner search of ``bus``
    (:func:`pinlib.engines.ppworst.search`) will make first, one per line and
    distinct set of the factors that line depends on (its own, and those every line
    shares), for a study to solve their edges ahead
    (:func:`pinlib.engines.pushline.batchsolve.prefetch`).

    Parameters
    ----------
    bus : Bus
        An ``spi`` or ``gpio`` bus of ``design``. [1]
    design : Design
        The design. [1]
    nominal : BusResult
        The engine's result of the bus as designed (its "auto" series resistors are
        kept at every corner). [1]

    Returns
    -------
    list of LineInputs
        Those of :func:`~pinlib.engines.ppworst.first_boards` other than the nominal
        board, each board's line built as :func:`~pinlib.engines.ppworst.
        at_worst_corners` builds it (so each edge's key is the one the search asks for);
        empty where nothing is toleranced.
    """
    from pinlib.engines.ppvariant import chosen_resistors, line_variants, parameter_specs
    from pinlib.engines.ppworst import first_boards

    specs = parameter_specs(bus)
    if not specs:
        return []
    u = first_boards(len(specs))
    chosen = chosen_resistors(nominal)
    out = []
    for sig in bus.lines:
        rows, varied, _ = line_variants(bus, specs, u, sig, chosen)
        # (a row all nominal is the board as designed's line: analysed already)
        out += [li for row, b in zip(rows, varied, strict=True) if row.any()
                for li in line_inputs(b, design, only=sig)]
    return out


def evaluate_gpio(bus: Bus, design: Design, *, analysis: dict | None = None) -> BusResult:
    """Evaluate every line of a GPIO bus.

    Parameters
    ----------
    bus : Bus
        A ``gpio`` bus of ``design``. [1]
    design : Design
        The loaded design. [1]
    analysis : dict, optional
        ``gpio_analyses(bus, design)`` when the caller already has it (a widget that
        also draws the waveforms); it is not changed. [1]

    Returns
    -------
    BusResult
        One line result per routed line (see the module notes).
    """
    solved = gpio_analyses(bus, design) if analysis is None else analysis
    res = BusResult(id=bus.id, protocol=bus.protocol, workings=solved)
    if not bus.lines:
        res.notes.append("no routed lines")
    for d in bus.devices:  # the loader refuses a peripheral on no line
        if d.is_controller and bus.lines and all(
                gpio_pin(d, sig, len(bus.lines)) is None for sig in bus.lines):
            res.notes.append(f"{d.ref} ({d.part_id}), the bus's controller, is on none of "
                             "its lines (no pin named like a line, no single gpio pin, no "
                             "pin key): nothing is checked at it")
    for sig, la in solved.items():
        result = replace(la.result, checks=list(la.result.checks))
        pp = [e for e in la.drivers if e.pin.drive == "push-pull"]
        od = [e for e in la.drivers if e.pin.drive == "open-drain"]
        if len(pp) > 1 or (pp and od):
            # a push-pull output driving high against an open-drain one sinking shorts
            # them as two push-pull outputs would
            both = pp + od
            who = few_named(e.label for e in both)
            kinds = (f"{len(pp)} push-pull drivers" if not od else
                     f"{len(both)} drivers, {len(pp)} push-pull and {len(od)} open-drain,")
            result.add(Check("contention", "warn", len(both), 1, "", None,
                             "a push-pull output must never drive against another output "
                             "on one net (common practice, no source)",
                             f"{kinds} on {sig}: {who}",
                             fix=f"let one of {who} drive at a time (the others "
                                 "high-impedance), or make them all open-drain with a "
                                 "pull-up"))
        _note_unchecked(result, la.receivers)
        res.lines.append(result)
    return res


def _note_unchecked(result, receivers) -> None:
    """A note on a GPIO line where no receiver is checked: none on the line (only its
    controller, or drivers alone), or inputs that give neither levels nor ``abs_max`` (a
    connector contact, whose receiver sits beyond it)."""
    if not receivers:
        result.notes.append(
            "no device on the line receives it (no pin of drive \"input\"): its "
            "edges are worked out, but no level or ringing check is made; list the "
            "part that receives it, with its pin")
        return
    bare = [e.label for e in receivers
            if all(e.level(n) is None for n in ("v_il", "v_ih", "abs_max"))]
    if len(bare) == len(receivers):
        result.notes.append(
            f"{few_named(bare)} {'gives' if len(bare) == 1 else 'give'} no input "
            "levels (v_il, v_ih) or abs_max: no level, overshoot or ringing check is "
            f"made at {'it' if len(bare) == 1 else 'them'}; a connector passes the line "
            "on: list the part beyond it, with its pin, on the line")


# --------------------------------------------------------------------------- entry


def evaluate_bus(bus: Bus, design: Design, *, nominal: BusResult | None = None) -> BusResult:
    """Evaluate an ``spi`` or ``gpio`` bus, every check at its worst corner.

    :func:`evaluate_board` on the bus as designed, then on the corners of its tolerances
    (:func:`pinlib.engines.ppworst.at_worst_corners`): each check is that of its worst
    corner, and names it.

    Parameters
    ----------
    bus : Bus
        The bus, from a loaded design. [1]
    design : Design
        The design it belongs to (warning margin, library). [1]
    nominal : BusResult, optional
        :func:`evaluate_board` of the bus, when the caller has made it (a study that
        solves every candidate's corners ahead, :mod:`pinlib.studies.ppcandidates`). [1]

    Returns
    -------
    BusResult
        Per routed line a :class:`LineResult`; for SPI the timing checks and the bus
        figures ``max_clock``, ``cipo_setup_margin``, ``copi_setup_margin`` and
        ``copi_hold_margin``.

    Raises
    ------
    DesignError
        A line no device drives, a controller without the outputs an SPI bus needs.
    """
    from pinlib.engines.ppcorners import corner_rows
    from pinlib.engines.ppvariant import parameter_specs
    from pinlib.engines.ppworst import at_worst_corners

    if nominal is None:
        nominal = evaluate_board(bus, design)
    if not parameter_specs(bus):
        return nominal  # nothing toleranced: no corners (and no corner arrays to set up)
    return at_worst_corners(bus, design, nominal, evaluate_board,
                            corner_rows(bus, design, nominal))


def evaluate_board(bus: Bus, design: Design, *, analysis=None) -> BusResult:
    """Evaluate an ``spi`` or ``gpio`` bus at one board: its values as given, no corners
    (what :func:`evaluate_bus` evaluates at each corner, and the studies at each variant).

    ``analysis``: the bus's :func:`~pinlib.engines.spi.spi_analysis` or
    :func:`gpio_analyses` when the caller has it (its lines are then not solved again).
    """
    if bus.protocol == "spi":
        res = evaluate_spi(bus, design, analysis=analysis)
    elif bus.protocol == "gpio":
        res = evaluate_gpio(bus, design, analysis=analysis)
    else:
        raise InputError(M.NOT_PUSH_PULL_BUS, field="protocol",
                         value=bus.protocol, expected="'spi' or 'gpio'")
    for chk in supply_checks(bus):
        res.add(chk)
    return res

