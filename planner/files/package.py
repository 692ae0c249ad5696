"""Models of scanplan's package data (``planner/data/*.yaml``), for the test suite.

Package data is trusted and read fast at run time (:mod:`planner.datafiles`, no pydantic);
the test suite validates every shipped file here once (``tests/test_files_layer.py``).
:func:`check_package_file` reads a data file with :func:`planner.yamlio.load_user_yaml`
(so problems carry lines) and returns every problem. Every number is a sourced record
``{value, source, status, note?}`` whose ``source`` must be a bibliography key.
"""

from __future__ import annotations

from typing import Annotated, Any, Literal

from pydantic import Field, field_validator

from planner.datafiles import vocabulary
from planner.files.base import (FileModel, Finite, NonNegative, OptText, SourceKey,
                                SourcedNumber, Status, Text, validate_data)
from planner.files.probes import InventoryFile

__all__ = ["PACKAGE_MODELS", "check_package_file", "TissuesFile", "WallsFile", "VesselsFile",
           "SafetyFile", "VocabularyFile"]

class _Tissue(FileModel):
    name: Text
    kind: Literal["soft", "fluid", "bone", "gas"]
    speed_m_per_s: SourcedNumber
    density_kg_per_m3: SourcedNumber
    attenuation_db_per_cm_mhz: SourcedNumber
    attenuation_exponent: SourcedNumber

class TissuesFile(FileModel):
    """``tissues.yaml``: tissue id -> acoustic properties."""

    schema_version: Literal[1]
    tissues: dict[Text, _Tissue]

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


class VocabularyFile(FileModel):
    """``vocabulary.yaml``: exam types and modes (id -> label), probe families."""

    schema_version: Literal[1]
    exam_types: dict[Annotated[str, Field(pattern=r"^[a-z_]+$")], Text]
    modes: dict[Annotated[str, Field(pattern=r"^[a-z_]+$")], Text]
    probe_types: Annotated[list[Annotated[str, Field(pattern=r"^[a-z_]+$")]], Field(min_length=1)]

PACKAGE_MODELS: dict[str, Any] = {
    "tissues.yaml": TissuesFile, "walls.yaml": WallsFile, "probes.yaml": InventoryFile,
    "vessels.yaml": VesselsFile, "safety.yaml": SafetyFile, "vocabulary.yaml": VocabularyFile,
}
"""Package data file -> its model (``targets.yaml``: see :func:`check_package_file`)."""

def check_package_file(name: str) -> list[str]:
    """Every problem of ``planner/data/<name>`` (empty when valid), with lines."""
    from importlib import resources

    from planner.yamlio import ProblemCollector, load_user_yaml
    path = resources.files("planner") / "data" / name
    if name == "targets.yaml":
        from planner.errors import DataError
        from planner.library.targets import load_library_file
        try:
            load_library_file(str(path))
        except DataError as exc:
            return list(exc.problems)
        return []
    loaded = load_user_yaml(str(path), kind="package data")
    problems = ProblemCollector(str(path), loaded)
    validate_data(PACKAGE_MODELS[name], loaded.data, problems.add)
    _check_sources(loaded.data, (), problems)
    return problems.problems

def _check_sources(node: Any, path: tuple[Any, ...], problems: Any) -> None:
    """Every record with a ``status`` has a known status and a bibliography ``source``."""
    from planner.provenance import STATUSES
    from planner.references import REFERENCES
    if isinstance(node, dict):
        source = node.get("source")
        if "status" in node and node["status"] not in STATUSES:
            problems.add(path + ("status",), f"unknown status {node['status']!r}; valid: "
                                             f"{', '.join(STATUSES)}")
        if "status" in node and source not in REFERENCES:
            problems.add(path + ("source",), f"unknown source key {source!r} (not in the "
                                             "bibliography planner/data/references)")
        for key, value in node.items():
            _check_sources(value, path + (key,), problems)
    elif isinstance(node, list):
        for index, item in enumerate(node):
            _check_sources(item, path + (index,), problems)

