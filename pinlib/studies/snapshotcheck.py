"""What a snapshot read back must hold before the change-list code touches it.

A snapshot (``<design>.result.json``) is a file anyone can edit, damage or replace.
:func:`check_snapshot` walks the parts of it that :func:`pinlib.studies.compare.compare`
reads -- the buses, their segments and lines, the couplings, each group's checks and
figures, the parts and their values, the library -- and raises an :class:`InputError`
naming the file and the first field that is not of the kind pinlib writes there
(``buses[0]``: an object; ``parts``: an object of objects; a value: a finite number,
text, yes/no or null, or for a part's value a short list of whole numbers).  What it
does not read is not looked at.  The walk is a loop over a fixed shape, so a deep or
huge snapshot costs time linear in its size and no recursion.
"""

from __future__ import annotations

import math

from pinlib.core import messages as M
from pinlib.core.errors import InputError

__all__ = ["check_snapshot"]

_SCALAR = "a number, text, yes/no or null"
_SETTING = "a number, text, yes/no, null or a short list of numbers (SPI modes)"
_TEXT = "text"
_NUMBER = "a finite number"
_OBJECT = "an object"
_LIST = "a list of objects"


def _is_scalar(x) -> bool:
    if isinstance(x, float):
        return math.isfinite(x)
    return x is None or isinstance(x, (str, bool, int))


def _is_number(x) -> bool:
    return isinstance(x, (int, float)) and not isinstance(x, bool) and math.isfinite(x)


def _is_text(x) -> bool:
    return isinstance(x, str)


def _is_setting(x) -> bool:
    """A part's value or setting: a scalar, or a list a part states (its SPI modes)."""
    return _is_scalar(x) or (isinstance(x, list) and len(x) <= 16 and all(
        isinstance(i, int) and not isinstance(i, bool) for i in x))


def _or_none(test):
    return lambda x: x is None or test(x)


class _Check:
    def __init__(self, path):
        self.file = str(path)

    def fail(self, field: str, value, expected: str):
        # a number that is none (NaN, ±Infinity, which JSON readers take) says so
        shown = (value if _is_scalar(value) else
                 f"{value} (not a finite number)" if isinstance(value, float) else
                 f"a {type(value).__name__}")
        raise InputError(M.SNAPSHOT_DAMAGED, file=self.file, field=field or None,
                         value=shown, expected=expected)

    def kind(self, obj: dict, key: str, where: str, test, expected: str):
        if key in obj and not test(obj[key]):
            self.fail(f"{where}.{key}" if where else key, obj[key], expected)

    def required(self, obj: dict, key: str, where: str, test, expected: str):
        if key not in obj:
            self.fail(f"{where}.{key}" if where else key, None, expected)
        self.kind(obj, key, where, test, expected)

    def items(self, obj: dict, key: str, where: str, *, none: bool = False) -> list:
        """(place, item) of the list at ``obj[key]`` (none when absent, or null where
        ``none``), each item an object."""
        name = f"{where}.{key}" if where else key
        value = obj.get(key)
        if key not in obj or (none and value is None):
            return []
        if not isinstance(value, list):
            self.fail(name, value, _LIST)
        for i, item in enumerate(value):
            if not isinstance(item, dict):
                self.fail(f"{name}[{i}]", item, _OBJECT)
        return [(f"{name}[{i}]", item) for i, item in enumerate(value)]

    def mapping(self, obj: dict, key: str, where: str, *, none: bool = True) -> dict:
        value = obj.get(key)
        if key not in obj or (none and value is None):
            return {}
        if not isinstance(value, dict):
            self.fail(f"{where}.{key}" if where else key, value, _OBJECT)
        return value


