"""The pH curve of a neutralization plan: pH against the reagent added.

Drawn on textual-plot's :class:`PlotWidget`.  Every mark is told apart by its shape and
a text label, never by colour alone, so the plot reads the same in 16 colours and
with NO_COLOR:

* the curve is a braille line;
* the acceptance window is two dashed horizontal lines (``╌``) labelled with their pH;
* the dose to the target pH is a vertical line (``│``) labelled ``to pH …``;
* equivalence points are diamonds (``◆``) labelled ``E1``, ``E2``…, explained in the
  key line under the plot.

The widget holds the data it was given (:attr:`PHCurve.data`) so that tests and the
screen can check what is drawn without reading pixels.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from textual.app import ComposeResult
from textual.containers import Vertical
from textual.css.query import NoMatches
from textual.widgets import Static
from textual_hires_canvas import Canvas, HiResMode, TextAlign
from textual_plot import PlotWidget

from carboy.tui.app.widgets import redraw

PH_AXIS = (0.0, 14.0)
WINDOW_MARK = "╌"
EQUIVALENCE_MARK = "◆"
CURVE_STYLE = "bold"
MARK_STYLE = "bold"
STALE_STYLE = "dim"
WINDOW_SAMPLES = 400
"""Points along each window edge: enough for a dash in every cell of a wide terminal."""


@dataclass(frozen=True)
class EquivalenceMark:
    """One labelled equivalence point, in the units of the x axis."""

    tag: str
    x: float
    pH: float  # noqa: N815 - the chemists' spelling
    label: str


@dataclass(frozen=True)
class CurveData:
    """What the plot shows; ``x`` is in ``x_unit`` of reagent added."""

    x: np.ndarray
    pH: np.ndarray  # noqa: N815
    x_unit: str
    reagent: str
    window: tuple[float, float]
    target_pH: float  # noqa: N815
    target_x: float | None
    equivalence: tuple[EquivalenceMark, ...] = field(default_factory=tuple)

    @property
    def x_label(self) -> str:
        return f"{self.reagent} added / {self.x_unit}"


def even_ticks(value: float, most: int = 5) -> list[float]:
    """Ticks from 0 past ``value`` at an even step of 1, 2, 2.5 or 5 × 10ⁿ, at most
    ``most`` intervals (``6.8`` -> 0, 2, 4, 6, 8)."""
    if not value > 0 or not np.isfinite(value):
        return [0.0, 1.0]
    rough = value / most
    magnitude = 10.0 ** np.floor(np.log10(rough))
    step = next(m * magnitude for m in (1.0, 2.0, 2.5, 5.0, 10.0)
                if m * magnitude >= rough * (1 - 1e-9))
    n = int(np.ceil(value / step - 1e-9))
    return [float(round(k * step, 12)) for k in range(n + 1)]


def reagent_axis(plan) -> tuple[str, float]:
    """The unit the x axis uses for ``plan``'s reagent, and the factor from mol to it.

    A solution is measured by volume (mL, or L when the curve goes past 2 L); a solid
    by mass (g, or kg past 2 kg).
    """
    reagent = plan.reagent
    top_mol = float(np.max(plan.curve[:, 0])) if len(plan.curve) else 0.0
    if reagent.conc_molar is not None:
        per_mol_l = 1.0 / reagent.conc_molar
        return ("L", per_mol_l) if top_mol * per_mol_l > 2.0 else ("mL", per_mol_l * 1000.0)
    per_mol_g = reagent.mass_g(1.0)
    return ("kg", per_mol_g / 1000.0) if top_mol * per_mol_g > 2000.0 else ("g", per_mol_g)


def curve_data_from_plan(plan) -> CurveData:
    """The plot's data for a :class:`~carboy.model.planner.Plan`."""
    unit, factor = reagent_axis(plan)
    target = plan.to_target
    marks = tuple(
        EquivalenceMark(f"E{i}", e.reagent_mol * factor, e.pH, e.label)
        for i, e in enumerate(plan.equivalence_points, start=1))
    return CurveData(
        x=np.asarray(plan.curve[:, 0], dtype=float) * factor,
        pH=np.asarray(plan.curve[:, 1], dtype=float),
        x_unit=unit,
        reagent=plan.reagent.key,
        window=(float(plan.window[0]), float(plan.window[1])),
        target_pH=float(target.target_pH),
        target_x=None if not target.reachable else target.reagent_mol * factor,
        equivalence=marks,
    )


def same_curve(a: CurveData | None, b: CurveData | None) -> bool:
    """Whether two curves draw the same (their arrays compared by value)."""
    if a is None or b is None:
        return a is b
    return (a.x_unit, a.reagent, a.window, a.target_pH, a.target_x, a.equivalence) == \
        (b.x_unit, b.reagent, b.window, b.target_pH, b.target_x, b.equivalence) and \
        np.array_equal(a.x, b.x) and np.array_equal(a.pH, b.pH)


