"""Declarative records: pinlib's file formats as classes, checked from one declaration.

A format is declared once, as a subclass of :class:`Record` whose class annotations are
its fields::

    class Supply(Record):
        min: Voltage
        max: Voltage
        typ: Voltage | None = None

From that declaration come the checking of a file's table (:meth:`Record.validate`),
the error locations, the introspection the library's tools need (:meth:`Record.fields`)
and the JSON Schema (:mod:`pinlib.core.recordschema`).

Class creation is cheap: the annotations (strings, the modules use ``from __future__
import annotations``) are resolved and turned into checking functions when a class is
first used, and kept on the class.

What a field may be: ``str``, ``bool``, ``int``, ``float``, ``datetime.date``, a
``Literal[...]``, another record (a table), ``tuple[X, ...]`` (an array),
``dict[str, X]`` or ``dict[Literal[...], X]`` (a table of named items), ``X | None``,
``str | SomeRecord``, any other class (an instance of it), and ``Annotated[X, ...]`` with
:class:`Convert` (a function turning what the file says into X, run first), :class:`Rule`
(a pattern, lengths, bounds, a description) and :class:`WrittenAs` (what the JSON Schema
says the file writes).  A default is the class attribute (shared: defaults are immutable)
or :func:`field` (``default_factory``, ``alias`` for a key that is a Python keyword).

The kinds follow TOML's own types, strictly: a ``bool`` field takes only true or false
(not ``"yes"``, not 1), an ``int`` field only a whole number (not ``2.0``, not true),
a ``float`` field an integer or a finite float (not true, not inf or nan), a ``str`` field
only text, a ``date`` field a TOML date or the text ``YYYY-MM-DD``.

Every problem of a table is collected (not only the first) as an :class:`Issue`:
where (a tuple of keys and indexes), what kind, the problem text, the value given.
:class:`RecordError` carries them; the loaders turn them into pinlib errors naming the
file and line.  Records are frozen: set a field with :meth:`Record.copy`.
"""

from __future__ import annotations

import datetime as _dt
import re
import types
import typing

from pinlib.core import messages as M
from pinlib.core.errors import PinlibError
from pinlib.core.labels import and_list, counted

__all__ = ["Record", "RecordError", "Issue", "Involving", "Field", "Convert", "Rule", "WrittenAs",
           "field", "after", "check"]

_MISSING = object()
_FAIL = object()  # what a checking function returns after recording its issue


class Issue:
    """One problem of a table: ``loc`` (keys and indexes from the root), ``kind``
    (``missing``, ``unknown``, ``literal``, ``type``, ``rule``, ``value``), the problem
    text, the value given (None for a missing key), what was expected, and the pinlib
    error a converter raised (its own expected value and hint), if any.  ``related``: the
    places of the fields a check of several fields weighed (:class:`Involving`), where a
    caller that merged the table from several files may lay the blame instead.  (A plain
    class: a dataclass costs a millisecond of every start.)"""

    __slots__ = ("loc", "kind", "problem", "value", "expected", "error", "related")

    def __init__(self, loc: tuple, kind: str, problem: str, value: object = None,
                 expected: str | None = None, error: PinlibError | None = None,
                 related: tuple = ()):
        self.loc, self.kind, self.problem = loc, kind, problem
        self.value, self.expected, self.error = value, expected, error
        self.related = related

    def __repr__(self):
        return f"Issue({self.loc!r}, {self.kind!r}, {self.problem!r}, {self.value!r})"


class RecordError(ValueError):
    """A table that does not fit its record: every :class:`Issue` found."""

    def __init__(self, issues: list[Issue]):
        self.issues = issues
        super().__init__("; ".join(f"{'.'.join(map(str, i.loc)) or '(top)'}: {i.problem}"
                                   for i in issues[:5]))


class Involving(ValueError):
    """A check's refusal of a combination of fields: ``fields``, the keys of its record that
    it weighed (``v_il`` and ``v_ih``).  The issue stays at the check's place; its
    ``related`` names those fields, so that a loader which merged the record from a
    class and the parts that extend it can name the field the latest file wrote (the one
    that made the combination wrong), not the file that first wrote the table."""

    def __init__(self, problem: str, fields: tuple[str, ...]):
        super().__init__(problem)
        self.fields = tuple(fields)


