"""The nine GHS pictograms as vector drawings of carboy's own design.

Each pictogram is the standard frame, a square set on its point with a red border and a
white ground, around a black symbol.  The symbols here are simple shapes drawn for
carboy (polygons and circles in a unit box, y downwards, the diamond touching the box's
edge midpoints); they are meant to be recognised at a glance, not to copy any artwork.
The code (GHS01 … GHS09) is printed beside each pictogram by the caller.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

from carboy.tui.paper.canvas import BLACK, GHS_RED, Canvas

Point = tuple[float, float]
Shape = tuple  # ("poly", points, fill) or ("circle", (cx, cy), r, fill)
WHITE = (255, 255, 255)
BORDER = 0.075
"""The red border's width as a fraction of the diamond's width."""
CURVE_STEPS = 10


def _bar(p: Point, q: Point, width: float) -> list[Point]:
    """A straight bar of ``width`` from ``p`` to ``q``."""
    dx, dy = q[0] - p[0], q[1] - p[1]
    length = math.hypot(dx, dy)
    nx, ny = -dy / length * width / 2, dx / length * width / 2
    return [(p[0] + nx, p[1] + ny), (q[0] + nx, q[1] + ny), (q[0] - nx, q[1] - ny),
            (p[0] - nx, p[1] - ny)]


def _star(cx: float, cy: float, outer: float, inner: float, points: int,
          turn: float = 0.0) -> list[Point]:
    out = []
    for k in range(2 * points):
        r = outer if k % 2 == 0 else inner
        a = math.pi * k / points + turn
        out.append((cx + r * math.sin(a), cy - r * math.cos(a)))
    return out


def _path(start: Point, *segments: tuple[float, ...]) -> list[Point]:
    """A closed outline: segments are (x, y) lines or (x1, y1, x2, y2, x, y) cubic curves."""
    points = [start]
    for seg in segments:
        if len(seg) == 2:
            points.append((seg[0], seg[1]))
            continue
        (x0, y0), (x1, y1, x2, y2, x3, y3) = points[-1], seg
        for i in range(1, CURVE_STEPS + 1):
            t = i / CURVE_STEPS
            u = 1 - t
            points.append((u**3 * x0 + 3 * u * u * t * x1 + 3 * u * t * t * x2 + t**3 * x3,
                           u**3 * y0 + 3 * u * u * t * y1 + 3 * u * t * t * y2 + t**3 * y3))
    return points


def _ellipse(cx: float, cy: float, rx: float, ry: float, n: int = 24) -> list[Point]:
    return [(cx + rx * math.cos(2 * math.pi * k / n), cy + ry * math.sin(2 * math.pi * k / n))
            for k in range(n)]


def _poly(points: Sequence[Point], fill=BLACK) -> Shape:
    return ("poly", tuple(points), fill)


def _circle(cx: float, cy: float, r: float, fill=BLACK) -> Shape:
    return ("circle", (cx, cy), r, fill)


_FLAME = _path((0.38, 0.66), (0.33, 0.55, 0.41, 0.47, 0.45, 0.40),
               (0.46, 0.48, 0.48, 0.51, 0.50, 0.53), (0.49, 0.43, 0.52, 0.33, 0.52, 0.24),
               (0.60, 0.33, 0.68, 0.46, 0.62, 0.66))
_SMALL_FLAME = _path((0.41, 0.55), (0.38, 0.47, 0.43, 0.42, 0.46, 0.37),
                     (0.47, 0.42, 0.48, 0.44, 0.50, 0.45), (0.49, 0.38, 0.51, 0.32, 0.51, 0.25),
                     (0.57, 0.32, 0.63, 0.42, 0.59, 0.55))
_TORSO = _path((0.34, 0.74), (0.33, 0.52, 0.41, 0.45, 0.50, 0.45),
               (0.59, 0.45, 0.67, 0.52, 0.66, 0.74))
_SLAB = [(0.29, 0.58), (0.35, 0.58), (0.37, 0.62), (0.39, 0.59), (0.41, 0.62), (0.43, 0.58),
         (0.48, 0.58), (0.48, 0.67), (0.29, 0.67)]
_HAND = [(0.53, 0.61), (0.535, 0.55), (0.565, 0.55), (0.565, 0.60), (0.575, 0.60),
         (0.575, 0.535), (0.605, 0.535), (0.605, 0.57), (0.625, 0.60), (0.645, 0.57),
         (0.645, 0.545), (0.675, 0.545), (0.675, 0.60), (0.69, 0.60), (0.705, 0.565),
         (0.73, 0.575), (0.71, 0.67), (0.53, 0.67)]

SYMBOLS: dict[str, tuple[Shape, ...]] = {
    # exploding bomb: a round bomb under a burst with flying fragments
    "GHS01": (
        _poly(_star(0.55, 0.42, 0.17, 0.08, 9)),
        _circle(0.42, 0.60, 0.11),
        _poly(_bar((0.33, 0.33), (0.38, 0.37), 0.035)),
        _poly(_bar((0.66, 0.60), (0.71, 0.62), 0.035)),
    ),
    # flame over a bar
    "GHS02": (
        _poly(_FLAME),
        _poly(_bar((0.33, 0.71), (0.67, 0.71), 0.04)),
    ),
    # flame over a circle (a ring), over a bar
    "GHS03": (
        _poly(_SMALL_FLAME),
        _circle(0.50, 0.59, 0.10),
        _circle(0.50, 0.59, 0.055, WHITE),
        _poly(_bar((0.35, 0.73), (0.65, 0.73), 0.035)),
    ),
    # gas cylinder lying on its side, valve to the right
    "GHS04": (
        _circle(0.33, 0.57, 0.085),
        _poly([(0.33, 0.485), (0.60, 0.485), (0.60, 0.655), (0.33, 0.655)]),
        _circle(0.60, 0.57, 0.085),
        _poly([(0.68, 0.545), (0.72, 0.545), (0.72, 0.595), (0.68, 0.595)]),
        _poly([(0.72, 0.515), (0.75, 0.515), (0.75, 0.625), (0.72, 0.625)]),
    ),
    # corrosion: two tubes dripping onto a slab and a hand, both eaten away
    "GHS05": (
        _poly(_bar((0.355, 0.30), (0.455, 0.385), 0.06)),
        _poly(_bar((0.645, 0.30), (0.545, 0.385), 0.06)),
        _circle(0.445, 0.455, 0.02), _circle(0.445, 0.52, 0.016),
        _circle(0.555, 0.455, 0.02), _circle(0.555, 0.52, 0.016),
        _poly(_SLAB), _poly(_HAND),
        _poly(_bar((0.32, 0.705), (0.68, 0.705), 0.025)),
    ),
    # skull and crossbones
    "GHS06": (
        _poly(_bar((0.33, 0.58), (0.67, 0.73), 0.04)),
        _poly(_bar((0.33, 0.73), (0.67, 0.58), 0.04)),
        _circle(0.33, 0.58, 0.025), _circle(0.67, 0.73, 0.025),
        _circle(0.33, 0.73, 0.025), _circle(0.67, 0.58, 0.025),
        _circle(0.50, 0.39, 0.115),
        _poly([(0.43, 0.44), (0.57, 0.44), (0.56, 0.55), (0.44, 0.55)]),
        _circle(0.455, 0.39, 0.032, WHITE), _circle(0.545, 0.39, 0.032, WHITE),
        _poly([(0.50, 0.44), (0.485, 0.475), (0.515, 0.475)], WHITE),
    ),
    # exclamation mark
    "GHS07": (
        _poly([(0.455, 0.25), (0.545, 0.25), (0.525, 0.60), (0.475, 0.60)]),
        _circle(0.50, 0.69, 0.045),
    ),
    # health hazard: a bust with a burst on its chest
    "GHS08": (
        _circle(0.50, 0.33, 0.075),
        _poly(_TORSO),
        _poly(_star(0.50, 0.60, 0.095, 0.04, 8), WHITE),
    ),
    # environment: a bare tree and a fish on its back by the water line
    "GHS09": (
        _poly(_bar((0.35, 0.70), (0.35, 0.36), 0.035)),
        _poly(_bar((0.35, 0.50), (0.27, 0.42), 0.025)),
        _poly(_bar((0.35, 0.45), (0.43, 0.36), 0.025)),
        _poly(_bar((0.35, 0.58), (0.42, 0.52), 0.02)),
        _poly(_ellipse(0.575, 0.62, 0.10, 0.045)),
        _poly([(0.66, 0.62), (0.745, 0.575), (0.745, 0.665)]),
        _circle(0.51, 0.615, 0.013, WHITE),
        _poly(_bar((0.26, 0.715), (0.74, 0.715), 0.02)),
    ),
}
CODES = tuple(sorted(SYMBOLS))


def diamond(x: float, y: float, size: float) -> list[Point]:
    """The corners of a pictogram's diamond in a ``size`` box at (x, y): top, right,
    bottom, left."""
    half = size / 2
    return [(x + half, y), (x + size, y + half), (x + half, y + size), (x, y + half)]


def draw_pictogram(canvas: Canvas, code: str, x: float, y: float, size: float) -> None:
    """Draw pictogram ``code`` with its diamond in the ``size`` × ``size`` box at (x, y)."""
    border = BORDER * size
    canvas.set_fill_color(*GHS_RED)
    canvas.polygon(diamond(x, y, size), style="F")
    # the white ground: the diamond shrunk so that each side is ``border`` inside
    inset = border * math.sqrt(2)
    canvas.set_fill_color(*WHITE)
    canvas.polygon(diamond(x + inset, y + inset, size - 2 * inset), style="F")
    for shape in SYMBOLS[code]:
        if shape[0] == "poly":
            _, points, fill = shape
            canvas.set_fill_color(*fill)
            canvas.polygon([(x + px * size, y + py * size) for px, py in points], style="F")
        else:
            _, (cx, cy), r, fill = shape
            canvas.set_fill_color(*fill)
            canvas.circle(x + cx * size, y + cy * size, r * size, style="F")
