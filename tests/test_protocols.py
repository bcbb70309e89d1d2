"""The protocol table (pinlib.core.protocols) is the one place that says which protocols
exist, their family, their engine and the pin function of each signal."""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

from pinlib.core import protocols as P
from pinlib.engines import dispatch
from pinlib.library.loader import load_library

ROOT = Path(__file__).resolve().parents[1]



@pytest.mark.parametrize("name", P.NAMES)
def test_each_protocol_reaches_the_engine_it_names(name):
    module = dispatch.engine(name)
    assert module.__name__ == P.protocol(name).engine == dispatch.ENGINES[name]
    assert callable(module.evaluate_bus)


def test_the_families_split_the_protocols():
    assert P.OPEN_DRAIN_PROTOCOLS == ("i2c", "smbus")  # the design format, docs/formats
    assert P.PUSH_PULL_PROTOCOLS == ("spi", "gpio")
    assert [P.is_open_drain(n) for n in ("i2c", "spi", "nothing")] == [True, False, False]


def test_a_signal_names_one_pin_function_wherever_it_appears():
    for p in P.PROTOCOLS.values():
        for sig, fn in p.signals:
            assert P.SIGNAL_FUNCTION[sig] == fn == p.function(sig)
    assert P.protocol("gpio").function("led") == "gpio"  # a GPIO line is named freely
    assert P.protocol("spi").function("led") is None
    assert P.protocol("smbus").functions == ("i2c-sda", "i2c-scl")


def test_every_pin_function_of_the_built_in_library_is_in_the_table():
    library = load_library()
    used = {fn for part in library.parts.values() for fn in part.functions()}
    assert used <= set(P.PIN_FUNCTIONS)
    assert used == set(P.PIN_FUNCTIONS)  # and each function has a part that serves it


def _literals(path: Path):
    """(line, what) for each tuple/list/set of two or more protocol names and each pin
    function other than "gpio" (also a protocol's name) written as a string."""
    names, functions = set(P.NAMES), set(P.PIN_FUNCTIONS) - {"gpio"}
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, (ast.Tuple, ast.List, ast.Set)):
            got = [e.value for e in node.elts if isinstance(e, ast.Constant)]
            if len(set(got) & names) >= 2:
                yield node.lineno, f"protocol names {got}"
        elif isinstance(node, ast.Constant) and node.value in functions:
            yield node.lineno, f"pin function {node.value!r}"


def test_protocol_names_and_pin_functions_are_written_only_in_the_table():
    found = []
    for path in sorted((ROOT / "pinlib").rglob("*.py")):
        rel = path.relative_to(ROOT).as_posix()
        if rel == "pinlib/core/protocols.py":
            continue
        found += [f"{rel}:{line}: {what}" for line, what in _literals(path)]
    assert found == []


def test_the_scan_sees_a_tuple_of_protocols(tmp_path):
    path = tmp_path / "m.py"
    path.write_text('if bus.protocol in ("i2c", "smbus"):\n    pin = "i2c-sda"\n')
    assert [line for line, _ in _literals(path)] == [1, 2]
