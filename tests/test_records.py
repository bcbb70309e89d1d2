"""pinlib.core.records: declarative records, each feature and each kind of problem, and
their JSON Schema (pinlib.core.recordschema)."""

from __future__ import annotations

import datetime as dt
import pickle
from pathlib import Path
from typing import Annotated, Literal

import pytest

from pinlib.core import messages as M
from pinlib.core.errors import UnitError
from pinlib.core.records import Convert, Record, RecordError, Rule, after, check, field
from pinlib.core.recordschema import record_json_schema


def _metres(raw, name):
    """A converter: '3 m' -> 3.0 (a stand-in for the unit parsers)."""
    if not isinstance(raw, str) or not raw.endswith(" m"):
        raise UnitError(M.NOT_A_QUANTITY, field=name, value=raw, expected="'3 m'")
    return float(raw[:-2])


Metres = Annotated[float, Convert(_metres)]


class Leaf(Record):
    """A leaf table."""

    size: Metres
    note: str | None = None


class Tree(Record):
    name: Annotated[str, Rule(pattern=r"[a-z]+", min_length=2, max_length=8)]
    kind: Literal["oak", "elm"] = "oak"
    count: Annotated[int, Rule(ge=0, le=3)] = 0
    ratio: float = 0.5
    alive: bool = True
    planted: dt.date | None = None
    leaf: Leaf | None = None
    leaves: tuple[Leaf, ...] = ()
    named: dict[str, Leaf] = field(default_factory=dict)
    sides: dict[Literal["a", "b"], Leaf] = field(default_factory=dict)
    either: str | Leaf = "none"
    from_: str = field(default="here", alias="from")


class Grown(Tree):
    """A subclass: ``count`` redeclared keeps its place, ``height`` comes last."""

    count: int = 1
    height: Metres


class Range(Record):
    low: float
    high: float

    @check("high")
    def _ordered(cls, v, earlier):
        if "low" in earlier and v < earlier["low"]:
            raise ValueError("high below low")
        return v

    @after
    def _not_equal(self):
        if self.low == self.high:
            raise ValueError("an empty range")


class Later(Record):
    """Its annotation names a class defined after it: resolved on first use only."""

    inner: Afterwards | None = None


class Afterwards(Record):
    x: int = 0


class Broken(Record):
    """An annotation that never resolves: harmless until the class is used."""

    value: NoSuchName  # noqa: F821


def _issues(cls, data):
    with pytest.raises(RecordError) as info:
        cls.validate(data)
    return [(i.loc, i.kind, i.problem) for i in info.value.issues]


def test_fields_in_declaration_order_parent_first_and_the_alias_as_key():
    names = list(Grown.fields())
    assert names[:3] == ["name", "kind", "count"] and names[-1] == "height"
    assert Grown.fields()["count"].default == 1
    assert Tree.fields()["from_"].key == "from"
    t = Tree.validate({"name": "ash", "from": "there"})
    assert t.from_ == "there"
    assert _issues(Tree, {"name": "ash", "from_": "x"}) == [(("from_",), "unknown",
                                                           M.UNKNOWN_FIELD)]


def test_defaults_shared_or_made_each_time():
    a, b = Tree.validate({"name": "ash"}), Tree.validate({"name": "yew"})
    assert (a.kind, a.count, a.ratio, a.alive, a.leaves) == ("oak", 0, 0.5, True, ())
    assert a.named == {} and a.named is not b.named  # default_factory


def test_nested_tables_arrays_and_named_tables():
    t = Tree.validate({"name": "ash", "leaf": {"size": "2 m"},
                       "leaves": [{"size": "1 m"}, {"size": "3 m", "note": "big"}],
                       "named": {"x": {"size": "4 m"}}, "sides": {"a": {"size": "5 m"}},
                       "either": {"size": "6 m"}})
    assert t.leaf == Leaf(size="2 m") and t.leaf.size == 2.0
    assert [x.size for x in t.leaves] == [1.0, 3.0] and isinstance(t.leaves, tuple)
    assert t.named["x"].size == 4.0 and t.sides["a"].size == 5.0 and t.either.size == 6.0
    assert Tree.validate({"name": "ash", "either": "text"}).either == "text"


