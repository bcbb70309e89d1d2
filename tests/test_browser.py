"""The workbooks as a user meets them: JupyterLab in headless Chromium at 1400 × 900.

One JupyterLab (127.0.0.1, no token, a temporary folder holding a copy of the workbooks
and their designs) and one Chromium serve every test of this module.  Each workbook is opened
with the file browser side panel open and run with Run All; then, at 1400 × 900:

* every labelled control is shown with a non-zero size (those on a tab that is not
  selected excepted), and the controls the issue named are there;
* no widget box scrolls or clips sideways, nothing ends past the notebook's right edge,
  no label, value or choice is cut (a dropdown's choice longer than it shows is shown
  whole on the line under it; a list shows each item whole), toggle buttons stay on one
  row, and focusing a field scrolls nothing sideways;
* a field that holds prose (workbook 01's title) shows a 60-character text whole, and a
  list of parts shows the part with the longest id whole;
* no text of a chart (SVG) ends past the chart's edge, overprints another or says
  ``undefined``/``NaN``;
* no cell shows an error, a traceback or a widget's text repr, and no widget shows an
  error right after Run All (unless its first words say it is a demonstration);
* changing one control changes a chart (workbook 04 has no chart: its second tab's
  controls show once the tab is chosen);
* a bad quantity typed into a field shows an error beside that field, the field keeps
  what was typed, and the charts and tables stay as they were; typed into a field far
  down the controls, the stale state shows in the viewport (the field's message says
  the outputs are not recomputed; the charts in view are dimmed);
* no request leaves 127.0.0.1 (each is aborted and recorded).

``pinlib workbench`` (Voilà) is driven the same way for workbook 01.  Screenshots go to
``out/browser/`` for a reviewer.  With ``PINLIB_README_SHOT=1`` the screenshot of
workbook 01 is also written to ``docs/img/workbook-01.png`` (the README's).

Where Chromium or Playwright is missing the tests skip, except on CI (``CI`` set),
where they fail.
"""

from __future__ import annotations

import os
import shutil
import signal
import sys
import time
from dataclasses import dataclass

import pytest
from browser import (
    OUT,
    ROOT,
    LoopbackGuard,
    Server,
    Workbook,
    chromium_path,
    copy_workbooks,
    free_port,
    in_ci,
    jupyter_env,
    label_matches,
    launch_chromium,
    near,
    new_context,
    start_lab,
)

pytestmark = pytest.mark.browser

README_SHOT = ROOT / "docs" / "img" / "workbook-01.png"


def _need_browser():
    why = None
    if chromium_path() is None:
        why = "chromium is not installed"
    else:
        try:
            import playwright.sync_api  # noqa: F401
        except ImportError:
            why = "the playwright package is not installed (the test extra)"
    if why is None:
        return
    if in_ci():
        pytest.fail(f"{why}: on CI the browser tests must run (.ci/run installs chromium)")
    pytest.skip(why)


# =========================================================================== what each
# workbook is asked


@dataclass(frozen=True)
class Spec:
    name: str
    #: labels that must be on screen (the issue's lists of the controls a user lost)
    required: tuple[str, ...]
    #: (label, option or None for the next) chosen to change a chart; ("tab", title) for 04
    change: tuple[str, str | None]
    #: bad quantities: (label, text typed, button clicked afterwards or None)
    bad: tuple[tuple[str, str, str | None], ...]
    #: labels of controls hidden on purpose
    may_hide: tuple[str, ...] = ()
    #: typed before the bad quantities (a form that needs another field first)
    before_bad: tuple[tuple[str, str], ...] = ()
    #: a tab to choose before the bad quantities
    bad_tab: str | None = None
    #: (label, text) typed into a text field that must then show the whole text
    long_text: tuple[tuple[str, str], ...] = ()
    #: (dropdown, option, button, list): the part with the longest id the library
    #: holds, added to the list, which must then show every item whole
    long_item: tuple[str, str, str, str] | None = None
    #: (label, bad text, valid text): a field far down the controls, refused; the stale
    #: state must then show in the viewport (the notice atop the outputs is out of it)
    low_bad: tuple[str, str, str] | None = None
    #: dropdowns each of whose options, chosen, must show whole (or with its whole text
    #: on the line under it): the sideways test sees only the option Run All left
    each_option: tuple[str, ...] = ()


#: the per-length trace values, shown for a trace given per length only
_PER_LENGTH = ("C per length", "Delay per length", "C (pF/cm)", "Delay (ps/cm)")

