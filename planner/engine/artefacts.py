"""Artefact rules: refraction, edge shadows, sound-speed error, shadowing, fluid windows."""

from __future__ import annotations

from typing import Any

from planner.engine.context import RuleContext
from planner.findings import Finding
from planner.physics import beam, refraction
from planner.physics.tissues import get_tissue
from planner.provenance import Sourced

PRISM_FACE_ANGLE = Sourced(
    46.0, "DoubleAortaPhantom2009", "derived",
    "face angle at which the entry-face Snell model (fat 1450 to muscle 1562 m/s) reproduces the "
    "published 5.1 mm separation of a structure 3 cm beyond the rectus muscles")
"""Effective tilt of the rectus-muscle faces for the duplication estimate. [deg]"""

ABERRATING_WALL_MM: float = 15.0
"""Fat and muscle thickness from which the wall-aberration loss is a caution and a main finding
(common practice: the chest and abdominal wall specimens behind the model were of this
thickness and more, Hinkelman1997Chest; thinner walls, as over a tendon or the neck, are an
extrapolation of the model and rarely limit an exam). [mm]"""

DEPTH_ERROR_CAUTION_MM: float = 5.0
"""Depth error above which axial measurements deserve a caution (common practice). [mm]"""

GAS_LEVEL = {"none": 0, "low": 1, "moderate": 2, "high": 3}


def _r(x: float, nd: int = 1) -> float:
    return round(float(x), nd)


def prism_findings(ctx: RuleContext) -> list[Finding]:
    """Midline duplication when the paired rectus muscles act as a prism."""
    if not getattr(ctx.window, "midline_rectus", False) or ctx.option is None:
        return []
    wall_cm = ctx.stack.wall_cm
    beyond = max(ctx.stack.depth_cm - wall_cm, 0.1)
    fat, muscle = get_tissue("fat"), get_tissue("muscle_across")
    sep = float(refraction.prism_duplication_separation_mm(
        PRISM_FACE_ANGLE.value, fat.speed_m_per_s, muscle.speed_m_per_s, beyond))
    lateral = float(beam.lateral_resolution_mm(ctx.option.high_mhz, ctx.option.f_number))
    values = {"separation_mm": _r(sep), "lateral_resolution_mm": _r(lateral, 2),
              "depth_beyond_wall_cm": _r(beyond), "prism_face_deg": PRISM_FACE_ANGLE.value}
    severity = "caution" if sep > lateral else "info"
    return [Finding(
        "refraction.midline_prism", severity, "Midline duplication possible",
        f"Through the midline the rectus muscles can bend the beam into two paths: a structure "
        f"{beyond:.1f} cm deep may appear twice, about {sep:.1f} mm apart (lateral resolution "
        f"{lateral:.1f} mm). Confirm from a paramedian or oblique approach or in the sagittal plane.",
        values, ("DoubleAortaPhantom2009", "RCEMRefraction", "KinslerFrey2000"),
        "Snell's law at each tilted muscle face (fat 1450 m/s into muscle 1562 m/s) deviates the beam by "
        "delta; beams through the left and right muscle converge on one deep point, which the scanner "
        "draws twice, 2 x depth x tan(delta) apart.")]


def edge_shadow_findings(ctx: RuleContext) -> list[Finding]:
    """Edge shadows at the rims of curved fluid-filled targets."""
    target = ctx.target
    radii = [s.radius_mm for s in target.surfaces if s.radius_mm is not None and s.radius_mm > 0]
    if not target.fluid_filled or not radii or not target.lumen_tissue:
        return []
    lumen = get_tissue(target.lumen_tissue)
    around = next((lay.tissue for lay in reversed(ctx.stack.layers)
                   if lay.tissue.id not in (target.lumen_tissue, target.wall_tissue)), None)
    if around is None:
        return []
    radius = max(radii)
    width = float(refraction.edge_shadow_width_mm(
        radius, around.speed_m_per_s, lumen.speed_m_per_s, around.density_kg_per_m3,
        lumen.density_kg_per_m3))
    if width < 0.05:
        return []
    return [Finding(
        "artefact.edge_shadow", "info", "Edge shadows at the rims",
        f"Rays grazing the curved wall of the {target.name_in_sentence} (radius about {radius:.0f} mm) bend "
        f"or reflect there; behind each rim a band about {width:.1f} mm wide gets less than half the "
        "sound and may look like a shadow. Do not take it for a stone shadow: a true shadow starts at an "
        "echogenic focus. Change the angle to move it.",
        {"radius_mm": radius, "rim_band_mm": _r(width, 2), "speed_inside_m_per_s": lumen.speed_m_per_s,
         "speed_outside_m_per_s": around.speed_m_per_s},
        ("EdgeShadowTeaching", "KinslerFrey2000"),
        "Rays crossing a round structure are traced with Snell's law at entry and exit, each carrying the "
        "power the two crossings transmit; near grazing incidence they are deviated by 2 (theta_1 - "
        "theta_2). The band is where the power landing one radius beyond the far wall falls below half "
        "the incident.")]


