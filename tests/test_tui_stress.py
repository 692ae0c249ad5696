"""Stress: a few thousand random keys against the terminal UI.

The app must not crash, must stay responsive (a recompute still happens after the storm) and
its state must stay valid: either a plan on screen or an inline reason for a refused field.
Quitting (Ctrl+Q) is left out of the key pool; file dialogs may open and are closed again.
The seed is fixed so a failure can be replayed.
"""

from __future__ import annotations

import os
import random

from textual import events
from textual.widgets import Input

from planner.tui.app import ScanplanApp

KEYS = (list("0123456789.-abcdefghijklmnopqrstuvwxyz:,") + [
    "tab", "shift+tab", "enter", "escape", "backspace", "delete", "left", "right", "up", "down",
    "home", "end", "space", "f1", "f2", "f3", "f4", "f5", "f6", "f9", "ctrl+g", "ctrl+t",
    "ctrl+n", "ctrl+u", "ctrl+s", "ctrl+o", "ctrl+r", "pageup", "pagedown"])
PRESSES = int(os.environ.get("SCANPLAN_STRESS_KEYS", "2000"))


async def test_random_keys_do_not_break_the_ui(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)            # any file a dialog might write lands here
    rng = random.Random(20261201)
    app = ScanplanApp()
    async with app.run_test(size=(100, 30)) as pilot:
        for _ in range(400):
            await pilot.pause(0.02)
            if app.planning.plan is not None:
                break
        assert app.planning.plan is not None
        # Keys are posted to the app the way a terminal driver posts them, as fast as a
        # typist hammering the keyboard, with a pause for the app to catch up every 50 keys.
        for i in range(PRESSES):
            key = rng.choice(KEYS)
            char = " " if key == "space" else (key if len(key) == 1 else None)
            app.post_message(events.Key(key, char))
            if i % 50 == 49:
                await pilot.pause()
        # Close whatever is open, then check the app still answers and recomputes.
        for _ in range(5):
            await pilot.press("escape")
        await pilot.pause(0.2)
        assert app.is_running
        screen = app.planning
        outcome = screen.outcome
        assert screen.plan is not None or outcome is not None
        bmi = screen.query_one("#bmi", Input)
        bmi.focus()
        await pilot.press("ctrl+u", "4", "2")
        await pilot.pause(0.3)
        form = app.planning
        assert form.plan is not None or form.outcome is not None
    assert app.return_code in (None, 0)
