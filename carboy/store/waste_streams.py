"""A waste container's stream against what goes into it: the store's side of the
compatibility rules (:mod:`carboy.model.compatibility`).

:func:`judge` is what :func:`carboy.store.waste.add` asks before it writes: the rules'
findings for one proposed addition, given the container's stream, material, what it
holds and its estimated pH (the exact solver on its contents as logged).
:func:`enforce` turns them into the store's answer: a ``refuse`` finding raises
:class:`~carboy.errors.Refused` whatever reason is given; ``confirm`` findings raise
:class:`~carboy.errors.NeedsConfirmation` unless a person's reason accompanies the
addition (the journal keeps it).  :func:`warnings` applies the same rules to what a
container already holds (an older database, or a correction): it only reports.

:func:`set_stream` is the one way a container's stream (or material) changes: a
journal entry records it, and a database trigger holds to that.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from datetime import datetime
from typing import Any

from carboy.errors import CarboyError, HazardRefused, InvalidInput, NeedsConfirmation
from carboy.model import compatibility
from carboy.model.compatibility import Addition, Finding
from carboy.model.components import Component
from carboy.model.mixture import Mixture
from carboy.model.speciation import speciate
from carboy.store import journal
from carboy.store.compounds import catalog_for
from carboy.store.db import Store
from carboy.store.errors import ContainerClosed
from carboy.store.readers import check_length
from carboy.store.waste_rows import container_row, counted_additions, moles

STREAMS: tuple[str, ...] = tuple(compatibility.streams())
"""The stream keys, in the order of the data file (for ``choices=`` and selects)."""
MATERIALS = compatibility.MATERIALS


@dataclass(frozen=True)
class Held:
    """What a container holds, as the rules and the solver read it."""

    contents: Mapping[str, float]
    """Compound key -> mol (formula units), from the additions that still count."""
    moles: Mapping[str, float]
    """System / ion key -> mol (the solver's input)."""
    volume_l: float
    unknown: tuple[str, ...] = ()
    """Compound keys the catalog no longer knows: the rules cannot judge them."""


def check_stream(value: object) -> str:
    """A stream key; :class:`InvalidInput` (field ``stream``) listing the known ones."""
    return compatibility.stream("" if value is None else str(value).strip()).key


def check_material(value: object) -> str | None:
    """``glass``, ``plastic``, ``metal``, or None (not recorded) for empty text."""
    if value is None or (isinstance(value, str) and not value.strip()):
        return None
    text = str(value).strip().lower()
    if text not in MATERIALS:
        raise InvalidInput("container material", value, "expected one of "
                           + ", ".join(MATERIALS), field="material")
    return text


def stream_name(key: str) -> str:
    """What a person reads for a stream key (``acid waste``); an unknown key as it is."""
    try:
        return compatibility.stream(key).name
    except InvalidInput:
        return key


def held(rows: Iterable[Mapping], moles: Mapping[str, float], volume_l: float,
         catalog) -> Held:
    """``rows`` are additions that still count (compound_key, conc_molar, volume_l,
    mass_g, composition)."""
    contents: dict[str, float] = {}
    unknown: list[str] = []
    for row in rows:
        key = row["compound_key"]
        if not row["composition"]:
            continue  # a withdrawal brings nothing
        if key not in catalog:
            unknown.append(key)
            continue
        if row["mass_g"] is not None:
            mol = row["mass_g"] / catalog.compound(key).molar_mass_g_mol
        else:
            mol = (row["conc_molar"] or 0.0) * row["volume_l"]
        contents[key] = contents.get(key, 0.0) + mol
    return Held(contents, dict(moles), volume_l, tuple(sorted(set(unknown))))


def estimated_ph(h: Held, catalog) -> float | None:
    """The container's pH as the exact solver puts it (25 °C, Davies), or None when it
    holds no volume yet or the solver cannot say."""
    if h.volume_l <= 0 or not h.moles:
        return None
    try:
        return float(speciate(Mixture.from_moles(dict(h.moles), h.volume_l),
                              catalog=catalog).pH)
    except CarboyError:
        return None


def view(stream: str, material: str | None, h: Held, catalog) -> compatibility.Container:
    """The container as the rules see it."""
    return compatibility.Container(stream, dict(h.contents), estimated_ph(h, catalog),
                                   h.volume_l or None, material)


def judge(container: compatibility.Container, compound_key: str, amount_mol: float,
          conc_molar: float | None, catalog) -> tuple[Finding, ...]:
    """Every finding for adding ``amount_mol`` of ``compound_key`` (refusals first);
    empty means no rule objects, never that the waste is safe."""
    if not amount_mol > 0:
        return ()  # nothing goes in (an empty volume): nothing to judge
    return compatibility.check_addition(
        container, Addition(compound_key, amount_mol, conc_molar), catalog=catalog)


def _reason(findings: tuple[Finding, ...]) -> str:
    first = findings[0].message
    if len(findings) == 1:
        return first
    return f"{first} (and {len(findings) - 1} more: " + \
        ", ".join(f.rule_id for f in findings[1:]) + ")"


def enforce(findings: Iterable[Finding], what: str, accept: str = "") -> tuple[Finding, ...]:
    """The confirmations the addition goes ahead with; raises when it may not.

    Raises
    ------
    Refused : a ``refuse`` finding (every gas hazard among them): no reason overrides it.
    NeedsConfirmation : ``confirm`` findings and no ``accept`` reason.
    """
    findings = tuple(findings)
    refused = compatibility.refusals(findings)
    if refused:
        raise HazardRefused(what, _reason(refused), refused)
    asked = compatibility.confirmations(findings)
    if asked and not (accept or "").strip():
        raise NeedsConfirmation(what, _reason(asked), asked)
    return asked


def accepted_snapshot(addition_id: int, entered: str, reason: str,
                      findings: tuple[Finding, ...]) -> dict:
    """The journal's record of an addition logged against ``confirm`` findings."""
    return {"event": "addition-accepted", "addition_id": addition_id, "entered": entered,
            "reason": reason.strip(), "findings": [f.to_dict() for f in findings]}


def accepted_reasons(entries: Iterable) -> dict[tuple[str, str], str]:
    """(rule, compound) -> the reason a person gave to log it anyway, from a container's
    journal entries (newest reason wins)."""
    out: dict[tuple[str, str], str] = {}
    for entry in sorted(entries, key=lambda e: e.id):
        snap = entry.snapshot
        if entry.kind == "note" and snap.get("event") == "addition-accepted":
            for f in snap.get("findings", ()):
                out[(f.get("rule", ""), f.get("added", ""))] = snap.get("reason", "")
    return out


def warnings(container: compatibility.Container, h: Held, catalog,
             accepted: Mapping[tuple[str, str], str] | None = None) -> tuple[dict, ...]:
    """What is wrong with what the container already holds (stream against contents,
    contents against each other), as plain data; changes nothing.  A warning a person
    already answered with a reason when logging (``accepted``) carries it."""
    accepted = accepted or {}
    out = []
    for f in compatibility.check_container(container, catalog=catalog):
        d = f.to_dict()
        if f.severity == "confirm" and (f.rule_id, f.added) in accepted:
            d["accepted"] = accepted[(f.rule_id, f.added)]
        out.append(d)
    for key in h.unknown:
        out.append({"rule": "unknown-compound", "severity": "confirm",
                    "message": f"already in the container: {key}, which the catalog no "
                               "longer knows: the compatibility rules cannot judge it",
                    "hazard": "not judged", "advice": "", "gas": "", "added": key,
                    "present": [], "source": "", "overridable": True})
    return tuple(out)


def new_findings(before: Iterable[Finding], after: Iterable[Finding]) -> tuple[Finding, ...]:
    """The findings of ``after`` that ``before`` did not have (by rule and compounds)."""
    seen = {(f.rule_id, f.added, f.present) for f in before}
    return tuple(f for f in after if (f.rule_id, f.added, f.present) not in seen)


# -- reading a container -----------------------------------------------------------------

def held_in(store: Store, row: Mapping[str, Any], catalog) -> Held:
    """What the container ``row`` holds, by compound and by system / ion."""
    amounts, litres = moles(store, row["label"])
    return held(counted_additions(store, row["id"]), amounts, litres, catalog)


def contents(store: Store, label: str) -> dict[str, float]:
    """Mol of each compound still counted in a container (compound key -> mol)."""
    with store.reading():
        return dict(held_in(store, container_row(store, label), catalog_for(store)).contents)


def judge_component(store: Store, row: Mapping[str, Any], component: Component,
                    volume_l: float, catalog) -> tuple[Finding, ...]:
    """The findings for adding ``component`` (``volume_l`` of it) to the container ``row``."""
    h = held_in(store, row, catalog)
    if component.mass_g is not None:
        amount = component.mass_g / component.compound.molar_mass_g_mol
    else:
        amount = component.conc_molar * volume_l
    return judge(view(row["stream"], row["material"], h, catalog), component.compound.key,
                 amount, component.conc_molar, catalog)


# -- changing the stream -------------------------------------------------------------------

_UNCHANGED: Any = object()


def set_stream(store: Store, label: str, stream: str, reason: str, *,
               material: object = _UNCHANGED, who: str | None = None,
               when: datetime | None = None) -> int:
    """Change what a container is meant for (and, if given, its material); journaled as
    a ``note`` with the reason.  Returns the journal entry id.

    Refused when the new stream contradicts what the container already holds in a way
    the rules refuse (an acid in a cyanide/sulfide container …); lesser mismatches are
    recorded in the entry.  A container that has left the storeroom keeps its stream.
    """
    kind = check_stream(stream)
    if not reason or not reason.strip():
        raise InvalidInput("reason", reason, "say why the stream changes", field="reason")
    check_length("reason", reason, field="reason")
    catalog = catalog_for(store)

    def work(s: Store) -> int:
        row = container_row(s, label)
        made_of = row["material"] if material is _UNCHANGED else check_material(material)
        if row["status"].is_final:
            raise ContainerClosed(row["label"], row["status"], "change its stream")
        if (kind, made_of) == (row["stream"], row["material"]):
            raise InvalidInput("stream", kind, f"{row['label']} is already meant for "
                               f"{stream_name(kind)}", field="stream")
        h = held_in(s, row, catalog)
        fresh = new_findings(
            compatibility.check_container(view(row["stream"], row["material"], h, catalog),
                                          catalog=catalog),
            compatibility.check_container(view(kind, made_of, h, catalog), catalog=catalog))
        enforce(compatibility.refusals(fresh),
                f"making {row['label']} a {stream_name(kind)} container")
        entry = journal.append_in(
            s, "note", container_id=row["id"], who=who, when=when,
            summary=f"{row['label']}: stream {row['stream']} -> {kind}"
                    + (f", material {made_of}" if made_of != row["material"] else "")
                    + f" ({reason.strip()})",
            snapshot={"event": "stream-change", "previous_stream": row["stream"],
                      "stream": kind, "previous_material": row["material"],
                      "material": made_of, "reason": reason.strip(),
                      "warnings": [f.to_dict() for f in fresh]})
        s.execute("UPDATE waste_containers SET stream = ?, material = ?, stream_note = ? "
                  "WHERE id = ?", [kind, made_of, f"changed from {row['stream']}: "
                                   f"{reason.strip()}", row["id"]])
        return entry

    return store.write(work)
