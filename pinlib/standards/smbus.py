"""SMBus limits of the 100 kHz, 400 kHz and 1 MHz classes, as data.

Values are those of the System Management Bus (SMBus) Specification version 3.1
(19 March 2018): Table 2 (AC specifications), Table 3 (low-power DC
specifications) and Table 4 (high-power DC specifications).  Each
:class:`SmbusClass` carries the Table 2 timing and the Table 4 high-power levels
of its class; the low-power levels of Table 3 are the separate
:data:`SMBUS_LOW_POWER`.

SMBus measures rise times between (VIL,max − 0.15 V) and (VIH,min + 0.15 V), i.e.
0.65 V and 1.50 V, not between 30 % and 70 % of VDD as I2C does: :func:`rise_points`
and :func:`rise_rc_factor`.  Fall times run from 0.9·VDD down to (VIL,max − 0.15 V):
:func:`fall_points` (see its notes on the sources).

All values are SI (s, Hz, F, V, A, Ω).  A field the table leaves blank is
``None``.
"""

from __future__ import annotations

from dataclasses import fields
from types import MappingProxyType

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.core.valueclass import value_class
from pinlib.standards.lookup import by_name

__all__ = [
    "SOURCE_AC",
    "SOURCE_LOW_POWER",
    "SOURCE_HIGH_POWER",
    "EDGE_OFFSET",
    "SmbusClass",
    "SmbusLowPower",
    "SMBUS_CLASSES",
    "SMBUS_CLASS_NAMES",
    "SMBUS_LOW_POWER",
    "smbus_class",
    "rise_points",
    "fall_points",
    "rise_rc_factor",
]

SOURCE_AC = "SMBus specification version 3.1, table 2"
SOURCE_LOW_POWER = "SMBus specification version 3.1, table 3"
SOURCE_HIGH_POWER = "SMBus specification version 3.1, table 4"

#: Offset of the rise/fall measurement points outside VIL,max and VIH,min. [V]
EDGE_OFFSET = 0.15
#: Where a fall time starts, as a fraction of VDD. [1]
FALL_START = 0.9

_META_FIELDS = frozenset({"name", "source_ac", "source_dc", "from_memory", "note"})
_DC_FIELDS = frozenset(
    {"v_il_max", "v_ih_min", "v_hys_min", "v_ol", "i_ol", "leakage_bus", "leakage_pin",
     "c_bus_max", "c_pin"}
)  # fmt: skip


