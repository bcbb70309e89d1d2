"""Generated SPI peripherals for the candidate tests and benchmark.

Every value here is invented for testing (labelled so in each part's title and
source): copies of the built-in SPI peripheral classes with their pin capacitance,
output resistance, edge rates, input thresholds and timing varied from part to part,
scattered by a fixed arithmetic rule so that no two neighbours are alike.
"""

from __future__ import annotations

from dataclasses import replace

from pinlib.library.schema import Part
from pinlib.library.values import Sourced

__all__ = ["BASES", "generated_spi_part", "add_generated"]

#: The built-in classes the generated parts are copies of.
BASES = ("nor-flash-spi", "adc-spi", "network-controller-spi", "display-controller-spi")

_SOURCE = "invented for testing (generated part, no source)"


def _scaled(s: Sourced | None, f: float) -> Sourced | None:
    if s is None:
        return None
    v = s.value
    if isinstance(v, (int, float)):
        return replace(s, value=float(v) * f, source=_SOURCE, typ=None)
    # a threshold relative to the supply: scale its fraction and offset
    return replace(s, value=replace(v, scale=v.scale * f, offset=v.offset * f),
                   source=_SOURCE, typ=None)


def generated_spi_part(base: Part, i: int) -> Part:
    """Part ``i``: ``base`` with its values varied (invented, see the module notes)."""
    fc = 0.4 + (i * 7919 % 1601) / 1000.0       # pin capacitance x0.4 .. x2.0
    fr = 0.5 + (i * 104729 % 1501) / 1000.0     # output resistance and edges x0.5 .. x2.0
    ft = 0.85 + (i * 1299709 % 301) / 1000.0    # thresholds x0.85 .. x1.15 (VIL up, VIH down
    fi = 0.9 + (i * 15485863 % 201) / 1000.0    # ... by their own factors)
    fs = 0.5 + (i * 32452843 % 2001) / 1000.0   # timing x0.5 .. x2.5
    pins = {}
    for name, pin in base.pins.items():
        upd = {"c_in": _scaled(pin.c_in, fc)}
        if pin.v_il is not None:
            upd["v_il"] = _scaled(pin.v_il, ft)
        if pin.v_ih is not None:
            upd["v_ih"] = _scaled(pin.v_ih, fi)
        if pin.r_out is not None:
            upd["r_out"] = _scaled(pin.r_out, fr)
        if pin.edges:
            upd["edges"] = [e.copy(**{"rise": _scaled(e.rise, fr),
                                                 "fall": _scaled(e.fall, fr * 1.1)})
                            for e in pin.edges]
        pins[name] = pin.copy(**{k: v for k, v in upd.items() if v is not None})
    tupd = {}
    for name in ("t_valid", "t_setup", "t_hold", "t_cs_setup", "t_cs_hold"):
        s = getattr(base.timing, name, None)
        if s is not None:
            tupd[name] = _scaled(s, fs)
    if base.timing.f_max is not None:
        tupd["f_max"] = _scaled(base.timing.f_max, 0.5 + (i % 7) * 0.25)
    return base.copy(**{
        "id": f"gen-spi-{i:05d}", "title": f"Generated SPI peripheral {i} (invented values)",
        "pins": pins, "timing": base.timing.copy(**tupd)})


def add_generated(library, n: int) -> list[str]:
    """Add ``n`` generated parts to a merged library; their ids."""
    ids = []
    for i in range(n):
        part = generated_spi_part(library.parts[BASES[i % len(BASES)]], i)
        library.parts[part.id] = part
        ids.append(part.id)
    return ids
