-- application_id 1129464409

-- index journal_entries_by_bottle on journal_entries
CREATE INDEX journal_entries_by_bottle ON journal_entries (bottle_id, recorded_at) WHERE bottle_id IS NOT NULL;

-- index journal_entries_by_container on journal_entries
CREATE INDEX journal_entries_by_container ON journal_entries (container_id, recorded_at) WHERE container_id IS NOT NULL;

-- index journal_entries_by_corrected on journal_entries
CREATE INDEX journal_entries_by_corrected ON journal_entries (corrects_id) WHERE corrects_id IS NOT NULL;

-- index journal_entries_by_kind on journal_entries
CREATE INDEX journal_entries_by_kind ON journal_entries (kind, recorded_at);

-- index journal_entries_by_time on journal_entries
CREATE INDEX journal_entries_by_time ON journal_entries (recorded_at);

-- index stock_bottles_by_compound on stock_bottles
CREATE INDEX stock_bottles_by_compound ON stock_bottles (compound_key);

-- index stock_bottles_by_expiry on stock_bottles
CREATE INDEX stock_bottles_by_expiry ON stock_bottles (expires_on);

-- index stock_bottles_by_status on stock_bottles
CREATE INDEX stock_bottles_by_status ON stock_bottles (status);

-- index waste_additions_by_container on waste_additions
CREATE INDEX waste_additions_by_container ON waste_additions (container_id, id);

-- table disposal_rules on disposal_rules
CREATE TABLE disposal_rules (
    name TEXT PRIMARY KEY CHECK (name IN ('window_low', 'window_high', 'batch_treatment', 'batch_max_l', 'vessel_l', 'dilute_to_percent', 'ice_fraction', 'flush_factor', 'max_temperature_c', 'fill_limit_percent', 'nearly_full_percent', 'never_treat')),
    value_json TEXT NOT NULL CHECK (json_valid(value_json)),
    set_at TEXT NOT NULL,
    set_by TEXT NOT NULL,
    entry_id INTEGER NOT NULL REFERENCES journal_entries (id)
);

-- table journal_entries on journal_entries
CREATE TABLE journal_entries (
    id INTEGER PRIMARY KEY,
    kind TEXT NOT NULL CHECK (kind IN ('receipt', 'preparation', 'standardization', 'neutralization', 'disposal', 'correction', 'note')),
    recorded_at TEXT NOT NULL,
    recorded_by TEXT NOT NULL,
    origin TEXT NOT NULL,
    bottle_id INTEGER REFERENCES stock_bottles (id),
    container_id INTEGER REFERENCES waste_containers (id),
    corrects_id INTEGER REFERENCES journal_entries (id),
    summary TEXT NOT NULL DEFAULT '',
    snapshot_json TEXT NOT NULL CHECK (json_valid(snapshot_json)),
    CHECK (kind <> 'correction' OR corrects_id IS NOT NULL)
);

-- table record_chain on record_chain
CREATE TABLE record_chain (
    seq INTEGER PRIMARY KEY,
    record_table TEXT NOT NULL CHECK (record_table IN ('journal_entries', 'waste_additions')),
    record_id INTEGER NOT NULL,
    content_sha256 TEXT NOT NULL CHECK (length(content_sha256) = 64),
    link_sha256 TEXT NOT NULL CHECK (length(link_sha256) = 64),
    UNIQUE (record_table, record_id)
);

-- table stock_bottle_counts on stock_bottle_counts
CREATE TABLE stock_bottle_counts (
    status TEXT PRIMARY KEY,
    bottles INTEGER NOT NULL CHECK (bottles >= 0)
);

-- table stock_bottles on stock_bottles
CREATE TABLE stock_bottles (
    id INTEGER PRIMARY KEY,
    compound_key TEXT NOT NULL CHECK (length(compound_key) > 0),
    compound_name TEXT NOT NULL DEFAULT '',
    strength_unit TEXT NOT NULL CHECK (strength_unit IN ('M', '%w/w')),
    label_strength REAL NOT NULL CHECK (label_strength > 0),
    current_strength REAL CHECK (current_strength IS NULL OR current_strength > 0),
    measured_at TEXT,
    measured_how TEXT NOT NULL DEFAULT '',
    restandardize_days INTEGER CHECK (restandardize_days IS NULL OR restandardize_days > 0),
    amount_unit TEXT NOT NULL CHECK (amount_unit IN ('L', 'g')),
    amount_left REAL NOT NULL CHECK (amount_left >= 0),
    container_size REAL NOT NULL CHECK (container_size > 0),
    location TEXT NOT NULL DEFAULT '',
    lot TEXT NOT NULL DEFAULT '',
    received_on TEXT,
    opened_on TEXT,
    expires_on TEXT,
    status TEXT NOT NULL DEFAULT 'in-use' CHECK (status IN ('in-use', 'empty', 'disposed')),
    notes TEXT NOT NULL DEFAULT '',
    added_at TEXT NOT NULL,
    added_by TEXT NOT NULL
);

