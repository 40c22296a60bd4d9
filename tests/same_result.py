"""One check shared by the path-agreement tests: two one-solution results alike."""

from __future__ import annotations

import pytest


def assert_same_species(one, other) -> None:
    """pH, ionic strength, every species and its coefficient of two ``Speciation``
    results alike, to the tolerances the solver's paths agree to (their order of
    species may differ: it follows the order of the keys)."""
    assert one.converged and other.converged
    assert one.pH == pytest.approx(other.pH, abs=1e-9)
    assert one.ionic_strength_molar == pytest.approx(other.ionic_strength_molar, rel=1e-8)
    assert set(one.species) == set(other.species)
    for lab, c in other.species.items():
        assert one.species[lab] == pytest.approx(c, rel=1e-7, abs=1e-300), lab
        assert one.activity_coefficients[lab] == pytest.approx(
            other.activity_coefficients[lab], rel=1e-8)
    assert one.warnings == other.warnings
    assert abs(one.charge_residual_molar) <= 1e-12 * sum(one.species.values())
