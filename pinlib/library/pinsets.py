"""What a part that loads still lacks to be of use on a bus: warnings, not errors.

- A pin table with some pins of a protocol but not every pin a device on such a bus
  needs (:attr:`pinlib.core.protocols.Protocol.device_needs`: SDA without SCL): the
  design loader refuses to place the part on that bus.
- An open-drain pin without ``v_ol`` and ``i_ol`` (a GPIO's, an interrupt's): its low
  level and sink current are checked against no rating of the part.  Not an I2C or
  SMBus pin: its bus takes the specification's sink point for its rail and mode in
  their place, and says so in its notes.

``pinlib parts check`` and ``pinlib parts import`` print them as warnings (the part is
valid: ``parts check`` does not count them as problems).
Abstract classes are left out: the parts that extend them complete them.
"""

from __future__ import annotations

from pinlib.core import messages as M
from pinlib.core.errors import LibraryError
from pinlib.core.protocols import OPEN_DRAIN_PROTOCOLS, PROTOCOLS
from pinlib.library.schema import Part

__all__ = ["pin_set_warnings"]


#: Pin functions whose bus takes the specification's sink point where the part states
#: none (UM10204 table 9 for the bus's rail and mode; SMBus 3.1 table 4), and says so
#: in its result: a pin without v_ol/i_ol is complete there (the built-in generic I2C
#: target states none, as the specification's point depends on the rail).
_SPEC_SINK = frozenset(fn for name in OPEN_DRAIN_PROTOCOLS for fn in PROTOCOLS[name].functions)


def _needs() -> dict[tuple[str, ...], list[str]]:
    """The protocols by the pin functions every device of theirs needs (I2C and SMBus
    share theirs: one warning for both)."""
    out: dict[tuple[str, ...], list[str]] = {}
    for name, proto in PROTOCOLS.items():
        if proto.device_needs:
            out.setdefault(proto.device_needs, []).append(name)
    return out


def pin_set_warnings(part: Part, pf=None, *, every_sink: bool = False) -> list[LibraryError]:
    """The part's incomplete pin sets and open-drain pins without a sink point, each
    naming the part's file (``pf``, a :class:`~pinlib.library.loader.PartFile`), the
    line and the field.  ``every_sink``: an I2C/SMBus pin's too (an IBIS import, whose
    model holds the sink the specification's point would stand in for)."""
    if part.abstract:
        return []
    out: list[LibraryError] = []

    def where(path: tuple) -> dict:
        if pf is None:
            return {"field": ".".join(path)}
        return {"file": str(pf.path), "line": pf.line(path), "field": ".".join(path)}

    tables = [(("pins",), part.pins)] + [(("sides", s, "pins"), side.pins)
                                        for s, side in part.sides.items()]
    for prefix, pins in tables:
        have = {pin.function: name for name, pin in reversed(pins.items())}
        for needs, names in _needs().items():
            present = [fn for fn in PROTOCOLS[names[0]].functions if fn in have]
            lacking = [fn for fn in needs if fn not in have]
            if not present or not lacking:
                continue
            out.append(LibraryError(
                M.PIN_SET_INCOMPLETE.format(protocols="/".join(names),
                                            have=", ".join(present),
                                            lack=" and ".join(lacking)),
                expected=M.PIN_SET_RULE.format(needs=" and ".join(needs)),
                **where(prefix + (have[present[0]],))))
        for name, pin in pins.items():
            if pin.drive != "open-drain" or (pin.v_ol is not None and pin.i_ol is not None):
                continue
            if pin.function in _SPEC_SINK and not every_sink:  # its bus takes the
                continue                                            # specification's
            missing = " and ".join(f for f in ("v_ol", "i_ol") if getattr(pin, f) is None)
            out.append(LibraryError(M.OPEN_DRAIN_NO_SINK_POINT.format(missing=missing),
                                    expected=M.SINK_POINT_RULE, **where(prefix + (name,))))
    return out