SPECS = [
    Spec("01-start-a-design.ipynb",
         required=("Title", "Mode", "Supply", "Controller", "Peripheral", "Trace", "Length",
                   "Extra C", "Rp", "Design", "Line", "Rise", "Probe", "Save as"),
         change=("Mode", "standard"),
         bad=(("Supply", "4.7 kohms", None), ("Supply", "-3.3", None)),
         may_hide=_PER_LENGTH,
         # 60 characters: a board's title as people write them
         long_text=(("Title", "Sensor board rev. C: I2C bus from the MCU to the front panel"),
                    ("Design", "designs/gpio-reset-board.toml"),
                    ("Save as", "designs/sensor-board-rev-c.toml")),
         long_item=("Peripheral", "board-to-board-connector", "Add", "Placed"),
         low_bad=("Rp ±", "abc", "1 %"),
         # the bench panel's lines: the bus built here and the saved GPIO example's reset
         # line the workbook loads (its answer then shows in the control column)
         each_option=("Line",)),
    Spec("02-push-pull-line.ipynb",
         required=("Driver", "Output pin", "Supply", "Receiver", "Trace", "Length", "Rs"),
         change=("Trace", None),
         bad=(("Length", "-5 cm", None),),
         may_hide=_PER_LENGTH,
         long_item=("Receiver", "board-to-board-connector", "Add", "Receivers"),
         low_bad=("Length", "abc", "10 cm"),
         each_option=("Waveforms at",)),
    Spec("03-spi-timing.ipynb",
         required=("Bus", "Clock", "SPI mode"),
         change=("Bus", None),
         bad=(("Clock", "abc", None),)),
    Spec("04-record-part-values.ipynb",
         required=("New id", "Extends", "Title", "Basis", "Source", "Create the part"),
         change=("tab", "Record a value"),
         before_bad=(("Field", "sda.c_in"),),
         bad=(("Value", "15", None),),
         bad_tab="Record a value",
         # a path as a vendor's model sits in a project folder
         long_text=(("IBIS file", "vendor-models/acme/io-buffers/acme-io33-rev-b.ibs"),)),
    Spec("05-rerun-after-substitution.ipynb",
         required=("Design", "Load", "Device", "Put there", "Apply", "Reset"),
         change=("Device", "U7"),
         bad=(("Design", "no-such-board.toml", "Load"),)),
    # no typed quantity here: sliders and toggle buttons only
    Spec("06-crosstalk.ipynb",
         required=("Spacing", "Parallel length", "Aggressor edge", "Show"),
         change=("Show", "low"),
         bad=()),
]


# =========================================================================== fixtures


# One JupyterLab and one Chromium for this module (every browser test is here); stopped at
# its end, so the rest of the suite runs without them (and without Playwright's loop).
@pytest.fixture(scope="module")
def lab(tmp_path_factory):
    """JupyterLab on 127.0.0.1 serving a copy of the workbooks: (base URL, folder)."""
    _need_browser()
    tmp = tmp_path_factory.mktemp("lab")
    folder = copy_workbooks(tmp / "files")
    server, base = start_lab(folder, tmp / "jupyter")
    try:
        yield base, folder
    finally:
        server.stop()


@pytest.fixture(scope="module")
def chromium():
    """One headless Chromium and the guard of its requests."""
    _need_browser()
    from playwright.sync_api import sync_playwright

    guard = LoopbackGuard()
    with sync_playwright() as pw:
        browser = launch_chromium(pw)
        try:
            yield browser, guard
        finally:
            browser.close()


_TIMES: dict[str, dict[str, float]] = {}


@pytest.fixture(scope="module")
def timings():
    """Seconds spent per workbook (and in the workbench test), written to
    out/browser/timings.txt at the end of the session."""
    yield _TIMES
    if _TIMES:
        OUT.mkdir(parents=True, exist_ok=True)
        lines = [f"{k}: " + ", ".join(f"{n} {v:.1f} s" for n, v in t.items())
                 for k, t in _TIMES.items()]
        (OUT / "timings.txt").write_text("\n".join(lines) + "\n", encoding="utf-8")


@pytest.fixture(scope="module", params=SPECS, ids=lambda s: s.name[:2])
def wb(request, lab, chromium, timings):
    """The workbook of ``request.param`` open in JupyterLab after Run All."""
    base, _ = lab
    browser, guard = chromium
    spec: Spec = request.param
    t0 = time.perf_counter()
    guard.where = spec.name
    context = new_context(browser, guard)
    page = context.new_page()
    book = Workbook(page, spec.name)
    book.spec = spec
    try:
        book.open_in_lab(base)
        book.file_browser = book.file_browser_open()
        book.ran = book.run_all()
        book.scroll_to_widgets()
        book.shot = book.screenshot()
        if spec.name.startswith("01") and os.environ.get("PINLIB_README_SHOT"):
            README_SHOT.parent.mkdir(parents=True, exist_ok=True)
            shutil.copyfile(book.shot, README_SHOT)
        yield book
    finally:
        book.shutdown_kernel()
        context.close()
        book.timings["total"] = time.perf_counter() - t0
        timings[spec.name] = book.timings


