"""The demo storeroom: invented, deterministic, and with the promised contents."""

from __future__ import annotations

from collections import Counter
from datetime import date

import pytest

from carboy.store import demo, journal, stock, waste
from carboy.store.compounds import catalog_for
from carboy.store.errors import AlreadyExists


def _dump(store):
    out = []
    for table in ("stock_bottles", "waste_containers", "waste_additions", "journal_entries"):
        out.append(store.rows(f"SELECT * FROM {table} ORDER BY 1"))
    return out


def test_contents(demo_store):
    bottles = list(stock.all_bottles(demo_store, today=demo.DEMO_TODAY))
    assert 35 <= len(bottles) <= 45
    states = Counter(b.strength_status for b in bottles)
    assert states["expired"] >= 2 and states["overdue"] >= 2 and states["off-label"] == 1
    assert {b.strength_unit for b in bottles} == {"M", "%w/w"}
    catalog = catalog_for(demo_store)
    assert all(catalog.compound(b.compound_key).key == b.compound_key for b in bottles)
    labels = {c.label: c for c in waste.containers(demo_store)}
    assert len(labels) == 4
    fluoride = [c for c in labels.values()
                if "fluoride" in waste.moles(demo_store, c.label)[0]]
    assert len(fluoride) == 1
    assert fluoride[0].status == "licensed-disposal"
    assert "licensed disposal" in fluoride[0].notes
    kinds = Counter(e.kind for e in journal.iter_all(demo_store))
    for kind in ("standardization", "preparation", "correction", "neutralization", "disposal"):
        assert kinds[kind] >= 1


def test_never_calls_anything_safe_to_pour(demo_store):
    texts = [c.notes for c in waste.containers(demo_store)]
    texts += [e.summary for e in journal.iter_all(demo_store)]
    joined = " ".join(texts).lower()
    assert "safe" not in joined.replace("safety", "")
    for c in waste.containers(demo_store):
        assert "safety office" in c.notes


def test_deterministic(tmp_path):
    a = demo.create_demo_database(tmp_path / "a.db")
    b = demo.create_demo_database(tmp_path / "b.db")
    from carboy.store.db import open_database

    sa, sb = open_database(a), open_database(b)
    assert _dump(sa) == _dump(sb)
    sa.close()
    sb.close()


def test_today_shifts_dates(tmp_path):
    path = demo.create_demo_database(tmp_path / "later.db", today=date(2030, 1, 1))
    from carboy.store.db import open_database

    s = open_database(path)
    states = Counter(b.strength_status for b in stock.all_bottles(s, today=date(2030, 1, 1)))
    assert states["off-label"] == 1
    s.close()


def test_refuses_existing_file(demo_path):
    before = demo_path.read_bytes()
    with pytest.raises(AlreadyExists):
        demo.create_demo_database(demo_path)
    assert demo_path.read_bytes() == before
