"""What a terminal needs from the text output: its width, whether to colour, wrapping.

* Width: :func:`width` asks :func:`columns`, which honours the ``COLUMNS``
  environment variable first and falls back to 80 columns when standard output is not
  a terminal (a pipe, a file, a test): the columns of :func:`shutil.get_terminal_size`,
  without importing :mod:`shutil` (with its compression modules, about 2 ms of a fresh
  ``pinlib check``; argparse imports it for every help formatter not given a width,
  :class:`pinlib.cli.helptext.HelpLayout` gives it this one).
* Colour: only the status words (PASS, WARN, FAIL) are coloured, and only when the
  output is a terminal and ``NO_COLOR`` is unset or empty (the https://no-color.org
  convention).  The few ANSI codes are written here: no library is imported, so a
  fresh ``pinlib check`` pays nothing for them.  Every other character that would act
  on a terminal is shown as its escape (:mod:`pinlib.present.visible`).
* Wrapping: :func:`wrap` (:mod:`pinlib.core.wrapping`, re-exported here) fits one logical
  line to the width with its continuation lines indented; the width counts characters,
  not escape codes, since colour is added after wrapping.
"""

from __future__ import annotations

import os
import re
import sys

from pinlib.core.commandtext import continued_lines
from pinlib.core.wrapping import NBSP, wrap
from pinlib.present.visible import RESET
from pinlib.present.visible import STATUS_SGR as _SGR

__all__ = ["DEFAULT_WIDTH", "MIN_WIDTH", "columns", "width", "use_colour", "status_word", "wrap",
           "fitted", "shell_word", "shown_path", "write_json"]

#: Columns when standard output is not a terminal and COLUMNS is not set.
DEFAULT_WIDTH = 80
#: The narrowest text the tables are laid out for (a narrower COLUMNS is raised to it).
MIN_WIDTH = 40


#: A message's program and kind ("pinlib: error: ") and the word after them.
_HEAD = re.compile(r"^[\w-]+: [\w-]+: \S+")

_WORDS = {"pass": "PASS", "warn": "WARN", "fail": "FAIL"}


def columns(fallback: int = DEFAULT_WIDTH) -> int:
    """COLUMNS when it is a positive whole number, else the width of the terminal on
    standard output, else ``fallback``: the ``columns`` of
    ``shutil.get_terminal_size((fallback, lines))``, step for step, whatever LINES is."""
    try:
        cols = int(os.environ["COLUMNS"])
    except (KeyError, ValueError):
        cols = 0
    if cols > 0:
        return cols
    try:
        size = os.get_terminal_size(sys.__stdout__.fileno())
    except (AttributeError, ValueError, OSError):
        return fallback
    return size.columns or fallback


def width() -> int:
    """The columns to fill: COLUMNS, else the terminal's width, else 80 (never below
    :data:`MIN_WIDTH`)."""
    return max(MIN_WIDTH, columns())


def table_width(stream=None) -> int | None:
    """The width a table is fitted to: COLUMNS when set, else the terminal's width when
    ``stream`` (standard output by default) is a terminal, else None — output piped to
    a file or another program keeps every column whole."""
    stream = sys.stdout if stream is None else stream
    if os.environ.get("COLUMNS", "").strip().isdigit():
        return width()
    try:
        tty = stream.isatty()
    except (AttributeError, ValueError):
        tty = False
    return width() if tty else None


def use_colour(stream) -> bool:
    """True when ``stream`` is a terminal and NO_COLOR is unset or empty."""
    if os.environ.get("NO_COLOR"):
        return False
    try:
        return bool(stream.isatty())
    except (AttributeError, ValueError):
        return False


def status_word(status: str, colour: bool = False) -> str:
    """``"warn"`` -> ``"WARN"``, in colour when asked (4 characters wide either way)."""
    word = _WORDS.get(status, status.upper())
    if not colour or status not in _SGR:
        return word
    return f"\x1b[{_SGR[status]}m{word}\x1b[{RESET}m"


def fitted(line: str, stream=None) -> str:
    """``line`` wrapped to the width of ``stream`` (standard output by default) when it is
    a terminal or COLUMNS is set (:func:`table_width`), continuation lines indented, a
    word too long for its line (a file's path) on a line of its own, whole where it fits
    the width, else broken after a ``/``; whole for a file or a pipe, where a message
    stays one line (``file:line, field`` first, as tools read it)."""
    cols = table_width(stream)
    if not cols or len(line) <= cols:
        return line
    # "pinlib: error: " stays with the file it names
    head = _HEAD.match(line)
    glued = line if head is None else head.group(0).replace(" ", NBSP) + line[head.end():]
    # a path too long for its line goes on one of its own (core.wrapping.wrap)
    return "\n".join(ln.replace(NBSP, " ") for ln in wrap(glued, cols, break_long=False))


def fitted_command(head: str, words: list[str], stream=None) -> str:
    """``head`` and a command's ``words`` on one line, or, where :func:`fitted` would wrap
    it, on lines each continued with `` \\`` (as a shell reads them: the command still
    pastes whole), each word kept whole."""
    line = " ".join([head, *words])
    cols = table_width(stream)
    if not cols or len(line) <= cols:
        return line
    return "\n".join(continued_lines(head, words, cols, "    "))


#: The characters a shell word keeps unquoted: ``shlex.quote``'s (``\w`` in ASCII and
#: ``@%+=:,./-``), written out so a check does not import shlex for one path.
_SHELL_SAFE = frozenset("abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789"
                        "_@%+=:,./-")


def shell_word(path) -> str:
    """``path`` as one shell word, as ``shlex.quote`` writes it (a command the text
    suggests, ready to paste; tests/test_cli_check.py compares the two)."""
    text = str(path)
    if not text:
        return "''"
    if all(c in _SHELL_SAFE for c in text):
        return text
    return "'" + text.replace("'", "'\"'\"'") + "'"


def shown_path(path) -> str:
    """``path`` as a message shows it: relative to the working folder when it lies inside
    it, else as given."""
    try:
        rel = os.path.relpath(path)
    except ValueError:  # another drive (Windows)
        return str(path)
    return str(path) if rel.startswith("..") else rel


def write_json(doc) -> None:
    """``doc`` on standard output as indented JSON and a line break, in one write
    (``json.dump`` writes a chunk per token: a stream that looks at each write, as the
    command line's :class:`~pinlib.present.visible.VisibleStream`, took four times as
    long over a 5 MB document)."""
    import json

    sys.stdout.write(json.dumps(doc, indent=2, ensure_ascii=False) + "\n")
