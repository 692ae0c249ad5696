"""The start-up helper (planner.tui.first_plan) and the Plan view's text (planner.tui.plan_text).

The helper plans the UI's opening inputs in another process; its text must be the text the
screen then shows from its own plan, character for character, and any failure of the helper
must leave the screen planning by itself.
"""

from __future__ import annotations

import json
import subprocess
import sys

import pytest
import textual.markup

from planner.tui import first_plan
from planner.tui.app import ScanplanApp
from planner.tui.compute import compute, form_values
from planner.tui.demo import DEMO_INPUTS
from planner.tui.markup import escape
from planner.tui.plan_text import SummaryContent, summary_content
from planner.tui.widgets.plan_pane import PlanPane

TRICKY = ["plain", "[b]bold[/b]", "a [link] b", "[#ff0000]x", "[/]", "[@click]", "\\[b]",
          "ends with \\", "ends with \\\\", "[B]upper[/B]", "[1]", "x[y", "[$text-muted]",
          "range [3-5] MHz", "\\\\[i]", "", "[a][b]"]
"""Strings that a tag-escaping rule can get wrong (brackets, backslashes, the end)."""


@pytest.mark.parametrize("text", TRICKY)
def test_escape_is_textuals_escape(text):
    """Reference: textual.markup.escape (Textual 8), the function the views used before."""
    assert escape(text) == textual.markup.escape(text)


def _helper_answer() -> dict:
    done = subprocess.run([sys.executable, "-m", "planner.tui.first_plan"], capture_output=True,
                          text=True, timeout=60, check=True)
    return json.loads(done.stdout)


def test_the_helpers_text_is_the_text_of_the_screens_own_first_plan():
    """Same inputs, same engine, same seed: the helper's plan text equals this process's."""
    answer = _helper_answer()
    values = form_values(DEMO_INPUTS)
    assert answer["values"] == json.loads(json.dumps(values))
    ours = summary_content(compute(values).plan)
    assert SummaryContent.from_json(answer["content"]) == ours
    assert SummaryContent.from_json(ours.to_json()) == ours
    assert "MHz" in ours.status and any(label == "Band" for label, _ in ours.rows)


class _Fake(first_plan.FirstPlan):
    """A helper whose process prints ``output`` (a real child process)."""

    def __init__(self, output: str, sleep_s: float = 0.0) -> None:
        code = f"import time, sys; time.sleep({sleep_s}); sys.stdout.write({output!r})"
        super().__init__(subprocess.Popen([sys.executable, "-c", code], stdout=subprocess.PIPE,
                                          stdin=subprocess.DEVNULL))


def test_a_helper_answer_is_used_only_for_the_same_inputs():
    values = form_values(DEMO_INPUTS)
    content = summary_content(compute(values).plan)
    good = json.dumps({"values": values, "content": content.to_json()})
    assert _Fake(good).result(values) == content
    other = dict(values, bmi="22")
    assert _Fake(good).result(other) is None                      # planned other inputs
    assert _Fake(json.dumps({"values": values, "error": "x"})).result(values) is None
    assert _Fake("not json").result(values) is None
    assert _Fake(json.dumps({"values": values, "content": {"rows": 3}})).result(values) is None


def test_a_late_helper_is_ended_and_ignored():
    late = _Fake("{}", sleep_s=30)
    assert late.result({}, timeout_s=0.2) is None
    assert late.process.poll() is not None                         # it was killed


def test_closing_ends_a_running_helper():
    running = _Fake("{}", sleep_s=30)
    running.close()
    assert running.process.poll() is not None


def test_no_helper_on_one_core_or_when_turned_off(monkeypatch):
    monkeypatch.setattr(first_plan, "_cores", lambda: 1)
    assert first_plan.start() is None
    monkeypatch.setattr(first_plan, "_cores", lambda: 2)
    monkeypatch.setenv("SCANPLAN_FIRST_PLAN_HELPER", "0")
    assert first_plan.start() is None


async def _plan_shown(app, pilot):
    for _ in range(600):
        await pilot.pause(0.02)
        if app.planning.plan is not None:
            await pilot.pause()
            return app.planning
    raise AssertionError("no plan after 12 s")


async def test_the_screen_shows_the_helpers_plan_first_then_its_own(monkeypatch):
    """The helper's text reaches the Plan view before the engine has loaded; the screen's own
    plan follows with the same text."""
    values = form_values(DEMO_INPUTS)
    content = summary_content(compute(values).plan)
    shown: list[tuple[SummaryContent, bool]] = []
    original = PlanPane.show_first

    def record_first(pane, given):
        shown.append((given, pane.screen.engine_ready))
        original(pane, given)

    monkeypatch.setattr(PlanPane, "show_first", record_first)
    helper = _Fake(json.dumps({"values": values, "content": content.to_json()}))
    app = ScanplanApp(first_plan=helper)
    async with app.run_test(size=(120, 36)) as pilot:
        screen = await _plan_shown(app, pilot)
        assert shown == [(content, False)]
        assert summary_content(screen.plan) == content
        assert screen.query_one("#plan-status").render().plain.startswith("✓")


async def test_a_failed_helper_leaves_the_screen_planning_by_itself():
    app = ScanplanApp(first_plan=_Fake("garbage"))
    async with app.run_test(size=(120, 36)) as pilot:
        screen = await _plan_shown(app, pilot)
        assert "MHz" in screen.query_one("#plan-status").render().plain


def test_the_helper_runs_this_planner_whatever_the_working_directory(tmp_path):
    """A ``planner`` package and a ``json`` module in the user's folder cannot stand in for
    ours: the helper never puts the working directory on its path (``-P``)."""
    (tmp_path / "planner").mkdir()
    (tmp_path / "planner" / "__init__.py").write_text("raise SystemExit('wrong planner')\n")
    (tmp_path / "json.py").write_text("raise SystemExit('wrong json')\n")
    done = subprocess.run(first_plan.helper_command(), capture_output=True, text=True,
                          timeout=60, cwd=tmp_path, check=True)
    answer = json.loads(done.stdout)
    assert "content" in answer and answer["values"]["target_id"] == DEMO_INPUTS.target_id


async def test_the_summary_card_wraps_each_value_beside_its_label():
    """One widget for the card: a value too long for the line continues under the value
    column, the label column stays blank there, and the card is as tall as its lines."""
    from textual.app import App

    from planner.tui.widgets.summary_view import LABEL_WIDTH, SummaryCard

    class One(App):
        def compose(self):
            yield SummaryCard(id="card")

    app = One()
    async with app.run_test(size=(40, 12)) as pilot:
        card = app.query_one(SummaryCard)
        card.set_rows((("Band", "start 2.9 MHz · band 1.2–3.7 MHz, the top reached by 48 %"),
                       ("Probe", "[b]curved[/b] array")))
        await pilot.pause()
        lines = [line.plain.rstrip() for line in card.render().split("\n")]
        assert lines[0].startswith("Band".ljust(LABEL_WIDTH) + "start 2.9 MHz")
        assert len(lines) == 3 and lines[1].startswith(" " * LABEL_WIDTH)
        assert lines[1].strip() and lines[2] == "Probe".ljust(LABEL_WIDTH) + "curved array"
        assert card.size.height == 3 and card.row_text(1) == "curved array"
