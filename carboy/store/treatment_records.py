"""Reading recorded treatments back: the readings as corrected, and what they allow.

A treatment is a ``neutralization`` journal entry whose snapshot's event is
``treatment`` (:mod:`carboy.store.treatments` writes it); an older entry that recorded
only a measured pH counts as one with that final pH.  A reading is never edited: a
``correction`` entry pointing at the treatment (or at the correction before it) carries
the new values under ``readings``, and :func:`readings_of` lays them over the original
in order.  :func:`disposal_block` says why a container may not be marked disposed (its
last treatment ended outside the acceptance window); :func:`carboy.store.waste.set_status`
asks it.
"""

from __future__ import annotations

from dataclasses import dataclass

from carboy.store import journal
from carboy.store.db import Store

EVENT = "treatment"


@dataclass(frozen=True)
class Recorded:
    """A treatment as it stands now: its entry, its readings as corrected, its window."""

    entry: journal.Entry
    readings: dict
    window: tuple[float, float] | None
    corrections: tuple[int, ...]
    """Ids of the corrections applied, oldest first."""

    @property
    def final_ph(self) -> float | None:
        value = self.readings.get("final_ph")
        return float(value) if isinstance(value, (int, float)) else None

    @property
    def in_window(self) -> bool | None:
        """None when there is no final pH or no window to judge it by."""
        if self.final_ph is None or self.window is None:
            return None
        lo, hi = self.window
        return lo <= self.final_ph <= hi


def is_treatment(entry: journal.Entry) -> bool:
    """A neutralization entry that records a treatment (or at least a measured pH)."""
    if entry.kind != "neutralization":
        return False
    snap = entry.snapshot
    return snap.get("event") == EVENT or isinstance(snap.get("measured_ph"), (int, float))


def _base(entry: journal.Entry) -> tuple[dict, tuple[float, float] | None]:
    snap = entry.snapshot
    if snap.get("event") == EVENT:
        lo, hi = snap.get("window") or (None, None)
        window = (float(lo), float(hi)) if lo is not None and hi is not None else None
        return dict(snap.get("readings") or {}), window
    window = None
    plan = snap.get("plan") if isinstance(snap.get("plan"), dict) else {}
    inner = plan.get("plan") if isinstance(plan.get("plan"), dict) else {}
    found = inner.get("window") if isinstance(inner.get("window"), dict) else None
    if found and isinstance(found.get("low_pH"), (int, float)):
        window = (float(found["low_pH"]), float(found["high_pH"]))
    return {"final_ph": snap.get("measured_ph")}, window


def readings_of(store: Store, entry: journal.Entry) -> Recorded:
    """The treatment ``entry`` with every correction of it laid over its readings."""
    readings, window = _base(entry)
    applied: list[int] = []
    current = entry.id
    while True:
        later = journal.corrections_of(store, current)
        if not later:
            break
        fix = later[0]
        readings.update(fix.snapshot.get("readings") or {})
        applied.append(fix.id)
        current = fix.id
    return Recorded(entry, readings, window, tuple(applied))


def last_treatment(store: Store, container_id: int) -> Recorded | None:
    """The container's latest treatment (with its corrections), or None."""
    for entry in journal.entries(store, kind="neutralization", container_id=container_id,
                                 limit=20):
        if is_treatment(entry):
            return readings_of(store, entry)
    return None


def disposal_block(store: Store, container_id: int,
                   window: tuple[float, float] | None = None) -> str | None:
    """Why the container may not be marked disposed, or None.  ``window`` judges an older
    entry that kept none (the storeroom's window in force)."""
    last = last_treatment(store, container_id)
    if last is None:
        return None
    judged = last if last.window is not None else Recorded(last.entry, last.readings, window,
                                                           last.corrections)
    if judged.in_window is False:
        lo, hi = judged.window
        return (f"its last treatment (journal entry {last.entry.id}) ended at pH "
                f"{judged.final_ph:g}, outside the window pH {lo:g}–{hi:g}: treat it further "
                "(carboy waste treat) or correct the reading if it was misread; it may still "
                "go to licensed disposal")
    return None
