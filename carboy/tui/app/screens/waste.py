"""Waste: the containers, how full they are, what is in them, and where they go next.

The disposal note stays on screen: carboy advises, the local disposal rules and
the institution's safety office decide.  A container holding anything that must
never go to the drain (fluoride, heavy metals, perchlorate …), or meant for a stream
that is never treated for the drain, says so and offers no neutralization plan.
Each container shows its stream; one whose contents disagree with it (or with each
other) is shown with the warnings, never changed.
"""

from __future__ import annotations

from collections import defaultdict
from dataclasses import dataclass, field

from rich.table import Table
from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.screen import Screen
from textual.widgets import DataTable, Static
from textual.worker import get_current_worker

from carboy.errors import CarboyError
from carboy.model.cautions import NO_DRAIN_TAGS
from carboy.model.compatibility import streams
from carboy.store import waste
from carboy.store.statuses import ContainerStatus
from carboy.tui.app.screens.confirm import ConfirmScreen
from carboy.tui.app.widgets.error_line import ErrorLine
from carboy.tui.app.widgets.marks import container_mark, fill_bar, fill_fraction, litres
from carboy.tui.app.widgets.mode_bar import ModeBar
from carboy.tui.app.widgets.safety_note import DISPOSAL_NOTE, LICENSED_ONLY_NOTE, SafetyNote
from carboy.tui.app.widgets.steady_footer import SteadyFooter
from carboy.tui.edge import describe

NO_DRAIN_NAMES = {
    "hf_type": "fluoride (HF-type)", "no_drain": "a no-drain substance",
    "heavy_metal": "a heavy metal", "chromic": "chromium(VI)", "perchloric": "perchlorate",
    "cyanide": "cyanide", "sulfide": "sulfide", "explosive_residue": "perchlorate residue",
}

def stream_short(key: str) -> str:
    """A stream in a word or two for the list (``HF/fluoride``), never its internal key."""
    found = streams().get(key or "")
    return found.name.split(" waste")[0] if found else (key or "—")


@dataclass(frozen=True)
class Detail:
    """One container as the detail pane shows it."""

    info: dict
    by_compound: list[tuple[str, float, float, int]]  # key, volume L, mass g, additions
    no_drain: dict[str, list[str]] = field(default_factory=dict)  # compound -> tag names

    @property
    def drain_stream(self) -> bool:
        """The container's stream may ever be treated for the drain."""
        st = streams().get(self.info.get("stream") or "")
        return st is not None and st.drain_treatable

    @property
    def licensed_only(self) -> bool:
        return (bool(self.no_drain) or not self.drain_stream
                or ContainerStatus(self.info["status"]).is_licensed_disposal)


def load_detail(store, label: str) -> Detail:
    from carboy.store.compounds import catalog_for

    info = waste.show(store, label)
    catalog = catalog_for(store)
    totals: dict[str, list[float]] = defaultdict(lambda: [0.0, 0.0, 0])
    for add in info["additions"]:
        if add["superseded"] or not add["composition"]:
            continue
        row = totals[add["compound_key"]]
        row[0] += add["volume_l"]
        row[1] += add["mass_g"] or 0.0
        row[2] += 1
    no_drain: dict[str, list[str]] = {}
    for key in totals:
        try:
            tags = catalog.compound(key).hazards & NO_DRAIN_TAGS
        except CarboyError:
            continue
        if tags:
            no_drain[key] = sorted(NO_DRAIN_NAMES.get(t, t) for t in tags)
    by_compound = sorted(((k, v[0], v[1], int(v[2])) for k, v in totals.items()),
                         key=lambda r: (-r[1], -r[2], r[0]))
    return Detail(info, by_compound, no_drain)


def route_text(detail: Detail) -> Text:
    status = detail.info["status"]
    if detail.no_drain:
        reasons = sorted({name for names in detail.no_drain.values() for name in names})
        who = ", ".join(detail.no_drain)
        return Text(LICENSED_ONLY_NOTE.format(reasons=f"contains {who} — "
                                              + ", ".join(reasons)), style="bold")
    if ContainerStatus(status).is_licensed_disposal:
        return Text("⚑ Held for licensed disposal: never treated here; the safety office "
                    "arranges collection.", style="bold")
    if not detail.drain_stream:
        return Text(f"⚑ Meant for {detail.info['stream_name']}: never treated for the drain; "
                    "the safety office arranges licensed disposal.", style="bold")
    return Text({
        "collecting": "Collecting: log additions (a); plan its neutralization (p) before it "
                      "is full.",
        "planned": "A plan is recorded: carry it out on the Neutralize screen (p) and record "
                   "the pH you measure.",
        "neutralized": "Neutralized: the route from here is set by local disposal rules and "
                       "the safety office; mark it disposed (d) once it has gone.",
        "disposed": f"Disposed on {detail.info.get('closed_on') or '?'}, by the route local "
                    "rules set.",
    }.get(status, status))