def test_every_problem_of_a_table_is_collected_with_its_location():
    got = _issues(Tree, {"name": "Ash", "kind": "pine", "count": 7, "ratio": True,
                         "alive": "yes", "leaves": [{"size": "1 m"}, {"size": 3}],
                         "named": {"x": {}}, "sides": {"c": {"size": "1 m"}},
                         "colour": "red"})
    assert got == [
        (("colour",), "unknown", M.UNKNOWN_FIELD),
        (("name",), "rule", M.TEXT_WRONG_FORM),
        (("kind",), "literal", M.NOT_ALLOWED_VALUE),
        (("count",), "rule", M.OUTSIDE_RANGE),
        (("ratio",), "type", M.NOT_NUMBER),
        (("alive",), "type", M.NOT_TRUE_OR_FALSE),
        (("leaves", 1, "size"), "value", M.NOT_A_QUANTITY),
        (("named", "x", "size"), "missing", M.MISSING_FIELD),
        (("sides", "c"), "literal", M.NOT_ALLOWED_VALUE),
    ]


def test_a_converters_error_keeps_its_expected_value():
    with pytest.raises(RecordError) as info:
        Leaf.validate({"size": 3})
    issue = info.value.issues[0]
    assert issue.error.expected == "'3 m'" and issue.error.field == "size"
    assert issue.value == 3


def test_kinds_are_toml_s_own_strictly():
    ok = Tree.validate({"name": "ash", "count": 2, "ratio": 1, "alive": False,
                        "planted": dt.date(2026, 5, 1)})
    assert ok.ratio == 1.0 and type(ok.ratio) is float
    assert Tree.validate({"name": "ash", "planted": "2026-05-01"}).planted == dt.date(2026, 5, 1)
    refused = {
        "count": (2.0, M.NOT_WHOLE_NUMBER), "ratio": (float("nan"), M.NOT_FINITE),
        "alive": (1, M.NOT_TRUE_OR_FALSE), "name": (5, M.NOT_TEXT),
        "planted": ("May", M.NOT_DATE), "leaf": ("big", M.NOT_TABLE),
        "leaves": ({"size": "1 m"}, M.NOT_ARRAY), "either": (5, M.NOT_TEXT_OR_TABLE),
    }
    for key, (value, problem) in refused.items():
        assert _issues(Tree, {"name": "ash", key: value}) == [((key,), "type", problem)], key
    assert _issues(Tree, {"name": "ash", "count": True})[0][2] == M.NOT_WHOLE_NUMBER
    assert _issues(Tree, {"name": "ash", "ratio": float("inf")})[0][2] == M.NOT_FINITE
    stamp = dt.datetime(2026, 5, 1, 12, 0)
    assert _issues(Tree, {"name": "ash", "planted": stamp})[0][2] == M.NOT_DATE
    assert _issues(Tree, ["not", "a", "table"]) == [((), "type", M.NOT_TABLE)]


def test_text_rules():
    assert _issues(Tree, {"name": "a"})[0][2] == "text shorter than 2 characters"
    assert _issues(Tree, {"name": "a" * 9})[0][2] == M.TEXT_TOO_LONG.format(n=8)
    assert _issues(Tree, {"name": "ash\n"})[0][2] == M.TEXT_WRONG_FORM  # the whole text


def test_a_union_names_the_problems_of_the_table_it_was_meant_as():
    assert _issues(Tree, {"name": "ash", "either": {"size": "1 m", "x": 1}}) == [
        (("either", "x"), "unknown", M.UNKNOWN_FIELD)]


