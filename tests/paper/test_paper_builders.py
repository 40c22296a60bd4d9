"""The builders: a bottle label, the due list and a container's disposal record as documents."""

from __future__ import annotations

import hashlib

import pytest
from pdf_reading import TODAY

from carboy.model.documents import Fields, HazardText, Paragraph, PictogramRow, QrCode, Table
from carboy.model.label_documents import GENERIC_LINE, BottleFacts, bottle_label
from carboy.model.labels import NOT_CLASSIFIED_TEXT, SDS_LINE, ghs_data, make_label
from carboy.store import disposal_record, documents, journal, stock, waste
from carboy.store.errors import NotFound


def _facts(**over) -> BottleFacts:
    base = dict(bottle_id=17, name="Hydrochloric acid", formula="HCl", labelled="1 M",
                mass_percent=3.6, measured="0.998 M", measured_on="2025-03-01", made_here=True,
                dated="2025-02-20", by="m.ferreday", source_bottle=3, lot="FW-24-117",
                expires_on="2026-02-20", recheck_on="2025-03-31", storeroom="Storeroom X")
    return BottleFacts(**(base | over))


def _hazards(doc):
    return doc.blocks_of(HazardText)[0]


def test_label_document_carries_label_text_and_stock_record(catalog):
    label = make_label("HCl", conc_text="1 M", mass_percent=3.6, prepared_on="2025-02-20",
                       prepared_by="m.ferreday", catalog=catalog)
    doc = bottle_label(label, _facts(), printed_on="2025-03-14")
    text = doc.text()
    assert doc.page == "label" and doc.header == "Storeroom X" and not doc.notices
    assert _hazards(doc).statements == tuple((s.code, s.text) for s in label.statements)
    assert doc.blocks_of(PictogramRow)[0].codes == label.pictograms
    assert doc.blocks_of(QrCode)[0].payload == "carboy:bottle:17"
    fields = dict(doc.blocks_of(Fields)[0].items)
    assert fields["Strength"] == "1 M (3.6 % w/w); measured 0.998 M on 2025-03-01"
    assert fields["Prepared"] == "2025-02-20 by m.ferreday from bottle 3 lot FW-24-117"
    assert fields["Expires"] == "2026-02-20; re-check by 2025-03-31"
    assert SDS_LINE in text


def test_received_bottle_and_unknown_dates():
    label = make_label("H2SO4", conc_text="96 %w/w", mass_percent=96, prepared_on="2025-01-01",
                       prepared_by="x")
    doc = bottle_label(label, _facts(formula="H2SO4", labelled="96 %w/w", mass_percent=96.0,
                                     measured=None, made_here=False, by=None,
                                     source_bottle=None, expires_on=None, recheck_on=None))
    fields = dict(doc.blocks_of(Fields)[0].items)
    assert fields["Strength"] == "96 %w/w; not measured"   # no second % for a %w/w label
    assert fields["Received"] == "2025-02-20 lot FW-24-117"
    assert fields["Expires"] == "not set"


def test_compound_without_ghs_bands_gets_the_generic_corrosive_label(catalog):
    key = "C6H8O7"   # citric acid: the catalog holds it, ghs.toml has no bands for it
    assert key in catalog.compounds and key not in ghs_data().compounds
    label = make_label(key, conc_text="0.1 M", mass_percent=1.9, prepared_on="2025-01-01",
                       prepared_by="x", catalog=catalog)
    doc = bottle_label(label, _facts(formula=key, name="Citric acid"))
    hazard = _hazards(doc)
    assert hazard.signal_word == "Danger" and [c for c, _ in hazard.statements] == ["H314"]
    assert doc.blocks_of(PictogramRow)[0].codes == ("GHS05",)
    assert GENERIC_LINE in doc.text() and SDS_LINE in GENERIC_LINE
    assert len(doc.notices) == 1 and "bottle 17" in doc.notices[0]
    assert "safety data sheet" in doc.notices[0]


def test_band_below_the_lowest_says_not_classified(catalog):
    # sodium hydroxide at 0.04 % w/w lies under every band ghs.toml holds for it
    label = make_label("NaOH", conc_text="0.01 M", mass_percent=0.04, prepared_on="2025-01-01",
                       prepared_by="x", catalog=catalog)
    assert not label.statements
    doc = bottle_label(label, _facts(formula="NaOH", name="Sodium hydroxide"))
    assert not doc.blocks_of(PictogramRow) and not doc.notices
    closing = doc.blocks_of(Paragraph)[-1].text
    assert closing.startswith(NOT_CLASSIFIED_TEXT) and closing.endswith(SDS_LINE)


def test_store_label_of_a_received_bottle(demo_store):
    hcl = next(b for b in stock.all_bottles(demo_store) if b.lot == "FW-24-117")
    doc = documents.bottle_label(demo_store, hcl.id, storeroom="  Fenwold   Annex ", today=TODAY)
    fields = dict(doc.blocks_of(Fields)[0].items)
    assert doc.header == "Fenwold Annex"
    assert fields["Received"] == f"{hcl.received_on} lot FW-24-117"
    assert {"H290", "H314", "H335"} == {c for c, _ in _hazards(doc).statements}
    assert doc.blocks_of(QrCode)[0].caption == f"bottle {hcl.id}"


