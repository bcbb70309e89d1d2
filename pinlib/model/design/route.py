"""A push-pull line's ``route``: stretches between named points (devices on the line and
junctions) that must form one tree holding every device on the line exactly once."""

from __future__ import annotations

import re
from collections.abc import Callable, Sequence

from pinlib.core import messages as M
from pinlib.core.errors import DesignError
from pinlib.core.labels import and_list
from pinlib.core.protocols import SIGNAL_FUNCTION
from pinlib.core.worklimits import MAX_ROUTE_STRETCHES
from pinlib.library.schema import Pin
from pinlib.model.design.objects import Device, Section
from pinlib.model.design.raw import RawTrace


def on_line(device: Device, protocol: str, signal: str, n_lines: int) -> bool:
    """Whether a device of a push-pull bus has a pin on one of its lines: on SPI a pin of
    the signal's function; on GPIO by :func:`gpio_pin` (a ``pin`` naming one the part
    lacks puts the device on the line: the loader refuses that pin at the device)."""
    if protocol == "spi":
        return device.part.pin_for(SIGNAL_FUNCTION[signal], device.part_side) is not None
    try:
        return gpio_pin(device, signal, n_lines) is not None
    except DesignError:
        return True


def gpio_pin(device: Device, signal: str, n_lines: int) -> tuple[str, Pin] | None:
    """The pin of a device on a GPIO line: the device's ``pin`` (on a bus of one line,
    or naming this line), else a pin named like the line, else on a bus of one line
    the part's only pin of function ``gpio`` (:mod:`pinlib.engines.pushpull` uses it).

    Parameters
    ----------
    device : Device
        A device of the bus. [1]
    signal : str
        The line's name. [1]
    n_lines : int
        How many lines the bus routes. [1]

    Returns
    -------
    tuple of (str, Pin) or None
        The pin's name and data, or None when the device is not on the line.

    Raises
    ------
    DesignError
        When the device names a pin its part does not have.
    """
    pins = device.part_pins
    if device.pin is not None and (n_lines == 1 or device.pin == signal):
        if device.pin not in pins:
            raise DesignError(M.NO_SUCH_PIN, field="pin",
                              value=device.pin, hint="pins: " + ", ".join(pins))
        return device.pin, pins[device.pin]
    if signal in pins:
        return signal, pins[signal]
    if n_lines == 1:
        gp = [(n, p) for n, p in pins.items() if p.function == "gpio"]
        if len(gp) == 1:
            return gp[0]
    return None


def _root(parent: dict, x: str) -> str:
    """The representative of a point's joined set (a loop, not recursion: a route holds at
    most :data:`MAX_ROUTE_STRETCHES` stretches)."""
    while parent[x] != x:
        parent[x] = parent[parent[x]]
        x = parent[x]
    return x


def _joined_by(points: Sequence[tuple[str, str]], a: str, b: str) -> list[int]:
    """The indices of the stretches among ``points`` that lead from ``a`` to ``b`` (they
    form a tree, so one path), in order along it; empty when ``a`` is ``b``."""
    came: dict[str, tuple[str, int] | None] = {a: None}
    todo = [a]
    while todo and b not in came:
        p = todo.pop(0)
        for i, (x, y) in enumerate(points):
            for u, v in ((x, y), (y, x)):
                if u == p and v not in came:
                    came[v] = (p, i)
                    todo.append(v)
    path: list[int] = []
    while came.get(b) is not None:
        b, i = came[b]
        path.append(i)
    return path[::-1]


def _loop_hint(points: Sequence[tuple[str, str]], i: int) -> str:
    """What closes the loop at stretch ``i``: the point joined to itself, the same two
    points written twice, or the earlier stretches that already join them."""
    a, b = points[i]
    fix = "a route is a tree: drop this stretch or end it at a new junction"
    if a == b:
        return f"a stretch from {a} to itself; {fix}"
    path = _joined_by(points[:i], a, b)
    if len(path) == 1:
        return (f"route[{path[0]}] already joins {a} and {b} (the same stretch written "
                f"twice?); {fix}")
    way = [f"route[{k}] ({points[k][0]} to {points[k][1]})" for k in path]
    return f"{a} and {b} are already joined by {and_list(way)}; {fix}"


