"""Waste containers and what went into them.

A container has a label (unique, case-insensitive), location, capacity in litres,
a status, opened / closed dates, a *stream* (what it is meant for: acid, alkaline,
cyanide/sulfide …, the vocabulary of :mod:`carboy.model.compatibility`) and, when
recorded, its material.  The stream is set at creation and changes only by
:func:`set_stream`, which journals the change.  The statuses, the moves allowed between them and
what each permits are :class:`~carboy.store.statuses.ContainerStatus`.

Only a ``collecting`` container takes additions.  An addition records the compound
(key, and its catalog composition as it was then), its concentration in mol/L and
volume in L, or a mass in g for a solid, the text as entered, who, when, where
from and a note.  The moles of each system and ion key are computed once, at
entry: ``count x conc x volume`` or ``count x mass / molar mass``; a later catalog
change therefore never rewrites a container's history.  Additions are append-only
(database triggers); a mistaken one is superseded by :func:`correct_addition`.

Before an addition is written, the compatibility rules judge it against the container
(:mod:`carboy.store.waste_streams`): a dangerous one is refused and nothing is written;
a lesser mismatch needs a person's reason, which the journal keeps.  A correction
records what really went in and is not judged; :func:`show` then warns about it.

:func:`composition` gives the planner its input: a :class:`~carboy.model.mixture.Mixture`
of the container's totals (moles / total volume).
"""

from __future__ import annotations

import json
import math
from collections.abc import Mapping
from dataclasses import asdict, dataclass
from datetime import date, datetime
from typing import Any

from carboy.errors import InvalidInput
from carboy.model.components import Component, read_component
from carboy.model.entities import Compound
from carboy.model.mixture import Mixture
from carboy.model.text import read_label
from carboy.store import chain, disposal, journal, treatment_records, waste_streams
from carboy.store.compounds import catalog_for
from carboy.store.db import Store, current_user, stamp
from carboy.store.errors import (
    AlreadyExists,
    ContainerClosed,
    DisposalRefused,
    HeadspaceRefused,
    NotFound,
)
from carboy.store.readers import check_length, fielded, parse_litres
from carboy.store.statuses import CONTAINER_STATUSES, ContainerStatus
from carboy.store.waste_rows import (  # noqa: F401 (check_label, moles: public here too)
    LIVE,
    SUPERSEDED,
    check_label,
    container_row,
    counted_volume,
    moles,
)

STATUSES = CONTAINER_STATUSES
"""The stored values (:class:`~carboy.store.statuses.ContainerStatus` is their home)."""
NEXT_STATUSES: dict[str, tuple[str, ...]] = {
    s.value: tuple(n.value for n in s.next) for s in ContainerStatus}
"""Status -> the statuses it may move on to (from :attr:`ContainerStatus.next`)."""
DEFAULT_CAPACITY_L = 20.0
"""Capacity of a new container when none is given (a common carboy)."""
MAX_CAPACITY_L = 1000.0
"""Largest container accepted (an intermediate bulk container)."""
MAX_ADDITION_L = 1000.0


@dataclass(frozen=True)
class Container:
    """A waste container with its current total volume."""

    id: int
    label: str
    location: str
    capacity_l: float
    status: ContainerStatus
    opened_on: str
    closed_on: str | None
    notes: str
    created_by: str
    volume_l: float
    n_additions: int
    stream: str = "mixed"
    """The stream key (``acid``, ``cyanide_sulfide`` …)."""
    material: str | None = None
    stream_note: str = ""
    """How the stream came to be when no person chose it (an upgrade's inference), or
    the reason of the last change."""
    fill_percent: float = 0.0
    """Volume against capacity, %."""
    nearly_full: bool = False
    """Collecting and at or past the rules' nearly-full level (default 80 %)."""
    full: bool = False
    """Collecting and at the rules' fill limit (default 90 %): it takes no more."""

    def as_dict(self) -> dict:
        return asdict(self)


