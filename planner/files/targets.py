"""Model of a target library file (``planner/data/targets.yaml`` and files in its format).

Types, vocabularies (``planner/data/vocabulary.yaml``), tissue and wall ids
(``tissues.yaml``, ``walls.yaml``), kebab-case ids and the range of every sourced number are
checked by the model; :func:`cross_checks` adds what needs more than one field or another
file: bibliography keys, a layer's role and tissue, an intercostal window's rib gap, bone in
the wall or in the path, a fluid target's lumen, duplicate window ids and probe types.
Units: ``*_cm`` [cm], ``*_mm`` [mm], ``*_deg`` [deg], ``wall_factor`` [-].
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Annotated, Any, Literal, TypeAlias

from pydantic import Field, StringConstraints, create_model

from planner.datafiles import package_data, vocabulary
from planner.files.problems import check_provenance
from planner.files.base import (ID_PATTERN, FileModel, OptText, SourceKey, SourcedNumber,
                                Status, Text)

__all__ = ["TargetsFile", "cross_checks"]

_V = vocabulary()
_TISSUES: dict[str, Any] = package_data("tissues.yaml")["tissues"]
_WALLS: dict[str, Any] = package_data("walls.yaml")["walls"]


def _one_of(values: Any) -> Any:
    return Literal[tuple(values)]


if TYPE_CHECKING:      # the ids come from planner/data at run time
    Tissue: TypeAlias = str
    LayerRole: TypeAlias = str
    SurfaceReflector: TypeAlias = str
    Orientation: TypeAlias = str
    Curvature: TypeAlias = str
    Risk: TypeAlias = str
    Region: TypeAlias = str
    Reflector: TypeAlias = str
    ExamType: TypeAlias = str
    ProbeType: TypeAlias = str
    WallId: TypeAlias = str
else:
    Tissue = _one_of(_TISSUES)
    LayerRole = _one_of(_V["layer_roles"])
    SurfaceReflector = _one_of(_V["surface_reflectors"])
    Orientation = _one_of(_V["orientations"])
    Curvature = _one_of(_V["curvatures"])
    Risk = _one_of(_V["risk_levels"])
    Region = _one_of(_V["regions"])
    Reflector = _one_of(_V["reflectors"])
    ExamType = _one_of(_V["exam_types"])
    ProbeType = _one_of(_V["probe_types"])
    WallId = _one_of(_WALLS)


Id = Annotated[str, StringConstraints(pattern=ID_PATTERN)]


def _sourced(name: str, *, le: float, ge: float | None = None, gt: float | None = None) -> Any:
    bounds = {"le": le, **({"ge": ge} if ge is not None else {"gt": gt})}
    value = Annotated[float, Field(allow_inf_nan=False, **bounds)]
    return create_model(name, __base__=FileModel, value=(value, ...), source=(SourceKey, ...),
                        status=(Status, ...), note=(OptText, ""))


if TYPE_CHECKING:
    Thickness: TypeAlias = SourcedNumber
    Tilt: TypeAlias = SourcedNumber
    Radius: TypeAlias = SourcedNumber
    WallFactor: TypeAlias = SourcedNumber
    RibGap: TypeAlias = SourcedNumber
    Depth: TypeAlias = SourcedNumber
    Detail: TypeAlias = SourcedNumber
    WallMm: TypeAlias = SourcedNumber
else:
    Thickness = _sourced("Thickness", gt=0, le=40)
    Tilt = _sourced("Tilt", ge=0, le=90)
    Radius = _sourced("Radius", gt=0, le=500)
    WallFactor = _sourced("WallFactor", gt=0, le=5)
    RibGap = _sourced("RibGap", gt=0, le=100)
    Depth = _sourced("Depth", gt=0, le=40)
    Detail = _sourced("Detail", gt=0, le=100)
    WallMm = _sourced("WallMm", gt=0, le=300)


class PathLayer(FileModel):
    """One organ layer between the body wall and the deepest point of the target."""

    tissue: Tissue
    thickness_cm: Thickness
    role: LayerRole | None = None
    label: OptText = ""
    """What the layer is when its tissue is a stand-in (e.g. ``myometrium`` with soft-tissue
    values); shown instead of the tissue's name."""


class Surface(FileModel):
    """A surface of interest of a target."""

    name: Text
    reflector: SurfaceReflector
    orientation: Orientation
    tilt_from_skin_deg: Tilt
    curvature: Curvature
    radius_mm: Radius | None


class Window(FileModel):
    """A candidate acoustic window."""

    id: Id
    name: Text
    wall: WallId
    position: Text
    breathing: Text
    wall_factor: WallFactor
    path: Annotated[list[PathLayer], Field(min_length=1)]
    rib_gap_mm: RibGap | None
    gas_risk: Risk
    midline_rectus: bool
    bone_in_path: bool
    notes: OptText = ""
    side: Literal["left", "right"] | None = Field(
        default=None, description="The side this window serves for a paired target (None: either).")
    practice_order: Annotated[int, Field(ge=1, le=20)] | None = Field(
        default=None, description="Usual order of practice (1 = the first route tried); breaks "
                                  "ties between windows of close loss.")
    adjunct: bool = Field(
        default=False, description="A window practice keeps for when the standard ones fail or "
                                   "adds after them (water-filled stomach, mastoid fontanelle, "
                                   "prone): ranked after every feasible standard window.")