def test_store_label_of_a_prepared_bottle_names_its_source(demo_store, catalog):
    source = next(b for b in stock.all_bottles(demo_store) if b.lot == "FW-24-117")
    label = make_label("HCl", conc_text="1 M", mass_percent=3.6, prepared_on="2025-03-14",
                       prepared_by="a.tester", catalog=catalog)
    made = stock.prepare(
        demo_store, source_bottle=source.id, used="80 mL", who="a.tester",
        new_bottle={"compound": "HCl", "label_strength": "1 M", "container_size": "1 L",
                    "received_on": "2025-03-14", "expires_on": "2026-03-14"},
        snapshot={"label": label.to_dict()})
    stock.record_standardization(demo_store, made.new_bottle_id, "0.998 M", who="a.tester",
                                 method="titration")
    doc = documents.bottle_label(demo_store, made.new_bottle_id, today=TODAY)
    fields = dict(doc.blocks_of(Fields)[0].items)
    assert fields["Prepared"] == f"2025-03-14 by a.tester from bottle {source.id} lot FW-24-117"
    assert fields["Strength"].startswith("1 M (3.6 % w/w); measured 0.998 M on ")


def test_store_label_refuses_unknown_bottles(demo_store):
    with pytest.raises(NotFound):
        documents.bottle_labels(demo_store, [1, 9999], today=TODAY)


def test_storeroom_name_from_its_rule(demo_store):
    assert documents.storeroom_name(demo_store) == ""
    demo_store.write(lambda s: s.execute(
        "INSERT INTO storeroom_rules (name, value_json, set_at, set_by) VALUES (?, ?, ?, ?)",
        [documents.STOREROOM_NAME_RULE, '"Annex B"', "2025-01-01T00:00:00Z", "x"]))
    assert documents.storeroom_name(demo_store) == "Annex B"
    assert documents.storeroom_name(demo_store, "Given") == "Given"


def test_due_list_totals_agree_with_the_strength_check(demo_store):
    rows = stock.check(demo_store, today=TODAY)
    doc = documents.due_list(demo_store, today=TODAY)
    table = doc.blocks_of(Table)[0]
    assert [r[0] for r in table.rows] == [str(r.bottle.id) for r in rows]
    flagged = sum(1 for r in rows if r.flags)
    assert table.totals[1] == f"{len(rows)} listed"
    assert table.totals[8] == f"{flagged} need attention"
    summary = dict(doc.blocks_of(Fields)[0].items)
    expired = sum("expired" in r.flags for r in rows)
    assert expired > 0 and summary["Expired"] == str(expired)
    assert doc.printed_on == TODAY.isoformat()
    everything = documents.due_list(demo_store, today=TODAY, everything=True)
    assert len(everything.blocks_of(Table)[0].rows) > len(rows)


def test_disposal_record_counts_additions_and_marks_superseded_ones(demo_store):
    waste.correct_addition(demo_store, waste.additions(demo_store, "OA-02")[0].id,
                           "it was 2.5 L", component="CH3COOH=1M", volume="2.5 L")
    doc = disposal_record.disposal_record(demo_store, "OA-02", today=TODAY)
    info = waste.show(demo_store, "OA-02")
    additions = doc.blocks_of(Table)[0]
    assert len(additions.rows) == len(info["additions"]) == 5
    assert "[superseded]" in additions.rows[0][3]
    assert additions.totals[3] == "4 counted"
    assert additions.totals[4] == f"{info['volume_l']:.4g} L" == "6.5 L"
    composition = doc.blocks_of(Table)[1]
    assert composition.totals == ("Total volume", "", "6.5 L")
    assert "Nothing has been added yet." not in doc.text()
    fields = dict(doc.blocks_of(Fields)[0].items)
    assert fields["Stream"] == "acid waste, plastic"
    assert "No neutralization plan recorded." in doc.text()


def test_disposal_record_of_a_planned_container(demo_store):
    doc = disposal_record.disposal_record(demo_store, "MA-01", today=TODAY)
    text = doc.text()
    assert "Reagent NaOH 1 M" in text and "Measured pH not yet (plan only)" in text
    assert "never declares" in text
    for role in disposal_record.SIGNATURE_ROLES:
        assert f"{role}: name, signature, date" in text


def test_disposal_record_of_a_licensed_disposal_container(demo_store):
    doc = disposal_record.disposal_record(demo_store, "HF-04", today=TODAY,
                                          chain_head="abc123")
    text = doc.text()
    treatment = doc.blocks_of(Table)[2]
    assert [row[2] for row in treatment.rows] == ["licensed-disposal"]
    assert "never neutralized here" in treatment.rows[0][3]
    assert "NOT a drain-disposal plan" in text and "Fluoride present" in text
    assert "Journal chain head abc123" in text
    assert dict(doc.blocks_of(Fields)[0].items)["Stream"] == "HF/fluoride waste, plastic"
    # the rinse the rules questioned is on the record, with the reason it was logged
    assert "Warning: already in the container: HCl" in text
    assert "(logged with a reason: the rinse of the HF etching vessel" in text


def test_building_documents_writes_nothing(demo_path, demo_store):
    before = hashlib.sha256(demo_path.read_bytes()).hexdigest()
    entries = journal.count(demo_store)
    documents.bottle_labels(demo_store, [1, 2, 3], today=TODAY)
    documents.due_list(demo_store, today=TODAY, everything=True)
    disposal_record.disposal_record(demo_store, "MA-01", today=TODAY)
    assert journal.count(demo_store) == entries
    assert hashlib.sha256(demo_path.read_bytes()).hexdigest() == before
