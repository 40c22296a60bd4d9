"""The document vocabulary (carboy.model.documents): plain data, checked at the boundary."""

from __future__ import annotations

import pytest

from carboy.errors import InvalidInput
from carboy.model.documents import (
    PAGE_LABEL,
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
    formula_text,
    table_document,
)


@pytest.mark.parametrize("formula, printed", [
    ("H2SO4", "H₂SO₄"),
    ("CuSO4.5H2O", "CuSO₄·5H₂O"),       # the hydrate's count stays on the line
    ("CuSO4·5H2O", "CuSO₄·5H₂O"),
    ("Ca(OH)2", "Ca(OH)₂"),
    ("CH3CH(OH)COOH", "CH₃CH(OH)COOH"),
    ("NO3-", "NO₃⁻"),                    # charges as carboy writes them: sign first
    ("SO4-2", "SO₄²⁻"),
    ("NH4+", "NH₄⁺"),
    ("Tris-HCl", "Tris-HCl"),            # a name, not a charge
    ("sulfate", "sulfate"),
])
def test_formula_text(formula, printed):
    assert formula_text(formula) == printed


def test_blocks_refuse_what_cannot_be_printed():
    with pytest.raises(InvalidInput, match="GHS10"):
        PictogramRow(("GHS05", "GHS10"))
    with pytest.raises(InvalidInput, match="2 text cells"):
        Table((Column("a"), Column("b")), (("1", "2"), ("3",)))
    with pytest.raises(InvalidInput, match="2 text cells"):
        Table((Column("a"), Column("b")), (), totals=("only one",))
    with pytest.raises(InvalidInput, match="tone"):
        Paragraph("x", "shouting")
    with pytest.raises(InvalidInput, match="alignment"):
        Column("a", align="centre")
    with pytest.raises(InvalidInput, match="QR"):
        QrCode("")
    with pytest.raises(InvalidInput, match="page"):
        Document("x", "x", (), page="letter")
    with pytest.raises(InvalidInput, match="vocabulary"):
        Document("x", "x", ("a bare string",))


def test_text_lists_everything_a_document_prints():
    doc = Document("test", "T", (
        Title("Sulfuric acid", "H₂SO₄"), Heading("Section"),
        Fields((("Strength", "1 M"),)), Paragraph("Careful.", "caution"),
        Table((Column("What"), Column("Amount", "right")), (("HCl", "2 L"),),
              totals=("Total", "2 L")),
        PictogramRow(("GHS05",)), HazardText("Danger", (("H314", "Causes burns."),)),
        QrCode("carboy:bottle:7", "bottle 7"), Signatures(("Checked by",)),
    ), PAGE_LABEL, header="Storeroom X")
    lines = doc.text().splitlines()
    assert lines[0] == "Storeroom X"
    for expected in ("Sulfuric acid", "H₂SO₄", "Section", "Strength 1 M", "Careful.",
                     "What | Amount", "HCl | 2 L", "Total | 2 L", "GHS05", "DANGER",
                     "H314 Causes burns.", "bottle 7", "Checked by: name, signature, date"):
        assert expected in lines
    data = doc.to_dict()
    assert [b["block"] for b in data["blocks"]] == [
        "Title", "Heading", "Fields", "Paragraph", "Table", "PictogramRow", "HazardText",
        "QrCode", "Signatures"]
    assert data["blocks"][7]["payload"] == "carboy:bottle:7"


def test_table_document_is_the_shape_of_lists_and_reports():
    doc = table_document("report", "Treatments 2024", columns=(Column("Month"), Column("Litres")),
                         rows=[("Jan", "12"), ("Feb", "8")], totals=("Total", "20"),
                         summary=[("Year", "2024")], notes=["Source: the journal."],
                         header="Storeroom X", printed_on="2025-01-02")
    assert [type(b).__name__ for b in doc.blocks] == ["Title", "Fields", "Table", "Paragraph"]
    table = doc.blocks_of(Table)[0]
    assert table.totals == ("Total", "20") and len(table.rows) == 2
    assert doc.printed_on == "2025-01-02" and doc.page == "A4"
