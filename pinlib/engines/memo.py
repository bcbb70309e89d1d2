"""Results computed once per run: a memo that lives only inside :func:`run_scope`.

One check of a design solves the same waveform several times (an SPI bus's lines are
analysed for the bus checks and again for the timing budget; a rise and a fall through
the same resistance are the same unit response).  Inside ``with run_scope():`` an
engine asks :func:`remember` for a value by an exact key of its inputs and gets the one
computed first; outside any scope every call computes.  The memo is dropped when the
outermost scope ends, so what it holds is bounded by one run (one design's solves),
never by a process's life.

Keys are exact: floats compare by value, so two solves share a result only when every
input is identical, and the numbers cannot differ from computing again.
"""

from __future__ import annotations

import itertools
from collections.abc import Callable, Hashable, Iterator
from contextlib import contextmanager
from contextvars import ContextVar
from typing import TypeVar

__all__ = ["run_scope", "remember", "active", "known", "keep", "held", "transient"]

T = TypeVar("T")

_MEMO: ContextVar[dict | None] = ContextVar("pinlib_run_memo", default=None)


@contextmanager
def run_scope() -> Iterator[dict]:
    """Share identical computations until the block ends (a nested scope joins the
    outer one)."""
    memo = _MEMO.get()
    if memo is not None:
        yield memo
        return
    memo = {}
    token = _MEMO.set(memo)
    try:
        yield memo
    finally:
        _MEMO.reset(token)
        memo.clear()


def active() -> bool:
    """True inside a :func:`run_scope`."""
    return _MEMO.get() is not None


def remember(key: Hashable, compute: Callable[[], T]) -> T:
    """``compute()``, or inside a scope the value stored under ``key`` the first time."""
    memo = _MEMO.get()
    if memo is None:
        return compute()
    try:
        return memo[key]
    except KeyError:
        value = memo[key] = compute()
        return value


def known(key: Hashable) -> bool:
    """Whether the scope holds a value under ``key`` (False outside any scope)."""
    memo = _MEMO.get()
    return memo is not None and key in memo


def held(key: Hashable):
    """The value the scope holds under ``key``, or None (none held, or outside any
    scope): for values only a batched study stores, which an engine computes itself
    otherwise without keeping them."""
    memo = _MEMO.get()
    return None if memo is None else memo.get(key)


def keep(key: Hashable, value) -> None:
    """Store a value computed elsewhere (a batched solve of the same inputs) under
    ``key``, unless the scope already holds one; nothing outside any scope."""
    memo = _MEMO.get()
    if memo is not None:
        memo.setdefault(key, value)


@contextmanager
def transient() -> Iterator[None]:
    """What is remembered inside the block is dropped when it ends; what the scope held
    before stays (a study keeps the edges it solved ahead for many evaluations, not each
    evaluation's own)."""
    memo = _MEMO.get()
    if memo is None:
        yield
        return
    # A dict keeps its keys in the order they came, and nothing inside the block removes
    # a key that was there before it: the block's own keys are the last ``len - before``,
    # read from the end (its cost is what the block added, not what the scope holds).
    before = len(memo)
    try:
        yield
    finally:
        for key in list(itertools.islice(reversed(memo), max(0, len(memo) - before))):
            del memo[key]
