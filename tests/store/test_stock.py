"""Stock bottles: validation, strength status, keyset pages and search."""

from __future__ import annotations

import re
from datetime import date, timedelta

import pytest

from carboy.errors import InvalidInput, UnknownCompound
from carboy.store import journal, stock
from carboy.store.errors import NotFound

TODAY = date(2025, 3, 14)


def _add(store, **fields):
    base = {"compound": "HCl", "label_strength": "0.1 M", "container_size": "1 L"}
    base.update(fields)
    return stock.add(store, base, who="t")


def test_add_and_get(store):
    bid = _add(store, lot="FW-24-001", location="Cabinet A", amount_left="250 mL",
               expires_on="2026-01-01", restandardize_days="30")
    b = stock.get(store, bid, today=TODAY)
    assert (b.compound_key, b.compound_name) == ("HCl", "hydrochloric acid")
    assert (b.label_strength, b.strength_unit) == (0.1, "M")
    assert (b.amount_left, b.container_size, b.amount_unit) == (0.25, 1.0, "L")
    assert b.restandardize_days == 30 and b.status == "in-use"
    assert journal.entries(store, bottle_id=bid)[0].kind == "receipt"


def test_names_resolve_through_catalog(store):
    b = stock.get(store, _add(store, compound="acetic acid", label_strength="99.8 %w/w"))
    assert b.compound_key == "CH3COOH" and b.strength_unit == "%w/w"
    solid = stock.get(store, _add(store, compound="NaOH", label_strength="99 %",
                                  container_size="1 kg"))
    assert (solid.amount_unit, solid.container_size) == ("g", 1000.0)


# each case: the fields given, what the message says, and the field it names (the one
# field given, unless a third item says otherwise)
BAD_BOTTLES = [
    ({"compound": "unobtainium"}, "unknown compound"),
    ({"compound": ""}, "is required"),
    ({"label_strength": "-1 M"}, "negative"),
    ({"label_strength": "0 M"}, "greater than zero"),
    ({"label_strength": "80 M"}, "stronger"),
    ({"label_strength": "2 N"}, "normality"),
    ({"label_strength": "120 %"}, "exceed 100"),
    ({"container_size": "2 M"}, "volume .* or a mass"),
    ({"container_size": "5000 L"}, "larger than any container"),
    ({"container_size": "-1 L"}, "negative"),
    ({"container_size": ""}, "is required"),
    ({"amount_left": "2 L"}, "exceeds the container size"),
    ({"amount_left": "200 g"}, "same kind of unit"),
    ({"amount_left": "lots"}, "a volume .* or a mass"),
    ({"current_strength": "37 %"}, "label's unit"),
    ({"current_strength": "strong"}, "number followed by a unit"),
    ({"expires_on": "2025-02-30"}, "not a real date"),
    ({"expires_on": "14/03/2025"}, "YYYY-MM-DD"),
    ({"measured_on": "2025-01-01"}, "without a current strength"),
    ({"restandardize_days": "soon"}, "whole number"),
    ({"status": "lost"}, "expected one of"),
    ({"notes": "x" * 2001}, "too long"),
    ({"received_on": "2025-02-01", "opened_on": "2025-01-01"}, "before the received",
     "opened_on"),
    ({"colour": "blue"}, "unknown"),
]


@pytest.mark.parametrize("case", BAD_BOTTLES, ids=lambda case: case[1])
def test_bad_input_names_the_value_and_its_field_and_writes_nothing(store, case):
    fields, match = case[:2]
    with pytest.raises((InvalidInput, UnknownCompound), match=match) as info:
        _add(store, **fields)
    if isinstance(info.value, InvalidInput):
        assert info.value.field == (case[2] if len(case) > 2 else next(iter(fields)))
    assert stock.count(store) == 0
    assert journal.count(store) == 0


def _status(**kw):
    base = dict(label_strength=0.1, current_strength=None, measured_at=None,
                restandardize_days=None, expires_on=None, today=TODAY)
    base.update(kw)
    return stock.strength_status(**base)


