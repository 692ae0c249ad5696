"""The file layer: one strict model per file kind, problems with lines, JSON Schemas.

The schemas are checked with the independent ``jsonschema`` package (an implementation of
"JSON Schema: A Media Type for Describing JSON Documents", draft 2020-12, json-schema.org):
each schema is valid against the draft's meta-schema, every shipped example satisfies its
schema, and broken files fail the schema at the key paths the loader reports.
"""

from __future__ import annotations

import dataclasses
import re
import subprocess
import sys
from pathlib import Path

import jsonschema
import pytest

from planner.datafiles import PACKAGE_FILES
from planner.errors import DataError, InputError
from planner.files import SCHEMA_KINDS, register_schema, schema_for
from planner.files.problems import BOOL_WORD_HINT, NUMBER_TEXT_HINT
from planner.library.probes import load_inventory
from planner.planfile import (PlanInputs, inputs_to_data, load_plan_inputs, save_plan_inputs,
                              to_request)
from planner.protocol.loader import load_protocol
from planner.safety.policy import load_local_policy
from planner.yamlio import dump_yaml, load_user_yaml

ROOT = Path(__file__).parents[1]
PROTOCOLS = ROOT / "protocols"
BROKEN = Path(__file__).parent / "fixtures" / "protocols_broken"
DATA = ROOT / "planner" / "data"

EXAMPLES = {
    "protocol": sorted(p for p in PROTOCOLS.glob("**/*.yaml")
                       if p.name not in {"probes.yaml", "local-policy.yaml", "qa.yaml"}),
    "probes": sorted(PROTOCOLS.glob("**/probes.yaml")) + [DATA / "probes.yaml"],
    "policy": sorted(PROTOCOLS.glob("**/local-policy.yaml")),
    "qa": sorted(PROTOCOLS.glob("**/qa.yaml")),
}

INVENTORY = """\
schema_version: 1
probes:
  - id: curved-2-6
    label: Curved array
    type: curvilinear
    band_mhz: [2.0, 6.0]
    aperture_mm: 40
    elevation_aperture_mm: 12
    elevation_focus_cm: 7
    footprint_mm: [60, 16]
    receive_f_number: 2.0
    pulse_cycles: 2
    harmonic: true
"""

POLICY = """\
schema_version: 1
department: Quayside Scanning Unit
exam_limits:
  obstetric: {max_ti: 1.0}
"""

PLAN = """\
schema_version: 1
target: liver
patient:
  bmi: 38
"""

PROTOCOL = PROTOCOLS / "harbourside" / "thyroid.yaml"

LOADERS = {
    "probes": (load_inventory, INVENTORY, "aperture_mm: 40"),
    "policy": (load_local_policy, POLICY, "max_ti: 1.0"),
    "plan": (load_plan_inputs, PLAN, "bmi: 38"),
}


def _validator(kind: str) -> jsonschema.Draft202012Validator:
    schema = schema_for(kind)
    jsonschema.Draft202012Validator.check_schema(schema)
    return jsonschema.Draft202012Validator(
        schema, format_checker=jsonschema.Draft202012Validator.FORMAT_CHECKER)


def _key_path(problem: str) -> str:
    """The ``key.path`` of a ``file:line:col: key.path: message`` problem."""
    return problem.split(": ", 2)[1]


def _schema_paths(kind: str, data: dict) -> set[str]:
    from planner.yamlio import format_key_path
    def leaves(errors):
        for error in errors:
            if error.context:      # anyOf (a nullable section): the branch that is not null
                yield from leaves(e for e in error.context if e.schema != {"type": "null"})
            else:
                yield error

    out = set()
    for error in leaves(_validator(kind).iter_errors(data)):
        path = tuple(error.absolute_path)
        if error.validator == "additionalProperties":       # the unknown key itself
            extra = re.findall(r"'([^']+)' was unexpected", error.message)
            path += tuple(extra[:1])
        out.add(format_key_path(path))
    return out


# -- loaders: tags, huge numbers, numeric text -------------------------------------------------

