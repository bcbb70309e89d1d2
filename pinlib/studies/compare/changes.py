"""Change lists: the checks whose status changed, the figures that moved beyond the
threshold, and the part values behind the change, between two snapshots or against the
design's saved one."""

from __future__ import annotations

import math
from dataclasses import field
from typing import Any

from pinlib.core import messages as M
from pinlib.core.errors import InputError
from pinlib.core.labels import check_label, figure_label, plural_s, shown_figures
from pinlib.core.quantity import Threshold, format_si, format_threshold
from pinlib.core.valueclass import value_class
from pinlib.library.sources import NEEDS_SOURCE
from pinlib.model.result import (
    SOFT_TAGS,
    beyond_shown,
    compared_cells,
    signed_margin_text,
    soft_limit_beyond,
)
from pinlib.studies.compare.figures import (
    CHOSEN_PARTS,
    DEFAULT_THRESHOLD,
    _checks,
    _is_number,
    figure_rows,
    figure_value_text,
    format_change,
    format_figure,
)
from pinlib.studies.compare.renames import (
    find_renames,
    one_sided_groups,
    renamed_snapshot,
    top_id,
)
from pinlib.studies.compare.snapshots import load_snapshot, snapshot
from pinlib.studies.snapshotfile import snapshot_path

#: Format tag of a change list's JSON form.
CHANGES_FORMAT = "pinlib.changes/1"

_ARROW = "→"


@value_class
class StatusChange:
    """A check whose status changed (``old`` or ``new`` is None for a check that appeared
    or disappeared)."""

    path: str
    check: str
    subject: str | None
    old: str | None
    new: str | None
    unit: str = ""
    old_value: Any = None
    new_value: Any = None
    old_limit: Any = None
    new_limit: Any = None
    old_margin: float | None = None
    new_margin: float | None = None
    source: str = ""
    message: str = ""
    old_subject: str | None = None  # when the worst case moved to another device
    #: the unit of each side's margin where it is absolute (``Check.margin_unit``: a
    #: gate overdrive in V, an SPI timing slack in s); None where it is relative
    old_margin_unit: str | None = None
    new_margin_unit: str | None = None
    #: why each side only warns beyond its limit (:func:`pinlib.model.result.soft_beyond`:
    #: ``"generic"``, ``"estimate"``, ``"rule"``), None where it does not
    old_soft: str | None = None
    new_soft: str | None = None
    #: each side's details (what a yes/no check compared), not in the JSON
    old_details: dict | None = None
    new_details: dict | None = None

    def format(self) -> str:
        where = f"{self.path} {check_label(str(self.check))}" + (
            f" {self.subject}" if self.subject else "")
        if self.old_subject:
            where += f" (was {self.old_subject})"
        old = self.old or "(absent)"
        new = self.new or "(absent)"
        values = self.values_text()
        text = f"{where}: {old} {_ARROW} {new}" + (f" ({values})" if values else "")
        if self.source:
            text += f"; source: {self.source}"
        return text

    @property
    def yes_no(self) -> bool:
        """A yes/no check: its value is no number to show."""
        return isinstance(self.old_value, bool) or isinstance(self.new_value, bool)

    def values_text(self) -> str:
        """The check's value (before → after, or the one side present) and its limit, as
        :meth:`format` shows them in parentheses: ``117 mV → 420 mV, limit 940 mV``; a
        limit that a side warns beyond only (a class's typical value, an estimate, a rule
        of thumb) with that side's tag, as ``pinlib check`` puts it.  A yes/no check
        shows what it compared (:func:`_yes_no_text`), or nothing."""
        if self.yes_no:
            return _yes_no_text(self)
        vals = [self.value_text()]
        limit = self.limit_text()
        if limit:
            vals.append(f"limit {limit}")
        return ", ".join(vals)

    def value_text(self) -> str:
        """The check's value as text: before → after (once where it stayed: the limit
        moved), or the one side present; a yes/no check's what it compared, or ""."""
        if self.yes_no:
            return _yes_no_text(self)
        if self.old is not None and self.new is not None:
            old, new = (format_figure(v, self.unit) for v in (self.old_value, self.new_value))
            return new if old == new else f"{old} {_ARROW} {new}"  # same: the limit moved
        return format_figure(self.new_value if self.new is not None else self.old_value,
                             self.unit)

    def limit_text(self) -> str:
        """The check's limit as text: before → after where it moved (a part's rating),
        else the side present's; "" for none (a yes/no check)."""
        limit = self.new_limit if self.new is not None else self.old_limit
        if limit is None or isinstance(limit, bool):
            return ""
        old_tag, new_tag = (SOFT_TAGS.get(x or "", "") for x in (self.old_soft, self.new_soft))
        if self.old is not None and self.new is not None:
            # a soft limit made firm (an estimate re-recorded from a datasheet, the check
            # failing now) shows both sides; otherwise the one tag present is the limit's
            firmed = bool(old_tag) and not new_tag and self.new == "fail"
            if self.old_limit != self.new_limit or firmed or (old_tag and new_tag
                                                              and old_tag != new_tag):
                return (f"{format_figure(self.old_limit, self.unit)}{old_tag} {_ARROW} "
                        f"{format_figure(self.new_limit, self.unit)}{new_tag}")
            return format_figure(limit, self.unit) + (new_tag or old_tag)
        return format_figure(limit, self.unit) + (new_tag if self.new is not None else old_tag)

    def to_json(self) -> dict:
        out = {"path": self.path, "check": self.check, "subject": self.subject,
               "old": self.old, "new": self.new, "unit": self.unit,
               "old_value": self.old_value, "new_value": self.new_value,
               "old_limit": self.old_limit, "new_limit": self.new_limit,
               "old_margin": self.old_margin, "new_margin": self.new_margin,
               "source": self.source, "message": self.message,
               "old_subject": self.old_subject}
        # only where a margin is absolute, as on a check
        for key in ("old_margin_unit", "new_margin_unit"):
            if getattr(self, key) is not None:
                out[key] = getattr(self, key)
        for key in ("old_soft", "new_soft"):  # only where a side warns beyond its limit
            if getattr(self, key) is not None:
                out[key] = getattr(self, key)
        return out


