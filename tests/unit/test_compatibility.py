"""carboy.model.compatibility: every rule, in both directions, and the streams.

The table holds one record per rule and direction: ``a`` means the compound added
matches the rule's side a and the container its side b; ``b`` the reverse.  A rule side
made only of container facts (a stream, a material) can never be the addition's side, so
that direction has no record; ``test_every_rule_is_tested_in_every_possible_direction``
checks the table against the packaged rules.
"""

from __future__ import annotations

import json
import subprocess
import sys

import pytest

from carboy.errors import CatalogError, InvalidInput, UnknownCompound
from carboy.model import compatibility as C
from carboy.model.compatibility import Addition, Container
from carboy.model.datafiles import Table

# The organic compounds of the built-in catalog: each carries the "organic" tag in
# compounds.toml (the oxidizing-acid rule matches on it).
ORGANIC = ("CH3COOH", "HCOOH", "C6H8O7", "C6H8O7.H2O", "H2C2O4", "H2C2O4.2H2O",
           "CH3CH(OH)COOH", "CH3COONa", "CH3COONa.3H2O", "Na3C6H5O7", "Na3C6H5O7.2H2O",
           "KHC8H4O4", "Tris", "Tris-HCl")


@pytest.fixture(scope="module")
def cat(catalog):
    return catalog


def test_the_organic_compounds_carry_the_organic_tag(catalog):
    tagged = {c.key for c in catalog.compounds.values() if "organic" in c.hazards}
    assert tagged == set(ORGANIC)


def box(stream, contents=None, ph=None, **kw):
    return Container(stream, dict(contents or {}), ph, **kw)


CASES = [
    # (rule, direction, container, addition, words the message must hold)
    ("cyanide-acid", "a", box("acid", {"HCl": 0.1}, 0.7), Addition("NaCN", 0.05),
     ["hydrogen cyanide", "holds HCl", "pH about 0.7", "alkaline cyanide container"]),
    ("cyanide-acid", "a", box("mixed", {"NaCl": 0.1}, 5.0), Addition("KCN", 0.01),
     ["hydrogen cyanide", "pH about 5.0"]),
    ("cyanide-acid", "a", box("acid"), Addition("KCN", 0.01),
     ["hydrogen cyanide", "meant for acid waste"]),
    ("cyanide-acid", "b", box("cyanide_sulfide", {"NaCN": 0.1, "NaOH": 0.1}, 12.5),
     Addition("HCl", 0.05), ["hydrogen cyanide", "holds NaCN", "an acid never"]),
    ("cyanide-acid", "b", box("mixed", {"NaCN": 0.1}, 11.0), Addition("CH3COOH", 0.05),
     ["hydrogen cyanide", "holds NaCN"]),
    ("sulfide-acid", "a", box("acid", {"H2SO4": 0.1}), Addition("Na2S", 0.01),
     ["hydrogen sulfide", "holds H2SO4"]),
    ("sulfide-acid", "b", box("cyanide_sulfide", {"Na2S.9H2O": 0.1}, 12.0),
     Addition("H3PO4", 0.01), ["hydrogen sulfide", "holds Na2S.9H2O"]),
    ("hypochlorite-acid", "a", box("acid", {"HCl": 0.1}), Addition("NaOCl", 0.01),
     ["chlorine", "holds HCl"]),
    ("hypochlorite-acid", "b", box("alkaline", {"NaOCl": 0.1}, 12.0), Addition("HNO3", 0.01),
     ["chlorine", "holds NaOCl"]),
    ("hypochlorite-ammonium", "a", box("alkaline", {"NH4Cl": 0.1}), Addition("NaOCl", 0.01),
     ["chloramines", "holds NH4Cl"]),
    ("hypochlorite-ammonium", "b", box("alkaline", {"Ca(OCl)2": 0.1}), Addition("NH3", 0.01),
     ["chloramines", "holds Ca(OCl)2"]),
    ("azide-acid", "a", box("acid", {"HCl": 0.1}), Addition("NaN3", 0.01),
     ["hydrazoic acid", "holds HCl"]),
    ("azide-acid", "b", box("mixed", {"NaN3": 0.1}, 8.0), Addition("HCl", 0.01),
     ["hydrazoic acid", "holds NaN3"]),
    ("oxidizing-acid-organic", "a", box("acid", {"CH3COOH": 1.0}),
     Addition("HNO3", 2.0, 2.0), ["oxidize the organics", "holds CH3COOH"]),
    ("oxidizing-acid-organic", "b", box("oxidizing_acid", {"HNO3": 1.0}),
     Addition("HCOOH", 0.1), ["oxidize the organics", "holds HNO3"]),
    ("oxidizing-acid-organic", "b", box("oxidizing_acid"), Addition("C6H8O7", 0.1),
     ["oxidize the organics", "meant for oxidizing-acid waste"]),
    ("sulfuric-acid-formate-oxalate", "a", box("acid", {"HCOOH": 1.0}),
     Addition("H2SO4", 0.1, 18.0), ["carbon monoxide", "holds HCOOH"]),
    ("sulfuric-acid-formate-oxalate", "a", box("acid", {"H2C2O4.2H2O": 0.1}),
     Addition("H2SO4", 0.1, 12.0), ["carbon monoxide", "holds H2C2O4.2H2O"]),
    ("sulfuric-acid-formate-oxalate", "b", box("acid", {"H2SO4": 16.0}, volume_l=1.0),
     Addition("H2C2O4", 0.01), ["carbon monoxide", "holds H2SO4"]),
    ("azide-heavy-metal", "a", box("heavy_metal", {"CuSO4": 0.1}), Addition("NaN3", 0.01),
     ["azides", "holds CuSO4"]),
    ("azide-heavy-metal", "b", box("mixed", {"NaN3": 0.1}), Addition("Pb(NO3)2", 0.01),
     ["azides", "holds NaN3"]),
    ("concentrated-acid-water-reactive", "a", box("mixed", {"AlCl3": 0.5}),
     Addition("H2SO4", 1.0, 18.0), ["violently", "holds AlCl3"]),
    ("concentrated-acid-water-reactive", "b", box("mixed", {"HCl": 6.0}, volume_l=1.0),
     Addition("AlCl3", 0.1), ["violently", "holds HCl"]),
    ("hf-glass", "a", box("acid", {"HCl": 0.1}, material="glass"), Addition("HF", 0.1),
     ["etches", "container is glass", "plastic"]),
    ("acid-into-alkaline-stream", "a", box("alkaline", {"NaOH": 0.1}), Addition("HCl", 0.1),
     ["heat", "meant for alkaline waste"]),
    ("base-into-acid-stream", "a", box("acid", {"HCl": 0.1}), Addition("NaOH", 0.1),
     ["heat", "meant for acid waste"]),
    ("no-drain-into-drain-stream", "a", box("acid", {"HCl": 0.1}), Addition("CuSO4", 0.01),
     ["never go to the drain", "meant for acid waste"]),
    ("acid-water-reactive", "a", box("mixed", {"AlCl3": 0.5}), Addition("HCl", 0.1, 1.0),
     ["water-reactive", "holds AlCl3"]),
    ("acid-water-reactive", "b", box("mixed", {"HCl": 1.0}, volume_l=1.0),
     Addition("AlCl3", 0.1), ["water-reactive", "holds HCl"]),
]


