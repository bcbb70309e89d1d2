"""The text of `pinlib check`: problems first, one line per bus, the way to the detail.

Three views of one :class:`~pinlib.model.result.DesignResult`, each a list of lines fitted
to a width (:func:`format_text`):

* ``summary`` (the default): the caution in one line, every failing and warning check on
  one logical line (where, what, value against limit, margin, the fix), one line per bus
  with the figures that matter for its protocol, and a closing line with the counts and
  the command that shows the rest;
* ``quiet``: the problem lines only, or the closing line alone when every check passes;
* ``detail``: every figure and check (:mod:`pinlib.present.detail`).

Nothing here computes a figure: it formats what the engines returned, with SI prefixes
and the readable labels of :mod:`pinlib.core.labels` (ids stay in the JSON).
"""

from __future__ import annotations

import math
import re

from pinlib.core.labels import check_label, humanize, path_label, plural_s
from pinlib.model.result import (
    STATUSES,
    BusResult,
    Check,
    DesignResult,
    figure_text,
    held_on_value,
    margin_text,
    warns_beyond,
    worst_order,
)
from pinlib.present.detail import detail_lines
from pinlib.present.terminal import DEFAULT_WIDTH, status_word, wrap
from pinlib.present.values import (
    assumed_cs_words,
    counts,
    format_value,
    search_bound_words,
    soft_tag,
    soft_words,
    value_tag,
    with_fix,
)
from pinlib.present.visible import visible

__all__ = ["format_text", "format_value", "problem_line", "bus_line", "coupling_line", "counts",
           "CAUTION_LINE", "MODES", "paint", "fit"]

#: The caution in one line (the whole text heads ``--detail`` and the JSON).
CAUTION_LINE = "Caution: estimates for design review; confirm them on the real board."
MODES = ("summary", "quiet", "detail")
#: The status words :func:`paint` colours (compiled only for colour, on a terminal).
_STATUS_RE = r"\b(PASS|WARN|FAIL)\b"


def _relation(c: Check) -> str:
    """"≤" or "≥" when the value, limit and margin tell which side passes; "" if not."""
    try:
        v, lim, m = float(c.value), float(c.limit), float(c.margin)
    except (TypeError, ValueError):
        return ""
    if not all(math.isfinite(x) for x in (v, lim, m)) or v == lim or m == 0:
        return ""
    if c.margin_unit is None and lim < 0:
        return ""
    return "≥" if (v > lim) == (m > 0) else "≤"


def _against(c: Check) -> str:
    """The value against its limit: ``"242 ns, limit ≤ 300 ns, margin +19 %"``."""
    if isinstance(c.value, bool) or c.value is None:
        # a message says itself why it only warns; a reason does not
        why = warns_beyond(c)
        # held at a warning on a soft value, not a soft limit (the joined fall's VGS(th))
        tags = VALUE_REASON_TAGS if held_on_value(c.details) else REASON_TAGS
        return (c.reason + (tags[why] if why else "")) if c.reason else c.message
    text = format_value(c.value, c.unit) + value_tag(c)
    if not isinstance(c.limit, bool) and c.limit is not None:
        rel = _relation(c)
        text += f", limit {rel + ' ' if rel else ''}{format_value(c.limit, c.unit)}"
        text += soft_tag(c)
    margin = margin_text(c)
    if margin:
        text += f", margin {margin}"
    below = (c.details or {}).get("warn_below") if isinstance(c.details, dict) else None
    if c.status == "warn" and isinstance(below, (int, float)) and c.margin_unit:
        # a warning at a positive margin in a unit: the band it warns within (the
        # gate drive's 1 V rule of thumb), which the status line's percent does not say
        text += f" (warns below {format_value(below, c.margin_unit)})"
    return text


#: The same after a check's reason, where it has no value and limit to stand beside.
REASON_TAGS = {"generic": "; a warning, the limit being a class's typical value",
               "estimate": "; a warning, the limit being an estimate",
               "rule": "; a warning, the limit being a rule of thumb"}
#: After the reason of a check held at a warning because a value it rests on is soft.
VALUE_REASON_TAGS = {"generic": "; a warning, resting on a class's typical value",
                     "estimate": "; a warning, resting on an estimate"}


def problem_line(bus: BusResult, where: str | None, signal: str | None, c: Check) -> str:
    """One failing or warning check as one logical line: status, bus (segment or line),
    signal and device, the check, value against limit, margin, the fix."""
    place = bus.id + (f"/{where}" if where else "")
    who = " ".join(x for x in (signal.upper() if signal else None, c.subject) if x)
    text = f"{status_word(c.status)} {place}{' ' + who if who else ''}: {check_label(c.id)}"
    text += (": " if isinstance(c.value, bool) or c.value is None else " ") + _against(c)
    return with_fix(text, c)


