"""Measure the terminal UI: first paint against a bare Textual app, and recompute per keystroke.

Prints one JSON object::

    {"first_paint_ms": .., "bare_first_paint_ms": .., "ratio": .., "recompute_ms_median": ..,
     "first_form_ms": .., "first_plan_ms": .., "recompute_handler_ms_median": ..,
     "bare_keystroke_ms_median": .., "repeats": .., "keystrokes": ..}

- ``first_paint_ms``: median time from launching a fresh Python process to the first
  frame of scanplan's UI (headless, 80 x 24), read in a ``call_after_refresh`` callback of
  the app's ``Ready`` event; ``bare_first_paint_ms`` is the same for a Textual app holding
  one Label, launched the same way; ``ratio`` is their quotient (target: at most 1.3).
- The first frame shows the masthead and a loading line; the form and the plan views
  are mounted right after it and the engine loads in a thread. ``first_form_ms`` is the
  median time from launch until the form is mounted, ``first_plan_ms`` until the first
  plan (with its band in MHz) is on screen.
- ``recompute_ms_median``: median wall time of one keystroke in the BMI field, from the
  moment the key event reaches the app until the recomputed plan has been painted (the
  first refresh after the recompute, headless); every measured keystroke yields a valid
  plan (target: at most 50 ms). ``recompute_handler_ms_median`` is the part spent in the
  recompute handler itself (validation, engine, updating the views), and
  ``bare_keystroke_ms_median`` the same measurement on a bare Textual app that echoes an
  Input into a Label (the framework's frame pacing, a floor for the number above).

Usage: ``python scripts/bench_ui.py [--repeats N] [--keystrokes N] [--quick]``.
"""

from __future__ import annotations

import argparse
import asyncio
import json
import os
import statistics
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent

_CHILD = r"""
import os, sys, time
t0 = float(os.environ["SCANPLAN_BENCH_T0"])
kind = sys.argv[1]
if kind == "bare":
    from textual.app import App
    from textual.widgets import Label

    class Base(App):
        def compose(self):
            yield Label("Hello")
else:
    from planner.tui.app import ScanplanApp as Base


class Timed(Base):
    first_paint = None

    def on_ready(self) -> None:
        self.call_after_refresh(self._painted)

    def _painted(self) -> None:
        self.first_paint = (time.time() - t0) * 1000.0
        if kind == "bare":
            self.exit()
        else:
            self.set_interval(0.005, self._plan_shown)

    def _plan_shown(self) -> None:
        screen = self.screen
        if getattr(self, "first_form", None) is None and getattr(screen, "built", False):
            self.first_form = (time.time() - t0) * 1000.0
        if getattr(screen, "plan", None) is not None:
            self.call_after_refresh(self._done)

    def _done(self) -> None:
        self.first_plan = (time.time() - t0) * 1000.0
        self.exit()


app = Timed()
app.run(headless=True, size=(80, 24))
print(f"{app.first_paint:.3f} {getattr(app, 'first_form', float('nan')):.3f} "
      f"{getattr(app, 'first_plan', float('nan')):.3f}")
"""


def _launch(kind: str) -> tuple[float, float, float]:
    env = dict(os.environ, SCANPLAN_BENCH_T0=repr(time.time()),
               PYTHONPATH=os.pathsep.join([str(ROOT), os.environ.get("PYTHONPATH", "")]))
    env["SCANPLAN_BENCH_T0"] = repr(time.time())
    out = subprocess.run([sys.executable, "-c", _CHILD, kind], capture_output=True, text=True,
                         env=env, cwd=ROOT, timeout=60, check=True)
    paint, form, plan = out.stdout.split()[-3:]
    return float(paint), float(form), float(plan)


def first_paint(repeats: int) -> dict[str, float]:
    """Medians over ``repeats`` alternating launches of both apps. [ms]"""
    _launch("bare")          # warm the file-system caches for both
    _launch("scanplan")
    ours, forms, plans, bare = [], [], [], []
    for _ in range(repeats):
        bare.append(_launch("bare")[0])
        paint, form, plan = _launch("scanplan")
        ours.append(paint)
        forms.append(form)
        plans.append(plan)
    return {"first_paint_ms": statistics.median(ours), "bare_first_paint_ms": statistics.median(bare),
            "first_form_ms": statistics.median(forms), "first_plan_ms": statistics.median(plans)}


