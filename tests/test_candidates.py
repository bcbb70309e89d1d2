"""Tests of the candidate ranking (pinlib.studies.candidates) and ``pinlib candidates``: the
vectorized ranking against a per-candidate evaluation with the engines, on the whole
built-in library."""

from __future__ import annotations

import json
import math
import sys
from pathlib import Path

import numpy as np
import pytest

from pinlib.cli import main
from pinlib.core import messages as M
from pinlib.core.errors import DesignError, InputError
from pinlib.library.loader import Library, load_library
from pinlib.library.values import Sourced
from pinlib.model.design import load_design
from pinlib.studies import candidates as cand
from tests.fixdesigns import host_to_5v_smbus

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "workbooks" / "designs" / "demo-board.toml"
PARTS = Path(__file__).parent / "data" / "parts"

sys.path.insert(0, str(Path(__file__).parent))
from test_whatif import BUSES, HEAD  # noqa: E402  (the invented buses of the what-if tests)


def assert_same_ranking(fast: cand.Ranking, slow: cand.Ranking) -> None:
    assert [c.part for c in fast.candidates] == [c.part for c in slow.candidates]
    assert fast.excluded == slow.excluded
    for a, b in zip(fast.candidates, slow.candidates, strict=True):
        assert a.status == b.status, a.part
        if b.worst_margin is None:
            assert a.worst_margin is None, a.part
        elif math.isinf(b.worst_margin):
            assert a.worst_margin == b.worst_margin, a.part
        else:
            assert a.worst_margin == pytest.approx(b.worst_margin, rel=1e-9), a.part
        wa, wb = a.worst_check or {}, b.worst_check or {}
        assert wa.get("id") == wb.get("id"), a.part
        # a yes/no check set the worst in both or in neither; a device's own check
        # names the same device
        assert (wa.get("reason") == M.WORST_YES_NO) == (wb.get("reason") == M.WORST_YES_NO)
        if wb.get("id") in cand.DEVICE_CHECKS:
            assert wa.get("subject") == wb.get("subject"), a.part
        for key in ("margin_unit", "status_by"):
            got = ((a.worst_check or {}).get(key), (b.worst_check or {}).get(key))
            if key == "status_by":  # a batch names no subject where the engine kept none
                got = tuple(None if x is None else x["id"] for x in got)
            assert got[0] == got[1], (a.part, key)
        assert len(a.margins) == len(b.margins), a.part
        assert np.allclose(a.margins, b.margins, rtol=1e-9, atol=0.0), a.part
        assert a.current == b.current
        for bus, figs in b.figures.items():
            for name, (value, unit) in figs.items():
                got = a.figures[bus][name]
                assert got[1] == unit
                assert (got[0] is None) == (value is None), (a.part, name)
                if value is not None:
                    assert got[0] == pytest.approx(value, rel=1e-9), (a.part, name)


# --------------------------------------------------------------------------- vectorized == slow


DEMO_DESIGN = load_design(DEMO)
DEMO_REFS = sorted({d.ref for b in DEMO_DESIGN.buses for d in b.devices})


@pytest.mark.parametrize("ref", DEMO_REFS)
def test_vectorized_ranking_equals_per_candidate_on_the_builtin_library(ref):
    # every position of the demo design, every placeable part of the built-in library
    fast = cand.rank_candidates(DEMO_DESIGN, ref)
    slow = cand.rank_candidates_slow(DEMO_DESIGN, ref)
    assert fast.candidates, ref
    assert_same_ranking(fast, slow)
    assert fast.library_size == len(load_library().placeable())


def test_vectorized_ranking_equals_per_candidate_on_every_engine_branch(tmp_path):
    # invented buses: a repeater, a pass-transistor translator, own rails, part pull-ups,
    # series resistors, a switched device, SMBus; candidates from the built-in library
    # and the test parts
    path = tmp_path / "d.toml"
    path.write_text(HEAD + BUSES.format(vtol="5 %", ptol="1 %", ctol="10 %", ltol="5 %"),
                    encoding="utf-8")
    d = load_design(path, library_folders=[PARTS])
    for ref in ("U1", "U2", "U3", "U4", "U5", "U6", "J1", "U16", "U23", "U21", "U32"):
        fast = cand.rank_candidates(d, ref)
        assert fast.candidates and all(c.method == "vectorized" for c in fast.candidates)
        assert_same_ranking(fast, cand.rank_candidates_slow(d, ref))
    # a bridging part is evaluated one candidate at a time, each bus once
    for ref in ("Q1", "U15"):
        fast = cand.rank_candidates(d, ref)
        assert all(c.method == "per-candidate" for c in fast.candidates)
        assert len(fast.buses) == 1 and len(fast.notes) == 1
        assert_same_ranking(fast, cand.rank_candidates_slow(d, ref))


