"""From the form's raw values to a plan, without ever raising (no Textual here).

The terminal UI collects what the user typed (text for numbers and conditions, chosen
values for lists and switches), and :func:`compute` turns it into a plan or into
problems keyed by field name, which the UI shows next to each field.
"""

from __future__ import annotations

import math
import re
import time
from dataclasses import dataclass, field
from typing import Any

from planner.choices import StudentChoices
from planner.errors import PlannerError
from planner.planfile import PlanInputs, SignOff

NUMBER_FIELDS: dict[str, str] = {
    "bmi": "BMI",
    "height_cm": "height",
    "weight_kg": "weight",
    "wall_mm": "measured wall",
    "fat_mm": "measured fat",
    "depth_cm": "measured depth",
    "gestation_weeks": "gestational age",
    "expected_ti": "expected TI",
    "expected_mi": "expected MI",
    "planned_minutes": "planned minutes",
    "prior_frequency_mhz": "prior exam's frequency",
    "prior_fade_cm": "prior fade depth",
}
"""Fields typed as numbers, with a short label for messages."""

FIELD_LABELS: dict[str, str] = {**NUMBER_FIELDS, "target_id": "target", "window_id": "window",
                                "side": "side", "sex": "sex", "conditions": "conditions", "exam_type": "exam type",
                                "modes": "modes", "pregnancy_possible": "pregnancy possible",
                                "student_start_mhz": "start frequency"}
"""Every field the UI can mark, with its short label."""

SIGNOFF_FIELDS: tuple[str, ...] = ("student", "supervisor", "date", "supervisor_comments",
                                   "student_reflection")
"""Free-text sign-off fields of a supervised draft."""

SUPERVISOR_FIELDS: tuple[str, ...] = ("supervisor", "date", "supervisor_comments")
"""Sign-off fields only a verified signature fills (read-only in the form; the file's own
values are carried unchanged, so that saving does not alter what was signed)."""

CHOICE_TEXT_FIELDS: dict[str, str] = {
    "student_probe": "probe", "student_window": "window", "student_position": "position",
    "student_tilt": "tilt", "student_rationale": "rationale"}
"""Form field -> :class:`planner.choices.StudentChoices` field, for the student's typed
decisions (``student_start_mhz`` and ``student_harmonic`` are read apart)."""


_NUMBER_RE = re.compile(r"[+-]?[0-9]+(?:\.[0-9]+)?(?:[eE][+-]?[0-9]+)?", re.ASCII)
"""What a typed number may look like: ASCII digits only, no ``_`` separators, no words."""


def parse_number(text: str, label: str) -> float | None:
    """Read a typed number; empty means not given. A decimal comma is accepted.

    Only plain ASCII numbers are read (``[+-]digits[.digits][e[+-]digits]``): Python's
    ``float`` would also take ``1_0`` as 10, Arabic-Indic digits such as ``٣٥`` as 35,
    and ``nan`` or ``inf``, which a form must refuse rather than silently reinterpret.

    Raises
    ------
    ValueError
        With a short message naming the field when the text is not a finite number.
    """
    text = text.strip().replace(",", ".")
    if not text:
        return None
    if not _NUMBER_RE.fullmatch(text):
        if "_" in text:
            raise ValueError(f"{label}: write the number without '_' ({text!r})")
        if any(ch.isdigit() and not ch.isascii() for ch in text):
            raise ValueError(f"{label}: use the digits 0-9 ({text!r})")
        raise ValueError(f"{label}: not a number ({text!r}); write e.g. 38 or 38.5")
    value = float(text)
    if not math.isfinite(value):
        raise ValueError(f"{label}: must be a finite number ({text!r} is too large)")
    return value


def parse_conditions(text: str) -> tuple[tuple[str, int], ...]:
    """Read ``name[:grade], ...`` (grade as a number or a word) into ``((id, grade), ...)``.

    Raises
    ------
    planner.errors.InputError
        Naming the valid conditions or grades.
    """
    from planner.body.conditions import parse_condition
    out: dict[str, int] = {}
    for part in text.replace(";", ",").split(","):
        if part.strip():
            name, grade = parse_condition(part)
            out[name] = grade
    return tuple(out.items())


def conditions_text(conditions: tuple[tuple[str, int], ...]) -> str:
    """The text form of conditions, as :func:`parse_conditions` reads it."""
    return ", ".join(f"{name}:{grade}" for name, grade in conditions)


def number_text(value: float | None) -> str:
    """A number as the form shows it (no trailing .0)."""
    return "" if value is None else f"{value:g}"


