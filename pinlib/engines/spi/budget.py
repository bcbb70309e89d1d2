"""The timing values of an SPI bus's parts and the terms of each timing budget
(:func:`budget_terms`)."""

from __future__ import annotations

import math
from dataclasses import field

import numpy as np

from pinlib.core import messages as M
from pinlib.core.valueclass import value_class
from pinlib.engines.pushline import (
    Flight,
)
from pinlib.engines.spi.modes import CS_ASSUMED, SpiMode
from pinlib.model.result import softest

#: The flights a peripheral's budget keeps per edge direction (``{"rise", "fall"}``);
#: the others are one flight over both edges.
EDGE_FIELDS = ("sclk", "cs")


@value_class(frozen=True)
class PeripheralTiming:
    """What the budget needs of one peripheral.

    Attributes
    ----------
    ref : str
        Reference designator. [1]
    sclk : dict
        Flight of each SCLK edge direction (``"rise"``, ``"fall"``) to the
        peripheral. [s]
    copi, cipo : Flight or None
        COPI flight to the peripheral over both edges, CIPO flight from it back to the
        controller; None when the signal is not routed or the part has no such pin. [s]
    cs : dict or None
        Flight of each CS edge direction to the peripheral (``"fall"`` asserts it,
        ``"rise"`` releases it: CS is active low); None as above. [s]
    t_valid, t_setup, t_hold, t_cs_setup, t_cs_hold : float or None
        The peripheral's timing values. [s]
    t_high, t_low : float or None
        The shortest SCLK high and low pulse its input takes (minimum); None: not
        checked. [s]
    t_cs_valid : float or None
        CS asserted to its first CIPO bit valid at its pin (CPHA 0), maximum. [s]
    f_max : float or None
        The peripheral's clock limit. [Hz]
    sources : dict
        Source text of each timing value, by name. [1]
    soft : dict
        The soft basis (:func:`pinlib.model.result.soft_basis`) of each timing value no
        datasheet or standard stands behind, by name, and under ``"levels"`` how firm
        the thresholds its inputs may never cross are (``analysis._level_state``). [1]
    """

    ref: str
    sclk: dict
    copi: Flight | None = None
    cs: dict | None = None
    cipo: Flight | None = None
    t_valid: float | None = None
    t_setup: float | None = None
    t_hold: float | None = None
    t_cs_setup: float | None = None
    f_max: float | None = None
    sources: dict = field(default_factory=dict)
    t_cs_valid: float | None = None
    t_cs_hold: float | None = None
    t_high: float | None = None
    t_low: float | None = None
    soft: dict = field(default_factory=dict)


@value_class(frozen=True)
class ControllerTiming:
    """What the budget needs of the controller.

    Attributes
    ----------
    ref : str
        Reference designator. [1]
    t_valid : float or None
        Launch edge to COPI valid at its pin into its test load (max). [s]
    t_setup, t_hold : float or None
        CIPO setup and hold at its input (min). [s]
    t_cs_lead : float or None
        CS asserted to the first SCLK edge that it guarantees; None: half a period. [s]
    t_cs_lag : float or None
        The last SCLK edge to CS released that it guarantees; None: half a period. [s]
    f_max : float or None
        Its SPI clock limit. [Hz]
    sources : dict
        Source text of each timing value, by name. [1]
    soft : dict
        As :attr:`PeripheralTiming.soft`. [1]
    """

    ref: str
    t_valid: float | None = None
    t_setup: float | None = None
    t_hold: float | None = None
    t_cs_lead: float | None = None
    f_max: float | None = None
    sources: dict = field(default_factory=dict)
    t_cs_lag: float | None = None
    soft: dict = field(default_factory=dict)


