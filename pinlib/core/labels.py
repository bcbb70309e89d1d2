"""Readable names for the ids of figures and checks, for tables that people read.

A result keeps stable ids (``rp_min``, ``noise_margin_low``, ``rise-time``): they are keys
of the result JSON and of the tests.  A table shows :func:`figure_label` /
:func:`check_label` instead ("Rp(min)", "Noise margin, low", "Rise time") beside the value
with its unit.  :func:`shown_figures` drops the figures that repeat another one, so a
reader sees each number once under a clear name:

* ``X_sda`` and ``X_scl`` are the two lines of an open-drain bus and ``X`` the worse of
  them; when both lines give the same value only ``X`` is shown, otherwise the two lines
  are shown and ``X`` (one of them again) is not;
* ``pullup`` is the effective pull-up of a line (the resistor in parallel with the
  pull-ups inside parts) and ``pullup_resistor`` the part fitted: when no part adds a
  pull-up they are one number, shown once as the resistor.

Nothing here imports a widget, a chart or an engine: the widgets use it, and the text and
HTML reports can.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from typing import Any

__all__ = ["FIGURES", "SHORT", "CHECKS", "figure_label", "short_label", "check_label",
           "path_label", "sampled_check_label", "note_label", "shown_figures", "humanize",
           "and_list", "plural_s", "counted"]

#: Figure id -> label, in the order a table lists them (units come with the values).
FIGURES: dict[str, str] = {
    # open-drain buses (I2C, SMBus), per segment
    "supply": "Supply",
    "pullup_resistor": "Pull-up resistor",
    "pullup": "Pull-up, effective (with pull-ups inside parts)",
    "rp_min": "Rp(min)",
    "rp_max": "Rp(max)",
    "bus_capacitance": "Bus capacitance Cb",
    # tr between the bus standard's own points: 30-70 % of VDD on I2C, 0.65 V to 1.50 V on
    # SMBus (the check's message and the SMBus segment's note say which)
    "rise_time": "Rise time tr",
    "rise_time_10_90": "Rise time, 10–90 %",
    "fall_time": "Fall time tf",
    "rise_factor": "Rise factor k (tr = k·Rp·Cb)",
    "v_ol": "Low level VOL",
    "v_oh": "High level VOH",
    "noise_margin_low": "Noise margin, low",
    "noise_margin_high": "Noise margin, high",
    "pullup_power": "Pull-up power",
    "scl_frequency_effective": "SCL frequency, effective",
    "sda_setup_margin": "SDA setup margin",
    # SPI buses
    "max_clock": "Highest clock",
    "max_clock_limited_by": "Highest clock set by",
    "max_clock_edge_rule": "Highest clock, edge rule of thumb",
    "copi_setup_margin": "COPI setup margin",
    "copi_hold_margin": "COPI hold margin",
    "cipo_setup_margin": "CIPO setup margin",
    "cipo_hold_margin": "CIPO hold margin",
    "cs_setup_margin": "CS setup margin",
    # push-pull lines
    "load_capacitance": "Load capacitance",
    "trace_delay": "Trace delay td",
    "z0": "Z0",
    "edge_rise_time": "Slowest rise, as designed",
    "edge_fall_time": "Slowest fall, as designed",
    "series_resistor": "Series resistor Rs",
    "overshoot": "Overshoot",
    "undershoot": "Undershoot",
    "transmission_line": "Transmission line",
    "model": "Line model",
    "delay_to_edge_ratio": "Delay / edge time",
    # couplings (a fast line beside an open-drain one)
    "spacing": "Spacing (edge to edge)",
    "parallel_length": "Parallel length",
    "near_end_coefficient": "Near-end coefficient Kb",
    "far_end_coefficient": "Far-end coefficient Kf",
    "noise_level_low": "Level held low, with noise",
    "noise_level_high": "Level held high, with noise",
    "peak_noise": "Peak noise",
    "minimum_spacing": "Minimum spacing",
    "maximum_parallel_length": "Maximum parallel length",
    "spacing_searched_from": "Spacing searched from",
    "length_searched_to": "Length searched to",
}

#: Figure id -> a short label for a table's column head (symbols of the trade).
SHORT: dict[str, str] = {
    "bus_capacitance": "Cb",
    "rise_time": "tr",
    "fall_time": "tf",
    "v_ol": "VOL",
    "v_oh": "VOH",
    "pullup_resistor": "Rp",
    "pullup": "Rp, effective",
    "max_clock": "f(max)",
    "worst_edge": "edge",
    "load_capacitance": "C load",
    "series_resistor": "Rs",
}

#: Check id -> label, where the plain words of the id would read badly.
CHECKS: dict[str, str] = {
    "f-max": "Clock ≤ f(max)",
    "v-ol": "VOL",
    "v-oh": "VOH",
    "pullup-window": "Pull-up window Rp(min)…Rp(max)",
    "scl-frequency": "SCL frequency",
    "edge-time": "Edge time",
    "input-transition": "Input transition time",
    "line-delay": "Line delay ≤ clock period",
    # its value and limit are counts (unit ""): the label says of what
    "ringing": "Ringing re-crossings",
    "pull-up": "Pull-up",
    "bridge-gate-drive": "Translator gate drive",
    "bridge-gate-side": "Translator side a on the lower rail",
    "crosstalk-low": "Crosstalk held low",
    "crosstalk-high": "Crosstalk held high",
    "crosstalk-glitch": "Crosstalk glitch",
}

#: Words written in capitals (or as the trade writes them) wherever they appear in an id.
_WORDS = {
    "sda": "SDA", "scl": "SCL", "sclk": "SCLK", "copi": "COPI", "cipo": "CIPO", "cs": "CS",
    "spi": "SPI", "i2c": "I2C", "smbus": "SMBus", "gpio": "GPIO", "vil": "VIL", "vih": "VIH",
    "vol": "VOL", "voh": "VOH", "ol": "OL", "oh": "OH", "rp": "Rp", "cb": "Cb", "z0": "Z0",
    "rs": "Rs", "tr": "tr", "tf": "tf", "vdd": "VDD",
}

#: The lines of an open-drain bus, as figure id suffixes.
_LINES = ("sda", "scl")


def plural_s(n) -> str:
    """The ending of a noun counted ``n`` times: "" for one, "s" for any other count
    (``f"{n} problem{plural_s(n)}"``: 1 problem, 0 problems, 3 problems); never
    "problem(s)"."""
    return "" if n == 1 else "s"


def counted(template: str, n: int, **fields) -> str:
    """A message that counts ``n`` things, its ``{n}`` and its noun's ending ``{s}``
    filled (:func:`plural_s`): ``counted("{n} more problem{s}", 1)`` is "1 more
    problem"."""
    return template.format(n=n, s=plural_s(n), **fields)