SWITCHED = """\
format = "pinlib.design/1"
title = "A device on a switched rail (invented)"

[[bus]]
id = "s"
protocol = "i2c"
mode = "fast"
supply = "3.3 V"
pullup = "2.2 kΩ"
trace = { length = "10 cm", capacitance = "1 pF/cm" }
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller" },
  { ref = "U2", part = "eeprom-i2c", switched = true },
]
"""


def test_a_failing_yes_no_check_sets_the_worst_without_a_margin(tmp_path):
    # the position's device sits on a switched rail: a candidate whose pins are not
    # power-off tolerant fails the power-off check, which has no margin; its worst is
    # that check with no number ("—"), not a passing check's positive margin
    # the check fails only where a datasheet says the pins are not tolerant: a team part
    # (invented) that says so; a part that states nothing of it warns
    team = tmp_path / "team"
    team.mkdir()
    (team / "eeprom-clamped.toml").write_text(
        'format = "pinlib.part/1"\nid = "eeprom-clamped"\ntitle = "EEPROM (invented)"\n'
        'category = "memory"\nextends = "eeprom-i2c"\n'
        'provenance = { basis = "datasheet", source = "invented test data" }\n'
        '[pins.sda]\noff_tolerant = false\n[pins.scl]\noff_tolerant = false\n',
        encoding="utf-8")
    path = tmp_path / "d.toml"
    path.write_text(SWITCHED, encoding="utf-8")
    d = load_design(path, library_folders=[team])
    fast, slow = cand.rank_candidates(d, "U2"), cand.rank_candidates_slow(d, "U2")
    assert_same_ranking(fast, slow)
    failing = [c for c in fast.candidates if c.status == "fail"]
    assert failing and any(c.status == "pass" for c in fast.candidates)
    yes_no = [c for c in failing if c.worst_margin is None]
    assert yes_no
    for c in yes_no:
        assert c.worst_check["id"] == "power-off" and c.worst_check["subject"] == "U2"
        assert c.margin_text() == "—"
        assert c.margins  # still ordered among themselves by their other margins
    for c in failing:  # a failing check of its own with a margin comes first: below 0
        assert c.worst_margin is None or c.worst_margin < 0, c.part
    text = fast.format_text(top=5, width=80)
    assert "Power off U2" in text and M.WORST_YES_NO.split(",")[0] in text
    assert all(len(ln) <= 80 for ln in text.splitlines())
    # a pass (an off-tolerant part) is ranked by its margins as before
    ok = next(c for c in fast.candidates if c.status == "pass")
    assert ok.worst_margin is not None and ok.worst_check["id"] != "power-off"


def _variants(n: int, seed: int = 7) -> Library:
    """The built-in library plus ``n`` invented variants of its I2C parts, each pin's
    capacitance, leakage, sink point and thresholds drawn at random."""
    lib = load_library()
    rng = np.random.default_rng(seed)
    base = [p for p in lib.placeable().values()
            if {"i2c-sda", "i2c-scl"} <= p.functions() and not p.sides]
    parts = dict(lib.parts)
    for i in range(n):
        b = base[i % len(base)]
        pins = {}
        for name, pin in b.pins.items():
            upd = {"c_in": Sourced(float(rng.uniform(2e-12, 20e-12)), "F", "invented"),
                   "leakage": Sourced(float(rng.uniform(0.1e-6, 10e-6)), "A", "invented")}
            if pin.drive == "open-drain":
                upd["i_ol"] = Sourced(float(rng.uniform(1e-3, 8e-3)), "A", "invented")
            pins[name] = pin.copy(**upd)
        pid = f"variant-{i:04d}"
        parts[pid] = b.copy(**{"id": pid, "pins": pins})
    return Library(parts=parts, files=lib.files, overrides=lib.overrides, problems=[],
                   folders=lib.folders)


def test_vectorized_ranking_equals_per_candidate_on_invented_variants():
    d = load_design(DEMO, library=_variants(150))
    for ref in ("U4", "U9", "U30"):
        fast = cand.rank_candidates(d, ref)
        assert len(fast.candidates) > 100
        assert all(c.method == "vectorized" for c in fast.candidates)
        assert_same_ranking(fast, cand.rank_candidates_slow(d, ref))


# --------------------------------------------------------------------------- the ranking


def test_ranking_order_and_the_current_part():
    r = cand.rank_candidates(DEMO_DESIGN, "U4")
    assert r.current == "eeprom-i2c"
    assert r.candidate("eeprom-i2c").current
    ranks = [cand._RANK[c.status] for c in r.candidates]
    assert ranks == sorted(ranks)                # pass before warn before fail
    # a part that cannot serve an I2C position is left out and counted
    ids = {c.part for c in r.candidates}
    assert "nor-flash-spi" not in ids and "ribbon-cable" not in ids
    assert r.excluded > 0
    # a 5 V-only part is outside the 3.3 V rail's supply range: the class's typical
    # range, not a datasheet's, so it warns (model.result.soft_limit). Its worst, as every
    # part's here, is the sensor bus's SDA fall joined across Q1 (no margin: it warns,
    # failing only at the translator class's threshold maximum); the supply range next,
    # derived: (3.3 V · 0.95 − 4.5 V) / 4.5 V with mcu-5v's supply.min
    five = r.candidate("mcu-5v")
    assert five.status == "warn"
    assert five.worst_check["id"] == "fall-time" and five.worst_check["segment"] == "main-3v3"
    assert five.worst_margin == -math.inf
    assert five.margins[1] == pytest.approx((3.3 * 0.95 - 4.5) / 4.5, rel=1e-12)
    # the figures that matter for the bus
    figs = r.candidate("eeprom-i2c").figures["sensors"]
    assert set(figs) == {"bus_capacitance", "rise_time", "v_ol", "pullup_resistor"}
    assert figs["bus_capacitance"][1] == "F"