class Convert:
    """Annotated metadata: ``func(value, field_name)`` turns what a file says into the
    field's type before the type is checked; it raises a PinlibError or ValueError."""

    __slots__ = ("func",)

    def __init__(self, func):
        self.func = func


class Rule:
    """Annotated metadata: a pattern (matched against the whole text), text lengths,
    bounds on a number (``ge``, ``le``), and for the JSON Schema only a description and
    an array's item counts (``min_items``, ``max_items``: the format's loader checks
    those itself, where it can say more than a count, e.g. a route's stretches)."""

    __slots__ = ("pattern", "min_length", "max_length", "ge", "le", "description",
                 "min_items", "max_items", "_re")

    def __init__(self, *, pattern=None, min_length=None, max_length=None, ge=None, le=None,
                 description=None, min_items=None, max_items=None):
        self.pattern, self.min_length, self.max_length = pattern, min_length, max_length
        self.ge, self.le, self.description = ge, le, description
        self.min_items, self.max_items = min_items, max_items
        self._re = None

    def problem(self, v):
        """(problem, expected) when ``v`` breaks the rule, else None."""
        if isinstance(v, str):
            if self.pattern is not None:
                if self._re is None:
                    self._re = re.compile(self.pattern)
                if not self._re.fullmatch(v):
                    return M.TEXT_WRONG_FORM, f"text matching {self.pattern}"
            if self.min_length is not None and len(v) < self.min_length:
                return counted(M.TEXT_TOO_SHORT, self.min_length), None
            if self.max_length is not None and len(v) > self.max_length:
                return M.TEXT_TOO_LONG.format(n=self.max_length), None
        elif isinstance(v, (int, float)) and (
                (self.ge is not None and not v >= self.ge)
                or (self.le is not None and not v <= self.le)):
            from pinlib.core.quantity import range_text

            return M.OUTSIDE_RANGE, range_text(self.ge, self.le)
        return None


class WrittenAs:
    """Annotated metadata: ``func()`` gives the JSON Schema of what a file writes for the
    field (a value with a unit is written as text, whatever it becomes)."""

    __slots__ = ("func",)

    def __init__(self, func):
        self.func = func


class _Default:
    __slots__ = ("default", "default_factory", "alias", "description")

    def __init__(self, default, default_factory, alias, description):
        self.default, self.default_factory = default, default_factory
        self.alias, self.description = alias, description


def field(default=_MISSING, *, default_factory=None, alias=None, description=None):
    """A field's default made at each validation (``default_factory``), its key in the
    file when that differs from its name (``alias``), or its description."""
    return _Default(default, default_factory, alias, description)


def after(func):
    """Mark a method ``check(self)`` run once every field of a record is valid; it raises
    ValueError (or a PinlibError) to refuse the record, and may set a derived field with
    ``object.__setattr__``."""
    func.__record_after__ = True
    return func


def check(*names):
    """Mark a function ``check(cls, value, earlier)`` run on the fields ``names`` once each
    is valid (``earlier``: the fields before it that are valid); it returns the value or
    raises ValueError (or a PinlibError)."""

    def mark(func):
        func.__record_check__ = names
        return func

    return mark


class Field:
    """A record's field as resolved: its name, key in the file, type (``annotation``,
    with its Annotated metadata), default and description."""

    __slots__ = ("name", "key", "annotation", "default", "default_factory", "description",
                 "convert", "checks")

    def __init__(self, name, key, annotation, default, default_factory, description):
        self.name, self.key, self.annotation = name, key, annotation
        self.default, self.default_factory = default, default_factory
        self.description = description
        self.convert = None
        self.checks: list = []

    @property
    def required(self) -> bool:
        return self.default is _MISSING and self.default_factory is None

    @property
    def metadata(self) -> list:
        """The Annotated metadata of the field's type (outside any ``| None``)."""
        out, tp = [], self.annotation
        for arg in (tp, *_union_args(tp)):
            if typing.get_origin(arg) is typing.Annotated:
                out += list(arg.__metadata__)
        return out

    def __repr__(self):
        return f"Field({self.name!r}, {self.annotation!r})"


def _union_args(tp) -> tuple:
    return typing.get_args(tp) if typing.get_origin(tp) in (typing.Union, types.UnionType) \
        else ()


class _Compiled:
    __slots__ = ("fields", "by_key", "afters")

    def __init__(self, fields, afters):
        self.fields = fields
        self.by_key = {f.key: f for f in fields.values()}
        self.afters = afters


