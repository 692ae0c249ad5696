"""The rule registries: every engine, Doppler and safety rule is registered with an id, an area
and a scope; ids are unique; each id is exercised by a test; the engine and the safety report
run the registries (not hand-written call lists)."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from planner.body.patient import Patient
from planner.engine import PlanRequest, make_plan
from planner.engine.registry import ENGINE_RULES, all_registries
from planner.findings import Finding, Rule, RuleRegistry
from planner.safety import ExamContext, safety_findings

TESTS = Path(__file__).resolve().parent
AREAS = {"habitus", "band", "plan", "probe", "harmonic", "tilt", "artefact", "shadow", "window", "condition",
         "doppler", "safety"}


def _all_rules() -> list[Rule]:
    return [rule for registry in all_registries() for rule in registry.rules]


def test_every_rule_has_id_area_and_scope():
    rules = _all_rules()
    assert len(rules) >= 30
    for rule in rules:
        assert re.fullmatch(r"[a-z_]+(\.[a-z_]+)+", rule.id), rule.id
        assert rule.area in AREAS, (rule.id, rule.area)
        assert rule.scope.strip(), rule.id
        assert callable(rule.run) and callable(rule.applies)


def test_rule_ids_are_unique():
    ids = [rule.id for rule in _all_rules()]
    assert len(ids) == len(set(ids)), sorted(i for i in ids if ids.count(i) > 1)


def test_every_rule_id_appears_in_a_test():
    """Each rule is exercised by name somewhere in the suite other than this file."""
    text = "".join(p.read_text(encoding="utf-8") for p in TESTS.glob("test_*.py")
                   if p.name != Path(__file__).name)
    missing = [rule.id for rule in _all_rules() if rule.id not in text]
    assert not missing, f"rules without a test naming them: {missing}"


def test_registry_refuses_a_duplicate_id():
    registry: RuleRegistry[object] = RuleRegistry("example")
    registry.add(Rule("example.one", "plan", "every plan", lambda ctx: []))
    with pytest.raises(ValueError, match="already registered"):
        registry.add(Rule("example.one", "plan", "every plan", lambda ctx: []))


def test_registry_runs_rules_in_order_and_respects_scope():
    seen: list[str] = []
    registry: RuleRegistry[int] = RuleRegistry("example")

    @registry.register("example.first", "plan", "every context")
    def first(ctx: int) -> list[Finding]:
        seen.append("first")
        return [Finding("example.first", "info", "First", f"context {ctx}")]

    @registry.register("example.odd", "plan", "odd contexts only", applies=lambda ctx: ctx % 2 == 1)
    def odd(ctx: int) -> list[Finding]:
        seen.append("odd")
        return [Finding("example.odd", "advice", "Odd", "odd")]

    assert [f.code for f in registry.run(2)] == ["example.first"]
    assert [f.code for f in registry.run(3)] == ["example.first", "example.odd"]
    assert seen == ["first", "first", "odd"]


def test_make_plan_findings_come_from_the_registry():
    """A plan's non-Doppler findings are exactly the engine registry's, sorted by severity."""
    plan = make_plan(PlanRequest("liver", Patient.from_inputs(bmi=45, conditions={"steatosis": 2})))
    registered = {rule.id.split(".")[0] for rule in ENGINE_RULES.rules}
    assert {f.code.split(".")[0] for f in plan.findings} <= registered
    codes = [f.code for f in plan.findings]
    assert "habitus.limited_exam" in codes and "condition.steatosis" in codes


def test_safety_report_runs_the_safety_registry():
    """Practice: ALARA first and the regulatory output ceiling last (BMUS2009 ordering)."""
    codes = [f.code for f in safety_findings(ExamContext(exam_type="general_abdominal"))]
    assert codes[0] == "safety.alara" and codes[-1] == "safety.output_ceiling"
