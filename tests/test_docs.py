"""The documents in docs/ against the code they describe: every command-line option,
every part-file and design-file field is named, and every relative link resolves."""

from __future__ import annotations

import argparse
import re
from pathlib import Path

import pytest

from pinlib.cli import build_parser

ROOT = Path(__file__).resolve().parents[1]
DOCS = ROOT / "docs"


def _text(name: str) -> str:
    return (DOCS / name).read_text(encoding="utf-8")


def _subparsers(parser):
    for action in parser._actions:
        if isinstance(action, argparse._SubParsersAction):
            yield from action.choices.items()


def _commands(parser, prefix=()):
    """(command words, parser) for every command and subcommand."""
    for name, sub in _subparsers(parser):
        yield prefix + (name,), sub
        yield from _commands(sub, prefix + (name,))


def test_cli_page_names_every_command_and_option():
    text = _text("cli.md")
    missing = []
    for words, sub in _commands(build_parser()):
        if f"pinlib {' '.join(words)}" not in text:
            missing.append(" ".join(words))
        for action in sub._actions:
            for opt in action.option_strings:
                if opt.startswith("--") and opt != "--help" and f"`{opt}" not in text:
                    missing.append(f"{' '.join(words)} {opt}")
    assert not missing, missing


def _fields(model) -> set[str]:
    return set(model.fields())


def test_part_page_names_every_field():
    from pinlib.library import schema

    text = _text("formats/part.md")
    models = (schema.Part, schema.Pin, schema.Edge, schema.Timing, schema.Supply,
              schema.Provenance, schema.LinePerLength, schema.Bridge, schema.Side)
    missing = sorted({f for m in models for f in _fields(m) if f"`{f}`" not in text})
    assert not missing, missing
    for category in schema.CATEGORIES:
        assert f"`{category}`" in text, category


def test_design_page_names_every_field():
    from pinlib.model import design

    text = _text("formats/design.md")
    models = (design.RawDesign, design.RawBus, design.RawSegment, design.RawTrace,
              design.RawSection, design.RawCable, design.RawDevice, design.RawGeometry,
              design.RawCoupling, design.RawEdge)
    missing = sorted({f for m in models for f in _fields(m)
                      if f"`{f}`" not in text and f"`{f} " not in text
                      and f not in ("board", "bus", "segment", "lines")})
    assert not missing, missing


LINK = re.compile(r"\]\(([^)#\s]+)(#[^)\s]*)?\)")


@pytest.mark.parametrize("page", sorted(p.relative_to(ROOT).as_posix()
                                        for p in [*DOCS.rglob("*.md"), ROOT / "README.md",
                                                  ROOT / "DEVELOPERS.md"]))
def test_relative_links_resolve(page):
    path = ROOT / page
    for target, _ in LINK.findall(path.read_text(encoding="utf-8")):
        if "://" in target or target.startswith("mailto:"):
            continue
        assert (path.parent / target).exists(), f"{page}: {target}"


def test_the_result_page_names_every_method_of_a_candidate():
    # result.md listed `vectorized` and `per-candidate` while the JSON of an SPI or GPIO
    # position says "batched" (the edges of many candidates solved together)
    import re

    src = (ROOT / "pinlib" / "studies" / "candidates.py").read_text(encoding="utf-8")
    methods = set(re.findall(r'"(vectorized|batched|per-candidate)"', src))
    assert methods == {"vectorized", "batched", "per-candidate"}
    page = (ROOT / "docs" / "formats" / "result.md").read_text(encoding="utf-8")
    row = next(ln for ln in page.splitlines() if ln.startswith("| `method` |"))
    assert all(f"`{m}`" in row for m in methods), row
