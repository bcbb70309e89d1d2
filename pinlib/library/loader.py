"""Loading part classes: the built-in ``pinlib/devices/`` folder merged with team folders.

Order of precedence, lowest first: the built-in library, then the folders of the
``PINLIB_LIBRARY`` environment variable (``os.pathsep``-separated), then folders a
design names in ``library``, then ``--library`` folders from the command line.  A team
part with the id of a built-in part overrides it (the listing says so); two team parts
with one id is an error naming both files, and neither is used.  A team file that cannot
be read as a part file (not TOML, another format) and whose name is a built-in part's
id overrides that part all the same: the id fails with the team file's error, as a
team part that reads but does not validate fails with its own, and so does every part
that extends it; the built-in part is never used in its place.

``extends`` is resolved by merging the parent's raw table under the child's: tables
merge key by key (so a child may change one pin field), arrays and values replace.
Every merged value remembers which part id set it.
"""

from __future__ import annotations

import os
from collections.abc import Iterable, Iterator, Mapping
from dataclasses import field
from pathlib import Path

from pinlib.core import messages as M
from pinlib.core import nearby
from pinlib.core.errors import LibraryError, PinlibError
from pinlib.core.labels import counted
from pinlib.core.pathkind import FOLDER, MISSING, UNREADABLE, path_kind
from pinlib.core.records import Issue, Record, RecordError
from pinlib.core.tomlfile import dotted as dotted_path
from pinlib.core.tomlfile import line_index, line_of, load
from pinlib.core.valueclass import value_class
from pinlib.library.schema import FORMAT, Part
from pinlib.library.values import Sourced, StatedList
from pinlib.library.walk import (  # noqa: F401 - the walk's names, as before
    MAX_FOLDER_DEPTH,
    MAX_FOLDER_ENTRIES,
    MAX_PART_FILES,
    _system_folder,
    part_paths,
)

__all__ = [
    "LazyParts",
    "BUILTIN_DIR",
    "Library",
    "PartFile",
    "load_library",
    "read_part_file",
    "validate_part",
    "record_errors",
    "library_folders",
]

#: The built-in library: package data inside pinlib (``pinlib/devices/``), so that an
#: installed wheel carries it as a checkout does.  ``PINLIB_BUILTIN`` points elsewhere.
BUILTIN_DIR = Path(os.environ.get("PINLIB_BUILTIN",
                                  Path(__file__).resolve().parents[1] / "devices"))

_NOT_INHERITED = {"id", "extends", "abstract"}
#: Tables that describe the file that states them: a part that states its own replaces
#: its class's whole (merged key by key, a team part's basis took its class's source and
#: date: "datasheet, typical of the class").  A part that states none takes its class's.
_REPLACED_WHOLE = {"provenance"}

#: Bounds of what the library reads (each refusal names the limit): a part file holds
#: a few kilobytes; a library folder is a folder of part files, not a disk.
MAX_PART_BYTES = 2**20
MAX_EXTENDS_DEPTH = 32


@value_class
class PartFile:
    """One part file as read: its raw table, text and line index."""

    path: Path
    raw: dict
    text: str
    builtin: bool
    _index: dict | None = field(default=None, repr=False, compare=False)
    #: The problems of other team files that state this file's id (each names the
    #: other file): the id is ambiguous, and neither file's part is used (which one
    #: was meant is not known; the order of the walk would choose).
    others: list = field(default_factory=list, compare=False)

    @property
    def id(self) -> str:
        return str(self.raw.get("id", ""))

    def line(self, loc) -> int | None:
        # the index is built once: a file with thousands of problems is scanned once,
        # not once a problem
        if self._index is None:
            self._index = line_index(self.text)
        return line_of(self._index, loc)