def test_strength_status_rules():
    assert _status() == "current"
    assert _status(expires_on="2025-03-13") == "expired"
    assert _status(expires_on="2025-03-14") == "current"
    assert _status(current_strength=0.1019) == "current"        # 1.9 % off
    assert _status(current_strength=0.1021) == "off-label"      # 2.1 % off
    assert _status(current_strength=0.0979) == "off-label"
    assert _status(restandardize_days=30) == "overdue"          # never measured
    measured = (TODAY - timedelta(days=30)).isoformat()
    assert _status(restandardize_days=30, measured_at=measured, current_strength=0.1) == \
        "current"
    old = (TODAY - timedelta(days=31)).isoformat() + "T10:00:00+00:00"
    assert _status(restandardize_days=30, measured_at=old, current_strength=0.1) == "overdue"
    # precedence: expired over off-label over overdue
    assert _status(expires_on="2020-01-01", current_strength=0.2) == "expired"
    assert _status(current_strength=0.2, restandardize_days=1) == "off-label"


def test_record_standardization(store):
    bid = _add(store, restandardize_days="14")
    assert stock.get(store, bid).strength_status == "overdue"
    eid = stock.record_standardization(store, bid, "0.0987 M", method="titration vs KHP",
                                       who="t")
    b = stock.get(store, bid)
    assert b.current_strength == 0.0987 and b.measured_how == "titration vs KHP"
    assert b.strength_status == "current"
    entry = journal.get(store, eid)
    assert entry.kind == "standardization" and entry.bottle_id == bid
    assert entry.snapshot["measured_strength"] == 0.0987
    with pytest.raises(InvalidInput):
        stock.record_standardization(store, bid, "10 %", method="x")
    with pytest.raises(NotFound):
        stock.record_standardization(store, 999, "0.1 M", method="x")


def test_record_preparation_takes_from_bottle(store):
    bid = _add(store, compound="HCl", label_strength="37 %", container_size="1 L",
               amount_left="10 mL")
    stock.record_preparation(store, bid, "8 mL", snapshot={"target": "0.1 M"}, who="t")
    assert stock.get(store, bid).amount_left == pytest.approx(0.002)
    with pytest.raises(InvalidInput, match="left in bottle"):
        stock.record_preparation(store, bid, "5 mL", who="t")
    assert stock.get(store, bid).amount_left == pytest.approx(0.002)


def test_set_status_disposed_is_journaled(store):
    bid = _add(store)
    eid = stock.set_status(store, bid, "disposed", note="expired", who="t")
    assert stock.get(store, bid).status == "disposed"
    assert journal.get(store, eid).kind == "disposal"


def _fill(store, n):
    rows = []
    for i in range(n):
        rows.append(stock.validate({"compound": ["HCl", "NaOH", "H2SO4"][i % 3],
                                    "label_strength": "0.1 M", "container_size": "1 L",
                                    "location": f"Cabinet {'AB'[i % 2]}",
                                    "lot": f"FW-{i:04d}"}, store_catalog(store)))
    store.write(lambda s: [stock.insert_in(s, r, who="t") for r in rows])


def store_catalog(store):
    from carboy.store.compounds import catalog_for

    return catalog_for(store)


def test_keyset_pages_cover_everything_once(store):
    _fill(store, 130)
    seen, after = [], None
    while True:
        page = stock.page(store, after_id=after, limit=50)
        seen += [b.id for b in page.bottles]
        if page.next_after is None:
            break
        after = page.next_after
    assert seen == list(range(1, 131))
    back = stock.page(store, before_id=101, limit=50)
    assert [b.id for b in back.bottles] == list(range(51, 101))
    assert back.prev_before == 51


