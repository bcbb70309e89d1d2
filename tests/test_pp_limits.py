"""Push-pull checks (SPI, GPIO): which limits fail and which warn, and one status rule
at a limit (issue 13 items 7 and 9).

A check fails only against a published or datasheet limit, or a physical impossibility;
a rule of thumb (the 10 % edge rule) warns.  The designs are invented (tests/data).
"""

from __future__ import annotations

import re
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest

from pinlib.engines.dispatch import check_design
from pinlib.engines.pushline import EDGE_FRACTION
from pinlib.model.design import load_design

DATA = Path(__file__).parent / "data"


def _slow_edge(clock: float | None = None):
    d = load_design(DATA / "spi-slow-edge.toml")
    if clock is not None:
        d = replace(d, buses=tuple(replace(b, clock=clock) for b in d.buses))
    return d


def test_edge_rule_of_thumb_warns_and_does_not_lower_max_clock():
    d = _slow_edge()
    res = check_design(d)
    bus = res.bus("flash")
    chk = next(ln for ln in bus.lines if ln.signal == "sclk").check("edge-time")
    # common practice, no source: 10 % of the 50 ns period of 20 MHz
    assert chk.limit == pytest.approx(5e-9, rel=1e-12)
    assert chk.value > chk.limit and chk.margin < 0      # 5.3 ns against 5 ns
    assert chk.status == "warn" and chk.details["rule_of_thumb"] is True
    assert "rule of thumb" in chk.message
    assert res.status == "warn" and res.exit_code() == 0
    # every timing check passes at 20 MHz; max_clock is the limit of the parts' data:
    # mcu-3v3's f_max of 24 MHz (the built-in class's typical value), named
    assert all(c.status == "pass" for c in bus.checks)
    assert bus.figures["max_clock"].value == pytest.approx(24e6, rel=1e-12)
    assert bus.figures["max_clock_limited_by"].value == "f_max U1"
    # derived from the edge rule: f = 10 % / edge
    assert bus.figures["max_clock_edge_rule"].value == pytest.approx(
        EDGE_FRACTION / chk.value, rel=1e-12)
    assert bus.figures["max_clock_edge_rule"].value < 20e6
    assert any(n.startswith("highest clock by the edge rule of thumb") for n in bus.notes)


def test_a_timing_term_that_limits_the_clock_is_named():
    res = check_design(load_design(DATA / "long-spi-link.toml")).bus("link")
    # the long link's CIPO round trip is its slowest requirement (check says so)
    assert res.figures["max_clock_limited_by"].value == "cipo-setup U2"
    assert res.figures["max_clock"].value < 24e6


def test_a_device_exactly_at_its_rated_clock_passes():
    res = check_design(_slow_edge(24e6)).bus("flash")
    fmax = [c for c in res.checks if c.id == "f-max" and c.subject == "U1"][0]
    # common practice, no source: the class mcu-3v3 rates 24 MHz; at its rating it is inside
    assert fmax.value == 24e6 and fmax.limit == 24e6 and fmax.margin == 0
    assert fmax.status == "pass"
    over = check_design(_slow_edge(24.1e6)).bus("flash")
    above = [c for c in over.checks if c.id == "f-max" and c.subject == "U1"][0]
    # beyond it: a warning, the rating being the class's typical value (no datasheet)
    assert above.margin < 0 and above.status == "warn"
    assert above.details["limit_basis"] == "generic"


def test_supply_range_on_spi_and_gpio_buses():
    d = load_design(DATA / "spi-5v-flash.toml")
    res = check_design(d)
    for bus_id, ref in (("flash", "U2"), ("irq", "U3")):
        bus = res.bus(bus_id)
        chk = [c for c in bus.checks if c.id == "supply-range" and c.subject == ref][0]
        # derived from the rail: 5 V + 5 % = 5.25 V at the worst corner, against the
        # class nor-flash-spi's 3.6 V maximum (common practice, no source)
        assert chk.value == pytest.approx(5.25, rel=1e-12)
        assert chk.limit == pytest.approx(3.6, rel=1e-12)
        # the class's range is typical, not a datasheet's: beyond it a warning
        # (model.result.soft_limit)
        assert chk.status == "warn" and "rail 5 V +5 %" in chk.message
        assert chk.margin < 0 and chk.details["limit_basis"] == "generic"
        ok = [c for c in bus.checks if c.id == "supply-range" and c.subject == "U1"][0]
        # common practice, no source: mcu-5v 4.5-5.5 V holds the 4.75-5.25 V rail
        assert ok.status == "pass"


