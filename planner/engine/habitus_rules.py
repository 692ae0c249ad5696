"""Rules about habitus and patient conditions."""

from __future__ import annotations

from planner.body.conditions import CONDITIONS
from planner.engine.context import RuleContext
from planner.findings import Finding

ADVICE_BY_CONDITION: dict[str, tuple[str, str, str, tuple[str, ...]]] = {
    "no_breath_hold": ("advice", "No breath hold",
                       "Use quiet breathing, short holds and cine-loop review; intercostal windows move "
                       "less than subcostal ones.", ("CommonPractice",)),
    "limited_mobility": ("advice", "Limited mobility",
                         "Decubitus, prone and upright positions may not be possible: prefer windows "
                         "usable supine and check the couch's weight limit.", ("SoRHighBMI",)),
    "post_prandial": ("caution", "Not fasted",
                      "After a meal the gallbladder contracts and gas increases; biliary and pancreatic "
                      "views may need rebooking after a 6-8 h fast.", ("GasShadowTeaching",)),
    "oedema": ("caution", "Subcutaneous oedema",
               "Oedema thickens the wall and scatters sound; expect more near-field clutter and a "
               "deeper target than BMI alone predicts. Measure the wall if you can.", ("CommonPractice",)),
}
"""Advice for conditions that change the approach rather than the layer stack."""

LIMITED_EXAM_BMI: float = 30.0
"""BMI from which a limited examination becomes likely (Heinitz2023; NHSGGC468). [kg/m^2]"""


def habitus_findings(ctx: RuleContext) -> list[Finding]:
    """WHO class and the wall estimate with its band."""
    p, s = ctx.patient, ctx.stack
    class_id, label = p.habitus
    measured = p.wall_mm is not None or p.fat_mm is not None
    lo, hi = s.wall_band_cm
    basis = ("measured" if measured else
             f"estimated from BMI {p.bmi:.1f} (16th-84th centile {lo * 10:.0f}-{hi * 10:.0f} mm)")
    out = [Finding(
        "habitus.wall", "info", f"Habitus: {label}",
        f"Body wall at {ctx.window.name}: {s.wall_cm * 10:.0f} mm, {basis}; subcutaneous fat "
        f"{s.subcutaneous_fat_cm * 10:.0f} mm. Target {s.depth_cm:.1f} cm deep.",
        {"bmi": round(p.bmi, 1), "who_class": class_id, "wall_mm": round(s.wall_cm * 10, 1),
         "wall_band_mm": [round(lo * 10, 1), round(hi * 10, 1)], "measured": measured,
         "depth_cm": round(s.depth_cm, 2)},
        ("WHO2000Obesity", "HabitusPracticeModel"),
        "Each wall layer has a median a + b (BMI - 25) fitted to published thickness data for this "
        "window, and a log-normal spread; a measured thickness replaces the estimate.")]
    return out


def limited_exam_findings(ctx: RuleContext) -> list[Finding]:
    """Advice to plan for a limited exam from BMI 30."""
    p = ctx.patient
    if p.bmi < LIMITED_EXAM_BMI:
        return []
    return [Finding(
            "habitus.limited_exam", "caution", "Large habitus: plan for a limited exam",
            "Image quality falls with BMI. Start from high-BMI settings (lower band, harmonic imaging), "
            "use positioning and a helper for the pannus, do not prolong the exam when gain is unlikely, "
            "and document any limitation 'due to body habitus'; offer another route or appointment.",
            {"bmi": round(p.bmi, 1)}, ("Heinitz2023", "NHSGGC468", "SoRHighBMI"))]


def steatosis_findings(ctx: RuleContext) -> list[Finding]:
    """A steatotic liver on the path attenuates more and is slower."""
    c, out = ctx.patient.conditions, []
    if "steatosis" in c and any(lay.tissue.id.startswith("liver_steatosis") for lay in ctx.stack.layers):
        liver = next(lay.tissue for lay in ctx.stack.layers if lay.tissue.id.startswith("liver_steatosis"))
        out.append(Finding(
            "condition.steatosis", "caution", "Steatotic liver attenuates more",
            f"{liver.name}: about {liver.attenuation_db_per_cm_mhz:g} dB/cm/MHz and {liver.speed_m_per_s:g} m/s "
            "(normal 0.5 and 1577). Expect a bright near field, a dark far field and a poorly seen "
            "diaphragm and vessel walls; lower the band and raise the far TGC.",
            {"attenuation_db_per_cm_mhz": liver.attenuation_db_per_cm_mhz,
             "speed_m_per_s": liver.speed_m_per_s, "grade": c["steatosis"]},
            (liver.provenance["attenuation_db_per_cm_mhz"].source,
             liver.provenance["speed_m_per_s"].source)))
    return out


def ascites_findings(ctx: RuleContext) -> list[Finding]:
    """Ascites on the path used as a window."""
    c, out = ctx.patient.conditions, []
    if "ascites" in c and any(lay.role == "ascites" for lay in ctx.stack.layers):
        out.append(Finding(
            "condition.ascites", "info", "Ascites as a window",
            "Free fluid between wall and organs carries sound with little loss; use it as a window, "
            "but it pushes the target deeper.", {"grade": c["ascites"]}, ("EnhancementTeaching",)))
    return out


def approach_findings(ctx: RuleContext) -> list[Finding]:
    """Advice for conditions that change the approach (breath hold, mobility, fasting, oedema)."""
    c, out = ctx.patient.conditions, []
    for name, (severity, title, message, sources) in ADVICE_BY_CONDITION.items():
        if name in c:
            grade = {"grade": c[name]} if len(CONDITIONS[name].grades) > 1 else {}
            out.append(Finding(f"condition.{name}", severity, title, message, grade, sources))
    return out
