"""Fixtures for the paper tests: a demo storeroom and PDF reading helpers."""

from __future__ import annotations

import io

import pytest
from pypdf import PdfReader

from carboy.store import demo
from carboy.store.db import open_database

TODAY = demo.DEMO_TODAY


@pytest.fixture
def demo_path(copy_demo):
    """A private copy of the demo storeroom."""
    return copy_demo()


@pytest.fixture
def demo_store(demo_path):
    s = open_database(demo_path)
    yield s
    s.close()


def read_pdf(data: bytes) -> PdfReader:
    return PdfReader(io.BytesIO(data))


def pdf_text(data: bytes) -> str:
    return "\n".join(page.extract_text() for page in read_pdf(data).pages)


def page_sizes(data: bytes) -> list[tuple[float, float]]:
    return [(round(float(p.mediabox.width), 2), round(float(p.mediabox.height), 2))
            for p in read_pdf(data).pages]
