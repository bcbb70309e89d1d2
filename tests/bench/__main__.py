"""``python -m tests.bench``: run every benchmark and print one line each.

Options: ``--quick`` (fewer repeats, a tenth of the candidates and boards),
``--only NAME`` (a module name such as ``library``; repeatable), ``--readme`` (also
rewrite the "## Performance" section of README.md with these numbers).
"""

from __future__ import annotations

import argparse
import datetime as _dt
import importlib
import re
import sys
import traceback
from pathlib import Path

from tests.bench.common import Result, machine

MODULES = ["waveform", "tree", "crosstalk", "candidates", "montecarlo", "opendrain",
           "library", "cli", "report", "design", "many", "scaling",
           "widgets",
           "browser"]
README = Path(__file__).resolve().parents[2] / "README.md"


def _table(results: list[Result], info: dict[str, str]) -> str:
    rows = ["| benchmark | pinlib | baseline | ratio | target |", "| --- | --- | --- | --- | --- |"]
    for r in results:
        if r.todo:
            rows.append(f"| {r.name} | — | — | — | not measured yet: {r.todo} |")
            continue
        verdict = "" if r.passed is None else (" (met)" if r.passed else " (missed)")
        extra = "; ".join(r.extra)
        if r.baseline is None:
            baseline, ratio = f"none: {r.no_baseline}", extra or "—"
        else:
            baseline = f"{r.baseline_name}: {r.shown(r.baseline)}"
            ratio = r.ratio_words().replace("x ", "× ", 1) + (f"; {extra}" if extra else "")
        rows.append(f"| {r.name} | {r.shown(r.value)} | {baseline} | {ratio} | "
                    f"{r.target or '—'}{verdict} |")
    when = _dt.date.today().isoformat()
    return "\n".join([
        "## Performance",
        "",
        "Measured by `make bench` (`python -m tests.bench`, the benchmarks in `tests/bench/`,",
        "outside the unit tests). Each figure is the median of repeated runs; each ratio is",
        "the speed against the baseline named beside it (the same work done another way, or",
        "linear growth from a smaller input), measured in the same run, so above 1 means",
        "faster than that baseline and it carries over to other machines better than the",
        "times do (on this shared two-CPU machine the times of one benchmark varied by up to",
        "half from run to run). A benchmark with no like-for-like baseline gives its time",
        "alone and says why.",
        "",
        *rows,
        "",
        f"Machine ({when}): {info['platform']};",
        f"{info['cpu']}, {info['cpus']} CPUs; Python {info['python']}; numpy {info['numpy']}.",
        "",
    ])


def write_readme(results: list[Result], info: dict[str, str]) -> None:
    text = README.read_text(encoding="utf-8")
    section = _table(results, info)
    # The section runs to the next heading, the closing pointer to DEVELOPERS.md or the end.
    pattern = re.compile(r"^## Performance\n.*?(?=^## |^See \[DEVELOPERS\.md\]|\Z)",
                         re.MULTILINE | re.DOTALL)
    if pattern.search(text):
        text = pattern.sub(lambda _m: section + "\n", text, count=1)
        text = text.rstrip("\n") + "\n"
    else:
        # Near the end: before the closing pointer to DEVELOPERS.md when there is one.
        closing = "See [DEVELOPERS.md]"
        at = text.rfind("\n" + closing)
        if at >= 0:
            text = text[:at + 1] + section + "\n" + text[at + 1:]
        else:
            text = text.rstrip("\n") + "\n\n" + section
    README.write_text(text, encoding="utf-8")


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(prog="python -m tests.bench", description=__doc__)
    ap.add_argument("--quick", action="store_true", help="fewer repeats")
    ap.add_argument("--only", action="append", choices=MODULES, default=[])
    ap.add_argument("--readme", action="store_true",
                    help="rewrite the README's Performance section with the results")
    args = ap.parse_args(argv)
    info = machine()
    print(f"machine: {info['platform']} | {info['cpu']} | {info['cpus']} CPUs | "
          f"python {info['python']} | numpy {info['numpy']}")
    results: list[Result] = []
    failed = False
    for name in args.only or MODULES:
        module = importlib.import_module(f"tests.bench.bench_{name}")
        try:
            got = module.run(**({"repeats": 2, "quick": True} if args.quick else {}))
        except Exception:  # a broken benchmark must not hide the others
            failed = True
            print(f"{name:<34} ERROR", flush=True)
            traceback.print_exc()
            continue
        for r in got:
            print(r.line(), flush=True)
        results += got
    if args.readme:
        write_readme(results, info)
        print(f"wrote the Performance section of {README}")
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