# =========================================================================== the detectors

# A page built like a workbook's output (ipywidgets' classes), with one of each problem
# the tests look for; the same page without them is the control.
_FAIL = "rgb(213, 94, 0)"
_PAGE = """<!doctype html><html><body style="margin:0;font:13px sans-serif">
<div class="jp-NotebookPanel"><div class="jp-WindowedPanel-outer" style="width:700px">
<div class="jp-OutputArea-output">
 <div class="jupyter-widgets widget-container widget-box widget-vbox"
      style="display:flex;flex-direction:column;width:300px;overflow:auto">
  <div class="jupyter-widgets widget-inline-hbox widget-text" style="{hidden}">
   <label class="widget-label">Supply</label><input type="text" value="3.3 V"></div>
  <div class="jupyter-widgets widget-inline-hbox widget-text" style="width:{wide}px">
   <label class="widget-label">Length</label><input type="text" value="14 cm"></div>
  <div class="jupyter-widgets widget-inline-hbox widget-toggle-buttons"
       style="display:flex;width:{buttons}px">
   <label class="widget-label" style="width:80px;flex:none">SPI mode</label>
   <div class="widget-toggle-buttons" style="display:flex;flex-wrap:wrap">
    <button class="widget-toggle-button mod-active" style="width:50px">0</button>
    <button class="widget-toggle-button" style="width:50px">1</button>
    <button class="widget-toggle-button" style="width:50px">2</button></div></div>
  <div class="jupyter-widgets widget-inline-hbox widget-dropdown" style="display:flex">
   <label class="widget-label" style="width:80px;flex:none">Controller</label>
   <select style="width:150px;padding:0"><option>mcu-3v3 — Microcontroller, 3.3 V</option>
   </select></div>
  {choice}
  <div class="jupyter-widgets widget-inline-hbox widget-select" style="display:flex">
   <label class="widget-label" style="width:80px;flex:none">Receivers</label>
   <select size="3" style="width:{list}px;padding:0">
    <option>U2 display-controller-spi sclk</option></select></div>
  <div class="jupyter-widgets widget-html"><div class="widget-html-content">
   <svg width="200" height="80"><text x="10" y="20">Bus capacitance</text>
    <text x="{x}" y="50">{label}</text><text x="10" y="70">{undefined}</text></svg>
  </div></div>
  <div class="jupyter-widgets widget-html"><span
       style="color:{fail};font-weight:700">{error}</span></div>
 </div>
</div>
<div class="jp-OutputArea-output" data-mime-type="{mime}">{output}</div>
</div></div></body></html>"""
_BAD = dict(hidden="display:none", wide=400, buttons=150, x=150,
            label="design: 1.8 kOhm at 60.4 pF", undefined="undefined (VIL to VIH)",
            fail=_FAIL, error="a bare number has no unit", mime="application/vnd.jupyter.stderr",
            output="Traceback (most recent call last): ...", choice="", list=90)
_GOOD = dict(hidden="", wide=280, buttons=280, x=10, label="design: 1.8 kOhm",
             undefined="VIL to VIH", fail="rgb(0, 0, 0)", error="recorded", mime="text/plain",
             output="<pre>pass 1800.0</pre>", list=280,
             choice='<div class="jupyter-widgets widget-html"><div class="widget-html-content">'
                    '<div class="pinlib-choice">mcu-3v3 — Microcontroller, 3.3 V</div></div></div>')


