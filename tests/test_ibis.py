"""IBIS files: the reader (pinlib.library.ibis) and the values derived from them.

Every IBIS text here is written by the test from a known, invented model (no vendor's
file): linear current-voltage tables of a known resistance, a known C_comp and C_pin,
known thresholds.  The reader must give back what was written; a malformed set must be
refused with the line and the keyword.
"""

from __future__ import annotations

import json
import time

import pytest

from pinlib.core.errors import LibraryError
from pinlib.library import ibis

VDD = 3.3          # invented model, 3.3 V rail
R_DOWN = 25.0      # invented: the pull-down table is a 25 ohm resistor
R_UP = 40.0        # invented: the pull-up table is a 40 ohm resistor


def iv_rows(r_typ, r_min, r_max, *, up=False):
    """Rows 'V typ min max' of a linear table (I = V / R); pull-up tables are written
    against VDD - V, as IBIS does, with current out of the pin negative."""
    rows = []
    for i in range(-5, 12):
        v = i * 0.33
        sign = -1.0 if up else 1.0
        rows.append(f"  {v:.4f}  {sign * v / r_typ:.6e}  {sign * v / r_min:.6e}  "
                    f"{sign * v / r_max:.6e}")
    return "\n".join(rows)


EDGES = (
    "[Ramp]\n"
    "dV/dt_r  1.2/0.5n  1.0/0.7n  1.4/0.3n\n"
    "dV/dt_f  1.3/0.4n  1.1/0.6n  NA\n"
    "R_load = 50\n"
    "[Rising Waveform]\n"
    "R_fixture = 50\n"
    "V_fixture = 0.0\n"
    "C_fixture = 5p\n"
    "0.0   0.0   0.0   0.0\n"
    "1n    1.5   1.2   1.8\n"
    "2n    2.2   2.0   2.4\n"
    "[Falling Waveform]\n"
    "R_fixture = 50\n"
    "V_fixture = 3.3\n"
    "0.0   3.3   3.0   3.6\n"
    "2n    1.1   1.0   1.2\n")


def ibis_text(*, comment="|", model_type="I/O", extra_model="", pins=None, head=None,
              vinl="0.8V", vinh="2.0V", edges=EDGES, cref="0pF"):
    c = comment
    head = head if head is not None else (
        "[IBIS Ver]   5.0\n"
        "[File Name]  invented.ibs\n"
        "[File Rev]   1.2\n"
        "[Date]       invented\n"
        f"[Source]     invented for pinlib's tests {c} not a vendor's model\n"
        "[Notes]      none\n")
    pins = pins if pins is not None else (
        "[Pin]  signal_name  model_name  R_pin  L_pin  C_pin\n"
        "1      SDA          io33        0.2    2.1nH  0.4pF\n"
        "2      SCL          io33        NA     NA     NA\n"
        "3      VDD          POWER\n"
        "4      GND          GND\n")
    return (
        ("[Comment Char] #_char\n" if c != "|" else "")
        + f"{c} an invented IBIS file written by the tests\n"
        + head
        + "[Component]  DEMO-IO\n"
          "[Manufacturer] Invented\n"
          "[Package]\n"
          f"{c} variable typ min max\n"
          "R_pkg  0.2  0.1  0.3\n"
          "L_pkg  2n   1n   3n\n"
          "C_pkg  0.5p 0.3p 0.6p\n"
        + pins
        + "[Model Selector] sel\n"
          "io33   3.3 V buffer\n"
          "[Model] io33\n"
          f"Model_type {model_type}\n"
          "Polarity Non-Inverting\n"
          "Enable Active-High\n"
          f"Vinl = {vinl}\n"
          f"Vinh = {vinh}\n"
          "Vmeas = 1.65V\n"
          f"Cref = {cref}\n"
          "Rref = 50\n"
          "Vref = 0\n"
          f"{c} typ min max\n"
          "C_comp 3.0pF 2.5pF 3.5pF\n"
          "[Temperature Range] 25 100 0\n"
          "[Voltage Range] 3.3 3.0 3.6\n"
          "[Pulldown]\n"
        + iv_rows(R_DOWN, R_DOWN * 1.2, R_DOWN * 0.8) + "\n"
        + "[Pullup]\n"
        + iv_rows(R_UP, R_UP * 1.2, R_UP * 0.8, up=True) + "\n"
        + "[GND Clamp]\n"
          "-1.0  -0.1  NA  NA\n"
          " 0.0   0.0  NA  NA\n"
          "[POWER Clamp]\n"
          "-1.0   0.1  NA  NA\n"
          " 0.0   0.0  NA  NA\n"
        + edges
        + extra_model
        + "[End]\n")


