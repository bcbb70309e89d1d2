"""The one rule of imports: a module imports from its own folder or from a layer below.

The layers are folders of ``pinlib/``, bottom to top (DEVELOPERS.md draws the tree)::

    core  <-  library | standards | physics  <-  model  <-  engines  <-  studies
          <-  present  <-  cli  <-  the public names (pinlib.check, pinlib.widgets,
                                     pinlib.__main__)

``library``, ``standards`` and ``physics`` share a rank and do not import each other.
The package's own ``pinlib/__init__.py`` (the version) counts as ``core``.  Nothing in
pinlib imports the public names; they exist for users and re-export a layer.

Every module's imports are read with :mod:`ast`, those inside functions (lazy imports)
included: a lazy import downward is fine, a lazy import upward is not.  The imports
form no cycle, lazy ones included (a cycle hidden inside a function is still a cycle).
No module may sit directly in ``pinlib/`` besides the package's ``__init__`` and the
public names.
"""

from __future__ import annotations

import ast
import textwrap
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]

#: Layer folders, bottom first; folders in one tuple share a rank.
LAYERS = (("core",), ("library", "standards", "physics"), ("model",), ("engines",),
          ("studies",), ("present",), ("cli",), ("public",))
RANK = {name: rank for rank, names in enumerate(LAYERS) for name in names}
#: Modules directly in pinlib/ and the layer each belongs to.
TOP_LEVEL = {"pinlib": "core", "pinlib.__main__": "public", "pinlib.check": "public",
             "pinlib.widgets": "public"}


def module_files(package: Path) -> dict[str, Path]:
    """Every module of the package under ``package`` (a folder named like the package)."""
    out = {}
    for path in sorted(package.rglob("*.py")):
        parts = path.relative_to(package.parent).with_suffix("").parts
        if parts[-1] == "__init__":
            parts = parts[:-1]
        out[".".join(parts)] = path
    return out


def imports_of(name: str, path: Path, modules) -> list[tuple[str, bool, int]]:
    """``(imported module, at import time?, line)`` for every import of the package's own
    modules in one file; ``from X import y`` names the module ``X.y`` when that exists."""
    root = name.split(".")[0]
    package = name if path.name == "__init__.py" else name.rpartition(".")[0]
    found = []

    def add(target, top, line):
        if target == root or target.startswith(root + "."):
            found.append((target, top, line))

    def visit(node, top):
        for child in ast.iter_child_nodes(node):
            inner = top and not isinstance(child, (ast.FunctionDef, ast.AsyncFunctionDef,
                                                   ast.Lambda))
            if isinstance(child, ast.Import):
                for alias in child.names:
                    add(alias.name, top, child.lineno)
            elif isinstance(child, ast.ImportFrom):
                if child.level:
                    base = package.rsplit(".", child.level - 1)[0] if child.level > 1 else package
                    base = f"{base}.{child.module}" if child.module else base
                else:
                    base = child.module or ""
                for alias in child.names:
                    sub = f"{base}.{alias.name}"
                    add(sub if sub in modules else base, top, child.lineno)
            visit(child, inner)

    visit(ast.parse(path.read_text(encoding="utf-8"), filename=str(path)), True)
    return found


def layer_of(module: str) -> str | None:
    """The layer of a module: the folder under the package, or the table of top-level
    names; None for a module directly in the package that has no place."""
    if module in TOP_LEVEL:
        return TOP_LEVEL[module]
    parts = module.split(".")
    if len(parts) >= 2 and parts[1] in RANK and parts[1] != "public":
        return parts[1]
    return None


def problems(package: Path) -> list[str]:
    """Every breach of the rule in the package under ``package``: a module with no layer,
    an import that runs upward or sideways, a cycle of imports."""
    modules = module_files(package)
    found = []
    edges: dict[str, set[str]] = {m: set() for m in modules}
    for name, path in modules.items():
        here = layer_of(name)
        if here is None:
            found.append(f"{name}: not in a layer folder ({', '.join(RANK)})")
            continue
        for target, top, line in imports_of(name, path, modules):
            there = layer_of(target)
            where = f"{path.relative_to(package.parent)}:{line}"
            if there is None:
                found.append(f"{where}: {name} imports {target}, which is in no layer")
            elif here == "public" and there == "public" and target != name:
                found.append(f"{where}: {name} imports the public name {target}")
            elif RANK[there] > RANK[here] or (RANK[there] == RANK[here] and there != here):
                kind = "upward" if RANK[there] > RANK[here] else "sideways"
                found.append(f"{where}: {name} ({here}) imports {target} ({there}), {kind}"
                             f"{'' if top else ' (inside a function)'}")
            if target in modules and target != name:
                edges[name].add(target)
    found += [f"import cycle among {', '.join(c)}" for c in cycles(edges)]
    return found


