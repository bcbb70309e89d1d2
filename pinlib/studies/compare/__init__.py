"""Result snapshots, change lists and pin compatibility for part substitution.

A *snapshot* is a design's result (``format = "pinlib.result/1"``) saved beside the
design as ``<design>.result.json``, with what explains it: for every device, the part
it used, the library file that part came from, and every resolved pin and timing value
with its unit, basis, source and the part file that set it (``origin``); and the
library folders and overrides in force.  :func:`compare` sets two snapshots side by
side and returns a :class:`ChangeList`: the checks whose status changed, the figures
that moved by more than a relative threshold, and the part values behind the change
(``U4 SDA c_in 8 pF → 80 pF, source: …``).  The command line (``pinlib check``,
``pinlib swap``), the workbooks and the reports all show that same list.

:func:`can_serve` decides whether a part can stand in a device's position on a bus:
it must offer every pin function the old part served there, each with a drive the
position allows.  It is the rule ``pinlib swap`` refuses by and ``pinlib candidates``
filters by.

Nothing here computes a figure: the engines do (:mod:`pinlib.engines.dispatch`); this package
compares what they returned.

The package's modules, each importing only those before it: ``snapshots`` (a result
with its resolved parts and library, saved, read back), ``figures`` (figures and checks
of two results side by side, the change threshold), ``renames`` (buses and references
renamed, matched by content), ``changes`` (the change list:
:func:`compare`, :func:`compare_with_snapshot`) and ``substitution`` (:func:`can_serve`,
:func:`positions`, :func:`swap_refusals`, :func:`swapped_text`).  Beside the package,
:mod:`pinlib.studies.snapshotfile` (where a snapshot lives) and
:mod:`pinlib.studies.snapshotcheck` (what one read back must hold).
"""

from __future__ import annotations

from pinlib.studies.compare.changes import (  # noqa: F401
    CHANGES_FORMAT,
    ChangeList,
    FigureChange,
    PartChange,
    StatusChange,
    ValueChange,
    compare,
    compare_with_snapshot,
    value_label,
)
from pinlib.studies.compare.figures import (  # noqa: F401
    DEFAULT_THRESHOLD,
    FigureRow,
    figure_rows,
    format_change,
    format_figure,
    parse_change_threshold,
)
from pinlib.studies.compare.snapshots import (  # noqa: F401
    MAX_SNAPSHOT_BYTES,
    load_snapshot,
    part_values,
    save_snapshot,
    snapshot,
)
from pinlib.studies.compare.substitution import (  # noqa: F401
    PROTOCOL_FUNCTIONS,
    can_serve,
    positions,
    swap_refusals,
    swapped_text,
)
from pinlib.studies.snapshotfile import snapshot_path  # noqa: F401

__all__ = [
    "CHANGES_FORMAT",
    "DEFAULT_THRESHOLD",
    "PROTOCOL_FUNCTIONS",
    "snapshot",
    "snapshot_path",
    "save_snapshot",
    "load_snapshot",
    "compare",
    "compare_with_snapshot",
    "figure_rows",
    "format_figure",
    "format_change",
    "parse_change_threshold",
    "part_values",
    "value_label",
    "can_serve",
    "positions",
    "swap_refusals",
    "swapped_text",
    "FigureRow",
    "StatusChange",
    "FigureChange",
    "ValueChange",
    "PartChange",
    "ChangeList",
]