# ---------------------------------------------------------------- scaling letters
@pytest.mark.parametrize(("text", "value"), [
    # published: IBIS Version 7.x, section 3 (general syntax rules), the scaling factors
    # T G M k m u n p f; from memory: their factors; the case matters (IBIS Open Forum
    # mail of 1996-11-27: version 1.1 allowed M k m u n p, version 2.0 added T G f)
    ("1T", 1e12), ("1G", 1e9), ("1M", 1e6), ("1k", 1e3), ("1m", 1e-3), ("1u", 1e-6),
    ("1n", 1e-9), ("1p", 1e-12), ("1f", 1e-15),
    # published: same section: letters after the scaling letter are ignored (units)
    ("2.5pF", 2.5e-12), ("0.8V", 0.8), ("50Ohm", 50.0), ("3.3", 3.3), ("-1.2e-3", -1.2e-3),
    # derived from the rules above: 'meg' is 'm' (milli) and ignored letters, not mega
    ("1.5meg", 1.5e-3), ("10mA", 10e-3), ("4MHz", 4e6),
])
def test_scaling_letters(text, value):
    assert ibis.parse_number(text) == pytest.approx(value, rel=1e-12)


@pytest.mark.parametrize("text", ["", "V", "1..2", "1/2", "--1", "NA", "1 2",
                                  "1e999", "-1e400", "1e308k"])  # the last three overflow
def test_not_numbers(text):
    with pytest.raises(ValueError):
        ibis.parse_number(text)


# ---------------------------------------------------------------- the reader
def test_reads_what_was_written(tmp_path):
    path = tmp_path / "invented.ibs"
    path.write_text(ibis_text())
    f = ibis.read_ibis(path)
    assert f.header["ibis ver"] == "5.0" and f.file_rev == "1.2"
    comp = f.components["DEMO-IO"]
    assert comp.manufacturer == "Invented"
    assert comp.package["c_pkg"] == ibis.TypMinMax(0.5e-12, 0.3e-12, 0.6e-12)
    sda, scl = comp.pins[0], comp.pins[1]
    assert (sda.name, sda.signal, sda.model) == ("1", "SDA", "io33")
    assert sda.c_pin == pytest.approx(0.4e-12) and sda.l_pin == pytest.approx(2.1e-9)
    assert scl.c_pin is None and comp.pins[2].model == "POWER"
    assert f.selectors["sel"] == [("io33", "3.3 V buffer")]
    m = f.models["io33"]
    assert m.model_type == "I/O" and m.params["polarity"] == "Non-Inverting"
    assert m.params["vinl"] == pytest.approx(0.8) and m.params["vinh"] == pytest.approx(2.0)
    assert m.params["rref"] == pytest.approx(50.0)
    assert m.params["c_comp"] == ibis.TypMinMax(3e-12, 2.5e-12, 3.5e-12)
    assert m.voltage_range == ibis.TypMinMax(3.3, 3.0, 3.6)
    assert m.temperature_range == ibis.TypMinMax(25, 100, 0)
    down = m.tables["pulldown"]
    assert len(down.x) == 17 and down.typ[-1] == pytest.approx(3.63 / R_DOWN, rel=1e-6)
    assert m.tables["gnd_clamp"].min == (None, None)
    assert m.ramp.dv_dt_r[0] == pytest.approx((1.2, 0.5e-9)) and m.ramp.dv_dt_f[2] is None
    assert m.ramp.r_load == 50.0
    rise, fall = m.waveforms
    assert rise.edge == "rising" and rise.fixture["c_fixture"] == pytest.approx(5e-12)
    assert rise.table.x[1] == pytest.approx(1e-9) and fall.fixture["v_fixture"] == 3.3


