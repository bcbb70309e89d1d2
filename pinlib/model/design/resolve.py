"""The references of a design file resolved: parts against the library, geometry names against
``[board.geometry]``; devices, sections and cables built from the raw tables."""

from __future__ import annotations

import math
import warnings

from pinlib.core import messages as M
from pinlib.core.errors import DesignError, PinlibError
from pinlib.core.quantity import format_si
from pinlib.core.tomlfile import dotted as dotted_path
from pinlib.core.tomlfile import line_of
from pinlib.core.worklimits import (
    MAX_SECTIONS_PER_LINE,
)
from pinlib.library.loader import Library
from pinlib.library.schema import Part, line_z0_problem
from pinlib.model.design.objects import Cable, Device, Geometry, Section
from pinlib.model.design.raw import RawDesign, RawDevice, RawSection, RawTrace


class _Resolver:
    """The references of one design file resolved: parts against the library, geometry
    names against ``[board.geometry]``; devices, sections and cables built from the raw
    tables.  Every error names the file, line and field."""

    def __init__(self, library: Library, fname: str | None, index: dict, swaps: dict):
        self.library = library
        self.fname = fname
        self.index = index
        self.swaps = swaps
        self.swapped: set[str] = set()
        self.geometries: dict[str, Geometry] = {}
        self.checked: set[str] = set()  # geometries a section uses whose impedance holds

    def err(self, problem, loc, **kw):
        dotted = dotted_path(loc)
        value = kw.get("value")
        if loc and loc[-1] == "part" and isinstance(value, str) \
                and value in self.library.overrides and value in self.library.files:
            # the part placed is a team file's, not the built-in part of that id: name it
            note = M.TEAM_OVERRIDE_PLACED.format(part=value,
                                                 file=self.library.path_of(value))
            kw["hint"] = "; ".join(h for h in (kw.get("hint"), note) if h)
        return DesignError(problem, file=self.fname, line=line_of(self.index, loc),
                           field=dotted, **kw)

    def part_of(self, part_id: str, loc) -> Part:
        # A part whose file does not validate is the library's error at that file (it
        # names this place); an unknown id is this file's error.
        try:
            return self.library.get(part_id, file=self.fname, line=line_of(self.index, loc),
                                    field=dotted_path(loc))
        except PinlibError as e:
            if e.problem != M.UNKNOWN_PART:
                raise
            # a team part looked for where no team folder was named (a shell without
            # PINLIB_LIBRARY) reads as a misspelt id unless the folders read are named
            folders = ", ".join(str(f) for f in self.library.team_folders())
            hint = "; ".join(h for h in (e.hint, M.DESIGN_TEAM_FOLDERS.format(
                folders=folders or M.NO_TEAM_FOLDERS)) if h)
            raise self.err(M.UNKNOWN_PART, loc, value=part_id, hint=hint) from None

    def device(self, d: RawDevice, loc) -> Device:
        err = self.err
        part_id = self.swaps.get(d.ref, d.part)
        if d.ref in self.swaps:
            self.swapped.add(d.ref)
        part = self.part_of(part_id, loc + ("part",))
        if part.abstract:
            raise err(M.ABSTRACT_ON_BOARD, loc + ("part",),
                      value=part_id, hint="place a part that extends it, or `pinlib parts new`")
        if part.category == "cable":
            raise err(M.CABLE_AS_DEVICE, loc + ("part",),
                      value=part_id)
        if d.supply is not None and not d.supply > 0:
            raise err(M.SUPPLY_NOT_POSITIVE, loc + ("supply",), value=format_si(d.supply, "V"))
        role = "peripheral" if d.role == "target" else d.role
        return Device(d.ref, part_id, part, role, d.supply, bool(d.switched), d.series_resistor,
                      d.side, d.internal_pullups, d.pin, d.capacitance_tolerance, loc)

    def too_many_sections(self, count, loc):
        return self.err(M.TOO_MANY_SECTIONS, loc, value=f"{count:,} sections",
                        expected=f"at most {MAX_SECTIONS_PER_LINE:,} sections",
                        hint="join stretches of one geometry into one (their lengths add up)")

    def sections(self, t: RawTrace | RawSection | None, loc) -> tuple[Section, ...]:
        if t is None:
            return ()
        err = self.err
        if getattr(t, "route", ()):  # a push-pull line's route is read by .route
            raise err(M.ROUTE_ON_OPEN_DRAIN, loc + ("route",),
                      hint="give its devices one trace; a route is for SPI and GPIO lines")
        subs = getattr(t, "sections", ())
        if subs:
            if t.length is not None or t.geometry or t.capacitance or t.part:
                raise err(M.SECTIONS_OR_STRETCH, loc + ("sections",))
            if len(subs) > MAX_SECTIONS_PER_LINE:  # before building any of them
                raise self.too_many_sections(len(subs), loc + ("sections",))
            out: list[Section] = []
            for i, s in enumerate(subs):
                out.extend(self.sections(s, loc + ("sections", i)))
            return tuple(out)
        if t.length is None:
            raise err(M.TRACE_NEEDS_LENGTH, loc + ("length",))
        if t.part:
            return (self._cable_section(t, loc),)
        if t.geometry:
            geometries = self.geometries
            if t.geometry not in geometries:
                raise err(M.UNKNOWN_GEOMETRY, loc + ("geometry",), value=t.geometry,
                          hint="defined: " + (", ".join(geometries) or "none; add "
                                              "[board.geometry.NAME]"))
            if t.capacitance is not None or t.delay is not None:
                raise err(M.GEOMETRY_OR_PER_LENGTH, loc + ("capacitance",))
            if t.geometry not in self.checked:
                _check_impedance(geometries[t.geometry], self.err)
                self.checked.add(t.geometry)
            return (Section(t.length, geometries[t.geometry], loc=tuple(loc)),)
        if t.capacitance is None:
            # a delay alone: its capacitance per length is what is missing beside it
            raise err(M.TRACE_NEEDS_GEOMETRY, loc + ("geometry",),
                      expected="geometry = \"NAME\" or capacitance = "
                      "\"0.8 pF/cm\"",
                      hint="a delay per length goes with a capacitance per length"
                      if t.delay is not None else None)
        if t.delay is not None and not t.capacitance > 0:
            # Z0 = delay / capacitance: no line has an infinite impedance (a capacitance
            # of 0 alone is a stretch that loads nothing, and is taken)
            raise err(M.CAPACITANCE_ZERO_WITH_DELAY, loc + ("capacitance",),
                      value=format_si(t.capacitance, "F/m"),
                      expected=f"more than 0 and at most {format_si(1e-6, 'F/m')} beside "
                               "a delay, e.g. capacitance = \"1 pF/cm\"",
                      hint=M.IMPEDANCE_IS_DELAY_OVER_C)
        if t.delay is not None and line_z0_problem(t.delay, t.capacitance) is not None:
            # a capacitance typed in fF/cm for pF/cm: a 50 MΩ line, whose time grid no
            # solve can hold (the solver then blamed the length)
            raise err(M.LINE_Z0_IMPOSSIBLE.format(
                z0=format_si(t.delay / t.capacitance, "Ω")), loc + ("capacitance",),
                value=format_si(t.capacitance * 1e-2, "F") + "/cm",
                expected=line_z0_problem(t.delay, t.capacitance))
        return (Section(t.length, None, t.capacitance, t.delay, loc=tuple(loc)),)

    def _cable_section(self, t: RawTrace | RawSection, loc) -> Section:
        cable = self.part_of(t.part, loc + ("part",))
        if cable.line is None:
            raise self.err(M.NOT_A_CABLE, loc + ("part",), value=t.part)
        return Section(t.length, None, cable.line.capacitance.value,
                       cable.line.delay.value if cable.line.delay else None,
                       cable.line.impedance.value if cable.line.impedance else None,
                       t.part, loc=tuple(loc))

    def cables(self, items, loc) -> tuple[Cable, ...]:
        out = []
        for i, c in enumerate(items):
            part = self.part_of(c.part, loc + (i, "part"))
            if part.line is None:
                raise self.err(M.NOT_A_CABLE, loc + (i, "part"), value=c.part)
            out.append(Cable(c.part, part, c.length))
        return tuple(out)