class Record:
    """Base of pinlib's declarative records (see the module's docstring).

    Instances are frozen and read as plain attributes; build them with
    :meth:`validate` (a file's table) or ``Cls(**fields)`` (the same checks).
    """

    __record_own__: tuple = ()

    def __init_subclass__(cls, **kwargs):
        super().__init_subclass__(**kwargs)
        own = []
        for name in cls.__dict__.get("__annotations__", {}):
            if name.startswith("_"):
                continue
            value = cls.__dict__.get(name, _MISSING)
            if value is not _MISSING:
                delattr(cls, name)  # the instance's own value is read, never the default
            own.append((name, value))
        cls.__record_own__ = tuple(own)
        cls.__record_compiled__ = None

    # ------------------------------------------------------------------ construction
    def __init__(self, **values):
        issues: list[Issue] = []
        made = type(self)._check(values, (), issues)
        if made is _FAIL:
            raise RecordError(issues)
        object.__setattr__(self, "__dict__", made.__dict__)

    @classmethod
    def validate(cls, data):
        """The record of a file's table; every problem raises one :class:`RecordError`."""
        issues: list[Issue] = []
        made = cls._check(data, (), issues)
        if made is _FAIL:
            raise RecordError(issues)
        return made

    @classmethod
    def fields(cls) -> dict[str, Field]:
        """The fields by name, in the order of the declaration (a parent's first)."""
        return cls._compiled().fields

    def copy(self, **changes):
        """A copy with ``changes`` set (not checked again: the caller's values are taken
        as they are)."""
        made = object.__new__(type(self))
        object.__setattr__(made, "__dict__", {**self.__dict__, **changes})
        return made

    def __setattr__(self, name, value):
        raise AttributeError(M.RECORD_FROZEN.format(record=type(self).__name__, name=name))

    def __delattr__(self, name):
        raise AttributeError(M.RECORD_FROZEN.format(record=type(self).__name__, name=name))

    def __eq__(self, other):
        if type(other) is not type(self):
            return NotImplemented
        return self.__dict__ == other.__dict__

    def __hash__(self):
        return hash((type(self), tuple(self.__dict__.values())))

    def __repr__(self):
        body = ", ".join(f"{k}={v!r}" for k, v in self.__dict__.items())
        return f"{type(self).__name__}({body})"

    # ------------------------------------------------------------------ the checking
    @classmethod
    def _compiled(cls) -> _Compiled:
        done = cls.__dict__.get("__record_compiled__")
        if done is None:
            done = _compile_record(cls)
            cls.__record_compiled__ = done
        return done

    @classmethod
    def _check(cls, data, loc, issues):
        if isinstance(data, cls):
            return data
        if not isinstance(data, dict):
            issues.append(Issue(loc, "type", M.NOT_TABLE, data))
            return _FAIL
        spec = cls.__dict__.get("__record_compiled__") or cls._compiled()
        start = len(issues)
        by_key = spec.by_key
        for key in data:
            if key not in by_key:
                issues.append(Issue(loc + (key,), "unknown", M.UNKNOWN_FIELD, data[key]))
        values = {}
        for f in spec.fields.values():
            raw = data.get(f.key, _MISSING)
            if raw is _MISSING:
                if f.default_factory is not None:
                    values[f.name] = f.default_factory()
                elif f.default is _MISSING:
                    issues.append(Issue(loc + (f.key,), "missing", M.MISSING_FIELD,
                                        expected=getattr(f.convert, "expected", None)))
                else:
                    values[f.name] = f.default
                continue
            v = f.convert(raw, loc + (f.key,), issues)
            if v is _FAIL:
                continue
            for fn in f.checks:
                v = _guarded(lambda fn=fn, v=v: fn(cls, v, values), loc + (f.key,), raw,
                             issues, table=loc)
                if v is _FAIL:
                    break
            if v is not _FAIL:
                values[f.name] = v
        if len(issues) > start:
            return _FAIL
        made = object.__new__(cls)
        object.__setattr__(made, "__dict__", values)
        for fn in spec.afters:
            if _guarded(lambda fn=fn: fn(made), loc, None, issues, table=loc) is _FAIL:
                return _FAIL
        return made


