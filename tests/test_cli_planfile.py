"""``scanplan plan --save FILE`` and ``plan --from FILE``: a saved plan reopens as the same plan.

The contract: for any command line, ``plan FLAGS --save f`` followed by ``plan --from f``
prints byte for byte the same ``--json`` (the plan is recomputed from the saved inputs), and
flags given with ``--from`` replace the file's values, so ``--from f --bmi 40`` is the plan of
the original flags with BMI 40. The cases together use every ``plan`` input flag (a test
checks that, so that a new flag cannot be left out of the file).
"""

from __future__ import annotations

import io
from contextlib import redirect_stderr, redirect_stdout
from pathlib import Path

import pytest

from planner.cli import build_parser, main
from planner.cli.plan import FLAG_FIELDS, inputs_from_args
from planner.cli.plan_inputs import STUDENT_FLAGS

ROOT = Path(__file__).resolve().parents[1]
PROBES = str(ROOT / "protocols" / "fellbrook" / "probes.yaml")
LOCAL = str(ROOT / "protocols" / "examples" / "local-policy.yaml")
HARBOURSIDE = ROOT / "protocols" / "harbourside"

CASES: dict[str, list[str]] = {
    "liver-everything-patient": ["--target", "liver", "--bmi", "38", "--sex", "female",
                                 "--condition", "steatosis:2", "--condition", "bowel_gas",
                                 "--window", "right-intercostal", "--expected-ti", "0.7",
                                 "--minutes", "15", "--draft"],
    "kidney-measured": ["--target", "kidney", "--side", "left", "--height-cm", "170",
                        "--weight-kg", "95", "--wall-mm", "40", "--depth-cm", "12"],
    "appendix-fat": ["--target", "appendix", "--fat-mm", "35", "--condition", "no_breath_hold"],
    "pleura-lung-mi": ["--target", "pleura", "--bmi", "28", "--lung-in-beam",
                       "--expected-mi", "0.9"],
    "heart-contrast": ["--target", "heart", "--bmi", "44", "--contrast", "--febrile"],
    "portal-doppler-probes": ["--target", "portal-vein", "--bmi", "30", "--doppler",
                              "--probes", PROBES, "--mode", "b_mode", "--mode", "colour_doppler"],
    "fetal-mca-local": ["--target", "fetal-mca", "--bmi", "36", "--gestation-weeks", "32",
                        "--doppler", "--local", LOCAL],
    "liver-pregnancy-exam": ["--target", "liver", "--bmi", "24", "--pregnancy-possible",
                             "--exam", "general_abdominal", "--mode", "b_mode"],
    "bladder-doppler-mode-appended": ["--target", "bladder", "--bmi", "31", "--doppler",
                                      "--mode", "b_mode", "--condition", "full_bladder"],
    "gallbladder-student-decisions": [
        "--target", "gallbladder", "--bmi", "32", "--draft", "--student-probe", "abdominal-curved",
        "--student-start-mhz", "5", "--student-window", "right-intercostal",
        "--student-position", "left lateral decubitus", "--student-harmonic", "on",
        "--student-tilt", "fan through the wall, keep it perpendicular",
        "--student-rationale", "wall 25 mm, stone suspected"],
    "liver-qa-prior-exam": ["--target", "liver", "--bmi", "30",
                            "--probes", str(HARBOURSIDE / "probes.yaml"),
                            "--qa", str(HARBOURSIDE / "qa.yaml"),
                            "--prior-frequency-mhz", "3.5", "--prior-fade-cm", "14"],
}


def run(*argv: str) -> tuple[int, str, str]:
    out, err = io.StringIO(), io.StringIO()
    with redirect_stdout(out), redirect_stderr(err):
        code = main(list(argv))
    return code, out.getvalue(), err.getvalue()


def plan_json(*argv: str) -> str:
    code, out, err = run("plan", *argv, "--json")
    assert code == 0, err
    return out


def test_the_cases_use_every_plan_input_flag():
    """Every input flag of ``plan`` appears in at least one case (and maps to a PlanInputs field)."""
    from dataclasses import fields

    from planner.planfile import PlanInputs
    parser = build_parser(["plan"])
    plan = parser._subparsers._group_actions[0].choices["plan"]
    inputs = {**FLAG_FIELDS, **STUDENT_FLAGS}
    input_flags = {a.option_strings[-1] for a in plan._actions if a.dest in inputs}
    outputs = {"dest": ("help", "from_file", "save", "format", "output", "force", "json",
                        "trusted")}
    assert {a.dest for a in plan._actions} - set(inputs) == set(outputs["dest"])
    assert set(FLAG_FIELDS.values()) <= {f.name for f in fields(PlanInputs)}
    used = {token for argv in CASES.values() for token in argv if token.startswith("--")}
    assert input_flags - used == set()


