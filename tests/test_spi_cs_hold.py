"""CS hold after the last SCLK edge (check ``cs-hold``).

The requirement: a peripheral's ``t_cs_hold`` (minimum, last SCLK edge to CS released at
its pins).  The time available: the controller releases CS ``lag`` after the transfer's
last edge leaves it (its own ``t_cs_hold``, or half a period: common practice, no
source); at the peripheral CS is held from the last edge's late arrival to the release's
early one.  The last edge returns SCLK to its idle level (from memory: SPI modes 0 and 1
idle low, 2 and 3 idle high; the usual CPOL/CPHA table).  Parts are invented test
classes over tests/data/pushpull.
"""

from __future__ import annotations

import pytest

from pinlib.engines import spi
from pinlib.engines.pushline import endpoint
from pinlib.engines.pushpull import evaluate_bus
from tests.test_spi import write_design


def _part(tmp_path, base: str, pid: str, timing: str) -> None:
    """A test part extending ``base`` (invented test data) with ``timing`` lines added."""
    (tmp_path / f"{pid}.toml").write_text(
        f'format = "pinlib.part/1"\nid = "{pid}"\ntitle = "test part (invented)"\n'
        f'category = "memory"\nextends = "{base}"\n'
        'provenance = { basis = "datasheet", source = "test data, invented" }\n'
        f"[timing]\n{timing}", encoding="utf-8")


def _quick_release(tmp_path):
    """A controller that releases CS 1 ns after the last edge and a peripheral that
    needs 5 ns (both invented test data), at 1 MHz: (design, bus)."""
    _part(tmp_path, "pp-ctrl", "ctl-quick", 't_cs_hold = "1 ns"\n')
    _part(tmp_path, "pp-periph", "per-hold", 't_cs_hold = "5 ns"\n')
    return write_design(tmp_path, controller="ctl-quick", peripherals=("per-hold",),
                        extra_library=tmp_path, clock="1 MHz")


def _flights(sa, bus, sig):
    case = sa.lines[sig].cases["U1"]
    rx = endpoint(bus.devices[1], f"spi-{sig}", bus)
    return {e: case.flight(rx, e) for e in ("rise", "fall")}


@pytest.mark.parametrize("mode", [0, 1, 2, 3])
def test_the_hold_runs_from_the_last_edge_to_the_release(tmp_path, mode):
    # the asymmetric controller's two SCLK edges arrive at clearly different times, so
    # taking the wrong edge would show
    _part(tmp_path, "pp-periph", "per-hold", 't_cs_hold = "4 ns"\n')
    d, bus = write_design(tmp_path, mode=mode, controller="pp-ctrl-asym",
                          peripherals=("per-hold",), extra_library=tmp_path)
    sa = spi.spi_analysis(bus, d)
    sclk, cs = _flights(sa, bus, "sclk"), _flights(sa, bus, "cs")
    last = "fall" if mode in (0, 1) else "rise"   # back to the idle level
    assert abs(sclk["rise"].late - sclk["fall"].late) > 0.05e-9
    t = next(t for t in sa.terms if t.id == "cs-hold")
    # derived: available = T/2 (no lag recorded) + CS release early - last edge late
    assert (t.a, t.required, t.subject) == (0.5, pytest.approx(4e-9), "U2")
    assert t.b == cs["rise"].early - sclk[last].late
    assert t.parts["lag"] == "T/2"
    # CS setup takes the asserting (falling) edge of the same line
    setup = next(t for t in sa.terms if t.id == "cs-setup")
    assert setup.parts["cs_late"] == cs["fall"].late
    res = evaluate_bus(bus, d)
    chk = next(c for c in res.checks if c.id == "cs-hold")
    assert chk.value == pytest.approx(0.5 / bus.clock + t.b, rel=1e-12)
    assert chk.status == "pass" and chk.source.startswith("per-hold t_cs_hold")
    assert "CS lag: controller releases CS half a clock period" in " ".join(res.notes)


def test_a_controller_that_releases_cs_at_once_fails_a_stated_hold(tmp_path):
    # the controller states it releases CS 1 ns after the last edge; the peripheral
    # needs 5 ns (both invented test data): the hold is short at every clock, and as
    # a datasheet limit it fails
    d, bus = _quick_release(tmp_path)
    sa = spi.spi_analysis(bus, d)
    t = next(t for t in sa.terms if t.id == "cs-hold")
    sclk, cs = _flights(sa, bus, "sclk"), _flights(sa, bus, "cs")
    assert t.a == 0.0 and t.parts["lag"] == pytest.approx(1e-9)
    assert t.b == pytest.approx(1e-9 + cs["rise"].early - sclk["fall"].late, rel=1e-12)
    res = evaluate_bus(bus, d)
    chk = next(c for c in res.checks if c.id == "cs-hold")
    assert chk.status == "fail" and chk.value < 5e-9
    assert "CS stays asserted" in chk.message and "t_cs_hold 5 ns" in chk.message
    # a term of the period's coefficient 0 that fails allows no clock at all
    assert res.figures["max_clock"].value is None
    assert not any(n.startswith("CS lag") for n in res.notes)


def test_a_peripheral_without_a_hold_is_noted_and_warns_only(tmp_path):
    # pp-periph records no t_cs_hold (taken as 0, no published limit behind it)
    d, bus = write_design(tmp_path)
    res = evaluate_bus(bus, d)
    assert "U2 (pp-periph) records no t_cs_hold: taken as 0" in res.notes
    chk = next(c for c in res.checks if c.id == "cs-hold")
    assert chk.limit == 0.0 and chk.margin_unit == "s" and chk.status in ("pass", "warn")


def test_no_cs_line_no_hold(tmp_path):
    d, bus = write_design(tmp_path, signals=("sclk", "copi", "cipo"))
    res = evaluate_bus(bus, d)
    assert not [c for c in res.checks if c.id == "cs-hold"]
    assert not any("t_cs_hold" in n or n.startswith("CS lag") for n in res.notes)


def test_the_budget_chart_draws_the_hold(tmp_path):
    from pinlib.present import plotdata

    d, bus = _quick_release(tmp_path)
    tb = plotdata.timing_budget_data(bus, d)
    path = "cs-hold U2"
    # derived: the lag the controller states is the time available, as a CS lead is
    assert tb.available[path] == pytest.approx(1e-9)
    used = sum(v for p, _, v in tb.rows if p == path)
    assert tb.margins[path] == pytest.approx(tb.available[path] - used, rel=1e-9)
    assert tb.status[path] == "fail"




def test_swap_names_the_controllers_cs_lag_behind_the_change(tmp_path, capsys, monkeypatch):
    from pinlib.cli import main
    from tests.test_spi import DATA

    monkeypatch.setenv("COLUMNS", "100")
    _part(tmp_path, "pp-ctrl", "ctl-quick", 't_cs_hold = "1 ns"\n')
    _part(tmp_path, "pp-periph", "per-hold", 't_cs_hold = "5 ns"\n')
    write_design(tmp_path, peripherals=("per-hold",), extra_library=tmp_path, clock="1 MHz")
    code = main(["swap", str(tmp_path / "d.toml"), "U1=ctl-quick", "--library", str(DATA),
                 "--library", str(tmp_path)])
    out = capsys.readouterr().out
    assert code == 1 and "CS hold U2: pass → fail" in out
    # the controller's lag is one of the values behind the change, on the CS line
    assert "U1 t_cs_hold (none) → 1 ns" in out
