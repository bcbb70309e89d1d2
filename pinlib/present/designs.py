"""Text of ``pinlib check`` over many designs: one line per design, a closing count, and
(with ``--against-snapshots``) what moved since each design's snapshot."""

from __future__ import annotations

from pinlib.core import messages as M
from pinlib.core.labels import plural_s

__all__ = ["summary_line", "format_many", "format_uses", "format_swaps"]

_WORDS = {"pass": "PASS", "warn": "WARN", "fail": "FAIL", "error": "ERROR"}


def summary_line(s, width: int) -> str:
    """One design: status, path, then its counts and title, or why it was not checked."""
    head = f"{_WORDS.get(s.status, s.status.upper()):<6}{s.path:<{width}}  "
    return head + _tail(s)


def _tail(s) -> str:
    """What follows a design's path: its counts and title, or why it was not checked."""
    if s.error is not None:
        message = s.error_here or s.error
        return M.DESIGN_NOT_LOADED.format(path=s.path, message=message) \
            .removeprefix(f"{s.path}: ")
    return f"{_counts_text(s)} — {s.title}"


def _counts_text(s) -> str:
    """A checked design's counts: ``"26 pass, 23 warn (12 beyond ...), 0 fail"``."""
    from pinlib.present.values import soft_words

    c = s.counts
    return (f"{c['pass']} pass, {c['warn']} warn{soft_words({'soft': s.soft})}, "
            f"{c['fail']} fail")


def _fitted_summary(s, width: int, cols: int) -> list[str]:
    """A design's line at most ``cols`` wide, nothing of it cut: as :func:`summary_line`
    (its path padded to ``width``) where it fits; else wrapped at its spaces, the rest
    indented under it, the status and path kept on the first line (unpadded if need
    be); else the path on a line of its own and the rest wrapped under it (an error's
    message, or the counts and the title, whole)."""
    from pinlib.core.wrapping import NBSP
    from pinlib.present.terminal import wrap

    word = f"{_WORDS.get(s.status, s.status.upper()):<6}"
    tail = _tail(s)
    for pad in (width, 0):
        line = (word + f"{s.path:<{pad}}  " + tail).rstrip()
        if len(line) <= cols:
            return [line]
    for pad in (width, 0):
        # the status, the path and its padding one unbreakable word; the tail's first
        # word after it on the same line, else the next layout
        head = (word + f"{s.path:<{pad}}").replace(" ", NBSP) + NBSP * 2
        lines = wrap(head + tail, cols, "", "    ", break_long=False)
        if len(lines[0]) <= cols and len(lines[0]) > len(head):
            return lines
    return _own_line(word, s.path, cols) + wrap(tail, cols, "    ", "    ", break_long=False)


def _own_line(word: str, path: str, cols: int) -> list[str]:
    """The status word and a path too long for one line with the rest: on a line of
    their own, broken after a ``/`` where they do not fit (a name never cut)."""
    from pinlib.core.wrapping import NBSP
    from pinlib.present.terminal import wrap

    return wrap(word.replace(" ", NBSP) + path, cols, break_long=False)


def _snapshot_lines(s, cols: int | None) -> list[str]:
    """A design's snapshot changes indented under its line, each wrapped to ``cols``
    (None: whole, one line each, for a file or a pipe)."""
    if s.snapshot is None or s.error is not None:
        return []
    if s.snapshot == "compared":
        lines = ["    " + line if line else "" for line in s.changes_text.rstrip().splitlines()]
    elif s.snapshot == "damaged":   # there is one, which could not be read
        lines = ["    its snapshot could not be read: nothing to compare with"]
        lines += [f"    warning: {n}" for n in s.notes]
    else:
        lines = ["    no snapshot to compare with (pinlib check DESIGN --save keeps one)"]
        lines += [f"    warning: {n}" for n in s.notes]
    if cols is None:
        return lines
    from pinlib.present.terminal import wrap

    out = []
    for line in lines:
        body = line.lstrip(" ").replace(" → ", "\u00a0→\u00a0")  # "pass → warn" stays whole
        out += wrap(body, cols, line[:len(line) - len(body)]) if body else [""]
    return out


