"""Bottle-label text and GHS bands: refusals, fallback, wrapping, precedence, data checks.

Published band values are checked in tests/reference/test_labels_reference.py; this file
checks behaviour and the consistency of the packaged data.
"""

from __future__ import annotations

import copy
import json
import math
import tomllib
from importlib import resources

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from carboy.errors import CatalogError, InvalidInput, UnknownCompound
from carboy.model.catalog import make_user_compound
from carboy.model.labels import (
    LABEL_WIDTH,
    NO_DATA_TEXT,
    NOT_CLASSIFIED_TEXT,
    SDS_LINE,
    SIGNAL_RANK,
    ghs_data,
    hazard_statements,
    make_label,
    parse_ghs,
    pictogram_precedence,
    wrap_label_text,
)

GOOD = dict(conc_text="1.000 M", prepared_on="2025-03-14", prepared_by="I. Nventa")


def raw_ghs() -> dict:
    text = (resources.files("carboy.model.data") / "ghs.toml").read_text(encoding="utf-8")
    return tomllib.loads(text)


def codes_of(key, percent):
    return {s.code for s in hazard_statements(key, percent)[2]}


def flat(lines) -> str:
    """The label lines as one text, wrapping undone."""
    return " ".join(" ".join(lines).split())


def line_ok(line: str) -> bool:
    """At most LABEL_WIDTH characters, unless the line holds one longer word."""
    return len(line) <= LABEL_WIDTH or len(line.split()) == 1


# ----------------------------------------------------------------------------- refusals


@pytest.mark.parametrize("bad", [-0.1, 100.01, math.nan, math.inf, -math.inf, True, "5"])
def test_mass_percent_outside_0_100_or_not_finite_is_refused(bad):
    with pytest.raises(InvalidInput) as err:
        hazard_statements("NaOH", bad)
    assert err.value.what == "mass percent"
    assert err.value.value is bad
    with pytest.raises(InvalidInput) as err:
        make_label("NaOH", mass_percent=bad, **GOOD)
    assert err.value.value is bad


# NaOH: no band below 0.5 % (GisChem's lowest sheet, GISCHEM_NAOH_LOW); from 5 % Danger,
# GHS05, H290 H314 (GisChem 'Natriumhydroxidlösung, ab 5 %', GISCHEM_NAOH_5): FOUND.
@pytest.mark.parametrize(
    ("edge", "signal", "pictograms", "codes"),
    [
        (0, None, (), []),
        (0.0, None, (), []),
        (100, "Danger", ("GHS05",), ["H290", "H314"]),
        (100.0, "Danger", ("GHS05",), ["H290", "H314"]),
    ],
)
def test_mass_percent_edges_are_accepted(edge, signal, pictograms, codes):
    got_signal, got_pictograms, statements, basis = hazard_statements("NaOH", edge)
    assert (got_signal, got_pictograms, [s.code for s in statements]) == (signal, pictograms, codes)
    assert basis.startswith(f"NaOH at {edge:g} % w/w")


@pytest.mark.parametrize("bad", ["", "   ", None, 7])
def test_empty_preparer_is_refused(bad):
    with pytest.raises(InvalidInput) as err:
        make_label("HCl", mass_percent=3.6, **{**GOOD, "prepared_by": bad})
    assert err.value.what == "preparer"
    assert err.value.value == bad


@pytest.mark.parametrize("bad", ["2025-3-14", "14.03.2025", "2025-02-30", "2025/03/14", "", 20250314])
def test_preparation_date_must_be_iso(bad):
    with pytest.raises(InvalidInput) as err:
        make_label("HCl", mass_percent=3.6, **{**GOOD, "prepared_on": bad})
    assert err.value.value == bad
    assert "date" in err.value.what


@pytest.mark.parametrize("bad", ["2025-9-14", "next year", "2025-13-01"])
def test_expiry_date_must_be_iso(bad):
    with pytest.raises(InvalidInput) as err:
        make_label("HCl", mass_percent=3.6, expires_on=bad, **GOOD)
    assert err.value.value == bad
    assert err.value.what == "expiry date"


def test_expiry_before_preparation_is_refused_but_same_day_is_not():
    with pytest.raises(InvalidInput) as err:
        make_label("HCl", mass_percent=3.6, expires_on="2025-03-13", **GOOD)
    assert err.value.value == "2025-03-13"
    assert "2025-03-14" in err.value.reason
    label = make_label("HCl", mass_percent=3.6, expires_on="2025-03-14", **GOOD)
    assert label.expires_on == "2025-03-14"


def test_empty_concentration_text_is_refused():
    with pytest.raises(InvalidInput) as err:
        make_label("HCl", mass_percent=3.6, **{**GOOD, "conc_text": "  "})
    assert err.value.value == "  "