def test_comment_char_and_keyword_spelling():
    text = ibis_text(comment="#").replace("[Voltage Range]", "[voltage_range]")
    f = ibis.parse_ibis(text)
    assert f.models["io33"].voltage_range.typ == 3.3
    assert "| not a vendor" not in f.header["source"]
    assert "not a vendor" not in f.header["source"]  # cut at '#', the new comment character


def test_large_file_is_read_in_bounded_time():
    # common practice, no source: a 4 MB table is read in well under the time a user waits
    rows = "\n".join(f"{i * 1e-4:.6f} {i * 1e-6:.6e} NA NA" for i in range(120_000))
    text = ibis_text(extra_model="[Model] big\nModel_type Input\nC_comp 1p 1p 1p\n"
                                 "[Voltage Range] 3.3 3.0 3.6\n[GND Clamp]\n" + rows + "\n")
    start = time.perf_counter()
    f = ibis.parse_ibis(text)
    assert len(f.models["big"].tables["gnd_clamp"].x) == 120_000
    assert time.perf_counter() - start < 10


def test_a_long_bad_token_is_refused_at_once():
    # common practice, no source: a 2 MB token that is almost a number fails in bounded time
    start = time.perf_counter()
    with pytest.raises(ValueError):
        ibis.parse_number("1" * 2_000_000 + "-")
    text = ibis_text().replace("Rref = 50", "Rref = " + "1" * 2_000_000 + "-")
    with pytest.raises(LibraryError) as info:
        ibis.parse_ibis(text)
    assert info.value.field == "Rref" and len(info.value.message) < 400
    assert time.perf_counter() - start < 5


def test_too_large_a_file_is_refused(tmp_path):
    path = tmp_path / "big.ibs"
    path.write_text(ibis_text())
    with pytest.raises(LibraryError) as info:
        ibis.read_ibis(path, max_bytes=100)
    assert info.value.file == str(path)


# ---------------------------------------------------------------- malformed files
def _line_of(text, needle):
    return next(i for i, ln in enumerate(text.splitlines(), 1) if needle in ln)


