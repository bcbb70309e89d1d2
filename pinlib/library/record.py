"""Writing to team part files: a new part that extends a class, and one recorded value.

Both write through :func:`pinlib.core.tomlfile.atomic_write` (a temporary file in the same
folder, then one ``os.replace``), so a reader, or a process killed half-way, sees the
old file or the new one and never a truncated one.  :func:`record_value` holds
:func:`pinlib.core.tomlfile.file_lock` from reading the file to replacing it, and reads the
file afresh inside the lock, so two processes recording into one file at once take
turns and neither loses the other's value.

Values are written with tomlkit, which keeps the file's comments, key order and
layout; only the one value changes.  Before anything is written the whole part, with
the new value merged through its ``extends`` chain, must validate; otherwise the error
names the field and what was expected and the file is left as it was.  Files of the
built-in library are never written.
"""

from __future__ import annotations

import copy
import datetime as _dt
import difflib
import re
import textwrap
from pathlib import Path

import tomlkit
from tomlkit.items import InlineTable, Table

from pinlib.core import messages as M
from pinlib.core import nearby
from pinlib.core.commandtext import continued_lines
from pinlib.core.errors import InputError, LibraryError, PinlibError, WriteError
from pinlib.core.tomlfile import BOM, atomic_write, file_lock, line_index, line_of, tomllib
from pinlib.library import loader
from pinlib.library.fields import resolve_path
from pinlib.library.schema import FORMAT, title_problem
from pinlib.library.sources import NEEDS_SOURCE

__all__ = ["RECORD_BASES", "field_example", "new_part", "record_value", "resolve_field"]

#: The bases a recorded value may carry ("published": the limit a published standard
#: sets for every part of its kind, for a part whose datasheet states no number of its
#: own; "generic" is for the built-in classes, "derived" is set by pinlib itself).
RECORD_BASES = ("datasheet", "measured", "estimate", "published")

_ID = re.compile(r"^[a-z0-9][a-z0-9-]*$")


def _inside_builtin(path: Path) -> bool:
    builtin = Path(loader.BUILTIN_DIR).resolve()
    try:
        Path(path).resolve().relative_to(builtin)
    except ValueError:
        return False
    return True


def team_folder(into_folder, why: str) -> Path:
    """The team library folder a new part file goes into, made when missing; the built-in
    library is refused (``why`` says what belongs elsewhere)."""
    folder = Path(into_folder)
    _refuse_builtin(folder, why, "name a team library folder with --into")
    from pinlib.library.walk import _system_folder

    real = folder.resolve()
    if _system_folder(real):
        # a file written there could never be read: no library folder may be one
        raise LibraryError(M.LIBRARY_IS_SYSTEM_FOLDER.format(real=real), file=str(folder),
                           field="--into",
                           hint="name a folder of its own for the team's parts, e.g. ./parts")
    from pinlib.core.pathkind import FOLDER, MISSING, UNREADABLE, path_kind

    kind, reason = path_kind(folder)
    if kind == UNREADABLE:
        raise WriteError(M.CANNOT_READ_FOLDER.format(reason=reason), file=str(folder),
                         field="--into")
    if kind not in (FOLDER, MISSING):
        raise WriteError(M.NOT_A_FOLDER, file=str(folder),
                         expected="the team library folder the part file goes in",
                         hint=f"name the folder, not a file in it (e.g. {folder.parent})")
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise WriteError(M.CANNOT_CREATE_FOLDER.format(reason=exc.strerror),
                         file=str(folder)) from None
    return folder


def _refuse_builtin(path: Path, what: str, hint: str) -> None:
    if _inside_builtin(path):
        raise LibraryError(M.BUILTIN_NOT_WRITTEN_BECAUSE.format(reason=what), file=str(path),
                           hint=hint)


def _check_id(new_id: object) -> str:
    if not isinstance(new_id, str) or not _ID.match(new_id) or len(new_id) > 64:
        raise LibraryError(M.INVALID_PART_ID, field="id", value=new_id,
                           expected="lowercase letters, digits and '-', starting with a letter "
                                    "or digit, at most 64 characters (e.g. 'eeprom-i2c-acme')")
    return new_id


def check_title(title: str | None, field: str = "title") -> None:
    """Refuse a title that is blank or more than one line, naming ``field`` (``title``,
    or the command's ``--title``); None (the class's title) passes.

    Raises
    ------
    InputError
        With the problem of :func:`pinlib.library.schema.title_problem`.
    """
    problem = None if title is None else title_problem(title)
    if problem is not None:
        raise InputError(problem, field=field, value=title, expected=M.TITLE_EXPECTED)


