"""The help pages as a person reads them: every line fits the terminal (80 columns
when the output is not one), prose filled to the width, examples kept as written."""

from __future__ import annotations

import argparse
from pathlib import Path

import pytest

from pinlib.cli import build_parser
from pinlib.cli.helptext import layout


def _pages(parser, words=("pinlib",)):
    """(command words, parser) for the command and every subcommand below it."""
    yield words, parser
    for action in parser._actions:
        if isinstance(action, argparse._SubParsersAction):
            for name, sub in action.choices.items():
                yield from _pages(sub, words + (name,))


# common practice, no source: the 80-column terminal, and one wider
@pytest.mark.parametrize("columns", [80, 100])
def test_every_help_page_fits_the_terminal(monkeypatch, columns):
    monkeypatch.setenv("COLUMNS", str(columns))
    pages = list(_pages(build_parser()))
    # derived from the parser: pinlib, its 10 commands and the 8 parts actions
    assert len(pages) > 15
    long = [f"{' '.join(w)}: {ln!r}" for w, p in pages for ln in p.format_help().splitlines()
            if len(ln) > columns]
    assert not long, long


def test_prose_follows_the_width(monkeypatch):
    """A wider terminal gets longer lines of prose (argparse leaves two columns)."""
    def widest(columns):
        monkeypatch.setenv("COLUMNS", str(columns))
        return max(len(ln) for _, p in _pages(build_parser())
                   for ln in p.format_help().splitlines())

    assert widest(80) <= 80 < widest(120) <= 120


def test_layout_fills_prose_and_keeps_indented_lines():
    text = ("examples:\n"
            "  pinlib check board.toml --detail     # kept as written, however long it is\n"
            "\n"
            "First sentence of a paragraph written\n"
            "over short lines. Second sentence.\n"
            "\n"
            "exit status: 0 pass.\n")
    out = layout(text, 40)
    assert out[:3] == ["examples:",
                       "  pinlib check board.toml --detail     # kept as written, however "
                       "long it is", ""]
    assert out[3:] == ["First sentence of a paragraph written", "over short lines. Second "
                       "sentence.", "", "exit status: 0 pass."]
    # the words are the same words, in the same order
    assert " ".join(" ".join(out).split()) == " ".join(text.split())
    assert all(len(ln) <= 40 for ln in out[3:])


@pytest.mark.parametrize("env_columns", [None, "100", "0", "x"])
def test_help_width_is_argparse_own(monkeypatch, env_columns):
    """HelpLayout takes argparse's default width (the terminal's columns less two)
    without argparse's shutil: the same number for every COLUMNS."""
    from pinlib.cli.helptext import HelpLayout

    if env_columns is None:
        monkeypatch.delenv("COLUMNS", raising=False)
    else:
        monkeypatch.setenv("COLUMNS", env_columns)
    ours, theirs = HelpLayout("pinlib"), argparse.HelpFormatter("pinlib")
    assert (ours._width, ours._max_help_position) == (theirs._width,
                                                      theirs._max_help_position)


def test_the_program_help_examples_run_in_an_empty_folder(tmp_path, monkeypatch, capsys):
    # a user who installed the wheel and types the examples of `pinlib --help` in a
    # folder of their own: the first one checked workbooks/designs/demo-board.toml,
    # which only a checkout has ("file not found"); `pinlib demo` makes the copy first
    import shlex

    from pinlib.cli import EPILOG, main

    monkeypatch.chdir(tmp_path)
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    lines = EPILOG.split("\n\n")[0].splitlines()
    assert lines[0] == "examples:"
    for line in lines[1:]:
        argv = shlex.split(line, comments=True)
        assert argv[0] == "pinlib"
        code = main(argv[1:])
        assert code in (0, 1), (line, capsys.readouterr().err)


def test_the_version_is_written_once():
    # pyproject.toml and pinlib/__init__.py each wrote "0.1.0": `pinlib --version` (and
    # the reports and snapshots) would go on saying the old one when only the package
    # metadata was raised; the build now reads pinlib.__version__
    from pinlib import __version__
    from pinlib.core.tomlfile import tomllib

    root = Path(__file__).resolve().parents[1]
    meta = tomllib.loads((root / "pyproject.toml").read_text(encoding="utf-8"))
    assert "version" not in meta["project"]
    assert "version" in meta["project"]["dynamic"]
    assert meta["tool"]["setuptools"]["dynamic"]["version"] == {"attr": "pinlib.__version__"}
    assert __version__.count(".") >= 2  # a release number, not the attribute's name