def fill_cell(volume_l: float, capacity_l: float, full: bool | None,
              nearly_full: bool | None) -> Text:
    """The fill bar, with the word the storeroom's fill levels give it (never colour alone)."""
    bar = fill_bar(volume_l, capacity_l)
    if full:
        bar.append(" ■ full", style="bold")
    elif nearly_full:
        bar.append(" ▲ nearly full", style="bold")
    return bar


def detail_renderable(detail: Detail) -> Table:
    info = detail.info
    grid = Table.grid(padding=(0, 1), expand=True)
    grid.add_column(style="bold", no_wrap=True)
    grid.add_column(ratio=1)
    head = Text(f"{info['label']}  ")
    head.append_text(container_mark(info["status"]))
    if info.get("location"):
        head.append(f"  · {info['location']}")
    grid.add_row("Container", head)
    fill = fill_cell(info["volume_l"], info["capacity_l"], info.get("full"),
                     info.get("nearly_full"))
    fill.append(f"  {litres(info['volume_l'])} of {litres(info['capacity_l'])}")
    if info.get("full"):
        fill.append("\nat the fill limit: it takes no more; plan its treatment or start "
                    "another container", style="bold")
    elif info.get("nearly_full"):
        fill.append("\nnearly full: plan its treatment soon", style="bold")
    grid.add_row("Fill", fill)
    stream = Text(info["stream_name"])
    if info.get("material"):
        stream.append(f" · {info['material']}")
    if info.get("stream_note"):
        stream.append(f"  ({info['stream_note']})", style="dim")
    grid.add_row("Stream", stream)
    if info.get("warnings"):
        warned = Text()
        for n, w in enumerate(info["warnings"]):
            if "accepted" in w:
                warned.append(("\n" if n else "") + f"✓ logged with a reason "
                              f"({w['accepted']}): {w['message']}", style="dim")
            else:
                warned.append(("\n" if n else "") + f"⚠ {w['message']}",
                              style="bold red" if w["severity"] == "refuse" else "bold")
        grid.add_row("Warnings", warned)
    if detail.by_compound:
        parts = []
        for key, vol, mass, n in detail.by_compound:
            amount = litres(vol) if vol else ""
            if mass:
                amount = (amount + " + " if amount else "") + f"{mass:g} g"
            parts.append(f"{key} {amount}" + (f" ({n}×)" if n > 1 else ""))
        grid.add_row("Contents", Text(" · ".join(parts)))
    else:
        grid.add_row("Contents", Text("nothing logged yet", style="dim"))
    if info["composition"]:
        moles = " · ".join(f"{k} {v:.3g} mol" for k, v in sorted(info["composition"].items()))
        grid.add_row("Totals", Text(moles))
    grid.add_row("Route", route_text(detail))
    if info.get("notes"):
        grid.add_row("Notes", Text(info["notes"]))
    grid.add_row("Opened", Text(f"{info['opened_on']}" + (f", closed {info['closed_on']}"
                                                           if info.get("closed_on") else "")))
    live = [a for a in info["additions"]]
    if live:
        lines = Text()
        for n, add in enumerate(reversed(live)):
            if n:
                lines.append("\n")
            style = "dim strike" if add["superseded"] else ""
            lines.append(f"{add['added_at'][:10]} {add['added_by']:<12} {add['entered']:<14} "
                         f"{litres(add['volume_l']):>8}", style=style)
            if add["note"]:
                lines.append(f"  {add['note']}", style=style or "dim")
        grid.add_row("Additions", lines)
    return grid


