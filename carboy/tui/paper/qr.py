"""QR codes drawn as vector squares (segno makes the matrix; nothing is rasterised)."""

from __future__ import annotations

import segno

from carboy.tui.paper.canvas import BLACK, Canvas

QUIET_MODULES = 2
"""White modules kept around the code inside its box (the label's edge adds more)."""


def modules(payload: str) -> tuple[tuple[bool, ...], ...]:
    """The QR matrix of ``payload`` (error correction M or better), dark modules True."""
    code = segno.make_qr(payload, error="m")
    return tuple(tuple(bool(v) for v in row) for row in code.matrix)


def draw_qr(canvas: Canvas, payload: str, x: float, y: float, size: float) -> None:
    """Draw the QR code of ``payload`` in the ``size`` × ``size`` box at (x, y), points."""
    matrix = modules(payload)
    n = len(matrix) + 2 * QUIET_MODULES
    cell = size / n
    canvas.set_fill_color(*BLACK)
    for r, row in enumerate(matrix):
        c = 0
        while c < len(row):
            if not row[c]:
                c += 1
                continue
            start = c
            while c < len(row) and row[c]:
                c += 1
            # one rectangle per run of dark modules keeps the drawing short
            canvas.rect(x + (QUIET_MODULES + start) * cell, y + (QUIET_MODULES + r) * cell,
                        (c - start) * cell, cell, style="F")