def _yes_no_text(c: StatusChange) -> str:
    """What a yes/no check compared, before → after where it differs: an SPI mode
    against the modes the part states (``mode 0; U7's modes 0, 3 → mode 3``), a
    switched rail's clamp current into a device whose pins are not power-off tolerant
    (``clamp current SDA 1.2 mA, SCL 1.2 mA``); "" for another (its message says it),
    never the bare yes and no."""
    sides = [(d if s is not None else None) for s, d in ((c.old, c.old_details),
                                                        (c.new, c.new_details))]
    cells = [compared_cells(c.check, d) if d is not None else None for d in sides]
    if any(cells):
        def both(i: int) -> str:
            got = [x[i] for x in cells if x]
            if len(got) == 1 or got[0] == got[1]:
                return got[0]
            a, b = got[0].split(" ", 1), got[1].split(" ", 1)
            if len(b) == 2 and a[0].rstrip("s") == b[0].rstrip("s"):  # "modes 0, 3 → 3"
                return f"{got[0]} {_ARROW} {b[1]}"
            return f"{got[0]} {_ARROW} {got[1]}"

        whose = f"{c.subject}'s " if c.subject else "the part's "
        return f"{both(0)}; {whose}{both(1)}"
    if c.check == "power-off":
        shown = [", ".join(f"{sig} {format_si(i, 'A')}" for sig, i in
                           (d or {}).get("clamp_current", {}).items()
                           if _is_number(i)) for d in sides]
        got = [x for x in shown if x]
        if not got:
            return ""
        text = got[0] if len(got) == 1 or got[0] == got[1] else f"{got[0]} {_ARROW} {got[1]}"
        return f"clamp current {text}"
    return ""


@value_class
class MarginChange:
    """A check whose status stayed but whose margin moved by more than the threshold, in
    points and as a fraction of itself (:func:`_margin_moved`), so that a substitution
    that brings a check to its limit says so though the check still passes."""

    change: StatusChange  # old and new the same status

    def format(self) -> str:
        c = self.change
        where = f"{c.path} {check_label(str(c.check))}" + (f" {c.subject}" if c.subject else "")
        if c.old_subject:
            where += f" (was {c.old_subject})"
        values = c.values_text()
        return (f"{where}: margin {signed_margin_text(c.old_margin, c.old_margin_unit)} "
                f"{_ARROW} {signed_margin_text(c.new_margin, c.new_margin_unit)}"
                + (f" ({values})" if values else ""))

    def to_json(self) -> dict:
        """A status change's keys, with the one ``status`` in place of ``old``/``new``."""
        out = {}
        for key, value in self.change.to_json().items():
            if key == "old":
                out["status"] = self.change.new
            elif key != "new":
                out[key] = value
        return out


#: A relative margin at least this far above its limit (+100 %: a value at most half
#: its maximum, at least twice its minimum) is far from it: a move between two such
#: margins is not listed (:func:`_margin_moved`).
FAR_MARGIN = 1.0


