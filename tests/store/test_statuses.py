"""Statuses: the one table of values and moves agrees with the database and with the store."""

from __future__ import annotations

import sqlite3

import pytest

from carboy.errors import InvalidInput
from carboy.store import stock, waste
from carboy.store.errors import ContainerClosed
from carboy.store.statuses import (
    BOTTLE_STATUSES,
    CONTAINER_STATUSES,
    BottleStatus,
    ContainerStatus,
    bottle_words,
    container_words,
)

C = ContainerStatus

# The moves the storeroom works by (design: collect, plan, neutralize, then dispose; licensed
# disposal is open until the container has gone; nothing comes back).
MOVES = {
    C.COLLECTING: {C.PLANNED, C.NEUTRALIZED, C.LICENSED_DISPOSAL},
    C.PLANNED: {C.NEUTRALIZED, C.LICENSED_DISPOSAL},
    C.NEUTRALIZED: {C.DISPOSED, C.LICENSED_DISPOSAL},
    C.DISPOSED: set(),
    C.LICENSED_DISPOSAL: set(),
}


def test_moves():
    assert {s: set(s.next) for s in ContainerStatus} == MOVES
    assert waste.NEXT_STATUSES == {s.value: tuple(n.value for n in s.next)
                                   for s in ContainerStatus}
    assert [s for s in ContainerStatus if s.is_final] == [C.DISPOSED, C.LICENSED_DISPOSAL]


def test_words_are_for_people():
    for status in [*ContainerStatus, *BottleStatus]:
        assert "-" not in status.words and status.words.strip() == status.words
    assert C.LICENSED_DISPOSAL.words == "licensed disposal"
    assert BottleStatus.IN_USE.words == "in use"
    assert container_words("licensed-disposal") == "licensed disposal"
    assert bottle_words("in-use") == "in use"
    assert container_words("lost") == "lost"         # shown as it is, not hidden


def test_values_are_the_stored_text():
    assert CONTAINER_STATUSES == tuple(s.value for s in ContainerStatus)
    assert BOTTLE_STATUSES == tuple(s.value for s in BottleStatus)
    assert f"{C.LICENSED_DISPOSAL}" == "licensed-disposal" == C.LICENSED_DISPOSAL


@pytest.mark.parametrize("kind", [ContainerStatus, BottleStatus])
def test_parse_names_the_value_and_the_field(kind):
    with pytest.raises(InvalidInput) as info:
        kind.parse("poured", field="new_status")
    assert info.value.value == "poured" and info.value.field == "new_status"
    assert all(s.value in info.value.reason for s in kind)


def test_the_database_accepts_exactly_these_statuses(store):
    waste.new_container(store, "T-1")
    for status in ContainerStatus:
        store.write(lambda s, v=status: s.execute(
            "UPDATE waste_containers SET status = ? WHERE label = 'T-1'", [v]))
        assert waste.container(store, "T-1").status is status
    with pytest.raises(sqlite3.IntegrityError):
        store.write(lambda s: s.execute(
            "UPDATE waste_containers SET status = 'poured' WHERE label = 'T-1'"))
    bid = stock.add(store, {"compound": "HCl", "label_strength": "1 M",
                            "container_size": "1 L"}, who="t")
    for status in BottleStatus:
        stock.set_status(store, bid, status, who="t")
        assert stock.get(store, bid).status is status
    with pytest.raises(sqlite3.IntegrityError):
        store.write(lambda s: s.execute("UPDATE stock_bottles SET status = 'lost'"))


def _container_in(store, status: ContainerStatus) -> str:
    """A new container holding 1 L, put straight into ``status``."""
    label = f"C-{len(waste.containers(store)) + 1}"
    waste.new_container(store, label, capacity="10 L")
    waste.add(store, label, "HCl=1M", "1 L", who="t")
    store.write(lambda s: s.execute(
        "UPDATE waste_containers SET status = ? WHERE label = ?", [status, label]))
    return label


def _allowed(action, *args, **kwargs) -> bool:
    try:
        action(*args, **kwargs)
    except ContainerClosed:
        return False
    return True


@pytest.mark.parametrize("status", list(ContainerStatus))
def test_the_store_does_what_the_predicates_say(store, status):
    label = _container_in(store, status)
    assert _allowed(waste.add, store, label, "HCl=1M", "1 mL", who="t") == status.takes_additions
    label = _container_in(store, status)
    first = waste.additions(store, label)[0].id
    assert _allowed(waste.correct_addition, store, first, "typo", who="t") \
        == status.takes_additions
    for target in ContainerStatus:
        label = _container_in(store, status)
        assert _allowed(waste.set_status, store, label, target, who="t") \
            == status.can_move_to(target), (status, target)
    label = _container_in(store, status)
    assert _allowed(waste.record_neutralization, store, label, {}, None, who="t") \
        == status.can_record_neutralization == status.can_be_planned


def test_predicates_name_the_actions_of_the_front_ends():
    assert [s for s in ContainerStatus if s.can_be_planned] == [C.COLLECTING, C.PLANNED]
    assert [s for s in ContainerStatus if s.can_be_disposed] == [C.NEUTRALIZED]
    assert [s for s in ContainerStatus if s.can_go_to_licensed_disposal] == \
        [C.COLLECTING, C.PLANNED, C.NEUTRALIZED]
    assert [s for s in ContainerStatus if s.is_disposal] == [C.DISPOSED, C.LICENSED_DISPOSAL]
    assert [s for s in BottleStatus if s.is_usable] == [BottleStatus.IN_USE]


def test_a_closed_container_is_named_in_words(store):
    waste.new_container(store, "HF-9")
    waste.set_status(store, "HF-9", "licensed-disposal", who="t")
    with pytest.raises(ContainerClosed) as info:
        waste.add(store, "HF-9", "HCl=1M", "1 L")
    assert "held for licensed disposal" in str(info.value)
    assert "licensed-disposal" not in str(info.value)
    with pytest.raises(ContainerClosed) as info:
        waste.set_status(store, "HF-9", "disposed")
    assert "licensed-disposal" not in str(info.value)


def test_a_move_is_journaled_in_words(store):
    from carboy.store import journal

    waste.new_container(store, "HF-8")
    eid = waste.set_status(store, "HF-8", C.LICENSED_DISPOSAL, who="t")
    entry = journal.get(store, eid)
    assert entry.summary == "HF-8: collecting -> licensed disposal"
    assert entry.snapshot["status"] == "licensed-disposal"        # the data keeps the value
