"""Timing checks whose available time rests on the CS lead or lag pinlib assumes.

A controller whose class records no ``t_cs_setup`` is taken to assert CS half a clock
period before the first SCLK edge, and one that records no ``t_cs_hold`` to release it
half a period after the last edge (common practice, no source: ``CS_LEAD_SOURCE``,
``CS_LAG_SOURCE``).  The checks whose available time rests on that assumption (CS setup,
the first CIPO bit of a CPHA 0 peripheral, CS hold) are then rules of thumb: they warn
where they would fail, their source names the assumption, and the controller's own
value from its datasheet makes them full checks again.  Parts are the library's
classes (``mcu-3v3``, ``adc-spi``: typical of the class, common practice) and test
parts invented here or in tests/data/pushpull.
"""

from __future__ import annotations

import numpy as np
import pytest

from pinlib.core import messages as M
from pinlib.engines import pptable, spi
from pinlib.engines.pushpull import evaluate_bus
from pinlib.engines.spi.budget import Term
from pinlib.engines.spi.evaluate import term_check
from pinlib.model.design import load_design
from pinlib.model.result import STATUS_CODES
from tests.test_spi import write_design

LINE = '{ length = "20 cm", capacitance = "1 pF/cm", delay = "60 ps/cm" }'

# The case an audit found failing on the assumed lead: the library's mcu-3v3 (no
# t_cs_setup) and adc-spi (t_cs_valid 20 ns) in mode 0 at 20 MHz, 3.3 V ±5 %, 20 cm lines
CASE = f"""format = "pinlib.design/1"
title = "MCU and ADC on SPI at 20 MHz (invented scenario)"
LIBRARY

[[bus]]
id = "spi"
protocol = "spi"
spi_mode = 0
clock = "20 MHz"
supply = "3.3 V"
supply_tolerance = "5 %"
devices = [
  {{ ref = "U1", part = "CONTROLLER", role = "controller" }},
  {{ ref = "U2", part = "adc-spi" }},
]
lines.sclk = {LINE}
lines.copi = {LINE}
lines.cipo = {LINE}
lines.cs = {LINE}
"""

# mcu-3v3 with a stated CS lead of 25 ns: half the 50 ns period, the lead pinlib assumes,
# so the numbers are those of the assumed case
MCU_WITH_LEAD = """format = "pinlib.part/1"
id = "mcu-3v3-lead"
title = "mcu-3v3 with a stated CS lead (invented test part)"
extends = "mcu-3v3"
provenance = { basis = "datasheet", source = "test data, invented" }

[timing]
t_cs_setup = { value = "25 ns", source = "invented test part: CS asserted to first SCLK edge" }
# mcu-3v3's own t_setup is typical of its class (a check against it warns only): stated
# here with the file's basis, the first bit's check is a full one
t_setup = { value = "6 ns", source = "invented test part: CIPO setup" }
"""


def _case(tmp_path, controller="mcu-3v3", name="case.toml"):
    lib = tmp_path / "lib"
    lib.mkdir(exist_ok=True)
    (lib / "mcu-3v3-lead.toml").write_text(MCU_WITH_LEAD, encoding="utf-8")
    text = CASE.replace("CONTROLLER", controller).replace(
        "LIBRARY", f'library = ["{lib.as_posix()}"]')
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    d = load_design(path)
    return path, d, d.bus("spi")


def _check(res, cid):
    return next(c for c in res.checks if c.id == cid)


