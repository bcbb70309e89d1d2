"""Drive the workbooks in a real browser: JupyterLab or Voilà on 127.0.0.1, headless Chromium.

Shared by ``tests/test_browser.py`` (what a user sees, asserted) and
``tests/bench/bench_browser.py`` (click-to-chart time).  Nothing here asserts; the
functions measure and return what they found, as lists of readable problems.

* :class:`Server` runs a local web server (JupyterLab, or ``pinlib workbench``) as a
  subprocess with its own Jupyter folders in a temporary folder, waits until it answers
  and stops it (SIGTERM, then SIGKILL) at the end.
* :func:`launch_chromium` starts the system's Chromium through Playwright's sync API
  (Playwright downloads no browser here); :class:`LoopbackGuard` aborts and records
  every request that would leave 127.0.0.1.
* :class:`Workbook` is one open page: Run All, wait until the kernel is idle and the
  page still, find a control by its label, type into it, and the page measures in
  ``_JS`` (controls, sideways clipping, SVG text, error outputs, inline errors).

Controls are found by their ipywidgets classes (``.widget-text``, ``.widget-dropdown``…)
and their ``description`` label, never by position on the page.
"""

from __future__ import annotations

import contextlib
import json
import os
import re
import shutil
import signal
import socket
import subprocess
import sys
import time
import urllib.error
import urllib.request
from pathlib import Path
from urllib.parse import urlsplit

ROOT = Path(__file__).resolve().parents[1]
WORKBOOKS = ROOT / "workbooks"
OUT = ROOT / "out" / "browser"

#: The system's Chromium (Debian's package); Playwright's own browsers are not used.
CHROMIUM = "/usr/bin/chromium"
CHROMIUM_ARGS = ["--no-sandbox", "--disable-gpu", "--disable-background-networking",
                 "--disable-component-update", "--disable-sync", "--no-first-run"]
VIEWPORT = {"width": 1400, "height": 900}
LOOPBACK = "127.0.0.1"


def chromium_path() -> str | None:
    """The Chromium executable, or None when this machine has none."""
    if os.access(CHROMIUM, os.X_OK):
        return CHROMIUM
    return shutil.which("chromium")


def in_ci() -> bool:
    """True on a CI runner (``CI`` set, as CI services and ``.ci/run`` do)."""
    return os.environ.get("CI", "").lower() not in ("", "0", "false", "no")


def free_port() -> int:
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as s:
        s.bind((LOOPBACK, 0))
        return s.getsockname()[1]


def copy_workbooks(dest: Path) -> Path:
    """Copy the workbooks and their designs to ``dest/workbooks`` (the layout of the
    repository and of ``pinlib demo``); return that folder."""
    folder = dest / "workbooks"
    folder.mkdir(parents=True)
    for nb in sorted(WORKBOOKS.glob("*.ipynb")):
        shutil.copy2(nb, folder / nb.name)
    shutil.copytree(WORKBOOKS / "designs", folder / "designs")
    return folder


# =========================================================================== servers


class Server:
    """A local web server in a subprocess, its output in a log file.

    Parameters
    ----------
    cmd : list of str
        The command line.
    ready_url : str
        A URL that answers 200 once the server serves.
    log : Path
        Where the server's standard output and error go.
    env, cwd
        For the subprocess.
    """

    def __init__(self, cmd, ready_url: str, log: Path, *, env=None, cwd=None):
        self.cmd, self.ready_url, self.log = list(cmd), ready_url, Path(log)
        self.env, self.cwd = env, cwd
        self.proc: subprocess.Popen | None = None

    def start(self, timeout: float = 120.0) -> Server:
        self._log = open(self.log, "wb")  # closed in stop()
        # a session of its own: the server and its kernels are stopped together
        self.proc = subprocess.Popen(self.cmd, stdout=self._log, stderr=subprocess.STDOUT,
                                     stdin=subprocess.DEVNULL, env=self.env, cwd=self.cwd,
                                     start_new_session=True)
        deadline = time.monotonic() + timeout
        while time.monotonic() < deadline:
            if self.proc.poll() is not None:
                raise RuntimeError(f"the server stopped (exit {self.proc.returncode}):\n"
                                   + self.output()[-3000:])
            try:
                with urllib.request.urlopen(self.ready_url, timeout=5) as r:
                    if r.status == 200:
                        return self
            except (urllib.error.URLError, OSError):
                pass
            time.sleep(0.25)
        self.stop()
        raise RuntimeError(f"the server did not answer {self.ready_url} in {timeout:g} s:\n"
                           + self.output()[-3000:])

    def output(self) -> str:
        with contextlib.suppress(OSError):
            return self.log.read_text(encoding="utf-8", errors="replace")
        return ""

    def stop(self, signum: int = signal.SIGTERM, timeout: float = 15.0) -> int | None:
        """Stop the server (``signum`` to its process, then SIGKILL to its group)."""
        if self.proc is None:
            return None
        if self.proc.poll() is None:
            with contextlib.suppress(ProcessLookupError):
                self.proc.send_signal(signum)
            try:
                self.proc.wait(timeout)
            except subprocess.TimeoutExpired:
                with contextlib.suppress(ProcessLookupError):
                    os.killpg(self.proc.pid, signal.SIGKILL)
                self.proc.wait(10)
        # kernels the server started, in its process group, go with it
        with contextlib.suppress(ProcessLookupError, PermissionError):
            os.killpg(self.proc.pid, signal.SIGKILL)
        self._log.close()
        return self.proc.returncode


