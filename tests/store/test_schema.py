"""The exact schema: tables, indexes and triggers."""

from __future__ import annotations

TABLES = {
    "_sqlite_migrations", "journal_entries", "record_chain", "stock_bottle_counts",
    "stock_bottles", "stock_bottles_fts",
    "stock_bottles_fts_config", "stock_bottles_fts_data", "stock_bottles_fts_docsize",
    "stock_bottles_fts_idx", "storeroom_rules", "user_compounds", "waste_additions",
    "waste_containers", "disposal_rules",
}
INDEXES = {
    ("_sqlite_migrations", "idx__sqlite_migrations_migration_set_name"),
    ("journal_entries", "journal_entries_by_bottle"),
    ("journal_entries", "journal_entries_by_container"),
    ("journal_entries", "journal_entries_by_corrected"),
    ("journal_entries", "journal_entries_by_kind"),
    ("journal_entries", "journal_entries_by_time"),
    ("record_chain", "sqlite_autoindex_record_chain_1"),
    ("stock_bottles", "stock_bottles_by_compound"),
    ("stock_bottles", "stock_bottles_by_expiry"),
    ("stock_bottles", "stock_bottles_by_status"),
    ("stock_bottle_counts", "sqlite_autoindex_stock_bottle_counts_1"),
    ("storeroom_rules", "sqlite_autoindex_storeroom_rules_1"),
    ("disposal_rules", "sqlite_autoindex_disposal_rules_1"),
    ("user_compounds", "sqlite_autoindex_user_compounds_1"),
    ("waste_additions", "sqlite_autoindex_waste_additions_1"),
    ("waste_additions", "waste_additions_by_container"),
    ("waste_containers", "sqlite_autoindex_waste_containers_1"),
}
TRIGGERS = {
    ("journal_entries", "journal_entries_no_delete"),
    ("journal_entries", "journal_entries_no_reused_id"),
    ("journal_entries", "journal_entries_no_update"),
    ("record_chain", "record_chain_no_delete"),
    ("record_chain", "record_chain_no_reused_id"),
    ("record_chain", "record_chain_no_update"),
    ("stock_bottles", "stock_bottle_counts_delete"),
    ("stock_bottles", "stock_bottle_counts_insert"),
    ("stock_bottles", "stock_bottle_counts_update"),
    ("stock_bottles", "stock_bottles_fts_delete"),
    ("stock_bottles", "stock_bottles_fts_insert"),
    ("stock_bottles", "stock_bottles_fts_update"),
    ("waste_additions", "waste_additions_no_delete"),
    ("waste_additions", "waste_additions_no_reused_id"),
    ("waste_additions", "waste_additions_no_update"),
    ("waste_containers", "waste_containers_stream_journaled"),
    ("disposal_rules", "disposal_rules_journaled_insert"),
    ("disposal_rules", "disposal_rules_journaled_update"),
    ("disposal_rules", "disposal_rules_journaled_delete"),
}
COLUMNS = {
    "journal_entries": ["id", "kind", "recorded_at", "recorded_by", "origin", "bottle_id",
                        "container_id", "corrects_id", "summary", "snapshot_json"],
    "waste_containers": ["id", "label", "location", "capacity_l", "status", "opened_on",
                         "closed_on", "notes", "created_by", "stream", "stream_note",
                         "material"],
    "waste_additions": ["id", "container_id", "compound_key", "conc_molar", "volume_l", "mass_g",
                        "entered", "composition_json", "moles_json", "supersedes_id",
                        "added_at", "added_by", "origin", "note"],
    "user_compounds": ["key", "definition_json", "source", "added_at", "added_by"],
    "storeroom_rules": ["name", "value_json", "set_at", "set_by"],
    "disposal_rules": ["name", "value_json", "set_at", "set_by", "entry_id"],
    "record_chain": ["seq", "record_table", "record_id", "content_sha256", "link_sha256"],
    "stock_bottles": ["id", "compound_key", "compound_name", "strength_unit", "label_strength",
                      "current_strength", "measured_at", "measured_how", "restandardize_days",
                      "amount_unit", "amount_left", "container_size", "location", "lot",
                      "received_on", "opened_on", "expires_on", "status", "notes", "added_at",
                      "added_by"],
}


def _objects(store, kind):
    return {(r["tbl_name"], r["name"]) for r in store.rows(
        "SELECT tbl_name, name FROM sqlite_master WHERE type = ?", [kind])}


def test_exact_tables(store):
    assert {name for _t, name in _objects(store, "table")} == TABLES


def test_exact_indexes(store):
    assert _objects(store, "index") == INDEXES


def test_exact_triggers(store):
    assert _objects(store, "trigger") == TRIGGERS


def test_no_views(store):
    assert _objects(store, "view") == set()


def test_columns(store):
    for table, expected in COLUMNS.items():
        assert [r["name"] for r in store.rows(f"PRAGMA table_info({table})")] == expected


def test_foreign_keys_declared(store):
    fks = {(t, r["from"], r["table"]) for t in COLUMNS
           for r in store.rows(f"PRAGMA foreign_key_list({t})")}
    assert fks == {
        ("journal_entries", "bottle_id", "stock_bottles"),
        ("journal_entries", "container_id", "waste_containers"),
        ("journal_entries", "corrects_id", "journal_entries"),
        ("waste_additions", "container_id", "waste_containers"),
        ("waste_additions", "supersedes_id", "waste_additions"),
        ("disposal_rules", "entry_id", "journal_entries"),
    }


def test_migrations_recorded(store):
    rows = store.rows("SELECT migration_set, name FROM _sqlite_migrations")
    assert rows == [{"migration_set": "carboy", "name": "0001_storeroom"},
                    {"migration_set": "carboy", "name": "0002_storeroom_rules"},
                    {"migration_set": "carboy", "name": "0003_record_chain"},
                    {"migration_set": "carboy", "name": "0004_waste_streams"},
                    {"migration_set": "carboy", "name": "0005_speed_at_scale"},
                    {"migration_set": "carboy", "name": "0006_disposal_rules"}]
