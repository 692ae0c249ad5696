"""The plan's main decisions: band, harmonic imaging, tilt, depth and focus.

Each decider returns a typed decision and the findings that explain it; the findings reach the
plan through the rule registry (:mod:`planner.engine.registry`).
"""

from __future__ import annotations

import math
from typing import Any

from planner.engine.assess import finest_detail_mm
from planner.engine.context import RuleContext
from planner.engine.model import (DisplayDecision, FrequencyBand, HarmonicDecision, TiltDecision,
                                  TransmitBand)
from planner.findings import Finding
from planner.library.names import in_sentence
from planner.physics import beam, specular
from planner.physics.constants import HARMONIC_CONVERSION_LOSS_DB, SIGNAL_BUDGET_DIFFUSE_DB, \
    SPECULAR_ALLOWANCE_DB

CLUTTER_FAT_MM: float = 18.65
"""Subcutaneous fat above which near-field clutter is expected: the verified abdominal fat
cut-off that marks BMI >= 30 (Chandak2018), where harmonic imaging is clearly better
(THIRadioGraphics). [mm]"""

ROUTINE_HARMONIC_EXAMS: frozenset[str] = frozenset({"general_abdominal", "obstetric", "gynaecological",
                                                    "cardiac"})
"""Exam types whose transabdominal or transthoracic routes use harmonic imaging routinely
(THIRadioGraphics for the adult abdomen; Tanabe2000THI and Spencer1998Harmonic for the heart;
obstetric and pelvic transabdominal routes share the abdominal wall: common practice)."""


def _r(x: float, nd: int = 1) -> float:
    return round(float(x), nd)


def _range(low: float, high: float) -> str:
    """``low-high`` in MHz, or one value when they are equal."""
    return f"{low:g}" if abs(high - low) < 0.05 else f"{low:g}-{high:g}"


