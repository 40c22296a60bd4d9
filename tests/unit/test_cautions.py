"""The caution rule table."""

from carboy.model import cautions


def facts(**kw):
    base = dict(hazards=frozenset(), direction="base", reagent_key="NaOH", reagent_form="solution",
                reagent_hazards=frozenset(), reagent_is_slurry=False, reagent_has_carbonate=False)
    base.update(kw)
    return cautions.Facts(**base)


def codes(f):
    return [c.code for c in cautions.evaluate(f)]


def test_never_empty_and_local_rules_last():
    out = cautions.evaluate(facts())
    assert out and out[-1].code == "local-rules"
    assert "never declares anything safe" in out[-1].text
    assert {"corrosive-ppe", "add-slowly"} <= {c.code for c in out}


def test_severities_known():
    for c in cautions.evaluate(facts(hazards=frozenset({"hf_type", "cyanide"}), gas_l=2.0,
                                     temperature_rise_k=30.0)):
        assert c.severity in cautions.SEVERITIES


def test_no_drain_hazards():
    for tag in ("hf_type", "heavy_metal", "perchloric", "chromic", "no_drain"):
        f = facts(hazards=frozenset({tag}))
        assert "not-a-drain-plan" in codes(f)
        assert cautions.not_for_drain(f)


def test_cyanide_never_acidify():
    assert "never-acidify" in codes(facts(hazards=frozenset({"cyanide"}), direction="acid"))


def test_heat_thresholds():
    assert "heat-warning" in codes(facts(temperature_rise_k=12.0, final_temperature_c=37.0))
    assert "heat-danger" in codes(facts(temperature_rise_k=30.0, final_temperature_c=55.0))
    assert "heat-danger" in codes(facts(temperature_rise_k=12.0, final_temperature_c=61.0))
    assert not {"heat-warning", "heat-danger"} & set(codes(facts(temperature_rise_k=3.0)))


def test_gas_steep_slurry_oxidizer():
    assert "co2-foaming" in codes(facts(gas_l=1.0))
    assert "steep-end-point" in codes(facts(sensitivity_pH_per_percent=2.0))
    assert "slurry-reagent" in codes(facts(reagent_is_slurry=True, reagent_key="Ca(OH)2"))
    assert "oxidizing-acid" in codes(facts(hazards=frozenset({"oxidizer"})))


def test_a_target_outside_the_window_is_said():
    said = [c for c in cautions.evaluate(facts(target_pH=5.0, window=(6.0, 9.0)))
            if c.code == "target-outside-window"]
    assert said and "pH 5 lies outside the acceptance window pH 6–9" in said[0].text
    for inside in (6.0, 7.0, 9.0):
        assert "target-outside-window" not in codes(facts(target_pH=inside, window=(6.0, 9.0)))


def test_a_sample_already_in_the_window_is_said():
    said = [c for c in cautions.evaluate(facts(initial_pH=6.88, window=(6.0, 9.0)))
            if c.code == "already-in-window"]
    assert said and said[0].severity == "notice" and "needs no reagent" in said[0].text
    assert "already-in-window" not in codes(facts(initial_pH=2.0, window=(6.0, 9.0)))
    assert "already-in-window" not in codes(facts())   # not known: nothing said
