"""A check against a part's value that no datasheet, measurement or published standard
stands behind (a built-in class's typical value, basis ``generic``; an ``estimate``)
warns where it would fail (pinlib.model.result.soft_limit): on the open-drain side
(I2C/SMBus) and in the supply-range check of every engine, in the engine and in the
array paths (candidate ranking, Monte Carlo, corners, the push-pull tables) alike.
The same design with the part's value recorded from a datasheet still fails."""

from __future__ import annotations

from pathlib import Path

import pytest
from test_candidates import assert_same_ranking
from test_opendrain import one_bus, repeater_bus

from pinlib.engines.dispatch import check_design, evaluate_bus
from pinlib.model.design import load_design
from pinlib.studies import candidates as cand
from pinlib.studies import whatif

HEAD = 'format = "pinlib.design/1"\ntitle = "soft limits (invented)"\n'


def team_part(folder, id: str, extends: str, category: str, basis: str, body: str):
    """A team part extending a built-in class, its own values of basis ``basis``
    (invented test data)."""
    folder.mkdir(exist_ok=True)
    (folder / f"{id}.toml").write_text(f"""format = "pinlib.part/1"
id = "{id}"
title = "{id} (invented test part)"
category = "{category}"
extends = "{extends}"
provenance = {{ basis = "{basis}", source = "invented test sheet" }}
{body}""", encoding="utf-8")


def i2c_design(tmp_path, part: str, *, mode="fast-plus", clock="500 kHz", supply="3.3 V"):
    path = tmp_path / "d.toml"
    path.write_text(HEAD + f"""
[[bus]]
id = "i2c"
protocol = "i2c"
mode = "{mode}"
clock = "{clock}"
supply = "{supply}"
pullup = "auto"
devices = [
  {{ ref = "U1", part = "mcu-3v3", role = "controller" }},
  {{ ref = "U2", part = "{part}" }},
]
""", encoding="utf-8")
    return load_design(path, library_folders=_team(tmp_path))


def _team(tmp_path) -> list:
    team = tmp_path / "team"
    return [team] if team.is_dir() else []


def check_of(design, id: str, subject: str = "U2"):
    res = evaluate_bus(design.buses[0], design)
    return next(c for c in res.checks if c.id == id and c.subject == subject)


F_MAX = '[timing]\nf_max = "400 kHz"\n'  # invented: the class's own number, recorded


@pytest.mark.parametrize("basis, status", [(None, "warn"), ("datasheet", "fail"),
                                           ("measured", "fail"), ("estimate", "warn")])
def test_device_speed_against_a_class_value_warns_and_a_datasheet_value_fails(
        tmp_path, basis, status):
    # eeprom-i2c rates f_max 400 kHz "typical of the class (common practice)"; a 500 kHz
    # clock is 25 % over it (derived: (400 kHz − 500 kHz) / 400 kHz = −0.25)
    part = "eeprom-i2c"
    if basis is not None:
        part = f"eeprom-{basis}"
        team_part(tmp_path / "team", part, "eeprom-i2c", "memory", basis, F_MAX)
    chk = check_of(i2c_design(tmp_path, part), "device-speed")
    assert chk.margin == pytest.approx(-0.25, rel=1e-12)
    assert chk.status == status
    if status == "warn":
        assert chk.details["limit_basis"] == ("generic" if basis is None else basis)
        assert "a warning, not a failure" in chk.message
        assert "recording the part's f_max makes it firm" in chk.message
    else:
        assert "limit_basis" not in chk.details and "a warning" not in chk.message


def test_a_soft_limit_that_holds_passes_and_names_its_basis(tmp_path):
    # at 400 kHz the clock is at the class's f_max: a pass, its basis kept in details
    chk = check_of(i2c_design(tmp_path, "eeprom-i2c", mode="fast", clock="400 kHz"),
                   "device-speed")
    assert chk.status == "pass" and chk.details["limit_basis"] == "generic"


SUPPLY = 'supply = { min = "4.5 V", max = "5.5 V" }\n'  # invented: mcu-5v's class range