def test_ranking_leaves_fixed_checks_out_of_the_worst_margin():
    r = cand.rank_candidates(DEMO_DESIGN, "U4")
    for c in r.candidates:
        assert c.worst_check["id"] not in cand.FIXED_CHECKS


def test_spi_positions_are_evaluated_with_their_edges_batched():
    r = cand.rank_candidates(DEMO_DESIGN, "U7")
    assert r.candidates and all(c.method == "batched" for c in r.candidates)
    assert any("solved together" in n for n in r.notes)
    assert not any("one at a time" in n for n in r.notes)


# ------------------------------------------------------------ push-pull positions, batched

DATA = ROOT / "tests" / "data"
PP_DESIGNS = ["long-spi-link.toml", "spi-5v-flash.toml", "spi-cipo-never-high.toml",
              "spi-length-tolerance.toml", "spi-one-km.toml", "spi-slow-edge.toml",
              "spi-fast-corner.toml"]


def _pp_positions(design) -> list[str]:
    return sorted({d.ref for b in design.buses if b.protocol in ("spi", "gpio")
                   for d in b.devices})


@pytest.mark.parametrize("name", PP_DESIGNS)
def test_batched_ranking_equals_per_candidate_on_the_test_designs(name):
    # every SPI and GPIO position of the test designs, the whole built-in library
    d = load_design(DATA / name)
    refs = _pp_positions(d)
    assert refs
    for ref in refs:
        fast = cand.rank_candidates(d, ref)
        assert fast.candidates and all(c.method == "batched" for c in fast.candidates), ref
        assert_same_ranking(fast, cand.rank_candidates_slow(d, ref))


def test_batched_ranking_equals_per_candidate_on_generated_spi_parts():
    # 120 generated SPI peripherals (invented values: tests/spiparts.py) at the positions
    # of the demo's display (a 28 cm line, series resistors "auto") and flash (tolerances:
    # each candidate's corners), and at the controller's; `make bench` holds 1,000
    from tests.spiparts import add_generated

    lib = load_library()
    add_generated(lib, 120)
    d = load_design(DEMO, library=lib)
    for ref, n in (("U12", 120), ("U7", 24)):
        parts, _ = cand.eligible(d, ref)
        keep = {p.id for p in parts if not p.id.startswith("gen-spi-")}
        keep |= {f"gen-spi-{i:05d}" for i in range(n)}
        lib_n = Library(parts={k: v for k, v in lib.parts.items()
                               if not k.startswith("gen-spi-") or k in keep},
                        files=lib.files, overrides=lib.overrides, problems=[],
                        folders=lib.folders)
        dn = load_design(DEMO, library=lib_n)
        fast = cand.rank_candidates(dn, ref)
        assert sum(c.part.startswith("gen-spi-") for c in fast.candidates) > n // 2, ref
        assert len({c.margins for c in fast.candidates}) > n // 4  # they do differ
        assert_same_ranking(fast, cand.rank_candidates_slow(dn, ref))


def test_batched_edges_are_the_engines_own(monkeypatch):
    # the batched ranking solves far fewer times than one solve per edge, and with the
    # prefetch turned off (every edge solved by the engine) the ranking is the same
    from pinlib.engines.pushline import batchsolve
    from pinlib.physics import waveform as wf

    calls = []
    solve = wf.distributed_response

    def counted(t, *args, **kw):
        calls.append(np.ndim(args[2]))
        return solve(t, *args, **kw)

    monkeypatch.setattr(wf, "distributed_response", counted)
    fast = cand.rank_candidates(DEMO_DESIGN, "U12")
    batched = [n for n in calls if n > 0]
    assert batched and len(calls) < 12 * len(fast.candidates)
    from pinlib.studies import ppcandidates

    assert ppcandidates.prefetch is batchsolve.prefetch

    monkeypatch.setattr(ppcandidates, "prefetch", lambda inputs: 0)
    assert_same_ranking(fast, cand.rank_candidates(DEMO_DESIGN, "U12"))


