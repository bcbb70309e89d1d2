"""An installed wheel, as a user who runs ``pip install pinlib`` meets it.

The wheel is built from a copy of the working tree (so a stale ``build/`` folder of the
checkout cannot leak into it) and installed with its core dependencies only into a
fresh venv in a temporary folder outside the checkout, without the system's site
packages; pip reaches the package index this machine is configured for.  The commands
then run from another temporary folder: nothing of the checkout is on their path.

Building the venv takes most of this module's time (about 25 s with pip's cache warm),
so one venv serves every test here (a module-scoped fixture).
"""

from __future__ import annotations

import json
import os
import shutil
import subprocess
import sys
import zipfile
from collections.abc import Iterator
from dataclasses import dataclass
from pathlib import Path

import pytest

from pinlib.cli import COMMANDS
from pinlib.cli.commands import demo
from pinlib.core.tomlfile import tomllib

pytestmark = pytest.mark.install

ROOT = Path(__file__).resolve().parents[1]
# what the copy of the working tree leaves out: version control, environments, build
# output and caches (none of it goes into a wheel)
NOT_COPIED = shutil.ignore_patterns(".git", ".venv", "venv", "build", "dist", "out",
                                    "*.egg-info", "__pycache__", ".pytest_cache",
                                    ".hypothesis", ".ruff_cache", ".ipynb_checkpoints",
                                    "pinlib-demo", "node_modules")


@dataclass
class Installed:
    wheel: Path
    venv: Path
    work: Path          # the working folder of the commands (outside the checkout)
    env: dict

    @property
    def bin(self) -> Path:
        return self.venv / "bin"

    def run(self, *argv: str, timeout: float = 300) -> subprocess.CompletedProcess:
        return subprocess.run([str(a) for a in argv], cwd=self.work, env=self.env,
                              capture_output=True, text=True, timeout=timeout)

    def pinlib(self, *argv: str, timeout: float = 300) -> subprocess.CompletedProcess:
        return self.run(self.bin / "pinlib", *argv, timeout=timeout)

    def python(self, code: str) -> subprocess.CompletedProcess:
        return self.run(self.bin / "python", "-c", code)


def _clean_env(base: Path) -> dict:
    """The machine's environment (its pip index settings included) without anything that
    would point Python or pinlib at the checkout."""
    env = {k: v for k, v in os.environ.items()
           if not k.startswith(("PINLIB_", "PYTHON", "VIRTUAL_ENV", "COVERAGE_"))}
    env["PINLIB_CACHE_DIR"] = str(base / "cache")  # a user's fit store, kept apart
    env["PIP_DISABLE_PIP_VERSION_CHECK"] = "1"
    return env


def _checked(proc: subprocess.CompletedProcess, what: str) -> subprocess.CompletedProcess:
    assert proc.returncode == 0, f"{what} failed:\n{proc.stdout[-3000:]}\n{proc.stderr[-3000:]}"
    return proc


@pytest.fixture(scope="module")
def installed(tmp_path_factory) -> Iterator[Installed]:
    base = tmp_path_factory.mktemp("install")
    assert not base.resolve().is_relative_to(ROOT)
    env = _clean_env(base)
    src = base / "src"
    shutil.copytree(ROOT, src, ignore=NOT_COPIED)
    wheels = base / "wheels"
    _checked(subprocess.run([sys.executable, "-m", "pip", "wheel", "-q", "--no-deps",
                             "-w", str(wheels), str(src)], env=env, capture_output=True,
                            text=True, timeout=600), "pip wheel")
    (wheel,) = wheels.glob("pinlib-*.whl")
    venv = base / "venv"
    # no pip inside the venv: this process's pip installs into it (--python), which
    # saves the few seconds of ensurepip; the venv sees no system site packages
    _checked(subprocess.run([sys.executable, "-m", "venv", "--without-pip", str(venv)],
                            env=env, capture_output=True, text=True, timeout=120), "venv")
    _checked(subprocess.run([sys.executable, "-m", "pip", "--python", str(venv / "bin" / "python"),
                             "install", "-q", str(wheel)], env=env, capture_output=True,
                            text=True, timeout=900), "pip install of the wheel")
    work = base / "work"
    work.mkdir()
    env["PATH"] = f"{venv / 'bin'}{os.pathsep}{env.get('PATH', '')}"
    yield Installed(wheel, venv, work, env)
    # about 300 MB: not left for pytest's kept temporary folders
    shutil.rmtree(venv, ignore_errors=True)
    shutil.rmtree(src, ignore_errors=True)


