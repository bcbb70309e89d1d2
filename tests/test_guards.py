"""pinlib.physics.guards: one number and arrays meet the same domain rules."""

from __future__ import annotations

import math

import numpy as np
import pytest

from pinlib.core.errors import InputError
from pinlib.physics.guards import non_negative, positive

INF, NAN = math.inf, math.nan


# the domains are the guards' own definitions (a number above 0, finite unless +inf is
# allowed; at or above 0 and finite): common practice, no source
@pytest.mark.parametrize("value, finite_ok, inf_ok", [
    (1e-12, True, True), (0.0, False, False), (-1.0, False, False), (INF, False, True),
    (-INF, False, False), (NAN, False, False), (5, True, True), (np.float64(2.0), True, True),
])
def test_positive_takes_the_same_values_as_one_number_and_in_an_array(value, finite_ok,
                                                                       inf_ok):
    for allow_inf, ok in ((False, finite_ok), (True, inf_ok)):
        for given in (value, [value], np.array([[value, 1.0]])):
            if ok:
                out = positive(given, "x", "[s]", allow_inf=allow_inf)
                assert np.array_equal(out, np.asarray(given, dtype=float))
                assert isinstance(out, np.ndarray)
            else:
                with pytest.raises(InputError) as info:
                    positive(given, "x", "[s]", allow_inf=allow_inf)
                assert info.value.field == "x"


@pytest.mark.parametrize("value, ok", [
    (0.0, True), (-0.0, True), (3.0, True), (-1e-30, False), (INF, False), (NAN, False),
])
def test_non_negative_takes_the_same_values_as_one_number_and_in_an_array(value, ok):
    for given in (value, [value, 0.0]):
        if ok:
            assert np.array_equal(non_negative(given, "x", "[V]"),
                                  np.asarray(given, dtype=float))
        else:
            with pytest.raises(InputError):
                non_negative(given, "x", "[V]")