def _fig_text(group, name: str) -> str | None:
    """A figure for a bus's one line: its value, or where it has no number the head of
    its reason ("none", "no upper bound (Cb is 0)"; the problem lines above say more);
    None where it has neither."""
    f = group.figures.get(name)
    if f is None:
        return None
    if f.value is None or (isinstance(f.value, float) and not math.isfinite(f.value)):
        return f.reason.split(":")[0] if f.reason else None
    return figure_text(f)


def _effective(group) -> str:
    """Where pull-ups inside parts sit beside the resistor, what the lines see: the
    chosen value alone would read as inside a window the effective one may leave."""
    own = group.figures.get("pullup_resistor")
    if own is None or own.value is None:
        return ""
    eff = {sig: group.figures.get(f"pullup_{sig}") for sig in ("sda", "scl")}
    eff = {sig: f for sig, f in eff.items() if f is not None and f.value is not None}
    if not eff or all(abs(f.value - own.value) <= 1e-9 * own.value for f in eff.values()):
        return ""
    texts = {sig: figure_text(f) for sig, f in eff.items()}
    if len(set(texts.values())) == 1:
        return f" ({next(iter(texts.values()))} with the pull-ups in parts)"
    both = ", ".join(f"{sig.upper()} {t}" for sig, t in texts.items())
    return f" ({both} with the pull-ups in parts)"


def _open_drain(group) -> str:
    parts = []
    cb = _fig_text(group, "bus_capacitance")
    if cb:
        parts.append(f"Cb {cb}")
    lo, hi = _fig_text(group, "rp_min"), _fig_text(group, "rp_max")
    if lo or hi:
        parts.append(f"Rp {lo or '—'}…{hi or '—'}")
    rp = _fig_text(group, "pullup_resistor") or _fig_text(group, "pullup")
    if rp:
        parts.append(f"chosen {rp}" + _effective(group))
    tr = _fig_text(group, "rise_time")
    if tr:
        parts.append(f"tr {tr}")
    return ", ".join(parts)


def _worst(bus: BusResult) -> tuple[Check | None, str | None]:
    """The check of the bus with the worst status and, among those, the smallest
    relative margin, and its line's signal (a rule of thumb's warning far below its
    limit is not named beside a check that fails).  A margin in a unit (``margin_unit``:
    a gate overdrive in volts, an SPI slack in seconds) is never ranked against
    fractions: it is the worst only where no check of its status has a relative margin
    (the order of the candidates' worst margin), so a bus that warns on such a check
    alone names it, not a passing check of a smaller fraction."""
    best, where, key = None, None, None
    for _, signal, c in bus.all_checks():
        if c.margin is None:
            continue
        k = worst_order(c)
        if math.isfinite(k[2]) and (key is None or k < key):
            best, where, key = c, signal, k
    return best, where


def _worse_without_margin(bus: BusResult, than: Check | None):
    """The first failing or warning check of a worse status than ``than`` (any, when
    ``than`` is None) and its line's signal: one :func:`_worst` cannot rank, having no
    margin (a yes/no pull-up check, a contention warning)."""
    rank = STATUSES.index(than.status) if than is not None and than.status in STATUSES \
        else 0
    for status in ("fail", "warn"):
        if STATUSES.index(status) <= rank:
            break
        for _, signal, c in bus.all_checks():
            if c.status == status:
                return c, signal
    return None, None


def _worst_text(bus: BusResult) -> str | None:
    c, signal = _worst(bus)
    bad, bad_signal = _worse_without_margin(bus, c)
    if bad is not None:
        who = " ".join(x for x in (bad_signal.upper() if bad_signal else None, bad.subject)
                       if x)
        kind = "failing" if bad.status == "fail" else "warning"
        return f"{kind} check {check_label(bad.id)}{f' ({who})' if who else ''}"
    if c is None:
        return None
    who = " ".join(x for x in (signal.upper() if signal else None, c.subject) if x)
    return f"worst margin {margin_text(c)} ({check_label(c.id)}{' ' + who if who else ''})"


