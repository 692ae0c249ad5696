"""Habitus: BMI, WHO adult BMI classes, sex.

References
----------
WHO2000Obesity: underweight < 18.5; normal 18.5-24.9; pre-obese 25.0-29.9; obese class I
30.0-34.9; class II 35.0-39.9; class III >= 40.0 kg/m^2 (verified).
"""

from __future__ import annotations

import math

from planner.errors import InputError
from planner.provenance import Sourced

BMI_CLASSES: tuple[tuple[str, str, float, float], ...] = (
    ("underweight", "Underweight", 0.0, 18.5),
    ("normal", "Normal weight", 18.5, 25.0),
    ("pre_obese", "Pre-obese (overweight)", 25.0, 30.0),
    ("obese_1", "Obese class I", 30.0, 35.0),
    ("obese_2", "Obese class II", 35.0, 40.0),
    ("obese_3", "Obese class III", 40.0, math.inf),
)
"""WHO adult BMI classes ``(id, label, lower, upper)``, lower bound inclusive. [kg/m^2]"""

BMI_CLASSES_SOURCE = Sourced("18.5/25/30/35/40", "WHO2000Obesity", "verified")

REPRESENTATIVE_BMI: dict[str, float] = {
    "underweight": 17.5, "normal": 22.0, "pre_obese": 27.5,
    "obese_1": 32.5, "obese_2": 37.5, "obese_3": 45.0,
}
"""A BMI inside each class used for protocol sheets (class midpoints; 45 for class III). [kg/m^2]"""

SEXES: tuple[str, ...] = ("female", "male")


def who_bmi_class(bmi: float) -> tuple[str, str]:
    """Return the WHO class ``(id, label)`` of an adult BMI. [kg/m^2]

    29.99 -> pre-obese; 30.0 -> obese class I; 40.0 -> obese class III (WHO2000Obesity).
    """
    for class_id, label, lower, upper in BMI_CLASSES:
        if lower <= bmi < upper:
            return class_id, label
    raise InputError(f"BMI must be a positive number, got {bmi}")


def bmi_from_height_weight(height_cm: float, weight_kg: float) -> float:
    """Body-mass index ``weight / height^2``. [kg/m^2]"""
    for name, value in (("height_cm", height_cm), ("weight_kg", weight_kg)):
        if not isinstance(value, (int, float)) or not math.isfinite(value) or value <= 0:
            raise InputError(f"{name} must be a positive number, got {value}")
    if not 50 <= height_cm <= 260:
        raise InputError(f"height_cm must be between 50 and 260 cm, got {height_cm:g}")
    if not 2 <= weight_kg <= 400:
        raise InputError(f"weight_kg must be between 2 and 400 kg, got {weight_kg:g}")
    return weight_kg / (height_cm / 100.0) ** 2


def check_sex(sex: str | None) -> str | None:
    """Validate an optional sex ('female' or 'male'); None means unknown (mean of both)."""
    if sex is None or sex in SEXES:
        return sex
    raise InputError(f"sex must be one of {', '.join(SEXES)} (or omitted), got {sex!r}")
