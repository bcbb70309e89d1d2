"""A design file -> results: each bus goes to the engine of its protocol.

Open-drain buses (``i2c``, ``smbus``) go to :mod:`pinlib.engines.opendrain`; push-pull
buses (``spi``, ``gpio``) to :mod:`pinlib.engines.pushpull`.  Engines are imported when a
bus needs them, so a design of I2C buses never loads the waveform solver.
"""

from __future__ import annotations

import importlib
import os

from pinlib.model.design import Bus, Design, load_design
from pinlib.model.result import BusResult, DesignResult

__all__ = ["ENGINES", "check_design", "check_file", "design_result", "evaluate_bus"]

#: The engine module of each protocol; each has ``evaluate_bus(bus, design) -> BusResult``.
ENGINES = {
    "i2c": "pinlib.engines.opendrain",
    "smbus": "pinlib.engines.opendrain",
    "spi": "pinlib.engines.pushpull",
    "gpio": "pinlib.engines.pushpull",
}


def evaluate_bus(bus: Bus, design: Design) -> BusResult:
    """Evaluate one bus with the engine of its protocol."""
    # design.py admits only the protocols listed in ENGINES.
    return importlib.import_module(ENGINES[bus.protocol]).evaluate_bus(bus, design)


def check_design(design: Design) -> DesignResult:
    """Evaluate every bus of a loaded design.

    Parameters
    ----------
    design : Design
        A design from :func:`pinlib.model.design.load_design`.

    Returns
    -------
    DesignResult
        One :class:`~pinlib.model.result.BusResult` per bus, in file order.
    """
    return design_result(design, [evaluate_bus(bus, design) for bus in design.buses])


def design_result(design: Design, buses: list) -> DesignResult:
    """The result of ``design`` holding bus results evaluated by the caller (a widget
    that solved a bus's lines once for its checks and its charts)."""
    return DesignResult(design=design.title,
                        path=str(design.path) if design.path else None,
                        warn_margin=design.warn_margin, buses=list(buses))


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
