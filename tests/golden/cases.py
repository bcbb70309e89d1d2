"""What the golden files hold and how each is computed.

Every case is one run of the ``pinlib`` command with ``--json``, made in this process
through :func:`pinlib.cli.main` (the command is the interface least likely to move while
the modules behind it are rearranged).  Design paths are passed absolute and the
checkout's folder is then cut from every string, so the files do not depend on where
the checkout lives; fields that change from run to run or name a file's place are listed
in each case's ``ignore``.
"""

from __future__ import annotations

import contextlib
import io
import json
import os
from dataclasses import dataclass, field
from pathlib import Path

__all__ = ["ROOT", "HERE", "CASES", "Case", "run", "ignored", "normalise", "write_whatif_designs"]

HERE = Path(__file__).resolve().parent
ROOT = HERE.parents[1]
DEMO = "workbooks/designs/demo-board.toml"
LONG_SPI = "tests/data/long-spi-link.toml"
TEST_PARTS = "tests/data/parts"
PP_PARTS = "tests/data/pushpull"
DESIGNS = "tests/golden/designs"

#: Modest sample count: the run is a regression net, not a yield estimate.
MC_SAMPLES = "2000"

# Present in `pinlib check --json` only when a snapshot lies beside the design (a
# developer's earlier `--save`); the result itself is compared without it.
CHECK_IGNORE = ("path", "changes")
WHATIF_IGNORE = CHECK_IGNORE
SWAP_IGNORE = ("path", "before/path", "after/path", "swaps/*/file",
               "changes/old_created", "changes/new_created")


@dataclass(frozen=True)
class Case:
    """One golden file: ``<name>.json`` under tests/golden/<kind>/."""

    name: str
    kind: str                     # folder: results, candidates, whatif, swap
    argv: tuple[str, ...]         # the command's arguments; paths relative to the checkout
    ignore: tuple[str, ...] = field(default=())
    paths: tuple[int, ...] = field(default=(1,))   # indices of argv that are paths

    @property
    def file(self) -> Path:
        return HERE / self.kind / f"{self.name}.json"


def _check(name: str, design: str, *extra: str, library: str | None = None,
           kind: str = "results") -> Case:
    argv = ["check", design, "--json", *extra]
    paths = [1]
    if library:
        argv += ["--library", library]
        paths.append(len(argv) - 1)
    return Case(name, kind, tuple(argv), CHECK_IGNORE, tuple(paths))


def _candidates(ref: str) -> Case:
    return Case(f"demo-{ref}", "candidates", ("candidates", DEMO, ref, "--json"), ("path",))


CASES: list[Case] = [
    # the result of every design: the demo, the design files under tests/data, and the
    # buses of tests/test_whatif.py (written out under tests/golden/designs/)
    _check("demo-board", DEMO),
    _check("long-spi-link", LONG_SPI),
    _check("whatif-buses", f"{DESIGNS}/whatif-buses.toml", library=TEST_PARTS),
    _check("whatif-rc", f"{DESIGNS}/whatif-rc.toml", library=TEST_PARTS),
    # GPIO: no design above has a GPIO bus (designs/gpio-lines.toml is written by hand)
    _check("gpio-lines", f"{DESIGNS}/gpio-lines.toml", library=PP_PARTS),
    # the candidate rankings, in full: I2C (3.3 V segment, 1.8 V segment behind the
    # translator), SMBus, SPI (flash, display) and the controller on all four buses
    _candidates("U4"),
    _candidates("U9"),
    _candidates("U30"),
    _candidates("U7"),
    _candidates("U12"),
    _candidates("U1"),
    # corners and a seeded Monte Carlo run
    _check("demo-board", DEMO, "--corners", "--monte-carlo", MC_SAMPLES, "--seed", "1",
           kind="whatif"),
    _check("whatif-buses", f"{DESIGNS}/whatif-buses.toml", "--corners", "--monte-carlo",
           MC_SAMPLES, "--seed", "1", library=TEST_PARTS, kind="whatif"),
    _check("whatif-buses-normal", f"{DESIGNS}/whatif-buses-normal.toml", "--monte-carlo",
           MC_SAMPLES, "--seed", "1", library=TEST_PARTS, kind="whatif"),
    _check("whatif-rc", f"{DESIGNS}/whatif-rc.toml", "--corners", "--monte-carlo",
           MC_SAMPLES, "--seed", "1", library=TEST_PARTS, kind="whatif"),
    _check("gpio-lines", f"{DESIGNS}/gpio-lines.toml", "--corners", "--monte-carlo",
           MC_SAMPLES, "--seed", "1", library=PP_PARTS, kind="whatif"),
    _check("long-spi-link", LONG_SPI, "--corners", "--monte-carlo", MC_SAMPLES, "--seed", "1",
           kind="whatif"),
    # a substitution: before, after and the change list
    Case("demo-U4-sensor-breakout-module", "swap",
         ("swap", DEMO, "U4=sensor-breakout-module", "--json"), SWAP_IGNORE),
]


def normalise(doc):
    """``doc`` with the checkout's folder cut from every string (``/…/main/x`` -> ``x``)."""
    root = str(ROOT) + os.sep
    if isinstance(doc, dict):
        return {k: normalise(v) for k, v in doc.items()}
    if isinstance(doc, list):
        return [normalise(v) for v in doc]
    if isinstance(doc, str):
        return doc.replace(root, "")
    return doc


def run(case: Case) -> dict:
    """Run the case's command in this process: the golden document, ``{"command",
    "exit_status", "output"}`` with the command's JSON output normalised."""
    from pinlib.cli import main

    argv = [str(ROOT / a) if i in case.paths else a for i, a in enumerate(case.argv)]
    out = io.StringIO()
    with contextlib.redirect_stdout(out):
        code = main(argv)
    # through text and back, so the document holds exactly what the file holds
    return {"command": "pinlib " + " ".join(case.argv), "exit_status": code,
            "output": normalise(json.loads(out.getvalue()))}


def ignored(case: Case) -> tuple[str, ...]:
    """The case's ignored places within its golden document."""
    return tuple("output/" + p for p in case.ignore)


def write_whatif_designs() -> list[Path]:
    """Write the buses of tests/test_whatif.py as design files (at the tolerances its
    ``tolerant()`` uses by default, and its ``RC_BUS``), for the cases above."""
    from tests import test_whatif as w

    text = w.HEAD + w.BUSES.format(vtol="5 %", ptol="1 %", ctol="10 %", ltol="5 %")
    normal = w.HEAD + 'distribution = "normal"\n' + w.BUSES.format(
        vtol="5 %", ptol="1 %", ctol="10 %", ltol="5 %")
    head = ("# Written by `python -m tests.golden.make_goldens` from the buses of\n"
            "# tests/test_whatif.py (invented test buses; parts from tests/data/parts).\n")
    out = []
    for name, body in (("whatif-buses", text), ("whatif-buses-normal", normal),
                       ("whatif-rc", w.HEAD + w.RC_BUS)):
        path = ROOT / DESIGNS / f"{name}.toml"
        path.parent.mkdir(parents=True, exist_ok=True)
        path.write_text(head + body, encoding="utf-8")
        out.append(path)
    return out