def _spi(bus: BusResult) -> list[str]:
    parts = []
    f = bus.figures.get("max_clock")
    clock = None if f is None or f.value is None else _fig_text(bus, "max_clock")
    if f is not None and f.value is None:
        from pinlib.engines.spi.modes import NO_CLOCK_LIMIT

        parts.append("max clock not limited by the parts' data" if f.reason == NO_CLOCK_LIMIT
                     else "max clock — (not computed; the notes in --detail say why)")
    if clock:
        by = _fig_text(bus, "max_clock_limited_by")
        assumed = assumed_cs_words(bus.checks, by) if by else ""
        by = by and path_label(by)  # "cipo-setup U2" as the checks name it
        by = by and by + assumed
        parts.append(f"max clock {clock}" + (f" (set by {by})" if by else ""))
    slack = _timing_slack(bus)
    if slack:
        parts.append(slack)
    worst = _worst_text(bus)
    if worst:
        parts.append(worst)
    return parts


#: The SPI timing-budget figures (available minus required time at the design's clock)
#: and the requirement each names.
_SLACK_FIGURES = (("cipo_setup_margin", "CIPO setup"), ("copi_setup_margin", "COPI setup"),
                  ("copi_hold_margin", "COPI hold"))


def _timing_slack(bus: BusResult) -> str | None:
    """The smallest timing-budget slack at the design's clock, in time, and which
    requirement has it (a margin of the budget, apart from the parts' ratings)."""
    got = []
    for name, what in _SLACK_FIGURES:
        f = bus.figures.get(name)
        if f is not None and isinstance(f.value, (int, float)) and not isinstance(f.value, bool) \
                and math.isfinite(f.value):
            got.append((float(f.value), f.unit, what))
    if not got:
        return None
    value, unit, what = min(got)
    return f"timing slack {format_value(value, unit)} ({what})"


def _gpio(bus: BusResult) -> list[str]:
    parts, best = [], None
    for ln in bus.lines:
        for name, edge in (("edge_rise_time", "rise"), ("edge_fall_time", "fall")):
            f = ln.figures.get(name)
            if f is None or not isinstance(f.value, (int, float)) or isinstance(f.value, bool):
                continue
            if math.isfinite(f.value) and (best is None or f.value > best[0]):
                best = (float(f.value), f.unit, ln.signal, edge)
    if best:
        parts.append(f"slowest edge {format_value(best[0], best[1])} as designed "
                     f"({best[2]} {best[3]})")
    worst = _worst_text(bus)
    if worst:
        parts.append(worst)
    return parts


def coupling_line(c) -> str:
    """One coupling as one logical line: status, victim beside aggressor, the peak noise,
    the minimum spacing against the design's, the maximum parallel length."""
    head = f"{status_word(c.status)} {c.victim} beside {c.aggressor} (crosstalk)"
    parts = []
    peak = _fig_text(c, "peak_noise")
    if peak:
        parts.append(f"peak noise {peak}")
    least = _bounded(c, "minimum_spacing")
    parts.append(f"spacing {_fig_text(c, 'spacing')}, minimum {least}")
    longest = _bounded(c, "maximum_parallel_length")
    parts.append(f"parallel {_fig_text(c, 'parallel_length')}, maximum {longest}")
    return f"{head}: {', '.join(parts)}"


def _bounded(c, name: str) -> str:
    """A search's result as text: "— (none passes)" where there is none, "18 µm or less"
    where it is the search's own bound (:func:`pinlib.present.values.search_bound_words`)."""
    f = c.figures.get(name)
    if f is None or f.value is None:
        return "— (none passes)"
    return format_value(f.value, f.unit) + search_bound_words(c.figures, name)


def bus_line(bus: BusResult) -> str:
    """One bus as one logical line: status, name, protocol and the figures that matter."""
    if bus.protocol == "coupling":
        return coupling_line(bus)
    head = f"{status_word(bus.status)} {bus.id} ({humanize(bus.protocol)})"
    if bus.segments:
        parts = []
        for s in bus.segments:
            mark = "" if s.status == "pass" else f" {status_word(s.status)}"
            parts.append(f"{s.id}{mark}: {_open_drain(s)}")
        body = "; ".join(parts)
    elif "rp_min" in bus.figures or "bus_capacitance" in bus.figures:
        body = _open_drain(bus)
    elif bus.protocol == "spi":
        body = ", ".join(_spi(bus))
    elif bus.protocol == "gpio":
        body = ", ".join(_gpio(bus))
    else:
        body = _worst_text(bus) or ""
    return head + (f": {body}" if body else "")


def _problems(result: DesignResult) -> list[tuple[BusResult, str | None, str | None, Check]]:
    out = []
    for status in ("fail", "warn"):
        for b in result.results():
            for seg, signal, c in b.all_checks():
                if c.status == status:
                    out.append((b, seg, signal, c))
    return out