@pytest.mark.parametrize("basis", [None, "datasheet"])
def test_supply_range_on_an_i2c_bus(tmp_path, basis):
    # mcu-5v's class range 4.5-5.5 V on a 3.3 V rail: (3.3 − 4.5) / 4.5 = −0.267
    part = "mcu-5v"
    if basis:
        part = "mcu-5v-ds"
        team_part(tmp_path / "team", part, "mcu-5v", "controller", basis, SUPPLY)
    d = i2c_design(tmp_path, part, mode="fast", clock="400 kHz")
    chk = check_of(d, "supply-range")
    assert chk.margin == pytest.approx((3.3 - 4.5) / 4.5, rel=1e-9)
    if basis:
        assert chk.status == "fail" and "limit_basis" not in chk.details
    else:
        assert chk.status == "warn" and chk.details["limit_basis"] == "generic"
        assert "give the device its own rail" in chk.fix
        assert "recording the part's supply range makes it firm" in chk.message


def gpio_design(tmp_path, part: str, tol: str = "0 %"):
    path = tmp_path / "g.toml"
    path.write_text(HEAD + f"""
[[bus]]
id = "g"
protocol = "gpio"
supply = "3.3 V"
supply_tolerance = "{tol}"
devices = [
  {{ ref = "U1", part = "mcu-3v3", role = "controller", pin = "gpio_out" }},
  {{ ref = "U2", part = "{part}", pin = "gpio_in" }},
]
lines.g = {{ length = "5 cm", capacitance = "1 pF/cm", delay = "60 ps/cm" }}
""", encoding="utf-8")
    return load_design(path, library_folders=_team(tmp_path))


@pytest.mark.parametrize("basis", [None, "datasheet"])
def test_supply_range_on_a_push_pull_bus_and_its_corners(tmp_path, basis):
    part = "mcu-5v"
    if basis:
        part = "mcu-5v-ds"
        team_part(tmp_path / "team", part, "mcu-5v", "controller", basis, SUPPLY)
    d = gpio_design(tmp_path, part, tol="5 %")
    res = check_design(d).buses[0]
    chk = next(c for c in res.checks if c.id == "supply-range" and c.subject == "U2")
    assert chk.margin < 0
    want = "fail" if basis else "warn"
    assert chk.status == want
    # the corners and Monte Carlo take the engine's rule at each board's rail
    cr = whatif.corners(d)
    (got,) = [c for c in cr.checks if c.name == "g supply-range U2"]
    assert got.status == got.nominal_status == want
    mc = whatif.monte_carlo(d, 64, seed=1)
    (c,) = [c for c in mc.checks if c.name == "g supply-range U2"]
    assert (c.fails, c.warns) == ((64, 0) if basis else (0, 64))


@pytest.mark.parametrize("basis", [None, "datasheet"])
def test_monte_carlo_and_corners_of_an_i2c_bus_agree_with_the_engine(tmp_path, basis):
    part = "eeprom-i2c"
    if basis:
        part = "eeprom-ds"
        team_part(tmp_path / "team", part, "eeprom-i2c", "memory", basis, F_MAX)
    d = i2c_design(tmp_path, part)
    want = check_of(d, "device-speed").status
    assert want == ("fail" if basis else "warn")
    mc = whatif.monte_carlo(d, 50, seed=3)
    c = mc.find("i2c", "device-speed")
    assert (c.fails, c.warns) == ((50, 0) if basis else (0, 50))
    cr = whatif.corners(d)
    got = [c for c in cr.checks if c.id == "device-speed"]
    assert got and all(c.status == want for c in got)


def test_candidates_take_each_parts_own_basis_batched_as_one_at_a_time(tmp_path):
    # two team parts of one structure beside the class at U2 on a 500 kHz bus: the one
    # recording f_max from a datasheet fails, the estimate and the class warn, in one
    # batch as one at a time
    team = tmp_path / "team"
    team_part(team, "eeprom-ds", "eeprom-i2c", "memory", "datasheet", F_MAX)
    team_part(team, "eeprom-est", "eeprom-i2c", "memory", "estimate", F_MAX)
    d = i2c_design(tmp_path, "eeprom-i2c")
    fast = cand.rank_candidates(d, "U2")
    assert_same_ranking(fast, cand.rank_candidates_slow(d, "U2"))
    by = {c.part: c for c in fast.candidates}
    assert by["eeprom-ds"].status == "fail"
    assert by["eeprom-ds"].worst_check["id"] == "device-speed"
    assert by["eeprom-est"].status == by["eeprom-i2c"].status == "warn"
    # each as the engine has it in the design
    for part, c in by.items():
        if c.status == "error":
            continue
        res = evaluate_bus(d.with_parts({"U2": part}).buses[0], d.with_parts({"U2": part}))
        assert c.status == res.status, part