@pytest.mark.parametrize("bad", [True, False], ids=["problems", "control"])
def test_the_detectors_find_each_problem_and_only_those(chromium, bad):
    browser, guard = chromium
    context = new_context(browser, guard)
    try:
        page = context.new_page()
        page.set_content(_PAGE.format(**(_BAD if bad else _GOOD)))
        book = Workbook(page, "detectors.ipynb", lab=False)
        book.scope = ".jp-NotebookPanel"
        controls = {c["label"]: c for c in book.controls()}
        sideways = book.sideways_problems()
        svg = book.svg_text()["problems"]
        outputs = book.error_outputs()
        marks = [m["text"] for m in book.error_marks()]
        if not bad:
            assert all(c["shown"] for c in controls.values()), controls
            assert (sideways, svg, outputs, marks) == ([], [], [], [])
            return
        assert not controls["Supply"]["shown"] and controls["Length"]["shown"]
        text = "\n".join(sideways)
        assert "clips its content sideways" in text, text
        assert "its buttons wrap onto" in text, text
        assert "its whole text is not shown under it" in text, text  # a cut dropdown
        assert 'its item "U2 display-controller-spi sclk" is cut' in text, text  # a list
        assert any("past the chart's edge" in p for p in svg), svg
        assert any("undefined" in p for p in svg), svg
        assert len(outputs) == 1 and "Traceback" in outputs[0], outputs
        assert marks == ["a bare number has no unit"]
        # a text repr in place of a widget
        page.set_content(_PAGE.format(**{**_GOOD, "output": "&lt;pinlib.present.widgets.spibudget."
                                                             "SpiBudget at 0x7fa0e80e3dd0&gt;"}))
        assert book.error_outputs() == [
            "a text repr instead of a widget: <pinlib.present.widgets.spibudget.SpiBudget at "
            "0x7fa0e80e3dd0>"]
        # a request beyond 127.0.0.1 is aborted and recorded
        guard.where = "detectors"
        page.set_content('<img src="http://example.invalid/chart.png">')
        page.wait_for_timeout(300)
        assert ("detectors", "http://example.invalid/chart.png") in guard.attempts
        guard.attempts.clear()
    finally:
        context.close()


def test_label_matching_and_nearness():
    assert label_matches("Supply (V)", "Supply") and label_matches("Supply", "supply")
    assert not label_matches("Supply ± (%)", "Supply")
    assert label_matches("Supply ±", "Supply", prefix=True)
    assert not label_matches("Supplyside", "Supply", prefix=True)
    field = {"box": {"x": 100, "y": 200, "w": 300, "h": 28}}
    assert near({"box": {"x": 100, "y": 232, "w": 200, "h": 40}}, field)  # just below
    assert near({"box": {"x": 410, "y": 204, "w": 200, "h": 20}}, field)  # beside
    assert not near({"box": {"x": 100, "y": 20, "w": 200, "h": 20}}, field)  # at the top
    assert not near({"box": {"x": 100, "y": 400, "w": 200, "h": 20}}, field)  # far below


# =========================================================================== workbench


def test_workbench_serves_workbook_01_without_code(lab, chromium, timings, tmp_path):
    """``pinlib workbench FOLDER`` (Voilà): the workbook's controls without its code, a
    control that changes the chart, the URL printed, Ctrl-C stopping it cleanly."""
    _, folder = lab
    browser, guard = chromium
    port = free_port()
    server = Server([sys.executable, "-m", "pinlib", "workbench", "--port", str(port),
                     str(folder.parent)],
                    f"http://127.0.0.1:{port}/", tmp_path / "workbench.log",
                    env=jupyter_env(tmp_path / "jupyter"))
    t0 = time.perf_counter()
    server.start()
    steps = {"start": time.perf_counter() - t0}
    guard.where = "workbench"
    context = new_context(browser, guard)
    try:
        page = context.new_page()
        book = Workbook(page, "01-start-a-design.ipynb", lab=False)
        book.open_in_voila(f"http://127.0.0.1:{port}/voila/render/01-start-a-design.ipynb")
        steps["open"] = book.timings["open"]
        book.scroll_to_widgets()
        book.screenshot("workbench")
        assert page.locator(".jp-InputArea-editor, .CodeMirror, .cm-editor").count() == 0, \
            "code cells are shown"
        controls = [c for c in book.controls() if c["label"]]
        for want in ("Mode", "Supply", "Controller", "Length"):
            assert any(label_matches(c["label"], want, prefix=True) and c["shown"]
                       for c in controls), \
                f"{want!r} is not shown; shown: {[c['label'] for c in controls if c['shown']]}"
        before = book.figures()
        assert before["charts"], "no chart"
        book.choose("Mode", "standard")
        changed = book.js("chart_change_time", before=before["charts"], timeout=30_000)
        steps["change"] = (changed or 0) / 1e3
        book.screenshot("workbench-changed")
        assert changed is not None, "choosing a mode left the chart as it was"
        assert [u for w, u in guard.attempts if w == "workbench"] == []
    finally:
        context.close()
        t1 = time.perf_counter()
        code = server.stop(signal.SIGINT, timeout=20)
        steps["stop"] = time.perf_counter() - t1
        timings["workbench"] = steps
    out = server.output()
    assert f"http://127.0.0.1:{port}/" in out
    assert "Traceback" not in out, out[-2000:]
    assert code == 0, out[-2000:]