def test_the_first_bit_on_the_assumed_lead_warns(tmp_path):
    # once "FAIL CIPO first bit U2 ... -48 %": lead (assumed T/2 = 25 ns) - (CS flight +
    # t_cs_valid 20 ns + CIPO flight) is short of mcu-3v3's t_setup 6 ns
    _, d, bus = _case(tmp_path)
    res = evaluate_bus(bus, d)
    chk = _check(res, "cipo-first-bit")
    assert chk.limit == pytest.approx(6e-9)  # mcu-3v3 t_setup: typical of the class
    assert chk.margin < -0.3 and chk.value < 6e-9
    assert chk.status == "warn"
    assert chk.details["rule_of_thumb"] is True and chk.details["assumed"] == "t_cs_setup"
    assert "a rule of thumb: a warning, not a failure" in chk.message
    # the source names the requirement's source, the assumption and what makes it full
    assert chk.source.startswith("mcu-3v3 t_setup: ")
    assert spi.CS_LEAD_SOURCE in chk.source
    assert "common practice, no source" in chk.source
    assert M.CS_TIMING_ASSUMED.format(what="CS lead", assumption=spi.CS_LEAD_SOURCE,
                                      field="t_cs_setup") in chk.source
    assert "t_cs_setup" in chk.fix and "half a clock period" in chk.fix
    # the CS checks rest on the assumed lead and lag too; they pass here
    assert spi.CS_LEAD_SOURCE in _check(res, "cs-setup").source
    assert spi.CS_LAG_SOURCE in _check(res, "cs-hold").source
    # no other budget check names an assumption
    for c in res.checks:
        if c.id in ("copi-setup", "copi-hold", "cipo-setup", "cipo-hold"):
            assert "assumed" not in c.details and "assumed" not in c.source


def test_the_highest_clock_keeps_the_assumed_term_and_says_so(tmp_path, capsys,
                                                               monkeypatch):
    # the figure is still set by the first bit (half a period is all that is known of
    # such a controller's lead), its note and the summary say it rests on that lead
    from pinlib.cli import main

    path, d, bus = _case(tmp_path)
    res = evaluate_bus(bus, d)
    assert res.figures["max_clock_limited_by"].value == "cipo-first-bit U2"
    assert res.figures["max_clock"].value < 20e6
    note = next(n for n in res.notes if n.startswith("highest clock "))
    assert "set by CIPO first bit U2, " + M.CLOCK_ON_ASSUMED_CS.format(
        what="CS lead", ref="U1", field="t_cs_setup") in note
    monkeypatch.setenv("COLUMNS", "80")
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    code = main(["check", str(path)])
    out = " ".join(capsys.readouterr().out.split())
    assert "(set by CIPO first bit U2, on an assumed CS lead)" in out
    assert "WARN spi U2: CIPO first bit" in out and "FAIL spi U2: CIPO first bit" not in out
    # nothing fails: the lines' overshoot is beyond abs_max ratings typical of their
    # classes (a warning: no datasheet stands behind them)
    over = [c for ln in res.lines for c in ln.checks if c.id == "overshoot"
            and c.margin < 0]
    assert over and all(c.status == "warn" and c.details["limit_basis"] == "generic"
                        for c in over)
    assert code == 0


def test_the_controllers_stated_lead_makes_it_a_full_check(tmp_path):
    # the controller states a 25 ns lead (invented test part): the same time available,
    # now against a datasheet value on both sides, fails as before
    _, d0, bus0 = _case(tmp_path)
    _, d1, bus1 = _case(tmp_path, controller="mcu-3v3-lead", name="lead.toml")
    assumed, stated = _check(evaluate_bus(bus0, d0), "cipo-first-bit"), \
        _check(evaluate_bus(bus1, d1), "cipo-first-bit")
    assert stated.value == pytest.approx(assumed.value, rel=1e-9)
    assert stated.status == "fail" and stated.margin < -0.3
    assert "assumed" not in stated.details and "rule_of_thumb" not in stated.details
    assert spi.CS_LEAD_SOURCE not in stated.source
    sa = spi.spi_analysis(bus1, d1)
    t = next(t for t in sa.terms if t.id == "cipo-first-bit")
    assert t.a == 0.0 and t.assumed is None and t.parts["lead"] == pytest.approx(25e-9)
    res = evaluate_bus(bus1, d1)
    # a term of coefficient 0 that fails allows no clock at all
    assert res.figures["max_clock"].value is None
    assert not any("assumed for U1" in n for n in res.notes)


def _part(tmp_path, base: str, pid: str, timing: str) -> None:
    """A test part extending ``base`` with ``timing`` lines added (invented)."""
    (tmp_path / f"{pid}.toml").write_text(
        f'format = "pinlib.part/1"\nid = "{pid}"\ntitle = "test part (invented)"\n'
        f'category = "memory"\nextends = "{base}"\n'
        'provenance = { basis = "datasheet", source = "test data, invented" }\n'
        f"[timing]\n{timing}", encoding="utf-8")


@pytest.mark.parametrize(("cid", "field"), [("cs-setup", "t_cs_setup"),
                                            ("cs-hold", "t_cs_hold")])
