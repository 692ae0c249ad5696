"""Model of a department's local safety policy file (see :mod:`planner.safety.policy`).

Types, ranges and vocabularies are checked here; the checks that need the whole file or the
published tables (TI bands in order and not overlapping, the MI ceiling of the regulatory
limits) stay with :func:`planner.safety.policy.load_local_policy`. Units: TI and MI [-],
``max_minutes`` [min], ``before_weeks`` [weeks].
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Annotated, Literal, TypeAlias

from pydantic import Field

from planner.datafiles import vocabulary
from planner.files.base import FileModel, NonNegative, OptText, Positive, Text

__all__ = ["PolicyFile", "TimeBand", "ExamLimits", "DopplerRestriction", "Preferences",
           "Permission"]

if TYPE_CHECKING:      # the ids come from planner/data/vocabulary.yaml at run time
    ExamId: TypeAlias = str
    ExamOrDefault: TypeAlias = str
    ModeId: TypeAlias = str
else:
    ExamId = Literal[tuple(vocabulary()["exam_types"])]
    ExamOrDefault = Literal[(*vocabulary()["exam_types"], "default")]
    ModeId = Literal[tuple(vocabulary()["modes"])]
Permission = Literal["permitted", "clinical_indication_only", "not_permitted"]


class TimeBand(FileModel):
    """A local maximum scan time for TI in ``ti_above < TI <= ti_up_to`` (from 0 inclusive)."""

    ti_above: NonNegative = Field(description="Lower TI bound (exclusive; 0 inclusive). [-]")
    ti_up_to: Positive | None = Field(None, description="Upper TI bound; null: open. [-]")
    max_minutes: Positive = Field(description="Longest scan in this band. [min]")


class ExamLimits(FileModel):
    """Local ceilings for one exam type."""

    max_ti: Positive | None = Field(None, description="Highest displayed TI accepted. [-]")
    max_mi: Positive | None = Field(None, description="Highest displayed MI accepted. [-]")
    max_minutes: Positive | None = Field(None, description="Longest exam. [min]")


class DopplerRestriction(FileModel):
    """A local restriction on Doppler modes for some exam types."""

    exam_types: Annotated[list[ExamId], Field(min_length=1)]
    modes: Annotated[list[ModeId], Field(min_length=1)]
    permitted: Permission = Field(
        description="permitted, clinical_indication_only or not_permitted.")
    before_weeks: Annotated[float, Field(gt=0, le=45, allow_inf_nan=False)] | None = Field(
        None, description="Applies only earlier in pregnancy (or when gestation is unknown). "
                          "[weeks]")
    max_ti: Positive | None = None
    max_minutes: Positive | None = None
    note: OptText = ""


class Preferences(FileModel):
    """Preferred settings for one exam type."""

    start_ti: Positive | None = Field(None, description="Starting TI. [-]")
    notes: list[Text] = []


class PolicyFile(FileModel):
    """A department's local safety policy."""

    schema_version: Literal[1] = Field(description="File format version; must be 1.")
    department: Text = Field(description="The department's name.")
    version: OptText = ""
    approved_by: OptText = ""
    review_date: OptText = ""
    scan_time_limits: dict[ExamOrDefault, Annotated[list[TimeBand], Field(min_length=1)]] = {}
    exam_limits: dict[ExamOrDefault, ExamLimits] = {}
    doppler_restrictions: list[DopplerRestriction] = []
    preferred_settings: dict[ExamOrDefault, Preferences] = {}
