"""A command laid out within a width as a shell reads it: lines continued with `` \\``.

One rule for every command pinlib suggests, in a terminal (`pinlib parts new`'s next
step) and in the comments of a file it writes (a new part file's header)."""

from __future__ import annotations

__all__ = ["continued_lines"]


def continued_lines(first: str, words: list[str], width: int, indent: str) -> list[str]:
    """``first`` and then ``words``, each kept whole, in lines of at most ``width``
    characters where the words allow it, every line but the last ending in `` \\`` and
    each after the first starting with ``indent``.

    Examples
    --------
    >>> continued_lines("next:", ["pinlib", "parts", "record", "a-long-id"], 24, "    ")
    ['next: pinlib parts \\\\', '    record a-long-id']
    """
    lines, line = [], first
    for word in words:
        if len(line) + len(word) + 3 > width and line.strip():  # a space, the word, " \\"
            lines.append(line + " \\")
            line = indent + word
        else:
            line += " " + word
    return lines + [line]
