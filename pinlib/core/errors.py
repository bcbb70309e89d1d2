"""Exceptions and warnings that pinlib raises.

Every error a user can meet is a :class:`PinlibError`.  Each also subclasses the
built-in exception that fits it (``ValueError`` for bad input, ``OSError`` for a file
that cannot be written), so callers that know nothing of pinlib still catch it.

Errors carry structured fields (``file``, ``line``, ``field``, ``value``,
``expected``) and build their message from them, so the command line can print one
clear line and the workbooks can place the message beside the offending field.
"""

from __future__ import annotations

import reprlib

from pinlib.core.labels import plural_s

__all__ = [
    "cut",
    "PinlibError",
    "InputError",
    "UnitError",
    "LibraryError",
    "DesignError",
    "WriteError",
    "MissingExtraError",
    "ValidityWarning",
    "FitWarning",
]


#: Echoed values and field paths longer than this are cut in messages (the error keeps the
#: whole value in ``value``); a 2 MB string stays readable as its start and its length.
ECHO_LIMIT = 80
_SHORT = reprlib.Repr()
_SHORT.maxstring = _SHORT.maxother = ECHO_LIMIT
_SHORT.maxlist = _SHORT.maxtuple = _SHORT.maxdict = _SHORT.maxset = 20


def cut(text: str, limit: int = ECHO_LIMIT) -> str:
    """``text`` itself, or its start, an ellipsis and its length when longer than ``limit``."""
    if len(text) <= limit:
        return text
    return f"{text[: limit - 20]}… ({len(text):,} characters)"


class PinlibError(Exception):
    """Base of every error pinlib raises on purpose.

    Parameters
    ----------
    problem : str
        What is wrong, in a few words.
    file, line, field : optional
        Where: the file, the 1-based line in it, and the dotted field path.
    value : optional
        The offending value as the user wrote it.
    expected : optional
        What would have been accepted.
    hint : optional
        A suggestion to fix it (a closest match, a unit to add).
    also : sequence of PinlibError, optional
        Further problems found in the same pass over the same input (a file's other
        invalid fields), shown after this one.
    """

    def __init__(
        self,
        problem: str,
        *,
        file: str | None = None,
        line: int | None = None,
        field: str | None = None,
        value: object = None,
        expected: str | None = None,
        hint: str | None = None,
        also: tuple = (),
    ) -> None:
        self.problem = problem
        self.file = str(file) if file is not None else None
        self.line = line
        self.field = field
        self.value = value
        self.expected = expected
        self.hint = hint
        self.also = tuple(also)
        super().__init__(self.message)

    def located(self, *, file=None, line=None, field_prefix=None):
        """Return the same error with a location filled in where it was missing."""
        field = self.field
        if field_prefix:
            field = f"{field_prefix}.{field}" if field else field_prefix
        return type(self)(
            self.problem,
            file=self.file or file,
            line=self.line or line,
            field=field,
            value=self.value,
            expected=self.expected,
            hint=self.hint,
            also=self.also,
        )

    def with_hint(self, hint: str | None):
        """The same error with ``hint`` in place of its own (a caller that goes on in its
        own way gives its own advice, not the error's as well)."""
        return type(self)(self.problem, file=self.file, line=self.line, field=self.field,
                          value=self.value, expected=self.expected, hint=hint,
                          also=self.also)

    @property
    def where(self) -> str:
        return self._place(self.file if self.line is None or not self.file
                           else f"{self.file}:{self.line}")

    def _place(self, file_or_line: str | None) -> str:
        """The location: the file (or line) given, then the field."""
        parts = [file_or_line] if file_or_line else []
        if self.field:
            parts.append(f"field '{cut(self.field)}'")
        return ", ".join(parts)

    def message_in(self, path) -> str:
        """The message as read beside ``path`` (a line that already names that file):
        where the error lies in ``path`` itself its location says ``line N`` without the
        file; an error in another file (a library part) keeps its file."""
        import os

        if not self.file or os.path.abspath(self.file) != os.path.abspath(str(path)):
            return self.message
        return self._located(self._place(None if self.line is None else f"line {self.line}"))

    @property
    def message(self) -> str:
        return self._located(self.where)

    def _located(self, where: str) -> str:
        text = self.problem
        if self.value is not None:
            text += f" (got {_echo(self.value)})"
        if self.expected:
            text += f"; expected {self.expected}"
        if self.hint:
            text += f"; {self.hint}"
        return f"{where}: {text}" if where else text

    def __str__(self) -> str:
        return self.message

    def to_dict(self) -> dict:
        return {
            "problem": self.problem,
            "file": self.file,
            "line": self.line,
            "field": self.field,
            "value": None if self.value is None else cut(str(self.value)),
            "expected": self.expected,
            "hint": self.hint,
            "message": self.message,
        }


def _echo(value: object) -> str:
    """The value as a message shows it: its repr, cut to :data:`ECHO_LIMIT` (a long string
    or container is cut before its repr is built, so that stays cheap)."""
    if isinstance(value, bool):
        return "true" if value else "false"  # as a TOML file writes it, not True
    if isinstance(value, (str, bytes)) and len(value) > ECHO_LIMIT:
        return f"{value[: ECHO_LIMIT - 20]!r}… ({len(value):,} characters)"
    if isinstance(value, dict):  # a TOML table: its keys say what it is, not its repr
        keys = [str(k) for k in value]
        shown = ", ".join(keys[:6]) + (", …" if len(keys) > 6 else "")
        return f"a table ({shown})" if keys else "an empty table"
    if isinstance(value, (list, tuple)) and value and all(isinstance(v, dict) for v in value):
        return f"an array of {len(value):,} table{plural_s(len(value))}"
    if isinstance(value, (list, tuple, dict, set)):
        if len(value) > ECHO_LIMIT:
            return f"a {type(value).__name__} of {len(value):,} items"
        return cut(_SHORT.repr(value))  # nested contents cut too
    return cut(repr(value))


class InputError(PinlibError, ValueError):
    """A value, file or argument that pinlib cannot accept."""


class UnitError(InputError):
    """A quantity with the wrong unit, no unit, or a value that does not parse."""


class LibraryError(InputError):
    """A part-class file or library folder that is not valid."""


class DesignError(InputError):
    """A design file that is not valid or refers to what does not exist."""


class WriteError(PinlibError, OSError):
    """A file could not be written; the old file is left whole."""


class MissingExtraError(PinlibError, ModuleNotFoundError):
    """A feature needs an optional part of pinlib that is not installed.

    The message names the extra to install (``pip install 'pinlib[notebook]'``);
    :func:`pinlib.core.extras.need` raises it.  As a ``ModuleNotFoundError`` it is still
    caught by code that expects a failed import.
    """


class ValidityWarning(UserWarning):
    """An input lies outside the range in which a published model is valid."""


class FitWarning(UserWarning):
    """Datasheet points that a model cannot fit consistently."""