def jupyter_env(work: Path) -> dict[str, str]:
    """Environment for a Jupyter server with its own config, data, runtime, settings and
    workspaces under ``work``: nothing of the user's is read or written, and JupyterLab
    neither asks to fetch news nor checks for updates."""
    dirs = {k: work / k.lower() for k in ("JUPYTER_CONFIG_DIR", "JUPYTER_DATA_DIR",
                                          "JUPYTER_RUNTIME_DIR", "JUPYTERLAB_SETTINGS_DIR",
                                          "JUPYTERLAB_WORKSPACES_DIR", "IPYTHONDIR")}
    for d in dirs.values():
        d.mkdir(parents=True, exist_ok=True)
    settings = dirs["JUPYTERLAB_SETTINGS_DIR"] / "@jupyterlab"
    _write_json(settings / "apputils-extension" / "notification.jupyterlab-settings",
                {"fetchNews": "false", "checkForUpdates": False})
    # every cell laid out (no virtual scrolling), so that every control has its size
    _write_json(settings / "notebook-extension" / "tracker.jupyterlab-settings",
                {"windowingMode": "none"})
    # JupyterLab's build check and "build recommended" dialog off (a prebuilt install)
    _write_json(dirs["JUPYTER_CONFIG_DIR"] / "jupyter_server_config.json",
                {"ServerApp": {"tornado_settings": {"page_config_data": {
                    "buildCheck": False, "buildAvailable": False}}}})
    env = dict(os.environ)
    env.update({k: str(v) for k, v in dirs.items()})
    env["PINLIB_CACHE_DIR"] = "off"
    env["PYTHONUNBUFFERED"] = "1"
    return env


def _write_json(path: Path, data) -> None:
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text(json.dumps(data), encoding="utf-8")


def start_lab(root: Path, work: Path) -> tuple[Server, str]:
    """JupyterLab serving ``root`` on a free port of 127.0.0.1, no token; (server, base URL)."""
    port = free_port()
    cmd = [sys.executable, "-m", "jupyter", "lab", "--no-browser", "--allow-root",
           "--IdentityProvider.token=", "--ServerApp.password=",
           f"--ServerApp.ip={LOOPBACK}", f"--port={port}", "--ServerApp.port_retries=0",
           f"--ServerApp.root_dir={root}", "--ServerApp.terminals_enabled=False",
           "--LabApp.news_url=None",
           "--LabApp.check_for_updates_class=jupyterlab.NeverCheckForUpdate",
           "--LabApp.extension_manager=readonly",
           "--LabApp.expose_app_in_browser=True"]
    base = f"http://{LOOPBACK}:{port}"
    server = Server(cmd, f"{base}/api/status", work / "jupyterlab.log",
                    env=jupyter_env(work), cwd=root)
    return server.start(), base


# =========================================================================== browser


def launch_chromium(playwright):
    """The system Chromium, headless, through Playwright."""
    return playwright.chromium.launch(executable_path=chromium_path() or CHROMIUM,
                                      args=CHROMIUM_ARGS, headless=True)


def is_loopback(url: str) -> bool:
    scheme = urlsplit(url).scheme
    if scheme in ("data", "blob", "about", "chrome-error"):
        return True
    return urlsplit(url).hostname == LOOPBACK


class LoopbackGuard:
    """Abort and record every request (HTTP or WebSocket) that would leave 127.0.0.1.

    ``attempts`` holds ``(where, url)`` for each; ``where`` is what :attr:`where` said
    when the request was made (the workbook open at the time).
    """

    def __init__(self):
        self.attempts: list[tuple[str, str]] = []
        self.where = "start"

    def install(self, context) -> None:
        context.route("**/*", self._route)
        context.route_web_socket(lambda url: not is_loopback(url), self._socket)

    def _route(self, route) -> None:
        url = route.request.url
        if is_loopback(url):
            route.fallback()
        else:
            self.attempts.append((self.where, url))
            route.abort("blockedbyclient")

    def _socket(self, ws) -> None:
        self.attempts.append((self.where, ws.url))
        ws.close()

    def since(self, index: int) -> list[tuple[str, str]]:
        return self.attempts[index:]


def new_context(browser, guard: LoopbackGuard):
    context = browser.new_context(viewport=VIEWPORT, service_workers="block")
    guard.install(context)
    return context


# =========================================================================== page JS

