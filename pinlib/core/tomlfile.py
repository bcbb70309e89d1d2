"""Reading TOML files with line numbers for error messages, and writing them safely.

``tomllib`` gives no positions, so :func:`line_index` scans the text once and maps each
key path (``("pins", "sda", "c_in")``, ``("bus", 0, "devices", 2)``) to the line where
it is written.  It understands table headers, arrays of tables, dotted keys and the
keys of one-line inline tables, which is what pinlib's files use; for anything deeper
it answers with the line of the nearest enclosing key.

:func:`atomic_write` writes through a temporary file in the same folder and
``os.replace``, so a reader sees the old file or the new one, never half of either.
"""

from __future__ import annotations

import contextlib
import errno
import json
import os
import re
import stat
from pathlib import Path

from pinlib.core import messages as M
from pinlib.core.errors import InputError, WriteError

try:
    # tomli is the standard library's tomllib as a package of its own, compiled (mypyc)
    # where a wheel exists: the same parser and messages, the built-in library read in
    # about 9 ms less of a fresh process (tomllib itself costs 6-8 ms to import and
    # 9-10 ms to read the 36 built-in part files, tomli about 4 and 5).  Held below 2.4,
    # which reads TOML 1.1: the files keep to TOML 1.0, which tomlkit (writing them)
    # reads too.
    import tomli as tomllib
except ImportError:  # pragma: no cover - tomli is a dependency; the standard library's
    import tomllib

__all__ = ["load", "line_index", "line_of", "dotted", "toml_key", "atomic_write",
           "refuse_irregular_target",
           "file_lock", "BOM", "UTF8_BOM"]

_KEY = r'(?:[A-Za-z0-9_-]+|"[^"]*"|\'[^\']*\')'
_DOTTED = rf"{_KEY}(?:\s*\.\s*{_KEY})*"
_HEADER = re.compile(rf"^\s*\[(\[)?\s*({_DOTTED})\s*\]\]?\s*(?:#.*)?$")
_ASSIGN = re.compile(rf"^\s*({_DOTTED})\s*=\s*(.*)$")
# The keys of inline tables, found in one pass: runs of ordinary characters and whole
# strings are skipped as single tokens, and a key is looked for only right after "{" or
# ",".  (An unanchored search for KEY = took time quadratic in a long run of key
# characters: a 20,000-character description took seconds, 2 MB never finished.)
_INLINE_TOKEN = re.compile(
    rf"""[^"'{{,]+|"[^"\\]*(?:\\.[^"\\]*)*"?|'[^']*'?|[{{,]\s*(?:({_DOTTED})\s*=)?""")


def _inline_keys(text: str) -> list[tuple]:
    """The key paths written as ``{ key = ...`` or ``, a.b = ...`` in ``text``, each a
    tuple of names (time linear in the length of ``text``)."""
    return [tuple(_split_dotted(m.group(1))) for m in _INLINE_TOKEN.finditer(text)
            if m.group(1)]


def _inline_tables(line: str) -> list[str]:
    """The outermost ``{ ... }`` of ``line``, each as its text (braces inside quoted
    strings are not counted; an unclosed last table runs to the line's end)."""
    out, depth, start, quote = [], 0, 0, None
    for i, ch in enumerate(line):
        if quote:
            if ch == quote:
                quote = None
        elif ch in "\"'":
            quote = ch
        elif ch == "{":
            if depth == 0:
                start = i
            depth += 1
        elif ch == "}" and depth:
            depth -= 1
            if depth == 0:
                out.append(line[start:i + 1])
    if depth:
        out.append(line[start:])
    return out


def _split_dotted(text: str) -> list[str]:
    return [p.strip().strip('"').strip("'") for p in re.findall(_KEY, text)]


