"""pinlib.engines.coupling: a design's [[coupling]] through check, JSON and the text report.

The designs here are invented for the tests: an I2C Standard-mode bus (its inputs need
not filter spikes) with a fast described edge 50 µm beside its SCL for 25 cm, and the
demo's display clock beside its sensor bus's SCL.
"""

from __future__ import annotations

import dataclasses
import json
import textwrap
import warnings

import numpy as np
import pytest

from pinlib.core.errors import ValidityWarning
from pinlib.engines.coupling import pair_at
from pinlib.engines.crosstalk import coupling_checks, noise_batch, victim_noise
from pinlib.engines.dispatch import check_design
from pinlib.model.design import Aggressor, load_design
from pinlib.present.report import format_text

DESIGN = """\
format = "pinlib.design/1"
title = "coupling test board (invented)"

[board.geometry.g]
kind = "microstrip"
width = "0.2 mm"
height = "0.18 mm"
thickness = "0 mm"
er = 4.2

[[bus]]
id = "b"
protocol = "i2c"
mode = "standard"
supply = "3.3 V"
pullup = "4.7 kΩ"
trace = { length = "30 cm", geometry = "g" }
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller" },
  { ref = "U2", part = "eeprom-i2c" },
]

[[coupling]]
victim = "b.scl"
aggressor = { swing = "3.3 V", edge_time = "0.5 ns", source_resistance = "20 Ω" }
spacing = "0.05 mm"
parallel_length = "25 cm"
geometry = "g"
"""


@pytest.fixture(scope="module")
def tight(tmp_path_factory):
    path = tmp_path_factory.mktemp("coupling") / "design.toml"
    path.write_text(textwrap.dedent(DESIGN), encoding="utf-8")
    design = load_design(path)
    return design, check_design(design)


def _fails(pair, length, w) -> bool:
    noise = victim_noise(pair, length, w.aggressor, w.victim)
    return any(c.status == "fail" for c in coupling_checks(noise, w.victim, subject="v"))


def test_a_tight_run_fails_on_scl_with_its_sources(tight):
    _, result = tight
    (c,) = result.couplings
    assert c.id == "b.scl<-edge-1" and c.status == "fail" and result.status == "fail"
    failing = [k for k in c.checks if k.status == "fail"]
    # UM10204 rev. 6, table 9: Standard-mode inputs need not filter, so a crossing on SCL
    # is a second clock edge (the glitch check fails with no limit)
    assert any(k.id == "crosstalk-glitch" and k.limit is None for k in failing)
    assert all(k.source for k in c.checks)
    assert all("UM10204" in k.source for k in c.checks)


def test_a_described_edge_is_the_solvers_aggressor_as_read(tight):
    design, result = tight
    a = design.couplings[0].aggressor
    # from the design text above: the file's source_resistance and (absent)
    # load_capacitance are the type's r_source and c_far
    assert a == Aggressor(swing=3.3, edge_time=0.5e-9, r_source=20.0, c_far=0.0)
    assert result.couplings[0].workings.aggressor is a


def test_minimum_spacing_and_maximum_length_are_edges_of_passing(tight):
    design, result = tight
    (c,) = result.couplings
    w = c.workings
    coupling = design.couplings[0]
    s_min = c.figures["minimum_spacing"].value
    l_max = c.figures["maximum_parallel_length"].value
    assert coupling.spacing < s_min and l_max < coupling.length
    # derived from the search: its edge passes and 3 % past it fails (grid precision 2 %)
    assert not _fails(pair_at(coupling, s_min), coupling.length, w)
    assert _fails(pair_at(coupling, s_min / 1.03), coupling.length, w)
    pair = pair_at(coupling, coupling.spacing)
    assert not _fails(pair, l_max, w)
    assert _fails(pair, l_max * 1.03, w)