def test_unknown_compound_is_refused():
    with pytest.raises(UnknownCompound):
        hazard_statements("Unobtainium", 5)


# ----------------------------------------------------------------------------- fallback


def test_fallback_corrosive_tag_gives_conservative_h314(catalog):
    # HBr carries the catalog tag "corrosive" and has no record in ghs.toml.
    assert "corrosive" in catalog.compound("HBr").hazards
    assert "HBr" not in ghs_data().compounds
    signal, pictograms, statements, basis = hazard_statements("HBr", 1.0)
    assert (signal, pictograms, [s.code for s in statements]) == ("Danger", ("GHS05",), ["H314"])
    assert "corrosive" in basis and "check the SDS" in basis
    label = make_label("HBr", mass_percent=1.0, **GOOD)
    assert "(as supplied; check the SDS)" in label.lines


def test_fallback_without_corrosive_tag_gives_no_statements(catalog):
    assert "corrosive" not in catalog.compound("H3BO3").hazards
    signal, pictograms, statements, basis = hazard_statements("H3BO3", 3.0)
    assert (signal, pictograms, statements) == (None, (), ())
    assert "check the SDS" in basis and "reprotoxic" in basis
    label = make_label("H3BO3", mass_percent=3.0, **GOOD)
    assert NO_DATA_TEXT in flat(label.lines)
    assert NOT_CLASSIFIED_TEXT not in flat(label.lines)
    assert label.lines[-1] == SDS_LINE


def test_fallback_for_a_user_compound(catalog):
    _, compound = make_user_compound(
        key="XAcid",
        formula="C3H6O2",
        name="example propanoic acid",
        pka=[4.87],
        hazards=["corrosive"],
        source="invented for a test",
        catalog=catalog,
    )
    label = make_label(compound, mass_percent=2.0, **GOOD)
    assert label.compound_key == "XAcid"
    assert [s.code for s in label.statements] == ["H314"]


# ----------------------------------------------------------------------------- wrapping


def test_wrap_keeps_a_long_word_whole():
    word = "Z" * (LABEL_WIDTH + 15)
    lines = wrap_label_text(f"Lot {word} end")
    assert word in [line.strip() for line in lines]
    assert all(line_ok(line) for line in lines)


label_text = st.text(
    alphabet=st.characters(whitelist_categories=("Lu", "Ll", "Nd"), whitelist_characters=" -.,%()"),
    min_size=1,
    max_size=120,
).filter(lambda s: s.strip())


@settings(max_examples=60, deadline=None)
@given(
    preparer=label_text,
    lot=st.one_of(st.none(), label_text),
    origin=st.one_of(st.none(), label_text),
    conc=label_text,
    key=st.sampled_from(["HCl", "NaOH", "HNO3", "HF", "Tris", "CuSO4.5H2O", "HBr"]),
    percent=st.one_of(st.none(), st.floats(min_value=0, max_value=100)),
)
def test_no_label_line_is_longer_than_the_limit_unless_one_word_is(
    preparer, lot, origin, conc, key, percent
):
    label = make_label(
        key,
        conc_text=conc,
        mass_percent=percent,
        prepared_on="2025-03-14",
        prepared_by=preparer,
        lot=lot,
        source_text=origin,
    )
    assert all(line_ok(line) for line in label.lines), label.lines
    assert label.lines[-1] == SDS_LINE


def test_line_order_title_conc_dates_origin_hazards_statements_sds():
    label = make_label(
        "HCl",
        conc_text="1.000 M",
        mass_percent=15.0,
        prepared_on="2025-03-14",
        prepared_by="I. Nventa",
        expires_on="2025-09-14",
        lot="L-0420",
        source_text="HCl 37 %",
    )
    lines = list(label.lines)
    assert lines[0] == "Hydrochloric acid 1.000 M" == label.title
    assert lines[1].startswith("Concentration 1.000 M (15 % w/w)")
    assert lines[2] == "Prepared 2025-03-14 by I. Nventa"
    assert lines[3] == "Expires 2025-09-14"
    assert lines[4] == "Lot L-0420; from HCl 37 %"
    assert lines[5] == "WARNING GHS05 GHS07"
    codes_in_order = [line.split()[0] for line in lines[6:-1] if line[:1] in "HE"]
    assert codes_in_order == ["H290", "H315", "H319", "H335"]
    assert lines[-1] == SDS_LINE


def test_below_the_lowest_band_the_label_says_not_classified():
    label = make_label("NaOH", mass_percent=0.4, **GOOD)
    assert label.statements == () and label.signal_word is None
    assert NOT_CLASSIFIED_TEXT in flat(label.lines)
    assert "0.5 %" in label.basis


def test_compound_note_is_printed():
    label = make_label("HF", mass_percent=1.0, **GOOD)
    assert "calcium gluconate gel" in flat(label.lines)


