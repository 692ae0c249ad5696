"""The sweep is the engine's vectorised path: each row must be the plan make_plan gives.

The check is against the engine's own single-plan path by construction of the design (one
engine path, DEVELOPERS.md); the physics behind both is checked against published values in
the physics tests.
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from planner.body.patient import Patient
from planner.engine import make_plan
from planner.engine.request import PlanRequest
from planner.engine.sweep import sweep, sweep_plans
from planner.errors import InputError

BMIS = np.array([17.0, 21.0, 26.5, 31.0, 36.0, 39.9, 40.0, 45.0, 52.0, 60.0])

CASES = [
    ("liver", {}), ("liver", {"conditions": {"steatosis": 2}}), ("kidney", {}),
    ("kidney", {"wall_mm": 28.0}), ("gallbladder", {"fat_mm": 35.0}), ("aorta", {}),
    ("thyroid", {}), ("femoral-vein", {}), ("appendix", {}), ("heart", {}),
    ("fetal-head", {"gestation_weeks": 20}), ("placenta", {"gestation_weeks": 30}),
    ("achilles-tendon", {}), ("pancreas", {"depth_cm": 12.0}), ("liver", {"sex": "male"}),
]


def _headline(plan):
    f = plan.frequency_mhz
    return (plan.window.id, plan.probe.id if plan.probe else None, f.high, f.low, plan.harmonic.advised)


@pytest.mark.parametrize("target,extra", CASES)
def test_sweep_rows_equal_single_plans(target, extra):
    request = PlanRequest(target, Patient.from_inputs(bmi=25, **extra))
    rows = sweep_plans(request, BMIS)
    assert [r.bmi for r in rows] == list(BMIS)
    for row in rows:
        single = make_plan(dataclasses.replace(
            request, patient=Patient.from_inputs(bmi=row.bmi, **extra)))
        assert (row.window, row.probe, row.high_mhz, row.low_mhz, row.harmonic) == _headline(single)
        assert row.start_mhz == single.frequency_mhz.start
        assert row.feasible == single.frequency_mhz.feasible


def test_sweep_forced_window_and_probe_band_fall_with_habitus():
    """Reach falls as the wall thickens (Szabo2004 ch. 4: loss grows with path length)."""
    rows = sweep_plans(PlanRequest("liver", window_id="right-subcostal"), np.linspace(18, 60, 15))
    assert {r.window for r in rows} == {"right-subcostal"}
    highs = [r.high_mhz for r in rows]
    assert all(b <= a for a, b in zip(highs, highs[1:]))
    assert highs[0] > highs[-1]


def test_sweep_measured_depth_shallower_than_wall_is_an_error():
    with pytest.raises(InputError, match="not deeper than the body wall"):
        sweep_plans(PlanRequest("liver", Patient.from_inputs(bmi=25, depth_cm=1.0)), [25.0, 50.0])


def test_window_sweep_arrays_match_make_plan():
    for bmi in (19.0, 27.0, 44.0):
        p = make_plan(PlanRequest("liver", Patient.from_inputs(bmi=bmi), window_id="right-subcostal"))
        s = sweep("liver", [bmi], window_id="right-subcostal")
        assert s["depth_cm"][0] == pytest.approx(p.depth_cm, abs=0.01)
        assert s["ceiling_mhz"][0] == pytest.approx(p.windows[0].reach_ceiling_mhz, abs=0.01)
        assert s["high_mhz"][0] == pytest.approx(p.frequency_mhz.high, abs=0.051)
