"""The open-drain engine at the edges of physics and of the standards' ranges: a line
the sink cannot pull down (no fall time, said in words, never ``inf``), a high level the
leakage would drop below ground (held at 0 V), and an SMBus clock below fSMB's minimum."""

from __future__ import annotations

import json
import math

import pytest
from test_opendrain import bus_result, fig, one_bus

from pinlib.engines.limits import limits_for
from pinlib.model.result import BusResult, DesignResult
from pinlib.physics.rc import RISE_30_70
from pinlib.present.detail import detail_lines
from pinlib.present.report import problem_line


def _no_infinity(res: BusResult) -> None:
    """Nothing in the result reads as an unbounded or missing number."""
    text = json.dumps(res.to_json(), ensure_ascii=False)
    assert "Infinity" not in text and "NaN" not in text
    for _, signal, c in res.all_checks():
        line = problem_line(res, None, signal, c)
        assert " inf " not in f" {line} " and "inf s" not in line and "∞" not in line
    lines = detail_lines(DesignResult("extremes", buses=[res]), 100)
    assert not any("∞" in ln or "inf s" in ln for ln in lines)


# --------------------------------------------------------------------- no fall time


def test_a_line_the_sink_cannot_pull_down_has_no_fall_time(tmp_path):
    # derived: 3.3 V across a 1 mΩ pull-up is 3.3 kA, against t-ctrl-3v3's 3 mA sink
    # (test data, invented): the line stays near the rail and never reaches 0.3·VDD
    res = bus_result(tmp_path, one_bus(pullup="1 mΩ"))
    chk = res.check("fall-time")
    assert chk.status == "fail"
    assert chk.value is None and chk.margin is None
    assert chk.reason and "never falls" in chk.reason
    # published: UM10204 rev. 6 table 10, tf measured down to 0.3·VDD = 990 mV at 3.3 V
    assert "990 mV" in chk.reason
    assert "inf" not in chk.message and chk.fix and chk.message.count(chk.fix) == 1
    for name in ("fall_time", "fall_time_sda", "fall_time_scl", "scl_frequency_effective"):
        assert fig(res, name) is None, name
    # each says why in words, naming the line the clock is worked out from
    assert res.figures["fall_time"].reason == ("none: the line never falls to VIL (see "
                                               "Fall time)")
    assert res.figures["scl_frequency_effective"].reason == ("none: SCL never falls to VIL "
                                                             "(see Fall time)")
    assert "no effective frequency" in res.check("scl-frequency").message
    _no_infinity(res)


def test_a_line_that_falls_keeps_its_figures(tmp_path):
    res = bus_result(tmp_path, one_bus(pullup="2.2 kΩ"))
    assert math.isfinite(fig(res, "fall_time")) and fig(res, "scl_frequency_effective") > 0
    chk = res.check("fall-time")
    assert chk.reason is None and "fall time at most" in chk.message


# --------------------------------------------------------------------- high level


@pytest.mark.parametrize("pullup", ["1 GΩ", "4.7 MΩ"])
def test_leakage_holds_the_high_level_at_ground_not_below(tmp_path, pullup):
    # derived: two pins of 1 µA (test data, invented) through 4.7 MΩ drop 9.4 V, through
    # 1 GΩ 2 kV, both more than the 3.3 V rail; the pins sink the leakage to ground and
    # cannot pull the line below it: the level is 0 V, the check fails
    res = bus_result(tmp_path, one_bus(pullup=pullup))
    assert fig(res, "v_oh") == 0.0
    chk = res.check("v-oh")
    assert chk.status == "fail" and chk.value == 0.0
    assert "pulls the line to ground" in chk.message
    assert "-" not in problem_line(res, None, "sda", chk).split("VOH")[1].split(",")[0]


def test_a_high_level_above_ground_is_worded_as_before(tmp_path):
    res = bus_result(tmp_path, one_bus(pullup="10 kΩ"))
    assert "leakage ×" in res.check("v-oh").message
    assert "ground" not in res.check("v-oh").message