@value_class(frozen=True)
class Term:
    """One timing requirement as ``available(T) = a T + b >= required``.

    Attributes
    ----------
    id : str
        Check id (``"copi-setup"``, ``"cipo-setup"``...). [1]
    subject : str
        The peripheral it concerns. [1]
    a : float
        Coefficient of the period in the available time (1/2 or 0). [1]
    b : float
        Period-independent part of the available time. [s]
    required : float
        The part's requirement (setup, hold), 0 when not recorded. [s]
    source : str
        Where the requirement comes from. [1]
    parts : dict
        The terms that make up ``b`` and ``required``, for the check details. [s]
    recorded : bool
        Whether the part records the requirement (False: taken as 0). [1]
    assumed : str or None
        The controller's timing value the available time is assumed for, where it
        records none: ``"t_cs_setup"`` (its CS lead taken as half a period, ``CS lead``)
        or ``"t_cs_hold"`` (its CS lag, ``CS lag``); None where the time rests on no
        such assumption.  The check of a term assumed so warns where it would fail
        (:meth:`codes`). [1]
    soft : str or None
        The soft basis of the requirement (``"generic"``: a class's typical value;
        ``"estimate"``), where no datasheet or standard stands behind it: its check warns
        where it would fail (:func:`pinlib.model.result.soften`). [1]
    levels_soft : str or None
        The same of the input thresholds its signals switch at, where a signal that never
        crosses one leaves no time at all (its check fails on those thresholds, not on
        the requirement). [1]
    owner : str or None
        The device whose requirement it is, where not :attr:`subject` (the controller's
        CIPO setup and hold). [1]
    """

    id: str
    subject: str
    a: float
    b: float
    required: float
    source: str
    parts: dict
    recorded: bool = True
    assumed: str | None = None
    soft: str | None = None
    levels_soft: str | None = None
    owner: str | None = None

    @property
    def margin_unit(self) -> str | None:
        """``"s"`` where the check's margin is the slack in seconds (a requirement of 0,
        recorded or taken: a fraction of it means nothing), None where it is relative to
        the requirement (:attr:`pinlib.model.result.Check.margin_unit`). [1]"""
        return "s" if float(self.required) == 0.0 else None

    def check_margin(self, available):
        """The check's margin of an available time: relative to the requirement
        (:func:`pinlib.model.result.min_margin`), or the slack ``available - required``
        in seconds where :attr:`margin_unit` is ``"s"``; elementwise over arrays.  The
        one rule of the engine's check, the corner search and the Monte Carlo
        tables. [1] or [s]"""
        from pinlib.model.result import min_margin

        if self.margin_unit is None:
            return min_margin(available, self.required)
        return np.asarray(available, dtype=float) - float(self.required)

    def slack_codes(self, slack):
        """The status codes (:data:`pinlib.model.result.STATUS_CODES`) of a slack in
        seconds (:attr:`margin_unit` ``"s"``) by the requirement alone: it passes from 0
        up (no fraction of the limit to warn within) and fails below it, or warns where
        the 0 was taken for a requirement the part does not record (no published limit
        stands behind it); elementwise over arrays.  :meth:`codes` adds the rule of an
        assumed available time. [1]"""
        from pinlib.model.result import status_codes

        return np.minimum(status_codes(slack, 0.0), 2 if self.recorded else 1)

    def codes(self, margin, warn_margin: float):
        """The status codes (:data:`pinlib.model.result.STATUS_CODES`) of the check's
        margins (:meth:`check_margin`), elementwise over arrays: a relative margin by
        :func:`pinlib.model.result.status_codes` at ``warn_margin`` [1], a slack in
        seconds by :meth:`slack_codes`; at most a warning where the available time rests
        on an assumed CS lead or lag (:attr:`assumed`: a rule of thumb, as
        :func:`pinlib.model.result.rule_of_thumb`) or where the requirement is soft
        (:attr:`soft`); where no time is available at all (no finite margin), at most
        a warning only where the thresholds are soft (:attr:`levels_soft`).  The one
        rule of the engine's check
        (:func:`pinlib.engines.spi.evaluate.term_check`) and the Monte Carlo
        tables. [1]"""
        from pinlib.model.result import status_codes

        if self.margin_unit is None:
            got = status_codes(margin, warn_margin)
        else:
            got = self.slack_codes(margin)
        cap = 1 if self.assumed or self.soft else 2
        never_cap = 1 if self.levels_soft else 2
        if never_cap != cap:
            # no time at all (a signal never switches, no margin): that fails on the
            # thresholds, however much time was assumed or required
            cap = np.where(np.isfinite(np.asarray(margin, dtype=float)), cap, never_cap)
        return np.minimum(got, cap).astype(np.int8)

    @property
    def check_source(self) -> str:
        """The source the term's check names: its requirement's (or that the part does
        not record it), and where the available time rests on an assumed CS lead or lag
        (:attr:`assumed`), that assumption and the controller's value that would make the
        check a full one. [1]"""
        source = self.source or "not recorded by the part: taken as 0"
        if self.assumed:
            what, assumption = CS_ASSUMED[self.assumed]
            source += "; " + M.CS_TIMING_ASSUMED.format(what=what, assumption=assumption,
                                                        field=self.assumed)
        return source

    def available(self, period):
        """Available time at a clock period. [s]"""
        return self.a * np.asarray(period, dtype=float) + self.b

    def margin(self, period):
        """Available minus required time at a clock period. [s]"""
        return self.available(period) - self.required

    def never_switching(self) -> str:
        """The signals whose flight has no time (a receiver they never cross the
        threshold of: ``"SCLK and CIPO"``), or ``"a signal"`` where no part names one;
        why no time is available where :meth:`available` is not finite. [1]"""
        never = sorted({k.split("_")[0].upper() for k, v in self.parts.items()
                        if isinstance(v, float) and not math.isfinite(v)})
        return " and ".join(never) or "a signal"


