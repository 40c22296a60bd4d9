"""An invented demo storeroom for ``carboy --demo``, the TUI tests and snapshots.

Everything here is fictional: the Fenwold Annex storeroom, its staff and its lot
codes.  The content is deterministic: every date and time is a fixed offset from
``today`` (default :data:`DEMO_TODAY`), so two demo databases made with the same
``today`` are identical row for row.

About 40 stock bottles (concentrated and diluted acids and bases, solids and
primary standards; a few expired, some overdue for standardization, one off-label),
four waste containers with their histories (a mixed mineral-acid rinse, an
organic-acid waste, an alkaline cleaning waste, and a fluoride waste held for
licensed disposal) and a few journal entries.  Disposal notes never call anything
safe to pour away: they point to local disposal rules and the safety office.

``carboy --demo`` works on a copy of the day's demo storeroom kept in the user cache
directory (:mod:`carboy.store.demo_cache`); this module loads the store's record modules
(and the model parts they need) only to build one.
"""

from __future__ import annotations

import os
from datetime import UTC, date, datetime, time, timedelta
from pathlib import Path

from carboy.store.db import Store, open_database
from carboy.store.errors import AlreadyExists
from carboy.store.statuses import BottleStatus, ContainerStatus

DEMO_TODAY = date(2025, 3, 14)
PLACE = "Fenwold Annex storeroom"
STAFF = ("h.ostervald", "m.ferreday", "t.wyncombe")
"""Invented staff user names: lead technician, technician, student assistant."""

_FOLLOW_RULES = ("Follow local disposal rules and the safety office's instructions "
                 "for the route this waste takes.")

# compound, label strength, size, left, location, lot, received (days ago), expires (days
# from today; negative = expired), restandardize days, measured (days ago, strength) or None
_BOTTLES: list[tuple] = [
    ("HCl", "37 %w/w", "2.5 L", "2.1 L", "Acid cabinet A / shelf 1", "FW-23-041", 410, 690,
     None, None),
    ("HCl", "37 %w/w", "2.5 L", "2.5 L", "Acid cabinet A / shelf 1", "FW-24-117", 120, 980,
     None, None),
    ("HCl", "37 %w/w", "1 L", "0.2 L", "Acid cabinet A / shelf 1", "FW-21-302", 1300, -40,
     None, None),
    ("H2SO4", "96 %w/w", "2.5 L", "1.8 L", "Acid cabinet A / shelf 2", "FW-23-088", 380, 720,
     None, None),
    ("H2SO4", "96 %w/w", "1 L", "1 L", "Acid cabinet A / shelf 2", "FW-24-203", 60, 1040,
     None, None),
    ("HNO3", "65 %w/w", "2.5 L", "1.2 L", "Oxidizer cabinet / shelf 1", "FW-23-150", 300, 430,
     None, None),
    ("HNO3", "65 %w/w", "1 L", "0.9 L", "Oxidizer cabinet / shelf 1", "FW-22-019", 900, -120,
     None, None),
    ("H3PO4", "85 %w/w", "1 L", "0.7 L", "Acid cabinet A / shelf 3", "FW-23-177", 260, 835,
     None, None),
    ("CH3COOH", "99.8 %w/w", "2.5 L", "2.2 L", "Flammables cabinet / shelf 2", "FW-24-009",
     90, 1000, None, None),
    ("CH3COOH", "99.8 %w/w", "1 L", "0.4 L", "Flammables cabinet / shelf 2", "FW-22-240", 700,
     30, None, None),
    ("HCOOH", "85 %w/w", "1 L", "0.8 L", "Acid cabinet B / shelf 1", "FW-24-066", 150, 580,
     None, None),
    ("HF", "40 %w/w", "0.5 L", "0.35 L", "HF cabinet (locked)", "FW-23-301", 330, 400,
     None, None),
    ("NH3", "25 %w/w", "2.5 L", "1.9 L", "Base cabinet / shelf 1", "FW-24-132", 110, 620,
     None, None),
    ("NH3", "25 %w/w", "1 L", "0.6 L", "Base cabinet / shelf 1", "FW-22-311", 820, -15,
     None, None),
    ("NaOH", "99 %w/w", "1 kg", "640 g", "Base cabinet / shelf 2", "FW-24-044", 200, 1260,
     None, None),
    ("NaOH", "99 %w/w", "500 g", "500 g", "Base cabinet / shelf 2", "FW-24-198", 40, 1420,
     None, None),
    ("KOH", "85 %w/w", "1 kg", "820 g", "Base cabinet / shelf 2", "FW-23-209", 340, 1100,
     None, None),
    ("Na2CO3", "99.5 %w/w", "1 kg", "700 g", "Salts shelf 1", "FW-23-055", 420, 1400,
     None, None),
    ("NaHCO3", "99.7 %w/w", "2.5 kg", "1.6 kg", "Spill station", "FW-24-071", 180, 900,
     None, None),
    ("KHC8H4O4", "99.95 %w/w", "250 g", "180 g", "Standards cupboard", "FW-23-400", 500, 1300,
     None, None),
    # dilute solutions, made up in house and re-standardized
    ("HCl", "1 M", "1 L", "0.8 L", "Bench reagents / rack 1", "FW-PREP-0211", 45, 320, 30,
     (12, "1.003 M")),
    ("HCl", "0.1 M", "1 L", "0.9 L", "Bench reagents / rack 1", "FW-PREP-0214", 30, 335, 30,
     (10, "0.1002 M")),
    ("HCl", "0.1 M", "1 L", "0.5 L", "Titration bench", "FW-PREP-0188", 95, 270, 30,
     (64, "0.0996 M")),
    ("HCl", "0.01 M", "1 L", "1 L", "Titration bench", "FW-PREP-0215", 20, 345, 30, None),
    ("H2SO4", "0.5 M", "1 L", "0.6 L", "Bench reagents / rack 1", "FW-PREP-0190", 90, 275, 60,
     (20, "0.499 M")),
    ("H2SO4", "0.05 M", "1 L", "0.95 L", "Titration bench", "FW-PREP-0209", 50, 315, 60,
     (75, "0.0501 M")),
    ("HNO3", "1 M", "1 L", "0.7 L", "Bench reagents / rack 2", "FW-PREP-0201", 70, 295, None,
     None),
    ("H3PO4", "0.1 M", "0.5 L", "0.45 L", "Bench reagents / rack 2", "FW-PREP-0203", 65, 300,
     None, None),
    ("CH3COOH", "1 M", "1 L", "0.85 L", "Bench reagents / rack 2", "FW-PREP-0205", 60, 305,
     None, None),
    ("C6H8O7", "0.1 M", "0.5 L", "0.5 L", "Bench reagents / rack 3", "FW-PREP-0212", 25, 160,
     None, None),
    ("H2C2O4", "0.05 M", "0.5 L", "0.3 L", "Standards cupboard", "FW-PREP-0170", 150, 215, 90,
     (40, "0.04998 M")),
    ("NaOH", "1 M", "1 L", "0.75 L", "Base rack", "FW-PREP-0207", 40, 140, 14, (9, "0.998 M")),
    ("NaOH", "0.1 M", "1 L", "0.8 L", "Titration bench", "FW-PREP-0213", 28, 152, 14,
     (5, "0.1001 M")),
    ("NaOH", "0.1 M", "1 L", "0.4 L", "Titration bench", "FW-PREP-0196", 80, 100, 14,
     (33, "0.0992 M")),
    ("NaOH", "0.1 M", "2 L", "1.1 L", "Base rack", "FW-PREP-0181", 120, 60, 14,
     (2, "0.0942 M")),  # off-label: carbonate uptake through a loose cap
    ("NaOH", "0.01 M", "1 L", "1 L", "Titration bench", "FW-PREP-0216", 15, 165, 14, None),
    ("KOH", "0.1 M", "1 L", "0.9 L", "Base rack", "FW-PREP-0206", 55, 125, 14,
     (21, "0.1003 M")),
    ("NH3", "1 M", "1 L", "0.6 L", "Base rack", "FW-PREP-0199", 75, 105, None, None),
    ("Na2CO3", "0.05 M", "1 L", "0.9 L", "Standards cupboard", "FW-PREP-0208", 52, 310, 60,
     (30, "0.05002 M")),
    ("NaHCO3", "1 M", "2 L", "1.5 L", "Spill station", "FW-PREP-0150", 400, -35, None, None),
]

