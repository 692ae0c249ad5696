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
from planner.body.stack import FAT_ROLES
from planner.physics import aberration, attenuation, beam, broadband, sound_speed
from planner.physics.constants import (HARMONIC_CONVERSION_LOSS_DB, SIGNAL_BUDGET_DIFFUSE_DB,
                                       SPECULAR_ALLOWANCE_DB)

ABERRATING_ROLES = FAT_ROLES | {"muscle"}
"""Wall layers whose fat lobules, septa and muscle make the phase screen (HinkelmanAbdominal)."""

STRONG_TISSUES = frozenset({"cortical_bone", "cartilage", "tendon", "lung", "air"})
"""Target tissues whose decisive echo is a strong specular interface (bone surfaces, fibrillar
tendon, the lung or diaphragm surface); vessel and cyst walls are specular but weak."""

DETAIL_TOP_SAMPLES: int = 9
"""Transmit centres tried between the band's ends when the band top's echo is too low. [-]"""

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


def loss_terms(arrays: dict, sigma_ns, harmonic: bool = False) -> tuple[np.ndarray, np.ndarray]:
    """Round-trip loss terms ``(k, y)`` of N stacks, wall aberration as one more term. (N, n+1)

    Layers: ``k = 2 alpha0 d`` with the layer's exponent (harmonic: times ``(1 + 2**y) / 2``,
    down at f0 and back at 2 f0). Aberration: ``c f^2`` (:mod:`planner.physics.aberration`;
    the harmonic gets its reduced share).
    """
    y = np.broadcast_to(arrays["attenuation_exponent"], arrays["thickness_cm"].shape)
    k = 2.0 * arrays["attenuation_db_per_cm_mhz"] * arrays["thickness_cm"]
    ab = aberration.round_trip_coefficient_db_per_mhz2(sigma_ns)
    if harmonic:
        k = k * 0.5 * (1.0 + 2.0 ** y)
        ab = ab * aberration.HARMONIC_ABERRATION_FACTOR.value * 2.5
    ab = np.broadcast_to(ab, k.shape[:-1])[..., None]
    return np.concatenate([k, ab], axis=-1), np.concatenate([y, np.full(ab.shape, 2.0)], axis=-1)


def pulse_groups(probes) -> list[tuple[float, float]]:
    """The distinct pulses of an inventory: (bandwidth fraction, lowest frequency) pairs."""
    return sorted({(p.bandwidth_fraction, p.low_mhz) for p in probes})


def ceilings_mhz(arrays: dict, budget_db: float, interface_db, sigma_ns=0.0,
                 pulses=((0.0, 0.0),)) -> tuple[np.ndarray, np.ndarray]:
    """Fundamental and harmonic (transmit) reach ceilings for N stacks and each pulse. [MHz]

    Returns two arrays of shape (N, G), one column per ``(bandwidth, low edge)`` pulse: the
    highest centre frequency whose broadband round-trip loss (layers and wall aberration,
    :func:`planner.physics.broadband.broadband_loss_db`) plus the interface losses stays within
    the budget; the harmonic also pays the stated conversion loss.
    """
    iface = np.asarray(interface_db, dtype=float)
    kf, yf = loss_terms(arrays, sigma_ns)
    kh, yh = loss_terms(arrays, sigma_ns, harmonic=True)
    n = kf.shape[0]
    budget = np.stack([np.broadcast_to(budget_db - iface, (n,)),
                       np.broadcast_to(budget_db - iface - HARMONIC_CONVERSION_LOSS_DB.value, (n,))])
    k, y = np.stack([kf, kh])[:, None], np.stack([yf, yh])[:, None]              # (2, 1, N, n)
    bandwidth = np.array([bw for bw, _ in pulses])[None, :, None]                 # (1, G, 1)
    edge = np.array([e for _, e in pulses])[None, :, None] * np.array([1.0, 0.5])[:, None, None]
    both = broadband.broadband_ceiling_mhz(k, y, budget[:, None, :], bandwidth, edge)  # (2, G, N)
    return np.moveaxis(both[0], 0, -1), np.moveaxis(both[1], 0, -1)


