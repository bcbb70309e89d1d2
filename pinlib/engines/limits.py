"""The published limits an open-drain bus is checked against, one view for I2C and SMBus.

The standards tables (:mod:`pinlib.standards.i2c`, :mod:`pinlib.standards.smbus`) keep
each document's own fields; the engine needs one shape: edge limits and how edges are
measured, the capacitance limit, timing, the levels and sink a pin is assumed to have
when its part file gives none, and the source of each.  :func:`limits_for` builds it
from a bus's protocol and mode.

SMBus gives no data valid time (tVD;DAT) and no noise-margin limits; for the data-setup
budget the I2C-bus value of the same speed is taken, and the result says so.
"""

from __future__ import annotations

import math

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import DesignError
from pinlib.core.quantity import Threshold
from pinlib.core.valueclass import value_class
from pinlib.library.values import Sourced
from pinlib.physics.rc import RISE_30_70
from pinlib.standards import i2c as i2c_std
from pinlib.standards import smbus as smbus_std

__all__ = ["OpenDrainLimits", "limits_for", "SMBUS_TO_I2C"]

#: The I2C-bus mode of the same speed as each SMBus class (for tVD;DAT, which SMBus lacks).
SMBUS_TO_I2C = {"100k": "standard", "400k": "fast", "1m": "fast-plus"}

_I2C_LABEL = {"standard": "I2C Standard-mode", "fast": "I2C Fast-mode",
              "fast-plus": "I2C Fast-mode Plus"}
_SMBUS_LABEL = {"100k": "SMBus 100 kHz class", "400k": "SMBus 400 kHz class",
                "1m": "SMBus 1 MHz class"}
_LOWER = {"i2c": {"fast": "standard", "fast-plus": "fast"},
          "smbus": {"400k": "100k", "1m": "400k"}}