# Every function takes one argument (an object) and runs in the page.  The "scope" is
# the element under which workbooks' outputs live: the notebook panel in JupyterLab,
# the page body in Voilà.
_JS_LIB = r"""
const CONTROL = ['.widget-text', '.widget-textarea', '.widget-dropdown', '.widget-combobox',
  '.widget-select', '.widget-select-multiple', '.widget-slider', '.widget-toggle-buttons',
  '.widget-button', '.widget-toggle-button', '.widget-checkbox', '.widget-radio',
  '.widget-colorpicker', '.widget-datepicker', '.widget-upload', '.widget-tagsinput'
  ].map(s => s + '.jupyter-widgets, .jupyter-widgets ' + s).join(', ');
const clean = t => (t || '').replace(/[\u200b\s]+/g, ' ').trim();
function scopeOf(arg) {
  if (arg && arg.scope) return document.querySelector(arg.scope);
  return document.querySelector('.jp-NotebookPanel:not(.lm-mod-hidden)') || document.body;
}
function isControl(el) { return el.matches(CONTROL); }
function topControls(scope) {
  // the outermost controls (a toggle-buttons group, not each of its buttons)
  return [...scope.querySelectorAll(CONTROL)].filter(
    el => !(el.parentElement && el.parentElement.closest(CONTROL)));
}
function labelOf(el) {
  const own = el.querySelector(':scope > .widget-label');
  if (own && clean(own.textContent)) return clean(own.textContent);
  const basic = el.querySelector('.widget-label-basic span');
  if (basic && clean(basic.textContent)) return clean(basic.textContent);
  if (el.tagName === 'BUTTON') return clean(el.textContent) || clean(el.title);
  return '';
}
function kindOf(el) {
  for (const k of ['toggle-buttons', 'toggle-button', 'text', 'textarea', 'dropdown',
                   'combobox', 'select', 'select-multiple', 'slider', 'button', 'checkbox',
                   'radio'])
    if (el.classList.contains('widget-' + k)) return k;
  return [...el.classList].filter(c => c.startsWith('widget-')).join(' ');
}
function hiddenByChoice(el, scope) {
  // inside a tab that is not selected, a closed accordion section or <details>
  for (let a = el.parentElement; a && a !== scope; a = a.parentElement) {
    if ((a.classList.contains('lm-mod-hidden') || a.classList.contains('p-mod-hidden')) &&
        a.parentElement && a.parentElement.closest('.widget-tab, .jupyter-widget-Accordion,'
                                                   + ' .widget-accordion'))
      return true;
    if (a.tagName === 'DETAILS' && !a.open) return true;
  }
  return false;
}
function isShown(el) {
  const r = el.getBoundingClientRect();
  return r.width > 0 && r.height > 0 &&
    el.checkVisibility({checkOpacity: true, checkVisibilityCSS: true});
}
function box(r) {
  return {x: Math.round(r.left), y: Math.round(r.top), w: Math.round(r.width),
          h: Math.round(r.height)};
}
function describe(el) {
  if (isControl(el)) return `"${labelOf(el)}" (${kindOf(el)})`;
  const inside = topControls(el).map(labelOf).filter(Boolean);
  const what = el.tagName.toLowerCase() === 'svg' ? 'a chart' :
               el.tagName.toLowerCase() === 'table' ? 'a table' :
               el.classList.contains('jp-OutputArea-output') ? 'the output area' : 'a box';
  if (!inside.length) return what;
  return `${what} holding "${inside.slice(0, 2).join('", "')}"` +
         (inside.length > 2 ? ` and ${inside.length - 2} more` : '');
}
function outputsOf(scope) {
  return [...scope.querySelectorAll('.jp-OutputArea-output')];
}
function widgetRoots(scope) {
  // the outermost widget views: what a workbook cell displays
  return [...scope.querySelectorAll('.jupyter-widgets')].filter(
    el => !(el.parentElement && el.parentElement.closest('.jupyter-widgets')));
}
function kernelBusy() {
  // JupyterLab's notebook kernel (Voila has no notebook panel: never busy here)
  const app = window.jupyterapp;
  const w = app && app.shell && app.shell.currentWidget;
  if (!w || !w.sessionContext) return false;
  const k = w.sessionContext.session && w.sessionContext.session.kernel;
  return !k || k.status !== 'idle';
}
function hash(s) {
  let h = 2166136261;
  for (let i = 0; i < s.length; i++) { h ^= s.charCodeAt(i); h = Math.imul(h, 16777619); }
  return (h >>> 0).toString(16) + ':' + s.length;
}
function isErrorMark(el, failRgb) {
  // an inline error (bold text in pinlib's fail colour) or an error box (a thick left
  // border in that colour); a status badge (the colour as background) is not one
  if (el.classList.contains('pinlib-error')) return true;
  if (el.closest('svg') || !clean(el.textContent)) return false;
  const cs = getComputedStyle(el);
  if (cs.color === failRgb && parseInt(cs.fontWeight, 10) >= 600) return true;
  return cs.borderLeftColor === failRgb && parseFloat(cs.borderLeftWidth) >= 4;
}
function errorMarks(scope, failRgb) {
  const out = [];
  for (const root of widgetRoots(scope))
    for (const el of root.querySelectorAll('*'))
      if (isErrorMark(el, failRgb) && !(el.parentElement &&
                                        isErrorMark(el.parentElement, failRgb)))
        out.push(el);
  return out;
}
"""

