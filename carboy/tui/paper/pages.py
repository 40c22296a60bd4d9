"""Records, lists and reports on A4: blocks flow down the page and onto further pages.

Every page carries a header (the document's title, and its ``header`` line: the
storeroom) and a footer (the date of printing, and "page N of M").  A table that runs
over a page repeats its column headings; a heading never ends a page on its own.
"""

from __future__ import annotations

from collections.abc import Sequence

from carboy.model.documents import (
    Block,
    Column,
    Document,
    Fields,
    HazardText,
    Heading,
    Paragraph,
    PictogramRow,
    QrCode,
    Signatures,
    Table,
    Title,
)
from carboy.tui.paper.canvas import A4_PT, GHS_RED, GREY, LIGHT, MM, Canvas, measure
from carboy.tui.paper.fit import LEADING, wrap
from carboy.tui.paper.pictograms import draw_pictogram
from carboy.tui.paper.qr import draw_qr

MARGIN_X = 16.0 * MM
MARGIN_TOP = 20.0 * MM
MARGIN_BOTTOM = 18.0 * MM
BODY = 9.0
SMALL = 7.5
CELL = 7.5
CELL_PAD = 2.2
PICTOGRAM_SIDE = 18.0 * MM
QR_SIDE = 25.0 * MM
KEEP_WITH_NEXT = 60.0
"""A heading with less than this much room (pt) below it starts a new page."""
PAGE_TEXT = "Page {page} of {pages}"


class PageCanvas(Canvas):
    """An A4 canvas that draws the header and footer of the document being printed."""

    def __init__(self, pages: int | None = None) -> None:
        super().__init__(A4_PT)
        self.page_total = pages
        """The page count printed in the footer (known after a first pass)."""
        self.document: Document | None = None
        self.starting: Document | None = None
        """The document whose first page is being added (its header comes next)."""

    def header(self) -> None:
        if self.starting is not None:
            self.document, self.starting = self.starting, None
        if self.document is None:
            return
        top = 11.0 * MM
        self.put(MARGIN_X, top, self.document.title, SMALL, bold=True)
        if self.document.header:
            text = self.document.header
            self.put(self.w - MARGIN_X - measure(text, SMALL), top, text, SMALL)
        self.set_draw_color(*GREY)
        self.set_line_width(0.4)
        self.line(MARGIN_X, top + 3.0, self.w - MARGIN_X, top + 3.0)

    def footer(self) -> None:
        if self.document is None:
            return
        base = self.h - 10.0 * MM
        printed = f"Printed {self.document.printed_on} with carboy" \
            if self.document.printed_on else "Printed with carboy"
        self.put(MARGIN_X, base, printed, SMALL, color=GREY)
        text = PAGE_TEXT.format(page=self.page_no(), pages=self.page_total or "?")
        self.put(self.w - MARGIN_X - measure(text, SMALL), base, text, SMALL, color=GREY)


class Flow:
    """Lays blocks down an A4 page from the top margin, starting new pages as needed."""

    def __init__(self, canvas: PageCanvas, document: Document) -> None:
        self.canvas = canvas
        self.document = document
        self.width = canvas.w - 2 * MARGIN_X
        self.bottom = canvas.h - MARGIN_BOTTOM
        canvas.starting = document
        canvas.add_page()
        self.y = MARGIN_TOP

    def room(self, height: float) -> None:
        """Start a new page unless ``height`` points still fit on this one."""
        if self.y + height > self.bottom:
            self.canvas.add_page()
            self.y = MARGIN_TOP

    def lines(self, text: str, size: float, *, bold: bool = False, x: float = MARGIN_X,
              width: float | None = None, color=(0, 0, 0)) -> None:
        step = size * LEADING
        for line in wrap(text, width or self.width, size, bold, measure):
            self.room(step)
            self.canvas.put(x, self.y + 0.8 * step, line, size, bold, color)
            self.y += step

    def block(self, block: Block) -> None:
        handler = _HANDLERS[type(block)]
        handler(self, block)


def _title(flow: Flow, block: Title) -> None:
    flow.lines(block.text, 16.0, bold=True)
    if block.subtitle:
        flow.lines(block.subtitle, 11.0)
    flow.y += 8.0


def _heading(flow: Flow, block: Heading) -> None:
    flow.room(KEEP_WITH_NEXT)
    flow.y += 6.0
    flow.lines(block.text, 11.0, bold=True)
    flow.y += 2.0


def _fields(flow: Flow, block: Fields) -> None:
    if not block.items:
        return
    key_w = min(max(measure(k, BODY, True) for k, _ in block.items) + 10.0, flow.width * 0.32)
    step = BODY * LEADING
    for key, value in block.items:
        keys = wrap(key, key_w - 10.0, BODY, True, measure)
        values = wrap(value or "-", flow.width - key_w, BODY, False, measure)
        flow.room(step * max(len(keys), len(values)))
        for k, line in enumerate(keys):
            flow.canvas.put(MARGIN_X, flow.y + 0.8 * step + k * step, line, BODY, True)
        for k, line in enumerate(values):
            flow.canvas.put(MARGIN_X + key_w, flow.y + 0.8 * step + k * step, line, BODY)
        flow.y += step * max(len(keys), len(values))
    flow.y += 6.0


def _paragraph(flow: Flow, block: Paragraph) -> None:
    if block.tone == "note":
        flow.lines(block.text, SMALL, color=GREY)
    elif block.tone == "caution":
        top = flow.y
        flow.lines(block.text, BODY, x=MARGIN_X + 8.0, width=flow.width - 8.0)
        if flow.y > top:
            flow.canvas.set_fill_color(*GHS_RED)
            flow.canvas.rect(MARGIN_X, top + 1.0, 2.5, flow.y - top - 1.0, style="F")
    else:
        flow.lines(block.text, BODY)
    flow.y += 4.0


