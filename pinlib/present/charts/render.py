"""From a chart function to its Vega-Lite dict (:func:`spec`) and to SVG (:func:`to_svg`).

altair and vl_convert are imported inside the functions that need them."""

from __future__ import annotations

import re
import sys
from collections.abc import Callable, Mapping, Sequence
from contextvars import ContextVar


def _alt():
    if "altair" not in sys.modules and "rfc3987_syntax" not in sys.modules:
        # jsonschema (altair's validator) builds the grammars of its optional IRI format
        # checker on import when that package is installed: over a second of start-up
        # for a format no chart schema uses.  Hide it for altair's import only.
        sys.modules["rfc3987_syntax"] = None
        try:
            import altair as alt
        finally:
            del sys.modules["rfc3987_syntax"]
        return alt
    import altair as alt

    return alt


# While spec() builds a chart, each layer's rows are held here and the altair objects get
# a named placeholder instead: altair deep-copies and walks every row it holds (most of a
# redraw for a waveform), while the rows are already plain JSON values.
_DEFERRED: ContextVar[list | None] = ContextVar("pinlib_charts_deferred", default=None)
_TOKEN = "pinlib-deferred-"


def _slot(values: list, held: list) -> int:
    """Index of ``values`` among the rows ``held`` (added when new)."""
    for i, rows in enumerate(held):  # equal rows, one name: altair hoists shared data
        if rows is values or rows == values:
            return i
    held.append(values)
    return len(held) - 1


def _data(values: list):
    """``alt.Data`` of ``values``, or a placeholder for them while :func:`spec` builds."""
    alt = _alt()
    held = _DEFERRED.get()
    if held is None:
        return alt.Data(values=values)
    return alt.Data(name=f"{_TOKEN}{_slot(values, held)}")


# Under spec(), a chart function may name its layout (everything but its rows) and the
# rows it is about to hand to _data, in order; a layout built before is then reused from
# here instead of building the altair objects again.
_LAYOUTS: dict[tuple, dict] = {}
_LAYOUTS_MAX = 32
_PENDING: ContextVar[list | None] = ContextVar("pinlib_charts_layout", default=None)


class _Known:
    """A layout :func:`spec` has built before, standing in for the altair chart."""

    def __init__(self, skeleton: dict):
        self.skeleton = skeleton

    def to_dict(self, validate: bool = False) -> dict:
        return self.skeleton


def _reuse(key: tuple, rows: Sequence[list]):
    """The layout ``key`` already built for ``rows`` (a :class:`_Known`), or None.

    Outside :func:`spec` always None.  The key of the layout includes which of ``rows``
    are equal, as that decides the data names in it.
    """
    held = _DEFERRED.get()
    pending = _PENDING.get()
    if held is None or pending is None or held:
        return None
    full = (key, tuple(_slot(r, held) for r in rows))
    known = _LAYOUTS.get(full)
    if known is not None:
        return _Known(known)
    del held[:]  # the builder hands the rows to _data itself
    pending.append((full, len(rows)))
    return None


def _fill(node, held: list):
    """``node`` with every placeholder replaced by the rows it stands for."""
    if isinstance(node, dict):
        name = node.get("name")
        if len(node) == 1 and isinstance(name, str) and name.startswith(_TOKEN):
            return {"values": held[int(name[len(_TOKEN):])]}
        return {k: _fill(v, held) for k, v in node.items()}
    if isinstance(node, list):
        return [_fill(v, held) for v in node]
    return node


# --------------------------------------------------------------------------- output
def spec(build: Callable[..., object], *args, **kwargs) -> dict:
    """The Vega-Lite specification of ``build(*args, **kwargs)`` as a plain dict, fast.

    The same dict as ``build(...).to_dict(validate=False)``, built without handing the
    data rows to altair (which copies and walks each of them) and without altair's
    schema checks; for redraws, where :func:`to_svg` takes the dict as it is.

    Parameters
    ----------
    build : callable
        A chart function of this module, e.g. :func:`waveforms`. [1]
    *args, **kwargs
        Its arguments. [1]

    Returns
    -------
    dict
        The specification, data values inline in each layer.
    """
    schemapi = _alt().utils.schemapi  # altair imported the light way (see _alt)

    held: list = []
    pending: list = []
    token = _DEFERRED.set(held)
    token_layout = _PENDING.set(pending)
    try:
        with schemapi.debug_mode(False):
            chart = build(*args, **kwargs)
            skeleton = chart.to_dict(validate=False)
    finally:
        _DEFERRED.reset(token)
        _PENDING.reset(token_layout)
    if len(pending) == 1 and not isinstance(chart, _Known):
        key, count = pending[0]
        if len(held) == len(set(key[1])) and count == len(key[1]):
            if len(_LAYOUTS) >= _LAYOUTS_MAX:
                _LAYOUTS.pop(next(iter(_LAYOUTS)))
            _LAYOUTS[key] = skeleton
    return _fill(skeleton, held)


