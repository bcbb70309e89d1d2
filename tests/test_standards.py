"""Tests of the standards tables against the published numbers (docs/references.md)."""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest

import pinlib.standards as standards
from pinlib.core.errors import InputError
from pinlib.standards import i2c, jedec, smbus

US, NS, PF, MA, UA, KHZ = 1e-6, 1e-9, 1e-12, 1e-3, 1e-6, 1e3

# ---------------------------------------------------------------------------
# Published data, typed from docs/references.md in the units the tables print
# ---------------------------------------------------------------------------

# published: UM10204 rev. 6, table 10 (docs/references.md [C]); µs, ns, pF, kHz as printed;
# None where the table prints "—"
UM10204_REV6_TABLE10 = {
    #                standard  fast   fast-plus
    "f_scl_max_khz": (100, 400, 1000),
    "t_hd_sta_us": (4.0, 0.6, 0.26),
    "t_low_us": (4.7, 1.3, 0.5),
    "t_high_us": (4.0, 0.6, 0.26),
    "t_su_sta_us": (4.7, 0.6, 0.26),
    "t_hd_dat_us": (0, 0, 0),
    "t_su_dat_ns": (250, 100, 50),
    "tr_min_ns": (None, 20, None),
    "tr_max_ns": (1000, 300, 120),
    "tf_min_ns_at_5v5": (None, 20, 20),  # printed as 20 x (VDD / 5.5 V)
    "tf_max_ns": (300, 300, 120),
    "t_su_sto_us": (4.0, 0.6, 0.26),
    "t_buf_us": (4.7, 1.3, 0.5),
    "cb_max_pf": (400, 400, 550),
    "t_vd_dat_us": (3.45, 0.9, 0.45),
    "t_vd_ack_us": (3.45, 0.9, 0.45),
    "v_nl_rel": (0.1, 0.1, 0.1),
    "v_nh_rel": (0.2, 0.2, 0.2),
}

# published: UM10204 rev. 6, table 9 (docs/references.md [C])
UM10204_REV6_TABLE9 = {
    #                standard  fast   fast-plus
    "v_il_rel": (0.3, 0.3, 0.3),
    "v_ih_rel": (0.7, 0.7, 0.7),
    "v_hys_rel": (None, 0.05, 0.05),
    "v_ol_v": (0.4, 0.4, 0.4),  # VOL1, VDD > 2 V
    "i_ol_ma": (3, 3, 20),  # IOL min at VOL 0.4 V
    "v_ol_low_vdd_rel": (None, 0.2, 0.2),  # VOL2, VDD <= 2 V
    "i_ol_low_vdd_ma": (None, 2, 2),
    "i_ol_06_ma": (None, 6, None),  # IOL min at VOL 0.6 V
    "t_of_min_ns_at_5v5": (None, 20, 20),  # 20 x (VDD / 5.5 V)
    "t_of_max_ns": (250, 250, 120),
    "t_sp_ns": (None, 50, 50),  # 0-50 ns
    "leakage_ua": (10, 10, 10),  # Ii, ±10 µA
    "c_i_max_pf": (10, 10, 10),
}

SCALE = {"us": US, "ns": NS, "pf": PF, "ma": MA, "ua": UA, "khz": KHZ, "v": 1.0}
MODES = ("standard", "fast", "fast-plus")


def _field_and_scale(key: str) -> tuple[str, float]:
    for suffix in ("_ns_at_5v5",):
        if key.endswith(suffix):
            return key[: -len(suffix)], NS
    head, _, unit = key.rpartition("_")
    if unit in SCALE:
        return head, SCALE[unit]
    return key, 1.0


def _rows(table: dict):
    for key, values in table.items():
        field, scale = _field_and_scale(key)
        for mode, printed in zip(MODES, values, strict=True):
            yield pytest.param(mode, field, printed, scale, id=f"{mode}-{key}")


# ---------------------------------------------------------------------------
# I2C, table rows against the printed values
# ---------------------------------------------------------------------------


