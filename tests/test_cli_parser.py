"""The program's parser built for one command (what ``pinlib <command>`` builds) against
the parser of every command: the same help, the same errors, no other command's module."""

from __future__ import annotations

import argparse
import subprocess
import sys
from pathlib import Path

import pytest

from pinlib.cli import COMMANDS, SUMMARIES, build_parser, chosen_command

ROOT = Path(__file__).resolve().parents[1]


def _help(parser: argparse.ArgumentParser) -> str:
    return parser.format_help()


def _commands(parser: argparse.ArgumentParser) -> dict[str, argparse.ArgumentParser]:
    (sub,) = [a for a in parser._actions if isinstance(a, argparse._SubParsersAction)]
    return dict(sub.choices)


def test_summaries_are_what_the_commands_register():
    full = build_parser()
    (sub,) = [a for a in full._actions if isinstance(a, argparse._SubParsersAction)]
    registered = {action.dest: action.help for action in sub._choices_actions}
    assert registered == SUMMARIES
    assert list(SUMMARIES) == COMMANDS


@pytest.mark.parametrize("only", [*COMMANDS, ""])
def test_the_program_help_is_the_same_whatever_command_is_built(only, monkeypatch):
    monkeypatch.setenv("COLUMNS", "100")
    assert _help(build_parser(only)) == _help(build_parser())


@pytest.mark.parametrize("name", COMMANDS)
def test_the_command_built_alone_is_the_full_one(name, monkeypatch):
    monkeypatch.setenv("COLUMNS", "100")
    assert _help(_commands(build_parser(name))[name]) == _help(_commands(build_parser())[name])


@pytest.mark.parametrize(("argv", "expected"), [
    (["check", "x.toml"], "check"),
    (["--help"], None),
    (["--version"], None),
    ([], None),
    (["chek"], None),
    (["-q", "parts", "list"], "parts"),
    (["--help", "swap"], "swap"),
])
def test_chosen_command(argv, expected):
    assert chosen_command(argv) == expected


def test_a_command_imports_no_other_command():
    code = ("import sys\n"
            "from pinlib.cli import build_parser, chosen_command\n"
            "build_parser(chosen_command(['check', 'x.toml']))\n"
            "print(sorted(m for m in sys.modules if m.startswith('pinlib.cli.commands.')))\n")
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          cwd=ROOT, timeout=60, check=True)
    assert proc.stdout.strip() == "['pinlib.cli.commands.check']"


def _outcome(argv, capsys):
    from pinlib.cli import main

    try:
        code = main(argv)
    except SystemExit as exc:
        code = exc.code
    captured = capsys.readouterr()
    return code, captured.out, captured.err


DESIGN = str(ROOT / "tests" / "data" / "spi-route.toml")


@pytest.mark.parametrize(("before", "option", "value", "after"), [
    (["measured", DESIGN, "--bus", "b", "--probe", "10pF"], "--rise", "-5ns", []),
    (["measured", DESIGN, "--bus", "b", "--rise", "5ns"], "--probe", "-1pF", []),
    (["measured", DESIGN, "--bus", "b", "--rise", "5ns", "--probe", "1pF"], "--levels",
     "-10,90", []),
    (["check", DESIGN], "--threshold", "-5%", []),
    (["report", DESIGN, "--md", "x.md"], "--threshold", "-5%", []),
    (["swap", DESIGN, "--part", "U1=U2"], "--threshold", "-5%", []),
    (["check", DESIGN], "--seed", "-5", []),
    (["check", DESIGN], "--monte-carlo", "-5", []),
    (["parts", "list"], "--supply", "-3.3V", []),
    (["parts", "record", "t-target", "pins.sda.c_in", "3pF", "--source", "x"], "--typ",
     "-3pF", ["--library", "/nonexistent-folder"]),
])
def test_a_negative_quantity_reaches_the_option_as_with_equals(before, option, value, after,
                                                               capsys):
    # "--rise -5ns" was taken by argparse as an option ("expected one argument"); it
    # now reaches the option as "--rise=-5ns" does, and pinlib's own error
    split = _outcome([*before, option, value, *after], capsys)
    joined = _outcome([*before, f"{option}={value}", *after], capsys)
    assert "expected one argument" not in split[2]
    assert split == joined


