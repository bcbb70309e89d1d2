"""``pinlib workbench [--port N] [FOLDER]``: the workbooks as a web page, without code.

An engineer who never opens Jupyter still gets the workbooks: Voilà (a Jupyter project
that runs a notebook and shows its outputs and widgets, not its code) serves the
folder's workbooks on 127.0.0.1 and this command prints the address to open.  Voilà runs
as a subprocess in a session of its own, so Ctrl-C reaches this command only, which then
stops the server (and the kernels it started) and exits 0.

Only the loopback address is served, so no token is asked for: whoever can reach
127.0.0.1 on this machine can already run code as this user.  Voilà comes with the
``notebook`` extra; without it the command names the extra and exits 2.
"""

from __future__ import annotations

import contextlib
import os
import sys
from pathlib import Path
from typing import TYPE_CHECKING

from pinlib.cli import SUMMARIES
from pinlib.cli.helptext import HelpLayout
from pinlib.core import messages as M
from pinlib.core.errors import InputError, PinlibError
from pinlib.core.labels import counted

if TYPE_CHECKING:
    import subprocess

# The server's modules (sockets, subprocesses, HTTP, signals) are imported inside the
# functions that use them: every ``pinlib`` command builds this command's parser, and
# ``pinlib check`` should not pay for them.

__all__ = ["add_parser", "run", "workbook_folder", "free_port", "DEFAULT_PORT", "HOST"]

HOST = "127.0.0.1"
DEFAULT_PORT = 8866
#: Ports tried after the default one when it is taken (an explicit --port is not moved).
PORT_TRIES = 20
START_TIMEOUT = 120.0  # s for the server to answer

EXAMPLES = """\
examples:
  pinlib workbench                # ./workbooks: a checkout's or a demo copy's
  pinlib workbench pinlib-demo    # the folder `pinlib demo pinlib-demo` made
  pinlib workbench --port 9000 ~/boards/workbooks

Open the address it prints in a browser: a list of the workbooks, each a page with its
controls, charts and tables, and no code. Ctrl-C stops the server. It listens on
127.0.0.1 only (this machine), with no token. It needs the notebook extra:
pip install 'pinlib[notebook]'.

exit status: 0 stopped with Ctrl-C, 2 no workbooks in the folder, a port that is taken,
the notebook extra missing, or a server that did not start.
"""


def add_parser(sub) -> None:
    p = sub.add_parser(
        "workbench",
        help=SUMMARIES["workbench"],
        description="Serve the Jupyter workbooks of a folder as web pages that show their "
                    "controls, charts and tables but not their code, on this machine only "
                    "(127.0.0.1). Ctrl-C stops it.",
        epilog=EXAMPLES,
        formatter_class=HelpLayout,
    )
    p.add_argument("folder", metavar="FOLDER", nargs="?", default=".",
                   help="the folder of the workbooks (*.ipynb), or one holding workbooks/ "
                        "(default: the current folder)")
    p.add_argument("--port", metavar="N", type=int, default=None,
                   help=f"the port to listen on (default {DEFAULT_PORT}, or the next free one)")
    p.set_defaults(run=run)


def workbook_folder(folder: str | Path) -> Path:
    """The folder whose ``*.ipynb`` are served: ``folder`` itself, or its ``workbooks/``.

    Raises
    ------
    InputError
        When ``folder`` is not a folder, or neither it nor its ``workbooks/`` holds a
        notebook.
    """
    from pinlib.core.pathkind import FOLDER, UNREADABLE, path_kind

    path = Path(folder)
    kind, reason = path_kind(path)
    if kind == UNREADABLE:
        raise InputError(M.CANNOT_READ_FOLDER.format(reason=reason), file=str(path))
    if kind != FOLDER:
        raise InputError(M.NOT_A_FOLDER, file=str(path))
    for candidate in (path, path / "workbooks"):
        if candidate.is_dir() and any(candidate.glob("*.ipynb")):
            return candidate
    raise InputError(M.NO_WORKBOOKS_IN_FOLDER, file=str(path),
                     hint=M.WORKBOOKS_DEMO_HINT.format(folder=path))


def _port_free(port: int) -> bool:
    import socket

    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as s:
        try:
            s.bind((HOST, port))
        except OSError:
            return False
    return True


def free_port(port: int | None) -> int:
    """``port`` when it is free on 127.0.0.1; without one, the default or the next free."""
    if port is not None:
        if not 1 <= port <= 65535:
            raise InputError(M.NOT_A_PORT, field="--port", value=port,
                             expected="a port number from 1 to 65535")
        if not _port_free(port):
            raise InputError(M.PORT_IN_USE, field="--port", value=port,
                             hint=M.OTHER_PORT_HINT)
        return port
    for p in range(DEFAULT_PORT, DEFAULT_PORT + PORT_TRIES + 1):
        if _port_free(p):
            return p
    raise InputError(M.PORT_IN_USE, field="--port", value=DEFAULT_PORT,
                     hint=M.OTHER_PORT_HINT)


