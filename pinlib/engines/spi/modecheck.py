"""The SPI mode of a bus against the modes each of its parts states (check ``spi-mode``).

A datasheet says which clock modes (CPOL/CPHA, modes 0 to 3) a part works in; many
peripherals take modes 0 and 3 only.  A part that states ``timing.spi_modes`` is checked:
the bus's ``spi_mode`` among them passes, any other fails (the datasheet's own limit).
A part that states none is not checked; a note names it where the part states SPI timing
(so a datasheet it came from would say its modes too; a connector or a buffer that
states no timing passes every mode unnamed).  The list's source is the provenance of
the part file that states it (a class the part extends, where the part does not restate
it).
"""

from __future__ import annotations

from pinlib.core.labels import and_list
from pinlib.core.protocols import spi_modes_in_common
from pinlib.model.design import Bus
from pinlib.model.result import Check, check_true

__all__ = ["ModeLimit", "mode_limits", "mode_checks", "modes_text"]

#: (ref, the modes its part states, the source of that list)
ModeLimit = tuple[str, tuple[int, ...], str]


def modes_text(modes) -> str:
    """``(0, 3)`` -> ``"0 and 3"``; ``(0, 1, 3)`` -> ``"0, 1 and 3"``; ``(2,)`` -> ``"2"``."""
    return and_list(sorted(modes))


#: The timing fields whose presence says a part's SPI data came from a datasheet that
#: states its modes too.
_SPI_TIMING = ("f_max", "t_valid", "t_setup", "t_hold", "t_cs_setup")


def mode_limits(devices) -> tuple[list[ModeLimit], list[str]]:
    """The modes each device's part states, and the refs of those that state SPI timing
    but no modes."""
    limits, silent = [], []
    for d in devices:
        timing = d.part.timing
        modes = timing.spi_modes
        if modes is None:
            if any(getattr(timing, n) is not None for n in _SPI_TIMING):
                silent.append(d.ref)
        else:
            limits.append((d.ref, tuple(modes), modes.cited("spi_modes")))
    return limits, silent


def mode_checks(bus: Bus, limits: list[ModeLimit]) -> list[Check]:
    """One ``spi-mode`` check per device that states its modes (subject: its ref)."""
    mode = int(bus.spi_mode)
    common = spi_modes_in_common(modes for _, modes, _ in limits)
    if common:
        fix = (f"set spi_mode to {and_list(common, 'or')}, a mode every part on the bus "
               "states")
    else:
        each = "; ".join(f"{ref} {modes_text(m)}" for ref, m, _ in limits)
        fix = (f"no mode suits every part ({each}): a controller that changes mode per "
               "chip select runs each peripheral in its own mode; check each in its mode "
               "on a bus of its own in the design")
    out = []
    for ref, modes, source in limits:
        ok = mode in modes
        word = "one of" if ok else "not one of"
        out.append(check_true(
            "spi-mode", ok, source,
            f"SPI mode {mode} is {word} {ref}'s modes ({modes_text(modes)})",
            subject=ref, fix=fix, details={"mode": mode, "modes": list(modes)}))
    return out
