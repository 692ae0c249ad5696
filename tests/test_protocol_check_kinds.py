"""``scanplan protocol check`` recognises each department file's kind and checks it against
its own model; ``--kind`` forces one; a broken file of any kind reports every problem with
file, key path and line."""

from __future__ import annotations

import io
from contextlib import redirect_stderr, redirect_stdout
from pathlib import Path

import pytest

from planner.cli import main

ROOT = Path(__file__).resolve().parents[1]
SHIPPED = sorted(str(p) for p in (ROOT / "protocols").glob("*/*.yaml"))


def run(*argv: str) -> tuple[int, str]:
    out = io.StringIO()
    with redirect_stdout(out), redirect_stderr(io.StringIO()):
        code = main(list(argv))
    return code, out.getvalue()


def test_every_shipped_department_file_is_valid():
    """The README's `scanplan protocol check protocols/*/*.yaml` exits 0."""
    code, out = run("protocol", "check", *SHIPPED)
    assert code == 0, out
    assert out.endswith("all valid\n") and "policy" in out and "probes" in out


def test_each_kind_is_recognised():
    from planner.protocol.filekinds import check_department_files
    results = check_department_files(SHIPPED)
    kinds = {Path(p).name: k for p, (k, _) in results.items()}
    assert kinds["probes.yaml"] == "probes"
    assert kinds["local-policy.yaml"] == "policy"
    assert kinds["upper-abdomen.yaml"] == "protocol"
    assert kinds["qa.yaml"] == "qa"


def test_plan_and_trusted_key_files_are_checked(tmp_path):
    plan, trusted = tmp_path / "plan.yaml", tmp_path / "trusted.yaml"
    assert main(["plan", "--target", "liver", "--bmi", "30", "--save", str(plan)]) == 0
    with redirect_stdout(io.StringIO()):
        assert main(["draft", "keygen", "--name", "G. Mentor", "-o", str(tmp_path / "k.pem"),
                     "--public", str(trusted)]) == 0
    code, out = run("protocol", "check", str(plan), str(trusted))
    assert code == 0 and "(1 plan, 1 trusted-keys)" in out


BROKEN = {
    "probes": ("schema_version: 1\nprobes:\n  - id: p1\n    label: 7\n    bogus: 1\n",
               ["probes[0].label", "probes[0].bogus"]),
    "policy": ("schema_version: 1\ndepartment: D\napproved_by: 3\nexam_limits: {x: 1}\n",
               ["approved_by", "exam_limits.x"]),
    "plan": ("schema_version: 1\ntarget: liver\npatient:\n  bmi: '38'\n  colour: red\n",
             ["patient.bmi", "patient.colour"]),
    "trusted-keys": ("schema_version: 1\nkeys:\n  - key_id: xyz\n    name: ''\n"
                     "    public_key: abc\n", ["keys[0].key_id", "keys[0].name",
                                              "keys[0].public_key"]),
    "qa": ("schema_version: 1\nmeasurements:\n  - {probe: p1, date: 2026-13-01, frequency_mhz: 3.5,\n"
           "     phantom_attenuation_db_per_cm_mhz: 0.5, depth_of_penetration_cm: -2}\n",
           ["measurements[0].date", "measurements[0].depth_of_penetration_cm"]),
}


@pytest.mark.parametrize("kind", sorted(BROKEN))
def test_a_broken_file_of_any_kind_reports_every_problem_with_line(kind, tmp_path):
    text, keys = BROKEN[kind]
    path = tmp_path / f"{kind}.yaml"
    path.write_text(text)
    code, out = run("protocol", "check", str(path))
    assert code == 1
    problems = out.splitlines()[:-1]
    for key in keys:
        line = next((p for p in problems if f" {key}:" in p), None)
        assert line is not None, (key, out)
        assert line.startswith(f"{path}:") and line.split(":")[1].isdigit(), line


def test_kind_forces_one(tmp_path):
    probes = str(ROOT / "protocols" / "fellbrook" / "probes.yaml")
    assert run("protocol", "check", "--kind", "probes", probes)[0] == 0
    code, out = run("protocol", "check", "--kind", "protocol", probes)
    assert code == 1 and "looks like a probe inventory" in out
    err = io.StringIO()
    with redirect_stderr(err), redirect_stdout(io.StringIO()):
        assert main(["protocol", "check", "--kind", "recipe", probes]) == 2
    assert "valid kinds: protocol, plan, probes, policy, trusted-keys" in err.getvalue()


def test_the_help_names_the_kinds_of_the_table():
    from planner.cli.protocol import CHECK_KINDS
    from planner.protocol.filekinds import KIND_NAMES
    assert CHECK_KINDS == KIND_NAMES
