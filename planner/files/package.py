"""Models of scanplan's package data (``planner/data/*.yaml``), for the test suite.

Package data is trusted and read fast at run time (:mod:`planner.datafiles`, no pydantic);
the test suite validates every shipped file here once (``tests/test_files_layer.py``).
:func:`check_package_file` reads a data file with :func:`planner.yamlio.load_user_yaml`
(so problems carry lines) and returns every problem. Every number is a sourced record
``{value, source, status, note?}`` whose ``source`` must be a bibliography key.
"""

from __future__ import annotations

from typing import Annotated, Any, Literal

from pydantic import Field, field_validator, model_validator

from planner.datafiles import vocabulary
from planner.files.base import (FileModel, Finite, NonNegative, OptText, SourceKey,
                                SourcedNumber, Status, Text, validate_data)
from planner.files.problems import check_provenance
from planner.files.probes import InventoryFile

__all__ = ["PACKAGE_MODELS", "check_package_file", "TissuesFile", "WallsFile", "VesselsFile",
           "SafetyFile", "VocabularyFile", "GestationFile"]

class _Tissue(FileModel):
    name: Text
    kind: Literal["soft", "fluid", "bone", "gas"]
    speed_m_per_s: SourcedNumber
    density_kg_per_m3: SourcedNumber
    attenuation_db_per_cm_mhz: SourcedNumber
    attenuation_exponent: SourcedNumber

class TissuesFile(FileModel):
    """``tissues.yaml``: tissue id -> acoustic properties; ``aliases``: name -> tissue id."""

    schema_version: Literal[1]
    aliases: dict[Text, Text] = Field(default_factory=dict)
    tissues: dict[Text, _Tissue]

    @model_validator(mode="after")
    def _aliases_name_tissues(self) -> TissuesFile:
        for alias, target in self.aliases.items():
            if alias in self.tissues:
                raise ValueError(f"aliases.{alias} shadows the tissue id {alias!r}")
            if target not in self.tissues:
                raise ValueError(f"aliases.{alias} names the unknown tissue {target!r}")
        return self

class _BySex(FileModel):
    female: Finite
    male: Finite

class _WallLayer(FileModel):
    role: Text
    tissue: Text
    a_mm: Finite | _BySex
    b_mm_per_bmi: Finite | _BySex
    floor_mm: NonNegative
    cv: NonNegative
    source: SourceKey
    status: Status
    note: OptText = ""

class _Wall(FileModel):
    name: Text
    layers: Annotated[list[_WallLayer], Field(min_length=1)]
    bmi_dependent: bool = True
    pannus: bool = False
    intercostal: bool = False
    ascites_beneath: bool = False
    late_pregnancy_fat: bool = False
    endocavitary: bool = False
    includes_bone: bool = False

class WallsFile(FileModel):
    """``walls.yaml``: body-wall families, their layers and their facts."""

    schema_version: Literal[1]
    walls: dict[Text, _Wall]

class _Vessel(FileModel):
    model_config = {**FileModel.model_config, "extra": "allow"}

    name: Text
    flow: Text
    quantity: Text
    waveform: Text
    normal_low_cm_s: SourcedNumber
    normal_high_cm_s: SourcedNumber
    thresholds: list[Any]
    reverse_velocity_cm_s: SourcedNumber
    diameter_mm: SourcedNumber
    angle_policy: Text
    preferred_angle_deg: SourcedNumber
    unsteered_angle_deg: dict[Text, SourcedNumber]
    bone_near_gate: bool
    notes: OptText = ""

class VesselsFile(FileModel):
    """``vessels.yaml``: expected velocities of vessel targets (extra sourced fields allowed)."""

    schema_version: Literal[1]
    vessels: dict[Text, _Vessel]

class _SourcedAny(FileModel):
    value: Any
    source: SourceKey
    status: Status
    note: OptText = ""

class SafetyFile(FileModel):
    """``safety.yaml``: the exam types are exactly those of the vocabulary, each with sourced
    rules (every other record's source and status are checked by :func:`check_package_file`)."""

    model_config = {**FileModel.model_config, "extra": "allow"}

    schema_version: Literal[1]
    exam_types: dict[Text, dict[Text, _SourcedAny]]

    @field_validator("exam_types")
    @classmethod
    def _same_exam_types(cls, value: dict[str, Any]) -> dict[str, Any]:
        if set(value) != set(vocabulary()["exam_types"]):
            raise ValueError("exam types differ from planner/data/vocabulary.yaml")
        return value


