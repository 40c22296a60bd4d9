"""A waste container's disposal record, to travel with it to the licensed contractor or
into the safety office's files (read only: nothing is written).

What it holds: the container (label, stream, status, location, capacity, dates), every
addition (date, who, what, amount; superseded ones marked), the composition carboy
computed from them, the cautions that follow from what is in it and those of the
recorded plan, the plan, the treatment or licensed-disposal hand-over found in the
journal, the container's whole journal, and lines to sign.

The stream is printed by name with the container's material; the compatibility
warnings on what the container holds (:func:`carboy.store.waste.show`) join the
cautions.  The journal chain head is printed when the caller passes one
(``chain_head``).
"""

from __future__ import annotations

from collections.abc import Mapping
from datetime import date
from typing import Any

from carboy.model import cautions as caution_rules
from carboy.model.documents import (
    PAGE_A4,
    Block,
    Column,
    Document,
    Fields,
    Heading,
    Paragraph,
    Signatures,
    Table,
    Title,
    formula_text,
)
from carboy.store import journal, waste
from carboy.store.db import Store
from carboy.store.documents import storeroom_name

__all__ = ["CONTAINER_CAUTION_CODES", "SIGNATURE_ROLES", "disposal_record"]

CONTAINER_CAUTION_CODES = ("not-a-drain-plan", "never-acidify", "hf-contact", "oxidizing-acid",
                           "corrosive-ppe", "local-rules")
"""The caution rules that depend on what is in a container alone (not on a reagent)."""
SIGNATURE_ROLES = ("Handed over by (storeroom)", "Checked by (safety office)",
                   "Received by (licensed disposal contractor)")
STREAM_MISSING = "not recorded (carboy keeps no stream for this container)"
CLOSING_NOTE = ("carboy advises; it never declares a waste safe to pour away. Local disposal "
                "rules, the institution's safety office and licensed disposal practice decide "
                "what is done with this container.")


def _when(recorded_at: str | None) -> str:
    return journal.local_time(recorded_at) if recorded_at else "-"


def _amount(addition: Mapping[str, Any]) -> str:
    parts = []
    if addition.get("volume_l"):
        parts.append(f"{addition['volume_l']:g} L")
    if addition.get("mass_g"):
        parts.append(f"{addition['mass_g']:g} g")
    return ", ".join(parts) or "-"


def _additions_table(info: Mapping[str, Any]) -> Table:
    rows, live, volume = [], 0, 0.0
    for a in info["additions"]:
        what = a["entered"] + ("  [superseded]" if a["superseded"] else "")
        rows.append((str(a["id"]), _when(a["added_at"]), a["added_by"], what, _amount(a),
                     a["note"] or ""))
        if not a["superseded"]:
            live += 1
            volume += a["volume_l"] or 0.0
    columns = (Column("#", "right", 0.4), Column("Date", weight=1.25), Column("Who", weight=1.1),
               Column("What", weight=1.8), Column("Amount", "right", 0.9),
               Column("Note", weight=2.2))
    totals = ("", "", "", f"{live} counted", f"{volume:.4g} L", "superseded rows not counted")
    return Table(columns, tuple(rows), totals, empty_text="Nothing has been added yet.")


def _composition_table(info: Mapping[str, Any]) -> Table:
    volume = info["volume_l"]
    rows = []
    for key, mol in info["composition"].items():
        conc = f"{mol / volume:.4g}" if volume > 0 else "-"
        rows.append((formula_text(key), f"{mol:.4g}", conc))
    columns = (Column("System or ion", weight=2.0), Column("Amount (mol)", "right", 1.0),
               Column("In the container (mol/L)", "right", 1.4))
    return Table(columns, tuple(rows), ("Total volume", "", f"{volume:.4g} L"),
                 empty_text="No composition recorded.")


def _plan_of(entry: journal.Entry) -> Mapping[str, Any]:
    """The plan inside a neutralization entry, whichever front end recorded it."""
    plan = entry.snapshot.get("plan")
    if not isinstance(plan, Mapping):
        return {}
    inner = plan.get("plan")
    return {**plan, **inner} if isinstance(inner, Mapping) else plan


def _text_of(value: Any) -> str:
    if isinstance(value, Mapping):
        return str(value.get("text") or value.get("understood") or "")
    return "" if value is None else str(value)


def _plan_fields(entry: journal.Entry) -> Fields:
    plan = _plan_of(entry)
    items = [("Recorded", f"{_when(entry.recorded_at)} by {entry.recorded_by} (entry "
                          f"#{entry.id})"),
             ("Reagent", _text_of(plan.get("reagent")) or "-")]
    for key, what in (("full", "Dose to neutralize"), ("to_target", "Dose to the target")):
        dose = plan.get(key)
        if isinstance(dose, Mapping):
            amount = (f"{dose['reagent_volume_l'] * 1000:.4g} mL" if dose.get("reagent_volume_l")
                      else f"{dose.get('reagent_mass_g', 0):.4g} g")
            items.append((what, amount + (f", pH {dose['pH']:.2f}" if dose.get("pH") is not None
                                          else "")))
    window = plan.get("window")
    if isinstance(window, Mapping) and window.get("low_pH") is not None:
        items.append(("Window", f"pH {window['low_pH']:g}–{window['high_pH']:g}"))
    if plan.get("note"):
        items.append(("Note", _text_of(plan["note"])))
    measured = _final_ph(entry)
    items.append(("Measured pH", f"{measured:g}" if isinstance(measured, (int, float))
                  else "not yet (plan only)"))
    return Fields(tuple(items))


