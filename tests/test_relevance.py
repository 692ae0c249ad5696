"""Relevance: the main findings hold what changes the exam; constant or negligible items go
to the compact "more" section (and stay in the plan and its JSON)."""

from __future__ import annotations

import pytest

from planner.body.patient import Patient
from planner.engine import PlanRequest, make_plan
from planner.engine.relevance import MEASURABLE_ERROR_MM, relevance_of
from planner.engine.serialize import plan_to_json_data
from planner.findings import Finding

PLANS = [(t, b) for t in ("liver", "gallbladder", "kidney", "aorta", "thyroid",
                          "carotid-bifurcation", "fetal-head", "fetal-heart", "embryo",
                          "achilles-tendon", "appendix", "femoral-vein", "pancreas")
         for b in (21.0, 45.0)]


def _plan(target: str, bmi: float, **context):
    weeks = 20.0 if target.startswith("fetal") else 8.0 if target == "embryo" else None
    return make_plan(PlanRequest(target, Patient.from_inputs(bmi=bmi, gestation_weeks=weeks),
                                 context_overrides=context or None))


def _codes(findings, relevance):
    return {f.code for f in findings if f.relevance == relevance}


@pytest.mark.parametrize("target,bmi", PLANS)
def test_constant_items_never_sit_in_the_main_list(target, bmi):
    """Items that are the same on every plan without an expected TI or MI (the regulatory
    output ceilings, the published scan-time table) are not in the main list."""
    plan = _plan(target, bmi)
    main = _codes(plan.findings + plan.safety, "main")
    assert not main & {"safety.output_ceiling", "safety.scan_time"}
    # the index to watch and ALARA are main on every plan (BMUS 2009 safety statement)
    assert {"safety.index", "safety.alara"} <= main


def test_every_finding_is_kept_and_carries_its_relevance_in_json():
    plan = _plan("kidney", 21.0)
    data = plan_to_json_data(plan)
    assert {f["relevance"] for f in data["findings"] + data["safety"]} == {"main", "more"}
    assert len(data["findings"]) == len(plan.findings)


def test_scan_time_is_main_once_the_expected_ti_is_given():
    """With an expected TI the BMUS 2009 table gives this exam a time limit: main."""
    plan = _plan("liver", 30.0, expected_ti=2.2)
    assert "safety.scan_time" in _codes(plan.safety, "main")


def test_a_sub_millimetre_depth_error_is_more_a_measurable_one_main():
    small = Finding("artefact.sound_speed", "info", "t", "m",
                    {"depth_error_mm": 0.12, "fat_error_mm": 0.7})
    large = Finding("artefact.sound_speed", "info", "t", "m",
                    {"depth_error_mm": -MEASURABLE_ERROR_MM * 1.5, "fat_error_mm": 0.2})
    assert relevance_of(small, None) == "more" and relevance_of(large, None) == "main"


def test_tilt_tolerance_is_main_for_a_specular_target_only():
    """Anisotropy: a tendon's fibrillar echo needs the beam perpendicular (a specular
    target); a kidney capsule or an embryo's skin line stays visible off-axis."""
    tendon = _plan("achilles-tendon", 21.0)
    kidney = _plan("kidney", 21.0)
    assert tendon.target.reflector == "specular" and "tilt.specular" in _codes(tendon.findings, "main")
    assert "tilt.specular" in _codes(kidney.findings, "more")


def test_the_body_wall_summary_is_main_in_obesity_and_more_when_slim():
    assert "habitus.wall" in _codes(_plan("liver", 45.0).findings, "main")
    assert "habitus.wall" in _codes(_plan("liver", 21.0).findings, "more")


def test_cautions_and_warnings_are_always_main():
    for severity in ("caution", "warning"):
        finding = Finding("safety.output_ceiling", severity, "t", "m", {})
        assert relevance_of(finding, None) == "main"


def test_a_bad_relevance_is_refused():
    with pytest.raises(ValueError, match="relevance"):
        Finding("x.y", "info", "t", "m", relevance="maybe")


def test_wall_aberration_is_main_through_a_thick_wall_and_more_over_a_tendon():
    """The aberration model rests on chest and abdominal wall specimens (Hinkelman, Szabo &
    Waag 1997: 21.3 ns through walls of about 20 mm); through 2 mm over the Achilles tendon it
    is an extrapolation that does not change the exam, through 37 mm at BMI 45 it does."""
    thick = _plan("liver", 45.0)
    thin = _plan("achilles-tendon", 21.0)
    assert "artefact.wall_aberration" in _codes(thick.findings, "main")
    assert "artefact.wall_aberration" in _codes(thin.findings, "more")


def _spread_relevance(target: str, bmi: float) -> tuple[str, str, float]:
    from planner.body.patient import Patient
    from planner.engine import PlanRequest, make_plan
    plan = make_plan(PlanRequest(target, Patient.from_inputs(bmi=bmi)))
    found = next(f for f in plan.findings if f.code == "band.reach_spread")
    return found.relevance, plan.frequency_mhz.start_basis, plan.frequency_mhz.start_probability


def test_the_reach_spread_is_main_only_where_the_doubt_changes_the_start():
    """A slim liver starts on the reach of 80 % of patients: the doubt is the start's, so it is
    main. A slim thyroid starts at the usual 15 MHz (UVAThyroidTechnique) that 96 % reach: the
    spread changes nothing a sonographer does, so it goes to More."""
    relevance, basis, share = _spread_relevance("liver", 21)
    assert (relevance, basis) == ("main", "margin")
    relevance, basis, share = _spread_relevance("thyroid", 21)
    assert basis == "practice" and share >= 0.9 and relevance == "more"
