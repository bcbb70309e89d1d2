"""``pinlib demo [FOLDER]``: copy the demo design and the workbooks into a folder.

A user who installed pinlib with pip has no checkout, so neither the demo design nor
the workbooks.  The wheel carries them as package data (``pinlib/workbooks/``, built
from the repository's top-level ``workbooks/`` folder, see ``setup.py``); in a checkout
they are read from ``workbooks/`` itself.  The copy keeps the repository's layout
(``FOLDER/workbooks/designs/demo-board.toml``), so the paths the workbooks and the
design's comments use work from ``FOLDER`` as they do from the repository's root.
"""

from __future__ import annotations

from pathlib import Path

from pinlib.cli import SUMMARIES
from pinlib.cli.helptext import HelpLayout
from pinlib.core import messages as M
from pinlib.core.errors import InputError, WriteError
from pinlib.present.terminal import fitted_command, shell_word

__all__ = ["add_parser", "run", "source_folder", "demo_files", "DEFAULT_FOLDER"]

DEFAULT_FOLDER = "pinlib-demo"
DEMO_DESIGN = "designs/demo-board.toml"
#: The files of the demo, relative to the workbooks folder.  setup.py ships the same
#: patterns (tests/test_install.py holds the two together).
PATTERNS = ("*.ipynb", "designs/*.toml")

EXAMPLES = """\
examples:
  pinlib demo                        # into ./pinlib-demo
  pinlib demo ~/boards/pinlib-demo   # a folder of your choice
  pinlib demo pinlib-demo --force    # overwrite the files of an earlier copy

The folder gets workbooks/ with the Jupyter workbooks and workbooks/designs/ with the
demo design, an invented scenario built from the built-in library's generic part
classes.  Files already in the folder are never overwritten without --force: the
command lists them and copies nothing.  The workbooks need the notebook extra
(pip install 'pinlib[notebook]'); the check and the report do not.

exit status: 0 copied, 2 the folder already holds demo files (without --force) or
cannot be written.
"""


def add_parser(sub) -> None:
    p = sub.add_parser(
        "demo",
        help=SUMMARIES["demo"],
        description="Copy the demo design (an invented scenario) and the Jupyter workbooks "
                    "into a folder, then print the commands to try them.",
        epilog=EXAMPLES,
        formatter_class=HelpLayout,
    )
    p.add_argument("folder", metavar="FOLDER", nargs="?", default=DEFAULT_FOLDER,
                   help=f"where to copy them (default: ./{DEFAULT_FOLDER}; made if missing)")
    p.add_argument("--force", action="store_true",
                   help="overwrite demo files that are already in the folder")
    p.set_defaults(run=run)


def source_folder() -> Path:
    """The folder the demo is copied from: the installed package's, else the checkout's."""
    package = Path(__file__).resolve().parents[2]
    for folder in (package / "workbooks", package.parent / "workbooks"):
        if (folder / DEMO_DESIGN).is_file():
            return folder
    raise InputError(M.DEMO_FILES_MISSING, file=str(package / "workbooks"),
                     expected=f"{DEMO_DESIGN} and the workbooks beside the package")


def demo_files(source: Path) -> list[Path]:
    """The demo's files under ``source``, as paths relative to it, in a stable order."""
    found = {p.relative_to(source) for pattern in PATTERNS for p in source.glob(pattern)
             if p.is_file()}
    return sorted(found, key=lambda p: (len(p.parts), str(p)))


def run(args) -> int:
    from pinlib.core import extras
    from pinlib.core.tomlfile import atomic_write

    source = source_folder()
    folder = Path(args.folder)
    target = folder / "workbooks"
    files = demo_files(source)
    present = [target / f for f in files if (target / f).exists()]
    if present and not args.force:
        names = [str(p.relative_to(target)) for p in present]
        shown = ", ".join(names[:3]) + (", ..." if len(names) > 3 else "")
        raise InputError(M.DEMO_WOULD_OVERWRITE.format(n=len(names), names=shown),
                         file=str(target), hint=M.DEMO_FORCE_HINT)
    for rel in files:
        dest = target / rel
        try:
            dest.parent.mkdir(parents=True, exist_ok=True)
        except OSError as exc:
            raise WriteError(M.CANNOT_WRITE_IN_FOLDER.format(reason=exc.strerror),
                             file=str(dest.parent)) from None
        # bytes decoded as they are: line endings and the notebooks' JSON kept exactly
        atomic_write(dest, (source / rel).read_bytes().decode("utf-8"))

    design = shell_word(str(target / DEMO_DESIGN))
    print(f"Copied the demo into {folder}: {len(files)} files.")
    print("(An invented scenario built from generic part classes.)")
    for rel in files:
        print(f"  {target / rel}")
    print("\nNext:")
    for words in (["pinlib", "check", design],
                  ["pinlib", "report", design, "--html", shell_word(str(folder / "review.html"))],
                  ["jupyter", "lab", shell_word(str(target))]):
        # continued with " \\" where it passes the terminal's width, pasting whole
        print(fitted_command(" ", words))
    if not extras.installed("notebook"):
        print("  (the workbooks need the notebook extra: pip install 'pinlib[notebook]')")
    return 0
