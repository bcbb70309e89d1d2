"""The fix a failing or warning check carries (``Check.fix``): its numbers, derived here
from the check's own values by the rule it states, and the design with the fix applied,
where the check then passes.

Every design and part is invented test data (tests/fixdesigns.py).
"""

from __future__ import annotations

import html
import json
import re

import pytest

from pinlib.cli import main
from pinlib.core import messages as M
from pinlib.core.quantity import parse
from tests.fixdesigns import GPIO_STRONG, PARTS, SPI_FAST, SPI_SLOW, write_design

WARN = 0.10  # the design format's default warning margin (docs/formats/design.md)


def _checks(node):
    if isinstance(node, dict):
        if {"id", "status", "source", "message"} <= set(node):
            yield node
        for v in node.values():
            yield from _checks(v)
    elif isinstance(node, list):
        for v in node:
            yield from _checks(v)


def _run(tmp_path, body, capsys, extra="", parts=None) -> list[dict]:
    """Every check of ``pinlib check --json`` on a design of ``body``; ``parts``: team
    part texts written over those of tests/fixdesigns.py."""
    path = write_design(tmp_path, body, extra)
    for name, text in (parts or {}).items():
        (tmp_path / "team" / f"{name}.toml").write_text(text, encoding="utf-8")
    main(["check", str(path), "--json"])
    return list(_checks(json.loads(capsys.readouterr().out)))


def _one(checks, cid, subject=None) -> dict:
    return next(c for c in checks if c["id"] == cid
                and (subject is None or c.get("subject") == subject))


def _quantity(text: str, unit: str) -> float:
    """The first quantity in ``unit`` that ``text`` names after "to" ("to 11.1 MHz")."""
    m = re.search(r"to ([0-9.]+ [a-zA-Zµ]?" + unit + ")", text)
    assert m, text
    return parse(m.group(1), unit)


@pytest.mark.parametrize("cid", ["sclk-high", "sclk-low", "copi-setup", "copi-hold"])
def test_a_timing_fix_names_a_clock_at_which_its_check_passes(tmp_path, capsys, cid):
    checks = _run(tmp_path, SPI_SLOW, capsys)
    chk = _one(checks, cid)
    assert chk["status"] == "fail" and chk["fix"].startswith("lower the bus clock to ")
    f = _quantity(chk["fix"], "Hz")
    again = _run(tmp_path, SPI_SLOW.replace('clock = "20 MHz"', f'clock = "{f / 1e6:g} MHz"'),
                 capsys)
    assert _one(again, cid)["status"] == "pass"


def test_the_copi_setup_clock_follows_the_budget(tmp_path, capsys):
    chk = _one(_run(tmp_path, SPI_SLOW, capsys), "copi-setup")
    d = chk["details"]
    # derived: the check's rule, T/2 + sclk_early - t_valid - copi_late >= (1 + warn)
    # t_setup, at its highest clock; the fix writes it rounded down to three digits
    b = d["sclk_early"] - d["t_valid_controller"] - d["copi_late"]
    f = 0.5 / ((1 + WARN) * d["t_setup"] - b)
    shown = _quantity(chk["fix"], "Hz")
    assert shown <= f < shown * 1.01
    # invented test data: slow-adc's t_setup 30 ns; mcu-3v3's t_valid 8 ns (its part)
    assert d["t_setup"] == pytest.approx(30e-9) and "t_valid 8 ns" in chk["fix"]


def test_a_recorded_cs_lead_or_lag_names_the_time_that_passes(tmp_path, capsys):
    checks = _run(tmp_path, SPI_SLOW, capsys)
    lead, lag = _one(checks, "cs-setup"), _one(checks, "cs-hold")
    # invented test data: lead-mcu records a 20 ns CS lead and lag, slow-adc needs 60 ns
    assert "the clock does not move this check" in lead["fix"]
    assert "(its t_cs_setup: 20 ns)" in lead["fix"] and "(its t_cs_hold: 20 ns)" in lag["fix"]
    need = {k: parse(re.search(r"of ([0-9.]+ ns) or more", c["fix"]).group(1), "s")
            for k, c in (("setup", lead), ("hold", lag))}
    # derived: 20 ns + ((1 + warn) 60 ns - the time available), rounded up
    for k, c in (("setup", lead), ("hold", lag)):
        exact = 20e-9 + (1 + WARN) * 60e-9 - c["value"]
        assert exact <= need[k] < exact * 1.01
    mcu = (PARTS["lead-mcu"]
           .replace('t_cs_setup = "20 ns"', f't_cs_setup = "{need["setup"] * 1e9:g} ns"')
           .replace('t_cs_hold = "20 ns"', f't_cs_hold = "{need["hold"] * 1e9:g} ns"'))
    again = _run(tmp_path, SPI_SLOW, capsys, parts={"lead-mcu": mcu})
    assert _one(again, "cs-setup")["status"] == "pass"
    assert _one(again, "cs-hold")["status"] == "pass"


