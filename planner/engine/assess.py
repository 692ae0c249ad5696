"""Assess one window: reach, detail, probe, band, harmonic reach, tilt, depth error.

Every number comes from :mod:`planner.physics`; this module only arranges the inputs.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from planner.body.stack import LayerStack
from planner.library.probes import Probe, ProbeInventory
from planner.library.targets import Target, Window
from planner.physics import attenuation, beam, sound_speed
from planner.physics.constants import (HARMONIC_CONVERSION_LOSS_DB, SIGNAL_BUDGET_DIFFUSE_DB,
                                       SPECULAR_ALLOWANCE_DB)

STRONG_TISSUES = frozenset({"cortical_bone", "cartilage", "tendon", "lung", "air"})
"""Target tissues whose decisive echo is a strong specular interface (bone surfaces, fibrillar
tendon, the lung or diaphragm surface); vessel and cyst walls are specular but weak."""


@dataclass(frozen=True)
class ProbeOption:
    """How one probe performs through one window."""

    probe: Probe
    fit: str                 # "fits", "aligned" (along the rib space), "blocked", "n/a"
    floor_mhz: float         # detail floor with this probe's aperture
    low_mhz: float
    high_mhz: float
    f_number: float
    feasible: bool

    @property
    def shown_band(self) -> tuple[float, float]:
        """Band to show: the recommended band, or the reachable part when detail is not reached. [MHz]"""
        if self.feasible:
            return self.low_mhz, self.high_mhz
        return self.probe.low_mhz, max(self.probe.low_mhz, self.high_mhz)


@dataclass(frozen=True)
class WindowAssessment:
    """Everything the rules need about one window."""

    window: Window
    stack: LayerStack
    budget_db: float
    interface_loss_db: float
    ceiling_mhz: float
    harmonic_ceiling_mhz: float
    displayed_depth_cm: float
    depth_error_mm: float
    fat_error_mm: float
    options: tuple[ProbeOption, ...]
    best: ProbeOption | None
    arrays: dict = field(default_factory=dict, repr=False, compare=False)
    memo: dict = field(default_factory=dict, repr=False, compare=False)

    @property
    def feasible(self) -> bool:
        return self.best is not None and self.best.feasible

    def loss_db(self, frequency_mhz: float) -> float:
        """Round-trip loss to the target at a frequency, interfaces included. [dB]"""
        memo = self.memo
        if frequency_mhz not in memo:
            arr = self.arrays
            memo[frequency_mhz] = float(attenuation.stack_round_trip_loss_db(
                arr["thickness_cm"], frequency_mhz, arr["attenuation_db_per_cm_mhz"],
                arr["attenuation_exponent"])) + self.interface_loss_db
        return memo[frequency_mhz]


def signal_budget_db(target) -> float:
    """Usable round-trip budget: diffuse default plus the allowance for strong specular echoes. [dB]"""
    strong = target.reflector == "specular" and target.target_tissue in STRONG_TISSUES
    extra = SPECULAR_ALLOWANCE_DB.value if strong else 0.0
    return SIGNAL_BUDGET_DIFFUSE_DB.value + extra


def probe_fit(probe: Probe, window) -> str:
    """Whether a probe's footprint suits the window (rib gap, endocavitary route)."""
    endo_window = window.wall == "endocavitary"
    if (probe.type == "endocavitary") != endo_window:
        return "n/a"
    gap = window.rib_gap_mm
    if gap is None:
        return "fits"
    if probe.footprint_length_mm <= gap:
        return "fits"
    if probe.footprint_width_mm <= gap:
        return "aligned"
    return "blocked"


