"""What the user asks for: one patient, one target, the exam context."""

from __future__ import annotations

from dataclasses import dataclass, field, replace

from planner.body.patient import Patient
from planner.safety import ExamContext


@dataclass(frozen=True)
class PlanRequest:
    """All inputs of one plan.

    Attributes
    ----------
    target_id : str
        A target of the library.
    patient : Patient
    window_id : str or None
        Force one window; None ranks every candidate window.
    context : ExamContext or None
        A complete exam context for the safety rules; None lets the engine derive it.
    context_overrides : dict or None
        Exam-context fields the user set (exam_type, modes, expected_ti, planned_minutes,
        contrast_agent, febrile, pregnancy_possible, lung_in_beam, expected_mi, ...); the
        engine derives the rest (bone near the focus, lung in the beam, gestation) as usual.
    probes_path, local_policy_path : str or None
        A department probe inventory and local policy file.
    doppler : bool
        Add Doppler planning for vessel targets.
    draft : bool
        Mark the plan as a draft for supervised practice.
    qa_path : str or None
        A probe QA log (:mod:`planner.engine.qa_budget`); None uses the inventory's ``qa_log``.
    prior : (frequency_mhz, fade_cm) or None
        A prior exam's frequency and the depth where the target organ's speckle faded
        (:mod:`planner.engine.prior_exam`). [MHz], [cm]
    """

    target_id: str
    patient: Patient = field(default_factory=Patient)
    window_id: str | None = None
    context: ExamContext | None = None
    context_overrides: dict | None = None
    probes_path: str | None = None
    local_policy_path: str | None = None
    doppler: bool = False
    draft: bool = False
    qa_path: str | None = None
    prior: tuple[float, float] | None = None


FEMALE_EXAMS: tuple[str, ...] = ("obstetric", "gynaecological")
"""Exam types that imply a female patient (common practice)."""


def exam_type_of(request: PlanRequest, target) -> str:
    """The exam type a plan uses: the user's (context or overrides) or the target's usual."""
    if request.context is not None:
        return request.context.exam_type
    return (request.context_overrides or {}).get("exam_type") or target.exam_type


def patient_for_exam(patient: Patient, exam_type: str) -> Patient:
    """The patient as the exam implies: an obstetric or gynaecological exam is of a female
    patient (sex taken as female when not given; a male sex is refused, one line)."""
    if exam_type not in FEMALE_EXAMS:
        return patient
    if patient.sex == "male":
        from planner.errors import InputError
        raise InputError(f"an {exam_type.replace('_', ' ')} exam implies a female patient; "
                         "the sex given is male")
    return patient if patient.sex == "female" else replace(patient, sex="female")
