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


# invented test data: ids of the longest kind (the part format allows 64 characters)
LONG = "level-shifter-bidirectional-auto-direction-sensing-eight-channel"
NAMED = [[LONG, "memory", "1.7-5.5 V", "i2c-scl, i2c-sda"],
         ["eeprom-i2c", "memory", "1.7-5.5 V", "i2c-scl, i2c-sda"]]


def test_a_name_too_long_for_the_table_is_whole_on_a_line_of_its_own():
    lines, dropped = fit_table(["id", "category", "supply", "pin functions"], NAMED, 80,
                               keep=4, rule=True)
    assert dropped == [] and len(LONG) == 64
    assert lines[2] == LONG  # whole: a reader copies it from the list
    rest = lines[3].split("  ")
    assert lines[3].startswith(" " * len("eeprom-i2c")) and "i2c-scl, i2c-sda" in rest
    assert lines[4] == "eeprom-i2c  memory    1.7-5.5 V  i2c-scl, i2c-sda"
    assert all(len(ln) <= 80 for ln in lines)
    # the other columns keep their words whole rather than shrinking to the name
    assert len(lines) == 5


def test_names_in_a_later_column_are_whole_after_the_cells_before_them():
    head = ["#", "part", "status", "worst", "set by", "Cb", "tr"]
    rows = [["1", LONG + " *", "WARN", "+0.0 %", "main Device speed", "105 pF", "242 ns"],
            ["2", "eeprom-i2c", "PASS", "+12.5 %", "main Rise time", "98 pF", "200 ns"]]
    lines, _ = fit_table(head, rows, 80, keep=5, names=1)
    assert lines[1] == "1  " + LONG + " *"
    assert lines[2].startswith("   " + " " * len("eeprom-i2c") + "  WARN")
    assert lines[3].startswith("2  eeprom-i2c  PASS")
    assert all(len(ln) <= 80 for ln in lines)


def test_a_name_never_breaks_even_at_a_narrow_width():
    lines, _ = fit_table(["id", "category", "supply", "pin functions"], NAMED, 40, keep=4)
    assert LONG in lines and "eeprom-i2c" in " ".join(lines)
    assert all(len(ln) <= 40 for ln in lines if ln != LONG)


def test_a_name_with_nothing_after_it_leaves_no_blank_line():
    lines, _ = fit_table(["id"], [[LONG], ["eeprom-i2c"]], 40)
    assert lines == ["id", LONG, "eeprom-i2c"]
    lines, _ = fit_table(["#", "part"], [["1", LONG]], 40, keep=2, names=1)
    assert lines == ["#  part", "1  " + LONG]


def test_a_names_column_left_out_changes_nothing_else():
    # names may point past the kept columns: when it is dropped the rest lays out as usual
    lines, dropped = fit_table(["a", "b", "id"], [["1", "2", LONG]], 6, keep=2, names=2)
    assert dropped == ["id"] and lines == ["a  b", "1  2"]
    # kept, the column is as wide as its header and the name has its own line
    lines, dropped = fit_table(["a", "b", "id"], [["1", "2", LONG]], 30, keep=2, names=2)
    assert dropped == [] and lines == ["a  b  id", "1  2  " + LONG]


def test_a_word_longer_than_its_cell_breaks_after_a_hyphen():
    # invented test data, as 'parts show' met it at 80 columns: a source column of 14
    # characters broke "general-purpose" as "gen" / "eral-purpose"
    text = "typical of the class (common practice): general-purpose I/O leakage"
    lines, _ = fit_table(["field", "source"], [["pins.sda.leakage", text]], 32, keep=2)
    cell = [ln[18:] for ln in lines[1:]]
    assert cell == ["typical of the", "class (common", "practice):", "general-",
                    "purpose I/O", "leakage"], cell
    # a hyphenated word that fits is never broken at its hyphen
    lines, _ = fit_table(["n", "x"], [["a", "abc i2c-sda"]], 11, keep=2)
    assert [ln[3:] for ln in lines[1:]] == ["abc", "i2c-sda"], lines
    # a word without a hyphen is still broken where the width falls
    lines, _ = fit_table(["n", "x"], [["a", "abcdefghijklmnopqrstuvwxyz"]], 13, keep=2)
    assert [ln[3:] for ln in lines[1:]] == ["abcdefghij", "klmnopqrst", "uvwxyz"], lines