def and_list(words, conjunction: str = "and") -> str:
    """``["U2", "U3", "U4"]`` -> ``"U2, U3 and U4"`` (or ``conjunction`` in place of
    "and"); one word alone; "" for none; more than :data:`NAMED_AT_MOST` the first of
    them and a count of the rest (:func:`few_named`)."""
    words = [str(w) for w in words]
    if len(words) > NAMED_AT_MOST:
        return few_named(words, conjunction=conjunction)
    return (", ".join(words[:-1]) + f" {conjunction} {words[-1]}" if len(words) > 1
            else "".join(words))


#: The most names a message lists before it counts the rest (:func:`few_named`): a bus of
#: 1,024 targets listed them all over 87 lines of a fix.
NAMED_AT_MOST = 8


def few_named(words, limit: int = NAMED_AT_MOST, conjunction: str = "and") -> str:
    """Names for a message, as written one after another (``"U2, U3, U4"``); more than
    ``limit`` are the first ``limit`` and a count of the rest (``"U2, U3, ..., U9 and
    1,016 more"``), so a long list stays a line.  Give them in the order that matters
    (the worst first): the first are the ones named."""
    words = [str(w) for w in words]
    if len(words) <= limit:
        return ", ".join(words)
    return ", ".join(words[:limit]) + f" {conjunction} {len(words) - limit:,} more"


def humanize(ident: str) -> str:
    """An id in plain words: ``"noise_margin_low"`` -> ``"Noise margin low"``."""
    words = [w for w in ident.replace("-", "_").split("_") if w]
    if not words:
        return ident
    joined: list[str] = []  # v_ol -> VOL, i_oh -> IOH: levels and currents of a pin
    for w in words:
        if joined and joined[-1].lower() in ("v", "i") and w.lower() in ("ol", "oh", "il", "ih"):
            joined[-1] = (joined[-1] + w).upper()
        else:
            joined.append(w)
    words = joined
    out = [_WORDS.get(w.lower(), w) for w in words]
    if out[0] == words[0]:
        out[0] = out[0][:1].upper() + out[0][1:]
    return " ".join(out)


def _split_line(name: str) -> tuple[str, str | None]:
    for line in _LINES:
        if name.endswith("_" + line):
            return name[: -len(line) - 1], line
    return name, None