def band_decision(ctx: RuleContext) -> tuple[FrequencyBand, list[Finding]]:
    """Recommended band [detail floor, reach ceiling] within the chosen probe's band."""
    a, opt, target = ctx.chosen, ctx.option, ctx.target
    if opt is None:
        return FrequencyBand(None, None, False), [Finding(
            "band.no_probe", "warning", "No probe fits this window",
            f"No probe of the inventory ({ctx.inventory.origin}) can be used through "
            f"{ctx.window.name}.", {}, ("CommonPractice",))]
    ceiling = a.probe_ceiling_mhz
    reach_high = min(opt.probe.high_mhz, ceiling)
    top = max(reach_high, opt.probe.low_mhz)
    received = a.received_centre_mhz(top)
    values: dict[str, Any] = {"detail_mm": target.detail_mm, "detail_floor_mhz": _r(opt.floor_mhz, 2),
              "reach_ceiling_mhz": _r(ceiling, 2), "window_reach_ceiling_mhz": _r(a.ceiling_mhz, 2),
              "budget_db": a.budget_db,
              "depth_cm": _r(a.stack.depth_cm), "probe_low_mhz": opt.probe.low_mhz,
              "probe_high_mhz": opt.probe.high_mhz, "f_number": _r(opt.f_number, 2),
              "bandwidth_fraction": opt.probe.bandwidth_fraction,
              "received_centre_mhz": _r(received, 2),
              "wall_aberration_db": _r(a.aberration_db(top))}
    sources = ("Kremkau2015", "RadiologyPhysicsSummary", SIGNAL_BUDGET_DIFFUSE_DB.source, "Kuc1984",
               "NarayanaOphir1983", "Hinkelman1997Chest")
    explanation = (
        "Reach: the highest centre frequency whose round-trip loss stays within the "
        f"{a.budget_db:g} dB signal budget. The loss integrates the probe's pulse spectrum "
        f"(Gaussian, {100 * opt.probe.bandwidth_fraction:.0f} % bandwidth) through the layers, "
        "each losing 2 alpha0_i f^y_i d_i, so the echo's centre shifts down with depth; it adds "
        "the body wall's aberration (phase-screen focusing loss) and the interface losses"
        + (f" (diffuse {SIGNAL_BUDGET_DIFFUSE_DB.value:g} dB + {SPECULAR_ALLOWANCE_DB.value:g} dB "
           "for strong specular echoes)" if a.budget_db > SIGNAL_BUDGET_DIFFUSE_DB.value else "")
        + ". Detail: the lowest transmit frequency at which both the axial resolution (half the "
        "spatial pulse length, pulse cycles x wavelength / 2) and the lateral resolution at focus "
        "(wavelength x F-number) are as fine as the detail the exam must resolve.")
    floor_basis = "detail" if opt.floor_mhz >= opt.probe.low_mhz - 1e-9 else "probe"
    if opt.feasible:
        from planner.engine.artefacts import ABERRATING_WALL_MM
        from planner.engine.spread import spread_finding
        from planner.engine.start import basis_text, start_frequency
        from planner.engine.reach import ABERRATING_ROLES
        wall_mm = 10.0 * sum(lay.thickness_cm for lay in a.stack.layers if lay.role in ABERRATING_ROLES)
        start, start_basis, start_values, spread = start_frequency(
            a, opt, target.exam_type, wall_mm, ABERRATING_WALL_MM,
            depth_known=ctx.patient.depth_cm is not None)
        values.update(start_values, start_mhz=start, floor_basis=floor_basis,
                      start_median_mhz=spread["start_median"],
                      start_probability=spread["start_probability"],
                      top_probability=spread["top_probability"])
        summary = FrequencyBand(_r(opt.low_mhz), _r(opt.high_mhz), True, start, start_basis,
                                floor_basis, **spread)
        where = (f" {a.stack.depth_cm * target.detail_depth_fraction:.1f} cm deep"
                 if target.detail_depth_fraction < 1.0 else "")
        floor_text = (f"{target.detail_mm:g} mm detail{where} needs at least {opt.floor_mhz:.1f} MHz at "
                      f"F/{opt.f_number:.1f}" if floor_basis == "detail" else
                      f"{target.detail_mm:g} mm detail does not bind (it needs only "
                      f"{opt.floor_mhz:.1f} MHz at F/{opt.f_number:.1f}), so the band starts at the "
                      "probe's lowest frequency")
        return summary, [Finding(
            "band.recommended", "info", "Frequency band",
            f"Use {opt.low_mhz:.1f}-{opt.high_mhz:.1f} MHz on the {opt.probe.label}, starting at "
            f"{start:.1f} MHz ({basis_text(start_basis)}): {floor_text}; the echo from "
            f"{a.stack.depth_cm:.1f} cm stays within the {a.budget_db:g} dB budget "
            f"up to {ceiling:.1f} MHz.", values, sources + ("Duck1990", "BornWolf1999"),
            explanation + " Start: the lowest of the frequency that 80 % of patients like this one "
            "still reach (the wall, the path's attenuation and the budget sampled), "
            "the frequency at which a wall of 15 mm or more keeps the focus diffraction-limited "
            "(Marechal criterion), the usual top start of the exam, and the probe's top."),
            spread_finding(summary)] + downshift_findings(ctx, opt.high_mhz, values)
    best_detail = finest_detail_mm(opt, reach_high)
    values["finest_detail_mm"] = _r(best_detail, 2) if math.isfinite(best_detail) else None
    low = opt.probe.low_mhz
    high = max(low, reach_high)
    summary = FrequencyBand(_r(low), _r(high), False, floor_basis=floor_basis)
    if reach_high < opt.probe.low_mhz:
        msg = (f"Even {opt.probe.low_mhz:g} MHz loses more than the {a.budget_db:g} dB budget over "
               f"{a.stack.depth_cm:.1f} cm (reach ceiling {ceiling:.1f} MHz): expect a weak, noisy "
               "far field at the target.")
    else:
        msg = (f"{target.detail_mm:g} mm detail needs {opt.floor_mhz:.1f} MHz, but the echo from "
               f"{a.stack.depth_cm:.1f} cm only reaches up to {reach_high:.1f} MHz; at that frequency "
               f"the finest detail is about {best_detail:.1f} mm.")
    return summary, [Finding("band.detail_unreachable", "warning",
                             "Needed detail not reachable from this window", msg, values, sources,
                             explanation)]