def test_the_batched_solve_is_the_single_one(tight):
    design, result = tight
    w = result.couplings[0].workings
    coupling = design.couplings[0]
    spacings = np.array([0.05e-3, 0.2e-3, 0.6e-3])
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        batch = noise_batch(pair_at(coupling, spacings), coupling.length, w.aggressor, w.victim)
        for s, got in zip(spacings, batch, strict=True):
            one = victim_noise(pair_at(coupling, s), coupling.length, w.aggressor, w.victim)
            # derived from one solver: the same pairs, stacked or alone (1e-12)
            for key, n in one.items():
                assert got[key].level == pytest.approx(n.level, abs=1e-12)
                assert got[key].beyond == pytest.approx(n.beyond, abs=1e-15)


def test_json_holds_the_coupling_beside_the_buses(tight):
    _, result = tight
    data = json.loads(json.dumps(result.to_json()))
    (c,) = data["couplings"]
    assert c["victim"] == "b.scl" and c["aggressor"] == "edge-1"
    assert {"minimum_spacing", "maximum_parallel_length", "peak_noise"} <= set(c["figures"])
    assert [b["id"] for b in data["buses"]] == ["b"]


def test_the_text_puts_the_coupling_problems_first(tight):
    _, result = tight
    text = format_text(result, width=100)
    lines = text.splitlines()
    first = next(i for i, ln in enumerate(lines) if ln.startswith("FAIL b.scl<-edge-1"))
    summary = next(i for i, ln in enumerate(lines) if ln.startswith("FAIL b.scl beside edge-1"))
    assert first < summary
    assert "on 1 bus and 1 coupling" in text


def test_a_design_without_couplings_keeps_its_json():
    design = load_design("workbooks/designs/demo-board.toml")
    bare = check_design(dataclasses.replace(design, couplings=()))
    assert "couplings" not in bare.to_json()


def test_monte_carlo_reads_the_noise_from_a_table_that_follows_the_solver(tight, tmp_path):
    from pinlib.engines import couplingbatch as cb
    from pinlib.studies import whatif

    design, result = tight
    text = DESIGN + 'spacing_tolerance = "20 %"\nlength_tolerance = "10 %"\n'
    path = tmp_path / "tol.toml"
    path.write_text(text, encoding="utf-8")
    d = load_design(path)
    (c,) = d.couplings
    nominal = result.couplings[0]
    table = cb.CouplingTable.solve(c, nominal)
    # between the grid's points the table agrees with the solver (derived from the
    # solver itself; 2 % of the level: the noise is smooth in spacing and length)
    w = nominal.workings
    for fs, fl in ((0.9, 1.05), (1.13, 0.93)):
        one = victim_noise(pair_at(c, c.spacing * fs), c.length * fl, w.aggressor, w.victim)
        for key, n in one.items():
            got = float(table.read(table.levels[key], np.array([fs]), np.array([fl]))[0])
            assert got == pytest.approx(n.level, rel=0.02, abs=0.02)
    mc = whatif.monte_carlo(d, 200, seed=3)
    assert "b.scl<-edge-1" in mc.buses
    mine = [k for k in mc.checks if k.bus == "b.scl<-edge-1"]
    assert [k.id for k in mine] == [k.id for k in nominal.checks]
    assert {p.name for p in mc.parameters} >= {"b.scl<-edge-1 spacing",
                                                "b.scl<-edge-1 parallel length"}
    # the nominal run fails on SCL: so do the boards around it
    assert mc.buses["b.scl<-edge-1"].passes < 200
    # a board passes where its buses and its couplings all do; of those, the boards
    # that warn are counted once, whichever bus or coupling warns
    assert mc.board.passes <= min(y.passes for y in mc.buses.values())
    assert all(y.warned <= y.passes for y in (mc.board, *mc.buses.values()))