def cycles(edges: dict[str, set[str]]) -> list[list[str]]:
    """The groups of modules that import each other, directly or through others (the
    strongly connected groups of more than one module; Tarjan's algorithm), sorted."""
    index, low, stack, on, out, counter = {}, {}, [], set(), [], [0]

    def connect(v):
        index[v] = low[v] = counter[0]
        counter[0] += 1
        stack.append(v)
        on.add(v)
        for w in sorted(edges.get(v, ())):
            if w not in index:
                connect(w)
                low[v] = min(low[v], low[w])
            elif w in on:
                low[v] = min(low[v], index[w])
        if low[v] == index[v]:
            group = []
            while True:
                w = stack.pop()
                on.discard(w)
                group.append(w)
                if w == v:
                    break
            if len(group) > 1:
                out.append(sorted(group))

    for v in sorted(edges):
        if v not in index:
            connect(v)
    return sorted(out)


# --------------------------------------------------------------------------- the package
def test_every_import_runs_downward_and_none_in_a_cycle():
    assert problems(ROOT / "pinlib") == []


def test_every_module_is_read():
    # the walk sees the lazy imports too: plotdata draws with the engines inside functions
    modules = module_files(ROOT / "pinlib")
    assert len(modules) > 60
    lazy = [t for t, top, _ in imports_of("pinlib.present.plotdata.common",
                                          modules["pinlib.present.plotdata.common"], modules)
            if not top]
    assert any(t.startswith("pinlib.engines.") for t in lazy)


# --------------------------------------------------------------------------- it can fail
def _package(tmp_path, files):
    for rel, text in files.items():
        path = tmp_path / "pinlib" / rel
        path.parent.mkdir(parents=True, exist_ok=True)
        path.write_text(textwrap.dedent(text))
    for folder in {p.parent for p in (tmp_path / "pinlib").rglob("*.py")}:
        (folder / "__init__.py").touch()
    return tmp_path / "pinlib"


def test_an_upward_import_inside_a_function_is_caught(tmp_path):
    package = _package(tmp_path, {
        "core/quantity.py": """
            def parse(text):
                from pinlib.engines.spi import budget
                return budget(text)
        """,
        "engines/spi.py": "def budget(text):\n    return text\n",
    })
    found = problems(package)
    assert len(found) == 1
    assert "pinlib.core.quantity (core) imports pinlib.engines.spi (engines), upward" in found[0]
    assert "inside a function" in found[0] and "core/quantity.py:3" in found[0]


def test_a_relative_import_upward_is_caught(tmp_path):
    package = _package(tmp_path, {
        "model/design.py": "from ..present import charts\n",
        "present/charts.py": "",
    })
    assert problems(package) == [
        "pinlib/model/design.py:1: pinlib.model.design (model) imports pinlib.present.charts "
        "(present), upward"]


def test_a_sideways_import_between_sibling_layers_is_caught(tmp_path):
    package = _package(tmp_path, {"physics/rc.py": "import pinlib.library.values\n",
                                  "library/values.py": ""})
    assert ["sideways" in p for p in problems(package)] == [True]


def test_a_cycle_is_caught_lazy_or_not(tmp_path):
    package = _package(tmp_path, {
        "engines/ppbatch.py": "from pinlib.engines import pptable\n",
        "engines/pptable.py": "from pinlib.engines.ppbatch import sample\n",
        "engines/a.py": "def f():\n    from pinlib.engines import b\n",
        "engines/b.py": "from pinlib.engines import a\n",
        "engines/c.py": "from pinlib.engines import a\n",
    })
    assert problems(package) == [
        "import cycle among pinlib.engines.a, pinlib.engines.b",
        "import cycle among pinlib.engines.ppbatch, pinlib.engines.pptable"]


def test_a_module_outside_the_layers_and_an_import_of_a_public_name_are_caught(tmp_path):
    package = _package(tmp_path, {"helpers.py": "", "check.py": "",
                                  "cli/main.py": "from pinlib.check import check_file\n"})
    found = problems(package)
    assert any(p.startswith("pinlib.helpers: not in a layer folder") for p in found)
    assert any("pinlib.cli.main (cli) imports pinlib.check (public), upward" in p
               for p in found)


# --------------------------------------------------------------------------- public names
def test_the_public_names_re_export_their_layer():
    import pinlib.check
    from pinlib.engines import dispatch

    assert pinlib.check.check_file is dispatch.check_file
    assert pinlib.check.check_design is dispatch.check_design
    assert set(pinlib.check.__all__) == set(dispatch.__all__)


def test_the_workbooks_import_the_widgets_by_their_public_name():
    pytest.importorskip("ipywidgets")
    import pinlib.widgets
    from pinlib.present import widgets

    assert pinlib.widgets.__all__ == widgets.__all__
    assert all(getattr(pinlib.widgets, n) is getattr(widgets, n) for n in widgets.__all__)
