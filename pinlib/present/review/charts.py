"""The charts of each bus of a design review: the pull-up windows of an open-drain bus;
per push-pull line and driver, edge time against load and the far-end waveforms; the
timing budget of an SPI bus; per coupling, the noise against spacing and the victim's
noise waveforms."""

from __future__ import annotations

import numpy as np

from pinlib.core.errors import PinlibError
from pinlib.core.labels import path_label
from pinlib.model.result import BusResult
from pinlib.present.review.draw import ReviewChart, _draw, _f


def _pullup_charts(bus, design, result: BusResult, keys, charts):
    from pinlib.present import charts as ch
    from pinlib.present import plotdata

    for seg in bus.segments:
        place = ("segment", bus.id, seg.id) if result.segments else ("bus", bus.id)
        for sig in ("sda", "scl"):
            where = f"{sig.upper()}" + (f", segment {seg.id}" if result.segments else "")
            title = f"Pull-up window: {bus.id} {where}"
            key = keys(bus.id, seg.id if result.segments else "", sig, "pullup-window")
            try:
                d = plotdata.pullup_window_data(bus, design, seg.id, sig, analysis=result)
            except PinlibError as err:
                charts.setdefault(place, []).append(
                    ReviewChart(key, "pullup-window", title, "", None, err.message))
                continue
            if np.isfinite(d.rp_min):
                rp_min = f"{_f(d.rp_min, 'Ω')}" + (f" set by {d.weakest}" if d.weakest else "")
            else:  # no Rp(min) at all: the far side's pull-ups alone are too much
                rp_min = (f"none: {d.weakest + chr(39) + 's' if d.weakest else 'the'} sink "
                          "cannot carry the far side's pull-ups")
            sub = f"tr ≤ {_f(d.tr_max, 's')}, rise = {d.rise_factor:.4g}·Rp·Cb; Rp(min) {rp_min}"
            sink, far = (("(IOL − I(far))", "; I(far) is the far side's pull-up current, "
                          "which the sink also carries through the translator") if d.shared
                         else ("IOL", ""))
            shaded = ("Allowed pull-ups (shaded) between" if _window_opens(d) else
                      "No pull-up fits at any Cb shown: Rp(min) lies above Rp(max), with")
            caption = (f"{shaded} Rp(min) = (VDD(max) − VOL)/{sink} "
                       f"of the weakest sink and Rp(max) = tr/({d.rise_factor:.4g}·Cb){far}. The "
                       f"diamond is the design: {_f(d.chosen_rp, 'Ω')} on "
                       f"{_f(d.chosen_cb, 'F')} (Rp(max) there {_f(d.rp_max_chosen, 'Ω')}). "
                       f"Source: {d.source}.")
            charts.setdefault(place, []).append(_draw(
                key, "pullup-window", title, caption,
                lambda d=d, title=title, sub=sub: ch.pullup_window(
                    d.cb, d.rp_min, d.rp_max, chosen_cb=d.chosen_cb, chosen_rp=d.chosen_rp,
                    title=title, subtitle=sub,
                    chosen_label=f"design: {_f(d.chosen_rp, 'Ω')} at {_f(d.chosen_cb, 'F')}")))


def _window_opens(d) -> bool:
    """Whether the pull-up window of ``d`` (:func:`pinlib.present.plotdata.pullup_window_data`)
    is open at some Cb it spans."""
    hi = np.asarray(d.rp_max, dtype=float)
    lo = np.broadcast_to(np.asarray(d.rp_min, dtype=float), hi.shape)
    ok = np.isfinite(lo) & np.isfinite(hi) & (lo > 0)
    return bool(np.any(lo[ok] <= hi[ok]))


def _sentence(text: str) -> str:
    """A phrase as a caption's sentence: its first letter capital."""
    return text[:1].upper() + text[1:]


