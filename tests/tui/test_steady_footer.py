"""The steady footer shows what a Footer would, and keeps its key widgets: a key no
longer offered is hidden, one offered again shown, only a new key rebuilds."""

from __future__ import annotations

from textual.widgets._footer import FooterKey

from carboy.tui.app.screens.waste import WasteScreen
from carboy.tui.app.widgets.steady_footer import SteadyFooter, merged


def test_keys_kept_merge_in_order():
    assert merged(["a", "b", "c"], ["a", "c"]) == ["a", "b", "c"]  # hidden, not dropped
    assert merged(["a", "c"], ["a", "b", "c"]) == ["a", "b", "c"]  # a new one in its place
    assert merged(["a", "b"], ["b", "x"]) == ["a", "b", "x"]
    assert merged(["a", "b"], ["b", "a"]) is None  # the orders disagree: rebuilt as offered
    assert merged([], ["a"]) == ["a"]


def offered_now(screen) -> list[tuple[str, bool]]:
    """What a Footer would show now: one key per action, bindings that show, in order."""
    out, actions = [], set()
    for _node, binding, enabled, _tip in screen.active_bindings.values():
        if binding.show and binding.action not in actions:
            actions.add(binding.action)
            out.append((binding.description, enabled))
    return out


def visible(screen) -> list[tuple[str, bool]]:
    footer = screen.query_one(SteadyFooter)
    return [(key.description, not key._disabled) for key in footer.query_children(FooterKey)
            if key.display and "-command-palette" not in key.classes]


async def test_moving_between_containers_hides_and_shows_keys(make, wait_for):
    app = make()
    async with app.run_test(size=(160, 30)) as pilot:
        await pilot.press("f3")
        await wait_for(pilot, lambda: isinstance(app.screen, WasteScreen) and app.screen.detail)
        screen = app.screen
        table = screen.query_one("#waste-table")

        async def go(label):
            table.move_cursor(row=table.get_row_index(label))
            await wait_for(pilot, lambda: screen.detail.info["label"] == label)
            await pilot.pause()
            await pilot.pause()
            assert visible(screen) == offered_now(screen)
            return {key.description: key for key in screen.query(FooterKey)}

        collecting = await go("AL-03")
        assert "Add" in dict(visible(screen))
        await go("HF-04")  # held for licensed disposal: takes no additions
        assert "Add" not in dict(visible(screen))
        again = await go("AL-03")
        assert "Add" in dict(visible(screen))
        assert all(again[name] is collecting[name] for name in collecting)  # not rebuilt