# Tolerances used below (common practice, no source): 1 px for sub-pixel rounding of
# layout boxes; a value of up to 16 characters (a quantity with its unit) must show whole
# in its field; two texts overprint when they share more than 20 % of the smaller one's
# box; an error is "beside" its field when it starts within 60 px below it.
_JS = {
    # every labelled control: label, kind, box, shown, hidden on purpose (tab)
    "controls": """(arg) => {
      const scope = scopeOf(arg);
      return topControls(scope).map(el => ({
        label: labelOf(el), kind: kindOf(el), box: box(el.getBoundingClientRect()),
        shown: isShown(el), inHiddenTab: hiddenByChoice(el, scope),
        display: getComputedStyle(el).display}));
    }""",
    # sideways: boxes that scroll or clip, things past the panel's edge, cut labels
    "sideways": """(arg) => {
      const scope = scopeOf(arg);
      const problems = [];
      const panel = (document.querySelector('.jp-NotebookPanel:not(.lm-mod-hidden)' +
                                            ' .jp-WindowedPanel-outer') || scope);
      const pr = panel.getBoundingClientRect();
      const panelRight = pr.left + panel.clientWidth;
      for (const root of widgetRoots(scope)) {
        const boxes = [root, ...root.querySelectorAll('.widget-box, .widget-html,' +
          ' .widget-html-content, .widget-tab, .widget-tab-contents, .lm-Widget')];
        const out = root.closest('.jp-OutputArea-output');
        if (out) boxes.push(out);
        for (const b of boxes) {
          if (!isShown(b) || hiddenByChoice(b, scope)) continue;
          if (b.scrollLeft > 0)
            problems.push(`${describe(b)} is scrolled sideways by ${b.scrollLeft} px`);
          const ox = getComputedStyle(b).overflowX;
          if (b.scrollWidth > b.clientWidth + 1 && ox !== 'visible')
            problems.push(`${describe(b)} clips its content sideways: ` +
                          `${b.scrollWidth} px of content in ${b.clientWidth} px`);
        }
        const items = [...topControls(root), ...root.querySelectorAll('svg, table')];
        if (isControl(root)) items.push(root);
        const cutBy = new Map();
        for (const el of items) {
          if (el.tagName.toLowerCase() === 'svg' && el.parentElement.closest('svg')) continue;
          if (!isShown(el) || hiddenByChoice(el, scope)) continue;
          const r = el.getBoundingClientRect();
          if (r.right > panelRight + 1)
            problems.push(`${describe(el)} ends ${Math.round(r.right - panelRight)} px ` +
                          `past the notebook's right edge`);
          // clipped by a box between it and the output that hides what overflows
          for (let a = el.parentElement; a && a !== root.parentElement; a = a.parentElement) {
            if (getComputedStyle(a).overflowX === 'visible') continue;
            const ar = a.getBoundingClientRect();
            const visibleRight = ar.left + a.clientLeft + a.clientWidth;
            if (r.right > visibleRight + 1) {
              if (!cutBy.has(a)) cutBy.set(a, []);
              cutBy.get(a).push([el, Math.round(r.right - visibleRight)]);
              break;
            }
          }
        }
        for (const [a, cut] of cutBy) {
          const names = cut.map(([el, px]) => `${describe(el)} by ${px} px`);
          problems.push(`${describe(a)} cuts off the right of ${cut.length} item(s): ` +
                        names.slice(0, 6).join(', ') + (names.length > 6 ? ', ...' : ''));
        }
        for (const el of topControls(root)) {
          if (!isShown(el) || hiddenByChoice(el, scope)) continue;
          const lab = el.querySelector(':scope > .widget-label');
          if (lab && isShown(lab) && lab.scrollWidth > lab.clientWidth + 1)
            problems.push(`${describe(el)}: its label is cut (${lab.scrollWidth} px ` +
                          `of text in ${lab.clientWidth} px)`);
          // a short value (a quantity with its unit) must show whole in its field
          const input = el.querySelector('input[type=text], input:not([type]), ' +
                                         'input[type=number]');
          if (input && isShown(input) && input.value.length <= 16 &&
              input.scrollWidth > input.clientWidth + 1)
            problems.push(`${describe(el)}: its value "${input.value}" is cut ` +
                          `(${input.scrollWidth} px in ${input.clientWidth} px)`);
          // a choice must show at least its first word (a part id, a bus name)
          const select = el.querySelector('select:not([multiple])');
          if (select && isShown(select) && select.selectedIndex >= 0 && select.size <= 1) {
            const ctx = document.createElement('canvas').getContext('2d');
            const cs = getComputedStyle(select);
            ctx.font = `${cs.fontWeight} ${cs.fontSize} ${cs.fontFamily}`;
            const text = clean(select.options[select.selectedIndex].text);
            const key = text.split(/\\s+\\u2014\\s+|\\s+-\\s+|\\s+\\(/)[0];
            const w = ctx.measureText(key).width;
            const room = select.clientWidth - parseFloat(cs.paddingLeft) -
                         parseFloat(cs.paddingRight);
            if (w > room + 1)
              problems.push(`${describe(el)}: its choice "${text}" is cut to ` +
                            `${Math.round(room)} px (its first word needs ${Math.round(w)} px)`);
            // cut further on: its whole text must be shown just under it (a choice line)
            const whole = ctx.measureText(text).width;
            if (whole > room + 1) {
              const sr = select.getBoundingClientRect();
              const shown = [...root.querySelectorAll('.pinlib-choice')].some(c => {
                const cr = c.getBoundingClientRect();
                return isShown(c) && clean(c.textContent) === text &&
                       cr.top >= sr.bottom - 2 && cr.top <= sr.bottom + 60;
              });
              if (!shown)
                problems.push(`${describe(el)}: its choice "${text}" is cut to ` +
                              `${Math.round(room)} px (${Math.round(whole)} px of text) and ` +
                              `its whole text is not shown under it`);
            }
          }
          // a list shows each item whole
          const list = el.querySelector('select[multiple], select[size]');
          if (list && isShown(list) && list.size > 1) {
            const ctx = document.createElement('canvas').getContext('2d');
            const cs = getComputedStyle(list);
            ctx.font = `${cs.fontWeight} ${cs.fontSize} ${cs.fontFamily}`;
            const room = list.clientWidth - parseFloat(cs.paddingLeft) -
                         parseFloat(cs.paddingRight);
            for (const o of list.options) {
              const oc = getComputedStyle(o);
              const w = ctx.measureText(clean(o.text)).width + parseFloat(oc.paddingLeft || 0) +
                        parseFloat(oc.paddingRight || 0);
              if (w > room + 1)
                problems.push(`${describe(el)}: its item "${clean(o.text)}" is cut ` +
                              `(${Math.round(w)} px of text in ${Math.round(room)} px)`);
            }
          }
          if (el.classList.contains('widget-toggle-buttons')) {
            const tops = new Set([...el.querySelectorAll('.widget-toggle-button')]
                                 .filter(isShown)
                                 .map(b => Math.round(b.getBoundingClientRect().top)));
            if (tops.size > 1)
              problems.push(`${describe(el)}: its buttons wrap onto ${tops.size} rows`);
          }
        }
      }
      return [...new Set(problems)];
    }""",
    # focus each text field as a click would: no box may scroll sideways to show it
    "focus_scroll": """(arg) => {
      const scope = scopeOf(arg);
      const scrolled = new Map();
      for (const el of topControls(scope)) {
        if (!isShown(el) || hiddenByChoice(el, scope)) continue;
        const input = el.querySelector('input[type=text], input:not([type]), ' +
                                       'input[type=number], textarea');
        if (!input) continue;
        input.focus();
        for (let a = input.parentElement; a && a !== scope; a = a.parentElement) {
          if (a.scrollLeft > 0) {
            if (!scrolled.has(a)) scrolled.set(a, []);
            scrolled.get(a).push(`"${labelOf(el)}" by ${a.scrollLeft} px`);
            a.scrollLeft = 0;
          }
        }
        input.blur();
      }
      return [...scrolled].map(([a, fields]) =>
        `focusing a field scrolls ${describe(a)} sideways: ` +
        fields.slice(0, 6).join(', ') + (fields.length > 6 ? ', ...' : ''));
    }""",
    # SVG text past its chart's edge, overprinted, or saying undefined/NaN
    "svg_text": """(arg) => {
      const scope = scopeOf(arg);
      const problems = [];
      let charts = 0;
      for (const svg of scope.querySelectorAll('svg')) {
        if (svg.parentElement.closest('svg') || !isShown(svg)) continue;
        if (!svg.closest('.jp-OutputArea-output, .jupyter-widgets')) continue;
        const texts = [...svg.querySelectorAll('text')].filter(t => clean(t.textContent));
        if (!texts.length) continue;
        charts += 1;
        const title = clean((svg.querySelector('.role-title-text') || texts[0]).textContent);
        const s = svg.getBoundingClientRect();
        const boxes = [];
        for (const t of texts) {
          const r = t.getBoundingClientRect();
          const txt = clean(t.textContent);
          if (r.width === 0) continue;
          const past = Math.max(r.right - s.right, s.left - r.left, r.bottom - s.bottom,
                                s.top - r.top);
          if (past > 1)
            problems.push(`chart "${title}": text "${txt}" ends ${Math.round(past)} px ` +
                          `past the chart's edge`);
          if (/\\bundefined\\b|\\bNaN\\b|\\bnull\\b|Infinity/.test(txt))
            problems.push(`chart "${title}": text "${txt}"`);
          boxes.push([r, txt]);
        }
        for (let i = 0; i < boxes.length; i++)
          for (let j = i + 1; j < boxes.length; j++) {
            const [a, ta] = boxes[i], [b, tb] = boxes[j];
            const w = Math.min(a.right, b.right) - Math.max(a.left, b.left);
            const h = Math.min(a.bottom, b.bottom) - Math.max(a.top, b.top);
            if (w <= 0 || h <= 0) continue;
            const small = Math.min(a.width * a.height, b.width * b.height);
            if (w * h > 0.2 * small)
              problems.push(`chart "${title}": "${ta}" and "${tb}" overprint each other`);
          }
      }
      return {charts, problems: [...new Set(problems)]};
    }""",
    # error outputs, tracebacks, widget text reprs, widgets that failed to render
    "error_outputs": """(arg) => {
      const scope = scopeOf(arg);
      const problems = [];
      const repr = /<[A-Za-z_][\\w.]*(?: object)? at 0x[0-9a-fA-F]+>/;
      for (const out of outputsOf(scope)) {
        const mime = out.getAttribute('data-mime-type') || '';
        const text = clean(out.innerText || out.textContent).slice(0, 400);
        if (mime === 'application/vnd.jupyter.stderr' || out.querySelector(
              '[data-mime-type="application/vnd.jupyter.stderr"]'))
          problems.push(`an error output: ${text}`);
        else if (/Traceback|Error displaying widget|Error rendering|Exception:/.test(text))
          problems.push(`an output with an error: ${text}`);
        const m = (out.innerText || '').match(repr);
        if (m) problems.push(`a text repr instead of a widget: ${m[0]}`);
      }
      for (const el of scope.querySelectorAll('.jupyter-widgets-disconnected, ' +
                                              '.jupyter-widgets .jp-RenderedText'))
        if (/Error|Traceback/.test(el.textContent))
          problems.push(`a widget shows: ${clean(el.textContent).slice(0, 300)}`);
      return problems;
    }""",
    # the error marks shown in the widgets (inline errors, error boxes)
    "error_marks": """(arg) => {
      const scope = scopeOf(arg);
      // a widget that says it is a demonstration (its first words) shows errors on purpose
      const demo = el => {
        const root = widgetRoots(scope).find(r => r.contains(el));
        return !!root && /demonstration/i.test(clean(root.textContent).slice(0, 200));
      };
      return errorMarks(scope, arg.failRgb).map(el => ({
        text: clean(el.textContent).slice(0, 300), box: box(el.getBoundingClientRect()),
        shown: isShown(el), inHiddenTab: hiddenByChoice(el, scope), inDemo: demo(el)}));
    }""",
    # what a widget shows as results: its charts and tables (a hash of each)
    "figures": """(arg) => {
      const scope = scopeOf(arg);
      const charts = [], tables = [];
      for (const root of widgetRoots(scope)) {
        for (const svg of root.querySelectorAll('svg'))
          if (!svg.parentElement.closest('svg')) charts.push(hash(svg.outerHTML));
        for (const t of root.querySelectorAll('table')) tables.push(hash(t.innerText));
      }
      return {charts, tables};
    }""",
    # tag the control with this label (exact, or the label before " (unit)"/" ±")
    "tag_control": """(arg) => {
      const scope = scopeOf(arg);
      const want = arg.label.toLowerCase();
      const all = topControls(scope).filter(el => !hiddenByChoice(el, scope));
      const base = l => l.toLowerCase().replace(/\\s*\\(.*\\)\\s*$/, '').trim();
      const starts = l => l.toLowerCase().startsWith(want + ' ');
      const found = all.filter(el => labelOf(el).toLowerCase() === want).concat(
        all.filter(el => labelOf(el).toLowerCase() !== want && base(labelOf(el)) === want),
        all.filter(el => base(labelOf(el)) !== want && starts(labelOf(el))));
      for (const el of scope.querySelectorAll('[data-pinlib-test]'))
        el.removeAttribute('data-pinlib-test');
      if (!found.length) return null;
      found[0].setAttribute('data-pinlib-test', arg.tag);
      return {label: labelOf(found[0]), kind: kindOf(found[0]),
              box: box(found[0].getBoundingClientRect()), shown: isShown(found[0])};
    }""",
    "scroll_to_widgets": """(arg) => {
      const scope = scopeOf(arg);
      const roots = widgetRoots(scope);
      if (!roots.length) return false;
      const cell = roots[0].closest('.jp-Cell') || roots[0];
      cell.scrollIntoView({block: 'start'});
      return true;
    }""",
    # resolve when nothing in the scope has changed for `quiet` ms (and the kernel is idle)
    "settle": """(arg) => new Promise(resolve => {
      const scope = scopeOf(arg);
      let last = performance.now();
      const started = last;
      const obs = new MutationObserver(() => { last = performance.now(); });
      obs.observe(scope, {subtree: true, childList: true, attributes: true,
                          characterData: true});
      const tick = () => {
        const now = performance.now();
        if (kernelBusy()) last = now;
        if (now - last >= arg.quiet || now - started > arg.timeout) {
          obs.disconnect();
          resolve(now - started <= arg.timeout);
        } else setTimeout(tick, 40);
      };
      setTimeout(tick, 40);
    })""",
    # time from now until an SVG under the widgets differs from what it was
    "chart_change_time": """(arg) => new Promise(resolve => {
      const scope = scopeOf(arg);
      const before = arg.before;
      const t0 = performance.now();
      const check = () => {
        const now = [];
        for (const root of widgetRoots(scope))
          for (const svg of root.querySelectorAll('svg'))
            if (!svg.parentElement.closest('svg')) now.push(hash(svg.outerHTML));
        return JSON.stringify(now) !== JSON.stringify(before);
      };
      // the change may already be there (a fast redraw): checked at once, on every
      // mutation, and every 50 ms
      let done = false, timer = null;
      const finish = v => { if (!done) { done = true; obs.disconnect(); clearInterval(timer);
                                         resolve(v); } };
      const obs = new MutationObserver(() => { if (check()) finish(performance.now() - t0); });
      obs.observe(scope, {subtree: true, childList: true, characterData: true});
      timer = setInterval(() => {
        if (check()) finish(performance.now() - t0);
        else if (performance.now() - t0 > arg.timeout) finish(null);
      }, 50);
      if (check()) finish(0);
    })""",
    # choose option `index` of the tagged dropdown as a user does (the change event);
    # ms from that event to the first and to the last change of an SVG under the widgets
    # and to the last change of the page (once the kernel is idle and the page still for
    # `quiet` ms), or null
    "timed_choice": """(arg) => new Promise(resolve => {
      const scope = scopeOf(arg);
      const select = document.querySelector(`[data-pinlib-test="${arg.tag}"] select`);
      const charts = () => {
        const now = [];
        for (const root of widgetRoots(scope))
          for (const svg of root.querySelectorAll('svg'))
            if (!svg.parentElement.closest('svg')) now.push(hash(svg.outerHTML));
        return JSON.stringify(now);
      };
      let shown = charts(), first = null, last = null, done = null;
      let moved = performance.now();
      const obs = new MutationObserver(() => {
        moved = performance.now();
        done = moved - t0;
        const now = charts();
        if (now !== shown) {
          shown = now;
          last = moved - t0;
          if (first === null) first = last;
        }
      });
      obs.observe(scope, {subtree: true, childList: true, characterData: true});
      const t0 = performance.now();
      const tick = () => {
        const now = performance.now();
        if (kernelBusy()) moved = now;
        const still = first !== null && now - moved >= arg.quiet;
        if (still || now - t0 > arg.timeout) {
          obs.disconnect();
          resolve(first === null ? null : {first, last, done});
        } else setTimeout(tick, 20);
      };
      select.selectedIndex = arg.index;
      select.dispatchEvent(new Event('change', {bubbles: true}));
      setTimeout(tick, 20);
    })""",
}


