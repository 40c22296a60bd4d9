"""Concentrated stock acids and bases: one water per litre on every path, and a
concentrate past the Pitzer model's reach (96 % sulfuric acid) still solved and planned.

The water per litre of a one-compound solution comes from the compound's density table
on the one-solution path, the few-point batches and the large batches alike (a large
batch used to take the partial-molar-volume estimate instead: 6 M sulfuric acid was
pH -3.26 alone and -2.67 as the first point of a curve).  The pH values themselves are
checked against PHREEQC (phreeqpython, pitzer.dat) at the same molality in
tests/reference; here the paths are checked against each other.
"""

from __future__ import annotations

import numpy as np
import pytest

from carboy.errors import InvalidInput
from carboy.model.catalog import default_catalog
from carboy.model.mixture import Mixture, titration_batch
from carboy.model.pitzer_reach import AUTO_NOTE_START, beyond_reach
from carboy.model.planner import plan_neutralization
from carboy.model.reagents import parse_reagent
from carboy.model.speciation import speciate, speciate_batch

CAT = default_catalog()


def _mix(name: str, molar: float, volume_l: float = 1.0) -> Mixture:
    return Mixture.from_compounds([(CAT.compound(name), molar)], volume_l=volume_l)


def _same_points(mix: Mixture, points: int):
    batch, _ = titration_batch(mix, {"Na+": 1.0}, np.zeros(points), 0.0)
    return batch


@pytest.mark.parametrize(("name", "molar"), [("H2SO4", 3.0), ("H2SO4", 6.0), ("HCl", 10.0),
                                             ("NaOH", 8.0), ("HNO3", 10.0)])
@pytest.mark.parametrize("points", [1, 3, 13, 100, 400])
def test_every_path_takes_the_density_tables_water(name, molar, points):
    mix = _mix(name, molar)
    alone = speciate(mix, activity="pitzer", catalog=CAT)
    res = speciate_batch(_same_points(mix, points), activity="pitzer", catalog=CAT)
    assert res.converged.all()
    assert np.allclose(res.pH, alone.pH, rtol=0.0, atol=1e-7), (res.pH[:3], alone.pH)
    assert np.allclose(res.model_part.water_kg_per_l, alone.model_part.water_kg_per_l,
                       rtol=1e-12)
    assert not any("estimated" in w for w in res.warnings[0])


def test_a_curve_starts_at_the_samples_own_ph():
    """The plan's sample pH (one solution) and its curve's first point (a 400-point
    batch) are the same state."""
    plan = plan_neutralization(_mix("H2SO4", 6.0, 0.1), parse_reagent("NaOH=6M", CAT),
                               catalog=CAT, activity="auto")
    assert plan.activity_model == "pitzer"
    assert plan.curve[0, 0] == 0.0
    assert plan.curve[0, 1] == pytest.approx(plan.initial_pH, abs=1e-6)


def test_a_concentrate_past_the_pitzer_models_reach_takes_davies_under_auto():
    mix = _mix("H2SO4", 17.97)   # 96 % w/w: about 0.07 kg of water a litre
    res = speciate(mix, activity="auto", catalog=CAT)
    assert np.isfinite(res.pH) and res.converged
    assert res.model_part.model == "davies"
    assert any(w.startswith(AUTO_NOTE_START) for w in res.warnings)
    # every path, every size: the whole batch on one model, the same start
    for points in (3, 12, 50, 400):
        reagent = parse_reagent("NaOH=6M", CAT)
        batch, _ = titration_batch(_mix("H2SO4", 17.97, 0.1), dict(reagent.compound.composition),
                                   np.linspace(0.0, 4.0, points), reagent.l_per_mol)
        got = speciate_batch(batch, activity="auto", catalog=CAT)
        assert got.model_part.model == "davies" and got.converged.all()
        assert got.pH[0] == pytest.approx(res.pH, abs=1e-7)
        assert any(w.startswith(AUTO_NOTE_START) for w in got.warnings[0])


@pytest.mark.parametrize("points", [1, 3, 400])
def test_the_pitzer_model_asked_of_such_a_concentrate_is_refused_by_name(points):
    mix = _mix("H2SO4", 17.97)
    with pytest.raises(InvalidInput) as err:
        if points == 1:
            speciate(mix, activity="pitzer", catalog=CAT)
        else:
            speciate_batch(_same_points(mix, points), activity="pitzer", catalog=CAT)
    assert err.value.field == "activity"
    assert "mol of solutes per kg of water" in str(err.value)
    assert "dilute it" in str(err.value)


def test_a_plan_of_96_percent_sulfuric_acid_says_why_its_model_is_davies():
    volume = 0.1
    plan = plan_neutralization(_mix("H2SO4", 17.97, volume), parse_reagent("NaOH=6M", CAT),
                               catalog=CAT, activity="auto")
    assert plan.activity_model == "davies"
    assert any(w.startswith(AUTO_NOTE_START) for w in plan.warnings)
    assert plan.full.reagent_mol == pytest.approx(2 * 17.97 * volume, rel=1e-9)   # every proton
    assert "dilute-first" in {c.code for c in plan.cautions}
    with pytest.raises(InvalidInput) as err:
        plan_neutralization(_mix("H2SO4", 17.97, volume), parse_reagent("NaOH=6M", CAT),
                            catalog=CAT, activity="pitzer")
    assert err.value.field == "activity"


def test_only_the_sums_failing_count_as_past_the_reach():
    assert beyond_reach(OverflowError("math range error"))
    assert beyond_reach(ValueError("math domain error"))
    assert not beyond_reach(InvalidInput("x", 1, "bad"))   # carboy's own: a real error
    assert not beyond_reach(KeyError("x"))


def test_the_pure_compound_is_the_last_trace_of_water_not_a_litre_of_it():
    """H2SO4 at 100 % w/w holds no water: not the partial-molar-volume estimate (about
    0.74 kg a litre, which gave a Pitzer pH of -12), but the table's end taken at 99.9 %:
    past the Pitzer model's reach, so auto shows the Davies figures and says so."""
    from carboy.model.solutions import strength_of

    molar = strength_of("H2SO4", mass_percent=100.0, catalog=CAT).conc_molar
    res = speciate(_mix("H2SO4", molar), activity="auto", catalog=CAT)
    assert res.model_part.model == "davies"
    assert res.model_part.water_kg_per_l < 0.01
    assert any(w.startswith(AUTO_NOTE_START) for w in res.warnings)
