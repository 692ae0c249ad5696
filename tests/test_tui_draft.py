"""The supervised draft in the terminal UI: the keyboard-only flow, the student's decisions,
the signature's status, quitting with unsaved edits, and reopening a plan whose recomputed
headline differs from the one saved."""

from __future__ import annotations

from pathlib import Path

import pytest
import yaml
from textual.widgets import Input, Select

from planner.cli import main
from planner.tui.app import ScanplanApp
from planner.tui.screens.decide import ChangesDialog, QuitDialog
from planner.tui.screens.path_dialog import PathDialog

from test_tui_app import answer_dialog, ready, retype, text_of

DRAFT_FLOW_SPECIAL_KEYS = 13
"""Ctrl+G, seven Tabs, Enter/Down/Enter on the harmonic list, Ctrl+R and Enter: the keys of
the keyboard-only draft flow besides the characters typed (measured by the test below)."""


async def test_keyboard_only_draft_flow(tmp_path):
    """Ctrl+G puts the cursor in the student's name; Tab walks the student's own fields in
    order; the export carries the decisions against the plan."""
    app = ScanplanApp()
    report = tmp_path / "draft.md"
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await ready(app, pilot)
        special = 0

        async def press(*keys: str) -> None:
            nonlocal special
            special += sum(1 for k in keys if len(k) > 1)
            await pilot.press(*keys)
            await pilot.pause()
        await press("ctrl+g")
        assert screen.plan.draft and app.focused is screen.query_one("#student", Input)
        typed = {"student": "A. Learner", "student_probe": "curved", "student_start_mhz": "3",
                 "student_window": "right-intercostal", "student_position": "supine"}
        for i, (field, text) in enumerate(typed.items()):
            assert app.focused.id == field
            await press(*list(text))
            await press("tab")
        assert app.focused.id == "student_harmonic"
        await press("enter", "down", "enter")
        assert screen.query_one("#student_harmonic", Select).value == "on"
        await press("tab")
        assert app.focused.id == "student_tilt"
        await press(*list("sweep"), "tab")
        assert app.focused.id == "student_rationale"
        await press(*list("deep liver"))
        await press("ctrl+r")
        assert isinstance(app.screen, PathDialog)
        app.screen.query_one("#path-input", Input).value = str(report)
        await press("enter")
        assert special == DRAFT_FLOW_SPECIAL_KEYS
        text = report.read_text()
        assert "| Probe | " in text and "| Harmonic imaging | on | on | agree |" in text \
            or "| Harmonic imaging | off | on | differ |" in text
        assert "A. Learner" in text and "deep liver" in text


async def test_ctrl_q_with_unsaved_edits_asks(tmp_path):
    app = ScanplanApp()
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await ready(app, pilot)
        await retype(pilot, screen, "bmi", "41")
        await pilot.press("ctrl+q")
        await pilot.pause()
        assert isinstance(app.screen, QuitDialog)
        await pilot.press("escape")                      # cancel: keep working
        await pilot.pause()
        assert app.screen is screen and app.return_code is None
        await pilot.press("ctrl+q")
        await pilot.pause()
        await pilot.press("s")                           # save first, then quit
        await answer_dialog(pilot, app, tmp_path / "kept.yaml")
        await pilot.pause()
    assert app.return_code == 0
    assert yaml.safe_load((tmp_path / "kept.yaml").read_text())["patient"]["bmi"] == 41


async def test_ctrl_q_discard_quits_and_without_edits_quits_at_once():
    app = ScanplanApp()
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await ready(app, pilot)
        await retype(pilot, screen, "bmi", "41")
        await pilot.press("ctrl+q")
        await pilot.pause()
        await pilot.press("d")
        await pilot.pause()
    assert app.return_code == 0
    app = ScanplanApp()
    async with app.run_test(size=(80, 24)) as pilot:
        await ready(app, pilot)
        await pilot.press("ctrl+q")
        await pilot.pause()
        assert not isinstance(app.screen, QuitDialog)
    assert app.return_code == 0


def _saved(tmp_path: Path, *flags: str) -> Path:
    path = tmp_path / "liver.yaml"
    assert main(["plan", "--target", "liver", "--bmi", "45", *flags, "--save", str(path),
                 "--force", "--format", "json", "-o", str(tmp_path / "out.json")]) == 0
    return path


async def test_opening_a_file_whose_headline_changed_asks(tmp_path):
    path = _saved(tmp_path)
    data = yaml.safe_load(path.read_text())
    data["computed"].update(harmonic=False, generated_by="scanplan 0.0.1")
    path.write_text(yaml.safe_dump(data, sort_keys=False))
    app = ScanplanApp()
    async with app.run_test(size=(100, 30)) as pilot:
        screen = await ready(app, pilot)
        before = screen.plan.patient.bmi
        for answer, opened in (("escape", False), ("enter", True)):
            await pilot.press("ctrl+o")
            await answer_dialog(pilot, app, path)
            assert isinstance(app.screen, ChangesDialog)
            table = text_of(app.screen, "#changes-table")
            assert "Harmonic" in table and "not advised → advised" in table
            assert "scanplan 0.0.1" in text_of(app.screen, ".modal-title")
            await pilot.press(answer)
            await pilot.pause()
            assert (screen.plan.patient.bmi == 45.0) is opened or before == 45.0


async def test_a_signed_draft_shows_its_signer_and_when_it_changed(tmp_path, monkeypatch):
    path = _saved(tmp_path, "--draft")
    key, trusted = tmp_path / "k.pem", tmp_path / "t.yaml"
    assert main(["draft", "keygen", "--name", "B. Mentor", "-o", str(key), "--public",
                 str(trusted)]) == 0
    assert main(["draft", "sign", str(path), "--key", str(key), "--comment", "agreed"]) == 0
    monkeypatch.setenv("SCANPLAN_TRUSTED_KEYS", str(trusted))
    app = ScanplanApp()
    async with app.run_test(size=(120, 36)) as pilot:
        screen = await ready(app, pilot)
        await pilot.press("ctrl+o")
        await answer_dialog(pilot, app, path)
        await pilot.pause()
        assert "signed by B. Mentor at 2026-03-01T09:30:00Z" in text_of(screen, "#masthead")
        assert screen.query_one("#supervisor", Input).value == "B. Mentor"
        assert screen.query_one("#supervisor_comments", Input).value == "agreed"
        await pilot.press("ctrl+r")
        await answer_dialog(pilot, app, tmp_path / "signed.md")
        assert "**Signature:** signed by B. Mentor" in (tmp_path / "signed.md").read_text()
        await retype(pilot, screen, "bmi", "44")
        assert "changed after signing" in text_of(screen, "#masthead")
        assert screen.query_one("#supervisor", Input).value == ""
        assert "changed after signing" in text_of(screen, "#signature-status")
