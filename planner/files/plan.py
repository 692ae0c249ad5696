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

__all__ = ["PlanFile", "PatientSection", "ExamSection", "FilesSection", "SupervisionSection",
           "ComputedSection", "BandSection", "StudentSection", "SignatureSection"]

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
    prior_frequency_mhz: Finite | None = Field(None, description="Prior exam: frequency at "
                                               "which the organ's speckle faded. [MHz]")
    prior_fade_cm: Finite | None = Field(None, description="Prior exam: depth from the skin "
                                         "where it faded. [cm]")
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
    qa: Text | None = Field(None, description="Probe QA log (phantom depth of penetration).")


class SupervisionSection(FileModel):
    """Supervised draft and its sign-off fields (free text, kept exactly as written)."""

    draft: bool = False
    student: str | None = None
    supervisor: str | None = None
    date: str | None = None
    supervisor_comments: str | None = None
    student_reflection: str | None = None


GeneratedBy = Annotated[str, Field(pattern=r"^scanplan \S+$")]
Timestamp = Annotated[str, Field(pattern=r"^[0-9]{4}-[0-9]{2}-[0-9]{2}T[0-9]{2}:[0-9]{2}:[0-9]{2}Z$")]


class BandSection(FileModel):
    """The recommended band as computed (null: no usable band). [MHz]"""

    low: Finite | None = None
    high: Finite | None = None
    start: Finite | None = Field(None, description="Where to start (null: detail not reached).")


class ComputedSection(FileModel):
    """The plan's headline as computed when the file was saved (compared on reopening)."""

    generated_by: GeneratedBy = Field(description="Tool and version, e.g. 'scanplan 0.1.0'.")
    generated_at: Timestamp = Field(description="UTC, ISO 8601 to the second.")
    band: BandSection
    probe: Text | None = Field(None, description="Probe id (null: no probe fits).")
    window: Text = Field(description="Chosen window id.")
    harmonic: bool = Field(description="Harmonic imaging advised.")
    findings: list[Text] = Field(description="Finding codes, in output order.")


class StudentSection(FileModel):
    """The student's own decisions in a supervised draft (empty or null: not decided)."""

    probe: str | None = Field(None, description="Probe id or type the student chose.")
    start_mhz: Finite | None = Field(None, description="Start frequency. [MHz]")
    window: str | None = Field(None, description="Window id the student chose.")
    position: str | None = Field(None, description="Patient position, in words.")
    harmonic: bool | None = Field(None, description="Harmonic imaging on (null: not decided).")
    tilt: str | None = Field(None, description="Tilt approach, in words.")
    rationale: str | None = Field(None, description="Short rationale.")


class SignatureSection(FileModel):
    """A supervisor's Ed25519 signature over the file's canonical content."""

    key_id: Annotated[str, Field(pattern=r"^[0-9a-f]{16}$")]
    name: Text
    role: str = ""
    signed_at: Timestamp
    comment: str = ""
    public_key: Annotated[str, Field(min_length=1, description="Raw public key, base64.")]
    signature: Annotated[str, Field(min_length=1, description="Ed25519 signature, base64.")]


class PlanFile(FileModel):
    """A saved plan: its inputs, the headline as computed, the student's decisions and an
    optional supervisor's signature."""

    schema_version: Literal[1] = Field(description="File format version; must be 1.")
    target: Text = Field(description="Target id of the target library.")
    window: Text | None = Field(None, description="Window id; null: rank every window.")
    side: Literal["left", "right"] | None = Field(
        None, description="Side of a paired target; null: the right side (or not paired).")
    patient: PatientSection | None = None
    exam: ExamSection | None = None
    files: FilesSection | None = None
    supervision: SupervisionSection | None = None
    decisions: StudentSection | None = None
    computed: ComputedSection | None = None
    signature: SignatureSection | None = None