def test_supply_range_source_is_worded_alike_on_every_bus(tmp_path):
    # the demo's U1 (mcu-3v3) sits on I2C, SMBus and SPI buses and its rail is nearer its
    # part's maximum on each: the SPI rows said "mcu-3v3 supply (typical of the class
    # (common practice))", the I2C rows "mcu-3v3 supply.max (mcu-3v3.toml), generic: ...",
    # for the same limit
    demo = Path(__file__).parents[1] / "workbooks" / "designs" / "demo-board.toml"
    res = check_design(load_design(demo))
    rows = [(b.protocol, c) for b in res.buses for _, _, c in b.all_checks()
            if c.id == "supply-range" and c.subject == "U1"]
    assert {p for p, _ in rows} >= {"i2c", "spi"}
    assert all(c.limit == pytest.approx(3.6) for _, c in rows)  # the class's supply.max
    assert {c.source for _, c in rows} == {
        "mcu-3v3 supply.max (mcu-3v3.toml), generic: typical of the class (common practice)"}
    # a rail under the part's minimum names supply.min, on SPI as on I2C (invented
    # design: a 3 V to 3.6 V part on a 1.8 V rail)
    low = check_design(load_design(_spi_design(
        tmp_path, "low rail", "1 MHz", "1.8 V", '{ ref = "U1", part = "mcu-3v3", '
        'role = "controller" }', '{ ref = "U2", part = "nor-flash-spi" }')))
    (u1,) = [c for c in low.bus("spi0").checks if c.id == "supply-range" and c.subject == "U1"]
    assert u1.status == "warn" and u1.limit == pytest.approx(3.0)  # the class's: soft
    assert u1.source == ("mcu-3v3 supply.min (mcu-3v3.toml), generic: typical of the class "
                         "(common practice)")


def test_supply_range_from_tables_equals_the_engine():
    from pinlib.engines import ppbatch, pptable
    from pinlib.engines.ppvariant import chosen_resistors, parameter_specs
    from pinlib.engines.pushpull import evaluate_board

    d = load_design(DATA / "spi-5v-flash.toml")
    bus = d.bus("flash")
    nominal = evaluate_board(bus, d)
    axes = pptable.axes_of(parameter_specs(bus), 1.0, 0.0)
    table = pptable.tabulate(bus, d, axes, chosen_resistors(nominal))
    assert not isinstance(table, str), table
    f = np.array([0.95, 0.97, 1.0, 1.03, 1.05])
    key = parameter_specs(bus)[0][-1]
    got = table.evaluate({key: f}, len(f))
    names = [nm["name"] for nm in table.names]
    j = names.index("flash supply-range U2")
    # derived: the engine's own check at each rail
    engine = ppbatch.build(bus, d, {key: f}, len(f), nominal=nominal)
    ref = [c for c in engine.items if c.id == "supply-range"]
    assert np.allclose(got["margin"][:, j], ref[1].margin, rtol=1e-12)
    assert (got["status"][:, j] == ref[1].status).all()


def test_a_receiver_that_never_switches_has_no_number_and_says_why():
    from pinlib.present.report import format_text

    d = load_design(DATA / "spi-cipo-never-high.toml")
    res = check_design(d)
    bus = res.bus("flash")
    chk = [c for c in bus.checks if c.id == "cipo-setup"][0]
    # the 3.3 V flash's VOH (3.1 V) never reaches the 5 V controller's VIH (3.5 V)
    # (common practice, no source: class values of nor-flash-spi and mcu-5v)
    level = next(ln for ln in bus.lines if ln.signal == "cipo").check("level-high")
    # both warn where they would fail: the levels and mcu-5v's t_setup are typical of
    # their classes
    assert level.status == "warn" and level.value < level.limit
    assert chk.status == "warn" and chk.value is None and chk.margin is None
    assert level.details["limit_basis"] == chk.details["limit_basis"] == "generic"
    assert "never crosses" in chk.reason
    js = chk.to_json()
    assert js["value"] is None and js["margin"] is None and js["reason"] == chk.reason
    assert bus.figures["cipo_setup_margin"].value is None
    assert bus.figures["max_clock"].value is None
    assert any(n.startswith("cipo_setup_margin: none") for n in bus.notes)
    text = format_text(res)
    assert not re.search(r"\bnan\b|\binf\b|∞", text, re.IGNORECASE)


