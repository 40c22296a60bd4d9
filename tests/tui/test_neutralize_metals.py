"""The Neutralize screen with a metal-bearing waste, at the smallest supported size (80x24):
the plan shows the sludge, the metal left dissolved and the metals' share of the dose, and
paging down the plan brings the lines into view on the screen itself."""

from __future__ import annotations

import pytest
from test_neutralize_screen import set_field, settled, wait_for
from textual.widgets import TabbedContent

from carboy.store.demo import DEMO_TODAY, create_demo_database
from carboy.tui.app.app import make_app
from carboy.tui.app.screens.neutralize import NeutralizeScreen
from carboy.tui.app.widgets.plan_view import PlanSummary

SIZE = (80, 24)


@pytest.fixture(scope="module")
def demo_db(tmp_path_factory):
    return create_demo_database(tmp_path_factory.mktemp("demo") / "demo.db", today=DEMO_TODAY)


def screen_lines(app) -> list[str]:
    """The text of every line the app draws now."""
    return ["".join(seg.text for seg in strip)
            for strip in app.screen._compositor.render_strips()]


async def typed_plan(app, pilot, **fields) -> NeutralizeScreen:
    """The Neutralize screen with ``fields`` typed in (components, volume, reagent...) and
    planned."""
    app.action_go("neutralize")
    await wait_for(pilot, lambda: isinstance(app.screen, NeutralizeScreen)
                   and app.screen._composed)
    screen = app.screen
    for wid, text in fields.items():
        await set_field(pilot, screen, wid, text)
    await settled(pilot, screen)
    return screen


async def test_the_plan_of_a_zinc_waste_shows_its_sludge_and_dissolved_zinc(demo_db):
    app = make_app(demo_db, today=DEMO_TODAY, who="tester")
    async with app.run_test(size=SIZE) as pilot:
        screen = await typed_plan(app, pilot, components="HCl=0.1M ZnCl2=0.05M",
                                  volume="1 L", reagent="NaOH=1M", target="9")
        plan = screen.plan
        assert plan is not None and plan.sludge
        # the dose counts the zinc hydroxide: 0.2 mol, not the 0.1 of the acid alone
        assert plan.to_target.reagent_mol == pytest.approx(0.200, rel=0.01)
        summary = screen.query_one(PlanSummary)
        text = summary.text
        sludge = plan.sludge[0]
        assert f"Sludge       {sludge.solid}: 0.05 mol" in text
        assert "Dissolved    at pH 9.00: Zn " in text and "mg/L" in text
        assert "Metals' OH-  0.1 mol of the dose" in text
        # on the 80x24 screen: paging down the Plan tab brings the metal lines into view
        screen.query_one(TabbedContent).active = "view-plan"
        summary.scroll_home(animate=False)
        seen = set()
        for _ in range(12):
            await pilot.pause(0.05)
            drawn = "\n".join(screen_lines(app))
            seen |= {w for w in ("Sludge", "Zn(OH)2", "Dissolved", "mg/L") if w in drawn}
            summary.scroll_page_down(animate=False)
        assert seen == {"Sludge", "Zn(OH)2", "Dissolved", "mg/L"}

async def test_a_plan_without_metals_has_no_metal_lines(demo_db):
    app = make_app(demo_db, today=DEMO_TODAY, who="tester")
    async with app.run_test(size=SIZE) as pilot:
        screen = await typed_plan(app, pilot, components="HCl=0.1M", volume="1 L",
                                  reagent="NaOH=1M")
        text = screen.query_one(PlanSummary).text
        assert screen.plan is not None and "To pH 7" in text
        assert "Sludge" not in text and "Dissolved" not in text
