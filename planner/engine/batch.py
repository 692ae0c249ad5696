"""The engine's vectorised core: reach, detail, probe choice and window ranking for N patients.

:func:`planner.engine.make_plan` assesses each window as one row of these arrays, and the
sweep (``scanplan sweep``, protocol studies, benchmarks) as N rows, so both take the same
stack building (:func:`planner.body.stack.build_stack_batch`), the same reach solution, the
same probe choice and the same feasibility test. Every number comes from
:mod:`planner.physics`; this module only arranges the inputs.
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np

from planner.body.stack import StackBatch
from planner.engine.reach import (ABERRATING_ROLES, RECEIVE_EDGE_MHZ, budget_offset_db,  # noqa: F401
                                  grouped_terms, joint_terms, loss_terms, probe_ceilings_mhz,
                                  pulse_groups, wall_sigma_ns)
from planner.library.probes import Probe
from planner.physics import aberration, attenuation, beam, broadband, sound_speed
from planner.physics.constants import (HARMONIC_CONVERSION_LOSS_DB, SIGNAL_BUDGET_DIFFUSE_DB,
                                       SPECULAR_ALLOWANCE_DB)
from planner.records import record

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


def choice_pool(probes, fit: np.ndarray, usual_types) -> np.ndarray:
    """(N, P) the probes :func:`choose_probe_index` chooses from: the available probes of the
    target's usual types, or every available probe when none of them is available."""
    available = fit != 3
    usual = available & np.array([p.type in usual_types for p in probes], dtype=bool)[None, :]
    return np.where(usual.any(axis=1, keepdims=True), usual, available)


@record(slots=False)
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

    def rows(self, rows: slice) -> "ProbeArrays":
        """The same arrays for a slice of the rows."""
        return ProbeArrays(self.probes, self.fit[rows], self.floor_mhz[rows], self.low_mhz[rows],
                           self.high_mhz[rows], self.f_number[rows], self.feasible[rows],
                           self.best[rows])


@lru_cache(maxsize=64)
def probe_constants(probes: tuple[Probe, ...]) -> dict[str, np.ndarray]:
    """Per-probe constants as (1, P) arrays, computed once per inventory."""
    row = lambda name: np.array([getattr(p, name) for p in probes], dtype=float)[None, :]  # noqa: E731
    return {name: row(name) for name in ("receive_f_number", "aperture_mm", "pulse_cycles", "low_mhz",
                                          "high_mhz", "bandwidth_fraction")}


def probe_arrays(probes, window, depth_cm, detail_mm: float, ceiling_mhz,
                 preferred, detail_fraction: float = 1.0, curved_first=None) -> ProbeArrays:
    """Detail floor, band, feasibility and the chosen probe for N depths and reach ceilings.

    ``window`` is the window (every row) or an (N, P) array of fit codes (rows from several
    windows); ``ceiling_mhz`` is (N,) or each probe's own ceiling (N, P).

    The detail floor is the lowest transmit centre frequency at which both the axial
    resolution (pulse cycles x wavelength / 2, half the spatial pulse length) and the lateral
    resolution at focus (wavelength x F-number, the receive F-number or depth over aperture
    when deeper, at the depth of the structures that need the detail: ``detail_fraction``
    times the target's depth) are as fine as ``detail_mm`` (:func:`planner.physics.beam.min_frequency_axial_mhz`,
    ``min_frequency_lateral_mhz``; Kremkau2015, from memory). A probe gives the detail when
    its band, cut at the reach ceiling, still reaches the floor.

    Decision: the detail is judged at the transmit centre, not at the downshifted centre of
    the echo. Axial resolution is half the spatial pulse length, and the pulse length is set
    by the bandwidth in Hz: a Gaussian spectrum through a loss linear in frequency keeps its
    width and only moves down (Kuc1984: ``f0 - 4 alpha sigma^2 z`` with sigma unchanged), so
    the received pulse is as short as the transmitted one and judging it as "the same number
    of cycles at the lower centre" would lengthen it twice over. The lateral beam is formed on
    transmit at the transmit frequency; only the receive half of the two-way beam widens with
    the downshift. The plan reports that as a caution (``band.echo_downshift``), without
    turning a band a sonographer would use into an infeasible one.
    """
    probes = tuple(probes)
    depth = np.atleast_1d(np.asarray(depth_cm, dtype=float))[:, None]                 # (N, 1)
    ceiling = np.asarray(ceiling_mhz, dtype=float)
    ceiling = ceiling if ceiling.ndim == 2 else np.atleast_1d(ceiling)[:, None]     # (N, P) or (N, 1)
    fit = np.broadcast_to(window if isinstance(window, np.ndarray) else fit_codes(probes, window),
                          (depth.shape[0], len(probes)))
    const = probe_constants(probes)
    p_low, p_high = const["low_mhz"], const["high_mhz"]
    f_num = np.maximum(const["receive_f_number"],
                       depth * detail_fraction * 10.0 / const["aperture_mm"])
    floor = np.maximum(beam.min_frequency_axial_mhz(detail_mm, const["pulse_cycles"]),
                       beam.min_frequency_lateral_mhz(detail_mm, f_num))
    high = np.broadcast_to(np.minimum(p_high, ceiling), fit.shape)
    low = np.maximum(p_low, floor)
    feasible = (fit <= 1) & (high >= p_low) & (low <= high)
    best = choose_probe_index(probes, fit, feasible, high, list(preferred), curved_first,
                              floor_mhz=np.broadcast_to(floor, fit.shape))
    return ProbeArrays(probes, fit, floor, low, high, f_num, feasible, best)


