"""Sizing a pull-up: how far a resistor sits inside its window, the largest bus
capacitance for a rise-time limit, and the sink current or current source needed."""

from __future__ import annotations

import numpy as np

from pinlib.physics.pullup.inputs import _arr, _non_negative, _out, _positive
from pinlib.physics.pullup.levels import parallel
from pinlib.physics.rc import RISE_30_70

__all__ = ["pullup_margins", "cb_limit", "sink_current_needed", "current_source_needed"]


def pullup_margins(r, rp_min, rp_max, tolerance=0.0, r_parallel=np.inf):
    """Tolerance-adjusted relative margins of a pull-up to its window.

    Parameters
    ----------
    r : float or array_like
        Candidate pull-up resistor (nominal). [Ω]
    rp_min : float or array_like
        Smallest allowed effective pull-up, Rp(min). [Ω]
    rp_max : float or array_like
        Largest allowed effective pull-up, Rp(max). [Ω]
    tolerance : float or array_like, optional
        Relative tolerance of every pull-up contributor, e.g. 0.01. [1]
    r_parallel : float or array_like, optional
        Other pull-ups on the line in parallel (parts' own), nominal; ``inf`` for
        none. [Ω]

    Returns
    -------
    margin_low : float or numpy.ndarray
        ``(R_eff (1 - tol) - Rp(min)) / Rp(min)``. [1]
    margin_high : float or numpy.ndarray
        ``(Rp(max) - R_eff (1 + tol)) / Rp(max)``. [1]

    Notes
    -----
    ``R_eff = r ∥ r_parallel``; every contributor is taken at the same relative
    tolerance, so the parallel value moves by that tolerance too.
    """
    tol = _non_negative(tolerance, "tolerance", "[1]")
    r_eff = _arr(parallel(r, r_parallel), "r")
    rp_min = _positive(rp_min, "rp_min", "[Ω]", allow_inf=True)
    rp_max = _positive(rp_max, "rp_max", "[Ω]", allow_inf=True)
    # written as ratios so that an unbounded Rp(min) or Rp(max) (inf) gives -1 or +1
    return _out(r_eff * (1 - tol) / rp_min - 1.0), _out(1.0 - r_eff * (1 + tol) / rp_max)


def cb_limit(tr, rp_min, tolerance=0.0, rise_factor=RISE_30_70):
    """The largest bus capacitance for which a resistor pull-up meets both limits.

    Parameters
    ----------
    tr : float or array_like
        Maximum rise time. [s]
    rp_min : float or array_like
        Rp(min) from the weakest sink. [Ω]
    tolerance : float or array_like, optional
        Relative tolerance of the pull-up. [1]
    rise_factor : float or array_like, optional
        Rise time in units of RC (0.8473 for 30–70 %). [1]

    Returns
    -------
    float or numpy.ndarray
        ``Cb(max) = tr (1 - tol) / (rise_factor · rp_min (1 + tol))``: with a resistor at
        its lowest still above Rp(min), its highest still meets tr. [F]

    Notes
    -----
    From UM10204 rev. 6 eq. 1 and 2: the window is empty once
    ``tr / (rise_factor · Cb) < Rp(min)``.  The §7.2.4 example: Rp(min) 1.7 kΩ at tr 300 ns
    limits Cb to about 200 pF.
    """
    tr = _non_negative(tr, "tr", "[s]")
    rp_min = _positive(rp_min, "rp_min", "[Ω]")
    tol = _non_negative(tolerance, "tolerance", "[1]")
    rise_factor = _positive(rise_factor, "rise_factor", "[1]")
    return _out(tr * (1 - tol) / (rise_factor * rp_min * (1 + tol)))


def sink_current_needed(vdd, v_ol, rp_max, tolerance=0.0):
    """The sink current a driver would need for a resistor pull-up to fit the window.

    Parameters
    ----------
    vdd : float or array_like
        Pull-up rail, at its maximum. [V]
    v_ol : float or array_like
        The driver's low level at that current. [V]
    rp_max : float or array_like
        Rp(max) from the rise-time limit. [Ω]
    tolerance : float or array_like, optional
        Relative tolerance of the pull-up. [1]

    Returns
    -------
    float or numpy.ndarray
        :math:`I_{OL} = (V_{DD} - V_{OL})(1 + tol)/(R_{p,max}(1 - tol))`. [A]
    """
    vdd = _non_negative(vdd, "vdd", "[V]")
    v_ol = _non_negative(v_ol, "v_ol", "[V]")
    rp_max = _positive(rp_max, "rp_max", "[Ω]")
    tol = _non_negative(tolerance, "tolerance", "[1]")
    return _out((vdd - v_ol) * (1 + tol) / (rp_max * (1 - tol)))


def current_source_needed(cb, v_lo, v_hi, tr):
    """Current of a current-source pull-up that moves the line between two levels in ``tr``.

    Parameters
    ----------
    cb : float or array_like
        Bus capacitance. [F]
    v_lo : float or array_like
        Lower measuring level (0.3·VDD for I2C). [V]
    v_hi : float or array_like
        Upper measuring level (0.7·VDD for I2C). [V]
    tr : float or array_like
        Rise time to meet. [s]

    Returns
    -------
    float or numpy.ndarray
        :math:`I = C_b (V_{hi} - V_{lo}) / t_r`: a constant current charges the line
        linearly. [A]

    Notes
    -----
    UM10204 rev. 6 §5.1 allows Fast-mode buses of 200 to 400 pF with a current source
    of at most 3 mA (or a switched-resistor pull-up).
    """
    cb = _non_negative(cb, "cb", "[F]")
    tr = _positive(tr, "tr", "[s]")
    return _out(cb * (_arr(v_hi, "v_hi") - _arr(v_lo, "v_lo")) / tr)
