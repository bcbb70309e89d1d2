"""JEDEC logic-level sets (LVCMOS / LVTTL) for 3.3 V, 2.5 V, 1.8 V and 1.2 V supplies.

The JEDEC documents themselves were not available when this table was written:
most values are from memory and marked ``from_memory=True`` with a source string
beginning ``"from memory:"``; a few were seen in a secondary source quoting the
standard and say so.  Treat them as orientation, not as check limits, until
confirmed against the documents (JESD8C.01, JESD8-5A.01, JESD8-7A, JESD8-12A.01).

A level is ``offset + per_vdd · VDD`` (:class:`Level`), which covers the three
forms the standards use: a fixed voltage (``2.0 V``), a fraction of the supply
(``0.65·VDD``) and an offset from it (``VDD − 0.2 V``).  Load currents are
magnitudes; for VOH the current flows out of the pin (JEDEC writes IOH < 0).
"""

from __future__ import annotations

from types import MappingProxyType

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.core.valueclass import value_class
from pinlib.standards.lookup import by_name

__all__ = [
    "Level",
    "OutputDrive",
    "LogicLevels",
    "LOGIC_LEVELS",
    "LOGIC_LEVEL_NAMES",
    "logic_levels",
]


def _check_vdd(vdd) -> np.ndarray:
    try:
        arr = np.asarray(vdd, dtype=float)
    except (TypeError, ValueError):
        raise InputError(
            M.NOT_A_NUMBER, field="vdd", value=vdd, expected="a supply voltage in volts"
        ) from None
    bad = ~(np.isfinite(arr) & (arr > 0))
    if np.any(bad):
        first = arr[bad].flat[0] if arr.ndim else float(arr)
        raise InputError(
            M.SUPPLY_NOT_POSITIVE_FINITE,
            field="vdd",
            value=float(first),
            expected="a supply voltage > 0 V",
        )
    return arr


@value_class(frozen=True)
class Level:
    """A voltage level written as offset + per_vdd · VDD.

    Attributes
    ----------
    offset : float
        Fixed part. [V]
    per_vdd : float
        Fraction of the supply. [-]
    """

    offset: float
    per_vdd: float = 0.0

    def at(self, vdd):
        """The level at a supply voltage.

        Parameters
        ----------
        vdd : float or array_like
            Supply voltage. [V]

        Returns
        -------
        float or numpy.ndarray
            offset + per_vdd · vdd. [V]

        Examples
        --------
        >>> round(float(Level(-0.45, 1.0).at(1.8)), 3)
        1.35
        """
        v = self.offset + self.per_vdd * _check_vdd(vdd)
        return v[()] if np.ndim(v) == 0 else v

    def __str__(self) -> str:
        if self.per_vdd == 0.0:
            return f"{self.offset:g} V"
        scale = "VDD" if self.per_vdd == 1.0 else f"{self.per_vdd:g}·VDD"
        if self.offset == 0.0:
            return scale
        sign = "+" if self.offset > 0 else "−"
        return f"{scale} {sign} {abs(self.offset):g} V"


@value_class(frozen=True)
class OutputDrive:
    """Output levels guaranteed at one load current.

    Attributes
    ----------
    i_load : float
        Load current magnitude (sourced for VOH, sunk for VOL). [A]
    v_oh_min : Level
        Minimum high output level at i_load. [V]
    v_ol_max : Level
        Maximum low output level at i_load. [V]
    source : str
        Where the values come from; begins ``"from memory:"`` when unconfirmed.
    from_memory : bool
        True when the values were not read in the document or a quote of it.
    """

    i_load: float
    v_oh_min: Level
    v_ol_max: Level
    source: str
    from_memory: bool


@value_class(frozen=True)
class LogicLevels:
    """A JEDEC interface level set for one supply.

    Attributes
    ----------
    name : str
        Short name, e.g. ``"lvcmos33"``.
    standard : str
        The JEDEC document, e.g. ``"JESD8C.01"``.
    vdd_nom, vdd_min, vdd_max : float
        Nominal supply and the normal range. [V]
    v_ih_min, v_il_max : Level
        Input high / low thresholds. [V]
    outputs : tuple of OutputDrive
        Output levels at each specified load current, lightest load first.
    source : str
        Source of the supply range and the input thresholds; begins
        ``"from memory:"`` when unconfirmed.
    from_memory : bool
        True when the supply range and input thresholds are from memory.
    """

    name: str
    standard: str
    vdd_nom: float
    vdd_min: float
    vdd_max: float
    v_ih_min: Level
    v_il_max: Level
    outputs: tuple[OutputDrive, ...]
    source: str
    from_memory: bool

    def v_ih_at(self, vdd):
        """Minimum input high level at a supply voltage.

        Parameters
        ----------
        vdd : float or array_like
            Supply voltage. [V]

        Returns
        -------
        float or numpy.ndarray
            VIH(min). [V]
        """
        return self.v_ih_min.at(vdd)

    def v_il_at(self, vdd):
        """Maximum input low level at a supply voltage.

        Parameters
        ----------
        vdd : float or array_like
            Supply voltage. [V]

        Returns
        -------
        float or numpy.ndarray
            VIL(max). [V]
        """
        return self.v_il_max.at(vdd)

    @property
    def any_from_memory(self) -> bool:
        """True if any value of the set (inputs or any output row) is from memory."""
        return self.from_memory or any(o.from_memory for o in self.outputs)