@dataclass(frozen=True)
class Addition:
    """One addition as stored; ``superseded`` when a later correction replaced it."""

    id: int
    compound_key: str
    conc_molar: float | None
    volume_l: float
    mass_g: float | None
    entered: str
    composition: dict
    moles: dict
    supersedes_id: int | None
    superseded: bool
    added_at: str
    added_by: str
    origin: str
    note: str

    def as_dict(self) -> dict:
        return asdict(self)


# -- parsing ---------------------------------------------------------------------------

def parse_capacity(value: str | float | None) -> float:
    """A new container's capacity in L (text such as ``'20 L'``, or litres); default 20 L."""
    if value is None:
        return DEFAULT_CAPACITY_L
    return parse_litres(value, what="capacity", field="capacity", positive=True,
                        most_l=MAX_CAPACITY_L, too_much="larger than any container carboy accepts")


parse_component = read_component
"""``'HCl=1M'``, ``'H2SO4=10 %w/w'``, ``'NaF=2 g'`` (see :mod:`carboy.model.components`)."""


def parse_volume(value: str | float | None, *, required: bool) -> float:
    """An addition's volume in L; ``required`` for a solution (a solid's may be left out)."""
    if value is None or (isinstance(value, str) and not value.strip()):
        if required:
            raise InvalidInput("volume", value or "", "is required for a solution, e.g. "
                               "'250 mL'", field="volume")
        return 0.0
    return parse_litres(value, what="volume", field="volume", positive=required,
                        most_l=MAX_ADDITION_L, too_much="more than any container holds")


def read_addition(component: str, volume: str | float | None, catalog=None,
                  ) -> tuple[Component, float]:
    """The component (``'HCl=1M'``, ``'NaF=2 g'``) and its volume in L, as :func:`add` reads
    them; a solid given by mass needs no volume."""
    with fielded("component"):
        parsed = parse_component(component, catalog)
    return parsed, parse_volume(volume, required=parsed.mass_g is None)


def moles_of(component: Component, volume_l: float) -> dict[str, float]:
    """Moles of each system / ion key that ``component`` brings in ``volume_l`` litres."""
    if component.mass_g is not None:
        formula_units = component.mass_g / component.compound.molar_mass_g_mol
    else:
        formula_units = component.conc_molar * volume_l
    return {key: count * formula_units for key, count in component.compound.composition.items()}


# -- writes ------------------------------------------------------------------------------

def _today(today: date | None) -> str:
    return (today or date.today()).isoformat()


def new_container(store: Store, label: str, *, location: str = "",
                  capacity: str | float | None = None, notes: str = "",
                  stream: str = "mixed", material: str | None = None,
                  who: str | None = None, today: date | None = None) -> Container:
    """Open a new, empty ``collecting`` container meant for ``stream`` (default ``mixed``:
    licensed disposal, the most cautious); ``material`` is glass, plastic or metal."""
    text = check_label(label)
    cap = parse_capacity(capacity)
    kind = waste_streams.check_stream(stream)
    made_of = waste_streams.check_material(material)
    location = read_label(location, "location", field="location", most=2000)
    check_length("notes", notes or "", field="notes")

    def work(s: Store) -> None:
        if s.scalar("SELECT 1 FROM waste_containers WHERE label = ?", [text]):
            raise AlreadyExists("waste container", text)
        s.execute("INSERT INTO waste_containers (label, location, capacity_l, status, opened_on, "
                  "notes, created_by, stream, material) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)",
                  [text, location, cap, ContainerStatus.COLLECTING,
                   _today(today), notes or "", who or current_user(), kind, made_of])

    store.write(work)
    return container(store, text)


def _check_room(store: Store, row: Mapping[str, Any], change_l: float) -> None:
    """Refuse a change of ``change_l`` litres that would fill the container past the fill
    limit of the storeroom's rules (the headspace kept free; 90 % unless set)."""
    now = counted_volume(store, row["id"])
    would_be = now + change_l
    limit = disposal.load(store).fill_limit_percent
    if change_l > 0 and would_be > row["capacity_l"] * limit / 100.0 * (1 + 1e-9):
        raise HeadspaceRefused(row["label"], row["capacity_l"], would_be, limit, now)