def _margin_moved(o: dict, n: dict, threshold: float) -> bool:
    """Both margins numbers and apart by more than ``threshold`` in points (a margin of
    +75 % that fell to +0 %) and as a fraction of the old margin (a margin of +621 %
    that fell to +613 % moved 8 points, but only 1.3 % of itself: not listed).  A margin
    in a unit (``margin_unit``: volts, seconds) has no points: it moved when apart by
    more than ``threshold`` of itself, as a figure; one that changed its kind (a
    requirement of 0 that a part now records) moved.  Two relative margins both beyond
    the range the text shows, on the same side (``> +999 %`` both, :func:`beyond_shown`),
    or both at least :data:`FAR_MARGIN` above the limit (``> +999 % → +977 %``, ``+189 %
    → +201 %``: far from the limit either way), did not move for a reader: not listed
    (the figures beside them say by how much)."""
    a, b = o.get("margin"), n.get("margin")
    if not (_is_number(a) and _is_number(b) and math.isfinite(a) and math.isfinite(b)):
        return False
    unit = o.get("margin_unit")
    if unit != n.get("margin_unit"):
        return True
    if unit is not None:
        return abs(b - a) > threshold * abs(a)
    side = beyond_shown(a)
    if (side and side == beyond_shown(b)) or min(a, b) >= FAR_MARGIN:
        return False
    return abs(b - a) > threshold and abs(b - a) > threshold * abs(a)


@value_class
class FigureChange:
    """A figure that moved beyond the threshold, changed kind, appeared or disappeared."""

    path: str
    name: str
    unit: str
    old: Any
    new: Any
    change: float | None
    kind: str  # "moved", "changed", "added", "removed"

    def format(self) -> str:
        """``path: Label old → new (change)``, the figure under its readable label."""
        change = (format_change(self.change, self.old, self.new, self.unit)
                  if self.kind in ("moved", "same")
                  else {"added": "(new)", "removed": "(gone)"}.get(self.kind, ""))
        old, new = (figure_value_text(self.name, v, self.unit) for v in (self.old, self.new))
        return f"{self.path}: {figure_label(self.name)} {old} {_ARROW} {new} {change}".rstrip()

    def to_json(self) -> dict:
        return {"path": self.path, "name": self.name, "unit": self.unit, "old": self.old,
                "new": self.new,
                "change": None if self.change is None or math.isinf(self.change)
                else self.change, "kind": self.kind}


def shown_changes(changes) -> list:
    """Figure changes (anything with ``path``, ``name``, ``old``, ``new``) each quantity
    once, by place in the order given and in table order within a place: a line's
    ``X_sda``/``X_scl`` and ``X``, ``pullup`` and ``pullup_resistor`` shown once when
    they are the same numbers (:func:`pinlib.core.labels.shown_figures`)."""
    by_path: dict[str, dict] = {}
    for c in changes:
        by_path.setdefault(c.path, {})[c.name] = c
    return [named[name] for named in by_path.values()
            for name in shown_figures(named, same=lambda a, b: (a.old, a.new) == (b.old, b.new))]


def value_label(key: str) -> str:
    """A value's dotted key as an engineer reads it: ``pins.sda.c_in`` -> ``SDA c_in``,
    ``sides.b.pins.scl.v_il`` -> ``side b SCL v_il``, ``timing.t_valid`` -> ``t_valid``."""
    parts = key.split(".")
    out = []
    i = 0
    while i < len(parts):
        p = parts[i]
        if p == "sides" and i + 1 < len(parts):
            out.append(f"side {parts[i + 1]}")
            i += 2
            continue
        if p == "pins" and i + 1 < len(parts):
            out.append(parts[i + 1].upper())
            i += 2
            continue
        if p == "timing" and i + 1 < len(parts):
            i += 1
            continue
        out.append(p)
        i += 1
    return " ".join(out)


def _show_value(entry: dict | None) -> str:
    if entry is None:
        return "(none)"
    if "scale" in entry:
        th = Threshold(entry["scale"], entry["offset"])
        shown = entry.get("text") or format_threshold(th)
        if th.relative and entry.get("value") is not None:
            shown += f" ({format_si(entry['value'], 'V')} at {format_si(entry['vdd'], 'V')})"
        return shown
    v = entry.get("value")
    if isinstance(v, bool):  # a setting, as `pinlib parts show` prints it
        return "true" if v else "false"
    if isinstance(v, str) or v is None:
        return format_figure(v, "")
    if isinstance(v, list):  # a list the part states (its SPI modes), as the file writes it
        return "[" + ", ".join(str(x) for x in v) + "]"
    return format_si(v, entry.get("unit", ""))


