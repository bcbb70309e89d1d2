"""The ``pinlib`` command: parses arguments, calls the layers below, prints.

Each subcommand lives in ``pinlib/cli/commands/<name>.py`` with two functions:
``add_parser(subparsers)`` and ``run(args) -> int`` (the exit code).  A
:class:`~pinlib.core.errors.PinlibError` anywhere below becomes one clear message on
standard error and exit code 2 — never a traceback.
"""

from __future__ import annotations

import argparse
import gc
import importlib
import re
import sys

from pinlib import __version__
from pinlib.cli.helptext import HelpLayout
from pinlib.cli.startup import one_blas_thread, one_catalogue_lookup
from pinlib.core import messages as M
from pinlib.core.errors import PinlibError

__all__ = ["main", "entry", "COMMANDS"]

#: Subcommand modules under pinlib.cli.commands, in the order --help lists them.
COMMANDS = ["check", "report", "swap", "candidates", "measured", "parts", "new", "schema",
            "demo", "workbench"]

#: The line ``pinlib --help`` shows for each command (its module passes it as ``help``):
#: the program's own help lists every command without importing their modules.
SUMMARIES = {
    "check": "evaluate a design's buses (pull-ups, levels, timing)",
    "report": "write a design-review report (HTML with charts, or Markdown)",
    "swap": "rerun a design with parts substituted and show what changes",
    "candidates": "rank the library parts that could stand in a position",
    "measured": "compare a rise time measured on the board with the model's bus capacitance",
    "parts": "list, show, create, record into, import from IBIS and check library parts",
    "new": "write a starter design file from a list of parts",
    "schema": "print the JSON Schema of design files or part files",
    "demo": "copy the demo design and the workbooks into a folder",
    "workbench": "serve the workbooks as a web page without code (Voila, on 127.0.0.1)",
}

EPILOG = """\
examples:
  pinlib demo          # the demo design and the workbooks, into ./pinlib-demo
  pinlib check pinlib-demo/workbooks/designs/demo-board.toml
  pinlib parts list --function i2c-sda
  pinlib parts show eeprom-i2c

Results are estimates for design review: confirm them by measurement or simulation on
the real board. Standards, local codes and licensed practice prevail.
"""


#: A negative value: a minus and a digit, or a minus, a point and a digit.
_NEGATIVE_VALUE = re.compile(r"^-\.?\d")


#: The namespace attribute naming the parser that left words unread (:class:`_Parser`).
_LEFT_BY = "_pinlib_left_by"


class _Parser(argparse.ArgumentParser):
    """argparse's parser, its usage errors wrapped to a terminal as pinlib's own.

    An argument that starts with a minus and a digit ("-5ns", "-10,90", "-.5 V") is a
    value, never an option: argparse takes only a bare number ("-5") for one, so
    ``--rise -5ns`` gave "expected one argument" where ``--rise=-5ns`` reaches pinlib's
    own error.  No pinlib option is spelt with a digit, so every option's value and
    every positional (``parts record ID FIELD -3pF``) reads a negative quantity the
    same way (argparse reads the pattern from this attribute; tests/test_cli_parser.py
    holds the two spellings to one outcome).
    """

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        self._negative_number_matcher = _NEGATIVE_VALUE

    def parse_known_args(self, args=None, namespace=None):
        # the words this parser reads, for error(): a subcommand's parser gets its own
        self._given = list(sys.argv[1:] if args is None else args)
        parsed, extras = super().parse_known_args(args, namespace)
        # the innermost parser left words unread first: its usage and options are the
        # ones an unknown word is answered with (argparse answered with the program's)
        if extras and getattr(parsed, _LEFT_BY, None) is None:
            setattr(parsed, _LEFT_BY, self)
        return parsed, extras

    def parse_args(self, args=None, namespace=None):
        parsed, extras = self.parse_known_args(args, namespace)
        if extras:
            leaf = getattr(parsed, _LEFT_BY, None) or self
            leaf.error(argparse._("unrecognized arguments: %s") % " ".join(extras))
        if hasattr(parsed, _LEFT_BY):
            delattr(parsed, _LEFT_BY)
        return parsed

    def _suggestions(self, unknown: list[str]) -> list[str]:
        """"did you mean '--md'?" for each unknown option close to one of this parser's
        own (``--markdown``, ``--jsn``)."""
        from pinlib.core import messages as M
        from pinlib.core.nearby import closest

        options = [k for k in self._option_string_actions if k.startswith("--")]
        out = []
        for arg in unknown:
            near = closest(arg.split("=", 1)[0], options, n=1, cutoff=0.5)
            if near:
                out.append(M.DID_YOU_MEAN.format(name=near[0]))
        return out

    def _unknown_options(self) -> list[str]:
        """The words given to this parser that look like options it does not know
        (``--markdown`` where it knows ``--md``); a value after an option that takes one
        and every word after ``--`` are not options."""
        known = self._option_string_actions
        out, skip = [], False
        for arg in getattr(self, "_given", ()):
            if skip:
                skip = False
                continue
            if arg == "--":
                break
            if not arg.startswith("-") or arg == "-" or self._negative_number_matcher.match(arg):
                continue
            name = arg.split("=", 1)[0]
            hits = [a for k, a in known.items()
                    if k == name or (self.allow_abbrev and name.startswith("--")
                                     and k.startswith(name))]
            if not hits:
                out.append(arg)
            elif "=" not in arg and hits[0].nargs != 0:
                skip = True
        return out

    def error(self, message: str):
        from pinlib.present.terminal import fitted

        # argparse reports a missing required argument before an option it does not
        # know, so "report DESIGN --markdown FILE" said only that --html or --md is
        # required: the word it did not know comes first
        required = (argparse._("the following arguments are required: %s").split("%s")[0],
                    argparse._("one of the arguments %s is required").split("%s")[0])
        unrecognized = argparse._("unrecognized arguments: %s").split("%s")[0]
        unknown = self._unknown_options() if message.startswith(required) else []
        if unknown:
            message = (argparse._("unrecognized arguments: %s") % " ".join(unknown)
                       + f"; {message}")
        elif message.startswith(unrecognized):
            unknown = self._unknown_options()
        message = "; ".join([message, *self._suggestions(unknown)])
        self.print_usage(sys.stderr)
        self.exit(2, fitted(f"{self.prog}: error: {message}", sys.stderr) + "\n")


