"""Validation of target library files (used by :mod:`planner.library.targets`).

Builds the typed targets and collects every problem with the file line of the key it
concerns: unknown or missing keys, wrong types, unknown tissue, wall, probe and source
ids, bad enum values, missing source or status, out-of-range numbers and cross-field
inconsistencies (an intercostal window without a rib gap, a fluid target without a
lumen, a bone layer inside the path without ``bone_in_path``).
"""

from __future__ import annotations

import re
from functools import lru_cache
from typing import Any

import yaml

from planner.datafiles import load_package_yaml
from planner.library import targets as t
from planner.provenance import STATUSES, Sourced
from planner.references import REFERENCES

_LOADER = getattr(yaml, "CSafeLoader", yaml.SafeLoader)
ID_RE = re.compile(r"^[a-z0-9]+(?:-[a-z0-9]+)*$")

TARGET_KEYS = ("name", "region", "reflector", "exam_type", "target_tissue", "typical_depth_cm",
               "detail_mm", "probe_types", "surfaces", "fluid_filled", "wall_tissue",
               "lumen_tissue", "calcification_risk", "harmonic_contraindicated", "pitfalls",
               "windows")
WINDOW_KEYS = ("id", "name", "wall", "position", "breathing", "wall_factor", "path", "rib_gap_mm",
               "gas_risk", "midline_rectus", "bone_in_path")
WINDOW_OPTIONAL = ("notes",)
SURFACE_KEYS = ("name", "reflector", "orientation", "tilt_from_skin_deg", "curvature", "radius_mm")
LAYER_KEYS = ("tissue", "thickness_cm")
LAYER_OPTIONAL = ("role",)
SOURCED_KEYS = ("value", "source", "status")

Path = tuple[Any, ...]


@lru_cache(maxsize=1)
def tissue_kinds() -> dict[str, str]:
    """Tissue id -> kind (fluid, soft, bone, gas) from ``planner/data/tissues.yaml``."""
    tissues = load_package_yaml("tissues.yaml")["tissues"]
    return {str(key): str(row.get("kind", "")) for key, row in tissues.items()}


def _dotted(path: Path) -> str:
    out = ""
    for part in path:
        out += f"[{part}]" if isinstance(part, int) else (f".{part}" if out else str(part))
    return out or "(top level)"


def _describe(value: Any) -> str:
    if isinstance(value, bool):
        return f"boolean {value}"
    if value is None:
        return "nothing (null)"
    if isinstance(value, (int, float)):
        return f"number {value}"
    if isinstance(value, str):
        return f"text {value!r}"
    return type(value).__name__.replace("dict", "a mapping").replace("list", "a list")


class _Marks:
    """Line and column of every key path, from the YAML node tree."""

    def __init__(self, root: yaml.Node | None) -> None:
        self.marks: dict[Path, yaml.Mark] = {}
        self.duplicates: list[Path] = []
        if root is not None:
            self._walk(root, ())

    def _walk(self, node: yaml.Node, path: Path) -> None:
        self.marks.setdefault(path, node.start_mark)
        if isinstance(node, yaml.MappingNode):
            seen: set[Any] = set()
            for key_node, value_node in node.value:
                key = key_node.value
                if key in seen:
                    self.duplicates.append(path + (key,))
                seen.add(key)
                self.marks[path + (key,)] = key_node.start_mark
                self._walk(value_node, path + (key,))
        elif isinstance(node, yaml.SequenceNode):
            for index, item in enumerate(node.value):
                self._walk(item, path + (index,))

    def where(self, path: Path) -> str:
        for end in range(len(path), -1, -1):
            mark = self.marks.get(path[:end])
            if mark is not None:
                return f"{mark.line + 1}:{mark.column + 1}"
        return "1:1"