@value_class(frozen=True)
class OpenDrainLimits:
    """Limits of one I2C mode or SMBus class, with the source of each.

    Attributes
    ----------
    protocol, mode, label : str
        ``"i2c"``/``"smbus"``, the mode name, and a name for people.
    rise_definition : str
        ``"30-70"`` (I2C: 0.3·VDD to 0.7·VDD) or ``"smbus"`` (VIL,max − 0.15 V to
        VIH,min + 0.15 V).
    f_max, tr_max, tf_max : float
        Clock limit [Hz]; rise and fall limits [s].
    f_min : float or None
        Lowest clock the document allows (SMBus's fSMB min); None where it gives none
        (I2C). [Hz]
    leakage_bus : float or None
        Most leakage a line of one bus segment may carry, all its pins together (SMBus's
        ILEAK-BUS); None where the document limits pins only (I2C). [A]
    cb_max : float or None
        Capacitance limit per line [F]; None where the document gives none.
    t_low, t_high, t_su_dat, t_vd_dat : float
        Clock low and high minima, data setup minimum, data valid maximum. [s]
    v_nl_rel, v_nh_rel : float or None
        Noise-margin minima as fractions of VDD; None for SMBus.
    c_pin, leakage : float
        What a pin without its own value is taken at: capacitance [F], leakage [A].
    """

    protocol: str
    mode: str
    label: str
    rise_definition: str
    f_max: float
    tr_max: float
    tf_max: float
    cb_max: float | None
    t_low: float
    t_high: float
    t_su_dat: float
    t_vd_dat: float
    v_nl_rel: float | None
    v_nh_rel: float | None
    c_pin: float
    leakage: float
    source_edges: str
    source_cb: str
    source_timing: str
    source_vd_dat: str
    source_levels: str
    source_sink: str
    source_pin: str
    source_noise: str
    source_f: str
    f_min: float | None = None
    leakage_bus: float | None = None
    source_leakage_bus: str = ""
    _i2c: i2c_std.I2cMode | None = None
    _smbus: smbus_std.SmbusClass | None = None

    # ------------------------------------------------------------------ edges

    def rise_factor(self, vdd):
        """Rise time in units of RpCb between this bus's measuring points: ``inf`` on an
        SMBus rail at or below the upper point (VIH,min + 0.15 V), which a line pulled up
        to it never reaches (its rise-time check fails without a value). [1]"""
        if self._smbus is None:
            return np.full(np.shape(vdd), RISE_30_70)[()] if np.ndim(vdd) else RISE_30_70
        hi = smbus_std.rise_points(self._smbus)[1]
        if np.ndim(vdd) == 0:
            v = float(vdd)
            return float(smbus_std.rise_rc_factor(self._smbus, v)) if v > hi else math.inf
        v = np.asarray(vdd, dtype=float)
        reach = v > hi
        k = smbus_std.rise_rc_factor(self._smbus, np.where(reach, v, hi + 1.0))
        return np.where(reach, k, math.inf)

    def measuring_levels(self, vdd):
        """(v_lo, v_hi): the levels rise times are measured between (fall times:
        :meth:`fall_levels`). [V]"""
        vdd = np.asarray(vdd, dtype=float)
        if self._smbus is None:
            return 0.3 * vdd, 0.7 * vdd
        lo, hi = smbus_std.rise_points(self._smbus)
        return np.full(vdd.shape, lo), np.full(vdd.shape, hi)

    def fall_levels(self, vdd):
        """(v_end, v_start): the levels a fall time is measured between, in the order
        :meth:`measuring_levels` gives (the lower first). [V]"""
        vdd = np.asarray(vdd, dtype=float)
        if self._smbus is None:
            return 0.3 * vdd, 0.7 * vdd
        lo, start = smbus_std.fall_points(self._smbus, vdd)
        return np.full(vdd.shape, lo), np.asarray(start, dtype=float)

    @property
    def rise_text(self) -> str:
        if self._smbus is None:
            return "30–70 % of VDD (UM10204 rev. 6 §7.1: tr = 0.8473·Rp·Cb)"
        lo, hi = smbus_std.rise_points(self._smbus)
        return (f"the SMBus points {lo:.2f} V to {hi:.2f} V (VIL,max − 0.15 V to VIH,min + "
                f"0.15 V, {smbus_std.SOURCE_AC}): tr = ln((VDD − {lo:.2f})/(VDD − {hi:.2f}))"
                f"·Rp·Cb; tf from 0.9·VDD down to {lo:.2f} V")

    def tf_min(self, vdd):
        """Minimum fall time at a supply, a float for a float and an array for an array
        (None where the document gives none). [s]"""
        if self._i2c is None or self._i2c.tf_min is None:
            return None
        t = self._i2c.tf_min_at(vdd)
        return float(t) if np.ndim(t) == 0 else np.asarray(t, dtype=float)

    def tr_min(self, vdd):
        """Minimum rise time at a supply, a float for a float and an array for an array
        (None where the document gives none: I2C Standard-mode and Fast-mode Plus,
        SMBus). [s]"""
        if self._i2c is None or self._i2c.tr_min is None:
            return None
        t = self._i2c.tr_min_at(vdd)
        return float(t) if np.ndim(t) == 0 else np.asarray(t, dtype=float)

    def output_fall(self) -> i2c_std.OutputFall | None:
        """The output fall time a compliant I2C output stage of this mode guarantees
        (tof, UM10204 table 9) with its Cb range; None for SMBus, which states none."""
        return None if self._i2c is None else i2c_std.output_fall(self._i2c)

    def sink_point(self, vdd):
        """(VOL, IOL) an output of this mode must meet at a supply (arrays for arrays;
        NaN where the document gives none). [V], [A]"""
        if self._smbus is not None:
            c = self._smbus
            return np.full(np.shape(vdd), c.v_ol), np.full(np.shape(vdd), c.i_ol)
        v_ol, i_ol, _ = i2c_std.sink_spec(self._i2c, vdd)
        return v_ol, i_ol

    def spike_filter(self) -> tuple[float | None, str]:
        """The inputs' spike suppression (tSP, SMBus's tSPIKE) and its source; None where
        the mode's inputs need not filter (I2C Standard-mode, SMBus 100 kHz). [s]"""
        if self._i2c is not None:
            return self._i2c.t_sp, self._i2c.source_of("t_sp")
        return self._smbus.t_spike, self._smbus.source_of("t_spike")

    # ------------------------------------------------------------------ defaults for pins

    def default_levels(self) -> tuple[Sourced, Sourced]:
        """(VIL, VIH) a receiver without its own thresholds is taken at: the standard's
        (basis ``published``, as the sink points of :meth:`default_sink`)."""
        if self._smbus is None:
            m = self._i2c
            return (Sourced(Threshold(m.v_il_rel, 0.0, f"{m.v_il_rel:g} VDD"), "V",
                            basis="published", source=self.source_levels),
                    Sourced(Threshold(m.v_ih_rel, 0.0, f"{m.v_ih_rel:g} VDD"), "V",
                            basis="published", source=self.source_levels))
        c = self._smbus
        return (Sourced(Threshold(0.0, c.v_il_max, f"{c.v_il_max:g} V"), "V", basis="published",
                        source=self.source_levels),
                Sourced(Threshold(0.0, c.v_ih_min, f"{c.v_ih_min:g} V"), "V", basis="published",
                        source=self.source_levels))

    def states_sink(self, vdd: float, vtol: float = 0.0) -> bool:
        """Whether the document gives every device a sink point on a rail ``vdd`` ±
        ``vtol``: not I2C's Standard-mode (nor a mode without VOL2) where the rail's
        minimum reaches 2 V, for which UM10204 rev. 6 table 9 gives none (the engine
        then takes VOL1, :meth:`default_sink`, as its best estimate)."""
        if self._smbus is not None:
            return True
        return (vdd * (1.0 - vtol) > i2c_std.VDD_LOW_SINK
                or self._i2c.v_ol_low_vdd_rel is not None)

    def default_sink(self, vdd: float, vtol: float = 0.0) -> tuple[Sourced, Sourced, str]:
        """(VOL, IOL, which rule) a driver without its own sink point is taken at, on a
        rail ``vdd`` ± ``vtol``.  I2C's VOL2 (VDD <= 2 V) is taken wherever the rail's
        minimum reaches 2 V: the output guarantees no more there, and the rule is one
        for both corners (above 2 V it asks more than VOL1 would, never less)."""
        if self._smbus is not None:
            c = self._smbus
            return (Sourced(Threshold(0.0, c.v_ol, f"{c.v_ol:g} V"), "V", basis="published",
                            source=self.source_sink),
                    Sourced(c.i_ol, "A", basis="published", source=self.source_sink),
                    f"VOL {c.v_ol:g} V at {c.i_ol * 1e3:g} mA")
        m = self._i2c
        if vdd * (1.0 - vtol) <= i2c_std.VDD_LOW_SINK and m.v_ol_low_vdd_rel is not None:
            return (Sourced(Threshold(m.v_ol_low_vdd_rel, 0.0, f"{m.v_ol_low_vdd_rel:g} VDD"),
                            "V", basis="published", source=self.source_sink),
                    Sourced(m.i_ol_low_vdd, "A", basis="published", source=self.source_sink),
                    f"VOL2 {m.v_ol_low_vdd_rel:g}·VDD at {m.i_ol_low_vdd * 1e3:g} mA"
                    + ("" if vdd <= i2c_std.VDD_LOW_SINK else
                       f", the rail reaching {i2c_std.VDD_LOW_SINK:g} V at its minimum"))
        # the standard's point, except where it gives none (Standard-mode at 2 V and
        # below): VOL1 is then an estimate (states_sink)
        basis = "published" if self.states_sink(vdd, vtol) else "estimate"
        return (Sourced(Threshold(0.0, m.v_ol, f"{m.v_ol:g} V"), "V", basis=basis,
                        source=self.source_sink),
                Sourced(m.i_ol, "A", basis=basis, source=self.source_sink),
                f"VOL1 {m.v_ol:g} V at {m.i_ol * 1e3:g} mA")

    # ------------------------------------------------------------------ neighbours

    def lower(self) -> OpenDrainLimits | None:
        """The next slower mode or class (None for the slowest)."""
        name = _LOWER[self.protocol].get(self.mode)
        return None if name is None else limits_for(self.protocol, name)


