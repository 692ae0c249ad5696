"""The target library: what can be scanned, and through which acoustic windows.

The library is package data (``planner/data/targets.yaml``, ``schema_version: 1``).
Each target names its region, dominant reflector type, exam type (which selects the
safety tables), the tissue of the target, a typical skin-to-target depth for an
average adult, the finest detail the exam must resolve, the usual probe types, its
surfaces of interest and its candidate acoustic windows. Each window names a body-wall
model (added by :mod:`planner.body` from the patient's habitus) and the organ path
between the wall and the deepest point of the target.

Every number carries a source key and a status; the :class:`~planner.provenance.Sourced`
records travel with the dataclasses in their ``provenance`` mapping (field name ->
record) so that a plan can cite them. Loading a library file validates the whole file
(:mod:`planner.files.targets`) and reports every problem at once as a
:class:`~planner.errors.DataError`; the shipped library is validated by the test suite and
read without checks at run time.
"""

from __future__ import annotations

import difflib
from dataclasses import field
from functools import lru_cache
from pathlib import Path
from typing import Iterator

from planner.datafiles import package_data
from planner.errors import DataError, InputError
from planner.library.names import in_sentence
from planner.library.probes import PROBE_TYPES
from planner.library.vocab import (BONE_WALLS, CURVATURES, ENDOCAVITARY_WALLS, EXAM_TYPES,
                                   INTERCOSTAL_WALLS, LAYER_ROLES, ORIENTATIONS, REFLECTORS,
                                   REGIONS, RISK_LEVELS, SURFACE_REFLECTORS, WALL_MODEL_IDS)
from planner.provenance import Sourced
from planner.records import record

__all__ = [
    "BONE_WALLS", "CURVATURES", "ENDOCAVITARY_WALLS", "EXAM_TYPES", "INTERCOSTAL_WALLS",
    "LAYER_ROLES", "ORIENTATIONS", "PROBE_TYPES", "REFLECTORS", "REGIONS", "RISK_LEVELS",
    "SCHEMA_VERSION", "SURFACE_REFLECTORS", "WALL_MODEL_IDS", "PathLayer", "Surface", "Target",
    "TargetLibrary", "Window", "build_library", "in_sentence", "load_library", "load_library_file",
    "parse_library",
]

SCHEMA_VERSION: int = 1
"""The ``schema_version`` a target library file must declare."""

@record
class PathLayer:
    """One organ layer between the body wall and the deepest point of the target.

    ``tissue`` is a tissue id of ``planner/data/tissues.yaml``; ``thickness_cm`` [cm];
    ``role`` is ``None`` or a key of :data:`LAYER_ROLES`.
    """

    tissue: str
    thickness_cm: float
    role: str | None = None
    provenance: dict[str, Sourced] = field(default_factory=dict, hash=False, repr=False)
    label: str = ""
    """The structure this layer stands for when its tissue is a stand-in ("myometrium")."""


@record
class Surface:
    """A surface of interest of a target.

    ``tilt_from_skin_deg`` is the angle between the surface and the skin plane [deg]
    (0 = parallel to the skin, 90 = perpendicular); ``radius_mm`` [mm] is the radius of a
    curved surface (edge shadowing), ``None`` when not given.
    """

    name: str
    reflector: str
    orientation: str
    tilt_from_skin_deg: float
    curvature: str
    radius_mm: float | None
    provenance: dict[str, Sourced] = field(default_factory=dict, hash=False, repr=False)