class _Checker:
    def __init__(self, filename: str, marks: _Marks) -> None:
        self.filename = filename
        self.marks = marks
        self.problems: list[str] = []
        self.tissues = tissue_kinds()

    def add(self, path: Path, message: str) -> None:
        where = self.marks.where(path)
        self.problems.append(f"{self.filename}:{where}: {_dotted(path)}: {message}")

    # -- generic field checks -------------------------------------------------------------
    def keys(self, raw: dict, path: Path, required: tuple[str, ...],
             optional: tuple[str, ...] = ()) -> None:
        for key in raw:
            if key not in required and key not in optional:
                self.add(path + (key,), f"unknown key {key!r}; valid keys: "
                                        f"{', '.join(required + optional)}")
        for key in required:
            if key not in raw:
                self.add(path, f"missing key {key!r}")

    def mapping(self, raw: Any, path: Path) -> dict | None:
        if isinstance(raw, dict):
            return raw
        self.add(path, f"expected a mapping, got {_describe(raw)}")
        return None

    def text(self, raw: dict, key: str, path: Path, *, optional: bool = False) -> str:
        value = raw.get(key)
        if value is None and (optional or key not in raw):
            return ""
        if not isinstance(value, str) or not value.strip():
            self.add(path + (key,), f"expected non-empty text, got {_describe(value)}")
            return ""
        return value.strip()

    def choice(self, raw: dict, key: str, path: Path, valid: tuple[str, ...] | list[str],
               what: str, *, nullable: bool = False) -> str | None:
        value = raw.get(key)
        if key not in raw or (value is None and nullable):
            return None
        if not isinstance(value, str) or value not in valid:
            self.add(path + (key,), f"unknown {what} {value!r}; valid: {', '.join(valid)}")
            return None
        return value

    def flag(self, raw: dict, key: str, path: Path) -> bool:
        value = raw.get(key)
        if key in raw and not isinstance(value, bool):
            self.add(path + (key,), f"expected true or false, got {_describe(value)}")
        return bool(value) if isinstance(value, bool) else False

    def sourced(self, raw: dict, key: str, path: Path, unit: str, *, low: float,
                high: float, low_inclusive: bool = False,
                nullable: bool = False) -> Sourced | None:
        """A ``{value, source, status[, note]}`` number within (low, high]."""
        if key not in raw or (nullable and raw[key] is None):
            return None
        where = path + (key,)
        record = self.mapping(raw[key], where)
        if record is None:
            return None
        self.keys(record, where, SOURCED_KEYS, ("note",))
        value, source, status = record.get("value"), record.get("source"), record.get("status")
        ok = True
        if "value" in record:
            if isinstance(value, bool) or not isinstance(value, (int, float)):
                self.add(where + ("value",), f"expected a number [{unit}], got {_describe(value)}")
                ok = False
            elif value < low or (value == low and not low_inclusive) or value > high:
                sign = ">=" if low_inclusive else ">"
                self.add(where + ("value",),
                         f"{key} must be {sign} {low:g} and <= {high:g} {unit}, got {value:g}")
                ok = False
        if "source" in record and source not in REFERENCES:
            self.add(where + ("source",), f"unknown source key {source!r} (not in the "
                                          "bibliography planner/data/references)")
            ok = False
        if "status" in record and status not in STATUSES:
            self.add(where + ("status",),
                     f"unknown status {status!r}; valid: {', '.join(STATUSES)}")
            ok = False
        note = record.get("note", "")
        if not isinstance(note, str):
            self.add(where + ("note",), f"expected text, got {_describe(note)}")
            ok = False
        if not ok or any(k not in record for k in SOURCED_KEYS):
            return None
        return Sourced(float(value), str(source), str(status), note)

    def tissue(self, raw: dict, key: str, path: Path, *, nullable: bool = False) -> str | None:
        value = raw.get(key)
        if key not in raw or (value is None and nullable):
            return None
        if value not in self.tissues:
            self.add(path + (key,), f"unknown tissue {value!r}; valid tissues: "
                                    f"{', '.join(self.tissues)}")
            return None
        return str(value)

    def text_list(self, raw: dict, key: str, path: Path) -> tuple[str, ...]:
        value = raw.get(key)
        if key not in raw:
            return ()
        if not isinstance(value, list):
            self.add(path + (key,), f"expected a list of text, got {_describe(value)}")
            return ()
        out = []
        for index, item in enumerate(value):
            if not isinstance(item, str) or not item.strip():
                self.add(path + (key, index), f"expected non-empty text, got {_describe(item)}")
            else:
                out.append(item.strip())
        return tuple(out)

    def items(self, raw: dict, key: str, path: Path, *, non_empty: bool) -> list[tuple[Path, dict]]:
        value = raw.get(key)
        if key not in raw:
            return []
        if not isinstance(value, list) or (non_empty and not value):
            need = "a non-empty list" if non_empty else "a list"
            self.add(path + (key,), f"expected {need}, got {_describe(value)}")
            return []
        out = []
        for index, item in enumerate(value):
            where = path + (key, index)
            mapping = self.mapping(item, where)
            if mapping is not None:
                out.append((where, mapping))
        return out


def _layer(c: _Checker, raw: dict, path: Path) -> t.PathLayer | None:
    c.keys(raw, path, LAYER_KEYS, LAYER_OPTIONAL)
    tissue = c.tissue(raw, "tissue", path)
    thickness = c.sourced(raw, "thickness_cm", path, "cm", low=0.0, high=40.0)
    role = c.choice(raw, "role", path, tuple(t.LAYER_ROLES), "layer role", nullable=True)
    if role is not None and tissue is not None and tissue != t.LAYER_ROLES[role]:
        c.add(path + ("role",), f"a {role!r} layer must be tissue {t.LAYER_ROLES[role]!r}, "
                                f"got {tissue!r}")
    if tissue is None or thickness is None:
        return None
    return t.PathLayer(tissue, float(thickness.value), role, {"thickness_cm": thickness})


