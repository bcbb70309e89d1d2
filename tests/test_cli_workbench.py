"""``pinlib workbench``: its help, the folder it serves, what it says without Voilà, and a
real start and stop (the page it serves asks nothing of any host but 127.0.0.1).

The workbooks driven in a browser through it: ``tests/test_browser.py``.
"""

from __future__ import annotations

import re
import shutil
import signal
import subprocess
import sys
import time
import urllib.request
from pathlib import Path

import pytest

from pinlib.cli import main
from pinlib.cli.commands import workbench

ROOT = Path(__file__).resolve().parents[1]


def test_help_gives_an_example(capsys):
    with pytest.raises(SystemExit) as exit_:
        main(["workbench", "--help"])
    assert exit_.value.code == 0
    out = capsys.readouterr().out
    assert "examples:" in out and "pinlib workbench pinlib-demo" in out
    assert "--port N" in out and "127.0.0.1" in out


def test_the_folder_is_the_workbooks_or_the_one_holding_them(tmp_path):
    (tmp_path / "workbooks").mkdir()
    (tmp_path / "workbooks" / "a.ipynb").write_text("{}", encoding="utf-8")
    assert workbench.workbook_folder(tmp_path) == tmp_path / "workbooks"
    assert workbench.workbook_folder(tmp_path / "workbooks") == tmp_path / "workbooks"
    assert workbench.workbook_folder(ROOT) == ROOT / "workbooks"


def test_without_voila_it_names_the_extra(monkeypatch, capsys):
    monkeypatch.setitem(sys.modules, "voila", None)  # as if not installed
    code = main(["workbench", str(ROOT)])
    err = capsys.readouterr().err
    assert code == 2
    assert "'notebook' extra" in err and "pip install 'pinlib[notebook]'" in err
    assert "Traceback" not in err


def test_without_voila_it_names_the_extra_before_looking_for_workbooks(monkeypatch, capsys,
                                                                      tmp_path):
    # a user fresh from `pip install pinlib` who types `pinlib workbench` in an empty
    # folder: told first what to install (then `pinlib demo` for the workbooks), not sent
    # to copy workbooks that the command could not serve anyway
    monkeypatch.setitem(sys.modules, "voila", None)  # as if not installed
    code = main(["workbench", str(tmp_path)])
    err = capsys.readouterr().err
    assert code == 2
    assert "'notebook' extra" in err and "pip install 'pinlib[notebook]'" in err
    assert "Traceback" not in err


def test_the_page_template_keeps_every_request_on_this_machine(tmp_path):
    folder = workbench.write_template(tmp_path) / "voila" / "templates" / workbench.TEMPLATE
    text = (folder / "index.html.j2").read_text(encoding="utf-8")
    assert "http" not in text
    assert '"base_template": "lab"' in (folder / "conf.json").read_text(encoding="utf-8")


def _port() -> int:
    import socket

    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def test_it_serves_on_loopback_and_ctrl_c_stops_it(tmp_path):
    folder = tmp_path / "workbooks"
    folder.mkdir()
    shutil.copy(ROOT / "workbooks" / "04-record-part-values.ipynb", folder)
    port = _port()
    proc = subprocess.Popen([sys.executable, "-m", "pinlib", "workbench", "--port", str(port),
                             str(tmp_path)], stdout=subprocess.PIPE, stderr=subprocess.PIPE,
                            text=True, start_new_session=True)
    try:
        first = proc.stdout.readline()  # printed once the server answers
        assert first.startswith(f"Serving 1 workbook of {folder} at "
                                f"http://127.0.0.1:{port}/"), first + proc.stderr.read()
        assert f"http://127.0.0.1:{port}/voila/render/04-record-part-values.ipynb" in \
            proc.stdout.readline()
        with urllib.request.urlopen(f"http://127.0.0.1:{port}/", timeout=30) as r:
            assert r.status == 200  # the list of workbooks (drawn by its script)
        url = f"http://127.0.0.1:{port}/voila/render/04-record-part-values.ipynb"
        with urllib.request.urlopen(url, timeout=120) as r:
            page = r.read().decode("utf-8")
        # no style sheet, script or font from another host (a link in a comment or in
        # code that runs only for a diagram the workbooks do not have is not a request)
        assert not re.search(r'<(link|script)[^>]+(href|src)="https?://', page)
        assert "recorder.widget" not in page  # no code
    finally:
        proc.send_signal(signal.SIGINT)  # Ctrl-C
        out, err = proc.communicate(timeout=60)
    assert proc.returncode == 0, err
    assert "Stopped." in out and "Traceback" not in err
    # the server is gone: its port refuses within a few seconds (polled, not slept)
    end = time.monotonic() + 10.0
    while True:
        try:
            urllib.request.urlopen(f"http://127.0.0.1:{port}/", timeout=5).close()
        except OSError:
            break
        assert time.monotonic() < end, "the workbench still answers after Ctrl-C"
        time.sleep(0.1)
