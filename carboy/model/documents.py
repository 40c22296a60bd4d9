"""Documents as plain data: what carboy puts on paper, without knowing how it is printed.

A :class:`Document` is a title, a page kind (an A4 page that flows onto more pages, or
one bottle label) and a sequence of blocks from a small vocabulary:

``Title``         the document's own heading, with an optional line under it
``Heading``       a section heading
``Fields``        key/value lines ("Prepared by  m.ferreday")
``Paragraph``     running text; ``tone`` marks a caution or a small note
``Table``         column headings, rows of text cells and an optional totals row
``PictogramRow``  GHS pictograms by code (GHS01 … GHS09)
``HazardText``    the signal word and the hazard statements (code and text)
``QrCode``        a payload for a QR code, with a caption
``Signatures``    lines to sign: one per role, with name and date

The front end's renderer (``carboy.tui.paper``) turns a document into a PDF and adds
what every page carries: the ``header`` line, the date of printing and page numbers.
Everything a document prints is plain text here, so its content is testable without a
PDF (:meth:`Document.text`).  ``notices`` are not printed: they are what the person
printing should be told (a label printed with generic hazard text, for example).
"""

from __future__ import annotations

import re
from collections.abc import Iterable, Sequence
from dataclasses import asdict, dataclass, field
from typing import Any

from carboy.errors import InvalidInput

__all__ = [
    "PAGE_A4",
    "PAGE_LABEL",
    "PAGES",
    "TONES",
    "Block",
    "Column",
    "Document",
    "Fields",
    "HazardText",
    "Heading",
    "Paragraph",
    "PictogramRow",
    "QrCode",
    "Signatures",
    "Table",
    "Title",
    "formula_text",
    "table_document",
]

PAGE_A4 = "A4"
"""An A4 page in portrait; long documents flow onto further pages."""
PAGE_LABEL = "label"
"""One bottle label (its size is the renderer's choice: 70 × 37 mm, or 24 to an A4 sheet)."""
PAGES = (PAGE_A4, PAGE_LABEL)
TONES = ("plain", "caution", "note")
ALIGNS = ("left", "right")
_PICTOGRAM = re.compile(r"GHS0[1-9]")


@dataclass(frozen=True)
class Title:
    """The document's heading; ``subtitle`` is the line printed under (or beside) it."""

    text: str
    subtitle: str = ""


@dataclass(frozen=True)
class Heading:
    """A section heading."""

    text: str


@dataclass(frozen=True)
class Fields:
    """Key/value lines, in order."""

    items: tuple[tuple[str, str], ...]

    def __post_init__(self) -> None:
        for item in self.items:
            if len(item) != 2 or not all(isinstance(part, str) for part in item):
                raise InvalidInput("field line", item, "must be a (key, value) pair of text")


@dataclass(frozen=True)
class Paragraph:
    """Running text; ``tone`` is ``plain``, ``caution`` (set off, bold) or ``note`` (small)."""

    text: str
    tone: str = "plain"

    def __post_init__(self) -> None:
        if self.tone not in TONES:
            raise InvalidInput("paragraph tone", self.tone, "expected one of " + ", ".join(TONES))


@dataclass(frozen=True)
class Column:
    """A table column: its heading, alignment and share of the width (``weight``)."""

    heading: str
    align: str = "left"
    weight: float = 1.0

    def __post_init__(self) -> None:
        if self.align not in ALIGNS:
            raise InvalidInput("column alignment", self.align, "expected left or right")
        if not self.weight > 0:
            raise InvalidInput("column weight", self.weight, "must be greater than zero")


@dataclass(frozen=True)
class Table:
    """Rows of text cells under column headings, with an optional totals row.

    ``empty_text`` is printed in place of the rows when there are none.
    """

    columns: tuple[Column, ...]
    rows: tuple[tuple[str, ...], ...]
    totals: tuple[str, ...] | None = None
    caption: str = ""
    empty_text: str = "None."

    def __post_init__(self) -> None:
        if not self.columns:
            raise InvalidInput("table", self.caption, "needs at least one column")
        width = len(self.columns)
        for row in (*self.rows, *((self.totals,) if self.totals is not None else ())):
            if len(row) != width or not all(isinstance(cell, str) for cell in row):
                raise InvalidInput("table row", row, f"must be {width} text cells")


@dataclass(frozen=True)
class PictogramRow:
    """GHS pictograms by code, in the order given."""

    codes: tuple[str, ...]

    def __post_init__(self) -> None:
        for code in self.codes:
            if not isinstance(code, str) or _PICTOGRAM.fullmatch(code) is None:
                raise InvalidInput("pictogram", code, "expected a code GHS01 … GHS09")


@dataclass(frozen=True)
class HazardText:
    """The signal word (``Danger``, ``Warning`` or None) and the hazard statements."""

    signal_word: str | None
    statements: tuple[tuple[str, str], ...]


@dataclass(frozen=True)
class QrCode:
    """What a QR code encodes, and the caption printed with it."""

    payload: str
    caption: str = ""

    def __post_init__(self) -> None:
        if not isinstance(self.payload, str) or not self.payload:
            raise InvalidInput("QR payload", self.payload, "must be non-empty text")


@dataclass(frozen=True)
class Signatures:
    """One line to sign per role ("Handed over by (storeroom)"), each with name and date."""

    roles: tuple[str, ...]


Block = (Title | Heading | Fields | Paragraph | Table | PictogramRow | HazardText | QrCode
         | Signatures)
