"""An invented storeroom at scale, for the store benchmark: bottles, journal entries and
waste containers in the numbers a large shared storeroom reaches after years.

Rows are written in bulk (``executemany`` in one transaction per table) and every
journal entry and waste addition is linked into the record chain exactly as carboy
links it (:mod:`carboy.store.chain`), so the file opens cleanly and its chain
verifies.  Nothing here runs ANALYZE: the file holds whatever statistics carboy
itself keeps.

The data are invented and deterministic (a seeded generator):

* bottles of the catalog's common compounds, each with its catalog name, a location
  such as ``Acid cabinet 3 / shelf 2``, a lot such as ``FW-24-000123``, 85 % in use;
  molar solutions (60 %) carry a re-check interval and most a last measurement, as in
  a storeroom that keeps up: about one bottle in use in six needs attention (never
  standardized, overdue, off-label, expired or expiring within 30 days);
* journal entries over ten years (about 270 a day), mostly in time order but with
  one in fifty back-dated by up to a week (entries recorded after the event); kinds
  weighted as a storeroom makes them (standardizations and preparations most, a few
  corrections) and **no** ``disposal`` entry, so one kind is absent;
* waste containers made through carboy's own API, each with a few additions.
"""

from __future__ import annotations

import json
import random
import time
from datetime import UTC, date, datetime, timedelta
from pathlib import Path

from carboy.model.catalog import default_catalog
from carboy.store import chain, waste
from carboy.store.db import open_database

TODAY = date(2025, 6, 1)
"""The benchmark's today: entries run up to it, expiry dates around it."""
FIRST_DAY = TODAY - timedelta(days=3650)

COMPOUNDS = ("HCl", "H2SO4", "HNO3", "H3PO4", "CH3COOH", "HCOOH", "NaOH", "KOH", "NH3",
             "Na2CO3", "NaHCO3", "KHC8H4O4", "H2C2O4", "C6H8O7", "HF", "NaCl", "KCl",
             "NH4Cl", "Ca(OH)2", "K2CO3")
PLACES = ("Acid cabinet", "Base cabinet", "Titration bench", "Cold room", "Standards cupboard",
          "Flammables cabinet", "Spill station", "Bench reagents", "Oxidizer cabinet",
          "Salts shelf")
KIND_WEIGHTS = (("standardization", 36), ("preparation", 30), ("receipt", 20),
                ("neutralization", 9), ("note", 5))
"""Journal kinds and their shares; a correction is added for one entry in 1000."""
ABSENT_KIND = "disposal"
RARE_KIND = "correction"
WHO = ("h.ostervald", "m.ferreday", "t.wyncombe", "r.quillan", "s.abernath")
N_CONTAINERS = 200
ADDITIONS_PER_CONTAINER = 3

_BOTTLE_COLUMNS = (
    "compound_key", "compound_name", "strength_unit", "label_strength", "current_strength",
    "measured_at", "measured_how", "restandardize_days", "amount_unit", "amount_left",
    "container_size", "location", "lot", "received_on", "opened_on", "expires_on", "status",
    "notes", "added_at", "added_by")
_JOURNAL_COLUMNS = ("kind", "recorded_at", "recorded_by", "origin", "bottle_id",
                    "container_id", "corrects_id", "summary", "snapshot_json")


def insert_bottles(s, rows) -> None:
    """Write the bottles ``rows`` (tuples in ``_BOTTLE_COLUMNS`` order) in one statement;
    ``s`` is the store inside its write."""
    insert = (f"INSERT INTO stock_bottles ({', '.join(_BOTTLE_COLUMNS)}) "
              f"VALUES ({', '.join('?' for _ in _BOTTLE_COLUMNS)})")
    s.conn.executemany(insert, rows)


def _stamp(moment: datetime) -> str:
    return moment.astimezone(UTC).isoformat(timespec="milliseconds")


def _bottle(rng: random.Random, i: int, names: dict[str, str]) -> tuple:
    key = COMPOUNDS[rng.randrange(len(COMPOUNDS))]
    received = FIRST_DAY + timedelta(days=rng.randrange(3650))
    molar = rng.random() < 0.6
    label = rng.choice((0.01, 0.05, 0.1, 0.5, 1.0)) if molar else rng.choice((25.0, 37.0, 96.0))
    measured_at = current = every = None
    if molar:
        every = rng.choice((14, 30, 60, 90))
        if rng.random() < 0.92:
            measured_at = _stamp(datetime.combine(
                TODAY - timedelta(days=rng.randrange(int(every * 1.15) + 1)),
                datetime.min.time(), UTC))
            current = label * (1 + rng.gauss(0, 0.007))
    expires = TODAY + timedelta(days=rng.randrange(-40, 1500))
    status = "in-use" if rng.random() < 0.85 else rng.choice(("empty", "disposed"))
    return (key, names[key], "M" if molar else "%w/w", label, current, measured_at,
            "titration" if measured_at else "", every, "L", 0.5, 1.0,
            f"{rng.choice(PLACES)} {rng.randint(1, 12)} / shelf {rng.randint(1, 6)}",
            f"FW-{received.year % 100:02d}-{i:06d}", received.isoformat(), None,
            expires.isoformat(), status, "", _stamp(datetime.combine(
                received, datetime.min.time(), UTC)), rng.choice(WHO))


