"""Saved plans: the inputs of one plan as a YAML file, recomputed on load.

A plan file holds the *request* (patient, target, window, conditions, exam context,
supervised-draft switch and sign-off fields), never the computed plan, so a loaded plan
always reflects the current engine and data. The format (``schema_version: 1``)::

    schema_version: 1
    target: liver
    window: null              # null: rank every candidate window
    patient:
      bmi: 38                 # or height_cm and weight_kg
      height_cm: null
      weight_kg: null
      sex: null               # female, male or null (unknown)
      wall_mm: null           # measured body-wall thickness [mm]
      depth_cm: null          # measured skin-to-target depth [cm]
      gestation_weeks: null
      fat_mm: null            # measured subcutaneous fat [mm]
      conditions: {steatosis: 2}
    exam:
      type: null              # null: the target's usual exam type
      modes: [b_mode]
      contrast_agent: false
      febrile: false
      pregnancy_possible: false
      lung_in_beam: false
      expected_ti: null
      expected_mi: null
      planned_minutes: null
      doppler: false          # plan Doppler even without a Doppler mode
    files:
      probes: null            # probe inventory file (null: the default inventory)
      local_policy: null      # local safety policy file
    supervision:
      draft: false
      student: ''
      supervisor: ''
      date: ''
      supervisor_comments: ''
      student_reflection: ''
    decisions: {probe: '', start_mhz: null, window: '', position: '', harmonic: null,
                tilt: '', rationale: ''}     # the student's own (planner.choices)
    computed: {...}           # the headline as saved (planner.headline.headline_data)
    signature: {...}          # `scanplan draft sign` (planner.signing)

Missing keys take these defaults (older files without the newer keys still load). Paths
under ``files`` are used as given, like the command line's ``--probes`` and
``--local-policy``. Unknown keys and wrong types are reported all at once with their line by
the model :class:`planner.files.plan.PlanFile` (:class:`planner.errors.DataError`);
impossible values (checked as the terminal UI checks them) are reported, again all at once,
when the types are right. Files are written atomically. :func:`check_inputs` gives the
per-field problems that the terminal UI shows next to each field. The engine, the YAML
reader and the file model are imported only when needed, so that the terminal UI can
paint before loading them.
"""

from __future__ import annotations

import math
import os
from dataclasses import dataclass, field, fields
from typing import Any

from planner.choices import StudentChoices
from planner.errors import InputError, PlannerError

__all__ = ["SCHEMA_VERSION", "PlanInputs", "SignOff", "check_inputs", "custom_context",
           "exam_context", "inputs_from_data", "inputs_to_data", "load_plan_inputs",
           "make_plan_for", "save_plan_inputs", "to_request"]

SCHEMA_VERSION: int = 1
"""The ``schema_version`` a plan file declares."""

KIND = "plan"
"""What the file is, for messages ('... is not a usable plan file')."""


@dataclass(frozen=True)
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


@dataclass(frozen=True)
class PlanInputs:
    """Everything a user enters for one plan (units in the names; None = not given)."""

    target_id: str = "liver"
    window_id: str | None = None
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
                       context_overrides=exam_context(inputs, target),
                       probes_path=inputs.probes_path, local_policy_path=inputs.local_policy_path,
                       doppler=inputs.doppler or any(m in DOPPLER_MODES for m in inputs.modes),
                       draft=inputs.draft, qa_path=inputs.qa_path,
                       prior=prior_pair(inputs.prior_frequency_mhz, inputs.prior_fade_cm))


def make_plan_for(inputs: PlanInputs):
    """The plan for ``inputs`` (a :class:`planner.engine.Plan`; InputError if impossible)."""
    from planner.engine import make_plan
    return make_plan(to_request(inputs))


_CONTEXT_FIELDS = (("expected_ti", "expected_ti"), ("planned_minutes", "planned_minutes"),
                   ("gestation", "gestation_weeks"), ("pregnan", "pregnancy_possible"),
                   ("modes", "modes"))


def _try(problems: dict[str, str], name: str, call) -> Any:
    if name in problems:
        return None
    try:
        return call()
    except (PlannerError, ValueError) as exc:
        problems[name] = getattr(exc, "message", None) or str(exc)
        return None


