"""Rules about habitus and patient conditions."""

from __future__ import annotations

from functools import lru_cache

from planner.body.conditions import CONDITIONS
from planner.body.walls import load_wall_models
from planner.engine.context import RuleContext
from planner.findings import Finding
from planner.library.names import in_sentence

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

LIMITED_EXAM_REFERENCE_WALL = "periumbilical"
"""The trunk wall at which the published BMI threshold is applied to get a fat thickness."""


@lru_cache(maxsize=1)
def limited_exam_fat_mm() -> float:
    """Subcutaneous fat from which a limited exam becomes likely at any window. [mm]

    Derived: the periumbilical wall model's median subcutaneous fat (mean of the female and
    male fits) at :data:`LIMITED_EXAM_BMI`, i.e. the published BMI threshold expressed as the
    fat it means on the trunk. Applied to the fat at the chosen window, so that a route
    where fat does not build up (transvaginal, distal limb, neck) gets no limited-exam
    caution at a high BMI, while a thick wall does whatever the BMI.
    """
    model = load_wall_models()[LIMITED_EXAM_REFERENCE_WALL]
    fat = next(layer for layer in model.layers if layer.role == "subcutaneous_fat")
    delta = LIMITED_EXAM_BMI - 25.0
    return sum(max(a + b * delta, fat.floor_mm) for a, b in zip(fat.a_mm, fat.b_mm_per_bmi)) / 2.0


TRUNK_SLOPE_FRACTION = 0.8
"""A wall is trunk-like when its subcutaneous fat grows with BMI at least this fraction as
fast as the periumbilical wall's (derived cut between the neck and thigh walls, 0.3-0.5 mm
per BMI unit, and the trunk walls, 0.7-1.6, in ``walls.yaml``)."""


def _fat_slope(wall_id: str) -> float:
    model = load_wall_models().get(wall_id)
    fat = [layer for layer in model.layers if layer.role == "subcutaneous_fat"] if model else []
    return sum(fat[0].b_mm_per_bmi) / 2.0 if fat else 0.0


def trunk_like(wall_id: str) -> bool:
    """True for a wall whose fat builds up with BMI as the trunk's does (the routes the
    published BMI threshold was observed on); False for neck, limb, endocavitary routes."""
    model = load_wall_models().get(wall_id)
    if model is None or model.endocavitary or not model.bmi_dependent:
        return False
    return _fat_slope(wall_id) >= TRUNK_SLOPE_FRACTION * _fat_slope(LIMITED_EXAM_REFERENCE_WALL)


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
        f"Body wall at {in_sentence(ctx.window.name)}: {s.wall_cm * 10:.0f} mm, {basis}; subcutaneous fat "
        f"{s.subcutaneous_fat_cm * 10:.0f} mm. Target {s.depth_cm:.1f} cm deep.",
        {"bmi": round(p.bmi, 1), "who_class": class_id, "wall_mm": round(s.wall_cm * 10, 1),
         "wall_band_mm": [round(lo * 10, 1), round(hi * 10, 1)], "measured": measured,
         "depth_cm": round(s.depth_cm, 2), "subcutaneous_fat_mm": round(s.subcutaneous_fat_cm * 10, 1)},
        ("WHO2000Obesity", "HabitusPracticeModel"),
        "Each wall layer has a median a + b (BMI - 25) fitted to published thickness data for this "
        "window, and a log-normal spread; a measured thickness replaces the estimate.")]
    return out


def limited_exam_findings(ctx: RuleContext) -> list[Finding]:
    """Advice to plan for a limited exam where the wall at the chosen window is thick."""
    p, s = ctx.patient, ctx.stack
    fat_mm = s.subcutaneous_fat_cm * 10.0
    threshold = limited_exam_fat_mm()
    measured = p.wall_mm is not None or p.fat_mm is not None
    by_bmi = p.bmi >= LIMITED_EXAM_BMI and trunk_like(ctx.window.wall) and not measured
    if fat_mm < threshold and not by_bmi:
        return []
    pannus = bool(getattr(load_wall_models().get(ctx.window.wall), "pannus", False))
    helper = "use positioning and a helper for the pannus" if pannus else "use positioning"
    why = (f"subcutaneous fat {fat_mm:.0f} mm at {in_sentence(ctx.window.name)}; from {threshold:.0f} mm, the "
           f"fat of a trunk wall at BMI {LIMITED_EXAM_BMI:g}, a limited exam becomes likely"
           if fat_mm >= threshold else
           f"BMI {p.bmi:.0f} on a trunk route ({in_sentence(ctx.window.name)}, fat {fat_mm:.0f} mm); from BMI "
           f"{LIMITED_EXAM_BMI:g} a limited exam becomes likely")
    return [Finding(
            "habitus.limited_exam", "caution", "Large habitus: plan for a limited exam",
            f"{why[0].upper()}{why[1:]}. Start from high-BMI settings (lower band, harmonic imaging), "
            f"{helper}, do not prolong the exam when gain is unlikely, and document any "
            "limitation 'due to body habitus'; offer another route or appointment.",
            {"bmi": round(p.bmi, 1), "subcutaneous_fat_mm": round(fat_mm, 1),
             "threshold_fat_mm": round(threshold, 1)},
            ("Heinitz2023", "NHSGGC468", "SoRHighBMI", "AfifiNomogram"),
            f"The published threshold is BMI {LIMITED_EXAM_BMI:g} on trunk routes; there that means "
            f"about {threshold:.0f} mm of subcutaneous fat (periumbilical wall model). Any route "
            "with that much fat gets the caution; endocavitary, neck and limb routes are judged by "
            "their own wall, not the BMI.")]


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
