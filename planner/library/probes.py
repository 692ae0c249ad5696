"""Probe inventories: the default generic one, or a department's own file.

Format (YAML, ``schema_version: 1``; model :class:`planner.files.probes.InventoryFile`):
a list ``probes`` of entries with ``id``, ``label``,
``type`` (linear, linear_hf, curvilinear, microconvex, phased, endocavitary),
``band_mhz: [low, high]``, ``aperture_mm`` (active aperture in the scan plane),
``elevation_aperture_mm``, ``elevation_focus_cm``, ``footprint_mm: [length, width]``,
``receive_f_number``, ``pulse_cycles``, ``harmonic`` (true when it can receive the
second harmonic) and, optionally, ``bandwidth_fraction`` (fractional -6 dB bandwidth of the
pulse-echo spectrum; default 0.6). The default inventory's geometry is typical of each probe family
(common practice, see ``planner/data/probes.yaml``).
"""

from __future__ import annotations

import math
from functools import lru_cache
from pathlib import Path

from planner.datafiles import load_package_yaml, vocabulary
from planner.errors import InputError
from planner.physics.constants import BANDWIDTH_FRACTION_DEFAULT
from planner.records import record

PROBE_TYPES: tuple[str, ...] = vocabulary()["probe_types"]
"""Probe families (``planner/data/vocabulary.yaml``)."""

@record
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
    bandwidth_fraction: float = BANDWIDTH_FRACTION_DEFAULT.value
    """Fractional -6 dB bandwidth of the pulse-echo spectrum (default: a typical array,
    :data:`planner.physics.constants.BANDWIDTH_FRACTION_DEFAULT`, from memory). [-]"""
    budget_db: float | None = None
    """The probe's own diffuse round-trip budget, derived from its QA phantom depth of
    penetration (:mod:`planner.engine.qa_budget`); None uses the default budget. [dB]"""
    budget_origin: str = ""
    """Where ``budget_db`` came from, for the plan's assumptions (e.g. "QA on 2026-10-01")."""
    budget_sd_db: float | None = None
    """The spread (s.d.) of ``budget_db`` from the scatter of the probe's QA log
    (:func:`planner.engine.qa_budget.budget_scatter_db`); None: the stated default spreads of
    :mod:`planner.engine.spread`. [dB]"""

    @property
    def centre_mhz(self) -> float:
        """Geometric centre of the band. [MHz]"""
        return math.sqrt(self.low_mhz * self.high_mhz)


@record(slots=False)
class ProbeInventory:
    """An ordered set of probes, with where it came from."""

    probes: tuple[Probe, ...]
    origin: str
    qa_log: str | None = None
    """The inventory's QA log (``qa_log:`` in the file, resolved against the inventory's folder),
    or None."""

    def ids(self) -> list[str]:
        return [p.id for p in self.probes]

    def get(self, probe_id: str) -> Probe:
        for probe in self.probes:
            if probe.id == probe_id:
                return probe
        raise InputError(f"unknown probe {probe_id!r}; this inventory has: {', '.join(self.ids())}")


def probe_from_entry(raw: dict) -> Probe:
    """Build a :class:`Probe` from one validated inventory entry (plain data)."""
    return Probe(id=raw["id"].strip(), label=str(raw["label"]).strip(), type=raw["type"],
                 low_mhz=float(raw["band_mhz"][0]), high_mhz=float(raw["band_mhz"][1]),
                 aperture_mm=float(raw["aperture_mm"]),
                 elevation_aperture_mm=float(raw["elevation_aperture_mm"]),
                 elevation_focus_cm=float(raw["elevation_focus_cm"]),
                 footprint_length_mm=float(raw["footprint_mm"][0]),
                 footprint_width_mm=float(raw["footprint_mm"][1]),
                 receive_f_number=float(raw["receive_f_number"]),
                 pulse_cycles=float(raw["pulse_cycles"]), harmonic=raw["harmonic"],
                 bandwidth_fraction=float(raw.get("bandwidth_fraction")
                                          or BANDWIDTH_FRACTION_DEFAULT.value))


@lru_cache(maxsize=1)
def default_inventory() -> ProbeInventory:
    """The generic inventory shipped with scanplan.

    Package data: validated against :class:`planner.files.probes.InventoryFile` by the
    test suite, read here without validation (fast start-up).
    """
    data = load_package_yaml("probes.yaml")
    return ProbeInventory(tuple(probe_from_entry(raw) for raw in data["probes"]),
                          "default generic inventory")


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
    from planner.files.base import validate_data
    from planner.files.probes import InventoryFile
    from planner.yamlio import ProblemCollector, load_user_yaml

    loaded = load_user_yaml(path, kind="probe inventory")
    problems = ProblemCollector(path, loaded)
    model = validate_data(InventoryFile, loaded.data, problems.add)
    if model is not None:
        for index, probe_id in model.duplicate_ids():
            problems.add(("probes", index, "id"), f"duplicate probe id {probe_id!r}")
    problems.raise_if_any("Invalid probe inventory")
    assert model is not None
    qa_log = None
    if model.qa_log:
        qa_log = str(Path(path).parent / model.qa_log) if not Path(model.qa_log).is_absolute() \
            else model.qa_log
    return ProbeInventory(tuple(probe_from_entry(p.model_dump()) for p in model.probes),
                          str(path), qa_log)