# --------------------------------------------------------------------- SMBus clock

SMBUS = ['{ ref = "U1", part = "t-ctrl-3v3", role = "controller" }',
         '{ ref = "U9", part = "t-gauge-smbus" }']


def _smbus(tmp_path, clock: str):
    return bus_result(tmp_path, one_bus(protocol="smbus", mode="100k", pullup="2.2 kΩ",
                                        devices=SMBUS, more=f'clock = "{clock}"'))


def test_smbus_limits_carry_the_minimum_clock():
    # published: SMBus specification 3.1, table 2: fSMB min 10 kHz in every class (as
    # datasheets quote it; docs/references.md [C2])
    for mode in ("100k", "400k", "1m"):
        assert limits_for("smbus", mode).f_min == 10e3
    # published: UM10204 rev. 6 table 10: fSCL min 0 Hz (no minimum) in every mode
    assert limits_for("i2c", "fast").f_min is None


def test_smbus_clock_below_its_minimum_fails(tmp_path):
    chk = _smbus(tmp_path, "1 kHz").check("scl-frequency")
    # published: SMBus specification 3.1, table 2: fSMB min 10 kHz (as datasheets quote
    # it; docs/references.md [C2])
    assert chk.status == "fail" and chk.limit == 10e3 and chk.value == 1e3
    assert chk.margin == pytest.approx(-0.9)  # derived: (1 − 10)/10
    assert "table 2 (fSMB)" in chk.source and "minimum 10 kHz" in chk.message
    assert chk.fix and "10 kHz" in chk.fix


def test_smbus_clock_inside_its_range_passes_against_the_nearer_limit(tmp_path):
    # published: SMBus specification 3.1, table 2: fSMB 10–100 kHz for the 100 kHz class
    # (as datasheets quote it; docs/references.md [C2])
    low = _smbus(tmp_path, "10 kHz").check("scl-frequency")
    assert low.status != "fail" and low.limit == 10e3
    mid = _smbus(tmp_path, "80 kHz").check("scl-frequency")
    # derived: 80 kHz is 20 % under the maximum and 700 % over the minimum
    assert mid.status == "pass" and mid.limit == 100e3
    assert mid.margin == pytest.approx(0.2)


def test_i2c_has_no_minimum_clock(tmp_path):
    # published: UM10204 rev. 6 table 10: fSCL min 0 Hz
    chk = bus_result(tmp_path, one_bus(more='clock = "1 kHz"')).check("scl-frequency")
    assert chk.status == "pass" and chk.limit == 400e3


# --------------------------------------------------------------------- Rp(max) unbounded


def _zero_cb_result(tmp_path):
    """A bus whose pins load it with nothing (test data, invented: the t- parts with
    c_in 0 pF) and no trace: Cb is 0, and UM10204 eq. 1 bounds the pull-up by nothing."""
    from test_opendrain import HEAD, PARTS

    from pinlib.engines.dispatch import check_design
    from pinlib.model.design import load_design

    lib = tmp_path / "lib"
    lib.mkdir()
    for name in ("t-ctrl-3v3", "t-target"):
        text = (PARTS / f"{name}.toml").read_text(encoding="utf-8")
        text = text.replace('c_in = "10 pF"', 'c_in = "0 pF"').replace(
            f'id = "{name}"', f'id = "z{name}"')
        (lib / f"z{name}.toml").write_text(text, encoding="utf-8")
    path = tmp_path / "d.toml"
    path.write_text(HEAD + one_bus(devices=['{ ref = "U1", part = "zt-ctrl-3v3", '
                                            'role = "controller" }',
                                            '{ ref = "U2", part = "zt-target" }']),
                    encoding="utf-8")
    design = load_design(path, library_folders=[lib, PARTS])
    return design, check_design(design)


