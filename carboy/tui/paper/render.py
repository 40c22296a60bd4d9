"""Documents to PDF bytes or a PDF file: the one entry point both front ends use."""

from __future__ import annotations

import os
from collections.abc import Iterable
from dataclasses import dataclass
from pathlib import Path

from carboy.errors import CarboyError, InvalidInput
from carboy.model.documents import PAGE_LABEL, Document
from carboy.tui.paper.label import label_canvas, layout_label
from carboy.tui.paper.pages import page_canvas

LABEL_SIZES = ("70x37mm", "A4-sheet")
"""How labels are printed: one 70 × 37 mm label to a page, or 24 to an A4 sheet."""


@dataclass
class PaperError(CarboyError, OSError):
    """The PDF could not be written where it was asked for."""

    path: str
    reason: str

    def __str__(self) -> str:
        return f"cannot write the PDF to {self.path!r}: {self.reason}"


def render(documents: Iterable[Document], *, label_size: str = "70x37mm") -> bytes:
    """The PDF of ``documents``: all labels, or all A4 documents (not a mix)."""
    docs = list(documents)
    if not docs:
        raise InvalidInput("documents", "", "nothing to print")
    if label_size not in LABEL_SIZES:
        raise InvalidInput("label size", label_size, "expected one of " + ", ".join(LABEL_SIZES),
                           field="size")
    labels = [d.page == PAGE_LABEL for d in docs]
    if any(labels) and not all(labels):
        raise InvalidInput("documents", [d.kind for d in docs],
                           "labels and A4 pages go in separate files")
    if all(labels):
        canvas = label_canvas([layout_label(d) for d in docs], label_size == "A4-sheet")
    else:
        canvas = page_canvas(docs)
    canvas.set_title(docs[0].title)
    return bytes(canvas.output())


def write_pdf(documents: Iterable[Document], path: str | os.PathLike, *,
              label_size: str = "70x37mm") -> Path:
    """Render ``documents`` and write them to ``path``, replacing only an earlier PDF (or
    an empty file) there: any other file (the database itself, a document) is kept and
    the PDF refused.

    Raises PaperError naming the path when it cannot be written; the documents are
    rendered first and written beside the target, then moved over it, so neither a bad
    document nor a failed write leaves a broken file behind.
    """
    if not str(path).strip():
        raise PaperError(str(path), "no file name given")
    data = render(documents, label_size=label_size)
    target = Path(path)
    partial = target.with_name(f".{target.name}.partial")
    try:
        if target.is_dir():
            raise IsADirectoryError(21, "it is a directory")
        if not _replaceable(target):
            raise PaperError(str(path), "a file that is not a PDF is already there (carboy "
                             "replaces only an earlier PDF): choose another name")
        partial.write_bytes(data)
        os.replace(partial, target)
    except OSError as exc:
        partial.unlink(missing_ok=True)
        if isinstance(exc, PaperError):
            raise
        raise PaperError(str(path), exc.strerror or str(exc)) from None
    return target


def _replaceable(target: Path) -> bool:
    """True where nothing is at ``target``, or an empty file, or a PDF."""
    try:
        with open(target, "rb") as f:
            return f.read(5) in (b"", b"%PDF-")
    except FileNotFoundError:
        return True
