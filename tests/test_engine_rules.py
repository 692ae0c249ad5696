"""One behaviour test per registered engine rule (by its registry id), each stating the
practitioner's expectation it checks. Numbers here are regressions, not published values,
unless a source is named."""

from __future__ import annotations

from planner.body.patient import Patient
from planner.engine import PlanRequest, make_plan
from planner.engine.registry import ENGINE_RULES


def codes(target: str, **patient) -> list[str]:
    return [f.code for f in make_plan(PlanRequest(target, Patient.from_inputs(**patient))).findings]


def test_rule_habitus_wall_every_plan_states_the_wall():
    """habitus.wall: every plan states the body wall, and says when it was measured."""
    plan = make_plan(PlanRequest("liver", Patient.from_inputs(bmi=28, wall_mm=30)))
    wall = next(f for f in plan.findings if f.code == "habitus.wall")
    assert "measured" in wall.message and wall.values["measured"] is True


def test_rule_habitus_limited_exam_from_bmi_30_Heinitz2023():
    """habitus.limited_exam: from BMI 30 a limited exam is likely (Heinitz2023), not below."""
    assert "habitus.limited_exam" in codes("liver", bmi=34)
    assert "habitus.limited_exam" not in codes("liver", bmi=24)


def test_rule_band_decision_slim_thyroid_gets_a_recommended_band():
    """band.decision: a slim neck's thyroid is reachable with the needed detail."""
    assert "band.recommended" in codes("thyroid", bmi=22)


def test_rule_harmonic_decision_thick_wall_liver_gets_harmonic_advice_THIRadioGraphics():
    """harmonic.decision: harmonic imaging is advised through a thick wall (BMI >= 30)."""
    plan = make_plan(PlanRequest("liver", Patient.from_inputs(bmi=36)))
    assert plan.harmonic.advised and plan.harmonic.basis == "advised"
    assert "harmonic.advised" in [f.code for f in plan.findings]


def test_rule_tilt_decision_tendon_gets_tilt_and_anisotropy_Crass1988():
    """tilt.decision: a tendon gets the specular tilt advice and the anisotropy caution."""
    found = codes("achilles-tendon", bmi=24)
    assert "tilt.specular" in found and "tilt.anisotropy" in found


def test_rule_artefact_edge_shadow_at_the_gallbladder_rim():
    """artefact.edge_shadow: a curved fluid-filled target casts rim shadows; a liver does not."""
    assert "artefact.edge_shadow" in codes("gallbladder", bmi=30)
    assert "artefact.edge_shadow" not in codes("liver", bmi=30)


def test_rule_shadow_gas_stated_bowel_gas_raises_the_level():
    """shadow.gas: stated bowel gas on an abdominal path gets gas-management advice."""
    assert "shadow.gas" in codes("pancreas", bmi=30, conditions={"bowel_gas": 2})
    assert "shadow.gas" not in codes("thyroid", bmi=30)


def test_rule_shadow_calcification_for_stone_prone_targets():
    """shadow.calcification: the gallbladder (stones) gets it; the liver parenchyma does not."""
    assert "shadow.calcification" in codes("gallbladder", bmi=30)
    assert "shadow.calcification" not in codes("liver", bmi=30)


def test_rule_shadow_bone_through_the_temporal_bone():
    """shadow.bone: the transcranial window crosses bone."""
    assert "shadow.bone" in codes("adult-transcranial", bmi=30)


def test_rule_window_fluid_full_bladder_is_a_window():
    """window.fluid: fluid above the target (a full bladder) helps penetration."""
    assert "window.fluid" in codes("prostate", bmi=30, conditions={"full_bladder": 1}) or \
        "window.fluid" in codes("bladder", bmi=30)
    assert "window.fluid" not in codes("thyroid", bmi=30)


def test_rule_condition_steatosis_on_the_liver_path():
    """condition.steatosis: a steatotic liver on the path attenuates more."""
    assert "condition.steatosis" in codes("liver", bmi=30, conditions={"steatosis": 2})
    assert "condition.steatosis" not in codes("liver", bmi=30)


def test_rule_condition_ascites_as_a_window():
    """condition.ascites: ascites between wall and organs is used as a window."""
    assert "condition.ascites" in codes("liver", bmi=30, conditions={"ascites": 2})


def test_rule_condition_approach_advice_for_stated_conditions():
    """condition.approach: no breath hold and a recent meal each get their advice."""
    found = codes("gallbladder", bmi=30, conditions={"no_breath_hold": 1, "post_prandial": 1})
    assert "condition.no_breath_hold" in found and "condition.post_prandial" in found


def test_engine_registry_order_habitus_first_conditions_last():
    """Run order: habitus rules first, condition rules last (findings then sort by severity)."""
    ids = [rule.id for rule in ENGINE_RULES.rules]
    assert ids[0] == "habitus.wall" and ids[-1] == "condition.approach"