def parse_form(raw: dict[str, Any]) -> tuple[PlanInputs, dict[str, str]]:
    """Build :class:`PlanInputs` from the form's raw values.

    ``raw`` holds text for :data:`NUMBER_FIELDS`, ``conditions`` and the sign-off fields,
    and plain values for ``target_id``, ``window_id``, ``sex``, ``exam_type`` (None for
    automatic), ``modes`` (a sequence) and the flags. Returns the inputs (unparseable
    fields left as not given) and the problems by field name.
    """
    problems: dict[str, str] = {}
    numbers: dict[str, float | None] = {}
    for name, label in NUMBER_FIELDS.items():
        try:
            numbers[name] = parse_number(str(raw.get(name, "") or ""), label)
        except ValueError as exc:
            problems[name] = str(exc)
            numbers[name] = None
    try:
        conditions = parse_conditions(str(raw.get("conditions", "") or ""))
    except (PlannerError, ValueError) as exc:
        problems["conditions"] = getattr(exc, "message", None) or str(exc)
        conditions = ()
    habitus_given = any(str(raw.get(name, "") or "").strip()
                        for name in ("bmi", "height_cm", "weight_kg", "wall_mm"))
    if not habitus_given:
        # a form whose BMI was cleared is being edited: never plan for an assumed patient
        problems["bmi"] = "give the BMI, or the height and weight, or a measured wall"
    try:
        start = parse_number(str(raw.get("student_start_mhz", "") or ""), "start frequency")
    except ValueError as exc:
        problems["student_start_mhz"] = str(exc)
        start = None
    harmonic = raw.get("student_harmonic")
    choices = StudentChoices(start_mhz=start, harmonic=None if harmonic not in ("on", "off")
                             else harmonic == "on",
                             **{f: str(raw.get(k, "") or "") for k, f in CHOICE_TEXT_FIELDS.items()})
    modes = tuple(raw.get("modes") or ())
    if not modes:
        problems["modes"] = "choose at least one mode"
        modes = ("b_mode",)
    inputs = PlanInputs(
        target_id=str(raw.get("target_id") or ""), window_id=raw.get("window_id") or None,
        sex=raw.get("sex") or None, conditions=conditions, exam_type=raw.get("exam_type") or None,
        modes=modes, contrast_agent=bool(raw.get("contrast_agent")),
        febrile=bool(raw.get("febrile")), pregnancy_possible=bool(raw.get("pregnancy_possible")),
        lung_in_beam=bool(raw.get("lung_in_beam")), doppler=bool(raw.get("doppler")),
        probes_path=raw.get("probes_path") or None, local_policy_path=raw.get("local_policy_path") or None,
        qa_path=raw.get("qa_path") or None, side=raw.get("side") or None,
        draft=bool(raw.get("draft")),
        signoff=SignOff(**{k: str(raw.get(k, "") or "") for k in SIGNOFF_FIELDS}),
        choices=choices, **numbers)
    return inputs, problems


def form_values(inputs: PlanInputs) -> dict[str, Any]:
    """The raw form values that :func:`parse_form` reads back into ``inputs``."""
    out: dict[str, Any] = {name: number_text(getattr(inputs, name)) for name in NUMBER_FIELDS}
    out.update(target_id=inputs.target_id, window_id=inputs.window_id, sex=inputs.sex,
               conditions=conditions_text(inputs.conditions), exam_type=inputs.exam_type,
               modes=tuple(inputs.modes), contrast_agent=inputs.contrast_agent,
               febrile=inputs.febrile, pregnancy_possible=inputs.pregnancy_possible,
               lung_in_beam=inputs.lung_in_beam, doppler=inputs.doppler,
               probes_path=inputs.probes_path, local_policy_path=inputs.local_policy_path,
               qa_path=inputs.qa_path, side=inputs.side, draft=inputs.draft)
    out.update({k: getattr(inputs.signoff, k) for k in SIGNOFF_FIELDS})
    c = inputs.choices
    out.update({k: getattr(c, f) for k, f in CHOICE_TEXT_FIELDS.items()})
    out["student_start_mhz"] = number_text(c.start_mhz)
    out["student_harmonic"] = None if c.harmonic is None else ("on" if c.harmonic else "off")
    return out


_ENGINE_FIELD_HINTS = (("gestational age", "gestation_weeks"),
                       ("measured depth", "depth_cm"), ("depth", "depth_cm"),
                       ("window", "window_id"), ("target", "target_id"),
                       ("wall", "wall_mm"), ("bmi", "bmi"))


@dataclass
class Outcome:
    """The result of one recompute.

    Attributes
    ----------
    inputs : PlanInputs
    problems : dict
        Field name -> message (empty when the plan was computed).
    plan : planner.engine.Plan or None
    message : str
        A problem not tied to one field, or an empty string.
    elapsed_ms : float
        Time taken by validation and the engine. [ms]
    """

    inputs: PlanInputs
    problems: dict[str, str] = field(default_factory=dict)
    plan: Any = None
    message: str = ""
    elapsed_ms: float = 0.0


def compute(raw: dict[str, Any]) -> Outcome:
    """Validate the form and make the plan; never raises."""
    start = time.perf_counter()
    inputs, problems = parse_form(raw)
    outcome = Outcome(inputs, problems)
    try:
        if not problems:
            from planner.plancheck import check_inputs
            from planner.planfile import make_plan_for
            outcome.problems = check_inputs(inputs)
            if not outcome.problems:
                outcome.plan = make_plan_for(inputs)
    except (PlannerError, ValueError) as exc:
        message = getattr(exc, "message", None) or str(exc)
        lower = message.lower()
        name = next((f for key, f in _ENGINE_FIELD_HINTS if key in lower), None)
        if name is not None and isinstance(exc, PlannerError):
            outcome.problems[name] = message
        else:
            outcome.message = message
    except Exception as exc:  # noqa: BLE001 - the UI must keep running; the message says it is a bug
        outcome.message = f"internal error ({type(exc).__name__}: {exc}); please report it"
    outcome.elapsed_ms = (time.perf_counter() - start) * 1000.0
    return outcome
