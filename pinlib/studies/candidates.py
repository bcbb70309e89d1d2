"""Which library parts could stand in one position of a design, ranked.

:func:`rank_candidates` takes a design and a reference designator, keeps every
placeable part of the merged library that can serve the position on every bus it sits
on (:func:`pinlib.studies.compare.can_serve`: the same pin functions, drives the position
allows), evaluates the design with each in its place, and ranks them: by status
(pass, then warn, then fail), then by the worst margin of the checks on those buses
that the part can move (:data:`FIXED_CHECKS` count for the status only), a tie broken
by the next worst margin and so on.
Each candidate carries the check that sets its worst margin and the figures that
matter for the bus (bus capacitance, rise time, low level and the pull-up chosen).

On an open-drain bus (I2C, SMBus) the candidates are evaluated together: the
position's pin values are stacked into arrays and the bus goes through
:func:`pinlib.engines.opendrain.batch.build` once per group of candidates of the same structure
(which pins drive, which carry pull-ups...), ``auto`` pull-ups chosen for each.  On a
push-pull bus (SPI, GPIO) each candidate is evaluated by the engine, the waveform
edges of many candidates solved together (:mod:`pinlib.studies.ppcandidates`).  A
bridging part is evaluated one candidate at a time by its engine.  The ranking says
how each bus went.
:func:`rank_candidates_slow` evaluates every candidate that way, with
:meth:`pinlib.model.design.Design.with_parts` and :func:`pinlib.engines.dispatch.check_design`: the
reference the tests hold the vectorized ranking to.

Nothing here computes a figure: the engines do.
"""

from __future__ import annotations

import math
from dataclasses import field

import numpy as np

from pinlib.core import messages as M
from pinlib.core.collector import older_objects_aside
from pinlib.core.errors import InputError, PinlibError
from pinlib.core.labels import and_list, check_label, short_label
from pinlib.core.progress import progress_bar
from pinlib.core.protocols import OPEN_DRAIN_PROTOCOLS
from pinlib.core.quantity import format_si
from pinlib.core.texttable import fit_table
from pinlib.core.valueclass import value_class
from pinlib.core.wrapping import wrap
from pinlib.engines import memo
from pinlib.engines import opendrain as od
from pinlib.engines.opendrain import batch as ob
from pinlib.library.schema import CATEGORIES, POSITION_CATEGORIES, Part
from pinlib.model.design import Bus, Design, Device
from pinlib.model.result import (
    STATUSES,
    BusResult,
    json_number,
    signed_margin_text,
    worst,
    worst_order,
)
from pinlib.studies.compare import can_serve, positions
from pinlib.studies.ppcandidates import batched_note, evaluate_batched

__all__ = [
    "FORMAT",
    "FIGURES",
    "FIXED_CHECKS",
    "bus_figures",
    "bus_text",
    "figures_place",
    "where_parts",
    "where_text",
    "Candidate",
    "Ranking",
    "positions",
    "eligible",
    "rank_candidates",
    "rank_candidates_slow",
]

#: Format tag of a ranking's JSON form.
FORMAT = "pinlib.candidates/1"

#: The figures shown for each candidate, by protocol family, with their units.
FIGURES = {
    "open-drain": (("bus_capacitance", "F"), ("rise_time", "s"), ("v_ol", "V"),
                   ("pullup_resistor", "Ω")),
    "push-pull": (("max_clock", "Hz"),),
    # a GPIO bus has no clock: the slowest far-end edge of its lines (rise or fall), the
    # figure of "pinlib check"'s line for the bus
    "gpio": (("worst_edge", "s"),),
}


#: Column heads of the ranking's table where the figure's short label would mislead, with
#: the key line under the table that says what the column is.  ``max_clock`` is the bus's
#: highest clock with the candidate in place, which any device may set (another device's
#: 20 MHz read as the candidate's own f(max) beside a 104 MHz flash).
COLUMN_HEADS = {"max_clock": ("bus fmax", "bus fmax: the highest clock the bus allows with "
                                          "that part, set by whichever device limits it "
                                          "(not the part's own f_max)")}


def column_head(name: str) -> str:
    """The ranking table's head of figure ``name`` (:data:`COLUMN_HEADS`, else its short
    label)."""
    return COLUMN_HEADS[name][0] if name in COLUMN_HEADS else short_label(name)


def bus_figures(protocol: str) -> tuple:
    """The figures :data:`FIGURES` shows for a bus of this protocol."""
    if protocol in OPEN_DRAIN_PROTOCOLS:
        return FIGURES["open-drain"]
    return FIGURES["gpio" if protocol == "gpio" else "push-pull"]


def figures_place(row: dict) -> str:
    """What a bus row's :data:`FIGURES` are figures of (a row of :attr:`Ranking.buses`):
    on an open-drain bus the segment the position sits on (a bridging part: the first
    it joins, as :attr:`Ranking.buses` names it), the worse of its SDA and SCL lines
    (the pull-up resistor serves both); on a GPIO bus the slowest edge of its lines; on
    an SPI bus the bus's highest clock."""
    where = f"bus {row['bus']}" + (f", segment {row['segment']}" if row.get("segment") else "")
    if row["protocol"] in OPEN_DRAIN_PROTOCOLS:
        return f"{where}, the worse of SDA and SCL"
    if row["protocol"] == "gpio":
        return f"{where}, the slowest edge of its lines"
    return where

