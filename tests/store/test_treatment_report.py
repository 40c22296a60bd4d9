"""The yearly treatment log: the treatments of the year, their readings as corrected,
totals per stream and per month, the groups, the CSV row and the document."""

from __future__ import annotations

from datetime import UTC, datetime

import pytest
from test_treatments import bottle, readings

from carboy.errors import InvalidInput
from carboy.model.forms.correction import CorrectionFields
from carboy.model.forms.correction import read as read_correction
from carboy.store import corrections, treatment_report, treatments, waste


def at(month: int, year: int = 2026) -> datetime:
    return datetime(year, month, 15, 10, tzinfo=UTC)


@pytest.fixture
def year(store):
    """Three treatments in 2026 (two in March by two people, one alkaline in May) and one
    in 2025; the May one's final pH is corrected."""
    b, acid_b = bottle(store, left="10 L", size="10 L"), bottle(store, compound="HCl",
                                                                strength="1 M")
    for label, stream, what in (("A1", "acid", "HCl=1M"), ("A2", "acid", "H2SO4=0.5M"),
                                ("B1", "alkaline", "NaOH=1M"), ("A0", "acid", "HCl=1M")):
        waste.new_container(store, label, stream=stream)
        waste.add(store, label, what, "2 L")
    treatments.record_treatment(store, "A1", readings(bottle=str(b), added="1 L",
                                                      final_ph="7"), who="ann", when=at(3))
    treatments.record_treatment(store, "A2", readings(bottle=str(b), added="1 L",
                                                      final_ph="7.5", performed_by="bo"),
                                who="ann", when=at(3))
    done = treatments.record_treatment(store, "B1", readings(bottle=str(acid_b), added="2 L",
                                                             final_ph="4"),
                                       who="ann", when=at(5))
    corrections.correct(store, done.entry_id, read_correction(CorrectionFields(
        reason="misread", final_ph="6.2")).value, when=at(5))
    treatments.record_treatment(store, "A0", readings(bottle=str(b), added="1 L",
                                                      final_ph="7"), when=at(12, 2025))
    return 2026


def test_the_treatments_of_the_year_with_totals(store, year):
    report = treatment_report.treatments(store, year)
    assert [(r.container, r.who, r.month) for r in report.rows] == [
        ("A1", "ann", 3), ("A2", "bo", 3), ("B1", "ann", 5)]
    b1 = report.rows[2]
    assert b1.final_ph == 6.2 and b1.in_window and b1.corrected
    assert report.rows[0].treated == {"HCl": pytest.approx(2.0)}
    data = report.to_dict()
    assert data["totals"]["count"] == 3
    assert data["totals"]["waste_l"] == pytest.approx(6.0)
    assert data["totals"]["reagent"] == {"NaOH=2M": {"L": 2.0}, "HCl=1M": {"L": 2.0}}
    assert {k: v["count"] for k, v in data["totals"]["per_stream"].items()} == \
        {"acid": 2, "alkaline": 1}
    assert {k: v["count"] for k, v in data["totals"]["per_month"].items()} == \
        {"March": 2, "May": 1}
    assert len(treatment_report.treatments(store, 2025).rows) == 1
    assert treatment_report.treatments(store, 2024).rows == ()


@pytest.mark.parametrize(("group", "keys"), [("person", ["ann", "bo"]),
                                             ("stream", ["acid", "alkaline"])])
def test_groups(store, year, group, keys):
    report = treatment_report.treatments(store, year, group_by=group)
    groups = report.to_dict()["groups"]
    assert [g["key"] for g in groups] == keys
    assert sum(g["totals"]["count"] for g in groups) == 3


def test_the_csv_row_and_the_document(store, year):
    report = treatment_report.treatments(store, year, group_by="stream")
    assert report.rows[0].csv_row()[:5] == [report.rows[0].entry, "2026-03-15", "ann", "A1",
                                            "acid"]
    doc = treatment_report.document(report, storeroom="North Lab", today=at(6).date())
    text = doc.text()
    assert "Treatment log 2026" in text and "North Lab" in text
    assert "Treatments 3" in text and "2 treatments" in text and "March" in text
    assert "acid waste" in text
    assert doc.printed_on == "2026-06-15"


def test_a_bad_year_or_group(store):
    for bad in ("26a", "1800"):
        with pytest.raises(InvalidInput):
            treatment_report.treatments(store, bad)
    with pytest.raises(InvalidInput):
        treatment_report.treatments(store, 2026, group_by="month")