MALFORMED = [
    # (what, how to break the text, the keyword named, the line holding this text or None)
    ("missing file rev", lambda t: t.replace("[File Rev]   1.2\n", ""), "[File Rev]", None),
    ("missing C_comp", lambda t: t.replace("C_comp 3.0pF 2.5pF 3.5pF\n", ""), "[Model]",
     "[Model] io33"),
    ("missing voltage range", lambda t: t.replace("[Voltage Range] 3.3 3.0 3.6\n", ""),
     "[Model]", "[Model] io33"),
    ("bad number in a table", lambda t: t.replace("1n    1.5   1.2", "1n    1.5x2 1.2"),
     "[Rising Waveform]", "1.5x2"),
    ("bad number in C_pin", lambda t: t.replace("0.4pF", "0,4pF"), "[Pin]", "0,4pF"),
    ("wrong column count in a table", lambda t: t.replace("-1.0  -0.1  NA  NA",
                                                         "-1.0  -0.1  NA"),
     "[GND Clamp]", "-1.0  -0.1  NA"),
    ("wrong column count in [Pin]", lambda t: t.replace("NA     NA     NA\n", "NA NA\n"),
     "[Pin]", "2      SCL"),
    ("NA in the typ column", lambda t: t.replace(" 0.0   0.0  NA  NA\n[POWER",
                                                 " 0.0   NA  NA  NA\n[POWER"),
     "[GND Clamp]", " 0.0   NA  NA  NA"),
    ("NA where C_comp typ is needed", lambda t: t.replace("C_comp 3.0pF", "C_comp NA"),
     "C_comp", "C_comp NA"),
    ("NA as R_load", lambda t: t.replace("R_load = 50", "R_load = NA"), "[Ramp]",
     "R_load = NA"),
    ("a pin names no model", lambda t: t.replace("2      SCL          io33",
                                                 "2      SCL          io55"),
     "[Pin]", "io55"),
    ("a table outside a model", lambda t: t.replace("[Component]  DEMO-IO",
                                                    "[Ramp]\n[Component]  DEMO-IO"),
     "[Ramp]", "[Ramp]"),  # the first [Ramp], before the component
    ("an empty table", lambda t: t.replace("[POWER Clamp]\n-1.0   0.1  NA  NA\n"
                                           " 0.0   0.0  NA  NA\n", "[POWER Clamp]\n"),
     "[POWER Clamp]", "[POWER Clamp]"),
    ("ramp without dV/dt_f", lambda t: t.replace("dV/dt_f  1.3/0.4n  1.1/0.6n  NA\n", ""),
     "[Ramp]", "[Ramp]"),
    ("bad comment character", lambda t: "[Comment Char] x_char\n" + t, "[Comment Char]", None),
    ("data before a keyword", lambda t: "hello\n" + t, "", None),
    # a number that overflows to infinity was written into the part file, whose loader
    # then named the new part file instead of the IBIS file
    ("a number too large", lambda t: t.replace("C_pkg  0.5p", "C_pkg  1e999"), "[Package]",
     "C_pkg  1e999"),
    # waveform rows out of order, or a fixture of no resistance, reached the driver fit,
    # which refused them with no file or line (field 'waves')
    ("waveform rows out of order", lambda t: t.replace("2n    2.2   2.0   2.4",
                                                       "0.5n  2.2   2.0   2.4"),
     "[Rising Waveform]", "0.5n  2.2"),
    ("waveform rows at one time", lambda t: t.replace("2n    2.2   2.0   2.4",
                                                      "1n    2.2   2.0   2.4"),
     "[Rising Waveform]", "1n    2.2"),
    ("R_fixture of 0", lambda t: t.replace("R_fixture = 50", "R_fixture = 0", 1),
     "[Rising Waveform]", "R_fixture = 0"),
    ("negative C_fixture", lambda t: t.replace("C_fixture = 5p", "C_fixture = -5p"),
     "[Rising Waveform]", "C_fixture = -5p"),
]


@pytest.mark.parametrize(("what", "breaks", "keyword", "needle"), MALFORMED,
                         ids=[m[0] for m in MALFORMED])
def test_malformed_files(what, breaks, keyword, needle, tmp_path):
    text = breaks(ibis_text())
    assert text != ibis_text()
    path = tmp_path / "bad.ibs"
    path.write_text(text)
    with pytest.raises(LibraryError) as info:
        ibis.read_ibis(path)
    err = info.value
    assert err.file == str(path) and err.field == keyword
    assert err.line == (_line_of(text, needle) if needle else 1)
    assert str(path) in err.message


# ---------------------------------------------------------------- derived values
def _derive(**kw):
    from pinlib.library.ibisderive import derive_pin
    f = ibis.parse_ibis(ibis_text(**{k: v for k, v in kw.items() if k == "model_type"}))
    return derive_pin(f, "DEMO-IO", kw.get("pin", "SDA"), drive=kw.get("drive", "push-pull"),
                      i_ol=kw.get("i_ol"))


def test_c_in_is_c_comp_plus_c_pin():
    got = _derive()["c_in"]
    # derived from C_comp max 3.5 pF + C_pin 0.4 pF, both written by ibis_text
    assert got.value == pytest.approx(3.9e-12, rel=1e-12)
    assert got.typ == pytest.approx(3.4e-12, rel=1e-12)
    assert got.source == "invented.ibs rev 1.2, [Model] io33, C_comp max"


