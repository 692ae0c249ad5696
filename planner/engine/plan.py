"""make_plan: turn a PlanRequest into a typed Plan (:mod:`planner.engine.model`)."""

from __future__ import annotations

from dataclasses import replace
from typing import Any

from planner.body.gestation import GestationUse, resolve_gestation
from planner.body.patient import Patient
from planner.body.stack import build_stack_batch, measured_wall_ratio
from planner.body.walls import load_wall_models
from planner.engine import decisions
from planner.engine.assess import WindowAssessment, assessment_at, prime_losses
from planner.engine.batch import assess_batches
from planner.engine.context import Decisions, RuleContext
from planner.engine.curves import plan_depth_curves
from planner.engine import relevance
from planner.engine.doppler_model import DopplerPlan
from planner.engine.doppler_plan import DOPPLER_PLAN_MODES, plan_doppler
from planner.engine.model import (SCHEMA_VERSION, ChosenWindow, InputsSummary, PatientSummary, Plan,
                                  PlanLayer, ProbeSummary, TargetSummary, WindowBand, WindowSummary)
from planner.engine.registry import ENGINE_RULES
from planner.engine.request import (FEMALE_EXAMS, PlanRequest, exam_type_of, patient_for_exam, side_of,
                                    window_rank_keys, windows_for_side)
from planner.errors import InputError
from planner.findings import severity_rank
from planner.library.probes import ProbeInventory, load_inventory
from planner.library.targets import load_library
from planner.safety import DISCLAIMER, ExamContext, load_local_policy, monitored_index, \
    safety_findings, validity_flags
from planner.safety.validity import ValidityFlag

__all__ = ["SCHEMA_VERSION", "Plan", "assess_windows", "bone_near_focus", "default_exam_context",
           "make_plan", "rank_assessments"]

BONE_TARGET_TISSUES = frozenset({"cortical_bone", "cartilage"})


def bone_near_focus(target: Any, window: Any = None) -> bool:
    """True when bone lies at or near the focus: bone or cartilage targets, targets marked
    ``bone_near_focus`` in the library (fetal head and spine, infant hip), or bone on the
    window's path (the safety rules then use TIB)."""
    return (target.target_tissue in BONE_TARGET_TISSUES or target.bone_near_focus
            or bool(getattr(window, "bone_in_path", False)))


def _window_by_id(target: Any, window_id: str) -> Any:
    for window in target.windows:
        if window.id == window_id:
            return window
    raise InputError(f"unknown window {window_id!r} for target {target.id}; valid windows: "
                     f"{', '.join(w.id for w in target.windows)}")


def assess_windows(patient: Patient, target: Any, windows: list[Any], inventory: ProbeInventory,
                   reference: Any, organ_scale: float | None = None) -> list[WindowAssessment]:
    """Build and assess the stack of every window, measured values applied.

    A measured wall or fat is scaled at the reference window and applied to every window
    alike; a window whose wall is deeper than a measured target depth is not a candidate
    (for the reference window that is an input error). ``organ_scale`` scales the attenuation
    of the target organ's tissue (a prior-exam calibration, :mod:`planner.engine.prior_exam`).
    """
    ratio = measured_wall_ratio(load_wall_models()[reference.wall], patient, reference.wall_factor)
    candidates: list[tuple[Any, Any]] = []
    for w in windows:
        batch = build_stack_batch(patient, w, wall_ratio=ratio)
        if not batch.valid[0]:
            if w is reference:
                raise InputError(f"measured depth {patient.depth_cm:g} cm is not deeper than the body "
                                 f"wall at {w.name} ({float(batch.above_path_cm[0]):.1f} cm)")
            continue
        if organ_scale is not None:
            from planner.engine.prior_exam import scale_layers
            batch = scale_layers(batch, target.target_tissue, organ_scale)
        candidates.append((w, batch))
    assessed = assess_batches([b for _, b in candidates], target, inventory)
    return [assessment_at(a, 0, w) for (w, _), a in zip(candidates, assessed)]