def test_the_charts_draw_what_the_engine_solved(tight):
    from pinlib.present import charts as ch
    from pinlib.present import plotdata

    _, result = tight
    c = result.couplings[0]
    d = plotdata.noise_vs_spacing_data(c)
    # every spacing drawn is one the searches solved (no solve again), sorted
    assert len(d.spacing) == len(c.workings.sweep) and np.all(np.diff(d.spacing) > 0)
    assert d.design_spacing == c.figures["spacing"].value
    assert d.design_peak == pytest.approx(c.figures["peak_noise"].value, abs=1e-12)
    # derived from the receivers' levels: VIL 0.3 VDD and VDD - VIH 0.3 VDD (UM10204
    # rev. 6, table 9, through the test parts' classes)
    assert 0 < d.allowed < 3.3
    w = plotdata.noise_waveform_data(c)
    assert set(w.traces) == {"held low, near end", "held low, far end",
                             "held high, near end", "held high, far end"}
    # drawn until the shown traces have settled back (within 2 % of their largest
    # excursion, and a quarter of that time on): each held state on its own time axis

    def settled_at(k):
        dev = np.abs(w.traces[k] - w.traces[k][0])
        return w.t[min(np.flatnonzero(dev > 0.02 * dev.max())[-1] + 1, len(w.t) - 1)]

    for held in ("low", "high"):
        labels = [k for k in w.traces if k.startswith(f"held {held}")]
        t, traces = w.window(labels)
        assert list(traces) == labels and all(len(v) == len(t) for v in traces.values())
        assert np.array_equal(t, w.t[:len(t)])
        last = max(settled_at(k) for k in labels)
        assert t[-1] >= last  # every excursion drawn whole, and little after
        assert t[-1] <= 1.25 * last + (w.t[1] - w.t[0])
    assert len(w.window()[0]) >= len(w.window(["held low, near end"])[0])
    # each trace in the direction that hurts: the held-high one dips to the checked level
    low = min(w.traces["held high, near end"])
    check = next(k for k in c.checks if k.id == "crosstalk-high"
                 and (k.details["end"], k.details["held"]) == ("near", "high"))
    assert low == pytest.approx(check.value, abs=1e-12)
    spec = ch.noise_vs_spacing(d.spacing, d.peak, allowed=d.allowed,
                               design_spacing=d.design_spacing, design_peak=d.design_peak,
                               minimum_spacing=d.minimum_spacing).to_dict()
    assert "minimum spacing" in json.dumps(spec)


def test_a_snapshot_comparison_names_a_coupling_that_moved(tight):
    from pinlib.studies.compare import compare

    _, result = tight
    old = result.to_json()
    new = json.loads(json.dumps(old))
    fig = new["couplings"][0]["figures"]["peak_noise"]
    fig["value"] *= 1.5  # invented: the same run 50 % noisier
    text = json.dumps(compare(old, new).to_json())
    assert "b.scl<-edge-1" in text and "peak_noise" in text


def _variant(tmp_path, old, new):
    path = tmp_path / "design.toml"
    text = textwrap.dedent(DESIGN)
    assert old in text
    path.write_text(text.replace(old, new), encoding="utf-8")
    return path


def test_peak_noise_is_the_excursion_from_the_held_level(tmp_path):
    # common practice, no source: an aggressor too weak and slow to couple anything
    path = _variant(tmp_path, 'swing = "3.3 V", edge_time = "0.5 ns"',
                    'swing = "1 mV", edge_time = "1 us"')
    c = check_design(load_design(path)).couplings[0]
    vic = c.workings.victim
    held_low = vic.held_level("low")
    # the held-low line rests at its sink's level against the pull-up, well above 0
    assert held_low == pytest.approx(vic.vdd * vic.r_sink / (vic.r_sink + vic.r_pullup),
                                     rel=1e-12)
    assert held_low > 0.01
    # the level each check reads is the held level plus the (tiny) excursion
    for k, wave in c.workings.waves.items():
        assert wave[0] == pytest.approx(vic.held_level(k[0]), rel=1e-9)
    low = next(k for k in c.checks if k.id == "crosstalk-low")
    assert low.value == pytest.approx(held_low, abs=1e-3)
    # the figure is the excursion: at most the aggressor's 1 mV swing, not the held level
    assert 0 <= c.figures["peak_noise"].value < 1e-3
    from pinlib.present import plotdata
    d = plotdata.noise_vs_spacing_data(c)
    assert d.design_peak == pytest.approx(c.figures["peak_noise"].value, abs=1e-15)
    # the allowed excursion is measured from the held levels too
    vil = min(x for x in vic.vil.values() if x is not None)
    vih = max(x for x in vic.vih.values() if x is not None)
    assert d.allowed == pytest.approx(min(vil - held_low, vic.vdd - vih), rel=1e-12)


