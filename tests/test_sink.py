"""sink-current on GPIO lines: a driver holding a pulled-up line low, against the sink
current its part rates its low level at (pinlib/engines/pushline/sink.py)."""

from __future__ import annotations

from pathlib import Path

import pytest

from pinlib.engines.dispatch import evaluate_bus
from pinlib.model.design import load_design

DATA = Path(__file__).parent / "data" / "pushpull"
VDD = 3.3  # invented test data: the bus supply


def _bus(tmp_path, devices: str, line: str, library: bool = True):
    lib = f'library = ["{DATA.as_posix()}"]\n' if library else ""
    path = tmp_path / "d.toml"
    path.write_text(f"""format = "pinlib.design/1"
title = "sink test (invented)"
{lib}
[[bus]]
id = "g"
protocol = "gpio"
supply = "3.3 V"
devices = [{devices}]
lines.g = {{ {line} }}
""", encoding="utf-8")
    d = load_design(path)
    return evaluate_bus(d.bus("g"), d)


TRACE = 'length = "5 cm", capacitance = "1 pF/cm", delay = "60 ps/cm"'
PP = ('{ ref = "U1", part = "pp-ctrl", role = "controller", pin = "cs" }, '
      '{ ref = "U2", part = "pp-periph", pin = "cs" }')


def _sink(res):
    (ln,) = res.lines
    return ln, [c for c in ln.checks if c.id == "sink-current"]


def test_push_pull_driver_against_a_strong_pullup_fails(tmp_path):
    ln, (chk,) = _sink(_bus(tmp_path, PP, TRACE + ', pullup = "1 kΩ"'))
    # derived: V / (Rp + v_ol/i_ol) with pp-ctrl's cs VOL 0.2 V at 1 mA (invented test
    # part) and the pull-up at its default -1 % corner (docs/formats/design.md)
    rp = 1e3 * 0.99
    assert chk.value == pytest.approx(VDD / (rp + 0.2 / 1e-3), rel=1e-9)
    assert chk.limit == pytest.approx(1e-3) and chk.unit == "A"
    assert chk.status == "fail" and chk.subject == "U1"
    assert "pp-ctrl" in chk.source and "i_ol" in chk.source
    # derived: (V - v_ol) / i_ol = 3.1 kΩ, the smallest pull-up whose current is i_ol
    assert "3.1 kΩ" in chk.fix
    # derived: a driver rated for i at VOL 0.2 V sinks V / (Rp + 0.2 V / i), within i only
    # from i = (V - 0.2 V) / Rp = 3.13 mA on; the fix named the current it draws now
    # (2.78 mA), which a stronger sink raises past its own rating
    need = (VDD - 0.2) / rp
    assert f"rated to sink at least {need * 1e3:.3g} mA" in chk.fix
    assert VDD / (rp + 0.2 / need) == pytest.approx(need, rel=1e-12)
    assert ln.status == "fail"


def test_push_pull_driver_against_a_weak_pullup_passes(tmp_path):
    _, (chk,) = _sink(_bus(tmp_path, PP, TRACE + ', pullup = "10 kΩ"'))
    # derived: 3.3 V / (9.9 kΩ + 200 Ω) = 0.327 mA against 1 mA
    assert chk.value == pytest.approx(VDD / (9.9e3 + 200.0), rel=1e-9)
    assert chk.status == "pass" and chk.fix is None


def test_the_boundary_is_the_rated_point(tmp_path):
    # derived: at Rp = (V - v_ol)/i_ol the current is i_ol exactly (3.1 kΩ at nominal,
    # so 3.1 kΩ / 0.99 keeps it there at the -1 % corner)
    _, (chk,) = _sink(_bus(tmp_path, PP, TRACE + f', pullup = "{3.1e3 / 0.99} Ω"'))
    assert chk.value == pytest.approx(1e-3, rel=1e-9)
    assert chk.status != "fail"


def test_no_pullup_no_check(tmp_path):
    ln, got = _sink(_bus(tmp_path, PP, TRACE))
    assert got == [] and not any("sinks up to" in n for n in ln.notes)


