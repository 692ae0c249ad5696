"""The terminal UI driven by Textual's Pilot: typing, targets, invalid input, files, export.

Checks are on behaviour the issue asks for; physics values come from the engine, whose own
tests hold the published numbers. The invariants used here (a larger BMI gives a thicker
wall, so a deeper target) follow from HabitusPracticeModel and Gibney2010.
"""

from __future__ import annotations

from textual.widgets import Input

from planner.engine.serialize import plan_to_json_data
from planner.planfile import load_plan_inputs
from planner.references import citation
from planner.tui.app import ScanplanApp
from planner.tui.screens.explain import ExplainScreen
from planner.tui.screens.help import HelpScreen
from planner.tui.screens.path_dialog import PathDialog


async def ready(app, pilot):
    """Wait until the first plan is on screen; return the planning screen."""
    for _ in range(600):
        await pilot.pause(0.02)
        screen = app.planning
        if screen.plan is not None:
            await pilot.pause()
            return screen
    raise AssertionError(f"no plan after 12 s: {app.planning.outcome}")


def text_of(screen, selector: str) -> str:
    """The plain text a Static shows."""
    return screen.query_one(selector).render().plain


async def retype(pilot, screen, field: str, text: str) -> None:
    """Clear an input and type ``text`` into it, key by key."""
    box = screen.query_one(f"#{field}", Input)
    box.focus()
    box.cursor_position = len(box.value)
    await pilot.press("ctrl+u", *list(text))
    await pilot.pause()


async def answer_dialog(pilot, app, path) -> None:
    """Type ``path`` into the open file dialog and confirm it."""
    await pilot.pause()
    assert isinstance(app.screen, PathDialog)
    app.screen.query_one("#path-input", Input).value = str(path)
    await pilot.press("enter")
    await pilot.pause()


async def test_first_screen_shows_a_plan_with_its_band_in_mhz():
    app = ScanplanApp()
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await ready(app, pilot)
        band = screen.plan.frequency_mhz
        status = text_of(screen, "#plan-status")
        assert f"{band.low:.1f}–{band.high:.1f} MHz" in status
        card = screen.query_one("#summary-card")
        assert [label for label, _ in card.rows][2] == "Band" and "MHz" in card.row_text(2)
        assert "DEMO DATA: invented patient" in text_of(screen, "#masthead")


async def test_typing_recomputes_on_every_key():
    app = ScanplanApp()
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await ready(app, pilot)
        depth_38 = screen.plan.depth_cm
        before = screen.recomputes
        await retype(pilot, screen, "bmi", "45")
        assert screen.recomputes >= before + 3          # clear, '4', '5'
        assert screen.plan.patient.bmi == 45.0
        assert screen.plan.depth_cm > depth_38          # thicker wall at a higher BMI
        assert "(edited)" in text_of(screen, "#masthead")


async def test_invalid_input_is_marked_inline_and_the_last_plan_stays():
    app = ScanplanApp()
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await ready(app, pilot)
        good = screen.plan
        await retype(pilot, screen, "bmi", "5")
        await pilot.pause()
        row = screen.query_one("#row-bmi")
        assert row.has_class("-invalid") and "at least 10" in row.error
        assert "at least 10" in text_of(row, ".field-error")
        assert "BMI" in text_of(screen, "#plan-status")
        assert screen.plan is good and screen.query_one("#plan-pane").has_class("-stale")
        await retype(pilot, screen, "height_cm", "abc")
        assert "not a number" in screen.query_one("#row-height_cm").error
        await retype(pilot, screen, "height_cm", "")
        await retype(pilot, screen, "bmi", "31")
        assert not row.has_class("-invalid") and screen.plan.patient.bmi == 31.0
        assert not screen.query_one("#plan-pane").has_class("-stale")


async def test_switching_targets_by_filter_and_list():
    app = ScanplanApp()
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await ready(app, pilot)
        await pilot.press("ctrl+t", *list("thyroid"), "enter")
        await pilot.pause()
        assert screen.plan.target.id == "thyroid"
        windows = [w.id for w in screen.panel.library.get("thyroid").windows]
        options = [value for _, value in screen.query_one("#window_id")._options]
        assert options[1:] == windows
        assert "Thyroid" in text_of(screen, "#masthead")
        await pilot.press("ctrl+t", "ctrl+u", *list("kidney"), "down", "enter")
        await pilot.pause()
        assert screen.plan.target.id == "kidney"


async def test_choosing_a_window_and_a_doppler_mode():
    app = ScanplanApp()
    async with app.run_test(size=(100, 30)) as pilot:
        screen = await ready(app, pilot)
        await pilot.press("ctrl+t", *list("renal artery"), "enter")
        await pilot.pause()
        screen.query_one("#mode-pulsed_doppler").value = True
        await pilot.pause()
        assert screen.plan.doppler is not None
        await pilot.press("f6")
        await pilot.pause()
        assert "Nyquist" in text_of(screen, "#doppler-text")
        first = screen.plan.windows[-1].id
        screen.query_one("#window_id").value = first
        await pilot.pause()
        assert screen.plan.window.id == first and len(screen.plan.windows) == 1