def read_part_file(path: Path, *, builtin: bool = False) -> PartFile:
    """Read one part file, checking the format tag and the id."""
    raw, text = load(path, error=LibraryError, max_bytes=MAX_PART_BYTES)
    pf = PartFile(Path(path), raw, text, builtin)
    fmt = raw.get("format")
    if not raw:
        raise LibraryError(M.FILE_HOLDS_NOTHING, file=str(path), expected=f'format = "{FORMAT}"')
    if fmt != FORMAT:
        raise LibraryError(M.NOT_A_PART_FILE, file=str(path), line=pf.line(("format",)),
                           field="format", value=fmt, expected=f'format = "{FORMAT}"',
                           hint=M.DESIGN_IN_LIBRARY if fmt == "pinlib.design/1" else None)
    if not isinstance(raw.get("id"), str) or not raw["id"]:
        raise LibraryError(M.PART_NEEDS_ID, file=str(path), line=pf.line(("id",)),
                           field="id", expected="a lowercase id such as \"eeprom-i2c\"")
    return pf


#: The unknown keys of one file answered with the closest field as well: past them, each
#: is still named with its table's fields (a file of 50,000 misspelt keys spent seconds
#: of every command guessing).
MAX_CLOSEST_HINTS = 100


def record_errors(exc: RecordError, *, file=None, locate=None, cls=LibraryError,
                  origin_file=None, model: type[Record] = Part,
                  format_name: str = "part", blame=None) -> list[PinlibError]:
    """Turn a :class:`~pinlib.core.records.RecordError` into pinlib errors naming file,
    line and field.

    ``model`` is the root model that was validated and ``format_name`` the name of its
    format: an unknown key is answered with the fields of its table and the closest one.
    ``blame(issue)``, when given, returns the place to name and the value found there
    (``(loc, value)``) for an issue of several fields (its ``related``), else None.
    """
    out: list[PinlibError] = []
    guessed = 0
    for issue in exc.issues:
        loc = issue.loc
        related = issue.related
        moved = blame(issue) if blame is not None and issue.related else None
        if moved is not None and moved[0] != loc:
            # the value shown is the one written there, where the issue showed one
            loc, shown = moved[0], None
            if issue.value is not None:
                shown = moved[1].get("value") if isinstance(moved[1], dict) else moved[1]
            issue = Issue(loc, issue.kind, issue.problem, shown, issue.expected, issue.error)
        dotted = dotted_path(loc)
        where = origin_file(loc) if origin_file else file
        line = locate(where, loc) if locate else None
        inner = issue.error
        if inner is not None:
            out.append(cls(inner.problem, file=where, line=line,
                           field=_within(dotted, loc, inner.field),
                           value=inner.value, expected=inner.expected, hint=inner.hint))
            continue
        hint, expected = None, issue.expected
        if issue.kind == "unknown":
            # here: the field tables are built only to answer a misspelt key
            from pinlib.library.fields import unknown_field_help

            expected, hint = unknown_field_help(model, loc, format_name,
                                                closest=guessed < MAX_CLOSEST_HINTS)
            guessed += 1
        if hint is None and related and origin_file and locate:
            hint = _set_elsewhere(loc, where, related, origin_file, locate)
        value = issue.value if not isinstance(issue.value, dict) else None
        out.append(cls(issue.problem, file=where, line=line, field=dotted, value=value,
                       expected=expected, hint=hint))
    return out


def _set_elsewhere(loc, where, related, origin_file, locate) -> str | None:
    """For a problem of several fields named at ``loc`` in file ``where``: where the
    others were set when another file (a class the part extends) set them, as a hint
    (``supply.max is set in i2c-peripheral.toml:5``); None when every one is here."""
    import os

    bits = []
    for r in related:
        other = origin_file(r)
        if r == loc or other is None or other == where:
            continue
        line = locate(other, r)
        bits.append(f"{dotted_path(r)} in {os.path.basename(other)}"
                    + (f":{line}" if line else ""))
    return M.SET_ELSEWHERE.format(places=", ".join(bits)) if bits else None