def test_an_unbounded_rp_max_is_said_in_words_everywhere(tmp_path):
    from pinlib.present.report import bus_line
    from pinlib.present.review import render_markdown

    design, result = _zero_cb_result(tmp_path)
    res = result.buses[0]
    assert fig(res, "bus_capacitance") == 0.0
    f = res.figures["rp_max"]
    assert f.value is None and f.reason and "no upper bound" in f.reason
    js = res.to_json()["figures"]["rp_max"]
    assert js["value"] is None and js["reason"] == f.reason
    assert "no upper bound" in bus_line(res) and "∞" not in bus_line(res)
    lines = detail_lines(result, 80)
    row = next(ln for ln in lines if ln.strip().startswith("Rp(max)"))
    assert "no upper bound" in row and "∞" not in row
    md = render_markdown(design, result)
    assert "no upper bound" in md and "∞" not in md
    _no_infinity(res)


def test_a_pullup_inside_an_unbounded_window_passes_against_rp_min(tmp_path):
    # derived: Cb 0 leaves Rp(max) unbounded; the auto pull-up 2 kΩ (tolerance 0 %)
    # sits above Rp(min) (3.3 − 0.4)/3 mA = 966.7 Ω (UM10204 rev. 6 eq. 2), more than
    # twice it: the window holds it and the margin is to Rp(min)
    _, result = _zero_cb_result(tmp_path)
    for c in result.buses[0].checks:
        if c.id == "pullup-window":
            assert c.status == "pass", c.message
            assert c.limit == pytest.approx(966.7, abs=0.05)
            assert c.margin == pytest.approx(2e3 / 966.67 - 1, rel=1e-4)
            assert "at −0 %" in c.message


# --------------------------------------------------------------------- leakage of many pins

_LEAKY = """format = "pinlib.part/1"
id = "t-target-leaky"
title = "Test target leaking 10 µA a pin (test data, invented)"
category = "sensor"
extends = "t-target"
provenance = { basis = "datasheet", source = "test data, invented" }

[pins.sda]
c_in = "2 pF"
leakage = "10 µA"

[pins.scl]
c_in = "2 pF"
leakage = "10 µA"
"""


def _leaky_bus(tmp_path, pullup: str, n: int = 30, mode: str = "standard",
               protocol: str = "i2c"):
    """t-ctrl-3v3 (1 µA a pin) and ``n`` targets leaking 10 µA a pin (test data, invented)
    on a 3.3 V rail, tolerances 0."""
    from test_opendrain import HEAD, PARTS

    from pinlib.engines import opendrain
    from pinlib.model.design import load_design

    team = tmp_path / "team"
    team.mkdir(parents=True)
    (team / "t-target-leaky.toml").write_text(_LEAKY, encoding="utf-8")
    devices = ['{ ref = "U1", part = "t-ctrl-3v3", role = "controller" }'] + [
        f'{{ ref = "U{k + 2}", part = "t-target-leaky" }}' for k in range(n)]
    path = tmp_path / "d.toml"  # tmp_path exists: team was made inside it
    path.write_text(HEAD + one_bus(mode=mode, pullup=pullup, devices=devices,
                                   protocol=protocol), encoding="utf-8")
    d = load_design(path, library_folders=[PARTS, team])
    return opendrain.evaluate_bus(d.buses[0], d)


