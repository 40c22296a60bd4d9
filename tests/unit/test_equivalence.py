"""The equivalence-point rule (planning.toml [equivalence]: pKa gap 3, strong-like 2.5,
no end point within 2.5 of pKw), on stoichiometric amounts."""

from __future__ import annotations

import pytest

from carboy.model.equivalence import equivalence_amounts
from carboy.model.mixture import Mixture


def points(catalog, totals, direction="base", capacity=1, n_max=1.0):
    return equivalence_amounts(Mixture(totals, volume_l=1.0), catalog, direction, capacity,
                               n_max)


def test_strong_acid_titrates_with_the_first_phosphoric_step(catalog):
    # HCl and H3PO4's first step (pKa 2.15, strong-like) share an end point at 0.01 + 0.01
    # mol OH-; the second step (7.20) has its own at 0.03; the third (12.35) shows none
    out = points(catalog, {"Cl-": 0.01, "phosphate": 0.01})
    assert [(n, sysk, step) for n, sysk, step, _ in out] == [
        (pytest.approx(0.02), "phosphate", 1), (pytest.approx(0.03), "phosphate", 2)]
    assert out[0][3].startswith("hydrochloric acid + ")


def test_close_steps_share_one_end_point(catalog):
    # citric acid: pKa 3.13, 4.76, 6.40 lie within 3 of each other: one point, 3 protons
    out = points(catalog, {"citrate": 0.01})
    assert [(n, step) for n, _, step, _ in out] == [(pytest.approx(0.03), 3)]


def test_capacity_and_range(catalog):
    # a diprotic base (capacity 2) needs half the mol; points beyond n_max are left out
    two = points(catalog, {"Cl-": 0.01, "phosphate": 0.01}, capacity=2)
    assert [n for n, *_ in two] == [pytest.approx(0.01), pytest.approx(0.015)]
    assert len(points(catalog, {"Cl-": 0.01, "phosphate": 0.01}, n_max=0.025)) == 1
