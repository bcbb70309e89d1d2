"""The words and counts both pages of a design review share: status marks, a check's
cells, the groups of a bus in report order, the sentence for a design with no snapshot."""

from __future__ import annotations

from pinlib.core import messages as M
from pinlib.model.result import BusResult, Check, margin_text, status_counts
from pinlib.present.report import format_value
from pinlib.present.review.draw import _slug
from pinlib.present.values import check_cells, with_fix

_MARK = {"pass": "PASS", "warn": "WARN", "fail": "FAIL"}
_STATUS_WORD = {"pass": "passes",
                "warn": "warns (a margin under the warning threshold, or beyond a limit that "
                        "only warns: a class's typical value, an estimate, a rule of thumb)",
                "fail": "fails"}


def _margin(c: Check) -> str:
    return margin_text(c)


def _value(value, unit: str) -> str:
    if isinstance(value, bool):
        return "yes" if value else "no"
    return format_value(value, unit)


def _check_cells(c: Check) -> tuple[str, str]:
    """A check's value and limit as text; a yes/no check shows what it compared, or its
    answer, and no limit (:func:`pinlib.present.values.check_cells`)."""
    return check_cells(c, answer=True, why=True)


def _message(c: Check) -> str:
    return with_fix(c.message, c)


def _heading(b) -> str:
    """A bus's or a coupling's heading: ``Bus flash (spi)``, ``Coupling sensors.scl beside
    display.sclk``."""
    if b.protocol == "coupling":
        return f"Coupling {b.victim} beside {b.aggressor}"
    return f"Bus {b.id} ({b.protocol})"


def _bus_counts(b: BusResult) -> dict:
    """A bus's checks by status (:func:`pinlib.model.result.status_counts`)."""
    return status_counts(c for _, _, c in b.all_checks())


def _groups(b: BusResult):
    """(heading, anchor suffix, group, chart place) of a bus, in report order."""
    yield None, "", b, ("bus", b.id)
    for s in b.segments:
        yield f"Segment {s.id}", f"-seg-{_slug(s.id)}", s, ("segment", b.id, s.id)
    for ln in b.lines:
        yield f"Line {ln.signal.upper()}", f"-line-{_slug(ln.signal)}", ln, \
            ("line", b.id, ln.signal)


def _no_snapshot_text(design) -> str:
    path = getattr(design, "path", None)
    shown = str(path) if path else "DESIGN"
    return M.NO_SNAPSHOT_TO_COMPARE.format(design=shown)


def _length_text(metres: float) -> str:
    """A stretch's length as the diagram writes it: mm, cm or m."""
    if metres < 0.01:
        return f"{metres * 1000:.3g} mm"
    if metres < 1.0:
        return f"{metres * 100:.3g} cm"
    return f"{metres:.3g} m"


def _stretch_text(section) -> str:
    """A stretch as the diagram labels it: its length, and a cable's class after it."""
    length = _length_text(section.length)
    return f"{length} {section.part_id}" if section.part_id else length


#: The widest row of a route diagram (characters): longer paths continue on a new row.
DIAGRAM_WIDTH = 80


def route_diagram(line, width: int = DIAGRAM_WIDTH, start: str | None = None) -> list[str]:
    """A routed line as text, one row per path: from ``start`` (the bus's controller;
    the route's first point where it is None or not on the route), then at each
    point its first stretch onwards on the same row (``U1 ─2 cm─ T1 ─13 cm─ U3``; a cable
    stretch names its class, ``J1 ─25 cm ribbon-cable─ U3``), every
    other stretch from a point on a row of its own below, indented to that point
    (``└ T1 ─1 cm─ U2``; ``├`` and ``│`` down to the next branch of the same point),
    the branches farthest along the row first.  A path wider than
    ``width`` goes on in the next row from its last point (``… U7 ─2 cm─ U8``).  Empty
    for a line without a route."""
    points = list(getattr(line, "route", ()) or ())
    if not points:
        return []
    lengths = [_stretch_text(s) for s in line.sections]
    root = start if any(start in pair for pair in points) else points[0][0]
    children: dict[str, list[tuple[str, str]]] = {}
    seen = {root}
    todo = [root]
    while todo:  # orient the tree away from its first point (each point once)
        p = todo.pop(0)
        for (a, b), length in zip(points, lengths, strict=True):
            for x, y in ((a, b), (b, a)):
                if x == p and y not in seen:
                    seen.add(y)
                    children.setdefault(p, []).append((y, length))
                    todo.append(y)
    rows: list[str] = []
    starts = [(root, "")]  # (the point a row goes on from, the row so far)
    while starts:
        point, row = starts.pop(0)
        lead = _indent(row)
        row += point
        first = len(row)
        branches = []
        while children.get(point):
            (nxt, length), *rest = children[point]
            step = f" ─{length}─ {nxt}"
            if len(row) + len(step) > width and len(row) > first:
                rows.append(row)  # at least one stretch a row, however long
                row = " " * lead + "… " + point
            column = min(len(row) - len(point), width // 2)
            branches += [(child, " " * column + f"└ {point} ─{ln}─ ")
                         for child, ln in rest]
            row += step
            point = nxt
        rows.append(row)
        # a row's branches follow it, the farthest along first (each right below the
        # row it leaves, not below another branch's rows), those of one point in order
        branches.sort(key=lambda b: -_indent(b[1]))
        starts[0:0] = branches
    return _join_siblings(rows)


def _join_siblings(rows: list[str]) -> list[str]:
    """``rows`` with each branch that a later branch from the same point follows drawn
    ``├``, and ``│`` down from it through the rows between (its own path's)."""
    out = list(rows)
    for i, row in enumerate(out):
        col = _indent(row)
        if not row.startswith("└ ", col):
            continue
        head = row[col:].split(" ─", 1)[0].replace("└", "", 1)  # "└ T1": its point
        j = i + 1
        # the rows of its own path: indented further, or its own "…" continuation
        while j < len(out) and (_indent(out[j]) > col or out[j].startswith("… ", col)):
            j += 1
        if j == len(out) or _indent(out[j]) != col or \
                not out[j][col:].startswith("└" + head + " ─"):
            continue
        out[i] = row[:col] + "├" + row[col + 1:]
        for k in range(i + 1, j):
            r = out[k].ljust(col + 1)
            if r[col] == " ":
                out[k] = r[:col] + "│" + r[col + 1:]
    return out


def _indent(row: str) -> int:
    """The spaces a row of the route diagram starts with."""
    return len(row) - len(row.lstrip(" "))


def _flights_caption() -> str:
    """What an SPI bus's flights table holds, as a sentence (the text's heading, without
    its ``flights:``)."""
    text = M.FLIGHTS_HEAD.split(": ", 1)[1]
    return text[0].upper() + text[1:] + "."


def _route_of(design_bus, place) -> list[str]:
    """The route diagram of a line's place in the report (empty for anything else)."""
    if design_bus is None or place[0] != "line":
        return []
    line = design_bus.lines.get(place[2])
    # from the controller, whichever way the route is written (as the engine reads it)
    ctrl = next((d.ref for d in design_bus.devices if d.is_controller), None)
    return route_diagram(line, start=ctrl) if line is not None else []
