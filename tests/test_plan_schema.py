"""The JSON Schema of ``plan --json`` (generated from the typed plan) against real plans.

Real plans (every target at three habitus classes, every vessel target with Doppler, drafts,
measured values, local policy and a department inventory) must validate; a plan with a
renamed or missing key, or a value of the wrong type, must not.
"""

from __future__ import annotations

import copy
import json
from pathlib import Path

import jsonschema  # in the test extra: a missing install fails the tests, never skips them
import pytest

from planner.body.patient import Patient  # noqa: E402
from planner.engine import PlanRequest, make_plan  # noqa: E402
from planner.engine.doppler_plan import load_vessels  # noqa: E402
from planner.engine.serialize import plan_output_schema, plan_to_json_data  # noqa: E402
from planner.library.targets import load_library  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]


@pytest.fixture(scope="module")
def validator():
    schema = plan_output_schema()
    jsonschema.Draft202012Validator.check_schema(schema)
    return jsonschema.Draft202012Validator(schema)


def _data(request: PlanRequest) -> dict:
    # through JSON text, as a consumer of `plan --json` reads it
    return json.loads(json.dumps(plan_to_json_data(make_plan(request)), allow_nan=False))


@pytest.mark.parametrize("bmi", [19, 32, 48])
def test_every_target_validates(validator, bmi):
    for tid in load_library().targets:
        data = _data(PlanRequest(tid, Patient.from_inputs(bmi=bmi)))
        errors = [e.message for e in validator.iter_errors(data)]
        assert not errors, (tid, errors[:3])


def test_every_vessel_target_with_doppler_validates(validator):
    for tid in load_vessels():
        for bmi in (22, 45):
            data = _data(PlanRequest(tid, Patient.from_inputs(bmi=bmi), doppler=True))
            assert data["doppler"] is not None
            errors = [e.message for e in validator.iter_errors(data)]
            assert not errors, (tid, bmi, errors[:3])


def test_drafts_measured_values_policy_and_inventory_validate(validator):
    requests = [
        PlanRequest("gallbladder", Patient.from_inputs(bmi=33), draft=True),
        PlanRequest("kidney", Patient.from_inputs(wall_mm=40, conditions={"ascites": 1})),
        PlanRequest("thyroid", Patient.from_inputs(depth_cm=2.5)),
        PlanRequest("fetal-mca", Patient.from_inputs(bmi=36, gestation_weeks=32), doppler=True,
                    local_policy_path=str(ROOT / "protocols" / "examples" / "local-policy.yaml")),
        PlanRequest("portal-vein", Patient.from_inputs(bmi=30), doppler=True, draft=True,
                    probes_path=str(ROOT / "protocols" / "fellbrook" / "probes.yaml")),
        PlanRequest("liver", Patient.from_inputs(bmi=62)),          # outside the validated range
    ]
    for request in requests:
        data = _data(request)
        errors = [e.message for e in validator.iter_errors(data)]
        assert not errors, (request.target_id, errors[:3])
    assert data["validity"], "the BMI-62 plan carries a validity flag"


def test_schema_rejects_a_renamed_key_and_a_wrong_type(validator):
    data = _data(PlanRequest("aorta", Patient.from_inputs(bmi=38), doppler=True))
    renamed = copy.deepcopy(data)
    renamed["frequency_mhz"]["top"] = renamed["frequency_mhz"].pop("high")
    assert not validator.is_valid(renamed)
    wrong = copy.deepcopy(data)
    wrong["doppler"]["prf_max_hz"] = "fast"
    assert not validator.is_valid(wrong)
    missing = copy.deepcopy(data)
    del missing["safety"]
    assert not validator.is_valid(missing)


def test_schema_lists_every_top_level_key_of_the_plan():
    data = plan_to_json_data(make_plan(PlanRequest("liver")))
    schema = plan_output_schema()
    assert set(schema["properties"]) == set(data)
    assert set(schema["required"]) == set(data)