def limits_for(protocol: str, mode: str) -> OpenDrainLimits:
    """The limits of an I2C mode (``standard``, ``fast``, ``fast-plus``) or SMBus class
    (``100k``, ``400k``, ``1m``).

    Raises
    ------
    DesignError
        For an unknown protocol or mode.
    """
    if protocol == "i2c":
        m = i2c_std.i2c_mode(mode)
        return OpenDrainLimits(
            protocol="i2c", mode=m.name, label=_I2C_LABEL[m.name], rise_definition="30-70",
            f_max=m.f_scl_max, tr_max=m.tr_max, tf_max=m.tf_max, cb_max=m.cb_max,
            t_low=m.t_low, t_high=m.t_high, t_su_dat=m.t_su_dat, t_vd_dat=m.t_vd_dat,
            v_nl_rel=m.v_nl_rel, v_nh_rel=m.v_nh_rel, c_pin=m.c_i_max, leakage=m.leakage,
            source_edges=f"{m.source_bus} (tr, tf)", source_cb=f"{m.source_bus} (Cb)",
            source_timing=f"{m.source_bus} (tLOW, tHIGH, tSU;DAT)",
            source_vd_dat=f"{m.source_bus} (tVD;DAT)",
            source_levels=f"{m.source_io} (VIL, VIH)",
            source_sink=f"{m.source_io} (VOL, IOL)",
            source_pin=f"{m.source_io} (Ci, Ii)",
            source_noise=f"{m.source_bus} (VnL, VnH)",
            source_f=f"{m.source_bus} (fSCL)",
            _i2c=m,
        )
    if protocol == "smbus":
        c = smbus_std.smbus_class(mode)
        twin = i2c_std.i2c_mode(SMBUS_TO_I2C[c.name])
        cb_source = (f"{smbus_std.SOURCE_HIGH_POWER} (CBUS)" if c.c_bus_max is not None
                     else f"{smbus_std.SOURCE_HIGH_POWER}: no CBUS for this class")
        return OpenDrainLimits(
            protocol="smbus", mode=c.name, label=_SMBUS_LABEL[c.name], rise_definition="smbus",
            f_max=c.f_smb_max, tr_max=c.tr_max, tf_max=c.tf_max, cb_max=c.c_bus_max,
            t_low=c.t_low, t_high=c.t_high_min, t_su_dat=c.t_su_dat, t_vd_dat=twin.t_vd_dat,
            v_nl_rel=None, v_nh_rel=None, c_pin=c.c_pin, leakage=c.leakage_pin,
            source_edges=f"{smbus_std.SOURCE_AC} (tR, tF between the SMBus points)",
            source_cb=cb_source,
            source_timing=f"{smbus_std.SOURCE_AC} (tLOW, tHIGH, tSU:DAT)",
            source_vd_dat=(f"{twin.source_bus} (tVD;DAT of {_I2C_LABEL[twin.name]}; SMBus "
                           "gives no data valid time)"),
            source_levels=f"{smbus_std.SOURCE_HIGH_POWER} (VIL, VIH)",
            source_sink=f"{smbus_std.SOURCE_HIGH_POWER} (VOL, IPULLDOWN)",
            source_pin=f"{smbus_std.SOURCE_HIGH_POWER} (CPIN, ILEAK-PIN)",
            source_noise="SMBus specification version 3.1 gives no noise-margin limits",
            source_f=f"{smbus_std.SOURCE_AC} (fSMB)", f_min=c.f_smb_min,
            leakage_bus=c.leakage_bus,
            source_leakage_bus=f"{smbus_std.SOURCE_HIGH_POWER} (ILEAK-BUS)",
            _smbus=c,
        )
    raise DesignError(M.NOT_OPEN_DRAIN_BUS, field="protocol", value=protocol,
                      expected="i2c or smbus")