def rank_assessments(assessments: list[WindowAssessment]) -> tuple[list[WindowAssessment], float]:
    """Feasible windows first; among them those of close loss by the usual order of practice;
    then by round-trip loss at a common reference frequency (:func:`window_rank_keys`, the
    sweep's ranking too)."""
    feasible_highs = [a.best.high_mhz for a in assessments if a.best is not None and a.feasible]
    reference = max(feasible_highs) if feasible_highs else 3.5
    prime_losses(assessments, reference)
    keys = window_rank_keys([[a.feasible] for a in assessments],
                            [[a.loss_db(reference)] for a in assessments],
                            [a.window.practice_order for a in assessments],
                            [a.window.adjunct for a in assessments])
    order = sorted(range(len(assessments)), key=lambda i: tuple(float(k[i, 0]) for k in keys))
    return [assessments[i] for i in order], reference


def default_exam_context(request: PlanRequest, target: Any, window: Any,
                         doppler: DopplerPlan | None = None) -> ExamContext:
    """The exam context of a plan: the request's complete context when it gives one; otherwise
    the target's exam type (or the user's), the patient's gestation, Doppler modes when Doppler
    is planned, bone near the focus (target, window, Doppler gate) and lung in the beam,
    with any fields the user set (``request.context_overrides``) taking precedence."""
    if request.context is not None:
        return request.context
    overrides = dict(request.context_overrides or {})
    overrides.pop("exam_type", None)
    exam_type = exam_type_of(request, target)
    weeks = request.patient.gestation_weeks
    bone = bone_near_focus(target, window) \
        or bool(doppler and doppler.safety.bone_near_gate)
    fields: dict[str, Any] = {"exam_type": exam_type, "bone_near_focus": bone,
                    "modes": DOPPLER_PLAN_MODES if request.doppler else ("b_mode",)}
    if exam_type in FEMALE_EXAMS:
        fields.update(gestation_weeks=weeks,
                      pregnancy_possible=weeks is not None and exam_type == "gynaecological")
    else:
        fields.update(pregnancy_possible=weeks is not None and not exam_type.startswith("neonatal"),
                      lung_in_beam=target.region == "thorax")
    fields.update(overrides)
    return ExamContext(**fields)


def _window_summary(a: WindowAssessment, reference_mhz: float, cls: type = WindowSummary,
                    **extra: Any) -> Any:
    opt = a.best
    return cls(a.window.id, a.window.name, a.feasible, round(a.loss_db(reference_mhz), 1),
               round(reference_mhz, 2), round(a.stack.depth_cm, 2), round(a.stack.wall_cm * 10, 1),
               round(a.ceiling_mhz, 2),
               None if opt is None else WindowBand(round(opt.shown_band[0], 1),
                                                   round(opt.shown_band[1], 1)),
               None if opt is None else opt.probe.id, a.window.position, a.window.breathing,
               a.window.adjunct, **extra)


