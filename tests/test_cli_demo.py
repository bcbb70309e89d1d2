"""``pinlib demo [FOLDER]``: the demo design and the workbooks copied out for a user.

Run here from the checkout (the files come from ``workbooks/``); tests/test_install.py
runs the same command from an installed wheel.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from pinlib.cli import main
from pinlib.cli.commands import demo

ROOT = Path(__file__).resolve().parents[1]
WORKBOOKS = ROOT / "workbooks"


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def test_source_in_a_checkout_is_the_workbooks_folder():
    assert demo.source_folder() == WORKBOOKS
    files = demo.demo_files(WORKBOOKS)
    assert Path("designs/demo-board.toml") in files
    # every committed workbook is part of the demo, and nothing else is
    assert sorted(p for p in files if p.suffix == ".ipynb") == sorted(
        p.relative_to(WORKBOOKS) for p in WORKBOOKS.glob("*.ipynb"))


def test_copies_every_file_unchanged_and_prints_the_next_commands(tmp_path, capsys):
    folder = tmp_path / "my demo"  # a space: the printed commands quote the paths
    code, out, err = run(capsys, "demo", str(folder))
    assert code == 0, err
    files = demo.demo_files(WORKBOOKS)
    for rel in files:
        assert (folder / "workbooks" / rel).read_bytes() == (WORKBOOKS / rel).read_bytes()
    assert sorted(p.relative_to(folder) for p in folder.rglob("*") if p.is_file()) == \
        sorted(Path("workbooks") / f for f in files)
    design = folder / "workbooks" / "designs" / "demo-board.toml"
    assert f"pinlib check '{design}'" in out
    assert f"pinlib report '{design}' --html '{folder / 'review.html'}'" in out
    assert f"jupyter lab '{folder / 'workbooks'}'" in out
    # the copied design is a working design: the check runs on it (exit 0 pass/warn, 1 fail)
    code, out, err = run(capsys, "check", str(design))
    assert code in (0, 1), err
    assert "sensors" in out and "flash" in out


def test_default_folder_is_pinlib_demo_in_the_working_folder(tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    code, out, _ = run(capsys, "demo")
    assert code == 0
    assert (tmp_path / "pinlib-demo" / "workbooks" / "designs" / "demo-board.toml").is_file()
    assert "pinlib check pinlib-demo/workbooks/designs/demo-board.toml" in out


def test_the_next_commands_fit_80_columns_and_paste_whole(tmp_path, capsys, monkeypatch):
    # "pinlib report pinlib-demo/... --html pinlib-demo/review.html" ran to 92 columns
    monkeypatch.chdir(tmp_path)
    monkeypatch.setenv("COLUMNS", "80")
    code, out, _ = run(capsys, "demo")
    assert code == 0
    assert all(len(ln) <= 80 for ln in out.splitlines()), out
    report = out[out.index("  pinlib report"):].split("\n  jupyter")[0]
    # continued as a shell reads it: one command once the " \\" breaks are joined
    assert report.replace(" \\\n    ", " ").strip() == (
        "pinlib report pinlib-demo/workbooks/designs/demo-board.toml --html "
        "pinlib-demo/review.html")


def test_refuses_to_overwrite_and_writes_nothing(tmp_path, capsys):
    folder = tmp_path / "d"
    mine = folder / "workbooks" / "designs" / "demo-board.toml"
    mine.parent.mkdir(parents=True)
    mine.write_text("# my own edits\n", encoding="utf-8")
    code, out, err = run(capsys, "demo", str(folder))
    assert code == 2 and out == ""
    assert "already holds 1 of the demo's files (designs/demo-board.toml)" in err
    assert "--force" in err and "Traceback" not in err
    assert mine.read_text(encoding="utf-8") == "# my own edits\n"
    assert [p for p in folder.rglob("*") if p.is_file()] == [mine]  # nothing else copied
    code, _, err = run(capsys, "demo", str(folder), "--force")
    assert code == 0, err
    assert mine.read_bytes() == (WORKBOOKS / "designs" / "demo-board.toml").read_bytes()


def test_a_file_where_the_folder_should_be_is_a_clear_error(tmp_path, capsys):
    (tmp_path / "taken").write_text("x", encoding="utf-8")
    code, out, err = run(capsys, "demo", str(tmp_path / "taken"))
    assert code == 2 and out == ""
    assert err.startswith("pinlib: error: ") and "cannot write in this folder" in err


def test_missing_demo_files_say_so(tmp_path, capsys, monkeypatch):
    monkeypatch.setattr(demo, "__file__", str(tmp_path / "pinlib" / "cli" / "commands" / "demo.py"))
    code, _, err = run(capsys, "demo", str(tmp_path / "out"))
    assert code == 2
    assert "the demo files are not part of this installation of pinlib" in err
    assert not (tmp_path / "out").exists()


def test_help_has_an_example(capsys):
    with pytest.raises(SystemExit) as info:
        main(["demo", "--help"])
    assert info.value.code == 0
    out = capsys.readouterr().out
    assert "examples:" in out and "pinlib demo ~/boards/pinlib-demo" in out


def test_listed_in_the_commands(capsys):
    with pytest.raises(SystemExit):
        main(["--help"])
    assert "demo" in capsys.readouterr().out


def test_the_package_help_starts_a_python_user_off(tmp_path, monkeypatch, capsys):
    # help(pinlib) showed one line (no description): a user of the wheel learnt neither
    # the API's entry points nor the extra the widgets need; its example runs on the demo
    import textwrap

    import pinlib

    doc = pinlib.__doc__
    for name in ("check_file", "check_design", "load_design", "load_library",
                 "pinlib --help", "pip install 'pinlib[notebook]'"):
        assert name in doc, name
    block = doc.split("::\n\n", 1)[1].split("\n\n", 1)
    code = textwrap.dedent(block[0] + "\n\n" + block[1].split("\n\n", 1)[0])
    assert "check_file(" in code and "all_checks()" in code
    monkeypatch.chdir(tmp_path)
    assert main(["demo"]) == 0
    capsys.readouterr()
    exec(compile(code, "pinlib.__doc__", "exec"), {})
    out = capsys.readouterr().out
    assert out.splitlines()[0] in ("pass", "warn", "fail")
    assert "UM10204" in out  # the sources of the checks' limits


def test_the_demo_design_missing_says_pinlib_demo_copies_it(tmp_path, monkeypatch, capsys):
    # the README's tour and the commands' examples check workbooks/designs/demo-board.toml,
    # which only a checkout has: a user of the wheel got "file not found" alone
    monkeypatch.chdir(tmp_path)
    code, _out, err = run(capsys, "check", "workbooks/designs/demo-board.toml")
    assert code == 2 and "file not found" in err
    assert "pinlib demo" in err and "pinlib-demo/workbooks/designs/demo-board.toml" in err
    # another missing file is told nothing about the demo
    code, _out, err = run(capsys, "check", "board.toml")
    assert code == 2 and "file not found" in err and "pinlib demo" not in err