def insert_addition(s: Store, row: dict, component: Component, volume_l: float, *,
                     note: str, supersedes: int | None, who: str | None, when: datetime | None,
                     ) -> int:
    """Write one addition row and its chain link (inside ``Store.write``; no rule is
    judged here: :func:`add` and the treatment record judge before they call it)."""
    moles = moles_of(component, volume_l)
    cur = s.execute(
        "INSERT INTO waste_additions (container_id, compound_key, conc_molar, volume_l, mass_g, "
        "entered, composition_json, moles_json, supersedes_id, added_at, added_by, origin, note) "
        "VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)",
        [row["id"], component.compound.key, component.conc_molar, volume_l, component.mass_g,
         component.text, json.dumps(dict(component.compound.composition), sort_keys=True),
         json.dumps(moles, sort_keys=True, allow_nan=False), supersedes,
         stamp(when), who or current_user(), s.origin_of(), note or ""])
    addition_id = int(cur.lastrowid)
    chain.link(s, "waste_additions", addition_id)
    return addition_id


def add(store: Store, label: str, component: str, volume: str | float | None = None, *,
        note: str = "", accept: str = "", who: str | None = None,
        when: datetime | None = None) -> int:
    """Log an addition to a collecting container; returns the addition id.

    ``component`` is ``COMPOUND=CONC`` (``'HCl=1M'``) or ``COMPOUND=MASS`` for a solid
    (``'NaF=2 g'``; then ``volume`` may be omitted).  ``volume`` is text (``'250 mL'``)
    or litres.  ``accept`` is a person's reason to log it despite ``confirm`` findings
    (a base into an acid-waste container …); the journal keeps it with the findings.

    Raises
    ------
    UnknownCompound, InvalidInput : the component or volume is unusable.
    NotFound : no such container.
    ContainerClosed : the container is no longer collecting.
    HeadspaceRefused : the addition would fill it past the fill limit (an
        :class:`~carboy.store.errors.OverCapacity`; the message names the free volume).
    Refused : the rules refuse it (a gas hazard, an explosive or violent reaction, an
        acid into a cyanide container …); no ``accept`` overrides that.
    NeedsConfirmation : the rules ask for a reason and ``accept`` gave none.
    Nothing is written when any of these is raised.
    """
    catalog = catalog_for(store)
    parsed, vol = read_addition(component, volume, catalog)
    check_length("note", note, field="note")
    check_length("reason", accept, field="accept")

    def work(s: Store) -> int:
        row = container_row(s, label)
        if not row["status"].takes_additions:
            raise ContainerClosed(row["label"], row["status"])
        _check_room(s, row, vol)
        asked = waste_streams.enforce(
            waste_streams.judge_component(s, row, parsed, vol, catalog),
            f"adding {parsed.compound.key} to {row['label']}", accept)
        addition_id = insert_addition(s, row, parsed, vol, note=note, supersedes=None,
                                       who=who, when=when)
        if asked:
            journal.append_in(
                s, "note", container_id=row["id"], who=who, when=when,
                summary=f"{row['label']}: addition {addition_id} ({parsed.text}) logged "
                        f"despite: {asked[0].hazard}; reason: {accept.strip()}",
                snapshot=waste_streams.accepted_snapshot(addition_id, parsed.text, accept,
                                                         asked))
        return addition_id

    return store.write(work)


def screen(store: Store, label: str, component: str, volume: str | float | None = None,
           ) -> tuple:
    """What the rules would say of this addition, without writing anything (a form's
    preview); :func:`add` judges again when it writes."""
    catalog = catalog_for(store)
    parsed, vol = read_addition(component, volume, catalog)
    with store.reading():
        return waste_streams.judge_component(store, container_row(store, label), parsed, vol,
                                             catalog)


set_stream = waste_streams.set_stream
contents = waste_streams.contents


