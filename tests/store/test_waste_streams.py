"""Waste streams in the store: every compatibility rule refused (or questioned) when an
addition is logged, nothing written when it is; the stream set at creation and changed
only by a journaled entry; the upgrade of a database from before streams."""

from __future__ import annotations

import json
import sqlite3

import pytest
import sqlite_utils
from waste_cases import CASES, GASES, IDS, counts, possible_directions, prepare

from carboy.errors import HazardRefused, InvalidInput, NeedsConfirmation, Refused
from carboy.model import compatibility
from carboy.model.mixture import Mixture
from carboy.model.speciation import speciate
from carboy.store import journal, migrations, waste
from carboy.store.db import open_database
from carboy.store.errors import ContainerClosed


def test_the_table_holds_every_rule_in_every_possible_direction():
    assert {(c.rule, c.direction) for c in CASES} == possible_directions()


@pytest.mark.parametrize("case", CASES, ids=IDS)
def test_each_rule_stops_the_addition_and_nothing_is_written(store, case):
    label = prepare(store, case)
    before, held = counts(store), waste.contents(store, label)
    expected = NeedsConfirmation if case.severity == "confirm" else HazardRefused
    with pytest.raises(expected) as caught:
        waste.add(store, label, case.component, case.volume)
    exc = caught.value
    assert type(exc) is expected and exc.overridable == (case.severity == "confirm")
    assert case.rule in {f.rule_id for f in exc.findings}
    hazard = next(r.hazard for r in compatibility.rules() if r.id == case.rule)
    assert hazard in str(exc) or len(exc.findings) > 1
    assert "\n" not in str(exc) and "safe" not in str(exc).lower()
    assert counts(store) == before and waste.contents(store, label) == held
    found = {f.rule_id for f in waste.screen(store, label, case.component, case.volume)}
    assert case.rule in found and counts(store) == before


@pytest.mark.parametrize("case", [c for c in CASES if c.severity == "refuse"],
                         ids=[c.id for c in CASES if c.severity == "refuse"])
def test_no_reason_overrides_a_refusal(store, case):
    label = prepare(store, case)
    before = counts(store)
    with pytest.raises(HazardRefused) as caught:
        waste.add(store, label, case.component, case.volume, accept="we know what we do")
    assert not caught.value.overridable
    assert counts(store) == before


def test_every_gas_hazard_is_among_the_refusals():
    refused = {c.rule for c in CASES if c.severity == "refuse"}
    assert GASES and GASES <= refused


@pytest.mark.parametrize("case", [c for c in CASES if c.severity == "confirm"],
                         ids=[c.id for c in CASES if c.severity == "confirm"])
def test_a_reason_lets_a_lesser_mismatch_through_and_is_journaled(store, case):
    label = prepare(store, case)
    n_adds, n_entries = counts(store)
    addition_id = waste.add(store, label, case.component, case.volume,
                            accept="  planned as a staged treatment ", who="t.tester")
    assert counts(store) == (n_adds + 1, n_entries + 1)
    (entry,) = journal.entries(store, limit=1)
    assert entry.kind == "note" and entry.recorded_by == "t.tester"
    assert entry.container_label == label
    assert entry.snapshot["event"] == "addition-accepted"
    assert entry.snapshot["addition_id"] == addition_id
    assert entry.snapshot["reason"] == "planned as a staged treatment"
    assert case.rule in {f["rule"] for f in entry.snapshot["findings"]}
    assert "planned as a staged treatment" in entry.summary


def test_a_fitting_addition_is_logged_without_a_note(store):
    waste.new_container(store, "A-1", stream="acid")
    waste.add(store, "A-1", "HCl=1M", "1 L")
    waste.add(store, "A-1", "H2SO4=0.5M", "1 L", accept="not needed")
    assert counts(store) == (2, 0)
    assert waste.show(store, "A-1")["warnings"] == []


def test_a_cyanide_container_refuses_any_acid_even_when_empty(store):
    waste.new_container(store, "CN-1", stream="cyanide_sulfide")
    with pytest.raises(HazardRefused, match="hydrogen cyanide or hydrogen sulfide"):
        waste.add(store, "CN-1", "CH3COOH=0.1M", "100 mL")
    assert counts(store) == (0, 0)


def test_the_refusal_names_the_hazard_the_contents_and_the_ph(store):
    waste.new_container(store, "MA-9", stream="acid")
    waste.add(store, "MA-9", "HCl=0.2M", "1 L")
    with pytest.raises(HazardRefused) as caught:
        waste.add(store, "MA-9", "NaCN=0.1M", "500 mL")
    text = str(caught.value)
    assert text.startswith("refused: adding NaCN to MA-9: would release hydrogen cyanide")
    ph = speciate(Mixture({"Cl-": 0.2}, volume_l=1.0)).pH  # the container, as the solver has it
    assert "holds HCl" in text and f"pH about {ph:.1f}" in text
    assert "alkaline cyanide container" in text


# -- the stream at creation and its changes ---------------------------------------------------

