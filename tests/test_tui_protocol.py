"""The protocol view of the terminal UI (F7), driven by Textual's Pilot.

The sheet's numbers come from :func:`planner.protocol.sheet.build_sheet`, whose own tests
hold the published values; here the view is checked against the file itself (its title,
the line a broken key sits on) and against invariants outside the project: the WHO adult
BMI classes (WHO2000Obesity: obese class III is BMI >= 40) and a thicker abdominal wall at
a higher BMI (HabitusPracticeModel, Gibney2010), which lowers the highest usable frequency.
"""

from __future__ import annotations

import io
import re
from pathlib import Path

from rich.console import Console
from textual.widgets import Input

from planner.protocol.loader import load_protocol
from planner.safety import DISCLAIMER
from planner.tui.app import ScanplanApp
from planner.tui.screens.help import KEYS
from planner.tui.screens.path_dialog import PathDialog
from planner.tui.screens.planning import PlanningScreen
from planner.tui.screens.protocol import ProtocolScreen, split_problem
from tests.test_tui_app import answer_dialog, ready, retype, text_of

ROOT = Path(__file__).resolve().parents[1]
SHIPPED = ROOT / "protocols" / "harbourside" / "upper-abdomen.yaml"
BROKEN = ROOT / "tests" / "fixtures" / "protocols_broken"


def plain(widget, width: int = 200) -> str:
    """The text a Static shows, also when it holds a Rich table."""
    console = Console(width=width, record=True, color_system=None, file=io.StringIO())
    console.print(widget.content)
    return console.export_text()


async def open_protocol(app, pilot, path) -> ProtocolScreen:
    """Press F7, answer the dialog with ``path`` and wait until the view has loaded."""
    await pilot.press("f7")
    await answer_dialog(pilot, app, path)
    for _ in range(500):
        await pilot.pause(0.02)
        if isinstance(app.screen, ProtocolScreen) and app.screen.loaded:
            await pilot.pause()
            return app.screen
    raise AssertionError(f"the protocol view did not load: {app.screen}")


def line_of(path: Path, text: str) -> int:
    """The 1-based line of ``path`` whose text contains ``text`` (read from the file)."""
    for number, line in enumerate(path.read_text(encoding="utf-8").splitlines(), 1):
        if text in line:
            return number
    raise AssertionError(f"{text!r} not in {path}")


def row_of(table_text: str, label: str) -> str:
    return next(line for line in table_text.splitlines() if line.startswith(label))


async def test_shipped_protocol_shows_title_facts_and_a_band_per_class():
    app = ScanplanApp()
    async with app.run_test(size=(100, 30)) as pilot:
        await ready(app, pilot)
        screen = await open_protocol(app, pilot, SHIPPED)
        assert screen.sheet is not None and screen.problems == ()
        protocol = load_protocol(SHIPPED)
        assert protocol.title in text_of(screen, "#protocol-title")
        facts = text_of(screen, "#protocol-facts")
        assert protocol.department in facts and protocol.review_date in facts
        assert f"{protocol.total_expected_minutes():g} min planned" in text_of(screen,
                                                                               "#protocol-time")
        table = plain(screen.query_one("#view-1"))
        assert "MHz" in table.splitlines()[0]
        obese_3, normal = row_of(table, "Obese class III"), row_of(table, "Normal weight")
        row = next(r for r in screen.sheet.views[0].classes if r.class_id == "obese_3")
        assert row.bmi >= 40                                  # WHO2000Obesity: class III
        band = row.band_mhz
        assert f"{band.low:.1f}-{band.high:.1f}" in obese_3
        # Thicker wall at BMI 45 (Gibney2010): the highest usable frequency is lower.
        normal_high = float(re.search(r"\d+\.\d-(\d+\.\d)", normal)[1])
        assert band.high < normal_high
        assert len(screen.query(".view-table")) == len(protocol.views)
        assert DISCLAIMER in text_of(screen, "#protocol-statement")
        scroll = screen.query_one("#protocol-scroll")
        assert scroll.has_focus
        await pilot.press("end")
        await pilot.pause(0.3)
        assert scroll.scroll_y > 0                            # keyboard scrolling