def correct_addition(store: Store, addition_id: int, reason: str, *,
                     component: str | None = None, volume: str | float | None = None,
                     who: str | None = None, when: datetime | None = None) -> int:
    """Supersede a mistaken addition; the original stays on record. Returns the new id.

    With ``component`` (and ``volume``) the new row says what really went in; without,
    the addition is withdrawn (the new row carries nothing).  The container must still
    be collecting.  What really went in is judged by the rules an addition meets
    (:func:`add`): a refusal (a gas hazard …) stands, and ``reason`` answers the rules'
    questions.  A ``note`` journal entry records the correction.
    """
    if not reason or not reason.strip():
        raise InvalidInput("correction reason", reason, "say what was wrong", field="reason")
    catalog = catalog_for(store)

    def work(s: Store) -> int:
        old = s.one("SELECT a.*, c.label FROM waste_additions a JOIN waste_containers c "
                    "ON c.id = a.container_id WHERE a.id = ?", [int(addition_id)])
        if old is None:
            raise NotFound("waste addition", addition_id)
        if s.scalar("SELECT 1 FROM waste_additions WHERE supersedes_id = ?", [old["id"]]):
            raise InvalidInput("waste addition", addition_id, "was already corrected; correct "
                               "the newer row instead")
        row = container_row(s, old["label"])
        if not row["status"].takes_additions:
            raise ContainerClosed(row["label"], row["status"], "correct its additions")
        if component is None:
            parsed = Component(nothing(old["compound_key"]), 0.0, None,
                               f"(withdrawn: {old['entered']})")
            vol = 0.0
        else:
            parsed, vol = read_addition(component, volume, catalog)
        _check_room(s, row, vol - old["volume_l"])
        # what really went in meets the rules an addition meets (a refusal stands; the
        # correction's reason answers a question, and the entry keeps the findings)
        asked = () if component is None else waste_streams.enforce(
            waste_streams.judge_component(s, row, parsed, vol, catalog),
            f"correcting addition {old['id']} of {row['label']} to {parsed.compound.key}",
            reason)
        new_id = insert_addition(s, row, parsed, vol, note=reason.strip(),
                                  supersedes=old["id"], who=who, when=when)
        snapshot = {"reason": reason.strip(), "superseded": old["id"], "replacement": new_id,
                    "was": old["entered"], "now": parsed.text}
        if asked:
            snapshot["findings"] = [f.to_dict() for f in asked]
        journal.append_in(s, "note", container_id=row["id"], who=who, when=when,
                          summary=f"{row['label']}: addition {old['id']} corrected by {new_id}",
                          snapshot=snapshot)
        return new_id

    return store.write(work)


def nothing(key: str) -> Compound:
    """A stand-in that brings nothing: the row that withdraws a mistaken addition, or the
    water a treatment adds up to its final volume."""
    return Compound(key=key, formula="", name=key, aliases=(), composition={},
                    molar_mass_g_mol=1.0)


def move(s: Store, row: Mapping[str, Any], target: ContainerStatus, today: date | None) -> None:
    """Set the status; the first move away from collecting dates the closing."""
    s.execute("UPDATE waste_containers SET status = ?, closed_on = ? WHERE id = ?",
              [target, row["closed_on"] or _today(today), row["id"]])


def set_status(store: Store, label: str, status: str, *, note: str = "",
               who: str | None = None, when: datetime | None = None,
               today: date | None = None) -> int:
    """Move a container on (see :attr:`ContainerStatus.next`); journaled. Returns the entry id.

    Marking it disposed is refused (:class:`~carboy.store.errors.DisposalRefused`) while
    its last treatment ended outside the acceptance window
    (:func:`carboy.store.treatment_records.disposal_block`).
    """
    target = ContainerStatus.parse(status)
    check_length("note", note or "", field="note")

    def work(s: Store) -> int:
        row = container_row(s, label)
        was = row["status"]
        if not was.can_move_to(target):
            raise ContainerClosed(row["label"], was, f"move it to {target.words}")
        if target is ContainerStatus.DISPOSED:
            block = treatment_records.disposal_block(s, row["id"], disposal.load(s).window)
            if block:
                raise DisposalRefused(row["label"], block)
        move(s, row, target, today)
        return journal.append_in(
            s, "disposal" if target.is_disposal else "note", container_id=row["id"], who=who,
            when=when,
            summary=f"{row['label']}: {was.words} -> {target.words}"
                    + (f" ({note})" if note else ""),
            snapshot={"previous_status": was, "status": target, "note": note,
                      **snapshot_of(s, row)})

    return store.write(work)