def test_series_resistor_counts_in_the_current(tmp_path):
    _, (chk,) = _sink(_bus(tmp_path, PP, TRACE + ', pullup = "1 kΩ", series_resistor = "100 Ω"'))
    # derived: the resistor at the driver is in the loop: 3.3 / (990 + 100 + 200)
    assert chk.value == pytest.approx(VDD / (990.0 + 100.0 + 200.0), rel=1e-9)
    assert "series resistor 100 Ω" in chk.message


def test_a_driver_without_i_ol_gets_a_note(tmp_path):
    # pp-ctrl's reset pin states r_out only (invented test part)
    devs = ('{ ref = "U1", part = "pp-ctrl", role = "controller", pin = "reset" }, '
            '{ ref = "U2", part = "pp-periph", pin = "irq" }')
    ln, got = _sink(_bus(tmp_path, devs, TRACE + ', pullup = "1 kΩ"'))
    # U2's irq is an open-drain output with VOL 0.4 V at 4 mA: it has its check
    assert [c.subject for c in got] == ["U2"]
    (note,) = [n for n in ln.notes if "sinks up to" in n]
    # derived: with no sink stated, the bound is the pull-up alone: 3.3 V / 1 kΩ (nominal)
    assert "3.3 mA" in note and "U1.reset" in note and "v_ol at i_ol" in note


def test_open_drain_reset_against_a_strong_pullup(tmp_path):
    # the built-in supervisor class: VOL 0.3 V at 1 mA (typical of the class, common
    # practice); a 1 kΩ pull-up draws 3.3 / (990 + 300) = 2.56 mA at the -1 % corner
    devs = ('{ ref = "U2", part = "supervisor-od", role = "controller", pin = "reset" }, '
            '{ ref = "U1", part = "mcu-3v3", pin = "reset" }')
    _, (chk,) = _sink(_bus(tmp_path, devs, TRACE + ', pullup = "1 kΩ"', library=False))
    assert chk.value == pytest.approx(VDD / (990.0 + 300.0), rel=1e-9)
    # its rating is the class's typical one: past it a warning (model.result.soft_limit)
    assert chk.status == "warn" and "supervisor-od" in chk.source
    assert chk.details["limit_basis"] == "generic" and chk.margin < 0
    # the receiver's low level: the sink guarantees 1 mA past its VOL, no more, so the
    # line settles where the pull-up carries 1 mA (it read the 300 Ω point's 0.77 V;
    # the I2C engine's model, docs/formats/result.md `v_ol`)
    ln, _ = _sink(_bus(tmp_path, devs, TRACE + ', pullup = "1 kΩ"', library=False))
    (low,) = [c for c in ln.checks if c.id == "level-low"]
    # (less the pins' leakage through the pull-up, a few mV, on the high level it falls
    # from)
    assert low.value == pytest.approx(VDD - 1e-3 * 990.0, abs=0.01)
    # against mcu-3v3's VIL, typical of its class: a warning where it would fail
    assert low.margin < 0 and low.status == "warn"
    _, (ok,) = _sink(_bus(tmp_path, devs, TRACE + ', pullup = "10 kΩ"', library=False))
    assert ok.status == "pass"


def test_built_in_gpio_output_against_an_led_sized_pullup(tmp_path):
    # mcu-3v3's gpio_out: VOL 0.4 V at 8 mA (typical of the class); 330 Ω draws
    # 3.3 / (326.7 + 50) = 8.76 mA at the -1 % corner: beyond its rating
    devs = ('{ ref = "U1", part = "mcu-3v3", role = "controller", pin = "gpio_out" }, '
            '{ ref = "U3", part = "fpga-io-3v3", pin = "gpio_in" }')
    _, (chk,) = _sink(_bus(tmp_path, devs, TRACE + ', pullup = "330 Ω"', library=False))
    assert chk.value == pytest.approx(VDD / (330 * 0.99 + 0.4 / 8e-3), rel=1e-9)
    # the class's typical rating: a warning, not a failure (model.result.soft_limit)
    assert chk.status == "warn" and chk.details["limit_basis"] == "generic"


