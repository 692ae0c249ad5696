"""Vessel targets: expected blood-flow velocities and Doppler geometry (``vessels.yaml``).

Every velocity and angle carries its source and status; :func:`load_vessels` lists every
problem of the file at once.
"""

from __future__ import annotations

from functools import lru_cache
from typing import Any

from planner.datafiles import load_package_yaml
from planner.engine.doppler_model import ExpectedRange, SourcedValue, Threshold, VesselSummary
from planner.errors import DataError
from planner.provenance import Sourced, sourced_from_mapping
from planner.records import record

POLICIES = ("corrected", "zero", "indices")
_RANGES = {"normal_low_cm_s": (0, 500), "normal_high_cm_s": (0, 500), "low_flow_below_cm_s": (0, 500),
           "reverse_velocity_cm_s": (0, 500), "diameter_mm": (0.5, 40), "preferred_angle_deg": (0, 60),
           "median_psv_by_week": None}
_REQUIRED = {"name", "flow", "quantity", "waveform", "thresholds", "angle_policy",
             "unsteered_angle_deg", "bone_near_gate"} | set(_RANGES) - {"low_flow_below_cm_s",
                                                                       "median_psv_by_week"}


def _item(rec: Sourced) -> SourcedValue:
    return SourcedValue(rec.value, rec.source, rec.status)


@record(slots=False)
class Vessel:
    """Expected flow and Doppler geometry of one vessel target (velocities in cm/s)."""

    id: str
    name: str
    flow: str
    quantity: str
    waveform: str
    normal_low_cm_s: Sourced
    normal_high_cm_s: Sourced
    thresholds: tuple[tuple[str, Sourced], ...]
    low_flow_below_cm_s: Sourced | None
    reverse_velocity_cm_s: Sourced
    diameter_mm: Sourced
    angle_policy: str
    preferred_angle_deg: Sourced
    unsteered_angle_deg: dict[str, Sourced]
    bone_near_gate: bool
    notes: str = ""
    median_psv_by_week: Sourced | None = None

    def unsteered_for(self, window: Any) -> Sourced:
        """Beam-to-flow angle without steering through a window (by window id, then wall). [deg]"""
        angles = self.unsteered_angle_deg
        return angles.get(window.id) or angles.get(window.wall) or angles["default"]

    def checks(self) -> list[tuple[str, Sourced]]:
        """Velocities the plan must show unaliased: the normal upper limit, then thresholds."""
        return [("normal upper limit", self.normal_high_cm_s)] + list(self.thresholds)

    @property
    def design_velocity_cm_s(self) -> float:
        """Highest velocity to measure without aliasing. [cm/s]"""
        return max(float(s.value) for _, s in self.checks())

    def summary(self) -> VesselSummary:
        """Typed description: expected range and thresholds, each with source and status."""
        return VesselSummary(
            self.id, self.name, self.flow, self.quantity, self.waveform, self.notes,
            self.angle_policy, ExpectedRange(_item(self.normal_low_cm_s), _item(self.normal_high_cm_s)),
            tuple(Threshold(lab, rec.value, rec.source, rec.status) for lab, rec in self.thresholds),
            None if self.low_flow_below_cm_s is None else _item(self.low_flow_below_cm_s),
            _item(self.reverse_velocity_cm_s), _item(self.diameter_mm))

    def records(self) -> list[Sourced]:
        """Every sourced value of the vessel."""
        out = [self.normal_low_cm_s, self.normal_high_cm_s, self.reverse_velocity_cm_s,
               self.diameter_mm, self.preferred_angle_deg, *self.unsteered_angle_deg.values(),
               *(s for _, s in self.thresholds)]
        return out + [s for s in (self.low_flow_below_cm_s, self.median_psv_by_week) if s]


def _record(where: str, raw: Any, limits: tuple[float, float] | None,
            problems: list[str]) -> Any:
    try:
        rec = sourced_from_mapping(raw, where)
    except ValueError as exc:
        problems.append(str(exc))
        return None
    ok = isinstance(rec.value, list) if limits is None else (
        isinstance(rec.value, (int, float)) and limits[0] <= rec.value <= limits[1])
    if not ok:
        problems.append(f"{where}: value must be "
                        + ("a list" if limits is None else f"a number from {limits[0]} to {limits[1]}")
                        + f", got {rec.value!r}")
    return rec


def _parse_vessel(vid: str, raw: Any, problems: list[str]) -> Vessel | None:
    where = f"vessels.yaml: vessels.{vid}"
    keys = set(raw) if isinstance(raw, dict) else set()
    unknown, missing = keys - _REQUIRED - set(_RANGES) - {"notes"}, _REQUIRED - keys
    if not isinstance(raw, dict) or unknown or missing:
        problems.append(f"{where}: must be a mapping; unknown keys {sorted(unknown)}, "
                        f"missing keys {sorted(missing)}")
        return None
    if raw["angle_policy"] not in POLICIES or raw["flow"] not in ("artery", "vein"):
        problems.append(f"{where}: angle_policy must be one of {', '.join(POLICIES)} and flow "
                        f"artery or vein, got {raw['angle_policy']!r}, {raw['flow']!r}")
    angles = raw["unsteered_angle_deg"]
    if not isinstance(angles, dict) or "default" not in angles:
        problems.append(f"{where}.unsteered_angle_deg: must be a mapping with a default")
        angles = {}
    thresholds = []
    for i, item in enumerate(raw["thresholds"] or []):
        if not isinstance(item, dict) or set(item) != {"label", "velocity_cm_s"}:
            problems.append(f"{where}.thresholds[{i}]: needs exactly label and velocity_cm_s")
        else:
            thresholds.append((str(item["label"]), _record(f"{where}.thresholds[{i}]",
                                                           item["velocity_cm_s"], (0, 1000), problems)))
    fields: dict[str, Any] = {k: _record(f"{where}.{k}", raw[k], lim, problems) if k in raw else None
              for k, lim in _RANGES.items()}
    return Vessel(vid, str(raw["name"]), raw["flow"], str(raw["quantity"]), str(raw["waveform"]),
                  thresholds=tuple(thresholds), angle_policy=raw["angle_policy"],
                  unsteered_angle_deg={w: _record(f"{where}.unsteered_angle_deg.{w}", a, (0, 90),
                                                  problems) for w, a in angles.items()},
                  bone_near_gate=bool(raw["bone_near_gate"]), notes=str(raw.get("notes") or ""),
                  **fields)


@lru_cache(maxsize=1)
def load_vessels() -> dict[str, Vessel]:
    """Vessel data keyed by target id; ``DataError`` lists every problem of the file."""
    data = load_package_yaml("vessels.yaml")
    problems: list[str] = []
    if not isinstance(data, dict) or data.get("schema_version") != 1:
        raise DataError("vessels.yaml: schema_version must be 1", ["vessels.yaml: schema_version"])
    vessels = {str(k): _parse_vessel(str(k), v, problems) for k, v in data["vessels"].items()}
    if problems:
        raise DataError(f"vessels.yaml has {len(problems)} problem(s)", problems)
    return {k: v for k, v in vessels.items() if v is not None}
