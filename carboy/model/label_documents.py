"""A bottle's printed label as a document: the label text of :mod:`carboy.model.labels`
plus what the stock record knows (the bottle id, the strength as measured, the re-check
date, where it came from, the storeroom).

The GHS part is the :class:`~carboy.model.labels.Label`'s own: signal word, pictograms
and hazard statements for the bottle's concentration band.  A compound for which carboy
holds no GHS bands cannot be placed in a band: its label gets the generic corrosive
hazard text (Danger, GHS05, H314, as supplied) and the line telling the reader to check
the supplier's safety data sheet, and the document's notices say so, so that the person
printing is told.  Every label ends with the safety-data-sheet line.
"""

from __future__ import annotations

from dataclasses import dataclass

from carboy.model.documents import (
    PAGE_LABEL,
    Document,
    Fields,
    HazardText,
    Paragraph,
    PictogramRow,
    QrCode,
    Title,
    formula_text,
)
from carboy.model.labels import NOT_CLASSIFIED_TEXT, SDS_LINE, Label, ghs_data

__all__ = [
    "GENERIC_CODE",
    "GENERIC_LINE",
    "GENERIC_PICTOGRAM",
    "BottleFacts",
    "bottle_label",
    "has_ghs_bands",
    "qr_payload",
]

GENERIC_CODE = "H314"
GENERIC_PICTOGRAM = "GHS05"
GENERIC_SIGNAL = "Danger"
GENERIC_LINE = ("Generic corrosive label: carboy holds no GHS bands for this compound. "
                + SDS_LINE)
STOREROOM_NAME_MOST = 80
"""Longest storeroom name: it fits one line of a 70 mm label."""
QR_PREFIX = "carboy:bottle:"
"""A bottle's QR code reads ``carboy:bottle:17``: scanners type it, people can read it."""


@dataclass(frozen=True)
class BottleFacts:
    """What the stock record adds to the label text (all text as printed; None = unknown).

    ``made_here`` says whether the bottle was prepared in the storeroom (the label then
    reads "Prepared … by …") or received from a supplier ("Received …").
    """

    bottle_id: int | None
    name: str
    formula: str
    labelled: str
    mass_percent: float | None = None
    measured: str | None = None
    measured_on: str | None = None
    made_here: bool = False
    dated: str | None = None
    by: str | None = None
    source_bottle: int | None = None
    lot: str | None = None
    expires_on: str | None = None
    recheck_on: str | None = None
    storeroom: str = ""


def has_ghs_bands(compound_key: str) -> bool:
    """Whether carboy's GHS data (``ghs.toml``) holds bands for ``compound_key``."""
    return compound_key in ghs_data().compounds


def qr_payload(bottle_id: int) -> str:
    return f"{QR_PREFIX}{int(bottle_id)}"


def _strength_line(facts: BottleFacts) -> str:
    text = facts.labelled
    if facts.mass_percent is not None and "%" not in facts.labelled:
        text += f" ({facts.mass_percent:.3g} % w/w)"
    if facts.measured:
        text += f"; measured {facts.measured}"
        if facts.measured_on:
            text += f" on {facts.measured_on}"
    else:
        text += "; not measured"
    return text


def _origin_line(facts: BottleFacts) -> tuple[str, str] | None:
    parts = []
    if facts.dated:
        parts.append(facts.dated)
    if facts.by:
        parts.append(f"by {facts.by}")
    if facts.source_bottle is not None:
        parts.append(f"from bottle {facts.source_bottle}")
    if facts.lot:
        parts.append(f"lot {facts.lot}")
    if not parts:
        return None
    return ("Prepared" if facts.made_here else "Received", " ".join(parts))


def _dates_line(facts: BottleFacts) -> tuple[str, str]:
    text = facts.expires_on or "not set"
    if facts.recheck_on:
        text += f"; re-check by {facts.recheck_on}"
    return "Expires", text


def bottle_label(label: Label, facts: BottleFacts, *, printed_on: str = "") -> Document:
    """The label document of one bottle: ``label`` gives the hazard text, ``facts`` the rest.

    The blocks, in order: Title (name, formula), Fields (strength as labelled and as
    measured, where it came from, expiry and re-check), PictogramRow, HazardText, the
    safety-data-sheet Paragraph (note), and the QrCode of the bottle id (when it has one).
    """
    signal, pictograms = label.signal_word, label.pictograms
    statements = tuple((s.code, s.text) for s in label.statements)
    notices: list[str] = []
    closing = SDS_LINE
    if not has_ghs_bands(label.compound_key):
        signal, pictograms = GENERIC_SIGNAL, (GENERIC_PICTOGRAM,)
        statements = ((GENERIC_CODE, ghs_data().statements[GENERIC_CODE].text),)
        closing = GENERIC_LINE
        which = f"bottle {facts.bottle_id}" if facts.bottle_id is not None else "the new bottle"
        notices.append(f"{which} ({label.compound_key}): carboy holds no GHS bands for this "
                       "compound, so the label carries the generic corrosive hazard text; "
                       "check the supplier's safety data sheet")
    items = [("Strength", _strength_line(facts))]
    origin = _origin_line(facts)
    if origin is not None:
        items.append(origin)
    items.append(_dates_line(facts))
    formula = formula_text(facts.formula)
    blocks = [Title(facts.name, formula if formula != facts.name else ""), Fields(tuple(items))]
    if pictograms:
        blocks.append(PictogramRow(tuple(pictograms)))
    blocks.append(HazardText(signal, statements))
    if not statements:
        closing = f"{NOT_CLASSIFIED_TEXT} {closing}"
    blocks.append(Paragraph(closing, "note"))
    if facts.bottle_id is not None:
        blocks.append(QrCode(qr_payload(facts.bottle_id), f"bottle {facts.bottle_id}"))
    title = f"Label of bottle {facts.bottle_id}" if facts.bottle_id is not None else \
        f"Label: {facts.name} {facts.labelled}"
    return Document("bottle-label", title, tuple(blocks), PAGE_LABEL, facts.storeroom,
                    printed_on, tuple(notices))
