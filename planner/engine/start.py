"""The frequency to start at: the highest the echo reaches with a margin, the focus still sharp
through the wall, and no higher than practice starts for the exam.

The band's top is the reach ceiling, the frequency at which the population-average patient
uses the whole signal budget. A practitioner starts below it, for three reasons the plan
states (``frequency_mhz.start_basis``):

``margin``
    Tissue attenuation varies between people by +/-30-50 % (the plan's stated assumption;
    Duck1990 ranges): the start is the ceiling of a patient whose path attenuates
    :data:`ATTENUATION_MARGIN` times the average, so it still reaches most patients.
``wall``
    Through a thick wall the phase screen blurs the focus (:mod:`planner.physics.aberration`).
    The start keeps the one-way focal gain within the Marechal criterion of a
    diffraction-limited focus (Strehl ratio >= 0.8; BornWolf1999 ch. 9): ``f <=
    sqrt(-ln 0.8) / (2 pi sigma_t)``. Only walls of :data:`~planner.engine.artefacts.ABERRATING_WALL_MM`
    or more, the range of the measurements behind sigma_t, and large-aperture probes
    (:data:`LARGE_APERTURE_TYPES`): the wall measurements were made across apertures of
    several centimetres; a linear array's short aperture over a shallow target samples only a
    part of the screen, whose slow variation it sees as a tilt, not a blur (from memory).
``practice``
    The usual highest start of the exam and probe family (:data:`USUAL_START_MHZ`, sourced):
    higher frequencies reach a slim patient but practice starts at the top of its usual band and
    goes up only for near-field detail.
``probe``
    The chosen probe's top.

The start never leaves the recommended band [low, high].
"""

from __future__ import annotations

import math

import numpy as np

from planner.provenance import Sourced

ATTENUATION_MARGIN = Sourced(
    1.3, "Duck1990", "derived",
    "the lower end of the +/-30-50 % inter-subject spread of soft-tissue attenuation the plan "
    "states; a patient at +30 % still reaches at the start")
"""Factor on the path's attenuation for the start frequency's reach. [-]"""

MARECHAL_STREHL = Sourced(0.8, "BornWolf1999", "verified",
                          "Marechal criterion: a focus is diffraction-limited while its Strehl ratio is >= 0.8")
"""One-way focal gain (Strehl ratio) kept at the start frequency. [-]"""

LARGE_APERTURE_TYPES: frozenset[str] = frozenset({"curvilinear", "phased"})
"""Probe families whose focus the wall criterion judges (trunk routes, apertures of several cm)."""

USUAL_START_MHZ: dict[tuple[str, str], Sourced] = {
    ("general_abdominal", "curvilinear"): Sourced(
        5.0, "Diagnostics2023Probes", "verified", "Table 2: convex probes 3.5-5 MHz for the abdominal organs"),
    ("obstetric", "curvilinear"): Sourced(
        5.0, "ISUOG2011MidTrimester", "from_memory", "transabdominal 3-5 MHz"),
    ("gynaecological", "curvilinear"): Sourced(
        5.0, "Diagnostics2023Probes", "verified", "Table 2: convex probes 3.5-5 MHz (pelvis)"),
    ("obstetric", "endocavitary"): Sourced(
        7.5, "Diagnostics2023Probes", "verified", "Table 2: endocavitary probes 5-7.5 MHz"),
    ("gynaecological", "endocavitary"): Sourced(
        7.5, "Diagnostics2023Probes", "verified", "Table 2: endocavitary probes 5-7.5 MHz"),
    ("neonatal_head", "microconvex"): Sourced(
        10.0, "CielmaNeonatalHead", "verified", "7-10 MHz through the anterior fontanelle"),
    ("small_parts", "linear_hf"): Sourced(
        15.0, "UVAThyroidTechnique", "verified", "a high-frequency (10-15 MHz) linear transducer"),
    ("small_parts", "linear"): Sourced(
        15.0, "UVAThyroidTechnique", "verified", "a high-frequency (10-15 MHz) linear transducer"),
    ("peripheral_vascular", "linear"): Sourced(
        10.0, "AIUMPeripheralVenous", "from_memory", "equipment: linear 5-10 MHz for the deep veins"),
}
"""Highest usual start frequency of an exam type with a probe family. [MHz]"""

BASIS_TEXT = {
    "margin": "the highest that still reaches with {m:g} times the average attenuation",
    "wall": "the wall's uneven sound speed would blur the focus above it",
    "practice": "the top of the usual start for this exam; go higher only for near-field detail",
    "probe": "the probe's top",
}
"""Clause that says why the start is where it is."""


