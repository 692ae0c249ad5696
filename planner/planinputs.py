"""The inputs of one plan (what a plan file, the command line and the terminal UI hold) and
the one way from them to the engine's request (:func:`to_request`).

:mod:`planner.planfile` reads and writes them as YAML; :mod:`planner.plancheck` gives the
per-field problems. The engine is imported only when a request is made.
"""

from __future__ import annotations

from dataclasses import field
from typing import Any

from planner.choices import StudentChoices
from planner.errors import InputError
from planner.records import record

__all__ = ["PlanInputs", "SignOff", "custom_context", "exam_context", "make_plan_for",
           "to_request"]


@record(slots=False)
class SignOff:
    """Sign-off fields of a supervised draft (free text kept as written; the supervisor's
    name, date and comments are printed only from a verified signature, :mod:`planner.signing`)."""

    student: str = ""
    supervisor: str = ""
    date: str = ""
    supervisor_comments: str = ""
    student_reflection: str = ""

    def as_report_fields(self) -> dict[str, str]:
        """The fields under the names the plan documents print."""
        return {"Student": self.student, "Supervisor": self.supervisor, "Date": self.date,
                "Supervisor's comments": self.supervisor_comments,
                "Student's reflection": self.student_reflection}


@record(slots=False)
class PlanInputs:
    """Everything a user enters for one plan (units in the names; None = not given)."""

    target_id: str = "liver"
    window_id: str | None = None
    side: str | None = None
    bmi: float | None = None
    height_cm: float | None = None
    weight_kg: float | None = None
    sex: str | None = None
    wall_mm: float | None = None
    depth_cm: float | None = None
    gestation_weeks: float | None = None
    conditions: tuple[tuple[str, int], ...] = ()
    fat_mm: float | None = None
    exam_type: str | None = None
    modes: tuple[str, ...] = ("b_mode",)
    contrast_agent: bool = False
    febrile: bool = False
    pregnancy_possible: bool = False
    expected_ti: float | None = None
    planned_minutes: float | None = None
    expected_mi: float | None = None
    lung_in_beam: bool = False
    probes_path: str | None = None
    local_policy_path: str | None = None
    doppler: bool = False
    draft: bool = False
    qa_path: str | None = None
    prior_frequency_mhz: float | None = None
    prior_fade_cm: float | None = None
    signoff: SignOff = field(default_factory=SignOff)
    choices: StudentChoices = field(default_factory=StudentChoices)


# -- requests -------------------------------------------------------------------------------
def _patient(inputs: PlanInputs, **only):
    from planner.body.patient import Patient
    if only:
        return Patient.from_inputs(**only)
    return Patient.from_inputs(bmi=inputs.bmi, height_cm=inputs.height_cm,
                               weight_kg=inputs.weight_kg, sex=inputs.sex,
                               conditions=dict(inputs.conditions),
                               gestation_weeks=inputs.gestation_weeks, wall_mm=inputs.wall_mm,
                               fat_mm=inputs.fat_mm, depth_cm=inputs.depth_cm)


def custom_context(inputs: PlanInputs) -> bool:
    """True when the user set any exam-context field (otherwise the engine decides)."""
    return (inputs.exam_type is not None or tuple(inputs.modes) != ("b_mode",)
            or inputs.contrast_agent or inputs.febrile or inputs.pregnancy_possible
            or inputs.lung_in_beam or inputs.expected_ti is not None
            or inputs.expected_mi is not None or inputs.planned_minutes is not None)


def exam_context(inputs: PlanInputs, target) -> dict | None:
    """The exam-context fields the user set, or None to let the engine choose them all.

    The engine derives the rest (bone near the focus, lung in the beam, gestation) exactly as
    for a plan without user context (:func:`planner.engine.plan.default_exam_context`).
    """
    exam_type = inputs.exam_type or target.exam_type
    weeks, possible = inputs.gestation_weeks, inputs.pregnancy_possible
    if exam_type.startswith("neonatal") and (weeks is not None or possible):
        raise InputError(f"a gestational age or possible pregnancy does not apply to a "
                         f"{exam_type.replace('_', ' ')} exam")
    if not custom_context(inputs):
        return None
    fields = {"exam_type": inputs.exam_type, "expected_ti": inputs.expected_ti,
              "expected_mi": inputs.expected_mi, "planned_minutes": inputs.planned_minutes}
    overrides: dict[str, Any] = {name: value for name, value in fields.items()
                                 if value is not None}
    overrides.update({name: True for name in ("contrast_agent", "febrile", "pregnancy_possible",
                                              "lung_in_beam") if getattr(inputs, name)})
    if tuple(inputs.modes) != ("b_mode",):
        overrides["modes"] = tuple(inputs.modes)
    return overrides


def to_request(inputs: PlanInputs):
    """Turn the inputs into a :class:`planner.engine.PlanRequest` (InputError if impossible).

    Doppler planning is asked for when a Doppler mode is planned or ``doppler`` is set; the
    inventory, local policy and QA log paths are passed as given, the prior exam as a pair."""
    from planner.engine.prior_exam import prior_pair
    from planner.engine.request import PlanRequest
    from planner.library.targets import load_library
    from planner.safety.context import DOPPLER_MODES
    target = load_library().get(inputs.target_id)
    if inputs.window_id:
        target.window(inputs.window_id)
    return PlanRequest(target_id=target.id, patient=_patient(inputs), window_id=inputs.window_id,
                       side=inputs.side,
                       context_overrides=exam_context(inputs, target),
                       probes_path=inputs.probes_path, local_policy_path=inputs.local_policy_path,
                       doppler=inputs.doppler or any(m in DOPPLER_MODES for m in inputs.modes),
                       draft=inputs.draft, qa_path=inputs.qa_path,
                       prior=prior_pair(inputs.prior_frequency_mhz, inputs.prior_fade_cm))


def make_plan_for(inputs: PlanInputs):
    """The plan for ``inputs`` (a :class:`planner.engine.Plan`; InputError if impossible)."""
    from planner.engine import make_plan
    return make_plan(to_request(inputs))