def _case_id(case):
    return f"{case[0]}-{case[1]}-{case[3].compound}"


@pytest.mark.parametrize("case", CASES, ids=[_case_id(c) for c in CASES])
def test_rule_applies(case, cat):
    rule_id, _, container, addition, words = case
    found = {f.rule_id: f for f in C.check_addition(container, addition, catalog=cat)}
    assert rule_id in found, sorted(found)
    rule = next(r for r in C.rules() if r.id == rule_id)
    finding = found[rule_id]
    assert finding.severity == rule.severity
    assert finding.overridable == (rule.severity == "confirm")
    for word in words:
        assert word in finding.message, finding.message
    assert finding.added == cat.compound(addition.compound).key


def _addition_side(side):
    return any(not set(alt) & {"streams", "drain_stream", "materials"} for alt in side)


def test_every_rule_is_tested_in_every_possible_direction():
    possible = set()
    for rule in C.rules():
        if _addition_side(rule.a):
            possible.add((rule.id, "a"))
        if _addition_side(rule.b):
            possible.add((rule.id, "b"))
    tested = {(c[0], c[1]) for c in CASES}
    assert tested == possible


NOT_APPLYING = [
    # (rule that must stay silent, container, addition)
    ("cyanide-acid", box("cyanide_sulfide", {"NaOH": 0.1}, 12.5), Addition("NaCN", 0.05)),
    ("cyanide-acid", box("mixed", {"HCl": 0.1, "NaOH": 0.3}, 12.8), Addition("NaCN", 0.01)),
    ("hypochlorite-acid", box("alkaline", {"NaOH": 0.1}, 12.0), Addition("NaOCl", 0.1)),
    ("hf-glass", box("hf", {"HF": 0.1}, material="plastic"), Addition("HF", 0.1)),
    ("concentrated-acid-water-reactive", box("mixed", {"AlCl3": 0.5}),
     Addition("HCl", 0.1, 1.0)),
    ("acid-water-reactive", box("mixed", {"AlCl3": 0.5}), Addition("H2SO4", 1.0, 18.0)),
    ("oxidizing-acid-organic", box("acid", {"CH3COOH": 1.0}), Addition("HCl", 1.0)),
    # below the dehydrating strength (12 mol/L, the rule's own threshold): no CO
    ("sulfuric-acid-formate-oxalate", box("acid", {"HCOOH": 1.0}), Addition("H2SO4", 1.0, 6.0)),
    ("sulfuric-acid-formate-oxalate", box("acid", {"CH3COOH": 1.0}),
     Addition("H2SO4", 0.1, 18.0)),
    ("no-drain-into-drain-stream", box("heavy_metal", {"HCl": 0.1}), Addition("CuSO4", 0.01)),
]


