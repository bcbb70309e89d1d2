"""The bench panel's answer of workbench 01 (:class:`BenchReading`), and its text
(:func:`comparison_html`: what ``pinlib measured`` says of the line, on SDA of the bus
built in the workbench as on a line of a saved design)."""

from __future__ import annotations

import re

from pinlib.core.quantity import format_si
from pinlib.core.valueclass import value_class
from pinlib.engines.bench import (
    READING_TOLERANCE,
    BenchComparison,
    MeasurableLine,
    _cap,
    _pct,
)
from pinlib.present.widgets.markup import BLOCK, e


@value_class(frozen=True)
class BenchReading:
    """The bench panel's answer: a rise time measured on the board turned into Cb.

    Attributes
    ----------
    t_measured : float
        The rise time read on the oscilloscope. [s]
    c_probe : float
        The probe's capacitance. [F]
    levels : tuple of float
        The measuring levels as fractions of VDD. [1]
    rp : float
        The pull-up on the line (the engine's nominal value: on an I2C or SMBus line
        every pull-up on it in parallel). [Ω]
    cb : float
        Bus capacitance without the probe. [F]
    rise : float
        The rise time between the same levels without the probe. [s]
    cb_model : float
        The engine's bus capacitance of the line, for comparison. [F]
    comparison : BenchComparison
        ``pinlib measured``'s answer (:func:`pinlib.engines.bench.compare_rise`) on the
        line, which ``rp``, ``cb``, ``rise`` and ``cb_model`` are taken from: on SDA of
        the bus built in the workbench as on a saved design's line.
    line : MeasurableLine or None
        The line of a saved design the reading was taken on; None on SDA of the bus
        built in the workbench.
    """

    t_measured: float
    c_probe: float
    levels: tuple
    rp: float
    cb: float
    rise: float
    cb_model: float
    comparison: BenchComparison
    line: MeasurableLine | None = None


#: The space between a number and its unit ("23 pF", "10 kΩ", "10 %"), which the panel's
#: text keeps unbroken (a no-break space), as the command's wrapping does.
_NUMBER_UNIT = re.compile(r"(\d) (?=(?:[afpnµmkMGT]?(?:F|Ω|s|V)|%)(?![A-Za-z]))")


def _held(text: str) -> str:
    return _NUMBER_UNIT.sub("\\1\u00a0", text)


def comparison_html(got: BenchComparison, place: str | None = None) -> str:
    """``pinlib measured``'s answer on a line, as the bench panel shows it: the
    reading's Cb and its range, the model's Cb and its contributions, the rise without
    the probe, the verdict and what to revisit (the command's own sentences).  ``place``
    names the line (``got.place()``, as the command names it, by default)."""
    f = format_si
    lo, hi = got.levels

    parts = ", ".join(f"{k} {_cap(v)}" for k, v in got.contributions.items())
    place = got.place() if place is None else place
    # on an I2C or SMBus line the engine's Rp is every pull-up on the line in parallel
    which = ("" if got.segment is None else
             f"; every pull-up on {got.signal.upper()} in parallel")
    text = (
        f"{e(place[0].upper() + place[1:])}, with Rp = {e(f(got.rp, 'Ω'))} "
        f"(±{e(_pct(got.rp_tolerance))}{e(which)}): bus capacitance without the probe "
        f"<b>{e(_cap(got.cb))}</b> ({e(_cap(got.cb_low))} to {e(_cap(got.cb_high))} "
        f"over the pull-up's tolerance and a ±{e(_pct(READING_TOLERANCE))} reading, "
        f"common practice); the model's Cb <b>{e(_cap(got.cb_model))}</b> ({e(parts)})")
    if got.rise_alone is not None:
        text += (f"; rise time without the probe <b>{e(f(got.rise_alone, 's'))}</b> "
                 f"({_pct(lo).removesuffix(' %')}–{_pct(hi)}, as measured)")
    out = f'<div style="{BLOCK};font-size:12px">{_held(text)}.</div>'
    out += "".join(f'<div style="{BLOCK};font-size:12px">Note: {_held(e(n))}</div>'
                   for n in got.notes)
    verdict = got.verdict_text()
    out += (f'<div style="{BLOCK};font-size:12px;margin-top:2px">'
            f"<b>{e(verdict[0].upper() + verdict[1:])}</b></div>")
    if got.revisit:
        out += (f'<ul style="{BLOCK};font-size:12px;margin:2px 0;padding-left:18px">'
                + "".join(f"<li>{_held(e(r))}</li>" for r in got.revisit) + "</ul>")
    return out