def one_line(text: str) -> str:
    """A source as one line: a line break or tab pasted with it (a caption copied out
    of a PDF) and any run of white space become one space, the ends stripped."""
    return " ".join(text.split())


def _toml_string(text: str) -> str:
    return tomlkit.string(text).as_string()


#: The widest line of the comments a new part file opens with (a terminal's columns).
COMMENT_WIDTH = 80


def _comment_text(text: str) -> str:
    """``text`` fit for one TOML comment: each run of white space, line break or other
    character a comment may not hold (or an editor would break the line at) one space."""
    return " ".join("".join(ch if ch.isprintable() else " " for ch in text).split())


def _comment(text: str) -> list[str]:
    """``text`` as TOML comment lines of at most :data:`COMMENT_WIDTH` columns."""
    return textwrap.wrap(_comment_text(text), COMMENT_WIDTH, initial_indent="# ",
                         subsequent_indent="# ", break_on_hyphens=False) or ["#"]


def _command_comment(words: list[str]) -> list[str]:
    """A command as comment lines of at most :data:`COMMENT_WIDTH` columns, each line
    but the last continued with `` \\`` (``words``: the pieces kept whole;
    :func:`pinlib.core.commandtext.continued_lines`)."""
    return continued_lines("#   " + words[0], words[1:], COMMENT_WIDTH, "#     ")


def new_part(library: loader.Library, new_id: str, from_class: str,
             into_folder: str | Path, title: str | None = None, *,
             basis: str = "datasheet", source: str = "") -> Path:
    """Create a team part file that extends a class of the library.

    Parameters
    ----------
    library : Library
        The merged library (to find the class and check that the id is free).
    new_id : str
        The new part's id, ``[a-z0-9-]+``.
    from_class : str
        The id of the part or class to extend.
    into_folder : path
        The team library folder to write ``<new_id>.toml`` into (created if missing).
    title : str, optional
        The new part's title, one line (not blank); the class's title when omitted.
    basis, source : str
        The part's provenance: how its own values were obtained and from what.  Without
        a source none is written (never an empty one): a comment asks for it, and
        ``pinlib parts check`` lists a ``datasheet`` or ``measured`` basis without one.

    Returns
    -------
    Path
        The file written.

    Raises
    ------
    LibraryError
        An id that exists or is malformed, an unknown class (with the closest ids), or
        a folder inside the built-in library.
    InputError
        A title that is blank or holds a line break.
    WriteError
        When the folder or file cannot be written.
    """
    _check_id(new_id)
    check_title(title)
    if new_id in library.files:
        raise LibraryError(M.PART_ID_EXISTS, field="id", value=new_id,
                           file=str(library.files[new_id].path),
                           hint="choose another id, or record values into that part")
    parent = library.get(from_class, field="extends")
    if basis not in RECORD_BASES + ("generic",):
        raise InputError(M.UNKNOWN_BASIS, field="basis", value=basis,
                         expected="one of " + ", ".join(RECORD_BASES + ("generic",)))
    folder = team_folder(into_folder, "a new part belongs in a team folder")
    target = folder / f"{new_id}.toml"
    today = _dt.date.today()
    title = parent.title if title is None else title
    text = "\n".join([
        *_comment(title),
        *_comment(f"A team part that extends '{from_class}' and inherits all of its values."),
        "# Record this part's own values with their sources, e.g.",
        *_command_comment(["pinlib parts record", new_id,
                           f'{field_example(parent)} "VALUE"',
                           '--source "document, revision, table"']),
        f"format = {_toml_string(FORMAT)}",
        f"id = {_toml_string(new_id)}",
        f"title = {_toml_string(title)}",
        f"category = {_toml_string(parent.category)}",
        f"extends = {_toml_string(from_class)}",
        *_provenance_lines(basis, source, today),
        "",
    ])
    return write_new_part(library, new_id, target, text)


def field_example(part) -> str:
    """The FIELD a ``pinlib parts record`` of a part extending ``part`` would name, as its
    next step says it: a field the class has, ready to paste: ``line.capacitance`` for a
    cable class (it has no pins), ``sides.a.sda.c_in`` for a bridging part (its first
    side's first pin), ``timing.f_max`` for a part with no pins, else its first pin's
    input capacitance (``sda.c_in``).

    Parameters
    ----------
    part : Part
        The class the new part extends.

    Returns
    -------
    str
        The field, as ``pinlib parts record`` reads it.
    """
    if part.line is not None or part.category == "cable":
        return "line.capacitance"
    if part.sides:
        side = sorted(part.sides)[0]
        pins = list(part.sides[side].pins)
        return f"sides.{side}.{pins[0]}.c_in" if pins else "timing.f_max"
    if not part.pins:
        return "timing.f_max"
    return f"{next(iter(part.pins))}.c_in"


