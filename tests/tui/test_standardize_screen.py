"""Pilot tests of the Standardize screen: type a standardization, bad lines, record it.

The replicate data are an invented, realistic example: about 0.51 g of KHP per titration
of a nominal 0.1 M NaOH, titres near 25 mL.  Every expected molarity comes from the
model's own ``standardize`` on the same inputs, never from a number typed here.
"""

from __future__ import annotations

from textual.widgets import Input, Static, TextArea

from carboy.model.forms.standardize import fmt_molar
from carboy.model.standardization import AcceptanceRule, Replicate, standardize
from carboy.store import journal, rules, stock
from carboy.store.db import open_database
from carboy.store.demo import DEMO_TODAY
from carboy.tui.app.screens.confirm import ConfirmScreen
from carboy.tui.app.screens.standardize import StandardizeScreen
from carboy.tui.app.screens.standardize_text import ACCEPTED_MARK, REJECTED_MARK

SIZE = (80, 24)

GOOD = [(0.5106, 25.02), (0.5098, 24.97), (0.5112, 25.05)]
"""Invented triplicate, KHP against about 0.1 M NaOH: RSD well under 0.2 %."""
SPREAD = [(0.5106, 25.02), (0.5098, 25.21), (0.5112, 24.86)]
"""Invented triplicate with poor agreement: RSD near 0.7 %, not accepted."""


# -- helpers -------------------------------------------------------------------------

async def open_screen(app, pilot, wait_for) -> StandardizeScreen:
    await pilot.press("f8")
    await wait_for(pilot, lambda: isinstance(app.screen, StandardizeScreen)
                   and app.screen._composed and app.screen.rule is not None)
    return app.screen


async def type_into(pilot, screen, wid: str, text: str) -> None:
    """Type ``text`` into a field, key by key."""
    field = screen.query_one(f"#{wid}", Input)
    field.focus()
    await pilot.pause()
    field.value = ""
    await pilot.press(*text)


async def set_field(pilot, screen, wid: str, text: str) -> None:
    """Fill a field as if typed: all but the last character set, the last one a keystroke."""
    field = screen.query_one(f"#{wid}", Input)
    field.focus()
    await pilot.pause()  # focusing selects the text; set it only after that
    field.value = text[:-1]
    field.cursor_position = len(field.value)
    await pilot.press(text[-1])


async def set_replicates(pilot, screen, lines: list[str]) -> None:
    """Fill the replicates as if typed: all but the last character set, the last one a key."""
    area = screen.query_one("#sz-replicates", TextArea)
    area.focus()
    await pilot.pause()
    text = "\n".join(lines)
    area.text = text[:-1]
    area.move_cursor(area.document.end)
    await pilot.press(text[-1])


async def settled(pilot, screen, wait_for) -> None:
    """Until the inputs now on screen have been computed and shown."""
    await pilot.pause()
    await wait_for(pilot, lambda: screen.outcome is not None
                   and screen.outcome.generation == screen.live.generation
                   and screen.live.settled
                   and screen.outcome.state == screen._form_state())


def shown(screen, wid: str) -> str:
    content = screen.query_one(f"#{wid}", Static).content
    return content.plain if hasattr(content, "plain") else str(content)


def lines_of(pairs) -> list[str]:
    return [f"{m} {v}" for m, v in pairs]


def naoh_bottle(db_path) -> stock.Bottle:
    """A demo bottle of NaOH labelled 0.1 M, in use (found by search, not by a fixed id)."""
    with open_database(db_path) as store:
        found = stock.page(store, "NaOH", status="in-use", limit=100, today=DEMO_TODAY)
    return next(b for b in found.bottles if b.compound_key == "NaOH"
                and b.strength_unit == "M" and b.label_strength == 0.1)


