"""Model of a saved plan file: the inputs of one plan (see :mod:`planner.planfile`).

Every ``scanplan plan`` option has a key. Types and vocabularies are checked here;
impossible values (a BMI of 3, a height without a weight) are checked afterwards by the
same rules the command line and the terminal UI use (:func:`planner.planfile.check_inputs`).
Missing keys and sections take their defaults, so older files still load.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Annotated, Literal, TypeAlias

from pydantic import Field

from planner.datafiles import vocabulary
from planner.files.base import FileModel, Finite, Text

__all__ = ["PlanFile", "PatientSection", "ExamSection", "FilesSection", "SupervisionSection"]

if TYPE_CHECKING:      # the ids come from planner/data/vocabulary.yaml at run time
    ExamId: TypeAlias = str
    ModeId: TypeAlias = str
else:
    ExamId = Literal[tuple(vocabulary()["exam_types"])]
    ModeId = Literal[tuple(vocabulary()["modes"])]
Grade = Annotated[int, Field(ge=0, le=10)]


class PatientSection(FileModel):
    """The patient: habitus, measured wall, fat or depth, gestation, conditions."""

    bmi: Finite | None = Field(None, description="Body-mass index. [kg/m2]")
    height_cm: Finite | None = Field(None, description="Height (with weight_kg). [cm]")
    weight_kg: Finite | None = Field(None, description="Weight (with height_cm). [kg]")
    sex: Literal["female", "male"] | None = Field(None, description="null: unknown.")
    wall_mm: Finite | None = Field(None, description="Measured body-wall thickness. [mm]")
    fat_mm: Finite | None = Field(None, description="Measured subcutaneous fat. [mm]")
    depth_cm: Finite | None = Field(None, description="Measured skin-to-target depth. [cm]")
    gestation_weeks: Finite | None = Field(None, description="Gestational age. [weeks]")
    conditions: dict[Text, Grade] | None = Field(None, description="Condition: grade.")


class ExamSection(FileModel):
    """The exam context (null or absent: the engine derives it from the target)."""

    type: ExamId | None = Field(None, description="null: the target's usual exam type.")
    modes: Annotated[list[ModeId], Field(min_length=1)] = ["b_mode"]
    contrast_agent: bool = False
    febrile: bool = False
    pregnancy_possible: bool = False
    lung_in_beam: bool = False
    expected_ti: Finite | None = Field(None, description="Expected displayed TI. [-]")
    expected_mi: Finite | None = Field(None, description="Expected displayed MI. [-]")
    planned_minutes: Finite | None = Field(None, description="Planned dwell time. [min]")
    doppler: bool = Field(False, description="Plan Doppler even without a Doppler mode.")


class FilesSection(FileModel):
    """Department files the plan uses (paths as given; null: the defaults)."""

    probes: Text | None = Field(None, description="Probe inventory file.")
    local_policy: Text | None = Field(None, description="Local safety policy file.")


class SupervisionSection(FileModel):
    """Supervised draft and its sign-off fields (free text, kept exactly as written)."""

    draft: bool = False
    student: str | None = None
    supervisor: str | None = None
    date: str | None = None
    supervisor_comments: str | None = None
    student_reflection: str | None = None


class PlanFile(FileModel):
    """A saved plan's inputs."""

    schema_version: Literal[1] = Field(description="File format version; must be 1.")
    target: Text = Field(description="Target id of the target library.")
    window: Text | None = Field(None, description="Window id; null: rank every window.")
    patient: PatientSection | None = None
    exam: ExamSection | None = None
    files: FilesSection | None = None
    supervision: SupervisionSection | None = None