# =========================================================================== the tests


def test_run_all_runs_every_cell_with_the_file_browser_open(wb):
    assert wb.file_browser, "the file browser side panel is not open"
    assert wb.ran, "Run All stopped at a cell"
    # common practice, no source: a blank 1400x900 PNG is a few kB; a page is 100+ kB
    assert wb.shot.stat().st_size > 10_000


def test_every_labelled_control_is_shown(wb):
    spec: Spec = wb.spec
    controls = wb.controls()
    labelled = [c for c in controls if c["label"]]
    assert labelled, "no labelled control on the page"
    hidden = [f'"{c["label"]}" ({c["kind"]}, display {c["display"]}, '
              f'{c["box"]["w"]}x{c["box"]["h"]} px)'
              for c in labelled
              if not c["shown"] and not c["inHiddenTab"]
              and not any(label_matches(c["label"], x) for x in spec.may_hide)]
    # each named control is there: on screen, or on a tab that is not selected
    missing = [want for want in spec.required
               if not any(label_matches(c["label"], want, prefix=True)
                          and (c["shown"] or c["inHiddenTab"]) for c in labelled)]
    assert not hidden and not missing, (
        f"{len(hidden)} of {len(labelled)} labelled controls are not shown: {hidden}; "
        f"named controls not on screen: {missing}")


def test_nothing_scrolls_or_is_cut_sideways(wb):
    problems = wb.sideways_problems()
    assert not problems, f"{len(problems)} problems:\n  " + "\n  ".join(problems)


def test_a_long_text_shows_whole_in_its_field(wb):
    """A field that holds prose (a title) shows the whole of a long one: the sideways
    test above measures fields holding short values only."""
    spec: Spec = wb.spec
    if not spec.long_text:
        pytest.skip("no field of this workbook holds prose")
    failures = []
    for label, text in spec.long_text:
        loc, _ = wb.shown_control(label)
        kept = loc.locator("input, textarea").first.input_value()
        try:
            wb.type_into(label, text)
            wb.settle()
            loc, _ = wb.shown_control(label)
            field = loc.locator("input, textarea").first
            field.blur()
            shown = field.input_value()
            content, room = field.evaluate("i => [i.scrollWidth, i.clientWidth]")
            wb.screenshot("long-text")
            if shown != text:
                failures.append(f"{label!r} shows {shown!r}, not what was typed")
            # common practice, no source: 1 px for sub-pixel rounding
            if content > room + 1:
                failures.append(f"{label!r} is cut: {content} px of text in {room} px")
        finally:
            wb.type_into(label, kept)
            wb.settle()
    assert not failures, "\n  ".join(["long texts:"] + failures)


def test_a_long_item_shows_whole_in_its_list(wb):
    """The part with the longest id, added: its line in the list is not cut (the
    sideways test above sees only the items Run All placed)."""
    spec: Spec = wb.spec
    if spec.long_item is None:
        pytest.skip("no list of parts in this workbook")
    dropdown, option, button, listed = spec.long_item
    wb.choose(dropdown, option)
    wb.settle()
    wb.click_button(button)
    wb.settle()
    try:
        loc, _ = wb.shown_control(listed)
        items = loc.locator("select option").all_inner_texts()
        assert any(option in t for t in items), items
        loc.scroll_into_view_if_needed()
        wb.screenshot("long-item")
        cut = [p for p in wb.sideways_problems() if "is cut" in p]
        assert not cut, "\n  ".join(cut)
    finally:  # taken off again: the later tests see the workbook as Run All left it
        loc, _ = wb.shown_control(listed)
        select = loc.locator("select")
        select.select_option(index=select.locator("option").count() - 1)
        wb.settle()
        wb.click_button("Remove")
        wb.settle()


def test_each_option_of_a_dropdown_shows_whole(wb):
    """Every option of the dropdowns named, chosen in turn, shows whole: a receiver
    "U2  display-controller-spi: sclk" cut to "...: scl" names another signal."""
    spec: Spec = wb.spec
    if not spec.each_option:
        pytest.skip("no dropdown of this workbook is asked")
    failures = []
    for label in spec.each_option:
        kept = wb.shown_control(label)[0].locator("select").evaluate("s => s.selectedIndex")
        try:
            for option in wb.options(label):
                wb.choose(label, option)
                wb.settle()
                cut = [p for p in wb.sideways_problems() if f'"{label}"' in p]
                if cut:
                    wb.screenshot("option-cut")
                failures += cut
        finally:
            wb.shown_control(label)[0].locator("select").select_option(index=kept)
            wb.settle()
    assert not failures, "\n  ".join(["options cut:"] + failures)


