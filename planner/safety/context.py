"""The exam context that selects the safety guidance: exam type, modes, pregnancy, risks."""

from __future__ import annotations

import math
from dataclasses import asdict, fields
from typing import Any

from planner.datafiles import vocabulary
from planner.errors import InputError
from planner.records import record
from planner.safety.validity import check_inputs

EXAM_TYPES: dict[str, str] = vocabulary()["exam_types"]
"""Exam type id -> label (``planner/data/vocabulary.yaml``). The id selects the thermal index
to watch and the scan-time table."""

MODES: dict[str, str] = vocabulary()["modes"]
"""Planned imaging mode id -> label."""

DOPPLER_MODES: tuple[str, ...] = ("colour_doppler", "power_doppler", "pulsed_doppler")
"""Modes that the early-pregnancy Doppler guidance covers."""

NEONATAL_TYPES: tuple[str, ...] = ("neonatal_head", "neonatal_spine", "neonatal_other")
"""Exam types on a neonate."""


def _flag(name: str, value: Any) -> None:
    if not isinstance(value, bool):
        raise InputError(f"{name} must be true or false, got {value!r}")


def _non_negative(name: str, value: Any) -> None:
    if value is None:
        return
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise InputError(f"{name} must be a finite number, got {value!r}")
    if value < 0:
        raise InputError(f"{name} must be >= 0, got {value!r}")


@record(slots=False)
class ExamContext:
    """What the exam is and how it will be done, as far as safety guidance depends on it.

    Parameters
    ----------
    exam_type : str
        A key of :data:`EXAM_TYPES`.
    gestation_weeks : float, optional
        Gestational age from the last menstrual period, for obstetric exams and
        gynaecological exams with a possible pregnancy. [weeks]
    pregnancy_possible : bool
        The patient may be pregnant (gynaecological and other adult exams).
    modes : tuple of str
        Planned modes, keys of :data:`MODES`.
    contrast_agent : bool
        A gas (microbubble) contrast agent will be given.
    febrile : bool
        The patient has a raised body temperature.
    lung_in_beam : bool
        Aerated lung lies in the beam (chest, heart, upper abdomen in neonates).
    bone_near_focus : bool
        Bone lies at or near the focus (fetal skull or spine, bone surfaces).
    expected_ti : float, optional
        Expected displayed thermal index of the monitored kind. [-]
    planned_minutes : float, optional
        Planned scanning (dwell) time. [min]
    expected_mi : float, optional
        Expected displayed mechanical index. [-]

    Raises
    ------
    InputError
        One line naming the field, the value and what is valid.
    """

    exam_type: str = "general_abdominal"
    gestation_weeks: float | None = None
    pregnancy_possible: bool = False
    modes: tuple[str, ...] = ("b_mode",)
    contrast_agent: bool = False
    febrile: bool = False
    lung_in_beam: bool = False
    bone_near_focus: bool = False
    expected_ti: float | None = None
    planned_minutes: float | None = None
    expected_mi: float | None = None

    def __post_init__(self) -> None:
        if self.exam_type not in EXAM_TYPES:
            raise InputError(f"exam_type must be one of {', '.join(EXAM_TYPES)}, "
                             f"got {self.exam_type!r}")
        modes = self.modes
        if isinstance(modes, str) or not isinstance(modes, (tuple, list)):
            raise InputError(f"modes must be a list of {', '.join(MODES)}, got {modes!r}")
        unknown = [m for m in modes if m not in MODES]
        if unknown or not modes:
            raise InputError(f"modes must be one or more of {', '.join(MODES)}, "
                             f"got {list(modes)!r}")
        object.__setattr__(self, "modes", tuple(dict.fromkeys(modes)))
        for name in ("pregnancy_possible", "contrast_agent", "febrile", "lung_in_beam",
                     "bone_near_focus"):
            _flag(name, getattr(self, name))
        check_inputs(gestation_weeks=self.gestation_weeks, expected_ti=self.expected_ti)
        _non_negative("planned_minutes", self.planned_minutes)
        _non_negative("expected_mi", self.expected_mi)
        pregnancy_exams = ("obstetric", "gynaecological")
        if self.gestation_weeks is not None and self.exam_type not in pregnancy_exams:
            raise InputError(f"gestation_weeks applies to obstetric or gynaecological exams, "
                             f"not {self.exam_type}")
        if (self.gestation_weeks is not None and self.exam_type == "gynaecological"
                and not self.pregnancy_possible):
            raise InputError("gestation_weeks is given for a gynaecological exam: "
                             "set pregnancy_possible to true")
        if self.pregnancy_possible and self.exam_type in NEONATAL_TYPES:
            raise InputError(f"pregnancy_possible cannot apply to a {self.exam_type} exam")

    @property
    def pregnant(self) -> bool:
        """True for obstetric exams and for any exam with a possible pregnancy."""
        return self.exam_type == "obstetric" or self.pregnancy_possible

    @property
    def obstetric_scope(self) -> bool:
        """True when the exam itself scans a pregnancy (obstetric, or gynaecological with a
        possible pregnancy), as opposed to another exam in a possibly pregnant patient."""
        return self.exam_type == "obstetric" or (self.exam_type == "gynaecological"
                                                 and self.pregnancy_possible)

    @property
    def neonatal(self) -> bool:
        """True for the neonatal exam types."""
        return self.exam_type in NEONATAL_TYPES

    @property
    def doppler_modes(self) -> tuple[str, ...]:
        """The planned Doppler modes (colour, power, pulsed)."""
        return tuple(m for m in self.modes if m in DOPPLER_MODES)

    def to_dict(self) -> dict[str, Any]:
        """Return the context as a JSON-ready dict (modes as a list)."""
        out = asdict(self)
        out["modes"] = list(self.modes)
        return out

    @classmethod
    def from_mapping(cls, raw: dict[str, Any]) -> ExamContext:
        """Build a context from a plain mapping (JSON, YAML); unknown keys are an error."""
        if not isinstance(raw, dict):
            raise InputError(f"exam context must be a mapping, got {type(raw).__name__}")
        names = [f.name for f in fields(cls)]
        unknown = sorted(set(raw) - set(names))
        if unknown:
            raise InputError(f"unknown exam context key(s) {', '.join(unknown)}; "
                             f"valid: {', '.join(names)}")
        values = dict(raw)
        if isinstance(values.get("modes"), list):
            values["modes"] = tuple(values["modes"])
        return cls(**values)