def _provenance_lines(basis: str, source: str, today: _dt.date) -> list[str]:
    """The new file's ``provenance`` line: without a source no empty one is written, and a
    basis that names a document says, in a comment, what to fill in."""
    source = one_line(source) if isinstance(source, str) else ""
    bits = [f"basis = {_toml_string(basis)}"]
    if source:
        bits.append(f"source = {_toml_string(source)}")
    bits.append(f"recorded = {today.isoformat()}")
    line = "provenance = { " + ", ".join(bits) + " }"
    if source or basis not in NEEDS_SOURCE:
        return [line]
    example = ("I2C-bus specification UM10204 rev. 6" if basis == "published"
               else "datasheet rev C, 2024-03")
    return ["# Name the document this part's values come from: add to provenance",
            f'#   source = "{example}"  (pinlib parts check asks until then)',
            line]


def write_new_part(library: loader.Library, new_id: str, target: Path, text: str) -> Path:
    """Write a new part file under its lock: refused when the file exists or when the
    part would not load beside the library; atomic (a failed write leaves nothing)."""
    from pinlib.core.pathkind import FILE, FOLDER, OTHER, path_kind

    with file_lock(target):
        kind = path_kind(target)[0]
        if kind == FOLDER:  # "the file exists" sent the reader looking for a file
            raise LibraryError(M.PART_FILE_IS_FOLDER, file=str(target),
                               hint="choose another id or folder, or move that folder away")
        if kind in (FILE, OTHER):
            raise LibraryError(M.FILE_EXISTS, file=str(target),
                               hint="choose another id or folder")
        _validate(library, new_id, target, text)
        atomic_write(target, text)
    return target


def _validate(library: loader.Library, part_id: str, path: Path, text: str,
              field: str | None = None, old_text: str | None = None):
    """Validate ``part_id`` as if its file held ``text``; raise the first problem.  A text
    larger than the library reads is refused (written, the part would be left out)."""
    size = len(text.encode("utf-8"))
    if size > loader.MAX_PART_BYTES:
        raise LibraryError(M.PART_FILE_TOO_LARGE.format(size=size, limit=loader.MAX_PART_BYTES),
                           file=str(path), field=field,
                           hint="a source names a document, its revision and a table or "
                                "page: shorten the text given")
    raw = tomllib.loads(text)
    files = dict(library.files)
    files[part_id] = loader.PartFile(Path(path), raw, text, False)
    try:
        part = loader._resolve(part_id, files)
    except loader._Many as many:
        errors = many.errors
        mine = [e for e in errors if field and _within(e.field, field)] or errors
        raise _refusal(mine[0], path, field, old_text,
                       _as_it_stands(library, part_id, path, old_text)) from None
    except LibraryError as err:
        raise _refusal(err, path, field, old_text,
                       _as_it_stands(library, part_id, path, old_text)) from None
    # A part that extends this one and loaded before must still load.
    for child_id, _pf in files.items():
        if child_id == part_id or child_id not in library.parts:
            continue
        if part_id not in _ancestors(child_id, files):
            continue
        try:
            loader._resolve(child_id, files)
        except (loader._Many, LibraryError) as exc:
            first = exc.errors[0] if isinstance(exc, loader._Many) else exc
            raise LibraryError(M.WOULD_BREAK_CHILD.format(child=child_id),
                               file=str(path), field=field, hint=first.message) from None
    return part


def _ancestors(pid: str, files: dict) -> list[str]:
    out, seen = [], {pid}
    while True:
        parent = files[pid].raw.get("extends") if pid in files else None
        if not isinstance(parent, str) or parent in seen:
            return out
        out.append(parent)
        seen.add(parent)
        pid = parent


def _within(err_field: str | None, field: str) -> bool:
    """Whether an issue's field is the value the command wrote or a part of it (its
    --typ: ``pins.sda.c_in.typ`` under ``pins.sda.c_in``)."""
    return err_field == field or (err_field or "").startswith(field + ".")


def _as_it_stands(library, part_id: str, path: Path, old_text: str | None):
    """The first problem of the part with its file as it stands (before the value is
    written), or None when it loads or there is no old text."""
    if old_text is None:
        return None
    files = dict(library.files)
    files[part_id] = loader.PartFile(Path(path), tomllib.loads(old_text), old_text, False)
    try:
        loader._resolve(part_id, files)
    except loader._Many as many:
        return many.errors[0]
    except LibraryError as err:
        return err
    return None