class Target(FileModel):
    """A structure to be examined, with its candidate windows (usual window first)."""

    name: Text
    region: Region
    reflector: Reflector
    exam_type: ExamType
    target_tissue: Tissue
    typical_depth_cm: Depth
    detail_mm: Detail
    detail_depth_cm: Depth | None = Field(
        default=None, description="Depth of the structures that need the detail in an average "
                                  "adult, when shallower than typical_depth_cm (default: the "
                                  "target's depth).")
    probe_types: Annotated[list[ProbeType], Field(min_length=1)]
    curved_array_from_wall_mm: WallMm | None = Field(
        default=None, description="Body wall at the window [mm] from which practice takes a "
                                  "curved array before a linear one (larger patients).")
    surfaces: list[Surface]
    fluid_filled: bool
    wall_tissue: Tissue | None
    lumen_tissue: Tissue | None
    calcification_risk: Risk
    harmonic_contraindicated: bool
    bone_near_focus: bool = False
    paired: bool = Field(default=False, description="A left and a right structure (plans take a side).")
    pitfalls: list[Text]
    windows: Annotated[list[Window], Field(min_length=1)]


class TargetsFile(FileModel):
    """A target library file."""

    schema_version: Literal[1]
    targets: Annotated[dict[Id, Target], Field(min_length=1)]


def _items(value: Any) -> list[tuple[int, dict[str, Any]]]:
    return [(i, v) for i, v in enumerate(value) if isinstance(v, dict)] \
        if isinstance(value, list) else []


def _window_checks(window: dict[str, Any], where: tuple[Any, ...], add: Any) -> None:
    wall = window.get("wall")
    facts = _WALLS.get(wall, {}) if isinstance(wall, str) else {}
    if facts.get("intercostal") and "rib_gap_mm" in window and window["rib_gap_mm"] is None:
        add(where + ("rib_gap_mm",), f"an intercostal window ({wall}) must give rib_gap_mm")
    bone = window.get("bone_in_path")
    if facts.get("includes_bone") and bone is False:
        add(where + ("bone_in_path",), f"the {wall} wall includes bone; set bone_in_path: true")
    layers = _items(window.get("path"))
    for index, layer in layers:
        role, tissue = layer.get("role"), layer.get("tissue")
        needed = _V["layer_roles"].get(role) if isinstance(role, str) else None
        if needed is not None and isinstance(tissue, str) and tissue in _TISSUES \
                and tissue != needed:
            add(where + ("path", index, "role"),
                f"a {role!r} layer must be tissue {needed!r}, got {tissue!r}")
    inner = [layer.get("tissue") for _, layer in layers[:-1]]
    if bone is False and any(_TISSUES.get(t, {}).get("kind") == "bone" for t in inner
                             if isinstance(t, str)):
        add(where + ("bone_in_path",), "a bone layer lies before the target in the path; "
                                       "set bone_in_path: true")


def _target_checks(target: dict[str, Any], where: tuple[Any, ...], add: Any) -> None:
    lumen = target.get("lumen_tissue")
    if target.get("fluid_filled") is True and "lumen_tissue" in target and lumen is None:
        add(where + ("lumen_tissue",), "a fluid-filled target must name its lumen tissue")
    if isinstance(lumen, str) and lumen in _TISSUES and _TISSUES[lumen].get("kind") != "fluid":
        add(where + ("lumen_tissue",), f"lumen tissue {lumen!r} is not a fluid")
    for index, surface in _items(target.get("surfaces")):
        if surface.get("curvature") == "flat" and isinstance(surface.get("radius_mm"), dict):
            add(where + ("surfaces", index, "radius_mm"), "a flat surface has no radius; use null")
    raw_probes = target.get("probe_types")
    probes: list[Any] = raw_probes if isinstance(raw_probes, list) else []
    for index, probe in enumerate(probes):
        if isinstance(probe, str) and probe in probes[:index]:
            add(where + ("probe_types", index), f"probe type {probe!r} listed twice")
    seen: set[str] = set()
    for index, window in _items(target.get("windows")):
        window_id = window.get("id")
        if isinstance(window_id, str) and window_id in seen:
            add(where + ("windows", index, "id"), f"duplicate window id {window_id!r}")
        if isinstance(window_id, str):
            seen.add(window_id)
        _window_checks(window, where + ("windows", index), add)


def cross_checks(data: Any, add: Any) -> None:
    """The checks that need more than one field or another file; ``add(key_path, message)``."""
    if not isinstance(data, dict):
        return
    check_provenance(data, add)
    targets = data.get("targets")
    for target_id, target in (targets.items() if isinstance(targets, dict) else ()):
        if isinstance(target, dict):
            _target_checks(target, ("targets", target_id), add)
