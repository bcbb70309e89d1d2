"""Push-pull output drivers: a ramp behind an output resistance, fitted to datasheet edges.

The driver model is a Thevenin source whose open-circuit voltage ramps linearly from
one rail to the other in ``t_ramp`` (0 % to 100 %), behind the output resistance
``r_out``, into a capacitive load ``c_load``.  The edge seen on the load is that ramp
through a single pole of time constant ``tau = r_out c_load``
(:func:`pinlib.physics.rc.ramp_rc_edge_time`).  Rise and fall are the same model with
their own ``r_out`` and ``t_ramp``.

Datasheets give edge times at one or a few loads (``edges`` in a part class).  From
them :func:`fit_driver` finds ``r_out`` and ``t_ramp`` by least squares, or ``t_ramp``
alone when ``r_out`` is known, and :func:`fit_drivers` many sets of points together
(:func:`fit_requests` lists a pin's); :func:`driver_from_pin` builds a :class:`Driver` from a
part-class pin, marking every value it had to derive; :func:`edge_time` and
:func:`edge_vs_load` give the edge time against load for charts.

The fit uses only numpy: a dense grid over ``(ln r_out, t_ramp)`` for starting points,
then a bounded Levenberg-Marquardt refinement (``r_out > 0``, ``t_ramp >= 0``).

Modules: ``model`` (the results, the model edge, the input checks), ``solver`` (the
grid and the bounded Levenberg-Marquardt iteration), ``fitting`` (:func:`fit_driver`
and its warnings) and ``pin`` (:func:`driver_from_pin`).  This package re-exports their
names and holds the fits made in this process (``_FIT_CACHE``) and the store the
command line installs (``FIT_STORE``); ``fitting`` reads both here at each call.
"""

from __future__ import annotations

from collections import OrderedDict

from pinlib.core.errors import FitWarning, InputError  # noqa: F401
from pinlib.physics.driver.fitting import (  # noqa: F401
    _POINT_RTOL,
    _R_SPREAD_LIMIT,
    _RC_SHARE,
    _RESIDUAL_RTOL,
    _decreasing_points,
    _fmt,
    _from_record,
    _r_out_spread,
    _spread_text,
    _to_record,
    fit_driver,
    fit_drivers,
    fit_key,
)
from pinlib.physics.driver.model import (  # noqa: F401
    DEFAULT_R_OUT,
    DEFAULT_T_RAMP,
    FIT_METHODS,
    LEVELS,
    Driver,
    DriverFit,
    _array,
    _non_negative,
    _positive,
    _r_high,
    _r_low,
    _require,
    edge_time,
    edge_vs_load,
    level_fractions,
    r_out_from_levels,
)
from pinlib.physics.driver.pin import (  # noqa: F401
    _points,
    driver_from_pin,
    fit_requests,
)
from pinlib.physics.driver.solver import (  # noqa: F401
    _BOX_FACTOR,
    _COST_RTOL,
    _FD_STEP,
    _GRID_R,
    _GRID_T,
    _LAM_GROWTH,
    _MAX_ITER,
    _R_LOW_FACTOR,
    _STARTS,
    _STEP_TOL,
    _TRIAL_CHUNKS,
    _TRIALS,
    _flat_ramp_limit,
    _grid_starts,
    _jacobian,
    _lm,
    _median,
    _Problem,
    _solve,
    _solve_many,
)

__all__ = [
    "LEVELS",
    "DEFAULT_R_OUT",
    "DEFAULT_T_RAMP",
    "FIT_METHODS",
    "DriverFit",
    "Driver",
    "level_fractions",
    "edge_time",
    "r_out_from_levels",
    "fit_driver",
    "fit_drivers",
    "fit_requests",
    "driver_from_pin",
    "edge_vs_load",
]

# Fits already made in this process, by their inputs.  The SPI engine fits the same
# datasheet points once per routed line and edge; the fit is deterministic, so a repeat
# returns the stored fit (and issues its warnings again).  Bounded, oldest dropped first:
# large enough for the fits of a chunk of candidates made together before their
# evaluations ask for them (512 candidates of two or four each; about 1 kB a fit), which
# a bound of 256 dropped before use, so each was made again at each corner's supply.
_FIT_CACHE: OrderedDict = OrderedDict()
_FIT_CACHE_SIZE = 4096
#: A second store of fits, by :func:`fit_key`, that outlives the process (the command
#: line installs one: :mod:`pinlib.engines.fitstore`); None: fits live in this process only.
FIT_STORE = None