def _fn(name: str) -> str:
    body = _JS[name].strip()
    return f"(arg) => {{ {_JS_LIB}\n return ({body})(arg); }}"


def fail_rgb() -> str:
    """pinlib's fail colour as the browser writes a computed colour."""
    from pinlib.present import charts

    h = charts.FAIL.lstrip("#")
    r, g, b = (int(h[i:i + 2], 16) for i in (0, 2, 4))
    return f"rgb({r}, {g}, {b})"


# =========================================================================== a page


class Workbook:
    """One workbook open in a page: run it, find and use its controls, measure it.

    Parameters
    ----------
    page : playwright Page
    name : str
        The notebook's file name (``01-start-a-design.ipynb``).
    lab : bool
        True in JupyterLab (a notebook panel and a kernel to wait for), False in Voilà.
    """

    def __init__(self, page, name: str, *, lab: bool = True):
        self.page, self.name, self.lab = page, name, lab
        self.stem = Path(name).stem
        self.scope = None if lab else "body"
        self._tag = 0
        self.timings: dict[str, float] = {}

    # ---------------------------------------------------------------- JupyterLab

    def open_in_lab(self, base: str, timeout: float = 90.0) -> Workbook:
        t0 = time.perf_counter()
        self.page.goto(f"{base}/lab/tree/{self.name}?reset", wait_until="domcontentloaded")
        self.page.wait_for_function(
            "() => window.jupyterapp && window.jupyterapp.shell &&"
            " document.querySelector('.jp-NotebookPanel .jp-Cell')", timeout=timeout * 1e3)
        self.page.wait_for_function(
            """() => { const w = window.jupyterapp.shell.currentWidget;
                       const k = w && w.sessionContext && w.sessionContext.session &&
                                 w.sessionContext.session.kernel;
                       return k && k.status === 'idle'; }""", timeout=timeout * 1e3)
        self.timings["open"] = time.perf_counter() - t0
        return self

    def file_browser_open(self) -> bool:
        """Open JupyterLab's file browser side panel when it is not; True when it shows."""
        shown = "() => { const f = document.getElementById('filebrowser');" \
                " return !!f && f.checkVisibility() && f.getBoundingClientRect().width > 100; }"
        if not self.page.evaluate(shown):
            self.page.evaluate("() => window.jupyterapp.shell.activateById('filebrowser')")
            self.page.wait_for_timeout(300)
        return bool(self.page.evaluate(shown))

    def run_all(self, timeout: float = 300.0) -> bool:
        """Run All (JupyterLab's command), wait until every code cell ran and the page is
        still; True when no cell stopped the run."""
        t0 = time.perf_counter()
        self.page.click(".jp-NotebookPanel:not(.lm-mod-hidden) .jp-Notebook")
        ok = self.page.evaluate(
            "() => window.jupyterapp.commands.execute('notebook:run-all-cells')"
            ".then(r => r !== false)")
        self.page.wait_for_function(
            r"""() => { const w = window.jupyterapp.shell.currentWidget;
                        const k = w.sessionContext.session.kernel;
                        const p = [...w.node.querySelectorAll('.jp-CodeCell .jp-InputPrompt')]
                                  .map(e => e.textContent);
                        return k.status === 'idle' && p.every(t => /\[\d+\]/.test(t)); }""",
            timeout=timeout * 1e3)
        self.settle()
        self.timings["run all"] = time.perf_counter() - t0
        return bool(ok)

    def shutdown_kernel(self) -> None:
        """Shut the notebook's kernel down (no dialog), so the next workbook has the CPU."""
        with contextlib.suppress(Exception):
            self.page.evaluate("() => window.jupyterapp.shell.currentWidget"
                               ".sessionContext.shutdown()")

    # ---------------------------------------------------------------- Voilà

    def open_in_voila(self, url: str, timeout: float = 120.0) -> Workbook:
        t0 = time.perf_counter()
        self.page.goto(url, wait_until="domcontentloaded")
        # Voilà runs the notebook, then the page renders its widgets
        self.page.wait_for_function(
            "() => document.querySelector('.jupyter-widgets .widget-dropdown, "
            ".jupyter-widgets.widget-dropdown, .widget-text')", timeout=timeout * 1e3)
        self.settle(quiet=800)
        self.timings["open"] = time.perf_counter() - t0
        return self

    # ---------------------------------------------------------------- measuring

    def js(self, name: str, **arg):
        if self.scope is not None:
            arg.setdefault("scope", self.scope)
        return self.page.evaluate(_fn(name), arg)

    def settle(self, quiet: int = 500, timeout: float = 60.0) -> bool:
        """Wait until the page has not changed for ``quiet`` ms and the kernel is idle."""
        self.page.wait_for_timeout(100)
        return bool(self.js("settle", quiet=quiet, timeout=timeout * 1e3))

    def controls(self) -> list[dict]:
        return self.js("controls")

    def sideways_problems(self) -> list[str]:
        return self.js("sideways") + self.js("focus_scroll")

    def svg_text(self) -> dict:
        return self.js("svg_text")

    def error_outputs(self) -> list[str]:
        return self.js("error_outputs")

    def error_marks(self) -> list[dict]:
        return self.js("error_marks", failRgb=fail_rgb())

    def figures(self) -> dict:
        return self.js("figures")

    def screenshot(self, label: str = "") -> Path:
        OUT.mkdir(parents=True, exist_ok=True)
        path = OUT / f"{self.stem}{'-' + label if label else ''}.png"
        self.page.screenshot(path=str(path))
        return path

    def scroll_to_widgets(self) -> None:
        self.js("scroll_to_widgets")
        self.page.wait_for_timeout(150)

    # ---------------------------------------------------------------- controls

    def control(self, label: str):
        """The control labelled ``label`` (or ``label (unit)``): (locator, info) or None."""
        self._tag += 1
        tag = f"c{self._tag}"
        info = self.js("tag_control", label=label, tag=tag)
        if info is None:
            return None
        return self.page.locator(f'[data-pinlib-test="{tag}"]'), info

    def labels(self) -> list[str]:
        return [c["label"] for c in self.controls() if c["label"]]

    def type_into(self, label: str, text: str, *, submit: bool = True) -> dict:
        """Type ``text`` into the field labelled ``label`` as a user does: click, select
        what is there, type, Enter.  Returns the control's info and the text the field
        shows afterwards (``shown``)."""
        loc, info = self.shown_control(label)
        if info["kind"] == "slider":
            field = loc.locator(".widget-readout")
        else:
            field = loc.locator("input, textarea").first
        field.scroll_into_view_if_needed()
        field.click()
        self.page.keyboard.press("Control+A")
        self.page.keyboard.type(text, delay=10)
        if submit:
            self.page.keyboard.press("Enter")
        info["shown"] = self.shown_text(loc, info)
        return info

    def shown_text(self, loc, info) -> str:
        if info["kind"] == "slider":
            return loc.locator(".widget-readout").inner_text()
        return loc.locator("input, textarea").first.input_value()

    def choose(self, label: str, option: str | None = None) -> str:
        """Choose ``option`` (its text) in the dropdown or toggle buttons labelled
        ``label``; without ``option``, the next one.  Returns the option chosen."""
        loc, info = self.shown_control(label)
        if info["kind"] == "toggle-buttons":
            buttons = loc.locator(".widget-toggle-button")
            texts = [t.strip() for t in buttons.all_inner_texts()]
            current = texts.index(loc.locator(".widget-toggle-button.mod-active")
                                  .inner_text().strip())
        else:
            buttons = None
            select = loc.locator("select")
            texts = [t.strip() for t in select.locator("option").all_inner_texts()]
            current = select.evaluate("s => s.selectedIndex")
        if option is None:
            index = (current + 1) % len(texts)
        else:  # the option itself, or the first that starts with it ("U7" for "U7 — ...")
            starts = [i for i, t in enumerate(texts)
                      if t == option or re.match(re.escape(option) + r"\b", t)]
            if not starts:
                raise LookupError(f"{label!r} offers no {option!r}; it offers {texts}")
            index = starts[0]
        if buttons is not None:
            buttons.nth(index).click()
        else:
            select.select_option(index=index)
        return texts[index]

    def options(self, label: str) -> list[str]:
        """The option texts of the dropdown labelled ``label``."""
        loc, _ = self.shown_control(label)
        return [t.strip() for t in loc.locator("select option").all_inner_texts()]

    def time_choice(self, label: str, index: int, timeout: float = 30.0):
        """Choose option ``index`` of the dropdown labelled ``label``: seconds from the
        change event to the first and to the last chart that differs and to the page's
        last change, as ``(first, last, done)``; None when no chart changed within
        ``timeout``."""
        self.shown_control(label)
        got = self.js("timed_choice", tag=f"c{self._tag}", index=index, quiet=300,
                      timeout=timeout * 1e3)
        return None if got is None else (got["first"] / 1e3, got["last"] / 1e3,
                                         got["done"] / 1e3)

    def shown_control(self, label: str):
        """The control labelled ``label``, shown on the page (an AssertionError at once
        when it is missing or hidden, rather than a wait for it to show)."""
        found = self.control(label)
        if found is None:
            raise AssertionError(f"no control labelled {label!r}; labels: {self.labels()}")
        if not found[1]["shown"]:
            raise AssertionError(f"the control {found[1]['label']!r} is not shown "
                                 f"({found[1]['box']['w']}x{found[1]['box']['h']} px)")
        return found

    def click_button(self, label: str) -> None:
        self.shown_control(label)[0].click()

    def select_tab(self, title: str) -> None:
        tab = self.page.locator(".widget-tab .lm-TabBar-tab", has_text=title)
        tab.first.click()
        self.page.wait_for_timeout(200)


def near(mark: dict, control: dict, *, below: int = 60) -> bool:
    """True when an error mark sits beside or just below a control (its row).

    Common practice, no source: within ``below`` px under the field (two lines of
    message text), 4 px of rounding above it, and not left of the field's column by
    more than 20 px (the label's side)."""
    m, c = mark["box"], control["box"]
    vertical = m["y"] < c["y"] + c["h"] + below and m["y"] + m["h"] > c["y"] - 4
    horizontal = m["x"] + m["w"] > c["x"] - 20
    return vertical and horizontal


def label_matches(label: str, wanted: str, *, prefix: bool = False) -> bool:
    """``Supply (V)`` and ``Supply`` both answer ``Supply``; ``Supply ± (%)`` does not,
    unless ``prefix`` (then any label that starts with the word ``Supply`` does)."""
    label, wanted = label.strip().lower(), wanted.strip().lower()
    if label == wanted or re.sub(r"\s*\(.*\)\s*$", "", label) == wanted:
        return True
    return prefix and re.match(re.escape(wanted) + r"\b", label) is not None