#: Checks no part in a plain position can move: the bus clock against its mode's
#: limit, a pass-transistor translator's gate drive and sides, and the facing of static-offset
#: sides.  They count for the status but not for the worst margin, which would
#: otherwise often be the same 0 % (a bus run at its mode's maximum clock) for every
#: candidate.
FIXED_CHECKS = ("scl-frequency", "bridge-gate-drive", "bridge-gate-side",
                "bridge-offset-facing")

#: Checks of one device's own rating against the bus (its supply range, its f_max, its
#: highest input voltage, the slowest device's speed, its SPI modes): the check names that device as
#: its subject, and it counts for a candidate's worst margin only when that device is
#: the candidate.  Another
#: device's rating is the same for every candidate (at the demo's display position
#: every candidate's worst was the controller's supply range, +8.3 %).
OWN_CHECKS = ("supply-range", "f-max", "device-speed", "input-voltage", "spi-mode")

#: Checks of one device whose subject is that device alone, in a batch as in the
#: engine's wording: :data:`OWN_CHECKS` and a switched device's power-off.
DEVICE_CHECKS = (*OWN_CHECKS, "power-off")

_RANK = {"pass": 0, "warn": 1, "fail": 2, "error": 3}


def _ranks(check_id: str, dev, subject: str | None = None) -> bool:
    """Whether a check's margin counts for a candidate's worst margin (``subject``: the
    device the check names, for :data:`OWN_CHECKS`).  At a bridging part's position as
    at any other, another device's own rating does not (the same for every candidate:
    a 5 V segment's gauge against its rail ranked every translator), nor the clock
    against its mode; the bridge's own checks (its gate drive, its offset sides'
    facing) do, as they move with the candidate."""
    if check_id in OWN_CHECKS:
        return _names(subject, dev.ref)
    if dev.is_bridge:
        return check_id != "scl-frequency"
    return check_id not in FIXED_CHECKS


def _names(subject: str | None, ref: str) -> bool:
    """Whether a check's subject is the device ``ref`` (``U4``, or ``Q1 side a``)."""
    return subject is not None and (subject == ref or subject.startswith(ref + " "))


@value_class
class Candidate:
    """One part evaluated in the position.

    Attributes
    ----------
    part : str
        Its id. [1]
    status : str
        ``pass``, ``warn``, ``fail`` over the buses the position is on; ``error`` when a
        bus cannot be evaluated with it. [1]
    worst_margin : float or None
        The smallest margin of any check on those buses that the part can move (not
        :data:`FIXED_CHECKS`); a margin that cannot be computed counts as −inf. [1]
    worst_check : dict or None
        Where that margin is: ``bus``, ``segment``, ``line``, ``id``, ``subject``; and
        ``margin_unit`` (``"V"``, ``"s"``) where the margin is in that unit, not a fraction of
        the limit (such a margin is shown, never ranked against fractions). [1]
    figures : dict
        By bus id: the figures that matter (see :data:`FIGURES`), SI with units. [SI]
    current : bool
        The part the design holds now. [1]
    method : str
        ``"vectorized"`` (open-drain arrays), ``"batched"`` (push-pull: edges solved
        together, checks by the engine) or ``"per-candidate"``. [1]
    margins : tuple of float
        Every margin that counts for the ranking, smallest first (−inf for one that
        cannot be computed); candidates of equal status are ordered by these in
        turn. [1]
    """

    part: str
    title: str
    category: str
    status: str
    worst_margin: float | None
    worst_check: dict | None
    figures: dict = field(default_factory=dict)
    current: bool = False
    method: str = "vectorized"
    error: str | None = None
    margins: tuple = ()

    def sort_key(self):
        # status first; then the worst margin shown (that of the worst check of that
        # status: a failing check's, not a larger one of a check that only warns, such
        # as one beyond a class's typical value); then the margins smallest first,
        # compared in turn (a tie on the worst margin — a clock at the slowest device's
        # maximum, say — is broken by the next worst); then the id.  A worst without a
        # fraction (a yes/no check, a margin in a unit) is not ranked by it.
        wm = self.worst_margin
        fraction = wm is not None and not (self.worst_check or {}).get("margin_unit")
        shown = -wm if fraction and wm == wm else -math.inf
        return (_RANK[self.status], shown, tuple(-m for m in self.margins), self.part)

    def margin_text(self, decimals: int = 1) -> str:
        """The worst margin as people read it: ``+4.0 %``, or in its own unit where it
        is not a fraction of the limit (``+210 mV``, a translator's gate overdrive)."""
        return signed_margin_text(self.worst_margin,
                                  (self.worst_check or {}).get("margin_unit"), decimals)

    def to_json(self) -> dict:
        return {"part": self.part, "title": self.title, "category": self.category,
                "status": self.status, "worst_margin": json_number(self.worst_margin),
                "worst_margin_unit": (self.worst_check or {}).get("margin_unit"),
                "worst_check": self.worst_check,
                "figures": {b: {k: _figure_json(cell) for k, cell in f.items()}
                            for b, f in self.figures.items()},
                "current": self.current, "method": self.method, "error": self.error}




