"""Workbench 05: rerun a saved design after a substitution (:class:`SwapExplorer`).

The view follows the position the user works on: after a substitution the Device list
shows the position just changed, and the candidates ranking, the Before/After charts and
the checks are those of that position (the charts of one of its buses, chosen in
*Chart bus*: the first with a check whose status changed, by default).  The change list
is grouped by bus, the buses with a status change first.
"""

from __future__ import annotations

import importlib.util
import os
from pathlib import Path

import ipywidgets as W
import numpy as np

from pinlib.core import messages as M
from pinlib.core.errors import PinlibError
from pinlib.core.labels import check_label, figure_label, plural_s, short_label
from pinlib.core.protocols import is_open_drain
from pinlib.core.quantity import format_si
from pinlib.engines.dispatch import check_design
from pinlib.model.design import load_design
from pinlib.present import charts, plotdata
from pinlib.present.report import format_value
from pinlib.present.widgets.choices import choice_line
from pinlib.present.widgets.common import (
    ChartView,
    StaticView,
    _Panel,
    _values,
    block_layout,
    button_layout,
    design_path,
    field_layout,
    find_file,
    heading,
    row_layout,
    set_options,
    style,
    with_button,
)
from pinlib.present.widgets.markup import (
    BLOCK,
    CELL,
    HEAD,
    NUM,
    TABLE,
    badge,
    block,
    caution_html,
    checks_table,
    e,
    error_html,
    note,
    notice,
)
from pinlib.studies.compare import format_change, format_figure
from pinlib.studies.compare.changes import shown_changes

#: How many candidates the ranking table shows.
TOP = 10


