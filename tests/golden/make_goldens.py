"""Write the golden files: ``python -m tests.golden.make_goldens`` from the checkout.

Runs every case of :mod:`tests.golden.cases` and saves its JSON under tests/golden/
(results/, candidates/, whatif/, swap/), after writing the what-if test buses as design
files under tests/golden/designs/.  Regenerating the goldens is allowed only in a commit
that explains the true bug fix that moved the numbers (README.md here).
"""

from __future__ import annotations

import json
import os
import sys
import time


def main(argv: list[str] | None = None) -> int:
    # driver fits computed in this process, never read from or written to a user's store
    os.environ["PINLIB_CACHE_DIR"] = "off"
    from tests.golden.cases import CASES, HERE, ROOT, run, write_whatif_designs

    for path in write_whatif_designs():
        print(f"wrote {path.relative_to(ROOT)}")
    written = set()
    for case in CASES:
        start = time.perf_counter()
        doc = run(case)
        case.file.parent.mkdir(parents=True, exist_ok=True)
        text = json.dumps(doc, indent=1, ensure_ascii=False, allow_nan=False) + "\n"
        case.file.write_text(text, encoding="utf-8")
        written.add(case.file)
        print(f"wrote {case.file.relative_to(ROOT)}  (exit {doc['exit_status']}, "
              f"{time.perf_counter() - start:.2f} s)")
    stale = [p for p in HERE.glob("*/*.json") if p not in written]
    for p in stale:
        print(f"note: {p.relative_to(ROOT)} belongs to no case; remove it", file=sys.stderr)
    return 0


if __name__ == "__main__":
    sys.exit(main())