@pytest.mark.parametrize("case", NOT_APPLYING, ids=[f"{c[0]}-{c[2].compound}" for c in NOT_APPLYING])
def test_rule_stays_silent(case, cat):
    rule_id, container, addition = case
    found = {f.rule_id for f in C.check_addition(container, addition, catalog=cat)}
    assert rule_id not in found


def test_matching_wastes_raise_nothing(cat):
    assert C.check_addition(box("acid", {"HCl": 0.1}, 0.5), Addition("H2SO4", 0.1),
                            catalog=cat) == ()
    assert C.check_addition(box("alkaline", {"NaOH": 0.1}), Addition("KOH", 0.1),
                            catalog=cat) == ()
    assert C.check_addition(box("mixed"), Addition("NaOH", 0.1), catalog=cat) == ()
    assert C.check_addition(box(None, {"NaCl": 1}), Addition("KCl", 0.1), catalog=cat) == ()


def test_streams_vocabulary():
    streams = C.streams()
    assert list(streams) == ["acid", "alkaline", "cyanide_sulfide", "heavy_metal", "hf",
                             "oxidizing_acid", "mixed"]
    assert {k for k, s in streams.items() if s.drain_treatable} == {"acid", "alkaline"}
    assert streams["hf"].materials == ("plastic",)
    for s in streams.values():
        assert s.name and s.words and s.source
    with pytest.raises(InvalidInput, match="cyanide_sulfide"):
        C.stream("cyanide")


def test_cyanide_sulfide_stream_refuses_any_acid_even_empty(cat):
    (f,) = C.check_addition(box("cyanide_sulfide"), Addition("CH3COOH", 0.1), catalog=cat)
    assert (f.rule_id, f.severity) == ("stream-cyanide_sulfide", "refuse")
    assert "hydrogen cyanide or hydrogen sulfide" in f.message


def test_stream_asks_for_a_reason_when_the_waste_is_not_its_kind(cat):
    (f,) = C.check_addition(box("hf", material="plastic"), Addition("NaCl", 0.1),
                            catalog=cat)
    assert (f.rule_id, f.severity) == ("stream-hf", "confirm")
    assert "not what this container is meant for" in f.message


def test_refusals_come_first_and_helpers_split_them(cat):
    found = C.check_addition(box("acid", {"HCl": 0.2}, 0.7), Addition("NaCN", 0.05),
                             catalog=cat)
    severities = [f.severity for f in found]
    assert severities == sorted(severities, key=C.SEVERITIES.index)
    assert C.refusals(found) and C.confirmations(found)
    assert set(C.refusals(found)) | set(C.confirmations(found)) == set(found)


def test_every_gas_hazard_refuses_and_the_loader_holds_to_it():
    gases = {r.gas for r in C.rules() if r.gas}
    assert gases == {"HCN", "H2S", "Cl2", "chloramines", "HN3", "CO"}
    assert all(r.severity == "refuse" for r in C.rules() if r.gas)
    bad = {"id": "x", "severity": "confirm", "gas": "HCN", "hazard": "h", "a": [{}],
           "b": [{}], "advice_a": "a", "advice_b": "b", "status": "PRACTICE",
           "source": "common practice"}
    with pytest.raises(CatalogError, match="gas hazard must refuse"):
        C._parse_rule(Table("compatibility.toml", "x", bad))
    assert C._parse_rule(Table("compatibility.toml", "x", {**bad, "severity": "refuse"})).gas


