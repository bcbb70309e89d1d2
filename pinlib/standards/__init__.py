"""Tables of published limits: I2C modes, SMBus classes, JEDEC logic levels.

Each table row names its source (document, revision, table) and says when a
value is from memory.  Import the modules for the data classes and tables
(``pinlib.standards.i2c``, ``.smbus``, ``.jedec``); the look-up functions are
re-exported here; ``logic_levels`` imports ``.jedec`` when first asked for (a check
of open-drain buses reads only the I2C and SMBus tables, and the JEDEC one is about
1.4 ms of a fresh process).
"""

from __future__ import annotations

from pinlib.standards.i2c import i2c_mode, sink_spec
from pinlib.standards.smbus import rise_points, rise_rc_factor, smbus_class

__all__ = [
    "i2c_mode",
    "sink_spec",
    "smbus_class",
    "rise_points",
    "rise_rc_factor",
    "logic_levels",
]


def __getattr__(name: str):
    if name == "logic_levels":
        from pinlib.standards.jedec import logic_levels

        return logic_levels
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