def test_c_in_takes_the_package_where_the_pin_says_na():
    # derived from C_comp max 3.5 pF + C_pkg max 0.6 pF (pin SCL gives NA); typ 3 + 0.5 pF
    got = _derive(pin="SCL")["c_in"]
    assert got.value == pytest.approx(4.1e-12, rel=1e-12)
    assert got.typ == pytest.approx(3.5e-12, rel=1e-12)


def test_thresholds_are_vinl_and_vinh():
    got = _derive()
    # derived from Vinl = 0.8V, Vinh = 2.0V as written by ibis_text
    assert got["v_il"].value == pytest.approx(0.8) and got["v_ih"].value == pytest.approx(2.0)
    assert got["v_il"].source.endswith("[Model] io33, Vinl")


def test_r_out_recovers_the_tables_resistance():
    got = _derive()["r_out"]
    # derived from the tables: pull-up 40 ohm typ, its min column 1.2 x 40 = 48 ohm, the
    # weakest of both tables and corners; typ the larger typ (40 ohm)
    assert got.value == pytest.approx(1.2 * R_UP, rel=1e-5)
    assert got.typ == pytest.approx(R_UP, rel=1e-5)
    assert got.source == "invented.ibs rev 1.2, [Model] io33, [Pullup] min"


def test_open_drain_v_ol_at_i_ol():
    got = _derive(model_type="Open_drain", drive="open-drain", i_ol=3e-3)["v_ol"]
    # derived from Ohm's law on the linear pull-down table: 3 mA x (1.2 x 25 ohm) = 90 mV
    assert got.value == pytest.approx(3e-3 * 1.2 * R_DOWN, rel=1e-5)
    assert got.typ == pytest.approx(3e-3 * R_DOWN, rel=1e-5)
    assert "[Pulldown] min" in got.source


def test_pullup_reference_stands_in_for_voltage_range():
    from pinlib.library.ibisderive import derive_pin
    text = ibis_text().replace("[Voltage Range] 3.3 3.0 3.6",
                               "[Pullup Reference] 3.3 3.0 3.6\n[Pulldown Reference] 0 0 0")
    f = ibis.parse_ibis(text)
    m = f.models["io33"]
    assert m.voltage_range is None and m.supply() == ibis.TypMinMax(3.3, 3.0, 3.6)
    # derived from the pull-up table's min column, as with [Voltage Range]: 1.2 x 40 ohm
    assert derive_pin(f, "DEMO-IO", "SDA")["r_out"].value == pytest.approx(48.0, rel=1e-5)


def test_an_input_model_has_no_drive_values():
    got = _derive(model_type="Input")
    assert set(got) == {"c_in", "v_il", "v_ih"}


# ---------------------------------------------------------------- pinlib parts import
DESIGN = """\
format = "pinlib.design/1"
title = "an invented board with an imported part"

[board.geometry.g]
kind = "microstrip"
width = "0.2 mm"
height = "0.18 mm"
er = 4.2

[[bus]]
id = "b"
protocol = "i2c"
supply = "3.3 V"
trace = { length = "5 cm", geometry = "g" }
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller" },
  { ref = "U2", part = "demo-io" },
]
"""


def _import(tmp_path, capsys, *extra, model_type="Open_drain", edges=EDGES):
    from pinlib.cli import main
    ibs = tmp_path / "invented.ibs"
    ibs.write_text(ibis_text(model_type=model_type, edges=edges))
    code = main(["parts", "import", str(ibs), *extra])
    out = capsys.readouterr()
    return code, out.out, out.err


def test_import_lists_components_pins_and_models(tmp_path, capsys):
    code, out, _ = _import(tmp_path, capsys)
    assert code == 0
    assert "component DEMO-IO (Invented)" in out
    assert "SDA" in out and "model io33: Open_drain, 3.3 V" in out