@pytest.mark.parametrize("mode, field, printed, scale", list(_rows(UM10204_REV6_TABLE10)))
def test_i2c_bus_line_values(mode, field, printed, scale):
    # published: UM10204 rev. 6, table 10 -- transcribed decimals, compared exactly
    # (rel 1e-12 absorbs only the unit conversion)
    value = getattr(i2c.i2c_mode(mode), field)
    if printed is None:
        assert value is None
    else:
        assert value == pytest.approx(printed * scale, rel=1e-12, abs=0)
    assert i2c.i2c_mode(mode).source_of(field) == (
        "I2C-bus specification UM10204 rev. 6, table 10"
    )


@pytest.mark.parametrize("mode, field, printed, scale", list(_rows(UM10204_REV6_TABLE9)))
def test_i2c_io_stage_values(mode, field, printed, scale):
    # published: UM10204 rev. 6, table 9
    value = getattr(i2c.i2c_mode(mode), field)
    if printed is None:
        assert value is None
    else:
        assert value == pytest.approx(printed * scale, rel=1e-12, abs=0)
    assert i2c.i2c_mode(mode).source_of(field) == "I2C-bus specification UM10204 rev. 6, table 9"


def test_i2c_which_minima_scale_with_vdd():
    # published: UM10204 rev. 6, tables 9 and 10: tf and tof minima are
    # 20 x (VDD / 5.5 V); Fast-mode tr minimum is a plain 20 ns
    fm, fp = i2c.i2c_mode("fast"), i2c.i2c_mode("fast-plus")
    assert fm.tf_min_scaled and fp.tf_min_scaled
    assert fm.t_of_min_scaled and fp.t_of_min_scaled
    assert not fm.tr_min_scaled


@pytest.mark.parametrize("mode", ["fast", "fast-plus"])
def test_i2c_tf_min_at_vdd(mode):
    m = i2c.i2c_mode(mode)
    # published: UM10204 rev. 6, table 10: 20 ns x (VDD / 5.5 V) -> 20 ns at 5.5 V
    assert m.tf_min_at(5.5) == pytest.approx(20 * NS, rel=1e-12)
    # derived from 20 ns x (3.3 V / 5.5 V) = 12 ns
    assert m.tf_min_at(3.3) == pytest.approx(12 * NS, rel=1e-12)
    # derived from 20 ns x (1.8 V / 5.5 V) = 6.545 ns
    assert m.tf_min_at(1.8) == pytest.approx(6.545 * NS, abs=0.0005 * NS)
    np.testing.assert_allclose(m.t_of_min_at([5.5, 3.3]), [20 * NS, 12 * NS], rtol=1e-12)


def test_i2c_tr_min_at_vdd():
    # published: UM10204 rev. 6, table 10: Fast-mode tr 20 ns min at any VDD
    np.testing.assert_allclose(i2c.i2c_mode("fast").tr_min_at([1.8, 3.3, 5.5]), 20 * NS)
    # published: UM10204 rev. 6, table 10: no tr minimum ("—") for Sm and Fm+
    assert i2c.i2c_mode("standard").tr_min_at(3.3) == 0.0
    assert i2c.i2c_mode("fast-plus").tr_min_at(3.3) == 0.0
    assert i2c.i2c_mode("standard").tf_min_at(3.3) == 0.0


def test_i2c_thresholds_at_vdd():
    m = i2c.i2c_mode("fast")
    # derived from 0.3 x 3.3 V and 0.7 x 3.3 V (UM10204 rev. 6, table 9)
    assert m.v_il_at(3.3) == pytest.approx(0.99, abs=1e-12)
    assert m.v_ih_at(3.3) == pytest.approx(2.31, abs=1e-12)


@pytest.mark.parametrize("mode, f_expected", [("standard", 100e3), ("fast", 400e3),
                                              ("fast-plus", 1e6)])