def _figure_json(cell: tuple) -> dict:
    """``{"value", "unit"}``, and ``"reason"`` where the figure has no number and the
    engine says why (:class:`FigureCell`)."""
    value, unit = cell
    out = {"value": json_number(value), "unit": unit}
    if value is None and getattr(cell, "reason", None):
        out["reason"] = cell.reason
    return out


@value_class
class Ranking:
    """Every candidate of a position, best first."""

    design: str
    ref: str
    current: str
    buses: list[dict]
    candidates: list[Candidate]
    excluded: int
    library_size: int
    notes: list[str] = field(default_factory=list)
    #: Placeable parts not considered at all, by why: ``cable`` (a cable is no part of a
    #: position) and ``category`` (outside the categories asked for). [1]
    set_aside: dict = field(default_factory=dict)

    def count_text(self) -> str:
        """How the library's placeable parts divide: those that can serve the position,
        those that cannot, and those not considered; the numbers add up to the whole."""
        rest = [f"{self.excluded} cannot: pin functions, drives or routes"]
        if self.set_aside.get("cable"):
            rest.append(f"{self.set_aside['cable']} are cables, which stand at no position")
        if self.set_aside.get("category"):
            rest.append(f"{self.set_aside['category']} are of other categories")
        # "of the library's N parts": the count takes in the cables that the reasons then
        # set aside, so it does not call them placeable
        return (f"{len(self.candidates)} of the library's {self.library_size} parts can serve it "
                f"({'; '.join(rest)})")

    def candidate(self, part_id: str) -> Candidate:
        for c in self.candidates:
            if c.part == part_id:
                return c
        raise KeyError(part_id)

    def to_json(self, top: int | None = None) -> dict:
        shown = self.candidates if top is None else self.candidates[:top]
        return {"format": FORMAT, "design": self.design, "ref": self.ref,
                "current": self.current, "buses": self.buses,
                "library_parts": self.library_size, "excluded": self.excluded,
                "set_aside": dict(self.set_aside), "count": len(self.candidates),
                "candidates": [c.to_json() for c in shown], "notes": list(self.notes)}

    @staticmethod
    def warn_key(shown) -> list[str]:
        """The key line under a ranking where a candidate ``shown`` warns at a negative
        margin (beyond a limit that only warns), else none."""
        beyond = any(c.status == "warn" and c.worst_margin is not None
                     and c.worst_margin < 0 for c in shown)
        return [M.CANDIDATE_WARN_BEYOND] if beyond else []

    def status_notes(self, shown) -> list[str]:
        """For the candidates ``shown`` whose status a check they cannot move sets
        (marked †): which check, once each."""
        seen: dict[str, str] = {}
        for c in shown:
            by = (c.worst_check or {}).get("status_by")
            if by:
                seen.setdefault(where_text(by, True), c.status)
        return [M.STATUS_SET_ELSEWHERE.format(status=st.upper(), check=where, ref=self.ref)
                for where, st in seen.items()]

    def format_text(self, top: int | None = 20, width: int | None = None) -> str:
        """The ranking as text; ``width``: characters per line (None: no limit), the
        table's trailing figure columns left out (and named) where they do not fit."""
        where = "; ".join(bus_text(b) for b in self.buses)
        lines = [f"position {self.ref}, now {self.current}: {where}", self.count_text()]
        if width is not None:
            lines = [w for ln in lines for w in wrap(ln, width)]
        shown = self.candidates if top is None else self.candidates[:top]
        if shown:
            multi = len(self.buses) > 1
            fig_cols = []
            for b in self.buses:
                for name, unit in bus_figures(b["protocol"]):
                    fig_cols.append((b["bus"], name, unit, f"{column_head(name)}@{b['bus']}"
                                     if multi else column_head(name)))
            head = ["#", "part", "status", "worst", "set by"] + [c[3] for c in fig_cols]
            rows, blanks = [], {}
            for i, c in enumerate(shown, 1):
                wc = c.worst_check
                by = "—" if wc is None else where_text(wc, multi)
                row = [str(i), c.part + (" *" if c.current else ""),
                       c.status.upper() + ("†" if wc and wc.get("status_by") else ""),
                       c.margin_text(1), by if c.status != "error" else
                       (c.error or "")]
                for b, n, unit, label in fig_cols:
                    v = c.figures.get(b, {}).get(n)
                    row.append("—" if v is None or v[0] is None else format_si(v[0], unit))
                    if v is not None and v[0] is None and getattr(v, "reason", None):
                        blanks.setdefault((label, v.reason), []).append(c.part)
                rows.append(row)
            table, dropped = fit_table(head, rows, width, keep=5, names=1)
            lines.append("")
            lines += table
            if dropped:
                lines += wrap(M.COLUMNS_LEFT_OUT.format(columns=", ".join(dropped)), width,
                              subsequent="")
            if len(shown) < len(self.candidates):
                lines.append(f"… {len(self.candidates) - len(shown)} more (--top N)")
            lines.append("* the part in the design now")
            shown_cols = {n for _, n, _, label in fig_cols if label not in dropped}
            for name in COLUMN_HEADS:
                if name in shown_cols:
                    key = COLUMN_HEADS[name][1]
                    lines += [key] if width is None else wrap(key, width, subsequent="  ")
            # each "—" without a number, in the order of the columns: why
            worst_blanks: dict = {}
            for c in shown:
                why = (c.worst_check or {}).get("reason")
                if why and c.status != "error":
                    worst_blanks.setdefault(("worst", why), []).append(c.part)
            for (label, reason), parts in {**worst_blanks, **blanks}.items():
                # the dash stands for the engine's "none"
                why = reason.removeprefix("none: ").removeprefix("none, ")
                note = f"— {label}: {why} ({_listed(parts)})"
                lines += [note] if width is None else wrap(note, width, subsequent="  ")
            for key in self.warn_key(shown):
                lines += wrap(key, width, subsequent="  ") if width is not None else [key]
            for note in self.status_notes(shown):
                lines += [note] if width is None else wrap(note, width, subsequent="  ")
        for n in self.notes:
            lines += [f"note: {n}"] if width is None else wrap(f"note: {n}", width)
        return "\n".join(lines) + "\n"