def sound_speed_findings(ctx: RuleContext) -> list[Finding]:
    """Depth error at the target and the stretch of the fat layer (scanner assumes 1540 m/s)."""
    a = ctx.chosen
    severity = "caution" if abs(a.depth_error_mm) > DEPTH_ERROR_CAUTION_MM else "info"
    direction = "deeper" if a.depth_error_mm > 0 else "shallower"
    return [Finding(
        "artefact.sound_speed", severity, "Sound-speed depth error",
        f"The target at {a.stack.depth_cm:.1f} cm is drawn {abs(a.depth_error_mm):.1f} mm {direction} "
        f"than it is; the fat alone is stretched by {a.fat_error_mm:.1f} mm, so axial measurements "
        "through or of fat read long. Where the scanner offers a lower sound-speed setting for fatty "
        "tissue, it can sharpen the image.",
        {"true_depth_cm": _r(a.stack.depth_cm, 2), "displayed_depth_cm": _r(a.displayed_depth_cm, 2),
         "depth_error_mm": _r(a.depth_error_mm, 2), "fat_error_mm": _r(a.fat_error_mm, 2)},
        ("SonographySpeedTutorial",),
        "The scanner converts echo time to depth at 1540 m/s; each layer is drawn d x 1540 / c thick, "
        "so slow fat (1450 m/s) is drawn about 6 % thicker.")]


def rib_findings(ctx: RuleContext) -> list[Finding]:
    """Whether the probe footprint fits the rib space of an intercostal window."""
    window, opt = ctx.window, ctx.option
    if window.rib_gap_mm is None or opt is None:
        return []
    gap = window.rib_gap_mm
    fit = {"fits": "fits across the rib space",
           "aligned": "fits only when aligned along the rib space",
           "blocked": "is wider than the rib space: expect rib shadows"}[opt.fit]
    return [Finding(
        "shadow.ribs", "advice" if opt.fit != "blocked" else "caution", "Rib gap",
        f"The rib space is about {gap:.0f} mm; the {opt.probe.label} footprint "
        f"({opt.probe.footprint_length_mm:.0f} x {opt.probe.footprint_width_mm:.0f} mm) {fit}. Raise the "
        "arm above the head and time the breath to open the space.",
        {"rib_gap_mm": gap, "footprint_length_mm": opt.probe.footprint_length_mm,
         "footprint_width_mm": opt.probe.footprint_width_mm, "fit": opt.fit},
        ("PositioningTeaching", "CommonPractice"))]


def gas_findings(ctx: RuleContext) -> list[Finding]:
    """Bowel gas on the path: the window's gas risk plus the patient's stated bowel gas."""
    gas = GAS_LEVEL.get(ctx.window.gas_risk, 0) + ctx.patient.conditions.get("bowel_gas", 0)
    if gas < 2:
        return []
    return [Finding(
        "shadow.gas", "caution" if gas >= 3 else "advice", "Bowel gas on the path",
        "Gas reflects almost all the sound (soft tissue to air R > 0.99). Use graded compression, "
        "change position (decubitus, upright), fast the patient, or fill the stomach with water.",
        {"gas_level": gas}, ("GasShadowTeaching", "ALevelPhysics"))]


def calcification_findings(ctx: RuleContext) -> list[Finding]:
    """Calcification shadows for targets at moderate or high risk."""
    risk = ctx.target.calcification_risk
    if risk not in ("moderate", "high"):
        return []
    return [Finding(
        "shadow.calcification", "info", "Calcification shadows",
        "Calcified foci (stones, plaque, ossification) shadow only when they fill the beam width: put "
        "the focal zone at them and use the highest frequency that reaches.",
        {"risk": risk}, ("StoneShadowTeaching",))]


def bone_path_findings(ctx: RuleContext) -> list[Finding]:
    """Bone on the window's path."""
    if not getattr(ctx.window, "bone_in_path", False):
        return []
    skull = [lay for lay in ctx.stack.layers if lay.role == "fetal_skull"]
    if skull:
        return [_fetal_skull_finding(ctx, skull[0])]
    return [Finding(
        "shadow.bone", "caution", "Bone on the path",
        "The beam crosses bone: most energy is reflected or absorbed (soft tissue to bone R about 0.4). "
        "Use the thinnest part of the bone and the lowest frequency.",
        {}, ("Diagnostics2023", "ALevelPhysics"))]


