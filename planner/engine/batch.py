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
    endo_window = bool(window.endocavitary)
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


def fit_codes(probes, window) -> np.ndarray:
    """Footprint fit of each probe at a window, as codes into :data:`FIT_CODES`, shape (P,)."""
    return np.array([FIT_CODES.index(probe_fit(p, window)) for p in probes], dtype=int)


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

    Arrays of shape (N, P); ``fit`` holds codes into :data:`FIT_CODES`.
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

    ``window`` is the window (every row) or an (N, P) array of fit codes (rows from several
    windows).

    The detail floor is the lowest frequency at which both the axial resolution (pulse cycles
    x wavelength / 2) and the lateral resolution at focus (wavelength x F-number, the receive
    F-number or depth over aperture when deeper) are as fine as ``detail_mm``
    (:func:`planner.physics.beam.min_frequency_axial_mhz`, ``min_frequency_lateral_mhz``).
    """
    probes = tuple(probes)
    depth = np.atleast_1d(np.asarray(depth_cm, dtype=float))[:, None]                 # (N, 1)
    ceiling = np.atleast_1d(np.asarray(ceiling_mhz, dtype=float))[:, None]
    fit = np.broadcast_to(window if isinstance(window, np.ndarray) else fit_codes(probes, window),
                          (depth.shape[0], len(probes)))
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
    usable = fit <= 1
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
    types = [p.type for p in probes]
    available = fit != 3                                                                 # (N, P)
    usual = available & np.array([t in preferred for t in types], dtype=bool)[None, :]
    pool = np.where(usual.any(axis=1, keepdims=True), usual, available)
    p_low = np.array([p.low_mhz for p in probes])[None, :]
    pref = np.array([preferred.index(t) if t in preferred else len(preferred) for t in types],
                    dtype=float)[None, :]
    reaches = high_mhz >= p_low
    keys = [~(fit <= 1), ~feasible, ~reaches, np.where(reaches, pref, p_low), fit != 0, -high_mhz]
    alive = pool.copy()
    for key in keys:
        k = np.where(alive, key.astype(float), np.inf)
        alive &= k == k.min(axis=1, keepdims=True)
    return np.where(pool.any(axis=1), np.argmax(alive, axis=1), -1)


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
    return assess_batches([stacks], target, inventory)[0]


def _padded(arrays: list[dict], key: str, fill: float, sizes: list[int], width: int) -> np.ndarray:
    """Per-row layer values of several windows, padded to the longest stack."""
    out = np.full((sum(sizes), width), fill)
    start = 0
    for a, n in zip(arrays, sizes):
        v = a[key]
        out[start:start + n, :v.shape[-1]] = v
        start += n
    return out


def assess_batches(stacks_list: list[StackBatch], target, inventory) -> list[WindowBatch]:
    """Assess several windows (each for N patients) in one pass.

    The windows' rows are stacked (layers padded with zero thickness, which adds no loss),
    so the reach of every window and patient is solved at once and the probe choice made
    once; the result is split back into one :class:`WindowBatch` per window.
    """
    arrays = [s.arrays() for s in stacks_list]
    sizes = [a["thickness_cm"].shape[0] for a in arrays]
    budget = signal_budget_db(target)
    ifaces = [float(attenuation.interface_round_trip_loss_db(a["impedance_mrayl"])) for a in arrays]
    width = max(a["thickness_cm"].shape[1] for a in arrays)
    thick = _padded(arrays, "thickness_cm", 0.0, sizes, width)
    joint = {"thickness_cm": thick,
             "attenuation_db_per_cm_mhz": _padded(arrays, "attenuation_db_per_cm_mhz", 0.0, sizes, width),
             "attenuation_exponent": _padded(arrays, "attenuation_exponent", 1.0, sizes, width)}
    iface_rows = np.concatenate([np.full(n, i) for n, i in zip(sizes, ifaces)])
    ceil_f, ceil_h = ceilings_mhz(joint, budget, iface_rows)
    depth = np.cumsum(thick, axis=1)[:, -1]        # in layer order, as LayerStack.depth_cm
    windows = [_window_of(s, target) for s in stacks_list]
    fit = np.concatenate([np.broadcast_to(fit_codes(inventory.probes, w), (n, len(inventory.probes)))
                          for w, n in zip(windows, sizes)], axis=0)
    probes = probe_arrays(inventory.probes, fit, depth, target.detail_mm, ceil_f, target.probe_types)
    out, start = [], 0
    for stacks, arr, iface, n in zip(stacks_list, arrays, ifaces, sizes):
        rows = slice(start, start + n)
        start += n
        t = arr["thickness_cm"]
        shown = sound_speed.displayed_depth_cm(t, arr["speed_m_per_s"])
        fat_cols = np.array([lay.tissue.id == "fat" for lay in stacks.layers], dtype=bool)
        fat_err = (sound_speed.depth_error_mm(t[:, fat_cols], arr["speed_m_per_s"][fat_cols])
                   if fat_cols.any() else np.zeros(n))
        pa = ProbeArrays(probes.probes, probes.fit[rows], probes.floor_mhz[rows], probes.low_mhz[rows],
                         probes.high_mhz[rows], probes.f_number[rows], probes.feasible[rows],
                         probes.best[rows])
        out.append(WindowBatch(stacks, budget, iface, ceil_f[rows], ceil_h[rows], depth[rows],
                               np.asarray(shown, dtype=float),
                               np.broadcast_to(np.asarray(fat_err, dtype=float), (n,)), pa, arr))
    return out


def _window_of(stacks: StackBatch, target):
    for window in target.windows:
        if window.id == stacks.window_id:
            return window
    raise ValueError(f"window {stacks.window_id!r} is not a window of {target.id}")