def _geometries(raw: RawDesign, err) -> dict[str, Geometry]:
    """The board's named trace geometries, each with what its kind needs."""
    geometries = {
        name: Geometry(name, g.kind, g.width, g.height, g.spacing, g.thickness, g.er, g.method)
        for name, g in raw.board.geometry.items()
    }
    for name, g in geometries.items():
        loc = ("board", "geometry", name)
        if g.method is not None:
            _check_method(g, loc, err)
        if g.kind == "microstrip" and g.height is None:
            raise err(M.MICROSTRIP_NEEDS_HEIGHT, loc + ("height",))
        if g.kind == "stripline" and g.height is None and g.spacing is None:
            raise err(M.STRIPLINE_NEEDS_SPACING, loc + ("spacing",))
        if g.kind == "stripline" and g.spacing is not None and not g.spacing > g.thickness:
            raise err(M.SPACING_NOT_ABOVE_COPPER, loc + ("spacing",),
                      value=format_si(g.spacing, "m"),
                      expected=f"more than the copper thickness, {format_si(g.thickness, 'm')}")
    return geometries


def _check_method(g: Geometry, loc, err) -> None:
    """Refuse a ``method`` its kind has not, at the geometry's ``method``, with the
    methods it has (numpy's models are imported only for a design that names one)."""
    from pinlib.physics import lines as tl

    methods = tl.MICROSTRIP_METHODS if g.kind == "microstrip" else tl.STRIPLINE_METHODS
    if g.method not in methods:
        raise err(M.UNKNOWN_LINE_METHOD.format(kind=g.kind), loc + ("method",),
                  value=g.method, expected="one of " + ", ".join(
                      f"'{m}'" + (" (the default)" if i == 0 else "")
                      for i, m in enumerate(methods)))


