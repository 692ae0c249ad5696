"""Saved plans (planner.planfile): exact round trip, every problem with its line, safe writes."""

from __future__ import annotations

import subprocess
import sys

import pytest

from planner.errors import DataError, InputError
from planner.plancheck import check_inputs
from planner.planfile import (PlanInputs, SignOff, inputs_to_data, load_plan_inputs,
                              make_plan_for, save_plan_inputs, to_request)

FULL = PlanInputs(target_id="fetal-head", window_id=None, bmi=None, height_cm=165.0, weight_kg=98.5,
                  sex="female", wall_mm=None, depth_cm=None, gestation_weeks=21.0,
                  conditions=(("oedema", 1),), exam_type="obstetric",
                  modes=("b_mode", "pulsed_doppler"), contrast_agent=False, febrile=True,
                  pregnancy_possible=False, expected_ti=0.8, planned_minutes=25.0, draft=True,
                  signoff=SignOff(student="A. Learner", supervisor="B. Mentor", date="2026-12-01",
                                  supervisor_comments="Check the TI: 'TIB' here.",
                                  student_reflection="Line 1\nLine 2: a colon"))
"""Invented inputs touching every field (demo data)."""


def test_round_trip_is_exact(tmp_path):
    """Saving then loading gives the same inputs; saving those again gives the same bytes."""
    first, second = tmp_path / "a.yaml", tmp_path / "b.yaml"
    save_plan_inputs(first, FULL)
    loaded = load_plan_inputs(first)
    assert loaded == FULL
    save_plan_inputs(second, loaded)
    assert first.read_bytes() == second.read_bytes()
    assert "schema_version: 1" in first.read_text()


def test_defaults_fill_missing_keys(tmp_path):
    path = tmp_path / "small.yaml"
    path.write_text("schema_version: 1\ntarget: thyroid\npatient:\n  bmi: 22\n")
    assert load_plan_inputs(path) == PlanInputs(target_id="thyroid", bmi=22.0)


def test_every_problem_is_reported_with_its_line(tmp_path):
    path = tmp_path / "bad.yaml"
    path.write_text("schema_version: 1\n"          # 1
                    "target: liver\n"               # 2
                    "patient:\n"                    # 3
                    "  bmi: heavy\n"                # 4  not a number
                    "  shoe_size: 44\n"             # 5  unknown key
                    "exam:\n"                       # 6
                    "  modes: [b_mode, x_ray]\n"    # 7  unknown mode
                    "  febrile: maybe\n"            # 8  not a flag
                    "supervision:\n"                # 9
                    "  draft: 1\n")                 # 10 not a flag
    with pytest.raises(DataError) as caught:
        load_plan_inputs(path)
    problems = caught.value.problems
    lines = sorted(int(p.split(":")[1]) for p in problems)
    assert lines == [4, 5, 7, 8, 10]
    assert any("shoe_size" in p and "valid keys" in p for p in problems)


def test_impossible_values_are_reported_at_their_key(tmp_path):
    path = tmp_path / "values.yaml"
    path.write_text("schema_version: 1\ntarget: livr\npatient:\n  bmi: 4\n")
    with pytest.raises(DataError) as caught:
        load_plan_inputs(path)
    text = "\n".join(caught.value.problems)
    assert ":2:1: target: unknown target 'livr' (did you mean 'liver'?)" in text
    assert ":4:3: patient.bmi: BMI must be at least 10" in text


def test_yaml_1_1_number_text_is_refused_with_the_shared_hint(tmp_path):
    """PyYAML (YAML 1.1) reads 3.5e1 as text, and "38" is text: a plan file refuses both with
    the same hint as every other file kind, instead of guessing a number."""
    from planner.files.problems import NUMBER_TEXT_HINT
    path = tmp_path / "exp.yaml"
    path.write_text('schema_version: 1\ntarget: liver\npatient:\n  bmi: 3.5e1\n'
                    '  weight_kg: "38"\n')
    with pytest.raises(DataError) as caught:
        load_plan_inputs(path)
    assert caught.value.problems == [
        f"{path}:4:3: patient.bmi: expected a number, got text '3.5e1'{NUMBER_TEXT_HINT}",
        f"{path}:5:3: patient.weight_kg: expected a number, got text '38'{NUMBER_TEXT_HINT}"]
    path.write_text("schema_version: 1\ntarget: liver\npatient:\n  bmi: 35.0\n")
    assert load_plan_inputs(path).bmi == 35.0


