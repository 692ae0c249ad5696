"""The typed plan: frozen records, typed decisions, and the JSON produced at the edge only."""

from __future__ import annotations

import dataclasses

import pytest

from planner.body.patient import Patient
from planner.engine import Plan, PlanRequest, make_plan, plan_to_json_data
from planner.engine.model import HARMONIC_BASES
from planner.library.targets import load_library


def test_plan_and_its_parts_are_frozen():
    plan = make_plan(PlanRequest("liver", Patient.from_inputs(bmi=40)))
    with pytest.raises(dataclasses.FrozenInstanceError):
        plan.depth_cm = 1.0  # type: ignore[misc]
    with pytest.raises(dataclasses.FrozenInstanceError):
        plan.frequency_mhz.high = 20.0  # type: ignore[misc]
    assert isinstance(plan.findings, tuple) and isinstance(plan.windows, tuple)


@pytest.mark.parametrize("bmi", [20, 45])
def test_harmonic_basis_is_typed_and_matches_its_finding(bmi):
    """The harmonic decision carries why as a typed basis, in step with its finding."""
    finding_of = {"advised": "harmonic.advised", "contraindicated": "harmonic.contraindicated",
                  "out_of_reach": "harmonic.out_of_reach"}
    for tid in load_library().targets:
        plan = make_plan(PlanRequest(tid, Patient.from_inputs(bmi=bmi)))
        basis = plan.harmonic.basis
        assert basis in HARMONIC_BASES
        assert plan.harmonic.advised == (basis == "advised")
        codes = {f.code for f in plan.findings}
        if basis in finding_of:
            assert finding_of[basis] in codes, (tid, basis)
        if plan.probe is None:
            assert basis in ("no_harmonic_mode", "contraindicated")


def test_typed_decisions_stay_out_of_the_json():
    data = plan_to_json_data(make_plan(PlanRequest("liver", Patient.from_inputs(bmi=36))))
    assert "basis" not in data["harmonic"] and data["harmonic"]["advised"] is True
    assert set(data["harmonic"]["transmit_mhz"]) == {"low", "high"}
    assert data["schema_version"] == 1


def test_plan_type_is_the_typed_record():
    assert dataclasses.is_dataclass(Plan) and Plan.__dataclass_params__.frozen