def test_auto_keeps_the_high_level_noise_margin_against_leakage(tmp_path):
    # derived from UM10204 rev. 6 §7.4 and table 10 (VnH 0.2·VDD): the high level
    # VDD − ΣI·Rp must stay 0.2·VDD above VIH 0.7·VDD, so Rp ≤ 0.1·VDD / ΣI =
    # 0.33 V / 301 µA = 1096 Ω (30 pins of 10 µA and the controller's 1 µA, test
    # data, invented); Rp(min) = (3.3 − 0.4)/3 mA = 966.7 Ω (eq. 2): of E24 only
    # 1.0 kΩ lies between.  The rise time allows far more (eq. 1: 1 µs / (0.8473 ·
    # 70 pF) = 16.9 kΩ), which the choice took alone before
    res = _leaky_bus(tmp_path, "auto")
    assert fig(res, "rp_max") == pytest.approx(16860, rel=1e-3)
    assert fig(res, "pullup") == pytest.approx(1000.0)
    for signal in ("SDA", "SCL"):
        chk = next(c for c in res.checks
                   if c.id == "noise-margin-high" and c.subject == signal)
        # derived: 3.3 − 301 µA × 1 kΩ − 2.31 = 0.689 V against 0.66 V
        assert chk.value == pytest.approx(0.689, abs=1e-6)
        assert chk.status != "fail"


def test_a_leakage_noise_margin_failure_names_the_largest_pullup(tmp_path):
    # derived as above: the effective pull-up must be at most 1096 Ω (printed 1.1 kΩ)
    res = _leaky_bus(tmp_path, "1.6 kΩ")
    chk = next(c for c in res.checks if c.id == "noise-margin-high" and c.subject == "SDA")
    assert chk.status == "fail"
    assert chk.fix and "at most 1.1 kΩ" in chk.fix and chk.fix in chk.message
    assert "leakage" in chk.fix
    # derived the same way where the drop (30 V) is larger than the rail and the level
    # rests at 0 V: the bound does not move with the pull-up that failed
    res = _leaky_bus(tmp_path / "b", "100 kΩ")
    for id in ("noise-margin-high", "v-oh"):
        chk = next(c for c in res.checks if c.id == id and c.subject.startswith("SDA"))
        assert chk.status == "fail"
        # v-oh: VIH 0.7·VDD (UM10204 table 9) without the margin, 0.99 V / 301 µA
        want = "1.1 kΩ" if id == "noise-margin-high" else "3.29 kΩ"
        assert f"at most {want}" in chk.fix, (id, chk.fix)


def test_a_rise_the_leakage_never_completes_has_no_figure(tmp_path):
    # derived from UM10204 rev. 6 §7.4: the line rises toward VDD − ΣI·Rp.  With 1.6 kΩ
    # and 301 µA (test data, invented) it stops at 2.82 V: past 0.7·VDD (2.31 V), so tr
    # stands, short of 0.9·VDD (2.97 V), so the 10–90 % rise has no number
    res = _leaky_bus(tmp_path, "1.6 kΩ")
    assert fig(res, "rise_time") is not None and fig(res, "scl_frequency_effective")
    f = res.figures["rise_time_10_90"]
    assert f.value is None and "never rises to 2.97 V" in f.reason and "2.82 V" in f.reason
    # and so has each line's own 10–90 % rise, naming its line
    for sig in ("sda", "scl"):
        f = res.figures[f"rise_time_10_90_{sig}"]
        assert f.value is None and f"{sig.upper()} never rises to 2.97 V" in f.reason
    # with 10 kΩ it stops at 0.29 V: no rise, clock or setup figure worked from tr
    res = _leaky_bus(tmp_path / "b", "10 kΩ")
    for name in ("rise_time", "rise_time_10_90", "rise_time_sda", "rise_time_scl",
                 "rise_time_10_90_sda", "rise_time_10_90_scl",
                 "scl_frequency_effective", "sda_setup_margin"):
        f = res.figures[name]
        assert f.value is None and "leakage" in f.reason, name
    assert "SCL never rises to 2.31 V" in res.figures["scl_frequency_effective"].reason
    # the rise-time check fails without a value, saying why, as a line that never falls
    # fails its fall time
    chk = next(c for c in res.checks if c.id == "rise-time" and c.subject == "SDA")
    assert chk.value is None and chk.margin is None and chk.status == "fail"
    assert "never rises to 2.31 V" in chk.reason and chk.fix
    lines = detail_lines(DesignResult("leak", buses=[res]), 80)
    assert any("never rises to 2.31 V, held at 290 mV" in ln for ln in lines)
    # with 1.6 kΩ the rise completes: the check keeps the specification's formula
    res = _leaky_bus(tmp_path / "c", "1.6 kΩ")
    chk = next(c for c in res.checks if c.id == "rise-time")
    # derived from UM10204 rev. 6 §7.1 eq. 1 (tolerances 0)
    assert chk.value == pytest.approx(RISE_30_70 * 1600.0 * fig(res, "bus_capacitance"),
                                      rel=1e-12)