def _listed(parts: list[str], most: int = 3) -> str:
    """``a, b, c`` or ``a, b, c and 4 more``."""
    if len(parts) <= most:
        return ", ".join(parts)
    return f"{', '.join(parts[:most])} and {len(parts) - most} more"


# ============================================================================ eligibility



def _per_bus(places) -> list[tuple[Bus, Device]]:
    """One place per bus (a bridging part sits on its bus twice, once per side)."""
    out, seen = [], set()
    for bus, dev in places:
        if bus.id not in seen:
            seen.add(bus.id)
            out.append((bus, dev))
    return out


def eligible(design: Design, ref: str, categories=None) -> tuple[list[Part], int]:
    """The placeable parts that can serve the position on every bus it is on.

    Parameters
    ----------
    design : Design
        The design (its merged library). [1]
    ref : str
        The position's reference designator. [1]
    categories : iterable of str, optional
        Only parts of these categories. [1]

    Returns
    -------
    parts : list of Part
        In id order; the part there now included (when it matches the categories).
    excluded : int
        Parts of those categories that cannot serve the position.
    """
    places = positions(design, ref)
    cats = set(categories or ())
    expected = "one of " + ", ".join(POSITION_CATEGORIES)
    if "cable" in cats:
        raise InputError(M.CABLE_NOT_RANKED, field="category", value="cable",
                         expected=expected)
    unknown = cats - set(CATEGORIES)
    if unknown:
        raise InputError(M.UNKNOWN_CATEGORY, field="category", value=sorted(unknown)[0],
                         expected=expected)
    out, excluded = [], 0
    for _pid, part in sorted(design.library.placeable().items()):
        if part.category == "cable" or (cats and part.category not in cats):
            continue
        if any(can_serve(dev.part, part, dev, bus) for bus, dev in places):
            excluded += 1
            continue
        out.append(part)
    return out, excluded


def set_aside(design: Design, categories=None) -> dict:
    """The placeable parts :func:`eligible` does not consider, counted by why: ``cable``
    and ``category`` (outside ``categories``). [1]"""
    cats = set(categories or ())
    out = {"cable": 0, "category": 0}
    for part in design.library.placeable().values():
        if part.category == "cable":
            out["cable"] += 1
        elif cats and part.category not in cats:
            out["category"] += 1
    return out


def _bus_rows(places) -> list[dict]:
    """A row per bus of the position: its id, protocol, segment (on a bus of several)
    and role; a bridging part's row adds ``bridge`` and ``segments``, every segment it
    joins (``segment`` is the first, as the design lists them)."""
    rows = []
    for bus, dev in places:
        segs = [s.id for s in bus.segments if any(d.ref == dev.ref for d in s.devices)]
        row = {"bus": bus.id, "protocol": bus.protocol,
               "segment": segs[0] if segs and len(bus.segments) > 1 else None,
               "role": dev.role}
        if dev.is_bridge:
            row.update(bridge=True, segments=segs)
        rows.append(row)
    return rows


def bus_text(row: dict) -> str:
    """A bus of the position as the ranking's heading names it: ``bus sensors (i2c,
    segment main-3v3, peripheral)``; a bridging part by the segments it joins, ``bus
    sensors (i2c, bridge between segments main-3v3 and sensor-1v8)``."""
    if row.get("bridge") and len(row.get("segments", ())) > 1:
        inside = f"bridge between segments {and_list(row['segments'])}"
    else:
        inside = (f"segment {row['segment']}, " if row.get("segment") else "") + row["role"]
    return f"bus {row['bus']} ({row['protocol']}, {inside})"


# ============================================================================ summaries


