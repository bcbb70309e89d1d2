"""pinlib.core.tomlfile: line numbers for messages, and what reading and writing refuse.

Each test builds its bad file in ``tmp_path`` and runs the code a user runs; the inputs
are those that once ended in a hang or a traceback.
"""

from __future__ import annotations

import textwrap

import pytest

from pinlib.core.errors import InputError
from pinlib.core.tomlfile import line_index, line_of, toml_key, tomllib


def test_line_index_finds_inline_keys_and_dotted_ones():
    text = textwrap.dedent("""\
        title = "x, y = 3"
        trace = { length = "5 cm", "odd key" = 1, a.b = 2, n = { z = 1 } }
        devices = [
          { ref = "U1", part = "p,q = r" },
        ]
        """)
    index = line_index(text)
    assert index[("trace", "length")] == 2
    assert index[("trace", "odd key")] == 2
    assert index[("trace", "a", "b")] == 2
    assert index[("trace", "n")] == 2
    assert index[("devices", 0, "part")] == 4
    assert ("title", "y") not in index  # a "key =" inside a string is no key
    assert ("devices", 0, "q") not in index


def test_inline_tables_sharing_a_line_and_an_array_of_tables_have_their_lines():
    # the second and third devices on one line were placed at the array's first line
    # (its "devices = [" line), and a misspelt [[bux]] at line 1
    text = textwrap.dedent("""\
        title = "t"

        [[bux]]
        id = "a"
        devices = [
          { ref = "U1", part = "p" },
          { ref = "U2", part = "q" }, { ref = "U3", part = "r {x}", t = { u = 1 } },
          { ref = "U4", part = "s" },
        ]
        """)
    index = line_index(text)
    assert index[("bux",)] == 3 and index[("bux", 0, "id")] == 4
    assert [index[("bux", 0, "devices", i)] for i in range(4)] == [6, 7, 7, 8]
    assert index[("bux", 0, "devices", 2, "part")] == 7
    assert ("bux", 0, "devices", 4) not in index  # a brace in a string is no table
    assert index[("bux", 0, "devices", 3, "part")] == 8


def test_a_table_in_an_error_is_named_by_its_keys_not_dumped(tmp_path, capsys):
    from pinlib.cli import main

    path = tmp_path / "d.toml"
    path.write_text('format = "pinlib.design/1"\ntitle = "t"\n\n[[bux]]\nid = "a"\n'
                    'protocol = "i2c"\n', encoding="utf-8")
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert "d.toml:4, field 'bux': unknown field (got an array of 1 table)" in err
    assert "{'" not in err


def test_line_lookup_is_linear_in_a_long_value():
    # Once quadratic: 20,000 characters took seconds and 2 MB never finished.  Each of
    # these 2 MB lines must now be indexed at once (run, not timed: a quadratic scan
    # would not end within the test run).
    n = 2_000_000
    cases = {  # text -> (a key path, its line)
        f'description = "{"a" * n}"\nlast = 1\n': (("last",), 2),
        f"x = {'a' * n}\nlast = 1\n": (("last",), 2),
        f'x = {{ a = "{"b," * (n // 2)}", c = 1 }}\n': (("x", "c"), 1),
        f"x = {{ {'a.' * (n // 2)}\nlast = 1\n": (("last",), 2),
        f"x = [{'{' * n}\n": (("x",), 1),
        f"{'k' * n}\nlast = 1\n": (("last",), 2),
        f"[{'t' * n}]\nlast = 1\n": (("t" * n, "last"), 2),
    }
    for text, (path, line) in cases.items():
        assert line_index(text)[path] == line


def test_a_long_description_checks_at_once_and_a_long_value_is_cut_in_the_message(tmp_path):
    from pinlib.cli import main

    design = tmp_path / "d.toml"
    design.write_text(textwrap.dedent("""\
        format = "pinlib.design/1"
        title = "long"
        description = "{long}"

        [[bus]]
        id = "b"
        protocol = "i2c"
        supply = "3.3 V"
        wrong_key = "{long}"
        trace = {{ length = "5 cm", capacitance = "0.8 pF/cm" }}
        devices = [
          {{ ref = "U1", part = "mcu-3v3", role = "controller" }},
          {{ ref = "U2", part = "eeprom-i2c" }},
        ]
        """).format(long="d" * 2_000_000), encoding="utf-8")
    from pinlib.model.design import load_design

    try:
        load_design(design)
    except InputError as err:
        assert (err.file, err.line, err.field) == (str(design), 9, "bus[0].wrong_key")
        assert len(err.message) < 400 and "2,000,000 characters" in err.message
    else:
        raise AssertionError("the unknown key was accepted")
    assert main(["check", str(design)]) == 2