@record
class Window:
    """A candidate acoustic window of one target.

    ``wall_factor`` [-] multiplies the modelled wall thickness; ``rib_gap_mm`` [mm] is the
    width of the rib space an intercostal footprint must fit (``None`` elsewhere).
    """

    id: str
    name: str
    wall: str
    position: str
    breathing: str
    wall_factor: float
    path: tuple[PathLayer, ...]
    rib_gap_mm: float | None
    gas_risk: str
    midline_rectus: bool
    bone_in_path: bool
    notes: str = ""
    provenance: dict[str, Sourced] = field(default_factory=dict, hash=False, repr=False)
    side: str | None = None
    """The side this window serves for a paired target (None: either side)."""
    practice_order: int | None = None
    """Usual order of practice (1 = the first route tried; None: no usual order)."""
    adjunct: bool = False
    """A window practice uses when the standard ones fail, or adds after them; it ranks after
    every feasible standard window, however low its loss."""

    @property
    def endocavitary(self) -> bool:
        """True for an endocavitary route (its wall model says so): only endocavitary
        probes fit."""
        return self.wall in ENDOCAVITARY_WALLS

    @property
    def path_cm(self) -> float:
        """Total thickness of the organ path (wall excluded). [cm]"""
        return float(sum(layer.thickness_cm for layer in self.path))

    @property
    def intercostal(self) -> bool:
        """True when the footprint must fit between two ribs."""
        return self.rib_gap_mm is not None


@record
class Target:
    """A structure to be examined, with its candidate windows (usual window first).

    ``typical_depth_cm`` [cm]: skin to the deepest part the exam must show in an average
    adult (BMI about 25) through the usual transabdominal or surface route;
    ``detail_mm`` [mm]: the smallest structure the exam must resolve.
    """

    id: str
    name: str
    region: str
    reflector: str
    exam_type: str
    target_tissue: str
    typical_depth_cm: float
    detail_mm: float
    probe_types: tuple[str, ...]
    surfaces: tuple[Surface, ...]
    fluid_filled: bool
    wall_tissue: str | None
    lumen_tissue: str | None
    calcification_risk: str
    harmonic_contraindicated: bool
    pitfalls: tuple[str, ...]
    windows: tuple[Window, ...]
    provenance: dict[str, Sourced] = field(default_factory=dict, hash=False, repr=False)
    bone_near_focus: bool = False
    paired: bool = False
    """A left and a right structure: plans take a side (``PlanRequest.side``)."""
    curved_array_from_wall_mm: float | None = None
    """Body wall at the window from which practice takes a curved array before a linear one
    ("in larger patients"); None: the usual order of ``probe_types`` always. [mm]"""
    detail_depth_cm: float | None = None
    """Depth of the structures that need ``detail_mm`` in an average patient, when shallower
    than ``typical_depth_cm`` (None: the whole depth). [cm]"""

    def curved_first(self, wall_mm):
        """True where a body wall of ``wall_mm`` (a number or an array) is a larger patient's,
        from which practice takes a curved array before a linear one (False for every wall
        when the target has no ``curved_array_from_wall_mm``). [mm]"""
        import numpy as np
        wall = np.asarray(wall_mm, dtype=float)
        if self.curved_array_from_wall_mm is None:
            return np.zeros(wall.shape, dtype=bool)
        return wall >= self.curved_array_from_wall_mm

    @property
    def detail_depth_fraction(self) -> float:
        """Share of the target's depth at which the detail is judged (1: at the deepest part);
        a patient's detail depth is their target depth times this share (derived). [-]"""
        if self.detail_depth_cm is None:
            return 1.0
        return min(1.0, self.detail_depth_cm / self.typical_depth_cm)

    @property
    def sided_windows(self) -> bool:
        """True when some window serves one side only (so the side changes the plan)."""
        return any(window.side is not None for window in self.windows)

    @property
    def name_in_sentence(self) -> str:
        """The name as it reads inside a sentence: first letter lower case, except for a
        proper name ("Achilles tendon")."""
        return in_sentence(self.name)

    def window_ids(self) -> tuple[str, ...]:
        """Ids of the windows, usual first."""
        return tuple(window.id for window in self.windows)

    def window(self, window_id: str) -> Window:
        """Return the window ``window_id``; ``InputError`` lists the valid windows."""
        for window in self.windows:
            if window.id == window_id:
                return window
        raise InputError(
            f"unknown window {window_id!r} for target {self.id!r}"
            f"{_suggestion(window_id, self.window_ids())}; "
            f"valid windows: {', '.join(self.window_ids())}", title="Unknown window")

    def sources(self) -> tuple[str, ...]:
        """Every source key behind the target's numbers, sorted."""
        records = list(self.provenance.values())
        for surface in self.surfaces:
            records.extend(surface.provenance.values())
        for window in self.windows:
            records.extend(window.provenance.values())
            for layer in window.path:
                records.extend(layer.provenance.values())
        return tuple(sorted({record.source for record in records}))