def test_search_pages_and_counts(store):
    _fill(store, 130)
    assert stock.count(store, "NaOH") == 43
    assert stock.count(store, "sodium") == 43
    assert stock.count(store, "hydro") == 87        # hydrochloric + hydroxide
    assert stock.count(store, "cab b naoh") == 22
    page1 = stock.page(store, "naoh", limit=20)
    page2 = stock.page(store, "naoh", after_id=page1.next_after, limit=40)
    ids = [b.id for b in page1.bottles + page2.bottles]
    assert ids == list(range(2, 131, 3)) and page2.next_after is None
    assert stock.count(store, "FW-0042") == 1
    assert stock.page(store, "fw-004").bottles[0].lot == "FW-0040"


def _tokens(text: str) -> list[str]:
    """Words as the index's unicode61 tokenizer sees them: runs of letters and digits."""
    return re.findall(r"[^\W_]+", text.lower())


def _matches(bottle, search: str, catalog) -> bool:
    """The search box's promise, written out: every part of every typed word begins a
    word of the bottle's columns, or of a name the catalog gives its compound."""
    words = [t for c in (bottle.compound_key, bottle.compound_name, bottle.location,
                         bottle.lot) for t in _tokens(c)]
    compound = catalog.compounds[bottle.compound_key]
    names = [t for n in (compound.name, *compound.aliases,
                         *catalog.formulas_of(compound.key)) for t in _tokens(n)]
    return all(any(w.startswith(part) for w in words + names)
               for part in _tokens(search))


def _fill_odd_names(store):
    _fill(store, 5)
    _add(store, location="round-bottom rack, col:umn 3", lot='NEAR-1 "b"')
    _add(store, compound="NaOH", location="a\"b shelf", lot="OR-7")


@pytest.mark.parametrize("text", ['round-bottom', '"', 'AND', 'OR NOT', 'NEAR(', '*', 'a"b',
                                  "(HCl", "col:umn", "'", "^", "-", "HCl AND", "or",
                                  "hydro cab", "cabinet\tb"])
def test_search_is_safe_for_any_text(store, text):
    _fill_odd_names(store)
    everything = list(stock.all_bottles(store))
    expected = [b.id for b in everything if _matches(b, text, store_catalog(store))]
    found = [b.id for b in stock.page(store, text).bottles]
    assert found == expected
    assert stock.count(store, text) == len(expected)


def test_search_finds_what_is_stored(store):
    _fill_odd_names(store)
    everything = list(stock.all_bottles(store))
    for bottle in everything:
        for text in (bottle.lot, bottle.compound_name, bottle.location, bottle.compound_key):
            assert bottle.id in [b.id for b in stock.page(store, text).bottles], text
    assert [b.id for b in stock.page(store, "round-bottom").bottles] == [everything[5].id]
    assert everything[6].id in [b.id for b in stock.page(store, 'a"b').bottles]
    assert stock.page(store, "HCl AND").bottles == []


def test_get_bad_ids(store):
    with pytest.raises(InvalidInput):
        stock.get(store, "abc")
    with pytest.raises(NotFound):
        stock.get(store, 42)


def test_prepare_draws_adds_and_journals_in_one_entry(store):
    src = _add(store, compound="HCl", label_strength="37 %", container_size="2.5 L",
               amount_left="1 L")
    got = stock.prepare(store, source_bottle=src, used="82.8 mL",
                        new_bottle={"compound": "HCl", "label_strength": "1 M",
                                    "container_size": "1 L", "location": "bench 2"},
                        snapshot={"target_molar": 1.0}, who="t")
    assert stock.get(store, src).amount_left == pytest.approx(1.0 - 0.0828)
    new = stock.get(store, got.new_bottle_id)
    assert (new.compound_key, new.label_strength, new.strength_unit) == ("HCl", 1.0, "M")
    entry = journal.get(store, got.entry_id)
    assert entry.kind == "preparation" and entry.bottle_id == src
    assert entry.snapshot["new_bottle"] == got.new_bottle_id
    assert entry.snapshot["target_molar"] == 1.0
    assert got.source_left == pytest.approx(0.9172)