def check_snapshot(data, path) -> None:
    """Raise an InputError naming ``path`` and the field when ``data`` is not shaped as a
    snapshot (see the module docstring); return None when it is."""
    c = _Check(path)
    if not isinstance(data, dict):
        c.fail("", data, "a JSON object")
    for key in ("status", "created", "design"):
        c.kind(data, key, "", _is_scalar, _SCALAR)
    for where, bus in c.items(data, "buses", ""):
        # ids are text: the change list joins them into paths (bus/segment)
        c.required(bus, "id", where, _is_text, _TEXT)
        groups = [(where, bus)]
        for key, name in (("segments", "id"), ("lines", "signal")):
            for sub_where, sub in c.items(bus, key, where, none=True):
                c.kind(sub, name, sub_where, _is_text, _TEXT)
                groups.append((sub_where, sub))
        for gwhere, grp in groups:
            _check_group(c, grp, gwhere)
    for where, pair in c.items(data, "couplings", "", none=True):
        c.required(pair, "id", where, _is_text, _TEXT)  # victim<-aggressor
        _check_group(c, pair, where)
    _check_parts(c, data)
    library = c.mapping(data, "library", "")
    c.kind(library, "folders", "library",
           _or_none(lambda v: isinstance(v, list) and all(map(_is_text, v))), "a list of text")
    c.mapping(library, "overrides", "library")


def _check_group(c: _Check, grp: dict, where: str) -> None:
    for cwhere, check in c.items(grp, "checks", where):
        for key in ("id", "subject", "status", "value", "limit", "source", "message"):
            c.kind(check, key, cwhere, _is_scalar, _SCALAR)
        c.kind(check, "margin", cwhere, _or_none(_is_number), _NUMBER)
        c.kind(check, "unit", cwhere, _is_text, _TEXT)
    for name, fig in c.mapping(grp, "figures", where).items():
        fwhere = f"{where}.figures.{name}"
        if isinstance(fig, dict):
            c.kind(fig, "value", fwhere, _is_scalar, _SCALAR)
            c.kind(fig, "unit", fwhere, _is_text, _TEXT)
        elif not _is_scalar(fig):
            c.fail(fwhere, fig, f"{_OBJECT} or {_SCALAR}")


def _check_parts(c: _Check, data: dict) -> None:
    for ref, dev in c.mapping(data, "parts", "").items():
        where = f"parts.{ref}"
        if not isinstance(dev, dict):
            c.fail(where, dev, _OBJECT)
        for key in ("part", "file", "role"):
            c.kind(dev, key, where, _is_scalar, _SCALAR)
        c.kind(dev, "buses", where, lambda v: isinstance(v, list) and all(map(_is_text, v)),
               "a list of bus ids")
        c.kind(dev, "unconnected", where,
               lambda v: isinstance(v, list) and all(map(_is_text, v)), "a list of pin names")
        for key, entry in c.mapping(dev, "values", where, none=False).items():
            _check_value(c, entry, f"{where}.values.{key}")


def _check_value(c: _Check, entry, where: str) -> None:
    if not isinstance(entry, dict):
        c.fail(where, entry, _OBJECT)
    for k in ("scale", "offset"):
        c.kind(entry, k, where, _is_number, _NUMBER)
    if "scale" in entry:  # a threshold: scale VDD + offset
        if "offset" not in entry:
            c.fail(f"{where}.offset", None, _NUMBER)
        c.kind(entry, "value", where, _or_none(_is_number), _NUMBER)
        c.kind(entry, "vdd", where, _or_none(_is_number), _NUMBER)
        if entry["scale"] != 0 and entry.get("value") is not None \
                and entry.get("vdd") is None:
            c.fail(f"{where}.vdd", None, _NUMBER)
    else:
        c.kind(entry, "value", where, _is_setting, _SETTING)
    c.kind(entry, "unit", where, _is_text, _TEXT)
    c.kind(entry, "text", where, _or_none(_is_text), _TEXT)
    for k in ("basis", "source", "origin"):
        c.kind(entry, k, where, _is_scalar, _SCALAR)