@record(slots=False)
class TargetLibrary:
    """All targets of a library file, in file order."""

    targets: dict[str, Target]

    def ids(self) -> tuple[str, ...]:
        """Target ids in file order."""
        return tuple(self.targets)

    def get(self, target_id: str) -> Target:
        """Return the target ``target_id``; ``InputError`` lists every valid target."""
        try:
            return self.targets[target_id]
        except KeyError:
            raise InputError(
                f"unknown target {target_id!r}{_suggestion(target_id, self.ids())}; "
                f"valid targets: {', '.join(self.ids())}", title="Unknown target") from None

    def in_region(self, region: str) -> tuple[Target, ...]:
        """Targets of one region (see :data:`REGIONS`); ``InputError`` for an unknown region."""
        if region not in REGIONS:
            raise InputError(f"unknown region {region!r}; valid regions: {', '.join(REGIONS)}",
                             title="Unknown region")
        return tuple(t for t in self.targets.values() if t.region == region)

    def __contains__(self, target_id: object) -> bool:
        return target_id in self.targets

    def __iter__(self) -> Iterator[Target]:
        return iter(self.targets.values())

    def __len__(self) -> int:
        return len(self.targets)


def _suggestion(value: str, valid: tuple[str, ...]) -> str:
    close = difflib.get_close_matches(str(value), valid, n=1)
    return f" (did you mean {close[0]!r}?)" if close else ""


def _sourced(raw: dict) -> Sourced:
    return Sourced(float(raw["value"]), raw["source"], raw["status"], raw.get("note", ""))


def _layer(raw: dict) -> PathLayer:
    thickness = _sourced(raw["thickness_cm"])
    return PathLayer(raw["tissue"], thickness.value, raw.get("role"), {"thickness_cm": thickness},
                     (raw.get("label") or "").strip())


def _optional(raw: dict, key: str, provenance: dict[str, Sourced]) -> float | None:
    """The value of an optional sourced number (recorded in ``provenance``), or None."""
    if raw.get(key) is None:
        return None
    provenance[key] = _sourced(raw[key])
    return float(provenance[key].value)


def _surface(raw: dict) -> Surface:
    tilt = _sourced(raw["tilt_from_skin_deg"])
    provenance = {"tilt_from_skin_deg": tilt}
    radius = _optional(raw, "radius_mm", provenance)
    return Surface(raw["name"].strip(), raw["reflector"], raw["orientation"], tilt.value,
                   raw["curvature"], radius, provenance)


def _window(raw: dict) -> Window:
    factor = _sourced(raw["wall_factor"])
    provenance = {"wall_factor": factor}
    gap = _optional(raw, "rib_gap_mm", provenance)
    return Window(raw["id"], raw["name"].strip(), raw["wall"], raw["position"].strip(),
                  raw["breathing"].strip(), factor.value,
                  tuple(_layer(layer) for layer in raw["path"]), gap, raw["gas_risk"],
                  raw["midline_rectus"], raw["bone_in_path"], (raw.get("notes") or "").strip(),
                  provenance, raw.get("side"), raw.get("practice_order"),
                  bool(raw.get("adjunct", False)))