def test_prepare_refused_writes_nothing(store):
    src = _add(store, compound="HCl", label_strength="37 %", container_size="1 L",
               amount_left="10 mL")
    bottles_before = stock.count(store)
    entries_before = journal.count(store)
    with pytest.raises(InvalidInput, match="left in bottle"):
        stock.prepare(store, source_bottle=src, used="50 mL",
                      new_bottle={"compound": "HCl", "label_strength": "1 M",
                                  "container_size": "1 L"})
    with pytest.raises(InvalidInput, match="label strength"):
        stock.prepare(store, source_bottle=src, used="5 mL",
                      new_bottle={"compound": "HCl", "label_strength": "strong",
                                  "container_size": "1 L"})
    with pytest.raises(InvalidInput, match="must be in L"):
        stock.prepare(store, source_bottle=src, used="5 g")
    with pytest.raises(InvalidInput, match="nothing to record"):
        stock.prepare(store)
    assert stock.count(store) == bottles_before
    assert journal.count(store) == entries_before
    assert stock.get(store, src).amount_left == pytest.approx(0.010)


def test_prepare_from_the_catalog_only_adds_the_new_bottle(store):
    got = stock.prepare(store, new_bottle={"compound": "NaOH", "label_strength": "0.1 M",
                                           "container_size": "1 L"}, who="t")
    entry = journal.get(store, got.entry_id)
    assert entry.bottle_id == got.new_bottle_id and got.source_left is None


def test_serial_preparation_is_one_transaction(store):
    src = _add(store, compound="HCl", label_strength="37 %", container_size="1 L",
               amount_left="500 mL")
    steps = [
        stock.PreparationStep(src, "8.3 mL", {"compound": "HCl", "label_strength": "1 M",
                                              "container_size": "100 mL"}),
        stock.PreparationStep(stock.PREVIOUS, "10 mL", {"compound": "HCl",
                                                        "label_strength": "0.1 M",
                                                        "container_size": "100 mL"}),
    ]
    made = stock.prepare_series(store, steps, who="t")
    first = stock.get(store, made[0].new_bottle_id)
    assert first.amount_left == pytest.approx(0.090)
    assert journal.get(store, made[1].entry_id).bottle_id == first.id
    # a bad second step: nothing of the first is written either
    before = (stock.count(store), journal.count(store), stock.get(store, src).amount_left)
    bad = [steps[0], stock.PreparationStep(stock.PREVIOUS, "200 mL", steps[1].new_bottle)]
    with pytest.raises(InvalidInput, match="left in bottle"):
        stock.prepare_series(store, bad)
    assert (stock.count(store), journal.count(store),
            stock.get(store, src).amount_left) == before


def test_bad_amounts_and_strengths_name_their_field(store):
    bid = _add(store, amount_left="10 mL")
    with pytest.raises(InvalidInput) as info:
        stock.record_standardization(store, bid, "0.1 kg", method="x")
    assert info.value.field == "strength"
    with pytest.raises(InvalidInput) as info:
        stock.prepare(store, source_bottle=bid, used="1 kg")
    assert info.value.field == "used"
    with pytest.raises(InvalidInput) as info:
        stock.prepare(store, source_bottle=bid, used="50 mL")
    assert info.value.field == "used"
    with pytest.raises(InvalidInput) as info:
        stock.parse_amount("2 M", field="size")
    assert info.value.field == "size" and info.value.value == "2 M"


@pytest.mark.parametrize(("text", "stored"), [
    ("13.9151 mL", "0.0139151"), ("700 mL", "0.7"), ("34.8389 mL", "0.0348389"),
    ("2.5 L", "2.5"), ("1.2 kg", "1200"),
])
def test_an_amount_is_kept_without_the_bits_of_its_unit_conversion(text, stored):
    """What is stored (and shown in journal summaries, which are kept for ever) reads as
    typed: 13.9151 mL is 0.0139151 L, not 0.013915100000000001."""
    from carboy.store import readers

    value, _ = readers.parse_amount(text)
    assert readers.format_number(value) == stored
    if text.endswith("L"):
        assert readers.format_number(readers.parse_litres(
            text, what="volume", field="volume", positive=True, most_l=100.0,
            too_much="too much")) == stored