_Id = Annotated[str, Field(pattern=r"^[a-z_]+$")]
_Ids = Annotated[list[_Id], Field(min_length=1)]


class VocabularyFile(FileModel):
    """``vocabulary.yaml``: exam types and modes (id -> label), the target library's ids."""

    schema_version: Literal[1]
    exam_types: dict[_Id, Text]
    modes: dict[_Id, Text]
    probe_types: _Ids
    regions: _Ids
    reflectors: _Ids
    surface_reflectors: _Ids
    orientations: _Ids
    curvatures: _Ids
    risk_levels: _Ids
    layer_roles: dict[_Id, _Id]

class _WeekRange(FileModel):
    value: Annotated[list[Annotated[float, Field(gt=0, le=45)]], Field(min_length=2, max_length=2)]
    source: SourceKey
    status: Status
    note: OptText = ""

    @model_validator(mode="after")
    def _ordered(self) -> _WeekRange:
        if self.value[0] >= self.value[1]:
            raise ValueError(f"a gestational range must run from low to high weeks, got {self.value}")
        return self

class _GestationTarget(FileModel):
    valid: _WeekRange
    scan: _WeekRange
    default: SourcedNumber
    before: OptText = ""
    after: OptText = ""
    nuchal_translucency: _WeekRange | None = None

    @model_validator(mode="after")
    def _nested(self) -> _GestationTarget:
        (vlo, vhi), (slo, shi) = self.valid.value, self.scan.value
        if not slo <= vlo < vhi <= shi:
            raise ValueError("the scan range must contain the valid range")
        if not vlo <= self.default.value <= vhi:
            raise ValueError("the default gestation must lie in the valid range")
        return self

class _GestationTable(FileModel):
    weeks: Annotated[list[Annotated[float, Field(gt=0, le=45)]], Field(min_length=2)]
    values: Annotated[list[NonNegative], Field(min_length=2)]
    source: SourceKey
    status: Status
    note: OptText = ""

    @model_validator(mode="after")
    def _same_length(self) -> _GestationTable:
        if len(self.weeks) != len(self.values):
            raise ValueError("weeks and values must have the same length")
        if any(b <= a for a, b in zip(self.weeks, self.weeks[1:])):
            raise ValueError("weeks must increase")
        return self

class _ReferenceWeeks(FileModel):
    fetal: SourcedNumber
    embryo: SourcedNumber

class _GestationTables(FileModel):
    myometrium_cm: _GestationTable
    amniotic_scale: _GestationTable
    skull_thickness_mm: _GestationTable
    skull_mineral_fraction: _GestationTable
    fundal_height_cm: _GestationTable

class GestationFile(FileModel):
    """``gestation.yaml``: gestational ranges of obstetric views and the growth tables."""

    schema_version: Literal[1]
    reference_weeks: _ReferenceWeeks
    targets: dict[Text, _GestationTarget]
    tables: _GestationTables

PACKAGE_MODELS: dict[str, Any] = {
    "tissues.yaml": TissuesFile, "walls.yaml": WallsFile, "probes.yaml": InventoryFile,
    "vessels.yaml": VesselsFile, "safety.yaml": SafetyFile, "vocabulary.yaml": VocabularyFile,
    "gestation.yaml": GestationFile,
}
"""Package data file -> its model (``targets.yaml``: :class:`planner.files.targets.TargetsFile`,
loaded on demand)."""

def check_package_file(name: str) -> list[str]:
    """Every problem of ``planner/data/<name>`` (empty when valid), with lines."""
    from importlib import resources

    from planner.yamlio import ProblemCollector, load_user_yaml
    path = resources.files("planner") / "data" / name
    loaded = load_user_yaml(str(path), kind="package data")
    problems = ProblemCollector(str(path), loaded)
    if name == "targets.yaml":
        from planner.files.targets import TargetsFile, cross_checks
        validate_data(TargetsFile, loaded.data, problems.add)
        cross_checks(loaded.data, problems.add)
        return problems.problems
    validate_data(PACKAGE_MODELS[name], loaded.data, problems.add)
    check_provenance(loaded.data, problems.add)
    return problems.problems