def _check_tree(points: Sequence[tuple[str, str]], loc, err) -> None:
    """The stretches join their points into one tree: none closes a loop (a stretch whose
    two points are already joined, itself included; the hint names the stretches that
    join them), none is left apart."""
    parent: dict[str, str] = {}
    for i, (a, b) in enumerate(points):
        for p in (a, b):
            parent.setdefault(p, p)
        ra, rb = _root(parent, a), _root(parent, b)
        if ra == rb:
            raise err(M.ROUTE_CLOSES_LOOP, loc + (i, "to"), value=f"{a} to {b}",
                      hint=_loop_hint(points, i))
        parent[ra] = rb
    first = _root(parent, points[0][0])
    for i, (a, _b) in enumerate(points):
        if _root(parent, a) != first:
            raise err(M.ROUTE_NOT_CONNECTED, loc + (i, "from"), value=a,
                      expected=f"a stretch from a point joined to {points[0][0]}")


def route_of(rt: RawTrace, loc, devices: Sequence[Device], protocol: str, signal: str,
             n_lines: int, sections: Callable, err,
             homes: dict | None = None) -> tuple[tuple[Section, ...],
                                                 tuple[tuple[str, str], ...]]:
    """The sections of a routed line and their (from, to) points, index by index.

    Parameters
    ----------
    rt : RawTrace
        The line's table, with its ``route``. [1]
    loc : tuple
        Its place in the file (``("bus", 0, "lines", "sclk")``). [1]
    devices : sequence of Device
        Every device of the bus. [1]
    protocol, signal : str
        The bus's protocol and the line's signal. [1]
    n_lines : int
        How many lines the bus routes (the GPIO pin rule). [1]
    sections : callable
        The resolver's ``sections(raw_stretch, loc)``. [1]
    err : callable
        The resolver's error builder, ``err(problem, loc, **kw)``. [1]
    homes : dict, optional
        The bus of every reference designator of the design. [1]

    Raises
    ------
    DesignError
        A route with another stretch form beside it, too many stretches, a loop, a part
        left apart, a device of the bus not on the line at a point, a device of another
        bus at a point, or a device on the line at no point; each naming the file, line
        and field.
    """
    route = rt.route
    rloc = loc + ("route",)
    if rt.sections or rt.length is not None or rt.geometry or rt.capacitance or rt.part:
        raise err(M.ROUTE_OR_STRETCH, rloc)
    if len(route) > MAX_ROUTE_STRETCHES:  # before building any of them
        n_on = sum(on_line(d, protocol, signal, n_lines) for d in devices)
        hint = ("join stretches of one geometry between the same two devices"
                if n_on <= MAX_ROUTE_STRETCHES + 1 else
                # every device is a point of the route: it cannot hold them all
                f"the line has {n_on:,} devices, and a route of {MAX_ROUTE_STRETCHES:,} "
                f"stretches joins at most {MAX_ROUTE_STRETCHES + 1:,} points: give the line "
                "as one stretch or as sections (every device at the far end) instead")
        raise err(M.TOO_MANY_ROUTE_STRETCHES, rloc, value=f"{len(route):,} stretches",
                  expected=f"at most {MAX_ROUTE_STRETCHES:,} stretches", hint=hint)
    points = tuple((s.from_, s.to) for s in route)
    out = []
    for i, s in enumerate(route):
        out.extend(sections(s, rloc + (i,)))
    _check_tree(points, rloc, err)
    on = {d.ref for d in devices if on_line(d, protocol, signal, n_lines)}
    of_bus = {d.ref for d in devices}
    for i, pair in enumerate(points):
        for key, p in zip(("from", "to"), pair, strict=True):
            if p in of_bus and p not in on:
                raise err(M.ROUTE_DEVICE_NOT_ON_LINE, rloc + (i, key), value=p,
                          hint=f"it has no pin on {signal}; name a junction otherwise "
                               "(a name that is no device of the bus)")
            if p not in of_bus and p in (homes or {}):
                # read as a junction it would leave the device off the line unnoticed
                raise err(M.ROUTE_DEVICE_OF_OTHER_BUS, rloc + (i, key), value=p,
                          expected="a device of this bus, or a junction named like no "
                                   "device of the design",
                          hint=f"{p} sits on bus {homes[p]}; to load this line, list it "
                               "in this bus's devices too (one ref is one chip, on as "
                               "many buses as it is wired to)")
    named = {p for pair in points for p in pair}
    for d in devices:
        if d.ref in on and d.ref not in named:
            # a misspelt ref reads as a junction: name the route's points most like it
            from pinlib.core.nearby import closest

            near = closest(d.ref, sorted(named - of_bus))
            # a name with spaces around it is quoted: unquoted they did not show
            shown = (f"'{near[0]}' (spaces around it)" if near and near[0] != near[0].strip()
                     else near[0] if near else "")
            raise err(M.ROUTE_MISSES_DEVICE, rloc, value=d.ref,
                      expected=f"a stretch from or to {d.ref}",
                      hint=(f"the route's point {shown} names no device of the bus "
                            f"(a junction): {d.ref} misspelt?") if near else None)
    return tuple(out), points