def test_the_stream_and_material_are_set_at_creation(store):
    c = waste.new_container(store, "HF-1", stream="hf", material="Plastic")
    assert (c.stream, c.material, c.stream_note) == ("hf", "plastic", "")
    assert c.as_dict()["stream"] == "hf"
    assert waste.new_container(store, "X-1").stream == "mixed"
    with pytest.raises(InvalidInput) as bad:
        waste.new_container(store, "X-2", stream="bucket")
    assert bad.value.field == "stream" and "cyanide_sulfide" in str(bad.value)
    with pytest.raises(InvalidInput) as bad:
        waste.new_container(store, "X-3", stream="acid", material="wood")
    assert bad.value.field == "material"
    assert [c.label for c in waste.containers(store)] == ["HF-1", "X-1"]


def test_a_stream_changes_only_with_a_journal_entry(store):
    waste.new_container(store, "C-1", stream="acid")
    waste.add(store, "C-1", "HCl=0.1M", "1 L")
    entry_id = waste.set_stream(store, "C-1", "mixed", "  collects mixed rinses now ",
                                material="glass", who="t.tester")
    c = waste.container(store, "C-1")
    assert (c.stream, c.material) == ("mixed", "glass")
    assert c.stream_note == "changed from acid: collects mixed rinses now"
    entry = journal.get(store, entry_id)
    assert entry.kind == "note" and entry.recorded_by == "t.tester"
    assert entry.snapshot == {"event": "stream-change", "previous_stream": "acid",
                              "stream": "mixed", "previous_material": None,
                              "material": "glass", "reason": "collects mixed rinses now",
                              "warnings": []}
    waste.set_stream(store, "C-1", "acid", "back to acid")  # the material stays
    assert waste.container(store, "C-1").material == "glass"


@pytest.mark.parametrize("kwargs, error, needle", [
    ({"stream": "acid", "reason": "again"}, InvalidInput, "already meant for acid waste"),
    ({"stream": "mixed", "reason": "  "}, InvalidInput, "say why"),
    ({"stream": "bucket", "reason": "x"}, InvalidInput, "not a waste stream"),
    ({"stream": "cyanide_sulfide", "reason": "x"}, Refused, "hydrogen cyanide"),
])
def test_a_stream_change_that_cannot_be_is_refused_and_nothing_changes(store, kwargs, error,
                                                                        needle):
    waste.new_container(store, "C-2", stream="acid")
    waste.add(store, "C-2", "HCl=0.1M", "1 L")
    with pytest.raises(error, match=needle):
        waste.set_stream(store, "C-2", **kwargs)
    assert waste.container(store, "C-2").stream == "acid"
    assert counts(store) == (1, 0)


def test_a_container_that_has_left_keeps_its_stream(store):
    waste.new_container(store, "C-3", stream="acid")
    waste.set_status(store, "C-3", "licensed-disposal")
    with pytest.raises(ContainerClosed, match="change its stream"):
        waste.set_stream(store, "C-3", "mixed", "relabel")


def test_the_database_refuses_a_stream_change_without_its_entry(store):
    waste.new_container(store, "C-4", stream="acid")
    journal.append(store, "note", summary="unrelated")
    for sql in ("UPDATE waste_containers SET stream = 'alkaline'",
                "UPDATE waste_containers SET material = 'metal'"):
        with pytest.raises(sqlite3.IntegrityError, match="journal entry that records it"):
            store.write(lambda s, sql=sql: s.execute(sql))
    assert waste.container(store, "C-4").stream == "acid"
    store.write(lambda s: s.execute("UPDATE waste_containers SET notes = 'still free'"))


def test_show_warns_when_the_contents_disagree_with_the_stream(store):
    waste.new_container(store, "C-5", stream="acid")
    waste.add(store, "C-5", "HCl=0.1M", "1 L")
    waste.add(store, "C-5", "NaOH=0.05M", "1 L", accept="rinse of the titration")
    info = waste.show(store, "C-5")
    assert info["stream"] == "acid" and info["stream_name"] == "acid waste"
    assert [w["rule"] for w in info["warnings"]] == ["base-into-acid-stream"]
    assert info["warnings"][0]["message"].startswith("already in the container: NaOH")
    assert info["warnings"][0]["accepted"] == "rinse of the titration"
    left = speciate(Mixture({"Cl-": 0.05, "Na+": 0.025}, volume_l=2.0)).pH  # 0.025 M HCl
    assert info["estimated_pH"] == pytest.approx(left, abs=1e-9)
    assert 1.5 < info["estimated_pH"] < 1.7  # -log10(0.025 x gamma) with gamma about 0.85
    assert info["contents"] == {"HCl": pytest.approx(0.1), "NaOH": pytest.approx(0.05)}
    json.dumps(info)


# -- a database from before streams ------------------------------------------------------------

