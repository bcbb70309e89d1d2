"""A command laid out within a width as a shell reads it: lines continued with `` \\``.

One rule for every command pinlib suggests, in a terminal (`pinlib parts new`'s next
step) and in the comments of a file it writes (a new part file's header)."""

from __future__ import annotations

__all__ = ["continued_lines"]


def continued_lines(first: str, words: list[str], width: int, indent: str, *,
                    split_long: bool = False) -> list[str]:
    """``first`` and then ``words``, each kept whole, in lines of at most ``width``
    characters where the words allow it, every line but the last ending in `` \\`` and
    each after the first starting with ``indent``.  With ``split_long``, a word too long
    for a line of its own (a long path) goes on after a ``\\`` with no space, at the
    next line's first column, where the shell joins the two halves into one word: cut
    after a ``/`` where one fits, and never a single-quoted word (a backslash inside
    quotes is no continuation).

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
        while split_long and len(line) + 2 > width and not word.startswith("'"):
            # the line ends inside this word: continue the word on the next line
            room = width - 1                      # the piece and its "\\"
            cut = line.rfind("/", len(line) - len(word), room) + 1
            if cut <= len(line) - len(word):      # no "/" within the room: cut at it
                cut = room
            if cut <= len(line) - len(word):      # not even one character of the word
                break
            lines.append(line[:cut] + "\\")
            line, word = line[cut:], line[cut:]
    return lines + [line]
