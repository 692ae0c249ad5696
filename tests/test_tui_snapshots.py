"""Snapshots of the terminal UI at fixed terminal sizes (pytest-textual-snapshot).

The baselines live in tests/__snapshots__/test_tui_snapshots/; after an intended change
of the UI (or a Textual upgrade) regenerate them with ``pytest --snapshot-update`` and
review the SVGs. The app opens on its invented demo patient, so the content is fixed.
"""

from __future__ import annotations

from textual.widgets import Input

from planner.tui.app import ScanplanApp


async def _ready(pilot) -> None:
    """Wait for the first plan, then stop the cursor blinking (stable pictures)."""
    app = pilot.app
    for _ in range(600):
        await pilot.pause(0.02)
        if app.planning.plan is not None:
            break
    for box in app.planning.query(Input):
        box.cursor_blink = False
    await pilot.pause()


def test_plan_view_80x24(snap_compare):
    """The first screen at the smallest supported size: inputs, summary, band in MHz."""
    assert snap_compare(ScanplanApp(), terminal_size=(80, 24), run_before=_ready)


def test_plan_view_120x36(snap_compare):
    """A larger terminal: wider inputs, the ranked windows and the layers in view."""
    assert snap_compare(ScanplanApp(), terminal_size=(120, 36), run_before=_ready)


def test_invalid_field_80x24(snap_compare):
    """An impossible BMI is marked on its field with the reason; the last plan is dimmed."""
    async def run_before(pilot) -> None:
        await _ready(pilot)
        box = pilot.app.planning.query_one("#bmi", Input)
        box.cursor_position = len(box.value)
        await pilot.press("ctrl+u", "7")
        await pilot.pause()
    assert snap_compare(ScanplanApp(), terminal_size=(80, 24), run_before=run_before)


def test_explanation_80x24(snap_compare):
    """The explanation of the first finding: numbers, formula in words, full sources."""
    async def run_before(pilot) -> None:
        await _ready(pilot)
        await pilot.press("f3", "enter")
        await pilot.pause()
    assert snap_compare(ScanplanApp(), terminal_size=(80, 24), run_before=run_before)


def test_depth_profile_100x30(snap_compare):
    """The loss-against-depth plot with the budget line and the target marked."""
    async def run_before(pilot) -> None:
        await _ready(pilot)
        await pilot.press("f5")
        for _ in range(100):       # both plots mount on first show; wait until they have
            await pilot.pause(0.05)
            if pilot.app.screen.query("#profile-plot") and pilot.app.screen.query("#odds-strip"):
                break
        for _ in range(6):         # and until their layout has settled (plotext sizes on render)
            await pilot.pause(0.2)
    assert snap_compare(ScanplanApp(), terminal_size=(100, 30), run_before=run_before)
