"""What the neutralization form reads from the database: a container's contents, and the
stock bottles that can serve as reagent or sample.

Both front ends call these, so a container means the same plan in the app and on the
command line.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date

from carboy.model.forms.neutralize import ContainerSample, RecordedPlan, recorded_fields
from carboy.store import journal, stock, waste
from carboy.store.compounds import catalog_for
from carboy.store.db import Store
from carboy.store.statuses import ContainerStatus
from carboy.store.waste_rows import container_row

REAGENT_BASES = ("NaOH", "KOH", "Na2CO3", "NaHCO3", "Ca(OH)2", "Mg(OH)2")
"""Stock compounds offered to neutralize acid waste."""
REAGENT_ACIDS = ("HCl", "H2SO4", "C6H8O7", "CH3COOH")
"""Stock compounds offered to neutralize alkaline waste (strong, then gentle: citric, acetic)."""
SAMPLE_COMPOUNDS = ("HCl", "H2SO4", "HNO3", "H3PO4", "HF", "HCOOH", "CH3COOH", "C6H8O7",
                    "H2C2O4", "NaOH", "KOH", "NH3", "Na2CO3", "NaHCO3")
"""Stock solutions offered as a sample (an expired or surplus bottle to neutralize)."""
BOTTLES_PER_COMPOUND = 50
"""The lists are built from one short search per compound, never the whole stock."""


@dataclass(frozen=True)
class BottleChoice:
    """A stock bottle offered as reagent or sample, with the text it stands for."""

    bottle_id: int
    compound_key: str
    text: str
    title: str
    kind: str  # "base", "acid" or "sample"
    amount_left: float
    amount_unit: str


def bottle_text(bottle) -> str:
    """The reagent or component text a stock bottle stands for (``NaOH=1M``…): its
    measured strength if it has one, else its label's."""
    strength = (bottle.current_strength if bottle.current_strength is not None
                else bottle.label_strength)
    value = f"{strength:.6g}"
    if bottle.strength_unit == "M":
        return f"{bottle.compound_key}={value}M"
    if bottle.amount_unit == "g":
        return f"{bottle.compound_key}@{value}%"
    return f"{bottle.compound_key}={value}%"


def choices(store: Store, today: date | None = None) -> list[BottleChoice]:
    """Bottles in use that can serve as a base or acid reagent, or as a sample."""
    seen: set[tuple[int, str]] = set()
    found_all: list[BottleChoice] = []
    wanted = [(k, "base") for k in REAGENT_BASES] + [(k, "acid") for k in REAGENT_ACIDS]
    wanted += [(k, "sample") for k in SAMPLE_COMPOUNDS]
    for key, kind in wanted:
        found = stock.page(store, key, status="in-use", limit=BOTTLES_PER_COMPOUND, today=today)
        for b in found.bottles:
            if b.compound_key != key or (kind == "sample" and b.amount_unit != "L"):
                continue
            if (b.id, kind) in seen:
                continue
            seen.add((b.id, kind))
            flag = "" if b.strength_status == "current" else f" [{b.strength_status}]"
            title = (f"#{b.id} {b.compound_key} {b.strength_text}{flag} · "
                     f"{b.amount_left:g} {b.amount_unit}")
            found_all.append(BottleChoice(b.id, key, bottle_text(b), title, kind,
                                          b.amount_left, b.amount_unit))
    return found_all


def container_sample(store: Store, label: str) -> tuple[ContainerSample, object]:
    """A container's contents as the planner reads them, and the catalog its additions
    were logged against (built-in plus the storeroom's own compounds)."""
    with store.reading():
        shown = waste.show(store, label)
        hazards = waste.hazard_tags(store, label)
        recorded = recorded_plan(store, label)
    sample = ContainerSample(label=shown["label"], status=shown["status"],
                             volume_l=float(shown["volume_l"]),
                             capacity_l=float(shown["capacity_l"]), location=shown["location"],
                             moles=dict(shown["composition"]), hazards=hazards,
                             notes=shown.get("notes", ""), contents=dict(shown["contents"]),
                             stream=shown["stream"], material=shown["material"],
                             recorded=recorded)
    return sample, catalog_for(store)


PLANS_LOOKED_AT = 5
"""How many of a container's newest neutralization entries are searched for its plan."""


def recorded_plan(store: Store, label: str) -> RecordedPlan | None:
    """The inputs of the plan recorded for a ``planned`` container (its newest plan-only
    neutralization entry), so the form opens on that plan; None for any other status, or
    when the record holds no form inputs."""
    row = container_row(store, label)
    if row["status"] != ContainerStatus.PLANNED:
        return None
    for entry in journal.entries(store, kind="neutralization", container_id=row["id"],
                                 limit=PLANS_LOOKED_AT):
        if entry.snapshot.get("measured_ph") is None:
            fields = recorded_fields(entry.snapshot)
            return (RecordedPlan(entry.id, entry.recorded_at, entry.recorded_by, fields)
                    if fields else None)
    return None