def _surface(c: _Checker, raw: dict, path: Path) -> t.Surface | None:
    c.keys(raw, path, SURFACE_KEYS)
    name = c.text(raw, "name", path)
    reflector = c.choice(raw, "reflector", path, t.SURFACE_REFLECTORS, "surface reflector")
    orientation = c.choice(raw, "orientation", path, t.ORIENTATIONS, "orientation")
    tilt = c.sourced(raw, "tilt_from_skin_deg", path, "deg", low=0.0, high=90.0,
                     low_inclusive=True)
    curvature = c.choice(raw, "curvature", path, t.CURVATURES, "curvature")
    radius = c.sourced(raw, "radius_mm", path, "mm", low=0.0, high=500.0, nullable=True)
    if radius is not None and curvature == "flat":
        c.add(path + ("radius_mm",), "a flat surface has no radius; use null")
    if None in (reflector, orientation, tilt, curvature) or not name:
        return None
    provenance = {"tilt_from_skin_deg": tilt}
    if radius is not None:
        provenance["radius_mm"] = radius
    return t.Surface(name, reflector, orientation, float(tilt.value), curvature,
                     None if radius is None else float(radius.value), provenance)


def _window(c: _Checker, raw: dict, path: Path) -> t.Window | None:
    c.keys(raw, path, WINDOW_KEYS, WINDOW_OPTIONAL)
    window_id = raw.get("id")
    if "id" in raw and (not isinstance(window_id, str) or not ID_RE.match(window_id)):
        c.add(path + ("id",), f"expected a kebab-case id, got {_describe(window_id)}")
    name, position = c.text(raw, "name", path), c.text(raw, "position", path)
    breathing, notes = c.text(raw, "breathing", path), c.text(raw, "notes", path, optional=True)
    wall = c.choice(raw, "wall", path, t.WALL_MODEL_IDS, "wall model")
    factor = c.sourced(raw, "wall_factor", path, "ratio", low=0.0, high=5.0)
    layers = [_layer(c, item, where) for where, item in c.items(raw, "path", path, non_empty=True)]
    gap = c.sourced(raw, "rib_gap_mm", path, "mm", low=0.0, high=100.0, nullable=True)
    gas = c.choice(raw, "gas_risk", path, t.RISK_LEVELS, "gas risk")
    rectus, bone = c.flag(raw, "midline_rectus", path), c.flag(raw, "bone_in_path", path)
    if wall in t.INTERCOSTAL_WALLS and "rib_gap_mm" in raw and raw["rib_gap_mm"] is None:
        c.add(path + ("rib_gap_mm",), f"an intercostal window ({wall}) must give rib_gap_mm")
    if wall in t.BONE_WALLS and "bone_in_path" in raw and not bone:
        c.add(path + ("bone_in_path",), f"the {wall} wall includes bone; set bone_in_path: true")
    inner = [layer for layer in layers[:-1] if layer is not None]
    if any(c.tissues.get(layer.tissue) == "bone" for layer in inner) and not bone:
        c.add(path + ("bone_in_path",), "a bone layer lies before the target in the path; "
                                        "set bone_in_path: true")
    if None in (wall, factor, gas) or None in layers or not layers or not (name and position
                                                                          and breathing):
        return None
    if not isinstance(window_id, str) or not ID_RE.match(window_id):
        return None
    provenance = {"wall_factor": factor}
    if gap is not None:
        provenance["rib_gap_mm"] = gap
    return t.Window(window_id, name, wall, position, breathing, float(factor.value),
                    tuple(layers), None if gap is None else float(gap.value), gas, rectus,
                    bone, notes, provenance)