def bottle_state(db_path, bottle_id: int):
    with open_database(db_path) as store:
        bottle = stock.get(store, bottle_id, today=DEMO_TODAY)
        entries = journal.entries(store, bottle_id=bottle_id, limit=None)
    kept = [e for e in entries if e.kind == "standardization"]
    return bottle.current_strength, bottle.measured_at, len(kept), kept


# -- typed titrant: the numbers are the model's --------------------------------------

async def test_typed_standardization_shows_the_models_numbers(make, wait_for):
    app = make()
    async with app.run_test(size=SIZE) as pilot:
        screen = await open_screen(app, pilot, wait_for)
        await type_into(pilot, screen, "sz-titrant", "NaOH 0,1 M")
        await set_field(pilot, screen, "sz-standard", "KHP")
        await set_replicates(pilot, screen, ["0.5106 25.02", "0,5098 g 24,97 mL",
                                             "25.05 mL 0.5112 g"])
        await settled(pilot, screen, wait_for)
        assert isinstance(app.screen, StandardizeScreen)  # digits typed did not switch mode
        expected = standardize("NaOH", "KHP", [Replicate(m, v) for m, v in GOOD],
                               nominal_molar=0.1)
        result = screen.result
        assert result is not None and not screen.stale
        assert [r.molar for r in result.replicates] == [r.molar for r in expected.replicates]
        assert result.mean_molar == expected.mean_molar
        assert result.rsd_percent == expected.rsd_percent
        assert result.accepted is expected.accepted is True
        assert result.deviation_percent == expected.deviation_percent
        panel = shown(screen, "sz-result-text")
        assert ACCEPTED_MARK in panel
        for r in expected.replicates:
            assert fmt_molar(r.molar) in panel
        assert f"{expected.rsd_percent:.3f} %" in panel
        assert "≤ 0.2 %" in panel and "≥ 3 replicates" in panel  # the rule in force
        assert "sodium hydroxide" in shown(screen, "echo-titrant")
        assert "nominal 0.1 M" in shown(screen, "echo-titrant")
        echo = shown(screen, "echo-standard")
        assert "potassium hydrogen phthalate" in echo and "204.22 g/mol" in echo
        assert "120 °C" in echo
        cautions = shown(screen, "sz-cautions")
        assert "CO2-free water" in cautions and "soda-lime" in cautions
        assert "safe" not in (cautions + panel).lower()
        # no bottle: the record key explains and writes nothing
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert not isinstance(app.screen, ConfirmScreen)
        assert "bottle id" in screen.record_blocker()
        assert "bottle id" in shown(screen, "sz-status")


async def test_a_bad_line_is_named_by_number_and_value(make, wait_for):
    app = make()
    async with app.run_test(size=SIZE) as pilot:
        screen = await open_screen(app, pilot, wait_for)
        await set_field(pilot, screen, "sz-titrant", "NaOH")
        await set_field(pilot, screen, "sz-standard", "KHP")
        typed = ["0.5106 25.02", "0.5098 24,9x", "0.5112 25.05"]
        await set_replicates(pilot, screen, typed)
        await settled(pilot, screen, wait_for)
        echo = shown(screen, "echo-replicates")
        assert "line 2" in echo and "24,9x" in echo and "✗" in echo
        assert "line 1" not in echo and "line 3" not in echo
        area = screen.query_one("#sz-replicates", TextArea)
        assert area.text == "\n".join(typed)  # the typed text is kept
        assert area.has_class("-invalid") and "2" in str(area.border_subtitle)
        assert screen.outcome.value is None  # never a result from a bad line
        assert "line 2" in shown(screen, "sz-status")
        blocker = screen.record_blocker()
        assert "errors" in blocker or "no result" in blocker
        # fixed in place, the result follows
        area.text = "\n".join(lines_of(GOOD))
        await settled(pilot, screen, wait_for)
        assert screen.result is not None and screen.result.n == 3
        assert shown(screen, "echo-replicates") == ""