def _same_value(a: dict | None, b: dict | None) -> bool:
    if a is None or b is None:
        return a is b
    if "scale" in a or "scale" in b:
        return (math.isclose(a.get("scale", 0.0), b.get("scale", 0.0), rel_tol=1e-12,
                             abs_tol=1e-15)
                and math.isclose(a.get("offset", 0.0), b.get("offset", 0.0), rel_tol=1e-12,
                                 abs_tol=1e-15))
    va, vb = a.get("value"), b.get("value")
    if _is_number(va) and _is_number(vb):
        same = math.isclose(va, vb, rel_tol=1e-12, abs_tol=0.0)
    else:
        same = va == vb and a.get("unit") == b.get("unit")
    return same and (_basis(a) == _basis(b) or not (_stated(a) and _stated(b)))


def _stated(entry: dict) -> bool:
    """A value a part states with its provenance (a number, a level, a list of SPI
    modes), whose basis counts in a comparison; not a setting (``function``, ``drive``,
    ``off_tolerant``), whose basis is only its file's."""
    return "text" in entry or "scale" in entry or isinstance(entry.get("value"), list)


def _basis(entry: dict | None) -> str | None:
    return (entry or {}).get("basis") or None


def _provenance_bits(shown: dict, part_id: str | None, *, with_basis: bool = True
                     ) -> list[str]:
    """What a value line says of where one side's value comes from: its source (with
    its basis in brackets unless ``with_basis`` is false, where the line shows the basis
    moving), else its basis, and the part file that set it where that is not
    ``part_id``; a setting no file states, that it is the part format's default."""
    bits = []
    basis = _basis(shown)
    tag = f" [{basis}]" if basis and with_basis else ""
    source = str(shown.get("source") or "").strip()  # a blank one names nothing
    if source:
        bits.append(f"source: {source}{tag}")
    elif basis in NEEDS_SOURCE:
        bits.append(f"basis: {basis}, no source named" if with_basis else "no source named")
    elif tag:
        bits.append(f"basis: {basis}")
    if shown.get("default"):
        bits.append("not stated: the part format's default")
    if shown.get("origin") and shown["origin"] != part_id:
        bits.append(f"set in {shown['origin']}")
    return bits


@value_class
class ValueChange:
    """One part value that differs between the two snapshots."""

    key: str
    old: dict | None
    new: dict | None
    #: False for a value of a pin no bus of the design connects (it changes no result)
    connected: bool = True
    #: The pin a timing value concerns (an SPI peripheral's ``t_valid``: its CIPO pin)
    timing_pin: str | None = None

    @property
    def label(self) -> str:
        return value_label(self.key)

    @property
    def pin(self) -> str | None:
        """The pin the value belongs to (``pins.cipo.r_out`` -> ``cipo``; a timing value
        its :attr:`timing_pin`), else None."""
        return _pin_of(self.key) or self.timing_pin

    @property
    def basis_moved(self) -> bool:
        """True where both sides state the value and its basis differs (a class's typical
        value that a datasheet's replaced, the same number or not)."""
        return (self.old is not None and self.new is not None and _stated(self.old)
                and _stated(self.new) and _basis(self.old) != _basis(self.new))

    def format(self, ref: str, part_id: str | None = None,
               old_part: str | None = None) -> str:
        """``U4 SDA c_in 8 pF → 80 pF, source: … [estimate]``; the part file that set
        the value is named when it is not ``part_id`` itself (an inherited value).  A
        basis that changed shows both, after the value (``8 pF [generic → datasheet]``,
        the number shown once where it stayed); a value the new part does not state
        names whose the source shown is (``old_part``'s, the part before)."""
        old, new = _show_value(self.old), _show_value(self.new)
        text = f"{ref} {self.label} {new if old == new else f'{old} {_ARROW} {new}'}"
        moved = self.basis_moved
        if moved:
            text += (f" [{_basis(self.old) or 'no basis'} {_ARROW} "
                     f"{_basis(self.new) or 'no basis'}]")
        gone = self.new is None and self.old is not None
        shown = self.old if gone else self.new
        owner = (old_part or part_id) if gone else part_id
        bits = _provenance_bits(shown, owner, with_basis=not moved)
        if not gone:
            return text + (", " + ", ".join(bits) if bits else "")
        whose = (f"not stated by {part_id}" if part_id and old_part and part_id != old_part
                 else "no longer stated")
        before = f"{old_part}'s " if old_part and old_part != part_id else "before: "
        return text + f", {whose}" + (f"; {before}" + ", ".join(bits) if bits else "")

    def to_json(self) -> dict:
        return {"key": self.key, "label": self.label, "old": self.old, "new": self.new,
                "connected": self.connected}


