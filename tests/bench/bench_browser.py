"""Click-to-chart in a real browser: one control per workbook, against the kernel's redraw.

JupyterLab serves a copy of the workbooks on 127.0.0.1 and the system's Chromium
(headless, 1400 × 900, through Playwright) opens each workbook that draws a chart, runs
it with Run All and then switches one dropdown between two of its options, as a user
does.  Each run is timed in the page (a MutationObserver), from the ``change`` event to
the last SVG under the widgets that differs from the one before, once the kernel is idle
again: the widget's message to the kernel, the engines, the charts' rendering, the
messages back and the browser's layout of the new SVGs.  Printed beside it: the time to
the first chart that changes, and to the page's last change (tables and notes a widget
redraws after its charts, such as workbook 05's candidates ranking).

No baseline: nothing else does this work, and the kernel's redraw alone is a part of it,
not the same work done another way. (A ratio of the two once compared the time to the
last chart with the kernel's whole redraw, which goes on after the charts: tables,
notes, workbook 05's ranking; so it could fall below 1 where the kernel does much after
its charts: on 2026-12-04, workbook 05's last chart 153 ms, its kernel's redraw 134 ms,
its page done 309 ms.) So the line prints the time to the last chart that changes;
beside it, for information, the kernel's whole redraw and the page's last change (the
same work end to end) and the difference between them, what the browser and the round
trip add: the kernel's redraw is the same control set in this process on the widget the
workbook builds (its cells run up to the one that displays ``.widget``), without the
browser, the messages or the page. No target: the 150 ms redraw target is the kernel's
(``python -m tests.bench --only widgets``).
"""

from __future__ import annotations

import contextlib
import json
import os
import statistics
import tempfile
import time
import warnings
from pathlib import Path

from tests.bench.common import Result, median_time

__all__ = ["run", "CASES"]

ROOT = Path(__file__).resolve().parents[2]

#: (workbook, label of the dropdown, the two options switched between: a text or the
#: first word of one)
CASES = [
    ("01-start-a-design.ipynb", "Mode", ("standard", "fast")),
    ("02-push-pull-line.ipynb", "Trace", ("stripline", "microstrip")),
    ("03-spi-timing.ipynb", "Bus", ("display", "flash")),
    ("05-rerun-after-substitution.ipynb", "Device", ("U7", "U4")),
]


def _index(texts: list[str], option: str) -> int:
    for i, t in enumerate(texts):
        if t == option or t.split()[0] == option:
            return i
    raise LookupError(f"no option {option!r} in {texts}")


# ----------------------------------------------------------------------- kernel side


def _workbook_widget(name: str):
    """The workbench object a workbook builds: its code cells run in order, in the
    workbooks folder, up to the cell that displays ``<name>.widget``."""
    nb = json.loads((ROOT / "workbooks" / name).read_text(encoding="utf-8"))
    ns: dict = {}
    old = Path.cwd()
    os.chdir(ROOT / "workbooks")
    try:
        for cell in nb["cells"]:
            if cell["cell_type"] != "code":
                continue
            source = "".join(cell["source"])
            exec(compile(source, name, "exec"), ns)  # the workbook's own code
            last = source.strip().splitlines()[-1].strip()
            if last.endswith(".widget"):
                return eval(last[: -len(".widget")], ns)
    finally:
        os.chdir(old)
    raise LookupError(f"{name}: no cell displays a widget")


def _control(widget, label: str):
    """The control of an ipywidgets tree whose description is ``label`` (or starts with
    it and a space or parenthesis)."""
    stack = [widget]
    while stack:
        w = stack.pop(0)
        description = getattr(w, "description", None) or ""
        if description == label or description.startswith((label + " ", label + "(")):
            if hasattr(w, "options"):
                return w
        stack.extend(getattr(w, "children", ()) or ())
    raise LookupError(f"no control labelled {label!r}")