async def test_bad_line_after_a_good_result_greys_it_and_records_nothing(
        make, wait_for, demo_db):
    bottle = naoh_bottle(demo_db)
    before = bottle_state(demo_db, bottle.id)[:3]
    app = make()
    async with app.run_test(size=SIZE) as pilot:
        screen = await open_screen(app, pilot, wait_for)
        await set_field(pilot, screen, "sz-titrant", f"#{bottle.id}")
        await set_field(pilot, screen, "sz-standard", "KHP")
        await set_replicates(pilot, screen, lines_of(GOOD))
        await settled(pilot, screen, wait_for)
        assert screen.result.accepted and screen.record_blocker() is None
        await set_replicates(pilot, screen, lines_of(GOOD) + ["0.5101 abc"])
        await settled(pilot, screen, wait_for)
        assert screen.stale and "STALE" in shown(screen, "sz-result-text")
        assert "line 4" in shown(screen, "echo-replicates")
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert not isinstance(app.screen, ConfirmScreen)
    assert bottle_state(demo_db, bottle.id)[:3] == before


# -- bottles -------------------------------------------------------------------------------

async def test_use_bottle_fills_the_titrant_and_the_nominal(make, wait_for, demo_db):
    bottle = naoh_bottle(demo_db)
    app = make()
    async with app.run_test(size=SIZE) as pilot:
        await pilot.pause()
        app.standardize_bottle(bottle.id)
        await wait_for(pilot, lambda: isinstance(app.screen, StandardizeScreen)
                       and app.screen._composed)
        screen = app.screen
        assert screen.query_one("#sz-titrant", Input).value == f"#{bottle.id}"
        await settled(pilot, screen, wait_for)
        echo = shown(screen, "echo-titrant")
        assert f"bottle {bottle.id}: NaOH 0.1 M" in echo
        assert f"last standardized {bottle.measured_at[:10]}" in echo
        assert app.focused is screen.query_one("#sz-standard", Input)
        await set_field(pilot, screen, "sz-standard", "KHP")
        await set_replicates(pilot, screen, lines_of(GOOD))
        await settled(pilot, screen, wait_for)
        assert screen.result.nominal_molar == bottle.label_strength


async def test_record_on_a_bottle_writes_its_strength_and_one_entry(make, wait_for, demo_db):
    bottle = naoh_bottle(demo_db)
    old_strength, _, old_count, _ = bottle_state(demo_db, bottle.id)
    app = make()
    async with app.run_test(size=SIZE) as pilot:
        screen = await open_screen(app, pilot, wait_for)
        await set_field(pilot, screen, "sz-titrant", str(bottle.id))
        await set_field(pilot, screen, "sz-standard", "potassium hydrogen phthalate")
        await set_field(pilot, screen, "sz-assay", "99,97")
        await set_field(pilot, screen, "sz-blank", "0.02")
        await set_replicates(pilot, screen, lines_of(GOOD))
        await settled(pilot, screen, wait_for)
        expected = standardize("NaOH", "KHP", [Replicate(m, v, 0.02) for m, v in GOOD],
                               purity_percent=99.97, nominal_molar=0.1)
        assert screen.result.mean_molar == expected.mean_molar and screen.result.accepted
        versions = app.data_version
        await pilot.press("ctrl+s")
        await wait_for(pilot, lambda: isinstance(app.screen, ConfirmScreen))
        message = app.screen.message
        assert f"Bottle {bottle.id}" in message
        assert f"{fmt_molar(old_strength)} M" in message
        assert f"→ {fmt_molar(expected.mean_molar)} M" in message
        await pilot.press("y")
        await wait_for(pilot, lambda: screen.last_journal_id is not None)
        assert app.data_version == versions + 1
        await settled(pilot, screen, wait_for)
        assert "journal entry" in shown(screen, "sz-status")
        # the same result cannot be recorded twice
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert not isinstance(app.screen, ConfirmScreen)
        assert "already recorded" in screen.record_blocker()
        entry_id = screen.last_journal_id
    strength, measured_at, count, kept = bottle_state(demo_db, bottle.id)
    assert strength == expected.mean_molar
    assert measured_at is not None
    assert count == old_count + 1
    entry = next(e for e in kept if e.id == entry_id)
    assert entry.recorded_by == "tester"
    snap = entry.snapshot
    assert snap["previous_strength"] == old_strength
    assert snap["standardization"]["mean_molar"] == expected.mean_molar
    assert snap["inputs"]["replicates"] == "\n".join(lines_of(GOOD))