def _check_impedance(g: Geometry, err) -> None:
    """Refuse a geometry a line uses whose named method gives no positive impedance (the
    IPC-2141 forms past their logarithm's zero); a geometry merely outside a method's
    range gives numbers and a note.  The default methods are left alone; an unknown
    method was refused when the geometries were read (:func:`_check_method`)."""
    from pinlib.physics import lines as tl  # numpy's models: only for a named method

    methods = tl.MICROSTRIP_METHODS if g.kind == "microstrip" else tl.STRIPLINE_METHODS
    if g.method is None or g.method == methods[0] or g.method not in methods:
        return
    stripline = g.kind == "stripline"
    h = (g.spacing if g.spacing is not None else 2.0 * g.height + g.thickness) if stripline \
        else g.height
    model = tl.stripline if stripline else tl.microstrip
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", tl.ValidityWarning)
        z0 = float(model(g.width, h, g.er, g.thickness, method=g.method).z0)
    if math.isfinite(z0) and z0 > 0:
        return
    loc = ("board", "geometry", g.name)
    hname = "b" if stripline else "height"
    field, value = "width", format_si(g.width, "m")
    expected = "a geometry the method gives an impedance for"
    widest = tl.widest_width(g.kind, g.method, h, g.thickness)
    if widest is None:
        why = M.LINE_FORMULA_NOT_FINITE
    else:
        factor, form = tl.LOG_FORMS[(g.kind, g.method)]
        why = M.LINE_FORMULA_LOG_LIMIT.format(
            form=form, wide=format_si(0.8 * g.width + g.thickness, "m"), factor=factor,
            h=hname, limit=format_si(factor * h, "m"))
        if widest > 0:
            expected = (f"a width below {format_si(widest, 'm')} at this "
                        f"{'plane spacing' if stripline else 'height'} and thickness")
        else:
            field, value = "thickness", format_si(g.thickness, "m")
            expected = f"a thickness below {factor:g}·{hname}, {format_si(factor * h, 'm')}"
    default = methods[0]
    hint = M.USE_DEFAULT_LINE_METHOD.format(
        default=default, method=g.method,
        range=_ranges(tl.VALIDITY[g.kind][default]),
        quoted=_ranges(tl.VALIDITY[g.kind][g.method]))
    raise err(M.LINE_FORMULA_NO_IMPEDANCE.format(kind=g.kind, method=g.method, why=why),
              loc + (field,), value=value, expected=expected, hint=hint)


def _ranges(ranges) -> str:
    return " and ".join(r.describe() for r in ranges)
