"""Probe inventories: the default generic one, or a department's own file.

Format (YAML, ``schema_version: 1``): a list ``probes`` of entries with ``id``, ``label``,
``type`` (linear, linear_hf, curvilinear, microconvex, phased, endocavitary),
``band_mhz: [low, high]``, ``aperture_mm`` (active aperture in the scan plane),
``elevation_aperture_mm``, ``elevation_focus_cm``, ``footprint_mm: [length, width]``,
``receive_f_number``, ``pulse_cycles`` and ``harmonic`` (true when it can receive the
second harmonic). The default inventory's geometry is typical of each probe family
(common practice, see ``planner/data/probes.yaml``).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path

from planner.datafiles import load_package_yaml
from planner.errors import DataError, InputError

PROBE_TYPES: tuple[str, ...] = ("linear", "linear_hf", "curvilinear", "microconvex", "phased",
                                "endocavitary")
_NUMBER_FIELDS = {"aperture_mm": (1, 200), "elevation_aperture_mm": (0.5, 50),
                  "elevation_focus_cm": (0.2, 30), "receive_f_number": (0.5, 10),
                  "pulse_cycles": (0.5, 20)}
_FIELDS = {"id", "label", "type", "band_mhz", "footprint_mm", "harmonic", *_NUMBER_FIELDS}


@dataclass(frozen=True, slots=True)
class Probe:
    """One transducer of an inventory (units in the names)."""

    id: str
    label: str
    type: str
    low_mhz: float
    high_mhz: float
    aperture_mm: float
    elevation_aperture_mm: float
    elevation_focus_cm: float
    footprint_length_mm: float
    footprint_width_mm: float
    receive_f_number: float
    pulse_cycles: float
    harmonic: bool

    @property
    def centre_mhz(self) -> float:
        """Geometric centre of the band. [MHz]"""
        return math.sqrt(self.low_mhz * self.high_mhz)


@dataclass(frozen=True)
class ProbeInventory:
    """An ordered set of probes, with where it came from."""

    probes: tuple[Probe, ...]
    origin: str

    def ids(self) -> list[str]:
        return [p.id for p in self.probes]

    def get(self, probe_id: str) -> Probe:
        for probe in self.probes:
            if probe.id == probe_id:
                return probe
        raise InputError(f"unknown probe {probe_id!r}; this inventory has: {', '.join(self.ids())}")


def _is_number(value) -> bool:
    return isinstance(value, (int, float)) and not isinstance(value, bool) and math.isfinite(value)


def _pair(value, name: str, add, path) -> tuple[float, float] | None:
    if not (isinstance(value, list) and len(value) == 2 and all(_is_number(v) for v in value)):
        add(path + (name,), f"{name} must be a list of two numbers")
        return None
    low, high = float(value[0]), float(value[1])
    if not 0 < low < high:
        add(path + (name,), f"{name} must be increasing positive numbers, got {value}")
        return None
    return low, high


def parse_inventory(data, origin: str, add) -> tuple[Probe, ...]:
    """Validate inventory data, calling ``add(key_path, message)`` for every problem."""
    probes: list[Probe] = []
    if not isinstance(data, dict):
        add((), "an inventory must be a mapping with schema_version and probes")
        return ()
    if data.get("schema_version") != 1:
        add(("schema_version",), "schema_version must be 1")
    for key in set(data) - {"schema_version", "probes", "source", "department", "title"}:
        add((key,), f"unknown key {key!r}")
    items = data.get("probes")
    if not isinstance(items, list) or not items:
        add(("probes",), "probes must be a non-empty list")
        return ()
    seen: set[str] = set()
    for i, raw in enumerate(items):
        path = ("probes", i)
        if not isinstance(raw, dict):
            add(path, "each probe must be a mapping")
            continue
        for key in sorted(set(raw) - _FIELDS, key=str):
            add(path + (key,), f"unknown key {key!r}; valid keys: {', '.join(sorted(_FIELDS))}")
        missing = sorted(_FIELDS - set(raw))
        if missing:
            add(path, f"missing {', '.join(missing)}")
            continue
        ok = True
        if not isinstance(raw["id"], str) or not raw["id"]:
            add(path + ("id",), "id must be a non-empty text"); ok = False
        elif raw["id"] in seen:
            add(path + ("id",), f"duplicate probe id {raw['id']!r}"); ok = False
        if raw["type"] not in PROBE_TYPES:
            add(path + ("type",), f"type must be one of {', '.join(PROBE_TYPES)}"); ok = False
        if not isinstance(raw["harmonic"], bool):
            add(path + ("harmonic",), "harmonic must be true or false"); ok = False
        for name, (lo, hi) in _NUMBER_FIELDS.items():
            if not _is_number(raw[name]) or not lo <= raw[name] <= hi:
                add(path + (name,), f"{name} must be a number from {lo} to {hi}"); ok = False
        band = _pair(raw["band_mhz"], "band_mhz", add, path)
        foot = raw["footprint_mm"]
        if not (isinstance(foot, list) and len(foot) == 2 and all(_is_number(v) and v > 0
                                                                  for v in foot)):
            add(path + ("footprint_mm",), "footprint_mm must be two positive numbers [length, width]")
            foot = None
        if band is None or foot is None or not ok:
            continue
        seen.add(raw["id"])
        probes.append(Probe(id=raw["id"], label=str(raw["label"]), type=raw["type"],
                            low_mhz=band[0], high_mhz=band[1],
                            aperture_mm=float(raw["aperture_mm"]),
                            elevation_aperture_mm=float(raw["elevation_aperture_mm"]),
                            elevation_focus_cm=float(raw["elevation_focus_cm"]),
                            footprint_length_mm=float(raw["footprint_mm"][0]),
                            footprint_width_mm=float(raw["footprint_mm"][1]),
                            receive_f_number=float(raw["receive_f_number"]),
                            pulse_cycles=float(raw["pulse_cycles"]), harmonic=raw["harmonic"]))
    return tuple(probes)


@lru_cache(maxsize=1)
def default_inventory() -> ProbeInventory:
    """The generic inventory shipped with scanplan."""
    problems: list[str] = []
    probes = parse_inventory(load_package_yaml("probes.yaml"), "default",
                             lambda path, msg: problems.append(f"{path}: {msg}"))
    if problems:
        raise DataError("the shipped probe inventory is invalid", problems)
    return ProbeInventory(probes, "default generic inventory")


_CACHE: dict[tuple, ProbeInventory] = {}


def load_inventory(path: str | Path | None = None) -> ProbeInventory:
    """Load a department inventory file (every problem reported), or the default one.

    Parsed files are cached on (resolved path, modification time, size), so a protocol
    sheet that plans 120 views reads its inventory once; an edited file is read again.
    """
    if path is None:
        return default_inventory()
    try:
        resolved = Path(path).resolve()
        stat = resolved.stat()
        key = (str(resolved), stat.st_mtime_ns, stat.st_size)
    except (OSError, RuntimeError):   # RuntimeError: a symbolic-link loop on Python 3.11
        key = None
    if key is not None and key in _CACHE:
        return _CACHE[key]
    inventory = _read_inventory(path)
    if key is not None:
        if len(_CACHE) > 32:
            _CACHE.clear()
        _CACHE[key] = inventory
    return inventory


def _read_inventory(path: str | Path) -> ProbeInventory:
    from planner.yamlio import ProblemCollector, load_user_yaml

    loaded = load_user_yaml(path, kind="probe inventory")
    problems = ProblemCollector(path, loaded)
    probes = parse_inventory(loaded.data, str(path), problems.add)
    problems.raise_if_any("Invalid probe inventory")
    return ProbeInventory(probes, str(path))