def _mem(doc: str) -> str:
    return f"from memory: {doc}"


def _quoted(doc: str) -> str:
    return f"{doc}, as quoted in a secondary source (primary document not read)"


# Supply ranges, thresholds and output rows as recorded in REFERENCES.md (JEDEC
# section); each row says whether it is from memory or from a quoting source.
_SETS = (
    LogicLevels(
        name="lvcmos33",
        standard="JESD8C.01",
        vdd_nom=3.3,
        vdd_min=3.0,
        vdd_max=3.6,
        v_ih_min=Level(2.0),
        v_il_max=Level(0.8),
        outputs=(
            OutputDrive(100e-6, Level(-0.2, 1.0), Level(0.2), _mem("JESD8C.01"), True),
        ),
        source=_mem("JESD8C.01"),
        from_memory=True,
    ),
    LogicLevels(
        name="lvttl33",
        standard="JESD8C.01",
        vdd_nom=3.3,
        vdd_min=3.0,
        vdd_max=3.6,
        v_ih_min=Level(2.0),
        v_il_max=Level(0.8),
        outputs=(OutputDrive(2e-3, Level(2.4), Level(0.4), _mem("JESD8C.01"), True),),
        source=_mem("JESD8C.01"),
        from_memory=True,
    ),
    LogicLevels(
        name="lvcmos25",
        standard="JESD8-5A.01",
        vdd_nom=2.5,
        vdd_min=2.3,
        vdd_max=2.7,
        v_ih_min=Level(1.7),
        v_il_max=Level(0.7),
        outputs=(
            OutputDrive(0.1e-3, Level(-0.2, 1.0), Level(0.2), _mem("JESD8-5A.01"), True),
            OutputDrive(1e-3, Level(2.0), Level(0.4), _quoted("JESD8-5A.01"), False),
            OutputDrive(2e-3, Level(1.7), Level(0.7), _mem("JESD8-5A.01"), True),
        ),
        source=_mem("JESD8-5A.01"),
        from_memory=True,
    ),
    LogicLevels(
        name="lvcmos18",
        standard="JESD8-7A",
        vdd_nom=1.8,
        vdd_min=1.65,
        vdd_max=1.95,
        v_ih_min=Level(0.0, 0.65),
        v_il_max=Level(0.0, 0.35),
        outputs=(
            OutputDrive(2e-3, Level(-0.45, 1.0), Level(0.45), _quoted("JESD8-7A"), False),
        ),
        source=_mem("JESD8-7A"),
        from_memory=True,
    ),
    LogicLevels(
        name="lvcmos12",
        standard="JESD8-12A.01",
        vdd_nom=1.2,
        vdd_min=1.1,
        vdd_max=1.3,
        v_ih_min=Level(0.0, 0.65),
        v_il_max=Level(0.0, 0.35),
        outputs=(
            OutputDrive(
                2e-3, Level(0.0, 0.75), Level(0.0, 0.25), _quoted("JESD8-12A.01"), False
            ),
        ),
        source=_mem("JESD8-12A.01"),
        from_memory=True,
    ),
)

#: The level sets by name (read-only mapping).
LOGIC_LEVELS = MappingProxyType({s.name: s for s in _SETS})
#: The accepted names, highest supply first.
LOGIC_LEVEL_NAMES: tuple[str, ...] = tuple(LOGIC_LEVELS)


def logic_levels(name: str) -> LogicLevels:
    """Look up a JEDEC level set by name.

    Parameters
    ----------
    name : str
        ``"lvcmos33"``, ``"lvttl33"``, ``"lvcmos25"``, ``"lvcmos18"`` or
        ``"lvcmos12"`` (case-insensitive). [-]

    Returns
    -------
    LogicLevels
        The level set; check ``from_memory`` / ``any_from_memory`` before using
        a value as a limit.

    Raises
    ------
    pinlib.core.errors.InputError
        For an unknown name; the message lists the valid names.

    Examples
    --------
    >>> str(logic_levels("LVCMOS18").v_ih_min)
    '0.65·VDD'
    """
    return by_name(LOGIC_LEVELS, LOGIC_LEVEL_NAMES, name, M.UNKNOWN_LOGIC_LEVELS, "levels")