def _protocol_with(tmp_path: Path, old: str, new: str) -> Path:
    text = PROTOCOL.read_text(encoding="utf-8")
    assert old in text
    path = tmp_path / "protocol.yaml"
    path.write_text(text.replace(old, new, 1), encoding="utf-8")
    (tmp_path / "probes.yaml").write_bytes((PROTOCOL.parent / "probes.yaml").read_bytes())
    return path


def _user_file(kind: str, tmp_path: Path, old: str, new: str) -> Path:
    if kind == "protocol":
        return _protocol_with(tmp_path, old, new)
    _, text, _ = LOADERS[kind]
    assert old in text
    path = tmp_path / f"{kind}.yaml"
    path.write_text(text.replace(old, new, 1), encoding="utf-8")
    return path


def _load(kind: str, path: Path):
    return load_protocol(path) if kind == "protocol" else LOADERS[kind][0](path)


CASES = {"probes": "aperture_mm: 40", "policy": "max_ti: 1.0", "plan": "bmi: 38",
         "protocol": "expected_minutes: 2"}


@pytest.mark.parametrize("kind", list(CASES))
def test_a_bad_scalar_under_a_type_tag_is_one_located_problem(kind, tmp_path):
    """Reproducer: ``!!bool maybe`` once raised KeyError inside the YAML reader."""
    key = CASES[kind].split(":")[0]
    path = _user_file(kind, tmp_path, CASES[kind], f"{key}: !!bool maybe")
    with pytest.raises(DataError) as caught:
        _load(kind, path)
    assert len(caught.value.problems) == 1
    assert re.match(rf"{re.escape(str(path))}:\d+:\d+: .*{key}: 'maybe' is not true or false "
                    r"\(it is tagged !!bool\)", caught.value.problems[0])


@pytest.mark.parametrize("kind", list(CASES))
def test_a_400_digit_integer_is_a_clear_problem(kind, tmp_path):
    """Reproducer: a 400-digit integer once raised OverflowError (float conversion)."""
    key = CASES[kind].split(":")[0]
    path = _user_file(kind, tmp_path, CASES[kind], f"{key}: {'9' * 400}")
    with pytest.raises(DataError) as caught:
        _load(kind, path)
    problems = [p for p in caught.value.problems if f"{key}:" in p]
    assert problems and all("400-digit number" in p or "at most" in p for p in problems)


@pytest.mark.parametrize("kind", list(CASES))
def test_numeric_text_gets_the_same_hint_in_every_file_kind(kind, tmp_path):
    key, value = CASES[kind].split(": ")
    path = _user_file(kind, tmp_path, CASES[kind], f'{key}: "{value}"')
    with pytest.raises(DataError) as caught:
        _load(kind, path)
    assert [p.split(f"{key}: ", 1)[1] for p in caught.value.problems] == [
        f"expected a number, got text '{value}'{NUMBER_TEXT_HINT}"]


@pytest.mark.parametrize("kind", ["probes", "policy", "plan"])
def test_yes_no_words_get_the_same_hint(kind, tmp_path):
    key = CASES[kind].split(":")[0]
    path = _user_file(kind, tmp_path, CASES[kind], f"{key}: yes")
    with pytest.raises(DataError) as caught:
        _load(kind, path)
    assert caught.value.problems[0].endswith(f"expected a number, got true{BOOL_WORD_HINT}")


# -- JSON Schemas ----------------------------------------------------------------------------

def test_schema_registry_names_the_user_file_kinds():
    assert list(SCHEMA_KINDS)[:4] == ["protocol", "probes", "policy", "plan"]
    with pytest.raises(InputError, match="valid kinds: protocol, probes, policy, plan"):
        schema_for("qa-log")


def test_another_kind_can_be_registered():
    register_schema("example-kind", lambda: {"type": "object"})
    try:
        assert schema_for("example-kind") == {"type": "object"}
    finally:
        del SCHEMA_KINDS["example-kind"]


