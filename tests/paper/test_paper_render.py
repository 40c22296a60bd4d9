"""The PDFs, read back with pypdf: the text that must be there, page sizes, errors."""

from __future__ import annotations

import pytest
from pdf_reading import TODAY, page_sizes, pdf_text, read_pdf

from carboy.errors import CarboyError, InvalidInput
from carboy.store import disposal_record, documents
from carboy.tui.paper.render import PaperError, render, write_pdf

LABEL_PT = (198.43, 104.88)   # 70 x 37 mm at 72 pt to the inch
A4_PT = (595.28, 841.89)      # 210 x 297 mm (ISO 216)


def test_one_label_per_page_at_70_by_37_mm(demo_store):
    docs = documents.bottle_labels(demo_store, [1, 12], today=TODAY)
    data = render(docs)
    assert page_sizes(data) == [LABEL_PT, LABEL_PT]
    pages = [p.extract_text() for p in read_pdf(data).pages]
    assert "bottle 1" in pages[0] and "bottle 12" in pages[1]
    for code in ("H290", "H314", "H335", "GHS05", "GHS07", "DANGER"):
        assert code in pages[0]
    for code in ("H300", "H310", "H330", "EUH071", "GHS06"):
        assert code in pages[1]
    assert "Hydrofluoric acid · HF" in pages[1]
    assert "Check the supplier's safety data sheet." in pages[1]


def test_a4_sheet_holds_24_labels(demo_store):
    docs = documents.bottle_labels(demo_store, list(range(1, 26)), today=TODAY)
    data = render(docs, label_size="A4-sheet")
    assert page_sizes(data) == [A4_PT, A4_PT]
    pages = [p.extract_text() for p in read_pdf(data).pages]
    assert pages[0].count("bottle ") == 24 and "bottle 25" in pages[1]


def test_unicode_survives_the_round_trip(demo_store):
    # a formula's subscripts, the middle dot and a minus sign, as carboy prints them
    text = pdf_text(render(documents.bottle_labels(demo_store, [30], today=TODAY)))
    assert "C₆H₈O₇" in text and "·" in text


def test_due_list_pdf_has_totals_dates_and_page_numbers(demo_store):
    doc = documents.due_list(demo_store, today=TODAY, storeroom="Fenwold Annex storeroom")
    data = render([doc])
    text = pdf_text(data)
    assert page_sizes(data) == [A4_PT]
    assert "15 listed" in text and "15 need attention" in text
    assert f"Printed {TODAY.isoformat()} with carboy" in text
    assert "Page 1 of 1" in text and "Fenwold Annex storeroom" in text
    assert "−5.8 %" in text   # the off-label bottle, with a true minus sign


def test_long_tables_run_onto_more_pages_with_their_headings(demo_store):
    doc = documents.due_list(demo_store, today=TODAY, everything=True)
    long = type(doc)(doc.kind, doc.title, doc.blocks * 3, doc.page, doc.header, doc.printed_on)
    data = render([long])
    pages = [p.extract_text() for p in read_pdf(data).pages]
    assert len(pages) >= 2
    for k, page in enumerate(pages, 1):
        assert f"Page {k} of {len(pages)}" in page
        assert "What is due" in page   # the column headings on every page


def test_disposal_record_pdf(demo_store):
    doc = disposal_record.disposal_record(demo_store, "HF-04", today=TODAY)
    text = pdf_text(render([doc]))
    for needed in ("Waste container disposal record", "HF-04", "licensed-disposal",
                   "Received by (licensed disposal contractor)", "Signature",
                   "HF=0.5M", "NaF=10 g", "3 counted"):
        assert needed in text


def test_labels_and_pages_do_not_mix(demo_store):
    label = documents.bottle_label(demo_store, 1, today=TODAY)
    due = documents.due_list(demo_store, today=TODAY)
    with pytest.raises(InvalidInput, match="separate files"):
        render([label, due])
    with pytest.raises(InvalidInput, match="label size"):
        render([label], label_size="A5")
    with pytest.raises(InvalidInput, match="nothing to print"):
        render([])


def test_unwritable_path_is_one_clear_error(tmp_path, demo_store):
    docs = [documents.bottle_label(demo_store, 1, today=TODAY)]
    for bad in (tmp_path / "missing" / "x.pdf", tmp_path):
        with pytest.raises(PaperError) as caught:
            write_pdf(docs, bad)
        assert isinstance(caught.value, CarboyError)
        message = str(caught.value)
        assert str(bad) in message and "\n" not in message
    written = write_pdf(docs, tmp_path / "ok.pdf")
    assert written.read_bytes().startswith(b"%PDF-")


def test_a_pdf_never_replaces_a_file_that_is_not_a_pdf(tmp_path, demo_store, demo_path):
    """--pdf given the database's own path (or any other file) keeps that file whole and
    refuses; an earlier PDF or an empty file is replaced; no partial file is left."""
    docs = [documents.bottle_label(demo_store, 1, today=TODAY)]
    before = demo_path.read_bytes()
    notes = tmp_path / "notes.txt"
    notes.write_text("keep me", encoding="utf-8")
    for kept in (demo_path, notes):
        with pytest.raises(PaperError, match="not a PDF is already there"):
            write_pdf(docs, kept)
    assert demo_path.read_bytes() == before and notes.read_text(encoding="utf-8") == "keep me"
    with pytest.raises(PaperError, match="no file name given"):
        write_pdf(docs, "")
    earlier, empty = tmp_path / "earlier.pdf", tmp_path / "empty.pdf"
    earlier.write_bytes(b"%PDF-1.3 an earlier one")
    empty.write_bytes(b"")
    for replaced in (earlier, empty):
        assert write_pdf(docs, replaced).read_bytes().startswith(b"%PDF-")
        assert len(replaced.read_bytes()) > 1000
    assert not [p.name for p in tmp_path.iterdir() if p.name.endswith(".partial")]


def test_embedded_font_covers_what_carboy_prints():
    from importlib import resources

    from fontTools.ttLib import TTFont

    from carboy.tui.paper.canvas import FONT_FILES, font_path

    needed = set("µ°·±−≤≥→←↓≈×ΔΣαβγμρ–—…✓✗⚠◆•") | set("₀₁₂₃₄₅₆₇₈₉⁰¹²³⁴⁵⁶⁷⁸⁹⁺⁻")
    for style in FONT_FILES:
        cmap = TTFont(font_path(style)).getBestCmap()
        assert not sorted(c for c in needed if ord(c) not in cmap), style
    licence = resources.files("carboy.tui.paper").joinpath("fonts").joinpath("LICENSE")
    assert "Bitstream" in licence.read_text(encoding="utf-8")