def downshift_findings(ctx: RuleContext, band_top_mhz: float, values: dict) -> list[Finding]:
    """Caution when the echo from the target returns centred below the detail floor.

    The band stays recommended (the detail is judged at the transmit centre, see
    :func:`planner.engine.batch.probe_arrays`): the downshift does not lengthen the pulse
    (Kuc1984: a linear loss moves the Gaussian spectrum without narrowing it, so the axial
    resolution, half the spatial pulse length, holds; Kremkau2015), but the receive half of
    the two-way beam is formed at the lower echo centre, so the lateral detail at the target
    is coarser than at the transmit frequency. The caution states by how much.
    """
    a, opt, target = ctx.chosen, ctx.option, ctx.target
    if opt is None:
        return []
    received = a.received_centre_mhz(band_top_mhz)
    if received >= opt.floor_mhz - 1e-9:
        return []
    lateral_rx = float(beam.lateral_resolution_mm(received, opt.f_number))
    lateral_tx = float(beam.lateral_resolution_mm(band_top_mhz, opt.f_number))
    lateral_2way = lateral_tx * math.sqrt(2.0 / (1.0 + (received / band_top_mhz) ** 2))
    vals = dict(values, band_top_mhz=_r(band_top_mhz, 2), received_centre_mhz=_r(received, 2),
                lateral_detail_transmit_mm=_r(lateral_tx, 2),
                lateral_detail_received_mm=_r(lateral_rx, 2),
                lateral_detail_two_way_mm=_r(lateral_2way, 2))
    return [Finding(
        "band.echo_downshift", "caution", "Echo returns at a lower frequency",
        f"At {band_top_mhz:.1f} MHz the echo from {a.stack.depth_cm:.1f} cm returns centred near "
        f"{received:.1f} MHz, below the {opt.floor_mhz:.1f} MHz that {target.detail_mm:g} mm detail "
        f"needs: the path eats the top of the pulse's spectrum. Axial detail holds (the pulse stays as "
        f"short), but lateral detail at the target is nearer {lateral_2way:.1f} mm than "
        f"{lateral_tx:.1f} mm. Use the top of the band, focus at the target and expect fine detail "
        "to be less crisp; this is still the best band from this window.",
        vals, ("Kuc1984", "Kremkau2015"),
        "Axial resolution is half the spatial pulse length, set by the pulse's bandwidth in Hz; a "
        "loss linear in frequency shifts a Gaussian spectrum down (f0 - 4 alpha sigma^2 z) without "
        "narrowing it, so the received pulse is as short as the transmitted one. The lateral beam "
        "width is wavelength x F-number; the transmit beam is formed at the transmit frequency and "
        "the receive beam at the echo's centre. The two-way beam is their product; for Gaussian "
        "profiles its width grows by sqrt(2 / (1 + (f_echo / f_transmit)^2)) over the "
        "single-frequency value (derived).")]


def harmonic_routine(target, window) -> bool:
    """Harmonic imaging is routine for this exam on this route (:data:`ROUTINE_HARMONIC_EXAMS`,
    not an endocavitary route)."""
    return target.exam_type in ROUTINE_HARMONIC_EXAMS and not window.endocavitary


def harmonic_transmit_mhz(probe, harmonic_ceiling_mhz: float) -> tuple[float, float] | None:
    """Transmit range for harmonic imaging on ``probe``: the second harmonic is received in
    the upper half of the probe's band (f0 >= (low + high) / 4, common practice: the harmonic
    receive filter sits there) and inside it (2 f0 <= high), and the harmonic echo reaches
    (f0 <= the harmonic ceiling). None when no transmit frequency satisfies the reach and the
    probe's band. [MHz]"""
    high = min(harmonic_ceiling_mhz, probe.high_mhz / 2.0)
    if high < probe.low_mhz:
        return None
    low = min(max(probe.low_mhz, (probe.low_mhz + probe.high_mhz) / 4.0), high)
    return _r(low), _r(high)


