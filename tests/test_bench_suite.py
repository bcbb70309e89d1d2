"""The benchmark suite's own code (tests/bench, ``make bench``): what a line's ratio
compares and how it is printed.  No time is measured here: timings are replaced by
fixed numbers (invented test data) wherever a benchmark's arithmetic is tested."""

from __future__ import annotations

import ast
import warnings
from pathlib import Path

import pytest

from tests.bench import __main__ as bench_main
from tests.bench import bench_cli, bench_opendrain, bench_report, bench_scaling
from tests.bench.common import Result, linear

BENCH = Path(__file__).resolve().parent / "bench"


# ------------------------------------------------------------------ the Result line


def test_ratio_of_times_is_speed_against_the_baseline():
    # invented test data: 1 s against a baseline of 3 s
    r = Result("x", 1.0, "the same work another way", 3.0)
    assert r.ratio == pytest.approx(3.0)  # derived: 3 s / 1 s, above 1 = faster
    assert "3x faster than the baseline" in r.line()
    assert "baseline: the same work another way = 3 s" in r.line()
    slow = Result("x", 2.0, "another way", 1.0)
    assert slow.ratio == pytest.approx(0.5)  # derived: 1 s / 2 s
    assert "0.5x as fast as the baseline" in slow.line()


def test_ratio_of_rates_is_speed_against_the_baseline():
    # invented test data: 1,000 boards/s against 10 boards/s
    r = Result("mc", 1000.0, "engine board by board", 10.0, unit="boards/s")
    assert r.ratio == pytest.approx(100.0)  # derived: 1000 / 10, above 1 = faster
    assert "baseline: engine board by board = 10 boards/s" in r.line()
    # a slow baseline keeps its figures (derived: 1 / 0.311 s = 3.215 boards/s)
    assert "= 3.22 boards/s" in Result("mc", 161.0, "e", 1 / 0.311, unit="boards/s").line()


def test_a_line_without_baseline_says_why_and_prints_no_ratio():
    r = Result("widget", 0.05, no_baseline="nothing else does this work",
               target="time < 150 ms", passed=True)
    assert r.ratio is None
    line = r.line()
    assert "no baseline: nothing else does this work" in line
    assert r.ratio_words() == "" and "faster" not in line and "as fast" not in line
    assert line.endswith("target time < 150 ms: pass")


@pytest.mark.parametrize("kwargs", [
    {"baseline": 1.0},  # a baseline that does not say what it is
    {},  # neither a baseline nor a reason for none
    {"baseline": 1.0, "baseline_name": "b", "no_baseline": "why"},
    {"baseline_name": "b", "no_baseline": "why"},
    {"baseline": 1.0, "baseline_name": "b", "unit": "MB"},  # memory is not a speed
    {"baseline": 0.0, "baseline_name": "b"},
])
def test_results_that_compare_nothing_meaningful_are_refused(kwargs):
    with pytest.raises(ValueError):
        Result("x", 1.0, **kwargs)


def test_a_ratio_cannot_be_passed_where_it_used_to_go():
    # the old signature was (name, value, baseline_name, baseline, ratio, ratio_text):
    # a ratio passed there now fails instead of landing in the target
    with pytest.raises(TypeError):
        Result("x", 1.0, "b", 2.0, 2.0, "faster")


def test_no_benchmark_passes_more_than_four_positional_arguments():
    for path in sorted(BENCH.glob("bench_*.py")):
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if (isinstance(node, ast.Call) and isinstance(node.func, ast.Name)
                    and node.func.id == "Result"):
                assert len(node.args) <= 4, f"{path.name}:{node.lineno}"


def test_todo_lines_need_nothing_else():
    assert Result("browser", 0, todo="chromium is not installed").line().endswith(
        "TODO: chromium is not installed")


def test_readme_table_names_the_baseline_or_its_absence():
    rows = bench_main._table([
        Result("a", 1.0, "the loop", 4.0, target="ratio >= 2x", passed=True),
        Result("b", 2.0, no_baseline="a part of a's work"),
        Result("c", 2.0, no_baseline="none like it", extra=["1 s of it parsing"]),
    ], {"platform": "p", "cpu": "c", "cpus": "2", "python": "3", "numpy": "2"})
    assert "| a | 1 s | the loop: 4 s | 4× faster than the baseline | ratio >= 2x (met) |" \
        in rows
    assert "| b | 2 s | none: a part of a's work | — | — |" in rows
    assert "| c | 2 s | none: none like it | 1 s of it parsing | — |" in rows