def figure_label(name: str) -> str:
    """A figure's label: ``rp_min`` -> ``"Rp(min)"``, ``rise_time_sda`` ->
    ``"Rise time tr, SDA"``; an id without an entry in :data:`FIGURES` in plain
    words."""
    if name in FIGURES:
        return FIGURES[name]
    base, line = _split_line(name)
    if line is not None and base in FIGURES:
        return f"{FIGURES[base]}, {line.upper()}"
    return humanize(name)


def short_label(name: str) -> str:
    """A figure's short label for a column head (``"Cb"``, ``"tr"``); its full label when
    it has none."""
    base, line = _split_line(name)
    if base in SHORT:
        return SHORT[base] + (f" {line.upper()}" if line else "")
    return figure_label(name)


def check_label(check_id: str) -> str:
    """A check's label: ``"noise-margin-low"`` -> ``"Noise margin low"``,
    ``"f-max"`` -> ``"Clock ≤ f(max)"``."""
    return CHECKS.get(check_id) or humanize(check_id)


def path_label(path: str) -> str:
    """A timing path as the checks table names it: ``"copi-setup U12"`` -> ``"COPI setup
    U12"``; a first word that is no check id (one without a hyphen, ``"f_max U1"``) is
    left as it is."""
    head, _, rest = path.partition(" ")
    if "-" not in head:
        return path
    return f"{check_label(head)} {rest}".strip()


#: The signals of an SPI bus, as a sampled check's name writes them (lower case).
_SPI_SIGNALS = frozenset({"sclk", "copi", "cipo", "cs"})


def sampled_check_label(name: str, check_id: str) -> str:
    """A sampled check's name (a Monte Carlo run's or a corner study's: ``"<where>
    [<signal>] <check id> [<subject>]"``) with its check id as the checks tables label it:
    ``"flash sclk overshoot U7"`` -> ``"flash SCLK Overshoot U7"``, ``"sensors/main-3v3 SDA
    pullup-window"`` -> ``"sensors/main-3v3 SDA Pull-up window Rp(min)…Rp(max)"``.  Words
    just before the id that its label repeats go (a coupling's ``"SCL near end held low
    crosstalk-low"`` -> ``"SCL near end Crosstalk held low"``).  A name without the id
    is returned as it is."""
    words = name.split(" ")
    at = [i for i, w in enumerate(words) if w == check_id]
    if not at:
        return name
    i = at[-1]
    head = [w.upper() if j and w in _SPI_SIGNALS else w for j, w in enumerate(words[:i])]
    label = check_label(check_id).split(" ")
    tail = label[1:]
    if tail and len(head) > len(tail) and \
            [w.lower() for w in head[-len(tail):]] == [w.lower() for w in tail]:
        head = head[:-len(tail)]
    return " ".join(head + label + words[i + 1:])


def note_label(note: str) -> str:
    """A note of a result whose first word is a figure's id (``"max_clock 24 MHz: ..."``,
    ``"cipo_setup_margin: not computed ..."``) with the figure's label in its place
    (``"Highest clock 24 MHz: ..."``); any other note as it is, a plain word that is an
    id too among them (``"overshoot 881 mV ..."`` reads as it is)."""
    head, sep, rest = note.partition(" ")
    word = head.rstrip(":")
    if "_" not in word or word not in FIGURES:
        return note
    return FIGURES[word] + head[len(word):] + sep + rest


def _order(name: str) -> tuple[int, int]:
    base, line = _split_line(name)
    keys = list(FIGURES)
    rank = keys.index(base) if base in keys else len(keys)
    return rank, 0 if line is None else 1 + _LINES.index(line)


def shown_figures(values: Mapping[str, Any],
                  same: Callable[[Any, Any], bool] | None = None) -> list[str]:
    """The figure names to show, in table order, without the ones that repeat another.

    Parameters
    ----------
    values : mapping of str to anything
        Figure name -> what is compared (a value, a Figure, a (before, after) pair).
    same : callable, optional
        Whether two entries are the same number; ``==`` by default.

    Returns
    -------
    list of str
        The names kept (see the module's description of the rules).
    """
    eq = same or (lambda a, b: a == b)
    drop = set()
    for name in values:
        base, line = _split_line(name)
        if line is None or base not in values:
            continue
        lines = [f"{base}_{x}" for x in _LINES if f"{base}_{x}" in values]
        # the line copies go only where each line has one, all equal to the bus's: a
        # lone one (a change list where only SDA's moved) keeps its line's name
        if len(lines) == len(_LINES) and all(eq(values[x], values[base]) for x in lines):
            drop.update(lines)
        else:
            drop.add(base)
    if "pullup" in values and "pullup_resistor" in values and "pullup" not in drop \
            and eq(values["pullup"], values["pullup_resistor"]):
        drop.add("pullup")
    return sorted((n for n in values if n not in drop), key=_order)