def _within(dotted: str, loc: tuple, field: str | None) -> str | None:
    """The field an issue names: its place in the file (``dotted``), and below it a
    typical value its converter refused, a second number beside the value (the converter
    of ``c_in`` names ``c_in.typ``: the field is ``pins.sda.c_in.typ``, not the value's)."""
    if not dotted:
        return field
    last = str(loc[-1]) if loc else ""
    if last and field == last + ".typ":
        return dotted + ".typ"
    return dotted


def _merge(parent: dict, child: dict, parent_origin: dict, child_id: str, top=True) -> tuple:
    """Deep-merge ``child`` over ``parent``; return (merged, origin map).

    The origin map (key path -> part id) is kept grouped by each path's first key, so
    that replacing one key's values costs the size of that key's entries, not of the
    whole map (a part of thousands of keys merged in time linear in its size).
    """
    merged = dict(parent)
    groups: dict = {}
    for k, v in parent_origin.items():
        groups.setdefault(k[0] if k else None, {})[k] = v
    for key, value in child.items():
        if top and key in _NOT_INHERITED:
            merged[key] = value
            continue
        if (isinstance(value, dict) and isinstance(merged.get(key), dict)
                and not (top and key in _REPLACED_WHOLE)
                and not _is_value_table(value) and not _is_value_table(merged[key])):
            sub, sub_origin = _merge(merged[key], value,
                                     {k[1:]: v for k, v in groups.get(key, {}).items()},
                                     child_id, top=False)
            merged[key] = sub
            groups[key] = {(key,) + k: v for k, v in sub_origin.items()}
        else:
            merged[key] = value
            groups[key] = {(key,): child_id}
    origin = {k: v for group in groups.values() for k, v in group.items()}
    if top:
        for key in _NOT_INHERITED:
            if key not in child:
                merged.pop(key, None)
    return merged, origin


def _is_value_table(d: dict) -> bool:
    """A value with its provenance (``{ value, basis, source, typ }``): it replaces what
    it extends whole.  So does such a table that names a source or a basis without its
    value, which merged would have claimed that source for the inherited value (it is
    then refused for the missing value, at its own file and line).  And any table that
    stands where the parent has a value table (``{ vlaue = ... }``, ``{ typ = ... }``)
    replaces it whole too: merged, its mistakes were blamed on the parent's file."""
    keys = set(d)
    return bool(keys) and keys <= {"value", "basis", "source", "typ"} and bool(
        keys & {"value", "basis", "source"})


def _raw_at(raw, loc: tuple):
    """What the merged table holds at ``loc``, or None."""
    for key in loc:
        if not isinstance(raw, dict) or key not in raw:
            return None
        raw = raw[key]
    return raw


def _origin_of(origin: dict, loc: tuple) -> str | None:
    loc = tuple(loc)
    while loc:
        if loc in origin:
            return origin[loc]
        loc = loc[:-1]
    return None


def validate_part(merged: dict, origin: dict, files: dict[str, PartFile]) -> Part:
    """Validate a merged raw table; errors point at the file that set the bad value."""
    own = merged.get("id")
    try:
        part = Part.validate(merged)
    except RecordError as exc:
        def origin_file(loc):
            pid = _origin_of(origin, loc) or own
            return str(files[pid].path) if pid in files else None

        def locate(fname, loc):
            for pf in files.values():
                if str(pf.path) == fname:
                    return pf.line(loc)
            return None

        order = {pid: i for i, pid in enumerate(files)}  # the root first, this part last

        def blame(issue):
            # A check of several fields (v_il above v_ih): the field the latest file in
            # the chain wrote.  Every file before it left a valid pair (or is blamed at
            # its own line), so that write made the pair wrong; the table itself was
            # often first written by a built-in class, the one file not to edit.  Of
            # fields one file wrote, the check's own (supply.max), else the first.
            written = [(order.get(_origin_of(origin, r), -1), r == issue.loc, -i, r)
                       for i, r in enumerate(issue.related) if _raw_at(merged, r) is not None]
            if not written:
                return None
            loc = max(written)[-1]
            return loc, _raw_at(merged, loc)

        raise _Many(record_errors(exc, origin_file=origin_file, locate=locate,
                                  blame=blame)) from None
    stamps = {pid: (str(pf.path), _file_provenance(pf.raw)) for pid, pf in files.items()}
    return _with_origins(part, origin, own, stamps, merged)