def harmonic_decision(ctx: RuleContext) -> tuple[HarmonicDecision, list[Finding]]:
    """Advise harmonic imaging where practice uses it routinely or the wall at the window makes
    clutter likely, and the harmonic echo still reaches; never for exams whose signs are
    artefacts; judged by the wall at the chosen window, not by the BMI."""
    a, opt, target = ctx.chosen, ctx.option, ctx.target
    fat_mm = a.stack.subcutaneous_fat_cm * 10.0
    window = ctx.window
    values = {"subcutaneous_fat_mm": _r(fat_mm), "harmonic_ceiling_mhz": _r(a.harmonic_ceiling_mhz, 2),
              "conversion_loss_db": HARMONIC_CONVERSION_LOSS_DB.value, "budget_db": a.budget_db,
              "clutter_fat_mm": CLUTTER_FAT_MM}
    sources = ("HarmonicGlossary", "Ralls2000THI", "THIRadioGraphics", "Chandak2018",
               HARMONIC_CONVERSION_LOSS_DB.source)
    explanation = ("Harmonic imaging transmits f0 and receives 2 f0; the loss per cm is "
                   "alpha(f0) + alpha(2 f0), plus the conversion loss of the harmonic "
                   f"({HARMONIC_CONVERSION_LOSS_DB.value:g} dB). The harmonic forms beyond the wall, "
                   "so it suppresses the wall's clutter, reverberation and much of its aberration, "
                   "but penetrates less. It is routine in adult abdominal, obstetric and cardiac "
                   "imaging (THIRadioGraphics, Tanabe2000THI, Spencer1998Harmonic); near-field "
                   f"clutter is likely from {CLUTTER_FAT_MM:g} mm of subcutaneous fat at the window "
                   "(Chandak2018).")
    if target.harmonic_contraindicated:
        return HarmonicDecision(False, "Not for this exam: its diagnostic signs are artefacts that "
                                "harmonic imaging suppresses.", "contraindicated"), [Finding(
                    "harmonic.contraindicated", "advice", "Keep harmonic imaging off",
                    "Harmonic imaging (and compounding) suppress the reverberation artefacts this exam "
                    "reads, such as B-lines; use the fundamental.", values, sources, explanation)]
    if opt is None or not opt.probe.harmonic:
        return HarmonicDecision(False, "The chosen probe has no harmonic receive mode.",
                                "no_harmonic_mode"), []
    transmit = harmonic_transmit_mhz(opt.probe, a.harmonic_ceiling_mhz)
    clutter = fat_mm >= CLUTTER_FAT_MM
    routine = harmonic_routine(target, window)
    top_f0 = min(a.harmonic_ceiling_mhz, opt.probe.high_mhz / 2.0)
    if transmit is not None:
        values.update(transmit_low_mhz=transmit[0], transmit_high_mhz=transmit[1])
    why = (f"subcutaneous fat {fat_mm:.0f} mm at {in_sentence(window.name)} makes near-field clutter likely"
           if clutter else "harmonic imaging is routine for this exam (sharper contrast, less "
           "reverberation)")
    if (clutter or routine) and transmit is not None:
        reason = (f"{why[0].upper()}{why[1:]}; the harmonic echo still reaches "
                  f"{a.stack.depth_cm:.1f} cm with transmit {_range(*transmit)} MHz "
                  f"(received at {_range(2 * transmit[0], 2 * transmit[1])} MHz).")
        return HarmonicDecision(True, reason, "advised", TransmitBand(*transmit)), [Finding(
            "harmonic.advised", "advice", "Harmonic imaging advised", reason, values,
            sources + (("Tanabe2000THI", "Spencer1998Harmonic") if routine else ()), explanation)]
    if clutter:
        reason = (f"Clutter is likely (fat {fat_mm:.0f} mm at {in_sentence(window.name)}), but the harmonic echo "
                  f"would need transmit {top_f0:.1f} MHz or less, below the probe's "
                  f"{opt.probe.low_mhz:g} MHz: use the fundamental, and try harmonic imaging only "
                  "for the near field.")
        return HarmonicDecision(False, reason, "out_of_reach"), [Finding(
            "harmonic.out_of_reach", "caution", "Harmonic echo will not reach the target", reason,
            values, sources, explanation)]
    reason = (f"Thin wall at {in_sentence(window.name)} (fat {fat_mm:.0f} mm): clutter is unlikely, so harmonic "
              "imaging is optional"
              + (f"; it reaches with transmit {_range(*transmit)} MHz." if transmit else
                 "; it would not reach this depth."))
    return HarmonicDecision(False, reason, "optional"), []