# ------------------------------------------------------------- scaling baselines


def test_linear_baseline_is_k_times_the_smaller_input():
    assert linear(8, 0.25) == pytest.approx(2.0)  # derived: 8 x 0.25 s


@pytest.mark.parametrize(("small", "large", "ratio", "passed"), [
    (0.010, 0.050, 2.0, True),  # derived: 10 x 10 ms / 50 ms; under linear growth
    (0.010, 0.150, 10 * 0.010 / 0.150, True),  # 15x for 10x: within twice linear
    (0.010, 0.250, 0.4, False),  # derived: 100 / 250; 25x for 10x, past twice linear
])
def test_scaling_line_is_speed_against_linear_growth(monkeypatch, tmp_path, small, large,
                                                     ratio, passed):
    times = iter([small, large])  # invented test data: the smaller, then the larger input
    monkeypatch.setattr(bench_scaling, "median_time", lambda *a, **k: next(times))
    monkeypatch.setattr(bench_scaling, "_load_and_check", lambda path: None)
    r = bench_scaling._scaling("n", "a", "b", 10, tmp_path, 3)
    assert r.baseline == pytest.approx(10 * small)
    assert r.ratio == pytest.approx(ratio)
    assert r.passed is passed
    assert "linear growth" in r.baseline_name and "1/10-size" in r.baseline_name


# ------------------------------------------------------------------ benchmarks


def test_od_one_bus_compares_with_the_scalar_engines_time(monkeypatch):
    # invented test data: evaluate_bus 20 ms, reference_work 2 ms (10 units against the
    # scalar engine's recorded 12), then evaluate_bus 20, collect 6, arrays 16 ms
    times = iter([(0.020, 0.002), (0.020, 0.006, 0.016)])
    monkeypatch.setattr(bench_opendrain, "in_turn", lambda funcs, n: next(times))
    monkeypatch.setattr(bench_opendrain, "_buses", lambda: [])
    one, arrays = bench_opendrain.run(repeats=1, quick=True)
    # derived: the scalar engine's time 12 x 2 ms = 24 ms, over 20 ms
    assert one.baseline == pytest.approx(0.024) and one.ratio == pytest.approx(1.2)
    assert one.passed is True and "scalar engine" in one.baseline_name
    assert arrays.baseline is None and "80% of evaluate_bus" in arrays.line()


def test_report_times_both_commands_in_turn_without_a_ratio(monkeypatch):
    calls = []
    monkeypatch.setattr(bench_report, "_report",
                        lambda out, *extra: calls.append("mc" if extra else "plain"))
    got, = bench_report.run(repeats=3, quick=True)
    # the two commands alternate: one warm-up of each, then three rounds of each
    assert calls == ["mc", "plain"] * 4
    assert got.baseline is None and got.ratio is None
    assert "without --monte-carlo" in got.line() and got.target.startswith("time <")


def test_cli_target_is_three_times_the_faster_numpy_import(monkeypatch):
    # invented test data: check 200 ms, numpy with its pool 120 ms, on one thread 70 ms,
    # bare 10 ms, cold 250 ms
    monkeypatch.setattr(bench_cli, "in_turn", lambda funcs, n: [0.200, 0.120, 0.070,
                                                                0.010, 0.250])
    monkeypatch.setattr(bench_cli, "heavy_imports", lambda: [])
    got, = bench_cli.run(repeats=1)
    assert got.baseline is None
    assert "= 210 ms" in got.target  # derived: 3 x 70 ms, the faster of the two
    assert got.passed is True  # derived: 200 / 70 = 2.86 <= 3
    assert "2.86x that import" in got.line()


def test_browser_overhead_compares_the_same_work_end_to_end():
    from tests.bench.bench_browser import overhead

    # invented test data: the page done at 309 ms, the kernel's redraw alone 134 ms
    assert overhead(0.309, 0.134).endswith("the browser adds +175 ms")


def test_spi_budget_widget_is_compared_with_its_own_bus_not_the_design():
    pytest.importorskip("ipywidgets")
    from tests.bench import bench_widgets

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        cases = {name: (widget, call) for name, widget, _, _, call in bench_widgets._cases()}
        widget, engine_call = cases["SpiBudget"]
        what, call = engine_call(widget)
        got = call()
    assert what == "evaluate_bus of bus display"
    assert got.id == "display" and len(widget.design.buses) > 1
