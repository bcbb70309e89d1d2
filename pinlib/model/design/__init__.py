"""Design files, ``format = "pinlib.design/1"``: loading, checking references, objects.

A design is the buses of one board built from library parts.  Loading happens in two
passes.  The first checks the file's structure and units with records (a
misspelt key or a capacitance written in henries is an error that names the file,
line and field).  The second resolves references — part ids against the merged
library, geometry names against ``[board.geometry]`` — and checks what a bus needs:
a controller, the pins its protocol uses, a bridging part present on both sides.

The result is a tree of plain dataclasses (:class:`Design` > :class:`Bus` >
:class:`Segment` / :class:`Line` > :class:`Device`) holding SI floats and resolved
:class:`~pinlib.library.schema.Part` objects, which the engines read.

The package, each module importing only those above it:

- :mod:`.raw`: the file's schema (records with units, :mod:`pinlib.core.records`), pass 1;
- :mod:`.objects`: the resolved objects the engines read (:class:`Bus`, :class:`Line`...);
- :mod:`.resolve`: parts, geometries, sections and cables resolved from the raw tables;
- :mod:`.buses`: an open-drain or push-pull bus built and checked;
- :mod:`.coupling`: the ``[[coupling]]`` tables (a fast line beside an open-drain one);
- :mod:`.build`: :class:`Design` and pass 2 over the whole file;
- :mod:`.load`: :func:`load_design` and :func:`design_from_text`.
"""

from __future__ import annotations

from pinlib.model.design.build import (  # noqa: F401
    Design,
)
from pinlib.model.design.coupling import (  # noqa: F401
    Aggressor,
    Coupling,
)
from pinlib.model.design.load import (  # noqa: F401
    design_from_text,
    load_design,
)
from pinlib.model.design.objects import (  # noqa: F401
    Bus,
    Cable,
    Device,
    Geometry,
    Line,
    Section,
    Segment,
)
from pinlib.model.design.raw import (  # noqa: F401
    FORMAT,
    MODES,
    PROTOCOLS,
    SIGNAL_FUNCTION,
    SPI_SIGNALS,
    Capacitance,
    CapPerLength,
    DelayPerLength,
    Dimension,
    Frequency,
    Length,
    PullupSetting,
    Ratio,
    RawBoard,
    RawBus,
    RawCable,
    RawCoupling,
    RawDesign,
    RawDevice,
    RawEdge,
    RawGeometry,
    RawRouteStretch,
    RawSection,
    RawSegment,
    RawTrace,
    Resistance,
    SeriesSetting,
    Thickness,
    Tolerance,
    Voltage,
)

__all__ = [
    "FORMAT",
    "PROTOCOLS",
    "MODES",
    "Geometry",
    "Section",
    "Cable",
    "Device",
    "Segment",
    "Line",
    "Bus",
    "Coupling",
    "Aggressor",
    "Design",
    "load_design",
    "design_from_text",
]

