"""The workbench widgets, at the name the workbooks import (``from pinlib.widgets import
BusBuilder``); the code lives in :mod:`pinlib.present.widgets`, one module per workbench.
Nothing inside pinlib imports this module.
"""

from pinlib.present.widgets import *  # noqa: F403
from pinlib.present.widgets import __all__  # noqa: F401