@value_class(frozen=True)
class SmbusClass:
    """Published limits of one SMBus speed class (timing and high-power DC levels).

    Attributes
    ----------
    name : str
        ``"100k"``, ``"400k"`` or ``"1m"``.
    f_smb_min, f_smb_max : float
        Operating frequency range. [Hz]
    t_buf, t_hd_sta, t_su_sta, t_su_sto, t_hd_dat, t_su_dat : float
        Minimum bus free time between STOP and START, hold time after (repeated)
        START, repeated START set-up time, STOP set-up time, data hold and data
        set-up times. [s]
    t_timeout_min, t_timeout_max : float
        Clock-low detect timeout range. [s]
    t_low : float
        Minimum clock low period. [s]
    t_high_min, t_high_max : float
        Clock high period range. [s]
    t_low_sext, t_low_mext : float
        Maximum cumulative clock-low extend time of a target (per message) and of
        a controller (per byte). [s]
    tf_max, tr_max : float
        Maximum fall and rise times: a rise measured from (VIL,max − 0.15 V) to
        (VIH,min + 0.15 V), a fall from 0.9·VDD to (VIL,max − 0.15 V). [s]
    t_spike : float or None
        Width of noise spikes the input filter must suppress (the table's 0–50 ns:
        the upper figure); ``None`` for the 100 kHz class, for which the table
        gives none. [s]
    t_por : float
        Time after power-on reset within which a device must be ready. [s]
    v_il_max, v_ih_min : float
        Input low / high thresholds (high-power, Table 4). [V]
    v_hys_min : float
        Minimum input hysteresis. [V]
    v_ol, i_ol : float
        Maximum low output voltage and the sink current at which it holds
        (4 / 6 / 20 mA by class). [V], [A]
    leakage_bus, leakage_pin : float
        Leakage current magnitude of the whole bus and of one pin. [A]
    c_bus_max : float or None
        Capacitive load per bus segment; ``None`` for the 100 kHz class (see
        ``note``). [F]
    c_pin : float
        Recommended maximum capacitance of one pin. [F]
    source_ac, source_dc : str
        Document, version and table of the timing and of the DC levels.
    from_memory : bool
        True if any value was not read in the source document.
    note : str
        Remarks on blank fields.

    References
    ----------
    System Management Interface Forum, "System Management Bus (SMBus)
    Specification", version 3.1, 19 March 2018, Tables 2 and 4.
    """

    name: str
    # --- AC, Table 2
    f_smb_min: float
    f_smb_max: float
    t_buf: float
    t_hd_sta: float
    t_su_sta: float
    t_su_sto: float
    t_hd_dat: float
    t_su_dat: float
    t_timeout_min: float
    t_timeout_max: float
    t_low: float
    t_high_min: float
    t_high_max: float
    t_low_sext: float
    t_low_mext: float
    tf_max: float
    tr_max: float
    t_spike: float | None
    t_por: float
    # --- high-power DC, Table 4
    v_il_max: float
    v_ih_min: float
    v_hys_min: float
    v_ol: float
    i_ol: float
    leakage_bus: float
    leakage_pin: float
    c_bus_max: float | None
    c_pin: float
    source_ac: str = SOURCE_AC
    source_dc: str = SOURCE_HIGH_POWER
    from_memory: bool = False
    note: str = ""

    def source_of(self, field: str) -> str:
        """Document, version and table that a field's value comes from.

        Parameters
        ----------
        field : str
            A field name of this class, e.g. ``"tr_max"``. [-]

        Returns
        -------
        str
            ``source_dc`` for DC-level fields, ``source_ac`` for timing fields.

        Raises
        ------
        pinlib.core.errors.InputError
            For a name that is not a limit of this class.
        """
        limits = [f.name for f in fields(self) if f.name not in _META_FIELDS]
        if field not in limits:
            raise InputError(
                M.NOT_AN_SMBUS_LIMIT, field="field", value=field,
                expected="one of " + ", ".join(limits),
            )  # fmt: skip
        return self.source_dc if field in _DC_FIELDS else self.source_ac


@value_class(frozen=True)
class SmbusLowPower:
    """Published low-power DC levels of SMBus (Table 3).

    Attributes
    ----------
    name : str
        ``"low-power"``.
    vdd_min, vdd_max : float
        Supply range. [V]
    v_il_max, v_ih_min : float
        Input low / high thresholds. [V]
    v_ol, i_ol : float
        Maximum low output voltage at the sink current i_ol. [V], [A]
    leakage_pin : float
        Leakage current magnitude of one pin (the table's ±5 µA). [A]
    i_pullup_min, i_pullup_max : float
        Range of the pull-up current. [A]
    r_series_max : float
        Series resistance of a device plus its interconnect. [Ω]
    source_dc : str
        Document, version and table.
    from_memory : bool
        True if any value was not read in the source document.

    References
    ----------
    SMBus Specification version 3.1, 19 March 2018, Table 3.
    """

    name: str
    vdd_min: float
    vdd_max: float
    v_il_max: float
    v_ih_min: float
    v_ol: float
    i_ol: float
    leakage_pin: float
    i_pullup_min: float
    i_pullup_max: float
    r_series_max: float
    source_dc: str = SOURCE_LOW_POWER
    from_memory: bool = False


_NOTE_100K = (
    "Table 4 gives CBUS 400 pF for the 400 kHz and 1 MHz classes only; no 100 kHz value "
    "is recorded (from memory, unconfirmed: the 100 kHz class bounds capacitance only "
    "through tR). Table 2 gives tSPIKE for the 400 kHz and 1 MHz classes only."
)