_CONTAINERS = [
    ("MA-01", "acid", "Acid waste bay / left", "20 L",
     "Mixed mineral-acid rinse from the teaching labs. " + _FOLLOW_RULES,
     [("HCl=1M", "2 L", "rinse of titration glassware"),
      ("H2SO4=0.5M", "1.5 L", "leftover from a sulfate practical"),
      ("HNO3=0.2M", "3 L", "nitric rinse, no metals"),
      ("HCl=0.1M", "4 L", "spent titrant"),
      ("H3PO4=0.1M", "0.5 L", "")]),
    ("OA-02", "acid", "Acid waste bay / right", "10 L",
     "Organic-acid waste (acetic, formic, citric, oxalic). " + _FOLLOW_RULES,
     [("CH3COOH=1M", "3 L", "buffer practical"),
      ("HCOOH=0.5M", "1 L", ""),
      ("C6H8O7=0.1M", "2 L", "descaling practical"),
      ("H2C2O4=0.05M", "1 L", "spent standard")]),
    ("AL-03", "alkaline", "Base waste shelf", "20 L",
     "Alkaline cleaning waste from glassware baths. " + _FOLLOW_RULES,
     [("NaOH=0.5M", "4 L", "base bath, decanted"),
      ("Na2CO3=0.2M", "2 L", "carbonate rinse: will foam with acid"),
      ("KOH=0.1M", "1 L", ""),
      ("NH3=0.5M", "1 L", "ammonia rinse")]),
    ("HF-04", "hf", "HF cabinet (locked)", "5 L",
     "Contains fluoride (HF, NaF): licensed disposal only. Never neutralize it for the "
     "drain; the safety office arranges collection by the licensed contractor.",
     [("HF=0.5M", "1 L", "etching residue"),
      ("NaF=10 g", None, "solid residue"),
      ("HCl=0.1M", "0.5 L", "rinse of the etching vessel")]),
]
_ACCEPTED = {("HF-04", "HCl=0.1M"): "the rinse of the HF etching vessel carries fluoride: it "
                                    "belongs with the HF waste"}