def tilt_decision(ctx: RuleContext) -> tuple[TiltDecision, list[Finding]]:
    """Specular tilt tolerance in the scan and elevation planes, turned into handling advice."""
    target, opt, depth = ctx.target, ctx.option, ctx.chosen.stack.depth_cm
    surfaces = [s for s in target.surfaces if s.reflector == "specular"]
    if target.reflector == "diffuse" or not surfaces or opt is None:
        return TiltDecision(None, None, None,
                            "Diffuse echoes do not depend on the beam angle: choose the tilt for the "
                            "window (shortest path, fewest shadows), not for the target."), []
    probe = opt.probe
    freq = max(min(opt.high_mhz, probe.high_mhz), probe.low_mhz)
    scan_mm = min(probe.aperture_mm, depth * 10.0 / probe.receive_f_number)
    scan = specular.specular_tolerance_wave_deg(scan_mm, depth, freq)
    elev = specular.specular_tolerance_wave_deg(probe.elevation_aperture_mm, depth, freq,
                                                probe.elevation_focus_cm)
    tol = min(scan, elev)
    names = ", ".join(s.name for s in surfaces)
    angled = [s for s in surfaces if s.tilt_from_skin_deg > tol]
    advice = (f"Keep the beam within {tol:.1f} deg of perpendicular to the {names}: rock the probe in "
              f"the scan plane (tolerance {scan:.1f} deg) and heel-toe it in the elevation plane "
              f"({elev:.1f} deg) until the surface is brightest.")
    if angled:
        s = max(angled, key=lambda s: s.tilt_from_skin_deg)
        advice += (f" The {s.name} lies about {s.tilt_from_skin_deg:.0f} deg to the skin: angle the probe by "
                   "that much to meet it square on.")
    values = {"scan_plane_deg": _r(scan), "elevation_plane_deg": _r(elev), "depth_cm": _r(depth),
              "frequency_mhz": _r(freq, 2), "aperture_scan_mm": _r(scan_mm),
              "aperture_elevation_mm": _r(probe.elevation_aperture_mm),
              "elevation_focus_cm": probe.elevation_focus_cm,
              "geometric_scan_plane_deg": _r(beam.specular_tolerance_deg(scan_mm / 2.0, depth)),
              "geometric_elevation_plane_deg": _r(beam.specular_tolerance_deg(
                  probe.elevation_aperture_mm / 2.0, depth))}
    findings = [Finding("tilt.specular", "advice", "Tilt tolerance for mirror-like surfaces", advice,
                        values, ("Crass1988", "RCEMSpecular", "KinslerFrey2000"),
                        "A flat mirror-like surface tilted by theta returns its echo at 2 theta. The "
                        "tolerance is the tilt that halves the echo in a wave (Fresnel) model of each "
                        "plane: the scan plane's active aperture focused at the depth on receive, the "
                        "elevation lens with its fixed focus. Near a focus it is about 0.5 atan(a/z); "
                        "away from the lens focus the beam's divergence sets it.")]
    if target.target_tissue == "tendon":
        findings.append(Finding(
            "tilt.anisotropy", "caution", "Anisotropy can mimic a tear",
            f"A tilt of 2-7 deg makes tendon as dark as muscle and more makes it hypoechoic (Crass 1988); "
            f"here the echo halves beyond {tol:.1f} deg. Confirm any dark area square on before calling it "
            "a tear.", {"tolerance_deg": _r(tol), "published_range_deg": [2, 7]},
            ("Crass1988", "AnisotropyTeaching")))
    return TiltDecision(_r(tol), _r(scan), _r(elev), advice), findings


def display_decision(ctx: RuleContext) -> DisplayDecision:
    """Suggested display depth and focal depth (on the scanner's 1540 m/s scale). [cm]"""
    shown = ctx.chosen.displayed_depth_cm
    display = math.ceil(shown + max(1.0, 0.1 * shown))
    return DisplayDecision(float(display), _r(shown),
                           "Depth so the target fills most of the image; focal zone at or just below "
                           "the target (common practice).")