def _levels(*states) -> str | None:
    """A term's :attr:`Term.levels_soft` from the level states of the receivers it
    involves (``analysis._level_state``: ``"firm"``, a soft basis or None): firm (None)
    where any is firm, else the softest basis (a class's typical value before an
    estimate), else None."""
    return None if "firm" in states else softest(states)


def _or0(x):
    return 0.0 if x is None else float(x)


def _pick(fast, a, b):
    """``a`` where ``fast``, else ``b``: floats where all are, else elementwise over
    arrays of boards. [1]"""
    out = np.where(fast, a, b)
    return float(out) if out.ndim == 0 else out


def _hold_corner(b_slow, b_fast):
    """Where a hold time between two flights of one driver is shorter at its fast corner
    than at its slow one: each corner's flights measured from that corner's own output
    timing reference, so the two are paired within a corner, never mixed.  A NaN
    (no time) keeps the slow corner. [1]"""
    return np.asarray(b_fast, dtype=float) < np.asarray(b_slow, dtype=float)


def _earliest(f):
    """A flight's earliest end over its driver's corners (the slow one's, or the fast
    one's where it states one and that is earlier): the minimum delay of a hold check
    whose other terms come from another part. [s]"""
    fast = f.at_fast()
    return _pick(_hold_corner(f.early, fast.early), fast.early, f.early)