def test_a_negative_value_reaches_a_positional():
    args = build_parser().parse_args(["parts", "record", "p", "pins.sda.c_in", "-3pF",
                                      "--source", "x"])
    assert args.value == "-3pF"


@pytest.mark.parametrize("argv, unknown", [
    # the Markdown report spelt out: argparse said only that --html or --md is required
    (["report", "board.toml", "--markdown", "review.md"], "--markdown"),
    (["report", "board.toml", "--pdf=review.pdf"], "--pdf=review.pdf"),
    # a required positional missing beside an unknown option
    (["candidates", "--best"], "--best"),
])
def test_an_unknown_option_is_named_before_a_missing_required_argument(argv, unknown,
                                                                       capsys):
    with pytest.raises(SystemExit) as exit_:
        build_parser().parse_args(argv)
    assert exit_.value.code == 2
    err = capsys.readouterr().err
    assert f"error: unrecognized arguments: {unknown}; " in " ".join(err.split())
    assert "required" in err  # what is missing is still said


@pytest.mark.parametrize("argv, usage, said", [
    # invented test design: every required argument given and one option misspelt: the
    # program's usage ("usage: pinlib [-h] [--version] COMMAND ...") stood over it
    (["report", "board.toml", "--html", "x.html", "--markdown", "x.md"], "pinlib report",
     "unrecognized arguments: --markdown x.md; did you mean '--md'?"),
    (["check", "board.toml", "--jsn"], "pinlib check",
     "unrecognized arguments: --jsn; did you mean '--json'?"),
    (["parts", "list", "--categry", "memory"], "pinlib parts list",
     "unrecognized arguments: --categry memory; did you mean '--category'?"),
    (["report", "board.toml", "--markdown", "review.md"], "pinlib report",
     "is required; did you mean '--md'?"),
    # nothing close: no guess
    (["check", "board.toml", "--zzzzzz"], "pinlib check", "unrecognized arguments: --zzzzzz"),
    (["--bogus"], "pinlib", "unrecognized arguments: --bogus"),
])
def test_an_unknown_option_is_answered_with_its_command_s_usage(argv, usage, said, capsys,
                                                                monkeypatch):
    monkeypatch.setenv("COLUMNS", "80")
    for parser in (build_parser(), build_parser(chosen_command(argv) or "")):
        with pytest.raises(SystemExit) as exit_:
            parser.parse_args(argv)
        assert exit_.value.code == 2
        err = capsys.readouterr().err
        lines = err.splitlines()
        assert lines[0].startswith(f"usage: {usage} ") and all(len(x) <= 80 for x in lines)
        assert f"{usage}: error: " in err and said in " ".join(err.split())
        if "zzz" in said or "bogus" in said:
            assert "did you mean" not in err


def test_a_value_or_a_known_option_is_not_called_unknown(capsys):
    # an option's value that starts with a minus, an abbreviation, a negative quantity
    with pytest.raises(SystemExit):
        build_parser().parse_args(["report", "board.toml", "--thresh", "5 %", "--seed", "-3"])
    err = capsys.readouterr().err
    assert "unrecognized" not in err and "one of the arguments --html --md" in err


@pytest.mark.parametrize("text, levels", [
    ("30,70", (0.30, 0.70)), ("0.3,0.7", (0.3, 0.7)), ("10,90", (0.10, 0.90)),
    ("0,70", (0.0, 0.70)), ("0.5%,70%", (0.005, 0.70)), ("30%,70", (0.30, 0.70)),
])
def test_measuring_levels_read_as_percent_or_fractions(text, levels):
    from pinlib.cli.commands.measured import levels_type

    assert levels_type(text) == pytest.approx(levels, rel=1e-12)


@pytest.mark.parametrize("text", ["0.3,70", "0.1,90"])
def test_measuring_levels_refuse_a_fraction_beside_a_percentage(text):
    # "--levels 0.3,70" read as 0.3 % to 70 % (percent once a number exceeds 1) and the
    # answer showed "(0%-70%)": one number as a fraction and one in % is a slip; the
    # refusal says how to write each form ("%" written out reads as percent)
    from pinlib.cli.commands.measured import levels_type

    with pytest.raises(argparse.ArgumentTypeError) as got:
        levels_type(text)
    msg = str(got.value)
    assert f"(got {text!r})" in msg and "30,70" in msg and "0.3,0.7" in msg