def test_a_clean_edge_has_no_undershoot():
    from pinlib.physics import waveform as wf

    # derived from float rounding: a falling edge v_from + swing·unit whose unit step
    # ends one ulp above 1 dips a few 1e-16 V below ground
    unit = np.array([0.0, 0.5, 1.0 + 2.0 ** -52])
    v = 3.3 + (0.0 - 3.3) * unit
    assert v.min() < 0 and -v.min() < 1e-15
    assert wf.undershoot(v) == 0.0
    assert wf.undershoot(np.array([3.3, -0.2, 0.0])) == pytest.approx(0.2, rel=1e-12)
    res = check_design(_slow_edge()).bus("flash")
    sclk = next(ln for ln in res.lines if ln.signal == "sclk")
    assert sclk.figures["undershoot"].value == 0.0


def test_a_line_far_longer_than_a_board_bus_says_so():
    res = check_design(load_design(DATA / "spi-one-km.toml")).bus("link")
    for ln in res.lines:
        chk = ln.check("line-delay")
        # common practice, no source: FR-4 microstrip carries a signal at about 5.5-6.5
        # ns/m, so 1 km is some 6 µs one way, over a hundred periods of 20 MHz (50 ns)
        assert 5e-6 < chk.value < 7e-6 and chk.value == ln.figures["trace_delay"].value
        assert chk.limit == pytest.approx(50e-9, rel=1e-12)
        assert chk.status == "warn" and chk.details["rule_of_thumb"] is True
        assert "more than one bit in flight" in chk.source
    short = check_design(_slow_edge()).bus("flash")
    # a 5 cm trace (0.3 ns) is well inside the 50 ns period
    assert all(ln.check("line-delay").status == "pass" for ln in short.lines)


def _rail_at_the_range(tmp_path) -> Path:
    """A 1.8 V +/-10 % rail under parts rated 1.62 V to 1.98 V: the rail's corners are
    exactly the part's range (invented scenario)."""
    lib = tmp_path / "lib"
    lib.mkdir()
    (lib / "edge-1v8.toml").write_text(
        'format = "pinlib.part/1"\nid = "edge-1v8"\ntitle = "Invented 1.8 V part"\n'
        'category = "controller"\nextends = "mcu-1v8"\n'
        'supply = { min = "1.62 V", max = "1.98 V" }\n'
        'provenance = { basis = "datasheet", source = "invented sheet" }\n', encoding="utf-8")
    design = tmp_path / "d.toml"
    design.write_text(
        'format = "pinlib.design/1"\ntitle = "rail at the range (invented)"\n'
        'library = ["lib"]\n\n'
        '[[bus]]\nid = "irq"\nprotocol = "gpio"\nsupply = "1.8 V"\n'
        'supply_tolerance = "10 %"\n'
        'devices = [\n  { ref = "U1", part = "edge-1v8", role = "controller", pin = "cs" },\n'
        '  { ref = "U2", part = "edge-1v8", pin = "cipo" },\n]\n'
        'lines.irq = { length = "2 cm", capacitance = "1 pF/cm" }\n\n'
        '[[bus]]\nid = "i2c0"\nprotocol = "i2c"\nsupply = "1.8 V"\n'
        'supply_tolerance = "10 %"\npullup = "2.2 kΩ"\n'
        'devices = [\n  { ref = "U1", part = "edge-1v8", role = "controller" },\n'
        '  { ref = "U3", part = "edge-1v8" },\n]\n'
        'trace = { length = "2 cm", capacitance = "1 pF/cm" }\n', encoding="utf-8")
    return design