def check_inputs(inputs: PlanInputs) -> dict[str, str]:
    """Problems of the inputs, by field name (empty when a plan can be computed).

    Each field is checked on its own first, so that a message lands next to the field that
    causes it; then the pairs that depend on each other (BMI or height and weight, wall and
    depth) and the exam context.
    """
    from planner.body.conditions import check_conditions, parse_condition
    from planner.body.habitus import check_sex
    from planner.library.targets import load_library
    problems: dict[str, str] = {}
    target = _try(problems, "target_id", lambda: load_library().get(inputs.target_id))
    if target is not None and inputs.window_id:
        _try(problems, "window_id", lambda: target.window(inputs.window_id))
    for name in ("bmi", "wall_mm", "fat_mm", "depth_cm", "gestation_weeks"):
        if getattr(inputs, name) is not None:
            _try(problems, name, lambda n=name: _patient(inputs, **{n: getattr(inputs, n)}))
    _try(problems, "sex", lambda: check_sex(inputs.sex))
    given = [n for n in ("height_cm", "weight_kg") if getattr(inputs, n) is not None]
    if len(given) == 1:
        other = "weight_kg" if given[0] == "height_cm" else "height_cm"
        problems[other] = "give the height and the weight together"
    elif given:
        _try(problems, "height_cm", lambda: _patient(inputs, height_cm=inputs.height_cm,
                                                     weight_kg=inputs.weight_kg))
        if "weight" in problems.get("height_cm", ""):
            problems["weight_kg"] = problems.pop("height_cm")
        if inputs.bmi is not None and "bmi" not in problems:
            problems["bmi"] = "give either a BMI or a height and weight, not both"

    def conditions() -> None:
        for name, grade in inputs.conditions:
            parse_condition(f"{name}:{grade}")
        check_conditions(dict(inputs.conditions))
    _try(problems, "conditions", conditions)
    if inputs.wall_mm is not None and inputs.depth_cm is not None:
        _try(problems, "depth_cm", lambda: _patient(inputs, wall_mm=inputs.wall_mm,
                                                    depth_cm=inputs.depth_cm))
    start = inputs.choices.start_mhz
    if start is not None and (not math.isfinite(start) or not 0 < start <= 100):
        problems["student_start_mhz"] = f"start frequency must be above 0 and at most 100 MHz, " \
                                        f"got {start:g}"
    from planner.engine.prior_exam import prior_problems
    problems.update(prior_problems(inputs.prior_frequency_mhz, inputs.prior_fade_cm))
    for name in ("expected_ti", "expected_mi", "planned_minutes"):
        value = getattr(inputs, name)
        if value is not None and (not math.isfinite(value) or value < 0):
            problems[name] = f"{name} must be a finite number >= 0, got {value:g}"
    if problems or target is None:
        return problems
    patient = _try(problems, "bmi", lambda: _patient(inputs))
    if patient is None:
        return problems
    try:
        from planner.engine.plan import default_exam_context
        request = to_request(inputs)
        window = target.window(inputs.window_id) if inputs.window_id else target.windows[0]
        default_exam_context(request, target, window)     # the engine's own rules validate it
    except (PlannerError, ValueError) as exc:
        message = getattr(exc, "message", None) or str(exc)
        name = next((f for key, f in _CONTEXT_FIELDS if key in message), "exam_type")
        problems[name] = message
    return problems


# -- YAML -----------------------------------------------------------------------------------
_PATIENT_KEYS = ("bmi", "height_cm", "weight_kg", "sex", "wall_mm", "fat_mm", "depth_cm",
                 "gestation_weeks", "prior_frequency_mhz", "prior_fade_cm", "conditions")
_EXAM_KEYS = {"type": "exam_type", "modes": "modes", "contrast_agent": "contrast_agent",
              "febrile": "febrile", "pregnancy_possible": "pregnancy_possible",
              "lung_in_beam": "lung_in_beam", "expected_ti": "expected_ti",
              "expected_mi": "expected_mi", "planned_minutes": "planned_minutes",
              "doppler": "doppler"}
_FILES_KEYS = {"probes": "probes_path", "local_policy": "local_policy_path", "qa": "qa_path"}
_SIGNOFF_KEYS = tuple(f.name for f in fields(SignOff))
_FIELD_PATHS = {"target_id": ("target",), "window_id": ("window",),
                **{k: ("patient", k) for k in _PATIENT_KEYS},
                **{f: ("exam", k) for k, f in _EXAM_KEYS.items()},
                **{f: ("files", k) for k, f in _FILES_KEYS.items()},
                "student_start_mhz": ("decisions", "start_mhz")}


