"""Conditions that are likely for this patient but were not entered, and what they would change.

At severe obesity hepatic steatosis is the usual finding: 91 % (range 85-98 %) of 1620
severely obese patients in twelve bariatric-surgery series had it on liver biopsy
(Machado2006); 71.5 % (67-76 %) of 435 in a later biopsy series (BariatricBiopsy2011). A plan for
such a patient through a normal liver therefore over-states the reach; the rule says so and
plans the same window again with a moderately steatotic liver, so that the user sees the
band that a likely liver gives (the engine's one path, with the patient's condition added).
"""

from __future__ import annotations

from dataclasses import replace

from planner.body.stack import build_stack_batch, measured_wall_ratio
from planner.body.walls import load_wall_models
from planner.engine.assess import assessment_at
from planner.engine.batch import assess_batches
from planner.engine.context import RuleContext
from planner.findings import Finding
from planner.provenance import Sourced

LIKELY_STEATOSIS_BMI = Sourced(
    35.0, "Machado2006", "common_practice",
    "the series are of bariatric candidates, BMI >= 35 with comorbidity or >= 40; below that "
    "the prevalence is lower and no grade can be assumed")
"""BMI from which a liver on the path is planned as likely steatotic. [kg/m^2]"""

LIKELY_STEATOSIS_PREVALENCE = Sourced(
    0.91, "Machado2006", "verified", "steatosis on biopsy, 12 series, 1620 severely obese "
    "patients; range 0.85-0.98 (0.715 in BariatricBiopsy2011)")
"""Share of severely obese patients with hepatic steatosis on biopsy. [-]"""

ASSUMED_GRADE: int = 2
"""Steatosis grade planned as the likely alternative (moderate; common practice: the middle
of the graded range, so the figure neither under- nor over-states a mild or severe liver)."""


BAND_CHANGE_MHZ: float = 0.1
"""Smallest fall of the band top worth a main finding (one displayed decimal; common practice). [MHz]"""


def _normal_liver_on_path(ctx: RuleContext) -> bool:
    return any(lay.tissue.id == "liver" for lay in ctx.stack.layers)


def likely_steatosis_findings(ctx: RuleContext) -> list[Finding]:
    """Severe obesity, a normal liver on the path and no steatosis entered: say that steatosis
    is likely and give the band of the same window with a moderately steatotic liver."""
    p = ctx.patient
    if p.bmi < LIKELY_STEATOSIS_BMI.value or "steatosis" in p.conditions or not _normal_liver_on_path(ctx):
        return []
    option = ctx.option
    if option is None:
        return []
    likely = replace(p, conditions={**p.conditions, "steatosis": ASSUMED_GRADE})
    window = ctx.window
    ratio = measured_wall_ratio(load_wall_models()[window.wall], likely, window.wall_factor)
    batch = build_stack_batch(likely, window, wall_ratio=ratio)
    if not batch.valid[0]:
        return []
    alt = assessment_at(assess_batches([batch], ctx.target, ctx.inventory)[0], 0, window)
    alt_option = next((o for o in alt.options if o.probe.id == option.probe.id), None)
    if alt_option is None:
        return []
    share = LIKELY_STEATOSIS_PREVALENCE.value
    changes = not alt_option.feasible or option.high_mhz - alt_option.high_mhz >= BAND_CHANGE_MHZ
    if not alt_option.feasible:
        reach = f"the {option.probe.label} would no longer reach the detail from {window.name}"
    elif changes:
        reach = (f"the {option.probe.label} would reach up to {alt_option.high_mhz:.1f} MHz instead of "
                 f"{option.high_mhz:.1f} MHz from {window.name}")
    else:
        reach = (f"the band from {window.name} stays the same (up to {alt_option.high_mhz:.1f} MHz): "
                 "the liver on this path is too short to matter")
    return [Finding(
        "condition.likely_steatosis", "caution" if changes else "info", "Steatosis is likely at this habitus",
        f"About {share:.0%} of severely obese patients have a steatotic liver; the plan assumes a "
        f"normal one. With moderate steatosis {reach}. Start lower if the far field fades, and enter "
        "steatosis when the liver looks bright to plan with it.",
        {"bmi": round(p.bmi, 1), "prevalence": share, "assumed_grade": ASSUMED_GRADE,
         "band_top_mhz": round(option.high_mhz, 2),
         "band_top_with_steatosis_mhz": round(alt_option.high_mhz, 2),
         "feasible_with_steatosis": bool(alt_option.feasible), "band_changes": bool(changes)},
        ("Machado2006", "BariatricBiopsy2011", "AttenuationSteatosisReview2022"),
        f"From BMI {LIKELY_STEATOSIS_BMI.value:g} a liver on the path is likely steatotic "
        f"({LIKELY_STEATOSIS_PREVALENCE.note}); the same window is planned again with grade "
        f"{ASSUMED_GRADE} steatosis (liver attenuation and speed of that grade) and the chosen "
        "probe's band top compared.")]