def _push_pull_charts(bus, design, result: BusResult, keys, charts):
    import numpy as np

    from pinlib.present import charts as ch
    from pinlib.present import plotdata

    lines = plotdata.line_analyses(bus, design, result)
    for sig, la in lines.items():
        place = ("line", bus.id, sig)
        for ref in la.cases:
            title = f"Edge time against load: {ref} driving {bus.id} {sig.upper()}"
            key = keys(bus.id, sig, ref, "edges")
            try:
                e = plotdata.edge_vs_load_data(bus, design, sig, driver=ref, analysis=lines)
                w = plotdata.waveform_data(bus, design, sig, driver=ref, analysis=lines)
            except PinlibError as err:
                charts.setdefault(place, []).append(
                    ReviewChart(key, "edge-vs-load", title, "", None, err.message))
                continue
            op_label = e.operating_label
            routed = la.net is not None
            at = ("at the slowest receiver's own point of the route" if routed
                  else "at the far end")
            drv = la.cases[ref].driver
            model_text = (
                f"{drv.label} is open-drain: the rise through the line's pull-ups, the "
                "fall through its sink (r_out, or v_ol at i_ol)"
                if drv.pin.drive == "open-drain" else
                f"the driver model of {ref} (a ramp behind r_out, fitted to its datasheet "
                "edges)")
            caption = (f"Curves: {model_text} into a lumped load at the pin"
                       + (f", without and with the {_f(e.rs, 'Ω')} series resistor" if e.rs
                          else "")
                       + ". Diamonds: the part's datasheet points. Cross: the engine's "
                       f"operating point, the 10–90 % rise {_f(e.operating[1], 's')} {at} "
                       f"into {_f(e.operating[0], 'F')} (line and pins); the fall is "
                       f"{_f(e.operating_fall, 's')}.")
            charts.setdefault(place, []).append(_draw(
                key, "edge-vs-load", title, caption,
                lambda e=e, title=title, op_label=op_label: ch.edge_vs_load(
                    e.loads, np.vstack(list(e.curves.values())), series=list(e.curves),
                    points=e.points if len(e.points[0]) else None,
                    operating=(e.operating[0], e.operating[1], op_label),
                    curves_title=e.curves_title, edge_label="Edge time", title=title,
                    subtitle=e.subtitle)))
            title = f"Receiver waveforms: {bus.id} {sig.upper()} from {ref}"
            rx = ", ".join(w.receivers) or "no receiver"
            over = "; ".join(f"{n}: overshoot {_f(v, 'V')}" for n, v in w.overshoot.items())
            caption = ((f"Voltage at each receiver's own point of the route ({rx}) for a "
                        f"rising and a falling edge of {ref}" if routed else
                        f"Voltage at the far end ({rx}) for a rising and a falling edge of "
                        f"{ref}") + (", with and without the series resistor"
                                     if e.rs and not routed else "")
                       + f". Shaded: the band between VIL {_f(w.v_il, 'V')} and VIH "
                       f"{_f(w.v_ih, 'V')}; dotted: {w.high_name} {_f(w.vdd, 'V')}"
                       + (" (the pull-up's rail less the pins' leakage through it)"
                          if w.high_name != "VDD" else "") + f". {_sentence(over)}."
                       + ("".join(f" {_sentence(n)}." for n in w.notes)))
            charts[place].append(_draw(
                keys(bus.id, sig, ref, "waveforms"), "waveforms", title, caption,
                lambda w=w, title=title, rx=rx: ch.waveforms(
                    w.t, w.traces, v_il=w.v_il, v_ih=w.v_ih, vdd=w.vdd,
                    vdd_name=w.high_name, title=title, subtitle=f"at {rx}",
                    groups=w.groups)))
    sa = plotdata.workings(bus, design, result) if bus.protocol == "spi" else None
    if sa is not None and sa.terms:
        _budget_chart(bus, design, result, keys, charts)


def _budget_chart(bus, design, result: BusResult, keys, charts):
    """The SPI timing budget of a bus as stacked bars (a requirement without a time
    is named in the caption, not drawn); beside each bar the nominal board's margin and,
    where the bus's check is taken at a worse corner of its tolerances, that one (the
    checks table's figure), which also colours it."""
    from pinlib.present import charts as ch
    from pinlib.present import plotdata

    title = f"SPI timing budget: {bus.id} at {_f(bus.clock, 'Hz')}"
    key = keys(bus.id, "timing-budget")
    try:
        # the bus's result, not its workings alone: its checks give the worst corners
        tb = plotdata.timing_budget_data(bus, design, analysis=result)
    except PinlibError as err:
        charts.setdefault(("bus", bus.id), []).append(
            ReviewChart(key, "timing-budget", title, "", None, err.message))
        return
    missing = "".join(f" Not drawn: {path_label(path)} ({why})."
                      for path, why in tb.not_drawn.items())
    if not tb.rows:
        charts.setdefault(("bus", bus.id), []).append(
            ReviewChart(key, "timing-budget", title, "", None,
                        "no requirement has a time to draw." + missing))
        return
    caption = ("Each bar is one requirement the engine checks: the time it uses against "
               "the time available (the tick: half the clock period, or the controller's "
               "CS lead). Flights run from the driver's datasheet reference (50 % into its "
               "test load) to the receiver's threshold on the real line; a term in the "
               "requirement's favour (a clock that arrives late on a setup path, data "
               "that arrives late on a hold path) is a credit that stacks left of zero. "
               "The bars are the nominal board; beside each is its margin"
               + ("; where the check is taken at a worse corner of the tolerances, its "
                  "margin there follows (the checks table's figure) and sets the colour"
                  if tb.worst else "") + "." + missing)
    charts.setdefault(("bus", bus.id), []).append(_draw(
        key, "timing-budget", title, caption,
        lambda tb=tb, title=title: ch.timing_budget(
            tb.rows, available=tb.available, margins=tb.margins, status=tb.status,
            worst=tb.worst, title=title, subtitle=f"SPI mode {bus.spi_mode}, period "
                                  f"{_f(tb.period, 's')}")))