def test_imported_part_loads_and_is_checked_in_a_design(tmp_path, capsys):
    from pinlib.cli import main
    from pinlib.library.loader import load_library
    parts = tmp_path / "parts"
    code, out, err = _import(tmp_path, capsys, "--component", "DEMO-IO", "--pin", "SDA=i2c-sda",
                             "--pin", "SCL=i2c-scl", "--id", "demo-io", "--into", str(parts),
                             "--i-ol", "3mA", "--category", "memory")
    assert code == 0, err
    part = load_library([parts]).get("demo-io")
    sda = part.pins["sda"]
    # derived from the invented file: C_comp max 3.5 pF + C_pin 0.4 pF; 3 mA x 30 ohm
    assert sda.c_in.value == pytest.approx(3.9e-12, rel=1e-5) and sda.c_in.basis == "ibis"
    assert sda.v_ol.at(3.3) == pytest.approx(0.09, rel=1e-5)
    assert sda.drive == "open-drain" and "[Model] io33" in sda.v_ol.source
    assert part.provenance.basis == "ibis"
    # the file's [Voltage Range] 3.0-3.6 V is the supply its tables were taken at; the
    # source says it stands in for the datasheet's rating
    assert (part.supply.min.value, part.supply.max.value) == (3.0, 3.6)
    assert "[Voltage Range] (the supply the model's tables were taken at" in \
        part.supply.max.source
    cb = {}
    for name, part_id in (("imported", "demo-io"), ("class", "eeprom-i2c")):
        design = tmp_path / f"{name}.toml"
        design.write_text(DESIGN.replace('part = "demo-io"', f'part = "{part_id}"'))
        code = main(["check", str(design), "--library", str(parts), "--json"])
        out = capsys.readouterr().out
        assert code in (0, 1), out
        cb[name] = json.loads(out)["buses"][0]["figures"]["bus_capacitance"]["value"]
    # derived from the two parts' SDA c_in: 8 pF (eeprom-i2c class) - 3.9 pF (imported)
    assert cb["class"] - cb["imported"] == pytest.approx(8e-12 - 3.9e-12, rel=1e-6)


def test_an_imported_part_file_opens_with_comments_of_80_columns(tmp_path, capsys):
    # Once a line of 91 columns: the component and a file name of up to 40 characters
    # each (IBIS allows that much) in one comment.
    from pinlib.cli import main
    name = "an-invented-buffer-model-file-abcdef.ibs"
    ibs = tmp_path / "invented.ibs"
    ibs.write_text(ibis_text(model_type="Open_drain").replace(
        "[File Name]  invented.ibs", f"[File Name]  {name}"))
    parts = tmp_path / "parts"
    code = main(["parts", "import", str(ibs), "--component", "DEMO-IO", "--pin", "SDA=i2c-sda",
                 "--pin", "SCL=i2c-scl", "--id", "demo-io", "--into", str(parts)])
    assert code == 0, capsys.readouterr().err
    lines = (parts / "demo-io.toml").read_text(encoding="utf-8").splitlines()
    head = lines[:lines.index('format = "pinlib.part/1"')]
    assert all(x.startswith("#") and len(x) <= 80 for x in head), head
    assert " ".join(x[2:] for x in head).startswith(
        f"DEMO-IO, imported from the IBIS file {name} (rev 1.2).")

def test_import_of_a_push_pull_pin_writes_r_out(tmp_path, capsys):
    from pinlib.library.loader import load_library
    parts = tmp_path / "parts"
    code, _, err = _import(tmp_path, capsys, "--component", "DEMO-IO", "--pin", "SDA=gpio",
                           "--id", "demo-pp", "--into", str(parts), model_type="I/O",
                           edges="")  # no waveforms, no ramp: r_out from the tables
    assert code == 0, err
    pin = load_library([parts]).get("demo-pp").pins["sda"]
    # derived from the pull-up table's min column: 1.2 x 40 ohm
    assert pin.drive == "push-pull" and pin.r_out.value == pytest.approx(48.0, rel=1e-5)


