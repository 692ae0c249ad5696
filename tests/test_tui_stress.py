"""Stress: a few thousand random keys against the terminal UI.

The app must not crash, must stay responsive (a recompute still happens after the storm) and
its state must stay valid: either a plan on screen or an inline reason for a refused field.
Quitting (Ctrl+Q) is left out of the key pool; file dialogs may open and are closed again.
Between keys the storm also resizes the terminal (1x1 included) and, whenever a file dialog
is open, submits a path the file system refuses (names over 255 bytes, ``~nosuchuser``,
a NUL byte). The seed is fixed so a failure can be replayed; ``SCANPLAN_STRESS_REPORT=1``
prints what was tried.
"""

from __future__ import annotations

import os
import random
from collections import Counter

from textual import events
from textual.widgets import Input

from planner.tui.app import ScanplanApp
from planner.tui.screens.path_dialog import PathDialog

KEYS = (list("0123456789.-abcdefghijklmnopqrstuvwxyz:,") + [
    "tab", "shift+tab", "enter", "escape", "backspace", "delete", "left", "right", "up", "down",
    "home", "end", "space", "f1", "f2", "f3", "f4", "f5", "f6", "f9", "ctrl+g", "ctrl+t",
    "ctrl+n", "ctrl+u", "ctrl+s", "ctrl+o", "ctrl+r", "pageup", "pagedown", "f7", "ctrl+p"])
PRESSES = int(os.environ.get("SCANPLAN_STRESS_KEYS", "2000"))
SIZES = [(1, 1), (2, 1), (1, 2), (3, 3), (20, 4), (30, 10), (80, 24), (100, 30), (200, 60)]
BAD_PATHS = ["p" * 300 + ".yaml", "é" * 130 + ".md", "d" * 256 + "/plan.yaml",
             "~nosuchuser_scanplan/plan.yaml", "~nosuchuser_scanplan", "~/" + "q" * 300,
             "a\0b.yaml", "   ", "plan.txt", ".", "/", "/proc/self/mem"]
"""Paths a dialog must refuse inline: too long, unknown ~user, NUL, blank, not a file."""


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
        tried: Counter = Counter()
        for i in range(PRESSES):
            key = rng.choice(KEYS)
            char = " " if key == "space" else (key if len(key) == 1 else None)
            app.post_message(events.Key(key, char))
            tried["keys"] += 1
            if i % 50 == 49:
                await pilot.pause()
                if isinstance(app.screen, PathDialog):
                    tried[f"paths in '{app.screen.request.title}'"] += 1
                    app.screen.query_one("#path-input", Input).value = rng.choice(BAD_PATHS)
                    await pilot.press("enter")
                if rng.random() < 0.5:
                    await pilot.resize_terminal(*rng.choice(SIZES))
                    tried["resizes"] += 1
                assert app.is_running, f"stopped after {tried}"
        await pilot.resize_terminal(100, 30)
        if os.environ.get("SCANPLAN_STRESS_REPORT"):
            print(f"\nstress: {dict(tried)}")
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