def _entries(rng: random.Random, n: int, n_bottles: int, first_container: int):
    kinds = [k for k, w in KIND_WEIGHTS for _ in range(w)]
    start = datetime.combine(FIRST_DAY, datetime.min.time(), UTC)
    step_s = 3650 * 86400 / max(n, 1)
    for i in range(n):
        moment = start + timedelta(seconds=i * step_s)
        if rng.random() < 0.02:  # recorded after the event: back-dated up to a week
            moment -= timedelta(seconds=rng.randrange(7 * 86400))
        entry_id = i + 1
        if entry_id > 1 and rng.random() < 0.001:
            kind, corrects = RARE_KIND, rng.randrange(1, entry_id)
        else:
            kind, corrects = kinds[rng.randrange(len(kinds))], None
        bottle = container = None
        if kind == "neutralization":
            container = first_container + rng.randrange(N_CONTAINERS)
        elif kind != "note" and kind != RARE_KIND:
            bottle = 1 + rng.randrange(n_bottles)
        summary = (f"correction of entry {corrects}: volume misread" if corrects else
                   f"{kind} {'bottle ' + str(bottle) if bottle else 'container ' + str(container)}"
                   if bottle or container else "weekly check of eyewash and spill station")
        snapshot = json.dumps({"n": i, "value": round(rng.random(), 6),
                               "note": "invented benchmark entry"}, sort_keys=True)
        yield (kind, _stamp(moment), rng.choice(WHO), "local", bottle, container, corrects,
               summary, snapshot)


def _seal(conn, table: str, batch: int = 20_000) -> int:
    """Link every row of ``table`` without a link, in id order, as :func:`chain.link` does."""
    cols = ", ".join(chain.CHAINED[table])
    last = conn.execute(f"SELECT link_sha256 FROM {chain.CHAIN_TABLE} "
                        "ORDER BY seq DESC LIMIT 1").fetchone()
    previous = last[0] if last else chain.GENESIS
    after = conn.execute(f"SELECT coalesce(max(record_id), 0) FROM {chain.CHAIN_TABLE} "
                         "WHERE record_table = ?", (table,)).fetchone()[0]
    done = 0
    while True:
        cur = conn.execute(f"SELECT {cols} FROM {table} WHERE id > ? ORDER BY id LIMIT ?",
                           (after, batch))
        names = [d[0] for d in cur.description]
        rows = [dict(zip(names, r)) for r in cur.fetchall()]
        if not rows:
            return done
        links = []
        for row in rows:
            content = chain.content_hash(table, row)
            previous = chain.link_hash(previous, content)
            links.append((table, row["id"], content, previous))
        conn.executemany(f"INSERT INTO {chain.CHAIN_TABLE} (record_table, record_id, "
                         "content_sha256, link_sha256) VALUES (?, ?, ?, ?)", links)
        after, done = rows[-1]["id"], done + len(rows)


def build(path: Path, *, bottles: int, entries: int, seed: int = 7) -> dict[str, float]:
    """Write the storeroom to a new file at ``path``; returns the seconds each part took."""
    rng = random.Random(seed)
    catalog = default_catalog()
    names = {key: catalog.compounds[key].name for key in COMPOUNDS}
    store = open_database(path)
    store.origin = "local"
    times: dict[str, float] = {}
    t = time.perf_counter()
    first = (store.scalar("SELECT max(id) FROM waste_containers") or 0) + 1

    def make_waste(s) -> None:
        for n in range(N_CONTAINERS):
            label = f"W-{n:04d}"
            waste.new_container(s, label, location="Waste bay", capacity="1000 L",
                                who=WHO[n % len(WHO)], today=TODAY)
            for j in range(ADDITIONS_PER_CONTAINER):
                waste.add(s, label, "HCl=0.1M" if j % 2 else "H2SO4=0.05M", "1 L",
                          who=WHO[j % len(WHO)])

    store.write(make_waste)
    times["waste"] = time.perf_counter() - t
    t = time.perf_counter()
    store.write(lambda s: insert_bottles(s, (_bottle(rng, i, names) for i in range(bottles))))
    times["bottles"] = time.perf_counter() - t
    t = time.perf_counter()
    insert = (f"INSERT INTO journal_entries ({', '.join(_JOURNAL_COLUMNS)}) "
              f"VALUES ({', '.join('?' for _ in _JOURNAL_COLUMNS)})")
    store.write(lambda s: s.conn.executemany(insert, _entries(rng, entries, bottles, first)))
    times["journal"] = time.perf_counter() - t
    t = time.perf_counter()
    store.write(lambda s: _seal(s.conn, "journal_entries"))
    times["chain"] = time.perf_counter() - t
    store.conn.close()  # a plain close: no statistics gathered while building
    return times
