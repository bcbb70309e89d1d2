"""The golden results (tests/golden/): every saved JSON output of the command is made
again and must agree, number for number, to 1e-12 relative.

The files were saved before the issue-12 redesign (tests/golden/README.md says how and
at which commit).  A difference means a number moved: either a bug came in, or a true
bug fix went out, and then the goldens are regenerated in that fix's own commit.
"""

from __future__ import annotations

import copy
import json

import pytest

from tests.golden.cases import CASES, HERE, ignored, run
from tests.golden.compare import differences


def _golden(case):
    return json.loads(case.file.read_text(encoding="utf-8"))


@pytest.mark.parametrize("case", CASES, ids=[f"{c.kind}/{c.name}" for c in CASES])
def test_output_equals_the_golden_file(case):
    expected = _golden(case)
    actual = run(case)
    diffs = differences(expected, actual, ignore=ignored(case))
    assert not diffs, f"{case.file.name}: {len(diffs)} differences:\n" + "\n".join(diffs)


def test_every_golden_file_belongs_to_a_case():
    files = {p for p in HERE.glob("*/*.json")}
    assert files == {c.file for c in CASES}


# --------------------------------------------------------------------------- the comparison


def _numbers(doc, path=()):
    """Every (path, number) of a document, in order."""
    if isinstance(doc, dict):
        for k, v in doc.items():
            yield from _numbers(v, path + (k,))
    elif isinstance(doc, list):
        for i, v in enumerate(doc):
            yield from _numbers(v, path + (i,))
    elif isinstance(doc, float) and doc != 0:
        yield path, doc


def _set(doc, path, value):
    for k in path[:-1]:
        doc = doc[k]
    doc[path[-1]] = value


def test_comparison_reports_a_moved_number():
    golden = _golden(CASES[0])
    assert differences(golden, copy.deepcopy(golden)) == []
    numbers = list(_numbers(golden["output"]))
    assert len(numbers) > 100
    path, x = numbers[len(numbers) // 2]
    moved = copy.deepcopy(golden)
    _set(moved["output"], path, x * (1 + 1e-10))      # 100 times the tolerance
    diffs = differences(golden, moved)
    assert len(diffs) == 1
    assert diffs[0].startswith("output/" + "/".join(map(str, path)) + ":")
    # a change within the tolerance (floating-point rounding) passes
    _set(moved["output"], path, x * (1 + 1e-14))
    assert differences(golden, moved) == []


def test_comparison_reports_structure_and_text():
    a = {"x": 1.0, "s": "pass", "l": [1, 2], "z": 0.0, "t": "2026-01-01", "f": True}
    assert differences(a, dict(a)) == []
    assert differences(a, {**a, "s": "fail"}) == ["s: expected 'pass', got 'fail'"]
    assert differences(a, {**a, "l": [1]}) == ["l: expected 2 items, got 1"]
    assert differences(a, {k: v for k, v in a.items() if k != "x"}) == ["x: missing"]
    assert differences(a, {**a, "new": 1}) == ["new: not in the golden file"]
    assert differences(a, {**a, "x": None}) == ["x: expected float 1.0, got NoneType None"]
    assert differences(a, {**a, "f": 1}) != []          # a yes/no is not a number
    # zero: a rounding residue below the absolute floor passes, a real value does not
    assert differences(a, {**a, "z": 1e-31}) == []
    assert differences(a, {**a, "z": 1e-20}) != []
    # ignored places are skipped, present or not, on both sides
    assert differences(a, {**a, "t": "2027-02-02"}, ignore=["t"]) == []
    assert differences(a, {k: v for k, v in a.items() if k != "t"}, ignore=["t"]) == []
    nested = {"swaps": [{"file": "/a", "ref": "U4"}]}
    assert differences(nested, {"swaps": [{"file": "/b", "ref": "U4"}]},
                       ignore=["swaps/*/file"]) == []
    assert differences(nested, {"swaps": [{"file": "/a", "ref": "U5"}]},
                       ignore=["swaps/*/file"]) != []


def test_differences_of_larger_numbers_are_held_to_the_scale_they_come_from():
    """A corner gain and a relative change: the tolerance of the margins or the ratio
    they are computed from (golden/compare.py, DERIVED), not of their own small size."""
    check = {"margin": 0.82, "corner": [{"parameter": "p", "end": "+", "gain": 4.86e-6}]}
    doc = {"output": {"corners": {"checks": [check]},
                      "figures": [{"old": 3.0, "new": 3.0006, "change": 2.0e-4}]}}

    def moved(gain=4.86e-6, change=2.0e-4, margin=0.82):
        out = copy.deepcopy(doc)
        c = out["output"]["corners"]["checks"][0]
        c["margin"], c["corner"][0]["gain"] = margin, gain
        out["output"]["figures"][0]["change"] = change
        return out

    # 2.2e-15 absolute (4.6e-10 of the gain): the rounding of margins of 0.82
    assert differences(doc, moved(gain=4.86e-6 + 2.2e-15)) == []
    assert differences(doc, moved(gain=4.86e-6 + 2.2e-15), derived=()) != []
    # 1e-11 of the margin is beyond it
    assert len(differences(doc, moved(gain=4.86e-6 + 0.82e-11))) == 1
    # a change: the rounding of new / old passes, a moved ratio does not
    assert differences(doc, moved(change=2.0e-4 + 3e-16)) == []
    assert len(differences(doc, moved(change=2.0e-4 + 2e-12))) == 1
    # the margin itself keeps the plain tolerance
    assert len(differences(doc, moved(margin=0.82 * (1 + 1e-10)))) == 1