def build_parser(only: str | None = None) -> argparse.ArgumentParser:
    """The program's parser: every command's own arguments, or with ``only`` (a command's
    name) that command's alone, the others standing as their name and :data:`SUMMARIES`
    line (all that ``pinlib --help`` and an unknown command's error show of them), so that
    a command imports no other command's module."""
    parser = _Parser(
        prog="pinlib",
        description="Pin characteristics library and bus budgets for I2C, SMBus, SPI and GPIO.",
        epilog=EPILOG,
        formatter_class=HelpLayout,
    )
    parser.add_argument("--version", action="version", version=f"pinlib {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    for name in COMMANDS:
        if only is not None and name != only:
            sub.add_parser(name, help=SUMMARIES[name], formatter_class=HelpLayout)
            continue
        try:
            module = importlib.import_module(f"pinlib.cli.commands.{name}")
        except ModuleNotFoundError as exc:
            if exc.name != f"pinlib.cli.commands.{name}":
                raise
            continue  # a command not built yet
        module.add_parser(sub)
    return parser


def entry() -> int:
    """The ``pinlib`` program (``python -m pinlib`` and the installed script): :func:`main`,
    for a process that ends when it returns.

    The cyclic garbage collector is off for the command (:func:`gc.disable`): while
    numpy, the library and the engines load, its collections walk the many
    objects they make, which all live until the process ends (about a tenth of a
    ``pinlib check``'s start-up), and a command's own work makes little cyclic garbage
    (measured: the same peak memory for ``check --monte-carlo 20000 --corners`` and
    ``candidates``, 3 % more for ``report --html`` with its charts).  Memory is still
    freed by reference counting as before; the workbench's server is a process of its
    own.  Before the interpreter ends, the objects left are moved out of the
    collector's sight (:func:`gc.freeze`): its last collection would walk every object
    of numpy and the library (tens of ms) to free memory the ending process
    gives back anyway.  The atexit handlers (the fit store) and the flushing of standard
    output run as before; pinlib's own files are closed by then.  Callers of
    :func:`main` in a process that goes on are untouched.

    numpy's BLAS runs on one thread in this process (why, and how a user chooses
    otherwise: :func:`pinlib.cli.startup.one_blas_thread`), and argparse's texts are
    translated through one lookup of their catalogue
    (:func:`pinlib.cli.startup.one_catalogue_lookup`).
    """
    one_blas_thread()
    one_catalogue_lookup()
    gc.disable()
    code = main()
    gc.freeze()
    return code


def main(argv: list[str] | None = None) -> int:
    """Run one command; Ctrl-C at any point (imports, argument parsing, long work) ends it
    with one line on standard error and exit code 130 (128 + SIGINT), never a traceback.
    That holds too where a library turns the interrupt into another error (numpy's
    ``np.unique(..., axis=0)`` reports a TypeError when it lands in its comparison): an
    error after Ctrl-C is the interrupt's."""
    watch = _InterruptWatch()
    streams = _visible_streams()
    try:
        return _main(argv)
    except KeyboardInterrupt:
        return _interrupted()
    except Exception:
        if watch.seen:
            return _interrupted()
        raise
    finally:
        watch.close()
        sys.stdout, sys.stderr = streams


def _visible_streams() -> tuple:
    """Standard output and error made to show every character that would act on a
    terminal (:mod:`pinlib.present.visible`: an escape code in a design's title, a
    carriage return in a note); the streams before, to be put back."""
    from pinlib.present.visible import VisibleStream

    before = sys.stdout, sys.stderr
    if sys.stdout is not None and not isinstance(sys.stdout, VisibleStream):
        sys.stdout = VisibleStream(sys.stdout)
    if sys.stderr is not None and not isinstance(sys.stderr, VisibleStream):
        sys.stderr = VisibleStream(sys.stderr, keep_cr=True)  # progress bars redraw
    return before


class _InterruptWatch:
    """Notes that SIGINT arrived, then raises KeyboardInterrupt as Python's own handler
    does; only where that handler is in place (the main thread of a process that has
    not set its own), and put back by :meth:`close`."""

    def __init__(self) -> None:
        import signal

        self.seen = False
        self._signal = signal
        self._installed = False
        if signal.getsignal(signal.SIGINT) is signal.default_int_handler:
            try:
                signal.signal(signal.SIGINT, self._note)
                self._installed = True
            except ValueError:  # not the main thread: leave the handler alone
                pass

    def _note(self, signum, frame):
        self.seen = True
        raise KeyboardInterrupt

    def close(self) -> None:
        if self._installed:
            self._signal.signal(self._signal.SIGINT, self._signal.default_int_handler)


def _interrupted() -> int:
    """One line on standard error; on a terminal it starts on a line of its own (the
    terminal has echoed ^C, or a progress bar stood there), in a file or a pipe it is the
    only line, with no blank one before it."""
    from pinlib.core import messages as M

    try:
        try:
            fresh = "\n" if sys.stderr.isatty() else ""
        except (AttributeError, ValueError):
            fresh = ""
        print(f"{fresh}pinlib: {M.INTERRUPTED}", file=sys.stderr)
    except (OSError, ValueError):
        pass
    return 130


def chosen_command(argv: list[str]) -> str | None:
    """The command named in ``argv`` (its first word not an option; the program's own
    options, ``--help`` and ``--version``, take no value), or None when it names none of
    :data:`COMMANDS`."""
    word = next((a for a in argv if not a.startswith("-")), None)
    return word if word in SUMMARIES else None


def _main(argv: list[str] | None) -> int:
    words = sys.argv[1:] if argv is None else argv
    parser = build_parser(chosen_command(words) or "")
    args = parser.parse_args(argv)
    if not getattr(args, "run", None):
        parser.print_help()
        return 2
    from pinlib.engines import fitstore

    fitstore.install()  # driver fits kept between runs (PINLIB_CACHE_DIR=off: not)
    try:
        return int(args.run(args) or 0)
    except PinlibError as err:
        _print_error(err)
        return 2
    except KeyboardInterrupt:
        return _interrupted()
    except BrokenPipeError:
        return 0


#: How many of an error's further problems (:attr:`PinlibError.also`) are listed.
ALSO_SHOWN = 9


def _print_error(err: PinlibError) -> None:
    """The error, then the further problems found with it (at most :data:`ALSO_SHOWN`),
    each wrapped to a terminal (its first line keeps ``file:line, field``; output to a
    file or a pipe keeps each whole, one line a problem)."""
    from pinlib.core.labels import counted
    from pinlib.present.terminal import fitted

    lines = [f"pinlib: error: {err.message}"]
    lines += [f"pinlib: also: {other.message}" for other in err.also[:ALSO_SHOWN]]
    if len(err.also) > ALSO_SHOWN:
        lines.append(counted(M.FURTHER_PROBLEMS, len(err.also) - ALSO_SHOWN))
    for line in lines:
        print(fitted(line, sys.stderr), file=sys.stderr)


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
