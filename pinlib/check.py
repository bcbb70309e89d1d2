"""The Python API of a check: ``check_file(path)`` and ``check_design(design)``.

Kept at this name because the README and the workbooks import it; the code lives in
:mod:`pinlib.engines.dispatch`, which sends each bus to the engine of its protocol.
Nothing inside pinlib imports this module.
"""

from pinlib.engines.dispatch import (
    ENGINES,
    check_design,
    check_file,
    design_result,
    engine,
    evaluate_bus,
    evaluate_couplings,
)

__all__ = ["ENGINES", "check_design", "check_file", "design_result", "engine",
           "evaluate_bus", "evaluate_couplings"]