def _refusal(err: PinlibError, path: Path, field: str | None, old_text: str | None,
             before: PinlibError | None = None):
    """The error for a value that does not validate, located in the file as it stands.
    ``before``: the part's problem before the value was written; a problem elsewhere
    that was there already is named as the file's own, not the value's."""
    if field is None:
        return err
    if before is not None and not _within(err.field, field) and \
            (before.file, before.field, before.problem) == (err.file, err.field, err.problem):
        return LibraryError(M.PART_INVALID_ALREADY.format(problem=err.problem),
                            file=err.file, line=err.line, field=err.field, value=err.value,
                            expected=err.expected,
                            hint=f"{field} was not written: correct this first, then "
                                 "record again")
    line = None if old_text is None else _line_near(old_text, field)
    if _within(err.field, field):
        # the value, or a part of it the command wrote (its --typ: "pins.sda.c_in.typ")
        return LibraryError(M.VALUE_REFUSED.format(problem=err.problem), file=str(path), line=line,
                            field=err.field, value=err.value, expected=err.expected,
                            hint=err.hint)
    return LibraryError(M.PART_WOULD_NOT_VALIDATE, file=str(path),
                        line=line, field=field, hint=err.message)


def _value_item(value_text: str, basis: str, source: str, typ: str | None) -> InlineTable:
    bits = [f"value = {_toml_string(value_text)}", f"basis = {_toml_string(basis)}",
            f"source = {_toml_string(source)}"]
    if typ is not None:
        bits.append(f"typ = {_toml_string(typ)}")
    return tomlkit.parse("v = { " + ", ".join(bits) + " }\n")["v"]


def _plain(item) -> object:
    return item.unwrap() if hasattr(item, "unwrap") else item


def _rebuilt_inline(table: InlineTable, key: str, item) -> InlineTable:
    """An inline table with ``key`` set, each other entry written as it was."""
    bits, done = [], False
    for k, v in table.value.body:
        if k is None:
            continue
        if k.key == key:
            bits.append(f"{k.as_string().strip()} = {item.as_string().strip()}")
            done = True
        else:
            bits.append(f"{k.as_string().strip()} = {v.as_string().strip()}")
    if not done:
        bits.append(f"{tomlkit.key(key).as_string().strip()} = {item.as_string().strip()}")
    return tomlkit.parse("v = { " + ", ".join(bits) + " }\n")["v"]


def _set_in_table(table: Table, key: str, item) -> None:
    """Set ``key`` in a [table]: in place when present, else after its last entry."""
    if key in table:
        table[key] = item
        return
    body = table.value.body
    trailing = []
    # Blank lines and comments at the end of a table belong to what follows it: keep them
    # there, and put the new entry after the table's last key.  Keyless entries at the very
    # end of the body are not in tomlkit's key map, so moving them keeps it consistent.
    while body and body[-1][0] is None:
        trailing.insert(0, body.pop())
    table.append(key, item)
    for entry in trailing:
        body.append(entry)


def _new_table(parent, key: str) -> Table:
    """Add an empty [table] under ``parent`` (the document or a table) and return it."""
    if isinstance(parent, Table) and parent.is_super_table() and len(parent.value.body):
        # After the last sibling [parent.x] table, taking over its trailing comments.
        last = next((v for k, v in reversed(parent.value.body) if k is not None), None)
        if isinstance(last, Table):
            body = last.value.body
            trailing = []
            while body and body[-1][0] is None:
                trailing.insert(0, body.pop())
            parent.append(key, tomlkit.table())
            new = parent[key]
            for entry in trailing:
                new.value.body.append(entry)
            return new
    parent.append(key, tomlkit.table(is_super_table=False))
    return parent[key]


def _set_path(doc, path: tuple[str, ...], item) -> None:
    node = doc
    for depth, key in enumerate(path[:-1]):
        if key in node:
            child = node[key]
            if isinstance(child, InlineTable):
                node[key] = _inline_with(child, path[depth + 1:], item)
                return
            if not isinstance(child, (Table, dict)):
                raise LibraryError(M.VALUE_WHERE_TABLE,
                                   field=".".join(path[: depth + 1]), value=_plain(child))
            node = child
            continue
        # Missing: a [table] for the last level, a super table above it.
        if depth == len(path) - 2:
            node = _new_table(node, key)
        else:
            node.append(key, tomlkit.table(is_super_table=True))
            node = node[key]
    if isinstance(node, Table):
        _set_in_table(node, path[-1], item)
    else:
        node[path[-1]] = item