def _stream_text(info: Mapping[str, Any]) -> str:
    """``acid waste, plastic``; a record made from older data says it is not recorded."""
    if not info.get("stream"):
        return STREAM_MISSING
    text = info.get("stream_name") or info["stream"]
    return text + (f", {info['material']}" if info.get("material") else "")


def _warning_texts(info: Mapping[str, Any]) -> list[str]:
    """The compatibility warnings on the contents, with the reason where one was given."""
    out = []
    for w in info.get("warnings") or ():
        answered = f" (logged with a reason: {w['accepted']})" if w.get("accepted") else ""
        out.append(f"Warning: {w['message']}{answered}")
    return out


def _cautions(tags: frozenset[str], plan: Mapping[str, Any]) -> list[str]:
    facts = caution_rules.Facts(hazards=tags, direction="", reagent_key="", reagent_form="",
                                reagent_hazards=frozenset(), reagent_is_slurry=False,
                                reagent_has_carbonate=False)
    texts = [c.text for c in caution_rules.evaluate(facts) if c.code in CONTAINER_CAUTION_CODES]
    for c in plan.get("cautions") or ():
        text = _text_of(c)
        if text and text not in texts:
            texts.append(text)
    return texts


def _final_ph(entry: journal.Entry) -> float | None:
    """The pH a neutralization entry recorded: a treatment's final reading, or an older
    entry's measured pH (a later correction is listed in the journal table)."""
    value = entry.snapshot.get("measured_ph")
    if value is None:
        value = (entry.snapshot.get("readings") or {}).get("final_ph")
    return float(value) if isinstance(value, (int, float)) else None


def _treatment_table(entries: list[journal.Entry]) -> Table:
    rows = []
    for e in entries:
        if e.kind == "neutralization" and _final_ph(e) is not None:
            route = e.snapshot.get("route")
            what = f"neutralized, measured pH {_final_ph(e):g}" + (
                f" ({route.replace('-', ' ')})" if route else "")
        elif e.kind == "disposal" or e.kind not in ("neutralization", "note", "correction"):
            what = str(e.snapshot.get("status") or e.kind)
        else:
            continue
        note = _text_of(e.snapshot.get("note")) or e.summary
        rows.append((_when(e.recorded_at), e.recorded_by, what, note))
    columns = (Column("Date", weight=1.2), Column("Who", weight=1.1),
               Column("What (route)", weight=1.6), Column("Note", weight=3.0))
    return Table(columns, tuple(rows), empty_text="No treatment or hand-over recorded yet.")


def _journal_table(entries: list[journal.Entry]) -> Table:
    rows = tuple((f"#{e.id}", _when(e.recorded_at), e.recorded_by, e.kind, e.summary)
                 for e in entries)
    columns = (Column("Entry", "right", 0.6), Column("Date", weight=1.2),
               Column("Who", weight=1.1), Column("Kind", weight=1.1),
               Column("Summary", weight=3.2))
    return Table(columns, rows, (f"{len(rows)}", "", "", "", "entries for this container"),
                 empty_text="No journal entries for this container.")


def _container_fields(info: Mapping[str, Any], chain_head: str | None) -> Fields:
    items = [("Container", info["label"]),
             ("Stream", _stream_text(info)),
             ("Status", info["status"]), ("Location", info["location"] or "-"),
             ("Volume", f"{info['volume_l']:.4g} L of {info['capacity_l']:g} L"),
             ("Opened", info["opened_on"] or "-"), ("Closed", info["closed_on"] or "-")]
    if info.get("notes"):
        items.append(("Notes", info["notes"]))
    if chain_head:
        items.append(("Journal chain head", chain_head))
    return Fields(tuple(items))


def disposal_record(store: Store, label: str, *, storeroom: str | None = None,
                    today: date | None = None, chain_head: str | None = None) -> Document:
    """The disposal record of waste container ``label`` (NotFound if there is none)."""
    day = today or date.today()
    with store.reading():
        info = waste.show(store, label)
        container = waste.container(store, label)
        entries = list(reversed(journal.entries(store, container_id=container.id, limit=None)))
        tags = waste.hazard_tags(store, label)
        name = storeroom_name(store, storeroom)
    plans = [e for e in entries if e.kind == "neutralization"]
    blocks: list[Block] = [
        Title("Waste container disposal record", f"Container {info['label']}"),
        _container_fields(info, chain_head),
        Heading("Additions"), _additions_table(info),
        Heading("Composition (computed by carboy from the additions)"), _composition_table(info),
        Heading("Cautions"),
        *(Paragraph(t, "caution") for t in _warning_texts(info)),
        *(Paragraph(t, "caution") for t in _cautions(tags, _plan_of(plans[-1]) if plans else {})),
        Heading("Plan"),
        _plan_fields(plans[-1]) if plans else Paragraph("No neutralization plan recorded."),
        Heading("Treatment or hand-over"), _treatment_table(entries),
        Heading("Journal of this container"), _journal_table(entries),
        Heading("Signatures"), Signatures(SIGNATURE_ROLES),
        Paragraph(CLOSING_NOTE, "note"),
    ]
    return Document("disposal-record", f"Disposal record: {info['label']}", tuple(blocks),
                    PAGE_A4, name, day.isoformat())