def _measured_ph(value: object) -> float | None:
    if value is None:
        return None
    try:
        ph = float(value)
    except (TypeError, ValueError):
        raise InvalidInput("measured pH", value, "must be a number", field="measured_ph") from None
    if not math.isfinite(ph) or not -2.0 <= ph <= 16.0:
        raise InvalidInput("measured pH", value, "expected a pH between -2 and 16",
                           field="measured_ph")
    return ph


def record_neutralization(store: Store, label: str, plan_snapshot: Mapping[str, Any],
                          measured_ph: float | None = None, *, who: str | None = None,
                          when: datetime | None = None, today: date | None = None) -> int:
    """Journal a neutralization of a container and move its status on, atomically.

    Without ``measured_ph`` the plan is recorded and the container becomes ``planned``;
    with it the container becomes ``neutralized``.  The entry's snapshot holds the
    container's composition as it stood, the plan as given and the measured pH.
    Returns the journal entry id.
    """
    measured_ph = _measured_ph(measured_ph)
    plan_json = journal.snapshot_json(plan_snapshot)
    target = ContainerStatus.PLANNED if measured_ph is None else ContainerStatus.NEUTRALIZED

    def work(s: Store) -> int:
        row = container_row(s, label)
        if not row["status"].can_record_neutralization:
            raise ContainerClosed(row["label"], row["status"], "record a neutralization")
        move(s, row, target, today)
        summary = (f"{row['label']}: neutralization "
                   + ("planned" if measured_ph is None else f"done, measured pH {measured_ph:g}"))
        return journal.append_in(
            s, "neutralization", container_id=row["id"], who=who, when=when, summary=summary,
            snapshot={"container": snapshot_of(s, row), "plan": json.loads(plan_json),
                      "measured_ph": measured_ph, "previous_status": row["status"],
                      "status": target})

    return store.write(work)


# -- reads -------------------------------------------------------------------------------

def _container(store: Store, row: Mapping[str, Any], profile=None) -> Container:
    agg = store.one(f"SELECT count(*) AS n, coalesce(sum(a.volume_l), 0) AS v {LIVE}",
                    {"cid": row["id"]})
    profile = profile or disposal.load(store)
    volume = float(agg["v"])
    fill = volume / row["capacity_l"] * 100.0 if row["capacity_l"] else 0.0
    collecting = ContainerStatus(row["status"]).takes_additions
    return Container(id=row["id"], label=row["label"], location=row["location"],
                     capacity_l=row["capacity_l"], status=row["status"],
                     opened_on=row["opened_on"], closed_on=row["closed_on"], notes=row["notes"],
                     created_by=row["created_by"], volume_l=volume,
                     n_additions=int(agg["n"]), stream=row["stream"],
                     material=row["material"], stream_note=row["stream_note"],
                     fill_percent=fill,
                     nearly_full=collecting and fill >= profile.nearly_full_percent - 1e-9,
                     full=collecting and fill >= profile.fill_limit_percent - 1e-9)


def container(store: Store, label: str) -> Container:
    with store.reading():
        return _container(store, container_row(store, label))


def containers(store: Store, *, status: str | None = None,
               nearly_full: bool = False) -> list[Container]:
    """Every container (optionally of one status, or only the nearly full ones), by label."""
    wanted = None if status is None else ContainerStatus.parse(status)
    with store.reading():
        profile = disposal.load(store)
        rows = store.rows("SELECT * FROM waste_containers" +
                          (" WHERE status = ?" if wanted else "") + " ORDER BY label",
                          [wanted] if wanted else [])
        found = [_container(store, {**r, "status": ContainerStatus(r["status"])}, profile)
                 for r in rows]
    return [c for c in found if c.nearly_full] if nearly_full else found