class WasteScreen(Screen):
    """Containers on top, the selected one below; forms and confirmations open over it."""

    HELP = ("The waste containers: status, fill against capacity and what went in. Log an "
            "addition, open a new container, open the neutralization planner for one, and "
            "move a container on (to disposed or to licensed disposal) after a confirmation.")

    BINDINGS = [
        Binding("a", "add", "Add", id="waste.add"),
        Binding("p", "plan", "Plan", id="waste.plan"),
        Binding("c", "new_container", "New", id="waste.new"),
        Binding("d", "mark_disposed", "Disposed", id="waste.disposed"),
        Binding("l", "licensed", "Licensed", id="waste.licensed"),
        Binding("s", "stream", "Stream", id="waste.stream"),
    ]

    def __init__(self) -> None:
        super().__init__()
        self.containers: dict[str, waste.Container] = {}
        self.detail: Detail | None = None
        self.selected: str | None = None
        self.loads = 0
        self._want: str | None = None

    def compose(self) -> ComposeResult:
        yield ModeBar("waste")
        yield SafetyNote(DISPOSAL_NOTE, id="waste-note")
        yield DataTable(id="waste-table", cursor_type="row", zebra_stripes=True)
        yield ErrorLine(id="waste-error")
        with VerticalScroll(id="waste-detail-scroll"):
            yield Static("", id="waste-detail")
        yield SteadyFooter()

    def on_mount(self) -> None:
        table = self.query_one("#waste-table", DataTable)
        table.add_column("Label", key="label")
        table.add_column("Status", key="status")
        table.add_column("Stream", key="stream")
        table.add_column("Fill", key="fill")
        table.add_column("Volume", key="volume")
        table.add_column("Location", key="location")
        table.focus()
        self.watch(self.app, "data_version", lambda _v: self.load(), init=False)
        self.load()

    # -- loading -------------------------------------------------------------------------
    def load(self, select: str | None = None) -> None:
        self._want = select or self.selected
        self._fetch_list()

    @work(thread=True, exclusive=True, exit_on_error=False, group="waste-list")
    def _fetch_list(self) -> None:
        worker = get_current_worker()
        try:
            with self.app.open_store() as store:
                found = waste.containers(store)
        except Exception as exc:
            if not worker.is_cancelled:
                self.app.call_from_thread(self._show_error, describe(exc))
            return
        if not worker.is_cancelled:
            self.app.call_from_thread(self._show_list, found)

    def _show_error(self, message: str) -> None:
        self.query_one("#waste-error", ErrorLine).show(message)
        self.loads += 1
        self.refresh_bindings()

    def _show_list(self, found: list[waste.Container]) -> None:
        self.query_one("#waste-error", ErrorLine).show("")
        self.containers = {c.label: c for c in found}
        table = self.query_one("#waste-table", DataTable)
        table.clear()
        for c in found:
            table.add_row(c.label, container_mark(c.status), stream_short(c.stream),
                          fill_cell(c.volume_l, c.capacity_l, c.full, c.nearly_full),
                          f"{litres(c.volume_l)} / {litres(c.capacity_l)}", c.location,
                          key=c.label)
        if not found:
            self.selected = None
            self.detail = None
            self.query_one("#waste-detail", Static).update(
                Text("No waste containers yet: press c to open one."))
            self.loads += 1
            self.refresh_bindings()
            return
        labels = [c.label for c in found]
        want = self._want if self._want in labels else labels[0]
        table.move_cursor(row=labels.index(want))
        self._select(want)

    def _select(self, label: str) -> None:
        self.selected = label
        self._fetch_detail(label)  # the footer follows with the details: one layout pass

    @property
    def cursor_label(self) -> str | None:
        """The container under the cursor (what the user sees as chosen)."""
        table = self.query_one("#waste-table", DataTable)
        if not table.row_count:
            return None
        try:
            return table.coordinate_to_cell_key(table.cursor_coordinate).row_key.value
        except Exception:  # the cursor is between a clear and a refill
            return None

    @on(DataTable.RowHighlighted, "#waste-table")
    def _highlighted(self, event: DataTable.RowHighlighted) -> None:
        label = self.cursor_label
        if label and label != self.selected:
            self._select(label)

    @work(thread=True, exclusive=True, exit_on_error=False, group="waste-detail")
    def _fetch_detail(self, label: str) -> None:
        worker = get_current_worker()
        try:
            with self.app.open_store() as store, store.reading():
                detail = load_detail(store, label)
        except Exception as exc:
            if not worker.is_cancelled:
                self.app.call_from_thread(self._show_error, describe(exc))
            return
        if not worker.is_cancelled:
            self.app.call_from_thread(self._show_detail, detail)

    def _show_detail(self, detail: Detail) -> None:
        if detail.info["label"] != self.selected:
            return
        self.detail = detail
        self.query_one("#waste-detail", Static).update(detail_renderable(detail))
        self.loads += 1
        self.refresh_bindings()

    # -- actions ---------------------------------------------------------------------------
    @property
    def status(self) -> str | None:
        label = self.cursor_label
        if label is not None and label != self.selected:
            self._select(label)
        c = self.containers.get(self.selected or "")
        return c.status if c else None

    def check_action(self, action: str, parameters: tuple[object, ...]) -> bool | None:
        status = None if self.status is None else ContainerStatus(self.status)
        if action == "add":
            return status is not None and status.takes_additions
        if action == "plan":
            return (status is not None and status.can_be_planned and self.detail is not None
                    and self.detail.info["label"] == self.selected
                    and not self.detail.licensed_only and self.detail.info["volume_l"] > 0)
        if action == "mark_disposed":
            return status is not None and status.can_be_disposed
        if action == "licensed":
            return status is not None and status.can_go_to_licensed_disposal
        if action == "stream":
            return status is not None and not status.is_final
        return True

    def action_add(self) -> None:
        from carboy.tui.app.screens.waste_add import AddWasteScreen

        label = self.selected
        if label is None:
            return

        def done(stored: bool | None) -> None:
            if stored:
                self.notify(f"Addition logged in {label}.", timeout=3)
                self.app.refresh_data()

        self.app.push_screen(AddWasteScreen(label), done)

    def action_new_container(self) -> None:
        from carboy.tui.app.screens.waste_new import NewContainerScreen

        def done(label: str | None) -> None:
            if label:
                self.notify(f"Container {label} opened.", timeout=3)
                self._want = label
                self.selected = label
                self.app.refresh_data()

        self.app.push_screen(NewContainerScreen(), done)

    def action_stream(self) -> None:
        from carboy.tui.app.screens.waste_stream import ChangeStreamScreen

        c = self.containers.get(self.selected or "")
        if c is None:
            return

        def done(stream: str | None) -> None:
            if stream:
                self.notify(f"{c.label} now collects {streams()[stream].name}.", timeout=3)
                self.app.refresh_data()

        self.app.push_screen(ChangeStreamScreen(c.label, c.stream, c.material), done)

    def action_plan(self) -> None:
        if self.selected:
            self.app.plan_container(self.selected)

    def action_mark_disposed(self) -> None:
        self._move(ContainerStatus.DISPOSED, "Mark as disposed?",
                   "This closes the container for good and records a disposal in the journal. "
                   "It cannot be undone.\n\n" + DISPOSAL_NOTE, "Mark disposed")

    def action_licensed(self) -> None:
        self._move(ContainerStatus.LICENSED_DISPOSAL, "Send to licensed disposal?",
                   "The container stops collecting and is held for the licensed contractor; "
                   "it will never be treated here. This cannot be undone.\n\n" + DISPOSAL_NOTE,
                   "Send it")

    def _move(self, status: str, title: str, body: str, yes: str) -> None:
        label = self.selected
        if label is None:
            return
        fill = ""
        c = self.containers.get(label)
        if c is not None:
            fill = f" ({litres(c.volume_l)}, {round(fill_fraction(c.volume_l, c.capacity_l) * 100)} % full)"

        def answered(yes_: bool | None) -> None:
            if yes_:
                self._set_status(label, status)

        self.app.push_screen(ConfirmScreen(f"{label}{fill}: {title}", body, yes_label=yes),
                             answered)

    @work(thread=True, exclusive=True, exit_on_error=False, group="waste-status")
    def _set_status(self, label: str, status: str) -> None:
        try:
            with self.app.open_store() as store:
                waste.set_status(store, label, status, who=self.app.who, today=self.app.today)
        except Exception as exc:
            self.app.call_from_thread(self._show_error, describe(exc))
            return
        self.app.call_from_thread(self._moved, label, status)

    def _moved(self, label: str, status: str) -> None:
        self.notify(f"{label} is now {ContainerStatus(status).words}.", timeout=3)
        self.app.refresh_data()