async def _recompute(keystrokes: int) -> tuple[list[float], list[float]]:
    sys.path.insert(0, str(ROOT))
    from textual import events

    from planner.tui.app import ScanplanApp
    app = ScanplanApp()
    wall, handler = [], []
    async with app.run_test(size=(80, 24)) as pilot:
        screen = app.screen
        for _ in range(400):
            await pilot.pause(0.025)
            if screen.plan is not None:
                break
        if screen.plan is None:
            raise RuntimeError("the UI did not show a plan within 10 s")
        bmi = screen.query_one("#bmi")
        bmi.focus()
        bmi.cursor_position = len(bmi.value)
        await pilot.press(".", "5")                 # BMI 38.5; the keys then go 38.55 <-> 38.5
        await pilot.pause(0.2)
        keys = [("5", "5"), ("backspace", None)] * (keystrokes // 2 + 1)
        for key, char in keys[:keystrokes]:
            before = screen.recomputes
            painted = asyncio.Event()
            start = time.perf_counter()
            app._driver.send_message(events.Key(key, char))
            while screen.recomputes == before:
                await asyncio.sleep(0.0005)
            screen.call_after_refresh(painted.set)
            await painted.wait()
            wall.append((time.perf_counter() - start) * 1000.0)
            handler.append(screen.recompute_ms)
            if screen.outcome is None or screen.outcome.plan is None:
                raise RuntimeError(f"keystroke {key!r} gave no plan: {screen.outcome.problems}")
            await pilot.pause(0.05)
    return wall, handler


async def _bare_keystroke(keystrokes: int) -> list[float]:
    """The same measurement on a bare Textual app (one Input echoed into one Label): the
    framework's own floor (frame pacing), for reading ``recompute_ms_median``."""
    from textual import events
    from textual.app import App
    from textual.widgets import Input, Label

    class Echo(App):
        changes = 0

        def compose(self):
            yield Input(value="38", id="box")
            yield Label("38", id="echo")

        def on_input_changed(self, event: Input.Changed) -> None:
            self.query_one("#echo", Label).update(event.value)
            self.changes += 1

    app, wall = Echo(), []
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause(0.2)
        box = app.query_one("#box", Input)
        box.focus()
        box.cursor_position = len(box.value)
        for key, char in ([("5", "5"), ("backspace", None)] * (keystrokes // 2 + 1))[:keystrokes]:
            before, painted = app.changes, asyncio.Event()
            start = time.perf_counter()
            app._driver.send_message(events.Key(key, char))
            while app.changes == before:
                await asyncio.sleep(0.0005)
            app.screen.call_after_refresh(painted.set)
            await painted.wait()
            wall.append((time.perf_counter() - start) * 1000.0)
            await pilot.pause(0.05)
    return wall


def measure(repeats: int = 7, keystrokes: int = 21) -> dict[str, float]:
    """Run both measurements and return the JSON-ready result."""
    result = first_paint(repeats)
    wall, handler = asyncio.run(_recompute(keystrokes))
    bare = asyncio.run(_bare_keystroke(keystrokes))
    result.update(ratio=result["first_paint_ms"] / result["bare_first_paint_ms"],
                  recompute_ms_median=statistics.median(wall),
                  bare_keystroke_ms_median=statistics.median(bare),
                  recompute_handler_ms_median=statistics.median(handler),
                  repeats=repeats, keystrokes=keystrokes)
    return {k: (round(v, 2) if isinstance(v, float) else v) for k, v in result.items()}


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=7, help="launches of each app (default 7)")
    parser.add_argument("--keystrokes", type=int, default=21, help="measured keystrokes (default 21)")
    parser.add_argument("--quick", action="store_true", help="3 launches and 9 keystrokes")
    args = parser.parse_args(argv)
    repeats, keystrokes = (3, 9) if args.quick else (args.repeats, args.keystrokes)
    if repeats < 1 or keystrokes < 1:
        parser.error("--repeats and --keystrokes must be at least 1")
    print(json.dumps(measure(repeats, keystrokes), sort_keys=True))
    return 0


if __name__ == "__main__":
    sys.exit(main())
