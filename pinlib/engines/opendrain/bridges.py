"""The rules of the parts that join an open-drain bus through pass transistors:
:func:`gate_drive` is the one status rule of the gate drive (scalars or arrays of
variants), :func:`overdrive` a transistor's overdrive from the gathered segments (the
wording's "conditional" note on a low level taken through it).  The checks themselves
are the array engine's (:mod:`.batch`), worded by :mod:`.wording_segment`."""

from __future__ import annotations

import numpy as np

from pinlib.engines.opendrain.rules import GATE_OVERDRIVE


def gate_drive(over):
    """Margin and status code of a pass transistor's gate overdrive (low rail minus its
    threshold): it does not conduct at all without overdrive (limit 0 V, a fail); below
    :data:`GATE_OVERDRIVE` its on-resistance is not assured (a warning).  A margin
    relative to a limit of 0 V means nothing: the margin is the overdrive itself, in
    volts (absolute). Scalars or arrays. [V]"""
    over = np.asarray(over, dtype=float)
    status = np.where(over <= 0, 2, np.where(over < GATE_OVERDRIVE, 1, 0)).astype(np.int8)
    return over - 0.0, status


def overdrive(link, seg_ins) -> float | None:
    """A pass transistor's gate overdrive: the lower of the two rails at its minimum
    minus its threshold (None where the part states no threshold). [V]"""
    br = link.dev.part.bridge
    if br is None or br.v_gs_th is None:
        return None
    rails = [float(s.vdd[0]) for s in seg_ins
             if any(d.ref == link.dev.ref for d in s.segment.devices)]
    return min(rails) - float(br.v_gs_th.value)