def test_chart_text_stays_inside_its_chart(wb):
    found = wb.svg_text()
    if not wb.spec.name.startswith("04"):  # 04 records values; it draws no chart
        assert found["charts"] > 0, "no chart on the page"
    problems = found["problems"]
    assert not problems, f"{len(problems)} problems:\n  " + "\n  ".join(problems)


def test_no_cell_shows_an_error_or_a_text_repr(wb):
    problems = wb.error_outputs()
    marks = [m["text"] for m in wb.error_marks() if not m["inDemo"]]
    assert not problems and not marks, (
        f"outputs: {problems}; errors shown in the widgets right after Run All: {marks}")


# workbook 05's table of candidates: its headings, its rows' texts (each cell's whole
# text, the lines it takes, whether it is cut) and its right edge against the notebook's
_CANDIDATES_TABLE = r"""() => {
  const panel = document.querySelector('.jp-NotebookPanel:not(.lm-mod-hidden)');
  const title = [...panel.querySelectorAll('.widget-html-content b')]
    .find(b => b.textContent.trim() === 'Candidates for the position');
  const table = title && title.closest('.widget-vbox').querySelector('table');
  if (!table) return null;
  const text = el => el.innerText.replace(/\s+/g, ' ').trim();
  const cell = td => { const r = document.createRange(); r.selectNodeContents(td);
    const tops = new Set([...r.getClientRects()].filter(x => x.width > 0)
                         .map(x => Math.round(x.top)));
    return {text: text(td), lines: tops.size, cut: td.scrollWidth > td.clientWidth + 1}; };
  const outer = panel.querySelector('.jp-WindowedPanel-outer').getBoundingClientRect();
  return {heads: [...table.querySelectorAll('th')].map(text),
          rows: [...table.querySelectorAll('tr')].filter(tr => tr.querySelector('td'))
                .map(tr => [...tr.querySelectorAll('td')].map(cell)),
          right: table.getBoundingClientRect().right, panelRight: outer.right};
}"""


def _cli_candidates(folder, ref: str) -> dict[str, tuple[str, str]]:
    """``pinlib candidates`` run on the demo design as a user runs it, at a width that
    keeps every column: each part's worst margin and the check that sets it."""
    import re
    import subprocess

    env = {**os.environ, "COLUMNS": "250"}
    got = subprocess.run([sys.executable, "-m", "pinlib", "candidates",
                          "designs/demo-board.toml", ref, "--top", "50"], cwd=folder,
                         env=env, capture_output=True, text=True, timeout=120)
    assert got.returncode in (0, 1), got.stderr
    lines = got.stdout.splitlines()
    head = next(i for i, ln in enumerate(lines) if ln.startswith("#  "))
    out = {}
    for ln in lines[head + 1:]:
        if not re.match(r"\d+ ", ln):
            break
        cols = re.split(r"\s{2,}", ln.strip())
        out[cols[1].removesuffix(" *")] = (cols[3], cols[4])
    return out


def test_the_candidates_table_says_what_each_column_is_in_the_commands_words(wb, lab):
    """Workbook 05's candidates for U4 (a position on a bus of two segments), as an
    engineer choosing a substitute reads them at 1400 px: each heading says what its
    column holds (the margin's unit, which segment and lines the figures are of), each
    worst margin and the check that sets it read as ``pinlib candidates`` writes them,
    and no cell is cut or past the notebook's edge."""
    if not wb.spec.name.startswith("05"):
        pytest.skip("the candidates table is workbook 05's")
    _, folder = lab
    wb.choose("Device", "U4")
    wb.settle()
    wb.page.get_by_text("Candidates for the position").first.scroll_into_view_if_needed()
    wb.page.mouse.wheel(0, 250)
    wb.page.wait_for_timeout(300)
    wb.screenshot("candidates")
    table = wb.page.evaluate(_CANDIDATES_TABLE)
    assert table is not None, "no candidates table under 'Candidates for the position'"
    heads = table["heads"]
    assert "worst margin % of its limit" in heads, heads
    assert any(h.startswith("set by") for h in heads), heads
    # U4 sits on segment main-3v3 of bus sensors: the figures are that segment's
    assert any("bus sensors, segment main-3v3, the worse of SDA and SCL" in h
               for h in heads), heads
    for figure in ("Bus capacitance Cb", "Rise time tr", "Low level VOL",
                   "Pull-up resistor Rp"):
        assert figure in heads, (figure, heads)
    cli = _cli_candidates(folder, "U4")
    rows = table["rows"]
    assert len(rows) == 10, rows
    wrong = []
    for row in rows:
        part = row[1]["text"].removesuffix(" (now)")
        margin, by = row[3]["text"], row[4]["text"]
        if (margin, by) != cli[part]:
            wrong.append(f"{part}: shows {margin!r}, {by!r}; pinlib candidates "
                         f"writes {cli[part]!r}")
    assert not wrong, "\n  ".join(["not in the command's words:"] + wrong)
    # a failing candidate's margin below zero, written as the command writes it
    assert any(r[2]["text"] == "FAIL" and r[3]["text"][0] in "-−" for r in rows), rows
    cut = [c["text"] for r in rows for c in r if c["cut"]]
    assert not cut, f"cells cut: {cut}"
    # the check that sets a margin is read on one line at this width
    assert all(r[4]["lines"] == 1 for r in rows), [(r[4]["text"], r[4]["lines"]) for r in rows]
    assert table["right"] <= table["panelRight"] + 1, table