def test_smbus_bus_leakage_is_checked_against_ileak_bus(tmp_path):
    # published: SMBus specification 3.1, table 4 (high-power DC): ILEAK-BUS ±200 µA a
    # bus segment (as datasheets quote it; docs/references.md [C2]).  derived:
    # t-ctrl-3v3's 1 µA and 25 targets of 10 µA (test data, invented) = 251 µA on each
    # line, over the limit; 15 targets = 151 µA, under it
    res = _leaky_bus(tmp_path, "1.5 kΩ", n=25, mode="100k", protocol="smbus")
    chk = next(c for c in res.checks if c.id == "bus-leakage" and c.subject == "SDA")
    assert chk.status == "fail"
    assert chk.value == pytest.approx(251e-6, rel=1e-9)
    assert chk.limit == pytest.approx(200e-6)
    assert "table 4" in chk.source and "ILEAK-BUS" in chk.source
    assert chk.fix and chk.fix in chk.message
    res = _leaky_bus(tmp_path / "b", "1.5 kΩ", n=15, mode="100k", protocol="smbus")
    chk = next(c for c in res.checks if c.id == "bus-leakage" and c.subject == "SCL")
    assert chk.status == "pass" and chk.value == pytest.approx(151e-6, rel=1e-9)


def test_i2c_has_no_bus_leakage_check(tmp_path):
    # published: UM10204 rev. 6 table 9 limits each pin's input current (±10 µA), not a
    # bus's sum: no bus-leakage check on I2C
    res = _leaky_bus(tmp_path, "1 kΩ")
    assert not any(c.id == "bus-leakage" for c in res.checks)


def test_a_missing_sda_setup_margin_says_why(tmp_path):
    # derived: only a controller on the bus, so no target drives SDA for a read and
    # there is no data setup to budget: the figure has no number, and says why
    devices = ['{ ref = "U1", part = "t-ctrl-3v3", role = "controller" }']
    res = bus_result(tmp_path, one_bus(devices=devices))
    f = res.figures["sda_setup_margin"]
    assert f.value is None and f.reason and "drives SDA" in f.reason
    assert f.to_json()["reason"] == f.reason
    lines = detail_lines(DesignResult("setup", buses=[res]), 80)
    assert any("SDA setup margin" in ln and "drives SDA" in ln for ln in lines)


# --------------------------------------------------------------------- Cb at each limit


@pytest.mark.parametrize("protocol,mode,cb_max_pf", [
    ("i2c", "standard", 400),   # published: UM10204 rev. 6 table 10, Cb 400 pF
    ("i2c", "fast", 400),       # published: UM10204 rev. 6 table 10, Cb 400 pF
    ("i2c", "fast-plus", 550),  # published: UM10204 rev. 6 table 10, Cb 550 pF
    ("smbus", "400k", 400),     # published: SMBus 3.1 table 4, CBUS 400 pF ([C2])
    ("smbus", "1m", 400),       # published: SMBus 3.1 table 4, CBUS 400 pF ([C2])
])
def test_bus_capacitance_at_and_just_past_each_limit(tmp_path, protocol, mode, cb_max_pf):
    # the two test pins carry 10 pF each (test data, invented); the rest is extra.
    # At the limit the margin is 0: it passes, with the design's warning; 1 pF past
    # it fails (a published limit)
    at = bus_result(tmp_path, one_bus(protocol=protocol, mode=mode,
                                      extra=f"{cb_max_pf - 20} pF"))
    chk = next(c for c in at.checks if c.id == "bus-capacitance" and c.subject == "SDA")
    assert chk.value == pytest.approx(cb_max_pf * 1e-12, rel=1e-12)
    assert chk.status == "warn" and chk.margin == pytest.approx(0.0, abs=1e-12)
    past = bus_result(tmp_path, one_bus(protocol=protocol, mode=mode,
                                        extra=f"{cb_max_pf - 19} pF"))
    chk = next(c for c in past.checks if c.id == "bus-capacitance" and c.subject == "SDA")
    assert chk.status == "fail"
    # derived: (Cb max − (Cb max + 1 pF)) / Cb max
    assert chk.margin == pytest.approx(-1.0 / cb_max_pf, rel=1e-9)
    assert ("table 10" if protocol == "i2c" else "table 4") in chk.source


