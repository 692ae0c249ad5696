"""The frequency to start at: the highest the echo reaches in most patients like this one, the
focus still sharp through the wall, and no higher than practice starts for the exam.

The band's top is the reach ceiling, the frequency at which the population-average patient
uses the whole signal budget. A practitioner starts below it, for three reasons the plan
states (``frequency_mhz.start_basis``):

``margin``
    The wall, the path's attenuation and the signal budget are uncertain for one patient
    (:mod:`planner.engine.spread`): the start is the frequency that 80 % of patients like this
    one still reach (the 20th centile of the sampled reach ceilings), so it reaches most of
    them. ``start_median`` is the same rule for the median patient (the band's top).
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
    "margin": "the highest that still reaches {p:.0f} % of patients like this one",
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
                    aberrating_wall_mm: float, depth_known: bool = False) -> tuple[float, str, dict, dict]:
    """``(start, basis, values, spread)`` of the plan's chosen window and probe (a feasible
    band). ``spread`` holds the :class:`~planner.engine.model.FrequencyBand` fields of the
    reach across patients: ``start_median``, ``start_probability``, ``top_probability``,
    ``reach_probability`` and ``drivers`` (:mod:`planner.engine.spread`). [MHz]"""
    from planner.engine import spread
    memo = assessment.memo
    key = ("draws", option.probe.id, depth_known)
    if key not in memo:
        memo[key] = spread.plan_draws(spread.assessment_inputs(assessment, option.probe, depth_known))
    full, known = memo[key]
    args = ([assessment.sigma_ns], [wall_mm], [option.probe.type], [option.probe.high_mhz],
            [option.low_mhz], [option.high_mhz], exam_type, aberrating_wall_mm)
    start, basis, candidates = start_rows(spread.robust_reach_mhz(full)[None], *args)
    median, _, _ = start_rows([assessment.probe_ceiling_mhz], *args)
    values = {f"start_{name}_mhz": round(float(v[0]), 2) for name, v in candidates.items()
              if math.isfinite(float(v[0]))}
    return float(start[0]), basis[0], values, spread_fields(full, known, option, float(start[0]),
                                                           float(median[0]))


def spread_fields(full, known: dict, option, start: float, median: float) -> dict:
    """The band's fields about the reach across patients (see :func:`start_frequency`)."""
    from planner.engine import spread
    from planner.engine.model import ReachPoint, SpreadDriver
    lo, hi = option.probe.low_mhz, option.probe.high_mhz
    grid = np.round(np.linspace(lo, hi, GRID_POINTS), 2)
    p = spread.probability_reaching(full, grid)
    at = (np.asarray(full)[None, :] >= np.array([start, option.high_mhz])[:, None]).mean(axis=1)

    def capped(r: tuple[float, float]) -> tuple[float, float]:
        return (round(min(max(r[0], lo), hi), 1), round(min(max(r[1], lo), hi), 1))

    now = capped(spread.spread_range_mhz(full))

    def within(r: tuple[float, float]) -> tuple[float, float]:   # knowing more never widens it
        return (max(r[0], now[0]), min(r[1], now[1]))

    drivers = sorted((SpreadDriver(name, round(spread.explained_share(full, draws), 2), now,
                                   within(capped(spread.spread_range_mhz(draws))),
                                   spread.ACTIONS[name])
                      for name, draws in known.items()), key=lambda d: -d.explains)
    return {"start_median": round(median, 1), "start_probability": round(float(at[0]), 2),
            "top_probability": round(float(at[1]), 2),
            "reach_probability": tuple(ReachPoint(float(f), round(float(q), 2))
                                       for f, q in zip(grid, p)),
            "drivers": tuple(drivers)}


GRID_POINTS: int = 11
"""Frequencies of ``reach_probability`` across the probe's band, its ends included. [-]"""


def odds_text(band) -> str:
    """How many patients like this one the start and the band's top reach, in words ("" when
    the band has no such figures)."""
    if band.start_probability is None or band.top_probability is None:
        return ""
    return (f"the start reaches {100 * band.start_probability:.0f} % of patients like this one, "
            f"the top {100 * band.top_probability:.0f} %")


def basis_text(basis: str) -> str:
    """The clause for ``basis``."""
    from planner.engine.spread import START_PROBABILITY
    return BASIS_TEXT[basis].format(p=100 * START_PROBABILITY.value)
