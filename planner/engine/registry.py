"""The engine's rule registry: every plan rule, its id, area and scope, in run order.

A rule is a function ``(ctx: RuleContext) -> list[Finding]`` that calls :mod:`planner.physics`
for every number. To add one: write the function (in the module of its area), add one
``ENGINE_RULES.add(Rule(...))`` line below at the place its findings should appear, and
test its behaviour with a practitioner's expectation. The deciders (band, harmonic, tilt)
run before the rules; their findings reach the plan through the ``band``, ``harmonic`` and
``tilt`` rules here. Doppler rules live in :mod:`planner.engine.doppler_rules`, safety rules
in :mod:`planner.safety.rules`; :func:`all_registries` lists them all.
"""

from __future__ import annotations

from typing import Any

from planner.engine import artefacts, habitus_rules, likely, probe_rules
from planner.engine.context import Decisions, RuleContext
from planner.findings import Finding, Rule, RuleRegistry

ENGINE_RULES: RuleRegistry[RuleContext] = RuleRegistry("engine")
"""The plan rules in run order (findings are then sorted by severity, stably)."""


def _decisions(ctx: RuleContext) -> Decisions:
    if ctx.decisions is None:
        raise ValueError("the deciders must run before the decision rules")
    return ctx.decisions


def band_findings(ctx: RuleContext) -> list[Finding]:
    """The band decider's findings: recommended band, unreachable detail or no probe."""
    return list(_decisions(ctx).band_findings)


def harmonic_findings(ctx: RuleContext) -> list[Finding]:
    """The harmonic decider's findings: advised, contraindicated or out of reach."""
    return list(_decisions(ctx).harmonic_findings)


def tilt_findings(ctx: RuleContext) -> list[Finding]:
    """The tilt decider's findings: specular tolerance and tendon anisotropy."""
    return list(_decisions(ctx).tilt_findings)


def no_window_findings(ctx: RuleContext) -> list[Finding]:
    """When no window gives the needed detail: say so and what could change."""
    target, ranked = ctx.target, ctx.assessments
    ideas = ["accept less detail (see the band finding)", "firm graded compression to thin the wall",
             "harmonic imaging for the near field"]
    if any(w.endocavitary for w in target.windows):
        ideas.insert(0, "the endocavitary route")
    ideas.append("another imaging method if the question needs finer detail")
    return [Finding("plan.no_window", "warning", "No window gives the needed detail",
                    f"No candidate window of the {target.name_in_sentence} shows {target.detail_mm:g} mm detail "
                    f"for this patient. Options: {'; '.join(ideas)}.",
                    {"windows_tried": [a.window.id for a in ranked]}, ("CommonPractice", "NHSGGC468"))]


def _no_feasible_window(ctx: RuleContext) -> bool:
    return not any(a.feasible for a in ctx.assessments)


_rule: Rule[RuleContext]
for _rule in (
    Rule("habitus.wall", "habitus", "every plan", habitus_rules.habitus_findings),
    Rule("habitus.limited_exam", "habitus", "patients from BMI 30",
         habitus_rules.limited_exam_findings),
    Rule("band.decision", "band", "every plan (the band decider's findings)", band_findings),
    Rule("probe.curved_for_habitus", "probe",
         "targets whose practice takes a curved array in larger patients, planned on one",
         probe_rules.curved_for_habitus_findings, probe_rules.applies),
    Rule("plan.no_window", "plan", "plans where no window gives the needed detail",
         no_window_findings, _no_feasible_window),
    Rule("harmonic.decision", "harmonic", "every plan (the harmonic decider's findings)",
         harmonic_findings),
    Rule("tilt.decision", "tilt", "specular targets (the tilt decider's findings)", tilt_findings),
    Rule("refraction.midline_prism", "artefact", "midline windows through the rectus muscles",
         artefacts.prism_findings),
    Rule("artefact.edge_shadow", "artefact", "curved fluid-filled targets",
         artefacts.edge_shadow_findings),
    Rule("artefact.wall_aberration", "artefact", "windows with fat or muscle in the body wall",
         artefacts.wall_aberration_findings),
    Rule("artefact.sound_speed", "artefact", "every plan", artefacts.sound_speed_findings),
    Rule("shadow.ribs", "shadow", "intercostal windows with a rib gap", artefacts.rib_findings),
    Rule("shadow.gas", "shadow", "gas-prone windows or stated bowel gas", artefacts.gas_findings),
    Rule("shadow.calcification", "shadow", "targets with moderate or high calcification risk",
         artefacts.calcification_findings),
    Rule("shadow.bone", "shadow", "windows with bone on the path", artefacts.bone_path_findings),
    Rule("window.fluid", "window", "paths crossing fluid above the target", artefacts.fluid_findings),
    Rule("condition.steatosis", "condition", "a steatotic liver on the path",
         habitus_rules.steatosis_findings),
    Rule("condition.likely_steatosis", "condition",
         "severe obesity with a normal liver on the path (steatosis likely, not entered)",
         likely.likely_steatosis_findings),
    Rule("condition.ascites", "condition", "ascites on the path", habitus_rules.ascites_findings),
    Rule("condition.approach", "condition",
         "stated conditions that change the approach (breath hold, mobility, fasting, oedema)",
         habitus_rules.approach_findings),
):
    ENGINE_RULES.add(_rule)


def all_registries() -> tuple[RuleRegistry[Any], ...]:
    """Every rule registry of the planner: engine, Doppler and safety rules."""
    from planner.engine.doppler_rules import DOPPLER_RULES
    from planner.safety.rules import SAFETY_RULES
    return (ENGINE_RULES, DOPPLER_RULES, SAFETY_RULES)