def _guarded(call, loc, raw, issues, table=None):
    """``call()``, with a PinlibError or ValueError it raises recorded as an issue (an
    :class:`Involving` with the places of its fields in the record at ``table``)."""
    try:
        return call()
    except Involving as err:
        related = tuple((loc if table is None else table) + (k,) for k in err.fields)
        issues.append(Issue(loc, "value", str(err), raw, related=related))
    except PinlibError as err:
        issues.append(Issue(loc, "value", err.problem, raw, err.expected, err))
    except RecordError as err:
        issues.extend(Issue(loc + i.loc, i.kind, i.problem, i.value, i.expected, i.error)
                      for i in err.issues)
    except ValueError as err:
        issues.append(Issue(loc, "value", str(err), raw))
    return _FAIL


def _compile_record(cls) -> _Compiled:
    """Resolve ``cls``'s annotations and build the checking function of each field."""
    hints = typing.get_type_hints(cls, include_extras=True)
    fields: dict[str, Field] = {}
    for klass in reversed(cls.__mro__):
        for name, value in klass.__dict__.get("__record_own__", ()):
            factory = alias = description = None
            default = value
            if isinstance(value, _Default):
                default, factory = value.default, value.default_factory
                alias, description = value.alias, value.description
            fields[name] = Field(name, alias or name, hints[name], default, factory,
                                 description)
    afters = []
    for klass in reversed(cls.__mro__):
        for attr in klass.__dict__.values():
            func = getattr(attr, "__func__", attr)
            if getattr(func, "__record_after__", False) and func not in afters:
                afters.append(func)
            for name in getattr(func, "__record_check__", ()):
                fields[name].checks.append(func)
    for f in fields.values():
        f.convert = _checker(f.annotation, f.name)
    return _Compiled(fields, tuple(afters))


# ---------------------------------------------------------------------- the kinds
def _of_kind(kinds, problem, expected=None):
    """A check that the value is one of ``kinds`` (an exact-type test: bool is not int)."""

    def conv(v, loc, issues):
        if type(v) in kinds:
            return v
        issues.append(Issue(loc, "type", problem, v, expected))
        return _FAIL

    conv.problem = problem
    return conv


def _float(v, loc, issues):
    t = type(v)
    if t is float:
        if v - v == 0.0:  # finite
            return v
        issues.append(Issue(loc, "type", M.NOT_FINITE, v))
        return _FAIL
    if t is int:
        return float(v)
    issues.append(Issue(loc, "type", M.NOT_NUMBER, v, _NUMBER_EXPECTED))
    return _FAIL


#: What a number field expects: TOML quotes make a number text ('er = "4.2"').
_NUMBER_EXPECTED = "a plain number, without quotes or unit (e.g. 4.2)"


_float.problem = M.NOT_NUMBER


def _date(v, loc, issues):
    if type(v) is _dt.date:
        return v
    if isinstance(v, str) and re.fullmatch(r"\d{4}-\d{2}-\d{2}", v):
        try:
            return _dt.date.fromisoformat(v)
        except ValueError:
            pass
    issues.append(Issue(loc, "type", M.NOT_DATE, v))
    return _FAIL


_date.problem = M.NOT_DATE

_SIMPLE = {str: _of_kind({str}, M.NOT_TEXT), bool: _of_kind({bool}, M.NOT_TRUE_OR_FALSE),
           int: _of_kind({int}, M.NOT_WHOLE_NUMBER, "a whole number, without quotes (e.g. 3)"),
           float: _float, _dt.date: _date}


def _literal(allowed):
    kinds = {type(a) for a in allowed}
    choices = frozenset(allowed)
    expected = and_list((repr(a) for a in allowed), "or")

    def conv(v, loc, issues):
        if type(v) in kinds and v in choices:
            return v
        issues.append(Issue(loc, "literal", M.NOT_ALLOWED_VALUE, v, expected))
        return _FAIL

    conv.problem = M.NOT_ALLOWED_VALUE
    conv.expected = expected  # what a missing field of these choices is told to hold
    return conv