def test_a_firm_failure_is_not_hidden_behind_a_larger_soft_one(tmp_path):
    # two targets over their f_max at 500 kHz: the class's 400 kHz (25 % over) and a
    # datasheet's 450 kHz (11 % over): the check names the datasheet's and fails
    team_part(tmp_path / "team", "eeprom-450k", "eeprom-i2c", "memory", "datasheet",
              '[timing]\nf_max = "450 kHz"\n')
    path = tmp_path / "two.toml"
    path.write_text(HEAD + """
[[bus]]
id = "i2c"
protocol = "i2c"
mode = "fast-plus"
clock = "500 kHz"
supply = "3.3 V"
pullup = "auto"
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller" },
  { ref = "U2", part = "eeprom-i2c" },
  { ref = "U3", part = "eeprom-450k" },
]
""", encoding="utf-8")
    d = load_design(path, library_folders=_team(tmp_path))
    res = evaluate_bus(d.buses[0], d)
    chk = next(c for c in res.checks if c.id == "device-speed")
    assert chk.status == "fail" and chk.subject == "U3"
    assert chk.margin == pytest.approx(-1 / 9, rel=1e-12)  # derived: (450 − 500) / 450
    # the candidates at U2 (the class and its team parts) see the same
    ranking = cand.rank_candidates(d, "U2")
    assert_same_ranking(ranking, cand.rank_candidates_slow(d, "U2"))
    assert ranking.candidate("eeprom-i2c").status == "fail"


# ------------------------------------------------ the open-drain checks, one by one

TEST_PARTS = Path(__file__).parent / "data" / "parts"
PP_PARTS = Path(__file__).parent / "data" / "pushpull"


def estimate_of(tmp_path, part_id: str, where: Path = TEST_PARTS) -> str:
    """A copy of a test part (invented test data, basis ``datasheet``) whose file says
    its values are an estimate: ``<part_id>-est``, in ``tmp_path / "team"``."""
    text = (where / f"{part_id}.toml").read_text(encoding="utf-8")
    assert 'basis = "datasheet"' in text and f'id = "{part_id}"' in text
    folder = tmp_path / "team"
    folder.mkdir(exist_ok=True)
    (folder / f"{part_id}-est.toml").write_text(
        text.replace(f'id = "{part_id}"', f'id = "{part_id}-est"', 1).replace(
            'basis = "datasheet"', 'basis = "estimate"', 1), encoding="utf-8")
    return f"{part_id}-est"


def od_bus(tmp_path, body: str):
    """The one bus of a design of test parts (test_opendrain's helpers write ``body``)."""
    path = tmp_path / "od.toml"
    path.write_text(HEAD + body, encoding="utf-8")
    d = load_design(path, library_folders=[TEST_PARTS] + _team(tmp_path))
    return evaluate_bus(d.buses[0], d)


def _devices(ctrl: str, target: str) -> list:
    return [f'{{ ref = "U1", part = "{ctrl}", role = "controller" }}',
            f'{{ ref = "U2", part = "{target}" }}']


@pytest.mark.parametrize("soft", [False, True])
def test_input_voltage_against_an_estimated_abs_max(tmp_path, soft):
    # t-sensor-1v8 (invented) on its own 1.8 V rail, pulled up to 3.3 V ± 5 %: 3.465 V
    # against abs_max VDD + 0.3 V = 2.01 V at its rail's minimum
    sensor = estimate_of(tmp_path, "t-sensor-1v8") if soft else "t-sensor-1v8"
    devices = ['{ ref = "U1", part = "t-ctrl-3v3", role = "controller" }',
               f'{{ ref = "U3", part = "{sensor}", supply = "1.8 V" }}']
    chk = od_bus(tmp_path, one_bus(vtol="5 %", devices=devices)).check("input-voltage")
    assert chk.limit == pytest.approx(1.71 + 0.3) and chk.margin < 0
    assert chk.status == ("warn" if soft else "fail")
    assert "translator" in chk.fix  # the design's fix stays
    if soft:
        assert chk.details["limit_basis"] == "estimate"
        assert "recording the part's abs_max makes it firm" in chk.message


@pytest.mark.parametrize("soft", [False, True])
def test_bridge_offset_against_an_estimated_vil(tmp_path, soft):
    # the repeater's 0.6 V offset low against VIL 0.3 · 1.71 V = 0.513 V (invented parts)
    far = estimate_of(tmp_path, "t-sensor-1v8") if soft else "t-sensor-1v8"
    res = od_bus(tmp_path, repeater_bus(far, "1.8 V"))
    chk = res.segments[1].check("bridge-offset")
    assert chk.limit == pytest.approx(0.513) and chk.margin < 0
    assert chk.status == ("warn" if soft else "fail")
    assert ("limit_basis" in chk.details) == soft