-- table stock_bottles_fts on stock_bottles_fts
CREATE VIRTUAL TABLE stock_bottles_fts USING fts5 (
    compound_key, compound_name, location, lot, status,
    content = 'stock_bottles', content_rowid = 'id',
    tokenize = 'unicode61 remove_diacritics 2', prefix = '1 2 3 4 5 6 7 8 9 10', detail = column
);

-- table stock_bottles_fts_config on stock_bottles_fts_config
CREATE TABLE 'stock_bottles_fts_config'(k PRIMARY KEY, v) WITHOUT ROWID;

-- table stock_bottles_fts_data on stock_bottles_fts_data
CREATE TABLE 'stock_bottles_fts_data'(id INTEGER PRIMARY KEY, block BLOB);

-- table stock_bottles_fts_docsize on stock_bottles_fts_docsize
CREATE TABLE 'stock_bottles_fts_docsize'(id INTEGER PRIMARY KEY, sz BLOB);

-- table stock_bottles_fts_idx on stock_bottles_fts_idx
CREATE TABLE 'stock_bottles_fts_idx'(segid, term, pgno, PRIMARY KEY(segid, term)) WITHOUT ROWID;

-- table storeroom_rules on storeroom_rules
CREATE TABLE storeroom_rules (
    name TEXT PRIMARY KEY CHECK (length(trim(name)) > 0),
    value_json TEXT NOT NULL CHECK (json_valid(value_json)),
    set_at TEXT NOT NULL,
    set_by TEXT NOT NULL
);

-- table user_compounds on user_compounds
CREATE TABLE user_compounds (
    key TEXT PRIMARY KEY,
    definition_json TEXT NOT NULL CHECK (json_valid(definition_json)),
    source TEXT NOT NULL CHECK (length(trim(source)) > 0),
    added_at TEXT NOT NULL,
    added_by TEXT NOT NULL
);

-- table waste_additions on waste_additions
CREATE TABLE waste_additions (
    id INTEGER PRIMARY KEY,
    container_id INTEGER NOT NULL REFERENCES waste_containers (id),
    compound_key TEXT NOT NULL,
    conc_molar REAL CHECK (conc_molar IS NULL OR conc_molar >= 0),
    volume_l REAL NOT NULL CHECK (volume_l >= 0),
    mass_g REAL CHECK (mass_g IS NULL OR mass_g >= 0),
    entered TEXT NOT NULL,
    composition_json TEXT NOT NULL CHECK (json_valid(composition_json)),
    moles_json TEXT NOT NULL CHECK (json_valid(moles_json)),
    supersedes_id INTEGER UNIQUE REFERENCES waste_additions (id),
    added_at TEXT NOT NULL,
    added_by TEXT NOT NULL,
    origin TEXT NOT NULL,
    note TEXT NOT NULL DEFAULT ''
);

-- table waste_containers on waste_containers
CREATE TABLE waste_containers (
    id INTEGER PRIMARY KEY,
    label TEXT NOT NULL UNIQUE COLLATE NOCASE CHECK (length(trim(label)) > 0),
    location TEXT NOT NULL DEFAULT '',
    capacity_l REAL NOT NULL CHECK (capacity_l > 0),
    status TEXT NOT NULL DEFAULT 'collecting' CHECK (status IN ('collecting', 'planned', 'neutralized', 'disposed', 'licensed-disposal')),
    opened_on TEXT NOT NULL,
    closed_on TEXT,
    notes TEXT NOT NULL DEFAULT '',
    created_by TEXT NOT NULL
, stream TEXT NOT NULL DEFAULT 'mixed' CHECK (stream IN ('acid', 'alkaline', 'cyanide_sulfide', 'heavy_metal', 'hf', 'oxidizing_acid', 'mixed')), stream_note TEXT NOT NULL DEFAULT '', material TEXT CHECK (material IS NULL OR material IN ('glass', 'plastic', 'metal')));