def _target(c: _Checker, target_id: Any, raw: dict, path: Path) -> t.Target | None:
    c.keys(raw, path, TARGET_KEYS, ("bone_near_focus",))
    name = c.text(raw, "name", path)
    region = c.choice(raw, "region", path, t.REGIONS, "region")
    reflector = c.choice(raw, "reflector", path, t.REFLECTORS, "reflector")
    exam = c.choice(raw, "exam_type", path, t.EXAM_TYPES, "exam type")
    tissue = c.tissue(raw, "target_tissue", path)
    depth = c.sourced(raw, "typical_depth_cm", path, "cm", low=0.0, high=40.0)
    detail = c.sourced(raw, "detail_mm", path, "mm", low=0.0, high=100.0)
    probes = _probe_types(c, raw, path)
    surfaces = [_surface(c, item, where)
                for where, item in c.items(raw, "surfaces", path, non_empty=False)]
    fluid = c.flag(raw, "fluid_filled", path)
    wall_tissue = c.tissue(raw, "wall_tissue", path, nullable=True)
    lumen = c.tissue(raw, "lumen_tissue", path, nullable=True)
    if fluid and "lumen_tissue" in raw and raw["lumen_tissue"] is None:
        c.add(path + ("lumen_tissue",), "a fluid-filled target must name its lumen tissue")
    if lumen is not None and c.tissues.get(lumen) != "fluid":
        c.add(path + ("lumen_tissue",), f"lumen tissue {lumen!r} is not a fluid")
    calcification = c.choice(raw, "calcification_risk", path, t.RISK_LEVELS, "calcification risk")
    harmonic = c.flag(raw, "harmonic_contraindicated", path)
    pitfalls = c.text_list(raw, "pitfalls", path)
    windows = [_window(c, item, where)
               for where, item in c.items(raw, "windows", path, non_empty=True)]
    seen: set[str] = set()
    for index, window in enumerate(windows):
        if window is not None and window.id in seen:
            c.add(path + ("windows", index, "id"), f"duplicate window id {window.id!r}")
        if window is not None:
            seen.add(window.id)
    needed = (name, region, reflector, exam, tissue, depth, detail, calcification)
    if any(value is None or value == "" for value in needed) or None in surfaces \
            or None in windows or not windows or not probes:
        return None
    return t.Target(target_id, name, region, reflector, exam, tissue, float(depth.value),
                    float(detail.value), probes, tuple(surfaces), fluid, wall_tissue, lumen,
                    calcification, harmonic, pitfalls, tuple(windows),
                    {"typical_depth_cm": depth, "detail_mm": detail},
                    c.flag(raw, "bone_near_focus", path))


def _probe_types(c: _Checker, raw: dict, path: Path) -> tuple[str, ...]:
    value = raw.get("probe_types")
    if "probe_types" not in raw:
        return ()
    if not isinstance(value, list) or not value:
        c.add(path + ("probe_types",), f"expected a non-empty list, got {_describe(value)}")
        return ()
    out: list[str] = []
    for index, item in enumerate(value):
        if item not in t.PROBE_TYPES:
            c.add(path + ("probe_types", index),
                  f"unknown probe type {item!r}; valid: {', '.join(t.PROBE_TYPES)}")
        elif item in out:
            c.add(path + ("probe_types", index), f"probe type {item!r} listed twice")
        else:
            out.append(item)
    return tuple(out) if len(out) == len(value) else ()


def build_library(text: str, filename: str) -> tuple[dict[str, t.Target], list[str]]:
    """Parse ``text`` and return the targets and the list of problems (empty when valid)."""
    try:
        root = yaml.compose(text, Loader=_LOADER)
        data = yaml.load(text, Loader=_LOADER)
    except yaml.YAMLError as exc:
        mark = getattr(exc, "problem_mark", None)
        where = f"{mark.line + 1}:{mark.column + 1}" if mark is not None else "1:1"
        problem = getattr(exc, "problem", None) or str(exc)
        return {}, [f"{filename}:{where}: (top level): not valid YAML: {problem}"]
    c = _Checker(filename, _Marks(root))
    for path in c.marks.duplicates:
        c.add(path, f"duplicate key {path[-1]!r}")
    top = c.mapping(data, ())
    if top is None:
        return {}, c.problems
    c.keys(top, (), ("schema_version", "targets"))
    if "schema_version" in top and top["schema_version"] != t.SCHEMA_VERSION:
        c.add(("schema_version",), f"must be {t.SCHEMA_VERSION}, got "
                                   f"{_describe(top['schema_version'])}")
    raw_targets = top.get("targets")
    if "targets" in top and (not isinstance(raw_targets, dict) or not raw_targets):
        c.add(("targets",), f"expected a non-empty mapping of targets, got "
                            f"{_describe(raw_targets)}")
        raw_targets = {}
    targets: dict[str, t.Target] = {}
    for target_id, raw in (raw_targets or {}).items():
        path = ("targets", target_id)
        if not isinstance(target_id, str) or not ID_RE.match(target_id):
            c.add(path, f"target id must be kebab-case, got {_describe(target_id)}")
            continue
        mapping = c.mapping(raw, path)
        target = _target(c, target_id, mapping, path) if mapping is not None else None
        if target is not None:
            targets[target_id] = target
    return targets, c.problems