def test_to_dict_is_json_ready():
    label = make_label("NaOH", mass_percent=1.0, lot="B-7", **GOOD)
    data = json.loads(json.dumps(label.to_dict()))
    assert data["statements"][0] == {"code": "H290", "text": "May be corrosive to metals."}
    assert data["pictograms"] == ["GHS05"]
    assert data["lines"] == list(label.lines)
    assert data["lot"] == "B-7" and data["mass_percent"] == 1.0


# ----------------------------------------------------------------------------- precedence


@pytest.mark.parametrize(
    ("codes", "expected", "rule"),
    [
        (["H315", "H319"], ("GHS07",), "no other pictogram"),
        (["H290", "H315", "H319"], ("GHS05",), "Art. 26(1)(c): GHS05 removes GHS07 for irritation"),
        (["H290", "H315", "H335"], ("GHS05", "GHS07"), "GHS07 stays for H335"),
        (["H314", "H302"], ("GHS05", "GHS07"), "GHS07 stays for acute toxicity 4"),
        (["H331", "H302", "H315"], ("GHS06",), "Art. 26(1)(b): GHS06 removes GHS07"),
        (["H334", "H317", "H319"], ("GHS08",), "Art. 26(1)(d)"),
        (["H334", "H335"], ("GHS07", "GHS08"), "(d) keeps GHS07 for other hazards"),
        (["H411", "H412", "EUH071"], ("GHS09",), "codes without pictograms add none"),
    ],
)
def test_pictogram_precedence_rules(codes, expected, rule):
    assert pictogram_precedence(codes) == expected, rule


@settings(max_examples=80, deadline=None)
@given(st.lists(st.sampled_from(sorted(ghs_data().statements)), min_size=1, max_size=6, unique=True))
def test_precedence_only_ever_removes_ghs07(codes):
    table = ghs_data().statements
    before = {table[c].pictogram for c in codes} - {None}
    after = set(pictogram_precedence(codes))
    assert after <= before
    assert before - after <= {"GHS07"}
    if "GHS06" in after:
        assert "GHS07" not in after


def test_label_applies_precedence_to_dilute_naoh():
    signal, pictograms, statements, _ = hazard_statements("NaOH", 1.0)
    assert signal == "Warning"
    assert pictograms == ("GHS05",)
    assert [s.code for s in statements] == ["H290", "H315", "H319"]


DANGER_CODES = {"H271", "H300", "H301", "H310", "H311", "H314", "H318", "H330", "H331", "H334"}
NO_SIGNAL_CODES = {"H411", "H412", "EUH071"}


@settings(max_examples=150, deadline=None)
@given(
    key=st.sampled_from(sorted(ghs_data().compounds)),
    percent=st.floats(min_value=0, max_value=100),
)
def test_signal_word_is_the_most_severe(key, percent):
    signal, _, statements, _ = hazard_statements(key, percent)
    codes = {s.code for s in statements}
    if codes & DANGER_CODES:
        assert signal == "Danger"
    elif "H272" in codes:  # Ox. Liq. 2 is Danger, Ox. Liq. 3 Warning
        assert signal in ("Danger", "Warning")
    elif codes - NO_SIGNAL_CODES:
        assert signal == "Warning"
    if not codes - NO_SIGNAL_CODES:
        assert signal is None


@settings(max_examples=150, deadline=None)
@given(
    key=st.sampled_from(sorted(ghs_data().compounds)),
    low=st.floats(min_value=0, max_value=100),
    high=st.floats(min_value=0, max_value=100),
)
def test_more_concentrated_is_never_less_severe(key, low, high):
    low, high = sorted((low, high))
    s_low = hazard_statements(key, low)[0]
    s_high = hazard_statements(key, high)[0]
    assert SIGNAL_RANK[s_high] >= SIGNAL_RANK[s_low]


def test_as_supplied_is_the_top_band():
    for key in ("HNO3", "NaOH", "HF", "CuSO4.5H2O", "HCOOH"):
        assert hazard_statements(key, None)[:3] == hazard_statements(key, 100.0)[:3]
        assert "as supplied" in hazard_statements(key, None)[3]


def test_redundant_h318_is_left_off_beside_h314():
    assert codes_of("NaOH", 10) == {"H290", "H314"}
    assert "H318" not in codes_of("HNO3", 10) | codes_of("NH3", 25)
    assert "H318" in codes_of("CuSO4.5H2O", 100)  # no H314 there, so H318 stays
    assert {"H400", "H410"} <= codes_of("CuSO4.5H2O", 100)  # both kept, as GisChem prints