def _summary_of(results: list[BusResult], places) -> tuple:
    """Status, worst margin, where it is, the figures, the ranked margins, and the status
    code of the worst check (None without one: the status across buses is set by it,
    not by a check the part cannot move), from engine results."""
    status = worst(r.status for r in results)
    best, where, margins, rank = None, None, [], None
    fixed, fixed_rank = None, -1  # the worst-status check the part cannot move
    for r, (_, dev) in zip(results, places, strict=True):
        for seg_id, line, c in r.all_checks():
            if not _ranks(c.id, dev, c.subject):
                if _RANK.get(c.status, 0) > fixed_rank:
                    fixed_rank = _RANK.get(c.status, 0)
                    fixed = {"bus": r.id, "segment": seg_id, "line": line, "id": c.id,
                             "subject": c.subject}
                continue
            # a margin that does not exist (its check says why) counts as −inf, as in a
            # batch; a yes/no check (no margin, no reason) has none to count: it can set
            # the worst only by its status, after any check of that status with a margin
            yes_no = c.margin is None and c.reason is None
            if yes_no and c.status == "pass":
                continue
            # a margin in volts (a translator's gate overdrive) is no fraction of a limit:
            # it sets the status, and is the worst only where no check of that status
            # has a relative margin; it is never ranked against fractions.  The worst is
            # a check of the worst status, then of the smallest margin: a warn is set by
            # a warning check, not by a passing one at a smaller margin
            key = worst_order(c, missing=-math.inf)
            if yes_no:  # after every check of its status with a margin, in a unit or not
                key = (key[0], True, math.inf)
            _, absolute, m = key
            if not absolute and not yes_no:
                margins.append(m)
            if rank is None or key < rank:
                rank, best = key, None if yes_no else m
                where = {"bus": r.id, "segment": seg_id, "line": line, "id": c.id,
                         "subject": c.subject}
                if yes_no:
                    where["reason"] = M.WORST_YES_NO
                if absolute and not yes_no:
                    where["margin_unit"] = c.margin_unit
                if c.margin is None and c.reason:  # why the worst has no number
                    where["reason"] = c.reason
    where = _with_status_by(where, None if rank is None else -rank[0], fixed, fixed_rank)
    figures = {}
    for r, (bus, dev) in zip(results, places, strict=True):
        if bus.protocol in OPEN_DRAIN_PROTOCOLS:
            group = r
            if r.segments:
                seg = next(s.id for s in bus.segments if any(d.ref == dev.ref
                                                               for d in s.devices))
                group = next(s for s in r.segments if s.id == seg)
            figs = FIGURES["open-drain"]
        else:
            group, figs = r, bus_figures(bus.protocol)
        figures[r.id] = {n: FigureCell(_fig(group, n), u, _why(group, n)) for n, u in figs}
    return status, best, where, figures, sorted(margins), None if rank is None else -rank[0]


def where_text(wc: dict, multi: bool) -> str:
    """Where a check is, as the ranking names it: ``main-3v3 Noise margin low SDA``; a
    line's check with its signal in capitals, as ``pinlib check`` writes it, and its
    subject, the receiver (``SCLK Overshoot U3``: on a route each receiver has its own)."""
    return " ".join(x for x in where_parts(wc, multi) if x)


def where_parts(wc: dict, multi: bool) -> tuple[str, str]:
    """:func:`where_text` in its two parts, the place and the check: ``("main-3v3",
    "Noise margin low SDA")``; the place is the bus (``multi``: the position is on more
    than one) and the segment, empty where neither is named.  The workbook sets the place
    apart from the check in the same words."""
    line = wc.get("line")
    place = " ".join(x for x in (wc["bus"] if multi else None, wc.get("segment")) if x)
    check = " ".join(x for x in (line.upper() if line else None, check_label(wc["id"]),
                                 wc.get("subject")) if x)
    return place, check


def _with_status_by(where: dict | None, rank: int | None, fixed: dict | None,
                    fixed_rank: int) -> dict | None:
    """``where`` with ``status_by``: the check that sets a worse status than any check
    the candidate can move (a translator's gate drive elsewhere on the bus warns for
    every part at the position), so the ranking says where the status comes from."""
    if fixed is None or fixed_rank <= 0 or (rank is not None and fixed_rank <= rank):
        return where
    return {**(where or {k: fixed[k] for k in ("bus", "segment", "line", "id", "subject")}),
            "status_by": fixed}


class FigureCell(tuple):
    """A candidate's figure: ``(value, unit)``, compared and unpacked as that pair, with
    ``reason``: why it has no number, where the engine says (``max_clock``: no part
    limits the clock, or no clock meets the timing); None beside a number."""

    def __new__(cls, value, unit: str, reason: str | None = None):
        cell = super().__new__(cls, (value, unit))
        cell.reason = reason if value is None else None
        return cell


def _worst_edge(bus) -> float | None:
    """The slowest far-end edge of a push-pull bus's lines, rise or fall [s]; None when
    no line has a finite one."""
    got = [float(f.value) for ln in bus.lines
           for f in (ln.figures.get("edge_rise_time"), ln.figures.get("edge_fall_time"))
           if f is not None and isinstance(f.value, (int, float))
           and not isinstance(f.value, bool) and math.isfinite(f.value)]
    return max(got) if got else None