@value_class
class PartChange:
    """A device whose part changed, or whose part's resolved values differ."""

    ref: str
    old_part: str | None
    new_part: str | None
    buses: list[str] = field(default_factory=list)
    old_file: str | None = None
    new_file: str | None = None
    values: list[ValueChange] = field(default_factory=list)

    def lines(self) -> list[str]:
        head = f"{self.ref}"
        if self.old_part != self.new_part:
            head += f" part {self.old_part or '(absent)'} {_ARROW} {self.new_part or '(absent)'}"
            if self.new_file:
                head += f" ({self.new_file})"
        else:
            head += f" part {self.new_part}: values differ"
        if self.buses:
            head += f"; on {', '.join(self.buses)}"
        if self.old_part is None or self.new_part is None:
            return [head]  # a device placed or removed: its values are not changes
        return [head] + ["  " + v.format(self.ref, self.new_part, self.old_part)
                         for v in self.connected
                         ] + ["  " + line for line in self.unconnected_lines()]

    @property
    def connected(self) -> list[ValueChange]:
        """The values that differ on pins the board connects (and the part's others)."""
        return [v for v in self.values if v.connected]

    def unconnected_lines(self) -> list[str]:
        """One line per pin no bus connects whose values differ: they change no result,
        so they are counted, not listed (``U12 CIPO: 9 values differ, a pin no bus
        connects``)."""
        counts: dict[str, int] = {}
        for v in self.values:
            if not v.connected:
                counts[v.pin] = counts.get(v.pin, 0) + 1
        return [f"{self.ref} {pin.upper()}: {n} value{plural_s(n)} "
                f"differ{'s' if n == 1 else ''}, a pin no bus connects"
                for pin, n in counts.items()]

    def to_json(self) -> dict:
        return {"ref": self.ref, "old_part": self.old_part, "new_part": self.new_part,
                "buses": list(self.buses), "old_file": self.old_file,
                "new_file": self.new_file, "values": [v.to_json() for v in self.values]}


@value_class
class ChangeList:
    """What changed between two snapshots (see :func:`compare`)."""

    threshold: float
    old_status: str | None = None
    new_status: str | None = None
    status_changes: list[StatusChange] = field(default_factory=list)
    figure_changes: list[FigureChange] = field(default_factory=list)
    margin_changes: list[MarginChange] = field(default_factory=list)
    part_changes: list[PartChange] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)
    old_created: str | None = None
    new_created: str | None = None
    # (kind, old name, new name): a bus or a device reference renamed, found by content
    renames: list[tuple] = field(default_factory=list)
    # (side, kind, id, checks): a bus or coupling present on one side only ("absent"
    # or "new"), counted instead of listed check by check
    groups: list[tuple] = field(default_factory=list)

    @property
    def empty(self) -> bool:
        """True when no check changed status, no figure moved, no part value differs and
        no check's margin moved, no bus or coupling appeared or disappeared (a rename
        alone leaves it empty)."""
        return not (self.status_changes or self.figure_changes or self.part_changes
                    or self.groups or self.margin_changes)

    def margin_heading(self) -> str:
        """The heading of :attr:`margin_changes`: points for the relative margins, and
        how a margin in volts or seconds counts as moved where the list holds one
        (:func:`_margin_moved`)."""
        pts = f"{self.threshold * 100:g}"
        units = any(c.change.old_margin_unit or c.change.new_margin_unit
                    for c in self.margin_changes)
        how = (f"{pts} points, or {pts} % of themselves in volts or seconds" if units
               else f"{pts} points")
        return f"Margins that moved more than {how} (status unchanged)"

    def rename_lines(self) -> list[str]:
        """``bus i2c renamed to sensors-bus``, ``U6 renamed to U16``."""
        return [f"{'bus ' if kind == 'bus' else ''}{old} renamed to {new}"
                for kind, old, new in self.renames]

    def group_lines(self) -> list[str]:
        """``bus i2c (23 checks) is absent now``, ``bus sensors-bus (23 checks) is new``."""
        return [f"{kind} {gid} ({n} check{plural_s(n)}) is "
                f"{'absent now' if side == 'absent' else 'new'}"
                for side, kind, gid, n in self.groups]

    def to_json(self) -> dict:
        return {
            "format": CHANGES_FORMAT,
            "threshold": self.threshold,
            "status": {"old": self.old_status, "new": self.new_status},
            "old_created": self.old_created,
            "new_created": self.new_created,
            "empty": self.empty,
            "status_changes": [c.to_json() for c in self.status_changes],
            "figure_changes": [c.to_json() for c in self.figure_changes],
            "margin_changes": [c.to_json() for c in self.margin_changes],
            "part_changes": [c.to_json() for c in self.part_changes],
            "renames": [{"kind": k, "old": o, "new": n} for k, o, n in self.renames],
            "groups": [{"side": sd, "kind": k, "id": g, "checks": n}
                       for sd, k, g, n in self.groups],
            "notes": list(self.notes),
        }

    def format_text(self) -> str:
        """The change list as plain text, one item a line."""
        pct = f"{self.threshold * 100:g} %"
        when = f" saved {self.old_created}" if self.old_created else ""
        out = [f"Changes against the snapshot{when}: status {self.old_status or '—'} "
               f"{_ARROW} {self.new_status or '—'}"]
        renamed = "; ".join(self.rename_lines())
        if self.empty and renamed:
            out.append(f"  {renamed}; no other change")
        elif self.empty:
            out.append(f"  no check changed status, no figure moved more than {pct}, "
                       "no part value differs")
        elif renamed:
            out.append(f"  {renamed}; below in the new names")
        if self.groups:
            out.append("  " + "; ".join(self.group_lines()))
        if self.status_changes:
            out.append("Checks whose status changed:")
            out += ["  " + c.format() for c in self.status_changes]
        if self.margin_changes:
            out.append(self.margin_heading() + ":")
            out += ["  " + c.format() for c in self.margin_changes]
        if self.figure_changes:
            out.append(f"Figures that moved more than {pct}:")
            out += ["  " + c.format() for c in shown_changes(self.figure_changes)]
        if self.part_changes:
            out.append("Part values behind the change:")
            for pc in self.part_changes:
                out += ["  " + line for line in pc.lines()]
        out += [f"Note: {n}" for n in self.notes]
        return "\n".join(out) + "\n"


