"""Tests of pinlib.core.labels: readable names of figure and check ids, each figure shown once.

The rules are checked on figures the engines return for the demo design and for made-up
values where the lines of a bus differ.
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import pytest

from pinlib.core.labels import (
    FIGURES,
    and_list,
    check_label,
    few_named,
    figure_label,
    humanize,
    note_label,
    sampled_check_label,
    short_label,
    shown_figures,
)
from pinlib.engines.dispatch import check_file

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "workbooks" / "designs" / "demo-board.toml"


def test_labels_of_figures_and_checks():
    assert figure_label("rp_min") == "Rp(min)"
    assert figure_label("noise_margin_low") == "Noise margin, low"
    # the standard's own points differ (I2C 30-70 %, SMBus 0.65-1.50 V): not in the label
    assert figure_label("rise_time_sda") == "Rise time tr, SDA"
    assert figure_label("pullup_scl").endswith(", SCL")
    assert figure_label("some_new_figure") == "Some new figure"
    assert check_label("noise-margin-low") == "Noise margin low"
    assert check_label("copi-setup") == "COPI setup"
    assert check_label("f-max") == "Clock ≤ f(max)"
    assert humanize("v_ol_sda") == "VOL SDA"
    assert short_label("bus_capacitance") == "Cb" and short_label("rp_min") == "Rp(min)"


def test_every_figure_of_the_demo_has_a_label_of_its_own():
    result = check_file(DEMO)
    names = set()
    for bus in result.buses:
        for group in [bus, *bus.segments, *bus.lines]:
            names |= set(group.figures)
    bases = {n.removesuffix("_sda").removesuffix("_scl") for n in names}
    assert bases <= set(FIGURES), sorted(bases - set(FIGURES))
    labels = [figure_label(n) for n in names]
    assert len(set(labels)) == len(labels)


def test_the_demo_shows_each_number_once():
    seg = check_file(DEMO).bus("sensors").segments[0]
    values = {n: f.value for n, f in seg.figures.items()}
    shown = shown_figures(values)
    # no part on this segment adds a pull-up: the resistor is the effective pull-up
    assert values["pullup"] == values["pullup_resistor"]
    assert "pullup_resistor" in shown and "pullup" not in shown
    assert not any(n.startswith("pullup_s") for n in shown)
    # both lines carry the same capacitance here: one row
    assert values["bus_capacitance_sda"] == values["bus_capacitance_scl"]
    assert "bus_capacitance" in shown and "bus_capacitance_sda" not in shown
    # table order follows FIGURES
    order = list(FIGURES)
    assert [n for n in shown if n in order] == sorted(
        (n for n in shown if n in order), key=order.index)


@pytest.mark.parametrize("values, kept", [
    # the lines differ: each line shown, the worse-of copy not
    ({"fall_time": 3.0, "fall_time_sda": 3.0, "fall_time_scl": 2.0},
     ["fall_time_sda", "fall_time_scl"]),
    # a part adds its own pull-up: the resistor and the effective value both shown
    ({"pullup": 2.0, "pullup_resistor": 4.7, "pullup_sda": 2.0, "pullup_scl": 2.0},
     ["pullup_resistor", "pullup"]),
    # pairs (before, after) as a change list compares them
    ({"rise_time": (1, 2), "rise_time_sda": (1, 2), "rise_time_scl": (1, 2)},
     ["rise_time"]),
])
def test_shown_figures_rules(values, kept):
    assert shown_figures(values) == kept


def test_labels_import_no_widget_or_chart():
    code = ("import sys, pinlib.core.labels; "
            "bad = [m for m in ('ipywidgets', 'altair', 'pinlib.present.widgets', "
            "'pinlib.present.charts') "
            "if m in sys.modules]; print(bad); sys.exit(1 if bad else 0)")
    run = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         timeout=60)
    assert run.returncode == 0, run.stdout + run.stderr


def test_a_timing_path_is_named_as_the_checks_table_names_it():
    # one rule for the budget chart's bars and the SPI bus line's "set by"
    from pinlib.core.labels import path_label

    assert path_label("copi-setup U12") == "COPI setup U12"
    assert path_label("cipo-hold U2") == "CIPO hold U2"
    assert path_label("f_max U1") == "f_max U1"  # no check id: as written


@pytest.mark.parametrize("name, check_id, shown", [
    # the names a Monte Carlo run gives its checks (studies.whatif: open-drain, push-pull,
    # coupling), as the report's table and histograms show them
    ("sensors/main-3v3 SDA pullup-window", "pullup-window",
     "sensors/main-3v3 SDA Pull-up window Rp(min)…Rp(max)"),
    ("flash sclk overshoot U7", "overshoot", "flash SCLK Overshoot U7"),
    ("flash copi-setup U7", "copi-setup", "flash COPI setup U7"),
    ("power supply-range", "supply-range", "power Supply range"),
    ("sensors/sensor-1v8 bridge-gate-drive Q1", "bridge-gate-drive",
     "sensors/sensor-1v8 Translator gate drive Q1"),
    ("sensors.scl<-display.sclk SCL near end held low crosstalk-low", "crosstalk-low",
     "sensors.scl<-display.sclk SCL near end Crosstalk held low"),
    ("link v-ol #2", "v-ol", "link VOL #2"),
    ("a name without its id", "v-oh", "a name without its id"),
])
def test_a_sampled_check_is_named_by_its_label(name, check_id, shown):
    assert sampled_check_label(name, check_id) == shown


def test_a_note_that_starts_with_a_figure_id_starts_with_its_label():
    # the SPI engine's notes start with the figure they explain (ids kept in the JSON)
    assert note_label("max_clock 24 MHz: the highest clock") == \
        "Highest clock 24 MHz: the highest clock"
    assert note_label("max_clock: none, no clock satisfies f_max U1") == \
        "Highest clock: none, no clock satisfies f_max U1"
    assert note_label("max_clock_edge_rule 45 MHz: x") == \
        "Highest clock, edge rule of thumb 45 MHz: x"
    assert note_label("cipo_setup_margin: not computed") == "CIPO setup margin: not computed"
    assert note_label("SPI mode 0 (CPOL 0, CPHA 0)") == "SPI mode 0 (CPOL 0, CPHA 0)"
    assert note_label("overshoot 881 mV and undershoot") == "overshoot 881 mV and undershoot"


def test_the_missing_pull_up_check_is_named_as_the_trade_writes_it():
    # a GPIO line with an open-drain driver and no pull-up failed as "Pull up: U2.reset
    # is open-drain and reset has no pull-up"; the trade writes the noun with a hyphen
    from pinlib.core.labels import check_label

    assert check_label("pull-up") == "Pull-up"


def test_counted_nouns_take_plural_s_not_an_inline_rule():
    # about fifteen messages of the command line, the reports, the comparisons, the
    # workbooks, the corner study and the IBIS reader wrote their own
    # "{'s' if n != 1 else ''}" (or "> 1"): one rule, in one place
    import re

    inline = re.compile(r"""(['"])s\1 if [^{}\n]*?(?:!= 1|> 1) else (['"])\2"""
                        r"""|(['"])\3 if [^{}\n]*?== 1 else (['"])s\4""")
    root = Path(__file__).resolve().parents[1] / "pinlib"
    hits = [f"{path.relative_to(root)}:{text.count(chr(10), 0, m.start()) + 1}"
            for path in sorted(root.rglob("*.py")) if path != root / "core" / "labels.py"
            for text in [path.read_text(encoding="utf-8")]
            for m in inline.finditer(text)]
    assert not hits, hits


def test_a_long_list_of_names_names_the_first_and_counts_the_rest():
    # invented test design: a bus of 1,024 targets listed every one in a fix, over 87 lines
    refs = [f"U{i}" for i in range(1, 1025)]
    assert few_named(refs) == "U1, U2, U3, U4, U5, U6, U7, U8 and 1,016 more"
    assert few_named(refs[:8]) == "U1, U2, U3, U4, U5, U6, U7, U8"
    assert few_named(["U2"]) == "U2" and few_named([]) == ""
    assert few_named(refs, limit=2, conjunction="or") == "U1, U2 or 1,022 more"
    assert and_list(refs[:3]) == "U1, U2 and U3"
    assert and_list(refs[:9]) == "U1, U2, U3, U4, U5, U6, U7, U8 and 1 more"


def test_a_lone_line_copy_of_a_bus_figure_keeps_its_line_name():
    # a change list where only SDA's fall time moved holds fall_time and fall_time_sda,
    # equal: it had kept the bus's copy, and "Fall time tf" lost its "SDA"
    from pinlib.core.labels import shown_figures

    assert shown_figures({"fall_time": (1, 2), "fall_time_sda": (1, 2)}) == ["fall_time_sda"]
    # with both lines' copies equal to the bus's, the bus's alone (a figures table)
    assert shown_figures({"fall_time": 1, "fall_time_sda": 1, "fall_time_scl": 1}) == [
        "fall_time"]