def budget_terms(mode: SpiMode, controller: ControllerTiming,
                 peripherals: list[PeripheralTiming], t_bridge: float = 0.0) -> list[Term]:
    """Every timing requirement of an SPI bus as a linear function of the period.

    Parameters
    ----------
    mode : SpiMode
        The bus's clock mode. [1]
    controller : ControllerTiming
        The controller's timing. [s]
    peripherals : list of PeripheralTiming
        Each peripheral's flights and timing. [s]
    t_bridge : float, optional
        One crossing of every bridging part in the path, summed (``sum t_pd``). [s]

    Returns
    -------
    list of Term
        COPI setup and hold, CIPO setup and hold and CS setup and hold for each
        peripheral that has the signals, its SCLK high and low pulses where it records
        their minimum, and in a CPHA 0 mode the first CIPO bit after CS where the
        peripheral records ``t_cs_valid``; a term whose inputs are missing (no CIPO
        route, no ``t_valid``) is left out, and the caller says so.
    """
    terms: list[Term] = []
    c_src = controller.sources
    t_path = 2.0 * t_bridge  # a CIPO bit's round trip crosses every bridge twice
    for p in peripherals:
        # the thresholds its inputs (and, for CIPO, the controller's) switch at: where a
        # signal never crosses one, that is what its term fails on
        lv_p = _levels(p.soft.get("levels"))
        lv_c = _levels(p.soft.get("levels"), controller.soft.get("levels"))
        s_sample = p.sclk[mode.sample_edge]
        s_launch = p.sclk[mode.launch_edge]
        s_first = p.sclk[mode.first_edge]
        # the transfer's last edge returns SCLK to its idle level
        s_last = p.sclk["fall" if mode.idle == "low" else "rise"]
        src = p.sources
        # the pulses at its input: from one edge's crossing of its far threshold to the
        # next edge's of its near one (an SCLK whose rise and fall arrive apart narrows
        # one of them)
        for tid, name, start, end in (("sclk-high", "t_high", "rise", "fall"),
                                      ("sclk-low", "t_low", "fall", "rise")):
            need = getattr(p, name)
            if need is not None:
                terms.append(Term(
                    tid, p.ref, 0.5, p.sclk[end].early - p.sclk[start].late, float(need),
                    src.get(name, ""),
                    {"half_period": "T/2", f"sclk_{start}_late": p.sclk[start].late,
                     f"sclk_{end}_early": p.sclk[end].early, name: float(need)},
                    soft=p.soft.get(name), levels_soft=lv_p))
        if p.copi is not None:
            tv = _or0(controller.t_valid)
            terms.append(Term(
                "copi-setup", p.ref, 0.5, s_sample.early - tv - p.copi.late,
                _or0(p.t_setup), src.get("t_setup", ""),
                {"half_period": "T/2", "sclk_early": s_sample.early, "t_valid_controller": tv,
                 "copi_late": p.copi.late, "t_setup": _or0(p.t_setup)},
                p.t_setup is not None, soft=p.soft.get("t_setup"), levels_soft=lv_p))
            # hold: at the controller's slow and fast corners, the shorter (both
            # flights are its own, each from its reference at that corner)
            fc, fs = p.copi.at_fast(), s_sample.at_fast()
            fast = _hold_corner(p.copi.early - s_sample.late, fc.early - fs.late)
            copi_early = _pick(fast, fc.early, p.copi.early)
            sclk_late = _pick(fast, fs.late, s_sample.late)
            terms.append(Term(
                "copi-hold", p.ref, 0.5, copi_early - sclk_late,
                _or0(p.t_hold), src.get("t_hold", ""),
                {"half_period": "T/2", "copi_early": copi_early, "sclk_late": sclk_late,
                 "t_hold": _or0(p.t_hold)}, p.t_hold is not None, soft=p.soft.get("t_hold"),
                levels_soft=lv_p))
        if p.cipo is not None and p.t_valid is not None:
            terms.append(Term(
                "cipo-setup", p.ref, 0.5, -(s_launch.late + p.t_valid + p.cipo.late + t_path),
                _or0(controller.t_setup), c_src.get("t_setup", ""),
                {"half_period": "T/2", "sclk_late": s_launch.late, "t_valid": p.t_valid,
                 "cipo_late": p.cipo.late, "bridges_round_trip": t_path,
                 "t_setup_controller": _or0(controller.t_setup)},
                controller.t_setup is not None, soft=controller.soft.get("t_setup"),
                levels_soft=lv_c, owner=controller.ref))
        if p.cipo is not None:
            # SCLK is the controller's and CIPO the peripheral's: each at the corner of
            # its own driver that makes it earliest
            sclk_early, cipo_early = _earliest(s_launch), _earliest(p.cipo)
            terms.append(Term(
                "cipo-hold", p.ref, 0.5, sclk_early + cipo_early,
                _or0(controller.t_hold), c_src.get("t_hold", ""),
                {"half_period": "T/2", "sclk_early": sclk_early,
                 "cipo_early": cipo_early, "t_hold_controller": _or0(controller.t_hold)},
                controller.t_hold is not None, soft=controller.soft.get("t_hold"),
                levels_soft=lv_c, owner=controller.ref))
        if p.cs is not None:
            # a controller that records no CS lead (lag) is taken to give half a period
            # (modes.CS_LEAD_SOURCE, CS_LAG_SOURCE): the checks that rest on it warn only
            if controller.t_cs_lead is None:
                a, lead = 0.5, 0.0
                lead_text, lead_assumed = "T/2", "t_cs_setup"
            else:
                a, lead = 0.0, float(controller.t_cs_lead)
                lead_text, lead_assumed = lead, None
            cs_on, cs_off = p.cs["fall"], p.cs["rise"]  # CS is active low
            terms.append(Term(
                "cs-setup", p.ref, a, lead + s_first.early - cs_on.late,
                _or0(p.t_cs_setup), src.get("t_cs_setup", ""),
                {"lead": lead_text, "sclk_early": s_first.early, "cs_late": cs_on.late,
                 "t_cs_setup": _or0(p.t_cs_setup)}, p.t_cs_setup is not None,
                lead_assumed, soft=p.soft.get("t_cs_setup"), levels_soft=lv_p))
            if controller.t_cs_lag is None:
                a_off, lag, lag_text, lag_assumed = 0.5, 0.0, "T/2", "t_cs_hold"
            else:
                a_off, lag_assumed = 0.0, None
                lag = lag_text = float(controller.t_cs_lag)
            # the last edge leaves the controller lag before CS is released: the
            # peripheral sees CS held from the last edge's late arrival to CS's early one
            # at the controller's slow and fast corners, the shorter (as copi-hold)
            fc, fs = cs_off.at_fast(), s_last.at_fast()
            fast = _hold_corner(cs_off.early - s_last.late, fc.early - fs.late)
            cs_early = _pick(fast, fc.early, cs_off.early)
            sclk_late = _pick(fast, fs.late, s_last.late)
            terms.append(Term(
                "cs-hold", p.ref, a_off, lag + cs_early - sclk_late,
                _or0(p.t_cs_hold), src.get("t_cs_hold", ""),
                {"lag": lag_text, "sclk_late": sclk_late, "cs_early": cs_early,
                 "t_cs_hold": _or0(p.t_cs_hold)}, p.t_cs_hold is not None, lag_assumed,
                soft=p.soft.get("t_cs_hold"), levels_soft=lv_p))
            if mode.cpha == 0 and p.cipo is not None and p.t_cs_valid is not None:
                # CPHA 0: the first bit is driven when CS asserts and sampled on the first
                # edge, ``lead`` after CS leaves the controller; CS crosses each bridge
                # out and CIPO back
                terms.append(Term(
                    "cipo-first-bit", p.ref, a,
                    lead - (cs_on.late + p.t_cs_valid + p.cipo.late + t_path),
                    _or0(controller.t_setup), c_src.get("t_setup", ""),
                    {"lead": lead_text, "cs_late": cs_on.late, "t_cs_valid": p.t_cs_valid,
                     "cipo_late": p.cipo.late, "bridges_round_trip": t_path,
                     "t_setup_controller": _or0(controller.t_setup)},
                    controller.t_setup is not None, lead_assumed,
                    soft=controller.soft.get("t_setup"), levels_soft=lv_c, owner=controller.ref))
    return terms