OLD_CONTAINERS = [
    # label, [(compound, conc M, volume L, mass g)], the stream the upgrade must give
    ("OLD-ACID", [("HCl", 1.0, 2.0, None), ("H2SO4", 0.5, 1.0, None)], "acid"),
    ("OLD-BASE", [("NaOH", 0.5, 4.0, None), ("Na2CO3", 0.2, 2.0, None)], "alkaline"),
    ("OLD-HF", [("HF", 0.5, 1.0, None), ("NaF", None, 0.0, 10.0)], "hf"),
    ("OLD-CN", [("NaCN", 0.1, 1.0, None), ("NaOH", 0.1, 1.0, None)], "cyanide_sulfide"),
    ("OLD-MIX", [("HCl", 0.1, 1.0, None), ("NaCN", 0.1, 0.5, None)], "mixed"),
    ("OLD-EMPTY", [], "mixed"),
    ("OLD-OWN", [("MyAcid", 0.1, 1.0, None)], "mixed"),
]


def _old_database(path):
    """A database as carboy wrote it before migration 0004, with containers and additions."""
    db = sqlite_utils.Database(path)
    migrations.migrations.apply(db, stop_before="0004_waste_streams")
    stamp = "2025-01-01T10:00:00.000+00:00"
    for n, (label, adds, _) in enumerate(OLD_CONTAINERS, start=1):
        db.execute("INSERT INTO waste_containers (id, label, location, capacity_l, status, "
                   "opened_on, notes, created_by) VALUES (?, ?, 'Bay', 20, 'collecting', "
                   "'2025-01-01', 'old note', 'h.old')", [n, label])
        for key, conc, vol, mass in adds:
            db.execute("INSERT INTO waste_additions (container_id, compound_key, conc_molar, "
                       "volume_l, mass_g, entered, composition_json, moles_json, added_at, "
                       "added_by, origin) VALUES (?, ?, ?, ?, ?, ?, '{\"x\": 1}', '{}', ?, "
                       "'h.old', 'local')", [n, key, conc, vol, mass, key, stamp])
    # a mistaken base, superseded by a withdrawal, no longer counts in OLD-ACID
    db.execute("INSERT INTO waste_additions (container_id, compound_key, conc_molar, volume_l, "
               "entered, composition_json, moles_json, added_at, added_by, origin) VALUES "
               "(1, 'KOH', 1.0, 1.0, 'KOH=1M', '{\"x\": 1}', '{}', ?, 'h.old', 'local')",
               [stamp])
    mistaken = db.execute("SELECT max(id) FROM waste_additions").fetchone()[0]
    db.execute("INSERT INTO waste_additions (container_id, compound_key, conc_molar, volume_l, "
               "entered, composition_json, moles_json, supersedes_id, added_at, added_by, "
               "origin) VALUES (1, 'KOH', 0, 0, '(withdrawn)', '{}', '{}', ?, ?, 'h.old', "
               "'local')", [mistaken, stamp])
    db.conn.commit()
    db.close()


def _rows(store, table):
    return store.rows(f"SELECT * FROM {table} ORDER BY id")


def test_an_old_database_gets_streams_from_its_contents_and_nothing_else_changes(tmp_path):
    path = tmp_path / "old.db"
    _old_database(path)
    con = sqlite3.connect(path)
    con.row_factory = sqlite3.Row
    before = {t: [dict(r) for r in con.execute(f"SELECT * FROM {t} ORDER BY id")]
              for t in ("waste_containers", "waste_additions", "journal_entries")}
    con.close()
    s = open_database(path)
    try:
        assert "0004_waste_streams" in migrations.applied_names(s)
        after = {t: _rows(s, t) for t in before}
        assert after["waste_additions"] == before["waste_additions"]
        assert after["journal_entries"] == before["journal_entries"] == []
        for old, new in zip(before["waste_containers"], after["waste_containers"]):
            assert {k: new[k] for k in old} == old
            assert new["material"] is None
        got = {r["label"]: (r["stream"], r["stream_note"]) for r in after["waste_containers"]}
        for label, _, stream in OLD_CONTAINERS:
            assert got[label][0] == stream, (label, got[label])
            assert got[label][1].startswith("set when streams were introduced: ")
        assert "inferred from its contents (H2SO4, HCl)" in got["OLD-ACID"][1]
        assert "nothing was logged" in got["OLD-EMPTY"][1]
        assert "MyAcid, which the catalog does not know" in got["OLD-OWN"][1]
        assert "fit no single stream" in got["OLD-MIX"][1]
        info = waste.show(s, "OLD-MIX")
        assert "cyanide-acid" in {w["rule"] for w in info["warnings"]}
        assert not any("accepted" in w for w in info["warnings"])
        assert info["stream_note"] == got["OLD-MIX"][1]
    finally:
        s.close()


def test_the_schema_lists_every_stream_and_material_of_the_model():
    """Migration 0004 wrote the vocabularies of its day literally: a new stream or
    material in compatibility.toml needs a migration, and this test says so."""
    import re

    def listed(column: str) -> list[str]:
        found = re.search(rf"{column} IN \(([^)]*)\)", migrations.SQL_0004).group(1)
        return [s.strip(" '") for s in found.split(",")]

    assert listed("stream") == list(compatibility.streams())
    assert listed("material") == list(compatibility.MATERIALS)
