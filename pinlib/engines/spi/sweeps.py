"""The highest clock of an SPI bus against the length of its lines or a peripheral's ``t_valid``."""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.engines.spi.analysis import _finite_or_inf, spi_analysis
from pinlib.engines.spi.margins import max_clock
from pinlib.model.design import Bus, Design, Line


def _scaled_line(line: Line, length: float) -> Line:
    total = line.length
    if total <= 0:
        raise InputError(M.ZERO_LENGTH_NOT_SCALED, field=f"lines.{line.signal}")
    k = length / total
    return replace(line, sections=tuple(replace(s, length=s.length * k) for s in line.sections))


def max_clock_vs_length(bus: Bus, design: Design, lengths, signals=None) -> np.ndarray:
    """``max_clock`` of an SPI bus with its lines stretched or shortened.

    Parameters
    ----------
    bus : Bus
        An ``spi`` bus. [1]
    design : Design
        Its design. [1]
    lengths : array_like
        Total length given to each chosen line (its sections scaled in proportion). [m]
    signals : iterable of str, optional
        The lines to change; every routed line by default. [1]

    Returns
    -------
    numpy.ndarray
        The highest clock for each length (same shape as ``lengths``). [Hz]

    Notes
    -----
    Each length needs its own waveforms (the line delay sets the solver's grid), so
    this evaluates the lines once per length; the timing itself is closed form.
    """
    lengths = np.asarray(lengths, dtype=float)
    chosen = set(bus.lines) if signals is None else set(signals)
    out = np.empty(lengths.shape)
    for idx, length in np.ndenumerate(lengths):
        new_lines = {s: (_scaled_line(ln, float(length)) if s in chosen else ln)
                     for s, ln in bus.lines.items()}
        out[idx] = spi_analysis(replace(bus, lines=new_lines), design).max_clock()
    return out


def max_clock_vs_t_valid(bus: Bus, design: Design, t_valid, peripheral: str | None = None):
    """``max_clock`` of an SPI bus as one peripheral's ``t_valid`` varies.

    Parameters
    ----------
    bus : Bus
        An ``spi`` bus. [1]
    design : Design
        Its design. [1]
    t_valid : array_like
        Values of the peripheral's ``t_valid``. [s]
    peripheral : str, optional
        Its reference designator; the first peripheral by default. [1]

    Returns
    -------
    numpy.ndarray
        The highest clock for each ``t_valid``. [Hz]

    Notes
    -----
    ``t_valid`` enters only the CIPO setup term, linearly, so the waveforms are solved
    once and the whole array goes through :func:`pinlib.engines.max_clock`.
    """
    sa = spi_analysis(bus, design)
    tv = np.asarray(t_valid, dtype=float)
    ref = peripheral or (sa.peripherals[0].ref if sa.peripherals else None)
    known = {p.ref: p for p in sa.peripherals}
    if ref not in known:
        raise InputError(M.NO_SUCH_PERIPHERAL, field="peripheral", value=ref,
                         expected=", ".join(known) or "a peripheral")
    base = known[ref].t_valid
    a_cols, k_cols = [], []
    for t in sa.terms:
        k = _finite_or_inf(t.required - t.b)
        if t.id == "cipo-setup" and t.subject == ref:
            # k = t_setup + sclk_late + t_valid + cipo_late + t_path: shift by t_valid
            k = k + (tv - base)
        a_cols.append(np.full(tv.shape, t.a))
        k_cols.append(np.broadcast_to(np.asarray(k, dtype=float), tv.shape))
    if ref in known and base is None:
        raise InputError(M.NO_T_VALID_TO_VARY, field="t_valid",
                         value=ref)
    f_lim = min([f for _, f, _ in sa.f_limits], default=math.inf)
    if not a_cols:
        return np.full(tv.shape, f_lim)
    return max_clock(np.stack(a_cols, axis=-1), np.stack(k_cols, axis=-1), f_lim)