def test_a_number_keeps_its_unit_in_a_wrapped_cell():
    # invented test data, as 'parts list' met it at 80 columns: a title column of 26
    # characters read "converter, I2C, 2.0 to 5.5" / "V, with ready output" (a range
    # is held whole as the wrapped lines of every other text hold it)
    text = "Analog-to-digital converter, I2C, 2.0 to 5.5 V, with ready output"
    lines, _ = fit_table(["id", "title"], [["adc", text]], 31, keep=2)
    cell = [ln[5:] for ln in lines[1:]]
    assert cell == ["Analog-to-digital", "converter, I2C,", "2.0 to 5.5 V, with ready",
                    "output"], cell
    # a number, its unit and the word before it longer than the cell part at spaces
    lines, _ = fit_table(["n", "x"], [["a", "SMBus 100 kHz"]], 11, keep=2)
    assert [ln[3:] for ln in lines[1:]] == ["SMBus", "100 kHz"], lines
    assert all("\u00a0" not in ln for ln in lines)


def test_wrapping_columns_share_the_room_and_are_dropped_last():
    # invented test data: 'least' lets a column of text wrap rather than be left out
    head = ["id", "code", "notes", "title"]
    rows = [["a", "x" * 10, "one two three four five six", "a title of some words, " * 3],
            ["b", "y", "seven", "short"]]
    lines, dropped = fit_table(head, rows, 40, least={3: 12}, drop=[2, 1], rule=True)
    assert dropped == ["notes"] and lines[0].split() == ["id", "code", "title"]
    assert max(len(ln) for ln in lines) == len(lines[1]) == 40  # the rule: the room used
    # with no 'least' the same table loses its last column first
    lines, dropped = fit_table(head, rows, 40, keep=1)
    assert dropped[-1] == "title"
    # the room left over goes to the wrapping column cut shortest, in turn
    lines, dropped = fit_table(head, rows, 60, least={2: 6, 3: 12}, drop=[2, 1], rule=True)
    assert dropped == [] and len(lines[1]) == 60
    # 60 - (2 + 10 + 3 gaps of 2) = 42 for the two, 6 + 12 at least: the 24 left all go
    # to the title, cut short by 57 against the notes' 21 (derived: 69 - 36 = 33 > 21)
    assert [len(r) for r in lines[1].split()] == [2, 10, 6, 36]
    # with room to spare a column a fair share makes whole is laid out whole: at 90,
    # 54 to share, 27 each, the notes' 21 fit (derived: 90 - 36 at least - 21 = 33 more
    # for the title)
    lines, _ = fit_table(head, rows, 90, least={2: 6, 3: 12}, drop=[2, 1], rule=True)
    assert [len(r) for r in lines[1].split()] == [2, 10, 27, 45]


# --------------------------------------------------------------------- wide characters

_CJK_TITLE = "串行EEPROM存储器，I2C接口，1.7至5.5伏，带写保护引脚和硬件地址选择功能的大容量型号"


def test_wide_characters_count_the_two_columns_a_terminal_gives_them():
    from pinlib.core.wrapping import columns, wrap

    # published: Unicode Standard Annex #11 (East Asian Width): ideographs and
    # full-width forms are wide (two columns), ASCII narrow; a combining mark takes none
    assert columns("EEPROM") == 6 and columns("串行") == 4 and columns("，") == 2
    assert columns("e\u0301") == 1
    # an invented title with no spaces: every line within 80 columns, nothing lost
    lines = wrap(f"pinlib: warning: t-cjk: {_CJK_TITLE} and 4.7 kΩ beside it", 80)
    assert all(columns(ln) <= 80 for ln in lines) and len(lines) == 2
    assert "".join(ln.strip() for ln in lines).replace(" ", "") == (
        f"pinlib: warning: t-cjk: {_CJK_TITLE} and 4.7 kΩ beside it").replace(" ", "")
    assert any("4.7 kΩ" in ln for ln in lines)  # a number stays with its unit


def test_a_table_with_wide_text_aligns_by_columns_and_fits():
    from pinlib.core.wrapping import columns

    lines, dropped = fit_table(["id", "title"], [["t-cjk", _CJK_TITLE], ["t-plain", "plain"]],
                               width=40, least={1: 10})
    assert not dropped and all(columns(ln) <= 40 for ln in lines)
    # the second column starts at one place on every line (its cells padded by columns)
    starts = {columns(ln[:ln.rindex(cell)]) for ln in lines for cell in ("串", "plain")
              if cell in ln}
    assert starts == {9}  # derived: "t-plain" (7) and the two-space gap