def _paired_checks(old_c: dict, new_c: dict) -> list[tuple[dict | None, dict | None]]:
    """Match the checks of two results.

    A check is matched by its group, id, subject and order first.  The checks left over
    on both sides with the same group and id are then paired in order: an engine names
    the worst receiver or driver as a check's subject, so when a substitution moves
    the worst case to another device the check is the same one with a new subject.
    Whatever is still left appeared or disappeared.
    """
    pairs: list[tuple[dict | None, dict | None]] = []
    left_old = {k: v for k, v in old_c.items() if k not in new_c}
    pending: dict[tuple, list] = {}
    for k in left_old:
        pending.setdefault(k[:2], []).append(k)
    for k in new_c:
        if k in old_c:
            pairs.append((dict(old_c[k], _path=k[0]), dict(new_c[k], _path=k[0])))
        elif pending.get(k[:2]):
            ko = pending[k[:2]].pop(0)
            del left_old[ko]
            pairs.append((dict(old_c[ko], _path=ko[0]), dict(new_c[k], _path=k[0])))
        else:
            pairs.append((None, dict(new_c[k], _path=k[0])))
    pairs += [(dict(old_c[k], _path=k[0]), None) for k in left_old]
    return pairs


def _soft(check: dict | None) -> str | None:
    """Why a snapshot's check warns beyond its limit only (the tag beside its limit),
    else None."""
    if not check:
        return None
    return soft_limit_beyond(check.get("status"), check.get("margin"), check.get("details"))


def _details(check: dict | None) -> dict | None:
    details = (check or {}).get("details")
    return details if isinstance(details, dict) else None


def _pin_of(key: str) -> str | None:
    """The pin a value's dotted key is under (``pins.cipo.r_out`` -> ``cipo``), else None."""
    head, _, rest = key.partition(".")
    return rest.partition(".")[0] if head == "pins" and rest else None


#: The SPI signal whose pin each timing value concerns, by the device's role: a
#: peripheral's output times are its CIPO's, its setup and hold its COPI's; a
#: controller's the other way round, and its CS lead and lag (t_cs_setup, t_cs_hold) its
#: CS's.
_TIMING_SIGNAL = {
    "peripheral": {"timing.t_valid": "cipo", "timing.t_cs_valid": "cipo",
                   "timing.t_setup": "copi", "timing.t_hold": "copi",
                   "timing.t_cs_setup": "cs", "timing.t_cs_hold": "cs",
                   "timing.t_high": "sclk", "timing.t_low": "sclk"},
    "controller": {"timing.t_valid": "copi", "timing.t_setup": "cipo",
                   "timing.t_hold": "cipo", "timing.t_cs_setup": "cs",
                   "timing.t_cs_hold": "cs"},
}