@pytest.mark.parametrize("ctrl_soft, target_soft, want", [
    (False, False, "fail"), (False, True, "fail"), (True, False, "fail"),
    (True, True, "warn")])
def test_levels_and_sink_fail_on_any_firm_limit(tmp_path, ctrl_soft, target_soft, want):
    # derived: 4.7 MΩ carrying the two pins' 2 µA (invented) would drop 9.4 V: the high
    # level rests at 0 V, under both receivers' VIH; 470 Ω draws 3.3 V / (470 Ω + 133 Ω)
    # = 5.5 mA into each driver rated 3 mA at 0.4 V.  Either receiver's or driver's
    # datasheet value makes the check fail; both estimates, it warns
    ctrl = estimate_of(tmp_path, "t-ctrl-3v3") if ctrl_soft else "t-ctrl-3v3"
    target = estimate_of(tmp_path, "t-target") if target_soft else "t-target"
    res = od_bus(tmp_path, one_bus(pullup="4.7 MΩ", devices=_devices(ctrl, target)))
    voh = next(c for c in res.checks if c.id == "v-oh" and c.subject.startswith("SDA"))
    assert voh.value == 0.0 and voh.status == want
    if want == "fail":  # the check names a receiver whose VIH is firm
        firm = "U2" if ctrl_soft else "U1"
        assert voh.subject == f"SDA {firm}"
    res = od_bus(tmp_path, one_bus(pullup="470 Ω", devices=_devices(ctrl, target)))
    sink = next(c for c in res.checks if c.id == "sink-current" and c.subject.startswith("SDA"))
    assert sink.margin < 0 and sink.status == want
    if want == "fail":
        assert sink.subject == ("SDA U2" if ctrl_soft else "SDA U1")
    else:
        assert sink.details["limit_basis"] == "estimate"
        assert "recording the part's IOL makes it firm" in sink.message


def test_a_push_pull_sink_rating_that_is_an_estimate_warns(tmp_path):
    # tests/test_sink.py's line with pp-ctrl's values an estimate: past its IOL (1 mA at
    # 0.2 V, invented) it warns; the design's fix stays
    pp = estimate_of(tmp_path, "pp-ctrl", PP_PARTS)
    folders = [PP_PARTS, tmp_path / "team"]
    path = tmp_path / "g.toml"
    path.write_text(HEAD + f"""library = [{", ".join(repr(f.as_posix()) for f in folders)}]
[[bus]]
id = "g"
protocol = "gpio"
supply = "3.3 V"
devices = [{{ ref = "U1", part = "{pp}", role = "controller", pin = "cs" }},
           {{ ref = "U2", part = "pp-periph", pin = "cs" }}]
lines.g = {{ length = "5 cm", capacitance = "1 pF/cm", delay = "60 ps/cm", pullup = "1 kΩ" }}
""", encoding="utf-8")
    d = load_design(path)
    (ln,) = evaluate_bus(d.bus("g"), d).lines
    (chk,) = [c for c in ln.checks if c.id == "sink-current"]
    assert chk.margin < 0 and chk.status == "warn"
    assert chk.details["limit_basis"] == "estimate" and "3.1 kΩ" in chk.fix


@pytest.mark.parametrize("ctrl_soft, target_soft, want", [
    (False, False, "fail"), (True, False, "fail"), (False, True, "fail"),
    (True, True, "warn")])
def test_pullup_window_below_rp_min_of_a_soft_sink(tmp_path, ctrl_soft, target_soft, want):
    # derived: UM10204 eq. 2, Rp(min) = (3.3 V − 0.4 V) / 3 mA = 967 Ω, set by both
    # drivers alike (invented parts, the same sink point): 470 Ω is below it.  It rests
    # on a datasheet's point unless both are estimates
    ctrl = estimate_of(tmp_path, "t-ctrl-3v3") if ctrl_soft else "t-ctrl-3v3"
    target = estimate_of(tmp_path, "t-target") if target_soft else "t-target"
    res = od_bus(tmp_path, one_bus(pullup="470 Ω", devices=_devices(ctrl, target)))
    win = next(c for c in res.checks if c.id == "pullup-window" and c.subject == "SDA")
    assert win.details["rp_min"] == pytest.approx(2.9 / 3e-3, rel=1e-12)
    assert win.margin < 0 and win.status == want
    assert ("limit_basis" in win.details) == (want == "warn")
    # the candidates at U2 take the same rule, batched as one at a time
    d = load_design(tmp_path / "od.toml", library_folders=[TEST_PARTS] + _team(tmp_path))
    assert_same_ranking(cand.rank_candidates(d, "U2"), cand.rank_candidates_slow(d, "U2"))


