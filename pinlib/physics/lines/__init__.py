"""Board trace models: characteristic impedance and delay of microstrip and stripline.

Every function takes SI floats or numpy arrays (lengths in metres) and broadcasts them
against one another; each returns a :class:`LineModel` whose fields have the broadcast
shape (numpy scalars for scalar input).

The models are quasi-static and lossless (TEM or quasi-TEM at low frequency): they give
the impedance, delay and per-length capacitance and inductance that the edge-rate and
termination calculations use. Dispersion and conductor or dielectric loss are left out.

Each method's validity range is held as data in :data:`VALIDITY`;
:func:`line_methods` lists the methods whose ranges contain given inputs, and the model
functions emit :class:`~pinlib.core.errors.ValidityWarning` for inputs outside them.

Modules: ``model`` (:class:`LineModel`, :func:`from_per_length`, the shared checks),
``validity`` (the validity ranges, :func:`line_methods`), ``microstrip_models`` and
``stripline_models`` (the methods of each kind); this package re-exports their names.
"""

from __future__ import annotations

from pinlib.core.errors import InputError, ValidityWarning  # noqa: F401
from pinlib.physics.lines.microstrip_models import (  # noqa: F401
    _MICROSTRIP_IMPL,
    _hj_er_eff0,
    _hj_microstrip,
    _hj_z01,
    _ipc_microstrip,
    microstrip,
)
from pinlib.physics.lines.model import (  # noqa: F401
    C0,
    ETA0,
    LineModel,
    _as_float_array,
    _first_bad,
    _model,
    _out,
    _require,
    _safe_x_log,
    _wheeler_width,
    from_per_length,
)
from pinlib.physics.lines.stripline_models import (  # noqa: F401
    _STRIPLINE_IMPL,
    _agm,
    _cohn_stripline,
    _ipc_stripline,
    _k_ratio,
    _wheeler_stripline,
    stripline,
)
from pinlib.physics.lines.validity import (  # noqa: F401
    _COHN_SOURCE,
    _HJ_SOURCE,
    _IPC_SOURCE,
    _METHODS,
    _WHEELER_SOURCE,
    LOG_FORMS,
    MICROSTRIP_METHODS,
    STRIPLINE_METHODS,
    VALIDITY,
    ValidityRange,
    _check_method,
    _geometry,
    _quantities,
    _warn_outside,
    line_methods,
    method_label,
    widest_width,
)

__all__ = [
    "C0",
    "ETA0",
    "LineModel",
    "ValidityRange",
    "VALIDITY",
    "MICROSTRIP_METHODS",
    "method_label",
    "STRIPLINE_METHODS",
    "microstrip",
    "stripline",
    "from_per_length",
    "line_methods",
    "LOG_FORMS",
    "widest_width",
]