def curve_key(data: CurveData | None, *, stale: bool = False) -> str:
    """The key line under the plot: what each mark means, equivalence points spelled out."""
    if data is None:
        return "No curve yet: complete the sample and the reagent."
    lo, hi = data.window
    parts = [f"across: {data.x_label}",
             f"{WINDOW_MARK * 2} window pH {lo:g}–{hi:g} (local rules set the real one)"]
    if data.target_x is not None:
        parts.append(f"│ to pH {data.target_pH:g}: {data.target_x:.4g} {data.x_unit}")
    else:
        parts.append(f"pH {data.target_pH:g} not reachable with this reagent")
    for m in data.equivalence:
        parts.append(f"{EQUIVALENCE_MARK}{m.tag} {m.x:.4g} {data.x_unit}, pH {m.pH:.2f}: {m.label}")
    head = "STALE (inputs changed; this is the last good plan) · " if stale else ""
    return head + " · ".join(parts)


class PHCurve(PlotWidget):
    """The plot itself; give it data with :meth:`show_curve`."""

    DEFAULT_CSS = """
    PHCurve {
        height: 1fr;
        min-height: 8;
    }
    """

    def __init__(self, *, id: str | None = None, classes: str | None = None) -> None:  # noqa: A002
        super().__init__(id=id, classes=classes, allow_pan_and_zoom=True)
        self.data: CurveData | None = None
        self.stale = False

    def on_mount(self) -> None:
        self.margin_left = 5
        self.margin_bottom = 2
        self.margin_top = 1
        # PlotWidget clears itself on mount, after this handler: draw once it has.
        self.call_after_refresh(self._draw)

    def show_curve(self, data: CurveData | None, *, stale: bool = False) -> None:
        """Show ``data`` (None: empty axes); ``stale`` greys it and says so."""
        if stale == self.stale and same_curve(data, self.data):
            return  # drawn already
        self.data = data
        self.stale = stale
        self._draw()

    def mark_stale(self, stale: bool) -> None:
        if stale != self.stale:
            self.stale = stale
            self._draw()

    def _draw(self) -> None:
        if not self.is_mounted:
            return
        self.clear()
        self.set_ylimits(*PH_AXIS)
        self.set_ylabel("pH")
        data = self.data
        if data is None or len(data.x) < 2:
            self.set_xlimits(0.0, 1.0)
            self.set_xlabel("reagent added")
            return
        ticks = even_ticks(float(np.max(data.x)))
        x0, x1 = 0.0, ticks[-1]
        self.set_xlimits(x0, x1)
        self.set_xlabel(data.x_label)
        self.set_xticks(ticks)
        edge_x = np.linspace(x0, x1, WINDOW_SAMPLES)
        for edge in data.window:
            self.scatter(edge_x, np.full_like(edge_x, edge), marker=WINDOW_MARK,
                         marker_style="", label=None)
        style = STALE_STYLE if self.stale else CURVE_STYLE
        self.plot(data.x, np.clip(data.pH, *PH_AXIS), line_style=style,
                  hires_mode=HiResMode.BRAILLE)
        if data.equivalence:
            self.scatter([m.x for m in data.equivalence], [m.pH for m in data.equivalence],
                         marker=EQUIVALENCE_MARK, marker_style=MARK_STYLE)
        if data.target_x is not None and x0 <= data.target_x <= x1:
            self.add_v_line(data.target_x, line_style=MARK_STYLE)

    def _render_plot(self) -> None:
        super()._render_plot()
        data = self.data
        try:
            canvas = self.query_one("#plot", Canvas)
        except NoMatches:
            return
        if canvas._canvas_size is None or data is None or len(data.x) < 2:
            return
        right = self._scale_rectangle.right - 1
        for edge in data.window:
            _, py = self.get_pixel_from_coordinate(0.0, edge)
            canvas.write_text(right, py, f"{edge:g}", align=TextAlign.RIGHT)
        if data.target_x is not None:
            px, _ = self.get_pixel_from_coordinate(data.target_x, 0.0)
            text = f"to pH {data.target_pH:g}"
            if px + 1 + len(text) <= right:
                canvas.write_text(px + 1, 1, text)
            else:
                canvas.write_text(px - 1, 1, text, align=TextAlign.RIGHT)
        for m in data.equivalence:
            px, py = self.get_pixel_from_coordinate(m.x, m.pH)
            if px + 1 + len(m.tag) <= right:
                canvas.write_text(px + 1, py, m.tag)
            else:
                canvas.write_text(px - 1, py, m.tag, align=TextAlign.RIGHT)
        if self.stale:
            canvas.write_text(2, 1, "STALE")


class PHCurvePanel(Vertical):
    """The plot with its key line underneath."""

    DEFAULT_CSS = """
    PHCurvePanel {
        height: 1fr;
    }
    PHCurvePanel > #curve-key {
        height: auto;
        max-height: 4;
        padding: 0 1;
    }
    """

    def compose(self) -> ComposeResult:
        yield PHCurve(id="ph-curve")
        yield Static(curve_key(None), id="curve-key", markup=False)

    @property
    def plot(self) -> PHCurve:
        return self.query_one(PHCurve)

    def show_curve(self, data: CurveData | None, *, stale: bool = False) -> None:
        self.plot.show_curve(data, stale=stale)
        redraw.update(self.query_one("#curve-key", Static), curve_key(data, stale=stale))

    def mark_stale(self, stale: bool) -> None:
        self.plot.mark_stale(stale)
        redraw.update(self.query_one("#curve-key", Static),
                      curve_key(self.plot.data, stale=stale))