def probe_ceilings_mhz(arrays: dict, budget_db: float, interface_db, sigma_ns, probes,
                       usual_types) -> tuple[np.ndarray, np.ndarray]:
    """Fundamental and harmonic ceilings of every probe, shape (N, P). [MHz]

    The broadband solution is computed once per distinct pulse of the probes the target is
    examined with (:func:`choose_probe_index` never picks another type while one of them is
    available); the other probes get the single-frequency ceiling (used only for a row where
    none of the usual probes is available). When the inventory has none of those types, every
    probe gets its broadband ceiling.
    """
    probes = tuple(probes)
    usual = [p for p in probes if p.type in usual_types] or list(probes)
    pulses = pulse_groups(usual)
    cf, ch = ceilings_mhz(arrays, budget_db, interface_db, sigma_ns,
                          pulses + ([(0.0, 0.0)] if len(usual) < len(probes) else []))
    index = [pulses.index((p.bandwidth_fraction, p.low_mhz)) if p in usual else len(pulses)
             for p in probes]
    return cf[:, index], ch[:, index]


def wall_sigma_ns(stacks: StackBatch) -> np.ndarray:
    """rms arrival-time fluctuation of each patient's body wall (fat and muscle). (N,) [ns]"""
    cols = np.array([lay.role in ABERRATING_ROLES for lay in stacks.layers], dtype=bool)
    wall_mm = 10.0 * np.where(cols[None, :], stacks.thickness_cm, 0.0).sum(axis=1)
    return np.asarray(aberration.arrival_time_rms_ns(wall_mm), dtype=float)


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
    received_mhz: np.ndarray | None = None
    """(N, P) centre frequency of the echo from the target at the band top (downshifted). [MHz]"""


