"""Local safety policy: loading, every problem reported, local values beside published ones."""

from __future__ import annotations

import textwrap
from pathlib import Path

import pytest

from planner.errors import DataError
from planner.safety import ExamContext, is_local_source, load_local_policy, safety_findings
from planner.safety.policy import LocalDopplerRule, LocalExamLimits, LocalPolicy, LocalTimeBand

EXAMPLE = Path(__file__).resolve().parents[1] / "protocols" / "examples" / "local-policy.yaml"


def _write(tmp_path: Path, text: str) -> Path:
    path = tmp_path / "policy.yaml"
    path.write_text(textwrap.dedent(text), encoding="utf-8")
    return path


def _by_code(findings):
    return {f.code: f for f in findings}


def test_example_policy_loads():
    policy = load_local_policy(EXAMPLE)
    assert policy.department == "Harbourside Community Imaging"
    assert policy.review_date == "2027-03-31"
    assert policy.source_key == "local-policy:local-policy.yaml"
    assert policy.limits_for("obstetric").max_minutes == 40
    assert policy.limits_for("cardiac").max_minutes == 45  # falls back to "default"


def test_local_policy_tightens_the_obstetric_limit_and_both_are_shown_BMUS2009():
    """BMUS 2009 Fig. 1 gives < 30 min at TI 1.0-1.5; the example department allows 15 min.
    Both values appear in the same finding; the published one is not hidden."""
    policy = load_local_policy(EXAMPLE)
    ctx = ExamContext("obstetric", gestation_weeks=22, expected_ti=1.2, planned_minutes=20)
    published_only = _by_code(safety_findings(ctx))["safety.scan_time"]
    finding = _by_code(safety_findings(ctx, policy))["safety.scan_time"]
    assert finding.values["published_limit_min"] == pytest.approx(30.0)
    assert finding.values["local_limit_min"] == pytest.approx(15.0)
    assert "30 min" in finding.message and "15 min" in finding.message
    assert "Harbourside Community Imaging" in finding.message
    assert policy.source_key in finding.sources and "BMUS2009" in finding.sources
    assert published_only.severity == "info"   # 20 of 30 min
    assert finding.severity == "warning"        # 20 > local 15 min


def test_local_max_ti_beside_published_table():
    """A local maximum TI (1.5 for obstetric exams) is exceeded at TI 1.8 while the BMUS 2009
    table would still allow < 15 min."""
    policy = load_local_policy(EXAMPLE)
    ctx = ExamContext("obstetric", gestation_weeks=22, expected_ti=1.8, planned_minutes=3)
    finding = _by_code(safety_findings(ctx, policy))["safety.scan_time"]
    assert finding.values["published_limit_min"] == pytest.approx(15.0)
    assert finding.values["local_max_ti"] == pytest.approx(1.5)
    assert finding.severity == "warning"


def test_local_looser_limit_is_labelled_not_used_to_relax():
    """A local cap longer than the published one is labelled as such; the published limit still
    decides the severity (BMUS2009Detailed: TI 2.0-2.5 -> < 15 min)."""
    policy = LocalPolicy("Test department",
                         exam_limits={"default": LocalExamLimits(max_minutes=45)})
    ctx = ExamContext("general_abdominal", expected_ti=2.2, planned_minutes=20)
    finding = _by_code(safety_findings(ctx, policy))["safety.scan_time"]
    assert "longer than the published limit" in finding.message
    assert finding.severity == "warning"


def test_local_mi_ceiling_and_doppler_rules_shown_beside_published():
    """Neonatal MI: BMUS 0.3 beside local 0.3; early Doppler: WFUMB/ISUOG TI 1.0 beside
    local 0.7."""
    policy = load_local_policy(EXAMPLE)
    neonate = _by_code(safety_findings(ExamContext("neonatal_head", expected_mi=0.35), policy))
    assert neonate["safety.mi.neonatal"].values["local_max_mi"] == pytest.approx(0.3)
    assert neonate["safety.mi.neonatal"].severity == "warning"
    early = _by_code(safety_findings(ExamContext(
        "obstetric", gestation_weeks=12, modes=("b_mode", "pulsed_doppler"), expected_ti=0.8,
        planned_minutes=4), policy))["safety.early_pregnancy_doppler"]
    assert early.values["published_max_ti"] == pytest.approx(1.0)
    assert early.values["local_max_ti"] == pytest.approx(0.7)
    assert early.severity == "warning"  # 0.8 > local 0.7 although <= published 1.0
    assert any(is_local_source(s) for s in early.sources)