def make_plan(request: PlanRequest) -> Plan:
    """Compute the plan for one patient and target (architecture: DEVELOPERS.md)."""
    target = load_library().get(request.target_id)
    side = side_of(request, target)
    windows = ([_window_by_id(target, request.window_id)] if request.window_id
               else windows_for_side(target, side))
    inventory = load_inventory(request.probes_path)
    if request.qa_path or inventory.qa_log:
        from planner.engine.qa_budget import calibrated_inventory
        inventory, qa = calibrated_inventory(inventory, request.qa_path)
    else:
        qa = None
    patient = patient_for_exam(request.patient, exam_type_of(request, target))
    gestation = resolve_gestation(target.id, patient.gestation_weeks, target.name,
                                  frozenset(lay.role for w in windows for lay in w.path if lay.role))
    geometry = patient if gestation is None else replace(patient, gestation_weeks=gestation.weeks)
    assessed = assess_windows(geometry, target, windows, inventory, windows[0])
    ranked, reference = rank_assessments(assessed)
    prior = None
    if request.prior is not None:
        from planner.engine.prior_exam import solve_prior
        prior = solve_prior(ranked[0], target, *request.prior)
        assessed = assess_windows(geometry, target, windows, inventory, windows[0], prior.scale)
        ranked, reference = rank_assessments(assessed)
    chosen = ranked[0]
    ctx = RuleContext(geometry, target, tuple(ranked), chosen, inventory)
    band, band_findings = decisions.band_decision(ctx)
    harmonic, harmonic_findings = decisions.harmonic_decision(ctx)
    tilt, tilt_findings = decisions.tilt_decision(ctx)
    ctx = RuleContext(geometry, target, ctx.assessments, chosen, inventory,
                      Decisions(band, tuple(band_findings), harmonic, tuple(harmonic_findings),
                                tilt, tuple(tilt_findings)))
    findings = ENGINE_RULES.run(ctx)
    findings += _calibration_findings(qa, prior, chosen)
    doppler = None
    if request.doppler:
        doppler, doppler_findings = plan_doppler(target, chosen, chosen.best.probe if chosen.best else None,
                                                 inventory, alternatives=ranked[1:])
        findings += doppler_findings
        if tilt.max_deviation_deg is not None:
            tilt = replace(tilt, advice=tilt.advice + " For Doppler do the opposite: keep the "
                           "beam-to-flow angle at 60 deg or less, not perpendicular (see Doppler).")
    findings.sort(key=lambda f: -severity_rank(f.severity))
    exam = default_exam_context(request, target, chosen.window, doppler)
    policy = load_local_policy(request.local_policy_path) if request.local_policy_path else None
    safety = safety_findings(exam, policy)
    opt = chosen.best
    validity = validity_flags(bmi=patient.bmi if patient.bmi_given else None, wall_mm=patient.wall_mm,
                              depth_cm=chosen.stack.depth_cm,
                              frequency_mhz=band.high if band.high else None,
                              gestation_weeks=patient.gestation_weeks, expected_ti=exam.expected_ti)
    validity += _gestation_flags(gestation)
    return Plan(
        target=TargetSummary(target.id, target.name, target.reflector, target.region, target.detail_mm),
        patient=PatientSummary(round(patient.bmi, 1), patient.bmi_given, patient.habitus[0],
                               patient.habitus[1], patient.sex, dict(patient.conditions),
                               patient.gestation_weeks),
        depth_cm=round(chosen.stack.depth_cm, 2),
        displayed_depth_cm=round(chosen.displayed_depth_cm, 2),
        frequency_mhz=band, harmonic=harmonic,
        probe=None if opt is None else ProbeSummary(opt.probe.id, opt.probe.label, opt.probe.type,
                                                    opt.fit, (opt.probe.low_mhz, opt.probe.high_mhz)),
        window=_window_summary(chosen, reference, ChosenWindow,
                               notes=getattr(chosen.window, "notes", "") or ""),
        windows=tuple(_window_summary(a, reference) for a in ranked),
        tilt=tilt, display=decisions.display_decision(ctx),
        depth_error_mm=round(chosen.depth_error_mm, 2),
        findings=tuple(relevance.grade(findings, target)),
        safety=tuple(relevance.grade(safety, target)),
        monitored_index=monitored_index(exam),
        pitfalls=tuple(target.pitfalls),
        assumptions=tuple(_assumptions(patient, chosen, inventory, exam,
                                       sex_implied=request.patient.sex is None and patient.sex is not None,
                                       prior=prior)
                          + list(gestation.notes if gestation else ())
                          + _side_assumption(target, side, request)),
        validity=tuple(validity), disclaimer=DISCLAIMER,
        layers=tuple(PlanLayer(lay.tissue.id, lay.label, lay.role, round(lay.thickness_cm, 3),
                               lay.tissue.speed_m_per_s, lay.tissue.attenuation_db_per_cm_mhz,
                               lay.tissue.attenuation_exponent, round(lay.tissue.impedance_mrayl, 4))
                     for lay in chosen.stack.layers),
        budget_db=chosen.budget_db, doppler=doppler,
        draft=request.draft,
        inputs=InputsSummary(target.id, request.window_id, exam.exam_type, inventory.origin,
                             request.local_policy_path, side),
        depth_curves=plan_depth_curves(chosen, band.low, band.high),
    )


def _gestation_flags(gestation: GestationUse | None) -> list[ValidityFlag]:
    """A validity flag when the gestation lies outside the view's planned range."""
    if gestation is None or not gestation.outside:
        return []
    return [ValidityFlag(parameter="gestation_weeks", value=gestation.weeks,
                         valid_range=gestation.valid, message=gestation.outside,
                         source=gestation.source, status=gestation.status)]


