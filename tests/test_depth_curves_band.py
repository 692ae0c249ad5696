"""The depth view never marks a frequency inside the recommended band as over the budget."""

from __future__ import annotations

import pytest

from planner.body.patient import Patient
from planner.engine import PlanRequest, make_plan


@pytest.mark.parametrize("target", ["liver", "kidney", "appendix", "femoral-vein", "thyroid", "aorta"])
@pytest.mark.parametrize("bmi", [21, 38, 45, 55])
def test_band_frequencies_on_the_depth_plot_stay_within_the_budget(target, bmi):
    """The band's top is the reach ceiling, where the loss equals the budget; a plotted
    frequency rounded up past it showed 'OVER' for the recommended top (appendix and femoral
    vein at BMI 45 before the fix)."""
    plan = make_plan(PlanRequest(target, Patient.from_inputs(bmi=bmi)))
    if plan.depth_curves is None or not plan.frequency_mhz.feasible:
        pytest.skip("no band to plot")
    profile = plan.depth_curves.profile()
    for k, f in enumerate(profile.frequencies_mhz):
        if f <= plan.frequency_mhz.high:
            assert profile.loss_at_target_db(k) <= profile.budget_db + 1e-6, (f, plan.frequency_mhz)