# SMBus 3.1, Table 2 (AC) and Table 4 (high-power DC); SI units.
_CLASSES = (
    SmbusClass(
        name="100k",
        f_smb_min=10e3,
        f_smb_max=100e3,
        t_buf=4.7e-6,
        t_hd_sta=4.0e-6,
        t_su_sta=4.7e-6,
        t_su_sto=4.0e-6,
        t_hd_dat=0.0,
        t_su_dat=250e-9,
        t_timeout_min=25e-3,
        t_timeout_max=35e-3,
        t_low=4.7e-6,
        t_high_min=4.0e-6,
        t_high_max=50e-6,
        t_low_sext=25e-3,
        t_low_mext=10e-3,
        tf_max=300e-9,
        tr_max=1000e-9,
        t_spike=None,
        t_por=500e-3,
        v_il_max=0.8,
        v_ih_min=1.35,
        v_hys_min=80e-3,
        v_ol=0.4,
        i_ol=4e-3,
        leakage_bus=200e-6,
        leakage_pin=10e-6,
        c_bus_max=None,
        c_pin=10e-12,
        note=_NOTE_100K,
    ),
    SmbusClass(
        name="400k",
        f_smb_min=10e3,
        f_smb_max=400e3,
        t_buf=1.3e-6,
        t_hd_sta=0.6e-6,
        t_su_sta=0.6e-6,
        t_su_sto=0.6e-6,
        t_hd_dat=0.0,
        t_su_dat=100e-9,
        t_timeout_min=25e-3,
        t_timeout_max=35e-3,
        t_low=1.3e-6,
        t_high_min=0.6e-6,
        t_high_max=50e-6,
        t_low_sext=25e-3,
        t_low_mext=10e-3,
        tf_max=300e-9,
        tr_max=300e-9,
        t_spike=50e-9,
        t_por=500e-3,
        v_il_max=0.8,
        v_ih_min=1.35,
        v_hys_min=80e-3,
        v_ol=0.4,
        i_ol=6e-3,
        leakage_bus=200e-6,
        leakage_pin=10e-6,
        c_bus_max=400e-12,
        c_pin=10e-12,
    ),
    SmbusClass(
        name="1m",
        f_smb_min=10e3,
        f_smb_max=1000e3,
        t_buf=0.5e-6,
        t_hd_sta=0.26e-6,
        t_su_sta=0.26e-6,
        t_su_sto=0.26e-6,
        t_hd_dat=0.0,
        t_su_dat=50e-9,
        t_timeout_min=25e-3,
        t_timeout_max=35e-3,
        t_low=0.5e-6,
        t_high_min=0.26e-6,
        t_high_max=50e-6,
        t_low_sext=25e-3,
        t_low_mext=10e-3,
        tf_max=120e-9,
        tr_max=120e-9,
        t_spike=50e-9,
        t_por=500e-3,
        v_il_max=0.8,
        v_ih_min=1.35,
        v_hys_min=80e-3,
        v_ol=0.4,
        i_ol=20e-3,
        leakage_bus=200e-6,
        leakage_pin=10e-6,
        c_bus_max=400e-12,
        c_pin=10e-12,
    ),
)

#: The classes by name (read-only mapping).
SMBUS_CLASSES = MappingProxyType({c.name: c for c in _CLASSES})
#: The accepted class names, slowest first.
SMBUS_CLASS_NAMES: tuple[str, ...] = tuple(SMBUS_CLASSES)

#: SMBus 3.1 Table 3, low-power DC levels.
SMBUS_LOW_POWER = SmbusLowPower(
    name="low-power",
    vdd_min=1.62,
    vdd_max=5.5,
    v_il_max=0.8,
    v_ih_min=1.35,
    v_ol=0.4,
    i_ol=350e-6,
    leakage_pin=5e-6,
    i_pullup_min=100e-6,
    i_pullup_max=350e-6,
    r_series_max=1.1e3,
)


def smbus_class(name: str) -> SmbusClass:
    """Look up an SMBus speed class by name.

    Parameters
    ----------
    name : str
        ``"100k"``, ``"400k"`` or ``"1m"`` (case-insensitive). [-]

    Returns
    -------
    SmbusClass
        The class's published limits.

    Raises
    ------
    pinlib.core.errors.InputError
        For an unknown name; the message lists the valid names.

    Examples
    --------
    >>> smbus_class("1M").i_ol
    0.02
    """
    return by_name(SMBUS_CLASSES, SMBUS_CLASS_NAMES, name, M.UNKNOWN_SMBUS_CLASS, "mode")


def _levels(cls) -> SmbusClass | SmbusLowPower:
    if isinstance(cls, (SmbusClass, SmbusLowPower)):
        return cls
    if isinstance(cls, str) and cls.strip().lower() == SMBUS_LOW_POWER.name:
        return SMBUS_LOW_POWER
    return smbus_class(cls)


