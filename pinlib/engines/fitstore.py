"""Driver fits kept between runs of the ``pinlib`` command.

Fitting a driver model to a part's datasheet edge table
(:func:`pinlib.physics.driver.fit_driver`) takes a few milliseconds of least squares per
table, and a check of a design with SPI buses fits the same tables every run.  The fit
depends only on its inputs (the points, their levels, a fixed ``r_out``) and on the code
that computes it, so the command line keeps the fits it has made in one JSON file and
reads them back on the next run:

* **Key.**  Each fit is stored under a digest of its inputs
  (:func:`pinlib.physics.driver.fit_key`); the file as a whole carries a digest of the
  source of the modules that compute fits (``physics/driver/*.py`` and ``physics/rc.py``),
  and a file written by other code is ignored.  A stored fit is therefore the one a new
  computation would give, bit for bit.
* **Where.**  ``$PINLIB_CACHE_DIR/fits.json``; without it ``$XDG_CACHE_HOME/pinlib``, else
  ``~/.cache/pinlib``.  ``PINLIB_CACHE_DIR=off`` (or empty) keeps fits for the process
  only.
* **Trust.**  The file is a cache anyone can edit, so nothing in it is taken on faith.
  Each entry carries a digest of its key and content under this code's version
  (:func:`entry_digest`); an entry whose digest does not match, or whose numbers are
  not finite, is dropped as it is read.  :func:`pinlib.physics.driver.fit_driver`
  then checks what is left against the fit's own inputs (the method, a fixed ``r_out``,
  the same bounds as a fresh fit, the residuals recomputed from the stored ``r_out``
  and ``t_ramp``) and fits again when any of it disagrees.  Deleting or damaging the
  file therefore never changes a result, only the time it takes.
* **Size.**  A file over :data:`MAX_BYTES` (or not a regular file) is not read: the
  store starts empty and the next write replaces it.  At most :data:`MAX_FITS` entries
  are kept, the oldest dropped first, and a written file stays under :data:`MAX_BYTES`.
* **Writes.**  Once, when the command ends, under the file's lock (a lock file that is
  a symbolic link is not followed: the write is skipped) and atomically
  (:func:`pinlib.core.tomlfile.atomic_write`), merging what another run stored
  meanwhile.  A folder that cannot be written, or a damaged file, only costs the fits
  being computed again: nothing is reported and nothing else changes.

Only the command line installs the store (:func:`install`); pinlib used from Python or a
notebook keeps fits for the process, as before.
"""

from __future__ import annotations

import atexit
import json
import os
import stat
from collections.abc import Iterator, MutableMapping
from pathlib import Path

from pinlib.core.digest import sha256

__all__ = ["FORMAT", "MAX_BYTES", "MAX_FITS", "FitStore", "code_version", "default_path",
           "entry_digest", "install"]

FORMAT = "pinlib.fits/2"
#: Fits kept in the file; the oldest go first.
MAX_FITS = 2000
#: Largest file read or written [bytes]: 2000 fits of a few points with their notes take
#: well under 1 MB; a larger file was not written by pinlib, and reading it in full
#: every run would cost more than fitting again (common practice, no source).
MAX_BYTES = 4 * 2**20


def code_version() -> str:
    """A digest of the source of the modules that compute fits."""
    from pinlib.physics import driver, rc

    h = sha256()
    for path in (*sorted(Path(driver.__file__).parent.glob("*.py")), Path(rc.__file__)):
        h.update(path.read_bytes())
    return h.hexdigest()[:20]


def default_path() -> Path | None:
    """Where the command line keeps fits, or None when that is switched off."""
    if "PINLIB_CACHE_DIR" in os.environ:
        folder = os.environ["PINLIB_CACHE_DIR"]
        if folder.strip().lower() in ("", "off", "0", "no"):
            return None
        return Path(folder) / "fits.json"
    base = os.environ.get("XDG_CACHE_HOME") or Path.home() / ".cache"
    return Path(base) / "pinlib" / "fits.json"


