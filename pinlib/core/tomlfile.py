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
import os
import re
import sys
import tempfile
from pathlib import Path

from pinlib.core import messages as M
from pinlib.core.errors import InputError, WriteError

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover - exercised on 3.10 only
    import tomli as tomllib

__all__ = ["load", "line_index", "line_of", "dotted", "atomic_write", "file_lock"]

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
            # One item a line, as pinlib's files write arrays of inline tables.
            if stripped and stripped[0] not in "]#":
                pos = array_items[open_array]
                index.setdefault(open_array + (pos,), number)
                for key in _inline_keys(line):
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
            for key in _inline_keys(rest):
                index.setdefault(path + key, number)
            if rest.lstrip().startswith("[") and rest.count("[") > rest.count("]"):
                open_array, depth = path, rest.count("[") - rest.count("]")
                array_items[path] = 0
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


def line_of(index: dict[tuple, int], path) -> int | None:
    """The line of ``path``, or of its nearest enclosing key when it has none of its own."""
    path = tuple(path)
    while path:
        if path in index:
            return index[path]
        path = path[:-1]
    return None


def load(path: str | os.PathLike, *, error=InputError) -> tuple[dict, str]:
    """Read and parse a TOML file; return (data, text).  Errors name file and line."""
    p = Path(path)
    try:
        text = p.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise error(M.FILE_NOT_FOUND, file=str(p)) from None
    except UnicodeDecodeError as exc:
        raise error(M.NOT_UTF8, file=str(p), hint=str(exc)) from None
    except OSError as exc:
        raise error(M.CANNOT_READ.format(reason=exc.strerror), file=str(p)) from None
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        msg = str(exc)
        m = re.search(r"line (\d+)", msg)
        raise error(M.NOT_TOML.format(detail=msg), file=str(p),
                    line=int(m.group(1)) if m else None) from None
    return data, text


@contextlib.contextmanager
def file_lock(target: str | os.PathLike):
    """Hold an exclusive advisory lock beside ``target`` (``.name.lock``) while writing.

    Two processes recording into one file take turns; each reads the file afresh
    inside the lock, so neither overwrites the other's value.
    """
    target = Path(target)
    lock_path = target.with_name(f".{target.name}.lock")
    try:
        fd = os.open(lock_path, os.O_RDWR | os.O_CREAT, 0o644)
    except OSError as exc:
        raise WriteError(M.CANNOT_LOCK.format(reason=exc.strerror), file=str(target)) from None
    try:
        try:
            import fcntl
        except ImportError:  # pragma: no cover - Windows: msvcrt byte lock
            import msvcrt

            msvcrt.locking(fd, msvcrt.LK_LOCK, 1)
        else:
            fcntl.flock(fd, fcntl.LOCK_EX)
        yield
    finally:
        os.close(fd)


def _umask() -> int:
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


def atomic_write(path: str | os.PathLike, text: str) -> None:
    """Replace ``path`` with ``text`` atomically; on any failure the old file stays whole.

    The text goes to a temporary file in the same folder, is flushed and synced, takes
    the old file's permission bits (a new file those of the umask), and then replaces the
    old file in one step.
    """
    path = Path(path)
    folder = path.parent if str(path.parent) else Path(".")
    try:
        fd, tmp = tempfile.mkstemp(dir=folder, prefix=f".{path.name}.", suffix=".tmp")
    except OSError as exc:
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