-- trigger disposal_rules_journaled_delete on disposal_rules
CREATE TRIGGER disposal_rules_journaled_delete BEFORE DELETE ON disposal_rules
WHEN NOT EXISTS (SELECT 1 FROM journal_entries j
    WHERE j.id = (SELECT max(id) FROM journal_entries)
      AND j.kind = 'note' AND json_extract(j.snapshot_json, '$.event') = 'disposal-rules'
      AND json_extract(j.snapshot_json, '$.back_to_placeholder') = 1
      AND json_type(j.snapshot_json, '$.changes.' || OLD.name) IS NOT NULL)
BEGIN SELECT RAISE(ABORT, 'carboy: a disposal rule changes only right after the journal entry that records it'); END;

-- trigger disposal_rules_journaled_insert on disposal_rules
CREATE TRIGGER disposal_rules_journaled_insert BEFORE INSERT ON disposal_rules
WHEN NOT EXISTS (SELECT 1 FROM journal_entries j
    WHERE j.id = NEW.entry_id AND j.id = (SELECT max(id) FROM journal_entries)
      AND j.kind = 'note' AND json_extract(j.snapshot_json, '$.event') = 'disposal-rules'
      AND json_extract(j.snapshot_json, '$.changes.' || NEW.name || '.after') IS json_extract(NEW.value_json, '$'))
BEGIN SELECT RAISE(ABORT, 'carboy: a disposal rule changes only right after the journal entry that records it'); END;

-- trigger disposal_rules_journaled_update on disposal_rules
CREATE TRIGGER disposal_rules_journaled_update BEFORE UPDATE ON disposal_rules
WHEN NOT EXISTS (SELECT 1 FROM journal_entries j
    WHERE j.id = NEW.entry_id AND j.id = (SELECT max(id) FROM journal_entries)
      AND j.kind = 'note' AND json_extract(j.snapshot_json, '$.event') = 'disposal-rules'
      AND json_extract(j.snapshot_json, '$.changes.' || NEW.name || '.after') IS json_extract(NEW.value_json, '$'))
BEGIN SELECT RAISE(ABORT, 'carboy: a disposal rule changes only right after the journal entry that records it'); END;

-- trigger journal_entries_no_delete on journal_entries
CREATE TRIGGER journal_entries_no_delete BEFORE DELETE ON journal_entries
BEGIN SELECT RAISE(ABORT, 'carboy: journal entries are append-only; record a correction instead'); END;

-- trigger journal_entries_no_reused_id on journal_entries
CREATE TRIGGER journal_entries_no_reused_id BEFORE INSERT ON journal_entries WHEN new.id > 0 AND EXISTS (SELECT 1 FROM journal_entries WHERE id = new.id)
BEGIN SELECT RAISE(ABORT, 'carboy: journal entries are append-only; an id is never reused'); END;

-- trigger journal_entries_no_update on journal_entries
CREATE TRIGGER journal_entries_no_update BEFORE UPDATE ON journal_entries
BEGIN SELECT RAISE(ABORT, 'carboy: journal entries are append-only; record a correction instead'); END;

-- trigger record_chain_no_delete on record_chain
CREATE TRIGGER record_chain_no_delete BEFORE DELETE ON record_chain
BEGIN SELECT RAISE(ABORT, 'carboy: chain links are append-only; record a correction instead'); END;

-- trigger record_chain_no_reused_id on record_chain
CREATE TRIGGER record_chain_no_reused_id BEFORE INSERT ON record_chain WHEN new.seq > 0 AND EXISTS (SELECT 1 FROM record_chain WHERE seq = new.seq)
BEGIN SELECT RAISE(ABORT, 'carboy: chain links are append-only; an id is never reused'); END;

-- trigger record_chain_no_update on record_chain
CREATE TRIGGER record_chain_no_update BEFORE UPDATE ON record_chain
BEGIN SELECT RAISE(ABORT, 'carboy: chain links are append-only; record a correction instead'); END;

