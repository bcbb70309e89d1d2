"""A recursive comparison of two JSON documents for the golden tests.

Numbers agree when they are within a relative tolerance of each other (``REL``, with an
absolute floor ``ABS`` for values at or near zero); strings, booleans and nulls must be
equal; objects must have the same keys and lists the same length.  Paths listed as
*ignored* (volatile fields: timestamps, file locations) are skipped on both sides.

Two kinds of number are differences of larger numbers, and are held to the tolerance of
what they are computed from rather than of themselves (``DERIVED``): a figure's relative
change between two results, ``(new - old) / |old|``, absolutely to ``REL·(1 + |change|)``
(the rounding of ``new / old``); and a corner's ``gain``, the margin of a check with one
parameter flipped less its margin at the corner, absolutely to ``REL`` of the larger of
the check's margin and the gain.  Both are ill-conditioned where they are small: a gain
of 5e-6 taken from margins of 0.8 carries their last-place rounding multiplied by 1.6e5,
and numpy's BLAS and vector kernels round differently on different processors (the
corner gains of ``whatif/long-spi-link`` differ by 4.6e-10 of themselves between an AMD
EPYC and an Intel Xeon, from margins that agree to 3e-15).

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


def _change_scale(parents) -> float:
    """A relative change's scale: 1 + |change| (the ratio new / old it comes from)."""
    return 1.0 + abs(_number(parents[-1].get("change")))


def _gain_scale(parents) -> float:
    """A corner gain's scale: the larger of its check's margin and itself."""
    check = parents[-3]  # checks/i -> corner -> corner/j -> gain
    return max(abs(_number(check.get("margin"))), abs(_number(parents[-1].get("gain"))))


def _number(x) -> float:
    return float(x) if _is_number(x) and math.isfinite(x) else 0.0


#: Places whose numbers are differences of larger ones: the pattern, and the scale of
#: the absolute tolerance ``REL·scale`` from the objects that hold the number (the
#: golden document's, from the top down to the number's own object).
DERIVED = (
    (("output", "changes", "figure_changes", "*", "change"), _change_scale),
    (("output", "figures", "*", "change"), _change_scale),
    (("output", "corners", "checks", "*", "corner", "*", "gain"), _gain_scale),
)


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
                limit: int = 50, derived=DERIVED) -> list[str]:
    """Every place where ``actual`` departs from ``expected`` (at most ``limit`` of them).

    Parameters
    ----------
    expected, actual
        Decoded JSON (dicts, lists, str, int, float, bool, None).
    ignore : iterable of str
        Places to skip, as ``/``-separated keys with ``*`` for any one key or index
        (``"changes/old_created"``, ``"swaps/*/file"``).
    derived : sequence of (pattern, scale)
        Places held to ``rel`` times a scale rather than to ``rel`` of themselves
        (:data:`DERIVED`; pass ``()`` for none).
    """
    patterns = [tuple(p.split("/")) for p in ignore]
    out: list[str] = []

    def where(path) -> str:
        return "/".join(path) or "(top)"

    def walk(e, a, path, parents=()) -> None:
        if len(out) >= limit or any(matches(path, p) for p in patterns):
            return
        if _is_number(e) and _is_number(a):
            floor = abs_tol
            for pattern, scale in derived:
                if matches(path, pattern):
                    floor = max(abs_tol, rel * scale(parents))
            if not _close(float(e), float(a), rel, floor):
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
                    walk(e[k], a[k], path + (k,), parents + (e,))
            return
        if isinstance(e, list):
            if len(e) != len(a):
                out.append(f"{where(path)}: expected {len(e)} items, got {len(a)}")
            for i, (x, y) in enumerate(zip(e, a, strict=False)):
                walk(x, y, path + (str(i),), parents + (e,))
            return
        if e != a:
            out.append(f"{where(path)}: expected {e!r}, got {a!r}")

    walk(expected, actual, ())
    return out