def test_line_of_falls_back_to_the_enclosing_key():
    index = line_index('a = { b = 1 }\n')
    assert line_of(index, ("a", "b", "c")) == 1


DESIGN = """\
format = "pinlib.design/1"
title = "t"

[board.geometry.g]
kind = "microstrip"
width = "0.2 mm"
height = "0.18 mm"
er = 4.2

[[bus]]
id = "sensors"
protocol = "i2c"
supply = "3.3 V"
trace = { length = "5 cm", geometry = "g" }
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller" },
  { ref = "U2", part = "eeprom-i2c" },
]
"""  # invented test data


def _refused(path, **kw):
    from pinlib.core.tomlfile import load

    try:
        load(path, **kw)
    except InputError as err:
        return err
    raise AssertionError(f"{path} was read")


def test_deep_nesting_is_refused_with_file_and_line(tmp_path):
    # 600 levels once raised RecursionError inside the TOML parser
    deep = tmp_path / "deep.toml"
    deep.write_text('title = "x"\n\nx = ' + "[" * 600 + "]" * 600 + "\n", encoding="utf-8")
    err = _refused(deep)
    assert (err.file, err.line) == (str(deep), 3) and "nested deeper than 64" in err.message
    # deep enough for pinlib's own code, not for the parser: refused the same way
    deep.write_text('title = "x"\nx = ' + "[" * 100 + "]" * 100 + "\n", encoding="utf-8")
    err = _refused(deep)
    assert err.line == 2 and err.field.startswith("x[0][0]")
    # tables nested by a dotted header: the line of the header
    deep.write_text('title = "x"\n[' + ".".join(["t"] * 100) + "]\nv = 1\n", encoding="utf-8")
    assert _refused(deep).line == 2
    # so deep a header (or dotted key) that the parser itself gave up: no line was named
    for text in ("[" + ".".join(["t"] * 3000) + "]\nv = 1\n",
                 ".".join(["t"] * 3000) + " = 1\n"):
        deep.write_text('title = "x"\n' + text, encoding="utf-8")
        assert _refused(deep).line == 2


def test_the_cli_reports_deep_nesting_as_exit_2(tmp_path, capsys):
    from pinlib.cli import main

    deep = tmp_path / "deep.toml"
    deep.write_text("x = " + "{ a = " * 600 + "1" + " }" * 600 + "\n", encoding="utf-8")
    assert main(["check", str(deep)]) == 2
    err = capsys.readouterr().err
    assert f"{deep}:1" in err and "Traceback" not in err


def test_an_encoding_error_names_the_line_and_column(tmp_path):
    bad = tmp_path / "bad.toml"
    bad.write_bytes(b'title = "ok"\nx = 1\ny = "ab\xff"\n')
    err = _refused(bad)
    assert err.line == 3 and "byte 0xff at column 8" in err.message


def test_windows_line_ends_read_as_before(tmp_path):
    from pinlib.core.tomlfile import load

    f = tmp_path / "crlf.toml"
    f.write_bytes(b'a = 1\r\nb = """x\r\ny"""\r\n')
    data, text = load(f)
    assert data == {"a": 1, "b": "x\ny"} and "\r" not in text


def test_only_regular_files_under_the_limit_are_read(tmp_path):
    import os

    big = tmp_path / "big.toml"
    big.write_text(f'x = "{"a" * 2000}"\n', encoding="utf-8")
    err = _refused(big, max_bytes=1000)
    assert "2,007 bytes, more than the 1,000 read" in err.message
    link = tmp_path / "zero.toml"
    link.symlink_to("/dev/zero")
    assert "not a regular file" in _refused(link).message  # once grew to gigabytes
    fifo = tmp_path / "x.toml"
    os.mkfifo(fifo)
    assert "not a regular file" in _refused(fifo).message  # once blocked forever