def test_i2c_eq3_gives_the_mode_frequency(mode, f_expected):
    m = i2c.i2c_mode(mode)
    f = 1.0 / (m.t_low + m.t_high + m.tr_max + m.tf_max)
    # derived from UM10204 rev. 6 eq. 3, docs/references.md [D]: exactly 100 kHz, 400 kHz, 1 MHz
    assert f == pytest.approx(f_expected, rel=1e-12)
    assert f == pytest.approx(m.f_scl_max, rel=1e-12)


def test_i2c_rise_factor_from_the_thresholds():
    m = i2c.i2c_mode("fast")
    k = math.log((1 - m.v_il_rel) / (1 - m.v_ih_rel))
    # published: UM10204 rev. 6 §7.1 [C]: 30-70 % rise = 0.8473 RC
    assert k == pytest.approx(0.8473, abs=0.00005)


@pytest.mark.parametrize(
    "mode, cb, rp_expected, tol",
    [
        ("fast", 400 * PF, 885.2, 0.05),  # derived from Eq. 1, docs/references.md [D]
        ("fast", 200 * PF, 1770, 0.5),  # derived from Eq. 1, docs/references.md [D]
        ("fast", 100 * PF, 3541, 0.5),  # derived from Eq. 1, docs/references.md [D]
        ("standard", 400 * PF, 2951, 0.5),  # derived from Eq. 1, docs/references.md [D]
        ("fast-plus", 550 * PF, 257.5, 0.05),  # derived from Eq. 1, docs/references.md [D]
    ],
)
def test_i2c_rp_max_from_table_edges(mode, cb, rp_expected, tol):
    # UM10204 rev. 6 eq. 1: Rp(max) = tr / (0.8473 Cb), tr from the table
    rp = i2c.i2c_mode(mode).tr_max / (0.8473 * cb)
    assert rp == pytest.approx(rp_expected, abs=tol)


def test_i2c_cb_max_at_table_limits():
    # derived from Eq. 1 with the table's own Cb max, docs/references.md [D]: 885.2 Ω, 257.5 Ω
    fm, fp = i2c.i2c_mode("fast"), i2c.i2c_mode("fast-plus")
    assert fm.tr_max / (0.8473 * fm.cb_max) == pytest.approx(885.2, abs=0.05)
    assert fp.tr_max / (0.8473 * fp.cb_max) == pytest.approx(257.5, abs=0.05)


# ---------------------------------------------------------------------------
# I2C sink specification
# ---------------------------------------------------------------------------


def _rp_min(mode, vdd):
    v_ol, i_ol, _ = i2c.sink_spec(mode, vdd)
    return (vdd - v_ol) / i_ol  # UM10204 rev. 6 eq. 2


@pytest.mark.parametrize(
    "mode, vdd, rp_expected, tol",
    [
        ("fast", 3.3, 966.7, 0.05),  # derived from Eq. 2, docs/references.md [D]
        ("fast", 5.0, 1533, 0.5),  # derived from Eq. 2, docs/references.md [D]
        ("fast", 5.5, 1700, 0.5),  # derived from Eq. 2, docs/references.md [D]
        ("fast-plus", 3.3, 145, 0.5),  # derived from Eq. 2, docs/references.md [D]
        ("fast", 1.8, 720, 0.5),  # derived from Eq. 2 with VOL2, docs/references.md [D]
    ],
)
def test_i2c_rp_min_from_sink_spec(mode, vdd, rp_expected, tol):
    assert _rp_min(mode, vdd) == pytest.approx(rp_expected, abs=tol)


def test_i2c_um10204_example_7_2_4():
    # published: UM10204 rev. 6 §7.2.4 [C]: VDD 5 V + 10 %, 0.4 V at 3 mA -> 1.7 kΩ
    assert _rp_min("standard", 5.5) == pytest.approx(1.7e3, abs=50)


