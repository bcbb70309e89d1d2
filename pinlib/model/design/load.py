"""Loading a design file: the format, the bounds, the first pass (the schema), the library,
then the build."""

from __future__ import annotations

import os
from pathlib import Path

from pinlib.core import messages as M
from pinlib.core import protocols
from pinlib.core.errors import DesignError, InputError, LibraryError, PinlibError
from pinlib.core.pathkind import FOLDER, MISSING, UNREADABLE, path_kind
from pinlib.core.records import RecordError
from pinlib.core.tomlfile import dotted as dotted_path
from pinlib.core.tomlfile import line_index, line_of, load
from pinlib.core.worklimits import (
    MAX_DEVICES_OPEN_DRAIN,
    MAX_DEVICES_PUSH_PULL,
)
from pinlib.library.folders import ENV, OPTION, require_folders
from pinlib.library.loader import Library, load_library, record_errors
from pinlib.model.design.build import Design, _build
from pinlib.model.design.raw import FORMAT, RawDesign

#: The demo design's file name (``workbooks/designs/demo-board.toml``).
DEMO_DESIGN_NAME = "demo-board.toml"


def load_design(path: str | os.PathLike, *, library_folders=(), library: Library | None = None,
                swaps: dict[str, str] | None = None) -> Design:
    """Load a design file and resolve its parts.

    Parameters
    ----------
    path : path
        The design file.
    library_folders : iterable of paths
        Extra team library folders (the command line's ``--library``); they take
        precedence over the design's own ``library`` folders.
    library : Library, optional
        An already-merged library to use instead of loading one.
    swaps : dict, optional
        Parts to substitute, by reference designator.
    """
    path = Path(path)
    try:
        data, text = load(path, error=DesignError)
    except DesignError as exc:
        # the demo design at the path a checkout has it (the README's tour, the commands'
        # examples): an installed pinlib carries it inside the package, for `pinlib demo`
        if exc.problem == M.FILE_NOT_FOUND and path.name == DEMO_DESIGN_NAME:
            raise exc.with_hint(M.DEMO_DESIGN_HINT) from None
        raise
    return design_from_text(data, text, path, library_folders=library_folders, library=library,
                            swaps=swaps)


def design_from_text(data: dict, text: str, path: Path | None, *, library_folders=(),
                     library: Library | None = None, swaps=None) -> Design:
    index = line_index(text)
    fname = str(path) if path else None

    def line(loc):
        # a key the file does not write, outside any table (a missing title): the top of
        # the file, where it would go
        found = line_of(index, loc)
        return 1 if found is None and fname is not None else found

    def at(loc):
        return {"file": fname, "line": line(loc)}

    if not data:
        raise DesignError(M.FILE_HOLDS_NOTHING, file=fname, expected=f'format = "{FORMAT}"')
    if data.get("format") != FORMAT:
        raise DesignError(M.NOT_A_DESIGN, field="format", value=data.get("format"),
                          expected=f'format = "{FORMAT}"', **at(("format",)))
    _refuse_too_many_devices(data, at)  # before validating what would not be checked
    try:
        raw = RawDesign.validate(data)
    except RecordError as exc:
        errors = record_errors(exc, file=fname, locate=lambda _f, loc: line(loc),
                                 cls=DesignError, model=RawDesign, format_name="design")
        errors = [_expected_form(_route_key_hint(e)) for e in errors]
        # a misspelt key explains the required field it leaves missing: every one comes
        # first (in the file's order), then the others in the file's order, so one run
        # names every invalid field (docs/cli.md says this order)
        errors.sort(key=lambda e: (e.problem != M.UNKNOWN_FIELD, e.line or 0))
        first = errors[0]
        first.also = tuple(errors[1:])
        raise first from None
    if library is None:
        base = path.parent if path else Path.cwd()
        own = [base / p for p in raw.library]
        for i, folder in enumerate(own):
            kind, reason = path_kind(folder)
            if not raw.library[i].strip():  # the design's own folder read as parts
                raise DesignError(M.EMPTY_FOLDER_NAME, field=f"library[{i}]",
                                  value=raw.library[i], **at(("library", i)))
            if kind == UNREADABLE:
                raise DesignError(M.CANNOT_READ_FOLDER.format(reason=reason),
                                  field=f"library[{i}]", value=raw.library[i],
                                  **at(("library", i)))
            if kind not in (FOLDER, MISSING):
                raise DesignError(M.LIBRARY_IS_A_FILE, field=f"library[{i}]",
                                  value=raw.library[i], hint=M.LIBRARY_FILE_HINT.format(
                                      folder=Path(raw.library[i]).parent),
                                  **at(("library", i)))
            if kind != FOLDER:
                raise DesignError(M.DESIGN_LIBRARY_MISSING, field=f"library[{i}]",
                                  value=raw.library[i], hint=M.LOOKED_FOR.format(path=folder),
                                  **at(("library", i)))
        # PINLIB_LIBRARY and the caller's folders: an error naming the setting
        require_folders(library_folders)
        try:
            library = load_library(own + [Path(p) for p in library_folders],
                                   lazy=True)  # only the parts the design names
        except LibraryError as exc:
            if exc.field != "library":
                raise
            # a refused folder (a system folder, a walk past its bounds): where it is named
            if any(str(folder) == exc.file for folder in own):
                raise DesignError(exc.problem, field="library", value=exc.file,
                                  hint=exc.hint, **at(("library",))) from None
            source = OPTION if exc.file in {str(Path(p)) for p in library_folders} else ENV
            raise InputError(exc.problem, field=source, value=exc.file,
                             hint=M.FOLDER_NAMED_BY.format(source=source)) from None
    if not raw.bus:
        # nothing to check: a run would print PASS over 0 checks, and a CI gate would
        # pass (refused after the library, whose errors name their own line)
        raise DesignError(M.DESIGN_HAS_NO_BUS, field="bus",
                          expected='a [[bus]] table with id, protocol, supply and devices',
                          hint=M.DESIGN_HAS_NO_BUS_HINT, **at(("bus",)))
    return _build(raw, path, library, text, swaps or {}, index)