def _inline_with(table: InlineTable, rest: tuple[str, ...], item) -> InlineTable:
    """``table`` with ``rest`` (a path inside it) set to ``item``, re-rendered on one line."""
    if len(rest) == 1:
        return _rebuilt_inline(table, rest[0], item)
    key = rest[0]
    inner = table.get(key)
    if inner is None:
        inner = tomlkit.parse("v = {}\n")["v"]
    elif not isinstance(inner, InlineTable):
        raise LibraryError(M.VALUE_WHERE_TABLE, field=key,
                           value=_plain(inner))
    return _rebuilt_inline(table, key, _inline_with(inner, rest[1:], item))


def _expected_data(data: dict, path: tuple[str, ...], value: dict) -> dict:
    out = copy.deepcopy(data)
    node = out
    for key in path[:-1]:
        node = node.setdefault(key, {})
    node[path[-1]] = value
    return out


def record_value(library: loader.Library, part_id: str, field: str, value_text: str,
                 source: str, basis: str = "datasheet", typ: str | None = None) -> Path:
    """Write one value with its provenance into a team part file.

    Parameters
    ----------
    library : Library
        The merged library holding the part (and the classes it extends).
    part_id : str
        The team part to write into.
    field : str
        ``PIN.FIELD`` (``"sda.c_in"``), ``"timing.f_max"``, ``"supply.min"``,
        ``"sides.a.sda.v_il"``...
    value_text : str
        The value as written in a datasheet, with its unit (``"8 pF"``, ``"0.3 VDD"``).
    source : str
        Where the value comes from: document, revision, table or page.
    basis : str
        ``datasheet``, ``measured``, ``estimate`` or ``published`` (:data:`RECORD_BASES`).
    typ : str, optional
        A typical value to keep beside the limit.

    Returns
    -------
    Path
        The file written.

    Raises
    ------
    LibraryError
        An unknown part or field, a file of the built-in library, or a value with which
        the part does not validate (the file is then left untouched).
    WriteError
        When the file cannot be replaced; the old file stays whole.
    """
    if part_id not in library.files:
        library.get(part_id)  # raises with the closest ids
    pf = library.files[part_id]
    path = pf.path
    if pf.others:  # two team files state this id: which one to write is not known
        raise pf.others[0]
    if pf.builtin or _inside_builtin(path):
        raise LibraryError(M.BUILTIN_NOT_WRITTEN, file=str(path),
                           field="id", value=part_id,
                           hint=f"make a team part first: pinlib parts new {part_id}-v2 "
                                f"--from {part_id} --into FOLDER")
    keys, _kind = resolve_field(library, part_id, field, value_text)
    dotted = ".".join(keys)
    if not isinstance(value_text, str) or not value_text.strip():
        raise InputError(M.VALUE_NEEDED, field=dotted, value=value_text,
                         expected="a value with its unit, e.g. '8 pF'")
    if not isinstance(source, str) or not source.strip():
        raise InputError(M.SOURCE_NEEDED, field="source",
                         expected="the document, revision and table, e.g. 'rev C, table 7.5'")
    if basis not in RECORD_BASES + ("generic",):
        raise InputError(M.UNKNOWN_BASIS, field="basis", value=basis,
                         expected="one of " + ", ".join(RECORD_BASES + ("generic",)))
    if typ is not None and not (isinstance(typ, str) and typ.strip()):
        raise InputError(M.EMPTY_TYPICAL, field=f"{dotted}.typ", value=typ)
    item = _value_item(value_text.strip(), basis, one_line(source),
                       None if typ is None else typ.strip())

    with file_lock(path):
        try:
            # as load reads it: a byte-order mark as if absent (atomic_write keeps it)
            old_text = path.read_text(encoding="utf-8").removeprefix(BOM)
        except OSError as exc:
            raise LibraryError(M.CANNOT_READ.format(reason=exc.strerror),
                               file=str(path)) from None
        try:
            doc = tomlkit.parse(old_text)
            old_data = tomllib.loads(old_text)
        except (tomlkit.exceptions.TOMLKitError, tomllib.TOMLDecodeError) as exc:
            raise LibraryError(M.NOT_TOML.format(detail=exc), file=str(path)) from None
        if old_data.get("id") != part_id or old_data.get("format") != FORMAT:
            raise LibraryError(M.FILE_NO_LONGER_HOLDS_PART, file=str(path),
                               field="id", value=old_data.get("id"), expected=part_id)
        _check_pin_exists(library, part_id, pf, old_data, keys, old_text)
        before = doc.as_string()
        _set_path(doc, keys, item)
        expected = _expected_data(old_data, keys, _plain(item))
        new_text = _blank_before_tables(old_text, _keep_untouched_lines(old_text, before,
                                                                         doc.as_string()))
        new_text, stamp = _stamp_recorded(new_text, old_data)
        if stamp is not None:
            expected["provenance"]["recorded"] = stamp
        try:
            new_data = tomllib.loads(new_text)
        except tomllib.TOMLDecodeError:
            new_data = None
        if new_data != expected:
            raise LibraryError(M.CANNOT_KEEP_LAYOUT,
                               file=str(path), field=dotted,
                               hint=f"write it by hand: {dotted.split('.')[-1]} = "
                                    f"{item.as_string()}")
        _validate(library, part_id, path, new_text, field=dotted, old_text=old_text)
        atomic_write(path, new_text)
    return path