#: Where a part file states a pin's ``off_tolerant`` (a plain true or false, no table of
#: its own), the loader keeps that file's basis, source and part id on the pin under
#: this key (not a field: a file cannot write it); :func:`off_tolerant_stated` reads it.
STATED_OFF_TOLERANT = "_off_tolerant_stated"


def off_tolerant_stated(pin) -> tuple | None:
    """(basis, source, part id) of the file that states ``pin``'s ``off_tolerant``: its
    provenance's basis (``generic`` where it names none, the format's default) and
    source; None where no file states it (the schema's default, false, is taken). [1]"""
    return pin.__dict__.get(STATED_OFF_TOLERANT)


def _file_provenance(raw: dict) -> dict:
    prov = raw.get("provenance")
    return {k: v for k, v in prov.items() if k in ("basis", "source") and isinstance(v, str)} \
        if isinstance(prov, dict) else {}


def _with_origins(part: Part, origin: dict, own: str, stamps: dict | None = None,
                  merged: dict | None = None) -> Part:
    """Stamp every Sourced value with the part id whose file set it, that file, and the
    file's basis and source where the value states none of its own; and each pin whose
    ``off_tolerant`` a file states with the basis of that file (:func:`stated_basis`)."""
    stamps = stamps or {}

    # Only what holds a Sourced value is rebuilt; everything else is returned as it is
    # (a part holds hundreds of None fields, and copying each model was most of the load
    # time of a large library).
    def walk(obj, path):
        if obj is None or isinstance(obj, (str, bool, int, float)):
            return obj
        if isinstance(obj, (Sourced, StatedList)):
            pid = _origin_of(origin, path) or own
            file, prov = stamps.get(pid, (None, None))
            return obj.with_origin(pid, file=file, provenance=prov)
        if isinstance(obj, dict):
            out = {k: walk(v, path + (k,)) for k, v in obj.items()}
            return obj if all(out[k] is v for k, v in obj.items()) else out
        if isinstance(obj, tuple):
            out = tuple(walk(v, path + (i,)) for i, v in enumerate(obj))
            return obj if all(a is b for a, b in zip(out, obj, strict=True)) else out
        if isinstance(obj, Record):
            changes = {}
            for name, value in obj.__dict__.items():
                new = walk(value, path + (name,))
                if new is not value:
                    changes[name] = new
            if merged is not None and "off_tolerant" in obj.__dict__:
                at = path + ("off_tolerant",)
                if _raw_at(merged, at) is not None:
                    pid = _origin_of(origin, at) or own
                    prov = stamps.get(pid, (None, None))[1] or {}
                    changes[STATED_OFF_TOLERANT] = (prov.get("basis") or "generic",
                                                    prov.get("source"), pid)
            return obj.copy(**changes) if changes else obj
        return obj

    return walk(part, ())


class _Many(Exception):
    def __init__(self, errors):
        self.errors = errors
        super().__init__("; ".join(e.message for e in errors))