def _coupling_charts(result, keys, charts):
    """The noise against spacing and the victim's waveforms of one coupling result."""
    from pinlib.present import charts as ch
    from pinlib.present import plotdata

    place = ("bus", result.id)
    title = f"Crosstalk against spacing: {result.victim} beside {result.aggressor}"
    key = keys(result.victim, result.aggressor, "noise-vs-spacing")
    try:
        d = plotdata.noise_vs_spacing_data(result)
        wv = plotdata.noise_waveform_data(result)
    except PinlibError as err:
        charts.setdefault(place, []).append(
            ReviewChart(key, "noise-vs-spacing", title, "", None, err.message))
        return
    from pinlib.present.values import search_bound_words

    # at the search's own end the minimum is a bound: "or less", as the figures say
    least = ("no spacing in the models' range passes" if d.minimum_spacing is None
             else f"the minimum spacing {_f(d.minimum_spacing, 'm')}"
                  f"{search_bound_words(result.figures, 'minimum_spacing')}")
    caption = (f"Peak noise on the victim (the largest excursion from its held level at "
               f"any receiver) against the gap, for the design's {_f(d.length, 'm')} run; "
               f"each point is a spacing the engine solved in time. Shaded: the noise that "
               f"keeps a held-low receiver below VIL and a held-high one above VIH "
               f"({_f(d.allowed, 'V')}); the checks also weigh how long a crossing lasts "
               f"against tSP (a crossing shorter than it warns; shaded orange where the "
               f"noise is beyond a threshold and no check fails). Dashed: {least}, where "
               f"no check fails. Diamond: the design, "
               f"{_f(d.design_peak, 'V')} at {_f(d.design_spacing, 'm')}.")
    charts.setdefault(place, []).append(_draw(
        key, "noise-vs-spacing", title, caption,
        lambda d=d, title=title: ch.noise_vs_spacing(
            d.spacing, d.peak, allowed=d.allowed, design_spacing=d.design_spacing,
            design_peak=d.design_peak, minimum_spacing=d.minimum_spacing,
            within_spacing=d.within_spacing, t_sp=d.t_sp, searched_from=d.searched_from,
            title=title,
            subtitle=f"parallel length {_f(d.length, 'm')}")))
    # held low and held high on time axes of their own: a line held high through its
    # pull-up recovers over a far longer time than a driven-low one, whose pulse a shared
    # axis squeezed into its first pixels
    for held in ("low", "high"):
        labels = [k for k in wv.traces if k.startswith(f"held {held}")]
        if not labels:
            continue
        title = f"Victim noise, held {held}: {result.victim} beside {result.aggressor}"
        level = f"VIL {_f(wv.v_il, 'V')}" if held == "low" else f"VIH {_f(wv.v_ih, 'V')}"
        caption = (f"The victim's voltage at both ends of the run, held {held}, for the "
                   f"aggressor's edge (rising or falling: the same noise, its sign turned) "
                   f"that pushes it toward {level}; drawn until it has settled back. "
                   f"Shaded: between VIL {_f(wv.v_il, 'V')} and VIH {_f(wv.v_ih, 'V')}; "
                   f"dotted: VDD {_f(wv.vdd, 'V')}.")
        charts[place].append(_draw(
            keys(result.victim, result.aggressor, f"noise-waveforms-{held}"), "waveforms",
            title, caption, lambda wv=wv, labels=labels, title=title: ch.waveforms(
                *wv.window(labels), v_il=wv.v_il, v_ih=wv.v_ih, vdd=wv.vdd, title=title,
                subtitle="at the victim's receivers")))