async def test_cancelled_record_writes_nothing(make, wait_for, demo_db):
    bottle = naoh_bottle(demo_db)
    before = bottle_state(demo_db, bottle.id)[:3]
    app = make()
    async with app.run_test(size=SIZE) as pilot:
        screen = await open_screen(app, pilot, wait_for)
        await set_field(pilot, screen, "sz-titrant", f"#{bottle.id}")
        await set_field(pilot, screen, "sz-standard", "KHP")
        await set_replicates(pilot, screen, lines_of(GOOD))
        await settled(pilot, screen, wait_for)
        await pilot.press("ctrl+s")
        await wait_for(pilot, lambda: isinstance(app.screen, ConfirmScreen))
        await pilot.press("enter")  # the safe answer has the focus
        await wait_for(pilot, lambda: app.screen is screen)
        assert "nothing was written" in shown(screen, "sz-status")
        await pilot.press("enter")  # a second Enter lands in the form, never a record
    assert bottle_state(demo_db, bottle.id)[:3] == before


async def test_not_accepted_result_cannot_be_recorded(make, wait_for, demo_db):
    bottle = naoh_bottle(demo_db)
    before = bottle_state(demo_db, bottle.id)[:3]
    app = make()
    async with app.run_test(size=SIZE) as pilot:
        screen = await open_screen(app, pilot, wait_for)
        await set_field(pilot, screen, "sz-titrant", f"#{bottle.id}")
        await set_field(pilot, screen, "sz-standard", "KHP")
        await set_replicates(pilot, screen, lines_of(SPREAD))
        await settled(pilot, screen, wait_for)
        expected = standardize("NaOH", "KHP", [Replicate(m, v) for m, v in SPREAD],
                               nominal_molar=0.1)
        assert expected.accepted is False  # the example is what it claims
        assert screen.result.accepted is False
        assert screen.result.rsd_percent == expected.rsd_percent
        panel = shown(screen, "sz-result-text")
        assert REJECTED_MARK in panel
        why = f"RSD {expected.rsd_percent:.3f} % > 0.2 %"
        assert why in panel and why in shown(screen, "sz-status")
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert not isinstance(app.screen, ConfirmScreen)
        assert screen.record_blocker() == f"not accepted: {why}"
    assert bottle_state(demo_db, bottle.id)[:3] == before


async def test_the_storeroom_rule_is_the_one_applied(make, wait_for, demo_db):
    with open_database(demo_db) as store:
        rules.set_acceptance(store, max_rsd_percent="0.02", who="tester")
    app = make()
    async with app.run_test(size=SIZE) as pilot:
        screen = await open_screen(app, pilot, wait_for)
        await set_field(pilot, screen, "sz-titrant", "NaOH")
        await set_field(pilot, screen, "sz-standard", "KHP")
        await set_replicates(pilot, screen, lines_of(GOOD))
        await settled(pilot, screen, wait_for)
        strict = AcceptanceRule(max_rsd_percent=0.02)
        expected = standardize("NaOH", "KHP", [Replicate(m, v) for m, v in GOOD], rule=strict)
        assert expected.accepted is False  # RSD about 0.026 %: over the storeroom's 0.02 %
        assert screen.result.rule.max_rsd_percent == 0.02
        assert screen.result.accepted is False
        panel = shown(screen, "sz-result-text")
        assert "rule (storeroom): RSD ≤ 0.02 %" in panel


# -- the form's reading, without the app ---------------------------------------------------