class LazyParts(Mapping):
    """Parts by id, each merged and validated when first asked for.

    A design names a few parts of a library that may hold hundreds; this mapping lets
    ``pinlib check`` validate only those (and the classes they extend).  Iterating, or
    asking the length, validates every part.  A part that does not validate is absent,
    and its problems join ``Library.problems`` when it is first asked for.
    """

    def __init__(self, files: dict, problems: list):
        self._files = files
        self._problems = problems
        self._done: dict[str, Part] = {}
        self._failed: set[str] = set()
        self._complete = False

    def _get(self, pid: str) -> Part | None:
        if pid in self._done:
            return self._done[pid]
        if pid in self._failed or pid not in self._files:
            return None
        try:
            part = _resolve(pid, self._files)
        except _Many as many:
            self._problems.extend(many.errors)
            self._failed.add(pid)
            return None
        except LibraryError as err:
            if not any(p is err for p in self._problems):  # a shared id: listed once
                self._problems.append(err)
            self._failed.add(pid)
            return None
        self._done[pid] = part
        return part

    def resolve_all(self) -> None:
        """Validate every part (so that ``Library.problems`` is complete)."""
        if not self._complete:
            for pid in self._files:
                self._get(pid)
            self._complete = True

    def __getitem__(self, pid: str) -> Part:
        part = self._get(pid)
        if part is None:
            raise KeyError(pid)
        return part

    def __contains__(self, pid: object) -> bool:
        return isinstance(pid, str) and self._get(pid) is not None

    def __iter__(self) -> Iterator[str]:
        self.resolve_all()
        return iter([pid for pid in self._files if pid in self._done])

    def __len__(self) -> int:
        self.resolve_all()
        return len(self._done)


@value_class
class Library:
    """The merged library: validated parts by id, where each came from, and any problems."""

    parts: Mapping[str, Part] = field(default_factory=dict)
    files: dict[str, PartFile] = field(default_factory=dict)
    overrides: dict[str, Path] = field(default_factory=dict)  # id -> built-in file overridden
    problems: list[PinlibError] = field(default_factory=list)
    folders: list[Path] = field(default_factory=list)

    def __contains__(self, part_id: str) -> bool:
        return part_id in self.parts

    def __len__(self) -> int:
        return len(self.parts)

    def closest(self, part_id: str, n: int = 3) -> list[str]:
        return nearby.closest(part_id, self.parts, n=n, cutoff=0.4)

    def team_folders(self) -> list[Path]:
        """The folders read besides the built-in library, in order."""
        return [f for f in self.folders if f != BUILTIN_DIR]

    def get(self, part_id: str, *, file=None, line=None, field=None) -> Part:
        """The part with this id.

        A part whose file (or a file it extends) does not validate is an error at the
        broken file, line and field, naming where it was asked for; an unknown id is an
        error naming the closest ids and any library file that could not be read.
        """
        if part_id in self.parts:
            return self.parts[part_id]
        where = _place(file, line, field)
        broken = self.problems_of(part_id)
        if broken:
            first = broken[0]
            hints = [first.hint, self.override_hint(part_id, first),
                     M.NAMED_AT.format(where=where) if where else None]
            if len(broken) > 1:
                hints.append(counted(M.MORE_PROBLEMS, len(broken) - 1))
            raise LibraryError(M.PART_DOES_NOT_VALIDATE.format(part=part_id,
                                                               problem=first.problem),
                               file=first.file, line=first.line, field=first.field,
                               value=first.value, expected=first.expected,
                               hint="; ".join(h for h in hints if h))
        near = self.closest(part_id)
        hint = ("closest in the library: " + ", ".join(near)) if near else \
            "'pinlib parts list' shows the library"
        unread = self.unread()
        if unread:
            hint += "; " + counted(M.UNREAD_FILES, len(unread), first=unread[0].message)
        raise LibraryError(M.UNKNOWN_PART, file=file, line=line, field=field, value=part_id,
                           hint=hint)

    def problems_of(self, part_id: str) -> list[PinlibError]:
        """The problems that keep ``part_id`` out of the library (its file, the files it
        extends, or a file that could not be read whose name is the id); empty when the
        part loads or no file holds it."""
        if part_id in self.files:
            self.parts.get(part_id)  # a lazy library validates it now, collecting problems
            if part_id in self.parts:
                return []
            chain = {str(self.files[c].path) for c in self.chain(part_id)}
            chain |= {e.file for c in self.chain(part_id) for e in self.files[c].others}
            return [p for p in self.problems if p.file in chain]
        return [p for p in self.unread() if Path(p.file).stem == part_id]

    def override_hint(self, part_id: str, problem: PinlibError) -> str | None:
        """Where a part that does not load inherits from a team file that overrides a
        built-in class (its problem lies elsewhere, often in the built-in part's own
        file: the override took away what it needs), as a hint naming that team file;
        None when the problem is in that file or no class of the chain is overridden."""
        if part_id not in self.files:  # a file that could not be read: no chain
            return None
        for pid in self.chain(part_id)[1:]:
            path = self.files[pid].path
            if pid in self.overrides and problem.file != str(path):
                return M.INHERITS_OVERRIDE.format(part=part_id, cls=pid, file=path)
        return None

    def unread(self) -> list[PinlibError]:
        """Problems of library files that could not be read as part files at all."""
        read = {str(pf.path) for pf in self.files.values()}
        return [p for p in self.problems if p.file and p.file not in read
                and Path(p.file).suffix == ".toml"]

    def path_of(self, part_id: str) -> Path:
        return self.files[part_id].path

    def chain(self, part_id: str) -> list[str]:
        """The part and its ancestors, child first."""
        out = [part_id]
        while True:
            parent = self.files[out[-1]].raw.get("extends")
            # an extends that is not an id (an array, a table) is its file's problem
            if not isinstance(parent, str) or parent in out or parent not in self.files:
                return out
            out.append(parent)

    def resolve_all(self) -> None:
        """Validate every part of a library loaded with ``lazy=True`` (no-op otherwise)."""
        if isinstance(self.parts, LazyParts):
            self.parts.resolve_all()

    def placeable(self) -> dict[str, Part]:
        """Parts that can stand on a board (not abstract classes)."""
        return {k: p for k, p in self.parts.items() if not p.abstract}


