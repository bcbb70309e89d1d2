"""How the command's help pages are laid out: prose filled to the terminal's width,
examples kept as written.

The descriptions and epilogs are written as paragraphs of prose (lines that start at
the margin) and blocks of indented lines (examples, lists).  :class:`HelpLayout` fills
each paragraph to the width argparse gives the help (``COLUMNS`` less two; 80 columns
when the output is not a terminal) and leaves the indented lines as they are, so an
example reads as one command a user can copy.  The examples are written to fit 80
columns (``tests/test_cli_help.py`` holds every page to that).
"""

from __future__ import annotations

import argparse
import textwrap

from pinlib.present.terminal import columns

__all__ = ["HelpLayout", "layout"]


def layout(text: str, width: int) -> list[str]:
    """``text``'s lines with each paragraph of prose filled to ``width`` (at least 40)
    characters; indented and empty lines unchanged."""
    width = max(width, 40)
    out: list[str] = []
    prose: list[str] = []
    for line in text.splitlines():
        if line and not line[0].isspace():
            prose.append(line)
            continue
        if prose:
            out += textwrap.wrap(" ".join(prose), width, break_on_hyphens=False)
            prose = []
        out.append(line.rstrip())
    if prose:
        out += textwrap.wrap(" ".join(prose), width, break_on_hyphens=False)
    return out


class HelpLayout(argparse.RawDescriptionHelpFormatter):
    """argparse's help with the description and epilog laid out by :func:`layout`.

    Its width when none is given is argparse's own, the terminal's columns less two,
    taken by :func:`pinlib.present.terminal.columns` (the same number): argparse would
    import :mod:`shutil` for it, with its compression modules, in every parser a
    command builds (each argument added makes a formatter)."""

    def __init__(self, prog, indent_increment=2, max_help_position=24, width=None):
        if width is None:
            width = columns() - 2
        super().__init__(prog, indent_increment, max_help_position, width)

    def _fill_text(self, text, width, indent):
        return "".join(f"{indent}{line}\n" if line else "\n"
                       for line in layout(text, width - len(indent)))
