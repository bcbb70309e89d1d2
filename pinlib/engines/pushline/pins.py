"""A pin on a push-pull line (:class:`Endpoint`), the supply of its device, whether a part
bridges, and a flight time (:class:`Flight`)."""

from __future__ import annotations

from dataclasses import replace

from pinlib.core.valueclass import value_class
from pinlib.library.schema import Pin
from pinlib.model.design import Bus, Device, Line


@value_class(frozen=True)
class Endpoint:
    """One pin of one device on a line, at that device's supply.

    Attributes
    ----------
    device : Device
        The device on the bus. [1]
    pin_name : str
        Name of the pin in its part class. [1]
    pin : Pin
        The pin's data. [1]
    vdd : float
        The device's supply (its own rail, else the bus supply). [V]
    """

    device: Device
    pin_name: str
    pin: Pin
    vdd: float

    @property
    def ref(self) -> str:
        return self.device.ref

    @property
    def label(self) -> str:
        return f"{self.device.ref}.{self.pin_name}"

    @property
    def c_in(self) -> float:
        """The pin's capacitance (times the device's drawn factor on a varied board). [F]"""
        if self.pin.c_in is None:
            return 0.0
        return float(self.pin.c_in.at()) * self.device.capacitance_factor

    @property
    def drives(self) -> bool:
        return self.pin.drive in ("push-pull", "open-drain")

    def level(self, name: str) -> float | None:
        """A level of the pin (``v_il``, ``v_ih``, ``abs_max``...) at its supply. [V]"""
        got = getattr(self.pin, name)
        return None if got is None else float(got.at(self.vdd))

    def source(self, name: str) -> str:
        """Where the pin's value ``name`` comes from, for a check's ``source``."""
        got = getattr(self.pin, name, None)
        part = self.device.part
        origin = got.origin if got is not None and got.origin else self.device.part_id
        if got is not None and got.source:
            text = got.source
        elif got is not None and origin != self.device.part_id:
            # inherited without a source of its own: the value's basis and the file that
            # set it, never the placed part's provenance
            text = got.provenance_text()
        else:
            text = part.provenance.source or part.provenance.basis
        return f"{origin} {name}: {text}"


@value_class(frozen=True)
class Flight:
    """Earliest and latest flight of an edge (or a set of edges) to one input.

    Attributes
    ----------
    early, late : float
        From the driver's datasheet reference (its pin crossing 50 % of its swing into
        its ``test_load``) to the input's first / last possible switching point:
        VIL then VIH on a rise, VIH then VIL on a fall; at the driver's slow corner. [s]
    fast_early, fast_late : float or None
        The same at the driver's fast corner, from its reference at that corner (its
        pin's crossing into ``test_load`` with the fast corner's drive), where its part
        states one (``pins.<name>.fast``); None: no fast corner, the slow corner's
        stand. [s]
    """

    early: float
    late: float
    fast_early: float | None = None
    fast_late: float | None = None

    def at_fast(self) -> Flight:
        """The flight at the driver's fast corner (early and late from it), or this
        flight where the driver states no fast corner. [s]"""
        if self.fast_early is None:
            return self
        return Flight(self.fast_early, self.fast_late)


def device_supply(device: Device, bus: Bus) -> float:
    """The supply a device runs from.

    Parameters
    ----------
    device : Device
        A device of the bus. [1]
    bus : Bus
        The bus. [1]

    Returns
    -------
    float
        The device's own rail when the design gives one, else the bus supply. [V]
    """
    return float(device.supply if device.supply is not None else bus.supply)


def pulled_to_bus(line: Line, bus: Bus) -> Line:
    """The line with its own pull-up's rail set to the bus supply.

    Parameters
    ----------
    line : Line
        A line of the bus (a GPIO or an SPI line, its own ``pullup`` or none). [1]
    bus : Bus
        The bus, its supply as varied on this board. [1]

    Returns
    -------
    Line
        ``line`` with ``pullup_rail`` the bus supply where it has a pull-up; else
        ``line`` itself. [1]
    """
    return line if line.pullup is None else replace(line, pullup_rail=float(bus.supply))


def endpoint(device: Device, function: str, bus: Bus) -> Endpoint | None:
    """The pin of a device that serves a function, at the device's supply.

    Parameters
    ----------
    device : Device
        A device of the bus. [1]
    function : str
        Pin function, e.g. ``"spi-sclk"``. [1]
    bus : Bus
        The bus (for its supply). [1]

    Returns
    -------
    Endpoint or None
        The pin (side ``a`` of a bridging part unless the device names its side), or
        None when the part has no such pin.
    """
    got = device.part.pin_for(function, device.part_side)
    if got is None:
        return None
    return Endpoint(device, got[0], got[1], device_supply(device, bus))


def is_bridge(device: Device) -> bool:
    """Whether a device is a bridging part in the path of every signal.

    Parameters
    ----------
    device : Device
        A device of the bus. [1]

    Returns
    -------
    bool
        True for a part with ``[sides]`` or a ``[bridge]`` table, or a buffer,
        translator or isolator class with a ``t_pd``. [1]
    """
    p = device.part
    return bool(p.sides) or p.bridge is not None or (
        p.category in ("buffer", "translator", "isolator") and p.timing.t_pd is not None)