def marechal_mhz(sigma_ns):
    """Highest frequency whose one-way focal gain through a phase screen of rms ``sigma_ns``
    stays at :data:`MARECHAL_STREHL`: ``sqrt(-ln S) / (2 pi sigma_t)`` (inf for no screen). [MHz]

    29 ns (a 37 mm wall at BMI 45): 2.59 MHz; 16 ns: 4.70 MHz (derived).
    """
    sigma = np.asarray(sigma_ns, dtype=float)
    with np.errstate(divide="ignore"):
        return np.where(sigma > 0, math.sqrt(-math.log(MARECHAL_STREHL.value))
                        / (2.0 * math.pi * np.maximum(sigma, 1e-12) * 1e-3), np.inf)


def margin_ceilings_mhz(k, y, budget, bandwidth, edge) -> np.ndarray:
    """Reach ceilings of N rows with :data:`ATTENUATION_MARGIN` times their loss coefficients
    (grouped terms ``k`` (N, U), ``y`` (U,): layers and wall aberration), each row's pulse. [MHz]"""
    from planner.physics import broadband, ceiling
    from planner.physics.attenuation import solve_power_sum_mhz
    k = np.atleast_2d(np.asarray(k, dtype=float)) * ATTENUATION_MARGIN.value
    budget = np.atleast_1d(np.asarray(budget, dtype=float))
    b = np.broadcast_to(np.asarray(bandwidth, dtype=float), budget.shape)
    e = np.broadcast_to(np.asarray(edge, dtype=float), budget.shape)
    out = np.empty(budget.shape)
    narrow = b < broadband.NARROWBAND_BELOW
    if narrow.any():
        out[narrow] = solve_power_sum_mhz(k[narrow], y, budget[narrow])
    if (~narrow).any():
        out[~narrow] = ceiling.ceiling_rows(k[~narrow], y, budget[~narrow], b[~narrow], e[~narrow])
    return out


BASES: tuple[str, ...] = ("practice", "wall", "margin", "probe")
"""Start bases in tie-break order (a practice start equal to another limit is named practice)."""


def start_rows(margin, sigma_ns, wall_mm, probe_types, probe_high, band_low, band_high,
               exam_type: str, aberrating_wall_mm: float) -> tuple[np.ndarray, list[str], dict]:
    """Start frequency and its basis for N rows (the plan: one row; the sweep: every BMI).

    ``margin`` (N,) the margin ceilings (:func:`margin_ceilings_mhz`), ``sigma_ns`` and
    ``wall_mm`` (N,) the wall's arrival-time spread and fat-plus-muscle thickness,
    ``probe_types`` the chosen probe's family per row, ``probe_high``, ``band_low`` and
    ``band_high`` (N,). Returns the starts (rounded to 0.1 MHz, inside [band_low, band_high]),
    the bases and the candidates (name -> (N,) array). [MHz]
    """
    n = np.atleast_1d(np.asarray(margin, dtype=float)).size
    types = list(probe_types)
    large = np.array([t in LARGE_APERTURE_TYPES for t in types], dtype=bool)
    thick = np.atleast_1d(np.asarray(wall_mm, dtype=float)) >= aberrating_wall_mm
    usual = np.array([USUAL_START_MHZ[(exam_type, t)].value if (exam_type, t) in USUAL_START_MHZ
                      else np.inf for t in types], dtype=float)
    candidates = {
        "practice": usual,
        "wall": np.where(large & thick, marechal_mhz(np.broadcast_to(sigma_ns, (n,))), np.inf),
        "margin": np.broadcast_to(np.asarray(margin, dtype=float), (n,)),
        "probe": np.broadcast_to(np.asarray(probe_high, dtype=float), (n,)),
    }
    stack = np.stack([candidates[k] for k in BASES])          # (4, N)
    which = np.argmin(stack, axis=0)                           # first minimum: the tie-break order
    lowest = stack[which, np.arange(n)]
    start = np.minimum(np.maximum(lowest, band_low), band_high)
    return np.round(start, 1), [BASES[i] for i in which], candidates


def start_frequency(assessment, option, exam_type: str, wall_mm: float,
                    aberrating_wall_mm: float) -> tuple[float, str, dict]:
    """``(start, basis, values)`` of the plan's chosen window and probe (a feasible band). [MHz]"""
    from planner.engine.reach import grouped_terms
    memo = assessment.memo
    if "terms" not in memo:
        memo["terms"] = grouped_terms(assessment.arrays, assessment.sigma_ns)
    k, y = memo["terms"]
    margin = margin_ceilings_mhz(k, y, [assessment.budget_db - assessment.interface_loss_db],
                                 assessment.bandwidth_fraction, assessment.low_edge_mhz)
    start, basis, candidates = start_rows(
        margin, [assessment.sigma_ns], [wall_mm], [option.probe.type], [option.probe.high_mhz],
        [option.low_mhz], [option.high_mhz], exam_type, aberrating_wall_mm)
    values = {f"start_{name}_mhz": round(float(v[0]), 2) for name, v in candidates.items()
              if math.isfinite(float(v[0]))}
    return float(start[0]), basis[0], values


def basis_text(basis: str) -> str:
    """The clause for ``basis``."""
    return BASIS_TEXT[basis].format(m=ATTENUATION_MARGIN.value)