def resolve_field(library: loader.Library, part_id: str, field: str,
                  value_text: str | None = None):
    """The key path and kind of ``field`` (:func:`pinlib.library.fields.resolve_path`);
    a path that names no value is refused at the part's file, and at the line of the
    table the field would go in where the file has it (``sda.c_inn`` at ``[pins.sda]``).

    Parameters
    ----------
    library : Library
        The merged library holding the part.
    part_id : str
        The part the value is for.
    field : str
        ``PIN.FIELD``, ``timing.FIELD``, ``supply.min``...
    value_text : str, optional
        The value to be recorded, echoed by a refusal of a field that takes no recorded
        value (a yes/no setting: ``got 'true'``).

    Returns
    -------
    tuple
        (keys, :class:`~pinlib.library.fields.ValueKind`).

    Raises
    ------
    LibraryError
        When the path does not end at a field that takes a value.
    """
    try:
        return resolve_path(field)
    except LibraryError as err:
        if err.value is None and value_text is not None:  # the value, not the field
            err = type(err)(err.problem, file=err.file, line=err.line, field=err.field,
                            value=value_text, expected=err.expected, hint=err.hint)
        pf = library.files.get(part_id)
        if pf is None:
            raise
        raise _at_part(err, pf.path, pf.text, err.field) from None


def _at_part(err: LibraryError, path: Path, text: str, field: str | None) -> LibraryError:
    """``err`` located at the part's file and the line of ``field`` there, else of the
    nearest table that holds it, else of the first table beside it (``pins.sdx`` at
    ``[pins.sda]``); no line when the file has none of them."""
    return err.located(file=str(path), line=_line_near(text, field))


def _line_near(text: str, field: str | None) -> int | None:
    """The line of ``field`` (dotted) in ``text``, else of the nearest table that holds
    it, else of the first table beside it; None when the file has none of them."""
    loc = tuple(field.split(".")) if isinstance(field, str) and field else ()
    index = line_index(text)
    line = line_of(index, loc) if loc else None
    while line is None and loc:
        # no table of its own: the first of its siblings ("pins.sdx" at [pins.sda])
        loc = loc[:-1]
        lines = [n for k, n in index.items() if loc and k[:len(loc)] == loc]
        line = min(lines) if lines else None
    return line


def _check_pin_exists(library, part_id, pf, data, keys, text: str = "") -> None:
    """A side must exist (here or in a parent) before a value is recorded on it, and a pin
    before a value is recorded on the pin; a refusal names the file (and the line of
    the table the value would go in)."""
    if keys[0] != "sides" and "pins" not in keys:
        return
    files = dict(library.files)
    files[part_id] = loader.PartFile(pf.path, data, "", False)
    try:
        merged, _, _ = loader._merged_raw(part_id, files, [])
    except LibraryError:
        return  # the full validation reports it
    try:
        if keys[0] == "sides":
            _check_side(merged, keys)
        if "pins" in keys:
            _check_pin(merged, keys)
    except LibraryError as err:
        raise _at_part(err, pf.path, text, err.field) from None


def _check_side(merged: dict, keys: tuple[str, ...]) -> None:
    sides = merged.get("sides") if isinstance(merged.get("sides"), dict) else {}
    side = keys[1]
    if side in sides:
        return
    if not sides:
        pins = merged.get("pins") if isinstance(merged.get("pins"), dict) else {}
        raise LibraryError(M.NO_SIDES, field=f"sides.{side}", value=side,
                           expected=M.NO_SIDES_EXPECTED.format(
                               pins=", ".join(sorted(map(str, pins))) or "none"))
    raise LibraryError(M.NO_SUCH_SIDE.format(side=side), field=f"sides.{side}", value=side,
                       expected=M.ONE_OF_ITS_SIDES.format(sides=", ".join(sorted(sides))),
                       hint=f"e.g. sides.{sorted(sides)[0]}." + ".".join(
                           keys[3:] if keys[2:3] == ("pins",) else keys[2:]))