def _vl_version() -> str | None:
    """The Vega-Lite version altair writes, as vl_convert names it (``"6.4"``)."""
    alt = _alt()
    import vl_convert

    wanted = ".".join(alt.SCHEMA_VERSION.lstrip("v").split(".")[:2])
    known = getattr(vl_convert, "get_vegalite_versions", lambda: [])()
    return wanted if wanted in known else None


# Compiled Vega of each chart layout (its spec with the data rows taken out), so that a
# redraw with new rows only renders: the Vega-Lite compile reads the spec, not the rows.
_COMPILED: dict[str, tuple[str, list[str]] | None] = {}
_COMPILED_MAX = 32
_SLOT = "pinlib-slot"


def _slots(node, rows: list, *, data: bool = False):
    """``node`` with each inline data ``values`` list replaced by a one-row marker of its
    slot (an axis' ``values``, its ticks, are layout and stay).

    Equal lists share a slot, as they share a data source once compiled.
    """
    if isinstance(node, dict):
        out = {}
        for k, v in node.items():
            if data and k == "values" and isinstance(v, list):
                out[k] = [{_SLOT: _slot(v, rows)}]
            elif k == "datasets" and isinstance(v, dict):
                out[k] = {name: _slots({"values": d}, rows, data=True)["values"]
                          if isinstance(d, list) else _slots(d, rows, data=True)
                          for name, d in v.items()}
            else:
                out[k] = _slots(v, rows, data=k == "data")
        return out
    if isinstance(node, list):
        return [_slots(v, rows) for v in node]
    return node


def _compiled(layout: dict, slots: int, version: str | None) -> tuple[str, list[str]] | None:
    """The Vega JSON of ``layout`` split at its slot markers, or None when a marker is not
    found exactly once (the caller then renders the whole spec)."""
    import json

    import vl_convert

    text = json.dumps(layout, sort_keys=True, ensure_ascii=False)
    key = f"{version}|{text}"
    if key in _COMPILED:
        return _COMPILED[key]
    if version is None:
        vega = vl_convert.vegalite_to_vega(text)
    else:
        vega = vl_convert.vegalite_to_vega(text, vl_version=version)
    vega_text = json.dumps(vega, ensure_ascii=False)
    markers = [json.dumps([{_SLOT: i}], ensure_ascii=False) for i in range(slots)]
    pattern = "|".join(re.escape(m) for m in markers)
    found = re.findall(pattern, vega_text) if markers else []
    split = None
    if not slots:
        split = (vega_text, [])
    elif len(found) == slots and len(set(found)) == slots and _SLOT not in re.sub(
            pattern, "", vega_text):
        pieces = re.split(f"({pattern})", vega_text)
        split = (pieces[0], [pieces[j] for j in range(1, len(pieces), 2)]
                 + pieces[2::2])  # markers in order, then the text after each
    if len(_COMPILED) >= _COMPILED_MAX:
        _COMPILED.pop(next(iter(_COMPILED)))
    _COMPILED[key] = split
    return split


def to_svg(chart, *, cache: bool = True) -> str:
    """Render a chart to SVG text with vl-convert (no browser, no network).

    Parameters
    ----------
    chart : altair chart, dict or str
        A chart from this module (or any altair chart), a Vega-Lite spec as a dict, or
        its JSON text. [1]
    cache : bool, optional
        For a dict: compile each layout (the spec without its data rows) to Vega once
        and then only swap the rows in; the SVG is the same as without. [1]

    Returns
    -------
    str
        The SVG document; the same chart gives the same bytes.
    """
    import json

    import vl_convert

    version = _vl_version()
    if cache and isinstance(chart, Mapping):
        rows: list = []
        layout = _slots(chart, rows)
        split = _compiled(layout, len(rows), version)
        if split is not None:
            head, rest = split
            n = len(rows)
            order, tails = rest[:n], rest[n:]
            parts = [head]
            for marker, tail in zip(order, tails, strict=True):
                i = json.loads(marker)[0][_SLOT]
                parts += [json.dumps(rows[i], sort_keys=True, ensure_ascii=False), tail]
            return vl_convert.vega_to_svg("".join(parts))
    if isinstance(chart, str):
        spec = chart
    elif isinstance(chart, Mapping):
        spec = json.dumps(chart, sort_keys=True, ensure_ascii=False)
    else:
        spec = chart.to_json()
    if version is None:
        return vl_convert.vegalite_to_svg(spec)
    return vl_convert.vegalite_to_svg(spec, vl_version=version)
