"""Typed model of a department protocol file (one exam, ``schema_version: 1``).

A protocol file is YAML whose keys are exactly the field names of the frozen
dataclasses below. Each field carries its description and constraints in its
``metadata`` (made by :func:`spec`). :func:`planner.files.dataclass_model.model_for`
turns them into the strict pydantic model that the loader (:mod:`planner.protocol.loader`)
validates with and that gives the JSON Schema (:mod:`planner.protocol.jsonschema`), so the
three never disagree. A field without a default is
required; ``X | None`` accepts ``null``; ``tuple[X, ...]`` is a YAML list.

Numbers that are clinical facts or safety limits (thresholds, fasting hours,
dwell-time caps, TI and MI ceilings, Doppler angle) are written as sourced values
``{value: X, source: Key, status: verified, note: "..."}`` where ``source`` is a
key of :data:`planner.references.REFERENCES` or of the protocol's own
``local_references``. Thresholds state their comparison in words
(``below``, ``at_or_below``, ``above``, ``at_or_above``).
"""

from __future__ import annotations

from dataclasses import field
from typing import Any

from planner.datafiles import vocabulary
from planner.provenance import STATUSES, Sourced
from planner.records import record

SCHEMA_VERSION = 1
"""The only protocol ``schema_version`` this release reads."""

EXAM_TYPES: tuple[str, ...] = tuple(vocabulary()["exam_types"])
"""Exam types; the same ids as the safety rules and the target library use."""

POSITIONS: tuple[str, ...] = (
    "supine", "supine_neck_extended", "supine_head_turned", "left_lateral_decubitus",
    "right_lateral_decubitus", "left_posterior_oblique", "right_posterior_oblique", "prone",
    "sitting", "standing", "semi_recumbent", "lithotomy",
)
"""Patient positions a view may name (details go in ``position_note``)."""

BREATHING: tuple[str, ...] = (
    "quiet", "inspiration_hold", "deep_inspiration_hold", "expiration_hold", "valsalva",
    "not_applicable",
)
"""Breathing instructions for a view."""

BLADDER: tuple[str, ...] = ("no_requirement", "empty", "comfortably_full", "full")
SUPERVISION: tuple[str, ...] = ("in_room", "in_department", "available_remotely", "not_permitted")
"""Supervision of trainees: supervisor in the room throughout; in the department and
reviewing images before the patient leaves; available by phone and reviewing later;
trainees may not perform this exam."""
CHAPERONE: tuple[str, ...] = ("required", "offered", "not_needed")
MEASUREMENT_UNITS: tuple[str, ...] = (
    "mm", "cm", "mm2", "cm2", "ml", "cm_per_s", "ratio", "deg", "count", "percent", "weeks")
CALLIPERS: tuple[str, ...] = (
    "outer_to_outer", "inner_to_inner", "leading_edge_to_leading_edge", "outer_to_inner",
    "ellipse", "trace", "spectral_envelope", "count", "not_applicable")
"""Calliper conventions (outer_to_outer = outer wall to outer wall, and so on)."""
REPORTED_VALUES: tuple[str, ...] = ("each", "largest", "smallest", "mean")
DOPPLER_MODES: tuple[str, ...] = ("colour_doppler", "power_doppler", "pulsed_doppler")
PULSED_DOPPLER_POLICY: tuple[str, ...] = ("allowed", "only_when_indicated", "not_permitted")
THERMAL_INDICES: tuple[str, ...] = ("TIS", "TIB", "TIC")
THRESHOLD_BOUNDS: tuple[str, ...] = ("above", "at_or_above", "below", "at_or_below")

ID_PATTERN = r"^[a-z0-9]+(-[a-z0-9]+)*$"
DATE_PATTERN = r"^[0-9]{4}-[0-9]{2}-[0-9]{2}$"
REFERENCE_KEY_PATTERN = r"^[A-Za-z][A-Za-z0-9_]*$"


def spec(description: str, *, choices: tuple[str, ...] | None = None,
         minimum: float | None = None, maximum: float | None = None,
         exclusive_minimum: bool = False, pattern: str | None = None,
         date: bool = False, min_items: int = 0, unit: str | None = None) -> dict[str, Any]:
    """Return field metadata: description and constraints for loader and JSON Schema.

    ``minimum``/``maximum`` apply to numbers, to the ``value`` of a sourced value
    and to every number in a list; ``choices``, ``pattern`` and ``date`` apply to
    text and to every text in a list; ``min_items`` to lists; ``unit`` names the
    unit of a number in brackets in the description.
    """
    return {"description": description, "choices": choices, "minimum": minimum,
            "maximum": maximum, "exclusive_minimum": exclusive_minimum, "pattern": pattern,
            "date": date, "min_items": min_items, "unit": unit}


def _f(description: str, default: Any = ..., **constraints: Any) -> Any:
    meta = spec(description, **constraints)
    if default is ...:
        return field(metadata=meta)
    if isinstance(default, (tuple, dict)):
        return field(default_factory=type(default), metadata=meta)
    return field(default=default, metadata=meta)


