"""Likely conditions: steatosis at severe obesity when a normal liver is on the path."""

from __future__ import annotations

import pytest

from planner.body.patient import Patient
from planner.engine import PlanRequest, make_plan
from planner.engine.likely import LIKELY_STEATOSIS_PREVALENCE


def _plan(target, bmi, **kw):
    conditions = kw.pop("conditions", None)
    return make_plan(PlanRequest(target, Patient.from_inputs(bmi=bmi, conditions=conditions), **kw))


def _likely(plan):
    return next((f for f in plan.findings if f.code == "condition.likely_steatosis"), None)


def test_prevalence_is_the_published_biopsy_figure_Machado2006():
    """Machado, Marques-Vidal & Cortez-Pinto, J Hepatol 2006: steatosis in 91 % (85-98 %) of
    1620 severely obese bariatric patients."""
    assert LIKELY_STEATOSIS_PREVALENCE.value == pytest.approx(0.91)


def test_severely_obese_liver_plan_says_steatosis_is_likely_and_gives_its_band():
    """BMI 45 liver: the finding is a main caution and its band top is the one the engine plans
    for the same window with moderate steatosis entered (one engine path)."""
    plain = _plan("liver", 45)
    finding = _likely(plain)
    assert finding is not None and finding.severity == "caution" and finding.relevance == "main"
    with_it = _plan("liver", 45, conditions={"steatosis": 2}, window_id=plain.window.id)
    assert finding.values["band_top_with_steatosis_mhz"] == pytest.approx(with_it.frequency_mhz.high, abs=0.01)
    assert finding.values["band_top_with_steatosis_mhz"] < finding.values["band_top_mhz"]
    assert "Machado2006" in finding.sources


@pytest.mark.parametrize("target, bmi, conditions", [
    ("liver", 25, None),                    # not severe obesity
    ("liver", 45, {"steatosis": 1}),        # already entered
    ("thyroid", 45, None),                  # no liver on the path
])
def test_no_likely_steatosis_finding_where_it_does_not_apply(target, bmi, conditions):
    assert _likely(_plan(target, bmi, conditions=conditions)) is None
