"""The protocols a bus may carry, in one table: family, engine, and the pin function of
each signal.

Every other module asks here: the design loader which protocols exist and which signals
a bus may route, the library which pin functions a part may declare, the dispatcher
(:mod:`pinlib.engines.dispatch`) which engine evaluates a bus, the studies and the
presentation whether a bus is open-drain or push-pull.  A new protocol is a row here, an
engine module, and the dispatcher's import of it.
"""

from __future__ import annotations

from pinlib.core.valueclass import value_class

__all__ = [
    "OPEN_DRAIN",
    "PUSH_PULL",
    "Protocol",
    "PROTOCOLS",
    "NAMES",
    "OPEN_DRAIN_PROTOCOLS",
    "PUSH_PULL_PROTOCOLS",
    "PIN_FUNCTIONS",
    "SIGNAL_FUNCTION",
    "protocol",
    "is_open_drain",
    "SPI_MODE_NUMBERS",
    "spi_modes_in_common",
]

#: The two families: a wired-AND line with pull-ups, or lines driven both ways.
OPEN_DRAIN = "open-drain"
PUSH_PULL = "push-pull"


@value_class(frozen=True)
class Protocol:
    """One protocol.

    Attributes
    ----------
    name : str
        As a design file writes it (``protocol = "i2c"``).
    family : str
        :data:`OPEN_DRAIN` or :data:`PUSH_PULL`.
    engine : str
        The module that evaluates its buses (``evaluate_bus(bus, design)``); the
        dispatcher imports it by this name in plain code.
    signals : tuple of (str, str)
        Each named signal and the pin function it uses, in drawing order.
    other_signals : str or None
        The pin function of a signal the table does not name (a GPIO bus names its lines
        freely); None when only the named signals exist.
    device_needs : tuple of str
        The pin functions every device on such a bus has (the design loader refuses a
        part without one): an I2C device SDA and SCL, an SPI peripheral SCLK.
    """

    name: str
    family: str
    engine: str
    signals: tuple[tuple[str, str], ...]
    other_signals: str | None = None
    device_needs: tuple[str, ...] = ()

    @property
    def open_drain(self) -> bool:
        return self.family == OPEN_DRAIN

    @property
    def signal_names(self) -> tuple[str, ...]:
        """The named signals, in order."""
        return tuple(sig for sig, _ in self.signals)

    @property
    def functions(self) -> tuple[str, ...]:
        """The pin functions the protocol puts on a bus, each once, in order."""
        out = [fn for _, fn in self.signals]
        if self.other_signals is not None:
            out.append(self.other_signals)
        return tuple(dict.fromkeys(out))

    def function(self, signal: str) -> str | None:
        """The pin function of ``signal``; None for a signal the protocol does not have."""
        return dict(self.signals).get(signal, self.other_signals)


_I2C_SIGNALS = (("sda", "i2c-sda"), ("scl", "i2c-scl"))
_SPI_SIGNALS = (("sclk", "spi-sclk"), ("copi", "spi-copi"), ("cipo", "spi-cipo"),
                ("cs", "spi-cs"))

#: Every protocol, by name, in the order the design format lists them.
PROTOCOLS: dict[str, Protocol] = {p.name: p for p in (
    Protocol("i2c", OPEN_DRAIN, "pinlib.engines.opendrain", _I2C_SIGNALS,
             device_needs=("i2c-sda", "i2c-scl")),
    Protocol("smbus", OPEN_DRAIN, "pinlib.engines.opendrain", _I2C_SIGNALS,
             device_needs=("i2c-sda", "i2c-scl")),
    Protocol("spi", PUSH_PULL, "pinlib.engines.pushpull", _SPI_SIGNALS,
             device_needs=("spi-sclk",)),
    Protocol("gpio", PUSH_PULL, "pinlib.engines.pushpull", (), other_signals="gpio"),
)}

NAMES: tuple[str, ...] = tuple(PROTOCOLS)
OPEN_DRAIN_PROTOCOLS: tuple[str, ...] = tuple(n for n, p in PROTOCOLS.items() if p.open_drain)
PUSH_PULL_PROTOCOLS: tuple[str, ...] = tuple(n for n, p in PROTOCOLS.items()
                                             if p.family == PUSH_PULL)
#: Every pin function a part may declare, each once.
PIN_FUNCTIONS: tuple[str, ...] = tuple(dict.fromkeys(fn for p in PROTOCOLS.values()
                                                     for fn in p.functions))
#: The pin function of each named signal, over all protocols (a signal name means one
#: function wherever it appears).
SIGNAL_FUNCTION: dict[str, str] = {sig: fn for p in PROTOCOLS.values() for sig, fn in p.signals}


def protocol(name: str) -> Protocol:
    """The protocol called ``name`` (a ``KeyError`` for one that does not exist: the
    design loader admits only :data:`NAMES`)."""
    return PROTOCOLS[name]


#: The SPI clock modes, CPOL·2 + CPHA.
SPI_MODE_NUMBERS = (0, 1, 2, 3)


def spi_modes_in_common(mode_lists) -> tuple[int, ...]:
    """The SPI modes in every one of ``mode_lists`` (each the modes a part states), in
    order; all four for no list."""
    common = set(SPI_MODE_NUMBERS)
    for modes in mode_lists:
        common &= set(modes)
    return tuple(sorted(common))


def is_open_drain(name: str) -> bool:
    """Whether buses of protocol ``name`` are open-drain (False for an unknown name)."""
    p = PROTOCOLS.get(name)
    return p is not None and p.open_drain