# --------------------------------------------------------------------- SMBus sink classes


@pytest.mark.parametrize("mode,rp_min", [
    # derived from UM10204 rev. 6 eq. 2 with SMBus 3.1 table 4's high-power sink of each
    # class, VOL 0.4 V at 4 / 6 / 20 mA, on a 3.3 V rail: (3.3 − 0.4)/IOL
    ("100k", 725.0), ("400k", 483.3), ("1m", 145.0),
])
def test_smbus_default_sink_follows_its_class(tmp_path, mode, rp_min):
    devices = ['{ ref = "U1", part = "t-controller-bare", role = "controller" }',
               '{ ref = "U2", part = "t-target-bare" }']
    res = bus_result(tmp_path, one_bus(protocol="smbus", mode=mode, devices=devices))
    assert fig(res, "rp_min") == pytest.approx(rp_min, abs=0.05)
    # SMBus defines no noise margins (SMBus 3.1): no such checks, levels only
    assert not any(c.id.startswith("noise-margin") for c in res.checks)
    # the SMBus rise time runs between 0.65 V and 1.50 V: factor
    # ln((3.3 − 0.65)/(3.3 − 1.5)) = 0.3868 (derived; docs/references.md [D])
    assert fig(res, "rise_factor") == pytest.approx(0.3868, abs=5e-5)


def test_auto_does_not_trade_the_sink_for_the_leakage(tmp_path):
    # derived: 40 targets of 10 µA and the controller's 1 µA (test data, invented)
    # allow Rp ≤ 0.33 V / 401 µA = 823 Ω, under Rp(min) 966.7 Ω (eq. 2): no value
    # meets both, so the choice stays inside the sink's window (overloading a
    # datasheet sink is no cure for a noise margin) and the noise margin says so
    res = _leaky_bus(tmp_path, "auto", n=40)
    assert fig(res, "pullup") >= 966.7
    window = next(c for c in res.checks if c.id == "pullup-window" and c.subject == "SDA")
    assert window.status != "fail"
    nm = next(c for c in res.checks if c.id == "noise-margin-high" and c.subject == "SDA")
    assert nm.status == "fail" and "no pull-up meets both" in nm.fix
    assert "at most 823 Ω" in nm.fix


def test_a_load_far_beyond_the_mode_gets_no_sizing_advice(tmp_path):
    # 1 µF on a Fast-mode bus is 2,500 times UM10204 rev. 6 table 10's 400 pF: the advice
    # had named a buffer splitting it into thousands of segments and amperes of sink
    res = bus_result(tmp_path, one_bus(extra="1 µF", pullup="2.2 kΩ"))
    chk = next(c for c in res.checks if c.id == "pullup-window" and c.subject == "SDA")
    assert chk.status == "fail" and "2500 times" in chk.fix
    assert "segments" not in chk.fix and "sinking at least" not in chk.fix
    # ten times the limit or less keeps the full advice (common practice, no source)
    res = bus_result(tmp_path, one_bus(extra="900 pF", pullup="2.2 kΩ"))
    chk = next(c for c in res.checks if c.id == "pullup-window" and c.subject == "SDA")
    assert "segments" in chk.fix