def probe_arrays(probes, window, depth_cm, detail_mm: float, ceiling_mhz,
                 preferred, received=None) -> ProbeArrays:
    """Detail floor, band, feasibility and the chosen probe for N depths and reach ceilings.

    ``window`` is the window (every row) or an (N, P) array of fit codes (rows from several
    windows).

    The detail floor is the lowest frequency at which both the axial resolution (pulse cycles
    x wavelength / 2) and the lateral resolution at focus (wavelength x F-number, the receive
    F-number or depth over aperture when deeper) are as fine as ``detail_mm``
    (:func:`planner.physics.beam.min_frequency_axial_mhz`, ``min_frequency_lateral_mhz``).
    ``received(rows, cols, f0)``, when given, is the centre frequency of the echo that returns
    from the target for transmit centres ``f0`` (shape (m, J)) of the (row, probe) pairs
    ``rows, cols`` (the broadband downshift). The detail is only given where that received
    centre is not below the floor. As the transmit centre rises, the received centre first
    rises and then falls (deep paths eat the top of the spectrum), so where the band top's echo
    is too low the best of :data:`DETAIL_TOP_SAMPLES` transmit centres between the band's ends
    decides. The band's top stays the reach ceiling.
    """
    probes = tuple(probes)
    depth = np.atleast_1d(np.asarray(depth_cm, dtype=float))[:, None]                 # (N, 1)
    ceiling = np.asarray(ceiling_mhz, dtype=float)
    ceiling = ceiling if ceiling.ndim == 2 else np.atleast_1d(ceiling)[:, None]     # (N, P) or (N, 1)
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
    high = np.broadcast_to(high, feasible.shape).copy()
    received_mhz = high.copy()
    if received is not None:
        rows, cols = np.indices(feasible.shape).reshape(2, -1)
        top = np.maximum(high, np.broadcast_to(p_low, high.shape)).ravel()
        received_mhz = received(rows, cols, top[:, None])[:, 0].reshape(high.shape)
        short = feasible & (received_mhz < floor - 1e-9)
        if short.any():
            r, c = np.nonzero(short)
            f0 = np.geomspace(np.broadcast_to(low, high.shape)[r, c], high[r, c], DETAIL_TOP_SAMPLES,
                              axis=-1)
            rx = received(r, c, f0)
            received_mhz[r, c] = rx.max(axis=1)      # the best echo centre the band can give
        feasible &= received_mhz >= floor - 1e-9
    best = choose_probe_index(probes, fit, feasible, high, list(preferred))
    return ProbeArrays(probes, fit, floor, low, high, f_num, feasible, best, received_mhz)


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
    sigma_ns: np.ndarray
    """(N,) rms arrival-time fluctuation of the body wall. [ns]"""
    bandwidth_fraction: np.ndarray
    """(N,) fractional bandwidth of the chosen probe's pulse (the first probe's when none)."""
    low_edge_mhz: np.ndarray
    """(N,) lowest frequency of the chosen probe. [MHz]"""

    def loss_db(self, frequency_mhz) -> np.ndarray:
        """Round-trip broadband loss to the target at a centre frequency per patient: layers,
        wall aberration and interfaces (the chosen probe's pulse). [dB]"""
        k, y = loss_terms(self.arrays, self.sigma_ns)
        return broadband.broadband_loss_db(k, y, frequency_mhz, self.bandwidth_fraction,
                                           self.low_edge_mhz)[0] + self.interface_loss_db

    def received_centre_mhz(self, frequency_mhz) -> np.ndarray:
        """Mean frequency of the echo received from the target (the downshifted centre). [MHz]"""
        k, y = loss_terms(self.arrays, self.sigma_ns)
        return broadband.broadband_loss_db(k, y, frequency_mhz, self.bandwidth_fraction,
                                           self.low_edge_mhz)[1]

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
    sigma = np.concatenate([wall_sigma_ns(st) for st in stacks_list])
    ceil_fp, ceil_hp = probe_ceilings_mhz(joint, budget, iface_rows, sigma, inventory.probes,
                                          target.probe_types)
    depth = np.cumsum(thick, axis=1)[:, -1]        # in layer order, as LayerStack.depth_cm
    windows = [_window_of(s, target) for s in stacks_list]
    fit = np.concatenate([np.broadcast_to(fit_codes(inventory.probes, w), (n, len(inventory.probes)))
                          for w, n in zip(windows, sizes)], axis=0)
    k_all, y_all = loss_terms(joint, sigma)
    bw_p = np.array([p.bandwidth_fraction for p in inventory.probes])[None, :]
    edge_p = np.array([p.low_mhz for p in inventory.probes])[None, :]

    def received(rows, cols, f0):
        return broadband.broadband_loss_db(k_all[rows][:, None, :], y_all[rows][:, None, :], f0,
                                           bw_p[0, cols][:, None], edge_p[0, cols][:, None],
                                           passes=2)[1]

    probes = probe_arrays(inventory.probes, fit, depth, target.detail_mm, ceil_fp, target.probe_types,
                          received)
    col = np.maximum(probes.best, 0)
    rows_all = np.arange(col.size)
    ceil_f, ceil_h = ceil_fp[rows_all, col], ceil_hp[rows_all, col]
    bandwidth = np.array([p.bandwidth_fraction for p in inventory.probes])[col]
    edge = np.array([p.low_mhz for p in inventory.probes])[col]
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
                         probes.best[rows], None if probes.received_mhz is None
                         else probes.received_mhz[rows])
        out.append(WindowBatch(stacks, budget, iface, ceil_f[rows], ceil_h[rows], depth[rows],
                               np.asarray(shown, dtype=float),
                               np.broadcast_to(np.asarray(fat_err, dtype=float), (n,)), pa, arr,
                               sigma[rows], bandwidth[rows], edge[rows]))
    return out


def _window_of(stacks: StackBatch, target):
    for window in target.windows:
        if window.id == stacks.window_id:
            return window
    raise ValueError(f"window {stacks.window_id!r} is not a window of {target.id}")