def test_changing_a_control_changes_the_chart(wb):
    spec: Spec = wb.spec
    what, option = spec.change
    if what == "tab":
        # 04 draws no chart: choosing the second form's tab shows its controls
        wb.select_tab(option)
        wb.settle()
        wb.screenshot("changed")
        hidden = [c["label"] for c in wb.controls()
                  if c["label"] and not c["shown"] and not c["inHiddenTab"]]
        shown = [c["label"] for c in wb.controls() if c["shown"]]
        assert not hidden, f"controls not shown on the tab {option!r}: {hidden}"
        assert any(label_matches(x, "Value", prefix=True) for x in shown), shown
        return
    before = wb.figures()
    errors = wb.error_outputs()
    assert before["charts"], "no chart in the widget"
    chosen = wb.choose(what, option)
    changed = wb.js("chart_change_time", before=before["charts"], timeout=30_000)
    wb.settle()
    wb.screenshot("changed")
    assert changed is not None, f"choosing {chosen!r} in {what!r} left every chart as it was"
    new = [e for e in wb.error_outputs() if e not in errors]
    assert new == [], f"choosing {chosen!r} in {what!r}: {new}"


def test_a_bad_quantity_shows_an_error_beside_its_field(wb):
    spec: Spec = wb.spec
    if spec.bad_tab:
        wb.select_tab(spec.bad_tab)
    for label, text in spec.before_bad:
        wb.type_into(label, text)
        wb.settle()
    failures = []
    for n, (label, text, button) in enumerate(spec.bad, 1):
        before = wb.figures()
        marks_before = {m["text"] for m in wb.error_marks() if m["shown"]}
        wb.type_into(label, text)
        if button:
            wb.click_button(button)
        wb.settle()
        loc, info = wb.shown_control(label)  # where it is now (the page may have scrolled)
        shown = wb.shown_text(loc, info)
        after = wb.figures()
        marks = [m for m in wb.error_marks() if m["shown"]]
        beside = [m for m in marks if near(m, info)]
        wb.screenshot(f"bad-{n}")
        what = f"{label!r} <- {text!r}"
        if not beside:
            elsewhere = [m["text"] for m in marks if m["text"] not in marks_before]
            failures.append(f"{what}: no error beside the field"
                            + (f" (shown elsewhere: {elsewhere})" if elsewhere else ""))
        if shown.strip() != text:
            failures.append(f"{what}: the field now shows {shown!r}, not what was typed")
        if after != before:
            failures.append(f"{what}: the charts or tables changed")
    assert not failures, "\n  ".join(["bad quantities:"] + failures)


# every table cell under the widgets whose whole text is a quantity ("1.86535 ns",
# "-2.97 ns", "+69 %"): the lines its text takes on the page
_QUANTITY_CELLS = r"""() => {
  const panel = document.querySelector('.jp-NotebookPanel:not(.lm-mod-hidden)') || document;
  const quantity = /^[-+−]?\d[\d.]*(e[-+]?\d+)?\s?[A-Za-zΩµ%°/]*$/;
  const out = [];
  for (const td of panel.querySelectorAll('.jupyter-widgets td')) {
    const text = td.textContent.trim();
    if (!quantity.test(text) || !td.checkVisibility()) continue;
    const range = document.createRange();
    range.selectNodeContents(td);
    const tops = new Set([...range.getClientRects()].filter(r => r.width > 0)
                         .map(r => Math.round(r.top)));
    out.push({text, lines: tops.size});
  }
  return out;
}"""