def test_wrong_schema_version_and_not_a_mapping(tmp_path):
    path = tmp_path / "v2.yaml"
    path.write_text("schema_version: 2\ntarget: liver\n")
    with pytest.raises(DataError, match="schema_version: must be 1"):
        load_plan_inputs(path)
    path.write_text("- liver\n")
    with pytest.raises(DataError, match="mapping"):
        load_plan_inputs(path)


def test_writes_are_safe(tmp_path):
    path = tmp_path / "p.yaml"
    save_plan_inputs(path, PlanInputs(bmi=30.0))
    before = path.read_bytes()
    with pytest.raises(InputError, match="exists"):
        save_plan_inputs(path, PlanInputs(bmi=31.0))
    assert path.read_bytes() == before
    with pytest.raises(InputError, match="invalid plan"):
        save_plan_inputs(path, PlanInputs(bmi=3.0), overwrite=True)
    assert path.read_bytes() == before
    save_plan_inputs(path, PlanInputs(bmi=31.0), overwrite=True)
    assert load_plan_inputs(path).bmi == 31.0
    assert [p.name for p in tmp_path.iterdir()] == ["p.yaml"]      # no temporary file left


@pytest.mark.parametrize("inputs, field, words", [
    (PlanInputs(bmi=5.0), "bmi", "at least 10"),
    (PlanInputs(height_cm=170.0), "weight_kg", "together"),
    (PlanInputs(bmi=30.0, height_cm=170.0, weight_kg=80.0), "bmi", "not both"),
    (PlanInputs(height_cm=20.0, weight_kg=80.0), "height_cm", "between 50 and 260"),
    (PlanInputs(height_cm=170.0, weight_kg=900.0), "weight_kg", "between 2 and 400"),
    (PlanInputs(wall_mm=50.0, depth_cm=3.0), "depth_cm", "deeper than the wall"),
    (PlanInputs(target_id="infant-hip", gestation_weeks=20.0), "gestation_weeks", "neonatal"),
    (PlanInputs(conditions=(("steatosis", 5),)), "conditions", "grade"),
    (PlanInputs(target_id="liver", window_id="armpit"), "window_id", "valid windows"),
    (PlanInputs(expected_ti=-1.0), "expected_ti", ">= 0"),
])
def test_problems_land_on_the_field_that_causes_them(inputs, field, words):
    problems = check_inputs(inputs)
    assert field in problems and words in problems[field], problems


def test_untouched_exam_context_is_left_to_the_engine():
    request = to_request(PlanInputs(target_id="liver", bmi=38.0))
    assert request.context is None and request.doppler is False


def test_user_context_keeps_the_engines_bone_and_index_choice():
    """Setting an expected TI must not change which index to watch: the fetal head is bone
    near the focus, so TIB (BMUS2009 obstetric guidance), as the engine decides by itself."""
    default = make_plan_for(PlanInputs(target_id="fetal-head", gestation_weeks=22.0))
    custom = make_plan_for(PlanInputs(target_id="fetal-head", gestation_weeks=22.0,
                                      expected_ti=0.7, planned_minutes=20.0))
    assert default.monitored_index == custom.monitored_index == "TIB"
    codes = {f.code for f in custom.safety}
    assert any("scan_time" in code for code in codes)


def test_doppler_mode_asks_for_doppler_planning():
    plan = make_plan_for(PlanInputs(target_id="renal-artery", bmi=45.0,
                                    modes=("b_mode", "pulsed_doppler")))
    assert plan.doppler is not None and plan.doppler.depth_cm > 0


def test_inputs_to_data_writes_every_key():
    data = inputs_to_data(PlanInputs())
    assert list(data) == ["schema_version", "target", "window", "side", "patient", "exam", "files",
                          "supervision", "decisions"]
    assert set(data["decisions"]) == {"probe", "start_mhz", "window", "position", "harmonic",
                                      "tilt", "rationale"}
    assert set(data["supervision"]) == {"draft", "student", "supervisor", "date",
                                        "supervisor_comments", "student_reflection"}


def test_importing_the_plan_file_module_loads_no_textual():
    """Import hygiene: saved plans are usable without the terminal UI."""
    code = ("import sys, planner.planfile, planner.report.profile; "
            "print(any(m == 'textual' or m.startswith('textual.') for m in sys.modules))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"