@pytest.mark.parametrize("name", sorted(CASES))
def test_save_then_from_gives_the_same_json(name, tmp_path):
    path = tmp_path / f"{name}.yaml"
    saved = plan_json(*CASES[name], "--save", str(path))
    assert path.exists()
    assert saved == plan_json(*CASES[name])          # saving does not change the plan
    assert plan_json("--from", str(path)) == saved   # reopening gives it byte for byte


@pytest.mark.parametrize("name", ["liver-everything-patient", "appendix-fat", "pleura-lung-mi",
                                  "fetal-mca-local"])
def test_a_flag_given_with_from_replaces_the_files_value(name, tmp_path):
    path = tmp_path / "plan.yaml"
    plan_json(*CASES[name], "--save", str(path))
    flags = list(CASES[name])
    if "--bmi" in flags:
        flags[flags.index("--bmi") + 1] = "40"
    else:
        flags += ["--bmi", "40"]
    reopened = plan_json("--from", str(path), "--bmi", "40")
    assert reopened == plan_json(*flags)
    assert reopened != plan_json("--from", str(path))


def test_body_size_flags_replace_the_files_height_and_weight(tmp_path):
    """A file with height and weight reopened with --bmi plans with that BMI (not an error)."""
    path = tmp_path / "plan.yaml"
    plan_json(*CASES["kidney-measured"], "--save", str(path))
    expected = ["--target", "kidney", "--side", "left", "--bmi", "33", "--wall-mm", "40", "--depth-cm", "12"]
    assert plan_json("--from", str(path), "--bmi", "33") == plan_json(*expected)


def test_repeatable_flags_replace_the_files_list(tmp_path):
    path = tmp_path / "plan.yaml"
    plan_json(*CASES["liver-everything-patient"], "--save", str(path))
    flags = [t for t in CASES["liver-everything-patient"]]
    i = flags.index("--condition")
    del flags[i:i + 4]                                  # both conditions ...
    flags += ["--condition", "ascites:2"]               # ... replaced by one
    assert plan_json("--from", str(path), "--condition", "ascites:2") == plan_json(*flags)


def test_inputs_from_args_keeps_the_base_where_no_flag_is_given():
    from planner.planfile import PlanInputs
    parser = build_parser(["plan"])
    base = PlanInputs(target_id="kidney", bmi=30.0, conditions=(("ascites", 1),), febrile=True)
    args = parser.parse_args(["plan", "--from", "x.yaml", "--sex", "male"])
    inputs = inputs_from_args(args, base=base)
    assert (inputs.target_id, inputs.bmi, inputs.conditions, inputs.febrile, inputs.sex) == (
        "kidney", 30.0, (("ascites", 1),), True, "male")


def test_the_request_is_built_by_to_request_once(monkeypatch):
    import planner.planfile as planfile
    seen = []
    real = planfile.to_request
    monkeypatch.setattr(planfile, "to_request", lambda inputs: seen.append(inputs) or real(inputs))
    assert run("plan", "--target", "liver", "--bmi", "31", "--json")[0] == 0
    assert len(seen) == 1 and seen[0].target_id == "liver" and seen[0].bmi == 31.0


def test_target_is_required_without_from():
    code, out, err = run("plan", "--bmi", "30")
    assert (code, out) == (2, "")
    assert err.startswith("scanplan: error: ") and "--target" in err and len(err.splitlines()) == 1


def test_save_refuses_to_overwrite_without_force(tmp_path):
    path = tmp_path / "plan.yaml"
    path.write_text("keep me\n", encoding="utf-8")
    code, out, err = run("plan", "--target", "liver", "--save", str(path))
    assert (code, out) == (2, "") and "--force" in err and len(err.splitlines()) == 1
    assert path.read_text(encoding="utf-8") == "keep me\n"
    assert run("plan", "--target", "liver", "--save", str(path), "--force")[0] == 0
    assert path.read_text(encoding="utf-8").startswith("# scanplan plan file")


def test_from_a_missing_or_broken_file_exits_1_naming_it(tmp_path):
    missing = tmp_path / "absent.yaml"
    code, out, err = run("plan", "--from", str(missing))
    assert (code, out) == (1, "") and str(missing) in err
    broken = tmp_path / "broken.yaml"
    broken.write_text("schema_version: 1\ntarget: liver\npatient: {bmi: fat}\n", encoding="utf-8")
    code, out, err = run("plan", "--from", str(broken))
    assert code == 1 and f"{broken}:3" in err and "patient.bmi" in err