def test_field_checks_see_earlier_fields_and_record_checks_run_last():
    assert Range.validate({"low": 1, "high": 2}).high == 2.0
    assert _issues(Range, {"low": 3, "high": 2}) == [(("high",), "value", "high below low")]
    assert _issues(Range, {"low": 2, "high": 2}) == [((), "value", "an empty range")]
    # a record check does not run on a record whose fields failed
    assert _issues(Range, {"low": "x", "high": "x"}) == [
        (("low",), "type", M.NOT_NUMBER), (("high",), "type", M.NOT_NUMBER)]


def test_hints_resolve_on_first_use_not_at_class_creation():
    assert Later.__dict__["__record_compiled__"] is None  # Afterwards came after it
    assert Later.validate({"inner": {"x": 2}}).inner.x == 2
    assert Later.__dict__["__record_compiled__"] is not None
    assert Broken.__dict__["__record_compiled__"] is None  # created without a complaint
    with pytest.raises(NameError):
        Broken.validate({"value": 1})


def test_frozen_copied_compared_and_pickled():
    t = Tree.validate({"name": "ash", "leaf": {"size": "2 m"}})
    with pytest.raises(AttributeError):
        t.name = "elm"
    with pytest.raises(AttributeError):
        del t.name
    u = t.copy(name="elm")
    assert (t.name, u.name, u.leaf) == ("ash", "elm", t.leaf) and type(u) is Tree
    assert u != t and t.copy() == t and t != "ash"
    assert hash(Leaf(size="1 m")) == hash(Leaf(size="1 m"))
    assert pickle.loads(pickle.dumps(t)) == t
    assert "name='ash'" in repr(t)


def test_keyword_construction_is_checked_like_a_table():
    assert Leaf(size="2 m").size == 2.0
    with pytest.raises(RecordError):
        Leaf(size="2 m", colour="red")
    leaf = Leaf(size="1 m")
    assert Tree(name="ash", leaf=leaf).leaf is leaf  # a record given as itself


def test_json_schema_from_the_declaration():
    schema = record_json_schema(Tree)
    props = schema["properties"]
    assert schema["additionalProperties"] is False and schema["required"] == ["name"]
    assert props["name"] == {"maxLength": 8, "minLength": 2, "pattern": "[a-z]+",
                             "title": "Name", "type": "string"}
    assert props["kind"] == {"default": "oak", "enum": ["oak", "elm"], "title": "Kind",
                             "type": "string"}
    assert props["count"]["minimum"] == 0 and props["count"]["maximum"] == 3
    assert props["planted"]["anyOf"] == [{"format": "date", "type": "string"},
                                         {"type": "null"}]
    assert props["leaves"]["items"] == {"$ref": "#/$defs/Leaf"}
    assert props["sides"]["propertyNames"] == {"enum": ["a", "b"]}
    assert props["either"]["anyOf"] == [{"type": "string"}, {"$ref": "#/$defs/Leaf"}]
    assert "from" in props and "from_" not in props
    assert schema["$defs"]["Leaf"]["description"] == "A leaf table."
    assert schema["$defs"]["Leaf"]["required"] == ["size"]


def test_the_formats_resolve_their_hints_only_when_first_used():
    # importing the formats builds their classes without resolving a hint (the point of
    # the records: class creation is cheap); the defaults made at import (Provenance(),
    # Timing(), RawBoard()) resolve their own classes only
    import subprocess
    import sys

    code = (
        "from pinlib.library import schema\n"
        "from pinlib.model.design import raw\n"
        "done = sorted(c.__name__ for m in (schema, raw) for c in vars(m).values()\n"
        "              if isinstance(c, type) and c.__dict__.get('__record_compiled__'))\n"
        "print(','.join(done))\n"
    )
    root = Path(__file__).resolve().parents[1]
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True, timeout=60, cwd=root).stdout.strip()
    assert out.split(",") == ["Provenance", "RawBoard", "Timing"]
