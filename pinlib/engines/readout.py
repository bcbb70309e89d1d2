"""How much of the engines' results their caller reads.

A study that ranks many variants of a bus reads of each result only what ranks it: every
check's id, subject, status and margin and a few figures.  Inside
``with summaries_only():`` an engine may leave out work whose only use is to explain a
result to a person: the push-pull engine then does not solve a long line's edges
without the series resistor "auto" chose (they fill only the "series-termination"
check's comparison, a check without a margin), and the numbers in its texts (checks'
messages, notes) read :data:`UNSTATED` instead of being formatted.  Every check, status,
margin and figure is the one a full evaluation gives (the candidate rankings are held to the full
engine's, tests/test_candidates.py); the texts and details that explain may be
shorter, and say so.  Outside the block (the default) everything is worked out.
"""

from __future__ import annotations

from collections.abc import Iterator
from contextlib import contextmanager
from contextvars import ContextVar

__all__ = ["summaries_only", "explained", "UNSTATED"]

#: What a number in an engine's text reads inside :func:`summaries_only` (the value
#: itself is the check's or figure's own).
UNSTATED = "(not stated in a summary)"

_SUMMARIES: ContextVar[bool] = ContextVar("pinlib_summaries_only", default=False)


@contextmanager
def summaries_only() -> Iterator[None]:
    """Within the block the engines may leave out what only explains their results."""
    token = _SUMMARIES.set(True)
    try:
        yield
    finally:
        _SUMMARIES.reset(token)


def explained() -> bool:
    """Whether results are to carry their full explanations (False inside
    :func:`summaries_only`)."""
    return not _SUMMARIES.get()