def _why(group, name) -> str | None:
    f = group.figures.get(name)
    return None if f is None else f.reason


def _fig(group, name):
    if name == "worst_edge":
        return _worst_edge(group)
    f = group.figures.get(name)
    if f is None or f.value is None or isinstance(f.value, (bool, str)):
        return None
    return float(f.value)


def _candidate(part: Part, current: str, method: str, summary) -> Candidate:
    status, m, where, figures, margins, _ = summary
    return Candidate(part.id, part.title, part.category, status, m, where, figures,
                     part.id == current, method, margins=tuple(margins))


def _failed(part: Part, current: str, method: str, err: PinlibError) -> Candidate:
    return Candidate(part.id, part.title, part.category, "error", None, None, {},
                     part.id == current, method, err.message)


def _one(design: Design, ref: str, part: Part, places, buses=None):
    """Engine results of the buses in ``buses`` (all places by default) with the part
    in the position, evaluated in one run as :func:`~pinlib.engines.dispatch.
    check_design` evaluates a design (a waveform solved twice for the candidate is
    solved once; nothing is kept for the next)."""
    from pinlib.engines.dispatch import evaluate_bus

    swapped = design.with_parts({ref: part.id})
    with memo.run_scope(), memo.transient():
        return [evaluate_bus(swapped.bus(bus.id), swapped) for bus, _ in places
                if buses is None or bus.id in buses]


# ============================================================================ ranking


def rank_candidates_slow(design: Design, ref: str, *, categories=None,
                         progress=None) -> Ranking:
    """Rank the candidates of a position one at a time: the design rebuilt with each
    (:meth:`~pinlib.model.design.Design.with_parts`) and its buses evaluated by their
    engines.  Same arguments and result as :func:`rank_candidates`."""
    places = _per_bus(positions(design, ref))
    parts, excluded = eligible(design, ref, categories)
    current = places[0][1].part_id
    out = []
    with progress_bar(len(parts), desc=f"candidates for {ref}", unit="part",
                      enabled=progress) as bar:
        for part in parts:
            try:
                out.append(_candidate(part, current, "per-candidate",
                                      _summary_of(_one(design, ref, part, places), places)))
            except PinlibError as err:
                out.append(_failed(part, current, "per-candidate", err))
            bar.update(1)
    out.sort(key=Candidate.sort_key)
    return Ranking(design.title, ref, current, _bus_rows(places), out, excluded,
                   len(design.library.placeable()), set_aside=set_aside(design, categories))


def _batch_summaries(bus: Bus, dev: Device, design: Design, ref: str, parts: list[Part],
                     collected) -> list[tuple]:
    """Per candidate: (status code, worst margin, where, figures) on one open-drain bus,
    from one batch."""
    bb = ob.build(bus, design, ob.WorstCase(len(parts)), swap=(ref, parts), collected=collected)
    cols, codes, where, use, yes_no = [], [], [], [], []
    status = np.zeros(len(parts), dtype=np.int8)
    fixed_code = np.full(len(parts), -1, dtype=np.int8)
    fixed: list[dict | None] = [None] * len(parts)
    single = len(bus.segments) == 1
    for seg_id, c in bb.checks():
        status = np.maximum(status, c.status)
        if c.id in OWN_CHECKS and not dev.is_bridge or not _ranks(c.id, dev):
            # the worst-status check the part cannot move, per variant (as _summary_of)
            st = np.broadcast_to(np.asarray(c.status, dtype=np.int8), (len(parts),))
            for j in np.flatnonzero(st > fixed_code):
                subject = _batch_subject(c, int(j))
                if c.id in OWN_CHECKS and _names(subject, ref):
                    continue
                fixed_code[j] = st[j]
                fixed[j] = {"bus": bus.id, "segment": None if single else seg_id,
                            "line": None, "id": c.id, "subject": subject}
        if c.id in OWN_CHECKS and not dev.is_bridge:
            # each variant's subject: the row that set its worst (as the engine names it)
            rows = np.zeros(len(parts), dtype=int) if c.row is None else \
                np.broadcast_to(c.row, (len(parts),))  # one row: no index kept
            subjects = ([None] * len(parts) if not c.names or (c.row is None and
                                                                 len(c.names) > 1)
                        else [c.names[int(r)] for r in rows])
            counts = np.array([_names(x, ref) for x in subjects], dtype=bool)
        else:
            counts = np.full(len(parts), _ranks(c.id, dev))
        code = np.broadcast_to(c.status, (len(parts),))
        truth = c.margin is None  # a yes/no check: it counts where it is not a pass
        if truth:
            counts = counts & (code > 0)
        if not counts.any():
            continue
        cols.append(np.full(len(parts), np.inf) if truth else
                    np.where(np.isnan(c.margin), -np.inf, c.margin))
        codes.append(code)
        use.append(counts)
        yes_no.append(truth)
        where.append({"bus": bus.id, "segment": None if single else seg_id,
                      "line": None, "id": c.id, "signal": c.signal, "check": c})
    seg = next(s.id for s in bus.segments if any(d.ref == ref for d in s.devices))
    sb = next(s for s in bb.segments if s.id == seg)
    out = []
    if cols:
        mg, ok = np.stack(cols, axis=1), np.stack(use, axis=1)
        # the worst: a check of the worst status, then of the smallest margin (as
        # _summary_of), among the checks that count for the candidate
        code = np.where(ok, np.stack(codes, axis=1), -1)
        worst_status = ok & (code == np.max(code, axis=1, keepdims=True))
        # a yes/no check (no margin) only after every check of its status with one
        truth = np.array(yes_no, dtype=bool)
        tier = np.where(worst_status, truth.astype(np.int8), 2)
        first = tier == tier.min(axis=1, keepdims=True)
        idx = np.nanargmin(np.where(first, np.where(truth, 0.0, mg), np.nan), axis=1)
    for j in range(len(parts)):
        figs = {}
        for name, unit in FIGURES["open-drain"]:
            arr = sb.figures.get(name)
            x = None if arr is None else float(arr[j])
            # an edge that never ends (a line that never reaches its level) has no number
            figs[name] = (x, unit) if x is None or math.isfinite(x) else FigureCell(
                None, unit, M.FIGURE_EDGE_NEVER_ENDS)
        if cols and ok[j].any():
            m = None if yes_no[idx[j]] else float(mg[j, idx[j]])
            w = dict(where[idx[j]])
            c = w.pop("check")
            if c.id in DEVICE_CHECKS:  # the device it is of, as the engine names it
                w["subject"] = _batch_subject(c, j)
            if m is None:
                w["reason"] = M.WORST_YES_NO
            ms = sorted(mg[j, ok[j] & ~truth].tolist())
            worst_code = int(code[j, idx[j]])
        else:
            m, w, ms, worst_code = None, None, [], None
        w = _with_status_by(w, worst_code, fixed[j], int(fixed_code[j]))
        out.append((int(status[j]), m, w, figs, ms, worst_code))
    return out