def line_index(text: str) -> dict[tuple, int]:
    """Map key paths to 1-based line numbers (see the module docstring)."""
    index: dict[tuple, int] = {}
    counters: dict[tuple, int] = {}
    table: tuple = ()
    array_items: dict[tuple, int] = {}  # position in a multi-line array, by key path
    open_array: tuple | None = None
    depth = 0
    for number, raw in enumerate(text.splitlines(), start=1):
        line = raw.split("#", 1)[0] if '"' not in raw and "'" not in raw else raw
        if open_array is not None:
            stripped = line.strip()
            # Each inline table on the line is an item (pinlib's files write one a
            # line); a line of other values counts as one item.
            if stripped and stripped[0] not in "]#":
                for item in _inline_tables(line) or [line]:
                    pos = array_items[open_array]
                    index.setdefault(open_array + (pos,), number)
                    for key in _inline_keys(item):
                        index.setdefault(open_array + (pos,) + key, number)
                    array_items[open_array] = pos + 1
            depth += line.count("[") - line.count("]")
            if depth <= 0:
                open_array = None
            continue
        h = _HEADER.match(line)
        if h:
            names = tuple(_split_dotted(h.group(2)))
            parts = _resolve_arrays(names, counters)
            if h.group(1):  # [[array.of.tables]]: a new item of the array
                key = _resolve_arrays(names[:-1], counters) + names[-1:]
                index.setdefault(key, number)  # the array itself: its first item's line
                counters[key] = counters.get(key, -1) + 1
                table = key + (counters[key],)
            else:
                table = parts
            index.setdefault(table, number)
            continue
        a = _ASSIGN.match(line)
        if a:
            path = table + tuple(_split_dotted(a.group(1)))
            index.setdefault(path, number)
            rest = a.group(2)
            keys = _inline_keys(rest)
            for key in keys:
                index.setdefault(path + key, number)
            if rest.lstrip().startswith("[") and rest.count("[") > rest.count("]"):
                open_array, depth = path, rest.count("[") - rest.count("]")
                array_items[path] = 0
            elif (rest.lstrip().startswith("{") and keys
                  and rest.count("[") > rest.count("]")):
                # an inline table whose last key opens an array over several lines
                # (``lines.sclk = { route = [``)
                open_array, depth = path + keys[-1], rest.count("[") - rest.count("]")
                array_items[open_array] = 0
            elif rest.lstrip().startswith("["):
                # one-line array of inline tables: all items on this line
                for i in range(rest.count("{")):
                    index.setdefault(path + (i,), number)
    return index


def _resolve_arrays(parts: tuple, counters: dict[tuple, int]) -> tuple:
    """Insert the current index of every array of tables a header passes through."""
    out: tuple = ()
    for p in parts:
        out = out + (p,)
        if out in counters:
            out = out + (counters[out],)
    return out


def dotted(loc) -> str:
    """A key path as users read it: ``('bus', 0, 'devices', 2, 'part')`` ->
    ``bus[0].devices[2].part``."""
    out = ""
    for p in loc:
        out += f"[{p}]" if isinstance(p, int) else (f".{p}" if out else str(p))
    return out


def toml_key(name: str) -> str:
    """``name`` written as a TOML key: bare where TOML allows (ASCII letters and digits,
    ``_`` and ``-``), else a quoted string (JSON's escapes are TOML's)."""
    bare = bool(name) and all(c.isascii() and (c.isalnum() or c in "_-") for c in name)
    return name if bare else json.dumps(name, ensure_ascii=False)


def line_of(index: dict[tuple, int], path) -> int | None:
    """The line of ``path``, or of its nearest enclosing key when it has none of its own."""
    path = tuple(path)
    while path:
        if path in index:
            return index[path]
        path = path[:-1]
    return None


#: The UTF-8 byte-order mark, as bytes; read as if absent, kept when a file is rewritten.
UTF8_BOM = b"\xef\xbb\xbf"
#: The byte-order mark as text (what ``str.decode`` leaves of it at a text's start).
BOM = "\ufeff"