_BLOCK_TYPES = (Title, Heading, Fields, Paragraph, Table, PictogramRow, HazardText, QrCode,
                Signatures)


def _block_text(block: Block) -> list[str]:
    """The lines of text a block prints (pictograms print their codes)."""
    if isinstance(block, Title):
        return [block.text] + ([block.subtitle] if block.subtitle else [])
    if isinstance(block, Heading):
        return [block.text]
    if isinstance(block, Fields):
        return [f"{key} {value}".strip() for key, value in block.items]
    if isinstance(block, Paragraph):
        return [block.text]
    if isinstance(block, Table):
        lines = [block.caption] if block.caption else []
        lines.append(" | ".join(c.heading for c in block.columns))
        lines += [" | ".join(row) for row in block.rows] or [block.empty_text]
        if block.totals is not None:
            lines.append(" | ".join(block.totals))
        return lines
    if isinstance(block, PictogramRow):
        return list(block.codes)
    if isinstance(block, HazardText):
        head = [block.signal_word.upper()] if block.signal_word else []
        return head + [f"{code} {text}" for code, text in block.statements]
    if isinstance(block, QrCode):
        return [block.caption] if block.caption else []
    return [f"{role}: name, signature, date" for role in block.roles]


@dataclass(frozen=True)
class Document:
    """A document to print: what it is, its page kind, its blocks.

    ``header`` names where it comes from (the storeroom): at the top of every A4 page,
    along the bottom edge of a label.  ``printed_on`` is the ISO date of printing, in
    every A4 page's footer with the page number.
    """

    kind: str
    title: str
    blocks: tuple[Block, ...]
    page: str = PAGE_A4
    header: str = ""
    printed_on: str = ""
    notices: tuple[str, ...] = field(default=())

    def __post_init__(self) -> None:
        if self.page not in PAGES:
            raise InvalidInput("page", self.page, "expected one of " + ", ".join(PAGES))
        for block in self.blocks:
            if not isinstance(block, _BLOCK_TYPES):
                raise InvalidInput("document block", type(block).__name__,
                                   "is not one of the document vocabulary")

    def blocks_of(self, kind: type) -> list:
        """The blocks of one type, in order."""
        return [b for b in self.blocks if isinstance(b, kind)]

    def text(self) -> str:
        """Every line of text the document prints (besides page furniture), one per line."""
        lines = [self.header] if self.header else []
        for block in self.blocks:
            lines += _block_text(block)
        return "\n".join(lines)

    def to_dict(self) -> dict[str, Any]:
        """Plain JSON-ready data; each block carries its type's name as ``block``."""
        blocks = [{"block": type(b).__name__, **asdict(b)} for b in self.blocks]
        return {"kind": self.kind, "title": self.title, "page": self.page,
                "header": self.header, "printed_on": self.printed_on,
                "notices": list(self.notices), "blocks": blocks}


def table_document(kind: str, title: str, *, columns: Sequence[Column],
                   rows: Iterable[Sequence[str]], totals: Sequence[str] | None = None,
                   subtitle: str = "", summary: Sequence[tuple[str, str]] = (),
                   notes: Sequence[str] = (), header: str = "", printed_on: str = "",
                   empty_text: str = "None.") -> Document:
    """A list or report on A4: a title, summary lines, one table with totals, notes.

    The shape of the due list and of yearly reports: each is this with its own columns.
    """
    blocks: list[Block] = [Title(title, subtitle)]
    if summary:
        blocks.append(Fields(tuple((k, v) for k, v in summary)))
    blocks.append(Table(tuple(columns), tuple(tuple(r) for r in rows),
                        tuple(totals) if totals is not None else None, empty_text=empty_text))
    blocks += [Paragraph(n, "note") for n in notes]
    return Document(kind, title, tuple(blocks), PAGE_A4, header, printed_on)


_SUBSCRIPTS = str.maketrans("0123456789", "₀₁₂₃₄₅₆₇₈₉")
_SUPERSCRIPTS = str.maketrans("0123456789+-", "⁰¹²³⁴⁵⁶⁷⁸⁹⁺⁻")
_FORMULA_COUNT = re.compile(r"(?<=[A-Za-z)\]])\d+")
_CHARGE = re.compile(r"(?<=[A-Za-z0-9)\]])[+-]\d*$")
"""A charge as carboy writes it on ion keys: ``-``, ``+``, ``-2`` (sign first)."""


def _formula_part(part: str) -> str:
    charge = _CHARGE.search(part)
    body = part[:charge.start()] if charge else part
    text = _FORMULA_COUNT.sub(lambda m: m.group(0).translate(_SUBSCRIPTS), body)
    if charge:
        sign = charge.group(0).strip("0123456789")
        digits = charge.group(0).strip("+-")
        text += (digits + sign).translate(_SUPERSCRIPTS)
    return text


def formula_text(formula: str) -> str:
    """A formula as printed: counts as subscripts, a charge as superscripts, a hydrate's
    dot as a middle dot.

    ``H2SO4`` → ``H₂SO₄``; ``NO3-`` → ``NO₃⁻``; ``SO4-2`` → ``SO₄²⁻``; ``CuSO4.5H2O`` →
    ``CuSO₄·5H₂O`` (the 5 counts formula units and stays on the line); names such as
    ``Tris`` or ``sulfate`` are left alone.
    """
    parts = formula.replace("·", ".").split(".")
    return "·".join(_formula_part(p) for p in parts)