def _check_pin(merged: dict, keys: tuple[str, ...]) -> None:
    at = keys.index("pins")
    pin = keys[at + 1]
    node = merged
    for key in keys[: at + 1]:
        node = node.get(key, {}) if isinstance(node, dict) else {}
    if at == 0 and not node and isinstance(merged.get("sides"), dict) and merged["sides"]:
        _refuse_top_level_pin(merged["sides"], keys)
    if not isinstance(node, dict) or pin not in node:
        held = sorted(node) if isinstance(node, dict) else []
        # "SDA" for sda (the datasheet's spelling): the likeness of names ignores case
        by_lower = {str(n).lower(): str(n) for n in held}
        near = nearby.closest(pin.lower(), by_lower)
        hint = "a new pin needs its function: add its table to the file by hand"
        if near:
            hint = "closest: " + ", ".join(by_lower[n] for n in near) + "; " + hint
        raise LibraryError(M.NO_SUCH_PIN, field=".".join(keys[: at + 2]),
                           value=pin, expected=f"one of its pins ({', '.join(held) or 'none'})",
                           hint=hint)


def _refuse_top_level_pin(sides: dict, keys: tuple[str, ...]) -> None:
    """A bridging part keeps its pins per side: name the side paths of the value asked for
    (``sda.c_in`` -> ``sides.a.sda.c_in`` or ``sides.b.sda.c_in``)."""
    pin, rest = keys[1], ".".join(keys[2:])
    pins = {name: side.get("pins") if isinstance(side.get("pins"), dict) else {}
            for name, side in sorted(sides.items()) if isinstance(side, dict)}
    holding = [f"sides.{name}.{pin}.{rest}" for name, held in pins.items() if pin in held]
    expected = " or ".join(holding) if holding else "a pin of one side: " + ", ".join(
        f"sides.{name}.{p}" for name, held in pins.items() for p in held)
    tables = " or ".join(f"[sides.{name}.pins.{pin if holding else 'NAME'}]" for name in pins
                         if pin in pins[name] or not holding)
    raise LibraryError(M.PINS_ON_SIDES, field=".".join(keys[:2]), value=pin,
                       expected=expected, hint=M.SIDE_PIN_PATHS.format(tables=tables))


def _keep_untouched_lines(old_text: str, before: str, after: str) -> str:
    """The edited text with every line the edit did not touch exactly as it was.

    tomlkit round-trips nearly every file byte for byte, but not all (it drops the
    space in ``{ recorded = 2026-12-01 }``).  ``before`` is its rendering of the file
    unedited, ``after`` of the edited file: lines that match between the two are taken
    from the original text.
    """
    if before == old_text:
        return after
    old_lines = old_text.splitlines(keepends=True)
    b, a = before.splitlines(keepends=True), after.splitlines(keepends=True)
    if len(old_lines) != len(b):
        return after
    out: list[str] = []
    at = 0  # the next edited line not yet taken
    for i, j, k in _matching_blocks(b, a):
        out += a[at:j]
        out += old_lines[i:i + k]
        at = j + k
    out += a[at:]
    return "".join(out)


#: The largest stretch of lines (the product of its lengths before and after) that
#: :func:`_matching_blocks` hands to difflib, whose matcher costs up to that product.
_DIFF_CELLS = 40_000


def _matching_blocks(a: list[str], b: list[str]) -> list[tuple[int, int, int]]:
    """The lines ``a`` and ``b`` share, as ``(i, j, k)`` with ``a[i:i+k] == b[j:j+k]``,
    in order: what ``difflib.SequenceMatcher(a=a, b=b, autojunk=False)`` matches on the
    texts an edit leaves, in time about linear in their length.

    The matcher takes the longest run of equal lines first, then does the same on each
    side of it.  After one edit that run is the lines before it or those after it, found
    here by comparing from either end (the longer first; the lines before it when they tie,
    as the matcher does), until what is left is the edited stretch, small enough for the
    matcher itself.  difflib on the whole file costs as much as the product of the two
    lengths in a file of many like lines (a part of 20,000 pins, each with its blank line
    and ``function = "gpio"``: minutes).  A stretch left that is still large and shares
    neither end (lines edited far apart) is split at the lines that occur once in each,
    in order (a header ``[pins.x]``), and its pieces are matched as above, except that a
    piece still large with neither end shared is left unmatched (taken as rewritten):
    the lines matched may then differ from the matcher's, and the cost stays bounded.
    """
    blocks: list[tuple[int, int, int]] = []
    todo = [(0, len(a), 0, len(b), True)]
    while todo:
        alo, ahi, blo, bhi, split = todo.pop()
        if alo == ahi or blo == bhi:
            continue
        if (ahi - alo) * (bhi - blo) <= _DIFF_CELLS:
            matcher = difflib.SequenceMatcher(a=a[alo:ahi], b=b[blo:bhi], autojunk=False)
            blocks += [(alo + i, blo + j, k) for i, j, k in matcher.get_matching_blocks() if k]
            continue
        head = 0
        while alo + head < ahi and blo + head < bhi and a[alo + head] == b[blo + head]:
            head += 1
        tail = 0
        while ahi - tail > alo and bhi - tail > blo and a[ahi - tail - 1] == b[bhi - tail - 1]:
            tail += 1
        if head and head >= tail:
            blocks.append((alo, blo, head))
            todo.append((alo + head, ahi, blo + head, bhi, split))
        elif tail:
            blocks.append((ahi - tail, bhi - tail, tail))
            todo.append((alo, ahi - tail, blo, bhi - tail, split))
        elif split:
            todo += _split_at_unique_lines(a, b, alo, ahi, blo, bhi)
    return sorted(blocks)