#: The largest file :func:`load` reads unless told otherwise (a design of hundreds of
#: buses is well under 1 MB); the library reads part files under a lower limit.
MAX_FILE_BYTES = 16 * 2**20
#: Arrays and tables nested deeper than this are refused: pinlib's files nest 5 or 6
#: levels, and the TOML parser itself fails near 500.
MAX_NESTING = 64


def load(path: str | os.PathLike, *, error=InputError,
         max_bytes: int = MAX_FILE_BYTES) -> tuple[dict, str]:
    """Read and parse a TOML file; return (data, text).  Errors name file and line.

    Only a regular file is read (a FIFO, a device or a folder is refused without
    waiting on it), and only up to ``max_bytes``.
    """
    p = Path(path)
    raw = read_regular(p, error=error, max_bytes=max_bytes)
    # A UTF-8 byte-order mark (Windows editors write one) is read as if absent, before
    # anything counts lines and columns; atomic_write keeps it in the file.
    raw = raw.removeprefix(UTF8_BOM)
    if raw.startswith((b"\xff\xfe", b"\xfe\xff")):
        raise error(M.UTF16_TEXT, file=str(p), line=1, hint="save the file as UTF-8")
    nul = raw.find(b"\x00")  # valid UTF-8, but never in TOML: UTF-16 text or binary
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        if not 0 <= nul < exc.start:
            line, column = _place(raw, exc.start)
            raise error(M.NOT_UTF8, file=str(p), line=line,
                        hint=M.NOT_UTF8_WHERE.format(byte=f"0x{raw[exc.start]:02x}",
                                                     column=column)) from None
    if nul >= 0:
        line, column = _place(raw, nul)
        raise error(M.NUL_BYTE.format(column=column), file=str(p), line=line,
                    hint="save the file as UTF-8 text")
    if "\r" in text:  # as a file opened in text mode reads it
        text = text.replace("\r\n", "\n").replace("\r", "\n")
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        msg = str(exc)
        m = re.search(r"line (\d+)", msg)
        line, field, hint = _toml_advice(msg, text, int(m.group(1)) if m else None)
        raise error(M.NOT_TOML.format(detail=msg), file=str(p), line=line, field=field,
                    hint=hint) from None
    except RecursionError:
        raise error(M.NESTED_TOO_DEEP.format(limit=MAX_NESTING), file=str(p),
                    line=_deep_line(text)) from None
    deep = _too_deep(data)
    if deep is not None:
        raise error(M.NESTED_TOO_DEEP.format(limit=MAX_NESTING), file=str(p),
                    line=_line_within(line_index(text), deep) or _deep_line(text),
                    field=dotted(deep[:8]) + ("…" if len(deep) > 8 else "")) from None
    return data, text


def _place(raw: bytes, at: int) -> tuple[int, int]:
    """The line and column (1-based, in characters as an editor counts them) of byte
    ``at`` of ``raw``, whose bytes before it are UTF-8."""
    start = raw.rfind(b"\n", 0, at) + 1
    return (raw.count(b"\n", 0, at) + 1,
            len(raw[start:at].decode("utf-8", errors="replace")) + 1)


_KEY_VALUE = re.compile(r"^\s*([A-Za-z0-9_.-]+)\s*=\s*(.*?)\s*$")
_TABLE_HEADER = re.compile(r"^\s*\[(\[)?\s*([A-Za-z0-9_.\- ]+?)\s*\]\]?\s*(?:#.*)?$")