def test_local_preferences_beside_published_start_ti_AIUMEarlyDoppler():
    """AIUM: start pregnancy scans at TI 0.7; the example department prefers 0.5."""
    policy = load_local_policy(EXAMPLE)
    prefs = _by_code(safety_findings(ExamContext("obstetric", gestation_weeks=20),
                                     policy))["safety.local.preferences"]
    assert prefs.values["local_start_ti"] == pytest.approx(0.5)
    assert prefs.values["published_start_ti"] == pytest.approx(0.7)


def test_local_doppler_rule_outside_early_pregnancy_gets_own_finding():
    rule = LocalDopplerRule(("peripheral_vascular",), ("pulsed_doppler",), "not_permitted")
    policy = LocalPolicy("Test", doppler_restrictions=(rule,))
    findings = _by_code(safety_findings(ExamContext("peripheral_vascular",
                                                    modes=("pulsed_doppler",)), policy))
    assert findings["safety.local.doppler"].severity == "warning"


def test_time_bands_follow_published_edge_convention():
    band = LocalTimeBand(0.7, 1.0, 30)
    assert not band.contains(0.7) and band.contains(1.0) and not band.contains(1.01)


BROKEN = """\
schema_version: 2
department: ""
colour: blue
scan_time_limits:
  obstetric:
    - {ti_above: 1.0, ti_up_to: 0.5, max_minutes: 10}
    - {ti_above: 0.7, ti_up_to: 1.0, max_minutes: -5}
    - {ti_above: 0.2, ti_up_to: 0.9, max_minutes: 3}
    - {ti_above: 0.8, ti_up_to: 1.0, max_minutes: 3}
  underwater: []
exam_limits:
  obstetric: {max_ti: "1e3", max_mi: 2.5, hours: 3}
doppler_restrictions:
  - exam_types: [obstetric, martian]
    modes: [pulsed_doppler]
    permitted: yes
preferred_settings:
  cardiac: {start_ti: true, notes: "not a list"}
"""


def test_broken_policy_reports_every_problem_with_lines(tmp_path):
    path = _write(tmp_path, BROKEN)
    with pytest.raises(DataError) as caught:
        load_local_policy(path)
    problems = caught.value.problems
    text = "\n".join(problems)
    expected = [
        ":1:1: schema_version: must be 1, got the number 2",
        ":2:1: department: must not be empty",
        ":3:1: colour: unknown key 'colour'",
        ":6:23: scan_time_limits.obstetric[0].ti_up_to: must be above ti_above",
        ":7:38: scan_time_limits.obstetric[1].max_minutes: must be greater than 0, got -5",
        "scan_time_limits.obstetric: TI bands overlap",
        ":10:3: scan_time_limits.underwater: 'underwater' is not one of",
        "exam_limits.obstetric.max_ti: expected a number, got text '1e3' (read as text",
        "exam_limits.obstetric.max_mi: must be at most 1.9",
        "exam_limits.obstetric.hours: unknown key",
        ":14:29: doppler_restrictions[0].exam_types[1]: 'martian' is not one of",
        ":16:5: doppler_restrictions[0].permitted: true is not one of",
        "yes/no",
        "preferred_settings.cardiac.start_ti: expected a number, got true",
        "preferred_settings.cardiac.notes: expected a list",
    ]
    for piece in expected:
        assert piece in text, piece
    assert all(p.startswith(str(path)) for p in problems)


def test_policy_syntax_error_is_a_data_error(tmp_path):
    path = _write(tmp_path, "schema_version: 1\ndepartment: [unclosed\n")
    with pytest.raises(DataError) as caught:
        load_local_policy(path)
    assert "YAML syntax error" in caught.value.problems[0]


def test_missing_policy_file_is_a_data_error(tmp_path):
    with pytest.raises(DataError):
        load_local_policy(tmp_path / "nowhere.yaml")


def test_minimal_policy(tmp_path):
    path = _write(tmp_path, "schema_version: 1\ndepartment: Quayside Scanning Unit\n")
    policy = load_local_policy(path)
    assert policy.time_limit_min("obstetric", 1.2) is None
    ctx = ExamContext("obstetric", gestation_weeks=20, expected_ti=1.2, planned_minutes=10)
    finding = _by_code(safety_findings(ctx, policy))["safety.scan_time"]
    assert finding.values["local_limit_min"] is None
    assert "Local practice" not in finding.message