def choose_probe_index(probes, fit: np.ndarray, feasible: np.ndarray, high_mhz: np.ndarray,
                       preferred: list[str], curved_first=None, floor_mhz=None) -> np.ndarray:
    """The probe a sonographer would pick, for N patients at once: index per row, -1 for none.

    Only the target's usual probe types are considered when the inventory has any of them
    (a linear array is not a cardiac probe, however well it reaches; :func:`choice_pool`);
    among them a usable footprint comes first, then a band that gives the needed detail, then
    one that reaches at all, then (when none gives the detail) the one that comes closest to
    it: the lowest ratio of its detail floor to its reachable top, ``floor_mhz`` (N, P), to
    0.01, so that the choice does not flip between probes as the target deepens past what
    any probe resolves; then the usual order (or, when nothing reaches, the most
    penetrating probe: the lowest band), then a clean footprint fit, then the highest
    reachable frequency. The keys are compared in that order (lexicographic minimum per row).
    Where ``curved_first`` (N,) is True (a larger patient: the wall at the window is at least
    the target's ``curved_array_from_wall_mm``), a curved array comes first in the usual order.
    """
    types = [p.type for p in probes]
    pool = choice_pool(probes, fit, preferred)
    p_low = probe_constants(tuple(probes))["low_mhz"]
    pref = np.array([preferred.index(t) if t in preferred else len(preferred) for t in types],
                    dtype=float)[None, :]
    if curved_first is not None:
        curved = np.array([t == "curvilinear" for t in types], dtype=bool)[None, :]
        pref = np.where(np.asarray(curved_first, dtype=bool)[:, None] & curved, -1.0, pref)
    reaches = high_mhz >= p_low
    if floor_mhz is None:
        short = np.zeros(feasible.shape)
    else:
        with np.errstate(divide="ignore", invalid="ignore"):
            ratio = np.asarray(floor_mhz, dtype=float) / np.asarray(high_mhz, dtype=float)
        short = np.where(feasible, 1.0, np.round(np.nan_to_num(ratio, nan=np.inf), 2))
    keys = [~(fit <= 1), ~feasible, ~reaches, short, np.where(reaches, pref, p_low), fit != 0,
            -high_mhz]
    alive = pool.copy()
    for key in keys:
        k = np.where(alive, key.astype(float), np.inf)
        alive &= k == k.min(axis=1, keepdims=True)
    return np.where(pool.any(axis=1), np.argmax(alive, axis=1), -1)


@record(slots=False)
class WindowBatch:
    """One window assessed for N patients (arrays of shape (N,) unless stated)."""

    stacks: StackBatch
    budget_db: float
    interface_loss_db: float
    ceiling_mhz: np.ndarray
    """(N,) the window's reach ceiling: the highest of the reach ceilings of the probes the
    engine chooses from (:func:`choice_pool`), so it depends on the window, the patient and the
    inventory but not on which probe is chosen. [MHz]"""
    harmonic_ceiling_mhz: np.ndarray
    """(N,) harmonic transmit ceiling with the chosen probe's pulse. [MHz]"""
    depth_cm: np.ndarray
    displayed_depth_cm: np.ndarray
    fat_error_mm: np.ndarray
    probes: ProbeArrays
    arrays: dict
    sigma_ns: np.ndarray
    """(N,) rms arrival-time fluctuation of the body wall. [ns]"""
    bandwidth_fraction: np.ndarray
    """(N,) fractional bandwidth of the chosen probe's pulse (the first probe's when none)."""
    low_edge_mhz: np.ndarray
    """(N,) lower limit of the received spectrum (:data:`planner.engine.reach.RECEIVE_EDGE_MHZ`). [MHz]"""
    probe_ceiling_mhz: np.ndarray
    """(N,) reach ceiling with the chosen probe's own pulse (its band's top is cut there). [MHz]"""
    probe_budget_db: np.ndarray | None = None
    """(N,) the chosen probe's round-trip budget (its QA-derived budget when it has one,
    :func:`planner.engine.reach.budget_offset_db`); None: ``budget_db`` for every row. [dB]"""

    def _pulse(self, frequency_mhz):
        k, y = grouped_terms(self.arrays, self.sigma_ns)
        f0 = np.broadcast_to(np.asarray(frequency_mhz, dtype=float), k.shape[:-1])
        return broadband.pulse_loss_db(k, y, f0, self.bandwidth_fraction, self.low_edge_mhz)

    def loss_db(self, frequency_mhz) -> np.ndarray:
        """Round-trip broadband loss to the target at a centre frequency per patient: layers,
        wall aberration and interfaces (the chosen probe's pulse). [dB]"""
        return self._pulse(frequency_mhz)[0] + self.interface_loss_db

    def received_centre_mhz(self, frequency_mhz) -> np.ndarray:
        """Mean frequency of the echo received from the target (the downshifted centre). [MHz]"""
        return self._pulse(frequency_mhz)[1]

    def aberration_db(self, frequency_mhz) -> np.ndarray:
        """Round-trip focusing loss of the wall at a frequency (narrowband value). [dB]"""
        return np.asarray(aberration.aberration_loss_db(frequency_mhz, self.sigma_ns))

    @property
    def feasible(self) -> np.ndarray:
        """True where the chosen probe gives the needed detail within reach."""
        best = self.probes.best
        rows = np.arange(best.size)
        return (best >= 0) & self.probes.feasible[rows, np.maximum(best, 0)]