def test_f_max_fix(tmp_path, capsys):
    chk = _one(_run(tmp_path, SPI_FAST, capsys), "f-max", "U3")
    # adc-spi's f_max, 20 MHz (pinlib/devices/converter/adc-spi.toml, typical of the class)
    assert chk["fix"] == M.F_MAX_FIX.format(f_max="20 MHz", clock="25 MHz", ref="U3")


def _by_line(tmp_path, body, capsys) -> dict[str, list[dict]]:
    """The checks of each line of the design's one bus, by signal."""
    main(["check", str(write_design(tmp_path, body)), "--json"])
    bus = json.loads(capsys.readouterr().out)["buses"][0]
    return {line["signal"]: line["checks"] for line in bus["lines"]}


def test_overshoot_without_a_resistor_names_auto_and_auto_clears_it(tmp_path, capsys):
    lines = _by_line(tmp_path, SPI_FAST, capsys)
    for sig in ("copi", "cs"):
        # beyond the classes' abs_max (typical values: a warning, the fix the same)
        over = [c for c in lines[sig] if c["id"] == "overshoot" and c["margin"] < 0]
        assert over and all(c["status"] == "warn" for c in over)
        assert {c["fix"] for c in over} == {
            M.SWING_FIX_AUTO.format(signal=sig, rs="36 Ω")}
    fixed = (SPI_FAST.replace("lines.copi = { route",
                              'lines.copi = { series_resistor = "auto", route')
             .replace("lines.cs = { length", 'lines.cs = { series_resistor = "auto", length'))
    lines = _by_line(tmp_path, fixed, capsys)
    for sig in ("copi", "cs"):
        # the resistor auto fits is the one the fix named, and no overshoot fails
        assert _one(lines[sig], "series-termination")["value"] == pytest.approx(36.0)
        assert not [c for c in lines[sig] if c["id"] == "overshoot" and c["margin"] < 0]


def test_the_auto_value_is_z0_less_r_out_to_e24(tmp_path, capsys):
    line = '{ length = "1 cm", geometry = "g", series_resistor = "auto" }'
    checks = _run(tmp_path, GPIO_STRONG.replace("{line}", line), capsys, 'warn_margin = "90 %"')
    over = _one(checks, "overshoot")
    assert over["status"] == "warn"
    # derived: Z0 of the 0.2 mm microstrip (the line's own figure, 64.1 Ω) less the
    # invented r_out 20 Ω is 44.1 Ω, nearest E24 value 43 Ω (IEC 60063)
    assert over["fix"] == M.SWING_FIX_VALUE.format(signal="x", rs="43 Ω")


def test_level_fixes_name_the_levels_that_pass(tmp_path, capsys):
    checks = _run(tmp_path, GPIO_STRONG.replace(
        "{line}", '{ length = "20 cm", geometry = "g" }'), capsys)
    high = _one(checks, "level-high")
    # invented test data: VOH 2.4 V (stated without a current: taken as stated) against
    # VIH 0.7 VDD = 2.31 V; derived: VIH at most 2.4 V / 1.1 = 2.1818 V (rounded down),
    # VOH at least 2.31 V x 1.1 = 2.541 V (rounded up)
    assert high["value"] == pytest.approx(2.4) and high["limit"] == pytest.approx(2.31)
    assert high["fix"] == M.LEVEL_HIGH_FIX.format(v_ih="2.18 V", v_oh="2.55 V")
    low = _one(checks, "level-low")
    # invented test data: VOL 0.8 V against VIL 0.2 VDD = 0.66 V; derived: VIL at least
    # 0.8 V / 0.9 = 0.889 V, VOL at most 0.66 V x 0.9 = 0.594 V
    assert low["fix"] == M.LEVEL_LOW_FIX.format(v_il="889 mV", v_ol="594 mV")


def _flat(text: str) -> str:
    return " ".join(text.split())


def test_the_fix_shows_in_every_output(tmp_path, capsys, monkeypatch):
    monkeypatch.setenv("COLUMNS", "80")
    path = write_design(tmp_path, SPI_FAST)
    fixes = [M.F_MAX_FIX.format(f_max="20 MHz", clock="25 MHz", ref="U3"),
             M.SWING_FIX_AUTO.format(signal="copi", rs="36 Ω")]
    main(["check", str(path)])
    out = capsys.readouterr().out
    assert max(len(line) for line in out.splitlines()) <= 80
    for fix in fixes:
        assert f"fix: {fix}" in _flat(out)
    main(["check", str(path), "--detail"])
    detail = _flat(capsys.readouterr().out)
    main(["check", str(path), "--json"])
    shown = [c.get("fix") for c in _checks(json.loads(capsys.readouterr().out))]
    md, page = tmp_path / "review.md", tmp_path / "review.html"
    main(["report", str(path), "--md", str(md)])
    main(["report", str(path), "--html", str(page)])
    capsys.readouterr()
    report = _flat(md.read_text(encoding="utf-8").replace("\\_", "_"))  # Markdown escapes
    web = _flat(html.unescape(re.sub(r"<[^>]+>", " ", page.read_text(encoding="utf-8"))))
    for fix in fixes:
        assert fix in detail
        assert fix in shown
        assert fix in report
        assert fix in web