def test_a_quantity_in_a_table_stays_on_one_line(wb):
    """A value with its unit in a table cell is read as one thing: it never breaks
    between the number and its unit (the IBIS import's preview wrapped "1.86535 ns")."""
    if wb.spec.name.startswith("04"):  # the import preview is on the page after Run All
        wb.page.get_by_text("Values the import writes").first.scroll_into_view_if_needed()
    cells = wb.page.evaluate(_QUANTITY_CELLS)
    assert cells, "no quantity in a table"
    broken = sorted({c["text"] for c in cells if c["lines"] > 1})
    wb.screenshot("quantities")
    assert not broken, f"{len(broken)} quantities broken across lines: {broken[:12]}"


_STALE_IN_VIEW = """() => {
  const inView = el => { const r = el.getBoundingClientRect();
    return el.checkVisibility() && r.height > 0 && r.bottom > 0 && r.top < innerHeight; };
  const panel = document.querySelector('.jp-NotebookPanel:not(.lm-mod-hidden)') || document;
  const said = [...panel.querySelectorAll('.widget-html-content div, .widget-html-content span')]
    .filter(el => el.children.length === 0 && /Not recomputed/.test(el.textContent))
    .filter(inView).map(el => el.textContent.trim().slice(0, 80));
  const dimmed = [...panel.querySelectorAll('.pinlib-chart svg')].filter(inView).filter(svg => {
    for (let el = svg; el; el = el.parentElement)
      if (parseFloat(getComputedStyle(el).opacity) < 1) return true;
    return false; }).length;
  const charts = [...panel.querySelectorAll('.pinlib-chart svg')].filter(inView).length;
  return {said, dimmed, charts};
}"""


def test_a_refused_low_field_shows_the_outputs_are_stale_in_view(wb):
    """A bad value typed into a field far down the controls: the notice atop the
    outputs is then out of view, so the stale state shows where the user is (the
    field's message says it) and any chart in view is dimmed."""
    if wb.spec.low_bad is None:
        pytest.skip("no low quantity field in this workbook")
    label, bad, good = wb.spec.low_bad
    try:
        wb.type_into(label, bad)
        wb.settle()
        loc, _ = wb.shown_control(label)
        loc.scroll_into_view_if_needed()
        wb.page.wait_for_timeout(200)
        wb.screenshot("stale")
        seen = wb.page.evaluate(_STALE_IN_VIEW)
        assert seen["said"], f"{label!r} <- {bad!r}: nothing in view says 'Not recomputed'"
        assert seen["dimmed"] == seen["charts"], seen
    finally:
        wb.type_into(label, good)
        wb.settle()
    seen = wb.page.evaluate(_STALE_IN_VIEW)
    assert not seen["said"] and seen["dimmed"] == 0, seen


def test_save_as_an_existing_file_asks_before_overwriting(wb, lab):
    if not wb.spec.name.startswith("01"):
        pytest.skip("workbook 01 saves a design")
    _, folder = lab
    target = folder / "designs" / "demo-board.toml"
    kept = target.read_bytes()
    # the bad quantities' test left Supply refused, and nothing is saved while it is
    wb.type_into("Supply", "3.3 V")
    wb.settle()
    try:
        wb.type_into("Save as", "designs/demo-board.toml", submit=False)
        loc, info = wb.shown_control("Save")
        loc.click()
        wb.settle()
        wb.screenshot("save-refused")
        assert target.read_bytes() == kept, "Save overwrote an existing design"
        marks = [m for m in wb.error_marks() if m["shown"]]
        said = [m for m in marks if "designs/demo-board.toml exists" in m["text"]]
        assert said and near(said[0], info, below=90), [m["text"] for m in marks]
        box = wb.page.locator(".widget-checkbox", has_text="overwrite demo-board.toml")
        assert box.count() == 1 and box.first.is_visible(), "no 'overwrite' box naming it"
        # ticked, a second press replaces the file (atomically, as any save)
        box.first.locator("input[type=checkbox]").check()
        wb.settle()
        loc.click()
        wb.settle()
        assert target.read_bytes() != kept and b"BusBuilder" in target.read_bytes()
        again = wb.page.locator(".widget-checkbox", has_text="overwrite an existing file")
        assert not again.first.locator("input[type=checkbox]").is_checked()  # asked again
    finally:
        target.write_bytes(kept)  # the later workbooks read this design


def test_no_request_leaves_loopback(wb, chromium):
    _, guard = chromium
    mine = [url for where, url in guard.attempts if where == wb.spec.name]
    assert mine == [], f"requests beyond 127.0.0.1 (aborted): {mine}"