def test_the_corners_of_a_toleranced_position_are_solved_ahead(monkeypatch):
    # the demo's flash bus carries supply and length tolerances: the edges of every
    # candidate's corner boards are solved in the batch, none by the engine a line at a
    # time as the one-at-a-time path does; the rankings are the same
    from pinlib.physics import waveform as wf
    from tests.spiparts import add_generated

    lib = load_library(env=False)
    add_generated(lib, 8)
    d = load_design(DEMO, library=lib)
    calls = []
    solve = wf.distributed_responses
    monkeypatch.setattr(wf, "distributed_responses",
                        lambda cases: calls.append(len(cases)) or solve(cases))
    fast = cand.rank_candidates(d, "U7")
    assert not calls
    slow = cand.rank_candidates_slow(d, "U7")
    assert len(calls) > len(slow.candidates)
    assert_same_ranking(fast, slow)


def test_a_candidate_the_engine_refuses_at_a_toleranced_position_says_why_as_alone():
    # a generated part whose CIPO edge table has a negative load (invented bad data,
    # built past the loader): the engine refuses it on the board as designed, and the
    # batched ranking reports the error the one-at-a-time path reports, file and all
    from dataclasses import replace

    from tests.spiparts import add_generated

    lib = load_library(env=False)
    ids = add_generated(lib, 6)
    part = lib.parts[ids[0]]
    pin = part.pins["cipo"]
    bad = pin.edges[0].copy(**{"load": replace(pin.edges[0].load, value=-15e-12)})
    lib.parts[ids[0]] = part.copy(**{"pins": {**part.pins, "cipo": pin.copy(
        **{"edges": [bad, *pin.edges[1:]]})}})
    d = load_design(DEMO, library=lib)
    fast, slow = cand.rank_candidates(d, "U7"), cand.rank_candidates_slow(d, "U7")
    got = [(c.status, c.error) for r in (fast, slow) for c in r.candidates
           if c.part == ids[0]]
    assert got[0] == got[1] and got[0][0] == "error"
    assert "pins.cipo.loads" in got[0][1] and "U7" in got[0][1]
    assert_same_ranking(fast, slow)


def test_one_at_a_time_solves_each_edge_once_per_candidate(monkeypatch):
    # each candidate is evaluated in one run, as `pinlib check` evaluates a design: an
    # edge its bus analyses twice (the corners of its tolerances, the budget) is solved
    # once for it, and nothing solved for one candidate is kept for the next
    from pinlib.engines.pushline import waves

    solved = []
    unit_edge = waves._unit_edge

    def counted(*args):
        solved.append(waves.unit_edge_key(*args))
        return unit_edge(*args)

    monkeypatch.setattr(waves, "_unit_edge", counted)
    places = cand._per_bus(cand.positions(DEMO_DESIGN, "U7"))  # the flash: tolerances
    part = DEMO_DESIGN.library.parts[places[0][1].part_id]
    for _ in range(2):
        cand._one(DEMO_DESIGN, "U7", part, places)
    assert solved and len(set(solved)) == len(solved) // 2  # once each, in each of 2 runs


def test_categories_and_errors():
    r = cand.rank_candidates(DEMO_DESIGN, "U4", categories=["memory", "clock"])
    assert {c.category for c in r.candidates} <= {"memory", "clock"}
    assert {c.part for c in r.candidates} == {"eeprom-i2c", "rtc-i2c"}
    with pytest.raises(InputError, match="unknown category"):
        cand.rank_candidates(DEMO_DESIGN, "U4", categories=["toaster"])
    with pytest.raises(DesignError, match="no device with this reference"):
        cand.rank_candidates(DEMO_DESIGN, "U99")


def test_progress_callback():
    seen = []
    r = cand.rank_candidates(DEMO_DESIGN, "U4", progress=lambda done, total: seen.append(
        (done, total)))
    assert seen and seen[-1] == (len(r.candidates), len(r.candidates))


def test_progress_moves_with_each_candidate_at_an_spi_position(monkeypatch):
    # the batched ranking yields its results a chunk of 512 at a time; the bar moves as
    # each candidate's evaluation ends, not when the chunk's results come
    from pinlib.studies import ppcandidates

    evaluated = []
    real = ppcandidates.evaluate_bus
    monkeypatch.setattr(ppcandidates, "evaluate_bus",
                        lambda *a, **k: evaluated.append(1) or real(*a, **k))
    seen = []
    r = cand.rank_candidates(DEMO_DESIGN, "U7", progress=lambda done, total: seen.append(
        (done, len(evaluated))))
    done = [d for d, _ in seen if d > 0]
    assert len(r.candidates) > 3 and done == list(range(1, len(r.candidates) + 1))
    assert [n for d, n in seen if d > 0] == done  # each step as its candidate ends


# --------------------------------------------------------------------------- command line


