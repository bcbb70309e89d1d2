"""The Monte Carlo section of a design review: one row per sampled check (from a
:class:`pinlib.studies.whatif.McResult` or the plain protocol of the package notes), the
run's summary sentences and the histograms of the checks with the lowest pass fractions."""

from __future__ import annotations

from pinlib.core.labels import check_label, plural_s, sampled_check_label
from pinlib.core.quantity import format_si
from pinlib.model.result import margin_order, signed_margin_text
from pinlib.present.review.draw import _draw
from pinlib.studies.whatif.mcresult import absent_words
from pinlib.studies.whatif.sensitivity import beyond_rounding
from pinlib.studies.whatif.yields import percent_text


def _get(obj, name, default=None):
    if isinstance(obj, dict):
        return obj.get(name, default)
    return getattr(obj, name, default)


def _mc_entries(mc) -> list:
    items = _get(mc, "checks", None)
    if items is None:
        items = mc
    if isinstance(items, dict):
        items = list(items.values())
    return list(items or [])


def _mc_rows(mc) -> list[dict]:
    """One row per sampled check, from a :class:`pinlib.studies.whatif.McResult` (each check's
    per-board relative margins: a board passes when its margin is not negative) or from
    entries of the plain protocol in the package notes (samples of the checked value and
    its limit)."""
    import numpy as np

    rows = []
    for entry in _mc_entries(mc):
        passes = _get(entry, "passes")
        if passes is not None and hasattr(passes, "fraction"):  # pinlib.studies.whatif.McCheck
            margins = _get(entry, "margins")
            samples = None if margins is None else np.asarray(margins, dtype=float)
            lowest = entry.margin_quantiles((0.0,))[0] if hasattr(entry, "margin_quantiles") \
                else None
            # a margin in a unit (a gate overdrive in volts) is drawn and written in it
            m_unit = _get(entry, "margin_unit")
            cid = _get(entry, "id")
            # the check as the checks tables name it (its id stays in the JSON)
            name = _get(entry, "name")
            where = (sampled_check_label(name, cid) if name and cid else name
                     or check_label(cid or "check"))
            rows.append({
                "where": where,
                "samples": samples, "limit": 0.0, "unit": m_unit or "%", "kind": "min",
                "margin_unit": m_unit,
                "label": f"Margin of {check_label(cid) if cid else 'the check'}, "
                         + ("above its limit" if m_unit else "relative to its limit"),
                "fraction": float(passes.fraction), "ci": tuple(passes.interval),
                "count": f"{passes.passes}/{passes.n}",
                "varies": bool(_get(entry, "varies", True)),
                "failures": passes.passes < passes.n, "lowest": lowest,
                "warns": _get(entry, "warns", 0) or 0, "n": passes.n,
                "absent": _get(entry, "absent", 0) or 0,
                "sensitivity": list(_get(entry, "sensitivity", []) or [])[:3],
                "sensitivity_text": entry.sensitivity_text()
                if hasattr(entry, "sensitivity_text") else None,
                "source": _get(entry, "source", "") or "",
                # a long run keeps the margins of its first boards only, and counts
                # every board's in bins
                "of": None if samples is None or samples.size >= passes.n else passes.n,
                "binned": None if samples is None or samples.size >= passes.n
                or _get(entry, "histogram") is None else entry.histogram.bins()})
            continue
        samples = _get(entry, "samples")
        if samples is None:
            continue
        samples = np.asarray(samples, dtype=float)
        finite = samples[np.isfinite(samples)]
        frac = _get(entry, "pass_fraction")
        where = " ".join(str(x) for x in (_get(entry, "path", ""),
                                          check_label(str(_get(entry, "id", "check"))),
                                          _get(entry, "subject", "")) if x)
        rows.append({
            "where": where, "samples": samples, "limit": _get(entry, "limit"),
            "unit": _get(entry, "unit", "") or "", "kind": _get(entry, "kind", "max") or "max",
            "label": _get(entry, "label") or _get(entry, "id", "check"),
            "fraction": None if frac is None else float(frac), "ci": _get(entry, "ci"),
            "count": "",
            "varies": bool(finite.size and beyond_rounding(finite.min(), finite.max())),
            "failures": frac is not None and float(frac) < 1.0, "lowest": None,
            "sensitivity": [], "source": _get(entry, "source", "") or ""})
    return rows


#: At most this many Monte Carlo histograms: the checks with the lowest pass fractions
#: and margins (every sampled check that varies is in the table).
MC_CHARTS = 12