def test_a_rail_whose_corners_are_the_parts_range_is_inside_it(tmp_path):
    # reproducer: 1.8 V +10 % is 1.9800000000000002 in floating point, which failed
    # against a 1.98 V maximum with "margin > -0.001 %"
    res = check_design(load_design(_rail_at_the_range(tmp_path)))
    got = {b.id: [c for _, _, c in b.all_checks() if c.id == "supply-range"]
           for b in res.results()}
    assert {c.subject for c in got["irq"]} == {"U1", "U2"} and got["i2c0"]
    got = got["irq"] + got["i2c0"]   # the push-pull engine's and the open-drain one's
    for c in got:
        # derived: 1.8 V x (1 +/- 0.10) = 1.62 V and 1.98 V, the part's own range
        assert c.value == pytest.approx(1.98 if c.value > 1.8 else 1.62, rel=1e-12)
        assert c.status == "pass" and c.margin == 0.0, c.message


def test_a_check_alike_at_both_ends_of_a_rail_names_a_corner_not_nominal(tmp_path):
    # reproducer: the rail's two ends are both at the part's range (margin 0, worse than
    # the nominal board's), and the check read "U1 runs from 1.62 V ... (worst corner:
    # nominal)" beside its value at a corner
    res = check_design(load_design(_rail_at_the_range(tmp_path))).bus("irq")
    for c in (c for c in res.checks if c.id == "supply-range"):
        # derived: 1.62 V is 1.8 V -10 %, 1.98 V is 1.8 V +10 %
        end = "−10 %" if c.value < 1.8 else "+10 %"
        assert c.details["corner"] == f"rail 1.8 V {end}", c.message
        assert "(worst corner: nominal)" not in c.message


def _unlimited(tmp_path) -> Path:
    """An SPI bus whose parts record no timing and no f_max, with SCLK and COPI routed
    (invented scenario): nothing in the parts' data limits the clock."""
    lib = tmp_path / "lib"
    lib.mkdir()
    (lib / "bare-ctl.toml").write_text(
        'format = "pinlib.part/1"\nid = "bare-ctl"\ntitle = "Invented controller"\n'
        'category = "controller"\nextends = "controller-base"\n'
        'supply = { min = "3 V", max = "3.6 V" }\n'
        'provenance = { basis = "datasheet", source = "invented sheet" }\n'
        '[pins.sclk]\nr_out = "30 Ω"\n[pins.copi]\nr_out = "30 Ω"\n[pins.cs]\n'
        'r_out = "30 Ω"\n', encoding="utf-8")
    (lib / "bare-per.toml").write_text(
        'format = "pinlib.part/1"\nid = "bare-per"\ntitle = "Invented peripheral"\n'
        'category = "display"\nextends = "spi-peripheral"\n'
        'provenance = { basis = "datasheet", source = "invented sheet" }\n',
        encoding="utf-8")
    design = tmp_path / "d.toml"
    design.write_text(
        'format = "pinlib.design/1"\ntitle = "nothing limits the clock (invented)"\n'
        'library = ["lib"]\n\n[[bus]]\nid = "spi0"\nprotocol = "spi"\nclock = "10 MHz"\n'
        'supply = "3.3 V"\n'
        'devices = [\n  { ref = "U1", part = "bare-ctl", role = "controller" },\n'
        '  { ref = "U2", part = "bare-per" },\n]\n'
        'lines.sclk = { length = "2 cm", capacitance = "1 pF/cm" }\n', encoding="utf-8")
    return design


def test_a_clock_nothing_limits_is_said_in_words_not_infinity(tmp_path, monkeypatch, capsys):
    # reproducer: "max clock ∞ (set by nothing)" on the bus line, "Highest clock ∞" in
    # --detail, and null without a reason in the JSON
    from pinlib.cli import main

    design = _unlimited(tmp_path)
    bus = check_design(load_design(design)).bus("spi0")
    f = bus.figures["max_clock"]
    assert f.value is None and "not limited" in f.reason
    assert f.to_json()["reason"] == f.reason
    for name in ("copi_setup_margin", "cipo_setup_margin", "copi_hold_margin"):
        assert bus.figures[name].value is None and bus.figures[name].reason
    monkeypatch.setenv("COLUMNS", "80")
    for args in ([], ["--detail"]):
        assert main(["check", str(design), *args]) == 0
        out = capsys.readouterr().out
        assert "∞" not in out and not re.search(r"\binf\b|\bnan\b", out, re.IGNORECASE)
        assert "not limited" in out
        for ln in out.splitlines():
            assert not re.search(r"(clock|margin)\s+—$", ln), ln


