"""``scanplan schema KIND``: the printed schemas are valid JSON Schema (draft 2020-12, checked by
the jsonschema package's own meta-schema) and the shipped examples and real plans validate."""

from __future__ import annotations

import contextlib
import io
import json
from pathlib import Path

import jsonschema
import pytest
import yaml

from planner.cli import main
from planner.yamlio import load_user_yaml

ROOT = Path(__file__).resolve().parents[1]
KINDS = ["protocol", "probes", "policy", "plan", "plan-output", "trusted-keys", "qa"]


def _run(argv: list[str]) -> tuple[int, str, str]:
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main(argv)
    return code, out.getvalue(), err.getvalue()


def _schema(kind: str) -> dict:
    code, out, _ = _run(["schema", kind])
    assert code == 0
    return json.loads(out)


def test_list_names_every_kind():
    code, out, _ = _run(["schema", "--list"])
    assert code == 0
    assert [line.split()[0] for line in out.splitlines()] == KINDS


@pytest.mark.parametrize("kind", KINDS)
def test_each_schema_is_valid_json_schema(kind):
    jsonschema.Draft202012Validator.check_schema(_schema(kind))


def _examples(kind: str) -> list[Path]:
    files = sorted(ROOT.glob("protocols/*/*.yaml"))
    def kind_of(path: Path) -> str:
        data = yaml.safe_load(path.read_text(encoding="utf-8"))
        if "probes" in data:
            return "probes"
        if "measurements" in data:
            return "qa"
        if "views" in data or "protocol" in str(data.get("kind", "")):
            return "protocol"
        return "policy"
    return [p for p in files if kind_of(p) == kind]


@pytest.mark.parametrize("kind", ["protocol", "probes", "policy", "qa"])
def test_shipped_examples_validate(kind):
    validator = jsonschema.Draft202012Validator(_schema(kind))
    examples = _examples(kind)
    assert examples, f"no shipped {kind} example"
    for path in examples:
        data = load_user_yaml(path, kind=kind).data        # read as the loader reads it
        errors = list(validator.iter_errors(data))
        assert errors == [], (path.name, [e.message for e in errors[:3]])


def test_a_saved_plan_file_validates(tmp_path):
    saved = tmp_path / "p.yaml"
    assert _run(["plan", "--target", "carotid-bifurcation", "--bmi", "31", "--doppler", "--fat-mm", "9",
                 "--expected-mi", "0.9", "--lung-in-beam", "--save", str(saved), "--json"])[0] == 0
    jsonschema.validate(load_user_yaml(saved, kind="plan").data, _schema("plan"))


@pytest.mark.parametrize("flags", [["--target", "liver", "--bmi", "45", "--condition", "steatosis:2"],
                                   ["--target", "renal-artery", "--bmi", "42", "--doppler"],
                                   ["--target", "gallbladder", "--draft"]])
def test_plan_json_validates_against_plan_output(flags):
    code, out, _ = _run(["plan", *flags, "--json"])
    assert code == 0
    jsonschema.validate(json.loads(out), _schema("plan-output"))


@pytest.mark.parametrize("argv", [["schema"], ["schema", "nope"], ["schema", "plan", "--list"]])
def test_bad_schema_requests_are_one_line_errors(argv):
    code, out, err = _run(argv)
    assert code == 2 and out == "" and err.count("\n") == 1