@record(slots=False)
class Preparation:
    """What the patient does before the exam."""

    bladder: str = _f("Bladder state at the start of the exam.", choices=BLADDER)
    fasting_hours: Sourced | None = _f("Fasting before the exam, with its source.", None,
                                       minimum=0, maximum=24, unit="h")
    instructions: tuple[str, ...] = _f("Instructions given to the patient, in order.", ())
    checks: tuple[str, ...] = _f("Checks before scanning (identity, consent, allergies).", ())


@record(slots=False)
class Personnel:
    """Who may perform, supervise and report the exam."""

    performed_by: tuple[str, ...] = _f("Roles allowed to perform the exam.", min_items=1)
    trainee_supervision: str = _f("Supervision level for trainees.", choices=SUPERVISION)
    chaperone: str = _f("Chaperone policy.", choices=CHAPERONE)
    reported_by: tuple[str, ...] = _f("Roles allowed to issue the report.", ())


@record(slots=False)
class Equipment:
    """Probes (labels from the department probe inventory) and setup."""

    probe: str = _f("Main probe: an id of the probe inventory.", pattern=ID_PATTERN)
    alternative_probes: tuple[str, ...] = _f(
        "Other probes from the inventory (larger or smaller patients, detail views).", (),
        pattern=ID_PATTERN)
    inventory: str | None = _f(
        "Probe inventory file, relative to this protocol; the default inventory when absent.",
        None)
    setup: tuple[str, ...] = _f("Starting settings and reasons, short sentences.", ())
    infection_control: str | None = _f("Cleaning and cover requirements.", None)


@record(slots=False)
class Threshold:
    """One band of a measurement, e.g. ``below: 6`` labelled normal, with its source."""

    label: str = _f("What a value in this band means (e.g. 'within typical limits').")
    source: str = _f("Bibliography key of the publication or local document.",
                     pattern=REFERENCE_KEY_PATTERN)
    status: str = _f("How the value was checked.", choices=STATUSES)
    above: float | None = _f("Band holds values greater than this.", None)
    at_or_above: float | None = _f("Band holds values greater than or equal to this.", None)
    below: float | None = _f("Band holds values less than this.", None)
    at_or_below: float | None = _f("Band holds values less than or equal to this.", None)
    applies_to: str | None = _f("Population the band applies to (e.g. after cholecystectomy).",
                                None)
    action: str | None = _f("What to do when a value falls in this band.", None)
    note: str | None = _f("Table, page or remark.", None)


@record(slots=False)
class Measurement:
    """A measurement taken in a view."""

    id: str = _f("Measurement id, unique in the protocol (kebab-case).", pattern=ID_PATTERN)
    name: str = _f("What is measured.")
    unit: str = _f("Unit of the value and of its thresholds.", choices=MEASUREMENT_UNITS)
    calliper: str = _f("Calliper convention.", choices=CALLIPERS)
    plane: str | None = _f("Plane and landmarks of the measurement.", None)
    calliper_note: str | None = _f("Details of calliper placement.", None)
    repeats: int = _f("How many times the measurement is taken.", 1, minimum=1, maximum=10)
    reported_value: str = _f("Which of the repeats is reported.", "each",
                             choices=REPORTED_VALUES)
    thresholds: tuple[Threshold, ...] = _f("Bands with their meaning and source.", ())


@record(slots=False)
class RequiredImage:
    """An image or cine clip the view must archive."""

    label: str = _f("On-screen label of the image (anatomy, plane, side).")
    cine: bool = _f("A cine clip rather than a still image.", False)
    must_show: tuple[str, ...] = _f("Quality criteria: what must be visible.", ())


@record(slots=False)
class Fallback:
    """An alternative window (and position or probe) when the planned one fails."""

    window: str = _f("Window id of the same target.", pattern=ID_PATTERN)
    position: str | None = _f("Patient position for the fallback.", None, choices=POSITIONS)
    probe: str | None = _f("Probe id for the fallback.", None, pattern=ID_PATTERN)
    note: str | None = _f("When to use it.", None)


@record(slots=False)
class DopplerPlan:
    """Doppler in a view."""

    modes: tuple[str, ...] = _f("Doppler modes used.", choices=DOPPLER_MODES, min_items=1)
    max_angle_deg: Sourced | None = _f("Largest beam-to-flow angle for velocity measurement.",
                                       None, minimum=0, maximum=90, unit="deg")
    notes: tuple[str, ...] = _f("Settings and pitfalls.", ())