def test_no_help_page_names_the_checkout_s_demo_path():
    # the examples of check, report, swap and candidates used workbooks/designs/, a path
    # only a checkout has; `pinlib demo` makes pinlib-demo/workbooks/designs/ anywhere
    import re

    def pages(parser):
        yield parser.prog, parser.format_help()
        for action in parser._actions:
            if isinstance(action, argparse._SubParsersAction):
                for sub in action.choices.values():
                    yield from pages(sub)

    bare = {prog: ln for prog, text in pages(build_parser()) for ln in text.splitlines()
            if ln.startswith("  pinlib ")
            and re.search(r"(?<!pinlib-demo/)workbooks/designs/", ln)}
    assert not bare, sorted(bare)


def test_a_help_page_s_description_keeps_the_case_of_its_summary():
    # 'pinlib parts --help' read "... import from ibis and check library parts": its
    # summary capitalized with str.capitalize, which lowers every other letter
    from pinlib.cli import SUMMARIES

    told = []
    for words, parser in _pages(build_parser()):
        summary = SUMMARIES.get(words[-1]) if len(words) == 2 else None
        first = " ".join((parser.description or "").split())
        if summary and first.lower().startswith(summary.lower()):  # the summary, as told
            told.append(words)
            assert first.startswith(summary[:1].upper() + summary[1:]), (words, first)
    assert ("pinlib", "parts") in told


def test_corners_is_described_as_what_it_adds(monkeypatch, capsys):
    # an audit: the help, docs/cli.md and the README said --corners would "also find each
    # check's worst corner", but a plain check already takes every check at its worst
    # corner ("checks at their worst corner: all 32 corners of 5 parameters"); --corners
    # adds a list of the worst checks with the tolerances that set each corner
    monkeypatch.setenv("COLUMNS", "80")
    check = dict(_pages(build_parser()))[("pinlib", "check")]
    helped = " ".join(check.format_help().split())
    root = Path(__file__).resolve().parents[1]
    pages = [" ".join((root / name).read_text(encoding="utf-8").split())
             for name in ("docs/cli.md", "README.md")]
    for text in [helped, *pages]:
        assert "find each check's worst corner" not in text
        assert "finds each check's worst corner" not in text
        assert "already taken at its worst corner" in text
    assert ("also list the checks at their worst corner of the tolerances (every check is "
            "taken there without it), the worst first, each with the parameters and ends "
            "that set its corner") in helped
    # what the help says: the plain result's statuses are those at the worst corners
    from pinlib.cli import main

    demo = root / "workbooks" / "designs" / "demo-board.toml"
    assert main(["check", str(demo), "--corners", "--json"]) in (0, 1)
    import json

    got = json.loads(capsys.readouterr().out)
    rows = got["corners"]["checks"]
    assert rows and all(r["status"] == r["worst_case_status"] for r in rows)


def test_swap_usage_names_both_forms_as_the_reference_page_does(monkeypatch):
    # the usage read "DESIGN [REF=PART ...]" (no substitution needed) where docs/cli.md
    # reads "DESIGN REF=PART [REF=PART ...]", and never showed the --part form
    import re

    monkeypatch.setenv("COLUMNS", "80")
    parser = build_parser("swap")
    sub = next(a for a in parser._actions if isinstance(a, argparse._SubParsersAction))
    usage = " ".join(sub.choices["swap"].format_usage().split()).removeprefix("usage: ")
    forms = usage.replace(" pinlib swap", "\npinlib swap").splitlines()
    assert forms == [
        "pinlib swap [-h] [--write] [--json] [--library DIR] [--threshold PCT] [--detail] "
        "DESIGN REF=PART [REF=PART ...]",
        "pinlib swap [-h] [--write] [--json] [--library DIR] [--threshold PCT] "
        "--part OLD=NEW DESIGN [DESIGN ...]"]
    page = (Path(__file__).parents[1] / "docs" / "cli.md").read_text(encoding="utf-8")
    block = re.search(r"## `pinlib swap`\n\n```\n(.*?)```", page, re.S).group(1)
    assert " ".join(block.split()).replace(" pinlib swap", "\npinlib swap").splitlines() \
        == forms