async def test_broken_protocol_lists_every_problem_with_its_line():
    path = BROKEN / "unknown_key.yaml"
    app = ScanplanApp()
    async with app.run_test(size=(80, 24)) as pilot:
        await ready(app, pilot)
        screen = await open_protocol(app, pilot, path)
        assert screen.sheet is None
        assert "3 problems" in text_of(screen, "#protocol-status")
        table = plain(screen.query_one("#protocol-problems"))
        for key, path_text in (("colour:", "views[0].colour"), ("reviewer:", "reviewer")):
            line = next(t for t in table.splitlines() if path_text in t)
            assert str(line_of(path, key)) in line.split()    # the line the key is on
        assert not screen.query(".view-table")


async def test_binary_folder_and_wrong_kind_of_file_never_crash():
    app = ScanplanApp()
    async with app.run_test(size=(80, 24)) as pilot:
        await ready(app, pilot)
        for path, words in ((BROKEN / "binary.yaml", "binary data"),
                            (ROOT / "protocols" / "harbourside" / "probes.yaml", "inventory"),
                            (BROKEN / "alias_bomb.yaml", ""),
                            (BROKEN / "missing_inventory.yaml", "no such file")):
            screen = await open_protocol(app, pilot, path)
            assert screen.problems, path
            assert words in plain(screen.query_one("#protocol-problems"))
            await pilot.press("escape")
            await pilot.pause()
            assert app.screen is app.planning


async def test_missing_path_is_asked_again_with_a_clean_message(tmp_path):
    app = ScanplanApp()
    async with app.run_test(size=(80, 24)) as pilot:
        await ready(app, pilot)
        await pilot.press("f7")
        await answer_dialog(pilot, app, tmp_path / "no-such-protocol.yaml")
        assert isinstance(app.screen, PathDialog)
        assert "no such file" in text_of(app.screen, "#path-problems .field-error")
        await answer_dialog(pilot, app, tmp_path)
        assert "is a folder" in text_of(app.screen, "#path-problems .field-error")
        await pilot.press("escape")
        await pilot.pause()
        assert app.screen is app.planning


async def test_escape_returns_to_the_plan_intact():
    app = ScanplanApp()
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await ready(app, pilot)
        await retype(pilot, screen, "bmi", "45")
        plan = screen.plan
        await open_protocol(app, pilot, SHIPPED)
        await pilot.press("escape", "escape")                # a fast double Escape
        await pilot.pause()
        assert app.screen is app.planning
        assert screen.plan is plan and screen.plan.patient.bmi == 45.0
        assert screen.query_one("#bmi", Input).value == "45"
        assert "(edited)" in text_of(screen, "#masthead")


def test_key_is_listed_in_help_and_footer():
    assert any(key == "F7" and "protocol" in what for key, what in KEYS)
    binding = next(b for b in PlanningScreen.BINDINGS if b.key == "f7")
    assert binding.show and binding.action == "protocol"


def test_problem_lines_split_into_their_parts():
    """The loader's ``file:line:col: key.path: message`` form (planner.errors.DataError)."""
    p = split_problem("a/b.yaml:27:5: views[0].colour: unknown key 'colour'; valid keys: id")
    assert (p.file, p.line, p.column, p.key_path) == ("a/b.yaml", 27, 5, "views[0].colour")
    assert p.message == "unknown key 'colour'; valid keys: id"
    p = split_problem("b.yaml: cannot read protocol file: no such file")
    assert (p.file, p.line, p.key_path, p.message) == ("b.yaml", None, "",
                                                        "cannot read protocol file: no such file")
    p = split_problem("x.yaml:3:8: binary data (a NUL byte); a protocol file must be text")
    assert p.line == 3 and p.key_path == "" and p.message.startswith("binary data")
