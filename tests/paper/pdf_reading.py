"""Reading PDFs back in the paper tests (a module of its own: a name no other tier uses)."""

from __future__ import annotations

import io

from pypdf import PdfReader

from carboy.store import demo

TODAY = demo.DEMO_TODAY


def read_pdf(data: bytes) -> PdfReader:
    return PdfReader(io.BytesIO(data))


def pdf_text(data: bytes) -> str:
    return "\n".join(page.extract_text() for page in read_pdf(data).pages)


def page_sizes(data: bytes) -> list[tuple[float, float]]:
    return [(round(float(p.mediabox.width), 2), round(float(p.mediabox.height), 2))
            for p in read_pdf(data).pages]
