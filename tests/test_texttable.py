"""Plain-text tables fitted to a width (pinlib.core.texttable)."""

from __future__ import annotations

from pinlib.core.texttable import fit_table

HEAD = ["id", "value", "source"]
ROWS = [["a", "1 pF", "a long source text that names a document and its table"],
        ["bb", "22 pF", "short"]]


def test_a_table_that_fits_is_laid_out_as_it_is():
    lines, dropped = fit_table(HEAD, ROWS, None, rule=True)
    assert dropped == [] and len(lines) == 4
    assert lines[0].split() == HEAD and set(lines[1]) == {"-", " "}
    assert lines[2].startswith("a   1 pF   a long source")


def test_trailing_columns_are_dropped_then_the_widest_wraps():
    lines, dropped = fit_table(HEAD, ROWS, 12, keep=2)
    assert dropped == ["source"]
    assert all(len(ln) <= 12 for ln in lines)
    lines, dropped = fit_table(HEAD, ROWS, 40, keep=3)
    assert dropped == [] and all(len(ln) <= 40 for ln in lines)
    text = " ".join(ln[11:].strip() for ln in lines[1:])  # the wrapped source column
    assert "a long source text that names a document and its table" in text


def test_every_cell_survives_a_narrow_width():
    lines, _ = fit_table(["x"], [["abcdefghijklmnopqrstuvwxyz"]], 10)
    assert "".join(ln.strip() for ln in lines[1:]) == "abcdefghijklmnopqrstuvwxyz"