def test_i2c_slva689_example():
    # published: TI SLVA689 (Feb 2015), Fast-mode, 3.3 V, 200 pF, 0.4 V at 3 mA, tr 300 ns:
    # 966.667 Ω <= Rp <= 1.77 kΩ (docs/references.md [C2])
    m = i2c.i2c_mode("fast")
    assert _rp_min(m, 3.3) == pytest.approx(966.667, abs=0.0005)
    assert m.tr_max / (0.8473 * 200 * PF) == pytest.approx(1.77e3, abs=5)


def test_i2c_fast_mode_alternative_sink_point():
    m = i2c.i2c_mode("fast")
    # derived from Eq. 2 with 6 mA at 0.6 V, 3.3 V: 450 Ω (docs/references.md [D])
    assert (3.3 - m.v_ol_06) / m.i_ol_06 == pytest.approx(450, abs=0.5)


def test_i2c_sink_spec_switches_at_2_v():
    v_ol, i_ol, src = i2c.sink_spec("fast", [1.8, 2.0, 2.0001, 3.3])
    # published: UM10204 rev. 6, table 9: VOL2 0.2 VDD at 2 mA for VDD <= 2 V,
    # VOL1 0.4 V at 3 mA for VDD > 2 V
    np.testing.assert_allclose(v_ol, [0.36, 0.4, 0.4, 0.4], rtol=1e-12)
    np.testing.assert_allclose(i_ol, [2 * MA, 2 * MA, 3 * MA, 3 * MA], rtol=1e-12)
    assert "UM10204 rev. 6, table 9" in src


def test_i2c_sink_spec_standard_mode_low_vdd_is_blank():
    # published: UM10204 rev. 6, table 9: no VOL2 for Standard-mode ("—")
    v_ol, i_ol, _ = i2c.sink_spec("standard", 1.8)
    assert math.isnan(v_ol) and math.isnan(i_ol)
    v_ol, i_ol, _ = i2c.sink_spec("standard", 3.3)
    assert (v_ol, i_ol) == (0.4, 3 * MA)


def test_i2c_sink_spec_array_equals_scalar_loop():
    vdd = np.array([1.2, 1.8, 2.0, 2.5, 3.3, 5.0])
    for mode in MODES:
        v_arr, i_arr, _ = i2c.sink_spec(mode, vdd)
        scalars = [i2c.sink_spec(mode, float(v))[:2] for v in vdd]
        np.testing.assert_array_equal(v_arr, [s[0] for s in scalars])
        np.testing.assert_array_equal(i_arr, [s[1] for s in scalars])


# ---------------------------------------------------------------------------
# SMBus
# ---------------------------------------------------------------------------

# published: SMBus specification version 3.1, table 2, as product datasheets quote it
# (the table itself not read here: docs/references.md [C2]); from memory
# (docs/references.md [M]): the 1 MHz class's tSU:STA and tF
SMBUS31_TABLE2 = {
    #                  100k    400k   1m
    "f_smb_min_khz": (10, 10, 10),
    "f_smb_max_khz": (100, 400, 1000),
    "t_buf_us": (4.7, 1.3, 0.5),
    "t_hd_sta_us": (4.0, 0.6, 0.26),
    "t_su_sta_us": (4.7, 0.6, 0.26),
    "t_su_sto_us": (4.0, 0.6, 0.26),
    "t_hd_dat_us": (0, 0, 0),
    "t_su_dat_ns": (250, 100, 50),
    "t_timeout_min_ms": (25, 25, 25),
    "t_timeout_max_ms": (35, 35, 35),
    "t_low_us": (4.7, 1.3, 0.5),
    "t_high_min_us": (4.0, 0.6, 0.26),
    "t_high_max_us": (50, 50, 50),
    "t_low_sext_ms": (25, 25, 25),
    "t_low_mext_ms": (10, 10, 10),
    "tf_max_ns": (300, 300, 120),
    "tr_max_ns": (1000, 300, 120),
    "t_spike_ns": (None, 50, 50),  # given for the 400 kHz and 1 MHz classes
    "t_por_ms": (500, 500, 500),
}

