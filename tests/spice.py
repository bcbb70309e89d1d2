"""Small ngspice batch runner for reference waveforms in the tests.

ngspice is an independent circuit simulator; the tests use it as the outside
reference for pinlib's edge and line models.  Each deck runs in its own temporary
directory with ``ngspice -b`` (batch mode).

* :func:`run_deck` reads ``.meas`` results from the log.  A measurement that fails
  ("out of interval", ... ``failed!``) still lets ngspice exit 0 and simply prints no
  value, so every expected name is checked.
* :func:`run_waveform` adds a ``.control`` block that writes the requested vectors
  with ``wrdata`` and reads the file back.  ngspice may exit non-zero after a control
  run with no plot, so the data file is checked, not the exit code.
"""

from __future__ import annotations

import re
import shutil
import subprocess
import tempfile
from pathlib import Path

import numpy as np

__all__ = ["SpiceError", "have_ngspice", "run_deck", "run_waveform"]

TIMEOUT = 60  # seconds for one ngspice run

_MEASURE_LINE = re.compile(
    r"^\s*([A-Za-z_][\w.]*)\s*=\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)", re.MULTILINE)


class SpiceError(RuntimeError):
    """ngspice did not run, or did not produce what the test asked for."""


def have_ngspice() -> bool:
    """True when an ``ngspice`` executable is on PATH."""
    return shutil.which("ngspice") is not None


def _end_of_circuit(deck_text: str) -> int:
    """Index of the final ``.end`` line of a deck (where a control block can go)."""
    matches = list(re.finditer(r"^\s*\.end\s*$", deck_text, re.MULTILINE | re.IGNORECASE))
    if not matches:
        raise SpiceError("deck has no final '.end' line")
    return matches[-1].start()


def _run(deck_text: str, workdir: Path) -> subprocess.CompletedProcess:
    deck = workdir / "deck.cir"
    deck.write_text(deck_text, encoding="utf-8")
    try:
        return subprocess.run(["ngspice", "-b", deck.name], cwd=workdir, capture_output=True,
                              text=True, timeout=TIMEOUT, check=False)
    except FileNotFoundError as exc:
        raise SpiceError("ngspice is not on PATH") from exc
    except subprocess.TimeoutExpired as exc:
        raise SpiceError(f"ngspice ran longer than {TIMEOUT} s") from exc


def run_deck(deck_text: str, measures: list[str] | tuple[str, ...]) -> dict[str, float]:
    """Run a deck and return its ``.meas`` results.

    Parameters
    ----------
    deck_text : str
        A complete netlist (title line first, ``.end`` last) with ``.meas`` lines.
    measures : list of str
        Names of the measurements that must be present (case-insensitive).

    Returns
    -------
    dict
        Every measurement found in the log, by lower-case name, in SI units.

    Raises
    ------
    SpiceError
        If a wanted measurement is missing (failed) from the log.
    """
    with tempfile.TemporaryDirectory(prefix="pinlib-spice-") as tmp:
        proc = _run(deck_text, Path(tmp))
    found = {name.lower(): float(value) for name, value in _MEASURE_LINE.findall(proc.stdout)}
    missing = [m for m in measures if m.lower() not in found]
    if missing:
        failed = [line.strip() for line in (proc.stdout + proc.stderr).splitlines()
                  if "failed" in line.lower() or "error" in line.lower()]
        raise SpiceError(
            f"ngspice measurements missing: {missing} (exit {proc.returncode}); "
            f"log says: {failed[:10]}")
    return found


def run_waveform(deck_text: str, vectors: list[str] | tuple[str, ...]):
    """Run a deck's ``.tran`` analysis and return the requested vectors.

    Parameters
    ----------
    deck_text : str
        A complete netlist with a ``.tran`` line and no ``.control`` block.
    vectors : list of str
        Vectors to write, e.g. ``["v(out)", "v(near)"]``.

    Returns
    -------
    t : numpy.ndarray
        ngspice's own (non-uniform) time points. [s]
    arrays : list of numpy.ndarray
        One array per requested vector, sampled at ``t``.
    """
    if not vectors:
        raise SpiceError("no vectors requested")
    control = "\n".join([
        ".control",
        "set wr_singlescale",
        "set wr_vecnames",
        "run",
        "wrdata wave.txt " + " ".join(vectors),
        "quit",
        ".endc",
        "",
    ])
    cut = _end_of_circuit(deck_text)
    text = deck_text[:cut] + control + deck_text[cut:]
    with tempfile.TemporaryDirectory(prefix="pinlib-spice-") as tmp:
        proc = _run(text, Path(tmp))
        out = Path(tmp) / "wave.txt"
        if not out.is_file():
            raise SpiceError(f"ngspice wrote no data (exit {proc.returncode}): "
                             f"{proc.stderr.strip()[-500:]}")
        lines = out.read_text(encoding="utf-8").splitlines()
    header = lines[0].split()
    data = np.loadtxt(lines[1:], ndmin=2)
    if data.shape[1] != len(vectors) + 1 or header[0].lower() != "time":
        raise SpiceError(f"unexpected columns in ngspice data: {header}")
    return data[:, 0], [data[:, i + 1] for i in range(len(vectors))]