#: What a required field missing from a design's table is written like, by its key.
_MISSING_WRITTEN = {"title": 'title = "Sensor board, rev A"', "id": 'id = "i2c0"',
                    "ref": 'ref = "U2"', "part": 'part = "PART-ID"'}

#: The inline table a trace, a line or one of their stretches is written as, by the key
#: that holds it ({length}: the length written in its place, or an example).
_TABLE_WRITTEN = {
    "trace": '{{ length = "{length}", geometry = "NAME" }}',
    "lines": '{{ length = "{length}", geometry = "NAME" }}',
    "sections": '{{ length = "{length}", geometry = "NAME" }}',
    "route": '{{ from = "U1", to = "U2", length = "{length}", geometry = "NAME" }}',
    "devices": '{{ ref = "U2", part = "PART-ID" }}',
    "cables": '{{ part = "CABLE-PART-ID", length = "{length}" }}',
}


def _expected_form(err: DesignError) -> DesignError:
    """A missing required field, or a value where a table is due (``trace = "25 cm"``),
    with what it is written like, where the record layer gave no ``expected``."""
    if err.expected is not None or not err.field:
        return err
    parts = err.field.replace("]", "").replace("[", ".").split(".")
    form = None
    if err.problem == M.MISSING_FIELD:
        form = _MISSING_WRITTEN.get(parts[-1])
    elif err.problem == M.NOT_TABLE:
        # the key holding the table: trace, lines.<signal>, sections[i], devices[i]...
        key = parts[-2] if parts[-1].isdigit() or (len(parts) > 1 and parts[-2] == "lines") \
            else parts[-1]
        template = _TABLE_WRITTEN.get(key)
        if template is not None:
            written = err.value if isinstance(err.value, str) and _is_length(err.value) \
                else "10 cm"
            form = template.format(length=written.strip())
    if form is None:
        return err
    return type(err)(err.problem, file=err.file, line=err.line, field=err.field,
                     value=err.value, expected=form, hint=err.hint, also=err.also)


def _is_length(text: str) -> bool:
    """Whether ``text`` reads as a length (a trace written as its length alone)."""
    from pinlib.core.quantity import parse

    try:
        parse(text, "m")
    except (PinlibError, ValueError):
        return False
    return True


def _route_key_hint(err: DesignError) -> DesignError:
    """An unknown ``from`` or ``to`` outside a route (in a line's ``sections``, or on the
    line itself) with the hint that they are a route's: the fields listed did not say;
    a route written as a line of its own (``lines.route = [...]``) with where it goes."""
    last = (err.field or "").rsplit(".", 1)[-1]
    if err.problem == M.NOT_TABLE and (err.field or "").endswith(".lines.route"):
        # lines.route = [...]: a line's name is its signal, the route goes inside it
        return err.with_hint("a route belongs to one line: lines.sclk = { route = [...] }")
    if err.problem == M.NOT_ARRAY and last == "route":
        # route = { from = ..., to = ... }: one stretch, not in a list
        return err.with_hint('a route is a list of stretches, even of one: route = [{ from = '
                             '"U1", to = "U2", length = "2 cm", geometry = "NAME" }]')
    if err.problem != M.UNKNOWN_FIELD or last not in ("from", "to") or ".route[" in err.field:
        return err
    return err.with_hint("from and to name the points of a route's stretches: write the "
                         "stretches as route = [...] in place of sections or length")


def _refuse_too_many_devices(data: dict, at) -> None:
    """Refuse a bus with more devices than :mod:`pinlib.core.worklimits` allows (the
    limit's reasons are there), from the file's tables before they are validated: a bus of
    10^5 devices is refused in the time it takes to read it.  Anything not shaped like a
    bus is left to the validation that follows."""
    buses = data.get("bus")
    if not isinstance(buses, list):
        return
    for bi, rb in enumerate(buses):
        if not isinstance(rb, dict):
            continue
        own = rb.get("devices") if isinstance(rb.get("devices"), list) else []
        segments = rb.get("segment") if isinstance(rb.get("segment"), list) else []
        protocol = rb.get("protocol")
        if not isinstance(protocol, str) or protocol not in protocols.NAMES:
            continue  # the validation names the protocol that is wrong
        if protocols.is_open_drain(protocol):
            limit = MAX_DEVICES_OPEN_DRAIN
            count = len(own) + sum(len(rs["devices"]) for rs in segments
                                   if isinstance(rs, dict) and isinstance(rs.get("devices"), list))
        else:
            limit = MAX_DEVICES_PUSH_PULL
            count = len(own)
        if count > limit:
            loc = ("bus", bi, "devices") if own or not segments else ("bus", bi, "segment")
            raise DesignError(M.TOO_MANY_DEVICES.format(protocol=protocol), field=dotted_path(loc),
                              value=f"{count:,} devices",
                              expected=f"at most {limit:,} devices on one bus",
                              hint="split the devices over several buses", **at(loc))
