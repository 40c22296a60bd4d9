"""Finding bottles: the catalog's other names, ``#ID``, a search within a status, the
counts the lists show, and the query plans that keep all of it flat at a million rows."""

from __future__ import annotations

import pytest

from carboy.store import compounds, stock, stock_search
from carboy.store.compounds import catalog_for


def _add(store, compound, location="Shelf", lot="L-1", status="in-use"):
    bid = stock.add(store, {"compound": compound, "label_strength": "1 M",
                            "container_size": "1 L", "location": location, "lot": lot},
                    who="t")
    if status != "in-use":
        stock.set_status(store, bid, status, who="t")
    return bid


@pytest.fixture
def shelf(store):
    """One bottle of each compound the common names below point at, plus a decoy."""
    ids = {key: _add(store, key, lot=f"FW-{n:03d}")
           for n, key in enumerate(("H2SO4", "NaOH", "Na2CO3", "HCl", "KOH", "NaCl"))}
    return store, ids


def _found(store, text, **kw):
    return {b.id for b in stock.page(store, text, **kw).bottles}


# The common names asked for, each with the compound the catalog gives it (aliases in
# carboy/model/data/compounds.toml, each with its source there).
COMMON_NAMES = [
    ("sulphuric", "H2SO4"), ("sulphuric acid", "H2SO4"), ("oil of vitriol", "H2SO4"),
    ("vitriol", "H2SO4"), ("caustic soda", "NaOH"), ("lye", "NaOH"), ("soda ash", "Na2CO3"),
    ("muriatic acid", "HCl"), ("muriatic", "HCl"), ("caustic potash", "KOH"),
]


@pytest.mark.parametrize(("text", "key"), COMMON_NAMES)
def test_a_common_name_finds_the_bottle_of_its_compound(shelf, text, key):
    store, ids = shelf
    assert ids[key] in _found(store, text)
    assert ids["NaCl"] not in _found(store, text)
    assert stock.count_upto(store, text).n == len(_found(store, text))


@pytest.mark.parametrize(("text", "key"), [("sulph", "H2SO4"), ("muri", "HCl"),
                                           ("oil of vit", "H2SO4"), ("caus so", "NaOH")])
def test_a_prefix_of_a_common_name_works_as_you_type(shelf, text, key):
    store, ids = shelf
    assert ids[key] in _found(store, text)


def test_two_words_need_not_be_one_name_but_both_must_be_found(shelf):
    store, ids = shelf
    # "caustic" names NaOH and KOH, "soda" names NaOH, Na2CO3 and NaHCO3: only NaOH has both
    assert _found(store, "caustic soda") == {ids["NaOH"]}


def test_a_user_compound_is_found_by_its_own_alias(store):
    compounds.add(store, "MES", "MES buffer acid", "C6H13NO4S", pka=[6.27], top_charge=0,
                  source="entered by hand for a test", aliases=["quuxic spirit"], who="t")
    bid = _add(store, "MES")
    assert _found(store, "quux") == {bid}
    assert _found(store, "spirit") == {bid}


def test_hash_and_id_is_that_bottle(shelf):
    store, ids = shelf
    assert _found(store, f"#{ids['HCl']}") == {ids["HCl"]}
    assert _found(store, f"#{ids['HCl']} #{ids['KOH']}") == {ids["HCl"], ids["KOH"]}
    assert _found(store, f"#{ids['HCl']} muriatic") == {ids["HCl"]}
    assert _found(store, f"#{ids['HCl']} soda") == set()
    assert _found(store, "#999999") == set()
    assert stock.count_upto(store, f"#{ids['HCl']}").n == 1
    # '#' with anything but digits is an ordinary word
    assert _found(store, "#FW") == set(ids.values())


def test_a_search_within_a_status(shelf):
    store, ids = shelf
    stock.set_status(store, ids["NaOH"], "empty", who="t")
    assert _found(store, "sodium", status="empty") == {ids["NaOH"]}
    assert _found(store, "sodium", status="in-use") == {ids["Na2CO3"], ids["NaCl"]}
    assert _found(store, "sodium", status="disposed") == set()
    assert stock.count_upto(store, "sodium", status="in-use").n == 2
    # the status is filtered on, never searched: "in" is not every bottle in use
    assert _found(store, "in") == set()