# published: SMBus specification version 3.1, table 4, high power, as product datasheets
# quote it (docs/references.md [C2]); from memory (docs/references.md [M]): VHYS 80 mV
# and VOL 0.4 V at 4/6/20 mA
SMBUS31_TABLE4 = {
    "v_il_max_v": (0.8, 0.8, 0.8),
    "v_ih_min_v": (1.35, 1.35, 1.35),
    "v_hys_min_mv": (80, 80, 80),
    "v_ol_v": (0.4, 0.4, 0.4),
    "i_ol_ma": (4, 6, 20),
    "leakage_bus_ua": (200, 200, 200),
    "leakage_pin_ua": (10, 10, 10),
    "c_bus_max_pf": (None, 400, 400),  # stated for the 400 kHz and 1 MHz classes
    "c_pin_pf": (10, 10, 10),  # recommended
}

SMBUS_SCALE = {"us": US, "ns": NS, "ms": 1e-3, "mv": 1e-3, "ma": MA, "ua": UA,
               "khz": KHZ, "pf": PF, "v": 1.0}  # fmt: skip
CLASSES = ("100k", "400k", "1m")


def _smbus_rows(table: dict):
    for key, values in table.items():
        head, _, unit = key.rpartition("_")
        for name, printed in zip(CLASSES, values, strict=True):
            yield pytest.param(name, head, printed, SMBUS_SCALE[unit], id=f"{name}-{key}")


@pytest.mark.parametrize("name, field, printed, scale", list(_smbus_rows(SMBUS31_TABLE2)))
def test_smbus_ac_values(name, field, printed, scale):
    # published: SMBus specification version 3.1, table 2 ([C2] and [M]: see the table)
    cls = smbus.smbus_class(name)
    value = getattr(cls, field)
    if printed is None:
        assert value is None
    else:
        assert value == pytest.approx(printed * scale, rel=1e-12, abs=0)
    assert cls.source_of(field) == "SMBus specification version 3.1, table 2"


@pytest.mark.parametrize("name, field, printed, scale", list(_smbus_rows(SMBUS31_TABLE4)))
def test_smbus_high_power_dc_values(name, field, printed, scale):
    # published: SMBus specification version 3.1, table 4 ([C2] and [M]: see the table)
    cls = smbus.smbus_class(name)
    value = getattr(cls, field)
    if printed is None:
        assert value is None
    else:
        assert value == pytest.approx(printed * scale, rel=1e-12, abs=0)
    assert cls.source_of(field) == "SMBus specification version 3.1, table 4"


def test_smbus_100k_blank_fields_are_explained():
    note = smbus.smbus_class("100k").note
    assert "CBUS" in note and "from memory" in note and "tSPIKE" in note


def test_smbus_low_power_values():
    lp = smbus.SMBUS_LOW_POWER
    # from memory: SMBus specification version 3.1, table 3 (no quote found;
    # docs/references.md [M])
    assert (lp.vdd_min, lp.vdd_max) == (1.62, 5.5)
    assert (lp.v_il_max, lp.v_ih_min) == (0.8, 1.35)
    assert lp.v_ol == 0.4 and lp.i_ol == pytest.approx(350 * UA, rel=1e-12)
    assert lp.leakage_pin == pytest.approx(5 * UA, rel=1e-12)
    assert lp.i_pullup_min == pytest.approx(100 * UA, rel=1e-12)
    assert lp.i_pullup_max == pytest.approx(350 * UA, rel=1e-12)
    assert lp.r_series_max == pytest.approx(1.1e3, rel=1e-12)
    assert lp.source_dc == "SMBus specification version 3.1, table 3"


@pytest.mark.parametrize("cls", [*CLASSES, "low-power", smbus.SMBUS_LOW_POWER])
def test_smbus_rise_points(cls):
    v_lo, v_hi = smbus.rise_points(cls)
    # published: SMBus 3.1, as datasheets quote it (docs/references.md [C2], tF's points
    # in doubt there): rise/fall from VIL,max - 0.15 V = 0.65 V to VIH,min + 0.15 V =
    # 1.50 V
    assert v_lo == pytest.approx(0.65, abs=1e-12)
    assert v_hi == pytest.approx(1.50, abs=1e-12)