def _mc_charts(mc, keys) -> tuple[list, list]:
    from pinlib.present import charts as ch

    rows = _mc_rows(mc)
    # a check that warns on some board is in the table too, whatever its margin does
    # (a yes/no ringing check has none to vary)
    shown = [r for r in rows
             if r["varies"] or r["failures"] or r.get("absent") or r.get("warns")]

    def order(r):  # as the text's rows: fewest passing, most warning, lowest margin
        frac = r["fraction"] if r["fraction"] is not None else 1.0
        return (frac, -r.get("warns", 0), *margin_order(r["lowest"], r.get("margin_unit")))

    drawn = sorted((r for r in shown if r["samples"] is not None and r["varies"]),
                   key=order)[:MC_CHARTS]
    out = []
    for r in drawn:
        sub = None
        if r["fraction"] is not None:
            sub = f"pass fraction {percent_text(r['fraction'])}"
            if r["ci"] is not None:
                sub += f" ({percent_text(r['ci'][0])} to {percent_text(r['ci'][1])})"
        title = f"Monte Carlo: {r['where']}"
        limit = "margin 0 (the limit itself)" if (r["unit"] == "%" or r.get("margin_unit")) \
            and r["limit"] == 0.0 \
            else "the check's limit"
        boards = ("every sampled board" if not r.get("of") or r.get("binned") is not None
                  else f"the first {r['samples'].size:,} of the {r['of']:,} sampled boards")
        caption = (f"{r['label']} on {boards}. Bars in the pass colour hold boards "
                   f"that pass, in the fail colour boards that fail; the dashed line is "
                   f"{limit}.")
        out.append(_draw(keys("mc", r["where"]), "histogram", title, caption,
                         lambda r=r, t=title, sub=sub: ch.histogram(
                             r["samples"], limit=r["limit"], unit=r["unit"], label=r["label"],
                             limit_kind=r["kind"], title=t, subtitle=sub,
                             binned=r.get("binned"))))
    return out, shown


def _mc_summary(mc) -> list[str]:
    """Sentences about a Monte Carlo run: size, draws, seed, yields, notes."""
    out = []
    n, seed = _get(mc, "n"), _get(mc, "seed")
    bits = []
    if n is not None:
        bits.append(f"{int(n)} sampled board{plural_s(int(n))}")
    dist = _get(mc, "distribution")
    if dist:
        bits.append(f"{dist} within each tolerance" + (" (tolerance = 3σ)" if dist == "normal"
                                                        else ""))
    if seed is not None:
        bits.append(f"seed {seed}")
    if bits:
        out.append(", ".join(bits) + ".")
    conf, method = _get(mc, "confidence"), _get(mc, "method")
    if conf is not None and method:
        out.append(f"Pass fractions with {format_si(float(conf), '%')} {method}s.")
    board = _get(mc, "board")
    if board is not None and hasattr(board, "fraction"):
        out.append(f"Every sampled bus passes on {_yield(board)} of the boards"
                   f"{board.warned_text()}.")
    for bus, y in (_get(mc, "buses") or {}).items():
        if hasattr(y, "fraction"):
            says = "no check fails" if y.warned else "every check passes"
            out.append(f"Bus {bus}: {says} on {_yield(y)}{y.warned_text()}.")
    out += [str(x) for x in (_get(mc, "notes") or [])]
    return out


def _yield(y) -> str:
    lo, hi = y.interval
    return f"{percent_text(y.fraction)} ({percent_text(lo)} to {percent_text(hi)}, " \
           f"{y.passes}/{y.n})"


def _mc_cells(row: dict) -> list[str]:
    frac = "" if row["fraction"] is None else percent_text(row["fraction"])
    if row.get("absent"):  # counted as passing there: the board has no such check
        frac += f" ({absent_words(row['absent'])})"
    ci = "" if row["ci"] is None else f"{percent_text(row['ci'][0])} to " \
                                      f"{percent_text(row['ci'][1])}"
    low = "" if row["lowest"] is None else signed_margin_text(row["lowest"],
                                                              row.get("margin_unit"), 1)
    sens = (row.get("sensitivity_text")
            or ", ".join(f"{n} {c:+.2f}" for n, c in row["sensitivity"])
            or "not fitted: the entry gives no parameter draws")
    return [row["where"], frac, ci, _warn_cell(row), low, sens, row["source"]]


def _warn_cell(row: dict) -> str:
    """The boards on which a check warns, of all (a warning passes: the pass fraction
    counts them); empty where the samples say nothing of warnings (plain protocol)."""
    if "n" not in row:
        return ""
    return f"{row.get('warns', 0)}/{row['n']}"


_MC_HEAD = ("Check", "Pass fraction", "Confidence interval", "Boards that warn",
            "Lowest margin", "Most sensitive to (standardized coefficient)",
            "Source of the limit")

#: The sentence above the Monte Carlo table of the review: which checks it holds, and
#: that a warning passes.
MC_TABLE_INTRO = ("The table lists every sampled check whose margin varies over the boards "
                  "or that warns or fails on some board. A board on which a check warns "
                  "counts as passing it: the column of boards that warn says on how many it does.")