def _closing(result: DesignResult) -> str:
    n = counts(result)
    buses = len(result.buses)
    text = (f"{status_word(result.status)} {result.design}: {n['pass']} pass, "
            f"{n['warn']} warn{soft_words(n)}, {n['fail']} fail on {buses} "
            f"bus{'es' if buses != 1 else ''}")
    pairs = len(result.couplings)
    if pairs:
        text += f" and {pairs} coupling{plural_s(pairs)}"
    return text


def _summary(result: DesignResult, cols: int, more: str | None, quiet: bool) -> list[str]:
    problems = _problems(result)
    out: list[str] = []
    if quiet:
        if not problems:
            return wrap(_closing(result), cols)
        for b, seg, signal, c in problems:
            out += wrap(problem_line(b, seg, signal, c), cols)
        return out
    out += wrap(CAUTION_LINE, cols)
    out.append("")
    if problems:
        for b, seg, signal, c in problems:
            out += wrap(problem_line(b, seg, signal, c), cols)
        out.append("")
    for b in result.results():
        out += wrap(bus_line(b), cols)
    for note in result.notes:
        out += wrap(f"note: {note}", cols)
    out.append("")
    out += wrap(_closing(result), cols)
    if more:  # the command kept on one line where it fits, to copy as it stands
        out += _command_lines("Every figure and check:", more, cols)
    return out


def _command_lines(head: str, command: str, cols: int) -> list[str]:
    """``head`` and a command to copy: on one line where they fit, else the command on
    the next line, else continued as a shell reads it (a path too long for a line
    goes on after a backslash: :func:`pinlib.core.commandtext.continued_lines`)."""
    from pinlib.core.commandtext import continued_lines

    if len(head) + 1 + len(command) <= cols:
        return [f"{head} {command}"]
    if len(command) + 4 <= cols:
        return [head, "    " + command]
    return continued_lines(head, _shell_words(command), cols, "    ", split_long=True)


def _shell_words(command: str) -> list[str]:
    """A command's words, split at the spaces outside single quotes (as
    :func:`pinlib.present.terminal.shell_word` quotes a path)."""
    words, word, quoted = [], "", False
    for ch in command:
        if ch == "'":
            quoted = not quoted
        if ch == " " and not quoted:
            if word:
                words.append(word)
            word = ""
        else:
            word += ch
    return words + ([word] if word else [])


def paint(lines: list[str]) -> list[str]:
    """The status words of ``lines`` in colour (after wrapping: widths count letters).

    Each line is first made :func:`~pinlib.present.visible.visible`: a file's escape
    code in it is shown, so that the only codes left are the status colours added here
    (write the lines with :func:`~pinlib.present.visible.write_coloured`)."""
    status = re.compile(_STATUS_RE)
    return [status.sub(lambda m: status_word(m.group(1).lower(), True), visible(ln))
            for ln in lines]


def format_text(result: DesignResult, *, mode: str = "summary", width: int = DEFAULT_WIDTH,
                colour: bool = False, more: str | None = None) -> str:
    """A design's result as text.

    Parameters
    ----------
    result : DesignResult
        What :func:`pinlib.engines.dispatch.check_design` returned.
    mode : {"summary", "quiet", "detail"}, optional
        What to show (see the module's description). [1]
    width : int, optional
        Columns to fit: no line is longer. [1]
    colour : bool, optional
        Colour the status words with ANSI codes (for a terminal). [1]
    more : str, optional
        The command that shows the detail, named on the summary's closing line; by
        default ``pinlib check PATH --detail``. [1]

    Returns
    -------
    str
        Lines ready to print, each at most ``width`` characters (escape codes aside),
        every character of a file that would act on a terminal shown as its escape
        (:func:`~pinlib.present.visible.visible`): the only escape codes are the status
        colours (write it with :func:`~pinlib.present.visible.write_coloured`).
    """
    if mode not in MODES:
        raise ValueError(f"mode must be one of {MODES}, not {mode!r}")
    if more is None:
        more = f"pinlib check {result.path or 'DESIGN'} --detail"
    if mode == "detail":
        lines = detail_lines(result, width)
    else:
        lines = _summary(result, width, more, quiet=mode == "quiet")
    lines = fit(lines, width)
    lines = paint(lines) if colour else [visible(ln) for ln in lines]
    return "\n".join(lines) + "\n"


def fit(lines: list[str], cols: int) -> list[str]:
    """Every line within ``cols``: a line still too long is wrapped at its own indent."""
    out = []
    for ln in lines:
        if len(ln) <= cols:
            out.append(ln.rstrip())
            continue
        indent = ln[: len(ln) - len(ln.lstrip())]
        out += wrap(ln.strip(), cols, indent)
    return out