def test_counts_stop_at_the_bound_and_say_so(store):
    for n in range(7):
        _add(store, "HCl", lot=f"FW-{n}")
    exact = stock.count_upto(store, "hcl", bound=7)
    assert (exact.n, exact.exact) == (7, True)
    capped = stock.count_upto(store, "hcl", bound=5)
    assert (capped.n, capped.exact) == (5, False)
    assert stock.count(store, "hcl") == 7


def test_kept_counts_follow_every_write(store, tmp_path):
    """The whole list's count comes from stock_bottle_counts, kept by triggers: it agrees
    with counting the rows after adds, status changes, a preparation and an import."""
    def agree():
        kept = {r["status"]: r["bottles"] for r in store.rows(
            "SELECT status, bottles FROM stock_bottle_counts WHERE bottles > 0")}
        real = {r["status"]: r["n"] for r in store.rows(
            "SELECT status, count(*) AS n FROM stock_bottles GROUP BY status")}
        assert kept == real
        assert stock.count_upto(store).n == sum(real.values())
        for status in ("in-use", "empty", "disposed"):
            assert stock.count_upto(store, status=status).n == real.get(status, 0)

    agree()
    first = _add(store, "HCl")
    second = _add(store, "NaOH", status="empty")
    agree()
    stock.set_status(store, first, "disposed", who="t")
    stock.set_status(store, second, "in-use", who="t")
    agree()
    src = _add(store, "HCl")
    stock.record_preparation(store, src, "10 mL", who="t")
    agree()
    from carboy.store import csvio

    path = tmp_path / "in.csv"
    path.write_text("compound,label_strength,container_size,status\n"
                    "HCl,1 M,1 L,in-use\nNaOH,1 M,1 L,empty\n", encoding="utf-8")
    csvio.import_csv(store, path)
    agree()


def test_query_text_is_always_quoted():
    query = stock_search.fts_query('a"b OR NEAR( col:umn *')
    assert query.count('"') % 2 == 0
    for part in ('"a"*', '"b"*', '"OR"*', '"NEAR"*', '"col"*', '"umn"*'):
        assert part in query
    assert stock_search.fts_query('" * - ^') is None


def _plan(store, sql, params):
    return [r["detail"] for r in store.rows("EXPLAIN QUERY PLAN " + sql, params)]


def test_a_search_page_is_read_from_the_index_in_id_order(shelf):
    """The search index drives every searched page, in id order, with no sort: the
    bottles are looked up by id (never the other way round, which once took a second
    for a search within a status)."""
    from carboy.store import bottles

    store, _ = shelf
    for text in ("h", "hydro", "caustic soda", "#3 HCl", "fw-2"):
        for status in (None, bottles.BottleStatus.DISPOSED):
            for after, before in ((None, None), (5, None), (None, 5)):
                found = stock_search.parse(text, catalog_for(store))
                sql, params, _back = bottles._page_query(found, after, before, status, 50)
                plan = _plan(store, sql, params)
                assert plan[0].startswith("SCAN f VIRTUAL TABLE"), (text, plan)
                assert any("b USING INTEGER PRIMARY KEY" in p for p in plan), plan
                assert not any("TEMP B-TREE" in p for p in plan), plan


@pytest.mark.parametrize("status", [None, "disposed"])
def test_an_unsearched_page_uses_the_id_or_the_status_index(store, status):
    from carboy.store import bottles

    sql, params, _ = bottles._page_query(
        stock_search.Search(), 5, None,
        None if status is None else bottles.BottleStatus(status), 50)
    plan = _plan(store, sql, params)
    assert not any("TEMP B-TREE" in p for p in plan), plan
    wanted = "INTEGER PRIMARY KEY" if status is None else "stock_bottles_by_status"
    assert any(wanted in p for p in plan), plan


def test_a_listing_is_the_first_page_and_its_count(store):
    for n, key in enumerate(["HCl", "NaOH", "Na2CO3", "NaOH", "H2SO4", "NaCl", "NaOH"]):
        _add(store, key, lot=f"FW-{n}", status="empty" if n % 3 == 0 else "in-use")
    for text in (None, "h", "sodium", "#2", "caustic soda", "zz"):
        for status in (None, "in-use", "empty"):
            for bound in (2, 100):
                got, total = stock.listing(store, text, limit=2, status=status, bound=bound)
                assert got == stock.page(store, text, limit=2, status=status)
                assert total == stock.count_upto(store, text, status=status, bound=bound)