def _batch_subject(c, j: int) -> str | None:
    """The subject a batched check names for variant ``j`` (the row that set it)."""
    if not c.names:
        return None
    if c.row is None:
        return c.names[0] if len(c.names) == 1 else None
    rows = np.broadcast_to(c.row, (j + 1,)) if np.ndim(c.row) == 0 else c.row
    return c.names[int(rows[j])]


def rank_candidates(design: Design, ref: str, *, categories=None, progress=None) -> Ranking:
    """Rank every library part that could serve a position of a design.

    Parameters
    ----------
    design : Design
        A loaded design (its merged library is searched). [1]
    ref : str
        The reference designator of the position (``"U4"``). [1]
    categories : iterable of str, optional
        Only parts of these categories. [1]
    progress : bool, callable or None, optional
        Progress bar (see :func:`pinlib.core.progress.progress_bar`). [1]

    Returns
    -------
    Ranking
        Candidates best first: by status (pass, warn, fail; ``error`` last), then by
        worst margin, then by id.

    Raises
    ------
    DesignError
        When no device has that reference.
    """
    places = _per_bus(positions(design, ref))
    parts, excluded = eligible(design, ref, categories)
    current = places[0][1].part_id
    fast_buses = [bus for bus, dev in places
                  if bus.protocol in OPEN_DRAIN_PROTOCOLS and not dev.is_bridge]
    pp_buses = [bus for bus, dev in places
                if bus.protocol not in OPEN_DRAIN_PROTOCOLS and not dev.is_bridge]
    slow_buses = [bus.id for bus, _ in places if bus not in fast_buses + pp_buses]
    table = _Summaries(design, ref, parts, places, slow_buses, pp_buses)
    table.notes += _one_at_a_time_notes(places, fast_buses + pp_buses)
    table.notes += [batched_note(bus, pp_buses) for bus in pp_buses]
    collected = {bus.id: od.collect(bus, design) for bus in fast_buses}
    # a unit is one part tried at one position (a part that stands at two places counts
    # twice); the library and design left out of the cyclic collector's walks meanwhile
    with older_objects_aside(), progress_bar(len(parts) * len(places),
                                             desc=f"candidates for {ref}",
                                             unit="part-position", enabled=progress) as bar:
        for bus in fast_buses:
            table.add_fast_bus(bus, collected[bus.id], bar)
        if pp_buses:
            table.add_pp_buses(bar)
        if slow_buses:
            table.add_slow_buses(bar)
    out = [table.candidate(p, current) for p in parts]
    out.sort(key=Candidate.sort_key)
    return Ranking(design.title, ref, current, _bus_rows(places), out, excluded,
                   len(design.library.placeable()), table.notes,
                   set_aside=set_aside(design, categories))


def _one_at_a_time_notes(places, fast_buses: list) -> list[str]:
    """A note for each bus whose candidates are evaluated one at a time (a bridging part)."""
    return [f"bus {bus.id}: candidates evaluated one at a time (a bridging part)"
            for bus, _ in places if bus not in fast_buses]