def test_a_figure_without_a_number_gives_its_reason_in_the_detail(monkeypatch, capsys):
    # the never-switching receiver: the figures the notes explain read "—" in the table
    from pinlib.cli import main

    res = check_design(load_design(DATA / "spi-cipo-never-high.toml")).bus("flash")
    for name in ("max_clock", "cipo_setup_margin"):
        assert res.figures[name].value is None and res.figures[name].reason, name
    monkeypatch.setenv("COLUMNS", "80")
    main(["check", str(DATA / "spi-cipo-never-high.toml"), "--detail"])
    out = capsys.readouterr().out
    for ln in out.splitlines():
        assert not re.search(r"(clock|margin)\s+—$", ln), ln


def _spi_design(tmp_path, title, clock, supply, *devices, signals=("sclk",)) -> Path:
    """A one-bus SPI design of the given devices, each line 2 cm at 1 pF/cm."""
    design = tmp_path / "d.toml"
    design.write_text(
        f'format = "pinlib.design/1"\ntitle = "{title}"\n[[bus]]\nid = "spi0"\n'
        f'protocol = "spi"\nclock = "{clock}"\nsupply = "{supply}"\ndevices = [\n'
        + "".join(f"  {d},\n" for d in devices) + "]\n"
        + "".join(f'lines.{s} = {{ length = "2 cm", capacitance = "1 pF/cm" }}\n'
                  for s in signals), encoding="utf-8")
    return design


def test_a_bridge_with_a_device_on_another_rail_says_its_far_side_is_not_modelled(tmp_path):
    # an SPI bus is one net per signal: a 5 V converter behind an isolator on a 3.3 V
    # bus is checked against the controller's 3.3 V drive (its level checks fail), not
    # the isolator's far side, which the design cannot describe; the result must say
    # so rather than leave the failure unexplained (invented scenario)
    design = _spi_design(tmp_path, "isolated 5 V converter (invented)", "2 MHz", "3.3 V",
                         '{ ref = "U1", part = "mcu-3v3", role = "controller" }',
                         '{ ref = "U5", part = "isolator-spi", side = "a" }',
                         '{ ref = "U2", part = "adc-spi", supply = "5 V" }',
                         signals=("sclk", "copi"))
    bus = check_design(load_design(design)).bus("spi0")
    notes = [n for n in bus.notes if "not modelled" in n]
    assert len(notes) == 1 and "U5" in notes[0] and "U2" in notes[0] and "5 V" in notes[0]
    same = tmp_path / "same.toml"   # every device on the controller's rail: no such note
    same.write_text(design.read_text(encoding="utf-8").replace(', supply = "5 V"', ""),
                    encoding="utf-8")
    assert not [n for n in check_design(load_design(same)).bus("spi0").notes
                if "not modelled" in n]


def test_a_peak_below_the_receivers_supply_reads_below_not_minus_above(tmp_path):
    # reproducer: a 1.8 V controller's clock into a 3.3 V flash read "peak 1.8 V at
    # U2.sclk against its abs_max 3.7 V at 3.3 V: -1.5 V above its supply"
    design = _spi_design(tmp_path, "1.8 V clock into a 3.3 V part (invented)", "1 MHz",
                         "1.8 V", '{ ref = "U1", part = "mcu-1v8", role = "controller" }',
                         '{ ref = "U2", part = "nor-flash-spi", supply = "3.3 V" }')
    bus = check_design(load_design(design)).bus("spi0")
    chk = next(c for ln in bus.lines for c in ln.checks
               if c.id == "overshoot" and c.subject == "U2")
    # derived: a settled 1.8 V edge 1.5 V under the flash's 3.3 V supply; the check's
    # value is the excursion beyond the rail, none here (not -1.5 V), the peak in details
    assert chk.value == 0.0 and chk.margin == 1.0 and chk.status == "pass"
    assert chk.details["peak"] == pytest.approx(1.8, rel=1e-9)
    assert "1.5 V below its supply" in chk.message and "above its supply" not in chk.message
