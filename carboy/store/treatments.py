"""Recording a treatment as it happened, in one transaction.

:func:`record_treatment` takes the readings of the treatment form
(:mod:`carboy.model.forms.treatment`) and, all or nothing:

* refuses a container the storeroom's rules keep out of the lab (never-treat list, its
  stream, batch treatment forbidden): :class:`~carboy.store.errors.DisposalRefused`;
* draws the reagent bottle down (refused, naming what is left, when it holds less);
* logs the reagent into the container as an addition (and water up to the final volume
  measured, when that is more), so its volume and contents include them;
* moves its status on (``neutralized`` for the drain route, ``licensed-disposal``);
* appends a ``neutralization`` journal entry (event ``treatment``) holding the container
  as it stood, the plan as computed then, the readings, the reagent and bottle, the
  window in force and whether the final pH lies in it.

A final pH outside the window is recorded, with a warning, never refused; the container
then cannot be marked disposed (:mod:`carboy.store.treatment_records`) until a further
treatment or a correction brings it in.  :func:`plan_for` computes the plan the command
line records (the app records the plan on its screen).
"""

from __future__ import annotations

import json
from collections.abc import Mapping
from dataclasses import asdict, dataclass
from datetime import date, datetime
from typing import Any

from carboy.errors import InvalidInput
from carboy.model import numbers
from carboy.model.components import Component
from carboy.model.disposal_rules import ROUTE_LICENSED, verdict
from carboy.model.forms import neutralize as nform
from carboy.model.forms.treatment import TreatmentReadings
from carboy.model.mixture import Mixture
from carboy.model.reagents import Reagent, parse_reagent
from carboy.model.treatment_check import dose_contradiction
from carboy.store import disposal, journal, treatment_records, waste, waste_streams
from carboy.store.bottles import get as get_bottle
from carboy.store.compounds import catalog_for
from carboy.store.db import Store
from carboy.store.errors import ContainerClosed, DisposalRefused
from carboy.store.planning import bottle_text, container_sample
from carboy.store.statuses import ContainerStatus
from carboy.store.waste_rows import container_row, counted_volume

VOLUME_TOLERANCE = 0.02
"""A final volume within this fraction of waste plus reagent needs no water row."""


@dataclass(frozen=True)
class Treated:
    """What :func:`record_treatment` wrote."""

    entry_id: int
    label: str
    status: str
    in_window: bool
    window: tuple[float, float]
    volume_l: float
    """The container's counted volume afterwards, L."""
    addition_ids: tuple[int, ...]
    bottle_id: int | None
    bottle_left: float | None
    bottle_unit: str | None
    warnings: tuple[str, ...]

    def to_dict(self) -> dict:
        return asdict(self)


def plan_for(store: Store, label: str, reagent_text: str, *, target: str | None = None):
    """The neutralization form read and planned for a container with ``reagent_text``,
    under the storeroom's rules (the reading's ``disposal``)."""
    container, catalog = container_sample(store, label)
    profile = disposal.load(store)
    lo, hi = profile.window
    aim = target or ("7" if lo <= 7.0 <= hi else f"{(lo + hi) / 2:g}")
    fields = nform.NeutralizeFields(reagent=reagent_text, target=aim, window_low=f"{lo:g}",
                                    window_high=f"{hi:g}")
    return nform.evaluate(fields, catalog, container, profile=profile), fields


