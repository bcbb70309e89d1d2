"""The bench panel's answer of workbench 01 (:class:`BenchReading`)."""

from __future__ import annotations

from pinlib.core.valueclass import value_class


@value_class(frozen=True)
class BenchReading:
    """The bench panel's answer: a rise time measured on the board turned into Cb.

    Attributes
    ----------
    t_measured : float
        The rise time read on the oscilloscope. [s]
    c_probe : float
        The probe's capacitance. [F]
    levels : tuple of float
        The measuring levels as fractions of VDD. [1]
    rp : float
        The effective pull-up on the line (the engine's nominal value). [Ω]
    cb : float
        Bus capacitance without the probe. [F]
    rise : float
        The rise time between the same levels without the probe. [s]
    cb_model : float
        The engine's bus capacitance of the line, for comparison. [F]
    """

    t_measured: float
    c_probe: float
    levels: tuple
    rp: float
    cb: float
    rise: float
    cb_model: float