def rise_points(cls) -> tuple[float, float]:
    """The two voltages between which SMBus rise times are measured (fall times:
    :func:`fall_points`).

    Parameters
    ----------
    cls : SmbusClass, SmbusLowPower or str
        A speed class (or its name), or the low-power levels (``"low-power"``). [-]

    Returns
    -------
    v_lo : float
        VIL,max − 0.15 V. [V]
    v_hi : float
        VIH,min + 0.15 V. [V]

    Notes
    -----
    With VIL,max = 0.8 V and VIH,min = 1.35 V (Tables 3 and 4) the points are
    0.65 V and 1.50 V for every class.

    References
    ----------
    SMBus Specification version 3.1, Table 2 (tR, tF definitions).

    Examples
    --------
    >>> [round(v, 2) for v in rise_points("400k")]
    [0.65, 1.5]
    """
    lv = _levels(cls)
    return lv.v_il_max - EDGE_OFFSET, lv.v_ih_min + EDGE_OFFSET


def fall_points(cls, vdd):
    """The two voltages between which an SMBus fall time is measured.

    Parameters
    ----------
    cls : SmbusClass, SmbusLowPower or str
        A speed class (or its name), or ``"low-power"``. [-]
    vdd : float or array_like
        Bus supply. [V]

    Returns
    -------
    v_lo : float
        VIL,max − 0.15 V, where the fall ends. [V]
    v_start : float or numpy.ndarray
        0.9·VDD, where it starts. [V]

    Notes
    -----
    Product datasheets that reproduce the SMBus timing table quote the fall time
    from 0.9·VDD to VIL,max − 0.15 V (two of them; a third quotes VIH,min + 0.15 V as
    its start), and the SMBus specification version 2.0 is recalled to say the same.
    The document itself was not at hand (docs/references.md): of the two readings
    this one measures the longer stretch of the edge (2.97 V to 0.65 V at 3.3 V,
    against 1.50 V to 0.65 V), so a fall-time check is never the more optimistic.

    Examples
    --------
    >>> lo, start = fall_points("100k", 3.3)
    >>> round(lo, 2), round(float(start), 2)
    (0.65, 2.97)
    """
    lv = _levels(cls)
    start = FALL_START * np.asarray(vdd, dtype=float)
    return lv.v_il_max - EDGE_OFFSET, start[()] if start.ndim == 0 else start


def rise_rc_factor(cls, vdd):
    """Rise time between the SMBus measurement points in units of the RC constant.

    Parameters
    ----------
    cls : SmbusClass, SmbusLowPower or str
        A speed class (or its name), or ``"low-power"``. [-]
    vdd : float or array_like
        Pull-up supply voltage; above the upper point v_hi. [V]

    Returns
    -------
    float or numpy.ndarray
        k such that tR = k·Rp·Cb for a resistor pull-up charging Cb from 0 V. [-]

    Raises
    ------
    pinlib.core.errors.InputError
        For a supply that is not finite or does not exceed v_hi (the edge would
        never reach the upper point).

    Notes
    -----
    From V(t) = VDD·(1 − exp(−t/RC)) (UM10204 rev. 6 §7.1) taken between the
    SMBus points: k = ln((VDD − v_lo) / (VDD − v_hi)).  It replaces I2C's
    0.8473 = ln(7/3) and, unlike it, depends on VDD.

    References
    ----------
    SMBus Specification version 3.1, Table 2; UM10204 rev. 6, §7.1.

    Examples
    --------
    >>> round(float(rise_rc_factor("100k", 3.3)), 3)
    0.387
    """
    v_lo, v_hi = rise_points(cls)
    try:
        v = np.asarray(vdd, dtype=float)
    except (TypeError, ValueError):
        raise InputError(
            M.NOT_A_NUMBER, field="vdd", value=vdd, expected="a supply voltage in volts"
        ) from None
    bad = ~(np.isfinite(v) & (v > v_hi))
    if np.any(bad):
        first = v[bad].flat[0] if v.ndim else float(v)
        raise InputError(
            M.SUPPLY_BELOW_SMBUS_POINTS,
            field="vdd",
            value=float(first),
            expected=f"a finite supply above {v_hi:.2f} V",
        )
    k = np.log((v - v_lo) / (v - v_hi))
    return k[()] if k.ndim == 0 else k