@pytest.mark.parametrize("kind", ["protocol", "probes", "policy", "plan"])
def test_each_schema_is_valid_draft_2020_12(kind):
    schema = schema_for(kind)
    jsonschema.Draft202012Validator.check_schema(schema)
    assert schema["$schema"] == "https://json-schema.org/draft/2020-12/schema"
    assert schema["additionalProperties"] is False


@pytest.mark.parametrize("kind,path", [(k, p) for k, paths in EXAMPLES.items() for p in paths],
                         ids=lambda v: v if isinstance(v, str) else v.name)
def test_every_shipped_example_satisfies_its_schema(kind, path):
    data = load_user_yaml(path, kind=kind).data
    assert [e.message for e in _validator(kind).iter_errors(data)] == []


def _every_flag() -> PlanInputs:
    return PlanInputs(target_id="liver", window_id="right-subcostal", bmi=None, height_cm=170.0,
                      weight_kg=95.0, sex="female", fat_mm=31.0, depth_cm=None,
                      conditions=(("steatosis", 2),), exam_type="general_abdominal",
                      modes=("b_mode", "colour_doppler"), febrile=True, lung_in_beam=True,
                      expected_ti=0.8, expected_mi=0.9, planned_minutes=12.0,
                      probes_path=str(PROTOCOLS / "harbourside" / "probes.yaml"),
                      local_policy_path=str(PROTOCOLS / "examples" / "local-policy.yaml"),
                      doppler=True, draft=True)


def test_a_saved_plan_file_satisfies_the_plan_schema():
    assert list(_validator("plan").iter_errors(inputs_to_data(_every_flag()))) == []
    assert list(_validator("plan").iter_errors(inputs_to_data(PlanInputs()))) == []


BROKEN_USER_FILES = {
    "probes": INVENTORY.replace("aperture_mm: 40", 'aperture_mm: "40"').replace(
        "harmonic: true", "harmonic: true\n    colour: grey").replace("type: curvilinear",
                                                                     "type: sector"),
    "policy": POLICY.replace("max_ti: 1.0", 'max_ti: "1e3", hours: 2') + "colour: blue\n",
    "plan": PLAN.replace("bmi: 38", 'bmi: "38"\n  shoe_size: 9') + "exam:\n  modes: []\n",
}


@pytest.mark.parametrize("kind", list(BROKEN_USER_FILES))
def test_broken_user_files_fail_the_schema_where_the_loader_reports(kind, tmp_path):
    path = tmp_path / f"{kind}.yaml"
    path.write_text(BROKEN_USER_FILES[kind], encoding="utf-8")
    with pytest.raises(DataError) as caught:
        LOADERS[kind][0](path)
    assert all(re.match(rf"{re.escape(str(path))}:\d+:\d+: ", p) for p in caught.value.problems)
    loader_paths = {_key_path(p) for p in caught.value.problems}
    assert len(loader_paths) >= 3
    assert loader_paths == _schema_paths(kind, load_user_yaml(path, kind=kind).data)


@pytest.mark.parametrize("name", ["unknown_key.yaml", "wrong_type.yaml"])
def test_broken_protocols_fail_the_schema_where_the_loader_reports(name):
    """Every schema error lies at a key path the loader reports (the loader also checks
    what a schema cannot: library ids, inventories, bibliography keys)."""
    with pytest.raises(DataError) as caught:
        load_protocol(BROKEN / name)
    loader_paths = {_key_path(p) for p in caught.value.problems}
    schema_paths = _schema_paths("protocol", load_user_yaml(BROKEN / name, kind="protocol").data)
    assert schema_paths and schema_paths <= loader_paths


def test_protocol_schema_command_uses_the_registry():
    from planner.protocol.jsonschema import protocol_json_schema
    assert protocol_json_schema() == schema_for("protocol")


# -- plan files hold every plan option -------------------------------------------------------