def _site_packages(inst: Installed) -> Path:
    out = _checked(inst.python("import sysconfig; print(sysconfig.get_paths()['purelib'])"),
                   "sysconfig").stdout
    return Path(out.strip())


def test_the_venv_is_fresh_and_has_the_core_dependencies_only(installed):
    cfg = (installed.venv / "pyvenv.cfg").read_text(encoding="utf-8")
    assert "include-system-site-packages = false" in cfg
    out = _checked(installed.python(
        "import importlib.util as u, pinlib, altair, vl_convert; "
        "print(pinlib.__file__); "
        "print([m for m in ('ipywidgets', 'jupyterlab', 'voila', 'pytest') if u.find_spec(m)])"),
        "import").stdout.splitlines()
    assert Path(out[0]).resolve().is_relative_to(_site_packages(installed).resolve())
    assert out[1] == "[]"  # nothing of the notebook or test extras


def test_the_wheel_carries_the_code_the_library_and_the_workbooks(installed):
    names = set(zipfile.ZipFile(installed.wheel).namelist())
    code = {p.relative_to(ROOT).as_posix() for p in (ROOT / "pinlib").rglob("*.py")}
    assert code <= names, sorted(code - names)  # a folder without __init__.py is left out
    parts = {p.relative_to(ROOT).as_posix() for p in (ROOT / "pinlib" / "devices").rglob("*.toml")}
    assert parts and parts <= names, sorted(parts - names)
    assert "pinlib/model/design.schema.json" in names  # printed by `pinlib schema design`
    # setup.py's package data and demo.PATTERNS name the same files
    shipped = {n.removeprefix("pinlib/workbooks/") for n in names
               if n.startswith("pinlib/workbooks/")}
    wanted = {p.as_posix() for p in demo.demo_files(ROOT / "workbooks")}
    assert shipped == wanted


def test_version_is_the_installed_metadata(installed):
    # `pinlib --version` reads pinlib.__version__; the wheel's metadata takes its
    # version from there (pyproject.toml: dynamic)
    shown = _checked(installed.pinlib("--version"), "pinlib --version").stdout.strip()
    meta = _checked(installed.python("from importlib.metadata import version; "
                                     "print(version('pinlib'))"), "metadata").stdout.strip()
    assert shown == f"pinlib {meta}"


def test_schema_design_prints_the_shipped_schema(installed):
    proc = _checked(installed.pinlib("schema", "design"), "pinlib schema design")
    assert json.loads(proc.stdout)["title"].startswith("pinlib design file")


def test_parts_list_finds_the_built_in_library_in_site_packages(installed):
    proc = _checked(installed.pinlib("parts", "list", "--json"), "pinlib parts list")
    listed = {p["id"]: p for p in json.loads(proc.stdout)}
    ids = {tomllib.loads(p.read_text(encoding="utf-8"))["id"]
           for p in (ROOT / "pinlib" / "devices").rglob("*.toml")}
    assert "eeprom-i2c" in listed and "mcu-3v3" in listed
    assert set(listed) == ids
    site = _site_packages(installed).resolve()
    assert all(Path(p["file"]).resolve().is_relative_to(site) and p["builtin"]
               for p in listed.values())


@pytest.fixture(scope="module")
def demo_copy(installed) -> Path:
    proc = _checked(installed.pinlib("demo", "my-demo"), "pinlib demo")
    assert "pinlib check my-demo/workbooks/designs/demo-board.toml" in proc.stdout
    # the notebook extra is not installed: the demo says what the workbooks need
    assert "pip install 'pinlib[notebook]'" in proc.stdout
    return installed.work / "my-demo"


def test_demo_copies_the_design_and_the_workbooks(installed, demo_copy):
    for rel in demo.demo_files(ROOT / "workbooks"):
        copied = demo_copy / "workbooks" / rel
        assert copied.read_bytes() == (ROOT / "workbooks" / rel).read_bytes(), rel
    again = installed.pinlib("demo", "my-demo")
    assert again.returncode == 2 and "--force" in again.stderr
    assert "Traceback" not in again.stderr


def test_check_and_report_run_on_the_demo(installed, demo_copy):
    design = demo_copy / "workbooks" / "designs" / "demo-board.toml"
    buses = [b["id"] for b in tomllib.loads(design.read_text(encoding="utf-8"))["bus"]]
    proc = installed.pinlib("check", design.relative_to(installed.work))
    assert proc.returncode in (0, 1), proc.stderr  # pass/warn or a failing check
    for bus in buses:
        assert f" {bus} (" in proc.stdout  # one line per bus: "PASS power (SMBus): ..."
    html = installed.work / "review.html"
    proc = installed.pinlib("report", design.relative_to(installed.work), "--html", "review.html")
    assert proc.returncode in (0, 1), proc.stderr
    text = html.read_text(encoding="utf-8")
    assert "<svg" in text
    assert all(bus in text for bus in buses)