@pytest.mark.parametrize("change, words", [
    ({"hazard": ""}, "'hazard': must be a non-empty string"),
    ({"a": [{"colour": "red"}]}, "unknown match criteria"),
    ({"b": [{"kinds": ["salty"]}]}, "are not among"),
    ({"acidic_below_ph": 15}, "'acidic_below_ph': must be from 0 to 14"),
    ({"severity": "maybe"}, "'severity': 'maybe' is not one of"),
    ({"a": [{"concentrated": -1}]}, "true, or a strength in mol/L above 0"),
    ({"a": [{"concentrated": "yes"}]}, "true, or a strength in mol/L above 0"),
    ({"a": [{"concentrated": False}]}, "true, or a strength in mol/L above 0"),
])
def test_a_malformed_rule_is_an_error_naming_file_rule_and_field(change, words):
    good = {"id": "r-1", "severity": "refuse", "hazard": "h", "a": [{}], "b": [{}],
            "advice_a": "a", "advice_b": "b", "status": "PRACTICE", "source": "common practice"}
    with pytest.raises(CatalogError, match="compatibility.toml: r-1") as err:
        C._parse_rule(Table("compatibility.toml", "r-1", {**good, **change}))
    assert words in str(err.value)


def test_every_rule_has_a_source_and_advice():
    for rule in C.rules():
        assert rule.source and rule.advice_a and rule.advice_b and rule.hazard
        assert "[" in rule.source  # the status is carried


def test_bad_input_is_an_error_naming_it(cat):
    with pytest.raises(UnknownCompound, match="NaCNX"):
        C.check_addition(box("acid"), Addition("NaCNX", 0.1), catalog=cat)
    with pytest.raises(UnknownCompound, match="Unobtainium"):
        C.check_addition(box("acid", {"Unobtainium": 1}), Addition("HCl", 0.1), catalog=cat)
    with pytest.raises(InvalidInput, match="amount"):
        C.check_addition(box("acid"), Addition("HCl", -1.0), catalog=cat)
    with pytest.raises(InvalidInput, match="stream"):
        C.check_addition(box("bucket"), Addition("HCl", 1.0), catalog=cat)
    with pytest.raises(InvalidInput, match="material"):
        C.check_addition(box("acid", material="wood"), Addition("HCl", 1.0), catalog=cat)


def test_check_container_warns_and_changes_nothing(cat):
    contents = {"HCl": 1.0, "NaCN": 0.1}
    container = box("acid", contents, 1.2)
    found = C.check_container(container, catalog=cat)
    assert contents == {"HCl": 1.0, "NaCN": 0.1}
    cyanide = [f for f in found if f.rule_id == "cyanide-acid"]
    assert len(cyanide) == 1 and cyanide[0].severity == "refuse"
    assert cyanide[0].message.startswith("already in the container")
    assert "pH about 1.2" in cyanide[0].message
    assert C.check_container(box("acid", {"HCl": 1.0, "H2SO4": 0.5}, 0.3), catalog=cat) == ()
    glass = C.check_container(box("hf", {"HF": 0.1}, material="glass"), catalog=cat)
    assert any("plastic" in f.message for f in glass)


def test_no_finding_calls_a_waste_safe(cat):
    for _, _, container, addition, _ in CASES:
        for f in C.check_addition(container, addition, catalog=cat):
            assert "safe" not in f.message.lower()
            json.dumps(f.to_dict())


ACID_EQUIVALENTS = [
    # (compound, equivalents to pH 7, tolerance): DERIVED from the catalog's pKa values
    ("HCl", 1.0, 1e-9), ("H2SO4", 2.0, 1e-3), ("NaOH", -1.0, 1e-9),
    ("NH3", -0.994, 0.002), ("NaHCO3", -0.183, 0.01), ("KHC8H4O4", 0.975, 0.01),
    ("NaCl", 0.0, 1e-12), ("NaOCl", -0.775, 0.01),
]


@pytest.mark.parametrize("key, expected, tol", ACID_EQUIVALENTS,
                         ids=[a[0] for a in ACID_EQUIVALENTS])
def test_acid_equivalents(key, expected, tol, catalog):
    assert C.acid_equivalents(catalog.compound(key), catalog) == pytest.approx(expected, abs=tol)


def test_new_modules_stay_pure():
    probe = ("import json, sys\nimport carboy.model.compatibility, carboy.model.metals\n"
             "print(json.dumps(sorted(sys.modules)))")
    out = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True,
                         check=True)
    mods = set(json.loads(out.stdout))
    for root in ("textual", "sqlite_utils", "sqlite3", "carboy.store", "carboy.tui"):
        assert not any(m == root or m.startswith(root + ".") for m in mods), root