DEMO = "workbooks/designs/demo-board.toml"


def test_held_high_threshold_and_level_share_the_rail_corner():
    from pathlib import Path
    c = check_design(load_design(Path(__file__).parents[1] / DEMO)).couplings[0]
    vic = c.workings.victim
    # published: UM10204 rev. 6, table 9, VIH 0.7 VDD (the controller's class); the demo's
    # 3.3 V rail at -5 % (its supply_tolerance)
    low = 3.3 * (1 - 0.05)
    assert vic.vdd == pytest.approx(low, rel=1e-12)
    for k in c.checks:
        if k.id == "crosstalk-high":
            assert k.limit == pytest.approx(0.7 * low, rel=1e-12)
            assert "low corner" in k.message
        if k.id == "crosstalk-low":  # VIL 0.3 VDD: the low rail leaves the least room
            assert k.limit == pytest.approx(0.3 * low, rel=1e-12)
    assert vic.vdd_low == pytest.approx(low, rel=1e-12)


def test_the_worse_corner_follows_the_thresholds():
    from types import SimpleNamespace

    from pinlib.engines.coupling import _worst_corners
    vdd = np.array([3.0, 3.6])  # common practice, no source: a rail at ±~9 %
    # fixed thresholds (a part's absolute levels): the held-low level rises with the
    # rail, so the high corner leaves less room below VIL; held high the low corner
    fixed = [SimpleNamespace(v_il=np.array([0.8, 0.8]), v_ih=np.array([2.0, 2.0]))]
    lo, hi, texts = _worst_corners(vdd, fixed, 0.02)
    assert (lo, hi) == (1, 0) and "high corner" in texts[lo]
    # thresholds following the rail (0.3 and 0.7 VDD): the low corner for both
    scaled = [SimpleNamespace(v_il=0.3 * vdd, v_ih=0.7 * vdd)]
    assert _worst_corners(vdd, scaled, 0.02)[:2] == (0, 0)


def test_a_parallel_run_longer_than_a_line_is_refused(tmp_path):
    from pinlib.core.errors import PinlibError
    # physical impossibility: the victim's trace is 30 cm, the run beside it 31 cm
    path = _variant(tmp_path, 'parallel_length = "25 cm"', 'parallel_length = "31 cm"')
    with pytest.raises(PinlibError) as e:
        load_design(path)
    text = str(e.value)
    assert "parallel_length" in text and "design.toml:" in text
    assert "300 mm" in text and "310 mm" in text and "b.scl" in text


def test_a_line_of_unknown_length_sets_no_bound(tmp_path):
    # the victim's segment gives no trace: its length is unknown, any run is taken
    path = _variant(tmp_path, 'trace = { length = "30 cm", geometry = "g" }\n', "")
    c = load_design(path).couplings[0]
    assert c.length == pytest.approx(0.25, rel=1e-12)


def test_a_victim_behind_a_translator_is_held_low_across_it(tmp_path):
    from pathlib import Path
    text = (Path(__file__).parents[1] / DEMO).read_text(encoding="utf-8")
    old = 'segment = "main-3v3"'
    assert old in text and 'parallel_length = "6 cm"' in text
    text = text.replace(old, 'segment = "sensor-1v8"').replace(
        'parallel_length = "6 cm"', 'parallel_length = "3 cm"')  # the 1.8 V trace is 4 cm
    path = tmp_path / "demo.toml"
    path.write_text(text, encoding="utf-8")
    result = check_design(load_design(path))
    c = result.couplings[0]
    vic = c.workings.victim
    # no device on the 1.8 V side drives SCL: U1 does, on the 3.3 V side, through Q1
    sensors = next(b for b in result.buses if b.id == "sensors")
    _, segs = sensors.workings
    main = segs[0]
    u1 = max(float(np.max(d.r_sink)) for d in main.lines["scl"].drivers)
    rp = main.r_eff("scl") * (1 - main.tol)
    r_on = 10.0  # the level-translator-mosfet class's r_on (its part file)
    assert vic.r_sink == pytest.approx(u1 * rp / (u1 + rp) + r_on, rel=1e-12)
    assert vic.v_sink == pytest.approx(float(main.vdd[1]) * u1 / (u1 + rp), rel=1e-12)
    assert "U1 via Q1" in " ".join(c.notes)
    for k, wave in c.workings.waves.items():
        assert wave[0] == pytest.approx(vic.held_level(k[0]), rel=1e-9)
    assert all(np.isfinite(k.value) for k in c.checks)