def _fetal_skull_finding(ctx: RuleContext, skull: Any) -> Finding:
    """The fetal parietal bone on the path: thin and partly ossified, not adult bone."""
    weeks = ctx.patient.gestation_weeks
    mm = 10.0 * skull.thickness_cm
    text = (f"The beam crosses the fetal parietal bone (about {mm:.1f} mm at {weeks:g} weeks, still "
            "ossifying): it reflects more than soft tissue, and more as gestation advances. ")
    values = {"skull_mm": _r(mm), "gestation_weeks": weeks}
    if any(lay.role == "fetal_brain" for lay in ctx.stack.layers):     # biometry across the head
        return Finding(
            "shadow.bone", "caution", "Fetal skull on the path",
            text + "Insonate through the parietal bones with the beam perpendicular to them in the "
            "transthalamic plane; the near-field reverberation behind the near skull hides the near "
            "hemisphere, so judge the far hemisphere and place the calipers on the outer edges of "
            "the skull.", values, ("Salomon2019Biometry", "FetalSkullOssification"))
    return Finding(
        "shadow.bone", "caution", "Fetal skull on the path",
        text + "Reverberation behind the near skull clutters the near brain: keep "
        "the Doppler gate and the focus beyond it, on the vessel, and the bone out of the gate.",
        values, ("FetalSkullOssification", "CommonPractice"))


def fluid_findings(ctx: RuleContext) -> list[Finding]:
    """Fluid on the path: a window that attenuates little, and posterior enhancement."""
    layers = list(ctx.stack.layers)
    if ctx.target.lumen_tissue and layers and layers[-1].tissue.id == ctx.target.lumen_tissue:
        layers = layers[:-1]          # the target's own lumen is not a window above it
    fluid = [lay for lay in layers if lay.tissue.kind == "fluid"]
    if not fluid:
        return []
    total = sum(lay.thickness_cm for lay in fluid)
    names = ", ".join(sorted({lay.label.lower() for lay in fluid}))
    return [Finding(
        "window.fluid", "info", "Fluid on the path",
        f"{total:.1f} cm of fluid ({names}) attenuates almost nothing: it helps penetration, and tissue "
        "behind it looks brighter (posterior enhancement); lower the far-field TGC.",
        {"fluid_cm": _r(total)}, ("EnhancementTeaching", "Duck1990"))]


def wall_aberration_findings(ctx: RuleContext) -> list[Finding]:
    """Focusing loss of the body wall's fat and muscle (phase screen), at the band's top."""
    from planner.physics import aberration
    a, opt = ctx.chosen, ctx.option
    if opt is None or a.sigma_ns <= 0:
        return []
    wall_mm = float((a.sigma_ns / aberration.SIGMA_REF.value) ** 2 * aberration.WALL_REF.value)
    freq = min(opt.high_mhz, opt.probe.high_mhz) if opt.high_mhz > 0 else opt.probe.low_mhz
    loss = a.aberration_db(freq)
    harmonic = float(aberration.aberration_loss_db(max(freq / 2.0, 0.1), a.sigma_ns, harmonic=True))
    at5 = a.aberration_db(5.0)
    if loss < 0.5:
        return []
    severity = "caution" if loss >= 6.0 and wall_mm >= ABERRATING_WALL_MM else "info"
    return [Finding(
        "artefact.wall_aberration", severity, "Body-wall aberration",
        f"Wall aberration costs {loss:.1f} dB at {freq:.1f} MHz ({at5:.1f} dB at 5 MHz) through "
        f"{wall_mm:.0f} mm of fat and muscle: the wall's uneven sound speed spreads arrival times by "
        f"about {a.sigma_ns:.0f} ns rms and blurs the focus. A lower frequency suffers less; harmonic "
        f"imaging (transmit {freq / 2.0:.1f} MHz) loses about {harmonic:.1f} dB, as its beam forms "
        "beyond the wall.",
        {"wall_mm": _r(wall_mm), "arrival_time_rms_ns": _r(a.sigma_ns), "frequency_mhz": _r(freq, 2),
         "aberration_db": _r(loss), "aberration_db_at_5_mhz": _r(at5),
         "harmonic_aberration_db": _r(harmonic)},
        ("Hinkelman1997Chest", "HinkelmanAbdominal", "Goodman2000StatOptics", "Ralls2000THI"),
        "Phase screen: the coherent focal gain falls by exp(-(2 pi f sigma_t)^2) on transmit and on "
        "receive; sigma_t = 21.3 ns x sqrt(wall / 20 mm) from the chest-wall measurements of Hinkelman, "
        "Szabo & Waag (1997), growing as independent inhomogeneities add. The loss enters the reach "
        "budget.")]
