"""Value classes: dataclasses whose ``__repr__``, ``__eq__`` and ``__hash__`` are shared.

:func:`value_class` is :func:`dataclasses.dataclass` (the same fields, ``__init__``,
``frozen``, :func:`dataclasses.fields`, :func:`dataclasses.replace`, ``__match_args__``)
with one difference: the representation, the equality and, for a frozen class, the hash
are three functions every class shares, each reading the class's fields through a getter
made once when the class is made, instead of methods written for each class.

Why: in Python 3.11 the dataclass decorator writes every method it adds as source text
and compiles it with one ``exec``, about 0.05-0.1 ms each; ``pinlib check`` makes about
70 classes, and their ``__repr__`` and ``__eq__`` alone cost about a third of the 28 ms
their creation took (measured: 28 -> 18 ms, 2026-12-03).  The methods behave as the
generated ones (Python 3.11's ``dataclasses``): the same text
(``Name(field=value, ...)``, the qualified name, fields with ``repr=False`` left out,
``...`` where an object contains itself), equality only between instances of the same
class over the fields that compare, and for a frozen class the hash of the same tuple
(``field(hash=...)`` honoured); a class that is not frozen is unhashable.  A method the
class body defines itself is kept, as the decorator keeps it.
``tests/test_valueclass.py`` holds them to the generated methods field for field, and
``tests/test_layers.py`` keeps ``@dataclass`` out of the package so that there is one way
to declare a value class.
"""

from __future__ import annotations

import dataclasses
from _thread import get_ident
from operator import attrgetter

__all__ = ["value_class"]

_MISSING = object()
_in_repr: set = set()  # (id, thread) of the objects being represented: a cycle shows "..."


def value_class(cls=None, /, *, frozen: bool = False):
    """Declare a value class (see the module notes); ``@value_class`` or
    ``@value_class(frozen=True)``."""
    def wrap(c):
        return _finish(c, frozen)

    return wrap if cls is None else wrap(cls)


def _finish(cls, frozen: bool):
    body = cls.__dict__
    own_repr, own_eq = "__repr__" in body, "__eq__" in body
    # a body that defines __eq__ gets __hash__ = None from Python: not a hash of its own
    body_hash = body.get("__hash__", _MISSING)
    own_hash = not (body_hash is _MISSING or (body_hash is None and own_eq))
    cls = dataclasses.dataclass(cls, repr=False, eq=False, frozen=frozen)
    fields = dataclasses.fields(cls)
    cls._value_repr = tuple(f.name for f in fields if f.repr)
    cls._value_key = _getter([f.name for f in fields if f.compare])
    if not own_repr:
        cls.__repr__ = _repr
    if not own_eq:
        cls.__eq__ = _eq
    if not own_hash:
        if frozen:
            cls._value_hash = _getter([f.name for f in fields
                                       if (f.compare if f.hash is None else f.hash)])
            cls.__hash__ = _hash
        else:
            cls.__hash__ = None
    return cls


def _getter(names: list[str]):
    """A function giving the tuple of the named attributes of an object."""
    if len(names) > 1:
        return attrgetter(*names)
    if names:
        one = attrgetter(names[0])
        return lambda obj: (one(obj),)
    return lambda obj: ()


def _repr(self) -> str:
    key = (id(self), get_ident())
    if key in _in_repr:
        return "..."
    _in_repr.add(key)
    try:
        inner = ", ".join(f"{name}={getattr(self, name)!r}" for name in self._value_repr)
    finally:
        _in_repr.discard(key)
    return f"{self.__class__.__qualname__}({inner})"


def _eq(self, other):
    if other.__class__ is self.__class__:
        key = self.__class__._value_key
        return key(self) == key(other)
    return NotImplemented


def _hash(self) -> int:
    return hash(self.__class__._value_hash(self))
