"""Storeroom rules over the defaults, and the strength check of every bottle."""

from __future__ import annotations

import sqlite3
from datetime import UTC, date, datetime

import pytest

from carboy.errors import InvalidInput
from carboy.model import upkeep
from carboy.store import journal, rules, stock
from carboy.store.db import open_database

TODAY = date(2025, 3, 14)
NOON = datetime(2025, 3, 1, 12, 0, tzinfo=UTC)


def _add(store, **fields):
    base = {"compound": "NaOH", "label_strength": "0.1 M", "container_size": "1 L"}
    base.update(fields)
    return stock.add(store, base, who="t")


def test_defaults_come_from_the_packaged_table(store):
    in_force = rules.load(store)
    # NaOH takes up CO2: a short interval (common practice, upkeep.toml)
    assert in_force.recheck_for("NaOH") == upkeep.recheck_defaults()["NaOH"].days
    assert in_force.recheck_for("NaOH") < in_force.recheck_for("HCl")
    assert in_force.recheck_origin["NaOH"] == "default"
    assert in_force.acceptance().max_rsd_percent == pytest.approx(0.2)


def test_set_recheck_overrides_journals_and_returns_to_default(store):
    eid = rules.set_recheck(store, "sodium hydroxide", "7", who="ana")
    assert rules.load(store).recheck_for("NaOH") == 7
    assert rules.load(store).recheck_origin["NaOH"] == "storeroom"
    entry = journal.get(store, eid)
    assert entry.kind == "note" and "every 7 days" in entry.summary and "was every 14" in entry.summary
    rules.set_recheck(store, "NaOH", "never")
    assert rules.load(store).recheck_for("NaOH") is None
    rules.set_recheck(store, "NaOH", "default")
    assert rules.load(store).recheck_for("NaOH") == upkeep.recheck_defaults()["NaOH"].days


@pytest.mark.parametrize("days", ["0", "-3", "3651", "often", "1.5"])
def test_bad_interval_is_refused_and_nothing_changes(store, days):
    before = journal.count(store)
    with pytest.raises(InvalidInput, match="NaOH") as err:
        rules.set_recheck(store, "NaOH", days)
    assert repr(days) in str(err.value) and err.value.field == "recheck_days"
    assert journal.count(store) == before
    assert rules.load(store).recheck_for("NaOH") == 14


def test_acceptance_rule_is_configurable(store):
    rules.set_acceptance(store, max_rsd_percent="0,3", min_replicates=4, who="ana")
    rule = rules.load(store).acceptance()
    assert (rule.max_rsd_percent, rule.min_replicates) == (0.3, 4)
    with pytest.raises(InvalidInput, match="largest RSD") as err:
        rules.set_acceptance(store, max_rsd_percent="12")
    assert err.value.field == "max_rsd_percent"
    for bad in ("1", "many"):
        with pytest.raises(InvalidInput, match="fewest replicates") as err:
            rules.set_acceptance(store, min_replicates=bad)
        assert err.value.field == "min_replicates" and repr(bad) in str(err.value)
    assert rules.load(store).acceptance().max_rsd_percent == 0.3
    rules.reset_acceptance(store)
    assert rules.load(store).acceptance().max_rsd_percent == pytest.approx(0.2)


def test_compound_rule_applies_to_molar_bottles_only(store):
    molar = _add(store)
    solid = _add(store, label_strength="99 %", container_size="500 g")
    own = _add(store, restandardize_days="60")
    assert stock.get(store, molar, today=TODAY).recheck_days == 14
    assert stock.get(store, solid, today=TODAY).recheck_days is None
    assert stock.get(store, own, today=TODAY).recheck_days == 60
    rules.set_recheck(store, "NaOH", 5)
    assert stock.get(store, molar, today=TODAY).recheck_days == 5
    assert stock.get(store, own, today=TODAY).recheck_days == 60


def test_check_lists_what_is_due_most_serious_first(store):
    fresh = _add(store)
    stock.record_standardization(store, fresh, "0.1001 M", method="KHP", when=NOON)
    stale = _add(store)
    stock.record_standardization(store, stale, "0.0995 M", method="KHP",
                                 when=datetime(2025, 2, 1, 9, 0, tzinfo=UTC))
    off = _add(store)
    stock.record_standardization(store, off, "0.0940 M", method="KHP", when=NOON)
    never = _add(store, compound="HCl")
    gone = _add(store, compound="HCl", label_strength="37 %", expires_on="2025-03-01")
    soon = _add(store, compound="HCl", label_strength="37 %", expires_on="2025-03-30")
    rows = stock.check(store, today=TODAY)
    ids = [r.bottle.id for r in rows]
    assert fresh not in ids
    assert ids == [gone, off, stale, never, soon]
    by_id = {r.bottle.id: r for r in rows}
    assert by_id[stale].flags == ("overdue",)
    assert by_id[stale].days_since == 41 and by_id[stale].due_on == "2025-02-15"
    assert by_id[off].deviation_percent == pytest.approx(-6.0)
    assert "-6.0 %" in by_id[off].reasons[0]
    assert by_id[never].flags == ("never-standardized",)
    assert by_id[gone].days_to_expiry == -13
    assert by_id[soon].flags == ("expires-soon",) and by_id[soon].days_to_expiry == 16
    everything = stock.check(store, today=TODAY, everything=True)
    assert {r.bottle.id for r in everything} == set(ids) | {fresh}
    assert by_id[stale].to_dict()["flags"] == ["overdue"]


def test_check_skips_empty_and_disposed_bottles(store):
    bid = _add(store, compound="HCl", label_strength="37 %", expires_on="2025-01-01")
    assert [r.bottle.id for r in stock.check(store, today=TODAY)] == [bid]
    stock.set_status(store, bid, "empty")
    assert stock.check(store, today=TODAY) == []


def test_a_database_from_before_the_rules_upgrades_keeping_its_data(tmp_path):
    path = tmp_path / "old.db"
    s = open_database(path)
    bid = _add(s)
    s.close()
    con = sqlite3.connect(path)  # make it look like a file written before migration 0002
    con.execute("DROP TABLE storeroom_rules")
    con.execute("DELETE FROM _sqlite_migrations WHERE name = '0002_storeroom_rules'")
    con.commit()
    con.close()
    s = open_database(path)
    try:
        assert stock.get(s, bid, today=TODAY).compound_key == "NaOH"
        assert rules.load(s).recheck_for("NaOH") == 14
    finally:
        s.close()