"""Additions the rules question, with the reason the demo's staff gave."""


def _at(today: date, days_ago: float, hour: int = 10, minute: int = 0) -> datetime:
    moment = datetime.combine(today - timedelta(days=days_ago), time(hour, minute), tzinfo=UTC)
    return moment


def create_demo_database(path: str | os.PathLike, today: date = DEMO_TODAY) -> Path:
    """Create and fill a demo database at ``path`` (which must not exist); returns the path."""
    target = Path(path)
    if target.exists() and target.stat().st_size > 0:
        raise AlreadyExists("file", str(target))
    store = open_database(target)
    store.origin = "local"
    try:
        store.write(lambda s: seed(s, today))  # one transaction: one commit, one fsync
    finally:
        store.close()
    return target


def seed(store: Store, today: date = DEMO_TODAY) -> None:
    """Fill an empty database with the demo storeroom (each step its own transaction, or
    savepoints of the caller's: :func:`create_demo_database` runs it as one)."""
    # here, not at the top: a run that copies the day's template never needs them
    from carboy.store import journal, stock, waste

    lead, tech, student = STAFF
    for n, (key, strength, size, left, where, lot, received, expires, every, _measured) in \
            enumerate(_BOTTLES):
        fields = {
            "compound": key, "label_strength": strength, "container_size": size,
            "amount_left": left, "location": where, "lot": lot,
            "received_on": (today - timedelta(days=received)).isoformat(),
            "opened_on": (today - timedelta(days=max(received - 7, 0))).isoformat(),
            "expires_on": (today + timedelta(days=expires)).isoformat(),
            "restandardize_days": "" if every is None else str(every),
        }
        if "PREP" in lot:
            fields["notes"] = f"Made up in house ({PLACE})."
        stock.add(store, fields, who=lead if n % 3 else tech,
                  when=_at(today, received, 9, n % 60))
    bottles = {b.lot: b.id for b in stock.all_bottles(store, today=today)}
    for _key, strength, _s, _l, _w, lot, _r, _e, _every, measured in _BOTTLES:
        if measured is not None:
            days_ago, value = measured
            stock.record_standardization(
                store, bottles[lot], value, who=tech, when=_at(today, days_ago, 14),
                method="titration against a primary standard, three replicates",
                snapshot={"label_strength": strength, "replicates": 3})
    prep = stock.record_preparation(
        store, bottles["FW-24-117"], "8.4 mL", who=tech, when=_at(today, 30, 11),
        summary="1 L of 0.1 M HCl made up from 37 % stock (FW-PREP-0214)",
        snapshot={"target": "0.1 M", "final_volume_l": 1.0, "made": "FW-PREP-0214"})
    journal.correct(store, prep, "the volume drawn was 8.3 mL, not 8.4 mL as first noted "
                    "on the bench sheet", who=lead, when=_at(today, 29, 9),
                    snapshot={"used_ml": 8.3})
    stock.set_status(store, bottles["FW-21-302"], BottleStatus.DISPOSED, who=lead,
                     when=_at(today, 3, 16),
                     note="expired; sent with the acid waste collection. " + _FOLLOW_RULES)
    for i, (label, stream, where, capacity, notes, adds) in enumerate(_CONTAINERS):
        opened = today - timedelta(days=40 - 5 * i)
        waste.new_container(store, label, location=where, capacity=capacity, notes=notes,
                            stream=stream, material="plastic", who=lead, today=opened)
        for j, (component, volume, note) in enumerate(adds):
            waste.add(store, label, component, volume, note=note,
                      accept=_ACCEPTED.get((label, component), ""),
                      who=STAFF[(i + j) % 3], when=_at(today, 38 - 5 * i - 3 * j, 15, j))
    plan = {"inputs": {"container": "MA-01", "reagent": "NaOH=1M", "reagent_bottle_id": None,
                       "target_pH": "7", "window": ["6", "9"], "temperature": "20 °C",
                       "activity": "auto"},
            "plan": {"reagent": "NaOH 1 M", "note": "plan recorded; neutralization not yet done",
                     "cautions": ["corrosive", "heat on neutralization", _FOLLOW_RULES]},
            "recorded_from": "demo storeroom"}
    waste.record_neutralization(store, "MA-01", plan, None, who=lead,
                                when=_at(today, 1, 13), today=today - timedelta(days=1))
    waste.set_status(store, "HF-04", ContainerStatus.LICENSED_DISPOSAL, who=lead, when=_at(today, 2, 10),
                     today=today - timedelta(days=2),
                     note="held for the licensed contractor; never neutralized here")
    journal.append(store, "note", who=student, when=_at(today, 1, 8),
                   summary="Weekly check of eyewash and spill station done",
                   snapshot={"checked": ["eyewash", "spill kit", "NaHCO3 stock"]})
