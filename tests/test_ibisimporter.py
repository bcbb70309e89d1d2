"""The IBIS import panel of workbook 04 (pinlib.present.widgets.ibisimporter): a file read,
its pins' functions guessed, the values previewed with their provenance, nothing written
before *Write the part*.  The IBIS text is the tests' invented model (tests/test_ibis.py)."""

from __future__ import annotations

import pytest

pytest.importorskip("ipywidgets")

from test_ibis import ibis_text  # noqa: E402

from pinlib.library import load_library  # noqa: E402
from pinlib.present.widgets.ibisimporter import SKIP, IbisImporter  # noqa: E402


@pytest.fixture
def ibs(tmp_path):
    path = tmp_path / "invented.ibs"
    path.write_text(ibis_text(model_type="I/O"))
    return path


def test_guess_preview_then_write(tmp_path, ibs):
    team = tmp_path / "team"
    panel = IbisImporter(team).set(file=str(ibs), component="DEMO-IO", id="demo-w",
                                   category="memory")
    # common practice, no source: SDA and SCL name the I2C signals (pinguess.SPELLINGS)
    assert panel.mapping() == {"SDA": "i2c-sda", "SCL": "i2c-scl"}
    panel.set(pins={"SDA": "spi-sclk", "SCL": None})
    assert panel.mapping() == {"SDA": "spi-sclk"} and panel.pins["SCL"].value == SKIP
    text = panel.preview()
    assert text is not None and "[pins.sclk.fast]" in text
    shown = panel.preview_html.value
    assert "pins.sclk.edges[15 pF].rise" in shown and "derived:" in shown
    assert "[Model] io33" in shown and "timing.test_load" in shown
    assert not team.exists()  # a preview writes nothing
    path = panel.write()
    assert path == team / "demo-w.toml"
    pin = load_library([team], builtin=False, env=False).get("demo-w").pins["sclk"]
    assert pin.edges and pin.fast is not None and pin.edges[0].rise.basis == "ibis"


def test_refusals_are_shown_and_nothing_is_written(tmp_path, ibs):
    panel = IbisImporter(tmp_path / "team")
    panel.set(file=str(tmp_path / "missing.ibs"))
    assert panel.ibis is None and "file not found" in panel.message.value
    panel.set(file=str(ibs), component="DEMO-IO", id="Bad Id")
    assert panel.write() is None and not (tmp_path / "team").exists()
    assert panel.message.value
    panel.set(id="demo-ok", i_ol="3")  # a current without its unit
    assert panel.preview() is None and panel.text is None and panel.message.value


def test_a_refused_file_is_named_with_its_line(tmp_path):
    """The message names the file (and the line) it is about, as the command does."""
    panel = IbisImporter(tmp_path / "team")
    panel.set(file=str(tmp_path / "missing.ibs"))
    assert f"{tmp_path / 'missing.ibs'}</code>: <b>file not found" in panel.message.value
    bad = tmp_path / "bad.ibs"
    bad.write_text("not an IBIS file\n")  # invented test data
    panel.set(file=str(bad))
    assert f"{bad}:1</code>" in panel.message.value



def test_an_empty_file_box_asks_for_a_path(tmp_path):
    """An empty box (or a folder) asks for a file rather than reading the working
    folder ("cannot read the file: Is a directory")."""
    panel = IbisImporter(tmp_path / "team")
    for empty in ("", "  ", str(tmp_path)):
        panel.set(file=empty)
        assert panel.ibis is None and "a file name is needed" in panel.message.value, \
            panel.message.value
        assert "directory" not in panel.message.value


def test_write_shows_what_the_part_lacks_to_stand_on_a_bus(tmp_path, ibs):
    # the command warned of an SDA pin without SCL after the import; the panel's Write
    # showed only "created": the same warnings now follow it (invented model, SDA only)
    panel = IbisImporter(tmp_path / "team").set(file=str(ibs), component="DEMO-IO",
                                                id="demo-sda", category="memory")
    panel.set(pins={"SDA": "i2c-sda", "SCL": None})
    assert panel.write() == tmp_path / "team" / "demo-sda.toml"
    shown = panel.message.value
    assert "created" in shown and "warning:" in shown and "i2c-scl" in shown


def test_a_read_after_a_refused_one_chooses_the_component_and_clears_the_message(tmp_path,
                                                                                  ibs):
    panel = IbisImporter(tmp_path / "team")
    panel.set(file=str(tmp_path / "nope.ibs"))
    assert "file not found" in panel.message.value
    panel.set(file=str(ibs))
    # invented test input: the model's only component
    assert panel.component.value == "DEMO-IO" and set(panel.pins) == {"SDA", "SCL"}
    assert "file not found" not in panel.message.value and "read" in panel.message.value
    assert panel.preview() is not None and "no such component" not in panel.message.value


def test_messages_name_the_panels_fields_not_the_commands_options(tmp_path, ibs):
    team = tmp_path / "team"
    panel = IbisImporter(team).set(file=str(ibs), component="DEMO-IO", id="demo-x",
                                   category="memory")
    assert panel.write() == team / "demo-x.toml"
    assert panel.write() is None
    shown = panel.message.value
    assert "a part with this id exists" in shown and "choose another Part id" in shown
    assert "--" not in shown and "field <code>Part id</code>" in shown
    panel.component.options = ["DEMO-IO", "NOT-THERE"]  # invented: a stale choice
    panel.component.value = "NOT-THERE"
    assert panel.preview() is None
    assert "field <code>Component</code>" in panel.message.value
    assert "--" not in panel.message.value
    panel.component.value = "DEMO-IO"  # a new choice: the old refusal goes
    assert "no such component" not in panel.message.value


def test_the_preview_shows_three_significant_digits(tmp_path, ibs):
    import re

    panel = IbisImporter(tmp_path / "team").set(file=str(ibs), component="DEMO-IO",
                                                pins={"SDA": "spi-sclk", "SCL": None})
    text = panel.preview()
    # the file keeps six digits ("1.27329 ns"); the table shows three, the file's as tooltip
    assert re.search(r"\d\.\d{4,} ns", text)
    cells = re.findall(r"<td[^>]*>([^<]*)</td>", panel.preview_html.value)
    numbers = [m.group(1) for c in cells if (m := re.fullmatch(r"[+-]?([\d.]+) ?\w+", c))]
    assert numbers and all(len(n.replace(".", "").lstrip("0")) <= 3 for n in numbers), numbers
    assert "as written in the file" in panel.preview_html.value


def test_the_ibis_file_field_takes_the_width_beside_its_button(tmp_path):
    panel = IbisImporter(tmp_path / "team")
    # common practice, no source: a path wants more room than a part id's 400 px field
    assert panel.file.layout.flex == "1 1 auto" and panel.file.layout.width == "auto"
    row = next(w for w in panel.widget.children[1].children if panel.file in
               getattr(w, "children", ()))
    assert int(row.layout.max_width.rstrip("px")) > 400 + 160