def inputs_to_data(inputs: PlanInputs) -> dict[str, Any]:
    """The plan file's content as plain data (every key written, in file order)."""
    return {
        "schema_version": SCHEMA_VERSION,
        "target": inputs.target_id,
        "window": inputs.window_id,
        "patient": {**{k: getattr(inputs, k) for k in _PATIENT_KEYS[:-1]},
                    "conditions": {name: grade for name, grade in inputs.conditions}},
        "exam": {key: (list(inputs.modes) if attr == "modes" else getattr(inputs, attr))
                 for key, attr in _EXAM_KEYS.items()},
        "files": {key: getattr(inputs, attr) for key, attr in _FILES_KEYS.items()},
        "supervision": {"draft": inputs.draft,
                        **{k: getattr(inputs.signoff, k) for k in _SIGNOFF_KEYS}},
        "decisions": inputs.choices.as_data(),
    }


def inputs_from_data(data: dict[str, Any], collector) -> PlanInputs | None:
    """Read plan-file data into :class:`PlanInputs`; problems go to ``collector``
    (a :class:`planner.yamlio.ProblemCollector`).

    Types are checked by :class:`planner.files.plan.PlanFile`, then the values by
    :func:`check_inputs`. Returns None when any problem was found.
    """
    from planner.files.base import validate_data
    from planner.files.plan import PlanFile
    model = validate_data(PlanFile, data, collector.add)
    if model is None:
        return None
    patient, exam = model.patient, model.exam
    files, sup = model.files, model.supervision
    patient_values: dict[str, Any] = {k: getattr(patient, k) if patient else None
                                      for k in _PATIENT_KEYS[:-1]}
    conditions = tuple((patient.conditions or {}).items()) if patient else ()
    exam_values: dict[str, Any] = {}
    if exam is not None:
        exam_values = {attr: getattr(exam, key) for key, attr in _EXAM_KEYS.items()}
        exam_values["modes"] = tuple(exam.modes)
    file_values: dict[str, Any] = {attr: getattr(files, key) if files else None
                                   for key, attr in _FILES_KEYS.items()}
    inputs = PlanInputs(
        target_id=model.target, window_id=model.window or None, **patient_values,
        conditions=conditions, **exam_values, **file_values,
        draft=sup.draft if sup else False,
        signoff=SignOff(**{k: (getattr(sup, k) or "") if sup else "" for k in _SIGNOFF_KEYS}),
        choices=_choices(model.decisions))
    for name, message in check_inputs(inputs).items():
        collector.add(_FIELD_PATHS.get(name, (name,)), message)
    return None if collector else inputs


def _choices(section) -> StudentChoices:
    if section is None:
        return StudentChoices()
    text = {k: (getattr(section, k) or "") for k in ("probe", "window", "position", "tilt",
                                                       "rationale")}
    return StudentChoices(start_mhz=section.start_mhz, harmonic=section.harmonic, **text)


def save_plan_inputs(path: str | os.PathLike[str], inputs: PlanInputs, *,
                     overwrite: bool = False, plan=None, stamp=None) -> None:
    """Write the inputs as a plan file, atomically, with the plan's headline as computed
    (``computed``: :func:`planner.headline.headline_data` of ``plan``, made now when None;
    left out when the engine cannot plan these inputs).

    Raises
    ------
    InputError
        When the inputs cannot make a plan (the first problem is named), the file exists
        and ``overwrite`` is false, or the write fails.
    """
    from planner.yamlio import atomic_write_text, dump_yaml
    problems = check_inputs(inputs)
    if problems:
        name, message = next(iter(problems.items()))
        raise InputError(f"cannot save an invalid plan: {name}: {message}")
    from planner.headline import FILE_HEADER, headline_data
    data = inputs_to_data(inputs)
    if plan is None:
        try:
            plan = make_plan_for(inputs)
        except PlannerError:       # valid inputs the engine cannot plan: no headline to store
            plan = None
    if plan is not None:
        data["computed"] = headline_data(plan, stamp)
    atomic_write_text(path, FILE_HEADER + dump_yaml(data), overwrite=overwrite)


def load_plan_inputs(path: str | os.PathLike[str]) -> PlanInputs:
    """Read a plan file.

    Raises
    ------
    DataError
        Listing every problem as ``file:line:col: key.path: message``.
    """
    from planner.yamlio import ProblemCollector, load_user_yaml
    loaded = load_user_yaml(path, kind=KIND, max_bytes=200_000)
    collector = ProblemCollector(path, loaded)
    inputs = inputs_from_data(loaded.data, collector)
    collector.raise_if_any(title="Invalid plan file")
    assert inputs is not None
    return inputs