def _timing_pins(entry: dict) -> dict[str, str]:
    """The pin each SPI timing value of a snapshot's device concerns, by the value's key
    (:data:`_TIMING_SIGNAL`; the pin found by the signal's function), for a part whose
    pin of that function is one pin."""
    from pinlib.core.protocols import protocol

    spi = protocol("spi")
    values = entry.get("values", {})
    by_function: dict[str, list] = {}
    for key, v in values.items():
        parts = key.split(".")
        if len(parts) == 3 and parts[0] == "pins" and parts[2] == "function":
            by_function.setdefault(v.get("value"), []).append(parts[1])
    out = {}
    for key, signal in _TIMING_SIGNAL.get(entry.get("role"), {}).items():
        pins = by_function.get(spi.function(signal), [])
        if len(pins) == 1:
            out[key] = pins[0]
    return out


def _idle_pins(old: dict | None, new: dict | None) -> set[str]:
    """The pins of a device that no bus connects on either board, or that one of the two
    parts lacks and the other's board leaves unconnected: their values change no result.
    A snapshot that does not say (written before pinlib recorded ``unconnected``, or a
    bridging part) counts every pin as connected."""
    if old is None or new is None or "unconnected" not in old or "unconnected" not in new:
        return set()

    # each side's pins no bus connects, and every pin of its part (each read once)
    sides = [(e["unconnected"], {_pin_of(k) for k in e.get("values", {})} - {None})
             for e in (old, new)]
    return {p for _, pins in sides for p in pins
            if all(p in off or p not in pins for off, pins in sides)}