def _union(members, name):
    nullable = type(None) in members
    convs = [_checker(m, name) for m in members if m is not type(None)]
    if len(convs) == 1:
        only = convs[0]

        def optional(v, loc, issues):
            return None if v is None else only(v, loc, issues)

        optional.problem = getattr(only, "problem", None)
        return optional
    problems = {getattr(c, "problem", None) for c in convs}
    either = M.NOT_TEXT_OR_TABLE if problems == {M.NOT_TEXT, M.NOT_TABLE} else M.WRONG_KIND

    def conv(v, loc, issues):
        if v is None and nullable:
            return None
        tried = []
        for c in convs:
            own: list[Issue] = []
            got = c(v, loc, own)
            if got is not _FAIL:
                return got
            tried.append(own)
        # a member that failed deeper than its kind (a table with a wrong key) is the one
        # the file meant: its problems are the ones to name
        for own in tried:
            if any(i.kind != "type" or i.loc != loc for i in own):
                issues.extend(own)
                return _FAIL
        issues.append(Issue(loc, "type", either, v))
        return _FAIL

    conv.problem = either
    return conv


def _array(inner):
    def conv(v, loc, issues):
        if not isinstance(v, (list, tuple)):
            # one text where a list of texts belongs (library = "parts"): the list to write
            text = (isinstance(v, str) and getattr(inner, "problem", None) == M.NOT_TEXT
                    and len(v) <= 200 and v.isprintable())
            quoted = v.replace("\\", "\\\\").replace('"', '\\"') if text else ""
            expected = f'a list, e.g. ["{quoted}"]' if text else None
            issues.append(Issue(loc, "type", M.NOT_ARRAY, v, expected=expected))
            return _FAIL
        out = [inner(x, loc + (i,), issues) for i, x in enumerate(v)]
        return _FAIL if any(x is _FAIL for x in out) else tuple(out)

    conv.problem = M.NOT_ARRAY
    return conv


def _mapping(key_conv, inner):
    def conv(v, loc, issues):
        if not isinstance(v, dict):
            issues.append(Issue(loc, "type", M.NOT_TABLE, v))
            return _FAIL
        out, bad = {}, False
        for k, x in v.items():
            if key_conv is not None and key_conv(k, loc + (k,), issues) is _FAIL:
                bad = True
                continue
            got = inner(x, loc + (k,), issues)
            if got is _FAIL:
                bad = True
            else:
                out[k] = got
        return _FAIL if bad else out

    conv.problem = M.NOT_TABLE
    return conv


def _annotated(base, meta, name):
    inner = _checker(base, name)
    converters = [m.func for m in meta if isinstance(m, Convert)]
    rules = [m for m in meta if isinstance(m, Rule)
             and (m.pattern, m.min_length, m.max_length, m.ge, m.le) != (None,) * 5]

    def conv(v, loc, issues):
        for func in converters:
            v = _guarded(lambda func=func, v=v: func(v, name), loc, v, issues)
            if v is _FAIL:
                return v
        got = inner(v, loc, issues)
        if got is _FAIL:
            return got
        for rule in rules:
            broken = rule.problem(got)
            if broken:
                issues.append(Issue(loc, "rule", broken[0], v, broken[1]))
                return _FAIL
        return got

    conv.problem = None if converters else getattr(inner, "problem", None)
    return conv


def _instance(cls):
    def conv(v, loc, issues):
        if isinstance(v, cls):
            return v
        issues.append(Issue(loc, "type", M.WRONG_KIND, v))
        return _FAIL

    conv.problem = M.WRONG_KIND
    return conv


def _checker(tp, name):
    """The checking function ``conv(value, loc, issues)`` of the type ``tp``: the value
    as the record keeps it, or ``_FAIL`` after recording the issue."""
    origin = typing.get_origin(tp)
    if origin is typing.Annotated:
        return _annotated(typing.get_args(tp)[0], tp.__metadata__, name)
    if origin in (typing.Union, types.UnionType):
        return _union(typing.get_args(tp), name)
    if origin is typing.Literal:
        return _literal(typing.get_args(tp))
    if origin in (tuple, list):
        return _array(_checker(typing.get_args(tp)[0], name))
    if origin is dict:
        key, value = typing.get_args(tp)
        return _mapping(None if key is str else _checker(key, name), _checker(value, name))
    if tp in _SIMPLE:
        return _SIMPLE[tp]
    if isinstance(tp, type) and issubclass(tp, Record):
        def record(v, loc, issues):
            return tp._check(v, loc, issues)

        record.problem = M.NOT_TABLE
        return record
    if isinstance(tp, type):
        return _instance(tp)
    raise TypeError(M.RECORD_FIELD_TYPE.format(type=tp))
