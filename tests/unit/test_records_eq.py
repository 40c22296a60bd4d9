"""The guard of ``tests/conftest.py``: records declared ``eq=False`` are never compared."""

from __future__ import annotations

import pytest

from carboy.model.plan_demand import Demand


def test_comparing_two_records_without_eq_fails():
    one, other = Demand({}, 0.0, 1.0), Demand({}, 0.0, 1.0)
    assert one == one and one != "a text"   # identity, and other types, as before
    with pytest.raises(AssertionError, match="declared eq=False"):
        assert one == other
    with pytest.raises(AssertionError, match="declared eq=False"):
        assert one in [other]