def reagent_of(store: Store, readings: TreatmentReadings, catalog):
    """(reagent, bottle or None) the readings name; the bottle must be in use and hold
    the amount in its own unit (its own strength counts when a reagent is named too)."""
    if readings.bottle_id is None:
        return parse_reagent(readings.reagent_text, catalog), None
    bottle = get_bottle(store, readings.bottle_id)
    if readings.reagent_text is not None:
        named = parse_reagent(readings.reagent_text, catalog)
        if named.key != bottle.compound_key:
            raise InvalidInput("reagent", readings.reagent_text, f"bottle {bottle.id} holds "
                               f"{bottle.compound_key}: give one or the other", field="reagent")
    if not bottle.status.is_usable:
        raise InvalidInput("bottle", bottle.id, f"is {bottle.status.words}, not in use",
                           field="bottle")
    if bottle.amount_unit != readings.added.unit:
        raise InvalidInput("amount added", readings.added.text or readings.added.value,
                           f"bottle {bottle.id} is kept in {bottle.amount_unit}: give the "
                           f"amount in {bottle.amount_unit}", field="added")
    return parse_reagent(bottle_text(bottle), catalog), bottle


def _component(reagent: Reagent, amount: float) -> tuple[Component, float]:
    """The reagent as a waste addition: (component, volume in L)."""
    text = f"{reagent.text} (treatment)"
    if reagent.is_solid:
        return Component(reagent.compound, None, amount * reagent.assay_percent / 100.0,
                         text), 0.0
    return Component(reagent.compound, reagent.conc_molar, None, text), amount


def _mol(component: Component, volume_l: float) -> float:
    """Mol of the reagent a treatment logged."""
    if component.mass_g is not None:
        return component.mass_g / component.compound.molar_mass_g_mol
    return component.conc_molar * volume_l


def _check_may_treat(s: Store, row: Mapping[str, Any], profile, catalog):
    """What the container holds (``waste_streams.Held``), where it may be treated here."""
    status = row["status"]
    last = treatment_records.last_treatment(s, row["id"])
    again = status is ContainerStatus.NEUTRALIZED and last is not None \
        and last.in_window is False
    if not (status.can_record_neutralization or again):
        raise ContainerClosed(row["label"], status, "record a treatment")
    held = waste_streams.held_in(s, row, catalog)
    reasons = verdict(profile, None, compounds=held.contents, volume_l=held.volume_l,
                      stream=row["stream"], collected=True, catalog=catalog)
    if reasons:
        raise DisposalRefused(row["label"], "the storeroom's rules send it to licensed "
                              "disposal: " + "; ".join(reasons), "record a treatment here")
    return held


def _draw(s: Store, bottle, readings: TreatmentReadings) -> tuple[float, float]:
    """Take the amount from the bottle: (left before, left after)."""
    left = float(s.scalar("SELECT amount_left FROM stock_bottles WHERE id = ?", [bottle.id]))
    amount = readings.added.value
    if amount > left * (1 + 1e-9):
        raise InvalidInput("amount added", readings.added.text or amount,
                           f"only {numbers.amount(left, bottle.amount_unit)} is left in bottle "
                           f"{bottle.id}: record what really came from it", field="added")
    after = numbers.settled(max(left - amount, 0.0))
    s.execute("UPDATE stock_bottles SET amount_left = ? WHERE id = ?", [after, bottle.id])
    return left, after


def _volumes(s: Store, row, readings: TreatmentReadings, component, vol_l, who, when,
             ) -> tuple[list[int], list[str]]:
    """Log the reagent (and water up to the final volume): the addition ids, warnings."""
    ids = [waste.insert_addition(s, row, component, vol_l, note="treatment reagent",
                                 supersedes=None, who=who, when=when)]
    warnings = []
    counted = counted_volume(s, row["id"])
    final = readings.final_volume_l
    if final is not None and final > counted * (1 + VOLUME_TOLERANCE):
        water = Component(waste.nothing("water"), 0.0, None,
                          "water (up to the final volume measured)")
        ids.append(waste.insert_addition(s, row, water, final - counted,
                                         note="treatment: dilution water", supersedes=None,
                                         who=who, when=when))
    elif final is not None and final < counted * (1 - VOLUME_TOLERANCE):
        warnings.append(f"the final volume measured ({numbers.volume(final)}) is less than "
                        f"the waste and reagent logged ({numbers.volume(counted)}); the "
                        "container keeps what was logged")
    return ids, warnings


