"""The problems of a part that its first problems hide.

A part record is checked in stages: each field is read first, and the checks between
fields (``v_il`` above ``v_ih``, a fast corner on an open-drain pin) and of the part as a
whole run only on a table whose fields all read.  ``pinlib parts check`` promises every
problem of a file in one run, so for a part that does not load it checks again a copy
of the merged table without the fields already found wrong, round after round, and
lists what the later stages find in the fields that did read.  A later problem that the
taking out made (a field taken now missing, a check that weighs one) is not reported:
the file does not have it.  Where a later stage cannot run without a field that was
taken out (a field every part needs), it says so.
"""

from __future__ import annotations

import copy

from pinlib.core.errors import PinlibError
from pinlib.core.records import RecordError
from pinlib.library import loader
from pinlib.library.schema import Part

__all__ = ["MAX_ROUNDS", "further_problems"]

#: The rounds of checks after the first (each a stage deeper; a part has few stages).
MAX_ROUNDS = 8


def _drop(raw: dict, loc: tuple) -> None:
    """Take out what ``raw`` holds at ``loc`` (in a list, the list itself: its items'
    places would shift)."""
    table, key = raw, None
    for i, step in enumerate(loc):
        if not isinstance(table, dict) or step not in table:
            break
        if i == len(loc) - 1 or not isinstance(table[step], dict):
            key = step
            break
        table = table[step]
    if key is not None:
        del table[key]


def _wrong(issue) -> tuple[tuple, ...]:
    """The places to take out past an issue: a check between fields, those fields; a
    field that does not read, that field; none for a field that is missing, or for a
    check of a table as a whole (which names no field: taking out the table would
    raise problems of its own)."""
    if issue.related:
        return tuple(issue.related)
    if issue.kind == "missing" or issue.value is None or not issue.loc:
        return ()
    return (issue.loc,)


def _under(loc: tuple, places) -> bool:
    return any(loc[:len(p)] == p for p in places)


def _made_by_taking(issue, taken) -> bool:
    """Whether ``issue`` may be the work of the places taken out rather than of the file:
    one at or under a place taken (that field now missing), or a check that weighs a
    field taken out (a cable class's two of capacitance, delay and impedance, once the
    values a first problem named are gone)."""
    if _under(issue.loc, taken):
        return True
    return any(_under(tuple(loc), taken) for loc in issue.related or ())


def further_problems(pid: str, files: dict) -> tuple[list[PinlibError], bool]:
    """The problems of part ``pid`` beyond those it was refused with, and whether some
    checks still could not run (True: a field they need is one of the problems)."""
    try:
        merged, origin, used = loader._merged_raw(pid, files, [])
    except PinlibError:
        return [], False  # a problem of its extends chain: nothing to check further
    chain = {k: files[k] for k in used}
    table = copy.deepcopy(merged)
    seen: set = set()  # (loc, problem) of every issue found
    taken: list[tuple] = []  # the places taken out of the copy
    found: list[PinlibError] = []
    for round_ in range(MAX_ROUNDS + 1):
        try:
            Part.validate(table)
            return found, False
        except RecordError as exc:
            issues = exc.issues
        try:
            loader.validate_part(table, origin, chain)
            errors = [None] * len(issues)  # pragma: no cover - fails as above
        except loader._Many as many:
            errors = many.errors  # one error per issue, in the same order
        new = [(i, e) for i, e in zip(issues, errors, strict=True)
               if (i.loc, i.problem) not in seen and not _made_by_taking(i, taken)]
        if not new:
            return found, True  # the same problems again: a later stage needs them
        for issue, err in new:
            seen.add((issue.loc, issue.problem))
            if round_ > 0:
                found.append(err)
            for loc in _wrong(issue):
                _drop(table, loc)
                taken.append(loc)
    return found, True
