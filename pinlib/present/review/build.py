"""A design review built once (:class:`Review`, :func:`build_review`) and rendered as
HTML or Markdown."""

from __future__ import annotations

from dataclasses import field

from pinlib.core.protocols import OPEN_DRAIN_PROTOCOLS, PUSH_PULL_PROTOCOLS
from pinlib.core.valueclass import value_class
from pinlib.model.result import DesignResult
from pinlib.present.review.charts import _coupling_charts, _pullup_charts, _push_pull_charts
from pinlib.present.review.draw import ReviewChart, _Keys
from pinlib.present.review.html import _Html
from pinlib.present.review.markdown import _Markdown
from pinlib.present.review.montecarlo import _mc_charts


@value_class
class Review:
    """Everything a report shows, with its charts rendered once.

    Use :meth:`html` or :meth:`markdown`; :func:`build_review` makes one.
    """

    design: object
    result: DesignResult
    changes: object = None
    mc: object = None
    charts: dict = field(default_factory=dict)      # place -> [ReviewChart]
    mc_charts: list = field(default_factory=list)
    mc_entries: list = field(default_factory=list)
    parts: dict = field(default_factory=dict)

    # ------------------------------------------------------------------ queries

    def all_charts(self) -> list[ReviewChart]:
        """Every chart in the order the report shows them."""
        out = [c for place in self.charts.values() for c in place]
        return out + list(self.mc_charts)

    def html(self) -> str:
        """The review as one self-contained HTML page."""
        return _Html(self).page()

    def markdown(self, chart_dir: str | None = None) -> tuple[str, dict[str, str]]:
        """The review as Markdown.

        Parameters
        ----------
        chart_dir : str, optional
            Folder, relative to the ``.md`` file, for the chart files; None embeds each
            chart as a ``data:`` URI.

        Returns
        -------
        text : str
            The Markdown.
        files : dict of str to str
            The SVG files to write, by path relative to the ``.md`` (empty when the
            charts are embedded).
        """
        return _Markdown(self, chart_dir).page()


def build_review(design, result: DesignResult, *, changes=None, mc=None) -> Review:
    """Compute every chart and table of a design review once.

    Parameters
    ----------
    design : Design
        The loaded design (:func:`pinlib.model.design.load_design`).
    result : DesignResult
        Its result (:func:`pinlib.engines.dispatch.check_design`).
    changes : ChangeList, optional
        The change list against the saved snapshot
        (:func:`pinlib.studies.compare.compare_with_snapshot`); None: no snapshot.
    mc : McResult, optional
        A Monte Carlo run (:func:`pinlib.studies.whatif.monte_carlo`), or samples in the plain
        protocol of the package notes.

    Returns
    -------
    Review
    """
    from pinlib.studies.compare import snapshot

    keys = _Keys()
    charts: dict = {}
    by_id = {b.id: b for b in design.buses}
    for br in result.buses:
        bus = by_id.get(br.id)
        if bus is None or not (br.checks or br.segments or br.lines or br.figures):
            continue  # not evaluated (no engine): nothing to draw
        if bus.protocol in OPEN_DRAIN_PROTOCOLS:
            _pullup_charts(bus, design, br, keys, charts)
        elif bus.protocol in PUSH_PULL_PROTOCOLS:
            _push_pull_charts(bus, design, br, keys, charts)
    for cr in result.couplings:
        _coupling_charts(cr, keys, charts)
    mc_charts, mc_entries = _mc_charts(mc, keys) if mc is not None else ([], [])
    parts = snapshot(design, result).get("parts", {})
    return Review(design, result, changes, mc, charts, mc_charts, mc_entries, parts)


def render_html(design, result: DesignResult, *, changes=None, mc=None) -> str:
    """A self-contained design-review page (see the package notes).

    Parameters
    ----------
    design : Design
        The loaded design.
    result : DesignResult
        Its result.
    changes : ChangeList, optional
        The change list against the saved snapshot; None when there is none.
    mc : object, optional
        A Monte Carlo result.

    Returns
    -------
    str
        The HTML document: no script, no external resource, the charts inline.
    """
    return build_review(design, result, changes=changes, mc=mc).html()


def render_markdown(design, result: DesignResult, *, changes=None, mc=None,
                    chart_dir: str | None = None) -> str:
    """The design review as Markdown.

    Parameters
    ----------
    design, result, changes, mc
        As for :func:`render_html`.
    chart_dir : str, optional
        With a folder name, charts are linked as ``chart_dir/<key>.svg`` (write the
        files with :meth:`Review.markdown`, as ``pinlib report --md`` does); without one
        (the default) each chart is embedded as a ``data:image/svg+xml`` URI.

    Returns
    -------
    str
        The Markdown text.
    """
    text, _ = build_review(design, result, changes=changes, mc=mc).markdown(chart_dir)
    return text
