"""A chart of a design review: drawn once, its SVG cleaned to sit inline beside others."""

from __future__ import annotations

import html
import re

from pinlib.core.errors import PinlibError
from pinlib.core.quantity import format_si
from pinlib.core.valueclass import value_class


@value_class
class ReviewChart:
    """One chart of a review.

    Attributes
    ----------
    key : str
        A name unique in the review, safe as a file name (``03-flash-sclk-u1-edges``).
    kind : str
        ``pullup-window``, ``edge-vs-load``, ``waveforms``, ``timing-budget``,
        ``noise-vs-spacing`` or ``histogram``.
    title, caption : str
        What it shows, and how to read it.
    svg : str or None
        The SVG text; None when the chart could not be drawn (``error`` says why).
    """

    key: str
    kind: str
    title: str
    caption: str
    svg: str | None = None
    error: str | None = None


#: The name of a chart file that ``pinlib report --md`` writes: a key of :class:`_Keys`
#: (a number, then slugs joined by "-") and ".svg".
CHART_FILE_NAME = re.compile(r"\d{2,}(?:-[a-z0-9]+)+\.svg")
#: How every chart file that ``pinlib report --md`` writes begins (the XML prologue, then
#: the ``<svg`` that :func:`_clean_svg` labels).
CHART_FILE_HEAD = '<?xml version="1.0" encoding="UTF-8"?>\n<svg role="img" aria-label="'


def is_chart_file(path) -> bool:
    """Whether ``path`` is a chart file pinlib wrote: named like one and beginning as
    one does (a user's SVG that happens to be named like a chart is not)."""
    from pathlib import Path

    path = Path(path)
    if not CHART_FILE_NAME.fullmatch(path.name) or path.is_symlink() or not path.is_file():
        return False
    try:
        with open(path, "rb") as fh:
            head = fh.read(len(CHART_FILE_HEAD.encode("utf-8")))
    except OSError:
        return False
    return head == CHART_FILE_HEAD.encode("utf-8")


def _slug(text: str) -> str:
    return re.sub(r"[^a-z0-9]+", "-", str(text).lower()).strip("-") or "x"


class _Keys:
    def __init__(self):
        self.n = 0
        self.used: set[str] = set()

    def __call__(self, *parts) -> str:
        self.n += 1
        key = f"{self.n:02d}-" + "-".join(_slug(p) for p in parts if p)
        while key in self.used:  # pragma: no cover - the counter keeps keys unique
            key += "-x"
        self.used.add(key)
        return key


def _draw(key, kind, title, caption, make) -> ReviewChart:
    """Build a chart; an input the chart refuses becomes a chart with an error, so one
    undrawable figure does not lose the whole report."""
    from pinlib.present.charts import spec as chart_spec
    from pinlib.present.charts import to_svg

    try:
        # The charts module builds valid specs (its own tests validate them): spec()
        # builds the chart without altair's schema checks (its debug mode, most of a
        # report's chart time) and without handing it the data rows to copy.
        spec = chart_spec(make)
        svg = to_svg(spec)
    except PinlibError as err:
        return ReviewChart(key, kind, title, caption, None, err.message)
    return ReviewChart(key, kind, title, caption, _clean_svg(svg, key, title))


_ID = re.compile(r'\bid="([^"]+)"')


def _clean_svg(svg: str, key: str, title: str) -> str:
    """An SVG ready to sit inline beside others: no XML prologue, ids prefixed with the
    chart's key (so two charts' clip paths cannot collide), a role and a label."""
    svg = re.sub(r"^\s*<\?xml[^>]*\?>\s*", "", svg)
    svg = re.sub(r"^\s*<!DOCTYPE[^>]*>\s*", "", svg)
    ids = set(_ID.findall(svg))
    for old in sorted(ids, key=len, reverse=True):
        new = f"{key}-{old}"
        svg = svg.replace(f'id="{old}"', f'id="{new}"')
        svg = svg.replace(f"url(#{old})", f"url(#{new})")
        svg = svg.replace(f'href="#{old}"', f'href="#{new}"')
    label = html.escape(title, quote=True)
    return svg.replace("<svg ", f'<svg role="img" aria-label="{label}" ', 1)


def _f(x, unit):
    return format_si(x, unit)