def test_every_plan_option_is_saved_and_reopened(tmp_path):
    inputs = _every_flag()
    path = tmp_path / "plan.yaml"
    save_plan_inputs(path, inputs)
    assert load_plan_inputs(path) == inputs
    text = path.read_text(encoding="utf-8")
    for key in ("fat_mm: 31.0", "expected_mi: 0.9", "lung_in_beam: true", "doppler: true",
                "probes: ", "local_policy: "):
        assert key in text


def test_a_plan_file_without_the_newer_keys_still_loads(tmp_path):
    path = tmp_path / "old.yaml"
    path.write_text(PLAN, encoding="utf-8")
    inputs = load_plan_inputs(path)
    assert (inputs.fat_mm, inputs.expected_mi, inputs.lung_in_beam, inputs.probes_path,
            inputs.local_policy_path, inputs.doppler) == (None, None, False, None, None, False)


def test_the_request_honours_every_plan_option():
    inputs = _every_flag()
    request = to_request(inputs)
    assert request.patient.fat_mm == 31.0
    assert request.context_overrides["expected_mi"] == 0.9
    assert request.context_overrides["lung_in_beam"] is True
    assert request.probes_path == inputs.probes_path
    assert request.local_policy_path == inputs.local_policy_path
    assert request.doppler is True
    plain = to_request(PlanInputs(target_id="liver", bmi=30.0, doppler=True))
    assert plain.doppler and plain.context_overrides is None
    assert {f.name for f in dataclasses.fields(PlanInputs)} >= {
        "fat_mm", "expected_mi", "lung_in_beam", "probes_path", "local_policy_path", "doppler"}


# -- package data ------------------------------------------------------------------------------

@pytest.mark.parametrize("name", PACKAGE_FILES)
def test_every_shipped_data_file_satisfies_its_model(name):
    from planner.files.package import check_package_file
    assert check_package_file(name) == []


def test_a_broken_data_file_is_reported_with_lines(tmp_path, monkeypatch):
    from planner.files.base import validate_data
    from planner.files.package import WallsFile
    from planner.yamlio import ProblemCollector
    text = (DATA / "walls.yaml").read_text(encoding="utf-8")
    path = tmp_path / "walls.yaml"
    path.write_text(text.replace("    intercostal: true", "    intercostal: maybe", 1),
                    encoding="utf-8")
    loaded = load_user_yaml(path, kind="package data")
    problems = ProblemCollector(path, loaded)
    validate_data(WallsFile, loaded.data, problems.add)
    assert len(problems.problems) == 1
    assert re.match(rf"{re.escape(str(path))}:\d+:5: walls.ruq_intercostal.intercostal: "
                    "expected true or false, got text 'maybe'", problems.problems[0])


def test_facts_about_targets_and_walls_come_from_the_data():
    from planner.body.walls import load_wall_models
    from planner.library.targets import INTERCOSTAL_WALLS, load_library
    walls = load_wall_models()
    assert set(INTERCOSTAL_WALLS) == {w for w, m in walls.items() if m.intercostal}
    assert {t.id for t in load_library() if t.bone_near_focus} == {
        "fetal-head", "fetal-spine", "infant-hip"}
    assert all(w.endocavitary == walls[w.wall].endocavitary
               for t in load_library() for w in t.windows)


# -- start-up ----------------------------------------------------------------------------------

def test_a_plan_from_package_data_does_not_import_pydantic():
    """pydantic costs about 60 ms to import; it loads only when a user file is validated."""
    code = ("import sys, planner.engine\n"
            "from planner.engine.request import PlanRequest\n"
            "from planner.body.patient import Patient\n"
            "planner.engine.make_plan(PlanRequest(target_id='liver', "
            "patient=Patient.from_inputs(bmi=38)))\n"
            "import planner.files, planner.library.targets, planner.planfile\n"
            "print(sorted(m for m in sys.modules if m.split('.')[0] in ('pydantic', "
            "'pydantic_core', 'jsonschema')))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True)
    assert out.stdout.strip() == "[]"


def test_dump_yaml_of_a_model_round_trip_is_plain_data():
    """What the plan file writes is plain YAML the safe loader reads back."""
    assert "!!" not in dump_yaml(inputs_to_data(_every_flag()))
