"""The activity seam: the Davies function, its slope, and their twins agree."""

from __future__ import annotations

import numpy as np
import pytest

from carboy.model import activity


@pytest.mark.parametrize("ionic", [1e-9, 1e-4, 0.01, 0.3, 0.499, 0.5, 0.8, 3.0])
def test_d_and_slope_together_match_the_separate_functions(ionic):
    d, slope = activity.davies_d_and_slope(np.array([ionic]))
    assert d[0] == pytest.approx(float(activity.davies_d(np.array([ionic]))[0]), rel=1e-14)
    assert slope[0] == pytest.approx(float(activity.davies_dprime(np.array([ionic]))[0]),
                                     rel=1e-14, abs=1e-300)
    assert d[0] == pytest.approx(activity.davies_d_float(ionic), rel=1e-14)
    assert slope[0] == pytest.approx(activity.davies_dprime_float(ionic), rel=1e-14,
                                     abs=1e-300)


def test_slope_is_the_derivative():
    i = np.array([1e-3, 0.05, 0.2])
    h = 1e-7
    numeric = (activity.davies_d(i + h) - activity.davies_d(i - h)) / (2 * h)
    np.testing.assert_allclose(activity.davies_d_and_slope(i)[1], numeric, rtol=1e-6)