def format_many(summaries, cols: int | None = None) -> str:
    """Every design's line (and snapshot changes), then the counts of designs; ``cols``:
    characters per line (None: no limit), a design's line wrapped to it, nothing cut
    (:func:`_fitted_summary`), and the closing line wrapped."""
    from pinlib.present.terminal import wrap

    width = max(len(s.path) for s in summaries)
    out = []
    for s in summaries:
        if cols is None:
            out.append(summary_line(s, width).rstrip())
        else:
            out += _fitted_summary(s, width, cols)
        out += _snapshot_lines(s, cols)
    counts = {k: sum(1 for s in summaries if s.status == k)
              for k in ("pass", "warn", "fail", "error")}
    n = len(summaries)
    out.append("")
    closing = (f"{n} design{plural_s(n)}: {counts['pass']} pass, "
               f"{counts['warn']} warn, {counts['fail']} fail, {counts['error']} not checked; "
               "'pinlib check DESIGN' shows one in full")
    out += wrap(closing, cols) if cols else [closing]
    return "\n".join(out) + "\n"


def format_uses(part_id: str, uses: list[dict], n_designs: int) -> str:
    """``pinlib parts used-by``: one line a position, then the counts."""
    out = []
    for u in uses:
        via = "" if len(u["via"]) == 1 else "  (" + " → ".join(u["via"]) + ")"
        out.append(f"{u['path']}  bus {u['bus']}  {u['ref']}  {u['part']}{via}")
    found = len({u["path"] for u in uses})
    out.append(f"{part_id}: {len(uses)} position{plural_s(len(uses))} in {found} "
               f"of {n_designs} design{plural_s(n_designs)}")
    return "\n".join(out) + "\n"


def _counted(n: int, noun: str) -> str:
    """``n`` and the noun, plural but for one: ``1 check``, ``16 margins``."""
    return f"{n} {noun}{plural_s(n)}"


def _swap_lines(s, width: int) -> list[str]:
    head = f"{s.path:<{width}}  "
    if s.status == "error":
        return [head + M.DESIGN_NOT_LOADED.format(path=s.path, message=s.error)
                .removeprefix(f"{s.path}: ")]
    if s.status == "unused":
        through = "; ".join(M.SWAP_ONLY_EXTENDED.format(old=old, where=", ".join(where))
                            for old, where in s.extended.items())
        return [head + "no position to change" + (f": {through}" if through else "")]
    where = ", ".join(f"{r} {s.olds[r]} → {n}" for r, n in s.swaps.items())
    if s.status == "refused":
        out = [head + f"refused ({where}); not changed"]
        for r in s.refused:
            out += [f"    {r['ref']}: {reason}" for reason in r["reasons"]]
        return out
    c = s.changes
    # the same three counts on every design's line, 0 included, so the lines compare
    moved = (f"{_counted(len(c.status_changes), 'check')} changed status, "
             f"{_counted(len(c.margin_changes), 'margin')} moved, "
             f"{_counted(len(c.figure_changes), 'figure')} moved")
    written = "; written" if s.written else ""
    if s.write_error is not None:
        written = "; " + M.SWAP_LINE_NOT_WRITTEN
    out = [head + f"{s.before.upper()} → {s.after.upper()}  {where}; {moved}{written}"]
    out += ["    " + ch.format() for ch in c.status_changes]
    out += ["    " + ch.format() for ch in c.margin_changes]
    return out


def format_swaps(summaries, parts: dict, *, write: bool, cols: int | None = None) -> str:
    """``pinlib swap --part OLD=NEW DESIGN...``: a line per design (and the checks whose
    status changed, or the reasons for a refusal), then the counts; ``cols``: characters
    per line (None: no limit), each line wrapped with its continuation indented."""
    from pinlib.present.terminal import wrap

    width = max(len(s.path) for s in summaries)
    pairs = ", ".join(f"{o} → {n}" for o, n in parts.items())
    out = [f"Substitution: {pairs}", ""]
    for s in summaries:
        out += _swap_lines(s, width)
    n = {k: sum(1 for s in summaries if s.status == k)
         for k in ("swapped", "refused", "unused", "error")}
    failing = sum(1 for s in summaries if s.status == "swapped" and s.after == "fail")
    out.append("")
    tail = ("" if write or not n["swapped"]
            else "; add --write to edit the files that were not refused")
    out.append(f"{_counted(len(summaries), 'design')}: {n['swapped']} changed "
               f"({failing} failing after), "
               f"{n['refused']} refused, {n['unused']} without the part, "
               f"{n['error']} not checked{tail}")
    if cols is not None:
        out = [w for line in out
               for w in (wrap(line.lstrip(), cols, line[:len(line) - len(line.lstrip())],
                              break_long=False)  # a path: never cut inside a name
                         if len(line) > cols else [line])]
    return "\n".join(out) + "\n"