def compare(old_snapshot: dict, new_snapshot: dict, *, threshold: float = DEFAULT_THRESHOLD
            ) -> ChangeList:
    """Compare two snapshots (or two plain results).

    Parameters
    ----------
    old_snapshot, new_snapshot : dict
        Snapshots from :func:`snapshot` (plain result JSON works too; then no part
        values can be compared).
    threshold : float
        A figure is listed when it moves by more than this fraction of its old value
        (keyword-only; 0.05 by default). [1]

    Returns
    -------
    ChangeList
        Checks whose status changed (and checks that appeared or disappeared), figures
        that moved beyond ``threshold`` (and yes/no or text figures that differ, and
        figures that appeared or disappeared), and for each device whose part id or
        resolved values differ, the values that differ with their source.
    """
    threshold = float(threshold)
    if not threshold >= 0:
        raise InputError(M.NEGATIVE_THRESHOLD, field="threshold", value=threshold,
                         expected="zero or more")
    cl = ChangeList(threshold, old_snapshot.get("status"), new_snapshot.get("status"),
                    old_created=old_snapshot.get("created"),
                    new_created=new_snapshot.get("created"))
    if old_snapshot.get("design") != new_snapshot.get("design"):
        cl.notes.append(f"the snapshot is of design {old_snapshot.get('design')!r}, this is "
                        f"{new_snapshot.get('design')!r}")
    buses, refs = find_renames(old_snapshot, new_snapshot)
    if buses or refs:
        old_snapshot = renamed_snapshot(old_snapshot, buses, refs)
        cl.renames = ([("bus", o, n) for o, n in buses.items()]
                      + [("device", o, n) for o, n in refs.items()])
    absent, fresh = one_sided_groups(old_snapshot, new_snapshot)
    cl.groups = ([("absent", kind, g, n) for g, (kind, n) in absent.items()]
                 + [("new", kind, g, n) for g, (kind, n) in fresh.items()])

    for o, n in _paired_checks(_checks(old_snapshot), _checks(new_snapshot)):
        os_, ns_ = (o or {}).get("status"), (n or {}).get("status")
        top = top_id((n or o)["_path"])
        # a bus or coupling on one side only is counted (group_lines); of a new one only
        # the checks that warn or fail are listed
        if top in absent or (top in fresh and ns_ in ("pass", None)):
            continue
        # a check whose status stayed is listed when its margin moved (MarginChange)
        if os_ == ns_ and not (o and n and _margin_moved(o, n, threshold)):
            continue
        ref = n or o
        old_subject = (o or {}).get("subject")
        change = StatusChange(
            ref["_path"], ref.get("id"), ref.get("subject"), os_, ns_, ref.get("unit", ""),
            (o or {}).get("value"), (n or {}).get("value"),
            (o or {}).get("limit"), (n or {}).get("limit"),
            (o or {}).get("margin"), (n or {}).get("margin"),
            ref.get("source", ""), ref.get("message", ""),
            old_subject if o and n and old_subject != ref.get("subject") else None,
            (o or {}).get("margin_unit"), (n or {}).get("margin_unit"),
            _soft(o), _soft(n), _details(o), _details(n))
        if os_ == ns_:
            cl.margin_changes.append(MarginChange(change))
        else:
            cl.status_changes.append(change)

    chosen = _chosen_of(old_snapshot) & _chosen_of(new_snapshot)
    for row in figure_rows(old_snapshot, new_snapshot, threshold=threshold):
        if row.moved and top_id(row.path) not in absent and top_id(row.path) not in fresh:
            cl.figure_changes.append(FigureChange(row.path, row.name, row.unit, row.old,
                                                  row.new, row.change, row.kind))
            if row.path in chosen and row.name in CHOSEN_PARTS and _is_number(row.old) \
                    and _is_number(row.new):
                cl.notes.append(M.AUTO_RESISTOR_CHANGED.format(
                    where=row.path, what=_CHOSEN_WHAT[row.name],
                    new=format_si(row.new, row.unit), old=format_si(row.old, row.unit)))

    old_p, new_p = old_snapshot.get("parts"), new_snapshot.get("parts")
    if old_p is None or new_p is None:
        if (old_p is None) != (new_p is None):
            cl.notes.append("one side is a plain result without part data: part values "
                            "are not compared")
    else:
        for ref in list(new_p) + [r for r in old_p if r not in new_p]:
            o, n = old_p.get(ref), new_p.get(ref)
            ov, nv = (o or {}).get("values", {}), (n or {}).get("values", {})
            idle = _idle_pins(o, n)
            timing = _timing_pins(n or o)
            values = [ValueChange(k, ov.get(k), nv.get(k),
                                  (_pin_of(k) or timing.get(k)) not in idle, timing.get(k))
                      for k in list(nv) + [k for k in ov if k not in nv]
                      if not _same_value(ov.get(k), nv.get(k))]
            old_id, new_id = (o or {}).get("part"), (n or {}).get("part")
            if old_id == new_id and not values:
                continue
            cl.part_changes.append(PartChange(
                ref, old_id, new_id, list((n or o).get("buses", [])),
                (o or {}).get("file"), (n or {}).get("file"), values))
        ol, nl = old_snapshot.get("library") or {}, new_snapshot.get("library") or {}
        if ol.get("folders") != nl.get("folders"):
            cl.notes.append("library folders differ: "
                            f"{_words(ol.get('folders'))} {_ARROW} {_words(nl.get('folders'))}")
        if ol.get("overrides") != nl.get("overrides"):
            cl.notes.append("built-in parts overridden by team parts differ: "
                            f"{_words(sorted(ol.get('overrides') or {}))} {_ARROW} "
                            f"{_words(sorted(nl.get('overrides') or {}))}")
    return cl


#: What each resistor pinlib chooses is called in a change list's note.
_CHOSEN_WHAT = {"pullup_resistor": "pull-up", "series_resistor": "series resistor"}


def _chosen_of(snap: dict) -> set[str]:
    """The places whose resistor pinlib chose, as a snapshot records them (none in one
    saved before pinlib recorded them, or where the entry is not a list of names)."""
    got = snap.get("chosen")
    return {x for x in got if isinstance(x, str)} if isinstance(got, list) else set()


def _words(items) -> str:
    """A list of names as a reader writes it (``builtin, team``; ``(none)``), not as
    Python prints it."""
    return ", ".join(str(x) for x in items or ()) or "(none)"


def compare_with_snapshot(design, result, threshold: float = DEFAULT_THRESHOLD, *,
                          damaged: list | None = None):
    """Compare a fresh result with the design's saved snapshot.

    Parameters
    ----------
    damaged : list, optional
        Given, a snapshot that cannot be read or is damaged (the InputError of
        :func:`load_snapshot`) is appended to it and ignored: None is returned, as for
        no snapshot.  Not given, that error is raised.

    Returns
    -------
    ChangeList or None
        None when the design has no snapshot (or was not loaded from a file).
    """
    if getattr(design, "path", None) is None:
        return None
    try:
        old = load_snapshot(snapshot_path(design))
    except InputError as exc:
        if damaged is None:
            raise
        damaged.append(exc)
        return None
    if old is None:
        return None
    return compare(old, snapshot(design, result), threshold=threshold)