def test_a_write_through_a_link_replaces_the_file_it_leads_to(tmp_path):
    import os

    from pinlib.core.tomlfile import atomic_write, file_lock

    real = tmp_path / "shared" / "part.toml"
    real.parent.mkdir()
    real.write_text("x = 1\n", encoding="utf-8")
    os.chmod(real, 0o640)
    link = tmp_path / "team" / "part.toml"
    link.parent.mkdir()
    link.symlink_to(os.path.relpath(real, link.parent))
    with file_lock(link):
        atomic_write(link, "x = 2\n")  # once replaced the link by a regular file
    assert link.is_symlink() and real.read_text(encoding="utf-8") == "x = 2\n"
    assert os.stat(real).st_mode & 0o777 == 0o640
    assert not list(link.parent.glob(".*")) and not list(real.parent.glob(".*"))


def test_the_lock_file_is_removed_and_writers_still_take_turns(tmp_path):
    import threading

    from pinlib.core.tomlfile import atomic_write, file_lock

    counter = tmp_path / "count.toml"
    atomic_write(counter, "n = 0\n")

    def add(times):
        for _ in range(times):
            with file_lock(counter):
                n = tomllib.loads(counter.read_text(encoding="utf-8"))["n"]
                atomic_write(counter, f"n = {n + 1}\n")

    workers = [threading.Thread(target=add, args=(40,)) for _ in range(4)]
    for w in workers:
        w.start()
    for w in workers:
        w.join()
    # no increment lost although each writer removes the lock file it held
    assert tomllib.loads(counter.read_text(encoding="utf-8"))["n"] == 160
    assert sorted(p.name for p in tmp_path.iterdir()) == ["count.toml"]


def test_stale_temporaries_of_stopped_writers_are_removed_by_the_next_write(tmp_path):
    import os
    import time

    from pinlib.core import tomlfile

    old = time.time() - tomlfile.STALE_TEMPORARY_SECONDS - 60
    stale = tmp_path / ".design.toml.k3j_x9a2.tmp"  # a writer killed before os.replace
    fresh = tmp_path / ".other.toml.ab12cd34.tmp"  # a writer at work now
    foreign = tmp_path / ".notes.abcdefgh.tmp"  # not pinlib's naming
    for f in (stale, fresh, foreign):
        f.write_text("half", encoding="utf-8")
    for f in (stale, foreign):
        os.utime(f, (old, old))
    tomlfile.atomic_write(tmp_path / "design.toml", "x = 1\n")
    assert not stale.exists() and fresh.exists() and foreign.exists()


def test_a_byte_order_mark_is_read_as_if_absent(tmp_path, capsys, monkeypatch):
    # Once refused ("the file starts with a byte-order mark"): Windows editors write one,
    # so a design saved by Notepad could not be checked until it was saved again.
    from pinlib.cli import main
    from pinlib.core.tomlfile import load

    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    design = tmp_path / "board.toml"
    design.write_bytes(b"\xef\xbb\xbf" + DESIGN.replace("\n", "\r\n").encode("utf-8"))
    data, text = load(design)
    assert data["title"] == "t" and not text.startswith("\ufeff") and "\r" not in text
    assert main(["check", str(design)]) in (0, 1)
    captured = capsys.readouterr()
    assert "error" not in captured.err and "sensors" in captured.out


@pytest.mark.parametrize(("body", "expected"), [
    # the parser's column on line 1 (a slip the parser places)
    (b'title = 6 pF\n', "column 11"),
    # an encoding error on line 1: the column counted without the mark
    (b'y = "ab\xff"\n', "byte 0xff at column 8"),
])
def test_with_a_byte_order_mark_every_line_and_column_stays_right(tmp_path, body, expected):
    plain, marked = tmp_path / "plain.toml", tmp_path / "marked.toml"
    plain.write_bytes(body)
    marked.write_bytes(b"\xef\xbb\xbf" + body)
    a, b = _refused(plain), _refused(marked)
    assert a.line == b.line == 1 and expected in a.message
    assert b.message.replace(str(marked), str(plain)) == a.message


def test_with_a_byte_order_mark_a_field_is_placed_on_its_line(tmp_path, monkeypatch):
    from pinlib.model.design import load_design

    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    design = tmp_path / "board.toml"
    bad = DESIGN.replace('supply = "3.3 V"', 'supply = "3.3 parsecs"')
    line = bad.splitlines().index('supply = "3.3 parsecs"') + 1  # derived: its line
    design.write_bytes(b"\xef\xbb\xbf" + bad.encode("utf-8"))
    with pytest.raises(InputError) as info:
        load_design(design)
    assert info.value.line == line and "supply" in info.value.field


