"""What the user asks for: one patient, one target, the exam context."""

from __future__ import annotations

from dataclasses import field, replace

from planner.body.patient import Patient
from planner.records import record
from planner.safety import ExamContext


@record(slots=False)
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
    side: str | None = None
    """``"left"`` or ``"right"`` for a paired target (None: the right side, stated in the
    assumptions); a side for an unpaired target is refused."""


SIDES: tuple[str, ...] = ("right", "left")
"""The sides of a paired target; the first is the default."""

CLOSE_LOSS_DB: float = 6.0
"""Windows whose round-trip loss is within this of the best are ranked by the usual order of
practice (the route tried first), then by loss: a 6 dB difference is about one step of the
gain a sonographer sets anyway (common practice). [dB]"""


def side_of(request: "PlanRequest", target) -> str | None:
    """The side planned: the request's for a paired target, else the side of the window the
    request names, else the right when some window serves one side only; None for an
    unpaired target, or a paired one with no side given whose windows serve both sides. A side given for an unpaired
    target, or one the named window does not serve, is an input error (one line)."""
    if not getattr(target, "paired", False):
        if request.side is not None:
            from planner.errors import InputError
            raise InputError(f"{target.name} is not a paired structure: --side does not apply")
        return None
    if request.side is not None and request.side not in SIDES:
        from planner.errors import InputError
        raise InputError(f"side must be left or right, got {request.side!r}")
    window = next((w for w in target.windows if w.id == request.window_id), None)
    if window is not None and window.side is not None:
        if request.side not in (None, window.side):
            from planner.errors import InputError
            raise InputError(f"window {window.id!r} serves the {window.side} {target.name_in_sentence}, "
                             f"not the {request.side}")
        return window.side
    if request.side is None and not target.sided_windows:
        return None  # no window serves one side only: the side would change nothing
    return request.side or SIDES[0]


def windows_for_side(target, side: str | None) -> list:
    """The target's windows that serve ``side`` (a window without a side serves both)."""
    return [w for w in target.windows if side is None or w.side in (None, side)]


def window_rank_keys(feasible, loss, order, adjunct=None):
    """Ranking keys of W windows for N patients, vectorised: feasible first; then the standard
    windows before the adjuncts (practice tries an adjunct when the standard windows fail:
    WHOManual2011 for water in the stomach, CielmaNeonatalHead for the mastoid fontanelle,
    KidneyWindowsTeaching for prone); among the feasible windows of that class, those within
    :data:`CLOSE_LOSS_DB` of its best loss by the usual order of practice; then by loss.
    ``feasible`` and ``loss`` (W, N), ``order`` and ``adjunct`` (W,) (a window with no usual
    order counts after those with one). Returns a tuple of (W, N) key arrays."""
    import numpy as np
    feasible = np.asarray(feasible, dtype=bool)
    loss = np.asarray(loss, dtype=float)
    rank = np.asarray([99 if o is None else o for o in order], dtype=float)[:, None]
    extra = np.zeros(rank.shape, dtype=bool) if adjunct is None else \
        np.asarray(adjunct, dtype=bool).reshape(-1, 1)
    standard = feasible & ~extra
    later = np.broadcast_to(extra & standard.any(axis=0, keepdims=True), feasible.shape)
    pool = feasible & ~later
    best = np.where(pool, loss, np.inf).min(axis=0, keepdims=True)
    close = pool & (loss <= best + CLOSE_LOSS_DB)
    return ((~feasible).astype(float), later.astype(float), (~close).astype(float),
            np.where(close, rank, 99.0), loss)


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
