"""pinlib.core.valueclass: the shared methods behave as Python's generated ones.

Each case declares the same class twice, once with the standard library's
``dataclasses.dataclass`` (the reference) and once with ``value_class``, and compares
what a user of the class meets: repr, equality, hash, immutability, replace and the
field list.
"""

from __future__ import annotations

import ast
import dataclasses
import pickle
from dataclasses import field
from pathlib import Path

import pytest

from pinlib.core.valueclass import value_class

PACKAGE = Path(__file__).resolve().parents[1] / "pinlib"


def _pair(frozen: bool):
    """The same declaration made by the standard library and by value_class."""
    def body():
        return {
            "__annotations__": {"name": "str", "value": "float", "tags": "tuple",
                                "note": "object", "cache": "object"},
            "tags": (),
            "note": field(default=None, compare=False),
            "cache": field(default=None, repr=False, compare=False),
        }

    ref = dataclasses.dataclass(type("Thing", (), body()), frozen=frozen)
    ours = value_class(type("Thing", (), body()), frozen=frozen)
    return ref, ours


@pytest.mark.parametrize("frozen", [False, True])
def test_repr_is_the_generated_text(frozen):
    ref, ours = _pair(frozen)
    args = ("a'b", 1.5, (1, "x"), [2.0], {"hidden": 1})
    assert repr(ours(*args)) == repr(ref(*args))
    assert repr(ours("n", float("nan"))) == repr(ref("n", float("nan")))
    assert "cache" not in repr(ours(*args))  # repr=False leaves it out


def test_an_object_containing_itself_shows_dots_as_the_generated_repr_does():
    ref, ours = _pair(False)
    a, b = ref("a", 1.0), ours("a", 1.0)
    a.note, b.note = [a], [b]
    assert repr(b) == repr(a) == "Thing(name='a', value=1.0, tags=(), note=[...])"


@pytest.mark.parametrize("frozen", [False, True])
def test_equality_over_the_compared_fields_and_only_within_the_class(frozen):
    ref, ours = _pair(frozen)
    for cls in (ref, ours):
        assert cls("a", 1.0, note=1) == cls("a", 1.0, note=2)  # compare=False: ignored
        assert cls("a", 1.0) != cls("a", 2.0)
        assert cls("a", 1.0) != ("a", 1.0, ())
    nan = float("nan")  # tuples compare by identity first, then by ==
    for a, b in ((nan, nan), (nan, float("nan"))):
        assert (ours("a", a) == ours("a", b)) is (ref("a", a) == ref("a", b))
    sub = type("Sub", (ours,), {})
    assert ours("a", 1.0) != sub("a", 1.0)  # another class: not equal, as generated
    assert (ref("a", 1.0) == ref("a", 1.0)) is (ours("a", 1.0) == ours("a", 1.0)) is True


def test_a_frozen_class_hashes_the_generated_tuple_and_refuses_changes():
    ref, ours = _pair(True)
    args = ("a", 1.5, (1, 2), "n", "c")
    assert hash(ours(*args)) == hash(ref(*args))
    assert len({ours("a", 1.0, note=1), ours("a", 1.0, note=2)}) == 1
    for cls in (ref, ours):
        obj = cls(*args)
        with pytest.raises(dataclasses.FrozenInstanceError):
            obj.value = 2.0
        assert dataclasses.replace(obj, value=3.0).value == 3.0
        assert [f.name for f in dataclasses.fields(obj)] == [
            "name", "value", "tags", "note", "cache"]


def test_a_class_that_is_not_frozen_is_unhashable_as_generated():
    ref, ours = _pair(False)
    assert ref.__hash__ is None and ours.__hash__ is None
    with pytest.raises(TypeError):
        hash(ours("a", 1.0))


def test_field_hash_and_one_field_classes():
    @value_class(frozen=True)
    class One:
        x: int

    @dataclasses.dataclass(frozen=True)
    class OneRef:
        x: int

    @value_class(frozen=True)
    class NoFields:
        pass

    @value_class(frozen=True)
    class Hashed:
        x: int
        y: int = field(default=0, hash=False)

    assert hash(One(3)) == hash(OneRef(3)) and One(3) == One(3) and One(3) != One(4)
    assert NoFields() == NoFields() and hash(NoFields()) == hash(())
    assert repr(NoFields()) == "test_field_hash_and_one_field_classes.<locals>.NoFields()"
    assert hash(Hashed(1, 5)) == hash((1,)) and Hashed(1, 5) != Hashed(1, 6)


def test_methods_of_the_class_body_are_kept():
    @value_class(frozen=True)
    class Own:
        x: int

        def __repr__(self):
            return "own"

        def __eq__(self, other):
            return True

        def __hash__(self):
            return 7

    @value_class
    class OwnEqOnly:
        x: int

        def __eq__(self, other):
            return True

    assert repr(Own(1)) == "own" and Own(1) == 2 and hash(Own(1)) == 7
    assert OwnEqOnly.__hash__ is None  # as Python and the generated methods leave it


def test_instances_pickle_and_subclasses_inherit():
    ref, ours = _pair(True)
    obj = ours("a", 1.0, (2,))
    globals()["Thing"] = ours  # pickle finds a class by its module and name
    try:
        ours.__module__, ours.__qualname__ = __name__, "Thing"
        assert pickle.loads(pickle.dumps(obj)) == obj
    finally:
        del globals()["Thing"]

    @value_class
    class Base:
        a: int

    @value_class
    class Child(Base):
        b: int = 0

    assert repr(Child(1, 2)).endswith("<locals>.Child(a=1, b=2)")
    assert Child(1, 2) != Base(1)


def test_the_package_declares_its_value_classes_one_way():
    """No ``@dataclass`` in pinlib: every value class is a ``value_class``."""
    found = []
    for path in sorted(PACKAGE.rglob("*.py")):
        tree = ast.parse(path.read_text(encoding="utf-8"))
        for node in ast.walk(tree):
            if isinstance(node, ast.ClassDef):
                for dec in node.decorator_list:
                    target = dec.func if isinstance(dec, ast.Call) else dec
                    name = getattr(target, "id", None) or getattr(target, "attr", None)
                    if name == "dataclass":
                        found.append(f"{path.relative_to(PACKAGE)}:{node.lineno} {node.name}")
    assert found == []
    assert len(list(PACKAGE.rglob("*.py"))) > 100  # the walk saw the package