@pytest.mark.parametrize("basis, want", [("generic", "warn"), ("estimate", "warn"),
                                         ("datasheet", "fail"), (None, "fail")])
def test_crosstalk_against_a_soft_threshold_warns(basis, want):
    # a held-low SCL lifted to 1.2 V for 80 ns against VIL 0.99 V, past the 50 ns filter
    # (invented numbers; tSP published: UM10204 rev. 6, table 9): it fails against a
    # datasheet's or the specification's VIL (None), warns against a soft one
    from pinlib.engines.crosstalk import EndNoise, Victim, coupling_checks
    from pinlib.library.values import Sourced

    vil = None if basis is None else Sourced(0.99, "V", "0.3 VDD", basis=basis)
    ends = ("near", "far")
    vic = Victim(vdd=3.3, r_pullup=2.2e3, r_sink=25.0, c={e: 5e-12 for e in ends},
                 vil={e: 0.99 for e in ends}, vih={e: 2.31 for e in ends}, signal="scl",
                 t_sp=50e-9, value_vil=vil)
    (level, glitch) = coupling_checks({("low", "near"): EndNoise(1.2, 80e-9, False)}, vic,
                                      subject="b.scl")
    assert level.id == "crosstalk-low" and level.margin < 0 and level.status == want
    assert (level.details.get("limit_basis") is not None) == (want == "warn")
    assert glitch.status == "fail"  # tSP is the specification's: firm


@pytest.mark.parametrize("mode, want", [("standard", "warn"), ("fast", "fail")])
def test_the_standards_own_sink_point_is_firm_but_where_it_gives_none(tmp_path, mode, want):
    # two drivers stating no sink point (invented parts) on a 1.8 V rail with 330 Ω: in
    # Fast-mode they are taken at VOL2, 0.2·VDD at 2 mA (published: UM10204 rev. 6,
    # table 9), a firm limit; Standard-mode has no point at 2 V and below, and VOL1 (0.4 V
    # at 3 mA) is taken as an estimate: the sink and the window warn
    devices = ['{ ref = "U1", part = "t-controller-bare", role = "controller" }',
               '{ ref = "U2", part = "t-target-bare" }']
    res = od_bus(tmp_path, one_bus(mode=mode, supply="1.8 V", pullup="330 Ω",
                                   devices=devices))
    sink = next(c for c in res.checks if c.id == "sink-current" and c.subject.startswith("SDA"))
    win = next(c for c in res.checks if c.id == "pullup-window" and c.subject == "SDA")
    for chk in (sink, win):
        assert chk.margin < 0 and chk.status == want, chk.id
        assert chk.details.get("limit_basis") == ("estimate" if want == "warn" else None)
    # derived: UM10204 eq. 2, Rp(min) = (1.8 V − 0.4 V) / 3 mA, or (1.8 − 0.36) / 2 mA
    rp_min = (1.8 - 0.4) / 3e-3 if mode == "standard" else (1.8 - 0.36) / 2e-3
    assert win.details["rp_min"] == pytest.approx(rp_min, rel=1e-9)
    d = load_design(tmp_path / "od.toml", library_folders=[TEST_PARTS])
    assert_same_ranking(cand.rank_candidates(d, "U2"), cand.rank_candidates_slow(d, "U2"))


RTC_SINK = """[pins.sda]
v_ol = { value = "0.4 V", basis = "datasheet", source = "invented sheet, table 6" }
i_ol = { value = "10 mA", basis = "datasheet", source = "invented sheet, table 6" }
[pins.scl]
v_ol = { value = "0.4 V", basis = "datasheet", source = "invented sheet, table 6" }
i_ol = { value = "10 mA", basis = "datasheet", source = "invented sheet, table 6" }
"""  # invented test data: a sink stronger than the controller class's


