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
* **Writes.**  Once, when the command ends, under the file's lock and atomically
  (:func:`pinlib.core.tomlfile.atomic_write`), merging what another run stored meanwhile.  A
  folder that cannot be written, or a damaged file, only costs the fits being computed
  again: nothing is reported and nothing else changes.

Only the command line installs the store (:func:`install`); pinlib used from Python or a
notebook keeps fits for the process, as before.
"""

from __future__ import annotations

import atexit
import hashlib
import json
import os
from collections.abc import Iterator, MutableMapping
from pathlib import Path

__all__ = ["FORMAT", "MAX_FITS", "FitStore", "code_version", "default_path", "install"]

FORMAT = "pinlib.fits/1"
#: Fits kept in the file; the oldest go first.
MAX_FITS = 2000


def code_version() -> str:
    """A digest of the source of the modules that compute fits."""
    from pinlib.physics import driver, rc

    h = hashlib.sha256()
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
        try:
            data = json.loads(self.path.read_text(encoding="utf-8"))
        except (OSError, ValueError):
            return {}
        if not isinstance(data, dict) or data.get("format") != FORMAT \
                or data.get("version") != self.version or not isinstance(data.get("fits"), dict):
            return {}
        return data["fits"]

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
                atomic_write(self.path, json.dumps(
                    {"format": FORMAT, "version": self.version, "fits": fits},
                    sort_keys=True) + "\n")
        except (OSError, PinlibError):
            return False  # a cache: the next run computes the fits again
        self._fits, self._new = fits, {}
        return True


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
