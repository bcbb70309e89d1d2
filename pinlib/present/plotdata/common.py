"""What every chart's data starts from: the engine's workings of a bus, and display
constants."""

from __future__ import annotations

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.core.protocols import PUSH_PULL_PROTOCOLS
from pinlib.model.design import Bus, Design
from pinlib.model.result import BusResult

# Display choices (not engineering figures): how far the sweeps reach and how many
# samples a chart gets.
_CB_POINTS = 61
_LOAD_POINTS = 61
_WAVE_POINTS = 700
_SETTLE_BAND = 0.02     # a trace has settled once it stays within 2 % of its swing
_WINDOW_PAD = 1.3       # the waveform window runs 30 % past the last trace's settling
# Ringing that outlasts the solver's record (a route's branches ringing against each other
# in the lossless model, a few % of the swing to the end): a trace counts as settled once
# it stays within _RING_MARGIN times the largest excursion of the record's last half
# (_RING_TAIL; half, not less: unequal branches beat, and a shorter tail could fall in a
# lull of the beat and set the band below the ringing that comes back after it).
_RING_TAIL = 0.5
_RING_MARGIN = 1.5


# =========================================================================== helpers


def _require_protocol(bus: Bus, allowed: tuple[str, ...], what: str) -> None:
    if bus.protocol not in allowed:
        raise InputError(M.DRAWN_FOR_PROTOCOLS.format(what=what, protocols=" and ".join(allowed)),
                         field="bus",
                         value=f"{bus.id} ({bus.protocol})",
                         expected=" or ".join(allowed))


def line_analyses(bus: Bus, design: Design, analysis=None) -> dict:
    """The line engine's analysis of every routed line of a push-pull bus.

    Parameters
    ----------
    bus : Bus
        An ``spi`` or ``gpio`` bus of ``design``. [1]
    design : Design
        The loaded design. [1]
    analysis : BusResult, SpiAnalysis or dict, optional
        The bus's result, or what an earlier call returned (or
        :func:`pinlib.engines.spi.spi_analysis`), to reuse instead of solving the lines
        again (see :func:`workings`). [1]

    Returns
    -------
    dict of str to LineAnalysis
        By signal: :class:`pinlib.engines.pushline.LineAnalysis` with the drive cases
        (waveforms) and the models of every driver.
    """
    _require_protocol(bus, PUSH_PULL_PROTOCOLS, "a push-pull line")
    got = workings(bus, design, analysis)
    return dict(getattr(got, "lines", got))


def workings(bus: Bus, design: Design, analysis=None):
    """What the engine worked out for ``bus`` (:attr:`BusResult.workings`): from
    ``analysis`` — the bus's result, or the engine's own object — or else from one
    evaluation of the bus (:func:`pinlib.engines.dispatch.evaluate_bus`).

    Every function here reads the engine's workings rather than computing a figure of
    its own; callers that hold the bus's result (the report, the widgets) pass it, so
    the bus is evaluated once."""
    if isinstance(analysis, BusResult):
        analysis = analysis.workings
    if analysis is None:
        from pinlib.engines.dispatch import evaluate_bus

        analysis = evaluate_bus(bus, design).workings
    return analysis


def _line(bus: Bus, design: Design, signal: str, analysis):
    lines = line_analyses(bus, design, analysis)
    if signal not in lines:
        raise InputError(M.NO_EVALUATED_LINE, field="signal",
                         value=signal, expected=", ".join(lines) or "a routed line")
    return lines[signal]


def _case(la, driver: str | None):
    if driver is None:
        driver = next(iter(la.cases))
    if driver not in la.cases:
        raise InputError(M.DOES_NOT_DRIVE_LINE, field="driver", value=driver,
                         expected=", ".join(la.cases))
    return driver, la.cases[driver]