CHAIN = """\
format = "pinlib.design/1"
title = "two translators in a row (invented)"

[board.geometry.g]
kind = "microstrip"
width = "0.2 mm"
height = "0.18 mm"
thickness = "0 mm"
er = 4.2

[[bus]]
id = "b"
protocol = "i2c"

[[bus.segment]]
id = "a"
supply = "3.3 V"
trace = { length = "5 cm", geometry = "g" }
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller" },
  { ref = "Q1", part = "level-translator-mosfet", side = "b" },
]

[[bus.segment]]
id = "m"
supply = "2.5 V"
trace = { length = "5 cm", geometry = "g" }
devices = [
  { ref = "Q1", part = "level-translator-mosfet", side = "a" },
  { ref = "Q2", part = "level-translator-mosfet", side = "b" },
]

[[bus.segment]]
id = "c"
supply = "1.8 V"
trace = { length = "5 cm", geometry = "g" }
devices = [
  { ref = "Q2", part = "level-translator-mosfet", side = "a" },
  { ref = "U9", part = "temp-humidity-sensor" },
]

[[coupling]]
victim = "b.scl"
segment = "c"
aggressor = { swing = "3.3 V", edge_time = "1 ns", source_resistance = "20 Ω" }
spacing = "0.3 mm"
parallel_length = "3 cm"
geometry = "g"
"""


def test_a_driver_two_translators_away_holds_the_victim(tmp_path):
    path = tmp_path / "chain.toml"
    path.write_text(CHAIN, encoding="utf-8")
    result = check_design(load_design(path))
    c = result.couplings[0]
    vic = c.workings.victim
    _, (a, m, _c) = result.buses[0].workings
    rs = max(float(np.max(d.r_sink)) for d in a.lines["scl"].drivers)
    r_on = 10.0  # the level-translator-mosfet class's r_on (its part file)

    def par(*xs):  # sources (v, r) in parallel
        g = sum(1 / r for _, r in xs)
        return sum(v / r for v, r in xs) / g, 1 / g

    # derived by hand: U1's sink and a's pull-up, through Q1, beside m's pull-up, through Q2
    va, ra = par((0.0, rs), (float(a.vdd[1]), a.r_eff("scl") * (1 - a.tol)))
    vm, rm = par((va, ra + r_on), (float(m.vdd[1]), m.r_eff("scl") * (1 - m.tol)))
    assert vic.v_sink == pytest.approx(vm, rel=1e-12)
    assert vic.r_sink == pytest.approx(rm + r_on, rel=1e-12)
    assert "U1 via Q2, Q1" in " ".join(c.notes)
    for k, wave in c.workings.waves.items():
        assert wave[0] == pytest.approx(vic.held_level(k[0]), rel=1e-9)


def test_a_bus_id_with_a_dot_can_be_named_in_a_coupling(tmp_path):
    # Once "no bus with this id (got 'i2c'); did you mean 'i2c.main'?" for the victim
    # "i2c.main.scl": the line was split at its first dot, not at the signal's.
    path = _variant(tmp_path, 'id = "b"', 'id = "i2c.main"')
    text = path.read_text(encoding="utf-8").replace('victim = "b.scl"',
                                                    'victim = "i2c.main.scl"')
    path.write_text(text, encoding="utf-8")
    design = load_design(path)
    (pair,) = design.couplings
    assert (pair.victim_bus, pair.victim_signal) == ("i2c.main", "scl")
    assert check_design(design).couplings