def _chart_layout() -> W.Layout:
    """A Before/After chart: side by side when both fit at their width, stacked when not."""
    return W.Layout(flex="1 1 520px", min_width="0", max_width="100%", margin="0 8px 0 0")


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
        :func:`pinlib.studies.compare.compare` of the two snapshots.
    refused : list of str
        Why the last substitution asked for was refused (empty when applied).
    ref : ipywidgets.Dropdown
        The position shown; a substitution selects the position it changed.
    chart_bus : ipywidgets.Dropdown
        Which of the position's buses the charts and the checks table show.
    before, after : ChartView
        That bus's chart before and after the substitutions.
    ranking : object or None
        What :mod:`pinlib.studies.candidates` ranked for the position (in the design with the
        substitutions), when that module exists.
    """

    def __init__(self, path: str | os.PathLike, *, folders=()):
        super().__init__()
        self.folders = [Path(f) for f in folders]
        self.swaps: dict[str, str] = {}
        self.refused: list[str] = []
        self.changes = None
        self.ranking = None
        self._ranked: tuple | None = None
        self._computed: dict | None = None
        self._choose_bus = False
        self.load_error: PinlibError | None = None
        self.path_box = W.Text(value=str(path), description="Design", style=style(),
                               layout=W.Layout(width="auto", max_width="720px"))
        self.load_button = W.Button(description="Load", layout=button_layout())
        self.path_error = W.HTML(layout=block_layout())
        self.ref = W.Dropdown(options=[], description="Device", style=style(),
                              layout=field_layout())
        self.new_part = W.Dropdown(options=[], description="Put there", style=style(),
                                   layout=field_layout())
        self.apply_button = W.Button(description="Apply", layout=button_layout())
        self.reset_button = W.Button(description="Reset", layout=button_layout())
        self.chart_bus = W.Dropdown(options=[], description="Chart bus", style=style(),
                                    layout=field_layout())
        self.refused_html = W.HTML(layout=block_layout())
        self.swaps_html = W.HTML(layout=block_layout())
        self.changes_html = W.HTML(layout=block_layout())
        self.checks_html = W.HTML(layout=block_layout())
        self.before = ChartView("load a design", layout=_chart_layout())
        self.after = ChartView("apply a substitution", layout=_chart_layout())
        self.candidates_html = W.HTML(layout=block_layout())
        self.candidates_box = W.VBox([heading("Candidates for the position"),
                                      self.candidates_html], layout=block_layout())
        self.candidates_note = W.HTML(layout=block_layout())
        self.load_button.on_click(lambda _b: self._load_clicked())
        self.apply_button.on_click(lambda _b: self.new_part.value and
                                   self.apply_swap(self.ref.value, self.new_part.value))
        self.reset_button.on_click(lambda _b: self.reset())
        self.ref.observe(self._ref_changed, names="value")
        self._watch(self.chart_bus)
        self.widget = W.VBox([
            self._header("Rerun a saved design after a substitution"),
            with_button(self.path_box, self.load_button), self.path_error,
            self._columns(
                [self.ref, choice_line(self.ref), self.new_part, choice_line(self.new_part),
                 W.HBox([self.apply_button, self.reset_button]), self.refused_html,
                 self.swaps_html, heading("Charts and checks"), self.chart_bus],
                [self.held_html, self.status_html, self.changes_html], basis=420),
            W.Box([self.before.widget, self.after.widget], layout=row_layout()),
            self.candidates_box, self.candidates_note, self.checks_html],
            layout=W.Layout(width="100%"))
        self.load(path)

    # ---------------------------------------------------------------- loading
    def load(self, path: str | os.PathLike) -> None:
        """Load a design file and evaluate it as saved (clears the substitutions)."""
        from pinlib.studies.compare import snapshot

        design = load_design(find_file(path), library_folders=self.folders)
        result = check_design(design)
        self.design, self.result = design, result
        self.load_error = None
        self.before_snapshot = snapshot(design, result)
        self.swaps = {}
        self.refused = []
        self.ranking = self._ranked = self._computed = None
        self.refused_html.value = ""
        with self._hold():
            self.path_box.value = str(path)
            self._label_refs()
        self._ref_changed()

    def _label_refs(self) -> None:
        """The Device list: each position with the part there now (and the one it
        replaced) and its buses."""
        refs: dict[str, list[str]] = {}
        for b in self.design.buses:
            for d in b.devices:
                places = refs.setdefault(d.ref, [])
                segments = [s.id for s in getattr(b, "segments", ()) or ()
                            if any(x.ref == d.ref for x in s.devices)]
                # a part bridging segments sits on the bus more than once: name each
                # segment (bus/segment, as the change list does), the bus alone otherwise
                for place in ([f"{b.id}/{s}" for s in segments] if len(segments) > 1
                              else [b.id]):
                    if place not in places:
                        places.append(place)
        labels = []
        for ref, buses in refs.items():
            old, now = self._places(ref)[0][1].part_id, self._part_at(ref)
            part = now if now == old else f"{now}, was {old}"
            labels.append((f"{ref} — {part} ({', '.join(buses)})", ref))
        set_options(self.ref, labels, self.ref.value)

    def _load_clicked(self) -> None:
        try:
            self.load(design_path(self.path_box.value, "designs/demo-board.toml"))
        except PinlibError as err:
            # as workbook 01's Load: the file (and line) named, as the command names it
            self.path_error.value = error_html(err)
            self.load_error = err
            self._show_held()
            return
        self.path_error.value = ""

    def _show_held(self) -> bool:
        """After a failed Load the results shown are still the old design's: say so (the
        notice workbooks 01-03 show over results of the last valid inputs)."""
        held = super()._show_held()
        if self.load_error is not None and getattr(self, "design", None) is not None:
            self.held_html.value = notice(
                f"Not recomputed: <b>{e(self.path_box.value.strip() or '(no path)')}</b> "
                "could not be loaded (see the message under Design). The results below "
                f"are those of <b>{e(str(self.design.path))}</b>, loaded before.")
        return held

    def _places(self, ref: str) -> list:
        return [(b, d) for b in self.design.buses for d in b.devices if d.ref == ref]

    def _part_at(self, ref: str) -> str:
        """The part at a position now (with the substitutions)."""
        return self.swaps.get(ref) or self._places(ref)[0][1].part_id

    def refusals(self, ref: str, part_id: str) -> list[str]:
        """Why ``part_id`` cannot stand in ``ref``'s position (empty: it can)."""
        from pinlib.studies.compare import swap_refusals

        return swap_refusals(self.design, ref, part_id, field="ref")[1]

    def _ref_changed(self, change=None) -> None:
        """Another position: the parts that can stand there, and its buses to chart."""
        ref = self.ref.value
        options, buses = [], []
        if ref:
            current = self._part_at(ref)
            for pid, part in sorted(self.design.library.placeable().items()):
                if pid != current and part.category != "cable" and not self.refusals(ref, pid):
                    options.append((f"{pid} — {part.title}", pid))
            buses = list(dict.fromkeys(b.id for b, _ in self._places(ref)))
        with self._hold():
            set_options(self.new_part, options, self.new_part.value)
            set_options(self.chart_bus, buses, self.chart_bus.value)
        self._changed()

    # ---------------------------------------------------------------- swapping
    def apply_swap(self, ref: str, part_id: str) -> list[str]:
        """Substitute ``part_id`` at ``ref`` and rerun; return the reasons for a refusal
        (empty when applied).  The view then shows the position ``ref``."""
        reasons = self.refusals(ref, part_id)
        self.refused = reasons
        if reasons:
            self.refused_html.value = block(
                f'<span style="color:{charts.FAIL}">'
                + e(M.SWAP_REFUSED.format(ref=ref, new=part_id, old=self._part_at(ref)))
                + ":<ul>" + "".join(f"<li>{e(r)}</li>" for r in reasons) + "</ul></span>")
            return reasons
        self.refused_html.value = ""
        self.swaps[ref] = part_id
        self._choose_bus = True
        with self._hold():
            self._label_refs()
            if ref in _values(self.ref.options):
                self.ref.value = ref
            self._ref_changed()  # the part now there is no longer offered
        self.update()
        return []

    def reset(self) -> None:
        """Drop every substitution."""
        self.swaps = {}
        self.refused = []
        self.refused_html.value = ""
        with self._hold():
            self._label_refs()
            self._ref_changed()
        self.update()

    def _recompute(self) -> None:
        """Rerun the design with the substitutions (when they changed) and show the
        position selected: change list, charts, ranking, checks."""
        from pinlib.studies.compare import compare, snapshot

        if self._computed != self.swaps:
            try:
                if self.swaps:
                    swapped = self.design.with_parts(self.swaps)
                    swapped_result = check_design(swapped)
                    changes = compare(self.before_snapshot, snapshot(swapped, swapped_result))
                else:
                    swapped, swapped_result, changes = self.design, self.result, None
            except PinlibError as err:
                self._failed(err, [self.after])
                return
            self.swapped, self.swapped_result, self.changes = swapped, swapped_result, changes
            self._computed = dict(self.swaps)
        self.error = None
        if self._choose_bus:
            self._choose_bus = False
            self._pick_chart_bus()
        self.swaps_html.value = block("<b>Substitutions</b><ul>" + "".join(
            f"<li>{e(r)}: {e(self._places(r)[0][1].part_id)} → {e(p)}</li>"
            for r, p in self.swaps.items()) + "</ul>") if self.swaps else note(
            "no substitution yet")
        self.status_html.value = block(f"Design {badge(self.result.status)} → "
                                       f"{badge(self.swapped_result.status)}", size=14)
        self.changes_html.value = self._changes_html()
        self._draw()
        self._rank()
        focus = self._focus_bus()
        self.checks_html.value = checks_table(
            self.swapped_result.bus(focus.id),
            f"Checks of bus {focus.id}" + (" after the substitutions" if self.swaps else "")
        ) if focus is not None else ""

    def _pick_chart_bus(self) -> None:
        """After a substitution: chart the position's first bus with a status change."""
        buses = _values(self.chart_bus.options)
        changed = [] if self.changes is None else \
            [self._group_of(c.path) for c in self.changes.status_changes]
        pick = next((b for b in buses if b in changed), None)
        if pick is not None and pick != self.chart_bus.value:
            with self._hold():
                self.chart_bus.value = pick

    # ---------------------------------------------------------------- change list
    def _group_of(self, path: str) -> str:
        """The bus a change belongs to: a bus's or segment's (``bus/...``) that bus, a
        coupling's (``victim<-aggressor``) its victim's bus; anything else its own path
        (listed after the buses, never left out)."""
        head = path.split("/")[0]
        if any(b.id == head for b in self.design.buses):
            return head
        for c in getattr(self.design, "couplings", ()) or ():
            if c.id == path:
                return c.victim_bus
        return path

    def _bus_order(self) -> list[str]:
        """The groups of the change list: bus ids, those with a status change first, then
        in the design's order; then any other place a change was found."""
        cl = self.changes
        ids = [b.id for b in self.design.buses]
        for c in list(cl.status_changes) + list(cl.figure_changes):
            g = self._group_of(c.path)
            if g not in ids:
                ids.append(g)
        changed = {self._group_of(c.path) for c in cl.status_changes}
        return sorted(ids, key=lambda b: (b not in changed, ids.index(b)))

    def _place(self, path: str) -> str:
        """Where in its group a change lies: the segment or line of a bus, a coupling as
        the reports name it ("sensors.scl beside display.sclk", not its id
        ``sensors.scl<-display.sclk``), "bus" for the bus itself."""
        head, _, rest = path.partition("/")
        if any(b.id == head for b in self.design.buses):
            return rest or "bus"
        victim, arrow, aggressor = path.partition("<-")
        return f"{victim} beside {aggressor}" if arrow else path

    def _changes_html(self) -> str:
        cl = self.changes
        if cl is None:
            return note("apply a substitution to see what changes")
        # the threshold as pinlib swap writes it ("5 %")
        pct = f"{cl.threshold * 100:g} %"
        if cl.empty:
            return note(f"no check changed status, no figure moved more than {pct}, "
                        "no part value differs")
        out = []
        for bus in self._bus_order():
            status = [c for c in cl.status_changes if self._group_of(c.path) == bus]
            figures = [c for c in cl.figure_changes if self._group_of(c.path) == bus]
            if not (status or figures):
                continue
            rows = self._figure_rows(figures)
            kind = "Bus" if any(b.id == bus for b in self.design.buses) else "Place"
            head = (f"{kind} <b>{e(bus)}</b>: {len(status)} check{plural_s(len(status))} "
                    f"changed status, {len(rows)} figure{plural_s(len(rows))} moved more "
                    f"than {pct}")
            body = ""
            if status:
                body += "<ul>" + "".join(self._status_item(c) for c in status) + "</ul>"
            if rows:
                body += (f'<table style="{TABLE}"><tr><th style="{HEAD}">where</th>'
                         f'<th style="{HEAD}">figure</th><th style="{HEAD}">before → after'
                         f'</th><th style="{HEAD}">change</th></tr>{"".join(rows)}</table>')
            opened = " open" if status or bus == self.chart_bus.value else ""
            out.append(f"<details{opened}><summary>{head}</summary>{body}</details>")
        if cl.part_changes:
            items = "".join("<li>" + "<br>".join(e(line) for line in pc.lines()) + "</li>"
                            for pc in cl.part_changes)
            out.append(f"<details><summary>Part values behind the change "
                       f"({len(cl.part_changes)} part{plural_s(len(cl.part_changes))})"
                       f"</summary><ul>{items}</ul></details>")
        return block("".join(out))

    def _status_item(self, c) -> str:
        place = self._place(c.path)
        where = " ".join(x for x in ("" if place == "bus" else place, c.subject) if x)
        if c.old_subject:
            where += f" (was {c.old_subject})"
        values = c.values_text()  # what `pinlib swap` shows in its parentheses
        return (f'<li title="{e(c.format())}">{badge(c.old or "absent")} → '
                f"{badge(c.new or 'absent')} <b>{e(check_label(c.check))}</b> {e(where)}"
                + (f" ({e(values)})" if values else "") + "</li>")

    def _figure_rows(self, figures) -> list[str]:
        """Rows of moved figures, by segment, line or coupling, each quantity once: the
        figures `pinlib swap` lists (:func:`pinlib.studies.compare.changes.shown_changes`)."""
        rows = []
        for c in shown_changes(figures):
            rows.append(f'<tr title="{e(c.path)} {e(c.name)}"><td style="{CELL}">'
                        f'{e(self._place(c.path))}'
                        f'</td><td style="{CELL}">{e(figure_label(c.name))}</td>'
                        f'<td style="{NUM}">{e(format_figure(c.old, c.unit))} → '
                        f'{e(format_figure(c.new, c.unit))}</td>'
                        f'<td style="{NUM}">'
                        f'{e(format_change(c.change, c.old, c.new, c.unit))}</td></tr>')
        return rows

    # ---------------------------------------------------------------- charts
    def _focus_bus(self):
        """The bus charted: the one chosen among the position's buses."""
        if self.chart_bus.value:
            return self.design.bus(self.chart_bus.value)
        return self.design.buses[0] if self.design.buses else None

    def _chart_for(self, bus, design, bus_result, label: str):
        """The specification of the chart that says most about a bus: the pull-up window of
        an open-drain bus (the segment of the position), the timing budget of an SPI bus,
        the edge chart of a GPIO line; read from the bus's result (no second evaluation)."""
        if is_open_drain(bus.protocol):
            ref = self.ref.value
            seg = next((s.id for s in bus.segments if any(d.ref == ref for d in s.devices)),
                       None)
            w = plotdata.pullup_window_data(bus, design, seg, "sda", analysis=bus_result)
            return charts.spec(
                charts.pullup_window, w.cb, w.rp_min, w.rp_max, chosen_cb=w.chosen_cb,
                chosen_rp=w.chosen_rp,
                title=f"{label}: pull-up window, {_line_place(bus, w.segment, 'SDA')}",
                chosen_label=f"design: {format_si(w.chosen_rp, 'Ω')} at "
                             f"{format_si(w.chosen_cb, 'F')}")
        if bus.protocol == "spi":
            tb = plotdata.timing_budget_data(bus, design, analysis=bus_result)
            return charts.spec(charts.timing_budget, tb.rows, available=tb.available,
                               margins=tb.margins, status=tb.status,
                               title=f"{label}: timing budget, {bus.id}")
        sig = next(iter(bus.lines))
        ed = plotdata.edge_vs_load_data(bus, design, sig, analysis=bus_result)
        return charts.spec(charts.edge_vs_load, ed.loads, np.vstack(list(ed.curves.values())),
                           series=list(ed.curves),
                           points=ed.points if len(ed.points[0]) else None,
                           operating=(ed.operating[0], ed.operating[1], ed.operating_label),
                           title=f"{label}: edge time against load, {bus.id}, line {sig}")

    def _draw(self) -> None:
        bus = self._focus_bus()
        if bus is None:
            self.before.clear("the design has no bus")
            self.after.clear("the design has no bus")
            return
        for view, design, result, label in (
                (self.before, self.design, self.result, "Before"),
                (self.after, self.swapped, self.swapped_result, "After")):
            if view is self.after and not self.swaps:
                view.clear("apply a substitution")
                continue
            view.draw(lambda design=design, result=result, label=label:
                      self._chart_for(design.bus(bus.id), design, result.bus(bus.id), label))

    # ---------------------------------------------------------------- ranking
    def _rank(self) -> None:
        """The candidates ranking of the selected position in the design as it is now
        (with the substitutions), when :mod:`pinlib.studies.candidates` is installed; otherwise
        the panel is hidden and a note says why."""
        if importlib.util.find_spec("pinlib.studies.candidates") is None:
            self.ranking = self._ranked = None
            self.candidates_box.layout.display = "none"
            self.candidates_note.value = note(
                "The candidates ranking needs pinlib.studies.candidates, which this installation "
                "does not have.")
            return
        from pinlib.studies.candidates import rank_candidates

        self.candidates_box.layout.display = None
        self.candidates_note.value = ""
        ref = self.ref.value
        if not ref:
            self.ranking = self._ranked = None
            self.candidates_html.value = note("no device to rank candidates for")
            return
        key = (ref, tuple(sorted(self.swaps.items())))
        if self.ranking is None or self._ranked != key:
            try:
                self.ranking = rank_candidates(self.swapped, ref)
                self._ranked = key
            except PinlibError as err:
                self.ranking = self._ranked = None
                self.candidates_html.value = error_html(err)
                return
        self.candidates_html.value = self._ranking_html(self.ranking, self.chart_bus.value)

    @staticmethod
    def _ranking_html(r, bus: str | None = None, top: int = TOP) -> str:
        """The best ``top`` candidates, with the figures of one bus of the position (the
        bus charted; the first when it is not one of the ranking's).  In the words of
        ``pinlib candidates``: the position's buses, each margin and the check that sets
        it (the bus named only where the position is on more than one); every heading
        says what its column holds, the figures' heading of which bus, segment and
        lines they are."""
        from pinlib.studies.candidates import bus_figures, bus_text, figures_place, where_parts

        rows_of = {b["bus"]: b for b in r.buses}
        shown = rows_of.get(bus) or (r.buses[0] if r.buses else None)
        cols = [] if shown is None else [(shown["bus"], n, u)
                                         for n, u in bus_figures(shown["protocol"])]
        listed = r.candidates[:top]
        multi = len(r.buses) > 1  # as the command names a check's bus
        units = sorted({(c.worst_check or {}).get("margin_unit") for c in listed} - {None})
        span = ' rowspan="2"' if cols else ""
        head = "".join(f'<th style="{HEAD}"{span}>{h}</th>' for h in (
            "#", "part", "status",
            _heading("worst margin", "% of its limit" + "".join(f", or in {u}" for u in units)),
            _heading("set by", "the check of that margin")))
        second = ""
        if cols:
            head += (f'<th style="{HEAD}" colspan="{len(cols)}">' + _heading(
                f"figures of {figures_place(shown)}",
                "the bus chosen in Chart bus" if multi else "") + "</th>")
            second = "<tr>" + "".join(f'<th style="{HEAD}">{e(_figure_heading(n))}</th>'
                                      for _, n, _ in cols) + "</tr>"
        rows = []
        for i, c in enumerate(listed, 1):
            wc = c.worst_check or {}
            if c.status == "error":
                by = e(c.error or "")
            elif c.worst_check:
                place, check = where_parts(wc, multi)
                # on one line: a few words (the headings wrap to make room)
                by = ('<span style="white-space:nowrap">' + (
                    f'<span style="color:#4a4a4a">{e(place)}</span> ' if place else "")
                      + e(check) + "</span>")
            else:
                by = ""
            # a part id is never broken (it is copied into the design)
            cells = [f'<td style="{NUM}">{i}</td>',
                     f'<td style="{CELL};white-space:nowrap"><code>{e(c.part)}</code>'
                     + (" (now)" if c.current else "") + "</td>",
                     f'<td style="{CELL};white-space:nowrap">{badge(c.status)}'
                     + ("†" if wc.get("status_by") else "") + "</td>",
                     f'<td style="{NUM}">{e(c.margin_text(1))}</td>',
                     f'<td style="{CELL}">{by}</td>']
            for b, n, unit in cols:
                v = c.figures.get(b, {}).get(n)
                cells.append(f'<td style="{NUM}">'
                             f"{e(format_value(None if v is None else v[0], unit))}</td>")
            rows.append("<tr>" + "".join(cells) + "</tr>")
        more = (f"<div>{len(r.candidates) - top} more not shown</div>"
                if len(r.candidates) > top else "")
        notes = "".join(f"<li>{e(n)}</li>" for n in
                        r.status_notes(listed) + r.warn_key(listed) + list(r.notes))
        where = "; ".join(bus_text(b) for b in r.buses)
        return (f'<div style="{BLOCK};font-size:12px">Position {e(r.ref)}, now '
                f"<code>{e(r.current)}</code>: {e(where)}<br>{e(r.count_text())}</div>"
                f'<table style="{TABLE}"><tr>{head}</tr>{second}'
                + "".join(rows) + "</table>" + block(more, size=11)
                + (f'<ul style="{BLOCK};font-size:11px">{notes}</ul>' if notes else ""))

    def static_view(self) -> StaticView:
        """The change list, charts and checks as plain HTML, for exported pages."""
        ranking = self.candidates_html.value if self.ranking is not None else \
            self.candidates_note.value
        return StaticView(caution_html() + self.status_html.value + self.swaps_html.value
                          + self.changes_html.value + self.before.html() + self.after.html()
                          + ranking + self.checks_html.value)


def _heading(text: str, under: str = "") -> str:
    """A column heading's HTML: what the column holds, and under it in smaller type its
    unit or where its figures are from."""
    return e(text) + (f'<div style="font-weight:400;font-size:11px;color:#4a4a4a">'
                      f"{e(under)}</div>" if under else "")


def _figure_heading(name: str) -> str:
    """A figure column's heading: its label with the symbol ``pinlib candidates`` heads
    it with (``Bus capacitance Cb``, ``Pull-up resistor Rp``, ``Highest clock
    f(max)``); the units are in the cells, each with its prefix."""
    label, symbol = figure_label(name), short_label(name)
    return label if symbol.lower() in label.lower() else f"{label} {symbol}"


def _line_place(bus, segment: str | None, signal: str) -> str:
    """A line as a person names it (as the bench panel's Line does): ``power, SDA``, and
    on a bus of several segments ``sensors, segment main-3v3, SDA``.  It read "power
    power SDA" where the bus's one segment takes the bus's id."""
    several = len(bus.segments) > 1
    return bus.id + (f", segment {segment}" if several and segment else "") + f", {signal}"