def test_import_refuses_the_builtin_library(tmp_path, capsys):
    from pinlib.library import loader
    code, _, err = _import(tmp_path, capsys, "--component", "DEMO-IO", "--pin", "SDA=i2c-sda",
                           "--id", "demo-x", "--into", str(loader.BUILTIN_DIR))
    assert code == 2 and "team folder" in err
    assert not (loader.BUILTIN_DIR / "demo-x.toml").exists()


def test_a_row_of_one_column_is_named_in_the_singular():
    # "1 columns where 4 belong" read wrongly; the message counts what it found
    lines = ibis_text().splitlines()
    at = next(i for i, x in enumerate(lines) if x.strip().lower() == "[pulldown]") + 1
    while not lines[at].strip() or lines[at].lstrip().startswith("|"):
        at += 1
    lines[at] = "0.0"
    with pytest.raises(LibraryError) as got:
        ibis.parse_ibis("\n".join(lines) + "\n", "invented.ibs")
    assert "1 column where 4 columns belong" in str(got.value), str(got.value)


def test_a_refused_value_is_named_at_its_ibis_line_and_nothing_is_written(tmp_path, capsys):
    # Once named the part file it would have written (…/demo-x.toml:14, field
    # 'pins.sda.c_in'), which did not exist.
    from pinlib.cli import main
    # invented test input: C_comp written 3meg, which IBIS reads as 3 mF (m is milli)
    text = ibis_text(model_type="Open_drain").replace("C_comp 3.0pF", "C_comp 3meg")
    ibs = tmp_path / "invented.ibs"
    ibs.write_text(text)
    line = text.splitlines().index("C_comp 3meg 2.5pF 3.5pF") + 1
    parts = tmp_path / "parts"
    code = main(["parts", "import", str(ibs), "--component", "DEMO-IO", "--pin", "SDA=i2c-sda",
                 "--pin", "SCL=i2c-scl", "--id", "demo-x", "--into", str(parts)])
    err = capsys.readouterr().err
    assert code == 2
    assert f"{ibs}:{line}, field '[Model] io33, C_comp': outside the allowed range" in err
    assert "expected at least 0 F and at most" in err and "pins.sda.c_in" in err
    assert "demo-x.toml" not in err
    assert not parts.exists()


@pytest.mark.parametrize("how", [["--yes"], ["--pin", "SDA=i2c-sda"]])
def test_writing_without_an_id_names_the_missing_option(how, tmp_path, capsys):
    # Once, with --yes: the guess printed again with "add --yes", then "field '--id':
    # not a pin mapping".
    code, out, err = _import(tmp_path, capsys, "--component", "DEMO-IO", *how,
                             "--into", str(tmp_path / "parts"))
    assert code == 2
    assert "field '--id': no --id given: the part to write needs an id" in err
    assert "pin mapping" not in err and "add --yes" not in out
    assert not (tmp_path / "parts").exists()


def test_import_warns_of_a_part_no_bus_can_take_and_of_a_sink_without_data(tmp_path, capsys):
    # The README's example mapped SDA alone, without --i-ol: the part was written and
    # `parts check` said "no problems", yet no I2C bus could take it and its sink had
    # no rating to be checked against; nothing said so.
    parts = tmp_path / "parts"
    code, out, err = _import(tmp_path, capsys, "--component", "DEMO-IO", "--pin",
                             "SDA=i2c-sda", "--id", "demo-x", "--into", str(parts))
    assert code == 0 and (parts / "demo-x.toml").exists()  # warnings, not a refusal
    flat = " ".join(err.split())
    assert "warning:" in flat and "field 'pins.sda': pins of i2c/smbus (i2c-sda) but no " \
        "i2c-scl pin: the part cannot be placed on such a bus" in flat, err
    assert "an open-drain pin without v_ol and i_ol" in flat and "--i-ol CURRENT" in flat
    code, out, err = _import(tmp_path, capsys, "--component", "DEMO-IO", "--pin",
                             "SDA=i2c-sda", "--pin", "SCL=i2c-scl", "--id", "demo-y",
                             "--into", str(parts), "--i-ol", "3mA")
    assert code == 0 and "warning:" not in err, err