#: A reference designator's form: letters, then digits ("U7", "J12").
_REF_FORM = re.compile(r"([A-Za-z]+)([0-9]+)")


def look_alikes(points: Sequence[tuple[str, str]], devices: Sequence[Device], protocol: str,
                signal: str, n_lines: int, homes: dict | None = None
                ) -> tuple[tuple[str, str], ...]:
    """The junctions of a route whose names look like a device slipped out of place, for
    the line's notes (a point is a device by its exact reference designator alone, and a
    junction may be named anything, so neither is refused).

    Two kinds, chosen to stay quiet on junctions named as junctions (``"T1"``, ``"S"``,
    ``"TP3"`` beside devices ``U1``...):

    * a name that is a device's of the design but for its case (``"u5"`` for ``U5``),
      wherever it stands: no junction is meant to be named so; ``(name, "U5")``;
    * a junction in the middle of the route (joined by two stretches or more: an end is
      named by the open-stub note) named with the letters of a device on the line, then
      digits (``"U7"`` beside ``U1``...``U4``), that names no device of the design:
      most likely a device missing from the bus's list; ``(name, "")``.

    Parameters
    ----------
    points : sequence of (str, str)
        The route's (from, to) points. [1]
    devices : sequence of Device
        Every device of the bus. [1]
    protocol, signal : str
        The bus's protocol and the line's signal. [1]
    n_lines : int
        How many lines the bus routes (the GPIO pin rule). [1]
    homes : dict, optional
        The bus of every reference designator of the design. [1]

    Returns
    -------
    tuple of (str, str)
        Each such junction once, in the route's order, with the device it is like. [1]
    """
    of_bus = {d.ref for d in devices}
    refs = of_bus | set(homes or {})
    by_case = {r.casefold(): r for r in sorted(refs)}
    on = [d.ref for d in devices if on_line(d, protocol, signal, n_lines)]
    letters = {m.group(1).casefold() for m in map(_REF_FORM.fullmatch, on) if m}
    count: dict[str, int] = {}
    for pair in points:
        for p in pair:
            count[p] = count.get(p, 0) + 1
    out: dict[str, str] = {}
    for p in count:
        if p in refs:
            continue  # a device (the loader has refused one not on this line)
        like = by_case.get(p.strip().casefold())
        if like is not None:
            out[p] = like
            continue
        m = _REF_FORM.fullmatch(p)
        if count[p] >= 2 and m and m.group(1).casefold() in letters:
            out[p] = ""
    return tuple(out.items())