def test_no_pullup_names_the_pullup_inside_the_part_not_counted(tmp_path):
    # supervisor to a microcontroller's reset with no resistor on the line: the MCU class
    # carries a 40 kΩ reset pull-up as pullup_internal (typical of the class), counted
    # only with internal_pullups = true; the failure must say so and how to count it
    devs = ('{ ref = "U2", part = "supervisor-od", role = "controller", pin = "reset" }, '
            '{ ref = "U1", part = "mcu-3v3", pin = "reset" }')
    (ln,) = _bus(tmp_path, devs, TRACE, library=False).lines
    chk = ln.check("pull-up")
    assert chk.status == "fail"
    assert "U1.reset (40 kΩ) has a pull-up inside the part" in chk.message
    assert "internal_pullups = true on U1" in chk.fix
    # with it set, the pull-up inside U1 is counted: the line rises, and the supervisor
    # sinks 3.3 V / (40 kΩ + 300 Ω) (derived), well within its 1 mA
    counted = devs.replace('pin = "reset" }', 'pin = "reset", internal_pullups = true }', 2)
    (ln,) = _bus(tmp_path, counted, TRACE, library=False).lines
    assert ln.check("pull-up") is None
    (sink,) = [c for c in ln.checks if c.id == "sink-current"]
    assert sink.value == pytest.approx(VDD / (40e3 + 300.0), rel=1e-9)


def test_leakage_that_drops_the_whole_rail_is_refused_clearly(tmp_path):
    # pp-ctrl's and pp-periph's irq pins leak 1 µA each (invented test parts): through
    # 2 MΩ they would drop 4 V, more than the 3.3 V rail, so the line never leaves 0 V
    from pinlib.core.errors import DesignError

    devs = ('{ ref = "U1", part = "pp-ctrl", role = "controller", pin = "irq" }, '
            '{ ref = "U2", part = "pp-periph", pin = "irq" }')
    with pytest.raises(DesignError) as info:
        _bus(tmp_path, devs, TRACE + ', pullup = "2 MΩ"')
    err = info.value
    assert err.field.endswith("lines.g.pullup") and err.line == 10
    assert "never rises" in err.problem and "4 V" in err.problem
    # derived: (3.3 V - VIH 0.7 x 3.3 V) / 2 µA = 495 kΩ keeps the high level at VIH
    assert "495 kΩ" in err.expected
    # below rail / leak (1.65 MΩ) the line rises, to a level short of VIH: the
    # level-high check fails instead, with the high level 3.3 V - 2 µA x 1.5 MΩ x 1.01
    (ln,) = _bus(tmp_path, devs, TRACE + ', pullup = "1.5 MΩ"').lines
    high = [c for c in ln.checks if c.id == "level-high"]
    assert high and all(c.status == "fail" for c in high)
    assert high[0].value == pytest.approx(VDD - 2e-6 * 1.5e6 * 1.01, rel=1e-9)


def test_push_pull_on_a_lower_rail_than_the_pullup_is_noted(tmp_path):
    # a 1.8 V microcontroller output (built-in class) on a line pulled up to the 3.3 V
    # bus supply: while it drives high, (3.3 - 1.8) / 10 kΩ = 150 µA (derived) flows
    # into its output; the part format has no injection limit, so a note, no check
    path = tmp_path / "d.toml"
    path.write_text("""format = "pinlib.design/1"
title = "back current (invented)"

[[bus]]
id = "en"
protocol = "gpio"
supply = "3.3 V"
devices = [
  { ref = "U1", part = "mcu-1v8", role = "controller", pin = "gpio_out", supply = "1.8 V" },
  { ref = "U3", part = "fpga-io-3v3", pin = "gpio_in" },
]
lines.en = { LINE }
""".replace("LINE", 'length = "5 cm", capacitance = "1 pF/cm", delay = "60 ps/cm", '
                    'pullup = "10 kΩ", pullup_tolerance = "0 %"'), encoding="utf-8")
    d = load_design(path)
    (ln,) = evaluate_bus(d.bus("en"), d).lines
    (note,) = [n for n in ln.notes if "flows into its output" in n]
    assert "U1.gpio_out" in note and "150 µA" in note
    # on its own rail, no such note
    path.write_text(path.read_text(encoding="utf-8").replace(', supply = "1.8 V" }', ' }')
                    .replace('part = "mcu-1v8"', 'part = "mcu-3v3"'), encoding="utf-8")
    d = load_design(path)
    (ln,) = evaluate_bus(d.bus("en"), d).lines
    assert not any("flows into its output" in n for n in ln.notes)