def _toml_advice(msg: str, text: str, line: int | None):
    """What a TOML parser's complaint most likely means, for people: (line, field,
    hint).  The parser names no key, and for a string or a key it finds wrong only at
    the end of the file no line either; the common slips are found here: a value with a
    unit written without quotes, a key or a table given twice, a string not closed."""
    lines = text.split("\n")
    here = lines[line - 1] if line and line <= len(lines) else None

    def field_at(key: str, at: int) -> str:
        h = next((h for ln in reversed(lines[:at - 1]) if (h := _TABLE_HEADER.match(ln))),
                 None)
        if h is None or h.group(1):  # top level, or an array of tables: the key alone
            return key
        return f"{h.group(2).replace(' ', '')}.{key}"

    if here is not None and msg.startswith(("Expected newline or end of document",
                                            "Invalid value")):
        kv = _KEY_VALUE.match(here.split(" #")[0])
        if kv and kv.group(2) and kv.group(2)[0] not in "\"'[{":
            key, value = kv.group(1), kv.group(2)
            if value.lower() in ("yes", "no", "on", "off", "true", "false"):
                return line, field_at(key, line), "a yes-or-no is written true or false"
            try:
                tomllib.loads(f'x = "{value}"')
            except tomllib.TOMLDecodeError:
                return line, None, None
            return line, field_at(key, line), f'text goes in quotes: {key} = "{value}"'
    if here is not None and msg.startswith("Illegal character '\\n'") and \
            here.replace('\\"', "").count('"') % 2 == 1:
        return line, None, "a string is not closed: add its closing quote"
    if msg.startswith("Cannot declare"):
        names = re.findall(r"'([^']*)'", msg.split(" twice")[0])
        want = ".".join(names)
        first = next((i + 1 for i, ln in enumerate(lines)
                      if (h := _TABLE_HEADER.match(ln)) and not h.group(1)
                      and h.group(2).replace(" ", "") == want
                      and i + 1 != line), None)
        where = f" (also at line {first})" if first else ""
        return line, want, f"the table [{want}] is declared twice{where}: merge the two"
    if msg.startswith("Cannot overwrite a value"):
        seen: dict[tuple, int] = {}
        table: tuple = ()
        for i, ln in enumerate(lines, 1):
            h = _TABLE_HEADER.match(ln)
            if h:  # an entry of an array of tables is a table of its own
                table = tuple(h.group(2).replace(" ", "").split(".")) + (
                    (i,) if h.group(1) else ())
                continue
            kv = _KEY_VALUE.match(ln)
            if kv:
                key = table + tuple(kv.group(1).split("."))
                if key in seen:
                    name = ".".join(k for k in key if isinstance(k, str))
                    return i, name, f"{name} is set twice (also at line {seen[key]}): keep one"
                seen[key] = i
        return line, None, "a key is set twice in one table: keep one"
    if msg.startswith("Unterminated string") and line is None:
        for i, ln in enumerate(lines, 1):
            body = ln.replace('\\"', "")
            if body.lstrip().startswith("#"):
                continue
            if body.count('"') % 2 == 1 and '"""' not in body:
                return i, None, "a string is not closed: add its closing quote"
    if line is None and msg.endswith("(at end of document)"):
        # the parser met the end inside a value, a table or an array: the last written
        # line is where the file stops
        last = max((i for i, ln in enumerate(lines, 1) if ln.strip()), default=None)
        return last, None, M.TOML_ENDS_EARLY
    return line, None, None


