"""A regression check of one label's drawing: its PDF drawing operations, normalised.

The expected dump is ``data/label_drawing.txt``.  After an intended change of the label's
look, regenerate it with ``CARBOY_UPDATE_DRAWING=1 python3 -m pytest
tests/paper/test_paper_drawing.py``, look at the label (render it to PNG), and commit both.
"""

from __future__ import annotations

import os
import re
from pathlib import Path

from pdf_reading import read_pdf

from carboy.model.label_documents import BottleFacts, bottle_label
from carboy.model.labels import make_label
from carboy.tui.paper.render import render

EXPECTED = Path(__file__).parent / "data" / "label_drawing.txt"
_TOKEN = re.compile(rb"<[0-9A-Fa-f\s]*>|\((?:\\.|[^\\)])*\)|/[^\s/<>\[\]()]+|"
                    rb"[-+]?(?:\d+\.?\d*|\.\d+)|[A-Za-z'\"*]+|\[|\]")


def _label_pdf(catalog) -> bytes:
    label = make_label("HCl", conc_text="37 %w/w", mass_percent=37.0, prepared_on="2025-01-10",
                       prepared_by="x", catalog=catalog)
    facts = BottleFacts(bottle_id=7, name="Hydrochloric acid", formula="HCl",
                        labelled="37 %w/w", mass_percent=37.0, measured=None, made_here=False,
                        dated="2025-01-10", lot="FW-24-117", expires_on="2027-01-10",
                        storeroom="Fenwold Annex storeroom")
    return render([bottle_label(label, facts)])


def normalised_operations(data: bytes) -> str:
    """One line per drawing operator with its operands; numbers to 0.01, text as <text>."""
    stream = read_pdf(data).pages[0].get_contents().get_data()
    lines, operands = [], []
    for token in _TOKEN.findall(stream):
        text = token.decode("latin-1")
        if text[0] in "<(":
            operands.append("<text>")
        elif re.fullmatch(r"[-+]?(?:\d+\.?\d*|\.\d+)", text):
            operands.append(f"{float(text):.2f}")
        elif text[0] == "/" or text in "[]":
            operands.append(text)
        else:
            lines.append(" ".join([*operands, text]))
            operands = []
    return "\n".join(lines) + "\n"


def test_label_drawing_matches_the_recorded_one(catalog):
    got = normalised_operations(_label_pdf(catalog))
    if os.environ.get("CARBOY_UPDATE_DRAWING"):
        EXPECTED.write_text(got, encoding="utf-8")
    expected = EXPECTED.read_text(encoding="utf-8")
    assert got == expected


def test_the_dump_sees_geometry():
    # the normaliser keeps what a layout change moves: a changed coordinate shows
    a = normalised_operations(_pdf_with_rect(10))
    b = normalised_operations(_pdf_with_rect(11))
    assert a != b and "re" in a


def _pdf_with_rect(x: float) -> bytes:
    from carboy.tui.paper.canvas import Canvas

    canvas = Canvas((100.0, 100.0))
    canvas.add_page()
    canvas.rect(x, 10, 20, 20, style="F")
    return bytes(canvas.output())