@pytest.mark.parametrize(
    "vdd, k_expected",
    [
        (3.3, 0.387),  # derived from ln((VDD-0.65)/(VDD-1.5)), docs/references.md [D]
        (1.8, 1.344),  # derived from ln((VDD-0.65)/(VDD-1.5)), docs/references.md [D]
    ],
)
def test_smbus_rise_rc_factor(vdd, k_expected):
    # three decimals printed: tolerance half a unit in the last place
    assert smbus.rise_rc_factor("400k", vdd) == pytest.approx(k_expected, abs=0.0005)


def test_smbus_rise_rc_factor_array_and_limit():
    vdd = np.array([1.8, 3.3, 5.0])
    k = smbus.rise_rc_factor("1m", vdd)
    np.testing.assert_array_equal(k, [smbus.rise_rc_factor("1m", float(v)) for v in vdd])
    # derived from the limit VDD -> infinity: k -> (v_hi - v_lo) / VDD -> 0
    assert smbus.rise_rc_factor("1m", 1e6) == pytest.approx(0.85e-6, rel=1e-5)
    with pytest.raises(InputError, match="field 'vdd'.*above 1.50 V"):
        smbus.rise_rc_factor("1m", 1.5)
    with pytest.raises(InputError, match="field 'vdd'"):
        smbus.rise_rc_factor("1m", [3.3, math.nan])


def test_smbus_timing_follows_i2c_in_each_class():
    # custom consistency check between two transcriptions: as recorded in docs/references.md,
    # SMBus 3.1 table 2 and UM10204 rev. 6 table 10 print the same numbers for these
    # limits, class by class, so a typo in either table shows up here
    for cls_name, mode_name in zip(CLASSES, MODES, strict=True):
        c, m = smbus.smbus_class(cls_name), i2c.i2c_mode(mode_name)
        for sm_field, i2c_field in [("t_buf", "t_buf"), ("t_hd_sta", "t_hd_sta"),
                                    ("t_su_sta", "t_su_sta"), ("t_su_sto", "t_su_sto"),
                                    ("t_low", "t_low"), ("t_high_min", "t_high"),
                                    ("t_su_dat", "t_su_dat"), ("tr_max", "tr_max"),
                                    ("tf_max", "tf_max"), ("f_smb_max", "f_scl_max")]:
            assert getattr(c, sm_field) == getattr(m, i2c_field), (cls_name, sm_field)


# ---------------------------------------------------------------------------
# JEDEC
# ---------------------------------------------------------------------------

# from memory: JEDEC JESD8 family, as recorded in docs/references.md (documents not stored;
# [M] unless marked [C2]); (name, standard, vdd_nom, vdd range, VIH, VIL) with levels as
# (offset V, per-VDD)
JEDEC_INPUTS = [
    ("lvcmos33", "JESD8C.01", 3.3, (3.0, 3.6), (2.0, 0), (0.8, 0)),  # [M]
    ("lvttl33", "JESD8C.01", 3.3, (3.0, 3.6), (2.0, 0), (0.8, 0)),  # [M]
    ("lvcmos25", "JESD8-5A.01", 2.5, (2.3, 2.7), (1.7, 0), (0.7, 0)),  # [M]
    ("lvcmos18", "JESD8-7A", 1.8, (1.65, 1.95), (0, 0.65), (0, 0.35)),  # [M]
    ("lvcmos12", "JESD8-12A.01", 1.2, (1.1, 1.3), (0, 0.65), (0, 0.35)),  # [M]
]