def _summary(label: str, reagent: Reagent, readings: TreatmentReadings, bottle,
             in_window: bool, target: ContainerStatus) -> str:
    source = f" from bottle {bottle.id}" if bottle is not None else ""
    mark = "in the window" if in_window else "OUTSIDE the window"
    return (f"{label}: treated with {numbers.amount(readings.added.value, readings.added.unit)}"
            f" {reagent.text}{source}; final pH {readings.final_ph:g} ({mark}); "
            f"{target.words}")


def record_treatment(store: Store, label: str, readings: TreatmentReadings, *,
                     plan_snapshot: Mapping[str, Any] | None = None, who: str | None = None,
                     when: datetime | None = None, today: date | None = None) -> Treated:
    """Record a treatment (see the module docstring); nothing is written when it raises.

    Raises
    ------
    DisposalRefused : the rules keep this container out of the lab.
    ContainerClosed : it is not waiting for treatment.
    InvalidInput : the bottle holds less, is not in use, or is kept in another unit.
    NotFound : no such container or bottle.
    """
    catalog = catalog_for(store)
    plan_json = journal.snapshot_json(plan_snapshot) if plan_snapshot else None

    def work(s: Store) -> Treated:
        row = container_row(s, label)
        profile = disposal.load(s)
        held = _check_may_treat(s, row, profile, catalog)
        reagent, bottle = reagent_of(s, readings, catalog)
        before = waste.snapshot_of(s, row)
        left = _draw(s, bottle, readings) if bottle is not None else None
        component, vol = _component(reagent, readings.added.value)
        ids, warnings = _volumes(s, row, readings, component, vol, who, when)
        doubt = dose_contradiction(
            Mixture.from_moles(dict(held.moles), held.volume_l), reagent,
            _mol(component, vol), readings.final_ph, catalog) \
            if held.volume_l > 0 and held.moles else None
        if doubt:   # kept with the record: a misread pH must not pass for "in the window"
            warnings.insert(0, doubt)
        lo, hi = profile.window
        in_window = lo <= readings.final_ph <= hi
        if not in_window:
            warnings.insert(0, f"final pH {readings.final_ph:g} is outside the storeroom's "
                            f"window pH {lo:g}–{hi:g}: recorded; {row['label']} cannot be "
                            "marked disposed until a further treatment or a correction "
                            "brings it in")
        target = ContainerStatus.LICENSED_DISPOSAL if readings.route == ROUTE_LICENSED \
            else ContainerStatus.NEUTRALIZED
        waste.move(s, row, target, today)
        snap = {"event": treatment_records.EVENT, "container": before,
                "plan": journal_plan(plan_json), "readings": readings.to_dict(),
                "reagent": {"text": reagent.text, "compound": reagent.key,
                            "understood": reagent.describe(), "addition_id": ids[0],
                            "bottle_id": bottle.id if bottle is not None else None,
                            "left_before": left[0] if left else None,
                            "left_after": left[1] if left else None},
                "window": [lo, hi], "in_window": in_window, "route": readings.route,
                "previous_status": row["status"], "status": target, "warnings": warnings,
                "rules_origin": {"window": profile.origin.get("window_low", "placeholder")}}
        entry = journal.append_in(
            s, "neutralization", container_id=row["id"],
            bottle_id=bottle.id if bottle is not None else None, who=who, when=when,
            summary=_summary(row["label"], reagent, readings, bottle, in_window, target),
            snapshot=snap)
        return Treated(entry, row["label"], target.value, in_window, (lo, hi),
                       counted_volume(s, row["id"]), tuple(ids),
                       bottle.id if bottle is not None else None,
                       left[1] if left else None, bottle.amount_unit if bottle else None,
                       tuple(warnings))

    return store.write(work)


def journal_plan(plan_json: str | None) -> Any:
    """The plan snapshot as stored (None when the treatment was recorded without one)."""
    return json.loads(plan_json) if plan_json else None