-- trigger stock_bottle_counts_delete on stock_bottles
CREATE TRIGGER stock_bottle_counts_delete AFTER DELETE ON stock_bottles BEGIN
    UPDATE stock_bottle_counts SET bottles = bottles - 1 WHERE status = old.status;
END;

-- trigger stock_bottle_counts_insert on stock_bottles
CREATE TRIGGER stock_bottle_counts_insert AFTER INSERT ON stock_bottles BEGIN
    INSERT INTO stock_bottle_counts (status, bottles) VALUES (new.status, 1)
    ON CONFLICT (status) DO UPDATE SET bottles = bottles + 1;
END;

-- trigger stock_bottle_counts_update on stock_bottles
CREATE TRIGGER stock_bottle_counts_update AFTER UPDATE OF status ON stock_bottles
WHEN new.status IS NOT old.status BEGIN
    UPDATE stock_bottle_counts SET bottles = bottles - 1 WHERE status = old.status;
    INSERT INTO stock_bottle_counts (status, bottles) VALUES (new.status, 1)
    ON CONFLICT (status) DO UPDATE SET bottles = bottles + 1;
END;

-- trigger stock_bottles_fts_delete on stock_bottles
CREATE TRIGGER stock_bottles_fts_delete AFTER DELETE ON stock_bottles BEGIN
    INSERT INTO stock_bottles_fts (stock_bottles_fts, rowid, compound_key, compound_name,
                                   location, lot, status)
    VALUES ('delete', old.id, old.compound_key, old.compound_name, old.location, old.lot,
            old.status);
END;

-- trigger stock_bottles_fts_insert on stock_bottles
CREATE TRIGGER stock_bottles_fts_insert AFTER INSERT ON stock_bottles BEGIN
    INSERT INTO stock_bottles_fts (rowid, compound_key, compound_name, location, lot, status)
    VALUES (new.id, new.compound_key, new.compound_name, new.location, new.lot, new.status);
END;

-- trigger stock_bottles_fts_update on stock_bottles
CREATE TRIGGER stock_bottles_fts_update AFTER UPDATE OF compound_key, compound_name,
    location, lot, status ON stock_bottles BEGIN
    INSERT INTO stock_bottles_fts (stock_bottles_fts, rowid, compound_key, compound_name,
                                   location, lot, status)
    VALUES ('delete', old.id, old.compound_key, old.compound_name, old.location, old.lot,
            old.status);
    INSERT INTO stock_bottles_fts (rowid, compound_key, compound_name, location, lot, status)
    VALUES (new.id, new.compound_key, new.compound_name, new.location, new.lot, new.status);
END;

-- trigger waste_additions_no_delete on waste_additions
CREATE TRIGGER waste_additions_no_delete BEFORE DELETE ON waste_additions
BEGIN SELECT RAISE(ABORT, 'carboy: waste additions are append-only; record a correction instead'); END;

-- trigger waste_additions_no_reused_id on waste_additions
CREATE TRIGGER waste_additions_no_reused_id BEFORE INSERT ON waste_additions WHEN new.id > 0 AND EXISTS (SELECT 1 FROM waste_additions WHERE id = new.id)
BEGIN SELECT RAISE(ABORT, 'carboy: waste additions are append-only; an id is never reused'); END;

-- trigger waste_additions_no_update on waste_additions
CREATE TRIGGER waste_additions_no_update BEFORE UPDATE ON waste_additions
BEGIN SELECT RAISE(ABORT, 'carboy: waste additions are append-only; record a correction instead'); END;

-- trigger waste_containers_stream_journaled on waste_containers
CREATE TRIGGER waste_containers_stream_journaled BEFORE UPDATE OF stream, material ON waste_containers
WHEN NEW.stream IS NOT OLD.stream OR NEW.material IS NOT OLD.material
BEGIN SELECT RAISE(ABORT, 'carboy: a container''s stream or material changes only right after the journal entry that records it')
WHERE NOT EXISTS (SELECT 1 FROM journal_entries j
    WHERE j.id = (SELECT max(id) FROM journal_entries) AND j.container_id = NEW.id
      AND j.kind = 'note' AND json_extract(j.snapshot_json, '$.event') = 'stream-change'
      AND json_extract(j.snapshot_json, '$.stream') IS NEW.stream
      AND json_extract(j.snapshot_json, '$.material') IS NEW.material); END;