def assess_batch(stacks: StackBatch, target, inventory) -> WindowBatch:
    """Reach ceilings, depth errors and probe choice of one window for N patients."""
    return assess_batches([stacks], target, inventory)[0]


def assess_batches(stacks_list: list[StackBatch], target, inventory) -> list[WindowBatch]:
    """Assess several windows (each for N patients) in one pass.

    The windows' rows are stacked (their loss terms grouped by exponent over the union of the windows' exponents),
    so the reach of every window and patient is solved at once and the probe choice made
    once; the result is split back into one :class:`WindowBatch` per window. Each probe gets
    the broadband ceiling of its own pulse (:func:`probe_ceilings_mhz`, once per distinct pulse).
    """
    arrays = [s.arrays() for s in stacks_list]
    sizes = [a["thickness_cm"].shape[0] for a in arrays]
    budget = signal_budget_db(target)
    ifaces = [float(attenuation.interface_round_trip_loss_db(a["impedance_mrayl"])) for a in arrays]
    iface_rows = np.concatenate([np.full(n, i) for n, i in zip(sizes, ifaces)])
    sigma = np.concatenate([wall_sigma_ns(st) for st in stacks_list])
    probes = tuple(inventory.probes)
    fit = np.concatenate([np.broadcast_to(fit_codes(probes, w), (n, len(probes)))
                          for w, n in zip((_window_of(s, target) for s in stacks_list), sizes)], axis=0)
    pool = choice_pool(probes, fit, target.probe_types)
    terms_f = joint_terms(arrays, sigma)
    terms_h = joint_terms(arrays, sigma, harmonic=True)
    budget_f = budget - iface_rows
    budget_h = budget_f - HARMONIC_CONVERSION_LOSS_DB.value
    ceil_p, ceil_hp = probe_ceilings_mhz(terms_f, terms_h, budget_f, budget_h, probes)
    depth = np.concatenate([np.cumsum(a["thickness_cm"], axis=1)[:, -1] if a["thickness_cm"].shape[1]
                            else np.zeros(n) for a, n in zip(arrays, sizes)])     # as LayerStack
    wall_mm = np.concatenate([10.0 * np.asarray(s.wall_cm, dtype=float) for s in stacks_list])
    pa = probe_arrays(probes, fit, depth, target.detail_mm, ceil_p, target.probe_types,
                      target.detail_depth_fraction, target.curved_first(wall_mm))
    rows_all = np.arange(depth.size)
    col = np.maximum(pa.best, 0)
    window_ceiling = np.where(pool.any(axis=1), np.where(pool, ceil_p, -np.inf).max(axis=1),
                              ceil_p.min(axis=1))
    offsets = np.array([budget_offset_db(p) for p in probes])
    row_budget = budget + np.where(pa.best >= 0, offsets[col], 0.0)
    const = probe_constants(probes)
    bandwidth, edge = const["bandwidth_fraction"][0, col], np.full(col.size, RECEIVE_EDGE_MHZ)
    ceil_h = ceil_hp[rows_all, col]
    out, start = [], 0
    for stacks, arr, iface, n in zip(stacks_list, arrays, ifaces, sizes):
        rows = slice(start, start + n)
        start += n
        t = arr["thickness_cm"]
        shown = sound_speed.displayed_depth_cm(t, arr["speed_m_per_s"])
        fat_cols = np.array([lay.tissue.id == "fat" for lay in stacks.layers], dtype=bool)
        fat_err = (sound_speed.depth_error_mm(t[:, fat_cols], arr["speed_m_per_s"][fat_cols])
                   if fat_cols.any() else np.zeros(n))
        out.append(WindowBatch(stacks, budget, iface, window_ceiling[rows], ceil_h[rows], depth[rows],
                               np.asarray(shown, dtype=float),
                               np.broadcast_to(np.asarray(fat_err, dtype=float), (n,)), pa.rows(rows),
                               arr, sigma[rows], bandwidth[rows], edge[rows],
                               ceil_p[rows_all, col][rows], row_budget[rows]))
    return out


def _window_of(stacks: StackBatch, target):
    for window in target.windows:
        if window.id == stacks.window_id:
            return window
    raise ValueError(f"window {stacks.window_id!r} is not a window of {target.id}")
