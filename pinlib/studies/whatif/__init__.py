"""Worst case and yield: corners and Monte Carlo over a design's tolerances.

The engines check a design at its worst-case corners.  This module asks two further
questions of the open-drain buses (I2C, SMBus):

* **corners** (:func:`corners`): with every toleranced parameter at one end or the
  other, which combination is worst for each check, and by how much?  Each check's
  worst corner is reported with the parameters that set it (which one at which end)
  and how much margin each would give back at its other end.
* **yield** (:func:`monte_carlo`): with every parameter drawn at random within its
  tolerance, what fraction of boards pass each check, with a confidence interval, and
  which parameters the margin follows most closely?

The toleranced parameters (:func:`parameters`) are the rails (``supply_tolerance``;
rails of equal nominal voltage and tolerance are taken as one rail, wherever they
appear), each line's pull-up resistor and the pull-ups parts carry
(``pullup_tolerance``), series resistors (the segment's ``pullup_tolerance``: the
design format gives resistors one tolerance), each device's pin capacitances (its
``capacitance_tolerance``), a segment's board capacitance — traces, cables and extra —
(its ``capacitance_tolerance``) and its trace and cable length (``length_tolerance``).
Each is ``nominal · (1 + tolerance · u)``: ``u`` uniform on [−1, 1] by default, or
normal with the tolerance at 3σ when the design says ``distribution = "normal"``.
A board is evaluated at its own values, with no further tolerance: its rise time
is ``k·Rp·Cb`` with its own Rp and Cb, and so on.  The stored part values (maximum
pin capacitance, worst thresholds) stay what they are: they are limits, not spreads.

Everything is vectorized: a batch of boards goes through
:func:`pinlib.engines.opendrain.batch.build` in one numpy pass, :data:`CHUNK` boards at a time.
A run keeps what it reports, not every board: per check the counts of passing,
warning and failing boards, the lowest and highest margin (and the worst board), a
histogram of the margins in fixed bins (:class:`MarginHistogram`), and per bus and for
the board the boards on which every check passes; the draws, margins and values of
the first :data:`SENSITIVITY_BOARDS` boards are kept for the sensitivity fit and the
margin quantiles.  Memory so stays bounded (about 0.4 GB for 10^6 boards of the demo),
and the boards are drawn from one stream in board order, so that no result depends
on the chunk size; a run of at most :data:`SENSITIVITY_BOARDS` boards keeps every
board as before.  Push-pull buses (SPI, GPIO) go through :func:`pinlib.engines.ppbatch.build`:
supplies, line lengths and line board capacitance drawn; a large batch is evaluated from
tables of the push-pull engine over the tolerance box, verified against the engine
(:mod:`pinlib.engines.pptable`), a small one (and every corner) by the engine itself.

References
----------
E. B. Wilson, "Probable inference, the law of succession, and statistical inference",
Journal of the American Statistical Association 22 (158), 1927, pp. 209–212 (the score
interval).  R. G. Newcombe, "Two-sided confidence intervals for the single proportion:
comparison of seven methods", Statistics in Medicine 17, 1998, pp. 857–872.

The package's modules, each importing only those before it: ``tolerances`` (the
toleranced parameters, a sampled scenario, the draws), ``yields`` (pass fractions and
the Wilson interval), ``checknames`` (a name for each batch check), ``tally`` (what a run
counts while its chunks go by), ``mcresult`` (a run's checks and result),
``sensitivity`` (the standardized regression coefficients), ``montecarlo``
(:func:`monte_carlo`) and ``cornersearch`` (:func:`corners`).
"""

from __future__ import annotations

from pinlib.studies.whatif.cornersearch import (  # noqa: F401
    EXHAUSTIVE_LIMIT,
    CornerCheck,
    CornersResult,
    corners,
)
from pinlib.studies.whatif.mcresult import (  # noqa: F401
    McCheck,
    McResult,
)
from pinlib.studies.whatif.montecarlo import (  # noqa: F401
    CHUNK,
    MAX_BOARDS,
    SENSITIVITY_BOARDS,
    monte_carlo,
)
from pinlib.studies.whatif.sensitivity import (  # noqa: F401
    SENSITIVITY_FLOOR,
)
from pinlib.studies.whatif.tally import (  # noqa: F401
    MarginHistogram,
)
from pinlib.studies.whatif.tolerances import (  # noqa: F401
    Parameter,
    Sampled,
    draw,
    parameters,
)
from pinlib.studies.whatif.yields import (  # noqa: F401
    CONFIDENCE,
    Yield,
    wilson_interval,
)

__all__ = [
    "CONFIDENCE",
    "CHUNK",
    "MAX_BOARDS",
    "SENSITIVITY_BOARDS",
    "EXHAUSTIVE_LIMIT",
    "Parameter",
    "parameters",
    "Sampled",
    "draw",
    "wilson_interval",
    "MarginHistogram",
    "McCheck",
    "Yield",
    "McResult",
    "monte_carlo",
    "CornerCheck",
    "CornersResult",
    "corners",
]

