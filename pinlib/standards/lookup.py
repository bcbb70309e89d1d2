"""Looking a row of a standard's table up by its name, with the valid names on a miss."""

from __future__ import annotations

from collections.abc import Mapping, Sequence

from pinlib.core.errors import InputError

__all__ = ["by_name"]


def by_name(table: Mapping, names: Sequence[str], name, problem: str, field: str):
    """The row of ``table`` named ``name`` (case and surrounding blanks ignored).

    Raises
    ------
    InputError
        ``problem`` for an unknown name, listing ``names`` as the valid choices.
    """
    key = name.strip().lower() if isinstance(name, str) else None
    if key not in table:
        raise InputError(problem, field=field, value=name, expected="one of " + ", ".join(names))
    return table[key]