# (name, i_load A, VOH (offset, per-VDD), VOL (offset, per-VDD), from_memory)
JEDEC_OUTPUTS = [
    ("lvcmos33", 100 * UA, (-0.2, 1), (0.2, 0), True),  # from memory: JESD8C.01 [M]
    ("lvttl33", 2 * MA, (2.4, 0), (0.4, 0), True),  # from memory: JESD8C.01 [M]
    ("lvcmos25", 0.1 * MA, (-0.2, 1), (0.2, 0), True),  # from memory: JESD8-5A.01 [M]
    ("lvcmos25", 1 * MA, (2.0, 0), (0.4, 0), False),  # published: JESD8-5A.01 [C2]
    ("lvcmos25", 2 * MA, (1.7, 0), (0.7, 0), True),  # from memory: JESD8-5A.01 [M]
    ("lvcmos18", 2 * MA, (-0.45, 1), (0.45, 0), False),  # published: JESD8-7A [C2]
    ("lvcmos12", 2 * MA, (0, 0.75), (0, 0.25), False),  # published: JESD8-12A.01 [C2]
]


@pytest.mark.parametrize("name, standard, vdd_nom, vdd_range, vih, vil", JEDEC_INPUTS)
def test_jedec_inputs(name, standard, vdd_nom, vdd_range, vih, vil):
    s = jedec.logic_levels(name)
    assert s.standard == standard
    assert (s.vdd_nom, s.vdd_min, s.vdd_max) == (vdd_nom, *vdd_range)
    assert (s.v_ih_min.offset, s.v_ih_min.per_vdd) == vih
    assert (s.v_il_max.offset, s.v_il_max.per_vdd) == vil
    # docs/references.md marks every JEDEC input threshold [M]
    assert s.from_memory is True
    assert s.source == f"from memory: {standard}"


def test_jedec_output_rows():
    got = [
        (s.name, o.i_load, (o.v_oh_min.offset, o.v_oh_min.per_vdd),
         (o.v_ol_max.offset, o.v_ol_max.per_vdd), o.from_memory)
        for s in jedec.LOGIC_LEVELS.values()
        for o in s.outputs
    ]  # fmt: skip
    assert len(got) == len(JEDEC_OUTPUTS)
    for row, expected in zip(got, JEDEC_OUTPUTS, strict=True):
        assert row[0] == expected[0]
        assert row[1] == pytest.approx(expected[1], rel=1e-12)
        assert row[2:] == expected[2:]


def test_jedec_from_memory_tag_matches_source_string():
    for s in jedec.LOGIC_LEVELS.values():
        assert s.source.startswith("from memory:") == s.from_memory
        for o in s.outputs:
            assert o.source.startswith("from memory:") == o.from_memory
            assert s.standard in o.source
        assert s.any_from_memory


def test_jedec_levels_at_vdd():
    s18 = jedec.logic_levels("lvcmos18")
    # derived from 0.65 x 1.8 V and 0.35 x 1.8 V (JESD8-7A, from memory)
    assert s18.v_ih_at(1.8) == pytest.approx(1.17, abs=1e-12)
    assert s18.v_il_at(1.8) == pytest.approx(0.63, abs=1e-12)
    # derived from VDD - 0.45 V at 1.65 V (JESD8-7A [C2])
    assert s18.outputs[0].v_oh_min.at(1.65) == pytest.approx(1.2, abs=1e-12)
    np.testing.assert_allclose(
        jedec.logic_levels("lvcmos33").outputs[0].v_oh_min.at([3.0, 3.6]), [2.8, 3.4]
    )
    assert str(s18.outputs[0].v_oh_min) == "VDD − 0.45 V"
    assert str(jedec.logic_levels("lvttl33").v_ih_min) == "2 V"


# ---------------------------------------------------------------------------
# Every row names its source
# ---------------------------------------------------------------------------