@pytest.mark.parametrize(("raw", "line", "expected"), [
    # UTF-16 with its byte-order mark (Windows editors' "Unicode"), either byte order
    ('format = "pinlib.design/1"\n'.encode("utf-16"), 1, "UTF-16 text"),
    (b"\xfe\xff" + 'format = "pinlib.design/1"\n'.encode("utf-16-be"), 1, "UTF-16 text"),
    # without a mark: read as UTF-8 it is valid, every other byte a NUL (once "not valid
    # TOML: Expected '=' after a key", which says nothing of the encoding)
    ('x = 1\ntitle = "t"\n'.encode("utf-16-le"), 1, "a NUL byte at column 2"),
    ('x = 1\ntitle = "t"\n'.encode("utf-16-be"), 1, "a NUL byte at column 1"),
    (b'x = 1\ny = "a\x00b"\n', 2, "a NUL byte at column 7"),
    # binary data: a NUL before the first byte that is not UTF-8 is named first
    (b"\x7fELF\x02\x01\x01\x00\x00\xff\xfe", 1, "a NUL byte at column 8"),
    (b"\x89PNG\r\n\x1a\n\x00", 1, "not UTF-8 text"),
])
def test_utf16_and_binary_files_are_refused_clearly(tmp_path, raw, line, expected):
    bad = tmp_path / "bad.toml"
    bad.write_bytes(raw)
    err = _refused(bad)
    assert err.line == line and expected in err.message + " " + (err.hint or "")
    assert "UTF-8" in err.message + " " + (err.hint or "")


def test_an_encoding_error_column_counts_characters_as_an_editor_does(tmp_path):
    bad = tmp_path / "bad.toml"
    bad.write_bytes('y = "µ'.encode() + b'\xff"\n')  # µ is two bytes
    assert "byte 0xff at column 7" in _refused(bad).message


@pytest.mark.parametrize(("body", "line", "field", "hint"), [
    # a value with a unit written without its quotes (the parser said only "Expected
    # newline or end of document after a statement")
    ('[pins.sda]\nc_in = 6 pF\n', 2, "pins.sda.c_in", 'text goes in quotes: c_in = "6 pF"'),
    ('[pins.sda]\nv_il = 0.7 VDD\n', 2, "pins.sda.v_il", 'v_il = "0.7 VDD"'),
    ('[pins.sda]\noff_tolerant = yes\n', 2, "pins.sda.off_tolerant", "true or false"),
    # a key given twice: at the end of the file the parser named no line at all
    ('[pins.sda]\nc_in = "6 pF"\nc_in = "7 pF"', 3, "pins.sda.c_in", "also at line 2"),
    # each [[bus]] entry is a table of its own: only the key set twice in one is named
    ('[[bus]]\nid = "a"\n[[bus]]\nid = "b"\nid = "c"\n', 5, "bus.id", "also at line 4"),
    # a table given twice
    ('[pins.scl]\nx = 1\n[pins.scl]\ny = 2\n', 3, "pins.scl",
     "[pins.scl] is declared twice (also at line 1)"),
    # a string not closed, on its line and at the end of the file (no line named)
    ('title = "x\nid = "y"\n', 1, None, "closing quote"),
    ('id = "y"\ntitle = "x', 2, None, "closing quote"),
])
def test_a_toml_slip_is_named_with_its_line_field_and_fix(tmp_path, body, line, field, hint):
    from pinlib.core.tomlfile import load

    path = tmp_path / "slip.toml"
    path.write_text(body, encoding="utf-8")
    with pytest.raises(InputError) as info:
        load(path)
    err = info.value
    assert (err.line, err.field) == (line, field), str(err)
    assert err.hint and hint in err.hint, str(err)


@pytest.mark.parametrize("name, bare", [
    ("reset", True), ("gpio_out", True), ("a-b", True), ("RDY2", True),
    ("a b", False), ("p\u00efn", False), ("x.y", False), ('say "hi"', False), ("", False),
])
def test_toml_key_is_bare_only_where_toml_allows_and_reads_back(name, bare):
    # TOML v1.0.0, keys: a bare key holds ASCII letters, digits, "_" and "-" only
    # (published: TOML v1.0.0, "Keys"); any other name is quoted
    key = toml_key(name)
    assert (key == name) is bare
    assert tomllib.loads(f"{key} = 1") == {name: 1}