def _column_widths(columns: Sequence[Column], width: float) -> list[float]:
    total = sum(c.weight for c in columns)
    return [width * c.weight / total for c in columns]


def _cells(cells: Sequence[str], widths: list[float], bold: bool) -> tuple[list, float]:
    """A row's cells wrapped to their columns, and the row's height."""
    wrapped = [wrap(text, w - 2 * CELL_PAD, CELL, bold, measure)
               for text, w in zip(cells, widths)]
    return wrapped, max(len(w) for w in wrapped) * CELL * LEADING + 2 * CELL_PAD


def _row(flow: Flow, cells: Sequence[str], columns: Sequence[Column], widths: list[float],
         *, bold: bool = False, fill: tuple[int, int, int] | None = None,
         rule_above: bool = False) -> None:
    """Draw one row at the current position (the caller has made room for it)."""
    wrapped, height = _cells(cells, widths, bold)
    step = CELL * LEADING
    canvas = flow.canvas
    if fill is not None:
        canvas.set_fill_color(*fill)
        canvas.rect(MARGIN_X, flow.y, flow.width, height, style="F")
    canvas.set_draw_color(*GREY)
    canvas.set_line_width(0.8 if rule_above else 0.25)
    canvas.line(MARGIN_X, flow.y, MARGIN_X + flow.width, flow.y)
    x = MARGIN_X
    for lines, column, w in zip(wrapped, columns, widths):
        for k, line in enumerate(lines):
            dx = w - CELL_PAD - measure(line, CELL, bold) if column.align == "right" \
                else CELL_PAD
            canvas.put(x + dx, flow.y + CELL_PAD + 0.8 * step + k * step, line, CELL, bold)
        x += w
    flow.y += height


def _table(flow: Flow, block: Table) -> None:
    if block.caption:
        flow.lines(block.caption, BODY, bold=True)
    widths = _column_widths(block.columns, flow.width)
    headings = [c.heading for c in block.columns]
    _, heading_h = _cells(headings, widths, True)
    first_h = _cells(block.rows[0], widths, False)[1] if block.rows else CELL * LEADING
    flow.room(heading_h + first_h)
    _row(flow, headings, block.columns, widths, bold=True, fill=LIGHT)
    if not block.rows:
        flow.lines(block.empty_text, CELL, x=MARGIN_X + CELL_PAD)
    rows = [(cells, False) for cells in block.rows]
    if block.totals is not None:
        rows.append((block.totals, True))
    for cells, is_total in rows:
        height = _cells(cells, widths, is_total)[1]
        if flow.y + height > flow.bottom:
            flow.canvas.add_page()
            flow.y = MARGIN_TOP
            _row(flow, headings, block.columns, widths, bold=True, fill=LIGHT)
        _row(flow, cells, block.columns, widths, bold=is_total, rule_above=is_total)
    flow.canvas.set_line_width(0.25)
    flow.canvas.line(MARGIN_X, flow.y, MARGIN_X + flow.width, flow.y)
    flow.y += 8.0


def _pictograms(flow: Flow, block: PictogramRow) -> None:
    flow.room(PICTOGRAM_SIDE + 4.0)
    x = MARGIN_X
    for code in block.codes:
        draw_pictogram(flow.canvas, code, x, flow.y, PICTOGRAM_SIDE)
        flow.canvas.put(x + PICTOGRAM_SIDE + 3.0, flow.y + PICTOGRAM_SIDE / 2 + 3.0, code,
                        BODY)
        x += PICTOGRAM_SIDE + 3.0 + measure(code, BODY) + 10.0
    flow.y += PICTOGRAM_SIDE + 6.0


def _hazards(flow: Flow, block: HazardText) -> None:
    if block.signal_word:
        flow.lines(block.signal_word.upper(), 12.0, bold=True)
    for code, text in block.statements:
        flow.lines(f"{code} {text}", BODY)
    flow.y += 4.0


def _qr(flow: Flow, block: QrCode) -> None:
    flow.room(QR_SIDE + SMALL * LEADING)
    draw_qr(flow.canvas, block.payload, MARGIN_X, flow.y, QR_SIDE)
    flow.y += QR_SIDE
    if block.caption:
        flow.lines(block.caption, SMALL)
    flow.y += 4.0


def _signatures(flow: Flow, block: Signatures) -> None:
    parts = (("Name", 0.38), ("Signature", 0.38), ("Date", 0.24))
    canvas = flow.canvas
    for role in block.roles:
        flow.room(46.0)
        flow.lines(role, BODY, bold=True)
        flow.y += 18.0
        x = MARGIN_X
        canvas.set_draw_color(0, 0, 0)
        canvas.set_line_width(0.5)
        for name, share in parts:
            w = flow.width * share
            canvas.line(x, flow.y, x + w - 12.0, flow.y)
            canvas.put(x, flow.y + SMALL + 1.0, name, SMALL, color=GREY)
            x += w
        flow.y += SMALL * LEADING + 10.0


_HANDLERS = {Title: _title, Heading: _heading, Fields: _fields, Paragraph: _paragraph,
             Table: _table, PictogramRow: _pictograms, HazardText: _hazards, QrCode: _qr,
             Signatures: _signatures}


def _flow_all(documents: Sequence[Document], pages: int | None) -> PageCanvas:
    canvas = PageCanvas(pages)
    for document in documents:
        flow = Flow(canvas, document)
        for block in document.blocks:
            flow.block(block)
    return canvas


def page_canvas(documents: Sequence[Document]) -> PageCanvas:
    """A PDF of A4 documents, each starting on a new page; the footers count the file's
    pages (a first pass finds how many there are)."""
    return _flow_all(documents, _flow_all(documents, None).page)
