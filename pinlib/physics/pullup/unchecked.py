"""The pull-up functions without their input checks, for a caller that has checked its
inputs already (the open-drain array engine checks each line's values once, in one
array, and calls the checked functions wherever that check fails, so that the same
error names the same parameter).

Each takes the same arguments as its checked namesake in :mod:`pinlib.physics.pullup`
(every argument required) and returns a float or an array, as numpy gives it: a value
outside the checked domain gives ``inf``, NaN or a Python error here rather than an
:class:`~pinlib.core.errors.InputError`.
"""

from __future__ import annotations

from pinlib.physics.pullup.edges import _fall_time_bound as fall_time_bound
from pinlib.physics.pullup.edges import _rise_time as rise_time
from pinlib.physics.pullup.levels import _high_level as high_level
from pinlib.physics.pullup.levels import _low_level as low_level
from pinlib.physics.pullup.levels import _sink_current as sink_current

__all__ = ["fall_time_bound", "high_level", "low_level", "rise_time", "sink_current"]