def _mixed_sinks(tmp_path, pullup: str):
    team_part(tmp_path / "team", "rtc-recorded", "rtc-i2c", "clock", "datasheet", RTC_SINK)
    path = tmp_path / "mix.toml"
    path.write_text(HEAD + f"""
[[bus]]
id = "i2c"
protocol = "i2c"
mode = "fast-plus"
supply = "3.3 V"
supply_tolerance = "5 %"
pullup = "{pullup}"
trace = {{ length = "10 cm", capacitance = "1 pF/cm" }}
devices = [
  {{ ref = "U1", part = "mcu-3v3", role = "controller" }},
  {{ ref = "U2", part = "rtc-recorded" }},
]
""", encoding="utf-8")
    return load_design(path, library_folders=_team(tmp_path))


@pytest.mark.parametrize("pullup, want", [("270 Ω", "fail"), ("330 Ω", "warn")])
def test_pullup_window_fails_below_a_firm_rp_min_though_the_largest_is_soft(
        tmp_path, pullup, want):
    # derived: UM10204 rev. 6 §7.1 eq. 2 at 3.465 V (3.3 V + 5 %): mcu-3v3's class sink
    # (0.4 V at 8 mA, typical of its class) gives Rp(min) 383 Ω, soft; rtc-recorded's datasheet
    # sink (0.4 V at 10 mA, invented) 306.5 Ω, firm.  270 Ω at −1 % (267 Ω) is below
    # both: it fails against the firm bound; 330 Ω (327 Ω) is below the soft one only
    soft_min, firm_min = (3.465 - 0.4) / 8e-3, (3.465 - 0.4) / 10e-3
    d = _mixed_sinks(tmp_path, pullup)
    win = check_of(d, "pullup-window", "SDA")
    assert win.details["rp_min"] == pytest.approx(soft_min, rel=1e-9)
    assert win.status == want
    if want == "fail":
        assert win.limit == pytest.approx(firm_min, rel=1e-9)
        assert win.margin == pytest.approx(270 * 0.99 / firm_min - 1, rel=1e-9)
        assert "limit_basis" not in win.details
        assert win.details["rp_min_firm_driver"] == "U2"
        assert "rtc-recorded pins.sda.i_ol" in win.source and "datasheet" in win.source
        assert "(datasheet), a firm limit" in win.message
    else:
        assert win.limit == pytest.approx(soft_min, rel=1e-9)
        assert win.details["limit_basis"] == "generic"
    # the corners and the candidates at U2 (rtc-i2c's class sink beside rtc-recorded) agree
    cr = whatif.corners(d)
    got = cr.find("i2c", "pullup-window", "SDA")
    assert got.status == want and got.margin == pytest.approx(win.margin, rel=1e-9)
    ranking = cand.rank_candidates(d, "U2")
    assert_same_ranking(ranking, cand.rank_candidates_slow(d, "U2"))
    res = evaluate_bus(d.with_parts({"U2": "rtc-i2c"}).buses[0], d.with_parts({"U2": "rtc-i2c"}))
    assert check_of_result(res, "pullup-window", "SDA").status == "warn"


def check_of_result(res, id: str, subject: str):
    return next(c for c in res.checks if c.id == id and c.subject == subject)


@pytest.mark.parametrize("basis", [None, "estimate", "datasheet"])
def test_setup_time_names_where_its_data_valid_time_came_from(tmp_path, basis):
    # rtc-i2c's tVD;DAT is its class's 900 ns (UM10204 rev. 6, table 10 gives 0.9 µs in
    # Fast-mode; published) on a Fast-mode Plus bus, whose tLOW (0.5 µs) it exceeds: the
    # check fails against the specification's tSU;DAT (firm), its source and message
    # naming the part's value and its basis rather than the specification's tVD;DAT
    part = "rtc-i2c"
    if basis:
        part = f"rtc-{basis}"
        team_part(tmp_path / "team", part, "rtc-i2c", "clock", basis,
                  '[timing]\nt_vd_dat = { value = "900 ns", source = "invented sheet" }\n')
    d = i2c_design(tmp_path, part, clock="1 MHz")
    chk = check_of(d, "setup-time", "SDA U2")
    assert chk.status == "fail" and chk.margin < 0
    assert "limit_basis" not in (chk.details or {})
    assert f"tVD;DAT {part} timing.t_vd_dat" in chk.source
    assert "table 10 (tVD;DAT)" not in chk.source  # not the specification's own
    if basis == "datasheet":
        assert not (chk.details or {}).get("value_basis")
        assert "recording the part's t_vd_dat" not in chk.message
    else:
        assert chk.details["value_basis"] == (basis or "generic")
        kind = "an estimate for U2" if basis else "a value typical of U2's class"
        assert f"tVD;DAT 900 ns is {kind}" in chk.message
