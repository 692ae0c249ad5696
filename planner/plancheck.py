"""Checks of a plan's inputs, by field, as the terminal UI shows them next to each field and
as a plan file is checked on load (:func:`check_inputs`)."""

from __future__ import annotations

import math
from typing import Any

from planner.errors import PlannerError
from planner.planinputs import PlanInputs, _patient, to_request

__all__ = ["check_inputs"]


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
    if target is not None and "window_id" not in problems:
        _try(problems, "side", lambda: _check_side(inputs, target))
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


def _check_side(inputs: PlanInputs, target: Any) -> None:
    """A side only for a paired target, and one the named window serves (the engine's rule:
    :func:`planner.engine.request.side_of`)."""
    from planner.body.patient import Patient
    from planner.engine.request import PlanRequest, side_of
    side_of(PlanRequest(target.id, Patient.from_inputs(bmi=25), window_id=inputs.window_id,
                        side=inputs.side), target)