def test_the_rest_of_the_tour_runs_from_the_wheel(installed, demo_copy):
    # what a new user tries after the demo: the Markdown report, a part, a starter
    # design, the candidates and a swap at a position, and the workbench without Voila
    design = str((demo_copy / "workbooks" / "designs" / "demo-board.toml")
                 .relative_to(installed.work))
    proc = installed.pinlib("report", design, "--md", "review.md")
    assert proc.returncode in (0, 1), proc.stderr
    assert (installed.work / "review-charts").is_dir()
    assert "eeprom-i2c" in _checked(installed.pinlib("parts", "show", "eeprom-i2c"),
                                    "parts show").stdout
    _checked(installed.pinlib("new", "board.toml", "--part", "U1=mcu-3v3", "--part",
                              "U2=eeprom-i2c", "--part", "U3=nor-flash-spi"), "pinlib new")
    assert "docs/" not in (installed.work / "board.toml").read_text(encoding="utf-8")
    assert installed.pinlib("check", "board.toml").returncode in (0, 1)
    assert "eeprom-i2c *" in _checked(installed.pinlib("candidates", design, "U4", "--top",
                                                       "20"), "candidates").stdout
    proc = installed.pinlib("swap", design, "U4=rtc-i2c")
    assert proc.returncode in (0, 1), proc.stderr
    assert "[builtin:" in proc.stdout and "site-packages" not in proc.stdout
    proc = installed.pinlib("workbench")  # in a folder without workbooks, too
    assert proc.returncode == 2 and "Traceback" not in proc.stderr
    assert "pip install 'pinlib[notebook]'" in proc.stderr
    doc = _checked(installed.python("import pinlib; help(pinlib)"), "help").stdout
    assert "check_file" in doc and "pip install 'pinlib[notebook]'" in doc


def test_every_command_answers_help_without_the_extras(installed):
    proc = _checked(installed.pinlib("--help"), "pinlib --help")
    for name in COMMANDS:
        assert name in proc.stdout
        sub = installed.pinlib(name, "--help")
        assert sub.returncode == 0 and "Traceback" not in sub.stderr, (name, sub.stderr)


def test_the_extra_is_named_when_a_feature_needs_it(installed):
    proc = installed.python("from pinlib.core import extras\n"
                            "extras.need('ipywidgets', extra='notebook', feature='the widgets')")
    last = proc.stderr.strip().splitlines()[-1]
    assert proc.returncode == 1
    assert last.startswith("pinlib.core.errors.MissingExtraError: "
                           "the widgets: the 'notebook' extra")
    assert last.endswith("pip install 'pinlib[notebook]'")


def test_the_widgets_without_the_notebook_extra_name_it(installed):
    proc = installed.python("import pinlib.widgets")
    last = proc.stderr.strip().splitlines()[-1]
    assert "MissingExtraError" in last and "pip install 'pinlib[notebook]'" in last


def test_the_editable_install_runs_the_demo_from_the_checkout(tmp_path):
    # the development install (`make demo`: pip install -e . in compat mode) reads the
    # workbooks and the library from the checkout, from any working folder
    venv_bin = Path(sys.executable).parent
    env = _clean_env(tmp_path)

    def python(code):
        return _checked(subprocess.run([str(venv_bin / "python"), "-c", code], cwd=tmp_path,
                                       env=env, capture_output=True, text=True, timeout=120),
                        code).stdout.strip()

    where = Path(python("import pinlib; print(pinlib.__file__)"))
    if where.resolve().parents[1] != ROOT or not (venv_bin / "pinlib").exists():
        pytest.skip("the tests do not run in an editable install of this checkout")
    proc = subprocess.run([str(venv_bin / "pinlib"), "demo", "d"], cwd=tmp_path, env=env,
                          capture_output=True, text=True, timeout=120)
    assert proc.returncode == 0, proc.stderr
    for rel in demo.demo_files(ROOT / "workbooks"):
        assert (tmp_path / "d" / "workbooks" / rel).read_bytes() == \
            (ROOT / "workbooks" / rel).read_bytes()
    builtin = python("from pinlib.library.loader import BUILTIN_DIR; print(BUILTIN_DIR)")
    assert Path(builtin) == ROOT / "pinlib" / "devices"