async def test_explanation_view_has_numbers_formula_and_full_sources():
    app = ScanplanApp()
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await ready(app, pilot)
        await pilot.press("f3")
        await pilot.pause()
        finding = screen.query_one("#findings-list").highlighted_finding()
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, ExplainScreen)
        text = app.screen.query_one("#explain-text").render().plain
        assert finding.title in text and "The numbers" in text
        assert "How it is worked out" in text
        for key in finding.sources:
            assert citation(key)[:60] in text.replace("\n", " ")
        await pilot.press("escape")
        assert not isinstance(app.screen, ExplainScreen)


async def test_save_then_open_round_trip(tmp_path):
    path = tmp_path / "plan.yaml"
    app = ScanplanApp()
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await ready(app, pilot)
        await retype(pilot, screen, "wall_mm", "42")
        saved_inputs = screen.outcome.inputs
        await pilot.press("ctrl+s")
        await answer_dialog(pilot, app, path)
        assert load_plan_inputs(path) == saved_inputs
        assert path.name in text_of(screen, "#masthead")
        await retype(pilot, screen, "wall_mm", "60")
        assert plan_to_json_data(screen.plan)["window"]["wall_mm"] != 42.0
        await pilot.press("ctrl+o")
        await answer_dialog(pilot, app, path)
        assert screen.query_one("#wall_mm", Input).value == "42"
        assert screen.outcome.inputs == saved_inputs
        assert screen.plan is not None and screen.outcome.problems == {}


async def test_save_asks_before_replacing_a_file(tmp_path):
    path = tmp_path / "plan.yaml"
    path.write_text("keep me\n")
    app = ScanplanApp()
    async with app.run_test(size=(80, 24)) as pilot:
        await ready(app, pilot)
        await pilot.press("ctrl+s")
        await answer_dialog(pilot, app, path)
        assert isinstance(app.screen, PathDialog) and app.screen.request.confirm
        assert "exists" in app.screen.query_one("#path-problems").query_one("Static").render().plain
        assert path.read_text() == "keep me\n"
        await pilot.press("enter")
        await pilot.pause()
        assert not isinstance(app.screen, PathDialog)
        assert load_plan_inputs(path).bmi == 38.0


async def test_opening_a_broken_file_lists_every_problem(tmp_path):
    path = tmp_path / "broken.yaml"
    path.write_text("schema_version: 1\ntarget: liver\npatient:\n  bmi: lots\n  hat: 1\n")
    app = ScanplanApp()
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await ready(app, pilot)
        await pilot.press("ctrl+o")
        await answer_dialog(pilot, app, path)
        assert isinstance(app.screen, PathDialog)
        problems = app.screen.request.problems
        assert len(problems) == 2 and all(str(path) in p for p in problems)
        assert any(":4:" in p for p in problems) and any(":5:" in p for p in problems)
        await pilot.press("escape")
        assert screen.plan.patient.bmi == 38.0          # the open plan is untouched


async def test_supervised_draft_and_export(tmp_path):
    app = ScanplanApp()
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await ready(app, pilot)
        assert not screen.query_one("#signoff").display
        await pilot.press("ctrl+g")
        await pilot.pause()
        assert screen.query_one("#signoff").display and screen.plan.draft
        assert "DRAFT" in text_of(screen, "#masthead")
        await retype(pilot, screen, "student", "A. Learner")
        supervisor = screen.query_one("#supervisor", Input)
        assert supervisor.disabled and not supervisor.focusable     # only a signature fills it
        await retype(pilot, screen, "student_probe", "curved")
        for name in ("plan.md", "plan.html"):
            await pilot.press("ctrl+r")
            await answer_dialog(pilot, app, tmp_path / name)
            text = (tmp_path / name).read_text()
            assert "A. Learner" in text and "sign-off" in text and "not signed" in text
            assert "Student's decisions against the plan" in text and "curved" in text
            assert screen.plan.target.name in text
        assert (tmp_path / "plan.html").read_text().lstrip().lower().startswith("<!doctype html")
        await pilot.press("ctrl+r")
        await answer_dialog(pilot, app, tmp_path / "plan.pdf")
        assert isinstance(app.screen, PathDialog)
        assert any(".md" in p for p in app.screen.request.problems)


async def test_export_refused_while_a_field_is_invalid(tmp_path):
    app = ScanplanApp()
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await ready(app, pilot)
        await retype(pilot, screen, "bmi", "2")
        await pilot.press("ctrl+r")
        await pilot.pause()
        assert not isinstance(app.screen, PathDialog)
        assert list(tmp_path.iterdir()) == []


