"""Pin functions guessed from signal names, and `pinlib parts import` without --pin: the
guess is shown and nothing is written until --yes (or the --pin list shown)."""

from __future__ import annotations

import shlex

import pytest
from test_ibis import ibis_text

from pinlib.cli import main
from pinlib.library.pinguess import guess_function


@pytest.mark.parametrize(("signal", "function"), [
    # common practice, no source: the spellings of pin lists (pinguess.SPELLINGS)
    ("SDA", "i2c-sda"), ("I2C0_SCL", "i2c-scl"), ("SMBCLK", "i2c-scl"),
    ("SCK", "spi-sclk"), ("SPI1_SCLK", "spi-sclk"), ("QSPI_CLK", "spi-sclk"),
    ("MOSI", "spi-copi"), ("COPI", "spi-copi"), ("MISO", "spi-cipo"), ("CIPO", "spi-cipo"),
    ("CS", "spi-cs"), ("nCS", "spi-cs"), ("CS_N", "spi-cs"), ("/CS", "spi-cs"),
    ("CS#", "spi-cs"), ("SS0", "spi-cs"),
    # no guess: no known word, a clock that is not SPI's, two signals in one name
    ("GPIO4", None), ("CLK", None), ("SDA_SCL", None), ("", None), ("X" * 500, None),
])
def test_guess_function(signal, function):
    assert guess_function(signal) == function


PINS = ("[Pin]  signal_name  model_name\n"
        "1      SPI_SCK      io33\n"
        "2      nCS          io33\n"
        "3      IRQ          io33\n"
        "4      VDD          POWER\n")


def test_import_shows_the_guess_and_writes_nothing(tmp_path, capsys, monkeypatch):
    monkeypatch.setenv("COLUMNS", "80")
    monkeypatch.chdir(tmp_path)  # short paths: the test's folder name is long
    ibs = tmp_path / "invented.ibs"
    ibs.write_text(ibis_text(pins=PINS, edges=""))
    parts = tmp_path / "parts"
    code = main(["parts", "import", "invented.ibs", "--component", "DEMO-IO", "--id",
                 "demo-g", "--into", "parts"])
    out = capsys.readouterr().out
    assert code == 0
    assert "SPI_SCK" in out and "spi-sclk" in out and "(no guess)" in out
    assert not parts.exists()
    # the command it prints (the --id and --into given, lines continued with " \\"
    # within 80 columns) writes the part; so does --yes, to the same values
    lines = out.splitlines()
    start = next(i for i, ln in enumerate(lines) if ln.lstrip().startswith("pinlib"))
    command = lines[start:]
    assert all(len(ln) <= 80 for ln in command), command
    argv = shlex.split(" ".join(command).replace(" \\ ", " "))[1:]
    assert argv[argv.index("--id") + 1] == "demo-g" and "parts" in argv
    assert main(argv) == 0
    assert main(["parts", "import", str(ibs), "--component", "DEMO-IO", "--id", "demo-y",
                 "--into", str(parts), "--yes"]) == 0
    capsys.readouterr()
    a = (parts / "demo-g.toml").read_text().split("\n", 4)[4]
    b = (parts / "demo-y.toml").read_text().split("\n", 4)[4]
    assert a.replace("demo-g", "demo-y") == b
    assert '[pins.sclk]' in a and '[pins.cs]' in a and "irq" not in a.lower()


def test_import_notes_fit_80_columns(tmp_path, capsys, monkeypatch):
    # "note: parts is not a library folder yet: pass --library ... or add it to
    # PINLIB_LIBRARY" was one line past 80 columns, and so were the fit's warnings
    monkeypatch.setenv("COLUMNS", "80")
    monkeypatch.chdir(tmp_path)  # short paths: the test's folder name is long
    (tmp_path / "invented.ibs").write_text(ibis_text(pins=PINS, edges=""))
    assert main(["parts", "import", "invented.ibs", "--component", "DEMO-IO", "--id",
                 "demo-n", "--into", "parts", "--yes"]) == 0
    out, err = capsys.readouterr()
    assert "not a library folder yet" in err
    assert max(len(ln) for ln in (out + err).splitlines()) <= 80, out + err