def _place(file, line, field) -> str | None:
    if not file and not field:
        return None
    at = (f"{file}:{line}" if line else str(file)) if file else ""
    return ", ".join(b for b in (at, f"field '{field}'" if field else "") if b)


def library_folders(extra: Iterable[str | os.PathLike] = (), *, env: bool = True) -> list[Path]:
    """Team folders in precedence order: PINLIB_LIBRARY, then ``extra``."""
    folders: list[Path] = []
    if env and os.environ.get("PINLIB_LIBRARY"):
        folders += [Path(p) for p in os.environ["PINLIB_LIBRARY"].split(os.pathsep) if p]
    folders += [Path(p) for p in extra]
    return folders


def _builtin_hint() -> str:
    """Where the missing built-in folder was taken from, and what to do."""
    if os.environ.get("PINLIB_BUILTIN"):
        return "the built-in library's folder, set by PINLIB_BUILTIN: unset it or name " \
               "a folder that exists"
    return "the built-in library's folder: the installation lacks its parts; install " \
           "pinlib again"


def load_library(folders: Iterable[str | os.PathLike] = (), *, builtin: bool = True,
                 env: bool = True, strict: bool = False, lazy: bool = False,
                 follow_links: bool = False) -> Library:
    """Load and merge the library.

    Parameters
    ----------
    folders : iterable of paths
        Team library folders, lowest precedence first (after ``PINLIB_LIBRARY``).
    builtin : bool
        Include the built-in ``devices/`` folder.
    env : bool
        Read ``PINLIB_LIBRARY``.
    strict : bool
        Raise the first problem instead of collecting it in ``Library.problems``
        (parts with problems are left out of the library either way).
    lazy : bool
        Read every file now but validate each part when it is first used
        (:class:`LazyParts`); ``Library.problems`` then lists a part's problems once the
        part has been asked for, or after ``Library.resolve_all()``.
    follow_links : bool
        Follow links that lead out of a library folder (by default each is a problem
        and is not read).  Whatever this says, only regular files of at most
        :data:`MAX_PART_BYTES` are read, and the walk of each folder is bounded
        (:func:`part_paths`).
    """
    lib = Library()
    folders = list(folders)
    for name in [f for f in folders if not os.fspath(f).strip()]:
        # Path("") is ".": the current folder would be read as a library
        err = LibraryError(M.EMPTY_FOLDER_NAME, field="library", value=os.fspath(name))
        if strict:
            raise err
        lib.problems.append(err)
    folders = [f for f in folders if os.fspath(f).strip()]
    found: dict[str, PartFile] = {}
    team_seen: dict[str, Path] = {}
    sources = ([(BUILTIN_DIR, True)] if builtin else []) + [
        (Path(f), False) for f in library_folders(folders, env=env)]
    # A folder that is a system folder or too big to be a library is refused whatever
    # ``strict`` says: its parts would be a guess, and walking it may never end.
    loaded: set[Path] = set()
    read_files: set[Path] = set()  # a file read through a folder and a folder inside it
    for folder, is_builtin in sources:
        kind, reason = path_kind(folder)
        if kind != FOLDER:
            if kind == UNREADABLE:
                err = LibraryError(M.CANNOT_READ_FOLDER.format(reason=reason),
                                   file=str(folder))
            elif kind != MISSING:
                err = LibraryError(M.LIBRARY_IS_A_FILE, file=str(folder),
                                   hint=M.LIBRARY_FILE_HINT.format(folder=folder.parent))
            else:
                err = LibraryError(M.LIBRARY_FOLDER_NOT_FOUND, file=str(folder),
                                   hint=_builtin_hint() if is_builtin else None)
            if strict or is_builtin:  # without the built-in parts every id is unknown
                raise err
            lib.problems.append(err)
            continue
        if folder.resolve() in loaded:
            # The same folder named twice (PINLIB_LIBRARY and --library, relative and
            # absolute): its files are already in; reading them again would report every
            # part as two team parts sharing one id.
            continue
        loaded.add(folder.resolve())
        lib.folders.append(folder)
        paths, walk_problems = part_paths(folder, follow_links=follow_links)
        if walk_problems and strict:
            raise walk_problems[0]
        lib.problems.extend(walk_problems)
        for path in paths:
            real = Path(os.path.realpath(path))
            if real in read_files:
                continue  # one file, named through two folders: read once
            read_files.add(real)
            try:
                pf = read_part_file(path, builtin=is_builtin)
            except LibraryError as err:
                if strict:
                    raise
                lib.problems.append(err)
                stem = Path(path).stem
                if not is_builtin and stem in found and found[stem].builtin:
                    # a team file meant to override a built-in part, that cannot be
                    # read: it stands in the built-in part's place, failing with its own
                    # error (as a team part that reads but does not validate does), so
                    # that no design silently uses the built-in numbers
                    lib.overrides[stem] = found[stem].path
                    err.hint = "; ".join(h for h in (err.hint, M.UNREAD_OVERRIDE.format(
                        part=stem)) if h)
                    found[stem] = PartFile(Path(path), {"id": stem}, "", False,
                                           others=[err])
                continue
            pid = pf.id
            if not is_builtin and pid in team_seen and team_seen[pid] != path:
                err = LibraryError(M.DUPLICATE_TEAM_ID, file=str(path),
                                   line=pf.line(("id",)), field="id", value=pid,
                                   hint=f"the other is {team_seen[pid]}; "
                                        + M.DUPLICATE_TEAM_ID_HINT)
                if strict:
                    raise err
                lib.problems.append(err)
                found[pid].others.append(err)  # the first file's part is not used either
                first = team_seen[pid]
                if not any(p.file == str(first) and p.problem == M.DUPLICATE_TEAM_ID
                           for p in lib.problems):  # and is named at its own id, once
                    lib.problems.append(LibraryError(
                        M.DUPLICATE_TEAM_ID, file=str(first),
                        line=found[pid].line(("id",)), field="id", value=pid,
                        hint=f"the other is {path}; " + M.DUPLICATE_TEAM_ID_HINT))
                continue
            if pid in found and found[pid].builtin and is_builtin:
                err = LibraryError(M.DUPLICATE_BUILTIN_ID, file=str(path),
                                   field="id", value=pid, hint=f"the other is {found[pid].path}")
                lib.problems.append(err)
                continue
            if pid in found and found[pid].builtin and not is_builtin:
                lib.overrides[pid] = found[pid].path
            if not is_builtin:
                team_seen[pid] = path
            found[pid] = pf
    lib.files = found
    if lazy and not strict:
        lib.parts = LazyParts(found, lib.problems)
        return lib
    for pid in found:
        try:
            lib.parts[pid] = _resolve(pid, found)
        except _Many as many:
            if strict:
                raise many.errors[0] from None
            lib.problems.extend(many.errors)
        except LibraryError as err:
            if strict:
                raise
            if not any(p is err for p in lib.problems):  # a shared id: listed once
                lib.problems.append(err)
    return lib