def composition(store: Store, label: str, *, temperature_c: float = 25.0) -> Mixture:
    """The container's contents as the planner's input (totals in mol/L, volume in L).

    Raises InvalidInput when the container holds no recorded volume yet.
    """
    amounts, volume = moles(store, label)
    if volume <= 0:
        raise InvalidInput("waste container", label, "has no recorded volume yet: log an "
                           "addition with its volume first")
    return Mixture.from_moles(amounts, volume, temperature_c=temperature_c)


def _addition(row: Mapping[str, Any]) -> Addition:
    return Addition(id=row["id"], compound_key=row["compound_key"], conc_molar=row["conc_molar"],
                    volume_l=row["volume_l"], mass_g=row["mass_g"], entered=row["entered"],
                    composition=json.loads(row["composition_json"]),
                    moles=json.loads(row["moles_json"]), supersedes_id=row["supersedes_id"],
                    superseded=bool(row["superseded"]), added_at=row["added_at"],
                    added_by=row["added_by"], origin=row["origin"], note=row["note"])


def additions(store: Store, label: str) -> list[Addition]:
    """Every addition to a container, oldest first, superseded ones flagged."""
    with store.reading():
        row = container_row(store, label)
        rows = store.rows(
            f"SELECT a.*, {SUPERSEDED} AS superseded FROM waste_additions a "
            "WHERE a.container_id = ? ORDER BY a.id",
            [row["id"]])
    return [_addition(r) for r in rows]


def hazard_tags(store: Store, label: str) -> frozenset[str]:
    """The catalog hazard tags of everything still counted in a container (a planner input:
    fluoride, heavy metals and the like make a plan say it is not for the drain)."""
    catalog = catalog_for(store)
    tags: set[str] = set()
    for add in additions(store, label):
        if not add.superseded and add.compound_key in catalog:
            tags |= catalog.compound(add.compound_key).hazards
    return frozenset(tags)


def snapshot_of(store: Store, row: Mapping[str, Any]) -> dict:
    """What the journal keeps of a container as it stood: volume, capacity, stream, the
    moles of each system and ion, and the mol of each compound logged (``contents``)."""
    amounts, volume = moles(store, row["label"])
    held = waste_streams.held_in(store, row, catalog_for(store))
    return {"label": row["label"], "volume_l": volume, "capacity_l": row["capacity_l"],
            "stream": row.get("stream"), "moles": amounts, "contents": dict(held.contents)}


def show(store: Store, label: str) -> dict:
    """Everything about one container as plain data (the ``waste show`` JSON).

    ``warnings`` are the compatibility rules' findings on what it already holds (its
    stream against its contents, the contents against each other): nothing is changed;
    one a person answered with a reason when logging carries it (``accepted``).
    """
    catalog = catalog_for(store)
    with store.reading():
        row = container_row(store, label)
        info = _container(store, row)
        amounts, volume = moles(store, label)
        adds = additions(store, label)
        h = waste_streams.held_in(store, row, catalog)
        accepted = waste_streams.accepted_reasons(
            journal.entries(store, container_id=row["id"], limit=None))
    rules_view = waste_streams.view(info.stream, info.material, h, catalog)
    return {"label": info.label, "status": info.status, "volume_l": volume,
            "capacity_l": info.capacity_l, "fill_percent": info.fill_percent,
            "nearly_full": info.nearly_full, "full": info.full, "location": info.location,
            "opened_on": info.opened_on, "closed_on": info.closed_on, "notes": info.notes,
            "stream": info.stream, "stream_name": waste_streams.stream_name(info.stream),
            "stream_note": info.stream_note, "material": info.material,
            "estimated_pH": rules_view.estimated_pH,
            "contents": dict(h.contents),
            "warnings": list(waste_streams.warnings(rules_view, h, catalog, accepted)),
            "composition": amounts, "additions": [a.as_dict() for a in adds]}
