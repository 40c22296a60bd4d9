"""Reading a waste container's row and what still counts in it (shared by
:mod:`carboy.store.waste` and :mod:`carboy.store.waste_streams`).

An addition *counts* until a later correction supersedes it.
"""

from __future__ import annotations

import json

from carboy.model.text import read_label
from carboy.store.db import Store
from carboy.store.errors import NotFound
from carboy.store.statuses import ContainerStatus

MAX_LABEL_LENGTH = 64

SUPERSEDED = "EXISTS (SELECT 1 FROM waste_additions c WHERE c.supersedes_id = a.id)"
"""SQL: the addition ``a`` was replaced by a later correction (it no longer counts)."""
COUNTED = f"a.container_id = :cid AND NOT {SUPERSEDED}"
"""SQL: the addition ``a`` is to container ``:cid`` and still counts."""
LIVE = f"FROM waste_additions a WHERE {COUNTED}"


def check_label(label: str) -> str:
    """A container label as stored: normalized by :func:`carboy.model.text.read_label`
    (NFKC; invisible and bidirectional-control characters refused)."""
    return read_label(label, "container label", field="label", most=MAX_LABEL_LENGTH,
                      required=True)


def container_row(store: Store, label: str) -> dict:
    """The container's row, its status read (NotFound when there is none)."""
    row = store.one("SELECT * FROM waste_containers WHERE label = ?", [check_label(label)])
    if row is None:
        raise NotFound("waste container", label)
    row["status"] = ContainerStatus(row["status"])
    return row


def counted_volume(store: Store, container_id: int) -> float:
    """Litres that still count in a container."""
    return float(store.scalar(f"SELECT coalesce(sum(a.volume_l), 0) {LIVE}",
                              {"cid": container_id}))


def moles(store: Store, label: str) -> tuple[dict[str, float], float]:
    """(moles of each system / ion key, total volume in L) of a container."""
    with store.reading():
        row = container_row(store, label)
        found = store.rows(
            "SELECT j.key AS key, sum(j.value) AS mol FROM waste_additions a, "
            f"json_each(a.moles_json) j WHERE {COUNTED} GROUP BY j.key ORDER BY j.key",
            {"cid": row["id"]})
        litres = counted_volume(store, row["id"])
    return {r["key"]: float(r["mol"]) for r in found if r["mol"]}, litres


def counted_additions(store: Store, container_id: int) -> list[dict]:
    """The additions that still count: compound key, strength, volume, mass and the
    composition as logged (oldest first)."""
    rows = store.rows("SELECT a.compound_key, a.conc_molar, a.volume_l, a.mass_g, "
                      f"a.composition_json {LIVE} ORDER BY a.id", {"cid": container_id})
    for r in rows:
        r["composition"] = json.loads(r.pop("composition_json"))
    return rows