@record(slots=False)
class View:
    """One step of the exam: a target seen from a window, with images and measurements."""

    id: str = _f("View id, unique in the protocol (kebab-case).", pattern=ID_PATTERN)
    title: str = _f("Short title of the view.")
    target: str = _f("Target id of the target library.", pattern=ID_PATTERN)
    window: str = _f("Window id of that target.", pattern=ID_PATTERN)
    position: str = _f("Patient position.", choices=POSITIONS)
    breathing: str = _f("Breathing instruction.", choices=BREATHING)
    expected_minutes: float = _f("The department's time estimate for this view.",
                                 minimum=0, exclusive_minimum=True, maximum=60, unit="min")
    images: tuple[RequiredImage, ...] = _f("Images to archive, in order.", min_items=1)
    side: str | None = _f("Side of a paired target (kidney, carotid, limb veins ...); the "
                          "window and every fallback must serve it.", None, choices=("left", "right"))
    position_note: str | None = _f("Details of the position (pillows, arm up ...).", None)
    probe: str | None = _f("Probe id when it differs from the protocol's main probe.", None,
                           pattern=ID_PATTERN)
    fallbacks: tuple[Fallback, ...] = _f("Alternatives when the view is not achieved.", ())
    measurements: tuple[Measurement, ...] = _f("Measurements in this view.", ())
    doppler: DopplerPlan | None = _f("Doppler in this view.", None)
    notes: tuple[str, ...] = _f("Practical advice for the view.", ())


@record(slots=False)
class SafetyLimits:
    """Local safety limits; each number with its source."""

    max_scan_minutes: Sourced | None = _f("Longest scanning time for the whole exam.", None,
                                          minimum=0, exclusive_minimum=True, maximum=240,
                                          unit="min")
    monitored_index: str | None = _f("Thermal index to watch.", None, choices=THERMAL_INDICES)
    max_ti: Sourced | None = _f("Highest displayed thermal index accepted.", None,
                                minimum=0, maximum=6)
    max_mi: Sourced | None = _f("Highest displayed mechanical index accepted.", None,
                                minimum=0, maximum=1.9)
    pulsed_doppler: str = _f("Local rule for pulsed (spectral) Doppler.", "allowed",
                             choices=PULSED_DOPPLER_POLICY)
    notes: tuple[str, ...] = _f("Other local safety rules (ALARA practice, Doppler limits).", ())


@record(slots=False)
class Escalation:
    """What to do when the exam cannot be completed or finds something urgent."""

    incomplete_exam: tuple[str, ...] = _f("Steps when views cannot be obtained.", min_items=1)
    urgent_findings: tuple[str, ...] = _f("Findings that need same-day action, and how.",
                                          min_items=1)
    call_supervisor_when: tuple[str, ...] = _f("When a trainee stops and calls the supervisor.",
                                               ())


@record(slots=False)
class Documentation:
    """What is archived and reported."""

    image_labels: tuple[str, ...] = _f("What every archived image carries.", ())
    report: tuple[str, ...] = _f("What the report contains.", ())
    limitation_statement: str | None = _f("Wording used when views were limited.", None)


@record(slots=False)
class Protocol:
    """A department's written protocol for one exam."""

    schema_version: int = _f("Protocol file format version; must be 1.", minimum=1, maximum=1)
    id: str = _f("Protocol id (kebab-case).", pattern=ID_PATTERN)
    title: str = _f("Title of the exam protocol.")
    department: str = _f("Department that owns the protocol.")
    version: str = _f("Version of this protocol (text, e.g. \"2.1\").")
    owner: str = _f("Person or role responsible for the protocol.")
    review_date: str = _f("Next review date (YYYY-MM-DD).", pattern=DATE_PATTERN, date=True)
    exam_type: str = _f("Exam type (selects the safety rules).", choices=EXAM_TYPES)
    scope: str = _f("What the exam covers and for whom.")
    indications: tuple[str, ...] = _f("Reasons to perform the exam.", min_items=1)
    preparation: Preparation = _f("Patient preparation.")
    personnel: Personnel = _f("Personnel and supervision.")
    equipment: Equipment = _f("Probes and setup.")
    views: tuple[View, ...] = _f("Views in the order they are taken.", min_items=1)
    safety: SafetyLimits = _f("Local safety limits.")
    escalation: Escalation = _f("Limitations and escalation.")
    documentation: Documentation = _f("Archive and report content.")
    approved_by: str | None = _f("Who approved this version.", None)
    exclusions: tuple[str, ...] = _f("When not to scan, or another modality is preferred.", ())
    request_information: tuple[str, ...] = _f("Clinical details the request must give.", ())
    limitations: tuple[str, ...] = _f("Known limitations of the exam.", ())
    local_references: dict[str, str] = _f(
        "Extra bibliography for this protocol: key -> full citation (local documents).", {})
    notes: tuple[str, ...] = _f("Anything else.", ())

    def total_expected_minutes(self) -> float:
        """Sum of the views' expected minutes. [min]"""
        return sum(view.expected_minutes for view in self.views)

    def measurements(self) -> tuple[Measurement, ...]:
        """Every measurement of every view, in order."""
        return tuple(m for view in self.views for m in view.measurements)