def _weak_sink(tmp_path, i_ol: str):
    """The SDA pull-up-window check and the result of a bus whose target (the test parts'
    t-target) sinks only ``i_ol`` at 0.4 V (invented test input)."""
    from test_opendrain import HEAD, PARTS

    from pinlib.engines import opendrain
    from pinlib.model.design import load_design

    lib = tmp_path / "lib"
    lib.mkdir()
    (lib / "weak.toml").write_text(
        'format = "pinlib.part/1"\nid = "t-weak"\nextends = "t-target"\n'
        f'title = "Test target, {i_ol} sink"\n'
        'provenance = { basis = "datasheet", source = "test data, invented" }\n'
        f'[pins.sda]\ni_ol = "{i_ol}"\n', encoding="utf-8")
    path = tmp_path / "d.toml"
    path.write_text(HEAD + one_bus(devices=[
        '{ ref = "U1", part = "t-ctrl-3v3", role = "controller" }',
        '{ ref = "U2", part = "t-weak" }']), encoding="utf-8")
    d = load_design(path, library_folders=[PARTS, lib])
    res = opendrain.evaluate_bus(d.buses[0], d)
    chk = next(c for c in res.checks if c.id == "pullup-window" and c.subject == "SDA")
    assert chk.status == "fail"
    assert "segments" not in chk.fix and "bring Cb below" not in chk.fix
    return chk, res


def test_a_sink_far_too_weak_for_any_load_gets_no_sizing_advice(tmp_path):
    # a target sinking 3 nA at 0.4 V (a rating typed in nA for mA); derived: Rp(min) =
    # (3.3 V − 0.4 V) / 3 nA = 967 MΩ, so only a Cb of femtofarads rises within
    # Fast-mode's 300 ns (UM10204 rev. 6 table 10); the advice had named a buffer
    # splitting the bus into hundreds of thousands of segments
    chk, res = _weak_sink(tmp_path, "3 nA")
    assert "no shorter trace, buffer or active pull-up makes up for so weak a sink" \
        in chk.fix
    assert "is rated 3 nA" in chk.fix  # the sink that would do stays named
    _no_infinity(res)


def test_a_sink_that_no_segment_could_suit_gets_no_sizing_advice(tmp_path):
    # a target sinking 20 µA; derived: Rp(min) = 2.9 V / 20 µA = 145 kΩ, under which
    # only 2.39 pF rises in Fast-mode's 300 ns (UM10204 rev. 6 table 10): 8.4 times less
    # than the bus (under the tenfold rule), but less than the target's own pin, so no
    # buffer segment could be that light: the advice had named nine of them
    chk, _ = _weak_sink(tmp_path, "20 µA")
    assert "less than U2's own pin" in chk.fix


def test_no_pull_up_across_a_translator_is_said_not_given_as_infinity(tmp_path):
    # invented test input: tests/data/translator-cable.toml with its high side at 12 V:
    # the 1.8 V sensor's 2 mA sink cannot carry the 12 V side's pull-up at all, so
    # Rp(min) across the translator is infinite; the fix had read "(with them inf Ω)"
    from test_opendrain import PARTS, TRANSLATOR_CABLE

    from pinlib.engines.dispatch import check_design
    from pinlib.model.design import load_design

    body = TRANSLATOR_CABLE.read_text(encoding="utf-8").replace(
        'supply = "3.3 V"', 'supply = "12 V"', 1).replace(
        'library = ["parts"]', f'library = ["{PARTS.as_posix()}"]')
    path = tmp_path / "d.toml"
    path.write_text(body, encoding="utf-8")
    res = check_design(load_design(path)).bus("x")
    low = res.segments[1]
    window = next(c for c in low.checks if c.id == "pullup-window" and c.subject == "SDA")
    assert "with them no pull-up works: the sinks cannot carry the current of the " \
        "pull-ups across the translator" in window.fix
    assert "inf" not in window.fix


