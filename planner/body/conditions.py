"""Patient conditions that change the layer stack or the advice.

``NAME[:GRADE]`` on the command line; a bare name takes the stated default grade.
Every number carries its provenance.
"""

from __future__ import annotations


from planner.errors import InputError
from planner.provenance import Sourced
from planner.records import record


@record
class ConditionSpec:
    """A condition a user may state: grades allowed and the default grade."""

    id: str
    label: str
    grades: tuple[int, ...]
    default_grade: int
    grade_labels: tuple[str, ...] = ()


CONDITIONS: dict[str, ConditionSpec] = {c.id: c for c in (
    ConditionSpec("steatosis", "Hepatic steatosis", (1, 2, 3), 2, ("mild", "moderate", "severe")),
    ConditionSpec("ascites", "Ascites", (1, 2, 3), 2, ("small", "moderate", "large")),
    ConditionSpec("full_bladder", "Full bladder", (1,), 1),
    ConditionSpec("empty_bladder", "Empty bladder", (1,), 1),
    ConditionSpec("bowel_gas", "Bowel gas", (1, 2, 3), 2, ("some", "moderate", "marked")),
    ConditionSpec("limited_mobility", "Cannot turn or sit up", (1,), 1),
    ConditionSpec("no_breath_hold", "Cannot hold breath", (1,), 1),
    ConditionSpec("post_prandial", "Not fasted", (1,), 1),
    ConditionSpec("oedema", "Subcutaneous oedema", (1, 2, 3), 2, ("mild", "moderate", "marked")),
)}
"""The conditions scanplan understands, by id."""

STEATOSIS_ATTENUATION_DB_PER_CM_MHZ: dict[int, Sourced] = {
    1: Sourced(0.68, "AttenuationSteatosisReview2022", "from_memory", "S1 cut-off about 0.63-0.70"),
    2: Sourced(0.80, "AttenuationSteatosisReview2022", "from_memory", "between S1 and severe"),
    3: Sourced(0.95, "AttenuationSteatosisReview2022", "from_memory", "severe >= 0.8-0.9"),
}
"""Liver attenuation coefficient by steatosis grade. [dB/cm/MHz]"""

STEATOSIS_SPEED_M_PER_S: dict[int, Sourced] = {
    1: Sourced(1555, "SteatosisSoSRat2022", "from_memory",
               "about -10 to -13 m/s per grade from normal 1577 (animal data); human 1500-1540 when steatotic"),
    2: Sourced(1530, "Imbault2017", "from_memory", "steatotic liver about 1500-1540 m/s"),
    3: Sourced(1510, "Imbault2017", "from_memory", "lower end of the steatotic range"),
}
"""Liver speed of sound by steatosis grade. [m/s]"""

ASCITES_DEPTH_CM: dict[int, Sourced] = {
    1: Sourced(1.0, "CommonPractice", "common_practice", "small: a thin perihepatic rim"),
    2: Sourced(3.0, "CommonPractice", "common_practice", "moderate"),
    3: Sourced(6.0, "CommonPractice", "common_practice", "large: bowel floats centrally"),
}
"""Thickness of the free-fluid layer placed between the wall and the organs. [cm]
Free fluid lies under the wall families marked ``ascites_beneath`` in ``walls.yaml``."""


def parse_condition(text: str) -> tuple[str, int]:
    """Parse ``NAME[:GRADE]`` (grade as a number or its word) into ``(id, grade)``.

    Raises InputError naming the valid conditions or grades.
    """
    name, _, grade_text = text.strip().partition(":")
    key = name.strip().lower().replace("-", "_")
    spec = CONDITIONS.get(key)
    if spec is None:
        raise InputError(f"unknown condition {name!r}; valid conditions: "
                         f"{', '.join(sorted(CONDITIONS))}")
    if not grade_text:
        return key, spec.default_grade
    grade_text = grade_text.strip().lower()
    if grade_text in spec.grade_labels:
        return key, spec.grade_labels.index(grade_text) + 1
    try:
        grade = int(grade_text)
    except ValueError:
        grade = -1
    if grade not in spec.grades:
        words = f" or {', '.join(spec.grade_labels)}" if spec.grade_labels else ""
        raise InputError(f"condition {key} takes grade {', '.join(map(str, spec.grades))}"
                         f"{words}, got {grade_text!r}")
    return key, grade


def check_conditions(conditions: dict[str, int]) -> None:
    """Refuse unknown conditions, grades outside their range and contradictions."""
    if not isinstance(conditions, dict):
        raise InputError(f"conditions must map a condition to its grade, got {conditions!r}")
    for name, grade in conditions.items():
        spec = CONDITIONS.get(name)
        if spec is None:
            raise InputError(f"unknown condition {name!r}; valid conditions: "
                             f"{', '.join(sorted(CONDITIONS))}")
        if isinstance(grade, bool) or not isinstance(grade, int) or grade not in spec.grades:
            raise InputError(f"condition {name} takes grade {', '.join(map(str, spec.grades))}, "
                             f"got {grade!r}")
    if "full_bladder" in conditions and "empty_bladder" in conditions:
        raise InputError("conditions full_bladder and empty_bladder contradict each other")