def test_anhydrous_copper_sulfate_uses_pentahydrate_bands_by_molar_mass(catalog):
    ratio = (
        catalog.compounds["CuSO4.5H2O"].molar_mass_g_mol / catalog.compounds["CuSO4"].molar_mass_g_mol
    )
    assert ratio == pytest.approx(249.68 / 159.61, rel=1e-3)
    for percent in (0.2, 1.0, 1.7, 16.0, 40.0):
        assert hazard_statements("CuSO4", percent)[:3] == hazard_statements(
            "CuSO4.5H2O", percent * ratio
        )[:3]
    # 1.7 % CuSO4 is 2.66 % pentahydrate: over the 2.5 % aquatic limit
    assert "H400" in codes_of("CuSO4", 1.7) and "H400" not in codes_of("CuSO4.5H2O", 1.7)


def test_names_resolve_through_the_catalog():
    assert hazard_statements("sodium hydroxide", 1.0) == hazard_statements("NaOH", 1.0)


# ----------------------------------------------------------------------------- the data


REQUIRED_KEYS = {
    "H2SO4", "HCl", "HNO3", "H3PO4", "CH3COOH", "NaOH", "KOH", "NH3", "HF", "HClO4",
    "Na2CO3", "NaHCO3", "KHC8H4O4", "H3NSO3", "Tris", "CuSO4", "CuSO4.5H2O", "HCOOH",
}  # fmt: skip


def test_every_compound_in_ghs_toml_is_a_catalog_key(catalog):
    keys = set(ghs_data().compounds)
    assert keys <= set(catalog.compounds)
    assert REQUIRED_KEYS <= keys


def test_every_code_used_has_a_text():
    data = ghs_data()
    used = {c for r in data.compounds.values() for t in r.tracks for b in t.bands for c in b.codes}
    used |= {c for rule in data.omit for c in (rule.keep, rule.drop)}
    assert used <= set(data.statements)
    assert all(data.statements[c].text.strip() for c in used)


def test_bands_ascend_without_overlap_and_carry_source_and_status():
    for record in ghs_data().compounds.values():
        assert record.source and record.status
        for track in record.tracks:
            for band in track.bands:
                assert 0 <= band.from_percent < band.to_percent <= 100
                assert band.source and band.status
            for a, b in zip(track.bands, track.bands[1:]):
                assert a.to_percent <= b.from_percent, (record.key, track.hazard)


def test_loader_is_cached():
    assert ghs_data() is ghs_data()


def _first_band(raw, key):
    record = next(r for r in raw["compounds"] if r["key"] == key)
    return record, record["tracks"][0]["bands"]


def test_loader_refuses_overlapping_bands():
    raw = copy.deepcopy(raw_ghs())
    _, bands = _first_band(raw, "NaOH")
    bands[1]["from_percent"] = 1.5  # 2-5 % band now starts inside 0.5-2 %
    with pytest.raises(CatalogError) as err:
        parse_ghs(raw)
    assert "NaOH" in str(err.value) and "overlap" in str(err.value)


def test_loader_refuses_descending_bands():
    raw = copy.deepcopy(raw_ghs())
    _, bands = _first_band(raw, "HCl")
    bands.reverse()
    with pytest.raises(CatalogError, match="HCl"):
        parse_ghs(raw)


@pytest.mark.parametrize(
    ("field", "value", "message"),
    [
        ("codes", ["H999"], "no text"),
        ("pictograms", ["GHS07"], "do not match"),
        ("signal", "Warning", "does not match"),
        ("to_percent", 120.0, "0 <= from_percent"),
        ("status", "MEMORY", "from memory"),
        ("status", "GUESS", "not one of"),
        ("source", "NO_SUCH_SOURCE", r"not in \[sources\]"),
    ],
)
def test_loader_refuses_inconsistent_band(field, value, message):
    raw = copy.deepcopy(raw_ghs())
    _, bands = _first_band(raw, "NaOH")
    bands[-1][field] = value  # the Skin Corr. 1A band: H314, Danger, GHS05, FOUND
    with pytest.raises(CatalogError, match=message):
        parse_ghs(raw)


def test_loader_refuses_common_practice_without_saying_so():
    raw = copy.deepcopy(raw_ghs())
    record = next(r for r in raw["compounds"] if r["key"] == "NaOH")
    record["tracks"][1]["bands"][0]["source"] = "GISCHEM_NAOH_LOW"
    with pytest.raises(CatalogError, match="common practice"):
        parse_ghs(raw)


def test_loader_refuses_bands_of_pointing_nowhere():
    raw = copy.deepcopy(raw_ghs())
    record = next(r for r in raw["compounds"] if r["key"] == "CuSO4")
    record["bands_of"] = "NoSuchHydrate"
    with pytest.raises(CatalogError, match="bands_of"):
        parse_ghs(raw)


def test_packaged_data_parses_to_the_same_content():
    again = parse_ghs(raw_ghs())
    assert again.compounds == ghs_data().compounds
    assert again.statements == ghs_data().statements
