"""Probe choice across the inventory as practice makes it: a curved array for the appendix and
the deep femoral vein of a larger patient (with the linear named as the alternative), and the
highest-frequency linear array for small parts."""

from __future__ import annotations

import pytest

from planner.body.patient import Patient
from planner.engine import PlanRequest, make_plan
from planner.library.targets import load_library


def _plan(target, **patient):
    sex = patient.pop("sex", None)
    return make_plan(PlanRequest(target, Patient.from_inputs(sex=sex, **patient)))


def _finding(plan, code):
    return next((f for f in plan.findings if f.code == code), None)


@pytest.mark.parametrize("target", ["appendix", "femoral-vein"])
def test_a_slim_patient_keeps_the_linear_array(target):
    """GradedCompressionModule (graded compression with a linear probe); AIUMPeripheralVenous
    (linear transducers for the limb veins)."""
    plan = _plan(target, bmi=21)
    assert plan.probe.type == "linear"
    assert _finding(plan, "probe.curved_for_habitus") is None


@pytest.mark.parametrize("target", ["appendix", "femoral-vein"])
def test_a_larger_patient_gets_a_curved_array_and_the_linear_is_named(target):
    """GradedCompressionModule: 'in larger patients, consider a lower frequency curvilinear
    probe'; AIUMPeripheralVenous: a curved array for deep veins and large limbs."""
    plan = _plan(target, bmi=42)
    assert plan.probe.type == "curvilinear"
    found = _finding(plan, "probe.curved_for_habitus")
    assert found is not None and found.values["linear_alternative"] == "general-linear"
    assert "General-purpose linear array" in found.message


def test_a_measured_wall_decides_as_well_as_a_bmi():
    """The rule reads the wall at the window, not the BMI (issue: habitus by the wall)."""
    assert _plan("appendix", bmi=25, wall_mm=45).probe.type == "curvilinear"
    assert _plan("appendix", bmi=40, wall_mm=15).probe.type == "linear"


@pytest.mark.parametrize("target", ["appendix", "femoral-vein"])
def test_the_threshold_is_the_modelled_wall_at_who_bmi_30(target):
    """Derived value: 'larger patient' taken as obese (WHO BMI 30); the data's threshold must stay
    the wall model's wall at BMI 30 at the target's first window (within 1 mm)."""
    threshold = load_library().get(target).curved_array_from_wall_mm
    wall = _plan(target, bmi=30).windows[0].wall_mm
    assert abs(wall - threshold) <= 1.0


@pytest.mark.parametrize("target,sex,bmi", [("thyroid", None, 21), ("thyroid", None, 42),
                                            ("breast", "female", 21), ("testis", "male", 42)])
def test_small_parts_use_the_highest_frequency_linear_that_reaches(target, sex, bmi):
    """UVAThyroidTechnique: a high-frequency (10-15 MHz) linear transducer, the highest frequency
    that still penetrates; ACRBreastUSEquipment2026: at least 12 MHz; ScrotalTechniqueTeaching:
    9-15 MHz linear."""
    plan = _plan(target, bmi=bmi, sex=sex)
    assert plan.probe.id == "superficial-linear"
    assert 10.0 <= plan.frequency_mhz.start <= 15.0
