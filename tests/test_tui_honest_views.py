"""The UI never contradicts itself: no plan for an assumed patient while the BMI is being
edited, a Doppler view that says why it is empty, region names as a reader writes them."""

from __future__ import annotations

from planner.engine import PlanRequest, make_plan
from planner.body.patient import Patient
from planner.tui.app import ScanplanApp
from planner.tui.compute import compute, form_values
from planner.tui.demo import DEMO_INPUTS
from planner.tui.widgets.doppler_view import NO_DOPPLER, no_doppler_text
from planner.tui.widgets.target_picker import region_label
from tests.test_tui_app import ready, retype, text_of


def test_a_cleared_bmi_is_a_problem_not_an_assumed_patient():
    raw = form_values(DEMO_INPUTS)
    raw.update(bmi="", height_cm="", weight_kg="", wall_mm="")
    outcome = compute(raw)
    assert outcome.plan is None and "bmi" in outcome.problems


def test_a_measured_wall_alone_still_plans():
    raw = form_values(DEMO_INPUTS)
    raw.update(bmi="", height_cm="", weight_kg="", wall_mm="30")
    assert compute(raw).plan is not None


async def test_clearing_the_bmi_marks_the_field_and_keeps_the_last_plan():
    app = ScanplanApp()
    async with app.run_test(size=(100, 30)) as pilot:
        screen = await ready(app, pilot)
        await retype(pilot, screen, "bmi", "")
        assert screen.outcome.plan is None and "bmi" in screen.outcome.problems
        status = text_of(screen, "#plan-status")
        assert "BMI" in status and "last valid plan" in status
        assert screen.plan.patient.bmi == 38.0          # the demo patient's plan, not BMI 25


def test_doppler_view_says_the_target_has_no_velocity_data():
    """Doppler planning asked for a liver plan: the view names the reason, not 'tick a mode'."""
    plan = make_plan(PlanRequest("liver", Patient.from_inputs(bmi=30.0), doppler=True))
    assert plan.doppler is None
    text = no_doppler_text(plan)
    assert text != NO_DOPPLER and "velocities" in text and plan.target.name in text


def test_doppler_view_without_doppler_planning_says_how_to_ask_for_it():
    plan = make_plan(PlanRequest("liver", Patient.from_inputs(bmi=30.0)))
    assert no_doppler_text(plan) == NO_DOPPLER


def test_region_ids_are_shown_as_words():
    assert region_label("small_parts") == "small parts"
    assert region_label("abdomen") == "abdomen"
