"""Names close to a misspelt one, for the "did you mean" part of an error.

One place for the similarity rule (:func:`difflib.get_close_matches`, the ratio of
matching characters), imported only when a message needs it: difflib is not on the
path of a check that finds nothing misspelt.
"""

from __future__ import annotations

from collections.abc import Iterable

__all__ = ["closest", "closest_hint"]


def closest(word: str, names: Iterable[str], *, n: int = 3, cutoff: float = 0.5) -> list[str]:
    """Up to ``n`` of ``names`` most like ``word``, best first, each at least ``cutoff``
    alike (0 to 1).  Letter case does not count against a name ("EEPROM-I2C" finds
    "eeprom-i2c", the closest of all); the names are given back as written."""
    import difflib

    written: dict[str, list[str]] = {}
    for name in names:
        written.setdefault(str(name).casefold(), []).append(name)
    near = difflib.get_close_matches(str(word).casefold(), list(written), n=n, cutoff=cutoff)
    return [name for key in near for name in written[key]][:n]


def closest_hint(word: str, names: Iterable[str], *, cutoff: float = 0.5) -> str | None:
    """``"closest: a, b"`` naming the names most like ``word``; None when none is close."""
    near = closest(word, names, cutoff=cutoff)
    return ("closest: " + ", ".join(near)) if near else None