def _calibration_findings(qa: Any, prior: Any, chosen: WindowAssessment) -> list:
    """QA warnings about the chosen probe and the prior-exam calibration, as findings."""
    from planner.findings import Finding
    out = []
    probe_id = chosen.best.probe.id if chosen.best is not None else None
    probe_qa = qa.get(probe_id) if qa is not None and probe_id is not None else None
    if probe_qa is not None and probe_qa.flags:
        out.append(Finding("qa_warning", "caution", f"QA log: {len(probe_qa.flags)} warning(s) for "
                           f"probe {probe_id}", " ".join(probe_qa.flags),
                           {"probe": probe_id, "budget_db": probe_qa.budget_db, "date": probe_qa.date},
                           ("IEC61391", "Goodsitt1998", "ServiceManualPenetration")))
    if prior is not None:
        calibrated = chosen.best is not None and chosen.best.probe.budget_db is not None
        caveat = "" if calibrated else (
            " The probe's budget is the uncalibrated default: the estimate moves with it (a "
            "phantom QA log, --qa, anchors it).")
        out.append(Finding("prior_exam_calibration", "info", "Prior exam calibrates the organ's attenuation",
                           f"Speckle faded at {prior.fade_cm:g} cm at {prior.frequency_mhz:g} MHz before: "
                           f"{prior.implication()}. This plan uses it.{caveat}",
                           {"scale": round(prior.scale, 3),
                            "effective_db_per_cm_mhz": round(prior.slope_db_per_cm_mhz, 3),
                            "tissue": prior.tissue_id, "budget_db": prior.budget_db},
                           ("AttenuationSteatosisReview2022", "Derived")))
    return out


def _side_assumption(target: Any, side: str | None, request: PlanRequest) -> list[str]:
    """The side planned for a paired target, and where it came from (given, implied by the
    window, or assumed)."""
    if side is None:
        return []
    name = target.name_in_sentence
    if request.side:
        return [f"The {side} {name} is planned."]
    if request.window_id:
        return [f"The {side} {name} is planned: the side window {request.window_id!r} serves."]
    other = "left" if side == "right" else "right"
    return [f"The {side} {name} is planned (no side given; use --side {other} for the other): "
            "windows serve that side."]


def _assumptions(patient: Patient, chosen: WindowAssessment, inventory: ProbeInventory,
                 exam: ExamContext, sex_implied: bool = False, prior: Any = None) -> list[str]:
    out = []
    if not patient.bmi_given:
        out.append(f"No BMI given: the reference habitus (BMI {patient.bmi:g}) is assumed.")
    if sex_implied:
        out.append(f"Sex taken as female: an {exam.exam_type.replace('_', ' ')} exam; wall "
                   "layers use the female values.")
    if patient.sex is None:
        out.append("Sex not given: wall layers use the mean of the female and male values.")
    if patient.wall_mm is not None and patient.fat_mm is not None:
        out.append(f"Measured wall {patient.wall_mm:g} mm with {patient.fat_mm:g} mm of subcutaneous fat "
                   "replaces the BMI estimate (all windows scaled alike, the fat keeping its share).")
    elif patient.wall_mm is not None:
        out.append(f"Measured wall {patient.wall_mm:g} mm replaces the BMI estimate (all windows scaled alike).")
    elif patient.fat_mm is not None:
        out.append(f"Measured subcutaneous fat {patient.fat_mm:g} mm replaces the BMI estimate.")
    if patient.depth_cm is not None:
        out.append(f"Measured target depth {patient.depth_cm:g} cm sets the organ path length "
                   "through every window.")
    out.append(f"Probes from the {inventory.origin}.")
    origin = chosen.best.probe.budget_origin if chosen.best is not None else ""
    where = f" from {origin}," if origin else ""
    if chosen.best is not None and origin:
        from planner.engine.spread import budget_sd_db
        where += f" +/-{budget_sd_db(chosen.best.probe):g} dB (s.d.),"
    out.append(f"Signal budget {chosen.budget_db:g} dB{where} round trip; tissue values are population "
               "averages (speed +/-3 %, attenuation +/-30-50 %).")
    if prior is not None:
        out.append(f"Prior exam: speckle faded at {prior.fade_cm:g} cm at {prior.frequency_mhz:g} MHz; "
                   f"{prior.implication()}; the {prior.organ} attenuation is scaled by "
                   f"{prior.scale:.2f} in this plan.")
    out.extend(chosen.stack.notes)
    out.append(f"Exam context: {exam.exam_type.replace('_', ' ')}.")
    return out