def _split_at_unique_lines(a, b, alo, ahi, blo, bhi) -> list[tuple]:
    """The stretches between the lines that occur once in ``a[alo:ahi]`` and once in
    ``b[blo:bhi]``, kept where they come in the same order in both (the longest such
    chain, in n log n), each as a stretch to match, not split again; and those lines as
    matches of one line each."""
    import bisect

    def once(seq, lo, hi) -> dict:
        seen: dict = {}
        for n in range(lo, hi):
            seen[seq[n]] = -1 if seq[n] in seen else n
        return seen

    in_a, in_b = once(a, alo, ahi), once(b, blo, bhi)
    pairs = [(i, in_b[line]) for line, i in in_a.items()
             if i >= 0 and in_b.get(line, -1) >= 0]
    pairs.sort()
    # the longest chain of pairs rising in b (patience sorting)
    tops: list[int] = []  # the smallest last j of a chain of each length
    ends: list[int] = []  # the pair that ends it
    back: list[int] = []  # each pair's predecessor in its chain
    for n, (_i, j) in enumerate(pairs):
        at = bisect.bisect_left(tops, j)
        back.append(ends[at - 1] if at else -1)
        if at == len(tops):
            tops.append(j)
            ends.append(n)
        else:
            tops[at], ends[at] = j, n
    chain, n = [], ends[-1] if ends else -1
    while n >= 0:
        chain.append(pairs[n])
        n = back[n]
    chain.reverse()
    out, i0, j0 = [], alo, blo
    for i, j in chain:
        out.append((i0, i, j0, j, False))
        out.append((i, i + 1, j, j + 1, False))
        i0, j0 = i + 1, j + 1
    out.append((i0, ahi, j0, bhi, False))
    return out


_HEADER = re.compile(r"^\s*\[")


def _blank_before_tables(old_text: str, new_text: str) -> str:
    """A blank line before each ``[table]`` header the edit put next to a value.

    A new table goes in after its siblings, which keep the blank lines that end them: the
    table that followed them (``[bridge]`` after a new ``[sides.a.pins.sda]``) would follow
    a value line.  A header the edit added, and one that had a blank line before it and
    lost it, get one; a file written without blank lines keeps its layout.
    """
    old_lines = old_text.splitlines(keepends=True)
    lines = new_text.splitlines(keepends=True)
    was = {}  # the line an unchanged line had in the old text
    for i, j, k in _matching_blocks(old_lines, lines):
        was.update((j + n, i + n) for n in range(k))
    out: list[str] = []
    for j, line in enumerate(lines):
        prev = out[-1] if out else ""
        if _HEADER.match(line) and prev.strip() and not prev.lstrip().startswith("#"):
            i = was.get(j)
            if i is None or (i > 0 and not old_lines[i - 1].strip()):
                out.append("\n")
        out.append(line)
    return "".join(out)


_RECORDED = re.compile(r"(\brecorded\s*=\s*)\d{4}-\d{2}-\d{2}(?![\dT:])")


def _stamp_recorded(text: str, data: dict) -> tuple[str, _dt.date | None]:
    """Set ``provenance.recorded`` to today when the file already carries that key.

    The date is replaced in the text of its line (tomlkit would re-render the line).
    """
    prov = data.get("provenance")
    if not isinstance(prov, dict) or type(prov.get("recorded")) is not _dt.date:
        return text, None
    line = line_of(line_index(text), ("provenance", "recorded"))
    lines = text.splitlines(keepends=True)
    if line is None or not _RECORDED.search(lines[line - 1]):
        return text, None
    today = _dt.date.today()
    lines[line - 1] = _RECORDED.sub(lambda m: m.group(1) + today.isoformat(), lines[line - 1],
                                    count=1)
    return "".join(lines), today