def _low_smbus(tmp_path, vtol: str, supply: str = "1.6 V"):
    # invented test data: an SMBus bus whose rail may sag below the rise's upper point;
    # the devices sit on their own 3.3 V rails
    devices = ['{ ref = "U1", part = "t-ctrl-3v3", role = "controller", supply = "3.3 V" }',
               '{ ref = "U9", part = "t-gauge-smbus", supply = "3.3 V" }']
    return one_bus(protocol="smbus", mode="100k", supply=supply, vtol=vtol, pullup="1 kΩ",
                   extra="20 pF", devices=devices)


def test_an_smbus_rail_below_the_upper_rise_point_fails_the_rise(tmp_path):
    # published: SMBus 3.1 table 2 measures tR from VIL,max − 0.15 V to VIH,min + 0.15 V,
    # 0.65 V to 1.50 V with table 4's levels (docs/references.md [C2]).  1.6 V −10 %
    # (1.44 V, invented test data) never gets there: the rise-time check fails without a
    # value, saying why, where pinlib once refused the file
    res = bus_result(tmp_path, _low_smbus(tmp_path, "10 %"))
    for sig in ("SDA", "SCL"):
        chk = next(c for c in res.checks if c.id == "rise-time" and c.subject == sig)
        assert chk.status == "fail" and chk.value is None and chk.margin is None
        assert f"{sig} never rises to 1.5 V" in chk.reason and "1.44 V" in chk.reason
        assert chk.fix and "1.5 V" in chk.fix
        assert chk.details["factor"] is None
    for name in ("rise_time", "rise_factor", "rp_max", "sda_setup_margin",
                 "scl_frequency_effective"):
        f = res.figures[name]
        assert f.value is None and f.reason and "1.5 V" in f.reason, name
    setup = res.check("setup-time")
    assert setup.status == "fail" and setup.value is None and "never rises" in setup.message
    lines = detail_lines(DesignResult("low", buses=[res]), 80)
    assert all(len(ln) <= 80 for ln in lines)
    assert not any("inf" in ln for ln in lines)
    # a rail exactly at the point never gets past it either (1.5 V, 0 %: invented)
    (tmp_path / "b").mkdir()
    res = bus_result(tmp_path / "b", _low_smbus(tmp_path, "0 %", "1.5 V"))
    assert res.check("rise-time").status == "fail"


def test_low_smbus_rail_agrees_across_monte_carlo_corners_candidates(tmp_path):
    from test_opendrain import design

    from pinlib.studies.candidates import rank_candidates
    from pinlib.studies.whatif.cornersearch import corners
    from pinlib.studies.whatif.montecarlo import monte_carlo
    d = design(tmp_path, _low_smbus(tmp_path, "10 %"))
    # Monte Carlo runs on: the boards whose rail is below 1.5 V fail the rise, the rest
    # pass it (uniform within ±10 %: 19 % below, derived from (1.5 − 1.44) / 0.32)
    mc = monte_carlo(d, 400, seed=1)
    rise = [c for c in mc.checks if c.id == "rise-time"]
    assert len(rise) == 2
    for c in rise:
        assert 0 < c.fails < 400
        assert c.fails / 400 == pytest.approx(0.19, abs=0.06)
    # corners: failing at the worst corner, as check says
    got = corners(d)
    chk = next(c for c in got.checks if c.id == "rise-time")
    assert chk.status == "fail" and chk.nominal_status == "fail"
    # candidates: each candidate fails the rise and its tr has no number
    ranking = rank_candidates(d, "U9")
    for c in ranking.candidates:
        if c.status != "error":
            assert c.status == "fail"
            assert c.figures["b"]["rise_time"][0] is None