def _target(target_id: str, raw: dict) -> Target:
    depth, detail = _sourced(raw["typical_depth_cm"]), _sourced(raw["detail_mm"])
    provenance = {"typical_depth_cm": depth, "detail_mm": detail}
    detail_depth = None
    if raw.get("detail_depth_cm") is not None:
        provenance["detail_depth_cm"] = _sourced(raw["detail_depth_cm"])
        detail_depth = provenance["detail_depth_cm"].value
    curved_from = None
    if raw.get("curved_array_from_wall_mm") is not None:
        provenance["curved_array_from_wall_mm"] = _sourced(raw["curved_array_from_wall_mm"])
        curved_from = provenance["curved_array_from_wall_mm"].value
    return Target(target_id, raw["name"].strip(), raw["region"], raw["reflector"],
                  raw["exam_type"], raw["target_tissue"], depth.value, detail.value,
                  tuple(raw["probe_types"]), tuple(_surface(s) for s in raw["surfaces"]),
                  raw["fluid_filled"], raw["wall_tissue"], raw["lumen_tissue"],
                  raw["calcification_risk"], raw["harmonic_contraindicated"],
                  tuple(p.strip() for p in raw["pitfalls"]),
                  tuple(_window(w) for w in raw["windows"]),
                  provenance, raw.get("bone_near_focus", False), bool(raw.get("paired", False)),
                  curved_from, detail_depth)


def build_library(data: dict) -> TargetLibrary:
    """Build the library from target-library data already validated (no checks; fast)."""
    return TargetLibrary({target_id: _target(target_id, raw)
                          for target_id, raw in data["targets"].items()})


def parse_library(text: str, filename: str = "targets.yaml") -> TargetLibrary:
    """Parse and validate the text of a target library file.

    The text is read by :func:`planner.yamlio.parse_user_yaml`, validated by
    :class:`planner.files.targets.TargetsFile` and :func:`planner.files.targets.cross_checks`.

    Parameters
    ----------
    text : str
        YAML text with ``schema_version`` and ``targets``.
    filename : str
        Name used in problem messages.

    Raises
    ------
    DataError
        With every problem found, each formatted ``file:line:column: key.path: message``.
    """
    from planner.files.base import validate_data
    from planner.files.targets import TargetsFile, cross_checks
    from planner.yamlio import ProblemCollector, parse_user_yaml

    try:
        loaded = parse_user_yaml(text, label=filename, kind="target library")
    except DataError as exc:
        raise DataError(f"{filename}: {len(exc.problems)} problem(s) in the target library",
                        exc.problems, title="Invalid target library") from None
    problems = ProblemCollector(filename, loaded)
    model = validate_data(TargetsFile, loaded.data, problems.add)
    cross_checks(loaded.data, problems.add)
    if problems or model is None:
        ordered = sorted(problems.problems, key=_position)
        raise DataError(f"{filename}: {len(ordered)} problem(s) in the target library",
                        ordered, title="Invalid target library")
    return build_library(loaded.data)


def _position(problem: str) -> tuple[int, ...]:
    head = problem.split(": ", 1)[0].split(":")
    numbers = tuple(int(part) for part in head[-2:] if part.isdigit())
    return numbers if len(numbers) == 2 else (0, 0)


def load_library_file(path: str | Path) -> TargetLibrary:
    """Load and validate a target library from a file path (see :func:`parse_library`)."""
    file = Path(path)
    try:
        text = file.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        reason = getattr(exc, "strerror", None) or str(exc)
        raise DataError(f"{file}: cannot read the target library ({reason})",
                        title="Invalid target library") from None
    return parse_library(text, str(file))


@lru_cache(maxsize=1)
def load_library() -> TargetLibrary:
    """Return the shipped target library (cached).

    Package data: validated against :class:`planner.files.targets.TargetsFile` by the test
    suite, built here without validation (fast start-up).
    """
    return build_library(package_data("targets.yaml"))