class _Summaries:
    """A ranking being filled: per candidate and bus its summary (status code, margin,
    where, figures, margins), each candidate's method and first error, and the notes."""

    def __init__(self, design: Design, ref: str, parts: list[Part], places, slow_buses: list,
                 pp_buses: list):
        self.design, self.ref, self.parts, self.places = design, ref, parts, places
        self.slow_buses, self.pp_buses = slow_buses, pp_buses
        self.notes: list[str] = []
        # per candidate and bus: (status code, margin, where, figures) or an error
        self.per: dict[str, dict] = {p.id: {} for p in parts}
        method = "per-candidate" if slow_buses else "batched" if pp_buses else "vectorized"
        self.methods = {p.id: method for p in parts}
        self.errors: dict[str, PinlibError] = {}

    def add_fast_bus(self, bus: Bus, collected, bar) -> None:
        """Every candidate on an open-drain bus, a batch per group of like parts."""
        dev = next(d for b, d in self.places if b is bus)
        lim = collected[0]
        groups: dict[tuple, list[Part]] = {}
        for p in self.parts:
            groups.setdefault(ob.structure(p, dev, bus, lim), []).append(p)
        for group in groups.values():
            try:
                rows = _batch_summaries(bus, dev, self.design, self.ref, group, collected)
            except PinlibError:
                rows = None
                self.notes.append(f"bus {bus.id}: a group of {len(group)} candidates fell "
                                  "back to one-at-a-time evaluation (a value the physics "
                                  "refuses)")
            if rows is None:
                self._one_by_one(bus, dev, group)
            else:
                for p, row in zip(group, rows, strict=True):
                    self.per[p.id][bus.id] = row
            bar.update(len(group))

    def _one_by_one(self, bus: Bus, dev: Device, group: list[Part]) -> None:
        for p in group:
            self.methods[p.id] = "per-candidate"
            try:
                res = _one(self.design, self.ref, p, self.places, {bus.id})[0]
            except PinlibError as err:
                self.errors.setdefault(p.id, err)
                continue
            st, m, w, f, ms, wc = _summary_of([res], [(bus, dev)])
            self.per[p.id][bus.id] = (STATUSES.index(st), m, w, f[bus.id], ms, wc)

    def add_pp_buses(self, bar) -> None:
        """Every candidate on the push-pull buses, their edges solved in batches."""
        sub = [(b, d) for b, d in self.places if b in self.pp_buses]
        step = len(self.pp_buses)
        for p, got in evaluate_batched(self.design, self.ref, self.parts, self.pp_buses,
                                       tick=lambda: bar.update(step)):
            if isinstance(got, PinlibError):
                self.errors.setdefault(p.id, got)
            else:
                for r, pl in zip(got, sub, strict=True):
                    st, m, w, f, ms, wc = _summary_of([r], [pl])
                    self.per[p.id][r.id] = (STATUSES.index(st), m, w, f[r.id], ms, wc)

    def add_slow_buses(self, bar) -> None:
        """Every candidate on the buses evaluated one at a time, the design rebuilt with it."""
        sub = [(b, d) for b, d in self.places if b.id in self.slow_buses]
        for p in self.parts:
            try:
                results = _one(self.design, self.ref, p, self.places, set(self.slow_buses))
            except PinlibError as err:
                self.errors.setdefault(p.id, err)
                bar.update(len(self.slow_buses))
                continue
            for r, pl in zip(results, sub, strict=True):
                st, m, w, f, ms, wc = _summary_of([r], [pl])
                self.per[p.id][r.id] = (STATUSES.index(st), m, w, f[r.id], ms, wc)
            bar.update(len(self.slow_buses))

    def candidate(self, p: Part, current: str) -> Candidate:
        """One candidate over every bus of the position: its worst status and margin."""
        if p.id in self.errors:
            return _failed(p, current, self.methods[p.id], self.errors[p.id])
        status, best, where, figures, margins, rank = 0, None, None, {}, [], None
        for bus, _ in self.places:
            st, m, w, f, ms, wc = self.per[p.id][bus.id]
            status = max(status, st)
            # as on one bus: the worst check's own status first (not its bus's, which a
            # check the part cannot move may set), a relative margin before one in
            # volts, a yes/no check (no margin) last
            yes_no = m is None and (w or {}).get("reason") == M.WORST_YES_NO
            wc = st if wc is None else wc
            key = (-wc, True, math.inf) if yes_no else (-wc, bool(w and w.get("margin_unit")), m)
            if (m is not None or yes_no) and (rank is None or key < rank):
                rank, best, where = key, m, w
            elif where is None and w is not None and w.get("status_by"):
                where = w
            figures[bus.id] = f
            margins.extend(ms)
        if where is not None and "signal" in where:
            where = _where(where)
        return Candidate(p.id, p.title, p.category, STATUSES[status], best, where, figures,
                         p.id == current, self.methods[p.id], margins=tuple(sorted(margins)))


def _where(w: dict) -> dict:
    """A batch check's place in the form engine results give (line checks of an
    open-drain bus sit on their segment, with the signal as subject's first word)."""
    out = {"bus": w["bus"], "segment": w["segment"], "line": None, "id": w["id"],
           "subject": w.get("subject", w.get("signal"))}
    out.update({k: w[k] for k in ("margin_unit", "status_by", "reason") if k in w})
    return out
