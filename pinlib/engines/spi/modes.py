"""SPI clock modes (CPOL, CPHA) and the sources the SPI checks name."""

from __future__ import annotations

from typing import NamedTuple

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.core.quantity import format_si
from pinlib.engines.readout import UNSTATED, explained

_CONTROLLER_DRIVES = ("sclk", "copi", "cs")


def _fmt(x, unit):
    """``format_si(x, unit)``; inside :func:`~pinlib.engines.readout.summaries_only`, where
    no text is read, :data:`~pinlib.engines.readout.UNSTATED`."""
    return format_si(x, unit) if explained() else UNSTATED


_SPI_ORDER = ("sclk", "copi", "cs", "cipo")

MODE_SOURCE = ("SPI clock modes (CPOL/CPHA) as described by controller and peripheral "
               "datasheets (common practice; no single published standard)")
CS_LEAD_SOURCE = ("controller asserts CS half a clock period before the first SCLK edge "
                  "when its class records no t_cs_setup (common practice, no source)")
CS_LAG_SOURCE = ("controller releases CS half a clock period after the last SCLK edge "
                 "when its class records no t_cs_hold (common practice, no source)")
#: The controller's time pinlib assumes where its class records no value for it, by that
#: value's field (:attr:`pinlib.engines.spi.budget.Term.assumed`): the time's name and
#: the source of the assumption.
CS_ASSUMED = {"t_cs_setup": ("CS lead", CS_LEAD_SOURCE),
              "t_cs_hold": ("CS lag", CS_LAG_SOURCE)}
#: Why the figure ``max_clock`` has no number where nothing bounds the clock.
NO_CLOCK_LIMIT = ("not limited by the parts' data (no timing requirement or f_max "
                  "bounds it; the notes say what the parts do not record)")
#: Why a timing-margin figure has no number: no such requirement was evaluated.
MARGIN_NOT_COMPUTED = "not computed (signal not routed or data missing)"
TIMING_REFERENCE = ("output times referred to 50 % of the supply at the pin into the "
                    "part's test_load (common practice, no source)")


class SpiMode(NamedTuple):
    """The clock edges of one SPI mode.

    Attributes
    ----------
    mode : int
        Mode number, 0 to 3. [1]
    cpol : int
        Clock polarity: 0 idles low, 1 idles high. [1]
    cpha : int
        Clock phase: 0 samples on the leading edge, 1 on the trailing edge. [1]
    idle : str
        Level of SCLK between transfers, ``"low"`` or ``"high"``. [1]
    first_edge : str
        Direction of the first SCLK edge after CS asserts (the leading edge). [1]
    sample_edge : str
        Direction of the edges on which both ends sample data. [1]
    launch_edge : str
        Direction of the edges on which both ends change (launch) data. [1]
    """

    mode: int
    cpol: int
    cpha: int
    idle: str
    first_edge: str
    sample_edge: str
    launch_edge: str


#: The four SPI modes.  Mode 0: idle low, sample rising, launch falling; mode 1: idle
#: low, sample falling, launch rising; mode 2: idle high, sample falling, launch rising;
#: mode 3: idle high, sample rising, launch falling.  With CPHA = 0 the first bit is on
#: the line when CS asserts, before the first (sampling) edge.
SPI_MODES: dict[int, SpiMode] = {
    0: SpiMode(0, 0, 0, "low", "rise", "rise", "fall"),
    1: SpiMode(1, 0, 1, "low", "rise", "fall", "rise"),
    2: SpiMode(2, 1, 0, "high", "fall", "fall", "rise"),
    3: SpiMode(3, 1, 1, "high", "fall", "rise", "fall"),
}


def spi_mode(mode: int) -> SpiMode:
    """The clock edges of an SPI mode.

    Parameters
    ----------
    mode : int
        Mode number, 0 to 3. [1]

    Returns
    -------
    SpiMode
        Its CPOL, CPHA, idle level and edges.

    Raises
    ------
    InputError
        For any other mode number.

    Examples
    --------
    >>> spi_mode(3).sample_edge
    'rise'
    """
    if isinstance(mode, bool) or mode not in SPI_MODES:
        raise InputError(M.UNKNOWN_SPI_MODE, field="spi_mode", value=mode,
                         expected="0, 1, 2 or 3")
    return SPI_MODES[mode]