def _resolve(pid: str, files: dict[str, PartFile]) -> Part:
    merged, origin, used = _merged_raw(pid, files, [])
    return validate_part(merged, origin, {k: files[k] for k in used})


def _merged_raw(pid: str, files: dict[str, PartFile], stack: list[str]):
    """The raw table of ``pid`` merged over its ancestors: (merged, origin, ids used,
    root first).  The chain is followed in a loop and bounded by MAX_EXTENDS_DEPTH, so a
    long chain is an error naming the file, not a RecursionError."""
    chain = list(stack) + [pid]  # child last; followed towards the root
    while True:
        pf = files[chain[-1]]
        if pf.others:
            raise pf.others[0]  # the problem already listed, naming both files
        parent = pf.raw.get("extends")
        if parent is None:
            break
        if not isinstance(parent, str):
            raise LibraryError(M.EXTENDS_NOT_AN_ID, file=str(pf.path),
                               line=pf.line(("extends",)), field="extends", value=parent)
        if parent in chain:
            cycle = " -> ".join(chain + [parent])
            hint = f"{cycle}; files: " + ", ".join(
                str(files[p].path) for p in chain if p in files)
            if parent == chain[-1]:
                # a team file of a built-in id that extends "itself", meaning the built-in
                # class it overrides: that class is out of the library it stands in
                hint += (f"; a part cannot extend its own id: where '{parent}' is a "
                         f"built-in class to build on, give this file an id of its own "
                         f"(id = \"{parent}-team\") that extends it, and place that id; "
                         "else extend the class it is made from")
            raise LibraryError(M.EXTENDS_CYCLE, file=str(pf.path), line=pf.line(("extends",)),
                               field="extends", value=parent, hint=hint)
        if parent not in files:
            raise LibraryError(M.EXTENDS_UNKNOWN, file=str(pf.path),
                               line=pf.line(("extends",)), field="extends", value=parent,
                               hint=nearby.closest_hint(parent, files, cutoff=0.4))
        if len(chain) > MAX_EXTENDS_DEPTH:
            start = files[chain[len(stack)]]
            raise LibraryError(M.EXTENDS_TOO_DEEP.format(limit=MAX_EXTENDS_DEPTH),
                               file=str(start.path), line=start.line(("extends",)),
                               field="extends", value=start.raw.get("extends"),
                               hint=f"{chain[len(stack)]} -> {chain[len(stack) + 1]} -> … -> "
                                    f"{parent}")
        chain.append(parent)
    used = chain[len(stack):][::-1]  # root first
    merged, origin = {}, {}
    for part_id in used:
        merged, origin = _merge(merged, files[part_id].raw, origin, part_id)
    return merged, origin, used