def test_cli_text_and_json(capsys):
    assert main(["candidates", str(DEMO), "U4"]) == 0
    out = capsys.readouterr().out
    assert "position U4, now eeprom-i2c" in out
    assert "eeprom-i2c *" in out
    assert main(["candidates", str(DEMO), "U4", "--json", "--top", "3"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["format"] == "pinlib.candidates/1"
    assert data["ref"] == "U4" and len(data["candidates"]) == 3
    assert data["count"] > 3
    first = data["candidates"][0]
    assert {"part", "status", "worst_margin", "worst_check", "figures"} <= set(first)
    assert main(["candidates", str(DEMO), "U4", "--category", "memory", "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert [c["part"] for c in data["candidates"]] == ["eeprom-i2c"]


def test_cli_names_a_team_part_left_out_for_its_problem(tmp_path, capsys, monkeypatch):
    # invented: a team memory part written with "5 pf". It was left out of the ranking
    # without a word, so the part the user had just written seemed not to fit
    team = tmp_path / "team"
    team.mkdir()
    bad = team / "eeprom-typo.toml"
    bad.write_text('format = "pinlib.part/1"\nid = "eeprom-typo"\ntitle = "t"\n'
                   'category = "memory"\nextends = "eeprom-i2c"\n[pins.sda]\n'
                   'c_in = "5 pf"\n', encoding="utf-8")
    monkeypatch.setenv("COLUMNS", "1000")
    assert main(["candidates", str(DEMO), "U4", "--category", "memory",
                 "--library", str(team)]) == 0
    out, err = capsys.readouterr()
    assert "eeprom-typo" not in out
    assert "1 problem in the library (run 'pinlib parts check')" in err
    assert f"{bad}:7, field 'pins.sda.c_in'" in err



def test_cli_keeps_a_long_part_id_whole_at_80_columns(tmp_path, capsys, monkeypatch):
    # invented: a team memory part with an id of 60 characters (the format allows 64),
    # once broken mid-word in the table, so it could not be copied from it
    long_id = "eeprom-" + "-".join(["two-kilobit"] * 3) + "-write-protect-pin"
    assert len(long_id) == 60
    team = tmp_path / "team"
    team.mkdir()
    (team / f"{long_id}.toml").write_text(
        f'format = "pinlib.part/1"\nid = "{long_id}"\ntitle = "t"\ncategory = "memory"\n'
        'extends = "eeprom-i2c"\n', encoding="utf-8")
    monkeypatch.setenv("COLUMNS", "80")
    assert main(["candidates", str(DEMO), "U4", "--category", "memory",
                 "--library", str(team)]) == 0
    lines = capsys.readouterr().out.splitlines()
    assert max(map(len, lines)) <= 80
    line = next(ln for ln in lines if long_id[:20] in ln)
    assert line.split() == [line.split()[0], long_id]  # "#  ID", whole on its line
    assert lines[lines.index(line) + 1].split()[0].startswith("WARN")

def test_cli_exit_codes(tmp_path, capsys):
    assert main(["candidates", str(DEMO), "U99"]) == 2
    assert "no device with this reference" in capsys.readouterr().err
    with pytest.raises(SystemExit) as exc:
        main(["candidates", str(DEMO), "U4", "--category", "toaster"])
    assert exc.value.code == 2
    with pytest.raises(SystemExit) as exc:
        main(["candidates", str(DEMO), "U4", "--top", "0"])
    assert exc.value.code == 2
    # a bus that fails whatever stands in the position: 1 nF on it
    body = HEAD + """
[[bus]]
id = "heavy"
protocol = "i2c"
mode = "fast"
supply = "3.3 V"
extra_capacitance = "1 nF"
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller" },
  { ref = "U2", part = "eeprom-i2c" },
]
"""
    path = tmp_path / "heavy.toml"
    path.write_text(body, encoding="utf-8")
    assert main(["candidates", str(path), "U2"]) == 1
    assert "FAIL" in capsys.readouterr().out


def test_cli_help(capsys):
    with pytest.raises(SystemExit) as exc:
        main(["candidates", "--help"])
    assert exc.value.code == 0
    out = capsys.readouterr().out
    assert "pinlib candidates pinlib-demo/workbooks/designs/demo-board.toml U4" in out
    for opt in ("--category", "--top", "--json", "--library"):
        assert opt in out


def test_counts_add_up(capsys):
    # reproducer: "17 of 35 ... (15 cannot)" left the library's cables unexplained
    lib = load_library()
    cables = sum(1 for p in lib.placeable().values() if p.category == "cable")
    for cats in (None, ["memory", "clock"]):
        r = cand.rank_candidates(DEMO_DESIGN, "U4", categories=cats)
        # derived: every placeable part is counted once, under one reason
        assert (len(r.candidates) + r.excluded + r.set_aside["cable"]
                + r.set_aside["category"]) == r.library_size
        assert r.set_aside["cable"] == cables
        assert f"{r.set_aside['cable']} are cables" in r.count_text() or cables == 0
        # the whole is the library's parts, not "placeable" ones (cables stand nowhere)
        assert f"of the library's {r.library_size} parts" in r.count_text()
    assert r.set_aside["category"] > 0
    assert main(["candidates", str(DEMO), "U4", "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert (data["count"] + data["excluded"] + sum(data["set_aside"].values())
            == data["library_parts"])


def test_the_worst_check_is_one_of_the_worst_status():
    # a rating met exactly passes at margin 0, below a warning's positive margin: the
    # check named as the worst is the warning (it sets the status), not the passing one
    from types import SimpleNamespace

    from pinlib.model.result import BusResult, Check
    from pinlib.studies.candidates import _summary_of

    r = BusResult(id="b", protocol="i2c")  # invented values (test data, no source)
    r.add(Check("device-speed", "pass", 4e5, 4e5, "Hz", 0.0, "rating", "at the rating",
                subject="U2"))
    r.add(Check("rise-time", "warn", 270e-9, 300e-9, "s", 0.05, "limit", "close"))
    dev = SimpleNamespace(is_bridge=False, ref="U2")
    bus = SimpleNamespace(protocol="i2c", segments=[])
    status, margin, where, _, margins, code = _summary_of([r], [(bus, dev)])
    assert status == "warn" and where["id"] == "rise-time" and margin == 0.05
    assert margins == [0.0, 0.05]  # the ranked margins are all kept, smallest first
    assert code == 1  # the worst check's own status: across buses it is what ranks


def test_another_devices_rating_does_not_rank_the_candidates():
    # a check of one device's own rating (supply range, f_max, input voltage, the slowest
    # device's speed) counts for the status always, but for the worst margin only when
    # its subject is the candidate: another device's is the same for every candidate
    from types import SimpleNamespace

    from pinlib.model.result import BusResult, Check
    from pinlib.studies.candidates import _summary_of

    r = BusResult(id="b", protocol="spi")  # invented values (test data, no source)
    r.add(Check("supply-range", "pass", 3.3, 3.6, "V", 0.083, "rating", "U1", subject="U1"))
    r.add(Check("supply-range", "pass", 3.3, 3.6, "V", 0.2, "rating", "U2", subject="U2"))
    r.add(Check("f-max", "warn", 1e6, 1.05e6, "Hz", 0.05, "rating", "U3", subject="U3"))
    bus = SimpleNamespace(protocol="spi", segments=[])
    status, margin, where, _, margins, code = _summary_of(
        [r], [(bus, SimpleNamespace(is_bridge=False, ref="U2"))])
    assert status == "warn"  # U3's rating still sets the status
    assert code == 0  # the candidate's own worst check passes
    assert margins == [0.2] and where["subject"] == "U2"
    # on the demo's display position every candidate's worst was the controller's supply
    # range (+8.3 %); now it is each one's own
    got = cand.rank_candidates(DEMO_DESIGN, "U12")
    assert all(c.worst_check["subject"] != "U1" for c in got.candidates)


def _demo_test_translator(tmp_path):
    """The demo with the test translator at Q1 (VGS(th) 1.2 V, invented test data): its
    gate drive, 1.71 V − 1.2 V = 510 mV, warns, and the sensor bus's joined falls pass
    (the library part's 1.5 V joins the lines too low for the 3.3 V side's SDA to fall)."""
    path = tmp_path / "demo-tfet.toml"
    path.write_text(DEMO.read_text(encoding="utf-8").replace(
        'part = "level-translator-mosfet"', 'part = "t-fet-translator"'), encoding="utf-8")
    return path, load_design(path, library_folders=[PARTS])


def test_a_margin_in_volts_is_shown_in_volts_and_never_ranked_as_a_fraction(capsys,
                                                                            tmp_path):
    # reproducer: at the demo's translator Q1 the gate overdrive, 210 mV, read "+21.0 %"
    # and was compared with fractional margins; it is the translator's worst here because
    # it alone warns (the ratings checks pass)
    path, design = _demo_test_translator(tmp_path)
    r = cand.rank_candidates(design, "Q1")
    first = r.candidate("t-fet-translator")
    assert first.status == "warn"
    assert first.worst_check["id"] == "bridge-gate-drive"
    assert first.worst_check["margin_unit"] == "V"
    # the engine's own check, as pinlib check gives it: its margin in volts
    from pinlib.engines.dispatch import check_design
    gate = [c for b in check_design(design).results() for _, _, c in b.all_checks()
            if c.id == "bridge-gate-drive"]
    assert len(gate) == 1 and gate[0].margin_unit == "V"
    assert first.worst_margin == pytest.approx(gate[0].margin, rel=1e-12)
    assert first.margin_text() == "+510 mV"
    assert not any(m == pytest.approx(first.worst_margin) for m in first.margins)
    assert main(["candidates", str(path), "Q1", "--library", str(PARTS), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    (row,) = [c for c in data["candidates"] if c["part"] == "t-fet-translator"]
    assert row["worst_margin_unit"] == "V"
    assert "+51.0 %" not in r.format_text(width=80)


def test_a_status_no_candidate_can_move_is_named_once(capsys, tmp_path):
    # every part at U4 warns because the translator Q1 on the other segment warns (its
    # gate drive): the ranking marks the status and names that check once (a part whose
    # own check warns, e.g. past a class's typical limit, is left out here)
    _, design = _demo_test_translator(tmp_path)
    r = cand.rank_candidates(design, "U4")
    warned = [c for c in r.candidates if c.status == "warn" and c.worst_margin >= 0]
    assert warned and all(c.worst_check["status_by"]["id"] == "bridge-gate-drive"
                          for c in warned)
    text = r.format_text(width=None)
    assert "WARN†" in text
    assert text.count("Translator gate drive: a check no part at U4 can move") == 1
    assert_same_ranking(r, cand.rank_candidates_slow(design, "U4"))


def test_a_figure_without_a_number_says_why_under_the_table():
    # Once a bare "—" in the f(max) column: it stood both for "no part limits the clock"
    # and for "no clock meets the timing", the opposite verdicts. The table now says
    # which under it, and the JSON carries the engine's reason.
    d = load_design(Path(__file__).parent / "data" / "spi-cipo-never-high.toml")
    r = cand.rank_candidates(d, "U2")
    text = r.format_text(width=80)
    flat = text.replace("\n  ", " ")
    assert "— bus fmax: no clock satisfies CIPO setup U2 (" in flat
    # and the worst margin that does not exist says why too, first (its column is first)
    assert "— worst: CIPO never crosses the receiving input's threshold" in flat
    assert flat.index("— worst:") < flat.index("— bus fmax:")
    assert all(c.worst_check["reason"].startswith("CIPO never crosses")
               for c in r.candidates)
    doc = r.to_json()
    cells = [c["figures"]["flash"]["max_clock"] for c in doc["candidates"]]
    assert cells and all(c["value"] is None and "no clock satisfies" in c["reason"]
                         for c in cells)
    # a figure with a number carries no reason, and the ranking compares as before
    demo = cand.rank_candidates(load_design(DEMO), "U12")
    assert "reason" not in demo.to_json()["candidates"][0]["figures"]["display"]["max_clock"]
    assert "— bus fmax" not in demo.format_text(width=80)


def test_the_clock_column_says_it_is_the_buss_highest_clock_not_the_parts_own():
    # an audit: the column headed "f(max)" read 20 MHz for every part at a flash's
    # position, the bus's highest clock (another device set it), not the flash's own
    # f_max (104 MHz); the head and a key line under the table now say which it is
    r = cand.rank_candidates(DEMO_DESIGN, "U7")
    text = r.format_text(width=80)
    head = next(ln for ln in text.splitlines() if ln.startswith("#  part"))
    assert head.split()[-2:] == ["bus", "fmax"] and "f(max)" not in text
    flat = " ".join(text.split())
    assert ("bus fmax: the highest clock the bus allows with that part, set by whichever "
            "device limits it (not the part's own f_max)") in flat
    assert all(len(ln) <= 80 for ln in text.splitlines())
    flash = r.candidate("nor-flash-spi")
    own = DEMO_DESIGN.library.get("nor-flash-spi").timing.f_max.value
    # invented test data: the library's flash states 104 MHz, above the bus's limit
    assert own == pytest.approx(104e6, rel=1e-12)
    assert flash.figures["flash"]["max_clock"][0] < own
    # where the column is left out, so is its key line
    narrow = r.format_text(width=44)
    assert "not shown at this width: bus fmax" in narrow
    assert "bus fmax: the highest" not in narrow


def test_a_lines_check_names_its_signal_as_pinlib_check_does():
    # the ranking read "cipo Overshoot U1" where pinlib check writes "CIPO U1: Overshoot"
    # and its worst margin "(Overshoot CIPO U1)": the signal in capitals everywhere
    d = load_design(Path(__file__).parent / "data" / "spi-route.toml")
    r = cand.rank_candidates(d, "U3")
    lines = [c for c in r.candidates if (c.worst_check or {}).get("line")]
    assert lines
    text = r.format_text(width=None)
    for c in lines:
        wc = c.worst_check
        assert f"{wc['line'].upper()} " in text
        assert f" {wc['line']} " not in text


def test_a_gpio_position_shows_each_buss_slowest_edge_not_a_clock():
    # at the GPIO example's U3 every row read "f(max)@reset —" (a GPIO bus has no
    # clock), and the other bus's column was left out at 80 columns: the figure of a
    # GPIO bus is its slowest far-end edge, as "pinlib check" gives it on the bus's line
    from pinlib.engines.dispatch import check_design

    gpio = ROOT / "workbooks" / "designs" / "gpio-reset-board.toml"
    d = load_design(gpio)
    r = cand.rank_candidates(d, "U3")
    now = r.candidate("fpga-io-3v3")
    res = {b.id: b for b in check_design(d).buses}
    for bus in ("reset", "fpga-enable"):
        # derived: the largest edge_rise_time / edge_fall_time of the bus's lines
        want = max(ln.figures[n].value for ln in res[bus].lines
                   for n in ("edge_rise_time", "edge_fall_time"))
        assert now.figures[bus]["worst_edge"][0] == pytest.approx(want, rel=1e-9)
        assert "max_clock" not in now.figures[bus]
    text = r.format_text(width=80)
    assert "fmax" not in text and "edge@reset" in text and "edge@fpga-enable" in text
    assert all(len(ln) <= 80 for ln in text.splitlines())
    doc = r.to_json()
    assert doc["candidates"][0]["figures"]["reset"]["worst_edge"]["unit"] == "s"


def test_a_bridging_position_is_headed_by_both_its_segments(capsys, monkeypatch):
    # the demo's translator Q1 joins segments main-3v3 (its side b) and sensor-1v8 (side
    # a): the heading read "bus sensors (i2c, segment main-3v3, peripheral)", one side
    # only, with a role that a bridge has on neither
    monkeypatch.setenv("COLUMNS", "80")
    assert main(["candidates", str(DEMO), "Q1", "--top", "1"]) in (0, 1)
    out = capsys.readouterr().out
    head = " ".join(out.split("\n\n")[0].split())
    assert head.startswith("position Q1, now level-translator-mosfet: bus sensors (i2c, "
                           "bridge between segments main-3v3 and sensor-1v8)"), head
    assert "peripheral" not in head
    assert main(["candidates", str(DEMO), "Q1", "--top", "1", "--json"]) in (0, 1)
    bus = json.loads(capsys.readouterr().out)["buses"]
    assert bus == [{"bus": "sensors", "protocol": "i2c", "segment": "main-3v3",
                    "role": "peripheral", "bridge": True,
                    "segments": ["main-3v3", "sensor-1v8"]}]
    # a plain position keeps its one segment and its role
    assert main(["candidates", str(DEMO), "U9", "--top", "1"]) in (0, 1)
    head = " ".join(capsys.readouterr().out.split("\n\n")[0].split())
    assert "bus sensors (i2c, segment sensor-1v8, peripheral)" in head, head


def test_cable_is_no_category_a_position_ranks(capsys, monkeypatch):
    # --category offered "cable" though a cable stands at no position: asked for, it
    # ranked nothing ("0 of the library's 32 parts can serve it ... 3 are cables") and
    # exited 1 as if no part could serve
    monkeypatch.setenv("COLUMNS", "80")
    with pytest.raises(SystemExit):
        main(["candidates", "--help"])
    listed = " ".join(capsys.readouterr().out.split())
    listed = listed[listed.index("only parts of this category"):].split(" --top")[0]
    assert "memory" in listed and "cable" not in listed, listed
    from pinlib.library.schema import POSITION_CATEGORIES

    assert "cable" not in POSITION_CATEGORIES and "memory" in POSITION_CATEGORIES
    with pytest.raises(SystemExit) as exc:
        main(["candidates", str(DEMO), "U4", "--category", "cable"])
    assert exc.value.code == 2
    err = capsys.readouterr().err
    assert "Traceback" not in err and all(len(ln) <= 80 for ln in err.splitlines())
    err = " ".join(err.split())
    assert "argument --category: a cable is no candidate: it stands at no position" in err
    assert "(got 'cable'); expected one of controller, sensor, memory" in err, err
    with pytest.raises(InputError, match="a cable is no candidate") as got:
        cand.rank_candidates(DEMO_DESIGN, "U4", categories=["cable"])
    assert "cable" not in got.value.expected and "memory" in got.value.expected


def test_a_misspelt_category_is_refused_as_parts_list_refuses_it(capsys):
    # "invalid choice: 'memroy' (choose from 'controller', 'sensor', ...)": argparse's
    # wording, where 'pinlib parts list --category memroy' names the closest
    with pytest.raises(SystemExit) as exc:
        main(["candidates", str(DEMO), "U4", "--category", "memroy"])
    assert exc.value.code == 2
    err = " ".join(capsys.readouterr().err.split())
    assert "argument --category: not one of the allowed values (got 'memroy'); expected " \
           "one of controller, sensor, memory" in err, err
    assert err.endswith("closest: memory") and "invalid choice" not in err


def test_at_a_bridge_another_devices_rating_does_not_rank(tmp_path):
    # reproducer (an audit): at the translator Q1 every candidate ranked on U2's
    # abs_max against the 5.25 V rail, which no translator changes, a three-way tie.
    # As at any position (docs/formats/result.md), a device's own rating counts only
    # where that device is the candidate: U2's names the status it sets (status_by)
    path = tmp_path / "d.toml"
    path.write_text(host_to_5v_smbus(
        fan=True, title="host to a 5 V SMBus through a translator (invented)"), encoding="utf-8")
    r = cand.rank_candidates(load_design(path), "Q1")
    done = [c for c in r.candidates if c.status != "error"]
    assert len(done) >= 2
    for c in done:
        wc = c.worst_check
        if wc["id"] in cand.OWN_CHECKS:
            assert wc["subject"].startswith("Q1"), (c.part, wc)
    by = {c.part: c for c in done}
    fixed = by["level-translator-mosfet"].worst_check.get("status_by")
    assert fixed and fixed["id"] == "input-voltage" and fixed["subject"] == "U2"
    assert len({c.worst_margin for c in done}) > 1  # no longer one tie
