"""The engine's vectorised core: reach, detail, probe choice and window ranking for N patients.

:func:`planner.engine.make_plan` assesses each window as one row of these arrays, and the
sweep (``scanplan sweep``, protocol studies, benchmarks) as N rows, so both take the same
stack building (:func:`planner.body.stack.build_stack_batch`), the same reach solution, the
same probe choice and the same feasibility test. Every number comes from
:mod:`planner.physics`; this module only arranges the inputs.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from planner.body.stack import StackBatch
from planner.library.probes import Probe
from planner.physics import attenuation, beam, sound_speed
from planner.physics.constants import (HARMONIC_CONVERSION_LOSS_DB, SIGNAL_BUDGET_DIFFUSE_DB,
                                       SPECULAR_ALLOWANCE_DB)

STRONG_TISSUES = frozenset({"cortical_bone", "cartilage", "tendon", "lung", "air"})
"""Target tissues whose decisive echo is a strong specular interface (bone surfaces, fibrillar
tendon, the lung or diaphragm surface); vessel and cyst walls are specular but weak."""

FIT_CODES: tuple[str, ...] = ("fits", "aligned", "blocked", "n/a")
"""Footprint fit of a probe at a window, as codes 0-3 in the arrays."""


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


def ceilings_mhz(arrays: dict, budget_db: float, interface_db) -> tuple[np.ndarray, np.ndarray]:
    """Fundamental and harmonic (transmit) reach ceilings for N stacks, solved together. [MHz]

    The harmonic loss per cm is alpha(f0) + alpha(2 f0), i.e. ``(1 + 2**y) / 2`` times the
    fundamental's round-trip coefficient (Szabo2004 ch. 4 power law), plus the stated
    conversion loss.
    """
    y = arrays["attenuation_exponent"]
    k = 2.0 * arrays["attenuation_db_per_cm_mhz"] * arrays["thickness_cm"]          # (N, n)
    iface = np.asarray(interface_db, dtype=float)
    budget = np.stack([np.broadcast_to(budget_db - iface, k.shape[:-1]),
                       np.broadcast_to(budget_db - iface - HARMONIC_CONVERSION_LOSS_DB.value,
                                       k.shape[:-1])])
    both = attenuation.solve_power_sum_mhz(np.stack([k, k * 0.5 * (1.0 + 2.0 ** y)]), y, budget)
    return both[0], both[1]


@dataclass(frozen=True)
class ProbeArrays:
    """How every probe of an inventory performs through one window, for N patients.

    Arrays of shape (N, P) unless stated; ``fit`` is (P,) codes into :data:`FIT_CODES`.
    """

    probes: tuple[Probe, ...]
    fit: np.ndarray
    floor_mhz: np.ndarray
    low_mhz: np.ndarray
    high_mhz: np.ndarray
    f_number: np.ndarray
    feasible: np.ndarray
    best: np.ndarray
    """(N,) index of the chosen probe, -1 when no probe can be used."""


def probe_arrays(probes, window, depth_cm, detail_mm: float, ceiling_mhz,
                 preferred) -> ProbeArrays:
    """Detail floor, band, feasibility and the chosen probe for N depths and reach ceilings.

    The detail floor is the lowest frequency at which both the axial resolution (pulse cycles
    x wavelength / 2) and the lateral resolution at focus (wavelength x F-number, the receive
    F-number or depth over aperture when deeper) are as fine as ``detail_mm``
    (:func:`planner.physics.beam.min_frequency_axial_mhz`, ``min_frequency_lateral_mhz``).
    """
    probes = tuple(probes)
    depth = np.atleast_1d(np.asarray(depth_cm, dtype=float))[:, None]                 # (N, 1)
    ceiling = np.atleast_1d(np.asarray(ceiling_mhz, dtype=float))[:, None]
    fit = np.array([FIT_CODES.index(probe_fit(p, window)) for p in probes], dtype=int)
    rf = np.array([p.receive_f_number for p in probes])[None, :]
    aperture = np.array([p.aperture_mm for p in probes])[None, :]
    cycles = np.array([p.pulse_cycles for p in probes])[None, :]
    p_low = np.array([p.low_mhz for p in probes])[None, :]
    p_high = np.array([p.high_mhz for p in probes])[None, :]
    f_num = np.maximum(rf, depth * 10.0 / aperture)
    floor = np.maximum(beam.min_frequency_axial_mhz(detail_mm, cycles),
                       beam.min_frequency_lateral_mhz(detail_mm, f_num))
    high = np.minimum(p_high, ceiling)
    low = np.maximum(p_low, floor)
    usable = (fit <= 1)[None, :]
    feasible = usable & (high >= p_low) & (low <= high)
    best = choose_probe_index(probes, fit, feasible, high, list(preferred))
    return ProbeArrays(probes, fit, floor, low, high, f_num, feasible, best)


def choose_probe_index(probes, fit: np.ndarray, feasible: np.ndarray, high_mhz: np.ndarray,
                       preferred: list[str]) -> np.ndarray:
    """The probe a sonographer would pick, for N patients at once: index per row, -1 for none.

    Only the target's usual probe types are considered when the inventory has any of them
    (a linear array is not a cardiac probe, however well it reaches); among them a usable
    footprint comes first, then a band that gives the needed detail, then one that reaches at
    all, then the usual order (or, when nothing reaches, the most penetrating probe: the
    lowest band), then a clean footprint fit, then the highest reachable frequency. The keys
    are compared in that order (lexicographic minimum per row).
    """
    n = high_mhz.shape[0]
    types = [p.type for p in probes]
    available = fit != 3
    usual = available & np.array([t in preferred for t in types], dtype=bool)
    pool = usual if usual.any() else available
    if not pool.any():
        return np.full(n, -1, dtype=int)
    p_low = np.array([p.low_mhz for p in probes])[None, :]
    pref = np.array([preferred.index(t) if t in preferred else len(preferred) for t in types],
                    dtype=float)[None, :]
    reaches = high_mhz >= p_low
    keys = [np.broadcast_to(~(fit <= 1), high_mhz.shape), ~feasible, ~reaches,
            np.where(reaches, pref, p_low), np.broadcast_to(fit != 0, high_mhz.shape), -high_mhz]
    alive = np.broadcast_to(pool[None, :], high_mhz.shape).copy()
    for key in keys:
        k = np.where(alive, key.astype(float), np.inf)
        alive &= k == k.min(axis=1, keepdims=True)
    return np.argmax(alive, axis=1)


@dataclass(frozen=True)
class WindowBatch:
    """One window assessed for N patients (arrays of shape (N,) unless stated)."""

    stacks: StackBatch
    budget_db: float
    interface_loss_db: float
    ceiling_mhz: np.ndarray
    harmonic_ceiling_mhz: np.ndarray
    depth_cm: np.ndarray
    displayed_depth_cm: np.ndarray
    fat_error_mm: np.ndarray
    probes: ProbeArrays
    arrays: dict

    def loss_db(self, frequency_mhz) -> np.ndarray:
        """Round-trip loss to the target at a frequency per patient, interfaces included. [dB]"""
        arr = self.arrays
        return attenuation.stack_round_trip_loss_db(
            arr["thickness_cm"], frequency_mhz, arr["attenuation_db_per_cm_mhz"],
            arr["attenuation_exponent"]) + self.interface_loss_db

    @property
    def feasible(self) -> np.ndarray:
        """True where the chosen probe gives the needed detail within reach."""
        best = self.probes.best
        rows = np.arange(best.size)
        return (best >= 0) & self.probes.feasible[rows, np.maximum(best, 0)]


def assess_batch(stacks: StackBatch, target, inventory) -> WindowBatch:
    """Reach ceilings, depth errors and probe choice of one window for N patients."""
    arr = stacks.arrays()
    budget = signal_budget_db(target)
    iface = float(attenuation.interface_round_trip_loss_db(arr["impedance_mrayl"]))
    ceil_f, ceil_h = ceilings_mhz(arr, budget, iface)
    thick = arr["thickness_cm"]
    depth = np.cumsum(thick, axis=1)[:, -1]        # in layer order, as LayerStack.depth_cm
    shown = sound_speed.displayed_depth_cm(thick, arr["speed_m_per_s"])
    fat_cols = np.array([lay.tissue.id == "fat" for lay in stacks.layers], dtype=bool)
    if fat_cols.any():
        fat_err = sound_speed.depth_error_mm(thick[:, fat_cols], arr["speed_m_per_s"][fat_cols])
    else:
        fat_err = np.zeros(depth.shape)
    probes = probe_arrays(inventory.probes, _window_of(stacks, target), depth, target.detail_mm, ceil_f,
                          target.probe_types)
    return WindowBatch(stacks, budget, iface, ceil_f, ceil_h, depth, shown,
                       np.broadcast_to(np.asarray(fat_err, dtype=float), depth.shape), probes, arr)


def _window_of(stacks: StackBatch, target):
    for window in target.windows:
        if window.id == stacks.window_id:
            return window
    raise ValueError(f"window {stacks.window_id!r} is not a window of {target.id}")