def _option(probe: Probe, window, depth_cm: float, detail_mm: float, ceiling_mhz: float) -> ProbeOption:
    fit = probe_fit(probe, window)
    f_num = max(probe.receive_f_number, depth_cm * 10.0 / probe.aperture_mm)
    floor = float(max(beam.min_frequency_axial_mhz(detail_mm, probe.pulse_cycles),
                      beam.min_frequency_lateral_mhz(detail_mm, f_num)))
    high = min(probe.high_mhz, ceiling_mhz)
    low = max(probe.low_mhz, floor)
    feasible = fit in ("fits", "aligned") and high >= probe.low_mhz and low <= high
    return ProbeOption(probe, fit, floor, low, high, f_num, feasible)


def _rank_key(option: ProbeOption, preferred: list[str]):
    pref = preferred.index(option.probe.type) if option.probe.type in preferred else len(preferred)
    usable = option.fit in ("fits", "aligned")
    reaches = option.high_mhz >= option.probe.low_mhz
    # When nothing reaches, the most penetrating probe (lowest band) is the sensible choice.
    order = pref if reaches else option.probe.low_mhz
    return (not usable, not option.feasible, not reaches, order, option.fit != "fits",
            -option.high_mhz)


def choose_probe(options, preferred: list[str]) -> ProbeOption | None:
    """The probe a sonographer would pick through this window.

    Only the target's usual probe types are considered when the inventory has any of them
    (a linear array is not a cardiac probe, however well it reaches); among them a usable
    footprint comes first, then a band that gives the needed detail, then the usual order,
    then a clean footprint fit, then the highest reachable frequency.
    """
    usable = [o for o in options if o.fit != "n/a"]
    usual = [o for o in usable if o.probe.type in preferred]
    pool = usual or usable
    return min(pool, key=lambda o: _rank_key(o, preferred)) if pool else None


def assess_window(stack: LayerStack, window, target, inventory: ProbeInventory) -> WindowAssessment:
    """Compute reach, detail floor, probe options and depth errors for one window."""
    arr = stack.arrays()
    budget = signal_budget_db(target)
    iface = float(attenuation.interface_round_trip_loss_db(arr["impedance_mrayl"]))
    ceil_f, ceil_h = _ceilings(arr, budget, iface)
    depth = stack.depth_cm
    shown = float(sound_speed.displayed_depth_cm(arr["thickness_cm"], arr["speed_m_per_s"]))
    fat = [i for i, lay in enumerate(stack.layers) if lay.tissue.id == "fat"]
    fat_err = float(sound_speed.depth_error_mm(arr["thickness_cm"][fat], arr["speed_m_per_s"][fat])) \
        if fat else 0.0
    options = tuple(_option(p, window, depth, target.detail_mm, ceil_f) for p in inventory.probes)
    best = choose_probe(options, list(target.probe_types))
    return WindowAssessment(window, stack, budget, iface, ceil_f, ceil_h, shown,
                            10.0 * (shown - depth), fat_err, options, best, arr)


def _ceilings(arr: dict, budget: float, iface: float) -> tuple[float, float]:
    """Fundamental and harmonic (transmit) reach ceilings, solved together. [MHz]

    The harmonic loss per cm is alpha(f0) + alpha(2 f0), i.e. ``(1 + 2**y) / 2`` times the
    fundamental's round-trip coefficient, plus the stated conversion loss.
    """
    y = arr["attenuation_exponent"]
    k = 2.0 * arr["attenuation_db_per_cm_mhz"] * arr["thickness_cm"]
    both = attenuation.solve_power_sum_mhz(
        np.stack([k, k * 0.5 * (1.0 + 2.0 ** y)]), y,
        np.array([budget - iface, budget - iface - HARMONIC_CONVERSION_LOSS_DB.value]))
    return float(both[0]), float(both[1])


def finest_detail_mm(option: ProbeOption, frequency_mhz: float) -> float:
    """Finest detail resolvable at a frequency with a probe option: max(axial, lateral). [mm]"""
    if frequency_mhz <= 0 or not math.isfinite(frequency_mhz):
        return math.inf
    return float(max(beam.axial_resolution_mm(frequency_mhz, option.probe.pulse_cycles),
                     beam.lateral_resolution_mm(frequency_mhz, option.f_number)))
