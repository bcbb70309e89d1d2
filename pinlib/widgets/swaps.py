"""Workbench 05: rerun a saved design after a substitution (:class:`SwapExplorer`)."""

from __future__ import annotations

import importlib.util
import os
from pathlib import Path

import ipywidgets as W
import numpy as np

from pinlib import charts, plotdata
from pinlib import messages as M
from pinlib.check import check_design
from pinlib.design import load_design
from pinlib.errors import PinlibError
from pinlib.quantity import format_si
from pinlib.report import format_value
from pinlib.widgets.common import (
    _CELL,
    _HEAD,
    _LABEL,
    _NUM,
    _WIDE,
    ChartView,
    StaticView,
    _badge,
    _caution_html,
    _e,
    _error_html,
    _inline_error,
    _margin,
    _note,
    _Panel,
    _set_options,
    checks_table,
    find_file,
)

# =========================================================================== swaps


class SwapExplorer(_Panel):
    """Rerun a saved design after a substitution: the change list, charts, candidates.

    Parameters
    ----------
    path : path
        The design file (relative to the working folder or a folder above it).
    folders : iterable of paths
        Extra team library folders.

    Attributes
    ----------
    design, result : the design as saved and its result.
    swapped, swapped_result : the design with the substitutions and its result (the
        same as ``design``/``result`` while there are none).
    swaps : dict of str to str
        New part id by reference designator.
    changes : ChangeList or None
        :func:`pinlib.compare.compare` of the two snapshots.
    refused : list of str
        Why the last substitution asked for was refused (empty when applied).
    before, after : ChartView
        The chart of the first bus the substituted device is on, before and after.
    ranking : object or None
        What :mod:`pinlib.candidates` ranked for the position, when that module exists.
    """

    def __init__(self, path: str | os.PathLike, *, folders=()):
        super().__init__()
        self.folders = [Path(f) for f in folders]
        self.swaps: dict[str, str] = {}
        self.refused: list[str] = []
        self.changes = None
        self.ranking = None
        self.path_box = W.Text(value=str(path), description="Design", style=_LABEL,
                               layout=W.Layout(width="520px"))
        self.load_button = W.Button(description="Load", layout=W.Layout(width="70px"))
        self.path_error = W.HTML()
        self.ref = W.Dropdown(options=[], description="Device", style=_LABEL, layout=_WIDE)
        self.new_part = W.Dropdown(options=[], description="Put there", style=_LABEL,
                                   layout=_WIDE)
        self.apply_button = W.Button(description="Apply", layout=W.Layout(width="70px"))
        self.reset_button = W.Button(description="Reset", layout=W.Layout(width="70px"))
        self.refused_html = W.HTML()
        self.swaps_html = W.HTML()
        self.changes_html = W.HTML()
        self.checks_html = W.HTML()
        self.before = ChartView("load a design")
        self.after = ChartView("apply a substitution")
        self.candidates_html = W.HTML()
        self.candidates_box = W.VBox([W.HTML("<b>Candidates for the position</b>"),
                                      self.candidates_html])
        self.candidates_note = W.HTML()
        self.load_button.on_click(lambda _b: self._load_clicked())
        self.apply_button.on_click(lambda _b: self.new_part.value and
                                   self.apply_swap(self.ref.value, self.new_part.value))
        self.reset_button.on_click(lambda _b: self.reset())
        self.ref.observe(self._ref_changed, names="value")
        self.widget = W.VBox([
            self._header("Rerun a saved design after a substitution"),
            W.HBox([self.path_box, self.load_button]), self.path_error,
            W.HBox([W.VBox([self.ref, self.new_part, W.HBox([self.apply_button,
                                                             self.reset_button]),
                            self.refused_html, self.swaps_html],
                           layout=W.Layout(width="430px")),
                    W.VBox([self.status_html, self.changes_html])]),
            W.HBox([self.before.widget, self.after.widget]),
            self.candidates_box, self.candidates_note, self.checks_html])
        self.load(path)

    # ---------------------------------------------------------------- loading
    def load(self, path: str | os.PathLike) -> None:
        """Load a design file and evaluate it as saved (clears the substitutions)."""
        from pinlib.compare import snapshot

        design = load_design(find_file(path), library_folders=self.folders)
        result = check_design(design)
        self.design, self.result = design, result
        self.before_snapshot = snapshot(design, result)
        self.swaps = {}
        self.refused = []
        self.ranking = None
        with self._hold():
            self.path_box.value = str(path)
            refs = {}
            for b in design.buses:
                for d in b.devices:
                    refs.setdefault(d.ref, f"{d.ref} — {d.part_id} ({b.id})")
            _set_options(self.ref, [(label, ref) for ref, label in refs.items()],
                         self.ref.value)
        self._ref_changed()

    def _load_clicked(self) -> None:
        try:
            self.load(self.path_box.value.strip())
        except PinlibError as err:
            self.path_error.value = _inline_error(err)
            return
        self.path_error.value = ""

    def _places(self, ref: str) -> list:
        return [(b, d) for b in self.design.buses for d in b.devices if d.ref == ref]

    def refusals(self, ref: str, part_id: str) -> list[str]:
        """Why ``part_id`` cannot stand in ``ref``'s position (empty: it can)."""
        from pinlib.compare import swap_refusals

        return swap_refusals(self.design, ref, part_id, field="ref")[1]

    def _ref_changed(self, change=None) -> None:
        ref = self.ref.value
        options = []
        if ref:
            current = self._places(ref)[0][1].part_id
            for pid, part in sorted(self.design.library.placeable().items()):
                if pid != current and part.category != "cable" and not self.refusals(ref, pid):
                    options.append((f"{pid} — {part.title}", pid))
        with self._hold():
            _set_options(self.new_part, options, self.new_part.value)
        self._changed()

    # ---------------------------------------------------------------- swapping
    def apply_swap(self, ref: str, part_id: str) -> list[str]:
        """Substitute ``part_id`` at ``ref`` and rerun; return the reasons for a refusal
        (empty when applied)."""
        reasons = self.refusals(ref, part_id)
        self.refused = reasons
        if reasons:
            self.refused_html.value = (f'<div style="color:{charts.FAIL};font-size:12px">'
                                       + _e(M.SWAP_REFUSED.format(
                                           ref=ref, new=part_id,
                                           old=self._places(ref)[0][1].part_id)) + ":<ul>"
                                       + "".join(f"<li>{_e(r)}</li>" for r in reasons)
                                       + "</ul></div>")
            return reasons
        self.refused_html.value = ""
        self.swaps[ref] = part_id
        self.update()
        return []

    def reset(self) -> None:
        """Drop every substitution."""
        self.swaps = {}
        self.refused = []
        self.refused_html.value = ""
        self.update()

    def update(self) -> None:
        """Rerun the design with the substitutions and show what changed."""
        from pinlib.compare import compare, snapshot

        if self._quiet:
            return
        self.updates += 1
        try:
            if self.swaps:
                swapped = self.design.with_parts(self.swaps)
                swapped_result = check_design(swapped)
                self.changes = compare(self.before_snapshot, snapshot(swapped, swapped_result))
            else:
                swapped, swapped_result, self.changes = self.design, self.result, None
        except PinlibError as err:
            self._failed(err, [self.after])
            return
        self.error = None
        self.swapped, self.swapped_result = swapped, swapped_result
        self.swaps_html.value = ("<b>Substitutions</b><ul>" + "".join(
            f"<li>{_e(r)}: {_e(self._places(r)[0][1].part_id)} → {_e(p)}</li>"
            for r, p in self.swaps.items()) + "</ul>") if self.swaps else _note(
            "no substitution yet")
        self.status_html.value = (f'<div style="font-size:14px">Design '
                                  f"{_badge(self.result.status)} → "
                                  f"{_badge(swapped_result.status)}</div>")
        self.changes_html.value = self._changes_html()
        self._draw()
        self._rank()
        focus = self._focus_bus()
        self.checks_html.value = checks_table(swapped_result.bus(focus.id),
                                              f"Checks of bus {focus.id} after the "
                                              "substitution") if focus is not None else ""

    def _changes_html(self) -> str:
        cl = self.changes
        if cl is None:
            return _note("apply a substitution to see what changes")
        if cl.empty:
            return _note("no check changed status, no figure moved beyond "
                         f"{cl.threshold:.0%}, no part value differs")
        out = []
        if cl.status_changes:
            out.append("<b>Checks whose status changed</b><ul>" + "".join(
                f"<li>{_e(c.format())}</li>" for c in cl.status_changes) + "</ul>")
        if cl.figure_changes:
            out.append(f"<b>Figures that moved more than {cl.threshold:.0%}</b><ul>" + "".join(
                f"<li>{_e(c.format())}</li>" for c in cl.figure_changes) + "</ul>")
        if cl.part_changes:
            out.append("<b>Part values behind the change</b><ul>" + "".join(
                "<li>" + "<br>".join(_e(line) for line in pc.lines()) + "</li>"
                for pc in cl.part_changes) + "</ul>")
        return f'<div style="font-size:12px">{"".join(out)}</div>'

    def _focus_bus(self):
        refs = list(self.swaps) or ([self.ref.value] if self.ref.value else [])
        for ref in refs:
            places = self._places(ref)
            if places:
                return places[0][0]
        return self.design.buses[0] if self.design.buses else None

    def _chart_for(self, bus, design, label: str):
        """The chart that says most about a bus: the pull-up window of an open-drain bus,
        the timing budget of an SPI bus, the edge chart of a GPIO line."""
        if bus.protocol in ("i2c", "smbus"):
            seg = next((s.id for s in bus.segments if any(
                d.ref in self.swaps or d.ref == self.ref.value for d in s.devices)), None)
            w = plotdata.pullup_window_data(bus, design, seg, "sda")
            return charts.pullup_window(
                w.cb, w.rp_min, w.rp_max, chosen_cb=w.chosen_cb, chosen_rp=w.chosen_rp,
                title=f"{label}: pull-up window, {bus.id} {w.segment} SDA",
                chosen_label=f"design: {format_si(w.chosen_rp, 'Ω')} at "
                             f"{format_si(w.chosen_cb, 'F')}")
        if bus.protocol == "spi":
            tb = plotdata.timing_budget_data(bus, design)
            return charts.timing_budget(tb.rows, available=tb.available, margins=tb.margins,
                                        status=tb.status,
                                        title=f"{label}: timing budget, {bus.id}")
        sig = next(iter(bus.lines))
        e = plotdata.edge_vs_load_data(bus, design, sig)
        return charts.edge_vs_load(e.loads, np.vstack(list(e.curves.values())),
                                   series=list(e.curves),
                                   points=e.points if len(e.points[0]) else None,
                                   operating=(e.operating[0], e.operating[1], "far end"),
                                   title=f"{label}: edge time against load, {bus.id} {sig}")

    def _draw(self) -> None:
        bus = self._focus_bus()
        if bus is None:
            self.before.clear("the design has no bus")
            self.after.clear("the design has no bus")
            return
        for view, design, label in ((self.before, self.design, "Before"),
                                    (self.after, self.swapped, "After")):
            if view is self.after and not self.swaps:
                view.clear("apply a substitution")
                continue
            view.draw(lambda design=design, label=label:
                      self._chart_for(design.bus(bus.id), design, label))

    def _rank(self) -> None:
        """The candidates ranking of the selected position, when :mod:`pinlib.candidates`
        is installed; otherwise the panel is hidden and a note says why."""
        if importlib.util.find_spec("pinlib.candidates") is None:
            self.ranking = None
            self.candidates_box.layout.display = "none"
            self.candidates_note.value = _note(
                "The candidates ranking needs pinlib.candidates, which this installation "
                "does not have.")
            return
        from pinlib.candidates import rank_candidates

        self.candidates_box.layout.display = None
        self.candidates_note.value = ""
        ref = self.ref.value
        if not ref:
            self.ranking = None
            self.candidates_html.value = _note("no device to rank candidates for")
            return
        if self.ranking is None or self.ranking.ref != ref:
            try:
                self.ranking = rank_candidates(self.design, ref)
            except PinlibError as err:
                self.ranking = None
                self.candidates_html.value = _error_html(err)
                return
        self.candidates_html.value = self._ranking_html(self.ranking)

    @staticmethod
    def _ranking_html(r, top: int = 10) -> str:
        from pinlib.candidates import FIGURES

        cols = []
        for b in r.buses:
            family = "open-drain" if b["protocol"] in ("i2c", "smbus") else "push-pull"
            cols += [(b["bus"], name, unit) for name, unit in FIGURES[family]]
        multi = len(r.buses) > 1
        head = ["#", "part", "status", "worst margin", "set by"] + [
            f"{n} ({b})" if multi else n for b, n, _ in cols]
        rows = []
        for i, c in enumerate(r.candidates[:top], 1):
            wc = c.worst_check or {}
            by = " ".join(str(wc[k]) for k in ("bus", "segment", "line", "id", "subject")
                          if wc.get(k)) if c.status != "error" else (c.error or "")
            cells = [f'<td style="{_NUM}">{i}</td>',
                     f'<td style="{_CELL}"><code>{_e(c.part)}</code>'
                     + (" (now)" if c.current else "") + "</td>",
                     f'<td style="{_CELL}">{_badge(c.status)}</td>',
                     f'<td style="{_NUM}">{_e(_margin(c.worst_margin))}</td>',
                     f'<td style="{_CELL}">{_e(by)}</td>']
            for b, n, unit in cols:
                v = c.figures.get(b, {}).get(n)
                cells.append(f'<td style="{_NUM}">'
                             f"{_e(format_value(None if v is None else v[0], unit))}</td>")
            rows.append("<tr>" + "".join(cells) + "</tr>")
        more = (f"<div style='font-size:11px'>{len(r.candidates) - top} more not shown</div>"
                if len(r.candidates) > top else "")
        notes = "".join(f"<li>{_e(n)}</li>" for n in r.notes)
        return (f'<div style="font-size:12px">Position {_e(r.ref)}, now '
                f"<code>{_e(r.current)}</code>: {len(r.candidates)} of {r.library_size} "
                f"placeable parts can serve it ({r.excluded} cannot: pin functions or "
                "drives)</div>"
                '<table style="border-collapse:collapse;font-size:12px;margin:4px 0"><tr>'
                + "".join(f'<th style="{_HEAD}">{_e(h)}</th>' for h in head) + "</tr>"
                + "".join(rows) + "</table>" + more
                + (f'<ul style="font-size:11px">{notes}</ul>' if notes else ""))

    def static_view(self) -> StaticView:
        """The change list, charts and checks as plain HTML, for exported pages."""
        ranking = self.candidates_html.value if self.ranking is not None else \
            self.candidates_note.value
        return StaticView(_caution_html() + self.status_html.value + self.swaps_html.value
                          + self.changes_html.value + self.before.html() + self.after.html()
                          + ranking + self.checks_html.value)