def read_regular(path: Path, *, error=InputError, max_bytes: int = MAX_FILE_BYTES) -> bytes:
    """The bytes of a regular file of at most ``max_bytes``; anything else is refused.

    The file is opened without blocking and checked on the open descriptor, so a FIFO
    named like a part file, ``/dev/zero`` behind a link or a folder is refused at once.
    """
    try:
        fd = os.open(path, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_BINARY", 0))
    except FileNotFoundError:
        raise error(M.FILE_NOT_FOUND, file=str(path)) from None
    except OSError as exc:
        raise error(M.CANNOT_READ.format(reason=exc.strerror), file=str(path)) from None
    try:
        st = os.fstat(fd)
        if stat.S_ISDIR(st.st_mode):
            raise error(M.CANNOT_READ.format(reason=os.strerror(errno.EISDIR)), file=str(path))
        if not stat.S_ISREG(st.st_mode):
            raise error(M.NOT_A_REGULAR_FILE, file=str(path))
        if st.st_size > max_bytes:
            raise error(M.FILE_TOO_LARGE.format(size=st.st_size, limit=max_bytes),
                        file=str(path))
        chunks, size = [], 0
        while size <= max_bytes:
            chunk = os.read(fd, min(1 << 20, max_bytes + 1 - size))
            if not chunk:
                break
            chunks.append(chunk)
            size += len(chunk)
    except OSError as exc:
        raise error(M.CANNOT_READ.format(reason=exc.strerror), file=str(path)) from None
    finally:
        os.close(fd)
    raw = b"".join(chunks)
    if len(raw) > max_bytes:  # grew while being read
        raise error(M.FILE_TOO_LARGE.format(size=len(raw), limit=max_bytes), file=str(path))
    return raw


def _too_deep(data) -> tuple | None:
    """The path of the first value nested deeper than MAX_NESTING, or None (no recursion)."""
    stack = [((), data)]
    while stack:
        path, value = stack.pop()
        if len(path) > MAX_NESTING:
            return path
        if isinstance(value, dict):
            stack.extend((path + (k,), v) for k, v in value.items())
        elif isinstance(value, list):
            stack.extend((path + (i,), v) for i, v in enumerate(value))
    return None


def _line_within(index: dict[tuple, int], path: tuple) -> int | None:
    """The first line of ``path`` or of a key below it (a deep header names only its
    whole path), else of its nearest enclosing key."""
    below = [n for key, n in index.items() if key[: len(path)] == path]
    return min(below) if below else line_of(index, path)


def _deep_line(text: str) -> int | None:
    """The first line where brackets and braces open deeper than MAX_NESTING, or whose
    header or key has more dotted parts than that (brackets and dots inside strings are
    counted too: this only places a message)."""
    depth = 0
    for number, line in enumerate(text.splitlines(), start=1):
        opened = line.count("[") + line.count("{")
        if depth + opened > MAX_NESTING:
            return number
        head = line.split("=", 1)[0]  # a header, or a key before its value
        if head.count(".") >= MAX_NESTING:
            return number
        depth = max(0, depth + opened - line.count("]") - line.count("}"))
    return None


@contextlib.contextmanager
def file_lock(target: str | os.PathLike):
    """Hold an exclusive advisory lock beside ``target`` (``.name.lock``) while writing.

    Two processes recording into one file take turns; each reads the file afresh
    inside the lock, so neither overwrites the other's value.  A link is locked at the
    file it leads to, so writers through the link and through the file take turns too.

    The lock file is removed when the lock is let go (POSIX).  That is safe because a
    writer that gets the lock checks that the file it locked is still the one at the
    lock's path, and starts again when it was removed under it; the lock file itself
    is never followed if it is a link: a lock file that is a link (pinlib never
    makes one) refuses the write.
    """
    target = Path(os.path.realpath(target))
    lock_path = target.with_name(f".{target.name}.lock")
    if lock_path.is_symlink():
        raise WriteError(M.CANNOT_LOCK.format(reason=M.LOCK_IS_A_LINK.format(
            lock=lock_path.name)), file=str(target))
    try:
        import fcntl
    except ImportError:  # pragma: no cover - Windows: msvcrt byte lock, file kept
        fcntl = None
    while True:
        fd = _open_lock(lock_path, target)
        if fcntl is None:  # pragma: no cover
            import msvcrt

            msvcrt.locking(fd, msvcrt.LK_LOCK, 1)
            break
        fcntl.flock(fd, fcntl.LOCK_EX)
        if _same_file(fd, lock_path):
            break
        os.close(fd)  # removed by the writer before us: lock the new one
    try:
        yield
    finally:
        if fcntl is not None:
            with contextlib.suppress(OSError):
                os.unlink(lock_path)  # still ours: we hold its lock
        os.close(fd)


def _open_lock(lock_path: Path, target: Path) -> int:
    flags = os.O_RDWR | os.O_CREAT | getattr(os, "O_NOFOLLOW", 0)
    try:
        return os.open(lock_path, flags, 0o644)
    except OSError as exc:
        refused = _not_writable(exc, lock_path.parent, target, lock_path)
        if refused is not None:
            raise refused from None
        raise WriteError(M.CANNOT_LOCK.format(reason=exc.strerror), file=str(target)) from None


def _user() -> str:
    """This process's user name (its number where it has none)."""
    try:
        import pwd

        return pwd.getpwuid(os.geteuid()).pw_name
    except (ImportError, KeyError, AttributeError):  # pragma: no cover - Windows, no entry
        return str(getattr(os, "geteuid", lambda: "?")())


def _not_writable(exc: OSError, folder: Path, target: Path,
                  lock: Path | None = None) -> WriteError | None:
    """The refusal for a write the file system denies: a folder that does not exist (a
    write never creates one), a folder this user may not write in, one on a read-only
    file system, or (``lock``) a lock file left by another user; None for any other
    failure."""
    import errno

    shown = str(folder) if str(folder) else "."
    if exc.errno == errno.ENOENT and not folder.is_dir():
        return WriteError(M.FOLDER_MISSING.format(folder=shown), file=str(target),
                          hint=M.FOLDER_MISSING_HINT)
    if exc.errno == errno.EROFS:
        return WriteError(M.FOLDER_READ_ONLY_FS.format(folder=shown), file=str(target))
    if exc.errno not in (errno.EACCES, errno.EPERM):
        return None
    if lock is not None and os.access(folder, os.W_OK | os.X_OK) and lock.exists():
        return WriteError(M.CANNOT_LOCK.format(reason=M.LOCK_NOT_WRITABLE.format(
            lock=lock.name, user=_user())), file=str(target),
            hint="remove the lock file when no pinlib is writing the file")
    return WriteError(M.FOLDER_NOT_WRITABLE.format(folder=shown, user=_user()),
                      file=str(target), hint=M.WRITABLE_FOLDER_HINT)


def _same_file(fd: int, path: Path) -> bool:
    try:
        here = os.stat(path, follow_symlinks=False)
    except OSError:
        return False
    st = os.fstat(fd)
    return (here.st_dev, here.st_ino) == (st.st_dev, st.st_ino)


#: A temporary file of :func:`atomic_write` older than this (seconds) was left by a
#: writer that was stopped; the next write in its folder removes it.
STALE_TEMPORARY_SECONDS = 600
#: The name of such a file (compiled when a file is written: a check writes none).
_TEMPORARY = r"^\..+\.(?:toml|json|html|md|svg|png)\.[a-z0-9_]{8}\.tmp$"


def _remove_stale_temporaries(folder: Path) -> None:
    """Remove pinlib's own temporary files (``.NAME.XXXXXXXX.tmp``, regular files) left in
    ``folder`` by writers that were stopped more than STALE_TEMPORARY_SECONDS ago."""
    import time

    old = time.time() - STALE_TEMPORARY_SECONDS
    try:
        entries = list(os.scandir(folder))
    except OSError:
        return
    temporary = re.compile(_TEMPORARY)
    for entry in entries:
        if not temporary.match(entry.name):
            continue
        with contextlib.suppress(OSError):
            st = entry.stat(follow_symlinks=False)
            if stat.S_ISREG(st.st_mode) and st.st_mtime < old:
                os.unlink(entry.path)


def _umask() -> int:
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


def refuse_irregular_target(path: str | os.PathLike, hint: str | None = None) -> None:
    """Raise a WriteError when ``path`` (or what its link leads to) exists and is not a
    regular file: a folder, a device (``/dev/full``), a pipe or a socket.  Replaced by a
    regular file it would be gone (a device node for every user of the machine).  A
    read-only file is refused too.  A command calls it before its work, so that the
    refusal comes at once."""
    try:
        mode = os.stat(path).st_mode
    except OSError:
        return  # a new file (or one whose trouble the write itself names)
    if not stat.S_ISREG(mode):
        raise WriteError(M.NOT_A_REGULAR_TARGET, file=str(path),
                         expected="the name of a regular file, or of a new one", hint=hint)
    # A read-only file (locked by a version control tool, or by its owner) would be
    # replaced all the same by the write's rename, which asks only the folder; root may
    # write any file, so a file with no write permission for anyone is read-only too.
    if not (mode & 0o222) or not os.access(path, os.W_OK):
        raise WriteError(M.READ_ONLY_TARGET, file=str(path),
                         hint="make it writable first (chmod u+w)")


def _saved_form(path: Path) -> tuple[str, bool]:
    """How the file at ``path`` was saved: its line ending, ``"\r\n"`` when it ends its
    first line so (a file saved on Windows), else ``"\n"``; and whether it starts with
    a UTF-8 byte-order mark.  A new file or one that cannot be read: ``("\n", False)``."""
    try:
        with open(path, "rb") as fh:
            head = fh.read(64 * 1024)
    except OSError:
        return "\n", False
    end = head.find(b"\n")
    return ("\r\n" if end > 0 and head[end - 1:end] == b"\r" else "\n",
            head.startswith(UTF8_BOM))


def atomic_write(path: str | os.PathLike, text: str) -> None:
    """Replace ``path`` with ``text`` atomically; on any failure the old file stays whole.

    When ``path`` is a link, the file it leads to is replaced (the link stays).  A path
    that is not a regular file (a folder, a device, a pipe) is refused, never replaced.
    A file whose lines end in CRLF keeps them (its text is read with LF), and one that
    starts with a UTF-8 byte-order mark keeps it (its text is read without).  Stale
    temporary files of stopped writers in the folder are removed first.  The text goes
    to a temporary file in the same folder, is flushed and synced, takes the old file's
    permission bits (a new file those of the umask), and then replaces the old file in
    one step.
    """
    import tempfile  # here: a command that only reads files does without it (and random)

    # Through a link: the file it leads to is replaced, and the link stays a link.
    path = Path(os.path.realpath(path)) if os.path.islink(path) else Path(path)
    refuse_irregular_target(path)
    ending, bom = _saved_form(path)
    if "\r" not in text and ending == "\r\n":
        text = text.replace("\n", "\r\n")  # a file read with CRLF (load) keeps them
    if bom and not text.startswith(BOM):
        text = BOM + text  # and one that starts with a byte-order mark keeps it
    folder = path.parent if str(path.parent) else Path(".")
    _remove_stale_temporaries(folder)
    try:
        fd, tmp = tempfile.mkstemp(dir=folder, prefix=f".{path.name}.", suffix=".tmp")
    except OSError as exc:
        refused = _not_writable(exc, folder, path)
        if refused is not None:
            raise refused from None
        raise WriteError(M.CANNOT_WRITE_IN_FOLDER.format(reason=exc.strerror),
                         file=str(path)) from None
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="") as fh:
            fh.write(text)
            fh.flush()
            os.fsync(fh.fileno())
        try:
            mode = os.stat(path).st_mode & 0o7777
        except FileNotFoundError:
            # A new file: the mode any new file gets here.  mkstemp made the temporary
            # file 0600, which would leave a team's new part readable by its writer only.
            mode = 0o666 & ~_umask()
        os.chmod(tmp, mode)
        os.replace(tmp, path)
    except OSError as exc:
        with contextlib.suppress(OSError):
            os.unlink(tmp)
        raise WriteError(M.CANNOT_WRITE_FILE.format(reason=exc.strerror), file=str(path)) from None
    except BaseException:
        with contextlib.suppress(OSError):
            os.unlink(tmp)
        raise