def test_cs_setup_and_hold_on_an_assumed_lead_or_lag_warn(tmp_path, cid, field):
    # a peripheral that needs 60 ns of CS setup and hold (invented test part) at 20 MHz:
    # half a period (25 ns) of assumed lead or lag is short of it; the same controller
    # stating 25 ns (invented test part) fails
    _part(tmp_path, "pp-periph", "per-slow-cs",
          't_cs_setup = "60 ns"\nt_cs_hold = "60 ns"\n')   # invented test part
    _part(tmp_path, "pp-ctrl", "ctl-stated", f'{field} = "25 ns"\n')  # invented test part
    d, bus = write_design(tmp_path, peripherals=("per-slow-cs",), extra_library=tmp_path)
    chk = _check(evaluate_bus(bus, d), cid)
    assert chk.limit == pytest.approx(60e-9) and chk.margin < 0
    assert chk.status == "warn" and chk.details["assumed"] == field
    what = "CS lead" if field == "t_cs_setup" else "CS lag"
    assert f"rests on an assumed {what}" in chk.source and field in chk.fix
    d2, bus2 = write_design(tmp_path, controller="ctl-stated", peripherals=("per-slow-cs",),
                            extra_library=tmp_path, name="stated.toml")
    full = _check(evaluate_bus(bus2, d2), cid)
    assert full.status == "fail" and "assumed" not in full.details
    assert full.value == pytest.approx(chk.value, rel=1e-9)
    assert full.source.startswith(f"per-slow-cs {field}: ")


def test_the_status_rule_of_an_assumed_term_is_one(tmp_path):
    # Term.codes (the Monte Carlo tables' rule) gives term_check's status on either kind
    # of margin; numbers invented
    parts = {"lag": "T/2", "t_cs_hold": 0.0}
    slack = Term("cs-hold", "U2", 0.5, -30e-9, 0.0, "invented", parts, True, "t_cs_hold")
    rel = Term("cs-hold", "U2", 0.5, -30e-9, 10e-9, "invented", {**parts, "t_cs_hold": 10e-9},
               True, "t_cs_hold")
    full = Term("cs-hold", "U2", 0.5, -30e-9, 10e-9, "invented", {**parts, "t_cs_hold": 10e-9})
    for t in (slack, rel, full):
        for clock in (5e6, 10e6, 12e6, 20e6):   # 100, 50, 41.7, 25 ns periods
            chk = term_check(t, clock, 0.1, 0)
            m = t.check_margin(t.available(1 / clock))
            assert int(t.codes(m, 0.1)) == STATUS_CODES[chk.status], (t.required, clock)
            assert np.array_equal(t.codes(np.array([m, m]), 0.1),
                                  [STATUS_CODES[chk.status]] * 2)
    # at 20 MHz each is short: the assumed ones warn, the full one fails
    assert [term_check(t, 20e6, 0.1, 0).status for t in (slack, rel, full)] == [
        "warn", "warn", "fail"]
    assert "a rule of thumb" in term_check(slack, 20e6, 0.1, 0).message


def test_the_monte_carlo_table_warns_as_the_engine_does(tmp_path):
    # the table of many boards (pptable) takes each term's status by Term.codes: on the
    # assumed lead the first bit warns on every board, as the engine's check does
    from tests.test_pptable import _both_ways

    path, _, _ = _case(tmp_path)
    text = path.read_text(encoding="utf-8").replace(
        'supply_tolerance = "5 %"\n', 'supply_tolerance = "5 %"\nlength_tolerance = "10 %"\n')
    path.write_text(text, encoding="utf-8")
    d = load_design(path)
    by_table, by_engine, table, _ = _both_ways(d.bus("spi"), d, 60, seed=3)
    assert isinstance(table, pptable.LineTable)   # a table was built, not refused
    assert by_table.engine_boards < 60            # and boards were taken from it
    j = next(i for i, nm in enumerate(by_engine.names)
             if nm["name"] == "spi cipo-first-bit U2")
    assert (by_engine.items[j].margin < 0).all()   # short of t_setup on every board
    np.testing.assert_array_equal(by_table.items[j].status, by_engine.items[j].status)
    assert (by_table.items[j].status == STATUS_CODES["warn"]).all()
