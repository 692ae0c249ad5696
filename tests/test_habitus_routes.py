"""The limited-exam caution follows the wall at the chosen window, not the BMI alone: a
route where fat does not build up gets none at BMI 45; a measured thick wall gets it."""

from __future__ import annotations

import pytest

from planner.body.patient import Patient
from planner.body.walls import load_wall_models
from planner.engine import PlanRequest, make_plan
from planner.engine.habitus_rules import LIMITED_EXAM_BMI, limited_exam_fat_mm


def _codes(target, window_id=None, **patient):
    plan = make_plan(PlanRequest(target, Patient.from_inputs(**patient), window_id=window_id))
    return {f.code for f in plan.findings}, plan


@pytest.mark.parametrize("target,extra", [("embryo", {"gestation_weeks": 8.0}),
                                          ("achilles-tendon", {}), ("thyroid", {})])
def test_no_limited_exam_caution_where_fat_does_not_matter(target, extra):
    """Transvaginal, distal-limb and neck routes at BMI 45 (practice: the endocavitary and
    superficial routes are the ones offered when the abdominal wall limits the exam)."""
    codes, _ = _codes(target, bmi=45.0, **extra)
    assert "habitus.limited_exam" not in codes


def test_a_thick_trunk_wall_gets_the_caution_with_its_fat_named():
    codes, plan = _codes("liver", bmi=45.0)
    assert "habitus.limited_exam" in codes
    finding = next(f for f in plan.findings if f.code == "habitus.limited_exam")
    assert finding.values["subcutaneous_fat_mm"] >= finding.values["threshold_fat_mm"]
    assert "mm at" in finding.message


def test_a_measured_thick_wall_decides_whatever_the_bmi():
    """35 mm of fat measured at the subcostal window of a BMI 24 patient: the caution."""
    codes, plan = _codes("liver", window_id="right-subcostal", bmi=24.0, fat_mm=35.0)
    assert plan.window.id == "right-subcostal"
    assert "habitus.limited_exam" in codes


def test_threshold_is_the_trunk_fat_at_the_published_bmi():
    """Afifi nomogram (AfifiNomogram, as recorded in walls.yaml): fat to the rectus sheath
    0.7306 BMI + 0.864 mm at the umbilicus; minus the skin layer, at BMI 30 (Heinitz2023,
    NHSGGC468) that is about 20.5 mm in women; the male offset is lower (from memory)."""
    skin = next(layer for layer in load_wall_models()["periumbilical"].layers if layer.role == "skin")
    female = 0.7306 * LIMITED_EXAM_BMI + 0.864 - (skin.a_mm[0] + skin.b_mm_per_bmi[0] * 5.0)
    assert female == pytest.approx(20.5, abs=0.1)
    assert 17.0 <= limited_exam_fat_mm() <= female


def test_obese_class_one_on_a_trunk_route_keeps_the_published_bmi_threshold():
    """BMI 32.5 through the subcostal wall: the BMI-30 threshold (Heinitz2023) applies on
    the trunk even where the fat at this window is below the trunk-fat equivalent."""
    codes, plan = _codes("liver", window_id="right-subcostal", bmi=32.5)
    finding = next(f for f in plan.findings if f.code == "habitus.limited_exam")
    assert finding.values["subcutaneous_fat_mm"] < finding.values["threshold_fat_mm"]
    assert "trunk route" in finding.message


def test_measured_wall_and_fat_are_both_honoured_at_the_measured_window():
    """A wall of 40 mm with 30 mm of fat measured at the window: the stack there has a 40 mm
    wall of which 30 mm is fat (the measurement, not the BMI model's share)."""
    from planner.body.patient import Patient
    from planner.body.stack import build_stack
    from planner.library.targets import load_library

    window = load_library().get("liver").windows[0]
    stack = build_stack(Patient.from_inputs(bmi=30, wall_mm=40, fat_mm=30), window)
    wall = [lay for lay in stack.layers if lay.role in ("skin", "subcutaneous_fat", "muscle",
                                                        "preperitoneal_fat", "linea_alba")]
    assert sum(lay.thickness_cm for lay in wall) * 10 == pytest.approx(40.0, abs=0.05)
    fat = next(lay for lay in wall if lay.role == "subcutaneous_fat")
    assert fat.thickness_cm * 10 == pytest.approx(30.0, abs=0.05)