#: Voilà's page template, as its "lab" template less the two style sheets that one
#: loads from a CDN (the icon font they bring is already in Voilà's own bundle): the
#: page then asks nothing of any host but 127.0.0.1.
TEMPLATE = "pinlib-workbench"
_TEMPLATE_FILES = {
    "conf.json": '{"base_template": "lab"}\n',
    "index.html.j2": """\
{%- extends 'voila/templates/lab/index.html.j2' -%}
{%- block notebook_css -%}
  {% if frontend == "voila" %}
    {{ resources.include_js("static/voila-style.js") }}
  {% endif %}
  {{ spinner.css() }}
  <style>
    .jp-mod-noOutputs.jp-mod-noInput { display: none; }
  </style>
  {{ super.super() }}
{%- endblock notebook_css -%}
""",
}


def write_template(root: Path) -> Path:
    """Write the page template under ``root`` (a Jupyter data folder); return ``root``."""
    folder = root / "voila" / "templates" / TEMPLATE
    folder.mkdir(parents=True, exist_ok=True)
    for name, text in _TEMPLATE_FILES.items():
        (folder / name).write_text(text, encoding="utf-8")
    return root


def voila_command(folder: Path, port: int) -> list[str]:
    """The Voilà command line: the folder's notebooks on 127.0.0.1:port, code hidden."""
    return [sys.executable, "-m", "voila", str(folder), "--no-browser",
            f"--port={port}", f"--Voila.ip={HOST}", "--Voila.port_retries=0",
            "--strip_sources=True", "--show_tracebacks=False", "--theme=light",
            f"--template={TEMPLATE}", "--Voila.log_level=ERROR"]


def _answers(url: str) -> bool:
    import urllib.error
    import urllib.request

    try:
        with urllib.request.urlopen(url, timeout=5) as r:
            return r.status == 200
    except (urllib.error.URLError, OSError):
        return False


class _Stop(Exception):
    """SIGTERM or SIGHUP: stop as Ctrl-C does."""


def _raise_stop(signum, frame):
    raise _Stop(signum)


def _stop(proc: subprocess.Popen, timeout: float = 15.0) -> None:
    """Stop the server (SIGTERM: it shuts its kernels down), then kill what is left."""
    import signal
    import subprocess

    if proc.poll() is None:
        proc.terminate()
        try:
            proc.wait(timeout)
        except subprocess.TimeoutExpired:
            pass
    with contextlib.suppress(ProcessLookupError, PermissionError):
        os.killpg(proc.pid, signal.SIGKILL)  # kernels left in its session
    with contextlib.suppress(subprocess.TimeoutExpired):
        proc.wait(5)


def run(args) -> int:
    import importlib.util
    import shutil
    import signal
    import subprocess
    import tempfile
    import time
    from urllib.parse import quote

    from pinlib.cli.startup import child_environment
    from pinlib.core import extras

    # the extra first: without it no folder can be served, and a user fresh from
    # `pip install pinlib` in an empty folder learns what to install before being sent
    # to `pinlib demo` for workbooks
    for module in ("voila", "ipywidgets", "ipykernel"):
        if importlib.util.find_spec(module) is None:
            extras.need(module, extra="notebook", feature="pinlib workbench")
    folder = workbook_folder(args.folder)
    port = free_port(args.port)
    url = f"http://{HOST}:{port}/"
    old = {s: signal.signal(s, _raise_stop) for s in (signal.SIGTERM, signal.SIGHUP)}
    proc = None
    stopped = False
    data = Path(tempfile.mkdtemp(prefix="pinlib-workbench-"))
    env = child_environment()  # the user's, without what this command set for itself
    env["JUPYTER_PATH"] = os.pathsep.join(
        [str(write_template(data))] + ([env["JUPYTER_PATH"]] if env.get("JUPYTER_PATH")
                                       else []))
    try:
        # a session of its own: Ctrl-C in the terminal reaches this command, which stops
        # the server in order, rather than the server and its kernels all at once
        proc = subprocess.Popen(voila_command(folder, port), stdin=subprocess.DEVNULL,
                                env=env, start_new_session=True)
        deadline = time.monotonic() + START_TIMEOUT
        while not _answers(url):
            if proc.poll() is not None:
                raise PinlibError(M.SERVER_STOPPED.format(code=proc.returncode),
                                  hint=M.SERVER_OUTPUT_HINT)
            if time.monotonic() > deadline:
                raise PinlibError(M.SERVER_DID_NOT_ANSWER.format(seconds=START_TIMEOUT),
                                  hint=M.SERVER_OUTPUT_HINT)
            time.sleep(0.2)
        books = sorted(folder.glob("*.ipynb"))
        what = counted("{n} workbook{s}", len(books))
        print(f"Serving {what} of {folder} at {url}", flush=True)
        for book in books:
            print(f"  {url}voila/render/{quote(book.name)}", flush=True)
        print("Ctrl-C stops the server.", flush=True)
        proc.wait()
        raise PinlibError(M.SERVER_STOPPED.format(code=proc.returncode),
                          hint=M.SERVER_OUTPUT_HINT)
    except (KeyboardInterrupt, _Stop):
        print("\nStopping the server...", flush=True)
        stopped = True
    finally:
        if proc is not None:
            _stop(proc)
        shutil.rmtree(data, ignore_errors=True)
        for s, handler in old.items():
            signal.signal(s, handler)
    if stopped:
        print("Stopped.", flush=True)
    return 0