class FitStore(MutableMapping):
    """Fit records by key, read from ``path`` when first asked for, written by :meth:`flush`.

    Parameters
    ----------
    path : path
        The JSON file. [1]
    version : str
        :func:`code_version` of the code whose fits this store holds. [1]
    """

    def __init__(self, path: str | os.PathLike, version: str):
        self.path = Path(path)
        self.version = version
        self._fits: dict | None = None
        self._new: dict = {}

    def _read(self) -> dict:
        text = _read_capped(self.path)
        if text is None:
            return {}
        try:
            data = json.loads(text, parse_constant=_no_constant)
        except (ValueError, RecursionError):
            return {}
        if not isinstance(data, dict) or data.get("format") != FORMAT \
                or data.get("version") != self.version or not isinstance(data.get("fits"), dict):
            return {}
        return {key: entry["fit"] for key, entry in data["fits"].items()
                if self._verified(key, entry)}

    def _verified(self, key, entry) -> bool:
        """True for an entry whose digest matches its key and content under this version."""
        if not (isinstance(key, str) and isinstance(entry, dict)
                and isinstance(entry.get("fit"), dict)):
            return False
        try:
            return entry.get("digest") == entry_digest(key, entry["fit"], self.version)
        except (ValueError, RecursionError):  # content json cannot write back
            return False

    def _all(self) -> dict:
        if self._fits is None:
            self._fits = self._read()
        return self._fits

    def __getitem__(self, key: str) -> dict:
        if key in self._new:
            return self._new[key]
        return self._all()[key]

    def __setitem__(self, key: str, record: dict) -> None:
        self._new[key] = record

    def __delitem__(self, key: str) -> None:
        self._new.pop(key, None)
        self._all().pop(key, None)

    def __iter__(self) -> Iterator[str]:
        return iter({**self._all(), **self._new})

    def __len__(self) -> int:
        return len({**self._all(), **self._new})

    def flush(self) -> bool:
        """Write the fits made since the store was read; True when written."""
        if not self._new:
            return False
        from pinlib.core.errors import PinlibError
        from pinlib.core.tomlfile import atomic_write, file_lock

        try:
            self.path.parent.mkdir(parents=True, exist_ok=True)
            with file_lock(self.path):
                fits = {**self._read(), **self._new}
                if len(fits) > MAX_FITS:
                    fits = dict(list(fits.items())[-MAX_FITS:])
                text = self._text(fits)
                while len(text.encode("utf-8")) > MAX_BYTES and fits:
                    fits = dict(list(fits.items())[len(fits) // 4 + 1:])  # oldest first
                    text = self._text(fits)
                atomic_write(self.path, text)
        except (OSError, PinlibError, ValueError):
            return False  # a cache: the next run computes the fits again
        self._fits, self._new = fits, {}
        return True


    def _text(self, fits: dict) -> str:
        """The file's text for ``fits``, each entry with its digest."""
        entries = {key: {"digest": entry_digest(key, fit, self.version), "fit": fit}
                   for key, fit in fits.items()}
        # allow_nan=False: a fit with a non-finite number is refused, not written
        return json.dumps({"format": FORMAT, "version": self.version, "fits": entries},
                          sort_keys=True, allow_nan=False) + "\n"


def entry_digest(key: str, fit: dict, version: str) -> str:
    """A digest of one entry: its key, its content and the code version that made it."""
    body = json.dumps([version, key, fit], sort_keys=True, allow_nan=True)
    return sha256(body.encode("utf-8")).hexdigest()


def _no_constant(name: str):
    raise ValueError(f"{name} is not a number a fit can hold")


def _read_capped(path: Path) -> str | None:
    """The file's text, or None for a file that is missing, not regular or over MAX_BYTES.

    Opened without blocking (a FIFO under the name does not hang the run) and read at
    most one byte past the cap (a link to an endless device does not fill memory).
    """
    flags = os.O_RDONLY | getattr(os, "O_NONBLOCK", 0)
    try:
        fd = os.open(path, flags)
    except OSError:
        return None
    try:
        info = os.fstat(fd)
        if not stat.S_ISREG(info.st_mode) or info.st_size > MAX_BYTES:
            return None
        with os.fdopen(fd, "rb", closefd=False) as fh:
            raw = fh.read(MAX_BYTES + 1)
    except OSError:
        return None
    finally:
        os.close(fd)
    if len(raw) > MAX_BYTES:
        return None
    try:
        return raw.decode("utf-8")
    except UnicodeDecodeError:
        return None


def install() -> FitStore | None:
    """Keep this process's driver fits in the default store, written when it exits."""
    from pinlib.physics import driver

    path = default_path()
    if path is None:
        driver.FIT_STORE = None
        return None
    current = driver.FIT_STORE
    if isinstance(current, FitStore) and current.path == path:
        return current  # installed by an earlier command in this process
    store = FitStore(path, code_version())
    driver.FIT_STORE = store
    atexit.register(store.flush)
    return store
