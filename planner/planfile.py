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
when the types are right. Files are written atomically. :func:`planner.plancheck.check_inputs` gives the
per-field problems that the terminal UI shows next to each field. The engine, the YAML
reader and the file model are imported only when needed, so that the terminal UI can
paint before loading them.
"""

from __future__ import annotations

import os
from dataclasses import fields
from typing import Any

from planner.choices import StudentChoices
from planner.errors import InputError, PlannerError
from planner.planinputs import (PlanInputs, SignOff, custom_context, exam_context,
                                make_plan_for, to_request)

__all__ = ["SCHEMA_VERSION", "PlanInputs", "SignOff", "custom_context",
           "exam_context", "inputs_from_data", "inputs_to_data", "load_plan_inputs",
           "make_plan_for", "save_plan_inputs", "to_request"]

SCHEMA_VERSION: int = 1
"""The ``schema_version`` a plan file declares."""

KIND = "plan"
"""What the file is, for messages ('... is not a usable plan file')."""


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
_FIELD_PATHS = {"target_id": ("target",), "window_id": ("window",), "side": ("side",),
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
        "side": inputs.side,
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
    :func:`planner.plancheck.check_inputs`. Returns None when any problem was found.
    """
    from planner.files.base import validate_data
    from planner.plancheck import check_inputs
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
        target_id=model.target, window_id=model.window or None, side=model.side, **patient_values,
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
    from planner.plancheck import check_inputs
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