async def test_views_help_theme_and_quit():
    app = ScanplanApp()
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await ready(app, pilot)
        for key, view in (("f4", "safety"), ("f5", "depth"), ("f6", "doppler"), ("f2", "plan")):
            await pilot.press(key)
            await pilot.pause()
            assert screen.query_one("#views").active == view
        await pilot.press("f5")
        await pilot.pause()
        plot = screen.query_one("#profile-plot")
        # drawn on screen (a region with area) from this plan's profile, down to its depth
        assert plot.display and plot.region.area > 0
        profile = plot.parent.profile
        assert profile is not None and profile.target_depth_cm > 0
        from planner.report.profile import plan_budget_db
        assert profile.budget_db == plan_budget_db(screen.plan)
        assert "budget" in text_of(screen, "#profile-caption")
        await pilot.press("f1")
        await pilot.pause()
        assert isinstance(app.screen, HelpScreen)
        await pilot.press("escape")
        await pilot.press("f9")
        assert app.theme == "textual-light"
        await pilot.press("ctrl+q")
    assert app.return_code == 0


async def test_no_color_runs_and_draws_the_plot(monkeypatch, tmp_path):
    monkeypatch.setenv("NO_COLOR", "1")
    app = ScanplanApp()
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await ready(app, pilot)
        assert app.no_color
        await pilot.press("f5")
        await pilot.pause()
        assert screen.query_one("#profile-plot").display
        caption = text_of(screen, "#profile-caption")
        assert " ok" in caption and "OVER" in caption        # verdicts are words, not colours
        await pilot.press("f3")
        await pilot.pause()
        app.save_screenshot(filename="no-color.svg", path=str(tmp_path))
        svg = (tmp_path / "no-color.svg").read_text()
        assert "CAUTION" in svg                                # severities are words too


async def test_engine_failure_is_shown_not_raised(monkeypatch):
    import planner.library.targets as targets

    def broken():
        raise RuntimeError("library file unreadable")
    monkeypatch.setattr(targets, "load_library", broken)
    app = ScanplanApp()
    async with app.run_test(size=(80, 24)) as pilot:
        for _ in range(300):
            await pilot.pause(0.02)
            if app.planning.built and app.planning.query("#plan-status") and \
                    "could not start" in text_of(app.planning, "#plan-status"):
                break
        assert "library file unreadable" in text_of(app.planning, "#plan-status")
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert not isinstance(app.screen, PathDialog)


async def test_new_plan_and_escape_back_to_the_inputs():
    app = ScanplanApp()
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await ready(app, pilot)
        await retype(pilot, screen, "depth_cm", "18")
        await pilot.press("f3")
        await pilot.pause()
        assert screen.focused.id == "findings-list"
        await pilot.press("escape")
        assert screen.focused.id == "depth_cm"
        await pilot.press("ctrl+n")
        await pilot.pause()
        assert screen.query_one("#bmi", Input).value == ""
        # a new plan asks for the habitus instead of planning for an assumed patient
        assert screen.outcome.inputs.target_id == "liver" and screen.outcome.plan is None
        assert "bmi" in screen.outcome.problems and "BMI" in text_of(screen, "#plan-status")
        assert "new plan" in text_of(screen, "#masthead")
        assert "DEMO DATA" not in text_of(screen, "#masthead")
        # the new patient starts at the BMI: typing goes there, not into the last field used
        assert screen.focused.id == "bmi"
        await pilot.press("2", "1")
        await pilot.pause()
        assert screen.outcome.plan is not None and screen.outcome.inputs.bmi == 21


async def test_the_side_field_shows_for_paired_targets_and_plans_that_side():
    """Right kidney through the liver, left coronal through the spleen (KidneyWindowsTeaching):
    the Side field appears for the kidney only and changes the windows planned."""
    app = ScanplanApp()
    async with app.run_test(size=(100, 30)) as pilot:
        screen = await ready(app, pilot)
        await pilot.press("ctrl+t", *list("thyroid"), "enter")
        await pilot.pause()
        assert not screen.query_one("#row-side").display
        await pilot.press("ctrl+t", "ctrl+u", *list("kidney"), "enter")
        await pilot.pause()
        assert screen.plan.target.id == "kidney" and screen.query_one("#row-side").display
        assert screen.plan.inputs.side == "right"
        screen.query_one("#side").value = "left"
        await pilot.pause()
        assert screen.plan.inputs.side == "left"
        assert "Left kidney" in text_of(screen, "#masthead")
        assert all("liver" not in w.id for w in screen.plan.windows)


async def test_a_prior_exam_typed_in_the_form_calibrates_the_plan():
    """The last report's frequency and fade depth (UI fields): one alone is marked on the other
    field; both replan with the patient's effective attenuation (the CLI's --prior-* flags)."""
    app = ScanplanApp()
    async with app.run_test(size=(100, 40)) as pilot:
        screen = await ready(app, pilot)
        await retype(pilot, screen, "prior_frequency_mhz", "3.5")
        await pilot.pause(0.3)
        assert "together" in screen.query_one("#row-prior_fade_cm").error
        await retype(pilot, screen, "prior_fade_cm", "9")
        await pilot.pause(0.3)
        assert screen.plan.inputs is not None
        assert any(f.code == "prior_exam_calibration" for f in screen.plan.findings)