def _kernel_time(name: str, label: str, options, repeats: int) -> float:
    owner = _workbook_widget(name)
    control = _control(owner.widget, label)
    texts = [o[0] if isinstance(o, tuple) else str(o) for o in control.options]
    indexes = [_index(texts, o) for o in options]
    state = {"i": 0}

    def switch():
        state["i"] += 1
        control.index = indexes[state["i"] % 2]

    return median_time(switch, repeats)


# ----------------------------------------------------------------------- browser side


def _browser_times(repeats: int) -> dict[str, list[float]]:
    from playwright.sync_api import sync_playwright

    from tests.browser import (
        LoopbackGuard,
        Workbook,
        copy_workbooks,
        launch_chromium,
        new_context,
        start_lab,
    )

    out: dict[str, list[float]] = {}
    with tempfile.TemporaryDirectory(prefix="pinlib-bench-browser-") as tmp:
        folder = copy_workbooks(Path(tmp) / "files")
        server, base = start_lab(folder, Path(tmp) / "jupyter")
        try:
            with sync_playwright() as pw:
                browser = launch_chromium(pw)
                guard = LoopbackGuard()
                try:
                    for name, label, options in CASES:
                        context = new_context(browser, guard)
                        book = Workbook(context.new_page(), name)
                        try:
                            book.open_in_lab(base)
                            book.file_browser_open()
                            if not book.run_all():
                                raise RuntimeError(f"{name}: Run All stopped at a cell")
                            texts = book.options(label)
                            indexes = [_index(texts, o) for o in options]
                            # one switch unmeasured (first use of the code paths), then
                            # `repeats` measured, alternating between the two options
                            times = []
                            for i in range(repeats + 1):
                                book.settle(quiet=300)
                                t = book.time_choice(label, indexes[i % 2])
                                if t is None:
                                    raise RuntimeError(f"{name}: choosing in {label!r} "
                                                       "changed no chart")
                                if i:
                                    times.append(t)
                            out[name] = times  # (first, last) chart change of each run
                        finally:
                            book.shutdown_kernel()
                            context.close()
                finally:
                    browser.close()
        finally:
            server.stop()
    if guard.attempts:
        raise RuntimeError(f"requests beyond 127.0.0.1: {guard.attempts}")
    return out


def overhead(done: float, kernel: float) -> str:
    """The same redraw end to end in the page and in the kernel alone, and what the
    browser and the round trip add (the difference). [s, s]"""
    return (f"page done {done * 1e3:.0f} ms against the kernel's whole redraw alone "
            f"{kernel * 1e3:.0f} ms: the browser adds {(done - kernel) * 1e3:+.0f} ms")


def run(repeats: int = 7, quick: bool = False) -> list[Result]:
    from tests.browser import chromium_path

    if chromium_path() is None:
        return [Result("browser click-to-chart", 0, todo="chromium is not installed")]
    try:
        import playwright.sync_api  # noqa: F401
    except ImportError:
        return [Result("browser click-to-chart", 0,
                       todo="the playwright package is not installed (the test extra)")]
    t0 = time.perf_counter()
    browser = _browser_times(repeats)
    spent = time.perf_counter() - t0
    results = []
    with warnings.catch_warnings(), contextlib.redirect_stdout(None):
        warnings.simplefilter("ignore")  # the engines' validity notes are not timed here
        for name, label, options in CASES:
            kernel = _kernel_time(name, label, options, repeats)
            first = statistics.median(t[0] for t in browser[name])
            last = [t[1] for t in browser[name]]
            done = statistics.median(t[2] for t in browser[name])
            shown = statistics.median(last)
            results.append(Result(
                f"browser click-to-chart: {name[:2]} {label}", shown,
                no_baseline="the kernel's redraw alone is a part of this work",
                extra=[f"{options[0]} <-> {options[1]}",
                       f"first chart {first * 1e3:.0f} ms",
                       f"slowest {max(last) * 1e3:.0f} ms of {len(last)}",
                       overhead(done, kernel)]))
    results[-1].extra.append(f"whole benchmark {spent:.0f} s with JupyterLab and Chromium")
    return results
