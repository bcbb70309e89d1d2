"""pinlib.core.tomlfile: line numbers for messages, and what reading and writing refuse.

Each test builds its bad file in ``tmp_path`` and runs the code a user runs; the inputs
are those that once ended in a hang or a traceback.
"""

from __future__ import annotations

import textwrap

from pinlib.core.errors import InputError
from pinlib.core.tomlfile import line_index, line_of


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