def test_every_row_has_a_source():
    for m in i2c.I2C_MODES.values():
        assert m.source_io and m.source_bus and m.from_memory is False
        for f in dataclasses.fields(m):
            if f.name in ("name", "source_io", "source_bus", "from_memory"):
                continue
            assert m.source_of(f.name).startswith("I2C-bus specification UM10204 rev. 6, table")
    for c in smbus.SMBUS_CLASSES.values():
        assert c.source_ac and c.source_dc and c.from_memory is False
        for f in dataclasses.fields(c):
            if f.name in ("name", "source_ac", "source_dc", "from_memory", "note"):
                continue
            assert c.source_of(f.name).startswith("SMBus specification version 3.1, table")
    assert smbus.SMBUS_LOW_POWER.source_dc
    for s in jedec.LOGIC_LEVELS.values():
        assert s.source.strip()
        assert all(o.source.strip() for o in s.outputs)


# ---------------------------------------------------------------------------
# Look-ups and errors
# ---------------------------------------------------------------------------


def test_lookups_are_case_insensitive():
    assert i2c.i2c_mode(" Fast-Plus ") is i2c.I2C_MODES["fast-plus"]
    assert smbus.smbus_class("1M") is smbus.SMBUS_CLASSES["1m"]
    assert jedec.logic_levels("LVTTL33") is jedec.LOGIC_LEVELS["lvttl33"]


@pytest.mark.parametrize(
    "func, bad, choices",
    [
        (standards.i2c_mode, "fm+", "standard, fast, fast-plus"),
        (standards.i2c_mode, None, "standard, fast, fast-plus"),
        (standards.smbus_class, "100", "100k, 400k, 1m"),
        (standards.logic_levels, "lvcmos5", "lvcmos33, lvttl33, lvcmos25, lvcmos18, lvcmos12"),
    ],
)
def test_unknown_names_list_the_choices(func, bad, choices):
    with pytest.raises(InputError, match=choices):
        func(bad)


@pytest.mark.parametrize("bad", [0.0, -3.3, math.inf, math.nan, [3.3, -1.0], "x"])
def test_bad_vdd(bad):
    with pytest.raises(InputError, match="field 'vdd'"):
        i2c.sink_spec("fast", bad)
    with pytest.raises(InputError, match="field 'vdd'"):
        i2c.i2c_mode("fast").tf_min_at(bad)
    with pytest.raises(InputError, match="field 'vdd'"):
        jedec.logic_levels("lvcmos18").v_ih_at(bad)


def test_source_of_unknown_field():
    with pytest.raises(InputError, match="field 'field'.*tr_max"):
        i2c.i2c_mode("fast").source_of("rise")
    with pytest.raises(InputError, match="field 'field'"):
        smbus.smbus_class("400k").source_of("name")


def test_rows_are_frozen_and_tables_read_only():
    with pytest.raises(dataclasses.FrozenInstanceError):
        i2c.i2c_mode("fast").tr_max = 1.0
    with pytest.raises(TypeError):
        i2c.I2C_MODES["fast"] = None
    with pytest.raises(TypeError):
        smbus.SMBUS_CLASSES["1m"] = None


def test_package_exports():
    assert sorted(standards.__all__) == sorted(
        ["i2c_mode", "sink_spec", "smbus_class", "rise_points", "rise_rc_factor",
         "logic_levels"]
    )  # fmt: skip
    for name in standards.__all__:
        assert callable(getattr(standards, name))


@pytest.mark.parametrize("mode, t_ns, cb_max_pf", [("standard", 250, 400), ("fast", 250, 400),
                                                    ("fast-plus", 120, 550)])
def test_i2c_output_fall_guarantee(mode, t_ns, cb_max_pf):
    # published: UM10204 rev. 6, table 9, tof max (Sm, Fm: 250 ns for Cb 10-400 pF;
    # Fm+: 120 ns); from memory: the Fm+ guarantee taken over the mode's 550 pF (table 10)
    f = i2c.output_fall(mode)
    assert f.t_max == pytest.approx(t_ns * NS, rel=1e-12)
    assert f.cb_min == pytest.approx(10 * PF, rel=1e-12)
    assert f.cb_max == pytest.approx(cb_max_pf * PF, rel=1e-12)
    assert f.source.startswith("I2C-bus specification UM10204 rev. 6, table 9")
