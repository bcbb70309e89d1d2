"""A recursive comparison of two JSON documents for the golden tests.

Numbers agree when they are within a relative tolerance of each other (``REL``, with an
absolute floor ``ABS`` for values at or near zero); strings, booleans and nulls must be
equal; objects must have the same keys and lists the same length.  Paths listed as
*ignored* (volatile fields: timestamps, file locations) are skipped on both sides.

Every difference is reported with its place in the document (``buses/0/checks/3/margin``),
so a failing golden test says which number moved and by how much.
"""

from __future__ import annotations

import math

__all__ = ["REL", "ABS", "differences", "matches"]

#: Relative tolerance of a number (the redesign of issue 12 changes no number).
REL = 1e-12
#: Absolute tolerance, for numbers that are zero in one document and a rounding residue
#: in the other.
ABS = 1e-30


def matches(path: tuple[str, ...], pattern: tuple[str, ...]) -> bool:
    """Whether a place in the document matches an ignore pattern (``*`` is any one key
    or index)."""
    return len(path) == len(pattern) and all(p in ("*", k) for k, p in zip(path, pattern,
                                                                           strict=True))


def _is_number(x) -> bool:
    return isinstance(x, (int, float)) and not isinstance(x, bool)


def _close(a: float, b: float, rel: float, abs_tol: float) -> bool:
    if math.isnan(a) or math.isnan(b):
        return math.isnan(a) and math.isnan(b)
    if math.isinf(a) or math.isinf(b):
        return a == b
    return abs(a - b) <= max(rel * max(abs(a), abs(b)), abs_tol)


def differences(expected, actual, *, ignore=(), rel: float = REL, abs_tol: float = ABS,
                limit: int = 50) -> list[str]:
    """Every place where ``actual`` departs from ``expected`` (at most ``limit`` of them).

    Parameters
    ----------
    expected, actual
        Decoded JSON (dicts, lists, str, int, float, bool, None).
    ignore : iterable of str
        Places to skip, as ``/``-separated keys with ``*`` for any one key or index
        (``"changes/old_created"``, ``"swaps/*/file"``).
    """
    patterns = [tuple(p.split("/")) for p in ignore]
    out: list[str] = []

    def where(path) -> str:
        return "/".join(path) or "(top)"

    def walk(e, a, path) -> None:
        if len(out) >= limit or any(matches(path, p) for p in patterns):
            return
        if _is_number(e) and _is_number(a):
            if not _close(float(e), float(a), rel, abs_tol):
                scale = max(abs(float(e)), abs(float(a)))
                diff = abs(float(e) - float(a)) / scale if scale else math.inf
                out.append(f"{where(path)}: expected {e!r}, got {a!r} "
                           f"(relative difference {diff:.3g})")
            return
        if type(e) is not type(a) and not (_is_number(e) and _is_number(a)):
            out.append(f"{where(path)}: expected {type(e).__name__} {e!r:.80}, "
                       f"got {type(a).__name__} {a!r:.80}")
            return
        if isinstance(e, dict):
            keys_e = {k for k in e if not any(matches(path + (k,), p) for p in patterns)}
            keys_a = {k for k in a if not any(matches(path + (k,), p) for p in patterns)}
            for k in sorted(keys_e - keys_a):
                out.append(f"{where(path + (k,))}: missing")
            for k in sorted(keys_a - keys_e):
                out.append(f"{where(path + (k,))}: not in the golden file")
            for k in e:
                if k in keys_e and k in keys_a:
                    walk(e[k], a[k], path + (k,))
            return
        if isinstance(e, list):
            if len(e) != len(a):
                out.append(f"{where(path)}: expected {len(e)} items, got {len(a)}")
            for i, (x, y) in enumerate(zip(e, a, strict=False)):
                walk(x, y, path + (str(i),))
            return
        if e != a:
            out.append(f"{where(path)}: expected {e!r}, got {a!r}")

    walk(expected, actual, ())
    return out
