"""The patient as the body model sees it."""

from __future__ import annotations

import math
from dataclasses import field

from planner.body.conditions import check_conditions
from planner.body.habitus import bmi_from_height_weight, check_sex, who_bmi_class
from planner.errors import InputError
from planner.records import record

DEFAULT_BMI: float = 25.0
"""BMI assumed when none is given (the body model's reference habitus). [kg/m^2]"""


def _optional_positive(name: str, value, upper: float) -> float | None:
    if value is None:
        return None
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise InputError(f"{name} must be a number, got {value!r}")
    if value <= 0 or value > upper:
        raise InputError(f"{name} must be > 0 and <= {upper:g}, got {value:g}")
    return float(value)


@record(slots=False)
class Patient:
    """Habitus and conditions of one patient.

    Attributes
    ----------
    bmi : float
        Body-mass index. [kg/m^2]
    bmi_given : bool
        False when the default BMI was assumed.
    sex : str or None
        'female', 'male' or None (unknown: mean of both).
    conditions : dict
        Condition id -> grade.
    gestation_weeks : float or None
        Gestational age. [weeks]
    wall_mm, fat_mm : float or None
        Measured body-wall or subcutaneous-fat thickness at the planned window. [mm]
    depth_cm : float or None
        Measured skin-to-target depth. [cm]
    """

    bmi: float = DEFAULT_BMI
    bmi_given: bool = False
    sex: str | None = None
    conditions: dict[str, int] = field(default_factory=dict)
    gestation_weeks: float | None = None
    wall_mm: float | None = None
    fat_mm: float | None = None
    depth_cm: float | None = None

    @classmethod
    def from_inputs(cls, *, bmi=None, height_cm=None, weight_kg=None, sex=None,
                    conditions=None, gestation_weeks=None, wall_mm=None, fat_mm=None,
                    depth_cm=None) -> "Patient":
        """Validate raw inputs into a Patient; InputError (one line) on impossible values."""
        if bmi is not None and (height_cm is not None or weight_kg is not None):
            raise InputError("give either a BMI or a height and weight, not both")
        if (height_cm is None) != (weight_kg is None):
            raise InputError("height and weight must be given together")
        given = bmi is not None or height_cm is not None
        if height_cm is not None:
            bmi = bmi_from_height_weight(height_cm, weight_kg)
        bmi = _optional_positive("BMI", bmi, 150.0)
        if bmi is not None and bmi < 10:
            raise InputError(f"BMI must be at least 10 kg/m2 for a living adult, got {bmi:g}")
        wall = _optional_positive("wall thickness (mm)", wall_mm, 400.0)
        fat = _optional_positive("fat thickness (mm)", fat_mm, 400.0)
        if wall is not None and fat is not None and fat > wall:
            raise InputError(f"fat thickness ({fat:g} mm) cannot exceed the wall thickness ({wall:g} mm)")
        depth = _optional_positive("depth (cm)", depth_cm, 60.0)
        if depth is not None and wall is not None and wall / 10.0 >= depth:
            raise InputError(f"the target depth ({depth:g} cm) must be deeper than the wall ({wall:g} mm)")
        weeks = None
        if gestation_weeks is not None:
            weeks = _optional_positive("gestational age (weeks)", gestation_weeks, 45.0)
        conds = dict(conditions or {})
        check_conditions(conds)
        return cls(bmi=bmi if bmi is not None else DEFAULT_BMI, bmi_given=given,
                   sex=check_sex(sex), conditions=conds, gestation_weeks=weeks,
                   wall_mm=wall, fat_mm=fat, depth_cm=depth)

    @property
    def habitus(self) -> tuple[str, str]:
        """WHO BMI class ``(id, label)``."""
        return who_bmi_class(self.bmi)
